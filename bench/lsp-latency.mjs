// Benchmark (not a test) of the bundled language server over stdio, as an editor drives it:
//   - edit-to-diagnostics latency on generated 5,000- and 20,000-line files (one-line edits,
//     the default 300 ms debounce included, since that is what a user waits for);
//   - hover latency (loop keywords of the 5,000-line file, after its analysis);
//   - resident memory of the server process (main thread + analysis worker) after opening every
//     source of the demo workspace (examples/).
// Usage: npm run build && node bench/lsp-latency.mjs [edits per size, default 5]
import { readFileSync, readdirSync } from 'node:fs';
import { createRequire } from 'node:module';
import { dirname, join } from 'node:path';
import { performance } from 'node:perf_hooks';
import { loadTs } from '../scripts/load-ts.mjs';
import { fileURLToPath } from 'node:url';

const root = join(dirname(fileURLToPath(import.meta.url)), '..');
const edits = Number(process.argv[2] ?? 5);

// The test suite's LSP client and source generator (TypeScript, bundled in memory).
const external = ['vscode-jsonrpc', 'vscode-languageserver-protocol'];
const { startTestClient } = await loadTs('tests/e2e/lspClient.ts', external);
const { generateSource, linesWith } = await loadTs('tests/e2e/generate.ts', external);
const server = join(root, 'server', 'dist', 'lsp.js');

const stats = (xs) => {
  const s = [...xs].sort((a, b) => a - b);
  const q = (p) => s[Math.min(s.length - 1, Math.floor(p * s.length))];
  return { median: q(0.5), p95: q(0.95), min: s[0], max: s[s.length - 1] };
};
const ms = (x) => `${x.toFixed(0)} ms`;
const rssMiB = (pid) => Number(/VmRSS:\s+(\d+) kB/.exec(readFileSync(`/proc/${pid}/status`, 'utf8'))[1]) / 1024;

const rows = [];
for (const size of [5000, 20000]) {
  const c = await startTestClient({ serverPath: server });
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
  rows.push({ size, lines: lines.length, open, edit: stats(latencies), hover: hovers.length ? stats(hovers) : null, rss });
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

console.log(`Offload Ledger language server (bundled, stdio), node ${process.version}, ${edits} one-line edits per size, debounce 300 ms (default)`);
for (const r of rows) {
  console.log(`${String(r.lines).padStart(6)} lines: open→diagnostics ${ms(r.open)}; edit→diagnostics median ${ms(r.edit.median)} (min ${ms(r.edit.min)}, max ${ms(r.edit.max)}); server RSS ${r.rss.toFixed(0)} MiB`);
  if (r.hover) console.log(`              hover (loop keyword): median ${r.hover.median.toFixed(1)} ms, p95 ${r.hover.p95.toFixed(1)} ms over 50 requests`);
}
console.log(`demo workspace: ${demo.length} files open, all diagnostics after ${ms(demoMs)}; server RSS ${before.toFixed(0)} MiB idle → ${demoRss.toFixed(0)} MiB`);
