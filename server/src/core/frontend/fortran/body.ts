/**
 * Executable parts of scoping units: the block structure of DO, IF, SELECT CASE, WHERE, FORALL,
 * BLOCK and directive regions, with construct directives attached to the statement they govern.
 * A construct whose end statement is missing is closed where its enclosing construct ends, so
 * half-typed code still gives a model; only directive regions get a finding for that, because
 * a missing Fortran end statement is the compiler's to report and changes no offload semantics.
 */
import type { Directive, Finding } from '../../types';
import type { IfStmt, Stmt, VExpr } from '../../model/program';
import { type Line, type LineKind, classify } from './classify';
import type { UnitContext } from './context';
import type { Cursor, Entry } from './cursor';
import { concurrentHeader, doHeader, normalLabel } from './loops';
import { closes, directiveRole, sentinel } from './regions';
import { rangeIn, subLocated } from './source';
import { allocation, assignment, callStatement, ioStatement, lineRange, other, pointerAssignment, tokText, value } from './statements';
import { closeOf, isId, isOp, splitTop } from './tokens';
import { whereConstruct, whereOne } from './where';

export type Frame =
  | { kind: 'unit' }
  | { kind: 'do'; label?: string }
  | { kind: 'if' | 'select' | 'where' | 'forall' | 'block' }
  | { kind: 'region'; directive: Directive };

const ENDS: Record<Exclude<Frame['kind'], 'region'>, LineKind[]> = {
  unit: ['end-unit', 'contains', 'program', 'module', 'submodule', 'subroutine', 'function', 'blockdata'],
  do: ['end-do'],
  if: ['else-if', 'else', 'end-if'],
  select: ['case', 'end-select'],
  where: ['elsewhere', 'end-where'],
  forall: ['end-forall'],
  block: ['end-block'],
};

/** Statements allowed as the action of a one-line IF or FORALL. */
const ACTION_KINDS = new Set<LineKind>(['assign', 'pointer-assign', 'call', 'allocate', 'deallocate', 'io', 'simple', 'other']);
const SPEC_KINDS = new Set<LineKind>(['decl', 'attr', 'parameter', 'common', 'implicit', 'use', 'spec-other']);
/** Deeper nesting than this is read as flat statements, so hostile input cannot exhaust the stack. */
const MAX_NESTING = 200;

function terminates(f: Frame, e: Entry): boolean {
  if (f.kind === 'region') return e.kind === 'directive' && closes(e.directive, f.directive);
  return e.kind === 'line' && ENDS[f.kind].includes(e.line.kind);
}

const lastEnd = (stmts: readonly Stmt[]) => (stmts.length > 0 ? stmts[stmts.length - 1].range.end : undefined);
/** The line of an entry when it is one of the given kinds. */
const lineOf = (e: Entry | undefined, ...kinds: LineKind[]): Line | undefined => (e?.kind === 'line' && kinds.includes(e.line.kind) ? e.line : undefined);

export class BodyBuilder {
  private readonly frames: Frame[] = [];
  private closedLabel: string | undefined;

  constructor(
    readonly cursor: Cursor,
    readonly ctx: UnitContext,
    /** Handles a specification statement of the unit (declarations, `use`, `implicit`). */
    private readonly spec: (line: Line) => void,
  ) {}

  private finding(range: Finding['range'], message: string): void {
    this.ctx.model.findings.push({ code: 'directive-syntax', severity: 'error', range, message });
  }

  /** Statements up to the end of `frame` (or of any enclosing construct); the end itself is left. */
  block(frame: Frame): Stmt[] {
    this.frames.push(frame);
    const out: Stmt[] = [];
    let pending: Directive[] = [];
    try {
      for (;;) {
        this.closedLabel = undefined;
        const e = this.cursor.peek();
        if (!e || this.frames.some((f) => terminates(f, e))) break;
        this.cursor.next();
        let stmts: Stmt[];
        if (e.kind === 'directive') {
          const d = e.directive;
          if (!d) continue;
          const role = directiveRole(d, () => this.cursor.findAhead((x) => x.kind === 'directive' && closes(x.directive, d), 4) >= 0);
          if (role === 'end') {
            this.finding(d.range, `\`${sentinel(d)} end ${d.construct}\` has no matching \`${sentinel(d)} ${d.construct}\` before it in this block.`);
            continue;
          }
          if (role === 'standalone') {
            out.push({ kind: 'directive', directive: d, range: d.range, directives: [] });
            continue;
          }
          if (role === 'next') {
            pending.push(d);
            continue;
          }
          stmts = [this.region(d)];
        } else stmts = this.statement(e.line);
        if (stmts.length > 0 && pending.length > 0) {
          stmts[0].directives.push(...pending);
          this.optionalEnds(pending);
          pending = [];
        }
        out.push(...stmts);
        if (frame.kind === 'do' && frame.label !== undefined && e.kind === 'line') {
          if (normalLabel(e.line.label) === frame.label || this.closedLabel === frame.label) {
            // A labelled DO ends with the statement carrying its label, which may end several loops.
            this.closedLabel = frame.label;
            break;
          }
        }
      }
    } finally {
      this.frames.pop();
    }
    for (const d of pending) {
      this.finding(d.range, `\`${d.construct}\` must be followed by the statement it applies to (a DO loop or a statement); nothing follows it here.`);
    }
    return out;
  }

  /** Consumes optional end directives of loop constructs right after their loop. */
  private optionalEnds(applied: readonly Directive[]): void {
    for (;;) {
      const n = this.cursor.peek();
      if (n?.kind !== 'directive' || !applied.some((d) => closes(n.directive, d))) return;
      this.cursor.next();
    }
  }

  private region(d: Directive): Stmt {
    // OpenMP 5.1+: when the structured block is a Fortran BLOCK construct, the end directive is
    // optional; the construct covers that BLOCK.
    const blockLine = d.family === 'openmp' ? lineOf(this.cursor.peek(), 'block') : undefined;
    if (blockLine && /^\s*block\b/i.test(blockLine.text.raw.replace(/^\s*\d+\s+/, ''))) {
      this.cursor.next();
      const inner = this.statement(blockLine);
      const n = this.cursor.peek();
      let end = lastEnd(inner) ?? d.range.end;
      if (n?.kind === 'directive' && closes(n.directive, d)) {
        this.cursor.next();
        end = n.directive!.range.end;
      }
      return { kind: 'block', body: inner, range: { start: d.range.start, end }, directives: [d] };
    }
    const body = this.frames.length > MAX_NESTING ? [] : this.block({ kind: 'region', directive: d });
    let end = lastEnd(body) ?? d.range.end;
    const n = this.cursor.peek();
    if (n?.kind === 'directive' && closes(n.directive, d)) {
      this.cursor.next();
      end = n.directive!.range.end;
    } else {
      const where = n ? `line ${(n.kind === 'line' ? lineRange(n.line) : n.range).start.line + 1}` : 'the end of the file';
      this.finding(d.range, `\`${sentinel(d)} ${d.construct}\` has no matching \`${sentinel(d)} end ${d.construct}\`; in Fortran the region must be closed, so it is taken to end before ${where}, where the enclosing construct ends.`);
    }
    return { kind: 'block', body, range: { start: d.range.start, end }, directives: [d] };
  }

  statement(line: Line): Stmt[] {
    const deep = this.frames.length > MAX_NESTING;
    if (SPEC_KINDS.has(line.kind)) {
      this.spec(line);
      return [];
    }
    switch (line.kind) {
      case 'interface':
        this.skipTo('end-interface');
        return [];
      case 'typedef':
        this.skipTo('end-type');
        return [];
      case 'do':
        return [deep ? other(line) : this.doConstruct(line)];
      case 'if-then':
        return [deep ? other(line) : this.ifConstruct(line)];
      case 'if-one':
        return [this.ifOne(line)];
      case 'select':
        return deep ? [other(line)] : this.selectConstruct(line);
      case 'where':
        return [deep ? other(line) : whereConstruct(this.cursor, line, this.ctx)];
      case 'where-one':
        return [whereOne(line, this.ctx)];
      case 'forall':
      case 'forall-one':
        return [deep ? other(line) : this.forall(line, line.kind === 'forall-one')];
      case 'block':
        return [deep ? other(line) : this.blockConstruct(line)];
      case 'assign':
        return [assignment(line, this.ctx)];
      case 'call':
        return [callStatement(line, this.ctx)];
      case 'allocate':
      case 'deallocate':
        return [allocation(line, this.ctx, line.kind === 'allocate')];
      case 'io':
        return [ioStatement(line, this.ctx)];
      case 'pointer-assign':
        return [pointerAssignment(line, this.ctx)];
      case 'simple':
      case 'other':
        return [other(line)];
      default:
        // An end statement without its construct (`end do` after a loop that was already closed).
        return [];
    }
  }

  /** Skips an interface body or a derived-type definition, whose lines declare no variables here. */
  private skipTo(kind: LineKind): void {
    const n = this.cursor.findAhead((e) => !!lineOf(e, kind));
    if (n >= 0) this.cursor.skip(n + 1);
  }

  /** The action statement of `if (c) stmt` or `forall (…) stmt`, starting at token `at`. */
  private action(line: Line, at: number): Stmt[] {
    const t = line.toks[at];
    if (!t) return [];
    const sub = classify(subLocated(line.text, t.s, line.text.raw.length));
    return ACTION_KINDS.has(sub.kind) ? this.statement(sub) : [other(sub)];
  }

  private withLoopVars<T>(vars: string[], f: () => T): T {
    this.ctx.loopVars.push(...vars);
    try {
      return f();
    } finally {
      this.ctx.loopVars.length -= vars.length;
    }
  }

  private doConstruct(line: Line): Stmt {
    const h = doHeader(line, this.ctx);
    const vars = h.loops.map((l) => l.variable ?? '').filter((v) => v);
    const body = this.withLoopVars(vars, () => this.block({ kind: 'do', label: h.label }));
    const closedByLabel = h.label !== undefined && this.closedLabel === h.label;
    let end = lastEnd(body) ?? lineRange(line).end;
    const n = lineOf(this.cursor.peek(), 'end-do');
    if (!closedByLabel && n) {
      this.cursor.next();
      end = lineRange(n).end;
    }
    const range = { start: lineRange(line).start, end };
    const inner = h.loops[h.loops.length - 1];
    inner.body = h.mask ? [{ kind: 'if', condition: h.mask, conditionText: h.maskText ?? '', then: body, otherwise: [], range, directives: [] }] : body;
    for (const l of h.loops) l.range = range;
    return h.loops[0];
  }

  private forall(line: Line, oneLine: boolean): Stmt {
    const kw = line.toks[line.head];
    const h = concurrentHeader(line, this.ctx, line.head + 1, rangeIn(line.text, kw.s, kw.e));
    const vars = h.loops.map((l) => l.variable ?? '').filter((v) => v);
    let end = lineRange(line).end;
    const body = this.withLoopVars(vars, () => {
      if (oneLine) return this.action(line, closeOf(line.toks, line.head + 1) + 1);
      const b = this.block({ kind: 'forall' });
      end = lastEnd(b) ?? end;
      const n = lineOf(this.cursor.peek(), 'end-forall');
      if (n) {
        this.cursor.next();
        end = lineRange(n).end;
      }
      return b;
    });
    const range = { start: lineRange(line).start, end };
    const inner = h.loops[h.loops.length - 1];
    inner.body = h.mask ? [{ kind: 'if', condition: h.mask, conditionText: h.maskText ?? '', then: body, otherwise: [], range, directives: [] }] : body;
    for (const l of h.loops) l.range = range;
    return h.loops[0];
  }

  /** The condition in the parentheses after token `from`. */
  private condition(line: Line, from: number): { condition: VExpr; conditionText: string; close: number } {
    const open = line.toks.findIndex((t, k) => k > from && isOp(t, '('));
    const close = open < 0 ? -1 : closeOf(line.toks, open);
    if (close < 0) return { condition: { kind: 'opaque', text: '' }, conditionText: '', close: line.toks.length };
    return { condition: value(line, this.ctx, open + 1, close), conditionText: tokText(line, open + 1, close), close };
  }

  private ifOne(line: Line): Stmt {
    const c = this.condition(line, line.head);
    return { kind: 'if', condition: c.condition, conditionText: c.conditionText, then: this.action(line, c.close + 1), otherwise: [], range: lineRange(line), directives: [] };
  }

  /** `if … then` with its `else if` arms (as nested IfStmts in `otherwise`) and `else`. */
  private ifConstruct(line: Line): Stmt {
    const arms: IfStmt[] = [];
    let cur: Line = line;
    let end = lineRange(line).end;
    let otherwise: Stmt[] = [];
    for (;;) {
      const c = this.condition(cur, cur.head);
      const then = this.block({ kind: 'if' });
      arms.push({ kind: 'if', condition: c.condition, conditionText: c.conditionText, then, otherwise: [], range: lineRange(cur), directives: [] });
      end = lastEnd(then) ?? lineRange(cur).end;
      const elseIf = lineOf(this.cursor.peek(), 'else-if');
      if (elseIf) {
        this.cursor.next();
        cur = elseIf;
        continue;
      }
      const els = lineOf(this.cursor.peek(), 'else');
      if (els) {
        this.cursor.next();
        otherwise = this.block({ kind: 'if' });
        end = lastEnd(otherwise) ?? lineRange(els).end;
      }
      const endIf = lineOf(this.cursor.peek(), 'end-if');
      if (endIf) {
        this.cursor.next();
        end = lineRange(endIf).end;
      }
      break;
    }
    for (let k = arms.length - 1; k >= 0; k--) {
      arms[k].otherwise = k === arms.length - 1 ? otherwise : [arms[k + 1]];
      arms[k].range = { start: arms[k].range.start, end };
    }
    return arms[0];
  }

  /** One arm's condition: `case (1, 3:5)` is `s == 1 || (s >= 3 && s <= 5)`; `case default` has none. */
  private caseCondition(line: Line, selector: VExpr, isCase: boolean): VExpr | undefined {
    const t = line.toks;
    if (isId(t[line.head + 1], 'default') || t.length <= line.head + 1) return undefined;
    if (!isCase) return { kind: 'opaque', text: line.text.raw };
    const open = line.head + 1;
    const close = closeOf(t, open);
    if (!isOp(t[open], '(') || close < 0) return { kind: 'opaque', text: line.text.raw };
    let out: VExpr | undefined;
    for (const [a, b] of splitTop(t, open + 1, close, ',')) {
      const parts = splitTop(t, a, b, ':');
      let test: VExpr;
      if (parts.length === 1) test = { kind: 'bin', op: '==', left: selector, right: value(line, this.ctx, a, b) };
      else {
        const [lo, hi] = parts;
        const ge: VExpr | undefined = lo[1] > lo[0] ? { kind: 'bin', op: '>=', left: selector, right: value(line, this.ctx, lo[0], lo[1]) } : undefined;
        const le: VExpr | undefined = hi[1] > hi[0] ? { kind: 'bin', op: '<=', left: selector, right: value(line, this.ctx, hi[0], hi[1]) } : undefined;
        test = ge && le ? { kind: 'bin', op: '&&', left: ge, right: le } : ge ?? le ?? { kind: 'opaque', text: '' };
      }
      out = out ? { kind: 'bin', op: '||', left: out, right: test } : test;
    }
    return out ?? { kind: 'opaque', text: line.text.raw };
  }

  /**
   * SELECT CASE as a chain of IfStmts: each `case` tests the selector, later cases sit in the
   * previous one's `otherwise`, and `case default` is the last `otherwise` wherever it is written,
   * because it runs only when no other case matches (Fortran 2008 §8.1.8.2, from memory).
   */
  private selectConstruct(line: Line): Stmt[] {
    const t = line.toks;
    const isCase = /^select(case)?$/.test(t[line.head].v) && (t[line.head].v === 'selectcase' || isId(t[line.head + 1], 'case'));
    const c = this.condition(line, line.head);
    const start = lineRange(line).start;
    let end = lineRange(line).end;
    this.block({ kind: 'select' });
    const arms: { line: Line; cond?: VExpr; body: Stmt[] }[] = [];
    for (;;) {
      const arm = lineOf(this.cursor.peek(), 'case');
      if (arm) {
        this.cursor.next();
        const body = this.block({ kind: 'select' });
        arms.push({ line: arm, cond: this.caseCondition(arm, c.condition, isCase), body });
        end = lastEnd(body) ?? lineRange(arm).end;
        continue;
      }
      const endSelect = lineOf(this.cursor.peek(), 'end-select');
      if (endSelect) {
        this.cursor.next();
        end = lineRange(endSelect).end;
      }
      break;
    }
    let otherwise: Stmt[] = arms.find((a) => !a.cond)?.body ?? [];
    const tests = arms.filter((a) => a.cond);
    for (let k = tests.length - 1; k >= 0; k--) {
      const a = tests[k];
      const s: IfStmt = {
        kind: 'if', condition: a.cond!, conditionText: a.line.text.raw, then: a.body, otherwise,
        range: { start: k === 0 ? start : lineRange(a.line).start, end }, directives: [],
      };
      otherwise = [s];
    }
    if (tests.length === 0 && otherwise.length > 0) return [{ kind: 'block', body: otherwise, range: { start, end }, directives: [] }];
    return otherwise;
  }

  /** BLOCK, ASSOCIATE and CRITICAL constructs keep their statements together in a BlockStmt. */
  private blockConstruct(line: Line): Stmt {
    const body = this.block({ kind: 'block' });
    let end = lastEnd(body) ?? lineRange(line).end;
    const n = lineOf(this.cursor.peek(), 'end-block');
    if (n) {
      this.cursor.next();
      end = lineRange(n).end;
    }
    return { kind: 'block', body, range: { start: lineRange(line).start, end }, directives: [] };
  }
}
