/**
 * Efficiency bounds behind every speedup range. The profile figures are the expected case; the
 * low case is what a first port often sees, the high case a well-tuned one. These factors are
 * this tool's documented convention (docs/cost-model.md), chosen from common experience and
 * quoted from memory, not measured:
 *
 *   device bandwidth  low 0.7 × sustained (halo accesses, partial coalescing) · expected 1.0 · high 1.0
 *   host bandwidth    low 1.0 × sustained · expected 1.0 · high 0.8 (NUMA placement, prefetch misses)
 *   link bandwidth    low 0.7 × theoretical (pageable memory) · expected 0.85 (pinned) · high 1.0
 *   kernel launch     low 2 × profile · expected 1 × · high 0.5 × (launches overlapped with async)
 */
import type { Spread } from './types';

export type Case = keyof Spread;
export const CASES: Case[] = ['low', 'expected', 'high'];

export const EFFICIENCY: Record<'deviceBandwidth' | 'hostBandwidth' | 'link' | 'launch', Spread> = {
  deviceBandwidth: { low: 0.7, expected: 1.0, high: 1.0 },
  hostBandwidth: { low: 1.0, expected: 1.0, high: 0.8 },
  link: { low: 0.7, expected: 0.85, high: 1.0 },
  launch: { low: 2.0, expected: 1.0, high: 0.5 },
};
