/*
 * hall_stale_acc.c - hall acoustics, resident OpenACC port WITH BUGS.
 *
 * This file is intentionally wrong. It is the demo input for Offload Ledger's
 * stale-data checks and must not be used as a model for real code.
 *
 * It is hall_resident_acc.c with the small host-device updates in the time
 * loop left out, as happens when a data region is added around a working CPU
 * loop and the host code inside it is not revisited:
 *
 *   1. The source injection has no "update self" before it and no
 *      "update device" after it. The host adds the pulse to its own stale copy
 *      of p, and the device never sees the pulse, so on a real GPU the hall
 *      stays silent.
 *   2. The microphone read has no "update self". The host reads its own copy
 *      of p, which is only refreshed by the snapshot every 100 steps, so on a
 *      real GPU the traces hold stale values.
 *
 * Under gcc's host fallback (no offload device) the "device" copy is the host
 * memory itself, so the missing updates change nothing and this program
 * prints exactly the same numbers as the naive and resident ports. That is
 * why the bug needs a static check: running it without a GPU cannot show it.
 *
 * Build: gcc -O2 -Wall -std=c11 -fopenacc hall_stale_acc.c -o hall_stale_acc -lm
 * Small: add -DNX=40 -DNY=30 -DNZ=20 -DSTEPS=30
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

/* Ricker wavelet (second derivative of a Gaussian) with a 500 Hz peak,
 * delayed so that it starts close to zero. The host computes it in double
 * precision because it is one value per step. */
static float ricker(int t, float dt)
{
    const double f0 = 500.0;
    const double t0 = 1.2 / f0;
    const double a = PI * f0 * ((double)t * dt - t0);
    return (float)((1.0 - 2.0 * a * a) * exp(-a * a));
}

/* Velocity update from the pressure gradient. The strides are computed from
 * the extents passed in, so the function works for any grid size. The caller
 * must already have the four arrays on the device. */
static void update_velocity(float *vx, float *vy, float *vz, const float *p,
                            int nx, int ny, int nz, float coef)
{
    const float c1 = 9.0f / 8.0f;
    const float c2 = -1.0f / 24.0f;
    const size_t sy = (size_t)nx;
    const size_t sz = (size_t)nx * ny;

#pragma acc parallel loop collapse(3) present(p[0:nx*ny*nz], vx[0:nx*ny*nz], vy[0:nx*ny*nz], vz[0:nx*ny*nz])
    for (int k = 2; k < nz - 2; k++)
        for (int j = 2; j < ny - 2; j++)
            for (int i = 2; i < nx - 2; i++) {
                const size_t idx = (size_t)k * sz + (size_t)j * sy + (size_t)i;
                vx[idx] -= coef * (c1 * (p[idx + 1] - p[idx]) + c2 * (p[idx + 2] - p[idx - 1]));
                vy[idx] -= coef * (c1 * (p[idx + sy] - p[idx]) + c2 * (p[idx + 2 * sy] - p[idx - sy]));
                vz[idx] -= coef * (c1 * (p[idx + sz] - p[idx]) + c2 * (p[idx + 2 * sz] - p[idx - sz]));
            }
}

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

    /* p starts on the host and its final state is needed there; the velocities
     * are only ever needed on the device, so they are created there and zeroed
     * by a kernel instead of being copied in. */
#pragma acc data copy(p[0:N]) create(vx[0:N], vy[0:N], vz[0:N])
    {
#pragma acc parallel loop present(vx[0:N], vy[0:N], vz[0:N])
        for (size_t n = 0; n < N; n++) {
            vx[n] = 0.0f;
            vy[n] = 0.0f;
            vz[n] = 0.0f;
        }

        for (int t = 0; t < STEPS; t++) {
            update_velocity(vx, vy, vz, p, NX, NY, NZ, coef_v);

            /* Pressure update from the velocity divergence. */
#pragma acc parallel loop collapse(3) default(present)
            for (int k = 2; k < NZ - 2; k++)
                for (int j = 2; j < NY - 2; j++)
                    for (int i = 2; i < NX - 2; i++) {
                        const float div =
                            c1 * (vx[IDX(i, j, k)] - vx[IDX(i - 1, j, k)]) + c2 * (vx[IDX(i + 1, j, k)] - vx[IDX(i - 2, j, k)]) +
                            c1 * (vy[IDX(i, j, k)] - vy[IDX(i, j - 1, k)]) + c2 * (vy[IDX(i, j + 1, k)] - vy[IDX(i, j - 2, k)]) +
                            c1 * (vz[IDX(i, j, k)] - vz[IDX(i, j, k - 1)]) + c2 * (vz[IDX(i, j, k + 1)] - vz[IDX(i, j, k - 2)]);
                        p[IDX(i, j, k)] -= coef_p * div;
                    }

            /* BUG (intentional): the host updates its own copy of the source
             * cell without fetching the current value first, and never sends
             * the result to the device. On a real GPU the snapshot update
             * below then overwrites even the host's copy of the pulse. */
            p[IDX(SX, SY, SZ)] += ricker(t, dt);

            /* BUG (intentional): the host reads the microphone cells without
             * an update from the device, so it sees stale values. */
            for (int m = 0; m < NMIC; m++)
                mic[t * NMIC + m] = p[IDX(MX0 + m, MY, MZ)];

            /* A snapshot of the whole field every 100 steps; only its checksum is printed. */
            if (t % 100 == 0) {
#pragma acc update self(p[0:N])
                printf("step %5d  snapshot checksum %.6e\n", t, checksum(p, N));
            }
        }
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
