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
  /** The document was re-analysed by parts from its last analysis (core/incremental.ts). */
  byParts?: boolean;
}

/** The diagnostics of the findings (a finding set to `off` has none), and each finding's index among them. */
function diagnosticsOf(a: FileAnalysis, o: ViewOptions): { diagnostics: Diagnostic[]; diagnosticIndex: Map<number, number> } {
  const diagnostics: Diagnostic[] = [];
  const diagnosticIndex = new Map<number, number>();
  a.findings.forEach((f, k) => {
    const d = toDiagnostic(f, o.severity, o.docsHref);
    if (d) diagnosticIndex.set(k, diagnostics.push(d) - 1);
  });
  return { diagnostics, diagnosticIndex };
}

/**
 * A view with the diagnostics only, for a first publication (the server publishes nothing else of
 * an early view): the findings are shown as soon as the analysis ends, and the hovers, lenses,
 * hints, fixes and refactors of the full view follow.
 */
export function buildDiagnosticsView(input: ViewInput, o: ViewOptions): DocumentView {
  const { diagnostics } = diagnosticsOf(input.analysis, o);
  return {
    uri: input.uri, version: input.version, diagnostics, hovers: {}, cards: [], lenses: [], inlayHints: [], actions: [], refactors: [],
    planning: buildPlanning({ ...input.analysis, timeLoops: [], nests: [] }, input.uri), estimatesAvailable: false,
    internalErrors: input.analysis.internalErrors.map((e) => e.split('\n')[0]), analysisMilliseconds: input.analysisMilliseconds,
    ...(input.byParts ? { byParts: true } : {}),
  };
}

/**
 * `check` is called between the parts of the view (the editor's job throws there once a newer
 * edit has made the view stale, so the worker is free for it sooner).
 */
export function buildView(input: ViewInput, o: ViewOptions, check: () => void = () => undefined): DocumentView {
  const a = input.analysis;
  const { diagnostics, diagnosticIndex } = diagnosticsOf(a, o);
  const ctx = new ViewContext(a, input.userBindings);
  check();
  const hovers = buildHovers(a, ctx, { profileName: o.profileName, baseline: o.baseline }, check);
  check();
  const lenses = o.codeLens ? buildLenses(a, input.uri, o.profileName) : [];
  const inlayHints = o.inlayHints ? buildInlayHints(a) : [];
  const actions = buildActions(a, input.text, (k) => diagnosticIndex.get(k));
  check();
  const refactors = buildRefactors(a, input.text, check);
  check();
  const planning = buildPlanning(a, input.uri, check);
  return {
    uri: input.uri,
    version: input.version,
    diagnostics,
    hovers: hovers.hovers,
    cards: hovers.cards,
    lenses,
    inlayHints,
    actions,
    refactors,
    planning,
    estimatesAvailable: hasEstimates(a),
    internalErrors: a.internalErrors.map((e) => e.split('\n')[0]),
    analysisMilliseconds: input.analysisMilliseconds,
    ...(input.byParts ? { byParts: true } : {}),
  };
}
