// Test-only extension that runs inside code-server's extension host next to the installed
// Offload Ledger .vsix. It asserts through the public VS Code API what a user would see —
// diagnostics with our codes, a hover with numbers, the data-region quick fix, the code lens,
// the commands — and writes every observation to $E2E_RESULT (JSON) for the test to check.
const vscode = require('vscode');
const fs = require('fs');
const path = require('path');

const sleep = (ms) => new Promise((r) => setTimeout(r, ms));

async function waitFor(what, probe, timeoutMs = 60000) {
  const t0 = Date.now();
  for (;;) {
    const v = await probe();
    if (v) return v;
    if (Date.now() - t0 > timeoutMs) throw new Error(`timed out waiting for ${what}`);
    await sleep(200);
  }
}

function text(h) {
  return h.contents.map((c) => (typeof c === 'string' ? c : c.value)).join('\n');
}

async function openAndWait(file) {
  const uri = vscode.Uri.file(file);
  const doc = await vscode.workspace.openTextDocument(uri);
  await vscode.window.showTextDocument(doc, { preview: false });
  const diags = await waitFor(`diagnostics of ${file}`, () => {
    const d = vscode.languages.getDiagnostics(uri).filter((x) => x.source === 'offload-ledger');
    return d.length > 0 ? d : undefined;
  });
  return { uri, doc, diags };
}

exports.activate = async function () {
  const out = process.env.E2E_RESULT;
  const ws = process.env.E2E_WS;
  if (!out || !ws) return;
  const res = { ok: false, steps: [] };
  const step = (s) => res.steps.push(`${new Date().toISOString()} ${s}`);
  try {
    const ext = await waitFor('the Offload Ledger extension', () => vscode.extensions.getExtension('offload-ledger.offload-ledger'));
    const api = await ext.activate();
    await api.ready();
    step('extension active');
    res.commands = (await vscode.commands.getCommands(true)).filter((c) => c.startsWith('offloadLedger.')).sort();

    const naive = await openAndWait(path.join(ws, 'hall_naive_acc.c'));
    step('naive diagnostics');
    res.naive = naive.diags.map((d) => ({ line: d.range.start.line + 1, code: typeof d.code === 'object' ? String(d.code.value) : String(d.code), href: typeof d.code === 'object' ? d.code.target.toString() : null, severity: d.severity }));
    // The `for` keyword of the pressure update nest (line 121, column 9).
    const hovers = await vscode.commands.executeCommand('vscode.executeHoverProvider', naive.uri, new vscode.Position(120, 9));
    res.nestHover = hovers.map(text).join('\n---\n');
    // The array name `vx` in the copyin clause of line 120.
    const vxCol = naive.doc.lineAt(119).text.indexOf('vx[');
    res.arrayHover = (await vscode.commands.executeCommand('vscode.executeHoverProvider', naive.uri, new vscode.Position(119, vxCol))).map(text).join('\n---\n');
    const first = naive.diags[0];
    const actions = await vscode.commands.executeCommand('vscode.executeCodeActionProvider', naive.uri, first.range, vscode.CodeActionKind.QuickFix.value);
    res.actions = actions.map((a) => ({ title: a.title, kind: a.kind && a.kind.value, edits: a.edit ? a.edit.entries().reduce((n, [, es]) => n + es.length, 0) : 0 }));
    const lenses = await vscode.commands.executeCommand('vscode.executeCodeLensProvider', naive.uri);
    res.lenses = lenses.map((l) => ({ line: l.range.start.line + 1, title: l.command && l.command.title, command: l.command && l.command.command }));
    step('naive hover, actions, lenses');

    const stale = await openAndWait(path.join(ws, 'hall_stale_acc.c'));
    res.stale = stale.diags.map((d) => ({ line: d.range.start.line + 1, code: typeof d.code === 'object' ? String(d.code.value) : String(d.code) }));
    step('stale diagnostics');

    await vscode.commands.executeCommand('offloadLedger.openPlanningView');
    step('planning view opened');
    res.ok = true;
  } catch (e) {
    res.error = String((e && e.stack) || e);
  }
  fs.writeFileSync(out, JSON.stringify(res, null, 2));
};
