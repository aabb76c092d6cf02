/**
 * Quick fixes, checked by a real compiler: applying a finding's fix must compile with gcc
 * (-fopenacc / -fopenmp), keep the program's printed results, and make that finding go away on
 * re-analysis. Fixes are text edits the user chooses; nothing here runs without being asked.
 */
import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { applyTextEdits } from '../server/src/core/data/edits';
import type { Finding } from '../server/src/core/types';
import { ROOT, analyzeText } from './helpers';

const gcc = spawnSync('gcc', ['--version']).status === 0;
if (!gcc) console.log('skipped: gcc not found, so quick fixes cannot be compiled');
const tmp = mkdtempSync(join(tmpdir(), 'ol-fix-'));
let serial = 0;

function compileAndRun(src: string, defines: string[], run: boolean): string {
  const name = `f${serial++}`;
  const c = join(tmp, `${name}.c`);
  writeFileSync(c, src);
  const flags = [/#pragma acc/.test(src) ? '-fopenacc' : '', /#pragma omp/.test(src) ? '-fopenmp' : ''].filter(Boolean);
  const exe = join(tmp, name);
  const r = spawnSync('gcc', ['-O1', '-std=c11', '-Wall', '-Werror', ...flags, ...defines, ...(run ? [] : ['-c']), c, '-o', run ? exe : `${exe}.o`, '-lm'], { encoding: 'utf8' });
  expect(r.stderr).toBe('');
  if (!run) return '';
  const out = spawnSync(exe, [], { encoding: 'utf8', timeout: 60_000 });
  expect(out.status).toBe(0);
  return out.stdout;
}

const key = (f: Finding): string => `${f.code}:${f.array ?? ''}`;

const cases: { file: string; codes: string[]; defines: string[]; run: boolean }[] = [
  { file: 'examples/hall/hall_stale_acc.c', codes: ['stale-on-host', 'stale-on-device'], defines: ['-DNX=40', '-DNY=30', '-DNZ=20', '-DSTEPS=120'], run: true },
  { file: 'tests/fixtures/data/stale_receiver.c', codes: ['stale-on-host'], defines: [], run: true },
  { file: 'tests/fixtures/data/host_source.c', codes: ['stale-on-device'], defines: [], run: true },
  { file: 'tests/fixtures/data/present_inside_region.c', codes: ['already-present'], defines: [], run: true },
  { file: 'tests/fixtures/data/wide_update.c', codes: ['update-wider-than-needed'], defines: [], run: true },
  { file: 'tests/fixtures/data-flow/edge_rows.c', codes: ['update-wider-than-needed'], defines: [], run: true },
  // Two planes of a 3-D array behind an index macro and a pointer swap: two exact sections, named as the clause names the array.
  { file: 'tests/fixtures/fixes14/two_planes.c', codes: ['update-wider-than-needed'], defines: [], run: true },
  { file: 'tests/fixtures/races/races.c', codes: ['missing-reduction'], defines: [], run: false },
  { file: 'examples/heat2d/heat2d_acc.c', codes: ['implicit-transfer'], defines: ['-DNX=64', '-DNY=48', '-DSTEPS=120'], run: true },
  { file: 'examples/hall/hall_naive_omp.c', codes: ['transfer-in-time-loop'], defines: ['-DNX=40', '-DNY=30', '-DNZ=20', '-DSTEPS=120'], run: true },
];

describe.skipIf(!gcc)('quick fixes compile, keep results, and clear their finding', () => {
  for (const c of cases) {
    it(`${c.file}: ${c.codes.join(', ')}`, async () => {
      const text = readFileSync(join(ROOT, c.file), 'utf8');
      const before = await analyzeText(text, c.file);
      const original = compileAndRun(text, c.defines, c.run);
      const targets = before.findings.filter((f) => c.codes.includes(f.code));
      expect(targets.length).toBeGreaterThan(0);
      for (const f of targets) {
        expect(f.fixes?.length, `${key(f)} at line ${f.range.start.line + 1} has a fix`).toBeGreaterThan(0);
        const fixed = applyTextEdits(text, f.fixes![0].edits);
        expect(compileAndRun(fixed, c.defines, c.run)).toBe(original);
        const after = await analyzeText(fixed, c.file);
        if (f.fixes![0].title.startsWith('Keep the arrays on the device')) {
          // The region replaces every per-step copy; only updates that host code needs remain, as info.
          expect(after.findings.filter((x) => x.code === 'implicit-transfer' || (x.code === 'transfer-in-time-loop' && x.severity === 'warning'))).toEqual([]);
          continue;
        }
        const count = (a: Finding[]): number => a.filter((x) => key(x) === key(f)).length;
        expect(count(after.findings), `${f.fixes![0].title} clears one ${f.code}`).toBeLessThan(count(before.findings));
      }
    });
  }
});
