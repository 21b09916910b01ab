/* mexrun.c - Octave-function models and the progress / interrupt poll. */
#include "mexrun.h"

#include <stdio.h>
#include <stdint.h>
#include <string.h>

#include "mexcall.h"
#include "mexutil.h"

/* Call an Octave function of the run with a trap: the trampoline fname
 * (sluice.internal.guarded_call, .observe or .progress) with the
 * arguments in[0..nin-1]. A Ctrl-C already pending is taken first and
 * the call not made. The trampolines return the errors of the user's
 * functions as values, so a trap is an error raised outside them (such
 * as running out of memory while passing arguments). In Octave a Ctrl-C
 * that arrives during the call is caught as it unwinds the call
 * (slm_call_catching); one that arrives after the interpreter's last
 * look stays pending for the next poll. Elsewhere the host's interrupt
 * is its own. */
static int call_trapped(int nout, mxArray **out, int nin, mxArray **in, const char *fname)
{
    if (slm_take_interrupt())
        return SLM_CALL_INTERRUPTED;
#if defined(HAVE_OCTAVE)
    return slm_call_catching(nout, (void **)out, nin, (void **)in, fname);
#else
    {
        mxArray *trap = mexCallMATLABWithTrap(nout, out, nin, in, fname);
        if (trap == NULL)
            return SLM_CALL_RETURNED;
        mxDestroyArray(trap);
        return SLM_CALL_FAILED;
    }
#endif
}

/* Call the user's function with (t, X, P, U[, dt]); the result must be a
 * real double n x count matrix, copied to out. */
static sl_status call_user(slm_handle_model *hm, double t, size_t count,
                           const double *X, const double *P, const double *U,
                           double dt, int with_dt, double *out, sl_error *err)
{
    mxArray *in[6], *res[3] = {NULL, NULL, NULL};
    const size_t n = hm->n, p = hm->p, q = hm->q;
    const int nin = with_dt ? 6 : 5;
    sl_status st = SL_OK;
    int k, code;
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
    code = call_trapped(3, res, nin, in, "sluice.internal.guarded_call");
    for (k = 1; k < nin; k++)
        mxDestroyArray(in[k]);
    if (code == SLM_CALL_INTERRUPTED) {
        hm->interrupted = 1;
        snprintf(hm->message, sizeof hm->message,
                 "the model function was interrupted (Ctrl-C) at t = %g; no result is returned", t);
        hm->identifier[0] = '\0';
        return sl_fail(err, SL_EINTERRUPT, "interrupted", "%s", hm->message);
    }
    if (code == SLM_CALL_FAILED) {
        snprintf(hm->message, sizeof hm->message,
                 "the call of the model function at t = %g failed outside the function "
                 "(an error Octave raised while passing its arguments or result: out of memory?)",
                 t);
        hm->identifier[0] = '\0';
        return sl_fail(err, SL_EMODEL, "modelfailed", "%s", hm->message);
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
        hm->identifier[0] = '\0';  /* raised as sluice:<fn>:badmodeloutput */
        hm->bad_output = 1;
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
    model->span = NULL;
    model->span_forced = NULL;
    model->ctx = hm;
}

void slm_handle_model_raise(const char *fn, const slm_handle_model *hm)
{
    if (hm->interrupted)
        slm_fail(fn, "interrupted", "%s", hm->message);
    if (hm->identifier[0] != '\0')
        mexErrMsgIdAndTxt(hm->identifier, "%s", hm->message);
    slm_fail(fn, hm->bad_output ? "badmodeloutput" : "modelfailed", "%s", hm->message);
}

void slm_handle_obs_init(slm_handle_obs *ho, const char *fn, const mxArray *funs,
                         const mxArray *rows, size_t n, size_t p, size_t n_fun)
{
    memset(ho, 0, sizeof *ho);
    ho->fn = fn;
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
    mxArray *in[6], *res[3] = {NULL, NULL, NULL};
    sl_status st = SL_OK;
    int k, code;
    in[0] = (mxArray *)(uintptr_t)ho->funs;
    in[1] = (mxArray *)(uintptr_t)ho->rows;
    in[2] = mxCreateDoubleScalar(t);
    in[3] = mxCreateUninitNumericMatrix(ho->n, N, mxDOUBLE_CLASS, mxREAL);
    in[4] = mxCreateUninitNumericMatrix(ho->p, N, mxDOUBLE_CLASS, mxREAL);
    memcpy(mxGetDoubles(in[3]), X, ho->n * N * sizeof(double));
    if (ho->p)
        memcpy(mxGetDoubles(in[4]), P, ho->p * N * sizeof(double));
    in[5] = mxCreateString(ho->fn);
    code = call_trapped(3, res, 6, in, "sluice.internal.observe");
    for (k = 2; k < 6; k++)
        mxDestroyArray(in[k]);
    ho->failed = 1;
    if (code == SLM_CALL_INTERRUPTED) {
        ho->interrupted = 1;
        ho->identifier[0] = '\0';
        snprintf(ho->message, sizeof ho->message,
                 "the observation operator was interrupted (Ctrl-C) at t = %g; no result is returned", t);
        return sl_fail(err, SL_EINTERRUPT, "interrupted", "%s", ho->message);
    }
    if (code == SLM_CALL_FAILED) {
        snprintf(ho->message, sizeof ho->message,
                 "the call of the observation operators at t = %g failed outside them "
                 "(an error Octave raised while passing their arguments or result: out of memory?)",
                 t);
        ho->identifier[0] = '\0';
        snprintf(ho->reason, sizeof ho->reason, "operatorfailed");
        return sl_fail(err, SL_EMODEL, "operatorfailed", "%s", ho->message);
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
    slm_fail(fn, ho->reason[0] ? ho->reason : "badoperatoroutput", "%s", ho->message);
}

void slm_poll_init(slm_poll *pl, int mode)
{
    pl->start = pl->last = slm_monotonic_seconds();
    pl->show = mode == 1 || (mode == 2 && slm_stdout_is_terminal());
    pl->shown = 0;
    pl->broken = 0;
    pl->stopped = 0;
    pl->calls = 0;
}

/* The progress line; 1 when a Ctrl-C stopped it. A progress line that
 * cannot be shown (an error in it) is given up, not the run. */
static int call_progress(slm_poll *pl, double fraction, double elapsed,
                         double show)
{
    mxArray *in[3];
    int k, code;
    if (pl->broken)
        return slm_take_interrupt();
    in[0] = mxCreateDoubleScalar(fraction);
    in[1] = mxCreateDoubleScalar(elapsed);
    in[2] = mxCreateDoubleScalar(show);
    code = call_trapped(0, NULL, 3, in, "sluice.internal.progress");
    for (k = 0; k < 3; k++)
        mxDestroyArray(in[k]);
    if (code == SLM_CALL_FAILED)
        pl->broken = 1;
    return code == SLM_CALL_INTERRUPTED;
}

int slm_poll_fn(void *ctx, double fraction)
{
    slm_poll *pl = (slm_poll *)ctx;
    double t, elapsed;
    int show;
    pl->calls++;
    /* a pending Ctrl-C stops the run at once; the clock only paces the
     * progress line */
    if (slm_take_interrupt())
        return pl->stopped = 1;
    t = slm_monotonic_seconds();
    elapsed = t - pl->start;
    if (t - pl->last < 0.1)
        return 0;
    pl->last = t;
    show = pl->show && elapsed > 2.0;
    if (show)
        pl->shown = 1;
    return pl->stopped = call_progress(pl, fraction, elapsed, show ? 1.0 : 0.0);
}

void slm_poll_finish(slm_poll *pl)
{
    if (pl->shown)
        call_progress(pl, 1.0, slm_monotonic_seconds() - pl->start, pl->stopped ? 3.0 : 2.0);
}
