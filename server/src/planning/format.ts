/** Text formats of the planning report: escaping, bytes (IEC prefixes, as the CLI prints them), times, rates. */

export const esc = (s: string): string => s.replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/>/g, '&gt;').replace(/"/g, '&quot;');

const UNITS = ['B', 'KiB', 'MiB', 'GiB', 'TiB'];

export function bytes(n: number | null | undefined): string {
  if (n === null || n === undefined) return '—';
  let v = n;
  let u = 0;
  while (Math.abs(v) >= 1024 && u < UNITS.length - 1) {
    v /= 1024;
    u++;
  }
  return `${u === 0 ? Number(v.toPrecision(3)) : v.toFixed(1)} ${UNITS[u]}`;
}

/** The IEC unit a chart of byte values is drawn in (so its axis reads 1.5 MiB rather than 1,572,864). */
export function byteUnit(max: number): { name: string; size: number } {
  let u = 0;
  while (max >= 1024 ** (u + 1) && u < UNITS.length - 1) u++;
  return { name: UNITS[u], size: 1024 ** u };
}

export function seconds(s: number | null | undefined): string {
  if (s === null || s === undefined) return '—';
  const a = Math.abs(s);
  const [v, unit] = a >= 1 ? [s, 's'] : a >= 1e-3 ? [s * 1e3, 'ms'] : a >= 1e-6 ? [s * 1e6, 'µs'] : [s * 1e9, 'ns'];
  return `${Number(v.toPrecision(3))} ${unit}`;
}

/** Two significant digits: speedups are ranges from efficiency bounds, not measurements. */
export const factor = (x: number): string => Number(x.toPrecision(2)).toString();

/** A rate with SI prefixes: 9.7 TFlop/s, 1.7 TB/s (decimal, as datasheets and the profiles give them). */
export function rate(x: number, unit: string): string {
  const prefixes: [number, string][] = [[1e15, 'P'], [1e12, 'T'], [1e9, 'G'], [1e6, 'M'], [1e3, 'k']];
  for (const [f, p] of prefixes) if (Math.abs(x) >= f) return `${Number((x / f).toPrecision(3))} ${p}${unit}`;
  return `${Number(x.toPrecision(3))} ${unit}`;
}

/** Arithmetic intensity in flop per byte, three significant digits. */
export const intensity = (x: number | null | undefined): string => (x === null || x === undefined ? '—' : Number(x.toPrecision(3)).toString());

export const percent = (x: number | null | undefined): string => (x === null || x === undefined ? '—' : `${x >= 0.1 ? Math.round(x * 100) : Number((x * 100).toPrecision(2))}%`);
