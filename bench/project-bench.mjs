// Benchmark (not a test): a whole project read through its compilation database. Generates a
// C project of N kernel files in nested folders (src/kernels/gNN/kNNN.c), a header with the sizes
// in include/, and a main whose time loop calls every kernel, plus a compile_commands.json in the
// `arguments` form with -I and -D flags; then runs `offload-ledger check` with no file arguments
// (the database names the files) and prints the wall time, the time per file and the peak memory
// for each N, and the ratio of time per file between the largest and the smallest N (1.0 is
// linear). Goal (issue 15/16): the time per file does not grow with the project.
// Usage: npm run build && node bench/project-bench.mjs [sizes, default 50,100,200]
import { spawnSync } from 'node:child_process';
import { existsSync, mkdirSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { performance } from 'node:perf_hooks';
import { fileURLToPath } from 'node:url';

const ROOT = join(fileURLToPath(import.meta.url), '..', '..');
const CLI = join(ROOT, 'server', 'bin', 'offload-ledger.js');
const sizes = (process.argv[2] ?? '50,100,200').split(',').map(Number);

function project(dir, n) {
  mkdirSync(join(dir, 'include'), { recursive: true });
  writeFileSync(join(dir, 'include', 'sizes.h'), `#ifndef SIZES_H\n#define SIZES_H\n#define NX 512\n#define NY 256\n#ifndef STEPS\n#define STEPS 200\n#endif\n${Array.from({ length: n }, (_, k) => `void kernel_${k}(double *restrict u, double *restrict w);`).join('\n')}\n#endif\n`);
  const files = [];
  for (let k = 0; k < n; k++) {
    const group = join(dir, 'src', 'kernels', `g${String(Math.floor(k / 20)).padStart(2, '0')}`);
    mkdirSync(group, { recursive: true });
    const f = join(group, `k${String(k).padStart(3, '0')}.c`);
    const body = k % 2 === 0
      ? `#pragma acc parallel loop collapse(2) present(u[0:NX*NY], w[0:NX*NY])\n  for (int j = 1; j < NY - 1; j++)\n    for (int i = 1; i < NX - 1; i++)\n      w[j*NX + i] = 0.25 * (u[j*NX + i - 1] + u[j*NX + i + 1] + u[(j-1)*NX + i] + u[(j+1)*NX + i]) + ${k}.0e-9;`
      : `#ifdef USE_GPU\n#pragma acc parallel loop present(u[0:NX*NY], w[0:NX*NY])\n#endif\n  for (int i = 0; i < NX*NY; i++)\n    u[i] = 0.5 * (u[i] + w[i]);`;
    writeFileSync(f, `#include "sizes.h"\nvoid kernel_${k}(double *restrict u, double *restrict w)\n{\n  ${body}\n}\n`);
    files.push(f);
  }
  const main = join(dir, 'src', 'main.c');
  writeFileSync(main, `#include <stdio.h>\n#include <stdlib.h>\n#include "sizes.h"\nint main(void)\n{\n  double *u = calloc(NX*NY, sizeof *u), *w = calloc(NX*NY, sizeof *w);\n#pragma acc data copy(u[0:NX*NY]) create(w[0:NX*NY])\n  for (int t = 0; t < STEPS; t++) {\n${Array.from({ length: n }, (_, k) => `    kernel_${k}(u, w);`).join('\n')}\n  }\n  printf("%f\\n", u[NX + 1]);\n  free(u); free(w);\n  return 0;\n}\n`);
  files.push(main);
  mkdirSync(join(dir, 'build'), { recursive: true });
  writeFileSync(join(dir, 'build', 'compile_commands.json'), JSON.stringify(files.map((f) => ({
    directory: join(dir, 'build'), file: f, arguments: ['cc', '-O2', '-fopenacc', '-DUSE_GPU', `-I${join(dir, 'include')}`, '-c', f, '-o', `${f}.o`],
  })), null, 1));
}

console.log('files  wall (s)  per file (ms)  peak RSS (MiB)  findings');
const perFile = [];
for (const n of sizes) {
  const dir = mkdtempSync(join(tmpdir(), 'ol-project-'));
  try {
    project(dir, n);
    const t0 = performance.now();
    const timed = existsSync('/usr/bin/time');
    const r = timed
      ? spawnSync('/usr/bin/time', ['-f', '%M', process.execPath, CLI, 'check', '--format', 'json'], { cwd: dir, encoding: 'utf8', maxBuffer: 1 << 30 })
      : spawnSync(process.execPath, [CLI, 'check', '--format', 'json'], { cwd: dir, encoding: 'utf8', maxBuffer: 1 << 30 });
    const wall = (performance.now() - t0) / 1000;
    const rss = timed ? Number((r.stderr.trim().split('\n').pop() ?? '').trim()) / 1024 : NaN;
    let findings = '?';
    try { findings = JSON.parse(r.stdout).files.reduce((s, f) => s + f.findings.length, 0); } catch { findings = `unreadable (exit ${r.status})`; }
    perFile.push((wall * 1000) / (n + 1));
    console.log(`${String(n + 1).padEnd(5)}  ${wall.toFixed(2).padEnd(8)}  ${((wall * 1000) / (n + 1)).toFixed(1).padEnd(13)}  ${Number.isFinite(rss) ? rss.toFixed(0) : '?'}`.padEnd(47) + `  ${findings}`);
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}
if (perFile.length > 1) console.log(`time per file, largest over smallest project: ${(perFile[perFile.length - 1] / perFile[0]).toFixed(2)} (1.00 is linear)`);
