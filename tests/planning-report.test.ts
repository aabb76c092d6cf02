/**
 * The planning report of the bundled demo (examples/), read back from its SVG: the roofline's
 * marks are parsed (positions through the axes' own tick values, aria labels, paths), never its
 * pixels compared with a picture. Each expected figure names its source.
 */
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { applyLineEdits } from '../server/src/core/data/edits';
import { presetProfile } from '../server/src/core/machine/profiles';
import { editedLineToOriginal } from '../server/src/lsp/view/planning';
import { ROOT, runCli } from './helpers';

interface Mark {
  /** The element's tag and attributes, and its absolute offset from the ancestors' translate(). */
  tag: string;
  attrs: Record<string, string>;
  x: number;
  y: number;
  text: string;
  /** Classes of the enclosing groups, innermost last, and the index of the enclosing axis group. */
  groups: string[];
  axis: number;
}

/** Every path, line and text element of one SVG with its absolute translate offset. */
function marks(svg: string): Mark[] {
  const out: Mark[] = [];
  const stack: { x: number; y: number; cls: string; axis: number }[] = [{ x: 0, y: 0, cls: '', axis: -1 }];
  let axes = -1;
  const re = /<(\/?)([a-zA-Z:]+)((?:\s+[\w:-]+="[^"]*")*)\s*(\/?)>([^<]*)/g;
  for (let m = re.exec(svg); m; m = re.exec(svg)) {
    const [, close, tag, rawAttrs, selfClose, after] = m;
    if (close) {
      if (tag === 'g' || tag === 'a' || tag === 'svg') stack.pop();
      continue;
    }
    const attrs: Record<string, string> = {};
    for (const a of rawAttrs.matchAll(/([\w:-]+)="([^"]*)"/g)) attrs[a[1]] = a[2];
    const top = stack[stack.length - 1];
    const t = /translate\(([-\d.e]+),([-\d.e]+)\)/.exec(attrs.transform ?? '');
    const x = top.x + (t ? Number(t[1]) : 0);
    const y = top.y + (t ? Number(t[2]) : 0);
    if (tag === 'g' || tag === 'a' || tag === 'svg') {
      const cls = attrs.class ?? '';
      const isAxis = /(^|\s)role-axis(\s|$)/.test(cls);
      if (isAxis) axes++;
      if (!selfClose) stack.push({ x, y, cls, axis: isAxis ? axes : top.axis });
      continue;
    }
    out.push({ tag, attrs, x, y, text: after, groups: stack.map((s) => s.cls).filter(Boolean), axis: top.axis });
  }
  return out;
}

const SI: Record<string, number> = { '': 1, k: 1e3, M: 1e6, G: 1e9, T: 1e12, P: 1e15, m: 1e-3 };
const siValue = (s: string): number => {
  const m = /^([\d.]+)([kMGTPm]?)$/.exec(s.trim());
  if (!m) throw new Error(`not a tick label: ${s}`);
  return Number(m[1]) * SI[m[2]];
};

/** A log axis read from its ticks: each tick's position against the value its label prints. */
function logAxis(ms: Mark[], axis: number, along: 'x' | 'y'): { toValue: (px: number) => number; fromValue: (v: number) => number } {
  const ticks = ms.filter((m) => m.axis === axis && m.tag === 'line' && m.groups.some((g) => g.includes('role-axis-tick')));
  const labels = ms.filter((m) => m.axis === axis && m.tag === 'text' && m.groups.some((g) => g.includes('role-axis-label')));
  expect(ticks.length).toBe(labels.length);
  const pts = ticks.map((t, k) => ({ px: t[along], lv: Math.log10(siValue(labels[k].text)) }));
  // Least squares px = a + b·log10(v); the ticks of a log scale lie on one line exactly.
  const n = pts.length;
  const mx = pts.reduce((s, p) => s + p.lv, 0) / n;
  const my = pts.reduce((s, p) => s + p.px, 0) / n;
  const b = pts.reduce((s, p) => s + (p.lv - mx) * (p.px - my), 0) / pts.reduce((s, p) => s + (p.lv - mx) ** 2, 0);
  const a = my - b * mx;
  for (const p of pts) expect(Math.abs(a + b * p.lv - p.px)).toBeLessThan(0.01);
  return { toValue: (px) => 10 ** ((px - a) / b), fromValue: (v) => a + b * Math.log10(v) };
}

/** Path vertices of a line mark ("M x,y L x,y …"), absolute. */
const vertices = (m: Mark): [number, number][] => [...m.attrs.d.matchAll(/[ML]([-\d.e]+),([-\d.e]+)/g)].map((v) => [m.x + Number(v[1]), m.y + Number(v[2])]);

/** Relative difference, for figures drawn at three decimals of a pixel. */
const rel = (a: number, b: number): number => Math.abs(a - b) / Math.abs(b);

const svgOf = (html: string, label: RegExp): string => {
  const all = html.match(/<svg[\s\S]*?<\/svg>/g) ?? [];
  const found = all.find((s) => label.test(/aria-label="([^"]*)"/.exec(s)?.[1] ?? ''));
  if (!found) throw new Error(`no chart labelled ${label}`);
  return found;
};

describe('planning report of the demo (check --format html examples)', () => {
  let html = '';
  let json: { files: { path: string; loops: { line: number; arithmeticIntensity: { device?: number; host?: number } }[] }[] };
  let roofline: Mark[] = [];
  let x: ReturnType<typeof logAxis>;
  let y: ReturnType<typeof logAxis>;
  /** Nest labels (N1…) to their path:line, from the rows of the page's tables. */
  const rows = new Map<string, string>();

  beforeAll(() => {
    const r = runCli(['check', '--format', 'html', 'examples']);
    // hall_stale_acc.c is broken on purpose: its stale-data errors give exit status 1 (README.md).
    expect(r.status).toBe(1);
    html = r.stdout;
    json = JSON.parse(runCli(['check', '--format', 'json', 'examples']).stdout);
    roofline = marks(svgOf(html, /^roofline/));
    // The first two axes hold the grid lines, the next two the ticks and labels: x, then y.
    const tickAxes = [...new Set(roofline.filter((m) => m.groups.some((g) => g.includes('role-axis-tick'))).map((m) => m.axis))];
    x = logAxis(roofline, tickAxes[0], 'x');
    y = logAxis(roofline, tickAxes[1], 'y');
    for (const m of html.matchAll(/<tr id="(N\d+)">.*?<a class="src" href="[^"]*">([^<]+)<\/a>/g)) rows.set(m[1], m[2]);
  }, 120_000);

  it('puts the project summary first: time loops, roofline, loop nests, findings, before/after, then each file', () => {
    const order = ['id="plans"', 'id="roofline"', 'id="loops"', 'id="findings"', 'id="before-after"', 'id="files"'].map((s) => html.indexOf(s));
    expect(order.every((p) => p > 0)).toBe(true);
    expect([...order].sort((a, b) => a - b)).toEqual(order);
    // Time loops rank by their step as written. The serial hall model (examples/serial) runs on one
    // core today, the slowest step of the demo; then the naive hall ports, which move the most per
    // step: 2.1 GiB each (README.md demo summary: 1.4 GiB + 732.4 MiB).
    const at = (k: number): string => new RegExp(`<tr><td class="label"><a href="#T${k}">T${k}<\\/a><\\/td><td><a class="src" href="([^"]+)">`).exec(html)![1];
    expect(at(1)).toBe('examples/serial/hall_serial.c');
    expect([at(2), at(3)].sort()).toEqual(['examples/hall/hall_naive_acc.c', 'examples/hall/hall_naive_omp.c']);
  });

  it('draws every loop nest at its arithmetic intensity, device and host, on the roof it is estimated against', () => {
    const points = roofline.filter((m) => m.attrs['aria-roledescription'] === 'point');
    const ai = new Map<string, { device?: number; host?: number }>();
    for (const f of json.files) for (const l of f.loops) ai.set(`${f.path}:${l.line}`, l.arithmeticIntensity);
    const roofs = roofFigures();
    let checked = 0;
    for (const p of points) {
      const m = /^(N\d+) (device|host): .*roof (.+)$/.exec(p.attrs['aria-label']);
      if (!m) continue;
      const [, label, side, roofName] = m;
      const expected = ai.get(rows.get(label)!)![side as 'device' | 'host']!;
      // The JSON report's intensity (six significant digits) against the point's place on the log axis.
      expect(rel(x.toValue(p.x), expected)).toBeLessThan(1e-3);
      // On its roof: min(peak, bandwidth × intensity) with the profile's figures.
      const roof = roofs.get(roofName)!;
      expect(rel(y.toValue(p.y), Math.min(roof.peak, roof.bandwidth * expected))).toBeLessThan(1e-3);
      checked++;
    }
    // Every nest with floating-point work is on the chart twice (device and host).
    const withWork = json.files.flatMap((f) => f.loops).filter((l) => (l.arithmeticIntensity.device ?? 0) > 0);
    expect(checked).toBe(2 * withWork.length);
    expect(withWork.length).toBeGreaterThan(20);
  });

  it('puts the roofs at the profile figures (server/src/core/machine/profiles.ts, pcie4-hbm2e)', () => {
    const lines = roofline.filter((m) => m.attrs['aria-roledescription'] === 'line mark');
    const expected = roofFigures();
    const seen: string[] = [];
    for (const l of lines) {
      const name = /^roof (.+?): /.exec(l.attrs['aria-label'])![1];
      const f = expected.get(name)!;
      expect(f, name).toBeDefined();
      const [[x0, y0], [x1, y1], [x2, y2]] = vertices(l);
      // The slope is the bandwidth, the flat part the peak, the kink the ridge point.
      expect(rel(y.toValue(y0) / x.toValue(x0), f.bandwidth)).toBeLessThan(2e-3);
      expect(rel(y.toValue(y2), f.peak)).toBeLessThan(2e-3);
      expect(rel(y.toValue(y1), f.peak)).toBeLessThan(2e-3);
      expect(rel(x.toValue(x1), f.peak / f.bandwidth)).toBeLessThan(2e-3);
      expect(y1).toBeCloseTo(y2, 3);
      seen.push(name);
    }
    // The demo has double (heat2d, estuary) and single precision (hall) nests, parallel and serial host nests.
    expect(seen.sort()).toEqual([...expected.keys()].sort());
  });

  it('has its device ridge point at the figure worked by hand in docs/cost-model.md', () => {
    const doc = readFileSync(join(ROOT, 'docs', 'cost-model.md'), 'utf8');
    const worked = Number(/= \*\*([\d.]+) flop\/byte\*\* \(device ridge\)/.exec(doc)![1]);
    expect(worked).toBe(5.71);
    const device = roofline.find((m) => m.attrs['aria-roledescription'] === 'line mark' && m.attrs['aria-label'].startsWith('roof device, double'))!;
    const ridge = x.toValue(vertices(device)[1][0]);
    expect(Math.abs(ridge - worked)).toBeLessThan(0.005);
  });

  it('draws each time loop that moves data as a link point: heat2d at its flops per link byte, worked in docs/cost-model.md', () => {
    const doc = readFileSync(join(ROOT, 'docs', 'cost-model.md'), 'utf8');
    const worked = Number(/([\d.]+) flop per link byte/.exec(doc)![1]);
    expect(worked).toBe(0.0623);
    const label = /<tr><td class="label"><a href="#(T\d+)">T\d+<\/a><\/td><td><a class="src" href="examples\/heat2d\/heat2d_acc\.c">/.exec(html)![1];
    const point = roofline.find((m) => m.attrs['aria-roledescription'] === 'point' && m.attrs['aria-label'].startsWith(`${label} link:`))!;
    // 4,198,825.68 flops over 67,444,408.48 bytes per step (the hand count in docs/cost-model.md).
    expect(rel(x.toValue(point.x), 4198825.68 / 67444408.48)).toBeLessThan(1e-3);
    expect(Math.abs(x.toValue(point.x) - worked)).toBeLessThan(5e-5);
    // With the suggested region only the reduction's scalar crosses (16 B every 100 steps): off the right edge, and said.
    expect(html).toMatch(new RegExp(`Beyond the right edge[^<]*${label}′ at `));
  });

  it('sizes each point by its share of the step (symbol size 24 at 0 to 900 at the whole step)', () => {
    const shares = new Map<string, number>();
    // Each cell's text stops at its own </td>: a row without a share (a nest in no time loop) must not borrow the next row's.
    for (const m of html.matchAll(/<tr id="(N\d+)">(?:<td[^>]*>(?:(?!<\/td>).)*<\/td>){5}<td>([\d.]+)%<\/td>/g)) shares.set(m[1], Number(m[2]) / 100);
    let checked = 0;
    for (const p of roofline.filter((m) => m.attrs['aria-roledescription'] === 'point' && / device: /.test(m.attrs['aria-label']))) {
      const label = p.attrs['aria-label'].split(' ')[0];
      const share = shares.get(label);
      if (share === undefined) continue;
      // Vega draws a circle of size s with radius √s / 2 (vega-scenegraph's symbol shapes): "M r,0 A r,r …".
      const r = Number(/^M([\d.]+),0A/.exec(p.attrs.d)![1]);
      const size = (2 * r) ** 2;
      // The table rounds shares to whole percent (two digits below 10%): 876 × 0.5% = 4.4.
      expect(Math.abs(size - (24 + 876 * share))).toBeLessThan(4.5);
      checked++;
    }
    expect(checked).toBeGreaterThan(10);
  });

  it('gives table rows and points the same labels, and links points to their rows', () => {
    const points = roofline.filter((m) => m.attrs['aria-roledescription'] === 'point');
    for (const p of points) {
      const label = p.attrs['aria-label'].split(' ')[0].replace('′', '');
      expect(html).toMatch(new RegExp(`id="${label}"`));
    }
    const links = [...svgOf(html, /^roofline/).matchAll(/xlink:href="([^"]*)"/g)].map((m) => m[1]);
    expect(links.length).toBe(points.length + roofline.filter((m) => m.tag === 'text' && m.groups.some((g) => g.includes('layer_3'))).length);
    for (const l of links) expect(l).toMatch(/^#[NT]\d+$/);
  });

  it('draws before and after per array and per construct: hall_naive_acc.c as written and with the suggested region', () => {
    const label = /<tr><td class="label"><a href="#(T\d+)">T\d+<\/a><\/td><td><a class="src" href="examples\/hall\/hall_naive_acc\.c">/.exec(html)![1];
    const bars = marks(svgOf(html, new RegExp(`^time loop ${label}:`)))
      .map((m) => /^(.+), (as written|with the suggested region), (to the device|to the host): ([\d.e+-]+) B per step$/.exec(m.attrs['aria-label'] ?? ''))
      .filter((m): m is RegExpExecArray => !!m)
      .map((m) => ({ key: m[1], plan: m[2], direction: m[3], bytes: Number(m[4]) }));
    const at = (key: string, plan: string, direction: string): number => bars.filter((b) => b.key === key && b.plan === plan && b.direction === direction).reduce((s, b) => s + b.bytes, 0);
    // p, vx, vy, vz are NX·NY·NZ·4 = 600·400·200·4 = 192,000,000 B each (examples/README.md sizes, float):
    // each is copied in at both constructs (lines 75 and 120) and out at one.
    for (const a of ['p', 'vx', 'vy', 'vz']) {
      expect(at(a, 'as written', 'to the device')).toBe(384e6);
      expect(at(a, 'as written', 'to the host')).toBe(192e6);
    }
    // Per construct: line 75 copies vx, vy, vz both ways and p in; line 120 copies p both ways and the velocities in.
    expect(at('line 75', 'as written', 'to the device')).toBe(768e6);
    expect(at('line 75', 'as written', 'to the host')).toBe(576e6);
    expect(at('line 120', 'as written', 'to the device')).toBe(768e6);
    expect(at('line 120', 'as written', 'to the host')).toBe(192e6);
    // With the region, the velocities stay on the device; p crosses only where host code needs it:
    // the source cell (4 B each way), the eight microphones (32 B), the snapshot every 100 steps (1.92e6 B).
    for (const a of ['vx', 'vy', 'vz']) expect(at(a, 'with the suggested region', 'to the device') + at(a, 'with the suggested region', 'to the host')).toBe(0);
    expect(at('p', 'with the suggested region', 'to the device')).toBe(4);
    expect(at('p', 'with the suggested region', 'to the host')).toBeCloseTo(4 + 32 + 192e6 / 100, 6);
    expect(bars.some((b) => /\(suggested update\)$/.test(b.key) && b.plan === 'with the suggested region' && b.bytes > 0)).toBe(true);
  });

  it('keeps ids unique on the page, so each chart clips by its own paths (HTML: an id names one element)', () => {
    const ids = [...html.matchAll(/\sid="([^"]+)"/g)].map((m) => m[1]);
    expect(new Set(ids).size).toBe(ids.length);
    const refs = [...html.matchAll(/url\(#([^)]+)\)/g)].map((m) => m[1]);
    expect(refs.length).toBeGreaterThan(0);
    for (const r of refs) expect(ids).toContain(r);
  });

  it('loads nothing: no script, no http(s) address in any src or href, a CSP that forbids fetching', () => {
    expect(html).toContain("default-src 'none'");
    expect(html).not.toMatch(/<script|<link|<img|<iframe|@import|url\((?!#)/i);
    const refs = [...html.matchAll(/\s(?:src|href|xlink:href)="([^"]*)"/g)].map((m) => m[1]);
    expect(refs.length).toBeGreaterThan(100);
    for (const r of refs) expect(r).not.toMatch(/^(https?:)?\/\//i);
    // The only addresses left are XML namespace names, which are never fetched.
    for (const m of html.matchAll(/https?:\/\/[^"\s]*/g)) expect(['http://www.w3.org/2000/svg', 'http://www.w3.org/1999/xlink']).toContain(m[0]);
  });
});

/** The roofs of pcie4-hbm2e by name, from the profile itself (the chart's source). */
function roofFigures(): Map<string, { bandwidth: number; peak: number }> {
  const p = presetProfile('pcie4-hbm2e')!;
  const hostSingle = p.host.peakFlopsNodeSingle ?? 2 * p.host.peakFlopsNode;
  return new Map([
    ['device, double precision', { bandwidth: p.device.bandwidth, peak: p.device.peakFlops }],
    ['device, single precision', { bandwidth: p.device.bandwidth, peak: p.device.peakFlopsSingle }],
    ['host (node), double precision', { bandwidth: p.host.bandwidthNode, peak: p.host.peakFlopsNode }],
    ['host (node), single precision', { bandwidth: p.host.bandwidthNode, peak: hostSingle }],
    ['host (one core), double precision', { bandwidth: p.host.bandwidthCore, peak: p.host.peakFlopsNode / p.host.cores }],
    ['host (one core), single precision', { bandwidth: p.host.bandwidthCore, peak: hostSingle / p.host.cores }],
    ['link, double precision', { bandwidth: p.link.bandwidth, peak: p.device.peakFlops }],
  ]);
}

describe('lines of the what-if analysis mapped back to the user’s file', () => {
  it('maps every line of the edited text to the original line it is, or that an insertion goes before', () => {
    // The edits as applyLineEdits applies them (server/src/core/data/edits.ts): each text before its 1-based line.
    const edits = [{ line: 3, text: '#pragma acc data copy(u)' }, { line: 3, text: '{' }, { line: 10, text: '#pragma acc update self(u)\n/* two lines */' }, { line: 12, text: '}' }];
    const original = Array.from({ length: 12 }, (_, k) => `line ${k + 1}`);
    const edited = applyLineEdits(original.join('\n'), edits).split('\n');
    expect(edited.length).toBe(12 + 5);
    const back = editedLineToOriginal(edits);
    edited.forEach((text, k) => {
      const m = back(k + 1);
      if (m.inserted) {
        expect(original).not.toContain(text);
        // An inserted line maps to the original line it precedes: the next original line below it.
        expect(edited.slice(k).find((t) => original.includes(t))).toBe(`line ${m.line}`);
      } else expect(text).toBe(`line ${m.line}`);
    });
  });
});
