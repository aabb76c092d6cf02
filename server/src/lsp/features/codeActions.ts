/**
 * textDocument/codeAction: the quick fixes of the findings under the requested range. Clients
 * send back the diagnostics they show, sometimes without `data` (Neovim 0.7), so findings are
 * matched by code and range rather than by anything the client must preserve.
 */
import { CodeActionKind, type CodeAction, type CodeActionParams, type Diagnostic } from 'vscode-languageserver-protocol';
import { overlaps } from '../view/ranges';
import type { DocumentView } from '../view/types';

function sameDiagnostic(a: Diagnostic, b: Diagnostic): boolean {
  return (
    a.code === b.code &&
    a.range.start.line === b.range.start.line &&
    a.range.start.character === b.range.start.character &&
    a.range.end.line === b.range.end.line &&
    a.range.end.character === b.range.end.character
  );
}

export function codeActionsFor(view: DocumentView, params: CodeActionParams): CodeAction[] {
  const only = params.context.only;
  const wants = (kind: string): boolean => !only || only.some((k) => kind.startsWith(k) || k.startsWith(kind));
  const out: CodeAction[] = [];
  // Quick fixes first, then the rewrites that fix no finding (port, translate).
  // Offered when the client asks for rewrites, or for the place itself (no diagnostic there): a
  // request for the fixes of a diagnostic gets only the fixes.
  const askedRewrite = !!only && only.some((k) => CodeActionKind.RefactorRewrite.startsWith(k) && k !== '');
  const rewrites = (): CodeAction[] => (wants(CodeActionKind.RefactorRewrite) && (askedRewrite || params.context.diagnostics.length === 0) ? (view.refactors ?? []) : [])
    .filter((r) => overlaps(r.range, params.range))
    .map((r) => ({ title: r.title, kind: CodeActionKind.RefactorRewrite, edit: { changes: { [view.uri]: r.edits } } }));
  if (!wants(CodeActionKind.QuickFix)) return rewrites();
  for (const a of view.actions) {
    const ours = view.diagnostics[a.diagnostic];
    const theirs = params.context.diagnostics.find((d) => sameDiagnostic(d, ours));
    if (!theirs && !overlaps(ours.range, params.range)) continue;
    out.push({
      title: a.title,
      kind: CodeActionKind.QuickFix,
      diagnostics: [theirs ?? ours],
      isPreferred: a.preferred,
      edit: { changes: { [view.uri]: a.edits } },
    });
  }
  return [...out, ...rewrites()];
}
