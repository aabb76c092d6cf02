/**
 * Reads one OpenACC or OpenMP directive into a Directive.
 *
 * The work is split in three steps: source.ts joins continuation lines into one logical body
 * while remembering where every character came from; this file matches the construct name and
 * walks the clauses; clauses.ts and sections.ts interpret clause arguments. Nothing here throws
 * on bad input: every problem becomes a `directive-syntax` finding with an exact file range, and
 * the directive is still returned whenever its construct could be recognised.
 *
 * Normalisation: Fortran keywords, variable names and expressions are lower-cased (Fortran is
 * case-insensitive); C and C++ are case-sensitive and kept as written. `Clause.args` and
 * `VarRef.text` always keep the source spelling. Data-clause modifiers of OpenACC
 * (`copyin(readonly: a)`), motion modifiers of OpenMP (`to(present: a)`) and reduction
 * modifiers (`reduction(inscan, +: s)`) are reported in `Clause.mapModifiers`, the one list the
 * shared types have for modifiers. Construct arguments (`wait(1)`, `cache(a[0:n])`,
 * `routine(f)`, `critical(name)`, `declare target(a)`) are reported as a first clause whose name
 * is the construct name.
 */
import type { Clause, Directive, DirectiveFamily, Finding, Pos, SourceLanguage } from '../types';
import { readClauseArgs, type ArgSite } from './clauses';
import { report, type ReadCtx } from './context';
import { fitsLanguage, type ConstructSpec, type FamilyGrammar } from './grammar';
import { OPENACC, OPENACC_REDUCTION_OPS, OPENACC_UPDATE_SELF } from './openacc';
import { OPENMP, OPENMP_MAP_MODIFIERS, OPENMP_MAP_TYPES, OPENMP_REDUCTION_OPS } from './openmp';
import { isSpace, matchGroup, readWord, skipSpace, type Word } from './scanner';
import { range, readLogical } from './source';

export { continuesOnNextLine, isDirectiveStart } from './source';
export { OPENACC_REDUCTION_OPS, OPENMP_MAP_MODIFIERS, OPENMP_MAP_TYPES, OPENMP_REDUCTION_OPS };

export interface ReadResult {
  directive?: Directive;
  findings: Finding[];
}

export interface KnownWords {
  /** Construct names, combined forms included, words joined by one space. */
  constructs: readonly string[];
  /** Clause names, aliases included. */
  clauses: readonly string[];
  /** Every single word that occurs in a construct name, plus `end`, for highlighting. */
  constructWords: readonly string[];
}

function known(g: FamilyGrammar): KnownWords {
  const constructs = [...g.constructs.keys()];
  const words = new Set(constructs.flatMap((c) => c.split(' ')));
  return { constructs, clauses: [...g.clauses.keys()], constructWords: [...words, 'end'].sort() };
}

/** The constructs and clauses the reader knows, per family, for reuse by other modules. */
export const KNOWN_DIRECTIVES: Readonly<Record<DirectiveFamily, KnownWords>> = {
  openacc: known(OPENACC),
  openmp: known(OPENMP),
};

const LANGUAGE_NAME: Record<SourceLanguage, string> = { c: 'C', cpp: 'C++', fortran: 'Fortran' };

/**
 * Reads the directive in `text` (the raw slice starting at its sentinel), placed in the file at
 * `origin`. Returns no directive and no findings when `text` does not start with an OpenACC or
 * OpenMP sentinel, and no directive (but findings) when the construct cannot be recognised.
 */
export function readDirective(text: string, origin: Pos, language: SourceLanguage): ReadResult {
  try {
    return read(text, origin, language);
  } catch (err) {
    // The parser is written not to throw; this guard keeps a front end alive if it ever does.
    const at = { line: origin.line, col: origin.col };
    return {
      findings: [
        {
          code: 'directive-syntax',
          severity: 'error',
          range: { start: at, end: at },
          message: `internal error while reading the directive: ${String(err)}`,
        },
      ],
    };
  }
}

function read(text: string, origin: Pos, language: SourceLanguage): ReadResult {
  const src = readLogical(text, origin, language);
  if (!src) return { findings: [] };
  const ctx: ReadCtx = {
    src,
    language,
    fortran: language === 'fortran',
    cxx: language === 'cpp',
    findings: [...src.findings],
  };
  const grammar = src.family === 'openacc' ? OPENACC : OPENMP;
  const head = readConstruct(ctx, grammar);
  if (!head) return { findings: ctx.findings };
  // Directives the analysis does not model (`requires`, `declare variant`, `metadirective`) are
  // accepted as written: their clauses are the compiler's to check, and none affects the ledgers.
  const clauses = head.spec.unmodelled ? [] : readClauses(ctx, grammar, head);
  const directive: Directive = {
    family: src.family,
    construct: head.spec.name,
    isEnd: head.isEnd,
    clauses,
    range: { start: src.start, end: src.pos[src.body.length] },
    // A fixed-form `0` in column 6 is dropped from the body; keep the words apart in the text.
    text: src.head + (src.body === '' || isSpace(src.body[0]) ? '' : ' ') + src.body,
  };
  return { directive, findings: ctx.findings };
}

interface Head {
  spec: ConstructSpec;
  isEnd: boolean;
  /** Body offset where the clauses start. */
  next: number;
  argClause?: Clause;
}

const keyword = (ctx: ReadCtx, w: Word): string => (ctx.fortran ? w.text.toLowerCase() : w.text);

/**
 * Matches the longest construct name at the start of the body, word by word, so that
 * `target teams distribute parallel for` wins over `target`. A word directly followed by `(` is a
 * clause unless the construct it would complete takes an argument (`wait(1)`, `cache(...)`).
 */
function readConstruct(ctx: ReadCtx, g: FamilyGrammar): Head | undefined {
  const s = ctx.src.body;
  const first = readWord(s, skipSpace(s, 0));
  if (!first) {
    const at = skipSpace(s, 0);
    if (at >= s.length) {
      ctx.findings.push({
        code: 'directive-syntax',
        severity: 'error',
        range: { start: ctx.src.start, end: ctx.src.pos[0] },
        message: `missing ${g.title} directive name after the sentinel`,
      });
    } else report(ctx, at, tokenEnd(s, at), `expected an ${g.title} directive name, found '${s.slice(at, tokenEnd(s, at))}'`);
    return undefined;
  }
  // Fortran also writes end directives with the words joined (`!$OMP ENDDO`, `!$omp endparallel`).
  const firstWord = keyword(ctx, first);
  const joined = ctx.fortran && /^end[a-z]/.test(firstWord) && (g.constructs.has(firstWord.slice(3)) || g.prefixes.has(firstWord.slice(3))) ? firstWord.slice(3) : undefined;
  const isEnd = firstWord === 'end' || joined !== undefined;
  let j = isEnd ? first.end : first.start;
  const seq: string[] = joined ? [joined] : [];
  let startWord: Word | undefined = joined ? first : undefined;
  let best: { spec: ConstructSpec; end: number } | undefined = joined && g.constructs.get(joined) ? { spec: g.constructs.get(joined)!, end: first.end } : undefined;
  for (;;) {
    const w = readWord(s, skipSpace(s, j));
    if (!w) break;
    const cand = [...seq, keyword(ctx, w)].join(' ');
    const spec = g.constructs.get(cand);
    if (!spec && !g.prefixes.has(cand)) break;
    const paren = s[skipSpace(s, w.end)] === '(';
    if (paren && !spec?.arg) break;
    startWord ??= w;
    seq.push(keyword(ctx, w));
    j = w.end;
    if (spec) best = { spec, end: j };
    if (paren) break;
  }
  if (!best || !startWord) {
    const w = readWord(s, skipSpace(s, isEnd ? first.end : first.start));
    if (!w) report(ctx, first.start, first.end, `'${first.text}' must be followed by the name of the construct it ends`);
    else if (seq.length > 0) report(ctx, w.start, j, `incomplete ${g.title} directive name '${seq.join(' ')}'`);
    else report(ctx, w.start, w.end, `unknown ${g.title} directive '${w.text}'`);
    return undefined;
  }
  const { spec } = best;
  const nameFrom = isEnd ? first.start : startWord.start;
  if (!fitsLanguage(spec, ctx.language)) {
    report(ctx, startWord.start, best.end, `'${spec.name}' is not an ${g.title} construct in ${LANGUAGE_NAME[ctx.language]}`);
  }
  if (isEnd && !ctx.fortran && !spec.endInC) {
    report(ctx, nameFrom, best.end, `'end ${spec.name}' exists only in Fortran`);
  } else if (isEnd && spec.standalone) {
    report(ctx, nameFrom, best.end, `'${spec.name}' has no end directive`);
  }
  const head: Head = { spec, isEnd, next: best.end };
  // `!$omp end critical(name)` repeats the construct's argument.
  if (spec.arg && (!isEnd || s[skipSpace(s, head.next)] === '(')) readConstructArg(ctx, g, head, startWord.start);
  return head;
}

/** Reads `wait(1)`, `cache(a[0:n])`, `critical(name)` and the like into a first pseudo-clause. */
function readConstructArg(ctx: ReadCtx, g: FamilyGrammar, head: Head, nameStart: number): void {
  const s = ctx.src.body;
  const arg = head.spec.arg!;
  const open = skipSpace(s, head.next);
  if (s[open] !== '(') {
    if (arg.need === 'required') report(ctx, nameStart, head.next, `'${head.spec.name}' needs a parenthesised argument`);
    return;
  }
  const group = matchGroup(s, open);
  if (!group.ok) {
    report(ctx, open, s.length, `unbalanced parentheses after '${head.spec.name}'`);
    head.next = s.length;
    return;
  }
  const name = head.spec.name;
  const clause: Clause = { name, canonical: name, range: range(ctx.src, open, group.close + 1) };
  const site: ArgSite = { open, close: group.close, family: g.family };
  readClauseArgs(ctx, { name, shape: arg.shape, modifiers: arg.modifiers }, clause, site);
  head.argClause = clause;
  head.next = group.close + 1;
}

/** The end of a run of characters that cannot start a clause, for "unexpected ..." findings. */
function tokenEnd(s: string, i: number): number {
  let e = i + 1;
  while (e < s.length && !isSpace(s[e]) && s[e] !== ',' && !/[A-Za-z_]/.test(s[e])) e++;
  return e;
}

/** Walks the clause list: names, optional parenthesised arguments, separators. */
function readClauses(ctx: ReadCtx, g: FamilyGrammar, head: Head): Clause[] {
  const s = ctx.src.body;
  const clauses: Clause[] = head.argClause ? [head.argClause] : [];
  // Clauses that may appear once; OpenACC starts a new group after every device_type clause.
  const seen = new Set<string>();
  const on = head.isEnd ? `end ${head.spec.name}` : head.spec.name;
  let i = head.next;
  for (;;) {
    while (i < s.length && (isSpace(s[i]) || s[i] === ',')) i++;
    if (i >= s.length) break;
    const w = readWord(s, i);
    if (!w) {
      const e = tokenEnd(s, i);
      report(ctx, i, e, `unexpected '${s.slice(i, e)}' where a clause was expected`);
      i = e;
      continue;
    }
    let end = w.end;
    let site: ArgSite | undefined;
    const open = skipSpace(s, w.end);
    if (s[open] === '(') {
      const group = matchGroup(s, open);
      if (!group.ok) {
        // Without the closing parenthesis nothing after it can be trusted, so reading stops here.
        report(ctx, open, s.length, `unbalanced parentheses in '${w.text}(...)'`);
        break;
      }
      site = { open, close: group.close, family: g.family };
      end = group.close + 1;
    }
    i = end;
    const name = keyword(ctx, w);
    let spec = g.clauses.get(name);
    if (!spec) {
      // An upper-case word is most likely a macro the build defines (`-DGPU_SCHEDULE=...`): the
      // program is then valid as built, so it is a warning that names the define, not an error.
      const macro = /^[A-Z][A-Z0-9_]*$/.test(w.text) && /[A-Z]/.test(w.text) && w.text.length > 1;
      const macroHint = macro ? `; it looks like a macro the build defines (\`-D${w.text}=...\`): give it with \`--define ${w.text}=...\` (or the defines setting, or read the build's flags from compile_commands.json) so the clause it stands for is read` : '';
      report(ctx, w.start, w.end, `unknown ${g.title} clause '${w.text}'${macroHint}`, macro ? 'warning' : 'error');
      continue;
    }
    if (g.family === 'openacc' && name === 'self' && head.spec.name === 'update') spec = OPENACC_UPDATE_SELF;
    const clause: Clause = { name, canonical: spec.canonical, range: range(ctx.src, w.start, end) };
    const allowed = head.isEnd ? g.endClauses : head.spec.clauses;
    if (!allowed.has(spec.canonical)) report(ctx, w.start, w.end, `'${w.text}' is not allowed on '${on}'`);
    if (site) readClauseArgs(ctx, spec, clause, site);
    else if (spec.need === 'required') report(ctx, w.start, w.end, `'${w.text}' needs a parenthesised argument`);
    if (spec.once && seen.has(spec.canonical)) report(ctx, w.start, w.end, `'${w.text}' may appear only once here`);
    if (spec.once) seen.add(spec.canonical);
    if (g.family === 'openacc' && spec.canonical === 'device_type') seen.clear();
    clauses.push(clause);
  }
  return clauses;
}
