/**
 * Dependences (issue 13): `proveParallel` on host loop nests, and the textbook dependence cases
 * of tests/fixtures/dependences, each confirmed at run time.
 *
 * Sources: Wolfe, *High Performance Compilers for Parallel Computing*, 1996 (W); Allen &
 * Kennedy, *Optimizing Compilers for Modern Architectures*, 2001 (AK). The cases are the
 * standard ones of both books; the code is our own.
 */
import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import * as S from '../server/src/core/symbolic';
import { proveParallel, type ParallelProof } from '../server/src/core/analysis/parallelProof';
import { collapseCount, isLoopDirective } from '../server/src/core/model/directives';
import type { LoopStmt } from '../server/src/core/model/program';
import { rangeWithin } from '../server/src/core/ranges';
import { ROOT, analyzeText } from './helpers';

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

// ---- textbook cases, confirmed at run time ------------------------------------------------------

const has = (cmd: string): boolean => {
  const r = spawnSync(cmd, ['--version'], { encoding: 'utf8' });
  return !r.error && r.status === 0;
};
const gcc = has('gcc');
const gfortran = has('gfortran');
if (!gcc) console.log('skipped: gcc not found, so the C textbook cases are not run');
if (!gfortran) console.log('skipped: gfortran not found, so the Fortran textbook cases are not run');

/**
 * The verdict each case must get, from the books: a dependence the tool reports (W ch. 5;
 * AK §2.2, §3.3) or none.
 */
const DEPENDENT = new Set(['recurrence', 'anti', 'output_all', 'output_mod', 'gauss_seidel']);
const INDEPENDENT = new Set(['gcd_pair', 'beyond_bounds', 'jacobi']);

/**
 * The fixture with the headers of every offloaded loop (the directive's loop and the loops its
 * collapse covers) rewritten to run forwards when REV is 0 and in reversed order when it is 1.
 * The rest of the program, directives included, is left as written; the host build ignores them.
 */
function reversible(text: string, loops: LoopStmt[], fortran: boolean): string {
  const lines = text.split('\n');
  for (const l of loops) {
    const at = l.keywordRange.start.line;
    const lo = S.toString(l.lower!);
    const hi = S.toString(l.upper!);
    const v = l.variable!;
    expect(S.constValue(l.step!), `step of the loop at line ${at + 1}`).toBe(1);
    if (fortran) {
      lines[at] = lines[at].replace(/do\s+\w+\s*=.*$/i, `do ${v} = merge(${hi}, ${lo}, REV == 1), merge(${lo}, ${hi}, REV == 1), merge(-1, 1, REV == 1)`);
    } else {
      lines[at] = lines[at].replace(/for\s*\(.*\)/, `for (int ${v} = REV ? (${hi}) : (${lo}); REV ? ${v} >= (${lo}) : ${v} <= (${hi}); ${v} += REV ? -1 : 1)`);
    }
  }
  return lines.join('\n');
}

const tmp = mkdtempSync(join(tmpdir(), 'ol-dep13-'));
let serial = 0;

/** Builds the host program (no offload flag: the directives are ignored) and returns checksum per case. */
function run(src: string, fortran: boolean, rev: number): Map<string, string> {
  const name = `p${serial++}`;
  const file = join(tmp, `${name}.${fortran ? 'f90' : 'c'}`);
  writeFileSync(file, src);
  const exe = join(tmp, name);
  const args = fortran
    ? ['-cpp', `-DREV=${rev}`, '-O0', file, '-o', exe, '-J', tmp]
    : [`-DREV=${rev}`, '-O0', '-std=c11', '-Wno-unknown-pragmas', file, '-o', exe];
  const c = spawnSync(fortran ? 'gfortran' : 'gcc', args, { cwd: tmp, encoding: 'utf8' });
  expect(c.stderr).toBe('');
  expect(c.status).toBe(0);
  const out = spawnSync(exe, [], { encoding: 'utf8', timeout: 60_000 });
  expect(out.status).toBe(0);
  return new Map(out.stdout.trim().split('\n').map((l) => l.trim().split(/\s+/) as [string, string]));
}

describe('textbook dependence cases: each reported dependence changes the result when the loop runs reversed, each loop called free does not', () => {
  const files = ['textbook_acc.c', 'textbook_omp.c', 'textbook_acc.f90', 'textbook_omp.f90'];
  for (const file of files) {
    const fortran = file.endsWith('.f90');
    it.skipIf(fortran ? !gfortran : !gcc)(file, async () => {
      const path = join(ROOT, 'tests', 'fixtures', 'dependences', file);
      const text = readFileSync(path, 'utf8');
      const a = await analyzeText(text, path);
      expect(a.internalErrors).toEqual([]);
      const offloaded = a.nests.map((r) => r.nest).filter((n) => n.offload);
      const loops: LoopStmt[] = [];
      for (const n of offloaded) {
        const d = n.root.directives.find(isLoopDirective) ?? n.offload!;
        let l: LoopStmt | undefined = n.root;
        for (let k = 0; k < collapseCount(d) && l; k++) {
          loops.push(l);
          l = l.body.find((s): s is LoopStmt => s.kind === 'loop');
        }
      }
      const src = reversible(text, loops, fortran);
      const forwards = run(src, fortran, 0);
      const reversed = run(src, fortran, 1);
      // The original program prints what the forward build prints (the rewrite changes no result).
      expect(run(text.replace(/^/, ''), fortran, 0)).toEqual(forwards);
      const seen: string[] = [];
      for (const n of offloaded) {
        const name = n.procedure.name.toLowerCase();
        seen.push(name);
        const reported = a.findings.some((f) => f.code === 'loop-carried-dependence' && rangeWithin(f.range, n.root.range));
        const same = forwards.get(name) === reversed.get(name);
        expect(forwards.get(name), `${name} printed`).toBeDefined();
        // A reported dependence is real: the reversed order gives another result.
        if (reported) expect(same, `${name}: reported, so the reversed run must differ`).toBe(false);
        // A loop reported free gives identical results both ways.
        else expect(same, `${name}: no dependence reported, so the reversed run must agree`).toBe(true);
        // The book's verdict (W ch. 5; AK §2.2, §3.3).
        expect(reported, name).toBe(DEPENDENT.has(name));
        if (!reported) expect(INDEPENDENT.has(name), name).toBe(true);
        // The host proof agrees: a nest it calls parallel runs the same both ways.
        const proof = proveParallel(n, a.model);
        expect(proof.parallel, `${name}: proveParallel`).toBe(!reported);
        if (proof.parallel) expect(same).toBe(true);
      }
      expect(seen.length).toBeGreaterThanOrEqual(fortran ? 6 : 8);
    });
  }
});
