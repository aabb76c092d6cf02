/**
 * Findings in both files: a transfer or a stale read that a time loop's call reaches in another
 * file is reported at the call (where the step is) and at the directive or access in the callee
 * (where a person editing that file looks), and the two point at each other: SARIF
 * relatedLocations (SARIF 2.1.0 §3.27.22, each a location object §3.28 with an id §3.28.2 and a
 * message §3.28.5; from memory) and LSP relatedInformation (LSP 3.17 Diagnostic).
 */
import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import Ajv2020 from 'ajv/dist/2020';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { type TestClient, ROOT, startTestClient, uriOf } from './e2e/lspClient';
import { runCli } from './helpers';

const WS = 'tests/fixtures/workspace';

/** A time loop in main.c whose every tenth step calls probe() in probe.c, which reads u on the host while the device holds newer values. */
function staleProject(): string {
  const dir = mkdtempSync(join(tmpdir(), 'ol-xfile-'));
  writeFileSync(join(dir, 'main.c'), `#include <stdio.h>
#define N 1024
double u[N], un[N];
double probe(const double *v);
int main(void) {
  for (int i = 0; i < N; i++) u[i] = un[i] = 0.0;
  u[0] = 1.0;
#pragma acc data copy(u, un)
  for (int t = 0; t < 100; t++) {
#pragma acc parallel loop present(u, un)
    for (int i = 1; i < N - 1; i++) un[i] = 0.5 * (u[i - 1] + u[i + 1]);
#pragma acc parallel loop present(u, un)
    for (int i = 1; i < N - 1; i++) u[i] = un[i];
    if (t % 10 == 0) printf("%g\\n", probe(u));
  }
  return 0;
}
`);
  writeFileSync(join(dir, 'probe.c'), 'double probe(const double *v) {\n  return v[2];\n}\n');
  return dir;
}

interface JsonFinding { code: string; line: number; column: number; message: string; related?: { path: string; line: number; message: string }[] }
const filesOf = (stdout: string): Record<string, JsonFinding[]> =>
  Object.fromEntries(JSON.parse(stdout).files.map((f: { path: string; findings: JsonFinding[] }) => [f.path.split('/').pop(), f.findings]));

describe('the CLI reports a callee transfer in both files', () => {
  it('gives the callee file a finding at each clause the call reaches', () => {
    const files = filesOf(runCli(['check', '--format', 'json', WS]).stdout);
    // The workspace fixture: main.c line 10 calls the kernel whose copy(bz) copyin(src) is kernels.c line 3.
    expect(files['main.c'].filter((f) => f.code === 'transfer-in-time-loop').map((f) => f.line)).toEqual([10, 10]);
    const twins = files['kernels.c'].filter((f) => f.code === 'transfer-in-time-loop');
    expect(twins.map((f) => f.line)).toEqual([3, 3]);
    for (const f of twins) {
      // Files are named from the folder the check runs in, as the report's paths are.
      expect(f.message).toMatch(/^From the time loop in tests\/fixtures\/workspace\/main\.c \(the call at line 10\): `(bz|src)` \(32\.0 KiB\) is copied/);
      expect(f.message).toContain('(quick fix available in tests/fixtures/workspace/main.c)');
      expect(f.message).not.toContain('reached from this call');
      // The JSON carries the other end too: the call in main.c.
      expect(f.related?.map((r) => `${r.path.split('/').pop()}:${r.line}`)).toEqual(['main.c:10']);
    }
    for (const f of files['main.c'].filter((x) => x.code === 'transfer-in-time-loop')) {
      expect(f.related?.map((r) => `${r.path.split('/').pop()}:${r.line}`)).toEqual(['kernels.c:3']);
    }
  });

  it('does the same for a stale host read in the callee', () => {
    const dir = staleProject();
    const r = runCli(['check', '--format', 'json', '.'], dir);
    expect(r.status).toBe(1);
    const files = filesOf(r.stdout);
    expect(files['main.c'].map((f) => `${f.code}@${f.line}`)).toEqual(['stale-on-host@14']);
    expect(files['probe.c'].map((f) => `${f.code}@${f.line}:${f.column}`)).toEqual(['stale-on-host@2:3']);
    expect(files['probe.c'][0].message).toMatch(/^From the time loop in main\.c \(the call at line 14\): Host code reads `v` here/);
  });
});

// The parts of SARIF 2.1.0 a related location uses (from memory): §3.27.22 relatedLocations is an
// array of unique location objects; §3.28.2 location.id a non-negative integer unique within the
// result; §3.28.3 physicalLocation; §3.28.5 message; §3.29.3 artifactLocation; §3.30 region.
const related = {
  type: 'array', minItems: 1, uniqueItems: true,
  items: {
    type: 'object', required: ['id', 'physicalLocation', 'message'],
    properties: {
      id: { type: 'integer', minimum: 0 },
      message: { type: 'object', required: ['text'], properties: { text: { type: 'string', minLength: 1 } } },
      physicalLocation: {
        type: 'object', required: ['artifactLocation', 'region'],
        properties: {
          artifactLocation: { type: 'object', required: ['uri'], properties: { uri: { type: 'string', minLength: 1 } } },
          region: { type: 'object', required: ['startLine'], properties: { startLine: { type: 'integer', minimum: 1 }, startColumn: { type: 'integer', minimum: 1 } } },
        },
      },
    },
  },
};
// §3.36 codeFlow: threadFlows (§3.36.3) is a required array of threadFlow objects; §3.37 threadFlow:
// locations (§3.37.6) a required array of threadFlowLocation objects; §3.38 threadFlowLocation:
// location (§3.38.3), a location object (from memory).
const codeFlows = {
  type: 'array', minItems: 1,
  items: {
    type: 'object', required: ['threadFlows'],
    properties: {
      threadFlows: {
        type: 'array', minItems: 1,
        items: { type: 'object', required: ['locations'], properties: { locations: { type: 'array', minItems: 2, items: { type: 'object', required: ['location'], properties: { location: { type: 'object', required: ['physicalLocation'] } } } } } },
      },
    },
  },
};
const sarifSchema = {
  type: 'object', required: ['version', 'runs'],
  properties: { runs: { type: 'array', items: { type: 'object', required: ['tool', 'results'], properties: { results: { type: 'array', items: { type: 'object', required: ['message', 'locations'], properties: { relatedLocations: related, codeFlows } } } } } } },
};

interface SarifResult {
  ruleId: string;
  locations: { physicalLocation: { artifactLocation: { uri: string }; region: { startLine: number } } }[];
  relatedLocations?: { id: number; physicalLocation: { artifactLocation: { uri: string }; region: { startLine: number } }; message: { text: string } }[];
}

describe('SARIF relatedLocations', () => {
  const at = (r: SarifResult): string => `${r.locations[0].physicalLocation.artifactLocation.uri.split('/').pop()}:${r.locations[0].physicalLocation.region.startLine}`;
  const to = (r: SarifResult): string[] => (r.relatedLocations ?? []).map((l) => `${l.physicalLocation.artifactLocation.uri.split('/').pop()}:${l.physicalLocation.region.startLine}`);

  for (const [name, args, cwd] of [['callee transfers', ['check', '--format', 'sarif', WS], ROOT], ['a stale read in a callee', ['check', '--format', 'sarif', '.'], staleProject()]] as const) {
    it(`validates and links both ends for ${name}`, () => {
      const log = JSON.parse(runCli([...args], cwd).stdout);
      const ajv = new Ajv2020({ allErrors: true, strict: false });
      const validate = ajv.compile(sarifSchema);
      expect(validate(log), ajv.errorsText(validate.errors)).toBe(true);
      const results: SarifResult[] = log.runs[0].results.filter((r: SarifResult) => r.relatedLocations);
      expect(results.length).toBeGreaterThanOrEqual(2);
      // Every related location is the primary location of a result in the other file that points back.
      for (const r of results) {
        for (const target of to(r)) {
          const back = results.filter((x) => at(x) === target);
          expect(back.length, `${at(r)} → ${target}`).toBeGreaterThan(0);
          expect(back.some((x) => to(x).includes(at(r)))).toBe(true);
        }
        for (const [k, l] of (r.relatedLocations ?? []).entries()) expect(l.id).toBe(k);
        // The code flow runs from the call in the time loop to the construct: it holds both ends.
        const flow = (r as SarifResult & { codeFlows: { threadFlows: { locations: { location: { physicalLocation: { artifactLocation: { uri: string }; region: { startLine: number } } } }[] }[] }[] }).codeFlows[0].threadFlows[0].locations
          .map((l) => `${l.location.physicalLocation.artifactLocation.uri.split('/').pop()}:${l.location.physicalLocation.region.startLine}`);
        expect(flow).toContain(at(r));
        for (const target of to(r)) expect(flow).toContain(target);
      }
    });
  }
});

describe('language server: a callee transfer in both files, linked', () => {
  let c: TestClient;
  beforeAll(async () => {
    c = await startTestClient({ rootPath: join(ROOT, WS) });
  });
  afterAll(async () => {
    await c.close();
  });

  it('shows the kernel file the transfers its caller\'s time loop makes there, with the call as related information', async () => {
    const kernels = join(ROOT, WS, 'kernels.c');
    const uri = c.open(kernels, readFileSync(kernels, 'utf8'));
    const diags = await c.waitForDiagnostics(uri, (d) => d.diagnostics.some((x) => x.code === 'transfer-in-time-loop'));
    const twins = diags.filter((d) => d.code === 'transfer-in-time-loop');
    expect(twins.map((d) => d.range.start.line + 1)).toEqual([3, 3]);
    for (const d of twins) {
      expect(d.relatedInformation).toEqual([{ location: { uri: uriOf(join(ROOT, WS, 'main.c')), range: expect.objectContaining({ start: expect.objectContaining({ line: 9 }) }) }, message: 'the call in the time loop that reaches this (main.c, line 10)' }]);
    }
  });

  it('links the findings at the call to the directive in the kernel file', async () => {
    const main = join(ROOT, WS, 'main.c');
    const uri = c.open(main, readFileSync(main, 'utf8'));
    const diags = await c.waitForDiagnostics(uri, (d) => d.diagnostics.some((x) => x.code === 'transfer-in-time-loop'));
    const at = diags.filter((d) => d.code === 'transfer-in-time-loop');
    expect(at).toHaveLength(2);
    for (const d of at) {
      expect(d.relatedInformation).toHaveLength(1);
      expect(d.relatedInformation![0].location.uri).toBe(uriOf(join(ROOT, WS, 'kernels.c')));
      expect(d.relatedInformation![0].location.range.start.line).toBe(2);
      expect(d.relatedInformation![0].message).toMatch(/^the directive that moves `(bz|src)` \(kernels\.c, line 3\)$/);
    }
  });
});
