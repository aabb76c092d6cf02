// Compiles and runs the Fortran estuary demo (examples/estuary) with gfortran.
//
// Without a GPU, gfortran's OpenACC and OpenMP target code falls back to the host, so the
// programs run anywhere gfortran runs. The sizes are Fortran parameters in the source; for the
// small run the test writes a copy with smaller values on the `nx = …, ny = …, nsteps = …` line
// (the files stay plain .f90, without a preprocessor). All four ports must print identical
// output, and every port must also compile at its default size.
import { spawnSync } from 'node:child_process';
import { mkdirSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, describe, expect, it } from 'vitest';

const estuaryDir = fileURLToPath(new URL('../examples/estuary/', import.meta.url));

const PORTS = ['estuary_naive_acc.f90', 'estuary_resident_acc.f90', 'estuary_naive_omp.f90', 'estuary_resident_omp.f90'];
const SIZE_LINE = 'nx = 800, ny = 300, nsteps = 2000';
const SMALL_SIZES = 'nx = 40, ny = 30, nsteps = 300';
const CHECKSUM = /checksum\s+-?\d\.\d{8}E[-+]\d{2}/;

const probe = spawnSync('gfortran', ['--version'], { encoding: 'utf8' });
const haveGfortran = !probe.error && probe.status === 0;
if (!haveGfortran) console.log('skipped: gfortran not found, so the Fortran examples cannot be compiled');

const modelFlag = (file: string): string => (file.endsWith('_omp.f90') ? '-fopenmp' : '-fopenacc');

let workDir: string | undefined;
function tempDir(): string {
  workDir ??= mkdtempSync(join(tmpdir(), 'offload-ledger-estuary-'));
  return workDir;
}

function compile(file: string, source: string, tag: string): string {
  const dir = join(tempDir(), tag);
  mkdirSync(dir, { recursive: true });
  const src = join(dir, file);
  writeFileSync(src, source);
  const exe = join(dir, file.replace('.f90', ''));
  // Each build gets its own directory, because the ports define modules of the same names.
  const args = [modelFlag(file), '-O2', '-Wall', `-J${dir}`, src, '-o', exe];
  const r = spawnSync('gfortran', args, { cwd: dir, encoding: 'utf8', timeout: 60_000 });
  if (r.error) throw r.error;
  expect(r.stderr, `gfortran ${args.join(' ')}`).toBe('');
  expect(r.status, `gfortran ${args.join(' ')}\n${r.stderr}`).toBe(0);
  return exe;
}

const outputs = new Map<string, string>();
function runSmall(file: string): string {
  const cached = outputs.get(file);
  if (cached !== undefined) return cached;
  const text = readFileSync(join(estuaryDir, file), 'utf8');
  expect(text.includes(SIZE_LINE), `${file} declares ${SIZE_LINE}`).toBe(true);
  const exe = compile(file, text.replace(SIZE_LINE, SMALL_SIZES), `small-${file}`);
  // Two threads are enough for the host fallback; a passive wait policy keeps idle threads from
  // spinning, which makes the thousand small target regions of a run slow on a busy machine.
  const env = { ...process.env, OMP_NUM_THREADS: '2', OMP_WAIT_POLICY: 'passive' };
  const r = spawnSync(exe, [], { encoding: 'utf8', timeout: 60_000, env });
  if (r.error) throw r.error;
  expect(r.status, `${file} exited with ${r.status}\n${r.stderr}`).toBe(0);
  outputs.set(file, r.stdout);
  return r.stdout;
}

describe.skipIf(!haveGfortran)('Fortran estuary examples', () => {
  afterAll(() => {
    if (workDir) rmSync(workDir, { recursive: true, force: true });
  });

  it.each(PORTS)('%s compiles and runs at a small size', (file) => {
    const out = runSmall(file);
    expect(out).toMatch(CHECKSUM);
    // Three snapshots (steps 100, 200, 300) and four final checksums.
    expect(out.trim().split('\n')).toHaveLength(7);
  });

  it('all four ports print identical results', () => {
    const naive = runSmall(PORTS[0]);
    for (const file of PORTS.slice(1)) expect(runSmall(file), file).toBe(naive);
  });

  it.each(PORTS)('%s compiles at its default size', (file) => {
    compile(file, readFileSync(join(estuaryDir, file), 'utf8'), `default-${file}`);
  });
});
