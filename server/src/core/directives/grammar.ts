/**
 * Shared shapes of the directive grammar tables.
 *
 * The tables themselves live in openacc.ts and openmp.ts; this file holds the vocabulary they
 * are written in and the look-ups the reader needs, so that the reader never has to know which
 * family it is reading beyond picking the right table.
 */
import type { DirectiveFamily, SourceLanguage } from '../types';

/** Whether a clause (or a construct such as `wait`) is followed by a parenthesised argument. */
export type ArgNeed = 'none' | 'optional' | 'required';

/**
 * How the text between the parentheses is interpreted.
 * - `flag`: no argument at all (`seq`, `nowait`).
 * - `value`: one opaque expression kept as `value` (`collapse(2)`, `if(n > 10)`).
 * - `vars`: a variable list, optionally preceded by `modifier[, modifier]... :`.
 * - `map`: the OpenMP map clause, `[modifiers,] map-type : list`.
 * - `reduction`: `[modifiers,] operator : list`.
 * - `suffixed`: `list [: value]`, as in `linear(i: 2)` and `aligned(p: 64)`.
 * - `prefixed`: `[value :] list`, as in `depend(in: a)` and `allocate(al: a)`.
 */
export type ArgShape = 'flag' | 'value' | 'vars' | 'map' | 'reduction' | 'suffixed' | 'prefixed';

export interface ClauseSpec {
  /** The clause name as written (lower case). */
  name: string;
  /** The name the analysis should use; aliases such as `pcopy` point at `copy`. */
  canonical: string;
  need: ArgNeed;
  shape: ArgShape;
  /** Words allowed before a top-level `:` in a `vars` argument; undefined means none are allowed. */
  modifiers?: readonly string[];
  /** For `value` clauses with a closed set of keywords, such as `default`. */
  values?: readonly string[];
  /** The clause may appear only once (per device_type group in OpenACC). */
  once?: boolean;
}

export interface ConstructArg {
  need: ArgNeed;
  shape: 'value' | 'vars';
  modifiers?: readonly string[];
}

export interface ConstructSpec {
  /** Construct words joined by one space. */
  name: string;
  /** Canonical names of the clauses allowed on the construct. */
  clauses: ReadonlySet<string>;
  /** Constructs such as `wait(1)`, `cache(a[0:n])` and `critical(name)` take an argument. */
  arg?: ConstructArg;
  /** Executable or declarative directives have no `end` form. */
  standalone?: boolean;
  /** Set when only one base language spells the construct this way (`for` versus `do`). */
  lang?: 'c' | 'fortran';
  /** A few OpenMP declarative directives (`end declare target`) have an end form in C too. */
  endInC?: boolean;
  /** Read without checking clauses: valid directives that no analysis models (OpenMP `requires`, `metadirective`). */
  unmodelled?: boolean;
}

export interface FamilyGrammar {
  family: DirectiveFamily;
  /** Human name used in messages. */
  title: string;
  constructs: ReadonlyMap<string, ConstructSpec>;
  clauses: ReadonlyMap<string, ClauseSpec>;
  /** Every proper word-prefix of a construct name, so that greedy matching knows when to go on. */
  prefixes: ReadonlySet<string>;
  /** Clauses allowed on a Fortran `end` directive. */
  endClauses: ReadonlySet<string>;
}

/** Builds a clause table entry; the helper keeps the tables to one line per clause. */
export function clause(
  name: string,
  need: ArgNeed,
  shape: ArgShape,
  extra: Partial<Pick<ClauseSpec, 'canonical' | 'modifiers' | 'values' | 'once'>> = {},
): ClauseSpec {
  return { name, canonical: extra.canonical ?? name, need, shape, ...extra };
}

/** Assembles the look-up maps once, so that every read is a few map look-ups. */
export function buildGrammar(
  family: DirectiveFamily,
  title: string,
  constructs: ConstructSpec[],
  clauses: ClauseSpec[],
  endClauses: string[],
): FamilyGrammar {
  const prefixes = new Set<string>();
  for (const c of constructs) {
    const words = c.name.split(' ');
    for (let n = 1; n < words.length; n++) prefixes.add(words.slice(0, n).join(' '));
  }
  return {
    family,
    title,
    constructs: new Map(constructs.map((c) => [c.name, c])),
    clauses: new Map(clauses.map((c) => [c.name, c])),
    prefixes,
    endClauses: new Set(endClauses),
  };
}

/** Which base language a construct spelling belongs to, derived from its words. */
export function languageOfWords(words: string[]): 'c' | 'fortran' | undefined {
  if (words.includes('for')) return 'c';
  if (words.includes('do') || words.includes('workshare')) return 'fortran';
  return undefined;
}

/** True when a construct restricted to one base language may be used from `language`. */
export function fitsLanguage(spec: ConstructSpec, language: SourceLanguage): boolean {
  if (!spec.lang) return true;
  return spec.lang === 'fortran' ? language === 'fortran' : language !== 'fortran';
}
