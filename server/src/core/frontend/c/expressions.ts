/**
 * Turns C/C++ expression nodes into value expressions (VExpr), expanding function-like index
 * macros, resolving `sizeof`, and flattening `u[j][i]` into one access with two subscripts.
 */
import type { Parser } from 'web-tree-sitter';
import type { ArrayAccess, ElementType, VExpr } from '../../model/program';
import { ElementTypes } from '../../model/types';
import type { TypeAliases } from './templates';
import { printValue, toSymbolic } from '../../model/values';
import { parseExpr } from '../../symbolic';
import { subscriptSymbolic } from './expressionsClamps';
import { MacroTable, instantiate } from './macros';
import { unparenthesisedParameters } from './parenNames';
import { type Node, field, namedChildren, operatorOf, rangeOf, unparen } from './nodes';

export interface ExprContext {
  parser: Parser;
  macros: MacroTable;
  /** Element type of a declared name, for `sizeof *p` and `sizeof(a[0])`. */
  elementTypeOf(name: string): ElementType | undefined;
  /** Typedefs, type macros and template parameters in scope. */
  types: TypeAliases;
}

const MAX_MACRO_DEPTH = 16;

export class CExpressionBuilder {
  private depth = 0;
  /** Names being declared right now: `float *p = malloc(N * sizeof *p)` names p in its own initialiser. */
  private readonly declaring = new Map<string, ElementType>();

  constructor(private readonly ctx: ExprContext) {}

  value(node: Node | undefined): VExpr {
    if (!node) return { kind: 'opaque', text: '' };
    const n = unparen(node);
    switch (n.type) {
      case 'number_literal': {
        // tree-sitter folds a sign into the literal in `i+-1`; keep it as a negation so that the
        // subscript stays an affine form.
        const sign = /^\s*([-+])\s*/.exec(n.text);
        if (!sign) return numberLiteral(n.text);
        const magnitude = numberLiteral(n.text.slice(sign[0].length));
        return sign[1] === '-' ? { kind: 'unary', op: '-', operand: magnitude } : magnitude;
      }
      case 'char_literal':
        return { kind: 'num', text: n.text, isFloat: false };
      case 'true':
      case 'false':
        return { kind: 'num', text: n.type === 'true' ? '1' : '0', isFloat: false };
      case 'identifier':
      case 'field_expression':
      case 'qualified_identifier':
      case 'this':
        return this.identifier(n);
      case 'subscript_expression': {
        const access = this.access(n, false, true);
        return access ? { kind: 'index', access } : { kind: 'opaque', text: n.text };
      }
      case 'binary_expression':
        return { kind: 'bin', op: operatorOf(n), left: this.value(field(n, 'left')), right: this.value(field(n, 'right')) };
      case 'unary_expression':
      case 'pointer_expression': {
        const op = operatorOf(n);
        return { kind: 'unary', op, operand: this.value(field(n, 'argument')) };
      }
      case 'update_expression':
        return this.value(field(n, 'argument'));
      case 'cast_expression': {
        const typeNode = field(n, 'type');
        return { kind: 'cast', type: this.typeOf(typeNode?.text ?? ''), operand: this.value(field(n, 'value')) };
      }
      case 'sizeof_expression':
        return this.sizeOf(n);
      case 'conditional_expression':
        return {
          kind: 'cond',
          test: this.value(field(n, 'condition')),
          then: this.value(field(n, 'consequence')),
          else: this.value(field(n, 'alternative')),
        };
      case 'call_expression':
        return this.call(n);
      case 'assignment_expression':
        return this.value(field(n, 'right'));
      case 'comma_expression':
        return this.value(field(n, 'right'));
      default:
        return { kind: 'opaque', text: n.text };
    }
  }

  /**
   * Builds an array access from a subscript expression, flattening nested subscripts into one
   * access per array. Returns undefined when the base is not a name (e.g. `f(x)[i]`).
   */
  access(node: Node, isWrite: boolean, isRead: boolean): ArrayAccess | undefined {
    const indices: Node[] = [];
    let base = unparen(node);
    while (base.type === 'subscript_expression') {
      const idx = field(base, 'index') ?? namedChildren(field(base, 'indices') ?? base).slice(-1)[0];
      if (idx) indices.unshift(idx);
      const arg = field(base, 'argument');
      if (!arg) return undefined;
      base = unparen(arg);
    }
    if (!['identifier', 'field_expression', 'qualified_identifier'].includes(base.type)) return undefined;
    const values = indices.map((i) => this.value(i));
    return {
      array: normaliseName(base.text),
      subscripts: values.map(subscriptSymbolic),
      subscriptText: values.map((v) => printValue(v)),
      subscriptValues: values,
      isWrite,
      isRead,
      range: rangeOf(node),
    };
  }

  private identifier(n: Node): VExpr {
    const name = normaliseName(n.text);
    const macro = this.ctx.macros.objects.get(name);
    // Object-like macros with a literal body are inlined so literal typing sees `0.5f`; named
    // sizes (`NX`) stay symbols so that reports keep the user's names.
    if (macro && /^[-+]?(\d+\.\d*|\.\d+|\d+[eE])/.test(macro.body.trim())) return numberLiteral(macro.body.trim().replace(/^\((.*)\)$/, '$1'));
    // An object-like macro that names an element (`#define CENTRE u[(j)*NX+(i)]`) reads it.
    if (macro && macro.body.includes('[') && this.depth < MAX_MACRO_DEPTH) {
      const template = this.objectTemplate(macro.name, macro.body);
      if (template) return instantiate(template, [], [], rangeOf(n));
    }
    return { kind: 'var', name };
  }

  private call(n: Node): VExpr {
    const fn = field(n, 'function');
    const args = namedChildren(field(n, 'arguments') ?? n).filter((a) => a !== fn);
    const name = fn ? normaliseName(fn.text) : '';
    const macro = this.ctx.macros.functions.get(name);
    if (macro && macro.params.length === args.length && this.depth < MAX_MACRO_DEPTH) {
      const template = this.template(macro.name);
      if (template) return instantiate(template, macro.params, args.map((a) => this.value(a)), rangeOf(n));
    }
    return { kind: 'call', name, args: args.map((a) => this.value(a)) };
  }

  /** The element type of a type spelling, through typedefs, type macros and template parameters. */
  typeOf(spelling: string): ElementType {
    return this.ctx.types.typeOf(spelling);
  }

  /** Runs `f` with `name` known as an array of `type`, for initialisers that mention the name being declared. */
  declaringName<T>(name: string, type: ElementType, f: () => T): T {
    this.declaring.set(name, type);
    try {
      return f();
    } finally {
      this.declaring.delete(name);
    }
  }

  private readonly standalone = new Map<string, import('../../symbolic').Expr | undefined>();

  /**
   * Parses a stand-alone expression text (a macro body, a section bound) into a symbolic integer,
   * if it is one. Texts without function-like macros take the symbolic parser's fast path;
   * others go through tree-sitter so the macros expand. Results are cached per text.
   */
  parseStandalone(body: string): import('../../symbolic').Expr | undefined {
    if (this.standalone.has(body)) return this.standalone.get(body);
    const usesMacro = [...body.matchAll(/[A-Za-z_]\w*/g)].some((m) => this.ctx.macros.functions.has(m[0]));
    const fast = usesMacro ? undefined : parseExpr(body, 'c');
    const value = fast ?? this.parseWithTreeSitter(body);
    this.standalone.set(body, value);
    return value;
  }

  private parseWithTreeSitter(body: string): import('../../symbolic').Expr | undefined {
    const tree = this.ctx.parser.parse(`int __offload_ledger_value = (${body});`);
    try {
      const init = tree?.rootNode.descendantsOfType('init_declarator')[0];
      const value = init ? field(init, 'value') : undefined;
      return value && !value.hasError ? toSymbolic(this.value(value)) : undefined;
    } finally {
      tree?.delete();
    }
  }

  private readonly objectTemplates = new Map<string, VExpr | null>();

  /** Parses an object-like macro body once (only those that read an array element). */
  private objectTemplate(name: string, body: string): VExpr | undefined {
    if (!this.objectTemplates.has(name)) {
      this.objectTemplates.set(name, null);
      const tree = this.ctx.parser.parse(`int __offload_ledger_macro = (${body});`);
      const init = tree?.rootNode.descendantsOfType('init_declarator')[0];
      const value = init ? field(init, 'value') : undefined;
      if (value && !value.hasError) {
        this.depth++;
        try {
          this.objectTemplates.set(name, this.value(value));
        } finally {
          this.depth--;
        }
      }
      tree?.delete();
    }
    return this.objectTemplates.get(name) ?? undefined;
  }

  /** Parses a function-like macro body once, as an expression over its parameter names. */
  private template(name: string): VExpr | undefined {
    const macro = this.ctx.macros.functions.get(name);
    if (!macro) return undefined;
    if (macro.template === undefined) {
      macro.template = null;
      const tree = this.ctx.parser.parse(`int __offload_ledger_macro = (${unparenthesisedParameters(macro.body, macro.params)});`);
      const init = tree?.rootNode.descendantsOfType('init_declarator')[0];
      const value = init ? field(init, 'value') : undefined;
      if (value && !value.hasError) {
        this.depth++;
        try {
          macro.template = this.value(value);
        } finally {
          this.depth--;
        }
      }
      tree?.delete();
    }
    return macro.template ?? undefined;
  }

  private sizeOf(n: Node): VExpr {
    const typeNode = field(n, 'type');
    let t: ElementType | undefined;
    if (typeNode) {
      const spelled = typeNode.text;
      t = /\*/.test(spelled) ? ElementTypes.long : this.typeOf(spelled);
    } else {
      const v = field(n, 'value');
      const inner = v ? unparen(v) : undefined;
      if (inner) {
        let base = inner;
        while (base.type === 'subscript_expression' || base.type === 'pointer_expression') {
          base = unparen(field(base, 'argument') ?? base);
          if (base === inner) break;
        }
        const name = normaliseName(base.text);
        t = this.declaring.get(name) ?? this.ctx.elementTypeOf(name);
      }
    }
    if (!t || t.name === 'unknown') return { kind: 'call', name: 'sizeof', args: [{ kind: 'opaque', text: n.text }] };
    let bytes: VExpr = { kind: 'num', text: String(t.bytes), isFloat: false };
    // `sizeof(double[NY][NX])`: an array type is its element times its extents.
    if (typeNode && !/\*/.test(typeNode.text)) {
      let d = field(typeNode, 'declarator');
      while (d && d.type === 'abstract_array_declarator') {
        const size = field(d, 'size');
        if (!size) break;
        bytes = { kind: 'bin', op: '*', left: bytes, right: this.value(size) };
        d = field(d, 'declarator');
      }
    }
    return bytes;
  }
}

/** Names of members keep their dotted form (`s.u`, `p->u` → `p->u`), with spaces removed. */
export function normaliseName(text: string): string {
  return text.replace(/\s+/g, '');
}

export function numberLiteral(text: string): VExpr {
  const t = text.trim();
  const isHex = /^0[xX]/.test(t);
  const isFloat = !isHex && /[.eE]|[fF]$/.test(t);
  if (!isFloat) return { kind: 'num', text: t, isFloat: false };
  // C: a literal is double unless suffixed with f/F (float) or l/L (long double).
  const bytes = /[fF]$/.test(t) ? 4 : /[lL]$/.test(t) ? 16 : 8;
  return { kind: 'num', text: t, isFloat: true, bytes };
}
