/**
 * The directive lines a port writes for the nests it offloads: C/C++ `#pragma acc parallel loop`
 * / `#pragma omp target teams distribute parallel for` before the loop (replacing a host
 * `omp parallel for` on it), Fortran `!$acc parallel loop` … `!$acc end parallel loop` and
 * `!$omp target teams distribute parallel do` … `!$omp end target teams distribute parallel do`
 * around the `do` (OpenACC 3.3 §2.11 combined constructs; OpenMP 5.2 §17.4 combined constructs),
 * and for Fortran array syntax an OpenACC `kernels` region (§2.5.3). Every edit is a whole-line
 * insertion or a whole-line replacement of a directive, so the user's code is never rewritten.
 */
import type { ProgramModel } from '../model/program';
import type { DirectiveFamily, TextEdit } from '../types';
import type { PortNest } from './choose';

function lineStarts(text: string): string[] {
  return text.split('\n');
}

export function nestDirective(n: PortNest, family: DirectiveFamily, fortran: boolean): { open: string; close?: string } {
  const clauses = [...(n.collapse > 1 ? [`collapse(${n.collapse})`] : []), ...n.dataClauses, ...n.extra].join(' ');
  const tail = clauses ? ` ${clauses}` : '';
  if (!fortran) {
    return { open: family === 'openacc' ? `#pragma acc parallel loop${tail}` : `#pragma omp target teams distribute parallel for${tail}` };
  }
  if (n.root.implied) return { open: '!$acc kernels', close: '!$acc end kernels' };
  return family === 'openacc'
    ? { open: `!$acc parallel loop${tail}`, close: '!$acc end parallel loop' }
    : { open: `!$omp target teams distribute parallel do${tail}`, close: '!$omp end target teams distribute parallel do' };
}

/**
 * The edits that put the nests on the device. A nest whose loop does not start its own line
 * (`{ for (…)` on one line) cannot take a directive line and is returned in `skipped`.
 */
export function portEdits(text: string, model: ProgramModel, nests: readonly PortNest[], family: DirectiveFamily): { edits: TextEdit[]; skipped: PortNest[] } {
  const lines = lineStarts(text);
  const fortran = model.language === 'fortran';
  const edits: TextEdit[] = [];
  const skipped: PortNest[] = [];
  for (const n of nests) {
    const start = n.root.implied ? n.root.range.start : n.root.keywordRange.start;
    const line = lines[start.line] ?? '';
    const before = line.slice(0, start.col);
    if (before.trim() !== '' && !(fortran && /^\s*(\d+\s+)?([A-Za-z_]\w*\s*:\s*)?$/.test(before))) {
      skipped.push(n);
      continue;
    }
    const indent = /^\s*/.exec(line)?.[0] ?? '';
    const d = nestDirective(n, family, fortran);
    const host = n.replaces;
    if (host && !fortran) {
      // The host-parallel pragma on the loop becomes the offload one.
      const r = host.range;
      const hostIndent = /^\s*/.exec(lines[r.start.line] ?? '')?.[0] ?? '';
      edits.push({ range: { start: { line: r.start.line, col: 0 }, end: { line: r.end.line, col: (lines[r.end.line] ?? '').length } }, newText: `${hostIndent}${d.open}` });
    } else if (host && fortran) {
      const r = host.range;
      edits.push({ range: { start: { line: r.start.line, col: 0 }, end: { line: r.end.line, col: (lines[r.end.line] ?? '').length } }, newText: `${indent}${d.open}` });
    } else {
      edits.push({ range: { start: { line: start.line, col: 0 }, end: { line: start.line, col: 0 } }, newText: `${indent}${d.open}\n` });
    }
    if (d.close) {
      const endLine = n.root.range.end.line;
      const closing = host && fortran ? endDirectiveAfter(lines, endLine) : undefined;
      if (closing !== undefined) {
        edits.push({ range: { start: { line: closing, col: 0 }, end: { line: closing, col: (lines[closing] ?? '').length } }, newText: `${indent}${d.close}` });
      } else {
        edits.push({ range: { start: { line: endLine + 1, col: 0 }, end: { line: endLine + 1, col: 0 } }, newText: `${indent}${d.close}\n` });
      }
    }
  }
  return { edits, skipped };
}

/** A Fortran `!$omp end parallel do` right after the loop's last line, when the host directive had one. */
function endDirectiveAfter(lines: string[], endLine: number): number | undefined {
  for (let k = endLine + 1; k < lines.length && k <= endLine + 2; k++) {
    if (/^\s*!\$omp\s+end\s+parallel\s+do\b/i.test(lines[k])) return k;
    if (lines[k].trim() !== '') return undefined;
  }
  return undefined;
}
