/*
 * heat2d_serial.c - 2-D heat plate, Jacobi iteration, serial (no offload
 * directives): the starting point of a port of examples/heat2d.
 *
 * The same invented model as examples/heat2d: a square plate starts at 0 with
 * a hot square patch (value 1) in the middle, its edges are held at 0, and
 * each step replaces every interior value by the mean of its four
 * neighbours. Every 100 steps a max-reduction reports the largest change.
 * The arithmetic is the ports' arithmetic in the same order, so this program
 * prints exactly what heat2d_acc.c and heat2d_omp.c print.
 *
 * Style: the plate is allocated on the heap and used as a 2-D array through
 * a pointer to rows, double (*u)[NX], and the new values are copied back.
 *
 * Build: gcc -O2 -Wall -std=c11 heat2d_serial.c -o heat2d_serial -lm
 * Small: add -DNX=64 -DNY=64 -DSTEPS=200
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

    /* The hot patch covers the middle eighth of the plate in each direction. */
    for (int j = 0; j < NY; j++)
        for (int i = 0; i < NX; i++) {
            const int hot = (i >= 7 * NX / 16 && i < 9 * NX / 16 &&
                             j >= 7 * NY / 16 && j < 9 * NY / 16);
            u[j][i] = hot ? 1.0 : 0.0;
            /* unew gets the same edges, because the sweep never writes them. */
            unew[j][i] = u[j][i];
        }

    for (int t = 0; t < STEPS; t++) {
        for (int j = 1; j < NY - 1; j++)
            for (int i = 1; i < NX - 1; i++)
                unew[j][i] = 0.25 * (u[j][i - 1] + u[j][i + 1] +
                                     u[j - 1][i] + u[j + 1][i]);

        /* The largest change shows how far the plate is from steady state. */
        if (t % 100 == 0) {
            double err = 0.0;
            for (int j = 1; j < NY - 1; j++)
                for (int i = 1; i < NX - 1; i++)
                    err = fmax(err, fabs(unew[j][i] - u[j][i]));
            printf("step %5d  max change %.6e\n", t, err);
        }

        for (int j = 1; j < NY - 1; j++)
            for (int i = 1; i < NX - 1; i++)
                u[j][i] = unew[j][i];
    }

    /* The sum runs in a fixed order, so it is reproducible. */
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
