/** The interface the server uses to analyse documents, in a worker thread or in its own thread. */
import type { DocumentView } from '../view/types';
import type { AnalysisJob } from './job';

/** Rejection reason of a job replaced by a newer version of the same document. */
export class Superseded extends Error {
  constructor(uri: string, version: number) {
    super(`analysis of ${uri} version ${version} was superseded by a newer edit`);
  }
}

export interface AnalysisEngine {
  /**
   * Analyses the job. A pending or running job for the same URI is superseded (its promise
   * rejects with Superseded) so that only the newest text of a document is worked on.
   */
  analyze(job: AnalysisJob): Promise<DocumentView>;
  dispose(): Promise<void>;
  readonly kind: 'worker' | 'in-process';
}
