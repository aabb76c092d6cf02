/**
 * The server under load (issue 7): 1,000 rapid incremental edits to a 5,000-line file, half-typed
 * code between them, no crash, and final diagnostics equal to a fresh check of the final text.
 * It keeps both cores busy for about half a minute, which disturbs the bandwidth measurement of
 * tests/calibrate.test.ts, so it runs with the heavy editor suites (OFFLOAD_LEDGER_E2E=1, a
 * separate step of .ci/run) and skips, saying why, in a plain `npm test`.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { generateSource, linesWith } from './e2e/generate';
import { type TestClient, startTestClient } from './e2e/lspClient';

const EDITS = 1000;
const skip = process.env.OFFLOAD_LEDGER_E2E !== '1';
if (skip) console.log('LSP load test skipped: set OFFLOAD_LEDGER_E2E=1 to run it (.ci/run runs it after npm test)');
const PATH = '/tmp/offload-ledger-load/generated.c';

describe.skipIf(skip)('1,000 rapid edits to a 5,000-line file', () => {
  let c: TestClient;
  let fresh: TestClient;
  beforeAll(async () => {
    c = await startTestClient();
    fresh = await startTestClient();
  });
  afterAll(async () => {
    await c.close();
    await fresh.close();
  });

  it('ends with the diagnostics of a fresh check, without a crash', async () => {
    let lines = generateSource(5000).split('\n');
    expect(lines.length).toBeGreaterThanOrEqual(5000);
    const uri = c.open(PATH, lines.join('\n'));
    await c.waitForDiagnostics(uri, (p) => p.version === 1, 120_000);
    const targets = linesWith(lines.join('\n'), 'u[(ny / 2) * nx + 512 / 2] += 1.0f;');
    const pragmas = linesWith(lines.join('\n'), 'copy(u[0:nx*ny], v[0:nx*ny])');
    const published0 = c.published.length;
    for (let v = 2; v <= EDITS + 1; v++) {
      const k = v % targets.length;
      let line: number;
      let text: string;
      // Odd versions leave half-typed code (an open section, a cut statement); even ones repair it.
      if (v % 4 === 0) [line, text] = [pragmas[k], '#pragma acc parallel loop collapse(2) copy(u[0:nx*'];
      else if (v % 4 === 1) [line, text] = [pragmas[(v - 1) % targets.length], '#pragma acc parallel loop collapse(2) copy(u[0:nx*ny], v[0:nx*ny])'];
      else if (v % 4 === 2) [line, text] = [targets[k], '      u[(ny / 2) * nx + '];
      else [line, text] = [targets[(v - 1) % targets.length], `      u[(ny / 2) * nx + ${v % 7}] += 1.0f;`];
      const old = lines[line];
      lines[line] = text;
      void c.connection.sendNotification('textDocument/didChange', {
        textDocument: { uri, version: v },
        contentChanges: [{ range: { start: { line, character: 0 }, end: { line, character: old.length } }, text }],
      });
    }
    // The last edit must leave complete code: repair whatever the loop left half-typed.
    const finalFixes: [number, string][] = [];
    for (const l of pragmas) if (lines[l].endsWith('nx*')) finalFixes.push([l, '#pragma acc parallel loop collapse(2) copy(u[0:nx*ny], v[0:nx*ny])']);
    for (const l of targets) if (lines[l].endsWith('+ ')) finalFixes.push([l, '      u[(ny / 2) * nx + 3] += 1.0f;']);
    let version = EDITS + 1;
    for (const [line, text] of finalFixes) {
      const old = lines[line];
      lines[line] = text;
      version++;
      void c.connection.sendNotification('textDocument/didChange', {
        textDocument: { uri, version },
        contentChanges: [{ range: { start: { line, character: 0 }, end: { line, character: old.length } }, text }],
      });
    }
    const final = await c.waitForDiagnostics(uri, (p) => p.version === version, 180_000);
    // Debounced: far fewer analyses than edits reached the client (common practice for language servers).
    expect(c.published.length - published0).toBeLessThan(50);

    const freshUri = fresh.open(PATH, lines.join('\n'));
    const expected = await fresh.waitForDiagnostics(freshUri, () => true, 120_000);
    // At least one finding per generated unit (its time loop moves u, v and c every step).
    expect(final.length).toBeGreaterThanOrEqual(targets.length);
    expect(final).toEqual(expected);

    expect(c.child.exitCode).toBeNull();
    const logs = c.notifications.filter((n) => n.method === 'window/logMessage').map((n) => (n.params as { message: string }).message);
    expect(logs.filter((m) => /unhandled|uncaught|worker stopped|failed/i.test(m))).toEqual([]);
  }, 600_000);
});
