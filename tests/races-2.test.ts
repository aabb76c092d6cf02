/**
 * Data-sharing races and bounded dependence distances (issue 11): the fixtures under
 * tests/fixtures/races-2 compiled and run with gcc/gfortran, their quick fixes applied, compiled
 * and run again (same output, finding gone), and the rules checked on small in-memory programs.
 * The findings each fixture must get are in its .expected.json (tests/fixtures.test.ts).
 */
import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import * as S from '../server/src/core/symbolic';
import { applyTextEdits } from '../server/src/core/data/edits';
import { provablyNonNegative, solveDistances } from '../server/src/core/analysis/distances';
import type { Finding } from '../server/src/core/types';
import { ROOT, analyzeText } from './helpers';

const has = (cmd: string): boolean => {
  const r = spawnSync(cmd, ['--version'], { encoding: 'utf8' });
  return !r.error && r.status === 0;
};
const gcc = has('gcc');
const gfortran = has('gfortran');
if (!gcc) console.log('skipped: gcc not found, so the C fixtures of races-2 are not compiled');
if (!gfortran) console.log('skipped: gfortran not found, so the Fortran fixtures of races-2 are not compiled');
const tmp = mkdtempSync(join(tmpdir(), 'ol-races2-'));
let serial = 0;

function compileAndRun(src: string, fortran: boolean): string {
  const name = `p${serial++}`;
  const file = join(tmp, `${name}.${fortran ? 'f90' : 'c'}`);
  writeFileSync(file, src);
  const flags = [/(#pragma acc|!\$acc)/i.test(src) ? '-fopenacc' : '', /(#pragma omp|!\$omp)/i.test(src) ? '-fopenmp' : ''].filter(Boolean);
  const exe = join(tmp, name);
  const args = fortran ? ['-O1', '-Wall', '-Werror', ...flags, file, '-o', exe] : ['-O1', '-std=c11', '-Wall', '-Werror', ...flags, file, '-o', exe, '-lm'];
  const r = spawnSync(fortran ? 'gfortran' : 'gcc', args, { cwd: tmp, encoding: 'utf8' });
  expect(r.stderr).toBe('');
  expect(r.status).toBe(0);
  const out = spawnSync(exe, [], { encoding: 'utf8', timeout: 60_000 });
  expect(out.status).toBe(0);
  return out.stdout;
}

/** Each fixture's output under the compilers' host fallback (sequential), counted by hand in its .expected.json. */
const outputs: Record<string, string> = {
  'idx_omp.c': '1.000 48.000 1176.000', // a[k] = k + 1; sum of k + 1 for k < 48 = 1176 (host loop only)
  'idx_acc.c': '0.5312 69.5312', // (0.25^2 + 1)/2, (11.75^2 + 1)/2
  'idx_private.c': '48.000 24.500', // a[47] = 48; c[47] = 48 - 23.5
  'idx_private_acc.c': '1.0000 138.0625', // a[0] = 0 + 1 (gang loop); a[47] = 11.75^2
  'scratch_acc.f90': '-2.5000    1.0000    1.0000', // u = mod(i*i, 7): (1+2)/2 - 4, (2+4)/2 - 2, (1+1)/2 - 0
  'scratch_private.f90': '-2.5000    1.0000    1.0000', // the same loop with private(t)
  'overlap.c': '1.00 5.08 2.00', // a[8] last written by (j, i) = (1, 0); a[48] by (5, 8); b[16] by (2, 0)
  'disjoint.c': '1.00 5.07 4.91', // a[8] = (1, 0); b[47] = (5, 7); p[59] = 5 - 0.09
  'scratch_array.c': '0.8000 18.2000', // 0.1*2 + 0.2*3; 2.9 + 3.0*2 + 3.1*3
};

const dir = join(ROOT, 'tests', 'fixtures', 'races-2');

describe('races-2 fixtures compile, run and print their hand counts', () => {
  for (const [file, want] of Object.entries(outputs)) {
    const fortran = file.endsWith('.f90');
    it.skipIf(fortran ? !gfortran : !gcc)(file, () => {
      expect(compileAndRun(readFileSync(join(dir, file), 'utf8'), fortran).trim()).toBe(want);
    });
  }
});

const key = (f: Finding): string => `${f.code}:${f.array ?? ''}`;

describe('private quick fixes compile, keep the output, and clear their finding', () => {
  const cases = ['idx_omp.c', 'idx_acc.c', 'scratch_acc.f90', 'scratch_array.c'];
  for (const file of cases) {
    const fortran = file.endsWith('.f90');
    it.skipIf(fortran ? !gfortran : !gcc)(file, async () => {
      const path = join(dir, file);
      const text = readFileSync(path, 'utf8');
      const before = await analyzeText(text, path);
      const targets = before.findings.filter((f) => f.code === 'shared-scalar-write' || f.code === 'missing-private');
      expect(targets.length).toBeGreaterThan(0);
      const original = compileAndRun(text, fortran);
      for (const f of targets) {
        expect(f.fixes?.length, `${key(f)} at line ${f.range.start.line + 1} has a fix`).toBe(1);
        expect(f.fixes![0].edits[0].newText).toBe(` private(${f.array})`);
        const fixed = applyTextEdits(text, f.fixes![0].edits);
        expect(compileAndRun(fixed, fortran)).toBe(original);
        const after = await analyzeText(fixed, path);
        const count = (a: Finding[]): number => a.filter((x) => key(x) === key(f)).length;
        expect(count(after.findings), `${f.fixes![0].title} clears one ${f.code}`).toBe(count(before.findings) - 1);
      }
    });
  }
});

// ---- rules on small programs ----------------------------------------------------------------

async function findings(src: string, path = 'r.c'): Promise<Finding[]> {
  const a = await analyzeText(src, path);
  expect(a.internalErrors).toEqual([]);
  return a.findings.filter((f) => ['shared-scalar-write', 'missing-private', 'missing-reduction', 'loop-carried-dependence'].includes(f.code));
}
const codes = (fs: Finding[]): string[] => fs.map((f) => `${f.code}:${f.array}@${f.range.start.line + 1}`);

const prelude = '#define N 64\ndouble a[N], b[N], s;\nint n = N;\n';

describe('shared-scalar-write: which loops and copies race', () => {
  it('OpenACC: a gang-only loop gives each gang its own copy; a vector loop inside shares it (OpenACC 3.3 §2.6.2, §2.9.10)', async () => {
    const src = `${prelude}void f(void) {
  double t; int i, j;
#pragma acc parallel loop gang
  for (i = 0; i < N; i++) { t = a[i]; b[i] = t * t; }
#pragma acc parallel loop gang private(t)
  for (j = 0; j < 8; j++) {
#pragma acc loop vector
    for (i = 0; i < 8; i++) { t = a[j * 8 + i]; b[j * 8 + i] = t + 1.0; }
  }
}
`;
    // Line 11: private(t) on the gang loop is one copy per gang, which the vector lanes share.
    expect(codes(await findings(src))).toEqual(['shared-scalar-write:t@11']);
  });

  it('OpenACC: kernels without independent, auto and seq loops, and serial are left to the implementation', async () => {
    const src = `${prelude}void f(void) {
  double t; int i;
#pragma acc kernels loop
  for (i = 0; i < N; i++) { t = a[i]; b[i] = t * t; }
#pragma acc parallel loop auto
  for (i = 0; i < N; i++) { t = a[i]; b[i] = t * t; }
#pragma acc serial loop
  for (i = 0; i < N; i++) { t = a[i]; b[i] = t * t; }
#pragma acc kernels loop independent
  for (i = 0; i < N; i++) { t = a[i]; b[i] = t * t; }
}
`;
    const got = await findings(src);
    expect(codes(got)).toEqual(['shared-scalar-write:t@13']);
    // In kernels a scalar is copied (OpenACC 3.3 §2.6.2): private would change what the host sees, so no fix.
    expect(got[0].fixes).toBeUndefined();
  });

  it('host `omp parallel for` is not an offloaded loop: not checked (documented decision)', async () => {
    const src = `${prelude}void f(void) {
  double t; int i;
#pragma omp parallel for
  for (i = 0; i < N; i++) { t = a[i]; b[i] = t * t; }
}
`;
    expect(codes(await findings(src))).toEqual([]);
  });

  it('OpenMP: target with an inner parallel for; a private clause on the target construct does not reach its threads', async () => {
    const src = `${prelude}void f(void) {
  double t; int i;
#pragma omp target map(to: a) map(from: b)
  {
#pragma omp parallel for
    for (i = 0; i < N; i++) { t = a[i]; b[i] = t * t; }
  }
#pragma omp target teams distribute parallel for map(to: a) map(from: b) lastprivate(t)
  for (i = 0; i < N; i++) { t = a[i]; b[i] = t * t; }
#pragma omp target teams distribute parallel for simd map(to: a) map(from: b) default(firstprivate)
  for (i = 0; i < N; i++) { t = a[i]; b[i] = t * t; }
}
`;
    const got = await findings(src);
    expect(codes(got)).toEqual(['shared-scalar-write:t@9']);
    expect(got[0].message).toContain('OpenMP 5.2 §5.1.1');
    expect(got[0].fixes?.[0].title).toBe('Add private(t) to this OpenMP directive');
  });

  it('declared inside the construct but outside the parallel loop: shared by its threads', async () => {
    const src = `#define N 64
double A[N][N], B[N][N];
void f(void) {
#pragma omp target teams distribute map(to: A) map(from: B)
  for (int j = 0; j < N; j++) {
    double t;
#pragma omp parallel for
    for (int i = 0; i < N; i++) { t = A[j][i]; B[j][i] = t * t; }
  }
}
`;
    const got = await findings(src);
    expect(codes(got)).toEqual(['shared-scalar-write:t@8']);
    expect(got[0].message).toContain('declared inside the construct but outside this loop');
    // The fix goes on the loop that races (the parallel for), not on the distribute loop.
    expect(got[0].fixes?.[0].edits[0].range.start.line).toBe(6);
  });

  it('Fortran fixed form: no fix that would push the directive past column 72', async () => {
    const src = `      subroutine s(a, b, n)
      integer n, i
      real*8 a(n), b(n), tmpvariable
!$acc parallel loop copyin(a) copyout(b) present_or_copy(n)
      do i = 1, n
        tmpvariable = a(i)
        b(i) = tmpvariable
      end do
      end
`;
    const got = await findings(src, 's.f');
    expect(codes(got)).toEqual(['shared-scalar-write:tmpvariable@6']);
    // 58 columns + ' private(tmpvariable)' (21) = 79 > 72.
    expect(got[0].fixes).toBeUndefined();
  });

  it('OpenMP: a simd-only inner loop uses the copy of the thread that runs it', async () => {
    const src = `#define N 64
double A[N][N], B[N][N];
void f(void) {
  double t;
#pragma omp target teams distribute parallel for private(t) map(to: A) map(from: B)
  for (int j = 0; j < N; j++) {
#pragma omp simd
    for (int i = 0; i < N; i++) { t = A[j][i]; B[j][i] = t * t; }
  }
}
`;
    expect(codes(await findings(src))).toEqual([]);
  });

  it('a value carried from one iteration to the next is reported without a private fix (it would change the result)', async () => {
    const src = `${prelude}void f(void) {
  double prev = 0.0; int i;
#pragma acc parallel loop
  for (i = 0; i < N; i++) { b[i] = a[i] - prev; prev = a[i]; }
}
`;
    const got = await findings(src);
    expect(codes(got)).toEqual(['shared-scalar-write:prev@7']);
    expect(got[0].message).toContain('reads the value another iteration left');
    expect(got[0].fixes).toBeUndefined();
  });

  it('a scalar named in a data clause keeps its value for the host: reported, with no private fix', async () => {
    const src = `${prelude}void f(void) {
  int last = -1, i;
#pragma acc parallel loop copy(last)
  for (i = 0; i < N; i++) { b[i] = a[i]; last = i; }
}
`;
    const got = await findings(src);
    expect(codes(got)).toEqual(['shared-scalar-write:last@7']);
    expect(got[0].fixes).toBeUndefined();
  });

  it('a scratch value reset then accumulated in an inner loop is shared-scalar-write, not missing-reduction', async () => {
    const src = `${prelude}void f(void) {
  double sum; int i, k;
#pragma acc parallel loop
  for (i = 0; i < 8; i++) {
    sum = 0.0;
    for (k = 0; k < 8; k++) sum += a[i * 8 + k];
    b[i] = sum;
  }
}
`;
    expect(codes(await findings(src))).toEqual(['shared-scalar-write:sum@8']);
  });

  it('declared inside the loop, a loop variable, a struct member or a pointer target: not a shared scalar', async () => {
    const src = `${prelude}struct p { double x; };
void f(double *q) {
  struct p w; int i;
#pragma acc parallel loop
  for (i = 0; i < N; i++) { double t = a[i]; w.x = t; q[i] = t; b[i] = t; }
}
`;
    expect(codes(await findings(src))).toEqual([]);
  });

  it('Fortran: names compare without case, and OpenMP target loops are checked too', async () => {
    const src = `program p
  implicit none
  integer, parameter :: n = 16
  real(8) :: u(n), v(n), T, w
  integer :: i
  u = 1.0d0
  !$omp target teams distribute parallel do private(t) map(to: u) map(from: v)
  do i = 1, n
    T = u(i) * 2.0d0
    v(i) = t
  end do
  !$omp target teams distribute parallel do map(to: u) map(from: v)
  do i = 1, n
    W = u(i) * 2.0d0
    v(i) = w
  end do
  print *, v(1)
end program p
`;
    const got = await findings(src, 'p.f90');
    expect(codes(got).map((c) => c.toLowerCase())).toEqual(['shared-scalar-write:w@14']);
  });
});

describe('missing-private: local arrays as per-iteration scratch', () => {
  it('privatised, declared inside, or indexed by the parallel loop: none; read after the loop: no fix', async () => {
    const src = `${prelude}#include <stdio.h>
void f(void) {
  double tmp[2], row[N], keep[2]; int i;
#pragma acc parallel loop private(tmp)
  for (i = 0; i < N; i++) { tmp[0] = a[i]; tmp[1] = 2.0 * a[i]; b[i] = tmp[0] + tmp[1]; }
#pragma acc parallel loop
  for (i = 0; i < N; i++) { double loc[2]; loc[0] = a[i]; b[i] = loc[0]; row[i] = b[i]; }
#pragma acc parallel loop
  for (i = 0; i < N; i++) { keep[0] = a[i]; b[i] = keep[0]; }
  printf("%f %f\\n", row[0], keep[0]);
}
`;
    const got = await findings(src);
    expect(codes(got)).toEqual(['missing-private:keep@12']);
    expect(got[0].fixes).toBeUndefined();
  });
});

describe('loop-carried-dependence within the loop bounds', () => {
  it('every iteration writing one element is an output dependence; a guarded write is not guessed at', async () => {
    const src = `${prelude}void f(double *c) {
  int i;
#pragma acc parallel loop
  for (i = 0; i < N; i++) c[0] = a[i];
#pragma acc parallel loop
  for (i = 0; i < N; i++) if (i == 3) c[1] = a[i];
}
`;
    const got = await findings(src);
    expect(codes(got)).toEqual(['loop-carried-dependence:c@7']);
    expect(got[0].message).toContain('output dependence at distance 1');
  });

  it('a step of 2 writing a[i] and a[i + 1] touches each element once; a[i + 2] = a[i] is carried (distances in values, steps in iterations)', async () => {
    const src = `${prelude}void f(void) {
  int i;
#pragma acc parallel loop
  for (i = 0; i < N; i += 2) { a[i] = b[i]; a[i + 1] = b[i + 1]; }
#pragma acc parallel loop
  for (i = 0; i < N - 2; i += 2) { a[i + 2] = a[i] + 1.0; }
}
`;
    const got = await findings(src);
    expect(codes(got)).toEqual(['loop-carried-dependence:a@9']);
    expect(got[0].message).toContain('flow dependence at distance 2');
  });

  it('3-D: a plane index that runs one past the plane overlaps the next plane; one that fits does not', async () => {
    const src = `#define NX 4
#define NY 3
#define NZ 5
double u[NZ * NY * NX + NX * NY];
void f(void) {
  int i, j, k;
#pragma acc parallel loop collapse(3)
  for (k = 0; k < NZ; k++)
    for (j = 0; j <= NY; j++)
      for (i = 0; i < NX; i++)
        u[k * NY * NX + j * NX + i] = 1.0;
#pragma acc parallel loop collapse(3)
  for (k = 0; k < NZ; k++)
    for (j = 0; j < NY; j++)
      for (i = 0; i < NX; i++)
        u[k * NY * NX + j * NX + i] = 2.0;
}
`;
    const got = await findings(src);
    expect(codes(got)).toEqual(['loop-carried-dependence:u@11']);
    // (k, j, i) = (k, NY, i) and (k + 1, 0, i): 12*1 + 4*(-3) + 0 = 0, |-3| <= 3 (hand count).
    expect(got[0].message).toContain('differ by (+1, -3, +0)');
  });
});

describe('distances (Banerjee bounds, Wolfe 1996 ch. 5)', () => {
  const e = (t: string): S.Expr => S.parseExpr(t, 'c')!;
  const none = new Map<string, S.Expr>();

  it('numeric: a[8j + i], 0 <= i <= 8 meets at (1, -8); with i < 8 never', () => {
    const over = solveDistances({ coeffs: [e('8'), e('1')], trips: [e('6'), e('9')], target: e('0'), bindings: none }, new Set([0, 1]));
    expect(over.map((d) => d.vector)).toEqual([[1, -8]]);
    const apart = solveDistances({ coeffs: [e('8'), e('1')], trips: [e('6'), e('8')], target: e('0'), bindings: none }, new Set([0, 1]));
    expect(apart).toEqual([]);
  });

  it('numeric: a distinct pair u[8j + i] written, u[8j + i - 1] read, 1 <= i <= 6: distance 1 in i only', () => {
    // w.rest - x.rest = 0 - (-1) = 1: e_i = 1 (flow); e_j = ±1 would need e_i = 1 ∓ 8, beyond 5.
    const got = solveDistances({ coeffs: [e('8'), e('1')], trips: [e('6'), e('6')], target: e('1'), bindings: none }, new Set([0, 1]));
    expect(got.map((d) => [d.carrier, d.vector])).toEqual([[1, [0, 1]]]);
  });

  it('symbolic: proven for every nx, silent when the sizes are unrelated', () => {
    const over = solveDistances({ coeffs: [e('nx'), e('1')], trips: [e('ny'), e('nx + 1')], target: e('0'), bindings: none }, new Set([0]));
    expect(over.map((d) => d.shown)).toEqual([['1', '-nx']]);
    expect(over[0].symbolic).toBe(true);
    expect(solveDistances({ coeffs: [e('nx'), e('1')], trips: [e('ny'), e('nx')], target: e('0'), bindings: none }, new Set([0]))).toEqual([]);
    expect(solveDistances({ coeffs: [e('nx'), e('1')], trips: [e('ny'), e('mx + 1')], target: e('0'), bindings: none }, new Set([0]))).toEqual([]);
    // Bound sizes make it numeric.
    const bound = solveDistances({ coeffs: [e('nx'), e('1')], trips: [e('ny'), e('nx + 1')], target: e('0'), bindings: new Map([['nx', e('10')], ['ny', e('4')]]) }, new Set([0]));
    expect(bound.map((d) => d.vector)).toEqual([[1, -10]]);
  });

  it('non-negativity for sizes of at least 1', () => {
    expect(provablyNonNegative(e('nx - 1'))).toBe(true);
    expect(provablyNonNegative(e('nx*ny - nx'))).toBe(true);
    expect(provablyNonNegative(e('nx - 2'))).toBe(false);
    expect(provablyNonNegative(e('nx - mx'))).toBe(false);
  });
});
