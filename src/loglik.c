/* loglik.c - observation log-likelihoods of six families, per ensemble member. */
#include "sluice/loglik.h"

#include <float.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <gsl/gsl_cdf.h>
#include <gsl/gsl_math.h>
#include <gsl/gsl_sf_erf.h>
#include <gsl/gsl_sf_gamma.h>

#define LN_SQRT_2PI 0.918938533204672741780329736406 /* log sqrt(2 pi) */
#define MAX_COUNT 9007199254740992.0                   /* 2^53 */
#define NEG_INF (-HUGE_VAL)
#define NOT_A_NUMBER ((double)NAN)

/* Members handled per pass over the rows: the block's column entries of
 * Yhat stay in cache from one row to the next (256 lines of 64 bytes). */
enum { MEMBER_BLOCK = 256 };

/* A row kernel adds log p(y | h[j*ldh]) to ll[j] for j = 0..n-1. It does the
 * per-row work (logs, reciprocals, normalising constants) once, then loops
 * over members. A non-finite h gives -Inf; a y outside the family's support
 * gives -Inf; an invalid sigma or aux gives NaN. */
typedef void (*row_fn)(double y, double sigma, double aux, const double *h,
                       size_t ldh, size_t n, double *ll);

static void add_constant(double v, size_t n, double *ll)
{
    size_t j;
    for (j = 0; j < n; j++)
        ll[j] += v;
}

static int positive_finite(double v) { return isfinite(v) && v > 0; }

/* An error scale must be a finite normal double: below DBL_MIN (a
   subnormal) 1/sigma overflows and the log-likelihood comes out NaN or
   -Inf (IEEE 754 binary64: DBL_MIN = 2^-1022 is the smallest normal). */
static int scale_ok(double v) { return isfinite(v) && v >= DBL_MIN; }

static int whole_count(double v)
{
    return v >= 0 && v <= MAX_COUNT && v == floor(v);
}

/* log Phi(z), finite for every finite z whose square does not overflow.
 * Left tail through log erfc (Phi(z) = erfc(-z/sqrt 2)/2), which stays
 * accurate where Phi itself underflows; far left tail (|z| > 1e5) by the
 * asymptotic series of the normal tail, whose next term there is below
 * 1e-20 relative; right half through log1p of the upper tail. */
static double log_ncdf(double z)
{
    if (isnan(z))
        return z;
    if (z < -1e5) {
        double iz2 = 1.0 / (z * z);
        return -0.5 * z * z - log(-z) - LN_SQRT_2PI + log1p(-iz2 + 3 * iz2 * iz2);
    }
    if (z <= 0)
        return gsl_sf_log_erfc(-z * M_SQRT1_2) - M_LN2;
    return log1p(-gsl_cdf_ugaussian_Q(z));
}

/* The log normalising constant of Student's t with nu > 0 degrees of
 * freedom, log Gamma((nu + 1)/2) - log Gamma(nu/2) - log(nu pi)/2, without
 * cancellation at large nu (it must tend to the normal's -log sqrt(2 pi)).
 * With a = nu/2: below a = 1 through Gamma(a) = Gamma(a + 1)/a (log a taken
 * from nu, which cannot underflow); from a = 50 up the two log Gammas are
 * Stirling series (terms to 1/z^5; the first neglected term is below 1e-16
 * there), their leading logs cancelled by hand, so nothing of the size of
 * log Gamma or log nu is subtracted. */
static double t_log_norm(double nu)
{
    const double a = 0.5 * nu;
    if (a < 1)
        return gsl_sf_lngamma(a + 0.5) - gsl_sf_lngamma(a + 1) +
               0.5 * (log(nu) - M_LNPI) - M_LN2;
    if (a < 50)
        return gsl_sf_lngamma(a + 0.5) - gsl_sf_lngamma(a) -
               0.5 * (log(nu) + M_LNPI);
    {
        const double b = a + 0.5, ia = 1 / a, ib = 1 / b;
        const double ia3 = ia * ia * ia, ib3 = ib * ib * ib;
        return -LN_SQRT_2PI + (a * log1p(0.5 * ia) - 0.5) + (ib - ia) / 12 -
               (ib3 - ia3) / 360 + (ib3 * ib * ib - ia3 * ia * ia) / 1260;
    }
}

/* ---- gaussian: y ~ N(h, sigma^2) ---------------------------------------- */

static void gaussian_rows(double y, double sigma, double aux, const double *h,
                          size_t ldh, size_t n, double *ll)
{
    double is, c;
    size_t j;
    (void)aux;
    if (!scale_ok(sigma)) {
        add_constant(NOT_A_NUMBER, n, ll);
        return;
    }
    is = 1 / sigma;
    c = -log(sigma) - LN_SQRT_2PI;
    /* h = +-Inf gives -Inf by itself; NaN h is mapped to -Inf. */
    for (j = 0; j < n; j++) {
        const double d = (y - h[j * ldh]) * is;
        const double v = c - 0.5 * d * d;
        ll[j] += isnan(v) ? NEG_INF : v;
    }
}

/* ---- lognormal: log y ~ N(log h, sigma^2), density of y ----------------- */

static void lognormal_rows(double y, double sigma, double aux, const double *h,
                           size_t ldh, size_t n, double *ll)
{
    double ly, is, c;
    size_t j;
    (void)aux;
    if (!scale_ok(sigma)) {
        add_constant(NOT_A_NUMBER, n, ll);
        return;
    }
    if (!(y > 0) || !isfinite(y)) {
        add_constant(NEG_INF, n, ll);
        return;
    }
    ly = log(y);
    is = 1 / sigma;
    c = -ly - log(sigma) - LN_SQRT_2PI;
    for (j = 0; j < n; j++) {
        const double hj = h[j * ldh];
        if (hj > 0 && hj < HUGE_VAL) {
            const double d = (ly - log(hj)) * is;
            ll[j] += c - 0.5 * d * d;
        } else {
            ll[j] += NEG_INF;
        }
    }
}

/* ---- student_t: (y - h)/sigma ~ t(nu), nu = aux -------------------------- */

static void student_t_rows(double y, double sigma, double aux, const double *h,
                           size_t ldh, size_t n, double *ll)
{
    const double nu = aux;
    double is, inu, e, c;
    size_t j;
    if (!scale_ok(sigma) || !positive_finite(nu)) {
        add_constant(NOT_A_NUMBER, n, ll);
        return;
    }
    is = 1 / sigma;
    inu = 1 / nu;
    e = -0.5 * (nu + 1);
    c = t_log_norm(nu) - log(sigma);
    if (inu < HUGE_VAL) {
        for (j = 0; j < n; j++) {
            const double d = (y - h[j * ldh]) * is;
            const double v = c + e * log1p(d * d * inu);
            ll[j] += isnan(v) ? NEG_INF : v;
        }
    } else {
        /* nu so small that 1/nu overflows: log(1 + d^2/nu) from logs */
        const double lnu = log(nu);
        for (j = 0; j < n; j++) {
            const double d = (y - h[j * ldh]) * is;
            const double v = c + e * (log(nu + d * d) - lnu);
            ll[j] += isnan(v) ? NEG_INF : v;
        }
    }
}

/* ---- poisson: y ~ Poisson(h) --------------------------------------------- */

static void poisson_rows(double y, double sigma, double aux, const double *h,
                         size_t ldh, size_t n, double *ll)
{
    double c;
    size_t j;
    (void)sigma;
    (void)aux;
    if (!whole_count(y)) {
        add_constant(NEG_INF, n, ll);
        return;
    }
    c = -gsl_sf_lngamma(y + 1);
    for (j = 0; j < n; j++) {
        const double hj = h[j * ldh];
        if (hj >= 0 && hj < HUGE_VAL)
            ll[j] += (y > 0 ? y * log(hj) : 0) - hj + c; /* 0 log 0 = 0 */
        else
            ll[j] += NEG_INF;
    }
}

/* ---- binomial: y ~ Bin(n, 1/(1 + exp(-h))), n = aux ---------------------- */

static void binomial_rows(double y, double sigma, double aux, const double *h,
                          size_t ldh, size_t n, double *ll)
{
    const double trials = aux;
    double f, c;
    size_t j;
    (void)sigma;
    if (!(trials >= 1 && whole_count(trials))) {
        add_constant(NOT_A_NUMBER, n, ll);
        return;
    }
    if (!whole_count(y) || y > trials) {
        add_constant(NEG_INF, n, ll);
        return;
    }
    f = trials - y;
    /* log C(n, y) = -log(n + 1) - log B(y + 1, n - y + 1): the beta function
     * keeps it accurate when n is large and y or n - y small. */
    c = (y == 0 || f == 0) ? 0
                           : -log1p(trials) - gsl_sf_lnbeta(y + 1, f + 1);
    for (j = 0; j < n; j++) {
        const double hj = h[j * ldh];
        if (isfinite(hj)) {
            /* log sigmoid(+-h) in a form that neither overflows nor loses
             * the small term: with l = log(1 + exp(-|h|)),
             * log p = min(h, 0) - l and log(1 - p) = min(-h, 0) - l. */
            const double l = log1p(exp(-fabs(hj)));
            const double lp = (hj < 0 ? hj : 0) - l;
            const double lq = (hj > 0 ? -hj : 0) - l;
            ll[j] += c + y * lp + f * lq;
        } else {
            ll[j] += NEG_INF;
        }
    }
}

/* ---- censored: Gaussian left-censored at L = aux ------------------------- */

static void censored_rows(double y, double sigma, double aux, const double *h,
                          size_t ldh, size_t n, double *ll)
{
    const double limit = aux;
    double is;
    size_t j;
    if (!scale_ok(sigma) || !isfinite(limit) || isnan(y)) {
        add_constant(NOT_A_NUMBER, n, ll);
        return;
    }
    if (y > limit) {
        gaussian_rows(y, sigma, aux, h, ldh, n, ll);
        return;
    }
    is = 1 / sigma;
    for (j = 0; j < n; j++) {
        const double hj = h[j * ldh];
        ll[j] += isfinite(hj) ? log_ncdf((limit - hj) * is) : NEG_INF;
    }
}

static int dof_ok(double aux) { return positive_finite(aux); }
static int trials_ok(double aux) { return aux >= 1 && whole_count(aux); }
static int limit_ok(double aux) { return isfinite(aux); }

/* ---- quantiles and draws --------------------------------------------------
 * The quantile of y at u in (0, 1) given h, sigma and aux, in the
 * parameterisation of the densities above; for the count families the
 * smallest k with P(Y <= k) >= u. An invalid u, sigma, aux or an h outside
 * the family's domain gives NaN. */

static int prob_ok(double u) { return u > 0 && u < 1; }

static double gaussian_quantile(double u, double h, double sigma, double aux)
{
    (void)aux;
    if (!prob_ok(u) || !scale_ok(sigma) || !isfinite(h))
        return NOT_A_NUMBER;
    return h + sigma * gsl_cdf_ugaussian_Pinv(u);
}

static double lognormal_quantile(double u, double h, double sigma, double aux)
{
    (void)aux;
    if (!prob_ok(u) || !scale_ok(sigma) || !(h > 0 && h < HUGE_VAL))
        return NOT_A_NUMBER;
    return exp(log(h) + sigma * gsl_cdf_ugaussian_Pinv(u));
}

/* The midpoint of a bracket [lo, hi]: geometric when it spans more than a
 * factor of 4 above 0, so a bracket of many decades halves in log. */
static double bracket_mid(double lo, double hi)
{
    return lo > 0 && hi > 4 * lo ? sqrt(lo) * sqrt(hi) : 0.5 * (lo + hi);
}

/* The quantile of Student's t with nu > 0 degrees of freedom at u in (0, 1).
 * By symmetry it solves Q(y) = p for y >= 0, Q(y) = P(T > y) from
 * gsl_cdf_tdist_Q, p = min(u, 1 - u) (1 - u is exact for u >= 1/2).
 * Newton steps on Q in the body and on log Q against log y in the tails
 * (where Q falls as a power of y), each kept inside a bracket that every
 * evaluation narrows; a step that leaves it is replaced by the bracket's
 * midpoint, so the search converges for every nu (an iteration from a
 * fixed-form first guess does not: it fails for nu below 1 at moderate u).
 * A quantile beyond T_MAX is +-Inf: past it y^2, which GSL's Q forms,
 * overflows (only below about 0.12 degrees of freedom can a uniform of
 * the streams, at least 2^-53 from 0 and 1, reach it). */
#define T_MAX 1e154
static double t_std_quantile(double u, double nu)
{
    const double p = u < 0.5 ? u : 1 - u;
    const double sign = u < 0.5 ? -1 : 1;
    const double c = t_log_norm(nu), e = -0.5 * (nu + 1), inu = 1 / nu;
    double lo = 0, hi = 1, y;
    int k;
    if (p == 0.5)
        return 0;
    /* bracket Q(lo) > p >= Q(hi), hi growing by squaring up to T_MAX */
    while (gsl_cdf_tdist_Q(hi, nu) > p) {
        lo = hi;
        if (hi == T_MAX)
            return sign * HUGE_VAL;
        hi = hi < 2 ? 2 : (hi < 1e77 ? hi * hi : T_MAX);
    }
    y = bracket_mid(lo, hi);
    for (k = 0; k < 400; k++) {
        const double q = gsl_cdf_tdist_Q(y, nu);
        /* density by the row kernel's formula; 1/nu may overflow */
        const double lr = inu < HUGE_VAL ? log1p(y * y * inu)
                                         : log(nu + y * y) - log(nu);
        const double d = exp(c + e * lr);
        double next;
        if (q > p)
            lo = y;
        else if (q < p)
            hi = y;
        else
            return sign * y;
        if (q < 0.25) /* Newton on log Q against log y */
            next = y * exp((log(q) - log(p)) * q / (y * d));
        else          /* Newton on Q against y */
            next = y + (q - p) / d;
        if (!(next > lo && next < hi))
            next = bracket_mid(lo, hi);
        if (fabs(next - y) <= 2 * DBL_EPSILON * next || next == lo ||
            next == hi)
            return sign * next;
        y = next;
    }
    return sign * y;
}

static double student_t_quantile(double u, double h, double sigma, double aux)
{
    if (!prob_ok(u) || !scale_ok(sigma) || !positive_finite(aux) ||
        !isfinite(h))
        return NOT_A_NUMBER;
    return h + sigma * t_std_quantile(u, aux);
}

/* The smallest whole k in (lo, hi] with cdf(k) >= u, given cdf(lo) < u
 * (lo may be -1, "below the support") and cdf(hi) >= u: bisection, so
 * the answer is exact whatever the shape of the CDF. */
static double count_search(double u, double lo, double hi,
                           double (*cdf)(double k, double p1, double p2),
                           double p1, double p2)
{
    while (hi - lo > 1) {
        const double mid = floor(0.5 * (lo + hi));
        if (cdf(mid, p1, p2) >= u)
            hi = mid;
        else
            lo = mid;
    }
    return hi;
}

/* P(Y <= k) of Poisson(lambda) = Q(k + 1, lambda), the upper regularised
 * incomplete gamma function (Abramowitz & Stegun 6.5.2, 26.4.21), as
 * gsl_cdf_poisson_P forms it (through gsl_cdf_gamma_Q), here for k beyond
 * unsigned int too. Above lambda = 1e6 and below the mean it is taken as
 * 1 - P(k + 1, lambda): GSL's Q there switches to a large-x expansion that
 * holds only for k + 1 much below lambda (its quantiles were off by
 * thousands of counts at lambda = 1e9), while its P takes the continued
 * fraction, which converges there. */
static double poisson_cdf(double k, double lambda, double unused)
{
    (void)unused;
    if (!(lambda > 0))
        return 1.0;
    if (k + 1 <= lambda && lambda > 1e6)
        return 1 - gsl_sf_gamma_inc_P(k + 1, lambda);
    return gsl_cdf_gamma_Q(lambda, k + 1, 1.0);
}

static double poisson_quantile(double u, double h, double sigma, double aux)
{
    double hi;
    (void)sigma;
    (void)aux;
    if (!prob_ok(u) || !(h >= 0 && h <= MAX_COUNT))
        return NOT_A_NUMBER;
    /* 40 standard deviations above the mean hold all but far less than
     * 2^-53 of the mass; widen all the same until the bracket holds */
    hi = ceil(h + 40 * sqrt(h) + 40);
    while (poisson_cdf(hi, h, 0) < u)
        hi *= 2;
    return count_search(u, -1, hi, poisson_cdf, h, 0);
}

/* The continued fraction of the regularised incomplete beta function,
 * I_x(a, b) = x^a (1 - x)^b / (a B(a, b)) / (1 + d1/(1 + d2/(1 + ...))),
 * d_{2m+1} = -(a + m)(a + b + m) x / ((a + 2m)(a + 2m + 1)),
 * d_{2m} = m (b - m) x / ((a + 2m - 1)(a + 2m))  (DLMF 8.17.22), by the
 * modified Lentz method, for x < (a + 1)/(a + b + 2) where it converges
 * fast. Returns the fraction's value 1/(1 + d1/(1 + ...)) times 1. GSL's
 * own evaluation stops after 512 terms, too few once a and b pass about
 * 1e6 (a binomial of 1e7 trials); this one allows up to 1e6 terms, the
 * count grows as the square root of a + b. */
static double beta_cf(double a, double b, double x)
{
    const double tiny = 1e-300;
    double c = 1, d = 1 - (a + b) * x / (a + 1), f;
    long m;
    if (fabs(d) < tiny)
        d = tiny;
    d = 1 / d;
    f = d;
    for (m = 1; m <= 1000000; m++) {
        const double dm = (double)m;
        double t, delta;
        t = dm * (b - dm) * x / ((a + 2 * dm - 1) * (a + 2 * dm));
        d = 1 + t * d;
        c = 1 + t / c;
        d = fabs(d) < tiny ? 1 / tiny : 1 / d;
        c = fabs(c) < tiny ? tiny : c;
        f *= d * c;
        t = -(a + dm) * (a + b + dm) * x / ((a + 2 * dm) * (a + 2 * dm + 1));
        d = 1 + t * d;
        c = 1 + t / c;
        d = fabs(d) < tiny ? 1 / tiny : 1 / d;
        c = fabs(c) < tiny ? tiny : c;
        delta = d * c;
        f *= delta;
        if (fabs(delta - 1) < 2 * DBL_EPSILON)
            break;
    }
    return f;
}

/* lgamma(x) minus its Stirling approximation (x - 1/2) log x - x +
 * log sqrt(2 pi): from x = 10 up its asymptotic series (the first term
 * left out is below 2e-12 / x^9), below through lgamma itself. */
static double stirling_rest(double x)
{
    double ix, ix2;
    if (x < 10)
        return gsl_sf_lngamma(x) - ((x - 0.5) * log(x) - x + LN_SQRT_2PI);
    ix = 1 / x;
    ix2 = ix * ix;
    return ix * (1.0 / 12 - ix2 * (1.0 / 360 - ix2 * (1.0 / 1260 - ix2 / 1680)));
}

/* P(Y <= k) of Bin(n, p) = I_q(n - k, k + 1), q = 1 - p (Abramowitz &
 * Stegun 26.5.24), as gsl_cdf_binomial_P forms it (there through
 * gsl_cdf_beta_Q), here for doubles. Up to 1e6 trials GSL evaluates it.
 * Above, the continued fraction above does, with the factor
 * q^a p^b / B(a, b) (a = n - k, b = k + 1) taken without the cancellation
 * of terms of the size of n: with d = p (a + b) - b (one rounding, by fma)
 * and B by Stirling's formula, its log is
 *   a log1p(-d/a) + b log1p(d/b) + log(a b/(a + b))/2 - log sqrt(2 pi)
 *   - (rest(a) + rest(b) - rest(a + b)).
 * The smaller of p and q is the one formed from the logit h (it is the
 * accurate one); the other is 1 minus it, exactly in the formulas. */
static double binomial_cdf(double k, double h, double trials)
{
    double a, b, p, q, d, lpre, pre;
    if (k >= trials)
        return 1.0;
    if (trials <= 1e6)
        return gsl_cdf_beta_Q(1 / (1 + exp(-h)), k + 1, trials - k);
    a = trials - k;
    b = k + 1;
    if (h <= 0) {
        p = 1 / (1 + exp(-h));
        q = 1 - p;
        d = fma(p, a + b, -b);
    } else {
        q = 1 / (1 + exp(h));
        p = 1 - q;
        d = -fma(q, a + b, -a);
    }
    lpre = a * log1p(-d / a) + b * log1p(d / b) +
           0.5 * (log(a) + log(b) - log(a + b)) - LN_SQRT_2PI -
           (stirling_rest(a) + stirling_rest(b) - stirling_rest(a + b));
    pre = exp(lpre);
    if (q < (a + 1) / (a + b + 2))
        return pre * beta_cf(a, b, q) / a;
    return 1 - pre * beta_cf(b, a, p) / b;
}

static double binomial_quantile(double u, double h, double sigma, double aux)
{
    (void)sigma;
    if (!prob_ok(u) || !trials_ok(aux) || !isfinite(h))
        return NOT_A_NUMBER;
    return count_search(u, -1, aux, binomial_cdf, h, aux);
}

/* Y = max(X, L) with X ~ N(h, sigma^2): P(Y = L) = Phi((L - h)/sigma), so
 * the quantile is L up to that level and X's quantile above it. */
static double censored_quantile(double u, double h, double sigma, double aux)
{
    double x;
    if (!limit_ok(aux))
        return NOT_A_NUMBER;
    x = gaussian_quantile(u, h, sigma, aux);
    return isnan(x) ? x : (x > aux ? x : aux);
}

/* A draw from a standard normal z: the families that are transforms of a
 * normal take z itself (the value of their quantile at Phi(z), without
 * rounding through Phi); the others invert their CDF at u. */
static double gaussian_sample(double z, double u, double h, double sigma,
                              double aux)
{
    (void)u;
    (void)aux;
    if (!isfinite(z) || !scale_ok(sigma) || !isfinite(h))
        return NOT_A_NUMBER;
    return h + sigma * z;
}

static double lognormal_sample(double z, double u, double h, double sigma,
                               double aux)
{
    (void)u;
    (void)aux;
    if (!isfinite(z) || !scale_ok(sigma) || !(h > 0 && h < HUGE_VAL))
        return NOT_A_NUMBER;
    return exp(log(h) + sigma * z);
}

static double censored_sample(double z, double u, double h, double sigma,
                              double aux)
{
    double x;
    if (!limit_ok(aux))
        return NOT_A_NUMBER;
    x = gaussian_sample(z, u, h, sigma, aux);
    return isnan(x) ? x : (x > aux ? x : aux);
}

#define SAMPLE_BY_QUANTILE(fam)                                               \
    static double fam##_sample(double z, double u, double h, double sigma,    \
                               double aux)                                    \
    {                                                                         \
        (void)z;                                                              \
        return fam##_quantile(u, h, sigma, aux);                              \
    }
SAMPLE_BY_QUANTILE(student_t)
SAMPLE_BY_QUANTILE(poisson)
SAMPLE_BY_QUANTILE(binomial)
#undef SAMPLE_BY_QUANTILE

/* ---- mid-distribution functions -------------------------------------------
 * P(Y < y) + P(Y = y)/2 at y given h, sigma and aux: the value a forecast
 * probability integral transform takes (Dawid 1984, "Statistical theory:
 * the prequential approach", JRSS A 147; for counts the randomised PIT's
 * mean, Czado, Gneiting & Held 2009, Biometrics 65). NaN as for the
 * quantiles, and for a NaN y. */

static double poisson_logpdf(double y, double h, double sigma, double aux);
static double binomial_logpdf(double y, double h, double sigma, double aux);

/* Phi(z) = erfc(-z/sqrt 2)/2 (Abramowitz & Stegun 7.1.2, 26.2.29): C's
 * erfc keeps its relative accuracy in the lower tail, and costs a
 * fraction of GSL's gsl_cdf_ugaussian_P, which a PIT calls per member. */
static double ncdf(double z) { return 0.5 * erfc(-z * M_SQRT1_2); }

static double gaussian_cdf(double y, double h, double sigma, double aux)
{
    (void)aux;
    if (isnan(y) || !scale_ok(sigma) || !isfinite(h))
        return NOT_A_NUMBER;
    return ncdf((y - h) / sigma);
}

static double lognormal_cdf(double y, double h, double sigma, double aux)
{
    (void)aux;
    if (isnan(y) || !scale_ok(sigma) || !(h > 0 && h < HUGE_VAL))
        return NOT_A_NUMBER;
    if (!(y > 0))
        return 0.0;
    return ncdf((log(y) - log(h)) / sigma);
}

static double student_t_cdf(double y, double h, double sigma, double aux)
{
    if (isnan(y) || !scale_ok(sigma) || !positive_finite(aux) || !isfinite(h))
        return NOT_A_NUMBER;
    return gsl_cdf_tdist_P((y - h) / sigma, aux);
}

/* The mid-distribution function of a count family from its CDF F and
 * its log probability lp(y) (the family's logpdf at h, p2 its aux):
 * F(y) - P(Y = y)/2 at a whole y (one CDF evaluation; its absolute error
 * stays at rounding, all a PIT needs), F(floor y) between the whole
 * numbers, 0 below 0. */
static double count_mid(double y, double (*cdf)(double k, double p1, double p2),
                        double (*lp)(double y, double h, double sigma, double aux),
                        double p1, double p2)
{
    double k, v;
    if (y < 0)
        return 0.0;
    k = floor(y);
    if (k != y)
        return cdf(k, p1, p2);
    v = cdf(k, p1, p2) - 0.5 * exp(lp(k, p1, NOT_A_NUMBER, p2));
    return v > 0 ? v : 0.0;
}

static double poisson_mid(double y, double h, double sigma, double aux)
{
    (void)sigma;
    (void)aux;
    if (isnan(y) || !(h >= 0 && h <= MAX_COUNT))
        return NOT_A_NUMBER;
    if (y >= HUGE_VAL)
        return 1.0;
    return count_mid(y, poisson_cdf, poisson_logpdf, h, 0);
}

static double binomial_mid(double y, double h, double sigma, double aux)
{
    (void)sigma;
    if (isnan(y) || !trials_ok(aux) || !isfinite(h))
        return NOT_A_NUMBER;
    if (y > aux)
        return 1.0;
    return count_mid(y, binomial_cdf, binomial_logpdf, h, aux);
}

/* Y = max(X, L): a y at or below L is the atom, whose mass
 * Phi((L - h)/sigma) counts half; above it P(Y <= y) = Phi((y - h)/sigma). */
static double censored_cdf(double y, double h, double sigma, double aux)
{
    if (isnan(y) || !limit_ok(aux))
        return NOT_A_NUMBER;
    if (y <= aux) {
        const double a = gaussian_cdf(aux, h, sigma, aux);
        return 0.5 * a;
    }
    return gaussian_cdf(y, h, sigma, aux);
}

/* ---- the type table ------------------------------------------------------ */

/* The scalar density of each family is its row kernel for one member. */
#define SCALAR_LOGPDF(fam)                                                    \
    static double fam##_logpdf(double y, double h, double sigma, double aux)  \
    {                                                                         \
        double v = 0;                                                         \
        fam##_rows(y, sigma, aux, &h, 1, 1, &v);                              \
        return v;                                                             \
    }
SCALAR_LOGPDF(gaussian)
SCALAR_LOGPDF(lognormal)
SCALAR_LOGPDF(student_t)
SCALAR_LOGPDF(poisson)
SCALAR_LOGPDF(binomial)
SCALAR_LOGPDF(censored)
#undef SCALAR_LOGPDF


static int positive_ok(double y, double aux)
{
    (void)aux;
    return y > 0;
}
static int count_ok(double y, double aux)
{
    (void)aux;
    return whole_count(y);
}
static int successes_ok(double y, double aux) { return whole_count(y) && y <= aux; }

typedef struct {
    sl_family type;                      /* the public part */
    row_fn add_rows;                     /* the ensemble kernel */
    int (*aux_ok)(double aux);           /* NULL when aux is unused */
    const char *aux_rule;                /* what a valid aux is */
    int (*value_ok)(double y, double aux); /* NULL: any finite value */
    const char *value_rule;              /* what a valid finite value is */
} family_impl;

static const family_impl families[SL_FAMILY_COUNT] = {
    [SL_FAMILY_GAUSSIAN] = {{"gaussian", 1, NULL, gaussian_logpdf,
        gaussian_quantile, gaussian_sample, gaussian_cdf},
                            gaussian_rows, NULL, NULL, NULL, NULL},
    [SL_FAMILY_LOGNORMAL] = {{"lognormal", 1, NULL, lognormal_logpdf,
        lognormal_quantile, lognormal_sample, lognormal_cdf},
                             lognormal_rows, NULL, NULL, positive_ok, "> 0"},
    [SL_FAMILY_STUDENT_T] = {{"student_t", 1, "dof", student_t_logpdf,
        student_t_quantile, student_t_sample, student_t_cdf},
                             student_t_rows, dof_ok, "finite and > 0", NULL,
                             NULL},
    [SL_FAMILY_POISSON] = {{"poisson", 0, NULL, poisson_logpdf,
        poisson_quantile, poisson_sample, poisson_mid}, poisson_rows,
                           NULL, NULL, count_ok,
                           "a whole number from 0 to 2^53"},
    [SL_FAMILY_BINOMIAL] = {{"binomial", 0, "n", binomial_logpdf,
        binomial_quantile, binomial_sample, binomial_mid},
                            binomial_rows, trials_ok,
                            "a whole number from 1 to 2^53", successes_ok,
                            "a whole number from 0 to n"},
    [SL_FAMILY_CENSORED] = {{"censored", 1, "limit", censored_logpdf,
        censored_quantile, censored_sample, censored_cdf},
                            censored_rows, limit_ok, "finite", NULL, NULL},
};

const sl_family *sl_family_get(int id)
{
    if (id < 0 || id >= SL_FAMILY_COUNT)
        return NULL;
    return &families[id].type;
}

int sl_family_find(const char *name)
{
    int k;
    if (name == NULL)
        return -1;
    for (k = 0; k < SL_FAMILY_COUNT; k++)
        if (strcmp(families[k].type.name, name) == 0)
            return k;
    return -1;
}

/* ---- checks -------------------------------------------------------------- */

/* A number as Octave users read it: shortest of %.15g / %.17g that gives v
 * back, and NaN / Inf / -Inf spelled as in Octave. */
static const char *show(double v, char *buf, size_t len)
{
    if (isnan(v))
        snprintf(buf, len, "NaN");
    else if (isinf(v))
        snprintf(buf, len, v > 0 ? "Inf" : "-Inf");
    else {
        snprintf(buf, len, "%.15g", v);
        if (strtod(buf, NULL) != v)
            snprintf(buf, len, "%.17g", v);
    }
    return buf;
}

/* The family id, sigma and aux of row i (0-based), as sl_loglik_check
 * states them; *a receives the aux that was checked (NaN when unused). */
static sl_status check_row(size_t i, const double *sigma, const double *aux,
                           const int *family, double *a, sl_error *err)
{
    const unsigned long row = (unsigned long)(i + 1);
    const family_impl *f;
    char b1[40];
    *a = NOT_A_NUMBER;
    if (family[i] < 0 || family[i] >= SL_FAMILY_COUNT)
        return sl_fail(err, SL_EINVAL, "badfamily",
                       "observation %lu: family id must be from 0 to %d, got %d",
                       row, SL_FAMILY_COUNT - 1, family[i]);
    f = &families[family[i]];
    if (f->type.uses_sigma) {
        const double s = sigma != NULL ? sigma[i] : NOT_A_NUMBER;
        if (!scale_ok(s))
            return sl_fail(err, SL_EINVAL, "badsigma",
                           "observation %lu: sigma must be finite and at least "
                           "2.2250738585072014e-308 (the smallest normal "
                           "double), got %s",
                           row, show(s, b1, sizeof b1));
    }
    if (f->aux_ok != NULL) {
        *a = aux != NULL ? aux[i] : NOT_A_NUMBER;
        if (!f->aux_ok(*a))
            return sl_fail(err, SL_EINVAL, "badaux",
                           "observation %lu: %s %s must be %s, got %s",
                           row, f->type.name, f->type.aux_name,
                           f->aux_rule, show(*a, b1, sizeof b1));
    }
    return SL_OK;
}

sl_status sl_loglik_check(size_t m, const double *y, const double *sigma,
                          const double *aux, const int *family, sl_error *err)
{
    size_t i;
    char b1[40], b2[40];
    if (m == 0)
        return SL_OK;
    if (family == NULL)
        return sl_fail(err, SL_EINVAL, "badfamily",
                       "no family ids given for %lu observations",
                       (unsigned long)m);
    if (y == NULL)
        return sl_fail(err, SL_EINVAL, "badvalue",
                       "no values given for %lu observations", (unsigned long)m);
    for (i = 0; i < m; i++) {
        const unsigned long row = (unsigned long)(i + 1);
        const family_impl *f;
        const double v = y[i];
        double a;
        sl_status st = check_row(i, sigma, aux, family, &a, err);
        if (st != SL_OK)
            return st;
        f = &families[family[i]];
        if (isinf(v))
            return sl_fail(err, SL_EINVAL, "badvalue",
                           "observation %lu: value must be finite or NaN (missing), got %s",
                           row, show(v, b1, sizeof b1));
        if (!isnan(v) && f->value_ok != NULL && !f->value_ok(v, a)) {
            if (f->type.aux_name != NULL)
                return sl_fail(err, SL_EINVAL, "badvalue",
                               "observation %lu: a %s value must be %s (%s = %s) or NaN, got %s",
                               row, f->type.name, f->value_rule,
                               f->type.aux_name, show(a, b2, sizeof b2),
                               show(v, b1, sizeof b1));
            return sl_fail(err, SL_EINVAL, "badvalue",
                           "observation %lu: a %s value must be %s or NaN, got %s",
                           row, f->type.name, f->value_rule,
                           show(v, b1, sizeof b1));
        }
    }
    return SL_OK;
}

/* ---- quantiles and draws of many rows ------------------------------------ */

/* The checks shared by sl_family_quantiles and sl_family_samples. */
static sl_status check_draws(size_t m, const int *family, const double *z,
                             const double *u, const double *h,
                             const double *sigma, const double *aux,
                             const double *y, sl_error *err)
{
    size_t i;
    char b1[40];
    if (m == 0)
        return SL_OK;
    if (family == NULL || u == NULL || h == NULL || y == NULL)
        return sl_fail(err, SL_EINVAL, "badarg",
                       "family ids, uniforms, predictions and the output are "
                       "required for %lu draws", (unsigned long)m);
    for (i = 0; i < m; i++) {
        double a;
        sl_status st = check_row(i, sigma, aux, family, &a, err);
        if (st != SL_OK)
            return st;
        if (!prob_ok(u[i]))
            return sl_fail(err, SL_EINVAL, "badprob",
                           "draw %lu: the uniform must lie strictly between 0 "
                           "and 1, got %s",
                           (unsigned long)(i + 1), show(u[i], b1, sizeof b1));
        if (z != NULL && !isfinite(z[i]))
            return sl_fail(err, SL_EINVAL, "badnormal",
                           "draw %lu: the standard normal must be finite, got %s",
                           (unsigned long)(i + 1), show(z[i], b1, sizeof b1));
    }
    return SL_OK;
}

sl_status sl_family_quantiles(size_t m, const int *family, const double *u,
                              const double *h, const double *sigma,
                              const double *aux, double *y, sl_error *err)
{
    size_t i;
    sl_status st = check_draws(m, family, NULL, u, h, sigma, aux, y, err);
    if (st != SL_OK)
        return st;
    for (i = 0; i < m; i++)
        y[i] = families[family[i]].type.quantile(
            u[i], h[i], sigma != NULL ? sigma[i] : NOT_A_NUMBER,
            aux != NULL ? aux[i] : NOT_A_NUMBER);
    return SL_OK;
}

sl_status sl_family_samples(size_t m, const int *family, const double *z,
                            const double *u, const double *h,
                            const double *sigma, const double *aux, double *y,
                            sl_error *err)
{
    size_t i;
    sl_status st;
    if (m > 0 && z == NULL)
        return sl_fail(err, SL_EINVAL, "badarg",
                       "standard normals are required for %lu draws",
                       (unsigned long)m);
    st = check_draws(m, family, z, u, h, sigma, aux, y, err);
    if (st != SL_OK)
        return st;
    for (i = 0; i < m; i++)
        y[i] = families[family[i]].type.sample(
            z[i], u[i], h[i], sigma != NULL ? sigma[i] : NOT_A_NUMBER,
            aux != NULL ? aux[i] : NOT_A_NUMBER);
    return SL_OK;
}

/* ---- the ensemble kernel ------------------------------------------------- */

sl_status sl_loglik_ensemble(size_t m, size_t N, const double *y,
                             const double *Yhat, size_t ldy,
                             const double *sigma, const double *aux,
                             const int *family, int accumulate, double *ll,
                             size_t *nskipped, sl_error *err)
{
    size_t i, j, j0, skipped = 0;
    if (N > 0 && ll == NULL)
        return sl_fail(err, SL_EINVAL, "badarg",
                       "no output buffer given for %lu members",
                       (unsigned long)N);
    if (m > 0 && (y == NULL || family == NULL || (N > 0 && Yhat == NULL)))
        return sl_fail(err, SL_EINVAL, "badarg",
                       "values, family ids and predictions are required for %lu observations",
                       (unsigned long)m);
    if (N > 1 && ldy < m)
        return sl_fail(err, SL_EINVAL, "badsize",
                       "leading dimension of the predictions (%lu) is less than the number of observations (%lu)",
                       (unsigned long)ldy, (unsigned long)m);
    for (i = 0; i < m; i++) {
        if (family[i] < 0 || family[i] >= SL_FAMILY_COUNT)
            return sl_fail(err, SL_EINVAL, "badfamily",
                           "observation %lu: family id must be from 0 to %d, got %d",
                           (unsigned long)(i + 1), SL_FAMILY_COUNT - 1,
                           family[i]);
        skipped += isnan(y[i]) ? 1 : 0;
    }
    if (!accumulate)
        for (j = 0; j < N; j++)
            ll[j] = 0;
    for (j0 = 0; j0 < N; j0 += MEMBER_BLOCK) {
        const size_t nb = N - j0 < MEMBER_BLOCK ? N - j0 : MEMBER_BLOCK;
        for (i = 0; i < m; i++) {
            if (isnan(y[i]))
                continue;
            families[family[i]].add_rows(y[i], sigma != NULL ? sigma[i] : NOT_A_NUMBER,
                                         aux != NULL ? aux[i] : NOT_A_NUMBER,
                                         Yhat + i + j0 * ldy, ldy, nb,
                                         ll + j0);
        }
    }
    if (nskipped != NULL)
        *nskipped = skipped;
    return SL_OK;
}

/* ---- forecast probability integral transform ----------------------------- */

/* Does member j count for a forecast PIT (before its cdf is known)? */
static int pit_counts(const double *w, const unsigned char *dead, size_t j)
{
    return w[j] > 0 && (dead == NULL || !dead[j]);
}

/* Which members a row's PIT reads, and each one's factor (loglik.h):
 * every member that counts with its weight, or, above SL_PIT_MAX_MEMBERS
 * of them, the members picked by systematic selection (the k-th pick is
 * the member whose cumulative weight first exceeds (k + 1/2) W / M, in
 * member order) with how often each was picked. As an estimate of the
 * exact sum of values in [0, 1], M independent picks would err by a
 * standard deviation of at most 1/(2 sqrt M) = 0.016 (a variance of at
 * most 1/4 per pick); systematic picks are a stratified sample, which
 * does not do worse when the member order is unrelated to the predictions
 * (common practice, as for systematic resampling). */
size_t sl_loglik_pit_members(size_t N, const double *w, const unsigned char *dead, size_t *js,
                             double *fs)
{
    const size_t M = SL_PIT_MAX_MEMBERS;
    double W = 0;
    size_t j, live = 0, e = 0;
    for (j = 0; j < N; j++)
        if (pit_counts(w, dead, j)) {
            W += w[j];
            live++;
        }
    if (!(W > 0))
        return 0;
    if (live <= M) {
        for (j = 0; j < N; j++)
            if (pit_counts(w, dead, j)) {
                js[e] = j;
                fs[e++] = w[j];
            }
    } else {
        const double step = W / (double)M;
        double c = 0;
        size_t k = 0, last = N;
        for (j = 0; j < N && k < M; j++) {
            size_t picks = 0;
            if (!pit_counts(w, dead, j))
                continue;
            c += w[j];
            last = j;
            while (k < M && ((double)k + 0.5) * step < c) {
                picks++;
                k++;
            }
            if (picks > 0) {
                js[e] = j;
                fs[e++] = (double)picks;
            }
        }
        if (k < M && last < N) {
            /* rounding left the last targets beyond the summed weights:
             * they fall on the last member that counts */
            js[e] = last;
            fs[e++] = (double)(M - k);
        }
    }
    return e;
}

/* One row from its members: the factor-weighted mean of their
 * mid-distribution values at y (h[j*ldh] member j's prediction), each
 * member's cdf taken once; a NaN cdf is left out with its factor. */
static double pit_listed_row(const sl_family *f, double y, double sigma, double aux,
                             const double *h, size_t ldh, size_t count, const size_t *js,
                             const double *fs)
{
    double sum = 0, used = 0;
    size_t e;
    for (e = 0; e < count; e++) {
        const double v = f->cdf(y, h[js[e] * ldh], sigma, aux);
        if (!isnan(v)) {
            sum += fs[e] * v;
            used += fs[e];
        }
    }
    return used > 0 ? sum / used : NOT_A_NUMBER;
}

/* The rows' family ids, checked */
static sl_status pit_families(size_t m, const int *family, sl_error *err)
{
    size_t i;
    for (i = 0; i < m; i++)
        if (family[i] < 0 || family[i] >= SL_FAMILY_COUNT)
            return sl_fail(err, SL_EINVAL, "badfamily",
                           "observation %lu: family id must be from 0 to %d, got %d",
                           (unsigned long)(i + 1), SL_FAMILY_COUNT - 1, family[i]);
    return SL_OK;
}

sl_status sl_loglik_pit_listed(size_t m, const double *y, const double *Yhat, size_t ldy,
                               const double *sigma, const double *aux, const int *family,
                               size_t count, const size_t *js, const double *fs, double *pit,
                               sl_error *err)
{
    size_t i;
    sl_status st;
    if (m > 0 && (y == NULL || family == NULL || pit == NULL ||
                  (count > 0 && (Yhat == NULL || js == NULL || fs == NULL))))
        return sl_fail(err, SL_EINVAL, "badarg",
                       "values, family ids, predictions, members and an output "
                       "are required for %lu observations", (unsigned long)m);
    if (count > 1 && ldy < m)
        return sl_fail(err, SL_EINVAL, "badsize",
                       "leading dimension of the predictions (%lu) is less than the number of observations (%lu)",
                       (unsigned long)ldy, (unsigned long)m);
    if ((st = pit_families(m, family, err)) != SL_OK)
        return st;
    for (i = 0; i < m; i++)
        pit[i] = isnan(y[i]) ? NOT_A_NUMBER
                             : pit_listed_row(&families[family[i]].type, y[i],
                                              sigma != NULL ? sigma[i] : NOT_A_NUMBER,
                                              aux != NULL ? aux[i] : NOT_A_NUMBER, Yhat + i,
                                              ldy, count, js, fs);
    return SL_OK;
}

sl_status sl_loglik_pit(size_t m, size_t N, const double *y, const double *Yhat,
                        size_t ldy, const double *sigma, const double *aux,
                        const int *family, const double *w,
                        const unsigned char *dead, double *pit, sl_error *err)
{
    size_t i, count, js[SL_PIT_MAX_MEMBERS + 1];
    double fs[SL_PIT_MAX_MEMBERS + 1];
    if (m > 0 && (y == NULL || family == NULL || pit == NULL ||
                  (N > 0 && (Yhat == NULL || w == NULL))))
        return sl_fail(err, SL_EINVAL, "badarg",
                       "values, family ids, predictions, weights and an output "
                       "are required for %lu observations", (unsigned long)m);
    if (N > 1 && ldy < m)
        return sl_fail(err, SL_EINVAL, "badsize",
                       "leading dimension of the predictions (%lu) is less than the number of observations (%lu)",
                       (unsigned long)ldy, (unsigned long)m);
    /* the members are the same for every row: chosen once (the listed
     * rows check the family ids) */
    for (i = 0; i < m && isnan(y[i]); i++)
        ;
    count = i < m ? sl_loglik_pit_members(N, w, dead, js, fs) : 0;
    return sl_loglik_pit_listed(m, y, Yhat, ldy, sigma, aux, family, count, js, fs, pit, err);
}
