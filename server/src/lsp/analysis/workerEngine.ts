/**
 * Analysis in one worker thread, so a long analysis (seconds on a 20,000-line file) never blocks
 * hovers or the reading of newer edits. The thread stays warm for the life of the server (its
 * grammars, parsers and the models of unchanged files are reused): a newer version of the
 * document being analysed marks the running job stale through a shared flag, the job's promise
 * rejects with Superseded at once, and the worker drops the job at its next check (between files
 * and phases) and takes the newest. Only a stale job that does not stop within `staleTimeoutMs`
 * (one analysis step longer than that) ends the thread; a worker that dies on its own fails the
 * job it held and is replaced for the next one.
 */
import { Worker } from 'node:worker_threads';
import type { DocumentView } from '../view/types';
import { type AnalysisEngine, type EngineEvents, type EngineStats, Superseded } from './engine';
import type { AnalysisJob } from './job';
import { sameInputs } from './reuse';
import type { WorkerData, WorkerReply } from './workerMain';

interface Pending {
  id: number;
  job: AnalysisJob;
  resolve: (v: DocumentView) => void;
  reject: (e: unknown) => void;
}

interface Running {
  id: number;
  job: AnalysisJob;
  /** Undefined once the job is stale: its caller has been told, the worker is still finishing it. */
  pending: Pending | undefined;
  watchdog?: NodeJS.Timeout;
}

export interface WorkerEngineOptions extends EngineEvents {
  /** How long a stale job may keep the worker before the worker is replaced (default 60 s). */
  staleTimeoutMs?: number;
}

export class WorkerEngine implements AnalysisEngine {
  readonly kind = 'worker' as const;
  private worker: Worker | undefined;
  private running: Running | undefined;
  private queue: Pending[] = [];
  private nextId = 1;
  private disposed = false;
  private readonly flag = new Int32Array(new SharedArrayBuffer(4));
  private readonly counters: EngineStats = {
    kind: 'worker', workerStarts: 0, workerThreadId: -1, jobsStarted: 0, jobsCompleted: 0, jobsCancelled: 0, timeouts: 0, modelsBuilt: 0, modelHits: 0,
  };
  /** Workers terminated on purpose (shutdown, timeout): their exit is not a crash. */
  private readonly terminating = new WeakSet<Worker>();

  constructor(
    private readonly script: string,
    private readonly events: WorkerEngineOptions = {},
  ) {}

  analyze(job: AnalysisJob): Promise<DocumentView> {
    if (this.disposed) return Promise.reject(new Error('analysis engine disposed'));
    // A queued or running job with the same inputs (a settings change that changes nothing, the
    // same text re-sent) answers this one too.
    const queued = this.queue.find((q) => q.job.uri === job.uri);
    if (queued && sameInputs(queued.job, job)) return this.share(queued, job);
    const r = this.running;
    if (!queued && r?.pending && r.job.uri === job.uri && sameInputs(r.job, job)) return this.share(r.pending, job);
    for (const p of this.queue.filter((q) => q.job.uri === job.uri)) p.reject(new Superseded(p.job.uri, p.job.version));
    this.queue = this.queue.filter((q) => q.job.uri !== job.uri);
    const promise = new Promise<DocumentView>((resolve, reject) => this.queue.push({ id: this.nextId++, job, resolve, reject }));
    if (r && r.pending && r.job.uri === job.uri) this.markStale(r);
    this.pump();
    return promise;
  }

  /** Makes `p` (queued or running) answer `job` as well, with its version. */
  private share(p: Pending, job: AnalysisJob): Promise<DocumentView> {
    return new Promise<DocumentView>((resolve, reject) => {
      const { resolve: before, reject: fail } = p;
      p.resolve = (v) => {
        before(v);
        resolve(v.version === job.version ? v : { ...v, version: job.version });
      };
      p.reject = (e) => {
        fail(e);
        reject(e);
      };
    });
  }

  cancel(uri: string): void {
    const r = this.running;
    if (r && r.pending && r.job.uri === uri) this.markStale(r);
  }

  /** Tells the caller of a running job that it is superseded and asks the worker to drop it. */
  private markStale(r: Running): void {
    const p = r.pending!;
    r.pending = undefined;
    this.counters.jobsCancelled++;
    Atomics.store(this.flag, 0, Math.max(Atomics.load(this.flag, 0), r.id));
    p.reject(new Superseded(p.job.uri, p.job.version));
    const timeout = this.events.staleTimeoutMs ?? 60_000;
    r.watchdog = setTimeout(() => {
      if (this.running !== r) return;
      // The job has not reached a check in time: a fresh worker takes the queue.
      this.counters.timeouts++;
      this.running = undefined;
      this.stopWorker();
      this.pump();
    }, timeout);
    r.watchdog.unref?.();
  }

  stats(): EngineStats {
    return { ...this.counters, workerThreadId: this.worker ? this.counters.workerThreadId : -1 };
  }

  private pump(): void {
    if (this.running || this.disposed) return;
    const next = this.queue.shift();
    if (!next) return;
    this.running = { id: next.id, job: next.job, pending: next };
    this.counters.jobsStarted++;
    this.ensureWorker().postMessage({ id: next.id, job: next.job });
  }

  private finish(r: Running): void {
    clearTimeout(r.watchdog);
    if (this.running === r) this.running = undefined;
  }

  private ensureWorker(): Worker {
    if (this.worker) return this.worker;
    const w = new Worker(this.script, { workerData: { cancel: this.flag } satisfies WorkerData });
    w.unref();
    this.counters.workerStarts++;
    this.counters.workerThreadId = w.threadId;
    this.events.onStart?.(this.counters.workerStarts, w.threadId);
    w.on('message', (reply: WorkerReply) => {
      const r = this.running;
      if (!r || r.id !== reply.id || this.worker !== w) return;
      if (reply.kind === 'progress') {
        if (r.pending) this.events.onIndex?.(r.job.uri, reply.done, reply.total);
        return;
      }
      this.counters.modelsBuilt = reply.counters.modelsBuilt;
      this.counters.modelHits = reply.counters.modelHits;
      this.finish(r);
      const p = r.pending;
      if (p) {
        if (reply.kind === 'done') {
          this.counters.jobsCompleted++;
          p.resolve(reply.view);
        } else if (reply.kind === 'failed') p.reject(new Error(reply.error));
        else p.reject(new Superseded(p.job.uri, p.job.version));
      }
      this.pump();
    });
    let dead = false;
    const died = (reason: string): void => {
      // 'error' is followed by 'exit'; the first of the two tells.
      if (dead) return;
      dead = true;
      if (this.worker === w) this.worker = undefined;
      if (this.terminating.has(w)) return;
      this.events.onCrash?.(reason);
      const r = this.running;
      if (r) this.finish(r);
      r?.pending?.reject(new Error(`the analysis worker stopped: ${reason}`));
      this.pump();
    };
    w.on('error', (e) => died(e instanceof Error ? e.message : String(e)));
    w.on('exit', (code) => died(`exit code ${code}`));
    this.worker = w;
    return w;
  }

  private stopWorker(): void {
    const w = this.worker;
    if (!w) return;
    this.worker = undefined;
    this.terminating.add(w);
    void w.terminate();
  }

  async dispose(): Promise<void> {
    this.disposed = true;
    const r = this.running;
    if (r) this.finish(r);
    const all = [...this.queue.splice(0), ...(r?.pending ? [r.pending] : [])];
    for (const p of all) p.reject(new Error('analysis engine disposed'));
    const w = this.worker;
    this.worker = undefined;
    if (w) {
      this.terminating.add(w);
      await w.terminate();
    }
  }
}
