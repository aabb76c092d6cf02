/**
 * `verify`: the ledger checked against a measurement from outside the project. The measurement is
 * the mapping log of LLVM's OpenMP offload runtime (libomptarget, LLVM 14.0.6 as packaged by
 * Debian 12), built with clang for the host as a separate device: a reference implementation of
 * the OpenMP 5.2 device data environment (§5.8: reference counts, present-or-copy, `always`),
 * which keeps device copies apart from the host's, as on a GPU. For every OpenMP example and
 * runnable OpenMP fixture, the bytes each construct moved must equal the ledger's, and the output
 * with separate memories must equal the shared-memory output (offloading disabled) for correct
 * programs and differ for those with `stale-*` findings.
 *
 * Fortran: clang 14 has no Fortran, so Fortran programs keep gfortran's compile-and-run check
 * (tests/examples-fortran.test.ts); verify refuses them with a clear message (tested below).
 */
import { spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { dirname, join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { parseCli, type VerifyArgs } from '../server/src/cli/args';
import { findToolchain, formatVerify, verify, type VerifyReport } from '../server/src/cli/verify';
import { readMapLog } from '../server/src/core/verify/mapLog';
import { compareOutputs } from '../server/src/core/verify/outputs';
import { applyLineEdits, applyTextEdits } from '../server/src/core/data/edits';
import type { TextEdit } from '../server/src/core/types';
import { ROOT, analyzeText, runCli } from './helpers';

function applyEdits(text: string, edits: TextEdit[]): string {
  const lines = text.split('\n');
  const offset = (l: number, c: number): number => lines.slice(0, l).reduce((n, x) => n + x.length + 1, 0) + c;
  const sorted = [...edits].sort((a, b) => offset(b.range.start.line, b.range.start.col) - offset(a.range.start.line, a.range.start.col));
  let out = text;
  for (const e of sorted) out = out.slice(0, offset(e.range.start.line, e.range.start.col)) + e.newText + out.slice(offset(e.range.end.line, e.range.end.col));
  return out;
}

describe('the mapping log reader (libomptarget 14 format)', () => {
  // The line shapes below are the runtime's (see server/src/core/verify/mapLog.ts); the values are ours.
  const log = [
    'Libomptarget device 0 info: Entering OpenMP data region at prog.c:10:1 with 2 arguments:',
    'Libomptarget device 0 info: tofrom(u[0:n])[800] ',
    'Libomptarget device 0 info: Creating new map entry with HstPtrBegin=0x1, TgtPtrBegin=0x2, Size=800, DynRefCount=1, HoldRefCount=0, Name=u[0:n]',
    'Libomptarget device 0 info: Copying data from host to device, HstPtr=0x1, TgtPtr=0x2, Size=800, Name=u[0:n]',
    'Libomptarget device 0 info: Entering OpenMP kernel at prog.c:12:1 with 1 arguments:',
    'Libomptarget device 0 info: use_address(u)[0] (implicit)',
    'Libomptarget device 0 info: Entering OpenMP kernel at prog.c:12:1 with 1 arguments:',
    'Libomptarget device 0 info: Updating OpenMP data at prog.c:15:1 with 1 arguments:',
    'Libomptarget device 0 info: from(u[3:1])[8] ',
    'Libomptarget device 0 info: Copying data from device to host, TgtPtr=0x2, HstPtr=0x1, Size=8, Name=u[0:n]',
    'Libomptarget device 0 info: Entering OpenMP data region at prog.c:20:1 with 1 arguments:',
    'Libomptarget device 0 info: Copying data from host to device, HstPtr=0x9, TgtPtr=0x8, Size=16, Name=s.data[0:2]',
    'Libomptarget device 0 info: Exiting OpenMP data region at prog.c:22:1 with 1 arguments:',
    'Libomptarget device 0 info: Exiting OpenMP data region at prog.c:22:1 with 1 arguments:',
    'Libomptarget device 0 info: Copying data from device to host, TgtPtr=0x8, HstPtr=0x9, Size=16, Name=s.data[0:2]',
    'Libomptarget device 0 info: Exiting OpenMP data region at prog.c:10:1 with 2 arguments:',
    'Libomptarget device 0 info: Copying data from device to host, TgtPtr=0x2, HstPtr=0x1, Size=800, Name=u[0:n]',
    'some output of the program itself',
    'Libomptarget device 0 info: a line of a later runtime version',
    'Libomptarget fatal error 1: failure of target construct while offloading is mandatory',
    'Libomptarget device 0 info: Copying data from host to dev', // cut off by a crash
  ].join('\n');

  it('attributes each copy to the construct whose header came last, and counts executions', () => {
    const r = readMapLog(log);
    const at = (line: number) => r.constructs.find((c) => c.line === line)!;
    expect(at(10)).toMatchObject({ executions: 1, toDevice: 800, toHost: 800 });
    expect(at(12)).toMatchObject({ executions: 2, toDevice: 0, toHost: 0 });
    expect(at(15)).toMatchObject({ executions: 1, toDevice: 0, toHost: 8 });
    expect(at(15).byName.get('u')).toEqual({ toDevice: 0, toHost: 8 });
    // `target exit data` logs only exits: each one is an execution.
    expect(at(22)).toMatchObject({ executions: 2, toHost: 16 });
    expect(at(20).byName.get('s.data')).toEqual({ toDevice: 16, toHost: 0 });
    expect(r.errors).toEqual(['failure of target construct while offloading is mandatory']);
    // The later runtime's line and the line cut off by the crash.
    expect(r.unread).toBe(2);
  });

  it('never throws on garbage', () => {
    for (const t of ['', '\0\0\0', 'Libomptarget', 'Libomptarget device 0 info: Entering OpenMP kernel at :x:y', log.slice(0, 333)]) {
      expect(() => readMapLog(t)).not.toThrow();
    }
  });
});

describe('output comparison', () => {
  it('leaves out timings: lines that change between two runs of one build, or that name a time or a rate', () => {
    const sep = 'sum 1.5\nAvg time (s): 0.0007\nRate (MB/s): 4302.2\nchecksum 7\n';
    const shr = 'sum 1.5\nAvg time (s): 0.0001\nRate (MB/s): 9999.0\nchecksum 7\n';
    expect(compareOutputs(sep, shr)).toEqual({ same: true, ignored: [2, 3] });
    // A result line that differs is a difference, even beside timings.
    expect(compareOutputs('sum 1.5\n', 'sum 2.5\n')).toMatchObject({ same: false, firstDifference: { line: 1 } });
    // A line without timing words that changes between two shared runs (a random seed) is left out.
    expect(compareOutputs('seed 7\nsum 1\n', 'seed 9\nsum 1\n', 'seed 3\nsum 1\n')).toEqual({ same: true, ignored: [1] });
    // A timing word does not hide a changed line of another shape, and simulated time is a result.
    expect(compareOutputs('rate 10 sum 96\n', 'rate 10 sum 221 (x)\n').same).toBe(false);
    expect(compareOutputs('time 0.5 energy 1.25\n', 'time 0.5 energy 1.5\n').same).toBe(false);
  });
});

describe('verify arguments', () => {
  it('reads --run, --compiler and --timeout', () => {
    const a = parseCli(['verify', 'x.c', '--run', '100 "two words"', '--compiler', '/opt/clang', '--timeout', '5', '-D', 'N=4']) as VerifyArgs;
    expect(a).toMatchObject({ command: 'verify', paths: ['x.c'], runArgs: ['100', 'two words'], compiler: '/opt/clang', timeoutSeconds: 5 });
    expect(a.defines.get('N')).toBe('4');
    expect(() => parseCli(['verify', 'x.c', '--timeout', '0'])).toThrow(/positive integer/);
  });
});

const tc = findToolchain(undefined);
const haveOffload = !('error' in tc) && (() => {
  // The offload build needs clang-offload-wrapper beside clang (clang-tools-14) and libomptarget.
  const dir = mkdtempSync(join(tmpdir(), 'ol-probe-'));
  try {
    writeFileSync(join(dir, 'p.c'), 'int main(void){int x=0;\n#pragma omp target map(tofrom:x)\nx=1;\nreturn x-1;}\n');
    const env = { ...process.env, PATH: `${'pathPrefix' in tc ? tc.pathPrefix : ''}:${process.env.PATH}` };
    const b = spawnSync('clang' in tc ? tc.clang : 'clang', ['-fopenmp', '-fopenmp-targets=x86_64-pc-linux-gnu', join(dir, 'p.c'), '-o', join(dir, 'p')], { env });
    if (b.status !== 0) return false;
    return spawnSync(join(dir, 'p'), [], { env: { ...env, OMP_TARGET_OFFLOAD: 'MANDATORY' } }).status === 0;
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
})();
if (!haveOffload) console.log('skipped: clang with OpenMP offloading to the host not found (apt-get install clang libomp-dev clang-tools-14)');

function args(paths: string[], defines: Record<string, string> = {}, extra: Partial<VerifyArgs> = {}): VerifyArgs {
  return {
    command: 'verify', paths, runArgs: [], timeoutSeconds: 120, format: 'text', bindings: new Map(), defines: new Map(Object.entries(defines)),
    undefines: [], includeDirs: [], baseline: 'node', timeLoopVariables: [], ...extra,
  };
}

const quiet = (): void => undefined;

/** Every OpenMP example and runnable OpenMP fixture, with the sizes that keep a run short. */
const PROGRAMS: { file: string; defines?: Record<string, string>; stale?: boolean }[] = [
  { file: 'examples/heat2d/heat2d_omp.c', defines: { NX: '64', NY: '64', STEPS: '20' } },
  { file: 'examples/hall/hall_naive_omp.c', defines: { NX: '40', NY: '30', NZ: '20', STEPS: '30' } },
  { file: 'examples/hall/hall_resident_omp.c', defines: { NX: '40', NY: '30', NZ: '20', STEPS: '30' } },
  { file: 'tests/fixtures/index-locals/stream_math.cpp' },
  { file: 'tests/fixtures/index-locals/jacobi7.c' },
  { file: 'tests/fixtures/races-2/idx_private.c' },
  { file: 'tests/fixtures/races-2/idx_omp.c' },
  { file: 'tests/fixtures/time-loops/break_counter.c' },
  { file: 'tests/fixtures/time-loops/init_fields.c' },
  { file: 'tests/fixtures/templates/axpy_deduced.cpp' },
  { file: 'tests/fixtures/data/omp_host_source.c' },
  { file: 'tests/fixtures/data/omp_declare_target.c' },
  { file: 'tests/fixtures/data-flow/device_ptr_omp.c' },
  { file: 'tests/fixtures/data-flow/swap_structs_fixed.cpp' },
  { file: 'tests/fixtures/data-flow/swap_structs.cpp', stale: true },
  { file: 'tests/fixtures/verify/host_boundary_omp.c', stale: true },
  // OpenACC programs go through the translation to OpenMP (core/translate) and the same check.
  { file: 'examples/heat2d/heat2d_acc.c', defines: { NX: '64', NY: '64', STEPS: '20' } },
  { file: 'examples/hall/hall_naive_acc.c', defines: { NX: '40', NY: '30', NZ: '20', STEPS: '30' } },
  { file: 'examples/hall/hall_resident_acc.c', defines: { NX: '40', NY: '30', NZ: '20', STEPS: '30' } },
  { file: 'examples/hall/hall_stale_acc.c', defines: { NX: '40', NY: '30', NZ: '20', STEPS: '30' }, stale: true },
  { file: 'tests/fixtures/index-locals/five_point.c' },
  { file: 'tests/fixtures/index-locals/chain.c' },
  { file: 'tests/fixtures/estimate/resident_inplace.c' },
  { file: 'tests/fixtures/estimate/copy_every_step.c' },
  { file: 'tests/fixtures/estimate/host_in_loop.c' },
  { file: 'tests/fixtures/time-loops/tiles.c' },
  { file: 'tests/fixtures/time-loops/jacobi_tol.c' },
  { file: 'tests/fixtures/time-loops/history.c' },
  { file: 'tests/fixtures/data/snapshot_naive.c' },
  { file: 'tests/fixtures/data/snapshot_every_k.c' },
  { file: 'tests/fixtures/data/present_inside_region.c' },
  { file: 'tests/fixtures/data/enter_data_row_update.c' },
  { file: 'tests/fixtures/data/callee_clauses.c' },
  { file: 'tests/fixtures/data/wide_update.c' },
  { file: 'tests/fixtures/data/implicit_static.c' },
  { file: 'tests/fixtures/data/stale_receiver.c', stale: true },
  { file: 'tests/fixtures/data/host_source.c', stale: true },
  { file: 'tests/fixtures/preprocessor/jacobi_macro.c' },
  { file: 'tests/fixtures/cpp/wave.cpp' },
  { file: 'tests/fixtures/data-flow/split_host.c' },
  { file: 'tests/fixtures/data-flow/alloc_routine.c' },
  { file: 'tests/fixtures/data-flow/edge_rows.c' },
  { file: 'tests/fixtures/fixes14/two_planes.c' },
];

describe.skipIf(!haveOffload)('verify: measured bytes per construct equal the ledger, with separate memories', () => {
  it.each(PROGRAMS)('$file', async ({ file, defines, stale }) => {
    const r = await verify(args([join(ROOT, file)], defines), quiet);
    const why = formatVerify(r, (p) => p);
    expect(r.separate.status, why).toBe(0);
    expect(r.separate.log.errors, why).toEqual([]);
    // Each construct: the bytes the runtime copied equal the ledger's prediction.
    expect(r.comparison.differences, why).toBe(0);
    expect(r.comparison.constructs.filter((c) => c.verdict === 'unbound'), why).toEqual([]);
    expect(r.comparison.constructs.some((c) => c.executions > 0), why).toBe(true);
    // The output with separate memories equals the shared-memory output exactly when the
    // program has no stale data; each stale program shows the difference.
    expect(r.sameOutput, why).toBe(!stale);
    if (/#pragma acc/.test(readFileSync(join(ROOT, file), 'utf8'))) expect(r.notes.join('\n')).toMatch(/translated to OpenMP/);
    const analysis = await analyzeText(readFileSync(join(ROOT, file), 'utf8'), join(ROOT, file), undefined, undefined, undefined, { defines: new Map(Object.entries(defines ?? {})) });
    const staleFindings = analysis.findings.filter((f) => f.code.startsWith('stale-'));
    if (stale) expect(staleFindings.length, why).toBeGreaterThan(0);
    else expect(staleFindings.map((f) => f.message)).toEqual([]);
  });

  it('a time loop: per-step bytes measured equal the ledger, periodic constructs run in their share of steps', async () => {
    const r = await verify(args([join(ROOT, 'examples/hall/hall_resident_omp.c')], { NX: '40', NY: '30', NZ: '20', STEPS: '30' }), quiet);
    const t = r.comparison.timeLoops[0];
    // Hand count: per step the source cell goes down and back (4 B each way) and the microphone
    // row (8 floats, 32 B) comes back; every 100 steps the whole p field (40·30·20·4 B) comes back.
    expect(t.measured).toEqual({ toDevice: 4, toHost: 36 });
    expect(t.predictedEveryStep).toEqual({ toDevice: 4, toHost: 36 });
    expect(t.periodic).toEqual([{ line: 163, everySteps: 100, runs: 1, measured: 96000, predictedPerRun: 96000 }]);
    expect(t.verdict).toBe('equal');
  });

  it('the hidden bug: correct with shared memory, wrong with separate memory, right after the quick fix', async () => {
    const file = join(ROOT, 'tests/fixtures/verify/host_boundary_omp.c');
    const text = readFileSync(file, 'utf8');
    const before = await verify(args([file]), quiet);
    expect(before.sameOutput).toBe(false);
    expect(formatVerify(before, (p) => p)).toMatch(/results DIFFER between separate and shared memory/);
    const analysis = await analyzeText(text, file);
    const stale = analysis.findings.find((f) => f.code === 'stale-on-device');
    expect(stale?.fixes?.[0]?.edits.length).toBeGreaterThan(0);
    const dir = mkdtempSync(join(tmpdir(), 'ol-fixed-'));
    try {
      const fixed = join(dir, 'host_boundary_omp.c');
      writeFileSync(fixed, applyEdits(text, stale!.fixes![0].edits));
      const after = await verify(args([fixed]), quiet);
      expect(after.sameOutput, formatVerify(after, (p) => p)).toBe(true);
      // The fix moves the one boundary element every step (8 B), and the ledger says so.
      expect(after.comparison.differences).toBe(0);
      expect(after.comparison.timeLoops[0].measured).toEqual({ toDevice: 8, toHost: 0 });
      expect(after.shared?.stdout).toBe(before.shared?.stdout);
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  });

  // The suggested data region of each OpenMP program (tests/data-region.test.ts compiles them with
  // gcc's shared memory): with separate memories it must keep the results, and the bytes it still
  // moves must be the ledger's of the edited program (only the updates host code needs).
  it.each<{ file: string; defines: Record<string, string> }>([
    { file: 'examples/heat2d/heat2d_omp.c', defines: { NX: '64', NY: '48', STEPS: '21' } },
    { file: 'examples/hall/hall_naive_omp.c', defines: { NX: '40', NY: '30', NZ: '20', STEPS: '12' } },
    { file: 'tests/fixtures/data/omp_host_source.c', defines: {} },
    // OpenACC programs: the region is suggested in OpenACC, and verify builds its translation.
    { file: 'examples/heat2d/heat2d_acc.c', defines: { NX: '64', NY: '48', STEPS: '21' } },
    { file: 'examples/hall/hall_naive_acc.c', defines: { NX: '40', NY: '30', NZ: '20', STEPS: '12' } },
    { file: 'tests/fixtures/data/implicit_static.c', defines: {} },
    { file: 'tests/fixtures/data/snapshot_naive.c', defines: {} },
    { file: 'tests/fixtures/data/callee_clauses.c', defines: {} },
  ])('the suggested data region of $file, measured', async ({ file, defines }) => {
    const text = readFileSync(join(ROOT, file), 'utf8');
    const settings = { defines: new Map(Object.entries(defines)) };
    const analysis = await analyzeText(text, join(ROOT, file), undefined, undefined, undefined, settings);
    const edits = analysis.timeLoops.flatMap((t) => t.ledger?.dataRegion?.edits ?? []);
    expect(edits.length).toBeGreaterThan(0);
    const dir = mkdtempSync(join(tmpdir(), 'ol-region-'));
    try {
      const original = await verify(args([join(ROOT, file)], defines), quiet);
      const f = join(dir, file.split('/').pop()!);
      writeFileSync(f, applyLineEdits(text, edits));
      const r = await verify(args([f], defines), quiet);
      const why = formatVerify(r, (p) => p);
      expect(r.sameOutput, why).toBe(true);
      expect(r.separate.stdout, why).toBe(original.shared?.stdout);
      expect(r.comparison.differences, why).toBe(0);
      // Nothing but updates (and reduction scalars) moves inside the time loop any more.
      const before = original.comparison.timeLoops[0].measured!;
      const after = r.comparison.timeLoops[0].measured!;
      expect(after.toDevice + after.toHost).toBeLessThan(before.toDevice + before.toHost);
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  });

  // The quick fixes of the stale-data findings (tests/fixes.test.ts compiles them with gcc's shared
  // memory, where the bug never shows): with separate memories each fixed program must print what
  // the shared-memory build prints, and the bytes it moves must be its ledger's.
  it.each<{ file: string; codes: string[]; defines: Record<string, string> }>([
    { file: 'tests/fixtures/verify/host_boundary_omp.c', codes: ['stale-on-device'], defines: {} },
    { file: 'tests/fixtures/data/stale_receiver.c', codes: ['stale-on-host'], defines: {} },
    { file: 'tests/fixtures/data/host_source.c', codes: ['stale-on-device'], defines: {} },
    { file: 'examples/hall/hall_stale_acc.c', codes: ['stale-on-host', 'stale-on-device'], defines: { NX: '40', NY: '30', NZ: '20', STEPS: '30' } },
    // The other fix kinds of tests/fixes.test.ts: present instead of a copy, narrower updates.
    { file: 'tests/fixtures/data/present_inside_region.c', codes: ['already-present'], defines: {} },
    { file: 'tests/fixtures/data/wide_update.c', codes: ['update-wider-than-needed'], defines: {} },
    { file: 'tests/fixtures/data-flow/edge_rows.c', codes: ['update-wider-than-needed'], defines: {} },
    { file: 'tests/fixtures/fixes14/two_planes.c', codes: ['update-wider-than-needed'], defines: {} },
  ])('the quick fixes of $file, measured', async ({ file, codes, defines }) => {
    let text = readFileSync(join(ROOT, file), 'utf8');
    const settings = { defines: new Map(Object.entries(defines)) };
    // Apply one fix at a time, re-analysing in between (each fix's ranges are those of its own analysis).
    for (let round = 0; round < 6; round++) {
      const a = await analyzeText(text, join(ROOT, file), undefined, undefined, undefined, settings);
      const f = a.findings.find((x) => codes.includes(x.code) && x.fixes?.length);
      if (!f) break;
      text = applyTextEdits(text, f.fixes![0].edits);
    }
    const dir = mkdtempSync(join(tmpdir(), 'ol-fixed-'));
    try {
      const fixed = join(dir, file.split('/').pop()!);
      writeFileSync(fixed, text);
      const after = await analyzeText(text, fixed, undefined, undefined, undefined, settings);
      expect(after.findings.filter((x) => x.code.startsWith('stale-') || codes.includes(x.code)).map((x) => x.message)).toEqual([]);
      const r = await verify(args([fixed], defines), quiet);
      const why = formatVerify(r, (p) => p);
      expect(r.sameOutput, why).toBe(true);
      expect(r.comparison.differences, why).toBe(0);
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  });

  it('a crash under separate memory is reported with its exit status and the last map entries', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'ol-crash-'));
    try {
      const f = join(dir, 'crash.c');
      writeFileSync(f, [
        '#include <stdlib.h>',
        'int main(void) {',
        '  int n = 64; double *a = malloc(n * sizeof *a);',
        '  for (int i = 0; i < n; i++) a[i] = i;',
        '#pragma omp target data map(to: a[0:n])',
        '  {',
        '#pragma omp target map(to: a[0:n])',
        '    { if (a[5] == 5.0) abort(); }',
        '  }',
        '  return 0;',
        '}',
      ].join('\n'));
      const r = await verify(args([f]), quiet);
      expect(r.separate.signal ?? r.separate.status).not.toBe(0);
      const text = formatVerify(r, (p) => p);
      expect(text).toMatch(/separate-memory run: (killed by SIGABRT|exit status \d+)/);
      expect(text).toMatch(/last map entries before the end:\n(?: {4}.*\n)*? {4}.*Name=a\[0:n\]/);
      expect(text).toMatch(/the run ended early/);
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  });

  it('a run that does not end is stopped at --timeout', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'ol-hang-'));
    try {
      const f = join(dir, 'hang.c');
      writeFileSync(f, 'int main(void) { volatile int x = 1; while (x) { } return 0; }\n');
      const r = await verify(args([f], {}, { timeoutSeconds: 1 }), quiet);
      expect(r.separate.timedOut).toBe(true);
      expect(formatVerify(r, (p) => p)).toMatch(/stopped at the time limit/);
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  });

  it('the CLI exits 1 when the builds disagree, 0 when everything matches, and leaves the source alone', () => {
    const stale = join(ROOT, 'tests/fixtures/verify/host_boundary_omp.c');
    const text = readFileSync(stale, 'utf8');
    const bad = runCli(['verify', stale]);
    expect(bad.status, bad.stderr).toBe(1);
    expect(bad.stdout).toMatch(/DIFFER/);
    expect(readFileSync(stale, 'utf8')).toBe(text);
    const good = runCli(['verify', join(ROOT, 'examples/heat2d/heat2d_omp.c'), '-D', 'NX=32', '-D', 'NY=32', '-D', 'STEPS=5', '--format', 'json']);
    expect(good.status, good.stderr).toBe(0);
    const j = JSON.parse(good.stdout);
    expect(j).toMatchObject({ sameOutput: true, differences: 0 });
    expect(j.runtime).toMatch(/LLVM 14/);
  });
});

describe('verify: bad input', () => {
  it('a missing toolchain is one clear message with the packages to install', () => {
    const r = runCli(['verify', join(ROOT, 'examples/heat2d/heat2d_omp.c'), '--compiler', '/nonexistent/clang']);
    expect(r.status).toBe(2);
    expect(r.stderr).toMatch(/apt-get install clang libomp-dev clang-tools-14/);
    expect(r.stderr.trim().split('\n')).toHaveLength(1);
  });

  it('Fortran is refused with the reason (clang here has no Fortran)', () => {
    const r = runCli(['verify', join(ROOT, 'examples/estuary/estuary_resident_omp.f90')]);
    expect(r.status).toBe(2);
    expect(r.stderr).toMatch(/no Fortran.*gfortran/);
  });

  it('a program that does not compile is reported with the compiler messages', async () => {
    if (!haveOffload) return;
    const dir = mkdtempSync(join(tmpdir(), 'ol-bad-'));
    try {
      const f = join(dir, 'half.c');
      writeFileSync(f, 'int main(void) {\n#pragma omp target\n  for (int i = 0; i <\n');
      await expect(verify(args([f]), quiet)).rejects.toThrow(/does not build/);
      expect(existsSync(dirname(f))).toBe(true);
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  });
});

export type { VerifyReport };
