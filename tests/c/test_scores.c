/* test_scores.c - ensemble CRPS and observation ranks: hand-computed cases,
 * the Gaussian closed form, the naive double sum, and rank histograms; the
 * weighted CRPS against its defining double sum and a two-point ensemble;
 * the weighted mean and variance against a hand-computed case and GSL;
 * NSE and KGE against hand-computed cases and their definitions. */
#include "check.h"
#include "sluice/scores.h"
#include "sluice/rng.h"

#include <stdint.h>
#include <stdlib.h>
#include <time.h>
#include <gsl/gsl_cdf.h>
#include <gsl/gsl_randist.h>
#include <gsl/gsl_math.h>
#include <gsl/gsl_statistics_double.h>

/* CRPS of N(mu, s^2) at y: s [z (2 Phi(z) - 1) + 2 phi(z) - 1/sqrt(pi)],
 * z = (y - mu)/s (Gneiting & Raftery 2007), with GSL's Phi and phi. */
static double crps_gauss(double mu, double s, double y)
{
    double z = (y - mu) / s;
    return s * (z * (2 * gsl_cdf_ugaussian_P(z) - 1) +
                2 * gsl_ran_ugaussian_pdf(z) - 1 / sqrt(M_PI));
}

/* The estimator by its definition, the O(N^2) double sum:
 * (1/N) sum |x_j - y| - (1/(2 N^2)) sum_{j,k} |x_j - x_k|. */
static double crps_naive(size_t N, const double *x, size_t inc, double y)
{
    size_t j, k;
    double a = 0, b = 0;
    for (j = 0; j < N; j++) {
        a += fabs(x[j * inc] - y);
        for (k = 0; k < N; k++)
            b += fabs(x[j * inc] - x[k * inc]);
    }
    return a / (double)N - b / (2.0 * (double)N * (double)N);
}

/* The weighted CRPS by its definition (Gneiting & Raftery 2007, JASA 102,
 * 359, eq. 20 with the weighted empirical distribution for F):
 * E_w|X - y| - (1/2) E_w|X - X'| = sum_j w_j |x_j - y|
 * - (1/2) sum_{j,k} w_j w_k |x_j - x_k|, weights normalised, O(N^2). */
static double crps_weighted_naive(size_t N, const double *x, size_t inc,
                                  const double *w, double y)
{
    size_t j, k;
    double a = 0, b = 0, tw = 0;
    for (j = 0; j < N; j++)
        tw += w[j];
    for (j = 0; j < N; j++) {
        a += w[j] / tw * fabs(x[j * inc] - y);
        for (k = 0; k < N; k++)
            b += w[j] / tw * w[k] / tw * fabs(x[j * inc] - x[k * inc]);
    }
    return a - 0.5 * b;
}

/* Pearson's chi-square statistic of counts against equal expectation. */
static double chi_square_flat(size_t K, const double *counts, double total)
{
    size_t k;
    double e = total / (double)K, c2 = 0;
    for (k = 0; k < K; k++)
        c2 += (counts[k] - e) * (counts[k] - e) / e;
    return c2;
}

static double now(void)
{
    struct timespec t;
    clock_gettime(CLOCK_MONOTONIC, &t);
    return (double)t.tv_sec + 1e-9 * (double)t.tv_nsec;
}

int main(void)
{
    sl_error err;
    sl_stream s;
    size_t i, j;

    /* Hand-computed: members {1, 2, 4}, y = 3.
     * E|X - y| = (2 + 1 + 1)/3 = 4/3; pairs |1-2| + |1-4| + |2-4| = 6, so
     * (1/(2*9)) * 2 * 6 = 2/3; CRPS = 4/3 - 2/3 = 2/3. The same from the
     * integral of (F - H(x - 3))^2 over the steps of the empirical F:
     * (1/3)^2 + (2/3)^2 + (1/3)^2 = 6/9. With y = 0: 7/3 - 2/3 = 5/3
     * (integral 1 + 4/9 + 2 * 1/9). A single member: CRPS = |x - y|. */
    {
        double X[3] = {4, 1, 2}, y[3] = {3, 0, NAN}, c[3], w[3];
        CHECK(sl_scores_crps(1, 3, X, 1, y, c, w, &err) == SL_OK, "hand 1");
        CHECK_CLOSE(c[0], 2.0 / 3.0, 1e-15, "crps {1,2,4} at 3 (by hand)");
        CHECK(sl_scores_crps(1, 3, X, 1, y + 1, c, w, &err) == SL_OK, "hand 2");
        CHECK_CLOSE(c[0], 5.0 / 3.0, 1e-15, "crps {1,2,4} at 0 (by hand)");
        CHECK(sl_scores_crps(1, 3, X, 1, y + 2, c, w, &err) == SL_OK, "hand 3");
        CHECK(isnan(c[0]), "NaN observation gives NaN score, got %g", c[0]);
        CHECK(sl_scores_crps(1, 1, X, 1, y, c, w, &err) == SL_OK, "one member");
        CHECK_CLOSE(c[0], 1.0, 0, "one member: |x - y|");
    }

    /* The O(N log N) formula against the naive double sum on random cases:
     * several rows, a leading dimension above m, ties, a large offset, and
     * orders that stress the sort (sorted, reversed, constant, organ pipe). */
    {
        enum { M = 5, LD = 7, NMAX = 1500 };
        static double X[LD * NMAX], w[NMAX];
        double y[M], c[M];
        size_t sizes[] = {1, 2, 3, 5, 16, 17, 40, 333, NMAX};
        size_t t, worst_case = 0;
        double worst = 0;
        sl_stream_init(&s, 777u, 0, 0, SL_PURPOSE_USER);
        for (t = 0; t < sizeof sizes / sizeof *sizes; t++) {
            size_t N = sizes[t];
            for (j = 0; j < N; j++) {
                X[0 + j * LD] = 2.385 * sl_stream_normal(&s);          /* random */
                X[1 + j * LD] = floor(4 * sl_stream_uniform(&s));      /* ties */
                X[2 + j * LD] = 1e6 + 0.01 * sl_stream_normal(&s);     /* offset */
                X[3 + j * LD] = (double)j;                             /* sorted */
                X[4 + j * LD] = (double)(j < N / 2 ? j : N - j);       /* organ pipe */
                X[5 + j * LD] = -1.0;                                  /* unused */
                X[6 + j * LD] = 0.5;                                   /* unused */
            }
            y[0] = 0.731;
            y[1] = 2;
            y[2] = 1e6 + 0.003;
            y[3] = 0.4 * (double)N;
            y[4] = -3.3;
            CHECK(sl_scores_crps(M, N, X, LD, y, c, w, &err) == SL_OK,
                  "crps N=%lu: %s", (unsigned long)N, err.message);
            for (i = 0; i < M; i++) {
                double ref = crps_naive(N, X + i, LD, y[i]);
                double d = fabs(c[i] - ref) / (fabs(ref) > 1 ? fabs(ref) : 1);
                if (d > worst) {
                    worst = d;
                    worst_case = N;
                }
            }
        }
        /* the offset row loses digits in the naive sum itself (|x - y| is
         * 1e-2 next to 1e6): 1e-9 relative is what both can promise */
        CHECK(worst < 1e-9, "fast vs naive: worst relative difference %g (N=%lu)",
              worst, (unsigned long)worst_case);
        /* reversed and constant rows */
        for (t = 0; t < 2; t++) {
            size_t N = NMAX;
            for (j = 0; j < N; j++)
                X[j] = t == 0 ? (double)(N - j) : 1.25;
            y[0] = 100.5;
            CHECK(sl_scores_crps(1, N, X, 1, y, c, w, &err) == SL_OK, "crps rev");
            CHECK_REL(c[0], crps_naive(N, X, 1, y[0]), 1e-12,
                      t == 0 ? "reversed vs naive" : "constant vs naive");
        }
    }

    /* Against the Gaussian closed form (Gneiting & Raftery 2007; N(0,1) at
     * y = 0: (sqrt(2) - 1)/sqrt(pi) = 0.2336949773). Members are drawn from
     * the forecast distribution itself. The estimator (the CRPS of the
     * empirical distribution) is biased: its expectation is
     * CRPS + E|X - X'|/(2N) = CRPS + s/(N sqrt(pi)) for N(mu, s^2); its
     * standard deviation falls as 1/sqrt(N).
     * (a) R = 2000 rows of N = 1000 members: the mean over rows matches
     *     CRPS + bias within 4 standard errors of that mean.
     * (b) One row each of N = 1e4, 1e5, 1e6: within bias + 5 standard
     *     deviations, the standard deviation scaled from (a) by sqrt(1e3/N). */
    {
        enum { R = 2000, NA = 1000, NB = 1000000 };
        static double X[(size_t)R * NA], w[NB], c[R], y[R];
        double ref0 = crps_gauss(0, 1, 0), mean = 0, var = 0, sd1000, bias;
        CHECK_CLOSE(ref0, (sqrt(2.0) - 1) / sqrt(M_PI), 1e-15,
                    "closed form at N(0,1), y = 0");
        CHECK_CLOSE(ref0, 0.2336949773, 1e-10, "0.2336949773 (MODELS.md 5)");
        for (i = 0; i < R; i++) {
            sl_stream_init(&s, 31u, (uint32_t)i, 0, SL_PURPOSE_USER);
            for (j = 0; j < NA; j++)
                X[i + j * R] = sl_stream_normal(&s); /* row i, member j */
            y[i] = 0;
        }
        CHECK(sl_scores_crps(R, NA, X, R, y, c, w, &err) == SL_OK, "crps R rows");
        for (i = 0; i < R; i++)
            mean += c[i];
        mean /= R;
        for (i = 0; i < R; i++)
            var += (c[i] - mean) * (c[i] - mean);
        var /= R - 1;
        sd1000 = sqrt(var);
        bias = 1 / ((double)NA * sqrt(M_PI));
        CHECK_CLOSE(mean, ref0 + bias, 4 * sd1000 / sqrt((double)R),
                    "mean CRPS of 2000 ensembles of 1000 vs closed form + bias");
        printf("N=1000: mean over %d rows %.6f, closed form %.6f, bias %.2e, "
               "sd of one row %.4f\n", R, mean, ref0, bias, sd1000);
        {
            size_t Ns[] = {10000, 100000, NB};
            size_t t;
            for (t = 0; t < 3; t++) {
                size_t N = Ns[t];
                double t0, dt, y0 = 0.0, tol;
                /* also a shifted, scaled case: N(0.3, 2^2) at y = 0.7 */
                double mu = 0.3, sg = 2.0, y1 = 0.7, c1;
                sl_stream_init(&s, 4242u, (uint32_t)t, 0, SL_PURPOSE_USER);
                sl_stream_normals(&s, N, X);
                t0 = now();
                CHECK(sl_scores_crps(1, N, X, 1, &y0, c, w, &err) == SL_OK, "big");
                dt = now() - t0;
                tol = 1 / ((double)N * sqrt(M_PI)) + 5 * sd1000 * sqrt(1e3 / (double)N);
                CHECK_CLOSE(c[0], ref0, tol, "big ensemble vs closed form");
                printf("N=%lu: crps %.7f, closed form %.7f, |diff| %.2e, tol %.2e, "
                       "%.3f s\n", (unsigned long)N, c[0], ref0, fabs(c[0] - ref0),
                       tol, dt);
                for (j = 0; j < N; j++)
                    X[j] = mu + sg * X[j];
                CHECK(sl_scores_crps(1, N, X, 1, &y1, &c1, w, &err) == SL_OK, "big2");
                /* sd scales with the forecast spread sigma; a looser 6 sd
                 * since the spread at z = 0.2 differs a little from z = 0 */
                tol = sg / ((double)N * sqrt(M_PI)) + 6 * sg * sd1000 * sqrt(1e3 / (double)N);
                CHECK_CLOSE(c1, crps_gauss(mu, sg, y1), tol,
                            "big ensemble vs closed form, N(0.3, 4) at 0.7");
            }
        }
    }

    /* Ranks without ties are exact: {1, 2, 4} at 3 -> 3, at 0 -> 1, at 5
     * -> 4 (M members, M + 1 ranks; Hamill 2001). */
    {
        double X[3] = {2, 4, 1}, y[4] = {3, 0, 5, NAN}, r;
        size_t k;
        double want[4] = {3, 1, 4, NAN};
        for (k = 0; k < 4; k++) {
            CHECK(sl_scores_rank(1, 3, X, 1, y + k, 9u, &r, &err) == SL_OK, "rank");
            if (k < 3)
                CHECK(r == want[k], "rank of %g: %g, want %g", y[k], r, want[k]);
            else
                CHECK(isnan(r), "NaN observation gives NaN rank, got %g", r);
        }
    }

    /* Rank histograms over many rows (Hamill 2001). */
    {
        enum { M = 20000, N = 9 };
        static double X[(size_t)M * N], y[M], r[M];
        double counts[N + 1], c2, p, e = (double)M / (N + 1);
        /* (a) ensemble and observation from the same N(0,1): flat. Pearson
         * chi-square with N degrees of freedom, accepted at the 1% level
         * (p from GSL's gsl_cdf_chisq_Q). */
        sl_normals_members(5u, 0, N, 0, SL_PURPOSE_USER, M, X, M);
        sl_stream_init(&s, 6u, 0, 0, SL_PURPOSE_USER);
        sl_stream_normals(&s, M, y);
        CHECK(sl_scores_rank(M, N, X, M, y, 1u, r, &err) == SL_OK, "ranks");
        for (j = 0; j <= N; j++)
            counts[j] = 0;
        for (i = 0; i < M; i++)
            counts[(size_t)r[i] - 1] += 1;
        c2 = chi_square_flat(N + 1, counts, M);
        p = gsl_cdf_chisq_Q(c2, N);
        CHECK(p > 0.01, "reliable ensemble: chi2 %g, p %g (want flat at 1%%)", c2, p);
        printf("flat: chi2 %.2f on %d dof, p %.3f\n", c2, N, p);
        /* (b) under-dispersed ensemble (sd 0.5 for an N(0,1) truth): the
         * end ranks are over-populated, the middle ones under (U shape). */
        for (i = 0; i < (size_t)M * N; i++)
            X[i] *= 0.5;
        CHECK(sl_scores_rank(M, N, X, M, y, 1u, r, &err) == SL_OK, "ranks");
        for (j = 0; j <= N; j++)
            counts[j] = 0;
        for (i = 0; i < M; i++)
            counts[(size_t)r[i] - 1] += 1;
        c2 = chi_square_flat(N + 1, counts, M);
        CHECK(counts[0] > 2 * e && counts[N] > 2 * e,
              "under-dispersed: end ranks %g, %g, expected 2x %g", counts[0],
              counts[N], e);
        CHECK(counts[N / 2] < e, "under-dispersed: middle rank %g >= %g",
              counts[N / 2], e);
        CHECK(gsl_cdf_chisq_Q(c2, N) < 1e-6, "under-dispersed: chi2 %g not rejected", c2);
        printf("U-shape: first %.0f, middle %.0f, last %.0f (flat %.0f)\n",
               counts[0], counts[N / 2], counts[N], e);
    }

    /* Ties broken at random: identical members equal to y spread the rank
     * uniformly over 1..N+1 (chi-square at the 1% level); members {1,2,2,3}
     * at y = 2 give ranks 2, 3, 4 with probability 1/3 each. Ranks are
     * reproducible, depend on the seed, and not on the number of rows. */
    {
        enum { M = 30000, N = 4 };
        static double X[(size_t)M * N], y[M], r[M], r2[M];
        double counts[N + 1], c2, p;
        size_t diff = 0, same = 1;
        for (i = 0; i < (size_t)M * N; i++)
            X[i] = 1.5;
        for (i = 0; i < M; i++)
            y[i] = 1.5;
        CHECK(sl_scores_rank(M, N, X, M, y, 2024u, r, &err) == SL_OK, "ties");
        for (j = 0; j <= N; j++)
            counts[j] = 0;
        for (i = 0; i < M; i++)
            counts[(size_t)r[i] - 1] += 1;
        c2 = chi_square_flat(N + 1, counts, M);
        p = gsl_cdf_chisq_Q(c2, N);
        CHECK(p > 0.01, "all tied: chi2 %g, p %g (want flat at 1%%)", c2, p);
        printf("all tied: chi2 %.2f on %d dof, p %.3f\n", c2, N, p);
        CHECK(sl_scores_rank(M, N, X, M, y, 2024u, r2, &err) == SL_OK, "ties");
        for (i = 0; i < M; i++)
            same &= r[i] == r2[i];
        CHECK(same, "same seed, same ranks");
        CHECK(sl_scores_rank(17, N, X, 17, y, 2024u, r2, &err) == SL_OK, "ties");
        for (i = 0; i < 17; i++)
            same &= r[i] == r2[i];
        CHECK(same, "rank of a row does not depend on the number of rows");
        CHECK(sl_scores_rank(M, N, X, M, y, 2025u, r2, &err) == SL_OK, "ties");
        for (i = 0; i < M; i++)
            diff += r[i] != r2[i];
        CHECK(diff > M / 2, "another seed changes the ranks (%lu differ)",
              (unsigned long)diff);
        for (i = 0; i < M; i++) {
            X[i] = 1;
            X[i + M] = 2;
            X[i + 2 * (size_t)M] = 2;
            X[i + 3 * (size_t)M] = 3;
            y[i] = 2;
        }
        CHECK(sl_scores_rank(M, N, X, M, y, 3u, r, &err) == SL_OK, "partial ties");
        for (j = 0; j <= N; j++)
            counts[j] = 0;
        for (i = 0; i < M; i++)
            counts[(size_t)r[i] - 1] += 1;
        CHECK(counts[0] == 0 && counts[4] == 0, "partial ties: outside 2..4");
        for (j = 1; j <= 3; j++)
            CHECK_CLOSE(counts[j], M / 3.0, 4 * sqrt(M * (1 / 3.0) * (2 / 3.0)),
                        "partial ties: rank 2..4 each 1/3 (binomial sd)");
    }

    /* Errors. */
    {
        double X[4] = {1, NAN, 2, 3}, y[2] = {0, 0}, out[2], w[4];
        CHECK(sl_scores_crps(2, 2, X, 2, y, out, w, &err) == SL_EINVAL &&
                  strcmp(err.reason, "nonfinite") == 0,
              "crps: NaN member -> %s", err.reason);
        CHECK(sl_scores_rank(2, 2, X, 2, y, 1u, out, &err) == SL_EINVAL &&
                  strcmp(err.reason, "nonfinite") == 0,
              "rank: NaN member -> %s", err.reason);
        X[1] = INFINITY;
        CHECK(sl_scores_crps(2, 2, X, 2, y, out, w, &err) == SL_EINVAL,
              "crps: infinite member");
        CHECK(sl_scores_crps(2, 0, X, 2, y, out, w, &err) == SL_EINVAL &&
                  strcmp(err.reason, "empty") == 0, "crps: no members");
        CHECK(sl_scores_rank(2, 0, X, 2, y, 1u, out, &err) == SL_EINVAL,
              "rank: no members");
        CHECK(sl_scores_crps(2, 2, X, 1, y, out, w, &err) == SL_EINVAL &&
                  strcmp(err.reason, "badsize") == 0, "crps: ldx < m");
        CHECK(sl_scores_crps(0, 2, X, 0, y, out, w, &err) == SL_OK, "no rows");
        CHECK(sl_scores_crps_workspace(7) >= 7, "workspace size");
    }

    /* Hydrograph skill. Hand-computed: o = {1, 2, 3, 4}, s = {1.5, 2,
     * 2.5, 5}: mean o 2.5, mean s 2.75, sum (o - mean o)^2 = 5,
     * sum (s - o)^2 = 1.5, sum (s - mean s)^2 = 7.25, sum of the
     * centred products 5.5. NSE = 1 - 1.5/5 = 0.7 (Nash & Sutcliffe
     * 1970); r = 5.5/sqrt(7.25 * 5), alpha = sqrt(7.25/5), beta =
     * 2.75/2.5, KGE = 1 - sqrt((r-1)^2 + (alpha-1)^2 + (beta-1)^2)
     * (Gupta et al. 2009, eq. 9-11). */
    {
        double o[4] = {1, 2, 3, 4}, sm[4] = {1.5, 2, 2.5, 5};
        double r = 5.5 / sqrt(7.25 * 5), a = sqrt(7.25 / 5), b = 1.1;
        double kge = 1 - sqrt((r - 1) * (r - 1) + (a - 1) * (a - 1) + (b - 1) * (b - 1));
        sl_skill k;
        CHECK(sl_scores_skill(4, sm, o, 1, &k, &err) == SL_OK, "skill: ok");
        CHECK_CLOSE(k.nse, 0.7, 1e-15, "skill: hand NSE");
        CHECK_CLOSE(k.r, r, 1e-15, "skill: hand r");
        CHECK_CLOSE(k.alpha, a, 1e-15, "skill: hand alpha");
        CHECK_CLOSE(k.beta, b, 1e-15, "skill: hand beta");
        CHECK_CLOSE(k.kge, kge, 1e-15, "skill: hand KGE");
        CHECK(k.count == 4, "skill: 4 pairs");
    }
    /* Missing observations (NaN) are left out whatever the simulated
     * value beside them; a stride picks every other entry. */
    {
        double o[7] = {NAN, 1, 2, NAN, 3, 4, NAN};
        double sm[7] = {NAN, 1.5, 2, INFINITY, 2.5, 5, 1e300};
        double o2[8] = {1, 9, 2, 9, 3, 9, NAN, 9}, s2[8] = {1.5, 0, 2, 0, 2.5, 0, NAN, 0};
        sl_skill k, k2;
        CHECK(sl_scores_skill(7, sm, o, 1, &k, &err) == SL_OK && k.count == 4,
              "skill: NaN observations left out");
        CHECK_CLOSE(k.nse, 0.7, 1e-15, "skill: NSE with missing rows");
        CHECK(sl_scores_skill(4, s2, o2, 2, &k2, &err) == SL_OK && k2.count == 3,
              "skill: stride 2");
        /* o {1, 2, 3}, s {1.5, 2, 2.5}: sum (s - o)^2 = 0.5, sum (o -
         * mean o)^2 = 2, NSE 0.75; s - mean s = o - mean o halved: r = 1,
         * alpha = 1/2, beta = 1, KGE = 1/2 */
        CHECK_CLOSE(k2.nse, 0.75, 1e-15, "skill: stride NSE");
        CHECK_CLOSE(k2.r, 1, 1e-15, "skill: stride r");
        CHECK_CLOSE(k2.kge, 0.5, 1e-15, "skill: stride KGE");
    }
    /* By the definitions: a perfect simulation scores NSE = KGE = 1; the
     * observed mean as simulation scores NSE = 0 (Nash & Sutcliffe
     * 1970), and has no correlation (r, KGE NaN); s = c o (c > 0) has
     * r = 1, alpha = beta = c, KGE = 1 - sqrt(2) |c - 1| (Gupta et al.
     * 2009, eq. 9). High-entropy series from the stream (seed 7). */
    {
        enum { T = 257 };
        double o[T], sm[T], mean = 0, c = 1.37;
        sl_skill k;
        sl_stream_init(&s, 7u, 0u, 0u, SL_PURPOSE_USER);
        for (i = 0; i < T; i++) {
            o[i] = 3.0 + exp(sl_stream_normal(&s));
            mean += o[i];
        }
        mean /= T;
        CHECK(sl_scores_skill(T, o, o, 1, &k, &err) == SL_OK, "skill: perfect ok");
        CHECK_CLOSE(k.nse, 1, 1e-15, "skill: perfect NSE");
        CHECK_CLOSE(k.kge, 1, 1e-14, "skill: perfect KGE");
        for (i = 0; i < T; i++)
            sm[i] = mean;
        CHECK(sl_scores_skill(T, sm, o, 1, &k, &err) == SL_OK, "skill: mean ok");
        CHECK_CLOSE(k.nse, 0, 1e-13, "skill: the mean scores NSE 0");
        CHECK(isnan(k.r) && isnan(k.kge) && k.alpha == 0, "skill: constant simulation");
        CHECK_CLOSE(k.beta, 1, 1e-14, "skill: the mean's beta");
        for (i = 0; i < T; i++)
            sm[i] = c * o[i];
        CHECK(sl_scores_skill(T, sm, o, 1, &k, &err) == SL_OK, "skill: scaled ok");
        CHECK_CLOSE(k.r, 1, 1e-14, "skill: scaled r");
        CHECK_CLOSE(k.alpha, c, 1e-14, "skill: scaled alpha");
        CHECK_CLOSE(k.beta, c, 1e-14, "skill: scaled beta");
        CHECK_CLOSE(k.kge, 1 - sqrt(2.0) * (c - 1), 1e-14, "skill: scaled KGE");
    }
    /* Undefined parts are NaN, errors are errors. */
    {
        double o[3] = {2, 2, 2}, sm[3] = {1, 2, 3}, z[3] = {-1, 0, 1};
        double inf[3] = {1, INFINITY, 2};
        sl_skill k;
        CHECK(sl_scores_skill(3, sm, o, 1, &k, &err) == SL_OK && isnan(k.nse) &&
                  isnan(k.r) && isnan(k.alpha) && isnan(k.kge) && k.beta == 1,
              "skill: constant observations");
        CHECK(sl_scores_skill(3, sm, z, 1, &k, &err) == SL_OK && isnan(k.beta) &&
                  isnan(k.kge) && isfinite(k.nse), "skill: observed mean 0");
        CHECK(sl_scores_skill(1, sm, z, 1, &k, &err) == SL_OK && k.count == 1 &&
                  isnan(k.nse) && isnan(k.kge), "skill: one pair");
        CHECK(sl_scores_skill(0, sm, z, 1, &k, &err) == SL_OK && k.count == 0,
              "skill: no pairs");
        CHECK(sl_scores_skill(3, sm, inf, 1, &k, &err) == SL_EINVAL &&
                  strcmp(err.reason, "nonfinite") == 0, "skill: infinite observation");
        CHECK(sl_scores_skill(3, inf, sm, 1, &k, &err) == SL_EINVAL &&
                  strcmp(err.reason, "nonfinite") == 0, "skill: infinite simulation");
        CHECK(sl_scores_skill(3, sm, o, 0, &k, &err) == SL_EINVAL &&
                  strcmp(err.reason, "badsize") == 0, "skill: stride 0");
    }


    /* ---- weighted CRPS ---- */
    {
        enum { WM = 3, WN = 41, WK = 4 };
        static double X[WM * WN * WK], W[WN * WK], Y[WM * WK], C[WM * WK];
        double work[2 * WN], eq[WM];
        size_t k;
        sl_stream_init(&s, 359, 0, 0, SL_PURPOSE_USER);
        for (i = 0; i < WM * WN * WK; i++)
            X[i] = 3.7 + 2.1 * sl_stream_normal(&s);
        for (i = 0; i < WN * WK; i++)
            W[i] = sl_stream_uniform(&s) * (i % 7 == 3 ? 0 : 1); /* some zero */
        for (i = 0; i < WM * WK; i++)
            Y[i] = 3.7 + 2.5 * sl_stream_normal(&s);
        /* ties: block 2 repeats a member value */
        X[WM * WN * 2 + 0] = X[WM * WN * 2 + WM];
        Y[WM * WK - 1] = NAN;
        sl_error_clear(&err);
        CHECK(sl_scores_crps_weighted_workspace(WN) >= 2 * WN, "workspace size");
        CHECK(sl_scores_crps_weighted(WM, WN, WK, X, W, Y, C, work, &err) == SL_OK,
              "weighted crps: %s", err.message);
        for (k = 0; k < WK; k++)
            for (i = 0; i < WM; i++) {
                if (isnan(Y[k * WM + i])) {
                    CHECK(isnan(C[k * WM + i]), "NaN observation gives NaN");
                    continue;
                }
                CHECK_REL(C[k * WM + i],
                          crps_weighted_naive(WN, X + k * WM * WN + i, WM, W + k * WN,
                                              Y[k * WM + i]),
                          1e-13, "weighted crps vs the double sum");
            }
        /* two members x1 < x2 with weights w, 1 - w: by the definition,
         * w |x1 - y| + (1 - w) |x2 - y| - w (1 - w) (x2 - x1) */
        {
            const double x2[2] = {-0.731, 2.385}, w2[2] = {0.3, 0.7};
            const double ys[3] = {-1.9, 0.5, 4.44};
            for (i = 0; i < 3; i++) {
                double c;
                CHECK(sl_scores_crps_weighted(1, 2, 1, x2, w2, ys + i, &c, work, &err) == SL_OK,
                      "two members");
                CHECK_CLOSE(c, 0.3 * fabs(x2[0] - ys[i]) + 0.7 * fabs(x2[1] - ys[i]) -
                                   0.3 * 0.7 * (x2[1] - x2[0]),
                            1e-15, "two-member closed form");
            }
            /* unnormalised weights give the same; a member of weight 0
             * has no part, even when it is NaN */
            {
                const double x3[3] = {-0.731, NAN, 2.385}, w3[3] = {3, 0, 7};
                double c, c2;
                CHECK(sl_scores_crps_weighted(1, 3, 1, x3, w3, ys + 1, &c, work, &err) == SL_OK &&
                          sl_scores_crps_weighted(1, 2, 1, x2, w2, ys + 1, &c2, work, &err) == SL_OK,
                      "zero-weight NaN member");
                CHECK_CLOSE(c, c2, 1e-15, "zero-weight member left out");
            }
        }
        /* equal weights: the ensemble CRPS of sl_scores_crps */
        for (i = 0; i < WN; i++)
            W[i] = 1;
        CHECK(sl_scores_crps_weighted(WM, WN, 1, X, W, Y, C, work, &err) == SL_OK &&
                  sl_scores_crps(WM, WN, X, WM, Y, eq, work, &err) == SL_OK,
              "equal weights");
        for (i = 0; i < WM; i++)
            CHECK_REL(C[i], eq[i], 1e-13, "equal weights = sl_scores_crps");
        /* errors */
        {
            const double xe[2] = {1, 2}, ye = 1.5;
            const double wneg[2] = {1, -0.5}, wzero[2] = {0, 0}, winf[2] = {1, INFINITY};
            const double xinf[2] = {1, INFINITY}, wok[2] = {1, 1};
            double c;
            CHECK(sl_scores_crps_weighted(1, 2, 1, xe, wneg, &ye, &c, work, &err) == SL_EINVAL &&
                      strcmp(err.reason, "badweights") == 0, "negative weight: %s", err.message);
            CHECK(sl_scores_crps_weighted(1, 2, 1, xe, wzero, &ye, &c, work, &err) == SL_EINVAL &&
                      strcmp(err.reason, "badweights") == 0, "zero sum: %s", err.message);
            CHECK(sl_scores_crps_weighted(1, 2, 1, xe, winf, &ye, &c, work, &err) == SL_EINVAL &&
                      strcmp(err.reason, "badweights") == 0, "infinite weight");
            CHECK(sl_scores_crps_weighted(1, 2, 1, xinf, wok, &ye, &c, work, &err) == SL_EINVAL &&
                      strcmp(err.reason, "nonfinite") == 0, "infinite member");
            CHECK(sl_scores_crps_weighted(1, 0, 1, xe, wok, &ye, &c, work, &err) == SL_EINVAL &&
                      strcmp(err.reason, "empty") == 0, "no members");
            CHECK(sl_scores_crps_weighted(0, 2, 1, xe, wok, &ye, &c, work, &err) == SL_OK,
                  "no rows");
        }
    }

    /* ---- weighted mean and variance ---- */
    {
        enum { MM = 3, MN = 57, MK = 3 };
        static double X[MM * MN * MK], W[MN * MK], M[MM * MK], V[MM * MK];
        double col[MN], wcol[MN];
        size_t k, n;
        /* by hand: members {1, 2, 4}, weights {1, 1, 2} -> {1/4, 1/4, 1/2}:
         * mean 1/4 + 2/4 + 4/2 = 2.75; variance
         * (1.75^2 + 0.75^2) / 4 + 1.25^2 / 2 = 1.6875 (all exact in binary) */
        {
            const double xh[3] = {1, 2, 4}, wh[3] = {1, 1, 2};
            double mh, vh;
            CHECK(sl_scores_weighted_moments(1, 3, 1, xh, wh, &mh, &vh, &err) == SL_OK,
                  "moments by hand: %s", err.message);
            CHECK_CLOSE(mh, 2.75, 0, "weighted mean by hand");
            CHECK_CLOSE(vh, 1.6875, 0, "weighted variance by hand");
        }
        sl_stream_init(&s, 4411, 0, 0, SL_PURPOSE_USER);
        for (i = 0; i < MM * MN * MK; i++)
            X[i] = (i % MM == 2 ? 1e6 : 3.7) + 2.1 * sl_stream_normal(&s);
        for (i = 0; i < MN * MK; i++)
            W[i] = sl_stream_uniform(&s) * (i % 5 == 1 ? 0 : 1); /* some zero */
        /* a NaN member of weight 0 has no part */
        X[MM * 4 + 1] = NAN;
        W[4] = 0;
        CHECK(sl_scores_weighted_moments(MM, MN, MK, X, W, M, V, &err) == SL_OK,
              "weighted moments: %s", err.message);
        for (k = 0; k < MK; k++)
            for (i = 0; i < MM; i++) {
                double sw = 0, sw2 = 0, mu, v0, vu;
                /* GSL takes the members of positive weight (a NaN member
                 * of weight 0 would poison its sums) */
                n = 0;
                for (j = 0; j < MN; j++)
                    if (W[k * MN + j] > 0) {
                        col[n] = X[k * MM * MN + j * MM + i];
                        wcol[n] = W[k * MN + j];
                        sw += wcol[n];
                        sw2 += wcol[n] * wcol[n];
                        n++;
                    }
                /* GSL's weighted mean; its variance with a given mean,
                 * sum w (x - mu)^2 / sum w, is the handbook formula with
                 * normalised weights and no correction */
                mu = gsl_stats_wmean(wcol, 1, col, 1, n);
                v0 = gsl_stats_wvariance_with_fixed_mean(wcol, 1, col, 1, n, mu);
                CHECK_REL(M[k * MM + i], mu, 1e-14, "weighted mean vs gsl_stats_wmean");
                CHECK_REL(V[k * MM + i], v0, 1e-12,
                          "weighted variance vs gsl_stats_wvariance_with_fixed_mean");
                /* gsl_stats_wvariance is normalised otherwise: it carries
                 * the factor (sum w)^2 / ((sum w)^2 - sum w^2) of an
                 * unbiased estimate, which ours does not */
                vu = gsl_stats_wvariance(wcol, 1, col, 1, n);
                CHECK_REL(V[k * MM + i] * (sw * sw / (sw * sw - sw2)), vu, 1e-12,
                          "gsl_stats_wvariance = ours times the bias factor");
            }
        /* errors as for the weighted CRPS */
        {
            const double xe[2] = {1, 2}, xinf[2] = {1, INFINITY};
            const double wneg[2] = {1, -0.5}, wzero[2] = {0, 0}, wok[2] = {1, 1};
            double me, ve;
            CHECK(sl_scores_weighted_moments(1, 2, 1, xe, wneg, &me, &ve, &err) == SL_EINVAL &&
                      strcmp(err.reason, "badweights") == 0, "moments: negative weight");
            CHECK(sl_scores_weighted_moments(1, 2, 1, xe, wzero, &me, &ve, &err) == SL_EINVAL &&
                      strcmp(err.reason, "badweights") == 0, "moments: zero sum");
            CHECK(sl_scores_weighted_moments(1, 2, 1, xinf, wok, &me, &ve, &err) == SL_EINVAL &&
                      strcmp(err.reason, "nonfinite") == 0, "moments: infinite member");
            CHECK(sl_scores_weighted_moments(1, 0, 1, xe, wok, &me, &ve, &err) == SL_EINVAL &&
                      strcmp(err.reason, "empty") == 0, "moments: no members");
        }
    }

    CHECK_DONE("test_scores");
}
