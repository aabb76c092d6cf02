/**
 * Array syntax as implied loop nests. An assignment to an array section (`a(2:n-1) = …`), to a
 * whole declared array (`h = h + dt*f`) or a `where` mask runs once per element of its shape
 * (Fortran 2008 §7.2.1.3 and §7.2.3, from memory). The front end writes that as loops with
 * synthetic induction variables: `_i1` walks the first section dimension (the leftmost one with
 * a `:`), `_i2` the second, and so on; `_i1` is the innermost loop, because Fortran arrays are
 * column-major and the first dimension varies fastest. Every section or whole-array operand of
 * the same shape is rewritten to an element subscript relative to the shape: `b(1:n-2)` in
 * `a(2:n-1) = b(1:n-2)` becomes `b(_i1 - 1)`. Operands of transformational intrinsics
 * (`sum(h)`, `maxval(abs(h))`) are left as they are, because they are not elementwise.
 */
import * as S from '../../symbolic';
import type { ArrayAccess, Declaration, LoopStmt, Stmt, VExpr } from '../../model/program';
import type { Range } from '../../types';
import { type ExprEnv, type Subscript, ExprParser, rangeOfVar, sectionOf } from './expressions';
import { tokenize } from './lexer';
import { locatedAt } from './source/located';

/** One dimension of an array shape: the section's lower bound, upper bound and stride. */
export interface Triplet {
  lo: S.Expr;
  hi: S.Expr;
  st: S.Expr;
}

const TRANSFORMATIONAL = new Set([
  'sum', 'product', 'maxval', 'minval', 'maxloc', 'minloc', 'findloc', 'size', 'shape', 'lbound', 'ubound',
  'matmul', 'dot_product', 'transpose', 'any', 'all', 'count', 'reshape', 'spread', 'pack', 'unpack',
  'cshift', 'eoshift', 'norm2', 'allocated', 'associated', 'present', 'len', 'len_trim', 'trim', 'kind',
  'iall', 'iany', 'iparity', 'parity', 'storage_size', 'is_contiguous',
]);

export interface ArrayContext {
  env: ExprEnv;
  /** Loop variables of the enclosing loops, to flag bounds that depend on them. */
  loopVars: readonly string[];
}

export const loopVariable = (k: number): string => `_i${k}`;

/** Symbolic form of an expression as a value expression again, for rewritten subscripts. */
export function valueOfExpr(e: S.Expr): VExpr {
  const located = locatedAt(S.toSource(e, 'fortran'), { line: 0, col: 0 });
  const toks = tokenize(located.low);
  const env: ExprEnv = {
    arrayOf: () => undefined, isUndeclaredVariable: () => false, isDeclared: () => false,
    realKindBytes: () => undefined, floatMacro: () => undefined, symbolic: () => undefined,
  };
  return new ExprParser(located, toks, env, 0, toks.length).parse();
}

function lowerOf(d: Declaration | undefined, k: number): S.Expr {
  return d?.lowerBounds?.[k] ?? S.num(1);
}

function upperOf(d: Declaration | undefined, name: string, k: number): S.Expr {
  const extent = d?.dims[k] ?? S.sym(`extent(${name},${k + 1})`);
  return S.sub(S.add(lowerOf(d, k), extent), S.num(1));
}

function part(v: VExpr | undefined, ctx: ArrayContext): S.Expr | undefined {
  if (!v) return undefined;
  return ctx.env.symbolic(v) ?? (v.kind === 'opaque' ? S.sym(v.text) : undefined);
}

/** Triplets of every written subscript of a section (undefined for plain index subscripts). */
function sectionTriplets(a: ArrayAccess, subs: Subscript[], ctx: ArrayContext): (Triplet | undefined)[] {
  const d = ctx.env.arrayOf(a.array);
  return subs.map((s, k) => {
    if (s.kind === 'index') return undefined;
    const st = part(s.st, ctx) ?? S.num(1);
    const lo = part(s.lo, ctx) ?? lowerOf(d, k);
    const hi = part(s.hi, ctx) ?? upperOf(d, a.array, k);
    return { lo, hi, st };
  });
}

function wholeTriplets(d: Declaration, name: string): Triplet[] {
  return d.dims.map((_, k) => ({ lo: lowerOf(d, k), hi: upperOf(d, name, k), st: S.num(1) }));
}

/** The shape a value or target has: its first section or whole-array operand. */
export function shapeOf(v: VExpr, ctx: ArrayContext): Triplet[] | undefined {
  switch (v.kind) {
    case 'index': {
      const subs = sectionOf(v.access);
      return subs ? (sectionTriplets(v.access, subs, ctx).filter((t) => t) as Triplet[]) : undefined;
    }
    case 'var': {
      const d = ctx.env.arrayOf(v.name);
      return d && d.dims.length > 0 ? wholeTriplets(d, v.name) : undefined;
    }
    case 'bin':
      return shapeOf(v.left, ctx) ?? shapeOf(v.right, ctx);
    case 'unary':
    case 'cast':
      return shapeOf(v.operand, ctx);
    case 'call':
      if (TRANSFORMATIONAL.has(v.name)) return undefined;
      for (const a of v.args) {
        const s = shapeOf(a, ctx);
        if (s) return s;
      }
      return undefined;
    default:
      return undefined;
  }
}

/** Rewrites one reference's section dimensions to element subscripts of `shape`. */
function elementAccess(a: ArrayAccess, triplets: (Triplet | undefined)[], shape: Triplet[], base: { values: VExpr[]; texts: string[]; subs: (S.Expr | undefined)[] }): ArrayAccess | undefined {
  if (triplets.filter((t) => t).length !== shape.length) return undefined;
  const out: ArrayAccess = { ...a, subscripts: [...base.subs], subscriptText: [...base.texts], subscriptValues: [...base.values] };
  let k = 0;
  triplets.forEach((r, d) => {
    if (!r) return;
    const t = shape[k++];
    const i = S.sym(loopVariable(k));
    const sub = S.add(r.lo, S.div(S.mul(r.st, S.sub(i, t.lo)), t.st));
    out.subscripts[d] = sub;
    out.subscriptText[d] = S.toString(sub);
    out.subscriptValues[d] = valueOfExpr(sub);
  });
  return out;
}

/** Rewrites every operand of the same shape in `v` to its element at the shape's loop variables. */
export function elementwise(v: VExpr, shape: Triplet[], ctx: ArrayContext): VExpr {
  switch (v.kind) {
    case 'index': {
      const subs = sectionOf(v.access);
      if (!subs) return v;
      const a = v.access;
      const e = elementAccess(a, sectionTriplets(a, subs, ctx), shape, { values: a.subscriptValues, texts: a.subscriptText, subs: a.subscripts });
      return e ? { kind: 'index', access: e } : v;
    }
    case 'var': {
      const d = ctx.env.arrayOf(v.name);
      if (!d || d.dims.length !== shape.length) return v;
      const n = d.dims.length;
      const access: ArrayAccess = {
        array: v.name, subscripts: [], subscriptText: [], subscriptValues: [], isWrite: false, isRead: true,
        range: rangeOfVar(v) ?? { start: { line: 0, col: 0 }, end: { line: 0, col: 0 } },
      };
      const base = { values: Array<VExpr>(n), texts: Array<string>(n), subs: Array<S.Expr | undefined>(n) };
      const e = elementAccess(access, wholeTriplets(d, v.name), shape, base);
      return e ? { kind: 'index', access: e } : v;
    }
    case 'bin':
      return { ...v, left: elementwise(v.left, shape, ctx), right: elementwise(v.right, shape, ctx) };
    case 'unary':
    case 'cast':
      return { ...v, operand: elementwise(v.operand, shape, ctx) };
    case 'cond':
      return { ...v, test: elementwise(v.test, shape, ctx), then: elementwise(v.then, shape, ctx), else: elementwise(v.else, shape, ctx) };
    case 'call':
      return TRANSFORMATIONAL.has(v.name) ? v : { ...v, args: v.args.map((x) => elementwise(x, shape, ctx)) };
    default:
      return v;
  }
}

/** The implied loop nest over `shape` around `body`; `_i1` innermost. */
export function impliedNest(shape: Triplet[], body: Stmt[], range: Range, header: string, ctx: ArrayContext): LoopStmt | undefined {
  let inner = body;
  let outer: LoopStmt | undefined;
  shape.forEach((t, k) => {
    const c = S.constValue(t.st);
    const down = c !== undefined && c < 0;
    const lower = down ? t.hi : t.lo;
    const upper = down ? t.lo : t.hi;
    const step = down ? S.num(-c!) : t.st;
    const mentioned = new Set([...S.freeSymbols(lower), ...S.freeSymbols(upper)]);
    outer = {
      kind: 'loop', variable: loopVariable(k + 1), lower, upper, step, tripCount: S.tripCount(lower, upper, step),
      header, keywordRange: range, body: inner, range, directives: [], implied: true,
      triangular: ctx.loopVars.some((lv) => mentioned.has(lv)) || undefined,
    };
    inner = [outer];
  });
  return outer;
}

/** `target = value` with an array target as a loop nest; undefined when the target is scalar. */
export function arrayAssignment(target: VExpr, value: VExpr, range: Range, header: string, ctx: ArrayContext): LoopStmt | undefined {
  const shape = target.kind === 'index' || target.kind === 'var' ? shapeOf(target, ctx) : undefined;
  if (!shape || shape.length === 0) return undefined;
  const t = elementwise(target, shape, ctx);
  if (t.kind !== 'index') return undefined;
  const access = { ...t.access, isWrite: true, isRead: false };
  const assign: Stmt = { kind: 'assign', target: { kind: 'index', access }, op: '=', value: elementwise(value, shape, ctx), range, directives: [] };
  return impliedNest(shape, [assign], range, header, ctx);
}
