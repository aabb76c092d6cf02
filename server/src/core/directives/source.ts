/**
 * Turns the raw source slice of one directive into a single logical line.
 *
 * Everything after this step works on `body`, the directive text after the sentinel, in which
 * every continuation break is one space and comments are gone. Because findings must point at
 * the file, the body keeps, for every one of its characters, the file position it came from;
 * `range()` turns body offsets back into exact file ranges, also across continuation lines.
 */
import type { DirectiveFamily, Finding, Pos, Range, SourceLanguage } from '../types';

export interface LogicalDirective {
  family: DirectiveFamily;
  /** The sentinel as written on the first line, e.g. `#pragma acc`, `# pragma omp`, `!$acc`, `c$omp`. */
  head: string;
  /** Directive text after the sentinel, continuations joined by one space, comments removed. */
  body: string;
  /** File position of every body character, plus one final entry: the end of the directive. */
  pos: Pos[];
  /** File position of the first character of the sentinel. */
  start: Pos;
  /** Problems found while joining lines (a promised continuation line that is missing). */
  findings: Finding[];
}

const after = (p: Pos): Pos => ({ line: p.line, col: p.col + 1 });

/** The family named by a sentinel word, `acc` or `omp` in any case. */
const familyOf = (word: string): DirectiveFamily => (word.toLowerCase() === 'acc' ? 'openacc' : 'openmp');

/** The file range of body characters [from, to); an empty span is a point range. */
export function range(src: LogicalDirective, from: number, to: number): Range {
  const start = src.pos[Math.min(from, src.body.length)];
  if (to <= from) return { start, end: start };
  return { start, end: after(src.pos[Math.min(to, src.body.length) - 1]) };
}

/** Collects body characters with their file positions. */
class BodyBuilder {
  private chars: string[] = [];
  private where: Pos[] = [];
  constructor(private readonly headEnd: Pos) {}

  push(ch: string, p: Pos): void {
    this.chars.push(ch);
    this.where.push(p);
  }

  /** Position just after the last kept character, where a joining space is said to be. */
  lastEnd(): Pos {
    const n = this.where.length;
    return n === 0 ? this.headEnd : after(this.where[n - 1]);
  }

  trimEnd(): void {
    while (this.chars.length > 0 && /\s/.test(this.chars[this.chars.length - 1])) {
      this.chars.pop();
      this.where.pop();
    }
  }

  /** Replaces a continuation break by exactly one space, as the Directive.text contract says. */
  join(): void {
    this.trimEnd();
    this.push(' ', this.lastEnd());
  }

  finish(): { body: string; pos: Pos[] } {
    this.trimEnd();
    return { body: this.chars.join(''), pos: [...this.where, this.lastEnd()] };
  }
}

function splitLines(text: string): string[] {
  return text.split('\n').map((l) => (l.endsWith('\r') ? l.slice(0, -1) : l));
}

/** Maps (line index in the slice, column in that line) to a file position. */
function locator(origin: Pos) {
  return (li: number, ci: number): Pos => ({ line: origin.line + li, col: li === 0 ? origin.col + ci : ci });
}

const C_SENTINEL = /^(\s*)(#\s*pragma\s+(acc|omp))(?=\s|\\|\/\*|\/\/|$)/;
const F_FREE = /^(\s*)(!\$(acc|omp))(?=[\s&]|$)/i;
const F_FIXED = /^([cC*!]\$(acc|omp))/i;

/** Reads a C or C++ pragma: backslash splices, block and line comments, string literals. */
function readC(text: string, origin: Pos): LogicalDirective | undefined {
  const lines = splitLines(text);
  const m = C_SENTINEL.exec(lines[0]);
  if (!m) return undefined;
  const at = locator(origin);
  const headStart = m[1].length;
  const headEndCol = headStart + m[2].length;
  const b = new BodyBuilder(at(0, headEndCol));
  let inBlock = false;
  let inLine = false;
  let li = 0;
  let ci = headEndCol;
  for (;;) {
    const line = lines[li];
    const trimmed = line.replace(/\s+$/, '');
    const spliced = trimmed.endsWith('\\');
    const limit = spliced ? trimmed.length - 1 : line.length;
    while (ci < limit && !inLine) {
      if (inBlock) {
        const close = line.indexOf('*/', ci);
        inBlock = close < 0 || close + 2 > limit;
        ci = inBlock ? limit : close + 2;
        continue;
      }
      const ch = line[ci];
      if (line.startsWith('/*', ci)) {
        // A comment is one space in the C translation phases; keep that, so `a/**/b` stays two words.
        b.push(' ', at(li, ci));
        inBlock = true;
        ci += 2;
      } else if (line.startsWith('//', ci)) {
        inLine = true;
      } else if (ch === '"' || ch === "'") {
        const close = line.indexOf(ch, ci + 1);
        const end = close < 0 || close >= limit ? limit : close + 1;
        for (; ci < end; ci++) b.push(line[ci], at(li, ci));
      } else {
        b.push(ch, at(li, ci));
        ci++;
      }
    }
    // A line comment ends at the first newline that is not spliced away, and so does the pragma;
    // a block comment may span lines without any splice, because it is removed before lines matter.
    if (!spliced) inLine = false;
    if ((!spliced && !inBlock) || li + 1 >= lines.length) break;
    const joins = spliced && !inBlock && !inLine;
    if (joins) b.join();
    li++;
    ci = 0;
    // Leading blanks of the next line belong to the single joining space.
    if (joins) while (ci < lines[li].length && /\s/.test(lines[li][ci])) ci++;
  }
  return { family: familyOf(m[3]), head: m[2], ...b.finish(), start: at(0, headStart), findings: [] };
}

/** The column at which a Fortran comment (`!` outside a character literal) starts, or the line length. */
function fortranCodeEnd(line: string, from: number): number {
  let quote = '';
  for (let i = from; i < line.length; i++) {
    const ch = line[i];
    if (quote) {
      if (ch === quote) quote = '';
    } else if (ch === "'" || ch === '"') quote = ch;
    else if (ch === '!') return i;
  }
  return line.length;
}

/** The family and end column of a Fortran sentinel that starts a free-form or fixed-form line. */
function sentinelOf(line: string): { family: DirectiveFamily; end: number } | undefined {
  const free = F_FREE.exec(line);
  if (free) return { family: familyOf(free[3]), end: free[0].length };
  const fixed = F_FIXED.exec(line);
  return fixed ? { family: familyOf(fixed[2]), end: fixed[0].length } : undefined;
}

/**
 * Reads a Fortran directive. Free form continues a line that ends with `&`; the next line then
 * starts with the sentinel and an optional `&`. Fixed form continues onto a line whose sentinel
 * is in column 1 and whose column 6 is neither blank nor zero. Both are accepted for every
 * directive, because the reader is not told the source form and the two rules cannot clash:
 * a free form line ending in `&` is checked first.
 */
function readFortran(text: string, origin: Pos): LogicalDirective | undefined {
  const lines = splitLines(text);
  const first = lines[0];
  const free = F_FREE.exec(first);
  const fixed = free ? undefined : F_FIXED.exec(first);
  if (!free && !fixed) return undefined;
  const lead = free ? free[1].length : 0;
  const head = free ? free[2] : fixed![1];
  const family = familyOf(free ? free[3] : fixed![2]);
  let ci = lead + head.length;
  // An initial line has a blank (or, in fixed form, a zero) right after the sentinel.
  const sixth = first[ci];
  if (fixed && sixth !== undefined && !/[\s0]/.test(sixth)) return undefined;
  if (sixth === '0') ci++;
  const at = locator(origin);
  const b = new BodyBuilder(at(0, lead + head.length));
  const findings: Finding[] = [];
  for (let li = 0; li < lines.length; li++) {
    const line = lines[li];
    const codeEnd = fortranCodeEnd(line, ci);
    let end = line.slice(0, codeEnd).replace(/\s+$/, '').length;
    const amp = end > ci && line[end - 1] === '&';
    if (amp) end--;
    for (let i = ci; i < end; i++) b.push(line[i], at(li, i));
    const next = lines[li + 1];
    if (amp) {
      const m = next === undefined ? undefined : sentinelOf(next);
      if (!m || m.family !== family) {
        findings.push({
          code: 'directive-syntax',
          severity: 'error',
          range: { start: at(li, end), end: at(li, end + 1) },
          message: `the line ends with '&' but the next line is not a continuation line of the same directive`,
        });
        break;
      }
      ci = m.end;
      while (ci < next.length && /\s/.test(next[ci])) ci++;
      if (next[ci] === '&') ci++;
    } else {
      const m = next === undefined ? null : F_FIXED.exec(next);
      if (!m || familyOf(m[2]) !== family || next.length <= 5 || /[\s0]/.test(next[5])) break;
      ci = 6;
    }
    b.join();
    while (ci < lines[li + 1].length && /\s/.test(lines[li + 1][ci])) ci++;
  }
  return { family, head, ...b.finish(), start: at(0, lead), findings };
}

/** Reads the sentinel and continuation structure; undefined when `text` is not a directive. */
export function readLogical(text: string, origin: Pos, language: SourceLanguage): LogicalDirective | undefined {
  return language === 'fortran' ? readFortran(text, origin) : readC(text, origin);
}

/**
 * True when a single source line is an OpenACC or OpenMP directive line. Fixed-form `c$acc` and
 * `*$acc` must start in column 1; a `!$acc` sentinel must be followed by a blank or `&`, so a
 * fixed-form `!$acc` continuation with another mark in column 6 is recognised by readDirective only.
 */
export function isDirectiveStart(lineText: string, language: SourceLanguage): DirectiveFamily | undefined {
  if (language !== 'fortran') {
    const m = C_SENTINEL.exec(lineText);
    return m ? familyOf(m[3]) : undefined;
  }
  const free = F_FREE.exec(lineText);
  if (free) return familyOf(free[3]);
  const fixed = /^[cC*]\$(acc|omp)/i.exec(lineText);
  return fixed ? familyOf(fixed[1]) : undefined;
}

/**
 * True when a directive line goes on onto the next line: a C line ending in a backslash, or a
 * free-form Fortran line whose code (before any `!` comment) ends in `&`. Front ends use it to
 * find the extent of the slice they hand to readDirective.
 */
export function continuesOnNextLine(lineText: string, language: SourceLanguage): boolean {
  if (language !== 'fortran') return /\\\s*$/.test(lineText);
  const start = lineText.search(/\$(acc|omp)/i);
  const code = lineText.slice(0, fortranCodeEnd(lineText, start < 0 ? 0 : start + 4)).replace(/\s+$/, '');
  return code.endsWith('&');
}
