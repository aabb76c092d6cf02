/**
 * Index locals: integer scalars that name an element, as most real stencils are written
 * (`size_t c = IDX(i, j, k); out[c] = in[c - 1] + …`, `ind = i*(ny+2) + j`, Fortran
 * `ic = i + (j-1)*nx; a(ic)`), are forward-substituted into the array subscripts that follow
 * them in the same iteration. Every analysis then sees `in[k*NX*NY + j*NX + i - 1]` instead of an
 * opaque `in[c - 1]`, which would look loop-invariant (and its bytes would be divided by the trip
 * count). The pass rewrites the model before any analysis runs, so the cost ledger, footprints,
 * dependence tests and data slices all see the same subscripts.
 *
 * Inside each loop body, a scalar `x` is substituted when, in that body:
 *  - it is assigned exactly once, with `=`, on straight-line code (not in a branch, not in an
 *    inner loop), and no statement reads it before that assignment in the iteration;
 *  - it has an integer type (declared integer, or of unknown type with an integer value);
 *  - its value, after substituting the index locals before it (chains such as `kk = k*nxy;
 *    c = kk + j*nx + i`), is integer arithmetic over names that the body does not assign
 *    (loop variables, sizes, other invariants): literals, `+ - * / %`, shifts, integer casts,
 *    min/max/mod.
 * Locals of an enclosing loop body reach inner loops unless the inner loop assigns them or what
 * they are computed from.
 *
 * A scalar the body assigns that is not substituted (assigned in a branch, twice, read before
 * being assigned, or with a value that is not integer arithmetic, such as `c = idx[i]`) varies
 * from one iteration to the next, so a subscript that uses it is made unreadable (irregular)
 * inside that loop: the footprint then counts it per access instead of as a loop invariant.
 * The one exception is a time loop (no loop directive, other loops or calls inside, and its
 * variable indexing none of their arrays): there the scalar is constant for each nest inside,
 * so the subscript keeps the name, as the host-side slices of the data ledger need.
 *
 * The pass is pure: it returns a new model sharing every unchanged statement with the input,
 * walks each procedure once (plus one pass collecting what each loop assigns), and keeps one
 * small environment per loop body.
 */
import * as S from '../symbolic';
import { calleesOf } from './callees';
import { isDataConstruct, isLoopDirective, isOffloadCompute } from './directives';
import type { ArrayAccess, AssignStmt, Declaration, LoopStmt, Procedure, ProgramModel, Stmt, VExpr } from './program';
import { printValue, toSymbolic, variableNames } from './values';

/** Returns the model with index locals substituted into subscripts; the input is not modified. */
export function substituteIndexLocals(model: ProgramModel): ProgramModel {
  let globals: Map<string, Declaration> | undefined;
  const globalOf = (name: string): Declaration | undefined => {
    globals ??= new Map(model.globals.map((g) => [g.name, g]));
    return globals.get(name);
  };
  const symbols = new Map<string, S.Expr | null>();
  let changed = false;
  const procedures = model.procedures.map((p) => {
    // Procedures of other files (workspace view) were rewritten with their own model.
    if (p.origin) return p;
    const body = new ProcedurePass(model, p, globalOf, symbols).run();
    if (body === p.body) return p;
    changed = true;
    return { ...p, body };
  });
  return changed ? { ...model, procedures } : model;
}

// ---- what each loop assigns ------------------------------------------------------------

interface LoopFacts {
  /** Assignments to scalar names by statements anywhere inside the loop (not by loop headers). */
  writes: Map<string, number>;
  /** Variables of loops nested anywhere inside. */
  innerVars: Set<string>;
  /** Loops directly in the body (through blocks and branches, not through other loops). */
  directLoops: number;
  /** An offload compute or data construct, or a standalone directive, somewhere inside. */
  offloadOrData: boolean;
  /** A call to a procedure of the model somewhere inside. */
  calls: boolean;
}

const emptyFacts = (): LoopFacts => ({ writes: new Map(), innerVars: new Set(), directLoops: 0, offloadOrData: false, calls: false });

/** Names written by `x = …`, `x += …`, `++x`, `x--` in statement text the model keeps as `other`. */
const textAssignment = /([A-Za-z_]\w*)\s*(?:[-+*/%&|^]|<<|>>)?=(?!=)|([A-Za-z_]\w*)\s*(?:\+\+|--)|(?:\+\+|--)\s*([A-Za-z_]\w*)/g;
const identifier = /[A-Za-z_]\w*/g;

function collectFacts(stmts: readonly Stmt[], into: LoopFacts, all: Map<LoopStmt, LoopFacts>, ctx: { language: ProgramModel['language']; isProcedure: (n: string) => boolean }): void {
  const write = (name: string): void => { into.writes.set(name, (into.writes.get(name) ?? 0) + 1); };
  for (const s of stmts) {
    if (s.directives.some((d) => isOffloadCompute(d) || isDataConstruct(d))) into.offloadOrData = true;
    switch (s.kind) {
      case 'loop': {
        const f = emptyFacts();
        collectFacts(s.body, f, all, ctx);
        all.set(s, f);
        into.directLoops++;
        for (const [k, n] of f.writes) into.writes.set(k, (into.writes.get(k) ?? 0) + n);
        for (const v of f.innerVars) into.innerVars.add(v);
        if (s.variable) into.innerVars.add(s.variable);
        into.offloadOrData ||= f.offloadOrData || s.directives.some((d) => isOffloadCompute(d) || isDataConstruct(d));
        into.calls ||= f.calls;
        continue;
      }
      case 'assign':
        if (s.target.kind === 'var') write(s.target.name);
        addressTaken(s.value, write);
        if (s.target.kind === 'index') for (const v of s.target.access.subscriptValues) addressTaken(v, write);
        continue;
      case 'call':
        for (const a of s.args) {
          addressTaken(a, write);
          // Fortran passes by reference, and a C++ reference parameter may be assigned too.
          if (a.kind === 'var' && ctx.language !== 'c') write(a.name);
        }
        if (ctx.isProcedure(s.name)) into.calls = true;
        continue;
      case 'if':
        addressTaken(s.condition, write);
        collectFacts(s.then, into, all, ctx);
        collectFacts(s.otherwise, into, all, ctx);
        continue;
      case 'block':
        collectFacts(s.body, into, all, ctx);
        continue;
      case 'other':
        for (const v of s.values) addressTaken(v, write);
        for (const m of s.text.matchAll(textAssignment)) write(m[1] ?? m[2] ?? m[3]);
        continue;
      case 'directive':
        if (!s.directive.isEnd) into.offloadOrData = true;
        continue;
    }
  }
}

/** Names whose address is taken (`&x`): a callee may assign them. */
function addressTaken(e: VExpr, write: (name: string) => void): void {
  switch (e.kind) {
    case 'unary':
      if (e.op === '&' && e.operand.kind === 'var') write(e.operand.name);
      addressTaken(e.operand, write);
      return;
    case 'bin':
      addressTaken(e.left, write);
      addressTaken(e.right, write);
      return;
    case 'cast':
      addressTaken(e.operand, write);
      return;
    case 'call':
      for (const a of e.args) addressTaken(a, write);
      return;
    case 'cond':
      addressTaken(e.test, write);
      addressTaken(e.then, write);
      addressTaken(e.else, write);
      return;
    case 'index':
      for (const v of e.access.subscriptValues) addressTaken(v, write);
      return;
    default:
      return;
  }
}

// ---- the walk ------------------------------------------------------------------------------

interface Local {
  /** The value with earlier index locals already substituted. */
  value: VExpr;
  sym: S.Expr;
  /** Names the value reads. */
  names: Set<string>;
  /** Symbols of `sym`. */
  symbols: string[];
}

interface Frame {
  loop: LoopStmt;
  facts: LoopFacts;
  env: Map<string, Local>;
  /** Statement number at which this iteration's body starts (reads since then are in the iteration). */
  start: number;
  /** Inside an offload compute construct (the loop or an enclosing statement carries one). */
  inCompute: boolean;
  /** Subscripts that use a scalar this loop assigns and does not substitute. */
  pending: { access: ArrayAccess; k: number }[];
  /** Accesses inside loops nested in this one, and how many of them the loop variable indexes. */
  nested: { all: number; uses: number; device: number; deviceUses: number };
}

const INLINE_OPS = new Set(['+', '-', '*', '/', '%', '<<']);
const INLINE_CALLS = new Set(['min', 'max', 'mod']);

class ProcedurePass {
  private readonly facts = new Map<LoopStmt, LoopFacts>();
  private readonly stack: Frame[] = [];
  private readonly lastRead = new Map<string, number>();
  private seq = 0;
  private offload = false;
  private decls: Map<string, Declaration> | undefined;

  constructor(
    private readonly model: ProgramModel,
    private readonly proc: Procedure,
    private readonly globalOf: (n: string) => Declaration | undefined,
    /** Symbolic forms of call-free values by their text, shared by the procedures of a model. */
    private readonly symbols: Map<string, S.Expr | null>,
  ) {}

  run(): Stmt[] {
    const callees = calleesOf(this.model);
    collectFacts(this.proc.body, emptyFacts(), this.facts, { language: this.model.language, isProcedure: (n) => !!callees.resolve(n) });
    if (this.facts.size === 0) return this.proc.body;
    return this.list(this.proc.body, false);
  }

  private list(stmts: Stmt[], straight: boolean): Stmt[] {
    let out: Stmt[] | undefined;
    stmts.forEach((s, k) => {
      const t = this.statement(s, straight);
      if (t !== s) {
        out ??= stmts.slice();
        out[k] = t;
      }
    });
    return out ?? stmts;
  }

  private statement(s: Stmt, straight: boolean): Stmt {
    this.seq++;
    const saved = this.offload;
    if (s.directives.some(isOffloadCompute)) this.offload = true;
    try {
      if (s.kind === 'loop') return this.loop(s);
      if (this.stack.length === 0) {
        // Outside loops nothing is substituted; only look for loops.
        if (s.kind === 'if') return this.same(s, { then: this.list(s.then, false), otherwise: this.list(s.otherwise, false) });
        if (s.kind === 'block') return this.same(s, { body: this.list(s.body, false) });
        return s;
      }
      switch (s.kind) {
        case 'assign': {
          const value = this.value(s.value);
          let target = s.target;
          if (s.target.kind === 'index') {
            const access = this.access(s.target.access);
            if (access !== s.target.access) target = { kind: 'index', access };
          }
          if (s.target.kind === 'var' && straight) this.define(s.target.name, s);
          return this.same(s, { value, target });
        }
        case 'call':
          return this.same(s, { args: this.values(s.args) });
        case 'if':
          return this.same(s, { condition: this.value(s.condition), then: this.list(s.then, false), otherwise: this.list(s.otherwise, false) });
        case 'block':
          return this.same(s, { body: this.list(s.body, straight) });
        case 'other':
          for (const m of s.text.matchAll(identifier)) this.lastRead.set(m[0], this.seq);
          return this.same(s, { values: this.values(s.values) });
        default:
          return s;
      }
    } finally {
      this.offload = saved;
    }
  }

  /** A copy of `s` with the given fields when any of them changed, else `s` itself. */
  private same<T extends Stmt>(s: T, fields: Partial<T>): T {
    for (const [k, v] of Object.entries(fields)) {
      if ((s as unknown as Record<string, unknown>)[k] !== v) return { ...s, ...fields };
    }
    return s;
  }

  private loop(s: LoopStmt): LoopStmt {
    const facts = this.facts.get(s) ?? emptyFacts();
    for (const b of [s.lower, s.upper, s.step]) if (b) for (const n of S.freeSymbols(b)) this.lastRead.set(n, this.seq);
    const outer = this.stack[this.stack.length - 1];
    const changing = (n: string): boolean => n === s.variable || facts.writes.has(n) || facts.innerVars.has(n);
    const env = new Map<string, Local>();
    for (const [k, v] of outer?.env ?? []) {
      if (changing(k) || [...v.names].some(changing)) continue;
      env.set(k, v);
    }
    const inCompute = this.offload || s.directives.some(isOffloadCompute) || (outer?.inCompute ?? false);
    const frame: Frame = { loop: s, facts, env, start: ++this.seq, inCompute, pending: [], nested: { all: 0, uses: 0, device: 0, deviceUses: 0 } };
    this.stack.push(frame);
    const saved = this.offload;
    this.offload = inCompute;
    let body: Stmt[];
    try {
      body = this.list(s.body, true);
    } finally {
      this.offload = saved;
      this.stack.pop();
    }
    if (!this.isTimeLoop(frame)) {
      for (const { access, k } of frame.pending) access.subscripts[k] = undefined;
    }
    return body === s.body ? s : { ...s, body };
  }

  /**
   * The time-loop test of the loop-nest scan (analysis/nests.ts), applied to one loop: no loop
   * or compute directive, compute work inside, and a variable that indexes at most half the
   * accesses inside its nested loops (those on the device when there are any).
   */
  private isTimeLoop(f: Frame): boolean {
    if (f.inCompute || f.loop.directives.some((d) => isLoopDirective(d) || isOffloadCompute(d))) return false;
    const works = f.facts.offloadOrData || f.facts.directLoops >= 2 || f.facts.calls;
    if (!works) return false;
    if (!f.loop.variable) return true;
    const [all, uses] = f.nested.device > 0 ? [f.nested.device, f.nested.deviceUses] : [f.nested.all, f.nested.uses];
    return uses * 2 <= all;
  }

  /** Records `name = value` as an index local of the innermost loop when the rules allow it. */
  private define(name: string, s: AssignStmt): void {
    const frame = this.stack[this.stack.length - 1];
    if (s.op !== '=' || (frame.facts.writes.get(name) ?? 0) !== 1) return;
    if (name === frame.loop.variable || frame.facts.innerVars.has(name)) return;
    if ((this.lastRead.get(name) ?? -1) >= frame.start) return;
    const value = this.expand(s.value, frame.env);
    if (!value) return;
    const names = new Set<string>();
    variableNames(value, names);
    if (names.has(name)) return;
    for (const n of names) if (frame.facts.writes.has(n) || frame.facts.innerVars.has(n)) return;
    if (!this.integerScalar(name, names)) return;
    const sym = this.symbolic(value);
    if (!sym) return;
    frame.env.set(name, { value, sym, names, symbols: S.freeSymbols(sym) });
  }

  /** The value with index locals substituted, or undefined when it is not integer arithmetic we can inline. */
  private expand(e: VExpr, env: Map<string, Local>): VExpr | undefined {
    switch (e.kind) {
      case 'num':
        return e.isFloat ? undefined : e;
      case 'var':
        return env.get(e.name)?.value ?? e;
      case 'bin': {
        if (!INLINE_OPS.has(e.op)) return undefined;
        const l = this.expand(e.left, env);
        const r = l && this.expand(e.right, env);
        return l && r ? (l === e.left && r === e.right ? e : { ...e, left: l, right: r }) : undefined;
      }
      case 'unary': {
        if (e.op !== '-' && e.op !== '+') return undefined;
        const x = this.expand(e.operand, env);
        return x && (x === e.operand ? e : { ...e, operand: x });
      }
      case 'cast': {
        if (e.type.isFloat) return undefined;
        const x = this.expand(e.operand, env);
        return x && (x === e.operand ? e : { ...e, operand: x });
      }
      case 'call': {
        if (!INLINE_CALLS.has(e.name.toLowerCase().replace(/^(std)?::/, '')) && !this.isShapeInquiry(e)) return undefined;
        const args: VExpr[] = [];
        for (const a of e.args) {
          const x = this.expand(a, env);
          if (!x) return undefined;
          args.push(x);
        }
        return args.every((a, k) => a === e.args[k]) ? e : { ...e, args };
      }
      default:
        return undefined;
    }
  }

  /**
   * The value's symbolic form. Loops often compute the same index (`IDX(i, j, k)` in every
   * sweep), so forms are kept by their text; values with calls are not kept, since a Fortran
   * shape inquiry depends on the procedure's declarations.
   */
  private symbolic(value: VExpr): S.Expr | undefined {
    const text = hasCall(value) ? undefined : printValue(value);
    const hit = text === undefined ? undefined : this.symbols.get(text);
    if (hit !== undefined) return hit ?? undefined;
    const sym = toSymbolic(value, (c) => this.shapeInquiry(c));
    if (text !== undefined) this.symbols.set(text, sym ?? null);
    return sym;
  }

  private decl(name: string): Declaration | undefined {
    if (!this.decls) {
      this.decls = new Map();
      for (const p of this.proc.params) this.decls.set(p.name, p);
      for (const l of this.proc.locals) this.decls.set(l.name, l);
    }
    return this.decls.get(name) ?? this.globalOf(name);
  }

  /**
   * True when `name` is an integer scalar: declared with an integer type, or of a type this tool
   * cannot name (`auto`, a typedef) with a value that reads no floating-point variable.
   */
  private integerScalar(name: string, valueNames: Set<string>): boolean {
    const d = this.decl(name);
    if (d && (d.isArray || d.isPointer || d.type.isFloat)) return false;
    if (d && d.type.name !== 'unknown') return true;
    for (const n of valueNames) {
      const v = this.decl(n);
      // Array names appear only as the first argument of a Fortran shape inquiry.
      if (v && !v.isArray && (v.type.isFloat || v.isPointer)) return false;
    }
    return true;
  }

  private isShapeInquiry(c: VExpr & { kind: 'call' }): boolean {
    return this.model.language === 'fortran' && ['size', 'lbound', 'ubound'].includes(c.name.toLowerCase());
  }

  /** Fortran `size(a, k)`, `lbound(a, k)`, `ubound(a, k)` of a declared array: its declared bounds. */
  private shapeInquiry(c: VExpr & { kind: 'call' }): S.Expr | undefined {
    if (!this.isShapeInquiry(c)) return undefined;
    const [first, second] = c.args;
    const d = first?.kind === 'var' ? this.decl(first.name) : undefined;
    if (!d || !d.isArray || d.dims.length === 0) return undefined;
    const name = c.name.toLowerCase();
    if (c.args.length === 1) return name === 'size' ? S.mul(...d.dims) : undefined;
    const kExpr = second ? toSymbolic(second) : undefined;
    const k = kExpr ? S.constValue(kExpr) : undefined;
    if (k === undefined || !Number.isInteger(k) || k < 1 || k > d.dims.length) return undefined;
    const lower = d.lowerBounds?.[k - 1] ?? S.num(1);
    if (name === 'size') return d.dims[k - 1];
    if (name === 'lbound') return lower;
    return S.sub(S.add(lower, d.dims[k - 1]), S.num(1));
  }

  private values(vs: VExpr[]): VExpr[] {
    let out: VExpr[] | undefined;
    vs.forEach((v, k) => {
      const w = this.value(v);
      if (w !== v) {
        out ??= vs.slice();
        out[k] = w;
      }
    });
    return out ?? vs;
  }

  /** Rewrites the accesses inside a value (not its own variables) and records what it reads. */
  private value(e: VExpr): VExpr {
    switch (e.kind) {
      case 'var':
        this.lastRead.set(e.name, this.seq);
        return e;
      case 'index': {
        const a = this.access(e.access);
        return a === e.access ? e : { kind: 'index', access: a };
      }
      case 'bin': {
        const l = this.value(e.left);
        const r = this.value(e.right);
        return l === e.left && r === e.right ? e : { ...e, left: l, right: r };
      }
      case 'unary':
      case 'cast': {
        const x = this.value(e.operand);
        return x === e.operand ? e : { ...e, operand: x };
      }
      case 'call': {
        const args = this.values(e.args);
        return args === e.args ? e : { ...e, args };
      }
      case 'cond': {
        const t = this.value(e.test);
        const a = this.value(e.then);
        const b = this.value(e.else);
        return t === e.test && a === e.then && b === e.else ? e : { ...e, test: t, then: a, else: b };
      }
      default:
        return e;
    }
  }

  /** A subscript value with index locals substituted for its variables; nested accesses rewritten. */
  private subscriptValue(e: VExpr, env: Map<string, Local>): VExpr {
    switch (e.kind) {
      case 'var':
        this.lastRead.set(e.name, this.seq);
        return env.get(e.name)?.value ?? e;
      case 'index': {
        const a = this.access(e.access);
        return a === e.access ? e : { kind: 'index', access: a };
      }
      case 'bin': {
        const l = this.subscriptValue(e.left, env);
        const r = this.subscriptValue(e.right, env);
        return l === e.left && r === e.right ? e : { ...e, left: l, right: r };
      }
      case 'unary':
      case 'cast': {
        const x = this.subscriptValue(e.operand, env);
        return x === e.operand ? e : { ...e, operand: x };
      }
      case 'call': {
        const args = e.args.map((a) => this.subscriptValue(a, env));
        return args.every((a, k) => a === e.args[k]) ? e : { ...e, args };
      }
      case 'cond': {
        const t = this.subscriptValue(e.test, env);
        const a = this.subscriptValue(e.then, env);
        const b = this.subscriptValue(e.else, env);
        return t === e.test && a === e.then && b === e.else ? e : { ...e, test: t, then: a, else: b };
      }
      default:
        return e;
    }
  }

  private access(a: ArrayAccess): ArrayAccess {
    const frame = this.stack[this.stack.length - 1];
    const env = frame.env;
    const values = a.subscriptValues.map((v) => this.subscriptValue(v, env));
    const subscripts = a.subscripts.slice();
    const pending: { frame: Frame; k: number }[] = [];
    let substituted = values.some((v, k) => v !== a.subscriptValues[k]);
    const syms = new Set<string>();
    subscripts.forEach((sub, k) => {
      if (!sub) return;
      const bind = new Map<string, Local>();
      for (const n of S.freeSymbols(sub)) {
        const local = env.get(n);
        if (local) {
          bind.set(n, local);
          for (const x of local.symbols) syms.add(x);
          continue;
        }
        syms.add(n);
        // A scalar some enclosing loop assigns and does not substitute: varies with that loop.
        for (const f of this.stack) if (f.facts.writes.has(n)) pending.push({ frame: f, k });
      }
      if (bind.size > 0) {
        subscripts[k] = substitute(sub, bind);
        substituted = true;
      }
    });
    // Counts for the time-loop test of every enclosing loop this access sits in a nested loop of.
    for (let d = 0; d < this.stack.length - 1; d++) {
      const f = this.stack[d];
      const uses = !!f.loop.variable && syms.has(f.loop.variable);
      f.nested.all++;
      if (uses) f.nested.uses++;
      if (this.offload) {
        f.nested.device++;
        if (uses) f.nested.deviceUses++;
      }
    }
    if (!substituted && pending.length === 0) return a;
    const out: ArrayAccess = {
      ...a,
      subscripts,
      subscriptValues: values,
      subscriptText: values.map((v, k) => (v === a.subscriptValues[k] ? a.subscriptText[k] : printValue(v))),
    };
    for (const p of pending) p.frame.pending.push({ access: out, k: p.k });
    return out;
  }
}

/**
 * Substitutes locals into a subscript. Subscripts are almost always affine in the locals
 * (`c - 1`, `ind + ny`), so the value is added in directly, which is much cheaper than the
 * general substitution that rebuilds every term.
 */
function substitute(sub: S.Expr, bind: Map<string, Local>): S.Expr {
  const parts = S.affine(sub, [...bind.keys()]);
  if (!parts) return S.substitute(sub, new Map([...bind].map(([k, v]) => [k, v.sym])));
  const terms = [parts.rest];
  for (const [name, coeff] of parts.coeffs) {
    const c = S.constValue(coeff);
    if (c === 0) continue;
    const value = bind.get(name)!.sym;
    terms.push(c === 1 ? value : S.mul(coeff, value));
  }
  return S.add(...terms);
}

function hasCall(e: VExpr): boolean {
  switch (e.kind) {
    case 'call': return true;
    case 'bin': return hasCall(e.left) || hasCall(e.right);
    case 'unary':
    case 'cast': return hasCall(e.operand);
    default: return false;
  }
}

