/**
 * One code lens above each outermost time loop: bytes to the device and to the host per step,
 * and the estimated speedup when the core has one. Clicking it opens the planning view (a client
 * command, so editors without it simply show the text).
 */
import type { CodeLens } from 'vscode-languageserver-protocol';
import type { FileAnalysis } from '../../core/analyze';
import { ClientCommands } from '../protocol';
import { stepEstimate } from './estimates';
import { bytesOf, formatSpeedup } from './format';
import { toLspRange } from './ranges';

export function lensTitle(perStep: { toDevice: string; toHost: string }, speedup: string | undefined, profile: string): string {
  const est = speedup ? ` · est. speedup ${speedup} on ${profile}` : '';
  return `per step: ${perStep.toDevice} to device · ${perStep.toHost} to host${est}`;
}

export function buildLenses(a: FileAnalysis, uri: string, profile: string): CodeLens[] {
  const out: CodeLens[] = [];
  for (const t of a.timeLoops) {
    const l = t.ledger;
    if (!l) continue;
    const est = stepEstimate(t);
    const range = toLspRange(t.timeLoop.loop.keywordRange);
    out.push({
      range,
      command: {
        title: lensTitle({ toDevice: bytesOf(l.perStep.toDevice), toHost: bytesOf(l.perStep.toHost) }, est?.speedup ? formatSpeedup(est.speedup) : undefined, profile),
        command: ClientCommands.openPlanningView,
        arguments: [uri, range.start.line],
      },
    });
  }
  return out;
}
