// Generates the TextMate injection grammars that highlight OpenACC and OpenMP directives inside
// C/C++ `#pragma` lines and Fortran `!$acc` / `!$omp` comment directives. The word lists come
// from the directive reader (KNOWN_DIRECTIVES in server/src/core/directives/reader.ts), so the
// editor highlights exactly the constructs and clauses the analysis reads.
//
// Usage: node scripts/grammars.mjs            (writes grammars/*.tmLanguage.json)
//        import { grammarDocuments } from ...  (tests compare the committed files with these)
import { writeFileSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';
import { loadTs } from './load-ts.mjs';

const SUFFIX = 'offload-ledger';
export const GRAMMAR_FILES = {
  c: { file: 'offload-ledger.c.tmLanguage.json', scopeName: 'offload-ledger.injection.c', injectTo: ['source.c', 'source.cpp'] },
  fortran: {
    file: 'offload-ledger.fortran.tmLanguage.json',
    scopeName: 'offload-ledger.injection.fortran',
    // Fortran grammars name their scopes differently; these are the ones in common use.
    injectTo: ['source.fortran', 'source.fortran.free', 'source.fortran.fixed'],
  },
};

/** KNOWN_DIRECTIVES of the directive reader (TypeScript, bundled in memory). */
async function knownDirectives() {
  return (await loadTs('server/src/core/directives/reader.ts')).KNOWN_DIRECTIVES;
}

const escape = (w) => w.replace(/[.*+?^${}()|[\]\\]/g, '\\$&');
const alternation = (words) => [...new Set(words)].sort((a, b) => b.length - a.length || a.localeCompare(b)).map(escape).join('|');

/** The patterns inside one directive, shared by both languages except for the section brackets. */
function directiveBody(family, words, lang) {
  const fam = family === 'openacc' ? 'openacc' : 'openmp';
  const clauseScope = `support.function.clause.${fam}.${SUFFIX}`;
  const constructs = words.constructWords;
  const bareClauses = words.clauses.filter((c) => !constructs.includes(c));
  // Fortran is case-insensitive; C and C++ pragmas are not.
  const ci = lang === 'fortran' ? '(?i)' : '';
  return [
    {
      // A clause with arguments: name, then everything up to the matching parenthesis.
      begin: `${ci}\\b(${alternation(words.clauses)})\\s*(\\()`,
      beginCaptures: { 1: { name: clauseScope }, 2: { name: `punctuation.section.parens.begin.${SUFFIX}` } },
      end: '\\)',
      endCaptures: { 0: { name: `punctuation.section.parens.end.${SUFFIX}` } },
      name: `meta.clause.${fam}.${SUFFIX}`,
      patterns: [{ include: '#clause-arguments' }],
    },
    { match: `${ci}\\b(${alternation(constructs)})\\b`, name: `keyword.control.directive.${fam}.${SUFFIX}` },
    { match: `${ci}\\b(${alternation(bareClauses)})\\b`, name: clauseScope },
    ...(lang === 'c' ? [{ match: '\\\\$', name: `constant.character.escape.line-continuation.${SUFFIX}` }] : [{ match: '&\\s*$', name: `punctuation.separator.continuation.${SUFFIX}` }]),
  ];
}

/** Clause arguments: map types and modifiers, reduction operators, array sections, names, numbers. */
function clauseArguments(lang) {
  const ci = lang === 'fortran' ? '(?i)' : '';
  const open = lang === 'c' ? '\\[' : '\\(';
  const close = lang === 'c' ? '\\]' : '\\)';
  return {
    patterns: [
      { match: ci + '\\b(always|close|present|to|from|tofrom|alloc|release|delete|readonly|zero|inscan|task)\\s*(?=[:,])(?!::)', name: `keyword.other.modifier.${SUFFIX}` },
      { match: '(\\+|\\*|-|&&|\\|\\||&|\\||\\^|\\bmax\\b|\\bmin\\b|\\.and\\.|\\.or\\.|\\.eqv\\.|\\.neqv\\.|\\biand\\b|\\bior\\b|\\bieor\\b)\\s*(?=:)', name: `keyword.operator.reduction.${SUFFIX}` },
      {
        // An array section: a name followed by brackets (C) or parentheses (Fortran) with a colon inside.
        begin: `\\b([A-Za-z_][A-Za-z0-9_]*)\\s*(${open})`,
        beginCaptures: { 1: { name: `variable.other.array.${SUFFIX}` }, 2: { name: `punctuation.section.array-section.begin.${SUFFIX}` } },
        end: close,
        endCaptures: { 0: { name: `punctuation.section.array-section.end.${SUFFIX}` } },
        name: `meta.array-section.${SUFFIX}`,
        patterns: [
          { match: ':', name: `punctuation.separator.array-section.${SUFFIX}` },
          ...(lang === 'c' ? [{ match: '\\]\\s*\\[', name: `punctuation.section.array-section.${SUFFIX}` }] : []),
          { include: '#expression' },
        ],
      },
      { match: ':', name: `punctuation.separator.clause.${SUFFIX}` },
      { include: '#expression' },
    ],
  };
}

function expression() {
  return {
    patterns: [
      { match: '\\b\\d+(\\.\\d*)?([eEdD][+-]?\\d+)?(_\\w+)?\\b', name: `constant.numeric.${SUFFIX}` },
      { begin: '\\(', end: '\\)', patterns: [{ include: '#expression' }] },
      { match: '\\b[A-Za-z_][A-Za-z0-9_]*\\b', name: `variable.other.${SUFFIX}` },
      { match: '[-+*/%]', name: `keyword.operator.arithmetic.${SUFFIX}` },
    ],
  };
}

export function cGrammar(known) {
  const directive = (family, sentinel) => ({
    // A pragma line and its backslash continuations: the rule ends at a line end not preceded by
    // `\`. vscode-textmate passes each line with its "\n", and `$` also matches after it, so the
    // end must not follow a newline either.
    begin: `^\\s*(#)\\s*(pragma)\\s+(${sentinel})\\b`,
    beginCaptures: {
      1: { name: `punctuation.definition.directive.${SUFFIX}` },
      2: { name: `keyword.control.directive.pragma.${SUFFIX}` },
      3: { name: `keyword.control.directive.sentinel.${family}.${SUFFIX}` },
    },
    end: '(?<![\\\\\\n])$',
    name: `meta.directive.${family}.${SUFFIX}`,
    patterns: [...directiveBody(family, known[family], 'c'), { include: '#comment' }],
  });
  return {
    $schema: 'https://raw.githubusercontent.com/martinring/tmlanguage/master/tmlanguage.json',
    comment: 'Generated by scripts/grammars.mjs from the directive reader; do not edit by hand.',
    scopeName: GRAMMAR_FILES.c.scopeName,
    injectionSelector: 'L:source.c, L:source.cpp',
    patterns: [{ include: '#openacc' }, { include: '#openmp' }],
    repository: {
      openacc: directive('openacc', 'acc'),
      openmp: directive('openmp', 'omp'),
      'clause-arguments': clauseArguments('c'),
      expression: expression(),
      comment: {
        patterns: [
          { match: '//.*$', name: `comment.line.double-slash.${SUFFIX}` },
          { begin: '/\\*', end: '\\*/', name: `comment.block.${SUFFIX}` },
        ],
      },
    },
  };
}

export function fortranGrammar(known) {
  const directive = (family, sentinel) => ({
    // Free form `!$acc` anywhere at the line start; fixed form `c$acc`, `*$acc`, `!$acc` in column 1.
    // Each continuation line repeats the sentinel, so one line is one match.
    begin: `(?i)^(?:\\s*(!)|([c*!]))(\\$${sentinel})(?=[\\s&]|$)`,
    beginCaptures: {
      1: { name: `punctuation.definition.directive.${SUFFIX}` },
      2: { name: `punctuation.definition.directive.${SUFFIX}` },
      3: { name: `keyword.control.directive.sentinel.${family}.${SUFFIX}` },
    },
    end: '$',
    name: `meta.directive.${family}.${SUFFIX}`,
    patterns: [...directiveBody(family, known[family], 'fortran'), { match: '!.*$', name: `comment.line.${SUFFIX}` }],
  });
  return {
    $schema: 'https://raw.githubusercontent.com/martinring/tmlanguage/master/tmlanguage.json',
    comment: 'Generated by scripts/grammars.mjs from the directive reader; do not edit by hand.',
    scopeName: GRAMMAR_FILES.fortran.scopeName,
    injectionSelector: 'L:source.fortran, L:source.fortran.free, L:source.fortran.fixed',
    patterns: [{ include: '#openacc' }, { include: '#openmp' }],
    repository: {
      openacc: directive('openacc', 'acc'),
      openmp: directive('openmp', 'omp'),
      'clause-arguments': clauseArguments('fortran'),
      expression: expression(),
    },
  };
}

export async function grammarDocuments(root) {
  const known = await knownDirectives();
  return [
    { ...GRAMMAR_FILES.c, grammar: cGrammar(known) },
    { ...GRAMMAR_FILES.fortran, grammar: fortranGrammar(known) },
  ];
}

export async function writeGrammars(root) {
  const docs = await grammarDocuments(root);
  for (const d of docs) writeFileSync(join(root, 'grammars', d.file), JSON.stringify(d.grammar, null, 2) + '\n');
  return docs.map((d) => d.file);
}

if (import.meta.url === pathToFileURL(process.argv[1] ?? '').href) {
  const root = join(dirname(fileURLToPath(import.meta.url)), '..');
  console.log(`grammars: ${(await writeGrammars(root)).join(', ')}`);
}
