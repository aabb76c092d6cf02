/**
 * Interprets the text between a clause's parentheses according to the clause's shape.
 *
 * The reader has already checked that the parentheses balance; here the argument is split into
 * modifiers, map type or reduction operator, plain value and variable list. Every problem is a
 * finding at the exact offending token; the clause is still returned with whatever could be
 * read, because a later pass is better off knowing that `copy` was meant than knowing nothing.
 */
import type { Clause, DirectiveFamily } from '../types';
import { norm, report, slice, type ReadCtx } from './context';
import type { ClauseSpec } from './grammar';
import { OPENACC_REDUCTION_OPS } from './openacc';
import { OPENMP_MAP_MODIFIERS, OPENMP_MAP_TYPES, OPENMP_REDUCTION_MODIFIERS, OPENMP_REDUCTION_OPS } from './openmp';
import { findTopColon, modifierTokens, trimSpan, type Word } from './scanner';
import { parseVarList } from './sections';

/** What the reader knows about the argument: its parentheses at body offsets `open` and `close`. */
export interface ArgSite {
  open: number;
  close: number;
  family: DirectiveFamily;
}

/** Fills `clause.args` and the shape-specific fields from the parenthesised argument. */
export function readClauseArgs(ctx: ReadCtx, spec: Pick<ClauseSpec, 'name' | 'shape' | 'modifiers' | 'values'>, clause: Clause, site: ArgSite): void {
  const s = ctx.src.body;
  const from = site.open + 1;
  const to = site.close;
  clause.args = s.slice(from, to);
  if (slice(ctx, from, to) === '') {
    report(ctx, site.open, site.close + 1, `'${spec.name}' needs an argument inside the parentheses`);
    return;
  }
  switch (spec.shape) {
    case 'flag':
      report(ctx, site.open, site.close + 1, `'${spec.name}' takes no argument`);
      return;
    case 'value':
      readValue(ctx, spec, clause, from, to);
      return;
    case 'vars':
      readModifiedVars(ctx, spec, clause, from, to);
      return;
    case 'map':
      readMap(ctx, clause, from, to);
      return;
    case 'reduction':
      readReduction(ctx, clause, site);
      return;
    case 'suffixed':
    case 'prefixed': {
      // `linear(list: step)` keeps the step as value; `depend(in: list)` keeps the type as value.
      const colon = findTopColon(s, from, to, ctx.cxx);
      if (colon < 0) {
        clause.vars = parseVarList(ctx, from, to);
        return;
      }
      const listFirst = spec.shape === 'suffixed';
      clause.value = norm(ctx, listFirst ? slice(ctx, colon + 1, to) : slice(ctx, from, colon));
      // `depend(sink: i-1, j)` names an iteration vector, not variables (OpenMP 5.2 §15.9.6).
      if (!listFirst && /^(sink|source)$/i.test((clause.value ?? '').trim())) return;
      clause.vars = listFirst ? parseVarList(ctx, from, colon) : parseVarList(ctx, colon + 1, to);
      return;
    }
  }
}

function readValue(ctx: ReadCtx, spec: Pick<ClauseSpec, 'name' | 'values'>, clause: Clause, from: number, to: number): void {
  const value = norm(ctx, slice(ctx, from, to));
  clause.value = value;
  if (spec.values && !spec.values.includes(value)) {
    const at = trimSpan(ctx.src.body, { start: from, end: to });
    report(ctx, at.start, at.end, `'${spec.name}' must be one of ${spec.values.join(', ')}`);
  }
}

/** The keyword of a modifier token: `mapper(id)` is the `mapper` modifier. */
function keyword(ctx: ReadCtx, token: Word): string {
  return norm(ctx, token.text.replace(/\(.*$/s, '').trim());
}

/** A variable list with an optional `modifier[, modifier]... :` prefix (`copyin(readonly: a)`). */
function readModifiedVars(ctx: ReadCtx, spec: Pick<ClauseSpec, 'name' | 'modifiers'>, clause: Clause, from: number, to: number): void {
  const colon = spec.modifiers ? findTopColon(ctx.src.body, from, to, ctx.cxx) : -1;
  if (colon < 0) {
    clause.vars = parseVarList(ctx, from, to);
    return;
  }
  const tokens = modifierTokens(ctx.src.body, from, colon);
  if (tokens.length === 0) report(ctx, colon, colon + 1, `missing modifier before ':' in '${spec.name}'`);
  for (const t of tokens) {
    if (!spec.modifiers!.includes(keyword(ctx, t))) {
      report(ctx, t.start, t.end, `unknown modifier '${t.text}' for '${spec.name}' (expected ${spec.modifiers!.join(', ')})`);
    }
  }
  clause.mapModifiers = tokens.map((t) => norm(ctx, t.text));
  clause.vars = parseVarList(ctx, colon + 1, to);
}

const isMapModifier = (k: string): boolean =>
  (OPENMP_MAP_MODIFIERS as readonly string[]).includes(k) || k.startsWith('ompx_');

/** `map([modifier[,] ...] map-type: list)`; `map(list)` means `tofrom`. */
function readMap(ctx: ReadCtx, clause: Clause, from: number, to: number): void {
  const colon = findTopColon(ctx.src.body, from, to, ctx.cxx);
  if (colon < 0) {
    clause.mapType = 'tofrom';
    clause.mapModifiers = [];
    clause.vars = parseVarList(ctx, from, to);
    return;
  }
  const tokens = modifierTokens(ctx.src.body, from, colon);
  const last = tokens[tokens.length - 1];
  let modifiers = tokens;
  if (!last) {
    report(ctx, colon, colon + 1, "missing map type before ':'");
  } else if ((OPENMP_MAP_TYPES as readonly string[]).includes(keyword(ctx, last))) {
    clause.mapType = keyword(ctx, last);
    modifiers = tokens.slice(0, -1);
  } else if (isMapModifier(keyword(ctx, last))) {
    // Modifiers without a map type (`map(present: a)`) keep the default type, as later OpenMP versions allow.
    clause.mapType = 'tofrom';
  } else {
    report(ctx, last.start, last.end, `unknown map type '${last.text}' (expected ${OPENMP_MAP_TYPES.join(', ')})`);
    modifiers = tokens.slice(0, -1);
  }
  for (const t of modifiers) {
    if (!isMapModifier(keyword(ctx, t))) report(ctx, t.start, t.end, `unknown map-type modifier '${t.text}'`);
  }
  clause.mapModifiers = modifiers.map((t) => norm(ctx, t.text));
  clause.vars = parseVarList(ctx, colon + 1, to);
}

/** `reduction([modifier,] operator: list)`; OpenACC has no modifiers. */
function readReduction(ctx: ReadCtx, clause: Clause, site: ArgSite): void {
  const from = site.open + 1;
  const to = site.close;
  const colon = findTopColon(ctx.src.body, from, to, ctx.cxx);
  if (colon < 0) {
    report(ctx, site.open, site.close + 1, "a reduction needs an operator: 'reduction(operator: list)'");
    clause.vars = parseVarList(ctx, from, to);
    return;
  }
  const tokens = modifierTokens(ctx.src.body, from, colon);
  const op = tokens[tokens.length - 1];
  const lang = ctx.fortran ? 'fortran' : 'c';
  const ops: readonly string[] = site.family === 'openacc' ? OPENACC_REDUCTION_OPS[lang] : OPENMP_REDUCTION_OPS[lang];
  if (!op) {
    report(ctx, colon, colon + 1, "missing reduction operator before ':'");
  } else {
    const name = norm(ctx, op.text);
    // OpenMP also accepts identifiers of user-defined reductions (`declare reduction`).
    const userDefined = site.family === 'openmp' && /^[A-Za-z_]\w*$/.test(name);
    if (!ops.includes(name) && !userDefined) {
      report(ctx, op.start, op.end, `unknown reduction operator '${op.text}' (expected ${ops.join(' ')})`);
    }
    clause.reductionOp = name;
  }
  const modifiers = tokens.slice(0, -1);
  for (const t of modifiers) {
    const known = site.family === 'openmp' && (OPENMP_REDUCTION_MODIFIERS as readonly string[]).includes(keyword(ctx, t));
    if (!known) report(ctx, t.start, t.end, `unknown reduction modifier '${t.text}'`);
  }
  if (modifiers.length > 0) clause.mapModifiers = modifiers.map((t) => norm(ctx, t.text));
  clause.vars = parseVarList(ctx, colon + 1, to);
}
