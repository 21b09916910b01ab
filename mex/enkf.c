/* enkf.c - gateway: [Xa, floored, skipped, dof] = sluice.kernel.enkf(Xf, HXf,
 * y, R, cfg): one ensemble Kalman analysis. cfg is the struct sluice.enkf
 * prepares. bytes = sluice.kernel.enkf('workspace', method, n, N, m,
 * threads): the workspace the analysis of n rows, N members and m
 * observations (diagonal R) takes, Inf if the size overflows; memory
 * guards ask it before a run. */
#include <math.h>
#include <string.h>

#include "mexutil.h"
#include "sluice/enkf.h"

static const char *FN = "enkf";

static double fnum(const mxArray *c, const char *name)
{
    return slm_scalar(FN, slm_field(FN, c, name, 1), 5, name);
}

void mexFunction(int nlhs, mxArray *plhs[], int nrhs, const mxArray *prhs[])
{
    const double *Xf, *HX, *y, *R;
    const mxArray *c, *g;
    size_t n, N, m, k, bytes;
    int r_full;
    char *method;
    sl_enkf_config cfg;
    sl_localization loc;
    sl_enkf_info info;
    sl_error err;
    void *work;
    double *Xa;

    slm_init();
    if (nrhs > 0 && mxIsChar(prhs[0])) {
        char *what = slm_string(FN, prhs[0], 1, "query");
        if (strcmp(what, "workspace") != 0)
            slm_fail(FN, "badquery", "argument 1: unknown query '%s' (workspace)", what);
        slm_nargs(FN, nrhs, 6, 6, nlhs, 1);
        memset(&cfg, 0, sizeof cfg);
        method = slm_string(FN, prhs[1], 2, "method");
        cfg.method = sl_enkf_method_find(method);
        if (cfg.method < 0)
            slm_fail(FN, "badmethod", "unknown method '%s' (enkf, etkf, ensrf, eakf, letkf)",
                     method);
        n = (size_t)slm_integer(FN, prhs[2], 3, "n", 1, 9007199254740992.0);
        N = (size_t)slm_integer(FN, prhs[3], 4, "N", 2, 9007199254740992.0);
        m = (size_t)slm_integer(FN, prhs[4], 5, "m", 1, 9007199254740992.0);
        cfg.threads = slm_threads(slm_integer(FN, prhs[5], 6, "threads", 0, 256));
        bytes = sl_enkf_workspace(&cfg, n, N, m, 0);
        plhs[0] = mxCreateDoubleScalar(bytes > 0 ? (double)bytes : HUGE_VAL);
        return;
    }
    slm_nargs(FN, nrhs, 5, 5, nlhs, 4);
    Xf = slm_matrix(FN, prhs[0], 1, "Xf", 0, 0, 0);
    n = mxGetM(prhs[0]);
    N = mxGetN(prhs[0]);
    if (N < 2)
        slm_fail(FN, "badsize", "argument 1 (Xf): expected at least 2 members (columns), got %lu",
                 (unsigned long)N);
    HX = slm_matrix(FN, prhs[1], 2, "HXf", 0, N, 0);
    m = mxGetM(prhs[1]);
    y = slm_matrix(FN, prhs[2], 3, "y", m, 0, SLM_VECTOR);
    if (mxGetNumberOfElements(prhs[3]) == m && (mxGetM(prhs[3]) == 1 || mxGetN(prhs[3]) == 1) && m > 1) {
        R = slm_matrix(FN, prhs[3], 4, "R", m, 0, SLM_VECTOR);
        r_full = 0;
    } else {
        R = slm_matrix(FN, prhs[3], 4, "R", m, m, 0);
        r_full = m > 1;
    }
    c = prhs[4];
    if (!mxIsStruct(c) || mxGetNumberOfElements(c) != 1)
        slm_fail(FN, "badclass", "argument 5 (options): expected a scalar struct");
    memset(&cfg, 0, sizeof cfg);
    method = slm_string(FN, slm_field(FN, c, "method", 1), 5, "method");
    cfg.method = sl_enkf_method_find(method);
    if (cfg.method < 0)
        slm_fail(FN, "badmethod", "unknown method '%s' (enkf, etkf, ensrf, eakf, letkf)", method);
    cfg.inflation = fnum(c, "inflation");
    cfg.rtpp = fnum(c, "rtpp");
    cfg.rtps = fnum(c, "rtps");
    cfg.seed = (uint64_t)slm_integer(FN, slm_field(FN, c, "seed", 1), 5, "seed", 0, 9007199254740992.0);
    cfg.cycle = (uint32_t)slm_integer(FN, slm_field(FN, c, "cycle", 1), 5, "cycle", 0, 4294967295.0);
    cfg.threads = slm_threads(slm_integer(FN, slm_field(FN, c, "threads", 1), 5, "threads", 0, 256));
    cfg.eig_floor = fnum(c, "eig_floor");
    g = slm_field(FN, c, "etkf_form", 0);
    if (g != NULL)
        cfg.etkf_form = (int)slm_integer(FN, g, 5, "etkf_form", SL_ETKF_AUTO,
                                         SL_ETKF_OBSERVATION);
    g = slm_field(FN, c, "geometry", 0);
    if (g != NULL && mxGetNumberOfElements(g) > 0) {
        char *gname = slm_string(FN, g, 5, "geometry");
        int gk = sl_geometry_find(gname);
        memset(&loc, 0, sizeof loc);
        if (gk < 0)
            slm_fail(FN, "badlocalization", "unknown geometry '%s'", gname);
        loc.geometry = gk;
        loc.dim = gk >= SL_GEOM_PLANE ? 2 : 1;
        loc.period_or_radius = fnum(c, "period_or_radius");
        loc.state_pos = slm_matrix(FN, slm_field(FN, c, "state_pos", 1), 5, "state_pos", n,
                                   loc.dim, SLM_ALLOW_NAN);
        loc.obs_pos = slm_matrix(FN, slm_field(FN, c, "obs_pos", 1), 5, "obs_pos", m, loc.dim, 0);
        loc.obs_c = slm_matrix(FN, slm_field(FN, c, "obs_c", 1), 5, "obs_c", m, 0, SLM_VECTOR);
        loc.param_factor = fnum(c, "param_factor");
        for (k = 0; k < m; k++)
            if (!(loc.obs_c[k] > 0))
                slm_fail(FN, "badlocalization", "observation %lu: the radius must be > 0",
                         (unsigned long)(k + 1));
        cfg.loc = &loc;
    }
    bytes = sl_enkf_workspace(&cfg, n, N, m, r_full);
    if (bytes == 0)
        slm_fail(FN, "nomemory", "the analysis workspace size overflows");
    work = slm_alloc(FN, bytes, 1);
    plhs[0] = slm_create(FN, n, N);
    Xa = mxGetDoubles(plhs[0]);
    memcpy(Xa, Xf, n * N * sizeof(double));
    sl_error_clear(&err);
    memset(&info, 0, sizeof info);
    if (sl_enkf_analysis(&cfg, n, N, Xa, m, HX, y, R, r_full, work, &info, &err) != SL_OK)
        slm_raise(FN, &err);
    if (nlhs > 1)
        plhs[1] = mxCreateDoubleScalar((double)info.floored);
    if (nlhs > 2)
        plhs[2] = mxCreateDoubleScalar((double)info.local_skipped);
    if (nlhs > 3)
        plhs[3] = mxCreateDoubleScalar(info.innov_dof);
}
