/**
 * Re-analysis of an edit inside one procedure (the editor's typing path).
 *
 * A file's procedures fall into parts that do not touch: a part is closed under calls and under
 * the file-level variables and workspace names its procedures mention. An edit inside one
 * procedure changes only the results of its part. That part is analysed twice, before and after
 * the edit, on the file's text with every other procedure's lines blanked (so every position is
 * the file's own), and the whole-file analysis of the text before the edit is updated: the items
 * the part gave before are taken out, the items it gives now are put in. Figures that depend on
 * the whole file (the first use of an unbound size, what the model could not read, bindings that
 * name nothing) are computed again from the merged lists.
 *
 * Every step checks what it assumes and answers `undefined` (analyse the whole file) when a check
 * fails: the line count changed, the edit touches a preprocessor or directive line, a comment or
 * bracket balance, a procedure boundary, or the part's results before the edit are not items of
 * the whole-file analysis (something outside the part shaped them). The editor's tests compare
 * the merged analysis with a fresh one after random edit sequences (tests/incremental.test.ts).
 */
import { type AnalyzeDeps, type AnalyzeInput, type AnalyzeOptions, type FileAnalysis, type NestReport, analyzeSource, inSourceOrder, unknownExtentFindings, unmatchedBindings } from './analyze';
import { fileReport } from './report';
import { notUnderstood } from './analysis/understood';
import type { Procedure } from './model/program';
import type { Directive, Finding, Range } from './types';

/** The whole-file analysis an edit starts from, with the report items of each of its lists. */
export interface EditBase {
  text: string;
  analysis: FileAnalysis;
  /** Report JSON per item, parallel to the analysis's lists (made once per base, carried by merges). */
  keys?: BaseKeys;
}

interface BaseKeys {
  findings: string[];
  nests: string[];
  externalNests: string[];
  timeLoops: string[];
  notTimeLoops: string[];
}

export interface EditResult {
  /** The analysis of the edited text (the base's unchanged items and the part's new ones). */
  base: EditBase;
  /** Procedures analysed again (the edited one and its part), for the debug counters. */
  procedures: number;
}

/** Why an edit was analysed as a whole file (debug counters and tests). */
export const incrementalStats = { parts: 0, whole: 0, reasons: new Map<string, number>() };

function whole(reason: string): undefined {
  incrementalStats.whole++;
  incrementalStats.reasons.set(reason, (incrementalStats.reasons.get(reason) ?? 0) + 1);
  return undefined;
}

/** Part analyses by blanked text (per thread, small): the "after" of one edit is the "before" of the next. */
const partCache = new Map<string, FileAnalysis>();
const PART_CACHE = 8;

/** Every name the lines of a procedure mention. */
function namesOfLines(p: Procedure, lines: readonly string[], norm: (s: string) => string): Set<string> {
  const names = new Set<string>();
  for (let l = p.range.start.line; l <= p.range.end.line; l++) for (const m of (lines[l] ?? '').matchAll(/[A-Za-z_]\w*/g)) names.add(norm(m[0]));
  return names;
}

/** The same, read once per procedure object (a procedure of the kept analysis stands for one text). */
const nameCache = new WeakMap<Procedure, Set<string>>();
function namesIn(p: Procedure, lines: readonly string[], norm: (s: string) => string): Set<string> {
  let names = nameCache.get(p);
  if (!names) nameCache.set(p, (names = namesOfLines(p, lines, norm)));
  return names;
}

/** The arrays and strides of nests in source order, as text (what a linearised array's shape is read from). */
function stridesOf(nests: readonly NestReport[]): string {
  const out: string[] = [];
  for (const r of nests) for (const f of r.cost.footprints) out.push(`${f.array}:${f.strides.map((x) => x.key).join(',')}`);
  return out.join(';');
}

/** The file-level bindings, float constants and variables of a model, as text. */
function fileLevel(a: FileAnalysis): string {
  const m = a.model;
  return JSON.stringify([[...m.bindings].map(([k, v]) => [k, v.key]), [...m.floatConstants], m.globals.map((g) => g.name)]);
}

const PREPROCESSOR_OR_DIRECTIVE = /^\s*#|!\$|pragma|_Pragma|^\s*[cC*]\$/i;

/** What in a line can change how the lines around it parse: brackets, quotes, comment marks, continuations. */
function structure(lines: readonly string[], fortran: boolean): string {
  const counts = new Map<string, number>();
  for (const l of lines) {
    for (const m of l.matchAll(fortran ? /[(){}[\]"'&!;]/g : /\/\*|\*\/|\/\/|[(){}[\]"'\\;]/g)) counts.set(m[0], (counts.get(m[0]) ?? 0) + 1);
  }
  return [...counts].sort().map(([k, v]) => `${k}${v}`).join(' ');
}

function keysOf(a: FileAnalysis): BaseKeys {
  const r = fileReport({ ...a, findings: [] }) as { loops: unknown[]; timeLoops: unknown[]; notTimeLoops?: unknown[] };
  const withLedger = a.timeLoops.map((t) => !!t.ledger);
  let k = 0;
  return {
    // The finding itself (its fixes too), not only its report line.
    findings: a.findings.map((f) => JSON.stringify(f)),
    nests: r.loops.map((l) => JSON.stringify(l)),
    externalNests: (fileReport({ ...a, nests: a.externalNests, findings: [], timeLoops: [], notTimeLoops: [] }) as { loops: unknown[] }).loops
      .map((l, i) => `${a.externalNests[i].nest.procedure.origin ?? ''}\n${JSON.stringify(l)}`),
    timeLoops: withLedger.map((has, i) => has ? JSON.stringify(r.timeLoops[k++]) : `no ledger ${a.timeLoops[i].timeLoop.loop.keywordRange.start.line}:${a.timeLoops[i].timeLoop.loop.keywordRange.start.col}`),
    notTimeLoops: (r.notTimeLoops ?? []).map((x) => JSON.stringify(x)),
  };
}

/**
 * `base` minus the items whose keys `gone` lists (as a multiset), plus `added`: the merged list
 * and its keys. False when an item of `gone` is not in `base` (the part's "before" is not what
 * the whole file gave: the parts are not independent).
 */
function replaceItems<T>(base: readonly T[], baseKeys: readonly string[], gone: readonly string[], added: readonly T[], addedKeys: readonly string[], skip?: (k: string) => boolean): { list: T[]; keys: string[] } | false {
  const remove = new Map<string, number>();
  for (const k of gone) if (!skip?.(k)) remove.set(k, (remove.get(k) ?? 0) + 1);
  const list: T[] = [];
  const keys: string[] = [];
  base.forEach((x, i) => {
    const k = baseKeys[i];
    if (skip?.(k)) return;
    const n = remove.get(k);
    if (n) {
      remove.set(k, n - 1);
      return;
    }
    list.push(x);
    keys.push(k);
  });
  if ([...remove.values()].some((n) => n > 0)) return false;
  added.forEach((x, i) => {
    if (skip?.(addedKeys[i])) return;
    list.push(x);
    keys.push(addedKeys[i]);
  });
  return { list, keys };
}

const isUnknownExtent = (k: string): boolean => k.startsWith('{"code":"unknown-extent"');

function before(a: Range['start'], b: Range['start']): number {
  return a.line - b.line || a.col - b.col;
}

/** Sort `list` and `keys` together by `at` (stable). */
function sortBy<T>(m: { list: T[]; keys: string[] }, at: (x: T) => Range['start']): void {
  const order = m.list.map((x, i) => i).sort((i, j) => before(at(m.list[i]), at(m.list[j])) || i - j);
  const list = order.map((i) => m.list[i]);
  const keys = order.map((i) => m.keys[i]);
  m.list = list;
  m.keys = keys;
}

/**
 * The analysis of `input.text`, made from `base` (the analysis of an earlier text of the same
 * file, with the same options) by analysing again only the part the edit touches; undefined when
 * the edit cannot be taken that way (the caller analyses the whole file).
 */
export function analyzeEdit(base: EditBase, input: AnalyzeInput, deps: AnalyzeDeps, options: AnalyzeOptions): EditResult | undefined {
  const a0 = base.analysis;
  if (a0.internalErrors.length > 0 || a0.port || a0.programTransfers || options.programRun) return whole('whole-file results');
  if (a0.directiveFamilies.length > 1) return whole('two directive models');
  const oldLines = base.text.split('\n');
  const newLines = input.text.split('\n');
  if (oldLines.length !== newLines.length) return whole('lines added or removed');
  // The lines that differ (the same count: every other line keeps its place).
  const changed: number[] = [];
  for (let l = 0; l < oldLines.length; l++) if (oldLines[l] !== newLines[l]) changed.push(l);
  if (changed.length === 0) return { base, procedures: 0 };
  const fortran = input.language === 'fortran';
  if (changed.some((l) => PREPROCESSOR_OR_DIRECTIVE.test(oldLines[l]) || PREPROCESSOR_OR_DIRECTIVE.test(newLines[l]))) return whole('a preprocessor or directive line');

  // The file's own procedures, which must not overlap (a Fortran internal procedure lies inside its host).
  const own = a0.model.procedures.filter((p) => !p.origin);
  const index = new Map(own.map((p, i) => [p, i]));
  const byStart = [...own].sort((p, q) => p.range.start.line - q.range.start.line);
  for (let i = 1; i < byStart.length; i++) if (byStart[i].range.start.line <= byStart[i - 1].range.end.line) return whole('procedures share lines');
  // Every changed line lies inside the body of a procedure (not on its first or last line), and
  // the brackets, quotes and comment marks of each procedure's changed lines are as they were.
  const edited = new Map<number, number[]>();
  let k = 0;
  for (const l of changed) {
    while (k < byStart.length && byStart[k].range.end.line <= l) k++;
    const p = byStart[k];
    if (!p || !(p.range.start.line < l && l < p.range.end.line)) return whole('an edit outside one procedure body');
    const i = index.get(p)!;
    edited.set(i, [...(edited.get(i) ?? []), l]);
  }
  for (const lines of edited.values()) {
    if (structure(lines.map((l) => oldLines[l]), fortran) !== structure(lines.map((l) => newLines[l]), fortran)) return whole('brackets, quotes or comments');
  }

  // The names a procedure shares with others: procedures, file-level variables, other files' names.
  const norm = (s: string): string => (fortran ? s.toLowerCase() : s);
  const shared = new Set<string>();
  for (const p of own) for (const part of p.name.split('::')) shared.add(norm(part));
  for (const g of a0.model.globals) shared.add(norm(g.name));
  for (const m of options.workspace ?? []) {
    for (const p of m.procedures) for (const part of p.name.split('::')) shared.add(norm(part));
    for (const g of m.globals) shared.add(norm(g.name));
  }
  const tokensOf = (p: Procedure, names: ReadonlySet<string>): Set<string> => {
    const hidden = new Set([...p.params, ...p.locals].map((d) => norm(d.name)));
    const out = new Set<string>(p.name.split('::').map(norm));
    for (const t of names) if (shared.has(t) && !hidden.has(t)) out.add(t);
    return out;
  };
  // The procedures of the base keep their objects while unchanged, so their names are read once.
  const tokens = own.map((p) => tokensOf(p, namesIn(p, oldLines, norm)));
  const part = new Set<number>(edited.keys());
  const partTokens = new Set<string>();
  for (const i of part) for (const t of tokens[i]) partTokens.add(t);
  for (let grew = true; grew;) {
    grew = false;
    own.forEach((_, i) => {
      if (part.has(i)) return;
      let touches = false;
      for (const t of tokens[i]) if (partTokens.has(t)) touches = true;
      if (!touches) return;
      part.add(i);
      for (const t of tokens[i]) partTokens.add(t);
      grew = true;
    });
  }
  // An edited procedure may now name something of another part: then the parts join.
  for (const i of edited.keys()) for (const t of tokensOf(own[i], namesOfLines(own[i], newLines, norm))) if (!partTokens.has(t)) return whole('the edit reaches another part');
  // A name the edit adds or removes must not occur in another part: some readings are file-wide
  // (a Fortran name is an array when any directive's data clause names it, a local keeps its
  // initial value only while no procedure assigns that name, a C `(x) - 1` is a cast unless `x`
  // is used as a value somewhere), so such a name may change how another part reads.
  const count = (lines: readonly number[], text: readonly string[]): Map<string, number> => {
    const m = new Map<string, number>();
    for (const l of lines) for (const x of text[l].matchAll(/[A-Za-z_]\w*/g)) m.set(norm(x[0]), (m.get(norm(x[0])) ?? 0) + 1);
    return m;
  };
  const namesBefore = count(changed, oldLines);
  const namesAfter = count(changed, newLines);
  const moved = [...new Set([...namesBefore.keys(), ...namesAfter.keys()])].filter((n) => namesBefore.get(n) !== namesAfter.get(n));
  if (moved.length > 0) {
    for (let i = 0; i < own.length; i++) {
      if (part.has(i)) continue;
      const names = namesIn(own[i], oldLines, norm);
      if (moved.some((n) => names.has(n))) return whole('the edit adds or removes a name another part uses');
    }
  }
  let partLines = 0;
  for (const i of part) partLines += own[i].range.end.line - own[i].range.start.line + 1;
  if (part.size === own.length || partLines * 2 > oldLines.length) return whole('the part is most of the file');

  // The texts of the part: other procedures' lines blanked (positions unchanged).
  const blank = new Array<boolean>(oldLines.length).fill(false);
  for (let i = 0; i < own.length; i++) {
    if (part.has(i)) continue;
    const r = own[i].range;
    if (oldLines[r.start.line].slice(0, r.start.col).trim() !== '' || oldLines[r.end.line].slice(r.end.col).trim().replace(/^;/, '') !== '') return whole('a procedure shares a line with other code');
    for (let l = r.start.line; l <= r.end.line; l++) blank[l] = true;
  }
  const blanked = (lines: readonly string[]): string => lines.map((l, i) => (blank[i] ? '' : l)).join('\n');
  const outside = inSourceOrder(a0.nests.filter((n) => !inPart(n.nest.procedure)));
  function inPart(p: Procedure): boolean {
    const i = index.get(p);
    return i !== undefined ? part.has(i) : own.some((q, j) => part.has(j) && q.name === p.name && q.range.start.line === p.range.start.line);
  }
  const partOptions: AnalyzeOptions = { ...options, baseline: a0.baseline, outsideNests: outside };
  // A part's analysis depends on its text and on the strides of the nests outside it (and the baseline).
  const context = `${a0.baseline}\n${stridesOf(outside)}`;
  const analysePart = (text: string): FileAnalysis => {
    const key = `${input.path}\n${context}\n${text}`;
    const hit = partCache.get(key);
    if (hit) return hit;
    const a = analyzeSource({ ...input, text }, deps, partOptions);
    if (partCache.size >= PART_CACHE) partCache.delete(partCache.keys().next().value!);
    partCache.set(key, a);
    return a;
  };
  const oldPart = analysePart(blanked(oldLines));
  const newPart = analysePart(blanked(newLines));
  if (oldPart.internalErrors.length > 0 || newPart.internalErrors.length > 0 || newPart.port || oldPart.port) return whole('the part has whole-file results');
  if (oldPart.directiveFamilies.join() !== newPart.directiveFamilies.join()) return whole('directive models changed');
  // What the part gives the whole file must not change: the strides its nests index each array
  // with (a linearised array of the same name elsewhere takes its shape from them), and the
  // file-level bindings, constants and variables (a main program's parameters are file-level).
  if (stridesOf(oldPart.nests) !== stridesOf(newPart.nests) || stridesOf(oldPart.externalNests) !== stridesOf(newPart.externalNests)) return whole('the part indexes its arrays with other strides');
  if (fileLevel(oldPart) !== fileLevel(newPart)) return whole('file-level names changed');
  const partProcs = (a: FileAnalysis): Procedure[] => a.model.procedures.filter((p) => !p.origin);
  const oldProcs = partProcs(oldPart);
  const newProcs = partProcs(newPart);
  const partOwn = own.filter((_, i) => part.has(i));
  const sameShape = (xs: Procedure[]): boolean => xs.length === part.size && xs.every((p, k) => {
    const q = partOwn[k];
    return p.name === q.name && p.range.start.line === q.range.start.line && p.range.end.line === q.range.end.line;
  });
  if (!sameShape(oldProcs) || !sameShape(newProcs)) return whole('procedure boundaries moved');

  const keys = base.keys ?? keysOf(a0);
  const oldKeys = keysOf(oldPart);
  const newKeys = keysOf(newPart);
  const findings = replaceItems(a0.findings, keys.findings, oldKeys.findings, newPart.findings, newKeys.findings, isUnknownExtent);
  const nests = replaceItems(a0.nests, keys.nests, oldKeys.nests, newPart.nests, newKeys.nests);
  const externalNests = replaceItems(a0.externalNests, keys.externalNests, oldKeys.externalNests, newPart.externalNests, newKeys.externalNests);
  const timeLoops = replaceItems(a0.timeLoops, keys.timeLoops, oldKeys.timeLoops, newPart.timeLoops, newKeys.timeLoops);
  const notTimeLoops = replaceItems(a0.notTimeLoops, keys.notTimeLoops, oldKeys.notTimeLoops, newPart.notTimeLoops, newKeys.notTimeLoops);
  if (!findings || !nests || !externalNests || !timeLoops || !notTimeLoops) return whole('the part depends on the rest of the file');
  sortBy(nests, (r) => r.nest.root.keywordRange.start);
  sortBy(timeLoops, (t) => t.timeLoop.loop.keywordRange.start);
  sortBy(notTimeLoops, (r) => r.loop.keywordRange.start);

  // The model: the part's procedures and directives from the new text, the rest as they were.
  const newByOld = new Map<Procedure, Procedure>();
  partOwn.forEach((p, k) => newByOld.set(p, newProcs[k]));
  const inPartLines = (r: Range): boolean => [...part].some((i) => own[i].range.start.line <= r.start.line && r.end.line <= own[i].range.end.line);
  const directives: Directive[] = [...a0.model.directives.filter((d) => !inPartLines(d.range)), ...newPart.model.directives.filter((d) => inPartLines(d.range))]
    .sort((x, y) => before(x.range.start, y.range.start));
  const modelFindings: Finding[] = [...a0.model.findings.filter((f) => !inPartLines(f.range)), ...newPart.model.findings.filter((f) => inPartLines(f.range))];
  const model = { ...a0.model, procedures: a0.model.procedures.map((p) => newByOld.get(p) ?? p), directives, findings: modelFindings };

  const merged: FileAnalysis = {
    ...a0,
    model,
    nests: nests.list,
    externalNests: externalNests.list,
    timeLoops: timeLoops.list,
    notTimeLoops: notTimeLoops.list,
    findings: findings.list,
    internalErrors: [],
    notUnderstood: notUnderstood(nests.list, fortran),
    unmatchedBindings: options.bindings && options.bindings.size > 0 ? unmatchedBindings(model, options.bindings) : [],
  };
  const extents = unknownExtentFindings(merged);
  const extentKeys = keysOf({ ...merged, nests: [], externalNests: [], timeLoops: [], notTimeLoops: [], findings: extents }).findings;
  const all = { list: [...findings.list, ...extents], keys: [...findings.keys, ...extentKeys] };
  sortBy(all, (f) => f.range.start);
  merged.findings = all.list;
  incrementalStats.parts++;
  return {
    base: {
      text: input.text,
      analysis: merged,
      keys: { findings: all.keys, nests: nests.keys, externalNests: externalNests.keys, timeLoops: timeLoops.keys, notTimeLoops: notTimeLoops.keys },
    },
    procedures: part.size,
  };
}
