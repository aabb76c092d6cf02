/**
 * Runs a procedure's statements over the abstract data environment: what is present on the
 * device, what each construct moves across the link and when, and which side holds the newest
 * copy of each element. Each time loop body runs twice; the second pass is the steady state and
 * is the one recorded per step.
 */
import { otherFileName } from '../paths';
import * as S from '../symbolic';
import type { ArrayAccess, Declaration, LoopStmt, Procedure, ProgramModel, Stmt, VExpr } from '../model/program';
import { findByName, firstByName } from '../model/names';
import { isDataConstruct, isOffloadCompute } from '../model/directives';
import { accessesOfStatement, childStatements, forEachAccessInValue, forEachCallInValue, printValue, toSymbolic, valuesOfStatement, walkStatements } from '../model/values';
import type { Directive, Finding, Range, DirectiveFamily } from '../types';
import { rangeWithin } from '../ranges';
import { type ArrayInfo, arrayInfo } from './arrays';
import { type DataEntry, dataEntries, defaultMode, motionEntries, privateNames } from './clauses';
import { periodicGuard } from './guards';
import { calleesOf } from '../model/callees';
import { type Region, covers, intersect, overlaps, regionSize, subtract, union, wholeBox } from './regions';
import { regionSectionText, touchSectionText } from './slices';
import { type LoopRanges, type Section, accessRegion, clauseSection, wholeBytes } from './sections';
import { ArrayState, DataEnvironment } from './state';

export type Cause = 'clause' | 'implicit' | 'update' | 'enter' | 'exit';

export interface TransferRecord {
  /** The directive (or, for implicit copies, the construct's directive) that moves the data. */
  range: Range;
  array: string;
  direction: 'toDevice' | 'toHost';
  bytes: S.Expr;
  everySteps: number;
  cause: Cause;
  /** Calls from the time loop's procedure that lead to the directive, outermost first. */
  via: Range[];
  allocation: number;
  /** Whole-array update/clause (for messages). */
  whole: boolean;
  /** The variable in the clause that causes it, when there is one (where findings point). */
  at?: Range;
  /** The file of the directive when it is in another file of the workspace. */
  origin?: string;
  /** A scalar (a reduction result, a scalar in a data clause or a kernels construct): small, but each is a blocking transfer. */
  scalar?: boolean;
  /** For updates: the section as written and the elements it moves. */
  section?: { text: string; region: Region };
}

/** A host access inside the time loop to an array the device also uses. */
export interface HostTouch {
  key: string;
  kind: 'read' | 'write';
  access: ArrayAccess;
  region: Region;
  /** The statement of the time loop's procedure that contains the access, and its ancestors (outermost first). */
  anchor: Stmt;
  ancestors: Stmt[];
  /** Host loops around the access inside the anchor, innermost last. */
  loops: LoopStmt[];
  /** Bindings of the frame the access is in (callee parameters resolved). */
  bindings: Map<string, S.Expr>;
  rename: Map<string, string>;
}

/** One execution site of a construct or host nest inside a time loop step. */
export interface Execution {
  stmt: Stmt;
  /** Product of the trip counts of host loops around it inside the step. */
  multiplier: S.Expr;
  everySteps: number;
  /** Bindings of the frame it runs in (a callee's parameters bound to the call's arguments). */
  bindings: Map<string, S.Expr>;
  via: Range[];
}

export interface TimeLoopRun {
  loop: LoopStmt;
  procedure: Procedure;
  transfers: TransferRecord[];
  /** Allocations live when the loop starts: their entry and exit transfers are the "once" traffic. */
  liveAtEntry: Map<string, number>;
  /** Arrays present on the device when the loop starts. */
  presentAtEntry: Set<string>;
  /** Arrays whose device reads in the first step need values the device has not written itself. */
  needsHostValues: Set<string>;
  /** Elements each array's device code writes in the first step. */
  deviceWritten: Map<string, Region>;
  deviceReads: Set<string>;
  deviceWrites: Set<string>;
  /** Every array named in a device construct or clause inside the loop. */
  deviceUsed: Set<string>;
  hostTouches: HostTouch[];
  /** Arrays the host reads after the loop (they must come back). */
  neededAfter: Set<string>;
  /** Device constructs run in one step (second pass), with how often and under which bindings. */
  kernels: Execution[];
  /** Host-only loop nests run in one step: the host code left in the loop. */
  hostNests: Execution[];
  /** Peak bytes resident on the device during the loop (null when a size is unbound). */
  residentPeak: number | null;
  residentArrays: Set<string>;
  /** Pointers that hold device addresses (acc_malloc, omp_target_alloc, deviceptr, is_device_ptr): never copied, never in a region. */
  devicePointers: Set<string>;
  /**
   * Storages that swaps or rotations in the loop move between names (`tmp = u; u = un; un = tmp`):
   * after the loop, which of them a name holds depends on the number of steps.
   */
  rotated: Set<string>;
}

interface Frame {
  proc: Procedure;
  rename: Map<string, string>;
  bindings: Map<string, S.Expr>;
  via: Range[];
  depth: number;
}

interface Ctx {
  frame: Frame;
  multiplier: S.Expr;
  everySteps: number;
  hostRanges: Map<string, [number, number]>;
  hostLoops: LoopStmt[];
  run?: TimeLoopRun;
  recording: boolean;
  anchor?: Stmt;
  /** Set inside a host-only loop: its accesses anchor at the loop, not at its inner statements. */
  anchorFixed?: boolean;
  ancestors: Stmt[];
}

const MAX_CALL_DEPTH = 8;

/** What a quick fix for a coherence finding needs: which update, of what, next to which statement. */
export interface FixHint {
  direction: 'toDevice' | 'toHost';
  section: string;
  anchor: Stmt;
  ancestors: Stmt[];
  where: 'before' | 'after';
}

export class DataInterpreter {
  readonly env = new DataEnvironment();
  readonly findings: Finding[] = [];
  /** Quick-fix material for findings, kept beside them so the finding type stays plain. */
  readonly hints = new Map<Finding, FixHint>();
  /** The update a message asks for, in the model the file (or the construct) uses. */
  private updateWords(direction: 'toHost' | 'toDevice', family?: DirectiveFamily): string {
    const f = family ?? this.family();
    if (f === 'openacc') return direction === 'toHost' ? 'add `update self` (OpenACC 3.3 §2.14.4)' : 'add `update device` (OpenACC 3.3 §2.14.4)';
    return direction === 'toHost' ? 'add `target update from` (OpenMP 5.2 §13.9)' : 'add `target update to` (OpenMP 5.2 §13.9)';
  }

  private familyMemo?: DirectiveFamily;
  private family(): DirectiveFamily {
    if (!this.familyMemo) {
      const acc = this.model.directives.filter((d) => d.family === 'openacc').length;
      const omp = this.model.directives.filter((d) => d.family === 'openmp' && d.construct.startsWith('target')).length;
      this.familyMemo = omp > acc ? 'openmp' : 'openacc';
    }
    return this.familyMemo;
  }

  /** The last host write of each array while it is present, with where its update would go. */
  private readonly lastHostWrite = new Map<string, { region: Region; hint: FixHint }>();
  /** Clause replacements for already-present findings (OpenACC: copy(...) → present(...)). */
  readonly presentFixes = new Map<Finding, { range: Range; text: string; directive: Directive }>();
  readonly runs: TimeLoopRun[] = [];
  /** Transfers outside time loops, with the allocation they belong to. */
  readonly outside: TransferRecord[] = [];
  private readonly infos = new Map<string, ArrayInfo>();
  private readonly procs: Map<string, Procedure>;
  private readonly seenFindings = new Set<string>();
  /**
   * Keys of pointers holding device addresses (OpenACC 3.3 §2.7.4 deviceptr; OpenMP 5.2
   * is_device_ptr, omp_target_alloc), and of pointers whose storage cannot be followed (said with
   * assumed-no-alias): neither is copied, checked for staleness or put in a region.
   */
  readonly devicePointers = new Set<string>();

  constructor(
    private readonly model: ProgramModel,
    private readonly timeLoops: Set<LoopStmt>,
    private readonly bindingsOf: (p: Procedure) => Map<string, S.Expr>,
    private readonly nestStrides: (key: string) => S.Expr[][],
    procs?: Map<string, Procedure>,
    /** The project root messages name other files from (paths.ts otherFileName). */
    private readonly projectRoot?: string,
  ) {
    this.procs = procs ?? new Map(model.procedures.map((p) => [p.name, p]));
  }

  runProcedure(proc: Procedure, entry?: EntryState): void {
    const bindings = new Map(this.bindingsOf(proc));
    // Sizes the program passes at the call (`run(u, v, nx, ny)` with nx = 256 in main) bind the
    // parameters the procedure's own call sites left open.
    for (const [k, v] of entry?.bindings ?? []) if (!bindings.has(k) || S.evaluate(bindings.get(k)!, bindings) === undefined) bindings.set(k, v);
    const frame: Frame = { proc, rename: new Map(), bindings, via: [], depth: 0 };
    this.afterLoop = undefined;
    this.root = frame;
    const ctx: Ctx = { frame, multiplier: S.num(1), everySteps: 1, hostRanges: new Map(), hostLoops: [], recording: false, ancestors: [] };
    if (entry) {
      for (const [key, st] of entry.states) this.env.adopt(key, st);
      this.outside.push(...entry.outside);
    } else {
      this.fileDeclarations(ctx);
    }
    this.exec(proc.body, ctx);
  }

  /**
   * Runs the program from `root` once, time loops as ordinary loops, and returns the data
   * environment at the first call of each of `targets`, in the callee's own names: what its
   * parameters and the globals are mapped to, the values its scalar parameters are given, and the
   * enter/exit transfers made on the way. One run serves every target reached from one root, so
   * a `main` that calls many procedures is run once, not once per procedure.
   */
  entriesFrom(root: Procedure, targets: ReadonlySet<Procedure>): Map<Procedure, EntryState> {
    this.captureAt = targets;
    this.runProcedure(root);
    return this.captures;
  }

  private captureAt?: ReadonlySet<Procedure>;
  private readonly outsideByAllocation = new Map<number, TransferRecord[]>();
  private readonly captures = new Map<Procedure, EntryState>();

  /**
   * Declarations at file scope make global data present for the whole program: OpenACC
   * `declare` (§2.13) and OpenMP `declare target` with a list, or the globals declared between
   * `declare target` and `end declare target` (static device copies, no transfer).
   */
  private fileDeclarations(ctx: Ctx): void {
    let open: Directive | undefined;
    for (const d of fileLevelDeclarations(this.model)) {
      const ompDeclare = d.family === 'openmp' && (d.construct === 'declare target' || d.construct === 'begin declare target');
      if (d.family === 'openacc' && d.construct === 'declare') this.enterClauses(d, ctx, 'enter', true);
      else if (ompDeclare && !d.isEnd && d.clauses.length > 0) this.enterClauses(d, ctx, 'enter', true);
      else if (ompDeclare && !d.isEnd) open = d;
      else if (ompDeclare && d.isEnd && open) {
        const from = open.range.end;
        const to = d.range.start;
        for (const g of this.model.globals) {
          if (!g.isArray || !rangeWithin(g.range, { start: from, end: to })) continue;
          this.env.allocate(g.name);
          this.env.state(g.name).structured++;
        }
        open = undefined;
      }
    }
  }

  // ---- names and sizes -------------------------------------------------------------------

  /** The array a name refers to, in the outermost frame's names (callee locals get a qualified key). */
  key(name: string, frame: Frame): string {
    const mapped = frame.rename.get(name);
    if (mapped) return mapped;
    // A member (`f.data`, `f->data`, `this->u`) is keyed through its base: the standards map by
    // host address, so `curr->data` in a callee is the caller's `current.data`.
    const member = /^([A-Za-z_]\w*)(\.|->|%)(.+)$/.exec(name);
    if (member) return `${this.key(member[1], frame)}${member[2] === '%' ? '%' : '.'}${member[3].replace(/->/g, '.')}`;
    if (frame.depth > 0 && findByName(frame.proc.locals, name)) return `${frame.proc.name}::${name}`;
    return name;
  }

  /**
   * Pointer assignment and swaps: `p = q` makes `p` name `q`'s storage from here on; a struct
   * assignment does the same for every member. Returns true when the statement was an alias.
   */
  private alias(target: string, value: VExpr, ctx: Ctx, at?: Range): boolean {
    let source = aliasSource(value);
    const frame = ctx.frame;
    const interior = !source ? interiorBase(value) : undefined;
    if (interior && at && this.isArray(target, frame) && !isMember(target) && (this.isArray(interior, frame) || isMember(interior))) {
      // `p = q + off`: p points into q's storage (the standards find it present where q is);
      // its offset is not followed, so regions through p are counted from q's first element.
      this.finding('assumed-no-alias', at, this.key(target, frame),
        `\`${target}\` points into \`${interior}\` (\`${printValueShort(value)}\`): the ledger counts it as \`${interior}\`'s storage for presence and transfers, but does not follow the offset, so slices through \`${target}\` are placed from the start of \`${interior}\`.`, frame);
      source = interior;
    }
    if (!source) {
      // `p = q + off` or `p = ptrs[k]`: storage the ledger cannot follow. Say so once.
      const base = arithmeticBase(value);
      if (at && base && this.isArray(target, frame) && !isMember(target) && (this.isArray(base, frame) || isMember(base))) {
        this.finding('assumed-no-alias', at, this.key(target, frame),
          `\`${target}\` is set from \`${printValueShort(value)}\`, which the ledger cannot follow to one array: it counts no transfers and no stale reads through \`${target}\`, assuming it reaches data that is already where the code uses it.`, frame);
        // Copy on write, as for aliases: the pointer names storage the ledger does not know.
        frame.rename = new Map(frame.rename).set(target, `?${target}@${at.start.line + 1}`);
        this.devicePointers.add(`?${target}@${at.start.line + 1}`);
        return true;
      }
      return false;
    }
    const targetIsArray = this.isArray(target, frame) && !isMember(target);
    const sourceIsArray = this.isArray(source, frame) || isMember(source);
    const structs = !targetIsArray && this.isStruct(target, frame) && this.isStruct(source, frame);
    if (!(targetIsArray && sourceIsArray) && !structs) return false;
    // Copy on write: touches recorded earlier keep the names they were made with.
    frame.rename = new Map(frame.rename).set(target, this.key(source, frame));
    return true;
  }

  /** A variable of a struct or class type (not a number, not an array): its members alias with it. */
  private isStruct(name: string, frame: Frame): boolean {
    const d = this.declOf(name, frame.proc);
    return !!d && !d.isArray && d.type.name === 'unknown';
  }

  /** `std::swap(a, b)` (or an unresolved `swap`) of two pointers, containers or structs exchanges their storage. */
  private swap(name: string, args: VExpr[], ctx: Ctx): boolean {
    if (!/^(std::)?swap$/.test(name) || args.length !== 2 || calleesOf(this.model).resolve(name)) return false;
    const [a, b] = args.map(aliasSource);
    if (!a || !b) return false;
    const frame = ctx.frame;
    const ka = this.key(a, frame);
    const kb = this.key(b, frame);
    frame.rename = new Map(frame.rename).set(a, kb).set(b, ka);
    return true;
  }

  /**
   * Size and shape of an array, from the declaration that owns it: the time loop's procedure (or
   * the file) for names of the outermost frame, the callee for a callee's own locals. A callee's
   * parameter says nothing about size; the caller's declaration does.
   */
  info(key: string, frame: Frame, localName: string): ArrayInfo {
    let i = this.infos.get(key);
    if (!i) {
      const sep = key.indexOf('::');
      const owner = sep >= 0 ? this.procs.get(key.slice(0, sep)) : this.root?.proc;
      const name = sep >= 0 ? key.slice(sep + 2) : key;
      const decl = (owner && (findByName(owner.locals, name) ?? findByName(owner.params, name)))
        ?? findByName(this.model.globals, name)
        ?? findByName(frame.proc.params, localName);
      const bindings = sep >= 0 || !this.root ? frame.bindings : this.root.bindings;
      i = arrayInfo(key, decl, this.model.layout, bindings, this.nestStrides(name));
      this.infos.set(key, i);
    }
    return i;
  }

  private localBindings(frame: Frame): Map<string, S.Expr> {
    return new Map([...frame.bindings].filter(([k]) => !this.model.bindings.has(k)));
  }

  /** The outermost frame of the current run. */
  private root?: Frame;

  /** The info computed for an array key during the run, if it was touched. */
  infoOf(key: string): ArrayInfo | undefined {
    return this.infos.get(key);
  }

  /** A name's declaration as the procedure sees it: its locals, its parameters, then the file's globals. */
  private declOf(name: string, proc: Procedure): Declaration | undefined {
    return findByName(proc.locals, name) ?? findByName(proc.params, name) ?? findByName(this.model.globals, name);
  }

  private isArray(name: string, frame: Frame): boolean {
    // Members are declared in a struct the model does not keep; one used with a subscript or in
    // a data clause (the only places this is asked) is an array.
    if (isMember(name)) return true;
    const d = this.declOf(name, frame.proc);
    return !!d && d.isArray;
  }

  // ---- statements ----------------------------------------------------------------------

  private exec(stmts: Stmt[], ctx: Ctx): void {
    for (const s of stmts) {
      const here: Ctx = ctx.frame.depth === 0 && ctx.run && !ctx.anchorFixed ? { ...ctx, anchor: s } : ctx;
      this.stmt(s, here);
    }
  }

  private stmt(s: Stmt, ctx: Ctx): void {
    const data = s.directives.filter(isDataConstruct);
    const entered = data.map((d) => this.enterRegion(d, ctx));
    const compute = s.directives.find(isOffloadCompute);
    if (compute) this.compute(s, compute, ctx);
    else this.hostStatement(s, ctx);
    for (let k = data.length - 1; k >= 0; k--) this.exitRegion(data[k], entered[k], ctx);
  }

  private hostStatement(s: Stmt, ctx: Ctx): void {
    const inner: Ctx = { ...ctx, ancestors: ctx.run && ctx.frame.depth === 0 ? [...ctx.ancestors, s] : ctx.ancestors };
    switch (s.kind) {
      case 'directive':
        this.standalone(s.directive, ctx);
        return;
      case 'block':
        this.exec(s.body, inner);
        return;
      case 'if': {
        this.hostValues([s.condition], s, ctx);
        const timeVar = ctx.run?.loop.variable;
        const guard = periodicGuard(s.condition, timeVar, ctx.frame.bindings);
        let every = ctx.everySteps;
        if (guard?.kind === 'every') every *= guard.steps;
        if (guard?.kind === 'once' && ctx.run) every = Math.max(every, this.stepsOf(ctx.run) ?? every);
        this.exec(s.then, { ...inner, everySteps: every });
        this.exec(s.otherwise, inner);
        return;
      }
      case 'loop':
        if (this.timeLoops.has(s) && !ctx.run) {
          this.timeLoop(s, ctx);
          return;
        }
        // A loop with no trips at the bound sizes (`for (k = nk_gpu; k < nk; k++)` with the whole
        // range on the device) touches nothing: its body is not run.
        if (s.lower && s.upper) {
          const lo = S.evaluate(s.lower, ctx.frame.bindings);
          const hi = S.evaluate(s.upper, ctx.frame.bindings);
          if (lo !== undefined && hi !== undefined && hi < lo) return;
        }
        if (this.containsDeviceWork(s)) {
          const trips = s.tripCount ?? S.sym(`trips_L${s.keywordRange.start.line + 1}`);
          const next: Ctx = { ...inner, multiplier: S.mul(ctx.multiplier, trips) };
          this.withRange(s, next, () => this.exec(s.body, next));
          return;
        }
        if (ctx.run && ctx.recording && inner.hostLoops.length === 0) ctx.run.hostNests.push(this.execution(s, ctx));
        this.withRange(s, inner, () => this.exec(s.body, { ...inner, hostLoops: [...inner.hostLoops, s], anchorFixed: true }));
        return;
      case 'call':
        if (this.swap(s.name, s.args, ctx)) return;
        this.hostValues(s.args, s, ctx);
        this.call(s.name, s.args, s.range, ctx);
        return;
      case 'assign':
        if (s.target.kind === 'var' && s.op === '=' && this.alias(s.target.name, s.value, ctx, s.range)) return;
        // Any other assignment to a pointer (`p = malloc(…)`) gives it storage of its own again.
        // (A callee's parameter keeps its caller's storage: its own is not modelled.)
        const own = (n: string): boolean => ctx.frame.depth === 0 || findByName(ctx.frame.proc.locals, n) !== undefined;
        if (s.target.kind === 'var' && ctx.frame.rename.has(s.target.name) && own(s.target.name) && this.isArray(s.target.name, ctx.frame) && !isMember(s.target.name)) {
          const rename = new Map(ctx.frame.rename);
          rename.delete(s.target.name);
          ctx.frame.rename = rename;
        }
        if (s.target.kind === 'var' && isDeviceAllocation(s.value)) {
          this.devicePointers.add(this.key(s.target.name, ctx.frame));
          return;
        }
        this.hostAccesses(accessesOfStatement(s), s, ctx);
        for (const v of valuesOfStatement(s)) this.callsIn(v, s.range, ctx);
        return;
      default:
        this.hostAccesses(accessesOfStatement(s), s, ctx);
        for (const v of valuesOfStatement(s)) this.callsIn(v, s.range, ctx);
    }
  }

  private withRange(loop: LoopStmt, ctx: Ctx, body: () => void): void {
    const v = loop.variable;
    const lo = loop.lower ? S.evaluate(loop.lower, ctx.frame.bindings) : undefined;
    const hi = loop.upper ? S.evaluate(loop.upper, ctx.frame.bindings) : undefined;
    const had = v ? ctx.hostRanges.get(v) : undefined;
    if (v && lo !== undefined && hi !== undefined && hi >= lo) ctx.hostRanges.set(v, [lo, hi]);
    try {
      body();
    } finally {
      if (v) {
        if (had) ctx.hostRanges.set(v, had);
        else ctx.hostRanges.delete(v);
      }
    }
  }

  private containsDeviceWork(loop: LoopStmt): boolean {
    let found = false;
    walkStatements(loop.body, (s) => {
      if (s.directives.some((d) => isOffloadCompute(d) || isDataConstruct(d)) || s.kind === 'directive') found = true;
      if (s.kind === 'call' && calleesOf(this.model).resolve(s.name)) found = true;
    });
    return found;
  }

  private stepsOf(run: TimeLoopRun): number | undefined {
    return run.loop.tripCount ? S.evaluate(run.loop.tripCount, this.bindingsOf(run.procedure)) : undefined;
  }

  // ---- the time loop -------------------------------------------------------------------

  private timeLoop(loop: LoopStmt, ctx: Ctx): void {
    const run: TimeLoopRun = {
      loop, procedure: ctx.frame.proc, transfers: [], liveAtEntry: new Map(), presentAtEntry: new Set(),
      needsHostValues: new Set(), deviceWritten: new Map(), deviceReads: new Set(), deviceWrites: new Set(), deviceUsed: new Set(),
      hostTouches: [], neededAfter: new Set(), residentPeak: 0, residentArrays: new Set(), kernels: [], hostNests: [],
      devicePointers: this.devicePointers, rotated: new Set(),
    };
    for (const k of this.env.presentKeys()) {
      run.presentAtEntry.add(k);
      run.liveAtEntry.set(k, this.env.state(k).allocation);
    }
    this.runs.push(run);
    const base: Ctx = { ...ctx, run, multiplier: S.num(1), everySteps: 1, ancestors: [] };
    const namesBefore = new Map(ctx.frame.rename);
    // First pass: the first step, which brings the environment to its steady state.
    this.exec(loop.body, { ...base, recording: false });
    for (const name of new Set([...namesBefore.keys(), ...ctx.frame.rename.keys()])) {
      const was = namesBefore.get(name) ?? name;
      const is = ctx.frame.rename.get(name) ?? name;
      if (was !== is) run.rotated.add(was).add(is);
    }
    // Second pass: the steady state, recorded per step.
    this.exec(loop.body, { ...base, recording: true });
    this.afterLoop = run;
  }

  /** The time loop whose "after" host reads are being collected (until the procedure ends). */
  private afterLoop?: TimeLoopRun;

  // ---- host code -----------------------------------------------------------------------

  private hostValues(values: VExpr[], s: Stmt, ctx: Ctx): void {
    const accesses: ArrayAccess[] = [];
    for (const v of values) forEachAccessInValue(v, (a) => accesses.push(a));
    this.hostAccesses(accesses, s, ctx);
    for (const v of values) this.callsIn(v, s.range, ctx);
  }

  private callsIn(v: VExpr, at: Range, ctx: Ctx): void {
    forEachCallInValue(v, (c) => {
      if (calleesOf(this.model).resolve(c.name)) this.call(c.name, c.args, at, ctx);
    });
  }

  private hostAccesses(accesses: ArrayAccess[], s: Stmt, ctx: Ctx): void {
    // A run for entry states (entriesFrom) keeps presence, counts and transfers only: which side
    // holds newer elements is not carried into the procedure, and its findings are not kept. The
    // arrays' infos are still made where a full run makes them (an info is made once, from the
    // frame that first touches the array).
    if (this.captureAt) {
      for (const a of accesses) {
        if (!this.isArray(a.array, ctx.frame)) continue;
        const key = this.key(a.array, ctx.frame);
        if (this.devicePointers.has(key)) continue;
        this.info(key, ctx.frame, a.array);
        this.env.state(key);
      }
      return;
    }
    for (const a of accesses) {
      if (!this.isArray(a.array, ctx.frame)) continue;
      const key = this.key(a.array, ctx.frame);
      if (this.devicePointers.has(key)) continue;
      const info = this.info(key, ctx.frame, a.array);
      const region = accessRegion(a, info, ctx.hostRanges, ctx.frame.bindings);
      const st = this.env.state(key);
      if (this.afterLoop && !ctx.run && a.isRead) this.afterLoop.neededAfter.add(key);
      if (ctx.run && ctx.anchor && ctx.recording) {
        const touch = { key, access: a, region, anchor: ctx.anchor, ancestors: ctx.ancestors, loops: ctx.hostLoops, bindings: ctx.frame.bindings, rename: ctx.frame.rename };
        if (a.isRead) ctx.run.hostTouches.push({ ...touch, kind: 'read' });
        if (a.isWrite) ctx.run.hostTouches.push({ ...touch, kind: 'write' });
      }
      if (!st.present) continue;
      if (a.isRead && overlaps(st.deviceNewer, region)) {
        const f = this.finding('stale-on-host', a.range, key,
          `Host code reads \`${a.array}\` here, but the device wrote ${describe(st.deviceNewer, region, info, ctx.frame.bindings, ctx.hostLoops)} since the last transfer to the host, so this reads stale data; ${this.updateWords('toHost')} for that slice just before this line.`, ctx.frame);
        if (f) {
          const top = ctx.frame.depth === 0;
          const touch: HostTouch = { key, kind: 'read', access: a, region, anchor: s, ancestors: [], loops: ctx.hostLoops, bindings: ctx.frame.bindings, rename: ctx.frame.rename };
          const symbolic = this.localBindings(ctx.frame);
          const section = touchSectionText(touch, key, info, this.model.language, symbolic) ?? regionSectionText(region, key, info, this.model.language);
          this.hints.set(f, { direction: 'toHost', section, anchor: top ? ctx.anchor ?? s : s, ancestors: top ? ctx.ancestors : [], where: 'before' });
        }
      }
      if (a.isWrite) {
        st.hostNewer = union(st.hostNewer, region);
        st.deviceNewer = subtract(st.deviceNewer, region);
        // Where a fix for a later stale device read goes: right after this write, in this
        // procedure, with the code's own index expressions (not numbers valid at one size).
        const top = ctx.frame.depth === 0;
        const touch: HostTouch = { key, kind: 'write', access: a, region, anchor: s, ancestors: [], loops: ctx.hostLoops, bindings: ctx.frame.bindings, rename: ctx.frame.rename };
        const local = top && rangeWithin(a.range, (ctx.anchor ?? s).range) ? a.array : key;
        const section = touchSectionText(touch, local, info, this.model.language, this.localBindings(ctx.frame));
        if (section) this.lastHostWrite.set(key, { region, hint: { direction: 'toDevice', section, anchor: top ? ctx.anchor ?? s : s, ancestors: top ? ctx.ancestors : [], where: 'after' } });
      }
    }
  }

  // ---- calls ---------------------------------------------------------------------------

  private call(name: string, args: VExpr[], at: Range, ctx: Ctx): void {
    const callee = calleesOf(this.model).resolve(name);
    if (!callee || callee === ctx.frame.proc) return;
    if (ctx.frame.depth >= MAX_CALL_DEPTH) {
      this.finding('assumed-no-alias', at, callee.name,
        `The call chain reaching \`${callee.name}\` is ${MAX_CALL_DEPTH} calls deep (or recursive); the ledger stops following calls there, so data that \`${callee.name}\` moves or touches is not counted.`, ctx.frame);
      return;
    }
    const rename = new Map<string, string>();
    const bindings = new Map(this.bindingsOf(callee));
    callee.params.forEach((p, i) => {
      const arg = args[i];
      if (!arg) return;
      if (p.isArray) {
        const base = arrayArgument(arg);
        // A pointer to a struct (`evolve(&current)`) names the caller's struct: its members follow.
        if (base && (this.isArray(base, ctx.frame) || this.isStruct(base, ctx.frame))) rename.set(p.name, this.key(base, ctx.frame));
        return;
      }
      if (p.type.name === 'unknown' && !p.isArray) {
        // A struct passed by reference (C++ `field &f`, Fortran derived types) aliases the caller's.
        const base = aliasSource(arg);
        if (base && this.isStruct(base, ctx.frame)) {
          rename.set(p.name, this.key(base, ctx.frame));
          return;
        }
      }
      // Resolve the caller's own locals but keep the file's named sizes (`N`, not 48000000), so
      // that sections written from the callee's view still read like the source.
      const e = toSymbolic(arg);
      if (!e) {
        bindings.delete(p.name);
        return;
      }
      let value = S.substitute(e, this.localBindings(ctx.frame));
      // `call tide(h, nx)` inside a scope where `nx` is the file's own constant: binding the
      // parameter nx to the symbol nx would be a cycle, so the caller's value is used instead.
      if (S.freeSymbols(value).includes(p.name)) value = S.substitute(value, ctx.frame.bindings);
      if (S.equals(value, S.sym(p.name))) bindings.delete(p.name);
      else bindings.set(p.name, value);
    });
    const frame: Frame = { proc: callee, rename, bindings, via: [...ctx.frame.via, at], depth: ctx.frame.depth + 1 };
    if (this.captureAt?.has(callee) && !this.captures.has(callee)) this.captures.set(callee, this.capture(frame));
    this.exec(callee.body, { ...ctx, frame });
  }

  /** The environment as the callee of `frame` sees it: its parameters by their own names, globals as they are. */
  private capture(frame: Frame): EntryState {
    const states = new Map<string, ArrayState>();
    const byKey = new Map<string, string>();
    for (const [param, key] of frame.rename) byKey.set(key, param);
    const globals = firstByName(this.model.globals);
    for (const key of this.env.presentKeys()) {
      const name = byKey.get(key) ?? (globals.has(key) ? key : undefined);
      if (!name) continue;
      const st = this.env.state(key);
      // Presence and reference counts carry into the procedure; which side holds newer elements
      // is kept only where the array's shape is the same in both (else the regions would not
      // mean the same elements), and otherwise forgotten rather than guessed.
      const copy = new ArrayState();
      copy.structured = st.structured;
      copy.dynamic = st.dynamic;
      copy.allocation = st.allocation;
      states.set(name, copy);
    }
    const bindings = new Map<string, S.Expr>();
    for (const p of frame.proc.params) {
      const v = frame.bindings.get(p.name);
      if (v !== undefined && S.evaluate(v, frame.bindings) !== undefined) bindings.set(p.name, S.num(S.evaluate(v, frame.bindings)!));
    }
    // Only the transfers of the allocations that carry into the callee (its "once" traffic): an
    // index by allocation keeps this proportional to them, not to everything run so far.
    const outside = [...states.values()].flatMap((st) => (this.outsideByAllocation.get(st.allocation) ?? []).map((t) => ({ ...t, array: byKey.get(t.array) ?? t.array })));
    return { states, bindings, outside };
  }

  // ---- device constructs ---------------------------------------------------------------

  private execution(stmt: Stmt, ctx: Ctx): Execution {
    return { stmt, multiplier: ctx.multiplier, everySteps: ctx.everySteps, bindings: ctx.frame.bindings, via: ctx.frame.via };
  }

  private compute(s: Stmt, d: Directive, ctx: Ctx): void {
    if (ctx.run && ctx.recording) ctx.run.kernels.push(this.execution(s, ctx));
    const entered = this.enterClauses(d, ctx, 'clause', true);
    for (const e of dataEntries(d)) if (e.action === 'deviceptr') this.devicePointers.add(this.key(e.ref.name, ctx.frame));
    const named = new Set(dataEntries(d).map((e) => this.key(e.ref.name, ctx.frame)));
    const privates = privateNames(d);
    const mode = defaultMode(d);
    const implicit: { key: string; section: Section; allocation: number }[] = [];
    const { reads, writes, used } = this.constructAccesses(s, d, privates, ctx.frame);
    if (ctx.run) for (const key of used) ctx.run.deviceUsed.add(key);
    // Implicit data attributes for arrays named in no clause (OpenACC 3.3 §2.6.2; OpenMP 5.2 §5.8.1).
    for (const key of new Set([...reads.keys(), ...writes.keys()])) {
      if (named.has(key)) continue;
      const local = localName(key, ctx.frame);
      const info = this.info(key, ctx.frame, local);
      const st = this.env.state(key);
      if (st.present || mode === 'present' || mode === 'none') continue;
      if (d.family === 'openmp' && info.decl?.isPointer) {
        this.finding('stale-on-device', d.range, key,
          `\`${local}\` is a pointer that no map clause names and that is not present on the device: OpenMP maps it as a zero-length array section (5.2 §5.8.1), so the device would dereference an address with no data behind it; map it here or in a \`target data\` region.`, ctx.frame);
        continue;
      }
      const section: Section = { bytes: wholeBytes(info), region: [wholeBox(info.shape)], whole: true };
      const allocation = this.env.allocate(key);
      st.structured++;
      this.transfer(ctx, d.range, key, 'toDevice', section.bytes, 'implicit', allocation, true);
      implicit.push({ key, section, allocation });
    }
    // Coherence: device reads of elements the host wrote since the last transfer to the device.
    for (const [key, region] of reads) {
      if (ctx.run) {
        ctx.run.deviceReads.add(key);
        if (!ctx.recording && !covers(ctx.run.deviceWritten.get(key) ?? [], region)) ctx.run.needsHostValues.add(key);
      }
      const st = this.env.state(key);
      if (st.present && overlaps(st.hostNewer, region)) {
        const info = this.info(key, ctx.frame, localName(key, ctx.frame));
        const f = this.finding('stale-on-device', d.range, key,
          `This construct reads \`${localName(key, ctx.frame)}\` on the device, but host code wrote ${describe(st.hostNewer, region, info, ctx.frame.bindings)} since the last transfer to the device, so the device computes with stale data; ${this.updateWords('toDevice', d.family)} for that slice after the host write.`, ctx.frame);
        if (f) {
          const w = this.lastHostWrite.get(key);
          if (w && overlaps(w.region, region) && covers(w.region, intersect(st.hostNewer, region))) {
            this.hints.set(f, w.hint);
          } else {
            const top = ctx.frame.depth === 0;
            const section = regionSectionText(intersect(st.hostNewer, region), key, info, this.model.language);
            this.hints.set(f, { direction: 'toDevice', section, anchor: top ? ctx.anchor ?? s : s, ancestors: top ? ctx.ancestors : [], where: 'before' });
          }
        }
        st.hostNewer = subtract(st.hostNewer, region);
      }
    }
    for (const [key, region] of writes) {
      if (ctx.run) {
        ctx.run.deviceWrites.add(key);
        if (!ctx.recording) ctx.run.deviceWritten.set(key, union(ctx.run.deviceWritten.get(key) ?? [], region));
      }
      const st = this.env.state(key);
      st.deviceNewer = union(st.deviceNewer, region);
      st.hostNewer = subtract(st.hostNewer, region);
    }
    this.scalarTransfers(s, d, ctx);
    this.notePeak(ctx);
    for (const imp of implicit.reverse()) {
      const st = this.env.state(imp.key);
      st.structured--;
      if (!st.present) {
        this.transfer(ctx, d.range, imp.key, 'toHost', imp.section.bytes, 'implicit', imp.allocation, true);
        this.env.release(imp.key);
      }
    }
    this.exitClauses(d, entered, ctx, 'clause', true);
  }

  /**
   * The elements a compute construct reads and writes, per array key. Kept per construct with the
   * frame, names and sizes they were read with: a time loop's second pass (and any later pass
   * with the same names) reuses the first pass's regions instead of reading every access again.
   * Names change copy-on-write (aliases, swaps) and device pointers only grow, so a changed map
   * or pointer count means the regions are read again.
   */
  private readonly accessesByConstruct = new WeakMap<Stmt, {
    d: Directive; frame: Frame; rename: Map<string, string>; bindings: Map<string, S.Expr>; pointers: number;
    reads: Map<string, Region>; writes: Map<string, Region>; used: Set<string>;
  }>();

  private constructAccesses(s: Stmt, d: Directive, privates: ReadonlySet<string>, frame: Frame): { reads: Map<string, Region>; writes: Map<string, Region>; used: Set<string> } {
    const hit = this.accessesByConstruct.get(s);
    if (hit && hit.d === d && hit.frame === frame && hit.rename === frame.rename && hit.bindings === frame.bindings && hit.pointers === this.devicePointers.size) return hit;
    const ranges = this.captureAt ? new Map() : deviceRanges(s, frame.bindings);
    const reads = new Map<string, Region>();
    const writes = new Map<string, Region>();
    const used = new Set<string>();
    walkStatements([s], (x) => {
      for (const a of accessesOfStatement(x)) {
        if (!this.isArray(a.array, frame) || privates.has(a.array)) continue;
        const key = this.key(a.array, frame);
        if (this.devicePointers.has(key)) continue;
        // A run for entry states needs which arrays a construct uses, not which elements.
        const info = this.info(key, frame, a.array);
        const region = this.captureAt ? [] : accessRegion(a, info, ranges, frame.bindings);
        if (a.isRead) reads.set(key, union(reads.get(key) ?? [], region));
        if (a.isWrite) writes.set(key, union(writes.get(key) ?? [], region));
        used.add(key);
      }
    });
    this.accessesByConstruct.set(s, { d, frame, rename: frame.rename, bindings: frame.bindings, pointers: this.devicePointers.size, reads, writes, used });
    return { reads, writes, used };
  }

  /**
   * Scalars a compute construct moves: a reduction result comes back to the host (OpenACC 3.3
   * §2.6.2: a reduction scalar of a loop in the construct is copied; OpenMP 5.2: a reduction on a
   * combined target construct maps the variable tofrom), a scalar in a copy/map clause moves as
   * written, and a scalar the construct writes inside `kernels` is copied (OpenACC 3.3 §2.6.2).
   * Each is a few bytes, but each is a blocking transfer per launch. Read-only scalars of
   * `kernels` are left out: compilers pass them by value (common practice).
   */
  private scalarTransfers(s: Stmt, d: Directive, ctx: Ctx): void {
    const isScalar = (name: string): boolean => {
      const decl = this.declOf(name, ctx.frame.proc);
      return !!decl && !decl.isArray && decl.type.name !== 'unknown';
    };
    const bytesOf = (name: string): number => {
      const decl = this.declOf(name, ctx.frame.proc);
      return decl?.type.bytes ?? 8;
    };
    const moved = new Map<string, { toDevice: boolean; toHost: boolean }>();
    const add = (name: string, toDevice: boolean, toHost: boolean): void => {
      const m = moved.get(name) ?? { toDevice: false, toHost: false };
      moved.set(name, { toDevice: m.toDevice || toDevice, toHost: m.toHost || toHost });
    };
    const directives: Directive[] = [d];
    walkStatements([s], (x) => { directives.push(...x.directives.filter((y) => y !== d)); });
    for (const dir of directives) {
      for (const c of dir.clauses) if (c.canonical === 'reduction') for (const v of c.vars ?? []) if (isScalar(v.name)) add(v.name, true, true);
    }
    for (const e of dataEntries(d)) {
      if (!isScalar(e.ref.name)) continue;
      if (e.action === 'copy') add(e.ref.name, true, true);
      else if (e.action === 'copyin') add(e.ref.name, true, false);
      else if (e.action === 'copyout') add(e.ref.name, false, true);
    }
    if (d.family === 'openacc' && d.construct.startsWith('kernels')) {
      const privates = privateNames(d);
      walkStatements([s], (x) => {
        if (x.kind === 'assign' && x.target.kind === 'var' && isScalar(x.target.name) && !privates.has(x.target.name) && !loopVariables(s).has(x.target.name)) add(x.target.name, true, true);
      });
    }
    for (const [name, m] of moved) {
      const key = this.key(name, ctx.frame);
      if (this.env.state(key).present) continue;
      const bytes = S.num(bytesOf(name));
      if (m.toDevice) this.transfer(ctx, d.range, key, 'toDevice', bytes, 'implicit', 0, true, undefined, true);
      if (m.toHost) this.transfer(ctx, d.range, key, 'toHost', bytes, 'implicit', 0, true, undefined, true);
    }
  }

  private enterRegion(d: Directive, ctx: Ctx): EnteredClause[] {
    const e = this.enterClauses(d, ctx, 'enter', true);
    this.notePeak(ctx);
    return e;
  }

  private exitRegion(d: Directive, entered: EnteredClause[], ctx: Ctx): void {
    this.exitClauses(d, entered, ctx, 'exit', true);
  }

  private enterClauses(d: Directive, ctx: Ctx, cause: Cause, structured: boolean): EnteredClause[] {
    const out: EnteredClause[] = [];
    for (const e of dataEntries(d)) {
      if (e.action === 'deviceptr' || e.action === 'delete' || e.action === 'release') continue;
      if (!this.isArray(e.ref.name, ctx.frame)) continue;
      const key = this.key(e.ref.name, ctx.frame);
      const info = this.info(key, ctx.frame, e.ref.name);
      const section = clauseSection(e.ref, info, this.model.language, this.localBindings(ctx.frame), ctx.frame.bindings);
      const st = this.env.state(key);
      if (ctx.run) ctx.run.deviceUsed.add(key);
      const wasPresent = st.present;
      if (!wasPresent && e.action !== 'present' && e.action !== 'no_create') this.env.allocate(key);
      if (structured) st.structured++;
      else st.dynamic++;
      const moves = e.action === 'copy' || e.action === 'copyin';
      if (wasPresent && (e.action === 'copy' || e.action === 'copyin' || e.action === 'copyout') && !e.always) {
        const f = this.finding('already-present', e.ref.range, key,
          `\`${e.ref.text}\` is already present on the device here (an enclosing data region or enter data made it present), so this \`${e.clause.name}\` moves nothing: data clauses act only on data that is not yet present (OpenACC 3.3 §2.7, OpenMP reference counts).`, ctx.frame);
        // Saying `present` states what happens and fails loudly if the region is ever removed.
        const allPresent = (e.clause.vars ?? []).every((v) => this.env.state(this.key(v.name, ctx.frame)).present);
        if (f && d.family === 'openacc' && allPresent && e.clause.args !== undefined && !d.macroExpanded) {
          this.presentFixes.set(f, { range: e.clause.range, text: `present(${e.clause.args.trim()})`, directive: d });
        }
      }
      if (moves && (!wasPresent || e.always)) {
        this.transfer(ctx, d.range, key, 'toDevice', section.bytes, cause === 'clause' ? 'clause' : 'enter', st.allocation, section.whole, e.ref.range);
        st.hostNewer = subtract(st.hostNewer, section.region);
      }
      out.push({ entry: e, key, section, structured });
    }
    return out;
  }

  private exitClauses(d: Directive, entered: EnteredClause[], ctx: Ctx, cause: Cause, structured: boolean): void {
    for (const { entry, key, section } of [...entered].reverse()) {
      const st = this.env.state(key);
      if (structured) st.structured = Math.max(0, st.structured - 1);
      const back = entry.action === 'copy' || entry.action === 'copyout';
      if (back && (entry.always || !st.present)) {
        this.transfer(ctx, d.range, key, 'toHost', section.bytes, cause === 'clause' ? 'clause' : 'exit', st.allocation, section.whole, entry.ref.range);
        st.deviceNewer = subtract(st.deviceNewer, section.region);
      }
      if (!st.present) this.env.release(key);
    }
  }

  private standalone(d: Directive, ctx: Ctx): void {
    const c = d.construct;
    if (c === 'update' || c === 'target update') {
      for (const m of motionEntries(d)) {
        if (!this.isArray(m.ref.name, ctx.frame)) continue;
        const key = this.key(m.ref.name, ctx.frame);
        const info = this.info(key, ctx.frame, m.ref.name);
        const section = clauseSection(m.ref, info, this.model.language, this.localBindings(ctx.frame), ctx.frame.bindings);
        const st = this.env.state(key);
        if (ctx.run) ctx.run.deviceUsed.add(key);
        if (!st.present) continue;
        this.transfer(ctx, d.range, key, m.direction, section.bytes, 'update', st.allocation, section.whole, d.macroExpanded ? undefined : m.ref.range, undefined, { text: m.ref.text, region: section.region });
        if (m.direction === 'toHost') st.deviceNewer = subtract(st.deviceNewer, section.region);
        else st.hostNewer = subtract(st.hostNewer, section.region);
      }
      return;
    }
    if (c === 'enter data' || c === 'target enter data' || c === 'declare' || c === 'declare target') {
      this.enterClauses(d, ctx, 'enter', false);
      this.notePeak(ctx);
      return;
    }
    if (c === 'exit data' || c === 'target exit data') {
      const finalize = d.clauses.some((x) => x.canonical === 'finalize');
      for (const e of dataEntries(d)) {
        if (!this.isArray(e.ref.name, ctx.frame)) continue;
        const key = this.key(e.ref.name, ctx.frame);
        const info = this.info(key, ctx.frame, e.ref.name);
        const st = this.env.state(key);
        if (!st.present) continue;
        st.dynamic = finalize || e.action === 'delete' ? 0 : Math.max(0, st.dynamic - 1);
        if (!st.present) {
          if (e.action === 'copyout' || e.action === 'copy') {
            const section = clauseSection(e.ref, info, this.model.language, this.localBindings(ctx.frame), ctx.frame.bindings);
            this.transfer(ctx, d.range, key, 'toHost', section.bytes, 'exit', st.allocation, section.whole);
          }
          this.env.release(key);
        }
      }
    }
  }

  // ---- records -------------------------------------------------------------------------

  private transfer(
    ctx: Ctx, range: Range, array: string, direction: 'toDevice' | 'toHost', bytes: S.Expr, cause: Cause, allocation: number, whole: boolean,
    at?: Range, scalar?: boolean, section?: { text: string; region: Region },
  ): void {
    const rec: TransferRecord = {
      range, array, direction, bytes: S.mul(bytes, ctx.multiplier), everySteps: ctx.everySteps, cause,
      via: ctx.frame.via, allocation, whole, at, origin: ctx.frame.proc.origin, ...(scalar ? { scalar } : {}), ...(section ? { section } : {}),
    };
    if (ctx.run) {
      if (ctx.recording) ctx.run.transfers.push(rec);
    } else {
      this.outside.push(rec);
      const list = this.outsideByAllocation.get(allocation);
      if (list) list.push(rec);
      else this.outsideByAllocation.set(allocation, [rec]);
    }
  }

  private notePeak(ctx: Ctx): void {
    const run = ctx.run;
    if (!run || !ctx.recording) return;
    let total: number | null = 0;
    for (const k of this.env.presentKeys()) {
      run.residentArrays.add(k);
      const info = this.infos.get(k);
      const v = info ? S.evaluate(wholeBytes(info), ctx.frame.bindings) : undefined;
      total = v === undefined || total === null ? null : total + v;
    }
    if (run.residentPeak !== null) run.residentPeak = total === null ? null : Math.max(run.residentPeak, total);
  }

  /**
   * Records a finding once. A finding inside a procedure of another file is placed at the call
   * in this file that reaches it (its own lines belong to that other file), and then carries no
   * quick fix: the fix would edit the other file.
   */
  private finding(code: Finding['code'], range: Range, array: string, message: string, frame?: Frame): Finding | undefined {
    const origin = frame?.proc.origin;
    const at = origin && frame.via[0] ? frame.via[0] : range;
    const text = origin ? `In ${otherFileName(this.model.path, origin, this.projectRoot)}, line ${range.start.line + 1} (reached from this call): ${message}` : message;
    // Keyed by what the user reads, not by the storage: after a swap two storages can give the
    // same finding at the same place.
    const id = `${code}:${at.start.line}:${at.start.col}:${message}:${origin ?? ''}:${range.start.line}`;
    if (this.seenFindings.has(id)) return undefined;
    this.seenFindings.add(id);
    const f: Finding = { code, severity: code.startsWith('stale') ? 'error' : 'info', range: at, message: text, array };
    this.findings.push(f);
    return origin ? undefined : f;
  }
}

/** The data environment at the call that enters a time loop's procedure (see `entriesFrom`). */
export interface EntryState {
  states: Map<string, ArrayState>;
  bindings: Map<string, S.Expr>;
  outside: TransferRecord[];
}

interface EnteredClause {
  entry: DataEntry;
  key: string;
  section: Section;
  structured: boolean;
}

/** The array an actual argument passes: `a`, `&a[k]`, `a + off`, `(float *)a`. */
function arrayArgument(e: VExpr): string | undefined {
  let x = e;
  for (;;) {
    if (x.kind === 'var') return x.name;
    if (x.kind === 'cast' || (x.kind === 'unary' && x.op === '&')) x = x.operand;
    else if (x.kind === 'index') return x.access.array;
    else if (x.kind === 'bin' && (x.op === '+' || x.op === '-')) x = x.left;
    // C++ containers hand out their storage: `u.data()`, `u->data()`.
    else if (x.kind === 'call' && x.args.length === 0 && /(\.|->)data$/.test(x.name)) return x.name.replace(/(\.|->)data$/, '');
    else return undefined;
  }
}

/** Calls that return device memory: the pointer holds a device address (OpenACC 3.3 acc_malloc; OpenMP 5.2 omp_target_alloc). */
function isDeviceAllocation(e: VExpr): boolean {
  let x = e;
  while (x.kind === 'cast') x = x.operand;
  return x.kind === 'call' && /^(acc_malloc|omp_target_alloc(_device|_shared|_host)?|acc_create|acc_copyin)$/.test(x.name);
}

/** Induction variables of the loops in a statement (private by rule in both standards). */
function loopVariables(s: Stmt): Set<string> {
  const out = new Set<string>();
  walkStatements([s], (x) => { if (x.kind === 'loop' && x.variable) out.add(x.variable); });
  return out;
}

/** The array `q + off` / `off + q` points into. */
function interiorBase(e: VExpr): string | undefined {
  let x = e;
  while (x.kind === 'cast') x = x.operand;
  if (x.kind === 'bin' && (x.op === '+' || x.op === '-')) return aliasSource(x.left) ?? interiorBase(x.left);
  return undefined;
}

/** The array a pointer-arithmetic value starts from: `q + off`, `q - 1`, `ptrs[k]`. */
function arithmeticBase(e: VExpr): string | undefined {
  let x = e;
  while (x.kind === 'cast') x = x.operand;
  if (x.kind === 'bin' && (x.op === '+' || x.op === '-')) return aliasSource(x.left) ?? arithmeticBase(x.left);
  if (x.kind === 'index') return x.access.array;
  return undefined;
}

function printValueShort(e: VExpr): string {
  const t = printValue(e);
  return t.length > 40 ? `${t.slice(0, 37)}...` : t;
}

function isMember(name: string): boolean {
  return /[.%]|->/.test(name) && !name.includes('::');
}

/** The storage a value names when assigned to a pointer: `q`, `s.q`, `&q[0]`, `(double *)q`, `q + 0`. */
function aliasSource(e: VExpr): string | undefined {
  let x = e;
  for (;;) {
    if (x.kind === 'var') return x.name;
    // `&u[j*nx]`: a pointer into u's storage (its offset is not followed: regions through it start at u's first element).
    if (x.kind === 'unary' && x.op === '&' && x.operand.kind === 'index') return x.operand.access.array;
    if (x.kind === 'cast' || (x.kind === 'unary' && x.op === '&')) x = x.operand;
    else if (x.kind === 'index' && x.access.subscripts.every((k) => k !== undefined && S.evaluate(k, new Map()) === 0)) return x.access.array;
    else if (x.kind === 'call' && x.args.length === 0 && /(\.|->)data$/.test(x.name)) return x.name.replace(/(\.|->)data$/, '');
    else return undefined;
  }
}

function localName(key: string, frame: Frame): string {
  for (const [local, k] of frame.rename) if (k === key) return local;
  const i = key.indexOf('::');
  return i >= 0 ? key.slice(i + 2) : key;
}

/** Numeric ranges of the loops inside a construct, for the regions its accesses touch. */
function deviceRanges(s: Stmt, bindings: ReadonlyMap<string, S.Expr>): LoopRanges {
  const out = new Map<string, [number, number]>();
  const visit = (x: Stmt): void => {
    if (x.kind === 'loop' && x.variable && x.lower && x.upper && !x.triangular) {
      const lo = S.evaluate(x.lower, bindings);
      const hi = S.evaluate(x.upper, bindings);
      if (lo !== undefined && hi !== undefined && hi >= lo) out.set(x.variable, [lo, hi]);
    }
    childStatements(x).forEach(visit);
  };
  visit(s);
  return out;
}

/** "element 4,802,003" or "12,000 elements of it" for messages about stale slices. */
function describe(newer: Region, touched: Region, info: ArrayInfo, bindings?: ReadonlyMap<string, S.Expr>, loops: readonly LoopStmt[] = []): string {
  const n = regionSize(covers(newer, touched) ? touched : newer.filter((b) => overlaps([b], touched)));
  if (n === 1) return 'that element';
  // A region whose size rests on an unbound extent has no count worth printing: name the sizes
  // and the binding that decides it.
  if (!Number.isFinite(n) || n >= 2 ** 48) {
    const sizes = [info.elementCount, ...loops.map((l) => l.tripCount)].filter((e): e is S.Expr => !!e);
    const loopVars = new Set(loops.map((l) => l.variable));
    const open = [...new Set(sizes.flatMap((e) => S.freeSymbols(e)))].filter((x) => !loopVars.has(x) && (!bindings || S.evaluate(S.sym(x), bindings) === undefined));
    return open.length > 0
      ? `elements read here (how many depends on ${open.map((x) => `\`${x}\``).join(', ')}, which the tool cannot bind; \`--bind ${open[0]}=VALUE\` decides it)`
      : 'elements read here (how many depends on sizes the tool cannot bind)';
  }
  return `${n.toLocaleString('en-US')} of the elements read here (${(n * info.elementBytes).toLocaleString('en-US')} bytes)`;
}

/**
 * Declare directives outside every procedure, found once per model: each procedure's run needs
 * them, and testing every directive against every procedure per run made large files quadratic.
 */
const declarationsOf = new WeakMap<ProgramModel, Directive[]>();
function fileLevelDeclarations(model: ProgramModel): Directive[] {
  let found = declarationsOf.get(model);
  if (!found) {
    const candidates = model.directives.filter((d) => d.construct === 'declare' || d.construct.includes('declare target'));
    // Procedures of other files have ranges in those files; only this file's can contain a directive here.
    found = candidates.filter((d) => !model.procedures.some((p) => !p.origin && rangeWithin(d.range, p.range)));
    declarationsOf.set(model, found);
  }
  return found;
}

