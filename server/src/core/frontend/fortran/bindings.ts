/**
 * Constant bindings of a Fortran file. Named constants (`parameter`) bind where they are
 * visible: module constants file-wide, main-program constants file-wide too (the main program
 * is the file's top level, as file-scope constants are in C), and a procedure's own constants
 * in that procedure together with its hosts' (host association). As in the C front end, a
 * variable with a literal initialisation (`integer :: n = 512`) binds when nothing assigns it
 * again, in its own procedure and in the internal procedures of that one. Because Fortran
 * passes arguments by reference, a variable that appears as a whole actual argument, in a
 * `read` list or as a DO variable counts as assigned.
 */
import type { ProgramModel, Stmt, VExpr } from '../../model/program';
import { walkStatements } from '../../model/values';
import type { UnitInfo } from './units';

function assignedNames(model: ProgramModel): Set<string> {
  const out = new Set<string>();
  const vars = (vs: readonly VExpr[]): void => {
    for (const v of vs) if (v.kind === 'var') out.add(v.name);
  };
  for (const p of model.procedures) {
    walkStatements(p.body, (s: Stmt) => {
      if (s.kind === 'assign' && s.target.kind === 'var') out.add(s.target.name);
      else if (s.kind === 'loop' && s.variable) out.add(s.variable);
      else if (s.kind === 'call') vars(s.args);
      else if (s.kind === 'other' && /^\s*read\b/i.test(s.text)) vars(s.values);
    });
  }
  return out;
}

export function bindConstants(model: ProgramModel, units: readonly UnitInfo[]): void {
  const assigned = assignedNames(model);
  for (const g of model.globals) {
    if (g.init && !g.isConst && !assigned.has(g.name)) model.bindings.set(g.name, g.init);
  }
  for (const { procedure, scope } of units) {
    // Outer hosts first, so that a procedure's own constant overrides its host's of the same name.
    const chain = [];
    for (let s: typeof scope | undefined = scope; s; s = s.host) chain.unshift(s);
    for (const s of chain) {
      // Constants renamed on a `use` (`n => nx`) are visible under the local name only.
      for (const [n, v] of s.renamedConstants()) procedure.bindings.set(n, v);
      // Module constants are file-wide already (units.ts).
      if (s.kind === 'module') continue;
      // A host's variable initialised once and never assigned is as constant in its internal
      // procedures (host association) as in the host itself.
      if (s !== scope) for (const d of s.decls.values()) if (d.init && !d.isConst && !assigned.has(d.name)) procedure.bindings.set(d.name, d.init);
      for (const [n, v] of s.constants) procedure.bindings.set(n, v);
    }
    if (scope.kind === 'program') {
      for (const [n, v] of scope.constants) model.bindings.set(n, v);
      for (const [n, v] of scope.floatConstants) model.floatConstants.set(n, v);
    }
    for (const d of procedure.locals) {
      if (d.init && !d.isConst && !assigned.has(d.name)) procedure.bindings.set(d.name, d.init);
    }
  }
}
