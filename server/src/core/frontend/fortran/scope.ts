/**
 * Name scopes of a Fortran file. A scoping unit (module, main program, procedure) sees its own
 * declarations first, then what it imports with `use`, then its host's (Fortran 2008 §16.5.1.4
 * host association, §16.5.1.3 use association; from memory). Implicit typing follows the
 * default rule (names starting with i–n are integer, all others real) unless `implicit none`
 * or an `implicit` statement says otherwise.
 */
import type * as S from '../../symbolic';
import type { Declaration, ElementType } from '../../model/program';
import { ElementTypes } from '../../model/types';

export type ScopeKind = 'module' | 'program' | 'procedure';

export interface UseLink {
  module: Scope;
  /** `only:` list as local name → module name; undefined imports every name. */
  only?: Map<string, string>;
  /** Renames outside an `only:` list, local name → module name. */
  renames: Map<string, string>;
}

export class Scope {
  readonly decls = new Map<string, Declaration>();
  /** Named integer constants (`parameter`) with their symbolic values. */
  readonly constants = new Map<string, S.Expr>();
  /** Named constants of a floating type, for typing them in flop counts. */
  readonly floatConstants = new Map<string, ElementType>();
  /** Namelist groups declared here (`namelist /grid/ nx, ny`): group → member names. */
  readonly namelists = new Map<string, string[]>();
  private readonly uses: UseLink[] = [];
  /** Names this scope looked up, kept only for internal procedures (see `trackReferences`). */
  private referenced?: Set<string>;
  private implicitNone = false;
  private readonly implicit = new Map<string, ElementType>();

  constructor(
    readonly kind: ScopeKind,
    readonly name: string,
    readonly host?: Scope,
  ) {}

  use(module: Scope, only: Map<string, string> | undefined, renames: Map<string, string>): void {
    this.uses.push({ module, only, renames });
  }

  /** The modules this scope uses, with their `only` lists and renames. */
  get useLinks(): readonly UseLink[] {
    return this.uses;
  }

  /**
   * Named constants this scope sees under a local name of its own (`use grid, only: n => nx`),
   * which the file-wide bindings of module constants do not cover.
   */
  renamedConstants(): [string, S.Expr][] {
    const out: [string, S.Expr][] = [];
    for (const u of this.uses) {
      for (const [local, remote] of u.only ?? u.renames) {
        if (local === remote) continue;
        const c = u.module.constant(remote);
        if (c) out.push([local, c]);
      }
    }
    return out;
  }

  /**
   * Resolves a name through local, use and host association; `pick` chooses the table. `seen`
   * guards against a module that uses itself in broken code; it is made only when a use is
   * followed, because most names are found locally or in the host.
   */
  private find<T>(name: string, pick: (s: Scope) => Map<string, T>, seen?: Set<Scope>): T | undefined {
    if (seen?.has(this)) return undefined;
    const own = pick(this).get(name);
    if (own !== undefined) return own;
    if (this.uses.length > 0) {
      seen ??= new Set();
      seen.add(this);
    }
    for (const u of this.uses) {
      let remote: string | undefined = u.renames.get(name) ?? name;
      if (u.only) remote = u.only.get(name);
      if (remote === undefined) continue;
      const hit = u.module.find(remote, pick, seen);
      if (hit !== undefined) return hit;
    }
    return this.host?.find(name, pick, seen);
  }

  lookup(name: string): Declaration | undefined {
    this.referenced?.add(name);
    return this.find(name, (s) => s.decls);
  }

  /**
   * Keeps the names this scope looks up from now on. An internal procedure does, so that the
   * arrays it takes from its host by host association can be found once its body is read.
   */
  trackReferences(): void {
    this.referenced = new Set();
  }

  get references(): ReadonlySet<string> {
    return this.referenced ?? new Set();
  }

  /**
   * The declaration `name` resolves to by host association from a procedure or main program,
   * if it resolves to one: not a local, not a use-associated name, and not a module variable
   * (module variables are the file's globals and need no link).
   */
  hostAssociated(name: string): Declaration | undefined {
    const d = this.find(name, (s) => s.decls);
    if (!d || this.decls.get(name) === d) return undefined;
    for (let h = this.host; h && h.kind !== 'module'; h = h.host) if (h.decls.get(name) === d) return d;
    return undefined;
  }

  constant(name: string): S.Expr | undefined {
    return this.find(name, (s) => s.constants);
  }

  floatConstant(name: string): ElementType | undefined {
    return this.find(name, (s) => s.floatConstants);
  }

  setImplicitNone(): void {
    this.implicitNone = true;
  }

  setImplicit(from: string, to: string, type: ElementType): void {
    for (let c = from.charCodeAt(0); c <= to.charCodeAt(0); c++) this.implicit.set(String.fromCharCode(c), type);
  }

  /** The implicit type of an undeclared name (Fortran 2008 §5.5, from memory). */
  implicitType(name: string): ElementType {
    const letter = name[0] ?? 'a';
    const own = this.implicit.get(letter);
    if (own) return own;
    if (!this.implicitNone && this.host) return this.host.implicitType(name);
    return /^[i-n]/.test(letter) ? ElementTypes.int : ElementTypes.float;
  }
}
