/**
 * The language server reads the project's compilation database as the CLI does
 * (tests/compile-db.test.ts): the document is read with its own entry's flags, the kernel in
 * another folder with its own, and the time loop's calls are followed into that folder; the
 * diagnostics equal the CLI's findings for the file. The setting `compileCommands` names another
 * database, and a broken one is logged while the document is still analysed.
 */
import { mkdirSync, mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterEach, describe, expect, it } from 'vitest';
import { type TestClient, startTestClient } from './e2e/lspClient';
import { runCli } from './helpers';

/** src/main.c steps a kernel in src/kernels/relax.c whose directive is under #ifdef USE_GPU; N is in include/. */
function project(): string {
  const dir = mkdtempSync(join(tmpdir(), 'ol-lsp-cdb-'));
  mkdirSync(join(dir, 'src', 'kernels'), { recursive: true });
  mkdirSync(join(dir, 'include'));
  writeFileSync(join(dir, 'include', 'size.h'), '#define N 4096\n');
  writeFileSync(join(dir, 'src', 'kernels', 'relax.c'), `#include "size.h"
void relax(double *v, const double *u) {
#ifdef USE_GPU
#pragma acc parallel loop copyin(u[0:N]) copy(v[0:N])
#endif
  for (int i = 1; i < N - 1; i++) v[i] = 0.5 * (u[i - 1] + u[i + 1]);
}
`);
  writeFileSync(join(dir, 'src', 'main.c'), `#include <stdlib.h>
#include "size.h"
void relax(double *v, const double *u);
int main(void) {
  double *u = calloc(N, sizeof(double));
  double *v = calloc(N, sizeof(double));
  for (int t = 0; t < 100; t++) {
    relax(v, u);
    double *w = u; u = v; v = w;
  }
  return 0;
}
`);
  const entry = (file: string, flags: string[]) => ({ directory: dir, file, arguments: ['cc', ...flags, '-c', file] });
  writeFileSync(join(dir, 'compile_commands.json'), JSON.stringify([
    entry('src/main.c', ['-Iinclude', '-fopenacc']),
    entry('src/kernels/relax.c', ['-DUSE_GPU', '-Iinclude', '-fopenacc']),
  ]));
  mkdirSync(join(dir, 'out'));
  writeFileSync(join(dir, 'out', 'cpu.json'), JSON.stringify([
    { directory: join(dir, 'out'), file: '../src/main.c', arguments: ['cc', '-I../include', '../src/main.c'] },
    { directory: join(dir, 'out'), file: '../src/kernels/relax.c', arguments: ['cc', '-I../include', '../src/kernels/relax.c'] },
  ]));
  return dir;
}

describe('language server: the compilation database', () => {
  let c: TestClient | undefined;
  afterEach(async () => {
    await c?.close();
    c = undefined;
  });

  it('reads each file with its own entry and follows the call into another folder, as the CLI does', async () => {
    const dir = project();
    c = await startTestClient({ rootPath: dir });
    const main = join(dir, 'src', 'main.c');
    const uri = c.open(main, readFileSync(main, 'utf8'));
    const diags = await c.waitForDiagnostics(uri, (d) => d.diagnostics.length > 0);
    const cli = JSON.parse(runCli(['check', '--format', 'json'], dir).stdout).files.find((f: { path: string }) => f.path === 'src/main.c');
    const want = cli.findings.map((f: { code: string; line: number }) => `${f.code}@${f.line}`).sort();
    // copyin(u) and copy(v) in relax.c, reached from the call at line 8 (USE_GPU is relax.c's flag).
    expect(want).toEqual(['transfer-in-time-loop@8', 'transfer-in-time-loop@8']);
    expect(diags.map((d) => `${d.code}@${d.range.start.line + 1}`).sort()).toEqual(want);
    expect(diags[0].message).toContain('kernels/relax.c, line 4');
  });

  it('uses the database the setting names (relative to the workspace folder)', async () => {
    const dir = project();
    c = await startTestClient({ rootPath: dir, settings: { compileCommands: 'out/cpu.json' } });
    const relax = join(dir, 'src', 'kernels', 'relax.c');
    const uri = c.open(relax, readFileSync(relax, 'utf8'));
    // Without USE_GPU the directive is in an inactive branch: one note, nothing offloaded.
    const diags = await c.waitForDiagnostics(uri);
    expect(diags.map((d) => d.code)).toEqual(['inactive-offload-branch']);
  });

  it('logs a database that is not JSON once and analyses the document without it', async () => {
    const dir = project();
    writeFileSync(join(dir, 'compile_commands.json'), '[{"directory": ');
    c = await startTestClient({ rootPath: dir });
    const relax = join(dir, 'src', 'kernels', 'relax.c');
    const uri = c.open(relax, readFileSync(relax, 'utf8'));
    const diags = await c.waitForDiagnostics(uri);
    // Without the database: no USE_GPU, and N unknown (size.h is not found without -I include).
    expect([...new Set(diags.map((d) => d.code))].sort()).toEqual(['inactive-offload-branch', 'unknown-extent']);
    const logs = c.notifications.filter((n) => n.method === 'window/logMessage').map((n) => (n.params as { message: string }).message);
    expect(logs.filter((m) => /compile_commands\.json: not valid JSON/.test(m))).toHaveLength(1);
  });
});
