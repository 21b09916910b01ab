/* enkf.c - gateway: [Xa, floored, skipped, dof] = sluice.kernel.enkf(Xf, HXf,
 * y, R, options...): one ensemble Kalman analysis, the options those of
 * sluice.enkf (name/value pairs or one struct), decoded here so that a
 * call inside a user's cycling loop costs no interpreted checks.
 * bytes = sluice.kernel.enkf('workspace', method, n, N, m, threads): the
 * workspace the analysis of n rows, N members and m observations
 * (diagonal R) takes, Inf if the size overflows; memory guards ask it
 * before a run. */
#include <math.h>
#include <string.h>

#include "mexutil.h"
#include "sluice/enkf.h"

static const char *FN = "enkf";

enum {
    O_METHOD, O_INFLATION, O_RTPP, O_RTPS, O_SEED, O_CYCLE, O_THREADS, O_LOCALIZATION,
    O_EIG_FLOOR, O_ETKF_FORM, N_OPTIONS
};
static const char *const OPTION[N_OPTIONS] = {
    "method", "inflation", "rtpp", "rtps", "seed", "cycle", "threads", "localization",
    "eig_floor", "etkf_form"};

/* The options given: each one's value (NULL: the default) and the
 * argument it came in (for messages). */
typedef struct {
    const mxArray *v[N_OPTIONS];
    int pos[N_OPTIONS];
} options;

static int option_index(const char *name)
{
    int k;
    for (k = 0; k < N_OPTIONS; k++)
        if (strcmp(name, OPTION[k]) == 0)
            return k;
    return -1;
}

static int is_name(const mxArray *a)
{
    return mxIsChar(a) && mxGetNumberOfDimensions(a) == 2 && mxGetM(a) == 1;
}

/* The count arguments from first (the 1-based position of args[0]):
 * name/value pairs or one scalar struct; a later value of a name wins.
 * Names are all checked to be strings before any is looked up. */
static void gather_options(int count, const mxArray *const *args, int first, options *o)
{
    int i, k;
    memset(o, 0, sizeof *o);
    if (count == 1 && mxIsStruct(args[0]) && mxGetNumberOfElements(args[0]) == 1) {
        const int nf = mxGetNumberOfFields(args[0]);
        for (i = 0; i < nf; i++) {
            const char *name = mxGetFieldNameByNumber(args[0], i);
            if ((k = option_index(name)) < 0)
                slm_fail(FN, "badoption", "unknown option '%s'", name);
            o->v[k] = mxGetFieldByNumber(args[0], 0, i);
            o->pos[k] = first;
        }
        return;
    }
    if (count % 2 != 0)
        slm_fail(FN, "badoption", "options must be a struct or name, value pairs");
    for (i = 0; i < count; i += 2)
        if (!is_name(args[i]))
            slm_fail(FN, "badoption", "option names must be strings");
    for (i = 0; i < count; i += 2) {
        char *name = slm_string(FN, args[i], first + i, "option name");
        if ((k = option_index(name)) < 0)
            slm_fail(FN, "badoption", "unknown option '%s'", name);
        mxFree(name);
        o->v[k] = args[i + 1];
        o->pos[k] = first + i + 1;
    }
}

/* A real finite double scalar option. */
static double option_number(const options *o, int k, double dflt)
{
    const mxArray *a = o->v[k];
    if (a == NULL)
        return dflt;
    if (!mxIsDouble(a) || mxIsComplex(a) || mxIsSparse(a) || mxGetNumberOfElements(a) != 1 ||
        !isfinite(slm_doubles(a)[0]))
        slm_fail(FN, "badoption", "%s must be a finite real scalar", OPTION[k]);
    return slm_doubles(a)[0];
}

/* The same, a whole number in [lo, hi]. */
static double option_whole(const options *o, int k, double lo, double hi)
{
    double v = option_number(o, k, 0.0);
    if (o->v[k] != NULL)
        v = slm_integer(FN, o->v[k], o->pos[k], OPTION[k], lo, hi);
    return v;
}

/* The option localization into loc for m observations; 0 when it is
 * empty (no localisation). */
static int decode_localization(const options *o, size_t n, size_t m, sl_localization *loc)
{
    const mxArray *L = o->v[O_LOCALIZATION], *g, *per, *sph, *r, *pf;
    const int pos = o->pos[O_LOCALIZATION];
    char *gname;
    double *c;
    size_t k;
    int gk;
    if (L == NULL || mxIsEmpty(L))
        return 0;
    if (!mxIsStruct(L) || mxGetNumberOfElements(L) != 1 || slm_field(FN, L, "state_pos", 0) == NULL ||
        slm_field(FN, L, "obs_pos", 0) == NULL || slm_field(FN, L, "radius", 0) == NULL)
        slm_fail(FN, "badlocalization", "localization needs fields state_pos, obs_pos and radius");
    memset(loc, 0, sizeof *loc);
    gk = SL_GEOM_LINE;
    if ((g = slm_field(FN, L, "geometry", 0)) != NULL) {
        if (!is_name(g) || mxIsEmpty(g))
            slm_fail(FN, "badlocalization", "localization: geometry must be a name");
        gname = slm_string(FN, g, pos, "geometry");
        if ((gk = sl_geometry_find(gname)) < 0)
            slm_fail(FN, "badlocalization", "unknown geometry '%s'", gname);
        mxFree(gname);
    }
    loc->geometry = gk;
    loc->dim = gk >= SL_GEOM_PLANE ? 2 : 1;
    /* a period (ring) or a sphere's radius (sphere: 6371 when 0 or absent) */
    per = slm_field(FN, L, "period", 0);
    sph = slm_field(FN, L, "sphere_radius", 0);
    if (sph != NULL)
        loc->period_or_radius = slm_scalar(FN, sph, pos, "sphere_radius");
    else if (per != NULL)
        loc->period_or_radius = slm_scalar(FN, per, pos, "period");
    if (gk == SL_GEOM_SPHERE && loc->period_or_radius == 0)
        loc->period_or_radius = 6371;
    loc->state_pos = slm_matrix(FN, slm_field(FN, L, "state_pos", 0), pos, "state_pos", n, loc->dim,
                                SLM_ALLOW_NAN);
    loc->obs_pos = slm_matrix(FN, slm_field(FN, L, "obs_pos", 0), pos, "obs_pos", m, loc->dim, 0);
    r = slm_field(FN, L, "radius", 0);
    if (mxGetNumberOfElements(r) == 1 && m > 1) {
        /* one half-width for every observation */
        const double v = slm_scalar(FN, r, pos, "radius");
        c = slm_alloc(FN, m, sizeof *c);
        for (k = 0; k < m; k++)
            c[k] = v;
        loc->obs_c = c;
    } else {
        loc->obs_c = slm_matrix(FN, r, pos, "radius", m, 0, SLM_VECTOR);
    }
    loc->param_factor = 1.0;
    if ((pf = slm_field(FN, L, "param_factor", 0)) != NULL)
        loc->param_factor = slm_scalar(FN, pf, pos, "param_factor");
    for (k = 0; k < m; k++)
        if (!(loc->obs_c[k] > 0))
            slm_fail(FN, "badlocalization", "observation %lu: the radius must be > 0",
                     (unsigned long)(k + 1));
    return 1;
}

/* The options but the localization into cfg, checked in this order: the
 * form, the method, the numbers (the localization follows once the
 * arrays give its sizes). */
static void decode_options(const options *o, sl_enkf_config *cfg)
{
    static const char *const FORMS[] = {"auto", "ensemble", "observation"};
    const mxArray *a;
    char *name;
    int k;
    memset(cfg, 0, sizeof *cfg);
    cfg->etkf_form = SL_ETKF_AUTO;
    if ((a = o->v[O_ETKF_FORM]) != NULL) {
        int found = -1;
        if (is_name(a)) {
            name = slm_string(FN, a, o->pos[O_ETKF_FORM], "etkf_form");
            for (k = 0; k < 3; k++)
                if (strcmp(name, FORMS[k]) == 0)
                    found = k;
            mxFree(name);
        }
        if (found < 0)
            slm_fail(FN, "badoption",
                     "etkf_form must be 'auto', 'ensemble' or 'observation'");
        cfg->etkf_form = found;
    }
    cfg->method = SL_ENKF_ETKF;
    if ((a = o->v[O_METHOD]) != NULL) {
        if (!mxIsChar(a))
            slm_fail(FN, "badmethod", "method must be a name");
        name = slm_string(FN, a, o->pos[O_METHOD], "method");
        cfg->method = sl_enkf_method_find(name);
        if (cfg->method < 0)
            slm_fail(FN, "badmethod", "unknown method '%s' (enkf, etkf, ensrf, eakf, letkf)",
                     name);
        mxFree(name);
    }
    cfg->inflation = option_number(o, O_INFLATION, 1.0);
    cfg->rtpp = option_number(o, O_RTPP, 0.0);
    cfg->rtps = option_number(o, O_RTPS, 0.0);
    (void)option_number(o, O_SEED, 0.0);
    (void)option_number(o, O_CYCLE, 0.0);
    (void)option_number(o, O_THREADS, 0.0);
    cfg->eig_floor = option_number(o, O_EIG_FLOOR, 0.0);
    cfg->seed = (uint64_t)option_whole(o, O_SEED, 0, 9007199254740992.0);
    cfg->cycle = (uint32_t)option_whole(o, O_CYCLE, 0, 4294967295.0);
    cfg->threads = slm_threads(option_whole(o, O_THREADS, 0, 256));
    /* 0 or absent: the cores, when the work gains from them */
    cfg->threads_auto = o->v[O_THREADS] == NULL || slm_doubles(o->v[O_THREADS])[0] == 0;
}

void mexFunction(int nlhs, mxArray *plhs[], int nrhs, const mxArray *prhs[])
{
    const double *Xf, *HX, *y, *R;
    size_t n, N, m, bytes;
    int r_full;
    char *method;
    options opt;
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
    slm_nargs(FN, nrhs, 4, nrhs > 4 ? nrhs : 4, nlhs, 4);
    /* the options first: their errors come before the arrays' */
    gather_options(nrhs - 4, prhs + 4, 5, &opt);
    decode_options(&opt, &cfg);
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
    if (decode_localization(&opt, n, m, &loc))
        cfg.loc = &loc;
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
