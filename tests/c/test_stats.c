/* test_stats.c - weighted means and exact weighted quantiles, checked
 * against a direct sort-based evaluation of their definition on many random
 * cases (sizes, weights, value spreads, ties, strides, levels). */
#include "check.h"
#include "sluice/rng.h"
#include "sluice/stats.h"

#include <float.h>
#include <stdint.h>
#include <stdlib.h>

/* ------------------------------------------------------------ reference */

typedef struct {
    double v, w;
} vw;

static int cmp_vw(const void *a, const void *b)
{
    double x = ((const vw *)a)->v, y = ((const vw *)b)->v;
    return (x > y) - (x < y);
}

static int cmp_double(const void *a, const void *b)
{
    double x = *(const double *)a, y = *(const double *)b;
    return (x > y) - (x < y);
}

/* The definition of stats.h evaluated directly: members of weight 0 are
 * dropped, the pairs sorted by value (qsort), the weights accumulated in
 * that order, and the quantile of level p is the value at the first index
 * whose cumulative weight reaches p * W (W summed over the members in their
 * given order); the last value if rounding keeps every sum below p * W.
 * The mean is sum w x / W in long double. *scale receives sum w |x| / W,
 * the size the mean's rounding error is measured against. Returns the
 * number of members of positive weight. */
static size_t reference(size_t N, const double *x, size_t inc,
                        const double *w, size_t nq, const double *probs,
                        long double *mean, double *scale, double *q,
                        vw *buf, double *cum)
{
    size_t j, n = 0, k;
    double W = 0.0;
    long double s = 0.0L, sa = 0.0L, Wl = 0.0L;
    for (j = 0; j < N; j++)
        if (w[j] > 0) {
            buf[n].v = x[j * inc];
            buf[n].w = w[j];
            W += w[j];
            Wl += (long double)w[j];
            s += (long double)w[j] * (long double)x[j * inc];
            sa += (long double)w[j] * fabsl((long double)x[j * inc]);
            n++;
        }
    if (n == 0)
        return 0;
    *mean = s / Wl;
    *scale = (double)(sa / Wl);
    qsort(buf, n, sizeof *buf, cmp_vw);
    cum[0] = buf[0].w;
    for (j = 1; j < n; j++)
        cum[j] = cum[j - 1] + buf[j].w;
    for (k = 0; k < nq; k++) {
        double target = probs[k] * W;
        size_t lo = 0, hi = n; /* first index with cum >= target */
        while (lo < hi) {
            size_t mid = lo + (hi - lo) / 2;
            if (cum[mid] >= target)
                hi = mid;
            else
                lo = mid + 1;
        }
        q[k] = buf[lo < n ? lo : n - 1].v;
    }
    return n;
}

/* -------------------------------------------------------- case builders */

enum {
    W_DYADIC,    /* random integers 1..2^20 times 2^-20: every sum exact */
    W_UNIFORM,   /* uniform on (0, 1) */
    W_ONE,       /* all 1 */
    W_QUARTER,   /* all 1/4 */
    W_INV_N,     /* all 1/N, as after resampling */
    W_ZEROS,     /* 90% zero (their values NaN or +-Inf), the rest dyadic */
    W_SINGLE,    /* one member of positive weight, all others NaN/Inf */
    W_KINDS
};

enum {
    V_NORMAL,     /* N(0, 1) */
    V_OFFSET,     /* 1e6 + N(0, 1): a mean far from zero */
    V_LOGNORMAL,  /* exp(2 ln(10) Z): 12 orders of magnitude at +-3 sd */
    V_LOGUNIF,    /* 10^U, U uniform on (-6, 6): 12 orders of magnitude */
    V_TIES,       /* N(0, 1) rounded to halves: about 13 distinct values */
    V_LOGTIES,    /* 10^round(U): 13 distinct values over 12 orders */
    V_BINARY,     /* two values */
    V_EQUAL,      /* one value for every member */
    V_WIDE,       /* uniform on (-0.95, 0.95) * DBL_MAX: range overflows */
    V_KINDS
};

static const char *const wname[W_KINDS] = {"dyadic", "uniform", "ones",
                                           "quarters", "1/N", "many-zeros",
                                           "single"};
static const char *const vname[V_KINDS] = {"normal", "offset", "lognormal",
                                           "log-uniform", "ties", "log-ties",
                                           "binary", "equal", "wide"};

static double draw_value(sl_stream *s, int kind)
{
    switch (kind) {
    case V_NORMAL:
        return sl_stream_normal(s);
    case V_OFFSET:
        return 1e6 + sl_stream_normal(s);
    case V_LOGNORMAL:
        return exp(2.0 * log(10.0) * sl_stream_normal(s));
    case V_LOGUNIF:
        return pow(10.0, 12.0 * sl_stream_uniform(s) - 6.0);
    case V_TIES:
        return floor(2.0 * sl_stream_normal(s) + 0.5) / 2.0;
    case V_LOGTIES:
        return pow(10.0, floor(12.0 * sl_stream_uniform(s) - 6.0 + 0.5));
    case V_BINARY:
        return sl_stream_uniform(s) < 0.3 ? -1.75 : 3.125;
    case V_EQUAL:
        return 2.385;
    default:
        return (2.0 * sl_stream_uniform(s) - 1.0) * 0.95 * DBL_MAX;
    }
}

/* Values of weight-0 members: anything, NaN and infinities included. */
static double junk_value(sl_stream *s)
{
    double u = sl_stream_uniform(s);
    return u < 0.4 ? (double)NAN : (u < 0.7 ? HUGE_VAL : (u < 0.9 ? -HUGE_VAL : 1e300));
}

static double dyadic_weight(sl_stream *s)
{
    return (double)(1 + (sl_stream_u64(s) >> 44)) / 1048576.0;
}

static void draw_weights(sl_stream *s, int kind, size_t N, double *w)
{
    size_t j;
    for (j = 0; j < N; j++) {
        switch (kind) {
        case W_DYADIC:
            w[j] = dyadic_weight(s);
            break;
        case W_UNIFORM:
            w[j] = sl_stream_uniform(s);
            break;
        case W_ONE:
            w[j] = 1.0;
            break;
        case W_QUARTER:
            w[j] = 0.25;
            break;
        case W_INV_N:
            w[j] = 1.0 / (double)N;
            break;
        case W_ZEROS:
            w[j] = sl_stream_uniform(s) < 0.9 ? 0.0 : dyadic_weight(s);
            break;
        default:
            w[j] = 0.0;
            break;
        }
    }
    if (kind == W_SINGLE)
        w[(size_t)(sl_stream_uniform(s) * (double)N)] = 0.6180339887;
    if (kind == W_ZEROS) {
        for (j = 0; j < N && !(w[j] > 0); j++)
            ;
        if (j == N) /* keep at least one member of positive weight */
            w[(size_t)(sl_stream_uniform(s) * (double)N)] = dyadic_weight(s);
    }
}

/* Levels: 0, 1, uniforms, multiples of 1/64 (which land exactly on a
 * cumulative weight for equal weights and N a multiple of 64), extremes
 * near 0 and 1, and repeats of earlier levels, in random order. When the
 * weights' sums round (exact = 0), a level landing on a cumulative weight
 * could go either way within rounding, so the multiples of 1/64 are
 * replaced by uniforms there. */
static void draw_probs(sl_stream *s, size_t nq, double *p, int exact)
{
    size_t k;
    for (k = 0; k < nq; k++) {
        double u = sl_stream_uniform(s);
        int c = (int)(8.0 * sl_stream_uniform(s));
        switch (c) {
        case 0: p[k] = 0.0; break;
        case 1: p[k] = 1.0; break;
        case 2: p[k] = u; break;
        case 3: p[k] = u; break;
        case 4: p[k] = exact ? floor(64.0 * u) / 64.0 : u; break;
        case 5: p[k] = u < 0.5 ? 1e-12 : 1.0 - 0x1p-40; break;
        default: p[k] = k > 0 ? p[(size_t)(u * (double)k)] : 0.5; break;
        }
    }
}

/* ---------------------------------------------------------------- cases */

typedef struct {
    size_t N, inc, qinc, nq;
    int wk, vk;
} spec;

/* Run one case: the quantiles, the untouched gaps of q, the mean, and for
 * equal weights the order statistics. */
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
    double *cum = ck_malloc((N + 1) * sizeof *cum);
    vw *buf = ck_malloc((N + 1) * sizeof *buf);
    double mean = 0.0, scale = 0.0;
    long double mref = 0.0L;
    size_t j, k, npos, bad_q = 0, first_bad = 0, bad_gap = 0;

    if (!x || !w || !probs || !q || !qref || !work || !cum || !buf) {
        CHECK(0, "case %u: out of memory", id);
        goto done;
    }
    sl_stream_init(&s, 20240611u, id, 0, SL_PURPOSE_USER);
    draw_weights(&s, c->wk, N, w);
    for (j = 0; j < N * inc; j++)
        x[j] = NAN; /* the gaps of a strided row must never be read */
    for (j = 0; j < N; j++)
        x[j * inc] = w[j] > 0 ? draw_value(&s, c->vk) : junk_value(&s);
    draw_probs(&s, nq, probs, c->wk != W_UNIFORM && c->wk != W_INV_N);
    for (k = 0; k < nq * qinc; k++)
        q[k] = sentinel;

    sl_weighted_summary(N, x, inc, w, nq, probs, &mean, q, qinc, work);
    {
        /* the means read member by member: the same bits */
        double m1 = 0.0, m2 = 0.0;
        const size_t row0 = 0;
        sl_weighted_means(N, x, inc, 1, NULL, 0, w, &m1, 1);
        sl_weighted_means(N, x, inc, 1, &row0, 0, w, &m2, 2);
        CHECK(memcmp(&m1, &mean, sizeof mean) == 0 && memcmp(&m2, &mean, sizeof mean) == 0,
              "case %u: sl_weighted_means %.17g, %.17g, sl_weighted_summary %.17g", id, m1,
              m2, mean);
    }
    npos = reference(N, x, inc, w, nq, probs, &mref, &scale, qref, buf, cum);
    if (npos == 0) {
        CHECK(0, "case %u: no member of positive weight was drawn", id);
        goto done;
    }

    for (k = 0; k < nq * qinc; k++) {
        if (k % qinc == 0) {
            if (!(q[k] == qref[k / qinc]) && bad_q++ == 0)
                first_bad = k / qinc;
        } else if (q[k] != sentinel) {
            bad_gap++;
        }
    }
    CHECK(bad_q == 0,
          "case %u (N=%lu, weights %s, values %s, inc %lu, qinc %lu): %lu of "
          "%lu quantiles differ; level %.17g gives %.17g, the definition %.17g",
          id, (unsigned long)N, wname[c->wk], vname[c->vk], (unsigned long)inc,
          (unsigned long)qinc, (unsigned long)bad_q, (unsigned long)nq,
          bad_q ? probs[first_bad] : 0.0, bad_q ? q[first_bad * qinc] : 0.0,
          bad_q ? qref[first_bad] : 0.0);
    CHECK(bad_gap == 0, "case %u: %lu entries between the quantile outputs "
          "(qinc %lu) were written", id, (unsigned long)bad_gap,
          (unsigned long)qinc);
    if (c->vk == V_WIDE) {
        /* the mean of values whose range overflows is checked on its own
         * in check_wide_mean; here only the quantiles */
    } else if (c->vk == V_EQUAL) {
        /* a constant's mean is the constant itself, exactly */
        CHECK(mean == 2.385, "case %u: mean of a constant: %.17g", id, mean);
    } else {
        double err = fabs((double)((long double)mean - mref));
        CHECK(err <= 1e-12 * scale,
              "case %u (N=%lu, weights %s, values %s): mean %.17g, reference "
              "%.17Lg (error %.3g, allowed %.3g)", id, (unsigned long)N,
              wname[c->wk], vname[c->vk], mean, mref, err, 1e-12 * scale);
    }

    /* With equal weights the definition is the textbook empirical quantile,
     * the inverse of the empirical distribution function: the order
     * statistic x_(ceil(pN)), and the minimum for p = 0 (Hyndman & Fan
     * 1996 list it as their type 1; from memory). */
    if (c->wk == W_ONE || c->wk == W_QUARTER) {
        size_t bad = 0;
        for (j = 0; j < N; j++)
            cum[j] = x[j * inc];
        qsort(cum, N, sizeof *cum, cmp_double);
        for (k = 0; k < nq; k++) {
            double r = ceil(probs[k] * (double)N);
            size_t i = r < 1 ? 0 : (size_t)r - 1;
            bad += !(q[k * qinc] == cum[i]);
        }
        CHECK(bad == 0, "case %u (N=%lu, values %s): %lu quantiles are not "
              "the order statistic x_(ceil(pN))", id, (unsigned long)N,
              vname[c->vk], (unsigned long)bad);
    }
done:
    ck_free(x);
    ck_free(w);
    ck_free(probs);
    ck_free(q);
    ck_free(qref);
    ck_free(work);
    ck_free(cum);
    ck_free(buf);
}

/* Members of weight 0 only (and no members at all): NaN mean and levels. */
static void check_no_weight(void)
{
    enum { N = 7 };
    double x[N] = {NAN, 1.0, HUGE_VAL, -2.0, 3.0, -HUGE_VAL, 0.5};
    double w[N] = {0, 0, 0, 0, 0, 0, 0};
    double probs[3] = {0.0, 0.5, 1.0}, q[3] = {1, 2, 3}, mean = 0.0;
    double *work = ck_malloc(sl_quantile_workspace(N) * sizeof *work);
    sl_weighted_summary(N, x, 1, w, 3, probs, &mean, q, 1, work);
    CHECK(isnan(mean) && isnan(q[0]) && isnan(q[1]) && isnan(q[2]),
          "no positive weight: mean %g, quantiles %g %g %g", mean, q[0], q[1],
          q[2]);
    ck_free(work);

    work = ck_malloc(sl_quantile_workspace(0) * sizeof *work);
    mean = 0.0;
    q[0] = q[1] = 1.0;
    sl_weighted_summary(0, x, 1, w, 2, probs, &mean, q, 1, work);
    CHECK(isnan(mean) && isnan(q[0]) && isnan(q[1]),
          "no members: mean %g, quantiles %g %g", mean, q[0], q[1]);
    ck_free(work);
}

/* A small case worked by hand from the definition: values 3, 1, 2, 5 with
 * weights 0.25, 0.5, 0, 0.25 (the 2 is ignored): sorted 1 (0.5), 3 (0.75),
 * 5 (1.0); mean (0.75 + 0.5 + 1.25) = 2.5. */
static void check_by_hand(void)
{
    double x[4] = {3.0, 1.0, 2.0, 5.0}, w[4] = {0.25, 0.5, 0.0, 0.25};
    double probs[7] = {0.0, 0.5, 0.5000001, 0.75, 0.8, 1.0, 0.25};
    double expect[7] = {1.0, 1.0, 3.0, 3.0, 5.0, 5.0, 1.0};
    double q[7], mean, work[2100];
    size_t k, bad = 0;
    CHECK(sl_quantile_workspace(4) <= sizeof work / sizeof work[0],
          "workspace for 4 members: %lu doubles",
          (unsigned long)sl_quantile_workspace(4));
    sl_weighted_summary(4, x, 1, w, 7, probs, &mean, q, 1, work);
    CHECK(mean == 2.5, "hand case: mean %.17g, expected 2.5", mean);
    for (k = 0; k < 7; k++)
        bad += q[k] != expect[k];
    CHECK(bad == 0, "hand case: quantiles %g %g %g %g %g %g %g", q[0], q[1],
          q[2], q[3], q[4], q[5], q[6]);
    /* nq = 0: the mean only, nothing written to q */
    q[0] = -1.0;
    sl_weighted_summary(4, x, 1, w, 0, probs, &mean, q, 1, work);
    CHECK(mean == 2.5 && q[0] == -1.0, "nq = 0: mean %g, q[0] %g", mean, q[0]);
}

/* Finite values whose range exceeds the largest double: the quantiles take
 * the sorting branch; the weighted mean is still a finite number and must
 * come out as one. x = (-1e308, 1e308) with equal weights has mean 0; with
 * weights (1, 3) the mean 5e307 (exact arithmetic). */
static void check_wide_mean(void)
{
    double x[2] = {-1e308, 1e308}, w[2] = {1.0, 1.0}, w2[2] = {1.0, 3.0};
    double probs[3] = {0.0, 0.5, 0.75}, q[3], mean, work[2100];
    sl_weighted_summary(2, x, 1, w, 3, probs, &mean, q, 1, work);
    CHECK(q[0] == -1e308 && q[1] == -1e308 && q[2] == 1e308,
          "wide range: quantiles %g %g %g", q[0], q[1], q[2]);
    CHECK(mean == 0.0, "wide range: mean of -1e308 and 1e308 with equal "
          "weights is %.17g, expected 0", mean);
    sl_weighted_summary(2, x, 1, w2, 0, probs, &mean, q, 1, work);
    CHECK_REL(mean, 5e307, 1e-15, "wide range: mean with weights 1 and 3");
}

/* sl_weighted_means over many rows at once (more than one block of 64,
 * a row list with a base): each row's mean has the bits of
 * sl_weighted_summary's for that row alone. */
static void check_means_rows(void)
{
    enum { N = 300, LD = 150 };
    static double x[LD * N], w[N], m[LD], mp[LD], work[8 * N + 2048];
    size_t rows[LD], nr = 0, i, j, bad = 0;
    sl_stream s;
    sl_stream_init(&s, 77u, 0, 0, SL_PURPOSE_USER);
    for (j = 0; j < N; j++)
        w[j] = j % 7 == 3 ? 0.0 : sl_stream_uniform(&s);
    for (i = 0; i < LD; i++)
        for (j = 0; j < N; j++)
            x[i + j * LD] = w[j] > 0 ? draw_value(&s, (int)(i % V_KINDS)) : junk_value(&s);
    for (i = 5; i < LD; i += 1 + i % 3)
        rows[nr++] = i;
    for (i = 0; i < LD; i++)
        m[i] = mp[i] = -1.0;
    sl_weighted_means(N, x, LD, LD, NULL, 0, w, m, 1);
    sl_weighted_means(N, x + 5, LD, nr, rows, 5, w, mp, 2);
    for (i = 0; i < LD; i++) {
        double want;
        sl_weighted_summary(N, x + i, LD, w, 0, NULL, &want, NULL, 1, work);
        bad += memcmp(&m[i], &want, sizeof want) != 0;
    }
    for (i = 0; i < nr; i++) {
        double want;
        sl_weighted_summary(N, x + rows[i], LD, w, 0, NULL, &want, NULL, 1, work);
        bad += memcmp(&mp[rows[i] - 5], &want, sizeof want) != 0;
    }
    CHECK(bad == 0, "sl_weighted_means over %d rows: %lu means differ from "
          "sl_weighted_summary's", LD, (unsigned long)bad);
    CHECK(mp[1] == -1.0 && mp[2] == -1.0, "a row not listed is not written");
    for (j = 0; j < N; j++)
        w[j] = 0.0;
    sl_weighted_means(N, x, LD, 3, NULL, 0, w, m, 2);
    CHECK(isnan(m[0]) && isnan(m[2]), "no weight: NaN means");
}

/* The summing blocks (stats.h): the smallest multiple of 64 that is at
 * least 4096 and leaves at most SL_MEAN_BLOCKS_MAX blocks, checked as
 * stated for sizes around the rule's edges. */
static void check_mean_block(void)
{
    static const size_t Ns[] = {0, 1, 4095, 4096, 4097, 131072, 131073, 131135, 131136,
                                131137, 1000000, 123456789};
    size_t i, bad = 0;
    for (i = 0; i < sizeof Ns / sizeof *Ns; i++) {
        const size_t N = Ns[i], b = sl_mean_block(N), nblk = (N + b - 1) / b;
        /* the smallest multiple of 64 that is >= 4096 and >= N / 32 */
        size_t want = 4096;
        while (want * SL_MEAN_BLOCKS_MAX < N)
            want += 64;
        bad += b != want || b % 64 != 0 || nblk > SL_MEAN_BLOCKS_MAX;
    }
    CHECK(bad == 0, "sl_mean_block: %lu sizes off the stated rule", (unsigned long)bad);
    CHECK(sl_mean_block(131072) == 4096 && sl_mean_block(131073) == 4160,
          "sl_mean_block(131072) %lu, (131073) %lu; expected 4096, 4160",
          (unsigned long)sl_mean_block(131072), (unsigned long)sl_mean_block(131073));
}

int main(void)
{
    static const size_t fixed_N[] = {1, 2, 3, 5, 47, 48, 49, 50, 64, 100,
                                     1023, 1024, 1025, 4096, 10000, 50000};
    static const size_t incs[] = {1, 1, 2, 3, 7};
    static const size_t qincs[] = {1, 1, 2, 5};
    const size_t nfixed = sizeof fixed_N / sizeof fixed_N[0];
    unsigned id = 0;
    size_t i;
    int wk, vk;
    sl_stream s;

    check_by_hand();
    check_means_rows();
    check_mean_block();
    check_no_weight();
    check_wide_mean();

    sl_stream_init(&s, 7u, 0, 0, SL_PURPOSE_USER);
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
                if (c.N >= 10000 && (wk == W_UNIFORM || wk == W_INV_N) &&
                    vk == V_NORMAL)
                    c.nq = 40;
                run_case(id++, &c);
            }
    /* ... and random sizes, log-uniform on 1 .. 5e4 */
    for (i = 0; i < 400; i++) {
        spec c;
        c.N = (size_t)exp(sl_stream_uniform(&s) * log(5e4));
        c.wk = (int)(W_KINDS * sl_stream_uniform(&s));
        c.vk = (int)(V_KINDS * sl_stream_uniform(&s));
        c.inc = incs[(size_t)(5 * sl_stream_uniform(&s))];
        c.qinc = qincs[(size_t)(4 * sl_stream_uniform(&s))];
        c.nq = (size_t)(10 * sl_stream_uniform(&s));
        run_case(id++, &c);
    }
    CHECK_DONE("test_stats");
}
