/**
 * Memory traffic per innermost iteration, in two views.
 *
 * device — compulsory traffic in the STREAM convention (McCalpin): every distinct array read
 *   once and written once per iteration, neighbours of a stencil reused, no write-allocate; a
 *   read of an element the same iteration already wrote or read moves nothing (cost/reuse.ts).
 * host — what a cache-based CPU moves: write-allocate adds one read of every write-only stream
 *   (McCalpin, STREAM documentation), and the layer condition (Stengel, Treibig, Hager, Wellein,
 *   ICS 2015) decides whether the layers a stencil reuses stay in cache; where they do not, each
 *   distinct layer becomes a stream of its own.
 */
import * as S from '../symbolic';
import type { AccessOffsets, ArrayFootprint } from './footprint';

export interface LayerCheck {
  /** The nest variable of the dimension whose layers must stay in cache. */
  variable: string;
  /** Bytes the reused layers occupy (all stencil arrays together), or null when a size is unbound. */
  bytes: number | null;
  /** Bytes available: half the cache (Stengel et al.'s safety factor for other data and associativity). */
  budget: number;
  holds: boolean | null;
}

export interface ArrayTraffic {
  array: string;
  /** Share of iterations that touch a new element (1 unless the array ignores some nest variables). */
  fraction: number;
  deviceBytes: number;
  hostBytes: number;
  /** Read streams on the host after the layer condition (1 when all layers are reused). */
  hostReadStreams: number;
  writeAllocate: boolean;
}

export interface Traffic {
  device: number;
  host: number;
  arrays: ArrayTraffic[];
  layerChecks: LayerCheck[];
}

/**
 * Computes bytes per innermost iteration. `trips` gives each nest variable's trip count when
 * bound; `cacheBytes` is the host cache the layer condition is checked against.
 */
export function traffic(
  footprints: ArrayFootprint[],
  nestVars: string[],
  trips: Map<string, number | undefined>,
  bindings: ReadonlyMap<string, S.Expr>,
  cacheBytes: number,
  carries: ReadonlyMap<string, ReadonlySet<string>> = new Map(),
): Traffic {
  const layerChecks = checkLayers(footprints, nestVars, bindings, cacheBytes);
  // The highest dimension index (contiguous = 0) up to which layers are reused, per nest variable order.
  const reusedUpTo = new Map<string, boolean>();
  for (const c of layerChecks) reusedUpTo.set(c.variable, c.holds !== false);
  const arrays: ArrayTraffic[] = [];
  for (const fp of footprints) {
    const fraction = touchFraction(fp, nestVars, trips, carries);
    // Re-reads of elements this iteration already touched move nothing (covered). Regular reads
    // share one stream; each irregular read (no offsets) is an element of its own.
    const irregularReads = fp.irregular ? fp.accesses.filter((a) => moves(a) && !a.offsets).length : 0;
    const read = fp.accesses.some((a) => moves(a) && (!fp.irregular || !!a.offsets));
    const write = fp.writes > 0;
    const streams = (read ? hostStreams(fp, reusedUpTo) : 0) + irregularReads;
    const deviceBytes = fp.elementBytes * fraction * ((read ? 1 : 0) + irregularReads + (write ? 1 : 0));
    const writeAllocate = write && streams === 0;
    const hostBytes = fp.elementBytes * fraction * (streams + (write ? 1 : 0) + (writeAllocate ? 1 : 0));
    arrays.push({ array: fp.array, fraction, deviceBytes, hostBytes, hostReadStreams: streams, writeAllocate });
  }
  return {
    device: arrays.reduce((s, a) => s + a.deviceBytes, 0),
    host: arrays.reduce((s, a) => s + a.hostBytes, 0),
    arrays,
    layerChecks,
  };
}

/**
 * 1 / (product of the trip counts of nest variables the array does not move with): a
 * coefficient array c[i] inside a (k, j, i) nest is reused across j and k, so it costs
 * 1/(NJ*NK) of an element per iteration. A tile loop `it` moves every array that moves with an
 * element loop whose bounds it sets (`i` from `it` to `min(n, it + T) - 1`). Unknown trip counts make the share 0: such arrays
 * are lower-order terms of large nests.
 */
function touchFraction(fp: ArrayFootprint, nestVars: string[], trips: Map<string, number | undefined>, carries: ReadonlyMap<string, ReadonlySet<string>>): number {
  if (fp.irregular && fp.variables.length === 0) return 1;
  let f = 1;
  for (const v of nestVars) {
    if (fp.variables.includes(v)) continue;
    // A tile loop moves the array through the element loops whose bounds it sets.
    if ([...(carries.get(v) ?? [])].some((u) => fp.variables.includes(u))) continue;
    const t = trips.get(v);
    if (t === undefined || t <= 0) return 0;
    f /= t;
  }
  return f;
}

/**
 * Layer condition per dimension above the contiguous one (Stengel et al. 2015, §3): the layers a
 * stencil spans in dimension d, each `stride_d` elements long, must fit in half the cache for
 * the neighbours in d to come from cache rather than memory.
 */
function checkLayers(footprints: ArrayFootprint[], nestVars: string[], bindings: ReadonlyMap<string, S.Expr>, cacheBytes: number): LayerCheck[] {
  const out: LayerCheck[] = [];
  for (const v of nestVars) {
    let total: number | null = 0;
    let any = false;
    for (const fp of footprints) {
      if (!fp.accesses.some(moves)) continue;
      const d = fp.variables.indexOf(v);
      if (d <= 0) continue;
      const span = spanIn(fp, d);
      if (span <= 1) continue;
      any = true;
      const stride = S.evaluate(fp.strides[d], bindings);
      if (stride === undefined || total === null) total = null;
      else total += span * stride * fp.elementBytes;
    }
    if (!any) continue;
    const budget = cacheBytes / 2;
    out.push({ variable: v, bytes: total, budget, holds: total === null ? null : total <= budget });
  }
  return out;
}

/** Number of distinct layers (offset values) a stencil spans in dimension d, counting read accesses. */
function spanIn(fp: ArrayFootprint, d: number): number {
  const offs = fp.accesses.filter((a) => moves(a) && a.offsets).map((a) => a.offsets![d]);
  if (offs.length === 0) return 1;
  return Math.max(...offs) - Math.min(...offs) + 1;
}

/**
 * Read streams of one array on the host: neighbours along a dimension whose layer condition
 * holds come from cache; along a dimension where it fails, each distinct offset tuple of the
 * failing (outer) dimensions is a separate stream from memory.
 */
function hostStreams(fp: ArrayFootprint, reused: Map<string, boolean>): number {
  let lowestFailing = fp.variables.length;
  for (let d = fp.variables.length - 1; d >= 1; d--) {
    if (reused.get(fp.variables[d]) === false) lowestFailing = d;
  }
  if (lowestFailing >= fp.variables.length) return 1;
  const tuples = new Set<string>();
  for (const a of fp.accesses) {
    if (!moves(a) || !a.offsets) continue;
    tuples.add(a.offsets.slice(lowestFailing).join(','));
  }
  return Math.max(1, tuples.size);
}

/** A read that moves bytes: not a re-read of an element the iteration already touched. */
function moves(a: AccessOffsets): boolean {
  return a.isRead && !a.covered;
}
