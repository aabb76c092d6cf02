/**
 * Throughput and cost of many independent runs (a parameter sweep, or one iteration of an
 * inversion), from the step work of one run:
 *
 * - host nodes: k runs packed one per core share the node's bandwidth, each getting
 *   min(core bandwidth, node bandwidth / k); packing pays until the node bandwidth saturates.
 * - device nodes: each device holds floor(device memory / resident bytes) runs at once; they
 *   share its bandwidth, so a bandwidth-bound run gains nothing from sharing but loses nothing.
 * - a mixed pool finishes an iteration when its last run finishes: runs go greedily to the slot
 *   that would finish them first, and the makespan is the last finish time.
 */
import type { MachineProfile } from '../machine/profiles';
import { CASES } from './efficiency';
import { type StepWork, deviceStepSeconds, hostStepSeconds } from './step';

export interface HostPacking {
  /** Runs per node at once (one per core). */
  runsAtOnce: number;
  /** Cores after which the node's bandwidth is the limit: ceil(node bandwidth / core bandwidth). */
  coresToSaturate: number;
  secondsPerRun: number;
  runsPerNodeHour: number;
  /** The same node running one run at a time on all its cores. */
  wholeNodeRunsPerNodeHour: number;
  costPerRun?: number;
}

export interface DevicePacking {
  runsPerDevice: number;
  secondsPerRun: number;
  runsPerNodeHour: number;
  costPerRun?: number;
}

export interface Plan {
  runs: number;
  steps: number;
  host: HostPacking;
  device: DevicePacking | null;
  pool?: PoolPlan;
}

export interface PoolPlan {
  hostNodes: number;
  deviceNodes: number;
  makespanSeconds: number;
  runsOnHost: number;
  runsOnDevice: number;
  /** The longest single run in the pool: an iteration waits at least this long. */
  slowestRunSeconds: number;
}

/** Host time of one run when `k` runs share a node, one per core. */
export function hostRunSeconds(w: StepWork, steps: number, p: MachineProfile, k: number): number {
  const share = Math.min(p.host.bandwidthCore, p.host.bandwidthNode / k);
  // One core's view of the profile, with the bandwidth it actually gets when k cores stream at once.
  const shared: MachineProfile = { ...p, host: { ...p.host, bandwidthCore: share } };
  return steps * hostStepSeconds(w, shared, 'core');
}

export function plan(w: StepWork, steps: number, p: MachineProfile, runs: number, residentBytes: number | null, pool?: { hostNodes: number; deviceNodes: number }): Plan {
  const cores = p.host.cores;
  const perRun = hostRunSeconds(w, steps, p, cores);
  const wholeNode = steps * hostStepSeconds(w, p, 'node');
  const host: HostPacking = {
    runsAtOnce: cores,
    coresToSaturate: Math.ceil(p.host.bandwidthNode / p.host.bandwidthCore),
    secondsPerRun: perRun,
    runsPerNodeHour: (cores * 3600) / perRun,
    wholeNodeRunsPerNodeHour: 3600 / wholeNode,
  };
  if (p.host.costPerNodeHour !== undefined) host.costPerRun = p.host.costPerNodeHour / host.runsPerNodeHour;
  let device: DevicePacking | null = null;
  const fits = residentBytes === null ? 1 : Math.floor(p.device.memoryBytes / residentBytes);
  if (fits >= 1) {
    const seconds = steps * deviceStepSeconds(w, p, 'node');
    device = { runsPerDevice: fits, secondsPerRun: seconds, runsPerNodeHour: (p.device.devicesPerNode * 3600) / seconds };
    if (p.device.costPerNodeHour !== undefined) device.costPerRun = p.device.costPerNodeHour / device.runsPerNodeHour;
  }
  const out: Plan = { runs, steps, host, device };
  if (pool) out.pool = makespan(runs, pool, host, device, p);
  return out;
}

/**
 * Greedy list scheduling of identical runs onto slots (host cores, devices): each run goes to the
 * slot where it would finish first. For identical jobs this is optimal per slot type and gives
 * the iteration time a mixed pool achieves.
 */
export function makespan(runs: number, pool: { hostNodes: number; deviceNodes: number }, host: HostPacking, device: DevicePacking | null, p: MachineProfile): PoolPlan {
  const slots: { free: number; seconds: number; kind: 'host' | 'device' }[] = [];
  for (let n = 0; n < pool.hostNodes; n++) for (let c = 0; c < host.runsAtOnce; c++) slots.push({ free: 0, seconds: host.secondsPerRun, kind: 'host' });
  if (device) for (let n = 0; n < pool.deviceNodes * p.device.devicesPerNode; n++) slots.push({ free: 0, seconds: device.secondsPerRun, kind: 'device' });
  let onHost = 0;
  let onDevice = 0;
  let slowest = 0;
  for (let r = 0; r < runs && slots.length > 0; r++) {
    let best = slots[0];
    for (const s of slots) if (s.free + s.seconds < best.free + best.seconds) best = s;
    best.free += best.seconds;
    slowest = Math.max(slowest, best.seconds);
    if (best.kind === 'host') onHost++;
    else onDevice++;
  }
  const makespanSeconds = slots.reduce((m, s) => Math.max(m, s.free), 0);
  return { hostNodes: pool.hostNodes, deviceNodes: pool.deviceNodes, makespanSeconds, runsOnHost: onHost, runsOnDevice: onDevice, slowestRunSeconds: slowest };
}

