/**
 * C subscripts that clamp an index with a conditional: `u[i+1 < n ? i+1 : n-1]`,
 * `u[i > 0 ? i-1 : 0]`, and `MIN`/`MAX` macros written as `((a) < (b) ? (a) : (b))`. Such a
 * conditional is exactly `min(a, b)` or `max(a, b)` of its two arms, so the subscript is read as
 * that: the cost ledger can then see the neighbour it clamps (cost/clamps.ts) instead of a
 * subscript it cannot read. The value expression itself keeps the conditional (flops and
 * messages see what was written); only the symbolic subscript changes.
 */
import type { VExpr } from '../../model/program';
import { toSymbolic } from '../../model/values';
import * as S from '../../symbolic';

/** The symbolic form of a subscript, reading clamping conditionals as `min`/`max`. */
export function subscriptSymbolic(v: VExpr): S.Expr | undefined {
  return toSymbolic(v) ?? toSymbolic(withClamps(v));
}

/** `v` with every conditional that is a min or max of its arms rewritten as that call. */
function withClamps(v: VExpr): VExpr {
  switch (v.kind) {
    case 'bin':
      return { ...v, left: withClamps(v.left), right: withClamps(v.right) };
    case 'unary':
    case 'cast':
      return { ...v, operand: withClamps(v.operand) };
    case 'call':
      return { ...v, args: v.args.map(withClamps) };
    case 'cond': {
      const then = withClamps(v.then);
      const otherwise = withClamps(v.else);
      const kind = clampKind(v.test, then, otherwise);
      return kind ? { kind: 'call', name: kind, args: [then, otherwise] } : { ...v, then, else: otherwise };
    }
    default:
      return v;
  }
}

/**
 * Whether `test ? a : b` (integers) picks the smaller or the larger arm in every case. The test
 * `p < q`, `p <= q`, `p > q` or `p >= q` is brought to the form `D <= k`; when D differs from
 * `a - b` by a constant t, the test is `a - b <= k - t`, which picks the smaller arm exactly
 * when k - t is 0 or -1 (they differ only where the arms are equal). When D differs from
 * `b - a` by a constant, the same reasoning gives the larger arm. So `i+1 < n ? i+1 : n-1`
 * (i+1 <= n-1) is `min(i+1, n-1)` and `i > 0 ? i-1 : 0` (i-1 >= 0) is `max(i-1, 0)`.
 */
function clampKind(test: VExpr, a: VExpr, b: VExpr): 'min' | 'max' | undefined {
  if (test.kind !== 'bin' || !['<', '<=', '>', '>='].includes(test.op)) return undefined;
  const p = toSymbolic(withClamps(test.left));
  const q = toSymbolic(withClamps(test.right));
  const sa = toSymbolic(a);
  const sb = toSymbolic(b);
  if (!p || !q || !sa || !sb) return undefined;
  // D <= k: p < q is p - q <= -1; p <= q is p - q <= 0; p > q is q - p <= -1; p >= q is q - p <= 0.
  const d = test.op.startsWith('<') ? S.sub(p, q) : S.sub(q, p);
  const k = test.op.endsWith('=') ? 0 : -1;
  const toMin = S.constValue(S.sub(d, S.sub(sa, sb)));
  if (toMin !== undefined && [0, -1].includes(k - toMin)) return 'min';
  const toMax = S.constValue(S.sub(d, S.sub(sb, sa)));
  if (toMax !== undefined && [0, -1].includes(k - toMax)) return 'max';
  return undefined;
}
