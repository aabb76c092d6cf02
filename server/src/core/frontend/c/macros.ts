/**
 * Preprocessor macros as the analysis needs them: object-like macros become constant bindings
 * (`#define NX 600`) or typed floating constants (`#define DT 0.5f`); function-like index macros
 * (`#define IDX(i,j) ((j)*NX+(i))`) are expanded inside expressions so that subscripts become
 * affine forms over loop variables.
 */
import type { ArrayAccess, VExpr } from '../../model/program';
import { printValue, toSymbolic } from '../../model/values';
import type { Range } from '../../types';

export interface FunctionMacro {
  name: string;
  params: string[];
  body: string;
  /** Parsed body; filled lazily by the expression builder, null when the body is not an expression. */
  template?: VExpr | null;
}

export interface ObjectMacro {
  name: string;
  body: string;
}

export class MacroTable {
  readonly functions = new Map<string, FunctionMacro>();
  readonly objects = new Map<string, ObjectMacro>();

  define(name: string, body: string, params?: string[]): void {
    if (params) this.functions.set(name, { name, params, body });
    else this.objects.set(name, { name, body });
  }
}

/**
 * Replaces the parameter variables of a macro template with the call's argument expressions.
 * Array accesses inside the result are rebuilt so that their subscripts are recomputed from the
 * substituted values, and they take the call site's range (the template has no place in the file).
 */
export function instantiate(template: VExpr, params: string[], args: VExpr[], at: Range): VExpr {
  const env = new Map<string, VExpr>();
  params.forEach((p, i) => { if (args[i]) env.set(p, args[i]); });
  const go = (e: VExpr): VExpr => {
    switch (e.kind) {
      case 'var':
        return env.get(e.name) ?? e;
      case 'bin':
        return { ...e, left: go(e.left), right: go(e.right) };
      case 'unary':
      case 'cast':
        return { ...e, operand: go(e.operand) };
      case 'call':
        return { ...e, args: e.args.map(go) };
      case 'cond':
        return { ...e, test: go(e.test), then: go(e.then), else: go(e.else) };
      case 'index':
        return { kind: 'index', access: rebuildAccess(e.access, e.access.subscriptValues.map(go), at) };
      default:
        return e;
    }
  };
  return go(template);
}

export function rebuildAccess(a: ArrayAccess, values: VExpr[], at: Range): ArrayAccess {
  return { ...a, subscriptValues: values, subscripts: values.map((v) => toSymbolic(v)), subscriptText: values.map(printValue), range: at };
}
