/** Name lookup for one procedure: its locals and parameters, then the file's globals. */
import type { Declaration, ElementType, Procedure, ProgramModel } from '../model/program';
import { lastByName } from '../model/names';

/**
 * Looks names up through the procedure (locals, then parameters) and then its parent, the file's
 * globals. The by-name Maps are built once per list (model/names.ts) and shared by every nest of
 * the procedure and every procedure of the file, so a Scope costs nothing to make: no copy of the
 * globals per loop nest. A later declaration of the same name wins within a list, and locals win
 * over parameters over globals, as when all three were copied into one Map in that order.
 */
export class Scope {
  private readonly globals: ReadonlyMap<string, Declaration>;
  private readonly params: ReadonlyMap<string, Declaration> | undefined;
  private readonly locals: ReadonlyMap<string, Declaration> | undefined;

  constructor(private readonly model: ProgramModel, proc?: Procedure) {
    this.globals = lastByName(model.globals);
    this.params = proc?.params && proc.params.length > 0 ? lastByName(proc.params) : undefined;
    this.locals = proc?.locals && proc.locals.length > 0 ? lastByName(proc.locals) : undefined;
  }

  private get(name: string): Declaration | undefined {
    return this.locals?.get(name) ?? this.params?.get(name) ?? this.globals.get(name);
  }

  lookup(name: string): Declaration | undefined {
    return this.get(name) ?? this.get(name.replace(/^.*(\.|->|%)/, ''));
  }

  /** Element type of a variable or array, including macros that stand for floating constants. */
  typeOf(name: string): ElementType | undefined {
    return this.lookup(name)?.type ?? this.model.floatConstants.get(name);
  }
}
