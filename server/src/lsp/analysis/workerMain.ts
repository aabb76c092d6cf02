/**
 * Entry of the analysis worker thread (bundled as server/dist/lsp-worker.js). It loads the
 * grammars once and answers each job with its DocumentView; an exception in one job is sent
 * back as an error and the worker stays alive for the next.
 */
import { parentPort } from 'node:worker_threads';
import { loadGrammars } from '../../grammars';
import { runJob, type AnalysisJob } from './job';

export interface WorkerRequest {
  id: number;
  job: AnalysisJob;
}

export type WorkerReply = { id: number; ok: true; view: import('../view/types').DocumentView } | { id: number; ok: false; error: string };

const port = parentPort;
if (port) {
  const grammars = loadGrammars();
  port.on('message', async (msg: WorkerRequest) => {
    let reply: WorkerReply;
    try {
      reply = { id: msg.id, ok: true, view: runJob(msg.job, await grammars) };
    } catch (e) {
      reply = { id: msg.id, ok: false, error: e instanceof Error ? `${e.message}\n${e.stack ?? ''}` : String(e) };
    }
    port.postMessage(reply);
  });
}
