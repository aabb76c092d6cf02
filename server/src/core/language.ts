/** Source language from a file name. Fortran fixed form is told apart by the Fortran front end. */
import type { SourceLanguage } from './types';

const byExtension: Record<string, SourceLanguage> = {
  c: 'c', h: 'c',
  cc: 'cpp', cpp: 'cpp', cxx: 'cpp', 'c++': 'cpp', hpp: 'cpp', hh: 'cpp', hxx: 'cpp', C: 'cpp', H: 'cpp',
  f: 'fortran', for: 'fortran', ftn: 'fortran', f77: 'fortran', f90: 'fortran', f95: 'fortran', f03: 'fortran', f08: 'fortran',
  F: 'fortran', FOR: 'fortran', F90: 'fortran', F95: 'fortran', F03: 'fortran', F08: 'fortran',
};

export function languageOfPath(path: string): SourceLanguage | undefined {
  const m = /\.([^./\\]+)$/.exec(path);
  if (!m) return undefined;
  return byExtension[m[1]] ?? byExtension[m[1].toLowerCase()];
}
