/**
 * `offload-ledger translate FILE --to openmp|openacc [--write]`: translates a file's offload
 * directives to the other model. Without --write it prints a unified diff (nothing when no
 * directive changes) and the translator's notes on stderr; --write rewrites the file in place.
 * Exit status: 0 on success, 2 on usage errors or an unreadable file.
 */
import { readFileSync, writeFileSync } from 'node:fs';
import { translateDirectives, unifiedDiff } from '../core/translate';
import { languageOfPath } from '../core/language';

export const TRANSLATE_USAGE = 'usage: offload-ledger translate FILE --to openmp|openacc [--write]';

/** Fixed-form Fortran by extension (.f, .for, .ftn, .f77 and their upper-case spellings). */
export function isFixedForm(path: string): boolean {
  return /\.(f|for|ftn|f77)$/i.test(path);
}

export async function runTranslate(argv: string[], io: { stdout: (s: string) => void; stderr: (s: string) => void }): Promise<number> {
  let file: string | undefined;
  let to: string | undefined;
  let write = false;
  for (let i = 0; i < argv.length; i++) {
    const a = argv[i];
    if (a === '--to') to = argv[++i];
    else if (a.startsWith('--to=')) to = a.slice(5);
    else if (a === '--write' || a === '-w') write = true;
    else if (a === '--help' || a === '-h') { io.stdout(TRANSLATE_USAGE); return 0; }
    else if (a.startsWith('-')) { io.stderr(`offload-ledger: unknown option ${a}\n${TRANSLATE_USAGE}`); return 2; }
    else if (file === undefined) file = a;
    else { io.stderr(`offload-ledger: translate takes one file\n${TRANSLATE_USAGE}`); return 2; }
  }
  if (file === undefined || (to !== 'openmp' && to !== 'openacc')) {
    io.stderr(`offload-ledger: ${file === undefined ? 'no file given' : `--to must be openmp or openacc${to === undefined ? '' : `, not ${to}`}`}\n${TRANSLATE_USAGE}`);
    return 2;
  }
  const language = languageOfPath(file);
  if (!language) {
    io.stderr(`offload-ledger: ${file}: not a C, C++ or Fortran source (by its extension)`);
    return 2;
  }
  let text: string;
  try {
    text = readFileSync(file, 'utf8');
  } catch (e) {
    io.stderr(`offload-ledger: ${file}: cannot be read (${(e as NodeJS.ErrnoException).code ?? 'error'})`);
    return 2;
  }
  if (text.includes('\u0000')) {
    io.stderr(`offload-ledger: ${file}: binary file`);
    return 2;
  }
  const result = translateDirectives(text, language, to, { fixedForm: language === 'fortran' && isFixedForm(file) });
  for (const n of result.notes) io.stderr(`${file}:${n.line + 1}: note: ${n.message}`);
  if (write) {
    if (result.text !== text) {
      try {
        writeFileSync(file, result.text);
      } catch (e) {
        io.stderr(`offload-ledger: ${file}: cannot be written (${(e as NodeJS.ErrnoException).code ?? 'error'})`);
        return 2;
      }
    }
    io.stdout(`${file}: ${result.changed} line${result.changed === 1 ? '' : 's'} translated to ${to === 'openmp' ? 'OpenMP' : 'OpenACC'}${result.notes.length ? `, ${result.notes.length} note${result.notes.length === 1 ? '' : 's'}` : ''}`);
    return 0;
  }
  const diff = unifiedDiff(text, result.text, `a/${file}`, `b/${file}`);
  if (diff !== '') io.stdout(diff.replace(/\n$/, ''));
  return 0;
}
