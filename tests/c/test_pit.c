/* test_pit.c - the families' mid-distribution functions against GSL's CDFs,
 * handbook values and their own quantiles; the forecast PIT of weighted
 * ensembles (exact sums, systematic selection above SL_PIT_MAX_MEMBERS,
 * members that do not count, missing values) and its argument checks. */
#include "check.h"
#include "sluice/loglik.h"

#include <gsl/gsl_cdf.h>
#include <gsl/gsl_randist.h>

#define QNAN ((double)NAN)

static double logistic(double h) { return 1 / (1 + exp(-h)); }

/* The reference mid-distribution function, from GSL's CDFs and
 * probability functions: P(Y <= y) for the continuous families
 * (gsl_cdf_gaussian_P, gsl_cdf_lognormal_P, gsl_cdf_tdist_P of the
 * standardised value), P(Y <= y - 1) + P(Y = y)/2 for the counts
 * (gsl_cdf_poisson_P / gsl_ran_poisson_pdf, gsl_cdf_binomial_P /
 * gsl_ran_binomial_pdf), half of gsl_cdf_gaussian_P(L - h) at a censored
 * value. */
static double ref_mid(int fam, double y, double h, double s, double a)
{
    unsigned k = (unsigned)y;
    switch (fam) {
    case SL_FAMILY_GAUSSIAN:
        return gsl_cdf_gaussian_P(y - h, s);
    case SL_FAMILY_LOGNORMAL:
        return gsl_cdf_lognormal_P(y, log(h), s);
    case SL_FAMILY_STUDENT_T:
        return gsl_cdf_tdist_P((y - h) / s, a);
    case SL_FAMILY_POISSON:
        return (k > 0 ? gsl_cdf_poisson_P(k - 1, h) : 0) + 0.5 * gsl_ran_poisson_pdf(k, h);
    case SL_FAMILY_BINOMIAL:
        return (k > 0 ? gsl_cdf_binomial_P(k - 1, logistic(h), (unsigned)a) : 0) +
               0.5 * gsl_ran_binomial_pdf(k, logistic(h), (unsigned)a);
    case SL_FAMILY_CENSORED:
        return y <= a ? 0.5 * gsl_cdf_gaussian_P(a - h, s) : gsl_cdf_gaussian_P(y - h, s);
    default:
        return QNAN;
    }
}

typedef struct {
    int fam;
    double y, h, sigma, aux;
} mid_case;

int main(void)
{
    sl_error err;
    size_t i, j;

    /* ---- every family has one ---- */
    {
        int k;
        for (k = 0; k < SL_FAMILY_COUNT; k++)
            CHECK(sl_family_get(k)->cdf != NULL, "family %d has a cdf", k);
    }

    /* ---- against GSL ---- */
    {
        static const mid_case cases[] = {
            {SL_FAMILY_GAUSSIAN, 2.385, 1.7319, 0.6283, QNAN},
            {SL_FAMILY_GAUSSIAN, -3.1, 0.2, 0.9, QNAN},
            {SL_FAMILY_LOGNORMAL, 3.3, 4.41, 0.39, QNAN},
            {SL_FAMILY_LOGNORMAL, 12.7, 4.41, 0.39, QNAN},
            {SL_FAMILY_STUDENT_T, 1.4, 0.25, 1.9, 3.5},
            {SL_FAMILY_STUDENT_T, -7.2, 0.25, 1.9, 0.8},
            {SL_FAMILY_STUDENT_T, 0.9, 0.25, 1.9, 250},
            {SL_FAMILY_POISSON, 0, 2.385, QNAN, QNAN},
            {SL_FAMILY_POISSON, 3, 2.385, QNAN, QNAN},
            {SL_FAMILY_POISSON, 41, 37.2, QNAN, QNAN},
            {SL_FAMILY_BINOMIAL, 0, -0.7, QNAN, 12},
            {SL_FAMILY_BINOMIAL, 5, -0.7, QNAN, 12},
            {SL_FAMILY_BINOMIAL, 12, -0.7, QNAN, 12},
            {SL_FAMILY_BINOMIAL, 130, 0.31, QNAN, 250},
            {SL_FAMILY_CENSORED, 0.5, 0.8, 0.45, 0.5},
            {SL_FAMILY_CENSORED, 0.2, 0.8, 0.45, 0.5},
            {SL_FAMILY_CENSORED, 1.37, 0.8, 0.45, 0.5},
        };
        for (i = 0; i < sizeof cases / sizeof *cases; i++) {
            const mid_case *c = &cases[i];
            const double got = sl_family_get(c->fam)->cdf(c->y, c->h, c->sigma, c->aux);
            const double ref = ref_mid(c->fam, c->y, c->h, c->sigma, c->aux);
            char what[80];
            snprintf(what, sizeof what, "%s mid cdf case %lu", sl_family_get(c->fam)->name,
                     (unsigned long)i);
            CHECK_CLOSE(got, ref, 1e-12, what);
        }
    }

    /* ---- handbook values ---- */
    {
        const sl_family *g = sl_family_get(SL_FAMILY_GAUSSIAN);
        const sl_family *t = sl_family_get(SL_FAMILY_STUDENT_T);
        const sl_family *po = sl_family_get(SL_FAMILY_POISSON);
        const sl_family *bi = sl_family_get(SL_FAMILY_BINOMIAL);
        /* Phi(1.96) = 0.97500210485177952 (Abramowitz & Stegun table
         * 26.1; 1.96 sd above a mean of 3 with sd 2) */
        CHECK_CLOSE(g->cdf(3 + 1.96 * 2, 3, 2, QNAN), 0.97500210485177952, 1e-14,
                    "Phi(1.96)");
        CHECK(g->cdf(3, 3, 2, QNAN) == 0.5, "Phi(0) = 1/2");
        /* t with 1 dof is Cauchy: P(T <= 1) = 1/2 + atan(1)/pi = 3/4
         * (Abramowitz & Stegun 26.7.3 with nu = 1) */
        CHECK_CLOSE(t->cdf(1.5 + 0.7, 1.5, 0.7, 1), 0.75, 1e-14, "Cauchy at 1");
        /* Poisson(1) at 0: half the atom exp(-1) */
        CHECK_CLOSE(po->cdf(0, 1, QNAN, QNAN), 0.5 * exp(-1.0), 1e-15, "Poisson(1) at 0");
        /* a Poisson of mean 0 is the atom at 0 */
        CHECK(po->cdf(0, 0, QNAN, QNAN) == 0.5, "Poisson(0) at 0");
        CHECK(po->cdf(2, 0, QNAN, QNAN) == 1.0, "Poisson(0) at 2");
        /* Bin(1, 1/2) (h = 0): 1/4 at 0, 3/4 at 1 */
        CHECK_CLOSE(bi->cdf(0, 0, QNAN, 1), 0.25, 1e-15, "Bin(1, 1/2) at 0");
        CHECK_CLOSE(bi->cdf(1, 0, QNAN, 1), 0.75, 1e-15, "Bin(1, 1/2) at 1");
        /* outside the support */
        CHECK(po->cdf(-2, 3.1, QNAN, QNAN) == 0, "Poisson below 0");
        CHECK(bi->cdf(13, 0.3, QNAN, 12) == 1, "binomial above n");
        CHECK(sl_family_get(SL_FAMILY_LOGNORMAL)->cdf(-1, 2, 0.3, QNAN) == 0,
              "lognormal below 0");
        /* between whole numbers: the CDF of the count below, A&S 26.4.21 */
        CHECK_CLOSE(po->cdf(2.5, 2.385, QNAN, QNAN), gsl_cdf_poisson_P(2, 2.385), 1e-14,
                    "Poisson between counts");
    }

    /* ---- against the families' own quantiles ---- */
    {
        static const double us[] = {1e-6, 0.003, 0.05, 0.2385, 0.5, 0.77, 0.95, 0.999};
        for (i = 0; i < sizeof us / sizeof *us; i++) {
            const double u = us[i];
            const sl_family *g = sl_family_get(SL_FAMILY_GAUSSIAN);
            const sl_family *ln = sl_family_get(SL_FAMILY_LOGNORMAL);
            const sl_family *t = sl_family_get(SL_FAMILY_STUDENT_T);
            const sl_family *ce = sl_family_get(SL_FAMILY_CENSORED);
            const sl_family *po = sl_family_get(SL_FAMILY_POISSON);
            const sl_family *bi = sl_family_get(SL_FAMILY_BINOMIAL);
            double q, lo, hi, atom;
            CHECK_CLOSE(g->cdf(g->quantile(u, 1.73, 0.628, QNAN), 1.73, 0.628, QNAN), u,
                        1e-13, "gaussian cdf(quantile(u))");
            CHECK_CLOSE(ln->cdf(ln->quantile(u, 4.41, 0.39, QNAN), 4.41, 0.39, QNAN), u,
                        1e-13, "lognormal cdf(quantile(u))");
            CHECK_CLOSE(t->cdf(t->quantile(u, 0.25, 1.9, 3.5), 0.25, 1.9, 3.5), u, 1e-12,
                        "t cdf(quantile(u))");
            CHECK_CLOSE(t->cdf(t->quantile(u, 0.25, 1.9, 0.7), 0.25, 1.9, 0.7), u, 1e-12,
                        "t (0.7 dof) cdf(quantile(u))");
            /* censored above the atom's level: continuous there */
            atom = gsl_cdf_gaussian_P(0.5 - 0.8, 0.45);
            if (u > atom)
                CHECK_CLOSE(ce->cdf(ce->quantile(u, 0.8, 0.45, 0.5), 0.8, 0.45, 0.5), u,
                            1e-13, "censored cdf(quantile(u))");
            else
                CHECK_CLOSE(ce->cdf(ce->quantile(u, 0.8, 0.45, 0.5), 0.8, 0.45, 0.5),
                            0.5 * atom, 1e-15, "censored cdf at the atom");
            /* the counts: u lies on the step at the quantile q, whose
             * middle is the mid cdf: F(q - 1) < u <= F(q) */
            q = po->quantile(u, 7.3, QNAN, QNAN);
            lo = q > 0 ? gsl_cdf_poisson_P((unsigned)q - 1, 7.3) : 0;
            hi = gsl_cdf_poisson_P((unsigned)q, 7.3);
            CHECK(lo < u && u <= hi * (1 + 1e-14), "poisson quantile step at %g", u);
            CHECK_CLOSE(po->cdf(q, 7.3, QNAN, QNAN), 0.5 * (lo + hi), 1e-13,
                        "poisson mid cdf at its quantile");
            q = bi->quantile(u, -0.4, QNAN, 30);
            lo = q > 0 ? gsl_cdf_binomial_P((unsigned)q - 1, logistic(-0.4), 30) : 0;
            hi = gsl_cdf_binomial_P((unsigned)q, logistic(-0.4), 30);
            CHECK(lo < u && u <= hi * (1 + 1e-14), "binomial quantile step at %g", u);
            CHECK_CLOSE(bi->cdf(q, -0.4, QNAN, 30), 0.5 * (lo + hi), 1e-13,
                        "binomial mid cdf at its quantile");
        }
    }

    /* ---- NaN where the quantile is NaN ---- */
    {
        const sl_family *g = sl_family_get(SL_FAMILY_GAUSSIAN);
        CHECK(isnan(g->cdf(QNAN, 1, 1, QNAN)), "NaN y");
        CHECK(isnan(g->cdf(1, HUGE_VAL, 1, QNAN)), "infinite h");
        CHECK(isnan(g->cdf(1, 1, 0, QNAN)), "zero sigma");
        CHECK(isnan(sl_family_get(SL_FAMILY_LOGNORMAL)->cdf(1, -1, 1, QNAN)),
              "lognormal h < 0");
        CHECK(isnan(sl_family_get(SL_FAMILY_STUDENT_T)->cdf(1, 0, 1, 0)), "t with 0 dof");
        CHECK(isnan(sl_family_get(SL_FAMILY_POISSON)->cdf(1, -0.5, QNAN, QNAN)),
              "poisson h < 0");
        CHECK(isnan(sl_family_get(SL_FAMILY_BINOMIAL)->cdf(1, 0.2, QNAN, 2.5)),
              "binomial n not whole");
        CHECK(isnan(sl_family_get(SL_FAMILY_CENSORED)->cdf(1, 0.2, 1, HUGE_VAL)),
              "censored limit infinite");
    }

    /* ---- the forecast PIT: exact weighted sums ---- */
    {
        /* two rows (a gaussian and a poisson), five members, one dead, one
         * of weight 0, one whose prediction is outside poisson's domain
         * (it counts in the gaussian row only) */
        const double y[2] = {1.3, 4};
        const double sigma[2] = {0.4, QNAN};
        const int fam[2] = {SL_FAMILY_GAUSSIAN, SL_FAMILY_POISSON};
        const double Yhat[10] = {1.0, 3.2, 1.5, -1.0, 0.9, 5.5, 2.0, 4.4, 1.1, 3.9};
        const double w[5] = {0.1, 0.3, 0.25, 0, 0.35};
        const unsigned char dead[5] = {0, 0, 0, 0, 1};
        const sl_family *g = sl_family_get(SL_FAMILY_GAUSSIAN);
        const sl_family *po = sl_family_get(SL_FAMILY_POISSON);
        double pit[2], ref0, ref1;
        ref0 = (0.1 * g->cdf(1.3, 1.0, 0.4, QNAN) + 0.3 * g->cdf(1.3, 1.5, 0.4, QNAN) +
                0.25 * g->cdf(1.3, 0.9, 0.4, QNAN)) / 0.65;
        ref1 = (0.1 * po->cdf(4, 3.2, QNAN, QNAN) + 0.25 * po->cdf(4, 5.5, QNAN, QNAN)) / 0.35;
        sl_error_clear(&err);
        CHECK(sl_loglik_pit(2, 5, y, Yhat, 2, sigma, NULL, fam, w, dead, pit, &err) == SL_OK,
              "pit runs");
        CHECK_CLOSE(pit[0], ref0, 1e-15, "pit exact sum, gaussian row");
        CHECK_CLOSE(pit[1], ref1, 1e-15, "pit exact sum, poisson row (h < 0 left out)");
        /* missing value, and no member that counts */
        {
            const double ymiss[2] = {QNAN, 4};
            const double w0[5] = {0, 0, 0, 0, 0};
            CHECK(sl_loglik_pit(2, 5, ymiss, Yhat, 2, sigma, NULL, fam, w, dead, pit, &err) ==
                      SL_OK && isnan(pit[0]) && pit[1] == pit[1],
                  "missing value gives NaN");
            CHECK(sl_loglik_pit(2, 5, y, Yhat, 2, sigma, NULL, fam, w0, NULL, pit, &err) ==
                      SL_OK && isnan(pit[0]) && isnan(pit[1]),
                  "no weight gives NaN");
        }
        /* unnormalised weights give the same */
        {
            double w2[5], pit2[2];
            for (j = 0; j < 5; j++)
                w2[j] = 7.3 * w[j];
            sl_loglik_pit(2, 5, y, Yhat, 2, sigma, NULL, fam, w2, dead, pit2, &err);
            CHECK_CLOSE(pit2[0], ref0, 1e-15, "pit with unnormalised weights");
        }
    }

    /* ---- the forecast PIT: systematic selection above the cap ---- */
    {
        const size_t N = 4 * SL_PIT_MAX_MEMBERS;
        double *h = (double *)ck_malloc(N * sizeof(double));
        double *w = (double *)ck_malloc(N * sizeof(double));
        const sl_family *g = sl_family_get(SL_FAMILY_GAUSSIAN);
        const double y = 0.37, s = 0.5;
        const int fam = SL_FAMILY_GAUSSIAN;
        double pit, ref = 0, exact = 0;
        uint64_t x = 88172645463325252ull;
        for (j = 0; j < N; j++) {
            /* xorshift64 (Marsaglia 2003) uniforms turned to predictions */
            x ^= x << 13;
            x ^= x >> 7;
            x ^= x << 17;
            h[j] = 2.0 * ((double)(x >> 11) / 9007199254740992.0) - 1.0;
            w[j] = 1.0;
        }
        /* equal weights: target (k + 1/2) W/M = 4k + 2 is first exceeded
         * by the cumulative weight j + 1 at j = 4k + 2 */
        for (j = 2; j < N; j += 4)
            ref += g->cdf(y, h[j], s, QNAN);
        ref /= (double)SL_PIT_MAX_MEMBERS;
        for (j = 0; j < N; j++)
            exact += g->cdf(y, h[j], s, QNAN);
        exact /= (double)N;
        sl_loglik_pit(1, N, &y, h, 1, &s, NULL, &fam, w, NULL, &pit, &err);
        CHECK_CLOSE(pit, ref, 1e-14, "systematic picks of equal weights");
        /* within 4 of the bound's standard deviations 1/(2 sqrt 1024) */
        CHECK(fabs(pit - exact) < 4 * 0.5 / 32, "systematic pit %g near exact %g", pit, exact);
        /* all the weight on one member (the others tiny but positive) */
        for (j = 0; j < N; j++)
            w[j] = j == 777 ? 1.0 : 1e-300;
        sl_loglik_pit(1, N, &y, h, 1, &s, NULL, &fam, w, NULL, &pit, &err);
        CHECK_CLOSE(pit, g->cdf(y, h[777], s, QNAN), 1e-15, "one member carries the weight");
        /* the same ensemble at or below the cap is summed exactly */
        for (j = 0; j < N; j++)
            w[j] = j < SL_PIT_MAX_MEMBERS ? 1.0 : 0.0;
        sl_loglik_pit(1, N, &y, h, 1, &s, NULL, &fam, w, NULL, &pit, &err);
        ref = 0;
        for (j = 0; j < SL_PIT_MAX_MEMBERS; j++)
            ref += g->cdf(y, h[j], s, QNAN);
        CHECK_CLOSE(pit, ref / SL_PIT_MAX_MEMBERS, 1e-14, "exact at the cap");
        ck_free(h);
        ck_free(w);
    }

    /* ---- several rows at once: the members chosen once serve them all.
     * Against the definition written out here (the k-th pick is the
     * member that counts whose cumulative weight first exceeds
     * (k + 1/2) W / M; a NaN cdf leaves its picks out), and against one
     * call per row, bit for bit; the two-part form gives the same bits */
    {
        enum { R = 4 };
        const size_t N = 3 * SL_PIT_MAX_MEMBERS + 17, M = SL_PIT_MAX_MEMBERS;
        double *h = (double *)ck_malloc(R * N * sizeof(double));
        double *w = (double *)ck_malloc(N * sizeof(double));
        double *fs = (double *)ck_malloc((M + 1) * sizeof(double));
        size_t *js = (size_t *)ck_malloc((M + 1) * sizeof(size_t));
        unsigned char *dead = (unsigned char *)ck_malloc(N);
        const double y[R] = {0.2, 1.3, QNAN, -0.4}, s[R] = {0.5, 0.4, 0.5, 0.8},
                     aux[R] = {QNAN, QNAN, QNAN, 3.5};
        const int fam[R] = {SL_FAMILY_GAUSSIAN, SL_FAMILY_LOGNORMAL, SL_FAMILY_GAUSSIAN,
                            SL_FAMILY_STUDENT_T};
        double all[R], one[R], two[R], W = 0;
        uint64_t x = 2463534242ull;
        size_t r, count;
        int same = 1;
        for (j = 0; j < N; j++) {
            for (r = 0; r < R; r++) {
                x ^= x << 13;
                x ^= x >> 7;
                x ^= x << 17;
                h[r + j * R] = 3.0 * ((double)(x >> 11) / 9007199254740992.0) - 1.0;
            }
            /* zeros, and heavy members that are picked several times */
            w[j] = j % 5 == 0 ? 0.0 : (j % 97 == 3 ? 300.0 : 0.5 + (double)(j % 13));
            dead[j] = (unsigned char)(j % 11 == 4);
            if (!dead[j] && w[j] > 0)
                W += w[j];
        }
        sl_loglik_pit(R, N, y, h, R, s, aux, fam, w, dead, all, &err);
        for (r = 0; r < R; r++)
            sl_loglik_pit(1, N, y + r, h + r, R, s + r, aux + r, fam + r, w, dead, one + r, &err);
        count = sl_loglik_pit_members(N, w, dead, js, fs);
        sl_loglik_pit_listed(R, y, h, R, s, aux, fam, count, js, fs, two, &err);
        for (r = 0; r < R; r++) {
            const sl_family *g = sl_family_get(fam[r]);
            double c = 0, sum = 0, used = 0;
            size_t k = 0;
            same = same && memcmp(all + r, one + r, sizeof(double)) == 0 &&
                   memcmp(all + r, two + r, sizeof(double)) == 0;
            if (r == 2) {
                CHECK(isnan(all[r]), "a missing value has no PIT");
                continue;
            }
            for (j = 0; j < N; j++) {
                if (dead[j] || !(w[j] > 0))
                    continue;
                c += w[j];
                while (k < M && ((double)k + 0.5) * (W / (double)M) < c) {
                    const double v = g->cdf(y[r], h[r + j * R], s[r], aux[r]);
                    if (!isnan(v)) {
                        sum += v;
                        used += 1.0;
                    }
                    k++;
                }
            }
            CHECK(k == M, "row %lu: every pick made (%lu)", (unsigned long)r, (unsigned long)k);
            CHECK_CLOSE(all[r], sum / used, 1e-13, "several rows: the definition's picks");
        }
        CHECK(same, "several rows at once, one row a call and the two-part form agree bit "
                    "for bit");
        CHECK(count > 0 && count <= M + 1, "the members' list has %lu entries", (unsigned long)count);
        ck_free(h);
        ck_free(w);
        ck_free(fs);
        ck_free(js);
        ck_free(dead);
    }

    /* ---- argument checks ---- */
    {
        const double y = 1, h = 1, s = 1, w = 1;
        const int bad = SL_FAMILY_COUNT;
        double pit;
        sl_error_clear(&err);
        CHECK(sl_loglik_pit(1, 1, &y, &h, 1, &s, NULL, &bad, &w, NULL, &pit, &err) ==
                      SL_EINVAL && strcmp(err.reason, "badfamily") == 0,
              "bad family refused");
        sl_error_clear(&err);
        CHECK(sl_loglik_pit(2, 2, &y, &h, 1, &s, NULL, &bad, &w, NULL, &pit, &err) ==
                      SL_EINVAL && strcmp(err.reason, "badsize") == 0,
              "short leading dimension refused");
        sl_error_clear(&err);
        CHECK(sl_loglik_pit(1, 1, &y, &h, 1, &s, NULL, &bad, &w, NULL, NULL, &err) ==
                      SL_EINVAL && strcmp(err.reason, "badarg") == 0,
              "no output refused");
        CHECK(sl_loglik_pit(0, 1, NULL, NULL, 1, NULL, NULL, NULL, NULL, NULL, NULL, &err) ==
                  SL_OK,
              "no rows is fine");
    }

    CHECK_DONE("test_pit");
}
