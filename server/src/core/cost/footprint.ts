/**
 * Stencil footprint of a loop nest: for each array, the dimensions the nest walks (after
 * turning linearised subscripts such as `(k*NY + j)*NX + i` back into dimensions by their
 * strides), the constant neighbour offsets per dimension, the radius, and whether the array is
 * read, written or updated in place.
 */
import * as S from '../symbolic';
import type { ArrayAccess, Declaration, Layout } from '../model/program';

export interface AccessOffsets {
  isRead: boolean;
  isWrite: boolean;
  /**
   * A read of an element the same iteration already wrote or read (cost/reuse.ts): it moves no
   * bytes, so traffic and layer conditions leave it out.
   */
  covered?: boolean;
  /** Offset per dimension, contiguous dimension first; undefined when not a constant. */
  offsets?: number[];
}

export interface ArrayFootprint {
  array: string;
  elementBytes: number;
  /** Nest variables the array's subscripts move with, contiguous dimension first. */
  variables: string[];
  /** Element stride of each of those dimensions (1 for the contiguous one). */
  strides: S.Expr[];
  accesses: AccessOffsets[];
  /** Largest |offset| per dimension over all accesses with constant offsets. */
  radius: number[];
  /** Read and write references per iteration, as written (a re-read counts here but moves no bytes). */
  reads: number;
  writes: number;
  /** Read (not only re-read) and written in the same nest (an in-place update such as `u[i] += …`). */
  inPlace: boolean;
  /** Some access could not be read as affine in the nest variables (indirect or non-linear). */
  irregular: boolean;
}

/**
 * The linear element offset of an access from the array's first element, using the declared
 * shape: row-major for C (last subscript contiguous), column-major for Fortran (first
 * subscript contiguous, minus its lower bound). Arrays of unknown shape get symbolic strides.
 */
export function linearise(subscripts: S.Expr[], decl: Declaration | undefined, layout: Layout, array: string): S.Expr {
  const m = subscripts.length;
  // One subscript: C counts from 0; Fortran from its lower bound (1 unless declared), so `p(2)`
  // is the second element, as the section `p(2:2)` of an update says.
  if (m === 1) return layout === 'row-major' ? subscripts[0] : S.sub(subscripts[0], decl?.lowerBounds?.[0] ?? S.num(1));
  const dims = decl && decl.dims.length === m ? decl.dims : undefined;
  const extent = (d: number): S.Expr => dims?.[d] ?? S.sym(`extent(${array},${d + 1})`);
  const terms: S.Expr[] = [];
  if (layout === 'row-major') {
    let stride = S.num(1);
    for (let d = m - 1; d >= 0; d--) {
      terms.push(S.mul(subscripts[d], stride));
      stride = S.mul(stride, extent(d));
    }
  } else {
    let stride = S.num(1);
    for (let d = 0; d < m; d++) {
      const lower = decl?.lowerBounds?.[d] ?? S.num(1);
      terms.push(S.mul(S.sub(subscripts[d], lower), stride));
      stride = S.mul(stride, extent(d));
    }
  }
  return S.add(...terms);
}

/**
 * Builds the footprint of one array from its accesses in a nest. `subscriptsOf` gives each
 * access's subscripts with the procedure's bindings already substituted.
 */
export function arrayFootprint(
  array: string,
  accesses: { access: ArrayAccess; subscripts: (S.Expr | undefined)[]; covered?: boolean }[],
  nestVars: string[],
  decl: Declaration | undefined,
  layout: Layout,
  elementBytes: number,
): ArrayFootprint {
  const fp: ArrayFootprint = {
    array, elementBytes, variables: [], strides: [], accesses: [], radius: [],
    reads: 0, writes: 0, inPlace: false, irregular: false,
  };
  const forms: { a: ArrayAccess; coeffs: Map<string, S.Expr>; rest: S.Expr; covered: boolean }[] = [];
  let moved = false;
  for (const { access, subscripts, covered } of accesses) {
    if (access.isRead) fp.reads++;
    if (access.isWrite) fp.writes++;
    const flag = access.isRead && covered ? { covered: true } : {};
    if (access.isRead && !covered) moved = true;
    if (subscripts.length === 0 || subscripts.some((s) => !s)) {
      fp.irregular = true;
      fp.accesses.push({ isRead: access.isRead, isWrite: access.isWrite, ...flag });
      continue;
    }
    const linear = linearise(subscripts as S.Expr[], decl, layout, array);
    const parts = S.affine(linear, nestVars);
    if (!parts) {
      fp.irregular = true;
      fp.accesses.push({ isRead: access.isRead, isWrite: access.isWrite, ...flag });
      continue;
    }
    forms.push({ a: access, coeffs: parts.coeffs, rest: parts.rest, covered: !!covered });
  }
  fp.inPlace = moved && fp.writes > 0;
  if (forms.length === 0) return fp;
  // Dimensions are the nest variables with a non-zero stride, ordered by stride (contiguous first).
  const probe = probeValues(forms.flatMap((f) => [...f.coeffs.values(), f.rest]));
  const ref = forms[0];
  const vars = nestVars.filter((v) => {
    const c = ref.coeffs.get(v);
    return c && S.constValue(c) !== 0;
  });
  vars.sort((x, y) => Math.abs(S.evaluate(ref.coeffs.get(x)!, probe) ?? 0) - Math.abs(S.evaluate(ref.coeffs.get(y)!, probe) ?? 0));
  fp.variables = vars;
  fp.strides = vars.map((v) => ref.coeffs.get(v)!);
  const strideValues = fp.strides.map((s) => S.evaluate(s, probe) ?? NaN);
  fp.radius = vars.map(() => 0);
  for (const f of forms) {
    const samePattern = vars.every((v, d) => S.equals(f.coeffs.get(v) ?? S.num(0), fp.strides[d]))
      && nestVars.every((v) => vars.includes(v) || S.constValue(f.coeffs.get(v) ?? S.num(0)) === 0);
    const offsets = samePattern ? decompose(S.evaluate(f.rest, probe), strideValues) : undefined;
    if (!offsets) fp.irregular = fp.irregular || !samePattern;
    fp.accesses.push({ isRead: f.a.isRead, isWrite: f.a.isWrite, offsets, ...(f.a.isRead && f.covered ? { covered: true } : {}) });
    offsets?.forEach((o, d) => { fp.radius[d] = Math.max(fp.radius[d], Math.abs(o)); });
  }
  return fp;
}

/**
 * Re-centres neighbour offsets on the element each iteration writes. A linear index has an
 * arbitrary constant base (Fortran `ic = i + (j-1)*nx` is `i + j*nx - nx`), so raw offsets can
 * all be shifted by the same amount; the written element is where the stencil is centred. An
 * array written in the nest uses its own first write. An array only read takes the first write
 * of an array with the same strides (the input of a Jacobi sweep takes the output's centre) when
 * that brings its offsets closer in every dimension and strictly closer in one; otherwise (a
 * pointwise read beside a write into a slice of a bigger array) it keeps its own offsets. Spans,
 * streams and byte counts do not change; only offsets and radii do.
 */
export function centreOffsets(footprints: ArrayFootprint[]): void {
  // Centres are read before any offset moves.
  const centres = new Map<ArrayFootprint, number[]>();
  for (const fp of footprints) {
    const c = fp.accesses.find((a) => a.isWrite && a.offsets)?.offsets;
    if (c) centres.set(fp, [...c]);
  }
  const radiusAbout = (fp: ArrayFootprint, centre: number[]): number[] => {
    const r = fp.variables.map(() => 0);
    for (const a of fp.accesses) a.offsets?.forEach((o, d) => { r[d] = Math.max(r[d], Math.abs(o - centre[d])); });
    return r;
  };
  for (const fp of footprints) {
    if (fp.variables.length === 0) continue;
    let centre = centres.get(fp);
    if (!centre) {
      const same = (o: ArrayFootprint): boolean => o.variables.length === fp.variables.length
        && o.variables.every((v, d) => v === fp.variables[d] && S.equals(o.strides[d], fp.strides[d]));
      const other = [...centres].find(([o]) => same(o))?.[1];
      const moved = other ? radiusAbout(fp, other) : undefined;
      const closer = !!moved && moved.every((r, d) => r <= fp.radius[d]) && moved.some((r, d) => r < fp.radius[d]);
      centre = closer ? other : undefined;
    }
    if (!centre || centre.every((c) => c === 0)) continue;
    fp.radius = radiusAbout(fp, centre);
    for (const a of fp.accesses) if (a.offsets) a.offsets = a.offsets.map((o, d) => o - centre![d]);
  }
}

/**
 * Values for unbound symbols used only to split an offset into per-dimension parts: large,
 * distinct and far apart, so that `NX + 1` (one row and one column) can never be confused with
 * another small combination. The split is exact for offsets much smaller than these values.
 */
export function probeValues(exprs: S.Expr[]): Map<string, number> {
  const out = new Map<string, number>();
  let next = 10_007;
  for (const e of exprs) {
    for (const s of S.freeSymbols(e)) {
      if (!out.has(s)) {
        out.set(s, next);
        next += 1_009;
      }
    }
  }
  return out;
}

/** Splits a linear offset into per-dimension offsets by strides (largest first, rounding to nearest). */
function decompose(offset: number | undefined, strides: number[]): number[] | undefined {
  if (offset === undefined || strides.some((s) => !Number.isFinite(s) || s === 0)) return undefined;
  const out = strides.map(() => 0);
  let rest = offset;
  for (let d = strides.length - 1; d >= 0; d--) {
    const q = Math.round(rest / strides[d]);
    out[d] = q;
    rest -= q * strides[d];
  }
  if (strides.length === 0) return rest === 0 ? [] : undefined;
  return rest === 0 ? out : undefined;
}
