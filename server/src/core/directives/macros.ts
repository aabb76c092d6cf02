/**
 * Macros in directive lines, as the compiler's preprocessor sees them: `#pragma omp target teams
 * distribute parallel for MAP_CLAUSES` in C, `!$omp parallel do GPU_SCHEDULE` in a preprocessed
 * Fortran file. Only names outside parentheses are replaced (clause lists, a whole directive
 * tail); arguments keep the names as written, so sizes there stay symbolic (`u[0:NX*NY]`) and
 * section bounds are read with the macros separately.
 */
import { type MacroDef, expandText } from '../preprocessor';
import type { Directive, Range } from '../types';

export interface DirectiveExpansion {
  text: string;
  changed: boolean;
  /** Function-like macros whose argument list never closes. */
  unterminated: string[];
}

const SENTINEL = /^(\s*(?:#\s*pragma\s+(?:acc|omp)|[!cC*]\$(?:acc|omp))\b)([\s\S]*)$/i;

export function expandDirectiveMacros(slice: string, macros: ReadonlyMap<string, MacroDef> | undefined): DirectiveExpansion {
  const m = SENTINEL.exec(slice);
  if (!m || !macros || macros.size === 0) return { text: slice, changed: false, unterminated: [] };
  const e = expandText(m[2], macros, { topLevelOnly: true });
  return e.changed || e.unterminated.length > 0 ? { text: m[1] + e.text, changed: e.changed, unterminated: e.unterminated } : { text: slice, changed: false, unterminated: [] };
}

/**
 * Positions in an expanded directive are not positions in the file: every clause range becomes
 * the directive's own, and `macroExpanded` tells fixes not to edit its clauses.
 */
export function markExpanded(d: Directive, whole: Range): void {
  d.macroExpanded = true;
  d.range = whole;
  for (const c of d.clauses) {
    c.range = whole;
    for (const v of c.vars ?? []) v.range = whole;
  }
}
