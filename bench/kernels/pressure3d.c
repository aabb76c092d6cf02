/* Pressure update of a staggered-grid acoustics model (fourth-order divergence), single precision. */
#include <omp.h>
#include <stdio.h>
#include <stdlib.h>
#ifndef NX
#define NX 600
#endif
#ifndef NY
#define NY 400
#endif
#ifndef NZ
#define NZ 200
#endif
#define IDX(i, j, k) (((size_t)(k) * NY + (j)) * NX + (i))
#define NTOT ((size_t)NX * NY * NZ)

void kernel(float *restrict p, const float *restrict vx, const float *restrict vy, const float *restrict vz, float coef) {
  const float c1 = 9.0f / 8.0f;
  const float c2 = -1.0f / 24.0f;
#pragma omp parallel for
  for (int k = 2; k < NZ - 2; k++)
    for (int j = 2; j < NY - 2; j++)
      for (int i = 2; i < NX - 2; i++) {
        const float div =
            c1 * (vx[IDX(i, j, k)] - vx[IDX(i - 1, j, k)]) + c2 * (vx[IDX(i + 1, j, k)] - vx[IDX(i - 2, j, k)]) +
            c1 * (vy[IDX(i, j, k)] - vy[IDX(i, j - 1, k)]) + c2 * (vy[IDX(i, j + 1, k)] - vy[IDX(i, j - 2, k)]) +
            c1 * (vz[IDX(i, j, k)] - vz[IDX(i, j, k - 1)]) + c2 * (vz[IDX(i, j, k + 1)] - vz[IDX(i, j, k - 2)]);
        p[IDX(i, j, k)] -= coef * div;
      }
}

int main(int argc, char **argv) {
  int reps = argc > 1 ? atoi(argv[1]) : 10;
  float *p = malloc(NTOT * sizeof *p), *vx = malloc(NTOT * sizeof *vx), *vy = malloc(NTOT * sizeof *vy), *vz = malloc(NTOT * sizeof *vz);
  if (!p || !vx || !vy || !vz) return 1;
#pragma omp parallel for
  for (size_t n = 0; n < NTOT; n++) { p[n] = 0.0f; vx[n] = (float)(n % 7); vy[n] = (float)(n % 5); vz[n] = (float)(n % 3); }
  kernel(p, vx, vy, vz, 0.01f);
  double best = 1e30;
  for (int r = 0; r < reps; r++) {
    double t0 = omp_get_wtime();
    kernel(p, vx, vy, vz, 0.01f);
    double t = omp_get_wtime() - t0;
    if (t < best) best = t;
  }
  printf("%.6e %.3f\n", best, p[IDX(NX / 2, NY / 2, NZ / 2)]);
  return 0;
}
