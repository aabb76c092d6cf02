/**
 * Classifies each logical statement by its leading keywords. Fortran has no reserved words, so
 * an assignment is recognised first: a designator (`x`, `a(i,j)`, `p%u(i)`) followed by `=` at
 * parenthesis depth 0. Everything else is decided by the first one or two words; the merged
 * spellings (`enddo`, `elseif`, `endsubroutine`) are accepted beside the blank-separated ones.
 */
import type { Tok } from './lexer';
import { tokenize } from './lexer';
import type { Located } from './source';
import { closeOf, isId, isOp } from './tokens';
import { startsTypeSpec } from './typespec';

export type LineKind =
  | 'program' | 'module' | 'submodule' | 'subroutine' | 'function' | 'blockdata' | 'end-unit' | 'contains'
  | 'interface' | 'end-interface' | 'typedef' | 'end-type'
  | 'use' | 'implicit' | 'decl' | 'attr' | 'parameter' | 'common' | 'spec-other'
  | 'do' | 'end-do' | 'if-then' | 'else-if' | 'else' | 'end-if' | 'if-one'
  | 'select' | 'case' | 'end-select' | 'where' | 'where-one' | 'elsewhere' | 'end-where'
  | 'forall' | 'forall-one' | 'end-forall' | 'block' | 'end-block'
  | 'assign' | 'pointer-assign' | 'call' | 'allocate' | 'deallocate' | 'io' | 'simple' | 'other';

export interface Line {
  text: Located;
  toks: Tok[];
  kind: LineKind;
  /** Index of the first token after an optional `name:` construct label. */
  head: number;
  label?: string;
  constructName?: string;
}

const END_WORDS: Record<string, LineKind> = {
  do: 'end-do', if: 'end-if', select: 'end-select', where: 'end-where', forall: 'end-forall',
  block: 'end-block', associate: 'end-block', critical: 'end-block', team: 'end-block',
  subroutine: 'end-unit', function: 'end-unit', program: 'end-unit', module: 'end-unit',
  submodule: 'end-unit', procedure: 'end-unit', blockdata: 'end-unit',
  interface: 'end-interface', type: 'end-type', enum: 'end-type',
};

const ATTR_WORDS = new Set([
  'dimension', 'allocatable', 'pointer', 'target', 'intent', 'optional', 'save', 'value', 'volatile',
  'asynchronous', 'contiguous', 'protected', 'public', 'private', 'external', 'intrinsic',
]);
const SPEC_OTHER = new Set(['data', 'namelist', 'equivalence', 'format', 'include', 'import', 'sequence', 'bind', 'enumerator', 'entry']);
const SIMPLE = new Set([
  'return', 'stop', 'continue', 'exit', 'cycle', 'goto', 'go', 'pause', 'nullify', 'open', 'close', 'inquire',
  'rewind', 'backspace', 'endfile', 'flush', 'error', 'sync', 'wait', 'lock', 'unlock', 'fail',
]);
const PREFIXES = new Set(['pure', 'elemental', 'recursive', 'impure', 'non_recursive', 'module']);

/** True when tokens [h, eq) form a designator: a name with parenthesised parts and `%` components. */
function isDesignator(toks: readonly Tok[], h: number, eq: number): boolean {
  if (!isId(toks[h])) return false;
  let i = h + 1;
  while (i < eq) {
    if (isOp(toks[i], '(')) {
      const c = closeOf(toks, i, eq);
      if (c < 0) return false;
      i = c + 1;
    } else if (isOp(toks[i], '%') && isId(toks[i + 1])) i += 2;
    else return false;
  }
  return true;
}

function topLevelAssign(toks: readonly Tok[], h: number): { at: number; pointer: boolean } | undefined {
  let depth = 0;
  for (let i = h; i < toks.length; i++) {
    const t = toks[i];
    if (t.t !== 'op') continue;
    if (t.v === '(' || t.v === '(/' || t.v === '[') depth++;
    else if (t.v === ')' || t.v === '/)' || t.v === ']') depth--;
    else if (depth === 0 && (t.v === '=' || t.v === '=>')) return isDesignator(toks, h, i) ? { at: i, pointer: t.v === '=>' } : undefined;
  }
  return undefined;
}

/** Skips procedure prefixes (`pure`, `recursive`, a type) and returns the unit keyword's index. */
function unitKeyword(toks: readonly Tok[], h: number): number {
  let i = h;
  for (let guard = 0; guard < 8 && i < toks.length; guard++) {
    const w = toks[i].t === 'id' ? toks[i].v : '';
    if (w === 'function' || w === 'subroutine') return i;
    if (PREFIXES.has(w)) {
      i++;
      continue;
    }
    if (!startsTypeSpec(toks, i)) return -1;
    const next = readTypeSpecLoose(toks, i);
    if (next <= i) return -1;
    i = next;
  }
  return -1;
}

/** The index after a type specifier, read without evaluating kinds. */
function readTypeSpecLoose(toks: readonly Tok[], i: number): number {
  let j = i + 1;
  if (isId(toks[i], 'double')) j++;
  if (isOp(toks[j], '(')) j = closeOf(toks, j) + 1;
  else if (isOp(toks[j], '*')) j += isOp(toks[j + 1], '(') ? closeOf(toks, j + 1) - j + 1 : 2;
  return j;
}

function endKind(toks: readonly Tok[], h: number): LineKind {
  const w = toks[h].v;
  const merged = w.slice(3);
  if (merged) return END_WORDS[merged] ?? 'other';
  const next = toks[h + 1];
  if (!next) return 'end-unit';
  if (next.t !== 'id') return 'other';
  if (next.v === 'block' && isId(toks[h + 2], 'data')) return 'end-unit';
  return END_WORDS[next.v] ?? 'other';
}

function keywordKind(toks: readonly Tok[], h: number): LineKind {
  const t = toks[h];
  if (!t || t.t !== 'id') return 'other';
  const w = t.v;
  const next = toks[h + 1];
  if (/^end/.test(w) && (w === 'end' || END_WORDS[w.slice(3)] !== undefined)) return endKind(toks, h);
  if (w === 'module' && isId(next, 'procedure')) return 'spec-other';
  const unit = unitKeyword(toks, h);
  if (unit >= 0) return toks[unit].v === 'function' ? 'function' : 'subroutine';
  if (w === 'module') return 'module';
  // Guards of `select type` and `select rank` read like the cases of `select case`.
  if ((w === 'type' || w === 'class') && (isId(next, 'is') || isId(next, 'default'))) return 'case';
  if (w === 'rank' && (isOp(next, '(') || isId(next, 'default'))) return 'case';
  switch (w) {
    case 'program': return 'program';
    case 'submodule': return 'submodule';
    case 'contains': return 'contains';
    case 'use': return 'use';
    case 'implicit': return 'implicit';
    case 'parameter': return isOp(next, '(') ? 'parameter' : 'other';
    case 'common': return 'common';
    case 'interface': return 'interface';
    case 'abstract': return isId(next, 'interface') ? 'interface' : 'other';
    case 'do': return 'do';
    case 'dowhile': case 'doconcurrent': return 'do';
    case 'elseif': return 'else-if';
    case 'elsewhere': return 'elsewhere';
    case 'else': return isId(next, 'if') ? 'else-if' : isId(next, 'where') ? 'elsewhere' : 'else';
    case 'selectcase': case 'selecttype': case 'selectrank': return 'select';
    case 'select': return 'select';
    case 'case': return 'case';
    case 'call': return 'call';
    case 'allocate': return 'allocate';
    case 'deallocate': return 'deallocate';
    case 'print': case 'write': case 'read': return 'io';
    case 'associate': case 'critical': return 'block';
    case 'blockdata': return 'blockdata';
    case 'block': return isId(next, 'data') ? 'blockdata' : 'block';
    case 'type': return isOp(next, '(') ? 'decl' : 'typedef';
    case 'enum': return 'typedef';
    case 'procedure': return 'spec-other';
    default: break;
  }
  if (w === 'if' || w === 'where' || w === 'forall') {
    if (!isOp(next, '(')) return 'other';
    const close = closeOf(toks, h + 1);
    if (close < 0) return 'other';
    const after = toks[close + 1];
    if (w === 'if') return isId(after, 'then') && !toks[close + 2] ? 'if-then' : after ? 'if-one' : 'other';
    return after ? (w === 'where' ? 'where-one' : 'forall-one') : w === 'where' ? 'where' : 'forall';
  }
  if (startsTypeSpec(toks, h)) return 'decl';
  if (ATTR_WORDS.has(w)) return 'attr';
  if (SPEC_OTHER.has(w)) return 'spec-other';
  if (SIMPLE.has(w)) return 'simple';
  return 'other';
}

export function classify(text: Located, label?: string): Line {
  const toks = tokenize(text.low);
  let head = 0;
  let constructName: string | undefined;
  if (isId(toks[0]) && isOp(toks[1], ':') && isId(toks[2])) {
    constructName = toks[0].v;
    head = 2;
  }
  let kind: LineKind;
  const assign = topLevelAssign(toks, head);
  if (assign) kind = assign.pointer ? 'pointer-assign' : 'assign';
  else kind = keywordKind(toks, head);
  return { text, toks, kind, head, label, constructName };
}

