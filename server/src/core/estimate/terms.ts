/**
 * The words every view uses for the terms of a step and for what bounds an estimate, named after
 * the resource each one uses: the CLI text, the hovers, the planning view and report all read
 * them from here, so that "bound by the link" in one place is never "transfers" in another.
 */
import type { Bound } from './types';

/** What bounds a nest or a step, as "bound by …" finishes it. */
export const BOUND_WORDS: Record<Bound, string> = {
  memory: 'device memory',
  compute: 'device compute',
  transfer: 'the link',
  launch: 'launch latency',
  host: 'host code',
};

/** The terms of an offloaded step, in the order a step sums them. */
export const STEP_TERMS = {
  kernels: 'device kernels',
  launches: 'launch latency',
  transfers: 'link',
  host: 'host code',
} as const;

export function boundWords(b: Bound | string | null | undefined): string {
  return b ? BOUND_WORDS[b as Bound] ?? b : '—';
}
