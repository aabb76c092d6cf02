/** What the statement builders of one scoping unit share. */
import type { ProgramModel } from '../../model/program';
import type { DeclContext } from './declarations';
import type { ExprEnv } from './expressions';
import type { Line } from './classify';
import type { Scope } from './scope';

export interface UnitContext {
  model: ProgramModel;
  scope: Scope;
  env: ExprEnv;
  /** A declaration context for the tokens of one line. */
  declContext(line: Line): DeclContext;
  /** Induction variables of the loops around the statement being built, outermost first. */
  loopVars: string[];
}
