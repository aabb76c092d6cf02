/**
 * Races in offloaded loops: loop-carried dependences in the dimensions a directive runs in
 * parallel, and scalar accumulations without a reduction clause.
 *
 * Dependences: for two references to one array, at least one a write, with the same affine
 * coefficients (uniform dependence, the stencil case) the distance vector is exact; the loop it
 * is carried by is its first non-zero component in nesting order (Wolfe 1996; Allen & Kennedy
 * 2001). A distance is possible only when it is smaller than the loop's trip count (Banerjee's
 * bounds). With different coefficients the GCD test proves independence when the gcd of the
 * coefficients does not divide the constant difference; otherwise the pair is left unreported
 * rather than guessed.
 *
 * When that finds nothing (the same element in the same iteration, or a distance the trip count
 * rules out one loop at a time), the dependence equation is solved again within the bounds of
 * all the loops at once (`distances.ts`): a write `a[j*nx + i]` with `0 <= i <= nx` meets the
 * next row's first element, an output dependence carried by `j` that no single subscript shows.
 * This bounded test runs only where it is exact: both references in the same innermost loop,
 * not under a condition, in rectangular loops with constant steps; with unbound sizes it reports
 * only what holds for every size.
 *
 * Data-sharing races (scalars shared by the iterations, scratch arrays without `private`) are in
 * `privates.ts`; an array reported there is left out of the dependence test.
 */
import * as S from '../symbolic';
import type { ArrayAccess, LoopStmt, ProgramModel, Stmt, VExpr } from '../model/program';
import { clausesNamed, collapseCount, isLoopDirective } from '../model/directives';
import { accessesOfStatement, childStatements, walkStatements } from '../model/values';
import { linearise, probeValues } from '../cost/footprint';
import { unclamp } from '../cost/clamps';
import { Scope } from '../cost/scope';
import type { Directive, Finding, Fix, Range } from '../types';
import { rangeWithin } from '../ranges';
import type { LoopNest } from './nests';
import { accumulation, privateFindings, type PrivateFindings } from './privates';
import { solveDistances, type Distance } from './distances';

/** Elements are written as the language writes them: `u[j][i]` in C, `u(i, j)` in Fortran. */
let fortranText = false;
/** The source lines of the file being checked, split once when a message first needs one. */
let sourceLine: ((line: number) => string | undefined) | undefined;
/**
 * An element as the user wrote it (`u[IDX(i-1,j)]`, `U(i-1,j)`: the source text of the access,
 * never the macro's expansion); the model's own form when the source is not at hand.
 */
const elementText = (array: string, subscripts: readonly string[], at?: Range): string => {
  const written = at && at.start.line === at.end.line ? sourceLine?.(at.start.line)?.slice(at.start.col, at.end.col).trim() : undefined;
  if (written && written.length <= 80 && !/[\n;{}]/.test(written)) return written.replace(/\s+/g, ' ');
  return fortranText ? `${array}(${subscripts.join(', ')})` : `${array}[${subscripts.join('][')}]`;
};

export function raceFindings(model: ProgramModel, nests: LoopNest[], bindingsOf: (n: LoopNest) => ReadonlyMap<string, S.Expr>, text?: string): Finding[] {
  fortranText = model.language === 'fortran';
  let lines: string[] | undefined;
  sourceLine = text === undefined ? undefined : (n) => (lines ??= text.split('\n'))[n];
  const out: Finding[] = [];
  for (const nest of nests) {
    if (!nest.offload) continue;
    // In an OpenACC kernels region loops are `auto` unless marked `independent` (OpenACC 3.3
    // §2.9): the compiler must prove them parallel, so a dependence there is not a race.
    const parallel = kernelsAuto(nest.offload) ? new Set([...parallelLoops(nest)].filter(isIndependent)) : parallelLoops(nest);
    const privates = privateFindings(model, nest);
    // An inner loop that declares its own `i` again (`for (int i = ib; …)` inside a loop over
    // `i`) hides the outer one: subscripts name the inner one, so distances in the outer are
    // unknown. No dependence is claimed for the hidden loops (the inner ones are still tested).
    const hidden = shadowedLoops(nest);
    const tested = hidden.size > 0 ? new Set([...parallel].filter((l) => !hidden.has(l))) : parallel;
    if (tested.size > 0) out.push(...dependences(model, nest, tested, bindingsOf(nest), privates));
    out.push(...reductions(model, nest));
    out.push(...privates.findings);
    out.push(...collapseFindings(model, nest));
  }
  return out;
}

/** Loops of the nest whose variable an inner loop of the same nest declares again. */
function shadowedLoops(nest: LoopNest): Set<LoopStmt> {
  const out = new Set<LoopStmt>();
  for (const path of nest.paths) {
    path.forEach((l, k) => {
      if (l.variable && path.slice(k + 1).some((m) => m.variable === l.variable)) out.add(l);
    });
  }
  return out;
}

// ---- collapse over a nest that cannot be collapsed ------------------------------------------

/**
 * `collapse(n)` needs n loops the standard lets it collapse:
 *  - OpenACC 3.3 §2.9.1: the associated loops must be tightly nested (unless the clause says
 *    `force:`), and the trip count of every associated loop must be computable and invariant in
 *    all of them, so no bound may use an outer collapsed loop's variable (a triangular nest).
 *  - OpenMP 5.2 §4.4.1 (canonical loop nest form; since OpenMP 5.0): there must be n nested
 *    loops, one loop at each level; intervening code between them is allowed (it runs an
 *    unspecified number of times: at least once per iteration of the loop around it, at most
 *    once per collapsed iteration, from memory of OpenMP 5.0 §2.9.2), and an inner bound may be
 *    non-rectangular only in the form `a1*var-outer + a2` of one outer loop's variable, with a
 *    step that does not depend on it.
 * Each breach is a `directive-syntax` error at the collapse clause: the directive does not mean
 * what it says. OpenMP intervening code is legal, so it is a warning that says what it costs.
 */
function collapseFindings(model: ProgramModel, nest: LoopNest): Finding[] {
  const out: Finding[] = [];
  walkStatements([nest.root], (s) => {
    if (s.kind !== 'loop') return;
    for (const d of s.directives) {
      if (!isLoopDirective(d)) continue;
      const clause = clausesNamed(d, 'collapse')[0];
      const n = collapseCount(d);
      if (!clause || n < 2) continue;
      const f = collapseProblem(model, d, clause, s, n);
      if (f) out.push(f);
    }
  });
  return out;
}

function collapseProblem(model: ProgramModel, d: Directive, clause: Directive['clauses'][number], root: LoopStmt, n: number): Finding | undefined {
  const acc = d.family === 'openacc';
  const force = acc && /^\s*force\s*:/i.test(clause.args ?? clause.value ?? '');
  const range = d.macroExpanded ? d.range : clause.range;
  const chain: LoopStmt[] = [root];
  const where = (l: LoopStmt): string => `line ${l.keywordRange.start.line + 1}`;
  for (let k = 1; k < n; k++) {
    const cur = chain[k - 1];
    const body = cur.body.filter((x) => !(x.kind === 'other' && x.text.trim().replace(/;$/, '') === ''));
    const loops = body.filter((x): x is LoopStmt => x.kind === 'loop');
    const nested = directLoopsOf(cur.body);
    if (nested.length === 0) {
      return {
        code: 'directive-syntax', severity: 'error', range,
        message: `\`collapse(${n})\` asks for ${n} nested loops, but the loop at ${where(cur)} has no loop inside it: only ${k} can be collapsed (${acc ? 'OpenACC 3.3 §2.9.1' : 'OpenMP 5.2 §4.4.1, §4.4.3'}). Use \`collapse(${k})\`${k === 1 ? ' or drop the clause' : ''}.`,
      };
    }
    if (nested.length > 1 || loops.length !== 1) {
      return {
        code: 'directive-syntax', severity: 'error', range,
        message: `\`collapse(${n})\` needs one loop nested in the loop at ${where(cur)}, but it holds ${nested.length > 1 ? `${nested.length} loops one after the other` : 'its loop under a condition or in a block'}: there is no single loop ${k + 1} to collapse (${acc ? 'OpenACC 3.3 §2.9.1: the associated loops must be tightly nested' : 'OpenMP 5.2 §4.4.1: a canonical loop nest has one loop at each level'}). Use \`collapse(${k})\`${k === 1 ? ' or drop the clause' : ''}.`,
      };
    }
    const inner = loops[0];
    if (body.length > 1 && !force) {
      const between = body.filter((x) => x !== inner);
      const first = between[0];
      const at = `line ${first.range.start.line + 1}`;
      if (acc) {
        return {
          code: 'directive-syntax', severity: 'error', range,
          message: `\`collapse(${n})\` needs tightly nested loops, but ${between.length === 1 ? 'a statement' : `${between.length} statements`} (${at}) stand${between.length === 1 ? 's' : ''} between the loop at ${where(cur)} and the loop at ${where(inner)} (OpenACC 3.3 §2.9.1). Move ${between.length === 1 ? 'it' : 'them'} into the inner loop, use \`collapse(${k})\`, or \`collapse(force:${n})\` to have the intervening code run inside the innermost loop.`,
        };
      }
      return {
        code: 'directive-syntax', severity: 'warning', range,
        message: `\`collapse(${n})\` spans code between the loop at ${where(cur)} and the loop at ${where(inner)} (${at}). OpenMP 5.0 and later allow such intervening code (OpenMP 5.2 §4.4.1), but it runs an unspecified number of times — at least once per iteration of the loop around it, at most once per collapsed iteration — and compilers that implement only OpenMP 4.5 collapse reject the directive (gcc 12 does). Move it into the inner loop or use \`collapse(${k})\`.`,
      };
    }
    // Bounds that use the variable of an outer collapsed loop.
    const outer = chain.map((l) => l.variable).filter((v): v is string => !!v);
    const bounds = [inner.lower, inner.upper, inner.step];
    const uses = (e: S.Expr | undefined): string[] => (e ? S.freeSymbols(e).filter((x) => outer.includes(x)) : []);
    const used = [...new Set(bounds.flatMap(uses))];
    if (used.length > 0 || inner.triangular) {
      const names = used.length > 0 ? used.map((v) => `\`${v}\``).join(' and ') : 'an outer loop variable';
      if (acc) {
        return {
          code: 'directive-syntax', severity: 'error', range,
          message: `\`collapse(${n})\` collapses the loop at ${where(inner)}, whose bounds depend on ${names} of an outer collapsed loop (a triangular nest): OpenACC 3.3 §2.9.1 needs the trip count of every collapsed loop computable and invariant in all of them. Collapse only the loops above it (\`collapse(${k})\`), or make its bounds rectangular and test the condition inside.`,
        };
      }
      // OpenMP: lb and ub may each be a1*var-outer + a2 of one outer variable; the step may not use one.
      const affineInOne = (e: S.Expr | undefined): boolean => {
        if (!e) return true;
        const u = uses(e);
        if (u.length === 0) return true;
        if (u.length > 1) return false;
        const parts = S.affine(e, [u[0]]);
        return !!parts && S.freeSymbols(parts.coeffs.get(u[0])!).every((x) => !outer.includes(x));
      };
      const bad = uses(inner.step).length > 0 || !affineInOne(inner.lower) || !affineInOne(inner.upper);
      if (bad) {
        return {
          code: 'directive-syntax', severity: 'error', range,
          message: `\`collapse(${n})\` collapses the loop at ${where(inner)}, whose bounds depend on ${names} in a form OpenMP does not allow: a non-rectangular collapsed loop may have each bound of the form \`a1*var-outer + a2\` of one outer loop variable, and a step that uses none (OpenMP 5.2 §4.4.1). Collapse only the loops above it (\`collapse(${k})\`).`,
        };
      }
    }
    chain.push(inner);
  }
  void model;
  return undefined;
}

function directLoopsOf(stmts: readonly Stmt[]): LoopStmt[] {
  const out: LoopStmt[] = [];
  for (const s of stmts) {
    if (s.kind === 'loop') out.push(s);
    else out.push(...directLoopsOf(childStatements(s)));
  }
  return out;
}

/** Loops of the nest that a directive runs in parallel (collapse counts; `seq` excludes). */
export function parallelLoops(nest: LoopNest): Set<LoopStmt> {
  const out = new Set<LoopStmt>();
  // A loop with an `ordered` clause runs its ordered part in iteration order, and `ordered(n)`
  // with `depend(sink: …)` / `doacross` waits for the iterations it names (OpenMP 5.2 §11.5.4,
  // §15.10; section numbers from memory): its dependences are synchronised, not races. It and the
  // loops it binds are skipped.
  let orderedLeft = 0;
  const visit = (loop: LoopStmt, remainingCollapse: number): void => {
    const d = loop.directives.find(isLoopDirective);
    const ordered = d?.clauses.find((c) => c.canonical === 'ordered');
    if (ordered) orderedLeft = Math.max(collapseCount(d!), Number.parseInt(ordered.value ?? '1', 10) || 1);
    if (orderedLeft > 0) {
      orderedLeft--;
      for (const s of loop.body) walkLoops(s, (l) => visit(l, 0));
      return;
    }
    let collapse = remainingCollapse;
    if (d && !d.clauses.some((c) => c.canonical === 'seq')) {
      out.add(loop);
      collapse = collapseCount(d) - 1;
    } else if (remainingCollapse > 0) {
      out.add(loop);
      collapse = remainingCollapse - 1;
    } else {
      collapse = 0;
    }
    for (const s of loop.body) walkLoops(s, (l) => visit(l, collapse));
  };
  visit(nest.root, 0);
  return out;
}

function walkLoops(s: Stmt, f: (l: LoopStmt) => void): void {
  if (s.kind === 'loop') {
    f(s);
    return;
  }
  for (const c of childStatements(s)) walkLoops(c, f);
}

interface Ref {
  access: ArrayAccess;
  coeffs: Map<string, S.Expr>;
  rest: S.Expr;
  /** Loops of the nest around the reference, outermost first. */
  loops: LoopStmt[];
  /** Under a condition inside the nest: not every iteration makes it. */
  guarded: boolean;
}

function dependences(model: ProgramModel, nest: LoopNest, parallel: Set<LoopStmt>, bindings: ReadonlyMap<string, S.Expr>, privates: PrivateFindings): Finding[] {
  const skip = privates.scratchArrays;
  const scope = new Scope(model, nest.procedure);
  const loops: LoopStmt[] = [];
  walkStatements([nest.root], (s) => { if (s.kind === 'loop') loops.push(s); });
  const vars = loops.map((l) => l.variable).filter((v): v is string => !!v);
  const outer = new Map([...bindings].filter(([k]) => !vars.includes(k)));
  const refs = new Map<string, Ref[]>();
  const irregular = new Map<string, Enumerable[]>();
  const visit = (stmts: readonly Stmt[], around: LoopStmt[], guarded: boolean): void => {
    for (const s of stmts) {
      for (const a of accessesOfStatement(s)) {
        if (a.subscripts.length === 0 || a.subscripts.some((x) => !x) || skip.has(a.array)) continue;
        const decl = scope.lookup(a.array);
        if (decl && !decl.isArray) continue;
        const subs = (a.subscripts as S.Expr[]).map((x) => S.substitute(x, outer));
        const linear = linearise(subs, decl, model.layout, a.array);
        // A clamped neighbour read (`h(min(i+1,nx))`) reads i+1 except at the edge, where it reads
        // the edge element again: tested as the neighbour, and as guarded, since not every
        // iteration makes that exact reference (the bounded test claims exactness).
        const clamped = a.isRead && !a.isWrite ? unclamp(linear, vars) : undefined;
        const parts = S.affine(clamped ?? linear, vars);
        if (!parts) {
          if (!clamped) irregular.set(a.array, [...(irregular.get(a.array) ?? []), { access: a, subs, loops: around, guarded }]);
          continue;
        }
        refs.set(a.array, [...(refs.get(a.array) ?? []), { access: a, coeffs: parts.coeffs, rest: parts.rest, loops: around, guarded: guarded || !!clamped }]);
      }
      if (s.kind === 'loop') visit(s.body, [...around, s], guarded || !s.variable);
      else if (s.kind === 'if') visit(childStatements(s), around, true);
      else visit(childStatements(s), around, guarded);
    }
  };
  visit([nest.root], [], false);
  const out: Finding[] = [];
  const seen = new Set<string>();
  const governing = governingDirectives(nest);
  // Subscripts that are not affine (`a[i % 2]`): decided by running the subscripts over every
  // iteration when the loops are small and fully known.
  for (const [array, list] of irregular) {
    const affineRefs = (refs.get(array) ?? []).map((r) => ({ access: r.access, subs: r.access.subscripts.map((x) => S.substitute(x!, outer)), loops: r.loops, guarded: r.guarded }));
    for (const w of list.filter((r) => r.access.isWrite)) {
      for (const x of [...list, ...affineRefs]) {
        if (x !== w && !x.access.isRead && !x.access.isWrite) continue;
        const found = enumeratedCarrier(w, x, parallel, outer);
        if (!found || privates.privateIn(array, found.loop) || withinSafelen(governing.get(found.loop), found.distance)) continue;
        const id = `${array}:${x.access.range.start.line}:${x.access.range.start.col}`;
        if (seen.has(id)) continue;
        seen.add(id);
        const asRef = (r: Enumerable): Ref => ({ access: r.access, coeffs: new Map(), rest: S.num(0), loops: r.loops, guarded: r.guarded });
        out.push(asserted(message(array, asRef(w), asRef(x), found), governing.get(found.loop), found.loop));
      }
    }
  }
  // Pairs with the same loops, coefficients and difference have the same distances (a stencil's
  // references mostly do): solve each equation once.
  const solved = new Map<string, Distance[]>();
  for (const [array, list] of refs) {
    for (const w of list.filter((r) => r.access.isWrite)) {
      for (const x of list) {
        // A write paired with itself: two iterations writing one element (bounded test only).
        const self = x === w && !x.access.isRead;
        const id = `${array}:${x.access.range.start.line}:${x.access.range.start.col}`;
        if (seen.has(id)) continue;
        // A private copy per iteration of the carrying loop carries nothing across it.
        const carried = self ? undefined : carrier(w, x, loops, parallel, outer);
        if (carried && !privates.privateIn(array, carried.loop) && !withinSafelen(governing.get(carried.loop), carried.distance)) {
          seen.add(id);
          out.push(asserted(message(array, w, x, carried), governing.get(carried.loop), carried.loop));
          continue;
        }
        const bounded = boundedCarrier(w, x, parallel, outer, solved);
        if (!bounded || privates.privateIn(array, bounded.loop) || withinSafelen(governing.get(bounded.loop), bounded.distance)) continue;
        seen.add(id);
        out.push(asserted(boundedMessage(array, w, x, bounded), governing.get(bounded.loop), bounded.loop));
      }
    }
  }
  return out;
}

/** The loop directive that distributes each loop of the nest: its own, or the one whose collapse covers it. */
export function governingDirectives(nest: LoopNest): Map<LoopStmt, Directive> {
  const out = new Map<LoopStmt, Directive>();
  const visit = (loop: LoopStmt, inherited: Directive | undefined, remaining: number): void => {
    const d = loop.directives.find(isLoopDirective);
    let next = inherited;
    let left = 0;
    if (d && !d.clauses.some((c) => c.canonical === 'seq')) {
      next = d;
      out.set(loop, d);
      left = collapseCount(d) - 1;
    } else if (remaining > 0 && inherited) {
      out.set(loop, inherited);
      left = remaining - 1;
    }
    for (const s of loop.body) walkLoops(s, (l) => visit(l, next, left));
  };
  visit(nest.root, undefined, 0);
  return out;
}

/**
 * OpenMP `simd` with `safelen(k)`: iterations k or more apart never run in the same SIMD chunk,
 * so a dependence at such a distance is respected (OpenMP 5.2 §10.4).
 */
function withinSafelen(d: Directive | undefined, distance: number): boolean {
  if (!d || d.family !== 'openmp') return false;
  const words = d.construct.split(' ');
  if (!words.includes('simd') || words.some((w) => ['for', 'do', 'distribute', 'loop', 'taskloop'].includes(w))) return false;
  const safelen = clausesNamed(d, 'safelen')[0];
  const k = safelen?.value ? Number.parseInt(safelen.value, 10) : NaN;
  return Number.isFinite(k) && distance >= k;
}

/**
 * Says which assertion a dependence makes false when the user wrote one: OpenACC `independent`
 * (OpenACC 3.3 §2.9.6: the iterations are data-independent), OpenMP `simd` (OpenMP 5.2 §10.4:
 * iterations may run in SIMD lanes at once), `order(concurrent)` (§10.3: any order, at once)
 * and the `loop` construct (§11.7, which implies concurrent order). Section numbers from memory.
 */
function asserted(f: Finding, d: Directive | undefined, loop: LoopStmt): Finding {
  if (!d) return f;
  const v = loop.variable ?? '?';
  const has = (n: string): boolean => d.clauses.some((c) => c.canonical === n);
  const words = d.construct.split(' ');
  let claim: string | undefined;
  if (d.family === 'openacc' && has('independent')) {
    claim = `The \`independent\` clause on \`${d.construct}\` asserts that no iteration of \`${v}\` reads or writes what another writes (OpenACC 3.3 §2.9.6), and the compiler trusts it; this assertion is false here.`;
  } else if (d.family === 'openmp' && d.clauses.some((c) => c.canonical === 'order' && /concurrent/i.test(c.value ?? c.args ?? ''))) {
    claim = `\`order(concurrent)\` asserts that the iterations of \`${v}\` may run in any order and at the same time (OpenMP 5.2 §10.3); this assertion is false here.`;
  } else if (d.family === 'openmp' && words.includes('simd') && !words.some((w) => ['for', 'do', 'distribute', 'loop'].includes(w))) {
    claim = `\`simd\` asserts that consecutive iterations of \`${v}\` may run at once in SIMD lanes (OpenMP 5.2 §10.4); this assertion is false here.`;
  } else if (d.family === 'openmp' && words.includes('loop')) {
    claim = `The \`loop\` construct asserts that the iterations of \`${v}\` may run concurrently (OpenMP 5.2 §11.7); this assertion is false here.`;
  }
  return claim ? { ...f, message: `${claim} ${f.message}` } : f;
}

interface Enumerable {
  access: ArrayAccess;
  subs: S.Expr[];
  loops: LoopStmt[];
  guarded: boolean;
}

/** Most iterations the enumeration runs through for one pair. */
const ENUMERATION_LIMIT = 65_536;

/**
 * A dependence between a write with a subscript that is not affine and another reference, found
 * by evaluating both subscripts at every iteration: exact, so it runs only when both references
 * are in the same loops, not under a condition, and every loop has numeric bounds that use no
 * other loop's variable. The carrier is the first loop in which the two iterations differ.
 */
function enumeratedCarrier(w: Enumerable, x: Enumerable, parallel: Set<LoopStmt>, outer: ReadonlyMap<string, S.Expr>): Carried | undefined {
  if (w.guarded || x.guarded || w.loops.length === 0 || w.loops.length !== x.loops.length || w.loops.some((l, k) => l !== x.loops[k])) return undefined;
  if (!w.loops.some((l) => parallel.has(l))) return undefined;
  const ranges: { v: string; lo: number; step: number; n: number }[] = [];
  let total = 1;
  for (const l of w.loops) {
    if (!l.variable || !l.lower || !l.upper || !l.step || l.triangular) return undefined;
    const lo = S.evaluate(l.lower, outer);
    const hi = S.evaluate(l.upper, outer);
    const st = S.evaluate(l.step, outer);
    if (lo === undefined || hi === undefined || !st || st <= 0 || !Number.isInteger(lo) || !Number.isInteger(hi)) return undefined;
    const n = Math.max(0, Math.floor((hi - lo) / st) + 1);
    total *= n;
    if (total > ENUMERATION_LIMIT) return undefined;
    ranges.push({ v: l.variable, lo, step: st, n });
  }
  const keyAt = (r: Enumerable, values: Map<string, number>): string | undefined => {
    const parts: number[] = [];
    for (const e of r.subs) {
      const v = S.evaluate(e, values);
      if (v === undefined || !Number.isFinite(v)) return undefined;
      parts.push(v);
    }
    return parts.join(',');
  };
  const iterations: number[][] = [];
  const idx = ranges.map(() => 0);
  for (let t = 0; t < total; t++) {
    iterations.push([...idx]);
    for (let k = ranges.length - 1; k >= 0; k--) { if (++idx[k] < ranges[k].n) break; idx[k] = 0; }
  }
  const valuesOf = (it: number[]): Map<string, number> => new Map(ranges.map((r, k) => [r.v, r.lo + it[k] * r.step]));
  const writers = new Map<string, number[]>();
  for (let t = 0; t < iterations.length; t++) {
    const key = keyAt(w, valuesOf(iterations[t]));
    if (key === undefined) return undefined;
    if (!writers.has(key)) writers.set(key, [t]);
    else if (writers.get(key)!.length < 4) writers.get(key)!.push(t);
  }
  for (let t = 0; t < iterations.length; t++) {
    const key = x === w ? keyAt(w, valuesOf(iterations[t])) : keyAt(x, valuesOf(iterations[t]));
    if (key === undefined) return undefined;
    for (const u of writers.get(key) ?? []) {
      if (u === t) continue;
      const I = iterations[t];
      const J = iterations[u];
      const k = I.findIndex((v, q) => v !== J[q]);
      if (k < 0 || !parallel.has(w.loops[k])) continue;
      const kind: Carried['kind'] = !x.access.isRead || x === w ? 'output' : J[k] < I[k] ? 'flow' : 'anti';
      return { loop: w.loops[k], distance: Math.abs(I[k] - J[k]), kind };
    }
  }
  return undefined;
}

interface Carried {
  loop: LoopStmt;
  distance: number;
  kind: 'flow' | 'anti' | 'output';
}

/** The loop that carries a dependence from write `w` to reference `x`, when it is a parallel one. */
function carrier(w: Ref, x: Ref, loops: LoopStmt[], parallel: Set<LoopStmt>, bindings: ReadonlyMap<string, S.Expr>): Carried | undefined {
  const vars = loops.map((l) => l.variable ?? '');
  const same = vars.every((v) => S.equals(w.coeffs.get(v) ?? S.num(0), x.coeffs.get(v) ?? S.num(0)));
  const diff = S.sub(x.rest, w.rest);
  if (!same) return undefined;
  // Uniform: solve Σ c_v d_v = -(diff) over the loops by the coefficients' sizes (largest first).
  const probe = probeValues([...w.coeffs.values(), diff]);
  const coeffs = vars.map((v) => S.evaluate(w.coeffs.get(v) ?? S.num(0), probe) ?? NaN);
  let rest = S.evaluate(diff, probe);
  if (rest === undefined || coeffs.some((c) => !Number.isFinite(c))) return undefined;
  if (rest === 0) return undefined;
  // GCD test: no integer distance exists when the gcd of the coefficients does not divide the difference.
  const g = coeffs.filter((c) => c !== 0).reduce((a, b) => gcd(a, Math.abs(b)), 0);
  if (g === 0 || rest % g !== 0) return undefined;
  const order = coeffs.map((c, k) => ({ c, k })).filter((e) => e.c !== 0).sort((a, b) => Math.abs(b.c) - Math.abs(a.c));
  const distance = vars.map(() => 0);
  for (const { c, k } of order) {
    const q = Math.round(rest / c);
    distance[k] = q;
    rest -= q * c;
  }
  if (rest !== 0) return undefined;
  // x touches the element that w touched `distance` iterations earlier (w at i, x at i + d reads w's i).
  const first = distance.findIndex((d) => d !== 0);
  if (first < 0) return undefined;
  // Distances are in the variables' values: with a step s only multiples of s are iterations
  // (`i += 2` writing a[i] and a[i + 1] touches each element once). A solution that is not one is
  // left to the bounded test, which works in iterations.
  const steps = loops.map((l) => (l.step ? S.constValue(l.step) : undefined));
  if (distance.some((d, k) => d !== 0 && (steps[k] === undefined || d % steps[k]! !== 0))) return undefined;
  const loop = loops[first];
  if (!parallel.has(loop)) return undefined;
  const trips = loop.tripCount ? S.evaluate(loop.tripCount, bindings) : undefined;
  if (trips !== undefined && Math.abs(distance[first]) >= trips * steps[first]!) return undefined;
  // d < 0: x reaches back to an element an earlier iteration wrote (flow); d > 0: forward (anti).
  const kind: Carried['kind'] = !x.access.isRead ? 'output' : distance[first] < 0 ? 'flow' : 'anti';
  return { loop, distance: Math.abs(distance[first]), kind };
}

function gcd(a: number, b: number): number {
  return b === 0 ? a : gcd(b, a % b);
}

interface Bounded extends Carried {
  /** The loops around both references and the distance in each (shown, e.g. `-nx`). */
  loops: LoopStmt[];
  shown: string[];
  /** Sizes the proof holds for every value of (unbound). */
  unbound: string[];
}

/**
 * The dependence equation solved within the bounds of every loop around both references
 * (`distances.ts`), for pairs where that is exact: the same loops around both, no condition,
 * rectangular loops with known trip counts and constant steps.
 */
function boundedCarrier(w: Ref, x: Ref, parallel: Set<LoopStmt>, bindings: ReadonlyMap<string, S.Expr>, solved: Map<string, Distance[]>): Bounded | undefined {
  if (w.guarded || x.guarded || w.loops.length !== x.loops.length || w.loops.some((l, k) => l !== x.loops[k])) return undefined;
  const loops = w.loops;
  if (loops.length === 0 || loops.some((l) => !l.variable || !l.tripCount || !l.step || l.triangular || (l as { tripCountIsBound?: boolean }).tripCountIsBound)) return undefined;
  if (new Set(loops.map((l) => l.variable)).size !== loops.length) return undefined;
  const names = new Set(loops.map((l) => l.variable!));
  // Coefficients of loops that do not enclose the references must be zero, and equal for both.
  for (const [v, c] of w.coeffs) if (!names.has(v) && S.constValue(c) !== 0) return undefined;
  for (const [v, c] of x.coeffs) if (!names.has(v) && S.constValue(c) !== 0) return undefined;
  const coeff = (r: Ref, l: LoopStmt): S.Expr => r.coeffs.get(l.variable!) ?? S.num(0);
  if (loops.some((l) => !S.equals(coeff(w, l), coeff(x, l)))) return undefined;
  if (loops.some((l) => !S.isConst(l.step!))) return undefined;
  const carriers = new Set(loops.map((l, k) => (parallel.has(l) ? k : -1)).filter((k) => k >= 0));
  if (carriers.size === 0) return undefined;
  const coeffs = loops.map((l) => S.mul(coeff(w, l), l.step!));
  const target = S.sub(w.rest, x.rest);
  const key = `${loops.map((l) => `${l.keywordRange.start.line}:${l.keywordRange.start.col}`).join(',')}|${coeffs.map((c) => c.key).join(',')}|${target.key}`;
  let solutions = solved.get(key);
  if (!solutions) solved.set(key, (solutions = solveDistances({ coeffs, trips: loops.map((l) => l.tripCount), target, bindings }, carriers)));
  const first = solutions[0];
  if (!first) return undefined;
  const e = first.vector[first.carrier];
  const kind: Carried['kind'] = !x.access.isRead ? 'output' : x === w || e > 0 ? 'flow' : 'anti';
  const unbound = first.symbolic ? [...new Set(loops.flatMap((l) => S.freeSymbols(S.substitute(l.tripCount!, bindings))))].filter((v) => !names.has(v)) : [];
  return { loop: loops[first.carrier], distance: Math.abs(Number.isFinite(e) ? e : 1), kind, loops, shown: first.shown, unbound };
}

function boundedMessage(array: string, w: Ref, x: Ref, c: Bounded): Finding {
  const v = c.loop.variable ?? '?';
  const wText = elementText(array, w.access.subscriptText, w.access.range);
  const xText = elementText(array, x.access.subscriptText, x.access.range);
  const names = c.loops.map((l) => l.variable).join(', ');
  const steps = c.shown.map((d) => (d.startsWith('-') ? d : `+${d}`)).join(', ');
  const touch = c.kind === 'output'
    ? (w === x ? `both write \`${wText}\`` : `write the same element (\`${wText}\`, \`${xText}\`)`)
    : `touch the same element, one writing \`${wText}\` and the other reading \`${xText}\``;
  const always = c.unbound.length > 0 ? ` for every value of ${c.unbound.map((u) => `\`${u}\``).join(', ')}` : '';
  return {
    code: 'loop-carried-dependence', severity: 'error', range: x.access.range, array,
    message: `This loop runs \`${v}\` in parallel, but two iterations whose (${names}) differ by (${steps}) ${touch}: within the loop bounds, the elements one value of \`${v}\` covers overlap those of another${always} (a loop-carried ${c.kind} dependence at distance ${c.distance} in \`${v}\`). Check the bounds against the array's row length so the ranges stay apart, or keep \`${v}\` sequential.`,
  };
}

function message(array: string, w: Ref, x: Ref, c: Carried): Finding {
  const v = c.loop.variable ?? '?';
  const wText = elementText(array, w.access.subscriptText, w.access.range);
  const xText = elementText(array, x.access.subscriptText, x.access.range);
  const what = c.kind === 'flow'
    ? `iteration ${v} reads \`${xText}\`, which iteration ${v} - ${c.distance} writes as \`${wText}\``
    : c.kind === 'anti'
      ? `iteration ${v} reads \`${xText}\`, which iteration ${v} + ${c.distance} overwrites as \`${wText}\``
      : `iterations ${c.distance} apart both write the same element (\`${wText}\`, \`${xText}\`)`;
  return {
    code: 'loop-carried-dependence', severity: 'error', range: x.access.range, array,
    message: `This loop runs \`${v}\` in parallel, but ${what} (a loop-carried ${c.kind} dependence at distance ${c.distance} in \`${v}\`), so the result depends on the order the iterations run. Keep \`${v}\` sequential, or write into a second array as a Jacobi sweep does.`,
  };
}

// ---- reductions -----------------------------------------------------------------------

interface Accumulation {
  name: string;
  op: string;
  range: Range;
}

/**
 * Scalars that an offloaded loop accumulates (`s += …`, `s = s * …`, `s = max(s, …)`) whose first
 * use in an iteration reads the previous value, with no reduction clause: they are firstprivate
 * by default (OpenACC 3.3 §2.6.2; OpenMP 5.2 data-sharing rules), so the host never sees the sum.
 */
function reductions(model: ProgramModel, nest: LoopNest): Finding[] {
  const d = nest.offload!;
  const directives = [d, ...nestDirectives(nest)];
  const reduced = new Set(directives.flatMap((x) => clausesNamed(x, 'reduction', 'private', 'firstprivate', 'lastprivate').flatMap((c) => c.vars ?? []).map((v) => v.name)));
  const scope = new Scope(model, nest.procedure);
  const declaredInside = (name: string): boolean => {
    const decl = nest.procedure.locals.find((l) => l.name === name);
    return !!decl && rangeWithin(decl.range, nest.root.range);
  };
  const firstUse = new Map<string, 'write' | Accumulation>();
  const loopVars = new Set<string>();
  walkStatements([nest.root], (s) => {
    if (s.kind === 'loop' && s.variable) loopVars.add(s.variable);
    // An update under `atomic` (or an OpenMP `critical`) is a synchronised update of the shared
    // variable, not a reduction that is missing (OpenACC 3.3 §2.12; OpenMP 5.2 §15.8.4, §15.2).
    if (s.directives.some((d) => /^(atomic|critical)\b/.test(d.construct))) return false;
    if (s.kind !== 'assign' || s.target.kind !== 'var') return;
    const name = s.target.name;
    if (firstUse.has(name)) return;
    const acc = accumulation(name, s.op, s.value);
    firstUse.set(name, acc ? { name, op: acc, range: s.range } : 'write');
  });
  const out: Finding[] = [...wrongOperators(model, nest, directives)];
  for (const [name, use] of firstUse) {
    if (use === 'write' || reduced.has(name) || loopVars.has(name) || declaredInside(name)) continue;
    const decl = scope.lookup(name);
    if (decl?.isArray) continue;
    const loopDirective = nest.root.directives.find(isLoopDirective) ?? d;
    if (kernelsAuto(d) && !directives.some((x) => x.clauses.some((c) => c.canonical === 'independent'))) {
      out.push({
        code: 'missing-reduction', severity: 'info', range: use.range, array: name,
        message: `This loop of a \`kernels\` region accumulates into \`${name}\` without a reduction clause. There the compiler must prove each loop parallel itself (OpenACC 3.3 §2.9: loops in kernels are \`auto\`), so the result is right either way, but the loop runs in parallel only if the compiler recognises the reduction; \`reduction(${use.op}:${name})\` on the loop says it for every compiler.`,
        // A bare `kernels` takes no reduction clause; only a loop directive can carry it.
        fixes: isLoopDirective(loopDirective) ? [reductionFix(loopDirective, use.op, name)] : undefined,
      });
      continue;
    }
    const what = use.op === 'max' ? 'maximum' : use.op === 'min' ? 'minimum' : use.op === '*' ? 'product' : 'total';
    const written = `\`${name} = ${use.op === 'max' || use.op === 'min' ? `${use.op}(${name}, …)` : `${name} ${use.op} …`}\``;
    // A scalar named in a data clause or map is shared by the iterations (their updates race);
    // one in none is firstprivate (each thread updates its own copy, which the host never sees).
    const shared = directives.flatMap((x) => clausesNamed(x, 'copy', 'copyout', 'copyin', 'create', 'present', 'map', 'deviceptr')).find((c) => (c.vars ?? []).some((v) => v.name === name));
    const cite = d.family === 'openacc' ? 'OpenACC 3.3 §2.6.2' : 'OpenMP 5.2 §5.8.1';
    const fate = shared
      ? `\`${name}\` is in the \`${shared.name}\` clause, so every iteration updates the one shared copy at once: a data race whose ${what} depends on timing`
      : `a scalar in no data clause is firstprivate (${cite}), so each thread ${use.op === 'max' ? 'keeps the largest value in its own copy' : use.op === 'min' ? 'keeps the smallest value in its own copy' : use.op === '*' ? 'multiplies into its own copy' : 'sums into its own copy'} and the host never sees the ${what}`;
    out.push({
      code: 'missing-reduction', severity: 'error', range: use.range, array: name,
      message: `This offloaded loop accumulates into \`${name}\` (${written}) without a reduction clause; ${fate}. Add \`reduction(${use.op}:${name})\` to the loop directive.`,
      fixes: [reductionFix(loopDirective, use.op, name)],
    });
  }
  return out;
}

/** The reduction operator a clause names, in the spelling `accumulation` gives (+, *, max, min), or undefined for others. */
function clauseOperator(op: string | undefined): string | undefined {
  const o = (op ?? '').trim().toLowerCase();
  if (o === '+' || o === '-') return '+';
  if (o === '*' || o === 'max' || o === 'min') return o;
  return o === '' ? undefined : o;
}

const OPERATOR_WORDS: Record<string, string> = { '+': 'sum', '*': 'product', max: 'maximum', min: 'minimum' };

/**
 * A reduction clause whose operator is not the one the loop accumulates with
 * (`reduction(+:m)` around `m = max(m, x)`): the private copies start at the clause operator's
 * identity and are combined with it (OpenACC 3.3 §2.5.15; OpenMP 5.2 §5.5.5, §5.5.8), so the
 * host gets a combination the loop never computes — there is no valid reduction for the update.
 */
function wrongOperators(model: ProgramModel, nest: LoopNest, directives: Directive[]): Finding[] {
  const fortran = model.language === 'fortran';
  const same = (a: string, b: string): boolean => (fortran ? a.toLowerCase() === b.toLowerCase() : a === b);
  const clauses = directives.flatMap((d) => clausesNamed(d, 'reduction').map((c) => ({ d, c })));
  if (clauses.length === 0) return [];
  const out: Finding[] = [];
  const done = new Set<string>();
  walkStatements([nest.root], (s) => {
    if (s.kind !== 'assign' || s.target.kind !== 'var') return;
    const name = s.target.name;
    if (done.has(name)) return;
    const named = clauses.find((x) => (x.c.vars ?? []).some((v) => same(v.name, name)));
    if (!named) return;
    const op = accumulation(name, s.op, s.value);
    const declared = clauseOperator(named.c.reductionOp);
    if (!op || !declared || op === declared) return;
    done.add(name);
    const update = op === 'max' || op === 'min' ? `${name} = ${op}(${name}, …)` : `${name} ${op}= …`;
    const written = named.c.reductionOp ?? declared;
    out.push({
      code: 'missing-reduction', severity: 'error', range: s.range, array: name,
      message: `\`reduction(${written}:${name})\` combines the copies of \`${name}\` with \`${written}\`, but this loop updates it as \`${update}\`: each copy starts at the identity of \`${written}\` and the results are combined with it (OpenACC 3.3 §2.5.15; OpenMP 5.2 §5.5), so the host gets neither the ${OPERATOR_WORDS[op]} nor the serial result. Use \`reduction(${op}:${name})\`.`,
    });
  });
  return out;
}

/** An OpenACC kernels construct: its loops are `auto` unless a loop directive says `independent`. */
function kernelsAuto(d: Directive): boolean {
  return d.family === 'openacc' && d.construct.startsWith('kernels');
}

function isIndependent(loop: LoopStmt): boolean {
  return loop.directives.some((d) => d.clauses.some((c) => c.canonical === 'independent'));
}

function nestDirectives(nest: LoopNest): Directive[] {
  const out: Directive[] = [];
  walkStatements([nest.root], (s) => { out.push(...s.directives); });
  return out;
}


/** Appends `reduction(op:name)` at the end of the directive (before a trailing comment or continuation). */
function reductionFix(d: Directive, op: string, name: string): Fix {
  return {
    title: `Add reduction(${op}:${name}) to this ${d.family === 'openacc' ? 'OpenACC' : 'OpenMP'} directive`,
    edits: [{ range: { start: d.range.end, end: d.range.end }, newText: ` reduction(${op}:${name})` }],
  };
}
