/**
 * Flop counting by type, and the roofline formulas. One `flops(body)` helper wraps a statement
 * in a one-loop function with typed declarations and returns the counted flops per iteration.
 */
import { describe, expect, it } from 'vitest';
import { attainable, intensity, ridgePoint, rooflineTime } from '../../server/src/core/cost/roofline';
import { analyzeText } from '../helpers';

async function flops(body: string): Promise<number> {
  const src = `#define N 1000
#define DT 0.5f
void f(double *a, double *b, float *x, float *y, int *ia, int *ib, double s, float r, int k) {
  double t; int m;
  for (int i = 0; i < N; i++) {
    ${body}
  }
}`;
  const a = await analyzeText(src);
  expect(a.internalErrors).toEqual([]);
  return a.nests[0].cost.flopsPerIteration;
}

describe('flops per iteration (common practice: each floating + - * / is one flop; integer index arithmetic is not)', () => {
  const cases: [string, number][] = [
    ['a[i] = b[i];', 0],
    ['a[i] = b[i] + s;', 1],
    ['a[i] = b[i] * s + a[i] / s - 1.0;', 4],
    ['a[i] += s;', 1],
    ['a[i] *= b[i] * s;', 2],
    ['ia[i] = ib[i] * 2 + k;', 0],
    ['a[i] = b[i * 2 + k];', 0],
    ['a[i] = b[i] * (2.0 / 3.0);', 1],
    ['x[i] = DT * y[i];', 1],
    ['x[i] = DT / 2.0f * y[i];', 1],
    ['a[i] = sqrt(b[i]);', 1],
    ['a[i] = fabs(b[i]) + s;', 1],
    ['a[i] = exp(b[i]);', 20],
    ['a[i] = fma(b[i], s, a[i]);', 2],
    ['a[i] = -b[i];', 0],
    ['t = b[i] * s; a[i] = t + t;', 2],
    ['a[i] = b[i] > s ? b[i] - s : 0.0;', 1],
    ['a[i] = (double)ia[i] * s;', 1],
    ['m = ia[i] + ib[i]; ia[i] = m * k;', 0],
    ['a[i] = s * i;', 1],
  ];
  for (const [body, want] of cases) {
    it(`${body} → ${want}`, async () => expect(await flops(body)).toBe(want));
  }
});

describe('roofline (Williams, Waterman, Patterson, CACM 2009)', () => {
  // Worked machine from the paper (from memory): 17.6 GFlop/s peak, 15 GB/s sustained bandwidth.
  const peak = 17.6e9;
  const bw = 15e9;
  it('ridge point of the worked machine is about 1.17 flop/byte', () => {
    expect(ridgePoint(peak, bw)).toBeCloseTo(1.173, 3);
  });
  it('attainable = min(peak, bandwidth x intensity)', () => {
    expect(attainable(peak, bw, 0.5)).toBeCloseTo(7.5e9, -3);
    expect(attainable(peak, bw, 1.17)).toBeCloseTo(17.55e9, -6);
    expect(attainable(peak, bw, 4)).toBe(peak);
  });
  it('time is the larger of memory time and compute time, and names the bound', () => {
    // 1e9 bytes at 15 GB/s = 66.7 ms; 1e9 flops at 17.6 GFlop/s = 56.8 ms.
    expect(rooflineTime(1e9, 1e9, peak, bw)).toEqual({ seconds: 1e9 / bw, bound: 'memory' });
    expect(rooflineTime(4e9, 1e9, peak, bw)).toEqual({ seconds: 4e9 / peak, bound: 'compute' });
  });
  it('intensity is undefined when no byte moves', () => {
    expect(intensity(8, 16)).toBe(0.5);
    expect(intensity(3, 0)).toBeUndefined();
  });
});
