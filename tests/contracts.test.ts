/**
 * The repository keeps copies of the shared contracts (report schema, finding codes) so that a
 * clean clone is self-contained; when the shared folder is present the copies must match it.
 */
import { existsSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { ROOT, SCHEMA_COPY, SCHEMA_PATH } from './helpers';

const SHARED_FINDINGS = join(ROOT, '..', 'shared', 'contracts', 'findings.md');
const FINDINGS_COPY = join(ROOT, 'docs', 'findings.md');
const TYPES = join(ROOT, 'server', 'src', 'core', 'types.ts');

function codesIn(markdown: string): string[] {
  return [...markdown.matchAll(/^\| `([a-z-]+)` \|/gm)].map((m) => m[1]).sort();
}

describe('contracts', () => {
  it.skipIf(!existsSync(SCHEMA_PATH))('the report schema copy equals the shared contract', () => {
    expect(JSON.parse(readFileSync(SCHEMA_COPY, 'utf8'))).toEqual(JSON.parse(readFileSync(SCHEMA_PATH, 'utf8')));
  });

  it.skipIf(!existsSync(SHARED_FINDINGS))('the finding codes copy lists the same codes as the shared contract', () => {
    expect(codesIn(readFileSync(FINDINGS_COPY, 'utf8'))).toEqual(codesIn(readFileSync(SHARED_FINDINGS, 'utf8')));
  });

  it('FindingCode in the core names exactly the documented codes', () => {
    const union = readFileSync(TYPES, 'utf8').match(/export type FindingCode =([^;]+);/)![1];
    const codes = [...union.matchAll(/'([a-z-]+)'/g)].map((m) => m[1]).sort();
    expect(codes).toEqual(codesIn(readFileSync(FINDINGS_COPY, 'utf8')));
    // 15 codes in shared/contracts/findings.md (the published table).
    expect(codes).toHaveLength(15);
  });
});

describe('finding rules', () => {
  it('FINDING_RULES matches docs/findings.md codes and default severities', async () => {
    const { FINDING_RULES } = await import('../server/src/core/findings');
    const rows = [...readFileSync(FINDINGS_COPY, 'utf8').matchAll(/^\| `([a-z-]+)` \| (\w+) \|/gm)].map((m) => [m[1], m[2]]);
    expect(FINDING_RULES.map((r) => [r.code, r.severity])).toEqual(rows);
  });
});
