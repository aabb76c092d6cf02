/**
 * Inlay hints (off by default): at the end of each directive that moves data inside a time loop,
 * the bytes it moves per step in each direction. Directives reached through calls carry the
 * calling line in the tooltip.
 */
import { InlayHintKind, type InlayHint } from 'vscode-languageserver-protocol';
import type { FileAnalysis } from '../../core/analyze';
import type { TransferReport } from '../../core/data/ledger';
import { formatBytes } from './format';

function perStep(ts: TransferReport[]): string {
  if (ts.some((t) => t.bytes.value === null)) return ts.map((t) => (t.everySteps === 1 ? t.bytes.expr : `(${t.bytes.expr})/${t.everySteps}`)).join(' + ') + ' B';
  return formatBytes(ts.reduce((a, t) => a + t.bytes.value! / t.everySteps, 0));
}

export function buildInlayHints(a: FileAnalysis): InlayHint[] {
  const groups = new Map<string, TransferReport[]>();
  for (const t of a.timeLoops) {
    for (const x of t.ledger?.transfers ?? []) {
      const key = `${x.range.end.line}:${x.range.end.col}`;
      groups.set(key, [...(groups.get(key) ?? []), x]);
    }
  }
  const out: InlayHint[] = [];
  for (const ts of groups.values()) {
    const end = ts[0].range.end;
    const down = ts.filter((t) => t.direction === 'toDevice');
    const up = ts.filter((t) => t.direction === 'toHost');
    const parts = [down.length > 0 ? `→ device ${perStep(down)}` : '', up.length > 0 ? `→ host ${perStep(up)}` : ''].filter(Boolean);
    const via = [...new Set(ts.flatMap((t) => t.via.map((r) => r.start.line + 1)))];
    out.push({
      position: { line: end.line, character: end.col },
      label: `${parts.join(' · ')} per step`,
      kind: InlayHintKind.Type,
      paddingLeft: true,
      tooltip: `Offload Ledger: ${[...new Set(ts.map((t) => t.array))].join(', ')}${via.length > 0 ? ` (reached from the call at line ${via.join(', ')})` : ''}`,
    });
  }
  return out.sort((x, y) => x.position.line - y.position.line || x.position.character - y.position.character);
}
