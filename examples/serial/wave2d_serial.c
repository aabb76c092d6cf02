/*
 * wave2d_serial.c - 2-D acoustic wave equation, leapfrog in time, serial.
 *
 * Invented scenario: a square membrane, 1 m on a side, clamped at its edges.
 * Its right-hand third is made of a slower material (half the wave speed),
 * so a pulse started on the left is partly reflected at the interface. The
 * displacement starts as a Gaussian bump at rest, and the leapfrog scheme
 *
 *     next = 2 curr - prev + (c dt / dx)^2 * laplace(curr)
 *
 * keeps three time levels. A receiver in the slow material records the
 * displacement every step; every 100 steps the program prints the sum of
 * squares of the field, and at the end the sum of the field, the sum of
 * squares of the receiver trace and its last sample.
 *
 * Style: flat arrays read through an index macro that takes the array, and
 * the three time levels rotate by a pointer swap through a temporary.
 *
 * Build: gcc -O2 -Wall -std=c11 wave2d_serial.c -o wave2d_serial -lm
 * Small: add -DNX=96 -DNY=96 -DNSTEPS=300
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
#ifndef NSTEPS
#define NSTEPS 2000
#endif

/* Element (i, j) of a field stored row by row, x fastest. */
#define F(a, i, j) ((a)[(size_t)(j) * NX + (i)])

int main(void)
{
    const size_t n = (size_t)NX * NY;
    const double dx = 1.0 / (NX - 1);
    const double cmax = 1.0;              /* wave speed in the fast material, m/s */
    const double dt = 0.5 * dx / cmax;    /* half the 2-D stability limit dx / (sqrt(2) c) */
    const int rx = 3 * NX / 4, ry = NY / 2;  /* the receiver */

    double *prev = calloc(n, sizeof *prev);
    double *curr = calloc(n, sizeof *curr);
    double *next = calloc(n, sizeof *next);
    double *courant2 = malloc(n * sizeof *courant2);
    double *trace = calloc(NSTEPS, sizeof *trace);
    if (!prev || !curr || !next || !courant2 || !trace) {
        fprintf(stderr, "out of memory\n");
        return 1;
    }

    /* (c dt / dx)^2 per cell, and a Gaussian bump of width 0.05 m at (0.3, 0.5)
     * that starts at rest (prev = curr). The edges stay 0 in all three levels. */
    for (int j = 0; j < NY; j++)
        for (int i = 0; i < NX; i++) {
            const double x = i * dx, y = j * dx;
            const double c = (i < 2 * NX / 3) ? cmax : 0.5 * cmax;
            F(courant2, i, j) = (c * dt / dx) * (c * dt / dx);
            if (i > 0 && i < NX - 1 && j > 0 && j < NY - 1) {
                const double r2 = (x - 0.3) * (x - 0.3) + (y - 0.5) * (y - 0.5);
                F(curr, i, j) = exp(-r2 / (0.05 * 0.05));
                F(prev, i, j) = F(curr, i, j);
            }
        }

    for (int t = 0; t < NSTEPS; t++) {
        for (int j = 1; j < NY - 1; j++)
            for (int i = 1; i < NX - 1; i++) {
                const double lap = F(curr, i - 1, j) + F(curr, i + 1, j) +
                                   F(curr, i, j - 1) + F(curr, i, j + 1) - 4.0 * F(curr, i, j);
                F(next, i, j) = 2.0 * F(curr, i, j) - F(prev, i, j) + F(courant2, i, j) * lap;
            }

        /* The oldest level becomes the scratch for the next step. */
        double *tmp = prev;
        prev = curr;
        curr = next;
        next = tmp;

        trace[t] = F(curr, rx, ry);

        if ((t + 1) % 100 == 0) {
            double e = 0.0;
            for (int j = 0; j < NY; j++)
                for (int i = 0; i < NX; i++)
                    e += F(curr, i, j) * F(curr, i, j);
            printf("step %5d  sum of squares %.10e\n", t + 1, e);
        }
    }

    double sum = 0.0, tr = 0.0;
    for (size_t c = 0; c < n; c++)
        sum += curr[c];
    for (int t = 0; t < NSTEPS; t++)
        tr += trace[t] * trace[t];
    printf("checksum      %.10e\n", sum);
    printf("trace energy  %.10e\n", tr);
    printf("trace last    %.10e\n", trace[NSTEPS - 1]);

    free(trace);
    free(courant2);
    free(next);
    free(curr);
    free(prev);
    return 0;
}
