// Benchmark (not a test): a generated file whose main calls every procedure that holds a time
// loop, so each time loop's starting state comes from running main first (data/entry.ts). Prints
// the analysis time at three sizes and the growth exponent between the smallest and the largest
// (1.0 is linear). Usage: npm run build && node bench/call-chain-bench.mjs
import { createRequire } from 'node:module';
import { performance } from 'node:perf_hooks';
import { loadTs } from '../scripts/load-ts.mjs';

const require = createRequire(import.meta.url);
const api = require('../server/dist/api.js');
const { generateSource } = await loadTs('tests/e2e/generate.ts');
const grammars = await api.loadGrammars();

const sizes = [5000, 10000, 20000];
const times = [];
for (const n of sizes) {
  let text = generateSource(n);
  const names = [...text.matchAll(/^void (step_\d+)\(/gm)].map((m) => m[1]);
  text += `\nint main(void) {\n  static float u[1000], v[1000], c[1000];\n${names.map((f) => `  ${f}(u, v, c, 10);`).join('\n')}\n  return 0;\n}\n`;
  api.analyzeSource({ path: 'gen.c', text, language: 'c' }, grammars, { whatIf: false });
  const t0 = performance.now();
  api.analyzeSource({ path: 'gen.c', text, language: 'c' }, grammars, { whatIf: false });
  const ms = performance.now() - t0;
  times.push(ms);
  console.log(`${n} lines, main calls ${names.length} procedures: ${ms.toFixed(0)} ms`);
}
const exponent = Math.log(times[2] / times[0]) / Math.log(sizes[2] / sizes[0]);
console.log(`growth exponent ${sizes[0]} → ${sizes[2]} lines: ${exponent.toFixed(2)}`);
