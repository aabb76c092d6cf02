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

export function fsym(v: VExpr, lookup: DeclLookup): S.Expr | undefined {
  switch (v.kind) {
    case 'call': {
      const special = shapeInquiry(v, lookup);
      if (special) return special;
      const args = v.args.map((a) => fsym(a, lookup));
      if (args.some((a) => a === undefined)) return undefined;
      const xs = args as S.Expr[];
      if ((v.name === 'min' || v.name === 'max') && xs.length >= 2) return xs.reduce((a, b) => (v.name === 'min' ? S.min(a, b) : S.max(a, b)));
      if (v.name === 'mod' && xs.length === 2) return S.mod(xs[0], xs[1]);
      // Integer conversions of integer arguments keep the value.
      if ((v.name === 'int' || v.name === 'nint') && xs.length === 1 && v.args[0].kind !== 'num') return xs[0];
      return S.call(v.name, xs);
    }
    case 'bin': {
      const l = fsym(v.left, lookup);
      const r = fsym(v.right, lookup);
      if (!l || !r) return undefined;
      switch (v.op) {
        case '+': return S.add(l, r);
        case '-': return S.sub(l, r);
        case '*': return S.mul(l, r);
        case '/': return S.floorDiv(l, r);
        case '**': {
          const k = S.constValue(r);
          if (k === undefined || !Number.isInteger(k) || k < 0 || k > 8) return undefined;
          return S.mul(...Array.from({ length: k }, () => l), S.num(1));
        }
        default: return undefined;
      }
    }
    case 'unary': {
      const x = fsym(v.operand, lookup);
      if (!x) return undefined;
      return v.op === '-' ? S.neg(x) : v.op === '+' ? x : undefined;
    }
    default:
      return toSymbolic(v);
  }
}
