/**
 * Findings in both files, in the editor. The document's own findings at calls into other files
 * are linked to the callee's directive; and when the document holds kernels that a neighbour's
 * time loop calls, that neighbour is analysed too (with the document's current text), so the
 * transfers and stale accesses it reaches here appear in this document as well, linked to the
 * call. Only neighbours that call a procedure of the document are analysed, once per job.
 */
import { analyzeSource, type AnalyzeDeps, type FileAnalysis } from '../../core/analyze';
import type { ProgramModel } from '../../core/model/program';
import { forEachCallInValue, valuesOfStatement, walkStatements } from '../../core/model/values';
import { linkAcrossFiles } from '../../core/project/crossFile';
import { type AnalysisJob, analyzeOptions } from './job';

export function linkCallers(job: AnalysisJob, analysis: FileAnalysis, workspace: ProgramModel[] | undefined, deps: AnalyzeDeps, check: () => void = () => undefined): void {
  const neighbours = job.neighbours ?? [];
  const textOf = (p: string): string | undefined => (p === job.path ? job.text : neighbours.find((n) => n.path === p)?.text);
  const callers: FileAnalysis[] = [];
  if (workspace && workspace.length === neighbours.length) {
    const names = new Set(analysis.model.procedures.filter((p) => !p.origin).map((p) => p.name));
    workspace.forEach((m, k) => {
      if (names.size === 0 || !callsAny(m, names)) return;
      const n = neighbours[k];
      // Between callers: a stale job stops here (the caller throws to end it).
      check();
      const others = [analysis.model, ...workspace.filter((_, j) => j !== k)];
      // Findings only: the what-if re-analysis (estimates with the suggested region) is not needed.
      callers.push(analyzeSource({ path: n.path, language: n.language, text: n.text, model: m }, deps, {
        ...analyzeOptions({ ...job, preprocess: n.preprocess ?? job.preprocess }), workspace: others, whatIf: false,
      }));
    });
  }
  linkAcrossFiles([analysis, ...callers], textOf, neighbours.map((n) => n.path));
}

/** True when a procedure of the model calls one of `names` (as a statement or inside an expression). */
function callsAny(model: ProgramModel, names: ReadonlySet<string>): boolean {
  let found = false;
  for (const p of model.procedures) {
    if (p.origin) continue;
    walkStatements(p.body, (s) => {
      if (found) return false;
      if (s.kind === 'call' && names.has(s.name)) found = true;
      for (const v of valuesOfStatement(s)) forEachCallInValue(v, (c) => { if (names.has(c.name)) found = true; });
      return !found;
    });
    if (found) return true;
  }
  return false;
}
