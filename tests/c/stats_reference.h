/* stats_reference.h - the previous implementations of sl_weighted_summary
 * (bucket selection, qsort for small candidate sets) and of
 * sl_weighted_means, unchanged but for their names: the references the
 * current ones must match bit for bit (tests/c/test_stats_bits.c; the
 * means up to one summing block of 4096 members) and are timed against
 * (tests/bench/quantiles_micro.c, means_micro.c); and
 * reference_blocked_mean, the means' summing blocks of stats.h in their
 * plainest form, which every mean must match bit for bit. */
#ifndef SLUICE_STATS_REFERENCE_H
#define SLUICE_STATS_REFERENCE_H

#include <math.h>
#include <stdlib.h>
#include <string.h>

#define REF_NBUCKET 1024
#define REF_SMALL 48 /* candidate sets this small are finished by sorting */
#define REF_MAXLEVELS 64 /* levels handled per pass; more are done in groups */

/* candidates are (value, weight) pairs stored interleaved */
typedef struct {
    double v, w;
} ref_pair;

static size_t reference_workspace(size_t N)
{
    /* four pair regions of N pairs (all members, the gathered candidates,
     * and two for refining) plus the bucket sums */
    return 8 * N + 2 * REF_NBUCKET;
}

static int ref_cmp_pair(const void *a, const void *b)
{
    double x = ((const ref_pair *)a)->v, y = ((const ref_pair *)b)->v;
    return (x > y) - (x < y);
}

static size_t ref_bucket_of(double v, double lo, double scale)
{
    size_t k = (size_t)((v - lo) * scale);
    return k < REF_NBUCKET ? k : REF_NBUCKET - 1;
}

/* Bucket b where the cumulative weight (starting at *acc) first reaches
 * target; *acc becomes the weight below that bucket. */
static size_t ref_find_bucket(const double *bw, double *acc, double target)
{
    size_t b, last = 0;
    double a = *acc;
    for (b = 0; b < REF_NBUCKET; b++) {
        if (bw[b] > 0) {
            if (a + bw[b] >= target) {
                *acc = a;
                return b;
            }
            last = b;
        }
        a += bw[b];
    }
    /* rounding kept the sum under target: the last non-empty bucket */
    *acc = a - bw[last];
    return last;
}

/* Smallest candidate value whose cumulative weight reaches target, among n
 * candidates c (values in [lo, hi]) with weight `below` under them. Works
 * in c and spare (each room for n pairs); bw holds REF_NBUCKET doubles. */
static double ref_select_in(size_t n, ref_pair *c, ref_pair *spare, double lo, double hi,
                        double below, double target, double *bw)
{
    for (;;) {
        size_t i, b, m = 0;
        double scale, nlo = HUGE_VAL, nhi = -HUGE_VAL;
        if (!(hi > lo))
            return lo; /* every candidate has the same value */
        if (n <= REF_SMALL) {
            double acc = below;
            qsort(c, n, sizeof *c, ref_cmp_pair);
            for (i = 0; i < n; i++) {
                acc += c[i].w;
                if (acc >= target)
                    return c[i].v;
            }
            return c[n - 1].v;
        }
        scale = (double)REF_NBUCKET / (hi - lo);
        for (b = 0; b < REF_NBUCKET; b++)
            bw[b] = 0.0;
        for (i = 0; i < n; i++)
            bw[ref_bucket_of(c[i].v, lo, scale)] += c[i].w;
        b = ref_find_bucket(bw, &below, target);
        for (i = 0; i < n; i++)
            if (ref_bucket_of(c[i].v, lo, scale) == b) {
                spare[m] = c[i];
                if (c[i].v < nlo) nlo = c[i].v;
                if (c[i].v > nhi) nhi = c[i].v;
                m++;
            }
        if (2 * m > n) {
            /* values bunched (for instance exponentially spread): one
             * bucket pass gains little, so sort what is left */
            n = m;
            c = spare;
            qsort(c, n, sizeof *c, ref_cmp_pair);
            for (i = 0; i < n; i++) {
                below += c[i].w;
                if (below >= target)
                    return c[i].v;
            }
            return c[n - 1].v;
        }
        {
            ref_pair *t = c;
            c = spare;
            spare = t;
        }
        n = m;
        lo = nlo;
        hi = nhi;
    }
}

/* Neumaier's compensated sums (the Kahan-Babuska variant): the error stays
 * near one rounding whatever the number of members. */
static double ref_sum_w(size_t n, const ref_pair *c)
{
    double s = 0.0, e = 0.0;
    size_t i;
    for (i = 0; i < n; i++) {
        double a = c[i].w, t = s + a;
        e += fabs(s) >= fabs(a) ? (s - t) + a : (a - t) + s;
        s = t;
    }
    return s + e;
}

/* sum of scale * w_i * (v_i - ref) */
static double ref_dot(size_t n, const ref_pair *c, double ref,
                              double scale)
{
    double s = 0.0, e = 0.0;
    size_t i;
    for (i = 0; i < n; i++) {
        double a = (scale * c[i].w) * (c[i].v - ref), t = s + a;
        e += fabs(s) >= fabs(a) ? (s - t) + a : (a - t) + s;
        s = t;
    }
    return s + e;
}

static void reference_weighted_summary(size_t N, const double *x, size_t inc,
                                       const double *w, size_t nq,
                                       const double *probs, double *mean, double *q,
                                       size_t qinc, double *work)
{
    ref_pair *all = (ref_pair *)(void *)work;
    ref_pair *r1 = all + N, *r2 = r1 + N, *r3 = r2 + N;
    double *bw = work + 8 * N, *bw2 = bw + REF_NBUCKET;
    /* per bucket: member count, and which target (1-based) it is; per
     * target (at most one per level): where its candidates start, the next
     * free place, their range; per level: its bucket and the weight below */
    size_t cnt[REF_NBUCKET], slot[REF_NBUCKET], start_of[REF_MAXLEVELS], fill[REF_MAXLEVELS];
    size_t lv_bucket[REF_MAXLEVELS];
    double tlo[REF_MAXLEVELS], thi[REF_MAXLEVELS], lv_below[REF_MAXLEVELS];
    /* Wrun: the plain running sum, the same arithmetic as the cumulative
     * sums of the selection, so that level 1 reaches the largest value */
    double W, Wrun = 0.0, lo = HUGE_VAL, hi = -HUGE_VAL, scale;
    size_t j, n = 0, k, k0, i;
    for (j = 0; j < N; j++) {
        double v = x[j * inc], wj = w[j];
        if (wj > 0) {
            all[n].v = v;
            all[n].w = wj;
            n++;
            Wrun += wj;
            if (v < lo) lo = v;
            if (v > hi) hi = v;
        }
    }
    if (n == 0) {
        if (mean != NULL)
            *mean = NAN;
        for (k = 0; k < nq; k++)
            q[k * qinc] = NAN;
        return;
    }
    if (mean == NULL) {
        /* the caller's (sl_weighted_means) */
    } else if (isfinite(hi - lo)) {
        W = ref_sum_w(n, all);
        /* deviations from one member: exact for a constant ensemble */
        double ref = all[0].v;
        *mean = ref + ref_dot(n, all, ref, 1.0) / W;
    } else {
        /* a range wider than the largest double: weights first, so no
         * partial sum can overflow */
        W = ref_sum_w(n, all);
        *mean = ref_dot(n, all, 0.0, 1.0 / W);
    }
    if (nq == 0)
        return;
    if (!(hi > lo)) {
        for (k = 0; k < nq; k++)
            q[k * qinc] = lo;
        return;
    }
    if (!isfinite(hi - lo)) {
        /* a range too wide for buckets: sort everything once */
        qsort(all, n, sizeof *all, ref_cmp_pair);
        for (k = 0; k < nq; k++) {
            double target = probs[k] * Wrun, acc = 0.0;
            q[k * qinc] = all[n - 1].v;
            for (i = 0; i < n; i++) {
                acc += all[i].w;
                if (acc >= target) {
                    q[k * qinc] = all[i].v;
                    break;
                }
            }
        }
        return;
    }
    /* one histogram (weights and counts) of all members serves every
     * level; then one pass gathers the candidates of every target bucket,
     * each into its own stretch of r1 */
    scale = (double)REF_NBUCKET / (hi - lo);
    for (i = 0; i < REF_NBUCKET; i++) {
        bw[i] = 0.0;
        cnt[i] = 0;
    }
    for (i = 0; i < n; i++) {
        size_t b = ref_bucket_of(all[i].v, lo, scale);
        bw[b] += all[i].w;
        cnt[b]++;
    }
    for (k0 = 0; k0 < nq; k0 += REF_MAXLEVELS) {
        size_t off = 0, nt = 0, k1 = nq - k0 < REF_MAXLEVELS ? nq : k0 + REF_MAXLEVELS;
        for (i = 0; i < REF_NBUCKET; i++)
            slot[i] = 0;
        for (k = k0; k < k1; k++) {
            double target = probs[k] * Wrun;
            lv_below[k - k0] = 0.0;
            lv_bucket[k - k0] = ref_find_bucket(bw, &lv_below[k - k0], target);
            if (slot[lv_bucket[k - k0]] == 0) {
                size_t b = lv_bucket[k - k0];
                slot[b] = ++nt;   /* 1-based: 0 marks a bucket no level needs */
                start_of[nt - 1] = off;
                fill[nt - 1] = off;
                tlo[nt - 1] = HUGE_VAL;
                thi[nt - 1] = -HUGE_VAL;
                off += cnt[b];
            }
        }
        for (i = 0; i < n; i++) {
            size_t t = slot[ref_bucket_of(all[i].v, lo, scale)];
            if (t != 0) {
                double v = all[i].v;
                r1[fill[t - 1]++] = all[i];
                if (v < tlo[t - 1]) tlo[t - 1] = v;
                if (v > thi[t - 1]) thi[t - 1] = v;
            }
        }
        for (k = k0; k < k1; k++) {
            size_t t = slot[lv_bucket[k - k0]] - 1, m = cnt[lv_bucket[k - k0]];
            /* refine a copy: two levels may share a bucket */
            memcpy(r2, r1 + start_of[t], m * sizeof *r2);
            q[k * qinc] = ref_select_in(m, r2, r3, tlo[t], thi[t], lv_below[k - k0],
                                    probs[k] * Wrun, bw2);
        }
    }
}

/* the previous sl_weighted_means (one pass over the members for every
 * 64 rows, each row read through its index) */
#define REF_MEANBLOCK 64 /* rows summed together in one pass over the members */

static void reference_weighted_means(size_t N, const double *x, size_t ld, size_t m,
                                     const size_t *rows, size_t base, const double *w,
                                     double *mean)
{
    double W = 0.0, We = 0.0;
    size_t j, j0 = N, i0, b;
    /* the total weight: compensated_sum_w over the members of positive
     * weight, in member order */
    for (j = 0; j < N; j++) {
        double a = w[j], t;
        if (!(a > 0))
            continue;
        if (j0 == N)
            j0 = j;
        t = W + a;
        We += fabs(W) >= fabs(a) ? (W - t) + a : (a - t) + W;
        W = t;
    }
    W += We;
    for (i0 = 0; i0 < m; i0 += REF_MEANBLOCK) {
        size_t nb = m - i0 < REF_MEANBLOCK ? m - i0 : REF_MEANBLOCK, r[REF_MEANBLOCK];
        double s[REF_MEANBLOCK], e[REF_MEANBLOCK], lo[REF_MEANBLOCK], hi[REF_MEANBLOCK], ref[REF_MEANBLOCK];
        for (b = 0; b < nb; b++)
            r[b] = rows != NULL ? rows[i0 + b] - base : i0 + b;
        if (j0 == N) {
            for (b = 0; b < nb; b++)
                mean[r[b]] = NAN;
            continue;
        }
        for (b = 0; b < nb; b++) {
            /* deviations from the first member of positive weight */
            ref[b] = x[r[b] + j0 * ld];
            s[b] = e[b] = 0.0;
            lo[b] = HUGE_VAL;
            hi[b] = -HUGE_VAL;
        }
        for (j = j0; j < N; j++) {
            const double *col = x + j * ld, wj = w[j];
            if (!(wj > 0))
                continue;
            for (b = 0; b < nb; b++) {
                double v = col[r[b]], a = (1.0 * wj) * (v - ref[b]), t = s[b] + a;
                if (v < lo[b]) lo[b] = v;
                if (v > hi[b]) hi[b] = v;
                e[b] += fabs(s[b]) >= fabs(a) ? (s[b] - t) + a : (a - t) + s[b];
                s[b] = t;
            }
        }
        for (b = 0; b < nb; b++) {
            if (isfinite(hi[b] - lo[b])) {
                mean[r[b]] = ref[b] + (s[b] + e[b]) / W;
            } else {
                /* a range wider than the largest double: weights first */
                double sc = 1.0 / W, ss = 0.0, ee = 0.0;
                for (j = j0; j < N; j++) {
                    double a, t;
                    if (!(w[j] > 0))
                        continue;
                    a = (sc * w[j]) * (x[r[b] + j * ld] - 0.0);
                    t = ss + a;
                    ee += fabs(ss) >= fabs(a) ? (ss - t) + a : (a - t) + ss;
                    ss = t;
                }
                mean[r[b]] = ss + ee;
            }
        }
    }
}

/* The weighted mean of x[0], x[inc], ... by the rule stats.h states, in
 * the plainest form: the members in consecutive blocks of
 * ref_mean_block(N) (at least 4096, a multiple of 64, at most 32
 * blocks); the total weight and the sum of w_j (x_j - ref), ref the
 * first member of positive weight, each a compensated (Neumaier) sum in
 * member order inside a block, then over the blocks' sums in order, each
 * block's error added to the error; mean = ref + sum / W. A range wider
 * than the largest double: sum of (w_j / W) x_j compensated in member
 * order. NaN when no weight is positive. */
static size_t ref_mean_block(size_t N)
{
    size_t b = N / 32 + (N % 32 != 0);
    b = 64 * (b / 64 + (b % 64 != 0));
    return b < 4096 ? 4096 : b;
}

static void ref_neumaier(double *s, double *e, double a)
{
    double t = *s + a;
    if (fabs(*s) >= fabs(a))
        *e += (*s - t) + a;
    else
        *e += (a - t) + *s;
    *s = t;
}

static double reference_blocked_mean(size_t N, const double *x, size_t inc, const double *w)
{
    const size_t B = ref_mean_block(N);
    double W = 0.0, We = 0.0, S = 0.0, E = 0.0, ref = 0.0, lo = HUGE_VAL, hi = -HUGE_VAL;
    size_t j, j0, first = N;
    for (j = 0; j < N; j++)
        if (w[j] > 0) {
            if (first == N)
                first = j;
            if (x[j * inc] < lo)
                lo = x[j * inc];
            if (x[j * inc] > hi)
                hi = x[j * inc];
        }
    if (first == N)
        return NAN;
    ref = x[first * inc];
    for (j0 = 0; j0 < N; j0 += B) {
        double bw = 0.0, bwe = 0.0, bs = 0.0, be = 0.0;
        for (j = j0; j < N && j < j0 + B; j++)
            if (w[j] > 0) {
                ref_neumaier(&bw, &bwe, w[j]);
                ref_neumaier(&bs, &be, (1.0 * w[j]) * (x[j * inc] - ref));
            }
        ref_neumaier(&W, &We, bw);
        We += bwe;
        ref_neumaier(&S, &E, bs);
        E += be;
    }
    W += We;
    if (isfinite(hi - lo))
        return ref + (S + E) / W;
    S = E = 0.0;
    for (j = 0; j < N; j++)
        if (w[j] > 0)
            ref_neumaier(&S, &E, (1.0 / W * w[j]) * (x[j * inc] - 0.0));
    return S + E;
}

#endif
