/**
 * The project summary of the planning report, as data: time loops ranked by their time per step,
 * loop nests ranked by their share of the step, findings ranked by severity and bytes per step,
 * and the labels (T1…, N1…) that a table row and a chart point share. Pure: no HTML here.
 */
import type { PlanningData, PlanningFile, PlanningFinding, PlanningMachine, PlanningNestShare, ReportLoop, ReportTimeLoop } from '../lsp/protocol';

export interface TimeLoopRow {
  label: string;
  file: PlanningFile;
  t: ReportTimeLoop;
  /** Rank from 1: the report draws detail charts for the first few. */
  rank: number;
}

export interface NestRow {
  label: string;
  file: PlanningFile;
  loop: ReportLoop;
  /** The nest's part of the step where it weighs most (a nest can run in several time loops), with that time loop. */
  share: PlanningNestShare | null;
  timeLoop: TimeLoopRow | null;
}

export interface FindingRow {
  file: PlanningFile;
  f: PlanningFinding;
}

export interface Summary {
  timeLoops: TimeLoopRow[];
  nests: NestRow[];
  findings: FindingRow[];
  machine: PlanningMachine | undefined;
  nestAt(path: string, line: number): NestRow | undefined;
  timeLoopOf(file: PlanningFile, t: ReportTimeLoop): TimeLoopRow | undefined;
}

const SEVERITY_ORDER = { error: 0, warning: 1, info: 2, hint: 3 } as const;

/** Time per step as written (the offloaded step the code runs today); the host-only step when nothing is offloaded. */
export function stepSeconds(t: ReportTimeLoop): number | null {
  return t.estimate?.deviceSeconds ?? t.estimate?.hostSeconds ?? null;
}

const perStepBytes = (t: ReportTimeLoop): number => (t.perStep.toDevice.value ?? 0) + (t.perStep.toHost.value ?? 0);

/** Descending with nulls last, then by the tie-breakers given. */
function byDesc<T>(key: (x: T) => number | null, ...then: ((a: T, b: T) => number)[]): (a: T, b: T) => number {
  return (a, b) => {
    const x = key(a);
    const y = key(b);
    if (x !== y) {
      if (x === null) return 1;
      if (y === null) return -1;
      if (y !== x) return y - x;
    }
    for (const f of then) {
      const c = f(a, b);
      if (c !== 0) return c;
    }
    return 0;
  };
}

const byPlace = <T extends { file: PlanningFile }>(line: (x: T) => number) => (a: T, b: T): number => a.file.path.localeCompare(b.file.path) || line(a) - line(b);

export function summarise(data: PlanningData): Summary {
  const tls = data.files.flatMap((file) => file.timeLoops.map((t) => ({ file, t })));
  tls.sort(byDesc((x) => stepSeconds(x.t), byDesc((x) => perStepBytes(x.t)), byPlace((x) => x.t.line)));
  const timeLoops: TimeLoopRow[] = tls.map((x, k) => ({ ...x, label: `T${k + 1}`, rank: k + 1 }));
  const tlIndex = new Map<ReportTimeLoop, TimeLoopRow>(timeLoops.map((r) => [r.t, r]));

  // Each nest's weightiest part of a step, over every time loop that runs it (in any file).
  const best = new Map<string, { share: PlanningNestShare; timeLoop: TimeLoopRow }>();
  for (const r of timeLoops) {
    for (const s of r.t.step?.nests ?? []) {
      const key = `${s.path}\n${s.line}`;
      const b = best.get(key);
      if (!b || s.share > b.share.share) best.set(key, { share: s, timeLoop: r });
    }
  }
  const ns = data.files.flatMap((file) => file.loops.map((loop) => ({ file, loop, ...(best.get(`${file.path}\n${loop.line}`) ?? { share: null, timeLoop: null }) })));
  ns.sort(byDesc((x) => x.share?.share ?? null, byDesc((x) => x.loop.estimate?.hostSeconds ?? null), byPlace((x) => x.loop.line)));
  const nests: NestRow[] = ns.map((x, k) => ({ ...x, label: `N${k + 1}` }));
  const nestIndex = new Map(nests.map((n) => [`${n.file.path}\n${n.loop.line}`, n]));

  const findings: FindingRow[] = data.files.flatMap((file) => (file.findings ?? []).map((f) => ({ file, f })));
  findings.sort((a, b) => SEVERITY_ORDER[a.f.severity] - SEVERITY_ORDER[b.f.severity] || (b.f.bytesPerStep ?? -1) - (a.f.bytesPerStep ?? -1) || byPlace<FindingRow>((x) => x.f.line)(a, b));

  return {
    timeLoops,
    nests,
    findings,
    machine: data.files.find((f) => f.machine)?.machine,
    nestAt: (path, line) => nestIndex.get(`${path}\n${line}`),
    timeLoopOf: (_file, t) => tlIndex.get(t),
  };
}
