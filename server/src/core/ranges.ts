/** Comparisons of source ranges (0-based positions, half-open ranges). */
import type { Pos, Range } from './types';

export function positionBefore(a: Pos, b: Pos): boolean {
  return a.line < b.line || (a.line === b.line && a.col <= b.col);
}

/** True when `inner` lies inside `outer` (bounds included). */
export function rangeWithin(inner: Range, outer: Range): boolean {
  return positionBefore(outer.start, inner.start) && positionBefore(inner.end, outer.end);
}
