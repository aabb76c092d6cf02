/**
 * Finds compute loop nests and time loops in a program model.
 *
 * A *time loop* contains compute work (an offload construct, a data directive, two or more
 * loop nests, or a call to a procedure with loops) and its variable indexes none of the arrays
 * inside its nested loops — stepping through time, not through space. A *loop nest* is the
 * outermost loop that is not a time loop; loops inside it belong to it.
 */
import * as S from '../symbolic';
import type { Directive } from '../types';
import type { LoopStmt, Procedure, ProgramModel, Stmt } from '../model/program';
import { isDataConstruct, isLoopDirective, isOffloadCompute } from '../model/directives';
import { accessesOfStatement, childStatements, walkStatements } from '../model/values';
import { calleesOf } from '../model/callees';

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
}

export interface TimeLoop {
  loop: LoopStmt;
  procedure: Procedure;
  /** Nests inside this time loop (in this procedure). */
  nests: LoopNest[];
  /** Time loops nested inside another time loop are reported, but the outer one is the step. */
  parent?: LoopStmt;
}

export interface NestScan {
  nests: LoopNest[];
  timeLoops: TimeLoop[];
}

export function scanLoops(model: ProgramModel): NestScan {
  const withLoops = proceduresWithLoops(model);
  const callees = calleesOf(model);
  calleeName = (name) => callees.resolve(name)?.name ?? name;
  const out: NestScan = { nests: [], timeLoops: [] };
  for (const proc of model.procedures) {
    const visit = (stmts: Stmt[], offload: Directive | undefined, time: TimeLoop | undefined): void => {
      for (const s of stmts) {
        const here = s.directives.find(isOffloadCompute) ?? offload;
        if (s.kind === 'loop') {
          if (!here && isTimeLoop(s, withLoops)) {
            const tl: TimeLoop = { loop: s, procedure: proc, nests: [], parent: time?.loop };
            out.timeLoops.push(tl);
            visit(s.body, here, tl);
            continue;
          }
          const nest = makeNest(s, proc, here, time?.loop);
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

function isTimeLoop(loop: LoopStmt, withLoops: Set<string>): boolean {
  if (loop.directives.some((d) => isLoopDirective(d) || isOffloadCompute(d))) return false;
  let offloadOrData = false;
  let calls = 0;
  walkStatements(loop.body, (s) => {
    if (s.directives.some((d) => isOffloadCompute(d) || isDataConstruct(d))) offloadOrData = true;
    if (s.kind === 'directive' && !s.directive.isEnd) offloadOrData = true;
    if (s.kind === 'call' && withLoops.has(calleeName(s.name))) calls++;
  });
  const nested = directLoops(loop.body).length;
  const works = offloadOrData || nested >= 2 || calls > 0 || (nested >= 1 && calls > 0);
  if (!works) return false;
  return !indexesNestedArrays(loop);
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
function proceduresWithLoops(model: ProgramModel): Set<string> {
  const out = new Set<string>();
  const calls = new Map<string, string[]>();
  const resolve = calleesOf(model);
  for (const p of model.procedures) {
    const callees: string[] = [];
    walkStatements(p.body, (s) => {
      if (s.kind === 'loop') out.add(p.name);
      if (s.kind === 'call') callees.push(resolve.resolve(s.name)?.name ?? s.name);
    });
    calls.set(p.name, callees);
  }
  let changed = true;
  while (changed) {
    changed = false;
    for (const [name, callees] of calls) {
      if (!out.has(name) && callees.some((c) => out.has(c))) {
        out.add(name);
        changed = true;
      }
    }
  }
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

export function unknownTripSymbol(l: LoopStmt): string {
  return `trips_L${l.keywordRange.start.line + 1}`;
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
