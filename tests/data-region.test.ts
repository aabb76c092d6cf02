/**
 * The suggested data region, checked by a real compiler: applying `edits[]` to every example and
 * fixture must (a) compile with gcc -fopenacc / -fopenmp, (b) print the same results as the
 * original when run (host fallback), and (c) re-analyse to no bytes per step except the updates
 * that host code in the loop still needs.
 */
import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { basename, join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { applyLineEdits } from '../server/src/core/data/edits';
import { ROOT, analyzeText } from './helpers';

const gcc = spawnSync('gcc', ['--version']).status === 0;
if (!gcc) console.log('skipped: gcc not found, so suggested data regions cannot be compiled');
const tmp = mkdtempSync(join(tmpdir(), 'ol-region-'));

/** Small sizes so that each program runs in well under a second; the analysis itself uses the file's own sizes. */
const gfortran = spawnSync('gfortran', ['--version']).status === 0;
if (!gfortran) console.log('skipped: gfortran not found, so suggested Fortran data regions cannot be compiled');

/** The estuary demo sets its sizes in one parameter line; tests run a copy with small sizes. */
const SIZE_LINE = 'nx = 800, ny = 300, nsteps = 2000';
const SMALL_SIZES = 'nx = 40, ny = 30, nsteps = 300';

const cases: { file: string; defines: string[] }[] = [
  { file: 'examples/heat2d/heat2d_acc.c', defines: ['-DNX=64', '-DNY=48', '-DSTEPS=201'] },
  { file: 'examples/heat2d/heat2d_omp.c', defines: ['-DNX=64', '-DNY=48', '-DSTEPS=201'] },
  { file: 'examples/hall/hall_naive_acc.c', defines: ['-DNX=40', '-DNY=30', '-DNZ=20', '-DSTEPS=150'] },
  { file: 'examples/hall/hall_naive_omp.c', defines: ['-DNX=40', '-DNY=30', '-DNZ=20', '-DSTEPS=150'] },
  { file: 'tests/fixtures/data/implicit_static.c', defines: [] },
  { file: 'tests/fixtures/data/snapshot_naive.c', defines: [] },
  { file: 'tests/fixtures/data/callee_clauses.c', defines: [] },
  { file: 'tests/fixtures/data/omp_host_source.c', defines: [] },
  { file: 'examples/estuary/estuary_naive_acc.f90', defines: [] },
  { file: 'examples/estuary/estuary_naive_omp.f90', defines: [] },
];

function buildFortran(src: string, name: string): string {
  const f = join(tmp, `${name}.f90`);
  writeFileSync(f, src.replace(SIZE_LINE, SMALL_SIZES));
  const flag = /!\$omp/i.test(src) ? '-fopenmp' : '-fopenacc';
  const exe = join(tmp, name);
  const r = spawnSync('gfortran', ['-O1', flag, `-J${tmp}`, f, '-o', exe], { encoding: 'utf8' });
  expect(r.stderr, `gfortran ${flag} on ${name}`).toBe('');
  expect(r.status).toBe(0);
  // One host thread: the host fallback of many small parallel regions is slow and erratic on a
  // loaded machine with more threads, and the printed results do not depend on it.
  const run = spawnSync(exe, [], { encoding: 'utf8', timeout: 60_000, env: { ...process.env, OMP_NUM_THREADS: '1' } });
  expect(run.status).toBe(0);
  return run.stdout;
}

function build(src: string, name: string, defines: string[]): string {
  if (name.endsWith('_f90')) return buildFortran(src, name);
  const c = join(tmp, `${name}.c`);
  writeFileSync(c, src);
  const flag = /#pragma omp/.test(src) ? '-fopenmp' : '-fopenacc';
  const exe = join(tmp, name);
  const r = spawnSync('gcc', ['-O1', '-std=c11', '-Wall', '-Werror', flag, ...defines, c, '-o', exe, '-lm'], { encoding: 'utf8' });
  expect(r.stderr, `gcc ${flag} on ${name}`).toBe('');
  expect(r.status).toBe(0);
  // One host thread: the host fallback of many small parallel regions is slow and erratic on a
  // loaded machine with more threads, and the printed results do not depend on it.
  const run = spawnSync(exe, [], { encoding: 'utf8', timeout: 60_000, env: { ...process.env, OMP_NUM_THREADS: '1' } });
  expect(run.status).toBe(0);
  return run.stdout;
}

describe.skipIf(!gcc)('suggested data regions compile, keep results and remove per-step copies', () => {
  for (const { file, defines } of cases) {
    it.skipIf(file.endsWith('.f90') && !gfortran)(file, async () => {
      const text = readFileSync(join(ROOT, file), 'utf8');
      const before = await analyzeText(text, file);
      const ledgers = before.timeLoops.map((t) => t.ledger).filter((l) => l?.dataRegion);
      expect(ledgers.length, 'the file has a time loop that needs a data region').toBeGreaterThan(0);
      const edits = ledgers.flatMap((l) => l!.dataRegion!.edits);
      expect(edits.length).toBeGreaterThan(0);
      const edited = applyLineEdits(text, edits);
      const name = file.endsWith('.f90') ? `${basename(file, '.f90')}_f90` : basename(file, '.c');
      // (a) and (b): both compile, and print the same results.
      expect(build(edited, `${name}_fixed${name.endsWith('_f90') ? '_f90' : ''}`, defines)).toBe(build(text, name, defines));
      // (c): only updates that host code needs still move bytes per step.
      const after = await analyzeText(edited, file);
      for (const t of after.timeLoops) {
        if (!t.ledger) continue;
        // Only updates stay, and the scalars a construct must hand back (a reduction result):
        // a data region cannot keep those on the device (OpenACC 3.3 §2.6.2).
        expect(t.ledger.transfers.filter((x) => x.cause !== 'update' && !x.scalar)).toEqual([]);
        expect(t.ledger.dataRegion).toBeNull();
      }
      expect(after.findings.filter((f) => ['implicit-transfer', 'stale-on-host', 'stale-on-device'].includes(f.code))).toEqual([]);
      expect(after.findings.filter((f) => f.code === 'transfer-in-time-loop' && f.severity === 'warning')).toEqual([]);
    });
  }
});
