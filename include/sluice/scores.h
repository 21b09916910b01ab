/* scores.h - verification: CRPS, rank of the observation, hydrograph skill. */
#ifndef SLUICE_SCORES_H
#define SLUICE_SCORES_H

#include <stddef.h>
#include <stdint.h>
#include "sluice/status.h"

#ifdef __cplusplus
extern "C" {
#endif

/* Doubles of workspace sl_scores_crps needs for N members. */
size_t sl_scores_crps_workspace(size_t N);

/* Continuous ranked probability score of each of m rows of an ensemble:
 * row i has members X[i + j*ldx], j = 0..N-1 (column-major, ldx >= m), and
 * observation y[i]. The score is the CRPS of the empirical distribution of
 * the members,
 *     crps_i = (1/N) sum_j |x_j - y| - (1/(2 N^2)) sum_{j,k} |x_j - x_k|,
 * the second sum taken in O(N log N) from the sorted members through
 *     sum_{j<k} (x_(k) - x_(j)) = sum_k (2k - N - 1) x_(k)   (k 1-based).
 * For members drawn from F its expectation exceeds the CRPS of F by
 * E|X - X'| / (2N). A NaN y[i] gives crps[i] = NaN. work holds at least
 * sl_scores_crps_workspace(N) doubles. Fails (SL_EINVAL) when N = 0,
 * ldx < m, or a member is not finite. */
sl_status sl_scores_crps(size_t m, size_t N, const double *X, size_t ldx,
                         const double *y, double *crps, double *work,
                         sl_error *err);

/* Doubles of workspace sl_scores_crps_weighted needs for N members. */
size_t sl_scores_crps_weighted_workspace(size_t N);

/* CRPS of weighted ensembles: K blocks, block k holding m rows of N
 * members X[i + j*m + k*m*N] (an m x N x K array, column-major), weights
 * w[j + k*N] (normalised within the block) and observations y[i + k*m].
 * The score is that of the weighted empirical distribution,
 *     crps = sum_j w_j |x_j - y| - (1/2) sum_{j,k} w_j w_k |x_j - x_k|,
 * the double sum in O(N log N) from the members sorted with their weights:
 *     sum_{j<k} w_j w_k (x_(k) - x_(j)) = sum_i w_i x_(i) (2 W_i - w_i - 1),
 * W_i the cumulative weight. With equal weights it is sl_scores_crps. A
 * member of weight 0 has no part in it (and may be non-finite). A NaN
 * y gives NaN. Results go to crps[i + k*m]. work holds at least
 * sl_scores_crps_weighted_workspace(N) doubles. Fails (SL_EINVAL) when
 * N = 0 ("empty"), a member of positive weight is not finite
 * ("nonfinite"), or a weight is
 * negative or not finite or a block's weights do not have a finite positive
 * sum ("badweights"). */
sl_status sl_scores_crps_weighted(size_t m, size_t N, size_t K,
                                  const double *X, const double *w,
                                  const double *y, double *crps, double *work,
                                  sl_error *err);

/* Weighted mean and variance of each row of K weighted ensembles, laid
 * out as for sl_scores_crps_weighted (X m x N x K, w N x K): with the
 * block's weights normalised, v_j = w_j / sum w,
 *     mean = sum_j v_j x_j,   var = sum_j v_j (x_j - mean)^2
 * (the variance of the weighted empirical distribution, no small-sample
 * correction), in two passes. Results go to mean[i + k*m], var[i + k*m].
 * A member of weight 0 has no part (and may be non-finite). Fails
 * (SL_EINVAL) as sl_scores_crps_weighted does: N = 0 ("empty"), a member
 * of positive weight not finite ("nonfinite"), bad weights
 * ("badweights"). */
sl_status sl_scores_weighted_moments(size_t m, size_t N, size_t K,
                                     const double *X, const double *w,
                                     double *mean, double *var, sl_error *err);

/* Rank of the observation among the members of each row, 1 .. N+1:
 * rank[i] = 1 + #{x_j < y[i]} + u, where u is uniform on 0 .. #{x_j = y[i]}
 * (ties broken at random). u is drawn from the stream
 * (seed, i mod 2^32, i / 2^32, SL_PURPOSE_USER), so the ranks depend only
 * on the seed and the row, never on m or on the order of the calls. A NaN
 * y[i] gives rank[i] = NaN. Fails (SL_EINVAL) when N = 0, ldx < m, or a
 * member is not finite. */
sl_status sl_scores_rank(size_t m, size_t N, const double *X, size_t ldx,
                         const double *y, uint64_t seed, double *rank,
                         sl_error *err);

/* Skill of a simulated series against an observed one (hydrograph
 * skill): the Nash-Sutcliffe efficiency and the Kling-Gupta efficiency
 * with its three parts. */
typedef struct {
    double nse;   /* 1 - sum (s - o)^2 / sum (o - mean o)^2 */
    double kge;   /* 1 - sqrt ((r - 1)^2 + (alpha - 1)^2 + (beta - 1)^2) */
    double r;     /* Pearson correlation of s and o */
    double alpha; /* sd(s) / sd(o) */
    double beta;  /* mean(s) / mean(o) */
    size_t count; /* pairs used */
} sl_skill;

/* Skill of sim[i*inc] against obs[i*inc], i = 0..n-1. A pair whose
 * observation is NaN (missing) is left out; count says how many were
 * used. NSE after Nash & Sutcliffe (1970), J. Hydrol. 10, 282-290;
 * KGE after Gupta, Kling, Yilmaz & Martinez (2009), J. Hydrol. 377,
 * 80-91 (eq. 9, with alpha and beta of their eq. 10-11: ratios of the
 * standard deviations and of the means). Means and sums of squares are
 * formed in two passes. What is undefined is NaN, not an error: with
 * fewer than 2 pairs everything; with constant observations NSE, r,
 * alpha and KGE; with a constant simulation r and KGE; with an
 * observed mean of 0 beta and KGE. Fails (SL_EINVAL, reason
 * "nonfinite") when an observation is infinite or a simulated value
 * paired with an observation is not finite; inc must be >= 1. */
sl_status sl_scores_skill(size_t n, const double *sim, const double *obs,
                          size_t inc, sl_skill *out, sl_error *err);

#ifdef __cplusplus
}
#endif
#endif
