/**
 * `offload-ledger calibrate`: compiles a bandwidth probe of our own with the system C compiler
 * and OpenMP, runs it for 1..N threads, and writes a host profile into the machines file. The
 * probe is a triad a[i] = b[i] + s*c[i] over arrays much larger than the last-level cache,
 * first-touched by the same threads that use them; the best of several sweeps counts. The cache
 * a core can count on for layer conditions is read from the cache hierarchy (Linux sysfs, else
 * getconf); cores and memory come from the OS and peak flops from a preset, and the profile's
 * sources say which figure came from where.
 */
import { execFileSync, spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, readdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { availableParallelism, tmpdir, totalmem } from 'node:os';
import { join } from 'node:path';
import type { HostProfile } from '../core/machine/profiles';
import { DEFAULT_PROFILE, HOSTS, PRESETS } from '../core/machine/profiles';
import type { CalibrateArgs } from './args';
import { InputError } from '../host/files';
import { MACHINES_FILE } from '../host/machines';

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

/** One cache of the hierarchy as Linux describes it in /sys/devices/system/cpu/cpuN/cache/indexK/. */
export interface CacheLevel {
  level: number;
  /** `Data`, `Instruction` or `Unified`. */
  type: string;
  bytes: number;
  /** Logical CPUs that share this cache (from `shared_cpu_list`). */
  sharedBy: number;
}

/** The cache directory of CPU 0 on Linux. */
export const SYS_CACHE_DIR = '/sys/devices/system/cpu/cpu0/cache';

/**
 * The largest share of a last-level cache one core is credited with. In a virtual machine or a
 * container the guest sees only its own CPUs in `shared_cpu_list`, while the physical L3 is
 * shared with cores it cannot see (a 2-CPU VM of this project's CI lists a 32 MiB L3 as shared by
 * its 2 CPUs: 16 MiB each); `getconf` may report even more (320 MiB on the same VM). 4 MiB is
 * the largest L3 per core of common server processors without stacked cache (32 MiB per 8-core
 * chiplet; 1.25–2 MiB per core on two-socket Xeons) — from memory. A processor with more (stacked
 * L3) is then credited with less cache than it has: the layer condition fails sooner, and the
 * host estimate counts more bytes, never fewer. A machines file can set `cacheBytesPerCore`.
 */
export const L3_SHARE_CAP = 4 * 2 ** 20;

/** `32K`, `1024K`, `32M`, `1G` or plain bytes, as sysfs `size` files give them. */
export function parseCacheSize(text: string): number | undefined {
  const m = /^\s*(\d+)\s*([KMG]?)i?B?\s*$/i.exec(text);
  if (!m) return undefined;
  const unit = { '': 1, K: 2 ** 10, M: 2 ** 20, G: 2 ** 30 }[m[2].toUpperCase() as '' | 'K' | 'M' | 'G'];
  return Number(m[1]) * unit;
}

/** How many CPUs a list such as `0-3,8-11` or `5` names. */
export function countCpuList(text: string): number | undefined {
  let n = 0;
  for (const part of text.trim().split(',')) {
    if (part === '') continue;
    const m = /^(\d+)(?:-(\d+))?$/.exec(part.trim());
    if (!m) return undefined;
    n += m[2] === undefined ? 1 : Number(m[2]) - Number(m[1]) + 1;
  }
  return n > 0 ? n : undefined;
}

/** The caches of CPU 0 read from sysfs; empty when the directory is absent or unreadable. */
export function readCacheHierarchy(dir = SYS_CACHE_DIR): CacheLevel[] {
  let entries: string[];
  try {
    entries = readdirSync(dir).filter((e) => /^index\d+$/.test(e)).sort();
  } catch {
    return [];
  }
  const out: CacheLevel[] = [];
  for (const e of entries) {
    const read = (f: string): string | undefined => {
      try {
        return readFileSync(join(dir, e, f), 'utf8').trim();
      } catch {
        return undefined;
      }
    };
    const level = Number(read('level'));
    const type = read('type') ?? '';
    const bytes = parseCacheSize(read('size') ?? '');
    const sharedBy = countCpuList(read('shared_cpu_list') ?? '') ?? 1;
    if (!Number.isInteger(level) || level < 1 || bytes === undefined || bytes <= 0) continue;
    out.push({ level, type, bytes, sharedBy });
  }
  return out;
}

export interface CachePerCore {
  /** Bytes one core is credited with for layer conditions, or undefined when nothing was found. */
  bytes: number | undefined;
  /** How the figure was made, for the profile's sources. */
  source: string;
  /** The caches it was made from. */
  levels: CacheLevel[];
}

const mib = (b: number): string => `${+(b / 2 ** 20).toFixed(2)} MiB`;

/**
 * A core's cache for layer conditions: its share of L2 (L2 / the CPUs sharing it: SMT siblings,
 * or a cluster of small cores) plus its share of L3 (L3 / the CPUs sharing it), the L3 share
 * capped at `L3_SHARE_CAP`. Data and unified caches count; instruction caches and levels above 3
 * (memory-side caches) do not.
 */
export function cachePerCore(levels: CacheLevel[], origin: string): CachePerCore {
  const data = levels.filter((c) => c.type.toLowerCase() !== 'instruction');
  const at = (level: number): CacheLevel | undefined => data.filter((c) => c.level === level).sort((a, b) => b.bytes - a.bytes)[0];
  const l2 = at(2);
  const l3 = at(3);
  if (!l2 && !l3) return { bytes: undefined, source: `no L2 or L3 found in ${origin}`, levels };
  const parts: string[] = [];
  let bytes = 0;
  if (l2) {
    bytes += l2.bytes / l2.sharedBy;
    parts.push(`L2 ${mib(l2.bytes)} / ${l2.sharedBy} CPU${l2.sharedBy === 1 ? '' : 's'}`);
  }
  if (l3) {
    const share = l3.bytes / l3.sharedBy;
    const capped = share > L3_SHARE_CAP;
    bytes += Math.min(share, L3_SHARE_CAP);
    parts.push(`L3 ${mib(l3.bytes)} / ${l3.sharedBy} CPU${l3.sharedBy === 1 ? '' : 's'} = ${mib(share)}${capped ? `, capped at ${mib(L3_SHARE_CAP)} per core (a guest sees only its own CPUs among those sharing an L3)` : ''}`);
  }
  return { bytes, source: `cache per core ${mib(bytes)} from ${origin}: ${parts.join(' + ')}`, levels };
}

/**
 * The cache per core of this machine: from sysfs on Linux, else from `getconf` (which gives
 * sizes but not how many CPUs share them, so L3 is divided by all the CPUs), else none.
 */
export function machineCachePerCore(cores: number, dir = SYS_CACHE_DIR): CachePerCore {
  const sys = readCacheHierarchy(dir);
  if (sys.length > 0) return cachePerCore(sys, dir);
  const get = (k: string): number => Number(spawnSync('getconf', [k], { encoding: 'utf8' }).stdout?.trim()) || 0;
  const levels: CacheLevel[] = [];
  const l2 = get('LEVEL2_CACHE_SIZE');
  const l3 = get('LEVEL3_CACHE_SIZE');
  if (l2 > 0) levels.push({ level: 2, type: 'Unified', bytes: l2, sharedBy: 1 });
  if (l3 > 0) levels.push({ level: 3, type: 'Unified', bytes: l3, sharedBy: Math.max(1, cores) });
  return cachePerCore(levels, 'getconf LEVEL2_CACHE_SIZE, LEVEL3_CACHE_SIZE (L3 taken as shared by all CPUs)');
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
    const cache = machineCachePerCore(cores);
    progress(`calibrate: ${cache.source}`);
    // Each array at least 4 × the last-level cache (so caches cannot hold them), capped by memory.
    const lastLevel = Math.max(0, ...cache.levels.filter((c) => c.type.toLowerCase() !== 'instruction').map((c) => c.bytes));
    const wanted = args.arrayMiB ? args.arrayMiB * 2 ** 20 : Math.max(4 * lastLevel, 64 * 2 ** 20);
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
    const date = new Date().toISOString().slice(0, 10);
    const host: HostProfile = {
      name: 'measured-host',
      description: `this machine's host, by offload-ledger calibrate on ${date}: memory bandwidth measured; cores, memory and caches read from the OS; peak flops from the ${reference.name} preset`,
      cores,
      bandwidthNode: best,
      bandwidthCore: measurements[0].trafficBandwidth,
      // The probe measures bandwidth only; peak flops per core are taken from the reference class.
      peakFlopsNode: (reference.peakFlopsNode / reference.cores) * cores,
      cacheBytesPerCore: cache.bytes ?? reference.cacheBytesPerCore,
      memoryBytes: totalmem(),
      sources: [
        `measured: memory bandwidth with a triad probe compiled with ${cc} -O2 -fopenmp, best of 8 sweeps per thread count, ${maxThreads === 1 ? '1 thread' : `1..${maxThreads} threads`}; bandwidths count 32 bytes per iteration (write-allocate included)`,
        `read from this machine: ${cores} cores (the logical CPUs this process may use) and ${(totalmem() / 2 ** 30).toFixed(1)} GiB of memory (the OS total)`,
        cache.bytes !== undefined
          ? `read from this machine: ${cache.source}`
          : `from the ${reference.name} preset (not measured): cache per core ${(reference.cacheBytesPerCore / 2 ** 20).toFixed(1)} MiB, since ${cache.source}`,
        `from the ${reference.name} preset (not measured): peak flops per core, ${(reference.peakFlopsNode / reference.cores / 1e9).toFixed(0)} GFlop/s double`,
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
  // Only the host is measured: the device and the link are the default preset's, and the
  // profile says so.
  const preset = PRESETS[DEFAULT_PROFILE];
  data.profiles = {
    ...(data.profiles ?? {}),
    measured: {
      preset: DEFAULT_PROFILE,
      description: `${host.description}; device and link from the ${DEFAULT_PROFILE} preset, not measured (${preset.device}, ${preset.link})`,
      host,
    },
  };
  writeFileSync(file, JSON.stringify(data, null, 2) + '\n');
  return file;
}
