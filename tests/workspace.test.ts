/**
 * A time loop that calls a kernel in another file: checking both files together follows the
 * call (the brief's call rule, across translation units), reports the callee's transfers with
 * their file, places the findings at the call, and suggests a region that compiles and keeps the
 * program's results when both files are built together.
 */
import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { applyLineEdits } from '../server/src/core/data/edits';
import { ROOT, runCli, schemaValidator } from './helpers';

const dir = 'tests/fixtures/workspace';
const gcc = spawnSync('gcc', ['--version']).status === 0;

describe('calls into other files of the workspace', () => {
  const r = runCli(['check', '--format', 'json', dir]);
  const report = JSON.parse(r.stdout);
  const main = report.files.find((f: { path: string }) => f.path.endsWith('main.c'));

  it('follows the call and reports the callee file with each transfer', () => {
    expect(schemaValidator()(report).ok).toBe(true);
    const tl = main.timeLoops[0];
    // copy(bz[0:n]) and copyin(src[0:n]) with n = NB = 4096 doubles: 32 KiB each, bz both ways.
    expect(tl.perStep.toDevice.value).toBe(65536);
    expect(tl.perStep.toHost.value).toBe(32768);
    for (const t of tl.transfers) expect(t).toMatchObject({ line: 3, file: `${dir}/kernels.c`, via: [10], cause: 'clause' });
  });

  it('places the findings at the call in the file being checked', () => {
    const at = main.findings.filter((f: { code: string }) => f.code === 'transfer-in-time-loop');
    expect(at).toHaveLength(2);
    for (const f of at) {
      expect(f.line).toBe(10);
      // The callee file is named as the report names it: relative to the folder the check runs in
      // (the project root), not by a machine-specific path nor relative to each file's own folder.
      expect(f.message).toContain(`the directive is in ${dir}/kernels.c, line 3`);
    }
  });

  it('checked alone, the file cannot see the callee and says nothing about it', () => {
    const alone = JSON.parse(runCli(['check', '--format', 'json', `${dir}/main.c`]).stdout);
    expect(alone.files[0].timeLoops).toEqual([]);
  });

  it.skipIf(!gcc)('suggests a region that compiles with the other file and keeps the results', () => {
    const tmp = mkdtempSync(join(tmpdir(), 'ol-ws-'));
    const build = (mainText: string, name: string): string => {
      const m = join(tmp, `${name}.c`);
      writeFileSync(m, mainText);
      const exe = join(tmp, name);
      const c = spawnSync('gcc', ['-O1', '-std=c11', '-Wall', '-Werror', '-fopenacc', m, join(ROOT, dir, 'kernels.c'), '-o', exe], { encoding: 'utf8' });
      expect(c.stderr).toBe('');
      return spawnSync(exe, [], { encoding: 'utf8' }).stdout;
    };
    const text = readFileSync(join(ROOT, dir, 'main.c'), 'utf8');
    const edits = main.timeLoops[0].dataRegion.edits;
    expect(edits).toEqual([{ line: 9, text: '  #pragma acc data copyin(src) copy(bz)' }]);
    expect(build(applyLineEdits(text, edits), 'fixed')).toBe(build(text, 'original'));
    // Re-analysed together, the callee's clauses find the data present: nothing moves per step.
    const ws = join(tmp, 'ws');
    spawnSync('mkdir', ['-p', ws]);
    writeFileSync(join(ws, 'main.c'), applyLineEdits(text, edits));
    writeFileSync(join(ws, 'kernels.c'), readFileSync(join(ROOT, dir, 'kernels.c'), 'utf8'));
    const again = JSON.parse(runCli(['check', '--format', 'json', ws]).stdout);
    const fixedMain = again.files.find((f: { path: string }) => f.path.endsWith('main.c'));
    expect(fixedMain.timeLoops[0].transfers).toEqual([]);
    expect(fixedMain.timeLoops[0].once.toDevice.value).toBe(65536);
  });
});
