/* integrate.h - time integration of ensembles: Euler, RK4, Dormand-Prince
 * 5(4), discrete maps, and events; and the engine model built from a
 * model definition. */
#ifndef SLUICE_INTEGRATE_H
#define SLUICE_INTEGRATE_H

#include <stddef.h>
#include <stdint.h>
#include "sluice/model.h"
#include "sluice/status.h"

#ifdef __cplusplus
extern "C" {
#endif

/* Right-hand side of a block of `count` members (X n x count, P, U, dX
 * column-major); `first` is the global index of the block's first member. */
typedef sl_status (*sl_block_rhs_fn)(void *ctx, double t, size_t first,
                                     size_t count, const double *X,
                                     const double *P, const double *U,
                                     double *dX, sl_error *err);

/* An integrator as a type object. */
typedef struct {
    const char *name;   /* "euler", "rk4", "dopri5", "discrete" */
    int adaptive;       /* 1: error-controlled steps inside [t, t+h] */
    int order;          /* global order of accuracy (0 for discrete) */
    size_t stages;      /* scratch vectors of n x count doubles it needs */
} sl_integrator;

extern const sl_integrator sl_integrator_euler;
extern const sl_integrator sl_integrator_rk4;
extern const sl_integrator sl_integrator_dopri5;
extern const sl_integrator sl_integrator_discrete;

const sl_integrator *sl_integrator_find(const char *name);

/* The k-th integrator of the table (k = 0, 1, ...), NULL past the end. */
const sl_integrator *sl_integrator_at(size_t k);

/* Tolerances and limits of the adaptive method. */
typedef struct {
    double rtol, atol;  /* error per component <= atol + rtol * |x| */
    double hmin_rel;    /* smallest step, relative to the interval */
    size_t max_steps;   /* attempts allowed for one interval */
} sl_tolerance;

/* The check of tolerances, the one place their rules live: rtol and atol
 * finite, >= 0 and not both zero, hmin_rel in (0, 1), max_steps >= 1.
 * Reason "badtolerance". sl_def_model_init calls it after filling its
 * defaults; a model that drives an integrator itself (the gateways'
 * Octave-function models) calls it on the tolerances it will pass. */
sl_status sl_tolerance_check(const sl_tolerance *tol, sl_error *err);

/* Advance the block X over [t, t+h] with a continuous method (euler and
 * rk4: one step of size h; dopri5: adaptive steps, shared by the block,
 * landing exactly on t+h). work holds stages * n * count doubles. On a
 * failure of the adaptive control (step below hmin, too many attempts, a
 * non-finite stage) the block's states become NaN and SL_OK is returned:
 * the cycle treats it as members that blew up. *nrhs (may be NULL) counts
 * right-hand-side evaluations. */
sl_status sl_integrate_block(const sl_integrator *method, sl_block_rhs_fn f,
                             void *ctx, size_t n, size_t first, size_t count,
                             double t, double h, double *X, const double *P,
                             const double *U, const sl_tolerance *tol,
                             double *work, size_t *nrhs, sl_error *err);

/* The limits of the steps of a run (sl_run_steps):
 * SL_SPAN_STEPS_MAX: one span's count, 2^53, the largest whole number
 *   from which every smaller one is exact in a double (the count and the
 *   step times t + l h are computed in doubles);
 * SL_RUN_STEPS_MAX: all the steps of a run, 2^32 - 1: a step's number keys
 *   its random draws (model noise, forcing perturbations) in 32 bits, so
 *   step 2^32 would repeat the draws of step 0;
 * SL_RUN_WORK_MAX: member-state-steps (steps x members x states), 1e15.
 *   A state of a member advanced by one step costs a compiled model at
 *   least about a nanosecond (the fastest model code measured here, SIMD
 *   over members, reaches a few 1e8 member-state-steps per second and
 *   core), so 1e15 is days of work on a large many-core machine and weeks
 *   on a workstation: common practice for such a guard is to refuse what
 *   cannot finish rather than start a run nobody will see end. Normal
 *   long runs stay far below it (60 years at dt = 0.01 d is 2.2e6 steps;
 *   1e4 members of 40 states then make 8.8e11). */
#define SL_SPAN_STEPS_MAX 9007199254740992.0
#define SL_RUN_STEPS_MAX 4294967295.0
#define SL_RUN_WORK_MAX 1e15

/* The model steps of the span [t, t_end] with step dt, as a run takes
 * them: for a map (discrete != 0) whole steps of dt, the nearest whole
 * number of them; otherwise the fewest equal steps no longer than dt (a
 * relative slack of 1e-9 of a step absorbs rounding). An adaptive method
 * (dopri5) takes this many model steps too; inside each, its own
 * error-controlled steps are bounded by its tolerances' max_steps.
 * *steps gets the count (a whole number, exact), also on failure (then
 * possibly inexact or Inf, for a message). Reasons: "badtimes" (t or t_end
 * not finite, t_end < t), "badstep" (dt not finite and > 0),
 * "toomanysteps" (more than SL_SPAN_STEPS_MAX steps). err may be NULL. */
sl_status sl_span_steps(double t, double t_end, double dt, int discrete,
                        double *steps, sl_error *err);

/* The model steps of a whole run from t0 through the T increasing times
 * (each span counted by sl_span_steps) for `members` members of `states`
 * states, refused when they exceed the limits above: reason
 * "toomanysteps" (SL_EINVAL), with a message giving the count and what to
 * change (a larger dt, a shorter span, fewer output times or members).
 * *total (may be NULL) gets the steps counted (up to the first refusal).
 * The run's own re-runs (resample-move, SMC2) come on top of this count;
 * it is the least work the run does. Also "badtimes" and "badstep" as
 * sl_span_steps. */
sl_status sl_run_steps(double t0, const double *times, size_t T, double dt,
                       int discrete, size_t members, size_t states,
                       double *total, sl_error *err);

/* Events shared by every member (the times), with values per member: the
 * value v of series i at event e for member j is
 *   exact:           base
 *   additive:        base + sd_i z
 *   multiplicative:  base exp(sd_i z - sd_i^2 / 2)
 * with z from stream (seed, j, e, SL_PURPOSE_EVENT). */
typedef struct {
    size_t count;        /* events */
    size_t nv;           /* values per event (the model's n_event) */
    const double *time;  /* count increasing times */
    const double *value; /* nv x count base values */
    const int *noise;    /* nv sl_forcing_noise kinds, or NULL: exact */
    const double *sd;    /* nv standard deviations */
    uint64_t seed;
} sl_events;

/* The values of event e for member j into ev (nv entries). */
void sl_event_values(const sl_events *events, size_t e, size_t member,
                     double *ev);

/* An engine model built from a definition: ctx of the sl_model. */
typedef struct {
    const sl_model_def *def;
    size_t n;
    const sl_integrator *method;
    sl_tolerance tol;
    const sl_events *events; /* may be NULL */
} sl_def_model;

/* Members per block the engine model hands to a block rhs / map_block. */
#define SL_MODEL_BLOCK 64

/* Fill `model` (ctx = dm, which must outlive it) for definition `def` with
 * n states (def->n_state, or the user's n when that is 0), integrator
 * `method` (NULL: the definition's default), step dt (<= 0: the
 * definition's), tolerances `tol` (NULL: rtol 1e-6, atol 1e-9) and
 * events (NULL when the model has none). Events in (t, t_end] of a step
 * are applied as jumps at their times (for a discrete map: after the map,
 * which always advances the whole step). Reasons "badmodel", "badintegrator",
 * "badstep", "badtolerance", "badevents". */
sl_status sl_def_model_init(sl_model *model, sl_def_model *dm,
                            const sl_model_def *def, size_t n,
                            const sl_integrator *method, double dt,
                            const sl_tolerance *tol, const sl_events *events,
                            sl_error *err);

#ifdef __cplusplus
}
#endif
#endif
