/**
 * Code actions that are not fixes of a finding: *Port this time loop* (the resident port plan of
 * a time loop that runs on the host, core/port/plans.ts) and *Translate the directives* to the
 * other model (core/translate). Both are whole-line edits the user chooses; nothing is applied
 * without that choice.
 */
import type { Range, TextEdit } from 'vscode-languageserver-protocol';
import type { FileAnalysis } from '../../core/analyze';
import { translateDirectives } from '../../core/translate';
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
    const t = translateDirectives(text, a.language === 'fortran' ? 'fortran' : a.language === 'cpp' ? 'cpp' : 'c', to, { fixedForm: /\.(f|for|ftn|f77)$/i.test(a.path), ...(check ? { check } : {}) });
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
