/* test_stats_bits.c - sl_weighted_summary against the bucket selection it
 * replaced (kept below, verbatim, as the reference): the same doubles, bit
 * for bit, for the means and every quantile, on many random inputs (sizes
 * 1..5000, ties, repeated values, zero weights, equal weights, -0.0 and
 * +0.0, values spread over many orders of magnitude or over a range wider
 * than the largest double, infinities, subnormal spreads, many levels). */
#include "check.h"
#include "sluice/rng.h"
#include "sluice/stats.h"

#include <float.h>
#include <stdint.h>
#include <stdlib.h>

/* ------------------------------------------------------------ reference */

/* The previous implementation of sl_weighted_summary (the bucket selection
 * with qsort for small candidate sets), unchanged but for its names. */
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


/* -------------------------------------------------------- case builders */

enum {
    V_NORMAL,    /* N(0, 1) */
    V_TIES,      /* N(0, 1) rounded to halves */
    V_POOL,      /* a few distinct values, repeated (as after resampling) */
    V_ZEROS,     /* -0.0 and +0.0, some +-1e-300 (in their bucket), +-1.5 */
    V_SIGNED0,   /* only -0.0 and +0.0 */
    V_LOGNORMAL, /* exp(20 Z): values bunched near zero, a long tail */
    V_LOGUNIF,   /* +-10^U, U uniform on (-300, 300) */
    V_WIDE,      /* uniform on (-0.95, 0.95) * DBL_MAX: range overflows */
    V_INF,       /* N(0, 1) rounded to halves, -0.0, -Inf and +Inf */
    V_CLUSTER,   /* a few values 1e-9 apart (ties), -0.0, one far away */
    V_SUBNORMAL, /* small multiples of the smallest subnormal, and -0.0 */
    V_ULPS,      /* 1 + k eps: values a few units in the last place apart */
    V_EQUAL,     /* one value for every member */
    V_OFFSET,    /* 1e6 + N(0, 1) */
    V_BINARY,    /* two values */
    V_KINDS
};

enum {
    W_INV_N,     /* all 1/N, as after resampling */
    W_ONE,       /* all 1 */
    W_TENTH,     /* all 0.1: equal, and their sums round */
    W_UNIFORM,   /* uniform on (0, 1) */
    W_DYADIC,    /* multiples of 2^-20: every sum exact */
    W_ZEROS,     /* 90% zero (their values NaN or +-Inf) */
    W_SINGLE,    /* one member of positive weight */
    W_SPREAD,    /* exp(-40 U), some of them subnormal */
    W_INV_N_DEAD, /* 1/N, a fifth of them 0 or -0 */
    W_KINDS
};

static double junk_value(sl_stream *s)
{
    double u = sl_stream_uniform(s);
    return u < 0.4 ? (double)NAN : (u < 0.7 ? HUGE_VAL : (u < 0.9 ? -HUGE_VAL : 1e300));
}

static double draw_value(sl_stream *s, int kind, const double *pool, size_t npool)
{
    double u = sl_stream_uniform(s);
    switch (kind) {
    case V_NORMAL:
        return sl_stream_normal(s);
    case V_TIES:
        return floor(2.0 * sl_stream_normal(s) + 0.5) / 2.0;
    case V_POOL:
        return pool[(size_t)(u * (double)npool)];
    case V_ZEROS:
        return u < 0.3 ? -0.0 : (u < 0.6 ? 0.0 : (u < 0.7 ? -1e-300 :
               (u < 0.8 ? 1e-300 : (u < 0.9 ? -1.5 : 1.5))));
    case V_SIGNED0:
        return u < 0.5 ? -0.0 : 0.0;
    case V_LOGNORMAL:
        return exp(20.0 * sl_stream_normal(s));
    case V_LOGUNIF:
        return (u < 0.5 ? -1.0 : 1.0) * pow(10.0, 600.0 * sl_stream_uniform(s) - 300.0);
    case V_WIDE:
        return (2.0 * u - 1.0) * 0.95 * DBL_MAX;
    case V_INF:
        return u < 0.05 ? -HUGE_VAL : (u < 0.1 ? HUGE_VAL : (u < 0.2 ? -0.0 :
               floor(2.0 * sl_stream_normal(s) + 0.5) / 2.0));
    case V_CLUSTER:
        return u < 0.002 ? 1e6 : (u < 0.2 ? -0.0 :
               1e-9 * floor(5.0 * sl_stream_uniform(s)));
    case V_SUBNORMAL:
        return u < 0.2 ? -0.0 : floor(20.0 * sl_stream_uniform(s)) * 0x1p-1074;
    case V_ULPS:
        return 1.0 + floor(8.0 * u) * DBL_EPSILON;
    case V_EQUAL:
        return 2.385;
    case V_OFFSET:
        return 1e6 + sl_stream_normal(s);
    default:
        return u < 0.3 ? -1.75 : 3.125;
    }
}

static void draw_weights(sl_stream *s, int kind, size_t N, double *w)
{
    size_t j;
    for (j = 0; j < N; j++) {
        double u = sl_stream_uniform(s);
        switch (kind) {
        case W_INV_N:
            w[j] = 1.0 / (double)N;
            break;
        case W_ONE:
            w[j] = 1.0;
            break;
        case W_TENTH:
            w[j] = 0.1;
            break;
        case W_UNIFORM:
            w[j] = u;
            break;
        case W_DYADIC:
            w[j] = (double)(1 + (sl_stream_u64(s) >> 44)) / 1048576.0;
            break;
        case W_ZEROS:
            w[j] = u < 0.9 ? 0.0 : sl_stream_uniform(s);
            break;
        case W_SPREAD:
            w[j] = exp(-40.0 * u) * (sl_stream_uniform(s) < 0.02 ? 1e-310 : 1.0);
            break;
        case W_INV_N_DEAD:
            w[j] = u < 0.1 ? 0.0 : (u < 0.2 ? -0.0 : 1.0 / (double)N);
            break;
        default:
            w[j] = 0.0;
            break;
        }
    }
    if (kind == W_SINGLE)
        w[(size_t)(sl_stream_uniform(s) * (double)N)] = 0.6180339887;
}

/* Levels in [0, 1]: 0, 1, uniforms, i/N and i/64 (which land on
 * cumulative weights for equal weights), the defaults, extremes near 0 and
 * 1, and repeats of earlier levels, in random order. */
static void draw_probs(sl_stream *s, size_t nq, size_t N, double *p)
{
    static const double dflt[3] = {0.05, 0.5, 0.95};
    size_t k;
    for (k = 0; k < nq; k++) {
        double u = sl_stream_uniform(s);
        switch ((int)(9.0 * sl_stream_uniform(s))) {
        case 0: p[k] = 0.0; break;
        case 1: p[k] = 1.0; break;
        case 2: p[k] = u; break;
        case 3: p[k] = floor(u * (double)(N + 1)) / (double)N; break;
        case 4: p[k] = floor(64.0 * u) / 64.0; break;
        case 5: p[k] = dflt[(size_t)(3.0 * u)]; break;
        case 6: p[k] = u < 0.5 ? 1e-12 : 1.0 - 0x1p-40; break;
        default: p[k] = k > 0 ? p[(size_t)(u * (double)k)] : 0.5; break;
        }
        if (p[k] > 1.0)
            p[k] = 1.0;
    }
}

typedef struct {
    size_t N, inc, qinc, nq;
    int wk, vk, with_mean;
} spec;

static unsigned long cases_run = 0;

/* One case: both routines on the same input; the mean and every level the
 * same bits, and the new routine leaves q's gaps alone. */
static void run_case(unsigned id, const spec *c)
{
    const size_t N = c->N, inc = c->inc, qinc = c->qinc, nq = c->nq;
    const double sentinel = -8.125e77;
    sl_stream s;
    double *x = ck_malloc((N * inc + 1) * sizeof *x);
    double *w = ck_malloc((N + 1) * sizeof *w);
    double *probs = ck_malloc((nq + 1) * sizeof *probs);
    double *q = ck_malloc((nq * qinc + 1) * sizeof *q);
    double *qref = ck_malloc((nq + 1) * sizeof *qref);
    double *work = ck_malloc(sl_quantile_workspace(N) * sizeof *work);
    double *rwork = ck_malloc(reference_workspace(N) * sizeof *rwork);
    double pool[20], mean = -1.0, mref = -2.0;
    size_t j, k, npool, bad_q = 0, first_bad = 0, bad_gap = 0;

    sl_stream_init(&s, 20261203u, id, 0, SL_PURPOSE_USER);
    npool = 1 + (size_t)(20.0 * sl_stream_uniform(&s));
    for (k = 0; k < npool; k++)
        pool[k] = sl_stream_normal(&s);
    draw_weights(&s, c->wk, N, w);
    for (j = 0; j < N * inc; j++)
        x[j] = NAN; /* the gaps of a strided row must never be read */
    for (j = 0; j < N; j++)
        x[j * inc] = w[j] > 0 ? draw_value(&s, c->vk, pool, npool) : junk_value(&s);
    draw_probs(&s, nq, N, probs);
    for (k = 0; k < nq * qinc; k++)
        q[k] = sentinel;

    sl_weighted_summary(N, x, inc, w, nq, probs, c->with_mean ? &mean : NULL, q, qinc,
                        work);
    reference_weighted_summary(N, x, inc, w, nq, probs, c->with_mean ? &mref : NULL,
                               qref, 1, rwork);
    cases_run++;
    for (k = 0; k < nq * qinc; k++) {
        if (k % qinc == 0) {
            if (memcmp(&q[k], &qref[k / qinc], sizeof *q) != 0 && bad_q++ == 0)
                first_bad = k / qinc;
        } else if (q[k] != sentinel) {
            bad_gap++;
        }
    }
    CHECK(bad_q == 0,
          "case %u (N=%lu, weights %d, values %d, inc %lu, nq %lu): %lu levels "
          "differ from the reference; level %.17g gives %.17g, the reference %.17g",
          id, (unsigned long)N, c->wk, c->vk, (unsigned long)inc, (unsigned long)nq,
          (unsigned long)bad_q, bad_q ? probs[first_bad] : 0.0,
          bad_q ? q[first_bad * qinc] : 0.0, bad_q ? qref[first_bad] : 0.0);
    CHECK(bad_gap == 0, "case %u: %lu entries between the levels (qinc %lu) were written",
          id, (unsigned long)bad_gap, (unsigned long)qinc);
    if (c->with_mean)
        CHECK(memcmp(&mean, &mref, sizeof mean) == 0,
              "case %u (N=%lu, weights %d, values %d): mean %.17g, the reference %.17g",
              id, (unsigned long)N, c->wk, c->vk, mean, mref);
    ck_free(x);
    ck_free(w);
    ck_free(probs);
    ck_free(q);
    ck_free(qref);
    ck_free(work);
    ck_free(rwork);
}

/* Hand-made inputs where only the order of ties decides the bits: the sign
 * of a zero level, and rounding of sums of equal weights. */
static void check_by_hand(void)
{
    /* values -0, +0, 1: the level 0.4 lands in the zeros, which both
     * routines report as the first zero in member order */
    const double x1[4] = {0.0, -0.0, 1.0, -0.0}, w1[4] = {0.25, 0.25, 0.25, 0.25};
    const double x2[4] = {-0.0, 0.0, 1.0, 0.0};
    const double p[2] = {0.4, 0.5};
    double work[8 * 4 + 2 * 1024], rw[8 * 4 + 2 * 1024], q[2], r[2];
    sl_weighted_summary(4, x1, 1, w1, 2, p, NULL, q, 1, work);
    reference_weighted_summary(4, x1, 1, w1, 2, p, NULL, r, 1, rw);
    CHECK(memcmp(q, r, sizeof q) == 0 && !signbit(q[0]),
          "ties of +0 and -0 (first +0): %g %g, the reference %g %g", q[0], q[1], r[0], r[1]);
    sl_weighted_summary(4, x2, 1, w1, 2, p, NULL, q, 1, work);
    reference_weighted_summary(4, x2, 1, w1, 2, p, NULL, r, 1, rw);
    CHECK(memcmp(q, r, sizeof q) == 0 && signbit(q[0]),
          "ties of -0 and +0 (first -0): %g %g, the reference %g %g", q[0], q[1], r[0], r[1]);
    /* N = 1 */
    {
        const double x3 = -3.5, w3 = 0.7, p3[3] = {0.0, 0.5, 1.0};
        double q3[3], r3[3], m3, mr3;
        sl_weighted_summary(1, &x3, 1, &w3, 3, p3, &m3, q3, 1, work);
        reference_weighted_summary(1, &x3, 1, &w3, 3, p3, &mr3, r3, 1, rw);
        CHECK(memcmp(q3, r3, sizeof q3) == 0 && q3[0] == -3.5 && q3[2] == -3.5 &&
              memcmp(&m3, &mr3, sizeof m3) == 0,
              "N = 1: %g %g %g, mean %g", q3[0], q3[1], q3[2], m3);
    }
}

int main(void)
{
    static const size_t fixed_N[] = {1, 2, 3, 5, 48, 49, 100, 1000, 1023, 1025, 5000};
    static const size_t incs[] = {1, 1, 2, 3, 63};
    static const size_t qincs[] = {1, 1, 2, 5};
    const size_t nfixed = sizeof fixed_N / sizeof fixed_N[0];
    const unsigned nrandom = check_light_() ? 300u : 4000u;
    unsigned id = 0, i;
    int wk, vk;
    sl_stream s;

    check_by_hand();
    sl_stream_init(&s, 11u, 0, 0, SL_PURPOSE_USER);
    /* every weight kind with every value kind at each fixed size ... */
    for (i = 0; i < nfixed; i++)
        for (wk = 0; wk < W_KINDS; wk++)
            for (vk = 0; vk < V_KINDS; vk++) {
                spec c;
                c.N = fixed_N[i];
                c.wk = wk;
                c.vk = vk;
                c.inc = incs[id % 5];
                c.qinc = qincs[id % 4];
                c.nq = 1 + (size_t)(12.0 * sl_stream_uniform(&s));
                c.with_mean = (id % 3) != 0;
                run_case(id++, &c);
            }
    /* ... random sizes, log-uniform on 1 .. 5000, some with more levels
     * than one pass takes ... */
    for (i = 0; i < nrandom; i++) {
        spec c;
        double u = sl_stream_uniform(&s);
        c.N = (size_t)exp(sl_stream_uniform(&s) * log(5001.0));
        c.wk = (int)(W_KINDS * sl_stream_uniform(&s));
        c.vk = (int)(V_KINDS * sl_stream_uniform(&s));
        c.inc = incs[(size_t)(5 * sl_stream_uniform(&s))];
        c.qinc = qincs[(size_t)(4 * sl_stream_uniform(&s))];
        c.nq = u < 0.05 ? 60 + (size_t)(140.0 * sl_stream_uniform(&s))
                        : (size_t)(10.0 * sl_stream_uniform(&s));
        c.with_mean = sl_stream_uniform(&s) < 0.5;
        run_case(id++, &c);
    }
    /* ... and large ensembles, where the candidates are refined in several
     * rounds */
    for (vk = 0; vk < V_KINDS; vk++) {
        spec c;
        c.N = 100000;
        c.wk = vk % 2 ? W_INV_N : W_UNIFORM;
        c.vk = vk;
        c.inc = 1;
        c.qinc = 1;
        c.nq = 9;
        c.with_mean = 1;
        run_case(id++, &c);
    }
    CHECK(cases_run == id, "%lu of %u cases ran", cases_run, id);
    CHECK_DONE("test_stats_bits");
}
