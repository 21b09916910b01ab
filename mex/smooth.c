/* smooth.c - gateway: particle smoothers on a filter's history.
 *
 *   s = sluice.kernel.smooth ('genealogy', X, P, w, probs, threads, ancestors)
 *   s = sluice.kernel.smooth ('ffbsi', X, P, w, probs, threads, F, L, M, seed, tries)
 *
 * X: n x N x T particles (NaN / Inf allowed where the weight is zero);
 * P: p x N x T parameters ([] when there are none); w: N x T filter
 * weights; probs: quantile levels (vector, may be empty); threads: whole
 * number, 0 = the default; ancestors: N x T, 1-based whole numbers;
 * F: n x N x (T-1) transition means; L: n x n x (T-1) lower factors of the
 * transition covariances; M: trajectories; seed: 0 .. 2^53; tries:
 * rejection proposals per backward draw (0 = exact sum only).
 * s: struct with mean (n x T), quantiles (n x nq x T), param_mean,
 * param_quantiles, index (K x T, 1-based; K = N or M), distinct (1 x T),
 * trajectories (n x M x T, ffbsi only), evaluations, fallbacks. */
#include "mexrun.h"
#include "mexutil.h"
#include "sluice/smooth.h"

#include <string.h>

static const char *FN = "smooth";

/* A real full double array of exactly d[0] x d[1] x d[2] (trailing
 * dimensions of 1 may be absent); NaN / Inf allowed. */
static const double *array3(const mxArray *a, int pos, const char *name,
                            const size_t d[3])
{
    char got[96];
    const mwSize *ad = mxGetDimensions(a);
    mwSize nd = mxGetNumberOfDimensions(a), k;
    int ok = 1;
    slm_describe(a, got, sizeof got);
    if (!mxIsDouble(a) || mxIsComplex(a) || mxIsSparse(a))
        slm_fail(FN, "badclass",
                 "argument %d (%s): expected a real double %lux%lux%lu array, got %s", pos,
                 name, (unsigned long)d[0], (unsigned long)d[1], (unsigned long)d[2], got);
    for (k = 0; k < nd || k < 3; k++) {
        size_t have = k < nd ? (size_t)ad[k] : 1, want = k < 3 ? d[k] : 1;
        if (have != want)
            ok = 0;
    }
    if (!ok)
        slm_fail(FN, "badsize", "argument %d (%s): expected a %lux%lux%lu array, got %s",
                 pos, name, (unsigned long)d[0], (unsigned long)d[1], (unsigned long)d[2],
                 got);
    return slm_doubles(a);
}

static mxArray *create3(size_t a, size_t b, size_t c)
{
    size_t ab;
    mwSize dims[3];
    mxArray *r;
    if (sl_size_mul(a, b, &ab))
        slm_fail(FN, "nomemory", "a %lux%lux%lu result overflows", (unsigned long)a,
                 (unsigned long)b, (unsigned long)c);
    r = slm_create(FN, ab, c);
    dims[0] = a;
    dims[1] = b;
    dims[2] = c;
    mxSetDimensions(r, dims, 3);
    return r;
}

/* out[0..count-1] = 1 + the uint32 values stored at the front of out.
 * Going down from the top, double i (bytes 8i .. 8i+7) is written after
 * value i (bytes 4i .. 4i+3) is read and never over values j < i; memcpy
 * keeps the two views of the storage apart for the compiler. */
static void one_based_in_place(double *out, size_t count)
{
    const unsigned char *bytes = (const unsigned char *)out;
    size_t i;
    for (i = count; i-- > 0;) {
        uint32_t v;
        memcpy(&v, bytes + 4 * i, sizeof v);
        out[i] = (double)v + 1.0; /* 1-based, as Octave indexes */
    }
}

static const char *out_names[] = {"mean", "quantiles", "param_mean",
                                        "param_quantiles", "index", "distinct",
                                        "trajectories", "evaluations", "fallbacks"};

void mexFunction(int nlhs, mxArray *plhs[], int nrhs, const mxArray *prhs[])
{
    const sl_smoother *type;
    sl_smooth_config cfg;
    sl_smooth_output out;
    sl_error err;
    slm_poll pl;
    char *name;
    size_t n, N, T, p, K, i, bytes, d[3];
    uint32_t *anc = NULL, *index;
    void *work;
    mxArray *res, *mean, *quant, *pmean, *pquant, *idx, *dist, *traj = NULL;
    const mwSize *xd;
    double *id;

    slm_init();
    slm_nargs(FN, nrhs, 1, 11, nlhs, 1);
    name = slm_string(FN, prhs[0], 1, "method");
    type = sl_smoother_find(name);
    if (type == NULL)
        slm_fail(FN, "badmethod", "argument 1 (method): unknown smoother '%s'; expected "
                                  "genealogy or ffbsi", name);
    mxFree(name);
    if (nrhs != (type == &sl_smoother_ffbsi ? 11 : 7))
        slm_fail(FN, "nargin", "'%s' takes %d input arguments, got %d", type->name,
                 type == &sl_smoother_ffbsi ? 11 : 7, nrhs);

    memset(&cfg, 0, sizeof cfg);
    if (!mxIsDouble(prhs[1]) || mxGetNumberOfDimensions(prhs[1]) > 3 ||
        mxGetNumberOfElements(prhs[1]) == 0) {
        char got[96];
        slm_describe(prhs[1], got, sizeof got);
        slm_fail(FN, mxIsDouble(prhs[1]) ? "badsize" : "badclass",
                 "argument 2 (X): expected a real double n x N x T array, got %s", got);
    }
    xd = mxGetDimensions(prhs[1]);
    n = (size_t)xd[0];
    N = (size_t)xd[1];
    T = mxGetNumberOfDimensions(prhs[1]) > 2 ? (size_t)xd[2] : 1;
    d[0] = n; d[1] = N; d[2] = T;
    cfg.X = array3(prhs[1], 2, "X", d);
    if (mxIsDouble(prhs[2]) && mxGetNumberOfElements(prhs[2]) == 0 &&
        mxGetNumberOfDimensions(prhs[2]) == 2) {
        p = 0;
        if (mxIsComplex(prhs[2]) || mxIsSparse(prhs[2]))
            array3(prhs[2], 3, "P", d); /* raises badclass */
    } else {
        p = mxGetM(prhs[2]);
        d[0] = p;
        cfg.P = array3(prhs[2], 3, "P", d);
    }
    cfg.w = slm_matrix(FN, prhs[3], 4, "weights", N, T, SLM_ALLOW_NAN | SLM_ALLOW_INF);
    cfg.probs = slm_matrix(FN, prhs[4], 5, "probs", 0, 0, SLM_VECTOR | SLM_ALLOW_EMPTY);
    cfg.nq = mxGetNumberOfElements(prhs[4]);
    {
        const double thr = slm_integer(FN, prhs[5], 6, "threads", 0, 256);
        cfg.threads = slm_threads(thr);
        cfg.threads_auto = thr == 0; /* 0: all cores when the work pays */
    }
    cfg.n = n;
    cfg.p = p;
    cfg.N = N;
    cfg.T = T;
    if (N > SL_SMOOTH_MAX)
        slm_fail(FN, "badsize", "argument 2 (X): at most %lu particles, got %lu",
                 (unsigned long)SL_SMOOTH_MAX, (unsigned long)N);

    if (type == &sl_smoother_genealogy) {
        const double *a = slm_matrix(FN, prhs[6], 7, "ancestors", N, T, 0);
        size_t NT = N * T;
        anc = slm_alloc(FN, NT, sizeof *anc);
        for (i = 0; i < NT; i++) {
            if (!(a[i] >= 1 && a[i] <= (double)N) || (double)(uint32_t)a[i] != a[i])
                slm_fail(FN, "badancestor",
                         "argument 7 (ancestors): element %lu is %.17g; expected whole numbers "
                         "from 1 to %lu", (unsigned long)(i + 1), a[i], (unsigned long)N);
            anc[i] = (uint32_t)(a[i] - 1);
        }
        cfg.ancestors = anc;
        K = N;
    } else {
        d[0] = n; d[1] = N; d[2] = T - 1;
        cfg.F = array3(prhs[6], 7, "F", d);
        d[0] = n; d[1] = n; d[2] = T - 1;
        cfg.L = array3(prhs[7], 8, "L", d);
        cfg.M = (size_t)slm_integer(FN, prhs[8], 9, "trajectories", 1, (double)SL_SMOOTH_MAX);
        cfg.seed = (uint64_t)slm_integer(FN, prhs[9], 10, "seed", 0, 9007199254740992.0);
        cfg.tries = (unsigned)slm_integer(FN, prhs[10], 11, "tries", 0, 1000);
        K = cfg.M;
    }

    sl_error_clear(&err);
    if (sl_smooth_workspace(type, &cfg, &bytes, &err) != SL_OK)
        slm_raise(FN, &err);
    work = slm_alloc(FN, bytes, 1);
    /* the core's 0-based uint32 indices go to the front of the output's
     * own storage and are widened in place afterwards */
    idx = slm_create(FN, K, T);
    index = (uint32_t *)(void *)mxGetDoubles(idx);
    mean = slm_create(FN, n, T);
    quant = create3(n, cfg.nq, T);
    pmean = slm_create(FN, p, T);
    pquant = create3(p, cfg.nq, T);
    dist = slm_create(FN, 1, T);
    memset(&out, 0, sizeof out);
    out.mean = mxGetDoubles(mean);
    out.quant = mxGetDoubles(quant);
    out.pmean = p > 0 ? mxGetDoubles(pmean) : NULL;
    out.pquant = p > 0 ? mxGetDoubles(pquant) : NULL;
    out.index = index;
    out.distinct = mxGetDoubles(dist);
    if (type == &sl_smoother_ffbsi) {
        traj = create3(n, K, T);
        out.traj = mxGetDoubles(traj);
    }
    slm_poll_init(&pl, 2);
    cfg.poll = slm_poll_fn;
    cfg.poll_ctx = &pl;
    if (sl_smooth_run(type, &cfg, work, &out, &err) != SL_OK) {
        slm_poll_finish(&pl);
        slm_raise(FN, &err);
    }
    slm_poll_finish(&pl);
    id = mxGetDoubles(idx);
    one_based_in_place(id, K * T);
    mxFree(work);
    if (anc != NULL)
        mxFree(anc);

    res = mxCreateStructMatrix(1, 1, (int)(sizeof out_names / sizeof *out_names), out_names);
    mxSetField(res, 0, "mean", mean);
    mxSetField(res, 0, "quantiles", quant);
    mxSetField(res, 0, "param_mean", pmean);
    mxSetField(res, 0, "param_quantiles", pquant);
    mxSetField(res, 0, "index", idx);
    mxSetField(res, 0, "distinct", dist);
    mxSetField(res, 0, "trajectories", traj != NULL ? traj : mxCreateDoubleMatrix(0, 0, mxREAL));
    mxSetField(res, 0, "evaluations", mxCreateDoubleScalar(out.evaluations));
    mxSetField(res, 0, "fallbacks", mxCreateDoubleScalar(out.fallbacks));
    plhs[0] = res;
}
