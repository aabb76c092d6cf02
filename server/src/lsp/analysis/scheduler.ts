/**
 * Keeps each open document's newest view: debounces edits, sends the newest text to the engine,
 * drops results that an edit has made stale, and lets requests wait for the view of the text
 * the editor shows. A job whose inputs equal those of the document's last analysis (the same
 * text re-sent, a settings change that changes nothing) is answered from that analysis without
 * the engine (reuse.ts). Publishing is left to the caller (`onView`).
 */
import type { DocumentView } from '../view/types';
import { type AnalysisEngine, Superseded } from './engine';
import type { AnalysisJob } from './job';
import { ViewCache } from './reuse';

export interface SchedulerHooks {
  /** The job for the document's current text, or undefined when it is closed or not a source. */
  makeJob(uri: string): Promise<AnalysisJob | undefined>;
  currentVersion(uri: string): number | undefined;
  onView(view: DocumentView): void;
  onError(uri: string, error: unknown): void;
  onBusyChange?(busy: boolean): void;
}

/** Edits closer than this are typing (see schedule). */
const TYPING_GAP_MS = 400;

interface Waiter {
  version: number;
  resolve: (v: DocumentView | undefined) => void;
}

export class Scheduler {
  private readonly timers = new Map<string, NodeJS.Timeout>();
  private readonly views = new Map<string, DocumentView>();
  private readonly waiters = new Map<string, Waiter[]>();
  private inFlight = 0;
  private readonly running = new Map<string, number>();
  private readonly lastEdit = new Map<string, number>();
  /**
   * How long the last analysed version of each document took to its diagnostics (early or final
   * view), kept apart for analyses by parts and of the whole document: a keystroke that keeps the
   * line count is re-analysed by parts, so its cost is predicted from the last such analysis, not
   * from the (much slower) open.
   */
  private readonly diagnosticsMs = new Map<string, { version: number; ms: number; parts?: number; whole?: number }>();
  /** The line count of each document at its last edit (an edit that keeps it is typing inside lines). */
  private readonly lineCounts = new Map<string, number>();
  /** The last analysis of each open document, keyed by its inputs. */
  readonly cache = new ViewCache();

  constructor(
    private readonly engine: AnalysisEngine,
    private readonly hooks: SchedulerHooks,
  ) {}

  /**
   * Analyse `uri` after `delayMs` of quiet; a newer call restarts the wait. While typing that is
   * analysed faster than it comes, each keystroke is analysed at once. `edited`: the text
   * changed, so a running analysis of the document is stale from now on (not only once the newer
   * job is sent after the debounce). `lineCount`: the document's line count now (an edit that
   * keeps it is re-analysed by parts).
   */
  schedule(uri: string, delayMs: number, edited = false, lineCount?: number): void {
    const sameLines = lineCount !== undefined && this.lineCounts.get(uri) === lineCount;
    if (lineCount !== undefined) this.lineCounts.set(uri, lineCount);
    if (edited) {
      this.engine.cancel?.(uri);
      // While the user is typing (edits closer than TYPING_GAP_MS) and the document's diagnostics
      // took longer than the gap, wait one and a half gaps: such an analysis started between two
      // keystrokes would be stale before it ends. When they come faster than the user types (an
      // edit re-analysed by parts), each keystroke is analysed at once. A single edit after a
      // pause waits `delayMs`.
      const now = Date.now();
      const gap = now - (this.lastEdit.get(uri) ?? -Infinity);
      this.lastEdit.set(uri, now);
      const known = this.diagnosticsMs.get(uri);
      // An edit within lines is re-analysed by parts: until one has been, it is assumed fast.
      const cost = sameLines ? known?.parts ?? 0 : known?.whole ?? known?.ms ?? Infinity;
      if (gap < TYPING_GAP_MS && cost > gap) delayMs = Math.max(delayMs, Math.min(Math.round(gap * 1.5), TYPING_GAP_MS));
      // Typing that is analysed faster than it comes (by parts) is analysed at each keystroke:
      // the wait would only put the diagnostics further behind, and a wait the next keystroke
      // restarts, or an analysis it makes stale, would give none until the typing stops.
      else if (gap < TYPING_GAP_MS) delayMs = 0;
    }
    clearTimeout(this.timers.get(uri));
    this.timers.set(
      uri,
      setTimeout(() => {
        this.timers.delete(uri);
        void this.run(uri);
      }, delayMs),
    );
  }

  /** An early view's diagnostics of `version` took `ms` from the job's start (they went out then). */
  noteEarly(uri: string, version: number, ms: number, byParts = false): void {
    this.note(uri, version, ms, byParts);
  }

  private note(uri: string, version: number, ms: number, byParts: boolean): void {
    const was = this.diagnosticsMs.get(uri);
    this.diagnosticsMs.set(uri, { version, ms, parts: byParts ? ms : was?.parts, whole: byParts ? was?.whole : ms });
  }

  forget(uri: string): void {
    this.diagnosticsMs.delete(uri);
    this.lineCounts.delete(uri);
    clearTimeout(this.timers.get(uri));
    this.timers.delete(uri);
    this.views.delete(uri);
    this.cache.delete(uri);
    this.lastEdit.delete(uri);
    for (const w of this.waiters.get(uri) ?? []) w.resolve(undefined);
    this.waiters.delete(uri);
  }

  /** The last view, whatever its version (for requests that may use slightly stale data). */
  latest(uri: string): DocumentView | undefined {
    return this.views.get(uri);
  }

  allViews(): DocumentView[] {
    return [...this.views.values()];
  }

  /**
   * The view of the document's current version, waiting for its analysis when one is due.
   * Resolves undefined when the document closes, the analysis fails, or `cancelled` fires.
   */
  viewFor(uri: string, onCancel?: (cb: () => void) => void): Promise<DocumentView | undefined> {
    const version = this.hooks.currentVersion(uri);
    if (version === undefined) return Promise.resolve(undefined);
    const v = this.views.get(uri);
    if (v && v.version === version) return Promise.resolve(v);
    // Nothing due for this document (say, its last analysis failed): start one now.
    if (!this.timers.has(uri) && !this.running.get(uri)) this.schedule(uri, 0);
    return new Promise((resolve) => {
      const w: Waiter = { version, resolve };
      this.waiters.set(uri, [...(this.waiters.get(uri) ?? []), w]);
      onCancel?.(() => {
        this.waiters.set(uri, (this.waiters.get(uri) ?? []).filter((x) => x !== w));
        resolve(undefined);
      });
    });
  }

  private async run(uri: string): Promise<void> {
    const job = await this.hooks.makeJob(uri);
    if (!job) {
      this.settle(uri, undefined);
      return;
    }
    const reused = this.cache.lookup(job);
    if (reused) {
      if (reused.version !== this.hooks.currentVersion(uri)) return;
      this.views.set(uri, reused);
      this.hooks.onView(reused);
      this.settle(uri, reused);
      return;
    }
    this.busy(+1);
    this.running.set(uri, (this.running.get(uri) ?? 0) + 1);
    try {
      const view = await this.engine.analyze(job);
      // An edit that arrived during the analysis has scheduled a newer one: drop this result.
      this.cache.store(job, view);
      const early = this.diagnosticsMs.get(uri);
      if (!early || early.version !== view.version) this.note(uri, view.version, view.analysisMilliseconds, view.byParts === true);
      if (view.version !== this.hooks.currentVersion(uri)) return;
      this.views.set(uri, view);
      this.hooks.onView(view);
      this.settle(uri, view);
    } catch (e) {
      if (e instanceof Superseded) return;
      this.hooks.onError(uri, e);
      this.settle(uri, this.views.get(uri));
    } finally {
      this.running.set(uri, (this.running.get(uri) ?? 1) - 1);
      this.busy(-1);
    }
  }

  private settle(uri: string, view: DocumentView | undefined): void {
    const ws = this.waiters.get(uri) ?? [];
    const keep = ws.filter((w) => view && w.version > view.version);
    for (const w of ws) if (!keep.includes(w)) w.resolve(view);
    if (keep.length > 0) this.waiters.set(uri, keep);
    else this.waiters.delete(uri);
  }

  private busy(delta: number): void {
    const before = this.inFlight > 0;
    this.inFlight += delta;
    const after = this.inFlight > 0;
    if (before !== after) this.hooks.onBusyChange?.(after);
  }

  dispose(): void {
    for (const t of this.timers.values()) clearTimeout(t);
    this.timers.clear();
  }
}
