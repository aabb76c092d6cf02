/**
 * Analysis in one worker thread, so a long analysis (seconds on a 20,000-line file) never blocks
 * hovers or the reading of newer edits. A newer version of the document being analysed
 * terminates the worker — the only way to stop a synchronous analysis — and a fresh one starts.
 * A worker that dies on its own fails the job it held and is replaced for the next one.
 */
import { Worker } from 'node:worker_threads';
import type { DocumentView } from '../view/types';
import { type AnalysisEngine, Superseded } from './engine';
import type { AnalysisJob } from './job';
import type { WorkerReply } from './workerMain';

interface Pending {
  id: number;
  job: AnalysisJob;
  resolve: (v: DocumentView) => void;
  reject: (e: unknown) => void;
}

export interface WorkerEngineEvents {
  /** The worker died on its own (not terminated for a newer edit). */
  onCrash?: (reason: string) => void;
}

export class WorkerEngine implements AnalysisEngine {
  readonly kind = 'worker' as const;
  private worker: Worker | undefined;
  private running: Pending | undefined;
  private queue: Pending[] = [];
  private nextId = 1;
  private disposed = false;
  /** Workers terminated on purpose: their exit is not a crash. */
  private readonly terminating = new WeakSet<Worker>();

  constructor(
    private readonly script: string,
    private readonly events: WorkerEngineEvents = {},
  ) {}

  analyze(job: AnalysisJob): Promise<DocumentView> {
    if (this.disposed) return Promise.reject(new Error('analysis engine disposed'));
    for (const p of this.queue.filter((q) => q.job.uri === job.uri)) p.reject(new Superseded(p.job.uri, p.job.version));
    this.queue = this.queue.filter((q) => q.job.uri !== job.uri);
    const promise = new Promise<DocumentView>((resolve, reject) => this.queue.push({ id: this.nextId++, job, resolve, reject }));
    if (this.running && this.running.job.uri === job.uri) {
      const old = this.running;
      this.running = undefined;
      this.stopWorker();
      old.reject(new Superseded(old.job.uri, old.job.version));
    }
    this.pump();
    return promise;
  }

  private pump(): void {
    if (this.running || this.disposed) return;
    const next = this.queue.shift();
    if (!next) return;
    this.running = next;
    this.ensureWorker().postMessage({ id: next.id, job: next.job });
  }

  private ensureWorker(): Worker {
    if (this.worker) return this.worker;
    const w = new Worker(this.script);
    w.unref();
    w.on('message', (reply: WorkerReply) => {
      const p = this.running;
      if (!p || p.id !== reply.id) return;
      this.running = undefined;
      if (reply.ok) p.resolve(reply.view);
      else p.reject(new Error(reply.error));
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
      const p = this.running;
      this.running = undefined;
      p?.reject(new Error(`the analysis worker stopped: ${reason}`));
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
    const all = [...this.queue.splice(0), ...(this.running ? [this.running] : [])];
    this.running = undefined;
    for (const p of all) p.reject(new Error('analysis engine disposed'));
    const w = this.worker;
    this.worker = undefined;
    if (w) {
      this.terminating.add(w);
      await w.terminate();
    }
  }
}
