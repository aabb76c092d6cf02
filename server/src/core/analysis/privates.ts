/**
 * Data-sharing races in offloaded loops: scalars that iterations share when they should each have
 * their own (`shared-scalar-write`), and local arrays used as per-iteration scratch without a
 * `private` clause (`missing-private`).
 *
 * Which copy an iteration writes, by the standards:
 *  - OpenMP 5.2 §5.1.1 (variables referenced in a construct): a scalar referenced in a `target`
 *    construct and not mapped is firstprivate to the target region; `teams` and `parallel` make
 *    it shared by their teams and threads. Only the variables of the loops a worksharing,
 *    `distribute`, `loop` or `simd` directive is associated with are predetermined private (in
 *    Fortran, every sequential `do` variable inside the construct too). So a scalar written in
 *    `target teams distribute parallel for` is one variable for all the threads that run it.
 *  - OpenACC 3.3 §2.6.2: a scalar referenced in a `parallel` construct is firstprivate, one copy
 *    per gang; the workers and vector lanes of a gang share that copy. A loop partitioned over
 *    workers or vector lanes (or with no level clause, where the implementation chooses, usually
 *    gang and vector) therefore races on it; a gang-only loop does not (each gang runs its
 *    iterations one after the other on its own copy). §2.6.1: the variable of a loop associated
 *    with a `loop` directive is private, and so is every Fortran `do` variable in the construct.
 *    A `private`, `firstprivate` or `reduction` clause on a combined construct applies to the
 *    loop (§2.11). In `kernels` the implementation decides which loops run in parallel, so only
 *    loops marked `independent` are checked; `auto` and `seq` loops and `serial` are not either.
 *  - An OpenMP `simd`-only loop (no `for`/`do`/`distribute`/`loop` word) splits one thread's
 *    iterations over vector lanes; compilers expand scratch scalars per lane, so for scalars the
 *    copy that counts is the thread's, and such loops are not taken as racing.
 *
 * A scalar is private to the loop L* that races (the innermost such loop around the write) when
 * a private/firstprivate/lastprivate/reduction/linear clause names it on L*'s directive or a
 * directive inside it, when it is declared inside L*, or when it is the variable of a loop of the
 * nest. A clause on a loop directive *outside* L* gives one copy per gang or team, which the
 * threads of L* still share, so it does not count; a clause on a compute construct that is not
 * itself a loop directive (`acc parallel private(x)` around the loops) is taken as privatising,
 * to stay on the safe side of false errors.
 *
 * Not reported: an accumulation (`s += …`), which is `missing-reduction`; loops on the host
 * (`omp parallel for` without `target`): the contract covers offloaded loops, and the other race
 * checks (`loop-carried-dependence`, `missing-reduction`) are offload-only as well. C loop
 * variables of inner loops are taken as private, since the model does not tell `for (int j …`
 * from `for (j …` with `j` declared outside.
 */
import * as S from '../symbolic';
import type { Declaration, LoopStmt, ProgramModel, Stmt, VExpr } from '../model/program';
import { clausesNamed, collapseCount, isLoopDirective } from '../model/directives';
import { childStatements, pathTo, printValue, toSymbolic, walkStatements } from '../model/values';
import { Scope } from '../cost/scope';
import type { Directive, Finding, Fix } from '../types';
import { rangeWithin } from '../ranges';
import type { LoopNest } from './nests';
import { provablyNonNegative } from './distances';

/** Clauses that give each thread (or iteration) its own copy of a variable. */
const PRIVATISING = ['private', 'firstprivate', 'lastprivate', 'reduction', 'linear'];

export interface PrivateFindings {
  findings: Finding[];
  /** Arrays reported as missing-private in the nest: the dependence test leaves them to that finding. */
  scratchArrays: Set<string>;
  /**
   * True when each iteration of `loop` has its own copy of the array (a privatising clause on
   * the loop's directive, or a declaration inside the loop): no dependence is carried by `loop`.
   */
  privateIn: (array: string, loop: LoopStmt) => boolean;
}

/** Both data-sharing checks over one offloaded nest. */
export function privateFindings(model: ProgramModel, nest: LoopNest): PrivateFindings {
  if (!nest.offload) return { findings: [], scratchArrays: new Set(), privateIn: () => false };
  const ctx = new NestContext(model, nest);
  const shared = ctx.sharedScalars();
  const findings = [...shared, ...ctx.carriedScalars(new Set(shared.map((f) => f.array ?? '')))];
  const arrays = ctx.scratchArrays();
  findings.push(...arrays.findings);
  return { findings, scratchArrays: arrays.names, privateIn: (a, l) => ctx.privateIn(a, l) };
}

/** The directive that distributes a loop: its own, or the one whose collapse covers it. */
interface Governed {
  directive: Directive;
  /** The loop that carries the directive. */
  head: LoopStmt;
}

class NestContext {
  private readonly scope: Scope;
  private readonly governed = new Map<LoopStmt, Governed>();
  private readonly loopVars = new Set<string>();
  /** Directives above the nest root (the compute construct and any construct between). */
  private readonly above: Directive[];
  private readonly compute: Directive;
  private readonly fortran: boolean;
  /** The statement the compute construct governs (a block or the nest's root loop). */
  private readonly computeStmt: Stmt;

  constructor(private readonly model: ProgramModel, private readonly nest: LoopNest) {
    this.scope = new Scope(model, nest.procedure);
    this.compute = nest.offload!;
    this.fortran = model.language === 'fortran';
    const visit = (loop: LoopStmt, inherited: Governed | undefined, remaining: number): void => {
      const d = loop.directives.find(isLoopDirective);
      let next = inherited;
      let left = 0;
      if (d && !d.clauses.some((c) => c.canonical === 'seq')) {
        next = { directive: d, head: loop };
        this.governed.set(loop, next);
        left = collapseCount(d) - 1;
      } else if (remaining > 0 && inherited) {
        this.governed.set(loop, inherited);
        left = remaining - 1;
      }
      for (const s of loop.body) walkLoops(s, (l) => visit(l, next, left));
    };
    visit(nest.root, undefined, 0);
    walkStatements([nest.root], (s) => { if (s.kind === 'loop' && s.variable) this.loopVars.add(s.variable); });
    const path = pathTo(nest.procedure.body, nest.root);
    this.above = path.flatMap((s) => s.directives);
    if (!nest.root.directives.includes(this.compute) && !this.above.includes(this.compute)) this.above.push(this.compute);
    this.computeStmt = [...path, nest.root].find((s) => s.directives.includes(this.compute)) ?? nest.root;
  }

  /**
   * Whether the directive makes distinct iterations of its loop run at the same time with one
   * shared copy of a variable the compute construct did not privatise: always in OpenMP; in
   * OpenACC unless the loop is sequential, left to the implementation (`auto`, `kernels` without
   * `independent`), or — for scalars, which have one copy per gang — partitioned over gangs only.
   */
  private races(d: Directive, scalar: boolean): boolean {
    if (d.family === 'openmp') {
      // A `simd`-only loop splits one thread's iterations over its vector lanes; compilers
      // expand a scratch scalar per lane, so it is not reported (the thread's copy is what counts).
      const words = d.construct.split(' ');
      if (scalar && !words.some((w) => ['for', 'do', 'distribute', 'loop'].includes(w))) return false;
      return this.compute.family === 'openmp';
    }
    if (this.compute.family !== 'openacc') return false;
    const has = (n: string): boolean => d.clauses.some((c) => c.canonical === n);
    const construct = this.compute.construct.split(' ')[0];
    if (construct === 'serial' || has('seq') || has('auto')) return false;
    if (construct === 'kernels' && !has('independent')) return false;
    if (scalar && has('gang') && !has('worker') && !has('vector')) return false;
    return true;
  }

  /** The innermost loop of the chain whose iterations race on a shared copy. */
  private racingLoop(chain: Stmt[], scalar: boolean): LoopStmt | undefined {
    for (let k = chain.length - 1; k >= 0; k--) {
      const s = chain[k];
      if (s.kind !== 'loop') continue;
      const g = this.governed.get(s);
      if (g && this.races(g.directive, scalar)) return s;
    }
    return undefined;
  }

  /**
   * True when `name` has its own copy per iteration of `loop`: a privatising clause on the
   * directive that governs `loop`, on a directive inside it along the chain, or on a construct
   * above the nest that is not a loop directive; or a declaration inside `loop`.
   */
  private privateAt(name: string, chain: Stmt[], loop: LoopStmt): boolean {
    const own = this.governed.get(loop)!.directive;
    const from = chain.indexOf(loop);
    // Loop directives outside `loop` give a copy per gang or team, which `loop`'s threads share.
    const outside = [...this.above, ...chain.slice(0, from).flatMap((s) => s.directives)].filter((d) => !isLoopDirective(d));
    const directives = [own, ...chain.slice(from).flatMap((s) => s.directives), ...outside];
    if (directives.some((d) => namesPrivately(d, name))) return true;
    return this.declaredWithin(name, loop);
  }

  privateIn(name: string, loop: LoopStmt): boolean {
    const g = this.governed.get(loop);
    if (g && [g.directive, ...loop.directives].some((d) => namesPrivately(d, name))) return true;
    return this.declaredWithin(name, loop);
  }

  private declaredWithin(name: string, loop: Stmt): boolean {
    const lower = this.fortran ? name.toLowerCase() : name;
    return (localsByName(this.nest.procedure.locals, this.fortran).get(lower) ?? []).some((l) => rangeWithin(l.range, loop.range));
  }

  /** Statements of the nest with the chain of statements from the root down to each. */
  private walk(visit: (s: Stmt, chain: Stmt[]) => void): void {
    const rec = (stmts: readonly Stmt[], chain: Stmt[]): void => {
      for (const s of stmts) {
        const c = [...chain, s];
        visit(s, c);
        rec(childStatements(s), c);
      }
    };
    rec([this.nest.root], []);
  }

  // ---- shared-scalar-write ----------------------------------------------------------------

  sharedScalars(): Finding[] {
    const firstAssign = new Map<string, Stmt & { kind: 'assign' }>();
    walkStatements([this.nest.root], (s) => {
      if (s.kind === 'assign' && s.target.kind === 'var' && !firstAssign.has(s.target.name)) firstAssign.set(s.target.name, s);
    });
    const out: Finding[] = [];
    const done = new Set<string>();
    this.walk((s, chain) => {
      if (s.kind !== 'assign' || s.target.kind !== 'var') return;
      const name = s.target.name;
      if (done.has(name) || !/^[A-Za-z_]\w*$/.test(name) || this.loopVars.has(name)) return;
      const decl = this.scope.lookup(name);
      if (!decl || !isScalar(decl)) return;
      // An accumulation is missing-reduction's (or fine, with its clause): not both.
      const first = firstAssign.get(name)!;
      if (accumulation(name, first.op, first.value)) return;
      const loop = this.racingLoop(chain.slice(0, -1), true);
      if (!loop || this.privateAt(name, chain, loop)) return;
      done.add(name);
      out.push(this.sharedScalar(name, decl, s, loop));
    });
    return out;
  }

  // ---- a value carried from one iteration to the next through a scalar ---------------------

  /**
   * Scalars an iteration of a concurrent loop reads before it writes them, where each thread or
   * gang has a copy of its own (a `private`/`firstprivate` clause, or OpenACC's firstprivate per
   * gang for a gang-only loop, §2.6.2): the iteration reads what the previous iteration *of the
   * same copy* left — uninitialised for `private` (OpenACC 3.3 §2.5.13; OpenMP 5.2 §5.4.3), the
   * value from before the loop for `firstprivate` — so the result depends on how iterations are
   * split. That is a loop-carried flow dependence through the scalar, which no private clause
   * repairs: `loop-carried-dependence`. A shared copy is `shared-scalar-write`'s (not both).
   */
  carriedScalars(reported: ReadonlySet<string>): Finding[] {
    const out: Finding[] = [];
    const done = new Set<string>(reported);
    this.walk((s, chain) => {
      if (s.kind !== 'assign' || s.target.kind !== 'var') return;
      const name = s.target.name;
      if (done.has(name) || !/^[A-Za-z_]\w*$/.test(name) || this.loopVars.has(name)) return;
      const decl = this.scope.lookup(name);
      if (!decl || !isScalar(decl)) return;
      // The innermost loop whose iterations a directive runs concurrently (any copy).
      const loop = this.racingLoop(chain.slice(0, -1), false);
      if (!loop || this.declaredWithin(name, loop)) return;
      const g = this.governed.get(loop)!;
      const directives = [g.directive, ...chain.slice(chain.indexOf(loop)).flatMap((x) => x.directives), ...this.above];
      const clause = directives.flatMap((d) => clausesNamed(d, ...PRIVATISING)).find((c) => (c.vars ?? []).some((v) => (this.fortran ? v.name.toLowerCase() === name.toLowerCase() : v.name === name)));
      if (clause?.canonical === 'reduction') return;
      const acc = accumulation(name, s.op, s.value);
      // An accumulation without a privatising clause is missing-reduction's.
      if (acc && !clause) return;
      const use = usage(loop.body, name, this.fortran);
      if (!use.exposed) return;
      const acc3 = g.directive.family === 'openacc';
      let copies: string;
      if (clause?.canonical === 'private') {
        copies = `\`private(${name})\` gives each thread a copy that starts uninitialised (${acc3 ? 'OpenACC 3.3 §2.5.13' : 'OpenMP 5.2 §5.4.3'}) and keeps what the thread's previous iteration left`;
      } else if (clause) {
        copies = `\`${clause.name}(${name})\` gives each thread a copy that starts with the value from before the loop and keeps what the thread's previous iteration left`;
      } else if (acc3) {
        copies = `\`${name}\` is firstprivate, one copy per gang (OpenACC 3.3 §2.6.2), so each gang's first iteration reads the value from before the loop and the others read what the gang's previous iteration left`;
      } else {
        copies = `each SIMD lane keeps its own value of \`${name}\``;
      }
      done.add(name);
      const v = loop.variable ?? '?';
      const todo = acc
        ? `If \`${name}\` is a ${acc === '+' ? 'sum' : acc === '*' ? 'product' : acc === 'max' ? 'maximum' : 'minimum'}, use \`reduction(${acc}:${name})\` instead of \`${clause!.name}\`.`
        : `Compute \`${name}\` from the loop variable within the iteration, or keep the loop sequential.`;
      out.push({
        code: 'loop-carried-dependence', severity: 'error', range: s.range, array: name,
        message: `An iteration of this parallel \`${v}\` loop reads the scalar \`${name}\` before it writes it, so it uses the value the previous iteration left: a loop-carried flow dependence through \`${name}\`. ${copies[0].toUpperCase()}${copies.slice(1)}, so the value read depends on how the iterations are split and differs from the sequential loop. ${todo}`,
      });
    });
    return out;
  }

  private sharedScalar(name: string, decl: Declaration, s: Stmt, loop: LoopStmt): Finding {
    const use = usage(loop.body, name, this.fortran);
    // An integer index computed from the loop variables and read only in subscripts (`idx =
    // i*NX + j; a[idx] = …`) no longer shows as read: model/indexLocals.ts substituted it there.
    const index = !use.read && !use.exposed && s.kind === 'assign' && !decl.type.isFloat && indexLike(s.value, loop, this.loopVars);
    const g = this.governed.get(loop)!;
    const inParallel = [...this.governed].filter(([l, x]) => x.directive === g.directive && l.variable).map(([l]) => `\`${l.variable}\``);
    const loopWords = inParallel.length > 1 ? `${inParallel.slice(0, -1).join(', ')} and ${inParallel[inParallel.length - 1]}` : inParallel[0] ?? `\`${loop.variable ?? '?'}\``;
    const why = this.whyShared(name, g.directive);
    const what = use.exposed
      ? `an iteration reads \`${name}\` before writing it, so it reads the value another iteration left (a dependence carried through the scalar)`
      : use.read
        ? `each iteration writes \`${name}\` and then reads it, so one iteration can read the value another has just written`
        : index
          ? `each iteration computes \`${name}\` and then indexes with it, so one iteration can use the index another has just written`
        : `every iteration writes \`${name}\`, so which value is left is unspecified`;
    const mapped = this.mapped(name) || decl.scope === 'global' || this.compute.construct.startsWith('kernels');
    const fixable = !use.exposed && !mapped;
    const fix = fixable ? privateFix(g.directive, name, this.model) : undefined;
    const todo = use.exposed
      ? `If it combines values (a sum, a maximum), give it a reduction clause; otherwise compute it from the loop variable${this.fortran ? '' : ' in a variable declared inside the loop'}, or keep the loop sequential.`
      : !use.read && !index && mapped
        ? `Make it private${g.directive.family === 'openmp' ? ' (or lastprivate, if the value of the last iteration is needed after the loop)' : ''}, or set it after the loop.`
        : `Add \`private(${name})\` to the directive${this.fortran ? '' : `, or declare \`${name}\` inside the loop`}${fix ? ' (quick fix available)' : ''}.`;
    // OpenACC compilers commonly privatise a per-iteration temporary themselves (common
    // practice), so such code often works although the standard does not promise it: a warning.
    // OpenMP compilers never do, and a value carried between iterations races everywhere.
    const oftenWorks = g.directive.family === 'openacc' && !use.exposed;
    return {
      code: 'shared-scalar-write', severity: oftenWorks ? 'warning' : 'error', range: s.range, array: name,
      message: `This loop runs ${loopWords} in parallel and writes the scalar \`${name}\`, which no clause makes private: ${why}, and ${what}.${oftenWorks ? ' Many OpenACC compilers privatise such a temporary on their own, but the standard does not promise it.' : ''} ${todo}`,
      fixes: fix ? [fix] : undefined,
    };
  }

  /** Why one copy is shared, in the words of the standard that applies. */
  private whyShared(name: string, d: Directive): string {
    if (this.declaredWithin(name, this.computeStmt)) {
      return d.family === 'openmp'
        ? `declared inside the construct but outside this loop, it is shared by the threads that run the iterations (OpenMP 5.2 §5.1.1)`
        : `declared inside the compute construct but outside this loop, it has one copy per gang (OpenACC 3.3 §2.6.1), shared by the workers and vector lanes that run the iterations of a gang`;
    }
    if (d.family === 'openmp') {
      const target = this.compute.construct.startsWith('target');
      return target
        ? `declared outside the construct, in \`${this.compute.construct}\` it is firstprivate to the target region and shared by the teams and threads that run the iterations (OpenMP 5.2 §5.1.1)`
        : `declared outside the loop, it is shared by the threads that run the iterations (OpenMP 5.2 §5.1.1)`;
    }
    const kernels = this.compute.construct.startsWith('kernels');
    return kernels
      ? `declared outside the construct, in \`kernels\` it is one variable for the whole construct (OpenACC 3.3 §2.6.2), shared by the iterations this \`independent\` loop runs at once`
      : `declared outside the construct, in \`${this.compute.construct}\` it is firstprivate, one copy per gang (OpenACC 3.3 §2.6.2), shared by the workers and vector lanes that run the iterations of a gang`;
  }

  /** True when a data clause in the procedure names the variable (then the host may see its value). */
  private mapped(name: string): boolean {
    const proc = this.nest.procedure;
    const same = (a: string): boolean => (this.fortran ? a.toLowerCase() === name.toLowerCase() : a === name);
    return this.model.directives.some((d) => rangeWithin(d.range, proc.range) && d.clauses.some((c) =>
      !PRIVATISING.includes(c.canonical) && c.canonical !== 'shared' && (c.vars ?? []).some((v) => same(v.name))));
  }

  // ---- missing-private --------------------------------------------------------------------

  /**
   * Local arrays every iteration of a parallel loop writes at the same elements (subscripts that
   * do not depend on that loop's variable) and reads after writing: scratch that each iteration
   * needs its own copy of. OpenACC 3.3 §2.6.2 copies an array in `parallel` to one device copy
   * for all gangs; OpenMP 5.2 maps it tofrom, one copy for all teams and threads.
   */
  scratchArrays(): { findings: Finding[]; names: Set<string> } {
    const findings: Finding[] = [];
    const names = new Set<string>();
    const tried = new Set<string>();
    this.walk((s, chain) => {
      if (s.kind !== 'assign' || s.target.kind !== 'index') return;
      const a = s.target.access;
      if (tried.has(a.array)) return;
      const decl = this.scope.lookup(a.array);
      // Locals and globals with a fixed shape (a pointer's extent is not known to privatise it).
      if (!decl || decl.scope === 'param' || !decl.isArray || decl.isPointer || decl.container || decl.dims.length === 0) return;
      if (a.subscripts.some((x) => !x)) return;
      const loops = chain.slice(0, -1).filter((x): x is LoopStmt => x.kind === 'loop');
      // Declared inside the compute construct, an array has one copy per gang in OpenACC, like
      // a scalar; declared outside, one device copy for all.
      const perGang = this.declaredWithin(a.array, this.computeStmt);
      // The innermost racing loop whose variable none of the subscripts uses.
      let loop: LoopStmt | undefined;
      for (let k = loops.length - 1; k >= 0 && !loop; k--) {
        const l = loops[k];
        const g = this.governed.get(l);
        if (!g || !l.variable || !this.races(g.directive, perGang)) continue;
        if ((a.subscripts as S.Expr[]).every((x) => S.degreeIn(x, l.variable!) === 0)) loop = l;
      }
      if (!loop) return;
      tried.add(a.array);
      if (this.privateAt(a.array, chain, loop)) return;
      if (!this.scratchIn(loop, a.array, loop.variable!)) return;
      names.add(a.array);
      const g = this.governed.get(loop)!;
      const fix = this.readOutside(a.array) ? undefined : privateFix(g.directive, a.array, this.model);
      const where = g.directive.family === 'openmp'
        ? (perGang ? 'shared by the threads that run the iterations (OpenMP 5.2 §5.1.1)' : 'mapped tofrom, one copy for every team and thread (OpenMP 5.2 §5.8.1)')
        : (perGang ? 'one copy per gang, shared by the workers and vector lanes that run the iterations' : 'copied to one device copy that every gang, worker and vector lane shares (OpenACC 3.3 §2.6.2)');
      findings.push({
        code: 'missing-private', severity: 'warning', range: a.range, array: a.array,
        message: `Each iteration of this parallel \`${loop.variable}\` loop writes \`${this.fortran ? `${a.array}(${a.subscriptText.join(', ')})` : `${a.array}[${a.subscriptText.join('][')}]`}\` and then reads it back, the same elements in every iteration: per-iteration scratch. \`${a.array}\` is declared outside the loop and ${where}, so iterations overwrite each other's values. Add \`private(${a.array})\` to the directive${this.fortran ? '' : `, or declare \`${a.array}\` inside the loop`}${fix ? ' (quick fix available)' : ''}.`,
        fixes: fix ? [fix] : undefined,
      });
    });
    return { findings, names };
  }

  /**
   * True when, in the loop's body, every write of the array leaves the loop variable out of its
   * subscripts, the first access in statement order is a write, and the array is read too.
   */
  private scratchIn(loop: LoopStmt, array: string, v: string): boolean {
    let first: 'read' | 'write' | undefined;
    let reads = false;
    let invariant = true;
    walkStatements(loop.body, (s) => {
      const accesses = accessOrder(s).filter((x) => x.array === array);
      for (const x of accesses) {
        if (x.isRead) {
          reads = true;
          first ??= 'read';
        }
        if (x.isWrite) {
          first ??= 'write';
          if (x.subscripts.some((e) => !e || S.degreeIn(e, v) !== 0)) invariant = false;
        }
      }
    });
    return first === 'write' && reads && invariant;
  }

  /** True when a statement of the procedure outside this nest reads the array. */
  private readOutside(array: string): boolean {
    let found = false;
    walkStatements(this.nest.procedure.body, (s) => {
      if (s === this.nest.root) return false;
      if (accessOrder(s).some((x) => x.array === array && x.isRead)) found = true;
      return !found;
    });
    return found;
  }
}

/** Accesses a statement makes itself, reads of the right-hand side before the write of the target. */
function accessOrder(s: Stmt): { array: string; isRead: boolean; isWrite: boolean; subscripts: (S.Expr | undefined)[] }[] {
  const out: { array: string; isRead: boolean; isWrite: boolean; subscripts: (S.Expr | undefined)[] }[] = [];
  const visit = (e: VExpr): void => {
    if (e.kind === 'index') {
      out.push({ array: e.access.array, isRead: true, isWrite: false, subscripts: e.access.subscripts });
      e.access.subscriptValues.forEach(visit);
    } else for (const c of subValues(e)) visit(c);
  };
  switch (s.kind) {
    case 'assign':
      if (s.target.kind === 'index') s.target.access.subscriptValues.forEach(visit);
      visit(s.value);
      if (s.target.kind === 'index') {
        const a = s.target.access;
        if (a.isRead) out.push({ array: a.array, isRead: true, isWrite: false, subscripts: a.subscripts });
        out.push({ array: a.array, isRead: false, isWrite: true, subscripts: a.subscripts });
      }
      break;
    case 'call': s.args.forEach(visit); break;
    case 'if': visit(s.condition); break;
    case 'other': s.values.forEach(visit); break;
    default: break;
  }
  return out;
}

function subValues(e: VExpr): VExpr[] {
  switch (e.kind) {
    case 'bin': return [e.left, e.right];
    case 'unary':
    case 'cast': return [e.operand];
    case 'call': return e.args;
    case 'cond': return [e.test, e.then, e.else];
    case 'index': return e.access.subscriptValues;
    default: return [];
  }
}

/** Integer arithmetic over names the loop does not assign, with a loop variable among them. */
function indexLike(value: VExpr, loop: LoopStmt, loopVars: ReadonlySet<string>): boolean {
  const e = toSymbolic(value);
  if (!e) return false;
  const assigned = new Set<string>();
  walkStatements([loop], (s) => { if (s.kind === 'assign' && s.target.kind === 'var') assigned.add(s.target.name); });
  const names = S.freeSymbols(e);
  return names.some((n) => loopVars.has(n)) && names.every((n) => !assigned.has(n));
}

function isScalar(d: Declaration): boolean {
  if (d.container || d.dims.length > 0) return false;
  return !d.isArray || d.isPointer;
}

function namesPrivately(d: Directive, name: string): boolean {
  const fortran = d.text.trimStart().startsWith('!') || /^\s*[cC*]\$/.test(d.text);
  const same = (a: string): boolean => (fortran ? a.toLowerCase() === name.toLowerCase() : a === name);
  if (d.clauses.some((c) => c.canonical === 'default' && /^(private|firstprivate)$/i.test(c.value ?? ''))) return true;
  return clausesNamed(d, ...PRIVATISING).some((c) => (c.vars ?? []).some((v) => same(v.name)));
}

function walkLoops(s: Stmt, f: (l: LoopStmt) => void): void {
  if (s.kind === 'loop') {
    f(s);
    return;
  }
  for (const c of childStatements(s)) walkLoops(c, f);
}

// ---- how an iteration uses a scalar ----------------------------------------------------------

interface Usage {
  /** Read somewhere in the iteration before any write that surely precedes it. */
  exposed: boolean;
  read: boolean;
  written: boolean;
}

/**
 * How one iteration of a loop body uses a scalar, by definite assignment: a write on every path
 * (both branches of an `if`) defines it for what follows; a write inside an inner loop does not
 * (the loop may run zero times), though reads after it in the same inner iteration are covered.
 */
export function usage(body: readonly Stmt[], name: string, fortran: boolean): Usage {
  const out: Usage = { exposed: false, read: false, written: false };
  const same = (a: string): boolean => (fortran ? a.toLowerCase() === name.toLowerCase() : a === name);
  const readHere = (names: Iterable<string>, defined: boolean): void => {
    for (const n of names) {
      if (!same(n)) continue;
      out.read = true;
      if (!defined) out.exposed = true;
    }
  };
  const scan = (stmts: readonly Stmt[], defined: boolean): boolean => {
    for (const s of stmts) {
      switch (s.kind) {
        case 'assign': {
          const reads: string[] = [];
          varsIn(s.value, reads);
          if (s.target.kind === 'index') s.target.access.subscriptValues.forEach((v) => varsIn(v, reads));
          if (s.target.kind === 'var' && same(s.target.name) && s.op !== '=') reads.push(s.target.name);
          readHere(reads, defined);
          if (s.target.kind === 'var' && same(s.target.name)) {
            out.written = true;
            defined = true;
          }
          break;
        }
        case 'if': {
          const reads: string[] = [];
          varsIn(s.condition, reads);
          readHere(reads, defined);
          const a = scan(s.then, defined);
          const b = scan(s.otherwise, defined);
          defined = a && b;
          break;
        }
        case 'loop': {
          const reads: string[] = [];
          for (const e of [s.lower, s.upper, s.step]) if (e) reads.push(...S.freeSymbols(e));
          const cond = (s as { condition?: VExpr }).condition;
          if (cond) varsIn(cond, reads);
          readHere(reads, defined);
          // A loop that surely runs (a counted loop, sizes at least 1) defines what its body does.
          const after = scan(s.body, defined);
          if (s.tripCount && s.variable && !(s as { tripCountIsBound?: boolean }).tripCountIsBound && provablyNonNegative(S.sub(s.tripCount, S.num(1)))) defined = after;
          break;
        }
        case 'block':
          defined = scan(s.body, defined);
          break;
        case 'call': {
          const reads: string[] = [];
          s.args.forEach((a) => varsIn(a, reads));
          readHere(reads, defined);
          break;
        }
        case 'other': {
          const reads: string[] = [];
          s.values.forEach((a) => varsIn(a, reads));
          readHere(reads, defined);
          break;
        }
        default:
          break;
      }
    }
    return defined;
  };
  scan(body, false);
  return out;
}

/** Names a value expression reads (array names excluded; identifiers of opaque text included). */
function varsIn(e: VExpr, out: string[]): void {
  switch (e.kind) {
    case 'var': out.push(e.name); return;
    case 'opaque': out.push(...(e.text.match(/[A-Za-z_]\w*/g) ?? [])); return;
    case 'index': e.access.subscriptValues.forEach((v) => varsIn(v, out)); return;
    default: for (const c of subValues(e)) varsIn(c, out);
  }
}

// ---- accumulations ------------------------------------------------------------------------

/** The reduction operator an assignment to `name` accumulates with, if it does. */
export function accumulation(name: string, op: string, value: VExpr): string | undefined {
  const mentions = (e: VExpr): boolean => printValue(e).split(/[^\w.%>-]+/).includes(name);
  if (op === '+=' || op === '-=') return '+';
  if (op === '*=') return '*';
  if (op !== '=') return undefined;
  if (value.kind === 'bin' && (value.op === '+' || value.op === '-' || value.op === '*')) {
    const isSelf = (e: VExpr): boolean => e.kind === 'var' && e.name === name;
    if (isSelf(value.left) || (value.op !== '-' && isSelf(value.right))) return value.op === '*' ? '*' : '+';
  }
  if (value.kind === 'call' && value.args.some((a) => a.kind === 'var' && a.name === name)) {
    const f = value.name.toLowerCase();
    if (['max', 'fmax', 'fmaxf', 'amax1', 'dmax1'].includes(f)) return 'max';
    if (['min', 'fmin', 'fminf', 'amin1', 'dmin1'].includes(f)) return 'min';
  }
  if (value.kind === 'cond' && mentions(value.test)) {
    const t = printValue(value.test);
    if (/>/.test(t)) return 'max';
    if (/</.test(t)) return 'min';
  }
  return undefined;
}

// ---- the quick fix ------------------------------------------------------------------------

/** Longest line a Fortran compiler reads without truncating: 72 columns fixed form, 132 free form. */
function lineLimit(model: ProgramModel): number {
  if (model.language !== 'fortran') return Infinity;
  return /\.(f|for|f77|ftn)$/i.test(model.path) ? 72 : 132;
}

/**
 * Appends `private(name)` at the end of the directive. None when the directive was written
 * through `_Pragma` (its end is inside the string) or the line would pass Fortran's limit.
 */
export function privateFix(d: Directive, name: string, model: ProgramModel): Fix | undefined {
  if (/_Pragma/.test(d.text)) return undefined;
  const text = ` private(${name})`;
  if (d.range.end.col + text.length > lineLimit(model)) return undefined;
  return {
    title: `Add private(${name}) to this ${d.family === 'openacc' ? 'OpenACC' : 'OpenMP'} directive`,
    edits: [{ range: { start: d.range.end, end: d.range.end }, newText: text }],
  };
}

/**
 * Every local of a procedure by name (Fortran names in lower case), built once per list of
 * locals: a scan of all locals for every write made the check quadratic in a long procedure.
 * Several locals may share a name (scopes are flattened), so each name keeps all of them.
 */
const localIndex = new WeakMap<readonly Declaration[], { length: number; fortran: boolean; map: Map<string, Declaration[]> }>();
function localsByName(locals: readonly Declaration[], fortran: boolean): ReadonlyMap<string, Declaration[]> {
  let ix = localIndex.get(locals);
  if (!ix || ix.length !== locals.length || ix.fortran !== fortran) {
    const map = new Map<string, Declaration[]>();
    for (const l of locals) {
      const key = fortran ? l.name.toLowerCase() : l.name;
      const list = map.get(key);
      if (list) list.push(l);
      else map.set(key, [l]);
    }
    ix = { length: locals.length, fortran, map };
    localIndex.set(locals, ix);
  }
  return ix.map;
}
