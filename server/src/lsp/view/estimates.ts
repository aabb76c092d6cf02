/**
 * The offload estimates of nest and time-loop reports (core/estimate). They are optional: a
 * report without one (a size unbound, a nested time loop) shows the bytes it has and no time.
 */
import type { NestReport, TimeLoopReport } from '../../core/analyze';
import type { NestEstimate, StepEstimate } from '../../core/estimate/types';

export function nestEstimate(r: NestReport): NestEstimate | undefined {
  return r.estimate;
}

export function stepEstimate(r: TimeLoopReport): StepEstimate | undefined {
  return r.estimate;
}
