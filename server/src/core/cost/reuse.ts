/**
 * Reads that move no bytes: a read of an element that the same iteration has already written or
 * already read is served from a register or the cache line just touched, so it adds no traffic
 * (the compulsory-traffic convention of STREAM, McCalpin, applied within one iteration:
 * `b[i] = a[i]; b[i] = b[i]*s` moves 16 bytes, not 24).
 *
 * The walk follows the statements of a nest in execution order, keeping the set of elements the
 * current iteration has touched. An element is named by its array and subscripts; the name stays
 * valid until a scalar it mentions is assigned or an array read inside its subscripts is written
 * (`a[idx[i]]` after `idx[i] = …` is another element). Elements touched in one arm of a branch or
 * inside an inner loop (a different iteration of that loop) do not cover reads after it.
 */
import * as S from '../symbolic';
import type { ArrayAccess, LoopStmt, Stmt, VExpr } from '../model/program';
import { forEachAccessInValue, printValue, variableNames } from '../model/values';

interface Touched {
  /** Scalars the element's name mentions. */
  names: Set<string>;
  /** Arrays read inside its subscripts. */
  arrays: Set<string>;
}

type TouchedSet = Map<string, Touched>;

/** Statement text the model keeps as `other` that assigns a name (`x = …`, `x += …`, `++x`). */
const textAssignment = /([A-Za-z_]\w*)\s*(?:[-+*/%&|^]|<<|>>)?=(?!=)|([A-Za-z_]\w*)\s*(?:\+\+|--)|(?:\+\+|--)\s*([A-Za-z_]\w*)/g;

/**
 * The read accesses of a nest that re-read an element the same iteration already wrote or read.
 * `subscriptsOf` gives an access's subscripts as the ledger sees them (bindings substituted).
 */
export function coveredReads(root: LoopStmt, subscriptsOf: (a: ArrayAccess) => (S.Expr | undefined)[]): Set<ArrayAccess> {
  const covered = new Set<ArrayAccess>();
  const nameOf = (a: ArrayAccess): { key: string; touched: Touched } => {
    const subs = subscriptsOf(a);
    const names = new Set<string>();
    const arrays = new Set<string>();
    if (subs.length > 0 && subs.every((s) => s)) {
      for (const s of subs) for (const n of S.freeSymbols(s!)) names.add(n);
      return { key: `${a.array}[${subs.map((s) => s!.key).join('][')}]`, touched: { names, arrays } };
    }
    for (const v of a.subscriptValues) {
      variableNames(v, names);
      forEachAccessInValue(v, (x) => arrays.add(x.array));
    }
    return { key: `${a.array}[${a.subscriptValues.map((v) => printValue(v)).join('][')}]#text`, touched: { names, arrays } };
  };
  const read = (a: ArrayAccess, set: TouchedSet): void => {
    const { key, touched } = nameOf(a);
    if (set.has(key)) covered.add(a);
    else set.set(key, touched);
  };
  const write = (a: ArrayAccess, set: TouchedSet): void => {
    const { key, touched } = nameOf(a);
    for (const [k, t] of set) if (t.arrays.has(a.array)) set.delete(k);
    set.set(key, touched);
  };
  const assigned = (name: string, set: TouchedSet): void => {
    for (const [k, t] of set) if (t.names.has(name)) set.delete(k);
  };
  const readsOf = (v: VExpr, set: TouchedSet): void => forEachAccessInValue(v, (a) => read(a, set));

  const walk = (stmts: readonly Stmt[], set: TouchedSet): void => {
    for (const s of stmts) {
      switch (s.kind) {
        case 'assign':
          readsOf(s.value, set);
          if (s.target.kind === 'index') {
            const a = s.target.access;
            for (const v of a.subscriptValues) readsOf(v, set);
            if (a.isRead) read(a, set);
            write(a, set);
          } else {
            assigned(s.target.name, set);
          }
          break;
        case 'call':
          for (const v of s.args) readsOf(v, set);
          // A callee may assign what it is given (Fortran, C++ references, C `&x`).
          for (const v of s.args) {
            const names = new Set<string>();
            variableNames(v, names);
            for (const n of names) assigned(n, set);
          }
          break;
        case 'other':
          for (const v of s.values) readsOf(v, set);
          for (const m of s.text.matchAll(textAssignment)) assigned(m[1] ?? m[2] ?? m[3], set);
          break;
        case 'if': {
          readsOf(s.condition, set);
          const a = new Map(set);
          const b = new Map(set);
          walk(s.then, a);
          walk(s.otherwise, b);
          // Only what both arms leave untouched stays known; what an arm adds is not certain.
          for (const k of [...set.keys()]) if (!a.has(k) || !b.has(k)) set.delete(k);
          break;
        }
        case 'block':
          walk(s.body, set);
          break;
        case 'loop': {
          // Names the inner loop changes are not the same elements inside it or after it.
          const changes = changedIn(s);
          const inner: TouchedSet = new Map();
          for (const [k, t] of set) if (!mentions(t, changes)) inner.set(k, t);
          walk(s.body, inner);
          for (const [k, t] of [...set]) if (mentions(t, changes)) set.delete(k);
          break;
        }
        default:
          break;
      }
    }
  };
  walk(root.body, new Map());
  return covered;
}

function mentions(t: Touched, changes: { names: Set<string>; arrays: Set<string> }): boolean {
  for (const n of t.names) if (changes.names.has(n)) return true;
  for (const a of t.arrays) if (changes.arrays.has(a)) return true;
  return false;
}

/** Scalars and arrays a loop assigns, its own variable included. */
function changedIn(loop: LoopStmt): { names: Set<string>; arrays: Set<string> } {
  const names = new Set<string>();
  const arrays = new Set<string>();
  const visit = (stmts: readonly Stmt[]): void => {
    for (const s of stmts) {
      switch (s.kind) {
        case 'loop':
          if (s.variable) names.add(s.variable);
          visit(s.body);
          break;
        case 'assign':
          if (s.target.kind === 'var') names.add(s.target.name);
          else arrays.add(s.target.access.array);
          break;
        case 'call':
          for (const v of s.args) variableNames(v, names);
          break;
        case 'other':
          for (const m of s.text.matchAll(textAssignment)) names.add(m[1] ?? m[2] ?? m[3]);
          break;
        case 'if':
          visit(s.then);
          visit(s.otherwise);
          break;
        case 'block':
          visit(s.body);
          break;
        default:
          break;
      }
    }
  };
  if (loop.variable) names.add(loop.variable);
  visit(loop.body);
  return { names, arrays };
}

