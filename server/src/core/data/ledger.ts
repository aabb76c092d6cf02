/**
 * The time-step data ledger of one file: for each time loop, every transfer across the link
 * (where, why, how often), bytes per step and once, coherence findings, and the data region that
 * keeps the arrays resident.
 */
import { otherFileName } from '../paths';
import { entryRootOf, isMain } from './entry';
import type { ArrayInfo } from './arrays';
import * as S from '../symbolic';
import type { LoopStmt, Procedure, ProgramModel } from '../model/program';
import type { TimeLoop } from '../analysis/nests';
import type { Quantity } from '../analysis/bindings';
import { quantity } from '../analysis/bindings';
import type { DirectiveFamily, Finding, Fix, Range, SourceLanguage, TextEdit } from '../types';
import { isOffloadCompute } from '../model/directives';
import { walkStatements } from '../model/values';
import { DataInterpreter, type EntryState, type TimeLoopRun, type TransferRecord } from './interpreter';
import { type Region, bounding, boxSize, disjoint, intersect, overlaps, regionSize, subtract } from './regions';
import { regionSections, sectionElements } from './slices';
import { type DataRegionSuggestion, suggestDataRegion, updateDirective, updateLines } from './suggest';
import { touchSectionText } from './slices';

export interface TransferReport {
  range: Range;
  /** The file of the directive when it is in another file of the workspace. */
  origin?: string;
  /** The clause variable that causes the transfer, when there is one. */
  at?: Range;
  via: Range[];
  array: string;
  direction: 'toDevice' | 'toHost';
  bytes: Quantity;
  bytesExpr: S.Expr;
  everySteps: number;
  cause: TransferRecord['cause'];
  /** A scalar (reduction result, scalar clause): a blocking transfer of a few bytes. */
  scalar?: boolean;
}

export interface TimeLoopLedger {
  loop: LoopStmt;
  procedure: Procedure;
  steps: Quantity;
  perStep: { toDevice: Quantity; toHost: Quantity };
  once: { toDevice: Quantity; toHost: Quantity };
  transfers: TransferReport[];
  dataRegion: DataRegionSuggestion | null;
  /** Bytes resident on the device at the peak (null when unbound). */
  residentBytes: number | null;
  /** Transfers per step (each a synchronising copy; one every K steps counts 1/K): latency, not bandwidth, prices small ones. */
  transfersPerStep: number;
  run: TimeLoopRun;
  /**
   * The transfers of the same program run outside the time loops (before, after, and in the
   * entry run from the program's root), each once: what `verify` compares whole-run totals with.
   */
  outside: TransferReport[];
  /** What the interpreter knows of an array by its storage key (extent, shape), for edits that name it. */
  infoOf: (key: string) => ArrayInfo | undefined;
}

export interface DataLedgerOptions {
  deviceMemoryBytes: number;
  /** The project root messages name other files from (paths.ts otherFileName). */
  projectRoot?: string;
}

export function dataLedger(
  model: ProgramModel,
  text: string,
  timeLoops: TimeLoop[],
  bindingsOf: (p: Procedure) => Map<string, S.Expr>,
  nestStrides: (key: string) => S.Expr[][],
  options: DataLedgerOptions,
): { ledgers: TimeLoopLedger[]; findings: Finding[] } {
  const outer = timeLoops.filter((t) => !t.parent);
  const loops = new Set(outer.map((t) => t.loop));
  const findings: Finding[] = [];
  const ledgers: TimeLoopLedger[] = [];
  let lines: string[] | undefined;
  const lineAt = (n: number): string => (lines ??= text.split('\n'))[n] ?? '';
  const family = directiveFamily(model);
  const procs = new Map(model.procedures.map((p) => [p.name, p]));
  const withLoops = [...new Set(outer.map((t) => t.procedure))];
  // The program before the call into a procedure (an allocation routine's enter data, a set-up
  // routine's update) is its time loop's starting state: each root is run once, time loops off,
  // and gives the entry state of every such procedure it reaches.
  const byRoot = new Map<Procedure, Set<Procedure>>();
  for (const proc of withLoops) {
    const root = entryRootOf(model, proc);
    if (root) byRoot.set(root, (byRoot.get(root) ?? new Set()).add(proc));
  }
  const entries = new Map<Procedure, EntryState>();
  for (const [root, targets] of byRoot) {
    for (const [p, e] of new DataInterpreter(model, new Set(), bindingsOf, nestStrides, procs, options.projectRoot).entriesFrom(root, targets)) entries.set(p, e);
  }
  for (const proc of withLoops) {
    const interp = new DataInterpreter(model, loops, bindingsOf, nestStrides, procs, options.projectRoot);
    interp.runProcedure(proc, entries.get(proc));
    attachCoherenceFixes(interp, model, text, family);
    findings.push(...interp.findings);
    const bindings = bindingsOf(proc);
    for (const run of interp.runs) {
      const steps = quantity(run.loop.tripCount ?? S.sym(`trips_L${run.loop.keywordRange.start.line + 1}`), bindings);
      const asReport = (t: TransferRecord): TransferReport => ({
        range: t.range, at: t.at, origin: t.origin, via: t.via, array: t.array, direction: t.direction, bytes: quantity(t.bytes, bindings), bytesExpr: t.bytes, everySteps: t.everySteps, cause: t.cause,
        ...(t.scalar ? { scalar: true } : {}),
      });
      const transfers = run.transfers.map(asReport);
      const perStep = (dir: 'toDevice' | 'toHost'): Quantity => perStepQuantity(run.transfers.filter((t) => t.direction === dir), bindings);
      const onceRecs = interp.outside.filter((t) => [...run.liveAtEntry.values()].includes(t.allocation) && (t.cause === 'enter' || t.cause === 'exit' || t.cause === 'update'));
      const once = (dir: 'toDevice' | 'toHost'): Quantity => quantity(S.add(S.num(0), ...onceRecs.filter((t) => t.direction === dir).map((t) => t.bytes)), bindings);
      const dataRegion = suggestDataRegion(run, model, text, familyIn(run.loop, family), (k) => interp.infoOf(k));
      const ledger: TimeLoopLedger = {
        loop: run.loop, procedure: run.procedure, steps, perStep: { toDevice: perStep('toDevice'), toHost: perStep('toHost') },
        once: { toDevice: once('toDevice'), toHost: once('toHost') }, transfers, dataRegion, residentBytes: run.residentPeak, run,
        transfersPerStep: run.transfers.reduce((n, t) => n + 1 / t.everySteps, 0),
        outside: interp.outside.map(asReport),
        infoOf: (k) => interp.infoOf(k),
      };
      ledgers.push(ledger);
      const regionFix = dataRegion && dataRegion.edits.length > 0 ? regionFixOf(dataRegion) : undefined;
      const fromTransfers = transferFindings(ledger, bindings, model.path, (to) => otherFileName(model.path, to, options.projectRoot), familyIn(run.loop, family), lineAt);
      for (const f of fromTransfers) if (regionFix && (f.code === 'implicit-transfer' || f.severity === 'warning')) f.fixes = [regionFix];
      findings.push(...fromTransfers, ...widerUpdateFindings(ledger, interp, model, lineAt, familyIn(run.loop, family)), ...memoryFindings(ledger, options));
    }
  }
  return { ledgers, findings };
}

/**
 * The transfers of a whole run of a program that has no time loop, from its `main` (each loop
 * that holds device work counted by its trip count): what `verify` compares such a program with.
 * Undefined when the file has no `main`.
 */
export function programTransfers(
  model: ProgramModel,
  bindingsOf: (p: Procedure) => Map<string, S.Expr>,
  nestStrides: (key: string) => S.Expr[][],
): TransferReport[] | undefined {
  const main = model.procedures.find((p) => isMain(p.name));
  if (!main) return undefined;
  const procs = new Map(model.procedures.map((p) => [p.name, p]));
  const interp = new DataInterpreter(model, new Set(), bindingsOf, nestStrides, procs);
  interp.runProcedure(main);
  const bindings = bindingsOf(main);
  return interp.outside.map((t) => ({
    range: t.range, at: t.at, origin: t.origin, via: t.via, array: t.array, direction: t.direction, bytes: quantity(t.bytes, bindings), bytesExpr: t.bytes,
    everySteps: t.everySteps, cause: t.cause, ...(t.scalar ? { scalar: true } : {}),
  }));
}

/**
 * Average bytes per step: a transfer every K steps counts bytes/K. The expression is shown as one
 * term per period (`32*NX*NY + 32*NX*NY/100`), which reads better than the merged fraction.
 */
function perStepQuantity(ts: TransferRecord[], bindings: ReadonlyMap<string, S.Expr>): Quantity {
  const byPeriod = new Map<number, S.Expr[]>();
  for (const t of ts) byPeriod.set(t.everySteps, [...(byPeriod.get(t.everySteps) ?? []), t.bytes]);
  const total = S.add(S.num(0), ...[...byPeriod].map(([k, bs]) => S.div(S.add(...bs), S.num(k))));
  const shown = [...byPeriod].sort((a, b) => a[0] - b[0]).map(([k, bs]) => {
    const sum = S.toString(S.add(...bs));
    return k === 1 ? sum : `${/[+-]/.test(sum) ? `(${sum})` : sum}/${k}`;
  });
  return quantity(total, bindings, shown.length > 0 ? shown.join(' + ') : '0');
}

/** One finding per (directive, array): both directions of a copy in one sentence. */
function transferFindings(l: TimeLoopLedger, bindings: ReadonlyMap<string, S.Expr>, path: string, nameOf: (other: string) => string, family: DirectiveFamily, lineAt: (line: number) => string): Finding[] {
  const groups = new Map<string, TransferReport[]>();
  for (const t of l.transfers) {
    const id = `${t.origin ?? ''}:${t.range.start.line}:${t.range.start.col}:${t.array}:${t.cause === 'implicit'}`;
    groups.set(id, [...(groups.get(id) ?? []), t]);
  }
  const out: Finding[] = [];
  const residentable: Residentable[] = [];
  const steps = l.steps.value;
  for (const ts of groups.values()) {
    const t0 = ts[0];
    const size = ts[0].bytes.value;
    const perStepExpr = S.add(...ts.map((t) => S.div(t.bytesExpr, S.num(t.everySteps))));
    const perStep = S.evaluate(perStepExpr, bindings);
    const dirs = new Set(ts.map((t) => t.direction));
    const how = dirs.size === 2 ? 'copied to the device and back' : dirs.has('toDevice') ? 'copied to the device' : 'copied back to the host';
    const every = t0.everySteps === 1 ? 'every time step' : `every ${t0.everySteps} steps`;
    const sizeText = size !== null ? ` (${S.formatBytes(size)})` : '';
    const amounts = amountsText(perStepExpr, perStep, steps);
    const via = t0.origin
      ? ` (the directive is in ${nameOf(t0.origin)}, line ${t0.range.start.line + 1}, reached from this call)`
      : t0.via.length > 0 ? ` (reached from the call at line ${t0.via.map((r) => r.start.line + 1).join(' → ')})` : '';
    // A directive in another file is reported at the call in this file that reaches it.
    const place = (r: Range): Range => (t0.origin && t0.via[0] ? t0.via[0] : r);
    if (t0.scalar) {
      // A scalar the construct must hand back (a reduction result) or that kernels copies: a
      // data region does not remove it, so the note is about latency, not about residency.
      const n = ts.length;
      out.push({
        code: 'transfer-in-time-loop', severity: 'info', range: place(t0.range), array: t0.array,
        message: `The scalar \`${t0.array}\`${sizeText} is ${how} ${every} by this construct (a reduction result or a scalar it writes; ${family === 'openacc' ? 'OpenACC 3.3 §2.6.2' : 'OpenMP 5.2 §5.8.1'})${via}: ${amounts} in ${n} blocking transfer${n === 1 ? '' : 's'}. Few bytes, but each waits for the link's latency; where the host needs the value only now and then, keep it on the device and update it when needed.`,
      });
    } else if (t0.cause === 'implicit') {
      const f: Finding = {
        code: 'implicit-transfer', severity: 'warning', range: place(t0.range), array: t0.array,
        message: `\`${t0.array}\`${sizeText} is named in no data clause and is not present, so this construct ${how === 'copied to the device and back' ? 'copies it to the device and back' : how.replace('copied', 'copies it')} ${every} by the implicit rules (${IMPLICIT_RULE[family]})${via}: ${amounts}. Keep it resident: put a data region around the time loop (quick fix available).`,
      };
      out.push(f);
      if (!t0.origin) residentable.push({ finding: f, ts, perStep, how, every, via });
    } else if (t0.cause === 'update') {
      const recs = l.run.transfers.filter((r) => r.range === t0.range && r.array === t0.array && r.direction === t0.direction);
      const whole = recs.some((r) => r.whole);
      // The array as this update names it (a rotated storage may carry another name elsewhere).
      const shown = t0.origin ? t0.array : writtenName(lineAt, t0.at) ?? t0.array;
      // Slices are named as written: `u[0:1][0:N]` and `u[N-1:1][0:N]`, not "a slice of u".
      const slices = [...new Set(recs.map((r) => r.section?.text).filter((x): x is string => !!x))];
      const total = S.evaluate(S.add(...recs.map((r) => r.bytes)), bindings);
      const what = whole
        ? `all of \`${shown}\`${sizeText}`
        : slices.length > 1
          ? `${slices.length} slices of \`${shown}\` (${slices.map((x) => `\`${x}\``).join(', ')}${total !== undefined ? `; ${S.formatBytes(total)} together` : ''})`
          : `the slice ${slices[0] ? `\`${slices[0]}\`` : `of \`${shown}\``}${size !== null ? ` (${S.formatBytes(size)})` : ''}`;
      out.push({
        code: 'transfer-in-time-loop', severity: whole && t0.everySteps === 1 ? 'warning' : 'info', range: place(t0.at ?? t0.range), array: t0.array,
        message: `This update moves ${what} ${every}${via}: ${amounts}.${whole ? ' If host code needs only part of it, update just that slice.' : ' Host code in the loop needs it.'}`,
      });
    } else {
      const f: Finding = {
        code: 'transfer-in-time-loop', severity: 'warning', range: place(t0.at ?? t0.range), array: t0.array,
        message: `\`${t0.array}\`${sizeText} is ${how} ${every} by this construct's data clause${via}: ${amounts}. Keep it resident: put a data region around the time loop (quick fix available).`,
      };
      out.push(f);
      if (!t0.origin) residentable.push({ finding: f, ts, perStep, how, every, via });
    }
  }
  if (residentable.length < 2) return out;
  const grouped = missingRegionFinding(residentable, l, bindings, family, path);
  const members = new Set(residentable.map((r) => r.finding));
  const at = out.findIndex((f) => members.has(f));
  return [...out.slice(0, at), grouped, ...out.slice(at).filter((f) => !members.has(f))];
}

/** Bytes per step and over the run as messages say them; the expression when a size is unbound. */
function amountsText(perStepExpr: S.Expr, perStep: number | undefined, steps: number | null): string {
  return perStep !== undefined
    ? `${S.formatBytes(perStep)} per step${steps !== null ? `, ${S.formatBytes(perStep * steps)} over ${steps.toLocaleString('en-US')} steps` : ''}`
    : `${S.toString(perStepExpr)} bytes per step (bind its sizes for a number)`;
}

/** The implicit data rules of each model, cited in its own standard. */
const IMPLICIT_RULE: Record<DirectiveFamily, string> = {
  openacc: 'OpenACC 3.3 §2.6.2: arrays are copied',
  openmp: 'OpenMP 5.2 §5.8.1: arrays are mapped tofrom',
};

/** A transfer finding one data region around the time loop would remove (same file only). */
interface Residentable {
  finding: Finding;
  ts: TransferReport[];
  perStep: number | undefined;
  how: string;
  every: string;
  /** How the time loop reaches the construct, when through a call. */
  via: string;
}

/**
 * One missing data region is one finding: the arrays it would keep resident, the bytes they cost
 * per step together, and each construct that moves them as related information. It sits at the
 * first construct of the time loop that moves them, with the region's quick fix (added by the caller).
 */
function missingRegionFinding(rs: Residentable[], l: TimeLoopLedger, bindings: ReadonlyMap<string, S.Expr>, family: DirectiveFamily, path: string): Finding {
  const arrays = [...new Set(rs.map((r) => r.finding.array!))];
  const sizes = arrays.map((a) => rs.find((r) => r.finding.array === a)!.ts[0].bytes.value);
  const together = sizes.every((x) => x !== null) ? S.formatBytes(sizes.reduce((x, y) => x + (y ?? 0), 0)) : undefined;
  const perStepExpr = S.add(...rs.flatMap((r) => r.ts.map((t) => S.div(t.bytesExpr, S.num(t.everySteps)))));
  const perStep = S.evaluate(perStepExpr, bindings);
  const steps = l.steps.value;
  const amounts = amountsText(perStepExpr, perStep, steps);
  // Constructs all reached through one call: say so once, in the message; otherwise per construct.
  const sameVia = rs.every((r) => r.via === rs[0].via) ? rs[0].via : '';
  const constructs = new Map<number, { range: Range; every: string; via: string; parts: string[] }>();
  for (const r of rs) {
    const range = r.finding.range;
    const c = constructs.get(range.start.line) ?? { range, every: r.every, via: sameVia ? '' : r.via, parts: [] };
    c.parts.push(`\`${r.finding.array}\` ${r.how.replace(/^copied /, '')}${r.perStep !== undefined ? ` (${S.formatBytes(r.perStep)} per step)` : ''}`);
    constructs.set(range.start.line, c);
  }
  const implicit = rs.some((r) => r.finding.code === 'implicit-transfer');
  const first = rs.reduce((a, b) => (b.finding.range.start.line < a.finding.range.start.line ? b : a)).finding;
  const names = arrays.length === 1 ? `\`${arrays[0]}\`` : `${arrays.slice(0, -1).map((a) => `\`${a}\``).join(', ')} and \`${arrays[arrays.length - 1]}\``;
  const why = implicit
    ? rs.every((r) => r.finding.code === 'implicit-transfer')
      ? `by the implicit rules (${IMPLICIT_RULE[family]})`
      : `by the implicit rules (${IMPLICIT_RULE[family]}) and by their data clauses`
    : 'by their data clauses';
  const them = arrays.length === 1 ? 'it' : 'them';
  return {
    code: implicit ? 'implicit-transfer' : 'transfer-in-time-loop',
    severity: 'warning',
    range: first.range,
    ...(arrays.length === 1 ? { array: arrays[0] } : {}),
    arrays,
    message: `No data region keeps ${names}${together ? ` (${together}${arrays.length > 1 ? ' together' : ''})` : ''} on the device across the time loop, so ${constructs.size} construct${constructs.size === 1 ? '' : 's'} it runs move${constructs.size === 1 ? 's' : ''} ${them} across the link${sameVia} ${why}: ${amounts}. Keep ${them} resident: put one data region around the time loop (quick fix available); each construct is listed below.`,
    related: [...constructs.values()].sort((a, b) => a.range.start.line - b.range.start.line).map((c) => ({
      path, range: c.range, message: `${c.every}: ${c.parts.join('; ')}${c.via}`,
    })),
  };
}

/** Whole-array updates where host code in the loop touches only part of the array. */
function widerUpdateFindings(l: TimeLoopLedger, interp: DataInterpreter, model: ProgramModel, lineAt: (line: number) => string, family: DirectiveFamily): Finding[] {
  const out: Finding[] = [];
  const seen = new Set<string>();
  for (const t of l.run.transfers) {
    if (t.cause === 'update' && !t.whole && !t.origin && t.direction === 'toHost') {
      const f = overwrittenSliceFinding(t, l, interp, model, seen, lineAt, family);
      if (f) out.push(f);
      continue;
    }
    // An update in another file is that file's to narrow.
    if (t.cause !== 'update' || !t.whole || t.origin) continue;
    const id = `${t.range.start.line}:${t.array}:${t.direction}`;
    if (seen.has(id)) continue;
    seen.add(id);
    const info = interp.infoOf(t.array);
    if (!info || info.shapeApproximate) continue;
    const kind = t.direction === 'toHost' ? 'read' : 'write';
    const touched = l.run.hostTouches.filter((h) => h.key === t.array && h.kind === kind).flatMap((h) => h.region);
    const total = info.shape.extents.reduce((a, b) => a * b, 1);
    const needed = regionSize(disjoint(touched));
    if (touched.length === 0 || needed >= total) continue;
    const touches = l.run.hostTouches.filter((h) => h.key === t.array && h.kind === kind);
    // The name as the clause writes it (after a pointer swap the storage may carry another name here).
    const name = writtenName(lineAt, t.at) ?? t.array;
    const fileNames = new Set(model.bindings.keys());
    const ownTexts = touches.map((h) => touchSectionText(h, name, info, model.language, new Map([...h.bindings].filter(([k]) => !fileNames.has(k)))));
    const texts = [...new Set(ownTexts)];
    // The code's own index expressions where each touch is one exact section and no two overlap;
    // otherwise exact numeric sections, one per box the touched elements join into.
    const exact = ownTexts.every((x) => !!x) && touches.every((h) => regionSize(disjoint(h.region)) === boxSize(bounding(h.region)))
      && touches.every((h, i) => touches.every((g, j) => j <= i || ownTexts[i] === ownTexts[j] || !overlaps(h.region, g.region)));
    const sections = regionSections(touched, name, info, model.language);
    const pieces = exact ? texts as string[] : sections.texts;
    const slice = sectionsText(pieces);
    const moved = exact
      ? [...new Map(touches.map((h, i) => [ownTexts[i], sectionElements(bounding(h.region), info, model.language)])).values()].reduce((a, b) => a + b, 0)
      : sections.elements;
    // A narrowed update that would move (nearly) everything is no fix.
    if (moved >= total) continue;
    const fixes = t.at ? [narrowingFix(t, pieces, model.language, family, lineAt)] : undefined;
    out.push({
      fixes,
      code: 'update-wider-than-needed', severity: 'warning', range: t.range, array: t.array,
      message: `This update moves all of \`${name}\` (${S.formatBytes(total * info.elementBytes)}), but host code in the loop ${kind === 'read' ? 'reads' : 'writes'} only ${needed.toLocaleString('en-US')} element${needed === 1 ? '' : 's'} of it; update just \`${slice}\` (${S.formatBytes(moved * info.elementBytes)}${moved > needed ? `: whole rows, as a C section must be contiguous` : ''}).`,
    });
  }
  return out;
}

/**
 * A slice brought to the host of which the host overwrites part before it reads it: only the
 * elements read before being overwritten need the device's values (host reads in step order).
 */
function overwrittenSliceFinding(t: TransferRecord, l: TimeLoopLedger, interp: DataInterpreter, model: ProgramModel, seen: Set<string>, lineAt: (line: number) => string, family: DirectiveFamily): Finding | undefined {
  const id = `${t.range.start.line}:${t.array}:${t.section?.text}`;
  if (seen.has(id) || !t.section) return undefined;
  seen.add(id);
  const info = interp.infoOf(t.array);
  if (!info || info.shapeApproximate) return undefined;
  const updated = t.section.region;
  let written: Region = [];
  let needed: Region = [];
  for (const h of l.run.hostTouches) {
    if (h.key !== t.array) continue;
    if (h.kind === 'read') needed = [...needed, ...intersect(subtract(h.region, written), updated)];
    else written = [...written, ...h.region];
  }
  const have = regionSize(disjoint(updated));
  const need = regionSize(disjoint(needed));
  if (!Number.isFinite(have) || !Number.isFinite(need) || need === 0 || need >= have) return undefined;
  const sections = regionSections(needed, writtenName(lineAt, t.at) ?? t.array, info, model.language);
  if (sections.elements >= have) return undefined;
  const slice = sectionsText(sections.texts);
  return {
    fixes: t.at ? [narrowingFix(t, sections.texts, model.language, family, lineAt)] : undefined,
    code: 'update-wider-than-needed', severity: 'warning', range: t.at ?? t.range, array: t.array,
    message: `This update brings \`${t.section.text}\` (${S.formatBytes(have * info.elementBytes)}) to the host, but host code overwrites part of it before reading it; only ${need.toLocaleString('en-US')} element${need === 1 ? '' : 's'} are read first: update just \`${slice}\` (${S.formatBytes(sections.elements * info.elementBytes)}).`,
  };
}

/** Sections as a message names them: `a`, `a` and `b`, `a`, `b` and `c`. */
function sectionsText(pieces: readonly string[]): string {
  // The caller wraps the result in backticks.
  return pieces.length <= 1 ? (pieces[0] ?? '') : `${pieces.slice(0, -1).join('`, `')}\` and \`${pieces[pieces.length - 1]}`;
}

/**
 * The fix that narrows an update to its sections: the first replaces the clause's variable, and
 * each further section gets an update directive of its own right after (compilers reject one
 * array twice in one clause: gcc "appears more than once in data clauses").
 */
function narrowingFix(t: TransferRecord, pieces: readonly string[], lang: SourceLanguage, family: DirectiveFamily, lineAt: (line: number) => string): Fix {
  const edits: TextEdit[] = [{ range: t.at!, newText: pieces[0] }];
  const after = t.range.end.line + 1;
  const indent = /^\s*/.exec(lineAt(t.range.start.line))![0];
  const more = pieces.slice(1).map((p) => `${indent}${updateDirective(family, lang, t.direction, p)}\n`).join('');
  if (more) edits.push({ range: { start: { line: after, col: 0 }, end: { line: after, col: 0 } }, newText: more });
  return { title: pieces.length === 1 ? `Narrow the update to \`${pieces[0]}\`` : `Narrow the update to ${pieces.length} sections (${pieces.map((p) => `\`${p}\``).join(', ')})`, edits };
}

/** The variable a clause names at `at` (`v` in `v[0:n]`, `u` in `u(:, :)`), as written. */
function writtenName(lineAt: (line: number) => string, at: Range | undefined): string | undefined {
  if (!at || at.start.line !== at.end.line) return undefined;
  const line = lineAt(at.start.line) ?? '';
  return /^\s*([A-Za-z_][\w%]*(?:(?:\.|->)[A-Za-z_]\w*)*)/.exec(line.slice(at.start.col, at.end.col))?.[1];
}

/** Line insertions (before 1-based lines) as text edits at the start of those lines. */
export function lineEditsToTextEdits(edits: { line: number; text: string }[]): TextEdit[] {
  return edits.map((e) => ({ range: { start: { line: e.line - 1, col: 0 }, end: { line: e.line - 1, col: 0 } }, newText: `${e.text}\n` }));
}

function regionFixOf(r: DataRegionSuggestion): Fix {
  const n = r.updates.length;
  const words = r.family === 'openacc' ? 'an OpenACC data region' : 'an OpenMP target data region';
  return { title: `Keep the arrays on the device: put ${words} around the time loop${n > 0 ? ` (and ${n} update${n === 1 ? '' : 's'} for host code)` : ''}`, edits: lineEditsToTextEdits(r.edits) };
}

/** Updates for stale reads and `present` for clauses on data already present. */
function attachCoherenceFixes(interp: DataInterpreter, model: ProgramModel, text: string, family: DirectiveFamily): void {
  for (const [f, h] of interp.hints) {
    const placed = updateLines(h.anchor, h.ancestors, text, model.language, family, h.direction, h.section, h.where);
    if (!placed) continue;
    const what = updateDirective(family, model.language, h.direction, h.section).replace(/^[#!]\S*\s+/, '');
    const place = h.direction === 'toHost' ? 'before the host code' : h.where === 'after' ? 'after the host write' : 'before the construct';
    f.fixes = [{ title: `Add \`${what}\` ${place}`, edits: lineEditsToTextEdits(placed.edits) }];
  }
  for (const [f, p] of interp.presentFixes) {
    const fixes: Fix[] = [{ title: `Write \`${p.text}\`: the data is already on the device`, edits: [{ range: p.range, newText: p.text }] }];
    if (!p.directive.clauses.some((c) => c.canonical === 'default') && /^(parallel|kernels|serial)/.test(p.directive.construct)) {
      fixes.push({ title: 'Add default(present) to this construct', edits: [{ range: { start: p.directive.range.end, end: p.directive.range.end }, newText: ' default(present)' }] });
    }
    f.fixes = fixes;
  }
}

function memoryFindings(l: TimeLoopLedger, options: DataLedgerOptions): Finding[] {
  if (l.residentBytes === null || l.residentBytes <= options.deviceMemoryBytes) return [];
  return [{
    code: 'exceeds-device-memory', severity: 'warning', range: l.loop.keywordRange,
    message: `The arrays resident on the device during this time loop (${[...l.run.residentArrays].sort().join(', ')}) take ${S.formatBytes(l.residentBytes)}, more than the device profile's ${S.formatBytes(options.deviceMemoryBytes)}; split the domain, shrink the grid, or use a device with more memory.`,
  }];
}

function directiveFamily(model: ProgramModel): DirectiveFamily {
  const acc = model.directives.filter((d) => d.family === 'openacc').length;
  const omp = model.directives.filter((d) => d.family === 'openmp' && d.construct.startsWith('target')).length;
  return omp > acc ? 'openmp' : 'openacc';
}

/** The family the loop's own offload constructs use, else the file's. */
function familyIn(loop: LoopStmt, fallback: DirectiveFamily): DirectiveFamily {
  let found: DirectiveFamily | undefined;
  walkStatements(loop.body, (s) => {
    const d = s.directives.find(isOffloadCompute);
    if (d && !found) found = d.family;
  });
  return found ?? fallback;
}
