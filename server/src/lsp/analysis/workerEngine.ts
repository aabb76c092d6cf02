/**
 * Analysis in worker threads, so a long analysis (seconds on a 20,000-line file) never blocks
 * hovers or the reading of newer edits. The threads stay warm for the life of the server (their
 * grammars, parsers and the models of unchanged files are reused): a newer version of a
 * document being analysed marks the running job stale through a flag shared with its thread,
 * the job's promise rejects with Superseded at once, and the thread drops the job at its next
 * check (between files and phases). The newest job does not wait for that: when the first thread
 * is still finishing a stale step, a second warm thread (started the first time it is needed, at
 * most `maxWorkers`) takes it, so the last edit waits for about one analysis. Only a stale job that
 * does not stop within `staleTimeoutMs` ends its thread; a thread that dies on its own fails the
 * job it held and is replaced for the next one.
 */
import { availableParallelism } from 'node:os';
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
  /** Until when it may wait for the worker holding its document's last analysis (set at its first wait). */
  waitUntil?: number;
  waitTimer?: NodeJS.Timeout;
}

interface Running {
  id: number;
  job: AnalysisJob;
  /** Undefined once the job is stale: its caller has been told, the worker is still finishing it. */
  pending: Pending | undefined;
  watchdog?: NodeJS.Timeout;
}

interface Slot {
  worker: Worker | undefined;
  running: Running | undefined;
  /** [0]: the id of the newest job of this thread marked stale. */
  flag: Int32Array;
  threadId: number;
  /** The document this worker analysed last: it keeps that document's last analysis, so an edit re-analyses only its part there. */
  lastUri?: string;
  /** The id of the last job it took (the newest holder of a document wins). */
  lastJob?: number;
}

export interface WorkerEngineOptions extends EngineEvents {
  /** How long a stale job may keep its worker before the worker is replaced (default 60 s). */
  staleTimeoutMs?: number;
  /** How long the newest job of a document waits for the worker holding its last analysis to end a stale job (default 150 ms). */
  affinityWaitMs?: number;
  /** Worker threads at most (default 2, or 1 on a one-core machine). */
  maxWorkers?: number;
}

export class WorkerEngine implements AnalysisEngine {
  readonly kind = 'worker' as const;
  private readonly slots: Slot[] = [];
  private queue: Pending[] = [];
  private nextId = 1;
  private disposed = false;
  private readonly maxWorkers: number;
  private readonly counters: EngineStats = {
    kind: 'worker', workerStarts: 0, workerThreadId: -1, workers: 0, jobsStarted: 0, jobsCompleted: 0, jobsCancelled: 0, timeouts: 0, modelsBuilt: 0, modelHits: 0, editsByPart: 0, wholeAnalyses: 0,
  };
  /** Model cache counters per thread (summed in stats()). */
  private readonly models = new Map<number, { built: number; hits: number; parts: number; wholes: number }>();
  /** Workers terminated on purpose (shutdown, timeout): their exit is not a crash. */
  private readonly terminating = new WeakSet<Worker>();

  constructor(
    private readonly script: string,
    private readonly events: WorkerEngineOptions = {},
  ) {
    this.maxWorkers = Math.max(1, events.maxWorkers ?? Math.min(2, availableParallelism()));
  }

  analyze(job: AnalysisJob): Promise<DocumentView> {
    if (this.disposed) return Promise.reject(new Error('analysis engine disposed'));
    // A queued or running job with the same inputs (a settings change that changes nothing, the
    // same text re-sent) answers this one too.
    const queued = this.queue.find((q) => q.job.uri === job.uri);
    if (queued && sameInputs(queued.job, job)) return this.share(queued, job);
    const live = this.slots.find((s) => s.running?.pending && s.running.job.uri === job.uri);
    if (!queued && live && sameInputs(live.running!.job, job)) return this.share(live.running!.pending!, job);
    for (const p of this.queue.filter((q) => q.job.uri === job.uri)) p.reject(new Superseded(p.job.uri, p.job.version));
    this.queue = this.queue.filter((q) => q.job.uri !== job.uri);
    const promise = new Promise<DocumentView>((resolve, reject) => this.queue.push({ id: this.nextId++, job, resolve, reject }));
    if (live) this.markStale(live);
    this.pump();
    return promise;
  }

  cancel(uri: string): void {
    for (const p of this.queue.filter((q) => q.job.uri === uri)) p.reject(new Superseded(p.job.uri, p.job.version));
    this.queue = this.queue.filter((q) => q.job.uri !== uri);
    const live = this.slots.find((s) => s.running?.pending && s.running.job.uri === uri);
    if (live) this.markStale(live);
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

  /** Tells the caller of a running job that it is superseded and asks its worker to drop it. */
  private markStale(slot: Slot): void {
    const r = slot.running!;
    const p = r.pending!;
    r.pending = undefined;
    this.counters.jobsCancelled++;
    Atomics.store(slot.flag, 0, r.id);
    p.reject(new Superseded(p.job.uri, p.job.version));
    r.watchdog = setTimeout(() => {
      if (slot.running !== r) return;
      // The job has not reached a check in time: a fresh worker takes this slot.
      this.counters.timeouts++;
      slot.running = undefined;
      this.stopWorker(slot);
      this.pump();
    }, this.events.staleTimeoutMs ?? 60_000);
    r.watchdog.unref?.();
  }

  stats(): EngineStats {
    let built = 0;
    let hits = 0;
    let parts = 0;
    let wholes = 0;
    for (const m of this.models.values()) {
      built += m.built;
      hits += m.hits;
      parts += m.parts;
      wholes += m.wholes;
    }
    const first = this.slots[0];
    return {
      ...this.counters,
      workerThreadId: first?.worker ? first.threadId : -1,
      workers: this.slots.filter((s) => s.worker).length,
      modelsBuilt: built,
      modelHits: hits,
      editsByPart: parts,
      wholeAnalyses: wholes,
    };
  }

  private pump(): void {
    let k = 0;
    while (!this.disposed && k < this.queue.length) {
      const next = this.queue[k];
      // The worker that analysed this document last keeps its last analysis (an edit there
      // re-analyses only the edited part): it takes the job when idle, and the job waits for it
      // when it is ending a stale job of the same document (it stops at its next check). Else an
      // idle warm worker, else a new one while fewer than maxWorkers run.
      let home: Slot | undefined;
      for (const s of this.slots) if (s.worker && s.lastUri === next.job.uri && (!home || s.lastJob! > home.lastJob!)) home = s;
      let slot: Slot | undefined;
      if (home && !home.running) slot = home;
      else if (home?.running && !home.running.pending && home.running.job.uri === next.job.uri && this.mayWait(next)) {
        k++;
        continue;
      } else {
        slot = this.slots.find((s) => s.worker && !s.running) ?? this.slots.find((s) => !s.worker && !s.running);
        if (!slot && this.slots.length < this.maxWorkers) {
          slot = { worker: undefined, running: undefined, flag: new Int32Array(new SharedArrayBuffer(4)), threadId: -1 };
          this.slots.push(slot);
        }
      }
      if (!slot) {
        k++;
        continue;
      }
      this.queue.splice(k, 1);
      slot.running = { id: next.id, job: next.job, pending: next };
      slot.lastUri = next.job.uri;
      slot.lastJob = next.id;
      this.counters.jobsStarted++;
      this.ensureWorker(slot).postMessage({ id: next.id, job: next.job });
    }
  }

  /**
   * True while a job may still wait for the worker that holds its document's last analysis
   * (`affinityWaitMs`, default 150 ms from its first wait); a timer pumps again when that ends,
   * so a stale step that reaches no check soon does not hold the newest job.
   */
  private mayWait(p: Pending): boolean {
    const now = Date.now();
    p.waitUntil ??= now + (this.events.affinityWaitMs ?? 150);
    if (now >= p.waitUntil) return false;
    // A timer may fire a little before the clock reaches the end of the wait: then another one.
    if (!p.waitTimer) {
      p.waitTimer = setTimeout(() => {
        p.waitTimer = undefined;
        this.pump();
      }, p.waitUntil - now + 1);
      p.waitTimer.unref?.();
    }
    return true;
  }

  private finish(slot: Slot, r: Running): void {
    clearTimeout(r.watchdog);
    if (slot.running === r) slot.running = undefined;
  }

  private ensureWorker(slot: Slot): Worker {
    if (slot.worker) return slot.worker;
    const w = new Worker(this.script, { workerData: { cancel: slot.flag } satisfies WorkerData });
    w.unref();
    this.counters.workerStarts++;
    slot.threadId = w.threadId;
    this.events.onStart?.(this.counters.workerStarts, w.threadId);
    w.on('message', (reply: WorkerReply) => {
      const r = slot.running;
      if (!r || r.id !== reply.id || slot.worker !== w) return;
      if (reply.kind === 'progress') {
        if (r.pending) this.events.onIndex?.(r.job.uri, reply.done, reply.total);
        return;
      }
      if (reply.kind === 'early') {
        if (r.pending) this.events.onEarly?.(reply.view);
        return;
      }
      this.models.set(w.threadId, { built: reply.counters.modelsBuilt, hits: reply.counters.modelHits, parts: reply.counters.editsByPart, wholes: reply.counters.wholeAnalyses });
      this.finish(slot, r);
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
      if (slot.worker === w) slot.worker = undefined;
      if (this.terminating.has(w)) return;
      this.events.onCrash?.(reason);
      const r = slot.running;
      if (r) this.finish(slot, r);
      r?.pending?.reject(new Error(`the analysis worker stopped: ${reason}`));
      this.pump();
    };
    w.on('error', (e) => died(e instanceof Error ? e.message : String(e)));
    w.on('exit', (code) => died(`exit code ${code}`));
    slot.worker = w;
    return w;
  }

  private stopWorker(slot: Slot): void {
    const w = slot.worker;
    if (!w) return;
    slot.worker = undefined;
    this.terminating.add(w);
    void w.terminate();
  }

  async dispose(): Promise<void> {
    this.disposed = true;
    const pending: Pending[] = this.queue.splice(0);
    const workers: Worker[] = [];
    for (const s of this.slots) {
      if (s.running) {
        if (s.running.pending) pending.push(s.running.pending);
        this.finish(s, s.running);
      }
      if (s.worker) {
        this.terminating.add(s.worker);
        workers.push(s.worker);
        s.worker = undefined;
      }
    }
    for (const p of pending) p.reject(new Error('analysis engine disposed'));
    await Promise.all(workers.map((w) => w.terminate()));
  }
}
