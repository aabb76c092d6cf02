/**
 * Finds compute loop nests and time loops in a program model.
 *
 * A *time loop* is a loop that contains work (a nested loop, an offload construct or data
 * directive, or a call to a procedure with loops) and whose later passes read data its earlier
 * passes wrote: the dependence test is in timeLoops.ts, and it applies to serial code as much as
 * to offloaded code. The user may also mark a loop: our annotation comment on the line before it
 * (`// offload-ledger: time-loop`, `! offload-ledger: time-loop`) or the time-loop-variables
 * setting (`--time-loop VAR`). A *loop nest* is the outermost loop that is not a time loop;
 * loops inside it belong to it. A host loop around offloaded constructs (a loop over tiles) is
 * not a nest itself: the constructs inside it are the nests, and the data ledger counts their
 * launches once per pass of the host loop.
 */
import * as S from '../symbolic';
import type { Directive } from '../types';
import type { LoopStmt, Procedure, ProgramModel, Stmt } from '../model/program';
import { isDataConstruct, isLoopDirective, isOffloadCompute } from '../model/directives';
import { accessesOfStatement, childStatements, walkStatements } from '../model/values';
import { bodyCalls, calleesOf } from '../model/callees';
import { LoopJudge } from './timeLoops';

export interface LoopNest {
  root: LoopStmt;
  procedure: Procedure;
  /** Induction variables along the first path from the root to an innermost loop. */
  variables: string[];
  /** The offload compute construct that runs this nest on the device, if any. */
  offload?: Directive;
  /** Paths from the root to each innermost loop (the loops whose body executes the statements). */
  paths: LoopStmt[][];
  /** The time loop around this nest, if any. */
  timeLoop?: LoopStmt;
  /** Why the root, a loop around other work, was not taken as a time loop. */
  notTimeLoop?: string;
}

export interface TimeLoop {
  loop: LoopStmt;
  procedure: Procedure;
  /** Nests inside this time loop (in this procedure). */
  nests: LoopNest[];
  /** Time loops nested inside another time loop are reported, but the outer one is the step. */
  parent?: LoopStmt;
  /** Why the loop was taken as a time loop, as a sentence fragment (`it swaps u and un every pass …`). */
  reason: string;
  /** Set when the user marked the loop (annotation comment or setting) rather than the analysis finding it. */
  marked?: 'annotation' | 'setting';
}

/** A loop around other work (kernels, nests, calls) that was not taken as a time loop, and why. */
export interface RejectedLoop {
  loop: LoopStmt;
  procedure: Procedure;
  reason: string;
}

export interface NestScan {
  nests: LoopNest[];
  timeLoops: TimeLoop[];
  /** Loops that enclose kernels or nests but are not time loops, with the reason. */
  rejected: RejectedLoop[];
}

export interface ScanOptions {
  /** Loop variables the user names as time-loop variables (`--time-loop iter`). */
  timeLoopVariables?: readonly string[];
  /** Only these procedures' loops are scanned (the verdicts of the others' are not needed). */
  only?: (p: Procedure) => boolean;
}

/**
 * The nest's variables as the user wrote them: loops the front end made from Fortran array
 * syntax (`h = h + dt*f`, `where`) have synthetic variables, so they read "array syntax (2-D)".
 */
export function nestVariablesText(variables: readonly string[], sep = ','): string {
  return variables.length > 0 && variables.every((v) => /^_i\d+$/.test(v)) ? `array syntax (${variables.length}-D)` : variables.join(sep);
}

export function scanLoops(model: ProgramModel, options: ScanOptions = {}): NestScan {
  const withLoops = proceduresWithLoops(model);
  const callees = calleesOf(model);
  calleeName = (name) => callees.resolve(name)?.name ?? name;
  const judge = new LoopJudge(model, callees);
  const fortran = model.language === 'fortran';
  const named = new Set((options.timeLoopVariables ?? []).map((v) => (fortran ? v.toLowerCase() : v)));
  const out: NestScan = { nests: [], timeLoops: [], rejected: [] };
  for (const proc of model.procedures) {
    if (options.only && !options.only(proc)) continue;
    const holdsTimeLoop = (stmts: Stmt[]): boolean =>
      directLoops(stmts).some((l) => {
        if (l.directives.some(isOffloadCompute)) return false;
        const mark = l.markedTimeLoop ? 'annotation' : l.variable && named.has(l.variable) ? 'setting' : undefined;
        return !!classify(l, proc, workOf(l, withLoops), mark, judge)?.time || holdsTimeLoop(l.body);
      });
    const visit = (stmts: Stmt[], offload: Directive | undefined, time: TimeLoop | undefined): void => {
      for (const s of stmts) {
        const here = s.directives.find(isOffloadCompute) ?? offload;
        if (s.kind === 'loop') {
          let notTime: string | undefined;
          if (!here) {
            const work = workOf(s, withLoops);
            const mark = s.markedTimeLoop ? 'annotation' : s.variable && named.has(s.variable) ? 'setting' : undefined;
            const v = classify(s, proc, work, mark, judge);
            if (v?.time) {
              const tl: TimeLoop = { loop: s, procedure: proc, nests: [], parent: time?.loop, reason: v.reason, ...(mark ? { marked: mark } : {}) };
              out.timeLoops.push(tl);
              visit(s.body, here, tl);
              continue;
            }
            if (v && work.enclosesKernels) {
              out.rejected.push({ loop: s, procedure: proc, reason: v.reason });
              notTime = v.reason;
            }
            // A host loop around offloaded constructs, or around calls only, is no nest of its
            // own: the constructs inside it (or in the callees) are. Nor is a loop around a time
            // loop (a loop over ensemble members, each stepped in time).
            if (work.offloadInside || (work.calls > 0 && work.nested === 0) || (v && holdsTimeLoop(s.body))) {
              visit(s.body, here, time);
              continue;
            }
          }
          const nest = makeNest(s, proc, here, time?.loop);
          if (notTime) nest.notTimeLoop = notTime;
          out.nests.push(nest);
          time?.nests.push(nest);
          continue;
        }
        visit(childStatements(s), here, time);
      }
    };
    visit(proc.body, undefined, undefined);
  }
  return out;
}
function makeNest(root: LoopStmt, procedure: Procedure, offload: Directive | undefined, timeLoop: LoopStmt | undefined): LoopNest {
  const paths: LoopStmt[][] = [];
  const descend = (loop: LoopStmt, path: LoopStmt[]): void => {
    const inner = directLoops(loop.body);
    if (inner.length === 0) paths.push([...path, loop]);
    for (const l of inner) descend(l, [...path, loop]);
  };
  descend(root, []);
  const variables = (paths[0] ?? [root]).map((l) => l.variable ?? '?');
  return { root, procedure, variables, offload, paths, timeLoop };
}

/** Loops directly inside a body (looking through blocks and branches, not through other loops). */
export function directLoops(stmts: Stmt[]): LoopStmt[] {
  const out: LoopStmt[] = [];
  for (const s of stmts) {
    if (s.kind === 'loop') out.push(s);
    else out.push(...directLoops(childStatements(s)));
  }
  return out;
}

/** Resolves a call's name to its procedure's name, for the scan in progress. */
let calleeName: (name: string) => string = (name) => name;

interface Work {
  /** Loops directly in the body (through blocks and branches). */
  nested: number;
  /** Calls to procedures that contain loops. */
  calls: number;
  /** An offload construct or data directive somewhere in the body. */
  offloadOrData: boolean;
  /** An offload compute construct somewhere in the body (the loop itself runs on the host). */
  offloadInside: boolean;
  /** A loop around kernels or several nests: the ones whose verdict the hover explains. */
  enclosesKernels: boolean;
}

function workOf(loop: LoopStmt, withLoops: WithLoops): Work {
  let offloadOrData = false;
  let offloadInside = false;
  let calls = 0;
  walkStatements(loop.body, (s) => {
    if (s.directives.some(isOffloadCompute)) offloadInside = true;
    if (s.directives.some((d) => isOffloadCompute(d) || isDataConstruct(d))) offloadOrData = true;
    if (s.kind === 'directive' && !s.directive.isEnd) offloadOrData = true;
    if (s.kind === 'call' && withLoops.has(calleeName(s.name))) calls++;
  });
  const nested = directLoops(loop.body).length;
  return { nested, calls, offloadOrData, offloadInside, enclosesKernels: offloadOrData || calls > 0 || nested >= 2 };
}

/**
 * The verdict on one loop that is not offloaded itself: undefined for a loop around no work (a
 * plain loop, which is a nest or part of one).
 */
function classify(loop: LoopStmt, proc: Procedure, work: Work, mark: 'annotation' | 'setting' | undefined, judge: LoopJudge): { time: boolean; reason: string } | undefined {
  if (loop.implied) return undefined;
  if (loop.directives.some((d) => isLoopDirective(d) || isOffloadCompute(d))) return undefined;
  if (mark === 'annotation') return { time: true, reason: 'the comment `offload-ledger: time-loop` before it names it' };
  if (mark === 'setting') return { time: true, reason: `its variable \`${loop.variable}\` is named by the time-loop-variables setting (\`--time-loop\`)` };
  if (work.nested === 0 && work.calls === 0 && !work.offloadOrData) return undefined;
  return judge.judge(loop, proc, indexesNestedArrays(loop), work.enclosesKernels);
}

/**
 * True when the loop walks through space rather than time: its variable appears in the
 * subscripts of most array accesses inside its nested loops. When the loop contains offloaded
 * constructs, only the accesses inside them count, so a host-side receiver record such as
 * `mic[t*NMIC + m]` does not make a time loop look spatial.
 */
function indexesNestedArrays(loop: LoopStmt): boolean {
  const v = loop.variable;
  if (!v) return false;
  const all: { offloaded: boolean; uses: boolean }[] = [];
  const collect = (stmts: Stmt[], offloaded: boolean): void => {
    for (const s of stmts) {
      const off = offloaded || s.directives.some(isOffloadCompute);
      for (const a of accessesOfStatement(s)) {
        all.push({ offloaded: off, uses: a.subscripts.some((sub) => !!sub && S.degreeIn(sub, v) !== 0) });
      }
      collect(childStatements(s), off);
    }
  };
  collect(directLoops(loop.body), false);
  const device = all.filter((a) => a.offloaded);
  const counted = device.length > 0 ? device : all;
  const uses = counted.filter((a) => a.uses).length;
  return uses * 2 > counted.length;
}

/** Procedures that contain a loop, directly or through calls (fixpoint over the call graph). */
/** Names of procedures that hold a loop or call (as a statement) one that does, asked per name. */
interface WithLoops {
  has(name: string): boolean;
}

const withLoopsCache = new WeakMap<ProgramModel, WithLoops>();

/**
 * Which procedures hold loops, directly or through the procedures they call, answered per name
 * when asked (a file of a large workspace asks about its own calls, not about every procedure of
 * the project). A name holds loops when any procedure of that name has one; its calls are those of
 * the last procedure of that name. A search from a name that finds no loop settles every name it
 * passed through (none of them reaches one either).
 */
function proceduresWithLoops(model: ProgramModel): WithLoops {
  const cached = withLoopsCache.get(model);
  if (cached) return cached;
  const resolve = calleesOf(model);
  const byName = new Map<string, Procedure>();
  const direct = new Set<string>();
  for (const p of model.procedures) {
    byName.set(p.name, p);
    if (bodyCalls(p.body).hasLoop) direct.add(p.name);
  }
  const known = new Map<string, boolean>();
  const has = (name: string): boolean => {
    const hit = known.get(name);
    if (hit !== undefined) return hit;
    if (direct.has(name)) return true;
    if (!byName.has(name)) return false;
    const seen = new Set<string>([name]);
    const queue = [name];
    while (queue.length > 0) {
      const p = byName.get(queue.pop()!);
      if (!p) continue;
      for (const c of bodyCalls(p.body).calls) {
        if (!c.statement) continue;
        const callee = resolve.resolve(c.name)?.name ?? c.name;
        if (direct.has(callee) || known.get(callee) === true) {
          known.set(name, true);
          return true;
        }
        if (seen.has(callee) || known.get(callee) === false) continue;
        seen.add(callee);
        queue.push(callee);
      }
    }
    for (const n of seen) known.set(n, false);
    return false;
  };
  const out: WithLoops = { has };
  withLoopsCache.set(model, out);
  return out;
}

/**
 * Iterations of the innermost bodies of a nest: the sum over innermost loops of the product of
 * trip counts on the path. A trip count that depends on an outer loop variable (triangular
 * nest) is evaluated at that variable's midpoint, which is exact when the dependence is linear
 * and an approximation otherwise; such counts are flagged `triangular`.
 */
export function nestIterations(nest: LoopNest): { expr: S.Expr; display: string; unknownLoops: LoopStmt[]; triangular: boolean } {
  const unknownLoops: LoopStmt[] = [];
  let triangular = false;
  const shown: string[] = [];
  const terms = nest.paths.map((path) => {
    const midpoints = new Map<string, S.Expr>();
    const factors = path.map((l) => {
      let count: S.Expr;
      if (l.tripCount) {
        count = l.tripCount;
        if (l.triangular) {
          triangular = true;
          count = S.substitute(count, midpoints);
        }
      } else {
        unknownLoops.push(l);
        count = S.sym(unknownTripSymbol(l));
      }
      if (l.variable && l.lower && l.upper) midpoints.set(l.variable, S.div(S.add(l.lower, l.upper), S.num(2)));
      return count;
    });
    shown.push(displayProduct(factors));
    return S.mul(...factors);
  });
  const expr = S.add(...terms);
  // The factored form reads like the loop headers (`(NY - 2)*(NX - 2)`); the expanded
  // polynomial does not. Both denote the same quantity.
  const display = S.isConst(expr) ? S.toString(expr) : shown.join(' + ');
  return { expr, display, unknownLoops, triangular };
}

/**
 * The symbol of a trip count no header gives. The step-counter pass names it after the counter
 * (`steps_iter`) or the procedure (`trips_main_1`) and makes it the loop's `tripCount`; the
 * line-based name is left for loops built without that pass.
 */
export function unknownTripSymbol(l: LoopStmt): string {
  return l.tripSymbol ?? `trips_L${l.keywordRange.start.line + 1}`;
}

/** Prints a product of factors, parenthesising sums and dropping unit factors. */
export function displayProduct(factors: S.Expr[]): string {
  const constant = factors.filter(S.isConst).reduce((acc, f) => acc * (S.constValue(f) ?? 1), 1);
  const symbolic = factors.filter((f) => !S.isConst(f));
  const alone = symbolic.length === 1 && constant === 1;
  const parts = symbolic.map((f) => {
    const t = S.toString(f);
    return !alone && /[+-]/.test(t.replace(/^-/, '')) ? `(${t})` : t;
  });
  if (constant !== 1 || parts.length === 0) parts.unshift(String(constant));
  return parts.join('*');
}
