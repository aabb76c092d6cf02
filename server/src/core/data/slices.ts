/**
 * Source text of array sections, in the file's own language: symbolic slices from the host
 * accesses that need them (`p[MZ*NX*NY + MY*NX + MX0:NMIC]`, `h(1:nx, 1:1)`), numeric slices
 * from element regions when no symbolic form is readable, and whole-array sections for data
 * clauses (`p[0:N]`, or the bare name where the declaration fixes the size).
 */
import * as S from '../symbolic';
import type { SourceLanguage } from '../types';
import type { ArrayInfo } from './arrays';
import type { HostTouch } from './interpreter';
import { type Box, type Region, bounding, boxSize, exactBoxes } from './regions';

const src = (e: S.Expr, lang: SourceLanguage): string => S.toSource(e, lang === 'fortran' ? 'fortran' : 'c');

/** The whole array as a clause operand: bare name when the declaration gives the extent, else `p[0:count]`. */
export function wholeSectionText(name: string, info: ArrayInfo, lang: SourceLanguage): string | undefined {
  if (lang === 'fortran' || (info.decl && info.decl.dims.length > 0 && !info.decl.isPointer)) return name;
  if (!info.elementCount) return undefined;
  return `${name}[0:${src(leadingCount(info.elementCount, info.decl?.isPointer ? info.decl.dims : []), lang)}]`;
}

/**
 * How many of a pointer's pointees the whole array holds: its elements for `double *p`, its rows
 * for a pointer to arrays `double (*u)[NX]` (the section `u[0:NY]` covers NY rows of NX).
 */
export function leadingCount(elements: S.Expr, innerDims: readonly S.Expr[]): S.Expr {
  return innerDims.length === 0 ? elements : S.div(elements, S.mul(...innerDims));
}

/**
 * The slice one host access touches over the host loops around it, in symbolic form. `symbolic`
 * resolves callee parameters and local constants but keeps the file's named sizes.
 */
export function touchSectionText(t: HostTouch, name: string, info: ArrayInfo, lang: SourceLanguage, symbolic: ReadonlyMap<string, S.Expr>): string | undefined {
  if (t.access.subscripts.some((s) => !s)) return undefined;
  const loopVars = t.loops.map((l) => l.variable).filter((v): v is string => !!v);
  const keep = new Map([...symbolic].filter(([k]) => !loopVars.includes(k)));
  const subs = (t.access.subscripts as S.Expr[]).map((s) => S.substitute(s, keep));
  const bounds = new Map<string, { lo: S.Expr; hi: S.Expr }>();
  for (const l of t.loops) {
    if (!l.variable || !l.lower || !l.upper || (l.step && S.constValue(l.step) !== 1)) return undefined;
    bounds.set(l.variable, { lo: S.substitute(l.lower, keep), hi: S.substitute(l.upper, keep) });
  }
  const ranges: { lo: S.Expr; len: S.Expr }[] = [];
  for (const sub of subs) {
    const parts = S.affine(sub, loopVars);
    if (!parts) return undefined;
    let lo = parts.rest;
    let len: S.Expr = S.num(1);
    let moving = 0;
    for (const v of loopVars) {
      const c = S.constValue(parts.coeffs.get(v) ?? S.num(0));
      if (c === 0) continue;
      if (c !== 1 || ++moving > 1) return undefined;
      const b = bounds.get(v)!;
      lo = S.add(lo, b.lo);
      len = S.add(S.sub(b.hi, b.lo), S.num(1));
    }
    ranges.push({ lo, len });
  }
  if (lang === 'fortran') {
    return `${name}(${ranges.map((r) => `${src(r.lo, lang)}:${src(S.sub(S.add(r.lo, r.len), S.num(1)), lang)}`).join(', ')})`;
  }
  // C: a linearised pointer needs one contiguous range; a multi-dimensional array one range per dimension.
  if (ranges.length === 1) return `${name}[${src(ranges[0].lo, lang)}:${src(ranges[0].len, lang)}]`;
  if (info.decl && info.decl.dims.length === ranges.length) {
    return `${name}${contiguous(ranges, info.decl.dims).map((r) => `[${src(r.lo, lang)}:${src(r.len, lang)}]`).join('')}`;
  }
  return undefined;
}

/**
 * A C array section must be contiguous (OpenACC 3.3 §2.7.1, OpenMP 5.2 §5.8.3: gcc rejects
 * "array section is not contiguous"): after the first dimension that takes more than one index,
 * every dimension is taken whole. `u[1:N-2][1:N-2]` becomes `u[1:N-2][0:N]`: the rows are whole.
 */
function contiguous(ranges: { lo: S.Expr; len: S.Expr }[], dims: readonly S.Expr[]): { lo: S.Expr; len: S.Expr }[] {
  const first = ranges.findIndex((r) => S.constValue(r.len) !== 1);
  if (first < 0) return ranges;
  return ranges.map((r, d) => (d > first ? { lo: S.num(0), len: dims[d] } : r));
}

/** A numeric slice covering a region (its bounding box), for messages and as a fallback. */
export function regionSectionText(region: Region, name: string, info: ArrayInfo, lang: SourceLanguage): string {
  if (region.length === 0) return name;
  const b = bounding(region);
  const { extents } = info.shape;
  const whole = b.lo.every((v) => v === 0) && b.hi.every((v, d) => v === extents[d] - 1) && !info.shapeApproximate;
  if (whole) return wholeSectionText(name, info, lang) ?? name;
  if (lang === 'fortran') {
    const lowers = info.decl?.lowerBounds?.map((l) => S.constValue(l) ?? 1) ?? [];
    return `${name}(${b.lo.map((lo, d) => `${lo + (lowers[d] ?? 1)}:${b.hi[d] + (lowers[d] ?? 1)}`).join(', ')})`;
  }
  if (isCArray(info)) {
    const written = [...b.lo.keys()].reverse().map((d) => ({ lo: S.num(b.lo[d]), len: S.num(b.hi[d] - b.lo[d] + 1) }));
    return `${name}${contiguous(written, [...extents].reverse().map((e) => S.num(e))).map((r) => `[${src(r.lo, lang)}:${src(r.len, lang)}]`).join('')}`;
  }
  const start = offsetOf(b.lo, info);
  return `${name}[${start}:${offsetOf(b.hi, info) - start + 1}]`;
}

/** At most this many sections in one narrowed update; beyond it one bounding section is shorter to read. */
const MAX_SECTIONS = 8;

/**
 * Elements a section of one box moves as it is written: Fortran sections take the box exactly; a
 * C section of a multi-dimensional array takes whole rows after its first dimension that spans
 * more than one index (contiguity, see `contiguous`); a linearised pointer moves one contiguous range.
 */
export function sectionElements(b: Box, info: ArrayInfo, lang: SourceLanguage): number {
  if (lang === 'fortran') return boxSize(b);
  if (isCArray(info)) return boxSize(widenedBox(b, info.shape.extents));
  return offsetOf(b.hi, info) - offsetOf(b.lo, info) + 1;
}

/** A C array declared with all its dimensions (not a pointer): its sections are written per dimension. */
function isCArray(info: ArrayInfo): boolean {
  const { extents } = info.shape;
  return !!info.decl && info.decl.dims.length === extents.length && !info.decl.isPointer && extents.length > 1;
}

/** The linear element offset of an index tuple (contiguous dimension first). */
function offsetOf(index: readonly number[], info: ArrayInfo): number {
  return index.reduce((n, v, d) => n + v * info.shape.strides[d], 0);
}

/**
 * Exact sections for a region: one per box that the region's boxes join into (two planes of a
 * 3-D array are two sections, not the bounding box between them), in memory order, with the
 * elements they move together. More than MAX_SECTIONS boxes give one bounding section.
 */
export function regionSections(region: Region, name: string, info: ArrayInfo, lang: SourceLanguage): { texts: string[]; elements: number } {
  let boxes = exactBoxes(region);
  if (lang !== 'fortran' && isCArray(info)) {
    // C sections of a multi-dimensional array take whole rows inside their first wide dimension;
    // widen first so that two sections never overlap (the same element moved twice).
    boxes = exactBoxes(boxes.map((b) => widenedBox(b, info.shape.extents)));
  }
  if (boxes.length === 0) return { texts: [name], elements: 0 };
  if (boxes.length > MAX_SECTIONS) return { texts: [regionSectionText(region, name, info, lang)], elements: sectionElements(bounding(region), info, lang) };
  boxes.sort((a, b) => offsetOf(a.lo, info) - offsetOf(b.lo, info));
  return {
    texts: boxes.map((b) => regionSectionText([b], name, info, lang)),
    elements: boxes.reduce((n, b) => n + sectionElements(b, info, lang), 0),
  };
}

/** A box as a C section of it moves: every dimension inside the first one wider than one index taken whole. */
function widenedBox(b: Box, extents: readonly number[]): Box {
  const dims = [...b.lo.keys()].reverse();
  const first = dims.findIndex((d) => b.hi[d] !== b.lo[d]);
  if (first < 0) return b;
  const lo = [...b.lo];
  const hi = [...b.hi];
  dims.forEach((d, k) => {
    if (k > first) {
      lo[d] = 0;
      hi[d] = extents[d] - 1;
    }
  });
  return { lo, hi };
}
