/**
 * `Offload Ledger: Measure Transfers With Separate Memory`: runs the bundled CLI's `verify` on the
 * active C or C++ file. It builds the program with clang for OpenMP offloading to the host as a
 * separate device, runs it with the runtime's mapping log, and prints the bytes each construct
 * moved beside the ledger's, and whether the results differ from a shared-memory run. Building
 * and running the user's program is code execution, so it is refused in untrusted workspaces.
 */
import { execFile } from 'node:child_process';
import { dirname } from 'node:path';
import * as vscode from 'vscode';

export async function measureTransfers(context: vscode.ExtensionContext, output: vscode.OutputChannel): Promise<void> {
  if (!vscode.workspace.isTrusted) {
    void vscode.window.showWarningMessage('Offload Ledger: measuring transfers builds and runs your program, so it needs a trusted workspace.');
    return;
  }
  const doc = vscode.window.activeTextEditor?.document;
  if (!doc || doc.uri.scheme !== 'file' || !['c', 'cpp'].includes(doc.languageId)) {
    void vscode.window.showWarningMessage('Offload Ledger: open the C or C++ file with the program\'s main first (Fortran cannot be built with clang here).');
    return;
  }
  if (doc.isDirty) await doc.save();
  const config = vscode.workspace.getConfiguration('offloadLedger', doc.uri);
  const flags = config.get<string>('preprocessorFlags', '');
  const runArgs = config.get<string>('verify.runArguments', '');
  const compiler = config.get<string>('verify.compiler', '');
  const bindings = Object.entries(config.get<Record<string, unknown>>('sizeBindings', {}) ?? {})
    .filter(([, v]) => typeof v === 'number' && Number.isInteger(v)).flatMap(([k, v]) => ['--bind', `${k}=${v}`]);
  const cli = context.asAbsolutePath('server/dist/cli.js');
  const args = [cli, 'verify', doc.uri.fsPath, ...splitFlags(flags), ...bindings, ...(runArgs ? ['--run', runArgs] : []), ...(compiler ? ['--compiler', compiler] : [])];
  output.appendLine(`measure transfers: ${process.execPath} ${args.join(' ')}`);
  const result = await vscode.window.withProgress(
    { location: vscode.ProgressLocation.Notification, title: 'Offload Ledger: building and running with separate memories', cancellable: true },
    (_progress, token) =>
      new Promise<{ code: number; stdout: string; stderr: string }>((resolve) => {
        const child = execFile(process.execPath, args, { cwd: dirname(doc.uri.fsPath), env: { ...process.env, ELECTRON_RUN_AS_NODE: '1' }, maxBuffer: 64 * 1024 * 1024 }, (error, stdout, stderr) => {
          output.append(stdout);
          output.append(stderr);
          resolve({ code: error ? (typeof error.code === 'number' ? error.code : 1) : 0, stdout, stderr });
        });
        token.onCancellationRequested(() => child.kill());
      }),
  );
  output.show(true);
  if (result.code === 2) {
    const last = result.stderr.trim().split('\n')[0] ?? 'no message';
    void vscode.window.showErrorMessage(`Offload Ledger: the measurement could not run (${last.replace(/^offload-ledger: /, '')}).`);
  } else if (result.code === 1) {
    void vscode.window.showWarningMessage('Offload Ledger: the measured run differs from the ledger or between separate and shared memory; see the output.');
  } else {
    void vscode.window.showInformationMessage('Offload Ledger: every construct moved the bytes the ledger predicts, and both memory models give the same results.');
  }
}

/** `-DNX=64 -I include`: the preprocessor flags setting, split at blanks (quotes kept together). */
function splitFlags(s: string): string[] {
  return (s.match(/"[^"]*"|'[^']*'|\S+/g) ?? []).map((t) => t.replace(/^["']|["']$/g, ''));
}
