/**
 * Text that remembers where each of its characters came from. A Fortran statement may be split
 * over several lines by continuation marks, yet every finding and every model range must point
 * at the file, so each logical statement keeps one file position per character. Positions are
 * kept as two plain number arrays rather than one object per character, because a large file
 * has millions of characters and the objects would mostly be garbage.
 */
import type { Pos, Range } from '../../../types';

export interface Located {
  /** The statement as written, continuation marks and comments removed. */
  raw: string;
  /** The same text lower-cased outside character literals (Fortran is case-insensitive). */
  low: string;
  /** File line and column of every character, plus one final entry just past the last one. */
  lines: number[];
  cols: number[];
}

const posAt = (t: Located, i: number): Pos => ({ line: t.lines[i], col: t.cols[i] });

/** The file range of characters [from, to); an empty span is a point range at `from`. */
export function rangeIn(t: Located, from: number, to: number): Range {
  const n = t.raw.length;
  const a = Math.max(0, Math.min(from, n));
  const start = posAt(t, a);
  if (to <= from || a >= n) return { start, end: { ...start } };
  const last = Math.min(to, n) - 1;
  return { start, end: { line: t.lines[last], col: t.cols[last] + 1 } };
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
      const lower = ch.toLowerCase();
      out += lower.length === ch.length ? lower : ch;
    }
  }
  return out;
}

/** A located text whose every character sits at one position (for text made by the reader). */
export function locatedAt(raw: string, at: Pos): Located {
  const n = raw.length + 1;
  return { raw, low: lowerOutsideStrings(raw), lines: new Array<number>(n).fill(at.line), cols: new Array<number>(n).fill(at.col) };
}

/** Collects runs of characters with their positions while a logical statement is assembled. */
export class LocatedBuilder {
  /** Each run is characters [from, to) of one physical line. */
  private runs: { text: string; line: number; from: number; to: number }[] = [];

  /** Pushes characters [from, to) of one physical line. */
  pushLine(text: string, line: number, from: number, to: number): void {
    if (to > from) this.runs.push({ text, line, from, to });
  }

  private joined(): { raw: string; lines: number[]; cols: number[] } {
    const lines: number[] = [];
    const cols: number[] = [];
    let raw = '';
    for (const r of this.runs) {
      raw += r.text.slice(r.from, r.to);
      for (let k = r.from; k < r.to; k++) {
        lines.push(r.line);
        cols.push(k);
      }
    }
    return { raw, lines, cols };
  }

  /** Splits the collected text at `;` outside character literals and trims every piece. */
  finish(): Located[] {
    const { raw, lines, cols } = this.joined();
    const pieces: Located[] = [];
    let quote = '';
    let from = 0;
    const cut = (to: number): void => {
      let a = from;
      let b = to;
      while (a < b && /\s/.test(raw[a])) a++;
      while (b > a && /\s/.test(raw[b - 1])) b--;
      if (b > a) pieces.push(slice(raw, lines, cols, a, b));
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

}

function slice(raw: string, lines: number[], cols: number[], a: number, b: number): Located {
  const text = raw.slice(a, b);
  const ls = lines.slice(a, b);
  const cs = cols.slice(a, b);
  ls.push(lines[b - 1]);
  cs.push(cols[b - 1] + 1);
  return { raw: text, low: lowerOutsideStrings(text), lines: ls, cols: cs };
}

/** A sub-range of a located text as a located text of its own. */
export function subLocated(t: Located, from: number, to: number): Located {
  const lines = t.lines.slice(from, to);
  const cols = t.cols.slice(from, to);
  if (to > from) {
    lines.push(t.lines[to - 1]);
    cols.push(t.cols[to - 1] + 1);
  } else {
    lines.push(t.lines[from]);
    cols.push(t.cols[from]);
  }
  return { raw: t.raw.slice(from, to), low: t.low.slice(from, to), lines, cols };
}
