/** Small helpers over tree-sitter nodes, shared by the C/C++ front-end files. */
import type { Node } from 'web-tree-sitter';
import type { Range } from '../../types';

export type { Node };

export function rangeOf(n: Node): Range {
  return {
    start: { line: n.startPosition.row, col: n.startPosition.column },
    end: { line: n.endPosition.row, col: n.endPosition.column },
  };
}

/** Named children, skipping comments (which tree-sitter places anywhere). */
export function namedChildren(n: Node): Node[] {
  // One call across the wasm boundary for all children is much cheaper than one per child.
  return n.namedChildren.filter((c): c is Node => !!c && c.type !== 'comment');
}

export function field(n: Node, name: string): Node | undefined {
  return n.childForFieldName(name) ?? undefined;
}

/** Operator token of a binary/assignment/update/unary expression. */
export function operatorOf(n: Node): string {
  const op = n.childForFieldName('operator');
  if (op) return op.text;
  for (let i = 0; i < n.childCount; i++) {
    const c = n.child(i);
    if (c && !c.isNamed) return c.type;
  }
  return '';
}

/** Strips redundant parentheses around an expression node. */
export function unparen(n: Node): Node {
  let cur = n;
  // C++ wraps `if`/`while` conditions in a condition_clause (its `value`, or a declaration).
  while (cur.type === 'parenthesized_expression' || cur.type === 'condition_clause') {
    const inner = cur.type === 'condition_clause' ? field(cur, 'value') ?? namedChildren(cur).slice(-1)[0] : namedChildren(cur)[0];
    if (!inner) break;
    cur = inner;
  }
  return cur;
}
