/**
 * Fortran expressions to value expressions (VExpr). `a(i)` is an array element when `a` is a
 * visible array declaration and a function reference otherwise (intrinsics such as `sqrt`,
 * `mod`, `real` included). Operators are normalised to the C spellings the analyses match
 * (`.eq.`/`==` → `==`, `/=` → `!=`, `.and.` → `&&`, `.or.` → `||`, `.not.` → `!`); `**` and
 * `//` keep their Fortran spelling. Section subscripts (`a(2:n-1, j)`) are kept beside the
 * access in a side table, so that array syntax can later become implied loops.
 */
import type * as S from '../../symbolic';
import type { ArrayAccess, Declaration, VExpr } from '../../model/program';
import type { Range } from '../../types';
import type { Tok } from './lexer';
import { type Located, rangeIn } from './source';
import { closeOf, isOp, splitTop } from './tokens';

export interface ExprEnv {
  /** The visible declaration of an array named `name`, if any. */
  arrayOf(name: string): Declaration | undefined;
  /**
   * True for a name with no visible declaration that must still be a variable: one named in a
   * directive's data clause (`present(h)`), as arrays of modules in other files are.
   */
  isUndeclaredVariable(name: string): boolean;
  /** True when `name` has a visible declaration of any kind. */
  isDeclared(name: string): boolean;
  /** Byte size of a real literal with kind `_k` (`k` a number or a named constant), if known. */
  realKindBytes(kind: string): number | undefined;
  /** The literal text of a floating-point `#define` constant, if `name` is one. */
  floatMacro(name: string): string | undefined;
  /** Symbolic integer form of a value, with Fortran shape inquiries understood. */
  symbolic(v: VExpr): S.Expr | undefined;
}

/** One written subscript of an array reference. */
export type Subscript =
  | { kind: 'index'; value: VExpr; text: string }
  | { kind: 'triplet'; lo?: VExpr; hi?: VExpr; st?: VExpr; text: string };

/** Section subscripts of accesses that have at least one triplet (`a(:, j)`). */
const sections = new WeakMap<ArrayAccess, Subscript[]>();
/** Source ranges of `var` nodes that name arrays (`h` in `h = h + dt*f`). */
const varRanges = new WeakMap<VExpr, Range>();

export const sectionOf = (a: ArrayAccess): Subscript[] | undefined => sections.get(a);
export const rangeOfVar = (v: VExpr): Range | undefined => varRanges.get(v);

/**
 * Intrinsic procedures that read the values of their array arguments. A whole array passed to
 * one of them (`sum(h)`, `maxval(abs(h))`) is every element read, so it becomes the section
 * `h(:, :)`; a whole array passed to a user procedure stays a name, as a C pointer argument does,
 * because passing it reads nothing by itself. Inquiry functions (`size`, `lbound`) read no values.
 */
const READS_ARRAY_ARGUMENTS = new Set([
  'abs', 'sqrt', 'exp', 'log', 'log10', 'sin', 'cos', 'tan', 'asin', 'acos', 'atan', 'atan2', 'sinh', 'cosh',
  'tanh', 'max', 'min', 'mod', 'modulo', 'sign', 'dim', 'real', 'dble', 'float', 'sngl', 'int', 'nint', 'anint',
  'aint', 'floor', 'ceiling', 'aimag', 'conjg', 'cmplx', 'dcmplx', 'merge', 'sum', 'product', 'maxval', 'minval',
  'maxloc', 'minloc', 'findloc', 'any', 'all', 'count', 'norm2', 'dot_product', 'matmul', 'transpose', 'reshape',
  'pack', 'unpack', 'spread', 'cshift', 'eoshift', 'iand', 'ior', 'ieor', 'not', 'hypot', 'erf', 'gamma', 'isnan',
]);

const REL: Record<string, string> = {
  '==': '==', '.eq.': '==', '/=': '!=', '.ne.': '!=', '<': '<', '.lt.': '<', '<=': '<=', '.le.': '<=',
  '>': '>', '.gt.': '>', '>=': '>=', '.ge.': '>=',
};
const MAX_DEPTH = 200;

class Fail extends Error {}

/** The bytes of a real literal: `d` exponent 8, `q` 16, a kind suffix its kind, otherwise default real 4. */
export function realLiteral(text: string, env: ExprEnv): VExpr {
  const kind = /_([a-z0-9_]+)$/.exec(text);
  let bytes: number;
  if (kind) bytes = env.realKindBytes(kind[1]) ?? 8;
  else if (/d/.test(text)) bytes = 8;
  else if (/q/.test(text)) bytes = 16;
  else bytes = 4;
  return { kind: 'num', text, isFloat: true, bytes };
}

export class ExprParser {
  private depth = 0;
  private i: number;

  constructor(
    private readonly text: Located,
    private readonly toks: readonly Tok[],
    private readonly env: ExprEnv,
    from: number,
    private readonly to: number,
  ) {
    this.i = from;
  }

  get position(): number {
    return this.i;
  }

  /** Parses one expression; on anything unreadable the result is opaque and the position is `to`. */
  parse(): VExpr {
    const start = this.i;
    try {
      return this.equiv();
    } catch (err) {
      if (!(err instanceof Fail)) throw err;
      this.i = this.to;
      return { kind: 'opaque', text: this.source(start, this.to) };
    }
  }

  private source(from: number, to: number): string {
    if (from >= to || from >= this.toks.length) return '';
    return this.text.raw.slice(this.toks[from].s, this.toks[Math.min(to, this.toks.length) - 1].e);
  }

  private peek(k = 0): Tok | undefined {
    return this.i + k < this.to ? this.toks[this.i + k] : undefined;
  }

  private eatOp(...vs: string[]): string | undefined {
    const t = this.peek();
    if (t && t.t === 'op' && vs.includes(t.v)) {
      this.i++;
      return t.v;
    }
    return undefined;
  }

  private enter(): void {
    if (++this.depth > MAX_DEPTH) throw new Fail();
  }

  private equiv(): VExpr {
    let l = this.or();
    for (let op = this.eatOp('.eqv.', '.neqv.'); op; op = this.eatOp('.eqv.', '.neqv.')) {
      l = { kind: 'bin', op: op === '.eqv.' ? '==' : '!=', left: l, right: this.or() };
    }
    return l;
  }

  private or(): VExpr {
    let l = this.and();
    while (this.eatOp('.or.')) l = { kind: 'bin', op: '||', left: l, right: this.and() };
    return l;
  }

  private and(): VExpr {
    let l = this.not();
    while (this.eatOp('.and.')) l = { kind: 'bin', op: '&&', left: l, right: this.not() };
    return l;
  }

  private not(): VExpr {
    this.enter();
    const e: VExpr = this.eatOp('.not.') ? { kind: 'unary', op: '!', operand: this.not() } : this.rel();
    this.depth--;
    return e;
  }

  private rel(): VExpr {
    const l = this.concat();
    const op = this.eatOp(...Object.keys(REL));
    return op ? { kind: 'bin', op: REL[op], left: l, right: this.concat() } : l;
  }

  private concat(): VExpr {
    let l = this.additive();
    while (this.eatOp('//')) l = { kind: 'bin', op: '//', left: l, right: this.additive() };
    return l;
  }

  /** A leading sign applies to the first term as a whole: `-a*b` is `-(a*b)`. */
  private additive(): VExpr {
    const sign = this.eatOp('+', '-');
    let l = this.mult();
    if (sign === '-') l = { kind: 'unary', op: '-', operand: l };
    for (let op = this.eatOp('+', '-'); op; op = this.eatOp('+', '-')) l = { kind: 'bin', op, left: l, right: this.mult() };
    return l;
  }

  private mult(): VExpr {
    let l = this.power();
    for (let op = this.eatOp('*', '/'); op; op = this.eatOp('*', '/')) l = { kind: 'bin', op, left: l, right: this.power() };
    return l;
  }

  /** `**` is right-associative; a sign after it (`a**-2`) is a common extension. */
  private power(): VExpr {
    this.enter();
    const base = this.primary();
    let e = base;
    if (this.eatOp('**')) {
      const sign = this.eatOp('+', '-');
      const exp = this.power();
      e = { kind: 'bin', op: '**', left: base, right: sign === '-' ? { kind: 'unary', op: '-', operand: exp } : exp };
    }
    this.depth--;
    return e;
  }

  private primary(): VExpr {
    const t = this.peek();
    if (!t) throw new Fail();
    switch (t.t) {
      case 'int':
        this.i++;
        return { kind: 'num', text: t.v, isFloat: false };
      case 'real':
        this.i++;
        return realLiteral(t.v, this.env);
      case 'logical':
        this.i++;
        return { kind: 'num', text: t.v, isFloat: false };
      case 'str':
        this.i++;
        return { kind: 'opaque', text: this.text.raw.slice(t.s, t.e) };
      case 'id':
        return this.reference();
      default:
        break;
    }
    if (t.v === '(') return this.parenthesised();
    if (t.v === '(/' || t.v === '[') {
      // Array constructors are kept as text: stencil kernels do not index through them.
      const close = closeOf(this.toks, this.i, this.to);
      if (close < 0) throw new Fail();
      const start = this.i;
      this.i = close + 1;
      return { kind: 'opaque', text: this.source(start, close + 1) };
    }
    throw new Fail();
  }

  /** `(e)` or the complex literal `(re, im)`, kept as a call to `cmplx`. */
  private parenthesised(): VExpr {
    this.i++;
    const first = this.equiv();
    if (this.eatOp(',')) {
      const second = this.equiv();
      if (!this.eatOp(')')) throw new Fail();
      return { kind: 'call', name: 'cmplx', args: [first, second] };
    }
    if (!this.eatOp(')')) throw new Fail();
    return first;
  }

  /** A name, possibly with subscripts or arguments and `%` components. */
  private reference(): VExpr {
    const first = this.toks[this.i];
    let name = first.v;
    this.i++;
    let result: VExpr | undefined;
    // Element indexes dropped from a component path (`t` of `chunk%tiles(t)%field%u`).
    const through: VExpr[] = [];
    for (;;) {
      if (isOp(this.peek(), '(')) {
        const open = this.i;
        const close = closeOf(this.toks, open, this.to);
        if (close < 0) throw new Fail();
        if (result) {
          // A substring of an element (`s(i)(1:3)`) reads nothing new.
          this.i = close + 1;
          continue;
        }
        result = this.applied(name, first, open, close);
        if (through.length > 0 && result.kind === 'index') result.access.through = [...through];
        this.i = close + 1;
        continue;
      }
      if (isOp(this.peek(), '%') && this.peek(1)?.t === 'id') {
        // A component of an element. `a(i)%x` alone reads that element of `a`. A deeper path or a
        // subscripted component (`chunk%tiles(t)%field%density0`, `a(i)%b(j)`) reaches an array
        // held inside the element: it is its own storage, named by its path without the element's
        // index (`chunk%tiles%field%density0`), so every element's copy is one storage to the
        // ledger and the members of one element are not one another.
        let chain = 0;
        while (isOp(this.peek(2 * chain), '%') && this.peek(2 * chain + 1)?.t === 'id') chain++;
        if (result && (chain >= 2 || isOp(this.peek(2 * chain), '('))) {
          if (result.kind === 'index') through.push(...(result.access.through ?? []), ...result.access.subscriptValues);
          result = undefined;
        }
        for (let c = 0; c < chain; c++) {
          name = `${name}%${this.peek(1)!.v}`;
          this.i += 2;
        }
        continue;
      }
      break;
    }
    if (result) return result;
    const lit = this.env.floatMacro(name);
    if (lit) return realLiteral(lit.toLowerCase(), this.env);
    const decl = this.env.arrayOf(name);
    // A name renamed by `use m, only: local => remote` refers to the module's declaration.
    const v: VExpr = { kind: 'var', name: decl?.name ?? name, ...(through.length > 0 ? { through } : {}) };
    if (decl) varRanges.set(v, rangeIn(this.text, first.s, this.toks[this.i - 1].e));
    return v;
  }

  /** `name(...)`: an array element or section when `name` is an array, a function reference otherwise. */
  private applied(name: string, first: Tok, open: number, close: number): VExpr {
    const subs = this.subscripts(open, close);
    const decl = this.env.arrayOf(name);
    // A section subscript (`a:b`) cannot be a function argument, so an undeclared name with one
    // is an array of a module outside this file; so is a name the directives move as data.
    const undeclared = !decl && !this.env.isDeclared(name) && (this.env.isUndeclaredVariable(name) || subs.some((x) => x.kind === 'triplet'));
    if (decl || undeclared || name.includes('%')) return { kind: 'index', access: this.access(decl?.name ?? name, subs, rangeIn(this.text, first.s, this.toks[close].e)) };
    const args: VExpr[] = subs.map((s) => (s.kind === 'index' ? s.value : { kind: 'opaque', text: s.text }));
    return { kind: 'call', name, args: READS_ARRAY_ARGUMENTS.has(name) ? args.map((a) => this.wholeArray(a)) : args };
  }

  /** A whole array named as a value (`h` in `sum(h)` or an output list) as the section `h(:, …)`. */
  wholeArray(v: VExpr): VExpr {
    const d = v.kind === 'var' ? this.env.arrayOf(v.name) : undefined;
    const range = rangeOfVar(v);
    if (!d || d.dims.length === 0 || !range) return v;
    const subs: Subscript[] = d.dims.map(() => ({ kind: 'triplet', text: ':' }));
    return { kind: 'index', access: this.access(d.name, subs, range) };
  }

  /** Builds a read access from written subscripts; the statement layer marks writes. */
  access(name: string, subs: Subscript[], range: Range): ArrayAccess {
    const access: ArrayAccess = {
      array: name,
      subscripts: subs.map((s) => (s.kind === 'index' ? this.env.symbolic(s.value) : undefined)),
      subscriptText: subs.map((s) => s.text),
      subscriptValues: subs.map((s) => (s.kind === 'index' ? s.value : { kind: 'opaque', text: s.text })),
      isWrite: false,
      isRead: true,
      range,
    };
    if (subs.some((s) => s.kind === 'triplet')) sections.set(access, subs);
    return access;
  }

  /** The comma-separated items between `open` and `close`; keyword names (`dim=1`) are dropped. */
  subscripts(open: number, close: number): Subscript[] {
    if (close === open + 1) return [];
    return splitTop(this.toks, open + 1, close, ',').map(([a, b]) => this.subscript(a, b));
  }

  private subscript(a: number, b: number): Subscript {
    const text = this.source(a, b).trim();
    let from = a;
    if (this.toks[a]?.t === 'id' && isOp(this.toks[a + 1], '=') && a + 1 < b) from = a + 2;
    const parts = splitTop(this.toks, from, b, ':');
    const part = ([x, y]: [number, number]): VExpr | undefined => (y > x ? this.sub(x, y) : undefined);
    if (parts.length === 1) return { kind: 'index', value: this.sub(from, b), text };
    return { kind: 'triplet', lo: part(parts[0]), hi: part(parts[1]), st: parts[2] ? part(parts[2]) : undefined, text };
  }

  /** Parses tokens [a, b) as one expression with a fresh parser that shares this one's depth budget. */
  private sub(a: number, b: number): VExpr {
    if (this.depth > MAX_DEPTH) throw new Fail();
    const p = new ExprParser(this.text, this.toks, this.env, a, b);
    p.depth = this.depth + 1;
    const v = p.parse();
    return p.i < b ? { kind: 'opaque', text: this.source(a, b) } : v;
  }
}

/** Parses tokens [from, to) as one whole expression; trailing tokens make it opaque. */
export function parseValue(text: Located, toks: readonly Tok[], env: ExprEnv, from: number, to: number): VExpr {
  if (from >= to) return { kind: 'opaque', text: '' };
  const p = new ExprParser(text, toks, env, from, to);
  const v = p.parse();
  if (p.position < to) return { kind: 'opaque', text: text.raw.slice(toks[from].s, toks[to - 1].e) };
  return v;
}
