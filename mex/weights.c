/* weights.c - gateway sluice.kernel.weights: normalise log-weights.
 *
 *   [w, ess, log_mean, entropy, n_zero, log_sum] = sluice.kernel.weights (logw)
 *
 * logw: real double vector, -Inf allowed (weight 0); w has its shape. */
#include "mexutil.h"
#include "sluice/weights.h"

void mexFunction(int nlhs, mxArray *plhs[], int nrhs, const mxArray *prhs[])
{
    static const char fn[] = "weights";
    const double *logw;
    mxArray *w;
    sl_weight_summary sum;
    sl_error err;
    size_t N;

    slm_init();
    slm_nargs(fn, nrhs, 1, 1, nlhs, 6);
    /* NaN and +Inf are let through to the core, which names the member */
    logw = slm_matrix(fn, prhs[0], 1, "logw", 0, 0,
                      SLM_VECTOR | SLM_ALLOW_NAN | SLM_ALLOW_INF);
    N = mxGetNumberOfElements(prhs[0]);
    w = slm_create(fn, mxGetM(prhs[0]), mxGetN(prhs[0]));
    sl_error_clear(&err);
    if (sl_weights_normalize(N, logw, mxGetDoubles(w), &sum, &err) != SL_OK)
        slm_fail(fn, err.reason, "argument 1 (logw): %s", err.message);
    plhs[0] = w;
    if (nlhs > 1)
        plhs[1] = mxCreateDoubleScalar(sum.ess);
    if (nlhs > 2)
        plhs[2] = mxCreateDoubleScalar(sum.log_mean);
    if (nlhs > 3)
        plhs[3] = mxCreateDoubleScalar(sum.entropy);
    if (nlhs > 4)
        plhs[4] = mxCreateDoubleScalar((double)sum.n_zero);
    if (nlhs > 5)
        plhs[5] = mxCreateDoubleScalar(sum.log_sum);
}
