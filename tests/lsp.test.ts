/**
 * The language server's edge: conversions (ranges, line insertions, severities), the view built
 * from an analysis (hovers, lenses, actions), and the bundled server over stdio as any LSP
 * client drives it. Expected findings come from the CLI's JSON report of the same file, so the
 * editor and the command line are checked to agree.
 */
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { applyLineEdits } from '../server/src/core/data/edits';
import type { Finding } from '../server/src/core/types';
import { ConfigStore } from '../server/src/lsp/config';
import { codeActionsFor } from '../server/src/lsp/features/codeActions';
import { hoverAt } from '../server/src/lsp/features/hover';
import { languageOfDocument, pathOfUri } from '../server/src/lsp/languages';
import { parseHostProfile, resolveProfile } from '../server/src/lsp/profile';
import { PlanningDataRequest, ServerCommands, StatusNotification, type WorkspaceCheckResult } from '../server/src/lsp/protocol';
import { buildView } from '../server/src/lsp/view/build';
import { toDiagnostic } from '../server/src/lsp/view/diagnostics';
import { formatSeconds, formatSpeedup } from '../server/src/lsp/view/format';
import { lensTitle } from '../server/src/lsp/view/lenses';
import { lineInsertionsToEdits } from '../server/src/lsp/view/ranges';
import type { DocumentView } from '../server/src/lsp/view/types';
import { type TestClient, ROOT, startTestClient, uriOf } from './e2e/lspClient';
import { analyzeFile, runCli } from './helpers';

const NAIVE = join(ROOT, 'examples', 'hall', 'hall_naive_acc.c');
const STALE = join(ROOT, 'examples', 'hall', 'hall_stale_acc.c');
const VIEW_OPTIONS = { profileName: 'pcie4-hbm2e', baseline: 'node', severity: {}, codeLens: true, inlayHints: true, docsHref: 'file:///docs/lsp/codes.md' };

/** Applies LSP edits (non-overlapping) to a text, last first. */
function applyEdits(text: string, edits: { range: { start: { line: number; character: number } }; newText: string }[]): string {
  const lines = text.split('\n');
  const offset = (l: number, c: number): number => lines.slice(0, l).reduce((a, s) => a + s.length + 1, 0) + c;
  const sorted = [...edits].sort((a, b) => offset(b.range.start.line, b.range.start.character) - offset(a.range.start.line, a.range.start.character));
  let out = text;
  for (const e of sorted) {
    const at = offset(e.range.start.line, e.range.start.character);
    out = out.slice(0, at) + e.newText + out.slice(at);
  }
  return out;
}

/** Findings of the CLI's JSON report (1-based lines), the reference for the server's diagnostics. */
function cliFindings(path: string): { code: string; line: number }[] {
  const r = runCli(['check', '--format', 'json', path]);
  const files = JSON.parse(r.stdout).files as { findings: { code: string; line: number }[] }[];
  return files[0].findings.map((f) => ({ code: f.code, line: f.line }));
}

describe('conversions at the edge', () => {
  it('line insertions as LSP edits give the same text as the core applyLineEdits (core/data/edits.ts)', () => {
    const text = 'a\nb\nc\n';
    const cases = [[{ line: 1, text: 'x' }], [{ line: 2, text: 'x' }, { line: 2, text: 'y' }], [{ line: 4, text: 'end' }], [{ line: 9, text: 'past' }, { line: 3, text: 'z' }]];
    for (const edits of cases) expect(applyEdits(text, lineInsertionsToEdits(text, edits))).toBe(applyLineEdits(text, edits));
    const noNewline = 'a\nb';
    expect(applyEdits(noNewline, lineInsertionsToEdits(noNewline, [{ line: 5, text: 'q' }]))).toBe(applyLineEdits(noNewline, [{ line: 5, text: 'q' }]));
  });
  it('findings become diagnostics with the code, its documentation link and the chosen severity (LSP 3.17 Diagnostic)', () => {
    const f: Finding = { code: 'already-present', severity: 'info', range: { start: { line: 3, col: 4 }, end: { line: 3, col: 9 } }, message: 'm', array: 'u' };
    const d = toDiagnostic(f, {}, 'file:///x/codes.md')!;
    expect(d).toMatchObject({ code: 'already-present', severity: 3, source: 'offload-ledger', codeDescription: { href: 'file:///x/codes.md#already-present' }, data: { array: 'u' } });
    expect(d.range).toEqual({ start: { line: 3, character: 4 }, end: { line: 3, character: 9 } });
    // LSP 3.17 DiagnosticSeverity: Error 1, Warning 2, Information 3, Hint 4.
    expect(toDiagnostic(f, { 'already-present': 'error' }, '')!.severity).toBe(1);
    expect(toDiagnostic(f, { 'already-present': 'off' }, '')).toBeUndefined();
  });
  it('languages: by extension first, then by the editor language id (Fortran ids differ between editors)', () => {
    expect(languageOfDocument('file:///a/b.f90', 'plaintext')).toBe('fortran');
    expect(languageOfDocument('untitled:Untitled-1', 'FortranFreeForm')).toBe('fortran');
    expect(languageOfDocument('untitled:Untitled-2', 'cpp')).toBe('cpp');
    expect(languageOfDocument('file:///a/notes.txt', 'plaintext')).toBeUndefined();
    expect(pathOfUri('file:///tmp/a%20b.c')).toBe('/tmp/a b.c');
  });
  it('numbers: seconds in the unit that fits, speedups as a two-digit range (common practice)', () => {
    expect(formatSeconds(0.000544)).toBe('544 µs');
    expect(formatSeconds(3.2166e-3)).toBe('3.22 ms');
    expect(formatSeconds(null)).toBe('—');
    expect(formatSpeedup({ low: 4.12, expected: 5.9, high: 7.44 })).toBe('4.1–7.4×');
    expect(lensTitle({ toDevice: '1.4 GiB', toHost: '732.4 MiB' }, '0.068–0.12×', 'pcie4-hbm2e')).toBe('per step: 1.4 GiB to device · 732.4 MiB to host · est. speedup 0.068–0.12× on pcie4-hbm2e');
    expect(lensTitle({ toDevice: '0 B', toHost: '0 B' }, undefined, 'x')).toBe('per step: 0 B to device · 0 B to host');
  });
  it('a measured host profile replaces the preset host; a bad one warns and keeps the preset', () => {
    const host = { name: 'here', cores: 2, bandwidthNode: 20e9, bandwidthCore: 10e9, peakFlopsNode: 1e11, cacheBytesPerCore: 1 << 20, memoryBytes: 24 * 2 ** 30 };
    const good = resolveProfile('pcie5-hbm3', '/p.json', () => JSON.stringify(host));
    expect(good.label).toBe('pcie5-hbm3 + measured host');
    expect(good.profile.host.bandwidthNode).toBe(20e9);
    expect(good.profile.device.name).toBe('hbm3-80g');
    const bad = resolveProfile('pcie5-hbm3', '/p.json', () => '{"cores": 0}');
    expect(bad.label).toBe('pcie5-hbm3');
    expect(bad.warnings[0]).toMatch(/cannot use \/p\.json \(missing or non-positive cores/);
    expect(resolveProfile('nope', '').warnings[0]).toMatch(/unknown profile "nope"/);
    expect(typeof parseHostProfile({ host })).toBe('object');
  });
});

describe('document view of the naive hall port', () => {
  let view: DocumentView;
  let text: string;
  beforeAll(async () => {
    text = readFileSync(NAIVE, 'utf8');
    const analysis = await analyzeFile(NAIVE);
    view = buildView({ uri: uriOf(NAIVE), version: 1, text, analysis, userBindings: new Map(), analysisMilliseconds: 0 }, VIEW_OPTIONS);
  });
  it('has one diagnostic per finding of the CLI report, same codes and lines', () => {
    expect(view.diagnostics.map((d) => ({ code: d.code, line: d.range.start.line + 1 }))).toEqual(cliFindings(NAIVE));
  });
  it('a hover on the `for` of the pressure nest (line 121) gives the nest card with its numbers', () => {
    // examples/hall/hall_naive_acc.c line 121: `for (int k = 2; k < NZ - 2; k++)`, 8 spaces of indent.
    const h = hoverAt(view, { line: 120, character: 9 })!;
    const md = (h.contents as { value: string }).value;
    expect(md).toMatch(/Loop nest at line 121/);
    // 46,259,136 = (600-4)(400-4)(200-4) interior cells, from the #defines at lines 25–31.
    expect(md).toContain('46,259,136');
    expect(md).toMatch(/\| flops \/ iteration \| 19 \|/);
    expect(md).toMatch(/\| speedup \| [\d.]+–[\d.]+×/);
    expect(md).toMatch(/profile `pcie4-hbm2e`/);
  });
  it('a hover on an array name in a clause gives its size: 600×400×200 floats = 183.1 MiB', () => {
    const col = text.split('\n')[119].indexOf('vx[');
    const md = (hoverAt(view, { line: 119, character: col })!.contents as { value: string }).value;
    // 48,000,000 × 4 B = 192,000,000 B = 183.1 MiB.
    expect(md).toMatch(/\*\*`vx`\*\* · float \(4 B\) · 48,000,000 = `N` elements · 183\.1 MiB/);
    expect(md).toMatch(/moved here \| 183\.1 MiB to device/);
  });
  it('a code lens above the time loop (line 116) states the bytes per step', () => {
    expect(view.lenses).toHaveLength(1);
    expect(view.lenses[0].range.start.line).toBe(115);
    expect(view.lenses[0].command!.title).toMatch(/^per step: 1\.4 GiB to device · 732\.4 MiB to host · est\. speedup [\d.]+–[\d.]+× on pcie4-hbm2e$/);
  });
  it('every transfer finding offers a data-region quick fix whose edits give the CLI suggestion', () => {
    for (const [k, d] of view.diagnostics.entries()) {
      const actions = codeActionsFor(view, { textDocument: { uri: view.uri }, range: d.range, context: { diagnostics: [d] } });
      expect(actions.length, `diagnostic ${k}`).toBeGreaterThan(0);
      expect(actions[0]).toMatchObject({ kind: 'quickfix', isPreferred: true });
      expect(actions[0].title).toMatch(/data region/);
    }
    const d = view.diagnostics[0];
    const fixed = applyEdits(text, codeActionsFor(view, { textDocument: { uri: view.uri }, range: d.range, context: { diagnostics: [d] } })[0].edit!.changes![view.uri]);
    // README.md: the suggested region is `#pragma acc data copyin(vx[0:N], vy[0:N], vz[0:N]) copy(p[0:N])`.
    expect(fixed).toContain('#pragma acc data copyin(vx[0:N], vy[0:N], vz[0:N]) copy(p[0:N])');
  });
  it('inlay hints sit at the end of each moving directive with its bytes per step', () => {
    expect(view.inlayHints.map((h) => h.position.line + 1)).toEqual([75, 120]);
    expect(view.inlayHints[1].label).toBe('→ device 732.4 MiB · → host 183.1 MiB per step');
  });
});

describe('bundled server over stdio', () => {
  let c: TestClient;
  beforeAll(async () => {
    c = await startTestClient({ rootPath: join(ROOT, 'examples', 'hall') });
  });
  afterAll(async () => {
    expect(await c.close()).toBe(0);
  });

  it('announces its capabilities (LSP 3.17 initialize result)', () => {
    const caps = c.initialize.capabilities;
    expect(caps.hoverProvider).toBe(true);
    expect(caps.codeLensProvider).toBeTruthy();
    expect(caps.inlayHintProvider).toBeTruthy();
    expect(caps.executeCommandProvider?.commands).toContain(ServerCommands.checkWorkspace);
    expect(c.initialize.serverInfo?.name).toBe('offload-ledger');
  });
  it('publishes diagnostics on open that match the CLI report', async () => {
    const uri = c.open(STALE, readFileSync(STALE, 'utf8'));
    const diags = await c.waitForDiagnostics(uri);
    expect(diags.map((d) => ({ code: d.code, line: d.range.start.line + 1 }))).toEqual(cliFindings(STALE));
    // hall_stale_acc.c's own BUG comments: the source injection (line 155) and the microphone read (line 160) are stale on the host.
    expect(diags.filter((d) => d.code === 'stale-on-host').map((d) => d.range.start.line + 1)).toEqual([155, 160]);
    expect(diags[0].codeDescription?.href).toMatch(/^file:\/\/.*docs\/lsp\/codes\.md#stale-on-device$/);
  });
  it('reports its state and profile for the status bar', async () => {
    const s = (await c.waitForNotification(StatusNotification.method, (p) => (p as { state: string }).state === 'ready')) as { profile: string };
    expect(s.profile).toBe('pcie4-hbm2e');
  });
  it('answers the planning view with the report of each open document and its estimates', async () => {
    const data = await c.request<{ files: { path: string; timeLoops: { line: number; estimate?: unknown }[] }[]; estimatesAvailable: boolean }>(PlanningDataRequest.method, {});
    expect(data.files.map((f) => f.path)).toEqual([STALE]);
    expect(data.files[0].timeLoops[0].line).toBe(136);
    expect(data.estimatesAvailable).toBe(true);
  });
  it('re-analyses on change and drops findings the edit removed', async () => {
    const uri = uriOf(STALE);
    const text = readFileSync(STALE, 'utf8').replace('p[IDX(SX, SY, SZ)] += ricker(t, dt);', ';');
    c.change(uri, 2, text);
    const diags = await c.waitForDiagnostics(uri, (p) => p.version === 2);
    expect(diags.filter((d) => d.code === 'stale-on-host').map((d) => d.range.start.line + 1)).toEqual([160]);
  });
  it('applies a severity setting and warns once about a bad one', async () => {
    c.settings = { severity: { 'transfer-in-time-loop': 'off' }, profile: 'no-such-machine' };
    await c.connection.sendNotification('workspace/didChangeConfiguration', { settings: null });
    const uri = uriOf(STALE);
    const diags = await c.waitForDiagnostics(uri, (p) => p.diagnostics.every((d) => d.code !== 'transfer-in-time-loop'));
    expect(diags.length).toBeGreaterThan(0);
    const logs = c.notifications.filter((n) => n.method === 'window/logMessage').map((n) => (n.params as { message: string }).message);
    expect(logs.filter((m) => m.includes('no-such-machine'))).toHaveLength(1);
    c.settings = {};
    await c.connection.sendNotification('workspace/didChangeConfiguration', { settings: null });
  });
  it('checks the workspace with work-done progress (LSP 3.17 $/progress begin … end)', async () => {
    const token = 'check-1';
    c.trackProgress(token);
    const result = await c.request<WorkspaceCheckResult>('workspace/executeCommand', { command: ServerCommands.checkWorkspace, arguments: [], workDoneToken: token });
    // examples/hall holds five C files (examples/README.md table).
    expect(result.files).toBe(5);
    expect(result.findings.error).toBeGreaterThan(0);
    const kinds = c.notifications.filter((n) => n.method === '$/progress' && (n.params as { token: string }).token === token).map((n) => (n.params as { value: { kind: string } }).value.kind);
    expect(kinds[0]).toBe('begin');
    expect(kinds.at(-1)).toBe('end');
    expect(c.published.some((p) => p.uri === uriOf(NAIVE))).toBe(true);
  });
  it('survives requests for unknown documents and unknown methods', async () => {
    const hover = await c.request('textDocument/hover', { textDocument: { uri: 'file:///nowhere.c' }, position: { line: 0, character: 0 } });
    expect(hover).toBeNull();
    await expect(c.request('offloadLedger/noSuchRequest', {})).rejects.toThrow();
    const lenses = await c.request<unknown[]>('textDocument/codeLens', { textDocument: { uri: uriOf(STALE) } });
    expect(lenses).toHaveLength(1);
    expect(c.child.exitCode).toBeNull();
  });
});

describe('ConfigStore without workspace/configuration', () => {
  it('uses initializationOptions.settings, validated', async () => {
    const warnings: string[] = [];
    const store = new ConfigStore({ console: { warn: (m: string) => warnings.push(m) } } as never);
    store.initial = { debounceMs: 50, baseline: 'rack' };
    const s = await store.forDocument('file:///a.c');
    expect(s.debounceMs).toBe(50);
    expect(s.baseline).toBe('auto');
    expect(warnings).toHaveLength(1);
  });
});
