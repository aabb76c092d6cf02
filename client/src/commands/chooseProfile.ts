/**
 * `Offload Ledger: Choose Machine Profile`: a quick pick over the built-in profiles and the
 * profiles of the workspace's `offload-ledger.machines.json` (the server validates that file and
 * reports its errors; here only the names are listed).
 */
import * as vscode from 'vscode';
import { PRESETS } from '../../../server/src/core/machine/profiles';

const MACHINES_FILE = 'offload-ledger.machines.json';

async function workspaceProfiles(): Promise<{ name: string; description: string }[]> {
  const folder = vscode.workspace.workspaceFolders?.[0];
  if (!folder) return [];
  try {
    const bytes = await vscode.workspace.fs.readFile(vscode.Uri.joinPath(folder.uri, MACHINES_FILE));
    const data = JSON.parse(Buffer.from(bytes).toString('utf8')) as { profiles?: Record<string, { description?: string; preset?: string }> };
    return Object.entries(data.profiles ?? {}).map(([name, p]) => ({ name, description: p.description ?? `from ${MACHINES_FILE}${p.preset ? `, based on ${p.preset}` : ''}` }));
  } catch {
    return [];
  }
}

export async function chooseProfile(): Promise<void> {
  const config = vscode.workspace.getConfiguration('offloadLedger');
  const current = config.get<string>('profile');
  const mark = (name: string, text: string): string => (name === current ? `${text} (current)` : text);
  const items: vscode.QuickPickItem[] = [
    ...(await workspaceProfiles()).map((p) => ({ label: p.name, description: mark(p.name, p.description), detail: `workspace profile (${MACHINES_FILE})` })),
    ...Object.entries(PRESETS).map(([name, p]) => ({
      label: name,
      description: mark(name, p.description),
      detail: `host ${p.host} · device ${p.device} · link ${p.link}`,
    })),
  ];
  const pick = await vscode.window.showQuickPick(items, { title: 'Offload Ledger: machine profile for the estimates', placeHolder: current });
  if (!pick) return;
  // A workspace keeps its own choice when one is open; otherwise the choice is the user's.
  const target = vscode.workspace.workspaceFolders?.length ? vscode.ConfigurationTarget.Workspace : vscode.ConfigurationTarget.Global;
  await config.update('profile', pick.label, target);
}
