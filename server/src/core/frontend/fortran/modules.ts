/**
 * Modules across files. A Fortran file exports its modules (their variables, named constants,
 * the modules they use and their `declare` directives) and may `use` modules that other files
 * of the workspace define (Fortran 2008 §11.2.2 and §16.5.1.3, use association, from memory).
 * The workspace step (model/workspace.ts) indexes the exports once and reads a file again with
 * a `find` for the modules it imports; this file is both ends of that exchange.
 *
 * An imported module becomes a module scope of the importing file, built once per reading:
 * its declarations are copied (an `allocate` here gives a copy its extents without touching the
 * other file's model) and join the file's globals, as an in-file module's variables do; its
 * constants bind file-wide. Its declarations and directives are placed at the `use` statement
 * that first brought them in, so that positions stay positions of this file.
 *
 * An OpenACC `declare` (§2.13) or OpenMP `declare target` in a module makes its data present on
 * the device for the whole program. For an in-file module the data ledger reads it at file
 * level; for an imported one, each unit that uses the module starts with that directive,
 * placed at its `use`, so the data is present before anything in the unit runs (see `relocate`
 * for where its copy is counted).
 */
import type { Declaration, ProgramModel, Stmt } from '../../model/program';
import type { ModuleExports } from '../../model/workspace';
import type { Directive, Range } from '../../types';
import { Scope } from './scope';

export type ModuleFinder = (name: string) => ModuleExports | undefined;

/** OpenACC data clauses that copy at the start of the data's lifetime. */
const COPYING = new Set(['copy', 'copyin', 'copyout']);

/**
 * A directive of another file placed at `at` in this one, with its clauses and variables. Its
 * clause text is not in this file, so it is marked as a macro-expanded directive is: no fix may
 * edit its clauses (an edit at `at` would rewrite the `use` statement).
 *
 * The copy a module's `declare copyin` makes happens once, when the program starts, so it is
 * kept only where the main program uses the module (`asWritten`). Elsewhere the directive only
 * says that the data is present on entry: its copying clauses act as `create`, which makes data
 * present without a transfer and leaves data that is present already alone.
 */
export function relocate(d: Directive, at: Range, asWritten: boolean): Directive {
  const canonical = (c: Directive['clauses'][number]): string => (!asWritten && d.family === 'openacc' && COPYING.has(c.canonical) ? 'create' : c.canonical);
  return {
    ...d, range: at, macroExpanded: true,
    clauses: d.clauses.map((c) => ({ ...c, canonical: canonical(c), range: at, vars: c.vars?.map((v) => ({ ...v, range: at })) })),
  };
}

/** Declare directives that make module data present: OpenACC `declare`, OpenMP `declare target` with a list. */
export function isModuleDeclare(d: Directive): boolean {
  if (d.isEnd) return false;
  if (d.family === 'openacc') return d.construct === 'declare';
  return d.construct === 'declare target' && d.clauses.length > 0;
}

export class ImportedModules {
  private readonly scopes = new Map<string, Scope | null>();
  private readonly declares = new Map<Scope, Directive[]>();
  /** Modules used in the file that it does not define (found elsewhere or not). */
  readonly imports = new Set<string>();

  constructor(
    private readonly model: ProgramModel,
    private readonly find: ModuleFinder | undefined,
    /** The file's own module of a name, if it defines one (read so far). */
    private readonly local: (name: string) => Scope | undefined,
  ) {}

  /** The scope of module `name` defined in another file, built on first use at `at`. */
  scope(name: string, at: Range): Scope | undefined {
    this.imports.add(name);
    const known = this.scopes.get(name);
    if (known !== undefined) return known ?? undefined;
    const e = this.find?.(name);
    if (!e) {
      this.scopes.set(name, null);
      return undefined;
    }
    const scope = new Scope('module', name);
    // Registered before its own uses are followed, so that modules using each other terminate.
    this.scopes.set(name, scope);
    for (const d of e.declarations) {
      const copy: Declaration = { ...d, dims: [...d.dims], range: at };
      scope.decls.set(copy.name, copy);
      this.model.globals.push(copy);
    }
    for (const [n, v] of e.constants) {
      scope.constants.set(n, v);
      this.model.bindings.set(n, v);
    }
    for (const [n, v] of e.floatConstants) {
      scope.floatConstants.set(n, v);
      this.model.floatConstants.set(n, v);
    }
    const declares = [...e.directives];
    for (const u of e.uses) {
      const m = this.local(u.module) ?? this.scope(u.module, at);
      if (!m) continue;
      scope.use(m, u.only ? new Map(u.only) : undefined, new Map(u.renames));
      declares.push(...(this.declares.get(m) ?? []));
    }
    this.declares.set(scope, declares);
    return scope;
  }

  /** The declare directives an imported module brings (its own and its imported modules'), where the other file has them. */
  declaresOf(scope: Scope): readonly Directive[] {
    return this.declares.get(scope) ?? [];
  }
}

/** A module as the file read it, for its exports. */
export interface ModuleRead {
  scope: Scope;
  /** Its specification part's statements (declare directives among them). */
  spec: readonly Stmt[];
}

/**
 * The exports of the file's modules, once the whole file is read. A variable keeps its literal
 * initialisation only when this file binds it (nothing here assigns it); another file cannot
 * see the assignments made here.
 */
export function moduleExports(model: ProgramModel, modules: readonly ModuleRead[]): ModuleExports[] {
  return modules.map(({ scope, spec }) => ({
    name: scope.name,
    declarations: [...scope.decls.values()].map((d) => (d.init && !d.isConst && !model.bindings.has(d.name) ? { ...d, init: undefined } : d)),
    constants: new Map(scope.constants),
    floatConstants: new Map(scope.floatConstants),
    uses: scope.useLinks.map((u) => ({ module: u.module.name, only: u.only, renames: u.renames })),
    directives: spec.flatMap((s) => (s.kind === 'directive' && isModuleDeclare(s.directive) ? [s.directive] : [])),
  }));
}
