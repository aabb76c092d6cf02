/**
 * Which source language a document is. The file extension decides first (as in the CLI);
 * the editor's language id decides for unsaved or unusually named files. Editors name Fortran
 * differently (`fortran`, `FortranFreeForm`, `FortranFixedForm`, `fortran_fixed-form`), so any
 * id starting with "fortran" counts.
 */
import { fileURLToPath } from 'node:url';
import { languageOfPath } from '../core/language';
import type { SourceLanguage } from '../core/types';

export function languageOfDocument(uri: string, languageId: string | undefined): SourceLanguage | undefined {
  const byPath = languageOfPath(pathOfUri(uri));
  if (byPath) return byPath;
  const id = (languageId ?? '').toLowerCase();
  if (id === 'c') return 'c';
  if (id === 'cpp' || id === 'cuda-cpp') return 'cpp';
  if (id.startsWith('fortran')) return 'fortran';
  return undefined;
}

/** A file path for file URIs; the URI's path part for others (untitled:, vscode-vfs:). */
export function pathOfUri(uri: string): string {
  try {
    if (uri.startsWith('file:')) return fileURLToPath(uri);
  } catch {
    // A malformed file URI falls through to the raw path.
  }
  const m = /^[a-z][\w+.-]*:(?:\/\/[^/]*)?(.*)$/i.exec(uri);
  return decodeURIComponent(m ? m[1] : uri);
}
