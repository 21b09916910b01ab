/* model.h - the model descriptor the ensemble cycle drives. */
#ifndef SLUICE_MODEL_H
#define SLUICE_MODEL_H

#include <stddef.h>
#include <stdint.h>
#include "sluice/status.h"

#ifdef __cplusplus
extern "C" {
#endif

typedef struct sl_model sl_model;

/* Advance members first .. first+count-1 (their columns are X[0..n*count),
 * P[0..p*count), U[0..q*count)) by one step from t to t + dt. `step` is the
 * run's global step counter and `seed` its seed, for models whose own
 * dynamics are random (they draw from stream (seed, member, step,
 * SL_PURPOSE_MODEL_NOISE)). `work` holds model->work doubles of scratch,
 * private to the calling thread. Must not allocate; must be safe to call on
 * disjoint member blocks from several threads at once when the model says
 * it is (thread_safe = 1). */
typedef sl_status (*sl_step_fn)(const sl_model *model, double t, double dt,
                                size_t first, size_t count, double *X,
                                const double *P, const double *U,
                                uint64_t seed, uint32_t step, double *work,
                                sl_error *err);

struct sl_model {
    const char *name;
    size_t n_state, n_param, n_forcing;
    double dt;        /* the model's step */
    int discrete;     /* 1: a map that only advances whole steps of dt */
    int thread_safe;  /* 1: step may run on member blocks in parallel */
    size_t work;      /* doubles of per-thread scratch the step needs */
    sl_step_fn step;
    void *ctx;        /* the model's own data (matrices, a callback, ...) */
};

/* The built-in linear-Gaussian model x_k = A x_{k-1} + B u_k + c + L e_k,
 * e_k ~ N(0, I): A (n x n), B (n x q, may be NULL when q = 0), c (n, may be
 * NULL), L (n x n lower-triangular factor of the noise covariance Q, may be
 * NULL for no noise), all column-major, owned by the caller. */
typedef struct {
    size_t n, q;
    const double *A, *B, *c, *L;
} sl_linear;

/* Fill `model` to drive `lin` (which must outlive it) with step dt. */
sl_status sl_linear_model(sl_model *model, const sl_linear *lin, double dt,
                          sl_error *err);

#ifdef __cplusplus
}
#endif
#endif
