/*
 * advect1d_serial.c - 1-D nonlinear advection (inviscid Burgers equation),
 * first-order upwind, time step from a max-reduction every step; serial.
 *
 * Invented scenario: a periodic channel, 1 m long, in which the velocity u
 * advects itself, u_t + (u^2 / 2)_x = 0. It starts as 1 + 0.5 sin(2 pi x), so
 * it is positive everywhere and the upwind side is always the left one; the
 * fast part overtakes the slow part and a shock forms at about t = 0.32 s.
 * The scheme is conservative (the sum of u stays the same up to rounding).
 *
 * The time step is not fixed: every step starts with a max-reduction of |u|
 * over the channel, and dt = CFL * dx / max|u|, the largest stable step.
 * Every 1000 steps the program prints the step, the time reached and max|u|;
 * at the end the time, the sum of u (which the scheme conserves), the sum
 * of squares (which the shock dissipates) and the value in cell N/2.
 * At the default size the run reaches t = 0.33 s, just past the shock.
 *
 * Style: the time loop is a while loop with a step counter, the arrays have
 * one ghost cell at each end that the periodic boundary fills every step,
 * and the flux is a separate array.
 *
 * Build: gcc -O2 -Wall -std=c11 advect1d_serial.c -o advect1d_serial -lm
 * Small: add -DN=2000 -DNSTEPS=2000
 */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>

#ifndef N
#define N 65536
#endif
#ifndef NSTEPS
#define NSTEPS 40000
#endif

static const double PI = 3.14159265358979323846;

int main(void)
{
    const double dx = 1.0 / N;
    const double cfl = 0.8;
    /* Cells 1..N are the channel; 0 and N+1 are ghosts. */
    double *u = malloc((N + 2) * sizeof(double));
    double *unew = malloc((N + 2) * sizeof(double));
    double *flux = malloc((N + 2) * sizeof(double));
    if (!u || !unew || !flux) {
        fprintf(stderr, "out of memory\n");
        return 1;
    }

    for (int i = 1; i <= N; i++) {
        const double x = (i - 0.5) * dx;
        u[i] = 1.0 + 0.5 * sin(2.0 * PI * x);
    }

    double t = 0.0;
    int step = 0;
    while (step < NSTEPS) {
        /* The largest speed sets the step. */
        double umax = 0.0;
        for (int i = 1; i <= N; i++)
            umax = fmax(umax, fabs(u[i]));
        const double dt = cfl * dx / umax;

        /* Periodic boundary: each ghost copies the cell at the other end. */
        u[0] = u[N];
        u[N + 1] = u[1];

        for (int i = 0; i <= N; i++)
            flux[i] = 0.5 * u[i] * u[i];

        for (int i = 1; i <= N; i++)
            unew[i] = u[i] - dt / dx * (flux[i] - flux[i - 1]);

        for (int i = 1; i <= N; i++)
            u[i] = unew[i];

        t += dt;
        step++;
        if (step % 1000 == 0)
            printf("step %6d  t %.10e  max|u| %.10e\n", step, t, umax);
    }

    double sum = 0.0, sq = 0.0;
    for (int i = 1; i <= N; i++) {
        sum += u[i];
        sq += u[i] * u[i];
    }
    printf("time       %.10e\n", t);
    printf("mass       %.10e\n", sum * dx);
    printf("energy     %.10e\n", 0.5 * sq * dx);
    printf("u[N/2]     %.10e\n", u[N / 2]);

    free(flux);
    free(unew);
    free(u);
    return 0;
}
