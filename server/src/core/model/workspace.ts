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

export function withWorkspace(model: ProgramModel, others: readonly ProgramModel[]): ProgramModel {
  const index = indexFor(model, others);
  const self = resolve(model, index, new Set());
  const own = new Set(self.procedures.map((p) => p.name));
  const globals = new Set(self.globals.map((g) => g.name));
  const merged: ProgramModel = { ...self, procedures: [...self.procedures], globals: [...self.globals], floatConstants: new Map(self.floatConstants) };
  for (const original of others) {
    if (original.path === model.path || family(original.language) !== family(model.language)) continue;
    const other = resolve(original, index, new Set());
    for (const p of asOrigin(other)) {
      if (own.has(p.name)) continue;
      own.add(p.name);
      merged.procedures.push(p);
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
