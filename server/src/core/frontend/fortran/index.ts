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
import { setWorkspaceLinks } from '../../model/workspace';
import type { ModuleFinder } from './modules';
import { type FortranLinks, emptyFortranModel, readFortranInto } from './reader';
import { type Preprocessed, preprocess } from '../../preprocessor';

import { isFixedFormPath } from './source';
import { readStepCounters } from '../../model/stepCounters';
import { markedLoopLines } from '../annotations';

export { isFixedFormPath };

/**
 * The model of one file. `findModule` gives the modules that other files of the workspace
 * define; without it a `use` of such a module sees nothing, and the workspace step
 * (model/workspace.ts) reads the file again with it when the workspace has the module.
 */
export function buildFortranModel(text: string, path: string, given?: Preprocessed, findModule?: ModuleFinder): ProgramModel {
  const model = emptyFortranModel(path);
  const source = typeof text === 'string' ? text : '';
  // One preprocessor for every language: without the caller's reading, read it with no defines.
  const pp = given ?? preprocess(source, { path, language: 'fortran' });
  model.findings.push(...pp.findings);
  let links: FortranLinks = { exports: [], imports: [] };
  try {
    links = readFortranInto(model, source, path, pp, findModule);
  } catch {
    // The reader is written not to throw; if it ever does, what was built so far is kept.
  }
  model.directives.sort((a, b) => a.range.start.line - b.range.start.line || a.range.start.col - b.range.start.col);
  try {
    readStepCounters(model, markedLoopLines(pp.text, 'fortran', isFixedFormPath(path)));
  } catch {
    // The pass is written not to throw; the counters are only left unread if it does.
  }
  setWorkspaceLinks(model, { ...links, relink: (find) => buildFortranModel(source, path, pp, find) });
  return model;
}
