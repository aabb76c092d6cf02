/**
 * Entry of the analysis worker thread (bundled as server/dist/lsp-worker.js). It loads the
 * grammars once and answers each job with its DocumentView; an exception in one job is sent
 * back as an error and the worker stays alive for the next. The thread lives as long as the
 * server: a newer edit does not end it but marks the running job stale through a shared flag
 * (`workerData.cancel[0]` holds the id of the newest stale job), which the job checks between
 * files and phases, so parsers, grammars and the models of unchanged files stay warm.
 */
import { parentPort, threadId, workerData } from 'node:worker_threads';
import { loadGrammars } from '../../grammars';
import { Cancelled, editStats, modelCacheStats, runJob, type AnalysisJob } from './job';

export interface WorkerRequest {
  id: number;
  job: AnalysisJob;
}

export interface WorkerData {
  /** Int32Array over a SharedArrayBuffer: [0] the id of the newest job marked stale. */
  cancel: Int32Array;
}

/** Counters of the worker's model cache, sent with every reply. */
export interface WorkerCounters {
  modelsBuilt: number;
  modelHits: number;
  /** Document analyses made by re-analysing the edited part, and of the whole file. */
  editsByPart: number;
  wholeAnalyses: number;
  threadId: number;
}

export type WorkerReply =
  | { id: number; kind: 'done'; view: import('../view/types').DocumentView; counters: WorkerCounters }
  | { id: number; kind: 'failed'; error: string; counters: WorkerCounters }
  | { id: number; kind: 'cancelled'; counters: WorkerCounters }
  | { id: number; kind: 'progress'; done: number; total: number }
  | { id: number; kind: 'early'; view: import('../view/types').DocumentView };

const port = parentPort;
if (port) {
  const grammars = loadGrammars();
  const cancel = (workerData as WorkerData | undefined)?.cancel;
  const counters = (): WorkerCounters => ({ modelsBuilt: modelCacheStats.built, modelHits: modelCacheStats.hits, editsByPart: editStats.parts, wholeAnalyses: editStats.wholeFiles, threadId });
  port.on('message', async (msg: WorkerRequest) => {
    const stale = (): boolean => !!cancel && Atomics.load(cancel, 0) >= msg.id;
    let reply: WorkerReply;
    try {
      const deps = await grammars;
      if (stale()) throw new Cancelled();
      const view = runJob(msg.job, deps, {
        cancelled: stale,
        progress: (done, total) => port.postMessage({ id: msg.id, kind: 'progress', done, total } satisfies WorkerReply),
        early: (view) => port.postMessage({ id: msg.id, kind: 'early', view } satisfies WorkerReply),
      });
      reply = { id: msg.id, kind: 'done', view, counters: counters() };
    } catch (e) {
      reply = e instanceof Cancelled
        ? { id: msg.id, kind: 'cancelled', counters: counters() }
        : { id: msg.id, kind: 'failed', error: e instanceof Error ? `${e.message}\n${e.stack ?? ''}` : String(e), counters: counters() };
    }
    port.postMessage(reply);
  });
}
