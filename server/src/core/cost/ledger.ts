/**
 * The loop cost ledger: flops and bytes per innermost iteration of one nest, arithmetic
 * intensity in both views, and the stencil footprint behind them.
 */
import * as S from '../symbolic';
import type { ArrayAccess, LoopStmt, ProgramModel, Stmt } from '../model/program';
import { accessesOfStatement, childStatements } from '../model/values';
import type { LoopNest } from '../analysis/nests';
import { type ArrayFootprint, arrayFootprint, centreOffsets } from './footprint';
import { coveredReads } from './reuse';
import { unclamp } from './clamps';
import { assignmentFlops, countFlops } from './flops';
import { intensity } from './roofline';
import { Scope } from './scope';
import { type Traffic, traffic } from './traffic';

export interface CostOptions {
  /** Cache the host layer condition is checked against, in bytes. */
  cacheBytes: number;
}

export interface NestCost {
  flopsPerIteration: number;
  /** True when statements outside the innermost loops were weighted by how often they run. */
  weighted: boolean;
  bytes: { device: number; host: number };
  intensity: { device?: number; host?: number };
  footprints: ArrayFootprint[];
  traffic: Traffic;
  /** Calls met in floating-point context that the flop table does not know (counted as zero). */
  unknownCalls: string[];
}

export function nestCost(nest: LoopNest, model: ProgramModel, bindings: ReadonlyMap<string, S.Expr>, iterations: number | null, options: CostOptions): NestCost {
  const scope = new Scope(model, nest.procedure);
  const loops = nestLoops(nest.root);
  const nestVars = [...new Set(loops.map((l) => l.variable).filter((v): v is string => !!v))];
  // Loop variables are the free variables of the nest; a binding of the same name elsewhere in
  // the procedure must not replace them.
  const outer = new Map([...bindings].filter(([k]) => !nestVars.includes(k)));
  const trips = new Map<string, number | undefined>();
  for (const l of loops) if (l.variable) trips.set(l.variable, l.tripCount ? S.evaluate(l.tripCount, outer) : undefined);

  // Flops: every statement weighted by its executions inside the nest, divided by the iterations.
  let total = 0;
  let weightedOk = iterations !== null && iterations > 0;
  const unknownCalls: string[] = [];
  const accesses: ArrayAccess[] = [];
  const visit = (stmts: Stmt[], execs: number | undefined): void => {
    for (const s of stmts) {
      accesses.push(...accessesOfStatement(s));
      const f = statementFlops(s, scope);
      unknownCalls.push(...f.unknownCalls);
      if (f.flops > 0) {
        if (execs === undefined) weightedOk = false;
        else total += f.flops * execs;
      }
      if (s.kind === 'loop') {
        const t = s.variable ? trips.get(s.variable) : undefined;
        visit(s.body, execs !== undefined && t !== undefined ? execs * t : undefined);
      } else {
        visit(childStatements(s), execs);
      }
    }
  };
  visit([nest.root], 1);
  let flopsPerIteration: number;
  if (weightedOk && iterations) flopsPerIteration = total / iterations;
  else flopsPerIteration = innermostFlops(nest, scope);

  // Bytes: footprints per array, then traffic in both views.
  const subscripts = new Map<ArrayAccess, (S.Expr | undefined)[]>();
  // A clamped neighbour read (`h(min(i+1,nx),j)`) costs as the neighbour it clamps (cost/clamps.ts).
  const read = (a: ArrayAccess, s: S.Expr): S.Expr => (a.isRead && !a.isWrite ? unclamp(s, nestVars) ?? s : s);
  for (const a of accesses) subscripts.set(a, a.subscripts.map((s) => (s ? read(a, S.substitute(s, outer)) : undefined)));
  const covered = coveredReads(nest.root, (a) => subscripts.get(a) ?? a.subscripts);
  const byArray = new Map<string, { access: ArrayAccess; subscripts: (S.Expr | undefined)[]; covered: boolean }[]>();
  for (const a of accesses) {
    const list = byArray.get(a.array) ?? [];
    list.push({ access: a, subscripts: subscripts.get(a)!, covered: covered.has(a) });
    byArray.set(a.array, list);
  }
  const footprints = [...byArray].map(([array, list]) =>
    arrayFootprint(array, list, nestVars, scope.lookup(array), model.layout, scope.typeOf(array)?.bytes ?? 8),
  );
  centreOffsets(footprints);
  // A tile's element loop (`i` from `it` to `it + T - 1`) moves with its tile loop too.
  const carries = new Map<string, Set<string>>();
  for (const l of loops) {
    if (!l.variable) continue;
    const mentioned = [...(l.lower ? S.freeSymbols(l.lower) : []), ...(l.upper ? S.freeSymbols(l.upper) : [])].filter((v) => v !== l.variable && nestVars.includes(v));
    for (const v of mentioned) carries.set(v, new Set([...(carries.get(v) ?? []), l.variable]));
  }
  const t = traffic(footprints, nestVars, trips, outer, options.cacheBytes, carries);
  return {
    flopsPerIteration,
    weighted: weightedOk,
    bytes: { device: t.device, host: t.host },
    intensity: { device: intensity(flopsPerIteration, t.device), host: intensity(flopsPerIteration, t.host) },
    footprints,
    traffic: t,
    unknownCalls: [...new Set(unknownCalls)],
  };
}

function statementFlops(s: Stmt, scope: Scope): { flops: number; unknownCalls: string[] } {
  switch (s.kind) {
    case 'assign': {
      const target = s.target.kind === 'index' ? { kind: 'index' as const, access: s.target.access } : { kind: 'var' as const, name: s.target.name };
      return assignmentFlops(s.op, target, s.value, scope);
    }
    case 'call':
      return countFlops({ kind: 'call', name: s.name, args: s.args }, scope);
    case 'other': {
      const acc = { flops: 0, unknownCalls: [] as string[] };
      for (const v of s.values) countFlops(v, scope, acc);
      return acc;
    }
    default:
      return { flops: 0, unknownCalls: [] };
  }
}

/** Flops of the statements directly in the first innermost loop: exact for perfect nests. */
function innermostFlops(nest: LoopNest, scope: Scope): number {
  const path = nest.paths[0];
  const inner = path?.[path.length - 1] ?? nest.root;
  let flops = 0;
  const visit = (stmts: Stmt[]): void => {
    for (const s of stmts) {
      if (s.kind === 'loop') continue;
      flops += statementFlops(s, scope).flops;
      visit(childStatements(s));
    }
  };
  visit(inner.body);
  return flops;
}

function nestLoops(root: LoopStmt): LoopStmt[] {
  const out: LoopStmt[] = [];
  const visit = (s: Stmt): void => {
    if (s.kind === 'loop') out.push(s);
    childStatements(s).forEach(visit);
  };
  visit(root);
  return out;
}
