/** What the source readers hand to the statement layer: logical statements and directives. */
import type { Pos } from '../../../types';
import type { Located } from './located';

export interface StatementItem {
  kind: 'stmt';
  text: Located;
  /** Statement label (digits, leading zeros kept as written), if any. */
  label?: string;
}

export interface DirectiveItem {
  kind: 'directive';
  /** The directive's lines, joined by newlines, for `readDirective`. */
  slice: string;
  /** File position of the first character of the slice (always column 0). */
  origin: Pos;
}

export type SourceItem = StatementItem | DirectiveItem;

/** Separates a leading free-form label (`10 continue`) from the statement text. */
export function freeLabel(low: string): { label?: string; skip: number } {
  const m = /^(\d{1,5})(\s+|(?=[a-z]))/.exec(low);
  return m ? { label: m[1], skip: m[0].length } : { skip: 0 };
}
