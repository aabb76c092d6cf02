/**
 * The sequence of classified statements and read directives that the unit and body readers walk
 * through. Directives are read once, in source order, when the sequence is made, so that
 * `model.directives` and the directive findings are complete even for code that the statement
 * readers skip (interface blocks, module specification parts).
 */
import type { Directive, Finding, Range } from '../../types';
import { readDirective } from '../../directives/reader';
import { expandDirectiveMacros, markExpanded } from '../../directives/macros';
import type { MacroDef } from '../../preprocessor';
import { type Line, classify } from './classify';
import type { SourceItem } from './source';

export type Entry =
  | { kind: 'line'; line: Line }
  | { kind: 'directive'; directive?: Directive; range: Range };

export function entriesOf(items: readonly SourceItem[], directives: Directive[], findings: Finding[], macros?: ReadonlyMap<string, MacroDef>): Entry[] {
  const out: Entry[] = [];
  for (const item of items) {
    if (item.kind === 'stmt') {
      out.push({ kind: 'line', line: classify(item.text, item.label) });
      continue;
    }
    // A preprocessed file's macros apply in directive lines too (cpp does not know Fortran comments).
    const expanded = expandDirectiveMacros(item.slice, macros);
    const r = readDirective(expanded.text, item.origin, 'fortran');
    const firstLine = item.slice.split('\n')[0];
    const lines = item.slice.split('\n');
    const whole: Range = { start: item.origin, end: { line: item.origin.line + lines.length - 1, col: lines.length === 1 ? item.origin.col + firstLine.length : lines[lines.length - 1].length } };
    if (expanded.changed) {
      for (const f of r.findings) f.range = whole;
      if (r.directive) markExpanded(r.directive, whole);
    }
    findings.push(...r.findings);
    if (r.directive) directives.push(r.directive);
    const range = r.directive?.range ?? { start: item.origin, end: { line: item.origin.line, col: firstLine.length } };
    out.push({ kind: 'directive', directive: r.directive, range });
  }
  return out;
}

export class Cursor {
  private i = 0;
  constructor(private readonly entries: readonly Entry[]) {}

  get eof(): boolean {
    return this.i >= this.entries.length;
  }

  peek(k = 0): Entry | undefined {
    return this.entries[this.i + k];
  }

  next(): Entry | undefined {
    return this.entries[this.i++];
  }

  /** Offset of the first of the next `limit` entries that satisfies `test`, or -1. */
  findAhead(test: (e: Entry) => boolean, limit = Infinity): number {
    const end = Math.min(this.entries.length, this.i + limit);
    for (let k = this.i; k < end; k++) if (test(this.entries[k])) return k - this.i;
    return -1;
  }

  skip(n: number): void {
    this.i = Math.min(this.entries.length, this.i + n);
  }
}
