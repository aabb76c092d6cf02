/** An empty program model: the starting point of every front end, and what a file without code yields. */
import type { ProgramModel } from './program';
import type { SourceLanguage } from '../types';

export function emptyModel(path: string, language: SourceLanguage): ProgramModel {
  return {
    path,
    language,
    layout: language === 'fortran' ? 'column-major' : 'row-major',
    procedures: [],
    globals: [],
    bindings: new Map(),
    floatConstants: new Map(),
    directives: [],
    findings: [],
  };
}
