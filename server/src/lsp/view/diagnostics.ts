/**
 * Findings as LSP diagnostics: the finding code in `Diagnostic.code` with a link to its page,
 * the severity the user chose for that code (or the core's default), and the array in `data`.
 */
import { pathToFileURL } from 'node:url';
import { DiagnosticSeverity, type Diagnostic } from 'vscode-languageserver-protocol';
import type { Finding, Severity } from '../../core/types';
import { toLspRange } from './ranges';

export const DIAGNOSTIC_SOURCE = 'offload-ledger';

const SEVERITY: Record<Severity, DiagnosticSeverity> = {
  error: DiagnosticSeverity.Error,
  warning: DiagnosticSeverity.Warning,
  info: DiagnosticSeverity.Information,
  hint: DiagnosticSeverity.Hint,
};

/** Returns undefined when the user turned the code off. */
export function toDiagnostic(f: Finding, severityOverrides: Record<string, string>, docsHref: string): Diagnostic | undefined {
  const chosen = severityOverrides[f.code];
  if (chosen === 'off') return undefined;
  const severity = chosen && chosen in SEVERITY ? SEVERITY[chosen as Severity] : SEVERITY[f.severity];
  return {
    range: toLspRange(f.range),
    severity,
    code: f.code,
    codeDescription: { href: `${docsHref}#${f.code}` },
    source: DIAGNOSTIC_SOURCE,
    message: f.message,
    ...(f.array ? { data: { array: f.array } } : {}),
    // The other end of a finding that spans two files (the call, or the directive in the callee).
    ...(f.related && f.related.length > 0
      ? { relatedInformation: f.related.map((r) => ({ location: { uri: pathToFileURL(r.path).href, range: toLspRange(r.range) }, message: r.message })) }
      : {}),
  };
}
