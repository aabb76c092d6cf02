/**
 * Roofline estimates of one loop nest on the host baseline and on the device (Williams,
 * Waterman, Patterson, CACM 2009): time = max(bytes / bandwidth, flops / peak), with the host
 * bytes (write-allocate, layer conditions) on the host and the compulsory bytes on the device.
 */
import type { NestCost } from '../cost/ledger';
import { rooflineTime } from '../cost/roofline';
import type { MachineProfile } from '../machine/profiles';
import { CASES, type Case, EFFICIENCY } from './efficiency';
import type { Baseline, Bound, NestEstimate, Spread } from './types';

export interface Work {
  iterations: number;
  cost: NestCost;
  /**
   * False for a nest no directive parallelises (neither an offload construct nor a host
   * `parallel for`/`loop`): a CPU build runs it on one core even when the node is the baseline,
   * which is the serial part that makes packing runs per core pay.
   */
  parallel?: boolean;
}

/** Single precision when no array of the nest has elements wider than 4 bytes. */
export function isSinglePrecision(cost: NestCost): boolean {
  return cost.footprints.length > 0 && cost.footprints.every((f) => f.elementBytes <= 4);
}

export function hostSeconds(w: Work, profile: MachineProfile, baseline: Baseline, c: Case = 'expected'): number {
  const h = profile.host;
  const single = isSinglePrecision(w.cost);
  const peakNode = single ? h.peakFlopsNodeSingle ?? 2 * h.peakFlopsNode : h.peakFlopsNode;
  const wholeNode = baseline === 'node' && w.parallel !== false;
  const peak = wholeNode ? peakNode : peakNode / h.cores;
  const bw = (wholeNode ? h.bandwidthNode : h.bandwidthCore) * EFFICIENCY.hostBandwidth[c];
  return rooflineTime(w.cost.flopsPerIteration * w.iterations, w.cost.bytes.host * w.iterations, peak, bw).seconds;
}

/** Kernel time on the device, without the launch (the step estimate adds launches). */
export function deviceKernel(w: Work, profile: MachineProfile, c: Case = 'expected'): { seconds: number; bound: 'memory' | 'compute' } {
  const d = profile.device;
  const peak = isSinglePrecision(w.cost) ? d.peakFlopsSingle : d.peakFlops;
  return rooflineTime(w.cost.flopsPerIteration * w.iterations, w.cost.bytes.device * w.iterations, peak, d.bandwidth * EFFICIENCY.deviceBandwidth[c]);
}

/**
 * The nest as one device kernel against the same nest on the host baseline. One baseline for every
 * nest of a file (the whole node, or one core for serial code), whether or not the host version is
 * parallel today, so that a column of speedups compares like with like; the device side includes
 * one kernel launch (profile launch latency, scaled by the launch efficiency of each case).
 */
export function nestEstimate(iterations: number | null, cost: NestCost, profile: MachineProfile, baseline: Baseline): NestEstimate {
  const base: NestEstimate = { profile: profile.name, baseline, hostSeconds: null, deviceSeconds: null, speedup: null, bound: null };
  if (iterations === null) return base;
  const w = { iterations, cost, parallel: true };
  // A nest that moves and computes nothing (zero trips, or only index work) has no speedup to give.
  if (hostSeconds(w, profile, baseline) === 0) return { ...base, hostSeconds: 0 };
  const launch = (c: Case): number => profile.device.launchSeconds * EFFICIENCY.launch[c];
  const speedup = {} as Spread;
  for (const c of CASES) {
    const dev = deviceKernel(w, profile, c).seconds + launch(c);
    speedup[c] = dev > 0 ? hostSeconds(w, profile, baseline, c) / dev : 1;
  }
  const dev = deviceKernel(w, profile);
  const bound: Bound = launch('expected') > dev.seconds ? 'launch' : dev.bound;
  return { ...base, hostSeconds: hostSeconds(w, profile, baseline), deviceSeconds: dev.seconds + launch('expected'), speedup, bound };
}
