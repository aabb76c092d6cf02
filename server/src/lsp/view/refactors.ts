/**
 * Code actions that are not fixes of a finding: *Port this time loop* (the resident port plan of
 * a time loop that runs on the host, core/port/plans.ts) and *Translate the directives* to the
 * other model (core/translate). Both are whole-line edits the user chooses; nothing is applied
 * without that choice.
 */
import type { Range, TextEdit } from 'vscode-languageserver-protocol';
import type { FileAnalysis } from '../../core/analyze';
import { type Target, type TranslateResult, translateDirectives, translationNames } from '../../core/translate';
import { diffLines } from '../../core/translate/diff';
import { formatFactor, formatSpeedup } from './format';
import { toLspRange } from './ranges';

export interface RefactorEntry {
  /** Where the action is offered (the time loop; the whole file for a translation). */
  range: Range;
  title: string;
  edits: TextEdit[];
}

/** Line edits that turn `before` into `after`: each run of changed lines replaces the original run. */
export function lineDiffEdits(before: string, after: string): TextEdit[] {
  const a = before.split('\n');
  const b = after.split('\n');
  const ops = diffLines(a, b);
  const edits: TextEdit[] = [];
  let k = 0;
  while (k < ops.length) {
    if (ops[k].kind === ' ') { k++; continue; }
    const start = ops[k].a;
    const removed: string[] = [];
    const added: string[] = [];
    while (k < ops.length && ops[k].kind !== ' ') {
      if (ops[k].kind === '-') removed.push(ops[k].text);
      else added.push(ops[k].text);
      k++;
    }
    const text = added.map((l) => `${l}\n`).join('');
    edits.push({ range: { start: { line: start, character: 0 }, end: { line: start + removed.length, character: 0 } }, newText: text });
  }
  return edits;
}

/** What a refactor needs of a translation. */
type Translated = Pick<TranslateResult, 'changed' | 'notes' | 'edits'>;

/** A text as translatesAlike compares it, read once per text. */
interface ReadText {
  text: string;
  lines: string[];
  names: { pointerNames: Set<string>; functionNames: Set<string> };
  declare: boolean;
}

const DECLARE = /^[ \t]*#[ \t]*pragma[ \t]+(acc|omp)\b.*\bdeclare\b/m;

function readText(text: string): ReadText {
  return { text, lines: text.split('\n'), names: translationNames(text, false), declare: DECLARE.test(text) };
}

/**
 * The last translation of each document (per thread), with the text it was made from. Typing
 * inside code lines mostly leaves what the translation does unchanged, so a C or C++ text whose
 * lines differ from the kept one only in such lines (translatesAlike) gets the kept result (the
 * same edits and notes) without translating the whole file again.
 */
const translations = new Map<string, { read: ReadText; key: string; result: Translated }>();
const MAX_TRANSLATIONS = 16;

function translationOf(path: string, text: string, language: 'c' | 'cpp' | 'fortran', to: Target, fixedForm: boolean, check?: () => void): Translated {
  const key = `${language}\n${to}\n${fixedForm}`;
  const kept = translations.get(path);
  if (kept && kept.key === key && language !== 'fortran' && kept.read.text === text) return kept.result;
  const read = language === 'fortran' ? undefined : readText(text);
  if (kept && kept.key === key && read && alike(kept.read, read, to)) {
    kept.read = read;
    return kept.result;
  }
  const t = translateDirectives(text, language, to, { fixedForm, ...(check ? { check } : {}) });
  const result: Translated = { changed: t.changed, notes: t.notes, edits: t.edits };
  translations.delete(path);
  if (translations.size >= MAX_TRANSLATIONS) translations.delete(translations.keys().next().value!);
  if (read) translations.set(path, { read, key, result });
  return result;
}

/** Words that decide where a C statement ends (translate/structure.ts skipStatement). */
const STATEMENT_WORDS = new Set(['for', 'while', 'switch', 'if', 'else', 'do']);

/**
 * The tokens of a C line as translate/structure.ts reads them, with names and numbers made alike
 * (`w`) but for the statement keywords: brackets, braces, semicolons, operators, literals and
 * comment marks stay. (Where a statement ends can turn on any of them: `for (…) + 1 {` is not
 * `for (…) {`.) Comment marks are kept because they change how the following lines read, which
 * translate/structure.ts cTokens, reading one line at a time, would not show.
 */
function structure(l: string): string[] {
  const toks = l.match(/"(?:[^"\\]|\\.)*"?|'(?:[^'\\]|\\.)*'?|\/\*|\*\/|\/\/.*$|[A-Za-z_0-9.]+|\S/g) ?? [];
  return toks.map((t) => (t.startsWith('"') || t.startsWith("'") ? 'lit' : t.startsWith('//') ? '//' : /^[A-Za-z_0-9.]/.test(t) && !STATEMENT_WORDS.has(t) ? 'w' : t));
}

/**
 * Whether two C/C++ texts translate alike. The translation reads code lines only for where
 * statements and declarations end, for the pointer and procedure names the file declares, for
 * the pointers used in each directive's region (to OpenACC), for the declarations under `declare`
 * directives, and for the models' API calls and headers. So two texts translate alike when
 * neither has a `declare` directive, they declare the same pointers and procedures, they have
 * the same number of lines, and every line that differs is code in both (not a preprocessor line
 * or its continuation, nothing naming either model, an API call, or a pointer when translating
 * to OpenACC) with the same tokens but for names and numbers. tests/translate.test.ts checks this
 * against fresh translations of random edits.
 */
export function translatesAlike(beforeText: string, afterText: string, to: Target): boolean {
  return alike(readText(beforeText), readText(afterText), to);
}

function alike(before: ReadText, after: ReadText, to: Target): boolean {
  if (before.declare || after.declare) return false;
  if (before.lines.length !== after.lines.length) return false;
  const same = (x: Set<string>, y: Set<string>): boolean => x.size === y.size && [...x].every((n) => y.has(n));
  if (!same(before.names.pointerNames, after.names.pointerNames) || !same(before.names.functionNames, after.names.functionNames)) return false;
  // Pointers used in a region matter only to OpenMP → OpenACC (its notes on zero-length sections).
  const pointers = to === 'openacc' ? before.names.pointerNames : new Set<string>();
  const code = (l: string): boolean => !/^\s*#/.test(l) && !/acc|omp|declare|_Pragma/i.test(l) && !/\\\s*$/.test(l) && !(l.match(/[A-Za-z_]\w*/g) ?? []).some((w) => pointers.has(w));
  const shape = (l: string): string => structure(l).join(' ');
  for (let i = 0; i < after.lines.length; i++) {
    const x = before.lines[i];
    const y = after.lines[i];
    if (x === y) continue;
    if (!code(x) || !code(y) || shape(x) !== shape(y)) return false;
    if (i > 0 && (/\\\s*$/.test(before.lines[i - 1]) || /\\\s*$/.test(after.lines[i - 1]))) return false;
  }
  return true;
}

/** `check` is called while the translation runs (the editor's job throws there once the view is stale). */
export function buildRefactors(a: FileAnalysis, text: string, check?: () => void): RefactorEntry[] {
  const out: RefactorEntry[] = [];
  if (a.port && a.port.text !== text) {
    const edits = lineDiffEdits(text, a.port.text);
    for (const t of a.timeLoops) {
      const p = t.plans;
      if (!p || p.offloaded.length === 0) continue;
      const est = p.resident.speedup ? `; estimate ${formatSpeedup(p.resident.speedup)} (expected ${formatFactor(p.resident.speedup.expected)}×)` : '';
      out.push({
        range: toLspRange(t.timeLoop.loop.range),
        title: `Port the time loops that run on the host to ${p.family === 'openacc' ? 'OpenACC' : 'OpenMP'}: ${p.offloaded.length} loop${p.offloaded.length === 1 ? '' : 's'} offloaded, a data region${p.updates.length > 0 ? ` and ${p.updates.length} update${p.updates.length === 1 ? '' : 's'}` : ''}${est}`,
        edits,
      });
    }
  }
  const families = new Set(a.model.directives.filter((d) => d.family === 'openacc' || d.construct.startsWith('target')).map((d) => d.family));
  if (families.size === 1) {
    const to = families.has('openacc') ? 'openmp' : 'openacc';
    const t = translationOf(a.path, text, a.language === 'fortran' ? 'fortran' : a.language === 'cpp' ? 'cpp' : 'c', to, /\.(f|for|ftn|f77)$/i.test(a.path), check);
    if (t.changed > 0) {
      const whole = { start: { line: 0, character: 0 }, end: { line: text.split('\n').length, character: 0 } };
      out.push({
        range: whole,
        title: `Translate the directives of this file to ${to === 'openmp' ? 'OpenMP' : 'OpenACC'} (${t.changed} line${t.changed === 1 ? '' : 's'}${t.notes.length > 0 ? `, ${t.notes.length} note${t.notes.length === 1 ? '' : 's'} left as comments` : ''})`,
        edits: t.edits.map((e) => ({ range: e.range, newText: e.newText })),
      });
    }
  }
  return out;
}
