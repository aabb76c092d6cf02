/**
 * Tokens of one Fortran statement. The lexer works on the lower-cased text of a logical line and
 * never fails: a character it does not know becomes a one-character operator token, which the
 * statement layer then treats as something it cannot read.
 */

export type TokKind = 'id' | 'int' | 'real' | 'str' | 'logical' | 'op';

export interface Tok {
  t: TokKind;
  /** Lower-cased text; for operators the normalised spelling (`.eq.` stays `.eq.`). */
  v: string;
  /** Offsets into the statement text, half-open. */
  s: number;
  e: number;
}

const OPS2 = ['**', '//', '==', '/=', '<=', '>=', '=>', '::', '(/', '/)'];
const DOT_OPS = new Set(['eq', 'ne', 'lt', 'le', 'gt', 'ge', 'and', 'or', 'not', 'eqv', 'neqv']);

// Character tests on the lower-cased text; comparisons rather than regular expressions, because
// the lexer sees every character of the file.
const isLetter = (ch: string | undefined): boolean => ch !== undefined && ch >= 'a' && ch <= 'z';
const isDigit = (ch: string | undefined): boolean => ch !== undefined && ch >= '0' && ch <= '9';
const isIdStart = (ch: string | undefined): boolean => isLetter(ch) || ch === '_';
const isIdChar = (ch: string | undefined): boolean => isIdStart(ch) || isDigit(ch) || ch === '$';
const isBlank = (ch: string): boolean => ch === ' ' || ch === '\t' || ch === '\r' || ch === '\n' || ch === '\f' || ch === '\v';

/** A dot-delimited word at `i` (`.eq.`, `.true.`, `.myop.`), as its inner letters, or undefined. */
function dotWord(src: string, i: number): string | undefined {
  if (src[i] !== '.') return undefined;
  let j = i + 1;
  while (j < src.length && isLetter(src[j])) j++;
  return j > i + 1 && src[j] === '.' ? src.slice(i + 1, j) : undefined;
}

/** Reads a numeric literal: integers, reals with `e`/`d`/`q` exponents, and `_kind` suffixes. */
function readNumber(src: string, i: number): { t: 'int' | 'real'; end: number } {
  let j = i;
  let real = false;
  while (isDigit(src[j])) j++;
  // `1.eq.2` is `1 .eq. 2`, not the real literal `1.` followed by `eq.2`.
  if (src[j] === '.' && dotWord(src, j) === undefined) {
    real = true;
    j++;
    while (isDigit(src[j])) j++;
  }
  if (/[edq]/.test(src[j] ?? '') && (isDigit(src[j + 1]) || (/[+-]/.test(src[j + 1] ?? '') && isDigit(src[j + 2])))) {
    real = true;
    j += /[+-]/.test(src[j + 1]) ? 2 : 1;
    while (isDigit(src[j])) j++;
  }
  if (src[j] === '_' && isIdChar(src[j + 1])) {
    j++;
    while (isIdChar(src[j])) j++;
  }
  return { t: real ? 'real' : 'int', end: j };
}

export function tokenize(src: string): Tok[] {
  const out: Tok[] = [];
  let i = 0;
  while (i < src.length) {
    const ch = src[i];
    if (isBlank(ch)) {
      i++;
      continue;
    }
    if (isIdStart(ch)) {
      let j = i + 1;
      while (isIdChar(src[j])) j++;
      // BOZ literals such as z'ff' are integers.
      if (/^[bozx]$/.test(src.slice(i, j)) && (src[j] === "'" || src[j] === '"')) {
        const close = src.indexOf(src[j], j + 1);
        const end = close < 0 ? src.length : close + 1;
        out.push({ t: 'int', v: src.slice(i, end), s: i, e: end });
        i = end;
        continue;
      }
      out.push({ t: 'id', v: src.slice(i, j), s: i, e: j });
      i = j;
      continue;
    }
    if (isDigit(ch) || (ch === '.' && isDigit(src[i + 1]))) {
      const n = readNumber(src, i);
      out.push({ t: n.t, v: src.slice(i, n.end), s: i, e: n.end });
      i = n.end;
      continue;
    }
    if (ch === "'" || ch === '"') {
      let j = i + 1;
      for (;;) {
        if (j >= src.length) break;
        if (src[j] === ch) {
          if (src[j + 1] === ch) {
            j += 2;
            continue;
          }
          j++;
          break;
        }
        j++;
      }
      out.push({ t: 'str', v: src.slice(i, j), s: i, e: j });
      i = j;
      continue;
    }
    const word = dotWord(src, i);
    if (word !== undefined) {
      let end = i + word.length + 2;
      if (word === 'true' || word === 'false') {
        if (src[end] === '_') while (isIdChar(src[end])) end++;
        out.push({ t: 'logical', v: src.slice(i, end), s: i, e: end });
      } else {
        out.push({ t: 'op', v: `.${word}.`, s: i, e: end });
      }
      i = end;
      continue;
    }
    const two = src.slice(i, i + 2);
    // `(/=` never opens an array constructor: it is a parenthesis followed by the `/=` operator.
    if (OPS2.includes(two) && !(two === '(/' && src[i + 2] === '=')) {
      out.push({ t: 'op', v: two, s: i, e: i + 2 });
      i += 2;
      continue;
    }
    out.push({ t: 'op', v: ch, s: i, e: i + 1 });
    i++;
  }
  return out;
}

export function isDotOperator(word: string): boolean {
  return DOT_OPS.has(word);
}
