/**
 * Specification statements: type declarations (`real(dp), allocatable :: h(:,:)`,
 * `integer, parameter :: nx = 600`, F77 `double precision a(n)`), attribute statements
 * (`dimension`, `allocatable`, `parameter (…)`, `intent`, `common`) and `implicit`. They fill the
 * current scope; dims are stored first written first with lower bounds when any is written
 * (`a(0:n+1)` has dims [n + 2] and lower bounds [0]). Extents that are not written (`a(:,:)`,
 * `a(*)`) become the symbols `extent(a,1)`, `extent(a,2)` until an `allocate` gives them.
 */
import * as S from '../../symbolic';
import type { Declaration, VExpr } from '../../model/program';
import { parseValue } from './expressions';
import { constInt } from './kinds';
import type { Scope } from './scope';
import { rangeIn } from './source';
import { fsym } from './symbolic';
import { closeOf, findTop, isId, isOp, splitTop } from './tokens';
import { type TypeSpec, type TypeSpecContext, readTypeSpec } from './typespec';

export interface DeclContext extends TypeSpecContext {
  scope: Scope;
  /** Scope recorded on new declarations that are not dummy arguments. */
  defaultScope: 'global' | 'local';
  dummies: ReadonlySet<string>;
  /** Receives every declaration this unit creates, in order of first mention. */
  created: Declaration[];
}

/** The declaration of `name` in the current scope, created with the implicit type when new. */
export function declare(ctx: DeclContext, name: string, range: Declaration['range']): Declaration {
  const own = ctx.scope.decls.get(name);
  if (own) return own;
  const d: Declaration = {
    name,
    type: ctx.scope.implicitType(name),
    dims: [],
    isPointer: false,
    isArray: false,
    isConst: false,
    scope: ctx.dummies.has(name) ? 'param' : ctx.defaultScope,
    range,
  };
  ctx.scope.decls.set(name, d);
  ctx.created.push(d);
  return d;
}

const value = (ctx: DeclContext, a: number, b: number): VExpr => parseValue(ctx.text, ctx.toks, ctx.env, a, b);
const symbolic = (ctx: DeclContext, v: VExpr): S.Expr | undefined => fsym(v, (n) => ctx.scope.lookup(n));

/** Applies an array spec written between the parentheses at `open` and `close`. */
export function applyArraySpec(ctx: DeclContext, d: Declaration, open: number, close: number): void {
  const { toks } = ctx;
  const dims: S.Expr[] = [];
  const lowers: S.Expr[] = [];
  let explicitLower = false;
  splitTop(toks, open + 1, close, ',').forEach(([a, b], k) => {
    const extent = S.sym(`extent(${d.name},${k + 1})`);
    const star = (x: number, y: number): boolean => y === x + 1 && isOp(toks[x], '*');
    const read = (x: number, y: number): S.Expr | undefined => (y > x && !star(x, y) ? symbolic(ctx, value(ctx, x, y)) : undefined);
    const parts = splitTop(toks, a, b, ':');
    let lower: S.Expr = S.num(1);
    let upper: S.Expr | undefined;
    if (parts.length === 1) upper = read(a, b);
    else {
      const [lo, hi] = parts;
      if (lo[1] > lo[0]) {
        explicitLower = true;
        lower = read(lo[0], lo[1]) ?? S.sym(`lbound(${d.name},${k + 1})`);
      }
      upper = read(hi[0], hi[1]);
    }
    dims.push(upper ? (parts.length === 1 ? upper : S.add(S.sub(upper, lower), S.num(1))) : extent);
    lowers.push(lower);
  });
  d.dims = dims;
  d.lowerBounds = explicitLower ? lowers : undefined;
  d.isArray = true;
  d.elementCount = dims.length > 0 ? S.mul(...dims) : undefined;
}

const isIntegerType = (d: Declaration): boolean => !d.type.isFloat && !['logical', 'char', 'unknown'].includes(d.type.name);

/** Records the value of a named constant (or the literal initialiser of a variable). */
function initialise(ctx: DeclContext, d: Declaration, v: VExpr, isParameter: boolean): void {
  if (isParameter && d.type.isFloat) ctx.scope.floatConstants.set(d.name, d.type);
  if (!isIntegerType(d)) return;
  const n = constInt(v, ctx.kinds);
  const e = n !== undefined && Number.isSafeInteger(n) ? S.num(n) : symbolic(ctx, v);
  if (!e) return;
  d.init = e;
  if (isParameter) ctx.scope.constants.set(d.name, e);
}

interface EntityOptions {
  spec?: TypeSpec;
  /** The `dimension(…)` attribute's parentheses, applied to entities without their own spec. */
  dimension?: [number, number];
  isParameter?: boolean;
  isPointer?: boolean;
  isAllocatable?: boolean;
}

/** Reads `name [(spec)] [*len] [= init]` entities in tokens [from, to). */
function entities(ctx: DeclContext, from: number, to: number, o: EntityOptions): void {
  const { toks } = ctx;
  for (const [a, b] of splitTop(toks, from, to, ',')) {
    if (!isId(toks[a])) continue;
    const d = declare(ctx, toks[a].v, rangeIn(ctx.text, toks[a].s, toks[b - 1].e));
    if (o.spec) d.type = o.spec.type;
    let j = a + 1;
    if (isOp(toks[j], '(')) {
      const close = closeOf(toks, j, b);
      if (close < 0) continue;
      applyArraySpec(ctx, d, j, close);
      j = close + 1;
    } else if (o.dimension) applyArraySpec(ctx, d, o.dimension[0], o.dimension[1]);
    if (isOp(toks[j], '*')) j = isOp(toks[j + 1], '(') ? Math.max(closeOf(toks, j + 1, b), j + 1) + 1 : j + 2;
    if (o.isPointer) d.isPointer = true;
    if (o.isPointer || o.isAllocatable) d.isArray = d.isArray || d.dims.length > 0;
    if (o.isParameter) d.isConst = true;
    if (isOp(toks[j], '=') && j + 1 < b) initialise(ctx, d, value(ctx, j + 1, b), !!o.isParameter);
  }
}

/** `type-spec [, attr]... :: entities` or the old form `type-spec entities`. */
export function readTypeDeclaration(ctx: DeclContext, spec: TypeSpec): void {
  const { toks } = ctx;
  const colons = findTop(toks, spec.next, toks.length, '::');
  const o: EntityOptions = { spec };
  let from = spec.next;
  if (colons >= 0) {
    for (const [a, b] of splitTop(toks, spec.next, colons, ',')) {
      const w = toks[a]?.t === 'id' ? toks[a].v : '';
      if (w === 'parameter') o.isParameter = true;
      else if (w === 'pointer') o.isPointer = true;
      else if (w === 'allocatable') o.isAllocatable = true;
      else if (w === 'dimension' && isOp(toks[a + 1], '(')) {
        const close = closeOf(toks, a + 1, b);
        if (close > 0) o.dimension = [a + 1, close];
      }
    }
    from = colons + 1;
  } else if (isOp(toks[from], ',')) return;
  entities(ctx, from, toks.length, o);
}

/** `dimension`, `allocatable`, `pointer`, `target`, `intent(…)` and similar attribute statements. */
export function readAttributeStatement(ctx: DeclContext, word: string, i: number): void {
  const { toks } = ctx;
  let from = i + 1;
  if (isOp(toks[from], '(') && word !== 'dimension') from = Math.max(closeOf(toks, from), from) + 1;
  if (isOp(toks[from], '::')) from++;
  entities(ctx, from, toks.length, { isPointer: word === 'pointer', isAllocatable: word === 'allocatable' });
}

/** F77 `parameter (n = 100, m = 2*n)`. */
export function readParameterStatement(ctx: DeclContext, i: number): void {
  const { toks } = ctx;
  if (!isOp(toks[i + 1], '(')) return;
  const close = closeOf(toks, i + 1);
  if (close < 0) return;
  for (const [a, b] of splitTop(toks, i + 2, close, ',')) {
    if (!isId(toks[a]) || !isOp(toks[a + 1], '=')) continue;
    const d = declare(ctx, toks[a].v, rangeIn(ctx.text, toks[a].s, toks[b - 1].e));
    d.isConst = true;
    initialise(ctx, d, value(ctx, a + 2, b), true);
  }
}

/** `common /blk/ a(100), b, // c`: the names are variables, with their array specs. */
export function readCommon(ctx: DeclContext, i: number): void {
  const { toks } = ctx;
  let j = i + 1;
  let start = j;
  const flush = (end: number): void => {
    if (end > start) entities(ctx, start, end, {});
  };
  while (j < toks.length) {
    if (isOp(toks[j], '//') || (isOp(toks[j], '/') && isOp(toks[j + 2], '/'))) {
      flush(j);
      j += isOp(toks[j], '//') ? 1 : 3;
      start = j;
      continue;
    }
    j++;
  }
  flush(toks.length);
}

/** `implicit none`, `implicit double precision (a-h, o-z)`. */
export function readImplicit(ctx: DeclContext, i: number): void {
  const { toks } = ctx;
  if (isId(toks[i + 1], 'none')) {
    ctx.scope.setImplicitNone();
    return;
  }
  for (const [a, b] of splitTop(toks, i + 1, toks.length, ',')) {
    // The letter list is the last parenthesised group; anything before it is the type.
    let open = -1;
    for (let k = a; k < b; k++) {
      if (!isOp(toks[k], '(')) continue;
      open = k;
      k = Math.max(closeOf(toks, k, b), k);
    }
    const spec = readTypeSpec({ ...ctx, toks: toks.slice(0, open) }, a);
    if (!spec || open < 0) continue;
    const close = closeOf(toks, open, b);
    for (const [x, y] of splitTop(toks, open + 1, close < 0 ? b : close, ',')) {
      const from = toks[x]?.v ?? '';
      const to = isOp(toks[x + 1], '-') && y > x + 2 ? toks[x + 2].v : from;
      if (/^[a-z]$/.test(from) && /^[a-z]$/.test(to)) ctx.scope.setImplicit(from, to, spec.type);
    }
  }
}
