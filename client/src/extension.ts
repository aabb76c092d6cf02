/**
 * Entry of the Offload Ledger VS Code extension: starts the language server, registers the
 * commands, and keeps the status bar in step with the server. Everything the extension shows
 * comes from the server; this side only displays it.
 */
import * as vscode from 'vscode';
import type { LanguageClient } from 'vscode-languageclient/node';
import { ClientCommands, ProjectStatusNotification, StatusNotification } from '../../server/src/lsp/protocol';
import { checkWorkspace } from './commands/checkWorkspace';
import { chooseProfile } from './commands/chooseProfile';
import { measureMachine } from './commands/measureMachine';
import { measureTransfers } from './commands/measureTransfers';
import { PlanningView } from './commands/planningView';
import { createClient } from './serverClient';
import { ProfileStatus, ProjectStatus } from './statusBar';

let client: LanguageClient | undefined;

/** What the extension returns from activate: used by the end-to-end driver to wait for the server. */
export interface OffloadLedgerApi {
  ready(): Promise<void>;
}

export async function activate(context: vscode.ExtensionContext): Promise<OffloadLedgerApi> {
  const output = vscode.window.createOutputChannel('Offload Ledger');
  const status = new ProfileStatus(vscode.workspace.getConfiguration('offloadLedger').get<string>('profile', ''));
  const project = new ProjectStatus();
  const planning = new PlanningView(() => client);
  context.subscriptions.push(output, status, project, planning);

  const start = async (): Promise<void> => {
    const c = createClient(context, output, {
      onStopped: (reason) => {
        status.stopped(reason);
        project.hide();
      },
    });
    client = c;
    c.onNotification(ProjectStatusNotification.type, (p) => project.show(p));
    c.onNotification(StatusNotification.type, (s) => {
      status.show(s);
      if (s.state === 'ready' && planning.visible) void planning.refresh();
    });
    try {
      await c.start();
      status.running();
    } catch (e) {
      // initializationFailedHandler has told the user; keep the extension's commands usable.
      output.appendLine(`start failed: ${e instanceof Error ? e.message : String(e)}`);
    }
  };

  const running = (): LanguageClient | undefined => {
    if (client?.isRunning()) return client;
    void vscode.window.showWarningMessage('Offload Ledger: the language server is not running.', 'Restart').then((c) => c && vscode.commands.executeCommand(ClientCommands.restartServer));
    return undefined;
  };

  context.subscriptions.push(
    vscode.commands.registerCommand(ClientCommands.checkWorkspace, async () => {
      const c = running();
      return c ? checkWorkspace(c) : undefined;
    }),
    vscode.commands.registerCommand(ClientCommands.openPlanningView, (uri?: string, line?: number) => planning.open(uri, line)),
    vscode.commands.registerCommand(ClientCommands.chooseProfile, chooseProfile),
    vscode.commands.registerCommand(ClientCommands.measureMachine, () => measureMachine(context, output)),
    vscode.commands.registerCommand(ClientCommands.measureTransfers, () => measureTransfers(context, output)),
    vscode.commands.registerCommand(ClientCommands.showOutput, () => output.show()),
    vscode.commands.registerCommand(ClientCommands.restartServer, async () => {
      const old = client;
      client = undefined;
      await old?.stop().catch(() => undefined);
      await start();
    }),
    { dispose: () => void client?.stop() },
  );

  const started = start();
  return { ready: () => started };
}

export async function deactivate(): Promise<void> {
  await client?.stop();
  client = undefined;
}
