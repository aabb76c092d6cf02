/**
 * The roofline model (Williams, Waterman, Patterson, "Roofline: an insightful visual performance
 * model for multicore architectures", CACM 52(4), 2009): attainable performance is the lesser
 * of peak compute and bandwidth times arithmetic intensity; time is the greater of the memory
 * time and the compute time.
 */

/** Flop/s attainable at `intensity` flop/byte on a machine with `peakFlops` flop/s and `bandwidth` byte/s. */
export function attainable(peakFlops: number, bandwidth: number, intensity: number): number {
  return Math.min(peakFlops, bandwidth * intensity);
}

/** The intensity at which the memory roof meets the compute roof. */
export function ridgePoint(peakFlops: number, bandwidth: number): number {
  return peakFlops / bandwidth;
}

export interface RooflineTime {
  seconds: number;
  bound: 'memory' | 'compute';
}

export function rooflineTime(flops: number, bytes: number, peakFlops: number, bandwidth: number): RooflineTime {
  const memory = bytes / bandwidth;
  const compute = flops / peakFlops;
  return memory >= compute ? { seconds: memory, bound: 'memory' } : { seconds: compute, bound: 'compute' };
}

/** Flops per byte; undefined when no byte moves (a loop that only touches registers). */
export function intensity(flops: number, bytes: number): number | undefined {
  return bytes > 0 ? flops / bytes : undefined;
}
