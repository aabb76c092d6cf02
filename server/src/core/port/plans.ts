/**
 * Port plans for code that runs on the host today: for each time loop, (1) *naive*: every nest
 * the port can offload gets a compute directive, and data moves as its clauses and the implicit
 * rules move it every step; (2) *resident*: the same with the data region the ledger suggests
 * around the time loop and only the updates host code in the loop needs; (3) what stays on the
 * host and why, with its share of the resident step (Amdahl).
 *
 * The plans are not modelled separately: the port is written (port/edits.ts) and the ported
 * text is analysed like any file, so a plan's figures are the figures the ported program gets.
 * The race analysis of that text is the dependence half of the proof: a nest it finds a
 * loop-carried dependence in goes back to the host; a missing reduction or private clause it
 * finds is added from its own fix, and the text analysed again (at most four rounds).
 */
import type { FileAnalysis, TimeLoopReport } from '../analyze';
import { applyLineEdits, applyTextEdits } from '../data/edits';
import { stepEstimate } from '../estimate/step';
import type { Baseline, Bound, Spread, StepEstimate } from '../estimate/types';
import type { MachineProfile } from '../machine/profiles';
import type { DirectiveFamily, Finding, TextEdit } from '../types';
import { type HostNest, type PortNest, chooseNests } from './choose';
import { portEdits } from './edits';

export interface PlanFigures {
  bytesPerStep: { toDevice: number | null; toHost: number | null };
  transfersPerStep: number;
  /** Step time on the device side of the profile (kernels, launches, link, host code left). */
  stepSeconds: number | null;
  speedup: Spread | null;
  bound: Bound | null;
  residentBytes: number | null;
  /** Whether the resident arrays fit the profile's device memory (null when a size is unbound). */
  fits: boolean | null;
}

export interface TimeLoopPlans {
  family: DirectiveFamily;
  baseline: Baseline;
  /** The step on the host today, under the baseline. */
  hostStepSeconds: number | null;
  offloaded: { line: number; procedure: string; collapse: number; clauses: string[] }[];
  onHost: HostNest[];
  /** The share of the resident plan's step that host code takes (Amdahl's serial fraction). */
  hostShare: number | null;
  naive: PlanFigures;
  resident: PlanFigures;
  /** The updates the resident plan keeps, where host code in the loop needs them. */
  updates: { array: string; direction: 'toDevice' | 'toHost'; section: string; line: number }[];
}

export interface PortResult {
  /** The ported text (the resident plan: directives, data region, updates). */
  text: string;
  /** The naive port's text (directives only). */
  naiveText: string;
  plans: Map<TimeLoopReport, TimeLoopPlans>;
}

/** Time loops that have host nests and no device construct yet. */
export function portable(analysis: FileAnalysis): TimeLoopReport[] {
  return analysis.timeLoops.filter((t) => t.ledger && t.ledger.run.kernels.length === 0 && t.ledger.run.hostNests.length > 0);
}

/** The family a port writes: the one the file already uses, else the one asked for, else OpenACC. */
export function portFamily(analysis: FileAnalysis, asked?: DirectiveFamily): DirectiveFamily {
  if (asked) return asked;
  const offload = analysis.model.directives.filter((d) => d.family === 'openacc' || d.construct.startsWith('target'));
  return offload.length > 0 ? offload[0].family : 'openacc';
}

const RACES = new Set(['loop-carried-dependence', 'shared-scalar-write', 'missing-private', 'missing-reduction', 'directive-syntax']);

/**
 * Writes the port of the time loops of `analysis` that run on the host, and its plans.
 * `analyze(text, whatIf)` analyses a text like the original (same path, flags, profile).
 */
export function portPlans(
  analysis: FileAnalysis, text: string, analyze: (text: string, whatIf: boolean) => FileAnalysis, profile: MachineProfile, baseline: Baseline,
  options: { family?: DirectiveFamily; only?: TimeLoopReport[] } = {},
): PortResult | undefined {
  const loops = (options.only ?? portable(analysis)).filter((t) => portable(analysis).includes(t));
  if (loops.length === 0) return undefined;
  const family = portFamily(analysis, options.family);
  const nests: PortNest[] = [];
  const host = new Map<TimeLoopReport, HostNest[]>();
  for (const tl of loops) {
    const c = chooseNests(analysis, tl, family);
    for (const n of c.port) if (!nests.some((m) => m.root === n.root)) nests.push(n);
    host.set(tl, c.host);
  }
  const dropped = new Map<PortNest, string>();
  let naiveText = text;
  let ported: FileAnalysis | undefined;
  for (let round = 0; round < 4; round++) {
    const live = nests.filter((n) => !dropped.has(n));
    const { edits, skipped } = portEdits(text, analysis.model, live, family);
    for (const s of skipped) dropped.set(s, 'the loop does not start its own line, so no directive line can go before it');
    naiveText = applyTextEdits(text, edits);
    ported = analyze(naiveText, false);
    const changed = reviewRaces(ported, live.filter((n) => !dropped.has(n)), edits, dropped);
    if (!changed) break;
  }
  const live = nests.filter((n) => !dropped.has(n));
  const { edits } = portEdits(text, analysis.model, live, family);
  naiveText = applyTextEdits(text, edits);
  const origin = lineOrigin(text, edits);
  ported = analyze(naiveText, true);
  const portedLoops = ported.timeLoops.filter((t) => t.ledger);
  const plans = new Map<TimeLoopReport, TimeLoopPlans>();
  const regionEdits = portedLoops.flatMap((t) => t.ledger!.dataRegion?.edits ?? []);
  // Inside the data region the arrays are present: an OpenACC port says so (`present(…)`, §2.7.5)
  // instead of copy clauses that would move nothing; OpenMP keeps its maps, which find the data
  // present and only count references (5.2 §5.8.3; gcc 12 has no `present` map modifier).
  const residentNests = family === 'openacc' && regionEdits.length > 0 ? live.map((n) => ({ ...n, dataClauses: presentClauses(n.dataClauses) })) : live;
  const finalText = applyLineEdits(applyTextEdits(text, portEdits(text, analysis.model, residentNests, family).edits), regionEdits);
  for (const tl of loops) {
    const mine = analysis.timeLoops.filter((t) => t.ledger?.procedure.name === tl.ledger!.procedure.name);
    const theirs = portedLoops.filter((t) => t.ledger!.procedure.name === tl.ledger!.procedure.name);
    const twin = theirs[mine.indexOf(tl)];
    const onHost = [...(host.get(tl) ?? [])];
    for (const [n, reason] of dropped) {
      if (tl.ledger!.run.hostNests.some((e) => e.stmt === n.root)) onHost.push({ line: n.root.keywordRange.start.line + 1, procedure: n.procedure.name, reason });
    }
    onHost.sort((a, b) => a.line - b.line);
    const offloaded = live.filter((n) => tl.ledger!.run.hostNests.some((e) => e.stmt === n.root)).map((n) => ({
      line: n.root.keywordRange.start.line + 1, procedure: n.procedure.name, collapse: n.collapse, clauses: [...n.dataClauses, ...n.extra],
    }));
    const naive = twin ? figures(twin.ledger!, twin.estimate, profile) : emptyFigures();
    let resident = naive;
    let hostShare: number | null = null;
    if (twin?.withRegion && twin.estimate?.withRegion) {
      const est = stepEstimate(twin.withRegion.ledger, twin.withRegion.nests, profile, baseline);
      resident = figures(twin.withRegion.ledger, est, profile);
      hostShare = est.deviceSeconds ? (est.hostLeftSeconds ?? 0) / est.deviceSeconds : null;
    } else if (twin?.estimate) {
      hostShare = twin.estimate.deviceSeconds ? (twin.estimate.hostLeftSeconds ?? 0) / twin.estimate.deviceSeconds : null;
    }
    plans.set(tl, {
      family, baseline, hostStepSeconds: tl.estimate?.hostSeconds ?? null, offloaded, onHost, hostShare, naive, resident,
      // Update lines are lines of the ported text; the report names the original's.
      updates: (twin?.ledger?.dataRegion?.updates ?? []).map((u) => ({ ...u, line: (origin[u.line - 1] ?? u.line - 1) + 1 })),
    });
  }
  return { text: finalText, naiveText, plans };
}

/**
 * Reads the race findings of the ported text: a fixable missing clause is added to its nest, a
 * dependence puts the nest back on the host. True when anything changed.
 */
function reviewRaces(ported: FileAnalysis, live: PortNest[], edits: TextEdit[], dropped: Map<PortNest, string>): boolean {
  let changed = false;
  const inserted = edits.filter((e) => e.range.start.line === e.range.end.line && e.range.start.col === 0 && e.range.end.col === 0).map((e) => e.range.start.line).sort((a, b) => a - b);
  // An original line's place in the ported text: insertions before it push it down.
  const shifted = (line: number): number => line + inserted.filter((l) => l <= line).length;
  for (const n of live) {
    const from = shifted(n.root.range.start.line) - 1;
    const to = shifted(n.root.range.end.line) + 1;
    const here = ported.findings.filter((f: Finding) => RACES.has(f.code) && f.range.start.line >= from && f.range.start.line <= to);
    for (const f of here) {
      if (dropped.has(n)) break;
      const clause = f.fixes?.[0]?.edits.length === 1 ? f.fixes[0].edits[0].newText.trim() : '';
      const fixable = (f.code === 'missing-reduction' || f.code === 'missing-private' || f.code === 'shared-scalar-write') && /^(reduction|private)\(/.test(clause);
      if (f.severity === 'info') continue;
      if (fixable) {
        if (!n.extra.includes(clause)) { n.extra.push(clause); changed = true; }
        continue;
      }
      dropped.set(n, `the analysis of the port finds: ${firstSentence(f.message)}`);
      changed = true;
    }
  }
  return changed;
}

/**
 * For each line of a text after the port's edits (whole-line insertions at column 0, and
 * whole-line replacements), the 0-based original line it comes from or stands before.
 */
function lineOrigin(text: string, edits: TextEdit[]): number[] {
  const count = text.split('\n').length;
  const inserted = new Map<number, number>();
  for (const e of edits) {
    if (e.range.start.col === 0 && e.range.end.col === 0 && e.range.start.line === e.range.end.line) {
      inserted.set(e.range.start.line, (inserted.get(e.range.start.line) ?? 0) + e.newText.split('\n').length - 1);
    }
  }
  const out: number[] = [];
  for (let k = 0; k < count; k++) {
    for (let j = 0; j < (inserted.get(k) ?? 0); j++) out.push(k);
    out.push(k);
  }
  return out;
}

/** `copy(a[0:n]) copyin(b[0:n])` → `present(a[0:n], b[0:n])`. */
function presentClauses(clauses: string[]): string[] {
  const names = clauses.map((c) => /^(?:copy|copyin|copyout|create)\((.*)\)$/s.exec(c)?.[1]).filter((x): x is string => !!x);
  return names.length > 0 ? [`present(${names.join(', ')})`] : clauses;
}

function firstSentence(s: string): string {
  const m = /^(.*?[.;])(\s|$)/.exec(s);
  return (m ? m[1] : s).replace(/[.;]$/, '');
}

function figures(ledger: NonNullable<TimeLoopReport['ledger']>, est: StepEstimate | undefined, profile: MachineProfile): PlanFigures {
  const resident = ledger.residentBytes;
  return {
    bytesPerStep: { toDevice: ledger.perStep.toDevice.value, toHost: ledger.perStep.toHost.value },
    transfersPerStep: ledger.transfersPerStep,
    stepSeconds: est?.deviceSeconds ?? null,
    speedup: est?.speedup ?? null,
    bound: est?.bound ?? null,
    residentBytes: resident,
    fits: resident === null ? null : resident <= profile.device.memoryBytes,
  };
}

function emptyFigures(): PlanFigures {
  return { bytesPerStep: { toDevice: null, toHost: null }, transfersPerStep: 0, stepSeconds: null, speedup: null, bound: null, residentBytes: null, fits: null };
}
