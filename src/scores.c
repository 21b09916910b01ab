/* scores.c - verification: CRPS, rank of the observation, hydrograph skill. */
#include "sluice/scores.h"
#include "sluice/rng.h"

#include <math.h>
#include <stdlib.h>

/* In-place sort of finite doubles: quicksort with a median-of-three pivot,
 * insertion sort for short runs and heapsort once the depth limit is hit,
 * so the worst case stays O(n log n) and nothing is allocated. */
static void insertion_sort(double *a, size_t n)
{
    size_t i, j;
    for (i = 1; i < n; i++) {
        double v = a[i];
        for (j = i; j > 0 && a[j - 1] > v; j--)
            a[j] = a[j - 1];
        a[j] = v;
    }
}

static void sift_down(double *a, size_t root, size_t n)
{
    double v = a[root];
    size_t child;
    while ((child = 2 * root + 1) < n) {
        if (child + 1 < n && a[child + 1] > a[child])
            child++;
        if (!(a[child] > v))
            break;
        a[root] = a[child];
        root = child;
    }
    a[root] = v;
}

static void heap_sort(double *a, size_t n)
{
    size_t i;
    if (n < 2)
        return;
    for (i = n / 2; i-- > 0;)
        sift_down(a, i, n);
    for (i = n - 1; i > 0; i--) {
        double t = a[0];
        a[0] = a[i];
        a[i] = t;
        sift_down(a, 0, i);
    }
}

static void swap2(double *a, size_t i, size_t j)
{
    double t = a[i];
    a[i] = a[j];
    a[j] = t;
}

static void sort_doubles(double *a, size_t n)
{
    unsigned depth = 0;
    size_t k;
    for (k = n; k > 1; k >>= 1)
        depth += 2;
    while (n > 16) {
        size_t mid = n / 2, i, j;
        double p;
        if (depth == 0) {
            heap_sort(a, n);
            return;
        }
        depth--;
        /* median of a[0], a[mid], a[n-1] into a[mid] */
        if (a[mid] < a[0]) swap2(a, mid, 0);
        if (a[n - 1] < a[0]) swap2(a, n - 1, 0);
        if (a[n - 1] < a[mid]) swap2(a, n - 1, mid);
        p = a[mid];
        /* Hoare partition: a[0..j] <= p <= a[j+1..n-1] */
        i = 0;
        j = n - 1;
        for (;;) {
            while (a[i] < p) i++;
            while (a[j] > p) j--;
            if (i >= j)
                break;
            swap2(a, i, j);
            i++;
            j--;
        }
        /* recurse into the smaller part, loop on the larger */
        if (j + 1 < n - (j + 1)) {
            sort_doubles(a, j + 1);
            a += j + 1;
            n -= j + 1;
        } else {
            sort_doubles(a + j + 1, n - (j + 1));
            n = j + 1;
        }
    }
    insertion_sort(a, n);
}

static sl_status check_shape(size_t m, size_t N, size_t ldx, const char *what,
                             sl_error *err)
{
    if (N == 0)
        return sl_fail(err, SL_EINVAL, "empty", "%s: the ensemble has no members", what);
    if (m > 0 && ldx < m)
        return sl_fail(err, SL_EINVAL, "badsize",
                       "%s: leading dimension %lu is below the %lu rows", what,
                       (unsigned long)ldx, (unsigned long)m);
    return SL_OK;
}

size_t sl_scores_crps_workspace(size_t N)
{
    return N;
}

sl_status sl_scores_crps(size_t m, size_t N, const double *X, size_t ldx,
                         const double *y, double *crps, double *work,
                         sl_error *err)
{
    size_t i, j;
    sl_status st = check_shape(m, N, ldx, "crps", err);
    if (st != SL_OK)
        return st;
    for (i = 0; i < m; i++) {
        double yi = y[i], shift, abs_obs = 0, spread = 0, dN = (double)N;
        for (j = 0; j < N; j++) {
            double v = X[i + j * ldx];
            if (!isfinite(v))
                return sl_fail(err, SL_EINVAL, "nonfinite",
                               "crps: member %lu of row %lu is not finite",
                               (unsigned long)(j + 1), (unsigned long)(i + 1));
            work[j] = v;
        }
        if (isnan(yi)) {
            crps[i] = NAN;
            continue;
        }
        sort_doubles(work, N);
        /* the coefficients (2k - N - 1) sum to zero, so shifting every
         * member by the median leaves the sum unchanged and keeps the
         * terms small when the members sit far from zero */
        shift = work[(N - 1) / 2];
        for (j = 0; j < N; j++) {
            double v = work[j];
            abs_obs += fabs(v - yi);
            spread += (2.0 * (double)j + 1.0 - dN) * (v - shift);
        }
        crps[i] = abs_obs / dN - spread / (dN * dN);
    }
    return SL_OK;
}

/* A member and its weight, sorted together by the member's value. */
typedef struct {
    double x, w;
} weighted_member;

static int by_value(const void *a, const void *b)
{
    const double x = ((const weighted_member *)a)->x;
    const double y = ((const weighted_member *)b)->x;
    return (x > y) - (x < y);
}

/* The weights of block k checked: each finite and >= 0, their sum finite
 * and positive (*total). */
static sl_status block_weights(const char *fn, const double *wk, size_t N, size_t k,
                               double *total, sl_error *err)
{
    size_t j;
    double t = 0;
    for (j = 0; j < N; j++) {
        if (!(isfinite(wk[j]) && wk[j] >= 0))
            return sl_fail(err, SL_EINVAL, "badweights",
                           "%s: weight %lu of block %lu must be finite "
                           "and >= 0, got %g",
                           fn, (unsigned long)(j + 1), (unsigned long)(k + 1), wk[j]);
        t += wk[j];
    }
    if (!(t > 0) || !isfinite(t))
        return sl_fail(err, SL_EINVAL, "badweights",
                       "%s: the weights of block %lu must have a finite "
                       "positive sum, got %g",
                       fn, (unsigned long)(k + 1), t);
    *total = t;
    return SL_OK;
}

sl_status sl_scores_weighted_moments(size_t m, size_t N, size_t K,
                                     const double *X, const double *w,
                                     double *mean, double *var, sl_error *err)
{
    size_t i, j, k;
    if (N == 0)
        return sl_fail(err, SL_EINVAL, "empty", "moments: no members");
    if (m > 0 && K > 0 && (X == NULL || w == NULL || mean == NULL || var == NULL))
        return sl_fail(err, SL_EINVAL, "badarg", "moments: no members, weights or output");
    for (k = 0; k < K; k++) {
        const double *wk = w + k * N;
        double total;
        sl_status st = block_weights("moments", wk, N, k, &total, err);
        if (st != SL_OK)
            return st;
        for (i = 0; i < m; i++) {
            const double *x = X + k * m * N + i;
            double mu = 0, v = 0;
            for (j = 0; j < N; j++) {
                if (wk[j] == 0)
                    continue; /* no part in either sum */
                if (!isfinite(x[j * m]))
                    return sl_fail(err, SL_EINVAL, "nonfinite",
                                   "moments: member %lu of row %lu of block %lu is not finite",
                                   (unsigned long)(j + 1), (unsigned long)(i + 1),
                                   (unsigned long)(k + 1));
                mu += (wk[j] / total) * x[j * m];
            }
            /* two passes: the squares of deviations from the mean, never
             * the difference of two large sums */
            for (j = 0; j < N; j++) {
                double d;
                if (wk[j] == 0)
                    continue;
                d = x[j * m] - mu;
                v += (wk[j] / total) * (d * d);
            }
            mean[k * m + i] = mu;
            var[k * m + i] = v;
        }
    }
    return SL_OK;
}

size_t sl_scores_crps_weighted_workspace(size_t N)
{
    return 2 * N;
}

sl_status sl_scores_crps_weighted(size_t m, size_t N, size_t K,
                                  const double *X, const double *w,
                                  const double *y, double *crps, double *work,
                                  sl_error *err)
{
    weighted_member *s = (weighted_member *)work;
    size_t i, j, k;
    sl_status st = check_shape(m, N, m, "crps", err);
    if (st != SL_OK)
        return st;
    for (k = 0; k < K; k++) {
        const double *wk = w + k * N;
        double total;
        st = block_weights("crps", wk, N, k, &total, err);
        if (st != SL_OK)
            return st;
        for (i = 0; i < m; i++) {
            const double *x = X + k * m * N + i;
            const double yi = y[k * m + i];
            double cum = 0, abs_obs = 0, spread = 0, shift;
            size_t n = 0;
            for (j = 0; j < N; j++) {
                if (wk[j] == 0)
                    continue; /* no part in either sum */
                if (!isfinite(x[j * m]))
                    return sl_fail(err, SL_EINVAL, "nonfinite",
                                   "crps: member %lu of row %lu of block %lu is not finite",
                                   (unsigned long)(j + 1), (unsigned long)(i + 1),
                                   (unsigned long)(k + 1));
                s[n].x = x[j * m];
                s[n].w = wk[j] / total;
                n++;
            }
            if (isnan(yi)) {
                crps[k * m + i] = NAN;
                continue;
            }
            qsort(s, n, sizeof *s, by_value);
            /* E_w|X - y| - (1/2) sum_jk w_j w_k |x_j - x_k|, the latter
             * for sorted members sum_i w_i x_i (2 W_i - w_i - 1) with
             * W_i = w_1 + ... + w_i; those coefficients sum to zero, so
             * members shifted by the middle one give the same sum with
             * smaller terms */
            shift = s[(n - 1) / 2].x;
            for (j = 0; j < n; j++) {
                cum += s[j].w;
                abs_obs += s[j].w * fabs(s[j].x - yi);
                spread += s[j].w * (s[j].x - shift) * (2 * cum - s[j].w - 1);
            }
            crps[k * m + i] = abs_obs - spread;
        }
    }
    return SL_OK;
}

sl_status sl_scores_rank(size_t m, size_t N, const double *X, size_t ldx,
                         const double *y, uint64_t seed, double *rank,
                         sl_error *err)
{
    size_t i, j;
    sl_status st = check_shape(m, N, ldx, "rank", err);
    if (st != SL_OK)
        return st;
    for (i = 0; i < m; i++) {
        double yi = y[i];
        size_t below = 0, equal = 0;
        for (j = 0; j < N; j++) {
            double v = X[i + j * ldx];
            if (!isfinite(v))
                return sl_fail(err, SL_EINVAL, "nonfinite",
                               "rank: member %lu of row %lu is not finite",
                               (unsigned long)(j + 1), (unsigned long)(i + 1));
            below += v < yi;
            equal += v == yi;
        }
        if (isnan(yi)) {
            rank[i] = NAN;
            continue;
        }
        if (equal > 0) {
            sl_stream s;
            double u;
            size_t extra;
            sl_stream_init(&s, seed, (uint32_t)(i & 0xffffffffu),
                           (uint32_t)((uint64_t)i >> 32), SL_PURPOSE_USER);
            u = sl_stream_uniform(&s);
            extra = (size_t)(u * (double)(equal + 1));
            if (extra > equal)
                extra = equal;
            below += extra;
        }
        rank[i] = (double)(below + 1);
    }
    return SL_OK;
}

sl_status sl_scores_skill(size_t n, const double *sim, const double *obs,
                          size_t inc, sl_skill *out, sl_error *err)
{
    size_t i, c = 0;
    double ms = 0, mo = 0, sss = 0, soo = 0, sso = 0, see = 0;
    double smin = INFINITY, smax = -INFINITY, omin = INFINITY, omax = -INFINITY;
    out->nse = out->kge = out->r = out->alpha = out->beta = NAN;
    out->count = 0;
    if (inc == 0)
        return sl_fail(err, SL_EINVAL, "badsize", "skill: the stride must be >= 1");
    /* first pass: check, count and the two means */
    for (i = 0; i < n; i++) {
        double o = obs[i * inc], s = sim[i * inc];
        if (isnan(o))
            continue;
        if (!isfinite(o))
            return sl_fail(err, SL_EINVAL, "nonfinite",
                           "skill: observation %zu is infinite", i + 1);
        if (!isfinite(s))
            return sl_fail(err, SL_EINVAL, "nonfinite",
                           "skill: the simulated value paired with observation %zu is not finite (%g)",
                           i + 1, s);
        c++;
        ms += s;
        mo += o;
        smin = s < smin ? s : smin;
        smax = s > smax ? s : smax;
        omin = o < omin ? o : omin;
        omax = o > omax ? o : omax;
    }
    out->count = c;
    if (c < 2)
        return SL_OK;
    ms /= (double)c;
    mo /= (double)c;
    /* second pass: centred sums of squares and products, and the
     * squared errors; a constant series has exactly zero spread (its
     * rounded mean may differ from its value in the last bit) */
    for (i = 0; i < n; i++) {
        double o = obs[i * inc], s = sim[i * inc];
        double ds, dq;
        if (isnan(o))
            continue;
        ds = smin == smax ? 0 : s - ms;
        dq = omin == omax ? 0 : o - mo;
        sss += ds * ds;
        soo += dq * dq;
        sso += ds * dq;
        see += (s - o) * (s - o);
    }
    if (soo > 0) {
        /* Nash & Sutcliffe (1970): 1 - sum (s - o)^2 / sum (o - mean o)^2 */
        out->nse = 1 - see / soo;
        /* Gupta et al. (2009) eq. 11: alpha = sigma_s / sigma_o (the same
         * divisor in both, so it cancels) */
        out->alpha = sqrt(sss / soo);
        if (sss > 0)
            out->r = sso / sqrt(sss * soo);
    }
    if (mo != 0)
        out->beta = ms / mo; /* Gupta et al. (2009) eq. 10: mu_s / mu_o */
    if (!isnan(out->r) && !isnan(out->alpha) && !isnan(out->beta)) {
        /* Gupta et al. (2009) eq. 9, the Euclidean distance from the
         * ideal point (1, 1, 1) */
        double a = out->r - 1, b = out->alpha - 1, d = out->beta - 1;
        out->kge = 1 - sqrt(a * a + b * b + d * d);
    }
    return SL_OK;
}
