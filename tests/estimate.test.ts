/**
 * Offload payoff estimates against hand-worked numbers and published figures.
 */
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { stepWork } from '../server/src/core/estimate/step';
import { makespan, plan } from '../server/src/core/estimate/throughput';
import { DEVICES, HOSTS, LINKS, pcieX16Bandwidth, presetProfile } from '../server/src/core/machine/profiles';
import { resolveProfiles } from '../server/src/core/machine/resolve';
import { ROOT, analyzeText } from './helpers';

const fixture = (name: string): string => readFileSync(join(ROOT, 'tests/fixtures/estimate', name), 'utf8');
const profile = presetProfile('pcie4-hbm2e')!;

describe('link bandwidth (PCI-SIG base specification: GT/s x 16 lanes x 128/130 / 8)', () => {
  it.each([
    [8, 15.75], // Gen3 x16 per direction
    [16, 31.5], // Gen4
    [32, 63.0], // Gen5
  ])('%i GT/s gives %f GB/s', (gt, gbs) => expect(pcieX16Bandwidth(gt) / 1e9).toBeCloseTo(gbs, 1));
  it('presets use them', () => {
    expect(LINKS['pcie4-x16'].bandwidth / 1e9).toBeCloseTo(31.51, 2);
  });
});

describe('speedup of a bandwidth-bound loop with nothing crossing the link', () => {
  it('equals the ratio of sustained bandwidths (roofline; Lee et al., ISCA 2010, found optimised GPU/CPU gaps near the bandwidth ratio)', async () => {
    const a = await analyzeText(fixture('resident_inplace.c'), 'resident_inplace.c', undefined, undefined, profile);
    const nest = a.nests.find((n) => n.nest.offload)!;
    // In place: read a, read b, write a = 24 bytes per iteration on both sides, no write-allocate.
    expect(nest.cost.bytes).toEqual({ device: 24, host: 24 });
    const ratio = profile.device.bandwidth / profile.host.bandwidthNode;
    expect(nest.estimate!.bound).toBe('memory');
    // The nest's kernel speedup includes its one launch (5 µs) beside the 1.41 ms kernel.
    const kernel = (24 * 1e8) / profile.device.bandwidth;
    expect(nest.estimate!.speedup!.expected).toBeCloseTo((ratio * kernel) / (kernel + profile.device.launchSeconds), 10);
    expect(Math.abs(nest.estimate!.speedup!.expected / ratio - 1)).toBeLessThan(0.005);
    const step = a.timeLoops[0].estimate!;
    expect(step.transferSeconds).toBe(0);
    // The step adds one 5 µs launch to a 1.41 ms kernel (24e8 B / 1.7e12 B/s): within 0.5 % of the ratio.
    expect(Math.abs(step.speedup!.expected / ratio - 1)).toBeLessThan(0.005);
    expect(step.bound).toBe('memory');
    expect(step.speedup!.low).toBeLessThan(step.speedup!.expected);
    expect(step.speedup!.high).toBeGreaterThan(step.speedup!.expected);
  });
});

describe('a loop whose per-step transfer exceeds its kernel time', () => {
  it('is bound by transfer and slower than the host (hand-worked)', async () => {
    const a = await analyzeText(fixture('copy_every_step.c'), 'copy_every_step.c', undefined, undefined, profile);
    const e = a.timeLoops[0].estimate!;
    const n = 1e6;
    const host = (24 * n) / 460e9; // 52.2 µs: 24 MB at the DDR5 node's 460 GB/s
    const kernel = (24 * n) / 1.7e12; // 14.1 µs at the HBM2e-class 1.7 TB/s
    const launch = 5e-6;
    const link = pcieX16Bandwidth(16) * 0.85; // expected link efficiency 0.85 (docs/cost-model.md)
    const transfers = 3 * (10e-6 + (8 * n) / link); // a in, b in, a out: 3 x (10 µs + 8 MB / 26.8 GB/s) = 926 µs
    expect(e.hostSeconds).toBeCloseTo(host, 12);
    expect(e.kernelSeconds).toBeCloseTo(kernel, 12);
    expect(e.transferSeconds).toBeCloseTo(transfers, 12);
    expect(e.deviceSeconds).toBeCloseTo(kernel + launch + transfers, 12);
    expect(e.speedup!.expected).toBeCloseTo(host / (kernel + launch + transfers), 9); // 0.055
    expect(e.speedup!.expected).toBeLessThan(1);
    expect(e.bound).toBe('transfer');
    // With the suggested region the copies leave the loop, and the kernel speed shows.
    expect(e.withRegion!.bound).toBe('memory');
    expect(e.withRegion!.speedup!.expected).toBeGreaterThan(1);
  });
});

describe('host code left in the time loop (Amdahl)', () => {
  it('runs on one core when no directive parallelises it, and can bound the step (hand-worked)', async () => {
    const a = await analyzeText(fixture('host_in_loop.c'), 'host_in_loop.c', undefined, undefined, profile);
    const e = a.timeLoops[0].estimate!;
    const n = 1e7;
    const hostLeft = (8 * n) / 14e9; // serial sum: 8 B per element at one core's 14 GB/s = 5.71 ms
    const kernelOnHost = (16 * n) / 460e9; // the parallel loop on the node: 0.35 ms
    const kernel = (16 * n) / 1.7e12; // 94 µs on the device
    const transfer = 10e-6 + (8 * n) / (pcieX16Bandwidth(16) * 0.85); // update self(a): 3.0 ms
    expect(e.hostLeftSeconds).toBeCloseTo(hostLeft, 12);
    expect(e.hostSeconds).toBeCloseTo(kernelOnHost + hostLeft, 12);
    expect(e.deviceSeconds).toBeCloseTo(kernel + 5e-6 + transfer + hostLeft, 12);
    expect(e.bound).toBe('host');
    expect(e.speedup!.expected).toBeCloseTo((kernelOnHost + hostLeft) / (kernel + 5e-6 + transfer + hostLeft), 9); // 0.69
  });
});

describe('memory fit', () => {
  it('reports exceeds-device-memory and no runs per device when the resident arrays do not fit', async () => {
    const a = await analyzeText(fixture('too_big.c'), 'too_big.c', undefined, undefined, profile);
    const f = a.findings.find((x) => x.code === 'exceeds-device-memory');
    expect(f?.message).toContain('178.8 GiB'); // 4 x 12e9 x 4 B = 192e9 B = 178.8 GiB
    expect(a.timeLoops[0].estimate!.runsPerDevice).toBe(0);
  });
  it('counts how many runs fit on one device', async () => {
    const a = await analyzeText(fixture('resident_inplace.c'), 'resident_inplace.c', undefined, undefined, profile);
    // a and b: 2 x 8e8 B = 1.6 GB resident; floor(80 GB / 1.6 GB) = 50.
    expect(a.timeLoops[0].estimate!.residentBytes).toBe(1.6e9);
    expect(a.timeLoops[0].estimate!.runsPerDevice).toBe(50);
  });
});

describe('throughput and cost of many runs', () => {
  it('packs runs per core until the node bandwidth saturates, and prices runs', async () => {
    const a = await analyzeText(fixture('resident_inplace.c'), 'resident_inplace.c', undefined, undefined, profile);
    const w = stepWork(a.timeLoops[0].ledger!, a.nests)!;
    const priced = { ...profile, host: { ...profile.host, costPerNodeHour: 3 }, device: { ...profile.device, costPerNodeHour: 12 } };
    const p = plan(w, 10, priced, 400, 1.6e9);
    // 96 runs at once share 460 GB/s: 4.79 GB/s each, below one core's 14 GB/s.
    const perRun = (10 * 24 * 1e8) / (460e9 / 96);
    expect(p.host.secondsPerRun).toBeCloseTo(perRun, 6);
    expect(p.host.runsPerNodeHour).toBeCloseTo((96 * 3600) / perRun, 6);
    expect(p.host.coresToSaturate).toBe(Math.ceil(460 / 14)); // 33 cores saturate the node
    expect(p.host.costPerRun).toBeCloseTo(3 / p.host.runsPerNodeHour, 12);
    expect(p.device!.runsPerNodeHour).toBeCloseTo((4 * 3600) / p.device!.secondsPerRun, 6);
    expect(p.device!.costPerRun).toBeCloseTo(12 / p.device!.runsPerNodeHour, 12);
  });
  it('a mixed pool finishes when its slowest run does (greedy list scheduling, hand-worked)', () => {
    const p = presetProfile('pcie4-hbm2e')!;
    const host = { runsAtOnce: 2, coresToSaturate: 1, secondsPerRun: 100, runsPerNodeHour: 72, wholeNodeRunsPerNodeHour: 36 };
    const device = { runsPerDevice: 1, secondsPerRun: 10, runsPerNodeHour: 1440 };
    const small = { ...p, device: { ...p.device, devicesPerNode: 1 } };
    // 1 host node (2 slots of 100 s) + 1 device (10 s per run), 12 runs: the device takes runs
    // while it can finish them before 100 s (10 of them, done at 100 s); the host slots take 2.
    const m = makespan(12, { hostNodes: 1, deviceNodes: 1 }, host, device, small);
    expect(m.runsOnDevice + m.runsOnHost).toBe(12);
    expect(m.makespanSeconds).toBe(100);
    expect(m.slowestRunSeconds).toBe(100);
    // 5 runs: all on the device (50 s) beat any host slot (100 s).
    expect(makespan(5, { hostNodes: 1, deviceNodes: 1 }, host, device, small)).toMatchObject({ runsOnDevice: 5, runsOnHost: 0, makespanSeconds: 50 });
  });
});

describe('machines file profiles', () => {
  it('start from a preset and replace parts by name or by figures', () => {
    const { profiles, defaultName } = resolveProfiles({
      default: 'ours',
      profiles: { ours: { preset: 'pcie5-hbm3', host: 'ddr4-2s', link: { bandwidth: 20e9, latencySeconds: 8e-6 } } },
    });
    expect(defaultName).toBe('ours');
    const p = profiles.get('ours')!;
    expect(p.host).toEqual(HOSTS['ddr4-2s']);
    expect(p.device).toEqual(DEVICES['hbm3-80g']);
    expect(p.link.bandwidth).toBe(20e9);
    expect(p.link.description).toBe(LINKS['pcie5-x16'].description);
  });
  it('name what is wrong', () => {
    expect(() => resolveProfiles({ profiles: { x: { preset: 'nope' } } })).toThrow(/unknown preset `nope`; presets: pcie4-hbm2e/);
    expect(() => resolveProfiles({ profiles: { x: { device: 'nope' } } })).toThrow(/unknown device `nope`; built-in devices: hbm2e-80g/);
    expect(() => resolveProfiles({ default: 'missing' })).toThrow(/default profile `missing` is not defined/);
  });
});
