// Benchmark (not a test): parse + model + ledger for a generated 20,000-line C file, beside the
// raw tree-sitter parse time of the same text. Prints milliseconds and peak resident memory.
// Usage: npm run build && node bench/parse-bench.mjs [lines]
import { createRequire } from 'node:module';
import { performance } from 'node:perf_hooks';

const require = createRequire(import.meta.url);
const api = require('../server/dist/api.js');
const { Parser, Language } = require('web-tree-sitter');

const target = Number(process.argv[2] ?? 20000);

/** One generated unit: a function with a time loop, two offloaded stencil nests and host code. */
function unit(k) {
  return `
void step_${k}(float *restrict u, float *restrict v, const float *restrict c, int nx, int ny, int steps) {
  for (int t = 0; t < steps; t++) {
#pragma acc parallel loop collapse(2) copyin(u[0:nx*ny], c[0:nx*ny]) copy(v[0:nx*ny])
    for (int j = 1; j < ny - 1; j++)
      for (int i = 1; i < nx - 1; i++)
        v[j * nx + i] = 2.0f * u[j * nx + i] - v[j * nx + i]
                      + c[j * nx + i] * (u[j * nx + i - 1] + u[j * nx + i + 1] + u[(j - 1) * nx + i] + u[(j + 1) * nx + i] - 4.0f * u[j * nx + i]);
#pragma acc parallel loop collapse(2) copy(u[0:nx*ny], v[0:nx*ny])
    for (int j = 0; j < ny; j++)
      for (int i = 0; i < nx; i++) {
        const float tmp = u[j * nx + i];
        u[j * nx + i] = v[j * nx + i];
        v[j * nx + i] = tmp;
      }
    if (t % 10 == 0) {
      u[(ny / 2) * nx + nx / 2] += 1.0f;
    }
  }
}
`;
}

let text = '#define NX 512\n#define NY 512\n';
let k = 0;
while (text.split('\n').length < target) text += unit(k++);
const lines = text.split('\n').length;

const grammars = await api.loadGrammars();
const parser = grammars.parserFor('c');

// Warm up both paths once so that the numbers exclude wasm compilation.
parser.parse(text).delete();
api.analyzeSource({ path: 'gen.c', text, language: 'c' }, grammars);

const runs = 5;
let raw = 0;
let full = 0;
let single = 0;
let result;
for (let r = 0; r < runs; r++) {
  let t0 = performance.now();
  parser.parse(text).delete();
  raw += performance.now() - t0;
  t0 = performance.now();
  result = api.analyzeSource({ path: 'gen.c', text, language: 'c' }, grammars);
  full += performance.now() - t0;
  t0 = performance.now();
  api.analyzeSource({ path: 'gen.c', text, language: 'c' }, grammars, { whatIf: false });
  single += performance.now() - t0;
}
const rssMiB = process.resourceUsage().maxRSS / 1024;
console.log(`file: ${lines} lines, ${(text.length / 1024).toFixed(0)} KiB, ${k} functions`);
console.log(`model: ${result.nests.length} loop nests, ${result.timeLoops.length} time loops, ${result.model.directives.length} directives, ${result.findings.length} findings`);
console.log(`raw tree-sitter parse:         ${(raw / runs).toFixed(1)} ms (mean of ${runs})`);
console.log(`whole analysis:                ${(full / runs).toFixed(1)} ms (mean of ${runs})`);
console.log(`  without the what-if re-run:  ${(single / runs).toFixed(1)} ms (the suggested regions analysed again)`);
console.log(`peak resident memory:          ${rssMiB.toFixed(0)} MiB`);
