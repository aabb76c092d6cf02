// Benchmark (not a test): how `check` scales with the size of a C file. Generates C files of
// 5,000, 20,000 and 40,000 lines in the idiom of real stencil codes (many small functions, each a
// time loop around a few offloaded loop nests over global arrays with #define sizes), and one file
// whose single time loop holds a few thousand one-line offloaded loops. Runs the built CLI
// (`check --format json FILE`) on each, and `gcc -fsyntax-only -fopenacc` beside it when gcc is
// there, and prints wall time and peak resident memory per size, the 40k/20k ratio and the
// 5k → 40k growth exponent.
// A file uses one directive model, as real codes do: OpenACC by default, OpenMP target with
// `--model omp`, both series with `--model both`.
// Usage: npm run build && node bench/scale.mjs [--runs N] [--model acc|omp|both] [--constructs N ...] [--keep DIR] [--cli PATH] [lines ...]
import { spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { performance } from 'node:perf_hooks';

const root = join(dirname(fileURLToPath(import.meta.url)), '..');
let cli = join(root, 'server', 'bin', 'offload-ledger.js');

const args = process.argv.slice(2);
let runs = 1;
let keep;
let modelArg = 'acc';
const sizes = [];
const constructCounts = [];
for (let i = 0; i < args.length; i++) {
  if (args[i] === '--runs') runs = Math.max(1, Number(args[++i]));
  else if (args[i] === '--keep') keep = args[++i];
  else if (args[i] === '--model') modelArg = args[++i];
  else if (args[i] === '--cli') cli = args[++i];
  else if (args[i] === '--constructs') constructCounts.push(Number(args[++i]));
  else sizes.push(Number(args[i]));
}
if (sizes.length === 0) sizes.push(5000, 20000, 40000);
if (constructCounts.length === 0) constructCounts.push(2000, 4000);
const models = modelArg === 'both' ? ['acc', 'omp'] : [modelArg === 'omp' ? 'omp' : 'acc'];

if (!existsSync(join(dirname(cli), '..', 'dist', 'cli.js'))) {
  console.error(`${join(dirname(cli), '..', 'dist', 'cli.js')} is missing: run \`npm run build\` first`);
  process.exit(2);
}

// ---------------------------------------------------------------------------------------------
// Generated sources

/** One unit: two global arrays, a function with a time loop around three offloaded nests. */
function unit(k, model) {
  const acc = model === 'acc';
  const a = `u${k}`;
  const b = `v${k}`;
  const c = `w${k}`;
  const par = acc ? '#pragma acc parallel loop collapse(2)' : '#pragma omp target teams distribute parallel for collapse(2)';
  const one = acc ? '#pragma acc parallel loop reduction(+:s)' : '#pragma omp target teams distribute parallel for reduction(+:s)';
  const enter = acc ? `#pragma acc enter data copyin(${a}[0:NX][0:NY], ${b}[0:NX][0:NY])` : `#pragma omp target enter data map(to: ${a}[0:NX][0:NY], ${b}[0:NX][0:NY])`;
  const exit = acc ? `#pragma acc exit data copyout(${b}[0:NX][0:NY]) delete(${a}[0:NX][0:NY])` : `#pragma omp target exit data map(from: ${b}[0:NX][0:NY]) map(delete: ${a}[0:NX][0:NY])`;
  const upd = acc ? `#pragma acc update self(${c}[0:NX])` : `#pragma omp target update from(${c}[0:NX])`;
  return [
    `double ${a}[NX][NY], ${b}[NX][NY];`,
    `double ${c}[NX];`,
    ``,
    `/* Unit ${k}: Jacobi sweep, copy back and a row sum per step. */`,
    `double step_${k}(int nsteps)`,
    `{`,
    `  double s = 0.0;`,
    `  ${enter}`,
    `  for (int it = 0; it < nsteps; it++) {`,
    `    ${par}`,
    `    for (int i = 1; i < NX - 1; i++) {`,
    `      for (int j = 1; j < NY - 1; j++) {`,
    `        ${b}[i][j] = 0.25 * (${a}[i - 1][j] + ${a}[i + 1][j]`,
    `                  + ${a}[i][j - 1] + ${a}[i][j + 1]);`,
    `      }`,
    `    }`,
    `    ${par}`,
    `    for (int i = 1; i < NX - 1; i++) {`,
    `      for (int j = 1; j < NY - 1; j++) {`,
    `        ${a}[i][j] = ${b}[i][j];`,
    `      }`,
    `    }`,
    `    ${acc ? '#pragma acc parallel loop' : '#pragma omp target teams distribute parallel for'}`,
    `    for (int i = 0; i < NX; i++) {`,
    `      double r = 0.0;`,
    `      for (int j = 0; j < NY; j++) r += ${a}[i][j];`,
    `      ${c}[i] = r;`,
    `    }`,
    `    ${one}`,
    `    for (int i = 0; i < NX; i++) s += ${c}[i];`,
    `    if (it % 10 == 0) {`,
    `      ${upd}`,
    `      printf("%d %g\\n", it, ${c}[0]);`,
    `    }`,
    `  }`,
    `  ${exit}`,
    `  return s;`,
    `}`,
    ``,
  ];
}

const header = [
  '#include <stdio.h>',
  '#include <stdlib.h>',
  '',
  '#define NX 512',
  '#define NY 512',
  '#define NSTEPS 100',
  '',
];

/** A file of about `lines` lines made of units, with a main that calls each unit once. */
function unitsFile(lines, model) {
  const perUnit = unit(0, model).length;
  const count = Math.max(1, Math.round((lines - header.length - 8) / (perUnit + 1)));
  const out = [...header];
  for (let k = 0; k < count; k++) out.push(...unit(k, model));
  out.push('int main(void)', '{', '  double total = 0.0;');
  for (let k = 0; k < count; k++) out.push(`  total += step_${k}(NSTEPS);`);
  out.push('  printf("%g\\n", total);', '  return 0;', '}', '');
  return { text: out.join('\n'), units: count };
}

/** One time loop holding `n` one-line offloaded loops over a few global arrays. */
function constructsFile(n) {
  const out = [...header, '#define N 1000000', '', 'double a[N], b[N], c[N], d[N];', '', 'int main(void)', '{'];
  out.push('#pragma acc data copy(a[0:N], b[0:N], c[0:N], d[0:N])', '  {');
  out.push('  for (int it = 0; it < NSTEPS; it++) {');
  const arrays = ['a', 'b', 'c', 'd'];
  for (let k = 0; k < n; k++) {
    const x = arrays[k % 4];
    const y = arrays[(k + 1) % 4];
    out.push('#pragma acc parallel loop');
    out.push(`    for (int i = 0; i < N; i++) ${x}[i] = ${y}[i] * ${(1 + (k % 7) / 10).toFixed(1)} + ${k % 5}.0;`);
  }
  out.push('  }', '  }', '  printf("%g\\n", a[0]);', '  return 0;', '}', '');
  return out.join('\n');
}

// ---------------------------------------------------------------------------------------------
// Measuring

const haveTime = existsSync('/usr/bin/time');
const haveGcc = spawnSync('gcc', ['--version'], { stdio: 'ignore' }).status === 0;

/** Runs a command; wall time in seconds and peak RSS in MiB (of the command, not this script). */
function measure(cmd, argv) {
  const t0 = performance.now();
  let r;
  let rssKiB;
  if (haveTime) {
    r = spawnSync('/usr/bin/time', ['-v', cmd, ...argv], { encoding: 'utf8', maxBuffer: 1 << 30 });
    const m = /Maximum resident set size \(kbytes\): (\d+)/.exec(r.stderr ?? '');
    rssKiB = m ? Number(m[1]) : undefined;
  } else {
    r = spawnSync(cmd, argv, { encoding: 'utf8', maxBuffer: 1 << 30 });
    // Children's peak RSS so far (the largest child yet): good enough for growing sizes.
    rssKiB = process.resourceUsage().maxRSS;
  }
  const wall = (performance.now() - t0) / 1000;
  return { wall, rssMiB: rssKiB === undefined ? NaN : rssKiB / 1024, status: r.status, stdout: r.stdout, stderr: r.stderr };
}

function median(xs) {
  const s = [...xs].sort((p, q) => p - q);
  return s[Math.floor((s.length - 1) / 2)];
}

function bench(file) {
  const ours = [];
  const gcc = [];
  let summary = '';
  for (let r = 0; r < runs; r++) {
    const m = measure(process.execPath, [cli, 'check', '--format', 'json', file]);
    if (m.status !== 0 && m.status !== 1) {
      console.error(`check failed on ${file} (status ${m.status}):\n${m.stderr}`);
      process.exit(1);
    }
    try {
      const json = JSON.parse(m.stdout);
      const files = Array.isArray(json.files) ? json.files : [json];
      const findings = files.reduce((n, f) => n + (Array.isArray(f.findings) ? f.findings.length : 0), 0);
      summary = `${findings} findings, ${m.stdout.length} bytes of JSON`;
    } catch {
      summary = `${m.stdout.length} bytes of output`;
    }
    ours.push(m);
    if (haveGcc) gcc.push(measure('gcc', ['-fsyntax-only', '-fopenacc', file]));
  }
  return {
    wall: median(ours.map((m) => m.wall)),
    rss: Math.max(...ours.map((m) => m.rssMiB)),
    gccWall: haveGcc ? median(gcc.map((m) => m.wall)) : undefined,
    summary,
  };
}

const dir = keep ?? mkdtempSync(join(tmpdir(), 'offload-scale-'));
const rows = [];
try {
  console.log(`check: ${cli}`);
  console.log(`${runs} run(s) per file (median wall time, largest peak RSS); RSS from ${haveTime ? '/usr/bin/time -v' : 'process.resourceUsage'}${haveGcc ? '' : '; gcc not found'}`);
  console.log('');
  const pad = (s, n) => String(s).padStart(n);
  console.log(`${'file'.padEnd(34)}${pad('lines', 8)}${pad('check s', 10)}${pad('peak MiB', 10)}${pad('gcc s', 8)}${pad('ratio', 8)}  output`);
  const print = (name, lines, b) =>
    console.log(
      `${name.padEnd(34)}${pad(lines, 8)}${pad(b.wall.toFixed(2), 10)}${pad(b.rss.toFixed(0), 10)}` +
        `${pad(b.gccWall === undefined ? '-' : b.gccWall.toFixed(2), 8)}${pad(b.gccWall ? (b.wall / b.gccWall).toFixed(1) : '-', 8)}  ${b.summary}`,
    );
  for (const model of models) {
    for (const lines of sizes) {
      const { text, units } = unitsFile(lines, model);
      const file = join(dir, `${model}_${lines}.c`);
      writeFileSync(file, text);
      const n = text.split('\n').length;
      const b = bench(file);
      rows.push({ model, lines: n, target: lines, ...b });
      print(`${model}_${lines}.c (${units} functions)`, n, b);
    }
  }
  const constructRows = [];
  for (const n of constructCounts) {
    const text = constructsFile(n);
    const file = join(dir, `constructs_${n}.c`);
    writeFileSync(file, text);
    const b = bench(file);
    constructRows.push({ n, ...b });
    print(`constructs_${n}.c (one time loop)`, text.split('\n').length, b);
  }
  console.log('');
  for (const model of models) {
    const series = rows.filter((r) => r.model === model);
    const at = (t) => series.find((r) => r.target === t);
    if (at(20000) && at(40000)) console.log(`${model}: ratio 40k/20k ${(at(40000).wall / at(20000).wall).toFixed(2)} (linear: 2.00)`);
    const first = series[0];
    const last = series[series.length - 1];
    if (series.length > 1 && last.lines > first.lines) {
      const exponent = Math.log(last.wall / first.wall) / Math.log(last.lines / first.lines);
      console.log(`${model}: growth exponent ${first.target} → ${last.target} lines ${exponent.toFixed(2)} (target ≤ 1.1)`);
    }
  }
  if (constructRows.length > 1) {
    const p = constructRows[0];
    const q = constructRows[constructRows.length - 1];
    console.log(`constructs ${p.n} → ${q.n}: time ×${(q.wall / p.wall).toFixed(2)}, exponent ${(Math.log(q.wall / p.wall) / Math.log(q.n / p.n)).toFixed(2)}`);
  }
} finally {
  if (!keep) rmSync(dir, { recursive: true, force: true });
}
