/**
 * The preprocessor as the analysis needs it: conditional inclusion evaluated as the compiler
 * would (C11 §6.10.1), macros collected from the file and the headers it includes, `_OPENACC`
 * and `_OPENMP` predefined for the model being analysed, and the user's `-D`/`-U`.
 *
 * The output keeps the file's geometry: every line stays where it was and every column of an
 * active line is unchanged. Inactive lines and the conditional directives themselves are
 * blanked with spaces, so front ends parse only the active code and every range they make maps
 * to the source exactly. Macros are not expanded in the output text: the front ends expand them
 * where they need to (subscripts, directive lines), keeping names such as `NX` in reports.
 *
 * The core does no I/O: headers come from `readInclude`, which the CLI and the language server
 * supply. System headers (`<…>`) are never read.
 */
import type { Finding, Range, SourceLanguage } from '../types';
import { conditionNames, evaluateCondition } from './condition';
import { type MacroDef, expandText, parseDefine } from './macros';
import { stripComments } from './tokens';

export type { MacroDef } from './macros';
export { expandText } from './macros';

/** `_OPENACC` for OpenACC 3.3 (November 2022) and `_OPENMP` for OpenMP 5.2 (November 2021), as the specifications define them. */
export const OPENACC_VERSION = '202211';
export const OPENMP_VERSION = '202111';

export type DirectiveModel = 'openacc' | 'openmp';

export interface PreprocessOptions {
  path: string;
  language: SourceLanguage;
  /** User defines (`-D NAME` is `NAME` → `1`). */
  defines?: ReadonlyMap<string, string>;
  /** User undefines (`-U NAME`), applied after the predefined macros and the defines. */
  undefines?: readonly string[];
  /** Which offload model's macro is predefined; undefined chooses from the directives the file holds. */
  model?: DirectiveModel | 'both' | 'none';
  /** Folders searched for `#include "…"` after the including file's own folder. */
  includeDirs?: readonly string[];
  /** Reads a header by path; undefined when there is no such file. */
  readInclude?: (path: string) => string | undefined;
}

export interface Preprocessed {
  /** The text with inactive lines and conditional directives blanked; same lines and columns. */
  text: string;
  /** Per line: true when the compiler sees it as code (conditional directive lines are false). */
  active: boolean[];
  /** Macros defined at the end of the file (headers included), in definition order. */
  macros: Map<string, MacroDef>;
  /** What the model predefined: the active offload model(s). */
  models: DirectiveModel[];
  /** Headers read, by path, in order. */
  included: string[];
  findings: Finding[];
}

const MAX_INCLUDE_DEPTH = 32;
const MAX_INCLUDES = 512;

interface Group {
  /** A branch of this group has been taken already. */
  taken: boolean;
  /** The current branch is active. */
  on: boolean;
  /** The enclosing context is active. */
  parentOn: boolean;
  line: number;
  /** The branches of this group with their condition text, whether taken, and offload lines inside. */
  branches: { line: number; keyword: string; condition: string; active: boolean; unknown?: string[]; offload: number[] }[];
}

const OFFLOAD_C = /^\s*#\s*pragma\s+(acc\b|omp\s+(target|declare\s+target|begin\s+declare\s+target)\b)/;
const OFFLOAD_F = /^\s*!\$(acc\b|omp\s+(target|declare\s+target)\b)/i;

/** The offload models whose directives the text holds (in any branch). */
export function modelsInText(text: string): DirectiveModel[] {
  const out: DirectiveModel[] = [];
  if (/^[ \t\f\v]*(#\s*pragma\s+acc\b|!\$acc\b)/im.test(text) || PRAGMA_OPERATOR('acc').test(text)) out.push('openacc');
  if (/^[ \t\f\v]*(#\s*pragma\s+omp\b|!\$omp\b)/im.test(text) || PRAGMA_OPERATOR('omp').test(text) || /\bOMP_TARGET\s*\(/.test(text)) out.push('openmp');
  return out;
}

/**
 * The model of a file that holds both: the one with more offload directive lines (OpenMP counts
 * only `target…`/`declare target`, since host OpenMP runs beside either), OpenACC on a tie or
 * when the file has no OpenMP offload lines at all.
 */
function majorityModel(text: string): DirectiveModel {
  const acc = (text.match(/^[ \t\f\v]*(#\s*pragma\s+acc\b|!\$acc\b)/gim) ?? []).length;
  const omp = (text.match(/^[ \t\f\v]*(#\s*pragma\s+omp\s+(target|declare\s+target|begin\s+declare\s+target|end\s+declare\s+target)\b|!\$omp\s+(end\s+)?(target|declare\s+target)\b)/gim) ?? []).length;
  return omp > acc ? 'openmp' : 'openacc';
}

/**
 * Directives written through the pragma operator, directly or through a wrapper macro:
 * `_Pragma("omp target …")`, `PRAGMA(acc parallel loop)`, and the `OMP_TARGET(…)` style of
 * wrapper whose expansion lives in a header (C11 §6.10.9; the model is then the one the file uses).
 */
function PRAGMA_OPERATOR(model: 'acc' | 'omp'): RegExp {
  return new RegExp(`\\b(_Pragma|[A-Z_]*PRAGMA[A-Z_]*)\\s*\\(\\s*"?\\s*${model}\\b`);
}

export function preprocess(text: string, options: PreprocessOptions): Preprocessed {
  const macros = new Map<string, MacroDef>();
  const predefine = (name: string, body: string): void => {
    macros.set(name, { name, body });
  };
  predefine('__STDC__', '1');
  if (options.language === 'cpp') predefine('__cplusplus', '201703L');
  else if (options.language === 'c') predefine('__STDC_VERSION__', '201710L');
  const present = modelsInText(text);
  const choice = options.model ?? (present.includes('openacc') && present.includes('openmp') ? majorityModel(text) : present.includes('openacc') ? 'openacc' : present.includes('openmp') ? 'openmp' : 'none');
  const models: DirectiveModel[] = choice === 'both' ? ['openacc', 'openmp'] : choice === 'none' ? [] : [choice];
  if (models.includes('openacc')) predefine('_OPENACC', OPENACC_VERSION);
  if (models.includes('openmp')) predefine('_OPENMP', OPENMP_VERSION);
  for (const [k, v] of options.defines ?? []) predefine(k, v);
  for (const k of options.undefines ?? []) macros.delete(k);

  const run = new Run(options, macros);
  const lines = text.split('\n');
  const { active, blanked } = run.file(lines, options.path, 0, undefined);
  if (options.language !== 'fortran') blankQualifierMacros(blanked, macros);
  return { text: blanked.join('\n'), active, macros, models, included: run.included, findings: run.findings };
}

/** What a macro spelled in capitals may stand for in a declaration and still be dropped for reading. */
const QUALIFIER_BODY = /^(|restrict|__restrict|__restrict__|const|volatile|inline|__inline|__inline__|static inline|__forceinline|__device__|__host__|__host__ __device__)$/;

/**
 * `double * RESTRICT a`, `INLINE void f()`: a capitalised object-like macro that stands for a
 * qualifier (or for nothing) makes the declaration unreadable to a parser that does not expand
 * it, and the element type of `a` is then lost. Its uses in code lines are blanked (same
 * columns), which is what the compiler reads apart from the qualifier itself.
 */
function blankQualifierMacros(lines: string[], macros: ReadonlyMap<string, MacroDef>): void {
  const names = [...macros.values()].filter((m) => !m.params && /^[A-Z_][A-Z0-9_]*$/.test(m.name) && !m.name.startsWith('__') && QUALIFIER_BODY.test(m.body.trim())).map((m) => m.name);
  if (names.length === 0) return;
  const use = new RegExp(`\\b(${names.join('|')})\\b`, 'g');
  for (let k = 0; k < lines.length; k++) {
    const l = lines[k];
    if (/^\s*#/.test(l) || !use.test(l)) continue;
    use.lastIndex = 0;
    lines[k] = l.replace(use, (m) => ' '.repeat(m.length));
  }
}

class Run {
  readonly included: string[] = [];
  readonly findings: Finding[] = [];
  private readonly inactiveOffload: { range: Range; message: string }[] = [];
  private readonly fortran: boolean;

  constructor(private readonly options: PreprocessOptions, private readonly macros: Map<string, MacroDef>) {
    this.fortran = options.language === 'fortran';
    this.pragmaBodies = [...macros.values()].some((m) => m.body.includes('_Pragma'));
  }

  /** Whether any macro defined so far has `_Pragma` in its body (else no line names a pragma macro). */
  private pragmaBodies: boolean;

  /**
   * Processes one file's lines. For the main file (`at` undefined) it returns the blanked lines;
   * for a header it only updates the macros, and its findings land at the `#include` line `at`.
   */
  file(lines: string[], path: string, depth: number, at: Range | undefined): { active: boolean[]; blanked: string[] } {
    const active: boolean[] = new Array(lines.length).fill(false);
    const blanked: string[] = at ? [] : lines.slice();
    const stack: Group[] = [];
    const live = (): boolean => stack.length === 0 || stack[stack.length - 1].on;
    const here = (line: number): Range => at ?? { start: { line, col: 0 }, end: { line, col: lines[line].replace(/\r$/, '').length } };
    let inComment = false;
    for (let i = 0; i < lines.length; i++) {
      const first = lines[i];
      // An empty line (most lines of a part's text, core/incremental.ts) only takes the state.
      if (first.length === 0) {
        active[i] = live();
        continue;
      }
      const directive = !inComment && /^\s*#/.test(first);
      if (!directive) {
        active[i] = live();
        if (!live() && !at) blanked[i] = blank(lines[i]);
        else if (!at && !this.fortran) {
          const pragma = this.pragmaOperator(first);
          if (pragma !== undefined) blanked[i] = pragma;
        }
        this.noteOffload(stack, first);
        if (!this.fortran) inComment = commentStateAfter(first, inComment);
        continue;
      }
      // A preprocessor line with its backslash continuations.
      let end = i;
      let logical = first.replace(/\r$/, '');
      while (logical.endsWith('\\') && end + 1 < lines.length) {
        end++;
        logical = `${logical.slice(0, -1)} ${lines[end].replace(/\r$/, '')}`;
      }
      const clean = this.fortran ? logical : stripComments(logical);
      const m = /^\s*#\s*([A-Za-z_]\w*)?\s*(.*)$/s.exec(clean);
      const word = m?.[1] ?? '';
      const rest = (m?.[2] ?? '').trim();
      const conditional = ['if', 'ifdef', 'ifndef', 'elif', 'elifdef', 'elifndef', 'else', 'endif'].includes(word);
      const wasLive = live();
      if (conditional) this.conditional(stack, word, rest, i, here);
      else if (wasLive) this.control(word, rest, i, path, depth, at, here);
      if (!conditional) this.noteOffload(stack, first);
      for (let k = i; k <= end; k++) {
        // The compiler sees none of a conditional's lines; other directives stay for the front end.
        active[k] = false;
        if (!at && (conditional || !wasLive)) blanked[k] = blank(lines[k]);
      }
      i = end;
    }
    for (const g of stack) {
      this.findings.push({
        code: 'directive-syntax', severity: 'error', range: here(g.line),
        message: `\`#${g.branches[0]?.keyword ?? 'if'}\` at line ${g.line + 1}${at ? ` of ${path}` : ''} has no matching \`#endif\`; the compiler rejects the file. The lines after it were analysed as if it were closed at the end of the file.`,
      });
      this.closeGroup(g);
    }
    if (!at && this.inactiveOffload.length > 0) {
      const first = this.inactiveOffload[0];
      const more = this.inactiveOffload.length - 1;
      this.findings.push({
        code: 'inactive-offload-branch', severity: 'info', range: first.range,
        message: `${first.message}${more > 0 ? ` (${more} more inactive branch${more === 1 ? '' : 'es'} with offload directives in this file.)` : ''}`,
      });
    }
    return { active, blanked };
  }

  /** Marks the innermost branch whose group the compiler evaluates as holding an offload directive. */
  /**
   * A line that is one `_Pragma("acc …")` operator (C11 §6.10.9), written directly or through a
   * macro (`#define PRAGMA(x) _Pragma(#x)`, then `PRAGMA(omp parallel for)`), becomes the
   * `#pragma` line it stands for, so the directive reader sees it where the compiler does. The
   * line keeps its number; its columns are the pragma's. Lines holding more than the operator
   * are left as they are.
   */
  private pragmaOperator(line: string): string | undefined {
    if (!line.includes('_Pragma') && !(this.pragmaBodies && this.pragmaMacroIn(line))) return undefined;
    const text = line.replace(/\r$/, '');
    const expanded = expandText(text, this.macros).text;
    const m = /^\s*_Pragma\s*\(\s*"((?:[^"\\]|\\.)*)"\s*\)\s*;?\s*$/.exec(expanded);
    if (!m || !/^\s*(acc|omp)\b/.test(m[1])) return undefined;
    const body = m[1].replace(/\\(["\\])/g, '$1');
    const indent = /^\s*/.exec(text)?.[0] ?? '';
    const pragma = `${indent}#pragma ${body.trim()}`;
    return pragma.length < text.length ? pragma.padEnd(text.length) : pragma;
  }

  /** Whether the line names a macro whose expansion holds `_Pragma`. */
  private pragmaMacroIn(line: string): boolean {
    for (const m of line.matchAll(/[A-Za-z_]\w*/g)) if (this.isPragmaMacro(m[0], 0)) return true;
    return false;
  }

  private readonly pragmaMacros = new WeakMap<MacroDef, boolean>();

  private isPragmaMacro(name: string, depth: number): boolean {
    const def = this.macros.get(name);
    if (!def || depth > 8) return false;
    let known = this.pragmaMacros.get(def);
    if (known === undefined) {
      this.pragmaMacros.set(def, false);
      known = def.body.includes('_Pragma') || [...def.body.matchAll(/[A-Za-z_]\w*/g)].some((m) => m[0] !== name && this.isPragmaMacro(m[0], depth + 1));
      this.pragmaMacros.set(def, known);
    }
    return known;
  }

  private noteOffload(stack: Group[], line: string): void {
    if (stack.length === 0 || !(this.fortran ? OFFLOAD_F : OFFLOAD_C).test(line)) return;
    for (let k = stack.length - 1; k >= 0; k--) {
      if (!stack[k].parentOn) continue;
      const b = stack[k].branches[stack[k].branches.length - 1];
      if (b && !b.active) b.offload.push(0);
      return;
    }
  }

  private conditional(stack: Group[], word: string, rest: string, line: number, here: (l: number) => Range): void {
    const parentOn = stack.length === 0 || stack[stack.length - 1].on;
    const test = (): { on: boolean; unknown?: string[] } => {
      if (word === 'ifdef' || word === 'elifdef') return { on: this.macros.has(firstName(rest)) };
      if (word === 'ifndef' || word === 'elifndef') return { on: !this.macros.has(firstName(rest)) };
      const v = evaluateCondition(rest, this.macros, this.options.language === 'cpp');
      return v.known ? { on: v.value } : { on: true, unknown: v.unknown };
    };
    if (word === 'if' || word === 'ifdef' || word === 'ifndef') {
      const r = parentOn ? test() : { on: false };
      const g: Group = { taken: r.on, on: parentOn && r.on, parentOn, line, branches: [] };
      g.branches.push({ line, keyword: word, condition: rest, active: g.on, unknown: r.unknown, offload: [] });
      stack.push(g);
      return;
    }
    const g = stack[stack.length - 1];
    if (!g) {
      this.findings.push({
        code: 'directive-syntax', severity: 'error', range: here(line),
        message: `\`#${word}\` at line ${line + 1} has no matching \`#if\`; the compiler rejects the file. It was ignored.`,
      });
      return;
    }
    if (word === 'endif') {
      stack.pop();
      this.closeGroup(g);
      return;
    }
    let on = false;
    let unknown: string[] | undefined;
    if (word === 'else') on = g.parentOn && !g.taken;
    else if (g.parentOn && !g.taken) {
      const r = test();
      on = r.on;
      unknown = r.unknown;
    }
    g.taken ||= on;
    g.on = on;
    g.branches.push({ line, keyword: word, condition: rest, active: on, unknown, offload: [] });
  }

  /** Records inactive branches that hold offload directives, and branches chosen without a value. */
  private closeGroup(g: Group): void {
    if (!g.parentOn) return;
    const withOffload = g.branches.filter((b) => !b.active && b.offload.length > 0);
    if (withOffload.length === 0) return;
    const chosen = g.branches.find((b) => b.active);
    const b = withOffload[0];
    const range: Range = { start: { line: b.line, col: 0 }, end: { line: b.line, col: 0 } };
    const guess = g.branches.find((x) => x.unknown && x.unknown.length > 0);
    const why = guess
      ? `\`${(guess.unknown ?? []).join('`, `')}\` ${guess.unknown!.length === 1 ? 'has' : 'have'} no value here, so the first branch (line ${guess.line + 1}) was analysed`
      : b.keyword === 'else' || g.branches.indexOf(b) > g.branches.indexOf(chosen ?? b)
        ? `an earlier branch of this conditional (\`#${chosen?.keyword} ${chosen?.condition}\`, line ${(chosen?.line ?? g.line) + 1}) is active`
        : `\`#${b.keyword} ${b.condition}\` is false under the current defines`;
    const afterChosen = chosen !== undefined && g.branches.indexOf(b) > g.branches.indexOf(chosen);
    const hint = switchHint(b.keyword === 'else' || afterChosen ? chosen : b, this.models(), afterChosen);
    this.inactiveOffload.push({
      range,
      message: `The offload directives in the branch at line ${b.line + 1} are not analysed: ${why}. ${hint}`,
    });
  }

  private models(): string[] {
    return ['_OPENACC', '_OPENMP'].filter((m) => this.macros.has(m));
  }

  private control(word: string, rest: string, line: number, path: string, depth: number, at: Range | undefined, here: (l: number) => Range): void {
    if (word === 'define') {
      const def = parseDefine(rest, line, at ? path : undefined);
      if (def) {
        this.macros.delete(def.name);
        this.macros.set(def.name, def);
        if (def.body.includes('_Pragma')) this.pragmaBodies = true;
      }
    } else if (word === 'undef') {
      this.macros.delete(firstName(rest));
    } else if (word === 'include') {
      const quoted = /^"([^"]+)"/.exec(rest);
      if (!quoted) return;
      this.include(quoted[1], path, depth, at ?? here(line));
    }
  }

  private include(name: string, from: string, depth: number, at: Range): void {
    const read = this.options.readInclude;
    if (!read) return;
    if (depth >= MAX_INCLUDE_DEPTH || this.included.length >= MAX_INCLUDES) return;
    const dirs = [dirname(from), ...(this.options.includeDirs ?? [])];
    for (const dir of dirs) {
      const candidate = name.startsWith('/') ? name : joinPath(dir, name);
      let text: string | undefined;
      try {
        text = read(candidate);
      } catch {
        text = undefined;
      }
      if (text === undefined) continue;
      this.included.push(candidate);
      this.file(text.split('\n'), candidate, depth + 1, at);
      return;
    }
    this.findings.push({
      code: 'unknown-extent', severity: 'info', range: at,
      message: `The header \`${name}\` was not found (looked in ${dirs.map((d) => `\`${d || '.'}\``).join(', ')}), so the sizes and macros it defines are unknown here; add its folder with \`--include-dir DIR\` (or the include-directories setting).`,
    });
  }
}

function firstName(rest: string): string {
  return /^[A-Za-z_]\w*/.exec(rest.trim())?.[0] ?? '';
}

/** What would switch a branch on: a define, an undefine, or the other directive model. */
function switchHint(b: { keyword: string; condition: string } | undefined, models: string[], negate = false): string {
  if (!b) return '';
  const names = conditionNames(b.condition).filter((n) => !/^\d/.test(n));
  const model = names.find((n) => n === '_OPENACC' || n === '_OPENMP');
  if (model) {
    const other = model === '_OPENACC' ? 'openmp' : 'openacc';
    const own = model === '_OPENACC' ? 'openacc' : 'openmp';
    return models.includes(model)
      ? `To analyse that branch, analyse the file as ${other === 'openmp' ? 'OpenMP' : 'OpenACC'} (\`--directives ${other}\`).`
      : `To analyse that branch, analyse the file as ${own === 'openmp' ? 'OpenMP' : 'OpenACC'} (\`--directives ${own}\`).`;
  }
  if (names.length === 0) return '';
  const negated = negate !== (b.keyword === 'ifndef' || b.keyword === 'elifndef');
  const list = names.map((n) => `\`${n}\``).join(', ');
  if (negated) return `To analyse it, undefine ${list} (\`--undefine ${names[0]}\`, or the defines setting).`;
  return `To analyse it, define ${list} (\`--define ${names[0]}\`${/[<>=]/.test(b.condition) ? ' with the value the condition needs' : ''}, or the defines setting).`;
}

function blank(line: string): string {
  return line.replace(/[^\r]/g, ' ');
}

/** Whether a block comment is still open at the end of a code line. */
function commentStateAfter(line: string, inComment: boolean): boolean {
  if (!inComment && !line.includes('/*')) return false;
  let open = inComment;
  let i = 0;
  while (i < line.length) {
    if (open) {
      const e = line.indexOf('*/', i);
      if (e < 0) return true;
      open = false;
      i = e + 2;
    } else {
      const c = line[i];
      if (c === '"' || c === "'") {
        let j = i + 1;
        while (j < line.length && line[j] !== c) j += line[j] === '\\' ? 2 : 1;
        i = j + 1;
      } else if (c === '/' && line[i + 1] === '/') return false;
      else if (c === '/' && line[i + 1] === '*') {
        open = true;
        i += 2;
      } else i++;
    }
  }
  return open;
}

function dirname(p: string): string {
  const k = p.lastIndexOf('/');
  return k < 0 ? '' : k === 0 ? '/' : p.slice(0, k);
}

/** Joins a folder and a relative path, folding `.` and `..` (POSIX separators; the core has no `path`). */
export function joinPath(dir: string, rel: string): string {
  const parts = (dir ? `${dir}/${rel}` : rel).split('/');
  const out: string[] = [];
  for (const p of parts) {
    if (p === '.' || (p === '' && out.length > 0)) continue;
    if (p === '..' && out.length > 0 && out[out.length - 1] !== '..' && out[out.length - 1] !== '') out.pop();
    else out.push(p);
  }
  return out.join('/') || '.';
}
