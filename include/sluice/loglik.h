/* loglik.h - observation log-likelihoods per ensemble member, with missing values. */
#ifndef SLUICE_LOGLIK_H
#define SLUICE_LOGLIK_H

#include <stddef.h>
#include "sluice/status.h"

#ifdef __cplusplus
extern "C" {
#endif

/* Likelihood families. For observation value y, predicted value h (one per
 * member), error scale sigma and the family's auxiliary number aux:
 *   gaussian   y ~ N(h, sigma^2)                               aux unused
 *   lognormal  log y ~ N(log h, sigma^2), y > 0, h <= 0 -> -Inf aux unused
 *   student_t  (y - h)/sigma ~ t(nu), nu = aux > 0
 *   poisson    y ~ Poisson(h), y a count, h < 0 -> -Inf        sigma unused
 *   binomial   y ~ Bin(n, 1/(1+exp(-h))), n = aux a positive integer count,
 *              h the logit of the success probability         sigma unused
 *   censored   Gaussian left-censored at the detection limit L = aux:
 *              y <= L contributes log Phi((L - h)/sigma), else N(h, sigma^2)
 * A non-finite h gives -Inf (a member that blew up cannot explain data). */
typedef enum {
    SL_FAMILY_GAUSSIAN = 0,
    SL_FAMILY_LOGNORMAL,
    SL_FAMILY_STUDENT_T,
    SL_FAMILY_POISSON,
    SL_FAMILY_BINOMIAL,
    SL_FAMILY_CENSORED,
    SL_FAMILY_COUNT
} sl_family_id;

/* A family as a type object. */
typedef struct {
    const char *name;     /* "gaussian", "lognormal", "student_t", ... */
    int uses_sigma;       /* 1 if sigma must be finite and > 0 */
    const char *aux_name; /* NULL if aux is unused, else e.g. "n", "dof", "limit" */
    double (*logpdf)(double y, double h, double sigma, double aux);
    /* The quantile (inverse CDF) of y at u in (0, 1) given h, sigma and aux,
     * in the parameterisation of logpdf; for the count families (poisson,
     * binomial) the smallest k with P(Y <= k) >= u, for censored the
     * limit up to the level P(Y = limit). NaN for a u outside (0, 1), an
     * invalid sigma or aux, or an h outside the family's domain (non-finite;
     * lognormal h <= 0; poisson h < 0 or above 2^53). A student_t
     * quantile of the standard t beyond 1e154 in size is +-Inf. */
    double (*quantile)(double u, double h, double sigma, double aux);
    /* A draw of y given h, sigma and aux from an independent standard
     * normal z and uniform u in (0, 1). The families that are transforms of
     * a normal (gaussian h + sigma z, lognormal exp(log h + sigma z),
     * censored max(h + sigma z, limit)) use z: their quantile at Phi(z)
     * without rounding through Phi. The others return quantile(u). NaN
     * as for quantile, and for a non-finite z where z is used. */
    double (*sample)(double z, double u, double h, double sigma, double aux);
    /* The mid-distribution function at y given h, sigma and aux,
     * P(Y < y) + P(Y = y)/2: for the continuous families P(Y <= y), for
     * the count families halfway up the step at a whole y, for censored
     * half the atom P(Y = limit) at a y at or below the limit (such a y
     * is read as censored, as logpdf reads it). It is uniform on (0, 1)
     * for continuous Y and centred on 1/2 for the others, which is what a
     * check of forecast calibration needs. NaN for a NaN y and as for
     * quantile (u aside). */
    double (*cdf)(double y, double h, double sigma, double aux);
} sl_family;

/* The family with this id, or NULL for an id out of range. */
const sl_family *sl_family_get(int id);

/* The id of the family with this name, or -1. */
int sl_family_find(const char *name);

/* Check m observations (value y, sigma, aux, family id per row) before use.
 * NaN y means missing and is allowed; +-Inf y is not. Fails with reasons
 * "badfamily", "badsigma", "badaux", "badvalue", naming the 1-based row. */
sl_status sl_loglik_check(size_t m, const double *y, const double *sigma,
                          const double *aux, const int *family, sl_error *err);

/* Quantiles of m rows: y[i] = quantile of family[i] at u[i] given h[i],
 * sigma[i] and aux[i] (sigma and aux may be NULL when no row's family uses
 * them). Fails (SL_EINVAL) with the reasons of sl_loglik_check for a bad
 * family id, sigma or aux, and "badprob" for a u[i] outside (0, 1); an h[i]
 * outside the family's domain gives y[i] = NaN. Does not allocate. */
sl_status sl_family_quantiles(size_t m, const int *family, const double *u,
                              const double *h, const double *sigma,
                              const double *aux, double *y, sl_error *err);

/* Draws of m rows: y[i] = sample of family[i] from z[i] (standard normal)
 * and u[i] (uniform) given h[i], sigma[i] and aux[i]. Fails as
 * sl_family_quantiles, and with "badnormal" for a non-finite z[i]. */
sl_status sl_family_samples(size_t m, const int *family, const double *z,
                            const double *u, const double *h,
                            const double *sigma, const double *aux, double *y,
                            sl_error *err);

/* Log-likelihood of every member: ll[j] = sum over rows i with non-NaN y_i of
 * logpdf(y_i | Yhat[i + j*ldy]). If `accumulate` is non-zero the sum is added
 * to ll[j], otherwise ll[j] is overwritten. *nskipped (may be NULL) receives
 * the number of rows skipped as missing. The inputs must have passed
 * sl_loglik_check; this function does not allocate. */
sl_status sl_loglik_ensemble(size_t m, size_t N, const double *y,
                             const double *Yhat, size_t ldy,
                             const double *sigma, const double *aux,
                             const int *family, int accumulate, double *ll,
                             size_t *nskipped, sl_error *err);

/* Most members a forecast PIT evaluates per row (see sl_loglik_pit). */
#define SL_PIT_MAX_MEMBERS 1024

/* The forecast probability integral transform of m rows: where each
 * observation falls in the predictive distribution of the weighted
 * ensemble, pit[i] = sum_j w_j cdf(y_i | Yhat[i + j*ldy]) / sum_j w_j
 * over the members j that count (weight > 0, not flagged in dead, which
 * may be NULL, and a cdf that is not NaN: a member whose prediction is
 * outside the family's domain cannot explain the value). With more than
 * SL_PIT_MAX_MEMBERS members of positive weight the sum runs over
 * SL_PIT_MAX_MEMBERS picks made by systematic selection on the weights
 * (offset 1/2, no random draw). NaN for a missing (NaN) y or a row with
 * no member that counts. Deterministic and serial; the inputs must have
 * passed sl_loglik_check and w must be finite and >= 0. Fails (SL_EINVAL,
 * "badfamily") only for a family id out of range. Does not allocate. */
sl_status sl_loglik_pit(size_t m, size_t N, const double *y, const double *Yhat,
                        size_t ldy, const double *sigma, const double *aux,
                        const int *family, const double *w,
                        const unsigned char *dead, double *pit, sl_error *err);

/* sl_loglik_pit in two parts, for rows shared out among threads: which
 * members every row reads, chosen once from the weights (js[e] member,
 * fs[e] its factor: its weight, or how often systematic selection picked
 * it; js and fs hold SL_PIT_MAX_MEMBERS + 1 entries; returns their
 * number, 0 when no member counts), then any rows from that list. The
 * two give sl_loglik_pit's values to the last bit. */
size_t sl_loglik_pit_members(size_t N, const double *w, const unsigned char *dead, size_t *js,
                             double *fs);
sl_status sl_loglik_pit_listed(size_t m, const double *y, const double *Yhat, size_t ldy,
                               const double *sigma, const double *aux, const int *family,
                               size_t count, const size_t *js, const double *fs, double *pit,
                               sl_error *err);

#ifdef __cplusplus
}
#endif
#endif
