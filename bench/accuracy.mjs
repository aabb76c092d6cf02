// Accuracy benchmark (not a test): compiles the kernels in bench/kernels with gcc -O2 -fopenmp,
// times them on this machine, and prints the measured time per sweep beside the host estimate
// of the cost ledger (iterations x host bytes per iteration / bandwidth). The bandwidth is
// measured by this script with the triad kernel, counted with the same host-byte convention
// (write-allocate included), so the triad's ratio is 1 by construction and the others test the
// ledger's byte counts and layer conditions.
// Usage: npm run build && node bench/accuracy.mjs [reps]
import { execFileSync, spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import { tmpdir } from 'node:os';
import { join } from 'node:path';

const require = createRequire(import.meta.url);
const api = require('../server/dist/api.js');
const here = new URL('.', import.meta.url).pathname;
const reps = process.argv[2] ?? '10';

if (spawnSync('gcc', ['--version']).status !== 0) {
  console.log('skipped: gcc not found');
  process.exit(0);
}
const getconf = (k) => Number(spawnSync('getconf', [k], { encoding: 'utf8' }).stdout.trim()) || 0;
const cores = Number(execFileSync('nproc', { encoding: 'utf8' }).trim());
const l2 = getconf('LEVEL2_CACHE_SIZE');
const l3 = getconf('LEVEL3_CACHE_SIZE');
// The cache one thread's run can count on: its own L2 plus its share of the shared L3.
const cacheBytes = l2 + l3 / cores || api.DEFAULT_CACHE_BYTES;

const grammars = await api.loadGrammars();
const out = mkdtempSync(join(tmpdir(), 'ol-acc-'));
const kernels = ['triad', 'jacobi2d', 'jacobi3d', 'pressure3d'];

function ledger(name) {
  const path = join(here, 'kernels', `${name}.c`);
  const a = api.analyzeSource({ path, text: readFileSync(path, 'utf8'), language: 'c' }, grammars, { cacheBytes });
  const nest = a.nests.find((n) => n.nest.procedure.name === 'kernel');
  return { iterations: nest.iterations.value, host: nest.cost.bytes.host, device: nest.cost.bytes.device, flops: nest.cost.flopsPerIteration };
}

// -O2 is the reference build; -O3 -march=native shows what vectorisation changes for
// kernels with many flops per byte, which a scalar -O2 build turns compute-bound.
const builds = [['-O2'], ['-O3', '-march=native']];

function measure(name, flags) {
  const exe = join(out, `${name}${flags.join('')}`);
  execFileSync('gcc', [...flags, '-fopenmp', '-o', exe, join(here, 'kernels', `${name}.c`)]);
  const r = spawnSync(exe, [reps], { encoding: 'utf8', env: { ...process.env, OMP_NUM_THREADS: String(cores), OMP_PROC_BIND: 'close' } });
  return Number(r.stdout.trim().split(/\s+/)[0]);
}

console.log(`machine: ${cores} cores, L2 ${(l2 / 2 ** 20).toFixed(1)} MiB, L3 ${(l3 / 2 ** 20).toFixed(0)} MiB; layer-condition cache ${(cacheBytes / 2 ** 20).toFixed(1)} MiB; best of ${reps} sweeps`);
const triad = ledger('triad');
const tTriad = measure('triad', builds[0]);
const bandwidth = (triad.iterations * triad.host) / tTriad;
console.log(`bandwidth (triad, ${triad.host} host bytes per iteration): ${(bandwidth / 1e9).toFixed(2)} GB/s\n`);
console.log('kernel       iterations  flop/it  B/it host  estimate s  -O2 measured  ratio  -O3 -march=native  ratio');
for (const k of kernels) {
  const l = k === 'triad' ? triad : ledger(k);
  const estimate = (l.iterations * l.host) / bandwidth;
  const cells = builds.map((flags, b) => {
    const m = k === 'triad' && b === 0 ? tTriad : measure(k, flags);
    return `${m.toExponential(3).padStart(b === 0 ? 12 : 17)}  ${(m / estimate).toFixed(2).padStart(5)}`;
  });
  console.log(`${k.padEnd(12)} ${String(l.iterations).padStart(10)}  ${String(l.flops).padStart(7)}  ${String(l.host).padStart(9)}  ${estimate.toExponential(3).padStart(10)}  ${cells.join('  ')}`);
}
