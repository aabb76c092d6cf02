// Benchmark (not a test): a large project, as issue 15 asks. Generates a C project of F source
// files of about L lines each (default 200 × 500 = 100,000 lines) in nested folders: each file
// holds kernels (offloaded 2-D stencils over arrays passed in, sizes from a shared header) and a
// `step_NNN` routine calling them; a driver's time loop calls every step routine inside a data
// region; a compile_commands.json in the `arguments` form names every file. Prints:
//   - cold `offload-ledger check` of the project (no file arguments): wall time, peak memory;
//   - the editor's job for one kernel file, cold: time to the first view and to the final view,
//     and the models each needed;
//   - the same job after an edit of that file (models warm): the time to its own diagnostics (the
//     first view) and to the final view with the findings its callers' time loops make in it,
//     median of 5.
// Goals (issue 15): ≤ 5 s cold, ≤ 500 MB, ≤ 100 ms re-check.
// Usage: npm run build && node bench/project-scale.mjs [files] [lines per file] [--keep DIR]
import { spawnSync } from 'node:child_process';
import { mkdirSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { performance } from 'node:perf_hooks';
import { fileURLToPath } from 'node:url';

const ROOT = join(fileURLToPath(import.meta.url), '..', '..');
const CLI = join(ROOT, 'server', 'bin', 'offload-ledger.js');
const args = process.argv.slice(2);
const keepAt = args.indexOf('--keep');
const keep = keepAt >= 0 ? args.splice(keepAt, 2)[1] : undefined;
const FILES = Number(args[0] ?? 200);
const LINES = Number(args[1] ?? 500);

function kernel(name, k) {
  // 17 lines: a 5-point stencil with a boundary loop, both offloaded, arrays present.
  return [
    `void ${name}(double *restrict u, double *restrict w, const double *restrict c)`,
    '{',
    '#pragma acc parallel loop collapse(2) present(u[0:NX*NY], w[0:NX*NY], c[0:NX*NY])',
    '  for (int j = 1; j < NY - 1; j++) {',
    '    for (int i = 1; i < NX - 1; i++) {',
    '      const int idx = j * NX + i;',
    `      w[idx] = u[idx] + c[idx] * (u[idx - 1] + u[idx + 1] + u[idx - NX] + u[idx + NX] - 4.0 * u[idx]) + ${k}.0e-9;`,
    '    }',
    '  }',
    '#pragma acc parallel loop present(w[0:NX*NY])',
    '  for (int i = 0; i < NX; i++) {',
    '    w[i] = 0.0;',
    '    w[(NY - 1) * NX + i] = 0.0;',
    '  }',
    '}',
    '',
  ];
}

function project(dir) {
  mkdirSync(join(dir, 'include'), { recursive: true });
  const perFile = Math.max(1, Math.floor((LINES - 8) / 16));
  const steps = [];
  const files = [];
  for (let f = 0; f < FILES; f++) {
    const group = join(dir, 'src', 'physics', `g${String(Math.floor(f / 25)).padStart(2, '0')}`);
    mkdirSync(group, { recursive: true });
    const path = join(group, `part${String(f).padStart(3, '0')}.c`);
    const lines = ['#include "model.h"', ''];
    const names = [];
    for (let k = 0; k < perFile; k++) {
      const name = `update_${f}_${k}`;
      names.push(name);
      lines.push(...kernel(name, f * perFile + k));
    }
    const step = `step_${String(f).padStart(3, '0')}`;
    steps.push(step);
    lines.push(`void ${step}(double *restrict u, double *restrict w, const double *restrict c)`, '{', ...names.map((n, k) => (k % 2 === 0 ? `  ${n}(u, w, c);` : `  ${n}(w, u, c);`)), '}', '');
    writeFileSync(path, lines.join('\n'));
    files.push(path);
  }
  writeFileSync(join(dir, 'include', 'model.h'), [
    '#ifndef MODEL_H', '#define MODEL_H', '#define NX 1024', '#define NY 512', '#ifndef NSTEPS', '#define NSTEPS 1000', '#endif',
    ...steps.map((s) => `void ${s}(double *restrict u, double *restrict w, const double *restrict c);`), '#endif', '',
  ].join('\n'));
  const main = join(dir, 'src', 'driver.c');
  writeFileSync(main, [
    '#include <stdio.h>', '#include <stdlib.h>', '#include "model.h"', 'int main(void)', '{',
    '  double *u = calloc(NX * NY, sizeof *u), *w = calloc(NX * NY, sizeof *w), *c = calloc(NX * NY, sizeof *c);',
    '  for (int i = 0; i < NX * NY; i++) c[i] = 0.1;',
    '#pragma acc data copy(u[0:NX*NY]) create(w[0:NX*NY]) copyin(c[0:NX*NY])',
    '  for (int t = 0; t < NSTEPS; t++) {',
    ...steps.map((s) => `    ${s}(u, w, c);`),
    '  }',
    '  printf("%g\\n", u[NX + 1]);', '  free(u); free(w); free(c);', '  return 0;', '}', '',
  ].join('\n'));
  files.push(main);
  mkdirSync(join(dir, 'build'), { recursive: true });
  writeFileSync(join(dir, 'build', 'compile_commands.json'), JSON.stringify(files.map((f) => ({
    directory: join(dir, 'build'), file: f, arguments: ['cc', '-O2', '-fopenacc', `-I${join(dir, 'include')}`, '-c', f, '-o', `${f}.o`],
  })), null, 1));
  return files;
}

const median = (xs) => [...xs].sort((a, b) => a - b)[Math.floor(xs.length / 2)];
const dir = keep ?? mkdtempSync(join(tmpdir(), 'ol-scale-'));
try {
  const files = project(dir);
  const total = files.reduce((n, f) => n + readFileSync(f, 'utf8').split('\n').length, 0);
  console.log(`project: ${files.length} files, ${total.toLocaleString('en-US')} lines (${dir})`);

  const t0 = performance.now();
  const r = spawnSync('/usr/bin/time', ['-f', '%M', process.execPath, CLI, 'check', '--format', 'json'], { cwd: dir, encoding: 'utf8', maxBuffer: 1 << 30 });
  const wall = (performance.now() - t0) / 1000;
  const rss = Number((r.stderr.trim().split('\n').pop() ?? '').trim()) / 1024;
  let findings = '?';
  try { findings = JSON.parse(r.stdout).files.reduce((s, f) => s + f.findings.length, 0); } catch { findings = `unreadable (exit ${r.status}): ${r.stderr.slice(0, 300)}`; }
  console.log(`cold check:        ${wall.toFixed(2)} s, peak ${Number.isFinite(rss) ? rss.toFixed(0) : '?'} MiB, ${findings} findings   (goal ≤ 5 s, ≤ 500 MB)`);

  // The editor's job for one kernel file, in this process (as the analysis worker runs it).
  const require = createRequire(import.meta.url);
  const api = require(join(ROOT, 'server', 'dist', 'api.js'));
  const grammars = await api.loadGrammars();
  const doc = files[Math.floor(files.length / 2)];
  const job = (text, version) => ({
    uri: `file://${doc}`, version, path: doc, language: 'c', text, bindings: [], baseline: 'auto',
    preprocess: { defines: [], undefines: [], includeDirs: [join(dir, 'include')] },
    neighbours: files.filter((f) => f !== doc).map((f) => ({ path: f, language: 'c', text: readFileSync(f, 'utf8'), preprocess: { defines: [], undefines: [], includeDirs: [join(dir, 'include')] } })),
    view: { profileName: 'bench', baseline: 'auto', severity: {}, codeLens: true, inlayHints: true, docsHref: '' },
  });
  let text = readFileSync(doc, 'utf8');
  const built0 = api.modelCacheStats.built;
  let early;
  let builtEarly = 0;
  const c0 = performance.now();
  api.runJob(job(text, 1), grammars, { early: () => { if (early !== undefined) return; early = performance.now() - c0; builtEarly = api.modelCacheStats.built - built0; } });
  const cold = performance.now() - c0;
  console.log(`editor, cold open: first view ${early === undefined ? '-' : `${early.toFixed(0)} ms (${builtEarly} models)`}, final view ${cold.toFixed(0)} ms (${api.modelCacheStats.built - built0} models)`);
  const firsts = [];
  const finals = [];
  for (let k = 0; k < 5; k++) {
    text = text.replace(/\+ (\d+)\.0e-9;/, (_, n) => `+ ${Number(n) + 1}.0e-9;`);
    const e0 = performance.now();
    let first;
    api.runJob(job(text, 2 + k), grammars, { early: () => { first ??= performance.now() - e0; } });
    finals.push(performance.now() - e0);
    firsts.push(first ?? finals[finals.length - 1]);
  }
  console.log(`editor, re-check after an edit of ${doc.split('/').pop()} (${text.split('\n').length} lines): its own diagnostics median ${median(firsts).toFixed(0)} ms (max ${Math.max(...firsts).toFixed(0)}), with its callers' findings median ${median(finals).toFixed(0)} ms   (goal ≤ 100 ms)`);
} finally {
  if (!keep) rmSync(dir, { recursive: true, force: true });
}
