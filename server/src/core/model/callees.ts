/**
 * Which procedure a call names. C and Fortran calls name the procedure directly; C++ calls go
 * through objects and scopes (`w.step(…)`, `p->step(…)`, `solver::step(…)`, a method defined as
 * `Wave::step`), so a call also matches the one procedure whose last name component equals the
 * call's, when exactly one does.
 */
import type { Procedure, ProgramModel } from './program';

const lastPart = (name: string): string => name.split(/::|\.|->/).pop() ?? name;

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
