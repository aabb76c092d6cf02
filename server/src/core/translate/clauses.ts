/**
 * Splits a directive's words into its construct name and its clauses, remembering on which of
 * the directive's lines each clause stood so a translation can keep the same line layout.
 */
import type { Model, Segment } from './scan';

export interface Item {
  /** Lower-case clause or construct word (`copyin`, `map`, `parallel`). */
  name: string;
  /** Text between the parentheses, as written; undefined without parentheses. */
  args?: string;
  /** Index of the directive line the item starts on. */
  seg: number;
}

export interface Parsed {
  /** Construct words, lower case, single spaced: `parallel loop`, `target teams distribute parallel for`. */
  construct: string;
  /** Arguments of the construct itself: `wait(1)`, `cache(a[i:2])`, `routine(f)`, `declare target(x)`. */
  constructArgs?: string;
  clauses: Item[];
}

/** Splits `name(args) name2, name3(args)` into items; undefined when parentheses do not balance. */
export function parseItems(segments: Pick<Segment, 'words'>[]): Item[] | undefined {
  const items: Item[] = [];
  let pending: { name: string; seg: number; depth: number; args: string } | undefined;
  for (let seg = 0; seg < segments.length; seg++) {
    const s = segments[seg].words;
    let i = 0;
    if (pending) pending.args += ' ';
    while (i < s.length) {
      if (pending) {
        const ch = s[i];
        if (ch === '(') pending.depth++;
        if (ch === ')') pending.depth--;
        if (pending.depth === 0) {
          items.push({ name: pending.name, args: pending.args, seg: pending.seg });
          pending = undefined;
        } else pending.args += ch;
        i++;
        continue;
      }
      const ch = s[i];
      if (/[\s,]/.test(ch)) { i++; continue; }
      const m = /^[A-Za-z_][A-Za-z0-9_]*/.exec(s.slice(i));
      if (!m) return undefined;
      i += m[0].length;
      let j = i;
      while (j < s.length && /\s/.test(s[j])) j++;
      if (s[j] === '(') {
        pending = { name: m[0].toLowerCase(), seg, depth: 1, args: '' };
        i = j + 1;
      } else items.push({ name: m[0].toLowerCase(), seg });
    }
  }
  if (pending) return undefined;
  return items;
}

/** Which construct word may follow which, per model; `''` lists the first words. */
const NEXT: Record<Model, Record<string, string[]>> = {
  acc: {
    '': ['parallel', 'kernels', 'serial', 'data', 'enter', 'exit', 'host_data', 'loop', 'cache', 'atomic', 'declare', 'init', 'shutdown', 'set', 'update', 'wait', 'routine', 'end'],
    parallel: ['loop'], kernels: ['loop'], serial: ['loop'], enter: ['data'], exit: ['data'],
    end: ['parallel', 'kernels', 'serial', 'data', 'host_data', 'atomic', 'loop'],
  },
  omp: {
    '': ['target', 'teams', 'distribute', 'parallel', 'for', 'do', 'simd', 'loop', 'declare', 'begin', 'end', 'atomic',
      'taskwait', 'barrier', 'critical', 'single', 'master', 'masked', 'task', 'taskloop', 'sections', 'section', 'workshare', 'ordered', 'flush', 'requires', 'taskgroup', 'scope'],
    target: ['data', 'enter', 'exit', 'update', 'teams', 'parallel', 'simd'],
    enter: ['data'], exit: ['data'],
    teams: ['distribute', 'loop'],
    distribute: ['parallel', 'simd'],
    parallel: ['for', 'do', 'loop', 'sections', 'workshare', 'masked', 'master'],
    for: ['simd'], do: ['simd'],
    declare: ['target', 'simd', 'reduction', 'mapper', 'variant'],
    begin: ['declare'],
    end: ['target', 'teams', 'distribute', 'parallel', 'for', 'do', 'simd', 'loop', 'declare', 'atomic', 'critical', 'single', 'master', 'masked', 'task', 'taskloop', 'sections', 'workshare', 'ordered', 'taskgroup', 'scope'],
  },
};

/** Construct words that take their own parenthesised argument. */
const TAKES_ARGS: Record<Model, Set<string>> = {
  acc: new Set(['wait', 'cache', 'routine']),
  omp: new Set(['critical', 'flush', 'target' /* declare target(list) */]),
};

/** The construct words at the front of the items, then the clauses. */
export function splitConstruct(model: Model, items: Item[]): Parsed | undefined {
  const words: string[] = [];
  let k = 0;
  let constructArgs: string | undefined;
  while (k < items.length) {
    const it = items[k];
    const prev = words.length === 0 ? '' : words[words.length - 1];
    // After `end`, any construct word may follow (end target teams distribute parallel do).
    const allowed = words[0] === 'end' && words.length > 1 ? nextAfterEnd(model, prev) : NEXT[model][prev] ?? [];
    if (!allowed.includes(it.name)) break;
    if (it.args !== undefined) {
      const argOk = TAKES_ARGS[model].has(it.name) && (it.name !== 'target' || prev === 'declare');
      if (!argOk) break;
      words.push(it.name);
      constructArgs = it.args;
      k++;
      break;
    }
    words.push(it.name);
    k++;
  }
  if (words.length === 0 || (words.length === 1 && words[0] === 'end')) return undefined;
  return { construct: words.join(' '), constructArgs, clauses: items.slice(k) };
}

function nextAfterEnd(model: Model, prev: string): string[] {
  return NEXT[model][prev] ?? [];
}

/** Splits a list at top-level commas (not inside parentheses or brackets). */
export function splitList(s: string): string[] {
  const out: string[] = [];
  let depth = 0;
  let cur = '';
  for (const ch of s) {
    if (ch === '(' || ch === '[') depth++;
    if (ch === ')' || ch === ']') depth--;
    if (ch === ',' && depth === 0) {
      out.push(cur.trim());
      cur = '';
    } else cur += ch;
  }
  if (cur.trim() !== '') out.push(cur.trim());
  return out;
}

/** The variable a list item names: `a` for `a[0:n]`, `a(1:n, 2)`, `s%f`. */
export function baseName(item: string): string {
  return /^\s*([A-Za-z_][\w%.]*)/.exec(item)?.[1] ?? item.trim();
}

/** Splits `modifiers: list` (map, reduction) at the first top-level colon that is not `::`. */
export function splitModifier(args: string): { modifier?: string; list: string } {
  let depth = 0;
  for (let i = 0; i < args.length; i++) {
    const ch = args[i];
    if (ch === '(' || ch === '[') depth++;
    else if (ch === ')' || ch === ']') depth--;
    else if (ch === ':' && depth === 0 && args[i + 1] !== ':' && args[i - 1] !== ':') {
      return { modifier: args.slice(0, i).trim(), list: args.slice(i + 1).trim() };
    }
  }
  return { list: args.trim() };
}
