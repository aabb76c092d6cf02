/*
 * hall_serial.c - hall acoustics, serial (no offload directives): the
 * starting point of a port of examples/hall.
 *
 * The same invented scenario as examples/hall: a 30 m x 20 m x 10 m concert
 * hall with rigid walls, a loudspeaker that emits a short pulse (a Ricker
 * wavelet) and a row of eight microphones along x that record the pressure
 * every step. The model is the linear acoustic wave equation as a first-order
 * system for the pressure p and the particle velocity (vx, vy, vz) on a
 * staggered grid, in single precision, with fourth-order staggered first
 * derivatives (coefficients 9/8 and -1/24). Every 100 steps the program
 * prints a checksum of a snapshot of p. The arithmetic is the ports'
 * arithmetic in the same order, so the output equals theirs line by line.
 *
 * Style: index macros everywhere. IDX uses the compile-time extents; inside
 * update_velocity, AT uses the extents passed in, as a library routine would.
 *
 * Build: gcc -O2 -Wall -std=c11 hall_serial.c -o hall_serial -lm
 * Small: add -DNX=40 -DNY=30 -DNZ=20 -DSTEPS=150
 */
#include <math.h>
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
#ifndef STEPS
#define STEPS 1000
#endif

/* Number of microphones; they sit in consecutive cells along x. */
#define NMIC 8

/* Total number of cells, and the cell index with x as the fastest index. */
#define N ((size_t)NX * NY * NZ)
#define IDX(i, j, k) (((size_t)(k) * NY + (j)) * NX + (i))

/* Source position and the first cell of the microphone row. */
#define SX (NX / 4)
#define SY (NY / 2)
#define SZ (NZ / 2)
#define MX0 (NX / 2)
#define MY (NY / 2)
#define MZ (NZ / 2)

static const double PI = 3.14159265358979323846;

/* Ricker wavelet with a 500 Hz peak, delayed so that it starts close to zero;
 * one value per step, computed in double precision. */
static float ricker(int t, float dt)
{
    const double f0 = 500.0;
    const double t0 = 1.2 / f0;
    const double a = PI * f0 * ((double)t * dt - t0);
    return (float)((1.0 - 2.0 * a * a) * exp(-a * a));
}

/* Velocity update from the pressure gradient, for any grid size. */
#define AT(i, j, k) (((size_t)(k) * ny + (j)) * nx + (i))
static void update_velocity(float *vx, float *vy, float *vz, const float *p,
                            int nx, int ny, int nz, float coef)
{
    const float c1 = 9.0f / 8.0f;
    const float c2 = -1.0f / 24.0f;

    for (int k = 2; k < nz - 2; k++)
        for (int j = 2; j < ny - 2; j++)
            for (int i = 2; i < nx - 2; i++) {
                vx[AT(i, j, k)] -= coef * (c1 * (p[AT(i + 1, j, k)] - p[AT(i, j, k)]) +
                                           c2 * (p[AT(i + 2, j, k)] - p[AT(i - 1, j, k)]));
                vy[AT(i, j, k)] -= coef * (c1 * (p[AT(i, j + 1, k)] - p[AT(i, j, k)]) +
                                           c2 * (p[AT(i, j + 2, k)] - p[AT(i, j - 1, k)]));
                vz[AT(i, j, k)] -= coef * (c1 * (p[AT(i, j, k + 1)] - p[AT(i, j, k)]) +
                                           c2 * (p[AT(i, j, k + 2)] - p[AT(i, j, k - 1)]));
            }
}
#undef AT

/* Sum of a field in a fixed order, so the result is reproducible. */
static double checksum(const float *f, size_t n)
{
    double s = 0.0;
    for (size_t i = 0; i < n; i++)
        s += f[i];
    return s;
}

int main(void)
{
    const float rho = 1.2f;    /* air density, kg/m^3 */
    const float c = 343.0f;    /* speed of sound, m/s */
    const float dx = 0.05f;    /* grid spacing, m */
    const float dt = 5.0e-5f;  /* time step, s; the CFL limit is about 7e-5 s */
    const float c1 = 9.0f / 8.0f;
    const float c2 = -1.0f / 24.0f;
    const float coef_v = dt / (rho * dx);
    const float coef_p = rho * c * c * dt / dx;

    float *p = calloc(N, sizeof *p);
    float *vx = calloc(N, sizeof *vx);
    float *vy = calloc(N, sizeof *vy);
    float *vz = calloc(N, sizeof *vz);
    float *mic = calloc((size_t)STEPS * NMIC, sizeof *mic);
    if (!p || !vx || !vy || !vz || !mic) {
        fprintf(stderr, "out of memory\n");
        return 1;
    }

    for (int t = 0; t < STEPS; t++) {
        update_velocity(vx, vy, vz, p, NX, NY, NZ, coef_v);

        /* Pressure update from the velocity divergence. */
        for (int k = 2; k < NZ - 2; k++)
            for (int j = 2; j < NY - 2; j++)
                for (int i = 2; i < NX - 2; i++) {
                    const float div =
                        c1 * (vx[IDX(i, j, k)] - vx[IDX(i - 1, j, k)]) + c2 * (vx[IDX(i + 1, j, k)] - vx[IDX(i - 2, j, k)]) +
                        c1 * (vy[IDX(i, j, k)] - vy[IDX(i, j - 1, k)]) + c2 * (vy[IDX(i, j + 1, k)] - vy[IDX(i, j - 2, k)]) +
                        c1 * (vz[IDX(i, j, k)] - vz[IDX(i, j, k - 1)]) + c2 * (vz[IDX(i, j, k + 1)] - vz[IDX(i, j, k - 2)]);
                    p[IDX(i, j, k)] -= coef_p * div;
                }

        /* The source pulse goes into one cell. */
        p[IDX(SX, SY, SZ)] += ricker(t, dt);

        /* The microphones sample the pressure. */
        for (int m = 0; m < NMIC; m++)
            mic[t * NMIC + m] = p[IDX(MX0 + m, MY, MZ)];

        /* A snapshot of the whole field every 100 steps; only its checksum is printed. */
        if (t % 100 == 0)
            printf("step %5d  snapshot checksum %.6e\n", t, checksum(p, N));
    }

    double energy = 0.0;
    for (size_t n = 0; n < (size_t)STEPS * NMIC; n++)
        energy += (double)mic[n] * mic[n];
    printf("p checksum   %.6e\n", checksum(p, N));
    printf("mic energy   %.6e\n", energy);
    printf("mic[0] last  %.6e\n", mic[(size_t)(STEPS - 1) * NMIC]);

    free(mic);
    free(vz);
    free(vy);
    free(vx);
    free(p);
    return 0;
}
