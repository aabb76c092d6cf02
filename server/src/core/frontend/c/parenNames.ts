/**
 * `(i) + 1` and `(i) - 1`: C's grammar cannot tell a parenthesised name followed by a sign from a
 * cast of a signed operand without knowing whether the name is a type, and tree-sitter reads it as
 * a cast. Index code writes exactly this (`((i) + NX*((j) + NY*(k)))`, `u[(i)-1]`), and the cast
 * reading changes the arithmetic: `(i) + NX*Y` becomes `((i)(+NX))*Y`. These helpers find the casts
 * whose "type" is a name the file uses as a value and never defines as a type, and give the text
 * with those parentheses blanked (same length, so every line and column stays where it was) for
 * a second parse. Macro bodies get the same treatment for their parameters, which are values by
 * definition.
 */
import type { Node } from './nodes';

/** Blanks, comments and line splices that may stand between the tokens of `(name) -`. */
const GAP = String.raw`(?:\s|\\\r?\n|/\*[\s\S]*?\*/|//[^\n]*)*`;
/** `(name)` followed by a sign or `&`/`*`: the only text a suspect cast can come from. */
const SUSPECT = new RegExp(String.raw`\(${GAP}([A-Za-z_]\w*)${GAP}\)${GAP}[-+&*]`, 'g');

/**
 * The text with the parentheses of every cast whose type is a value name blanked, or undefined
 * when there is none (the first tree then stands). Linear in the tree; a file with no
 * `(name) -`-shaped text is not walked at all.
 */
export function unparenthesisedValueNames(root: Node, text: string): string | undefined {
  const candidates = new Set<string>();
  for (const m of text.matchAll(SUSPECT)) candidates.add(m[1]);
  if (candidates.size === 0) return undefined;
  const suspects: Node[] = [];
  const values = new Set<string>();
  const typedefs = new Set<string>();
  const language = root.tree.language;
  const identifier = language.idForNodeType('identifier', true);
  const typeDefinition = language.idForNodeType('type_definition', true);
  const castExpression = language.idForNodeType('cast_expression', true);
  // One cursor walk over the tree: casts of a signed or address-taken operand to a bare name, the
  // names used as values, and the names a typedef defines. Types are compared by id and only the
  // few nodes that matter are made into objects (one per node was most of the walk's time).
  const cursor = root.walk();
  let more = true;
  while (more) {
    const type = cursor.nodeTypeId;
    if (type === identifier) {
      const name = text.slice(cursor.startIndex, cursor.endIndex);
      if (candidates.has(name)) values.add(name);
    } else if (type === typeDefinition) {
      for (const d of cursor.currentNode.childrenForFieldName('declarator')) if (d) typedefs.add(d.text.replace(/[^\w]/g, ''));
    } else if (type === castExpression) {
      const n = cursor.currentNode;
      const t = n.childForFieldName('type');
      const v = n.childForFieldName('value');
      if (t && v && t.namedChildCount === 1 && t.namedChild(0)?.type === 'type_identifier' && isSigned(v)) suspects.push(n);
    }
    if (cursor.gotoFirstChild()) continue;
    while (!cursor.gotoNextSibling()) {
      if (!cursor.gotoParent()) {
        more = false;
        break;
      }
    }
  }
  cursor.delete();
  const casts = suspects.filter((n) => {
    const name = n.childForFieldName('type')!.text.trim();
    return values.has(name) && !typedefs.has(name);
  });
  if (casts.length === 0) return undefined;
  const lineStarts = [0];
  for (let k = text.indexOf('\n'); k >= 0; k = text.indexOf('\n', k + 1)) lineStarts.push(k + 1);
  const chars = text.split('');
  for (const n of casts) {
    const open = lineStarts[n.startPosition.row] + n.startPosition.column;
    const t = n.childForFieldName('type')!;
    const close = text.indexOf(')', lineStarts[t.endPosition.row] + t.endPosition.column);
    if (chars[open] !== '(' || close < 0) continue;
    chars[open] = ' ';
    chars[close] = ' ';
  }
  return chars.join('');
}

/** `+x`, `-x`, `&x`, `*x`: operands that make `(name) op x` ambiguous. */
function isSigned(v: Node): boolean {
  if (v.type !== 'unary_expression' && v.type !== 'pointer_expression') return false;
  const op = v.child(0)?.type;
  return op === '+' || op === '-' || op === '&' || op === '*';
}

/**
 * A macro body with each parameter's own parentheses dropped (`(i)` → ` i `): the arguments are
 * substituted as values, not as text, so the parentheses only ever protect precedence that value
 * substitution keeps anyway. A parenthesised parameter after a name or a bracket is a call or a
 * subscript and stays.
 */
export function unparenthesisedParameters(body: string, params: readonly string[]): string {
  if (params.length === 0) return body;
  const names = params.map((p) => p.replace(/[^\w]/g, '')).filter((p) => p.length > 0);
  if (names.length === 0) return body;
  return body.replace(new RegExp(`(?<![\\w\\])\\]]\\s*)\\(\\s*(${names.join('|')})\\s*\\)`, 'g'), ' $1 ');
}
