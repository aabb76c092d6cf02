/**
 * Periodic guards inside a time loop: `if (t % K == 0)` (C) and `if (mod(t, K) == 0)`
 * (Fortran), with any constant remainder, run their branch every K steps; `if (t == c)` runs it
 * once. Anything else is treated as running every step (the conservative count).
 */
import * as S from '../symbolic';
import type { VExpr } from '../model/program';
import { toSymbolic } from '../model/values';

export type Guard = { kind: 'every'; steps: number } | { kind: 'once' } | undefined;

export function periodicGuard(cond: VExpr, timeVar: string | undefined, bindings: ReadonlyMap<string, S.Expr>): Guard {
  if (!timeVar || cond.kind !== 'bin') return undefined;
  const op = cond.op.toLowerCase();
  if (op === '&&' || op === '.and.') return periodicGuard(cond.left, timeVar, bindings) ?? periodicGuard(cond.right, timeVar, bindings);
  if (op !== '==' && op !== '.eq.') return undefined;
  for (const [a, b] of [[cond.left, cond.right], [cond.right, cond.left]] as const) {
    if (S.evaluate(toSymbolic(b) ?? S.sym('?'), bindings) === undefined) continue;
    const k = modulus(a, timeVar, bindings);
    if (k !== undefined && k >= 1) return { kind: 'every', steps: k };
    if (a.kind === 'var' && a.name === timeVar) return { kind: 'once' };
  }
  return undefined;
}

/** K of `t % K`, `mod(t, K)` or `modulo(t, K)`, with t possibly offset (`(t + 1) % K`). */
function modulus(e: VExpr, timeVar: string, bindings: ReadonlyMap<string, S.Expr>): number | undefined {
  let x: VExpr | undefined;
  let k: VExpr | undefined;
  if (e.kind === 'bin' && e.op === '%') [x, k] = [e.left, e.right];
  else if (e.kind === 'call' && ['mod', 'modulo'].includes(e.name.toLowerCase()) && e.args.length === 2) [x, k] = e.args;
  if (!x || !k) return undefined;
  const xs = toSymbolic(x);
  if (!xs || S.degreeIn(xs, timeVar) !== 1) return undefined;
  const kv = S.evaluate(toSymbolic(k) ?? S.sym('?'), bindings);
  return kv !== undefined && Number.isInteger(kv) ? kv : undefined;
}
