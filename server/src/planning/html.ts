/**
 * `offload-ledger check --format html`: the planning report as one self-contained page, for
 * review and sharing. Paths are shown relative to the working directory, and each `path:line`
 * links to the file by that relative path, so the page works where it is written (the usual
 * `> report.html` in the project folder) and editors and terminals recognise the `path:line` text.
 */
import { isAbsolute, relative, sep } from 'node:path';
import type { FileAnalysis } from '../core/analyze';
import { buildPlanning, hasEstimates } from '../lsp/view/planning';
import { type RenderOptions, renderPlanning } from './render';

export function relativePath(cwd: string): (p: string) => string {
  return (p) => {
    const r = isAbsolute(p) ? relative(cwd, p) : p;
    return r.split(sep).join('/');
  };
}

export async function planningHtml(analyses: FileAnalysis[], profile: string, baseline: string, options: Partial<RenderOptions> = {}, cwd = process.cwd()): Promise<string> {
  const files = analyses.map((a) => buildPlanning(a, a.path));
  return renderPlanning({ profile, baseline, estimatesAvailable: analyses.some(hasEstimates), files }, { cspSource: "'self'", displayPath: relativePath(cwd), ...options });
}
