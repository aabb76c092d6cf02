/**
 * Which host loop nests of a time loop a port may offload, and what each needs: the collapse
 * depth, the data clauses a pointer needs (C and C++), and why a nest stays on the host. This is
 * the structural half of the proof; the dependence half is the race analysis run on the ported
 * text (port/plans.ts): a nest it finds a loop-carried dependence in is put back on the host.
 *
 * A nest is offloaded only when:
 *  - its root is a counted loop (`for` with an affine header, Fortran `do`), not a while loop;
 *  - nothing in it leaves early (`break`, `return`, `goto`, `exit`, `stop`) or does I/O;
 *  - it calls no procedure but math functions and intrinsics (a call would need `routine` /
 *    `declare target`, which a port of one nest cannot prove right);
 *  - every subscript it writes is affine in the loop variables (an irregular write is a possible
 *    conflict no test disproves);
 *  - the size of every pointer it uses is known where the directive goes (C data clauses need it).
 */
import type { FileAnalysis, TimeLoopReport } from '../analyze';
import type { Execution } from '../data/interpreter';
import type { Declaration, LoopStmt, Procedure, ProgramModel, Stmt, VExpr } from '../model/program';
import { accessesOfStatement, walkStatements } from '../model/values';
import { EARLY_EXIT, IO_CALL, IO_STMT, isPureCall } from '../analysis/parallelProof';
import * as S from '../symbolic';
import type { Directive, DirectiveFamily, Range } from '../types';
import { rangeWithin } from '../ranges';
import { leadingCount } from '../data/slices';

export interface PortNest {
  root: LoopStmt;
  procedure: Procedure;
  collapse: number;
  /** Data clauses a C pointer needs (`copy(u[0:NX*NY])`), already in the family's spelling. */
  dataClauses: string[];
  /** Extra clauses found by the race analysis of the port (reductions, privates). */
  extra: string[];
  /** A host-parallel directive on the root (`omp parallel for`, `do concurrent` is not one) that the offload directive replaces. */
  replaces?: Directive;
  /** Runs every K steps (a guard on the step counter). */
  everySteps: number;
}

export interface HostNest {
  line: number;
  procedure: string;
  reason: string;
}

/** Calls a statement makes (statement calls and calls inside its expressions). */
function callsIn(s: Stmt): string[] {
  const out: string[] = [];
  const visit = (v: VExpr): void => {
    switch (v.kind) {
      case 'call': out.push(v.name); v.args.forEach(visit); break;
      case 'bin': visit(v.left); visit(v.right); break;
      case 'unary': case 'cast': visit(v.operand); break;
      case 'cond': visit(v.test); visit(v.then); visit(v.else); break;
      case 'index': v.access.subscriptValues.forEach(visit); break;
      default: break;
    }
  };
  if (s.kind === 'call') { out.push(s.name); s.args.forEach(visit); }
  if (s.kind === 'assign') { visit(s.value); if (s.target.kind === 'index') s.target.access.subscriptValues.forEach(visit); }
  if (s.kind === 'if') visit(s.condition);
  if (s.kind === 'other') s.values.forEach(visit);
  if (s.kind === 'loop' && s.condition) visit(s.condition);
  return out;
}

/** The number of perfectly nested, rectangular loops from the root down. */
export function collapseDepth(root: LoopStmt): number {
  let depth = 1;
  let cur = root;
  const outer = new Set<string>(cur.variable ? [cur.variable] : []);
  for (;;) {
    const body = cur.body.filter((s) => !(s.kind === 'other' && s.text.trim() === ''));
    if (body.length !== 1 || body[0].kind !== 'loop') return depth;
    const inner = body[0];
    if (!inner.variable || !inner.tripCount || inner.triangular || inner.implied) return depth;
    const bounds = [inner.lower, inner.upper, inner.step].filter((e): e is S.Expr => !!e);
    if (bounds.some((b) => S.freeSymbols(b).some((x) => outer.has(x)))) return depth;
    if (inner.directives.length > 0) return depth;
    depth++;
    outer.add(inner.variable);
    cur = inner;
  }
}

/**
 * The procedure whose body holds a statement: found by identity, since the model of a file seen
 * with its workspace also holds other files' procedures, whose ranges are ranges of other files.
 */
function procedureOf(model: ProgramModel, s: Stmt): Procedure | undefined {
  for (const p of model.procedures) {
    if (!rangeWithin(s.range, p.range)) continue;
    let found = false;
    walkStatements(p.body, (x) => {
      if (x === s) found = true;
      return !found;
    });
    if (found) return p;
  }
  return undefined;
}

function lookup(model: ProgramModel, proc: Procedure, name: string): Declaration | undefined {
  return proc.locals.find((d) => d.name === name) ?? proc.params.find((d) => d.name === name) ?? model.globals.find((d) => d.name === name);
}

function visible(model: ProgramModel, proc: Procedure, sym: string): boolean {
  return model.bindings.has(sym) || proc.bindings.has(sym) || !!lookup(model, proc, sym);
}

const isHostParallel = (d: Directive): boolean =>
  d.family === 'openmp' && !d.construct.startsWith('target') && /\b(parallel|for|do|simd|loop|taskloop)\b/.test(d.construct);

/**
 * The nests of a time loop's step that a port offloads, and those it leaves on the host with the
 * reason. Only nests that run on the host today are considered.
 */
export function chooseNests(analysis: FileAnalysis, tl: TimeLoopReport, family: DirectiveFamily): { port: PortNest[]; host: HostNest[] } {
  const ledger = tl.ledger;
  const model = analysis.model;
  const port: PortNest[] = [];
  const host: HostNest[] = [];
  if (!ledger) return { port, host };
  const seen = new Set<LoopStmt>();
  for (const e of ledger.run.hostNests) {
    const root = e.stmt;
    if (root.kind !== 'loop' || seen.has(root)) continue;
    seen.add(root);
    const nest = [...analysis.nests, ...analysis.externalNests].find((n) => n.nest.root === root)?.nest;
    const proc = nest?.procedure ?? procedureOf(model, root);
    const line = root.keywordRange.start.line + 1;
    const leave = (reason: string): void => { host.push({ line, procedure: proc?.name ?? 'a procedure of another file', reason }); };
    if (!proc || proc.origin) { leave(`it is in ${proc?.origin ? `another file (${proc.origin.split(/[\\/]/).pop()})` : 'another file'}; a port writes directives in the file of the time loop only, so port it there`); continue; }
    const why = hostReason(model, proc, root, family);
    if (why) { leave(why); continue; }
    const data = dataClauses(model, proc, root, e, ledger.infoOf, family);
    if (typeof data === 'string') { leave(data); continue; }
    port.push({
      root, procedure: proc, collapse: collapseDepth(root), dataClauses: data, extra: [],
      replaces: root.directives.find(isHostParallel), everySteps: e.everySteps,
    });
  }
  return { port, host };
}

function hostReason(model: ProgramModel, proc: Procedure, root: LoopStmt, family: DirectiveFamily): string | undefined {
  if (root.implied) {
    return family === 'openacc' ? undefined : 'array syntax: OpenMP has no offload loop for it; write it as a do loop to port it';
  }
  if (/^\s*do\s+concurrent\b/i.test(root.header)) {
    return 'a `do concurrent` loop takes no loop directive in gcc 12 (it rejects "!$ACC LOOP cannot be a DO CONCURRENT loop", and OpenMP 5.2 loop constructs take DO loops); write it as nested do loops to port it with directives, or let a compiler that offloads do concurrent itself run it';
  }
  if (!root.variable || !root.tripCount || root.condition !== undefined || root.counter) return 'it is not a counted loop (a while loop or a header the analysis cannot read)';
  if (root.directives.some((d) => d.family !== 'openmp' || d.construct.startsWith('target'))) return 'it already has an offload directive';
  let reason: string | undefined;
  walkStatements([root], (s) => {
    if (reason) return false;
    if (s.kind === 'other' && EARLY_EXIT.test(s.text)) { reason = `it can leave early (\`${s.text.trim().split(/\s+/)[0]}\`), which an offloaded loop cannot`; return false; }
    if (s.kind === 'other' && IO_STMT.test(s.text)) { reason = `it does I/O (\`${s.text.trim().split(/\s+/)[0]}\`), which stays on the host`; return false; }
    if (s.kind === 'loop' && s !== root && (!s.variable || s.condition !== undefined || s.counter)) { reason = 'an inner loop is not a counted loop'; return false; }
    for (const c of callsIn(s)) {
      if (IO_CALL.test(c.replace(/^std::/, ''))) { reason = `it calls \`${c}\` (I/O or memory management), which stays on the host`; return false; }
      if (!isPureCall(c)) { reason = `it calls \`${c}\`, which would need \`${family === 'openacc' ? 'acc routine' : 'omp declare target'}\`; port that procedure first`; return false; }
    }
    for (const a of accessesOfStatement(s)) {
      if (a.isWrite && a.subscripts.some((x) => !x)) { reason = `it writes \`${a.array}\` through a subscript the analysis cannot read (\`${a.subscriptText.join(', ')}\`), so iterations might write the same element`; return false; }
    }
    return undefined;
  });
  return reason;
}

/**
 * The data clauses a C or C++ pointer needs on a naive port (`copy(u[0:n])`, `map(tofrom: …)`):
 * arrays with declared extents and Fortran arrays need none (they are copied by the implicit
 * rules, OpenACC 3.3 §2.6.2, OpenMP 5.2 §5.8.1). A string is the reason the nest stays on the host.
 */
function dataClauses(
  model: ProgramModel, proc: Procedure, root: LoopStmt, e: Execution, infoOf: (k: string) => import('../data/arrays').ArrayInfo | undefined, family: DirectiveFamily,
): string[] | string {
  if (model.language === 'fortran') return [];
  const reads = new Set<string>();
  const writes = new Set<string>();
  const order: string[] = [];
  walkStatements([root], (s) => {
    for (const a of accessesOfStatement(s)) {
      if (!order.includes(a.array)) order.push(a.array);
      if (a.isRead) reads.add(a.array);
      if (a.isWrite) writes.add(a.array);
    }
  });
  const copy: string[] = [];
  const copyin: string[] = [];
  for (const name of order) {
    const decl = lookup(model, proc, name);
    if (decl?.container) return `\`${name}\` is a ${decl.container}: a clause needs its data pointer, so port it by hand`;
    if (decl && decl.dims.length > 0 && !decl.isPointer) continue;
    const count = decl?.elementCount ?? infoOf(name)?.elementCount;
    if (!count) return `the size of \`${name}\` is not known where the loop is, so no data clause can name it`;
    const hidden = S.freeSymbols(count).filter((x) => !visible(model, proc, x));
    if (hidden.length > 0) return `the size of \`${name}\` (${S.toSource(count, 'c')}) uses ${hidden.map((h) => `\`${h}\``).join(', ')}, not visible in \`${proc.name}\``;
    if (e.via.length > 0 && decl?.scope === 'param') {
      // In a callee, the caller's size must read the same in the callee's names.
      const here = S.evaluate(count, e.bindings);
      if (here === undefined) return `the size of \`${name}\` in \`${proc.name}\` is not known`;
    }
    const section = `${name}[0:${S.toSource(leadingCount(count, decl?.isPointer ? decl.dims : []), 'c')}]`;
    (writes.has(name) ? copy : copyin).push(section);
  }
  const out: string[] = [];
  if (family === 'openacc') {
    if (copy.length > 0) out.push(`copy(${copy.join(', ')})`);
    if (copyin.length > 0) out.push(`copyin(${copyin.join(', ')})`);
  } else {
    if (copy.length > 0) out.push(`map(tofrom: ${copy.join(', ')})`);
    if (copyin.length > 0) out.push(`map(to: ${copyin.join(', ')})`);
  }
  return out;
}

export type { Range };
