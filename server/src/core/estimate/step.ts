/**
 * Time per step of a time loop, host-only versus offloaded:
 *
 *   host step   = every nest of the step run on the host baseline
 *   device step = device kernels + kernel launches + link transfers (latency + bytes / link
 *                 bandwidth, each divided by how many steps it recurs over) + the host code left
 *                 in the loop (host nests) — Amdahl's serial part
 *
 * The speedup is a range over the efficiency bounds in efficiency.ts, and the bound is the
 * largest term of the expected device step.
 */
import * as S from '../symbolic';
import type { LoopStmt, Stmt } from '../model/program';
import { walkStatements } from '../model/values';
import { isLoopDirective } from '../model/directives';
import type { NestReport } from '../analyze';
import { nestIterations } from '../analysis/nests';
import type { TimeLoopLedger } from '../data/ledger';
import type { Execution } from '../data/interpreter';
import type { MachineProfile } from '../machine/profiles';
import { CASES, type Case, EFFICIENCY } from './efficiency';
import { type Work, deviceKernel, hostSeconds } from './nest';
import type { Baseline, Bound, Spread, StepEstimate } from './types';

/** The work of one step, numeric, so that planners can re-time it under other bandwidths. */
export interface StepWork {
  /** Kernels: executions per step and the work of each. */
  kernels: { perStep: number; work: Work[] }[];
  /** Host-only nests left in the loop. */
  host: { perStep: number; work: Work[] }[];
  /** Transfers: bytes and how many per step (1/K for every-K transfers). */
  transfers: { bytes: number; perStep: number }[];
}

/** Nests by their root loop, built once per list (a file has one list; step work asks per time loop). */
const rootIndex = new WeakMap<NestReport[], Map<LoopStmt, NestReport>>();

export function stepWork(ledger: TimeLoopLedger, nests: NestReport[]): StepWork | null {
  let byRoot = rootIndex.get(nests);
  if (!byRoot) {
    byRoot = new Map(nests.map((n) => [n.nest.root, n]));
    rootIndex.set(nests, byRoot);
  }
  const roots = byRoot;
  const works = (e: Execution): Work[] | null => {
    const out: Work[] = [];
    let ok = true;
    walkStatements([e.stmt], (s: Stmt) => {
      const n = s.kind === 'loop' ? roots.get(s) : undefined;
      if (!n) return true;
      const it = S.evaluate(nestIterations(n.nest).expr, e.bindings);
      if (it === undefined) ok = false;
      else out.push({ iterations: it, cost: n.cost, parallel: isParallelNest(n) });
      return false;
    });
    return ok ? out : null;
  };
  const perStep = (e: Execution): number | null => {
    const m = S.evaluate(e.multiplier, e.bindings);
    return m === undefined ? null : m / e.everySteps;
  };
  const kernels: StepWork['kernels'] = [];
  const host: StepWork['host'] = [];
  for (const [list, out] of [[ledger.run.kernels, kernels], [ledger.run.hostNests, host]] as const) {
    for (const e of list) {
      const w = works(e);
      const p = perStep(e);
      if (!w || p === null) return null;
      out.push({ perStep: p, work: w });
    }
  }
  const transfers: StepWork['transfers'] = [];
  for (const t of ledger.transfers) {
    if (t.bytes.value === null) return null;
    transfers.push({ bytes: t.bytes.value, perStep: 1 / t.everySteps });
  }
  return { kernels, host, transfers };
}

/** A nest some directive runs in parallel: offloaded, or a host OpenMP/OpenACC loop directive on its loops. */
export function isParallelNest(n: NestReport): boolean {
  if (n.nest.offload) return true;
  let found = false;
  walkStatements([n.nest.root], (s) => {
    if (s.directives.some(isLoopDirective)) found = true;
  });
  return found;
}

interface Terms {
  kernel: number;
  kernelBound: 'memory' | 'compute';
  launch: number;
  transfer: number;
  host: number;
}

function deviceTerms(w: StepWork, p: MachineProfile, baseline: Baseline, c: Case): Terms {
  let kernel = 0;
  let memory = 0;
  let compute = 0;
  let launch = 0;
  for (const k of w.kernels) {
    for (const work of k.work) {
      const t = deviceKernel(work, p, c);
      kernel += k.perStep * t.seconds;
      if (t.bound === 'memory') memory += k.perStep * t.seconds;
      else compute += k.perStep * t.seconds;
    }
    launch += k.perStep * Math.max(1, k.work.length) * p.device.launchSeconds * EFFICIENCY.launch[c];
  }
  const transfer = w.transfers.reduce((s, t) => s + t.perStep * (p.link.latencySeconds + t.bytes / (p.link.bandwidth * EFFICIENCY.link[c])), 0);
  const host = w.host.reduce((s, h) => s + h.perStep * h.work.reduce((a, x) => a + hostSeconds(x, p, baseline, c), 0), 0);
  return { kernel, kernelBound: compute > memory ? 'compute' : 'memory', launch, transfer, host };
}

export function hostStepSeconds(w: StepWork, p: MachineProfile, baseline: Baseline, c: Case = 'expected'): number {
  let total = 0;
  for (const list of [w.kernels, w.host]) {
    for (const k of list) total += k.perStep * k.work.reduce((a, x) => a + hostSeconds(x, p, baseline, c), 0);
  }
  return total;
}

export function deviceStepSeconds(w: StepWork, p: MachineProfile, baseline: Baseline, c: Case = 'expected'): number {
  const t = deviceTerms(w, p, baseline, c);
  return t.kernel + t.launch + t.transfer + t.host;
}

function boundOf(t: Terms): Bound {
  const terms: [Bound, number][] = [[t.kernelBound, t.kernel], ['transfer', t.transfer], ['launch', t.launch], ['host', t.host]];
  return terms.sort((a, b) => b[1] - a[1])[0][0];
}

export function speedupOf(w: StepWork, p: MachineProfile, baseline: Baseline): Spread {
  const out = {} as Spread;
  for (const c of CASES) {
    const dev = deviceStepSeconds(w, p, baseline, c);
    out[c] = dev > 0 ? hostStepSeconds(w, p, baseline, c) / dev : 1;
  }
  return out;
}

export function stepEstimate(ledger: TimeLoopLedger, nests: NestReport[], p: MachineProfile, baseline: Baseline, withRegion?: StepWork | null): StepEstimate {
  const w = stepWork(ledger, nests);
  const residentBytes = ledger.residentBytes;
  const runsPerDevice = residentBytes && residentBytes > 0 ? Math.floor(p.device.memoryBytes / residentBytes) : null;
  const empty: StepEstimate = {
    profile: p.name, baseline, hostSeconds: null, deviceSeconds: null, kernelSeconds: null, launchSeconds: null,
    transferSeconds: null, hostLeftSeconds: null, speedup: null, bound: null, residentBytes, runsPerDevice,
  };
  if (!w) return empty;
  const t = deviceTerms(w, p, baseline, 'expected');
  const out: StepEstimate = {
    ...empty,
    hostSeconds: hostStepSeconds(w, p, baseline),
    deviceSeconds: t.kernel + t.launch + t.transfer + t.host,
    kernelSeconds: t.kernel,
    launchSeconds: t.launch,
    transferSeconds: t.transfer,
    hostLeftSeconds: t.host,
    speedup: speedupOf(w, p, baseline),
    bound: boundOf(t),
  };
  if (withRegion) {
    const r = deviceTerms(withRegion, p, baseline, 'expected');
    out.withRegion = { deviceSeconds: r.kernel + r.launch + r.transfer + r.host, speedup: speedupOf(withRegion, p, baseline), bound: boundOf(r) };
  }
  return out;
}
