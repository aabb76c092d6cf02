/**
 * Fixed source form (Fortran 2008 §3.3.3, from memory): `c`, `C`, `*` or `!` in column 1 makes
 * a comment line, columns 1–5 hold the label, a character other than blank or zero in column 6
 * marks a continuation line, and code occupies columns 7–72; anything beyond column 72 is
 * ignored. The common tab-format extension (a tab in the label field, then a non-zero digit for
 * a continuation) is accepted too. `d`/`D` debug lines are treated as comments, as compilers do
 * by default. Blanks are kept, so keywords must be written without embedded blanks.
 */
import { continuesOnNextLine } from '../../../directives/reader';
import { LocatedBuilder } from './located';
import type { SourceItem } from './items';

const SENTINEL = /^[cC*!]\$(acc|omp)/i;
const LAST_CODE_COLUMN = 72;

const blankOrZero = (ch: string | undefined): boolean => ch === undefined || ch === ' ' || ch === '\t' || ch === '0';
const isDirectiveInitial = (line: string): boolean => SENTINEL.test(line) && blankOrZero(line[5]);
const isDirectiveContinuation = (line: string): boolean => SENTINEL.test(line) && !blankOrZero(line[5]);

function isComment(line: string): boolean {
  if (/^[cC*!dD]/.test(line) || /^\s*$/.test(line)) return true;
  const f = line.search(/\S/);
  return line[f] === '!' && f !== 5;
}

interface Fields {
  label?: string;
  continuation: boolean;
  codeStart: number;
  codeEnd: number;
}

function fields(line: string): Fields {
  const tab = line.indexOf('\t');
  if (tab >= 0 && tab < 6 && /^[ \d]*$/.test(line.slice(0, tab))) {
    const continuation = /[1-9]/.test(line[tab + 1] ?? '');
    const codeStart = continuation ? tab + 2 : tab + 1;
    return { label: line.slice(0, tab).trim() || undefined, continuation, codeStart, codeEnd: Math.min(line.length, codeStart + LAST_CODE_COLUMN - 6) };
  }
  const labelField = line.slice(0, 5).trim();
  return {
    label: /^\d+$/.test(labelField) ? labelField : undefined,
    continuation: !blankOrZero(line[5]),
    codeStart: 6,
    codeEnd: Math.min(line.length, LAST_CODE_COLUMN),
  };
}

export function readFixed(lines: readonly string[], active: readonly boolean[]): SourceItem[] {
  const items: SourceItem[] = [];
  let current: { b: LocatedBuilder; label?: string; quote: string } | undefined;
  const flush = (): void => {
    if (!current) return;
    current.b.finish().forEach((text, k) => items.push({ kind: 'stmt', text, label: k === 0 ? current!.label : undefined }));
    current = undefined;
  };
  for (let i = 0; i < lines.length; i++) {
    const line = lines[i];
    if (!active[i]) continue;
    if (isDirectiveInitial(line)) {
      flush();
      let j = i;
      while (j + 1 < lines.length && (isDirectiveContinuation(lines[j + 1]) || (continuesOnNextLine(lines[j], 'fortran') && SENTINEL.test(lines[j + 1])))) j++;
      items.push({ kind: 'directive', slice: lines.slice(i, j + 1).join('\n'), origin: { line: i, col: 0 } });
      i = j;
      continue;
    }
    if (isComment(line)) continue;
    const f = fields(line);
    if (!f.continuation || !current) {
      flush();
      current = { b: new LocatedBuilder(), label: f.label, quote: '' };
    }
    let end = f.codeStart;
    for (; end < f.codeEnd; end++) {
      const ch = line[end];
      if (current.quote) {
        if (ch === current.quote) current.quote = '';
      } else if (ch === "'" || ch === '"') current.quote = ch;
      else if (ch === '!') break;
    }
    current.b.pushLine(line, i, f.codeStart, end);
  }
  flush();
  return items;
}
