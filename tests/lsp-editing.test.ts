/**
 * The language server while a person types (issue 16, issue 15's status item): a burst of edits
 * is answered with the diagnostics of the last version only and the analysis worker is never
 * restarted for a newer edit (its start count and thread stay, read with the
 * `offloadLedger/debugStats` request and the "analysis worker started" log line); the same text
 * re-sent is answered from the document's last analysis without the engine; the models of
 * unchanged sibling files are not rebuilt for an edit; the project status goes from "indexing N
 * of M files" to "ready" on a workspace check. WorkerEngine itself is driven with a stand-in
 * worker script: a stale job that never reaches a check is ended only after the timeout.
 */
import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { Superseded } from '../server/src/lsp/analysis/engine';
import type { AnalysisJob } from '../server/src/lsp/analysis/job';
import { sameInputs } from '../server/src/lsp/analysis/reuse';
import { WorkerEngine } from '../server/src/lsp/analysis/workerEngine';
import { Scheduler } from '../server/src/lsp/analysis/scheduler';
import type { DocumentView } from '../server/src/lsp/view/types';
import { projectStatusText } from '../client/src/projectStatusText';
import { DebugStatsRequest, type DebugStats, ProjectStatusNotification, type ProjectStatusParams, ServerCommands, type WorkspaceCheckResult } from '../server/src/lsp/protocol';
import { generateSource, linesWith } from './e2e/generate';
import { type TestClient, ROOT, startTestClient, uriOf } from './e2e/lspClient';

const LONG = 180_000;
const logs = (c: TestClient): string[] => c.notifications.filter((n) => n.method === 'window/logMessage').map((n) => (n.params as { message: string }).message);
const stats = (c: TestClient): Promise<DebugStats> => c.request<DebugStats>(DebugStatsRequest.method, null);

describe('typing into a generated file (debounce 0)', () => {
  let c: TestClient;
  let lines: string[];
  let uri: string;
  let version = 1;
  beforeAll(async () => {
    c = await startTestClient({ settings: { debounceMs: 0 } });
    lines = generateSource(2000).split('\n');
    uri = c.open('/tmp/offload-ledger-editing/typing.c', lines.join('\n'));
    await c.waitForDiagnostics(uri, (p) => p.version === 1, LONG);
  }, LONG);
  afterAll(async () => {
    expect(await c.close()).toBe(0);
  });

  it('a burst of edits yields diagnostics for the last version only, from the same warm worker', async () => {
    const before = await stats(c);
    expect(before.engine.kind).toBe('worker');
    expect(before.engine.workerStarts).toBe(1);
    const targets = linesWith(lines.join('\n'), '+= 1.0f;');
    const seen = c.published.length;
    for (let k = 0; k < 8; k++) {
      version++;
      const line = targets[(k * 5) % targets.length];
      const old = lines[line];
      lines[line] = `      u[(ny / 2) * nx + ${k}] += 1.0f;`;
      void c.connection.sendNotification('textDocument/didChange', {
        textDocument: { uri, version },
        contentChanges: [{ range: { start: { line, character: 0 }, end: { line, character: old.length } }, text: lines[line] }],
      });
      await new Promise((r) => setTimeout(r, 20));
    }
    const last = version;
    await c.waitForDiagnostics(uri, (p) => p.version === last, LONG);
    // Stale results are dropped: nothing of an older version reached the client after the burst.
    expect(c.published.slice(seen).filter((p) => p.uri === uri).map((p) => p.version)).toEqual([last]);
    const after = await stats(c);
    // No worker was ended and restarted: every start is a worker still running (a second one may
    // have joined to take the newest job while the first finished a stale step), the first is the same thread.
    expect(after.engine.workerStarts).toBe(after.engine.workers);
    expect(after.engine.workers).toBeLessThanOrEqual(2);
    expect(after.engine.workerThreadId).toBe(before.engine.workerThreadId);
    expect(after.engine.timeouts).toBe(0);
    // At least the job running when the burst began was marked stale rather than killed.
    expect(after.engine.jobsCancelled).toBeGreaterThan(0);
    expect(after.engine.jobsCompleted).toBeLessThan(before.engine.jobsCompleted + 8);
    const started = logs(c).filter((m) => /analysis worker started/.test(m));
    expect(started).toHaveLength(after.engine.workerStarts);
    expect(started[0]).toMatch(/analysis worker started \(#1, thread \d+\)/);
    expect(logs(c).filter((m) => /worker stopped|unhandled|uncaught|failed/i.test(m))).toEqual([]);
  }, LONG);

  it('the same text re-sent is answered from the last analysis, without the engine', async () => {
    // The diagnostics go out before the rest of the view is built: a lens request waits for the view.
    await c.request<unknown[]>('textDocument/codeLens', { textDocument: { uri } });
    const before = await stats(c);
    const previous = c.published.filter((p) => p.uri === uri).at(-1)!;
    version++;
    c.change(uri, version, lines.join('\n'));
    const diags = await c.waitForDiagnostics(uri, (p) => p.version === version, LONG);
    expect(diags).toEqual(previous.diagnostics);
    const after = await stats(c);
    expect(after.viewCacheHits).toBe(before.viewCacheHits + 1);
    expect(after.engine.jobsStarted).toBe(before.engine.jobsStarted);
    // Hovers and lenses are served for the new version from the reused view.
    const lenses = await c.request<unknown[]>('textDocument/codeLens', { textDocument: { uri } });
    expect(lenses.length).toBeGreaterThan(0);
  }, LONG);
});

describe('a project of sibling files', () => {
  const DIR = join(ROOT, 'tests', 'fixtures', 'workspace');
  const MAIN = join(DIR, 'main.c');
  let c: TestClient;
  beforeAll(async () => {
    c = await startTestClient({ rootPath: DIR, settings: { debounceMs: 0 } });
  });
  afterAll(async () => {
    expect(await c.close()).toBe(0);
  });

  it('opening a file indexes its siblings (indexing N of M, then ready); an edit does not re-model them', async () => {
    const text = readFileSync(MAIN, 'utf8');
    const uri = c.open(MAIN, text);
    await c.waitForDiagnostics(uri, (p) => p.version === 1, LONG);
    const ready = (await c.waitForNotification(ProjectStatusNotification.method, (p) => (p as ProjectStatusParams).state === 'ready')) as ProjectStatusParams;
    // main.c and kernels.c.
    expect(ready.files).toBe(2);
    const states = c.notifications.filter((n) => n.method === ProjectStatusNotification.method).map((n) => n.params as ProjectStatusParams);
    const indexing = states.findIndex((s) => s.state === 'indexing' && s.scope === uri);
    expect(indexing).toBeGreaterThanOrEqual(0);
    expect(states[indexing]).toMatchObject({ done: 0, total: 2 });
    expect(states.findIndex((s) => s.state === 'ready')).toBeGreaterThan(indexing);
    await c.request<unknown[]>('textDocument/codeLens', { textDocument: { uri } });
    const first = await stats(c);
    expect(first.engine.modelsBuilt).toBe(1);

    c.change(uri, 2, `${text}\n/* an edit */\n`);
    await c.waitForDiagnostics(uri, (p) => p.version === 2, LONG);
    await c.request<unknown[]>('textDocument/codeLens', { textDocument: { uri } });
    const second = await stats(c);
    expect(second.engine.modelsBuilt).toBe(1);
    expect(second.engine.modelHits).toBeGreaterThan(first.engine.modelHits);
    // Nothing to build: no "indexing" for the edit.
    const after = c.notifications.filter((n) => n.method === ProjectStatusNotification.method).map((n) => n.params as ProjectStatusParams);
    expect(after.slice(states.length).filter((s) => s.state === 'indexing')).toEqual([]);
  }, LONG);
});

describe('the project status during a workspace check', () => {
  let c: TestClient;
  beforeAll(async () => {
    c = await startTestClient({ rootPath: join(ROOT, 'examples', 'hall') });
  });
  afterAll(async () => {
    expect(await c.close()).toBe(0);
  });

  it('goes from "indexing 0 of 5" through each file to "ready" with the file count; a second check is answered from the cache', async () => {
    const seen = c.notifications.length;
    const result = await c.request<WorkspaceCheckResult>('workspace/executeCommand', { command: ServerCommands.checkWorkspace, arguments: [] });
    expect(result.files).toBe(5);
    const states = c.notifications.slice(seen).filter((n) => n.method === ProjectStatusNotification.method).map((n) => n.params as ProjectStatusParams);
    const checking = states.filter((s) => s.state === 'indexing' && s.scope === 'workspace');
    // examples/hall holds five C files (examples/README.md table).
    expect(checking.map((s) => `${s.done} of ${s.total}`)).toEqual(['0 of 5', '1 of 5', '2 of 5', '3 of 5', '4 of 5']);
    expect(states.at(-1)).toEqual({ state: 'ready', files: 5 });
    const before = await stats(c);
    const again = await c.request<WorkspaceCheckResult>('workspace/executeCommand', { command: ServerCommands.checkWorkspace, arguments: [] });
    expect(again.findings).toEqual(result.findings);
    const after = await stats(c);
    expect(after.checkCacheHits - before.checkCacheHits).toBe(5);
    expect(after.engine.jobsStarted).toBe(before.engine.jobsStarted);
  }, LONG);
});

describe('WorkerEngine with a stand-in worker', () => {
  // Replies like server/src/lsp/analysis/workerMain.ts; a job whose text is "spin" works for
  // `ms` milliseconds of busy time, checking the shared cancellation flag only when `checks` is set.
  const dir = mkdtempSync(join(tmpdir(), 'ol-engine-'));
  const script = join(dir, 'worker.js');
  writeFileSync(script, `
const { parentPort, workerData, threadId } = require('node:worker_threads');
const cancel = workerData.cancel;
parentPort.on('message', ({ id, job }) => {
  const counters = { modelsBuilt: 0, modelHits: 0, threadId };
  const [kind, ms, checks] = job.text.split(' ');
  const end = Date.now() + Number(ms || 0);
  while (Date.now() < end) {
    if (checks === 'checks' && Atomics.load(cancel, 0) >= id) return parentPort.postMessage({ id, kind: 'cancelled', counters });
  }
  parentPort.postMessage({ id, kind: 'done', view: { uri: job.uri, version: job.version }, counters });
});
`);
  const job = (version: number, text: string): AnalysisJob => ({ uri: 'file:///a.c', version, path: '/a.c', language: 'c', text, bindings: [], baseline: 'auto', view: {} as AnalysisJob['view'] });

  it('a newer edit marks the running job stale: it rejects at once, the worker stops it at its next check and takes the newer one', async () => {
    const starts: number[] = [];
    const e = new WorkerEngine(script, { onStart: (n) => starts.push(n), maxWorkers: 1 });
    const first = e.analyze(job(1, 'spin 5000 checks'));
    await new Promise((r) => setTimeout(r, 200));
    const t0 = Date.now();
    const second = e.analyze(job(2, 'spin 0'));
    await expect(first).rejects.toBeInstanceOf(Superseded);
    expect((await second).version).toBe(2);
    expect(Date.now() - t0).toBeLessThan(4000);
    expect(starts).toEqual([1]);
    expect(e.stats()).toMatchObject({ workerStarts: 1, jobsCancelled: 1, timeouts: 0, jobsCompleted: 1 });
    await e.dispose();
  }, 30_000);

  it('with two workers the newest job does not wait for a stale step: a second warm worker takes it, and neither is ended', async () => {
    const e = new WorkerEngine(script, { maxWorkers: 2 });
    const first = e.analyze(job(1, 'spin 3000'));
    await new Promise((r) => setTimeout(r, 200));
    const t0 = Date.now();
    const second = e.analyze(job(2, 'spin 0'));
    await expect(first).rejects.toBeInstanceOf(Superseded);
    expect((await second).version).toBe(2);
    expect(Date.now() - t0).toBeLessThan(2000);
    // The stale step ends on its own; the next job goes to the first idle worker, no new one.
    await new Promise((r) => setTimeout(r, 3500));
    expect((await e.analyze(job(3, 'spin 0'))).version).toBe(3);
    expect((await e.analyze(job(4, 'spin 0'))).version).toBe(4);
    expect(e.stats()).toMatchObject({ workerStarts: 2, workers: 2, timeouts: 0, jobsCancelled: 1 });
    await e.dispose();
  }, 30_000);

  it('a stale job that never reaches a check is ended after the timeout, and a new worker takes the newest job', async () => {
    const e = new WorkerEngine(script, { staleTimeoutMs: 300, maxWorkers: 1 });
    const first = e.analyze(job(1, 'spin 20000'));
    await new Promise((r) => setTimeout(r, 200));
    const second = e.analyze(job(2, 'spin 0'));
    await expect(first).rejects.toBeInstanceOf(Superseded);
    expect((await second).version).toBe(2);
    expect(e.stats()).toMatchObject({ workerStarts: 2, timeouts: 1 });
    await e.dispose();
  }, 30_000);

  it('an edit marks the running job stale before the debounce ends (cancel); a job with the same inputs shares the running one', async () => {
    const e = new WorkerEngine(script, { maxWorkers: 1 });
    const first = e.analyze(job(1, 'spin 5000 checks'));
    await new Promise((r) => setTimeout(r, 200));
    e.cancel('file:///a.c');
    await expect(first).rejects.toBeInstanceOf(Superseded);
    const a = e.analyze(job(2, 'spin 300'));
    const b = e.analyze(job(3, 'spin 300'));
    expect([(await a).version, (await b).version]).toEqual([2, 3]);
    expect(e.stats()).toMatchObject({ workerStarts: 1, jobsStarted: 2, jobsCancelled: 1 });
    await e.dispose();
  }, 30_000);

  it('inputs compare by text, settings and the texts of the project files', () => {
    const a = { ...job(1, 'x'), neighbours: [{ path: '/b.c', language: 'c' as const, text: 'b' }] };
    expect(sameInputs(a, { ...a, version: 7 })).toBe(true);
    expect(sameInputs(a, { ...a, text: 'y' })).toBe(false);
    expect(sameInputs(a, { ...a, bindings: [['N', 4]] })).toBe(false);
    expect(sameInputs(a, { ...a, neighbours: [{ ...a.neighbours[0], text: 'c' }] })).toBe(false);
  });
});

describe('Scheduler while typing (stand-in engine)', () => {
  // The engine answers at once and reports a whole analysis as taking 1,500 ms and an analysis
  // by parts (same line count as the previous job) 5 ms, as the worker's views say.
  function setup(debounceMs: number) {
    let version = 1;
    let text = 'a\nb\nc';
    const started: number[] = [];
    const published: number[] = [];
    let lastLines = -1;
    const engine = {
      analyze: async (job: AnalysisJob): Promise<DocumentView> => {
        started.push(job.version);
        const lines = job.text.split('\n').length;
        const byParts = lines === lastLines;
        lastLines = lines;
        return { uri: job.uri, version: job.version, diagnostics: [], analysisMilliseconds: byParts ? 5 : 1500, ...(byParts ? { byParts: true } : {}) } as unknown as DocumentView;
      },
      cancel: () => undefined,
      stats: () => ({}),
      dispose: async () => undefined,
    };
    const uri = 'file:///t.c';
    const s = new Scheduler(engine as never, {
      makeJob: async () => ({ uri, version, path: '/t.c', language: 'c', text, bindings: [], baseline: 'auto', view: {} as AnalysisJob['view'] }),
      currentVersion: () => version,
      onView: (v) => published.push(v.version),
      onError: (_u, e) => { throw e; },
    });
    const edit = (t: string): void => {
      version++;
      text = t;
      s.schedule(uri, debounceMs, true, t.split('\n').length);
    };
    s.schedule(uri, 0, false, 3);
    return { s, edit, started, published, sleep: (ms: number) => new Promise((r) => setTimeout(r, ms)) };
  }

  it('keystrokes within lines are analysed at once once an edit was analysed by parts, whatever the open cost', async () => {
    const { s, edit, started, published, sleep } = setup(100);
    await sleep(20);
    expect(published).toEqual([1]);
    // The first keystroke after a pause waits the debounce; the ones after it, 30 ms apart, do not.
    for (const t of ['a1\nb\nc', 'a12\nb\nc', 'a123\nb\nc', 'a1234\nb\nc', 'a12345\nb\nc', 'a123456\nb\nc']) {
      edit(t);
      await sleep(30);
    }
    await sleep(150);
    // Versions 2–7: every keystroke after the first is analysed (the first is superseded before its wait ends).
    expect(started.filter((v) => v > 1)).toEqual([3, 4, 5, 6, 7]);
    expect(published.at(-1)).toBe(7);
    s.dispose();
  });

  it('keystrokes that change the line count, whose analyses are whole and slow, wait for the typing to pause', async () => {
    const { s, edit, started, published, sleep } = setup(0);
    await sleep(20);
    let t = 'a\nb\nc';
    for (let k = 0; k < 6; k++) {
      t += '\nx';
      edit(t);
      await sleep(30);
    }
    await sleep(150);
    // The first keystroke after the pause is analysed at once (debounce 0); after it only the last
    // version is: each wait (one and a half gaps) was restarted by the next keystroke.
    expect(started.filter((v) => v > 1)).toEqual([2, 7]);
    expect(published.at(-1)).toBe(7);
    s.dispose();
  });
});

describe('the project status item (client/src/statusBar.ts)', () => {
  it('says "Indexing N of M files" while indexing and the file count when ready, with a tooltip saying what it is', () => {
    const indexing = projectStatusText({ state: 'indexing', done: 3, total: 40, files: 12, scope: 'workspace' });
    expect(indexing.text).toBe('$(sync~spin) Indexing 3 of 40 files');
    expect(indexing.tooltip).toMatch(/^Offload Ledger project index: /);
    expect(indexing.tooltip).toContain('Checking the workspace: 3 of 40 files done.');
    const ready = projectStatusText({ state: 'ready', files: 40 });
    expect(ready.text).toBe('$(database) 40 files');
    expect(ready.tooltip).toContain('Ready: 40 files indexed.');
    expect(projectStatusText({ state: 'ready', files: 1 }).text).toBe('$(database) 1 file');
  });
});
