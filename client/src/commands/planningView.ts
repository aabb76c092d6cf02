/**
 * `Offload Ledger: Open Planning View`: a webview with the ledger and estimates of the analysed
 * documents, rendered as HTML and hand-made SVG by server/src/planning/render.ts (no scripts, no network).
 * It refreshes when the server reports a finished analysis.
 */
import * as vscode from 'vscode';
import type { LanguageClient } from 'vscode-languageclient/node';
import { PlanningDataRequest } from '../../../server/src/lsp/protocol';
import { renderPlanning } from '../../../server/src/planning/render';

export class PlanningView implements vscode.Disposable {
  private panel: vscode.WebviewPanel | undefined;
  private focus: { uri?: string; line?: number } = {};

  constructor(private readonly client: () => LanguageClient | undefined) {}

  async open(uri?: string, line?: number): Promise<void> {
    this.focus = { uri: uri ?? vscode.window.activeTextEditor?.document.uri.toString(), line };
    if (!this.panel) {
      this.panel = vscode.window.createWebviewPanel('offloadLedger.planning', 'Offload Ledger: Planning', vscode.ViewColumn.Beside, {
        enableScripts: false,
        enableFindWidget: true,
        retainContextWhenHidden: false,
        localResourceRoots: [],
      });
      this.panel.onDidDispose(() => (this.panel = undefined));
    } else {
      this.panel.reveal(vscode.ViewColumn.Beside, true);
    }
    await this.refresh();
  }

  async refresh(): Promise<void> {
    const panel = this.panel;
    const client = this.client();
    if (!panel) return;
    if (!client) {
      panel.webview.html = renderPlanning(undefined, { cspSource: panel.webview.cspSource, message: 'The language server is not running.' });
      return;
    }
    const data = await client.sendRequest(PlanningDataRequest.type, {});
    panel.webview.html = renderPlanning(data, { cspSource: panel.webview.cspSource, focusUri: this.focus.uri, focusLine: this.focus.line });
  }

  get visible(): boolean {
    return !!this.panel?.visible;
  }

  dispose(): void {
    this.panel?.dispose();
  }
}
