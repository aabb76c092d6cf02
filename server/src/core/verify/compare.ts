/**
 * The ledger's prediction beside a measured run, per construct (file:line) and per time step.
 *
 * The prediction of one construct over a whole run is the bytes of its transfers outside the time
 * loops (each once) plus, for each transfer inside a time loop, its bytes times the number of
 * steps it runs in. A transfer every K steps runs in ⌊S/K⌋ or ⌈S/K⌉ of S steps depending on
 * the phase of its condition (`t % K == 0` runs at t = 0), so its prediction is that range.
 */
import type { FileAnalysis } from '../analyze';
import type { TimeLoopLedger, TransferReport } from '../data/ledger';
import { fileBase, type ConstructKind, type MeasuredConstruct } from './mapLog';

export type Verdict = 'equal' | 'differs' | 'unbound' | 'unmodelled';

export interface Range2 { lo: number; hi: number }

export interface ConstructComparison {
  file: string;
  /** 1-based directive line. */
  line: number;
  kinds: ConstructKind[];
  executions: number;
  measured: { toDevice: number; toHost: number };
  /** Null when the ledger has no transfer at this construct and knows no time loop it runs in. */
  predicted: { toDevice: Range2; toHost: Range2 } | null;
  /** Bytes per step (whole-run bytes / steps) when the construct runs only inside one time loop. */
  perStep?: { measured: { toDevice: number; toHost: number }; predicted: { toDevice: number; toHost: number }; steps: number };
  verdict: Verdict;
  /** Why, in a few words, when the verdict is not `equal`. */
  note?: string;
  /** Variables of the construct whose measured bytes differ from the prediction. */
  differing?: string[];
}

export interface StepComparison {
  file: string;
  line: number;
  steps: number | null;
  predicted: { toDevice: number | null; toHost: number | null };
  /** Bytes of the every-step constructs inside the loop, divided by the steps (null when steps are unbound). */
  measured: { toDevice: number; toHost: number } | null;
  /** The ledger's bytes per step of its every-step transfers (the exact counterpart of `measured`). */
  predictedEveryStep: { toDevice: number; toHost: number } | null;
  /** Constructs that move data only every K steps: how often they ran, beside the ledger's period. */
  periodic: { line: number; everySteps: number; runs: number; measured: number; predictedPerRun: number }[];
  verdict: Verdict;
}

export interface Comparison {
  constructs: ConstructComparison[];
  timeLoops: StepComparison[];
  /** Constructs whose verdict is `differs` or `unmodelled` with bytes. */
  differences: number;
}

interface Prediction {
  file: string;
  line: number;
  toDevice: Range2;
  toHost: Range2;
  byName: Map<string, { toDevice: Range2; toHost: Range2 }>;
  unbound: boolean;
  inLoop: Set<TimeLoopLedger>;
  outside: boolean;
}

const zero = (): Range2 => ({ lo: 0, hi: 0 });
const addTo = (r: Range2, lo: number, hi: number): void => { r.lo += lo; r.hi += hi; };
const within = (v: number, r: Range2): boolean => v >= r.lo - 0.5 && v <= r.hi + 0.5;

/** Compares the ledgers of `analyses` with a measured run. */
export function compareRun(analyses: FileAnalysis[], measured: MeasuredConstruct[]): Comparison {
  const preds = new Map<string, Prediction>();
  const ledgers: { ledger: TimeLoopLedger; path: string; line: number }[] = [];
  const seenOutside = new Set<string>();
  for (const a of analyses) {
    for (const t of a.programTransfers ?? []) {
      const p = predictionAt(preds, t, a.path);
      p.outside = true;
      if (t.bytes.value === null) { p.unbound = true; continue; }
      add(p, t, t.bytes.value, t.bytes.value);
    }
    for (const tl of a.timeLoops) {
      if (!tl.ledger) continue;
      ledgers.push({ ledger: tl.ledger, path: a.path, line: tl.ledger.loop.keywordRange.start.line + 1 });
      const steps = tl.ledger.steps.value;
      for (const t of tl.ledger.transfers) {
        const p = predictionAt(preds, t, a.path);
        p.inLoop.add(tl.ledger);
        if (steps === null || t.bytes.value === null) { p.unbound = true; continue; }
        const lo = Math.floor(steps / t.everySteps), hi = Math.ceil(steps / t.everySteps);
        add(p, t, t.bytes.value * lo, t.bytes.value * hi);
      }
      // The outside transfers belong to the procedure's run: shared by its time loops, counted once.
      const runKey = `${a.path}\0${tl.ledger.procedure.name}`;
      if (seenOutside.has(runKey)) continue;
      seenOutside.add(runKey);
      for (const t of tl.ledger.outside) {
        const p = predictionAt(preds, t, a.path);
        p.outside = true;
        if (t.bytes.value === null) { p.unbound = true; continue; }
        add(p, t, t.bytes.value, t.bytes.value);
      }
    }
  }
  // Constructs inside the time loops with no transfer (a kernel on resident data) predict zero.
  const loopOf = (file: string, line: number): TimeLoopLedger | undefined => {
    for (const l of ledgers) {
      if (fileBase(l.path) !== fileBase(file)) continue;
      const r = l.ledger.loop.range;
      if (line - 1 >= r.start.line && line - 1 <= r.end.line) return l.ledger;
    }
    return undefined;
  };

  const rows: ConstructComparison[] = [];
  const used = new Set<string>();
  for (const m of measured) {
    const key = `${fileBase(m.file)}:${m.line}`;
    used.add(key);
    const p = preds.get(key);
    const row: ConstructComparison = {
      file: m.file, line: m.line, kinds: [...m.kinds], executions: m.executions,
      measured: { toDevice: m.toDevice, toHost: m.toHost }, predicted: null, verdict: 'equal',
    };
    const loop = p && p.inLoop.size === 1 ? [...p.inLoop][0] : !p ? loopOf(m.file, m.line) : undefined;
    const whole = analyses.find((a) => fileBase(a.path) === fileBase(m.file))?.programTransfers;
    if (!p && whole) {
      // A program without time loops whose run the ledger followed: a construct it has no transfer for moves nothing.
      row.predicted = { toDevice: zero(), toHost: zero() };
      if (m.toDevice + m.toHost > 0) { row.verdict = 'differs'; row.note = 'the ledger predicts no transfer here'; }
    } else if (!p) {
      if (loop) row.predicted = { toDevice: zero(), toHost: zero() };
      if (m.toDevice + m.toHost > 0) {
        row.verdict = loop ? 'differs' : 'unmodelled';
        row.note = loop ? 'the ledger predicts no transfer here' : 'outside the time loops the ledger follows';
      }
    } else if (p.unbound) {
      row.predicted = { toDevice: p.toDevice, toHost: p.toHost };
      row.verdict = 'unbound';
      row.note = 'a size or the step count is unbound: give it with -D or --bind';
    } else {
      row.predicted = { toDevice: p.toDevice, toHost: p.toHost };
      const ok = within(m.toDevice, p.toDevice) && within(m.toHost, p.toHost);
      if (!ok) {
        row.verdict = 'differs';
        row.differing = differingNames(p, m);
      }
    }
    if (loop && !(p?.outside) && loop.steps.value) {
      const s = loop.steps.value;
      row.perStep = {
        steps: s,
        measured: { toDevice: m.toDevice / s, toHost: m.toHost / s },
        predicted: perStepAt(loop, p?.file ?? m.file, m.line),
      };
    }
    rows.push(row);
  }
  // Predicted transfers at constructs that never ran.
  for (const [key, p] of preds) {
    if (used.has(key)) continue;
    const bytes = p.toDevice.hi + p.toHost.hi;
    rows.push({
      file: p.file, line: p.line, kinds: [], executions: 0, measured: { toDevice: 0, toHost: 0 },
      predicted: { toDevice: p.toDevice, toHost: p.toHost },
      verdict: p.unbound ? 'unbound' : bytes > 0 && p.toDevice.lo + p.toHost.lo > 0 ? 'differs' : 'equal',
      ...(bytes > 0 && !p.unbound ? { note: 'the construct did not run' } : {}),
    });
  }
  rows.sort((a, b) => a.file.localeCompare(b.file) || a.line - b.line);

  const timeLoops: StepComparison[] = ledgers.map(({ ledger, path, line }) => {
    const steps = ledger.steps.value;
    const inside = rows.filter((r) => r.perStep && (loopOf(r.file, r.line) === ledger || preds.get(`${fileBase(r.file)}:${r.line}`)?.inLoop.has(ledger)));
    // A construct whose transfers all run every K > 1 steps is periodic; the rest count per step.
    const periodOf = (r: ConstructComparison): number => {
      const ks = ledger.transfers.filter((t) => t.range.start.line + 1 === r.line && fileBase(t.origin ?? path) === fileBase(r.file)).map((t) => t.everySteps);
      return ks.length > 0 && ks.every((k) => k === ks[0]) ? ks[0] : 1;
    };
    const every = inside.filter((r) => periodOf(r) === 1);
    const measuredStep = steps ? {
      toDevice: every.reduce((s, r) => s + r.measured.toDevice, 0) / steps,
      toHost: every.reduce((s, r) => s + r.measured.toHost, 0) / steps,
    } : null;
    const sumEvery = (dir: 'toDevice' | 'toHost'): number | null => {
      let total = 0;
      for (const t of ledger.transfers) {
        if (t.everySteps !== 1 || t.direction !== dir) continue;
        if (t.bytes.value === null) return null;
        total += t.bytes.value;
      }
      return total;
    };
    const te = sumEvery('toDevice'), th = sumEvery('toHost');
    const predictedEveryStep = te === null || th === null ? null : { toDevice: te, toHost: th };
    const periodic = inside.filter((r) => periodOf(r) > 1).map((r) => {
      const k = periodOf(r);
      const perRun = ledger.transfers.filter((t) => t.range.start.line + 1 === r.line && fileBase(t.origin ?? path) === fileBase(r.file))
        .reduce((s, t) => s + (t.bytes.value ?? 0), 0);
      return { line: r.line, everySteps: k, runs: r.executions, measured: r.measured.toDevice + r.measured.toHost, predictedPerRun: perRun };
    });
    const predicted = { toDevice: ledger.perStep.toDevice.value, toHost: ledger.perStep.toHost.value };
    let verdict: Verdict = 'equal';
    if (!measuredStep || !predictedEveryStep || predicted.toDevice === null || predicted.toHost === null) verdict = 'unbound';
    else if (inside.some((r) => r.verdict === 'differs') || Math.abs(measuredStep.toDevice - predictedEveryStep.toDevice) > 0.5 || Math.abs(measuredStep.toHost - predictedEveryStep.toHost) > 0.5) verdict = 'differs';
    return { file: path, line, steps, predicted, measured: measuredStep, predictedEveryStep, periodic, verdict };
  });
  const differences = rows.filter((r) => r.verdict === 'differs' || (r.verdict === 'unmodelled' && r.measured.toDevice + r.measured.toHost > 0)).length;
  return { constructs: rows, timeLoops, differences };
}

function predictionAt(preds: Map<string, Prediction>, t: TransferReport, path: string): Prediction {
  const file = t.origin ?? path;
  const line = t.range.start.line + 1;
  const key = `${fileBase(file)}:${line}`;
  let p = preds.get(key);
  if (!p) {
    p = { file, line, toDevice: zero(), toHost: zero(), byName: new Map(), unbound: false, inLoop: new Set(), outside: false };
    preds.set(key, p);
  }
  return p;
}

function add(p: Prediction, t: TransferReport, lo: number, hi: number): void {
  addTo(p[t.direction], lo, hi);
  const n = p.byName.get(t.array) ?? { toDevice: zero(), toHost: zero() };
  addTo(n[t.direction], lo, hi);
  p.byName.set(t.array, n);
}

/** The names whose bytes differ, matched by name (the runtime's `s.data` also matches `data`). */
function differingNames(p: Prediction, m: MeasuredConstruct): string[] {
  const out = new Set<string>();
  const find = (name: string): { toDevice: Range2; toHost: Range2 } | undefined =>
    p.byName.get(name) ?? [...p.byName].find(([k]) => k.endsWith(`.${name}`) || name.endsWith(`.${k}`) || name.endsWith(`->${k}`))?.[1];
  for (const [name, b] of m.byName) {
    const q = find(name);
    if (!q || !within(b.toDevice, q.toDevice) || !within(b.toHost, q.toHost)) out.add(name);
  }
  for (const name of p.byName.keys()) {
    const hit = m.byName.get(name) ?? [...m.byName].find(([k]) => k.endsWith(`.${name}`) || name.endsWith(`.${k}`))?.[1];
    const q = p.byName.get(name)!;
    if (!hit && (q.toDevice.lo > 0 || q.toHost.lo > 0)) out.add(name);
  }
  return [...out].sort();
}

function perStepAt(ledger: TimeLoopLedger, file: string, line: number): { toDevice: number; toHost: number } {
  const out = { toDevice: 0, toHost: 0 };
  for (const t of ledger.transfers) {
    if (t.range.start.line + 1 !== line || (t.origin && fileBase(t.origin) !== fileBase(file))) continue;
    if (t.bytes.value !== null) out[t.direction] += t.bytes.value / t.everySteps;
  }
  return out;
}
