/* temper.c - adaptive likelihood tempering: exponent steps by bisection. */
#include "sluice/temper.h"

#include <math.h>

/* Bisection steps on the increment: 2^-60 of the remaining exponent. */
#define BISECT_ITERS 60

sl_status sl_temper_check(const sl_temper_opts *o, sl_error *err)
{
    if (!(o->ess >= 0.0 && o->ess <= 1.0))
        return sl_fail(err, SL_EINVAL, "badconfig",
                       "the tempering ESS target must lie in (0, 1] (0: off), got %g",
                       o->ess);
    if (o->ess > 0 && (o->max_steps < 1 || o->max_steps > SL_TEMPER_MAX_STEPS))
        return sl_fail(err, SL_EINVAL, "badconfig",
                       "the most tempering steps per cycle must be 1 to %d, got %lu",
                       SL_TEMPER_MAX_STEPS, (unsigned long)o->max_steps);
    return SL_OK;
}

double sl_temper_cess(size_t N, const double *lw, const double *ll, double delta)
{
    double top = -HUGE_VAL, s1 = 0.0, s2 = 0.0;
    size_t j;
    if (!(delta > 0))
        return 1.0;
    /* the largest exponent, so exp() below never overflows */
    for (j = 0; j < N; j++)
        if (lw[j] > -HUGE_VAL && ll[j] > -HUGE_VAL && delta * ll[j] > top)
            top = delta * ll[j];
    if (!(top > -HUGE_VAL))
        return 0.0;
    for (j = 0; j < N; j++) {
        double v;
        if (!(lw[j] > -HUGE_VAL) || !(ll[j] > -HUGE_VAL))
            continue;
        v = exp(delta * ll[j] - top);
        s1 += exp(lw[j]) * v;
        s2 += exp(lw[j]) * v * v;
    }
    return s2 > 0 ? s1 * s1 / s2 : 0.0;
}

double sl_temper_next(size_t N, const double *lw, const double *ll, double dmax,
                      double target)
{
    double lo = 0.0, hi = dmax;
    int it;
    if (sl_temper_cess(N, lw, ll, dmax) >= target)
        return dmax;
    /* cess(lo) >= target > cess(hi) throughout */
    for (it = 0; it < BISECT_ITERS; it++) {
        double mid = 0.5 * (lo + hi);
        if (!(mid > lo && mid < hi))
            break;
        if (sl_temper_cess(N, lw, ll, mid) >= target)
            lo = mid;
        else
            hi = mid;
    }
    return lo > 0 ? lo : hi;
}
