/* mexrun.c - Octave-function models and the progress / interrupt poll. */
#include "mexrun.h"

#include <stdio.h>
#include <stdint.h>
#include <string.h>

#include "mexutil.h"

/* Call the user's function with (t, X, P, U[, dt]); the result must be a
 * real double n x count matrix, copied to out. */
static sl_status call_user(slm_handle_model *hm, double t, size_t count,
                           const double *X, const double *P, const double *U,
                           double dt, int with_dt, double *out, sl_error *err)
{
    mxArray *in[6], *res[3] = {NULL, NULL, NULL}, *trap;
    const size_t n = hm->n, p = hm->p, q = hm->q;
    const int nin = with_dt ? 6 : 5;
    sl_status st = SL_OK;
    int k;
    /* the handle is passed as it is, never modified or destroyed */
    in[0] = (mxArray *)(uintptr_t)hm->fun;
    in[1] = mxCreateDoubleScalar(t);
    in[2] = mxCreateUninitNumericMatrix(n, count, mxDOUBLE_CLASS, mxREAL);
    in[3] = mxCreateUninitNumericMatrix(p, count, mxDOUBLE_CLASS, mxREAL);
    in[4] = mxCreateUninitNumericMatrix(q, count, mxDOUBLE_CLASS, mxREAL);
    in[5] = with_dt ? mxCreateDoubleScalar(dt) : NULL;
    memcpy(mxGetDoubles(in[2]), X, n * count * sizeof(double));
    if (p)
        memcpy(mxGetDoubles(in[3]), P, p * count * sizeof(double));
    if (q)
        memcpy(mxGetDoubles(in[4]), U, q * count * sizeof(double));
    trap = mexCallMATLABWithTrap(3, res, nin, in, "sluice.kernel.guarded_call");
    for (k = 1; k < nin; k++)
        mxDestroyArray(in[k]);
    if (trap != NULL) {
        hm->interrupted = 1;
        snprintf(hm->message, sizeof hm->message,
                 "the model function was interrupted at t = %g", t);
        hm->identifier[0] = '\0';
        return sl_fail(err, SL_EINTERRUPT, "interrupted", "%s", hm->message);
    }
    if (mxGetNumberOfElements(res[1]) > 0) {
        char *msg = mxArrayToString(res[1]), *id = mxArrayToString(res[2]);
        snprintf(hm->message, sizeof hm->message,
                 "the model function failed at t = %g: %s", t, msg ? msg : "");
        snprintf(hm->identifier, sizeof hm->identifier, "%s", id ? id : "");
        mxFree(msg);
        mxFree(id);
        st = sl_fail(err, SL_EMODEL, "modelfailed", "%s", hm->message);
    } else if (!mxIsDouble(res[0]) || mxIsComplex(res[0]) || mxIsSparse(res[0]) ||
               mxGetNumberOfDimensions(res[0]) != 2 || mxGetM(res[0]) != n ||
               mxGetN(res[0]) != count) {
        char got[96];
        slm_describe(res[0], got, sizeof got);
        snprintf(hm->message, sizeof hm->message,
                 "the model function must return a real double %lux%lu matrix "
                 "(states x members), got %s at t = %g",
                 (unsigned long)n, (unsigned long)count, got, t);
        snprintf(hm->identifier, sizeof hm->identifier, "sluice:filter:badmodeloutput");
        st = sl_fail(err, SL_EMODEL, "badmodeloutput", "%s", hm->message);
    } else {
        memcpy(out, slm_doubles(res[0]), n * count * sizeof(double));
    }
    for (k = 0; k < 3; k++)
        if (res[k] != NULL)
            mxDestroyArray(res[k]);
    return st;
}

static sl_status handle_step(const sl_model *model, double t, double t_end,
                             size_t first, size_t count, double *X,
                             const double *P, const double *U, uint64_t seed,
                             uint32_t step, double *work, sl_error *err)
{
    slm_handle_model *hm = (slm_handle_model *)model->ctx;
    (void)first;
    (void)seed;
    (void)step;
    (void)work;
    return call_user(hm, t, count, X, P, U, t_end - t, 1, X, err);
}

static sl_status handle_block_rhs(void *ctx, double t, size_t first,
                                  size_t count, const double *X,
                                  const double *P, const double *U,
                                  double *dX, sl_error *err)
{
    (void)first;
    return call_user((slm_handle_model *)ctx, t, count, X, P, U, 0.0, 0, dX, err);
}

static sl_status handle_rhs_step(const sl_model *model, double t, double t_end,
                                 size_t first, size_t count, double *X,
                                 const double *P, const double *U,
                                 uint64_t seed, uint32_t step, double *work,
                                 sl_error *err)
{
    slm_handle_model *hm = (slm_handle_model *)model->ctx;
    (void)seed;
    (void)step;
    return sl_integrate_block(hm->method, handle_block_rhs, hm, hm->n, first,
                              count, t, t_end - t, X, P, U, &hm->tol, work, NULL, err);
}

void slm_handle_model_init(sl_model *model, slm_handle_model *hm,
                           const mxArray *fun, size_t n, size_t p, size_t q,
                           size_t N, double dt, const sl_integrator *method,
                           const sl_tolerance *tol)
{
    memset(hm, 0, sizeof *hm);
    hm->fun = fun;
    hm->n = n;
    hm->p = p;
    hm->q = q;
    if (method == &sl_integrator_discrete)
        method = NULL;
    hm->method = method;
    if (tol != NULL)
        hm->tol = *tol;
    model->name = "octave function";
    model->n_state = n;
    model->n_param = p;
    model->n_forcing = q;
    model->dt = dt;
    model->discrete = method == NULL;
    model->thread_safe = 0;
    model->member_draws = 0;
    model->work = method != NULL ? method->stages * n * N : 0;
    model->step = method != NULL ? handle_rhs_step : handle_step;
    model->ctx = hm;
}

void slm_handle_model_raise(const char *fn, const slm_handle_model *hm)
{
    if (hm->interrupted)
        slm_fail(fn, "interrupted", "%s", hm->message);
    if (hm->identifier[0] != '\0')
        mexErrMsgIdAndTxt(hm->identifier, "%s", hm->message);
    slm_fail(fn, "modelfailed", "%s", hm->message);
}

void slm_handle_obs_init(slm_handle_obs *ho, const mxArray *funs,
                         const mxArray *rows, size_t n, size_t p, size_t n_fun)
{
    memset(ho, 0, sizeof *ho);
    ho->funs = funs;
    ho->rows = rows;
    ho->n = n;
    ho->p = p;
    ho->n_fun = n_fun;
}

sl_status slm_handle_obs_fn(void *ctx, double t, size_t N, const double *X,
                            const double *P, double *Y, sl_error *err)
{
    slm_handle_obs *ho = (slm_handle_obs *)ctx;
    mxArray *in[5], *res[3] = {NULL, NULL, NULL}, *trap;
    sl_status st = SL_OK;
    int k;
    in[0] = (mxArray *)(uintptr_t)ho->funs;
    in[1] = (mxArray *)(uintptr_t)ho->rows;
    in[2] = mxCreateDoubleScalar(t);
    in[3] = mxCreateUninitNumericMatrix(ho->n, N, mxDOUBLE_CLASS, mxREAL);
    in[4] = mxCreateUninitNumericMatrix(ho->p, N, mxDOUBLE_CLASS, mxREAL);
    memcpy(mxGetDoubles(in[3]), X, ho->n * N * sizeof(double));
    if (ho->p)
        memcpy(mxGetDoubles(in[4]), P, ho->p * N * sizeof(double));
    trap = mexCallMATLABWithTrap(3, res, 5, in, "sluice.kernel.observe");
    for (k = 2; k < 5; k++)
        mxDestroyArray(in[k]);
    ho->failed = 1;
    if (trap != NULL) {
        ho->interrupted = 1;
        snprintf(ho->message, sizeof ho->message,
                 "the observation operator was interrupted at t = %g", t);
        return sl_fail(err, SL_EINTERRUPT, "interrupted", "%s", ho->message);
    }
    if (mxGetNumberOfElements(res[1]) > 0) {
        char *msg = mxArrayToString(res[1]), *id = mxArrayToString(res[2]);
        snprintf(ho->message, sizeof ho->message, "%s", msg ? msg : "");
        snprintf(ho->identifier, sizeof ho->identifier, "%s", id ? id : "");
        mxFree(msg);
        mxFree(id);
        st = sl_fail(err, SL_EMODEL, "operatorfailed", "%s", ho->message);
    } else if (!mxIsDouble(res[0]) || mxIsComplex(res[0]) || mxIsSparse(res[0]) ||
               mxGetNumberOfDimensions(res[0]) != 2 || mxGetM(res[0]) != ho->n_fun ||
               mxGetN(res[0]) != N) {
        char got[96];
        slm_describe(res[0], got, sizeof got);
        snprintf(ho->message, sizeof ho->message,
                 "the observation operators must give a real double %lux%lu matrix, "
                 "got %s at t = %g", (unsigned long)ho->n_fun, (unsigned long)N, got, t);
        ho->identifier[0] = '\0';
        st = sl_fail(err, SL_EMODEL, "badoperatoroutput", "%s", ho->message);
    } else {
        memcpy(Y, slm_doubles(res[0]), ho->n_fun * N * sizeof(double));
        ho->failed = 0;
    }
    for (k = 0; k < 3; k++)
        if (res[k] != NULL)
            mxDestroyArray(res[k]);
    return st;
}

void slm_handle_obs_raise(const char *fn, const slm_handle_obs *ho)
{
    if (ho->interrupted)
        slm_fail(fn, "interrupted", "%s", ho->message);
    if (ho->identifier[0] != '\0')
        mexErrMsgIdAndTxt(ho->identifier, "%s", ho->message);
    slm_fail(fn, "badoperatoroutput", "%s", ho->message);
}

void slm_poll_init(slm_poll *pl, int mode)
{
    pl->start = pl->last = slm_monotonic_seconds();
    pl->show = mode == 1 || (mode == 2 && slm_stdout_is_terminal());
    pl->shown = 0;
}

static int call_progress(slm_poll *pl, double fraction, double elapsed,
                         double show)
{
    mxArray *in[3], *trap;
    int k;
    in[0] = mxCreateDoubleScalar(fraction);
    in[1] = mxCreateDoubleScalar(elapsed);
    in[2] = mxCreateDoubleScalar(show);
    trap = mexCallMATLABWithTrap(0, NULL, 3, in, "sluice.kernel.progress");
    for (k = 0; k < 3; k++)
        mxDestroyArray(in[k]);
    (void)pl;
    return trap != NULL;
}

int slm_poll_fn(void *ctx, double fraction)
{
    slm_poll *pl = (slm_poll *)ctx;
    double t = slm_monotonic_seconds(), elapsed = t - pl->start;
    int show;
    if (t - pl->last < 0.1)
        return 0;
    pl->last = t;
    show = pl->show && elapsed > 2.0;
    if (show)
        pl->shown = 1;
    return call_progress(pl, fraction, elapsed, show ? 1.0 : 0.0);
}

void slm_poll_finish(slm_poll *pl)
{
    if (pl->shown)
        call_progress(pl, 1.0, slm_monotonic_seconds() - pl->start, 2.0);
}
