/**
 * Fortran intrinsic types and kinds to element types. Kind numbers are taken as byte sizes, as
 * gfortran and most compilers on Linux number them (common practice): `real(8)` is 8 bytes,
 * `complex(8)` 16, `integer(8)` 8. Kind 10 (x87 extended precision) is stored in 16 bytes.
 * Named kinds resolve through integer constants (`dp = kind(1.0d0)`,
 * `selected_real_kind(15)`, `real64` of iso_fortran_env, `c_double` of iso_c_binding).
 */
import * as S from '../../symbolic';
import type { ElementType, VExpr } from '../../model/program';
import { ElementTypes } from '../../model/types';

export type BaseType = 'real' | 'integer' | 'complex' | 'logical' | 'character' | 'derived';

/** Kind values of the named constants of the intrinsic modules iso_fortran_env and iso_c_binding. */
const INTRINSIC_KINDS: Record<string, number> = {
  real32: 4, real64: 8, real128: 16, int8: 1, int16: 2, int32: 4, int64: 8,
  c_float: 4, c_double: 8, c_long_double: 10, c_float_complex: 4, c_double_complex: 8,
  c_int: 4, c_short: 2, c_long: 8, c_long_long: 8, c_size_t: 8, c_int8_t: 1, c_int16_t: 2,
  c_int32_t: 4, c_int64_t: 8, c_intptr_t: 8, c_bool: 1, c_char: 1,
};

export function intrinsicKind(name: string): number | undefined {
  return INTRINSIC_KINDS[name];
}

/** gfortran's choice for selected_real_kind(p, r) (from memory): 4, 8, 10 or 16. */
function selectedRealKind(p: number, r: number): number {
  if (p <= 6 && r <= 37) return 4;
  if (p <= 15 && r <= 307) return 8;
  if (p <= 18 && r <= 4931) return 10;
  if (p <= 33 && r <= 4931) return 16;
  return -1;
}

function selectedIntKind(r: number): number {
  if (r <= 2) return 1;
  if (r <= 4) return 2;
  if (r <= 9) return 4;
  if (r <= 18) return 8;
  return r <= 38 ? 16 : -1;
}

export interface KindContext {
  /** Integer value of a named constant, if known. */
  constant(name: string): number | undefined;
  /** Element bytes of a declared variable, for `kind(x)`. */
  kindOfVariable(name: string): number | undefined;
}

/** Kind of a literal: `1.0d0` 8, `1.0` 4, `1.0_8` 8, `1` 4. */
function literalKind(v: VExpr & { kind: 'num' }, ctx: KindContext): number | undefined {
  const suffix = /_([a-z0-9_]+)$/.exec(v.text);
  if (suffix) return /^\d+$/.test(suffix[1]) ? Number(suffix[1]) : ctx.constant(suffix[1]) ?? intrinsicKind(suffix[1]);
  if (!v.isFloat) return 4;
  return /d/.test(v.text) ? 8 : /q/.test(v.text) ? 16 : 4;
}

/** Evaluates a constant integer expression, with the kind inquiry functions understood. */
export function constInt(v: VExpr, ctx: KindContext, depth = 0): number | undefined {
  if (depth > 50) return undefined;
  const go = (x: VExpr | undefined): number | undefined => (x ? constInt(x, ctx, depth + 1) : undefined);
  switch (v.kind) {
    case 'num': {
      if (v.isFloat) return undefined;
      const m = /^(\d+)(_\w+)?$/.exec(v.text);
      return m ? Number(m[1]) : undefined;
    }
    case 'var':
      return ctx.constant(v.name) ?? intrinsicKind(v.name);
    case 'unary': {
      const x = go(v.operand);
      return x === undefined ? undefined : v.op === '-' ? -x : v.op === '+' ? x : undefined;
    }
    case 'bin': {
      const l = go(v.left);
      const r = go(v.right);
      if (l === undefined || r === undefined) return undefined;
      switch (v.op) {
        case '+': return l + r;
        case '-': return l - r;
        case '*': return l * r;
        case '/': return r === 0 ? undefined : Math.trunc(l / r);
        case '**': return r >= 0 && r < 64 ? l ** r : undefined;
        default: return undefined;
      }
    }
    case 'call': {
      const a = v.args;
      if (v.name === 'kind' && a.length === 1) {
        if (a[0].kind === 'num') return literalKind(a[0], ctx);
        if (a[0].kind === 'var') return ctx.kindOfVariable(a[0].name);
        return undefined;
      }
      if (v.name === 'selected_real_kind') {
        const p = a[0] ? go(a[0]) : 0;
        const r = a[1] ? go(a[1]) : 0;
        return p === undefined || r === undefined ? undefined : selectedRealKind(p, r);
      }
      if (v.name === 'selected_int_kind' && a.length === 1) {
        const r = go(a[0]);
        return r === undefined ? undefined : selectedIntKind(r);
      }
      const xs = a.map(go);
      if (xs.some((x) => x === undefined)) return undefined;
      const ns = xs as number[];
      if (v.name === 'max' && ns.length > 0) return Math.max(...ns);
      if (v.name === 'min' && ns.length > 0) return Math.min(...ns);
      if (v.name === 'mod' && ns.length === 2 && ns[1] !== 0) return ns[0] % ns[1];
      if ((v.name === 'int' || v.name === 'abs') && ns.length === 1) return v.name === 'abs' ? Math.abs(ns[0]) : ns[0];
      return undefined;
    }
    default:
      return undefined;
  }
}

const named = (name: string, bytes: number, isFloat: boolean): ElementType => ({ name, bytes, isFloat });

/** Storage bytes of a real of kind `k`. */
export function realBytes(k: number): number {
  return k === 10 ? 16 : k;
}

/**
 * The element type of a base type with a kind value. An unknown kind keeps the spelling in the
 * name and assumes the most common size (8 bytes for reals, 16 for complex, 4 for integers and
 * logicals), so byte counts stay plausible instead of zero.
 */
export function elementType(base: BaseType, kind: number | undefined, spelled: string): ElementType {
  switch (base) {
    case 'real':
      if (kind === undefined) return named(`real(${spelled})`, 8, true);
      if (kind === 4) return ElementTypes.float;
      if (kind === 8) return ElementTypes.double;
      if (kind === 10 || kind === 16) return ElementTypes.longDouble;
      return named(`real(kind=${kind})`, Math.max(kind, 1), true);
    case 'complex':
      if (kind === undefined) return named(`complex(${spelled})`, 16, true);
      if (kind === 4) return ElementTypes.complexFloat;
      if (kind === 8) return ElementTypes.complexDouble;
      if (kind === 10 || kind === 16) return named('complex-long-double', 32, true);
      return named(`complex(kind=${kind})`, Math.max(2 * kind, 1), true);
    case 'integer':
      if (kind === undefined) return named(`integer(${spelled})`, 4, false);
      if (kind === 4) return ElementTypes.int;
      if (kind === 8) return ElementTypes.long;
      if (kind === 2) return ElementTypes.short;
      return named(`integer(kind=${kind})`, Math.max(kind, 1), false);
    case 'logical':
      return named('logical', kind ?? 4, false);
    case 'character':
      return ElementTypes.char;
    default:
      return ElementTypes.unknown;
  }
}

/** Default kinds (Fortran 2008 §4.4, from memory: default real and integer are one numeric storage unit). */
export const DEFAULT_KIND: Record<BaseType, number | undefined> = {
  real: 4, integer: 4, complex: 4, logical: 4, character: 1, derived: undefined,
};

/** Symbolic value of a constant integer, for bindings. */
export function constExpr(n: number | undefined): S.Expr | undefined {
  return n === undefined || !Number.isSafeInteger(n) ? undefined : S.num(n);
}
