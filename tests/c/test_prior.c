/* test_prior.c - transforms of bounded parameters, prior draws against
 * GSL's distribution functions, determinism, and every error reason. */
#include "check.h"
#include "sluice/prior.h"
#include "sluice/rng.h"

#include <float.h>
#include <stdint.h>
#include <stdlib.h>
#include <gsl/gsl_cdf.h>
#include <gsl/gsl_errno.h>
#include <gsl/gsl_randist.h>
#include <gsl/gsl_sf_erf.h>

static int cmp_double(const void *a, const void *b)
{
    double x = *(const double *)a, y = *(const double *)b;
    return (x > y) - (x < y);
}

/* ------------------------------------------------------------------ */
/* Transforms                                                         */
/* ------------------------------------------------------------------ */

static const double zs[] = {-11.3, -7.31, -2.385, -0.713, -3.3e-5, -1e-9, 0.0,
                            3.3e-12, 2.7e-7, 0.4142, 1.917, 5.77, 9.06};
#define NZ (sizeof zs / sizeof zs[0])

static const double fracs[] = {1e-9, 3.1e-5, 0.0137, 0.31831, 0.5, 0.50000007,
                               0.7071, 0.999, 1 - 4.4e-7};
#define NF (sizeof fracs / sizeof fracs[0])

/* Absolute error of z = forward(x) caused by a relative rounding of x and
 * the bounds (dz/dx from differentiating the definitions, common practice). */
static double z_tol(const sl_transform *t, double x, double z)
{
    double scale = fabs(x) + (isfinite(t->lo) ? fabs(t->lo) : 0) +
                   (isfinite(t->hi) ? fabs(t->hi) : 0);
    double slope = 0;
    if (t->kind == SL_TRANSFORM_LOG || t->kind == SL_TRANSFORM_LOGIT)
        slope += 1 / (x - t->lo);
    if (t->kind == SL_TRANSFORM_NEGLOG || t->kind == SL_TRANSFORM_LOGIT)
        slope += 1 / (t->hi - x);
    return 8 * DBL_EPSILON * (scale * slope + fabs(z) + 1e-300);
}

static void check_round_trips(double lo, double hi, const char *what)
{
    sl_transform t = sl_transform_for_bounds(lo, hi);
    size_t i;
    char buf[160];
    for (i = 0; i < NZ; i++) {
        double x = sl_transform_inverse(&t, zs[i]);
        double z = sl_transform_forward(&t, x);
        snprintf(buf, sizeof buf, "%s forward(inverse(%g))", what, zs[i]);
        CHECK_CLOSE(z, zs[i], z_tol(&t, x, z), buf);
    }
    for (i = 0; i < NF; i++) {
        double x, back, f = fracs[i];
        if (t.kind == SL_TRANSFORM_LOGIT)
            x = lo + (hi - lo) * f;
        else if (t.kind == SL_TRANSFORM_LOG)
            x = lo + 1e3 * f;
        else if (t.kind == SL_TRANSFORM_NEGLOG)
            x = hi - 1e3 * f;
        else
            x = -37.7 + 1e3 * f;
        back = sl_transform_inverse(&t, sl_transform_forward(&t, x));
        snprintf(buf, sizeof buf, "%s inverse(forward(%.17g))", what, x);
        CHECK_CLOSE(back, x,
                    16 * DBL_EPSILON * (fabs(x) + (isfinite(lo) ? fabs(lo) : 0) +
                                        (isfinite(hi) ? fabs(hi) : 0)),
                    buf);
    }
}

static void check_inside(double lo, double hi, const char *what)
{
    sl_transform t = sl_transform_for_bounds(lo, hi);
    size_t outside = 0, k;
    double worst = 0;
    static const double extremes[] = {-800, -745.2, -709.8, -40, -1e-300, 0,
                                      1e-300, 37, 709.8, 745.2, 800};
    for (k = 0; k <= 4000; k++) {
        double z = -800 + 0.4 * (double)k;
        double x = sl_transform_inverse(&t, z);
        if (!(x > t.lo && x < t.hi)) {
            outside++;
            worst = z;
        }
    }
    for (k = 0; k < sizeof extremes / sizeof extremes[0]; k++) {
        double x = sl_transform_inverse(&t, extremes[k]);
        if (!(x > t.lo && x < t.hi)) {
            outside++;
            worst = extremes[k];
        }
    }
    CHECK(outside == 0, "%s: %lu inverses not strictly inside (e.g. z = %g)",
          what, (unsigned long)outside, worst);
}

static void test_transforms(void)
{
    sl_transform t;

    /* the kind follows from which bounds are finite */
    t = sl_transform_for_bounds(-INFINITY, INFINITY);
    CHECK(t.kind == SL_TRANSFORM_NONE, "no bounds -> none");
    t = sl_transform_for_bounds(2.385, INFINITY);
    CHECK(t.kind == SL_TRANSFORM_LOG && t.lo == 2.385, "lower bound -> log");
    t = sl_transform_for_bounds(-INFINITY, 7.91);
    CHECK(t.kind == SL_TRANSFORM_NEGLOG && t.hi == 7.91, "upper bound -> neglog");
    t = sl_transform_for_bounds(-1.37, 2.385);
    CHECK(t.kind == SL_TRANSFORM_LOGIT && t.lo == -1.37 && t.hi == 2.385,
          "both bounds -> logit");
    t = sl_transform_for_bounds(NAN, NAN);
    CHECK(t.kind == SL_TRANSFORM_NONE, "NaN bounds count as no bounds");
    t = sl_transform_for_bounds(3.3, 3.3);
    CHECK(t.kind == SL_TRANSFORM_NONE && sl_transform_inverse(&t, 1.25) == 1.25,
          "a single point has no transform: identity");

    /* known values from the definitions in prior.h */
    t = sl_transform_for_bounds(-1.37, 2.385);
    CHECK_CLOSE(sl_transform_forward(&t, -1.37 + 0.25 * 3.755), log(1.0 / 3.0),
                1e-15, "logit at the first quarter = log(1/3)");
    CHECK_CLOSE(sl_transform_inverse(&t, 0.0), 0.5 * (-1.37 + 2.385), 1e-15,
                "logit inverse of 0 = midpoint");
    CHECK_CLOSE(sl_transform_inverse(&t, log(3.0)), -1.37 + 0.75 * 3.755, 4e-15,
                "logit inverse of log 3 = third quarter");
    t = sl_transform_for_bounds(2.385, INFINITY);
    CHECK_CLOSE(sl_transform_forward(&t, 2.385 + 4.41), log(4.41), 1e-15,
                "log transform");
    CHECK_CLOSE(sl_transform_inverse(&t, -1.62), 2.385 + exp(-1.62), 1e-15,
                "log inverse");
    t = sl_transform_for_bounds(-INFINITY, 7.91);
    CHECK_CLOSE(sl_transform_forward(&t, 7.91 - 0.0173), log(0.0173), 1e-13,
                "neglog transform");
    CHECK_CLOSE(sl_transform_inverse(&t, 2.2), 7.91 - exp(2.2), 1e-14,
                "neglog inverse");
    t = sl_transform_for_bounds(-INFINITY, INFINITY);
    CHECK(sl_transform_forward(&t, -4.75) == -4.75 &&
              sl_transform_inverse(&t, 123.5) == 123.5,
          "none is the identity");

    /* near the midpoint z is small and must keep its relative precision:
     * z = log((1/2 + d)/(1/2 - d)) = 2 atanh(2d) on [0, 1] */
    t = sl_transform_for_bounds(0.0, 1.0);
    CHECK_REL(sl_transform_forward(&t, 0.5 + 1e-12), 2 * atanh(2e-12), 1e-4,
              "logit just above the midpoint");
    CHECK(isnan(sl_transform_forward(&t, 1.5)) &&
              isnan(sl_transform_forward(&t, -0.5)),
          "logit forward outside the bounds is NaN");
    CHECK(isnan(sl_transform_inverse(&t, NAN)), "logit inverse of NaN is NaN");

    /* huge intervals: hi - lo overflows, the logistic must not */
    t = sl_transform_for_bounds(-1e308, 1.5e308);
    CHECK_CLOSE(sl_transform_inverse(&t, 0.0), 0.25e308, 1e293,
                "logit inverse of 0 on a huge interval");
    CHECK_CLOSE(sl_transform_forward(&t, 0.25e308), 0.0, 1e-14,
                "logit forward of the midpoint on a huge interval");

    check_round_trips(-1.37, 2.385, "logit [-1.37, 2.385]");
    check_round_trips(0.0, 1.0, "logit [0, 1]");
    check_round_trips(1013.25, 1013.25 + 0.0419, "logit narrow, offset");
    check_round_trips(-6.02e23, 1.6e-19, "logit wide");
    check_round_trips(2.385, INFINITY, "log");
    check_round_trips(-0.713, INFINITY, "log");
    check_round_trips(-INFINITY, 7.91, "neglog");
    check_round_trips(-INFINITY, -1e-3, "neglog");
    check_round_trips(-INFINITY, INFINITY, "none");

    check_inside(-1.37, 2.385, "logit [-1.37, 2.385]");
    check_inside(0.0, 1.0, "logit [0, 1]");
    check_inside(1e15, 1e15 + 4, "logit [1e15, 1e15 + 4]");
    check_inside(2.385, 2.385 + 0x1.0p-40, "logit of width 2^-40");
    check_inside(-1e308, 1.5e308, "logit huge");
    check_inside(-DBL_MAX, DBL_MAX, "logit [-max, max]");
    check_inside(2.385, INFINITY, "log");
    check_inside(-3.3e100, INFINITY, "log far");
    check_inside(-INFINITY, 7.91, "neglog");
    check_inside(-INFINITY, 1e300, "neglog far");
}

/* ------------------------------------------------------------------ */
/* Distributions                                                      */
/* ------------------------------------------------------------------ */

/* Kolmogorov-Smirnov distance of sorted x[0..n-1] from the CDF F. */
typedef double (*cdf_fn)(double x, const sl_prior_entry *e);

static double ks_distance(const double *x, size_t n, cdf_fn F,
                          const sl_prior_entry *e)
{
    size_t i;
    double d = 0;
    for (i = 0; i < n; i++) {
        double f = F(x[i], e);
        double a = fabs(f - (double)i / (double)n);
        double b = fabs((double)(i + 1) / (double)n - f);
        if (a > d) d = a;
        if (b > d) d = b;
    }
    return d;
}

/* CDFs from GSL */
static double cdf_uniform(double x, const sl_prior_entry *e)
{
    return gsl_cdf_flat_P(x, e->a, e->b);
}

static double cdf_normal(double x, const sl_prior_entry *e)
{
    return gsl_cdf_gaussian_P(x - e->a, e->b);
}

static double cdf_lognormal(double x, const sl_prior_entry *e)
{
    return gsl_cdf_lognormal_P(x, e->a, e->b);
}

/* Truncated normal CDF built from gsl_cdf_gaussian_P (Johnson, Kotz &
 * Balakrishnan, continuous univariate distributions: F(x) = (Phi(x) -
 * Phi(lo)) / (Phi(hi) - Phi(lo)) in standard units). Above the mean the
 * same ratio is formed from upper-tail probabilities Phi(-x), which keep
 * their precision there. */
static double cdf_truncnormal(double x, const sl_prior_entry *e)
{
    double mu = e->a, sd = e->b;
    if (x <= e->lo) return 0;
    if (x >= e->hi) return 1;
    if (e->lo >= mu) {
        double qa = gsl_cdf_gaussian_P(mu - e->lo, sd);
        double qb = gsl_cdf_gaussian_P(mu - e->hi, sd);
        return (qa - gsl_cdf_gaussian_P(mu - x, sd)) / (qa - qb);
    } else {
        double pa = gsl_cdf_gaussian_P(e->lo - mu, sd);
        double pb = gsl_cdf_gaussian_P(e->hi - mu, sd);
        return (gsl_cdf_gaussian_P(x - mu, sd) - pa) / (pb - pa);
    }
}

/* Far above the mean (alpha > 37) Phi underflows: there the CDF is
 * 1 - Q(x)/Q(lo), with log Q(x) = log erfc(x / sqrt 2) - log 2 from GSL's
 * gsl_sf_log_erfc (Abramowitz & Stegun 7.1.2 and 26.2.29). */
static double log_q(double z)
{
    return gsl_sf_log_erfc(z / sqrt(2.0)) - log(2.0);
}

static double cdf_far_tail(double x, const sl_prior_entry *e)
{
    double za = (e->lo - e->a) / e->b, z = (x - e->a) / e->b;
    double lb = isinf(e->hi) ? -HUGE_VAL : log_q((e->hi - e->a) / e->b) - log_q(za);
    if (x <= e->lo) return 0;
    if (x >= e->hi) return 1;
    return -expm1(log_q(z) - log_q(za)) / -expm1(lb);
}

/* Truncated normal moments (Johnson, Kotz & Balakrishnan): with standard
 * bounds al, be and Z = Phi(be) - Phi(al),
 *   mean = mu + sd (phi(al) - phi(be)) / Z
 *   var  = sd^2 [1 + (al phi(al) - be phi(be)) / Z - ((phi(al) - phi(be)) / Z)^2]
 * phi from gsl_ran_ugaussian_pdf, Phi from gsl_cdf_ugaussian_P (used as
 * Phi(-x) above the mean, where 1 - Phi(x) would lose its digits). */
static void truncnormal_moments(const sl_prior_entry *e, double *mean,
                                double *var)
{
    double al = (e->lo - e->a) / e->b, be = (e->hi - e->a) / e->b;
    double pa = isinf(al) ? 0 : gsl_ran_ugaussian_pdf(al);
    double pb = isinf(be) ? 0 : gsl_ran_ugaussian_pdf(be);
    double Z = al >= 0 ? gsl_cdf_ugaussian_P(-al) - gsl_cdf_ugaussian_P(-be)
                       : gsl_cdf_ugaussian_P(be) - gsl_cdf_ugaussian_P(al);
    double r = (pa - pb) / Z;
    double s = ((isinf(al) ? 0 : al * pa) - (isinf(be) ? 0 : be * pb)) / Z;
    *mean = e->a + e->b * r;
    *var = e->b * e->b * (1 + s - r * r);
}

typedef struct {
    sl_prior_entry e;
    const char *what;
    cdf_fn cdf;
} dist_case;

static void sample_moments(const double *x, size_t n, double *m, double *v,
                           double *m4)
{
    size_t i;
    double s = 0, s2 = 0, s4 = 0;
    for (i = 0; i < n; i++)
        s += x[i];
    s /= (double)n;
    for (i = 0; i < n; i++) {
        double d = x[i] - s;
        s2 += d * d;
        s4 += d * d * d * d;
    }
    *m = s;
    *v = s2 / (double)(n - 1);
    *m4 = s4 / (double)n;
}

static void test_draws(void)
{
    enum { N = 100000 };
    const double inf = INFINITY;
    const dist_case cases[] = {
        {{SL_DIST_UNIFORM, -1.37, 2.385, 0, 0}, "uniform", cdf_uniform},
        {{SL_DIST_NORMAL, 3.17, 0.629, 0, 0}, "normal", cdf_normal},
        {{SL_DIST_LOGNORMAL, 0.413, 0.347, 0, 0}, "lognormal", cdf_lognormal},
        {{SL_DIST_TRUNCNORMAL, 1.2, 2.3, -0.7, 4.1}, "truncnormal straddling",
         cdf_truncnormal},
        {{SL_DIST_TRUNCNORMAL, 0.5, 1.5, 0.5 + 5 * 1.5, 0.5 + 6 * 1.5},
         "truncnormal [5, 6] sd above", cdf_truncnormal},
        {{SL_DIST_TRUNCNORMAL, 2.0, 0.8, -inf, 2.0 - 3.3 * 0.8},
         "truncnormal below -3.3 sd", cdf_truncnormal},
        {{SL_DIST_TRUNCNORMAL, -0.25, 0.71, -0.25 + 0.3 * 0.71, inf},
         "truncnormal above 0.3 sd", cdf_truncnormal},
        {{SL_DIST_TRUNCNORMAL, -1.1, 0.45, -1.1 + 40 * 0.45, inf},
         "truncnormal above 40 sd", cdf_far_tail},
        {{SL_DIST_TRUNCNORMAL, 4.4, 0.9, 4.4 + 31.5 * 0.9, 4.4 + 31.56 * 0.9},
         "truncnormal [31.5, 31.56] sd above", cdf_far_tail},
        {{SL_DIST_FIXED, 6.25, 0, 0, 0}, "fixed", NULL},
    };
    enum { P = sizeof cases / sizeof cases[0] };
    sl_prior_entry prior[P];
    double *X = ck_malloc(sizeof(double) * P * N), *x = ck_malloc(sizeof(double) * N);
    sl_error err;
    sl_status st;
    size_t k, j;

    if (X == NULL || x == NULL) {
        CHECK(0, "cannot allocate the test sample");
        ck_free(X);
        ck_free(x);
        return;
    }
    for (k = 0; k < P; k++)
        prior[k] = cases[k].e;
    st = sl_prior_draw(P, prior, N, 20240611u, 0, X, &err);
    CHECK(st == SL_OK, "draw: %s", err.message);
    if (st != SL_OK) {
        ck_free(X);
        ck_free(x);
        return;
    }
    for (k = 0; k < P; k++) {
        const sl_prior_entry *e = &prior[k];
        double m, v, m4, mean = 0, var = 0, sem, sev, lo, hi, ks;
        size_t outside = 0;
        char buf[160];
        for (j = 0; j < N; j++)
            x[j] = X[j * P + k];
        if (e->dist == SL_DIST_FIXED) {
            for (j = 0; j < N; j++)
                outside += x[j] != e->a;
            CHECK(outside == 0, "fixed: %lu members differ", (unsigned long)outside);
            continue;
        }
        sl_prior_support(e, &lo, &hi);
        for (j = 0; j < N; j++)
            outside += !(x[j] > lo && x[j] < hi);
        CHECK(outside == 0, "%s: %lu draws not strictly inside [%g, %g]",
              cases[k].what, (unsigned long)outside, lo, hi);
        sample_moments(x, N, &m, &v, &m4);
        switch (e->dist) {
        case SL_DIST_UNIFORM: {
            /* mean (a+b)/2, variance w^2/12, fourth central moment w^4/80
             * (handbook moments of the uniform distribution) */
            double w = e->b - e->a;
            mean = 0.5 * (e->a + e->b);
            var = w * w / 12;
            sev = sqrt((w * w * w * w / 80 - var * var) / N);
            break;
        }
        case SL_DIST_NORMAL:
            /* mean mu, variance sd^2, fourth central moment 3 sd^4 */
            mean = e->a;
            var = e->b * e->b;
            sev = var * sqrt(2.0 / N);
            break;
        case SL_DIST_LOGNORMAL: {
            /* raw moments E[X^k] = exp(k mu + k^2 s^2 / 2) (handbook), so
             * mean exp(mu + s^2/2); central moments from the raw ones */
            double r1 = exp(e->a + 0.5 * e->b * e->b);
            double r2 = exp(2 * e->a + 2 * e->b * e->b);
            double r3 = exp(3 * e->a + 4.5 * e->b * e->b);
            double r4 = exp(4 * e->a + 8 * e->b * e->b);
            double c4 = r4 - 4 * r3 * r1 + 6 * r2 * r1 * r1 - 3 * r1 * r1 * r1 * r1;
            mean = r1;
            var = r2 - r1 * r1;
            sev = sqrt((c4 - var * var) / N);
            break;
        }
        default:
            if (cases[k].cdf == cdf_far_tail) {
                /* the handbook formulas above divided through by Q(al):
                 * with h = phi/Q (GSL's gsl_sf_hazard) and Sb = Q(be)/Q(al),
                 * r = (h(al) - h(be) Sb) / (1 - Sb),
                 * var/sd^2 = 1 + (al h(al) - be h(be) Sb) / (1 - Sb) - r^2 */
                double al = (e->lo - e->a) / e->b, be = (e->hi - e->a) / e->b;
                double ha = gsl_sf_hazard(al);
                double Sb = isinf(be) ? 0 : exp(log_q(be) - log_q(al));
                double hbS = isinf(be) ? 0 : gsl_sf_hazard(be) * Sb;
                double r = (ha - hbS) / (1 - Sb);
                double q = (al * ha - (isinf(be) ? 0 : be * hbS)) / (1 - Sb);
                mean = e->a + e->b * r;
                var = e->b * e->b * (1 + q - r * r);
            } else {
                truncnormal_moments(e, &mean, &var);
            }
            /* standard error of the variance from the sample's own fourth
             * moment (common practice) */
            sev = sqrt(fabs(m4 - v * v) / N);
            break;
        }
        sem = sqrt(var / N);
        snprintf(buf, sizeof buf, "%s mean", cases[k].what);
        CHECK_CLOSE(m, mean, 4 * sem, buf);
        snprintf(buf, sizeof buf, "%s variance", cases[k].what);
        CHECK_CLOSE(v, var, 4 * sev, buf);
        qsort(x, N, sizeof *x, cmp_double);
        ks = ks_distance(x, N, cases[k].cdf, e);
        /* KS at the 1% level: 1.628 / sqrt(n) (common practice) */
        CHECK(ks < 1.628 / sqrt((double)N), "%s: KS distance %g (critical %g)",
              cases[k].what, ks, 1.628 / sqrt((double)N));
    }
    ck_free(X);
    ck_free(x);
}

/* Truncation bounds are never left, however extreme the case. */
static void test_truncation_extremes(void)
{
    enum { N = 2000 };
    const double inf = INFINITY;
    const sl_prior_entry cases[] = {
        {SL_DIST_TRUNCNORMAL, -1e9, 1.0, 0.0, inf},
        {SL_DIST_TRUNCNORMAL, -1e6, 1.0, 0.0, inf},
        {SL_DIST_TRUNCNORMAL, 0.0, 1.0, 1e9, inf},
        {SL_DIST_TRUNCNORMAL, 0.0, 1.0, -inf, -3e7},
        {SL_DIST_TRUNCNORMAL, 0.0, 1.0, 37.0, 37.0 + 1e-9},
        {SL_DIST_TRUNCNORMAL, 0.0, 1.0, 5.0, 5.0 + 1e-12},
        {SL_DIST_TRUNCNORMAL, -1e308, 1.0, 1e308, inf},
        {SL_DIST_TRUNCNORMAL, 1e308, 1.0, -1e308, -1e307},
        {SL_DIST_TRUNCNORMAL, 0.0, 1e-300, 1e-290, 1e-289},
        {SL_DIST_TRUNCNORMAL, 0.0, 1e300, -1e-300, 1e-300},
        {SL_DIST_TRUNCNORMAL, 2.0, 0.5, 2.0 - 1e-8, 2.0 + 3e-8},
        {SL_DIST_TRUNCNORMAL, 0.0, 1.0, 24.999, 25.001},
        {SL_DIST_TRUNCNORMAL, 0.5, 3.0, -inf, inf},
        {SL_DIST_UNIFORM, -DBL_MAX, DBL_MAX, 0, 0},
        {SL_DIST_UNIFORM, 1.0, 1.0 + 4 * DBL_EPSILON, 0, 0},
    };
    enum { P = sizeof cases / sizeof cases[0] };
    static double X[P * N];
    sl_error err;
    sl_status st = sl_prior_draw(P, cases, N, 77u, 1234u, X, &err);
    size_t k, j;
    CHECK(st == SL_OK, "extreme truncations: %s", err.message);
    if (st != SL_OK)
        return;
    for (k = 0; k < P; k++) {
        size_t bad = 0;
        double lo, hi, worst = 0;
        sl_prior_support(&cases[k], &lo, &hi);
        for (j = 0; j < N; j++) {
            double v = X[j * P + k];
            if (!(v > lo && v < hi)) {
                bad++;
                worst = v;
            }
        }
        CHECK(bad == 0, "case %lu [%g, %g]: %lu draws outside, e.g. %.17g",
              (unsigned long)k + 1, lo, hi, (unsigned long)bad, worst);
    }
    /* far above the mean the excess over the bound has mean h(al) - al =
     * 1/al - 2/al^3 + ... (asymptotic Mills ratio, Abramowitz & Stegun
     * 26.2.12) and standard deviation about 1/al */
    {
        static const double al[2] = {1e9, 1e6};
        for (k = 0; k < 2; k++) {
            double s = 0;
            for (j = 0; j < N; j++)
                s += X[j * P + k];
            CHECK_CLOSE(s / N, 1 / al[k], 4 / al[k] / sqrt((double)N),
                        "mean excess far above the mean");
        }
    }
}

/* Inversion: a truncated normal member is F^-1(u) for the member's first
 * uniform u, so F(x) recovers u; F from GSL as above. This sees errors of
 * the quantile far below what moments or KS can resolve. */
static void test_inversion(void)
{
    enum { N = 4000 };
    const double inf = INFINITY;
    const dist_case cases[] = {
        {{SL_DIST_TRUNCNORMAL, 1.2, 2.3, -0.7, 4.1}, "straddling", cdf_truncnormal},
        {{SL_DIST_TRUNCNORMAL, 0.5, 1.5, 8.0, 9.5}, "[5, 6] sd above", cdf_truncnormal},
        {{SL_DIST_TRUNCNORMAL, 0.5, 1.5, -inf, 0.5 - 1.5 * 5.5}, "below -5.5 sd", cdf_truncnormal},
        {{SL_DIST_TRUNCNORMAL, 0.0, 1.0, 24.5, inf}, "above 24.5 sd", cdf_truncnormal},
        {{SL_DIST_TRUNCNORMAL, 0.0, 1.0, 25.5, inf}, "above 25.5 sd", cdf_truncnormal},
        {{SL_DIST_TRUNCNORMAL, -1.1, 0.45, -1.1 + 40 * 0.45, inf}, "above 40 sd", cdf_far_tail},
        {{SL_DIST_TRUNCNORMAL, 4.4, 0.9, 4.4 + 31.5 * 0.9, 4.4 + 31.56 * 0.9},
         "[31.5, 31.56] sd above", cdf_far_tail},
        {{SL_DIST_TRUNCNORMAL, 0.0, 1.0, 300.0, inf}, "above 300 sd", cdf_far_tail},
    };
    static double x[N];
    size_t k, j;
    sl_error err;
    for (k = 0; k < sizeof cases / sizeof cases[0]; k++) {
        double worst = 0, worst_tol = 1;
        if (sl_prior_draw(1, &cases[k].e, N, 31337u, 0, x, &err) != SL_OK) {
            CHECK(0, "inversion %s: %s", cases[k].what, err.message);
            continue;
        }
        for (j = 0; j < N; j++) {
            sl_stream s;
            double u, d, tol, h = 1e-7 * cases[k].e.b, f;
            sl_stream_init(&s, 31337u, (uint32_t)j, 0, SL_PURPOSE_PRIOR);
            u = sl_stream_uniform(&s);
            d = fabs(cases[k].cdf(x[j], &cases[k].e) - u);
            /* tolerance: rounding x to double moves F by density * ulp(x),
             * plus the CDF's own rounding (common practice) */
            f = (cases[k].cdf(x[j] + h, &cases[k].e) -
                 cases[k].cdf(x[j] - h, &cases[k].e)) / (2 * h);
            tol = 1e-12 + 4 * fabs(f) * DBL_EPSILON * fabs(x[j]);
            if (d / tol > worst / worst_tol) {
                worst = d;
                worst_tol = tol;
            }
        }
        CHECK(worst <= worst_tol, "inversion %s: |F(x) - u| = %g > %g",
              cases[k].what, worst, worst_tol);
    }
}

/* ------------------------------------------------------------------ */
/* Determinism                                                        */
/* ------------------------------------------------------------------ */

static void test_determinism(void)
{
    enum { P = 5, NB = 1000 };
    const sl_prior_entry prior[P] = {
        {SL_DIST_NORMAL, 0.0, 1.0, 0, 0},
        {SL_DIST_UNIFORM, 0.13, 8.8, 0, 0},
        {SL_DIST_TRUNCNORMAL, 1.0, 2.0, 0.0, 3.5},
        {SL_DIST_FIXED, -2.5, 0, 0, 0},
        {SL_DIST_NORMAL, 0.0, 1.0, 0, 0},
    };
    static double big[P * NB], small[P * 5], one[P], other[P * 5];
    sl_error err;
    size_t j, k, diff = 0;
    uint64_t seed = 0x9e3779b97f4a7c15ull;

    CHECK(sl_prior_draw(P, prior, NB, seed, 0, big, &err) == SL_OK, "N = 1000");
    CHECK(sl_prior_draw(P, prior, 5, seed, 0, small, &err) == SL_OK, "N = 5");
    CHECK(memcmp(big, small, sizeof small) == 0,
          "members 0..4 identical with N = 5 and N = 1000");
    for (j = 0; j < NB; j += 37) {
        CHECK(sl_prior_draw(P, prior, 1, seed, (uint32_t)j, one, &err) == SL_OK,
              "first = %lu", (unsigned long)j);
        for (k = 0; k < P; k++)
            diff += one[k] != big[j * P + k];
    }
    CHECK(diff == 0, "member j drawn alone (first = j) differs in %lu values",
          (unsigned long)diff);
    /* a block starting in the middle */
    CHECK(sl_prior_draw(P, prior, 5, seed, 500, small, &err) == SL_OK, "first = 500");
    CHECK(memcmp(big + 500 * P, small, sizeof small) == 0,
          "members 500..504 identical when drawn from first = 500");
    /* member j uses stream (seed, j, 0, prior): a standard normal entry is
     * that stream's first normal, and the 5th parameter follows the others */
    diff = 0;
    for (j = 0; j < NB; j++) {
        sl_stream s;
        sl_stream_init(&s, seed, (uint32_t)j, 0, SL_PURPOSE_PRIOR);
        diff += big[j * P] != sl_stream_normal(&s);
    }
    CHECK(diff == 0, "member j uses stream (seed, j, 0, prior): %lu differ",
          (unsigned long)diff);
    /* another seed gives other draws */
    CHECK(sl_prior_draw(P, prior, 5, seed + 1, 0, other, &err) == SL_OK, "seed + 1");
    diff = 0;
    for (j = 0; j < 5; j++)
        for (k = 0; k < P; k++)
            if (k != 3)
                diff += other[j * P + k] == small[j * P + k];
    CHECK(diff == 0, "seed + 1 repeats %lu draws", (unsigned long)diff);
    /* nothing is drawn for N = 0 */
    one[0] = 42.0;
    CHECK(sl_prior_draw(P, prior, 0, seed, 0, one, &err) == SL_OK && one[0] == 42.0,
          "N = 0 draws nothing");
    CHECK(sl_prior_draw(0, NULL, 7, seed, 0, NULL, &err) == SL_OK,
          "p = 0 draws nothing");
}

/* ------------------------------------------------------------------ */
/* Names, supports, errors                                            */
/* ------------------------------------------------------------------ */

static void expect_check(sl_prior_entry e, const char *reason, const char *what)
{
    sl_error err;
    sl_status st;
    const char *freason = "unset", *fwhat;
    sl_error_clear(&err);
    st = sl_prior_check(&e, 3, &err);
    /* the verdict without the message says the same: no fault for a valid
     * entry; else the same reason, and words the message ends with */
    fwhat = sl_prior_fault(&e, &freason);
    if (reason == NULL) {
        CHECK(st == SL_OK, "%s: expected valid, got %s (%s)", what, err.reason,
              err.message);
        CHECK(fwhat == NULL && freason == NULL, "%s: sl_prior_fault finds no fault", what);
        return;
    }
    CHECK(st == SL_EINVAL && strcmp(err.reason, reason) == 0 &&
              strstr(err.message, "parameter 3") != NULL,
          "%s: expected %s naming parameter 3, got status %d reason '%s' (%s)",
          what, reason, (int)st, err.reason, err.message);
    CHECK(fwhat != NULL && freason != NULL && strcmp(freason, reason) == 0,
          "%s: sl_prior_fault gives reason %s", what, reason);
    if (fwhat != NULL && strcmp(reason, "badprior") == 0) {
        size_t lm = strlen(err.message), lw = strlen(fwhat);
        CHECK(lw > 0 && lm >= lw && strcmp(err.message + lm - lw, fwhat) == 0,
              "%s: the message '%s' ends with the verdict '%s'", what, err.message, fwhat);
    }
}

static void test_names_and_errors(void)
{
    const double inf = INFINITY, nan = NAN;
    const char *names[] = {"uniform", "normal", "lognormal", "truncnormal", "fixed"};
    double lo, hi;
    int k;
    sl_error err;
    sl_status st;
    sl_prior_entry e;
    static double buf[16];

    for (k = 0; k < SL_DIST_COUNT; k++) {
        CHECK(sl_dist_find(names[k]) == k, "find %s", names[k]);
        CHECK(sl_dist_get(k) != NULL && strcmp(sl_dist_get(k)->name, names[k]) == 0,
              "name of %d", k);
    }
    CHECK(sl_dist_find("Normal") == -1 && sl_dist_find("") == -1 &&
              sl_dist_find("norm") == -1 && sl_dist_find("normals") == -1 &&
              sl_dist_find(NULL) == -1,
          "unknown names -> -1");
    CHECK(sl_dist_get(-1) == NULL && sl_dist_get(SL_DIST_COUNT) == NULL,
          "unknown ids have no entry");

    /* supports */
    e = (sl_prior_entry){SL_DIST_UNIFORM, -1.37, 2.385, 9, 9};
    sl_prior_support(&e, &lo, &hi);
    CHECK(lo == -1.37 && hi == 2.385, "uniform support");
    e = (sl_prior_entry){SL_DIST_NORMAL, 1, 2, 9, 9};
    sl_prior_support(&e, &lo, &hi);
    CHECK(lo == -inf && hi == inf, "normal support");
    e = (sl_prior_entry){SL_DIST_LOGNORMAL, 1, 2, 9, 9};
    sl_prior_support(&e, &lo, &hi);
    CHECK(lo == 0 && hi == inf, "lognormal support");
    e = (sl_prior_entry){SL_DIST_TRUNCNORMAL, 1, 2, -0.5, inf};
    sl_prior_support(&e, &lo, &hi);
    CHECK(lo == -0.5 && hi == inf, "truncnormal support");
    e = (sl_prior_entry){SL_DIST_FIXED, 6.25, 0, 9, 9};
    sl_prior_support(&e, &lo, &hi);
    CHECK(lo == 6.25 && hi == 6.25, "fixed support");
    e = (sl_prior_entry){17, 1, 2, 3, 4};
    sl_prior_support(&e, &lo, &hi);
    CHECK(isnan(lo) && isnan(hi), "unknown distribution: NaN support");

    /* valid entries, including ignored fields holding anything */
    expect_check((sl_prior_entry){SL_DIST_UNIFORM, -1.37, 2.385, nan, nan}, NULL, "uniform");
    expect_check((sl_prior_entry){SL_DIST_NORMAL, 3.17, 0.629, nan, inf}, NULL, "normal");
    expect_check((sl_prior_entry){SL_DIST_LOGNORMAL, -0.4, 1e-3, 0, 0}, NULL, "lognormal");
    expect_check((sl_prior_entry){SL_DIST_TRUNCNORMAL, 1, 2, -inf, inf}, NULL, "truncnormal open");
    expect_check((sl_prior_entry){SL_DIST_TRUNCNORMAL, 1, 2, 50, 51}, NULL, "truncnormal far");
    expect_check((sl_prior_entry){SL_DIST_FIXED, 6.25, nan, nan, nan}, NULL, "fixed");

    /* every way an entry can be wrong */
    expect_check((sl_prior_entry){-1, 0, 1, 0, 0}, "baddist", "id -1");
    expect_check((sl_prior_entry){SL_DIST_COUNT, 0, 1, 0, 0}, "baddist", "id COUNT");
    expect_check((sl_prior_entry){99, 0, 1, 0, 0}, "baddist", "id 99");
    expect_check((sl_prior_entry){SL_DIST_UNIFORM, 2, 2, 0, 0}, "badprior", "uniform a = b");
    expect_check((sl_prior_entry){SL_DIST_UNIFORM, 3, 2, 0, 0}, "badprior", "uniform a > b");
    expect_check((sl_prior_entry){SL_DIST_UNIFORM, nan, 2, 0, 0}, "badprior", "uniform NaN");
    expect_check((sl_prior_entry){SL_DIST_UNIFORM, 0, inf, 0, 0}, "badprior", "uniform Inf");
    expect_check((sl_prior_entry){SL_DIST_UNIFORM, -inf, 0, 0, 0}, "badprior", "uniform -Inf");
    expect_check((sl_prior_entry){SL_DIST_NORMAL, 0, 0, 0, 0}, "badprior", "normal sd 0");
    expect_check((sl_prior_entry){SL_DIST_NORMAL, 0, -1, 0, 0}, "badprior", "normal sd < 0");
    expect_check((sl_prior_entry){SL_DIST_NORMAL, 0, inf, 0, 0}, "badprior", "normal sd Inf");
    expect_check((sl_prior_entry){SL_DIST_NORMAL, 0, nan, 0, 0}, "badprior", "normal sd NaN");
    expect_check((sl_prior_entry){SL_DIST_NORMAL, nan, 1, 0, 0}, "badprior", "normal mean NaN");
    expect_check((sl_prior_entry){SL_DIST_NORMAL, inf, 1, 0, 0}, "badprior", "normal mean Inf");
    expect_check((sl_prior_entry){SL_DIST_LOGNORMAL, 0, 0, 0, 0}, "badprior", "lognormal sd 0");
    expect_check((sl_prior_entry){SL_DIST_LOGNORMAL, -inf, 1, 0, 0}, "badprior", "lognormal mean -Inf");
    expect_check((sl_prior_entry){SL_DIST_TRUNCNORMAL, 0, 1, 2, 2}, "badprior", "truncnormal lo = hi");
    expect_check((sl_prior_entry){SL_DIST_TRUNCNORMAL, 0, 1, 3, 2}, "badprior", "truncnormal lo > hi");
    expect_check((sl_prior_entry){SL_DIST_TRUNCNORMAL, 0, 1, inf, inf}, "badprior", "truncnormal [Inf, Inf]");
    expect_check((sl_prior_entry){SL_DIST_TRUNCNORMAL, 0, 1, -inf, -inf}, "badprior", "truncnormal [-Inf, -Inf]");
    expect_check((sl_prior_entry){SL_DIST_TRUNCNORMAL, 0, 1, nan, 2}, "badprior", "truncnormal lo NaN");
    expect_check((sl_prior_entry){SL_DIST_TRUNCNORMAL, 0, 1, 0, nan}, "badprior", "truncnormal hi NaN");
    expect_check((sl_prior_entry){SL_DIST_TRUNCNORMAL, 0, 0, 0, 1}, "badprior", "truncnormal sd 0");
    expect_check((sl_prior_entry){SL_DIST_TRUNCNORMAL, 0, -2, 0, 1}, "badprior", "truncnormal sd < 0");
    expect_check((sl_prior_entry){SL_DIST_TRUNCNORMAL, nan, 1, 0, 1}, "badprior", "truncnormal mean NaN");
    expect_check((sl_prior_entry){SL_DIST_FIXED, nan, 0, 0, 0}, "badprior", "fixed NaN");
    expect_check((sl_prior_entry){SL_DIST_FIXED, inf, 0, 0, 0}, "badprior", "fixed Inf");
    st = sl_prior_check(NULL, 1, &err);
    CHECK(st == SL_EINVAL && strcmp(err.reason, "badprior") == 0, "NULL entry");
    CHECK(sl_prior_check(NULL, 1, NULL) == SL_EINVAL, "err may be NULL");
    {
        const char *r = NULL;
        CHECK(sl_prior_fault(NULL, &r) != NULL && r != NULL && strcmp(r, "badprior") == 0,
              "sl_prior_fault: NULL entry");
    }

    /* sl_prior_draw: the entry checks, in order, name the parameter */
    {
        const sl_prior_entry two[2] = {{SL_DIST_NORMAL, 0, 1, 0, 0},
                                       {SL_DIST_NORMAL, 0, -1, 0, 0}};
        st = sl_prior_draw(2, two, 3, 1, 0, buf, &err);
        CHECK(st == SL_EINVAL && strcmp(err.reason, "badprior") == 0 &&
                  strstr(err.message, "parameter 2") != NULL,
              "draw reports the bad entry: %s", err.message);
    }
    {
        const sl_prior_entry bad[1] = {{7, 0, 1, 0, 0}};
        st = sl_prior_draw(1, bad, 3, 1, 0, buf, &err);
        CHECK(st == SL_EINVAL && strcmp(err.reason, "baddist") == 0,
              "draw reports an unknown distribution");
    }
    {
        const sl_prior_entry one[1] = {{SL_DIST_NORMAL, 0, 1, 0, 0}};
        st = sl_prior_draw(1, one, 2, 1, UINT32_MAX, buf, &err);
        CHECK(st == SL_EINVAL && strcmp(err.reason, "badcount") == 0,
              "members beyond 2^32 - 1: %s", err.reason);
        st = sl_prior_draw(1, one, 1, 1, UINT32_MAX, buf, &err);
        CHECK(st == SL_OK && isfinite(buf[0]), "the last member stream works");
        if (sizeof(size_t) > 4) {
            st = sl_prior_draw(1, one, (size_t)UINT32_MAX + 2, 1, 0, buf, &err);
            CHECK(st == SL_EINVAL && strcmp(err.reason, "badcount") == 0,
                  "N beyond 2^32 members: %s", err.reason);
        }
        st = sl_prior_draw(SIZE_MAX / 2, one, 3, 1, 0, buf, &err);
        CHECK(st == SL_ENOMEM && strcmp(err.reason, "nomemory") == 0,
              "p x N overflows: %s", err.reason);
        st = sl_prior_draw(1, NULL, 3, 1, 0, buf, &err);
        CHECK(st == SL_EINVAL && strcmp(err.reason, "badarg") == 0,
              "no prior entries: %s", err.reason);
        st = sl_prior_draw(1, one, 3, 1, 0, NULL, &err);
        CHECK(st == SL_EINVAL && strcmp(err.reason, "badarg") == 0,
              "no output buffer: %s", err.reason);
        CHECK(sl_prior_draw(1, one, 3, 1, 0, NULL, NULL) == SL_EINVAL,
              "err may be NULL in draw");
    }
    /* draws that double precision cannot hold are reported */
    {
        const sl_prior_entry huge[1] = {{SL_DIST_NORMAL, 1e308, 1e308, 0, 0}};
        const sl_prior_entry over[1] = {{SL_DIST_LOGNORMAL, 800, 1, 0, 0}};
        const sl_prior_entry under[1] = {{SL_DIST_LOGNORMAL, -800, 1, 0, 0}};
        st = sl_prior_draw(1, huge, 16, 5, 0, buf, &err);
        CHECK(st == SL_ENUMERIC && strcmp(err.reason, "baddraw") == 0,
              "normal overflow: %s", err.reason);
        st = sl_prior_draw(1, over, 16, 5, 0, buf, &err);
        CHECK(st == SL_ENUMERIC && strcmp(err.reason, "baddraw") == 0,
              "lognormal overflow: %s", err.reason);
        st = sl_prior_draw(1, under, 16, 5, 0, buf, &err);
        CHECK(st == SL_ENUMERIC && strcmp(err.reason, "baddraw") == 0 &&
                  strstr(err.message, "lognormal") != NULL,
              "lognormal underflow to 0: %s", err.message);
    }
}

/* Log-densities against GSL's densities (gsl_ran_flat_pdf,
 * gsl_ran_gaussian_pdf, gsl_ran_lognormal_pdf; the truncated normal as
 * the Gaussian density over the mass gsl_cdf_gaussian_P gives), and the
 * transforms' log-Jacobians against a central difference of the inverse. */
static void test_logpdf(void)
{
    sl_prior_entry u = {SL_DIST_UNIFORM, 0.5, 4.0, 0, 0};
    sl_prior_entry nrm = {SL_DIST_NORMAL, -1.5, 0.7, 0, 0};
    sl_prior_entry lgn = {SL_DIST_LOGNORMAL, log(100.0), 0.5, 0, 0};
    sl_prior_entry tn = {SL_DIST_TRUNCNORMAL, 2.0, 3.0, 0.0, 5.0};
    sl_prior_entry tail = {SL_DIST_TRUNCNORMAL, 0.0, 1.0, 6.0, 7.0};
    sl_prior_entry fx = {SL_DIST_FIXED, 3.0, 0, 0, 0};
    const double xs[] = {0.6, 1.0, 2.5, 3.9};
    size_t k;
    for (k = 0; k < 4; k++) {
        double x = xs[k];
        double mass = gsl_cdf_gaussian_P(5.0 - 2.0, 3.0) - gsl_cdf_gaussian_P(0.0 - 2.0, 3.0);
        CHECK_REL(sl_prior_logpdf(&u, x), log(gsl_ran_flat_pdf(x, 0.5, 4.0)), 1e-13, "uniform");
        CHECK_REL(sl_prior_logpdf(&nrm, x), log(gsl_ran_gaussian_pdf(x + 1.5, 0.7)), 1e-13,
                  "normal");
        CHECK_REL(sl_prior_logpdf(&lgn, 40.0 * x),
                  log(gsl_ran_lognormal_pdf(40.0 * x, log(100.0), 0.5)), 1e-13, "lognormal");
        CHECK_REL(sl_prior_logpdf(&tn, x), log(gsl_ran_gaussian_pdf(x - 2.0, 3.0) / mass),
                  1e-13, "truncnormal");
    }
    /* a far-tail truncation keeps its mass (Q(6) - Q(7) ~ 1e-9) */
    CHECK_REL(sl_prior_logpdf(&tail, 6.5),
              log(gsl_ran_ugaussian_pdf(6.5) /
                  (gsl_cdf_ugaussian_Q(6.0) - gsl_cdf_ugaussian_Q(7.0))), 1e-12, "far tail");
    CHECK(sl_prior_logpdf(&u, 0.4) == -HUGE_VAL, "uniform outside its support");
    CHECK(sl_prior_logpdf(&lgn, 0.0) == -HUGE_VAL, "lognormal at 0");
    CHECK(sl_prior_logpdf(&lgn, -1.0) == -HUGE_VAL, "lognormal below 0");
    CHECK(sl_prior_logpdf(&tn, 5.5) == -HUGE_VAL, "truncnormal outside");
    CHECK(sl_prior_logpdf(&nrm, NAN) == -HUGE_VAL, "NaN");
    CHECK(sl_prior_logpdf(&nrm, HUGE_VAL) == -HUGE_VAL, "Inf");
    CHECK(sl_prior_logpdf(&fx, 3.0) == 0.0 && sl_prior_logpdf(&fx, 3.1) == -HUGE_VAL, "fixed");
    {
        const sl_transform ts[] = {sl_transform_for_bounds(-HUGE_VAL, HUGE_VAL),
                                   sl_transform_for_bounds(2.0, HUGE_VAL),
                                   sl_transform_for_bounds(-HUGE_VAL, 7.0),
                                   sl_transform_for_bounds(0.5, 4.0)};
        const double zv[] = {-3.0, -0.2, 0.0, 1.3, 4.0};
        size_t i, j;
        for (i = 0; i < 4; i++)
            for (j = 0; j < 5; j++) {
                double z = zv[j], h = 1e-5;
                double d = (sl_transform_inverse(&ts[i], z + h) -
                            sl_transform_inverse(&ts[i], z - h)) / (2.0 * h);
                CHECK_CLOSE(sl_transform_logjac(&ts[i], z), log(fabs(d)), 1e-8,
                            "log-Jacobian against a central difference");
            }
        /* far out the logistic's slope underflows in the difference but
         * not in the closed form: log((hi - lo) e^-|z|) to rounding */
        CHECK_REL(sl_transform_logjac(&ts[3], 800.0), log(3.5) - 800.0, 1e-14, "logit far out");
    }
}

/* Several parameters at several points in one call: each value the
 * single-point log-density gives (checked against GSL above), in the
 * column-major layout; an invalid entry is refused and nothing written. */
static void test_logpdf_points(void)
{
    const sl_prior_entry pr[3] = {{SL_DIST_UNIFORM, 0.5, 4.0, 0, 0},
                                  {SL_DIST_LOGNORMAL, log(2.385), 0.3, 0, 0},
                                  {SL_DIST_TRUNCNORMAL, -1.37, 0.8, -2.0, 0.0}};
    const double X[12] = {0.7, 2.1, -0.4, 3.99, 0.0, -1.9, 4.5, 7.7, 0.25, NAN, 1e300, -2.0};
    double L[12], Lbad[2] = {17.0, 17.0};
    sl_prior_entry bad[2] = {{SL_DIST_NORMAL, 0.0, 1.0, 0, 0}, {SL_DIST_NORMAL, 0.0, -1.0, 0, 0}};
    sl_error err;
    sl_status st;
    size_t j, k;
    sl_error_clear(&err);
    st = sl_prior_logpdf_points(3, pr, 4, X, L, &err);
    CHECK(st == SL_OK, "logpdf_points runs");
    for (j = 0; j < 4; j++)
        for (k = 0; k < 3; k++) {
            double want = sl_prior_logpdf(&pr[k], X[k + 3 * j]);
            CHECK(L[k + 3 * j] == want, "logpdf_points row %zu point %zu", k, j);
        }
    CHECK(L[4] == -HUGE_VAL && L[6] == -HUGE_VAL && L[8] == -HUGE_VAL && L[9] == -HUGE_VAL,
          "points outside the supports, and NaN");
    CHECK(isfinite(L[0]) && isfinite(L[1]) && isfinite(L[5]) && isfinite(L[10]),
          "points inside the supports");
    CHECK(isfinite(L[11]), "truncnormal at its lower bound");
    st = sl_prior_logpdf_points(0, pr, 4, X, L, &err);
    CHECK(st == SL_OK, "no parameters: nothing to do");
    st = sl_prior_logpdf_points(2, bad, 1, X, Lbad, &err);
    CHECK(st == SL_EINVAL && strcmp(err.reason, "badprior") == 0 && Lbad[0] == 17.0,
          "an invalid entry is refused before anything is written");
}


/* The table of distributions: every id has an entry with its functions,
 * found again by its name; the lognormal alone needs draws strictly
 * inside its support (its density is 0 at 0, common practice). */
static void test_table(void)
{
    int k;
    for (k = 0; k < SL_DIST_COUNT; k++) {
        const sl_dist_type *d = sl_dist_get(k);
        CHECK(d != NULL && d->name != NULL && d->form != NULL && d->check != NULL &&
                  d->support != NULL && d->logpdf != NULL && d->draw != NULL,
              "entry %d complete", k);
        CHECK(d != NULL && sl_dist_find(d->name) == k, "entry %d found by its name", k);
        CHECK(d != NULL && d->nargs >= 1 && d->nargs <= 4, "entry %d: 1 to 4 numbers", k);
        CHECK(d != NULL && d->open_support == (k == SL_DIST_LOGNORMAL),
              "entry %d: open support only for the lognormal", k);
    }
}

/* Bounds to transforms, and the transforms at many points: the same
 * values as the single-point functions (checked above), the handbook
 * definitions log(x - lo), log(hi - x), log((x - lo)/(hi - x)) (to
 * rounding, z_tol), round trips, and the log-Jacobian of the whole map
 * against central differences of the inverse. The change-of-variables
 * formula (any probability handbook): p_z(z) = p_x(x(z)) |dx/dz|, so
 * exp(logpdf_sum(inverse(z)) + logjac_sum(z)) integrates to 1 over z. */
static void test_points(void)
{
    const double lo[4] = {-INFINITY, 2.385, -INFINITY, -1.37};
    const double hi[4] = {INFINITY, INFINITY, 7.91, 2.385};
    sl_transform t[4], tkeep[1];
    double X[4 * 5], Z[4 * 5], B[4 * 5], J[5], buf[2] = {17.0, 17.0};
    sl_error err;
    sl_status st;
    size_t j, k;
    char what[96];

    sl_error_clear(&err);
    st = sl_transform_from_bounds(4, lo, hi, t, &err);
    CHECK(st == SL_OK && t[0].kind == SL_TRANSFORM_NONE && t[1].kind == SL_TRANSFORM_LOG &&
              t[2].kind == SL_TRANSFORM_NEGLOG && t[3].kind == SL_TRANSFORM_LOGIT,
          "kinds from the bounds");
    {
        const double l1[1] = {3.3}, h1[1] = {3.3}, lnan[1] = {NAN}, hlow[1] = {3.2};
        st = sl_transform_from_bounds(1, l1, h1, tkeep, &err);
        CHECK(st == SL_OK && tkeep[0].kind == SL_TRANSFORM_NONE, "a fixed value: identity");
        tkeep[0].kind = 99;
        st = sl_transform_from_bounds(1, lnan, h1, tkeep, &err);
        CHECK(st == SL_EINVAL && strcmp(err.reason, "badbounds") == 0 && tkeep[0].kind == 99,
              "NaN bound refused, nothing written");
        st = sl_transform_from_bounds(1, l1, hlow, tkeep, &err);
        CHECK(st == SL_EINVAL && strcmp(err.reason, "badbounds") == 0 &&
                  strstr(err.message, "parameter 1") != NULL,
              "lower above upper refused: %s", err.message);
        st = sl_transform_from_bounds(1, NULL, h1, tkeep, &err);
        CHECK(st == SL_EINVAL && strcmp(err.reason, "badarg") == 0, "no bounds");
    }

    /* points inside each parameter's bounds, one column per fraction (not
     * so near a bound that the central differences below lose digits) */
    for (j = 0; j < 5; j++) {
        static const double f5[5] = {0.0137, 0.31831, 0.5, 0.7071, 0.93};
        double f = f5[j];
        X[0 + j * 4] = -37.7 + 100.0 * f;
        X[1 + j * 4] = 2.385 + 40.0 * f;
        X[2 + j * 4] = 7.91 - 40.0 * f;
        X[3 + j * 4] = -1.37 + 3.755 * f;
    }
    st = sl_transform_forward_points(4, t, 5, X, Z, &err);
    CHECK(st == SL_OK, "forward at points runs");
    st = sl_transform_inverse_points(4, t, 5, Z, B, &err);
    CHECK(st == SL_OK, "inverse at points runs");
    for (j = 0; j < 5; j++)
        for (k = 0; k < 4; k++) {
            double x = X[k + j * 4], z = Z[k + j * 4], def;
            CHECK(z == sl_transform_forward(&t[k], x) &&
                      B[k + j * 4] == sl_transform_inverse(&t[k], z),
                  "points = single values, row %zu column %zu", k, j);
            def = k == 0 ? x : k == 1 ? log(x - lo[1]) : k == 2 ? log(hi[2] - x)
                                                              : log((x - lo[3]) / (hi[3] - x));
            snprintf(what, sizeof what, "forward against its definition, row %zu x %.17g", k, x);
            CHECK_CLOSE(z, def, z_tol(&t[k], x, z), what);
            snprintf(what, sizeof what, "round trip, row %zu x %.17g", k, x);
            CHECK_CLOSE(B[k + j * 4], x, 16 * DBL_EPSILON * (fabs(x) + 10.0), what);
        }

    /* the log-Jacobian of the whole inverse: the sum of the rows' logs of
     * central differences (h = 1e-5: error O(h^2) relative) */
    st = sl_transform_logjac_sum(4, t, 5, Z, J, &err);
    CHECK(st == SL_OK, "logjac at points runs");
    for (j = 0; j < 5; j++) {
        double want = 0.0, h = 1e-5;
        for (k = 0; k < 4; k++) {
            double z = Z[k + j * 4];
            double d = (sl_transform_inverse(&t[k], z + h) - sl_transform_inverse(&t[k], z - h)) /
                       (2.0 * h);
            want += log(fabs(d));
        }
        snprintf(what, sizeof what, "log |det dx/dz| at column %zu", j);
        CHECK_CLOSE(J[j], want, 1e-8, what);
    }
    st = sl_transform_logjac_sum(4, t, 0, NULL, NULL, &err);
    CHECK(st == SL_OK, "no points: nothing to do");
    st = sl_transform_inverse_points(4, t, 1, NULL, buf, &err);
    CHECK(st == SL_EINVAL && strcmp(err.reason, "badarg") == 0 && buf[0] == 17.0,
          "no input refused");

    /* change of variables: each prior, in the space of its support's
     * transform, has a density of z integrating to 1 (midpoint rule over
     * [-40, 40], 80000 cells; the tails beyond hold < 1e-12 here) */
    {
        const sl_prior_entry pr[4] = {{SL_DIST_NORMAL, -1.37, 2.385, 0, 0},
                                      {SL_DIST_LOGNORMAL, 0.413, 0.347, 0, 0},
                                      {SL_DIST_UNIFORM, -1.37, 2.385, 0, 0},
                                      {SL_DIST_TRUNCNORMAL, 0.2, 0.9, -INFINITY, 0.95}};
        for (k = 0; k < 4; k++) {
            double plo, phi, sum = 0.0, dz = 1e-3;
            sl_transform tk;
            size_t i, n = check_light_() ? 8000 : 80000;
            if (n == 8000)
                dz = 1e-2;
            sl_prior_support(&pr[k], &plo, &phi);
            if (pr[k].dist == SL_DIST_TRUNCNORMAL)
                plo = -INFINITY;
            tk = sl_transform_for_bounds(plo, phi);
            for (i = 0; i < n; i++) {
                double z = -40.0 + ((double)i + 0.5) * dz, x, lp, lj;
                sl_transform_inverse_points(1, &tk, 1, &z, &x, &err);
                sl_prior_logpdf_sum(1, &pr[k], 1, &x, &lp, &err);
                sl_transform_logjac_sum(1, &tk, 1, &z, &lj, &err);
                sum += exp(lp + lj) * dz;
            }
            snprintf(what, sizeof what, "density of z integrates to 1 (%s)",
                     sl_dist_get(pr[k].dist)->name);
            CHECK_CLOSE(sum, 1.0, 1e-6, what);
        }
    }
}

/* The joint log-density of several entries: the sum of GSL's log-densities
 * (gsl_ran_flat_pdf, gsl_ran_gaussian_pdf, gsl_ran_lognormal_pdf; the
 * truncated normal as the Gaussian density over the mass
 * gsl_cdf_gaussian_P gives), -Inf when a point leaves a support or is NaN,
 * and the sum in order of the rows of what sl_prior_logpdf_points gives. */
static void test_logpdf_sum(void)
{
    const sl_prior_entry pr[4] = {{SL_DIST_UNIFORM, 0.5, 4.0, 0, 0},
                                  {SL_DIST_NORMAL, -1.5, 0.7, 0, 0},
                                  {SL_DIST_LOGNORMAL, log(100.0), 0.5, 0, 0},
                                  {SL_DIST_TRUNCNORMAL, 2.0, 3.0, 0.0, 5.0}};
    const double X[4 * 4] = {0.6, -1.2, 40.0, 0.6,   3.9, 0.3, 160.0, 4.99,
                             4.1, -1.2, 40.0, 0.6,   1.0, NAN, 90.0, 2.0};
    double L[4], P[16], Lbad[1] = {17.0};
    const sl_prior_entry bad[2] = {{SL_DIST_NORMAL, 0.0, 1.0, 0, 0},
                                   {SL_DIST_UNIFORM, 2.0, 1.0, 0, 0}};
    double mass = gsl_cdf_gaussian_P(5.0 - 2.0, 3.0) - gsl_cdf_gaussian_P(0.0 - 2.0, 3.0);
    sl_error err;
    sl_status st;
    size_t j, k;
    sl_error_clear(&err);
    st = sl_prior_logpdf_sum(4, pr, 4, X, L, &err);
    CHECK(st == SL_OK, "logpdf_sum runs");
    st = sl_prior_logpdf_points(4, pr, 4, X, P, &err);
    for (j = 0; j < 2; j++) {
        const double *x = X + 4 * j;
        double want = log(gsl_ran_flat_pdf(x[0], 0.5, 4.0)) +
                      log(gsl_ran_gaussian_pdf(x[1] + 1.5, 0.7)) +
                      log(gsl_ran_lognormal_pdf(x[2], log(100.0), 0.5)) +
                      log(gsl_ran_gaussian_pdf(x[3] - 2.0, 3.0) / mass);
        double rows = 0.0;
        CHECK_REL(L[j], want, 1e-13, "joint log-density against GSL");
        for (k = 0; k < 4; k++)
            rows += P[k + 4 * j];
        CHECK(L[j] == rows, "the sum of the rows' log-densities, in order");
    }
    CHECK(L[2] == -HUGE_VAL, "a point outside one support: -Inf");
    CHECK(L[3] == -HUGE_VAL, "a NaN value: -Inf");
    st = sl_prior_logpdf_sum(2, bad, 1, X, Lbad, &err);
    CHECK(st == SL_EINVAL && strcmp(err.reason, "badprior") == 0 &&
              strstr(err.message, "parameter 2") != NULL && Lbad[0] == 17.0,
          "an invalid entry is refused before anything is written");
    st = sl_prior_logpdf_sum(1, pr, 1, X, NULL, &err);
    CHECK(st == SL_EINVAL && strcmp(err.reason, "badarg") == 0, "no output buffer");
    st = sl_prior_logpdf_sum(0, pr, 1, X, Lbad, &err);
    CHECK(st == SL_OK && Lbad[0] == 0.0, "no entries: log-density 0");
}

int main(void)
{
    gsl_set_error_handler_off();
    test_transforms();
    test_draws();
    test_truncation_extremes();
    test_inversion();
    test_determinism();
    test_names_and_errors();
    test_logpdf();
    test_logpdf_points();
    test_table();
    test_points();
    test_logpdf_sum();
    CHECK_DONE("test_prior");
}
