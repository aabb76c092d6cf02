/**
 * The data region a time loop calls for, in the file's own directive model, and the updates
 * that host code left in the loop needs once the arrays stay on the device:
 *
 *   read on the device first and needed on the host afterwards → copy   / map(tofrom:)
 *   read on the device first, not needed afterwards            → copyin / map(to:)
 *   written on the device first, needed afterwards             → copyout / map(from:)
 *   written on the device first, not needed afterwards         → create / map(alloc:)
 *
 * Edits are whole lines inserted before 1-based lines of the original file: one directive
 * before the time loop in C (the loop is the structured block), a directive before and an
 * `end` directive after it in Fortran, and `update` lines around the host statements.
 */
import { rangeWithin } from '../ranges';
import type { Procedure, ProgramModel, Stmt } from '../model/program';
import { accessesOfStatement, childStatements } from '../model/values';
import { calleesOf } from '../model/callees';
import { isOffloadCompute } from '../model/directives';
import type { DirectiveFamily, SourceLanguage } from '../types';
import type { ArrayInfo } from './arrays';
import type { HostTouch, TimeLoopRun } from './interpreter';
import { covers, wholeBox } from './regions';
import { regionSectionText, touchSectionText, wholeSectionText } from './slices';

export interface RegionClause {
  array: string;
  /** The standard's own word: copy, copyin, copyout, create (OpenACC); tofrom, to, from, alloc (OpenMP). */
  clause: string;
  section?: string;
}

export interface Edit {
  /** 1-based line of the original file the text goes before. */
  line: number;
  text: string;
}

export interface DataRegionSuggestion {
  family: DirectiveFamily;
  clauses: RegionClause[];
  edits: Edit[];
  /** Why edits are missing or partial (e.g. a pointer whose size is unknown). */
  notes: string[];
  /** Updates the suggestion adds, for findings and quick fixes. */
  updates: { array: string; direction: 'toDevice' | 'toHost'; section: string; line: number }[];
}

type Kind = 'copy' | 'copyin' | 'copyout' | 'create';

/**
 * Lines and line offsets of the text being edited. Suggestions and fixes ask for them once per
 * time loop and per update; splitting an 800 KiB file each time made large files quadratic.
 */
let cached: { text: string; lines: string[]; offsets: number[] } | undefined;
function linesOf(text: string): { lines: string[]; offsets: number[] } {
  if (cached?.text !== text) {
    const lines = text.split('\n');
    const offsets: number[] = [];
    let o = 0;
    for (const l of lines) {
      offsets.push(o);
      o += l.length + 1;
    }
    cached = { text, lines, offsets };
  }
  return cached;
}
const ompWord: Record<Kind, string> = { copy: 'tofrom', copyin: 'to', copyout: 'from', create: 'alloc' };
const ORDER: Kind[] = ['copyin', 'copy', 'copyout', 'create'];

export function suggestDataRegion(
  run: TimeLoopRun,
  model: ProgramModel,
  text: string,
  family: DirectiveFamily,
  infoOf: (key: string) => ArrayInfo | undefined,
): DataRegionSuggestion | null {
  const lang = model.language;
  const candidates = [...run.deviceUsed].filter((k) => !k.includes('::') && !run.presentAtEntry.has(k) && !run.devicePointers.has(k) && !infoOf(k)?.isScalar).sort();
  if (candidates.length === 0) return null;
  // Data that outlives the procedure is needed afterwards only if some host code reads it later:
  // a global read on the host by any other procedure, a parameter read by a caller after its call.
  const escapes = (k: string): boolean => {
    const d = infoOf(k)?.decl;
    if (!d) return false;
    if (d.scope === 'global') return readOnHostElsewhere(model, k, run.procedure);
    if (d.scope === 'param') return readByCallerAfterCall(model, run.procedure, k);
    return false;
  };
  const out: DataRegionSuggestion = { family, clauses: [], edits: [], notes: [], updates: [] };
  const byKind = new Map<Kind, string[]>();
  for (const k of candidates) {
    const info = infoOf(k);
    // A partial device write copied out would overwrite the host's other elements with device
    // memory nobody wrote, so copyout needs the device to write the whole array.
    const written = run.deviceWritten.get(k) ?? [];
    const writesAll = !!info && covers(written, [wholeBox(info.shape)]) && !info.shapeApproximate;
    const readFirst = run.needsHostValues.has(k) || !run.deviceWrites.has(k);
    // Storages the loop rotates between names: after the loop a name read there may hold any of
    // them (it depends on the step count), so each comes back if one is needed.
    const after = run.neededAfter.has(k) || escapes(k) || (run.rotated.has(k) && [...run.rotated].some((r) => run.neededAfter.has(r) || escapes(r)));
    const kind: Kind = readFirst ? (after ? 'copy' : 'copyin') : after ? (writesAll ? 'copyout' : 'copy') : 'create';
    const container = info?.decl?.container;
    const section = info && !container ? wholeSectionText(k, info, lang) : undefined;
    if (container) out.notes.push(`\`${k}\` is a ${container}: data clauses cannot name it; take a pointer to its storage (\`auto *${k}_data = ${k}.data();\`) and put that in the region`);
    else if (!section) out.notes.push(`the size of \`${k}\` is unknown, so its clause needs a section written by hand`);
    out.clauses.push({ array: k, clause: family === 'openacc' ? kind : ompWord[kind], section });
    byKind.set(kind, [...(byKind.get(kind) ?? []), section ?? k]);
  }
  const { lines } = linesOf(text);
  const loop = run.loop;
  const firstLine = Math.min(loop.range.start.line, ...loop.directives.map((d) => d.range.start.line));
  const indent = /^\s*/.exec(lines[loop.range.start.line] ?? '')?.[0] ?? '';
  const clauseText = ORDER.filter((k) => byKind.has(k)).map((k) => (family === 'openacc' ? `${k}(${byKind.get(k)!.join(', ')})` : `map(${ompWord[k]}: ${byKind.get(k)!.join(', ')})`));
  if (lang === 'fortran') {
    const sentinel = family === 'openacc' ? '!$acc' : '!$omp';
    const opener = family === 'openacc' ? 'data' : 'target data';
    out.edits.push(...fortranDirective(indent, sentinel, opener, clauseText).map((t) => ({ line: firstLine + 1, text: t })));
    out.edits.push({ line: loop.range.end.line + 2, text: `${indent}${sentinel} end ${opener}` });
  } else {
    const opener = family === 'openacc' ? '#pragma acc data' : '#pragma omp target data';
    out.edits.push({ line: firstLine + 1, text: `${indent}${opener} ${clauseText.join(' ')}` });
  }
  if (out.notes.length > 0) out.edits = [];
  if (out.edits.length > 0) addUpdates(out, run, model, text, family, infoOf, new Set(candidates));
  // A region without an update host code needs would make that code read stale data: no edits then.
  if (out.notes.length > 0) out.edits = [];
  out.edits.sort((a, b) => a.line - b.line);
  return out;
}

/** Updates around host statements that touch arrays the region makes resident. */
function addUpdates(out: DataRegionSuggestion, run: TimeLoopRun, model: ProgramModel, text: string, family: DirectiveFamily, infoOf: (key: string) => ArrayInfo | undefined, resident: Set<string>): void {
  const lang = model.language;
  const groups = new Map<string, { touches: HostTouch[]; anchor: Stmt; ancestors: Stmt[]; kind: 'read' | 'write'; key: string }>();
  for (const t of run.hostTouches) {
    if (!resident.has(t.key)) continue;
    if (t.kind === 'read' && !run.deviceWrites.has(t.key)) continue;
    if (t.kind === 'write' && !run.deviceReads.has(t.key)) continue;
    const id = `${t.anchor.range.start.line}:${t.anchor.range.start.col}:${t.key}:${t.kind}`;
    const g = groups.get(id) ?? { touches: [], anchor: t.anchor, ancestors: t.ancestors, kind: t.kind, key: t.key };
    g.touches.push(t);
    groups.set(id, g);
  }
  const fileNames = new Set(model.bindings.keys());
  for (const g of groups.values()) {
    const info = infoOf(g.key);
    if (!info) continue;
    const symbolic = new Map([...g.touches[0].bindings].filter(([k]) => !fileNames.has(k)));
    // The update names the array as the code does where it goes: after a swap or a rotation the
    // storage `g.key` is held by another name (`curr` holds what was `next`). A touch inside a
    // callee is named by its storage key, which is the caller's name for it.
    const local = g.touches.every((t) => rangeWithin(t.access.range, g.anchor.range) && t.access.array === g.touches[0].access.array) && !g.touches[0].access.array.includes('::')
      ? g.touches[0].access.array : g.key;
    const texts = [...new Set(g.touches.map((t) => touchSectionText(t, local, info, lang, symbolic)))];
    const section = texts.length === 1 && texts[0] ? texts[0] : regionSectionText(g.touches.flatMap((t) => t.region), local, info, lang);
    const direction = g.kind === 'read' ? 'toHost' : 'toDevice';
    const placed = updateLines(g.anchor, g.ancestors, text, lang, family, direction, section);
    if (!placed) {
      out.notes.push(`no line to put the ${g.kind === 'read' ? 'update to the host' : 'update to the device'} of \`${g.key}\` near line ${g.anchor.range.start.line + 1}`);
      continue;
    }
    out.edits.push(...placed.edits);
    out.updates.push({ array: g.key, direction, section, line: placed.line });
  }
}

/**
 * Lines that put an update before (to the host) or after (to the device) a host statement, or
 * its nearest enclosing statement that can take one; an unbraced `if`/`for` body gets braces so
 * that the update stays under the same guard.
 */
export function updateLines(anchor: Stmt, ancestors: Stmt[], text: string, lang: SourceLanguage, family: DirectiveFamily, direction: 'toDevice' | 'toHost', section: string, where: 'before' | 'after' = direction === 'toHost' ? 'before' : 'after'): { edits: Edit[]; line: number } | undefined {
  const place = insertionPoint(anchor, ancestors, text, lang);
  if (!place) return undefined;
  const stmt = place.stmt;
  const indent = /^\s*/.exec(linesOf(text).lines[stmt.range.start.line] ?? '')?.[0] ?? '';
  const before = Math.min(stmt.range.start.line, ...stmt.directives.map((d) => d.range.start.line)) + 1;
  const after = stmt.range.end.line + 2;
  const update = { line: where === 'before' ? before : after, text: `${indent}${updateDirective(family, lang, direction, section)}` };
  const edits: Edit[] = [];
  if (place.wrap) edits.push({ line: before, text: `${indent}{` });
  edits.push(update);
  if (place.wrap) edits.push({ line: after, text: `${indent}}` });
  return { edits, line: update.line };
}

export function updateDirective(family: DirectiveFamily, lang: SourceLanguage, direction: 'toDevice' | 'toHost', section: string): string {
  const sentinel = lang === 'fortran' ? (family === 'openacc' ? '!$acc' : '!$omp') : family === 'openacc' ? '#pragma acc' : '#pragma omp';
  if (family === 'openacc') return `${sentinel} update ${direction === 'toHost' ? 'self' : 'device'}(${section})`;
  return `${sentinel} target update ${direction === 'toHost' ? 'from' : 'to'}(${section})`;
}

/** Fortran free form allows 132 characters per line; long directives continue with `&`. */
function fortranDirective(indent: string, sentinel: string, opener: string, clauses: string[]): string[] {
  const out: string[] = [];
  let cur = `${indent}${sentinel} ${opener}`;
  for (const c of clauses) {
    if (cur.length + c.length + 1 > 100) {
      out.push(`${cur} &`);
      cur = `${indent}${sentinel}& ${c}`;
    } else cur += ` ${c}`;
  }
  out.push(cur);
  return out;
}

/**
 * The statement a line may go before or after: it must start and end its own lines; in C, an
 * update cannot be the unbraced body of an `if` or `for`, so such a statement is wrapped in
 * braces. Otherwise the nearest enclosing statement that qualifies.
 */
function insertionPoint(anchor: Stmt, ancestors: Stmt[], text: string, lang: SourceLanguage): { stmt: Stmt; wrap: boolean } | undefined {
  const { lines, offsets } = linesOf(text);
  const ownLines = (s: Stmt): boolean => {
    const start = s.directives.length > 0 ? s.directives[0].range.start : s.range.start;
    const before = (lines[start.line] ?? '').slice(0, start.col);
    const after = (lines[s.range.end.line] ?? '').slice(s.range.end.col);
    return before.trim() === '' && /^\s*(\/\/.*|\/\*.*\*\/\s*|!.*)?$/.test(after);
  };
  for (const s of [anchor, ...[...ancestors].reverse()]) {
    if (!ownLines(s)) continue;
    if (lang === 'fortran') return { stmt: s, wrap: false };
    const start = s.directives.length > 0 ? s.directives[0].range.start : s.range.start;
    return { stmt: s, wrap: !precededByStatementBoundary(text, offsets[start.line] + start.col) };
  }
  return undefined;
}

function precededByStatementBoundary(text: string, offset: number): boolean {
  let i = offset - 1;
  for (;;) {
    while (i >= 0 && /\s/.test(text[i])) i--;
    if (i < 0) return true;
    const lineStart = text.lastIndexOf('\n', i) + 1;
    const line = text.slice(lineStart, i + 1);
    if (/^\s*#/.test(line)) { i = lineStart - 1; continue; }
    const comment = line.indexOf('//');
    if (comment >= 0 && !line.slice(0, comment).includes('"')) { i = lineStart + comment - 1; continue; }
    if (text.slice(i - 1, i + 1) === '*/') { i = text.lastIndexOf('/*', i) - 1; continue; }
    return '{};:'.includes(text[i]);
  }
}

/**
 * Host reads per model, found once: which procedures read each name on the host (outside
 * offloaded constructs), and where each procedure is called from. Asked per array and per time
 * loop, so scanning every procedure each time made large files quadratic.
 */
interface HostReadIndex {
  readers: Map<string, Set<Procedure>>;
  calls: Map<Procedure, { caller: Procedure; stmts: Stmt[]; at: number; inLoop: boolean }[]>;
}

const indexes = new WeakMap<ProgramModel, HostReadIndex>();

function hostReadIndex(model: ProgramModel): HostReadIndex {
  let index = indexes.get(model);
  if (index) return index;
  index = { readers: new Map(), calls: new Map() };
  const callees = calleesOf(model);
  for (const p of model.procedures) {
    const stmts: Stmt[] = [];
    const inLoop = new Set<Stmt>();
    const visit = (list: Stmt[], loop: boolean): void => {
      for (const s of list) {
        stmts.push(s);
        if (loop) inLoop.add(s);
        if (s.directives.some(isOffloadCompute)) continue;
        for (const name of hostReadNames(s)) {
          let set = index!.readers.get(name);
          if (!set) index!.readers.set(name, (set = new Set()));
          set.add(p);
        }
        visit(childStatements(s), loop || s.kind === 'loop');
      }
    };
    visit(p.body, false);
    stmts.forEach((s, at) => {
      if (s.kind !== 'call') return;
      const callee = callees.resolve(s.name);
      if (!callee || callee === p) return;
      const list = index!.calls.get(callee) ?? [];
      list.push({ caller: p, stmts, at, inLoop: inLoop.has(s) });
      index!.calls.set(callee, list);
    });
  }
  indexes.set(model, index);
  return index;
}

/** Names a statement reads on the host by itself (its own values; arrays passed to calls count). */
function hostReadNames(s: Stmt): string[] {
  const out = accessesOfStatement(s).filter((a) => a.isRead).map((a) => a.array);
  if (s.kind === 'call') for (const a of s.args) if (a.kind === 'var') out.push(a.name);
  return out;
}

/** Whether host code of any procedure other than `except` reads the global `name`. */
function readOnHostElsewhere(model: ProgramModel, name: string, except: Procedure): boolean {
  for (const p of hostReadIndex(model).readers.get(name) ?? []) {
    if (p !== except && !p.locals.some((l) => l.name === name) && !p.params.some((l) => l.name === name)) return true;
  }
  return false;
}

/**
 * Whether a caller of `proc` reads, on the host and after the call, the array it passes for the
 * parameter `param` (later statements of the caller in source order, or any when a loop runs the
 * call again). An argument that is not a plain name counts as read; with no caller in view (the
 * program entry, another file) the data is assumed to be needed.
 */
function readByCallerAfterCall(model: ProgramModel, proc: Procedure, param: string): boolean {
  const k = proc.params.findIndex((p) => p.name === param);
  const calls = hostReadIndex(model).calls.get(proc) ?? [];
  if (k < 0 || calls.length === 0) return true;
  for (const c of calls) {
    const call = c.stmts[c.at];
    const arg = call.kind === 'call' ? call.args[k] : undefined;
    if (!arg || arg.kind !== 'var') return true;
    const rest = c.inLoop ? c.stmts : c.stmts.slice(c.at + 1);
    if (rest.some((x) => x !== call && !x.directives.some(isOffloadCompute) && hostReadNames(x).includes(arg.name))) return true;
  }
  return false;
}
