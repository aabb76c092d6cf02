/**
 * SARIF 2.1.0 output (OASIS Static Analysis Results Interchange Format): one run, one rule per
 * finding code, one result per finding with its physical location and, where the finding has
 * quick fixes, SARIF fixes as replacements in the artifact.
 */
import type { FileAnalysis } from './analyze';
import { FINDING_RULES } from './findings';
import { TOOL_NAME, TOOL_VERSION } from './report';
import type { Range, Severity } from './types';

export const SARIF_SCHEMA_URI = 'https://docs.oasis-open.org/sarif/sarif/v2.1.0/os/schemas/sarif-schema-2.1.0.json';

const LEVEL: Record<Severity, 'error' | 'warning' | 'note'> = { error: 'error', warning: 'warning', info: 'note', hint: 'note' };

function region(r: Range): Record<string, number> {
  return { startLine: r.start.line + 1, startColumn: r.start.col + 1, endLine: r.end.line + 1, endColumn: r.end.col + 1 };
}

/** `uriOf` turns a file path into the artifact URI (relative to the run's root, as SARIF prefers). */
export function sarifLog(analyses: FileAnalysis[], uriOf: (path: string) => string = (p) => p): Record<string, unknown> {
  const ruleIndex = new Map(FINDING_RULES.map((r, k) => [r.code, k]));
  const results = analyses.flatMap((a) =>
    a.findings.map((f) => {
      const uri = uriOf(a.path);
      const result: Record<string, unknown> = {
        ruleId: f.code,
        ruleIndex: ruleIndex.get(f.code),
        level: LEVEL[f.severity],
        message: { text: f.message },
        locations: [{ physicalLocation: { artifactLocation: { uri }, region: region(f.range) } }],
      };
      // §3.27.22 relatedLocations: the other end of a finding that spans two files (the call in
      // the time loop, the directive in the callee), each a location (§3.28) with an id and a message.
      if (f.related && f.related.length > 0) {
        result.relatedLocations = f.related.map((r, id) => ({
          id,
          physicalLocation: { artifactLocation: { uri: uriOf(r.path) }, region: region(r.range) },
          message: { text: r.message },
        }));
        // §3.36 codeFlows: the path from the time loop to the directive, as one thread flow
        // (§3.37, §3.38): the call in the time loop first, then the construct that moves the data.
        const here = { location: { physicalLocation: { artifactLocation: { uri }, region: region(f.range) }, message: { text: 'this finding' } } };
        const others = f.related.map((r) => ({ location: { physicalLocation: { artifactLocation: { uri: uriOf(r.path) }, region: region(r.range) }, message: { text: r.message } } }));
        const atCallee = f.related.some((r) => /^the call in the time loop/.test(r.message));
        result.codeFlows = [{
          message: { text: 'from the time loop to the construct' },
          threadFlows: [{ locations: atCallee ? [...others, here] : [here, ...others] }],
        }];
      }
      if (f.fixes && f.fixes.length > 0) {
        result.fixes = f.fixes.map((fix) => ({
          description: { text: fix.title },
          artifactChanges: [{
            artifactLocation: { uri },
            replacements: fix.edits.map((e) => ({ deletedRegion: region(e.range), insertedContent: { text: e.newText } })),
          }],
        }));
      }
      return result;
    }),
  );
  return {
    $schema: SARIF_SCHEMA_URI,
    version: '2.1.0',
    runs: [{
      tool: {
        driver: {
          name: TOOL_NAME,
          version: TOOL_VERSION,
          rules: FINDING_RULES.map((r) => ({
            id: r.code,
            shortDescription: { text: r.summary },
            fullDescription: { text: `${r.summary} Grounds: ${r.grounds}.` },
            defaultConfiguration: { level: LEVEL[r.severity] },
          })),
        },
      },
      columnKind: 'utf16CodeUnits',
      results,
    }],
  };
}
