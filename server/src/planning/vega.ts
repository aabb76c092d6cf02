/**
 * Charts of the planning report: Vega-Lite specifications compiled by vega-lite and rendered to
 * SVG by Vega's headless view in Node (no canvas, no DOM), when the report is made. The modules
 * are imported on first use, so the extension's activation does not evaluate them.
 *
 * Nothing is loaded: the view gets a loader whose fetches fail and whose link check passes only
 * the links this report writes (a `command:` URI of the editor, an in-page `#anchor`, a relative
 * file path). Every spec carries its data inline.
 */
import type { TopLevelSpec } from 'vega-lite';

type Vega = typeof import('vega');
type VegaLite = typeof import('vega-lite');

let libraries: Promise<{ vega: Vega; vl: VegaLite }> | undefined;

function load(): Promise<{ vega: Vega; vl: VegaLite }> {
  libraries ??= Promise.all([import('vega'), import('vega-lite')]).then(([vega, vl]) => ({ vega, vl }));
  return libraries;
}

/** A link the report may write: command URIs, in-page anchors and relative paths; never a scheme that fetches. */
export function safeHref(href: string): boolean {
  if (/^(command:|#)/.test(href)) return true;
  // A relative path: no scheme (a colon before the first slash) and not protocol-relative.
  return !/^[a-z][a-z0-9+.-]*:/i.test(href) && !href.startsWith('//');
}

/** Colours and fonts that read on light and dark editor themes (the page's CSS sets the text colour). */
const CONFIG = {
  background: 'transparent',
  font: 'sans-serif',
  axis: { domainColor: '#888', tickColor: '#888', gridColor: '#8884', labelFontSize: 11, titleFontSize: 12, titleFontWeight: 'normal' },
  legend: { labelFontSize: 11, titleFontSize: 11, titleFontWeight: 'normal' },
  header: { labelFontSize: 12, titleFontSize: 12 },
  view: { stroke: '#8886' },
} as const;

/**
 * Compiled and parsed specifications by their text (data excluded): a report draws many charts of
 * the same shape (one per time loop), and compiling is most of a small chart's cost.
 */
const parsedSpecs = new Map<string, unknown>();

/**
 * Renders a chart to SVG. Data given in `datasets` (by the names the spec's `data: { name }` use)
 * is inserted into the view, so a spec without inline values is compiled once per shape.
 */
export async function renderSvg(spec: TopLevelSpec | Record<string, unknown>, title: string, datasets: Record<string, unknown[]> = {}, id = 'chart'): Promise<string> {
  const { vega, vl } = await load();
  const loader = vega.loader();
  const refuse = async (): Promise<never> => {
    throw new Error('the planning report loads nothing');
  };
  Object.assign(loader, {
    load: refuse,
    http: refuse,
    file: refuse,
    sanitize: async (uri: string) => ({ href: safeHref(uri) ? uri : '#' }),
  });
  const key = JSON.stringify(spec);
  let runtime = parsedSpecs.get(key) as ReturnType<Vega['parse']> | undefined;
  if (!runtime) {
    const full = { ...spec, config: { ...CONFIG, ...((spec as { config?: object }).config ?? {}) } } as TopLevelSpec;
    runtime = vega.parse(vl.compile(full).spec);
    if (parsedSpecs.size >= 64) parsedSpecs.clear();
    parsedSpecs.set(key, runtime);
  }
  const view = new vega.View(runtime, { renderer: 'none', loader });
  for (const [name, values] of Object.entries(datasets)) view.data(name, values);
  try {
    const svg = uniqueIds(await view.toSVG(), id);
    // The chart's accessible name.
    return svg.replace(/^<svg /, `<svg role="img" aria-label="${title.replace(/&/g, '&amp;').replace(/"/g, '&quot;')}" `);
  } finally {
    view.finalize();
  }
}

/**
 * Every chart numbers its clip paths from 1 (`id="clip1"`), and one page holds many charts: ids
 * are prefixed with the chart's own, so each `url(#…)` finds its own chart's element.
 */
export function uniqueIds(svg: string, prefix: string): string {
  const ids = new Set([...svg.matchAll(/\sid="([^"]+)"/g)].map((m) => m[1]));
  if (ids.size === 0) return svg;
  const p = prefix.replace(/[^\w-]/g, '_');
  return svg
    .replace(/(\sid=")([^"]+)"/g, (m, a: string, x: string) => (ids.has(x) ? `${a}${p}-${x}"` : m))
    .replace(/url\(#([^)]+)\)/g, (m, x: string) => (ids.has(x) ? `url(#${p}-${x})` : m));
}
