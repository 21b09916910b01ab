/* quantiles_ref.c - the previous sl_weighted_summary and
 * sl_weighted_means (tests/c/stats_reference.h) in a unit of their own,
 * compiled with the library's flags, for quantiles_micro.c and
 * summaries_micro.c to time against. */
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

void reference_means(size_t N, const double *x, size_t ld, size_t m, const size_t *rows,
                     size_t base, const double *w, double *mean);

void reference_means(size_t N, const double *x, size_t ld, size_t m, const size_t *rows,
                     size_t base, const double *w, double *mean)
{
    reference_weighted_means(N, x, ld, m, rows, base, w, mean);
}
