/**
 * Every message between the Offload Ledger extension and its language server that the Language
 * Server Protocol does not define, declared once and imported by both sides (client/src and
 * server/src/lsp), so a change of shape breaks the build of both. Each entry says which way it
 * travels. Standard LSP messages (diagnostics, hover, code lens, inlay hints, code actions,
 * workspace/configuration, work-done progress) are not repeated here.
 */
import { NotificationType, RequestType } from 'vscode-languageserver-protocol';
import type { NestEstimate, StepEstimate } from '../core/estimate/types';

/** Commands the extension registers in VS Code (the code lens asks the client to run one). */
export const ClientCommands = {
  checkWorkspace: 'offloadLedger.checkWorkspace',
  openPlanningView: 'offloadLedger.openPlanningView',
  chooseProfile: 'offloadLedger.chooseProfile',
  measureMachine: 'offloadLedger.measureMachine',
  measureTransfers: 'offloadLedger.measureTransfers',
  restartServer: 'offloadLedger.restartServer',
  showOutput: 'offloadLedger.showOutput',
} as const;

/**
 * Commands the server executes (client → server, `workspace/executeCommand`). Their ids differ
 * from the client commands because vscode-languageclient registers every server command as a VS
 * Code command of the same id.
 */
export const ServerCommands = {
  /** Arguments: none. Result: WorkspaceCheckResult. Reports LSP work-done progress. */
  checkWorkspace: 'offloadLedger.server.checkWorkspace',
} as const;

export interface WorkspaceCheckResult {
  files: number;
  findings: { error: number; warning: number; info: number; hint: number };
  /** Files that could not be read (binary, too large, unreadable), with the reason. */
  skipped: { path: string; reason: string }[];
  milliseconds: number;
  cancelled: boolean;
}

export type ServerState = 'ready' | 'analysing' | 'error';

export interface StatusParams {
  state: ServerState;
  /** The machine profile in force (a preset name, with "+measured host" when a measured host profile is loaded). */
  profile: string;
  baseline: string;
  /** Set with state "error": what went wrong, in one sentence. */
  message?: string;
}

/** server → client: the server's state and active profile, for the status bar. */
export namespace StatusNotification {
  export const method = 'offloadLedger/status';
  export const type = new NotificationType<StatusParams>(method);
}

/**
 * The state of the project index: the other files of the project (siblings, the compilation
 * database's sources, the workspace check's files) whose procedures and modules the analysis
 * follows calls into. "indexing" while their models are built for a document (only when some
 * are not cached yet) or while a workspace check runs; "ready" after, with the number of files
 * the server knows.
 */
export interface ProjectStatusParams {
  state: 'indexing' | 'ready';
  /** While indexing: files ready, of `total`. */
  done?: number;
  total?: number;
  /** Files of the project the server has read so far (documents and the files they read, the check's files). */
  files: number;
  /** While indexing: "workspace" for the workspace check, else the URI of the document being analysed. */
  scope?: string;
}

/** server → client: "indexing N of M files" while the project index is built, then "ready" with the file count. */
export namespace ProjectStatusNotification {
  export const method = 'offloadLedger/projectStatus';
  export const type = new NotificationType<ProjectStatusParams>(method);
}

/** Counters of the analysis engine (server/src/lsp/analysis/engine.ts). */
export interface EngineCounters {
  kind: 'worker' | 'in-process';
  /** Analysis threads started: 1 for a worker that stayed warm; more only after a crash or a timeout. */
  workerStarts: number;
  /** Thread id of the first worker (0 in process, -1 when none runs). */
  workerThreadId: number;
  /** Worker threads running now (at most two: a second one takes the newest job while the first finishes a stale step). */
  workers: number;
  jobsStarted: number;
  jobsCompleted: number;
  /** Running jobs marked stale by a newer edit of the same document (their results were dropped). */
  jobsCancelled: number;
  /** Workers replaced because a stale job did not stop in time. */
  timeouts: number;
  /** Models of other project files built, and found unchanged in the cache, by the analysis thread. */
  modelsBuilt: number;
  modelHits: number;
  /** Document analyses made from the last one by re-analysing only the edited part, and whole-file ones. */
  editsByPart: number;
  wholeAnalyses: number;
}

export interface DebugStats {
  engine: EngineCounters;
  /** Analyses answered from a document's last analysis (same text and settings), without the engine. */
  viewCacheHits: number;
  /** Files of workspace checks answered from their last analysis. */
  checkCacheHits: number;
}

/**
 * client → server: the server's counters, for tests, benchmarks and bug reports (no parameters).
 * The server also logs "analysis worker started (#n, thread t)" whenever a worker thread starts.
 */
export namespace DebugStatsRequest {
  export const method = 'offloadLedger/debugStats';
  export const type = new RequestType<void, DebugStats, void>(method);
}

export interface PlanningParams {
  /** One document, or every analysed document when absent. */
  uri?: string;
}

/** The fields of one loop of the JSON report (server/schema/report.schema.json) the planning view reads. */
export interface ReportLoop {
  line: number;
  endLine: number;
  function: string;
  variables: string[];
  offloaded: boolean;
  directive: string | null;
  iterations: { value: number | null; expr: string; unbound?: string[] };
  flopsPerIteration: number;
  bytesPerIteration: { device: number; host: number };
  arithmeticIntensity: { device?: number; host?: number };
  estimate?: NestEstimate;
  /** Planning view only: single precision when no array of the nest has elements wider than 4 bytes. */
  precision?: 'single' | 'double';
  /** Planning view only: false for a nest no directive parallelises (it runs on one host core). */
  parallel?: boolean;
}

export interface ReportTransfer {
  line: number;
  /** The file of the directive when it is in another file of the workspace. */
  file?: string;
  via?: number[];
  array: string;
  direction: 'toDevice' | 'toHost';
  bytes: { value: number | null; expr: string };
  everySteps: number;
  cause: string;
}

export interface ReportTimeLoop {
  line: number;
  endLine: number;
  function: string;
  variable: string;
  steps: { value: number | null; expr: string };
  perStep: { toDevice: { value: number | null; expr: string }; toHost: { value: number | null; expr: string } };
  once: { toDevice: { value: number | null; expr: string }; toHost: { value: number | null; expr: string } };
  transfers: ReportTransfer[];
  dataRegion: { clauses: { array: string; clause: string; section?: string }[]; edits: { line: number; text: string }[] } | null;
  residentBytes: number | null;
  estimate?: StepEstimate;
  /** For a time loop that runs on the host: the port plans (the JSON report's `plans`). */
  plans?: ReportPlans;
  /** Planning view only: the work of one step and the transfers once the suggested region is applied. */
  step?: PlanningStep;
}

export interface ReportPlanFigures {
  bytesPerStep: { toDevice: number | null; toHost: number | null };
  transfersPerStep: number;
  stepSeconds: number | null;
  speedup: { low: number; expected: number; high: number } | null;
  bound: string | null;
  residentBytes: number | null;
  fitsDeviceMemory: boolean | null;
}

export interface ReportPlans {
  model: 'openacc' | 'openmp';
  baseline: 'node' | 'core';
  hostStepSeconds: number | null;
  hostShare: number | null;
  naive: ReportPlanFigures;
  resident: ReportPlanFigures;
  offloaded: { line: number; function: string; collapse: number; clauses: string[] }[];
  onHost: { line: number; function: string; reason: string }[];
  updates: { array: string; direction: string; section: string; line: number }[];
}

/** One nest's part of a step: its time per step and its share of each plan's step. */
export interface PlanningNestShare {
  /** The file of the nest (workspace-relative in the view); another file's when the step calls into it. */
  path: string;
  line: number;
  /** Offloaded in the file as written (else host code left in the loop). */
  offloaded: boolean;
  /** False for a nest no directive parallelises (it runs on one host core). */
  parallel: boolean;
  /** Seconds per step of this nest on the device (a kernel) or on the host (code left in the loop), as written. */
  secondsPerStep: number;
  /** Share of the offloaded step as written, of the host-only step, and of the step with the suggested region (0..1). */
  share: number;
  hostShare: number;
  shareWithRegion: number | null;
}

export interface PlanningStep {
  /** Floating-point operations of one step: every nest the step runs, times its executions per step. */
  flops: number;
  /** Bytes across the link per step, as written and with the suggested region (null: no region suggested). */
  linkBytes: number;
  linkBytesWithRegion: number | null;
  /** One step with the suggested region, split as the estimate's terms are (seconds; null: no region). */
  withRegionSeconds: { kernels: number; launches: number; transfers: number; host: number } | null;
  nests: PlanningNestShare[];
  /**
   * The transfers once the suggested region is applied, with lines of the user's file (a line the
   * suggestion inserts is reported at the line it goes before, with `inserted` set). Null: no region.
   */
  transfersWithRegion: (ReportTransfer & { inserted?: boolean })[] | null;
}

/** The roofs of the roofline chart: the active profile's figures (server/src/core/machine/profiles.ts). */
export interface PlanningMachine {
  name: string;
  baseline: 'node' | 'core';
  /** The node's figures; one core has bandwidthCore and the node's peak divided by the cores. */
  host: { name: string; cores: number; bandwidthNode: number; bandwidthCore: number; peakDouble: number; peakSingle: number };
  device: { name: string; bandwidth: number; peakDouble: number; peakSingle: number };
  link: { name: string; bandwidth: number };
}

/** A finding of the file as the JSON report gives it, with the bytes per step of the transfers it names. */
export interface PlanningFinding {
  code: string;
  severity: 'error' | 'warning' | 'info' | 'hint';
  line: number;
  message: string;
  array?: string;
  /** Other places it is about (each construct of one missing data region). */
  related?: { path: string; line: number; message: string }[];
  bytesPerStep?: number;
}

export interface PlanningFile {
  uri: string;
  path: string;
  language: string;
  loops: ReportLoop[];
  timeLoops: ReportTimeLoop[];
  /** Planning view only: the file's findings, and the machine its estimates assume. */
  findings?: PlanningFinding[];
  machine?: PlanningMachine;
}

export interface PlanningData {
  profile: string;
  baseline: string;
  /** False while the core computes no estimates: the view then shows bytes only. */
  estimatesAvailable: boolean;
  files: PlanningFile[];
}

/** client → server: the report of analysed documents with their estimates, for the planning view. */
export namespace PlanningDataRequest {
  export const method = 'offloadLedger/planningData';
  export const type = new RequestType<PlanningParams, PlanningData, void>(method);
}
