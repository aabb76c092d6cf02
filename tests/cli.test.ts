/**
 * The command-line tool as users run it: exit codes, one-line input errors, and JSON that
 * validates against the published report schema (shared/contracts/report.schema.json).
 */
import { mkdtempSync, writeFileSync, mkdirSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { ROOT, runCli, schemaValidator } from './helpers';

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
    expect(r.stdout).toMatch(/line\s+function\s+variables\s+offloaded\s+flop\/it\s+B\/it dev\s+B\/it host\s+AI dev\s+AI host\s+kernel speedup vs whole node\s+iterations/);
    // 2-D Jacobi: 4 flops, 16 device bytes, 24 host bytes per point (hand count; see fixtures/cost).
    expect(r.stdout).toMatch(/48\s+main\s+j,i\s+yes \(openacc\)\s+4\s+16\s+24\s+0\.25\s+0\.17\s+[\d.]+–[\d.]+× \(device memory\)\s+1,044,484/);
    expect(r.stdout).toMatch(/bound by the link; with the suggested data region [\d.]+–[\d.]+× \(bound by device memory\)/);
    expect(r.stdout).toContain('roofline on profile pcie4-hbm2e');
    // Two constructs copy u and unew (8 MiB each) both ways every step, a third every 100 steps.
    expect(r.stdout).toMatch(/time loop at line 46 \(t, 500 \(STEPS\) steps\): per step 32\.2 MiB to device, 32\.2 MiB to host/);
    // unew is written on the device before it is read there and no host code reads it after the
    // loop, so create is exact for it (OpenACC 3.3 §2.7.9); u is read first and printed after.
    expect(r.stdout).toContain('suggested data region: #pragma acc data copy(u) create(unew)');
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

  it('warns about a --bind that names nothing in the files checked (a typo is not ignored silently)', () => {
    const f = join(tmp, 'bind2.c');
    writeFileSync(f, 'void f(double *a, int n) {\n  for (int i = 0; i < n; i++) a[i] = 0.0;\n}\n');
    const r = runCli(['check', '--bind', 'nn=4096', '--bind', 'n=8', f]);
    expect(r.stderr).toMatch(/--bind nn=4096 names nothing in the files checked/);
    expect(r.stderr).not.toMatch(/--bind n=8/);
    // Fortran names match in any case: N binds n.
    const g = join(tmp, 'bind.f90');
    writeFileSync(g, 'subroutine s(a, n)\n  integer :: n, i\n  real(8) :: a(n)\n  do i = 1, n\n    a(i) = 0.0d0\n  end do\nend subroutine\n');
    expect(runCli(['check', '--bind', 'N=64', g]).stderr).not.toMatch(/names nothing/);
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
    ['calibrate without a compiler', ['calibrate', '--cc', 'no-such-compiler'], /C compiler `no-such-compiler` was not found/],
    ['a bad pool', ['plan', '--pool', 'lots', 'examples'], /--pool expects host=H,device=D/],
    // --compile-commands names a database the user means: its absence is an input error.
    ['a missing compilation database', ['check', '--compile-commands', join(tmp, 'none.json'), 'examples'], /none\.json: no such compilation database/],
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

describe('offload-ledger plan and machine profiles', () => {
  it('plans throughput for many runs on a mixed pool', () => {
    const r = runCli(['plan', '--runs', '400', '--pool', 'host=4,device=1', 'examples/hall/hall_resident_acc.c']);
    expect(r.status).toBe(0);
    expect(r.stdout).toMatch(/400 runs of 1,000 steps on profile pcie4-hbm2e/);
    expect(r.stdout).toMatch(/pool of 4 host \+ 1 device nodes: the batch takes/);
    const j = JSON.parse(runCli(['plan', '--format', 'json', '--runs', '10', 'examples/hall/hall_resident_acc.c']).stdout);
    expect(j.planning[0].plan.runs).toBe(10);
    expect(schemaValidator()(j).ok).toBe(true);
  });

  it('reads a machines file and names what is wrong in it', () => {
    const good = join(tmp, 'machines.json');
    writeFileSync(good, JSON.stringify({ default: 'lab', profiles: { lab: { preset: 'pcie5-hbm3', host: { costPerNodeHour: 2.5 } } } }));
    const r = runCli(['check', '--machines', good, '--format', 'json', 'examples/heat2d/heat2d_acc.c']);
    expect(JSON.parse(r.stdout).machine.name).toBe('lab');
    const bad = join(tmp, 'bad-machines.json');
    writeFileSync(bad, JSON.stringify({ profiles: { lab: { host: { cores: 0 } } } }));
    const b = runCli(['check', '--machines', bad, 'examples/heat2d/heat2d_acc.c']);
    expect(b.status).toBe(2);
    expect(b.stderr).toMatch(/profiles\.lab\.host\.cores must be >= 1/);
    const unknown = runCli(['check', '--profile', 'nope', 'examples/heat2d/heat2d_acc.c']);
    expect(unknown.status).toBe(2);
    expect(unknown.stderr).toMatch(/unknown profile `nope`; profiles: pcie4-hbm2e/);
  });

  it('switches the baseline to one core', () => {
    const node = JSON.parse(runCli(['check', '--format', 'json', 'examples/hall/hall_resident_acc.c']).stdout);
    const core = JSON.parse(runCli(['check', '--format', 'json', '--baseline', 'core', 'examples/hall/hall_resident_acc.c']).stdout);
    const s = (j: { files: { timeLoops: { estimate: { speedup: { expected: number } } }[] }[] }): number => j.files[0].timeLoops[0].estimate.speedup.expected;
    // One core streams 14 GB/s against the node's 460 GB/s, so the device looks far better against one core.
    expect(s(core)).toBeGreaterThan(10 * s(node));
  });
});

describe('offload-ledger check --format html', () => {
  it('writes the planning report as one self-contained page', () => {
    const r = runCli(['check', '--format', 'html', 'examples/hall/hall_naive_acc.c']);
    expect(r.status).toBe(0);
    expect(r.stdout).toMatch(/^<!DOCTYPE html>/);
    expect(r.stdout).toContain('time loop at <a class="src" href="examples/hall/hall_naive_acc.c">examples/hall/hall_naive_acc.c:116</a>');
    expect(r.stdout).toContain('pcie4-hbm2e');
    expect((r.stdout.match(/<svg/g) ?? []).length).toBeGreaterThanOrEqual(2);
    // Self-contained: no scripts and nothing fetched (a CSP with default-src 'none').
    // (The SVG namespace URI is a name, not a fetch.)
    expect(r.stdout).not.toMatch(/<script|(src|href)=["']?https?:/);
    expect(r.stdout).toContain("default-src 'none'");
  });

  it('shows paths relative to the working directory, as path:line links, even for absolute arguments', () => {
    const r = runCli(['check', '--format', 'html', join(ROOT, 'examples', 'hall', 'hall_naive_acc.c')]);
    expect(r.status).toBe(0);
    expect(r.stdout).not.toContain(ROOT);
    // The time loop of hall_naive_acc.c is at line 116 (examples/README.md demo summary, the code lens line).
    expect(r.stdout).toContain('<a class="src" href="examples/hall/hall_naive_acc.c">examples/hall/hall_naive_acc.c:116</a>');
    // The project summary comes before the detail per file.
    expect(r.stdout.indexOf('Project summary')).toBeLessThan(r.stdout.indexOf('Per file'));
  });
});
