/**
 * Floating-point operation counts. The convention (common practice, as in the STREAM and
 * roofline literature): each floating-point `+ - * /` is one flop; integer index arithmetic
 * never counts; an operation whose operands are all literals is folded by the compiler and
 * counts zero; a fused multiply-add `fma(a,b,c)` is two. Math library calls count by the table
 * below, which is this tool's documented convention (docs/cost-model.md), not a measurement.
 */
import type { ElementType, VExpr } from '../model/program';
import * as S from '../symbolic';
import { integerLiteral } from '../model/values';
import type { Scope } from './scope';

/**
 * Flop weight of math functions. sqrt and division-like calls count as one operation (the
 * convention of counting operations, not cycles); transcendental functions count as the
 * length of a typical polynomial evaluation, about 10 multiply-adds → 20 flops (from memory:
 * vector libm kernels evaluate degree ~8–12 polynomials after range reduction).
 */
const BASE_FLOPS: Readonly<Record<string, number>> = {
  sqrt: 1, cbrt: 20,
  fabs: 0, abs: 0, dabs: 0,
  fmin: 1, fmax: 1, min: 1, max: 1, amin1: 1, amax1: 1, dmin1: 1, dmax1: 1,
  fma: 2,
  exp: 20, dexp: 20, log: 20, dlog: 20, log10: 20, log2: 20,
  sin: 20, dsin: 20, cos: 20, dcos: 20, tan: 20,
  sinh: 20, cosh: 20, tanh: 20, atan: 20, atan2: 20, asin: 20, acos: 20,
  pow: 40, erf: 20,
  floor: 0, ceil: 0, round: 0, trunc: 0, copysign: 0, sign: 0,
  real: 0, dble: 0, float: 0, sngl: 0, int: 0, nint: 0,
};

/** C's float (`sqrtf`) and long double (`sqrtl`) variants of a C math function weigh as it does. */
const C_MATH = ['sqrt', 'cbrt', 'fabs', 'fmin', 'fmax', 'fma', 'exp', 'log', 'log10', 'log2', 'sin', 'cos', 'tan',
  'sinh', 'cosh', 'tanh', 'atan', 'atan2', 'asin', 'acos', 'pow', 'erf', 'floor', 'ceil', 'round', 'trunc', 'copysign'];

export const MATH_FLOPS: Readonly<Record<string, number>> = {
  ...BASE_FLOPS,
  ...Object.fromEntries(C_MATH.flatMap((f) => [[`${f}f`, BASE_FLOPS[f]], [`${f}l`, BASE_FLOPS[f]]])),
};

/**
 * Functions whose result has the type of their arguments (C `abs`, C++ `std::min`, Fortran `max`):
 * on integers they are index arithmetic and count nothing.
 */
const GENERIC = new Set(['abs', 'min', 'max']);

/**
 * The table's name for a call: lower case, without namespace qualifiers or template arguments,
 * so C++ `std::sqrt`, `std::max<double>`, and a code's own wrappers such as `prk::abs` or
 * `Kokkos::fabs` weigh as the C functions they are named after.
 */
export function mathName(name: string): string {
  return name.toLowerCase().replace(/<.*>$/, '').replace(/^(\w*::)+/, '');
}

export interface FlopCount {
  flops: number;
  /** Math functions met that the table does not list (counted as zero, named in the report). */
  unknownCalls: string[];
}

/** Whether an expression has a floating-point type (C usual arithmetic conversions, simplified). */
export function isFloatValue(e: VExpr, scope: Scope): boolean {
  return typeOfValue(e, scope)?.isFloat ?? false;
}

export function typeOfValue(e: VExpr, scope: Scope): ElementType | undefined {
  switch (e.kind) {
    case 'num':
      return e.isFloat ? { name: e.bytes === 4 ? 'float' : 'double', bytes: e.bytes ?? 8, isFloat: true } : undefined;
    case 'var':
      return scope.typeOf(e.name);
    case 'index':
      return scope.typeOf(e.access.array);
    case 'cast':
      return e.type;
    case 'unary':
      return ['!', '.not.'].includes(e.op) ? undefined : typeOfValue(e.operand, scope);
    case 'bin': {
      if (isComparison(e.op)) return undefined;
      const l = typeOfValue(e.left, scope);
      const r = typeOfValue(e.right, scope);
      if (l?.isFloat && r?.isFloat) return l.bytes >= r.bytes ? l : r;
      return l?.isFloat ? l : r?.isFloat ? r : l ?? r;
    }
    case 'cond': {
      const a = typeOfValue(e.then, scope);
      return a?.isFloat ? a : typeOfValue(e.else, scope);
    }
    case 'call': {
      const name = mathName(e.name);
      if (name in MATH_FLOPS && !['int', 'nint', 'floor', 'ceil'].includes(name)) {
        const args = e.args.map((a) => typeOfValue(a, scope)).filter((t): t is ElementType => !!t?.isFloat);
        if (GENERIC.has(name)) return args[0];
        return args[0] ?? { name: 'double', bytes: 8, isFloat: true };
      }
      return undefined;
    }
    default:
      return undefined;
  }
}

function isComparison(op: string): boolean {
  return ['<', '>', '<=', '>=', '==', '!=', '&&', '||', '.lt.', '.gt.', '.le.', '.ge.', '.eq.', '.ne.', '.and.', '.or.', '/='].includes(op.toLowerCase());
}

/** True when every leaf is a literal or a named floating constant, so the compiler folds it. */
function isConstantFolded(e: VExpr, scope: Scope): boolean {
  switch (e.kind) {
    case 'num': return true;
    case 'var': {
      const d = scope.lookup(e.name);
      return (!d && scope.typeOf(e.name) !== undefined) || (!!d && d.isConst && !d.isArray && d.init !== undefined);
    }
    case 'bin': return isConstantFolded(e.left, scope) && isConstantFolded(e.right, scope);
    case 'unary':
    case 'cast': return isConstantFolded(e.operand, scope);
    default: return false;
  }
}

export function countFlops(e: VExpr, scope: Scope, acc: FlopCount = { flops: 0, unknownCalls: [] }): FlopCount {
  if (isConstantFolded(e, scope)) return acc;
  switch (e.kind) {
    case 'bin':
      if (e.op === '**') return powerFlops(e.left, e.right, scope, acc);
      countFlops(e.left, scope, acc);
      countFlops(e.right, scope, acc);
      if (['+', '-', '*', '/'].includes(e.op) && isFloatValue(e, scope)) acc.flops += 1;
      return acc;
    case 'unary':
    case 'cast':
      return countFlops(e.operand, scope, acc);
    case 'cond':
      countFlops(e.test, scope, acc);
      // Both branches are typically evaluated by vectorised code (a select), so both count.
      countFlops(e.then, scope, acc);
      countFlops(e.else, scope, acc);
      return acc;
    case 'index':
      // Subscripts are integer index arithmetic; reads inside them (a[idx[i]]) cost bytes, not flops.
      return acc;
    case 'call': {
      for (const a of e.args) countFlops(a, scope, acc);
      const name = mathName(e.name);
      const w = MATH_FLOPS[name];
      // A generic function on integers (`std::max(i, 0)`) is index arithmetic.
      if (w !== undefined) acc.flops += GENERIC.has(name) && !isFloatValue(e, scope) ? 0 : w;
      else if (isFloatValue(e, scope) || e.args.some((a) => isFloatValue(a, scope))) acc.unknownCalls.push(e.name);
      return acc;
    }
    default:
      return acc;
  }
}

/**
 * Multiplications that evaluate x**n for a whole n ≥ 0 by repeated squaring (common practice:
 * compilers expand an integer power this way, gfortran through `__builtin_powi`):
 * floor(log2 n) squarings plus popcount(n) − 1 multiplications of partial products. x**0 and
 * x**1 cost nothing, x**2 one, x**3 two, x**4 two, x**5 three, x**8 three.
 */
export function integerPowerMultiplications(n: number): number {
  if (!Number.isSafeInteger(n) || n < 0) throw new RangeError(`not a whole exponent: ${n}`);
  if (n <= 1) return 0;
  let squarings = 0;
  let ones = 0;
  for (let k = n; k > 0; k = Math.floor(k / 2)) {
    if (k % 2 === 1) ones++;
    if (k > 1) squarings++;
  }
  return squarings + ones - 1;
}

/**
 * The whole-number value of an exponent the compiler knows: an integer literal (`2`, `2_8`), a
 * sign before one (`-2`, `(-2)`), or an integer named constant with a literal value (Fortran
 * `integer, parameter :: p = 3`, C `const int p = 3`). A real literal (`2.0`) is not one: the
 * standard evaluates it as a real power.
 */
function wholeExponent(e: VExpr, scope: Scope): number | undefined {
  switch (e.kind) {
    case 'num':
      return e.isFloat ? undefined : integerLiteral(e.text);
    case 'unary': {
      if (e.op !== '-' && e.op !== '+') return undefined;
      const v = wholeExponent(e.operand, scope);
      return v === undefined ? undefined : e.op === '-' ? -v : v;
    }
    case 'var': {
      const d = scope.lookup(e.name);
      if (!d || !d.isConst || d.isArray || d.type.isFloat || !d.init) return undefined;
      return S.constValue(d.init);
    }
    default:
      return undefined;
  }
}

/**
 * Flops of `base ** exponent` (Fortran). A whole exponent the compiler knows costs the
 * multiplications of repeated squaring, and a negative one a division more (x**(-2) = 1/(x*x)).
 * Any other exponent (real, or a variable) costs as a call of `pow`, the weight of C `pow`.
 * An integer power of an integer is index arithmetic and costs nothing.
 */
function powerFlops(base: VExpr, exponent: VExpr, scope: Scope, acc: FlopCount): FlopCount {
  countFlops(base, scope, acc);
  const float = isFloatValue(base, scope) || isFloatValue(exponent, scope);
  const n = wholeExponent(exponent, scope);
  if (n !== undefined) {
    if (float && Math.abs(n) <= 2 ** 31) acc.flops += integerPowerMultiplications(Math.abs(n)) + (n < 0 ? 1 : 0);
    return acc;
  }
  countFlops(exponent, scope, acc);
  if (float) acc.flops += MATH_FLOPS.pow;
  return acc;
}

/** Flops of an assignment: the right-hand side, plus one for a compound `+= -= *= /=` on a floating target. */
export function assignmentFlops(op: string, target: VExpr, value: VExpr, scope: Scope): FlopCount {
  const c = countFlops(value, scope);
  if (op.length === 2 && '+-*/'.includes(op[0]) && op[1] === '=' && isFloatValue(target, scope)) c.flops += 1;
  return c;
}
