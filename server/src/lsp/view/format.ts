/** Number formats of the editor views: bytes (the core's own format), seconds, speedup ranges. */
import { formatBytes } from '../../core/symbolic';
import type { Bound, Spread } from '../../core/estimate/types';
import { boundWords } from '../../core/estimate/terms';

export { formatBytes };

export interface QuantityLike {
  value: number | null;
  expr: string;
}

/** Bytes of a quantity: the number when bound, else the expression with its unit. */
export function bytesOf(q: QuantityLike): string {
  return q.value === null ? `${q.expr} B` : formatBytes(q.value);
}

/** An expression as a Markdown code span, so `*` and `_` are not read as emphasis. */
export function codeSpan(expr: string): string {
  return `\`${expr.replace(/`/g, "'")}\``;
}

/** A count with thousands separators, and the expression beside it (as a code span) when it says more. */
export function countMd(q: QuantityLike): string {
  if (q.value === null) return codeSpan(q.expr);
  const v = q.value.toLocaleString('en-US');
  return /^[\d,.\s]+$/.test(q.expr) || q.expr === String(q.value) ? v : `${v} = ${codeSpan(q.expr)}`;
}

export function bytesMd(q: QuantityLike): string {
  return q.value === null ? `${codeSpan(q.expr)} B` : formatBytes(q.value);
}

/** Seconds with three significant digits in the unit that keeps the mantissa between 1 and 1000. */
export function formatSeconds(s: number | null | undefined): string {
  if (s === null || s === undefined || !Number.isFinite(s)) return '—';
  const abs = Math.abs(s);
  const [v, unit] = abs >= 1 ? [s, 's'] : abs >= 1e-3 ? [s * 1e3, 'ms'] : abs >= 1e-6 ? [s * 1e6, 'µs'] : [s * 1e9, 'ns'];
  return `${Number(v.toPrecision(3))} ${unit}`;
}

/** Two significant digits: the inputs are estimates, and more digits would claim a precision they lack. */
export function formatFactor(x: number): string {
  return Number(x.toPrecision(2)).toString();
}

export function formatSpeedup(s: Spread | null | undefined): string {
  if (!s) return '—';
  return `${formatFactor(s.low)}–${formatFactor(s.high)}×`;
}

export function boundText(b: Bound | null | undefined): string {
  return boundWords(b);
}

export function formatIntensity(x: number | undefined): string {
  return x === undefined ? '—' : x.toFixed(2);
}

export function formatPerIteration(x: number): string {
  return Number.isInteger(x) ? String(x) : x.toFixed(2);
}
