/**
 * A file's model seen with the rest of its workspace: procedures and globals defined in other
 * files of the same language family are added (marked with their origin), so that a time loop
 * calling a kernel in another file follows the call. The other file's own constants travel
 * with each of its procedures, so sizes inside them still resolve.
 */
import type { ProgramModel } from './program';

const family = (l: ProgramModel['language']): string => (l === 'fortran' ? 'fortran' : 'c');

export function withWorkspace(model: ProgramModel, others: readonly ProgramModel[]): ProgramModel {
  const own = new Set(model.procedures.map((p) => p.name));
  const globals = new Set(model.globals.map((g) => g.name));
  const merged: ProgramModel = { ...model, procedures: [...model.procedures], globals: [...model.globals], floatConstants: new Map(model.floatConstants) };
  for (const other of others) {
    if (other.path === model.path || family(other.language) !== family(model.language)) continue;
    for (const p of other.procedures) {
      if (own.has(p.name)) continue;
      own.add(p.name);
      merged.procedures.push({ ...p, origin: other.path, bindings: new Map([...other.bindings, ...p.bindings]) });
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
