/** Builds the DocumentView of one analysis: every editor feature's data, computed once. */
import type { Diagnostic } from 'vscode-languageserver-protocol';
import type { FileAnalysis } from '../../core/analyze';
import { buildActions } from './actions';
import { buildRefactors } from './refactors';
import { ViewContext } from './context';
import { toDiagnostic } from './diagnostics';
import { buildHovers } from './hovers';
import { buildInlayHints } from './inlays';
import { buildLenses } from './lenses';
import { buildPlanning, hasEstimates } from './planning';
import type { DocumentView, ViewOptions } from './types';

export interface ViewInput {
  uri: string;
  version: number;
  text: string;
  analysis: FileAnalysis;
  userBindings: ReadonlyMap<string, number>;
  analysisMilliseconds: number;
}

export function buildView(input: ViewInput, o: ViewOptions): DocumentView {
  const a = input.analysis;
  const diagnostics: Diagnostic[] = [];
  const diagnosticIndex = new Map<number, number>();
  a.findings.forEach((f, k) => {
    const d = toDiagnostic(f, o.severity, o.docsHref);
    if (d) diagnosticIndex.set(k, diagnostics.push(d) - 1);
  });
  const ctx = new ViewContext(a, input.userBindings);
  const hovers = buildHovers(a, ctx, { profileName: o.profileName, baseline: o.baseline });
  return {
    uri: input.uri,
    version: input.version,
    diagnostics,
    hovers: hovers.hovers,
    cards: hovers.cards,
    lenses: o.codeLens ? buildLenses(a, input.uri, o.profileName) : [],
    inlayHints: o.inlayHints ? buildInlayHints(a) : [],
    actions: buildActions(a, input.text, (k) => diagnosticIndex.get(k)),
    refactors: buildRefactors(a, input.text),
    planning: buildPlanning(a, input.uri),
    estimatesAvailable: hasEstimates(a),
    internalErrors: a.internalErrors.map((e) => e.split('\n')[0]),
    analysisMilliseconds: input.analysisMilliseconds,
  };
}
