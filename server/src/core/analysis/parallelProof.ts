/**
 * Is a loop nest that runs on the host provably parallel if it were offloaded?
 *
 * The race analysis (`races.ts`) looks for dependences it can *show* in loops a directive
 * already runs in parallel, and stays silent when it cannot decide. A port needs the opposite
 * guarantee: a nest is called parallel only when every pair of references that could conflict
 * has been *disproved*. So the tests here are the same dependence tests (Wolfe, *High
 * Performance Compilers for Parallel Computing*, 1996, ch. 5; Allen & Kennedy, *Optimizing
 * Compilers for Modern Architectures*, 2001, ch. 3), applied the other way round:
 *
 *  - subscripts are tested dimension by dimension (a dependence needs every dimension equal,
 *    so one dimension without a solution disproves it; Allen & Kennedy §3.2, separable tests);
 *  - a dimension with the same coefficients in both references (uniform, the stencil case) is
 *    solved for the distance: a carried dependence needs a non-zero distance in the carrying
 *    loop that the trip count allows (strong SIV, Allen & Kennedy §3.3.2), and the inner loops
 *    can make up at most Σ|c|·(trip - 1) (Banerjee's bounds); with numbers, by an exact bounded
 *    search (`distances.ts`);
 *  - other dimensions are disproved by the GCD test or by Banerjee's bounds with numbers only;
 *  - a subscript that is not affine in the loop variables, or that uses a scalar the nest
 *    assigns, is irregular: an array written that way is never proven.
 *
 * Scalars written in the nest are classified: accumulated with + * max min only (reduction),
 * written before every read in an iteration (private), otherwise a value carried from one
 * iteration to the next (not parallel). Calls other than pure math, I/O and early exits make
 * the nest stay on the host. Nothing here reads syntax; it works on the program model.
 */
import * as S from '../symbolic';
import type { ArrayAccess, Declaration, LoopStmt, ProgramModel, Stmt, VExpr } from '../model/program';
import { accessesOfStatement, childStatements, pathTo, printValue, walkStatements } from '../model/values';
import { MATH_FLOPS, mathName } from '../cost/flops';
import { unclamp } from '../cost/clamps';
import { Scope } from '../cost/scope';
import { rangeWithin } from '../ranges';
import { callSiteBindings, procedureBindings } from './bindings';
import { feasible, provablyNonNegative } from './distances';
import type { LoopNest } from './nests';
import { accumulation, usage } from './privates';

export interface ParallelProof {
  /** True when no iteration of the root loop can touch what another iteration touches (except reductions and privates). */
  parallel: boolean;
  /** Perfectly nested, rectangular loops from the root that carry no dependence (0 when not parallel). */
  collapse: number;
  /** Scalars accumulated with one operator and read nowhere else in the nest. */
  reductions: { op: string; variable: string }[];
  /** Scalars declared outside the nest that every iteration writes before it reads them. */
  privates: string[];
  /**
   * Why the nest is not parallel (each a sentence fragment that names the line); for a parallel
   * nest, the assumptions the proof rests on and why the collapse stops where it does.
   */
  reasons: string[];
}

export interface ProveOptions {
  /** Size bindings of the nest's procedure; default: the file's and the procedure's constants. */
  bindings?: ReadonlyMap<string, S.Expr>;
}

/** Intrinsics and library functions that only compute a value from their arguments. */
const PURE = new Set([
  'abs', 'iabs', 'dabs', 'cabs', 'max', 'min', 'max0', 'min0', 'amax1', 'amin1', 'dmax1', 'dmin1', 'mod', 'modulo',
  'real', 'dble', 'float', 'int', 'nint', 'anint', 'aint', 'sign', 'dsign', 'merge', 'dsqrt', 'dexp', 'dlog', 'dsin', 'dcos',
  'ceiling', 'size', 'lbound', 'ubound', 'huge', 'tiny', 'epsilon', 'kind', 'cmplx', 'conjg', 'aimag', 'sqrt', 'exp', 'log',
  'fmin', 'fmax', 'fabs', 'labs', 'llabs', 'sizeof', 'isnan', 'isinf', 'isfinite', 'signbit',
]);
export const IO_CALL = /^(printf|fprintf|puts|fputs|putchar|fputc|fwrite|fread|scanf|fscanf|sscanf|sprintf|snprintf|perror|fflush|fopen|fclose|getchar|getc|fgets|malloc|calloc|realloc|free|exit|abort|_exit|rand|srand|system|time|clock|omp_get_thread_num|omp_get_wtime|mpi_\w+)$/i;
export const EARLY_EXIT = /^\s*(break|return|goto|go\s*to|exit|stop|error\s+stop|longjmp|throw)\b/i;
export const IO_STMT = /^\s*(write|print|read|open|close|inquire|rewind|backspace|flush|endfile|call\s+(exit|abort))\b/i;

export function isPureCall(name: string): boolean {
  const n = mathName(name);
  return n in MATH_FLOPS || PURE.has(n);
}

/**
 * The proof for one nest. `nest` is a `LoopNest` of `scanLoops` (`FileAnalysis.nests[k].nest`),
 * `model` the model it was found in (`FileAnalysis.model`).
 */
export function proveParallel(nest: LoopNest, model: ProgramModel, options: ProveOptions = {}): ParallelProof {
  return new Prover(nest, model, options.bindings ?? procedureBindings(model, nest.procedure, new Map(), callSiteBindings(model))).prove();
}

interface Dim {
  coeffs: Map<string, S.Expr>;
  rest: S.Expr;
}

interface Ref {
  access: ArrayAccess;
  /** Per-dimension affine forms; undefined when some subscript is irregular. */
  dims?: Dim[];
  /** Loops of the nest around the reference, outermost first. */
  loops: LoopStmt[];
  /** Read through a clamp (`u[min(i+1,n-1)]`): the neighbour was tested, not the edge element. */
  clamped: boolean;
}

const line = (s: { range: { start: { line: number } } }): number => s.range.start.line + 1;

class Prover {
  private readonly reasons: string[] = [];
  private readonly notes: string[] = [];
  private readonly scope: Scope;
  private readonly fortran: boolean;
  private readonly loops: LoopStmt[] = [];
  private readonly loopVars = new Set<string>();
  /** Scalars the nest assigns (their values change within the nest). */
  private readonly assigned = new Set<string>();
  private readonly outer: Map<string, S.Expr>;

  constructor(private readonly nest: LoopNest, private readonly model: ProgramModel, bindings: ReadonlyMap<string, S.Expr>) {
    this.scope = new Scope(model, nest.procedure);
    this.fortran = model.language === 'fortran';
    walkStatements([nest.root], (s) => {
      if (s.kind === 'loop') {
        this.loops.push(s);
        if (s.variable) this.loopVars.add(s.variable);
      }
      if (s.kind === 'assign' && s.target.kind === 'var') this.assigned.add(s.target.name);
    });
    this.outer = new Map([...bindings].filter(([k]) => !this.loopVars.has(k) && !this.assigned.has(k)));
  }

  prove(): ParallelProof {
    const root = this.nest.root;
    if (!root.variable || !root.tripCount || root.condition !== undefined || root.counter) {
      this.reasons.push(`the loop at line ${line(root)} is not a counted loop (a while loop or a header the analysis cannot read)`);
    }
    this.structure();
    const scalars = this.scalars();
    const refs = this.references();
    let collapse = 0;
    if (this.reasons.length === 0) {
      const { chain, stop } = this.perfectChain();
      for (let k = 0; k < chain.length; k++) {
        const carried = this.carriedAt(refs, chain, k);
        if (carried) {
          if (k === 0) this.reasons.push(carried);
          else this.notes.push(`the collapse stops above the \`${chain[k].variable}\` loop, which runs sequentially inside each iteration: ${carried}`);
          break;
        }
        collapse = k + 1;
      }
      if (collapse === chain.length && stop) this.notes.push(stop);
    }
    const parallel = this.reasons.length === 0;
    if (parallel && !this.fortran) {
      // C and C++: the variable of a loop that no directive is associated with is not
      // predetermined private (OpenACC 3.3 §2.6.1; OpenMP 5.2 §5.1.1 makes only the associated
      // loops' variables private in C), so an inner loop variable declared outside the nest
      // needs a private clause once the nest runs in parallel.
      const associated = new Set<LoopStmt>(this.perfectChain().chain.slice(0, collapse));
      for (const l of this.loops) {
        if (!l.variable || associated.has(l) || l.implied || declaresVariable(l) || this.declaredInBody(l.variable)) continue;
        if (!scalars.privates.includes(l.variable)) scalars.privates.push(l.variable);
      }
    }
    return {
      parallel,
      collapse: parallel ? collapse : 0,
      reductions: parallel ? scalars.reductions : [],
      privates: parallel ? scalars.privates : [],
      reasons: parallel ? this.notes : this.reasons,
    };
  }

  // ---- what the nest does besides arithmetic ---------------------------------------------

  private structure(): void {
    const calls = new Set<string>();
    walkStatements([this.nest.root], (s) => {
      if (s.kind === 'call') {
        const name = s.name;
        if (IO_CALL.test(mathName(name)) || /^(exit|abort)$/i.test(name)) this.reasons.push(`it does I/O or leaves the program (\`${name}\` at line ${line(s)})`);
        else if (!isPureCall(name)) calls.add(`\`${name}\` (line ${line(s)})`);
      }
      for (const v of valuesOf(s)) forEachCall(v, (c) => {
        if (isPureCall(c.name)) return;
        if (IO_CALL.test(mathName(c.name))) this.reasons.push(`it does I/O (\`${c.name}\` at line ${line(s)})`);
        else calls.add(`\`${c.name}\` (line ${line(s)})`);
      });
      if (s.kind === 'other') {
        if (EARLY_EXIT.test(s.text)) this.reasons.push(`it can leave the loop early (\`${s.text.trim().split(/\s+/)[0].replace(/;$/, '')}\` at line ${line(s)})`);
        else if (IO_STMT.test(s.text)) this.reasons.push(`it does I/O (\`${s.text.trim().split(/[\s(]/)[0]}\` at line ${line(s)})`);
      }
      if (s.kind === 'directive') this.reasons.push(`it holds a directive (line ${line(s)})`);
      if (s !== this.nest.root && s.kind === 'loop' && !s.variable) {
        this.reasons.push(`it holds a loop without a counted header (line ${line(s)})`);
      }
    });
    if (calls.size > 0) {
      const list = [...calls];
      this.reasons.push(`it calls ${list.join(', ')}, which the proof cannot see into (only pure math functions are allowed)`);
    }
  }

  // ---- scalars --------------------------------------------------------------------------

  private same(a: string, b: string): boolean {
    return this.fortran ? a.toLowerCase() === b.toLowerCase() : a === b;
  }

  /**
   * Declared inside the root loop by a declaration of its own (the front end also records each
   * `for` variable as a local with the loop's range, which is no declaration in the body).
   */
  private declaredInBody(name: string): boolean {
    return this.nest.procedure.locals.some((l) => this.same(l.name, name) && rangeWithin(l.range, this.nest.root.range)
      && !this.loops.some((x) => x.variable === name && x.range.start.line === l.range.start.line && x.range.start.col === l.range.start.col));
  }

  private declaredWithin(name: string, s: Stmt): boolean {
    return this.nest.procedure.locals.some((l) => this.same(l.name, name) && rangeWithin(l.range, s.range));
  }

  private scalars(): { reductions: { op: string; variable: string }[]; privates: string[] } {
    const reductions: { op: string; variable: string }[] = [];
    const privates: string[] = [];
    const root = this.nest.root;
    for (const name of this.assigned) {
      if (this.loopVars.has(name)) continue;
      if (!/^[A-Za-z_]\w*$/.test(name)) {
        const s = this.firstAssign(name);
        this.reasons.push(`it writes \`${name}\`${s ? ` (line ${line(s)})` : ''}, storage reached through a member or a pointer that the proof does not follow`);
        continue;
      }
      const decl = this.scope.lookup(name);
      if (decl && !isScalar(decl)) continue;
      // C/C++: a variable declared inside the loop body is a new object in every iteration.
      if (this.declaredWithin(name, root) && !this.isLoopHeaderDecl(name)) continue;
      const op = this.reductionOp(name);
      if (op) {
        reductions.push({ op, variable: name });
        continue;
      }
      const use = usage(root.body, name, this.fortran);
      if (use.exposed) {
        const first = this.firstAssign(name);
        this.reasons.push(`the scalar \`${name}\` is read before it is written in an iteration${first ? ` (assigned at line ${line(first)})` : ''}, so it carries a value from one iteration to the next`);
        continue;
      }
      if (this.readAfter(name)) {
        this.reasons.push(`the scalar \`${name}\` is private to each iteration, but its value after the loop is read (it would need \`lastprivate\`)`);
        continue;
      }
      privates.push(name);
    }
    return { reductions, privates };
  }

  /** A C `for (int i …)` declaration of the nest's own loop variable. */
  private isLoopHeaderDecl(name: string): boolean {
    return this.loopVars.has(name);
  }

  private firstAssign(name: string): Stmt | undefined {
    let found: Stmt | undefined;
    walkStatements([this.nest.root], (s) => {
      if (!found && s.kind === 'assign' && s.target.kind === 'var' && this.same(s.target.name, name)) found = s;
      return !found;
    });
    return found;
  }

  /**
   * The reduction operator when every assignment to `name` in the nest accumulates with one
   * operator (`s += x`, `s = s * x`, `m = max(m, x)`, `if (x > m) m = x`) and nothing else in
   * the nest reads it. + and - are both `+`.
   */
  private reductionOp(name: string): string | undefined {
    const ops = new Set<string>();
    let otherReads = false;
    let bad = false;
    const handled = new Set<Stmt>();
    walkStatements([this.nest.root], (s) => {
      if (handled.has(s)) return;
      if (s.kind === 'if' && s.otherwise.length === 0 && s.then.length === 1) {
        const op = this.ifMinMax(name, s);
        if (op) {
          ops.add(op);
          handled.add(s.then[0]);
          return false;
        }
      }
      if (s.kind === 'assign' && s.target.kind === 'var' && this.same(s.target.name, name)) {
        const op = accumulation(name, s.op, s.value);
        if (!op) { bad = true; return; }
        // The value may read the variable only as the operand it accumulates into.
        const reads = countReads(s.value, name, this.fortran);
        if (reads !== (s.op === '=' ? 1 : 0)) bad = true;
        ops.add(op);
        if (s.target.kind === 'var' && s.op === '=' && s.value.kind === 'bin' && s.value.op === '-' && !(s.value.left.kind === 'var' && this.same(s.value.left.name, name))) bad = true;
        return;
      }
      for (const v of valuesOf(s)) if (countReads(v, name, this.fortran) > 0) otherReads = true;
      if (s.kind === 'assign' && s.target.kind === 'index' && s.target.access.subscriptValues.some((v) => countReads(v, name, this.fortran) > 0)) otherReads = true;
      if (s.kind === 'loop') for (const e of [s.lower, s.upper, s.step]) if (e && S.freeSymbols(e).some((x) => this.same(x, name))) otherReads = true;
    });
    if (bad || otherReads || ops.size !== 1) return undefined;
    return [...ops][0];
  }

  /** `if (x > m) m = x` and its mirror forms: max or min into `name`. */
  private ifMinMax(name: string, s: Stmt & { kind: 'if' }): string | undefined {
    const a = s.then[0];
    const c = s.condition;
    if (a.kind !== 'assign' || a.target.kind !== 'var' || !this.same(a.target.name, name) || a.op !== '=') return undefined;
    if (c.kind !== 'bin' || !['>', '>=', '<', '<=', '.gt.', '.ge.', '.lt.', '.le.'].includes(c.op.toLowerCase())) return undefined;
    const isName = (e: VExpr): boolean => e.kind === 'var' && this.same(e.name, name);
    const value = printValue(a.value);
    const greater = ['>', '>=', '.gt.', '.ge.'].includes(c.op.toLowerCase());
    if (isName(c.right) && printValue(c.left) === value && countReads(c.left, name, this.fortran) === 0) return greater ? 'max' : 'min';
    if (isName(c.left) && printValue(c.right) === value && countReads(c.right, name, this.fortran) === 0) return greater ? 'min' : 'max';
    return undefined;
  }

  /**
   * True when code after the nest may read the value the last iteration left: the statements
   * that follow it at each level up to the procedure, and the whole body of each loop around it
   * (its next pass).
   */
  private readAfter(name: string): boolean {
    const after: Stmt[] = [];
    const path = pathTo(this.nest.procedure.body, this.nest.root);
    const lists: (readonly Stmt[])[] = [this.nest.procedure.body, ...path.map(childStatements)];
    const holders: Stmt[] = [...path];
    for (let k = lists.length - 1; k >= 0; k--) {
      const list = lists[k];
      const child = k === lists.length - 1 ? this.nest.root : holders[k];
      const at = list.indexOf(child);
      if (at >= 0) after.push(...list.slice(at + 1));
      const holder = holders[k - 1];
      if (holder && holder.kind === 'loop') after.push(...holder.body);
    }
    return usage(after, name, this.fortran).exposed;
  }

  // ---- array references ---------------------------------------------------------------------

  private references(): Map<string, Ref[]> {
    const refs = new Map<string, Ref[]>();
    const vars = [...this.loopVars];
    const visit = (stmts: readonly Stmt[], around: LoopStmt[]): void => {
      for (const s of stmts) {
        for (const a of accessesOfStatement(s)) {
          if (a.subscripts.length === 0) continue;
          const decl = this.scope.lookup(a.array);
          if (decl && !decl.isArray && !decl.isPointer && !decl.container) continue;
          const key = this.fortran ? a.array.toLowerCase() : a.array;
          let dims: Dim[] | undefined = [];
          let clamped = false;
          for (const sub of a.subscripts) {
            if (!sub) { dims = undefined; break; }
            const bound = S.substitute(sub, this.outer);
            // A subscript that uses a scalar the nest assigns changes with it: irregular.
            if (S.freeSymbols(bound).some((x) => this.assigned.has(x) && !this.loopVars.has(x))) { dims = undefined; break; }
            const un = a.isRead && !a.isWrite ? unclamp(bound, vars) : undefined;
            if (un) clamped = true;
            const parts = S.affine(un ?? bound, vars);
            if (!parts) { dims = undefined; break; }
            dims.push(parts);
          }
          refs.set(key, [...(refs.get(key) ?? []), { access: a, dims, loops: around, clamped }]);
        }
        if (s.kind === 'loop') visit(s.body, [...around, s]);
        else visit(childStatements(s), around);
      }
    };
    visit([this.nest.root], []);
    // Arrays the nest writes through an irregular subscript: no test can disprove a conflict.
    for (const [array, list] of refs) {
      const w = list.find((r) => r.access.isWrite && !r.dims);
      if (w) this.reasons.push(`it writes \`${this.refText(array, w.access)}\` (line ${line(w.access)}) through a subscript that is not affine in the loop variables, so no dependence test can clear it`);
    }
    return refs;
  }

  private refText(array: string, a: ArrayAccess): string {
    return this.fortran ? `${array}(${a.subscriptText.join(', ')})` : `${array}[${a.subscriptText.join('][')}]`;
  }

  /** The root and the loops perfectly nested in it with rectangular counted headers. */
  private perfectChain(): { chain: LoopStmt[]; stop?: string } {
    const chain = [this.nest.root];
    const vars = new Set<string>(this.nest.root.variable ? [this.nest.root.variable] : []);
    let cur = this.nest.root;
    for (;;) {
      const body = cur.body.filter((s) => !(s.kind === 'other' && s.text.trim().replace(/;$/, '') === ''));
      if (body.length !== 1 || body[0].kind !== 'loop') {
        const stop = directLoopsIn(cur.body) ? `the collapse stops at the \`${cur.variable}\` loop: the loops inside it are not perfectly nested (statements between them; OpenACC 3.3 §2.9.1 collapses tightly nested loops only)` : undefined;
        return { chain, stop };
      }
      const inner = body[0];
      const bounds = [inner.lower, inner.upper, inner.step].filter((e): e is S.Expr => !!e);
      if (!inner.variable || !inner.tripCount || inner.condition !== undefined || inner.implied !== cur.implied) return { chain };
      if (inner.triangular || bounds.some((b) => S.freeSymbols(b).some((x) => vars.has(x)))) {
        return { chain, stop: `the collapse stops at the \`${cur.variable}\` loop: the bounds of the \`${inner.variable}\` loop depend on an outer loop variable (OpenACC 3.3 §2.9.1 needs trip counts computable and invariant in all the collapsed loops)` };
      }
      chain.push(inner);
      vars.add(inner.variable);
      cur = inner;
    }
  }

  /** Why a dependence may be carried by chain[k] (outer chain loops at the same iteration), or undefined when none can be. */
  private carriedAt(refs: Map<string, Ref[]>, chain: LoopStmt[], k: number): string | undefined {
    for (const [array, list] of refs) {
      const writes = list.filter((r) => r.access.isWrite);
      if (writes.length === 0) continue;
      for (const w of writes) {
        for (const x of list) {
          if (!x.access.isWrite && !x.access.isRead) continue;
          if (this.mayCarry(w, x, chain[k], k)) {
            const v = chain[k].variable;
            const wText = this.refText(array, w.access);
            const xText = this.refText(array, x.access);
            const kind = x === w ? `every iteration of \`${v}\` may write the same element \`${wText}\` (line ${line(w.access)})`
              : x.access.isWrite && !x.access.isRead ? `\`${wText}\` (line ${line(w.access)}) and \`${xText}\` (line ${line(x.access)}) may write the same element in different iterations of \`${v}\``
              : `\`${xText}\` (line ${line(x.access)}) may read an element that another iteration of \`${v}\` writes as \`${wText}\` (line ${line(w.access)})`;
            return `${kind}: a loop-carried dependence the tests cannot disprove${x.clamped ? ' (the read is clamped at the edge)' : ''}`;
          }
        }
      }
    }
    return undefined;
  }

  /** False only when no pair of iterations differing first in `carrier` makes `w` and `x` touch one element. */
  private mayCarry(w: Ref, x: Ref, carrier: LoopStmt, k: number): boolean {
    if (!w.dims || !x.dims || w.dims.length !== x.dims.length) return true;
    // A clamped read reads the edge element at the edge: a written array read that way is not proven.
    if (x.clamped) return true;
    const common: LoopStmt[] = [];
    for (let q = 0; q < Math.min(w.loops.length, x.loops.length) && w.loops[q] === x.loops[q]; q++) common.push(w.loops[q]);
    const at = common.indexOf(carrier);
    if (at < 0 || at !== k) return true;
    // A loop that runs once carries nothing.
    const trips = this.value(carrier.tripCount!);
    if (trips !== undefined && trips <= 1) return false;
    for (let d = 0; d < w.dims.length; d++) {
      if (this.dimIndependent(w.dims[d], x.dims[d], at, common, w.loops.slice(common.length), x.loops.slice(common.length))) return false;
    }
    return true;
  }

  private value(e: S.Expr): number | undefined {
    const v = S.constValue(S.substitute(e, this.outer));
    return v !== undefined && Number.isSafeInteger(v) ? v : undefined;
  }

  /**
   * True when the subscripts of one dimension cannot be equal for two iterations that share the
   * loops outside `common[at]` and differ in it.
   */
  private dimIndependent(w: Dim, x: Dim, at: number, common: LoopStmt[], wOnly: LoopStmt[], xOnly: LoopStmt[]): boolean {
    const coef = (d: Dim, l: LoopStmt): S.Expr => (l.variable ? d.coeffs.get(l.variable) : undefined) ?? S.num(0);
    const zero = (e: S.Expr): boolean => S.constValue(e) === 0;
    const t = S.sub(w.rest, x.rest);
    const uniform = common.every((l) => S.equals(coef(w, l), coef(x, l))) && wOnly.every((l) => zero(coef(w, l))) && xOnly.every((l) => zero(coef(x, l)));
    if (uniform) {
      // Σ c_q·step_q·e_q = t over the carrier (e ≠ 0) and the common loops inside it.
      const terms: { c: S.Expr; u?: S.Expr }[] = [];
      for (let q = at; q < common.length; q++) {
        const l = common[q];
        const c = coef(w, l);
        if (zero(c)) { terms.push({ c }); continue; }
        if (!l.step || !S.isConst(l.step)) return false;
        const u = l.tripCount && !l.triangular ? S.sub(S.substitute(l.tripCount, this.outer), S.num(1)) : undefined;
        terms.push({ c: S.mul(c, l.step), u });
      }
      return uniformIndependent(terms, t);
    }
    return this.numericIndependent(w, x, at, common, wOnly, xOnly, t);
  }

  /**
   * The GCD test and Banerjee's bounds over the whole equation a·I + a0 = b·I' + b0 with numbers
   * (the outer loops shared, every other loop free in its bounds); the direction is ignored,
   * which only makes the test weaker, never wrong.
   */
  private numericIndependent(w: Dim, x: Dim, at: number, common: LoopStmt[], wOnly: LoopStmt[], xOnly: LoopStmt[], t: S.Expr): boolean {
    const tv = this.value(t);
    if (tv === undefined) return false;
    const coef = (d: Dim, l: LoopStmt): number | undefined => this.value((l.variable ? d.coeffs.get(l.variable) : undefined) ?? S.num(0));
    const vars: { c: number; l: LoopStmt }[] = [];
    for (let q = 0; q < common.length; q++) {
      const a = coef(w, common[q]);
      const b = coef(x, common[q]);
      if (a === undefined || b === undefined) return false;
      if (q < at) vars.push({ c: a - b, l: common[q] });
      else vars.push({ c: a, l: common[q] }, { c: -b, l: common[q] });
    }
    for (const l of wOnly) { const a = coef(w, l); if (a === undefined) return false; vars.push({ c: a, l }); }
    for (const l of xOnly) { const b = coef(x, l); if (b === undefined) return false; vars.push({ c: -b, l }); }
    const used = vars.filter((v) => v.c !== 0);
    // a·I - b·I' = x.rest - w.rest = -t
    const target = -tv;
    const g = used.reduce((acc, v) => gcd(acc, Math.abs(v.c)), 0);
    if (g === 0) return target !== 0;
    if (target % g !== 0) return true;
    let lo = 0;
    let hi = 0;
    for (const v of used) {
      const l = v.l;
      if (!l.lower || !l.upper || l.triangular) return false;
      const a = this.value(l.lower);
      const b = this.value(l.upper);
      if (a === undefined || b === undefined) return false;
      lo += Math.min(v.c * a, v.c * b);
      hi += Math.max(v.c * a, v.c * b);
    }
    return target < lo || target > hi;
  }
}

/**
 * Independence of a uniform dimension: Σ c_q e_q = t has no solution with e_0 ≠ 0 and
 * |e_q| <= u_q. Exact by search when every figure is a number; otherwise by sufficient
 * symbolic conditions (each size at least 1).
 */
function uniformIndependent(terms: { c: S.Expr; u?: S.Expr }[], t: S.Expr): boolean {
  const [carrier, ...inner] = terms;
  const zero = (e: S.Expr): boolean => S.constValue(e) === 0;
  const active = inner.filter((x) => !zero(x.c));
  const num = (e: S.Expr | undefined): number | undefined => {
    const v = e ? S.constValue(e) : undefined;
    return v !== undefined && Number.isSafeInteger(v) ? v : undefined;
  };
  // Numbers: exact bounded search, carrier distances 1, -1, 2, -2, … up to its trip count.
  const c0 = num(carrier.c);
  const u0 = num(carrier.u);
  const tv = num(t);
  const cs = active.map((x) => num(x.c));
  const us = active.map((x) => num(x.u));
  if (c0 !== undefined && tv !== undefined && cs.every((x) => x !== undefined) && us.every((x) => x !== undefined)) {
    if (u0 !== undefined && u0 < 1) return true;
    const vars = active.map((_, q) => ({ c: cs[q]!, u: us[q]! }));
    if (c0 === 0) {
      // Any carrier distance: a dependence whenever the inner loops can make t.
      const budget = { left: 20_000 };
      const sol = feasible(vars, tv, budget);
      return !sol && budget.left > 0;
    }
    const reach = vars.reduce((r, v) => r + Math.abs(v.c) * v.u, 0);
    const limit = u0 ?? Math.ceil((Math.abs(tv) + reach) / Math.abs(c0));
    const budget = { left: 20_000 };
    for (let d = 1; d <= limit; d++) {
      for (const e of [d, -d]) {
        const rest = tv - c0 * e;
        if (Math.abs(rest) > reach) continue;
        if (feasible(vars, rest, budget)) return false;
        if (budget.left <= 0) return false;
      }
    }
    return true;
  }
  // Symbols: GCD of constant coefficients against a constant difference.
  const all = [carrier, ...active].map((x) => num(x.c));
  if (tv !== undefined && all.every((x) => x !== undefined)) {
    const g = all.reduce((acc, c) => gcd(acc!, Math.abs(c!)), 0)!;
    if (g === 0) return tv !== 0;
    if (tv % g !== 0) return true;
  }
  const abs = (e: S.Expr): S.Expr | undefined => (provablyNonNegative(e) ? e : provablyNonNegative(S.neg(e)) ? S.neg(e) : undefined);
  const at = abs(t);
  if (!at) return false;
  // The inner loops' reach Σ|c_q|·u_q.
  let reach: S.Expr = S.num(0);
  for (const x of active) {
    const ac = abs(x.c);
    if (!ac || !x.u) return false;
    reach = S.add(reach, S.mul(ac, x.u));
  }
  if (zero(carrier.c)) {
    // The carrier does not appear: independent only when the rest can never make t.
    return provablyNonNegative(S.sub(S.sub(at, reach), S.num(1)));
  }
  const ac0 = abs(carrier.c);
  if (!ac0) return false;
  // Same iteration only: |c_0|·1 > |t| + reach.
  if (provablyNonNegative(S.sub(S.sub(S.sub(ac0, at), reach), S.num(1)))) return true;
  // Beyond the carrier's trip count: |t| > |c_0|·u_0 + reach.
  if (carrier.u && provablyNonNegative(S.sub(S.sub(S.sub(at, S.mul(ac0, carrier.u)), reach), S.num(1)))) return true;
  // Only the carrier: e_0 = t / c_0 must be a non-zero integer.
  if (active.length === 0) {
    if (zero(t)) return true;
  }
  return false;
}

function gcd(a: number, b: number): number {
  return b === 0 ? a : gcd(b, a % b);
}

function isScalar(d: Declaration): boolean {
  if (d.container || d.dims.length > 0) return false;
  return !d.isArray || d.isPointer;
}

function valuesOf(s: Stmt): VExpr[] {
  switch (s.kind) {
    case 'assign': return [s.value, ...(s.target.kind === 'index' ? s.target.access.subscriptValues : [])];
    case 'call': return s.args;
    case 'if': return [s.condition];
    case 'other': return s.values;
    case 'loop': return s.condition ? [s.condition] : [];
    default: return [];
  }
}

function forEachCall(e: VExpr, f: (c: VExpr & { kind: 'call' }) => void): void {
  switch (e.kind) {
    case 'call': f(e); e.args.forEach((a) => forEachCall(a, f)); return;
    case 'bin': forEachCall(e.left, f); forEachCall(e.right, f); return;
    case 'unary': case 'cast': forEachCall(e.operand, f); return;
    case 'cond': forEachCall(e.test, f); forEachCall(e.then, f); forEachCall(e.else, f); return;
    case 'index': e.access.subscriptValues.forEach((v) => forEachCall(v, f)); return;
    default: return;
  }
}

/** How many times a value expression reads the variable `name`. */
function countReads(e: VExpr, name: string, fortran: boolean): number {
  const same = (a: string): boolean => (fortran ? a.toLowerCase() === name.toLowerCase() : a === name);
  switch (e.kind) {
    case 'var': return same(e.name) ? 1 : 0;
    case 'opaque': return (e.text.match(/[A-Za-z_]\w*/g) ?? []).filter(same).length;
    case 'bin': return countReads(e.left, name, fortran) + countReads(e.right, name, fortran);
    case 'unary': case 'cast': return countReads(e.operand, name, fortran);
    case 'call': return e.args.reduce((n, a) => n + countReads(a, name, fortran), 0);
    case 'cond': return countReads(e.test, name, fortran) + countReads(e.then, name, fortran) + countReads(e.else, name, fortran);
    case 'index': return e.access.subscriptValues.reduce((n, a) => n + countReads(a, name, fortran), 0);
    default: return 0;
  }
}

/** A C `for` header that declares its variable (`for (int i = 0; …)`, `for (std::size_t i = 0; …)`). */
function declaresVariable(l: LoopStmt): boolean {
  const m = /^\s*for\s*\(\s*([^;=]*?)\s*=/.exec(l.header);
  return !!m && /[\w>*&]\s+[*&]*\s*[A-Za-z_]\w*$/.test(m[1]);
}

function directLoopsIn(stmts: readonly Stmt[]): boolean {
  return stmts.some((s) => s.kind === 'loop' || directLoopsIn(childStatements(s)));
}

