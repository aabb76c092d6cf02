/**
 * DO headers to loop statements. A counted loop `do i = lo, hi[, step]` runs
 * max((hi - lo + step)/step, 0) times (Fortran 2008 §8.1.6.6.1, from memory); the model keeps
 * inclusive bounds in increasing order with a positive step, so `do i = n, 1, -1` has lower 1,
 * upper n and step 1, as the C front end normalises `for (i = n; i >= 1; i--)`.
 * `do concurrent (i = 1:n, j = 1:m)` and `forall` become nested loops in the order written.
 */
import * as S from '../../symbolic';
import type { LoopStmt, VExpr } from '../../model/program';
import type { Range } from '../../types';
import type { Line } from './classify';
import type { UnitContext } from './context';
import { declare } from './declarations';
import { rangeIn } from './source';
import { lineRange, tokRange, value } from './statements';
import { closeOf, findTop, isId, isOp, splitTop } from './tokens';

export interface LoopHeader {
  /** Outermost first; one loop except for `do concurrent` and `forall` with several indices. */
  loops: LoopStmt[];
  /** The terminating label of `do 10 i = …`, normalised (`010` → `10`). */
  label?: string;
  /** The scalar mask of `do concurrent`/`forall`, if any. */
  mask?: VExpr;
  maskText?: string;
}

export const normalLabel = (label: string | undefined): string | undefined => (label === undefined ? undefined : String(Number(label)));

function emptyLoop(line: Line, keywordRange: Range): LoopStmt {
  return { kind: 'loop', header: line.text.raw, keywordRange, body: [], range: lineRange(line), directives: [] };
}

/** Sets normalised bounds, step and trip count; leaves them unset when a bound is unreadable. */
function setBounds(loop: LoopStmt, lo: VExpr, hi: VExpr, st: VExpr | undefined, ctx: UnitContext): void {
  const l = ctx.env.symbolic(lo);
  const u = ctx.env.symbolic(hi);
  const s = st ? ctx.env.symbolic(st) : S.num(1);
  if (!l || !u || !s) return;
  const c = S.constValue(s);
  if (c === 0) return;
  const down = c !== undefined && c < 0;
  loop.lower = down ? u : l;
  loop.upper = down ? l : u;
  loop.step = down ? S.num(-c!) : s;
  loop.tripCount = S.tripCount(loop.lower, loop.upper, loop.step);
  const mentioned = new Set([...S.freeSymbols(loop.lower), ...S.freeSymbols(loop.upper)]);
  loop.triangular = ctx.loopVars.some((v) => mentioned.has(v)) || undefined;
}

function declareIndex(line: Line, ctx: UnitContext, at: number): string {
  const name = line.toks[at].v;
  if (!ctx.scope.lookup(name)) declare(ctx.declContext(line), name, tokRange(line, at, at + 1));
  return name;
}

/** `(i = 1:n, j = 1:m:2, mask)` of `do concurrent` and `forall`, with an optional `integer ::` prefix. */
export function concurrentHeader(line: Line, ctx: UnitContext, open: number, keywordRange: Range): LoopHeader {
  const { toks } = line;
  const close = closeOf(toks, open);
  const end = close < 0 ? toks.length : close;
  const colons = findTop(toks, open + 1, end, '::');
  const out: LoopHeader = { loops: [] };
  for (const [a, b] of splitTop(toks, colons >= 0 ? colons + 1 : open + 1, end, ',')) {
    const eq = findTop(toks, a, b, '=');
    if (eq === a + 1 && isId(toks[a])) {
      const loop = emptyLoop(line, keywordRange);
      loop.variable = declareIndex(line, ctx, a);
      const [lo, hi, st] = splitTop(toks, eq + 1, b, ':');
      if (lo && hi) setBounds(loop, value(line, ctx, lo[0], lo[1]), value(line, ctx, hi[0], hi[1]), st ? value(line, ctx, st[0], st[1]) : undefined, ctx);
      out.loops.push(loop);
    } else if (b > a) {
      out.mask = value(line, ctx, a, b);
      out.maskText = line.text.raw.slice(toks[a].s, toks[b - 1].e);
    }
  }
  if (out.loops.length === 0) out.loops.push(emptyLoop(line, keywordRange));
  for (let k = 0; k + 1 < out.loops.length; k++) out.loops[k].body = [out.loops[k + 1]];
  return out;
}

export function doHeader(line: Line, ctx: UnitContext): LoopHeader {
  const { toks } = line;
  const kw = toks[line.head];
  const keywordRange = rangeIn(line.text, kw.s, kw.s + 2);
  const merged = kw.v === 'dowhile' ? 'while' : kw.v === 'doconcurrent' ? 'concurrent' : '';
  let i = line.head + 1;
  let label: string | undefined;
  if (!merged && toks[i]?.t === 'int') {
    label = normalLabel(toks[i].v);
    i++;
  }
  if (isOp(toks[i], ',')) i++;
  const word = merged || (isId(toks[i]) && !isOp(toks[i + 1], '=') ? toks[i].v : '');
  if (word === 'concurrent') {
    const h = concurrentHeader(line, ctx, merged ? i : i + 1, keywordRange);
    return { ...h, label };
  }
  const loop = emptyLoop(line, keywordRange);
  if (word === '' && isId(toks[i]) && isOp(toks[i + 1], '=')) {
    loop.variable = declareIndex(line, ctx, i);
    const parts = splitTop(toks, i + 2, toks.length, ',');
    if (parts.length >= 2) {
      const v = ([a, b]: [number, number]): VExpr => value(line, ctx, a, b);
      setBounds(loop, v(parts[0]), v(parts[1]), parts[2] ? v(parts[2]) : undefined, ctx);
    }
  }
  // `do while (…)` and a bare `do` have no induction variable and no trip count; the test of
  // `do while` is kept for the step-counter pass (model/stepCounters.ts).
  const w = merged === 'while' ? i : word === 'while' ? i + 1 : -1;
  if (w >= 0 && isOp(toks[w], '(')) {
    const close = closeOf(toks, w);
    if (close > w + 1) loop.condition = value(line, ctx, w + 1, close);
  }
  return { loops: [loop], label };
}
