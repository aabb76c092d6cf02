/**
 * What the editor features need from one analysed document, computed once per analysis (in the
 * analysis worker) as plain data. The main thread answers hovers, lenses, hints and code actions
 * from it without touching the core, so requests stay fast while a large file is re-analysed.
 */
import type { CodeLens, Diagnostic, InlayHint, Range, TextEdit } from 'vscode-languageserver-protocol';
import type { PlanningFile } from '../protocol';

export interface HoverEntry {
  range: Range;
  /** Index into DocumentView.cards. */
  card: number;
}

export interface ActionEntry {
  /** Index into DocumentView.diagnostics of the finding this action fixes. */
  diagnostic: number;
  title: string;
  edits: TextEdit[];
  preferred: boolean;
}

export interface DocumentView {
  uri: string;
  version: number;
  diagnostics: Diagnostic[];
  /** Hover entries bucketed by 0-based line (an entry spanning lines is in each of them). */
  hovers: Record<number, HoverEntry[]>;
  cards: string[];
  lenses: CodeLens[];
  inlayHints: InlayHint[];
  actions: ActionEntry[];
  /** Code actions that fix no finding: port a time loop, translate the directives (view/refactors.ts). */
  refactors: import('./refactors').RefactorEntry[];
  planning: PlanningFile;
  estimatesAvailable: boolean;
  /** First lines of internal errors of the core (logged by the server, never shown as findings). */
  internalErrors: string[];
  analysisMilliseconds: number;
  /** The document was re-analysed by parts from its last analysis (the scheduler predicts a keystroke's cost from it). */
  byParts?: boolean;
}

/** Settings-derived inputs of the view (everything except the analysis itself). */
export interface ViewOptions {
  profileName: string;
  baseline: string;
  severity: Record<string, string>;
  codeLens: boolean;
  inlayHints: boolean;
  /** Base of Diagnostic.codeDescription.href; the code is appended as a fragment. */
  docsHref: string;
}
