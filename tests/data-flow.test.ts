/**
 * Where the data lives in real layouts: presence made in an allocation routine, pointer swaps,
 * structs swapped with std::swap, members re-read into locals. The programs compile and run with
 * gcc/g++ (OpenACC or OpenMP as written); their figures are in the .expected.json beside each.
 */
import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { fileReport } from '../server/src/core/report';
import { ROOT, analyzeText } from './helpers';

const DIR = join(ROOT, 'tests', 'fixtures', 'data-flow');
const PROGRAMS: { file: string; cc: string; flag: string }[] = [
  { file: 'alloc_routine.c', cc: 'gcc', flag: '-fopenacc' },
  { file: 'split_host.c', cc: 'gcc', flag: '-fopenacc' },
  { file: 'edge_rows.c', cc: 'gcc', flag: '-fopenacc' },
  { file: 'pointer_tables.c', cc: 'gcc', flag: '-fopenacc' },
  { file: 'device_ptr_acc.c', cc: 'gcc', flag: '-fopenacc' },
  { file: 'device_ptr_omp.c', cc: 'gcc', flag: '-fopenmp' },
  { file: 'alloc_routine.f90', cc: 'gfortran', flag: '-fopenacc' },
  { file: 'pointer_swap.f90', cc: 'gfortran', flag: '-fopenacc' },
  { file: 'swap_structs.cpp', cc: 'g++', flag: '-fopenmp' },
  { file: 'swap_structs_fixed.cpp', cc: 'g++', flag: '-fopenmp' },
];

const have = (cc: string): boolean => {
  const r = spawnSync(cc, ['--version']);
  return !r.error && r.status === 0;
};

describe('data-flow programs compile and run', () => {
  let dir: string | undefined;
  afterAll(() => { if (dir) rmSync(dir, { recursive: true, force: true }); });
  it.each(PROGRAMS.map((p) => [p.file, p] as const))('%s', (_f, p) => {
    if (!have(p.cc)) {
      console.log(`skipped: ${p.cc} not found`);
      return;
    }
    dir ??= mkdtempSync(join(tmpdir(), 'offload-ledger-flow-'));
    const exe = join(dir, p.file.replace(/\W/g, '_'));
    // gcc 12 does not count a pointer named only in an OpenMP map clause as used.
    // Module files go to the temporary folder (-J), not beside the sources.
    const fortran = p.cc === 'gfortran' ? ['-J', dir] : ['-Wno-unused-variable', '-Werror'];
    const c = spawnSync(p.cc, [p.flag, '-O2', '-Wall', ...fortran, join(DIR, p.file), '-o', exe], { encoding: 'utf8' });
    expect(c.status, c.stderr).toBe(0);
    const r = spawnSync(exe, [], { encoding: 'utf8', env: { ...process.env, OMP_NUM_THREADS: '2' } });
    expect(r.status).toBe(0);
    expect(r.stdout).toMatch(/\d\.\d{6,8}[eE][-+]\d\d/);
  });
});

describe('sizes and presence follow the call chain', () => {
  it('the sweep called from run, called from main, gets main’s sizes', async () => {
    const file = join(DIR, 'alloc_routine.c');
    const loops = (fileReport(await analyzeText(readFileSync(file, 'utf8'), file)) as { loops: { function: string; iterations: { value: number } }[] }).loops;
    // main: nx = 256, ny = 192 → run(…, nx, ny, …) → sweep(…, nx, ny): (192-2)*(256-2) = 48,260 (hand count).
    expect(loops.find((l) => l.function === 'sweep')?.iterations.value).toBe(48_260);
  });

  it('without the allocation routine the same loop copies both fields every step', async () => {
    const file = join(DIR, 'alloc_routine.c');
    const text = readFileSync(file, 'utf8').replace('grid_alloc(&g, cur, nxt, nx * ny);', '(void)g;').replace(/grid_free\(cur, nxt, nx \* ny\);/, '');
    const a = await analyzeText(text, file);
    const tl = (fileReport(a) as { timeLoops: { perStep: { toDevice: { expr: string } }; transfers: { cause: string }[] }[] }).timeLoops[0];
    // Implicit copy of cur and nxt in and out at the sweep (OpenACC 3.3 §2.6.2): both whole
    // arrays each way, every step (run sees pointers without their length, so the size stays symbolic).
    expect(tl.perStep.toDevice.expr).toBe('8*count(cur) + 8*count(nxt)');
    expect(tl.transfers.filter((t) => t.cause === 'implicit')).toHaveLength(4);
  });
});

describe('a pointer given new storage', () => {
  it('no longer aliases the array it pointed to (no false stale-on-device)', async () => {
    // p first points at a, then gets its own allocation; host writes through p in the loop touch
    // that new storage, not a, so the device reads of a are not stale (OpenACC 3.3 §2.6: staleness
    // needs a host write to the same data).
    const text = '#include <stdlib.h>\nint main(void) {\n  int n = 1000;\n  double *a = malloc(sizeof(double) * n);\n  double *b = malloc(sizeof(double) * n);\n  double *p = a;\n  for (int i = 0; i < n; i++) p[i] = i;\n  p = malloc(sizeof(double) * n);\n#pragma acc data copy(a[0:n]) create(b[0:n])\n  for (int t = 0; t < 10; t++) {\n#pragma acc parallel loop present(a[0:n], b[0:n])\n    for (int i = 1; i < n - 1; i++) b[i] = 0.5 * (a[i - 1] + a[i + 1]);\n#pragma acc parallel loop present(a[0:n], b[0:n])\n    for (int i = 1; i < n - 1; i++) a[i] = b[i];\n    for (int i = 0; i < n; i++) p[i] = 1.0;\n  }\n  free(a); free(b); free(p);\n  return 0;\n}\n';
    const a = await analyzeText(text, 'reassigned.c');
    expect(a.findings.filter((f) => f.severity === 'error').map((f) => f.code)).toEqual([]);
  });
});
