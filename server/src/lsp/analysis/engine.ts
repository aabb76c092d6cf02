/** The interface the server uses to analyse documents, in a worker thread or in its own thread. */
import type { EngineCounters } from '../protocol';
import type { DocumentView } from '../view/types';
import type { AnalysisJob } from './job';

/** Rejection reason of a job replaced by a newer version of the same document. */
export class Superseded extends Error {
  constructor(uri: string, version: number) {
    super(`analysis of ${uri} version ${version} was superseded by a newer edit`);
  }
}

/** What an engine has done since it started (the `offloadLedger/debugStats` request reports it). */
export type EngineStats = EngineCounters;

export interface EngineEvents {
  /** The worker died on its own (not terminated by a shutdown). */
  onCrash?: (reason: string) => void;
  /** A new analysis thread started (the first, or a replacement after a crash or a timeout). */
  onStart?: (n: number, threadId: number) => void;
  /** Models of the document's project files are being built: `done` of `total` files ready. */
  onIndex?: (uri: string, done: number, total: number) => void;
  /**
   * A first view of a job whose project files are still being modelled (runJob's `early`): the
   * files the document reaches by name are in it; the job's own view follows and replaces it.
   */
  onEarly?: (view: DocumentView) => void;
}

export interface AnalysisEngine {
  /**
   * Analyses the job. A pending job for the same URI is superseded (its promise rejects with
   * Superseded); a running one is marked stale, rejects with Superseded at once, and the thread
   * drops its work at the next check (between files and phases) — the thread and its caches stay.
   */
  analyze(job: AnalysisJob): Promise<DocumentView>;
  /**
   * The document has changed (its newer job follows after the debounce): a running job for it is
   * marked stale now, so the worker stops it at its next check instead of after the debounce.
   */
  cancel?(uri: string): void;
  stats(): EngineStats;
  dispose(): Promise<void>;
  readonly kind: 'worker' | 'in-process';
}
