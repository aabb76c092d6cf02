/**
 * Builds model statements from C/C++ statement nodes: loops with normalised bounds, assignments,
 * calls, branches, and directives attached to the statement they govern.
 */
import * as S from '../../symbolic';
import type { Declaration, LoopStmt, Stmt, VExpr } from '../../model/program';
import { toSymbolic } from '../../model/values';
import type { Directive, Finding } from '../../types';
import { readDirective } from '../../directives/reader';
import { isStandaloneDirective } from '../../model/directives';
import type { CExpressionBuilder } from './expressions';
import { normaliseName } from './expressions';
import { readDeclaration } from './declarations';
import { type Node, field, namedChildren, operatorOf, rangeOf, unparen } from './nodes';
import type { MacroTable } from './macros';
import type { Range, SourceLanguage } from '../../types';
import type { MacroDef } from '../../preprocessor';
import { expandDirectiveMacros, markExpanded } from '../../directives/macros';

export interface StatementContext {
  text: string;
  language: SourceLanguage;
  exprs: CExpressionBuilder;
  macros: MacroTable;
  directives: Directive[];
  findings: Finding[];
  /** Receives every local declaration met in a body. */
  declare(d: Declaration): void;
  /** The preprocessor's macros (file and headers), for directive lines. */
  ppMacros: ReadonlyMap<string, MacroDef>;
}

export class CStatementBuilder {
  /** Loop variables of the enclosing loops, to flag triangular bounds. */
  private readonly loopVars: string[] = [];

  constructor(private readonly ctx: StatementContext) {}

  /** Statements of a body node (compound statement or a single statement). */
  block(node: Node | undefined): Stmt[] {
    if (!node) return [];
    if (node.type === 'compound_statement' || node.type === 'else_clause') return this.list(namedChildren(node));
    return this.list([node]);
  }

  /** Converts a sequence of sibling nodes, attaching construct directives to the next statement. */
  list(nodes: Node[]): Stmt[] {
    const out: Stmt[] = [];
    let k = 0;
    while (k < nodes.length) {
      const taken = this.take(nodes, k);
      out.push(...taken.stmts);
      k = taken.next;
    }
    return out;
  }

  /**
   * Reads the statement starting at nodes[k] with the directives before it. A `for` followed by a
   * pragma and then its body (`for (…)\n#pragma acc loop\nfor (…)`) is common in ported code;
   * tree-sitter gives such a loop an empty body and makes the pragma and the real body its
   * siblings, so the loop takes the next statement (with its pragmas) back as its body here.
   */
  private take(nodes: Node[], k: number): { stmts: Stmt[]; next: number } {
    const pending: Directive[] = [];
    const out: Stmt[] = [];
    let i = k;
    while (i < nodes.length && ['preproc_call', 'preproc_def', 'preproc_function_def'].includes(nodes[i].type)) {
      const n = nodes[i++];
      // Definitions are the preprocessor's (file and headers, conditionals applied); skip them.
      if (n.type !== 'preproc_call') continue;
      const d = this.directive(n);
      if (!d) continue;
      if (isStandaloneDirective(d)) out.push({ kind: 'directive', directive: d, range: d.range, directives: [] });
      else pending.push(d);
    }
    if (i >= nodes.length) {
      for (const d of pending) {
        this.ctx.findings.push({
          code: 'directive-syntax',
          severity: 'error',
          range: d.range,
          message: `\`${d.construct}\` must be followed by the statement it applies to (a loop or a structured block); nothing follows it here.`,
        });
      }
      return { stmts: out, next: i };
    }
    const n = nodes[i];
    let stmts: Stmt[];
    let next = i + 1;
    if (hasDetachedBody(n) && next < nodes.length) {
      const body = this.withLoopScope(n, () => this.take(nodes, next));
      stmts = [this.forLoop(n, body.stmts)];
      next = body.next;
    } else {
      stmts = this.statement(n);
    }
    if (stmts.length > 0 && pending.length > 0) stmts[0].directives.push(...pending);
    else if (pending.length > 0) {
      // A directive before a declaration without initialiser: keep it on the next statement.
      const rest = this.take(nodes, next);
      if (rest.stmts.length > 0) rest.stmts[0].directives.unshift(...pending);
      return { stmts: [...out, ...rest.stmts], next: rest.next };
    }
    return { stmts: [...out, ...stmts], next };
  }

  /** Reads a `#pragma` line; non-offload pragmas (`#pragma once`, `#pragma GCC …`) give undefined. */
  directive(n: Node): Directive | undefined {
    const dir = field(n, 'directive');
    if (!dir || dir.text.replace(/\s+/g, '') !== '#pragma') return undefined;
    const arg = field(n, 'argument');
    if (!arg || !/^\s*(acc|omp)\b/.test(arg.text)) return undefined;
    const slice = this.ctx.text.slice(n.startIndex, arg.endIndex);
    const expanded = expandDirectiveMacros(slice, this.ctx.ppMacros);
    const result = readDirective(expanded.text, { line: n.startPosition.row, col: n.startPosition.column }, this.ctx.language);
    if (expanded.changed) {
      // Positions in the expanded text are not positions in the file: every range becomes the
      // directive's own, and edits of its clauses are not offered (see Directive.macroExpanded).
      const whole = rangeOf(n);
      for (const f of result.findings) f.range = whole;
      if (result.directive) markExpanded(result.directive, whole);
    }
    for (const name of expanded.unterminated) {
      this.ctx.findings.push({ code: 'directive-syntax', severity: 'error', range: rangeOf(n), message: `The macro \`${name}\` in this directive has no closing parenthesis for its arguments.` });
    }
    this.ctx.findings.push(...result.findings);
    // Section bounds may use the file's macros (`p[IDX(i,j,k):1]`); read them as C expressions here.
    for (const c of result.directive?.clauses ?? []) {
      for (const v of c.vars ?? []) {
        for (const d of v.dims) {
          d.exprs = {
            lower: d.lower !== undefined ? this.ctx.exprs.parseStandalone(d.lower) : undefined,
            length: d.length !== undefined ? this.ctx.exprs.parseStandalone(d.length) : undefined,
          };
        }
      }
    }
    if (result.directive) this.ctx.directives.push(result.directive);
    return result.directive;
  }

  statement(n: Node): Stmt[] {
    const range = rangeOf(n);
    switch (n.type) {
      case 'compound_statement':
        return [{ kind: 'block', body: this.block(n), range, directives: [] }];
      case 'expression_statement': {
        const e = namedChildren(n)[0];
        // The statement's range includes its `;`, so edits can tell what else shares the line.
        return e ? this.expressionStatement(e).map((st) => ({ ...st, range: st.range === undefined ? range : mergeEnd(st.range, range) })) : [];
      }
      case 'declaration':
        return this.declaration(n);
      case 'for_statement':
        return [this.forLoop(n)];
      case 'for_range_loop':
        return [this.loopWithoutBounds(n, field(n, 'declarator')?.text, field(n, 'body'))];
      case 'while_statement':
      case 'do_statement': {
        const loop = this.loopWithoutBounds(n, undefined, field(n, 'body'));
        // The test is kept for the step-counter pass (model/stepCounters.ts), which reads the
        // counter and the bound of `while (err > tol && iter < iter_max)` from it.
        const cond = field(n, 'condition');
        if (cond) loop.condition = this.ctx.exprs.value(unparen(cond));
        if (n.type === 'do_statement') loop.testAfterBody = true;
        return [loop];
      }
      case 'if_statement': {
        const cond = field(n, 'condition');
        const condNode = cond ? unparen(cond) : undefined;
        const alt = field(n, 'alternative');
        return [{
          kind: 'if',
          condition: this.ctx.exprs.value(condNode),
          conditionText: condNode?.text ?? '',
          then: this.block(field(n, 'consequence')),
          otherwise: alt ? this.block(alt.type === 'else_clause' ? namedChildren(alt)[0] : alt) : [],
          range,
          directives: [],
        }];
      }
      case 'preproc_if':
      case 'preproc_ifdef': {
        // Only the first branch is analysed: it is the configuration the file defines by default.
        const inner = namedChildren(n).filter((c) => c !== field(n, 'name') && c !== field(n, 'condition') && c !== field(n, 'alternative'));
        return [{ kind: 'block', body: this.list(inner), range, directives: [] }];
      }
      case 'labeled_statement':
        return this.list(namedChildren(n).filter((c) => c.type !== 'statement_identifier'));
      case 'return_statement': {
        const v = namedChildren(n)[0];
        return [{ kind: 'other', text: n.text, values: v ? [this.ctx.exprs.value(v)] : [], range, directives: [] }];
      }
      case 'ERROR':
        // Tree-sitter keeps what it could read inside an error node; analyse the readable parts.
        return this.list(namedChildren(n));
      default:
        return [{ kind: 'other', text: n.text, values: [], range, directives: [] }];
    }
  }

  private expressionStatement(e: Node): Stmt[] {
    const range = rangeOf(e);
    const node = unparen(e);
    if (node.type === 'comma_expression') {
      return [...this.expressionStatement(field(node, 'left') ?? node), ...this.expressionStatement(field(node, 'right') ?? node)];
    }
    if (node.type === 'assignment_expression') {
      const left = field(node, 'left');
      const op = operatorOf(node);
      const value = this.ctx.exprs.value(field(node, 'right'));
      return [this.assignment(left, op, value, range)];
    }
    if (node.type === 'update_expression') {
      const op = operatorOf(node) === '--' ? '-=' : '+=';
      return [this.assignment(field(node, 'argument'), op, { kind: 'num', text: '1', isFloat: false }, range)];
    }
    if (node.type === 'call_expression') {
      const v = this.ctx.exprs.value(node);
      if (v.kind === 'call') {
        const argsNode = field(node, 'arguments');
        return [{ kind: 'call', name: v.name, args: v.args, argText: namedChildren(argsNode ?? node).map((a) => a.text), range, directives: [] }];
      }
      return [{ kind: 'other', text: e.text, values: [v], range, directives: [] }];
    }
    return [{ kind: 'other', text: e.text, values: [this.ctx.exprs.value(node)], range, directives: [] }];
  }

  private assignment(left: Node | undefined, op: string, value: VExpr, range: Stmt['range']): Stmt {
    const l = left ? unparen(left) : undefined;
    if (l?.type === 'subscript_expression') {
      const access = this.ctx.exprs.access(l, true, op !== '=');
      if (access) return { kind: 'assign', target: { kind: 'index', access }, op, value, range, directives: [] };
    }
    if (l?.type === 'call_expression' || (l?.type === 'identifier' && this.ctx.macros.objects.get(l.text)?.body.includes('['))) {
      // An index macro on the left (`AT(u,i,j) = …`, `CENTRE = …`) expands to the element it names.
      const v = this.ctx.exprs.value(l);
      if (v.kind === 'index') {
        const access = { ...v.access, isWrite: true, isRead: op !== '=' };
        return { kind: 'assign', target: { kind: 'index', access }, op, value, range, directives: [] };
      }
    }
    if (l?.type === 'pointer_expression') {
      // `*p = v` writes element 0 of p; model it as an access so coherence analyses see the write.
      const base = field(l, 'argument');
      const name = base ? normaliseName(unparen(base).text) : '?';
      const zero: VExpr = { kind: 'num', text: '0', isFloat: false };
      const access = { array: name, subscripts: [S.num(0)], subscriptText: ['0'], subscriptValues: [zero], isWrite: true, isRead: op !== '=', range: rangeOf(l) };
      return { kind: 'assign', target: { kind: 'index', access }, op, value, range, directives: [] };
    }
    return { kind: 'assign', target: { kind: 'var', name: l ? normaliseName(l.text) : '?' }, op, value, range, directives: [] };
  }

  private declaration(n: Node): Stmt[] {
    const out: Stmt[] = [];
    for (const { decl, init } of readDeclaration(n, 'local', this.ctx.exprs)) {
      this.ctx.declare(decl);
      if (!init || init.type === 'initializer_list' || init.type === 'argument_list') continue;
      const value = this.ctx.exprs.value(init);
      out.push({ kind: 'assign', target: { kind: 'var', name: decl.name }, op: '=', value, range: rangeOf(n), directives: [] });
    }
    return out;
  }

  private loopWithoutBounds(n: Node, variable: string | undefined, body: Node | undefined): LoopStmt {
    const header = this.ctx.text.slice(n.startIndex, body ? body.startIndex : n.endIndex).trim();
    const kw = n.child(0);
    return {
      kind: 'loop',
      variable,
      header,
      keywordRange: kw ? rangeOf(kw) : rangeOf(n),
      body: this.block(body),
      range: rangeOf(n),
      directives: [],
    };
  }

  /**
   * Reads `for (init; cond; update)` into inclusive bounds and a positive step. Decreasing loops
   * are normalised to the same increasing range, since every analysis here is order-independent.
   */
  private forLoop(n: Node, detachedBody?: Stmt[]): LoopStmt {
    const body = detachedBody ? undefined : field(n, 'body');
    const loop = this.loopWithoutBounds(n, undefined, undefined);
    const init = readInit(field(n, 'initializer'), this.ctx.exprs);
    const stepInfo = readStep(field(n, 'update'), this.ctx.exprs);
    const variable = init?.variable ?? stepInfo?.variable;
    loop.variable = variable;
    if (variable) {
      this.ctx.declare({ name: variable, type: { name: 'int', bytes: 4, isFloat: false }, dims: [], isPointer: false, isArray: false, isConst: false, scope: 'local', range: loop.range });
    }
    const condNode = field(n, 'condition');
    const whole = readCondition(condNode, variable, this.ctx.exprs);
    // `for (it = 0; err > tol && it < n; it++)`: a conjunct bounds the count from above.
    const part = whole ? undefined : conjuncts(condNode).map((c) => readCondition(c, variable, this.ctx.exprs)).find((c) => c && (c.op === '<' || c.op === '<=' || c.op === '>' || c.op === '>='));
    const cond = whole ?? part;
    if (!stepInfo) {
      // No update in the header (`for (;;)`, `for (; it < n;)`): a while loop in other words,
      // whose counter, if any, is stepped in the body.
      loop.variable = undefined;
      if (condNode) loop.condition = this.ctx.exprs.value(unparen(condNode));
      if (init) loop.initial = { name: init.variable, value: init.start };
    }
    if (init && stepInfo && cond && variable && init.variable === stepInfo.variable) {
      const increasing = stepInfo.sign > 0;
      const bound = cond.bound;
      let lower: S.Expr | undefined;
      let upper: S.Expr | undefined;
      if (increasing && (cond.op === '<' || cond.op === '!=')) { lower = init.start; upper = S.sub(bound, S.num(1)); }
      else if (increasing && cond.op === '<=') { lower = init.start; upper = bound; }
      else if (!increasing && cond.op === '>') { upper = init.start; lower = S.add(bound, S.num(1)); }
      else if (!increasing && cond.op === '>=') { upper = init.start; lower = bound; }
      if (lower && upper && cond.tiles) {
        // A tile: of `min(n, it + T)` the side whose count does not move with the enclosing
        // loops (T) is the count of every full tile; the edge tile runs fewer, so it is a bound.
        const inner = new Set(this.loopVars);
        const sides = cond.tiles.map((b) => (cond.op === '<' ? S.sub(b, S.num(1)) : b));
        const k = sides.findIndex((u) => !S.freeSymbols(S.tripCount(lower!, u, stepInfo.step)).some((v) => inner.has(v)));
        if (k >= 0) upper = sides[k];
        else lower = upper = undefined;
        if (upper) loop.tripCountIsBound = true;
      }
      if (lower && upper) {
        loop.lower = lower;
        loop.upper = upper;
        loop.step = stepInfo.step;
        loop.tripCount = S.tripCount(lower, upper, stepInfo.step);
        if (part) loop.tripCountIsBound = true;
        const mentioned = new Set([...S.freeSymbols(lower), ...S.freeSymbols(upper)]);
        loop.triangular = this.loopVars.some((v) => mentioned.has(v)) || undefined;
      }
    }
    loop.header = this.ctx.text.slice(n.startIndex, body ? body.startIndex : n.endIndex).trim().replace(/;$/, '');
    if (detachedBody) {
      loop.body = detachedBody;
      const last = detachedBody[detachedBody.length - 1];
      if (last) loop.range = { start: loop.range.start, end: last.range.end };
      return loop;
    }
    this.loopVars.push(variable ?? '');
    try {
      loop.body = this.block(body);
    } finally {
      this.loopVars.pop();
    }
    return loop;
  }

  /** Runs `f` with the loop's variable counted as an enclosing loop variable (for triangular bounds). */
  private withLoopScope<T>(n: Node, f: () => T): T {
    const init = field(n, 'initializer');
    const decl = init?.type === 'declaration' ? namedChildren(init).find((c) => c.type === 'init_declarator') : undefined;
    const name = decl ? field(decl, 'declarator')?.text : init?.type === 'assignment_expression' ? field(init, 'left')?.text : undefined;
    this.loopVars.push(name ?? '');
    try {
      return f();
    } finally {
      this.loopVars.pop();
    }
  }
}

function readInit(node: Node | undefined, exprs: CExpressionBuilder): { variable: string; start: S.Expr } | undefined {
  if (!node) return undefined;
  let name: Node | undefined;
  let value: Node | undefined;
  if (node.type === 'declaration') {
    const d = namedChildren(node).find((c) => c.type === 'init_declarator');
    name = d ? field(d, 'declarator') : undefined;
    value = d ? field(d, 'value') : undefined;
  } else if (node.type === 'assignment_expression' && operatorOf(node) === '=') {
    name = field(node, 'left');
    value = field(node, 'right');
  } else if (node.type === 'comma_expression') {
    return readInit(field(node, 'left'), exprs);
  }
  if (!name || !value || name.type !== 'identifier') return undefined;
  const start = toSymbolic(exprs.value(value));
  return start ? { variable: name.text, start } : undefined;
}

function readStep(node: Node | undefined, exprs: CExpressionBuilder): { variable: string; step: S.Expr; sign: 1 | -1 } | undefined {
  if (!node) return undefined;
  const n = unparen(node);
  if (n.type === 'update_expression') {
    const arg = field(n, 'argument');
    if (arg?.type !== 'identifier') return undefined;
    return { variable: arg.text, step: S.num(1), sign: operatorOf(n) === '--' ? -1 : 1 };
  }
  if (n.type === 'assignment_expression') {
    const left = field(n, 'left');
    const right = field(n, 'right');
    if (left?.type !== 'identifier' || !right) return undefined;
    const op = operatorOf(n);
    if (op === '+=' || op === '-=') {
      const s = toSymbolic(exprs.value(right));
      if (!s) return undefined;
      return signed(left.text, op === '+=' ? s : S.neg(s));
    }
    if (op === '=') {
      // `i = i + s` or `i = i - s`
      const v = toSymbolic(exprs.value(right));
      if (!v) return undefined;
      const parts = S.affine(v, [left.text]);
      const coeff = parts?.coeffs.get(left.text);
      if (!parts || !coeff || S.constValue(coeff) !== 1) return undefined;
      return signed(left.text, parts.rest);
    }
  }
  if (n.type === 'comma_expression') return readStep(field(n, 'left'), exprs);
  return undefined;
}

function signed(variable: string, delta: S.Expr): { variable: string; step: S.Expr; sign: 1 | -1 } | undefined {
  const c = S.constValue(delta);
  if (c === undefined) return { variable, step: delta, sign: 1 };
  if (c === 0) return undefined;
  return c > 0 ? { variable, step: S.num(c), sign: 1 } : { variable, step: S.num(-c), sign: -1 };
}

/** The operands of a `&&` chain (one node when the condition is not a conjunction). */
function conjuncts(node: Node | undefined): Node[] {
  if (!node) return [];
  const n = unparen(node);
  if (n.type === 'binary_expression' && operatorOf(n) === '&&') return [...conjuncts(field(n, 'left')), ...conjuncts(field(n, 'right'))];
  return [n];
}

const mirror: Record<string, string> = { '<': '>', '<=': '>=', '>': '<', '>=': '<=', '!=': '!=' };

/**
 * The two sides of a `min` a tiled loop is bounded by: `MIN(n, it + T)` (a macro's conditional
 * `a < b ? a : b`), `min(…)`, `std::min(…)`, `fmin(…)`. Undefined for anything else.
 */
function minOperands(v: VExpr): [S.Expr, S.Expr] | undefined {
  if (v.kind === 'call' && /^(std::|::)?(min|fmin|MIN)$/.test(v.name) && v.args.length === 2) {
    const a = toSymbolic(v.args[0]);
    const b = toSymbolic(v.args[1]);
    return a && b ? [a, b] : undefined;
  }
  if (v.kind === 'cond' && v.test.kind === 'bin' && (v.test.op === '<' || v.test.op === '<=' || v.test.op === '>' || v.test.op === '>=')) {
    const [l, r] = [toSymbolic(v.test.left), toSymbolic(v.test.right)];
    const [t, e] = [toSymbolic(v.then), toSymbolic(v.else)];
    if (!l || !r || !t || !e) return undefined;
    const same = (x: S.Expr, y: S.Expr): boolean => S.toString(S.sub(x, y)) === '0';
    // a < b ? a : b and a > b ? b : a are min(a, b).
    const less = v.test.op === '<' || v.test.op === '<=';
    if (less ? same(t, l) && same(e, r) : same(t, r) && same(e, l)) return [l, r];
  }
  return undefined;
}

function readCondition(node: Node | undefined, variable: string | undefined, exprs: CExpressionBuilder): { op: string; bound: S.Expr; tiles?: [S.Expr, S.Expr] } | undefined {
  if (!node || !variable) return undefined;
  const n = unparen(node);
  if (n.type !== 'binary_expression') return undefined;
  const op = operatorOf(n);
  if (!(op in mirror)) return undefined;
  const left = field(n, 'left');
  const right = field(n, 'right');
  if (!left || !right) return undefined;
  const lv = unparen(left);
  const rv = unparen(right);
  if (lv.type === 'identifier' && lv.text === variable) {
    const value = exprs.value(rv);
    const bound = toSymbolic(value);
    if (bound) return { op, bound };
    // `i < MIN(n, it + T)`: the bound of a tile; the caller picks the side that gives a count.
    const tiles = op === '<' || op === '<=' ? minOperands(value) : undefined;
    return tiles ? { op, bound: tiles[0], tiles } : undefined;
  }
  if (rv.type === 'identifier' && rv.text === variable) {
    const bound = toSymbolic(exprs.value(lv));
    return bound ? { op: mirror[op], bound } : undefined;
  }
  return undefined;
}


/** The statement range of a single expression statement is the expression plus its `;`. */
function mergeEnd(inner: Stmt['range'], outer: Stmt['range']): Stmt['range'] {
  return inner.start.line === outer.start.line && inner.start.col === outer.start.col ? outer : inner;
}

/** A `for`/`while` whose body tree-sitter left empty because a pragma came between header and body. */
function hasDetachedBody(n: Node): boolean {
  if (n.type !== 'for_statement') return false;
  const body = field(n, 'body');
  return !!body && body.type === 'expression_statement' && body.text.trim() === '' && body.hasError;
}
