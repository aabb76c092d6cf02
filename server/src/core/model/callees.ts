/**
 * Which procedure a call names. C and Fortran calls name the procedure directly; C++ calls go
 * through objects and scopes (`w.step(…)`, `p->step(…)`, `solver::step(…)`, a method defined as
 * `Wave::step`), so a call also matches the one procedure whose last name component equals the
 * call's, when exactly one does.
 */
import type { Procedure, ProgramModel, Stmt, VExpr } from './program';
import { forEachCallInValue, valuesOfStatement, walkStatements } from './values';

/** The last component of a C++ name (`Wave::step`, `w.step`, `p->step` → `step`). */
export const lastPart = (name: string): string => name.split(/::|\.|->/).pop() ?? name;

export class Callees {
  private readonly exact = new Map<string, Procedure>();
  private readonly byLast = new Map<string, Procedure | null>();

  constructor(procedures: readonly Procedure[]) {
    for (const p of procedures) {
      this.exact.set(p.name, p);
      const last = lastPart(p.name);
      // null marks an ambiguous short name: two procedures share it, so neither is guessed.
      this.byLast.set(last, this.byLast.has(last) && this.byLast.get(last) !== p ? null : p);
    }
  }

  resolve(name: string): Procedure | undefined {
    return this.exact.get(name) ?? this.byLast.get(lastPart(name)) ?? undefined;
  }
}

const cache = new WeakMap<ProgramModel, Callees>();

/** The callee index of a model, built once. */
export function calleesOf(model: ProgramModel): Callees {
  let c = cache.get(model);
  if (!c) {
    c = new Callees(model.procedures);
    cache.set(model, c);
  }
  return c;
}

/** One call made by a body: a call statement's, or one inside an expression (`total(f, N)`). */
export interface BodyCall {
  name: string;
  args: VExpr[];
  /** True for a call statement (`call step(u)`, `step(u);`), false for a call inside a value. */
  statement: boolean;
}

export interface BodyCalls {
  /** The body holds a loop (at any depth). */
  hasLoop: boolean;
  /** Every call, in the order a walk of the body meets them (a statement's own call first). */
  calls: BodyCall[];
}

const bodies = new WeakMap<readonly Stmt[], BodyCalls>();

/**
 * The calls a procedure body makes and whether it holds a loop, found by one walk and kept per
 * body. A workspace's files share the procedure bodies of the other files (their models are
 * built once), so each file's analysis reads these instead of walking the whole project again.
 */
export function bodyCalls(body: readonly Stmt[]): BodyCalls {
  let b = bodies.get(body);
  if (!b) {
    const out: BodyCalls = { hasLoop: false, calls: [] };
    walkStatements(body, (s) => {
      if (s.kind === 'loop') out.hasLoop = true;
      if (s.kind === 'call') out.calls.push({ name: s.name, args: s.args, statement: true });
      for (const v of valuesOfStatement(s)) forEachCallInValue(v, (c) => out.calls.push({ name: c.name, args: c.args, statement: false }));
    });
    b = out;
    bodies.set(body, b);
  }
  return b;
}
