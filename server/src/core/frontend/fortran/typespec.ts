/**
 * Type specifiers: `real`, `real(8)`, `real(kind=dp)`, `real*8`, `double precision`,
 * `complex(8)`, `double complex`, `integer(int64)`, `logical`, `character(len=*)`,
 * `type(grid)`, `class(*)`. The star forms give a byte size (`complex*16` is kind 8).
 */
import type { ElementType } from '../../model/program';
import type { ExprEnv } from './expressions';
import { parseValue } from './expressions';
import { type BaseType, DEFAULT_KIND, type KindContext, constInt, elementType } from './kinds';
import type { Tok } from './lexer';
import type { Located } from './source';
import { closeOf, isId, isOp, splitTop } from './tokens';

export interface TypeSpec {
  type: ElementType;
  base: BaseType;
  /** Index of the first token after the specifier. */
  next: number;
}

const BASES: Record<string, BaseType> = { real: 'real', integer: 'integer', complex: 'complex', logical: 'logical', character: 'character' };

export function startsTypeSpec(toks: readonly Tok[], i: number): boolean {
  const t = toks[i];
  if (!t || t.t !== 'id') return false;
  if (t.v in BASES || t.v === 'doubleprecision' || t.v === 'doublecomplex') return true;
  if (t.v === 'double') return isId(toks[i + 1], 'precision') || isId(toks[i + 1], 'complex');
  return (t.v === 'type' || t.v === 'class') && isOp(toks[i + 1], '(');
}

export interface TypeSpecContext {
  text: Located;
  toks: readonly Tok[];
  env: ExprEnv;
  kinds: KindContext;
}

export function readTypeSpec(ctx: TypeSpecContext, i: number): TypeSpec | undefined {
  const { toks } = ctx;
  const t = toks[i];
  if (!startsTypeSpec(toks, i)) return undefined;
  if (t.v === 'doubleprecision' || (t.v === 'double' && isId(toks[i + 1], 'precision'))) {
    return { type: elementType('real', 8, 'double precision'), base: 'real', next: i + (t.v === 'double' ? 2 : 1) };
  }
  if (t.v === 'doublecomplex' || (t.v === 'double' && isId(toks[i + 1], 'complex'))) {
    return { type: elementType('complex', 8, 'double complex'), base: 'complex', next: i + (t.v === 'double' ? 2 : 1) };
  }
  if (t.v === 'type' || t.v === 'class') {
    const close = closeOf(toks, i + 1);
    return { type: elementType('derived', undefined, ''), base: 'derived', next: close < 0 ? toks.length : close + 1 };
  }
  const base = BASES[t.v];
  let next = i + 1;
  let kind = DEFAULT_KIND[base];
  let spelled = '';
  if (isOp(toks[next], '*') && base !== 'character') {
    // `real*8`, `complex*16`: a byte size; for complex it covers both parts.
    const n = toks[next + 1];
    if (n && n.t === 'int') {
      const bytes = Number.parseInt(n.v, 10);
      kind = base === 'complex' ? bytes / 2 : bytes;
      spelled = `*${n.v}`;
      next += 2;
    }
  } else if (isOp(toks[next], '*')) {
    next = isOp(toks[next + 1], '(') ? Math.max(closeOf(toks, next + 1), next + 1) + 1 : next + 2;
  } else if (isOp(toks[next], '(')) {
    const close = closeOf(toks, next);
    const end = close < 0 ? toks.length : close;
    if (base !== 'character') {
      const items = splitTop(toks, next + 1, end, ',');
      let [a, b] = items[0];
      if (isId(toks[a], 'kind') && isOp(toks[a + 1], '=')) a += 2;
      if (b > a) {
        spelled = ctx.text.raw.slice(toks[a].s, toks[b - 1].e);
        kind = constInt(parseValue(ctx.text, toks, ctx.env, a, b), ctx.kinds);
      }
    }
    next = end + 1;
  }
  return { type: elementType(base, kind, spelled.toLowerCase()), base, next };
}
