/**
 * The planning view's data for one document: the CLI's JSON report of the file (report.ts, so
 * the editor and the CLI never disagree) with the estimates the core attached, when it did.
 */
import type { FileAnalysis } from '../../core/analyze';
import { fileReport } from '../../core/report';
import type { PlanningFile, ReportLoop, ReportTimeLoop } from '../protocol';
import { nestEstimate, stepEstimate } from './estimates';

export function buildPlanning(a: FileAnalysis, uri: string): PlanningFile {
  const r = fileReport(a) as { path: string; language: string; loops: ReportLoop[]; timeLoops: ReportTimeLoop[] };
  const loops = r.loops.map((l, k) => {
    const est = nestEstimate(a.nests[k]);
    return l.estimate || !est ? l : { ...l, estimate: est };
  });
  const reported = a.timeLoops.filter((t) => t.ledger);
  const timeLoops = r.timeLoops.map((t, k) => {
    const est = reported[k] ? stepEstimate(reported[k]) : undefined;
    return t.estimate || !est ? t : { ...t, estimate: est };
  });
  return { uri, path: r.path, language: r.language, loops, timeLoops };
}

export function hasEstimates(a: FileAnalysis): boolean {
  return a.nests.some((n) => !!nestEstimate(n)) || a.timeLoops.some((t) => !!stepEstimate(t));
}
