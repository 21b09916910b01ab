/* prior_logpdf.c - gateway: L = sluice.kernel.prior_logpdf(dist_ids, a, b, lo, hi, X),
 * the log-density of prior entry k at each value of row k of X (p x K). */
#include <limits.h>
#include <math.h>

#include "mexutil.h"
#include "sluice/prior.h"

#define FN "prior_logpdf"

void mexFunction(int nlhs, mxArray *plhs[], int nrhs, const mxArray *prhs[])
{
    const double *ids, *a, *b, *lo, *hi, *X;
    sl_prior_entry *prior;
    size_t p, k, K;
    mxArray *L;
    sl_error err;

    slm_init();
    slm_nargs(FN, nrhs, 6, 6, nlhs, 1);
    ids = slm_matrix(FN, prhs[0], 1, "dist_ids", 0, 0, SLM_VECTOR);
    p = mxGetNumberOfElements(prhs[0]);
    /* the numbers of each entry are checked by the core, entry by entry */
    a = slm_matrix(FN, prhs[1], 2, "a", p, 0,
                   SLM_VECTOR | SLM_ALLOW_NAN | SLM_ALLOW_INF);
    b = slm_matrix(FN, prhs[2], 3, "b", p, 0,
                   SLM_VECTOR | SLM_ALLOW_NAN | SLM_ALLOW_INF);
    lo = slm_matrix(FN, prhs[3], 4, "lo", p, 0,
                    SLM_VECTOR | SLM_ALLOW_NAN | SLM_ALLOW_INF);
    hi = slm_matrix(FN, prhs[4], 5, "hi", p, 0,
                    SLM_VECTOR | SLM_ALLOW_NAN | SLM_ALLOW_INF);
    /* points outside a support, NaN or Inf get -Inf: any value is allowed */
    X = slm_matrix(FN, prhs[5], 6, "X", p, 0,
                   SLM_ALLOW_EMPTY | SLM_ALLOW_NAN | SLM_ALLOW_INF);
    K = mxGetN(prhs[5]);

    prior = slm_alloc(FN, p, sizeof *prior);
    for (k = 0; k < p; k++) {
        double id = ids[k];
        if (id != floor(id) || fabs(id) > (double)INT_MAX)
            slm_fail(FN, "baddist",
                     "argument 1 (dist_ids): element %lu is %.17g; expected a "
                     "whole-number distribution id from 0 to %d",
                     (unsigned long)(k + 1), id, SL_DIST_COUNT - 1);
        prior[k].dist = (int)id;
        prior[k].a = a[k];
        prior[k].b = b[k];
        prior[k].lo = lo[k];
        prior[k].hi = hi[k];
    }

    L = slm_create(FN, p, K);
    sl_error_clear(&err);
    if (sl_prior_logpdf_points(p, prior, K, X, mxGetDoubles(L), &err) != SL_OK)
        slm_raise(FN, &err);
    plhs[0] = L;
}
