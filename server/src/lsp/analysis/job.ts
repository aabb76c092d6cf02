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

/** Thrown inside a job the main thread has marked stale; the thread simply takes the next job. */
export class Cancelled extends Error {
  constructor() {
    super('analysis cancelled: a newer edit of the document arrived');
  }
}

/** How a running job hears about cancellation and reports the building of its project's models. */
export interface JobHooks {
  /** True once a newer edit of the document has made this job stale (checked between files and phases). */
  cancelled?(): boolean;
  /** Models of the project's files: `done` of `total` ready (sent only when some must be built). */
  progress?(done: number, total: number): void;
}

/** Counters of the model cache below (per thread), for the debug request. */
export const modelCacheStats = { built: 0, hits: 0 };

/**
 * Models of neighbour files, rebuilt only when their text or the options that shape a model
 * change (per thread, so one that stays warm keeps them): keyed by path, then by text and flags.
 */
const neighbourModels = new Map<string, { text: string; flags: string; model: ProgramModel }>();
const MAX_CACHED_MODELS = 512;

function checkCancelled(hooks: JobHooks | undefined): void {
  if (hooks?.cancelled?.()) throw new Cancelled();
}

function workspaceOf(job: AnalysisJob, deps: AnalyzeDeps, hooks?: JobHooks): ProgramModel[] | undefined {
  if (!job.neighbours || job.neighbours.length === 0) return undefined;
  const keyed = job.neighbours.map((n) => {
    const pp = n.preprocess ?? job.preprocess;
    const flags = JSON.stringify([pp ?? null, job.bindings, job.timeLoopVariables ?? null, n.language]);
    const hit = neighbourModels.get(n.path);
    return { n, pp, flags, hit: hit && hit.flags === flags && hit.text === n.text ? hit : undefined };
  });
  const total = keyed.length + 1;
  let done = keyed.filter((k) => k.hit).length;
  const missing = keyed.length - done;
  if (missing > 0) hooks?.progress?.(done, total);
  return keyed.map(({ n, pp, flags, hit }) => {
    if (hit) {
      modelCacheStats.hits++;
      return hit.model;
    }
    checkCancelled(hooks);
    const model = buildModel({ path: n.path, language: n.language, text: n.text }, deps, analyzeOptions({ ...job, preprocess: pp }));
    if (!neighbourModels.has(n.path) && neighbourModels.size >= MAX_CACHED_MODELS) neighbourModels.delete(neighbourModels.keys().next().value!);
    neighbourModels.set(n.path, { text: n.text, flags, model });
    modelCacheStats.built++;
    hooks?.progress?.(++done, total);
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

/**
 * Analyses a job: models of the other files (cached), the document, the callers in other files,
 * the view. Throws Cancelled between those steps once `hooks.cancelled()` says the job is stale.
 */
export function runJob(job: AnalysisJob, grammars: AnalyzeDeps, hooks?: JobHooks): DocumentView {
  const t0 = performance.now();
  // Headers are read from disk in the worker, as the CLI reads them.
  const deps: AnalyzeDeps = { ...grammars, readInclude: readHeader };
  const workspace = workspaceOf(job, deps, hooks);
  checkCancelled(hooks);
  const analysis = analyzeSource({ path: job.path, text: job.text, language: job.language }, deps, { ...analyzeOptions(job), workspace });
  checkCancelled(hooks);
  // Findings that span two files: linked to the other end, and those of callers' time loops that land here.
  linkCallers(job, analysis, workspace, deps, () => checkCancelled(hooks));
  checkCancelled(hooks);
  const ms = performance.now() - t0;
  return buildView(
    { uri: job.uri, version: job.version, text: job.text, analysis, userBindings: new Map(job.bindings), analysisMilliseconds: ms },
    job.view,
  );
}
