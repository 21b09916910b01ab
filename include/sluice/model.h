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
 * P[0..p*count), U[0..q*count)) by one step from t to t_end. The driver
 * passes as t_end exactly the t of the next step, so events and other
 * things owned by the interval (t, t_end] are never lost or counted twice
 * to rounding. `step` is the
 * run's global step counter and `seed` its seed, for models whose own
 * dynamics are random (they draw from stream (seed, member, step,
 * SL_PURPOSE_MODEL_NOISE)). `work` holds model->work doubles of scratch,
 * private to the calling thread. Must not allocate; must be safe to call on
 * disjoint member blocks from several threads at once when the model says
 * it is (thread_safe = 1). */
typedef sl_status (*sl_step_fn)(const sl_model *model, double t, double t_end,
                                size_t first, size_t count, double *X,
                                const double *P, const double *U,
                                uint64_t seed, uint32_t step, double *work,
                                sl_error *err);

/* Optional, for a model without forcing: the same bits as the step calls
 * of steps l0 .. l1-1 of an interval of nsteps steps from t0 to t_end
 * (step l from t0 + l h to t0 + (l + 1) h, the last, l = nsteps - 1, to
 * t_end, under counter s0 + l), for members first .. first+count-1. A
 * model that keeps a block in its own layout through several steps does
 * its conversions once. On a failure, *failed is the step l that failed. */
typedef sl_status (*sl_span_fn)(const sl_model *model, double t0, double h,
                                double t_end, size_t nsteps, size_t l0,
                                size_t l1, size_t first, size_t count,
                                double *X, const double *P, uint64_t seed,
                                uint32_t s0, double *work, size_t *failed,
                                sl_error *err);

/* Fills the forcing values of members i0 .. i0+count-1 of a span (their
 * columns of the span's U) for step l of its interval; called for each
 * block and step in the order the span takes them. */
typedef void (*sl_forcing_fill_fn)(void *ctx, size_t l, size_t i0, size_t count);

/* Optional, for a model with forcing: as sl_span_fn, the forcing of each
 * step asked of `fill` (U is q x count, the members' columns) just
 * before the step uses it, member block by member block. */
typedef sl_status (*sl_span_forced_fn)(const sl_model *model, double t0, double h,
                                       double t_end, size_t nsteps, size_t l0,
                                       size_t l1, size_t first, size_t count,
                                       double *X, const double *P, double *U,
                                       sl_forcing_fill_fn fill, void *fill_ctx,
                                       uint64_t seed, uint32_t s0, double *work,
                                       size_t *failed, sl_error *err);

struct sl_model {
    const char *name;
    size_t n_state, n_param, n_forcing;
    double dt;        /* the model's step */
    int discrete;     /* 1: a map that only advances whole steps of dt */
    int thread_safe;  /* 1: step may run on member blocks in parallel */
    int member_draws; /* 1: step draws from streams keyed by the member
                       * index `first + i` (model noise, perturbed events),
                       * so re-running one member's path must pass its own
                       * index; 0: the index is not used */
    size_t work;      /* doubles of per-thread scratch the step needs */
    sl_step_fn step;
    sl_span_fn span;  /* optional (n_forcing = 0 only), or NULL */
    sl_span_forced_fn span_forced; /* optional (n_forcing > 0), or NULL */
    void *ctx;        /* the model's own data (matrices, a callback, ...) */
};

/* ------------------------------------------------------------------------
 * Model definitions: what a built-in or a user's compiled model supplies.
 * The engine wraps a definition and an integrator into an sl_model.
 * Every function works on one member: x has n entries, p n_param, u
 * n_forcing (the member's forcing values at the start of the step), ev
 * n_event (the member's values of one event). They must not allocate and
 * must be safe to call from several threads at once.
 * ---------------------------------------------------------------------- */

typedef struct sl_model_def sl_model_def;

/* dx/dt = f(t, x, p, u) */
typedef void (*sl_rhs_fn)(const sl_model_def *def, size_t n, double t,
                          const double *x, const double *p, const double *u,
                          double *dxdt);
/* x <- g(t, dt, x, p, u): a discrete step map */
typedef void (*sl_map_fn)(const sl_model_def *def, size_t n, double t,
                          double dt, double *x, const double *p,
                          const double *u);
/* x <- J(t, x, p, ev): the jump applied once at an event time */
typedef void (*sl_jump_fn)(const sl_model_def *def, size_t n, double t,
                           double *x, const double *p, const double *ev);
/* Optional fast path of a discrete map: advance `count` members at once
 * (X n x count, P n_param x count, U n_forcing x count, column-major);
 * `work` holds block_work(n, count) doubles. */
typedef void (*sl_map_block_fn)(const sl_model_def *def, size_t n,
                                size_t count, double t, double dt, double *X,
                                const double *P, const double *U,
                                double *work);
/* Optional: a member's constants, n_const values that depend on its
 * parameters p alone (GR4J's unit-hydrograph ordinates), so that a run
 * of steps makes them once. */
typedef void (*sl_constants_fn)(const sl_model_def *def, const double *p, double *c);
/* map_block given the members' constants (C n_const x count, made by
 * `constants`): the same bits as map_block. */
typedef void (*sl_map_const_block_fn)(const sl_model_def *def, size_t n,
                                      size_t count, double t, double dt, double *X,
                                      const double *P, const double *C,
                                      const double *U, double *work);

/* Optional fast path of rhs: the derivatives of `count` members at once,
 * in structure-of-arrays layout: state i of member j is X[i * count + j]
 * (dX likewise), parameter k is P[k * count + j], forcing k is
 * U[k * count + j]. Must give the same bits as rhs on every member (the
 * engine uses it for the fixed-step methods and for the adaptive method's
 * first attempt of a piece, which all members make together; a member
 * that needs more steps goes on through rhs). */
typedef void (*sl_rhs_block_fn)(const sl_model_def *def, size_t n,
                                size_t count, double t, const double *X,
                                const double *P, const double *U, double *dX);

struct sl_model_def {
    const char *name;
    const char *summary;          /* one line: what the model is */
    size_t n_state;               /* 0: the user chooses n (>= n_min) */
    size_t n_min;
    size_t n_param, n_forcing, n_event;
    const char *const *state_names;   /* NULL when n varies: x1, x2, ... */
    const char *const *param_names;
    const char *const *forcing_names;
    const char *const *event_names;
    const double *x0;             /* default initial state, NULL = zeros */
    const double *p_default;      /* n_param defaults */
    const double *p_lower;        /* n_param bounds (-Inf/Inf: none) */
    const double *p_upper;
    double dt;                    /* default step */
    const char *integrator;       /* default integrator name */
    sl_rhs_fn rhs;                /* continuous dynamics, or NULL */
    sl_map_fn map;                /* discrete map, or NULL */
    sl_jump_fn jump;              /* event map, or NULL (n_event = 0) */
    sl_map_block_fn map_block;    /* optional fast path of map */
    size_t (*block_work)(size_t n, size_t count);
    /* n_state flags, 1 for a state that is the model's own bookkeeping
     * (GR4J's unit-hydrograph queues): carried and assimilated like the
     * others, but not drawn or reported unless asked for; NULL: none */
    const unsigned char *state_internal;
    sl_rhs_block_fn rhs_block;    /* optional fast path of rhs, or NULL */
    /* optional, together, for a discrete map (map) with forcing: n_const
     * constants a member (0: none), `constants` and `map_const_block`;
     * the engine then takes blocks of members through several steps with
     * their constants made once (sl_model.span_forced) */
    size_t n_const;
    sl_constants_fn constants;
    sl_map_const_block_fn map_const_block;
};

/* What a user's model file (built by sluice.build_model) defines: its
 * definition, which must stay valid for the life of the program. */
const sl_model_def *sluice_user_model(void);

/* The built-in definition with this name ("lorenz63", "lorenz96", "flood",
 * "gr4j", "river_town"), or NULL. */
const sl_model_def *sl_model_def_find(const char *name);

/* Number of built-in definitions, and the k-th (for listings). */
size_t sl_model_def_count(void);
const sl_model_def *sl_model_def_get(size_t k);

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
