/**
 * Queries over canonical expressions: binding symbols, evaluating, and the shape questions the
 * loop analysis asks (is a subscript affine in the loop indices, what is a loop's trip count).
 */

import {
  Atom,
  Expr,
  Factor,
  Mono,
  ONE,
  Term,
  ZERO,
  addExprs,
  atomExpr,
  collectSymbols,
  constRat,
  constant,
  mulExprs,
  powExpr,
  soleAtom,
} from './expr';
import { floorDiv, num, rebuildAtom } from './ops';
import { printExpr } from './print';
import { R_ZERO, radd, rcmp, rdiv, rfloor, risZero, rtoNumber } from './rational';

/** Symbol (or call text such as 'size(a,1)') to the expression it stands for. */
export type Bindings = ReadonlyMap<string, Expr>;

export function freeSymbols(e: Expr): string[] {
  const out = new Set<string>();
  collectSymbols(e, out);
  return [...out].sort();
}

const stripSpace = (s: string) => s.replace(/\s+/g, '');

/** One substitution pass; `lookup` decides what a symbol or call atom becomes. */
function substOnce(e: Expr, lookup: (a: Atom) => Expr | undefined, cache: Map<string, Expr>): Expr {
  const atomValue = (a: Atom): Expr => {
    const hit = cache.get(a.key);
    if (hit) return hit;
    let v = a.kind === 'sym' || a.kind === 'call' ? lookup(a) : undefined;
    if (!v && a.kind !== 'sym') {
      v = rebuildAtom(a, a.args.map((x) => substOnce(x, lookup, cache)));
      // After its arguments changed, a call may match a binding under its new text.
      const c = soleAtom(v);
      if (c && c.kind === 'call' && c.key !== a.key) v = lookup(c) ?? v;
    }
    v ??= atomExpr(a);
    cache.set(a.key, v);
    return v;
  };
  const parts = e.terms.map((t) =>
    mulExprs([constant(t.coef), ...t.mono.factors.map(([a, p]) => powExpr(atomValue(a), p))]),
  );
  return addExprs(parts.length ? parts : [ZERO]);
}

/**
 * Resolves bindings to their transitive closure, so chains such as N -> 2*M, M -> 100 resolve
 * fully. Each binding is resolved once, depth first; a symbol reached again while it is being
 * resolved is part of a cycle and is simply left unbound, which guarantees termination.
 * Keys are matched exactly first and then ignoring white space, so 'size(a,1)' binds the call
 * atom printed as 'size(a, 1)'.
 */
function resolver(b: Bindings): (a: Atom) => Expr | undefined {
  const byText = keysOf(b).byText;
  const state = new Map<string, Expr | 'busy'>();
  const keyOf = (a: Atom): string | undefined => {
    if (a.kind === 'sym' && b.has(a.name)) return a.name;
    const text = a.kind === 'sym' ? a.name : printExpr(atomExpr(a), 'text');
    return byText.get(stripSpace(text));
  };
  const lookup = (a: Atom): Expr | undefined => {
    const key = keyOf(a);
    if (key === undefined) return undefined;
    const s = state.get(key);
    if (s === 'busy') return undefined;
    if (s) return s;
    state.set(key, 'busy');
    // A fresh cache: values seen while another binding is half-resolved must not leak out.
    const r = substOnce(b.get(key)!, lookup, new Map());
    state.set(key, r);
    return r;
  };
  return lookup;
}

/** Replaces bound symbols (and bound call texts) and re-simplifies; cycles stay symbolic. */
export function substitute(e: Expr, b: Bindings): Expr {
  if (b.size === 0) return e;
  // Nothing to replace: skip the rebuild. Calls can be bound by their text (`size(a,1)`), so the
  // shortcut applies only when no binding names a call.
  if (!hasCallKeys(b) && !bindsAny(e, b)) return e;
  return substOnce(e, resolver(b), new Map());
}

/**
 * What the keys of a bindings map hold, indexed once per map: whether any binds a call text, and
 * each key by its text without white space. (A map of a thousand file-level sizes is read by
 * many substitutions; a map that grew or shrank since is indexed again. Maps are built, then read:
 * none is changed in place to other keys of the same count.)
 */
const keyIndexes = new WeakMap<Bindings, { size: number; calls: boolean; byText: Map<string, string> }>();
function keysOf(b: Bindings): { calls: boolean; byText: Map<string, string> } {
  const hit = keyIndexes.get(b);
  if (hit && hit.size === b.size) return hit;
  let calls = false;
  const byText = new Map<string, string>();
  for (const k of b.keys()) {
    if (!calls && k.includes('(')) calls = true;
    byText.set(stripSpace(k), k);
  }
  const ix = { size: b.size, calls, byText };
  keyIndexes.set(b, ix);
  return ix;
}

/** Whether `b` binds any symbol of `e` (read in place, stopping at the first). */
function bindsAny(e: Expr, b: Bindings): boolean {
  for (const t of e.terms) {
    for (const [a] of t.mono.factors) {
      if (a.kind === 'sym' ? b.has(a.name) : a.args.some((x) => bindsAny(x, b))) return true;
    }
  }
  return false;
}

function hasCallKeys(b: Bindings): boolean {
  return keysOf(b).calls;
}

/** Numeric value, or undefined when a symbol stays unbound or a division by zero remains. */
export function evaluate(e: Expr, b: ReadonlyMap<string, number | Expr>): number | undefined {
  let m: Bindings;
  if (allExprs(b)) m = b as Bindings;
  else {
    const copy = new Map<string, Expr>();
    for (const [k, v] of b) {
      if (typeof v !== 'number') copy.set(k, v);
      else if (Number.isFinite(v)) copy.set(k, num(v));
    }
    m = copy;
  }
  const c = constRat(substitute(e, m));
  return c === undefined ? undefined : rtoNumber(c);
}

function mentions(a: Atom, vars: ReadonlySet<string>): boolean {
  if (a.kind === 'sym') return vars.has(a.name);
  const s = new Set<string>();
  for (const x of a.args) collectSymbols(x, s);
  for (const v of s) if (vars.has(v)) return true;
  return false;
}

/**
 * Splits e into sum(coeff_v * v) + rest. Every variable in `vars` gets an entry (zero when it
 * does not occur). Returns undefined when e is not affine in vars: a variable squared, two
 * variables multiplied, or a variable hidden in an opaque atom such as min(i, n).
 */
export function affine(
  e: Expr,
  vars: readonly string[],
): { coeffs: Map<string, Expr>; rest: Expr } | undefined {
  const vs = new Set(vars);
  const acc = new Map<string, Term[]>();
  for (const v of vs) acc.set(v, []);
  const rest: Term[] = [];
  for (const t of e.terms) {
    let found: string | undefined;
    const others: Factor[] = [];
    for (const f of t.mono.factors) {
      const [a, p] = f;
      if (a.kind === 'sym' && vs.has(a.name)) {
        if (found !== undefined || p !== 1) return undefined;
        found = a.name;
      } else if (mentions(a, vs)) return undefined;
      else others.push(f);
    }
    const term = { coef: t.coef, mono: others.length === t.mono.factors.length ? t.mono : new Mono(others) };
    (found === undefined ? rest : acc.get(found)!).push(term);
  }
  const coeffs = new Map<string, Expr>();
  for (const [v, ts] of acc) coeffs.set(v, Expr.of(ts));
  return { coeffs, rest: Expr.of(rest) };
}

/** Polynomial degree in v; 0 when absent; -1 when v occurs inside an opaque atom. */
export function degreeIn(e: Expr, v: string): number {
  const vs = new Set([v]);
  let deg = 0;
  for (const t of e.terms) {
    for (const [a, p] of t.mono.factors) {
      if (a.kind === 'sym') {
        if (a.name === v) deg = Math.max(deg, p);
      } else if (mentions(a, vs)) return -1;
    }
  }
  return deg;
}

/**
 * Iterations of `for (v = lower; v <= upper; v += step)`: floor((upper - lower)/step) + 1.
 * A symbolic result assumes the loop runs at least once (it is not wrapped in max(0, ..)),
 * because the bounds of real stencil loops are positive and a max would block simplification.
 * When the count is a number it is computed with true floor division and clamped at 0.
 */
export function tripCount(lower: Expr, upper: Expr, step: Expr): Expr {
  const span = addExprs([upper, mulExprs([constant({ n: -1n, d: 1n }), lower])]);
  const s = constRat(step);
  const cs = constRat(span);
  if (s && !risZero(s) && cs) {
    const c = radd(rfloor(rdiv(cs, s)), { n: 1n, d: 1n });
    return constant(rcmp(c, R_ZERO) < 0 ? R_ZERO : c);
  }
  if (s && s.n === 1n && s.d === 1n) return addExprs([span, ONE]);
  return addExprs([floorDiv(span, step), ONE]);
}

function allExprs(b: ReadonlyMap<string, number | Expr>): boolean {
  for (const v of b.values()) if (typeof v === 'number') return false;
  return true;
}
