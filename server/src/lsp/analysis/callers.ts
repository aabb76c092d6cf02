/**
 * Findings in both files, in the editor. The document's own findings at calls into other files
 * are linked to the callee's directive; and when the document holds kernels that a neighbour's
 * time loop calls, that neighbour is analysed too (with the document's current text), so the
 * transfers and stale accesses it reaches here appear in this document as well, linked to the
 * call. Only neighbours that call a procedure of the document are analysed, once per job.
 */
import { analyzeSource, type AnalyzeDeps, type FileAnalysis } from '../../core/analyze';
import type { ProgramModel } from '../../core/model/program';
import { bodyCalls } from '../../core/model/callees';
import { linkAcrossFiles } from '../../core/project/crossFile';
import { type AnalysisJob, analyzeOptions } from './job';

/** The indices of the neighbours whose models call a procedure of the document (their time loops may reach it). */
export function callersOf(job: AnalysisJob, analysis: FileAnalysis, workspace: ProgramModel[] | undefined): number[] {
  const neighbours = job.neighbours ?? [];
  if (!workspace || workspace.length !== neighbours.length) return [];
  const names = new Set(analysis.model.procedures.filter((p) => !p.origin).map((p) => p.name));
  if (names.size === 0) return [];
  return workspace.flatMap((m, k) => (callsAny(m, names) ? [k] : []));
}

export function linkCallers(
  job: AnalysisJob, analysis: FileAnalysis, workspace: ProgramModel[] | undefined, deps: AnalyzeDeps, check: () => void = () => undefined,
  callers: number[] = callersOf(job, analysis, workspace), cancelled?: () => boolean,
): void {
  const neighbours = job.neighbours ?? [];
  const analyses: FileAnalysis[] = [];
  for (const k of callers) {
    const m = workspace![k];
    const n = neighbours[k];
    // Between callers: a stale job stops here (the caller throws to end it).
    check();
    const others = [analysis.model, ...workspace!.filter((_, j) => j !== k)];
    // Findings only: the what-if re-analysis (estimates with the suggested region) is not needed.
    analyses.push(analyzeSource({ path: n.path, language: n.language, text: n.text, model: m }, deps, {
      ...analyzeOptions({ ...job, preprocess: n.preprocess ?? job.preprocess }), ...(cancelled ? { cancelled } : {}), workspace: others, whatIf: false,
    }));
  }
  linkInJob(job, [analysis, ...analyses]);
}

/**
 * Links findings placed at calls with the other end (crossFile.ts) among the job's files: texts
 * are the document's and its neighbours', other files are named from the job's root.
 */
export function linkInJob(job: AnalysisJob, analyses: FileAnalysis[]): void {
  const neighbours = job.neighbours ?? [];
  const textOf = (p: string): string | undefined => (p === job.path ? job.text : neighbours.find((n) => n.path === p)?.text);
  linkAcrossFiles(analyses, textOf, neighbours.map((n) => n.path), job.root);
}

/** True when a procedure of the model calls one of `names` (as a statement or inside an expression). */
function callsAny(model: ProgramModel, names: ReadonlySet<string>): boolean {
  return model.procedures.some((p) => !p.origin && bodyCalls(p.body).calls.some((c) => names.has(c.name)));
}
