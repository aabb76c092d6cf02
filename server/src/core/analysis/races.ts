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

export function raceFindings(model: ProgramModel, nests: LoopNest[], bindingsOf: (n: LoopNest) => ReadonlyMap<string, S.Expr>): Finding[] {
  const out: Finding[] = [];
  for (const nest of nests) {
    if (!nest.offload) continue;
    // In an OpenACC kernels region loops are `auto` unless marked `independent` (OpenACC 3.3
    // §2.9): the compiler must prove them parallel, so a dependence there is not a race.
    const parallel = kernelsAuto(nest.offload) ? new Set([...parallelLoops(nest)].filter(isIndependent)) : parallelLoops(nest);
    const privates = privateFindings(model, nest);
    if (parallel.size > 0) out.push(...dependences(model, nest, parallel, bindingsOf(nest), privates));
    out.push(...reductions(model, nest));
    out.push(...privates.findings);
  }
  return out;
}

/** Loops of the nest that a directive runs in parallel (collapse counts; `seq` excludes). */
export function parallelLoops(nest: LoopNest): Set<LoopStmt> {
  const out = new Set<LoopStmt>();
  const visit = (loop: LoopStmt, remainingCollapse: number): void => {
    const d = loop.directives.find(isLoopDirective);
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
        if (!parts) continue;
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
        if (carried && !privates.privateIn(array, carried.loop)) {
          seen.add(id);
          out.push(message(array, w, x, carried));
          continue;
        }
        const bounded = boundedCarrier(w, x, parallel, outer, solved);
        if (!bounded || privates.privateIn(array, bounded.loop)) continue;
        seen.add(id);
        out.push(boundedMessage(array, w, x, bounded));
      }
    }
  }
  return out;
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
  const wText = `${array}[${w.access.subscriptText.join('][')}]`;
  const xText = `${array}[${x.access.subscriptText.join('][')}]`;
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
  const wText = `${array}[${w.access.subscriptText.join('][')}]`;
  const xText = `${array}[${x.access.subscriptText.join('][')}]`;
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
    if (s.kind !== 'assign' || s.target.kind !== 'var') return;
    const name = s.target.name;
    if (firstUse.has(name)) return;
    const acc = accumulation(name, s.op, s.value);
    firstUse.set(name, acc ? { name, op: acc, range: s.range } : 'write');
  });
  const out: Finding[] = [];
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
    out.push({
      code: 'missing-reduction', severity: 'error', range: use.range, array: name,
      message: `This offloaded loop accumulates into \`${name}\` (\`${name} = ${use.op === 'max' || use.op === 'min' ? `${use.op}(${name}, …)` : `${name} ${use.op} …`}\`) without a reduction clause; \`${name}\` is firstprivate by default, so each thread ${use.op === 'max' ? 'keeps the largest value in its own copy' : use.op === 'min' ? 'keeps the smallest value in its own copy' : use.op === '*' ? 'multiplies into its own copy' : 'sums into its own copy'} and the host never sees the ${use.op === 'max' ? 'maximum' : use.op === 'min' ? 'minimum' : use.op === '*' ? 'product' : 'total'}. Add \`reduction(${use.op}:${name})\` to the loop directive.`,
      fixes: [reductionFix(loopDirective, use.op, name)],
    });
  }
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
