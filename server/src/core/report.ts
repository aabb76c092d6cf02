/**
 * Builds the machine-readable report (shared/contracts/report.schema.json) from analyses.
 * Lines and columns become 1-based here and nowhere else in the core.
 */
import type { PlanFigures, TimeLoopPlans } from './port/plans';
import type { FileAnalysis, TimeLoopReport } from './analyze';
import type { Quantity } from './analysis/bindings';
import type { Finding } from './types';
import type { TimeLoopLedger } from './data/ledger';
import type { NestEstimate, Spread, StepEstimate } from './estimate/types';
import type { MachineProfile } from './machine/profiles';

export const TOOL_NAME = 'offload-ledger';
export const TOOL_VERSION = '0.1.0';

export interface JsonQuantity { value: number | null; expr: string; unbound?: string[] }

export function fileReport(a: FileAnalysis): Record<string, unknown> {
  return {
    path: a.path,
    language: a.language,
    directives: a.directiveFamilies,
    loops: a.nests.map((r) => {
      const n = r.nest;
      return {
        line: n.root.keywordRange.start.line + 1,
        endLine: n.root.range.end.line + 1,
        function: n.procedure.name,
        variables: n.variables,
        offloaded: !!n.offload,
        directive: n.offload?.family ?? null,
        iterations: jsonQuantity(r.iterations),
        flopsPerIteration: round(r.cost.flopsPerIteration),
        bytesPerIteration: { device: round(r.cost.bytes.device), host: round(r.cost.bytes.host) },
        arithmeticIntensity: intensityJson(r.cost.intensity),
        footprint: r.cost.footprints.map((f) => ({
          array: f.array,
          elementBytes: f.elementBytes,
          variables: f.variables,
          radius: f.radius,
          reads: f.reads,
          writes: f.writes,
          inPlace: f.inPlace,
          irregular: f.irregular,
        })),
        layerConditions: r.cost.traffic.layerChecks.map((c) => ({ variable: c.variable, bytes: c.bytes, budget: c.budget, holds: c.holds })),
        ...(n.procedure.assumptions ? { assumptions: n.procedure.assumptions } : {}),
        ...(r.estimate ? { estimate: nestEstimateJson(r.estimate) } : {}),
      };
    }),
    timeLoops: a.timeLoops.filter((t) => t.ledger).map((t) => ({
      ...timeLoopJson(t.ledger!), ...timeLoopWhy(t), ...(t.estimate ? { estimate: stepEstimateJson(t.estimate) } : {}), ...(t.plans ? { plans: plansJson(t.plans) } : {}),
    })),
    ...(a.notTimeLoops.length > 0
      ? { notTimeLoops: a.notTimeLoops.map((r) => ({ line: r.loop.keywordRange.start.line + 1, function: r.procedure.name, variable: r.loop.variable ?? '', reason: r.reason })) }
      : {}),
    findings: a.findings.map(jsonFinding),
    ...(a.notUnderstood.length > 0 ? { notUnderstood: a.notUnderstood } : {}),
  };
}

/**
 * Why the loop is the time loop, and how its steps are known: `stepsAtMost` when the count is an
 * upper bound (`while (err > tol && iter < iter_max)`), the step counter a while loop was read
 * with, and `marked` when the user named the loop. Additions to the schema's time-loop object.
 */
function timeLoopWhy(t: TimeLoopReport): Record<string, unknown> {
  const loop = t.timeLoop.loop;
  const c = loop.counter;
  return {
    ...(loop.tripCountIsBound ? { stepsAtMost: true } : {}),
    reason: t.timeLoop.reason,
    ...(t.timeLoop.marked ? { marked: t.timeLoop.marked } : {}),
    ...(c ? { counter: { name: c.name, line: c.incrementRange.start.line + 1, ...(c.boundText ? { bound: c.boundText } : {}), ...(c.otherExits.length > 0 ? { otherExits: c.otherExits } : {}) } } : {}),
  };
}

function timeLoopJson(l: TimeLoopLedger): Record<string, unknown> {
  return {
    line: l.loop.keywordRange.start.line + 1,
    endLine: l.loop.range.end.line + 1,
    function: l.procedure.name,
    variable: l.loop.variable ?? '',
    steps: jsonQuantity(l.steps),
    perStep: { toDevice: jsonQuantity(l.perStep.toDevice), toHost: jsonQuantity(l.perStep.toHost) },
    once: { toDevice: jsonQuantity(l.once.toDevice), toHost: jsonQuantity(l.once.toHost) },
    transfers: l.transfers.map((t) => ({
      line: t.range.start.line + 1,
      ...(t.origin ? { file: t.origin } : {}),
      ...(t.via.length > 0 ? { via: t.via.map((r) => r.start.line + 1) } : {}),
      array: t.array,
      direction: t.direction,
      bytes: jsonQuantity(t.bytes),
      everySteps: t.everySteps,
      cause: t.cause,
      ...(t.scalar ? { scalar: true } : {}),
    })),
    blockingTransfersPerStep: round(l.transfersPerStep),
    dataRegion: l.dataRegion
      ? {
          clauses: l.dataRegion.clauses.map((c) => (c.section ? { array: c.array, clause: c.clause, section: c.section } : { array: c.array, clause: c.clause })),
          edits: l.dataRegion.edits,
        }
      : null,
    residentBytes: l.residentBytes,
  };
}

function spreadJson(s: Spread | null): Record<string, number> | undefined {
  return s ? { low: round(s.low), expected: round(s.expected), high: round(s.high) } : undefined;
}

function nestEstimateJson(e: NestEstimate): Record<string, unknown> {
  const out: Record<string, unknown> = { hostSeconds: e.hostSeconds === null ? null : round(e.hostSeconds), deviceSeconds: e.deviceSeconds === null ? null : round(e.deviceSeconds) };
  if (e.speedup) out.speedup = spreadJson(e.speedup);
  if (e.bound) out.bound = e.bound;
  return out;
}

function stepEstimateJson(e: StepEstimate): Record<string, unknown> {
  const r = (x: number | null): number | null => (x === null ? null : round(x));
  const out: Record<string, unknown> = {
    hostSeconds: r(e.hostSeconds), deviceSeconds: r(e.deviceSeconds), transferSeconds: r(e.transferSeconds),
    kernelSeconds: r(e.kernelSeconds), launchSeconds: r(e.launchSeconds), hostLeftSeconds: r(e.hostLeftSeconds),
    residentBytes: e.residentBytes, runsPerDevice: e.runsPerDevice, baseline: e.baseline,
  };
  if (e.speedup) out.speedup = spreadJson(e.speedup);
  if (e.bound) out.bound = e.bound;
  if (e.withRegion) out.withRegion = { deviceSeconds: r(e.withRegion.deviceSeconds), speedup: spreadJson(e.withRegion.speedup), bound: e.withRegion.bound };
  return out;
}

function plansJson(p: TimeLoopPlans): Record<string, unknown> {
  const r = (x: number | null): number | null => (x === null ? null : round(x));
  const fig = (f: PlanFigures): Record<string, unknown> => ({
    bytesPerStep: f.bytesPerStep, transfersPerStep: round(f.transfersPerStep), stepSeconds: r(f.stepSeconds),
    speedup: f.speedup ? spreadJson(f.speedup) : null, bound: f.bound, residentBytes: f.residentBytes, fitsDeviceMemory: f.fits,
  });
  return {
    model: p.family, baseline: p.baseline, hostStepSeconds: r(p.hostStepSeconds), hostShare: p.hostShare === null ? null : round(p.hostShare),
    naive: fig(p.naive), resident: fig(p.resident),
    offloaded: p.offloaded.map((o) => ({ line: o.line, function: o.procedure, collapse: o.collapse, clauses: o.clauses })),
    onHost: p.onHost.map((h) => ({ line: h.line, function: h.procedure, reason: h.reason })),
    updates: p.updates,
  };
}

/** The machine profile as the report's `machine` object: names, the figures used, and their sources. */
export function machineJson(p: MachineProfile): Record<string, unknown> {
  return { name: p.name, host: p.host, device: p.device, link: p.link };
}

/** The models behind every time and speedup figure, said once wherever figures are shown. */
export const ESTIMATE_MODEL = 'roofline per loop nest (bytes and flops against the profile\'s bandwidths and peaks, layer conditions for reuse); step time = device kernels + launches + link transfers + host code left in the loop; low/high from documented efficiency bounds (docs/cost-model.md)';
export const ESTIMATE_CAUTION = 'Estimates, not measurements: the profile\'s figures are a technology class, not your machine. Measure on the target machine to decide; `offload-ledger verify` measures the bytes with separate memories.';

export function report(analyses: FileAnalysis[]): Record<string, unknown> {
  const machine = analyses[0]?.profile;
  return {
    tool: { name: TOOL_NAME, version: TOOL_VERSION }, ...(machine ? { machine: machineJson(machine) } : {}),
    estimates: { model: ESTIMATE_MODEL, ...(machine ? { profile: machine.name } : {}), caution: ESTIMATE_CAUTION },
    files: analyses.map(fileReport),
  };
}

export function jsonQuantity(q: Quantity): JsonQuantity {
  return q.unbound && q.unbound.length > 0 ? { value: q.value, expr: q.expr, unbound: q.unbound } : { value: q.value, expr: q.expr };
}

export function jsonFinding(f: Finding): Record<string, unknown> {
  const out: Record<string, unknown> = {
    code: f.code,
    severity: f.severity,
    line: f.range.start.line + 1,
    column: f.range.start.col + 1,
    endLine: f.range.end.line + 1,
    endColumn: f.range.end.col + 1,
    message: f.message,
  };
  if (f.array) out.array = f.array;
  // The other end of a finding that spans two files (the call in the time loop, the directive in the callee).
  if (f.related && f.related.length > 0) out.related = f.related.map((r) => ({ path: r.path, line: r.range.start.line + 1, column: r.range.start.col + 1, message: r.message }));
  return out;
}

/** Six significant digits: the inputs are estimates, and stable output keeps diffs readable. */
function round(x: number): number {
  return Number(x.toPrecision(6));
}

function intensityJson(i: { device?: number; host?: number }): Record<string, number> {
  const out: Record<string, number> = {};
  if (i.device !== undefined) out.device = round(i.device);
  if (i.host !== undefined) out.host = round(i.host);
  return out;
}
