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

#ifdef __cplusplus
}
#endif
#endif
