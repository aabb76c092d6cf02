/* 2-D 5-point Jacobi sweep (the heat-plate kernel), double precision. */
#include <omp.h>
#include <stdio.h>
#include <stdlib.h>
#ifndef NX
#define NX 8192
#endif
#ifndef NY
#define NY 8192
#endif
static double u[NY][NX], unew[NY][NX];

void kernel(void) {
#pragma omp parallel for
  for (int j = 1; j < NY - 1; j++)
    for (int i = 1; i < NX - 1; i++)
      unew[j][i] = 0.25 * (u[j][i - 1] + u[j][i + 1] + u[j - 1][i] + u[j + 1][i]);
}

int main(int argc, char **argv) {
  int reps = argc > 1 ? atoi(argv[1]) : 10;
#pragma omp parallel for
  for (int j = 0; j < NY; j++)
    for (int i = 0; i < NX; i++) { u[j][i] = (double)(i + j); unew[j][i] = 0.0; }
  kernel();
  double best = 1e30;
  for (int r = 0; r < reps; r++) {
    double t0 = omp_get_wtime();
    kernel();
    double t = omp_get_wtime() - t0;
    if (t < best) best = t;
  }
  printf("%.6e %.3f\n", best, unew[NY / 2][NX / 2]);
  return 0;
}
