/**
 * Starts the bundled language server (server/dist/lsp.js) over Node IPC and keeps the user told
 * when it fails: a failed start or repeated crashes stop the automatic restarts, mark the status
 * bar, and offer a restart instead of leaving the editor silently without findings.
 */
import * as vscode from 'vscode';
import {
  CloseAction,
  type CloseHandlerResult,
  ErrorAction,
  type ErrorHandlerResult,
  LanguageClient,
  type LanguageClientOptions,
  type ServerOptions,
  TransportKind,
} from 'vscode-languageclient/node';
import { ClientCommands } from '../../server/src/lsp/protocol';
import { documentSelector } from './selector';

/** Restarts allowed within the window before the client gives up (common practice in LSP clients). */
const MAX_RESTARTS = 4;
const RESTART_WINDOW_MS = 3 * 60 * 1000;

export interface ClientEvents {
  onStopped(reason: string): void;
}

export function createClient(context: vscode.ExtensionContext, output: vscode.OutputChannel, events: ClientEvents): LanguageClient {
  const module = context.asAbsolutePath('server/dist/lsp.js');
  const serverOptions: ServerOptions = {
    run: { module, transport: TransportKind.ipc },
    debug: { module, transport: TransportKind.ipc, options: { execArgv: ['--nolazy', '--inspect=6019'] } },
  };
  const restarts: number[] = [];
  const clientOptions: LanguageClientOptions = {
    documentSelector: documentSelector(),
    outputChannel: output,
    markdown: { isTrusted: false, supportHtml: false },
    errorHandler: {
      error: (_error, _message, count): ErrorHandlerResult => ({ action: (count ?? 0) <= 3 ? ErrorAction.Continue : ErrorAction.Shutdown }),
      closed: (): CloseHandlerResult => {
        const now = Date.now();
        restarts.push(now);
        while (restarts.length > 0 && now - restarts[0] > RESTART_WINDOW_MS) restarts.shift();
        if (restarts.length <= MAX_RESTARTS) return { action: CloseAction.Restart, message: 'The Offload Ledger server stopped; restarting it.' };
        const reason = `The Offload Ledger server stopped ${restarts.length} times in ${RESTART_WINDOW_MS / 60000} minutes and will not be restarted automatically.`;
        events.onStopped(reason);
        void vscode.window.showErrorMessage(reason, 'Restart', 'Show Output').then((choice) => {
          if (choice === 'Restart') void vscode.commands.executeCommand(ClientCommands.restartServer);
          if (choice === 'Show Output') output.show();
        });
        return { action: CloseAction.DoNotRestart, handled: true };
      },
    },
    initializationFailedHandler: (error) => {
      const reason = `The Offload Ledger server failed to start: ${error instanceof Error ? error.message : String(error)}`;
      output.appendLine(reason);
      events.onStopped(reason);
      void vscode.window.showErrorMessage(reason, 'Show Output').then((choice) => choice && output.show());
      return false;
    },
  };
  return new LanguageClient('offloadLedger', 'Offload Ledger', serverOptions, clientOptions);
}
