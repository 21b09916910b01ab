/* stats.h - weighted ensemble summaries: means and exact quantiles. */
#ifndef SLUICE_STATS_H
#define SLUICE_STATS_H

#include <stddef.h>
#include "sluice/status.h"

#ifdef __cplusplus
extern "C" {
#endif

/* Doubles of workspace sl_weighted_summary needs for N members. */
size_t sl_quantile_workspace(size_t N);

/* Weighted mean and quantiles of x[0], x[inc], ..., x[(N-1)*inc] with
 * weights w (>= 0, W = their sum); members of weight 0 are ignored
 * (their x may be non-finite). The quantile of level p is the inverse of
 * the weighted empirical distribution function: the smallest x_i with
 * sum_{x_j <= x_i} w_j >= p * W (for equal weights the order statistic
 * x_(ceil(pN))). Exact, by bucket selection in O(N) per call for spread-out
 * data. probs in [0, 1], any order. Members of positive weight must not be
 * NaN. Writes *mean and q[0], q[qinc], ... (nq levels); NaN for both when no weight is > 0. */
void sl_weighted_summary(size_t N, const double *x, size_t inc,
                         const double *w, size_t nq,
                         const double *probs, double *mean, double *q,
                         size_t qinc, double *work);

#ifdef __cplusplus
}
#endif
#endif
