/**
 * Text that remembers where each of its characters came from. A Fortran statement may be split
 * over several lines by continuation marks, yet every finding and every model range must point
 * at the file, so each logical statement keeps one file position per character.
 */
import type { Pos, Range } from '../../../types';

export interface Located {
  /** The statement as written, continuation marks and comments removed. */
  raw: string;
  /** The same text lower-cased outside character literals (Fortran is case-insensitive). */
  low: string;
  /** File position of every character, plus one final entry just past the last character. */
  pos: Pos[];
}

const after = (p: Pos): Pos => ({ line: p.line, col: p.col + 1 });

/** The file range of characters [from, to); an empty span is a point range at `from`. */
export function rangeIn(t: Located, from: number, to: number): Range {
  const n = t.raw.length;
  const a = Math.max(0, Math.min(from, n));
  const start = t.pos[a];
  if (to <= from || a >= n) return { start, end: start };
  return { start, end: after(t.pos[Math.min(to, n) - 1]) };
}

/** Lower-cases everything outside character literals; the length never changes. */
export function lowerOutsideStrings(raw: string): string {
  let out = '';
  let quote = '';
  for (const ch of raw) {
    if (quote) {
      if (ch === quote) quote = '';
      out += ch;
    } else {
      if (ch === "'" || ch === '"') quote = ch;
      out += ch.toLowerCase().length === 1 ? ch.toLowerCase() : ch;
    }
  }
  return out;
}

/** Collects characters with their positions while a logical statement is assembled. */
export class LocatedBuilder {
  private chars: string[] = [];
  private where: Pos[] = [];

  push(ch: string, p: Pos): void {
    this.chars.push(ch);
    this.where.push(p);
  }

  get length(): number {
    return this.chars.length;
  }

  /** Splits the collected text at `;` outside character literals and trims every piece. */
  finish(): Located[] {
    const raw = this.chars.join('');
    const pieces: Located[] = [];
    let quote = '';
    let from = 0;
    const cut = (to: number): void => {
      let a = from;
      let b = to;
      while (a < b && /\s/.test(raw[a])) a++;
      while (b > a && /\s/.test(raw[b - 1])) b--;
      if (b > a) pieces.push(this.slice(raw, a, b));
    };
    for (let i = 0; i < raw.length; i++) {
      const ch = raw[i];
      if (quote) {
        if (ch === quote) quote = '';
      } else if (ch === "'" || ch === '"') quote = ch;
      else if (ch === ';') {
        cut(i);
        from = i + 1;
      }
    }
    cut(raw.length);
    return pieces;
  }

  private slice(raw: string, a: number, b: number): Located {
    const text = raw.slice(a, b);
    const pos = this.where.slice(a, b);
    pos.push(after(this.where[b - 1]));
    return { raw: text, low: lowerOutsideStrings(text), pos };
  }
}

/** A sub-range of a located text as a located text of its own. */
export function subLocated(t: Located, from: number, to: number): Located {
  const pos = t.pos.slice(from, to);
  pos.push(to > from ? after(t.pos[to - 1]) : t.pos[from]);
  return { raw: t.raw.slice(from, to), low: t.low.slice(from, to), pos };
}
