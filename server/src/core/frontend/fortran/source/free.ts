/**
 * Free source form (Fortran 2008 §3.3.2, from memory): `!` starts a comment outside character
 * literals, a line whose code ends in `&` continues on the next non-comment line, and when that
 * line's first non-blank character is `&` the statement resumes right after it (so a token may be
 * split), otherwise it resumes at the line's first column. `;` separates statements.
 */
import { continuesOnNextLine, isDirectiveStart } from '../../../directives/reader';
import { LocatedBuilder, subLocated } from './located';
import { freeLabel, type SourceItem } from './items';

/** A free-form directive line: `!$acc` or `!$omp` as the first non-blank characters. */
const isSentinelLine = (line: string): boolean => /^\s*!/.test(line) && isDirectiveStart(line, 'fortran') !== undefined;

const isCommentOrBlank = (line: string): boolean => /^\s*(!|$)/.test(line);

export function readFree(lines: readonly string[], active: readonly boolean[]): SourceItem[] {
  const items: SourceItem[] = [];
  let i = 0;
  while (i < lines.length) {
    const line = lines[i];
    if (!active[i]) {
      i++;
      continue;
    }
    if (isSentinelLine(line)) {
      let j = i;
      while (j + 1 < lines.length && continuesOnNextLine(lines[j], 'fortran') && isSentinelLine(lines[j + 1])) j++;
      items.push({ kind: 'directive', slice: lines.slice(i, j + 1).join('\n'), origin: { line: i, col: 0 } });
      i = j + 1;
      continue;
    }
    if (isCommentOrBlank(line)) {
      i++;
      continue;
    }
    i = statement(lines, active, i, items) + 1;
  }
  return items;
}

/** Reads one logical line starting at line `first`; returns the index of its last physical line. */
function statement(lines: readonly string[], active: readonly boolean[], first: number, items: SourceItem[]): number {
  const b = new LocatedBuilder();
  let li = first;
  let col = 0;
  let quote = '';
  for (;;) {
    const l = lines[li];
    let end = l.length;
    for (let k = col; k < l.length; k++) {
      const ch = l[k];
      if (quote) {
        if (ch === quote) quote = '';
      } else if (ch === "'" || ch === '"') quote = ch;
      else if (ch === '!') {
        end = k;
        break;
      }
    }
    let e = end;
    while (e > col && /\s/.test(l[e - 1])) e--;
    const continued = e > col && l[e - 1] === '&';
    const stop = continued ? e - 1 : e;
    b.pushLine(l, li, col, stop);
    if (!continued) break;
    let next = li + 1;
    while (next < lines.length && (!active[next] || (isCommentOrBlank(lines[next]) && !isSentinelLine(lines[next])))) next++;
    // A promised continuation that never comes ends the statement where the text ends.
    if (next >= lines.length || isSentinelLine(lines[next])) break;
    const nl = lines[next];
    const f = nl.search(/\S/);
    col = nl[f] === '&' ? f + 1 : 0;
    li = next;
  }
  for (const piece of b.finish()) {
    const { label, skip } = freeLabel(piece.low);
    const text = skip > 0 ? subLocated(piece, skip, piece.raw.length) : piece;
    if (text.raw.length > 0) items.push({ kind: 'stmt', text, label });
    else if (label) items.push({ kind: 'stmt', text: piece, label });
  }
  return li;
}
