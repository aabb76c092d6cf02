// The serial and host-parallel programs under examples/serial: the starting points of the ports
// that issue 13's checks make and measure (heat plate, hall acoustics, estuary tides, and three
// stencils of our own: a 3-D 7-point Jacobi, a 2-D leapfrog wave equation, a 1-D advection with a
// time step from a reduction).
//
// Each program is compiled at the sizes its header's "Small:" line gives, with warnings as errors
// (gfortran: -Wall and an empty stderr), run twice, and must exit 0 and print the same thing both
// times. The serial versions of the demo programs do the ports' arithmetic in the same order, so
// they must print exactly what the ported examples print (the ports run on the host under gcc's
// OpenACC fallback). The compile checks skip, with a printed reason, when a compiler is missing.
//
// The analysis of each program must see what a porting team sees: exactly one time loop, whose
// variable is the step counter, the spatial sweeps as nests of their own (never merged with the
// time loop), and no error findings.
import { spawnSync } from 'node:child_process';
import { mkdirSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { basename, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, describe, expect, it } from 'vitest';
import type { FileAnalysis } from '../server/src/core/analyze';
import { analyzeFile } from './helpers';

const examplesDir = fileURLToPath(new URL('../examples/', import.meta.url));
const serialDir = join(examplesDir, 'serial');

interface SerialProgram {
  file: string;
  /** Extra compiler flags (host OpenMP). */
  flags: string[];
  /** Lines the small run prints. */
  lines: number;
  /** The variable of the one time loop (the step loop, or the step counter of a while loop). */
  timeVar: string;
  /** The variables of the main spatial sweep, outermost first, as its nest reports them. */
  sweep: string[];
  /** A ported example (path under examples/, its model flag) whose small run prints the same. */
  port?: { file: string; flag: string };
  /** Host parallelism already in the code (omp parallel for, do concurrent): the whole node is the baseline. */
  hostParallel?: boolean;
  /**
   * Known gaps of the analysis on this program, each a check below that is expected to fail
   * (`it.fails`) until the analysis learns it; the suite stays green and the gap stays visible.
   */
  knownGaps?: ('carried' | 'extents')[];
}

const PROGRAMS: SerialProgram[] = [
  // Steps 0 and 100 of the every-100 max change, then the checksum and the centre.
  { file: 'heat2d_serial.c', flags: [], lines: 4, timeVar: 't', sweep: ['j', 'i'], port: { file: 'heat2d/heat2d_acc.c', flag: '-fopenacc' } },
  { file: 'heat2d_omp_host.c', flags: ['-fopenmp'], lines: 4, timeVar: 't', sweep: ['j', 'i'], hostParallel: true, port: { file: 'heat2d/heat2d_omp.c', flag: '-fopenmp' } },
  // Snapshots at steps 0 and 100, then p, the microphone energy and the last sample.
  { file: 'hall_serial.c', flags: [], lines: 5, timeVar: 't', sweep: ['k', 'j', 'i'], port: { file: 'hall/hall_naive_acc.c', flag: '-fopenacc' } },
  // Snapshots at steps 100, 200 and 300, then four checksums.
  { file: 'estuary_serial.f90', flags: [], lines: 7, timeVar: 't', sweep: ['j', 'i'], port: { file: 'estuary/estuary_naive_acc.f90', flag: '-fopenacc' } },
  // Iterations, residual, checksum, centre.
  // Known gaps (analysis at the commit this test was written against):
  // - 'carried': the swap `tmp = g.cur; g.cur = g.next; g.next = tmp` (lines 97-99) of struct
  //   members is not seen, nor that sweep()'s `u = g->cur` / `un = g->next` (lines 55-57) are
  //   those members, so the time loop at line 95 is taken only because "each pass repeats the
  //   same work on the same arrays (reads `sweep::u`, `sweep::f`, writes `sweep::un` ...)".
  // - 'extents': `g->nx`, `g->ny`, `g->nz` are not bound from the initialiser
  //   `struct grid g = { NX, NY, NZ, ... }` (line 72), so the sweep at line 59 has no trip count
  //   (three unknown-extent findings at line 59) and the step's sweep is not costed.
  { file: 'jacobi3d_serial.c', flags: [], lines: 4, timeVar: 'iter', sweep: ['k', 'j', 'i'], knownGaps: ['carried', 'extents'] },
  { file: 'jacobi3d_docon.f90', flags: [], lines: 4, timeVar: 'iter', sweep: ['k', 'j', 'i'], hostParallel: true },
  // Sums of squares at steps 100, 200, 300, then the checksum and the receiver trace.
  { file: 'wave2d_serial.c', flags: [], lines: 6, timeVar: 't', sweep: ['j', 'i'] },
  // Steps 1000 and 2000, then time, mass, energy and one cell.
  { file: 'advect1d_serial.c', flags: [], lines: 6, timeVar: 'step', sweep: ['i'] },
];

const isFortran = (file: string): boolean => file.endsWith('.f90');

/** The small sizes from the header comment: C `-D` flags, or the Fortran `sed` substitution. */
function smallSizes(text: string): { defines: string[] } | { from: string; to: string } {
  const line = text.split('\n').find((l) => /\bSmall:/.test(l)) ?? '';
  const sed = /s\/([^/]+)\/([^/]+)\//.exec(line);
  if (sed) return { from: sed[1], to: sed[2] };
  return { defines: line.match(/-D\w+=\S+/g) ?? [] };
}

function probe(cmd: string, args: string[]): boolean {
  const r = spawnSync(cmd, args, { encoding: 'utf8', input: '' });
  return !r.error && r.status === 0;
}
const haveGcc = probe('gcc', ['--version']);
const haveGfortran = probe('gfortran', ['--version']);
// gcc built without offloading support rejects -fopenacc; the comparisons with the ports need it.
const haveOpenacc = haveGcc && probe('gcc', ['-fopenacc', '-E', '-x', 'c', '-']);
if (!haveGcc) console.log('skipped: gcc not found, so the serial C examples cannot be compiled');
if (!haveGfortran) console.log('skipped: gfortran not found, so the serial Fortran examples cannot be compiled');
if (haveGcc && !haveOpenacc) console.log('skipped: gcc does not accept -fopenacc, so the serial examples are not compared with the ports');

const canCompile = (file: string): boolean => (isFortran(file) ? haveGfortran : haveGcc);

let workDir: string | undefined;
function tempDir(): string {
  workDir ??= mkdtempSync(join(tmpdir(), 'offload-ledger-serial-'));
  return workDir;
}

/**
 * Builds a program at the small size that `sizesText` (the serial program's source) documents;
 * every build has a directory of its own, because Fortran programs write module files.
 */
function buildSmall(path: string, sizesText: string, extra: string[], tag: string): string {
  const file = basename(path);
  const text = readFileSync(path, 'utf8');
  const sizes = smallSizes(sizesText);
  const dir = join(tempDir(), tag);
  mkdirSync(dir, { recursive: true });
  const exe = join(dir, file.replace(/\.\w+$/, ''));
  let cmd: string;
  let args: string[];
  if ('from' in sizes) {
    expect(text.includes(sizes.from), `${file} declares ${sizes.from}`).toBe(true);
    const src = join(dir, file);
    // Every occurrence, as sed does line by line: the header's own "Small:" line names it too.
    writeFileSync(src, text.split(sizes.from).join(sizes.to));
    cmd = 'gfortran';
    args = [...extra, '-O2', '-Wall', `-J${dir}`, src, '-o', exe];
  } else {
    expect(sizes.defines.length, `${file}: a "Small:" line with -D flags`).toBeGreaterThan(0);
    cmd = file.endsWith('.cpp') ? 'g++' : 'gcc';
    args = [...extra, '-O2', '-Wall', '-Werror', ...(cmd === 'gcc' ? ['-std=c11'] : []), ...sizes.defines, path, '-o', exe, '-lm'];
  }
  const r = spawnSync(cmd, args, { cwd: dir, encoding: 'utf8', timeout: 60_000 });
  if (r.error) throw r.error;
  expect(r.stderr, `${cmd} ${args.join(' ')}`).toBe('');
  expect(r.status, `${cmd} ${args.join(' ')}`).toBe(0);
  return exe;
}

function run(exe: string): string {
  // Two threads are enough for host OpenMP; a passive wait policy keeps idle threads from spinning.
  const env = { ...process.env, OMP_NUM_THREADS: '2', OMP_WAIT_POLICY: 'passive' };
  const r = spawnSync(exe, [], { encoding: 'utf8', timeout: 60_000, env });
  if (r.error) throw r.error;
  expect(r.status, `${exe} exited with ${r.status}\n${r.stderr}`).toBe(0);
  return r.stdout;
}

const outputs = new Map<string, string>();
function smallOutput(p: SerialProgram): string {
  const cached = outputs.get(p.file);
  if (cached !== undefined) return cached;
  const path = join(serialDir, p.file);
  const exe = buildSmall(path, readFileSync(path, 'utf8'), p.flags, `serial-${p.file}`);
  const first = run(exe);
  // Deterministic: a second run prints the same, byte for byte.
  expect(run(exe), `${p.file}: second run`).toBe(first);
  outputs.set(p.file, first);
  return first;
}

/** The numbers of an output, in order (C `1.5e+00` and Fortran `1.5E+00` alike). */
function numbers(out: string): number[] {
  return (out.match(/[-+]?\d+\.\d+[eE][-+]\d+/g) ?? []).map(Number);
}

describe('serial examples: sources', () => {
  it.each(PROGRAMS.map((p) => p.file))('%s has no offload directive and documents its small size', (file) => {
    const text = readFileSync(join(serialDir, file), 'utf8');
    // Host OpenMP (`omp parallel for`) is allowed; anything that targets a device is not.
    expect(text).not.toMatch(/#\s*pragma\s+acc\b|!\$acc\b|\bomp\s+(target|declare\s+target)\b/i);
    const sizes = smallSizes(text);
    if ('from' in sizes) expect(sizes.to).not.toBe(sizes.from);
    else expect(sizes.defines.length).toBeGreaterThan(0);
    // Results only: the programs print no timings, which would make the output differ run to run.
    expect(text).not.toMatch(/\bclock\s*\(|gettimeofday|omp_get_wtime|cpu_time|system_clock/);
  });
});

describe('serial examples: compile and run at the small size', () => {
  afterAll(() => {
    if (workDir) rmSync(workDir, { recursive: true, force: true });
  });

  // A program whose compiler is missing is skipped (the reason is printed once, above).
  for (const p of PROGRAMS) {
    it.skipIf(!canCompile(p.file))(`${p.file} compiles without warnings, runs and prints the same twice`, () => {
      const out = smallOutput(p);
      expect(out.trim().split('\n')).toHaveLength(p.lines);
      const values = numbers(out);
      expect(values.length, `${p.file} prints numbers`).toBeGreaterThan(0);
      for (const v of values) expect(Number.isFinite(v), `${p.file}: ${v}`).toBe(true);
    });
  }

  for (const p of PROGRAMS.filter((x) => x.port)) {
    const port = p.port!;
    const can = canCompile(p.file) && (port.flag !== '-fopenacc' || haveOpenacc);
    it.skipIf(!can)(`${p.file} prints exactly what ${port.file} prints`, () => {
      // The port is built at the serial program's small size, so the two runs are the same problem.
      const sizes = readFileSync(join(serialDir, p.file), 'utf8');
      const portOut = run(buildSmall(join(examplesDir, port.file), sizes, [port.flag], `port-${basename(port.file)}`));
      expect(smallOutput(p)).toBe(portOut);
    });
  }

  it.skipIf(!haveGcc)('heat2d_omp_host.c prints what heat2d_serial.c prints', () => {
    expect(smallOutput(PROGRAMS[1])).toBe(smallOutput(PROGRAMS[0]));
  });

  it.skipIf(!haveGcc || !haveGfortran)('jacobi3d_docon.f90 prints the same values as jacobi3d_serial.c', () => {
    // Same arithmetic in the same order, both printed with 11 significant digits.
    const c = smallOutput(PROGRAMS.find((p) => p.file === 'jacobi3d_serial.c')!);
    const f = smallOutput(PROGRAMS.find((p) => p.file === 'jacobi3d_docon.f90')!);
    expect(numbers(f)).toEqual(numbers(c));
    expect(f.replace(/E/g, 'e').replace(/\s+/g, ' ')).toBe(c.replace(/\s+/g, ' '));
  });
});

describe('serial examples: analysis', () => {
  const analyses = new Map<string, Promise<FileAnalysis>>();
  const analysis = (file: string): Promise<FileAnalysis> => {
    let a = analyses.get(file);
    if (!a) analyses.set(file, (a = analyzeFile(join(serialDir, file))));
    return a;
  };

  it.each(PROGRAMS.map((p) => [p.file, p] as const))('%s: exactly one time loop, on the step variable', async (file, p) => {
    const a = await analysis(file);
    expect(a.internalErrors).toEqual([]);
    expect(a.timeLoops.map((t) => `${t.timeLoop.loop.variable}@${t.timeLoop.loop.range.start.line + 1}`)).toHaveLength(1);
    expect(a.timeLoops[0].timeLoop.loop.variable).toBe(p.timeVar);
  });

  it.each(PROGRAMS.map((p) => [p.file, p] as const))('%s: the spatial sweep is a nest of its own, not merged with the time loop', async (file, p) => {
    const a = await analysis(file);
    const nests = [...a.nests, ...a.externalNests].map((n) => n.nest);
    const time = a.timeLoops[0]?.timeLoop.loop;
    expect(time, `${file}: a time loop`).toBeDefined();
    // A nest that holds the time loop, or a loop on the step variable inside the time loop's lines
    // (a loop after the time loop may reuse its variable's name: wave2d's trace sum does).
    const inside = (line: number): boolean => line >= time!.range.start.line && line <= time!.range.end.line;
    const merged = nests.filter((n) =>
      n.paths.some((path) => path.includes(time!)) ||
      (n.variables.includes(p.timeVar) && inside(n.root.range.start.line)));
    expect(merged.map((n) => `${n.variables.join(',')}@${n.root.range.start.line + 1}`)).toEqual([]);
    // The sweep's nest lies inside the time loop, or in a procedure the time loop calls.
    expect(nests.map((n) => n.variables.join(','))).toContain(p.sweep.join(','));
  });

  it.each(PROGRAMS.map((p) => [p.file, p] as const))('%s: no error findings', async (file) => {
    const a = await analysis(file);
    const errors = a.findings.filter((f) => f.severity === 'error');
    expect(errors.map((f) => `${f.code}@${f.range.start.line + 1}: ${f.message}`)).toEqual([]);
  });

  // Issue 13: the time loop is found by what carries from one pass to the next (a dependence or a
  // swap), not only because its passes repeat the same work.
  for (const p of PROGRAMS) {
    const check = p.knownGaps?.includes('carried') ? it.fails : it;
    check(`${p.file}: the time loop is found from what one pass carries to the next${p.knownGaps?.includes('carried') ? ' (known gap)' : ''}`, async () => {
      const a = await analysis(p.file);
      // The reasons of a carried value: a swap or rotation, or an array read before (or after) it is written.
      expect(a.timeLoops[0]?.timeLoop.reason).toMatch(/^it swaps |before it writes it|that earlier passes wrote/);
    });
  }

  // Every nest has a trip count from the sizes in the file, so each sweep is costed per step.
  for (const p of PROGRAMS) {
    const check = p.knownGaps?.includes('extents') ? it.fails : it;
    check(`${p.file}: every nest has a trip count${p.knownGaps?.includes('extents') ? ' (known gap)' : ''}`, async () => {
      const a = await analysis(p.file);
      const unbound = [...a.nests, ...a.externalNests].filter((n) => n.iterations.value === null);
      expect(unbound.map((n) => `${n.nest.variables.join(',')}@${n.nest.root.range.start.line + 1}: ${n.iterations.expr}`)).toEqual([]);
      expect(a.findings.filter((f) => f.code === 'unknown-extent').map((f) => `${f.range.start.line + 1}: ${f.message}`)).toEqual([]);
    });
  }

  // Issue 13: host parallelism already in the code sets the baseline (the whole node); plain
  // serial code is measured against one core.
  it.each(PROGRAMS.map((p) => [p.file, p] as const))('%s: the baseline matches the parallelism in the code', async (file, p) => {
    const a = await analysis(file);
    expect(a.baseline).toBe(p.hostParallel ? 'node' : 'core');
  });
});
