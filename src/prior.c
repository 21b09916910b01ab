/* prior.c - parameter priors, their counter-based draws, and the transforms of bounded parameters. */
#include "sluice/prior.h"

#include <float.h>
#include <math.h>
#include <gsl/gsl_cdf.h>
#include <gsl/gsl_errno.h>
#include <gsl/gsl_sf_erf.h>

#include "sluice/rng.h"

/* ---------------------------------------------------------------------
 * Transforms
 * ------------------------------------------------------------------- */

/* x moved to the nearest representable value strictly inside (lo, hi),
 * when there is one; NaN stays NaN. */
static double clamp_open(double x, double lo, double hi)
{
    if (isnan(x))
        return x;
    if (!(x > lo))
        x = nextafter(lo, hi);
    if (!(x < hi))
        x = nextafter(hi, lo);
    return x;
}

/* lo + (hi - lo) * s for 0 <= s <= 1/2, without overflow when hi - lo does. */
static double from_lower(double lo, double hi, double s)
{
    double w = hi - lo;
    if (isfinite(w))
        return lo + w * s;
    return lo + 2.0 * ((0.5 * hi - 0.5 * lo) * s);
}

/* hi - (hi - lo) * s for 0 <= s <= 1/2, likewise. */
static double from_upper(double lo, double hi, double s)
{
    double w = hi - lo;
    if (isfinite(w))
        return hi - w * s;
    return hi - 2.0 * ((0.5 * hi - 0.5 * lo) * s);
}

sl_transform sl_transform_for_bounds(double lo, double hi)
{
    sl_transform t;
    int has_lo = isfinite(lo), has_hi = isfinite(hi);
    t.lo = has_lo ? lo : -HUGE_VAL;
    t.hi = has_hi ? hi : HUGE_VAL;
    if (has_lo && has_hi)
        t.kind = lo < hi ? SL_TRANSFORM_LOGIT : SL_TRANSFORM_NONE;
    else if (has_lo)
        t.kind = SL_TRANSFORM_LOG;
    else if (has_hi)
        t.kind = SL_TRANSFORM_NEGLOG;
    else
        t.kind = SL_TRANSFORM_NONE;
    if (t.kind == SL_TRANSFORM_NONE) {
        /* an empty or single-point interval has no transform: identity */
        t.lo = -INFINITY;
        t.hi = INFINITY;
    }
    return t;
}

double sl_transform_forward(const sl_transform *t, double x)
{
    switch (t->kind) {
    case SL_TRANSFORM_NONE:
        return x;
    case SL_TRANSFORM_LOG:
        return log(x - t->lo);
    case SL_TRANSFORM_NEGLOG:
        return log(t->hi - x);
    case SL_TRANSFORM_LOGIT: {
        double a = x - t->lo, b = t->hi - x, r;
        if (!(a >= 0 && b >= 0))
            return NAN;
        r = a / b;
        if (r >= 0.5 && r <= 2.0) {
            /* near the midpoint: log1p of 2 (x - mid) / b keeps the small
             * value of z accurate instead of rounding it through a/b */
            double mid = 0.5 * t->lo + 0.5 * t->hi;
            return log1p(2.0 * (x - mid) / b);
        }
        if (r > 0 && isfinite(r))
            return log(r);
        return log(a) - log(b);
    }
    }
    return NAN;
}

double sl_transform_inverse(const sl_transform *t, double z)
{
    double x;
    switch (t->kind) {
    case SL_TRANSFORM_NONE:
        return z;
    case SL_TRANSFORM_LOG:
        x = t->lo + exp(z);
        break;
    case SL_TRANSFORM_NEGLOG:
        x = t->hi - exp(z);
        break;
    case SL_TRANSFORM_LOGIT:
        /* logistic evaluated from the nearer bound, e = exp(-|z|) <= 1 */
        if (isnan(z))
            return z;
        if (z < 0) {
            double e = exp(z);
            x = from_lower(t->lo, t->hi, e / (1.0 + e));
        } else {
            double e = exp(-z);
            x = from_upper(t->lo, t->hi, e / (1.0 + e));
        }
        break;
    default:
        return NAN;
    }
    return clamp_open(x, t->lo, t->hi);
}

double sl_transform_logjac(const sl_transform *t, double z)
{
    double a;
    switch (t->kind) {
    case SL_TRANSFORM_NONE:
        return isnan(z) ? z : 0.0;
    case SL_TRANSFORM_LOG:    /* x = lo + e^z */
    case SL_TRANSFORM_NEGLOG: /* x = hi - e^z */
        return z;
    case SL_TRANSFORM_LOGIT:
        /* x = lo + (hi - lo) s(z), dx/dz = (hi - lo) s(z) (1 - s(z)),
         * written with |z| so that neither factor underflows early */
        a = fabs(z);
        return log(t->hi - t->lo) - a - 2.0 * log1p(exp(-a));
    }
    return NAN;
}

/* ---------------------------------------------------------------------
 * Truncated standard normal by inversion
 * ------------------------------------------------------------------- */

/* Beyond this many standard deviations above the mean the truncated normal
 * is inverted in log space (the tail probability itself heads for underflow
 * near 37). */
#define TAIL_LOG_SPACE 25.0
/* Beyond this the Mills-ratio factor changes the offset by a relative
 * O(1/alpha^2) below double precision: the Gaussian factor alone is used. */
#define TAIL_GAUSS_ONLY 1e8

/* Solution t >= 0 of -t (2 alpha + t) / 2 = L (L <= 0), cancellation-free. */
static double gauss_offset(double alpha, double L)
{
    double s = 1.0 - 2.0 * L / alpha / alpha;
    return -2.0 * L / (alpha * (1.0 + sqrt(s)));
}

/* Hazard phi(x)/Q(x) of the standard normal, from GSL. */
static int hazard(double x, double *h)
{
    gsl_sf_result r;
    if (gsl_sf_hazard_e(x, &r) != GSL_SUCCESS || !(r.val > 0) ||
        !isfinite(r.val))
        return 1;
    *h = r.val;
    return 0;
}

/* log Q(alpha + t) - log Q(alpha) for t >= 0, given h0 = hazard(alpha):
 * Q(x) = phi(x) / hazard(x), so the difference is the Gaussian exponent
 * -t (2 alpha + t) / 2 plus log(hazard(alpha) / hazard(alpha + t)). */
static int log_survival(double alpha, double h0, double t, double *D,
                        double *ht)
{
    if (hazard(alpha + t, ht))
        return 1;
    *D = -0.5 * t * (2.0 * alpha + t) + log(h0 / *ht);
    return 0;
}

/* A draw of the standard normal truncated to [alpha, beta], 0 <= alpha <
 * beta <= Inf, by inversion of u, returned as the offset from alpha (so that
 * the natural value lo + sd * offset keeps its precision near lo). */
static double upper_offset(double alpha, double beta, double u)
{
    double Sb, L, t, h0, tb;
    int k;
    if (alpha <= TAIL_LOG_SPACE) {
        /* upper-tail probabilities keep their relative precision where
         * lower-tail ones would round to 1 */
        double qa = gsl_cdf_ugaussian_Q(alpha);
        double qb = isinf(beta) ? 0.0 : gsl_cdf_ugaussian_Q(beta);
        double z = gsl_cdf_ugaussian_Qinv((1.0 - u) * qa + u * qb);
        return z - alpha;
    }
    /* Far tail: solve log S(t) = L, S(t) = Q(alpha + t) / Q(alpha) the
     * conditional survival, L = log(1 - u (1 - S(beta - alpha))). */
    tb = beta - alpha;
    if (alpha > TAIL_GAUSS_ONLY || hazard(alpha, &h0)) {
        Sb = isinf(beta) ? 0.0 : exp(-0.5 * tb * (2.0 * alpha + tb));
        L = log1p(-u * (1.0 - Sb));
        t = gauss_offset(alpha, L);
        return t > tb ? tb : t;
    }
    Sb = 0.0;
    if (!isinf(beta) && 0.5 * tb * (2.0 * alpha + tb) < 800.0) {
        double Db, hb;
        if (log_survival(alpha, h0, tb, &Db, &hb) == 0)
            Sb = exp(Db);
    }
    L = log1p(-u * (1.0 - Sb));
    /* log S is concave with log S(0) = 0: the Gaussian-only root lies to
     * the right of the true root, and Newton's steps from there decrease
     * monotonically onto it. */
    t = gauss_offset(alpha, L);
    for (k = 0; k < 60; k++) {
        double D, ht, step;
        if (log_survival(alpha, h0, t, &D, &ht))
            break;
        step = (L - D) / ht; /* >= 0: t moves left onto the root */
        if (!(step > 0))
            break;
        t -= step;
        if (step <= 4.0 * DBL_EPSILON * t)
            break;
    }
    if (t < 0)
        t = 0;
    return t > tb ? tb : t;
}

static double draw_truncnormal(const sl_prior_entry *e, double u)
{
    double mu = e->a, sd = e->b, lo = e->lo, hi = e->hi, x;
    double alpha = (lo - mu) / sd, beta = (hi - mu) / sd;
    if (alpha >= 0) {
        x = lo + sd * upper_offset(alpha, beta, u);
    } else if (beta <= 0) {
        /* below the mean: the mirror image of the upper-tail case (with
         * 1 - u, so that x still increases with u) */
        x = hi - sd * upper_offset(-beta, -alpha, 1.0 - u);
    } else if (log(hi - lo) - log(sd) + log(fmax(1.0, fmax(-alpha, beta))) < log(1e-6)) {
        /* straddling the mean and so narrow (sd far above hi - lo) that the
         * density is flat to 1e-12 over it, where Phi(alpha) and Phi(beta)
         * would both round to 1/2 and every draw to the mean: uniform */
        x = lo + u * (hi - lo);
    } else {
        double pa = gsl_cdf_ugaussian_P(alpha), pb = gsl_cdf_ugaussian_P(beta);
        x = mu + sd * gsl_cdf_ugaussian_Pinv((1.0 - u) * pa + u * pb);
    }
    return clamp_open(x, lo, hi);
}

/* ---------------------------------------------------------------------
 * The distributions
 * ------------------------------------------------------------------- */

static int check_uniform(const sl_prior_entry *e, const char **what)
{
    if (!isfinite(e->a) || !isfinite(e->b)) {
        *what = "the lower and upper limits must be finite";
        return 1;
    }
    if (!(e->a < e->b)) {
        *what = "the lower limit must be below the upper limit";
        return 1;
    }
    return 0;
}

static int check_location_scale(const sl_prior_entry *e, const char **what)
{
    if (!isfinite(e->a)) {
        *what = "the location must be finite";
        return 1;
    }
    if (!isfinite(e->b) || !(e->b > 0)) {
        *what = "the standard deviation must be positive and finite";
        return 1;
    }
    return 0;
}

static int check_truncnormal(const sl_prior_entry *e, const char **what)
{
    if (check_location_scale(e, what))
        return 1;
    if (isnan(e->lo) || isnan(e->hi)) {
        *what = "the truncation bounds must not be NaN";
        return 1;
    }
    if (!(e->lo < e->hi)) {
        *what = "the lower truncation bound must be below the upper one";
        return 1;
    }
    return 0;
}

static int check_fixed(const sl_prior_entry *e, const char **what)
{
    if (!isfinite(e->a)) {
        *what = "the value must be finite";
        return 1;
    }
    return 0;
}

static void support_uniform(const sl_prior_entry *e, double *lo, double *hi)
{
    *lo = e->a;
    *hi = e->b;
}

static void support_real(const sl_prior_entry *e, double *lo, double *hi)
{
    (void)e;
    *lo = -INFINITY;
    *hi = INFINITY;
}

static void support_positive(const sl_prior_entry *e, double *lo, double *hi)
{
    (void)e;
    *lo = 0.0;
    *hi = INFINITY;
}

static void support_truncnormal(const sl_prior_entry *e, double *lo, double *hi)
{
    *lo = e->lo;
    *hi = e->hi;
}

static void support_fixed(const sl_prior_entry *e, double *lo, double *hi)
{
    *lo = e->a;
    *hi = e->a;
}

static double draw_uniform_entry(const sl_prior_entry *e, sl_stream *s)
{
    double u = sl_stream_uniform(s);
    return clamp_open(u <= 0.5 ? from_lower(e->a, e->b, u)
                               : from_upper(e->a, e->b, 1.0 - u),
                      e->a, e->b);
}

static double draw_normal_entry(const sl_prior_entry *e, sl_stream *s)
{
    return e->a + e->b * sl_stream_normal(s);
}

static double draw_lognormal_entry(const sl_prior_entry *e, sl_stream *s)
{
    return exp(e->a + e->b * sl_stream_normal(s));
}

static double draw_truncnormal_entry(const sl_prior_entry *e, sl_stream *s)
{
    return draw_truncnormal(e, sl_stream_uniform(s));
}

static double draw_fixed_entry(const sl_prior_entry *e, sl_stream *s)
{
    (void)s;
    return e->a;
}

/* log of the standard normal density, -(z^2 + log(2 pi)) / 2 */
static double log_phi(double z)
{
    return -0.5 * z * z - 0.91893853320467274178;
}

static double logpdf_uniform(const sl_prior_entry *e, double x)
{
    if (!(x >= e->a && x <= e->b))
        return -HUGE_VAL;
    return -log(e->b - e->a);
}

static double logpdf_normal(const sl_prior_entry *e, double x)
{
    if (!isfinite(x))
        return -HUGE_VAL;
    return log_phi((x - e->a) / e->b) - log(e->b);
}

static double logpdf_lognormal(const sl_prior_entry *e, double x)
{
    if (!(x > 0) || !isfinite(x))
        return -HUGE_VAL;
    return log_phi((log(x) - e->a) / e->b) - log(e->b) - log(x);
}

/* log(Phi(beta) - Phi(alpha)), alpha < beta, from the side where the
 * difference keeps its precision (upper-tail probabilities above the
 * mean, lower-tail ones below it); -Inf when it underflows. lw is
 * log(beta - alpha), given apart since beta - alpha itself may round to
 * 0: when the interval is so narrow that the density hardly changes over
 * it (width times max(1, |z|) below 1e-6) the midpoint rule, whose
 * relative error is below 1e-13 there, where the difference of the tails
 * would lose every digit. */
static double log_normal_mass(double alpha, double beta, double lw)
{
    double zmax = fmax(1.0, fmax(fabs(alpha), fabs(beta)));
    if (lw + log(zmax) < log(1e-6))
        return lw + log_phi(0.5 * alpha + 0.5 * beta);
    if (alpha >= 0)
        return log(gsl_cdf_ugaussian_Q(alpha) - gsl_cdf_ugaussian_Q(beta));
    if (beta <= 0)
        return log(gsl_cdf_ugaussian_P(beta) - gsl_cdf_ugaussian_P(alpha));
    return log1p(-gsl_cdf_ugaussian_P(alpha) - gsl_cdf_ugaussian_Q(beta));
}

/* The log-density of a truncated normal whose interval holds less than
 * e^-700 of the normal's probability: far out in one tail (or narrower
 * than e^-700 standard deviations). Measured from the bound nearer the
 * mean, a >= 0 standard deviations out (the lower bound above the mean,
 * the upper one below it, mirrored): with u = |x - bound| / sd and
 * w = (hi - lo) / sd the density is exp(-u (a + u/2)) / (sd M),
 * M = int_0^w exp(-a s - s^2/2) ds = R(a) - exp(-w (a + w/2)) R(a + w),
 * R = 1 / the normal's hazard (the Mills ratio), so nothing of the size
 * of a^2 is ever subtracted. */
static double logpdf_truncnormal_tail(const sl_prior_entry *e, double x, double lw)
{
    const double ln2 = 0.69314718055994530942;
    double mu = e->a, sd = e->b, lo = e->lo, hi = e->hi, a, u, w, lh, logM;
    int upper = (lo - mu) / sd >= 0; /* the interval lies above the mean */
    if (!upper && !((hi - mu) / sd <= 0))
        return -log(hi - lo); /* straddling the mean: narrow, hence flat */
    a = upper ? (lo - mu) / sd : (mu - hi) / sd;
    u = upper ? (x - lo) / sd : (hi - x) / sd;
    w = exp(lw);
    if (lw + log(fmax(1.0, a + w)) < log(1e-6)) {
        /* narrow: the midpoint rule, relative error below 1e-13 */
        logM = lw - 0.5 * w * (a + 0.25 * w);
    } else {
        /* log R(a) = -log h(a); h(a) ~ a when a overflows */
        lh = isfinite(a) ? log(gsl_sf_hazard(a))
                         : log(upper ? 0.5 * lo - 0.5 * mu : 0.5 * mu - 0.5 * hi) + ln2 -
                               log(sd);
        logM = -lh;
        if (isfinite(w) && isfinite(a))
            logM += log1p(-exp(-w * (a + 0.5 * w)) * gsl_sf_hazard(a) /
                          gsl_sf_hazard(a + w));
    }
    return (u > 0 ? -u * (a + 0.5 * u) : 0.0) - log(sd) - logM;
}

static double logpdf_truncnormal(const sl_prior_entry *e, double x)
{
    double lw, lm;
    if (!(x >= e->lo && x <= e->hi) || !isfinite(x))
        return -HUGE_VAL;
    lw = log(e->hi - e->lo) - log(e->b);
    lm = log_normal_mass((e->lo - e->a) / e->b, (e->hi - e->a) / e->b, lw);
    if (!(lm > -700))
        return logpdf_truncnormal_tail(e, x, lw);
    return log_phi((x - e->a) / e->b) - log(e->b) - lm;
}

/* a point mass has no density: 0 at its value (it is never moved) */
static double logpdf_fixed(const sl_prior_entry *e, double x)
{
    return x == e->a ? 0.0 : -HUGE_VAL;
}

/* The table of distributions, indexed by id. */
static const sl_dist_type dist_types[SL_DIST_COUNT] = {
    [SL_DIST_UNIFORM] = {"uniform", "[lo hi]", 2, 0, check_uniform, support_uniform,
                         logpdf_uniform, draw_uniform_entry},
    [SL_DIST_NORMAL] = {"normal", "[mean sd]", 2, 0, check_location_scale, support_real,
                        logpdf_normal, draw_normal_entry},
    [SL_DIST_LOGNORMAL] = {"lognormal", "[meanlog sdlog]", 2, 1, check_location_scale,
                           support_positive, logpdf_lognormal, draw_lognormal_entry},
    [SL_DIST_TRUNCNORMAL] = {"truncnormal", "[mean sd lo hi]", 4, 0, check_truncnormal,
                             support_truncnormal, logpdf_truncnormal,
                             draw_truncnormal_entry},
    [SL_DIST_FIXED] = {"fixed", "[value]", 1, 0, check_fixed, support_fixed, logpdf_fixed,
                       draw_fixed_entry}
};

const sl_dist_type *sl_dist_get(int id)
{
    if (id < 0 || id >= SL_DIST_COUNT)
        return NULL;
    return &dist_types[id];
}

static int same_name(const char *a, const char *b)
{
    while (*a != '\0' && *a == *b) {
        a++;
        b++;
    }
    return *a == *b;
}

int sl_dist_find(const char *name)
{
    int k;
    if (name == NULL)
        return -1;
    for (k = 0; k < SL_DIST_COUNT; k++)
        if (same_name(name, dist_types[k].name))
            return k;
    return -1;
}

const char *sl_prior_fault(const sl_prior_entry *e, const char **reason)
{
    const sl_dist_type *d = e != NULL ? sl_dist_get(e->dist) : NULL;
    const char *what = "";
    if (e == NULL) {
        *reason = "badprior";
        return "no entry";
    }
    if (d == NULL) {
        *reason = "baddist";
        return "unknown distribution id";
    }
    if (d->check(e, &what)) {
        *reason = "badprior";
        return what;
    }
    *reason = NULL;
    return NULL;
}

sl_status sl_prior_check(const sl_prior_entry *e, size_t index, sl_error *err)
{
    const sl_dist_type *d;
    const char *reason, *what = sl_prior_fault(e, &reason);
    if (what == NULL)
        return SL_OK;
    if (e == NULL)
        return sl_fail(err, SL_EINVAL, "badprior", "parameter %zu: no entry",
                       index);
    d = sl_dist_get(e->dist);
    if (d == NULL)
        return sl_fail(err, SL_EINVAL, "baddist",
                       "parameter %zu: unknown distribution id %d (expected 0 to %d)",
                       index, e->dist, SL_DIST_COUNT - 1);
    {
        const double v[4] = {e->a, e->b, e->lo, e->hi};
        char nums[112];
        size_t used = 0;
        int i;
        for (i = 0; i < d->nargs; i++)
            used += (size_t)snprintf(nums + used, sizeof nums - used,
                                     i ? " %.17g" : "%.17g", v[i]);
        return sl_fail(err, SL_EINVAL, "badprior",
                       "parameter %zu (%s %s = [%s]): %s", index, d->name,
                       d->form, nums, what);
    }
}

void sl_prior_support(const sl_prior_entry *e, double *lo, double *hi)
{
    const sl_dist_type *d = e != NULL ? sl_dist_get(e->dist) : NULL;
    if (d == NULL) {
        *lo = NAN;
        *hi = NAN;
        return;
    }
    d->support(e, lo, hi);
}

sl_status sl_prior_draw(size_t p, const sl_prior_entry *prior, size_t N,
                        uint64_t seed, uint32_t first, double *P,
                        sl_error *err)
{
    size_t k, j, total;
    sl_status st;
    if (p > 0 && prior == NULL)
        return sl_fail(err, SL_EINVAL, "badarg",
                       "%zu parameters but no prior entries", p);
    if (N > 0 && (uint64_t)(N - 1) > (uint64_t)(UINT32_MAX - first))
        return sl_fail(err, SL_EINVAL, "badcount",
                       "members %lu to %lu: the streams run out after member %lu",
                       (unsigned long)first, (unsigned long)first + (unsigned long)(N - 1),
                       (unsigned long)UINT32_MAX);
    if (sl_size_mul(p, N, &total))
        return sl_fail(err, SL_ENOMEM, "nomemory",
                       "a %zu x %zu result overflows", p, N);
    if (total > 0 && P == NULL)
        return sl_fail(err, SL_EINVAL, "badarg", "no output buffer");
    for (k = 0; k < p; k++) {
        st = sl_prior_check(&prior[k], k + 1, err);
        if (st != SL_OK)
            return st;
    }
    for (j = 0; j < N; j++) {
        uint32_t member = first + (uint32_t)j;
        double *col = P + j * p;
        sl_stream s;
        sl_stream_init(&s, seed, member, 0, SL_PURPOSE_PRIOR);
        for (k = 0; k < p; k++) {
            const sl_prior_entry *e = &prior[k];
            const sl_dist_type *d = &dist_types[e->dist];
            double x = d->draw(e, &s), lo, hi;
            d->support(e, &lo, &hi);
            if (!isfinite(x) || x < lo || x > hi ||
                (d->open_support && !(x > lo && x < hi)))
                return sl_fail(err, SL_ENUMERIC, "baddraw",
                               "parameter %zu (%s), member %lu: the draw %.17g "
                               "left the support of its distribution (its "
                               "numbers are too extreme for double precision)",
                               k + 1, d->name,
                               (unsigned long)member, x);
            col[k] = x;
        }
    }
    return SL_OK;
}

double sl_prior_logpdf(const sl_prior_entry *e, double x)
{
    const sl_dist_type *d = e != NULL ? sl_dist_get(e->dist) : NULL;
    double v;
    if (d == NULL || isnan(x))
        return -HUGE_VAL;
    v = d->logpdf(e, x);
    return isnan(v) ? -HUGE_VAL : v;
}

sl_status sl_prior_logpdf_points(size_t p, const sl_prior_entry *prior, size_t K,
                                 const double *X, double *L, sl_error *err)
{
    size_t j, k;
    for (k = 0; k < p; k++) {
        sl_status st = sl_prior_check(&prior[k], k + 1, err);
        if (st != SL_OK)
            return st;
    }
    for (j = 0; j < K; j++)
        for (k = 0; k < p; k++)
            L[k + j * p] = sl_prior_logpdf(&prior[k], X[k + j * p]);
    return SL_OK;
}

sl_status sl_prior_logpdf_sum(size_t p, const sl_prior_entry *prior, size_t K,
                              const double *X, double *L, sl_error *err)
{
    size_t j, k;
    if ((p > 0 && prior == NULL) || (p > 0 && K > 0 && X == NULL) ||
        (K > 0 && L == NULL))
        return sl_fail(err, SL_EINVAL, "badarg", "no prior, points or output buffer");
    for (k = 0; k < p; k++) {
        sl_status st = sl_prior_check(&prior[k], k + 1, err);
        if (st != SL_OK)
            return st;
    }
    for (j = 0; j < K; j++) {
        double s = 0.0;
        for (k = 0; k < p; k++) {
            double v = sl_prior_logpdf(&prior[k], X[k + j * p]);
            if (v == -HUGE_VAL) {
                s = v;
                break;
            }
            s += v;
        }
        L[j] = isnan(s) ? -HUGE_VAL : s;
    }
    return SL_OK;
}

/* ---------------------------------------------------------------------
 * Transforms of many parameters at many points
 * ------------------------------------------------------------------- */

sl_status sl_transform_from_bounds(size_t p, const double *lo, const double *hi,
                                   sl_transform *t, sl_error *err)
{
    size_t k;
    if (p > 0 && (lo == NULL || hi == NULL || t == NULL))
        return sl_fail(err, SL_EINVAL, "badarg", "no bounds or no output buffer");
    for (k = 0; k < p; k++)
        if (isnan(lo[k]) || isnan(hi[k]) || lo[k] > hi[k])
            return sl_fail(err, SL_EINVAL, "badbounds",
                           "parameter %zu: the bounds [%.17g %.17g] must be "
                           "lower <= upper without NaN",
                           k + 1, lo[k], hi[k]);
    for (k = 0; k < p; k++)
        t[k] = sl_transform_for_bounds(lo[k], hi[k]);
    return SL_OK;
}

/* the checks the array functions share: buffers present, p x K addressable */
static sl_status points_args(size_t p, const sl_transform *t, size_t K,
                             const double *in, const void *out, sl_error *err)
{
    size_t total;
    if (sl_size_mul(p, K, &total))
        return sl_fail(err, SL_ENOMEM, "nomemory", "%zu x %zu points overflow", p, K);
    if ((p > 0 && t == NULL) || (total > 0 && in == NULL) || (K > 0 && out == NULL))
        return sl_fail(err, SL_EINVAL, "badarg", "no transforms, points or output buffer");
    return SL_OK;
}

sl_status sl_transform_forward_points(size_t p, const sl_transform *t, size_t K,
                                      const double *X, double *Z, sl_error *err)
{
    size_t j, k;
    sl_status st = points_args(p, t, K, X, Z, err);
    if (st != SL_OK)
        return st;
    for (j = 0; j < K; j++)
        for (k = 0; k < p; k++)
            Z[k + j * p] = sl_transform_forward(&t[k], X[k + j * p]);
    return SL_OK;
}

sl_status sl_transform_inverse_points(size_t p, const sl_transform *t, size_t K,
                                      const double *Z, double *X, sl_error *err)
{
    size_t j, k;
    sl_status st = points_args(p, t, K, Z, X, err);
    if (st != SL_OK)
        return st;
    for (j = 0; j < K; j++)
        for (k = 0; k < p; k++)
            X[k + j * p] = sl_transform_inverse(&t[k], Z[k + j * p]);
    return SL_OK;
}

sl_status sl_transform_logjac_sum(size_t p, const sl_transform *t, size_t K,
                                  const double *Z, double *J, sl_error *err)
{
    size_t j, k;
    sl_status st = points_args(p, t, K, Z, J, err);
    if (st != SL_OK)
        return st;
    for (j = 0; j < K; j++) {
        double s = 0.0;
        for (k = 0; k < p; k++)
            s += sl_transform_logjac(&t[k], Z[k + j * p]);
        J[j] = s;
    }
    return SL_OK;
}
