/**
 * The language server follows a time loop's calls into a kernel in a sibling file, as the CLI
 * does when both files are checked together (tests/workspace.test.ts): the diagnostics of the
 * document are the CLI's findings for that file.
 */
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { type TestClient, ROOT, startTestClient } from './e2e/lspClient';
import { runCli } from './helpers';

const DIR = join(ROOT, 'tests', 'fixtures', 'workspace');
const MAIN = join(DIR, 'main.c');

describe('language server: calls into sibling files', () => {
  let c: TestClient;
  beforeAll(async () => {
    c = await startTestClient({ rootPath: DIR });
  });
  afterAll(async () => {
    await c.close();
  });

  it('reports the callee transfers at the call, as the CLI does for the folder', async () => {
    const uri = c.open(MAIN, readFileSync(MAIN, 'utf8'));
    const diags = await c.waitForDiagnostics(uri, (d) => d.diagnostics.length > 0);
    const cli = JSON.parse(runCli(['check', '--format', 'json', DIR]).stdout).files.find((f: { path: string }) => f.path.endsWith('main.c'));
    const want = cli.findings.map((f: { code: string; line: number }) => `${f.code}@${f.line}`).sort();
    expect(diags.map((d) => `${d.code}@${d.range.start.line + 1}`).sort()).toEqual(want);
    expect(want).toContain('transfer-in-time-loop@10');
    expect(diags.find((d) => d.code === 'transfer-in-time-loop')?.message).toContain('kernels.c, line 3');
  });
});
