/* weights.h - importance weights in the log domain. */
#ifndef SLUICE_WEIGHTS_H
#define SLUICE_WEIGHTS_H

#include <stddef.h>
#include "sluice/status.h"

#ifdef __cplusplus
extern "C" {
#endif

typedef struct {
    double log_sum;  /* log sum_j exp(logw_j)                      */
    double log_mean; /* log mean_j exp(logw_j) = log_sum - log N    */
    double ess;      /* 1 / sum w_j^2 of the normalised weights     */
    double entropy;  /* -sum w_j log w_j (0 log 0 = 0)              */
    size_t n_zero;   /* members with logw = -Inf (weight exactly 0) */
} sl_weight_summary;

/* Normalise log-weights: w_j = exp(logw_j - log_sum), robust to underflow
 * (log-weights of -1e5 and lower work). -Inf is allowed (weight 0); NaN
 * and +Inf fail with reason "badlogw" naming the member; if every logw is
 * -Inf it fails with SL_EDEGENERATE, reason "degenerate". `w` may alias
 * `logw`. `summary` may be NULL. */
sl_status sl_weights_normalize(size_t N, const double *logw, double *w,
                               sl_weight_summary *summary, sl_error *err);

/* The same with the exponentials, the checks and the scaling shared
 * among up to `threads` threads (1: this thread alone). The sums stay in
 * member order on one thread: the same bits, the same failures, for any
 * count. One thread when w overlaps logw. */
sl_status sl_weights_normalize_threads(size_t N, const double *logw, double *w,
                                       sl_weight_summary *summary, int threads,
                                       sl_error *err);

/* Check linear weights: finite, >= 0, positive sum. Reasons "badweight"
 * (naming the member) and "zeroweights". On success *sum receives the sum. */
sl_status sl_weights_check(size_t N, const double *w, double *sum,
                           sl_error *err);

/* 1/sum w^2 for weights that sum to one. */
double sl_weights_ess(size_t N, const double *w);

#ifdef __cplusplus
}
#endif
#endif
