/**
 * `offload-ledger calibrate`: the cache per core for layer conditions, read from a cache
 * hierarchy laid out as Linux's /sys/devices/system/cpu/cpu0/cache/indexK/ (level, type, size,
 * shared_cpu_list; Documentation/ABI/testing/sysfs-devices-system-cpu). Expected values are
 * worked by hand: L2 / the CPUs sharing it + min(L3 / the CPUs sharing it, 4 MiB), the cap
 * this project documents in docs/cost-model.md.
 */
import { mkdirSync, mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { L3_SHARE_CAP, cachePerCore, countCpuList, machineCachePerCore, parseCacheSize, readCacheHierarchy } from '../server/src/cli/calibrate';
import { ROOT, runCli } from './helpers';

const MiB = 2 ** 20;

/** A fake sysfs cache directory: [level, type, size, shared_cpu_list] per index. */
function sysfs(entries: [number, string, string, string][]): string {
  const dir = mkdtempSync(join(tmpdir(), 'ol-cache-'));
  entries.forEach(([level, type, size, shared], k) => {
    const d = join(dir, `index${k}`);
    mkdirSync(d);
    writeFileSync(join(d, 'level'), `${level}\n`);
    writeFileSync(join(d, 'type'), `${type}\n`);
    writeFileSync(join(d, 'size'), `${size}\n`);
    writeFileSync(join(d, 'shared_cpu_list'), `${shared}\n`);
  });
  return dir;
}

describe('cache sizes and CPU lists as sysfs writes them', () => {
  it('reads sizes', () => {
    expect(parseCacheSize('32K')).toBe(32 * 1024);
    expect(parseCacheSize('1024K')).toBe(MiB);
    expect(parseCacheSize('32M')).toBe(32 * MiB);
    expect(parseCacheSize('bogus')).toBeUndefined();
  });
  it('counts CPU lists', () => {
    expect(countCpuList('0')).toBe(1);
    expect(countCpuList('0-1')).toBe(2);
    expect(countCpuList('0-3,8-11')).toBe(8);
    expect(countCpuList('0,64')).toBe(2);
    expect(countCpuList('x')).toBeUndefined();
  });
});

describe('cache per core', () => {
  it('a 2-CPU VM that sees a whole 32 MiB L3 as shared by its 2 CPUs gets the cap', () => {
    // This project's CI VM: L2 1 MiB per CPU, L3 32 MiB listed as shared by CPUs 0-1.
    // 1 MiB + min(16 MiB, 4 MiB) = 5 MiB (not the 161 MiB that getconf's 320 MiB L3 gave).
    const dir = sysfs([[1, 'Data', '32K', '0'], [1, 'Instruction', '32K', '0'], [2, 'Unified', '1024K', '0'], [3, 'Unified', '32768K', '0-1']]);
    const c = machineCachePerCore(2, dir);
    expect(c.bytes).toBe(5 * MiB);
    expect(c.source).toMatch(/L2 1 MiB \/ 1 CPU \+ L3 32 MiB \/ 2 CPUs = 16 MiB, capped at 4 MiB/);
  });

  it('a server chiplet: L2 1 MiB per core (2 SMT threads), L3 32 MiB shared by 16 CPUs', () => {
    // 1 MiB / 2 + 32 MiB / 16 = 0.5 + 2 = 2.5 MiB per logical CPU, under the cap.
    const dir = sysfs([[1, 'Data', '32K', '0,64'], [2, 'Unified', '1024K', '0,64'], [3, 'Unified', '32768K', '0-7,64-71']]);
    expect(readCacheHierarchy(dir).map((l) => l.sharedBy)).toEqual([2, 2, 16]);
    const c = machineCachePerCore(128, dir);
    expect(c.bytes).toBe(2.5 * MiB);
    expect(c.source).not.toMatch(/capped/);
  });

  it('a machine without L3 counts its L2 share only', () => {
    // 4 MiB L2 shared by a cluster of 4 small cores: 1 MiB each.
    expect(cachePerCore([{ level: 2, type: 'Unified', bytes: 4 * MiB, sharedBy: 4 }], 'test').bytes).toBe(MiB);
  });

  it('no cache information gives no figure (the preset decides, and the profile says so)', () => {
    expect(cachePerCore([{ level: 1, type: 'Data', bytes: 32 * 1024, sharedBy: 1 }], 'test').bytes).toBeUndefined();
    expect(readCacheHierarchy(join(tmpdir(), 'no-such-dir-ol'))).toEqual([]);
  });

  it('the cap is 4 MiB', () => {
    expect(L3_SHARE_CAP).toBe(4 * MiB);
  });
});

describe('calibrate writes where each figure came from', () => {
  it('a short run (1 thread, 64 MiB arrays) names the measured, read and preset figures', () => {
    if (process.platform !== 'linux') return;
    const out = join(mkdtempSync(join(tmpdir(), 'ol-cal2-')), 'machines.json');
    const r = runCli(['calibrate', '--out', out, '--max-threads', '1', '--array-mib', '64', '--format', 'json'], ROOT);
    if (r.status !== 0 && /no C compiler found|failed; does it support OpenMP/.test(r.stderr)) return;
    expect(r.status, r.stderr).toBe(0);
    const { host } = JSON.parse(r.stdout);
    expect(host.cacheBytesPerCore).toBeLessThanOrEqual(8 * MiB);
    expect(host.sources.join('\n')).toMatch(/^measured: memory bandwidth/m);
    expect(host.sources.join('\n')).toMatch(/^read from this machine: .*cores/m);
    expect(host.sources.join('\n')).toMatch(/^(read from this machine: cache per core|from the ddr5-2s preset \(not measured\): cache per core)/m);
    expect(host.sources.join('\n')).toMatch(/^from the ddr5-2s preset \(not measured\): peak flops/m);
    const file = JSON.parse(readFileSync(out, 'utf8'));
    expect(file.profiles.measured.preset).toBe('pcie4-hbm2e');
    expect(file.profiles.measured.description).toMatch(/device and link from the pcie4-hbm2e preset, not measured/);
    // The file is still a valid machines file: check accepts it.
    const check = runCli(['check', '--machines', out, '--profile', 'measured', '--format', 'json', 'tests/fixtures/cost/clamped.c']);
    expect(check.status, check.stderr).toBe(0);
  }, 120_000);
});
