/**
 * Element types behind names: typedefs (`typedef double real;`), C++ aliases (`using real_t =
 * float;`), type macros (`#define REAL double`) and template type parameters (`template <class
 * T>`), whose type comes from the instantiations the file shows: explicit ones (`template class
 * Stream<double>;`) and uses with arguments (`Stream<float> s;`, `axpy<double>(…)`).
 */
import type { ElementType } from '../../model/program';
import { elementTypeFromC } from '../../model/types';
import { type Node, field, namedChildren } from './nodes';

export class TypeAliases {
  private readonly aliases = new Map<string, string>();

  set(name: string, spelling: string): void {
    this.aliases.set(name, spelling);
  }

  delete(name: string): void {
    this.aliases.delete(name);
  }

  /** The element type of a spelling once its alias words are replaced (a few levels deep). */
  typeOf(spelling: string): ElementType {
    let s = spelling;
    for (let depth = 0; depth < 4 && this.aliases.size > 0; depth++) {
      const next = s.replace(/[A-Za-z_]\w*/g, (w) => this.aliases.get(w) ?? w);
      if (next === s) break;
      s = next;
    }
    return elementTypeFromC(s);
  }

  /** Whether an object-like macro body spells a type (`double`, `unsigned long`), not a value. */
  static isTypeSpelling(body: string): boolean {
    return /^(?:(?:const|volatile|unsigned|signed|long|short|struct)\s+)*(?:float|double|int|long|short|char|size_t|ptrdiff_t|int\d+_t|uint\d+_t|_Complex|bool|_Bool)(?:\s+(?:double|int|long|_Complex))*$/.test(body.trim());
  }
}

export interface TemplateBinding {
  /** Type parameter → the type spelling it is analysed with. */
  types: Map<string, string>;
  /** What was assumed, for the hover and the report; empty when the file fixes every type. */
  notes: string[];
}

/**
 * The type arguments each template is used with in the file, collected once from the tree:
 * template name (last name component) → argument spellings per use.
 */
export class TemplateUses {
  private readonly uses = new Map<string, string[][]>();

  /** Declared type spelling of each name in the file (first declaration wins; scopes are not kept). */
  private readonly declared = new Map<string, string>();
  /** Plain calls by function name: each call's argument nodes. */
  private readonly calls = new Map<string, Node[][]>();

  constructor(root: Node) {
    for (const n of root.descendantsOfType(['template_type', 'template_function', 'declaration', 'parameter_declaration', 'call_expression'])) {
      if (!n) continue;
      if (n.type === 'declaration' || n.type === 'parameter_declaration') {
        const type = field(n, 'type')?.text;
        for (const d of n.childrenForFieldName('declarator')) {
          const name = d ? declaredName(d) : undefined;
          if (type && name && !this.declared.has(name)) this.declared.set(name, type);
        }
        continue;
      }
      if (n.type === 'call_expression') {
        const fn = field(n, 'function');
        if (fn?.type !== 'identifier' && fn?.type !== 'qualified_identifier') continue;
        const list = this.calls.get(lastName(fn.text)) ?? [];
        list.push(namedChildren(field(n, 'arguments') ?? n));
        this.calls.set(lastName(fn.text), list);
        continue;
      }
      const name = lastName(field(n, 'name')?.text ?? '');
      const args = field(n, 'arguments');
      if (!name || !args) continue;
      const list = namedChildren(args).map((a) => a.text.trim());
      const all = this.uses.get(name) ?? [];
      all.push(list);
      this.uses.set(name, all);
    }
  }

  /**
   * The types a function template's parameter `t` takes at its plain calls (`axpy(n, a, x, y)`
   * with `float *x` declared in the file): deduced from the arguments whose parameter is spelled
   * `T`, `T *`, `const T *` or `T &` (C++ template argument deduction in its simplest form).
   */
  deduced(decl: Node, owner: string, t: string): string[] {
    const fn = namedChildren(decl).find((c) => c.type === 'function_definition' || c.type === 'declaration');
    let d = fn ? field(fn, 'declarator') : undefined;
    while (d && d.type !== 'function_declarator') d = field(d, 'declarator') ?? namedChildren(d)[0];
    const params = d ? namedChildren(field(d, 'parameters') ?? d).filter((p) => p.type === 'parameter_declaration') : [];
    const positions = params.flatMap((p, k) => (field(p, 'type')?.text.replace(/\bconst\b/g, '').trim() === t ? [k] : []));
    const out: string[] = [];
    for (const args of this.calls.get(owner) ?? []) {
      for (const k of positions) {
        const a = args[k];
        if (!a) continue;
        if (a.type === 'number_literal') {
          if (/[.eE]/.test(a.text) && !/^0[xX]/.test(a.text)) out.push(/[fF]$/.test(a.text) ? 'float' : 'double');
          continue;
        }
        const base = a.type === 'identifier' ? a.text : undefined;
        const spelled = base ? this.declared.get(base) : undefined;
        if (spelled) out.push(spelled.replace(/\bconst\b/g, '').trim());
      }
    }
    return out;
  }

  /** Binds the type parameters of a `template_declaration` node. */
  bind(decl: Node, aliases: TypeAliases): TemplateBinding {
    const params = field(decl, 'parameters');
    const types = new Map<string, string>();
    const notes: string[] = [];
    if (!params) return { types, notes };
    const owner = ownerName(decl);
    const uses = owner ? this.uses.get(owner) ?? [] : [];
    namedChildren(params).forEach((p, k) => {
      if (p.type !== 'type_parameter_declaration' && p.type !== 'optional_type_parameter_declaration') return;
      const name = namedChildren(p).find((c) => c.type === 'type_identifier')?.text;
      if (!name) return;
      const fallback = p.type === 'optional_type_parameter_declaration' ? field(p, 'default_type')?.text : undefined;
      const written = uses.map((u) => u[k]);
      const fromCalls = owner && written.length === 0 ? this.deduced(decl, owner, name) : [];
      const concrete = [...new Set([...written, ...fromCalls].filter((a): a is string => !!a && aliases.typeOf(a).name !== 'unknown'))];
      if (concrete.length === 1) {
        types.set(name, concrete[0]);
        return;
      }
      if (concrete.length > 1) {
        // The widest floating type: the figures then bound the bytes of every instantiation.
        const widest = [...concrete].sort((a, b) => score(aliases.typeOf(b)) - score(aliases.typeOf(a)))[0];
        types.set(name, widest);
        notes.push(`\`${name}\` is taken as \`${widest}\`, the widest of the types this file instantiates \`${owner}\` with (${concrete.map((c) => `\`${c}\``).join(', ')}); bytes scale with the element size.`);
        return;
      }
      const assumed = fallback && aliases.typeOf(fallback).name !== 'unknown' ? fallback : 'double';
      types.set(name, assumed);
      notes.push(`\`${name}\` has no instantiation in this file, so \`${owner ?? 'the template'}\` is costed with \`${assumed}\` elements (${fallback ? 'its default' : 'assumed'}); bytes scale with the element size.`);
    });
    return { types, notes };
  }
}

/** The name a declarator declares (`x`, `*x`, `x[4]`, `x = 1`). */
function declaredName(d: Node): string | undefined {
  let cur: Node | undefined = d;
  while (cur && cur.type !== 'identifier') cur = field(cur, 'declarator') ?? undefined;
  return cur?.text;
}

function score(t: ElementType): number {
  return (t.isFloat ? 100 : 0) + t.bytes;
}

function lastName(text: string): string {
  return text.replace(/<.*$/s, '').split('::').pop()?.trim() ?? '';
}

/** The class or function a template declares; for an out-of-line member (`S<T>::f`), the class. */
function ownerName(decl: Node): string | undefined {
  for (const c of namedChildren(decl)) {
    if (c.type === 'class_specifier' || c.type === 'struct_specifier') return lastName(field(c, 'name')?.text ?? '');
    if (c.type === 'function_definition' || c.type === 'declaration') {
      let d = field(c, 'declarator');
      while (d && d.type !== 'function_declarator') d = field(d, 'declarator') ?? namedChildren(d)[0];
      const name = d ? field(d, 'declarator') : undefined;
      if (!name) return undefined;
      if (name.type === 'qualified_identifier') {
        const scope = field(name, 'scope');
        if (scope?.type === 'template_type') return lastName(field(scope, 'name')?.text ?? '');
      }
      return lastName(name.text);
    }
  }
  return undefined;
}
