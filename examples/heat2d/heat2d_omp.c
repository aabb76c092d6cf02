/*
 * heat2d_omp.c - quick-start example: 2-D heat plate, Jacobi iteration,
 * naive OpenMP target port.
 *
 * The same plate as heat2d_acc.c: a hot square patch (value 1) in the middle,
 * edges held at 0, and each interior value replaced by the mean of its four
 * neighbours every step.
 *
 * This is the "naive" port: every target construct inside the time loop has
 * its own map clauses and there is no target data region, so both arrays
 * cross the host-device link several times per step.
 *
 * Build: gcc -O2 -Wall -std=c11 -fopenmp heat2d_omp.c -o heat2d_omp -lm
 * Small: add -DNX=64 -DNY=64 -DSTEPS=20
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

/* Row-major indexing: i runs along x and is the fastest index. */
#define IDX(i, j) ((j) * NX + (i))

int main(void)
{
    double *u = malloc(sizeof(double) * NX * NY);
    double *unew = malloc(sizeof(double) * NX * NY);
    if (!u || !unew) {
        fprintf(stderr, "out of memory\n");
        return 1;
    }

    /* The hot patch covers the middle eighth of the plate in each direction. */
    for (int j = 0; j < NY; j++)
        for (int i = 0; i < NX; i++) {
            const int hot = (i >= 7 * NX / 16 && i < 9 * NX / 16 &&
                             j >= 7 * NY / 16 && j < 9 * NY / 16);
            u[IDX(i, j)] = hot ? 1.0 : 0.0;
            /* unew gets the same edges, because the update never writes them. */
            unew[IDX(i, j)] = u[IDX(i, j)];
        }

    for (int t = 0; t < STEPS; t++) {
        /* unew must be tofrom, not from: the kernel leaves its edges alone,
         * so a from map would bring back uninitialised device edges. */
#pragma omp target teams distribute parallel for collapse(2) map(to: u[0:NX*NY]) map(tofrom: unew[0:NX*NY])
        for (int j = 1; j < NY - 1; j++)
            for (int i = 1; i < NX - 1; i++)
                unew[IDX(i, j)] = 0.25 * (u[IDX(i - 1, j)] + u[IDX(i + 1, j)] +
                                          u[IDX(i, j - 1)] + u[IDX(i, j + 1)]);

        /* The largest change per step shows how far the plate is from steady state. */
        if (t % 100 == 0) {
            double err = 0.0;
#pragma omp target teams distribute parallel for collapse(2) reduction(max: err) map(to: u[0:NX*NY], unew[0:NX*NY]) map(tofrom: err)
            for (int j = 1; j < NY - 1; j++)
                for (int i = 1; i < NX - 1; i++)
                    err = fmax(err, fabs(unew[IDX(i, j)] - u[IDX(i, j)]));
            printf("step %5d  max change %.6e\n", t, err);
        }

#pragma omp target teams distribute parallel for collapse(2) map(to: unew[0:NX*NY]) map(tofrom: u[0:NX*NY])
        for (int j = 1; j < NY - 1; j++)
            for (int i = 1; i < NX - 1; i++)
                u[IDX(i, j)] = unew[IDX(i, j)];
    }

    /* The sum runs on the host in a fixed order, so it is reproducible. */
    double sum = 0.0;
    for (int j = 0; j < NY; j++)
        for (int i = 0; i < NX; i++)
            sum += u[IDX(i, j)];
    printf("checksum %.6e\n", sum);
    printf("center   %.6e\n", u[IDX(NX / 2, NY / 2)]);

    free(unew);
    free(u);
    return 0;
}
