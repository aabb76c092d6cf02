/** Small helpers over a statement's token list, shared by the statement and declaration readers. */
import type { Tok } from './lexer';

export const isOp = (t: Tok | undefined, v: string): boolean => t !== undefined && t.t === 'op' && t.v === v;
export const isId = (t: Tok | undefined, v?: string): boolean => t !== undefined && t.t === 'id' && (v === undefined || t.v === v);

/** Index of the token that closes the group opened at `open` (`(`, `(/` or `[`), or -1. */
export function closeOf(toks: readonly Tok[], open: number, limit = toks.length): number {
  let depth = 0;
  const end = Math.min(limit, toks.length);
  for (let i = open; i < end; i++) {
    const v = toks[i].t === 'op' ? toks[i].v : '';
    if (v === '(' || v === '(/' || v === '[') depth++;
    else if (v === ')' || v === '/)' || v === ']') {
      depth--;
      if (depth === 0) return i;
      if (depth < 0) return -1;
    }
  }
  return -1;
}

/** Splits tokens [from, to) at `sep` operators outside parentheses; returns half-open ranges. */
export function splitTop(toks: readonly Tok[], from: number, to: number, sep: string): [number, number][] {
  const out: [number, number][] = [];
  let depth = 0;
  let start = from;
  for (let i = from; i < Math.min(to, toks.length); i++) {
    const v = toks[i].t === 'op' ? toks[i].v : '';
    if (v === '(' || v === '(/' || v === '[') depth++;
    else if (v === ')' || v === '/)' || v === ']') depth = Math.max(0, depth - 1);
    else if (depth === 0 && v === sep) {
      out.push([start, i]);
      start = i + 1;
    }
  }
  out.push([start, Math.max(start, Math.min(to, toks.length))]);
  return out;
}

/** First index in [from, to) of operator `v` outside parentheses, or -1. */
export function findTop(toks: readonly Tok[], from: number, to: number, v: string): number {
  let depth = 0;
  for (let i = from; i < Math.min(to, toks.length); i++) {
    const w = toks[i].t === 'op' ? toks[i].v : '';
    if (w === '(' || w === '(/' || w === '[') depth++;
    else if (w === ')' || w === '/)' || w === ']') depth = Math.max(0, depth - 1);
    else if (depth === 0 && w === v) return i;
  }
  return -1;
}
