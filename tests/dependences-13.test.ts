/**
 * Dependences (issue 13): `proveParallel` on host loop nests, and the textbook dependence cases
 * of tests/fixtures/dependences, each confirmed at run time.
 *
 * Sources: Wolfe, *High Performance Compilers for Parallel Computing*, 1996 (W); Allen &
 * Kennedy, *Optimizing Compilers for Modern Architectures*, 2001 (AK). The cases are the
 * standard ones of both books; the code is our own.
 */
import { describe, expect, it } from 'vitest';
import { proveParallel, type ParallelProof } from '../server/src/core/analysis/parallelProof';
import { analyzeText } from './helpers';

/** The proof of the nest whose root loop starts on `line` (1-based). */
async function proofAt(text: string, line: number, path = 'test.c'): Promise<ParallelProof> {
  const a = await analyzeText(text, path);
  expect(a.internalErrors).toEqual([]);
  const r = a.nests.find((n) => n.nest.root.keywordRange.start.line + 1 === line);
  expect(r, `a nest at line ${line}`).toBeDefined();
  return proveParallel(r!.nest, a.model);
}

const C_HEADER = `#include <math.h>
#define NX 256
#define NY 128
double u[NY][NX], un[NY][NX], a[4096], b[4096];
void unknown(double);
`;

describe('proveParallel on host loop nests', () => {
  it('a serial 5-point Jacobi sweep is parallel with collapse 2 (uniform distances 0 in the written array: AK §3.3.2 strong SIV)', async () => {
    const p = await proofAt(`${C_HEADER}void f(void) {
  for (int j = 1; j < NY - 1; j++)
    for (int i = 1; i < NX - 1; i++)
      un[j][i] = 0.25 * (u[j][i-1] + u[j][i+1] + u[j-1][i] + u[j+1][i]);
}
`, 7);
    expect(p).toMatchObject({ parallel: true, collapse: 2, reductions: [], privates: [] });
  });

  it('the same sweep in place (Gauss–Seidel) is not parallel: u[j-1][i] reads what iteration j-1 wrote (W ch. 5 flow dependence)', async () => {
    const p = await proofAt(`${C_HEADER}void f(void) {
  for (int j = 1; j < NY - 1; j++)
    for (int i = 1; i < NX - 1; i++)
      u[j][i] = 0.25 * (u[j][i-1] + u[j][i+1] + u[j-1][i] + u[j+1][i]);
}
`, 7);
    expect(p.parallel).toBe(false);
    expect(p.collapse).toBe(0);
    expect(p.reasons.join(' ')).toContain('u[j - 1][i]');
    expect(p.reasons.join(' ')).toContain('loop-carried dependence');
  });

  it('a sum is parallel with reduction + (and a max through `if (x > m) m = x` with max)', async () => {
    const text = `${C_HEADER}double f(int n, const double *p, const double *q) {
  double s = 0, m = 0;
  for (int i = 0; i < n; i++) s += p[i] * q[i];
  for (int i = 0; i < n; i++) { if (p[i] > m) m = p[i]; }
  return s + m;
}
`;
    expect(await proofAt(text, 8)).toMatchObject({ parallel: true, collapse: 1, reductions: [{ op: '+', variable: 's' }] });
    expect(await proofAt(text, 9)).toMatchObject({ parallel: true, reductions: [{ op: 'max', variable: 'm' }] });
  });

  it('a loop calling a function it cannot see is not parallel, and says which', async () => {
    const p = await proofAt(`${C_HEADER}void f(int n) {
  for (int i = 0; i < n; i++) unknown(a[i]);
}
`, 7);
    expect(p.parallel).toBe(false);
    expect(p.reasons.join(' ')).toContain('`unknown`');
  });

  it('pure math calls are fine; I/O and early exits are not', async () => {
    const text = `#include <stdio.h>
#include <math.h>
double a[100], b[100];
void f(void) {
  for (int i = 0; i < 100; i++) a[i] = sqrt(fabs(b[i])) + exp(b[i]);
  for (int i = 0; i < 100; i++) printf("%f\\n", a[i]);
  for (int i = 0; i < 100; i++) { if (b[i] < 0) break; a[i] = b[i]; }
}
`;
    expect((await proofAt(text, 5)).parallel).toBe(true);
    expect((await proofAt(text, 6)).reasons.join(' ')).toContain('printf');
    expect((await proofAt(text, 7)).reasons.join(' ')).toContain('break');
  });

  it('a temporary written before it is read is private; one read before it is written carries a value (not parallel)', async () => {
    const text = `double a[100], b[100];
void f(void) {
  double t, carry = 0;
  for (int i = 0; i < 100; i++) { t = b[i] * 2; a[i] = t * t; }
  for (int i = 0; i < 100; i++) { a[i] = carry; carry = b[i]; }
}
`;
    expect(await proofAt(text, 4)).toMatchObject({ parallel: true, privates: ['t'] });
    const carried = await proofAt(text, 5);
    expect(carried.parallel).toBe(false);
    expect(carried.reasons.join(' ')).toContain('`carry` is read before it is written');
  });

  it('a temporary whose last value is read after the loop is not made private (it would need lastprivate)', async () => {
    const p = await proofAt(`double a[100], b[100];
double f(void) {
  double t = 0;
  for (int i = 0; i < 100; i++) { t = b[i] * 2; a[i] = t; }
  return t;
}
`, 4);
    expect(p.parallel).toBe(false);
    expect(p.reasons.join(' ')).toContain('lastprivate');
  });

  it('linearised sweeps with unbound sizes: each row is proven apart for every nx >= 1 (Banerjee bounds, AK §3.3)', async () => {
    const text = `void f(int nx, int ny, const double *p, double *q, double *r) {
  for (int j = 1; j < ny - 1; j++)
    for (int i = 1; i < nx - 1; i++)
      q[j*nx + i] = 0.25 * (p[j*nx + i - 1] + p[j*nx + i + 1] + p[(j-1)*nx + i] + p[(j+1)*nx + i]);
  for (int j = 1; j < ny - 1; j++)
    for (int i = 1; i < nx - 1; i++)
      r[j*nx + i] = r[j*nx + i - 1] + 1.0;
}
`;
    expect(await proofAt(text, 2)).toMatchObject({ parallel: true, collapse: 2 });
    // A recurrence along i only: j is parallel, i is not (collapse 1, with the reason).
    const rows = await proofAt(text, 5);
    expect(rows).toMatchObject({ parallel: true, collapse: 1 });
    expect(rows.reasons.join(' ')).toContain('collapse stops above the `i` loop');
  });

  it('an inner accumulation into a[j] keeps j parallel and stops the collapse at i', async () => {
    const p = await proofAt(`double a[64], b[64][100];
void f(void) {
  for (int j = 0; j < 64; j++)
    for (int i = 0; i < 100; i++) a[j] += b[j][i];
}
`, 3);
    expect(p).toMatchObject({ parallel: true, collapse: 1 });
  });

  it('C: an inner loop variable declared outside the nest is listed as private when its loop is not collapsed', async () => {
    const p = await proofAt(`double a[64][100], b[64][100];
void f(void) {
  int i, j;
  for (j = 0; j < 64; j++) {
    a[j][0] = 0;
    for (i = 1; i < 100; i++) a[j][i] = a[j][i-1] + b[j][i];
  }
}
`, 4);
    expect(p).toMatchObject({ parallel: true, collapse: 1, privates: ['i'] });
  });

  it('triangular and non-perfect nests collapse only the outer loop', async () => {
    const text = `double a[64][64], s[64];
void f(void) {
  for (int i = 0; i < 64; i++)
    for (int j = 0; j <= i; j++) a[i][j] = i + j;
  for (int i = 0; i < 64; i++) {
    double t = s[i];
    for (int j = 0; j < 64; j++) a[i][j] = t * j;
  }
}
`;
    const tri = await proofAt(text, 3);
    expect(tri).toMatchObject({ parallel: true, collapse: 1 });
    expect(tri.reasons.join(' ')).toContain('depend on an outer loop variable');
    const imperfect = await proofAt(text, 5);
    expect(imperfect).toMatchObject({ parallel: true, collapse: 1 });
    expect(imperfect.reasons.join(' ')).toContain('not perfectly nested');
  });

  it('irregular writes and writes of one element by every iteration are not parallel (output dependences, W ch. 5)', async () => {
    const text = `double a[4096], b[4096];
int idx[4096];
void f(void) {
  for (int i = 0; i < 4096; i++) a[idx[i]] = b[i];
  for (int i = 0; i < 4096; i++) a[i % 2] = b[i];
  for (int i = 0; i < 4096; i++) a[0] = b[i];
}
`;
    for (const l of [4, 5, 6]) expect((await proofAt(text, l)).parallel, `line ${l}`).toBe(false);
  });

  it('Fortran: Jacobi parallel with collapse 2, sum and max reductions, write and exit keep loops on the host', async () => {
    const text = `subroutine sweep(n, m, u, un, s, mx)
  implicit none
  integer, intent(in) :: n, m
  real(8), intent(inout) :: u(n, m), un(n, m)
  real(8), intent(out) :: s, mx
  integer :: i, j
  do j = 2, m - 1
    do i = 2, n - 1
      un(i, j) = 0.25d0 * (u(i-1, j) + u(i+1, j) + u(i, j-1) + u(i, j+1))
    end do
  end do
  s = 0
  mx = 0
  do j = 1, m
    do i = 1, n
      s = s + u(i, j)
      mx = max(mx, abs(u(i, j)))
    end do
  end do
  do i = 1, n
    write(*,*) u(i, 1)
  end do
  do i = 2, n
    if (u(i, 1) < 0) exit
    u(i, 1) = u(i - 1, 1)
  end do
end subroutine
`;
    expect(await proofAt(text, 7, 't.f90')).toMatchObject({ parallel: true, collapse: 2 });
    expect(await proofAt(text, 14, 't.f90')).toMatchObject({ parallel: true, collapse: 2, reductions: [{ op: '+', variable: 's' }, { op: 'max', variable: 'mx' }] });
    expect((await proofAt(text, 20, 't.f90')).reasons.join(' ')).toContain('I/O');
    expect((await proofAt(text, 23, 't.f90')).reasons.join(' ')).toContain('exit');
  });
});
