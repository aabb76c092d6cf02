// Compiles and runs the C demo programs under examples/ with gcc.
//
// Without a GPU, gcc's OpenACC and OpenMP target code falls back to the host,
// so the programs run anywhere gcc runs. Each program is built at a small grid
// size and run, the hall variants of one scene must print identical results,
// and every program must also compile (but is not run) at its default size.
import { spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, describe, expect, it } from 'vitest';

const examplesDir = fileURLToPath(new URL('../examples/', import.meta.url));

interface Example {
  /** Path relative to examples/. */
  file: string;
  /** Size overrides for the small run. */
  small: string[];
}

const HEAT_SMALL = ['-DNX=64', '-DNY=64', '-DSTEPS=200'];
const HALL_SMALL = ['-DNX=40', '-DNY=30', '-DNZ=20', '-DSTEPS=150'];

const EXAMPLES: Example[] = [
  { file: 'heat2d/heat2d_acc.c', small: HEAT_SMALL },
  { file: 'heat2d/heat2d_omp.c', small: HEAT_SMALL },
  { file: 'hall/hall_naive_acc.c', small: HALL_SMALL },
  { file: 'hall/hall_resident_acc.c', small: HALL_SMALL },
  { file: 'hall/hall_stale_acc.c', small: HALL_SMALL },
  { file: 'hall/hall_naive_omp.c', small: HALL_SMALL },
  { file: 'hall/hall_resident_omp.c', small: HALL_SMALL },
];

const CHECKSUM = /checksum\s+[-+]?\d\.\d{6}e[-+]\d{2,3}/;

const gccProbe = spawnSync('gcc', ['--version'], { encoding: 'utf8' });
const haveGcc = !gccProbe.error && gccProbe.status === 0;
if (!haveGcc) {
  console.log('skipped: gcc not found, so the C examples cannot be compiled');
}

function modelFlag(file: string): string {
  return file.endsWith('_omp.c') ? '-fopenmp' : '-fopenacc';
}

let workDir: string | undefined;
function tempDir(): string {
  workDir ??= mkdtempSync(join(tmpdir(), 'offload-ledger-examples-'));
  return workDir;
}

function compile(ex: Example, defines: string[], tag: string): string {
  const exe = join(tempDir(), `${ex.file.replace(/[/.]/g, '_')}_${tag}`);
  const args = [
    modelFlag(ex.file), '-O2', '-Wall', '-Werror', '-std=c11',
    ...defines, join(examplesDir, ex.file), '-o', exe, '-lm',
  ];
  const r = spawnSync('gcc', args, { encoding: 'utf8', timeout: 60_000 });
  if (r.error) throw r.error;
  expect(r.stderr, `gcc ${args.join(' ')}`).toBe('');
  expect(r.status, `gcc ${args.join(' ')}\n${r.stderr}`).toBe(0);
  return exe;
}

// Each small program is built and run once; later tests reuse its output.
const outputs = new Map<string, string>();
function runSmall(ex: Example): string {
  const cached = outputs.get(ex.file);
  if (cached !== undefined) return cached;
  const exe = compile(ex, ex.small, 'small');
  const r = spawnSync(exe, [], {
    encoding: 'utf8',
    timeout: 60_000,
    // Two threads are enough for the host fallback and keep the run light.
    env: { ...process.env, OMP_NUM_THREADS: '2' },
  });
  if (r.error) throw r.error;
  expect(r.status, `${ex.file} exited with ${r.status}\n${r.stderr}`).toBe(0);
  outputs.set(ex.file, r.stdout);
  return r.stdout;
}

function byFile(file: string): Example {
  const ex = EXAMPLES.find((e) => e.file === file);
  if (!ex) throw new Error(`unknown example ${file}`);
  return ex;
}

describe.skipIf(!haveGcc)('C examples', () => {
  afterAll(() => {
    if (workDir) rmSync(workDir, { recursive: true, force: true });
  });

  it.each(EXAMPLES.map((e) => [e.file, e] as const))('%s compiles and runs at a small size', (_name, ex) => {
    const out = runSmall(ex);
    expect(out.trim().length).toBeGreaterThan(0);
    expect(out).toMatch(CHECKSUM);
  });

  it('hall OpenACC variants print identical results', () => {
    const naive = runSmall(byFile('hall/hall_naive_acc.c'));
    expect(runSmall(byFile('hall/hall_resident_acc.c'))).toBe(naive);
    // The stale variant is wrong on a real device, but under host fallback
    // host and device share memory, so it must match too.
    expect(runSmall(byFile('hall/hall_stale_acc.c'))).toBe(naive);
  });

  it('hall OpenMP variants print identical results, equal to OpenACC', () => {
    const naive = runSmall(byFile('hall/hall_naive_omp.c'));
    expect(runSmall(byFile('hall/hall_resident_omp.c'))).toBe(naive);
    expect(naive).toBe(runSmall(byFile('hall/hall_naive_acc.c')));
  });

  it('heat2d OpenACC and OpenMP print identical results', () => {
    expect(runSmall(byFile('heat2d/heat2d_omp.c'))).toBe(runSmall(byFile('heat2d/heat2d_acc.c')));
  });

  it.each(EXAMPLES.map((e) => [e.file, e] as const))('%s compiles at its default size', (_name, ex) => {
    compile(ex, [], 'default');
  });
});
