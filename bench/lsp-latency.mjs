// Benchmark (not a test) of the bundled language server over stdio, as an editor drives it:
//   - edit-to-diagnostics latency on generated 5,000- and 20,000-line files at debounce 0 (the
//     analysis itself): one-line edits inside one function (the typing path re-analyses only the
//     function's part of the file), and edits that add a line (a whole-file analysis);
//   - open-to-first-diagnostics latency;
//   - hover latency (loop keywords of the 5,000-line file, after its analysis);
//   - resident memory of the server process (main thread + analysis worker) after opening every
//     source of the demo workspace (examples/);
//   - steady typing on the 5,000-line file: 20 one-line edits 60 ms apart, each edit's latency
//     until diagnostics of its version or a newer one arrive (median, max), and the last edit's
//     latency, at the default debounce and at 0 (stale results are dropped, so an intermediate
//     edit is answered by a newer version's diagnostics).
// Targets (issue 16) are printed beside the figures.
// Usage: npm run build && node bench/lsp-latency.mjs [edits per size, default 20] [sizes, default 5000,20000]
//        OFFLOAD_LEDGER_BENCH=typing node bench/lsp-latency.mjs   (the steady-typing part only)
import { readFileSync, readdirSync } from 'node:fs';
import { createRequire } from 'node:module';
import { dirname, join } from 'node:path';
import { performance } from 'node:perf_hooks';
import { loadTs } from '../scripts/load-ts.mjs';
import { fileURLToPath } from 'node:url';

const root = join(dirname(fileURLToPath(import.meta.url)), '..');
const edits = Number(process.argv[2] ?? 20);
const sizes = (process.argv[3] ?? '5000,20000').split(',').map(Number);
const only = process.env.OFFLOAD_LEDGER_BENCH ?? '';

// The test suite's LSP client and source generator (TypeScript, bundled in memory).
const external = ['vscode-jsonrpc', 'vscode-languageserver-protocol'];
const { startTestClient } = await loadTs('tests/e2e/lspClient.ts', external);
const { generateSource, linesWith } = await loadTs('tests/e2e/generate.ts', external);
// OFFLOAD_LEDGER_BENCH_SERVER: another bundle (say, a copy of an older build) to compare against.
const server = process.env.OFFLOAD_LEDGER_BENCH_SERVER ?? join(root, 'server', 'dist', 'lsp.js');

const stats = (xs) => {
  const s = [...xs].sort((a, b) => a - b);
  const q = (p) => s[Math.min(s.length - 1, Math.floor(p * s.length))];
  return { median: q(0.5), p95: q(0.95), min: s[0], max: s[s.length - 1] };
};
const ms = (x) => `${x.toFixed(0)} ms`;
const rssMiB = (pid) => Number(/VmRSS:\s+(\d+) kB/.exec(readFileSync(`/proc/${pid}/status`, 'utf8'))[1]) / 1024;

const rows = [];
for (const size of only === 'typing' ? [] : sizes) {
  const c = await startTestClient({ serverPath: server, settings: { debounceMs: 0 } });
  const lines = generateSource(size).split('\n');
  const path = `/tmp/offload-ledger-bench/gen${size}.c`;
  let t0 = performance.now();
  const uri = c.open(path, lines.join('\n'));
  await c.waitForDiagnostics(uri, (p) => p.version === 1, 600_000);
  const open = performance.now() - t0;
  const targets = linesWith(lines.join('\n'), '+= 1.0f;');
  const latencies = [];
  for (let v = 2; v < 2 + edits; v++) {
    const line = targets[(v * 7) % targets.length];
    const old = lines[line];
    lines[line] = `      u[(ny / 2) * nx + ${v}] += 1.0f;`;
    t0 = performance.now();
    void c.connection.sendNotification('textDocument/didChange', {
      textDocument: { uri, version: v },
      contentChanges: [{ range: { start: { line, character: 0 }, end: { line, character: old.length } }, text: lines[line] }],
    });
    await c.waitForDiagnostics(uri, (p) => p.version === v, 600_000);
    latencies.push(performance.now() - t0);
  }
  // Edits that add a line (Enter at the end of a statement): the positions below move, so the
  // whole file is analysed.
  const added = [];
  for (let v = 2 + edits; v < 5 + edits; v++) {
    const line = targets[(v * 5) % targets.length];
    lines.splice(line + 1, 0, '');
    t0 = performance.now();
    void c.connection.sendNotification('textDocument/didChange', {
      textDocument: { uri, version: v },
      contentChanges: [{ range: { start: { line, character: lines[line].length }, end: { line, character: lines[line].length } }, text: '\n' }],
    });
    await c.waitForDiagnostics(uri, (p) => p.version === v, 600_000);
    added.push(performance.now() - t0);
  }
  const hovers = [];
  if (size === 5000) {
    const loops = linesWith(lines.join('\n'), 'for (int j = 1;');
    for (let k = 0; k < 50; k++) {
      const line = loops[(k * 13) % loops.length];
      t0 = performance.now();
      const h = await c.request('textDocument/hover', { textDocument: { uri }, position: { line, character: 5 } });
      hovers.push(performance.now() - t0);
      if (!h) throw new Error(`no hover at line ${line + 1}`);
    }
  }
  const rss = rssMiB(c.child.pid);
  await c.close();
  rows.push({ size, lines: lines.length, open, edit: stats(latencies), added: stats(added), hover: hovers.length ? stats(hovers) : null, rss });
}

// Steady typing: edits 60 ms apart on the 5,000-line file, as a person types.
const typing = [];
for (const debounceMs of [undefined, 0]) {
  const c = await startTestClient({ serverPath: server, settings: debounceMs === undefined ? {} : { debounceMs } });
  const lines = generateSource(5000).split('\n');
  const uri = c.open('/tmp/offload-ledger-bench/typing5000.c', lines.join('\n'));
  await c.waitForDiagnostics(uri, (p) => p.version === 1, 600_000);
  const targets = linesWith(lines.join('\n'), '+= 1.0f;');
  const sent = new Map();
  const answered = new Map();
  const seen = c.published.length;
  const N = 20;
  const watch = setInterval(() => {
    for (const p of c.published.slice(seen)) {
      if (p.uri !== uri || p.version === undefined) continue;
      for (const [v, t] of sent) if (!answered.has(v) && p.version >= v) answered.set(v, (p.at ??= performance.now()) - t);
    }
  }, 2);
  for (let v = 2; v < 2 + N; v++) {
    const line = targets[(v * 11) % targets.length];
    const old = lines[line];
    lines[line] = `      u[(ny / 2) * nx + ${v}] += 1.0f;`;
    sent.set(v, performance.now());
    void c.connection.sendNotification('textDocument/didChange', {
      textDocument: { uri, version: v },
      contentChanges: [{ range: { start: { line, character: 0 }, end: { line, character: old.length } }, text: lines[line] }],
    });
    if (v < 1 + N) await new Promise((r) => setTimeout(r, 60));
  }
  await c.waitForDiagnostics(uri, (p) => p.version === 1 + N, 600_000);
  await new Promise((r) => setTimeout(r, 10));
  clearInterval(watch);
  const lat = [...sent.keys()].map((v) => answered.get(v));
  const published = c.published.slice(seen).filter((p) => p.uri === uri).length;
  const starts = c.notifications
    .filter((n) => n.method === 'window/logMessage' && /analysis worker started/.test(n.params.message)).length;
  await c.close();
  typing.push({ debounce: debounceMs === undefined ? 'default' : String(debounceMs), edit: stats(lat), last: lat.at(-1), published, starts });
}

if (only === 'typing') {
  report();
  process.exit(0);
}

// The whole demo workspace open at once.
const demo = [];
const walk = (d) => {
  for (const e of readdirSync(d, { withFileTypes: true })) {
    if (e.isDirectory()) walk(join(d, e.name));
    else if (/\.(c|cpp|f90|f)$/i.test(e.name)) demo.push(join(d, e.name));
  }
};
walk(join(root, 'examples'));
const c = await startTestClient({ serverPath: server, rootPath: join(root, 'examples') });
const before = rssMiB(c.child.pid);
let t0 = performance.now();
const uris = demo.map((p) => c.open(p, readFileSync(p, 'utf8'), p.endsWith('.c') ? 'c' : 'fortran'));
for (const u of uris) await c.waitForDiagnostics(u, () => true, 600_000);
const demoMs = performance.now() - t0;
const demoRss = rssMiB(c.child.pid);
await c.close();

report();
function report() {
  for (const t of typing) {
    console.log(`steady typing, 5,000 lines, 20 edits 60 ms apart, debounce ${t.debounce}: edit→diagnostics median ${ms(t.edit.median)}, max ${ms(t.edit.max)}; last edit ${ms(t.last)}; ${t.published} publications; worker starts logged: ${t.starts}`);
  }
}
console.log(`Offload Ledger language server (bundled, stdio), node ${process.version}, ${edits} one-line edits per size, debounce 0`);
const target = (size, median, p95) => size <= 5000 ? ` (target ≤ ${median} ms median, ≤ ${p95} ms p95)` : ' (target ≤ 100 ms median)';
for (const r of rows) {
  console.log(`${String(r.lines).padStart(6)} lines: open→diagnostics ${ms(r.open)}${r.size <= 5000 ? ' (target ≤ 1000 ms)' : ''}; server RSS ${r.rss.toFixed(0)} MiB`);
  console.log(`              edit inside a function→diagnostics median ${ms(r.edit.median)}, p95 ${ms(r.edit.p95)} (min ${ms(r.edit.min)}, max ${ms(r.edit.max)})${target(r.size, 50, 100)}`);
  console.log(`              edit adding a line→diagnostics median ${ms(r.added.median)} (max ${ms(r.added.max)}; a whole-file analysis)`);
  if (r.hover) console.log(`              hover (loop keyword): median ${r.hover.median.toFixed(1)} ms, p95 ${r.hover.p95.toFixed(1)} ms over 50 requests (target ≤ 5 ms p95)`);
}
console.log(`demo workspace: ${demo.length} files open, all diagnostics after ${ms(demoMs)}; server RSS ${before.toFixed(0)} MiB idle → ${demoRss.toFixed(0)} MiB`);
