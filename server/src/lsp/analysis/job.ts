/**
 * One unit of analysis work: a document's text at one version with everything the analysis and
 * the view need. It is plain data, so it crosses to the analysis worker by structured clone.
 */
import { performance } from 'node:perf_hooks';
import { analyzeSource, buildModel, type AnalyzeDeps, type AnalyzeOptions } from '../../core/analyze';
import type { ProgramModel } from '../../core/model/program';
import type { NeighbourSource } from './neighbours';
import { readHeader } from '../../host/files';
import type { Baseline } from '../../core/estimate/types';
import type { MachineProfile } from '../../core/machine/profiles';
import type { SourceLanguage } from '../../core/types';
import { buildView } from '../view/build';
import { linkCallers } from './callers';
import type { DocumentView, ViewOptions } from '../view/types';

export interface AnalysisJob {
  uri: string;
  version: number;
  path: string;
  language: SourceLanguage;
  text: string;
  bindings: [string, number][];
  /** The preprocessor settings (plain data: defines as pairs, include folders absolute). */
  preprocess?: { defines: [string, string][]; undefines: string[]; includeDirs: string[]; directives?: 'openacc' | 'openmp' | 'both' };
  profile?: MachineProfile;
  baseline: Baseline | 'auto';
  /** Loop variables the user names as time-loop variables (setting `timeLoopVariables`). */
  timeLoopVariables?: string[];
  view: ViewOptions;
  /**
   * Other sources beside the document (and, with a compilation database, the project's other
   * sources): calls from its time loops into them are followed. `preprocess`: the file's own flags.
   */
  neighbours?: (NeighbourSource & { preprocess?: AnalysisJob['preprocess'] })[];
}

/** Models of neighbour files, rebuilt only when their text or flags change (per thread). */
const neighbourModels = new Map<string, { text: string; flags: string; model: ProgramModel }>();

function workspaceOf(job: AnalysisJob, deps: AnalyzeDeps): ProgramModel[] | undefined {
  if (!job.neighbours || job.neighbours.length === 0) return undefined;
  return job.neighbours.map((n) => {
    const pp = n.preprocess ?? job.preprocess;
    const flags = JSON.stringify(pp ?? null);
    const hit = neighbourModels.get(n.path);
    if (hit && hit.text === n.text && hit.flags === flags) return hit.model;
    const model = buildModel({ path: n.path, language: n.language, text: n.text }, deps, analyzeOptions({ ...job, preprocess: pp }));
    neighbourModels.set(n.path, { text: n.text, flags, model });
    return model;
  });
}

/** The core's options for a job: the user's size bindings, the machine profile and the baseline. */
export function analyzeOptions(job: AnalysisJob): AnalyzeOptions {
  const pp = job.preprocess;
  return {
    bindings: new Map(job.bindings), ...(job.baseline === 'auto' ? {} : { baseline: job.baseline }), ...(job.profile ? { profile: job.profile } : {}),
    ...(job.timeLoopVariables && job.timeLoopVariables.length > 0 ? { timeLoopVariables: job.timeLoopVariables } : {}),
    ...(pp ? { defines: new Map(pp.defines), undefines: pp.undefines, includeDirs: pp.includeDirs, directives: pp.directives } : {}),
  };
}

export function runJob(job: AnalysisJob, grammars: AnalyzeDeps): DocumentView {
  const t0 = performance.now();
  // Headers are read from disk in the worker, as the CLI reads them.
  const deps: AnalyzeDeps = { ...grammars, readInclude: readHeader };
  const workspace = workspaceOf(job, deps);
  const analysis = analyzeSource({ path: job.path, text: job.text, language: job.language }, deps, { ...analyzeOptions(job), workspace });
  // Findings that span two files: linked to the other end, and those of callers' time loops that land here.
  linkCallers(job, analysis, workspace, deps);
  const ms = performance.now() - t0;
  return buildView(
    { uri: job.uri, version: job.version, text: job.text, analysis, userBindings: new Map(job.bindings), analysisMilliseconds: ms },
    job.view,
  );
}
