/** Name lookup for one procedure: its locals and parameters, then the file's globals. */
import type { Declaration, ElementType, Procedure, ProgramModel } from '../model/program';

export class Scope {
  private readonly names = new Map<string, Declaration>();

  constructor(private readonly model: ProgramModel, proc?: Procedure) {
    for (const g of model.globals) this.names.set(g.name, g);
    for (const p of proc?.params ?? []) this.names.set(p.name, p);
    for (const l of proc?.locals ?? []) this.names.set(l.name, l);
  }

  lookup(name: string): Declaration | undefined {
    return this.names.get(name) ?? this.names.get(name.replace(/^.*(\.|->|%)/, ''));
  }

  /** Element type of a variable or array, including macros that stand for floating constants. */
  typeOf(name: string): ElementType | undefined {
    return this.lookup(name)?.type ?? this.model.floatConstants.get(name);
  }
}
