/*
 * jacobi3d_serial.c - 3-D Poisson problem, 7-point Jacobi iteration, serial.
 *
 * Invented scenario: a cube of conducting material, 1 m on a side, with a
 * heating element in a box at its centre. The bottom face (k = 0) is held at
 * temperature 1 and the other five faces at 0. The steady temperature u
 * solves -laplace(u) = f; each Jacobi iteration replaces every interior value
 * by the mean of its six neighbours plus h^2 f / 6, reading the current
 * iterate and writing the next one. At the end the program prints the norm
 * of the residual f + laplace(u), the sum of u and the centre value.
 *
 * Style: the grid and its fields live in one struct, a sweep function works
 * through a pointer to it with a flat index computed from the extents, and
 * the two iterates trade places by a pointer swap after every sweep.
 * jacobi3d_docon.f90 is the same model in Fortran with do concurrent, with
 * the same arithmetic in the same order, so it prints the same values.
 *
 * Build: gcc -O2 -Wall -std=c11 jacobi3d_serial.c -o jacobi3d_serial -lm
 * Small: add -DNX=32 -DNY=32 -DNZ=32 -DNITER=100
 */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>

#ifndef NX
#define NX 128
#endif
#ifndef NY
#define NY 128
#endif
#ifndef NZ
#define NZ 128
#endif
#ifndef NITER
#define NITER 500
#endif

struct grid {
    int nx, ny, nz;
    double h2;      /* square of the grid spacing */
    double *cur;    /* the iterate the sweep reads */
    double *next;   /* the iterate the sweep writes */
    double *f;      /* the heat source */
};

/* One Jacobi sweep over the interior. The faces of both iterates hold the
 * boundary values, so swapping the iterates keeps them. */
static void sweep(struct grid *g)
{
    const int nx = g->nx, ny = g->ny, nz = g->nz;
    const size_t sy = (size_t)nx;
    const size_t sz = (size_t)nx * ny;
    const double sixth = 1.0 / 6.0;
    const double h2 = g->h2;
    const double *u = g->cur;
    const double *f = g->f;
    double *un = g->next;

    for (int k = 1; k < nz - 1; k++)
        for (int j = 1; j < ny - 1; j++)
            for (int i = 1; i < nx - 1; i++) {
                const size_t c = (size_t)k * sz + (size_t)j * sy + (size_t)i;
                un[c] = sixth * (u[c - 1] + u[c + 1] + u[c - sy] + u[c + sy] +
                                 u[c - sz] + u[c + sz] + h2 * f[c]);
            }
}

int main(void)
{
    const size_t n = (size_t)NX * NY * NZ;
    const double h = 1.0 / (NX - 1);
    struct grid g = { NX, NY, NZ, h * h, NULL, NULL, NULL };
    g.cur = calloc(n, sizeof(double));
    g.next = calloc(n, sizeof(double));
    g.f = calloc(n, sizeof(double));
    if (!g.cur || !g.next || !g.f) {
        fprintf(stderr, "out of memory\n");
        return 1;
    }

    /* The heating element fills the middle quarter of each direction; the
     * bottom face is held at 1 in both iterates. */
    for (int k = 0; k < NZ; k++)
        for (int j = 0; j < NY; j++)
            for (int i = 0; i < NX; i++) {
                const size_t c = ((size_t)k * NY + j) * NX + i;
                const int inside = i >= 3 * NX / 8 && i < 5 * NX / 8 &&
                                   j >= 3 * NY / 8 && j < 5 * NY / 8 &&
                                   k >= 3 * NZ / 8 && k < 5 * NZ / 8;
                g.f[c] = inside ? 100.0 : 0.0;
                g.cur[c] = (k == 0) ? 1.0 : 0.0;
                g.next[c] = g.cur[c];
            }

    for (int iter = 0; iter < NITER; iter++) {
        sweep(&g);
        double *tmp = g.cur;
        g.cur = g.next;
        g.next = tmp;
    }

    /* Residual and sums in a fixed order (k, j, i), so they are reproducible. */
    const double *u = g.cur;
    const size_t sy = NX, sz = (size_t)NX * NY;
    double r2 = 0.0, sum = 0.0;
    for (int k = 1; k < NZ - 1; k++)
        for (int j = 1; j < NY - 1; j++)
            for (int i = 1; i < NX - 1; i++) {
                const size_t c = (size_t)k * sz + (size_t)j * sy + (size_t)i;
                const double r = g.f[c] + (u[c - 1] + u[c + 1] + u[c - sy] + u[c + sy] +
                                           u[c - sz] + u[c + sz] - 6.0 * u[c]) / g.h2;
                r2 += r * r;
            }
    for (size_t c = 0; c < n; c++)
        sum += u[c];

    printf("iterations %d\n", NITER);
    printf("residual   %.10e\n", sqrt(r2));
    printf("checksum   %.10e\n", sum);
    printf("center     %.10e\n", u[((size_t)(NZ / 2) * NY + NY / 2) * NX + NX / 2]);

    free(g.f);
    free(g.next);
    free(g.cur);
    return 0;
}
