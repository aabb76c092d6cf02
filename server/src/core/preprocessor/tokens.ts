/**
 * Preprocessing tokens (C11 §6.4.7 in spirit): identifiers, pp-numbers, string and character
 * literals, punctuators and white space. Whitespace is kept as a token so that expanded text
 * keeps the spacing the user wrote between tokens that were not replaced.
 */

export type TokenKind = 'id' | 'num' | 'str' | 'punct' | 'space';

export interface Token {
  kind: TokenKind;
  text: string;
}

const PUNCTUATORS = ['<<=', '>>=', '...', '##', '->', '++', '--', '<<', '>>', '<=', '>=', '==', '!=', '&&', '||', '+=', '-=', '*=', '/=', '%=', '&=', '|=', '^=', '::'];

export function tokenize(text: string): Token[] {
  const out: Token[] = [];
  let i = 0;
  while (i < text.length) {
    const c = text[i];
    if (/\s/.test(c)) {
      let j = i + 1;
      while (j < text.length && /\s/.test(text[j])) j++;
      out.push({ kind: 'space', text: text.slice(i, j) });
      i = j;
    } else if (/[A-Za-z_$]/.test(c)) {
      let j = i + 1;
      while (j < text.length && /[\w$]/.test(text[j])) j++;
      out.push({ kind: 'id', text: text.slice(i, j) });
      i = j;
    } else if (/\d/.test(c) || (c === '.' && /\d/.test(text[i + 1] ?? ''))) {
      // pp-number: digits, letters, dots, and signs after an exponent letter.
      let j = i + 1;
      while (j < text.length && (/[\w.]/.test(text[j]) || (/[+-]/.test(text[j]) && /[eEpP]/.test(text[j - 1])))) j++;
      out.push({ kind: 'num', text: text.slice(i, j) });
      i = j;
    } else if (c === '"' || c === "'") {
      let j = i + 1;
      while (j < text.length && text[j] !== c) j += text[j] === '\\' ? 2 : 1;
      out.push({ kind: 'str', text: text.slice(i, Math.min(j + 1, text.length)) });
      i = j + 1;
    } else {
      const p = PUNCTUATORS.find((q) => text.startsWith(q, i)) ?? c;
      out.push({ kind: 'punct', text: p });
      i += p.length;
    }
  }
  return out;
}

/** Removes C comments from one logical line, keeping string literals intact; a comment becomes one space. */
export function stripComments(text: string): string {
  let out = '';
  let i = 0;
  while (i < text.length) {
    const c = text[i];
    if (c === '"' || c === "'") {
      let j = i + 1;
      while (j < text.length && text[j] !== c) j += text[j] === '\\' ? 2 : 1;
      out += text.slice(i, j + 1);
      i = j + 1;
    } else if (c === '/' && text[i + 1] === '/') {
      break;
    } else if (c === '/' && text[i + 1] === '*') {
      const end = text.indexOf('*/', i + 2);
      out += ' ';
      i = end < 0 ? text.length : end + 2;
    } else {
      out += c;
      i++;
    }
  }
  return out;
}
