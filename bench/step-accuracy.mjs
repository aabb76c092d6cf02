// Accuracy benchmark (not a test): predicted vs measured host time per step for the demo's
// OpenMP programs on this machine's calibrated profile. The programs run on the host (no device
// here); the time per step is (T(S2) - T(S1)) / (S2 - S1), which removes set-up and output.
// Usage: npm run build && node bench/step-accuracy.mjs
import { execFileSync, spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import { availableParallelism, tmpdir } from 'node:os';
import { join } from 'node:path';

const require = createRequire(import.meta.url);
const root = new URL('..', import.meta.url).pathname;
const cli = join(root, 'server/bin/offload-ledger.js');
const api = require('../server/dist/api.js');

if (spawnSync('gcc', ['--version']).status !== 0) {
  console.log('skipped: gcc not found');
  process.exit(0);
}
const tmp = mkdtempSync(join(tmpdir(), 'ol-step-'));
const machines = join(tmp, 'machines.json');
console.log('calibrating this machine (all cores)…');
execFileSync(process.execPath, [cli, 'calibrate', '--out', machines, '--array-mib', '512'], { stdio: ['ignore', 'inherit', 'inherit'] });
const file = JSON.parse(readFileSync(machines, 'utf8'));
const host = file.profiles.measured.host;


const cases = [
  { file: 'examples/heat2d/heat2d_omp.c', sizes: { NX: 4096, NY: 4096 }, steps: [20, 60] },
  { file: 'examples/hall/hall_resident_omp.c', sizes: { NX: 400, NY: 300, NZ: 200 }, steps: [10, 30] },
  { file: 'examples/hall/hall_naive_omp.c', sizes: { NX: 400, NY: 300, NZ: 200 }, steps: [10, 30] },
];

const grammars = await api.loadGrammars();
console.log(`\nprofile: measured host ${(host.bandwidthNode / 1e9).toFixed(1)} GB/s node, ${(host.bandwidthCore / 1e9).toFixed(1)} GB/s one core, ${host.cores} cores`);
console.log('program                          estimate/step  measured/step  measured/estimate');
for (const c of cases) {
  const defs = Object.entries(c.sizes).map(([k, v]) => `-D${k}=${v}`);
  const time = (steps) => {
    const exe = join(tmp, `p${steps}`);
    execFileSync('gcc', ['-O2', '-fopenmp', ...defs, `-DSTEPS=${steps}`, join(root, c.file), '-o', exe, '-lm']);
    let best = Infinity;
    for (let r = 0; r < 2; r++) {
      const t0 = process.hrtime.bigint();
      spawnSync(exe, [], { env: { ...process.env, OMP_NUM_THREADS: String(availableParallelism()) } });
      best = Math.min(best, Number(process.hrtime.bigint() - t0) / 1e9);
    }
    return best;
  };
  const [s1, s2] = c.steps;
  const measured = (time(s2) - time(s1)) / (s2 - s1);
  const text = readFileSync(join(root, c.file), 'utf8');
  const profile = { ...api.profileFromMachines(file, 'measured') };
  const a = api.analyzeSource({ path: c.file, text, language: 'c' }, grammars, { bindings: new Map(Object.entries(c.sizes)), profile, baseline: 'node' });
  const est = a.timeLoops.find((t) => t.estimate)?.estimate?.hostSeconds;
  console.log(`${c.file.padEnd(32)} ${(est * 1e3).toFixed(2).padStart(10)} ms  ${(measured * 1e3).toFixed(2).padStart(10)} ms  ${(measured / est).toFixed(2).padStart(10)}`);
}

