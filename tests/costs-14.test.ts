/**
 * Costs (issue 14): Fortran `**` as multiplications, clamped neighbours as neighbours. The
 * hand-worked fixtures are tests/fixtures/cost/power.f90, clamped.f90 and clamped.c with their
 * `.expected.json` (checked by tests/fixtures.test.ts); here the compilers accept and run them,
 * and the rules are checked one case at a time.
 */
import { spawnSync } from 'node:child_process';
import { mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { integerPowerMultiplications } from '../server/src/core/cost/flops';
import { fileReport } from '../server/src/core/report';
import { ROOT, analyzeText } from './helpers';

interface Loop { line: number; flopsPerIteration: number; bytesPerIteration: { device: number; host: number }; footprint: { array: string; radius: number[]; irregular: boolean }[] }

async function loops(text: string, path: string): Promise<{ loops: Loop[]; races: string[] }> {
  const a = await analyzeText(text, path);
  expect(a.internalErrors).toEqual([]);
  const r = fileReport(a) as unknown as { loops: Loop[]; findings: { code: string; line: number }[] };
  return { loops: r.loops, races: r.findings.filter((f) => f.code === 'loop-carried-dependence').map((f) => `${f.code}@${f.line}`) };
}

describe('x**n by repeated squaring', () => {
  // Common practice (compilers expand a whole power by squaring): floor(log2 n) + popcount(n) - 1.
  it.each([
    [0, 0], [1, 0], [2, 1], [3, 2], [4, 2], [5, 3], [6, 3], [7, 4], [8, 3], [15, 6], [16, 4],
  ])('x**%i costs %i multiplications', (n, m) => {
    expect(integerPowerMultiplications(n)).toBe(m);
  });

  it('counts each power in a Fortran statement by its exponent', async () => {
    const src = [
      'subroutine p(a, b, n, m)',
      '  integer :: n, i, m',
      '  real(8) :: a(n), b(n)',
      '  do i = 1, n',
      '    b(i) = a(i)**5 + a(i)**(-1) + a(i)**0.5d0 + 2.0d0**3 + real(i**m, 8)',
      '  end do',
      'end subroutine p',
    ].join('\n');
    const { loops: [l] } = await loops(src, 'p.f90');
    // a**5: 3 multiplications; a**(-1): 1/a, 1 division; a**0.5d0: pow, 40 (this tool's table);
    // 2.0d0**3 is folded by the compiler (0); i**m is an integer power (0); real() 0; the 4 adds
    // joining the five terms count one each.
    expect(l.flopsPerIteration).toBe(3 + 1 + 40 + 4);
  });

  it('keeps C pow at the pow weight, as Fortran real exponents', async () => {
    const src = '#include <math.h>\nvoid f(int n, const double *a, double *b) {\n  for (int i = 0; i < n; i++) b[i] = pow(a[i], 2.0);\n}\n';
    const { loops: [l] } = await loops(src, 'f.c');
    // docs/cost-model.md: pow counts 40 (from memory), whatever its exponent.
    expect(l.flopsPerIteration).toBe(40);
  });
});

describe('clamped neighbours', () => {
  const c = (subscript: string): string => [
    '#define N 1000',
    '#define MIN(a, b) ((a) < (b) ? (a) : (b))',
    '#define MAX(a, b) ((a) > (b) ? (a) : (b))',
    'void f(const double *restrict u, double *restrict v) {',
    '  #pragma acc parallel loop copyin(u[0:N]) copyout(v[0:N])',
    `  for (int i = 0; i < N; i++) v[i] = u[i] + u[${subscript}];`,
    '}',
  ].join('\n');

  // Each of these reads u[i+1] (or u[i-1]) except at the edge: one stream of u, radius 1
  // (the STREAM convention, docs/cost-model.md): 8 (u) + 8 (v) = 16 device bytes.
  it.each([
    'min(i + 1, N - 1)', 'MIN(i + 1, N - 1)', 'MAX(i - 1, 0)', 'i + 1 < N ? i + 1 : N - 1', 'i < N - 1 ? i + 1 : N - 1',
    'i > 0 ? i - 1 : 0', 'i >= 1 ? i - 1 : 0', '0 > i - 1 ? 0 : i - 1', 'N - 1 < i + 1 ? N - 1 : i + 1',
  ])('u[%s] is a neighbour', async (sub) => {
    const { loops: [l], races } = await loops(c(sub), 'f.c');
    const u = l.footprint.find((f) => f.array === 'u')!;
    expect(u.irregular).toBe(false);
    expect(u.radius).toEqual([1]);
    expect(l.bytesPerIteration.device).toBe(16);
    expect(races).toEqual([]);
  });

  // Not clamps: the test does not decide which arm is smaller, or the arm wraps around.
  it.each(['i + 1 < N ? i + 1 : 0', 'i > 0 ? i + 1 : 0', '(i + 1) % N'])('u[%s] stays irregular', async (sub) => {
    const { loops: [l] } = await loops(c(sub), 'f.c');
    expect(l.footprint.find((f) => f.array === 'u')!.irregular).toBe(true);
  });

  const fortran = (body: string): string => [
    'subroutine s(h, hn, n)',
    '  integer :: n, i',
    '  real(8) :: h(n), hn(n)',
    '  !$acc parallel loop',
    '  do i = 1, n',
    `    ${body}`,
    '  end do',
    'end subroutine s',
  ].join('\n');

  it('a Jacobi update through clamps has no race', async () => {
    const { races } = await loops(fortran('hn(i) = 0.5d0 * (h(min(i + 1, n)) + h(max(i - 1, 1)))'), 's.f90');
    expect(races).toEqual([]);
  });

  // In place, iteration i reads h(i+1) that iteration i+1 writes (an anti dependence) and h(i-1)
  // that iteration i-1 writes (a flow dependence), both at distance 1 (Allen & Kennedy 2001),
  // clamped or not: one finding per reference.
  it('an in-place update through clamps is the race it is', async () => {
    const { races } = await loops(fortran('h(i) = 0.5d0 * (h(min(i + 1, n)) + h(max(i - 1, 1)))'), 's.f90');
    expect(races).toEqual(['loop-carried-dependence@6', 'loop-carried-dependence@6']);
  });

  it('a clamped write stays irregular (only reads are neighbours)', async () => {
    const { loops: [l] } = await loops(fortran('hn(min(i + 1, n)) = h(i)'), 's.f90');
    expect(l.footprint.find((f) => f.array === 'hn')!.irregular).toBe(true);
  });
});

const tmp = mkdtempSync(join(tmpdir(), 'ol-costs14-'));
const have = (cmd: string): boolean => spawnSync(cmd, ['--version']).status === 0;
const gfortran = have('gfortran');
const gcc = have('gcc');
if (!gfortran) console.log('skipped: gfortran not found, so the Fortran cost fixtures are not compiled');
if (!gcc) console.log('skipped: gcc not found, so the C cost fixture is not compiled');

describe('the hand-worked cost fixtures compile and run', () => {
  it.each([
    ['power.f90', 'gfortran', gfortran],
    ['clamped.f90', 'gfortran', gfortran],
    ['clamped.c', 'gcc', gcc],
  ])('%s with %s -fopenacc', (file, cc, ok) => {
    if (!ok) return;
    const exe = join(tmp, file.replace('.', '_'));
    const args = ['-O1', '-fopenacc', ...(cc === 'gfortran' ? [`-J${tmp}`] : ['-Wall', '-Werror']), join(ROOT, 'tests/fixtures/cost', file), '-o', exe];
    const b = spawnSync(cc, args, { encoding: 'utf8' });
    expect(b.status, b.stderr).toBe(0);
    const r = spawnSync(exe, [], { encoding: 'utf8', timeout: 60_000 });
    expect(r.status, r.stderr).toBe(0);
    expect(r.stdout.trim()).toMatch(/\d\.\d+[eE][-+]\d+/);
  });
});

describe('names as portable codes spell them', () => {
  it('a math wrapper in the code\'s own namespace weighs as the function it is named after, and is not listed as unknown', async () => {
    const { readFileSync } = await import('node:fs');
    const file = join(ROOT, 'tests/fixtures/cost/qualifier_macros.cpp');
    const a = await analyzeText(readFileSync(file, 'utf8'), file, { n: 1_000_000 });
    expect(a.notUnderstood.filter((x) => x.kind === 'call')).toEqual([]);
    // The RESTRICT macro does not hide the element type: float, 4 bytes per element.
    expect(a.nests[0].cost.footprints.map((f) => f.elementBytes)).toEqual([4, 4]);
  });
});
