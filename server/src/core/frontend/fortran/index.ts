/**
 * Fortran front end: source text in, the language-neutral program model out, with no syntax
 * tree library (there is no tree-sitter grammar for Fortran here). The reader is our own:
 * source/ joins continuation lines and strips comments while keeping exact file positions,
 * classify.ts and the statement readers build the model, and directives are read by the shared
 * directive reader. Names are lower-cased, because Fortran is case-insensitive.
 *
 * Parsing never fails: broken or half-typed code yields a partial model plus findings where a
 * directive is affected, and `buildFortranModel` never throws.
 */
import type { ProgramModel } from '../../model/program';
import { emptyFortranModel, readFortranInto } from './reader';
import type { Preprocessed } from '../../preprocessor';

export { isFixedFormPath } from './source';

export function buildFortranModel(text: string, path: string, pp?: Preprocessed): ProgramModel {
  const model = emptyFortranModel(path);
  if (pp) model.findings.push(...pp.findings);
  try {
    readFortranInto(model, typeof text === 'string' ? text : '', path, pp);
  } catch {
    // The reader is written not to throw; if it ever does, what was built so far is kept.
  }
  model.directives.sort((a, b) => a.range.start.line - b.range.start.line || a.range.start.col - b.range.start.col);
  return model;
}
