/**
 * `Offload Ledger: Open Planning View`: a webview with the planning report of the analysed
 * documents, rendered by server/src/planning/render.ts (Vega charts drawn to SVG in the extension
 * host; no script runs in the page and it loads nothing). It refreshes when the server reports a
 * finished analysis.
 *
 * Rows and chart points open their source line through command links: the webview allows
 * exactly one command URI, `offloadLedger.openSource`, which this view registers.
 */
import * as vscode from 'vscode';
import type { LanguageClient } from 'vscode-languageclient/node';
import { PlanningDataRequest } from '../../../server/src/lsp/protocol';
import { type SourcePlace, renderPlanning } from '../../../server/src/planning/render';

/** The one command the planning view's links run: [document URI, 1-based line]. Not in the palette. */
export const OPEN_SOURCE_COMMAND = 'offloadLedger.openSource';

/** The command link of a source line (VS Code command URIs carry JSON arguments, URI-encoded). */
export function sourceCommandHref(place: SourcePlace): string {
  const uri = place.uri ?? vscode.Uri.file(place.path).toString();
  return `command:${OPEN_SOURCE_COMMAND}?${encodeURIComponent(JSON.stringify([uri, place.line]))}`;
}

export async function openSource(uri: string, line: number): Promise<void> {
  const target = /^[a-z][a-z0-9+.-]*:/i.test(uri) && !/^[a-z]:[\\/]/i.test(uri) ? vscode.Uri.parse(uri) : vscode.Uri.file(uri);
  const at = new vscode.Position(Math.max(0, (Number(line) || 1) - 1), 0);
  await vscode.window.showTextDocument(target, { selection: new vscode.Range(at, at), viewColumn: vscode.ViewColumn.One, preserveFocus: false });
}

export class PlanningView implements vscode.Disposable {
  private panel: vscode.WebviewPanel | undefined;
  private focus: { uri?: string; line?: number } = {};
  private generation = 0;
  private readonly command: vscode.Disposable;

  constructor(private readonly client: () => LanguageClient | undefined) {
    this.command = vscode.commands.registerCommand(OPEN_SOURCE_COMMAND, openSource);
  }

  async open(uri?: string, line?: number): Promise<void> {
    this.focus = { uri: uri ?? vscode.window.activeTextEditor?.document.uri.toString(), line };
    if (!this.panel) {
      this.panel = vscode.window.createWebviewPanel('offloadLedger.planning', 'Offload Ledger: Planning', vscode.ViewColumn.Beside, {
        enableScripts: false,
        enableFindWidget: true,
        enableCommandUris: [OPEN_SOURCE_COMMAND],
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
    // A later refresh wins: rendering is asynchronous, so an earlier one may finish after it.
    const generation = ++this.generation;
    const show = (html: string): void => {
      if (generation === this.generation && this.panel === panel) panel.webview.html = html;
    };
    if (!client) {
      show(await renderPlanning(undefined, { cspSource: panel.webview.cspSource, message: 'The language server is not running.' }));
      return;
    }
    const data = await client.sendRequest(PlanningDataRequest.type, {});
    show(
      await renderPlanning(data, {
        cspSource: panel.webview.cspSource,
        focusUri: this.focus.uri,
        focusLine: this.focus.line,
        displayPath: (p) => vscode.workspace.asRelativePath(p, (vscode.workspace.workspaceFolders?.length ?? 0) > 1),
        sourceHref: sourceCommandHref,
        chartsOpenSource: true,
      }),
    );
  }

  get visible(): boolean {
    return !!this.panel?.visible;
  }

  dispose(): void {
    this.command.dispose();
    this.panel?.dispose();
  }
}
