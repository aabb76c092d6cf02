/** The human-readable report of `check --format text`: one table of loop nests per file, then findings. */
import type { FileAnalysis } from '../core/analyze';
import type { Quantity } from '../core/analysis/bindings';
import type { TimeLoopReport } from '../core/analyze';
import { formatBytes } from '../core/symbolic';
import { nestVariablesText } from '../core/analysis/nests';
import { STEP_TERMS, boundWords } from '../core/estimate/terms';

export function formatQuantity(q: Quantity): string {
  if (q.value === null) return q.expr;
  const v = q.value.toLocaleString('en-US');
  return /^[\d,.]+$/.test(q.expr.replace(/\s/g, '')) || q.expr === String(q.value) ? v : `${v} (${q.expr})`;
}

export function formatTable(rows: string[][]): string {
  const widths = rows[0].map((_, c) => Math.max(...rows.map((r) => (r[c] ?? '').length)));
  return rows.map((r) => r.map((cell, c) => (c === r.length - 1 ? cell : cell.padEnd(widths[c]))).join('  ').trimEnd()).join('\n');
}

export function formatFile(a: FileAnalysis): string {
  const lines: string[] = [];
  const families = a.directiveFamilies.length > 0 ? a.directiveFamilies.join(', ') : 'no offload directives';
  lines.push(`${a.path}  (${a.language}; ${families})`);
  if (a.nests.length === 0) {
    lines.push('  no loop nests found');
  } else {
    // One baseline for the whole column, named in its header; each kernel includes its launch.
    const versus = a.baseline === 'core' ? 'one core' : 'whole node';
    const rows = [['line', 'function', 'variables', 'offloaded', 'flop/it', 'B/it dev', 'B/it host', 'AI dev', 'AI host', `kernel speedup vs ${versus}`, 'iterations']];
    // A nest whose figures rest on something the model could not read is marked `?` (listed below).
    const unread = new Set(a.notUnderstood.map((x) => x.nestLine));
    for (const r of a.nests) {
      const n = r.nest;
      const mark = unread.has(n.root.keywordRange.start.line + 1) ? '?' : '';
      rows.push([
        String(n.root.keywordRange.start.line + 1) + mark,
        n.procedure.name,
        nestVariablesText(n.variables),
        n.offload ? `yes (${n.offload.family})` : 'no',
        fmt(r.cost.flopsPerIteration),
        fmt(r.cost.bytes.device),
        fmt(r.cost.bytes.host),
        r.cost.intensity.device === undefined ? '-' : r.cost.intensity.device.toFixed(2),
        r.cost.intensity.host === undefined ? '-' : r.cost.intensity.host.toFixed(2),
        // A loop that runs on the host has no speedup yet: what it shows is what offloading it could pay.
        r.estimate?.speedup
          ? `${spread(r.estimate.speedup)} (${boundWords(r.estimate.bound)})${n.offload ? '' : ' if offloaded'}`
          : r.iterations.value === null ? '- (a size is unbound)' : r.estimate?.hostSeconds === 0 ? '- (no work)' : '-',
        formatQuantity(r.iterations) + (r.approximate ? ' (approx., triangular)' : ''),
      ]);
    }
    lines.push(formatTable(rows).replace(/^/gm, '  '));
  }
  // One line per assumption, with the loops that rest on it (nests, and time loops whose steps may).
  const assumed = new Map<string, number[]>();
  for (const r of a.nests) {
    for (const x of r.nest.procedure.assumptions ?? []) assumed.set(x, [...(assumed.get(x) ?? []), r.nest.root.keywordRange.start.line + 1]);
  }
  for (const t of a.timeLoops) {
    for (const x of t.timeLoop.procedure.assumptions ?? []) assumed.set(x, [...(assumed.get(x) ?? []), t.timeLoop.loop.keywordRange.start.line + 1].sort((p, q) => p - q));
  }
  for (const [x, at] of assumed) lines.push(`  assumed (line${at.length === 1 ? '' : 's'} ${at.join(', ')}): ${x}`);
  for (const x of a.notUnderstood) lines.push(`  not understood (line ${x.line}, figures of the loop at line ${x.nestLine} marked ?): ${x.kind === 'subscript' ? `\`${x.what.replace(/`/g, '')}\`` : x.kind === 'call' ? `the call \`${x.what}\`` : `the loop \`${x.what}\``}: ${x.effect}`);
  for (const t of a.timeLoops) lines.push(...formatTimeLoop(t));
  for (const r of a.notTimeLoops) lines.push(`  not a time loop: line ${r.loop.keywordRange.start.line + 1} (${r.loop.variable ?? 'while'} in ${r.procedure.name}): ${r.reason}`);
  if (a.nests.length > 0) lines.push(`  estimates: roofline on profile ${a.profile.name} (${a.profile.host.name} host, ${a.profile.device.name} device, ${a.profile.link.name} link), ${a.baseline === 'core' ? 'one-core' : 'whole-node'} baseline${a.baselineReason ? ` (${a.baselineReason.split(':')[0]})` : ''} for every speedup; a kernel speedup is one nest as one kernel, launch included, without transfers; ranges from documented efficiency bounds. Measure on the target machine to decide.`);
  for (const f of a.findings) {
    lines.push(`  ${a.path}:${f.range.start.line + 1}:${f.range.start.col + 1}: ${f.severity} [${f.code}] ${f.message}`);
    // The places a finding is about besides its own (each construct of one missing region, the other file of a call).
    for (const r of f.related ?? []) lines.push(`      ${r.path === a.path ? 'line ' : `${r.path}:`}${r.range.start.line + 1}: ${r.message}`);
  }
  for (const e of a.internalErrors) lines.push(`  internal error (please report): ${e.split('\n')[0]}`);
  return lines.join('\n');
}

function fmt(x: number): string {
  return Number.isInteger(x) ? String(x) : x.toFixed(2);
}

function bytes(q: Quantity): string {
  return q.value === null ? `${q.expr} B` : formatBytes(q.value);
}

/** The per-step ledger of one time loop: totals, each transfer, and the suggested data region. */
function formatTimeLoop(t: TimeLoopReport): string[] {
  const loop = t.timeLoop.loop;
  const head = `  time loop at line ${loop.keywordRange.start.line + 1} (${loop.variable ?? 'while'}, ${stepsText(t)})`;
  const l = t.ledger;
  if (!l) return [`${head}: inside another time loop, counted there`];
  const why = `    ${t.timeLoop.marked ? 'marked as the time loop' : 'taken as the time loop'}: ${t.timeLoop.reason}${loop.tripCountIsBound ? `; the step count is an upper bound: ${atMostBecause(t)}` : ''}`;
  const count = l.transfersPerStep > 0 ? ` (${fmt(l.transfersPerStep)} transfer${l.transfersPerStep === 1 ? '' : 's'} per step)` : '';
  const out = [`${head}: per step ${bytes(l.perStep.toDevice)} to device, ${bytes(l.perStep.toHost)} to host${count}; once ${bytes(l.once.toDevice)} in, ${bytes(l.once.toHost)} out`];
  out.push(why);
  if (l.transfers.length > 0) {
    const rows = [['line', 'array', 'direction', 'bytes', 'every', 'cause']];
    for (const x of l.transfers) {
      const via = x.via.length > 0 ? ` via ${x.via.map((r) => r.start.line + 1).join('>')}` : '';
      rows.push([`${x.range.start.line + 1}${via}`, x.array, x.direction === 'toDevice' ? 'to device' : 'to host', bytes(x.bytes), x.everySteps === 1 ? 'step' : `${x.everySteps} steps`, x.cause]);
    }
    out.push(formatTable(rows).replace(/^/gm, '    '));
  }
  const e = t.estimate;
  if (t.plans) {
    // Code that runs on the host: today's step, then the plans of a port.
    if (e?.hostSeconds !== null && e?.hostSeconds !== undefined) out.push(`    per step on the host today: ${seconds(e.hostSeconds)} (${t.plans.baseline === 'core' ? 'one core' : 'the whole node'})`);
    out.push(...formatPlans(t.plans));
  } else if (e && e.speedup && e.hostSeconds !== null && e.deviceSeconds !== null) {
    out.push(`    per step: host ${seconds(e.hostSeconds)}; offloaded ${seconds(e.deviceSeconds)} = ${STEP_TERMS.kernels} ${seconds(e.kernelSeconds!)} + ${STEP_TERMS.launches} ${seconds(e.launchSeconds!)} + ${STEP_TERMS.transfers} ${seconds(e.transferSeconds!)} + ${STEP_TERMS.host} ${seconds(e.hostLeftSeconds!)}`);
    out.push(`    speedup ${spread(e.speedup)} (expected ${factor(e.speedup.expected)}×), bound by ${boundWords(e.bound)}${e.withRegion?.speedup ? `; with the suggested data region ${spread(e.withRegion.speedup)} (bound by ${boundWords(e.withRegion.bound)})` : ''}`);
    if (e.residentBytes !== null) out.push(`    resident on the device: ${formatBytes(e.residentBytes)}${e.runsPerDevice !== null ? `; ${e.runsPerDevice.toLocaleString('en-US')} run${e.runsPerDevice === 1 ? ' fits' : 's fit'} on one device` : ''}`);
  }
  const r = l.dataRegion;
  if (r) {
    const directive = r.edits.find((e) => /\b(data)\b/.test(e.text))?.text.trim();
    out.push(`    suggested data region: ${directive ?? r.clauses.map((c) => `${c.clause}(${c.section ?? c.array})`).join(' ')}${r.updates.length > 0 ? ` plus ${r.updates.length} update${r.updates.length === 1 ? '' : 's'} for host code in the loop` : ''}`);
    // The region needs its updates: pasting the region alone would leave host code reading stale data.
    for (const e of r.edits) if (/\bupdate\b/.test(e.text)) out.push(`      with, before line ${e.line}: ${e.text.trim()}`);
    for (const n of r.notes) out.push(`    note: ${n}`);
  }
  return out;
}

/** The port plans of a time loop that runs on the host (port/plans.ts). */
function formatPlans(p: NonNullable<TimeLoopReport['plans']>): string[] {
  const model = p.family === 'openacc' ? 'OpenACC' : 'OpenMP';
  const base = p.baseline === 'core' ? 'one-core' : 'whole-node';
  const out = [`    port plans (${model}, before any directive is written; ${base} baseline):`];
  const nests = p.offloaded.map((o) => `${o.line}${o.collapse > 1 ? ` collapse(${o.collapse})` : ''}`).join(', ');
  const figs = (f: typeof p.naive): string => {
    const moved = f.bytesPerStep.toDevice === null || f.bytesPerStep.toHost === null ? 'bytes per step unbound' : `${formatBytes(f.bytesPerStep.toDevice)} to device, ${formatBytes(f.bytesPerStep.toHost)} to host per step`;
    const step = f.stepSeconds !== null ? `; step ${seconds(f.stepSeconds)}` : '';
    const speed = f.speedup ? `; speedup ${spread(f.speedup)} (expected ${factor(f.speedup.expected)}×), bound by ${boundWords(f.bound)}` : '; no estimate (a size is unbound)';
    const fit = f.residentBytes !== null ? `; ${formatBytes(f.residentBytes)} on the device${f.fits === false ? ', MORE than the device memory' : ', fits'}` : '';
    return `${moved}${step}${speed}${fit}`;
  };
  if (p.offloaded.length === 0) {
    out.push('      no nest can be offloaded as it is (see below)');
  } else {
    out.push(`      1 naive:    loop${p.offloaded.length === 1 ? '' : 's'} at line${p.offloaded.length === 1 ? '' : 's'} ${nests} offloaded, data moved by each construct: ${figs(p.naive)}`);
    out.push(`      2 resident: plus a data region around the time loop${p.updates.length > 0 ? ` and ${p.updates.length} update${p.updates.length === 1 ? '' : 's'} for host code` : ''}: ${figs(p.resident)}`);
  }
  for (const h of p.onHost) out.push(`      stays on the host: line ${h.line} (${h.procedure}): ${h.reason}`);
  if (p.hostShare !== null && p.offloaded.length > 0) out.push(`      host code left in the loop: ${(100 * p.hostShare).toFixed(p.hostShare < 0.1 ? 1 : 0)}% of the resident step (it bounds the speedup, Amdahl)`);
  if (p.offloaded.length > 0) out.push('      `offload-ledger port FILE` prints the resident port as a diff (--write applies it)');
  return out;
}

/** `2,000 (ITER_MAX) steps`, or `at most …` when the count is an upper bound. */
function stepsText(t: TimeLoopReport): string {
  return `${t.timeLoop.loop.tripCountIsBound ? 'at most ' : ''}${formatQuantity(t.steps)} steps`;
}

/** What can end the loop before its count: the other tests and exits the step-counter pass found. */
function atMostBecause(t: TimeLoopReport): string {
  const exits = t.timeLoop.loop.counter?.otherExits ?? [];
  return `${exits.length > 0 ? exits.join(' or ') : 'a `break` or `exit`'} may end the loop earlier`;
}

export function spread(s: { low: number; high: number }): string {
  return `${factor(s.low)}–${factor(s.high)}×`;
}

/** A speed-up factor: two decimals, or two significant digits below 0.1 (never "0.00"). */
export function factor(x: number): string {
  return x >= 0.1 || x === 0 ? x.toFixed(2) : Number(x.toPrecision(2)).toString();
}

export function seconds(x: number): string {
  if (x >= 1) return `${x.toFixed(2)} s`;
  if (x >= 1e-3) return `${(x * 1e3).toFixed(2)} ms`;
  return `${(x * 1e6).toFixed(1)} µs`;
}
