/**
 * The one entry point of the analysis core: source text in, model + ledgers + findings out.
 * The CLI, the language server and the tests all call `analyzeSource`. It never throws: an
 * internal failure is returned as `internalErrors` beside whatever was built before it.
 */
import type { Parser } from 'web-tree-sitter';
import * as S from './symbolic';
import type { LoopStmt, Procedure, ProgramModel, Stmt } from './model/program';
import { rangeWithin } from './ranges';
import { walkStatements } from './model/values';
import { buildCModel } from './frontend/c';
import { emptyModel } from './model/empty';
import { ownModelInWorkspace, withWorkspace } from './model/workspace';
import { substituteIndexLocals } from './model/indexLocals';
import { buildFortranModel } from './frontend/fortran';
import { type DirectiveModel, preprocess } from './preprocessor';
import { type BindingMap, type Quantity, callSiteBindings, procedureBindings, quantity, userKeys } from './analysis/bindings';
import { type LoopNest, type RejectedLoop, type TimeLoop, nestIterations, scanLoops, unknownTripSymbol } from './analysis/nests';
import { type NestCost, nestCost } from './cost/ledger';
import { raceFindings } from './analysis/races';
import { type TimeLoopLedger, type TransferReport, dataLedger, programTransfers } from './data/ledger';
import { isMain } from './data/entry';
import { applyLineEdits } from './data/edits';
import { DEFAULT_PROFILE, type MachineProfile, presetProfile } from './machine/profiles';
import { nestEstimate } from './estimate/nest';
import { type StepWork, isParallelNest, stepEstimate, stepWork } from './estimate/step';
import type { Baseline, NestEstimate, StepEstimate } from './estimate/types';
import type { Directive, DirectiveFamily, Finding, Range, SourceLanguage } from './types';
import { portPlans, portable, type TimeLoopPlans } from './port/plans';
import { type NotUnderstood, notUnderstood } from './analysis/understood';

export interface AnalyzeInput {
  path: string;
  text: string;
  language: SourceLanguage;
  /** The file's model when the caller built it already (to analyse a workspace without parsing twice). */
  model?: ProgramModel;
}

export interface AnalyzeDeps {
  /** A tree-sitter parser for C/C++; undefined for languages with their own reader. */
  parserFor(language: SourceLanguage): Parser | undefined;
  /** Reads a header named by `#include "…"` (a path); undefined when there is none. Absent: headers are not read. */
  readInclude?(path: string): string | undefined;
}

/** How the preprocessor sees the file: the user's `-D`/`-U`, include folders and the directive model. */
export interface PreprocessSettings {
  /** `--define NAME[=VALUE]`: NAME → VALUE (`1` when no value is given). */
  defines?: ReadonlyMap<string, string>;
  /** `--undefine NAME`, applied after the predefined macros. */
  undefines?: readonly string[];
  /** `--include-dir DIR`: searched after the including file's folder. */
  includeDirs?: readonly string[];
  /** Which of `_OPENACC`/`_OPENMP` is predefined; default: from the directives the file holds. */
  directives?: DirectiveModel | 'both';
}

export interface AnalyzeOptions extends PreprocessSettings {
  /** The user's size bindings (`--bind NX=600`); they override everything the file says. */
  bindings?: ReadonlyMap<string, number>;
  /** The machine the estimates are for; default the `pcie4-hbm2e` preset. */
  profile?: MachineProfile;
  /**
   * Host baseline of the speedups: the whole node or one core. Default: one core for serial code
   * (no directive, no `do concurrent`), the whole node when the code already runs in parallel.
   */
  baseline?: Baseline;
  /** Write the port plans of time loops that run on the host (default true; the analyses of a port set it false). */
  plans?: boolean;
  /** The model a port writes (default: the file's own, else OpenACC). */
  portFamily?: DirectiveFamily;
  /** Host cache for the layer condition; default the profile's cache per core. */
  cacheBytes?: number;
  /** Device memory for `exceeds-device-memory`; default the profile's. */
  deviceMemoryBytes?: number;
  /** Internal: false when analysing the file with the suggested edits applied (no further what-if). */
  whatIf?: boolean;
  /** Also predict the transfers of a whole run of a program without time loops (`verify`). */
  programRun?: boolean;
  /** Models of the other files of the workspace: calls into them are followed. */
  workspace?: readonly ProgramModel[];
  /**
   * Asked between steps (nests, the data ledger, the races, the what-if and port re-analyses):
   * true once the caller no longer wants this result (a newer edit). The analysis then stops by
   * throwing AnalysisCancelled, and the caller's caches stay as they were.
   */
  cancelled?: () => boolean;
  /** The project root: messages name other files relative to it when both lie inside (else to this file's folder). */
  projectRoot?: string;
  /** Loop variables the user names as time-loop variables (`--time-loop iter`); default none. */
  timeLoopVariables?: readonly string[];
  /**
   * Internal (the editor's re-analysis of one part of a file, core/incremental.ts): the nests of
   * the rest of the file, whose strides shape a linearised array of the same name as they do in a
   * whole-file analysis. Merged with this analysis's own nests in source order.
   */
  outsideNests?: readonly NestReport[];
  /**
   * Internal (the editor): leave the what-if and port re-analyses to `FileAnalysis.complete`, so
   * the findings can be shown before them.
   */
  deferWhatIf?: boolean;
  /** Internal: false when only the ledgers and nests are read (the what-if re-analysis): no race check. */
  races?: boolean;
}

/** The program model of one file (what `analyzeSource` starts from); never throws. */
export function buildModel(input: AnalyzeInput, deps: AnalyzeDeps, settings: PreprocessSettings = {}): ProgramModel {
  try {
    const pp = preprocess(input.text, {
      path: input.path,
      language: input.language,
      defines: settings.defines,
      undefines: settings.undefines,
      includeDirs: settings.includeDirs,
      model: settings.directives,
      readInclude: deps.readInclude,
    });
    // Index locals are substituted here, so the models of other workspace files get it too.
    if (input.language === 'fortran') return oneOffloadModel(substituteIndexLocals(buildFortranModel(input.text, input.path, pp)), pp.models);
    const parser = deps.parserFor(input.language);
    if (parser) return oneOffloadModel(substituteIndexLocals(buildCModel(parser, pp, input.path, input.language)), pp.models);
  } catch {
    // The front ends are written not to throw; an empty model is what remains if one did.
  }
  return emptyModel(input.path, input.language);
}

/** An offload directive of a model: every OpenACC directive; OpenMP `target…` and `declare target`. */
function isOffloadOf(d: Directive, family: DirectiveFamily): boolean {
  if (d.family !== family) return false;
  return family === 'openacc' || /^(target\b|(begin |end )?declare target\b|end target\b)/.test(d.construct);
}

/**
 * One build compiles one offload model: with gcc -fopenacc the `omp target` lines are ignored,
 * and with -fopenmp the `acc` lines are. A file that holds both outside any `#ifdef` is read in
 * the model the preprocessor chose (its `--directives`, its compile flags, or OpenACC when the
 * file has both), and the other model's offload directives are left out with one note saying
 * how to read them instead. Host OpenMP (`parallel for`) stays: it runs beside OpenACC.
 */
const compiledModels = new WeakMap<ProgramModel, readonly DirectiveFamily[]>();

function oneOffloadModel(model: ProgramModel, models: readonly DirectiveFamily[]): ProgramModel {
  compiledModels.set(model, models);
  if (models.length !== 1) return model;
  const other: DirectiveFamily = models[0] === 'openacc' ? 'openmp' : 'openacc';
  // Only where the two stand for each other: on the same statement (a loop under both an `acc`
  // and an `omp target` directive) or as neighbouring standalone directives with no code between
  // (`!$omp target update from(a)` next to `!$acc update host(a)`). gcc can compile both models
  // at once, so directives of both models on different code all run, and stay.
  const dropped: Directive[] = [];
  const mixed = new Set<Procedure>();
  const isChosen = (d: Directive): boolean => isOffloadOf(d, models[0]);
  const isOther = (d: Directive): boolean => isOffloadOf(d, other);
  const scan = (stmts: Stmt[], p: Procedure): void => {
    for (let k = 0; k < stmts.length; k++) {
      const s = stmts[k];
      if (s.directives.some(isChosen) && s.directives.some(isOther)) {
        dropped.push(...s.directives.filter(isOther));
        mixed.add(p);
      }
      if (s.kind === 'directive') {
        let e = k;
        while (e + 1 < stmts.length && stmts[e + 1].kind === 'directive') e++;
        const run = stmts.slice(k, e + 1).map((x) => (x as Extract<Stmt, { kind: 'directive' }>).directive);
        if (run.some(isChosen) && run.some(isOther)) {
          dropped.push(...run.filter(isOther));
          mixed.add(p);
        }
        k = e;
        continue;
      }
      if (s.kind === 'loop' || s.kind === 'block') scan(s.body, p);
      else if (s.kind === 'if') {
        scan(s.then, p);
        scan(s.otherwise, p);
      }
    }
  };
  for (const p of model.procedures) scan(p.body, p);
  if (dropped.length === 0) return model;
  dropped.sort((a, b) => a.range.start.line - b.range.start.line);
  const gone = new Set(dropped);
  model.directives = model.directives.filter((d) => !gone.has(d));
  const prune = (stmts: Stmt[]): Stmt[] => {
    const kept = stmts.filter((s) => !(s.kind === 'directive' && gone.has(s.directive)));
    for (const s of kept) {
      if (s.directives.some((d) => gone.has(d))) s.directives = s.directives.filter((d) => !gone.has(d));
      if (s.kind === 'loop' || s.kind === 'block') s.body = prune(s.body);
      else if (s.kind === 'if') {
        s.then = prune(s.then);
        s.otherwise = prune(s.otherwise);
      }
    }
    return kept;
  };
  for (const p of mixed) p.body = prune(p.body);
  const name = (f: DirectiveFamily): string => (f === 'openacc' ? 'OpenACC' : 'OpenMP');
  const flag = (f: DirectiveFamily): string => (f === 'openacc' ? '-fopenacc' : '-fopenmp');
  model.findings.push({
    code: 'inactive-offload-branch', severity: 'info', range: dropped[0].range,
    message: `${mixed.size === 1 ? `\`${[...mixed][0].name}\` pairs` : `${mixed.size} procedures pair`} ${name(models[0])} and ${name(other)} offload directives on the same code outside any \`#ifdef\`, as alternatives for a build of one model or the other (${flag(models[0])} ignores the ${name(other)} ones), so the analysis reads the ${name(models[0])} directives and leaves out ${dropped.length} ${name(other)} one${dropped.length === 1 ? '' : 's'} (from line ${dropped[0].range.start.line + 1}). To read those instead: \`--directives ${other}\`, or ${flag(other)} in the compile flags.`,
  });
  return model;
}

/**
 * The user bindings that name nothing a figure could rest on: no macro, constant, variable,
 * parameter, member path in a size or bound, or trip-count symbol of this file (Fortran names
 * match in any case). A typo in `--bind` would otherwise be ignored silently.
 */
export function unmatchedBindings(model: ProgramModel, user: ReadonlyMap<string, number>): string[] {
  const names = new Set<string>(model.bindings.keys());
  const addExpr = (e: S.Expr | undefined): void => { if (e) for (const x of S.freeSymbols(e)) names.add(x); };
  for (const g of model.globals) { names.add(g.name); g.dims.forEach(addExpr); addExpr(g.elementCount); }
  for (const p of model.procedures) {
    for (const d of [...p.params, ...p.locals]) { names.add(d.name); d.dims.forEach(addExpr); addExpr(d.elementCount); }
    for (const k of p.bindings.keys()) names.add(k);
    walkStatements(p.body, (st) => {
      if (st.kind !== 'loop') return;
      if (st.tripSymbol) names.add(st.tripSymbol);
      [st.lower, st.upper, st.step, st.tripCount].forEach(addExpr);
    });
  }
  return [...user.keys()].filter((k) => !/^trips_l\d+$/i.test(k) && !userKeys(model, k).some((n) => names.has(n)));
}

/**
 * One core for serial code; the whole node when the code already runs in parallel on the host
 * (OpenMP `parallel`/`for`/`do`/`loop`/`taskloop` without `target`, Fortran `do concurrent`) or
 * offloads (a port compares with the node it replaces).
 */
const baselines = new WeakMap<ProgramModel, Baseline>();

/** Serial code is measured against one core, code with directives or `do concurrent` against the node (once per model). */
export function defaultBaseline(model: ProgramModel): Baseline {
  let b = baselines.get(model);
  if (b === undefined) {
    b = modelBaseline(model);
    baselines.set(model, b);
  }
  return b;
}

function modelBaseline(model: ProgramModel): Baseline {
  if (model.directives.length > 0) return 'node';
  let concurrent = false;
  for (const p of model.procedures) {
    walkStatements(p.body, (s) => {
      if (s.kind === 'loop' && /^\s*do\s+concurrent\b/i.test(s.header)) concurrent = true;
      return !concurrent;
    });
    if (concurrent) return 'node';
  }
  return 'core';
}

/** A core's share of a server CPU's L2 plus L3 (from memory); used by scripts without a profile. */
export const DEFAULT_CACHE_BYTES = 2 * 1024 * 1024;

export interface NestReport {
  nest: LoopNest;
  iterations: Quantity;
  /** True when a bound depends on an outer loop variable, so the count is an approximation. */
  approximate: boolean;
  cost: NestCost;
  estimate?: NestEstimate;
}

export interface TimeLoopReport {
  timeLoop: TimeLoop;
  steps: Quantity;
  /** The per-step data ledger; absent for a time loop nested inside another (the outer one is the step). */
  ledger?: TimeLoopLedger;
  estimate?: StepEstimate;
  /**
   * The what-if behind `estimate.withRegion`: this loop's ledger in the file with the suggested
   * edits applied (its lines are lines of the edited text) and its step work. The planning report
   * draws the transfers before and after from it.
   */
  withRegion?: WhatIf;
  /** For a time loop that runs on the host: the port plans (naive, resident, what stays). */
  plans?: TimeLoopPlans;
}

/** One time loop of the file analysed again with the suggested data regions applied. */
export interface WhatIf {
  ledger: TimeLoopLedger;
  work: StepWork | null;
  /** The nests of the edited file (and of other files it runs), whose costs the step work holds. */
  nests: NestReport[];
}

export interface FileAnalysis {
  path: string;
  /** The machine profile the estimates used. */
  profile: MachineProfile;
  language: SourceLanguage;
  model: ProgramModel;
  directiveFamilies: DirectiveFamily[];
  nests: NestReport[];
  /** Nests of other workspace files that this file's time loops run (costed here, reported there). */
  externalNests: NestReport[];
  timeLoops: TimeLoopReport[];
  /** Loops around kernels or nests that were not taken as time loops, with the reason. */
  notTimeLoops: RejectedLoop[];
  findings: Finding[];
  internalErrors: string[];
  /** With `programRun`, for a program that has no time loop: its transfers from `main` to the end. */
  programTransfers?: TransferReport[];
  /** The host baseline the speedups use, and why when it was chosen from the code. */
  baseline: Baseline;
  baselineReason?: string;
  /** The port of the time loops that run on the host (`plans` per time loop, and the ported text). */
  port?: { text: string; naiveText: string };
  /**
   * With `deferWhatIf`: runs the what-if and port steps (the time loops' estimates with the
   * suggested regions, the port plans) and removes itself. The findings are final without it.
   */
  complete?: () => void;
  /** User bindings (`--bind`) that name nothing in this file (the CLI warns when no file uses one). */
  unmatchedBindings: string[];
  /** What the model could not read in the loop nests, and what it does to their figures. */
  notUnderstood: NotUnderstood[];
}

/** Thrown by analyzeSource when `options.cancelled()` says the result is no longer wanted. */
export class AnalysisCancelled extends Error {
  constructor() {
    super('analysis cancelled');
  }
}

export function analyzeSource(input: AnalyzeInput, deps: AnalyzeDeps, options: AnalyzeOptions = {}): FileAnalysis {
  const stopIfCancelled = (): void => {
    if (options.cancelled?.()) throw new AnalysisCancelled();
  };
  const profile = options.profile ?? presetProfile(DEFAULT_PROFILE)!;
  let baseline: Baseline = options.baseline ?? 'node';
  const result: FileAnalysis = {
    path: input.path,
    profile,
    language: input.language,
    model: emptyModel(input.path, input.language),
    directiveFamilies: [],
    nests: [],
    externalNests: [],
    timeLoops: [],
    notTimeLoops: [],
    findings: [],
    internalErrors: [],
    baseline,
    unmatchedBindings: [],
    notUnderstood: [],
  };
  try {
    const built = input.model ?? buildModel(input, deps, options);
    result.model = built;
    if (!options.baseline) {
      // One program, one baseline: a serial file of a project whose other files run in parallel
      // is measured against the whole node too. A file with its own main program is a program
      // of its own (a folder of examples is not one program).
      const own = defaultBaseline(built);
      const program = built.procedures.some((p) => (p.program || isMain(p.name)) && !p.origin);
      const elsewhere = own === 'core' && !program && (options.workspace ?? []).some((m) => m !== built && m.path !== built.path && defaultBaseline(m) === 'node');
      baseline = elsewhere ? 'node' : own;
      result.baseline = baseline;
      result.baselineReason = baseline === 'core'
        ? 'serial code: one core'
        : elsewhere ? 'a program whose other files already run in parallel: the whole node' : 'code that already runs in parallel: the whole node';
    }
    // The file as its workspace resolves it (a Fortran `use` of another file's module): the
    // views read bindings and procedures from this model, so they must see the same names. A
    // re-read file gets its index locals substituted like every model buildModel makes.
    if (options.workspace && options.workspace.length > 0) {
      const resolved = ownModelInWorkspace(built, options.workspace);
      // The file re-read with the workspace's modules: the same one offload model as it was built in.
      if (resolved !== built) result.model = oneOffloadModel(substituteIndexLocals(resolved), compiledModels.get(built) ?? []);
    }
    // The model the analyses see: this file's, plus the procedures of the rest of the workspace
    // it reaches (what it calls, what calls it). A time loop here needs the whole program (its
    // starting state runs from the program's entry, its step runs other files' nests), so the
    // model is then widened to every procedure and the file's loops scanned again.
    const ws = options.workspace && options.workspace.length > 0 ? options.workspace : undefined;
    let model = ws ? withWorkspace(result.model, ws, options.programRun ? 'all' : 'calls') : result.model;
    const scanOwn = (): ReturnType<typeof scanLoops> => scanLoops(model, { timeLoopVariables: options.timeLoopVariables, only: (p) => !p.origin });
    let scan = scanOwn();
    if (ws && !options.programRun && scan.timeLoops.length > 0) {
      model = withWorkspace(result.model, ws, 'all');
      scan = scanOwn();
    }
    result.findings.push(...result.model.findings);
    result.directiveFamilies = [...new Set(result.model.directives.map((d) => d.family))].sort();
    const user = options.bindings ?? new Map<string, number>();
    const callSite = callSiteBindings(model);
    const bindingsOf = new Map<string, BindingMap>();
    // The first procedure of each name (as a search of the list finds it), indexed once.
    let byName: Map<string, Procedure> | undefined;
    const firstByName = (): Map<string, Procedure> => {
      if (!byName) {
        byName = new Map();
        for (const p of model.procedures) if (!byName.has(p.name)) byName.set(p.name, p);
      }
      return byName;
    };
    const bind = (nest: { procedure: { name: string } }): BindingMap => {
      // Bindings are per procedure and built once; the ledgers ask for them many times.
      const name = nest.procedure.name;
      let b = bindingsOf.get(name);
      if (!b) {
        b = procedureBindings(model, firstByName().get(name), user, callSite);
        bindingsOf.set(name, b);
      }
      return b;
    };
    // The other files' loops matter only when a time loop here may run them (their nests are
    // costed for its step); without one they are not scanned, so a file of a large workspace
    // costs its own size, not the project's.
    if ((scan.timeLoops.length > 0 || options.programRun) && model.procedures.some((p) => p.origin)) {
      const rest = scanLoops(model, { timeLoopVariables: options.timeLoopVariables, only: (p) => !!p.origin });
      scan.nests.push(...rest.nests);
      scan.timeLoops.push(...rest.timeLoops);
      scan.rejected.push(...rest.rejected);
    }
    result.notTimeLoops = scan.rejected.filter((r) => !r.procedure.origin);
    // Nests of other files are costed too (a time loop here may run them) but reported there.
    const external = result.externalNests;
    let costed = 0;
    for (const nest of scan.nests) {
      // Between nests (every 16, the check is a load of a shared flag in the editor's worker).
      if ((++costed & 15) === 0) stopIfCancelled();
      const it = nestIterations(nest);
      const iterations = quantity(it.expr, bind(nest), it.display);
      const cost = nestCost(nest, model, bind(nest), iterations.value, { cacheBytes: options.cacheBytes ?? profile.host.cacheBytesPerCore });
      const report: NestReport = { nest, iterations, approximate: it.triangular, cost };
      report.estimate = nestEstimate(iterations.value, cost, profile, baseline);
      (nest.procedure.origin ? external : result.nests).push(report);
    }
    stopIfCancelled();
    if (options.races !== false) result.findings.push(...raceFindings(model, scan.nests.filter((n) => !n.procedure.origin), (n) => bind(n), input.text));
    stopIfCancelled();
    const ownTimeLoops = scan.timeLoops.filter((t) => !t.procedure.origin);
    const allNests = external.length > 0 ? [...result.nests, ...external] : result.nests;
    const strides = new Map<string, S.Expr[][]>();
    for (const r of options.outsideNests ? [...inSourceOrder([...result.nests, ...options.outsideNests]), ...external] : allNests) {
      for (const f of r.cost.footprints) strides.set(f.array, [...(strides.get(f.array) ?? []), f.strides]);
    }
    const data = dataLedger(model, input.text, ownTimeLoops, (p) => bind({ procedure: p }), (k) => strides.get(k) ?? [], {
      deviceMemoryBytes: options.deviceMemoryBytes ?? profile.device.memoryBytes,
      ...(options.projectRoot ? { projectRoot: options.projectRoot } : {}),
    });
    stopIfCancelled();
    result.findings.push(...data.findings);
    if (options.programRun && data.ledgers.length === 0) {
      result.programTransfers = programTransfers(model, (p) => bind({ procedure: p }), (k) => strides.get(k) ?? []);
    }
    // The time loops' reports, with the step work once the suggested regions are in (what-if).
    const timeLoopReports = (fixed: (WhatIf | null)[]): TimeLoopReport[] => ownTimeLoops.map((tl) => {
      const steps = tl.loop.tripCount ?? S.sym(unknownTripSymbol(tl.loop));
      const ledger = data.ledgers.find((l) => l.loop === tl.loop);
      const k = ledger ? data.ledgers.indexOf(ledger) : -1;
      const estimate = ledger ? stepEstimate(ledger, allNests, profile, baseline, fixed[k]?.work) : undefined;
      return { timeLoop: tl, steps: quantity(steps, bind(tl)), ledger, estimate, ...(fixed[k] ? { withRegion: fixed[k]! } : {}) };
    });
    // The what-if and the port re-analyse the file with edits in: they change no finding, so an
    // editor may show the findings first and run them after (`deferWhatIf`).
    const whatIfAndPort = (): void => {
      const fixed = options.whatIf === false ? [] : whatIf(input, deps, options, data.ledgers);
      result.timeLoops = timeLoopReports(fixed);
      stopIfCancelled();
      if (options.plans !== false && portable(result).length > 0) {
        const again = (text: string, what: boolean): FileAnalysis =>
          analyzeSource({ ...input, text, model: undefined }, deps, { ...options, baseline, plans: false, whatIf: what, programRun: false });
        const port = portPlans(result, input.text, again, profile, baseline, { family: options.portFamily });
        if (port) {
          result.port = { text: port.text, naiveText: port.naiveText };
          for (const tl of result.timeLoops) {
            const p = port.plans.get(tl);
            if (p) tl.plans = p;
          }
        }
      }
    };
    const deferred = options.deferWhatIf === true && (options.whatIf !== false || (options.plans !== false && ownTimeLoops.length > 0));
    if (!deferred) whatIfAndPort();
    else result.timeLoops = timeLoopReports([]);
    result.findings.push(...unknownExtentFindings(result));
    result.notUnderstood = notUnderstood(result.nests, model.language === 'fortran');
    if (options.bindings && options.bindings.size > 0) result.unmatchedBindings = unmatchedBindings(model, options.bindings);
    stopIfCancelled();
    if (deferred) {
      result.complete = () => {
        delete result.complete;
        try {
          whatIfAndPort();
        } catch (err) {
          if (err instanceof AnalysisCancelled) throw err;
          result.internalErrors.push(err instanceof Error ? `${err.message}\n${err.stack ?? ''}` : String(err));
        }
      };
    }
  } catch (err) {
    if (err instanceof AnalysisCancelled) throw err;
    result.internalErrors.push(err instanceof Error ? `${err.message}\n${err.stack ?? ''}` : String(err));
  }
  dropNoOpFixes(result.findings, input.text);
  result.findings.sort((a, b) => a.range.start.line - b.range.start.line || a.range.start.col - b.range.start.col);
  return result;
}

/** Nest reports in source order (the order a scan of the file finds them). */
export function inSourceOrder(list: readonly NestReport[]): NestReport[] {
  const at = (r: NestReport): Range['start'] => r.nest.root.keywordRange.start;
  return [...list].sort((a, b) => at(a).line - at(b).line || at(a).col - at(b).col);
}

/**
 * A fix that would leave the text as it is (`u[0:n]` replaced by `u[0:n]`) is no fix: it is
 * dropped, whatever produced it. Lines are split once, and only when some fix replaces text.
 */
function dropNoOpFixes(findings: Finding[], text: string): void {
  let lines: string[] | undefined;
  const slice = (r: Range): string | undefined => {
    lines ??= text.split('\n');
    if (r.start.line === r.end.line) return lines[r.start.line]?.slice(r.start.col, r.end.col);
    const parts = lines.slice(r.start.line, r.end.line + 1);
    if (parts.length === 0) return undefined;
    parts[parts.length - 1] = parts[parts.length - 1].slice(0, r.end.col);
    parts[0] = parts[0].slice(r.start.col);
    return parts.join('\n');
  };
  for (const f of findings) {
    if (!f.fixes) continue;
    const kept = f.fixes.filter((fix) => fix.edits.some((e) => e.newText !== (e.range.start.line === e.range.end.line && e.range.start.col === e.range.end.col ? '' : slice(e.range))));
    if (kept.length === f.fixes.length) continue;
    if (kept.length > 0) f.fixes = kept;
    else delete f.fixes;
  }
}

/**
 * The step work of each time loop once the suggested data regions are applied: the file is
 * analysed again with the edits in, so "what the fix is worth" comes from the same model as
 * everything else rather than from a guess. Returns one entry per ledger (null when no region).
 */
function whatIf(input: AnalyzeInput, deps: AnalyzeDeps, options: AnalyzeOptions, ledgers: TimeLoopLedger[]): (WhatIf | null)[] {
  const edits = ledgers.flatMap((l) => l.dataRegion?.edits ?? []);
  if (edits.length === 0) return ledgers.map(() => null);
  // Only its ledgers and nests are read: its race findings would be dropped, so they are not made.
  const after = analyzeSource({ ...input, model: undefined, text: applyLineEdits(input.text, edits) }, deps, { ...options, whatIf: false, races: false });
  const afterLedgers = after.timeLoops.map((t) => t.ledger).filter((l): l is TimeLoopLedger => !!l);
  // The k-th ledger of a procedure before the edits is its k-th ledger after them (grouped by
  // procedure once: a file of a thousand time loops must not search them per time loop).
  const byProcedure = (list: TimeLoopLedger[]): Map<string, TimeLoopLedger[]> => {
    const m = new Map<string, TimeLoopLedger[]>();
    for (const l of list) {
      const g = m.get(l.procedure.name);
      if (g) g.push(l);
      else m.set(l.procedure.name, [l]);
    }
    return m;
  };
  const before = byProcedure(ledgers);
  const afterBy = byProcedure(afterLedgers);
  // One list of the nests for every time loop (stepWork indexes a list once).
  const nests = [...after.nests, ...after.externalNests];
  return ledgers.map((l) => {
    if (!l.dataRegion || l.dataRegion.edits.length === 0) return null;
    const mine = before.get(l.procedure.name)!.indexOf(l);
    const match = afterBy.get(l.procedure.name)?.[mine];
    return match ? { ledger: match, work: stepWork(match, nests), nests } : null;
  });
}

/**
 * One `unknown-extent` finding per unbound symbol, at its first use, naming every loop it leaves
 * symbolic and how to bind it. One finding per symbol (not per loop) keeps the list readable.
 */
export function unknownExtentFindings(a: FileAnalysis): Finding[] {
  const uses = new Map<string, { lines: number[]; first: NestReport | TimeLoopReport }>();
  const note = (sym: string, line: number, r: NestReport | TimeLoopReport): void => {
    const u = uses.get(sym) ?? { lines: [], first: r };
    u.lines.push(line);
    uses.set(sym, u);
  };
  for (const r of a.nests) for (const s of r.iterations.unbound ?? []) note(s, r.nest.root.keywordRange.start.line + 1, r);
  for (const r of a.timeLoops) for (const s of r.steps.unbound ?? []) note(s, r.timeLoop.loop.keywordRange.start.line + 1, r);
  const out: Finding[] = [];
  for (const [sym, u] of uses) {
    const loop = 'nest' in u.first ? u.first.nest.root : u.first.timeLoop.loop;
    const lines = [...new Set(u.lines)];
    const one = lines.length === 1;
    const where = one ? `the trip count of the loop at line ${lines[0]} stays` : `the trip counts of ${lines.length} loops (lines ${lines.join(', ')}) stay`;
    const fortran = a.language === 'fortran';
    const give = fortran ? 'or make it a `parameter`' : 'or give it a `#define`, a `const` initialisation or a `-D` (`--define`)';
    let own: LoopStmt | undefined;
    walkStatements([loop], (s) => {
      if (s.kind === 'loop' && s.tripSymbol === sym) own ??= s;
    });
    const how = own
      ? `The trip count of the loop at line ${own.keywordRange.start.line + 1} cannot be read from ${own.counter ? `its header or its counter \`${own.counter.name}\`${own.counter.start ? '' : ' (its start value is not known)'}` : 'its header (a while loop or non-affine bounds)'}, so it stays symbolic as \`${sym}\`${one && lines[0] === own.keywordRange.start.line + 1 ? '' : ` and so ${one ? `does the loop at line ${lines[0]}` : `do ${lines.length} loops (lines ${lines.join(', ')})`}`}; bind \`${sym}\` to the expected count with \`--bind ${sym}=<count>\` or the size-bindings setting.`
      : sym.startsWith('trips_L')
      ? `The trip count of the loop at line ${sym.slice(7)} cannot be read from its header (a while loop or non-affine bounds), so it stays symbolic${one && String(lines[0]) === sym.slice(7) ? '' : ` and so ${one ? `does the loop at line ${lines[0]}` : `do ${lines.length} loops (lines ${lines.join(', ')})`}`}; bind \`${sym}\` to the expected count with \`--bind ${sym}=<count>\` or the size-bindings setting.`
      : `\`${sym}\` has no value the tool can see, so ${where} symbolic; bind it with \`--bind ${sym}=<value>\` (or the size-bindings setting), ${give}.`;
    out.push({ code: 'unknown-extent', severity: 'info', range: loop.keywordRange, message: how });
  }
  return out;
}
