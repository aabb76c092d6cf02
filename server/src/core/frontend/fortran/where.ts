/**
 * WHERE statements and constructs as implied loops around an IfStmt: the mask is evaluated per
 * element, the assignments of the `where` block run where it is true and those of `elsewhere`
 * blocks where it is false (Fortran 2008 §7.2.3, from memory). The loops run over the mask's
 * shape (its first section or whole-array operand), or over the first assignment's target when
 * the mask names no array; every operand of that shape becomes an element reference.
 */
import type { IfStmt, Stmt, VExpr } from '../../model/program';
import type { Range } from '../../types';
import { type ArrayContext, type Triplet, elementwise, impliedNest, shapeOf } from './arrays';
import { type Line, classify } from './classify';
import type { UnitContext } from './context';
import type { Cursor } from './cursor';
import { ExprParser } from './expressions';
import { subLocated } from './source';
import { lineRange, other, tokText, value } from './statements';
import { closeOf, findTop, isOp } from './tokens';

interface Arm {
  line: Line;
  mask?: VExpr;
  maskText: string;
  items: (Line | WhereNode)[];
}

interface WhereNode {
  line: Line;
  arms: Arm[];
  end: Range['end'];
}

const MAX_DEPTH = 50;

function maskOf(line: Line, ctx: UnitContext): { mask?: VExpr; maskText: string; close: number } {
  const open = line.toks.findIndex((t, k) => k >= line.head && isOp(t, '('));
  const close = open < 0 ? -1 : closeOf(line.toks, open);
  if (close < 0) return { maskText: '', close: line.toks.length };
  return { mask: value(line, ctx, open + 1, close), maskText: tokText(line, open + 1, close), close };
}

/** The assignment of a one-line `where (mask) a = b`, as a line of its own. */
function actionLine(line: Line, close: number): Line | undefined {
  const t = line.toks[close + 1];
  return t ? classify(subLocated(line.text, t.s, line.text.raw.length)) : undefined;
}

function collect(cursor: Cursor, line: Line, ctx: UnitContext, depth: number): WhereNode {
  const m = maskOf(line, ctx);
  const node: WhereNode = { line, arms: [{ line, mask: m.mask, maskText: m.maskText, items: [] }], end: lineRange(line).end };
  for (;;) {
    const e = cursor.peek();
    if (!e) break;
    if (e.kind === 'directive') {
      cursor.next();
      continue;
    }
    const l = e.line;
    const arm = node.arms[node.arms.length - 1];
    if (l.kind === 'assign' || (l.kind === 'where-one') || (l.kind === 'where' && depth < MAX_DEPTH)) {
      cursor.next();
      if (l.kind === 'where') arm.items.push(collect(cursor, l, ctx, depth + 1));
      else if (l.kind === 'where-one') {
        const inner = maskOf(l, ctx);
        const action = actionLine(l, inner.close);
        arm.items.push({ line: l, arms: [{ line: l, mask: inner.mask, maskText: inner.maskText, items: action ? [action] : [] }], end: lineRange(l).end });
      } else arm.items.push(l);
      node.end = lineRange(l).end;
      continue;
    }
    if (l.kind === 'elsewhere') {
      cursor.next();
      const hasMask = l.toks.some((t) => isOp(t, '('));
      const em = hasMask ? maskOf(l, ctx) : { mask: undefined, maskText: '' };
      node.arms.push({ line: l, mask: em.mask, maskText: em.maskText, items: [] });
      node.end = lineRange(l).end;
      continue;
    }
    if (l.kind === 'end-where') {
      cursor.next();
      node.end = lineRange(l).end;
    }
    // Anything else ends a WHERE construct whose `end where` is missing.
    break;
  }
  return node;
}

/** `a(…) = b(…)` inside a WHERE, as one element assignment of the shape. */
function elementAssign(line: Line, shape: Triplet[] | undefined, ctx: UnitContext, actx: ArrayContext): Stmt {
  const eq = findTop(line.toks, line.head, line.toks.length, '=');
  if (line.kind !== 'assign' || eq < 0) return other(line);
  const target = new ExprParser(line.text, line.toks, ctx.env, line.head, eq).parse();
  const rhs = value(line, ctx, eq + 1, line.toks.length);
  const t = shape ? elementwise(target, shape, actx) : target;
  const v = shape ? elementwise(rhs, shape, actx) : rhs;
  const range = lineRange(line);
  if (t.kind === 'index') return { kind: 'assign', target: { kind: 'index', access: { ...t.access, isWrite: true, isRead: false } }, op: '=', value: v, range, directives: [] };
  if (t.kind === 'var') return { kind: 'assign', target: { kind: 'var', name: t.name }, op: '=', value: v, range, directives: [] };
  return other(line, [v]);
}

function build(node: WhereNode, shape: Triplet[] | undefined, ctx: UnitContext, actx: ArrayContext): Stmt[] {
  const stmtsOf = (arm: Arm): Stmt[] =>
    arm.items.flatMap((it) => ('arms' in it ? build(it, shape, ctx, actx) : [elementAssign(it, shape, ctx, actx)]));
  let otherwise: Stmt[] = [];
  for (let k = node.arms.length - 1; k >= 0; k--) {
    const arm = node.arms[k];
    if (!arm.mask) {
      otherwise = stmtsOf(arm);
      continue;
    }
    const s: IfStmt = {
      kind: 'if',
      condition: shape ? elementwise(arm.mask, shape, actx) : arm.mask,
      conditionText: arm.maskText,
      then: stmtsOf(arm),
      otherwise,
      range: { start: lineRange(arm.line).start, end: node.end },
      directives: [],
    };
    otherwise = [s];
  }
  return otherwise;
}

/** The shape of a WHERE: its mask's, or its first assignment target's. */
function shapeOfWhere(node: WhereNode, ctx: UnitContext, actx: ArrayContext): Triplet[] | undefined {
  const fromMask = node.arms[0].mask ? shapeOf(node.arms[0].mask, actx) : undefined;
  if (fromMask && fromMask.length > 0) return fromMask;
  for (const arm of node.arms) {
    for (const it of arm.items) {
      if ('arms' in it) continue;
      const eq = findTop(it.toks, it.head, it.toks.length, '=');
      if (eq < 0) continue;
      const s = shapeOf(new ExprParser(it.text, it.toks, ctx.env, it.head, eq).parse(), actx);
      if (s && s.length > 0) return s;
    }
  }
  return undefined;
}

function nest(node: WhereNode, ctx: UnitContext): Stmt {
  const actx: ArrayContext = { env: ctx.env, loopVars: ctx.loopVars };
  const shape = shapeOfWhere(node, ctx, actx);
  const range = { start: lineRange(node.line).start, end: node.end };
  const body = build(node, shape, ctx, actx);
  const loop = shape ? impliedNest(shape, body, range, node.line.text.raw, actx) : undefined;
  return loop ?? { kind: 'block', body, range, directives: [] };
}

export function whereConstruct(cursor: Cursor, line: Line, ctx: UnitContext): Stmt {
  return nest(collect(cursor, line, ctx, 0), ctx);
}

export function whereOne(line: Line, ctx: UnitContext): Stmt {
  const m = maskOf(line, ctx);
  const action = actionLine(line, m.close);
  return nest({ line, arms: [{ line, mask: m.mask, maskText: m.maskText, items: action ? [action] : [] }], end: lineRange(line).end }, ctx);
}
