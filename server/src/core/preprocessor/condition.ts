/**
 * Evaluates the controlling expression of `#if`/`#elif` (C11 §6.10.1): `defined NAME` and
 * `defined(NAME)` first, then macro expansion, then integer arithmetic with the C operators and
 * their precedence. The standard replaces identifiers left after expansion by 0; this tool does
 * that only for reserved names (`__GNUC__`, `_WIN32`: the compiler's own), because a user macro
 * without a value usually comes from a `-D` flag the tool has not been given. Such a condition
 * is reported as unknown, with the names, and the caller analyses its first branch.
 */
import { type MacroDef, expandText } from './macros';
import { type Token, tokenize } from './tokens';

export type ConditionValue = { known: true; value: boolean } | { known: false; unknown: string[] };

export function evaluateCondition(text: string, macros: ReadonlyMap<string, MacroDef>, cplusplus: boolean): ConditionValue {
  const withDefined = replaceDefined(text, macros);
  const expanded = expandText(withDefined, macros).text;
  const tokens = tokenize(expanded).filter((t) => t.kind !== 'space');
  const p = new Parser(tokens, cplusplus);
  let v: Value | undefined;
  try {
    v = p.expression();
    if (p.pos < tokens.length) v = undefined;
  } catch {
    v = undefined;
  }
  if (v === undefined) return { known: false, unknown: [] };
  if (v.unknown.length > 0) return { known: false, unknown: [...new Set(v.unknown)] };
  return { known: true, value: v.v !== 0n };
}

/**
 * A value with the names of valueless macros it depends on. `&&`, `||` and `?:` drop the names
 * of an operand they do not evaluate, so `defined(X) && X > 1` is known false when X is undefined.
 */
interface Value {
  v: bigint;
  unknown: string[];
}

const known = (v: bigint): Value => ({ v, unknown: [] });

/** The identifiers a condition tests, in order, without `defined` (for messages that name the switch). */
export function conditionNames(text: string): string[] {
  return [...new Set(tokenize(text).filter((t) => t.kind === 'id' && t.text !== 'defined').map((t) => t.text))];
}

function replaceDefined(text: string, macros: ReadonlyMap<string, MacroDef>): string {
  return text.replace(/\bdefined\s*(\(\s*([A-Za-z_]\w*)\s*\)|([A-Za-z_]\w*))/g, (_m, _g, a: string | undefined, b: string | undefined) => (macros.has(a ?? b ?? '') ? ' 1 ' : ' 0 '));
}

const BINARY: { ops: string[] }[] = [
  { ops: ['||'] },
  { ops: ['&&'] },
  { ops: ['|'] },
  { ops: ['^'] },
  { ops: ['&'] },
  { ops: ['==', '!='] },
  { ops: ['<', '<=', '>', '>='] },
  { ops: ['<<', '>>'] },
  { ops: ['+', '-'] },
  { ops: ['*', '/', '%'] },
];

class Parser {
  pos = 0;
  constructor(private readonly tokens: Token[], private readonly cplusplus: boolean) {}

  expression(): Value {
    const test = this.binary(0);
    if (this.peek() !== '?') return test;
    this.pos++;
    const a = this.expression();
    this.expect(':');
    const b = this.expression();
    const chosen = test.v !== 0n ? a : b;
    return { v: chosen.v, unknown: [...test.unknown, ...chosen.unknown] };
  }

  private binary(level: number): Value {
    if (level >= BINARY.length) return this.unary();
    let left = this.binary(level + 1);
    while (BINARY[level].ops.includes(this.peek() ?? '')) {
      const op = this.tokens[this.pos++].text;
      const right = this.binary(level + 1);
      const v = apply(op, left.v, right.v);
      // A known left operand that decides `&&`/`||` makes the right one irrelevant.
      const decided = left.unknown.length === 0 && ((op === '&&' && left.v === 0n) || (op === '||' && left.v !== 0n));
      left = { v, unknown: decided ? [] : [...left.unknown, ...right.unknown] };
    }
    return left;
  }

  private unary(): Value {
    const t = this.peek();
    if (t === '!' || t === '-' || t === '+' || t === '~') {
      this.pos++;
      const x = this.unary();
      const v = x.v;
      return { v: t === '!' ? (v === 0n ? 1n : 0n) : t === '-' ? -v : t === '~' ? ~v : v, unknown: x.unknown };
    }
    return this.primary();
  }

  private primary(): Value {
    const t = this.tokens[this.pos++];
    if (!t) throw new Error('unexpected end');
    if (t.text === '(') {
      const v = this.expression();
      this.expect(')');
      return v;
    }
    if (t.kind === 'num') return known(integerLiteral(t.text));
    if (t.kind === 'str' && t.text.startsWith("'")) return known(BigInt(charValue(t.text)));
    if (t.kind === 'id') {
      if (this.cplusplus && (t.text === 'true' || t.text === 'false')) return known(t.text === 'true' ? 1n : 0n);
      // A function-like macro call left unexpanded (unknown macro): skip its argument list.
      if (this.peek() === '(') this.skipGroup();
      if (/^(__|_[A-Z])/.test(t.text)) return known(0n);
      return { v: 0n, unknown: [t.text] };
    }
    throw new Error(`unexpected ${t.text}`);
  }

  private skipGroup(): void {
    let level = 0;
    while (this.pos < this.tokens.length) {
      const x = this.tokens[this.pos++].text;
      if (x === '(') level++;
      else if (x === ')' && --level === 0) return;
    }
  }

  private peek(): string | undefined {
    return this.tokens[this.pos]?.text;
  }

  private expect(s: string): void {
    if (this.peek() !== s) throw new Error(`expected ${s}`);
    this.pos++;
  }
}

function apply(op: string, a: bigint, b: bigint): bigint {
  switch (op) {
    case '||': return a !== 0n || b !== 0n ? 1n : 0n;
    case '&&': return a !== 0n && b !== 0n ? 1n : 0n;
    case '|': return a | b;
    case '^': return a ^ b;
    case '&': return a & b;
    case '==': return a === b ? 1n : 0n;
    case '!=': return a !== b ? 1n : 0n;
    case '<': return a < b ? 1n : 0n;
    case '<=': return a <= b ? 1n : 0n;
    case '>': return a > b ? 1n : 0n;
    case '>=': return a >= b ? 1n : 0n;
    case '<<': return a << b;
    case '>>': return a >> b;
    case '+': return a + b;
    case '-': return a - b;
    case '*': return a * b;
    case '/':
    case '%':
      if (b === 0n) throw new Error('division by zero');
      return op === '/' ? a / b : a % b;
    default: throw new Error(op);
  }
}

/** An integer constant with its base and suffixes (`0x1F`, `017`, `0b101`, `202211L`, `10u`). */
export function integerLiteral(text: string): bigint {
  const t = text.replace(/(ll|LL|l|L|u|U|z|Z)+$/, '').replace(/'/g, '');
  if (/^0[xX][0-9a-fA-F]+$/.test(t) || /^0[bB][01]+$/.test(t)) return BigInt(t);
  if (/^0[0-7]+$/.test(t)) return BigInt(`0o${t.slice(1)}`);
  if (/^\d+$/.test(t)) return BigInt(t);
  throw new Error(`not an integer constant: ${text}`);
}

function charValue(lit: string): number {
  const body = lit.slice(1, -1);
  if (body.startsWith('\\')) {
    const esc: Record<string, number> = { n: 10, t: 9, r: 13, '0': 0, '\\': 92, "'": 39, '"': 34 };
    return esc[body[1]] ?? body.charCodeAt(1);
  }
  return body.charCodeAt(0) || 0;
}
