/**
 * False errors on valid code are the worst kind of finding. Every C, C++ and Fortran program
 * under tests/fixtures and examples/ that gcc/g++/gfortran accept (`-fsyntax-only` with the
 * model flag of its directives) must get no `directive-syntax` finding at all, and no finding
 * of severity error unless it is one of the programs written to hold that bug on purpose.
 */
import { spawnSync } from 'node:child_process';
import { readFileSync, readdirSync } from 'node:fs';
import { join, relative } from 'node:path';
import { describe, expect, it } from 'vitest';
import { ROOT, analyzeText } from './helpers';

/** Programs that hold a stale read or a race on purpose, with the error codes they must get. */
const DELIBERATE: Record<string, string[]> = {
  'examples/hall/hall_stale_acc.c': ['stale-on-device', 'stale-on-host'],
  'tests/fixtures/data/declare_global.c': ['stale-on-host'],
  'tests/fixtures/data/host_source.c': ['stale-on-device'],
  'tests/fixtures/data/stale_receiver.c': ['stale-on-host'],
  'tests/fixtures/data-flow/swap_structs.cpp': ['stale-on-host'],
  'tests/fixtures/index-locals/race.c': ['loop-carried-dependence'],
  'tests/fixtures/races/races.c': ['loop-carried-dependence', 'missing-reduction'],
  'tests/fixtures/races-2/idx_omp.c': ['missing-reduction', 'shared-scalar-write'],
  'tests/fixtures/races-2/overlap.c': ['loop-carried-dependence'],
  'tests/fixtures/verify/host_boundary_omp.c': ['stale-on-device'],
  'tests/fixtures/dependences/textbook_acc.c': ['loop-carried-dependence'],
  'tests/fixtures/dependences/textbook_omp.c': ['loop-carried-dependence'],
  'tests/fixtures/dependences/textbook_acc.f90': ['loop-carried-dependence'],
  'tests/fixtures/dependences/textbook_omp.f90': ['loop-carried-dependence'],
  'tests/fixtures/hazards/asserted.c': ['loop-carried-dependence'],
  'tests/fixtures/hazards/carried_scalar.c': ['loop-carried-dependence'],
  'tests/fixtures/hazards/wrong_op.c': ['missing-reduction'],
};

const SOURCE = /\.(c|cpp|cc|cxx|f90|F90|f|F)$/;

function sources(dir: string): string[] {
  return readdirSync(dir, { withFileTypes: true }).flatMap((e) =>
    e.isDirectory() ? sources(join(dir, e.name)) : SOURCE.test(e.name) ? [join(dir, e.name)] : [],
  );
}

const files = [...sources(join(ROOT, 'examples')), ...sources(join(ROOT, 'tests', 'fixtures'))].sort();

function compiler(file: string): string {
  if (/\.(f90|F90|f|F)$/.test(file)) return 'gfortran';
  return /\.(cpp|cc|cxx)$/.test(file) ? 'g++' : 'gcc';
}

function available(cmd: string): boolean {
  const r = spawnSync(cmd, ['--version'], { encoding: 'utf8' });
  return !r.error && r.status === 0;
}
const have = new Map(['gcc', 'g++', 'gfortran'].map((c) => [c, available(c)]));
for (const [c, ok] of have) if (!ok) console.log(`skipped: ${c} not found, so its sources are not checked for false errors`);

/** Whether the compiler accepts the file with the flag of the directives it holds (gcc 12 reads OpenACC 2.6 and OpenMP 4.5/5.x). */
function compiles(file: string): boolean {
  const text = readFileSync(file, 'utf8');
  const flag = /^\s*(#\s*pragma\s+acc|!\$acc)/im.test(text) ? '-fopenacc' : '-fopenmp';
  const r = spawnSync(compiler(file), ['-fsyntax-only', flag, '-I', join(file, '..'), file], { encoding: 'utf8', timeout: 60_000 });
  return r.status === 0;
}

describe('no false errors on programs the compiler accepts', () => {
  const cases = files.filter((f) => have.get(compiler(f))).map((f) => [relative(ROOT, f), f] as const);
  it.each(cases)('%s', async (rel, file) => {
    if (!compiles(file)) {
      // A fixture that only holds fragments (no complete translation unit) is not a program; it
      // is still read without a crash elsewhere, and gcc's verdict is what this test rests on.
      return;
    }
    const a = await analyzeText(readFileSync(file, 'utf8'), file);
    expect(a.internalErrors).toEqual([]);
    expect(a.findings.filter((f) => f.code === 'directive-syntax').map((f) => `${f.range.start.line + 1}: ${f.message}`)).toEqual([]);
    const errors = [...new Set(a.findings.filter((f) => f.severity === 'error').map((f) => f.code))].sort();
    expect(errors).toEqual(DELIBERATE[rel] ?? []);
  });

  it('checks most of the programs (the compilers accept them)', () => {
    const checked = files.filter((f) => have.get(compiler(f)) && compiles(f));
    if (have.get('gcc')) expect(checked.length).toBeGreaterThan(30);
  });
});
