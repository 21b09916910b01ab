/* test_stats_bits.c - sl_weighted_summary against the bucket selection it
 * replaced (kept verbatim in stats_reference.h): the same doubles, bit for
 * bit, for the
 * means and every quantile, on many random inputs (sizes 1..5000, ties,
 * repeated values, zero weights, equal weights, -0.0 and +0.0, values
 * spread over many orders of magnitude or over a range wider than the
 * largest double, infinities, subnormal spreads, many levels). Then the
 * means of many rows of an ensemble matrix: sl_weighted_means against the
 * previous one (also in stats_reference.h), bit for bit. */
#include "check.h"
#include "sluice/rng.h"
#include "sluice/stats.h"

#include <float.h>
#include <stdint.h>
#include <stdlib.h>

#include "stats_reference.h"

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
    if (c->with_mean) {
        /* the mean by the summing blocks of stats.h; up to one block
         * (4096 members) also the previous routine's, bit for bit */
        const double mb = reference_blocked_mean(N, x, inc, w);
        CHECK(memcmp(&mean, &mb, sizeof mean) == 0 &&
                  (N > 4096 || memcmp(&mean, &mref, sizeof mean) == 0),
              "case %u (N=%lu, weights %d, values %d): mean %.17g, the blocked reference "
              "%.17g, the previous %.17g",
              id, (unsigned long)N, c->wk, c->vk, mean, mb, mref);
    }
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
    double *work = ck_malloc(sl_quantile_workspace(4) * sizeof *work);
    double *rw = ck_malloc(reference_workspace(4) * sizeof *rw);
    double q[2], r[2];
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
    ck_free(work);
    ck_free(rw);
}

/* ------------------------------------------------ rows of an ensemble */

static unsigned long rows_cases_run = 0;

/* One matrix case: ld x N (a member per column), m of its rows (every
 * row, rows NULL, or an increasing subset named with an offset base),
 * each row of its own value kind; members of weight 0 hold junk in every
 * row. The means of sl_weighted_means against the blocked reference
 * (and, up to one summing block, the previous sl_weighted_means): the
 * same bits, on 1 thread and on `threads`; entries of other rows
 * untouched. */
static void run_rows_case(unsigned id, size_t N, size_t ld, int wk, int subset, int threads)
{
    const double sentinel = -6.5e99;
    const size_t base = subset ? 3 : 0;
    sl_stream s;
    double *x = ck_malloc((ld * N + 1) * sizeof *x);
    double *w = ck_malloc((N + 1) * sizeof *w);
    double *m1 = ck_malloc((ld + 1) * sizeof *m1);
    double *m2 = ck_malloc((ld + 1) * sizeof *m2);
    double *mref = ck_malloc((ld + 1) * sizeof *mref);
    size_t *rows = ck_malloc((ld + 1) * sizeof *rows);
    double pool[20];
    size_t i, j, k, m = 0, npool, bad_mean = 0, first_bad = 0;

    sl_stream_init(&s, 20261204u, id, 0, SL_PURPOSE_USER);
    npool = 1 + (size_t)(20.0 * sl_stream_uniform(&s));
    for (k = 0; k < npool; k++)
        pool[k] = sl_stream_normal(&s);
    draw_weights(&s, wk, N, w);
    if (sl_stream_uniform(&s) < 0.05)
        for (j = 0; j < N; j++)
            w[j] = 0.0; /* no member of positive weight: NaN means */
    for (i = 0; i < ld; i++) {
        int vk = (int)(V_KINDS * sl_stream_uniform(&s));
        for (j = 0; j < N; j++)
            x[i + j * ld] = w[j] > 0 ? draw_value(&s, vk, pool, npool) : junk_value(&s);
        if (!subset || sl_stream_uniform(&s) < 0.6)
            rows[m++] = i + base;
    }
    for (i = 0; i < ld; i++)
        m1[i] = m2[i] = mref[i] = sentinel;
    reference_weighted_means(N, x, ld, m, subset ? rows : NULL, base, w, mref);
    sl_weighted_means(N, x, ld, m, subset ? rows : NULL, base, w, m1, 1);
    sl_weighted_means(N, x, ld, m, subset ? rows : NULL, base, w, m2, threads);
    rows_cases_run++;
    for (i = 0, k = 0; i < ld; i++) {
        /* each listed row: the blocked reference; up to one summing block
         * also the previous routine's bits; any thread count the same */
        int listed = k < m && (subset ? rows[k] - base : k) == i, ok;
        if (listed) {
            const double mb = reference_blocked_mean(N, x + i, ld, w);
            k++;
            ok = memcmp(&m1[i], &mb, sizeof mb) == 0 &&
                 (N > 4096 || memcmp(&m1[i], &mref[i], sizeof mb) == 0);
        } else {
            ok = m1[i] == sentinel && mref[i] == sentinel;
        }
        ok = ok && memcmp(&m1[i], &m2[i], sizeof *m1) == 0;
        if (!ok && bad_mean++ == 0)
            first_bad = i;
    }
    CHECK(bad_mean == 0,
          "rows case %u (N=%lu, ld %lu, %lu rows, weights %d, %d threads): %lu means differ "
          "from the references; row %lu gives %.17g (%.17g on %d threads), the previous "
          "routine %.17g",
          id, (unsigned long)N, (unsigned long)ld, (unsigned long)m, wk, threads,
          (unsigned long)bad_mean, (unsigned long)first_bad, m1[first_bad], m2[first_bad],
          threads, mref[first_bad]);
    ck_free(x);
    ck_free(w);
    ck_free(m1);
    ck_free(m2);
    ck_free(mref);
    ck_free(rows);
}

static void check_rows(void)
{
    static const size_t fixed_N[] = {1, 2, 3, 7, 64, 1000, 5000};
    static const size_t lds[] = {1, 2, 7, 63, 64, 65, 130};
    static const size_t big_N[] = {4095, 4096, 4097, 8192, 8193, 20001, 131072, 131073,
                                   200003};
    const unsigned nrandom = check_light_() ? 40u : 400u;
    unsigned id = 0, i, l;
    sl_stream s;
    sl_stream_init(&s, 12u, 0, 0, SL_PURPOSE_USER);
    /* every stride at each fixed size, with every row and with a
     * subset ... */
    for (i = 0; i < sizeof fixed_N / sizeof fixed_N[0]; i++)
        for (l = 0; l < sizeof lds / sizeof lds[0]; l++) {
            int wk = (int)(W_KINDS * sl_stream_uniform(&s));
            if (fixed_N[i] * lds[l] > 100000)
                continue;
            run_rows_case(id++, fixed_N[i], lds[l], wk, 0, 2);
            run_rows_case(id++, fixed_N[i], lds[l], (wk + 1) % W_KINDS, 1, 3);
        }
    /* ... random sizes, log-uniform on 1 .. 5000 ... */
    for (i = 0; i < nrandom; i++) {
        size_t N = (size_t)exp(sl_stream_uniform(&s) * log(5001.0));
        size_t ld = lds[(size_t)(7 * sl_stream_uniform(&s))];
        int wk = (int)(W_KINDS * sl_stream_uniform(&s));
        if (N * ld > 200000)
            ld = 7;
        run_rows_case(id++, N, ld, wk, sl_stream_uniform(&s) < 0.5, 2);
    }
    /* ... and many summing blocks: at the edges of a block, and where
     * the block grows past 4096 members (N > 32 * 4096) */
    for (i = 0; i < sizeof big_N / sizeof big_N[0]; i++) {
        int wk = (int)(W_KINDS * sl_stream_uniform(&s));
        run_rows_case(id++, big_N[i], i % 2 ? 3 : 1, wk, (int)(i % 2), 2 + (int)(i % 3));
    }
    CHECK(rows_cases_run == id, "%lu of %u rows cases ran", rows_cases_run, id);
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
    check_rows();
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
