/**
 * Why a loop is, or is not, a time loop, judged by dependence: a loop steps through time when a
 * later pass reads data that an earlier pass wrote — the fields carry the state forward. The
 * evidence, strongest first:
 *
 * - a pointer swap or rotation in the body (`tmp = a; a = b; b = tmp`, `std::swap(a, b)`,
 *   Fortran `p => q` or `call move_alloc`): the next pass reads what this one wrote, by name;
 * - an array whose first access in a pass is a read, and that the pass also writes (directly or
 *   in a called procedure, with the callee's dummies mapped to the caller's arrays).
 *
 * Accesses whose subscripts involve the loop's variable (`u[b*TILE + i]`), and arrays picked by
 * it (`p = fields[f]`, `if (f == 2) …`), belong to one pass only: they cannot carry state from
 * pass to pass, so a loop with only such data is a loop over tiles, chunks or fields, and a loop
 * that writes without reading back is an initialisation loop. A loop whose variable indexes most
 * array accesses of its nested loops walks through space and is never a time loop.
 *
 * Directives play no part: serial code is judged the same way.
 */
import * as S from '../symbolic';
import type { ArrayAccess, Declaration, LoopStmt, Procedure, ProgramModel, Stmt, VExpr } from '../model/program';
import { forEachAccessInValue, forEachCallInValue, printValue, toSymbolic, valuesOfStatement } from '../model/values';
import type { Callees } from '../model/callees';

export interface Verdict {
  time: boolean;
  /** One sentence fragment: why the loop was (or was not) taken as the time loop. */
  reason: string;
}

/** What one array access in a pass does, after the callee's dummy names are mapped to the caller's arrays. */
interface Event {
  array: string;
  read: boolean;
  write: boolean;
  /** The loop variable is in a subscript or chose the array: the access belongs to this pass only. */
  ownPass: boolean;
  /** How the array was picked, when the loop variable picked it (`fields[f]`). */
  picked?: string;
  /** The unseen procedure that receives the array, when it is passed to one. */
  unseen?: string;
  line: number;
  /** The called procedure the access is in, when it is not in the loop's own (its `line` is then there). */
  via?: string;
  /**
   * The elements touched, as subscripts with loop variables replaced by their ranges (so
   * `tmp[k]` over 0..n-1 and `tmp[i]` over 0..n-1 match); `*` for the whole array, absent when
   * a subscript cannot be read.
   */
  key?: string;
}

/** How a name seen inside a (called) procedure maps to the arrays of the loop's procedure. */
interface Alias {
  array: string;
  ownPass: boolean;
  picked?: string;
}

interface Frame {
  proc: Procedure;
  aliases: Map<string, Alias>;
  /** Loop variables of the enclosing nested loops → a symbol naming their range. */
  canon: Map<string, S.Expr>;
  /** Set inside a branch that runs only for some values of the loop variable (`if (f == 0)`). */
  picked?: string;
  depth: number;
  /** How many loops inside the judged loop's body enclose the statement (a swap counts at 0 only). */
  nest: number;
  stack: string[];
}

/** Library calls that only read their array arguments, or write the first and read the rest. */
const READS_ONLY = /^(printf|fprintf|puts|fputs|fwrite|write|print|mpi_send|mpi_isend|mpi_reduce|mpi_allreduce|free|deallocate)$/i;
const WRITES_FIRST = /^(memcpy|memmove|std::memcpy|memset|std::memset|std::fill|fread)$/i;
const SWAP = /^(std::)?swap$/;
const MAX_DEPTH = 8;

export class LoopJudge {
  private readonly procs: Map<string, Procedure>;
  /** Picked elements are written as the file writes them (`tiles(t)` in Fortran). */
  private readonly fortran: boolean;

  constructor(
    private readonly model: ProgramModel,
    private readonly callees: Callees,
  ) {
    this.procs = new Map(model.procedures.map((p) => [p.name, p]));
    this.fortran = model.language === 'fortran';
  }

  /**
   * `indexesMost`: the loop's variable indexes most array accesses of its nested loops.
   * `enclosesKernels`: the loop holds offloaded work, calls to procedures with loops or several
   * nests; only such a loop may be taken as a loop of repeated steps without a carried array.
   */
  judge(loop: LoopStmt, proc: Procedure, indexesMost: boolean, enclosesKernels: boolean): Verdict {
    const v = loop.variable;
    if (v && indexesMost) {
      return { time: false, reason: `its variable \`${v}\` indexes most arrays its inner loops touch: each pass works on its own part of the data (a loop over space, tiles or chunks)` };
    }
    const events: Event[] = [];
    const edges: { target: string; source: string; line: number }[] = [];
    const swaps: { a: string; b: string; line: number }[] = [];
    this.walk(loop.body, { proc, aliases: new Map(), canon: new Map(), depth: 0, nest: 0, stack: [proc.name] }, v, events, edges, swaps);
    const swap = swaps[0] ?? rotation(edges);
    if (swap) return { time: true, reason: `it swaps \`${swap.a}\` and \`${swap.b}\` every pass (line ${swap.line}), so each pass reads what the previous one wrote` };
    const byArray = new Map<string, Event[]>();
    for (const e of events) {
      const list = byArray.get(e.array);
      if (list) list.push(e);
      else byArray.set(e.array, [e]);
    }
    const carried: { array: string; read: Event; write: Event }[] = [];
    const unseen: Event[] = [];
    /** Arrays every pass reads without writing them first (inputs of repeated work). */
    const inputs: string[] = [];
    const written: string[] = [];
    const picked = new Set<string>();
    let ownPassOnly = 0;
    for (const [array, list] of byArray) {
      const shared = list.filter((e) => !e.ownPass);
      for (const e of list) if (e.picked) picked.add(e.picked);
      if (list.some((e) => e.write) && shared.length === 0) ownPassOnly++;
      const write = shared.find((e) => e.write);
      if (write) written.push(array);
      const exposed = firstExposedRead(shared);
      if (!exposed) continue;
      if (!write) inputs.push(array);
      else if (exposed.unseen && write.unseen) unseen.push(exposed);
      else {
        const from = shared.indexOf(exposed);
        carried.push({ array, read: exposed, write: shared.find((e, k) => e.write && k >= from) ?? write });
      }
    }
    if (carried.length > 0) {
      const c = carried[0];
      const others = carried.length > 1 ? ` (also ${carried.slice(1, 4).map((x) => `\`${x.array}\``).join(', ')})` : '';
      const where = (e: Event): string => `line ${e.line}${e.via ? `, in \`${e.via}\`` : ''}`;
      const after = events.indexOf(c.write) >= events.indexOf(c.read);
      return {
        time: true,
        reason: after
          ? `each pass reads \`${c.array}\` (${where(c.read)}) before it writes it (${where(c.write)}), so each pass starts from what the previous one wrote${others}`
          : `each pass reads elements of \`${c.array}\` (${where(c.read)}) that earlier passes wrote (${where(c.write)})${others}`,
      };
    }
    if (unseen.length > 0) {
      const e = unseen[0];
      return { time: true, reason: `it passes \`${e.array}\` to \`${e.unseen}\` (line ${e.line}) every pass, which the analysis cannot see: taken as read and written by each pass` };
    }
    const list = (xs: string[]): string => xs.slice(0, 3).map((a) => `\`${a}\``).join(', ');
    if (enclosesKernels && written.length > 0 && inputs.length > 0) {
      return { time: true, reason: `each pass repeats the same work on the same arrays (reads ${list(inputs)}, writes ${list(written)}; none is indexed or picked by ${v ? `\`${v}\`` : 'the loop'}), so its passes are steps even though none reads what an earlier one wrote` };
    }
    if (picked.size > 0) {
      return { time: false, reason: `each pass works on a different array, picked by \`${v ?? '?'}\` (${[...picked].slice(0, 2).map((p) => `\`${p}\``).join(', ')}): nothing carries from one pass to the next` };
    }
    if (written.length === 0 && ownPassOnly > 0) {
      return { time: false, reason: `every array it writes is indexed by its variable \`${v ?? '?'}\`: each pass works on its own part of the data (a loop over tiles or chunks)` };
    }
    if (written.length > 0) {
      return { time: false, reason: `no pass reads what an earlier pass wrote (it writes ${list(written)} before reading them${inputs.length > 0 ? '' : ' and reads no other array'}): an initialisation loop` };
    }
    return { time: false, reason: 'no pass reads an array that an earlier pass wrote' };
  }

  // ---- the walk ------------------------------------------------------------------------

  private walk(stmts: Stmt[], f: Frame, v: string | undefined, events: Event[], edges: { target: string; source: string; line: number }[], swaps: { a: string; b: string; line: number }[]): void {
    for (const s of stmts) {
      const line = s.range.start.line + 1;
      const record = (a: ArrayAccess, read: boolean, write: boolean): void => {
        const alias = f.aliases.get(a.array);
        const name = alias?.array ?? this.nameIn(a.array, f);
        const ownPass = !!alias?.ownPass || !!f.picked || (!!v && (a.subscripts.some((sub, k) => (sub ? S.degreeIn(sub, v) !== 0 : mentions(a.subscriptValues[k], v))) || !!a.through?.some((x) => mentions(x, v))));
        events.push({ array: name, read, write, ownPass, picked: alias?.picked ?? f.picked, line, via: f.depth > 0 ? f.proc.name : undefined, key: keyOf(a, f.canon) });
      };
      const reads = (e: VExpr): void => {
        forEachAccessInValue(e, (a) => record(a, true, false));
        forEachCallInValue(e, (c) => this.call(c.name, c.args, f, v, events, edges, swaps, line, true));
      };
      switch (s.kind) {
        case 'assign': {
          reads(s.value);
          if (s.target.kind === 'index') {
            for (const sv of s.target.access.subscriptValues) reads(sv);
            record(s.target.access, s.op !== '=', true);
          } else if (this.isPointer(s.target.name, f)) {
            this.pointerAssign(s.target.name, s.value, f, v, edges, line);
          }
          break;
        }
        case 'call': {
          for (const a of s.args) if (a.kind !== 'var') forEachCallInValue(a, (c) => this.call(c.name, c.args, f, v, events, edges, swaps, line, true));
          this.call(s.name, s.args, f, v, events, edges, swaps, line, false);
          break;
        }
        case 'if': {
          reads(s.condition);
          const sel = v ? selector(s.condition, v) : undefined;
          const inner: Frame = sel ? { ...f, picked: f.picked ?? `${s.conditionText || printValue(s.condition, this.fortran)}` } : f;
          this.walk(s.then, inner, v, events, edges, swaps);
          this.walk(s.otherwise, inner, v, events, edges, swaps);
          break;
        }
        case 'loop': {
          const canon = new Map(f.canon);
          if (s.variable) {
            const range = s.lower && s.upper ? `${S.toString(S.substitute(s.lower, canon))}..${S.toString(S.substitute(s.upper, canon))}` : s.variable;
            canon.set(s.variable, S.sym(`@${range}`));
          }
          this.walk(s.body, { ...f, canon, nest: f.nest + 1 }, v, events, edges, swaps);
          break;
        }
        case 'block':
          this.walk(s.body, f, v, events, edges, swaps);
          break;
        case 'other': {
          for (const x of valuesOfStatement(s)) reads(x);
          // Fortran pointer assignment `p => q` (kept as text by the front end).
          const m = /^\s*([a-z_]\w*)\s*=>\s*([a-z_]\w*)\s*$/i.exec(s.text);
          if (m && f.nest === 0) edges.push({ target: this.nameIn(m[1].toLowerCase(), f), source: this.nameIn(m[2].toLowerCase(), f), line });
          break;
        }
        default:
          break;
      }
    }
  }

  /** A name inside the loop's procedure is itself; a callee's local is kept apart from the caller's names. */
  private nameIn(name: string, f: Frame): string {
    const alias = f.aliases.get(name);
    if (alias) return alias.array;
    if (f.depth === 0) return name;
    const local = f.proc.locals.some((d) => d.name === name) || f.proc.params.some((d) => d.name === name);
    return local ? `${f.proc.name}::${name}` : name;
  }

  private declOf(name: string, f: Frame): Declaration | undefined {
    return f.proc.locals.find((d) => d.name === name) ?? f.proc.params.find((d) => d.name === name) ?? this.model.globals.find((d) => d.name === name);
  }

  private isPointer(name: string, f: Frame): boolean {
    const d = this.declOf(name, f);
    return !!d && (d.isPointer || d.isArray);
  }

  /** `p = q` between arrays (a swap step), or `p = fields[f]` / `p = &u[b*T]` (an alias for this pass). */
  private pointerAssign(target: string, value: VExpr, f: Frame, v: string | undefined, edges: { target: string; source: string; line: number }[], line: number): void {
    const base = strip(value);
    if (base.kind === 'var' && this.isPointer(base.name, f)) {
      if (f.nest === 0) edges.push({ target: this.nameIn(target, f), source: this.nameIn(base.name, f), line });
      f.aliases.delete(target);
      return;
    }
    // Any other value sets the pointer afresh for this pass (an empty source marks that).
    if (f.nest === 0) edges.push({ target: this.nameIn(target, f), source: '', line });
    if (base.kind === 'index' && v) {
      const a = base.access;
      const byV = a.subscripts.some((sub, k) => (sub ? S.degreeIn(sub, v) !== 0 : mentions(a.subscriptValues[k], v)));
      if (byV) {
        f.aliases.set(target, { array: `${this.nameIn(a.array, f)}${this.fortran ? "(…)" : "[…]"}`, ownPass: true, picked: printValue(base, this.fortran) });
        return;
      }
    }
    f.aliases.delete(target);
  }

  private call(name: string, args: VExpr[], f: Frame, v: string | undefined, events: Event[], edges: { target: string; source: string; line: number }[], swaps: { a: string; b: string; line: number }[], line: number, inValue: boolean): void {
    const arrayArg = (a: VExpr): { name: string; alias?: Alias } | undefined => {
      let b = strip(a);
      // A container's storage (`u.data()`, `u->data()`) is the container's array.
      if (b.kind === 'call' && b.args.length === 0 && /(\.|->)data$/.test(b.name)) b = { kind: 'var', name: b.name.replace(/(\.|->)data$/, '') };
      // A component of the element a loop over `v` picks (`chunk%tiles(v)%field%u`): that pass's own copy.
      if (b.kind === 'var' && v && b.through?.some((x) => mentions(x, v))) {
        const name = f.aliases.get(b.name)?.array ?? this.nameIn(b.name, f);
        return { name, alias: { array: name, ownPass: true, picked: printValue(b, this.fortran) } };
      }
      if (b.kind === 'var' && (this.isPointer(b.name, f) || f.aliases.has(b.name))) {
        const alias = f.aliases.get(b.name);
        return { name: alias?.array ?? this.nameIn(b.name, f), alias: alias ?? (f.picked ? { array: this.nameIn(b.name, f), ownPass: true, picked: f.picked } : undefined) };
      }
      if (b.kind === 'index') {
        // A section or element passed by reference (`u(:, :, t)`, `&u[b*T]`): the dummy is that part of the array.
        const acc = b.access;
        const byV = !!v && acc.subscripts.some((sub, k) => (sub ? S.degreeIn(sub, v) !== 0 : mentions(acc.subscriptValues[k], v)));
        const name = this.nameIn(acc.array, f);
        return { name, alias: byV || f.picked ? { array: name, ownPass: true, picked: byV ? printValue(b, this.fortran) : f.picked } : undefined };
      }
      return undefined;
    };
    if (SWAP.test(name) && args.length === 2) {
      const [a, b] = args.map(arrayArg);
      if (a && b && f.nest === 0) swaps.push({ a: a.name, b: b.name, line });
      return;
    }
    if (name.toLowerCase() === 'move_alloc' && args.length === 2) {
      const [from, to] = args.map(arrayArg);
      if (from && to && f.nest === 0) edges.push({ target: to.name, source: from.name, line });
      return;
    }
    const callee = this.callees.resolve(name);
    const here = (e: Omit<Event, 'line'>): void => {
      events.push({ ...e, line, via: f.depth > 0 ? f.proc.name : undefined });
    };
    if (callee && callee !== f.proc && !f.stack.includes(callee.name) && f.depth < MAX_DEPTH) {
      const aliases = new Map<string, Alias>();
      args.forEach((arg, k) => {
        const p = callee.params[k];
        const a = p && (p.isArray || p.isPointer) ? arrayArg(arg) : undefined;
        if (p && a) {
          aliases.set(p.name, a.alias ?? { array: a.name, ownPass: false });
          return;
        }
        // A value argument: its element reads happen at the call.
        forEachAccessInValue(arg, (x) => {
          const alias = f.aliases.get(x.array);
          const byV = !!v && x.subscripts.some((sub, j) => (sub ? S.degreeIn(sub, v) !== 0 : mentions(x.subscriptValues[j], v)));
          here({ array: alias?.array ?? this.nameIn(x.array, f), read: true, write: false, ownPass: !!alias?.ownPass || !!f.picked || byV, picked: alias?.picked ?? f.picked });
        });
      });
      const inner: Frame = { proc: callee, aliases, canon: new Map(), depth: f.depth + 1, nest: f.nest, stack: [...f.stack, callee.name], picked: f.picked };
      this.walk(callee.body, inner, v, events, edges, swaps);
      return;
    }
    if (callee) return;
    for (const [k, a] of args.entries()) {
      const arr = arrayArg(a);
      if (!arr) {
        forEachAccessInValue(a, (x) => {
          const alias = f.aliases.get(x.array);
          here({ array: alias?.array ?? this.nameIn(x.array, f), read: true, write: false, ownPass: !!alias?.ownPass || !!f.picked || (!!v && x.subscripts.some((sub) => !!sub && S.degreeIn(sub, v) !== 0)), picked: alias?.picked ?? f.picked });
        });
        continue;
      }
      const ownPass = !!arr.alias?.ownPass;
      const picked = arr.alias?.picked;
      if (inValue || READS_ONLY.test(name)) here({ array: arr.name, read: true, write: false, ownPass, picked, key: '*' });
      else if (WRITES_FIRST.test(name)) here({ array: arr.name, read: k > 0, write: k === 0, ownPass, picked, key: '*' });
      else here({ array: arr.name, read: true, write: true, ownPass, picked, unseen: name, key: '*' });
    }
  }
}

/** The subscripts of an access with loop variables replaced by their ranges, as text. */
function keyOf(a: ArrayAccess, canon: ReadonlyMap<string, S.Expr>): string | undefined {
  if (a.subscripts.some((x) => !x)) return undefined;
  return a.subscripts.map((x) => S.toString(S.substitute(x!, canon))).join(',');
}

/**
 * The first read of an array in a pass that no earlier write of the same pass covers: a write
 * of the same elements (same subscripts over the same ranges) or of the whole array. Such a
 * read sees what an earlier pass left. Within one statement the read comes first (`a[i] += …`).
 */
function firstExposedRead(shared: Event[]): Event | undefined {
  // The keys written so far (a set, so a pass of thousands of accesses stays linear).
  const keys = new Set<string>();
  for (const e of shared) {
    if (e.read) {
      const covered = keys.has('*') || (e.key !== undefined && keys.has(e.key));
      if (!covered) return e;
    }
    if (e.write && e.key !== undefined) keys.add(e.key);
  }
  return undefined;
}

/**
 * A two-name swap is a rotation of length three or more through pointer assignments at the top
 * level of the pass: a ← b ← t ← a. A rotation whose pointers the pass first sets afresh
 * (`u = members[m]` before the swap) carries nothing from the previous pass.
 */
function rotation(edges: { target: string; source: string; line: number }[]): { a: string; b: string; line: number } | undefined {
  const from = new Map<string, { source: string; line: number; at: number }>();
  edges.forEach((e, k) => from.set(e.target, { source: e.source, line: e.line, at: k }));
  for (const start of from.keys()) {
    const seen = [start];
    let cur = start;
    for (let k = 0; k < 8; k++) {
      const next = from.get(cur);
      if (!next || next.source === '') break;
      if (next.source === start && seen.length >= 3) {
        const first = Math.min(...seen.map((n) => from.get(n)!.at));
        if (edges.slice(0, first).some((e) => seen.includes(e.target))) return undefined;
        // Report the two names that are not the temporary: the one assigned first is the temporary.
        const order = seen.map((n) => ({ n, line: from.get(n)!.line, at: from.get(n)!.at }));
        const tmp = order.reduce((a, b) => (b.at < a.at ? b : a));
        const named = seen.filter((n) => n !== tmp.n);
        return { a: named[0] ?? seen[0], b: named[1] ?? seen[1], line: Math.max(...order.map((o) => o.line)) };
      }
      if (seen.includes(next.source)) break;
      seen.push(next.source);
      cur = next.source;
    }
  }
  return undefined;
}

/** Looks through casts, `&` and `*` to the array or element a pointer expression names. */
function strip(e: VExpr): VExpr {
  if (e.kind === 'cast') return strip(e.operand);
  if (e.kind === 'unary' && (e.op === '&' || e.op === '*')) return strip(e.operand);
  return e;
}

/**
 * `v == c`, or tests of that kind joined by `||` and ranges `v >= a && v <= b` (as SELECT CASE
 * gives): the branch runs for chosen passes only, so what it touches is picked by the variable.
 */
function selector(cond: VExpr, v: string, range = false): boolean {
  if (cond.kind !== 'bin') return false;
  if (cond.op === '||') return selector(cond.left, v) && selector(cond.right, v);
  if (cond.op === '&&') return selector(cond.left, v, true) && selector(cond.right, v, true);
  if (cond.op !== '==' && !(range && (cond.op === '>=' || cond.op === '<='))) return false;
  const isV = (x: VExpr): boolean => x.kind === 'var' && x.name === v;
  const constant = (x: VExpr): boolean => {
    const s = toSymbolic(x);
    return !!s && !S.freeSymbols(s).includes(v);
  };
  return (isV(cond.left) && constant(cond.right)) || (isV(cond.right) && constant(cond.left));
}

function mentions(e: VExpr | undefined, v: string): boolean {
  if (!e) return false;
  switch (e.kind) {
    case 'var': return e.name === v;
    case 'bin': return mentions(e.left, v) || mentions(e.right, v);
    case 'unary':
    case 'cast': return mentions(e.operand, v);
    case 'call': return e.args.some((a) => mentions(a, v));
    case 'cond': return mentions(e.test, v) || mentions(e.then, v) || mentions(e.else, v);
    case 'index': return e.access.subscriptValues.some((s) => mentions(s, v));
    default: return false;
  }
}

