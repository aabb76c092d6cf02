/**
 * Analysis on the server's own thread: used by tests that load the server from source and as the
 * fallback when the worker bundle is missing. Jobs run one at a time; a queued job is superseded
 * by a newer one for the same URI, but a running job (synchronous) always completes.
 */
import { loadGrammars, type Grammars } from '../../grammars';
import type { DocumentView } from '../view/types';
import { type AnalysisEngine, type EngineEvents, type EngineStats, Superseded } from './engine';
import { type AnalysisJob, editStats, modelCacheStats, runJob } from './job';

interface Pending {
  job: AnalysisJob;
  resolve: (v: DocumentView) => void;
  reject: (e: unknown) => void;
}

export class InProcessEngine implements AnalysisEngine {
  readonly kind = 'in-process' as const;
  private queue: Pending[] = [];
  private running = false;
  private grammars: Promise<Grammars> | undefined;
  private readonly counters: EngineStats = {
    kind: 'in-process', workerStarts: 0, workerThreadId: 0, workers: 0, jobsStarted: 0, jobsCompleted: 0, jobsCancelled: 0, timeouts: 0, modelsBuilt: 0, modelHits: 0, editsByPart: 0, wholeAnalyses: 0,
  };

  constructor(private readonly events: EngineEvents = {}) {}

  stats(): EngineStats {
    return { ...this.counters, modelsBuilt: modelCacheStats.built, modelHits: modelCacheStats.hits, editsByPart: editStats.parts, wholeAnalyses: editStats.wholeFiles };
  }

  analyze(job: AnalysisJob): Promise<DocumentView> {
    for (const p of this.queue.filter((q) => q.job.uri === job.uri)) p.reject(new Superseded(p.job.uri, p.job.version));
    this.queue = this.queue.filter((q) => q.job.uri !== job.uri);
    return new Promise((resolve, reject) => {
      this.queue.push({ job, resolve, reject });
      void this.pump();
    });
  }

  private async pump(): Promise<void> {
    if (this.running) return;
    this.running = true;
    try {
      this.grammars ??= loadGrammars();
      const deps = await this.grammars;
      for (let next = this.queue.shift(); next; next = this.queue.shift()) {
        // Yield between jobs so requests and newer edits are read before the next one starts.
        await new Promise((r) => setImmediate(r));
        const job = next.job;
        try {
          this.counters.jobsStarted++;
          next.resolve(runJob(job, deps, { progress: (done, total) => this.events.onIndex?.(job.uri, done, total), early: this.events.onEarly }));
          this.counters.jobsCompleted++;
        } catch (e) {
          next.reject(e);
        }
      }
    } catch (e) {
      for (const p of this.queue.splice(0)) p.reject(e);
    } finally {
      this.running = false;
    }
  }

  async dispose(): Promise<void> {
    for (const p of this.queue.splice(0)) p.reject(new Error('analysis engine disposed'));
  }
}
