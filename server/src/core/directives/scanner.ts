/**
 * Small character-level helpers over the logical directive body.
 *
 * All of them work on a string plus offsets rather than on copies, so that every piece the
 * reader cuts out still knows where it sits in the body and therefore in the file.
 */

/** A half-open span [start, end) of the body. */
export interface Span {
  start: number;
  end: number;
}

export interface Word extends Span {
  text: string;
}

const OPEN: Record<string, string> = { '(': ')', '[': ']', '{': '}' };
const CLOSERS = new Set([')', ']', '}']);

export function isSpace(ch: string | undefined): boolean {
  return ch !== undefined && /\s/.test(ch);
}

export function skipSpace(s: string, i: number, end = s.length): number {
  while (i < end && isSpace(s[i])) i++;
  return i;
}

/** The identifier starting at `i`, if any. */
export function readWord(s: string, i: number): Word | undefined {
  const m = /^[A-Za-z_][A-Za-z0-9_]*/.exec(s.slice(i, i + 256));
  return m ? { text: m[0], start: i, end: i + m[0].length } : undefined;
}

/** The end of a quoted literal starting at `i` (just after the closing quote, or `end`). */
function skipQuote(s: string, i: number, end: number): number {
  const close = s.indexOf(s[i], i + 1);
  return close < 0 || close >= end ? end : close + 1;
}

export type GroupResult = { ok: true; close: number } | { ok: false; at: number };

/**
 * Finds the bracket that closes the one at `open`, honouring nesting of (), [] and {} and
 * skipping quoted text. A closer of the wrong kind, or running out of text, is reported with
 * the offset where the problem became visible.
 */
export function matchGroup(s: string, open: number, end = s.length): GroupResult {
  const stack: string[] = [OPEN[s[open]]];
  for (let i = open + 1; i < end; i++) {
    const ch = s[i];
    if (ch === '"' || ch === "'") {
      i = skipQuote(s, i, end) - 1;
    } else if (OPEN[ch]) {
      stack.push(OPEN[ch]);
    } else if (CLOSERS.has(ch)) {
      if (stack.pop() !== ch) return { ok: false, at: i };
      if (stack.length === 0) return { ok: true, close: i };
    }
  }
  return { ok: false, at: end };
}

/**
 * Calls `visit` for every character of s[from, to) that is outside any bracket pair or quote.
 * Unbalanced text is tolerated (the clause reader has reported it already), so depth never
 * drops below zero.
 */
function eachTopLevel(s: string, from: number, to: number, visit: (i: number) => boolean | void): void {
  let depth = 0;
  for (let i = from; i < to; i++) {
    const ch = s[i];
    if (ch === '"' || ch === "'") {
      i = skipQuote(s, i, to) - 1;
    } else if (OPEN[ch]) depth++;
    else if (CLOSERS.has(ch)) depth = Math.max(0, depth - 1);
    else if (depth === 0 && visit(i) === true) return;
  }
}

/** True for a `:` that is half of a C++ scope operator `::`, which never separates anything. */
function isScope(s: string, i: number, cxx: boolean): boolean {
  return cxx && (s[i + 1] === ':' || s[i - 1] === ':');
}

/**
 * Splits s[from, to) on top-level occurrences of `sep`; pieces are untrimmed. With `cxx` set,
 * the colons of a `::` are not separators.
 */
export function splitTop(s: string, from: number, to: number, sep: string, cxx = false): Span[] {
  const out: Span[] = [];
  let start = from;
  eachTopLevel(s, from, to, (i) => {
    if (s[i] === sep && !(sep === ':' && isScope(s, i, cxx))) {
      out.push({ start, end: i });
      start = i + 1;
    }
  });
  out.push({ start, end: to });
  return out;
}

/** The first top-level `:` of s[from, to) (with `cxx`, one that is not half of a `::`), or -1. */
export function findTopColon(s: string, from: number, to: number, cxx = false): number {
  let found = -1;
  eachTopLevel(s, from, to, (i) => {
    if (s[i] !== ':' || isScope(s, i, cxx)) return false;
    found = i;
    return true;
  });
  return found;
}

/** Narrows a span to exclude surrounding blanks. */
export function trimSpan(s: string, span: Span): Span {
  let { start, end } = span;
  while (start < end && isSpace(s[start])) start++;
  while (end > start && isSpace(s[end - 1])) end--;
  return { start, end };
}

/**
 * Splits a modifier list such as `always, close mapper(m) to` into words that may carry a
 * parenthesised argument; commas and blanks both separate, as OpenMP 5.2 allows either.
 */
export function modifierTokens(s: string, from: number, to: number): Word[] {
  const out: Word[] = [];
  let i = from;
  while (i < to) {
    while (i < to && (isSpace(s[i]) || s[i] === ',')) i++;
    if (i >= to) break;
    const start = i;
    while (i < to && !isSpace(s[i]) && s[i] !== ',' && s[i] !== '(') i++;
    if (s[i] === '(') {
      const g = matchGroup(s, i, to);
      i = g.ok ? g.close + 1 : to;
    }
    // A token that did not advance (a stray closer) is still consumed, so the loop always ends.
    if (i === start) i++;
    out.push({ text: s.slice(start, i), start, end: i });
  }
  return out;
}

/** Lower-cases Fortran text outside character literals, which keep their case. */
export function lowerOutsideQuotes(text: string): string {
  let out = '';
  let quote = '';
  for (const ch of text) {
    if (quote) {
      if (ch === quote) quote = '';
      out += ch;
    } else if (ch === '"' || ch === "'") {
      quote = ch;
      out += ch;
    } else out += ch.toLowerCase();
  }
  return out;
}
