/**
 * The status bar items: the active machine profile and the server's state (a click chooses the
 * profile), and the project index (indexing N of M files, then ready with the file count; a
 * click checks the workspace).
 */
import * as vscode from 'vscode';
import { ClientCommands, type ProjectStatusParams, type StatusParams } from '../../server/src/lsp/protocol';
import { projectStatusText } from './projectStatusText';

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
