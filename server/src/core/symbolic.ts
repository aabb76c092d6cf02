/**
 * Symbolic integer quantities: array sizes, loop trip counts, byte counts and affine subscripts
 * such as `8*NX*NY`, `n - 2*w` or `j*NX + i + 1`.
 *
 * Expressions are immutable and always held in a canonical expanded polynomial form with exact
 * rational coefficients, so `equals` is structural and printing is deterministic. Operations
 * that are not polynomial (C/Fortran integer division, remainder, min, max, unknown calls) are
 * opaque atoms whose arguments are canonical too. The implementation lives in ./symbolic/.
 */

export type { Expr } from './symbolic/expr';
export type { Bindings } from './symbolic/analysis';
export {
  num,
  sym,
  add,
  sub,
  mul,
  neg,
  floorDiv,
  div,
  mod,
  min,
  max,
  call,
  isConst,
  constValue,
  equals,
} from './symbolic/ops';
export { freeSymbols, substitute, evaluate, affine, degreeIn, tripCount } from './symbolic/analysis';
export { formatBytes } from './symbolic/print';
export { parseExpr } from './symbolic/parse';

import type { Expr } from './symbolic/expr';
import { printExpr } from './symbolic/print';

/** Readable canonical form: terms by degree descending, e.g. 'NX*NY - 2*NX - 2*NY + 4'. */
export function toString(e: Expr): string {
  return printExpr(e, 'text');
}

/**
 * Valid C or Fortran expression text for directives. C min/max become conditional expressions,
 * Fortran keeps min/max/mod calls and uses `**`. Non-integer coefficients are printed over a
 * common denominator ('(n + 1)/2'), which integer code evaluates with truncating division.
 */
export function toSource(e: Expr, lang: 'c' | 'fortran'): string {
  return printExpr(e, lang);
}
