/**
 * Which value each size symbol has. Sources, strongest first: the user's own bindings (CLI
 * `--bind`, editor settings), the procedure's literal initialisations, call sites that all pass
 * the same value for a parameter, and the file's macros, constants and enumerators.
 */
import * as S from '../symbolic';
import type { Procedure, ProgramModel, Stmt, VExpr } from '../model/program';
import { forEachCallInValue, toSymbolic, valuesOfStatement, walkStatements } from '../model/values';
import { bodyCalls, calleesOf, type BodyCall } from '../model/callees';
import { legacyTripSymbols } from '../model/stepCounters';

export type BindingMap = Map<string, S.Expr>;

/** Bindings visible inside one procedure. */
export function procedureBindings(model: ProgramModel, proc: Procedure | undefined, user: ReadonlyMap<string, number>, callSite: CallSiteBindings): BindingMap {
  const out: BindingMap = new Map(model.bindings);
  if (proc) {
    for (const [k, v] of callSite.get(proc.name) ?? []) out.set(k, v);
    for (const [k, v] of proc.bindings) out.set(k, v);
  }
  for (const [k, v] of user) for (const key of userKeys(model, k)) out.set(key, S.num(v));
  // A binding written for the old line-based name of a loop's count (`trips_L20`) still binds
  // the loop, now named after its counter or procedure (model/stepCounters.ts).
  const legacy = [...user.keys()].some((k) => /^trips_l\d+$/i.test(k)) ? legacyTripSymbols(model) : undefined;
  for (const [k, v] of user) {
    const name = legacy?.get(k.replace(/^trips_l/i, 'trips_L'));
    if (name && !user.has(name)) out.set(name, S.num(v));
  }
  return out;
}

/**
 * The symbols a user binding names in a model. Fortran names are case-insensitive (a lower-case
 * letter is the upper-case one outside character context: Fortran 2008 §3.1, from memory), and
 * the Fortran front end spells every name in lower case, so `--bind M_LEN=513` binds `m_len`.
 * The key is also kept as written, because symbols the analyses make themselves keep their own
 * spelling (`trips_L12` for a loop without a readable trip count; its `L` is matched in any case).
 */
export function userKeys(model: Pick<ProgramModel, 'language'>, key: string): string[] {
  if (model.language !== 'fortran') return [key];
  const lower = key.toLowerCase();
  const trips = /^trips_l(\d+)$/.exec(lower);
  if (trips) return [...new Set([key, `trips_L${trips[1]}`])];
  return key === lower ? [key] : [key, lower];
}

/**
 * Binds scalar parameters of procedures whose every call site in the file passes the same
 * value (after the caller's own bindings). A parameter passed different values stays symbolic:
 * a single number would be wrong for some of the calls.
 */
/** A call's arguments as symbolic forms, made once per call (the call belongs to a body kept per model). */
const argForms = new WeakMap<BodyCall, (S.Expr | undefined)[]>();
function symbolicArgs(c: BodyCall): (S.Expr | undefined)[] {
  let v = argForms.get(c);
  if (!v) argForms.set(c, (v = c.args.map((a) => toSymbolic(a))));
  return v;
}

/** The bindings calls give each procedure's scalar parameters, by procedure name. */
export interface CallSiteBindings {
  get(name: string): BindingMap | undefined;
}

/**
 * Values flow down call chains (main's nx = 256 → run(nx) → sweep(nx)): a parameter is bound when
 * every call passes it the same value, seen through the caller's own bindings, which its callers
 * gave it in turn (up to MAX_CHAIN calls up). Worked out per procedure when asked (and kept):
 * a file of a large workspace asks for its own procedures and the chains above them, not for
 * every procedure of the project. The result equals rounds over all calls until nothing changes.
 */
export function callSiteBindings(model: ProgramModel): CallSiteBindings {
  const callees = calleesOf(model);
  // Every call into each procedure, in the order a walk of the bodies meets them.
  const into = new Map<Procedure, { caller: Procedure; values: (S.Expr | undefined)[] }[]>();
  for (const caller of model.procedures) {
    // The calls of each body are found once per body (shared by every file of a workspace).
    for (const c of bodyCalls(caller.body).calls) {
      const callee = callees.resolve(c.name);
      if (!callee || callee === caller) continue;
      const list = into.get(callee);
      if (list) list.push({ caller, values: symbolicArgs(c) });
      else into.set(callee, [{ caller, values: symbolicArgs(c) }]);
    }
  }
  // A name stands for the last procedure of that name that is called (as a table by name keeps it).
  const byName = new Map<string, Procedure>();
  for (const callee of into.keys()) byName.set(callee.name, callee);
  const rounds = new Map<Procedure, (BindingMap | undefined)[]>();
  const locals = new Map<Procedure, (BindingMap | undefined)[]>();
  const at = (name: string, round: number): BindingMap | undefined => {
    const p = round > 0 ? byName.get(name) : undefined;
    return p ? given(p, round) : undefined;
  };
  // The scope a caller's arguments are read in after `round` rounds.
  const localOf = (caller: Procedure, round: number): BindingMap => {
    const memo = locals.get(caller) ?? [];
    locals.set(caller, memo);
    return (memo[round] ??= new Map([...model.bindings, ...(at(caller.name, round) ?? []), ...caller.bindings]));
  };
  const given = (callee: Procedure, round: number): BindingMap => {
    const memo = rounds.get(callee) ?? [];
    rounds.set(callee, memo);
    const hit = memo[round];
    if (hit) return hit;
    const list = into.get(callee)!.map((c) => {
      const local = localOf(c.caller, round - 1);
      return c.values.map((e) => (e ? S.substitute(e, local) : undefined));
    });
    const b: BindingMap = new Map();
    callee.params.forEach((p, i) => {
      if (p.isArray) return;
      const first = list[0][i];
      // A parameter bound to its own name (`f(n)` inside a scope whose n is f's n) says nothing.
      if (first && !S.equals(first, S.sym(p.name)) && list.every((c) => c[i] && S.equals(c[i]!, first))) b.set(p.name, first);
    });
    memo[round] = b;
    return b;
  };
  return { get: (name) => at(name, MAX_CHAIN) };
}

const MAX_CHAIN = 6;

/** A quantity as the report shows it: the symbolic form, its value when bound, and what is unbound. */
export interface Quantity {
  value: number | null;
  expr: string;
  unbound?: string[];
}

/** `display` is an equivalent, more readable form of `e` (a factored product), when the caller has one. */
export function quantity(e: S.Expr, bindings: ReadonlyMap<string, S.Expr>, display?: string): Quantity {
  const value = S.evaluate(e, bindings);
  const expr = display ?? S.toString(e);
  if (value !== undefined) return { value, expr };
  const unbound = S.freeSymbols(S.substitute(e, bindings));
  return { value: null, expr, unbound };
}
