/**
 * By-name look-up of a list of declarations (a file's globals, a procedure's parameters or
 * locals) through a Map built once per list and kept while the list is alive, instead of a
 * linear `find` or a fresh Map per loop nest. A list that grew since its Map was built (front
 * ends push while they read) gets a new Map; the model's lists are not otherwise changed in place.
 */
import type { Declaration } from './program';

interface Indexed {
  length: number;
  map: Map<string, Declaration>;
}

const firstIndex = new WeakMap<readonly Declaration[], Indexed>();
const lastIndex = new WeakMap<readonly Declaration[], Indexed>();

/** The first declaration of each name in `list` (what `list.find((d) => d.name === name)` gives). */
export function firstByName(list: readonly Declaration[]): ReadonlyMap<string, Declaration> {
  let ix = firstIndex.get(list);
  if (!ix || ix.length !== list.length) {
    const map = new Map<string, Declaration>();
    for (const d of list) if (!map.has(d.name)) map.set(d.name, d);
    ix = { length: list.length, map };
    firstIndex.set(list, ix);
  }
  return ix.map;
}

/** The last declaration of each name in `list` (what a Map filled from `list` in order gives). */
export function lastByName(list: readonly Declaration[]): ReadonlyMap<string, Declaration> {
  let ix = lastIndex.get(list);
  if (!ix || ix.length !== list.length) {
    const map = new Map<string, Declaration>();
    for (const d of list) map.set(d.name, d);
    ix = { length: list.length, map };
    lastIndex.set(list, ix);
  }
  return ix.map;
}

/** `list.find((d) => d.name === name)`, through the list's Map. */
export function findByName(list: readonly Declaration[], name: string): Declaration | undefined {
  // Short lists are searched directly: no Map is worth building for a handful of names.
  if (list.length <= 8) {
    for (const d of list) if (d.name === name) return d;
    return undefined;
  }
  return firstByName(list).get(name);
}
