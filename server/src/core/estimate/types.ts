/** Shapes of the offload payoff estimates (filled by the estimate module; read by every front end). */

/** A range from documented efficiency bounds, never a single magic number. */
export interface Spread {
  low: number;
  expected: number;
  high: number;
}

/** Which term bounds a time: device memory, device compute, link transfers, kernel launches, or host code left in the loop. */
export type Bound = 'memory' | 'compute' | 'transfer' | 'launch' | 'host';

export type Baseline = 'node' | 'core';

export interface NestEstimate {
  profile: string;
  baseline: Baseline;
  /** Roofline time of the whole nest on the host baseline, seconds (null when a size is unbound). */
  hostSeconds: number | null;
  /** Roofline time of the nest as one device kernel, seconds, launch included. */
  deviceSeconds: number | null;
  speedup: Spread | null;
  bound: Bound | null;
}

export interface StepEstimate {
  profile: string;
  baseline: Baseline;
  /** One step run entirely on the host baseline. */
  hostSeconds: number | null;
  /** One step with offload: kernels + launches + transfers + host code left in the loop. */
  deviceSeconds: number | null;
  kernelSeconds: number | null;
  launchSeconds: number | null;
  transferSeconds: number | null;
  hostLeftSeconds: number | null;
  speedup: Spread | null;
  bound: Bound | null;
  /** The same step once the suggested data region is applied (what the fix is worth). */
  withRegion?: { deviceSeconds: number | null; speedup: Spread | null; bound: Bound | null };
  /** Bytes resident on the device, and how many independent runs fit on one device at once. */
  residentBytes: number | null;
  runsPerDevice: number | null;
}
