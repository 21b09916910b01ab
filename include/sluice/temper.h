/* temper.h - adaptive likelihood tempering inside a filter cycle. */
#ifndef SLUICE_TEMPER_H
#define SLUICE_TEMPER_H

#include <stddef.h>
#include "sluice/status.h"

#ifdef __cplusplus
extern "C" {
#endif

/* Most tempering steps a cycle may take (the option's upper limit). */
#define SL_TEMPER_MAX_STEPS 10000

/* Settings: ess is the target fraction of N in (0, 1] (0: tempering
 * off); max_steps (1 .. SL_TEMPER_MAX_STEPS) caps the steps of a cycle,
 * the last one taking whatever exponent is left. */
typedef struct {
    double ess;
    size_t max_steps;
} sl_temper_opts;

/* Check the settings; reason "badconfig". */
sl_status sl_temper_check(const sl_temper_opts *o, sl_error *err);

/* The conditional ESS of the incremental weights exp(delta * ll_j) given
 * normalised log-weights lw (Zhou, Johansen & Aston 2016), as a fraction
 * of N:  (sum_j W_j v_j)^2 / sum_j W_j v_j^2,  W_j = exp(lw_j). Members
 * with lw = -Inf do not count; ll = -Inf is a zero increment (delta > 0),
 * NaN counts as -Inf. With equal weights it is the ESS of the updated
 * weights over N. 1 for delta = 0; 0 if no member has W > 0 and a finite
 * ll. */
double sl_temper_cess(size_t N, const double *lw, const double *ll, double delta);

/* The next exponent increment: the largest delta in (0, dmax] with
 * cess(delta) >= target, found by bisection (Jasra, Stephens, Doucet &
 * Tsagaris 2011; Beskos, Jasra, Kantas & Thiery 2016), or dmax itself
 * when cess(dmax) >= target. The increment is never zero: when even the
 * smallest bisected step misses the target it returns that step. */
double sl_temper_next(size_t N, const double *lw, const double *ll, double dmax,
                      double target);

#ifdef __cplusplus
}
#endif
#endif
