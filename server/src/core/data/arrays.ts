/**
 * What the data ledger knows about one array: element size, symbolic size, and a numeric shape
 * (contiguous dimension first) for coherence regions. Shapes come from declarations; a pointer
 * with only an element count takes its dimensions from the strides of the loop nests that use it
 * (`p[(k*NY + j)*NX + i]` gives NX, NY and the rest).
 */
import * as S from '../symbolic';
import type { Declaration, Layout } from '../model/program';
import { type Shape, shapeOf } from './regions';

export interface ArrayInfo {
  name: string;
  decl?: Declaration;
  elementBytes: number;
  /** Total elements, symbolic; undefined when nothing says how large the array is. */
  elementCount?: S.Expr;
  /** Numeric natural shape; a one-dimensional shape of the element count when nothing better is known. */
  shape: Shape;
  /** True when the shape had to be guessed (unbound sizes): regions are then whole-array only. */
  shapeApproximate: boolean;
  layout: Layout;
  isScalar: boolean;
}

/** Builds the info of a declared variable under the given bindings. */
export function arrayInfo(name: string, decl: Declaration | undefined, layout: Layout, bindings: ReadonlyMap<string, S.Expr>, nestStrides: S.Expr[][]): ArrayInfo {
  const elementBytes = decl?.type.bytes ?? 8;
  const isScalar = !!decl && !decl.isArray;
  const count = decl?.elementCount ?? (decl && decl.dims.length > 0 ? S.mul(...decl.dims) : undefined);
  const countValue = count ? S.evaluate(count, bindings) : undefined;
  let extents: number[] | undefined;
  if (decl && decl.dims.length > 0) {
    const values = decl.dims.map((d) => S.evaluate(d, bindings));
    if (values.every((v): v is number => v !== undefined && v > 0)) {
      // A pointer to arrays (`double (*u)[NX]`) has one more, leading extent: the rows it holds.
      const inner = values.reduce((a, b) => a * b, 1);
      const all = decl.isPointer && countValue !== undefined && countValue % inner === 0 && countValue > inner ? [countValue / inner, ...values] : values;
      extents = layout === 'row-major' ? [...all].reverse() : all;
    }
  }
  if (!extents) extents = shapeFromStrides(nestStrides, bindings, countValue);
  let approximate = false;
  if (!extents) {
    extents = [countValue !== undefined && countValue > 0 ? countValue : Number.MAX_SAFE_INTEGER];
    approximate = countValue === undefined;
  }
  return { name, decl, elementBytes, elementCount: count, shape: shapeOf(extents), shapeApproximate: approximate, layout, isScalar };
}

/**
 * Extents from the strides of the nests that index a linearised array: strides 1, NX, NX*NY give
 * extents NX, NY and count/(NX*NY). The nest with the most dimensions wins; strides must divide
 * each other for the shape to be used.
 */
function shapeFromStrides(all: S.Expr[][], bindings: ReadonlyMap<string, S.Expr>, count: number | undefined): number[] | undefined {
  const best = [...all].sort((a, b) => b.length - a.length)[0];
  if (!best || best.length < 2) return undefined;
  const values = best.map((s) => S.evaluate(s, bindings));
  if (values.some((v) => v === undefined || v <= 0)) return undefined;
  const v = values as number[];
  if (v[0] !== 1) return undefined;
  const extents: number[] = [];
  for (let d = 0; d + 1 < v.length; d++) {
    if (v[d + 1] % v[d] !== 0) return undefined;
    extents.push(v[d + 1] / v[d]);
  }
  const last = v[v.length - 1];
  extents.push(count !== undefined && count % last === 0 ? count / last : Number.MAX_SAFE_INTEGER);
  return extents;
}
