/**
 * Variable lists and array sections.
 *
 * C and C++ sections are `name[lower:length]` per dimension, written outermost first
 * (OpenACC 3.3 §2.7.1, OpenMP 5.2 §3.2.5); Fortran sections are `name(lower:upper, ...)` with an
 * inclusive upper bound. A plain subscript (`a[i]`, `a(i,:)`) is a one-element dimension.
 * Members (`p.x`, `p->x`, `s%u`) belong to the name; when a member follows a subscript, as in
 * `a[i].x[0:n]`, the earlier subscript is folded into the name too, because the section that
 * matters for data movement is the one of the last member.
 *
 * Fortran names and bound expressions are lower-cased, since Fortran is case-insensitive and
 * later passes must be able to match `N` with `n`; `text` always keeps the source spelling.
 * Strides are accepted but not kept, because SectionDim has no place for them.
 */
import type { SectionDim, VarRef } from '../types';
import { norm, report, slice, type ReadCtx } from './context';
import { matchGroup, readWord, skipSpace, splitTop, trimSpan, type Span } from './scanner';
import { range } from './source';

/** Parses a comma-separated variable list in body[from, to). Bad items are reported and skipped. */
export function parseVarList(ctx: ReadCtx, from: number, to: number): VarRef[] {
  const s = ctx.src.body;
  const out: VarRef[] = [];
  if (slice(ctx, from, to) === '') {
    // Only reachable after a modifier or type, as in `copyin(readonly:)`: point at the colon.
    report(ctx, from - 1, from, 'missing variable list');
    return out;
  }
  const items = splitTop(s, from, to, ',');
  items.forEach((raw, k) => {
    const item = trimSpan(s, raw);
    if (item.start === item.end) {
      // Point at the extra comma: the one after the gap, or the trailing one at the end of the list.
      const comma = k < items.length - 1 ? raw.end : raw.start - 1;
      report(ctx, comma, comma + 1, 'empty item in the variable list');
      return;
    }
    const v = parseVarRef(ctx, item);
    if (v) out.push(v);
  });
  return out;
}

/** Parses one list item such as `a[0:n][1:m-2]`, `s%u(1:n)` or `/blk/`. */
export function parseVarRef(ctx: ReadCtx, item: Span): VarRef | undefined {
  const s = ctx.src.body;
  const { start, end } = item;
  let i = start;
  let nameEnd: number;
  if (s[i] === '(' && !ctx.fortran) {
    // A parenthesised base expression, as in `(p+10)[:N]`, names the storage as a whole.
    const g = matchGroup(s, i, end);
    if (!g.ok) return bad(ctx, item, 'unbalanced parentheses in the list item');
    i = nameEnd = g.close + 1;
  } else if (s[i] === '/' && ctx.fortran) {
    // A Fortran common block name, `/blk/`.
    const w = readWord(s, skipSpace(s, i + 1, end));
    const close = w ? skipSpace(s, w.end, end) : -1;
    if (!w || s[close] !== '/') return bad(ctx, item, 'expected a common block name such as /blk/');
    i = nameEnd = close + 1;
  } else {
    const w = readWord(s, i);
    if (!w || w.end > end) return bad(ctx, item, `expected a variable name, found '${slice(ctx, start, end)}'`);
    i = nameEnd = w.end;
  }
  let dims: SectionDim[] = [];
  for (;;) {
    const j = skipSpace(s, i, end);
    const member = memberOperator(ctx, s, j);
    if (member) {
      const w = readWord(s, skipSpace(s, j + member.length, end));
      if (!w || w.end > end) break;
      i = nameEnd = w.end;
      dims = [];
      continue;
    }
    const opener = ctx.fortran ? '(' : '[';
    if (s[j] !== opener || j >= end) break;
    const g = matchGroup(s, j, end);
    if (!g.ok) return bad(ctx, { start: j, end }, `unbalanced '${opener}' in the array section`);
    if (ctx.fortran && dims.length > 0) break;
    const got = ctx.fortran ? fortranDims(ctx, j + 1, g.close) : cDim(ctx, j + 1, g.close);
    if (!got) return undefined;
    dims.push(...got);
    i = g.close + 1;
  }
  const rest = skipSpace(s, i, end);
  if (rest < end) return bad(ctx, { start: rest, end }, `unexpected '${slice(ctx, rest, end)}' after the variable`);
  // A Fortran component reached through an element (`chunk%tiles(1)%field%density0`) is named
  // by its path without the element's index, as the front end names it in code: one storage
  // for every element's copy (the index is not followed).
  const written = s.slice(start, nameEnd).replace(/\s+/g, '');
  const name = norm(ctx, ctx.fortran ? written.replace(/\((?:[^()]|\([^()]*\))*\)(?=%)/g, '') : written);
  return { name, dims, range: range(ctx.src, start, end), text: s.slice(start, end) };
}

/** The member-access operator at `j`, if any: `.`/`->` (and `::` in C++) in C, `%` in Fortran. */
function memberOperator(ctx: ReadCtx, s: string, j: number): string | undefined {
  if (ctx.fortran) return s[j] === '%' ? '%' : undefined;
  if (s.startsWith('->', j)) return '->';
  if (ctx.cxx && s.startsWith('::', j)) return '::';
  return s[j] === '.' ? '.' : undefined;
}

function bad(ctx: ReadCtx, span: Span, message: string): undefined {
  report(ctx, span.start, span.end, message);
  return undefined;
}

/** One C subscript, body[from, to) being the text between `[` and `]`. */
function cDim(ctx: ReadCtx, from: number, to: number): SectionDim[] | undefined {
  const parts = splitTop(ctx.src.body, from, to, ':', ctx.cxx).map((p) => slice(ctx, p.start, p.end));
  if (parts.length === 1) {
    if (!parts[0]) return bad(ctx, { start: from - 1, end: to + 1 }, 'empty subscript');
    return [{ lower: norm(ctx, parts[0]), single: true }];
  }
  if (parts.length > 3) return bad(ctx, { start: from - 1, end: to + 1 }, "too many ':' in the array section");
  const dim: SectionDim = {};
  if (parts[0]) dim.lower = norm(ctx, parts[0]);
  if (parts[1]) dim.length = norm(ctx, parts[1]);
  return [dim];
}

/** All Fortran subscripts, body[from, to) being the text between `(` and `)`. */
function fortranDims(ctx: ReadCtx, from: number, to: number): SectionDim[] | undefined {
  const out: SectionDim[] = [];
  for (const sub of splitTop(ctx.src.body, from, to, ',')) {
    const parts = splitTop(ctx.src.body, sub.start, sub.end, ':').map((p) => slice(ctx, p.start, p.end));
    const where = trimSpan(ctx.src.body, sub);
    if (parts.length === 1) {
      if (!parts[0]) return bad(ctx, where.start < where.end ? where : { start: from - 1, end: to + 1 }, 'empty subscript');
      out.push({ lower: norm(ctx, parts[0]), single: true });
      continue;
    }
    if (parts.length > 3) return bad(ctx, where, "too many ':' in the array section");
    const dim: SectionDim = {};
    if (parts[0]) dim.lower = norm(ctx, parts[0]);
    if (parts[1]) dim.upper = norm(ctx, parts[1]);
    out.push(dim);
  }
  return out;
}
