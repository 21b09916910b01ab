/* lorenz.c - the Lorenz (1963) and Lorenz (1996) systems. */
#include <math.h>
#include <stddef.h>

#include "models.h"
#include "../clones.h"

/* Lorenz (1963): dx = sigma (y - x), dy = x (rho - z) - y, dz = x y - beta z */
static void lorenz63_rhs(const sl_model_def *def, size_t n, double t,
                         const double *x, const double *p, const double *u,
                         double *dx)
{
    (void)def;
    (void)n;
    (void)t;
    (void)u;
    dx[0] = p[0] * (x[1] - x[0]);
    dx[1] = x[0] * (p[1] - x[2]) - x[1];
    dx[2] = x[0] * x[1] - p[2] * x[2];
}

/* lorenz63_rhs on a block in structure-of-arrays layout (model.h), the
 * same operations, so the same bits */
SL_CLONES
static void lorenz63_rhs_block(const sl_model_def *def, size_t n, size_t count, double t,
                               const double *restrict x, const double *restrict p,
                               const double *U, double *restrict dx)
{
    const size_t c = count;
    size_t j;
    (void)def;
    (void)n;
    (void)t;
    (void)U;
    for (j = 0; j < c; j++) {
        const double X = x[j], Y = x[c + j], Z = x[2 * c + j];
        dx[j] = p[j] * (Y - X);
        dx[c + j] = X * (p[c + j] - Z) - Y;
        dx[2 * c + j] = X * Y - p[2 * c + j] * Z;
    }
}

static const char *const l63_states[] = {"x", "y", "z"};
static const char *const l63_params[] = {"sigma", "rho", "beta"};
static const double l63_x0[] = {1.0, 1.0, 1.0};
static const double l63_p[] = {10.0, 28.0, 8.0 / 3.0};
static const double l63_lo[] = {0.0, 0.0, 0.0};
static const double l63_hi[] = {INFINITY, INFINITY, INFINITY};

const sl_model_def sl_model_lorenz63 = {
    "lorenz63",
    "Lorenz (1963) convection model: dx = sigma(y - x), dy = x(rho - z) - y, dz = xy - beta z",
    3, 3, 3, 0, 0,
    l63_states, l63_params, NULL, NULL,
    l63_x0, l63_p, l63_lo, l63_hi,
    0.01, "rk4",
    lorenz63_rhs, NULL, NULL, NULL, NULL, NULL, lorenz63_rhs_block, 0, NULL, NULL};

/* Lorenz (1996): dx_i = (x_{i+1} - x_{i-2}) x_{i-1} - x_i + F, cyclic. */
static void lorenz96_rhs(const sl_model_def *def, size_t n, double t,
                         const double *x, const double *p, const double *u,
                         double *dx)
{
    const double F = p[0];
    size_t i;
    (void)def;
    (void)t;
    (void)u;
    dx[0] = (x[1] - x[n - 2]) * x[n - 1] - x[0] + F;
    dx[1] = (x[2] - x[n - 1]) * x[0] - x[1] + F;
    for (i = 2; i + 1 < n; i++)
        dx[i] = (x[i + 1] - x[i - 2]) * x[i - 1] - x[i] + F;
    dx[n - 1] = (x[0] - x[n - 3]) * x[n - 2] - x[n - 1] + F;
}

/* lorenz96_rhs on a block in structure-of-arrays layout: row i of every
 * member from rows i+1, i-2 and i-1 (cyclic), the same operations */
SL_CLONES
static void lorenz96_rhs_block(const sl_model_def *def, size_t n, size_t count, double t,
                               const double *restrict x, const double *restrict p,
                               const double *U, double *restrict dx)
{
    const size_t c = count;
    size_t i, j;
    (void)def;
    (void)t;
    (void)U;
    for (i = 0; i < n; i++) {
        const double *xp1 = x + ((i + 1) % n) * c, *xm2 = x + ((i + n - 2) % n) * c,
                     *xm1 = x + ((i + n - 1) % n) * c, *xi = x + i * c;
        double *d = dx + i * c;
        for (j = 0; j < c; j++)
            d[j] = (xp1[j] - xm2[j]) * xm1[j] - xi[j] + p[j];
    }
}

static const char *const l96_params[] = {"F"};
static const double l96_p[] = {8.0};
static const double l96_lo[] = {-INFINITY};
static const double l96_hi[] = {INFINITY};

const sl_model_def sl_model_lorenz96 = {
    "lorenz96",
    "Lorenz (1996) model: dx_i = (x_{i+1} - x_{i-2}) x_{i-1} - x_i + F, cyclic, any n >= 4",
    0, 4, 1, 0, 0,
    NULL, l96_params, NULL, NULL,
    NULL, l96_p, l96_lo, l96_hi,
    0.01, "rk4",
    lorenz96_rhs, NULL, NULL, NULL, NULL, NULL, lorenz96_rhs_block, 0, NULL, NULL};
