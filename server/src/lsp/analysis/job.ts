/**
 * One unit of analysis work: a document's text at one version with everything the analysis and
 * the view need. It is plain data, so it crosses to the analysis worker by structured clone.
 */
import { performance } from 'node:perf_hooks';
import { analyzeSource, type AnalyzeDeps, type AnalyzeOptions } from '../../core/analyze';
import type { Baseline } from '../../core/estimate/types';
import type { MachineProfile } from '../../core/machine/profiles';
import type { SourceLanguage } from '../../core/types';
import { buildView } from '../view/build';
import type { DocumentView, ViewOptions } from '../view/types';

export interface AnalysisJob {
  uri: string;
  version: number;
  path: string;
  language: SourceLanguage;
  text: string;
  bindings: [string, number][];
  profile?: MachineProfile;
  baseline: Baseline;
  view: ViewOptions;
}

/** The core's options for a job: the user's size bindings, the machine profile and the baseline. */
export function analyzeOptions(job: AnalysisJob): AnalyzeOptions {
  return { bindings: new Map(job.bindings), baseline: job.baseline, ...(job.profile ? { profile: job.profile } : {}) };
}

export function runJob(job: AnalysisJob, deps: AnalyzeDeps): DocumentView {
  const t0 = performance.now();
  const analysis = analyzeSource({ path: job.path, text: job.text, language: job.language }, deps, analyzeOptions(job));
  const ms = performance.now() - t0;
  return buildView(
    { uri: job.uri, version: job.version, text: job.text, analysis, userBindings: new Map(job.bindings), analysisMilliseconds: ms },
    job.view,
  );
}
