/**
 * `offload-ledger calibrate`: compiles a bandwidth probe of our own with the system C compiler
 * and OpenMP, runs it for 1..N threads, and writes a host profile into the machines file. The
 * probe is a triad a[i] = b[i] + s*c[i] over arrays much larger than the last-level cache,
 * first-touched by the same threads that use them; the best of several sweeps counts.
 */
import { execFileSync, spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { availableParallelism, tmpdir, totalmem } from 'node:os';
import { join } from 'node:path';
import type { HostProfile } from '../core/machine/profiles';
import { HOSTS } from '../core/machine/profiles';
import type { CalibrateArgs } from './args';
import { InputError } from './files';
import { MACHINES_FILE } from './machines';

const PROBE = String.raw`
#include <omp.h>
#include <stdio.h>
#include <stdlib.h>
int main(int argc, char **argv) {
  long n = atol(argv[1]);
  int threads = atoi(argv[2]);
  int reps = atoi(argv[3]);
  omp_set_num_threads(threads);
  double *a = malloc(n * sizeof *a), *b = malloc(n * sizeof *b), *c = malloc(n * sizeof *c);
  if (!a || !b || !c) return 3;
  #pragma omp parallel for schedule(static)
  for (long i = 0; i < n; i++) { a[i] = 0.0; b[i] = 1.0; c[i] = 2.0; }
  double best = 1e30;
  for (int r = 0; r < reps; r++) {
    double t0 = omp_get_wtime();
    #pragma omp parallel for schedule(static)
    for (long i = 0; i < n; i++) a[i] = b[i] + 3.0 * c[i];
    double t = omp_get_wtime() - t0;
    if (t < best) best = t;
  }
  double check = 0.0;
  for (long i = 0; i < n; i += 4096) check += a[i];
  printf("%.9e %.1f\n", best, check);
  return 0;
}
`;

export interface Measurement {
  threads: number;
  seconds: number;
  /** Bandwidth counting 24 bytes per iteration (the STREAM convention). */
  streamBandwidth: number;
  /** Bandwidth counting the write-allocate read too (32 bytes per iteration): the traffic the host model counts. */
  trafficBandwidth: number;
}

function cacheBytes(): { l2: number; l3: number } {
  const get = (k: string): number => Number(spawnSync('getconf', [k], { encoding: 'utf8' }).stdout?.trim()) || 0;
  return { l2: get('LEVEL2_CACHE_SIZE'), l3: get('LEVEL3_CACHE_SIZE') };
}

/** The compiler to use: the one given, else the first of gcc, cc and clang that answers. */
function findCompiler(given: string | undefined): string {
  const candidates = given ? [given] : ['gcc', 'cc', 'clang'];
  const found = candidates.find((c) => spawnSync(c, ['--version']).status === 0);
  if (!found) throw new InputError(given ? `calibrate: the C compiler \`${given}\` was not found (give another with --cc)` : 'calibrate: no C compiler found (gcc, cc or clang); give one with --cc');
  return found;
}

export function measure(args: CalibrateArgs, progress: (s: string) => void): { host: HostProfile; measurements: Measurement[] } {
  const cc = findCompiler(args.cc);
  const dir = mkdtempSync(join(tmpdir(), 'ol-calibrate-'));
  try {
    const src = join(dir, 'probe.c');
    const exe = join(dir, 'probe');
    writeFileSync(src, PROBE);
    try {
      execFileSync(cc, ['-O2', '-fopenmp', src, '-o', exe], { stdio: 'pipe' });
    } catch (e) {
      throw new InputError(`calibrate: \`${cc} -O2 -fopenmp\` failed; does it support OpenMP? (${String((e as { stderr?: Buffer }).stderr ?? e).split('\n')[0]})`);
    }
    const cores = availableParallelism();
    const { l2, l3 } = cacheBytes();
    // Each array at least 4 × the last-level cache (so caches cannot hold them), capped by memory.
    const wanted = args.arrayMiB ? args.arrayMiB * 2 ** 20 : Math.max(4 * l3, 64 * 2 ** 20);
    const perArray = Math.min(wanted, totalmem() / 8, 2 ** 30);
    const n = Math.floor(perArray / 8);
    const maxThreads = Math.min(args.maxThreads ?? cores, cores);
    const measurements: Measurement[] = [];
    for (let k = 1; k <= maxThreads; k++) {
      progress(`calibrate: measuring with ${k} of ${maxThreads} thread${maxThreads === 1 ? '' : 's'} (3 arrays of ${(perArray / 2 ** 20).toFixed(0)} MiB)…`);
      const r = spawnSync(exe, [String(n), String(k), '8'], { encoding: 'utf8', timeout: 600_000 });
      if (r.status !== 0) throw new InputError(`calibrate: the probe failed with ${k} threads (exit ${r.status ?? r.signal})`);
      const seconds = Number(r.stdout.trim().split(/\s+/)[0]);
      const m = { threads: k, seconds, streamBandwidth: (24 * n) / seconds, trafficBandwidth: (32 * n) / seconds };
      measurements.push(m);
      progress(`calibrate:   ${k} thread${k === 1 ? '' : 's'}: ${(m.trafficBandwidth / 1e9).toFixed(1)} GB/s of memory traffic (${(m.streamBandwidth / 1e9).toFixed(1)} GB/s in the STREAM convention)`);
    }
    const best = Math.max(...measurements.map((m) => m.trafficBandwidth));
    const reference = HOSTS['ddr5-2s'];
    const host: HostProfile = {
      name: 'measured-host',
      description: `this machine, measured by offload-ledger calibrate on ${new Date().toISOString().slice(0, 10)}`,
      cores,
      bandwidthNode: best,
      bandwidthCore: measurements[0].trafficBandwidth,
      // The probe measures bandwidth only; peak flops per core are taken from the reference class.
      peakFlopsNode: (reference.peakFlopsNode / reference.cores) * cores,
      cacheBytesPerCore: l2 + (l3 > 0 ? l3 / cores : 0) || reference.cacheBytesPerCore,
      memoryBytes: totalmem(),
      sources: [
        `triad probe compiled with ${cc} -O2 -fopenmp, best of 8 sweeps per thread count, 1..${maxThreads} threads; bandwidths count 32 bytes per iteration (write-allocate included)`,
        `peak flops per core from the ${reference.name} class (not measured)`,
        'cache per core from getconf LEVEL2_CACHE_SIZE + LEVEL3_CACHE_SIZE / cores',
      ],
    };
    return { host, measurements };
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}

/** Adds (or replaces) the `measured` profile in the machines file, keeping everything else in it. */
export function writeProfile(host: HostProfile, out: string | undefined): string {
  const file = out ?? MACHINES_FILE;
  let data: { default?: string; profiles?: Record<string, unknown> } = {};
  if (existsSync(file)) {
    try {
      data = JSON.parse(readFileSync(file, 'utf8'));
    } catch {
      throw new InputError(`${file}: exists but is not valid JSON; not overwriting it`);
    }
  }
  data.profiles = { ...(data.profiles ?? {}), measured: { description: host.description, host } };
  writeFileSync(file, JSON.stringify(data, null, 2) + '\n');
  return file;
}
