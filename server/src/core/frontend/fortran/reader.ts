/**
 * The Fortran reader proper: source form, statements, program units, bindings. It is written
 * not to throw on any input; `buildFortranModel` in index.ts still guards it, and the tests call
 * this unguarded entry so that a throw would show up there.
 */
import * as S from '../../symbolic';
import type { ElementType, ProgramModel } from '../../model/program';
import { emptyModel } from '../../model/empty';
import { bindConstants } from './bindings';
import { Cursor, entriesOf } from './cursor';
import { realLiteral } from './expressions';
import { readSource } from './source';
import type { Preprocessed } from '../../preprocessor';
import { lowerOutsideStrings } from './source/located';
import { UnitReader } from './units';
import type { ModuleExports } from '../../model/workspace';
import { type ModuleFinder, moduleExports } from './modules';

/** A `#define` body that is a floating-point literal (`0.5d0`, `1.e-3`, `2.5`). */
const FLOAT_LITERAL = /^[-+]?(\d+\.\d*|\.\d+|\d+(?=[eEdDqQ]))([eEdDqQ][-+]?\d+)?(_\w+)?$/;

/** The empty model the reader fills (a Fortran model is column-major). */
export function emptyFortranModel(path: string): ProgramModel {
  return emptyModel(path, 'fortran');
}

/** What a file shares with its workspace: the modules it defines and those it uses from elsewhere. */
export interface FortranLinks {
  exports: ModuleExports[];
  imports: string[];
}

/** Reads a file into `model`; `findModule` gives the modules of other files when they are known. */
export function readFortranInto(model: ProgramModel, text: string, path: string, pp: Preprocessed, findModule?: ModuleFinder): FortranLinks {
  const src = readSource(text, path, pp);
  const floatMacros = new Map<string, string>();
  const macroConstants = new Map<string, S.Expr>();
  for (const [name, body] of src.defines) {
    const key = name.toLowerCase();
    const literal = body.replace(/^\((.*)\)$/, '$1').trim();
    if (FLOAT_LITERAL.test(literal) && /[.eEdDqQ]/.test(literal)) {
      floatMacros.set(key, literal);
      const lit = realLiteral(literal.toLowerCase(), {
        arrayOf: () => undefined, isUndeclaredVariable: () => false, isDeclared: () => false,
        realKindBytes: (k) => (/^\d+$/.test(k) ? Number(k) : undefined), floatMacro: () => undefined, symbolic: () => undefined,
      });
      const bytes = lit.kind === 'num' && lit.bytes ? lit.bytes : 8;
      const type: ElementType = { name: bytes === 4 ? 'float' : bytes === 16 ? 'long double' : 'double', bytes, isFloat: true };
      model.floatConstants.set(key, type);
      continue;
    }
    const e = S.parseExpr(lowerOutsideStrings(body), 'fortran');
    if (e) {
      macroConstants.set(key, e);
      model.bindings.set(key, e);
    }
  }
  const entries = entriesOf(src.items, model.directives, model.findings, pp.macros);
  // Names that directives move or map are variables; `routine` and `declare target` may name
  // procedures, and a construct's own argument (`critical(name)`) is no data, so those are left out.
  const dataNames = new Set(
    model.directives
      .filter((d) => d.construct !== 'routine' && !d.construct.startsWith('declare'))
      .flatMap((d) => d.clauses.filter((c) => c.name !== d.construct).flatMap((c) => (c.vars ?? []).map((v) => v.name))),
  );
  const units = new UnitReader(model, new Cursor(entries), { floatMacros, macroConstants, dataNames, findModule });
  units.run();
  bindConstants(model, units.units);
  return { exports: moduleExports(model, units.modulesRead), imports: [...units.imported.imports] };
}
