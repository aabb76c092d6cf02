/**
 * Which documents the extension serves. C and C++ by language id; Fortran by every id editors
 * use for it and by file extension, since without a Fortran extension VS Code opens `.f90` files
 * as plain text.
 */
import type { DocumentFilter } from 'vscode-languageclient/node';

export const FORTRAN_LANGUAGE_IDS = ['fortran', 'FortranFreeForm', 'FortranFixedForm', 'fortran_free-form', 'fortran_fixed-form', 'fortran90'];
export const FORTRAN_EXTENSIONS = ['f', 'for', 'ftn', 'f77', 'f90', 'f95', 'f03', 'f08', 'F', 'FOR', 'F90', 'F95', 'F03', 'F08'];

export function documentSelector(): DocumentFilter[] {
  return [
    ...['c', 'cpp', ...FORTRAN_LANGUAGE_IDS].map((language) => ({ language })),
    ...['file', 'untitled'].map((scheme) => ({ scheme, pattern: `**/*.{${FORTRAN_EXTENSIONS.join(',')}}` })),
  ];
}
