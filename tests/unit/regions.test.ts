/**
 * Element regions as unions of boxes. Checked against brute-force element sets: a contiguous
 * interval split into boxes covers exactly its elements, once each; set operations agree with
 * the same operations on explicit element sets.
 */
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { type Region, type Shape, covers, intersect, intervalToRegion, overlaps, regionSize, shapeOf, subtract, union } from '../../server/src/core/data/regions';

function elements(r: Region, shape: Shape): number[] {
  const out: number[] = [];
  const visit = (b: Region[number], d: number, base: number): void => {
    if (d < 0) { out.push(base); return; }
    for (let x = b.lo[d]; x <= b.hi[d]; x++) visit(b, d - 1, base + x * shape.strides[d]);
  };
  for (const b of r) visit(b, b.lo.length - 1, 0);
  return out.sort((a, b) => a - b);
}

const arbShape = fc.array(fc.integer({ min: 1, max: 6 }), { minLength: 1, maxLength: 3 }).map(shapeOf);
const total = (s: Shape): number => s.extents.reduce((a, b) => a * b, 1);
const arbCase = arbShape.chain((s) =>
  fc.tuple(fc.constant(s), fc.integer({ min: 0, max: total(s) - 1 })).chain(([sh, start]) =>
    fc.tuple(fc.constant(sh), fc.constant(start), fc.integer({ min: 1, max: total(sh) - start })),
  ),
);
const range = (a: number, n: number): number[] => Array.from({ length: n }, (_, k) => a + k);

describe('regions', () => {
  it('an interval becomes boxes that cover each of its elements exactly once', () => {
    fc.assert(fc.property(arbCase, ([shape, start, count]) => {
      const r = intervalToRegion(start, count, shape);
      expect(elements(r, shape)).toEqual(range(start, count));
      expect(regionSize(r)).toBe(count);
      // At most a head, a middle and a tail per dimension.
      expect(r.length).toBeLessThanOrEqual(2 * shape.extents.length - 1);
    }));
  });

  it('a whole array is one box', () => {
    const shape = shapeOf([600, 400, 200]);
    expect(intervalToRegion(0, 600 * 400 * 200, shape)).toEqual([{ lo: [0, 0, 0], hi: [599, 399, 199] }]);
  });

  it('union, subtraction, intersection and cover agree with element sets', () => {
    fc.assert(fc.property(arbCase, fc.integer({ min: 0, max: 1000 }), fc.integer({ min: 1, max: 1000 }), ([shape, s1, n1], s2raw, n2raw) => {
      const t = total(shape);
      const s2 = s2raw % t;
      const n2 = 1 + (n2raw % (t - s2));
      const a = intervalToRegion(s1, n1, shape);
      const b = intervalToRegion(s2, n2, shape);
      const A = new Set(range(s1, n1));
      const B = new Set(range(s2, n2));
      expect(elements(union(a, b), shape)).toEqual([...new Set([...A, ...B])].sort((x, y) => x - y));
      expect(elements(subtract(a, b), shape)).toEqual([...A].filter((x) => !B.has(x)));
      expect(elements(intersect(a, b), shape)).toEqual([...A].filter((x) => B.has(x)));
      expect(overlaps(a, b)).toBe([...A].some((x) => B.has(x)));
      expect(covers(a, b)).toBe([...B].every((x) => A.has(x)));
    }));
  });
});
