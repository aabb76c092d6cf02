/**
 * The editor's machine profile: presets, the workspace machines file (the same file and schema
 * as the CLI's), and the host profile `offload-ledger calibrate` writes.
 */
import { spawn } from 'node:child_process';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { parseHostProfile, resolveProfile } from '../server/src/lsp/profile';
import { ROOT } from './helpers';

const tmp = mkdtempSync(join(tmpdir(), 'ol-lspprof-'));

describe('editor machine profiles', () => {
  it('take a profile from the workspace machines file', () => {
    const file = join(tmp, 'offload-ledger.machines.json');
    writeFileSync(file, JSON.stringify({ profiles: { lab: { preset: 'pcie5-hbm3', host: 'ddr4-2s' } } }));
    const r = resolveProfile('lab', '', undefined, file);
    expect(r.warnings).toEqual([]);
    expect(r.profile.name).toBe('lab');
    expect(r.profile.device.name).toBe('hbm3-80g');
    // Presets stay available next to the file's own profiles.
    expect(resolveProfile('pcie4-hbm2e', '', undefined, file).profile.name).toBe('pcie4-hbm2e');
  });
  it('warn about a machines file with errors and fall back', () => {
    const file = join(tmp, 'bad.machines.json');
    writeFileSync(file, JSON.stringify({ profiles: { lab: { host: { cores: -1 } } } }));
    const r = resolveProfile('pcie4-hbm2e', '', undefined, file);
    expect(r.warnings.join('\n')).toMatch(/cores must be >= 1/);
    expect(r.profile.name).toBe('pcie4-hbm2e');
  });
  it('fall back with a warning on a profile name nobody defines', () => {
    const r = resolveProfile('warp-drive', '');
    expect(r.profile.name).toBe('pcie4-hbm2e');
    expect(r.warnings.join('\n')).toMatch(/unknown profile "warp-drive"; using pcie4-hbm2e/);
  });
  it('read the host that calibrate writes into a machines file', () => {
    const host = { name: 'measured-host', description: 'x', cores: 2, bandwidthNode: 2e10, bandwidthCore: 1e10, peakFlopsNode: 1e11, cacheBytesPerCore: 2e6, memoryBytes: 2e10, sources: ['probe'] };
    const parsed = parseHostProfile({ profiles: { measured: { description: 'x', host } } });
    expect(parsed).toMatchObject({ name: 'measured-host', bandwidthNode: 2e10 });
  });
});

describe('offload-ledger serve --stdio', () => {
  it('answers initialize with its capabilities', async () => {
    const child = spawn(process.execPath, [join(ROOT, 'server/bin/offload-ledger.js'), 'serve', '--stdio'], { cwd: ROOT });
    const body = JSON.stringify({ jsonrpc: '2.0', id: 1, method: 'initialize', params: { processId: null, rootUri: null, capabilities: {} } });
    const reply = await new Promise<string>((resolve, reject) => {
      let out = '';
      const timer = setTimeout(() => reject(new Error(`no reply: ${out}`)), 20_000);
      child.stdout.on('data', (d: Buffer) => {
        out += d.toString();
        if (/"capabilities"/.test(out)) {
          clearTimeout(timer);
          resolve(out);
        }
      });
      child.stdin.write(`Content-Length: ${Buffer.byteLength(body)}\r\n\r\n${body}`);
    });
    child.kill();
    // LSP 3.17 base protocol: a Content-Length header, then the JSON-RPC response to id 1.
    expect(reply).toMatch(/^Content-Length: \d+\r\n\r\n/);
    const json = JSON.parse(reply.slice(reply.indexOf('{')));
    expect(json.id).toBe(1);
    expect(json.result.capabilities.hoverProvider).toBe(true);
  });
});
