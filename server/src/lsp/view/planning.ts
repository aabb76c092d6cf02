/**
 * The planning view's data for one document: the CLI's JSON report of the file (report.ts, so
 * the editor and the CLI never disagree) with the estimates the core attached, when it did, and
 * what the planning report draws beyond the JSON report: each nest's share of its step (from the
 * core's step work and roofline times), the transfers once the suggested region is applied (the
 * core's what-if, with its lines mapped back to the user's file), the findings with the bytes per
 * step they name, and the machine's roofs. Every figure here is the core's; this only regroups.
 */
import type { FileAnalysis, NestReport, TimeLoopReport } from '../../core/analyze';
import type { NestCost } from '../../core/cost/ledger';
import type { TransferReport } from '../../core/data/ledger';
import type { LineEdit } from '../../core/data/edits';
import { deviceKernel, hostSeconds, isSinglePrecision } from '../../core/estimate/nest';
import { type StepWork, deviceStepSeconds, hostStepSeconds, isParallelNest, stepWork } from '../../core/estimate/step';
import type { Baseline } from '../../core/estimate/types';
import type { MachineProfile } from '../../core/machine/profiles';
import { fileReport, jsonQuantity } from '../../core/report';
import type { PlanningFile, PlanningFinding, PlanningMachine, PlanningNestShare, PlanningStep, ReportLoop, ReportTimeLoop, ReportTransfer } from '../protocol';
import { nestEstimate, stepEstimate } from './estimates';

export function buildPlanning(a: FileAnalysis, uri: string, check: () => void = () => undefined): PlanningFile {
  const r = fileReport(a) as { path: string; language: string; loops: ReportLoop[]; timeLoops: ReportTimeLoop[]; findings: PlanningFinding[] };
  const loops = r.loops.map((l, k) => {
    const est = nestEstimate(a.nests[k]);
    const withEstimate = l.estimate || !est ? l : { ...l, estimate: est };
    const precision: 'single' | 'double' = isSinglePrecision(a.nests[k].cost) ? 'single' : 'double';
    return { ...withEstimate, precision, parallel: isParallelNest(a.nests[k]) };
  });
  const baseline: Baseline = a.nests.find((n) => n.estimate)?.estimate?.baseline ?? a.timeLoops.find((t) => t.estimate)?.estimate?.baseline ?? 'node';
  const reported = a.timeLoops.filter((t) => t.ledger);
  const all = a.externalNests.length > 0 ? [...a.nests, ...a.externalNests] : a.nests;
  // Every suggested edit of the file went into the one what-if analysis, so lines map back through all of them.
  const edits = reported.flatMap((t) => t.ledger!.dataRegion?.edits ?? []);
  // A time loop's step is kept with its report (see keptStep); the edits map lines back for every loop.
  const stepKey = JSON.stringify([baseline, a.profile.name, a.path, edits]);
  const timeLoops = r.timeLoops.map((t, k) => {
    if ((k & 15) === 15) check();
    const est = reported[k] ? stepEstimate(reported[k]) : undefined;
    const withEstimate = t.estimate || !est ? t : { ...t, estimate: est };
    const step = reported[k] ? keptStep(reported[k], stepKey, () => planningStep(a, reported[k], all, edits, baseline)) : undefined;
    return step ? { ...withEstimate, step } : withEstimate;
  });
  return {
    uri,
    path: r.path,
    language: r.language,
    loops,
    timeLoops,
    findings: findingsWithBytes(r.findings, reported),
    machine: machineRoofs(a.profile, baseline),
  };
}

export function hasEstimates(a: FileAnalysis): boolean {
  return a.nests.some((n) => !!nestEstimate(n)) || a.timeLoops.some((t) => !!stepEstimate(t));
}

/** The roofs of the active profile, as its figures are written (profiles.ts), for the baseline in force. */
export function machineRoofs(p: MachineProfile, baseline: Baseline): PlanningMachine {
  const h = p.host;
  const single = h.peakFlopsNodeSingle ?? 2 * h.peakFlopsNode;
  return {
    name: p.name,
    baseline,
    host: { name: h.name, cores: h.cores, bandwidthNode: h.bandwidthNode, bandwidthCore: h.bandwidthCore, peakDouble: h.peakFlopsNode, peakSingle: single },
    device: { name: p.device.name, bandwidth: p.device.bandwidth, peakDouble: p.device.peakFlops, peakSingle: p.device.peakFlopsSingle },
    link: { name: p.link.name, bandwidth: p.link.bandwidth },
  };
}

/**
 * The planning step of a time loop, kept with its report: an edit re-analysed by parts
 * (core/incremental.ts) keeps the reports of the procedures it did not touch, with every nest and
 * ledger they read, so their steps still hold while the baseline, the profile and the file's
 * suggested edits (which map the what-if's lines back) are the same (`key`).
 */
const keptSteps = new WeakMap<TimeLoopReport, { key: string; step: PlanningStep | undefined }>();
function keptStep(t: TimeLoopReport, key: string, make: () => PlanningStep | undefined): PlanningStep | undefined {
  const hit = keptSteps.get(t);
  if (hit && hit.key === key) return hit.step;
  const step = make();
  keptSteps.set(t, { key, step });
  return step;
}

/** Where a nest is reported: its file (another file's for a kernel the step calls there) and its 1-based line. */
function nestPlace(a: FileAnalysis, n: NestReport, lineOf: (line: number) => number = (l) => l): { path: string; line: number } {
  const line = n.nest.root.keywordRange.start.line + 1;
  return n.nest.procedure.origin ? { path: n.nest.procedure.origin, line } : { path: a.path, line: lineOf(line) };
}


/** Nests by their cost record, made once per list (every time loop of a file reads the same lists). */
const costIndexes = new WeakMap<readonly NestReport[], Map<NestReport['cost'], NestReport>>();
function costIndex(list: readonly NestReport[]): Map<NestReport['cost'], NestReport> {
  let m = costIndexes.get(list);
  if (!m) costIndexes.set(list, (m = new Map(list.map((n) => [n.cost, n]))));
  return m;
}

/** Seconds per step of each nest the step runs, on the device (kernels) or the host (code left in the loop, or every nest for the host-only step). */
function secondsByNest(w: StepWork, p: MachineProfile, baseline: Baseline, hostOnly: boolean): Map<NestCost, number> {
  const out = new Map<NestCost, number>();
  const add = (cost: NestCost, s: number): void => void out.set(cost, (out.get(cost) ?? 0) + s);
  for (const k of w.kernels) for (const x of k.work) add(x.cost, k.perStep * (hostOnly ? hostSeconds(x, p, baseline) : deviceKernel(x, p).seconds));
  for (const h of w.host) for (const x of h.work) add(x.cost, h.perStep * hostSeconds(x, p, baseline));
  return out;
}

function planningStep(a: FileAnalysis, t: TimeLoopReport, all: NestReport[], edits: LineEdit[], baseline: Baseline): PlanningStep | undefined {
  const w = stepWork(t.ledger!, all);
  if (!w) return undefined;
  const p = a.profile;
  const byCost = costIndex(all);
  const deviceStep = deviceStepSeconds(w, p, baseline);
  const hostStep = hostStepSeconds(w, p, baseline);
  const device = secondsByNest(w, p, baseline, false);
  const host = secondsByNest(w, p, baseline, true);
  const lineBack = editedLineToOriginal(edits);
  // The what-if analysis has nests of its own; they are matched to these by file and line.
  const after = t.withRegion?.work ? { work: t.withRegion.work, nests: costIndex(t.withRegion.nests) } : undefined;
  const afterShare = new Map<string, number>();
  if (after) {
    const total = deviceStepSeconds(after.work, p, baseline);
    for (const [cost, s] of secondsByNest(after.work, p, baseline, false)) {
      const n = after.nests.get(cost);
      if (!n) continue;
      const at = nestPlace(a, n, (l) => lineBack(l).line);
      const key = `${at.path}:${at.line}`;
      afterShare.set(key, (afterShare.get(key) ?? 0) + (total > 0 ? s / total : 0));
    }
  }
  const nests: PlanningNestShare[] = [];
  for (const [cost, s] of device) {
    const n = byCost.get(cost);
    if (!n) continue;
    const at = nestPlace(a, n);
    nests.push({
      ...at,
      offloaded: !!n.nest.offload,
      parallel: isParallelNest(n),
      secondsPerStep: s,
      share: deviceStep > 0 ? s / deviceStep : 0,
      hostShare: hostStep > 0 ? (host.get(cost) ?? 0) / hostStep : 0,
      shareWithRegion: after ? afterShare.get(`${at.path}:${at.line}`) ?? 0 : null,
    });
  }
  const flops = [...w.kernels, ...w.host].reduce((s, k) => s + k.perStep * k.work.reduce((x, y) => x + y.cost.flopsPerIteration * y.iterations, 0), 0);
  const linkBytes = (x: StepWork): number => x.transfers.reduce((s, y) => s + y.bytes * y.perStep, 0);
  return {
    flops,
    linkBytes: linkBytes(w),
    linkBytesWithRegion: after ? linkBytes(after.work) : null,
    withRegionSeconds: after ? stepTerms(after.work, p, baseline) : null,
    nests,
    transfersWithRegion: t.withRegion ? t.withRegion.ledger.transfers.map((x) => transferJson(x, lineBack)) : null,
  };
}

/**
 * One step's terms from the core's step model: each term is the device step of the part of the
 * work it prices (a kernels-only step is kernels + launches; kernel time is the nests' roofline).
 */
function stepTerms(w: StepWork, p: MachineProfile, baseline: Baseline): { kernels: number; launches: number; transfers: number; host: number } {
  const none = { kernels: [], host: [], transfers: [] };
  const kernelsAndLaunches = deviceStepSeconds({ ...none, kernels: w.kernels }, p, baseline);
  const kernels = w.kernels.reduce((s, k) => s + k.perStep * k.work.reduce((x, y) => x + deviceKernel(y, p).seconds, 0), 0);
  return {
    kernels,
    launches: Math.max(0, kernelsAndLaunches - kernels),
    transfers: deviceStepSeconds({ ...none, transfers: w.transfers }, p, baseline),
    host: deviceStepSeconds({ ...none, host: w.host }, p, baseline),
  };
}

/** A transfer of the what-if ledger as the JSON report writes one, with lines of the user's file. */
function transferJson(t: TransferReport, lineBack: (l: number) => { line: number; inserted: boolean }): ReportTransfer & { inserted?: boolean } {
  // A directive in another file was not edited; lines in this file move back past the inserted ones.
  const at = t.origin ? { line: t.range.start.line + 1, inserted: false } : lineBack(t.range.start.line + 1);
  return {
    line: at.line,
    ...(t.origin ? { file: t.origin } : {}),
    ...(t.via.length > 0 ? { via: t.via.map((v) => lineBack(v.start.line + 1).line) } : {}),
    array: t.array,
    direction: t.direction,
    bytes: jsonQuantity(t.bytes),
    everySteps: t.everySteps,
    cause: t.cause,
    ...(at.inserted ? { inserted: true } : {}),
  };
}

/**
 * Maps a 1-based line of the text with the suggested insertions (applyLineEdits: each edit's text
 * goes before its 1-based line of the original) back to the original: a line that was inserted
 * maps to the line it was inserted before.
 */
export function editedLineToOriginal(edits: readonly LineEdit[]): (line: number) => { line: number; inserted: boolean } {
  const inserted = new Map<number, number>();
  for (const e of edits) inserted.set(e.line, (inserted.get(e.line) ?? 0) + e.text.split('\n').length);
  const blocks = [...inserted].sort((x, y) => x[0] - y[0]);
  return (line) => {
    let offset = 0;
    for (const [before, count] of blocks) {
      const start = before + offset;
      if (line < start) break;
      if (line < start + count) return { line: before, inserted: true };
      offset += count;
    }
    return { line: line - offset, inserted: false };
  };
}

/** The bytes per step a transfer finding names: its transfers, keyed where the finding is placed (ledger.ts transferFindings). */
function findingsWithBytes(findings: PlanningFinding[], timeLoops: TimeLoopReport[]): PlanningFinding[] {
  const bytes = new Map<string, number>();
  const resident = new Map<string, number>();
  for (const t of timeLoops) {
    for (const x of t.ledger!.transfers) {
      if (x.bytes.value === null) continue;
      const place = x.origin && x.via[0] ? x.via[0] : x.at ?? x.range;
      const key = `${place.start.line + 1}:${x.array}`;
      bytes.set(key, (bytes.get(key) ?? 0) + x.bytes.value / x.everySteps);
      // What one data region removes at a line (a grouped missing-region finding names those lines as related).
      if (!x.scalar && x.cause !== 'update' && !x.origin) {
        const line = `${place.start.line + 1}`;
        resident.set(line, (resident.get(line) ?? 0) + x.bytes.value / x.everySteps);
      }
    }
  }
  return findings.map((f) => {
    const transfer = f.code === 'transfer-in-time-loop' || f.code === 'implicit-transfer';
    const lines = !f.array && transfer && f.related && f.related.length > 0 ? [...new Set(f.related.map((r) => `${r.line}`))] : [];
    const b = f.array && transfer
      ? bytes.get(`${f.line}:${f.array}`)
      : lines.length > 0 ? lines.reduce((sum, line) => sum + (resident.get(line) ?? 0), 0) : undefined;
    const { code, severity, line, message, array } = f;
    return { code, severity, line, message, ...(array ? { array } : {}), ...(b !== undefined ? { bytesPerStep: b } : {}) };
  });
}
