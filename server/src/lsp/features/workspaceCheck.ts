/**
 * The workspace-wide check (`offloadLedger.server.checkWorkspace`): every C, C++ and Fortran
 * source under the workspace folders, analysed one by one with work-done progress and
 * cancellation, diagnostics published for each. Open documents are checked with their editor
 * text; files are found and read by the CLI's own rules (server/src/host/files.ts).
 */
import { fileURLToPath, pathToFileURL } from 'node:url';
import type { CancellationToken, Diagnostic, WorkDoneProgressReporter } from 'vscode-languageserver';
import { DiagnosticSeverity } from 'vscode-languageserver-protocol';
import { InputError, collectSources, readSource } from '../../host/files';
import type { WorkspaceCheckResult } from '../protocol';

export interface CheckHooks {
  /** The editor's text and version when the document is open. */
  openText(uri: string): { text: string; version: number } | undefined;
  /** Analyses one file and returns its diagnostics (throws on failure). */
  analyse(uri: string, path: string, text: string, version: number): Promise<Diagnostic[]>;
  publish(uri: string, diagnostics: Diagnostic[]): void;
  /** Before the first file and after each: `done` of `total` files checked (the project status). */
  onProgress?(done: number, total: number, files: string[]): void;
}

export function sourcesUnder(folderUris: string[]): { files: string[]; skipped: { path: string; reason: string }[] } {
  const files: string[] = [];
  const skipped: { path: string; reason: string }[] = [];
  for (const uri of folderUris) {
    const dir = uri.startsWith('file:') ? fileURLToPath(uri) : uri;
    try {
      files.push(...collectSources([dir]));
    } catch (e) {
      // A folder without sources is not an error of the check.
      if (!(e instanceof InputError)) skipped.push({ path: dir, reason: e instanceof Error ? e.message : String(e) });
    }
  }
  return { files: [...new Set(files)], skipped };
}

export async function checkWorkspace(folderUris: string[], hooks: CheckHooks, progress: WorkDoneProgressReporter, token: CancellationToken): Promise<WorkspaceCheckResult> {
  const t0 = Date.now();
  const { files, skipped } = sourcesUnder(folderUris);
  const result: WorkspaceCheckResult = { files: 0, findings: { error: 0, warning: 0, info: 0, hint: 0 }, skipped, milliseconds: 0, cancelled: false };
  progress.begin('Offload Ledger: checking the workspace', 0, `${files.length} files`, true);
  for (const [k, path] of files.entries()) {
    if (token.isCancellationRequested) {
      result.cancelled = true;
      break;
    }
    hooks.onProgress?.(k, files.length, files);
    progress.report(Math.round((100 * k) / Math.max(files.length, 1)), path);
    const uri = pathToFileURL(path).href;
    let text: string;
    let version = 0;
    const open = hooks.openText(uri);
    if (open) {
      ({ text, version } = open);
    } else {
      try {
        text = readSource(path).text;
      } catch (e) {
        skipped.push({ path, reason: e instanceof Error ? e.message : String(e) });
        continue;
      }
    }
    try {
      const diagnostics = await hooks.analyse(uri, path, text, version);
      hooks.publish(uri, diagnostics);
      result.files++;
      for (const d of diagnostics) {
        if (d.severity === DiagnosticSeverity.Error) result.findings.error++;
        else if (d.severity === DiagnosticSeverity.Warning) result.findings.warning++;
        else if (d.severity === DiagnosticSeverity.Information) result.findings.info++;
        else result.findings.hint++;
      }
    } catch (e) {
      skipped.push({ path, reason: e instanceof Error ? e.message.split('\n')[0] : String(e) });
    }
  }
  result.milliseconds = Date.now() - t0;
  progress.done();
  return result;
}
