/**
 * Constructors and arithmetic. Every function returns a canonical expression, so simplification
 * happens here and nowhere else: polynomial arithmetic expands, and opaque atoms (integer
 * division, remainder, min, max, calls) fold whenever that is exact.
 *
 * Integer division and remainder follow C and Fortran: the quotient truncates toward zero and the
 * remainder takes the sign of the dividend. Symbols are assumed to stand for integers, so a
 * polynomial with integer coefficients is integer-valued.
 */

import {
  Atom,
  Expr,
  Term,
  ZERO,
  addExprs,
  atomExpr,
  constRat,
  constant,
  monoDiv,
  mulExprs,
  negExpr,
  scaleExpr,
  soleAtom,
} from './expr';
import { R_ONE, gcdBig, rat, ratFromNumber, rcmp, rdiv, risZero, rmul, rsub, rtoNumber, rtrunc } from './rational';

export function num(n: number): Expr {
  return constant(ratFromNumber(n));
}

/** Symbols are made once per name (expressions are immutable, so one object serves every use). */
const symbols = new Map<string, Expr>();
const MAX_SYMBOLS = 1 << 16;

export function sym(name: string): Expr {
  let e = symbols.get(name);
  if (!e) {
    if (symbols.size >= MAX_SYMBOLS) symbols.clear();
    e = atomExpr(new Atom('sym', name, []));
    symbols.set(name, e);
  }
  return e;
}

export function add(...xs: Expr[]): Expr {
  return xs.length === 0 ? ZERO : addExprs(xs);
}

export function neg(a: Expr): Expr {
  return negExpr(a);
}

export function sub(a: Expr, b: Expr): Expr {
  return addExprs([a, negExpr(b)]);
}

export function mul(...xs: Expr[]): Expr {
  return mulExprs(xs);
}

export function isConst(e: Expr): boolean {
  return constRat(e) !== undefined;
}

export function constValue(e: Expr): number | undefined {
  const c = constRat(e);
  return c === undefined ? undefined : rtoNumber(c);
}

export function equals(a: Expr, b: Expr): boolean {
  return a.key === b.key;
}

function integral(e: Expr): boolean {
  return e.terms.every((t) => t.coef.d === 1n);
}

/** Greatest common divisor of the (integer) coefficients; 0 for the zero expression. */
function content(e: Expr): bigint {
  let g = 0n;
  for (const t of e.terms) g = gcdBig(g, t.coef.n);
  return g;
}

function leadingNegative(e: Expr): boolean {
  return e.terms.length > 0 && e.terms[0].coef.n < 0n;
}

/**
 * Exact multivariate division a/b over the rationals, or undefined when b does not divide a.
 * A single polynomial is always a Gröbner basis of the ideal it generates, so the division
 * algorithm leaves remainder zero exactly when b divides a; we can therefore stop as soon as the
 * leading term of the remainder is not a multiple of the leading term of b.
 */
export function exactQuotient(a: Expr, b: Expr): Expr | undefined {
  const bc = constRat(b);
  if (bc) return risZero(bc) ? undefined : scaleExpr(a, rdiv(R_ONE, bc));
  const lead = b.terms[0];
  const quotient: Term[] = [];
  let r = a;
  for (let guard = 0; r.terms.length > 0; guard++) {
    if (guard > 10_000) return undefined;
    const m = monoDiv(r.terms[0].mono, lead.mono);
    if (!m) return undefined;
    const t: Term = { coef: rdiv(r.terms[0].coef, lead.coef), mono: m };
    quotient.push(t);
    r = addExprs([r, negExpr(mulExprs([Expr.of([t]), b]))]);
  }
  return Expr.of(quotient);
}

function isZeroConst(e: Expr): boolean {
  const c = constRat(e);
  return c !== undefined && risZero(c);
}

function opaque(kind: 'fdiv' | 'mod', a: Expr, b: Expr): Expr {
  return atomExpr(new Atom(kind, '', [a, b]));
}

/**
 * Makes the leading coefficients of both operands positive and cancels their common integer
 * content. Both steps are exact under truncating division, and they make equal quotients
 * (`-N/2`, `N/-2`, `(2*N)/4`) share one canonical atom.
 */
function normalise(a: Expr, b: Expr): { a: Expr; b: Expr; negate: boolean; scale: bigint } {
  let negate = false;
  if (leadingNegative(b)) {
    b = negExpr(b);
    negate = !negate;
  }
  if (leadingNegative(a)) {
    a = negExpr(a);
    negate = !negate;
  }
  let scale = 1n;
  if (integral(a) && integral(b)) {
    const g = gcdBig(content(a), content(b));
    if (g > 1n) {
      a = scaleExpr(a, rat(1n, g));
      b = scaleExpr(b, rat(1n, g));
      scale = g;
    }
  }
  return { a, b, negate, scale };
}

/**
 * C/Fortran integer division (truncating; equal to floor for non-negative operands). Exact
 * divisions such as `(2*n)/2` or `(n*m)/n` simplify to the quotient; anything else becomes an
 * opaque atom. A zero divisor is kept as an atom so that evaluation reports it as undefined.
 */
export function floorDiv(a: Expr, b: Expr): Expr {
  if (isZeroConst(b)) return opaque('fdiv', a, b);
  const ca = constRat(a);
  const cb = constRat(b);
  if (ca && cb) return constant(rtrunc(rdiv(ca, cb)));
  const n = normalise(a, b);
  const r = nestedQuotient(n.a, n.b) ?? exactIntQuotient(n.a, n.b) ?? opaque('fdiv', n.a, n.b);
  return n.negate ? negExpr(r) : r;
}

function exactIntQuotient(a: Expr, b: Expr): Expr | undefined {
  const q = exactQuotient(a, b);
  return q && integral(q) ? q : undefined;
}

/**
 * (x/p)/q is x/(p*q) for integer x and positive integers p, q; this holds for truncating as well
 * as flooring division, so repeated halving such as `(N/2)/2` reads as `N/4`.
 */
function nestedQuotient(a: Expr, b: Expr): Expr | undefined {
  const inner = soleAtom(a);
  const q = constRat(b);
  if (!inner || inner.kind !== 'fdiv' || !q || q.d !== 1n || q.n <= 0n) return undefined;
  const p = constRat(inner.args[1]);
  if (!p || p.d !== 1n || p.n <= 0n || !integral(inner.args[0])) return undefined;
  return floorDiv(inner.args[0], constant(rat(p.n * q.n)));
}

/**
 * Exact rational division, for averages such as bytes per iteration. It only divides by a
 * constant or an exact polynomial divisor; otherwise it falls back to integer division.
 */
export function div(a: Expr, b: Expr): Expr {
  if (isZeroConst(b)) return opaque('fdiv', a, b);
  return exactQuotient(a, b) ?? floorDiv(a, b);
}

/** C `%` and Fortran `mod`: the remainder has the sign of the dividend. */
export function mod(a: Expr, b: Expr): Expr {
  if (isZeroConst(b)) return opaque('mod', a, b);
  const ca = constRat(a);
  const cb = constRat(b);
  if (ca && cb) return constant(rsub(ca, rmul(cb, rtrunc(rdiv(ca, cb)))));
  // mod(a, -b) = mod(a, b) and mod(-a, b) = -mod(a, b), so only the dividend's sign matters.
  const n = normalise(a, b);
  if (exactIntQuotient(n.a, n.b)) return ZERO;
  const r = scaleExpr(opaque('mod', n.a, n.b), rat(n.scale));
  return leadingNegative(a) ? negExpr(r) : r;
}

/**
 * n-ary min/max: nested atoms of the same kind are flattened, arguments whose difference is a
 * constant are decided immediately (so `min(n, n + 1)` is `n`), and the survivors are sorted so
 * that argument order does not matter.
 */
export function minMax(kind: 'min' | 'max', xs: readonly Expr[]): Expr {
  const flat: Expr[] = [];
  for (const x of xs) {
    const a = soleAtom(x);
    if (a && a.kind === kind) flat.push(...a.args);
    else flat.push(x);
  }
  const kept: Expr[] = [];
  outer: for (const c of flat) {
    for (let i = 0; i < kept.length; i++) {
      const d = constRat(addExprs([c, negExpr(kept[i])]));
      if (d === undefined) continue;
      const s = rcmp(d, { n: 0n, d: 1n });
      if (kind === 'min' ? s >= 0 : s <= 0) continue outer;
      kept.splice(i--, 1);
    }
    kept.push(c);
  }
  if (kept.length === 1) return kept[0];
  kept.sort((p, q) => (p.key < q.key ? -1 : p.key > q.key ? 1 : 0));
  return atomExpr(new Atom(kind, '', kept));
}

export function min(a: Expr, b: Expr): Expr {
  return minMax('min', [a, b]);
}

export function max(a: Expr, b: Expr): Expr {
  return minMax('max', [a, b]);
}

/** An unknown function such as Fortran `size(a, 1)`: kept opaque, arguments canonicalised. */
export function call(name: string, args: Expr[]): Expr {
  return atomExpr(new Atom('call', name, args));
}

/** Rebuilds an opaque atom from new arguments through the simplifying constructors. */
export function rebuildAtom(a: Atom, args: readonly Expr[]): Expr {
  switch (a.kind) {
    case 'sym':
      return atomExpr(a);
    case 'fdiv':
      return floorDiv(args[0], args[1]);
    case 'mod':
      return mod(args[0], args[1]);
    case 'min':
    case 'max':
      return minMax(a.kind, args);
    case 'call':
      return call(a.name, [...args]);
  }
}

