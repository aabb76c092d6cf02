/* STREAM-style triad, used as the bandwidth probe and as a kernel. */
#include <omp.h>
#include <stdio.h>
#include <stdlib.h>
#ifndef N
#define N 67108864
#endif
/* Padding between the arrays, as STREAM's OFFSET does (McCalpin, stream.c; from memory): three
 * arrays of a power-of-two size placed back to back map their streams onto the same cache sets
 * and memory banks, which cost this kernel 30-45% of its bandwidth on a 2-core EPYC VM. */
#define PAD 1024
static double a[N + PAD], b[N + 2 * PAD], c[N + 3 * PAD];

void kernel(double s) {
#pragma omp parallel for
  for (long i = 0; i < N; i++)
    a[i] = b[i] + s * c[i];
}

int main(int argc, char **argv) {
  int reps = argc > 1 ? atoi(argv[1]) : 10;
#pragma omp parallel for
  for (long i = 0; i < N; i++) { a[i] = 0.0; b[i] = 1.0; c[i] = 2.0; }
  kernel(3.0);
  double best = 1e30;
  for (int r = 0; r < reps; r++) {
    double t0 = omp_get_wtime();
    kernel(3.0);
    double t = omp_get_wtime() - t0;
    if (t < best) best = t;
  }
  printf("%.6e %.3f\n", best, a[N / 2]);
  return 0;
}
