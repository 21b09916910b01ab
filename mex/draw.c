/* draw.c - gateway: P = sluice.kernel.draw(dist_ids, a, b, lo, hi, N, seed),
 * the p x N prior draws of members 0..N-1. */
#include "mexutil.h"
#include "sluice/prior.h"

#define FN "draw"

void mexFunction(int nlhs, mxArray *plhs[], int nrhs, const mxArray *prhs[])
{
    const sl_prior_entry *prior;
    size_t p, N;
    double seed;
    mxArray *P;
    sl_error err;

    slm_init();
    slm_nargs(FN, nrhs, 7, 7, nlhs, 1);
    prior = slm_prior(FN, prhs, 1, &p);
    N = (size_t)slm_integer(FN, prhs[5], 6, "N", 1, 9007199254740992.0);
    seed = slm_integer(FN, prhs[6], 7, "seed", 0, 9007199254740992.0);

    P = slm_create(FN, p, N);
    sl_error_clear(&err);
    if (sl_prior_draw(p, prior, N, (uint64_t)seed, 0, mxGetDoubles(P), &err)
        != SL_OK)
        slm_raise(FN, &err);
    plhs[0] = P;
}
