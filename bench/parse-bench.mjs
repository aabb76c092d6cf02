// Benchmark (not a test): parse + model + ledger for a generated 20,000-line C file, beside the
// raw tree-sitter parse time of the same text. Prints milliseconds and peak resident memory.
// Usage: npm run build && node bench/parse-bench.mjs [lines]
import { createRequire } from 'node:module';
import { performance } from 'node:perf_hooks';
import { loadTs } from '../scripts/load-ts.mjs';

const require = createRequire(import.meta.url);
const api = require('../server/dist/api.js');
const { Parser, Language } = require('web-tree-sitter');

const target = Number(process.argv[2] ?? 20000);

// The same generated units as the editor load test and benchmark (tests/e2e/generate.ts).
const { generateSource } = await loadTs('tests/e2e/generate.ts');
const text = generateSource(target);
const k = text.split('\n').filter((l) => l.startsWith('void step_')).length;
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
