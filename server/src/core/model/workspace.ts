/**
 * A file's model seen with the rest of its workspace: procedures and globals defined in other
 * files of the same language family are added (marked with their origin), so that a time loop
 * calling a kernel in another file follows the call. The other file's own constants travel
 * with each of its procedures, so sizes inside them still resolve.
 *
 * Fortran files also share modules: `use params` may name a module that another file of the
 * workspace defines, and without it the file's sizes, array shapes and device declarations are
 * unknown (`u(i, j)` even reads as a function call). A front end whose files share named units
 * leaves `WorkspaceLinks` beside its model: what the file exports, what it imports from
 * elsewhere, and how to read the file again once those imports are known. The workspace step
 * indexes the exports once per workspace, reads again only the files that import a unit found
 * there, and keeps each such reading for as long as the files that supplied its imports are
 * the same models.
 */
import type { Expr } from '../symbolic';
import type { Directive } from '../types';
import type { Declaration, ElementType, Procedure, ProgramModel } from './program';
import { bodyCalls, lastPart } from './callees';

/** What a named unit (a Fortran module) makes visible to the files that use it. */
export interface ModuleExports {
  name: string;
  /** Variables and named constants of its specification part, as declared there. */
  declarations: Declaration[];
  /** Named integer constants with their values. */
  constants: ReadonlyMap<string, Expr>;
  /** Named constants of a floating type, for typing them in flop counts. */
  floatConstants: ReadonlyMap<string, ElementType>;
  /** Units it uses in turn: `only` and renames as local name → name in that unit. */
  uses: { module: string; only?: ReadonlyMap<string, string>; renames: ReadonlyMap<string, string> }[];
  /** Declare directives of its specification part (device copies for the whole program). */
  directives: Directive[];
}

export interface WorkspaceLinks {
  /** Units the file defines. */
  exports: ModuleExports[];
  /** Units the file uses without defining them. */
  imports: string[];
  /** The file's model read again with units of other files visible through `find`. */
  relink(find: (unit: string) => ModuleExports | undefined): ProgramModel;
}

const links = new WeakMap<ProgramModel, WorkspaceLinks>();

/** Called by a front end beside the model it built. */
export function setWorkspaceLinks(model: ProgramModel, l: WorkspaceLinks): void {
  links.set(model, l);
}

export function workspaceLinksOf(model: ProgramModel): WorkspaceLinks | undefined {
  return links.get(model);
}

const family = (l: ProgramModel['language']): string => (l === 'fortran' ? 'fortran' : 'c');

interface IndexEntry {
  model: ProgramModel;
  exports: ModuleExports;
}
type UnitIndex = ReadonlyMap<string, IndexEntry>;

/** The exported units of a workspace by name (the first file that defines a name wins), built once per list. */
const indexes = new WeakMap<readonly ProgramModel[], Map<string, IndexEntry>>();
function unitIndex(models: readonly ProgramModel[]): Map<string, IndexEntry> {
  let index = indexes.get(models);
  if (!index) {
    index = new Map();
    for (const m of models) for (const e of links.get(m)?.exports ?? []) if (!index.has(e.name)) index.set(e.name, { model: m, exports: e });
    indexes.set(models, index);
  }
  return index;
}

/**
 * The index a model is resolved against: the workspace's, plus the model's own units when the
 * workspace does not hold its file (an editor's open document is not among its neighbours).
 */
function indexFor(model: ProgramModel, others: readonly ProgramModel[]): UnitIndex {
  const index = unitIndex(others);
  const own = links.get(model)?.exports ?? [];
  if (own.length === 0 || others.some((o) => o.path === model.path)) return index;
  const out = new Map(index);
  for (const e of own) out.set(e.name, { model, exports: e });
  return out;
}

interface Resolution {
  resolved: ProgramModel;
  /** Every unit name the reading asked for, directly or through a supplier, with the model that supplied it. */
  asked: Map<string, ProgramModel | undefined>;
}
const resolutions = new WeakMap<ProgramModel, Resolution>();

/** The model that supplies `unit` to the file at `path`: never the file itself. */
function supplier(index: UnitIndex, unit: string, path: string): IndexEntry | undefined {
  const e = index.get(unit);
  return e && e.model.path !== path ? e : undefined;
}

/**
 * The model read with the units of other files that it imports. Suppliers are resolved first,
 * so a unit that uses a third file's unit exports what that use gave it (a kind, a size); a
 * cycle between files falls back to the supplier's own reading.
 */
function resolve(model: ProgramModel, index: UnitIndex, active: Set<ProgramModel>): ProgramModel {
  const l = links.get(model);
  if (!l || !l.imports.some((u) => supplier(index, u, model.path))) return model;
  const cached = resolutions.get(model);
  if (cached && [...cached.asked].every(([u, m]) => supplier(index, u, model.path)?.model === m)) return cached.resolved;
  active.add(model);
  const asked = new Map<string, ProgramModel | undefined>();
  const find = (unit: string): ModuleExports | undefined => {
    const e = supplier(index, unit, model.path);
    asked.set(unit, e?.model);
    if (!e || active.has(e.model)) return e?.exports;
    const r = resolve(e.model, index, active);
    for (const [u, m] of resolutions.get(e.model)?.asked ?? []) if (!asked.has(u)) asked.set(u, m);
    return links.get(r)?.exports.find((x) => x.name === unit) ?? e.exports;
  };
  let resolved = model;
  try {
    resolved = l.relink(find);
  } finally {
    active.delete(model);
  }
  resolutions.set(model, { resolved, asked });
  return resolved;
}

/**
 * The file's own model as the workspace sees it (read again with the units it imports from other
 * files, or the model itself): the same object whose procedures `withWorkspace` returns, for
 * callers that show the file's own procedures and bindings beside the analysis.
 */
export function ownModelInWorkspace(model: ProgramModel, others: readonly ProgramModel[]): ProgramModel {
  return resolve(model, indexFor(model, others), new Set());
}

/**
 * Another file's procedures as a workspace shows them: marked with their file, each carrying that
 * file's constants. Made once per model and shared by every file that sees it (never changed
 * after), so each file's view of the workspace costs a list of references, not copies.
 */
const originCopies = new WeakMap<ProgramModel, Procedure[]>();
function asOrigin(other: ProgramModel): Procedure[] {
  let list = originCopies.get(other);
  if (!list) originCopies.set(other, (list = other.procedures.map((p) => ({ ...p, origin: other.path, bindings: new Map([...other.bindings, ...p.bindings]) }))));
  return list;
}

/**
 * The calls of one file's procedures (as the workspace shows them) by the last part of the called
 * name, and who calls by each last part: made once per model and shared by every file.
 */
interface CallIndex {
  /** Procedures by the last part of their name. */
  byLast: Map<string, Procedure[]>;
  /** Procedures making a call whose name ends in that last part. */
  callers: Map<string, Procedure[]>;
}
const callIndexes = new WeakMap<readonly Procedure[], CallIndex>();
const push = <K, V>(m: Map<K, V[]>, k: K, v: V): void => {
  const list = m.get(k);
  if (list) list.push(v);
  else m.set(k, [v]);
};
function callIndex(procs: readonly Procedure[]): CallIndex {
  let ix = callIndexes.get(procs);
  if (!ix) {
    ix = { byLast: new Map(), callers: new Map() };
    for (const p of procs) {
      push(ix.byLast, lastPart(p.name), p);
      const seen = new Set<string>();
      for (const c of bodyCalls(p.body).calls) {
        const l = lastPart(c.name);
        if (seen.has(l)) continue;
        seen.add(l);
        push(ix.callers, l, p);
      }
    }
    callIndexes.set(procs, ix);
  }
  return ix;
}

/**
 * `reach: 'calls'` keeps, of the other files' procedures, only those the file's own procedures
 * reach: what they call (and what that calls), and the chains that call them (whose arguments
 * give their sizes), with every procedure sharing a called name's last part (so a C++ call that
 * is ambiguous in the whole workspace stays ambiguous). That is all a file without a time loop
 * needs; a time loop needs `'all'` (its starting state runs the program from its entry). Globals
 * and constants of every file are kept either way.
 */
export function withWorkspace(model: ProgramModel, others: readonly ProgramModel[], reach: 'all' | 'calls' = 'all'): ProgramModel {
  const index = indexFor(model, others);
  const self = resolve(model, index, new Set());
  const own = new Set(self.procedures.map((p) => p.name));
  const globals = new Set(self.globals.map((g) => g.name));
  const merged: ProgramModel = { ...self, procedures: [...self.procedures], globals: [...self.globals], floatConstants: new Map(self.floatConstants) };
  const resolved: ProgramModel[] = [];
  for (const original of others) {
    if (original.path === model.path || family(original.language) !== family(model.language)) continue;
    resolved.push(resolve(original, index, new Set()));
  }
  const kept = reach === 'calls' ? reached(self.procedures, resolved.map((o) => callIndex(asOrigin(o)))) : undefined;
  for (const other of resolved) {
    for (const p of asOrigin(other)) {
      if (own.has(p.name)) continue;
      own.add(p.name);
      if (!kept || kept.has(p)) merged.procedures.push(p);
    }
    for (const g of other.globals) {
      if (globals.has(g.name)) continue;
      globals.add(g.name);
      merged.globals.push(g);
    }
    for (const [k, v] of other.floatConstants) if (!merged.floatConstants.has(k)) merged.floatConstants.set(k, v);
  }
  return merged;
}

/** The other files' procedures the own ones reach down their calls and up their callers. */
function reached(ownProcs: readonly Procedure[], indexes: readonly CallIndex[]): Set<Procedure> {
  const kept = new Set<Procedure>();
  // Down: every procedure whose name's last part a reached procedure calls.
  const names = new Set<string>();
  const down: Procedure[] = [...ownProcs];
  while (down.length > 0) {
    const p = down.pop()!;
    for (const c of bodyCalls(p.body).calls) {
      const l = lastPart(c.name);
      if (names.has(l)) continue;
      names.add(l);
      for (const ix of indexes) {
        for (const q of ix.byLast.get(l) ?? []) {
          if (kept.has(q)) continue;
          kept.add(q);
          down.push(q);
        }
      }
    }
  }
  // Up: every procedure calling a name of an own procedure (or of a caller found so far).
  const called = new Set<string>();
  const up: Procedure[] = [...ownProcs];
  while (up.length > 0) {
    const l = lastPart(up.pop()!.name);
    if (called.has(l)) continue;
    called.add(l);
    for (const ix of indexes) {
      for (const q of ix.callers.get(l) ?? []) {
        // Callers' own callees are not needed: only their arguments and their callers.
        if (!kept.has(q)) kept.add(q);
        up.push(q);
      }
    }
  }
  return kept;
}
