/* model_linear.c - the built-in linear-Gaussian model. */
#include "sluice/model.h"

#include <math.h>
#include "sluice/rng.h"
#include "clones.h"

/* members whose noise is drawn in one batch */
#define NOISE_BLOCK 64

/* x <- A x + B u + c + L e for cnt members (columns of X, U, E), vectorised
 * over members: the block's states are copied to structure-of-arrays
 * layout (xs, n x cnt) and each row is accumulated for every member at
 * once in acc. Each member's terms are added in the order of the
 * per-member formula (c, then A x, B u and L e term by term), so the bits
 * do not depend on the grouping. */
SL_CLONES
static void linear_block(const sl_linear *lin, size_t cnt, double *X, const double *U,
                         const double *E, double *restrict xs, double *restrict acc)
{
    const size_t n = lin->n, q = lin->q;
    size_t i, j, k;
    for (j = 0; j < cnt; j++)
        for (i = 0; i < n; i++)
            xs[i * cnt + j] = X[j * n + i];
    for (i = 0; i < n; i++) {
        const double ci = lin->c != NULL ? lin->c[i] : 0.0;
        for (j = 0; j < cnt; j++)
            acc[j] = ci;
        for (k = 0; k < n; k++) {
            const double a = lin->A[i + k * n];
            const double *restrict xk = xs + k * cnt;
            for (j = 0; j < cnt; j++)
                acc[j] += a * xk[j];
        }
        for (k = 0; k < q; k++) {
            const double b = lin->B[i + k * n];
            for (j = 0; j < cnt; j++)
                acc[j] += b * U[j * q + k];
        }
        if (E != NULL)
            for (k = 0; k <= i; k++) {
                const double l = lin->L[i + k * n];
                for (j = 0; j < cnt; j++)
                    acc[j] += l * E[j * n + k];
            }
        for (j = 0; j < cnt; j++)
            X[j * n + i] = acc[j];
    }
}

static sl_status linear_step(const sl_model *model, double t, double t_end,
                             size_t first, size_t count, double *X,
                             const double *P, const double *U, uint64_t seed,
                             uint32_t step, double *work, sl_error *err)
{
    const sl_linear *lin = (const sl_linear *)model->ctx;
    const size_t n = lin->n, q = lin->q;
    double *E = work, *xs = E + n * NOISE_BLOCK, *acc = xs + n * NOISE_BLOCK;
    size_t j0;
    (void)t;
    (void)t_end;
    (void)P;
    (void)err;
    for (j0 = 0; j0 < count; j0 += NOISE_BLOCK) {
        size_t cnt = count - j0 < NOISE_BLOCK ? count - j0 : NOISE_BLOCK;
        if (lin->L != NULL)
            sl_normals_members(seed, (uint32_t)(first + j0), cnt, step,
                               SL_PURPOSE_MODEL_NOISE, n, E, n);
        linear_block(lin, cnt, X + j0 * n, U + j0 * q, lin->L != NULL ? E : NULL, xs, acc);
    }
    return SL_OK;
}

sl_status sl_linear_model(sl_model *model, const sl_linear *lin, double dt,
                          sl_error *err)
{
    if (lin == NULL || lin->n == 0 || lin->A == NULL)
        return sl_fail(err, SL_EINVAL, "badmodel",
                       "the linear model needs n >= 1 and a matrix A");
    if (lin->q > 0 && lin->B == NULL)
        return sl_fail(err, SL_EINVAL, "badmodel",
                       "the linear model has %lu forcings but no matrix B",
                       (unsigned long)lin->q);
    if (!(dt > 0) || !isfinite(dt))
        return sl_fail(err, SL_EINVAL, "badstep",
                       "the time step must be finite and > 0, got %g", dt);
    model->name = "linear";
    model->n_state = lin->n;
    model->n_param = 0;
    model->n_forcing = lin->q;
    model->dt = dt;
    model->discrete = 1;
    model->thread_safe = 1;
    model->member_draws = lin->L != NULL;
    model->work = (2 * lin->n + 1) * NOISE_BLOCK; /* E, xs, acc */
    model->step = linear_step;
    model->span = NULL;
    model->span_forced = NULL;
    model->ctx = (void *)(uintptr_t)lin;
    return SL_OK;
}
