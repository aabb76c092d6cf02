/** textDocument/hover from a document view: the card of the smallest hover range under the cursor. */
import { MarkupKind, type Hover, type Position } from 'vscode-languageserver-protocol';
import { findHover } from '../view/hovers';
import type { DocumentView } from '../view/types';

export function hoverAt(view: DocumentView, p: Position): Hover | null {
  const e = findHover(view, p.line, p.character);
  if (!e) return null;
  return { contents: { kind: MarkupKind.Markdown, value: view.cards[e.card] }, range: e.range };
}
