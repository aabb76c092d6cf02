/** `Offload Ledger: Check Workspace`: runs the server's workspace check (with its own progress) and sums it up. */
import * as vscode from 'vscode';
import { ExecuteCommandRequest, type LanguageClient } from 'vscode-languageclient/node';
import { ServerCommands, type WorkspaceCheckResult } from '../../../server/src/lsp/protocol';

export function summary(r: WorkspaceCheckResult): string {
  const f = r.findings;
  const skipped = r.skipped.length > 0 ? `; ${r.skipped.length} skipped` : '';
  return `Offload Ledger checked ${r.files} file${r.files === 1 ? '' : 's'} in ${(r.milliseconds / 1000).toFixed(1)} s${r.cancelled ? ' (cancelled)' : ''}: ${f.error} errors, ${f.warning} warnings, ${f.info + f.hint} notes${skipped}.`;
}

export async function checkWorkspace(client: LanguageClient): Promise<WorkspaceCheckResult | undefined> {
  if (!vscode.workspace.workspaceFolders?.length) {
    void vscode.window.showInformationMessage('Offload Ledger: open a folder to check a workspace.');
    return undefined;
  }
  const result = (await client.sendRequest(ExecuteCommandRequest.type, { command: ServerCommands.checkWorkspace, arguments: [] })) as WorkspaceCheckResult;
  const choice = await vscode.window.showInformationMessage(summary(result), 'Show Problems');
  if (choice) await vscode.commands.executeCommand('workbench.actions.view.problems');
  return result;
}
