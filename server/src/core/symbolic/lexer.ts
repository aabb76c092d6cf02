/**
 * Tokeniser for the integer-expression subset of C and Fortran that array bounds, loop limits
 * and directive sections use. It returns undefined for anything outside that subset (floating
 * literals, strings, assignments), which makes the whole parse fail cleanly.
 */

export type Lang = 'c' | 'fortran';

export type Tok =
  | { t: 'num'; v: bigint; s: number; e: number }
  | { t: 'id'; v: string; s: number; e: number }
  | { t: 'op'; v: string; s: number; e: number };

const C_OPS2 = ['<<', '>>', '<=', '>='];
const C_OPS1 = '+-*/%(),?:<>[]';
const F_OPS1 = '+-*/(),';

const isSpace = (ch: string) => ch === ' ' || ch === '\t' || ch === '\n' || ch === '\r';
const isIdStart = (ch: string | undefined) => ch !== undefined && /[A-Za-z_]/.test(ch);
const isIdChar = (ch: string | undefined) => ch !== undefined && /[A-Za-z0-9_$]/.test(ch);

function skipSpace(src: string, i: number): number {
  while (i < src.length && isSpace(src[i])) i++;
  return i;
}

function readWord(src: string, i: number): number {
  while (isIdChar(src[i])) i++;
  return i;
}

/**
 * Reads an identifier including member access, which counts as one symbol: C `a.b` and `a->b`,
 * Fortran `a%b`. White space around the member operator is dropped from the name.
 */
function readName(src: string, start: number, lang: Lang): { name: string; end: number } {
  let end = readWord(src, start);
  let name = src.slice(start, end);
  for (;;) {
    const j = skipSpace(src, end);
    const op = lang === 'c' ? (src.startsWith('->', j) ? '->' : src[j] === '.' ? '.' : '') : src[j] === '%' ? '%' : '';
    if (!op) break;
    const k = skipSpace(src, j + op.length);
    if (!isIdStart(src[k])) break;
    end = readWord(src, k);
    name += op + src.slice(k, end);
  }
  return { name, end };
}

/** C integer literals: decimal, octal (leading 0), hex, binary, with u/l suffixes. */
function readCNumber(src: string, i: number): { v: bigint; end: number } | undefined {
  const m = /^(0[xX][0-9a-fA-F]+|0[bB][01]+|[0-9]+)([uUlL]{0,3})/.exec(src.slice(i, i + 200));
  if (!m) return undefined;
  const end = i + m[0].length;
  if (isIdChar(src[end]) || src[end] === '.') return undefined;
  if (!/^(|[uU]|[uU]?(l|L|ll|LL)|(l|L|ll|LL)[uU])$/.test(m[2])) return undefined;
  const body = m[1];
  if (/^0[0-9]/.test(body)) return /^0[0-7]+$/.test(body) ? { v: BigInt(`0o${body.slice(1)}`), end } : undefined;
  return { v: BigInt(body), end };
}

/** Fortran integer literals with an optional kind: `10`, `10_8`, `10_int64`. */
function readFNumber(src: string, i: number): { v: bigint; end: number } | undefined {
  const m = /^([0-9]+)(_([0-9]+|[A-Za-z][A-Za-z0-9_]*))?/.exec(src.slice(i, i + 200));
  if (!m) return undefined;
  const end = i + m[0].length;
  if (isIdChar(src[end]) || src[end] === '.') return undefined;
  return { v: BigInt(m[1]), end };
}

export function tokenize(src: string, lang: Lang): Tok[] | undefined {
  const out: Tok[] = [];
  let i = skipSpace(src, 0);
  while (i < src.length) {
    const ch = src[i];
    if (isIdStart(ch)) {
      const { name, end } = readName(src, i, lang);
      out.push({ t: 'id', v: name, s: i, e: end });
      i = end;
    } else if (ch >= '0' && ch <= '9') {
      const n = lang === 'c' ? readCNumber(src, i) : readFNumber(src, i);
      if (!n) return undefined;
      out.push({ t: 'num', v: n.v, s: i, e: n.end });
      i = n.end;
    } else {
      const two = src.slice(i, i + 2);
      const op =
        lang === 'c'
          ? C_OPS2.includes(two)
            ? two
            : C_OPS1.includes(ch)
              ? ch
              : ''
          : two === '**'
            ? two
            : F_OPS1.includes(ch)
              ? ch
              : '';
      // '//' is Fortran concatenation, not two divisions.
      if (!op || (lang === 'fortran' && two === '//')) return undefined;
      out.push({ t: 'op', v: op, s: i, e: i + op.length });
      i += op.length;
    }
    i = skipSpace(src, i);
  }
  return out;
}
