/* scores.c - gateway: ensemble verification scores, one value per row.
 *   c = sluice.kernel.scores ('crps', X, y)        CRPS of each row
 *   r = sluice.kernel.scores ('rank', X, y, seed)  rank of y, 1 .. N+1
 * X: m x N real double, finite (members as columns); y: m-vector, NaN
 * allowed (NaN score / NaN rank); seed: whole number 0 .. 2^53 that keys
 * the random tie-breaking. Outputs are m x 1. */
#include "mexutil.h"
#include "sluice/scores.h"

#include <string.h>

static const char *FN = "scores";

void mexFunction(int nlhs, mxArray *plhs[], int nrhs, const mxArray *prhs[])
{
    const double *X, *y;
    char *what;
    size_t m, N;
    double *out;
    sl_error err;
    int rank;
    slm_init();
    slm_nargs(FN, nrhs, 3, 4, nlhs, 1);
    what = slm_string(FN, prhs[0], 1, "score");
    if (strcmp(what, "crps") == 0)
        rank = 0;
    else if (strcmp(what, "rank") == 0)
        rank = 1;
    else
        slm_fail(FN, "badscore",
                 "argument 1 (score): expected 'crps' or 'rank', got '%s'", what);
    mxFree(what);
    if (nrhs != (rank ? 4 : 3))
        slm_fail(FN, "nargin", "'%s' takes %d input arguments, got %d",
                 rank ? "rank" : "crps", rank ? 4 : 3, nrhs);
    X = slm_matrix(FN, prhs[1], 2, "X", 0, 0, 0);
    m = mxGetM(prhs[1]);
    N = mxGetN(prhs[1]);
    y = slm_matrix(FN, prhs[2], 3, "y", m, 0, SLM_VECTOR | SLM_ALLOW_NAN);
    plhs[0] = slm_create(FN, m, 1);
    out = mxGetDoubles(plhs[0]);
    sl_error_clear(&err);
    if (rank) {
        uint64_t seed = (uint64_t)slm_integer(FN, prhs[3], 4, "seed", 0,
                                              9007199254740992.0);
        if (sl_scores_rank(m, N, X, m, y, seed, out, &err) != SL_OK)
            slm_raise(FN, &err);
    } else {
        double *work = (double *)slm_alloc(FN, sl_scores_crps_workspace(N),
                                           sizeof(double));
        if (sl_scores_crps(m, N, X, m, y, out, work, &err) != SL_OK)
            slm_raise(FN, &err);
        mxFree(work);
    }
}
