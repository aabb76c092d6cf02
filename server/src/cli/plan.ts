/** `offload-ledger plan`: throughput and cost of many independent runs, per time loop. */
import type { FileAnalysis } from '../core/analyze';
import { stepWork } from '../core/estimate/step';
import { type Plan, plan } from '../core/estimate/throughput';
import type { PlanArgs } from './args';
import { seconds } from './text';

export interface PlanResult {
  path: string;
  line: number;
  function: string;
  plan: Plan | null;
  reason?: string;
}

export function planFiles(analyses: FileAnalysis[], args: PlanArgs): PlanResult[] {
  const out: PlanResult[] = [];
  for (const a of analyses) {
    for (const t of a.timeLoops) {
      const l = t.ledger;
      if (!l) continue;
      const base = { path: a.path, line: l.loop.keywordRange.start.line + 1, function: l.procedure.name };
      const w = stepWork(l, a.externalNests.length > 0 ? [...a.nests, ...a.externalNests] : a.nests);
      const steps = l.steps.value;
      if (!w || steps === null) {
        out.push({ ...base, plan: null, reason: `sizes are unbound (${[...(l.steps.unbound ?? []), ...(l.perStep.toDevice.unbound ?? [])].join(', ') || 'a loop bound'}); bind them with --bind` });
        continue;
      }
      out.push({ ...base, plan: plan(w, steps, a.profile, args.runs, l.residentBytes, args.pool) });
    }
  }
  return out;
}

const perHour = (x: number): string => (x >= 100 ? x.toFixed(0) : x >= 10 ? x.toFixed(1) : x.toFixed(2));

export function formatPlans(results: PlanResult[], profileName: string): string {
  const lines: string[] = [];
  for (const r of results) {
    lines.push(`${r.path}:${r.line} time loop in ${r.function}`);
    if (!r.plan) {
      lines.push(`  no plan: ${r.reason}`);
      continue;
    }
    const p = r.plan;
    lines.push(`  ${p.runs} runs of ${p.steps.toLocaleString('en-US')} steps on profile ${profileName}`);
    lines.push(`  host node, one run per core (${p.host.runsAtOnce} at once; bandwidth saturates at ${p.host.coresToSaturate} cores): ${seconds(p.host.secondsPerRun)} per run, ${perHour(p.host.runsPerNodeHour)} runs per node-hour${p.host.costPerRun !== undefined ? `, ${p.host.costPerRun.toFixed(4)} per run` : ''}`);
    lines.push(`  host node, one run at a time on all cores: ${perHour(p.host.wholeNodeRunsPerNodeHour)} runs per node-hour (packing gains ${(p.host.runsPerNodeHour / p.host.wholeNodeRunsPerNodeHour).toFixed(2)}×)`);
    if (p.device) {
      lines.push(`  device node: ${seconds(p.device.secondsPerRun)} per run, ${p.device.runsPerDevice} run${p.device.runsPerDevice === 1 ? '' : 's'} fit per device, ${perHour(p.device.runsPerNodeHour)} runs per node-hour${p.device.costPerRun !== undefined ? `, ${p.device.costPerRun.toFixed(4)} per run` : ''}`);
    } else {
      lines.push('  device node: one run does not fit in device memory');
    }
    const hostBatch = p.runs / p.host.runsPerNodeHour;
    lines.push(`  batch of ${p.runs}: ${hostBatch.toFixed(2)} host node-hours${p.device ? `, ${(p.runs / p.device.runsPerNodeHour).toFixed(2)} device node-hours` : ''}`);
    if (p.pool) {
      lines.push(`  pool of ${p.pool.hostNodes} host + ${p.pool.deviceNodes} device nodes: the batch takes ${seconds(p.pool.makespanSeconds)} (${p.pool.runsOnHost} runs on hosts, ${p.pool.runsOnDevice} on devices); its slowest run alone takes ${seconds(p.pool.slowestRunSeconds)}`);
    }
    if (p.host.costPerRun === undefined && p.device?.costPerRun === undefined) lines.push('  cost per run: give costPerNodeHour in the machines file to see it');
  }
  lines.push('Estimates from the roofline and link model of the chosen profile; measure on the target machines before committing compute budgets.');
  return lines.join('\n');
}
