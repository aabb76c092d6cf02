/**
 * The planning view as one HTML page with hand-made SVG charts: per time loop, the bytes each
 * array moves across the link per step, and — when the core estimates times — one step on the
 * host against one step with offload split into its terms, with and without the suggested data
 * region. Pure (no VS Code import) so tests render it directly; the page runs no script and
 * loads nothing (its CSP allows inline styles only).
 */
import type { PlanningData, PlanningFile, ReportLoop, ReportTimeLoop } from '../lsp/protocol';

export interface RenderOptions {
  cspSource: string;
  focusUri?: string;
  focusLine?: number;
  message?: string;
}

const esc = (s: string): string => s.replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/>/g, '&gt;').replace(/"/g, '&quot;');

const UNITS = ['B', 'KiB', 'MiB', 'GiB', 'TiB'];
export function bytes(n: number | null): string {
  if (n === null) return '—';
  let v = n;
  let u = 0;
  while (Math.abs(v) >= 1024 && u < UNITS.length - 1) {
    v /= 1024;
    u++;
  }
  return `${u === 0 ? v : v.toFixed(1)} ${UNITS[u]}`;
}

export function seconds(s: number | null | undefined): string {
  if (s === null || s === undefined) return '—';
  const a = Math.abs(s);
  const [v, unit] = a >= 1 ? [s, 's'] : a >= 1e-3 ? [s * 1e3, 'ms'] : a >= 1e-6 ? [s * 1e6, 'µs'] : [s * 1e9, 'ns'];
  return `${Number(v.toPrecision(3))} ${unit}`;
}

const factor = (x: number): string => Number(x.toPrecision(2)).toString();

interface Bar {
  label: string;
  segments: { value: number; color: string; title: string }[];
}

/** A horizontal bar chart; each bar is a stack of segments. Values are drawn on a linear scale. */
export function barChart(bars: Bar[], format: (v: number) => string, title: string): string {
  if (bars.length === 0) return '';
  const labelWidth = 140;
  const width = 640;
  const barHeight = 18;
  const gap = 8;
  const max = Math.max(...bars.map((b) => b.segments.reduce((a, s) => a + s.value, 0)), 1e-30);
  const scale = (width - labelWidth - 90) / max;
  const height = bars.length * (barHeight + gap) + gap;
  const rows = bars.map((b, i) => {
    const y = gap + i * (barHeight + gap);
    let x = labelWidth;
    const rects = b.segments.map((s) => {
      const w = Math.max(s.value * scale, s.value > 0 ? 1 : 0);
      const r = `<rect x="${x.toFixed(1)}" y="${y}" width="${w.toFixed(1)}" height="${barHeight}" fill="${s.color}"><title>${esc(s.title)}</title></rect>`;
      x += w;
      return r;
    });
    const total = b.segments.reduce((a, s) => a + s.value, 0);
    return `<text x="${labelWidth - 6}" y="${y + 13}" text-anchor="end">${esc(b.label)}</text>${rects.join('')}<text x="${(x + 6).toFixed(1)}" y="${y + 13}">${esc(format(total))}</text>`;
  });
  return `<svg role="img" aria-label="${esc(title)}" width="100%" style="max-width:${width}px" viewBox="0 0 ${width} ${height}" xmlns="http://www.w3.org/2000/svg"><title>${esc(title)}</title>${rows.join('')}</svg>`;
}

const COLORS = { toDevice: '#3b82c4', toHost: '#d9822b', kernels: '#3b82c4', launches: '#8e6cc8', transfers: '#d9822b', host: '#c2413b', hostOnly: '#6b7280' };

function transferChart(t: ReportTimeLoop): string {
  const perArray = new Map<string, { toDevice: number; toHost: number }>();
  for (const x of t.transfers) {
    if (x.bytes.value === null) continue;
    const e = perArray.get(x.array) ?? { toDevice: 0, toHost: 0 };
    e[x.direction] += x.bytes.value / x.everySteps;
    perArray.set(x.array, e);
  }
  const bars: Bar[] = [...perArray].map(([array, e]) => ({
    label: array,
    segments: [
      { value: e.toDevice, color: COLORS.toDevice, title: `${array}: ${bytes(e.toDevice)} to the device per step` },
      { value: e.toHost, color: COLORS.toHost, title: `${array}: ${bytes(e.toHost)} to the host per step` },
    ],
  }));
  return barChart(bars, (v) => `${bytes(v)}/step`, 'bytes across the link per step, by array');
}

function timeChart(t: ReportTimeLoop): string {
  const e = t.estimate;
  if (!e) return '';
  const bars: Bar[] = [{ label: 'host only', segments: [{ value: e.hostSeconds ?? 0, color: COLORS.hostOnly, title: `one step on the host: ${seconds(e.hostSeconds)}` }] }];
  bars.push({
    label: 'with offload',
    segments: [
      { value: e.kernelSeconds ?? 0, color: COLORS.kernels, title: `kernels ${seconds(e.kernelSeconds)}` },
      { value: e.launchSeconds ?? 0, color: COLORS.launches, title: `launches ${seconds(e.launchSeconds)}` },
      { value: e.transferSeconds ?? 0, color: COLORS.transfers, title: `transfers ${seconds(e.transferSeconds)}` },
      { value: e.hostLeftSeconds ?? 0, color: COLORS.host, title: `host code left in the loop ${seconds(e.hostLeftSeconds)}` },
    ],
  });
  if (e.withRegion?.deviceSeconds != null) {
    bars.push({ label: 'with data region', segments: [{ value: e.withRegion.deviceSeconds, color: COLORS.kernels, title: `with the suggested data region: ${seconds(e.withRegion.deviceSeconds)}` }] });
  }
  return barChart(bars, seconds, 'one time step: host only against offload');
}

function legend(items: [string, string][]): string {
  return `<p class="legend">${items.map(([c, t]) => `<span><i style="background:${c}"></i>${esc(t)}</span>`).join('')}</p>`;
}

function timeLoopSection(f: PlanningFile, t: ReportTimeLoop, focused: boolean): string {
  const e = t.estimate;
  const speed = e?.speedup ? `${factor(e.speedup.low)}–${factor(e.speedup.high)}× (expected ${factor(e.speedup.expected)}×), bound by ${e.bound ?? '—'}` : 'not estimated';
  const rows: [string, string][] = [
    ['steps', t.steps.value !== null ? t.steps.value.toLocaleString('en-US') : t.steps.expr],
    ['to the device per step', t.perStep.toDevice.value !== null ? bytes(t.perStep.toDevice.value) : `${t.perStep.toDevice.expr} B`],
    ['to the host per step', t.perStep.toHost.value !== null ? bytes(t.perStep.toHost.value) : `${t.perStep.toHost.expr} B`],
    ['once', `${bytes(t.once.toDevice.value)} in · ${bytes(t.once.toHost.value)} out`],
    ['resident on the device', bytes(t.residentBytes)],
    ['speedup', speed],
  ];
  if (e?.withRegion?.speedup) rows.push(['with the suggested data region', `${factor(e.withRegion.speedup.low)}–${factor(e.withRegion.speedup.high)}×`]);
  if (e?.runsPerDevice != null) rows.push(['independent runs per device', String(e.runsPerDevice)]);
  const region = t.dataRegion ? `<p>Suggested data region: <code>${esc(t.dataRegion.clauses.map((c) => `${c.clause}(${c.section ?? c.array})`).join(' '))}</code></p>` : '';
  return `<section class="${focused ? 'focus' : ''}" id="L${t.line}">
<h3>Time loop at line ${t.line} <small>(${esc(t.variable || 'while')} in ${esc(t.function)}, ${esc(f.path)})</small></h3>
<table>${rows.map(([k, v]) => `<tr><th>${esc(k)}</th><td>${esc(v)}</td></tr>`).join('')}</table>
${region}
${t.transfers.length > 0 ? `<h4>Bytes across the link per step</h4>${legend([[COLORS.toDevice, 'to the device'], [COLORS.toHost, 'to the host']])}${transferChart(t)}` : '<p>No bytes cross the link inside this loop.</p>'}
${e ? `<h4>One step</h4>${legend([[COLORS.hostOnly, 'host only'], [COLORS.kernels, 'kernels'], [COLORS.launches, 'launches'], [COLORS.transfers, 'transfers'], [COLORS.host, 'host code in the loop']])}${timeChart(t)}` : ''}
</section>`;
}

function loopsTable(loops: ReportLoop[]): string {
  if (loops.length === 0) return '';
  const head = '<tr><th>line</th><th>function</th><th>loop</th><th>offloaded</th><th>iterations</th><th>flop/it</th><th>B/it device</th><th>AI device</th><th>speedup</th></tr>';
  const rows = loops.map((l) => {
    const s = l.estimate?.speedup ? `${factor(l.estimate.speedup.low)}–${factor(l.estimate.speedup.high)}×` : '—';
    const it = l.iterations.value !== null ? l.iterations.value.toLocaleString('en-US') : l.iterations.expr;
    return `<tr><td>${l.line}</td><td>${esc(l.function)}</td><td>${esc(l.variables.join(', '))}</td><td>${l.offloaded ? esc(l.directive ?? 'yes') : 'no'}</td><td>${esc(it)}</td><td>${l.flopsPerIteration}</td><td>${l.bytesPerIteration.device}</td><td>${l.arithmeticIntensity.device?.toFixed(2) ?? '—'}</td><td>${s}</td></tr>`;
  });
  return `<table class="loops">${head}${rows.join('')}</table>`;
}

export function renderPlanning(data: PlanningData | undefined, o: RenderOptions): string {
  const csp = `default-src 'none'; img-src ${o.cspSource} data:; style-src ${o.cspSource} 'unsafe-inline';`;
  let body: string;
  if (!data || o.message) {
    body = `<p>${esc(o.message ?? 'No data.')}</p>`;
  } else if (data.files.length === 0) {
    body = '<p>No analysed C, C++ or Fortran document yet: open one, or run <em>Offload Ledger: Check Workspace</em>.</p>';
  } else {
    const files = [...data.files].sort((a, b) => Number(b.uri === o.focusUri) - Number(a.uri === o.focusUri));
    body = files
      .map((f) => {
        const loops = f.timeLoops.map((t) => timeLoopSection(f, t, f.uri === o.focusUri && o.focusLine !== undefined && t.line === o.focusLine + 1)).join('\n');
        return `<h2>${esc(f.path)}</h2>${loops || '<p>No time loop found in this file.</p>'}<h3>Loop nests</h3>${loopsTable(f.loops)}`;
      })
      .join('\n');
  }
  const note = data && !data.estimatesAvailable ? '<p class="note">Times and speedups appear once the analysis core estimates them; the bytes below are exact for the bound sizes.</p>' : '';
  return `<!DOCTYPE html>
<html lang="en"><head><meta charset="utf-8">
<meta http-equiv="Content-Security-Policy" content="${csp}">
<title>Offload Ledger: Planning</title>
<style>
body { font-family: var(--vscode-font-family, sans-serif); color: var(--vscode-foreground, #222); padding: 0 1em; }
table { border-collapse: collapse; margin: .5em 0; } th, td { text-align: left; padding: 2px 10px 2px 0; }
table.loops td, table.loops th { border-bottom: 1px solid var(--vscode-panel-border, #ddd); }
section { border-left: 3px solid transparent; padding-left: .8em; margin: 1em 0; } section.focus { border-left-color: var(--vscode-focusBorder, #3b82c4); }
svg text { font-size: 12px; fill: var(--vscode-foreground, #222); }
.legend span { margin-right: 1em; } .legend i { display: inline-block; width: .8em; height: .8em; margin-right: .3em; }
.note { opacity: .8; font-style: italic; } small { opacity: .7; font-weight: normal; }
</style></head>
<body><h1>Offload Ledger: planning</h1>
${data ? `<p>Machine profile <code>${esc(data.profile)}</code>, baseline ${esc(data.baseline || 'node')}.</p>` : ''}${note}
${body}
</body></html>`;
}
