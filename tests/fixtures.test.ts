/**
 * Data-driven fixture checks: every `*.expected.json` under tests/fixtures names a source file and
 * the loop nests, time loops and findings counted by hand for it. Only the fields an expected
 * entry lists are compared, so each fixture states exactly what it vouches for.
 */
import { readFileSync, readdirSync } from 'node:fs';
import { join, relative } from 'node:path';
import { describe, expect, it } from 'vitest';
import { fileReport } from '../server/src/core/report';
import { ROOT, analyzeText } from './helpers';

interface Expected {
  source: string;
  bindings?: Record<string, number>;
  cacheBytes?: number;
  loops?: Record<string, unknown>[];
  timeLoops?: ({ line: number } & Record<string, unknown>)[];
  findings?: { code: string; line: number; severity?: string; mentions?: string }[];
}

interface Transfer { line: number; array: string; direction: string }

function expectedFiles(dir: string): string[] {
  return readdirSync(dir, { withFileTypes: true }).flatMap((e) =>
    e.isDirectory() ? expectedFiles(join(dir, e.name)) : e.name.endsWith('.expected.json') ? [join(dir, e.name)] : [],
  );
}

async function check(expectedPath: string): Promise<void> {
  const want = JSON.parse(readFileSync(expectedPath, 'utf8')) as Expected;
  const src = join(ROOT, want.source);
  const analysis = await analyzeText(readFileSync(src, 'utf8'), src, want.bindings, want.cacheBytes);
  expect(analysis.internalErrors).toEqual([]);
  const got = fileReport(analysis) as { loops: Record<string, unknown>[]; findings: Record<string, unknown>[] };
  if (want.loops) {
    expect(got.loops.map((l) => l.line)).toEqual(want.loops.map((l) => l.line));
    want.loops.forEach((w, k) => expect(got.loops[k], `loop at line ${w.line}`).toMatchObject(w));
  }
  if (want.timeLoops) {
    const tls = (got as unknown as { timeLoops: ({ line: number; transfers: Transfer[] } & Record<string, unknown>)[] }).timeLoops;
    expect(tls.map((t) => t.line)).toEqual(want.timeLoops.map((t) => t.line));
    want.timeLoops.forEach((w, k) => {
      const { transfers, ...rest } = w as { transfers?: Transfer[] };
      expect(tls[k], `time loop at line ${w.line}`).toMatchObject(rest);
      // Transfers are compared as a set: their order within one construct carries no meaning.
      if (transfers) {
        const order = (a: Transfer, b: Transfer): number => a.line - b.line || a.array.localeCompare(b.array) || a.direction.localeCompare(b.direction);
        const gotSorted = [...tls[k].transfers].sort(order);
        expect(gotSorted).toHaveLength(transfers.length);
        [...transfers].sort(order).forEach((t, i) => expect(gotSorted[i]).toMatchObject(t));
      }
    });
  }
  if (want.findings) {
    const found = got.findings.map((f) => ({ code: f.code, line: f.line, severity: f.severity, message: String(f.message) }));
    expect(found.map((f) => `${f.code}@${f.line}`)).toEqual(want.findings.map((f) => `${f.code}@${f.line}`));
    want.findings.forEach((w, k) => {
      if (w.severity) expect(found[k].severity).toBe(w.severity);
      if (w.mentions) expect(found[k].message).toContain(w.mentions);
    });
  }
}

describe('fixtures', () => {
  for (const f of expectedFiles(join(__dirname, 'fixtures'))) {
    it(relative(join(__dirname, 'fixtures'), f), () => check(f));
  }
});
