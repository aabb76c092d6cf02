/**
 * Step counters of loops without a counted header. Time loops are often written
 * `while (err > tol && iter < iter_max) { …; iter++; }`, `while (1) { …; if (step >= n) break;
 * step++; }` or Fortran `do while (it < itmax) … it = it + 1`: the loop has no induction
 * variable of its own, but a scalar incremented by one exactly once per pass is one. This pass
 * (run by both front ends on the finished model) makes that scalar the loop's `variable`, so
 * every-K guards (`iter % 100 == 0`) and the hover can use it, and reads the count:
 *
 * - from a test of the header, `c < E` (E − start passes) or `c <= E` (E − start + 1), alone or
 *   as one conjunct of `&&` / `.and.`; with other conjuncts the count is an upper bound;
 * - from a top-level `if (c >= E) break` (or `exit`) when the header has no test: the counter
 *   seen by the test is start + k (+1 when the increment comes first) in pass k, so the loop
 *   is entered E − start + 1 times (E − start when the increment precedes the test, or when
 *   the test is the first statement and so acts as the header's test).
 *
 * Any other way out (`break`, `return`, `goto`, `exit`, `stop`) makes the count an upper bound
 * (`tripCountIsBound`). A loop whose count stays unknown gets a symbol named after its counter
 * (`steps_iter`), its header's variable (`trips_i`), or its procedure and rank (`trips_main_1`),
 * so a binding survives lines being added above it; `legacyTripSymbols` maps the old line-based
 * names (`trips_L20`).
 */
import * as S from '../symbolic';
import type { Range } from '../types';
import type { Declaration, LoopStmt, Procedure, ProgramModel, Stmt, StepCounter, VExpr } from './program';
import { childStatements, printValue, toSymbolic, walkStatements } from './values';

/** Runs the pass over a model in place; `marked` holds the 0-based lines our annotation marks. */
export function readStepCounters(model: ProgramModel, marked: ReadonlySet<number> = new Set()): void {
  // Fortran's CONTINUE does nothing; only CYCLE skips the rest of a pass.
  skip = model.language === 'fortran' ? /^\s*cycle\b/i : /^\s*continue\b/;
  globals = model.globals;
  const taken = new Set<string>();
  for (const g of model.globals) taken.add(g.name);
  for (const p of model.procedures) {
    for (const d of [...p.params, ...p.locals]) taken.add(d.name);
  }
  for (const proc of model.procedures) {
    let rank = 0;
    const visit = (stmts: Stmt[], outer: Frame[]): void => {
      stmts.forEach((s, k) => {
        const frames = [...outer, { stmts, index: k, loop: s.kind === 'loop' }];
        if (s.kind === 'loop') {
          if (marked.has(s.keywordRange.start.line)) s.markedTimeLoop = true;
          if (!s.tripCount && !s.implied && !s.variable) readCounter(s, proc, outer.concat({ stmts, index: k, loop: false }));
          else if (s.tripCount && !s.implied && exitsOf(s.body).length > 0) s.tripCountIsBound = true;
          if (!s.tripCount && !s.implied) {
            // A step counter names the steps (`steps_iter`); a header's own variable names the
            // trips of a loop whose bounds are not affine (`trips_i`); otherwise the procedure does.
            const base = s.counter ? `steps_${s.variable}` : s.variable ? `trips_${s.variable}` : `trips_${proc.name}_${++rank}`;
            s.tripSymbol = unique(base.replace(/\W+/g, '_'), taken);
            s.tripCount = S.sym(s.tripSymbol);
            legacy.set(s, `trips_L${s.keywordRange.start.line + 1}`);
          }
        }
        if (s.kind === 'if') {
          visit(s.then, frames);
          visit(s.otherwise, frames);
        } else visit(childStatements(s), frames);
      });
    };
    visit(proc.body, []);
  }
}

/** The line-based names (`trips_L20`) older versions gave the loops this pass now names. */
const legacy = new WeakMap<LoopStmt, string>();

/** Old name → the loop's symbol, for the loops of a model (so `--bind trips_L20=…` still binds). */
export function legacyTripSymbols(model: ProgramModel): Map<string, string> {
  const out = new Map<string, string>();
  for (const p of model.procedures) {
    walkStatements(p.body, (s) => {
      if (s.kind !== 'loop' || !s.tripSymbol) return;
      const old = legacy.get(s);
      if (old && !out.has(old)) out.set(old, s.tripSymbol);
    });
  }
  return out;
}

function unique(name: string, taken: Set<string>): string {
  let out = name;
  for (let k = 2; taken.has(out); k++) out = `${name}_${k}`;
  taken.add(out);
  return out;
}

/** A statement list and the position of the statement being looked at in it. */
interface Frame {
  stmts: Stmt[];
  index: number;
  /** Set when the statement at `index` is a loop (its body runs many times). */
  loop: boolean;
}

const EXIT_TEXT = /^\s*(break|exit|return|go\s*to|goto|stop|error\s+stop)\b/i;
/** The statement that skips the rest of a pass in the language being read. */
let skip: RegExp = /^\s*continue\b/;
let globals: Declaration[] = [];

function readCounter(loop: LoopStmt, proc: Procedure, outer: Frame[]): void {
  const top = topLevel(loop.body);
  const candidates = top
    .map((s, k) => ({ s, k, name: incrementOf(s) }))
    .filter((c): c is { s: Stmt; k: number; name: string } => !!c.name && writesOf(loop.body, c.name) === 1 && !addressTaken(loop.body, c.name) && isScalar(c.name, proc));
  if (candidates.length === 0) return;
  const exits = exitsOf(loop.body);
  const conjuncts = loop.condition ? splitAnd(loop.condition) : [];
  const forever = !loop.condition || isTrue(loop.condition);
  // With two counters, the one the loop tests is the step counter.
  const tested = (name: string): boolean => conjuncts.some((c) => mentions(c, name)) || exits.some((e) => e.test && mentions(e.test, name));
  const pick = candidates.find((c) => tested(c.name)) ?? candidates[0];
  const name = pick.name;
  // A `continue` before the increment would skip it on some passes.
  if (pick.k > 0 && continues(loop.body)) return;
  const counter: StepCounter = { name, incrementRange: pick.s.range, otherExits: [] };
  // The header's own initialisation (`for (it = 0; it < n;)`) runs last before the loop.
  counter.start = loop.initial?.name === name ? loop.initial.value : startOf(name, outer, proc);
  const written = assignedNames(loop.body);
  const invariant = (e: S.Expr): boolean => S.freeSymbols(e).every((x) => x !== name && !written.has(x));
  let trips: S.Expr | undefined;
  let used: VExpr | undefined;
  if (!forever) {
    for (const c of conjuncts) {
      const b = upperTest(c, name);
      if (!b || !invariant(b.bound)) continue;
      used = c;
      counter.boundFrom = 'condition';
      counter.boundText = printValue(c);
      if (counter.start) trips = b.inclusive ? S.add(S.sub(b.bound, counter.start), S.num(1)) : S.sub(b.bound, counter.start);
      break;
    }
  }
  let breakExit: (typeof exits)[number] | undefined;
  if (!used && forever) {
    for (const e of exits) {
      if (!e.test || e.topIndex === undefined) continue;
      const b = breakTest(e.test, name);
      if (!b || !invariant(b.bound)) continue;
      breakExit = e;
      counter.boundFrom = 'break';
      counter.boundText = printValue(e.test);
      if (counter.start) {
        const incrementFirst = pick.k < e.topIndex;
        const atTop = e.topIndex === 0;
        const last = b.inclusive ? b.bound : S.add(b.bound, S.num(1));
        // Entered for counter values seen at the test: start + d … last, one pass per value.
        const entries = S.add(S.sub(last, counter.start), S.num(incrementFirst ? 0 : 1));
        trips = atTop && !incrementFirst ? S.sub(entries, S.num(1)) : entries;
      }
      break;
    }
  }
  for (const c of conjuncts) if (c !== used && !forever) counter.otherExits.push(`the test \`${printValue(c)}\``);
  for (const e of exits) if (e !== breakExit) counter.otherExits.push(`\`${e.word}\` at line ${e.range.start.line + 1}`);
  loop.variable = name;
  loop.counter = counter;
  if (!trips || !counter.start) return;
  const n = S.constValue(trips);
  if (n !== undefined && n < 0) trips = S.num(0);
  loop.tripCount = trips;
  loop.lower = counter.start;
  loop.upper = S.add(counter.start, trips, S.num(-1));
  loop.step = S.num(1);
  if (counter.otherExits.length > 0) loop.tripCountIsBound = true;
}

/** Statements at the top level of a body, looking through plain blocks (`{ … }`) only. */
function topLevel(stmts: Stmt[]): Stmt[] {
  return stmts.flatMap((s) => (s.kind === 'block' && s.directives.length === 0 ? topLevel(s.body) : [s]));
}

/** The scalar an increment-by-one statement increments: `c++`, `++c`, `c += 1`, `c = c + 1`, `c = 1 + c`. */
function incrementOf(s: Stmt): string | undefined {
  if (s.kind !== 'assign' || s.target.kind !== 'var' || s.directives.length > 0) return undefined;
  const name = s.target.name;
  const one = (e: VExpr): boolean => e.kind === 'num' && !e.isFloat && S.constValue(toSymbolic(e) ?? S.sym('?')) === 1;
  if (s.op === '+=') return one(s.value) ? name : undefined;
  if (s.op !== '=') return undefined;
  const v = s.value;
  if (v.kind !== 'bin' || v.op !== '+') return undefined;
  const isName = (e: VExpr): boolean => e.kind === 'var' && e.name === name;
  return (isName(v.left) && one(v.right)) || (isName(v.right) && one(v.left)) ? name : undefined;
}

/** How many statements in a body (at any depth) assign the scalar `name`. */
function writesOf(stmts: Stmt[], name: string): number {
  let n = 0;
  walkStatements(stmts, (s) => {
    if (s.kind === 'assign' && s.target.kind === 'var' && s.target.name === name) n++;
    if (s.kind === 'assign' && s.target.kind === 'index' && s.target.access.array === name) n += 2;
    if (s.kind === 'loop' && s.variable === name) n += 2;
  });
  return n;
}

/** `&c` passed or stored anywhere in the body: the counter may change behind the analysis' back. */
function addressTaken(stmts: Stmt[], name: string): boolean {
  let found = false;
  const look = (e: VExpr): void => {
    if (found) return;
    if (e.kind === 'unary' && e.op === '&' && e.operand.kind === 'var' && e.operand.name === name) found = true;
    else if (e.kind === 'bin') { look(e.left); look(e.right); }
    else if (e.kind === 'unary' || e.kind === 'cast') look(e.operand);
    else if (e.kind === 'call') e.args.forEach(look);
    else if (e.kind === 'cond') { look(e.test); look(e.then); look(e.else); }
  };
  walkStatements(stmts, (s) => {
    if (s.kind === 'assign') look(s.value);
    if (s.kind === 'call') s.args.forEach(look);
    if (s.kind === 'other') s.values.forEach(look);
  });
  return found;
}

function isScalar(name: string, proc: Procedure): boolean {
  const d: Declaration | undefined = proc.locals.find((x) => x.name === name) ?? proc.params.find((x) => x.name === name) ?? globals.find((x) => x.name === name);
  return !d || (!d.isArray && !d.isPointer && !d.type.isFloat);
}

function assignedNames(stmts: Stmt[]): Set<string> {
  const out = new Set<string>();
  walkStatements(stmts, (s) => {
    if (s.kind === 'assign' && s.target.kind === 'var') out.add(s.target.name);
    if (s.kind === 'loop' && s.variable) out.add(s.variable);
  });
  return out;
}

interface Exit {
  word: string;
  range: Range;
  /** The test of `if (test) break` when the exit is the whole branch. */
  test?: VExpr;
  /** Position among the body's top-level statements, for an `if (…) break` standing there. */
  topIndex?: number;
}

/**
 * The ways out of a loop's body: `break`/`exit` that belong to this loop (not to a nested loop;
 * a C `switch` is kept as one statement by the front end, so its breaks are not seen here),
 * and `return`, `goto`, `stop` at any depth.
 */
function exitsOf(body: Stmt[]): Exit[] {
  const out: Exit[] = [];
  const top = topLevel(body);
  // `inner` holds the construct names of the nested loops entered (Fortran `inner: do …`);
  // `exit inner` leaves only that loop, a bare `exit` (or C `break`) only the innermost.
  const visit = (stmts: Stmt[], inLoop: boolean, inner: string[]): void => {
    for (const s of stmts) {
      if (s.kind === 'other' || s.kind === 'call') {
        const word = s.kind === 'other' ? EXIT_TEXT.exec(s.text)?.[1] : ['exit', 'abort'].includes(s.name) ? s.name : undefined;
        if (!word) continue;
        const w = word.toLowerCase().replace(/\s+/g, ' ');
        const named = s.kind === 'other' && w === 'exit' ? /^\s*exit\s+([a-z_]\w*)/i.exec(s.text)?.[1]?.toLowerCase() : undefined;
        const ownedInside = (w === 'break' || (w === 'exit' && s.kind === 'other')) && (named ? inner.includes(named) : inLoop);
        if (ownedInside) continue;
        out.push({ word: w, range: s.range });
        continue;
      }
      if (s.kind === 'if') {
        const only = s.then.length === 1 && s.otherwise.length === 0 ? s.then[0] : undefined;
        const word = only && only.kind === 'other' ? EXIT_TEXT.exec(only.text)?.[1]?.toLowerCase() : undefined;
        if (only && only.kind === 'other' && !inLoop && (word === 'break' || (word === 'exit' && /^\s*exit\s*$/i.test(only.text)))) {
          const k = top.indexOf(s);
          out.push({ word, range: only.range, test: s.condition, topIndex: k >= 0 ? k : undefined });
          continue;
        }
        visit(s.then, inLoop, inner);
        visit(s.otherwise, inLoop, inner);
        continue;
      }
      if (s.kind === 'loop') {
        const name = /^\s*([a-z_]\w*)\s*:(?!:)/i.exec(s.header)?.[1]?.toLowerCase();
        visit(s.body, true, name ? [...inner, name] : inner);
      } else visit(childStatements(s), inLoop, inner);
    }
  };
  visit(body, false, []);
  return out;
}

/** True when the body has a `continue`/`cycle` of this loop. */
function continues(body: Stmt[]): boolean {
  let found = false;
  const visit = (stmts: Stmt[]): void => {
    for (const s of stmts) {
      if (s.kind === 'other' && skip.test(s.text)) found = true;
      if (s.kind !== 'loop') visit(childStatements(s));
    }
  };
  visit(body);
  return found;
}

/**
 * The counter's value when the loop starts: the last assignment `c = e` before the loop in the
 * same statement list, or in an enclosing one (through blocks and branches, not through an
 * enclosing loop, whose later passes would start from another value). Any other write of `c`
 * on the way makes it unknown. Without an assignment, the declaration's initial value counts.
 */
function startOf(name: string, frames: Frame[], proc: Procedure): S.Expr | undefined {
  for (let f = frames.length - 1; f >= 0; f--) {
    const { stmts, index } = frames[f];
    for (let k = index - 1; k >= 0; k--) {
      const s = stmts[k];
      if (s.kind === 'assign' && s.target.kind === 'var' && s.target.name === name) {
        return s.op === '=' ? toSymbolic(s.value) : undefined;
      }
      if (writesOf([s], name) > 0) return undefined;
    }
    if (f > 0 && frames[f - 1].loop) return undefined;
  }
  const d = proc.locals.find((x) => x.name === name);
  return d?.init;
}

function splitAnd(e: VExpr): VExpr[] {
  if (e.kind === 'bin' && (e.op === '&&' || e.op.toLowerCase() === '.and.')) return [...splitAnd(e.left), ...splitAnd(e.right)];
  return [e];
}

function isTrue(e: VExpr): boolean {
  if (e.kind === 'num') return !e.isFloat && e.text !== '0' && !/^0+[uUlL]*$/.test(e.text);
  return (e.kind === 'var' || e.kind === 'opaque') && /^(\.true\.|true)$/i.test(e.kind === 'var' ? e.name : e.text);
}

function mentions(e: VExpr, name: string): boolean {
  const s = toSymbolic(e);
  if (s) return S.freeSymbols(s).includes(name);
  if (e.kind === 'bin') return mentions(e.left, name) || mentions(e.right, name);
  if (e.kind === 'var') return e.name === name;
  if (e.kind === 'unary' || e.kind === 'cast') return mentions(e.operand, name);
  if (e.kind === 'call') return e.args.some((a) => mentions(a, name));
  return false;
}

const FLIP: Record<string, string> = { '<': '>', '<=': '>=', '>': '<', '>=': '<=', '==': '==' };

/** `c OP E` with the counter alone on one side, as `c OP E` (the other side flipped over). */
function comparison(e: VExpr, name: string): { op: string; bound: S.Expr } | undefined {
  if (e.kind !== 'bin' || !(e.op in FLIP)) return undefined;
  const isName = (x: VExpr): boolean => x.kind === 'var' && x.name === name;
  const other = isName(e.left) ? e.right : isName(e.right) ? e.left : undefined;
  if (!other) return undefined;
  const bound = toSymbolic(other);
  if (!bound || S.freeSymbols(bound).includes(name)) return undefined;
  return { op: isName(e.left) ? e.op : FLIP[e.op], bound };
}

/** A header test that lets the loop go on while `c < E` or `c <= E`. */
function upperTest(e: VExpr, name: string): { bound: S.Expr; inclusive: boolean } | undefined {
  const c = comparison(e, name);
  if (!c) return undefined;
  if (c.op === '<') return { bound: c.bound, inclusive: false };
  if (c.op === '<=') return { bound: c.bound, inclusive: true };
  return undefined;
}

/** A break test that leaves once `c >= E`, `c > E` or `c == E` (counting up from below E). */
function breakTest(e: VExpr, name: string): { bound: S.Expr; inclusive: boolean } | undefined {
  const c = comparison(e, name);
  if (!c) return undefined;
  if (c.op === '>=' || c.op === '==') return { bound: c.bound, inclusive: true };
  if (c.op === '>') return { bound: c.bound, inclusive: false };
  return undefined;
}
