/**
 * Single Fortran statements to model statements: assignments (array syntax becomes implied
 * loops, see arrays.ts), `call`, `allocate` (which gives allocatable arrays their extents),
 * input/output lists, and the simple control statements, which become OtherStmt.
 */
import type { ArrayAccess, Stmt, VExpr } from '../../model/program';
import type { Range } from '../../types';
import { arrayAssignment } from './arrays';
import type { Line } from './classify';
import type { UnitContext } from './context';
import { applyArraySpec } from './declarations';
import { ExprParser, parseValue } from './expressions';
import { rangeIn } from './source';
import { closeOf, findTop, isId, isOp, splitTop } from './tokens';

export const lineRange = (line: Line): Range => rangeIn(line.text, 0, line.text.raw.length);

/** Range of tokens [a, b) of a line. */
export function tokRange(line: Line, a: number, b: number): Range {
  const t = line.toks;
  if (a >= b || a >= t.length) return rangeIn(line.text, t[a]?.s ?? line.text.raw.length, t[a]?.s ?? line.text.raw.length);
  return rangeIn(line.text, t[a].s, t[Math.min(b, t.length) - 1].e);
}

export const tokText = (line: Line, a: number, b: number): string =>
  a < b && a < line.toks.length ? line.text.raw.slice(line.toks[a].s, line.toks[Math.min(b, line.toks.length) - 1].e) : '';

export function other(line: Line, values: VExpr[] = []): Stmt {
  return { kind: 'other', text: line.text.raw, values, range: lineRange(line), directives: [] };
}

export const value = (line: Line, ctx: UnitContext, a: number, b: number): VExpr => parseValue(line.text, line.toks, ctx.env, a, b);

/** The two sides of `target op value` at the top level of a line, or undefined without `op`. */
function sides(line: Line, ctx: UnitContext, op: '=' | '=>'): { target: VExpr; rhs: VExpr } | undefined {
  const { toks } = line;
  const at = findTop(toks, line.head, toks.length, op);
  if (at < 0) return undefined;
  return { target: new ExprParser(line.text, toks, ctx.env, line.head, at).parse(), rhs: value(line, ctx, at + 1, toks.length) };
}

/**
 * `p => q` (a pointer assignment): the pointer names the target's storage from here on, which the
 * data ledger follows (the standards map by address). Modelled as an assignment of the name.
 */
export function pointerAssignment(line: Line, ctx: UnitContext): Stmt {
  const s = sides(line, ctx, '=>');
  if (!s) return other(line);
  if (s.target.kind !== 'var') return other(line, [s.rhs]);
  return { kind: 'assign', target: { kind: 'var', name: s.target.name }, op: '=', value: s.rhs, range: lineRange(line), directives: [] };
}

export function assignment(line: Line, ctx: UnitContext): Stmt {
  const s = sides(line, ctx, '=');
  if (!s) return other(line);
  const { target, rhs } = s;
  const range = lineRange(line);
  const arrays = { env: ctx.env, loopVars: ctx.loopVars };
  if (target.kind === 'index' || target.kind === 'var') {
    const nest = arrayAssignment(target, rhs, range, line.text.raw, arrays);
    if (nest) return nest;
  }
  if (target.kind === 'index') {
    const access = { ...target.access, isWrite: true, isRead: false };
    return { kind: 'assign', target: { kind: 'index', access }, op: '=', value: rhs, range, directives: [] };
  }
  if (target.kind === 'var') return { kind: 'assign', target: { kind: 'var', name: target.name }, op: '=', value: rhs, range, directives: [] };
  // `s(1:3) = 'abc'` assigns a substring of a scalar; `f(x) = x**2` defines a statement function.
  if (target.kind === 'call' && target.args.some((a) => a.kind === 'opaque')) {
    return { kind: 'assign', target: { kind: 'var', name: target.name }, op: '=', value: rhs, range, directives: [] };
  }
  return other(line, [rhs]);
}

/** Actual arguments between the parentheses at `open` and `close`: values and source texts. */
function actualArgs(line: Line, ctx: UnitContext, open: number, close: number): { args: VExpr[]; argText: string[] } {
  const args: VExpr[] = [];
  const argText: string[] = [];
  if (close <= open + 1) return { args, argText };
  for (const [a, b] of splitTop(line.toks, open + 1, close, ',')) {
    const from = isId(line.toks[a]) && isOp(line.toks[a + 1], '=') ? a + 2 : a;
    args.push(value(line, ctx, from, b));
    argText.push(tokText(line, a, b));
  }
  return { args, argText };
}

export function callStatement(line: Line, ctx: UnitContext): Stmt {
  const { toks } = line;
  let i = line.head + 1;
  if (!isId(toks[i])) return other(line);
  let name = toks[i].v;
  i++;
  while (isOp(toks[i], '%') && isId(toks[i + 1])) {
    name = `${name}%${toks[i + 1].v}`;
    i += 2;
  }
  let args: VExpr[] = [];
  let argText: string[] = [];
  if (isOp(toks[i], '(')) {
    const close = closeOf(toks, i);
    ({ args, argText } = actualArgs(line, ctx, i, close < 0 ? toks.length : close));
  }
  return { kind: 'call', name, args, argText, range: lineRange(line), directives: [] };
}

const ALLOC_OPTIONS = new Set(['stat', 'errmsg', 'source', 'mold']);

/**
 * `allocate(h(nx, ny), u(0:nx+1, ny), stat=ierr)`: each object's bounds become the extents of
 * its declaration, which is where the analyses look for array sizes.
 */
export function allocation(line: Line, ctx: UnitContext, isAllocate: boolean): Stmt {
  const { toks } = line;
  const open = line.head + 1;
  if (!isOp(toks[open], '(')) return other(line);
  const close = closeOf(toks, open);
  const end = close < 0 ? toks.length : close;
  const values: VExpr[] = [];
  const colons = findTop(toks, open + 1, end, '::');
  for (const [a, b] of splitTop(toks, colons >= 0 ? colons + 1 : open + 1, end, ',')) {
    if (!isId(toks[a]) || (ALLOC_OPTIONS.has(toks[a].v) && isOp(toks[a + 1], '='))) continue;
    let j = a + 1;
    let name = toks[a].v;
    while (isOp(toks[j], '%') && isId(toks[j + 1])) {
      name = `${name}%${toks[j + 1].v}`;
      j += 2;
    }
    if (!isAllocate || !isOp(toks[j], '(')) continue;
    const shut = closeOf(toks, j, b + 1);
    if (shut < 0) continue;
    for (const [x, y] of splitTop(toks, j + 1, shut, ',')) {
      for (const [p, q] of splitTop(toks, x, y, ':')) if (q > p) values.push(value(line, ctx, p, q));
    }
    const d = ctx.scope.lookup(name);
    if (d) applyArraySpec(ctx.declContext(line), d, j, shut);
  }
  return other(line, values);
}

/** Items of an input/output list; implied-do lists `(a(i), i = 1, n)` contribute their items and bounds. */
function ioItems(line: Line, ctx: UnitContext, a: number, b: number, out: VExpr[]): void {
  for (const [x, y] of splitTop(line.toks, a, b, ',')) {
    if (y <= x) continue;
    if (isOp(line.toks[x], '(') && closeOf(line.toks, x, y) === y - 1) {
      const parts = splitTop(line.toks, x + 1, y - 1, ',');
      const control = parts.findIndex(([p, q]) => findTop(line.toks, p, q, '=') >= 0);
      if (control > 0) {
        ioItems(line, ctx, parts[0][0], parts[control - 1][1], out);
        const [p, q] = parts[control];
        out.push(value(line, ctx, findTop(line.toks, p, q, '=') + 1, q));
        for (const [r, s] of parts.slice(control + 1)) out.push(value(line, ctx, r, s));
        continue;
      }
    }
    // A whole array in an output list is every element written out (or read in).
    const v = value(line, ctx, x, y);
    out.push(new ExprParser(line.text, line.toks, ctx.env, x, y).wholeArray(v));
  }
}

/** `print fmt, items`, `write(ctl) items`, `read(ctl) items`, `read fmt, items`. */
export function ioStatement(line: Line, ctx: UnitContext): Stmt {
  const { toks } = line;
  const word = toks[line.head].v;
  let from: number;
  if (isOp(toks[line.head + 1], '(') && word !== 'print') {
    const close = closeOf(toks, line.head + 1);
    from = close < 0 ? toks.length : close + 1;
  } else {
    const comma = findTop(toks, line.head + 1, toks.length, ',');
    from = comma < 0 ? toks.length : comma + 1;
  }
  const values: VExpr[] = [];
  ioItems(line, ctx, from, toks.length, values);
  if (word === 'read') {
    // Items of a read are stored into, so array elements there are writes.
    const mark = (acc: ArrayAccess): void => {
      acc.isWrite = true;
      acc.isRead = false;
    };
    for (const v of values) if (v.kind === 'index') mark(v.access);
  }
  return other(line, values);
}
