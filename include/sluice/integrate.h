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
