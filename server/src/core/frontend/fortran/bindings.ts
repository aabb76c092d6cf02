/**
 * Constant bindings of a Fortran file. Named constants (`parameter`) bind where they are
 * visible: module constants file-wide, main-program constants file-wide too (the main program
 * is the file's top level, as file-scope constants are in C), and a procedure's own constants
 * in that procedure together with its hosts' (host association). As in the C front end, a
 * variable with a literal initialisation (`integer :: n = 512`) binds when nothing assigns it
 * again, in its own procedure and in the internal procedures of that one. Because Fortran
 * passes arguments by reference, a variable that appears as a whole actual argument, in a
 * `read` list or as a DO variable counts as assigned.
 *
 * A size read from the command line or the environment with a literal default (`integer :: n =
 * 4096` and `read(arg, *) n` after `get_command_argument`) binds to its default, with the
 * sentence the reports show (inputDefaults.ts), in its procedure and its internal procedures.
 */
import type { ProgramModel, Stmt, VExpr } from '../../model/program';
import { walkStatements } from '../../model/values';
import { inputDefaults } from './inputDefaults';
import type { UnitInfo } from './units';

/** How many times each name is written in the file (by name; Fortran passes arguments by reference). */
function writeCounts(model: ProgramModel): Map<string, number> {
  const out = new Map<string, number>();
  const add = (n: string): void => {
    out.set(n, (out.get(n) ?? 0) + 1);
  };
  const vars = (vs: readonly VExpr[]): void => {
    for (const v of vs) if (v.kind === 'var') add(v.name);
  };
  for (const p of model.procedures) {
    walkStatements(p.body, (s: Stmt) => {
      if (s.kind === 'assign' && s.target.kind === 'var') add(s.target.name);
      else if (s.kind === 'loop' && s.variable) add(s.variable);
      else if (s.kind === 'call') vars(s.args);
      else if (s.kind === 'other' && /^\s*read\b/i.test(s.text)) vars(s.values);
    });
  }
  return out;
}

export function bindConstants(model: ProgramModel, units: readonly UnitInfo[]): void {
  const writes = writeCounts(model);
  const assigned = new Set(writes.keys());
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
  // Sizes from the command line or the environment with a literal default: the default, said.
  for (const { procedure, scope } of units) {
    const namelists = new Map<string, readonly string[]>();
    for (let s: typeof scope | undefined = scope; s; s = s.host) for (const [g, names] of s.namelists) if (!namelists.has(g)) namelists.set(g, names);
    const read = inputDefaults(procedure, writes, namelists);
    model.findings.push(...read.findings);
    for (const d of read.defaults) {
      const own = scope.decls.get(d.name);
      // The procedure itself, and its internal procedures that see the same variable (host association).
      for (const u of units) {
        const here = u.scope === scope;
        if (!here && !(own && u.scope.hostAssociated(d.name) === own)) continue;
        if (u.procedure.bindings.has(d.name)) continue;
        u.procedure.bindings.set(d.name, d.value);
        u.procedure.assumptions = [...(u.procedure.assumptions ?? []), d.note];
      }
    }
  }
}
