/** The human-readable report of `check --format text`: one table of loop nests per file, then findings. */
import type { FileAnalysis } from '../core/analyze';
import type { Quantity } from '../core/analysis/bindings';

export function formatQuantity(q: Quantity): string {
  if (q.value === null) return q.expr;
  const v = q.value.toLocaleString('en-US');
  return /^[\d,.]+$/.test(q.expr.replace(/\s/g, '')) || q.expr === String(q.value) ? v : `${v} (${q.expr})`;
}

export function formatTable(rows: string[][]): string {
  const widths = rows[0].map((_, c) => Math.max(...rows.map((r) => (r[c] ?? '').length)));
  return rows.map((r) => r.map((cell, c) => (c === r.length - 1 ? cell : cell.padEnd(widths[c]))).join('  ').trimEnd()).join('\n');
}

export function formatFile(a: FileAnalysis): string {
  const lines: string[] = [];
  const families = a.directiveFamilies.length > 0 ? a.directiveFamilies.join(', ') : 'no offload directives';
  lines.push(`${a.path}  (${a.language}; ${families})`);
  if (a.nests.length === 0) {
    lines.push('  no loop nests found');
  } else {
    const rows = [['line', 'function', 'variables', 'offloaded', 'flop/it', 'B/it dev', 'B/it host', 'AI dev', 'AI host', 'iterations']];
    for (const r of a.nests) {
      const n = r.nest;
      rows.push([
        String(n.root.keywordRange.start.line + 1),
        n.procedure.name,
        n.variables.join(','),
        n.offload ? `yes (${n.offload.family})` : 'no',
        fmt(r.cost.flopsPerIteration),
        fmt(r.cost.bytes.device),
        fmt(r.cost.bytes.host),
        r.cost.intensity.device === undefined ? '-' : r.cost.intensity.device.toFixed(2),
        r.cost.intensity.host === undefined ? '-' : r.cost.intensity.host.toFixed(2),
        formatQuantity(r.iterations) + (r.approximate ? ' (approx., triangular)' : ''),
      ]);
    }
    lines.push(formatTable(rows).replace(/^/gm, '  '));
  }
  if (a.timeLoops.length > 0) {
    const tl = a.timeLoops.map((t) => `line ${t.timeLoop.loop.keywordRange.start.line + 1} (${t.timeLoop.loop.variable ?? 'while'}: ${formatQuantity(t.steps)} steps)`);
    lines.push(`  time loops: ${tl.join('; ')}`);
  }
  for (const f of a.findings) {
    lines.push(`  ${a.path}:${f.range.start.line + 1}:${f.range.start.col + 1}: ${f.severity} [${f.code}] ${f.message}`);
  }
  for (const e of a.internalErrors) lines.push(`  internal error (please report): ${e.split('\n')[0]}`);
  return lines.join('\n');
}

function fmt(x: number): string {
  return Number.isInteger(x) ? String(x) : x.toFixed(2);
}
