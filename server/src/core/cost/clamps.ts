/**
 * Clamped neighbours. Stencils with a boundary that repeats its edge value read their neighbours
 * through a clamp: Fortran `h(min(i+1,nx),j)`, `h(max(i-1,1),j)`, C `u[min(i+1,n-1)]`,
 * `u[MAX(i-1,0)]`, `u[i+1 < n ? i+1 : n-1]` (the C front end reads a conditional of this shape
 * as the `min` or `max` it is). Every iteration but the ones at the edge reads the neighbour
 * i±1; the edge iterations read the edge element, which a neighbouring iteration's own stencil
 * touches too. So for footprints, reuse, layer conditions and bytes such a subscript is the
 * neighbour `i+1` / `i-1` it clamps, not an irregular access of one element per read.
 *
 * The rule: a `min` or `max` whose arguments are, after unclamping them in turn, exactly one
 * expression affine in the nest's loop variables and any number of expressions that do not
 * involve those variables (the bounds) stands for that affine argument.
 */
import * as S from '../symbolic';
import { type Atom, atomExpr, constant } from '../symbolic/expr';

/** Spellings of min/max that reach a subscript as an unknown call (C++ `std::min`). */
const MIN_MAX_CALLS = new Set(['min', 'max', 'std::min', 'std::max', '::min', '::max']);

/**
 * The subscript with every clamp of a loop variable replaced by the neighbour it clamps, or
 * undefined when it holds no such clamp.
 */
export function unclamp(e: S.Expr, vars: readonly string[]): S.Expr | undefined {
  if (vars.length === 0) return undefined;
  const vs = new Set(vars);
  let changed = false;
  const terms = e.terms.map((t) => {
    const factors: S.Expr[] = [constant(t.coef)];
    for (const [a, p] of t.mono.factors) {
      const arm = isClamp(a) ? clampedArm(a, vs) : undefined;
      if (arm) changed = true;
      const x = arm ?? atomExpr(a);
      for (let k = 0; k < p; k++) factors.push(x);
    }
    return S.mul(...factors);
  });
  return changed ? S.add(...terms) : undefined;
}

function isClamp(a: Atom): boolean {
  if (a.kind === 'min' || a.kind === 'max') return a.args.length >= 2;
  return a.kind === 'call' && a.args.length === 2 && MIN_MAX_CALLS.has(a.name.toLowerCase());
}

/** The one argument of a clamp that moves with the loop variables (affine in them), if there is exactly one. */
function clampedArm(a: Atom, vs: ReadonlySet<string>): S.Expr | undefined {
  const args = a.args.map((x) => unclamp(x, [...vs]) ?? x);
  const moving = args.filter((x) => S.freeSymbols(x).some((v) => vs.has(v)));
  if (moving.length !== 1) return undefined;
  return S.affine(moving[0], [...vs]) ? moving[0] : undefined;
}
