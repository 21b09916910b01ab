/* compose.h - several compiled models run as one: each component keeps
 * its own step, integrator and clock, and links carry a reduction of one
 * component's state over a period to another as an event or a forcing. */
#ifndef SLUICE_COMPOSE_H
#define SLUICE_COMPOSE_H

#include <stddef.h>
#include "sluice/integrate.h"
#include "sluice/model.h"
#include "sluice/status.h"

#ifdef __cplusplus
extern "C" {
#endif

/* The most components and links one composed model holds (the caller's
 * sl_compose carries them in place: nothing is allocated). */
#define SL_COMPOSE_PARTS 8
#define SL_COMPOSE_LINKS 16

/* A component forcing index at or above this is fed by link
 * (index - SL_COMPOSE_FROM_LINK); below it, the composed model's forcing
 * of that index. */
#define SL_COMPOSE_FROM_LINK ((size_t)1 << 20)

/* How a link reduces its source over a period. */
enum { SL_REDUCE_MAX = 0, SL_REDUCE_MEAN = 1, SL_REDUCE_SUM = 2, SL_REDUCE_LAST = 3 };

/* A component: a compiled definition run by its own engine model. */
typedef struct {
    const sl_model_def *def;
    size_t n;                     /* its states (def->n_state, or the user's n) */
    const sl_integrator *method;  /* NULL: the definition's default */
    double dt;                    /* its step in its own time unit (<= 0: the def's) */
    double scale;                 /* composed time units in one of its own (> 0) */
    sl_tolerance tol;
    const size_t *forcing;        /* def->n_forcing entries: where each comes from */
} sl_compose_part;

/* A link: component `to` receives, at the end of every period of `every`
 * composed time units, the reduction of state `from_state` of component
 * `from` over the period (sampled at the end of each of the source's
 * steps), optionally through the rating curve a (x - x0)^b (0 at or below
 * x0). As an event (to_event = 1) it is value `to_index` of the target's
 * jump, applied at the end of the period; with the rating a value of 0 is
 * no event. As a forcing it is held from the end of the period on. */
typedef struct {
    size_t from, from_state;
    size_t to, to_index;
    int to_event;
    int reduce;                   /* SL_REDUCE_* */
    double every;
    int rating;                   /* 1: three parameters a, b, x0 */
} sl_compose_link;

/* The composed model. The caller fills n_parts, part[], n_links, link[]
 * and n_forcing; sl_compose_init fills the rest.
 * State: the components' states in order, then per link its running
 * reduction (acc), the samples in it (count) and the latest value sent
 * (value). Parameters: the components' in order, then a, b, x0 of each
 * link with a rating. The composed step is the shortest component step
 * (in composed units): one call of the model's step advances that much.
 * A component steps at the composed times that are whole multiples of its
 * step (counted from time 0), over its own clock t / scale; a period ends
 * at the whole multiples of `every`. */
typedef struct {
    size_t n_parts, n_links, n_forcing;
    sl_compose_part part[SL_COMPOSE_PARTS];
    sl_compose_link link[SL_COMPOSE_LINKS];
    /* filled by sl_compose_init */
    sl_def_model dm[SL_COMPOSE_PARTS];
    sl_model pm[SL_COMPOSE_PARTS];
    size_t x_off[SL_COMPOSE_PARTS], p_off[SL_COMPOSE_PARTS];
    double ticks[SL_COMPOSE_PARTS];       /* composed steps per own step */
    double link_ticks[SL_COMPOSE_LINKS];  /* composed steps per period */
    size_t link_x[SL_COMPOSE_LINKS];      /* its acc; count, value follow */
    size_t link_p[SL_COMPOSE_LINKS];      /* its a; b, x0 follow */
    size_t n_state, n_param, scratch;
    double dt;
} sl_compose;

/* States a link keeps, and parameters of a link with a rating. */
#define SL_COMPOSE_LINK_STATES 3
#define SL_COMPOSE_RATING_PARAMS 3

/* Check the composition and fill `model` (ctx = c, which must outlive it).
 * Reasons: "badcompose" (counts, indices, a component's engine model),
 * "badscale" (a scale not finite and > 0), "badstep" (a component step
 * that is not a whole number of the composed step), "badperiod" (a period
 * that is not a whole number of its source's and its target's steps),
 * "badtarget" (a target that is no event or forcing of the component),
 * "slowforcing" (the run's forcing feeding a component whose step is
 * longer than the composed step: it would see the forcing of a later
 * time than its step's start). Messages give the numbers. */
sl_status sl_compose_init(sl_model *model, sl_compose *c, sl_error *err);

/* The rating curve a (x - x0)^b for x > x0, else 0; 0 as well where a < 0
 * would make it negative; NaN for a NaN x or x0. */
double sl_compose_rating(double x, double a, double b, double x0);

#ifdef __cplusplus
}
#endif
#endif
