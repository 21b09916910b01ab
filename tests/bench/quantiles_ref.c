/* quantiles_ref.c - the previous sl_weighted_summary (tests/c/
 * stats_reference.h) in a unit of its own, compiled with the library's
 * flags, for quantiles_micro.c to time against. */
#include <stddef.h>

#include "stats_reference.h"

size_t reference_size(size_t N);
void reference_summary(size_t N, const double *x, size_t inc, const double *w, size_t nq,
                       const double *probs, double *mean, double *q, size_t qinc,
                       double *work);

size_t reference_size(size_t N)
{
    return reference_workspace(N);
}

void reference_summary(size_t N, const double *x, size_t inc, const double *w, size_t nq,
                       const double *probs, double *mean, double *q, size_t qinc,
                       double *work)
{
    reference_weighted_summary(N, x, inc, w, nq, probs, mean, q, qinc, work);
}
