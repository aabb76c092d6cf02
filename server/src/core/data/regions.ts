/**
 * Sets of array elements as unions of boxes, for coherence tracking (which elements the host or
 * the device holds the newest copy of) and for exact update slices.
 *
 * A box is a range per dimension of an array's natural shape (contiguous dimension first); the
 * element index is Σ idx[d] × stride[d]. All arrays of one name share one shape, so boxes of the
 * same array compare dimension by dimension. Region operations are exact for boxes; a union that
 * grows beyond MAX_BOXES is widened to its bounding box (conservative for "might be newer").
 */

export interface Shape {
  /** Element stride per dimension, contiguous first (strides[0] = 1). */
  strides: number[];
  /** Extent per dimension; the last may be Infinity when unknown. */
  extents: number[];
}

export interface Box {
  lo: number[];
  hi: number[];
}

export type Region = Box[];

const MAX_BOXES = 64;

export function wholeBox(shape: Shape): Box {
  return { lo: shape.extents.map(() => 0), hi: shape.extents.map((e) => e - 1) };
}

export function isEmptyBox(b: Box): boolean {
  return b.lo.some((l, d) => l > b.hi[d]);
}

export function boxSize(b: Box): number {
  return isEmptyBox(b) ? 0 : b.lo.reduce((n, l, d) => n * (b.hi[d] - l + 1), 1);
}

export function regionSize(r: Region): number {
  return r.reduce((n, b) => n + boxSize(b), 0);
}

export function intersectBox(a: Box, b: Box): Box | undefined {
  const lo = a.lo.map((l, d) => Math.max(l, b.lo[d]));
  const hi = a.hi.map((h, d) => Math.min(h, b.hi[d]));
  const box = { lo, hi };
  return isEmptyBox(box) ? undefined : box;
}

export function overlaps(r: Region, s: Region): boolean {
  return r.some((a) => s.some((b) => intersectBox(a, b) !== undefined));
}

/** The part of `r` that lies in `s`. */
export function intersect(r: Region, s: Region): Region {
  const out: Region = [];
  for (const a of r) for (const b of s) {
    const x = intersectBox(a, b);
    if (x) out.push(x);
  }
  return out;
}

/** a minus b as at most 2 × dims disjoint boxes. */
export function subtractBox(a: Box, b: Box): Box[] {
  const x = intersectBox(a, b);
  if (!x) return [a];
  const out: Box[] = [];
  const lo = [...a.lo];
  const hi = [...a.hi];
  for (let d = a.lo.length - 1; d >= 0; d--) {
    if (lo[d] < x.lo[d]) out.push({ lo: [...lo.slice(0, d), lo[d], ...lo.slice(d + 1)], hi: [...hi.slice(0, d), x.lo[d] - 1, ...hi.slice(d + 1)] });
    if (hi[d] > x.hi[d]) out.push({ lo: [...lo.slice(0, d), x.hi[d] + 1, ...lo.slice(d + 1)], hi: [...hi.slice(0, d), hi[d], ...hi.slice(d + 1)] });
    lo[d] = x.lo[d];
    hi[d] = x.hi[d];
  }
  return out;
}

export function subtract(r: Region, s: Region): Region {
  let cur = r;
  for (const b of s) cur = cur.flatMap((a) => subtractBox(a, b));
  return cur;
}

export function union(r: Region, s: Region): Region {
  const out = [...r, ...subtract(s, r)];
  return out.length > MAX_BOXES ? [bounding(out)] : out;
}

/** The union of possibly overlapping boxes as disjoint boxes, so its size counts each element once. */
export function disjoint(r: Region): Region {
  let acc: Region = [];
  for (const b of r) acc = [...acc, ...subtract([b], acc)];
  return acc;
}

/**
 * Disjoint boxes joined where two together are exactly a box (neighbouring rows of one plane,
 * halves of one plane), until no two are: the fewest exact boxes a simple pairwise pass finds.
 */
export function exactBoxes(r: Region): Region {
  const boxes = disjoint(r).filter((b) => !isEmptyBox(b));
  for (let joined = true; joined; ) {
    joined = false;
    for (let i = 0; i < boxes.length && !joined; i++) {
      for (let j = i + 1; j < boxes.length && !joined; j++) {
        const u = bounding([boxes[i], boxes[j]]);
        if (boxSize(u) === boxSize(boxes[i]) + boxSize(boxes[j])) {
          boxes[i] = u;
          boxes.splice(j, 1);
          joined = true;
        }
      }
    }
  }
  return boxes;
}

export function bounding(r: Region): Box {
  return {
    lo: r[0].lo.map((_, d) => Math.min(...r.map((b) => b.lo[d]))),
    hi: r[0].hi.map((_, d) => Math.max(...r.map((b) => b.hi[d]))),
  };
}

/** True when every element of `r` lies in `s`. */
export function covers(s: Region, r: Region): boolean {
  return subtract(r, s).length === 0;
}

/**
 * The boxes of a contiguous element range [start, start + count): per dimension from the
 * outermost, a partial first slice, a block of whole slices, and a partial last slice.
 */
export function intervalToRegion(start: number, count: number, shape: Shape): Region {
  if (count <= 0) return [];
  return split(start, start + count - 1, shape, shape.strides.length - 1);
}

/** Elements [first, last], whose indices agree in every dimension above d. */
function split(first: number, last: number, shape: Shape, d: number): Region {
  const ia = indices(first, shape);
  const ib = indices(last, shape);
  if (d <= 0) return [{ lo: ia, hi: ib }];
  const s = shape.strides[d];
  const headFull = first % s === 0;
  const tailFull = (last + 1) % s === 0;
  if (ia[d] === ib[d] && !(headFull && tailFull)) return split(first, last, shape, d - 1);
  const out: Region = [];
  let midLo = ia[d];
  let midHi = ib[d];
  if (!headFull) {
    out.push(...split(first, Math.floor(first / s) * s + s - 1, shape, d - 1));
    midLo++;
  }
  if (!tailFull) {
    out.push(...split(Math.floor(last / s) * s, last, shape, d - 1));
    midHi--;
  }
  if (midLo <= midHi) {
    out.push({
      lo: ia.map((v, k) => (k < d ? 0 : k === d ? midLo : v)),
      hi: ib.map((v, k) => (k < d ? shape.extents[k] - 1 : k === d ? midHi : v)),
    });
  }
  return out;
}

/** Per-dimension indices of a linear element index (contiguous dimension first). */
export function indices(linear: number, shape: Shape): number[] {
  const out = shape.strides.map(() => 0);
  let rest = linear;
  for (let d = shape.strides.length - 1; d >= 0; d--) {
    out[d] = Math.floor(rest / shape.strides[d]);
    rest -= out[d] * shape.strides[d];
  }
  return out;
}

/** Natural shape from extents, contiguous first. */
export function shapeOf(extents: number[]): Shape {
  const strides: number[] = [];
  let s = 1;
  for (const e of extents) {
    strides.push(s);
    s *= e;
  }
  return { strides, extents };
}
