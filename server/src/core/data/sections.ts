/**
 * Array sections as byte counts and element regions: the sections written in data clauses and
 * updates (OpenACC 3.3 §2.7.1: C `a[lower:length]`, Fortran `a(lower:upper)`, a bare name is the
 * whole variable) and the elements that host or device code touches.
 */
import * as S from '../symbolic';
import type { ArrayAccess } from '../model/program';
import type { SourceLanguage, VarRef } from '../types';
import { linearise } from '../cost/footprint';
import type { ArrayInfo } from './arrays';
import { type Box, type Region, intervalToRegion, wholeBox } from './regions';

export interface Section {
  /** Bytes the section holds, symbolic in the caller's names. */
  bytes: S.Expr;
  /** Elements of the section in the array's natural shape. */
  region: Region;
  whole: boolean;
}

const parse = (text: string | undefined, lang: SourceLanguage): S.Expr | undefined =>
  text === undefined || text.trim() === '' ? undefined : S.parseExpr(text, lang === 'fortran' ? 'fortran' : 'c');

/** Bytes of the whole array: element count times element size, or a named unknown. */
export function wholeBytes(info: ArrayInfo): S.Expr {
  if (info.isScalar) return S.num(info.elementBytes);
  return S.mul(S.num(info.elementBytes), info.elementCount ?? S.sym(`count(${info.name})`));
}

/**
 * The section a clause names. `bindings` maps the clause's own names (a callee's parameters)
 * to the caller's expressions, so bytes come out in the caller's terms.
 */
export function clauseSection(ref: VarRef, info: ArrayInfo, lang: SourceLanguage, bindings: ReadonlyMap<string, S.Expr>, numeric: ReadonlyMap<string, S.Expr>): Section {
  const whole = (): Section => ({ bytes: wholeBytes(info), region: [wholeBox(info.shape)], whole: true });
  if (ref.dims.length === 0 || info.isScalar) return whole();
  // A C pointer to arrays (`double (*u)[NX]`) is indexed by rows first: its sections count rows.
  const rows = lang !== 'fortran' && info.decl?.isPointer && info.decl.dims.length > 0 && info.elementCount;
  const dims = rows ? [S.div(info.elementCount!, S.mul(...info.decl!.dims)), ...info.decl!.dims] : info.decl?.dims ?? [];
  const lowers = info.decl?.lowerBounds ?? [];
  const starts: S.Expr[] = [];
  const lengths: S.Expr[] = [];
  for (let d = 0; d < ref.dims.length; d++) {
    const sd = ref.dims[d];
    const extent = dims.length === ref.dims.length ? dims[d] : ref.dims.length === 1 ? info.elementCount : undefined;
    const base = lang === 'fortran' ? lowers[d] ?? S.num(1) : S.num(0);
    let lo = sd.exprs?.lower ?? parse(sd.lower, lang) ?? base;
    let len: S.Expr | undefined;
    if (sd.single) {
      len = S.num(1);
    } else if (lang === 'fortran') {
      const hi = sd.exprs?.upper ?? parse(sd.upper, lang) ?? (extent ? S.sub(S.add(base, extent), S.num(1)) : undefined);
      len = hi ? S.add(S.sub(hi, lo), S.num(1)) : undefined;
    } else {
      len = sd.exprs?.length ?? parse(sd.length, lang) ?? (extent ? S.sub(extent, lo) : undefined);
    }
    if (!len) return whole();
    lo = S.substitute(lo, bindings);
    starts.push(S.sub(lo, base));
    lengths.push(S.substitute(len, bindings));
  }
  // Dimensions the section leaves out are whole (`u[0:NY]` of `double (*u)[NX]` is NY whole rows).
  if (rows) {
    for (let d = ref.dims.length; d < dims.length; d++) {
      starts.push(S.num(0));
      lengths.push(dims[d]);
    }
  }
  const bytes = S.mul(S.num(info.elementBytes), ...lengths);
  const region = sectionRegion(starts, lengths, info, lang, numeric);
  const isWhole = region.length === 1 && sameBox(region[0], wholeBox(info.shape)) && !info.shapeApproximate;
  return { bytes, region, whole: isWhole };
}

function sameBox(a: Box, b: Box): boolean {
  return a.lo.every((v, d) => v === b.lo[d]) && a.hi.every((v, d) => v === b.hi[d]);
}

/** Region of a section given zero-based starts and lengths per written dimension. */
function sectionRegion(starts: S.Expr[], lengths: S.Expr[], info: ArrayInfo, lang: SourceLanguage, numeric: ReadonlyMap<string, S.Expr>): Region {
  const s = starts.map((e) => S.evaluate(e, numeric));
  const n = lengths.map((e) => S.evaluate(e, numeric));
  if (info.shapeApproximate || s.some((v) => v === undefined) || n.some((v) => v === undefined)) return [wholeBox(info.shape)];
  const sv = s as number[];
  const nv = n as number[];
  if (starts.length === 1) return intervalToRegion(sv[0], nv[0], info.shape);
  if (starts.length !== info.shape.extents.length) return [wholeBox(info.shape)];
  // Written order is outermost first in C and contiguous first in Fortran; shapes are contiguous first.
  const order = lang === 'fortran' ? sv.map((_, d) => d) : sv.map((_, d) => sv.length - 1 - d);
  return [{ lo: order.map((d) => sv[d]), hi: order.map((d) => sv[d] + nv[d] - 1) }];
}

/** Inclusive numeric ranges of loop variables in scope (host loops, or the nest of a compute construct). */
export type LoopRanges = ReadonlyMap<string, [number, number]>;

/**
 * Elements an access touches while the loops in `ranges` run: a box when the subscript's
 * coefficients match the array's strides, else the bounding interval, else the whole array.
 */
export function accessRegion(a: ArrayAccess, info: ArrayInfo, ranges: LoopRanges, numeric: ReadonlyMap<string, S.Expr>): Region {
  const whole: Region = [wholeBox(info.shape)];
  if (info.shapeApproximate || a.subscripts.length === 0 || a.subscripts.some((s) => !s)) return whole;
  const subs = (a.subscripts as S.Expr[]).map((s) => S.substitute(s, withoutLoopVars(numeric, ranges)));
  const linear = linearise(subs, info.decl, info.layout, info.name);
  const vars = [...ranges.keys()];
  const parts = S.affine(linear, vars);
  if (!parts) return whole;
  const base = S.evaluate(parts.rest, numeric);
  if (base === undefined) return whole;
  let min = base;
  let max = base;
  const dims: { coeff: number; span: number }[] = [];
  for (const v of vars) {
    const c = S.evaluate(parts.coeffs.get(v) ?? S.num(0), numeric);
    if (c === undefined) return whole;
    if (c === 0) continue;
    const [lo, hi] = ranges.get(v)!;
    min += Math.min(c * lo, c * hi);
    max += Math.max(c * lo, c * hi);
    dims.push({ coeff: Math.abs(c), span: hi - lo });
  }
  const total = info.shape.strides[info.shape.strides.length - 1] * info.shape.extents[info.shape.extents.length - 1];
  if (min < 0 || max >= total) return whole;
  const box = boxFromCorner(min, dims, info);
  return box ? [box] : intervalToRegion(min, max - min + 1, info.shape);
}

function withoutLoopVars(b: ReadonlyMap<string, S.Expr>, ranges: LoopRanges): Map<string, S.Expr> {
  return new Map([...b].filter(([k]) => !ranges.has(k)));
}

/** A box from its lowest element when each varying dimension moves along exactly one stride. */
function boxFromCorner(min: number, dims: { coeff: number; span: number }[], info: ArrayInfo): Box | undefined {
  const { strides, extents } = info.shape;
  const lo = strides.map(() => 0);
  let rest = min;
  for (let d = strides.length - 1; d >= 0; d--) {
    lo[d] = Math.floor(rest / strides[d]);
    rest -= lo[d] * strides[d];
  }
  const hi = [...lo];
  const used = new Set<number>();
  for (const { coeff, span } of dims) {
    const d = strides.indexOf(coeff);
    if (d < 0 || used.has(d)) return undefined;
    used.add(d);
    hi[d] = lo[d] + span;
    if (hi[d] >= extents[d]) return undefined;
  }
  return { lo, hi };
}
