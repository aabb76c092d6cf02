/**
 * The Vega-Lite specifications of the planning report's charts, built from the planning data.
 * Every value a chart shows is a figure of the data (the core's) or of the machine profile; the
 * charts are drawn by Vega (vega.ts), never by hand.
 *
 * - The roofline (Williams, Waterman & Patterson, CACM 52(4), 2009): log–log axes, attainable
 *   flop/s = min(peak, bandwidth × intensity) for the device and the host, and the link as a third
 *   roof over the intensity a step has per byte crossing the link. Each loop nest is two points (its
 *   device and its host intensity) on the roof it is estimated against, sized by its share of the
 *   step; each time loop that moves data every step is a link point, as written and with the
 *   suggested data region, joined by a rule (the move the region makes).
 * - Before/after: bytes across the link per step by array and by construct, as written beside
 *   the same with the suggested region, and one step's time split into the estimate's terms.
 */
import type { TopLevelSpec } from 'vega-lite';
import type { PlanningMachine, ReportTimeLoop, ReportTransfer } from '../lsp/protocol';
import { byteUnit, bytes, seconds } from './format';
import type { NestRow, TimeLoopRow } from './summary';
import { STEP_TERMS } from '../core/estimate/terms';

export const COLORS = {
  device: '#3b82c4',
  host: '#c2413b',
  link: '#d9822b',
  toDevice: '#3b82c4',
  toHost: '#d9822b',
  kernels: '#3b82c4',
  launches: '#8e6cc8',
  transfers: '#d9822b',
  hostCode: '#c2413b',
  hostOnly: '#6b7280',
} as const;

export const PLANS = { written: 'as written', region: 'with the suggested region' } as const;

export type Side = 'device' | 'host' | 'link';
export type Precision = 'double' | 'single';

export interface Roof {
  id: string;
  side: Side;
  /** "node" or "one core" for the host; empty otherwise. */
  scope: string;
  precision: Precision;
  /** Bytes per second: memory bandwidth, or the link's for the link roof. */
  bandwidth: number;
  /** Flop/s where the roof turns flat. */
  peak: number;
}

export interface RooflinePoint {
  label: string;
  side: Side;
  plan: string;
  intensity: number;
  attainable: number;
  /** Share of the step (0..1); null when the nest runs in no time loop. */
  share: number | null;
  roof: string;
  href: string;
}

/** Host roofs a nest is estimated against: the whole node when the baseline is the node and a directive parallelises it, else one core. */
function hostScope(m: PlanningMachine, parallel: boolean | undefined): 'node' | 'one core' {
  return m.baseline === 'node' && parallel !== false ? 'node' : 'one core';
}

function hostFigures(m: PlanningMachine, scope: 'node' | 'one core', precision: Precision): { bandwidth: number; peak: number } {
  const peak = precision === 'single' ? m.host.peakSingle : m.host.peakDouble;
  return scope === 'node' ? { bandwidth: m.host.bandwidthNode, peak } : { bandwidth: m.host.bandwidthCore, peak: peak / m.host.cores };
}

const roofId = (side: Side, scope: string, precision: Precision): string => `${side}${scope ? ` (${scope})` : ''}, ${precision} precision`;

/** The roofs the chart draws: the device's and the link's, and the host's at each scope its nests use, for each precision present. */
export function roofs(m: PlanningMachine, nests: NestRow[]): Roof[] {
  const precisions = [...new Set<Precision>(nests.map((n) => n.loop.precision ?? 'double'))];
  if (precisions.length === 0) precisions.push('double');
  precisions.sort();
  const scopes = [...new Set(nests.map((n) => hostScope(m, n.loop.parallel)))];
  if (scopes.length === 0) scopes.push(hostScope(m, true));
  const out: Roof[] = [];
  for (const precision of precisions) {
    const peak = precision === 'single' ? m.device.peakSingle : m.device.peakDouble;
    out.push({ id: roofId('device', '', precision), side: 'device', scope: '', precision, bandwidth: m.device.bandwidth, peak });
    for (const scope of scopes.sort()) out.push({ id: roofId('host', scope, precision), side: 'host', scope, precision, ...hostFigures(m, scope, precision) });
  }
  // The link feeds the device: its roof turns flat at the device's peak (double precision unless every nest is single).
  const linkPrecision: Precision = precisions.includes('double') ? 'double' : 'single';
  const devicePeak = linkPrecision === 'single' ? m.device.peakSingle : m.device.peakDouble;
  out.push({ id: roofId('link', '', linkPrecision), side: 'link', scope: '', precision: linkPrecision, bandwidth: m.link.bandwidth, peak: devicePeak });
  return out;
}

export const attainable = (r: Roof, intensity: number): number => Math.min(r.peak, r.bandwidth * intensity);

export type LinkTarget = { nest: NestRow } | { timeLoop: TimeLoopRow };

export interface RooflineChart {
  spec: TopLevelSpec;
  roofs: Roof[];
  points: RooflinePoint[];
  /** Nests with no floating-point work (or no intensity): a log axis has no place for intensity 0. */
  unplaced: NestRow[];
  /** Points beyond the right edge (a step that moves a few bytes a step: its link intensity runs to millions). */
  offChart: RooflinePoint[];
}

const decadeBelow = (x: number): number => 10 ** Math.floor(Math.log10(x));
const decadeAbove = (x: number): number => 10 ** Math.ceil(Math.log10(x));

/** Time spent in transfers as a share of the step, as written and with the region (the estimate's terms). */
function transferShares(t: ReportTimeLoop): { written: number | null; region: number | null } {
  const e = t.estimate;
  const written = e?.transferSeconds != null && e.deviceSeconds ? e.transferSeconds / e.deviceSeconds : null;
  const w = t.step?.withRegionSeconds;
  const total = w ? w.kernels + w.launches + w.transfers + w.host : 0;
  return { written, region: w && total > 0 ? w.transfers / total : null };
}

export function rooflineChart(m: PlanningMachine, nests: NestRow[], timeLoops: TimeLoopRow[], href: (t: LinkTarget) => string, labelled = 12): RooflineChart {
  const rs = roofs(m, nests);
  const roofOf = (side: Side, scope: string, precision: Precision): Roof => rs.find((r) => r.side === side && r.scope === scope && r.precision === precision)!;
  const points: RooflinePoint[] = [];
  const unplaced: NestRow[] = [];
  for (const n of nests) {
    const precision = n.loop.precision ?? 'double';
    const ai = n.loop.arithmeticIntensity;
    let placed = false;
    const link = href({ nest: n });
    if (ai.device !== undefined && ai.device > 0) {
      const roof = roofOf('device', '', precision);
      points.push({ label: n.label, side: 'device', plan: 'loop nest', intensity: ai.device, attainable: attainable(roof, ai.device), share: n.share ? n.share.share : null, roof: roof.id, href: link });
      placed = true;
    }
    if (ai.host !== undefined && ai.host > 0) {
      const roof = roofOf('host', hostScope(m, n.loop.parallel), precision);
      points.push({ label: n.label, side: 'host', plan: 'loop nest', intensity: ai.host, attainable: attainable(roof, ai.host), share: n.share ? n.share.hostShare : null, roof: roof.id, href: link });
      placed = true;
    }
    if (!placed) unplaced.push(n);
  }
  const linkRoof = rs.find((r) => r.side === 'link')!;
  const moves: { label: string; x: number; y: number; x2: number; y2: number }[] = [];
  for (const r of timeLoops) {
    const s = r.t.step;
    if (!s || s.flops <= 0 || s.linkBytes <= 0) continue;
    const link = href({ timeLoop: r });
    const shares = transferShares(r.t);
    const before = s.flops / s.linkBytes;
    points.push({ label: r.label, side: 'link', plan: 'time loop as written', intensity: before, attainable: attainable(linkRoof, before), share: shares.written, roof: linkRoof.id, href: link });
    if (s.linkBytesWithRegion !== null && s.linkBytesWithRegion > 0 && s.linkBytesWithRegion < s.linkBytes) {
      const after = s.flops / s.linkBytesWithRegion;
      points.push({ label: `${r.label}′`, side: 'link', plan: 'time loop with region', intensity: after, attainable: attainable(linkRoof, after), share: shares.region, roof: linkRoof.id, href: link });
      moves.push({ label: `${r.label}′`, x: before, y: attainable(linkRoof, before), x2: after, y2: attainable(linkRoof, after) });
    }
  }

  // The right edge: a decade past the last ridge or nest; a link point beyond it is listed, not drawn.
  const ridges = rs.filter((r) => r.side !== 'link' || points.some((p) => p.side === 'link')).map((r) => r.peak / r.bandwidth);
  const edge = decadeAbove(Math.max(...ridges, ...points.filter((p) => p.side !== 'link').map((p) => p.intensity)) * 10);
  const offChart = points.filter((p) => p.intensity > edge);
  points.splice(0, points.length, ...points.filter((p) => p.intensity <= edge));
  const xs = [...points.map((p) => p.intensity), ...ridges];
  const xlo = decadeBelow(Math.min(...xs) / 1.5);
  const xhi = Math.min(edge, decadeAbove(Math.max(...xs) * 1.5));
  const memoryRoofs = rs.filter((r) => r.side !== 'link');
  const ylo = decadeBelow(Math.min(...points.map((p) => p.attainable), ...memoryRoofs.map((r) => attainable(r, xlo))));
  const yhi = decadeAbove(Math.max(...rs.map((r) => r.peak)) * 1.5);
  const decades = (lo: number, hi: number): number[] => {
    const out: number[] = [];
    for (let e = Math.round(Math.log10(lo)); e <= Math.round(Math.log10(hi)); e++) out.push(Number(`1e${e}`));
    return out;
  };
  const X = { type: 'log', domain: [xlo, xhi], nice: false };
  const Y = { type: 'log', domain: [ylo, yhi], nice: false };
  const x = { field: 'x', type: 'quantitative', scale: X, axis: { title: 'arithmetic intensity (flop per byte; link: flop per byte crossing the link)', values: decades(xlo, xhi), format: '~g', tickRound: false, translate: 0 } };
  const y = { field: 'y', type: 'quantitative', scale: Y, axis: { title: 'attainable flop/s', values: decades(ylo, yhi), format: '~s', tickRound: false, translate: 0 } };
  const color = {
    field: 'side',
    type: 'nominal',
    scale: { domain: ['device', 'host', 'link'], range: [COLORS.device, COLORS.host, COLORS.link] },
    legend: { title: 'roof / point' },
  };
  const g = (v: number): string => Number(v.toPrecision(4)).toString();
  const roofRows = rs.flatMap((r) => {
    const ridge = r.peak / r.bandwidth;
    const desc = `roof ${r.id}: bandwidth ${g(r.bandwidth)} B/s, peak ${g(r.peak)} flop/s, ridge ${g(ridge)} flop/B`;
    return [xlo, ridge, xhi].map((v) => ({ x: v, y: attainable(r, v), id: r.id, side: r.side, precision: r.precision, desc }));
  });
  const pointRows = points.map((p) => ({
    x: p.intensity,
    y: p.attainable,
    label: p.label,
    side: p.side,
    plan: p.plan,
    share: p.share ?? 0,
    href: p.href,
    desc: `${p.label} ${p.side}: intensity ${g(p.intensity)} flop/B, attainable ${g(p.attainable)} flop/s${p.share !== null ? `, ${g(p.share * 100)}% of the step` : ', in no time loop'}, roof ${p.roof}`,
  }));
  const nestLabels = new Set(nests.slice(0, labelled).map((n) => n.label));
  const textRows = pointRows.filter((p) => (p.side === 'device' && nestLabels.has(p.label)) || p.side === 'link');
  const spec = {
    width: 620,
    height: 380,
    layer: [
      {
        data: { values: roofRows },
        mark: { type: 'line', clip: true, strokeWidth: 2 },
        encoding: {
          x, y, color,
          detail: { field: 'id' },
          strokeDash: { field: 'precision', type: 'nominal', scale: { domain: ['double', 'single'], range: [[1, 0], [6, 3]] }, legend: { title: 'precision' } },
          description: { field: 'desc' },
        },
      },
      ...(moves.some((m) => points.some((p) => p.label === m.label))
        ? [{ data: { values: moves.filter((m) => points.some((p) => p.label === m.label)) }, mark: { type: 'rule', color: COLORS.link, strokeDash: [2, 2], clip: true }, encoding: { x, y, x2: { field: 'x2' }, y2: { field: 'y2' } } }]
        : []),
      {
        data: { values: pointRows },
        mark: { type: 'point', filled: true, opacity: 0.7, stroke: '#fff', strokeWidth: 0.5, clip: true },
        encoding: {
          x, y, color,
          size: { field: 'share', type: 'quantitative', scale: { domain: [0, 1], range: [24, 900] }, legend: { title: 'share of the step', format: '.0%', values: [0.1, 0.5, 1] } },
          shape: { field: 'plan', type: 'nominal', scale: { domain: ['loop nest', 'time loop as written', 'time loop with region'], range: ['circle', 'square', 'triangle-up'] }, legend: { title: 'point', labelLimit: 260 } },
          href: { field: 'href' },
          description: { field: 'desc' },
        },
      },
      {
        data: { values: textRows },
        mark: { type: 'text', align: 'left', dx: 7, dy: -6, fontSize: 11, clip: true },
        encoding: { x, y, text: { field: 'label' }, href: { field: 'href' } },
      },
    ],
  };
  return { spec: spec as unknown as TopLevelSpec, roofs: rs, points, unplaced, offChart };
}

/** A chart: its Vega-Lite specification, with the data of each named source beside it. */
export interface Chart {
  spec: TopLevelSpec | Record<string, unknown>;
  datasets: Record<string, unknown[]>;
}

interface BarRow {
  plan: string;
  key: string;
  order: number;
  direction: string;
  value: number;
  href: string;
}

const DIRECTIONS = { toDevice: 'to the device', toHost: 'to the host' } as const;

/** A faceted bar chart: one column per plan, one bar per key, stacked by direction, its total written at its end. */
function beforeAfterFacet(title: string, name: string, rows: BarRow[], plans: string[], unit: { name: string; size: number }): Chart {
  const totals = new Map<string, number>();
  for (const r of rows) totals.set(`${r.plan}\n${r.key}`, (totals.get(`${r.plan}\n${r.key}`) ?? 0) + r.value);
  // Each bar says what it is, exactly (bytes per step, unrounded), for readers of the SVG and screen readers.
  const values = rows.map((r) => ({ ...r, value: r.value / unit.size, total: bytes(totals.get(`${r.plan}\n${r.key}`) ?? 0), desc: `${r.key}, ${r.plan}, ${r.direction}: ${r.value} B per step` }));
  const y = { field: 'key', type: 'nominal', title: null, sort: { field: 'order', op: 'min' }, axis: { labelLimit: 260 } };
  const spec = {
    title: { text: title, anchor: 'start', fontSize: 12, fontWeight: 'normal' },
    data: { name },
    facet: { column: { field: 'plan', type: 'nominal', title: null, sort: plans, header: { labelFontSize: 12 } } },
    spec: {
      width: 240,
      height: { step: 16 },
      layer: [
        {
          mark: { type: 'bar' },
          encoding: {
            y,
            x: { field: 'value', type: 'quantitative', aggregate: 'sum', title: `${unit.name} per step` },
            color: { field: 'direction', type: 'nominal', scale: { domain: Object.values(DIRECTIONS), range: [COLORS.toDevice, COLORS.toHost] }, legend: { title: null, orient: 'top' } },
            order: { field: 'direction' },
            href: { field: 'href' },
            description: { field: 'desc' },
          },
        },
        {
          transform: [{ aggregate: [{ op: 'sum', field: 'value', as: 'sum' }, { op: 'min', field: 'total', as: 'label' }], groupby: ['plan', 'key', 'order'] }],
          mark: { type: 'text', align: 'left', dx: 3, fontSize: 10 },
          encoding: { y: { ...y, sort: { field: 'order', op: 'min' } }, x: { field: 'sum', type: 'quantitative' }, text: { field: 'label' } },
        },
      ],
    },
  };
  return { spec, datasets: { [name]: values } };
}

export interface TransferGroupKey {
  /** What a bar is called: the array, or the construct's place. */
  key: string;
  href: string;
}

/**
 * The per-step bytes of one time loop grouped by a key (array or construct), as written and with
 * the suggested region. Every key of either plan gets a zero row in the other, so both columns list it.
 */
export function transferRows(t: ReportTimeLoop, group: (x: ReportTransfer & { inserted?: boolean }) => TransferGroupKey): BarRow[] {
  const sums = new Map<string, { plan: string; key: string; direction: string; value: number; href: string }>();
  const plans: [string, (ReportTransfer & { inserted?: boolean })[] | null][] = [[PLANS.written, t.transfers], [PLANS.region, t.step?.transfersWithRegion ?? null]];
  const keys = new Map<string, { href: string; total: number }>();
  for (const [plan, list] of plans) {
    for (const x of list ?? []) {
      if (x.bytes.value === null) continue;
      const g = group(x);
      const direction = DIRECTIONS[x.direction];
      const id = `${plan}\n${g.key}\n${direction}`;
      const e = sums.get(id) ?? { plan, key: g.key, direction, value: 0, href: g.href };
      e.value += x.bytes.value / x.everySteps;
      sums.set(id, e);
      const k = keys.get(g.key) ?? { href: g.href, total: 0 };
      if (plan === PLANS.written) k.total += x.bytes.value / x.everySteps;
      keys.set(g.key, k);
    }
  }
  const order = [...keys].sort((a, b) => b[1].total - a[1].total || a[0].localeCompare(b[0])).map(([k]) => k);
  const rows: BarRow[] = [...sums.values()].map((e) => ({ ...e, order: order.indexOf(e.key) }));
  for (const [plan, list] of plans) {
    if (!list) continue;
    for (const [k, v] of keys) rows.push({ plan, key: k, order: order.indexOf(k), direction: DIRECTIONS.toDevice, value: 0, href: v.href });
  }
  return rows;
}

/** The largest per-step byte total of any key in either plan: the unit of the chart follows from it. */
function maxBytes(rows: BarRow[]): number {
  const totals = new Map<string, number>();
  for (const r of rows) totals.set(`${r.plan}\n${r.key}`, (totals.get(`${r.plan}\n${r.key}`) ?? 0) + r.value);
  return Math.max(0, ...totals.values());
}

export interface StepTimes {
  hostOnly: number | null;
  written: { kernels: number; launches: number; transfers: number; host: number } | null;
  region: { kernels: number; launches: number; transfers: number; host: number } | null;
}

const TERMS = { hostOnly: 'host only', ...STEP_TERMS } as const;

function timeUnit(max: number): { name: string; size: number } {
  return max >= 1 ? { name: 's', size: 1 } : max >= 1e-3 ? { name: 'ms', size: 1e-3 } : max >= 1e-6 ? { name: 'µs', size: 1e-6 } : { name: 'ns', size: 1e-9 };
}

function stepTimeSpec(times: StepTimes): Chart | null {
  const rows: { plan: string; term: string; value: number; order: number }[] = [];
  if (times.hostOnly !== null) rows.push({ plan: 'host only', term: TERMS.hostOnly, value: times.hostOnly, order: 0 });
  const split = (plan: string, s: StepTimes['written']): void => {
    if (!s) return;
    (['kernels', 'launches', 'transfers', 'host'] as const).forEach((k, i) => rows.push({ plan, term: TERMS[k], value: s[k], order: i + 1 }));
  };
  split(PLANS.written, times.written);
  split(PLANS.region, times.region);
  if (rows.length === 0) return null;
  const totals = new Map<string, number>();
  for (const r of rows) totals.set(r.plan, (totals.get(r.plan) ?? 0) + r.value);
  const unit = timeUnit(Math.max(...totals.values()));
  const values = rows.map((r) => ({ ...r, value: r.value / unit.size, total: seconds(totals.get(r.plan) ?? 0), desc: `${r.plan}, ${r.term}: ${r.value} s per step` }));
  const y = { field: 'plan', type: 'nominal', title: null, sort: ['host only', PLANS.written, PLANS.region], axis: { labelLimit: 260 } };
  const spec = {
    title: { text: 'one time step, host only and with offload', anchor: 'start', fontSize: 12, fontWeight: 'normal' },
    data: { name: 'times' },
    width: 480,
    height: { step: 18 },
    layer: [
      {
        mark: { type: 'bar' },
        encoding: {
          y,
          x: { field: 'value', type: 'quantitative', aggregate: 'sum', title: `${unit.name} per step` },
          color: {
            field: 'term',
            type: 'nominal',
            scale: { domain: Object.values(TERMS), range: [COLORS.hostOnly, COLORS.kernels, COLORS.launches, COLORS.transfers, COLORS.hostCode] },
            legend: { title: null, orient: 'bottom', columns: 3, labelLimit: 240 },
          },
          order: { field: 'order' },
          description: { field: 'desc' },
        },
      },
      {
        transform: [{ aggregate: [{ op: 'sum', field: 'value', as: 'sum' }, { op: 'min', field: 'total', as: 'label' }], groupby: ['plan'] }],
        mark: { type: 'text', align: 'left', dx: 3, fontSize: 10 },
        encoding: { y, x: { field: 'sum', type: 'quantitative' }, text: { field: 'label' } },
      },
    ],
  };
  return { spec, datasets: { times: values } };
}

/** One time loop's before/after: bytes per step by array and by construct, and one step's time. */
export function timeLoopSpec(t: ReportTimeLoop, byArray: (x: ReportTransfer) => TransferGroupKey, byConstruct: (x: ReportTransfer & { inserted?: boolean }) => TransferGroupKey, times: StepTimes): Chart | null {
  const arrays = transferRows(t, byArray);
  const constructs = transferRows(t, byConstruct);
  const unit = byteUnit(Math.max(maxBytes(arrays), maxBytes(constructs)));
  const plans = t.step?.transfersWithRegion ? [PLANS.written, PLANS.region] : [PLANS.written];
  const parts: Chart[] = [];
  if (arrays.length > 0) {
    parts.push(beforeAfterFacet('bytes across the link per step, by array', 'arrays', arrays, plans, unit));
    parts.push(beforeAfterFacet('by construct (the directive that moves them)', 'constructs', constructs, plans, unit));
  }
  const time = stepTimeSpec(times);
  if (time) parts.push(time);
  if (parts.length === 0) return null;
  // The data goes in by name, so charts of the same shape share one compiled specification (vega.ts).
  return {
    spec: { vconcat: parts.map((p) => p.spec), spacing: 18, resolve: { scale: { color: 'independent' } } } as unknown as TopLevelSpec,
    datasets: Object.assign({}, ...parts.map((p) => p.datasets)),
  };
}

/** The project's time loops, bytes across the link per step as written and with the suggested region. */
export function projectTransfersSpec(rows: TimeLoopRow[], href: (r: TimeLoopRow) => string): Chart | null {
  const raw: BarRow[] = [];
  rows.forEach((r, order) => {
    const lists: [string, ReportTransfer[] | null][] = [[PLANS.written, r.t.transfers], [PLANS.region, r.t.step?.transfersWithRegion ?? null]];
    for (const [plan, list] of lists) {
      if (!list) continue;
      const sum = { toDevice: 0, toHost: 0 };
      for (const x of list) if (x.bytes.value !== null) sum[x.direction] += x.bytes.value / x.everySteps;
      for (const d of ['toDevice', 'toHost'] as const) raw.push({ plan, key: r.label, order, direction: DIRECTIONS[d], value: sum[d], href: href(r) });
    }
  });
  if (raw.every((x) => x.value === 0)) return null;
  const chart = beforeAfterFacet('bytes across the link per step, by time loop', 'loops', raw, [PLANS.written, PLANS.region], byteUnit(maxBytes(raw)));
  return { spec: chart.spec as unknown as TopLevelSpec, datasets: chart.datasets };
}
