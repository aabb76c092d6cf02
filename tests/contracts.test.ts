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

/**
 * Where `ours` departs from `shared` other than by additions: new properties and `$defs`, and new
 * required fields of objects (a report valid under ours stays valid under the shared schema).
 * Every other keyword must be equal. Returns the JSON pointers of the departures.
 */
function schemaChanges(shared: unknown, ours: unknown, at = ''): string[] {
  if (typeof shared !== 'object' || shared === null || Array.isArray(shared)) {
    return JSON.stringify(shared) === JSON.stringify(ours) ? [] : [at];
  }
  if (typeof ours !== 'object' || ours === null || Array.isArray(ours)) return [at];
  const o = ours as Record<string, unknown>;
  const out: string[] = [];
  for (const [key, value] of Object.entries(shared as Record<string, unknown>)) {
    const here = `${at}/${key}`;
    if (!(key in o)) out.push(here);
    else if (key === 'required' && Array.isArray(value) && Array.isArray(o[key])) {
      if (!value.every((name) => (o[key] as unknown[]).includes(name))) out.push(here);
    } else if ((key === 'properties' || key === '$defs') && typeof value === 'object' && value !== null) {
      for (const [name, sub] of Object.entries(value as Record<string, unknown>)) {
        const theirs = (o[key] as Record<string, unknown>)[name];
        if (theirs === undefined) out.push(`${here}/${name}`);
        else out.push(...schemaChanges(sub, theirs, `${here}/${name}`));
      }
    } else out.push(...schemaChanges(value, o[key], here));
  }
  return out;
}

describe('contracts', () => {
  it.skipIf(!existsSync(SCHEMA_PATH))('the report schema copy extends the shared contract by additions only', () => {
    const ours = JSON.parse(readFileSync(SCHEMA_COPY, 'utf8'));
    const shared = JSON.parse(readFileSync(SCHEMA_PATH, 'utf8'));
    expect(schemaChanges(shared, ours)).toEqual([]);
  });

  it('the additions-only check catches a changed type, a removed property and a dropped requirement', () => {
    const base = { type: 'object', required: ['a'], properties: { a: { type: 'integer' }, b: { type: 'string' } } };
    expect(schemaChanges(base, { ...base, properties: { ...base.properties, c: { type: 'number' } } })).toEqual([]);
    expect(schemaChanges(base, { ...base, required: ['a', 'c'] })).toEqual([]);
    expect(schemaChanges(base, { ...base, properties: { a: { type: 'number' }, b: { type: 'string' } } })).toEqual(['/properties/a/type']);
    expect(schemaChanges(base, { ...base, properties: { a: { type: 'integer' } } })).toEqual(['/properties/b']);
    expect(schemaChanges(base, { ...base, required: [] })).toEqual(['/required']);
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
