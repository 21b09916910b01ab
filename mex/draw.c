/* draw.c - gateway: P = sluice.kernel.draw(dist_ids, a, b, lo, hi, N, seed),
 * the p x N prior draws of members 0..N-1. */
#include <limits.h>
#include <math.h>

#include "mexutil.h"
#include "sluice/prior.h"

#define FN "draw"

void mexFunction(int nlhs, mxArray *plhs[], int nrhs, const mxArray *prhs[])
{
    const double *ids, *a, *b, *lo, *hi;
    sl_prior_entry *prior;
    size_t p, k, N;
    double seed;
    mxArray *P;
    sl_error err;

    slm_init();
    slm_nargs(FN, nrhs, 7, 7, nlhs, 1);
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

    prior = slm_alloc(FN, p, sizeof *prior);
    sl_error_clear(&err);
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
        if (sl_prior_check(&prior[k], k + 1, &err) != SL_OK)
            slm_raise(FN, &err);
    }

    N = (size_t)slm_integer(FN, prhs[5], 6, "N", 1, 9007199254740992.0);
    seed = slm_integer(FN, prhs[6], 7, "seed", 0, 9007199254740992.0);

    P = slm_create(FN, p, N);
    if (sl_prior_draw(p, prior, N, (uint64_t)seed, 0, mxGetDoubles(P), &err)
        != SL_OK)
        slm_raise(FN, &err);
    plhs[0] = P;
}
