/**
 * Symbolic integer forms of Fortran value expressions. It extends the language-neutral
 * `toSymbolic` with the shape inquiries that Fortran loop bounds use: `size(a, k)`, `size(a)`,
 * `lbound(a, k)` and `ubound(a, k)` of a declared array become its declared extents, so
 * `do i = 1, size(h, 1)` has the same trip count as `do i = 1, nx`.
 */
import * as S from '../../symbolic';
import type { Declaration, VExpr } from '../../model/program';
import { toSymbolic } from '../../model/values';

export type DeclLookup = (name: string) => Declaration | undefined;

function dimIndex(v: VExpr | undefined): number | undefined {
  if (!v) return undefined;
  const e = toSymbolic(v);
  const k = e ? S.constValue(e) : undefined;
  return k !== undefined && Number.isInteger(k) && k >= 1 ? k : undefined;
}

function shapeInquiry(v: VExpr & { kind: 'call' }, lookup: DeclLookup): S.Expr | undefined {
  const [first, second] = v.args;
  if (!first || first.kind !== 'var' || !['size', 'lbound', 'ubound'].includes(v.name)) return undefined;
  const d = lookup(first.name);
  if (!d || !d.isArray || d.dims.length === 0) return undefined;
  if (v.args.length === 1) return v.name === 'size' ? S.mul(...d.dims) : undefined;
  const k = dimIndex(second);
  if (k === undefined || k > d.dims.length) return undefined;
  const lower = d.lowerBounds?.[k - 1] ?? S.num(1);
  if (v.name === 'size') return d.dims[k - 1];
  if (v.name === 'lbound') return lower;
  return S.sub(S.add(lower, d.dims[k - 1]), S.num(1));
}

/**
 * Fortran's symbolic reading: the language-neutral one, with shape inquiries resolved and
 * integer conversions (`int(n)`, `nint(n)`) of integer arguments keeping their value.
 */
export function fsym(v: VExpr, lookup: DeclLookup): S.Expr | undefined {
  return toSymbolic(v, (call) => {
    const special = shapeInquiry(call, lookup);
    if (special) return special;
    if ((call.name === 'int' || call.name === 'nint') && call.args.length === 1 && call.args[0].kind !== 'num') return fsym(call.args[0], lookup);
    return undefined;
  });
}
