/* test_resample.c - the four resampling schemes: known offspring, the
 * floor/ceil property of systematic resampling, unbiasedness (exact
 * binomial tests), zero weights, reproducibility and every error reason. */
#include "check.h"
#include "sluice/resample.h"
#include "sluice/weights.h"

#include <stdint.h>
#include <stdlib.h>
#include <gsl/gsl_cdf.h>

static const sl_resampler *const schemes[4] = {
    &sl_resampler_systematic, &sl_resampler_stratified,
    &sl_resampler_residual, &sl_resampler_multinomial};

/* sl_resample with a workspace of the size the scheme asks for. */
static sl_status draw(const sl_resampler *sc, size_t N, const double *w,
                      size_t M, uint64_t seed, uint32_t cycle, uint32_t *anc,
                      sl_error *err)
{
    size_t nw = sl_resample_workspace(sc, N, M);
    double *work = nw ? ck_malloc(nw * sizeof *work) : NULL;
    sl_status st;
    if (nw && work == NULL)
        return SL_ENOMEM;
    st = sl_resample(sc, N, w, M, seed, cycle, work, anc, err);
    ck_free(work);
    return st;
}

/* Offspring counts n[0..N-1] of ancestors anc[0..M-1]; returns the number
 * of ancestors outside 0..N-1. */
static size_t offspring(size_t N, size_t M, const uint32_t *anc, unsigned *n)
{
    size_t i, bad = 0;
    for (i = 0; i < N; i++)
        n[i] = 0;
    for (i = 0; i < M; i++) {
        if (anc[i] < N)
            n[anc[i]]++;
        else
            bad++;
    }
    return bad;
}

static int sorted(const uint32_t *a, size_t n)
{
    size_t i;
    for (i = 1; i < n; i++)
        if (a[i] < a[i - 1])
            return 0;
    return 1;
}

/* Two-sided exact binomial p-value of x successes in n trials (GSL's
 * binomial CDF). */
static double binom_pvalue(unsigned x, double p, unsigned n)
{
    double lo, hi, pv;
    if (p <= 0)
        return x == 0 ? 1 : 0;
    if (p >= 1)
        return x == n ? 1 : 0;
    lo = gsl_cdf_binomial_P(x, p, n);
    hi = x == 0 ? 1 : gsl_cdf_binomial_Q(x - 1, p, n);
    pv = 2 * (lo < hi ? lo : hi);
    return pv > 1 ? 1 : pv;
}

/* floor / ceil of x = M w_i / wsum; within 1e-9 of a whole number the
 * rounding of the running sums may fall either way, so allow one more. */
static void bounds(double x, double *lo, double *hi)
{
    double r = nearbyint(x);
    if (fabs(x - r) < 1e-9) {
        *lo = r > 0 ? r - 1 : 0;
        *hi = r + 1;
    } else {
        *lo = floor(x);
        *hi = ceil(x);
    }
}

/* One configuration of the unbiasedness test: R repetitions (cycles) of
 * each scheme on weights w with M draws. Returns the number of binomial
 * tests done; a test fails when its p-value is below `alpha`. */
static unsigned unbiased(size_t N, const double *w, size_t M, unsigned R,
                         uint64_t seed, double alpha)
{
    enum { NM = 16, MM = 16 };
    double wsum = 0, x[NM], cum[NM + 1];
    unsigned n[NM], tests = 0, rep;
    uint32_t anc[MM];
    size_t i, k;
    sl_error err;

    for (i = 0; i < N; i++)
        wsum += w[i];
    cum[0] = 0;
    for (i = 0; i < N; i++) {
        x[i] = (double)M * w[i] / wsum; /* expected offspring */
        cum[i + 1] = cum[i] + x[i];
    }

    /* Systematic: N_i is floor(x_i) + B_i with B_i ~ Bernoulli(frac x_i),
     * so the number of repetitions with the extra offspring is
     * Binomial(R, frac x_i); this is E[N_i] = x_i. */
    {
        unsigned up[NM] = {0}, outside = 0;
        for (rep = 0; rep < R; rep++) {
            draw(&sl_resampler_systematic, N, w, M, seed, rep, anc, &err);
            offspring(N, M, anc, n);
            for (i = 0; i < N; i++) {
                double f = floor(x[i]);
                if (n[i] == f + 1)
                    up[i]++;
                else if (n[i] != f)
                    outside++;
            }
        }
        CHECK(outside == 0, "systematic: %u counts outside floor/ceil", outside);
        for (i = 0; i < N; i++, tests++) {
            double p = x[i] - floor(x[i]);
            double pv = binom_pvalue(up[i], p, R);
            CHECK(pv >= alpha, "systematic M=%zu member %zu: %u of %u up, "
                  "expected p=%.4f (p-value %.3g)", M, i, up[i], R, p, pv);
        }
    }

    /* Stratified: ancestor k lies in stratum [k, k+1) of the scale where
     * member i owns [cum_i, cum_{i+1}); P(anc_k = i) is the overlap, and
     * the count over R repetitions is Binomial(R, overlap). Summing over k
     * gives E[N_i] = x_i. */
    {
        static unsigned hits[MM][NM];
        memset(hits, 0, sizeof hits);
        for (rep = 0; rep < R; rep++) {
            draw(&sl_resampler_stratified, N, w, M, seed + 1, rep, anc, &err);
            for (k = 0; k < M; k++)
                if (anc[k] < N)
                    hits[k][anc[k]]++;
        }
        for (k = 0; k < M; k++)
            for (i = 0; i < N; i++, tests++) {
                double a = cum[i] > (double)k ? cum[i] : (double)k;
                double b = cum[i + 1] < (double)(k + 1) ? cum[i + 1] : (double)(k + 1);
                double p = b > a ? b - a : 0;
                double pv = binom_pvalue(hits[k][i], p, R);
                CHECK(pv >= alpha, "stratified M=%zu stratum %zu member %zu: "
                      "%u of %u, expected p=%.4f (p-value %.3g)", M, k, i,
                      hits[k][i], R, p, pv);
            }
    }

    /* Residual: floor(x_i) copies always; the R_res = M - sum floor draws
     * left are multinomial on the residuals, so the total extra count over
     * R repetitions is Binomial(R R_res, frac(x_i) / R_res). */
    {
        unsigned extra[NM] = {0}, low = 0, unsorted = 0, det = 0;
        for (i = 0; i < N; i++)
            det += (unsigned)floor(x[i]);
        for (rep = 0; rep < R; rep++) {
            draw(&sl_resampler_residual, N, w, M, seed + 2, rep, anc, &err);
            offspring(N, M, anc, n);
            unsorted += !sorted(anc, det) || !sorted(anc + det, M - det);
            for (i = 0; i < N; i++) {
                if (n[i] < floor(x[i]))
                    low++;
                else
                    extra[i] += n[i] - (unsigned)floor(x[i]);
            }
        }
        CHECK(low == 0, "residual: %u counts below floor", low);
        CHECK(unsorted == 0, "residual: %u outputs not copies-then-sorted",
              unsorted);
        for (i = 0; i < N; i++, tests++) {
            unsigned Rres = (unsigned)M - det;
            double p = Rres ? (x[i] - floor(x[i])) / Rres : 0;
            double pv = binom_pvalue(extra[i], p, R * Rres);
            CHECK(pv >= alpha, "residual M=%zu member %zu: %u extra in %u "
                  "draws, expected p=%.4f (p-value %.3g)", M, i, extra[i],
                  R * Rres, p, pv);
        }
    }

    /* Multinomial: M independent draws, so member i's total over R
     * repetitions is Binomial(R M, w_i / wsum). */
    {
        unsigned tot[NM] = {0}, unsorted = 0;
        for (rep = 0; rep < R; rep++) {
            draw(&sl_resampler_multinomial, N, w, M, seed + 3, rep, anc, &err);
            offspring(N, M, anc, n);
            unsorted += !sorted(anc, M);
            for (i = 0; i < N; i++)
                tot[i] += n[i];
        }
        CHECK(unsorted == 0, "multinomial: %u outputs not sorted", unsorted);
        for (i = 0; i < N; i++, tests++) {
            double pv = binom_pvalue(tot[i], w[i] / wsum, R * (unsigned)M);
            CHECK(pv >= alpha, "multinomial M=%zu member %zu: %u of %u, "
                  "expected p=%.4f (p-value %.3g)", M, i, tot[i],
                  R * (unsigned)M, w[i] / wsum, pv);
        }
    }
    return tests;
}

int main(void)
{
    enum { BIG = 100000 };
    static double wb[BIG], cb[BIG];
    static uint32_t ab[BIG], bb[BIG];
    uint32_t anc[200];
    unsigned n[64];
    sl_error err;
    sl_status st;
    size_t i, k, s;

    /* Names and workspace sizes. */
    for (s = 0; s < 4; s++)
        CHECK(sl_resampler_find(schemes[s]->name) == schemes[s],
              "find %s", schemes[s]->name);
    CHECK(sl_resampler_find("bogus") == NULL, "unknown name");
    CHECK(sl_resampler_find(NULL) == NULL, "NULL name");
    CHECK(strcmp(sl_resampler_systematic.name, "systematic") == 0 &&
              strcmp(sl_resampler_stratified.name, "stratified") == 0 &&
              strcmp(sl_resampler_residual.name, "residual") == 0 &&
              strcmp(sl_resampler_multinomial.name, "multinomial") == 0,
          "scheme names");
    CHECK(sl_resample_workspace(&sl_resampler_systematic, 10, 7) == 0 &&
              sl_resample_workspace(&sl_resampler_stratified, 10, 7) == 0 &&
              sl_resample_workspace(&sl_resampler_residual, 10, 7) >= 7 &&
              sl_resample_workspace(&sl_resampler_multinomial, 10, 7) >= 7,
          "workspace sizes");

    /* Weights (0.1, 0.2, 0.3, 0.4), N = 10: offspring (1, 2, 3, 4) under
     * systematic and residual resampling (Kitagawa 1996; Douc, Cappe &
     * Moulines 2005), whatever the seed and cycle. */
    {
        const double w4[4] = {0.1, 0.2, 0.3, 0.4};
        unsigned wrong_sys = 0, wrong_res = 0;
        uint64_t seed;
        for (seed = 0; seed < 500; seed++) {
            draw(&sl_resampler_systematic, 4, w4, 10, seed * 7919u,
                 (uint32_t)seed, anc, &err);
            offspring(4, 10, anc, n);
            wrong_sys += !(n[0] == 1 && n[1] == 2 && n[2] == 3 && n[3] == 4) ||
                         !sorted(anc, 10);
            draw(&sl_resampler_residual, 4, w4, 10, seed * 7919u,
                 (uint32_t)seed, anc, &err);
            offspring(4, 10, anc, n);
            wrong_res += !(n[0] == 1 && n[1] == 2 && n[2] == 3 && n[3] == 4);
        }
        CHECK(wrong_sys == 0, "systematic 0.1..0.4: %u of 500 wrong", wrong_sys);
        CHECK(wrong_res == 0, "residual 0.1..0.4: %u of 500 wrong", wrong_res);
    }

    /* Many random weight vectors and seeds: systematic gives floor(M w_i)
     * or ceil(M w_i) offspring (Kitagawa 1996); every scheme returns M
     * indices in 0..N-1, never a member of weight zero, sorted (residual:
     * copies in order, then the random part sorted). Weights span
     * near-uniform, very uneven (u^8), ~30% exact zeros and scales 1e-300,
     * 1e290, 1e306 (sums near the largest double) and 1e-318 (subnormal
     * weights); none normalised. */
    {
        sl_stream g;
        unsigned fails[4] = {0, 0, 0, 0}, zero_hit = 0, range = 0, order = 0,
                 resid = 0;
        double w[60];
        size_t trial;
        sl_stream_init(&g, 4242u, 0, 0, SL_PURPOSE_USER);
        for (trial = 0; trial < 4000; trial++) {
            size_t N = 1 + (size_t)(sl_stream_u64(&g) % 60);
            size_t M = 1 + (size_t)(sl_stream_u64(&g) % 200);
            unsigned kind = (unsigned)(trial % 7);
            const double scales[7] = {1, 1, 1, 1e-300, 1e290, 1e-318, 1e306};
            double wsum = 0, scale = scales[kind];
            for (i = 0; i < N; i++) {
                double u = sl_stream_uniform(&g);
                if (kind == 1)
                    u = pow(u, 8);
                if (kind == 2 && sl_stream_uniform(&g) < 0.3)
                    u = 0;
                w[i] = u * scale;
            }
            if (kind == 2)
                w[sl_stream_u64(&g) % N] = 0.5; /* at least one positive */
            for (i = 0; i < N; i++)
                wsum += w[i];
            for (s = 0; s < 4; s++) {
                st = draw(schemes[s], N, w, M, sl_stream_u64(&g),
                          (uint32_t)trial, anc, &err);
                if (st != SL_OK) {
                    fails[s]++;
                    continue;
                }
                range += offspring(N, M, anc, n) != 0;
                for (i = 0; i < N; i++) {
                    double x = (double)M * (w[i] / wsum), lo, hi;
                    bounds(x, &lo, &hi);
                    if (w[i] == 0 && n[i] != 0)
                        zero_hit++;
                    if (s == 0 && (n[i] < lo || n[i] > hi))
                        fails[0]++;
                    if (s == 2 && n[i] < lo)
                        resid++;
                }
                if (s != 2) {
                    order += !sorted(anc, M);
                } else { /* two sorted runs: at most one descent */
                    size_t descents = 0;
                    for (i = 1; i < M; i++)
                        descents += anc[i] < anc[i - 1];
                    order += descents > 1;
                }
            }
        }
        CHECK(fails[0] == 0, "systematic: %u counts outside floor/ceil or failures",
              fails[0]);
        CHECK(fails[1] + fails[2] + fails[3] == 0, "schemes failed: %u %u %u",
              fails[1], fails[2], fails[3]);
        CHECK(zero_hit == 0, "%u zero-weight members chosen", zero_hit);
        CHECK(range == 0, "%u outputs with indices out of range", range);
        CHECK(order == 0, "%u outputs out of order", order);
        CHECK(resid == 0, "residual: %u members below floor(M w)", resid);
    }

    /* Unbiasedness E[N_i] = M w_i / wsum for all four schemes (Douc, Cappe
     * & Moulines 2005) by exact binomial tests. Each test is run at level
     * 1e-6 / K with K the number of tests (Bonferroni), so a correct
     * implementation fails this block with probability at most 1e-6 for a
     * seed chosen at random. */
    {
        const double wa[6] = {2.385, 0.17, 1.0, 0.0, 3.3, 0.61};
        const double wc[3] = {0.7, 0.1, 0.2};
        const unsigned R = 20000;
        /* K = sum over configurations of N (3 + M) */
        const unsigned K = 6 * (3 + 6) + 6 * (3 + 11) + 3 * (3 + 4);
        const double alpha = 1e-6 / K;
        unsigned done = 0;
        done += unbiased(6, wa, 6, R, 1001, alpha);
        done += unbiased(6, wa, 11, R, 2002, alpha);
        done += unbiased(3, wc, 4, R, 3003, alpha);
        CHECK(done == K, "unbiasedness: %u tests, expected %u", done, K);
    }

    /* Systematic and stratified against their definition, at N = M = 1e5:
     * positions (k + u_k) wsum / M with the uniforms of stream (seed,
     * member 0, cycle, resample), each mapped by binary search to the
     * first member whose running sum exceeds it. */
    {
        sl_stream g, r;
        double wsum = 0;
        size_t mism[2] = {0, 0};
        sl_stream_init(&g, 77u, 0, 0, SL_PURPOSE_USER);
        for (i = 0; i < BIG; i++) {
            double u = sl_stream_uniform(&g);
            wb[i] = u < 0.2 ? 0 : u * u;
            wsum += wb[i];
            cb[i] = wsum;
        }
        for (s = 0; s < 2; s++) {
            double u = 0;
            st = draw(schemes[s], BIG, wb, BIG, 31337u, 5, ab, &err);
            CHECK(st == SL_OK, "definition %s: status %d", schemes[s]->name,
                  (int)st);
            sl_stream_init(&r, 31337u, 0, 5, SL_PURPOSE_RESAMPLE);
            for (k = 0; k < BIG; k++) {
                size_t lo = 0, hi = BIG - 1;
                double pos;
                if (s == 1 || k == 0)
                    u = sl_stream_uniform(&r);
                pos = ((double)k + u) * (wsum / BIG);
                while (lo < hi) { /* first i with cb[i] > pos */
                    size_t mid = lo + (hi - lo) / 2;
                    if (cb[mid] > pos)
                        hi = mid;
                    else
                        lo = mid + 1;
                }
                mism[s] += ab[k] != lo;
            }
            CHECK(mism[s] == 0, "%s: %zu ancestors differ from the definition",
                  schemes[s]->name, mism[s]);
        }
    }

    /* Weights need not be normalised: scaling by 2^10 (exact) changes
     * nothing. */
    for (s = 0; s < 4; s++) {
        static double ws[BIG];
        for (i = 0; i < 1000; i++)
            ws[i] = wb[i] * 1024;
        draw(schemes[s], 1000, wb, 1500, 9u, 2, ab, &err);
        draw(schemes[s], 1000, ws, 1500, 9u, 2, bb, &err);
        CHECK(memcmp(ab, bb, 1500 * sizeof *ab) == 0, "%s: scaled weights",
              schemes[s]->name);
    }

    /* Same seed and cycle -> identical ancestors; another cycle or seed ->
     * different ones. sl_resample uses stream (seed, 0, cycle, resample). */
    for (s = 0; s < 4; s++) {
        sl_stream r;
        double work[BIG / 10];
        draw(schemes[s], 1000, wb, 1000, 123u, 4, ab, &err);
        draw(schemes[s], 1000, wb, 1000, 123u, 4, bb, &err);
        CHECK(memcmp(ab, bb, 1000 * sizeof *ab) == 0, "%s: same seed, cycle",
              schemes[s]->name);
        draw(schemes[s], 1000, wb, 1000, 123u, 5, bb, &err);
        CHECK(memcmp(ab, bb, 1000 * sizeof *ab) != 0, "%s: other cycle",
              schemes[s]->name);
        draw(schemes[s], 1000, wb, 1000, 124u, 4, bb, &err);
        CHECK(memcmp(ab, bb, 1000 * sizeof *ab) != 0, "%s: other seed",
              schemes[s]->name);
        sl_stream_init(&r, 123u, 0, 4, SL_PURPOSE_RESAMPLE);
        {
            double ws = 0;
            for (i = 0; i < 1000; i++)
                ws += wb[i];
            schemes[s]->run(1000, wb, ws, 1000, &r, work, bb);
        }
        CHECK(memcmp(ab, bb, 1000 * sizeof *ab) == 0,
              "%s: sl_resample = run on stream (seed, 0, cycle, resample)",
              schemes[s]->name);
    }

    /* A single member, and M = 1. */
    for (s = 0; s < 4; s++) {
        const double one[1] = {0.3}, two[2] = {0.0, 2.0};
        st = draw(schemes[s], 1, one, 7, 1u, 1, anc, &err);
        CHECK(st == SL_OK && anc[0] == 0 && anc[6] == 0, "%s: N = 1",
              schemes[s]->name);
        st = draw(schemes[s], 2, two, 1, 1u, 1, anc, &err);
        CHECK(st == SL_OK && anc[0] == 1, "%s: M = 1", schemes[s]->name);
    }

    /* Every error reason. */
    {
        double w[3] = {0.2, 0.5, 0.3};
        st = draw(&sl_resampler_systematic, 0, w, 3, 1u, 0, anc, &err);
        CHECK(st == SL_EINVAL && strcmp(err.reason, "badsize") == 0,
              "N = 0: %s", err.reason);
        st = draw(&sl_resampler_systematic, 3, w, 0, 1u, 0, anc, &err);
        CHECK(st == SL_EINVAL && strcmp(err.reason, "badsize") == 0,
              "M = 0: %s", err.reason);
        st = sl_resample(&sl_resampler_systematic, 3, w,
                         SL_RESAMPLE_MAX + 1, 1u, 0, NULL, anc, &err);
        CHECK(st == SL_EINVAL && strcmp(err.reason, "badsize") == 0,
              "M too large: %s", err.reason);
        st = sl_resample(&sl_resampler_systematic, SL_RESAMPLE_MAX + 1, w, 3,
                         1u, 0, NULL, anc, &err);
        CHECK(st == SL_EINVAL && strcmp(err.reason, "badsize") == 0,
              "N too large: %s", err.reason);
        st = sl_resample(NULL, 3, w, 3, 1u, 0, NULL, anc, &err);
        CHECK(st == SL_EINVAL && strcmp(err.reason, "badscheme") == 0,
              "NULL scheme: %s", err.reason);
        for (s = 0; s < 4; s++) {
            w[1] = NAN;
            st = draw(schemes[s], 3, w, 3, 1u, 0, anc, &err);
            CHECK(st == SL_EINVAL && strcmp(err.reason, "badweight") == 0 &&
                      strstr(err.message, "2 of 3") != NULL,
                  "%s NaN weight: %s: %s", schemes[s]->name, err.reason,
                  err.message);
            w[1] = -0.5;
            st = draw(schemes[s], 3, w, 3, 1u, 0, anc, &err);
            CHECK(st == SL_EINVAL && strcmp(err.reason, "badweight") == 0,
                  "%s negative weight: %s", schemes[s]->name, err.reason);
            w[1] = INFINITY;
            st = draw(schemes[s], 3, w, 3, 1u, 0, anc, &err);
            CHECK(st == SL_EINVAL && strcmp(err.reason, "badweight") == 0,
                  "%s infinite weight: %s", schemes[s]->name, err.reason);
            w[0] = w[1] = w[2] = 0;
            st = draw(schemes[s], 3, w, 3, 1u, 0, anc, &err);
            CHECK(st == SL_EDEGENERATE && strcmp(err.reason, "zeroweights") == 0,
                  "%s zero weights: %s", schemes[s]->name, err.reason);
            w[0] = 0.2;
            w[1] = 0.5;
            w[2] = 0.3;
        }
    }

    /* Extreme sums: every weight the smallest subnormal, or a sum within
     * a factor 2 of the largest double; each scheme terminates with valid
     * ancestors, and systematic gives each member M/N copies exactly. */
    {
        double w[8];
        for (s = 0; s < 4; s++) {
            for (i = 0; i < 8; i++)
                w[i] = i % 2 ? 4.9e-324 : 0;
            st = draw(schemes[s], 8, w, 12, 5u, 1, anc, &err);
            offspring(8, 12, anc, n);
            CHECK(st == SL_OK && n[0] + n[2] + n[4] + n[6] == 0,
                  "%s: subnormal weights", schemes[s]->name);
            if (s == 0)
                CHECK(n[1] == 3 && n[3] == 3 && n[5] == 3 && n[7] == 3,
                      "systematic subnormal: %u %u %u %u", n[1], n[3], n[5],
                      n[7]);
            for (i = 0; i < 8; i++)
                w[i] = 1.1e308 / 8;
            st = draw(schemes[s], 8, w, 16, 5u, 1, anc, &err);
            offspring(8, 16, anc, n);
            for (i = 0; i < 8 && (s == 3 || n[i] == 2); i++)
                ;
            CHECK(st == SL_OK && i == 8, "%s: sum near the largest double",
                  schemes[s]->name);
        }
    }

    /* Residual with equal weights 1/N that do not sum to exactly one:
     * one copy each, nothing left to chance. */
    {
        double w[49];
        for (i = 0; i < 49; i++)
            w[i] = 1.0 / 49;
        for (k = 0; k < 20; k++) {
            draw(&sl_resampler_residual, 49, w, 49, k, 0, anc, &err);
            for (i = 0; i < 49 && anc[i] == i; i++)
                ;
            CHECK(i == 49, "residual equal weights: seed %zu differs at %zu",
                  k, i);
        }
    }
    CHECK_DONE("test_resample");
}
