/**
 * SARIF 2.1.0 output. The OASIS schema is not available from the registries this project may
 * use, so this test encodes the requirements of the parts we emit, with their sections in the
 * SARIF 2.1.0 standard (quoted from memory), and validates the CLI's output against them.
 */
import Ajv2020 from 'ajv/dist/2020';
import { describe, expect, it } from 'vitest';
import { FINDING_RULES } from '../server/src/core/findings';
import { runCli } from './helpers';

const message = { type: 'object', required: ['text'], properties: { text: { type: 'string', minLength: 1 } } }; // §3.11 message
const region = { // §3.30 region: line and column numbers are 1-based
  type: 'object',
  required: ['startLine'],
  properties: {
    startLine: { type: 'integer', minimum: 1 }, startColumn: { type: 'integer', minimum: 1 },
    endLine: { type: 'integer', minimum: 1 }, endColumn: { type: 'integer', minimum: 1 },
  },
};
const artifactLocation = { type: 'object', required: ['uri'], properties: { uri: { type: 'string', minLength: 1 } } }; // §3.4
const schema = {
  type: 'object',
  required: ['version', 'runs'], // §3.13.2 version, §3.13.4 runs
  properties: {
    $schema: { type: 'string', pattern: '^https://' }, // §3.13.3
    version: { const: '2.1.0' },
    runs: {
      type: 'array', minItems: 1,
      items: {
        type: 'object', required: ['tool'], // §3.14 run: tool is required
        properties: {
          columnKind: { enum: ['utf16CodeUnits', 'unicodeCodePoints'] }, // §3.14.17
          tool: {
            type: 'object', required: ['driver'], // §3.18.2
            properties: {
              driver: {
                type: 'object', required: ['name'], // §3.19.8 toolComponent.name
                properties: { rules: { type: 'array', items: { type: 'object', required: ['id'], properties: { id: { type: 'string' }, shortDescription: message, fullDescription: message, defaultConfiguration: { type: 'object', properties: { level: { enum: ['none', 'note', 'warning', 'error'] } } } } } } },
              },
            },
          },
          results: {
            type: 'array',
            items: {
              type: 'object', required: ['message'], // §3.27.11 result.message
              properties: {
                ruleId: { type: 'string' }, ruleIndex: { type: 'integer', minimum: 0 },
                level: { enum: ['none', 'note', 'warning', 'error'] }, // §3.27.10
                message,
                locations: { type: 'array', items: { type: 'object', properties: { physicalLocation: { type: 'object', required: ['artifactLocation'], properties: { artifactLocation, region } } } } }, // §3.28, §3.29
                fixes: { // §3.55 fix, §3.56 artifactChange, §3.57 replacement
                  type: 'array',
                  items: {
                    type: 'object', required: ['artifactChanges'],
                    properties: {
                      description: message,
                      artifactChanges: { type: 'array', minItems: 1, items: { type: 'object', required: ['artifactLocation', 'replacements'], properties: { artifactLocation, replacements: { type: 'array', minItems: 1, items: { type: 'object', required: ['deletedRegion'], properties: { deletedRegion: region, insertedContent: { type: 'object', properties: { text: { type: 'string' } } } } } } } } },
                    },
                  },
                },
              },
            },
          },
        },
      },
    },
  },
};

describe('check --format sarif', () => {
  const r = runCli(['check', '--format', 'sarif', 'examples', 'tests/fixtures/races']);
  const log = JSON.parse(r.stdout);
  it('follows the SARIF 2.1.0 structure for everything it emits', () => {
    const ajv = new Ajv2020({ allErrors: true, strict: false });
    const validate = ajv.compile(schema);
    expect(validate(log), ajv.errorsText(validate.errors)).toBe(true);
  });
  it('has one rule per finding code, and results point at their rule', () => {
    const run = log.runs[0];
    expect(run.tool.driver.rules.map((x: { id: string }) => x.id)).toEqual(FINDING_RULES.map((x) => x.code));
    expect(run.results.length).toBeGreaterThan(10);
    for (const res of run.results) expect(run.tool.driver.rules[res.ruleIndex].id).toBe(res.ruleId);
    // info findings are SARIF notes (§3.27.10 has no "info" level).
    expect(run.results.some((x: { level: string; ruleId: string }) => x.ruleId === 'already-present' || x.level === 'note')).toBe(true);
  });
  it('uses relative URIs and carries quick fixes as replacements', () => {
    const res = log.runs[0].results;
    expect(res.every((x: { locations: { physicalLocation: { artifactLocation: { uri: string } } }[] }) => !x.locations[0].physicalLocation.artifactLocation.uri.startsWith('/'))).toBe(true);
    const reduction = res.find((x: { ruleId: string }) => x.ruleId === 'missing-reduction');
    expect(reduction.fixes[0].artifactChanges[0].replacements[0].insertedContent.text).toMatch(/reduction\(\+:sum\)/);
  });
  it('exits like the other formats', () => {
    expect(r.status).toBe(1); // the stale demo and the race fixtures have errors
  });
});
