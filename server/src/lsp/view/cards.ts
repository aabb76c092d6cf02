/**
 * The hover cards, as Markdown: one for a loop nest, one for a time loop, one for an array.
 * Each card states the figures the core computed and the assumptions behind them (profile,
 * baseline, size bindings); a figure the core did not compute is shown as absent, never guessed.
 */
import type { NestReport, TimeLoopReport } from '../../core/analyze';
import { type RejectedLoop, nestIterations, nestVariablesText } from '../../core/analysis/nests';
import type { LoopStmt } from '../../core/model/program';
import { TIME_LOOP_ANNOTATION } from '../../core/frontend/annotations';
import { userKeys } from '../../core/analysis/bindings';
import type { TransferReport } from '../../core/data/ledger';
import type { NestEstimate, StepEstimate } from '../../core/estimate/types';
import type { ViewContext, ArraySize } from './context';
import { boundText, bytesMd, codeSpan, countMd, formatBytes, formatFactor, formatIntensity, formatPerIteration, formatSeconds, formatSpeedup } from './format';
import { STEP_TERMS } from '../../core/estimate/terms';

export interface CardSettings {
  profileName: string;
  baseline: string;
}

const FAMILY: Record<string, string> = { openacc: 'OpenACC', openmp: 'OpenMP' };

function table(rows: [string, string][]): string {
  return ['| | |', '|:--|:--|', ...rows.map(([k, v]) => `| ${k} | ${v.replace(/\|/g, '\\|')} |`)].join('\n');
}

function assumptions(ctx: ViewContext, symbols: [string, number | undefined][], s: CardSettings, estimated: boolean): string {
  const bound = symbols.filter(([, v]) => v !== undefined).map(([k, v]) => `${k} = ${v!.toLocaleString('en-US')}${[...ctx.userBindings.keys()].some((u) => userKeys(ctx.analysis.model, u).includes(k)) ? ' (setting)' : ''}`);
  const unbound = symbols.filter(([, v]) => v === undefined).map(([k]) => `\`${k}\``);
  // The baseline the analysis used (the setting may be `auto`: one core for serial code).
  const baseline = ctx.analysis.baseline;
  const parts = [estimated ? `profile \`${s.profileName}\`, baseline ${baseline === 'core' ? 'one host core' : 'the whole host node'}${ctx.analysis.baselineReason ? ` (${ctx.analysis.baselineReason.split(':')[0]})` : ''}` : `no machine estimate in this version (profile \`${s.profileName}\` selected)`];
  if (bound.length > 0) parts.push(`sizes ${bound.join(', ')}`);
  if (unbound.length > 0) parts.push(`unbound ${unbound.join(', ')} (bind with \`offloadLedger.sizeBindings\`)`);
  return `*Assumptions:* ${parts.join('; ')}.${estimated ? ' _Estimates from the roofline and step models with efficiency bounds; measure on the target machine to decide._' : ''}`;
}

export function nestCard(r: NestReport, est: NestEstimate | undefined, ctx: ViewContext, s: CardSettings): string {
  const n = r.nest;
  const line = n.root.keywordRange.start.line + 1;
  const where = n.offload ? `offloaded (${FAMILY[n.offload.family] ?? n.offload.family} \`${n.offload.construct}\`)` : 'runs on the host';
  const rows: [string, string][] = [
    ['iterations', countMd(r.iterations) + (r.approximate ? ' (approximate: triangular bounds)' : '')],
    ['flops / iteration', formatPerIteration(r.cost.flopsPerIteration)],
    ['bytes / iteration', `${formatPerIteration(r.cost.bytes.device)} device · ${formatPerIteration(r.cost.bytes.host)} host`],
    ['arithmetic intensity', `${formatIntensity(r.cost.intensity.device)} device · ${formatIntensity(r.cost.intensity.host)} host (flop/byte)`],
  ];
  // What the model could not read here, and what it does to the figures above.
  for (const x of ctx.notUnderstoodAt(line)) rows.push([`not understood (line ${x.line})`, `\`${x.what.replace(/`/g, '')}\`: ${x.effect}`]);
  if (est) {
    const versus = est.baseline === 'core' ? 'one core' : 'the whole node';
    rows.push([`host time (${versus})`, formatSeconds(est.hostSeconds)], ['device time (one kernel, launch included, no transfers)', formatSeconds(est.deviceSeconds)]);
    rows.push([n.offload ? 'speedup' : 'speedup if offloaded', est.speedup ? `${formatSpeedup(est.speedup)} (expected ${formatFactor(est.speedup.expected)}×), bound by ${boundText(est.bound)}` : est.hostSeconds === 0 ? '— (the nest does no work to speed up)' : '— (a size is unbound)']);
  } else {
    rows.push(['speedup', '— (not estimated)']);
  }
  const symbols = ctx.symbolValues(nestIterations(n).expr, n.procedure);
  return [
    `**Loop nest at line ${line}** · \`${nestVariablesText(n.variables, ', ')}\` in \`${n.procedure.name}\` · ${where}`,
    '',
    table(rows),
    '',
    ...(n.notTimeLoop ? [`_Not a time loop:_ ${n.notTimeLoop}. Mark it with \`${annotation(ctx)}\` on the line before it if it is one.`, ''] : []),
    ...(n.procedure.assumptions ?? []).map((x) => `_Assumed:_ ${x}\n`),
    assumptions(ctx, symbols, s, !!est),
  ].join('\n');
}

export function timeLoopCard(t: TimeLoopReport, est: StepEstimate | undefined, ctx: ViewContext, s: CardSettings): string {
  const loop = t.timeLoop.loop;
  const line = loop.keywordRange.start.line + 1;
  const head = `**Time loop at line ${line}** · \`${loop.variable ?? 'while'}\` in \`${t.timeLoop.procedure.name}\` · ${loop.tripCountIsBound ? 'at most ' : ''}${countMd(t.steps)} steps`;
  const why = `_${t.timeLoop.marked ? 'Marked as the time loop' : 'Taken as the time loop'}:_ ${t.timeLoop.reason}.${stepsNote(loop)}`;
  const l = t.ledger;
  if (!l) return `${head}\n\n${why}\n\nInside another time loop: its transfers are counted per step of the outer loop.`;
  const rows: [string, string][] = [
    ['to device per step', bytesMd(l.perStep.toDevice)],
    ['to host per step', bytesMd(l.perStep.toHost)],
    ['once (region entry / exit)', `${bytesMd(l.once.toDevice)} in · ${bytesMd(l.once.toHost)} out`],
    ['transfers in the loop', l.transfers.length === 0 ? 'none' : `${l.transfers.length} (lines ${[...new Set(l.transfers.map((x) => x.range.start.line + 1))].join(', ')})`],
  ];
  if (l.residentBytes !== null) rows.push(['resident on the device', formatBytes(l.residentBytes)]);
  if (est) {
    rows.push(['host step', formatSeconds(est.hostSeconds)]);
    rows.push(['device step', `${formatSeconds(est.deviceSeconds)} (${STEP_TERMS.kernels} ${formatSeconds(est.kernelSeconds)} · ${STEP_TERMS.launches} ${formatSeconds(est.launchSeconds)} · ${STEP_TERMS.transfers} ${formatSeconds(est.transferSeconds)} · ${STEP_TERMS.host} ${formatSeconds(est.hostLeftSeconds)})`]);
    rows.push(['speedup', est.speedup ? `${formatSpeedup(est.speedup)} (expected ${formatFactor(est.speedup.expected)}×), bound by ${boundText(est.bound)}` : '— (a size is unbound)']);
    if (est.withRegion) rows.push(['with the suggested data region', est.withRegion.speedup ? `${formatSpeedup(est.withRegion.speedup)}, bound by ${boundText(est.withRegion.bound)}` : '—']);
    if (est.runsPerDevice !== null) rows.push(['runs per device', est.runsPerDevice.toLocaleString('en-US')]);
  } else {
    rows.push(['speedup', '— (not estimated)']);
  }
  const out = [head, '', why, '', table(rows)];
  if (t.plans) out.push('', ...plansMd(t.plans));
  if (l.dataRegion) {
    const r = l.dataRegion;
    const updates = r.updates.length > 0 ? ` plus ${r.updates.length} update${r.updates.length === 1 ? '' : 's'} for host code in the loop` : '';
    out.push('', `Suggested data region: ${r.clauses.map((c) => `\`${c.clause}(${c.section ?? c.array})\``).join(' ')}${updates} (quick fix on the transfer findings).`);
  }
  const symbols = loop.tripCount ? ctx.symbolValues(loop.tripCount, t.timeLoop.procedure) : [];
  out.push('', assumptions(ctx, symbols, s, !!est));
  return out.join('\n');
}

/** The port plans of a time loop that runs on the host (core/port/plans.ts), as the hover shows them. */
function plansMd(p: NonNullable<TimeLoopReport['plans']>): string[] {
  const fig = (f: typeof p.naive): string => {
    const moved = f.bytesPerStep.toDevice === null || f.bytesPerStep.toHost === null ? 'bytes unbound' : `${formatBytes(f.bytesPerStep.toDevice)} in · ${formatBytes(f.bytesPerStep.toHost)} out per step`;
    const speed = f.speedup ? `${formatSpeedup(f.speedup)} (expected ${formatFactor(f.speedup.expected)}×), bound by ${boundText(f.bound)}` : '— (a size is unbound)';
    return `${moved}; step ${formatSeconds(f.stepSeconds)}; ${speed}${f.fits === false ? '; **does not fit the device memory**' : ''}`;
  };
  const model = p.family === 'openacc' ? 'OpenACC' : 'OpenMP';
  const out = [`**Port plans** (${model}, before any directive is written; ${p.baseline === 'core' ? 'one-core' : 'whole-node'} baseline, host step ${formatSeconds(p.hostStepSeconds)}):`, ''];
  if (p.offloaded.length > 0) {
    const rows: [string, string][] = [
      ['loops offloaded', p.offloaded.map((o) => `${o.line}${o.collapse > 1 ? ` (collapse ${o.collapse})` : ''}`).join(', ')],
      ['1 · naive', fig(p.naive)],
      ['2 · resident', `${fig(p.resident)}${p.updates.length > 0 ? `; ${p.updates.length} update${p.updates.length === 1 ? '' : 's'} for host code` : ''}`],
    ];
    if (p.hostShare !== null) rows.push(['host code in plan 2', `${(100 * p.hostShare).toFixed(p.hostShare < 0.1 ? 1 : 0)}% of the step (Amdahl)`]);
    out.push(table(rows));
  } else out.push('No loop nest can be offloaded as it is.');
  for (const h of p.onHost) out.push('', `_Stays on the host:_ line ${h.line} (\`${h.procedure}\`): ${h.reason}.`);
  if (p.offloaded.length > 0) out.push('', 'The code action *Port this time loop* writes plan 2; `offload-ledger port FILE` prints it as a diff.');
  return out;
}

/** How the steps were counted, for a loop whose count comes from a step counter or is a bound. */
function stepsNote(loop: LoopStmt): string {
  const c = loop.counter;
  const parts: string[] = [];
  if (c) {
    const from = c.boundFrom === 'break' ? `the exit test \`${c.boundText}\`` : c.boundFrom === 'condition' ? `the test \`${c.boundText}\`` : undefined;
    parts.push(`Steps counted by \`${c.name}\` (incremented at line ${c.incrementRange.start.line + 1}${c.start ? '' : '; its start value is not known'})${from ? `, bounded by ${from}` : ''}.`);
  }
  if (loop.tripCountIsBound) {
    const exits = c?.otherExits ?? [];
    parts.push(`The count is an upper bound: ${exits.length > 0 ? exits.join(' or ') : 'a `break` or `exit`'} may end the loop earlier.`);
  }
  return parts.length > 0 ? ` ${parts.join(' ')}` : '';
}

/** The annotation comment in the file's language. */
function annotation(ctx: ViewContext): string {
  return `${ctx.analysis.language === 'fortran' ? '!' : '//'} ${TIME_LOOP_ANNOTATION}`;
}

/** A loop around kernels or nests that was not taken as a time loop (a loop over tiles, fields, or an initialisation). */
export function notTimeLoopCard(r: RejectedLoop, ctx: ViewContext): string {
  const line = r.loop.keywordRange.start.line + 1;
  return [
    `**Loop at line ${line}** · \`${r.loop.variable ?? 'while'}\` in \`${r.procedure.name}\` · not a time loop`,
    '',
    `${r.reason[0].toUpperCase()}${r.reason.slice(1)}. The offloaded constructs or nests inside it are costed on their own, once per pass of this loop.`,
    '',
    `If it is the time loop, mark it with \`${annotation(ctx)}\` on the line before it, or name \`${r.loop.variable ?? 'its variable'}\` in \`offloadLedger.timeLoopVariables\`.`,
  ].join('\n');
}

export interface ArrayCardInput {
  name: string;
  size: ArraySize | undefined;
  /** Transfers of this array made by the clause or directive under the cursor. */
  here: TransferReport[];
  /** All transfers of this array in the time loops of the file. */
  all: { loopLine: number; transfers: TransferReport[] }[];
  /** Stencil facts from the loop nest the access is in. */
  footprint?: { reads: number; writes: number; radius: number[]; inPlace: boolean };
}

function perStep(ts: TransferReport[], dir: 'toDevice' | 'toHost'): string {
  const xs = ts.filter((t) => t.direction === dir);
  if (xs.length === 0) return '0 B';
  if (xs.some((t) => t.bytes.value === null)) return codeSpan(xs.map((t) => `${t.bytes.expr}/${t.everySteps}`).join(' + ')) + ' B';
  return formatBytes(xs.reduce((a, t) => a + t.bytes.value! / t.everySteps, 0));
}

export function arrayCard(a: ArrayCardInput): string {
  const size = a.size;
  const head = `**\`${a.name}\`**${size ? ` · ${size.elementType}${size.elementBytes ? ` (${size.elementBytes} B)` : ''}` : ''}${size?.elements ? ` · ${countMd(size.elements)} elements` : ''}${size?.bytes != null ? ` · ${formatBytes(size.bytes)}` : ''}`;
  const rows: [string, string][] = [];
  if (a.here.length > 0) {
    const every = [...new Set(a.here.map((t) => t.everySteps))].map((k) => (k === 1 ? 'every step' : `every ${k} steps`)).join(', ');
    rows.push(['moved here', `${perStep(a.here, 'toDevice')} to device · ${perStep(a.here, 'toHost')} to host per step (${every})`]);
  }
  for (const l of a.all) {
    if (l.transfers.length === 0) continue;
    rows.push([`per step, time loop at line ${l.loopLine}`, `${perStep(l.transfers, 'toDevice')} to device · ${perStep(l.transfers, 'toHost')} to host`]);
  }
  if (a.footprint) {
    const f = a.footprint;
    rows.push(['in this nest', `${f.reads} read(s), ${f.writes} write(s) per iteration, stencil radius ${f.radius.length > 0 ? f.radius.join('×') : '0'}${f.inPlace ? ', updated in place' : ''}`]);
  }
  if (rows.length === 0) rows.push(['per step', 'does not cross the link in any time loop']);
  return [head, '', table(rows)].join('\n');
}
