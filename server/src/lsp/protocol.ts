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
}

export interface ReportTransfer {
  line: number;
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
}

export interface PlanningFile {
  uri: string;
  path: string;
  language: string;
  loops: ReportLoop[];
  timeLoops: ReportTimeLoop[];
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
