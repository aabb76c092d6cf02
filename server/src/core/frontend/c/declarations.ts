/**
 * Reads C/C++ declarations into model declarations: element type and size, static extents,
 * and the element count of heap arrays allocated with malloc/calloc/aligned_alloc/new or
 * sized std::vector constructors.
 */
import * as S from '../../symbolic';
import type { Declaration, ElementType, VExpr } from '../../model/program';
import { toSymbolic } from '../../model/values';
import type { CExpressionBuilder } from './expressions';
import { type Node, field, namedChildren, rangeOf, unparen } from './nodes';

export interface DeclaredName {
  decl: Declaration;
  /** The initialiser expression node, if any. */
  init?: Node;
}

/** Reads a `declaration`, `parameter_declaration` or `field_declaration` node. */
export function readDeclaration(node: Node, scope: Declaration['scope'], exprs: CExpressionBuilder): DeclaredName[] {
  const typeNode = field(node, 'type');
  const typeText = typeNode?.text ?? '';
  const qualifiers = namedChildren(node).filter((c) => c.type === 'type_qualifier').map((c) => c.text);
  const isConst = qualifiers.includes('const') || qualifiers.includes('constexpr') || /\bconstexpr\b/.test(node.text.split('=')[0]);
  const vector = /\bvector\s*<(.+)>/.exec(typeText);
  const type = exprs.typeOf(vector ? vector[1] : typeText);
  const out: DeclaredName[] = [];
  for (const c of node.childrenForFieldName('declarator')) {
    if (!c) continue;
    const d = readDeclarator(c, type, scope, isConst, !!vector, exprs);
    if (d) out.push(d);
  }
  return out;
}

function readDeclarator(
  node: Node,
  type: ElementType,
  scope: Declaration['scope'],
  isConst: boolean,
  isVector: boolean,
  exprs: CExpressionBuilder,
): DeclaredName | undefined {
  let init: Node | undefined;
  let cur: Node | undefined = node;
  let isPointer = false;
  const dimsInnermostFirst: (S.Expr | undefined)[] = [];
  while (cur) {
    if (cur.type === 'init_declarator') {
      init = field(cur, 'value');
      cur = field(cur, 'declarator');
    } else if (cur.type === 'array_declarator') {
      const size = field(cur, 'size');
      dimsInnermostFirst.push(size ? toSymbolic(exprs.value(size)) : undefined);
      cur = field(cur, 'declarator');
    } else if (cur.type === 'pointer_declarator' || cur.type === 'reference_declarator') {
      if (cur.type === 'pointer_declarator') isPointer = true;
      cur = field(cur, 'declarator') ?? namedChildren(cur).find((c) => c.type.endsWith('declarator') || c.type === 'identifier');
    } else if (cur.type === 'parenthesized_declarator') {
      cur = namedChildren(cur)[0];
    } else if (cur.type === 'function_declarator') {
      return undefined;
    } else {
      break;
    }
  }
  if (!cur || !['identifier', 'field_identifier'].includes(cur.type)) return undefined;
  const name = cur.text;
  const dims = dimsInnermostFirst.reverse().map((d, k) => d ?? S.sym(`extent(${name},${k + 1})`));
  const decl: Declaration = {
    name,
    type,
    dims,
    isPointer,
    isArray: dims.length > 0 || isPointer || isVector,
    isConst,
    scope,
    range: rangeOf(node),
  };
  if (isVector) decl.container = 'std::vector';
  if (dims.length > 0) decl.elementCount = S.mul(...dims);
  if (init) {
    const count = exprs.declaringName(name, type, () => allocationCount(init!, type, exprs));
    if (count) decl.elementCount = count;
    else if (dims.length === 0 && !isPointer) {
      const v = toSymbolic(exprs.value(init));
      if (v) decl.init = v;
    }
  }
  return { decl, init };
}

/**
 * Element count of a heap allocation expression: `malloc(bytes)`, `calloc(n, size)`,
 * `aligned_alloc(align, bytes)`, `new T[n]`, or a sized `std::vector` constructor argument list.
 */
export function allocationCount(init: Node, type: ElementType, exprs: CExpressionBuilder): S.Expr | undefined {
  const n = unparen(init);
  if (n.type === 'new_expression') {
    const sizeNode = n.descendantsOfType('new_declarator')[0];
    const sz = sizeNode ? namedChildren(sizeNode)[0] : undefined;
    return sz ? toSymbolic(exprs.value(sz)) : undefined;
  }
  if (n.type === 'argument_list' || n.type === 'initializer_list') {
    const first = namedChildren(n)[0];
    return first && n.type === 'argument_list' ? toSymbolic(exprs.value(first)) : undefined;
  }
  return allocationCountOfValue(exprs.value(n), type);
}

export function allocationCountOfValue(v: VExpr, type: ElementType): S.Expr | undefined {
  let e = v;
  while (e.kind === 'cast') e = e.operand;
  if (e.kind !== 'call') return undefined;
  const bytes = (x: VExpr | undefined): S.Expr | undefined => (x ? toSymbolic(x) : undefined);
  let total: S.Expr | undefined;
  if (e.name === 'malloc' && e.args.length === 1) total = bytes(e.args[0]);
  else if (e.name === 'calloc' && e.args.length === 2) {
    const a = bytes(e.args[0]);
    const b = bytes(e.args[1]);
    total = a && b ? S.mul(a, b) : undefined;
  } else if (e.name === 'aligned_alloc' && e.args.length === 2) total = bytes(e.args[1]);
  else if (e.name === 'acc_malloc' || e.name === 'omp_target_alloc') total = bytes(e.args[0]);
  if (!total) return undefined;
  return S.div(total, S.num(type.bytes));
}
