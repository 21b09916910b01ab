/* model_linear.c - the built-in linear-Gaussian model. */
#include "sluice/model.h"

#include <math.h>
#include "sluice/rng.h"

/* members whose noise is drawn in one batch */
#define NOISE_BLOCK 64

static sl_status linear_step(const sl_model *model, double t, double t_end,
                             size_t first, size_t count, double *X,
                             const double *P, const double *U, uint64_t seed,
                             uint32_t step, double *work, sl_error *err)
{
    const sl_linear *lin = (const sl_linear *)model->ctx;
    const size_t n = lin->n, q = lin->q;
    double *xo = work, *E = work + n;
    size_t j0, j, i, k;
    (void)t;
    (void)t_end;
    (void)P;
    (void)err;
    for (j0 = 0; j0 < count; j0 += NOISE_BLOCK) {
        size_t cnt = count - j0 < NOISE_BLOCK ? count - j0 : NOISE_BLOCK;
        if (lin->L != NULL)
            sl_normals_members(seed, (uint32_t)(first + j0), cnt, step,
                               SL_PURPOSE_MODEL_NOISE, n, E, n);
        for (j = j0; j < j0 + cnt; j++) {
            double *x = X + j * n;
            const double *u = U + j * q, *e = E + (j - j0) * n;
            for (i = 0; i < n; i++)
                xo[i] = x[i];
            /* each row in a register; the terms are added in the same
             * order as A x, then B u, then L e */
            for (i = 0; i < n; i++) {
                double acc = lin->c != NULL ? lin->c[i] : 0.0;
                for (k = 0; k < n; k++)
                    acc += lin->A[i + k * n] * xo[k];
                for (k = 0; k < q; k++)
                    acc += lin->B[i + k * n] * u[k];
                if (lin->L != NULL)
                    for (k = 0; k <= i; k++)
                        acc += lin->L[i + k * n] * e[k];
                x[i] = acc;
            }
        }
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
    model->work = lin->n + lin->n * NOISE_BLOCK;
    model->step = linear_step;
    model->span = NULL;
    model->ctx = (void *)(uintptr_t)lin;
    return SL_OK;
}
