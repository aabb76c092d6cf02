/**
 * Shared vocabulary of the analysis core: ranges, findings, directives.
 * Nothing here knows about LSP, VS Code, the file system or processes; the CLI and the
 * language server convert these types at their own edges.
 */

import type { Expr } from './symbolic';

/** A position in a source text. Both fields are 0-based (as in tree-sitter); reports add 1. */
export interface Pos {
  line: number;
  col: number;
}

/** A half-open source range [start, end). */
export interface Range {
  start: Pos;
  end: Pos;
}

export type Severity = 'error' | 'warning' | 'info' | 'hint';

/** Finding codes are fixed by shared/contracts/findings.md; never rename one. */
export type FindingCode =
  | 'transfer-in-time-loop'
  | 'implicit-transfer'
  | 'stale-on-host'
  | 'stale-on-device'
  | 'already-present'
  | 'update-wider-than-needed'
  | 'exceeds-device-memory'
  | 'loop-carried-dependence'
  | 'missing-reduction'
  | 'unknown-extent'
  | 'shared-scalar-write'
  | 'missing-private'
  | 'inactive-offload-branch'
  | 'assumed-no-alias'
  | 'directive-syntax';

/** A replacement of a source range (0-based, half-open); an empty range inserts. */
export interface TextEdit {
  range: Range;
  newText: string;
}

/** A quick fix the user may choose: its title and the edits it makes. Never applied by the analysis. */
export interface Fix {
  title: string;
  edits: TextEdit[];
}

export interface Finding {
  code: FindingCode;
  severity: Severity;
  range: Range;
  message: string;
  array?: string;
  /** The arrays of a finding about several (one missing data region): each is named in the message. */
  arrays?: string[];
  /** Quick fixes for this finding, in order of preference. */
  fixes?: Fix[];
  /**
   * Other places the finding is about, in this or another file (the directive in a callee that
   * a call in the time loop reaches, or that call): LSP relatedInformation, SARIF relatedLocations.
   */
  related?: RelatedLocation[];
}

/** A place a finding points to besides its own range; `path` as the file's analysis names it. */
export interface RelatedLocation {
  path: string;
  range: Range;
  message: string;
}

export type DirectiveFamily = 'openacc' | 'openmp';
export type SourceLanguage = 'c' | 'cpp' | 'fortran';

/** One array section subscript: C `lo:len`, Fortran `lo:hi`, or a single index. */
export interface SectionDim {
  /** Raw expression text of the lower bound; undefined when omitted (`:len`, `:`). */
  lower?: string;
  /** C only: raw expression text of the length. */
  length?: string;
  /** Fortran only: raw expression text of the inclusive upper bound. */
  upper?: string;
  /** True for a plain index (`a[i]`, `a(i)`) rather than a `:` triplet. */
  single?: boolean;
  /**
   * The bounds as symbolic quantities, filled by the front end when it can read them with the
   * file's macros expanded (`p[IDX(i,j,k):1]`). Analyses prefer these over re-parsing the text.
   */
  exprs?: { lower?: Expr; length?: Expr; upper?: Expr };
}

/** A variable named in a clause, possibly with an array section. */
export interface VarRef {
  name: string;
  /** Empty for a bare name (the whole variable). Outermost bracket first as written. */
  dims: SectionDim[];
  range: Range;
  /** Original text, e.g. `a[0:N][1:M-2]`. */
  text: string;
}

export interface Clause {
  /** Lower-case clause name as written, normalised: `pcopy` stays `pcopy`; see `canonical`. */
  name: string;
  /** Canonical name: OpenACC `pcopy`/`present_or_copy` → `copy`, etc. */
  canonical: string;
  range: Range;
  /** Raw text between the parentheses, if the clause has them. */
  args?: string;
  /** Variables for data clauses, map, update motion clauses, private/firstprivate/reduction, etc. */
  vars?: VarRef[];
  /** OpenMP map type: to, from, tofrom, alloc, release, delete (default tofrom). */
  mapType?: string;
  /** OpenMP map-type modifiers: always, close, present, ompx_hold... as written. */
  mapModifiers?: string[];
  /** Reduction operator as written: + * max min & | ^ && || iand ior ieor .and. .or. .eqv. .neqv. */
  reductionOp?: string;
  /** Single-argument clauses (collapse, default, if, async, num_gangs, device_type ...): trimmed text. */
  value?: string;
}

export interface Directive {
  family: DirectiveFamily;
  /** Normalised construct words joined by one space, e.g. `parallel loop`, `enter data`, `target teams distribute parallel for`. */
  construct: string;
  /** True for a Fortran `!$acc end …` / `!$omp end …` line; `construct` then holds what it ends. */
  isEnd: boolean;
  clauses: Clause[];
  /** The whole directive, sentinel to last character, including continuation lines. */
  range: Range;
  /** Source text of the directive with continuations joined by one space. */
  text: string;
  /**
   * Set when macros were expanded in the directive line: its clause ranges are then the whole
   * directive's, and no fix edits a clause (the clause text is not in the file as read).
   */
  macroExpanded?: boolean;
}
