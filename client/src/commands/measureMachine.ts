/**
 * `Offload Ledger: Measure This Machine`: runs the bundled CLI's `calibrate --out <file>` (which
 * compiles and runs small bandwidth kernels) and points the `measuredHostProfile` setting at the
 * result. Running a compiler is code execution, so it is refused in untrusted workspaces.
 */
import { execFile } from 'node:child_process';
import * as vscode from 'vscode';

export async function measureMachine(context: vscode.ExtensionContext, output: vscode.OutputChannel): Promise<void> {
  if (!vscode.workspace.isTrusted) {
    void vscode.window.showWarningMessage('Offload Ledger: measuring this machine compiles and runs code, so it needs a trusted workspace.');
    return;
  }
  const compiler = vscode.workspace.getConfiguration('offloadLedger').get<string>('calibrate.compiler', '');
  const dir = context.globalStorageUri.fsPath;
  await vscode.workspace.fs.createDirectory(context.globalStorageUri);
  const out = vscode.Uri.joinPath(context.globalStorageUri, 'host-profile.json').fsPath;
  const cli = context.asAbsolutePath('server/dist/cli.js');
  const args = [cli, 'calibrate', '--out', out, ...(compiler ? ['--compiler', compiler] : [])];
  output.appendLine(`measure: ${process.execPath} ${args.join(' ')}`);
  const result = await vscode.window.withProgress(
    { location: vscode.ProgressLocation.Notification, title: 'Offload Ledger: measuring this machine', cancellable: true },
    (_progress, token) =>
      new Promise<{ code: number; stderr: string }>((resolve) => {
        // ELECTRON_RUN_AS_NODE makes VS Code's own executable behave as Node for the CLI.
        const child = execFile(process.execPath, args, { cwd: dir, env: { ...process.env, ELECTRON_RUN_AS_NODE: '1' }, maxBuffer: 16 * 1024 * 1024 }, (error, stdout, stderr) => {
          output.append(stdout);
          output.append(stderr);
          resolve({ code: error ? (typeof error.code === 'number' ? error.code : 1) : 0, stderr });
        });
        token.onCancellationRequested(() => child.kill());
      }),
  );
  if (result.code !== 0) {
    const last = result.stderr.trim().split('\n').pop() ?? 'no message';
    void vscode.window.showErrorMessage(`Offload Ledger: the measurement failed (${last}).`, 'Show Output').then((c) => c && output.show());
    return;
  }
  // A machine-scoped setting can only live in the user's settings.
  await vscode.workspace.getConfiguration('offloadLedger').update('measuredHostProfile', out, vscode.ConfigurationTarget.Global);
  void vscode.window.showInformationMessage(`Offload Ledger: host profile measured and saved to ${out}; the estimates now use it.`);
}
