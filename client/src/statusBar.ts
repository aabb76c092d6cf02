/**
 * The status bar items: the active machine profile and the server's state (a click chooses the
 * profile), and the project index (indexing N of M files, then ready with the file count; a
 * click checks the workspace).
 */
import * as vscode from 'vscode';
import { ClientCommands, type ProjectStatusParams, type StatusParams } from '../../server/src/lsp/protocol';

export class ProfileStatus implements vscode.Disposable {
  private readonly item = vscode.window.createStatusBarItem('offloadLedger.status', vscode.StatusBarAlignment.Right, 100);

  constructor(initialProfile: string) {
    this.item.name = 'Offload Ledger';
    this.item.command = ClientCommands.chooseProfile;
    this.show({ state: 'ready', profile: initialProfile, baseline: '' });
    this.item.show();
  }

  show(s: StatusParams): void {
    const icon = s.state === 'analysing' ? '$(sync~spin)' : s.state === 'error' ? '$(warning)' : '$(dashboard)';
    this.item.text = `${icon} ${s.profile || 'Offload Ledger'}`;
    this.item.tooltip = new vscode.MarkdownString(
      `**Offload Ledger** — machine profile \`${s.profile}\`${s.baseline ? `, baseline ${s.baseline}` : ''}\n\n${s.message ?? (s.state === 'analysing' ? 'Analysing…' : 'Click to choose the machine profile.')}`,
    );
    this.item.backgroundColor = s.state === 'error' ? new vscode.ThemeColor('statusBarItem.warningBackground') : undefined;
  }

  stopped(reason: string): void {
    this.item.text = '$(error) Offload Ledger stopped';
    this.item.tooltip = `${reason} Click to restart the language server.`;
    this.item.command = ClientCommands.restartServer;
    this.item.backgroundColor = new vscode.ThemeColor('statusBarItem.errorBackground');
  }

  running(): void {
    this.item.command = ClientCommands.chooseProfile;
    this.item.backgroundColor = undefined;
  }

  dispose(): void {
    this.item.dispose();
  }
}

/** What the project item says, as text and tooltip (plain data, so it can be checked without an editor). */
export function projectStatusText(p: ProjectStatusParams): { text: string; tooltip: string } {
  const what =
    'Offload Ledger project index: the C, C++ and Fortran files of the project (sibling files, the sources of ' +
    'compile_commands.json, the files of a workspace check) whose procedures and modules the analysis follows calls into.';
  const files = (n: number): string => `${n} file${n === 1 ? '' : 's'}`;
  if (p.state === 'indexing') {
    const of = `${p.done ?? 0} of ${p.total ?? 0}`;
    const doing = p.scope === 'workspace' ? `Checking the workspace: ${of} files done.` : `Reading the project's files: ${of} ready.`;
    return { text: `$(sync~spin) Indexing ${of} files`, tooltip: `${what}\n\n${doing}` };
  }
  return { text: `$(database) ${files(p.files)}`, tooltip: `${what}\n\nReady: ${files(p.files)} indexed. Click to check the whole workspace.` };
}

export class ProjectStatus implements vscode.Disposable {
  private readonly item = vscode.window.createStatusBarItem('offloadLedger.project', vscode.StatusBarAlignment.Right, 99);

  constructor() {
    this.item.name = 'Offload Ledger Project';
    this.item.command = ClientCommands.checkWorkspace;
  }

  show(p: ProjectStatusParams): void {
    const { text, tooltip } = projectStatusText(p);
    this.item.text = text;
    this.item.tooltip = tooltip;
    this.item.show();
  }

  /** The server stopped: what the item said no longer holds. */
  hide(): void {
    this.item.hide();
  }

  dispose(): void {
    this.item.dispose();
  }
}
