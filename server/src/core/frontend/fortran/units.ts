/**
 * Program units: modules (their variables become `model.globals`, their procedures follow
 * `contains`), the main program (also without a `program` statement), external subroutines and
 * functions, and internal procedures after `contains`, which see their host's names. A `use`
 * of a module defined earlier in the file makes its variables and constants visible; a module
 * of another file does the same when the file is read with its workspace (modules.ts), and
 * contributes nothing but the intrinsic kind names otherwise.
 */
import * as S from '../../symbolic';
import type { Declaration, ProgramModel, Procedure, Stmt } from '../../model/program';
import type { Directive } from '../../types';
import { BodyBuilder } from './body';
import { type InternalUnit, linkHostAssociation } from './host';
import { ImportedModules, type ModuleFinder, type ModuleRead, relocate } from './modules';
import type { Line } from './classify';
import type { UnitContext } from './context';
import type { Cursor, Entry } from './cursor';
import { declare, readAttributeStatement, readCommon, readImplicit, readParameterStatement, readTypeDeclaration } from './declarations';
import type { ExprEnv } from './expressions';
import { type KindContext, intrinsicKind, realBytes } from './kinds';
import { Scope } from './scope';
import { lineRange, tokRange } from './statements';
import { fsym } from './symbolic';
import { closeOf, isId, isOp, splitTop } from './tokens';
import { readTypeSpec, startsTypeSpec } from './typespec';

export interface UnitInfo {
  procedure: Procedure;
  scope: Scope;
}

export interface FileOptions {
  /** Floating-point `#define` literals by lower-cased name. */
  floatMacros: ReadonlyMap<string, string>;
  /** Integer `#define` values by lower-cased name. */
  macroConstants: ReadonlyMap<string, S.Expr>;
  /** Every name that a directive's clause lists as data (`copy(h)`, `present(u)`). */
  dataNames: ReadonlySet<string>;
  /** Modules of other files of the workspace, when the file is read with them. */
  findModule?: ModuleFinder;
}

/** Attribute statements that declare their names as variables (`public`, `save`, … only qualify names). */
const DECLARING_ATTRS = new Set(['dimension', 'allocatable', 'pointer', 'target', 'intent', 'optional', 'value', 'volatile', 'contiguous', 'asynchronous']);

/** The line of an entry when it is one of the given kinds. */
const lineOf = (e: Entry | undefined, ...kinds: string[]): Line | undefined => (e?.kind === 'line' && kinds.includes(e.line.kind) ? e.line : undefined);

/** Kind number of a declared type: bytes for reals and integers, half the bytes for complex. */
function kindOfType(d: Declaration): number {
  return d.type.name.startsWith('complex') ? d.type.bytes / 2 : d.type.bytes;
}

/** `namelist /grid/ nx, ny /run/ steps`: each group's members, for reads of the group (inputDefaults.ts). */
function readNamelist(scope: Scope, line: Line): void {
  const t = line.toks;
  let group: string | undefined;
  for (let i = line.head + 1; i < t.length; i++) {
    if (isOp(t[i], '/') && isId(t[i + 1]) && isOp(t[i + 2], '/')) {
      group = t[i + 1].v;
      if (!scope.namelists.has(group)) scope.namelists.set(group, []);
      i += 2;
    } else if (group && isId(t[i])) scope.namelists.get(group)!.push(t[i].v);
  }
}

export class UnitReader {
  private readonly modules = new Map<string, Scope>();
  readonly units: UnitInfo[] = [];
  /** Internal procedures (after `contains` in a procedure or main program), for host association. */
  private readonly internals: InternalUnit[] = [];
  /** The file's modules with their specification parts, for its exports. */
  readonly modulesRead: ModuleRead[] = [];
  /** Modules of other files that units here use. */
  readonly imported: ImportedModules;
  /** Declare directives of imported modules that each scope's `use` statements bring: as written there, and placed at the `use`. */
  private readonly importedDeclares = new Map<Scope, { original: Directive; placed: Directive }[]>();

  constructor(
    private readonly model: ProgramModel,
    private readonly cursor: Cursor,
    private readonly opts: FileOptions,
  ) {
    this.imported = new ImportedModules(model, opts.findModule, (n) => this.modules.get(n));
  }

  run(): void {
    while (!this.cursor.eof) {
      const e = this.cursor.peek()!;
      if (e.kind === 'directive' || lineOf(e, 'end-unit', 'contains')) {
        this.cursor.next();
        continue;
      }
      switch (e.line.kind) {
        case 'module':
        case 'submodule':
          this.cursor.next();
          this.module(e.line);
          break;
        case 'program':
        case 'subroutine':
        case 'function':
          this.cursor.next();
          this.procedure(e.line, undefined);
          break;
        case 'blockdata': {
          // BLOCK DATA only initialises common blocks; nothing in it runs.
          this.cursor.next();
          const n = this.cursor.findAhead((x) => !!lineOf(x, 'end-unit'));
          this.cursor.skip(n < 0 ? 1 : n + 1);
          break;
        }
        default: {
          const before = this.cursor.peek();
          this.procedure(undefined, undefined);
          if (this.cursor.peek() === before) this.cursor.next();
        }
      }
    }
    const procedureOf = new Map(this.units.map((u) => [u.scope, u.procedure]));
    linkHostAssociation(this.internals, (s) => procedureOf.get(s));
  }

  private context(scope: Scope, dummies: Set<string>, created: Declaration[], defaultScope: 'global' | 'local'): UnitContext {
    const lookup = (n: string): Declaration | undefined => scope.lookup(n);
    const constant = (n: string): number | undefined => {
      const c = scope.constant(n) ?? this.opts.macroConstants.get(n);
      return c ? S.constValue(c) : undefined;
    };
    const kinds: KindContext = {
      constant,
      kindOfVariable: (n) => {
        const d = lookup(n);
        return d ? kindOfType(d) : undefined;
      },
    };
    const env: ExprEnv = {
      arrayOf: (n) => {
        const d = lookup(n);
        return d?.isArray ? d : undefined;
      },
      isUndeclaredVariable: (n) => this.opts.dataNames.has(n),
      isDeclared: (n) => lookup(n) !== undefined,
      realKindBytes: (k) => {
        const n = /^\d+$/.test(k) ? Number(k) : constant(k) ?? intrinsicKind(k);
        return n === undefined ? undefined : realBytes(n);
      },
      floatMacro: (n) => this.opts.floatMacros.get(n),
      symbolic: (v) => fsym(v, lookup),
    };
    return {
      model: this.model,
      scope,
      env,
      loopVars: [],
      declContext: (line) => ({ text: line.text, toks: line.toks, env, kinds, scope, defaultScope, dummies, created }),
    };
  }

  private spec(ctx: UnitContext, line: Line): void {
    const dc = ctx.declContext(line);
    const w = line.toks[line.head]?.v ?? '';
    if (line.kind === 'decl') {
      const spec = readTypeSpec(dc, line.head);
      if (spec) readTypeDeclaration(dc, spec);
    } else if (line.kind === 'attr' && DECLARING_ATTRS.has(w)) readAttributeStatement(dc, w, line.head);
    else if (line.kind === 'parameter') readParameterStatement(dc, line.head);
    else if (line.kind === 'common') readCommon(dc, line.head);
    else if (line.kind === 'implicit') readImplicit(dc, line.head);
    else if (line.kind === 'use') this.use(ctx.scope, line);
    else if (line.kind === 'spec-other' && w === 'namelist') readNamelist(ctx.scope, line);
  }

  /** `use m`, `use m, only: a, b => c`, `use, intrinsic :: iso_fortran_env, only: real64`. */
  private use(scope: Scope, line: Line): void {
    const t = line.toks;
    let i = line.head + 1;
    if (isOp(t[i], ',')) i += 2;
    if (isOp(t[i], '::')) i++;
    if (!isId(t[i])) return;
    let mod = this.modules.get(t[i].v);
    if (!mod) {
      const at = lineRange(line);
      mod = this.imported.scope(t[i].v, at);
      const declares = (mod ? this.imported.declaresOf(mod) : []).map((original) => ({ original, placed: relocate(original, at, scope.kind === 'program') }));
      if (declares.length > 0) this.importedDeclares.set(scope, [...(this.importedDeclares.get(scope) ?? []), ...declares]);
    }
    if (!mod) return;
    i++;
    let only: Map<string, string> | undefined;
    const renames = new Map<string, string>();
    if (isOp(t[i], ',')) {
      i++;
      if (isId(t[i], 'only') && isOp(t[i + 1], ':')) {
        only = new Map();
        i += 2;
      }
      for (const [a] of splitTop(t, i, t.length, ',')) {
        if (!isId(t[a])) continue;
        if (isOp(t[a + 1], '=>') && isId(t[a + 2])) (only ?? renames).set(t[a].v, t[a + 2].v);
        else only?.set(t[a].v, t[a].v);
      }
    }
    scope.use(mod, only, renames);
  }

  private module(header: Line): void {
    const t = header.toks;
    let k = header.head + 1;
    if (header.kind === 'submodule' && isOp(t[k], '(')) k = closeOf(t, k) + 1;
    const name = isId(t[k]) ? t[k].v : '?';
    const scope = new Scope('module', name);
    this.modules.set(name, scope);
    const created: Declaration[] = [];
    const ctx = this.context(scope, new Set(), created, 'global');
    // A module's specification part declares; nothing in it runs.
    const spec = new BodyBuilder(this.cursor, ctx, (l) => this.spec(ctx, l)).block({ kind: 'unit' });
    this.modulesRead.push({ scope, spec });
    if (lineOf(this.cursor.peek(), 'contains')) {
      this.cursor.next();
      this.contained(scope);
    }
    if (lineOf(this.cursor.peek(), 'end-unit')) this.cursor.next();
    this.model.globals.push(...created);
    for (const [n, v] of scope.constants) this.model.bindings.set(n, v);
    for (const [n, v] of scope.floatConstants) this.model.floatConstants.set(n, v);
  }

  /**
   * Declare directives of imported modules visible in a unit, through its own `use` statements
   * or its module's, as statements that open its body (see modules.ts). A host procedure's are
   * left out: its internal procedures run only after the host's body has started.
   */
  private declaresFor(scope: Scope): Stmt[] {
    const seen = new Set<Directive>();
    const out: Stmt[] = [];
    for (let s: Scope | undefined = scope; s; s = s.host) {
      if (s !== scope && s.kind !== 'module') continue;
      for (const { original, placed } of this.importedDeclares.get(s) ?? []) {
        if (seen.has(original)) continue;
        seen.add(original);
        out.push({ kind: 'directive', directive: placed, range: placed.range, directives: [] });
      }
    }
    return out;
  }

  /** Internal or module procedures after `contains`, up to the host's end. */
  private contained(host: Scope): void {
    for (;;) {
      const e = this.cursor.peek();
      if (!e || lineOf(e, 'end-unit', 'module', 'submodule', 'program', 'blockdata')) return;
      this.cursor.next();
      const unit = lineOf(e, 'subroutine', 'function');
      if (unit) this.procedure(unit, host);
    }
  }

  private procedure(header: Line | undefined, host: Scope | undefined): void {
    const t = header?.toks ?? [];
    const kind = header?.kind ?? 'program';
    const kw = header ? (kind === 'program' ? header.head : t.findIndex((x, k) => k >= header.head && x.t === 'id' && (x.v === 'subroutine' || x.v === 'function'))) : -1;
    const first = this.cursor.peek();
    const start = header ? lineRange(header) : first?.kind === 'line' ? lineRange(first.line) : first?.range ?? { start: { line: 0, col: 0 }, end: { line: 0, col: 0 } };
    const hasName = header !== undefined && kw >= 0 && isId(t[kw + 1]);
    const name = hasName ? t[kw + 1].v : 'main';
    const nameRange = hasName ? tokRange(header!, kw + 1, kw + 2) : start;
    const dummies: string[] = [];
    let after = kw + 2;
    if (header && kind !== 'program' && isOp(t[kw + 2], '(')) {
      const close = closeOf(t, kw + 2);
      for (const [a, b] of splitTop(t, kw + 3, close < 0 ? t.length : close, ',')) if (b === a + 1 && isId(t[a])) dummies.push(t[a].v);
      after = close < 0 ? t.length : close + 1;
    }
    const scope = new Scope(kind === 'program' ? 'program' : 'procedure', name, host);
    const internal = host && host.kind !== 'module' ? host : undefined;
    if (internal) scope.trackReferences();
    const created: Declaration[] = [];
    const ctx = this.context(scope, new Set(dummies), created, 'local');
    const proc: Procedure = { name, ...(kind === 'program' ? { program: true as const } : {}), range: start, nameRange, params: [], locals: [], body: [], bindings: new Map() };
    this.model.procedures.push(proc);
    this.units.push({ procedure: proc, scope });
    if (header && kind === 'function') this.functionResult(ctx, header, kw, after, name, nameRange);
    proc.body = new BodyBuilder(this.cursor, ctx, (l) => this.spec(ctx, l)).block({ kind: 'unit' });
    proc.body.unshift(...this.declaresFor(scope));
    let end = proc.body.length > 0 ? proc.body[proc.body.length - 1].range.end : start.end;
    if (lineOf(this.cursor.peek(), 'contains')) {
      this.cursor.next();
      this.contained(scope);
    }
    const n = lineOf(this.cursor.peek(), 'end-unit');
    if (n) {
      this.cursor.next();
      end = lineRange(n).end;
    }
    proc.range = { start: start.start, end };
    const dc = header ? ctx.declContext(header) : undefined;
    proc.params = dummies.map((d) => scope.decls.get(d) ?? (dc ? declare(dc, d, nameRange) : undefined)).filter((d): d is Declaration => !!d);
    proc.locals = created.filter((d) => d.scope !== 'param');
    if (internal) this.internals.push({ procedure: proc, scope, host: internal, dummies: proc.params.length });
  }

  /** The result variable of a function: `result(r)` or the function's name, typed by a prefix. */
  private functionResult(ctx: UnitContext, header: Line, kw: number, after: number, name: string, nameRange: Procedure['nameRange']): void {
    const t = header.toks;
    const dc = ctx.declContext(header);
    let result = name;
    for (let k = after; k < t.length; k++) {
      if (isId(t[k], 'result') && isOp(t[k + 1], '(') && isId(t[k + 2])) result = t[k + 2].v;
    }
    const d = declare(dc, result, nameRange);
    for (let k = header.head; k < kw; k++) {
      if (!startsTypeSpec(t, k)) continue;
      const spec = readTypeSpec(dc, k);
      if (spec) d.type = spec.type;
      break;
    }
  }
}
