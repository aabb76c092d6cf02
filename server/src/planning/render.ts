/**
 * The planning report as one HTML page: the editor's planning view and `check --format html`.
 *
 * The project summary comes first — the time loops ranked by their time per step with each plan's
 * speedup and what bounds it, the roofline with every loop nest, the nests ranked by their share of
 * the step, the findings ranked by severity and bytes per step, and the bytes per step of each time
 * loop as written beside the same with the suggested data region — then the detail per file.
 * Charts are Vega-Lite rendered to SVG by Vega when the page is made (charts.ts, vega.ts).
 *
 * The page runs no script and loads nothing (its CSP allows inline styles only). Sources are
 * linked as `path:line` with workspace-relative paths: in the editor each link is a command URI
 * that opens the line; in the HTML file it is the relative path, and chart points go to their row.
 */
import { nestVariablesText } from '../core/analysis/nests';
import type { PlanningData, PlanningFile, PlanningMachine, ReportLoop, ReportTimeLoop, ReportTransfer } from '../lsp/protocol';
import { COLORS, PLANS, type LinkTarget, projectTransfersSpec, rooflineChart, timeLoopSpec } from './charts';
import { bytes, esc, factor, intensity, percent, rate, seconds } from './format';
import { type NestRow, type Summary, type TimeLoopRow, stepSeconds, summarise } from './summary';
import { renderSvg } from './vega';
import { boundWords } from '../core/estimate/terms';

export { bytes, seconds } from './format';

export interface SourcePlace {
  /** The path as the analysis has it (shown through displayPath). */
  path: string;
  /** The document's URI when the view knows it. */
  uri?: string;
  /** 1-based. */
  line: number;
}

export interface RenderOptions {
  cspSource: string;
  focusUri?: string;
  focusLine?: number;
  message?: string;
  /** How a path is shown: workspace-relative. Default: as given. */
  displayPath?: (path: string) => string;
  /** Where a `path:line` link goes. Default: the relative path of the file (the HTML file). The editor gives a command URI. */
  sourceHref?: (place: SourcePlace) => string;
  /** Chart points and bars open their source line (the editor); otherwise they go to their row in the page. */
  chartsOpenSource?: boolean;
  /** How many time loops, in rank order, get a detail chart; the others get tables. Default 12. */
  detailCharts?: number;
  /** Rows of each ranked summary table. Default 20. */
  summaryRows?: number;
}

interface Ctx {
  o: RenderOptions;
  s: Summary;
  show: (path: string) => string;
  href: (place: SourcePlace) => string;
  src: (place: SourcePlace) => string;
  /** Where a chart mark goes. */
  markHref: (t: LinkTarget) => string;
}

const bound = (b: string | null | undefined): string => boundWords(b);

function speedup(s: { low: number; expected: number; high: number } | null | undefined): string {
  return s ? `${factor(s.low)}–${factor(s.high)}× (expected ${factor(s.expected)}×)` : '—';
}

function quantityText(q: { value: number | null; expr: string }, unitBytes = true): string {
  if (q.value === null) return `${q.expr}${unitBytes ? ' B' : ''}`;
  return unitBytes ? bytes(q.value) : q.value.toLocaleString('en-US');
}

const table = (head: string[], rows: string[][], cls = ''): string =>
  `<table${cls ? ` class="${cls}"` : ''}><thead><tr>${head.map((h) => `<th>${h}</th>`).join('')}</tr></thead><tbody>${rows.map((r) => `<tr>${r.join('')}</tr>`).join('')}</tbody></table>`;

const td = (s: string, cls = ''): string => `<td${cls ? ` class="${cls}"` : ''}>${s}</td>`;

function placeOfFile(f: PlanningFile, line: number): SourcePlace {
  return { path: f.path, uri: f.uri, line };
}

/** The file a transfer's directive is in: another file's when the step calls into it. */
function transferPlace(f: PlanningFile, x: ReportTransfer): SourcePlace {
  return x.file && x.file !== f.path ? { path: x.file, line: x.line } : placeOfFile(f, x.line);
}

function machineText(m: PlanningMachine): string {
  const ridge = (peak: number, bw: number): string => `ridge ${intensity(peak / bw)} flop/B`;
  const core = { bw: m.host.bandwidthCore, peak: m.host.peakDouble / m.host.cores };
  const items = [
    `device <code>${esc(m.device.name)}</code>: ${rate(m.device.bandwidth, 'B/s')}, ${rate(m.device.peakDouble, 'Flop/s')} double (${rate(m.device.peakSingle, 'Flop/s')} single), ${ridge(m.device.peakDouble, m.device.bandwidth)}`,
    `host <code>${esc(m.host.name)}</code>, whole node: ${rate(m.host.bandwidthNode, 'B/s')}, ${rate(m.host.peakDouble, 'Flop/s')} double, ${ridge(m.host.peakDouble, m.host.bandwidthNode)}; one core: ${rate(core.bw, 'B/s')}, ${rate(core.peak, 'Flop/s')} double, ${ridge(core.peak, core.bw)}`,
    `link <code>${esc(m.link.name)}</code>: ${rate(m.link.bandwidth, 'B/s')} per direction, ${ridge(m.device.peakDouble, m.link.bandwidth)} crossing the link against the device's double peak`,
  ];
  return `<ul class="machine">${items.map((i) => `<li>${i}</li>`).join('')}</ul>`;
}

/** The updates a suggested region needs, with where they go: the region alone would leave host code reading stale data. */
function updatesList(edits: { line: number; text: string }[]): string {
  const ups = edits.filter((e) => /\bupdate\b/.test(e.text));
  if (ups.length === 0) return '';
  return `<p>With ${ups.length === 1 ? 'this update' : 'these updates'} for host code in the loop:</p><ul>${ups.map((e) => `<li>before line ${e.line}: <code>${esc(e.text.trim())}</code></li>`).join('')}</ul>`;
}

/** A speedup shown beside errors in its loop (stale data, races) says that the figure rests on a program that is wrong. */
function errorsNote(f: PlanningFile, t: ReportTimeLoop): string {
  const errors = (f.findings ?? []).filter((x) => x.severity === 'error' && x.line >= t.line && x.line <= t.endLine);
  if (errors.length === 0) return '';
  const codes = [...new Set(errors.map((x) => x.code))].join(', ');
  return ` <small class="warn">with ${errors.length} error${errors.length === 1 ? '' : 's'} in the loop (${esc(codes)}): the program is wrong until they are fixed</small>`;
}

function timeLoopsTable(ctx: Ctx, rows: TimeLoopRow[]): string {
  const head = ['', 'time loop', 'steps', 'host only', 'as written', 'speedup as written', 'bound by', 'with the suggested region', 'speedup with region', 'bound by', 'link bytes per step'];
  const body = rows.map((r) => {
    const e = r.t.estimate;
    const s = r.t.step;
    // Code that runs on the host: the "after" columns show the resident port plan.
    const plan = r.t.plans?.resident;
    const after = e?.withRegion ?? (plan ? { deviceSeconds: plan.stepSeconds, speedup: plan.speedup, bound: plan.bound } : undefined);
    const link = `${bytes(s?.linkBytes ?? (r.t.perStep.toDevice.value ?? 0) + (r.t.perStep.toHost.value ?? 0))}${s && s.linkBytesWithRegion !== null ? ` → ${bytes(s.linkBytesWithRegion)}` : ''}`;
    return [
      td(`<a href="#${r.label}">${r.label}</a>`, 'label'),
      td(`${ctx.src(placeOfFile(r.file, r.t.line))} <small>${esc(r.t.variable || 'while')} in ${esc(r.t.function)}</small>`),
      td(esc(quantityText(r.t.steps, false))),
      td(seconds(e?.hostSeconds)),
      td(seconds(e?.deviceSeconds)),
      td(`${speedup(e?.speedup)}${errorsNote(r.file, r.t)}`),
      td(esc(bound(e?.bound))),
      td(`${seconds(after?.deviceSeconds)}${plan && !e?.withRegion ? ' <small>(port plan 2)</small>' : ''}`),
      td(speedup(after?.speedup ?? undefined)),
      td(after?.bound ? esc(bound(after.bound as never)) : '—'),
      td(link),
    ];
  });
  return table(head, body, 'ranked');
}

function nestCells(ctx: Ctx, n: NestRow): string[] {
  const l = n.loop;
  const sh = n.share;
  const tl = n.timeLoop ? `<a href="#${n.timeLoop.label}">${n.timeLoop.label}</a>` : '—';
  return [
    td(`<a href="#${n.label}">${n.label}</a>`, 'label'),
    td(`${ctx.src(placeOfFile(n.file, l.line))} <small>${esc(nestVariablesText(l.variables))} in ${esc(l.function)}</small>`),
    td(l.offloaded ? esc(l.directive ?? 'yes') : sh ? 'no (host code in the loop)' : 'no'),
    td(esc(intensity(l.arithmeticIntensity.device))),
    td(esc(intensity(l.arithmeticIntensity.host))),
    td(sh ? percent(sh.share) : '—'),
    td(sh ? percent(sh.hostShare) : '—'),
    td(sh && sh.shareWithRegion !== null ? percent(sh.shareWithRegion) : '—'),
    td(sh ? seconds(sh.secondsPerStep) : '—'),
    td(tl),
  ];
}

const NEST_HEAD = ['', 'loop nest', 'offloaded', 'AI device', 'AI host', 'share of the step', 'of the host-only step', 'with the region', 'time per step', 'time loop'];

function findingsTable(ctx: Ctx, limit: number): string {
  const rows = ctx.s.findings.slice(0, limit).map(({ file, f }) => [
    td(`<span class="sev ${f.severity}">${f.severity}</span>`),
    td(`<code>${esc(f.code)}</code>`),
    td(ctx.src(placeOfFile(file, f.line))),
    td(f.bytesPerStep !== undefined ? `${bytes(f.bytesPerStep)}` : '—'),
    td(esc(f.message).replace(/`([^`]+)`/g, '<code>$1</code>'), 'message'),
  ]);
  return table(['severity', 'code', 'where', 'bytes per step', 'what'], rows, 'ranked findings');
}

const more = (shown: number, total: number, what: string): string => (total > shown ? `<p class="note">${total - shown} more ${what} in the detail per file below.</p>` : '');

async function summarySection(ctx: Ctx, data: PlanningData): Promise<string> {
  const { s, o } = ctx;
  const limit = o.summaryRows ?? 20;
  const counts = { error: 0, warning: 0, info: 0, hint: 0 };
  for (const f of s.findings) counts[f.f.severity]++;
  const parts: string[] = [];
  parts.push(
    `<p>${data.files.length} file${data.files.length === 1 ? '' : 's'}, ${s.timeLoops.length} time loop${s.timeLoops.length === 1 ? '' : 's'}, ${s.nests.length} loop nest${s.nests.length === 1 ? '' : 's'}, ${s.findings.length} finding${s.findings.length === 1 ? '' : 's'} (${counts.error} error, ${counts.warning} warning, ${counts.info} info, ${counts.hint} hint).</p>`,
  );
  parts.push('<h3 id="plans">Time loops by time per step, and what each plan gains</h3>');
  if (s.timeLoops.length > 0) {
    parts.push('<p class="note">Time per step as written is the offloaded step the code runs today (kernels, launches, transfers, host code left in the loop); speedups are against one step on the host baseline, as ranges over documented efficiency bounds.</p>');
    parts.push(timeLoopsTable(ctx, s.timeLoops.slice(0, limit)) + more(limit, s.timeLoops.length, 'time loops'));
  } else parts.push('<p>No time loop found.</p>');

  parts.push('<h3 id="roofline">Roofline</h3>');
  if (s.machine) {
    parts.push(machineText(s.machine));
    const chart = rooflineChart(s.machine, s.nests, s.timeLoops, ctx.markHref);
    parts.push(`<figure>${await renderSvg(chart.spec, 'roofline: loop nests by arithmetic intensity under the roofs of the device, the host and the link', {}, 'roofline')}</figure>`);
    parts.push(
      `<p class="note">Each loop nest is two points, its device and its host intensity, on the roof it is estimated against (attainable = min(peak, bandwidth × intensity)), sized by its share of the step. Square and triangle points are time loops: their flops per step over the bytes that cross the link per step, as written and with the suggested data region (labels with ′).${chart.offChart.length > 0 ? ` Beyond the right edge, with so few bytes crossing the link that their intensity runs off the axis: ${chart.offChart.map((p) => `${p.label} at ${intensity(p.intensity)} flop per byte`).join(', ')}.` : ''}${chart.unplaced.length > 0 ? ` Not on the chart, since a log axis has no place for intensity 0: ${chart.unplaced.map((n) => `<a href="#${n.label}">${n.label}</a>`).join(', ')} (no floating-point work).` : ''}</p>`,
    );
  } else parts.push('<p>No machine profile in the data.</p>');

  parts.push('<h3 id="loops">Loop nests by share of the step</h3>');
  parts.push(s.nests.length > 0 ? table(NEST_HEAD, s.nests.slice(0, limit).map((n) => nestCells(ctx, n)), 'ranked') + more(limit, s.nests.length, 'loop nests') : '<p>No loop nest found.</p>');

  parts.push('<h3 id="findings">Findings by severity and bytes per step</h3>');
  parts.push(s.findings.length > 0 ? findingsTable(ctx, limit) + (s.findings.length > limit ? `<p class="note">${s.findings.length - limit} more findings: the editor lists them all as diagnostics, and <code>offload-ledger check</code> prints them.</p>` : '') : '<p>No findings.</p>');

  parts.push('<h3 id="before-after">Before and after: bytes across the link per step</h3>');
  const moving = s.timeLoops.filter((r) => r.t.transfers.length > 0).slice(0, limit);
  const chart = projectTransfersSpec(moving, (r) => ctx.markHref({ timeLoop: r }));
  parts.push(chart ? `<figure>${await renderSvg(chart.spec, 'bytes across the link per step by time loop, as written and with the suggested data region', chart.datasets, 'loops')}</figure>` : '<p>No bytes cross the link inside any time loop.</p>');
  return parts.join('\n');
}

function kv(rows: [string, string][]): string {
  return `<table class="kv">${rows.map(([k, v]) => `<tr><th>${esc(k)}</th><td>${v}</td></tr>`).join('')}</table>`;
}

/** Before/after tables by array and by construct: the figures of the chart, for every time loop. */
function transferTables(ctx: Ctx, f: PlanningFile, t: ReportTimeLoop): string {
  const after = t.step?.transfersWithRegion ?? null;
  const sum = (list: ReportTransfer[] | null, key: (x: ReportTransfer) => string): Map<string, { toDevice: number; toHost: number; first: ReportTransfer }> => {
    const m = new Map<string, { toDevice: number; toHost: number; first: ReportTransfer }>();
    for (const x of list ?? []) {
      if (x.bytes.value === null) continue;
      const e = m.get(key(x)) ?? { toDevice: 0, toHost: 0, first: x };
      e[x.direction] += x.bytes.value / x.everySteps;
      m.set(key(x), e);
    }
    return m;
  };
  const cell = (e: { toDevice: number; toHost: number } | undefined, list: unknown): string => (list === null ? '—' : `${bytes(e?.toDevice ?? 0)} · ${bytes(e?.toHost ?? 0)}`);
  const group = (key: (x: ReportTransfer) => string, label: (k: string, x: ReportTransfer) => string, title: string): string => {
    const b = sum(t.transfers, key);
    const a = sum(after, key);
    const keys = [...new Set([...b.keys(), ...a.keys()])].sort((x, y) => (b.get(y)?.toDevice ?? 0) + (b.get(y)?.toHost ?? 0) - (b.get(x)?.toDevice ?? 0) - (b.get(x)?.toHost ?? 0) || x.localeCompare(y));
    const rows = keys.map((k) => [td(label(k, (b.get(k) ?? a.get(k))!.first)), td(cell(b.get(k), t.transfers)), td(cell(a.get(k), after))]);
    return table([title, `${PLANS.written} (to the device · to the host)`, PLANS.region], rows, 'transfers');
  };
  const constructKey = (x: ReportTransfer & { inserted?: boolean }): string => `${x.file ?? ''}\n${x.line}\n${x.inserted ? 1 : 0}`;
  return [
    group((x) => x.array, (k) => `<code>${esc(k)}</code>`, 'array'),
    group(constructKey, (_k, x) => `${ctx.src(transferPlace(f, x))}${(x as { inserted?: boolean }).inserted ? ' <small>(a suggested update, before this line)</small>' : ''}`, 'construct'),
  ].join('');
}

async function timeLoopSection(ctx: Ctx, f: PlanningFile, r: TimeLoopRow, focused: boolean, chart: boolean): Promise<string> {
  const t = r.t;
  const e = t.estimate;
  const rows: [string, string][] = [
    ['steps', esc(quantityText(t.steps, false))],
    ['to the device per step', esc(quantityText(t.perStep.toDevice))],
    ['to the host per step', esc(quantityText(t.perStep.toHost))],
    ['once', `${bytes(t.once.toDevice.value)} in · ${bytes(t.once.toHost.value)} out`],
    ['resident on the device', bytes(t.residentBytes)],
    ['time per step', e ? `host only ${seconds(e.hostSeconds)} · as written ${seconds(e.deviceSeconds)}${e.withRegion ? ` · with the suggested region ${seconds(e.withRegion.deviceSeconds)}` : ''}` : 'not estimated'],
    ['speedup as written', e?.speedup ? `${speedup(e.speedup)}, bound by ${esc(bound(e.bound))}` : 'not estimated'],
  ];
  if (e?.withRegion?.speedup) rows.push(['with the suggested data region', `${speedup(e.withRegion.speedup)}, bound by ${esc(bound(e.withRegion.bound))}`]);
  const p = t.plans;
  if (p) {
    const fig = (x: NonNullable<typeof p>['naive']): string =>
      `${bytes(x.bytesPerStep.toDevice)} to the device and ${bytes(x.bytesPerStep.toHost)} to the host per step; step ${seconds(x.stepSeconds)}; ${x.speedup ? `${speedup(x.speedup)}, bound by ${esc(bound(x.bound as never))}` : 'not estimated'}${x.fitsDeviceMemory === false ? '; does NOT fit the device memory' : ''}`;
    const nests = p.offloaded.map((o) => `${o.line}${o.collapse > 1 ? ` (collapse ${o.collapse})` : ''}`).join(', ');
    rows.push(['port plans', `before any directive is written: ${p.model === 'openacc' ? 'OpenACC' : 'OpenMP'}, ${p.baseline === 'core' ? 'one-core' : 'whole-node'} baseline; loops offloaded: ${p.offloaded.length > 0 ? esc(nests) : 'none'}`]);
    if (p.offloaded.length > 0) {
      rows.push(['plan 1, naive (each construct moves its data)', fig(p.naive)]);
      rows.push(['plan 2, resident (a data region around the loop)', `${fig(p.resident)}${p.updates.length > 0 ? `; ${p.updates.length} update${p.updates.length === 1 ? '' : 's'} for host code` : ''}`]);
    }
    for (const h of p.onHost) rows.push([`stays on the host: line ${h.line}`, esc(h.reason)]);
    if (p.hostShare !== null && p.offloaded.length > 0) rows.push(['host code in the resident step', `${(100 * p.hostShare).toFixed(p.hostShare < 0.1 ? 1 : 0)}% (Amdahl)`]);
  }
  if (e?.runsPerDevice != null) rows.push(['independent runs per device', e.runsPerDevice.toLocaleString('en-US')]);
  const region = t.dataRegion
    ? `<p>Suggested data region: <code>${esc(t.dataRegion.clauses.map((c) => `${c.clause}(${c.section ?? c.array})`).join(' '))}</code>${t.dataRegion.edits.length > 0 ? ` (${t.dataRegion.edits.length} line${t.dataRegion.edits.length === 1 ? '' : 's'} to insert; the quick fix on the finding applies them)` : ''}</p>${updatesList(t.dataRegion.edits)}`
    : '';
  let figure = '';
  if (chart) {
    const byArray = (x: ReportTransfer) => ({ key: x.array, href: ctx.markHref({ timeLoop: r }) });
    const byConstruct = (x: ReportTransfer & { inserted?: boolean }) => {
      const p = transferPlace(f, x);
      // Short names on the chart (the tables below give the full path): a line of this file, or another file's name and line.
      const name = p.path === f.path ? `line ${p.line}` : `${ctx.show(p.path).split('/').pop()}:${p.line}`;
      return { key: `${name}${x.inserted ? ' (suggested update)' : ''}`, href: ctx.o.chartsOpenSource ? ctx.href(p) : `#${r.label}` };
    };
    const w = t.step?.withRegionSeconds ?? null;
    const chart = timeLoopSpec(t, byArray, byConstruct, {
      hostOnly: e?.hostSeconds ?? null,
      written: e && e.kernelSeconds !== null ? { kernels: e.kernelSeconds, launches: e.launchSeconds ?? 0, transfers: e.transferSeconds ?? 0, host: e.hostLeftSeconds ?? 0 } : null,
      region: w,
    });
    if (chart) figure = `<figure>${await renderSvg(chart.spec, `time loop ${r.label}: bytes per step by array and by construct, as written and with the suggested region, and one step's time`, chart.datasets, r.label)}</figure>`;
  }
  const tables = t.transfers.length > 0 || (t.step?.transfersWithRegion?.length ?? 0) > 0
    ? `<details${chart ? '' : ' open'}><summary>bytes per step by array and by construct, as written and with the suggested region</summary>${transferTables(ctx, f, t)}</details>`
    : '<p>No bytes cross the link inside this loop.</p>';
  return `<section class="timeloop${focused ? ' focus' : ''}" id="${r.label}">
<h4><span class="label">${r.label}</span> time loop at ${ctx.src(placeOfFile(f, t.line))} <small>(${esc(t.variable || 'while')} in ${esc(t.function)})</small></h4>
${kv(rows)}
${region}
${figure}
${tables}
</section>`;
}

async function fileSection(ctx: Ctx, f: PlanningFile, index: number, budget: { charts: number }): Promise<string> {
  const { s, o } = ctx;
  const loops = f.timeLoops.map((t) => s.timeLoopOf(f, t)!).filter((r) => !!r).sort((a, b) => a.rank - b.rank);
  const sections: string[] = [];
  for (const r of loops) {
    const focused = f.uri === o.focusUri && o.focusLine !== undefined && r.t.line === o.focusLine + 1;
    const chart = r.rank <= budget.charts;
    sections.push(await timeLoopSection(ctx, f, r, focused, chart));
  }
  const nests = f.loops.map((l) => s.nestAt(f.path, l.line)).filter((n): n is NestRow => !!n);
  const nestTable = nests.length > 0
    ? table(NEST_HEAD, nests.map((n) => nestCells(ctx, n))).replace(/<tr><td class="label"><a href="#(N\d+)">/g, '<tr id="$1"><td class="label"><a href="#$1">')
    : '<p>No loop nest found in this file.</p>';
  return `<section class="file" id="F${index + 1}">
<h3>${esc(ctx.show(f.path))} <small>${esc(f.language)}</small></h3>
${sections.join('\n') || '<p>No time loop found in this file.</p>'}
<h4>Loop nests</h4>
${nestTable}
</section>`;
}

function defaultHref(show: (p: string) => string): (p: SourcePlace) => string {
  // The HTML file: the file's relative path (editors and browsers open it; the text beside it is path:line).
  return (p) => encodeURI(show(p.path)).replace(/#/g, '%23').replace(/\?/g, '%3F');
}

export async function renderPlanning(data: PlanningData | undefined, o: RenderOptions): Promise<string> {
  const csp = `default-src 'none'; img-src ${o.cspSource} data:; style-src ${o.cspSource} 'unsafe-inline';`;
  let body: string;
  if (!data || o.message) {
    body = `<p>${esc(o.message ?? 'No data.')}</p>`;
  } else if (data.files.length === 0) {
    body = '<p>No analysed C, C++ or Fortran document yet: open one, or run <em>Offload Ledger: Check Workspace</em>.</p>';
  } else {
    const show = o.displayPath ?? ((p: string) => p);
    const href = o.sourceHref ?? defaultHref(show);
    const s = summarise(data);
    const ctx: Ctx = {
      o,
      s,
      show,
      href,
      src: (p) => `<a class="src" href="${esc(href(p))}">${esc(show(p.path))}:${p.line}</a>`,
      markHref: (t) => {
        if (!o.chartsOpenSource) return `#${'nest' in t ? t.nest.label : t.timeLoop.label}`;
        return 'nest' in t ? href(placeOfFile(t.nest.file, t.nest.loop.line)) : href(placeOfFile(t.timeLoop.file, t.timeLoop.t.line));
      },
    };
    const best = new Map<PlanningFile, number>();
    for (const r of s.timeLoops) if (!best.has(r.file)) best.set(r.file, r.rank);
    const files = [...data.files].sort((a, b) => Number(b.uri === o.focusUri) - Number(a.uri === o.focusUri) || (best.get(a) ?? Infinity) - (best.get(b) ?? Infinity) || a.path.localeCompare(b.path));
    const budget = { charts: o.detailCharts ?? 12 };
    const fileParts: string[] = [];
    for (const [k, f] of files.entries()) fileParts.push(await fileSection(ctx, f, k, budget));
    const charted = Math.min(budget.charts, s.timeLoops.length);
    body = `<nav><a href="#summary">Summary</a> · <a href="#plans">Time loops</a> · <a href="#roofline">Roofline</a> · <a href="#loops">Loop nests</a> · <a href="#findings">Findings</a> · <a href="#before-after">Before/after</a> · <a href="#files">Files</a></nav>
<h2 id="summary">Project summary</h2>
${await summarySection(ctx, data)}
<h2 id="files">Per file</h2>
${s.timeLoops.length > charted ? `<p class="note">Detail charts for the ${charted} time loops with the most time per step; the others show their figures in tables.</p>` : ''}
${fileParts.join('\n')}`;
  }
  const note = data && !data.estimatesAvailable ? '<p class="note">Times and speedups appear once the analysis core estimates them; the bytes below are exact for the bound sizes.</p>' : '';
  return `<!DOCTYPE html>
<html lang="en"><head><meta charset="utf-8">
<meta http-equiv="Content-Security-Policy" content="${csp}">
<title>Offload Ledger: Planning</title>
<style>
body { font-family: var(--vscode-font-family, sans-serif); color: var(--vscode-foreground, #222); background: var(--vscode-editor-background, #fff); padding: 0 1em; }
a { color: var(--vscode-textLink-foreground, #2962a8); }
table { border-collapse: collapse; margin: .5em 0; } th, td { text-align: left; padding: 2px 10px 2px 0; vertical-align: top; }
table.ranked td, table.ranked th, table.transfers td, table.transfers th, section.file table td, section.file table th { border-bottom: 1px solid var(--vscode-panel-border, #ddd); }
table.ranked td, table.transfers td { white-space: nowrap; } td.message { white-space: normal; min-width: 30em; max-width: 60em; font-size: 90%; } td.label, .label { font-weight: bold; }
section.timeloop { border-left: 3px solid transparent; padding-left: .8em; margin: 1em 0; } section.focus { border-left-color: var(--vscode-focusBorder, ${COLORS.device}); }
section.file { margin-top: 2em; } tr:target, section:target { background: var(--vscode-editor-findMatchHighlightBackground, #fff3c4); }
svg.marks { max-width: 100%; height: auto; } svg text { fill: var(--vscode-foreground, #222); }
figure { margin: .5em 0; }
.sev.error { color: var(--vscode-errorForeground, #c2413b); } .sev.warning { color: var(--vscode-editorWarning-foreground, #b7791f); }
.note { opacity: .8; font-style: italic; } small { opacity: .7; font-weight: normal; }
ul.machine { margin: .3em 0; }
</style></head>
<body><h1>Offload Ledger: planning</h1>
${data ? `<p>Machine profile <code>${esc(data.profile)}</code>, baseline ${esc(data.baseline || 'node')}. Every figure is an estimate from a named model (docs/cost-model.md); measure on the target machine to decide.</p>` : ''}${note}
${body}
</body></html>`;
}
