/**
 * Preprocessor macros as the analysis needs them: object-like macros become constant bindings
 * (`#define NX 600`) or typed floating constants (`#define DT 0.5f`); function-like index macros
 * (`#define IDX(i,j) ((j)*NX+(i))`) are expanded inside expressions so that subscripts become
 * affine forms over loop variables.
 */
import { subscriptSymbolic } from './expressionsClamps';
import type { ArrayAccess, VExpr } from '../../model/program';
import { printValue } from '../../model/values';
import type { Range } from '../../types';

export interface FunctionMacro {
  name: string;
  params: string[];
  variadic?: boolean;
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

  define(name: string, body: string, params?: string[], variadic?: boolean): void {
    if (params) this.functions.set(name, { name, params, body, variadic });
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
      case 'index': {
        // A macro that takes the array itself (`#define AT(g,i,j) g[(j)*NX+(i)]`) names the
        // argument's array: `AT(u,i,j)` reads `u`.
        const rebuilt = rebuildAccess(e.access, e.access.subscriptValues.map(go), at);
        const arg = env.get(e.access.array);
        if (arg) {
          const name = arrayNameOf(arg);
          if (name) rebuilt.array = name;
        }
        return { kind: 'index', access: rebuilt };
      }
      default:
        return e;
    }
  };
  return go(template);
}

export function rebuildAccess(a: ArrayAccess, values: VExpr[], at: Range): ArrayAccess {
  return { ...a, subscriptValues: values, subscripts: values.map((v) => subscriptSymbolic(v)), subscriptText: values.map((v) => printValue(v)), range: at };
}

/** The array an argument names: a variable (`u`), a member (`f.u`, `p->u`), or a cast of one. */
function arrayNameOf(e: VExpr): string | undefined {
  if (e.kind === 'var') return e.name;
  if (e.kind === 'cast' || (e.kind === 'unary' && e.op === '+')) return arrayNameOf(e.operand);
  return undefined;
}
