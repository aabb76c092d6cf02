/**
 * Helpers over value expressions (VExpr): conversion to symbolic integer quantities and walks
 * that collect array accesses. Language-neutral: both front ends produce VExpr.
 */
import * as S from '../symbolic';
import type { ArrayAccess, Stmt, VExpr } from './program';

const intLiteral = /^(0[xX][0-9a-fA-F]+|\d+)([uUlL]*|_\w+)$/;

/** Reads an integer literal in C (`10`, `0x1F`, `10UL`) or Fortran (`10`, `10_8`) spelling. */
export function integerLiteral(text: string): number | undefined {
  const m = intLiteral.exec(text.trim());
  if (!m) return undefined;
  const v = Number(m[1]);
  return Number.isSafeInteger(v) ? v : undefined;
}

/**
 * Converts a value expression to a symbolic integer quantity, or undefined when it is not an
 * integer expression we can represent (floating literals, array reads, conditionals). A front
 * end may pass `special` to read calls its language gives a meaning (Fortran `size(a, 1)`); it
 * applies at every depth.
 */
export function toSymbolic(e: VExpr, special?: (call: VExpr & { kind: 'call' }) => S.Expr | undefined): S.Expr | undefined {
  const rec = (x: VExpr): S.Expr | undefined => toSymbolic(x, special);
  switch (e.kind) {
    case 'num': {
      if (e.isFloat) return undefined;
      const v = integerLiteral(e.text);
      return v === undefined ? undefined : S.num(v);
    }
    case 'var':
      return S.sym(e.name);
    case 'cast':
      return e.type.isFloat ? undefined : rec(e.operand);
    case 'unary': {
      const x = rec(e.operand);
      if (!x) return undefined;
      if (e.op === '-') return S.neg(x);
      if (e.op === '+') return x;
      return undefined;
    }
    case 'bin': {
      const l = rec(e.left);
      const r = rec(e.right);
      if (!l || !r) return undefined;
      switch (e.op) {
        case '+': return S.add(l, r);
        case '-': return S.sub(l, r);
        case '*': return S.mul(l, r);
        case '/': return S.floorDiv(l, r);
        case '%': return S.mod(l, r);
        case '**': {
          const k = S.constValue(r);
          if (k === undefined || !Number.isInteger(k) || k < 0 || k > 8) return undefined;
          return S.mul(...Array.from({ length: k }, () => l), S.num(1));
        }
        case '<<': {
          const k = S.constValue(r);
          return k !== undefined && Number.isInteger(k) && k >= 0 && k < 31 ? S.mul(l, S.num(2 ** k)) : undefined;
        }
        default: return undefined;
      }
    }
    case 'call': {
      const hooked = special?.(e);
      if (hooked) return hooked;
      const args = e.args.map(rec);
      if (args.some((a) => a === undefined)) return undefined;
      const xs = args as S.Expr[];
      const name = e.name.toLowerCase();
      if ((name === 'min' || name === 'fmin') && xs.length >= 2) return xs.reduce((a, b) => S.min(a, b));
      if ((name === 'max' || name === 'fmax') && xs.length >= 2) return xs.reduce((a, b) => S.max(a, b));
      if (name === 'mod' && xs.length === 2) return S.mod(xs[0], xs[1]);
      return S.call(e.name, xs);
    }
    default:
      return undefined;
  }
}

/** Visits every array access inside a value expression, including accesses nested in subscripts. */
export function forEachAccessInValue(e: VExpr, visit: (a: ArrayAccess) => void): void {
  switch (e.kind) {
    case 'index':
      visit(e.access);
      for (const s of e.access.subscriptValues) forEachAccessInValue(s, visit);
      return;
    case 'bin':
      forEachAccessInValue(e.left, visit);
      forEachAccessInValue(e.right, visit);
      return;
    case 'unary':
    case 'cast':
      forEachAccessInValue(e.operand, visit);
      return;
    case 'call':
      for (const a of e.args) forEachAccessInValue(a, visit);
      return;
    case 'cond':
      forEachAccessInValue(e.test, visit);
      forEachAccessInValue(e.then, visit);
      forEachAccessInValue(e.else, visit);
      return;
    default:
      return;
  }
}

/** Visits every call inside a value expression, outer calls first. */
export function forEachCallInValue(e: VExpr, visit: (call: VExpr & { kind: 'call' }) => void): void {
  switch (e.kind) {
    case 'call':
      visit(e);
      for (const a of e.args) forEachCallInValue(a, visit);
      return;
    case 'bin':
      forEachCallInValue(e.left, visit);
      forEachCallInValue(e.right, visit);
      return;
    case 'unary':
    case 'cast':
      forEachCallInValue(e.operand, visit);
      return;
    case 'cond':
      forEachCallInValue(e.test, visit);
      forEachCallInValue(e.then, visit);
      forEachCallInValue(e.else, visit);
      return;
    default:
      return;
  }
}

/** The value expressions a statement evaluates itself (not those of nested statements). */
/** Adds every variable name a value mentions, subscripts of array reads included. */
export function variableNames(e: VExpr, out: Set<string>): void {
  switch (e.kind) {
    case 'var':
      out.add(e.name);
      return;
    case 'bin':
      variableNames(e.left, out);
      variableNames(e.right, out);
      return;
    case 'unary':
    case 'cast':
      variableNames(e.operand, out);
      return;
    case 'call':
      for (const a of e.args) variableNames(a, out);
      return;
    case 'cond':
      variableNames(e.test, out);
      variableNames(e.then, out);
      variableNames(e.else, out);
      return;
    case 'index':
      for (const v of e.access.subscriptValues) variableNames(v, out);
      return;
    default:
      return;
  }
}

export function valuesOfStatement(s: Stmt): VExpr[] {
  switch (s.kind) {
    case 'assign': return [s.value];
    case 'call': return s.args;
    case 'if': return [s.condition];
    case 'other': return s.values;
    default: return [];
  }
}

/** Every array access made by one statement itself (not by nested statements). */
export function accessesOfStatement(s: Stmt): ArrayAccess[] {
  const out: ArrayAccess[] = [];
  const visit = (a: ArrayAccess): void => { out.push(a); };
  switch (s.kind) {
    case 'assign':
      if (s.target.kind === 'index') {
        out.push(s.target.access);
        for (const v of s.target.access.subscriptValues) forEachAccessInValue(v, visit);
      }
      forEachAccessInValue(s.value, visit);
      break;
    case 'call':
      for (const a of s.args) forEachAccessInValue(a, visit);
      break;
    case 'if':
      forEachAccessInValue(s.condition, visit);
      break;
    case 'other':
      for (const v of s.values) forEachAccessInValue(v, visit);
      break;
    default:
      break;
  }
  return out;
}

/**
 * Statements from the procedure's body down to `target` (excluded), empty when not found. Read
 * through a parent index built once per body (statements are not changed after the front end),
 * so finding the chain of every nest of a procedure costs one walk of it, not one walk per nest.
 */
export function pathTo(stmts: readonly Stmt[], target: Stmt): Stmt[] {
  let parents = parentIndex.get(stmts);
  if (!parents || !parents.has(target)) {
    // Not indexed yet, or not found: (re)index, in case the list changed since.
    parents = indexParents(stmts);
    parentIndex.set(stmts, parents);
  }
  const out: Stmt[] = [];
  for (let p = parents.get(target); p; p = parents.get(p)) out.push(p);
  return out.reverse();
}

/** Each statement's enclosing statement (null at the top), at its first place in a depth-first walk. */
const parentIndex = new WeakMap<readonly Stmt[], Map<Stmt, Stmt | null>>();

function indexParents(stmts: readonly Stmt[]): Map<Stmt, Stmt | null> {
  const parents = new Map<Stmt, Stmt | null>();
  const rec = (list: readonly Stmt[], parent: Stmt | null): void => {
    for (const s of list) {
      if (parents.has(s)) continue;
      parents.set(s, parent);
      rec(childStatements(s), s);
    }
  };
  rec(stmts, null);
  return parents;
}

/** Children statements of a statement, in source order. */
export function childStatements(s: Stmt): Stmt[] {
  switch (s.kind) {
    case 'loop':
    case 'block':
      return s.body;
    case 'if':
      return [...s.then, ...s.otherwise];
    default:
      return [];
  }
}

/** Depth-first walk over statements; `visit` returning false skips the children. */
export function walkStatements(stmts: readonly Stmt[], visit: (s: Stmt) => boolean | void): void {
  for (const s of stmts) {
    if (visit(s) === false) continue;
    walkStatements(childStatements(s), visit);
  }
}

/** Prints a value expression in C-like notation for messages (fully parenthesised where needed). */
/** A value as source text; `fortran` writes an element as `a(i, j)` rather than `a[i][j]`. */
export function printValue(e: VExpr, fortran = false): string {
  const p = (x: VExpr): string => printValue(x, fortran);
  const w = (x: VExpr): string => wrap(x, fortran);
  switch (e.kind) {
    case 'num': return e.text;
    case 'var': return e.name;
    case 'opaque': return e.text;
    case 'index': return fortran ? `${e.access.array}(${e.access.subscriptValues.map(p).join(', ')})` : `${e.access.array}[${e.access.subscriptValues.map(p).join('][')}]`;
    case 'bin': return `${w(e.left)} ${e.op} ${w(e.right)}`;
    case 'unary': return `${e.op}${w(e.operand)}`;
    case 'cast': return `(${e.type.name})${w(e.operand)}`;
    case 'call': return `${e.name}(${e.args.map(p).join(', ')})`;
    case 'cond': return `${w(e.test)} ? ${w(e.then)} : ${w(e.else)}`;
  }
}

function wrap(e: VExpr, fortran = false): string {
  return e.kind === 'bin' || e.kind === 'cond' ? `(${printValue(e, fortran)})` : printValue(e, fortran);
}
