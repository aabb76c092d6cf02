/**
 * OpenACC 3.3 → OpenMP 5.2, one directive at a time, given where the directive stands (inside
 * which compute construct, at file or procedure scope). The section numbers in comments are
 * those of the two specifications; docs/translate.md lists the correspondences in one table.
 */
import { type Item, baseName, splitList, splitModifier } from './clauses';
import type { Context, Translation } from './types';
import { PRESENT_MARK, DEFAULT_PRESENT_MARK, CREATE_MARK } from './types';

/** OpenACC data clause → OpenMP map type (OpenACC §2.7, OpenMP §5.8.3). */
const DATA_TO_MAP: Record<string, string> = {
  copy: 'tofrom', pcopy: 'tofrom', present_or_copy: 'tofrom',
  copyin: 'to', pcopyin: 'to', present_or_copyin: 'to',
  copyout: 'from', pcopyout: 'from', present_or_copyout: 'from',
  create: 'alloc', pcreate: 'alloc', present_or_create: 'alloc',
};

/** Clauses that only tune the schedule: leaving them out keeps the program's meaning. */
const TUNING = new Set(['tile', 'device_type', 'dtype', 'num_workers', 'gang', 'worker', 'vector']);

function listOf(args: string | undefined): string {
  // OpenACC 3.3 modifiers on data clauses (copyin(readonly: a), create(zero: a)) have no OpenMP form.
  const { modifier, list } = splitModifier(args ?? '');
  return modifier && /^(readonly|zero|always\w*|capture)(\s*,\s*\w+)*$/.test(modifier) ? list : (args ?? '').trim();
}

/** Translates the clauses shared by compute and data constructs; the rest go to `other`. */
function dataClauses(clauses: Item[], out: Translation, opts: { compute: boolean; teams: boolean; fortran: boolean; pointers?: ReadonlySet<string> }): void {
  const present: string[] = [];
  for (const c of clauses) {
    const map = DATA_TO_MAP[c.name];
    if (map && c.args !== undefined) {
      out.clauses.push({ text: `map(${map}: ${listOf(c.args)})`, seg: c.seg, src: c });
      continue;
    }
    switch (c.name) {
      case 'present':
      case 'no_create':
        if (c.args === undefined) break;
        if (c.name === 'present') {
          // OpenMP 5.1 added map(present, alloc: x) (§5.8.3 map-type-modifier present), but gcc 12
          // and clang 14 reject it, so present data is mapped with alloc: no transfer when the
          // data is present, as the OpenACC program asserts. A bare C pointer is left to the
          // implicit rule instead: map(alloc: p) would map the pointer variable itself, while an
          // unmapped pointer in a target region becomes a zero-length section that attaches to
          // the data already present (OpenMP 5.2 §5.8.1).
          const items = splitTop(c.args);
          const bare = opts.fortran ? [] : items.filter((x) => /^[A-Za-z_]\w*$/.test(x) && opts.pointers?.has(x));
          const kept = items.filter((x) => !bare.includes(x));
          if (kept.length > 0) out.clauses.push({ text: `map(alloc: ${kept.join(', ')})`, seg: c.seg, src: c });
          if (bare.length > 0) out.notes.push(`present(${bare.join(', ')}): ${bare.length === 1 ? 'a pointer' : 'pointers'} left to OpenMP's implicit zero-length section, which attaches to the present data (OpenMP 5.2 §5.8.1)`);
          present.push(c.args.trim());
        } else {
          out.notes.push(`no_create(${c.args.trim()}) has no OpenMP 5.2 counterpart (left out): the implicit map applies`);
        }
        continue;
      case 'deviceptr':
        if (c.args === undefined) break;
        if (opts.compute && !opts.fortran) out.clauses.push({ text: `is_device_ptr(${c.args.trim()})`, seg: c.seg, src: c });
        else out.notes.push(`deviceptr(${c.args.trim()}) is left out: use is_device_ptr / use_device_addr where the data is used`);
        continue;
      case 'attach':
      case 'detach':
        out.notes.push(`${c.name}(${c.args ?? ''}) is left out: OpenMP attaches pointers when their target is mapped (OpenMP 5.2 §5.8.3)`);
        continue;
      case 'if':
        out.clauses.push({ text: `if(${c.args ?? ''})`, seg: c.seg, src: c });
        continue;
      case 'async':
        out.notes.push(`async${c.args !== undefined ? `(${c.args})` : ''} is left out: the OpenMP code runs synchronously, which is a valid schedule of the asynchronous OpenACC code (nowait tasks would need depend clauses to keep the queue order)`);
        continue;
      case 'wait':
        // Everything translated runs synchronously, so waiting is implied.
        continue;
      case 'default':
        if (/present/i.test(c.args ?? '')) out.notes.push(DEFAULT_PRESENT_MARK);
        else out.notes.push(`default(${c.args ?? ''}) is left out: OpenMP's default(none) would also demand data-sharing clauses for every scalar`);
        continue;
      case 'self':
        out.notes.push(`self${c.args !== undefined ? `(${c.args})` : ''} on a compute construct is left out: OpenMP's if(target: …) is the nearest form`);
        continue;
    }
    out.other.push(c);
  }
  if (present.length > 0) out.notes.push(`${PRESENT_MARK}(${present.join(', ')})`);
}

/** Loop-level clauses on a combined or nested loop construct. */
function loopClauses(clauses: Item[], out: Translation, where: 'teams' | 'parallel' | 'simd' | 'target'): void {
  for (const c of clauses) {
    switch (c.name) {
      case 'collapse':
        if (where !== 'target') out.clauses.push({ text: `collapse(${c.args ?? ''})`, seg: c.seg, src: c });
        continue;
      case 'private':
      case 'firstprivate':
        if (where === 'simd' && c.name === 'firstprivate') {
          out.notes.push(`firstprivate(${c.args}) on an inner loop is left out: simd has no firstprivate clause`);
          continue;
        }
        out.clauses.push({ text: `${c.name}(${c.args ?? ''})`, seg: c.seg, src: c });
        continue;
      case 'reduction':
        if (where === 'target') {
          // A sequential target region: the variable only needs to come back (OpenMP 5.2 §5.8.3).
          out.clauses.push({ text: `map(tofrom: ${splitModifier(c.args ?? '').list})`, seg: c.seg, src: c });
        } else out.clauses.push({ text: `reduction(${(c.args ?? '').trim()})`, seg: c.seg, src: c });
        continue;
      case 'independent':
      case 'seq':
      case 'auto':
        continue;
      case 'num_gangs':
        if (where === 'teams') out.clauses.push({ text: `num_teams(${c.args ?? ''})`, seg: c.seg, src: c });
        else out.notes.push(`num_gangs(${c.args}) is left out: there is no teams construct here`);
        continue;
      case 'vector_length':
        if (where === 'teams') {
          // The nearest OpenMP bound: threads per team (OpenMP 5.2 §10.2 thread_limit).
          out.clauses.push({ text: `thread_limit(${c.args ?? ''})`, seg: c.seg, src: c });
          out.notes.push(`vector_length(${c.args}) became thread_limit(${c.args}), a bound on threads per team rather than a vector length`);
        } else out.notes.push(`vector_length(${c.args}) is left out`);
        continue;
    }
    if (TUNING.has(c.name)) {
      if (c.args !== undefined || c.name === 'tile' || c.name === 'device_type' || c.name === 'dtype' || c.name === 'num_workers') {
        out.notes.push(`${c.name}${c.args !== undefined ? `(${c.args})` : ''} only tunes the schedule and has no OpenMP 5.2 counterpart in gcc 12 (left out)`);
      }
      continue;
    }
    out.notes.push(`${c.name}${c.args !== undefined ? `(${c.args})` : ''} is not translated (left out)`);
  }
}

export function accToOmp(construct: string, constructArgs: string | undefined, clauses: Item[], ctx: Context): Translation {
  const out: Translation = { construct: '', clauses: [], notes: [], other: [] };
  const fortran = ctx.language === 'fortran';
  const loopWord = fortran ? 'do' : 'for';
  const has = (n: string) => clauses.some((c) => c.name === n);
  const leaveOut = (why: string): Translation => ({ ...out, leftOut: why });

  switch (construct) {
    case 'parallel loop':
    case 'kernels loop':
    case 'serial loop': {
      // A kernels loop without independent leaves the decision to the compiler (OpenACC §2.9.9 auto);
      // OpenMP's loop constructs assert independence, so such a loop runs in one device thread.
      const sequential = construct === 'serial loop' || has('seq') || (construct === 'kernels loop' && !has('independent') && !has('gang') && !has('worker') && !has('vector'));
      if (sequential) {
        out.construct = 'target';
        if (construct !== 'serial loop') out.notes.push(`${construct}${has('seq') ? ' seq' : ' without independent'} runs in one device thread: OpenMP loop constructs assert independent iterations (add independent if they are)`);
        dataClauses(clauses, out, { compute: true, teams: false, fortran, pointers: ctx.pointerNames });
        loopClauses(out.other, out, 'target');
      } else {
        // OpenACC §2.11 combined constructs ↔ OpenMP §17 combined target teams distribute parallel loop.
        out.construct = `target teams distribute parallel ${loopWord}`;
        dataClauses(clauses, out, { compute: true, teams: true, fortran, pointers: ctx.pointerNames });
        loopClauses(out.other, out, 'teams');
      }
      out.other = [];
      return out;
    }
    case 'parallel':
      out.construct = 'target teams';
      dataClauses(clauses, out, { compute: true, teams: true, fortran, pointers: ctx.pointerNames });
      loopClauses(out.other.filter((c) => c.name !== 'collapse'), out, 'teams');
      out.other = [];
      return out;
    case 'kernels':
    case 'serial':
      out.construct = 'target';
      dataClauses(clauses, out, { compute: true, teams: false, fortran, pointers: ctx.pointerNames });
      loopClauses(out.other, out, 'target');
      out.other = [];
      return out;
    case 'loop': {
      const enclosing = ctx.accCompute;
      if (!enclosing) return leaveOut('an orphaned acc loop (in a routine) has no OpenMP counterpart that gcc accepts; the loop runs sequentially in each device thread');
      const seq = has('seq') || (enclosing.construct === 'kernels' && !has('independent')) || has('auto') || enclosing.construct.startsWith('serial');
      if (seq) {
        const kept = clauses.filter((c) => c.name === 'private' || c.name === 'reduction');
        const why = has('seq') ? 'acc loop seq' : enclosing.construct.startsWith('serial') ? 'acc loop in a serial region' : 'acc loop without independent in kernels (auto)';
        return leaveOut(`${why} runs sequentially, as the plain loop does in OpenMP${kept.length ? `; check ${kept.map((c) => `${c.name}(${c.args})`).join(' ')}` : ''}`);
      }
      let where: 'parallel' | 'simd' | 'teams';
      if (ctx.insideAccLoop || enclosing.construct.endsWith('loop')) {
        // A loop inside a gang-distributed loop: its iterations are the inner parallelism (vector).
        out.construct = 'simd';
        where = 'simd';
      } else if (enclosing.construct === 'parallel') {
        out.construct = `distribute parallel ${loopWord}`;
        where = 'parallel';
      } else {
        out.construct = `parallel ${loopWord}`;
        where = 'parallel';
      }
      const rest = clauses.filter((c) => !(c.name === 'reduction' && where === 'simd' && false));
      loopClauses(rest, out, where === 'simd' ? 'simd' : 'parallel');
      return out;
    }
    case 'data':
      out.construct = 'target data';
      dataClauses(clauses, out, { compute: false, teams: false, fortran, pointers: ctx.pointerNames });
      break;
    case 'enter data':
      out.construct = 'target enter data';
      dataClauses(clauses, out, { compute: false, teams: false, fortran, pointers: ctx.pointerNames });
      break;
    case 'exit data': {
      out.construct = 'target exit data';
      const finalize = has('finalize');
      for (const c of clauses) {
        if (c.name === 'finalize') continue;
        if (c.name === 'delete' && c.args !== undefined) {
          // exit data delete decrements the dynamic reference count (OpenACC §2.7.11) like map(release:);
          // with finalize it drops to zero like map(delete:) (OpenMP 5.2 §5.8.3).
          out.clauses.push({ text: `map(${finalize ? 'delete' : 'release'}: ${listOf(c.args)})`, seg: c.seg, src: c });
        } else if (c.name === 'copyout' || c.name === 'pcopyout' || c.name === 'present_or_copyout') {
          out.clauses.push({ text: `map(from: ${listOf(c.args)})`, seg: c.seg, src: c });
          if (finalize) out.notes.push(`finalize on copyout(${c.args}) is left out: map(from:) copies back only when the reference count reaches zero`);
        } else out.other.push(c);
      }
      const rest = out.other;
      out.other = [];
      dataClauses(rest, out, { compute: false, teams: false, fortran, pointers: ctx.pointerNames });
      break;
    }
    case 'update': {
      out.construct = 'target update';
      const rest: Item[] = [];
      for (const c of clauses) {
        if (c.name === 'device' && c.args !== undefined) out.clauses.push({ text: `to(${c.args.trim()})`, seg: c.seg, src: c });
        else if ((c.name === 'self' || c.name === 'host') && c.args !== undefined) out.clauses.push({ text: `from(${c.args.trim()})`, seg: c.seg, src: c });
        // OpenMP's target update skips list items that are not present (OpenMP 5.2 §13.9), as if_present asks.
        else if (c.name === 'if_present') continue;
        else rest.push(c);
      }
      dataClauses(rest, out, { compute: false, teams: false, fortran, pointers: ctx.pointerNames });
      break;
    }
    case 'host_data': {
      out.construct = 'target data';
      for (const c of clauses) {
        if (c.name === 'use_device' && c.args !== undefined) {
          // C pointers take use_device_ptr; Fortran arrays use_device_addr (OpenMP 5.2 §5.4.9, §5.4.10).
          out.clauses.push({ text: `${fortran ? 'use_device_addr' : 'use_device_ptr'}(${c.args.trim()})`, seg: c.seg, src: c });
          if (!fortran) out.notes.push(`use_device(${c.args.trim()}) became use_device_ptr: write use_device_addr for an array that is not a pointer`);
        } else if (c.name === 'if_present') continue;
        else out.other.push(c);
      }
      const rest = out.other;
      out.other = [];
      dataClauses(rest, out, { compute: false, teams: false, fortran, pointers: ctx.pointerNames });
      break;
    }
    case 'wait':
      // OpenACC §2.16.3 wait directive; the translation runs synchronously, so taskwait is only a marker.
      out.construct = 'taskwait';
      for (const c of clauses) if (c.name !== 'async') out.other.push(c);
      break;
    case 'atomic': {
      out.construct = 'atomic';
      for (const c of clauses) {
        if (['read', 'write', 'update', 'capture'].includes(c.name) && c.args === undefined) out.clauses.push({ text: c.name, seg: c.seg, src: c });
        else out.other.push(c);
      }
      break;
    }
    case 'end atomic':
      out.construct = 'end atomic';
      return out;
    case 'routine': {
      if (clauses.some((c) => c.name === 'gang' || c.name === 'worker' || c.name === 'vector')) {
        out.notes.push('the routine\'s level (gang, worker, vector) has no OpenMP counterpart: its acc loops run sequentially');
      }
      if (has('nohost')) out.notes.push('nohost is left out (OpenMP 5.2 device_type(nohost) is not in gcc 12)');
      out.construct = 'declare target';
      if (constructArgs !== undefined) out.constructArgs = constructArgs.trim();
      else out.wrapDeclaration = !fortran;
      for (const c of clauses) {
        if (['seq', 'gang', 'worker', 'vector', 'nohost'].includes(c.name)) continue;
        if (c.name === 'bind') out.notes.push(`bind(${c.args}) is left out: OpenMP's declare variant is the nearest form`);
        else out.other.push(c);
      }
      break;
    }
    case 'declare': {
      if (!ctx.fileScope) {
        return leaveOut('acc declare inside a procedure has no OpenMP counterpart (a data region for the procedure\'s lifetime): the implicit maps of its compute constructs apply');
      }
      const names: string[] = [];
      const link: string[] = [];
      for (const c of clauses) {
        if (['create', 'copyin', 'device_resident', 'pcreate', 'pcopyin', 'present_or_create', 'present_or_copyin'].includes(c.name) && c.args !== undefined) {
          names.push(...splitList(listOf(c.args)));
          if (c.name.endsWith('create')) out.notes.push(`${CREATE_MARK}(${listOf(c.args)})`);
        } else if (c.name === 'link' && c.args !== undefined) link.push(...splitList(c.args));
        else out.other.push(c);
      }
      // OpenMP 5.2 §7.8.2: declare target(list) is declare target enter(list); gcc 12 reads the list form.
      out.construct = 'declare target';
      if (names.length > 0) out.constructArgs = names.map(baseName).join(', ');
      if (link.length > 0) out.clauses.push({ text: `link(${link.join(', ')})`, seg: 0 });
      if (names.length === 0 && link.length === 0 && out.other.length === 0) return leaveOut('acc declare with no clause');
      break;
    }
    case 'cache':
      return leaveOut('acc cache has no OpenMP counterpart');
    case 'init':
    case 'shutdown':
    case 'set':
      return leaveOut(`acc ${construct} has no OpenMP directive (omp_set_default_device is the nearest API call)`);
    default:
      if (construct.startsWith('end ')) {
        // Fortran end directives are matched to their begin directive by the caller.
        out.construct = construct;
        return out;
      }
      return leaveOut(`acc ${construct} is not translated`);
  }
  // Clauses no table above took.
  for (const c of out.other) out.notes.push(`${c.name}${c.args !== undefined ? `(${c.args})` : ''} is not translated (left out)`);
  out.other = [];
  return out;
}

/** A clause list split at top-level commas: `a[0:n], b` → [`a[0:n]`, `b`]. */
function splitTop(list: string): string[] {
  const out: string[] = [];
  let depth = 0, cur = '';
  for (const ch of list) {
    if (ch === '(' || ch === '[') depth++;
    if (ch === ')' || ch === ']') depth--;
    if (ch === ',' && depth === 0) { out.push(cur.trim()); cur = ''; } else cur += ch;
  }
  if (cur.trim()) out.push(cur.trim());
  return out;
}
