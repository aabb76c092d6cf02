/* 3-D 7-point Jacobi sweep, double precision. */
#include <omp.h>
#include <stdio.h>
#include <stdlib.h>
#ifndef N
#define N 400
#endif
static double u[N][N][N], unew[N][N][N];

void kernel(double alpha, double beta) {
#pragma omp parallel for
  for (int k = 1; k < N - 1; k++)
    for (int j = 1; j < N - 1; j++)
      for (int i = 1; i < N - 1; i++)
        unew[k][j][i] = alpha * u[k][j][i]
                      + beta * (u[k][j][i - 1] + u[k][j][i + 1] + u[k][j - 1][i] + u[k][j + 1][i] + u[k - 1][j][i] + u[k + 1][j][i]);
}

int main(int argc, char **argv) {
  int reps = argc > 1 ? atoi(argv[1]) : 10;
#pragma omp parallel for
  for (int k = 0; k < N; k++)
    for (int j = 0; j < N; j++)
      for (int i = 0; i < N; i++) { u[k][j][i] = (double)(i + j + k); unew[k][j][i] = 0.0; }
  kernel(0.4, 0.1);
  double best = 1e30;
  for (int r = 0; r < reps; r++) {
    double t0 = omp_get_wtime();
    kernel(0.4, 0.1);
    double t = omp_get_wtime() - t0;
    if (t < best) best = t;
  }
  printf("%.6e %.3f\n", best, unew[N / 2][N / 2][N / 2]);
  return 0;
}
