/* prior.h - parameter priors, their draws, and the transforms of bounded parameters. */
#ifndef SLUICE_PRIOR_H
#define SLUICE_PRIOR_H

#include <stddef.h>
#include <stdint.h>
#include "sluice/rng.h"
#include "sluice/status.h"

#ifdef __cplusplus
extern "C" {
#endif

/* Transform of a parameter into the unbounded space where it is perturbed
 * and estimated:
 *   none   z = x                      (lo = -Inf, hi = +Inf)
 *   log    z = log(x - lo)            (lo finite, hi = +Inf)
 *   neglog z = log(hi - x)            (lo = -Inf, hi finite)
 *   logit  z = log((x - lo)/(hi - x)) (both finite, lo < hi) */
typedef enum {
    SL_TRANSFORM_NONE = 0,
    SL_TRANSFORM_LOG,
    SL_TRANSFORM_NEGLOG,
    SL_TRANSFORM_LOGIT
} sl_transform_kind;

typedef struct {
    int kind;
    double lo, hi;
} sl_transform;

/* The transform that bounds (lo, hi) call for (infinite = no bound). */
sl_transform sl_transform_for_bounds(double lo, double hi);

double sl_transform_forward(const sl_transform *t, double x);
double sl_transform_inverse(const sl_transform *t, double z);

/* log |dx/dz| at z, x = sl_transform_inverse(t, z): what turns a density
 * of x into the density of z (log p_z(z) = log p_x(x) + logjac). */
double sl_transform_logjac(const sl_transform *t, double z);

/* The transforms of p parameters from their bounds lo[k], hi[k]
 * (sl_transform_for_bounds; -Inf, +Inf = no bound). Reason "badbounds"
 * for a NaN bound or lo[k] > hi[k] (lo[k] == hi[k], a fixed value, has
 * the identity); nothing is written then. */
sl_status sl_transform_from_bounds(size_t p, const double *lo, const double *hi,
                                   sl_transform *t, sl_error *err);

/* The transforms at K points of p parameters (column-major p x K arrays,
 * row k by t[k]): Z = forward(X), X = inverse(Z) elementwise as
 * sl_transform_forward / sl_transform_inverse give them (out may be in). */
sl_status sl_transform_forward_points(size_t p, const sl_transform *t, size_t K,
                                      const double *X, double *Z, sl_error *err);
sl_status sl_transform_inverse_points(size_t p, const sl_transform *t, size_t K,
                                      const double *Z, double *X, sl_error *err);

/* The log-Jacobian of the whole inverse transform at K points z (p x K):
 * J[j] = sum over k of sl_transform_logjac(t[k], Z[k + j p]), in order of
 * k = log |det dx/dz| of the map z -> x, which acts row by row. */
sl_status sl_transform_logjac_sum(size_t p, const sl_transform *t, size_t K,
                                  const double *Z, double *J, sl_error *err);

/* Prior distributions of one parameter:
 *   uniform     a = lower, b = upper (a < b)
 *   normal      a = mean,  b = standard deviation > 0
 *   lognormal   a = mean of log x, b = standard deviation of log x > 0
 *   truncnormal a = mean, b = sd > 0, truncated to [lo, hi], lo < hi
 *   fixed       a = the value (every member gets it)                    */
typedef enum {
    SL_DIST_UNIFORM = 0,
    SL_DIST_NORMAL,
    SL_DIST_LOGNORMAL,
    SL_DIST_TRUNCNORMAL,
    SL_DIST_FIXED,
    SL_DIST_COUNT
} sl_dist_id;

typedef struct {
    int dist;
    double a, b;
    double lo, hi; /* truncation for truncnormal; ignored otherwise */
} sl_prior_entry;

/* A distribution as a type object: one entry of the core's table of
 * distributions, found by name (sl_dist_find) or id (sl_dist_get). To add
 * a distribution: an id before SL_DIST_COUNT above, static functions and
 * one table entry in src/prior.c; every user of the table (the checks,
 * draws and densities here, sluice.kernel.core_names) then knows it. */
typedef struct {
    const char *name;   /* "uniform", "normal", ... */
    const char *form;   /* what its numbers are, for messages: "[lo hi]" */
    int nargs;          /* how many of a, b, lo, hi it takes (1 to 4) */
    int open_support;   /* 1: a draw must lie strictly inside the support
                           (lognormal: 0 is its support's end, never a value) */
    /* 0 if the entry's numbers are valid; else 1, *what saying which is wrong */
    int (*check)(const sl_prior_entry *e, const char **what);
    /* the closed interval [lo, hi] holding every value of positive density */
    void (*support)(const sl_prior_entry *e, double *lo, double *hi);
    /* the log-density at x in natural units (-Inf outside the support);
     * called with x not NaN on a checked entry */
    double (*logpdf)(const sl_prior_entry *e, double x);
    /* one draw from the entry's stream (a checked entry) */
    double (*draw)(const sl_prior_entry *e, sl_stream *s);
} sl_dist_type;

/* The distribution with this id, NULL for an id out of range. */
const sl_dist_type *sl_dist_get(int id);

/* The id of a distribution name ("uniform", "normal", "lognormal",
 * "truncnormal", "fixed"), or -1. */
int sl_dist_find(const char *name);

/* Check one entry; reasons "baddist", "badprior" (message says which
 * number is wrong). `index` (1-based) is named in the message. */
sl_status sl_prior_check(const sl_prior_entry *e, size_t index, sl_error *err);

/* The verdict of sl_prior_check without its message: NULL for a valid
 * entry; else what is wrong (the distribution's own words, "the standard
 * deviation must be positive and finite"; "unknown distribution id"),
 * *reason then "badprior" or "baddist" (NULL for a valid entry). The
 * text is static; callers add which entry it is. */
const char *sl_prior_fault(const sl_prior_entry *e, const char **reason);

/* The support of the entry's distribution: bounds for the transform. */
void sl_prior_support(const sl_prior_entry *e, double *lo, double *hi);

/* The log-density of the entry's distribution at x (natural units),
 * -Inf outside its support or for NaN; a fixed entry gives 0 at its
 * value (a point mass, never moved) and -Inf elsewhere. */
double sl_prior_logpdf(const sl_prior_entry *e, double x);

/* The log-densities of K points of p parameters: L[k + j p] is entry k's
 * log-density at X[k + j p] (X and L p x K, column-major), as
 * sl_prior_logpdf gives it. Every entry is checked first (reasons as
 * sl_prior_check's); nothing is written when one is invalid. */
sl_status sl_prior_logpdf_points(size_t p, const sl_prior_entry *prior, size_t K,
                                 const double *X, double *L, sl_error *err);

/* The joint log-density of the p independent entries at K points:
 * L[j] = sum over k of sl_prior_logpdf(prior[k], X[k + j p]) in order of k,
 * -Inf as soon as one term is (a point outside a support) and where the
 * sum is NaN. Entries are checked first, as by sl_prior_logpdf_points.
 * With the transforms, L + sl_transform_logjac_sum is the log-density of
 * the transformed point z (change of variables). */
sl_status sl_prior_logpdf_sum(size_t p, const sl_prior_entry *prior, size_t K,
                              const double *X, double *L, sl_error *err);

/* Draw member j = first .. first+N-1 of p parameters into P (p x N,
 * column-major): member j uses stream (seed, j, 0, SL_PURPOSE_PRIOR) alone,
 * so its values do not depend on N or on the other members. */
sl_status sl_prior_draw(size_t p, const sl_prior_entry *prior, size_t N,
                        uint64_t seed, uint32_t first, double *P,
                        sl_error *err);

#ifdef __cplusplus
}
#endif
#endif
