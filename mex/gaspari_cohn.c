/* gaspari_cohn.c - gateway: sluice.kernel.gaspari_cohn(d, c), elementwise. */
#include "mexutil.h"
#include "sluice/enkf.h"

static const char *FN = "gaspari_cohn";

void mexFunction(int nlhs, mxArray *plhs[], int nrhs, const mxArray *prhs[])
{
    const double *d, *c;
    double *out;
    size_t n, nc, k;
    slm_init();
    slm_nargs(FN, nrhs, 2, 2, nlhs, 1);
    d = slm_matrix(FN, prhs[0], 1, "d", 0, 0, SLM_ALLOW_EMPTY | SLM_ALLOW_INF);
    c = slm_matrix(FN, prhs[1], 2, "c", 0, 0, 0);
    n = mxGetNumberOfElements(prhs[0]);
    nc = mxGetNumberOfElements(prhs[1]);
    if (nc != 1 && nc != n)
        slm_fail(FN, "badsize", "argument 2 (c): expected a scalar or one value per distance");
    for (k = 0; k < nc; k++)
        if (!(c[k] > 0))
            slm_fail(FN, "badradius", "argument 2 (c): the half-width must be > 0, got %g", c[k]);
    plhs[0] = slm_create(FN, mxGetM(prhs[0]), mxGetN(prhs[0]));
    out = mxGetDoubles(plhs[0]);
    for (k = 0; k < n; k++)
        out[k] = sl_gaspari_cohn(d[k], c[nc == 1 ? 0 : k]);
}
