/**
 * Cancellation inside one analysis (issue 16): a newer edit marks the running job stale, and the
 * analysis stops at its next check (between nests, before the races, the data ledger, the what-if
 * and port re-analyses) instead of running to the end of the file. The worker then takes the next
 * job with its caches warm. Checked here on the core and on the editor's job, with a flag that
 * turns stale after a number of checks, as the shared flag does when an edit arrives.
 */
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { AnalysisCancelled, analyzeSource } from '../server/src/core/analyze';
import { readHeader } from '../server/src/host/files';
import { Cancelled, runJob } from '../server/src/lsp/analysis/job';
import { generateSource } from './e2e/generate';
import { ROOT, grammarsForTests } from './helpers';
import { report } from '../server/src/core/report';

const staleAfter = (checks: number) => {
  let n = 0;
  const flag = (): boolean => ++n > checks;
  return { flag, asked: () => n };
};

describe('cancelling an analysis between its steps', () => {
  const text = generateSource(1500);

  it('stops at the first check once the flag is up, and never when it stays down (same report)', async () => {
    const g = await grammarsForTests();
    const deps = { ...g, readInclude: readHeader };
    const input = { path: 'gen.c', text, language: 'c' as const };
    expect(() => analyzeSource(input, deps, { cancelled: () => true })).toThrow(AnalysisCancelled);
    // Checked more than once in a file of many nests: a flag raised after the third check stops it too.
    const late = staleAfter(3);
    expect(() => analyzeSource(input, deps, { cancelled: late.flag })).toThrow(AnalysisCancelled);
    expect(late.asked()).toBe(4);
    const never = staleAfter(Number.MAX_SAFE_INTEGER);
    const a = analyzeSource(input, deps, { cancelled: never.flag });
    expect(never.asked()).toBeGreaterThan(4);
    expect(a.internalErrors).toEqual([]);
    expect(JSON.stringify(report([a]))).toBe(JSON.stringify(report([analyzeSource(input, deps)])));
  });

  it('the editor\'s job turns it into its own cancellation, which the worker answers with `cancelled`', async () => {
    const g = await grammarsForTests();
    const path = join(ROOT, 'examples', 'heat2d', 'heat2d_acc.c');
    const job = {
      uri: `file://${path}`, version: 1, path, language: 'c' as const, text: readFileSync(path, 'utf8'), bindings: [] as [string, number][], baseline: 'auto' as const,
      view: { profileName: 'test', baseline: 'auto', severity: {}, codeLens: false, inlayHints: false, docsHref: '' },
    };
    // The job itself checks between its phases; the analysis checks inside: stale after a few checks is inside.
    const late = staleAfter(2);
    expect(() => runJob(job, g, { cancelled: late.flag })).toThrow(Cancelled);
    expect(runJob(job, g, { cancelled: () => false }).diagnostics.length).toBeGreaterThan(0);
  });
});
