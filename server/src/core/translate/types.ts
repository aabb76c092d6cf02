/** Shared shapes of the translator. */
import type { Item } from './clauses';
import type { Language } from './scan';

export type Target = 'openmp' | 'openacc';

/** Where a directive stands, as the translation of one directive needs it. */
export interface Context {
  language: Language;
  /** The nearest enclosing OpenACC compute construct (parallel, kernels, serial, or a combined loop). */
  accCompute?: { construct: string };
  /** Another acc loop (or a combined loop construct) encloses this one inside the compute region. */
  insideAccLoop: boolean;
  /** The enclosing OpenMP target-region constructs, outermost first (`target`, `teams`, …). */
  ompEnclosing: string[];
  /** The directive stands at file scope (C) or in a module's specification part (Fortran). */
  fileScope: boolean;
  /** Whether the nested region of this directive holds OpenMP loop constructs. */
  hasNestedLoops: boolean;
  /** Markers left by an earlier translation in the note lines above the directive. */
  markers: string[];
  /** Names the file declares as C pointers (for notes on OpenMP's zero-length array sections). */
  pointerNames: Set<string>;
  /** Identifiers used in the directive's region. */
  regionNames: Set<string>;
  /** The file has functions of these names (to tell functions from variables in declare target lists). */
  functionNames: Set<string>;
}

export interface Translation {
  construct: string;
  constructArgs?: string;
  clauses: { text: string; seg: number; src?: Item }[];
  notes: string[];
  /** Clauses not yet taken by a table (internal). */
  other: Item[];
  /** The directive is commented out, with this reason. */
  leftOut?: string;
  /** The directive is dropped without a trace except a note (structure OpenACC does not need). */
  dropped?: string;
  /** C: the directive becomes a declare target … end declare target pair around the next declaration. */
  wrapDeclaration?: boolean;
  /** Extra directives (same indentation) inserted before the next declarations (routine seq). */
}

/**
 * Note texts that a later translation back reads (they name what the first one had to change),
 * so acc → omp → acc gives back the same directives.
 */
export const PRESENT_MARK = 'gcc 12 and clang 14 reject the OpenMP 5.1 present map modifier, so map(alloc:) stands for acc present';
export const DEFAULT_PRESENT_MARK = 'default(present) is left out: gcc 12 has no defaultmap(present); the arrays are mapped implicitly and found present';
export const CREATE_MARK = 'acc declare create became declare target, which also copies the initial value: create';
export const NOTE_TAG = 'offload-ledger translate:';
