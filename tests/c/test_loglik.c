/* test_loglik.c - the six likelihood families against GSL's densities, the
 * ensemble sum (missing rows, accumulation, blown-up members), far tails and
 * every reason the check can give; their quantiles and draws against GSL's
 * inverse CDFs and CDFs. GSL's aborting error handler is left on
 * on purpose: no input here may reach a GSL error path. */
#include "check.h"
#include "sluice/loglik.h"
#include "sluice/rng.h"

#include <float.h>
#include <stdlib.h>
#include <gsl/gsl_cdf.h>
#include <gsl/gsl_math.h>
#include <gsl/gsl_randist.h>

#define LN_SQRT_2PI 0.918938533204672741780329736406 /* log sqrt(2 pi) */
#define QNAN ((double)NAN)

/* |a - b| <= tol * |b| (a relative check that also holds for tiny b). */
#define CHECK_RELV(a, b, tol, what)                                           \
    do {                                                                      \
        double va_ = (a), vb_ = (b);                                          \
        CHECK(va_ == vb_ || fabs(va_ - vb_) <= (tol) * fabs(vb_),             \
              "%s: %.17g vs %.17g (rel tol %.3g)", (what), va_, vb_,          \
              (double)(tol));                                                 \
    } while (0)

static double logistic(double h) { return 1 / (1 + exp(-h)); }

/* The reference log density of each family, from GSL's densities:
 * gsl_ran_gaussian_pdf, gsl_ran_lognormal_pdf, gsl_ran_tdist_pdf (scaled by
 * 1/sigma for the location-scale t), gsl_ran_poisson_pdf,
 * gsl_ran_binomial_pdf (success probability the logistic of h) and
 * gsl_cdf_gaussian_P for a censored value. */
static double ref_logpdf(int fam, double y, double h, double s, double a)
{
    switch (fam) {
    case SL_FAMILY_GAUSSIAN:
        return log(gsl_ran_gaussian_pdf(y - h, s));
    case SL_FAMILY_LOGNORMAL:
        return log(gsl_ran_lognormal_pdf(y, log(h), s));
    case SL_FAMILY_STUDENT_T:
        return log(gsl_ran_tdist_pdf((y - h) / s, a) / s);
    case SL_FAMILY_POISSON:
        return log(gsl_ran_poisson_pdf((unsigned)y, h));
    case SL_FAMILY_BINOMIAL:
        return log(gsl_ran_binomial_pdf((unsigned)y, logistic(h), (unsigned)a));
    case SL_FAMILY_CENSORED:
        return y <= a ? log(gsl_cdf_gaussian_P(a - h, s))
                      : log(gsl_ran_gaussian_pdf(y - h, s));
    default:
        return QNAN;
    }
}

typedef struct {
    int fam;
    double y, h, sigma, aux;
} obs_case;

/* log Phi(z) for z << 0 by the asymptotic series of the normal tail
 * (Abramowitz & Stegun 26.2.12): Phi(z) = phi(z)/|z| (1 - 1/z^2 + 3/z^4 -
 * 15/z^6 + 105/z^8 - 945/z^10 + ...). */
static double log_phi_tail(double z)
{
    const double u = 1 / (z * z);
    const double s = 1 - u * (1 - 3 * u * (1 - 5 * u * (1 - 7 * u * (1 - 9 * u))));
    return -0.5 * z * z - LN_SQRT_2PI - log(-z) + log(s);
}

static sl_status check1(int fam, double y, double sigma, double aux,
                        sl_error *err)
{
    sl_error_clear(err);
    return sl_loglik_check(1, &y, &sigma, &aux, &fam, err);
}

/* One bad row (the third of three) must fail with `reason`. */
static void expect_fail(int fam, double y, double sigma, double aux,
                        const char *reason, const char *what)
{
    double ys[3] = {2.385, 1.25, y}, ss[3] = {0.75, 1.5, sigma};
    double as[3] = {4.5, 4.5, aux};
    int fs[3] = {SL_FAMILY_GAUSSIAN, SL_FAMILY_STUDENT_T, fam};
    sl_error err;
    sl_status st;
    sl_error_clear(&err);
    st = sl_loglik_check(3, ys, ss, as, fs, &err);
    CHECK(st == SL_EINVAL && strcmp(err.reason, reason) == 0 &&
              strncmp(err.message, "observation 3: ", 15) == 0,
          "%s: status %d reason '%s' message '%s'", what, (int)st, err.reason,
          err.message);
}

static void expect_ok(int fam, double y, double sigma, double aux,
                      const char *what)
{
    sl_error err;
    sl_status st = check1(fam, y, sigma, aux, &err);
    CHECK(st == SL_OK, "%s: status %d (%s)", what, (int)st, err.message);
}


/* The smallest k with cdf(k) >= u by a scan from 0: the definition of a
 * discrete quantile, with GSL's gsl_cdf_poisson_P / gsl_cdf_binomial_P. */
static double ref_poisson_quantile(double u, double mu)
{
    unsigned int k = 0;
    if (mu == 0)
        return 0;
    while (gsl_cdf_poisson_P(k, mu) < u)
        k++;
    return (double)k;
}

static double ref_binomial_quantile(double u, double p, unsigned int n)
{
    unsigned int k = 0;
    while (k < n && gsl_cdf_binomial_P(k, p, n) < u)
        k++;
    return (double)k;
}

/* A Cornish-Fisher approximation of a discrete quantile with mean mu,
 * standard deviation sd and skewness g at u, continuity-corrected: the
 * quantile k satisfies k + 1/2 ~ mu + sd (z + g (z^2 - 1)/6), with
 * z = Phi^-1(u) (Johnson, Kemp & Kotz, Univariate Discrete Distributions,
 * from memory); its error is O(1/sd) counts, so for large sd the exact
 * quantile lies within about one count of it. */
static double cornish_fisher_k(double u, double mu, double sd, double g)
{
    const double z = gsl_cdf_ugaussian_Pinv(u);
    return mu + sd * (z + g * (z * z - 1) / 6) - 0.5;
}

int main(void)
{
    sl_error err;
    size_t i, j;

    /* ---- the type table ---- */
    {
        static const char *names[SL_FAMILY_COUNT] = {
            "gaussian", "lognormal", "student_t", "poisson", "binomial", "censored"};
        static const int uses_sigma[SL_FAMILY_COUNT] = {1, 1, 1, 0, 0, 1};
        static const char *aux_names[SL_FAMILY_COUNT] = {NULL, NULL, "dof",
                                                         NULL, "n", "limit"};
        int k;
        for (k = 0; k < SL_FAMILY_COUNT; k++) {
            const sl_family *f = sl_family_get(k);
            CHECK(f != NULL && strcmp(f->name, names[k]) == 0,
                  "family %d name", k);
            if (f == NULL)
                continue;
            CHECK(f->uses_sigma == uses_sigma[k], "family %s uses_sigma", f->name);
            CHECK((f->aux_name == NULL && aux_names[k] == NULL) ||
                      (f->aux_name != NULL && aux_names[k] != NULL &&
                       strcmp(f->aux_name, aux_names[k]) == 0),
                  "family %s aux_name", f->name);
            CHECK(f->logpdf != NULL, "family %s logpdf", f->name);
            CHECK(sl_family_find(names[k]) == k, "find %s", names[k]);
        }
        CHECK(sl_family_get(-1) == NULL, "get(-1)");
        CHECK(sl_family_get(SL_FAMILY_COUNT) == NULL, "get(COUNT)");
        CHECK(sl_family_find("Gaussian") == -1, "names are exact");
        CHECK(sl_family_find("gauss") == -1, "no prefix match");
        CHECK(sl_family_find("gaussianx") == -1, "no longer match");
        CHECK(sl_family_find("") == -1, "empty name");
        CHECK(sl_family_find(NULL) == -1, "NULL name");
    }

    /* ---- every family against GSL at high-entropy inputs ---- */
    {
        static const obs_case cases[] = {
            {SL_FAMILY_GAUSSIAN, 2.385, 1.7319, 0.6283, 0},
            {SL_FAMILY_GAUSSIAN, -13.07, 4.41, 3.9, 0},
            {SL_FAMILY_GAUSSIAN, 0.5772, 0.5791, 1.3e-3, 0},
            {SL_FAMILY_LOGNORMAL, 2.385, 1.7319, 0.6283, 0},
            {SL_FAMILY_LOGNORMAL, 0.0371, 0.112, 1.35, 0},
            {SL_FAMILY_LOGNORMAL, 417.3, 388.1, 0.071, 0},
            {SL_FAMILY_STUDENT_T, 2.385, 1.7319, 0.6283, 4.7},
            {SL_FAMILY_STUDENT_T, -3.3, 2.1, 1.1, 0.37},
            {SL_FAMILY_STUDENT_T, 2.385, 0.9, 1.3, 1.0},
            {SL_FAMILY_STUDENT_T, 9.8, 1.2, 2.2, 37.9},
            {SL_FAMILY_STUDENT_T, 9.8, 1.2, 2.2, 150.3},
            {SL_FAMILY_STUDENT_T, 1.1, 2.385, 0.9, 2.0},   /* branch edges of */
            {SL_FAMILY_STUDENT_T, 1.1, 2.385, 0.9, 100.0}, /* the t constant  */
            {SL_FAMILY_POISSON, 7, 4.385, 0, 0},
            {SL_FAMILY_POISSON, 0, 2.718, 0, 0},
            {SL_FAMILY_POISSON, 23, 31.7, 0, 0},
            {SL_FAMILY_POISSON, 1, 0.0137, 0, 0},
            {SL_FAMILY_BINOMIAL, 7, 0.385, 0, 12},
            {SL_FAMILY_BINOMIAL, 0, -2.3, 0, 5},
            {SL_FAMILY_BINOMIAL, 12, 1.9, 0, 12},
            {SL_FAMILY_BINOMIAL, 3, -0.7, 0, 40},
            {SL_FAMILY_BINOMIAL, 1, 0.0, 0, 1},
            {SL_FAMILY_CENSORED, 0.05, 1.7319, 0.6283, 0.2},
            {SL_FAMILY_CENSORED, 2.385, 1.7319, 0.6283, 0.2},
            {SL_FAMILY_CENSORED, 0.2, -0.3, 0.47, 0.2},
            {SL_FAMILY_CENSORED, -7.5, 3.85, 1.95, -2.5},
        };
        for (i = 0; i < sizeof cases / sizeof cases[0]; i++) {
            const obs_case *c = &cases[i];
            const sl_family *f = sl_family_get(c->fam);
            double ref = ref_logpdf(c->fam, c->y, c->h, c->sigma, c->aux);
            double got = f->logpdf(c->y, c->h, c->sigma, c->aux);
            double ens = 0;
            size_t skipped = 99;
            char what[96];
            snprintf(what, sizeof what, "%s y=%g h=%g s=%g aux=%g", f->name,
                     c->y, c->h, c->sigma, c->aux);
            CHECK(isfinite(ref), "%s: reference not finite", what);
            CHECK_RELV(got, ref, 1e-12, what);
            sl_error_clear(&err);
            CHECK(sl_loglik_check(1, &c->y, &c->sigma, &c->aux, &c->fam, &err) == SL_OK,
                  "%s: check: %s", what, err.message);
            CHECK(sl_loglik_ensemble(1, 1, &c->y, &c->h, 1, &c->sigma, &c->aux,
                                     &c->fam, 0, &ens, &skipped, &err) == SL_OK,
                  "%s: ensemble: %s", what, err.message);
            CHECK(ens == got && skipped == 0, "%s: ensemble %.17g vs %.17g",
                  what, ens, got);
        }
    }

    /* ---- a mixed table, many members, padded leading dimension ---- */
    {
        enum { M = 9, LD = M + 3, N = 613 }; /* N spans several member blocks */
        static double Y[LD * N];
        static double ll[N], ll2[N];
        const double y[M] = {2.385, QNAN, 3.1, 0.62, 6, 4, -0.4, QNAN, 1.75};
        const double sigma[M] = {0.6283, 1, 0.81, 0.35, QNAN, QNAN, 0.47, 2, 1.2};
        const double aux[M] = {QNAN, QNAN, 3.7, QNAN, QNAN, 9, 0.1, 5, 0.1};
        const int fam[M] = {SL_FAMILY_GAUSSIAN, SL_FAMILY_GAUSSIAN,
                            SL_FAMILY_STUDENT_T, SL_FAMILY_LOGNORMAL,
                            SL_FAMILY_POISSON, SL_FAMILY_BINOMIAL,
                            SL_FAMILY_CENSORED, SL_FAMILY_STUDENT_T,
                            SL_FAMILY_CENSORED};
        size_t skipped = 0;
        double worst = 0;
        for (j = 0; j < N; j++) {
            for (i = 0; i < LD; i++) {
                const double t = 0.37 * sin(1.3 * (double)j + 0.7 * (double)i);
                double v;
                switch (i < M ? fam[i] : -1) {
                case SL_FAMILY_LOGNORMAL: v = 0.71 * exp(t); break;
                case SL_FAMILY_POISSON: v = 5.3 * exp(t); break;
                case SL_FAMILY_BINOMIAL: v = 0.2 + 2 * t; break;
                case -1: v = QNAN; break; /* padding must never be read */
                default: v = 2.1 + 3 * t; break;
                }
                Y[i + j * LD] = v;
            }
        }
        sl_error_clear(&err);
        CHECK(sl_loglik_check(M, y, sigma, aux, fam, &err) == SL_OK,
              "mixed table check: %s", err.message);
        for (j = 0; j < N; j++)
            ll[j] = 99; /* overwritten when accumulate = 0 */
        CHECK(sl_loglik_ensemble(M, N, y, Y, LD, sigma, aux, fam, 0, ll,
                                 &skipped, &err) == SL_OK,
              "mixed table: %s", err.message);
        CHECK(skipped == 2, "missing rows counted: %lu", (unsigned long)skipped);
        for (j = 0; j < N; j++) {
            double ref = 0;
            for (i = 0; i < M; i++)
                if (!isnan(y[i]))
                    ref += ref_logpdf(fam[i], y[i], Y[i + j * LD], sigma[i], aux[i]);
            if (fabs(ll[j] - ref) > worst * fabs(ref))
                worst = fabs(ll[j] - ref) / fabs(ref);
            ll2[j] = 1.5 + ref;
        }
        CHECK(worst <= 1e-12, "mixed table: worst relative error %.3g", worst);
        /* accumulate: add to what is there */
        for (j = 0; j < N; j++)
            ll[j] = 1.5;
        CHECK(sl_loglik_ensemble(M, N, y, Y, LD, sigma, aux, fam, 1, ll, NULL,
                                 &err) == SL_OK,
              "accumulate: %s", err.message);
        worst = 0;
        for (j = 0; j < N; j++)
            if (fabs(ll[j] - ll2[j]) > worst * fabs(ll2[j]))
                worst = fabs(ll[j] - ll2[j]) / fabs(ll2[j]);
        CHECK(worst <= 1e-12, "accumulate: worst relative error %.3g", worst);
    }

    /* ---- all rows missing, and no rows at all ---- */
    {
        const double y[2] = {QNAN, QNAN}, s[2] = {1, 1}, a[2] = {0, 0};
        const int fam[2] = {SL_FAMILY_GAUSSIAN, SL_FAMILY_POISSON};
        const double Y[4] = {1, 2, 3, 4};
        double ll[2] = {7, 7};
        size_t skipped = 0;
        CHECK(sl_loglik_ensemble(2, 2, y, Y, 2, s, a, fam, 0, ll, &skipped,
                                 &err) == SL_OK &&
                  ll[0] == 0 && ll[1] == 0 && skipped == 2,
              "all missing: ll %g %g skipped %lu", ll[0], ll[1],
              (unsigned long)skipped);
        ll[0] = ll[1] = 7;
        CHECK(sl_loglik_ensemble(0, 2, NULL, NULL, 0, NULL, NULL, NULL, 0, ll,
                                 &skipped, &err) == SL_OK &&
                  ll[0] == 0 && ll[1] == 0 && skipped == 0,
              "no rows: ll %g %g", ll[0], ll[1]);
        CHECK(sl_loglik_check(0, NULL, NULL, NULL, NULL, &err) == SL_OK,
              "check of no rows");
    }

    /* ---- a member that blew up cannot explain data ---- */
    {
        static const obs_case base[] = {
            {SL_FAMILY_GAUSSIAN, 2.385, 0, 0.6283, 0},
            {SL_FAMILY_LOGNORMAL, 2.385, 0, 0.6283, 0},
            {SL_FAMILY_STUDENT_T, 2.385, 0, 0.6283, 4.7},
            {SL_FAMILY_POISSON, 7, 0, 0, 0},
            {SL_FAMILY_BINOMIAL, 7, 0, 0, 12},
            {SL_FAMILY_CENSORED, 0.05, 0, 0.6283, 0.2},
            {SL_FAMILY_CENSORED, 2.385, 0, 0.6283, 0.2},
        };
        for (i = 0; i < sizeof base / sizeof base[0]; i++) {
            const obs_case *c = &base[i];
            const double Y[4] = {QNAN, HUGE_VAL, -HUGE_VAL, 1.9};
            double ll[4];
            size_t skipped = 5;
            CHECK(sl_loglik_ensemble(1, 4, &c->y, Y, 1, &c->sigma, &c->aux,
                                     &c->fam, 0, ll, &skipped, &err) == SL_OK,
                  "nonfinite h: %s", err.message);
            CHECK(ll[0] == -HUGE_VAL && ll[1] == -HUGE_VAL && ll[2] == -HUGE_VAL &&
                      isfinite(ll[3]) && skipped == 0,
                  "%s: non-finite h gives %g %g %g, finite h %g",
                  sl_family_get(c->fam)->name, ll[0], ll[1], ll[2], ll[3]);
        }
    }

    /* ---- outside the predicted value's support ---- */
    {
        const sl_family *ln = sl_family_get(SL_FAMILY_LOGNORMAL);
        const sl_family *po = sl_family_get(SL_FAMILY_POISSON);
        CHECK(ln->logpdf(2.385, 0, 0.5, 0) == -HUGE_VAL, "lognormal h = 0");
        CHECK(ln->logpdf(2.385, -1.3, 0.5, 0) == -HUGE_VAL, "lognormal h < 0");
        CHECK(po->logpdf(3, -0.25, 0, 0) == -HUGE_VAL, "poisson h < 0");
        CHECK(po->logpdf(3, 0, 0, 0) == -HUGE_VAL, "poisson y > 0, h = 0");
        /* P(Y = 0) = exp(-h) = 1 at h = 0 (the Poisson pmf) */
        CHECK(po->logpdf(0, 0, 0, 0) == 0, "poisson y = 0, h = 0");
        /* a value off the support has probability 0; bad parameters give NaN */
        CHECK(po->logpdf(2.5, 3, 0, 0) == -HUGE_VAL, "poisson y = 2.5");
        CHECK(sl_family_get(SL_FAMILY_BINOMIAL)->logpdf(13, 0.5, 0, 12) == -HUGE_VAL,
              "binomial y > n");
        CHECK(ln->logpdf(-1, 1, 0.5, 0) == -HUGE_VAL, "lognormal y < 0");
        CHECK(isnan(sl_family_get(SL_FAMILY_GAUSSIAN)->logpdf(1, 1, -1, 0)),
              "gaussian sigma < 0 gives NaN");
        CHECK(isnan(sl_family_get(SL_FAMILY_STUDENT_T)->logpdf(1, 1, 1, 0)),
              "student_t dof 0 gives NaN");
        CHECK(isnan(sl_family_get(SL_FAMILY_BINOMIAL)->logpdf(1, 1, 0, 2.5)),
              "binomial n = 2.5 gives NaN");
    }

    /* ---- far tails stay finite and accurate ---- */
    {
        const sl_family *ce = sl_family_get(SL_FAMILY_CENSORED);
        const sl_family *ga = sl_family_get(SL_FAMILY_GAUSSIAN);
        const sl_family *bi = sl_family_get(SL_FAMILY_BINOMIAL);
        const sl_family *st = sl_family_get(SL_FAMILY_STUDENT_T);
        const double s = 0.6283, L = 0.2;
        double v;
        /* h - L = 40 sigma: Phi(-40) ~ 1e-350 underflows, its log must not */
        v = ce->logpdf(0.1, L + 40 * s, s, L);
        CHECK(isfinite(v), "censored at 40 sigma finite: %g", v);
        CHECK_RELV(v, log_phi_tail(-40), 1e-12, "censored at 40 sigma");
        v = ce->logpdf(0.1, L + 1000 * s, s, L);
        CHECK_RELV(v, log_phi_tail(-1000), 1e-12, "censored at 1000 sigma");
        v = ce->logpdf(0.1, L + 3e6 * s, s, L);
        CHECK_RELV(v, log_phi_tail(-3e6), 1e-12, "censored at 3e6 sigma");
        /* just above GSL's underflow, GSL's own CDF is the reference */
        v = ce->logpdf(0.1, L + 37 * s, s, L);
        CHECK_RELV(v, log(gsl_cdf_gaussian_P(-37 * s, s)), 1e-12,
                   "censored at 37 sigma");
        /* far right: log Phi(9) = log(1 - Q(9)) ~ -Q(9), not 0 */
        v = ce->logpdf(0.1, L - 9 * s, s, L);
        CHECK(v < 0, "censored at -9 sigma keeps the small term: %g", v);
        CHECK_RELV(v, -gsl_cdf_gaussian_Q(9 * s, s), 1e-12,
                   "censored at -9 sigma");
        /* Gaussian 1000 sigma away: the normal density formula */
        v = ga->logpdf(0.1, 0.1 + 1000 * s, s, 0);
        CHECK_RELV(v, -5e5 - log(s) - LN_SQRT_2PI, 1e-15, "gaussian at 1000 sigma");
        /* binomial at |h| = 800, where exp(h) overflows and exp(-h) underflows */
        v = bi->logpdf(12, 800, 0, 12);
        CHECK(v == 0, "binomial all successes, h = 800: %g", v);
        v = bi->logpdf(0, 800, 0, 12);
        CHECK_RELV(v, -800 * 12.0, 1e-15, "binomial no successes, h = 800");
        v = bi->logpdf(5, -745.3, 0, 12);
        CHECK_RELV(v, log(792.0) - 5 * 745.3, 1e-15, "binomial 5 of 12, h = -745.3");
        /* logit near 0 and tiny h: log sigmoid(h) = -log 2 + h/2 - ... */
        v = bi->logpdf(1, 1e-300, 0, 1);
        CHECK_RELV(v, -M_LN2, 1e-15, "binomial h = 1e-300");
        /* t tends to the normal as dof grows: |t - normal| = O(1/dof) */
        CHECK_CLOSE(st->logpdf(2.385, 1.7319, s, 1e12),
                    ga->logpdf(2.385, 1.7319, s, 0), 1e-10, "t with dof 1e12");
        CHECK_CLOSE(st->logpdf(2.385, 1.7319, s, 1e300),
                    ga->logpdf(2.385, 1.7319, s, 0), 1e-14, "t with dof 1e300");
        v = st->logpdf(2.385, 1.7319, s, 1e-300);
        CHECK(isfinite(v), "t with dof 1e-300 finite: %g", v);
        v = st->logpdf(2.385, 1.7319, s, 4.9e-324);
        CHECK(isfinite(v), "t with the smallest dof finite: %g", v);
        /* large counts: one million events (GSL's own pmf as reference; both
         * lose about 1e-10 to the cancellation of terms of size 1e7) */
        v = sl_family_get(SL_FAMILY_POISSON)->logpdf(1e6, 1.0000385e6, 0, 0);
        CHECK_RELV(v, log(gsl_ran_poisson_pdf(1000000u, 1.0000385e6)), 1e-8,
                   "poisson 1e6 events");
        /* binomial with large n and few successes: the log-binomial
         * coefficient must not be lost (C(1e12, 3) from its product form) */
        v = bi->logpdf(3, -20, 0, 1e12);
        CHECK_RELV(v, log(1e12) + log(1e12 - 1) + log(1e12 - 2) - log(6.0) +
                          3 * (-20 - log1p(exp(-20))) - (1e12 - 3) * log1p(exp(-20)),
                   1e-12, "binomial n = 1e12");
    }

    /* ---- the checks: every reason, with the row named ---- */
    {
        const double inf = HUGE_VAL, nan = QNAN;
        const double big = 18014398509481984.0; /* 2^54 */
        sl_status st;
        /* the message of the brief's example */
        {
            double ys[3] = {1, 2, 3}, ss[3] = {1, 1, -1};
            int fs[3] = {0, 0, 0};
            sl_error_clear(&err);
            st = sl_loglik_check(3, ys, ss, NULL, fs, &err);
            CHECK(st == SL_EINVAL && strcmp(err.reason, "badsigma") == 0 &&
                      strcmp(err.message,
                             "observation 3: sigma must be finite and at least "
                             "2.2250738585072014e-308 (the smallest normal "
                             "double), got -1") == 0,
                  "badsigma message: '%s'", err.message);
            CHECK(err.status == SL_EINVAL, "error record carries the status");
        }
        expect_fail(-1, 1, 1, 0, "badfamily", "family -1");
        expect_fail(SL_FAMILY_COUNT, 1, 1, 0, "badfamily", "family COUNT");
        expect_fail(SL_FAMILY_GAUSSIAN, 1, 0, 0, "badsigma", "sigma 0");
        expect_fail(SL_FAMILY_GAUSSIAN, 1, -2.385, 0, "badsigma", "sigma < 0");
        expect_fail(SL_FAMILY_LOGNORMAL, 1, nan, 0, "badsigma", "sigma NaN");
        expect_fail(SL_FAMILY_STUDENT_T, 1, inf, 4, "badsigma", "sigma Inf");
        expect_fail(SL_FAMILY_CENSORED, 1, -inf, 0, "badsigma", "sigma -Inf");
        /* subnormal scales: 1/sigma overflows and the log-likelihood
           comes out NaN or -Inf, so they are refused like 0 */
        expect_fail(SL_FAMILY_GAUSSIAN, 1, 1e-320, 0, "badsigma", "sigma 1e-320");
        expect_fail(SL_FAMILY_LOGNORMAL, 1, 1e-310, 0, "badsigma", "sigma 1e-310");
        expect_fail(SL_FAMILY_STUDENT_T, 1, 4.9e-324, 4, "badsigma", "sigma 4.9e-324");
        expect_fail(SL_FAMILY_CENSORED, 1, 2e-308, 0, "badsigma", "sigma 2e-308");
        expect_fail(SL_FAMILY_STUDENT_T, 1, 1, 0, "badaux", "dof 0");
        expect_fail(SL_FAMILY_STUDENT_T, 1, 1, -4, "badaux", "dof < 0");
        expect_fail(SL_FAMILY_STUDENT_T, 1, 1, nan, "badaux", "dof NaN");
        expect_fail(SL_FAMILY_STUDENT_T, 1, 1, inf, "badaux", "dof Inf");
        expect_fail(SL_FAMILY_BINOMIAL, 1, 1, 0, "badaux", "n 0");
        expect_fail(SL_FAMILY_BINOMIAL, 1, 1, 2.5, "badaux", "n 2.5");
        expect_fail(SL_FAMILY_BINOMIAL, 1, 1, -3, "badaux", "n < 0");
        expect_fail(SL_FAMILY_BINOMIAL, 1, 1, nan, "badaux", "n NaN");
        expect_fail(SL_FAMILY_BINOMIAL, 1, 1, inf, "badaux", "n Inf");
        expect_fail(SL_FAMILY_BINOMIAL, 1, 1, big, "badaux", "n 2^54");
        expect_fail(SL_FAMILY_CENSORED, 1, 1, inf, "badaux", "limit Inf");
        expect_fail(SL_FAMILY_CENSORED, 1, 1, nan, "badaux", "limit NaN");
        expect_fail(SL_FAMILY_GAUSSIAN, inf, 1, 0, "badvalue", "y Inf");
        expect_fail(SL_FAMILY_POISSON, -inf, 1, 0, "badvalue", "y -Inf");
        expect_fail(SL_FAMILY_POISSON, -1, 1, 0, "badvalue", "poisson y < 0");
        expect_fail(SL_FAMILY_POISSON, 2.5, 1, 0, "badvalue", "poisson y 2.5");
        expect_fail(SL_FAMILY_POISSON, big, 1, 0, "badvalue", "poisson y 2^54");
        expect_fail(SL_FAMILY_BINOMIAL, 13, 1, 12, "badvalue", "binomial y > n");
        expect_fail(SL_FAMILY_BINOMIAL, 1.5, 1, 12, "badvalue", "binomial y 1.5");
        expect_fail(SL_FAMILY_BINOMIAL, -1, 1, 12, "badvalue", "binomial y < 0");
        expect_fail(SL_FAMILY_LOGNORMAL, 0, 1, 0, "badvalue", "lognormal y 0");
        expect_fail(SL_FAMILY_LOGNORMAL, -2.385, 1, 0, "badvalue", "lognormal y < 0");

        /* wording of the other reasons */
        st = check1(SL_FAMILY_STUDENT_T, 1, 1, 0, &err);
        CHECK(strcmp(err.message,
                     "observation 1: student_t dof must be finite and > 0, got 0") == 0,
              "badaux message: '%s'", err.message);
        st = check1(SL_FAMILY_BINOMIAL, 13, 1, 12, &err);
        CHECK(strcmp(err.message,
                     "observation 1: a binomial value must be a whole number "
                     "from 0 to n (n = 12) or NaN, got 13") == 0,
              "binomial badvalue message: '%s'", err.message);
        st = check1(SL_FAMILY_GAUSSIAN, -inf, 1, 0, &err);
        CHECK(strcmp(err.message,
                     "observation 1: value must be finite or NaN (missing), got -Inf") == 0,
              "badvalue message: '%s'", err.message);
        st = check1(SL_FAMILY_POISSON, 2.0000000000000004, 1, 0, &err);
        CHECK(strstr(err.message, "got 2.0000000000000004") != NULL,
              "a near-whole value is shown in full: '%s'", err.message);
        st = check1(7, 1, 1, 0, &err);
        CHECK(strcmp(err.message,
                     "observation 1: family id must be from 0 to 5, got 7") == 0,
              "badfamily message: '%s'", err.message);
        (void)st;

        /* what is allowed: missing values everywhere, unused sigma/aux */
        expect_ok(SL_FAMILY_GAUSSIAN, nan, 1, nan, "gaussian NaN y, NaN aux");
        expect_ok(SL_FAMILY_LOGNORMAL, nan, 1, 0, "lognormal NaN y");
        expect_ok(SL_FAMILY_STUDENT_T, nan, 1, 4, "student_t NaN y");
        expect_ok(SL_FAMILY_POISSON, nan, nan, nan, "poisson NaN y, sigma unused");
        expect_ok(SL_FAMILY_POISSON, 0, -1, inf, "poisson y 0, sigma unused");
        expect_ok(SL_FAMILY_BINOMIAL, nan, nan, 12, "binomial NaN y");
        expect_ok(SL_FAMILY_BINOMIAL, 12, nan, 12, "binomial y = n");
        expect_ok(SL_FAMILY_BINOMIAL, 0, 0, 1, "binomial y = 0, n = 1");
        expect_ok(SL_FAMILY_CENSORED, nan, 1, -3, "censored NaN y");
        expect_ok(SL_FAMILY_CENSORED, -5, 1, -3, "censored below the limit");
        expect_ok(SL_FAMILY_POISSON, 9007199254740992.0, 1, 0, "poisson y 2^53");
        /* a missing value still needs valid parameters */
        expect_fail(SL_FAMILY_GAUSSIAN, nan, -1, 0, "badsigma", "NaN y, bad sigma");
        expect_fail(SL_FAMILY_BINOMIAL, nan, 1, 0, "badaux", "NaN y, bad n");

        /* sigma / aux may be NULL where no row uses them */
        {
            double ys[2] = {3, 4};
            int fp[2] = {SL_FAMILY_POISSON, SL_FAMILY_POISSON};
            int fg[2] = {SL_FAMILY_POISSON, SL_FAMILY_GAUSSIAN};
            int fb[2] = {SL_FAMILY_POISSON, SL_FAMILY_BINOMIAL};
            double ss[2] = {1, 1};
            CHECK(sl_loglik_check(2, ys, NULL, NULL, fp, &err) == SL_OK,
                  "poisson without sigma or aux");
            CHECK(sl_loglik_check(2, ys, NULL, NULL, fg, &err) == SL_EINVAL &&
                      strcmp(err.reason, "badsigma") == 0 &&
                      strncmp(err.message, "observation 2:", 14) == 0,
                  "gaussian without sigma: '%s'", err.message);
            CHECK(sl_loglik_check(2, ys, ss, NULL, fb, &err) == SL_EINVAL &&
                      strcmp(err.reason, "badaux") == 0,
                  "binomial without aux: '%s'", err.message);
            CHECK(sl_loglik_check(2, NULL, ss, NULL, fp, &err) == SL_EINVAL &&
                      strcmp(err.reason, "badvalue") == 0,
                  "no values");
            CHECK(sl_loglik_check(2, ys, ss, NULL, NULL, &err) == SL_EINVAL &&
                      strcmp(err.reason, "badfamily") == 0,
                  "no family ids");
        }

        /* the ensemble kernel's own guards */
        {
            double ys[2] = {1, 2}, ss[2] = {1, 1}, Y[4] = {1, 2, 3, 4}, ll[2];
            int fs[2] = {SL_FAMILY_GAUSSIAN, 9};
            sl_error_clear(&err);
            CHECK(sl_loglik_ensemble(2, 2, ys, Y, 2, ss, NULL, fs, 0, ll, NULL,
                                     &err) == SL_EINVAL &&
                      strcmp(err.reason, "badfamily") == 0 &&
                      strncmp(err.message, "observation 2:", 14) == 0,
                  "ensemble bad family: '%s'", err.message);
            fs[1] = SL_FAMILY_GAUSSIAN;
            CHECK(sl_loglik_ensemble(2, 2, ys, Y, 1, ss, NULL, fs, 0, ll, NULL,
                                     &err) == SL_EINVAL &&
                      strcmp(err.reason, "badsize") == 0,
                  "ensemble ldy < m: '%s'", err.message);
            CHECK(sl_loglik_ensemble(2, 2, ys, Y, 2, ss, NULL, fs, 0, NULL,
                                     NULL, &err) == SL_EINVAL &&
                      strcmp(err.reason, "badarg") == 0,
                  "ensemble without output");
            CHECK(sl_loglik_ensemble(2, 2, ys, Y, 2, ss, NULL, fs, 0, ll, NULL,
                                     NULL) == SL_OK,
                  "a NULL error record is allowed");
        }
    }


    /* ---- quantiles against GSL's inverse CDFs ---- */
    {
        sl_stream st;
        const sl_family *g = sl_family_get(SL_FAMILY_GAUSSIAN);
        const sl_family *ln = sl_family_get(SL_FAMILY_LOGNORMAL);
        const sl_family *t = sl_family_get(SL_FAMILY_STUDENT_T);
        const sl_family *po = sl_family_get(SL_FAMILY_POISSON);
        const sl_family *bi = sl_family_get(SL_FAMILY_BINOMIAL);
        const sl_family *ce = sl_family_get(SL_FAMILY_CENSORED);
        static const double dofs[] = {1, 2, 3, 4.5, 10, 47.3, 1e4};
        static const double mus[] = {0, 0.0371, 1, 3.7, 28.6, 512.25};
        static const unsigned int trials[] = {1, 7, 25, 400};
        static const double logits[] = {-6.2, -0.8, 0, 1.37, 9.5};
        int k;
        for (k = 0; k < SL_FAMILY_COUNT; k++)
            CHECK(sl_family_get(k)->quantile != NULL &&
                      sl_family_get(k)->sample != NULL,
                  "family %d has quantile and sample", k);
        sl_stream_init(&st, 2385, 0, 0, SL_PURPOSE_USER);
        for (i = 0; i < 200; i++) {
            /* uniforms of the streams, plus far tails */
            double u = i < 190 ? sl_stream_uniform(&st)
                               : (i % 2 ? 1 - pow(10, -(double)(i - 185)) : pow(10, -(double)(i - 184)));
            /* gsl_cdf_gaussian_Pinv and gsl_cdf_lognormal_Pinv: the same
             * arithmetic, so equal to the bit */
            CHECK(g->quantile(u, 1.7319, 0.6283, QNAN) ==
                      1.7319 + gsl_cdf_gaussian_Pinv(u, 0.6283),
                  "gaussian quantile at %.17g", u);
            CHECK(ln->quantile(u, 4.41, 0.39, QNAN) ==
                      gsl_cdf_lognormal_Pinv(u, log(4.41), 0.39),
                  "lognormal quantile at %.17g", u);
            /* censored at L: L up to Phi((L - h)/sigma), above it the
             * normal quantile (gsl_cdf_gaussian_P / _Pinv) */
            {
                const double L = 1.5, h = 2.0, sd = 0.8;
                const double q = ce->quantile(u, h, sd, L);
                if (u <= gsl_cdf_gaussian_P(L - h, sd) - 1e-15)
                    CHECK(q == L, "censored quantile at %.17g: %.17g", u, q);
                else if (u >= gsl_cdf_gaussian_P(L - h, sd) + 1e-15)
                    CHECK(q == h + gsl_cdf_gaussian_Pinv(u, sd),
                          "censored quantile at %.17g: %.17g", u, q);
            }
            /* Student's t: gsl_cdf_tdist_Pinv where its Newton iteration
             * converges (nu >= 1); nu = 1 and 2 also in closed form,
             * tan(pi (u - 1/2)) = -cot(pi u) and (2u - 1)/sqrt(2 u (1 - u))
             * (from memory: the Cauchy and the t with 2 degrees of
             * freedom), the first in a form exact in the tails */
            for (j = 0; j < sizeof dofs / sizeof dofs[0]; j++) {
                const double q = t->quantile(u, 0.25, 1.9, dofs[j]);
                const double z = (q - 0.25) / 1.9;
                if (i < 190)
                    CHECK_REL(z, gsl_cdf_tdist_Pinv(u, dofs[j]), 1e-11,
                              "t quantile vs gsl_cdf_tdist_Pinv");
                CHECK_RELV(gsl_cdf_tdist_P(t->quantile(u, 0, 1, dofs[j]), dofs[j]),
                           u, 1e-12, "t: P(quantile) = u");
            }
            CHECK_REL(t->quantile(u, 0, 1, 1),
                      u < 0.5 ? -1 / tan(M_PI * u) : 1 / tan(M_PI * (1 - u)),
                      1e-12, "Cauchy quantile");
            CHECK_REL(t->quantile(u, 0, 1, 2),
                      (2 * u - 1) / sqrt(2 * u * (1 - u)), 1e-12,
                      "t(2) quantile");
            /* below 1 degree of freedom gsl_cdf_tdist_Pinv does not always
             * converge (it fails at nu = 0.7, u = 0.627); the quantile
             * must still invert GSL's CDF */
            {
                static const double small[] = {0.7, 0.31};
                for (j = 0; j < 2; j++) {
                    const double q = t->quantile(u, 0, 1, small[j]);
                    if (fabs(q) < 1e300)
                        CHECK_RELV(gsl_cdf_tdist_P(q, small[j]), u, 1e-11,
                                   "t below 1 dof: P(quantile) = u");
                }
                CHECK(t->quantile(0.627, 0, 1, 0.7) > 0 &&
                          fabs(gsl_cdf_tdist_P(t->quantile(0.627, 0, 1, 0.7), 0.7) -
                               0.627) < 1e-14,
                      "t(0.7) at u = 0.627");
            }
            if (i >= 190)
                continue;
            /* Poisson and binomial: the smallest k with GSL's CDF >= u */
            for (j = 0; j < sizeof mus / sizeof mus[0]; j++)
                CHECK(po->quantile(u, mus[j], QNAN, QNAN) ==
                          ref_poisson_quantile(u, mus[j]),
                      "poisson(%g) quantile at %.17g: %g vs %g", mus[j], u,
                      po->quantile(u, mus[j], QNAN, QNAN),
                      ref_poisson_quantile(u, mus[j]));
            for (j = 0; j < sizeof trials / sizeof trials[0]; j++) {
                size_t l;
                for (l = 0; l < sizeof logits / sizeof logits[0]; l++) {
                    const double p = 1 / (1 + exp(-logits[l]));
                    CHECK(bi->quantile(u, logits[l], QNAN, trials[j]) ==
                              ref_binomial_quantile(u, p, trials[j]),
                          "binomial(%u, %g) quantile at %.17g", trials[j],
                          logits[l], u);
                }
            }
        }
        /* large counts: GSL's own CDFs lose their way here (its Q past
         * lambda = 1e6, its incomplete beta past 512 continued-fraction
         * terms), so the reference is the Cornish-Fisher expansion */
        sl_stream_init(&st, 2385, 1, 0, SL_PURPOSE_USER);
        for (i = 0; i < 40; i++) {
            const double u = sl_stream_uniform(&st);
            static const double lam[] = {2.5e6, 1e9, 3.3e12};
            static const double big[] = {1e6 + 1, 3e7, 2147483648.0};
            for (j = 0; j < 3; j++) {
                const double q = po->quantile(u, lam[j], QNAN, QNAN);
                const double c = cornish_fisher_k(u, lam[j], sqrt(lam[j]),
                                                  1 / sqrt(lam[j]));
                CHECK(q == floor(q) && fabs(q - c) <= 1.01,
                      "poisson(%g) at %.17g: %.17g vs %.17g", lam[j], u, q, c);
            }
            for (j = 0; j < 3; j++) {
                const double h = -0.8, p = 1 / (1 + exp(0.8));
                const double sd = sqrt(big[j] * p * (1 - p));
                const double q = bi->quantile(u, h, QNAN, big[j]);
                const double c = cornish_fisher_k(u, big[j] * p, sd,
                                                  (1 - 2 * p) / sd);
                CHECK(q == floor(q) && fabs(q - c) <= 1.01,
                      "binomial(%g) at %.17g: %.17g vs %.17g", big[j], u, q, c);
            }
            /* just above the switch to the own continued fraction GSL's
             * CDF still holds: the smallest k by gsl_cdf_binomial_P */
            if (i < 5) {
                const double p = 1 / (1 + exp(-1.37));
                const double q = bi->quantile(u, 1.37, QNAN, 1e6 + 1);
                CHECK(gsl_cdf_binomial_P((unsigned int)q, p, 1000001) >= u &&
                          gsl_cdf_binomial_P((unsigned int)q - 1, p, 1000001) < u,
                      "binomial(1e6 + 1) at %.17g: %.17g", u, q);
            }
        }
        /* edges: the support's bottom, u outside (0, 1), bad parameters */
        CHECK(po->quantile(0.3, 0, QNAN, QNAN) == 0, "poisson(0) is 0");
        CHECK(bi->quantile(1e-300, -700, QNAN, 5) == 0 &&
                  bi->quantile(1 - 1e-16, 700, QNAN, 5) == 5,
              "binomial at its ends");
        CHECK(isnan(g->quantile(0, 0, 1, QNAN)) && isnan(g->quantile(1, 0, 1, QNAN)) &&
                  isnan(g->quantile(QNAN, 0, 1, QNAN)), "u outside (0, 1)");
        CHECK(isnan(g->quantile(0.5, 0, 0, QNAN)) && isnan(g->quantile(0.5, HUGE_VAL, 1, QNAN)),
              "gaussian bad sigma, h");
        CHECK(isnan(ln->quantile(0.5, 0, 1, QNAN)) && isnan(ln->quantile(0.5, -1, 1, QNAN)),
              "lognormal h <= 0");
        CHECK(isnan(t->quantile(0.5, 0, 1, 0)) && isnan(t->quantile(0.5, 0, 1, QNAN)),
              "t bad dof");
        CHECK(t->quantile(0.5, 3, 1, 2.5) == 3, "t median is h");
        CHECK(isnan(po->quantile(0.5, -1, QNAN, QNAN)) &&
                  isnan(po->quantile(0.5, 1e17, QNAN, QNAN)),
              "poisson h outside [0, 2^53]");
        CHECK(isnan(bi->quantile(0.5, 0, QNAN, 2.5)) && isnan(bi->quantile(0.5, 0, QNAN, 0)) &&
                  isnan(bi->quantile(0.5, QNAN, QNAN, 4)), "binomial bad n, h");
        CHECK(isnan(ce->quantile(0.5, 0, 1, HUGE_VAL)), "censored bad limit");
        /* with 1e-3 degrees of freedom P(T > y) ~ y^-nu falls so slowly
         * that the 1e-10 quantile lies beyond 1e154: +-Inf */
        CHECK(t->quantile(1e-10, 0, 1, 1e-3) == -HUGE_VAL &&
                  t->quantile(1 - 1e-10, 0, 1, 1e-3) == HUGE_VAL,
              "t quantile beyond 1e154 is infinite");
        CHECK(fabs(t->quantile(0.45, 0, 1, 1e-3)) < 1e154 &&
                  fabs(gsl_cdf_tdist_P(t->quantile(0.45, 0, 1, 1e-3), 1e-3) - 0.45) < 1e-13,
              "t(1e-3) at u = 0.45: %.17g", t->quantile(0.45, 0, 1, 1e-3));

        /* draws: the normal families from z, the others from u */
        CHECK(g->sample(-0.37, 0.9, 2, 0.5, QNAN) == 2 + 0.5 * -0.37, "gaussian draw");
        CHECK(ln->sample(-0.37, 0.9, 2, 0.5, QNAN) == exp(log(2.0) + 0.5 * -0.37),
              "lognormal draw");
        CHECK(ce->sample(-0.37, 0.9, 2, 0.5, 1.9) == 1.9 &&
                  ce->sample(0.37, 0.9, 2, 0.5, 1.9) == 2 + 0.5 * 0.37,
              "censored draw");
        CHECK(t->sample(-0.37, 0.9, 2, 0.5, 3) == t->quantile(0.9, 2, 0.5, 3) &&
                  po->sample(-0.37, 0.9, 3.7, QNAN, QNAN) == po->quantile(0.9, 3.7, QNAN, QNAN) &&
                  bi->sample(-0.37, 0.9, 0.4, QNAN, 9) == bi->quantile(0.9, 0.4, QNAN, 9),
              "t, poisson, binomial draws are quantiles at u");
        CHECK(isnan(g->sample(HUGE_VAL, 0.5, 0, 1, QNAN)), "gaussian draw from z = Inf");
    }

    /* ---- quantiles and draws of many rows, and their checks ---- */
    {
        const int fam[4] = {SL_FAMILY_GAUSSIAN, SL_FAMILY_POISSON,
                            SL_FAMILY_STUDENT_T, SL_FAMILY_BINOMIAL};
        const double u[4] = {0.2, 0.7, 0.95, 0.4}, z[4] = {0.3, -1, 2, 0};
        const double h[4] = {1, 3.7, -2, 0.5}, sg[4] = {0.5, QNAN, 2, QNAN};
        const double ax[4] = {QNAN, QNAN, 4, 12};
        double y[4], bad[4];
        sl_error_clear(&err);
        CHECK(sl_family_quantiles(4, fam, u, h, sg, ax, y, &err) == SL_OK, "quantiles");
        for (i = 0; i < 4; i++)
            CHECK(y[i] == sl_family_get(fam[i])->quantile(u[i], h[i], sg[i], ax[i]),
                  "row %lu", (unsigned long)i);
        CHECK(sl_family_samples(4, fam, z, u, h, sg, ax, y, &err) == SL_OK, "samples");
        for (i = 0; i < 4; i++)
            CHECK(y[i] == sl_family_get(fam[i])->sample(z[i], u[i], h[i], sg[i], ax[i]),
                  "draw %lu", (unsigned long)i);
        memcpy(bad, u, sizeof u);
        bad[2] = 1;
        CHECK(sl_family_quantiles(4, fam, bad, h, sg, ax, y, &err) == SL_EINVAL &&
                  strcmp(err.reason, "badprob") == 0 &&
                  strncmp(err.message, "draw 3:", 7) == 0, "u = 1: '%s'", err.message);
        memcpy(bad, z, sizeof z);
        bad[0] = QNAN;
        CHECK(sl_family_samples(4, fam, bad, u, h, sg, ax, y, &err) == SL_EINVAL &&
                  strcmp(err.reason, "badnormal") == 0, "z NaN: '%s'", err.message);
        memcpy(bad, sg, sizeof sg);
        bad[2] = -1;
        CHECK(sl_family_samples(4, fam, z, u, h, bad, ax, y, &err) == SL_EINVAL &&
                  strcmp(err.reason, "badsigma") == 0, "sigma < 0: '%s'", err.message);
        memcpy(bad, ax, sizeof ax);
        bad[3] = 2.5;
        CHECK(sl_family_quantiles(4, fam, u, h, sg, bad, y, &err) == SL_EINVAL &&
                  strcmp(err.reason, "badaux") == 0, "n = 2.5: '%s'", err.message);
        {
            int f2[4] = {SL_FAMILY_GAUSSIAN, SL_FAMILY_POISSON,
                         SL_FAMILY_STUDENT_T, 9};
            CHECK(sl_family_quantiles(4, f2, u, h, sg, ax, y, &err) == SL_EINVAL &&
                      strcmp(err.reason, "badfamily") == 0, "family 9");
        }
        CHECK(sl_family_samples(4, fam, NULL, u, h, sg, ax, y, &err) == SL_EINVAL &&
                  strcmp(err.reason, "badarg") == 0, "no z");
        CHECK(sl_family_quantiles(4, fam, u, NULL, sg, ax, y, &err) == SL_EINVAL &&
                  strcmp(err.reason, "badarg") == 0, "no h");
        CHECK(sl_family_quantiles(0, NULL, NULL, NULL, NULL, NULL, NULL, &err) == SL_OK,
              "no rows");
        {
            const double hneg[4] = {1, -3, -2, 0.5};
            CHECK(sl_family_quantiles(4, fam, u, hneg, sg, ax, y, &err) == SL_OK &&
                      isnan(y[1]) && !isnan(y[0]),
                  "h outside the domain gives NaN");
        }
    }

    CHECK_DONE("test_loglik");
}
