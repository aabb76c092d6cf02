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
  timeLoops?: { line: number; variable?: string; steps?: Record<string, unknown> }[];
  findings?: { code: string; line: number; severity?: string; mentions?: string }[];
}

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
    const tls = analysis.timeLoops.map((t) => ({
      line: t.timeLoop.loop.keywordRange.start.line + 1,
      variable: t.timeLoop.loop.variable,
      steps: t.steps,
    }));
    expect(tls.map((t) => t.line)).toEqual(want.timeLoops.map((t) => t.line));
    want.timeLoops.forEach((w, k) => expect(tls[k]).toMatchObject(w));
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
