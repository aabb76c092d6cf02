/**
 * Finds the OpenACC and OpenMP directives of a file as the translator needs them: each one's
 * physical lines, the text around its words (indentation, `#pragma` spelling, Fortran sentinel and
 * continuation marks) and its words joined across continuation lines. Pure text work: the
 * translator rewrites only these lines and never needs a syntax tree.
 */

export type Language = 'c' | 'cpp' | 'fortran';
export type Model = 'acc' | 'omp';

/** One physical line of a directive, split into its decoration and the directive words on it. */
export interface Segment {
  line: number;
  /** Text before the words: `#pragma acc `, leading blanks of a C continuation line, `!$acc& `. */
  lead: string;
  /** The words on this line (no continuation mark, no trailing comment). */
  words: string;
  /** A trailing Fortran comment (`! why`) or C comment kept after the words, with its blank. */
  tail: string;
}

export interface Directive {
  model: Model;
  form: 'pragma' | 'free' | 'fixed';
  startLine: number;
  endLine: number;
  segments: Segment[];
  /** The directive's words joined across its lines, single spaced at the joins. */
  body: string;
  /** Leading blanks of the first line (notes are indented the same). */
  indent: string;
}

/** A `_Pragma("acc …")` operator inside a line: only its string is rewritten. */
export interface PragmaOperator {
  model: Model;
  line: number;
  /** Character offsets of the string's contents (between the quotes). */
  start: number;
  end: number;
  body: string;
}

const C_PRAGMA = /^(\s*#\s*pragma\s+)(acc|omp)(\b.*)$/;

/** Splits text into lines without their line ends; a final empty line after a newline is kept. */
export function splitLines(text: string): { lines: string[]; eol: string } {
  const eol = /\r\n/.test(text) ? '\r\n' : '\n';
  return { lines: text.split(/\r?\n/), eol };
}

/** Removes a trailing C `//` or `/* … *\/` comment that is outside parentheses and strings. */
function splitCComment(s: string): { words: string; tail: string } {
  let depth = 0;
  for (let i = 0; i < s.length; i++) {
    const ch = s[i];
    if (ch === '"' || ch === "'") {
      const q = ch;
      for (i++; i < s.length && s[i] !== q; i++) if (s[i] === '\\') i++;
    } else if (ch === '(') depth++;
    else if (ch === ')') depth--;
    else if (depth === 0 && ch === '/' && (s[i + 1] === '/' || s[i + 1] === '*')) {
      const w = s.slice(0, i);
      const words = w.replace(/\s+$/, '');
      return { words, tail: w.slice(words.length) + s.slice(i) };
    }
  }
  return { words: s, tail: '' };
}

/** Removes a trailing Fortran `!` comment outside strings. */
function splitFortranComment(s: string): { words: string; tail: string } {
  for (let i = 0; i < s.length; i++) {
    const ch = s[i];
    if (ch === '"' || ch === "'") {
      const q = ch;
      for (i++; i < s.length && s[i] !== q; i++);
    } else if (ch === '!') {
      const w = s.slice(0, i);
      const words = w.replace(/\s+$/, '');
      return { words, tail: w.slice(words.length) + s.slice(i) };
    }
  }
  return { words: s, tail: '' };
}

/** The C/C++ `#pragma acc|omp` directives, with `\` continuation lines. */
function cDirectives(lines: string[], comments: boolean[]): Directive[] {
  const out: Directive[] = [];
  for (let i = 0; i < lines.length; i++) {
    if (comments[i]) continue;
    const m = C_PRAGMA.exec(lines[i]);
    if (!m) continue;
    // A pragma continued from a previous `\` line is part of something else (a macro): skip.
    if (i > 0 && /\\\s*$/.test(lines[i - 1])) continue;
    const segments: Segment[] = [];
    let line = i;
    let lead = m[1] + m[2];
    let rest = m[3];
    for (;;) {
      const cont = /\\\s*$/.test(rest);
      const content = cont ? rest.replace(/\\\s*$/, '') : rest;
      const sp = /^\s*/.exec(content)![0];
      const { words, tail } = splitCComment(content.slice(sp.length));
      segments.push({ line, lead: lead + sp, words: words.replace(/\s+$/, ''), tail: tail.replace(/\s+$/, '') });
      if (!cont || line + 1 >= lines.length) break;
      line++;
      const l = lines[line];
      const ws = /^\s*/.exec(l)![0];
      lead = ws;
      rest = l.slice(ws.length);
      if (rest === '') rest = ' ';
    }
    out.push({
      model: m[2] as Model, form: 'pragma', startLine: i, endLine: line, segments,
      body: segments.map((s) => s.words).filter((w) => w !== '').join(' '), indent: /^\s*/.exec(lines[i])![0],
    });
    i = line;
  }
  return out;
}

const FREE_SENTINEL = /^(\s*)!\$(acc|omp)(\s.*|&.*|)$/i;
const FIXED_SENTINEL = /^([!cC*])\$(acc|omp)(.?)(.*)$/i;

/** Fortran directives: free form (`!$acc … &` / `!$acc& …`) or fixed form (`!$acc` … `!$acc&`). */
function fortranDirectives(lines: string[], fixed: boolean): Directive[] {
  const out: Directive[] = [];
  for (let i = 0; i < lines.length; i++) {
    if (fixed) {
      const m = FIXED_SENTINEL.exec(lines[i]);
      if (!m) continue;
      // Column 6 blank or zero starts a directive; anything else continues one.
      if (m[3] !== '' && m[3] !== ' ' && m[3] !== '0') continue;
      const model = m[2].toLowerCase() as Model;
      const segments: Segment[] = [];
      let line = i;
      for (;;) {
        const mm = FIXED_SENTINEL.exec(lines[line])!;
        const after = (mm[4] ?? '').length > 66 ? (mm[4] ?? '').slice(0, 66) : (mm[4] ?? '');
        const sp = /^\s*/.exec(after)![0];
        const { words, tail } = splitFortranComment(after.slice(sp.length));
        segments.push({ line, lead: mm[1] + '$' + mm[2] + mm[3] + sp, words: words.replace(/\s+$/, ''), tail });
        const next = line + 1 < lines.length ? FIXED_SENTINEL.exec(lines[line + 1]) : null;
        if (!next || next[2].toLowerCase() !== model || next[3] === '' || next[3] === ' ' || next[3] === '0') break;
        line++;
      }
      out.push({ model, form: 'fixed', startLine: i, endLine: line, segments, body: segments.map((s) => s.words).filter(Boolean).join(' '), indent: '' });
      i = line;
      continue;
    }
    const m = FREE_SENTINEL.exec(lines[i]);
    if (!m) continue;
    const model = m[2].toLowerCase() as Model;
    const segments: Segment[] = [];
    let line = i;
    let text = lines[i];
    for (;;) {
      const mm = /^(\s*!\$(?:acc|omp)(?:\s*&)?\s*)(.*)$/i.exec(text)!;
      let { words, tail } = splitFortranComment(mm[2]);
      words = words.replace(/\s+$/, '');
      const cont = /&$/.test(words);
      if (cont) words = words.replace(/\s*&$/, '');
      segments.push({ line, lead: mm[1], words, tail });
      if (!cont || line + 1 >= lines.length) break;
      const next = FREE_SENTINEL.exec(lines[line + 1]);
      if (!next || next[2].toLowerCase() !== model) break;
      line++;
      text = lines[line];
    }
    out.push({ model, form: 'free', startLine: i, endLine: line, segments, body: segments.map((s) => s.words).filter(Boolean).join(' '), indent: m[1] });
    i = line;
  }
  return out;
}

/** Marks the lines a C block comment covers entirely or starts in (directives there are text). */
export function cCommentLines(lines: string[]): boolean[] {
  const inside: boolean[] = [];
  let open = false;
  for (const l of lines) {
    inside.push(open);
    // Track the state at the end of the line.
    let i = 0;
    while (i < l.length) {
      if (open) {
        const e = l.indexOf('*/', i);
        if (e < 0) { i = l.length; break; }
        open = false;
        i = e + 2;
      } else {
        const ch = l[i];
        if (ch === '"' || ch === "'") {
          const q = ch;
          for (i++; i < l.length && l[i] !== q; i++) if (l[i] === '\\') i++;
          i++;
        } else if (ch === '/' && l[i + 1] === '/') break;
        else if (ch === '/' && l[i + 1] === '*') { open = true; i += 2; }
        else i++;
      }
    }
  }
  return inside;
}

export function findDirectives(lines: string[], language: Language, fixedForm: boolean): Directive[] {
  return language === 'fortran' ? fortranDirectives(lines, fixedForm) : cDirectives(lines, cCommentLines(lines));
}

/** `_Pragma("acc …")` operators on lines that are not `#pragma` lines. */
export function findPragmaOperators(lines: string[], comments: boolean[]): PragmaOperator[] {
  const out: PragmaOperator[] = [];
  const re = /_Pragma\s*\(\s*"((?:acc|omp)\b(?:[^"\\]|\\.)*)"\s*\)/g;
  lines.forEach((l, line) => {
    if (comments[line] || C_PRAGMA.test(l)) return;
    for (const m of l.matchAll(re)) {
      const start = m.index! + m[0].indexOf('"') + 1;
      const body = m[1];
      out.push({ model: body.slice(0, 3) as Model, line, start, end: start + body.length, body: body.slice(3).trim() });
    }
  });
  return out;
}
