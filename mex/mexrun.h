/* mexrun.h - services for gateways that run the cycle: the adapter for
 * models written as Octave functions, and the progress / interrupt poll. */
#ifndef SLUICE_MEXRUN_H
#define SLUICE_MEXRUN_H

#include "mex.h"
#include "sluice/integrate.h"
#include "sluice/model.h"

/* A model whose step map is an Octave function X = f(t, X, P, U, dt),
 * called once per step with the whole ensemble through the trampoline
 * sluice.internal.guarded_call, so that the user's error comes back as a
 * status and not as a jump through the core's frames. */
typedef struct {
    const mxArray *fun;
    size_t n, p, q;
    const sl_integrator *method; /* NULL: fun is a step map */
    sl_tolerance tol;
    char message[900];
    char identifier[128];
    int interrupted;
    int bad_output;      /* the result had the wrong size or class */
} slm_handle_model;

/* Fill `model` to call `fun` (which must outlive the run): a step map
 * X = fun(t, X, P, U, dt) when `method` is NULL or the discrete
 * integrator, else a right-hand side dX = fun(t, X, P, U) integrated by
 * `method` over the whole ensemble (N members: the work it needs is sized
 * for them). */
void slm_handle_model_init(sl_model *model, slm_handle_model *hm,
                           const mxArray *fun, size_t n, size_t p, size_t q,
                           size_t N, double dt, const sl_integrator *method,
                           const sl_tolerance *tol);

/* Raise the failure the handle model recorded (the user's own identifier
 * and message, sluice:<fn>:badmodeloutput, sluice:<fn>:modelfailed, or
 * sluice:<fn>:interrupted).
 * Never returns. */
void slm_handle_model_raise(const char *fn, const slm_handle_model *hm)
#if defined(__GNUC__)
    __attribute__((noreturn))
#endif
    ;

/* Observation operators written as Octave functions Y = h(t, X, P): a
 * cell of handles, handle i giving rows(i) derived quantities of every
 * member (stacked in order into n_fun rows), called through
 * sluice.internal.observe, which traps the user's error and checks sizes. */
typedef struct {
    const char *fn;    /* the caller, passed to sluice.internal.observe */
    const mxArray *funs, *rows;
    size_t n, p, n_fun;
    char message[900];
    char identifier[128];
    char reason[32];   /* of sluice:<fn>:<reason> without an identifier */
    int interrupted, failed;
} slm_handle_obs;

void slm_handle_obs_init(slm_handle_obs *ho, const char *fn, const mxArray *funs,
                         const mxArray *rows, size_t n, size_t p, size_t n_fun);

/* The sl_obs_fn of the cycle; ctx is the slm_handle_obs. */
sl_status slm_handle_obs_fn(void *ctx, double t, size_t N, const double *X,
                            const double *P, double *Y, sl_error *err);

/* Raise the failure the operator recorded (the user's identifier and
 * message, sluice:<fn>:badoperatoroutput or sluice:<fn>:interrupted).
 * Never returns. */
void slm_handle_obs_raise(const char *fn, const slm_handle_obs *ho)
#if defined(__GNUC__)
    __attribute__((noreturn))
#endif
    ;

/* Ctrl-C check and progress report. Every call takes a pending Ctrl-C
 * (slm_take_interrupt) and then returns non-zero; at most every 0.1 s it
 * also calls sluice.internal.progress(fraction, elapsed, show), and an
 * interrupt there stops the run too
 * (an error there only ends the progress line). `mode`: 0 never show, 1
 * always (after 2 s), 2 only when stdout is a terminal. `calls` counts
 * the polls (for tests of how often a run looks). */
typedef struct {
    double start, last;
    int show, shown, broken, stopped;
    double calls;
} slm_poll;

void slm_poll_init(slm_poll *pl, int mode);
int slm_poll_fn(void *ctx, double fraction);
void slm_poll_finish(slm_poll *pl);

#endif
