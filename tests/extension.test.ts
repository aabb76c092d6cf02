/**
 * The extension without an editor: its manifest (activation, commands, grammars), its document
 * selector, the planning view's HTML, and the packaged .vsix (bundles, grammars and the
 * tree-sitter .wasm files inside, no dependency folders).
 */
import { execFileSync } from 'node:child_process';
import { mkdtempSync, readFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { renderPlanning, bytes } from '../server/src/planning/render';
import { FORTRAN_EXTENSIONS, documentSelector } from '../client/src/selector';
import { languageOfPath } from '../server/src/core/language';
import { ClientCommands } from '../server/src/lsp/protocol';
import type { PlanningData } from '../server/src/lsp/protocol';
import { machineRoofs } from '../server/src/lsp/view/planning';
import { presetProfile } from '../server/src/core/machine/profiles';

const ROOT = join(__dirname, '..');
const pkg = JSON.parse(readFileSync(join(ROOT, 'package.json'), 'utf8'));

/** Names of the entries of a zip file, read from its central directory (PKWARE APPNOTE 4.3.12). */
function zipEntries(buf: Buffer): string[] {
  const eocd = buf.lastIndexOf(Buffer.from([0x50, 0x4b, 0x05, 0x06]));
  const count = buf.readUInt16LE(eocd + 10);
  let p = buf.readUInt32LE(eocd + 16);
  const out: string[] = [];
  for (let i = 0; i < count; i++) {
    const nameLen = buf.readUInt16LE(p + 28);
    const extra = buf.readUInt16LE(p + 30);
    const comment = buf.readUInt16LE(p + 32);
    out.push(buf.subarray(p + 46, p + 46 + nameLen).toString('utf8'));
    p += 46 + nameLen + extra + comment;
  }
  return out;
}

describe('manifest', () => {
  it('activates on C, C++ and every Fortran language id, and on Fortran files in the workspace', () => {
    for (const id of ['c', 'cpp', 'fortran', 'FortranFreeForm', 'FortranFixedForm']) expect(pkg.activationEvents).toContain(`onLanguage:${id}`);
    expect(pkg.activationEvents.some((e: string) => e.startsWith('workspaceContains:') && e.includes('f90'))).toBe(true);
  });
  it('declares every client command with the offloadLedger prefix', () => {
    const declared = pkg.contributes.commands.map((c: { command: string }) => c.command).sort();
    expect(declared).toEqual(Object.values(ClientCommands).sort());
  });
  it('restricts the measurement in untrusted workspaces (VS Code workspace trust: capabilities.untrustedWorkspaces)', () => {
    expect(pkg.capabilities.untrustedWorkspaces.supported).toBe('limited');
    expect(pkg.contributes.menus.commandPalette).toContainEqual({ command: ClientCommands.measureMachine, when: 'isWorkspaceTrusted' });
  });
  it('serves Fortran files by extension, the same extensions the core reads as Fortran', () => {
    for (const ext of FORTRAN_EXTENSIONS) expect(languageOfPath(`a.${ext}`)).toBe('fortran');
    expect(documentSelector().some((f) => 'pattern' in f && String(f.pattern).includes('f90'))).toBe(true);
  });
});

describe('planning view', () => {
  const data: PlanningData = {
    profile: 'pcie4-hbm2e',
    baseline: 'node',
    estimatesAvailable: true,
    files: [
      {
        uri: 'file:///w/a<b>.c',
        path: '/w/a<b>.c',
        language: 'c',
        loops: [{ line: 5, endLine: 9, function: 'main', variables: ['i'], offloaded: true, directive: 'openacc', iterations: { value: 1000, expr: 'N' }, flopsPerIteration: 2, bytesPerIteration: { device: 12, host: 16 }, arithmeticIntensity: { device: 0.17, host: 0.125 }, precision: 'double', parallel: true }],
        timeLoops: [
          {
            line: 3, endLine: 12, function: 'main', variable: 't', steps: { value: 100, expr: 'STEPS' },
            perStep: { toDevice: { value: 8192, expr: '8192' }, toHost: { value: 0, expr: '0' } },
            once: { toDevice: { value: 0, expr: '0' }, toHost: { value: 0, expr: '0' } },
            transfers: [{ line: 4, array: 'u', direction: 'toDevice', bytes: { value: 8192, expr: '8*N' }, everySteps: 1, cause: 'clause' }],
            dataRegion: { clauses: [{ array: 'u', clause: 'copyin', section: 'u[0:N]' }], edits: [] },
            residentBytes: 8192,
            estimate: { profile: 'pcie4-hbm2e', baseline: 'node', hostSeconds: 1e-3, deviceSeconds: 2e-3, kernelSeconds: 1e-4, launchSeconds: 5e-6, transferSeconds: 1.8e-3, hostLeftSeconds: 0, speedup: { low: 0.4, expected: 0.5, high: 0.6 }, bound: 'transfer', withRegion: { deviceSeconds: 1.1e-4, speedup: { low: 7, expected: 9, high: 10 }, bound: 'memory' }, residentBytes: 8192, runsPerDevice: 1000 },
            // 2 flops × 1000 iterations per step; the region keeps u resident, so nothing crosses per step.
            step: {
              flops: 2000, linkBytes: 8192, linkBytesWithRegion: 0, withRegionSeconds: { kernels: 1e-4, launches: 5e-6, transfers: 0, host: 0 },
              nests: [{ path: '/w/a<b>.c', line: 5, offloaded: true, parallel: true, secondsPerStep: 1e-4, share: 0.05, hostShare: 1, shareWithRegion: 0.95 }],
              transfersWithRegion: [],
            },
          },
        ],
        machine: machineRoofs(presetProfile('pcie4-hbm2e')!, 'node'),
      },
    ],
  };
  let html = '';
  let editor = '';
  beforeAll(async () => {
    html = await renderPlanning(data, { cspSource: 'vscode-resource:', focusUri: 'file:///w/a<b>.c', focusLine: 2 });
    // The editor's options: workspace-relative names, command links to the source, points that open it too.
    editor = await renderPlanning(data, {
      cspSource: 'vscode-resource:',
      displayPath: (p) => p.replace(/^\/w\//, ''),
      sourceHref: (p) => `command:offloadLedger.openSource?${encodeURIComponent(JSON.stringify([p.uri ?? p.path, p.line]))}`,
      chartsOpenSource: true,
    });
  }, 60_000);
  it('runs no script and loads nothing: its CSP allows inline styles only (VS Code webview guidance)', () => {
    expect(html).toContain("default-src 'none'");
    expect(html).not.toMatch(/<script/i);
    // Only XML namespace names (never fetched) are http addresses.
    for (const m of html.matchAll(/https?:\/\/[^"\s]*/g)) expect(['http://www.w3.org/2000/svg', 'http://www.w3.org/1999/xlink']).toContain(m[0]);
  });
  it('escapes file names and marks the time loop the code lens came from', () => {
    expect(html).toContain('/w/a&lt;b&gt;.c');
    expect(html).toContain('<section class="timeloop focus" id="T1">');
  });
  it('draws the roofline, the bytes per step and the step times with Vega, with each plan\'s speedup and bound', () => {
    expect(html).toMatch(/<svg role="img" aria-label="roofline: [^"]*"/);
    expect(html).toMatch(/<svg role="img" aria-label="time loop T1: [^"]*"/);
    // The one array u: 8192 B to the device per step as written, nothing with the region (the data above).
    expect(html).toContain('aria-label="u, as written, to the device: 8192 B per step"');
    expect(html).toContain('0.4–0.6× (expected 0.5×)');
    expect(html).toContain('bound by the link');
    expect(html).toContain('7–10× (expected 9×)');
  });
  it('shows workspace-relative paths and opens source lines through the one command the webview allows', () => {
    expect(editor).not.toContain('/w/');
    const link = `command:offloadLedger.openSource?${encodeURIComponent(JSON.stringify(['file:///w/a<b>.c', 5]))}`;
    // The nest's table row and its roofline point (an SVG link) open line 5.
    expect(editor).toContain(`<a class="src" href="${link.replace(/&/g, '&amp;')}">a&lt;b&gt;.c:5</a>`);
    expect(editor).toContain(`xlink:href="${link.replace(/&/g, '&amp;')}"`);
    // The HTML file (no sourceHref): the relative path, and points that go to their row.
    expect(html).toMatch(/<a class="src" href="\/w\/a%3Cb%3E\.c">\/w\/a&lt;b&gt;\.c:5<\/a>/);
    expect(html).toContain('xlink:href="#N1"');
  });
  it('says when there is nothing to show', async () => {
    expect(await renderPlanning({ ...data, files: [] }, { cspSource: 'x' })).toContain('No analysed C, C++ or Fortran document yet');
    // 1 KiB = 1024 B (IEC 80000-13 binary prefixes, as the CLI prints them).
    expect(bytes(1536)).toBe('1.5 KiB');
  });
});

describe('packaged .vsix', () => {
  it('holds the bundles, grammars, code pages and .wasm files, and no node_modules but the runtime', () => {
    // npm test has built the bundles; the package is staged in a folder of its own.
    const out = mkdtempSync(join(tmpdir(), 'offload-ledger-vsix-'));
    execFileSync(process.execPath, [join(ROOT, 'scripts', 'package.mjs'), '--no-build', '--out-dir', out], { cwd: ROOT, stdio: 'ignore' });
    const entries = zipEntries(readFileSync(join(out, `${pkg.name}-${pkg.version}.vsix`)));
    for (const f of [
      'extension/package.json',
      'extension/client/dist/extension.js',
      'extension/server/dist/lsp.js',
      'extension/server/dist/lsp-worker.js',
      'extension/server/dist/cli.js',
      'extension/grammars/offload-ledger.c.tmLanguage.json',
      'extension/grammars/offload-ledger.fortran.tmLanguage.json',
      'extension/docs/lsp/codes.md',
      'extension/server/node_modules/web-tree-sitter/tree-sitter.wasm',
      'extension/server/node_modules/tree-sitter-c/tree-sitter-c.wasm',
      'extension/server/node_modules/tree-sitter-cpp/tree-sitter-cpp.wasm',
    ]) expect(entries).toContain(f);
    expect(entries.filter((e) => e.includes('node_modules') && !e.startsWith('extension/server/node_modules/'))).toEqual([]);
    expect(entries.some((e) => e.endsWith('.map'))).toBe(false);
    const manifest = JSON.parse(readFileSync(join(out, 'vsix', 'package.json'), 'utf8'));
    expect(manifest.devDependencies).toBeUndefined();
    expect(manifest.contributes.configuration).toEqual(pkg.contributes.configuration);
  }, 120_000);
});
