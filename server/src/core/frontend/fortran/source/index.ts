/**
 * Turns Fortran source text into logical statements and directive slices. The source form is
 * decided by the file name, as compilers do: `.f`, `.for`, `.ftn`, `.f77` (any case) are fixed
 * form, every other extension is free form.
 */
import { readFixed } from './fixed';
import { readFree } from './free';
import type { SourceItem } from './items';
import type { Preprocessed } from '../../../preprocessor';

export type { SourceItem, StatementItem, DirectiveItem } from './items';
export type { Located } from './located';
export { rangeIn, subLocated } from './located';

export interface SourceRead {
  items: SourceItem[];
  /** `#define NAME value` macros of the active branches, names as written. */
  defines: Map<string, string>;
  fixedForm: boolean;
}

export function isFixedFormPath(path: string): boolean {
  return /\.(f|for|ftn|f77)$/i.test(path);
}

/** `pp` is the shared preprocessor's reading of the same text (conditionals evaluated, headers read). */
export function readSource(text: string, path: string, pp: Preprocessed): SourceRead {
  const lines = text.split('\n').map((l) => (l.endsWith('\r') ? l.slice(0, -1) : l));
  const active = pp.active;
  const defines = objectMacros(pp);
  const fixedForm = isFixedFormPath(path);
  const items = fixedForm ? readFixed(lines, active) : readFree(lines, active);
  return { items, defines, fixedForm };
}

/** Object-like macros of the file and its headers, without the compiler's predefined names. */
function objectMacros(pp: Preprocessed): Map<string, string> {
  const out = new Map<string, string>();
  for (const m of pp.macros.values()) if (!m.params && !/^(__|_OPENACC$|_OPENMP$)/.test(m.name)) out.set(m.name, m.body);
  return out;
}
