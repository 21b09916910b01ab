/* weights.c - importance weights: log-domain normalisation, checks, ESS. */
#include "sluice/weights.h"

#include <math.h>

sl_status sl_weights_normalize(size_t N, const double *logw, double *w,
                               sl_weight_summary *summary, sl_error *err)
{
    double top = -HUGE_VAL, s = 0, s2 = 0, sed = 0, inv, log_s;
    size_t j, n_zero = 0;

    if (N == 0)
        return sl_fail(err, SL_EINVAL, "badsize",
                       "no log-weights given (N = 0)");

    /* Pass 1: the largest log-weight, and the values that are not allowed. */
    for (j = 0; j < N; j++) {
        double v = logw[j];
        if (isnan(v))
            return sl_fail(err, SL_EINVAL, "badlogw",
                           "log-weight %zu of %zu is NaN; expected finite "
                           "values or -Inf", j + 1, N);
        if (v == HUGE_VAL)
            return sl_fail(err, SL_EINVAL, "badlogw",
                           "log-weight %zu of %zu is +Inf; expected finite "
                           "values or -Inf", j + 1, N);
        if (v == -HUGE_VAL)
            n_zero++;
        else if (v > top)
            top = v;
    }
    if (n_zero == N)
        return sl_fail(err, SL_EDEGENERATE, "degenerate",
                       "all %zu log-weights are -Inf: every weight is zero", N);

    /* Pass 2: e_j = exp(d_j), d_j = logw_j - top <= 0, so the largest term
     * is 1 and nothing overflows; terms that underflow are negligible next
     * to it. With s = sum e_j the normalised weights are e_j / s, and
     *   sum w^2    = sum e_j^2 / s^2,
     *   -sum w log w = log s - (1/s) sum e_j d_j,
     * so ESS and entropy need no third pass over logw (which w may alias). */
    for (j = 0; j < N; j++) {
        double d = logw[j] - top, e;
        if (d == -HUGE_VAL) {
            w[j] = 0;
            continue;
        }
        e = exp(d);
        w[j] = e;
        s += e;
        s2 += e * e;
        sed += e * d;
    }
    inv = 1 / s;
    for (j = 0; j < N; j++)
        w[j] *= inv;

    log_s = log(s);
    if (summary != NULL) {
        summary->log_sum = top + log_s;
        summary->log_mean = summary->log_sum - log((double)N);
        summary->ess = s * s / s2;
        summary->entropy = log_s - sed * inv;
        if (summary->entropy < 0) /* rounding when one weight holds it all */
            summary->entropy = 0;
        summary->n_zero = n_zero;
    }
    return SL_OK;
}

sl_status sl_weights_check(size_t N, const double *w, double *sum,
                           sl_error *err)
{
    double s = 0;
    size_t j;
    for (j = 0; j < N; j++) {
        double v = w[j];
        /* !(v >= 0) also catches NaN; v - v is NaN for +-Inf */
        if (!(v >= 0) || v - v != 0) {
            if (isnan(v))
                return sl_fail(err, SL_EINVAL, "badweight",
                               "weight %zu of %zu is NaN; expected finite "
                               "non-negative weights", j + 1, N);
            if (isinf(v))
                return sl_fail(err, SL_EINVAL, "badweight",
                               "weight %zu of %zu is infinite; expected "
                               "finite non-negative weights", j + 1, N);
            return sl_fail(err, SL_EINVAL, "badweight",
                           "weight %zu of %zu is negative (%.17g); expected "
                           "finite non-negative weights", j + 1, N, v);
        }
        s += v;
    }
    if (!(s > 0))
        return sl_fail(err, SL_EDEGENERATE, "zeroweights",
                       "all %zu weights are zero; expected a positive sum", N);
    if (isinf(s))
        return sl_fail(err, SL_EINVAL, "badweight",
                       "the %zu weights sum to more than the largest double; "
                       "scale them down", N);
    if (sum != NULL)
        *sum = s;
    return SL_OK;
}

double sl_weights_ess(size_t N, const double *w)
{
    double s2 = 0;
    size_t j;
    for (j = 0; j < N; j++)
        s2 += w[j] * w[j];
    return 1 / s2;
}
