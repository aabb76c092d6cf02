/*
 * heat2d_omp_host.c - 2-D heat plate, Jacobi iteration, parallel on the host
 * with OpenMP threads (no offload directives: nothing runs on a device).
 *
 * The same invented model and arithmetic as heat2d_serial.c and the ports in
 * examples/heat2d: a square plate starts at 0 with a hot square patch (value 1)
 * in the middle, its edges are held at 0, and each step replaces every
 * interior value by the mean of its four neighbours. The sweep, the every-100
 * steps max-reduction and the copy-back are `omp parallel for` loops over the
 * rows; the threads share the node, which is the baseline a GPU port of this
 * program has to beat. A maximum does not depend on the order in which the
 * threads combine their partial results, and the final sum runs on one
 * thread, so the output equals heat2d_serial.c's for any number of threads.
 *
 * Build: gcc -O2 -Wall -std=c11 -fopenmp heat2d_omp_host.c -o heat2d_omp_host -lm
 * Small: add -DNX=64 -DNY=64 -DSTEPS=200
 * Run:   OMP_NUM_THREADS=2 ./heat2d_omp_host
 */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>

#ifndef NX
#define NX 1024
#endif
#ifndef NY
#define NY 1024
#endif
#ifndef STEPS
#define STEPS 500
#endif

int main(void)
{
    double (*u)[NX] = malloc(sizeof(double[NY][NX]));
    double (*unew)[NX] = malloc(sizeof(double[NY][NX]));
    if (!u || !unew) {
        fprintf(stderr, "out of memory\n");
        return 1;
    }

    /* The hot patch covers the middle eighth of the plate in each direction.
     * Touching the rows in parallel places their pages near the threads that
     * sweep them later (first touch). */
#pragma omp parallel for
    for (int j = 0; j < NY; j++)
        for (int i = 0; i < NX; i++) {
            const int hot = (i >= 7 * NX / 16 && i < 9 * NX / 16 &&
                             j >= 7 * NY / 16 && j < 9 * NY / 16);
            u[j][i] = hot ? 1.0 : 0.0;
            unew[j][i] = u[j][i];
        }

    for (int t = 0; t < STEPS; t++) {
#pragma omp parallel for
        for (int j = 1; j < NY - 1; j++)
            for (int i = 1; i < NX - 1; i++)
                unew[j][i] = 0.25 * (u[j][i - 1] + u[j][i + 1] +
                                     u[j - 1][i] + u[j + 1][i]);

        if (t % 100 == 0) {
            double err = 0.0;
#pragma omp parallel for reduction(max : err)
            for (int j = 1; j < NY - 1; j++)
                for (int i = 1; i < NX - 1; i++)
                    err = fmax(err, fabs(unew[j][i] - u[j][i]));
            printf("step %5d  max change %.6e\n", t, err);
        }

#pragma omp parallel for
        for (int j = 1; j < NY - 1; j++)
            for (int i = 1; i < NX - 1; i++)
                u[j][i] = unew[j][i];
    }

    /* One thread sums in a fixed order, so the checksum is reproducible. */
    double sum = 0.0;
    for (int j = 0; j < NY; j++)
        for (int i = 0; i < NX; i++)
            sum += u[j][i];
    printf("checksum %.6e\n", sum);
    printf("center   %.6e\n", u[NY / 2][NX / 2]);

    free(unew);
    free(u);
    return 0;
}
