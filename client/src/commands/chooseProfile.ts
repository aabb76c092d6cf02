/** `Offload Ledger: Choose Machine Profile`: a quick pick over the built-in profiles. */
import * as vscode from 'vscode';
import { PRESETS } from '../../../server/src/core/machine/profiles';

export async function chooseProfile(): Promise<void> {
  const config = vscode.workspace.getConfiguration('offloadLedger');
  const current = config.get<string>('profile');
  const items = Object.entries(PRESETS).map(([name, p]) => ({
    label: name,
    description: name === current ? `${p.description} (current)` : p.description,
    detail: `host ${p.host} · device ${p.device} · link ${p.link}`,
  }));
  const pick = await vscode.window.showQuickPick(items, { title: 'Offload Ledger: machine profile for the estimates', placeHolder: current });
  if (!pick) return;
  // A workspace keeps its own choice when one is open; otherwise the choice is the user's.
  const target = vscode.workspace.workspaceFolders?.length ? vscode.ConfigurationTarget.Workspace : vscode.ConfigurationTarget.Global;
  await config.update('profile', pick.label, target);
}
