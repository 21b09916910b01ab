/* prior_eval.c - gateway: a prior's densities and the transforms of bounded
 * parameters at K points (p x K, one row per parameter), by mode:
 *   L = sluice.kernel.prior_eval('logpdf', dist_ids, a, b, lo, hi, X)  p x K
 *   L = sluice.kernel.prior_eval('logprior', dist_ids, a, b, lo, hi, X) 1 x K
 *   Z = sluice.kernel.prior_eval('forward', lower, upper, X)            p x K
 *   X = sluice.kernel.prior_eval('inverse', lower, upper, Z)            p x K
 *   J = sluice.kernel.prior_eval('logjac', lower, upper, Z)             1 x K
 *   [reason, what, slo, shi] = sluice.kernel.prior_eval('check', dist_ids, a, b, lo, hi)
 * logpdf: each entry's log-density; logprior: their sum per point (the
 * joint log-density); forward / inverse: natural units to the unbounded
 * space of the bounds (lower, upper) and back; logjac: log |det dx/dz| of
 * the inverse at each point; check: the core's verdict on each of the
 * p entries without raising (sl_prior_fault), reason and what 1 x p
 * cellstr ('' for a valid entry, else 'badprior' or 'baddist' and the
 * core's words for what is wrong), slo and shi 1 x p, the support of each
 * valid entry (NaN for an invalid one). The prior's five vectors are as
 * sluice.kernel.draw takes them. */
#include <math.h>
#include <string.h>

#include "mexutil.h"
#include "sluice/prior.h"

#define FN "prior_eval"

enum { MODE_LOGPDF, MODE_LOGPRIOR, MODE_FORWARD, MODE_INVERSE, MODE_LOGJAC, MODE_CHECK };

static const char *const modes[] = {"logpdf",  "logprior", "forward",
                                    "inverse", "logjac",   "check"};

/* mode 'check': the verdict and support of every entry, nothing raised */
static void check(int nlhs, mxArray *plhs[], const mxArray *prhs[])
{
    size_t p, k;
    const sl_prior_entry *prior = slm_prior_entries(FN, prhs + 1, 2, &p);
    mxArray *reasons = mxCreateCellMatrix(1, p), *whats = mxCreateCellMatrix(1, p);
    mxArray *slo = slm_create(FN, 1, p), *shi = slm_create(FN, 1, p);
    for (k = 0; k < p; k++) {
        const char *reason, *what = sl_prior_fault(&prior[k], &reason);
        double lo = NAN, hi = NAN;
        if (what == NULL)
            sl_prior_support(&prior[k], &lo, &hi);
        mxSetCell(reasons, k, mxCreateString(what == NULL ? "" : reason));
        mxSetCell(whats, k, mxCreateString(what == NULL ? "" : what));
        mxGetDoubles(slo)[k] = lo;
        mxGetDoubles(shi)[k] = hi;
    }
    plhs[0] = reasons;
    if (nlhs > 1)
        plhs[1] = whats;
    if (nlhs > 2)
        plhs[2] = slo;
    if (nlhs > 3)
        plhs[3] = shi;
}

void mexFunction(int nlhs, mxArray *plhs[], int nrhs, const mxArray *prhs[])
{
    const double *X;
    size_t p, K;
    mxArray *out;
    sl_error err;
    sl_status st;
    char *name;
    int mode = -1, k, nin;

    slm_init();
    slm_nargs(FN, nrhs, 1, 7, nlhs, 4);
    name = slm_string(FN, prhs[0], 1, "mode");
    for (k = 0; k < (int)(sizeof modes / sizeof *modes); k++)
        if (strcmp(name, modes[k]) == 0)
            mode = k;
    if (mode < 0)
        slm_fail(FN, "badmode",
                 "argument 1 (mode): expected 'logpdf', 'logprior', 'forward', "
                 "'inverse', 'logjac' or 'check', got '%s'", name);
    nin = mode == MODE_LOGPDF || mode == MODE_LOGPRIOR ? 7 : mode == MODE_CHECK ? 6 : 4;
    if (nrhs != nin)
        slm_fail(FN, "nargin", "mode '%s' takes %d input arguments, got %d", name, nin,
                 nrhs);
    if (mode != MODE_CHECK && nlhs > 1)
        slm_fail(FN, "nargout", "mode '%s' gives 1 output, %d asked for", name, nlhs);
    if (mode == MODE_CHECK) {
        check(nlhs, plhs, prhs);
        return;
    }
    sl_error_clear(&err);

    if (mode == MODE_LOGPDF || mode == MODE_LOGPRIOR) {
        const sl_prior_entry *prior = slm_prior(FN, prhs + 1, 2, &p);
        /* points outside a support, NaN or Inf get -Inf: any value is allowed */
        X = slm_matrix(FN, prhs[6], 7, "X", p, 0,
                       SLM_ALLOW_EMPTY | SLM_ALLOW_NAN | SLM_ALLOW_INF);
        K = mxGetN(prhs[6]);
        if (mode == MODE_LOGPDF) {
            out = slm_create(FN, p, K);
            st = sl_prior_logpdf_points(p, prior, K, X, mxGetDoubles(out), &err);
        } else {
            out = slm_create(FN, 1, K);
            st = sl_prior_logpdf_sum(p, prior, K, X, mxGetDoubles(out), &err);
        }
    } else {
        const double *lower, *upper;
        sl_transform *t;
        lower = slm_matrix(FN, prhs[1], 2, "lower", 0, 0,
                           SLM_VECTOR | SLM_ALLOW_NAN | SLM_ALLOW_INF);
        p = mxGetNumberOfElements(prhs[1]);
        upper = slm_matrix(FN, prhs[2], 3, "upper", p, 0,
                           SLM_VECTOR | SLM_ALLOW_NAN | SLM_ALLOW_INF);
        X = slm_matrix(FN, prhs[3], 4, mode == MODE_FORWARD ? "X" : "Z", p, 0,
                       SLM_ALLOW_EMPTY | SLM_ALLOW_NAN | SLM_ALLOW_INF);
        K = mxGetN(prhs[3]);
        t = slm_alloc(FN, p, sizeof *t);
        if (sl_transform_from_bounds(p, lower, upper, t, &err) != SL_OK)
            slm_raise(FN, &err);
        if (mode == MODE_LOGJAC) {
            out = slm_create(FN, 1, K);
            st = sl_transform_logjac_sum(p, t, K, X, mxGetDoubles(out), &err);
        } else {
            out = slm_create(FN, p, K);
            st = mode == MODE_FORWARD
                     ? sl_transform_forward_points(p, t, K, X, mxGetDoubles(out), &err)
                     : sl_transform_inverse_points(p, t, K, X, mxGetDoubles(out), &err);
        }
    }
    if (st != SL_OK)
        slm_raise(FN, &err);
    plhs[0] = out;
}
