/**
 * The command-line tool as users run it: exit codes, one-line input errors, and JSON that
 * validates against the published report schema (shared/contracts/report.schema.json).
 */
import { mkdtempSync, writeFileSync, mkdirSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { runCli, schemaValidator } from './helpers';

const tmp = mkdtempSync(join(tmpdir(), 'ol-cli-'));

describe('offload-ledger check', () => {
  it('reports the demo as JSON that validates against the report schema', () => {
    const r = runCli(['check', '--format', 'json', 'examples']);
    expect(r.stderr).toBe('');
    const data = JSON.parse(r.stdout);
    const { ok, errors } = schemaValidator()(data);
    expect(errors).toBe('');
    expect(ok).toBe(true);
    expect(data.tool.name).toBe('offload-ledger');
    expect(data.files.length).toBeGreaterThanOrEqual(7);
    const heat = data.files.find((f: { path: string }) => f.path.endsWith('heat2d_acc.c'));
    expect(heat.language).toBe('c');
    expect(heat.directives).toEqual(['openacc']);
    // Interior of a 1024 x 1024 plate: 1022 * 1022 points per sweep (hand count).
    expect(heat.loops.filter((l: { offloaded: boolean }) => l.offloaded).map((l: { iterations: { value: number } }) => l.iterations.value)).toEqual([1044484, 1044484, 1044484]);
  });

  it('prints a readable table of loop nests', () => {
    const r = runCli(['check', 'examples/heat2d/heat2d_acc.c']);
    expect(r.status).toBe(0);
    expect(r.stdout).toMatch(/line\s+function\s+variables\s+offloaded\s+flop\/it\s+B\/it dev\s+B\/it host\s+AI dev\s+AI host\s+kernel speedup\s+iterations/);
    // 2-D Jacobi: 4 flops, 16 device bytes, 24 host bytes per point (hand count; see fixtures/cost).
    expect(r.stdout).toMatch(/48\s+main\s+j,i\s+yes \(openacc\)\s+4\s+16\s+24\s+0\.25\s+0\.17\s+[\d.]+–[\d.]+× \(memory\)\s+1,044,484/);
    expect(r.stdout).toMatch(/bound by transfer; with the suggested data region [\d.]+–[\d.]+× \(bound by memory\)/);
    expect(r.stdout).toContain('roofline on profile pcie4-hbm2e');
    // Two constructs copy u and unew (8 MiB each) both ways every step, a third every 100 steps.
    expect(r.stdout).toMatch(/time loop at line 46 \(t, 500 \(STEPS\) steps\): per step 32\.2 MiB to device, 32\.2 MiB to host/);
    // unew is written only in the interior, so copyout would overwrite its edges: copy.
    expect(r.stdout).toContain('suggested data region: #pragma acc data copy(u, unew)');
  });

  it('applies --bind to unbound sizes', () => {
    const f = join(tmp, 'bind.c');
    writeFileSync(f, 'void f(double *a, int n) {\n  for (int i = 0; i < n; i++) a[i] = 0.0;\n}\n');
    const unbound = JSON.parse(runCli(['check', '--format', 'json', f]).stdout);
    expect(unbound.files[0].loops[0].iterations).toEqual({ value: null, expr: 'n', unbound: ['n'] });
    expect(unbound.files[0].findings[0].code).toBe('unknown-extent');
    const bound = JSON.parse(runCli(['check', '--format', 'json', '--bind', 'n=4096', f]).stdout);
    expect(bound.files[0].loops[0].iterations).toEqual({ value: 4096, expr: 'n' });
    expect(bound.files[0].findings).toEqual([]);
  });

  it('exits 1 when a finding has severity error', () => {
    const f = join(tmp, 'bad.c');
    writeFileSync(f, 'void f(double *a) {\n#pragma acc parallel loop copy(a[0:10]\n  for (int i = 0; i < 10; i++) a[i] = 0.0;\n}\n');
    const r = runCli(['check', f]);
    expect(r.status).toBe(1);
    expect(r.stdout).toContain('[directive-syntax]');
  });

  const usage: [string, string[], RegExp][] = [
    ['missing file', ['check', join(tmp, 'nope.c')], /no such file/],
    ['no command', [], /missing command/],
    ['unknown command', ['frobnicate'], /unknown command/],
    ['unknown format', ['check', '--format', 'xml', 'examples'], /unknown format/],
    ['bad binding', ['check', '--bind', 'n', 'examples'], /NAME=INTEGER/],
    ['not a source', ['check', join(tmp, 'notes.txt')], /not a C, C\+\+ or Fortran source/],
  ];
  writeFileSync(join(tmp, 'notes.txt'), 'hello');
  for (const [name, args, message] of usage) {
    it(`exits 2 with one line on ${name}`, () => {
      const r = runCli(args);
      expect(r.status).toBe(2);
      expect(r.stderr.trim().split('\n')).toHaveLength(1);
      expect(r.stderr).toMatch(message);
    });
  }

  it('exits 2 on a directory with no sources', () => {
    const d = join(tmp, 'empty');
    mkdirSync(d);
    writeFileSync(join(d, 'README'), 'nothing');
    const r = runCli(['check', d]);
    expect(r.status).toBe(2);
    expect(r.stderr).toMatch(/holds no C, C\+\+ or Fortran sources/);
  });

  it('exits 2 on a binary file', () => {
    const f = join(tmp, 'blob.c');
    writeFileSync(f, Buffer.from([0x7f, 0x45, 0x4c, 0x46, 0, 1, 2, 3]));
    const r = runCli(['check', f]);
    expect(r.status).toBe(2);
    expect(r.stderr).toMatch(/binary file/);
  });
});
