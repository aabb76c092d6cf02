/**
 * Builds the machine-readable report (shared/contracts/report.schema.json) from analyses.
 * Lines and columns become 1-based here and nowhere else in the core.
 */
import type { FileAnalysis } from './analyze';
import type { Quantity } from './analysis/bindings';
import type { Finding } from './types';

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
      };
    }),
    // Time loops get their per-step ledger from the data-environment analysis; until that exists
    // they are not reported, because zero bytes per step would be a claim, not a gap.
    timeLoops: [],
    findings: a.findings.map(jsonFinding),
  };
}

export function report(analyses: FileAnalysis[]): Record<string, unknown> {
  return { tool: { name: TOOL_NAME, version: TOOL_VERSION }, files: analyses.map(fileReport) };
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
