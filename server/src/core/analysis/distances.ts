/**
 * Dependence distances under loop bounds: do two iterations of a nest touch the same element?
 *
 * For references `c·I + r_w` (a write) and `c·I + r_x` with the same coefficients `c` over the
 * loops that enclose both, iterations `I` and `I + e` touch the same element exactly when
 * `Σ c_k e_k = r_w - r_x`, with every `|e_k|` at most the trip count of loop k minus one. This is
 * the dependence equation with Banerjee's bounds (Wolfe, *High Performance Compilers for Parallel
 * Computing*, 1996, ch. 5; Allen & Kennedy, *Optimizing Compilers for Modern Architectures*, 2001,
 * §3.3): when the bounds hold the equation has an integer solution only if the iteration spaces
 * of distinct iterations really overlap, which is how a linearised `a[j*nx + i]` with
 * `0 <= i <= nx` (one past the row) writes the element that the next row's `i = 0` writes.
 *
 * Two ways to decide it:
 *  - numerically, when every coefficient, difference and trip count has a value (the sizes are
 *    bound): an exact bounded search, pruned by the Banerjee bounds of the remaining loops and by
 *    the GCD of their coefficients;
 *  - symbolically, when sizes are unbound: a solution is reported only when it is *proven* for
 *    every value of the sizes (each size at least 1), by trying small distances for all loops but
 *    one and solving that one exactly. Nothing is reported on a guess; an unproven case is silent.
 *
 * Either way the answer is, for each loop that could carry the dependence (its distance is the
 * first non-zero one), the smallest distance at which it does.
 */
import * as S from '../symbolic';
import { exactQuotient } from '../symbolic/ops';

export interface DistanceProblem {
  /** Coefficient of each enclosing loop's iteration count (coefficient × step), outermost first. */
  coeffs: S.Expr[];
  /** Trip count of each loop; undefined when it is not known at all. */
  trips: (S.Expr | undefined)[];
  /** Right-hand side: r_w - r_x. */
  target: S.Expr;
  /** Values of bound sizes. */
  bindings: ReadonlyMap<string, S.Expr>;
}

/** A distance vector e (iterations of the second reference minus those of the first), outermost first. */
export interface Distance {
  /** Index of the first non-zero component: the loop that carries the dependence. */
  carrier: number;
  vector: number[];
  /** Symbolic components when the proof was symbolic (e.g. `-nx`); numbers otherwise. */
  shown: string[];
  /** True when the solution rests on sizes the tool could not bind (proven for every value). */
  symbolic: boolean;
}

/** Work limit of the numeric search (nodes visited per carrier tried). */
const BUDGET = 20_000;

/**
 * Distances at which the two references meet, one per loop that can carry it (the smallest
 * distance for that loop), restricted to `carriers`. Empty when none is proven.
 */
export function solveDistances(p: DistanceProblem, carriers: ReadonlySet<number>): Distance[] {
  const numeric = numericProblem(p);
  if (numeric) return numericSolutions(numeric, carriers);
  return symbolicSolutions(p, carriers);
}

// ---- numeric -----------------------------------------------------------------------------

interface Numeric {
  c: number[];
  u: number[];
  t: number;
}

/**
 * Substitutes bindings through the values of the expression's own symbols, each resolved once
 * per bindings map: substituting with a file's whole table re-reads every key on each call.
 */
const resolved = new WeakMap<ReadonlyMap<string, S.Expr>, Map<string, S.Expr>>();
function bind(e: S.Expr, b: ReadonlyMap<string, S.Expr>): S.Expr {
  const names = S.freeSymbols(e).filter((n) => b.has(n));
  if (names.length === 0) return e;
  let cache = resolved.get(b);
  if (!cache) resolved.set(b, (cache = new Map()));
  const small = new Map<string, S.Expr>();
  for (const n of names) {
    let v = cache.get(n);
    if (!v) cache.set(n, (v = S.substitute(S.sym(n), b)));
    small.set(n, v);
  }
  return S.substitute(e, small);
}

function numericProblem(p: DistanceProblem): Numeric | undefined {
  const value = (e: S.Expr): number | undefined => {
    const v = S.constValue(bind(e, p.bindings));
    return v !== undefined && Number.isSafeInteger(v) ? v : undefined;
  };
  const c = p.coeffs.map(value);
  const u = p.trips.map((t) => (t ? value(t) : undefined)).map((t) => (t === undefined ? undefined : t - 1));
  const t = value(p.target);
  if (t === undefined || c.some((x) => x === undefined) || u.some((x) => x === undefined || x < 0)) return undefined;
  return { c: c as number[], u: u as number[], t };
}

function numericSolutions(p: Numeric, carriers: ReadonlySet<number>): Distance[] {
  const out: Distance[] = [];
  for (let k = 0; k < p.c.length; k++) {
    if (!carriers.has(k) || p.u[k] < 1) continue;
    // Loops outside the carrier run the same iteration (distance 0); the carrier's distance e
    // must leave a rest the inner loops can make up: |t - c_k·e| <= Σ |c_q|·u_q (Banerjee).
    const inner = p.c.map((c, m) => ({ c, u: p.u[m], m })).filter((x) => x.m > k && x.c !== 0);
    const reach = inner.reduce((r, x) => r + Math.abs(x.c) * x.u, 0);
    const ck = p.c[k];
    let lo = -p.u[k];
    let hi = p.u[k];
    if (ck !== 0) {
      const a = (p.t - reach) / ck;
      const b = (p.t + reach) / ck;
      lo = Math.max(lo, Math.ceil(Math.min(a, b)));
      hi = Math.min(hi, Math.floor(Math.max(a, b)));
    } else if (Math.abs(p.t) > reach) continue;
    // Smallest distance first, both signs; with a zero coefficient every distance gives the
    // same equation, so distance 1 stands for all.
    const tries: number[] = [];
    // The first |e| the range holds (a range far from zero starts there, not at 1).
    const first = lo > 0 ? lo : hi < 0 ? -hi : 1;
    for (let d = Math.max(1, first); d <= Math.max(Math.abs(lo), Math.abs(hi)) && tries.length < BUDGET; d++) {
      for (const e of [d, -d]) if (e >= lo && e <= hi) tries.push(e);
      if (ck === 0) break;
    }
    const budget = { left: BUDGET };
    for (const e of tries) {
      const sol = feasible(inner, p.t - ck * e, budget);
      if (sol) {
        const vector = p.c.map(() => 0);
        vector[k] = e;
        sol.forEach((v, q) => { vector[inner[q].m] = v; });
        out.push({ carrier: k, vector, shown: vector.map(String), symbolic: false });
        break;
      }
      if (budget.left <= 0) break;
    }
  }
  return out;
}

/**
 * A solution of Σ c_q e_q = t with |e_q| <= u_q, or undefined. Depth-first over the loops by
 * decreasing |c|, each level limited by the bounds the remaining loops can still make up
 * (Banerjee) and by the gcd of their coefficients.
 */
export function feasible(vars: { c: number; u: number }[], t: number, budget: { left: number }): number[] | undefined {
  if (vars.length === 0) return t === 0 ? [] : undefined;
  const order = vars.map((v, q) => ({ ...v, q })).sort((a, b) => Math.abs(b.c) - Math.abs(a.c));
  const reach: number[] = [];
  const gcds: number[] = [];
  for (let k = order.length - 1, r = 0, g = 0; k >= 0; k--) {
    reach[k + 1] = r;
    gcds[k] = g = gcd(g, Math.abs(order[k].c));
    r += Math.abs(order[k].c) * order[k].u;
  }
  const e = order.map(() => 0);
  const rec = (k: number, rest: number): boolean => {
    if (--budget.left < 0) return false;
    if (k === order.length) return rest === 0;
    if (gcds[k] !== 0 && rest % gcds[k] !== 0) return false;
    const { c, u } = order[k];
    const r = reach[k + 1];
    // |rest - c·e| <= r  ⇔  (rest - r)/c <= e <= (rest + r)/c for c > 0.
    let lo = Math.ceil((rest - r) / c);
    let hi = Math.floor((rest + r) / c);
    if (c < 0) [lo, hi] = [Math.ceil((rest + r) / c), Math.floor((rest - r) / c)];
    lo = Math.max(lo, -u);
    hi = Math.min(hi, u);
    for (let v = lo; v <= hi; v++) {
      e[k] = v;
      if (rec(k + 1, rest - c * v)) return true;
      if (budget.left < 0) return false;
    }
    e[k] = 0;
    return false;
  };
  if (!rec(0, t)) return undefined;
  const out = vars.map(() => 0);
  order.forEach((o, k) => { out[o.q] = e[k]; });
  return out;
}

function gcd(a: number, b: number): number {
  return b === 0 ? a : gcd(b, a % b);
}

// ---- symbolic -------------------------------------------------------------------------------

/** Small distances tried for every loop but the one solved exactly. */
const TRIED = [1, -1, 2, -2];

function symbolicSolutions(p: DistanceProblem, carriers: ReadonlySet<number>): Distance[] {
  const c = p.coeffs.map((x) => bind(x, p.bindings));
  const t = bind(p.target, p.bindings);
  const u = p.trips.map((x) => (x ? S.sub(bind(x, p.bindings), S.num(1)) : undefined));
  if (u.some((x) => !x)) return [];
  // A solution proven for every size is one at any particular sizes too: the numeric search at
  // probe values rules most pairs out cheaply before any polynomial is divided.
  const probe = probeProblem(c, u as S.Expr[], t);
  const out: Distance[] = [];
  for (let k = 0; k < c.length; k++) {
    if (!carriers.has(k) || !u[k]) continue;
    if (probe && numericSolutions(probe, new Set([k])).length === 0) continue;
    const inner = c.map((_, m) => m).filter((m) => m > k && !isZero(c[m]));
    const solved = trySymbolic(k, inner, c, u, t);
    if (solved) out.push({ carrier: k, vector: solved.map((x) => S.constValue(x) ?? NaN), shown: solved.map((x) => S.toString(x)), symbolic: true });
  }
  return out;
}

/**
 * Tries carrier distances ±1, ±2 and, for the inner loops, 0 and small distances for all but
 * the one solved exactly (the innermost with a non-zero coefficient that divides what is left).
 * A candidate counts only when every bound is proven for all sizes.
 */
function trySymbolic(k: number, inner: number[], c: S.Expr[], u: (S.Expr | undefined)[], t: S.Expr): S.Expr[] | undefined {
  if (inner.some((m) => !u[m])) return undefined;
  const solveFor = [...inner].reverse();
  for (const dk of TRIED) {
    // The carrier's own bound: a distance of 1 needs the loop to run twice, which any loop that
    // carries anything does; larger distances must be proven.
    if (Math.abs(dk) > 1 && !provablyNonNegative(S.sub(u[k]!, S.num(Math.abs(dk))))) continue;
    const afterCarrier = S.sub(t, S.mul(c[k], S.num(dk)));
    if (isZero(c[k]) && dk !== 1) break;
    for (const s of solveFor) {
      const others = inner.filter((m) => m !== s);
      for (const combo of combinations(others.length)) {
        let rest = afterCarrier;
        const e = new Map<number, S.Expr>();
        let ok = true;
        others.forEach((m, q) => {
          const v = combo[q];
          if (v !== 0 && !provablyNonNegative(S.sub(u[m]!, S.num(Math.abs(v))))) ok = false;
          e.set(m, S.num(v));
          rest = S.sub(rest, S.mul(c[m], S.num(v)));
        });
        if (!ok) continue;
        const q = exactQuotient(rest, c[s]);
        if (!q || !integral(q)) continue;
        // |q| <= u_s, both ways, for every value of the sizes.
        if (!provablyNonNegative(S.sub(u[s]!, q)) || !provablyNonNegative(S.add(u[s]!, q))) continue;
        e.set(s, q);
        return c.map((_, m) => (m === k ? S.num(dk) : e.get(m) ?? S.num(0)));
      }
    }
    if (inner.length === 0 && isZero(afterCarrier)) return c.map((_, m) => (m === k ? S.num(dk) : S.num(0)));
  }
  return undefined;
}

/** The problem at probe sizes (distinct primes above 10,000), or undefined when one does not evaluate. */
function probeProblem(c: S.Expr[], u: S.Expr[], t: S.Expr): Numeric | undefined {
  const names = [...new Set([...c, ...u, t].flatMap((e) => S.freeSymbols(e)))];
  const values = new Map(names.map((n, k) => [n, S.num(10_007 + 1_009 * k)]));
  const value = (e: S.Expr): number | undefined => {
    const v = S.constValue(S.substitute(e, values));
    return v !== undefined && Number.isSafeInteger(v) ? v : undefined;
  };
  const cs = c.map(value);
  const us = u.map(value);
  const tv = value(t);
  if (tv === undefined || cs.some((x) => x === undefined) || us.some((x) => x === undefined || x < 0)) return undefined;
  return { c: cs as number[], u: us as number[], t: tv };
}

function* combinations(n: number): Generator<number[]> {
  const values = [0, ...TRIED];
  const idx = new Array<number>(n).fill(0);
  for (;;) {
    yield idx.map((i) => values[i]);
    let k = 0;
    while (k < n && ++idx[k] === values.length) idx[k++] = 0;
    if (k === n) return;
  }
}

function isZero(e: S.Expr): boolean {
  return S.constValue(e) === 0;
}

function integral(e: S.Expr): boolean {
  return e.terms.every((t) => t.coef.d === 1n);
}

/**
 * True when the polynomial is at least 0 for every value of its symbols that is at least 1
 * (sizes and extents): with each symbol written s = 1 + s', every coefficient is non-negative.
 * Opaque atoms (divisions, min, max, calls) are not proven.
 */
export function provablyNonNegative(e: S.Expr): boolean {
  const symbols = S.freeSymbols(e);
  for (const t of e.terms) for (const [a] of t.mono.factors) if (a.kind !== 'sym') return false;
  const shifted = symbols.length === 0 ? e : S.substitute(e, new Map(symbols.map((s) => [s, S.add(S.sym(s), S.num(1))])));
  return shifted.terms.every((t) => t.coef.n >= 0n);
}
