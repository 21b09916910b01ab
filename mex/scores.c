/* scores.c - gateway: ensemble verification scores and hydrograph skill.
 *   c = sluice.kernel.scores ('crps', X, y)        CRPS of each row
 *   r = sluice.kernel.scores ('rank', X, y, seed)  rank of y, 1 .. N+1
 *   k = sluice.kernel.scores ('skill', s, o)       skill of s against o
 *   c = sluice.kernel.scores ('crps_weighted', X, y, w)  weighted CRPS
 *   [mu, v] = sluice.kernel.scores ('moments', X, w)   weighted mean, variance
 * X: m x N real double, finite (members as columns); y: m-vector, NaN
 * allowed (NaN score / NaN rank); seed: whole number 0 .. 2^53 that keys
 * the random tie-breaking. Outputs are m x 1. For 'skill', s and o are
 * real double vectors of one length (o NaN: missing, left out) and k is
 * 1 x 6: [NSE, KGE, r, alpha, beta, pairs used] (sl_scores_skill).
 * For 'crps_weighted', X is m x N x K (K blocks of m rows, finite), y is
 * m x K (NaN allowed), w is N x K (one weight vector per block, >= 0, not
 * all 0) and c is m x K (sl_scores_crps_weighted). For 'moments', X and w
 * are as for 'crps_weighted' and mu, v are m x K
 * (sl_scores_weighted_moments). */
#include "mexutil.h"
#include "sluice/scores.h"

#include <string.h>

static const char *FN = "scores";

static void skill(int nrhs, mxArray *plhs[], const mxArray *prhs[])
{
    const double *sim, *obs;
    size_t n;
    double *out;
    sl_skill k;
    sl_error err;
    if (nrhs != 3)
        slm_fail(FN, "nargin", "'skill' takes 3 input arguments, got %d", nrhs);
    sim = slm_matrix(FN, prhs[1], 2, "simulated", 0, 0,
                     SLM_VECTOR | SLM_ALLOW_EMPTY | SLM_ALLOW_NAN | SLM_ALLOW_INF);
    n = mxGetNumberOfElements(prhs[1]);
    obs = slm_matrix(FN, prhs[2], 3, "observed", n, 0,
                     SLM_VECTOR | SLM_ALLOW_EMPTY | SLM_ALLOW_NAN | SLM_ALLOW_INF);
    if (mxGetNumberOfElements(prhs[2]) != n)
        slm_fail(FN, "badsize", "argument 3 (observed): expected %lu values, one per simulated value, got %lu",
                 (unsigned long)n, (unsigned long)mxGetNumberOfElements(prhs[2]));
    sl_error_clear(&err);
    if (sl_scores_skill(n, sim, obs, 1, &k, &err) != SL_OK)
        slm_raise(FN, &err);
    plhs[0] = slm_create(FN, 1, 6);
    out = mxGetDoubles(plhs[0]);
    out[0] = k.nse;
    out[1] = k.kge;
    out[2] = k.r;
    out[3] = k.alpha;
    out[4] = k.beta;
    out[5] = (double)k.count;
}

/* X (m x N x K real double) and w (N x K) of 'crps_weighted' and
 * 'moments', at argument 2 and argument wpos */
static void weighted_ensemble(const mxArray *Xa, const mxArray *wa, int wpos,
                              size_t *m, size_t *N, size_t *K, const double **X,
                              const double **w)
{
    const mwSize *dims;
    mwSize nd = mxGetNumberOfDimensions(Xa);
    char got[96];
    if (!mxIsDouble(Xa) || mxIsComplex(Xa) || mxIsSparse(Xa) || nd > 3) {
        slm_describe(Xa, got, sizeof got);
        slm_fail(FN, "badclass",
                 "argument 2 (X): expected a real double m x N x K array, got %s", got);
    }
    dims = mxGetDimensions(Xa);
    *m = (size_t)dims[0];
    *N = (size_t)dims[1];
    *K = nd == 3 ? (size_t)dims[2] : 1;
    *X = slm_doubles(Xa);
    if (mxGetM(wa) != *N || mxGetNumberOfElements(wa) != *N * *K) {
        slm_describe(wa, got, sizeof got);
        slm_fail(FN, "badsize", "argument %d (w): expected %lux%lu, got %s", wpos,
                 (unsigned long)*N, (unsigned long)*K, got);
    }
    *w = slm_matrix(FN, wa, wpos, "w", 0, 0,
                    SLM_ALLOW_EMPTY | SLM_ALLOW_NAN | SLM_ALLOW_INF);
}

static void crps_weighted(int nrhs, mxArray *plhs[], const mxArray *prhs[])
{
    size_t m, N, K;
    const double *X, *y, *w;
    double *work;
    char got[96];
    sl_error err;
    if (nrhs != 4)
        slm_fail(FN, "nargin", "'crps_weighted' takes 4 input arguments, got %d", nrhs);
    weighted_ensemble(prhs[1], prhs[3], 4, &m, &N, &K, &X, &w);
    if (mxGetM(prhs[2]) != m || mxGetNumberOfElements(prhs[2]) != m * K) {
        slm_describe(prhs[2], got, sizeof got);
        slm_fail(FN, "badsize", "argument 3 (y): expected %lux%lu, got %s",
                 (unsigned long)m, (unsigned long)K, got);
    }
    y = slm_matrix(FN, prhs[2], 3, "y", 0, 0, SLM_ALLOW_EMPTY | SLM_ALLOW_NAN);
    plhs[0] = slm_create(FN, m, K);
    work = (double *)slm_alloc(FN, sl_scores_crps_weighted_workspace(N) + 1,
                               sizeof(double));
    sl_error_clear(&err);
    if (sl_scores_crps_weighted(m, N, K, X, w, y, mxGetDoubles(plhs[0]), work,
                                &err) != SL_OK)
        slm_raise(FN, &err);
    mxFree(work);
}

static void moments(int nrhs, int nlhs, mxArray *plhs[], const mxArray *prhs[])
{
    size_t m, N, K;
    const double *X, *w;
    mxArray *mu, *v;
    sl_error err;
    if (nrhs != 3)
        slm_fail(FN, "nargin", "'moments' takes 3 input arguments, got %d", nrhs);
    weighted_ensemble(prhs[1], prhs[2], 3, &m, &N, &K, &X, &w);
    mu = slm_create(FN, m, K);
    v = slm_create(FN, m, K);
    sl_error_clear(&err);
    if (sl_scores_weighted_moments(m, N, K, X, w, mxGetDoubles(mu), mxGetDoubles(v),
                                   &err) != SL_OK)
        slm_raise(FN, &err);
    plhs[0] = mu;
    if (nlhs > 1)
        plhs[1] = v;
}

void mexFunction(int nlhs, mxArray *plhs[], int nrhs, const mxArray *prhs[])
{
    const double *X, *y;
    char *what;
    size_t m, N;
    double *out;
    sl_error err;
    int rank;
    slm_init();
    slm_nargs(FN, nrhs, 3, 4, nlhs, 2);
    what = slm_string(FN, prhs[0], 1, "score");
    if (strcmp(what, "moments") == 0) {
        mxFree(what);
        moments(nrhs, nlhs, plhs, prhs);
        return;
    }
    if (nlhs > 1)
        slm_fail(FN, "nargout", "'%s' gives 1 output, %d asked for", what, nlhs);
    if (strcmp(what, "skill") == 0) {
        mxFree(what);
        skill(nrhs, plhs, prhs);
        return;
    }
    if (strcmp(what, "crps_weighted") == 0) {
        mxFree(what);
        crps_weighted(nrhs, plhs, prhs);
        return;
    }
    if (strcmp(what, "crps") == 0)
        rank = 0;
    else if (strcmp(what, "rank") == 0)
        rank = 1;
    else
        slm_fail(FN, "badscore",
                 "argument 1 (score): expected 'crps', 'crps_weighted', 'moments', 'rank' or 'skill', got '%s'", what);
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
