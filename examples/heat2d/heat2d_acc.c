/*
 * heat2d_acc.c - quick-start example: 2-D heat plate, Jacobi iteration,
 * naive OpenACC port.
 *
 * A square plate starts at 0 with a hot square patch (value 1) in the middle,
 * and its edges are held at 0. Each step replaces every interior value by the
 * mean of its four neighbours.
 *
 * This is the "naive" port: the compute loops carry OpenACC directives, but
 * there is no data region around the time loop. The arrays u and unew are
 * therefore copied to the device and back implicitly by every parallel loop,
 * in every step, which is the traffic Offload Ledger is meant to point out.
 *
 * Build: gcc -O2 -Wall -std=c11 -fopenacc heat2d_acc.c -o heat2d_acc -lm
 * Small: add -DNX=64 -DNY=64 -DSTEPS=20
 */
#include <math.h>
#include <stdio.h>

#ifndef NX
#define NX 1024
#endif
#ifndef NY
#define NY 1024
#endif
#ifndef STEPS
#define STEPS 500
#endif

/* The arrays have a static extent so the compiler knows their full size. */
static double u[NY][NX];
static double unew[NY][NX];

int main(void)
{
    /* The hot patch covers the middle eighth of the plate in each direction. */
    for (int j = 0; j < NY; j++)
        for (int i = 0; i < NX; i++) {
            const int hot = (i >= 7 * NX / 16 && i < 9 * NX / 16 &&
                             j >= 7 * NY / 16 && j < 9 * NY / 16);
            u[j][i] = hot ? 1.0 : 0.0;
            /* unew gets the same edges, because the update never writes them. */
            unew[j][i] = u[j][i];
        }

    for (int t = 0; t < STEPS; t++) {
#pragma acc parallel loop collapse(2)
        for (int j = 1; j < NY - 1; j++)
            for (int i = 1; i < NX - 1; i++)
                unew[j][i] = 0.25 * (u[j][i - 1] + u[j][i + 1] +
                                     u[j - 1][i] + u[j + 1][i]);

        /* The largest change per step shows how far the plate is from steady state. */
        if (t % 100 == 0) {
            double err = 0.0;
#pragma acc parallel loop collapse(2) reduction(max: err)
            for (int j = 1; j < NY - 1; j++)
                for (int i = 1; i < NX - 1; i++)
                    err = fmax(err, fabs(unew[j][i] - u[j][i]));
            printf("step %5d  max change %.6e\n", t, err);
        }

#pragma acc parallel loop collapse(2)
        for (int j = 1; j < NY - 1; j++)
            for (int i = 1; i < NX - 1; i++)
                u[j][i] = unew[j][i];
    }

    /* The sum runs on the host in a fixed order, so it is reproducible. */
    double sum = 0.0;
    for (int j = 0; j < NY; j++)
        for (int i = 0; i < NX; i++)
            sum += u[j][i];
    printf("checksum %.6e\n", sum);
    printf("center   %.6e\n", u[NY / 2][NX / 2]);
    return 0;
}
