/**
 * Generated C sources for load tests and benchmarks: repeated units shaped like the demo (a time
 * loop, two offloaded stencil nests with copies in the loop, host code touching device data),
 * so every line exercises the ledger. Sizes are bound by #define, so every figure has a value.
 */

export function unit(k: number, nx = 512): string {
  return `
void step_${k}(float *restrict u, float *restrict v, const float *restrict c, int steps) {
  const int nx = NX, ny = NY;
  for (int t = 0; t < steps; t++) {
#pragma acc parallel loop collapse(2) copyin(u[0:nx*ny], c[0:nx*ny]) copy(v[0:nx*ny])
    for (int j = 1; j < ny - 1; j++)
      for (int i = 1; i < nx - 1; i++)
        v[j * nx + i] = 2.0f * u[j * nx + i] - v[j * nx + i]
                      + c[j * nx + i] * (u[j * nx + i - 1] + u[j * nx + i + 1] + u[(j - 1) * nx + i] + u[(j + 1) * nx + i] - 4.0f * u[j * nx + i]);
#pragma acc parallel loop collapse(2) copy(u[0:nx*ny], v[0:nx*ny])
    for (int j = 0; j < ny; j++)
      for (int i = 0; i < nx; i++) {
        const float tmp = u[j * nx + i];
        u[j * nx + i] = v[j * nx + i];
        v[j * nx + i] = tmp;
      }
    if (t % 10 == 0) {
      u[(ny / 2) * nx + ${nx} / 2] += 1.0f;
    }
  }
}
`;
}

/** A file of at least `lines` lines. */
export function generateSource(lines: number): string {
  let text = '#define NX 512\n#define NY 512\n';
  for (let k = 0; text.split('\n').length < lines; k++) text += unit(k);
  return text;
}

/** 0-based lines of `needle` occurrences, for choosing lines to edit. */
export function linesWith(text: string, needle: string): number[] {
  const out: number[] = [];
  text.split('\n').forEach((l, k) => {
    if (l.includes(needle)) out.push(k);
  });
  return out;
}
