/**
 * OpenMP 5.2 → OpenACC 3.3, one directive at a time. Only offload directives are translated:
 * target constructs, what is nested in their regions, declare target and the data directives.
 * Host OpenMP (a parallel for outside any target region) stays as it is.
 */
import { type Item, baseName, splitList, splitModifier } from './clauses';
import type { Context, Translation } from './types';
import { CREATE_MARK, DEFAULT_PRESENT_MARK, PRESENT_MARK } from './types';

/** map-type → OpenACC data clause on compute and structured data constructs (OpenACC §2.7). */
const MAP_TO_DATA: Record<string, string> = { to: 'copyin', from: 'copyout', tofrom: 'copy', alloc: 'create' };

const TUNING = new Set(['schedule', 'dist_schedule', 'proc_bind', 'order', 'simdlen', 'safelen', 'nontemporal', 'aligned', 'device', 'num_threads', 'bind', 'allocate', 'uses_allocators', 'thread_limit_dummy']);

/** The list items a marker names: `MARK(a, b[0:n])` in the note lines above. */
function markedList(markers: string[], mark: string): string[] {
  const out: string[] = [];
  for (const m of markers) {
    const i = m.indexOf(mark);
    if (i < 0) continue;
    const rest = m.slice(i + mark.length);
    if (!rest.startsWith('(')) continue;
    let depth = 0;
    for (let j = 0; j < rest.length; j++) {
      if (rest[j] === '(') depth++;
      if (rest[j] === ')' && --depth === 0) {
        out.push(...splitList(rest.slice(1, j)));
        break;
      }
    }
  }
  return out;
}

interface MapParts { type: string; modifiers: string[]; list: string }

function parseMap(args: string): MapParts {
  const { modifier, list } = splitModifier(args);
  if (modifier === undefined) return { type: 'tofrom', modifiers: [], list };
  const words = modifier.split(/\s*,\s*|\s+/).filter(Boolean).map((w) => w.toLowerCase());
  const type = words.find((w) => ['to', 'from', 'tofrom', 'alloc', 'release', 'delete'].includes(w)) ?? 'tofrom';
  return { type, modifiers: words.filter((w) => w !== type), list };
}

function data(out: Translation, c: Item, clause: string, list: string): void {
  out.clauses.push({ text: `${clause}(${list})`, seg: c.seg, src: c });
}

/** Map and the clauses shared by target constructs. */
function targetClauses(clauses: Item[], out: Translation, ctx: Context, kind: 'compute' | 'data' | 'enter' | 'exit'): void {
  const present = new Set(markedList(ctx.markers, PRESENT_MARK).map((s) => s.replace(/\s+/g, '')));
  for (const c of clauses) {
    switch (c.name) {
      case 'map': {
        const m = parseMap(c.args ?? '');
        // A reduction variable may also be in copy: gcc accepts it, and it keeps the round trip exact.
        const items = splitList(m.list);
        if (items.length === 0) continue;
        const extra = m.modifiers.filter((w) => w !== 'close' && w !== 'present');
        if (extra.length > 0) out.notes.push(`map modifier ${extra.join(', ')} on ${items.join(', ')} is left out${extra.includes('always') ? ': OpenACC copies only data that is not present; add an update directive if the copy is needed' : ''}`);
        if (m.modifiers.includes('present')) { data(out, c, 'present', items.join(', ')); continue; }
        if (kind === 'exit') {
          const clause = m.type === 'from' ? 'copyout' : 'delete';
          data(out, c, clause, items.join(', '));
          continue;
        }
        if (kind === 'enter') {
          data(out, c, m.type === 'alloc' ? 'create' : 'copyin', items.join(', '));
          continue;
        }
        if (m.type === 'alloc') {
          // Items the earlier acc → omp translation marked as acc present go back to present.
          const pres = items.filter((x) => present.has(x.replace(/\s+/g, '')));
          const rest = items.filter((x) => !present.has(x.replace(/\s+/g, '')));
          if (pres.length > 0) data(out, c, 'present', pres.join(', '));
          if (rest.length > 0) data(out, c, 'create', rest.join(', '));
          continue;
        }
        data(out, c, MAP_TO_DATA[m.type] ?? 'copy', items.join(', '));
        continue;
      }
      case 'if': {
        const { modifier, list } = splitModifier(c.args ?? '');
        if (modifier === undefined || /^target( (data|enter data|exit data|update))?$/.test(modifier)) out.clauses.push({ text: `if(${list})`, seg: c.seg, src: c });
        else out.notes.push(`if(${c.args}) applies to the ${modifier} part only and is left out`);
        continue;
      }
      case 'nowait':
      case 'depend':
        // Dropping both runs the target task synchronously, a valid schedule of the OpenMP program.
        if (c.name === 'nowait') out.notes.push('nowait is left out: the OpenACC code runs synchronously (async queues keep an order that unrelated nowait tasks do not have)');
        continue;
      case 'is_device_ptr':
        out.clauses.push({ text: `deviceptr(${c.args ?? ''})`, seg: c.seg, src: c });
        continue;
      case 'defaultmap':
        if (/^\s*present/.test(c.args ?? '')) out.clauses.push({ text: 'default(present)', seg: c.seg, src: c });
        else out.notes.push(`defaultmap(${c.args}) is left out: OpenACC's implicit rules apply (OpenACC 3.3 §2.6.2)`);
        continue;
    }
    out.other.push(c);
  }
  if (kind === 'compute' && ctx.markers.some((m) => m.includes(DEFAULT_PRESENT_MARK))) out.clauses.push({ text: 'default(present)', seg: 0 });
}

function loopClauses(clauses: Item[], out: Translation, opts: { teams: boolean }): void {
  for (const c of clauses) {
    switch (c.name) {
      case 'collapse':
      case 'private':
      case 'firstprivate':
        out.clauses.push({ text: `${c.name}(${c.args ?? ''})`, seg: c.seg, src: c });
        continue;
      case 'reduction': {
        const { modifier, list } = splitModifier(c.args ?? '');
        const parts = (modifier ?? '').split(',').map((s) => s.trim());
        const op = parts[parts.length - 1];
        if (parts.length > 1) {
          out.notes.push(`reduction modifier ${parts.slice(0, -1).join(', ')} is left out`);
          out.clauses.push({ text: `reduction(${op}: ${list})`, seg: c.seg, src: c });
        } else out.clauses.push({ text: `reduction(${(c.args ?? '').trim()})`, seg: c.seg, src: c });
        continue;
      }
      case 'num_teams':
        out.clauses.push({ text: `num_gangs(${c.args ?? ''})`, seg: c.seg, src: c });
        continue;
      case 'thread_limit':
        out.clauses.push({ text: `vector_length(${c.args ?? ''})`, seg: c.seg, src: c });
        continue;
      case 'shared':
      case 'default':
        out.notes.push(`${c.name}(${c.args ?? ''}) is left out: OpenACC has no data-sharing clause of that kind`);
        continue;
      case 'lastprivate':
      case 'linear':
        out.notes.push(`${c.name}(${c.args ?? ''}) has no OpenACC counterpart (left out): the value after the loop is not the last iteration's`);
        continue;
    }
    if (TUNING.has(c.name)) out.notes.push(`${c.name}${c.args !== undefined ? `(${c.args})` : ''} only tunes the schedule (left out)`);
    else out.notes.push(`${c.name}${c.args !== undefined ? `(${c.args})` : ''} is not translated (left out)`);
  }
  void opts;
}

const LOOPS = /(^|\s)(for|do|loop|simd|distribute)$/;

/** Notes that OpenMP's implicit zero-length array sections for C pointers differ from OpenACC's. */
function pointerNote(out: Translation, ctx: Context, clauses: Item[]): void {
  if (ctx.language === 'fortran') return;
  const named = new Set(clauses.filter((c) => c.args !== undefined).flatMap((c) => splitList(splitModifier(c.args!).list).map(baseName)));
  const used = [...ctx.regionNames].filter((n) => ctx.pointerNames.has(n) && !named.has(n));
  if (used.length === 0) return;
  out.notes.push(`OpenMP maps the pointer${used.length > 1 ? 's' : ''} ${used.join(', ')} as zero-length array sections that attach to mapped data (OpenMP 5.2 §5.8.1); OpenACC 3.3 §2.6.2 treats a pointer as a scalar, so a separate-memory device needs present(${used.map((n) => `${n}[0:n]`).join(', ')}) with their lengths`);
}

export function ompToAcc(construct: string, constructArgs: string | undefined, clauses: Item[], ctx: Context): Translation {
  const out: Translation = { construct: '', clauses: [], notes: [], other: [] };
  const inTarget = ctx.ompEnclosing.length > 0;
  const leaveOut = (why: string): Translation => ({ ...out, leftOut: why });
  const finish = (): Translation => {
    for (const c of out.other) out.notes.push(`${c.name}${c.args !== undefined ? `(${c.args})` : ''} is not translated (left out)`);
    out.other = [];
    return out;
  };
  const words = construct.split(' ');

  if (construct.startsWith('target') && LOOPS.test(construct) && !/^target (enter|exit) data|^target (data|update)/.test(construct)) {
    // Combined target loop constructs (OpenMP 5.2 §17) ↔ OpenACC parallel loop (§2.11).
    out.construct = 'parallel loop';
    if (!words.includes('parallel') && !words.includes('loop')) out.clauses.push({ text: 'gang', seg: 0 });
    targetClauses(clauses, out, ctx, 'compute');
    const rest = out.other;
    out.other = [];
    loopClauses(rest, out, { teams: words.includes('teams') });
    pointerNote(out, ctx, clauses);
    return out;
  }
  switch (construct) {
    case 'target': {
      out.construct = ctx.hasNestedLoops ? 'kernels' : 'serial';
      if (ctx.hasNestedLoops) out.notes.push('a target region with nested loop constructs became kernels: kernels copies scalars back (OpenACC 3.3 §2.6.2) where OpenMP makes them firstprivate');
      targetClauses(clauses, out, ctx, 'compute');
      const rest = out.other;
      out.other = [];
      loopClauses(rest, out, { teams: false });
      pointerNote(out, ctx, clauses);
      return out;
    }
    case 'target teams':
    case 'target parallel':
      out.construct = 'parallel';
      targetClauses(clauses, out, ctx, 'compute');
      {
        const rest = out.other;
        out.other = [];
        loopClauses(rest, out, { teams: true });
      }
      pointerNote(out, ctx, clauses);
      return out;
    case 'target data': {
      const use = clauses.filter((c) => c.name === 'use_device_ptr' || c.name === 'use_device_addr');
      if (use.length > 0) {
        if (use.length !== clauses.length) return leaveOut('target data with both map and use_device clauses needs an acc data and an acc host_data construct');
        out.construct = 'host_data';
        for (const c of use) out.clauses.push({ text: `use_device(${c.args ?? ''})`, seg: c.seg, src: c });
        return out;
      }
      out.construct = 'data';
      targetClauses(clauses, out, ctx, 'data');
      return finish();
    }
    case 'target enter data':
      out.construct = 'enter data';
      targetClauses(clauses, out, ctx, 'enter');
      return finish();
    case 'target exit data': {
      out.construct = 'exit data';
      targetClauses(clauses, out, ctx, 'exit');
      // map(delete:) sets the reference count to zero: OpenACC's finalize (OpenACC 3.3 §2.7.11).
      if (clauses.some((c) => c.name === 'map' && parseMap(c.args ?? '').type === 'delete')) out.clauses.push({ text: 'finalize', seg: 0 });
      return finish();
    }
    case 'target update':
      out.construct = 'update';
      for (const c of clauses) {
        if ((c.name === 'to' || c.name === 'from') && c.args !== undefined) {
          const { modifier, list } = splitModifier(c.args);
          if (modifier) out.notes.push(`motion modifier ${modifier} is left out`);
          out.clauses.push({ text: `${c.name === 'to' ? 'device' : 'self'}(${modifier ? list : c.args.trim()})`, seg: c.seg, src: c });
        } else out.other.push(c);
      }
      {
        const rest = out.other;
        out.other = [];
        targetClauses(rest, out, ctx, 'data');
      }
      return finish();
    case 'declare target':
    case 'begin declare target': {
      if (constructArgs === undefined && !clauses.some((c) => ['to', 'enter', 'link'].includes(c.name))) {
        // The delimited form: the caller marks the functions inside (C) or the enclosing procedure (Fortran).
        if (ctx.language === 'fortran' && !ctx.fileScope) { out.construct = 'routine'; out.clauses.push({ text: 'seq', seg: 0 }); return out; }
        return { ...out, dropped: 'declare target block', construct: 'declare target block' };
      }
      const names = [...(constructArgs !== undefined ? splitList(constructArgs) : []), ...clauses.filter((c) => c.name === 'to' || c.name === 'enter').flatMap((c) => splitList(c.args ?? ''))];
      const links = clauses.filter((c) => c.name === 'link').flatMap((c) => splitList(c.args ?? ''));
      const created = new Set(markedList(ctx.markers, CREATE_MARK).map(baseName));
      const funcs = names.filter((n) => ctx.functionNames.has(n));
      const vars = names.filter((n) => !ctx.functionNames.has(n));
      if (funcs.length > 0 && vars.length === 0 && links.length === 0) {
        if (funcs.length > 1) return leaveOut(`declare target of several functions needs one acc routine(name) seq each: ${funcs.join(', ')}`);
        out.construct = 'routine';
        out.constructArgs = funcs[0];
        out.clauses.push({ text: 'seq', seg: 0 });
        return out;
      }
      if (funcs.length > 0) return leaveOut(`declare target mixes functions (${funcs.join(', ')}) and variables`);
      out.construct = 'declare';
      const c = vars.filter((v) => created.has(baseName(v)));
      const ci = vars.filter((v) => !created.has(baseName(v)));
      // A declare target variable's device copy starts with the host's initial value: copyin (§2.13).
      if (ci.length > 0) out.clauses.push({ text: `copyin(${ci.join(', ')})`, seg: 0 });
      if (c.length > 0) out.clauses.push({ text: `create(${c.join(', ')})`, seg: 0 });
      if (links.length > 0) out.clauses.push({ text: `link(${links.join(', ')})`, seg: 0 });
      return out;
    }
    case 'end declare target':
      return { ...out, dropped: 'end declare target', construct: 'end declare target' };
    case 'taskwait':
      out.construct = 'wait';
      return out;
    case 'atomic':
      if (!inTarget && !ctx.markers.includes('in declare target')) return { ...out, construct: '' };
      out.construct = 'atomic';
      for (const c of clauses) {
        if (['read', 'write', 'update', 'capture'].includes(c.name)) out.clauses.push({ text: c.name, seg: c.seg, src: c });
        else if (['seq_cst', 'relaxed', 'acquire', 'release', 'acq_rel'].includes(c.name)) out.notes.push(`memory order ${c.name} is left out: OpenACC atomics have no memory-order clause`);
        else out.other.push(c);
      }
      return finish();
  }
  if (!inTarget) return { ...out, construct: '' };
  // Constructs nested in a target region.
  if (LOOPS.test(construct) && !construct.startsWith('end')) {
    const enclosing = ctx.ompEnclosing;
    const sequentialOuter = enclosing.length === 1 && enclosing[0] === 'target';
    out.construct = 'loop';
    if (sequentialOuter && ctx.hasNestedLoops === false) out.clauses.push({ text: 'independent', seg: 0 });
    else if (sequentialOuter) out.clauses.push({ text: 'independent', seg: 0 });
    if (construct === 'simd') out.clauses.push({ text: 'vector', seg: 0 });
    else if (construct === 'distribute') out.clauses.push({ text: 'gang', seg: 0 });
    loopClauses(clauses, out, { teams: false });
    return out;
  }
  if (construct === 'teams' || construct === 'parallel') {
    return { ...out, dropped: `${construct} inside a target region: OpenACC's kernels region decides the parallelism itself`, construct };
  }
  if (construct.startsWith('end ')) return { ...out, construct };
  return leaveOut(`omp ${construct} inside a target region has no OpenACC counterpart`);
}

export function isOffloadOmp(construct: string): boolean {
  return construct.startsWith('target') || construct.startsWith('declare target') || construct === 'begin declare target' || construct === 'end declare target';
}

export { baseName };
