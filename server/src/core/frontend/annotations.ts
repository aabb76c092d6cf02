/**
 * Our own annotation comments. A user marks the time loop with a comment the compilers ignore:
 *
 *     // offload-ledger: time-loop        (C, C++; also inside /* … *\/)
 *     ! offload-ledger: time-loop         (Fortran; `c`/`*` in column 1 in fixed form)
 *
 * on the line before the loop (directive lines and blank lines between them are skipped), or at
 * the end of the loop's own line. Front ends call this with the file's text; the step-counter
 * pass marks the loop that starts on the line found (`LoopStmt.markedTimeLoop`).
 */
import type { SourceLanguage } from '../types';

export const TIME_LOOP_ANNOTATION = 'offload-ledger: time-loop';

const MARK = /offload-ledger\s*:\s*time-loop\b/i;

/** 0-based lines of the loops the annotation marks; `fixedForm` for fixed-form Fortran. */
export function markedLoopLines(text: string, language: SourceLanguage, fixedForm = false): Set<number> {
  const out = new Set<number>();
  if (!MARK.test(text)) return out;
  const lines = text.split(/\r?\n/);
  const fortran = language === 'fortran';
  const isComment = (l: string): boolean => {
    const t = l.trim();
    if (fortran) return (t.startsWith('!') && !t.startsWith('!$')) || (fixedForm && /^[cC*](?!\$)/.test(l));
    return t.startsWith('//') || t.startsWith('/*') || t.startsWith('*');
  };
  const isDirective = (l: string): boolean => {
    const t = l.trim();
    return fortran ? /^[!cC*]\$(acc|omp)/i.test(t) : /^#\s*pragma\b/.test(t) || /^_Pragma\b/.test(t);
  };
  for (let k = 0; k < lines.length; k++) {
    const l = lines[k];
    if (!MARK.test(l)) continue;
    if (!isComment(l)) {
      // A trailing comment on the loop's own line.
      out.add(k);
      continue;
    }
    // Blank lines, further comments and directive lines (with their `\` continuations) may
    // stand between the annotation and the loop.
    let j = k + 1;
    while (j < lines.length) {
      const m = lines[j];
      if (m.trim() === '' || isComment(m)) j++;
      else if (isDirective(m)) {
        while (!fortran && /\\\s*$/.test(lines[j]) && j + 1 < lines.length) j++;
        j++;
      } else break;
    }
    if (j < lines.length) out.add(j);
  }
  return out;
}
