/**
 * The canonical polynomial representation behind every symbolic quantity.
 *
 * An expression is a sum of terms; a term is an exact rational coefficient times a monomial; a
 * monomial is a product of atoms raised to positive integer powers. Atoms are either symbols or
 * opaque nodes (integer division, remainder, min, max, unknown calls) whose arguments are again
 * canonical expressions. Because terms are merged by a canonical monomial key and kept in one
 * fixed order, two expressions are equal exactly when their `key` strings are equal.
 */

import { R_ONE, R_ZERO, Rat, radd, rmul, rneg, risZero, rtoString } from './rational';

export type AtomKind = 'sym' | 'fdiv' | 'mod' | 'min' | 'max' | 'call';

/** One indivisible factor. Opaque atoms keep their (already canonical) argument expressions. */
export class Atom {
  readonly key: string;
  constructor(
    readonly kind: AtomKind,
    /** Symbol name, or the function name of a `call` atom; empty for the other kinds. */
    readonly name: string,
    readonly args: readonly Expr[],
  ) {
    // Arguments are length-prefixed so that nested keys can never be confused with each other.
    this.key =
      kind === 'sym'
        ? name
        : `\u0001${kind}:${name}(${args.map((a) => `${a.key.length}:${a.key}`).join('')})`;
  }
}

/**
 * Total order on atoms used both for printing and as the variable order of the monomial order.
 * Symbols come first and sort case-insensitively so that `j*NX` prints the way people write it.
 */
export function compareAtoms(a: Atom, b: Atom): number {
  if (a.key === b.key) return 0;
  const ra = a.kind === 'sym' ? 0 : 1;
  const rb = b.kind === 'sym' ? 0 : 1;
  if (ra !== rb) return ra - rb;
  if (ra === 0) {
    const la = a.name.toLowerCase();
    const lb = b.name.toLowerCase();
    if (la !== lb) return la < lb ? -1 : 1;
  }
  return a.key < b.key ? -1 : 1;
}

export type Factor = readonly [Atom, number];

export class Mono {
  readonly key: string;
  readonly degree: number;
  /** Factors sorted by `compareAtoms`, each atom at most once, exponents positive. */
  constructor(readonly factors: readonly Factor[]) {
    this.key = factors.map(([a, e]) => `${a.key.length}:${a.key}^${e};`).join('');
    this.degree = factors.reduce((s, [, e]) => s + e, 0);
  }
}

export const UNIT_MONO = new Mono([]);

export function monoMul(a: Mono, b: Mono): Mono {
  if (a.factors.length === 0) return b;
  if (b.factors.length === 0) return a;
  const out: Factor[] = [];
  let i = 0;
  let j = 0;
  while (i < a.factors.length || j < b.factors.length) {
    if (i >= a.factors.length) out.push(b.factors[j++]);
    else if (j >= b.factors.length) out.push(a.factors[i++]);
    else {
      const c = compareAtoms(a.factors[i][0], b.factors[j][0]);
      if (c < 0) out.push(a.factors[i++]);
      else if (c > 0) out.push(b.factors[j++]);
      else out.push([a.factors[i][0], a.factors[i++][1] + b.factors[j++][1]]);
    }
  }
  return new Mono(out);
}

/** Returns a/b when b divides a as a monomial, otherwise undefined. */
export function monoDiv(a: Mono, b: Mono): Mono | undefined {
  const out: Factor[] = [];
  let j = 0;
  for (const [atom, e] of a.factors) {
    if (j < b.factors.length && b.factors[j][0].key === atom.key) {
      const r = e - b.factors[j++][1];
      if (r < 0) return undefined;
      if (r > 0) out.push([atom, r]);
    } else out.push([atom, e]);
  }
  return j === b.factors.length ? new Mono(out) : undefined;
}

/**
 * Graded lexicographic monomial order: higher degree first, then the monomial with the larger
 * exponent on the first atom where they differ. It is compatible with multiplication, which the
 * exact polynomial division relies on, and it gives the printed order 'NX*NY - 2*NX - 2*NY + 4'.
 */
export function compareMonos(a: Mono, b: Mono): number {
  if (a.degree !== b.degree) return b.degree - a.degree;
  let i = 0;
  let j = 0;
  while (i < a.factors.length && j < b.factors.length) {
    const c = compareAtoms(a.factors[i][0], b.factors[j][0]);
    if (c !== 0) return c;
    const d = b.factors[j][1] - a.factors[i][1];
    if (d !== 0) return d;
    i++;
    j++;
  }
  return i < a.factors.length ? -1 : j < b.factors.length ? 1 : 0;
}

export interface Term {
  readonly coef: Rat;
  readonly mono: Mono;
}

let printer: (e: Expr) => string = (e) => e.key;

/** Lets the printer module install itself without an import cycle. */
export function setPrinter(p: (e: Expr) => string): void {
  printer = p;
}

/** An immutable symbolic integer expression in canonical polynomial form. */
export class Expr {
  /** Non-zero terms, highest monomial first (see `compareMonos`). */
  readonly terms: readonly Term[];
  private cachedKey: string | undefined;

  private constructor(terms: Term[]) {
    terms.sort((x, y) => compareMonos(x.mono, y.mono));
    this.terms = terms;
  }

  /**
   * Canonical identity: equal keys mean equal expressions. Built on first use, because most
   * expressions are intermediate results that are never compared.
   */
  get key(): string {
    this.cachedKey ??= this.terms.map((t) => `${rtoString(t.coef)}\u0003${t.mono.key}`).join('\u0004');
    return this.cachedKey;
  }

  /** Builds an expression from terms that may repeat monomials or carry zero coefficients. */
  static of(terms: Iterable<Term>): Expr {
    // One term or none (the most frequent case: a symbol, a constant) needs no merging table.
    if (Array.isArray(terms) && terms.length <= 1) {
      const list = terms as Term[];
      return new Expr(list.length === 1 && !risZero(list[0].coef) ? [list[0]] : []);
    }
    const map = new Map<string, Term>();
    for (const t of terms) {
      const prev = map.get(t.mono.key);
      map.set(t.mono.key, prev ? { coef: radd(prev.coef, t.coef), mono: t.mono } : t);
    }
    return new Expr([...map.values()].filter((t) => !risZero(t.coef)));
  }

  toString(): string {
    return printer(this);
  }
}

export function constant(r: Rat): Expr {
  return Expr.of([{ coef: r, mono: UNIT_MONO }]);
}

export function atomExpr(a: Atom): Expr {
  return Expr.of([{ coef: R_ONE, mono: new Mono([[a, 1]]) }]);
}

export const ZERO = constant(R_ZERO);
export const ONE = constant(R_ONE);

/** The constant value when the expression has no atoms at all. */
export function constRat(e: Expr): Rat | undefined {
  if (e.terms.length === 0) return R_ZERO;
  if (e.terms.length === 1 && e.terms[0].mono.factors.length === 0) return e.terms[0].coef;
  return undefined;
}

/** The atom when the expression is exactly one atom with coefficient 1 and exponent 1. */
export function soleAtom(e: Expr): Atom | undefined {
  if (e.terms.length !== 1) return undefined;
  const t = e.terms[0];
  if (t.coef.n !== 1n || t.coef.d !== 1n || t.mono.factors.length !== 1) return undefined;
  const [a, p] = t.mono.factors[0];
  return p === 1 ? a : undefined;
}

export function addExprs(xs: readonly Expr[]): Expr {
  if (xs.length === 1) return xs[0];
  return Expr.of(xs.flatMap((x) => x.terms));
}

export function scaleExpr(e: Expr, r: Rat): Expr {
  if (risZero(r)) return ZERO;
  return Expr.of(e.terms.map((t) => ({ coef: rmul(t.coef, r), mono: t.mono })));
}

export function negExpr(e: Expr): Expr {
  return Expr.of(e.terms.map((t) => ({ coef: rneg(t.coef), mono: t.mono })));
}

/** Distributes the product, so the result is again an expanded polynomial. */
export function mulExprs(xs: readonly Expr[]): Expr {
  let acc = ONE;
  for (const x of xs) {
    if (x.terms.length === 0) return ZERO;
    // A product with one: the other factor as it is (expressions are immutable).
    if (x === ONE) continue;
    if (acc === ONE) {
      acc = x;
      continue;
    }
    const out: Term[] = [];
    for (const a of acc.terms) {
      for (const b of x.terms) out.push({ coef: rmul(a.coef, b.coef), mono: monoMul(a.mono, b.mono) });
    }
    acc = Expr.of(out);
  }
  return acc;
}

/** Integer power by repeated squaring; exponent 0 gives 1. */
export function powExpr(e: Expr, k: number): Expr {
  let result = ONE;
  let base = e;
  while (k > 0) {
    if (k & 1) result = mulExprs([result, base]);
    k >>= 1;
    if (k > 0) base = mulExprs([base, base]);
  }
  return result;
}

/** Collects every symbol name, looking inside opaque atoms too. */
export function collectSymbols(e: Expr, out: Set<string>): void {
  for (const t of e.terms) {
    for (const [a] of t.mono.factors) {
      if (a.kind === 'sym') out.add(a.name);
      else for (const x of a.args) collectSymbols(x, out);
    }
  }
}
