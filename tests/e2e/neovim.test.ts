/**
 * LSP end to end in a client nobody here wrote: Debian's Neovim (0.7, headless, built-in LSP
 * client) opens the demo, receives our diagnostics with the right codes and lines, gets hovers
 * with numbers, and lists the data-region code action. Skips, saying why, without `nvim`.
 */
import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { ROOT, SERVER } from './lspClient';
import { runCli } from '../helpers';

const nvim = spawnSync('nvim', ['--version'], { encoding: 'utf8' });
const version = nvim.status === 0 ? /NVIM v(\d+)\.(\d+)/.exec(nvim.stdout) : null;
const usable = !!version && (Number(version[1]) > 0 || Number(version[2]) >= 7);
if (!usable) console.log(`neovim e2e skipped: ${nvim.error ? 'nvim is not installed (apt-get install neovim)' : 'nvim older than 0.7'}`);

const NAIVE = join(ROOT, 'examples', 'hall', 'hall_naive_acc.c');
const STALE = join(ROOT, 'examples', 'hall', 'hall_stale_acc.c');

describe.skipIf(!usable)('Neovim 0.7 headless as the LSP client', () => {
  it('shows our diagnostics, hovers and the data-region action for the hall demo', () => {
    const out = join(mkdtempSync(join(tmpdir(), 'offload-ledger-nvim-')), 'out.txt');
    const naiveLines = readFileSync(NAIVE, 'utf8').split('\n');
    const vxCol = naiveLines[119].indexOf('vx[');
    const hovers = ['1:120:8', `1:119:${vxCol}`, '2:135:8'].join(',');
    const r = spawnSync('nvim', ['--headless', '-u', 'NONE', '-S', join(__dirname, 'nvim', 'lsp-check.lua')], {
      env: { ...process.env, SERVER, FILES: `${NAIVE}:${STALE}`, HOVERS: hovers, OUT: out },
      encoding: 'utf8',
      timeout: 180_000,
    });
    const lines = readFileSync(out, 'utf8').split('\n');
    expect(lines, r.stderr).toContain('RESULT: PASS');
    const diags = (file: number) => lines.filter((l) => l.startsWith(`DIAG ${file} `)).map((l) => l.split(' ')).map(([, , line, code]) => ({ code, line: Number(line) }));
    // The reference is the CLI's JSON report of the same file (the same core, another edge).
    const cli = (path: string) => (JSON.parse(runCli(['check', '--format', 'json', path]).stdout).files[0].findings as { code: string; line: number }[]).map((f) => ({ code: f.code, line: f.line }));
    expect(diags(1)).toEqual(cli(NAIVE));
    expect(diags(2)).toEqual(cli(STALE));
    // hall_stale_acc.c's BUG comments: the source injection (line 155) and the microphone read (line 160) read stale data on the host.
    expect(diags(2).filter((d) => d.code === 'stale-on-host').map((d) => d.line)).toEqual([155, 160]);
    expect(lines.filter((l) => l.startsWith('DIAG')).every((l) => l.includes('docs/lsp/codes.md#'))).toBe(true);
    // Every transfer finding of the naive port lists the data-region quick fix.
    const actions = lines.filter((l) => l.startsWith('ACTION 1 '));
    expect(actions.length).toBe(diags(1).length);
    expect(actions.every((l) => /data region/.test(l) && /edits=[1-9]/.test(l))).toBe(true);
    const hover = (h: string) => lines.find((l) => l.startsWith(`HOVER ${h} `)) ?? '';
    // 46,259,136 = (600 − 4)(400 − 4)(200 − 4) interior cells (the #defines of hall_naive_acc.c).
    expect(hover('1:120:8')).toMatch(/Loop nest at line 121.*46,259,136.*speedup \| [\d.]+–[\d.]+×/);
    // 600 × 400 × 200 floats × 4 B = 183.1 MiB.
    expect(hover(`1:119:${vxCol}`)).toMatch(/`vx`.*183\.1 MiB/);
    expect(hover('2:135:8')).toMatch(/Time loop at line 136.*to host per step \| 1\.8 MiB/);
  }, 200_000);
});
