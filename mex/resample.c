/* resample.c - gateway sluice.kernel.resample: ancestors by a named scheme.
 *
 *   a = sluice.kernel.resample (w, scheme, M, seed, cycle)
 *
 * w: real double vector of N weights (finite, >= 0, positive sum; need not
 * be normalised); scheme: "systematic", "stratified", "residual" or
 * "multinomial"; M: number of ancestors, 1 .. 4294967294; seed: whole
 * number 0 .. 2^53; cycle: whole number 0 .. 2^32 - 1. a: 1 x M double,
 * 1-based member indices. */
#include "mexutil.h"
#include "sluice/resample.h"

#include <string.h>

/* 0-based uint32 indices a32[0..M-1] stored at the front of the M doubles
 * of `out`, turned in place into 1-based doubles. Working down from the
 * top in blocks [k0, k1) with k1 <= 2 k0, the doubles a block writes
 * (bytes 8 k0 .. 8 k1) never overlap the indices it or any later block
 * reads (bytes below 4 k1), so each block is a plain vectorisable loop. */
static void block_to_double(const uint32_t *restrict src, double *restrict dst,
                            size_t n)
{
    size_t k;
    for (k = 0; k < n; k++)
        dst[k] = (double)src[k] + 1.0;
}

static void one_based_in_place(double *out, size_t M)
{
    const uint32_t *a32 = (const uint32_t *)(void *)out;
    size_t k1 = M;
    uint32_t first;
    while (k1 > 1) {
        size_t k0 = (k1 + 1) / 2;
        block_to_double(a32 + k0, out + k0, k1 - k0);
        k1 = k0;
    }
    memcpy(&first, out, sizeof first);
    out[0] = (double)first + 1.0;
}

void mexFunction(int nlhs, mxArray *plhs[], int nrhs, const mxArray *prhs[])
{
    static const char fn[] = "resample";
    const sl_resampler *scheme;
    const double *w;
    double *work = NULL;
    char *name;
    size_t N, M, nwork;
    uint64_t seed;
    uint32_t cycle;
    mxArray *a;
    sl_error err;

    slm_init();
    slm_nargs(fn, nrhs, 5, 5, nlhs, 1);
    /* NaN, Inf and negative weights are reported by the core's check,
     * which names the member */
    w = slm_matrix(fn, prhs[0], 1, "weights", 0, 0,
                   SLM_VECTOR | SLM_ALLOW_NAN | SLM_ALLOW_INF);
    N = mxGetNumberOfElements(prhs[0]);
    if (N > SL_RESAMPLE_MAX)
        slm_fail(fn, "badsize",
                 "argument 1 (weights): at most %lu weights, got %lu",
                 (unsigned long)SL_RESAMPLE_MAX, (unsigned long)N);
    name = slm_string(fn, prhs[1], 2, "scheme");
    scheme = sl_resampler_find(name);
    if (scheme == NULL)
        slm_fail(fn, "badscheme",
                 "argument 2 (scheme): unknown resampling scheme '%s'; expected "
                 "systematic, stratified, residual or multinomial", name);
    mxFree(name);
    {
        double m = slm_integer(fn, prhs[2], 3, "count", 0, 9007199254740992.0);
        if (m < 1 || m > (double)SL_RESAMPLE_MAX)
            slm_fail(fn, "badsize",
                     "argument 3 (count): expected a whole number from 1 to "
                     "%lu, got %.17g", (unsigned long)SL_RESAMPLE_MAX, m);
        M = (size_t)m;
    }
    seed = (uint64_t)slm_integer(fn, prhs[3], 4, "seed", 0, 9007199254740992.0);
    cycle = (uint32_t)slm_integer(fn, prhs[4], 5, "cycle", 0, 4294967295.0);

    a = slm_create(fn, 1, M);
    nwork = sl_resample_workspace(scheme, N, M);
    if (nwork > 0)
        work = slm_alloc(fn, nwork, sizeof *work);
    sl_error_clear(&err);
    /* the uint32 ancestors go to the front of the output's own storage */
    if (sl_resample(scheme, N, w, M, seed, cycle, work,
                    (uint32_t *)(void *)mxGetDoubles(a), &err) != SL_OK) {
        if (strcmp(err.reason, "badweight") == 0 ||
            strcmp(err.reason, "zeroweights") == 0)
            slm_fail(fn, err.reason, "argument 1 (weights): %s", err.message);
        slm_raise(fn, &err);
    }
    if (work != NULL)
        mxFree(work);
    one_based_in_place(mxGetDoubles(a), M);
    plhs[0] = a;
}
