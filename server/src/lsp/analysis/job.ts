/**
 * One unit of analysis work: a document's text at one version with everything the analysis and
 * the view need. It is plain data, so it crosses to the analysis worker by structured clone.
 */
import { performance } from 'node:perf_hooks';
import { AnalysisCancelled, analyzeSource, buildModel, type AnalyzeDeps, type AnalyzeOptions, type FileAnalysis } from '../../core/analyze';
import { filesNeeded, lexiconOf, type Lexicon } from '../../core/project/lexicon';
import type { ProgramModel } from '../../core/model/program';
import type { NeighbourSource } from './neighbours';
import { readHeader } from '../../host/files';
import type { Baseline } from '../../core/estimate/types';
import type { MachineProfile } from '../../core/machine/profiles';
import type { SourceLanguage } from '../../core/types';
import { buildDiagnosticsView, buildView } from '../view/build';
import { type EditBase, analyzeEdit } from '../../core/incremental';
import { callersOf, linkCallers, linkInJob } from './callers';
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
  /** False for a file of the workspace check that is not open: nobody shows a first view of it. */
  firstViews?: boolean;
  /** The workspace folder holding the document: messages name other files relative to it. */
  root?: string;
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
  /**
   * A first view while the models of files the document does not reach are still being built
   * (the final view follows). Only asked for by engines that can deliver it.
   */
  early?(view: DocumentView): void;
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

type Neighbour = NonNullable<AnalysisJob['neighbours']>[number];

/** The options that shape a neighbour's model, as a cache key (made once per neighbour of a job). */
const flagKeys = new WeakMap<Neighbour, string>();
function flagsOf(job: AnalysisJob, n: Neighbour): string {
  let key = flagKeys.get(n);
  if (key === undefined) flagKeys.set(n, (key = JSON.stringify([n.preprocess ?? job.preprocess ?? null, job.bindings, job.timeLoopVariables ?? null, n.language])));
  return key;
}

/** The warm model of a neighbour, when its text and flags are those of the cache. */
function warmModel(job: AnalysisJob, n: Neighbour): ProgramModel | undefined {
  const hit = neighbourModels.get(n.path);
  return hit && hit.text === n.text && hit.flags === flagsOf(job, n) ? hit.model : undefined;
}

/** Models of `list` (warm ones from the cache), reporting progress against the project's `total` files. */
function modelsOf(job: AnalysisJob, list: readonly Neighbour[], deps: AnalyzeDeps, total: number, hooks?: JobHooks): ProgramModel[] {
  const all = job.neighbours ?? [];
  let done = all.filter((n) => warmModel(job, n)).length;
  if (list.some((n) => !warmModel(job, n))) hooks?.progress?.(done, total);
  return list.map((n) => {
    const hit = warmModel(job, n);
    if (hit) {
      modelCacheStats.hits++;
      return hit;
    }
    checkCancelled(hooks);
    const model = buildModel({ path: n.path, language: n.language, text: n.text }, deps, analyzeOptions({ ...job, preprocess: n.preprocess ?? job.preprocess }));
    if (!neighbourModels.has(n.path) && neighbourModels.size >= MAX_CACHED_MODELS) neighbourModels.delete(neighbourModels.keys().next().value!);
    neighbourModels.set(n.path, { text: n.text, flags: flagsOf(job, n), model });
    modelCacheStats.built++;
    hooks?.progress?.(++done, total);
    return model;
  });
}

/** Lexicons of neighbour texts (per thread), read again only when a text changes. */
const lexicons = new Map<string, { text: string; lexicon: Lexicon }>();
function lexiconFor(path: string, text: string, language: AnalysisJob['language']): Lexicon {
  const hit = lexicons.get(path);
  if (hit && hit.text === text) return hit.lexicon;
  const lexicon = lexiconOf(text, language, path);
  if (!hit && lexicons.size >= MAX_CACHED_MODELS) lexicons.delete(lexicons.keys().next().value!);
  lexicons.set(path, { text, lexicon });
  return lexicon;
}

/**
 * The neighbours a first answer needs: those whose names the document's chain of calls and uses
 * reaches (down) or whose calls reach the document (up), by their lexicons, plus every one whose
 * model is already warm. `up` tells whether any file calls into the document.
 */
export function firstNeighbours(job: AnalysisJob): { first: Neighbour[]; up: boolean } {
  const all = job.neighbours ?? [];
  const need = filesNeeded(lexiconFor(job.path, job.text, job.language), all.map((n) => ({ path: n.path, lexicon: lexiconFor(n.path, n.text, n.language) })));
  return { first: all.filter((n) => need.down.has(n.path) || need.up.has(n.path) || warmModel(job, n)), up: need.up.size > 0 };
}
/** The core's options for a job: the user's size bindings, the machine profile and the baseline. */
export function analyzeOptions(job: AnalysisJob): AnalyzeOptions {
  const pp = job.preprocess;
  return {
    bindings: new Map(job.bindings), ...(job.baseline === 'auto' ? {} : { baseline: job.baseline }), ...(job.profile ? { profile: job.profile } : {}),
    ...(job.timeLoopVariables && job.timeLoopVariables.length > 0 ? { timeLoopVariables: job.timeLoopVariables } : {}),
    ...(job.root ? { projectRoot: job.root } : {}),
    ...(pp ? { defines: new Map(pp.defines), undefines: pp.undefines, includeDirs: pp.includeDirs, directives: pp.directives } : {}),
  };
}

/**
 * Analyses a job: models of the other files (cached), the document, the callers in other files,
 * the view. Throws Cancelled between those steps once `hooks.cancelled()` says the job is stale.
 */
export function runJob(job: AnalysisJob, grammars: AnalyzeDeps, hooks?: JobHooks): DocumentView {
  try {
    return runJobSteps(job, grammars, hooks);
  } catch (e) {
    // A stale job stopped inside an analysis (between nests or phases): the same as between files.
    if (e instanceof AnalysisCancelled) throw new Cancelled();
    throw e;
  }
}

function runJobSteps(job: AnalysisJob, grammars: AnalyzeDeps, hooks?: JobHooks): DocumentView {
  const t0 = performance.now();
  const cancelled = hooks?.cancelled ? { cancelled: hooks.cancelled } : {};
  // Headers are read from disk in the worker, as the CLI reads them.
  const deps: AnalyzeDeps = { ...grammars, readInclude: readHeader };
  const neighbours = job.neighbours ?? [];
  const total = neighbours.length + 1;
  let byParts = false;
  const viewInput = (analysis: FileAnalysis) => (
    { uri: job.uri, version: job.version, text: job.text, analysis, userBindings: new Map(job.bindings), analysisMilliseconds: performance.now() - t0, byParts }
  );
  const view = (analysis: FileAnalysis): DocumentView => buildView(viewInput(analysis), job.view, () => checkCancelled(hooks));
  // Early views carry the diagnostics only (the server publishes nothing else of them).
  const firstView = (analysis: FileAnalysis): DocumentView => buildDiagnosticsView(viewInput(analysis), job.view);
  // A first answer from the files the document reaches by name, when others still have no model:
  // a large project's first diagnostics do not wait for every file. It is not given when a time
  // loop here is entered from another file (its starting state needs that file's whole program).
  const early = job.firstViews === false ? undefined : hooks?.early;
  if (early && neighbours.some((n) => !warmModel(job, n))) {
    const { first, up } = firstNeighbours(job);
    if (first.length < neighbours.length) {
      const ws = first.length > 0 ? modelsOf(job, first, deps, total, hooks) : undefined;
      checkCancelled(hooks);
      const analysis = analyzeSource({ path: job.path, text: job.text, language: job.language }, deps, { ...analyzeOptions(job), ...cancelled, workspace: ws });
      checkCancelled(hooks);
      if (!(up && analysis.timeLoops.length > 0)) {
        linkInJob(job, [analysis]);
        early(firstView(analysis));
      }
    }
  }
  const workspace = neighbours.length > 0 ? modelsOf(job, neighbours, deps, total, hooks) : undefined;
  checkCancelled(hooks);
  const document = analyseDocument(job, deps, { ...analyzeOptions(job), ...cancelled, workspace });
  const kept = document.analysis;
  byParts = document.byParts;
  // The job's own copy of the findings (linking adds findings and related locations; the kept
  // analysis stays as the core made it).
  const copy = (a: FileAnalysis): FileAnalysis => ({ ...a, findings: a.findings.map((f) => ({ ...f, ...(f.related ? { related: [...f.related] } : {}) })) });
  checkCancelled(hooks);
  // Findings that span two files: linked to the other end, and those of callers' time loops that
  // land here. Analysing a caller costs its whole time loop (every kernel it runs, in any file),
  // so the document's own findings go out first; when no caller adds any, they are final and go
  // out before the what-if, the port plans and the rest of the view.
  const callers = callersOf(job, kept, workspace);
  if (early) {
    const own = copy(kept);
    linkInJob(job, [own]);
    early(firstView(own));
  }
  checkCancelled(hooks);
  kept.complete?.();
  const analysis = copy(kept);
  linkCallers(job, analysis, workspace, deps, () => checkCancelled(hooks), callers, hooks?.cancelled);
  checkCancelled(hooks);
  return view(analysis);
}

/**
 * The last whole analysis of each document (per thread), with the inputs it was made from: an
 * edit of the same document with the same inputs re-analyses only the part of the file the edit
 * touches (core/incremental.ts). The 16 most recently analysed open documents.
 */
const documentBases = new Map<string, { inputs: string; workspace: readonly ProgramModel[] | undefined; base: EditBase }>();
const MAX_KEPT_DOCUMENTS = 16;

/** Counters of the editing path (per thread), for the debug request and the benchmark. */
export const editStats = { parts: 0, wholeFiles: 0, lastProcedures: 0 };

/** What besides the text shapes a document's analysis (the options of analyzeOptions). */
function inputsOf(job: AnalysisJob): string {
  return JSON.stringify([job.path, job.language, job.bindings, job.preprocess ?? null, job.profile ?? null, job.baseline, job.timeLoopVariables ?? null, job.root ?? null]);
}

/**
 * The document's analysis: from the last one by re-analysing the edited part when it can be, else
 * of the whole file. The result is the caller's to change (linking adds findings and related
 * locations); the kept base is not shared with it.
 */
function analyseDocument(job: AnalysisJob, deps: AnalyzeDeps, options: AnalyzeOptions): { analysis: FileAnalysis; byParts: boolean } {
  const input = { path: job.path, text: job.text, language: job.language };
  const inputs = inputsOf(job);
  const ws = options.workspace;
  const kept = documentBases.get(job.path);
  const sameWorkspace = kept !== undefined && kept.inputs === inputs && (kept.workspace ?? []).length === (ws ?? []).length && (ws ?? []).every((m, i) => kept.workspace![i] === m);
  let base: EditBase | undefined;
  let byParts = false;
  if (sameWorkspace) {
    // A kept analysis whose job went stale before its what-if ran is completed first.
    kept.base.analysis.complete?.();
    const edit = analyzeEdit(kept.base, input, deps, options);
    if (edit) {
      base = edit.base;
      byParts = true;
      editStats.parts++;
      editStats.lastProcedures = edit.procedures;
    }
  }
  if (!base) {
    // A whole analysis runs to its end even when a newer edit arrives meanwhile: it becomes the
    // kept analysis that the newer edit is re-analysed from by parts (cancelling it would make
    // the newer job analyse the whole file again). Its what-if is left to the job (complete).
    // (A workspace check's file is not kept: its analysis stays cancellable and complete.)
    const { cancelled: _, ...uncancelled } = options;
    base = { text: job.text, analysis: job.firstViews === false ? analyzeSource(input, deps, options) : analyzeSource(input, deps, { ...uncancelled, deferWhatIf: true }) };
    editStats.wholeFiles++;
  }
  // Kept for open documents only (a workspace check's files are not edited), a few at a time:
  // each is a whole analysis.
  if (job.firstViews !== false) {
    documentBases.delete(job.path);
    if (documentBases.size >= MAX_KEPT_DOCUMENTS) documentBases.delete(documentBases.keys().next().value!);
    documentBases.set(job.path, { inputs, workspace: ws, base });
  }
  return { analysis: base.analysis, byParts };
}

/** Drops every kept analysis (tests: a cold job after warm ones). */
export function forgetDocuments(): void {
  documentBases.clear();
}
