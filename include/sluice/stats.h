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
 * NaN. Writes *mean (unless mean is NULL) and q[0], q[qinc], ... (nq
 * levels); NaN for both when no weight is > 0. */
void sl_weighted_summary(size_t N, const double *x, size_t inc,
                         const double *w, size_t nq,
                         const double *probs, double *mean, double *q,
                         size_t qinc, double *work);

/* The members of a summing block for N members: every weighted mean and
 * total weight sums the members in consecutive blocks of this many
 * (member order inside a block, Neumaier's compensated sum), then the
 * blocks' sums in block order (compensated again). At least 4096 and a
 * multiple of 64, and at most 32 blocks for any N: the blocks depend on N
 * alone, so threads can sum blocks apart and every thread count gives
 * the same bits. Up to 4096 members this is the plain compensated sum in
 * member order. */
size_t sl_mean_block(size_t N);
#define SL_MEAN_BLOCKS_MAX 32 /* summing blocks, at most */

/* The weighted means of rows rows[0] - base, ..., rows[m-1] - base
 * (rows NULL: rows 0 .. m-1) of x (ld x N, column-major, a member per
 * column) with weights w, into mean[rows[i] - base]: each bit for bit the mean
 * sl_weighted_summary gives for that row (the same sums in the same
 * order), but read member by member, one pass over the members for every
 * 64 rows, the blocks of sl_mean_block shared among up to `threads`
 * threads (1: this thread alone; the bits do not depend on it). mean may
 * be NULL in sl_weighted_summary to leave it to this. */
void sl_weighted_means(size_t N, const double *x, size_t ld, size_t m,
                       const size_t *rows, size_t base, const double *w,
                       double *mean, int threads);

#ifdef __cplusplus
}
#endif
#endif
