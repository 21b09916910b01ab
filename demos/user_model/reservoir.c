/* reservoir.c - a linear reservoir with a sill, written as a user's model:
 * the worked example of the C file that sluice.build_model compiles.
 *
 * The model. Storage S (mm of water over the catchment) is fed by rain P
 * (mm/day) and drains through an outlet whose sill holds back the first
 * s0 mm (a pond below its overflow, a soil below field capacity):
 *
 *     dS/dt = P - k max(S - s0, 0),
 *
 * with k (1/day) the outlet's rate: the outflow is k (S - s0) above the
 * sill and nothing below it.
 *
 * A map rather than a right-hand side. The outflow a gauge reports is a
 * daily mean, not the rate at one instant, so the model's second state Q
 * is the mean outflow over the last step, worked out from the water
 * balance of the step: Q = (S_start + P h - S_end) / h. Such a state
 * cannot be written as a right-hand side (it is not the integral of
 * anything), and it needs no initial value of its own: whatever Q holds at
 * the start is overwritten by the first step. So the model is a step map
 * (integrator "discrete"), and the map is exact for rain held constant
 * over the step, so no integration error enters:
 *   below the sill, S rises at the rate P until it reaches s0;
 *   above it, E = S - s0 obeys dE/dt = P - k E, whose solution over a
 *   time tau is E(tau) = E e^(-k tau) + (P / k)(1 - e^(-k tau)).
 * A model that is an ordinary differential equation would instead give
 * .rhs (dx/dt at one instant) and an integrator "euler", "rk4" or
 * "dopri5"; a file may give both and let the user choose.
 *
 * The contract. The file includes "sluice/model.h", keeps everything
 * static, and defines one function, sluice_user_model(), that returns a
 * pointer to a constant sl_model_def. The functions it names work on ONE
 * member: x has n entries (the states), p n_param (the parameters, in
 * natural units), u n_forcing (this member's forcing values at the start
 * of the step). The engine calls them for many members at once from
 * several threads: they must not keep state between calls (no static
 * variables that change), must not allocate and must not print. A member
 * whose state becomes NaN or Inf is caught by the filter and given zero
 * weight, so NaN is the way to say "this member left the model's domain".
 *
 * Use it from Octave:
 *     spec = sluice.build_model ('reservoir.c');
 *     X = sluice.simulate (spec, [20; 0], [], 0:30, struct ('time', t, 'values', rain));
 */
#include <math.h>
#include <stddef.h>

#include "sluice/model.h"

/* positions of the states, parameters and forcings in x, p and u */
enum { S_, Q_ };
enum { K_, S0_ };
enum { RAIN_ };

/* x <- the state at t + h, from the state at t (the signature of sl_map_fn) */
static void reservoir_map(const sl_model_def *def, size_t n, double t,
                          double h, double *x, const double *p,
                          const double *u)
{
    const double k = p[K_], s0 = p[S0_];
    /* rain cannot be negative, but a perturbed copy of the forcing can be;
     * a NaN (missing rain) is passed on and marks the member */
    const double P = u[RAIN_] < 0 ? 0.0 : u[RAIN_];
    const double start = x[S_];
    double S = start, tau = h;
    (void)def;
    (void)n;
    (void)t;
    if (S < s0) {
        /* filling up to the sill: time P needs to get there */
        const double fill = P > 0 ? (s0 - S) / P : HUGE_VAL;
        if (fill >= tau) {
            S += P * tau;
            tau = 0.0;
        } else {
            S = s0;
            tau -= fill;
        }
    }
    if (tau > 0) {
        /* above the sill: the exact solution; 1 - e^(-k tau) as
         * -expm1(-k tau) keeps its accuracy for small k tau */
        const double E = S - s0, decay = -expm1(-k * tau);
        S = s0 + E + (P / k - E) * decay;
    }
    x[S_] = S;
    x[Q_] = (start + P * h - S) / h; /* the step's water balance */
}

static const char *const state_names[] = {"S", "Q"};
static const char *const param_names[] = {"k", "s0"};
static const char *const forcing_names[] = {"rain"};
static const double x0[] = {20.0, 0.0};          /* mm, mm/day */
static const double p_default[] = {0.1, 5.0};    /* 1/day, mm */
static const double p_lower[] = {0.0, 0.0};      /* k > 0, s0 >= 0 */
static const double p_upper[] = {INFINITY, INFINITY};

static const sl_model_def reservoir = {
    .name = "reservoir",
    .summary = "linear reservoir with a sill: dS/dt = P - k max(S - s0, 0); "
               "Q = mean outflow over the last step",
    .n_state = 2,                 /* 0 would let the user choose n >= n_min */
    .n_param = 2,
    .n_forcing = 1,
    .n_event = 0,
    .state_names = state_names,
    .param_names = param_names,
    .forcing_names = forcing_names,
    .event_names = NULL,
    .x0 = x0,                     /* NULL: zeros */
    .p_default = p_default,       /* NULL: every parameter needs a prior */
    .p_lower = p_lower,           /* NULL: no bounds */
    .p_upper = p_upper,
    .dt = 1.0,                    /* one day */
    .integrator = "discrete",
    .rhs = NULL,
    .map = reservoir_map,
    .jump = NULL,
    .state_internal = NULL,       /* flags of bookkeeping states; NULL: none */
};

/* The one function sluice.build_model looks for. */
const sl_model_def *sluice_user_model(void)
{
    return &reservoir;
}
