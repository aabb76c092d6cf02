/**
 * Where a time loop's procedure is entered from. Real codes make their arrays present in an
 * allocation or set-up routine (`enter data create(…)`) and run the time loop in another routine
 * called later; the data environment at the time loop's entry is what the program did before the
 * call. This module finds the program's entry (the main program, or a procedure nobody calls)
 * from which the time loop's procedure is reached, so the interpreter can run up to that call.
 */
import type { Procedure, ProgramModel } from '../model/program';
import { calleesOf } from '../model/callees';
import { forEachCallInValue, valuesOfStatement, walkStatements } from '../model/values';

const graphs = new WeakMap<ProgramModel, Map<Procedure, Set<Procedure>>>();

/** Callers of each procedure, built once per model (one walk over every body). */
function callersOf(model: ProgramModel): Map<Procedure, Set<Procedure>> {
  let g = graphs.get(model);
  if (g) return g;
  g = new Map();
  const callees = calleesOf(model);
  for (const caller of model.procedures) {
    const add = (name: string): void => {
      const callee = callees.resolve(name);
      if (!callee || callee === caller) return;
      let set = g!.get(callee);
      if (!set) g!.set(callee, (set = new Set()));
      set.add(caller);
    };
    walkStatements(caller.body, (s) => {
      if (s.kind === 'call') add(s.name);
      for (const v of valuesOfStatement(s)) forEachCallInValue(v, (c) => add(c.name));
    });
  }
  graphs.set(model, g);
  return g;
}

/**
 * The procedure to run from so that `proc` is reached as the program reaches it: the nearest
 * caller chain's root (breadth first; `main`/the main program preferred). Undefined when `proc`
 * itself is a root or nothing calls it.
 */
export function entryRootOf(model: ProgramModel, proc: Procedure): Procedure | undefined {
  const callers = callersOf(model);
  if (!callers.get(proc)?.size) return undefined;
  const seen = new Set<Procedure>([proc]);
  let frontier: Procedure[] = [proc];
  const roots: Procedure[] = [];
  while (frontier.length > 0) {
    const next: Procedure[] = [];
    for (const p of frontier) {
      for (const c of callers.get(p) ?? []) {
        if (seen.has(c)) continue;
        seen.add(c);
        if (!callers.get(c)?.size) roots.push(c);
        else next.push(c);
      }
    }
    frontier = next;
  }
  return roots.find((r) => isMain(r.name)) ?? roots[0];
}

export function isMain(name: string): boolean {
  return name === 'main' || name.startsWith('program ') || name === 'MAIN__';
}
