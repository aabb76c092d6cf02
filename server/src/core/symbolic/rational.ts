/**
 * Exact rational numbers on bigint.
 *
 * Coefficients of symbolic expressions must never pick up floating-point error (1/3 + 2/3 has
 * to be exactly 1, and byte counts such as 8*4096^3 must stay exact), so every coefficient is a
 * reduced fraction of two bigints. Values are plain frozen records and never mutated.
 */

export interface Rat {
  /** Numerator; carries the sign. */
  readonly n: bigint;
  /** Denominator; always positive, coprime with the numerator. */
  readonly d: bigint;
}

export function gcdBig(a: bigint, b: bigint): bigint {
  if (a < 0n) a = -a;
  if (b < 0n) b = -b;
  while (b !== 0n) {
    const t = a % b;
    a = b;
    b = t;
  }
  return a;
}

export function lcmBig(a: bigint, b: bigint): bigint {
  if (a === 0n || b === 0n) return 0n;
  const g = gcdBig(a, b);
  const r = (a / g) * b;
  return r < 0n ? -r : r;
}

/** Builds a reduced fraction; the caller guarantees a non-zero denominator. */
export function rat(n: bigint, d: bigint = 1n): Rat {
  if (d === 0n) throw new RangeError('rational with zero denominator');
  if (d < 0n) {
    n = -n;
    d = -d;
  }
  const g = gcdBig(n, d);
  return g === 1n || g === 0n ? { n, d } : { n: n / g, d: d / g };
}

export const R_ZERO: Rat = { n: 0n, d: 1n };
export const R_ONE: Rat = { n: 1n, d: 1n };

/**
 * Converts a finite JS number exactly. Every finite double is a dyadic rational, and doubling a
 * fractional double is exact, so the loop below terminates with an exact numerator.
 */
export function ratFromNumber(x: number): Rat {
  if (!Number.isFinite(x)) throw new RangeError(`not a finite number: ${x}`);
  if (Number.isInteger(x)) return { n: BigInt(x), d: 1n };
  let v = x;
  let d = 1n;
  while (!Number.isInteger(v)) {
    v *= 2;
    d *= 2n;
  }
  return rat(BigInt(v), d);
}

export function radd(a: Rat, b: Rat): Rat {
  if (a.d === 1n && b.d === 1n) return { n: a.n + b.n, d: 1n };
  return rat(a.n * b.d + b.n * a.d, a.d * b.d);
}

export function rneg(a: Rat): Rat {
  return { n: -a.n, d: a.d };
}

export function rsub(a: Rat, b: Rat): Rat {
  return radd(a, rneg(b));
}

export function rmul(a: Rat, b: Rat): Rat {
  if (a.d === 1n && b.d === 1n) return { n: a.n * b.n, d: 1n };
  return rat(a.n * b.n, a.d * b.d);
}

/** Division; the caller must rule out a zero divisor first. */
export function rdiv(a: Rat, b: Rat): Rat {
  return rat(a.n * b.d, a.d * b.n);
}

export function rcmp(a: Rat, b: Rat): number {
  const l = a.n * b.d;
  const r = b.n * a.d;
  return l < r ? -1 : l > r ? 1 : 0;
}

export function risZero(a: Rat): boolean {
  return a.n === 0n;
}

export function risInt(a: Rat): boolean {
  return a.d === 1n;
}

/** Truncation toward zero, which is what C `/` and Fortran integer `/` do. */
export function rtrunc(a: Rat): Rat {
  return { n: a.n / a.d, d: 1n };
}

/** Mathematical floor, used where the loop-count formula needs it (numeric trip counts). */
export function rfloor(a: Rat): Rat {
  const q = a.n / a.d;
  return { n: a.n < 0n && q * a.d !== a.n ? q - 1n : q, d: 1n };
}

export function rtoNumber(a: Rat): number {
  return a.d === 1n ? Number(a.n) : Number(a.n) / Number(a.d);
}

export function rtoString(a: Rat): string {
  return a.d === 1n ? a.n.toString() : `${a.n}/${a.d}`;
}
