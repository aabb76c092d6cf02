/**
 * Every Fortran fixture is real Fortran: it must pass `gfortran -fsyntax-only` with the offload
 * model it uses, so the expectations in the other tests describe code a compiler accepts.
 */
import { spawnSync } from 'node:child_process';
import { mkdtempSync, readdirSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { FIXTURE_DIR } from '../fixtures/fortran/check';

const probe = spawnSync('gfortran', ['--version'], { encoding: 'utf8' });
const haveGfortran = !probe.error && probe.status === 0;
if (!haveGfortran) console.log('skipped: gfortran not found, so the Fortran fixtures cannot be syntax-checked');

const fixtures = readdirSync(FIXTURE_DIR).filter((f) => /\.(f|f90|F90)$/.test(f)).sort();

describe.skipIf(!haveGfortran)('Fortran fixtures compile', () => {
  // Module files go to a scratch directory, never into the repository.
  const work = mkdtempSync(join(tmpdir(), 'offload-ledger-fortran-'));
  afterAll(() => rmSync(work, { recursive: true, force: true }));

  it('finds the fixtures', () => expect(fixtures.length).toBeGreaterThanOrEqual(10));

  it.each(fixtures)('%s passes gfortran -fsyntax-only', (name) => {
    const flag = /omp/.test(name) ? '-fopenmp' : '-fopenacc';
    const r = spawnSync('gfortran', ['-fsyntax-only', flag, `-J${work}`, join(FIXTURE_DIR, name)], { cwd: work, encoding: 'utf8', timeout: 60_000 });
    expect(r.status, r.stderr).toBe(0);
  });
});
