/**
 * Index locals (issue 10): integer scalars that name an element are substituted into later
 * subscripts (server/src/core/model/indexLocals.ts). The fixtures under
 * tests/fixtures/index-locals/ carry the hand-counted figures (fixtures.test.ts checks them);
 * here every fixture program is compiled and run, and the pass's rules are checked on the model.
 */
import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, readdirSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import * as S from '../server/src/core/symbolic';
import { buildModel } from '../server/src/core/analyze';
import { substituteIndexLocals } from '../server/src/core/model/indexLocals';
import type { ArrayAccess, ProgramModel } from '../server/src/core/model/program';
import { accessesOfStatement, walkStatements } from '../server/src/core/model/values';
import { languageOfPath } from '../server/src/core/language';
import { analyzeText, grammarsForTests } from './helpers';

const FIXTURES = join(__dirname, 'fixtures', 'index-locals');

// ---- the fixture programs compile and run ------------------------------------------------

const compilers = {
  c: 'gcc',
  cpp: 'g++',
  fortran: 'gfortran',
} as const;

function have(cmd: string): boolean {
  const r = spawnSync(cmd, ['--version'], { encoding: 'utf8' });
  return !r.error && r.status === 0;
}

const programs = readdirSync(FIXTURES).filter((f) => /\.(c|cpp|f90)$/.test(f)).sort();
const available = new Map(Object.values(compilers).map((c) => [c, have(c)]));
for (const [cmd, ok] of available) {
  if (!ok) console.log(`skipped: ${cmd} not found, so the index-locals fixtures it builds are not compiled`);
}

let workDir: string | undefined;
afterAll(() => {
  if (workDir) rmSync(workDir, { recursive: true, force: true });
});

describe('index-locals fixture programs', () => {
  for (const file of programs) {
    const lang = languageOfPath(file) ?? 'c';
    const cc = compilers[lang === 'fortran' ? 'fortran' : lang === 'cpp' ? 'cpp' : 'c'];
    it.skipIf(!available.get(cc))(`${file} compiles with ${cc} and runs`, () => {
      workDir ??= mkdtempSync(join(tmpdir(), 'offload-ledger-index-locals-'));
      const src = join(FIXTURES, file);
      const exe = join(workDir, file.replace(/\./g, '_'));
      // OpenMP target programs build with -fopenmp, the others with -fopenacc (host fallback without a GPU).
      const model = /omp\s+target/.test(readFileSync(src, 'utf8')) ? '-fopenmp' : '-fopenacc';
      const std = lang === 'fortran' ? [] : lang === 'cpp' ? ['-std=c++17'] : ['-std=c11'];
      const args = [model, '-O2', '-Wall', '-Werror', ...std, src, '-o', exe, ...(lang === 'fortran' ? [] : ['-lm'])];
      const built = spawnSync(cc, args, { cwd: workDir, encoding: 'utf8', timeout: 60_000 });
      expect(built.status, `${cc} ${args.join(' ')}\n${built.stderr}`).toBe(0);
      const run = spawnSync(exe, [], { encoding: 'utf8', timeout: 60_000, env: { ...process.env, OMP_NUM_THREADS: '2' } });
      expect(run.status, `${file}\n${run.stderr}`).toBe(0);
      // Every program prints a finite checksum of its result.
      expect(run.stdout).toMatch(/checksum\s+[-+]?\d\.\d+[eE][-+]\d+/);
    });
  }
});

// ---- the pass on the model --------------------------------------------------------------

async function model(text: string, path = 't.c'): Promise<ProgramModel> {
  const g = await grammarsForTests();
  return buildModel({ path, text, language: languageOfPath(path) ?? 'c' }, g);
}

/** Accesses to `array` in the model, in statement order. */
function accesses(m: ProgramModel, array: string): ArrayAccess[] {
  const out: ArrayAccess[] = [];
  for (const p of m.procedures) walkStatements(p.body, (s) => { out.push(...accessesOfStatement(s).filter((a) => a.array === array)); });
  return out;
}

const sym = (a: ArrayAccess, k = 0): string | undefined => (a.subscripts[k] ? S.toString(a.subscripts[k]!) : undefined);

describe('index-locals pass', () => {
  it('substitutes a local linear index and its neighbours', async () => {
    const m = substituteIndexLocals(await model(`
#define NX 64
#define NY 32
#define IDX(i,j,k) (((k)*NY + (j))*NX + (i))
void f(const double *in, double *out) {
  for (int k = 1; k < 7; k++)
    for (int j = 1; j < NY - 1; j++)
      for (int i = 1; i < NX - 1; i++) {
        long c = IDX(i, j, k);
        out[c] = in[c - 1] + in[c + NX*NY];
      }
}`));
    // Hand expansion of IDX(i,j,k) = (k*NY + j)*NX + i.
    expect(sym(accesses(m, 'out')[0])).toBe(S.toString(S.parseExpr('k*NY*NX + j*NX + i', 'c')!));
    expect(sym(accesses(m, 'in')[0])).toBe(S.toString(S.parseExpr('k*NY*NX + j*NX + i - 1', 'c')!));
    expect(sym(accesses(m, 'in')[1])).toBe(S.toString(S.parseExpr('k*NY*NX + j*NX + i + NX*NY', 'c')!));
    // The text shows the substituted form too (the race messages quote it).
    expect(accesses(m, 'in')[0].subscriptText[0]).toContain('k');
  });

  it('follows a chain of locals across loop levels', async () => {
    const m = substituteIndexLocals(await model(`
void f(int n, const float *a, float *b) {
  int jk, c;
  for (int k = 0; k < n; k++) {
    const int kk = k * n * n;
    for (int j = 0; j < n; j++) {
      jk = kk + j * n;
      for (int i = 0; i < n; i++) {
        c = jk + i;
        b[c] = a[c];
      }
    }
  }
}`));
    // Hand expansion: c = k*n*n + j*n + i.
    expect(S.equals(accesses(m, 'b')[0].subscripts[0]!, S.parseExpr('k*n*n + j*n + i', 'c')!)).toBe(true);
  });

  it('substitutes a Fortran local linear index', async () => {
    const m = substituteIndexLocals(await model(`
subroutine s(nx, ny, a, b)
  integer :: nx, ny, i, j, ic
  real(8) :: a(nx*ny), b(nx*ny)
  do j = 2, ny - 1
    do i = 2, nx - 1
      ic = i + (j - 1) * nx
      b(ic) = a(ic + nx)
    end do
  end do
end subroutine s
`, 't.f90'));
    // Hand expansion: ic + nx = i + j*nx.
    expect(S.equals(accesses(m, 'a')[0].subscripts[0]!, S.parseExpr('i + j*nx', 'c')!)).toBe(true);
  });

  it('does not substitute a local assigned twice, in a branch, before its use, by address, or of floating type', async () => {
    const m = substituteIndexLocals(await model(`
void g(int *p);
void f(int n, double *a, const double *b, const int *idx) {
  int c, r = 0;
  for (int i = 0; i < n; i++) {     /* assigned twice */
    c = i; a[c] = 1.0; c = i + 1; a[c] = 2.0;
  }
  for (int i = 0; i < n; i++) {     /* in a branch */
    if (i > 3) c = i; else c = 0;
    a[c] += b[i];
  }
  for (int i = 0; i < n; i++) {     /* read before it is assigned: the previous iteration's value */
    a[c] = b[i]; c = i;
  }
  for (int j = 0; j < n; j++) {     /* read in an inner loop before it is assigned */
    for (int i = 0; i < n; i++) a[r + i] = b[i];
    r = j * n;
  }
  for (int i = 0; i < n; i++) {     /* its address is taken */
    c = i; g(&c); a[c] = 3.0;
  }
  for (int i = 0; i < n; i++) {     /* not integer arithmetic */
    c = idx[i]; a[c] = b[c];
  }
  for (int i = 0; i < n; i++) {     /* floating type */
    double x = i * 0.5; a[(int)x] = 4.0;
  }
}`));
    // Each of these subscripts varies with the loop, so it is left unreadable (irregular), never a loop invariant.
    for (const a of accesses(m, 'a')) expect(a.subscripts[0], `a[${a.subscriptText[0]}]`).toBeUndefined();
  });

  it('keeps a local of a time loop as a name inside the nests it runs', async () => {
    const m = substituteIndexLocals(await model(`
#define N 1000
#define NS 4
static double p[N], q[N];
static int src[NS];
void run(int steps) {
  for (int t = 0; t < steps; t++) {
    int s = src[t % NS];
#pragma acc parallel loop
    for (int i = 0; i < N; i++) q[i] = p[i] + p[s];
#pragma acc parallel loop
    for (int i = 0; i < N; i++) p[i] = q[i];
    p[s] += 1.0;
  }
}`));
    // s changes once per step, so within each step's nests it is an invariant (one element of p).
    for (const a of accesses(m, 'p').filter((x) => x.subscriptText[0] === 's')) expect(sym(a)).toBe('s');
  });

  it('leaves the input model as it was and shares unchanged parts', async () => {
    const before = await model(`
void f(int n, double *a) {
  for (int i = 0; i < n; i++) { int c = i + 1; a[c] = 0.0; }
}
void g(int n, double *a) { for (int i = 0; i < n; i++) a[i] = 1.0; }`);
    const text = (m: ProgramModel): string => JSON.stringify(m.procedures.map((p) => p.body), (_k, v) => (typeof v === 'bigint' ? String(v) : v));
    const snapshot = text(before);
    const after = substituteIndexLocals(before);
    expect(text(before)).toBe(snapshot);
    expect(after.procedures[1]).toBe(before.procedures[1]);
    expect(sym(accesses(after, 'a')[0])).toBe('i + 1');
    // A model without index locals comes back as the same object.
    expect(substituteIndexLocals(after)).toBe(after);
  });
});

describe('index locals reach the ledger', () => {
  it('bytes per iteration of a 7-point stencil through a local are the compulsory 56, not a trip-count fraction', async () => {
    const a = await analyzeText(`
#define NX 64
#define NY 64
#define NZ 64
static double in[NX*NY*NZ], out[NX*NY*NZ], w[NX*NY*NZ], x[NX*NY*NZ], y[NX*NY*NZ], z[NX*NY*NZ], v[NX*NY*NZ];
void f(void) {
  long c;
  for (int k = 1; k < NZ - 1; k++)
    for (int j = 1; j < NY - 1; j++)
      for (int i = 1; i < NX - 1; i++) {
        c = (k*NY + j)*NX + i;
        out[c] = in[c-1] + in[c+1] + w[c] + x[c] + y[c] + z[c] + v[c];
      }
}`);
    expect(a.internalErrors).toEqual([]);
    // Hand count (STREAM convention): six arrays read once, one written, 8 bytes each = 56.
    expect(a.nests[0].cost.bytes.device).toBe(56);
  });

  it('a re-read covers only on straight-line code; an element written in one arm of a branch is read from memory', async () => {
    const a = await analyzeText(`
#define N 1000
static double a[N], b[N], c[N];
void f(int p) {
  for (int i = 0; i < N; i++) { b[i] = a[i]; c[i] = b[i] + 1.0; }
  for (int i = 0; i < N; i++) { if (p) b[i] = a[i]; c[i] = b[i] + 1.0; }
}`);
    // Hand count: read a + write b + write c = 24 (b[i] re-read after the write moves nothing);
    // in the second loop b[i] may not have been written, so its read counts: 32.
    expect(a.nests.map((n) => n.cost.bytes.device)).toEqual([24, 32]);
  });

  it('a pointwise read beside a write into a slice of a bigger array keeps radius 0', async () => {
    const a = await analyzeText(`
#define N 1000
static double a[N], hist[100 * N];
void f(int k) {
  for (int i = 0; i < N; i++) hist[k * N + i] = a[i];
}`);
    // Both accesses are pointwise (hand reading): the slice's base k*N is not a stencil offset.
    expect(a.nests[0].cost.footprints.map((f) => [f.array, f.radius])).toEqual([['hist', [0]], ['a', [0]]]);
  });

  it('std::max on integers is index arithmetic and weighs nothing; on doubles it weighs as fmax', async () => {
    const a = await analyzeText(`
#include <algorithm>
static int k[100];
static double x[100], y[100];
void f() {
  for (int i = 0; i < 100; i++) k[i] = std::max(i, 3) * 2;
  for (int i = 0; i < 100; i++) x[i] = std::max<double>(x[i], y[i]);
}`, 't.cpp');
    // This tool's flop table (docs/cost-model.md): integer arithmetic 0; max of doubles 1.
    expect(a.nests.map((n) => n.cost.flopsPerIteration)).toEqual([0, 1]);
  });
});

// C's grammar cannot tell `(i) + NX * j` from a cast of `+NX` to a type `i` times `j` without
// knowing whether `i` is a type (C11 §6.5.4: a cast is `( type-name ) cast-expression`), and
// tree-sitter's C grammar reads it as the cast. The front end parses again with those parentheses
// blanked when the name is used as a value and no typedef defines it
// (server/src/core/frontend/c/parenNames.ts).
describe('parenthesised names before a sign', () => {
  it('reads `(i) + NX * j` and `(i) - NX * (j - 1)` as arithmetic', async () => {
    const m = await model(`
#define NX 64
void f(const double *a, double *b) {
  for (int j = 1; j < 31; j++)
    for (int i = 1; i < NX - 1; i++)
      b[i + NX * j] = a[(i) + NX * j - 1] + a[(i) /* west */ - NX * (j - 1)];
}`);
    const reads = accesses(m, 'a').map((x) => x.subscripts[0]!);
    // Hand expansion of each subscript.
    expect(S.equals(reads[0], S.parseExpr('i + NX*j - 1', 'c')!)).toBe(true);
    expect(S.equals(reads[1], S.parseExpr('i - NX*j + NX', 'c')!)).toBe(true);
  });

  it('keeps the cast when the name is a typedef', async () => {
    const m = await model(`
typedef double real_t;
void f(int n, double *b, const double *k) {
  for (int i = 0; i < n; i++)
    b[i] = (real_t) + k[i] * 2.0;
}`);
    // Read as a cast: the only accesses are b and k, and no scalar named real_t is read.
    expect(accesses(m, 'k').map((x) => sym(x))).toEqual(['i']);
    expect(JSON.stringify(m.procedures[0].body, (_k, v: unknown) => (typeof v === 'bigint' ? String(v) : v))).not.toMatch(/"name":"real_t"/);
  });
});
