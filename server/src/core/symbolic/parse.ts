/**
 * Recursive-descent parser from C or Fortran integer expression text to canonical expressions.
 * It never throws: any construct outside the supported subset, and any internal failure, makes
 * `parseExpr` return undefined.
 */

import { Expr, constRat, constant, powExpr } from './expr';
import { Lang, Tok, tokenize } from './lexer';
import { add, call, equals, floorDiv, minMax, mod, mul, neg, sub, sym } from './ops';
import { rat } from './rational';

class Fail extends Error {}

/** Byte sizes on the LP64 targets that GPU offloading uses. */
const SIZEOF: Record<string, number> = {};
const sizes: [number, string[]][] = [
  [1, ['char', 'signed char', 'unsigned char', 'bool', '_Bool', 'int8_t', 'uint8_t']],
  [2, ['short', 'short int', 'unsigned short', 'unsigned short int', 'int16_t', 'uint16_t']],
  [4, ['int', 'signed', 'signed int', 'unsigned', 'unsigned int', 'float', 'int32_t', 'uint32_t']],
  [8, ['long', 'long int', 'unsigned long', 'unsigned long int', 'long long', 'long long int',
    'unsigned long long', 'unsigned long long int', 'double', 'size_t', 'ssize_t', 'ptrdiff_t',
    'int64_t', 'uint64_t', 'intptr_t', 'uintptr_t', 'float complex', 'float _Complex', '_Complex float']],
  [16, ['long double', 'double complex', 'double _Complex', '_Complex double']],
];
for (const [n, names] of sizes) for (const name of names) SIZEOF[name] = n;

const INT_WORDS = new Set(['int', 'long', 'short', 'char', 'unsigned', 'signed', 'const']);
const INT_TYPEDEF = /^(u?int(_least|_fast)?(8|16|32|64)_t|size_t|ssize_t|ptrdiff_t|u?intptr_t|u?intmax_t)$/;

const C_MINMAX: Record<string, 'min' | 'max' | undefined> = { min: 'min', MIN: 'min', max: 'max', MAX: 'max' };
const F_MINMAX: Record<string, 'min' | 'max' | undefined> = { min: 'min', min0: 'min', max: 'max', max0: 'max' };

/** Limits that keep hostile input (huge powers or shifts) from exhausting time or memory. */
const MAX_POWER = 64;
const MAX_TERMS = 2000;
const MAX_DEPTH = 200;

function constInt(e: Expr): number {
  const c = constRat(e);
  if (!c || c.d !== 1n || c.n < 0n || c.n > BigInt(MAX_POWER)) throw new Fail();
  return Number(c.n);
}

/** Power with a guard on the size of the expanded result. */
function power(base: Expr, k: number): Expr {
  const c = constRat(base);
  if (c) {
    const bits = (c.n < 0n ? -c.n : c.n).toString(2).length;
    if (bits * k > 4096) throw new Fail();
  } else {
    // The expansion of (t1 + ... + tm)^k has at most C(k + m - 1, m - 1) terms.
    const m = base.terms.length;
    let count = 1;
    for (let i = 1; i < m && count <= MAX_TERMS; i++) count = (count * (k + i)) / i;
    if (count > MAX_TERMS) throw new Fail();
  }
  return powExpr(base, k);
}

class Parser {
  private pos = 0;
  private depth = 0;
  constructor(
    private readonly src: string,
    private readonly toks: Tok[],
    private readonly lang: Lang,
  ) {}

  parse(): Expr {
    const e = this.lang === 'c' ? this.cond() : this.fAdditive();
    if (this.pos !== this.toks.length) throw new Fail();
    return e;
  }

  private peek(v: string, ahead = 0): boolean {
    const t = this.toks[this.pos + ahead];
    return t !== undefined && t.t === 'op' && t.v === v;
  }

  private eat(v: string): boolean {
    if (!this.peek(v)) return false;
    this.pos++;
    return true;
  }

  private expect(v: string): void {
    if (!this.eat(v)) throw new Fail();
  }

  private enter(): void {
    if (++this.depth > MAX_DEPTH) throw new Fail();
  }

  // ---- C ----

  /** `p < q ? x : y` is accepted only when it is a min or max of p and q. */
  private cond(): Expr {
    this.enter();
    const rel = this.relation();
    if (rel instanceof Expr) {
      this.depth--;
      return rel;
    }
    const { l, op, r } = rel;
    this.expect('?');
    const x = this.cond();
    this.expect(':');
    const y = this.cond();
    this.depth--;
    if (equals(x, y)) return x;
    const less = op[0] === '<';
    if (equals(x, l) && equals(y, r)) return minMax(less ? 'min' : 'max', [l, r]);
    if (equals(x, r) && equals(y, l)) return minMax(less ? 'max' : 'min', [l, r]);
    throw new Fail();
  }

  /**
   * A comparison, which is only allowed as the condition of `?:`; it may be parenthesised as in
   * the usual MIN macro `((a) < (b) ? (a) : (b))`.
   */
  private relation(): Expr | { l: Expr; op: string; r: Expr } {
    if (this.peek('(') && this.afterGroupIs('?')) {
      this.pos++;
      const inner = this.relation();
      this.expect(')');
      if (inner instanceof Expr) throw new Fail();
      return inner;
    }
    const l = this.shift();
    const op = ['<=', '>=', '<', '>'].find((o) => this.peek(o));
    if (!op) return l;
    this.pos++;
    return { l, op, r: this.shift() };
  }

  /** True when the parenthesised group starting at the current token is followed by `v`. */
  private afterGroupIs(v: string): boolean {
    let depth = 0;
    for (let i = this.pos; i < this.toks.length; i++) {
      const t = this.toks[i];
      if (t.t !== 'op') continue;
      if (t.v === '(') depth++;
      else if (t.v === ')' && --depth === 0) {
        const next = this.toks[i + 1];
        return next !== undefined && next.t === 'op' && next.v === v;
      }
    }
    return false;
  }

  private shift(): Expr {
    let l = this.cAdditive();
    for (;;) {
      const op = this.eat('<<') ? '<<' : this.eat('>>') ? '>>' : '';
      if (!op) return l;
      const p = constant(rat(2n ** BigInt(constInt(this.cAdditive()))));
      l = op === '<<' ? mul(l, p) : floorDiv(l, p);
    }
  }

  private cAdditive(): Expr {
    let l = this.cMult();
    for (;;) {
      if (this.eat('+')) l = add(l, this.cMult());
      else if (this.eat('-')) l = sub(l, this.cMult());
      else return l;
    }
  }

  private cMult(): Expr {
    let l = this.cUnary();
    for (;;) {
      if (this.eat('*')) l = mul(l, this.cUnary());
      else if (this.eat('/')) l = floorDiv(l, this.cUnary());
      else if (this.eat('%')) l = mod(l, this.cUnary());
      else return l;
    }
  }

  private cUnary(): Expr {
    this.enter();
    let e: Expr;
    if (this.eat('-')) e = neg(this.cUnary());
    else if (this.eat('+')) e = this.cUnary();
    else if (this.castAhead()) e = this.cUnary();
    else e = this.primary();
    this.depth--;
    return e;
  }

  /** Consumes an integer cast such as `(size_t)`; a floating cast makes the parse fail. */
  private castAhead(): boolean {
    if (!this.peek('(')) return false;
    const words: string[] = [];
    let i = this.pos + 1;
    for (let t = this.toks[i]; t && t.t === 'id'; t = this.toks[++i]) words.push(t.v);
    const close = this.toks[i];
    if (!words.length || !close || close.t !== 'op' || close.v !== ')') return false;
    const intType = words.every((w) => INT_WORDS.has(w)) || (words.length === 1 && INT_TYPEDEF.test(words[0]));
    if (!intType) {
      if (words.some((w) => w === 'float' || w === 'double')) throw new Fail();
      return false;
    }
    this.pos = i + 1;
    return true;
  }

  /** `sizeof(T)` of a known type is its size; anything else becomes the symbol 'sizeof(T)'. */
  private sizeofExpr(): Expr {
    const open = this.toks[this.pos];
    this.expect('(');
    let depth = 1;
    let i = this.pos;
    for (; i < this.toks.length && depth > 0; i++) {
      const t = this.toks[i];
      if (t.t === 'op' && t.v === '(') depth++;
      else if (t.t === 'op' && t.v === ')') depth--;
    }
    if (depth !== 0 || i === this.pos + 1) throw new Fail();
    const text = this.src
      .slice(open.e, this.toks[i - 1].s)
      .trim()
      .replace(/\s+/g, ' ')
      .replace(/\s*\*/g, '*');
    this.pos = i;
    if (SIZEOF[text] !== undefined) return constant(rat(BigInt(SIZEOF[text])));
    if (/^[A-Za-z_][\w ]*\*+$/.test(text)) return constant(rat(8n));
    if (!/^[\w .*[\]>-]+$/.test(text)) throw new Fail();
    return sym(`sizeof(${text})`);
  }

  private primary(): Expr {
    const t = this.toks[this.pos];
    if (!t) throw new Fail();
    if (t.t === 'num') {
      this.pos++;
      return constant(rat(t.v));
    }
    if (t.t === 'id') {
      this.pos++;
      if (this.lang === 'c' && t.v === 'sizeof') return this.sizeofExpr();
      if (!this.peek('(')) return sym(t.v);
      return this.callExpr(t.v);
    }
    this.expect('(');
    const e = this.lang === 'c' ? this.cond() : this.fAdditive();
    this.expect(')');
    return e;
  }

  /** min/max/mod are understood; other calls (Fortran `size(a,1)`) stay opaque atoms. */
  private callExpr(rawName: string): Expr {
    this.expect('(');
    const args: Expr[] = [];
    if (!this.eat(')')) {
      do args.push(this.lang === 'c' ? this.cond() : this.fAdditive());
      while (this.eat(','));
      this.expect(')');
    }
    // Fortran names are case-insensitive, so calls are normalised to lower case there.
    const name = this.lang === 'fortran' ? rawName.toLowerCase() : rawName;
    const minmax = (this.lang === 'c' ? C_MINMAX : F_MINMAX)[name];
    if (minmax) {
      if (args.length < 2) throw new Fail();
      return minMax(minmax, args);
    }
    if (name === 'mod' || name === 'MOD') {
      if (args.length !== 2) throw new Fail();
      return mod(args[0], args[1]);
    }
    return call(name, args);
  }

  // ---- Fortran ----

  /** A leading sign applies to the whole first term: `-n**2` is `-(n**2)`. */
  private fAdditive(): Expr {
    this.enter();
    const negative = this.eat('-');
    if (!negative) this.eat('+');
    let l = negative ? neg(this.fMult()) : this.fMult();
    for (;;) {
      if (this.eat('+')) l = add(l, this.fMult());
      else if (this.eat('-')) l = sub(l, this.fMult());
      else break;
    }
    this.depth--;
    return l;
  }

  private fMult(): Expr {
    let l = this.fSigned();
    for (;;) {
      if (this.eat('*')) l = mul(l, this.fSigned());
      else if (this.eat('/')) l = floorDiv(l, this.fSigned());
      else return l;
    }
  }

  /** Compilers accept a sign after an operator (`a*-b`); it binds looser than `**`. */
  private fSigned(): Expr {
    this.enter();
    let e: Expr;
    if (this.eat('-')) e = neg(this.fSigned());
    else if (this.eat('+')) e = this.fSigned();
    else e = this.fPower();
    this.depth--;
    return e;
  }

  /** `**` is right-associative; only constant non-negative integer exponents are supported. */
  private fPower(): Expr {
    const base = this.primary();
    if (!this.eat('**')) return base;
    return power(base, constInt(this.fSigned()));
  }
}

export function parseExpr(text: string, lang: 'c' | 'fortran'): Expr | undefined {
  try {
    if (typeof text !== 'string' || text.length > 100_000) return undefined;
    const toks = tokenize(text, lang);
    if (!toks || toks.length === 0) return undefined;
    return new Parser(text, toks, lang).parse();
  } catch {
    return undefined;
  }
}
