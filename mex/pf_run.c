/* pf_run.c - gateway: sluice.kernel.pf_run(cfg) runs the particle filter.
 * cfg is the struct sluice.filter prepares (see its source); the result is
 * a struct of the recorded arrays. Error identifiers are sluice:filter:*. */
#include <math.h>
#include <string.h>

#include "mexrun.h"
#include "mexutil.h"
#include "sluice/enkf.h"
#include "sluice/integrate.h"
#include "sluice/loglik.h"
#include "sluice/model.h"
#include "sluice/pf.h"
#include "sluice/resample.h"

static const char *FN = "filter";


/* The integrator a config names ("" or absent: the model's default). */
static const sl_integrator *config_integrator(const mxArray *c)
{
    const mxArray *f = slm_field(FN, c, "integrator", 0);
    const sl_integrator *m;
    char *name;
    if (f == NULL || mxGetNumberOfElements(f) == 0)
        return NULL;
    name = slm_string(FN, f, 1, "integrator");
    m = sl_integrator_find(name);
    if (m == NULL)
        slm_fail(FN, "badintegrator",
                 "unknown integrator '%s' (euler, rk4, dopri5 or discrete)", name);
    return m;
}

static void config_tolerance(const mxArray *c, sl_tolerance *tol)
{
    const mxArray *r = slm_field(FN, c, "rtol", 0), *a = slm_field(FN, c, "atol", 0);
    memset(tol, 0, sizeof *tol);
    tol->rtol = r != NULL && mxGetNumberOfElements(r) ? slm_scalar(FN, r, 1, "rtol") : 1e-6;
    tol->atol = a != NULL && mxGetNumberOfElements(a) ? slm_scalar(FN, a, 1, "atol") : 1e-9;
    if (!(tol->rtol >= 0) || !(tol->atol >= 0) || !(tol->rtol + tol->atol > 0))
        slm_fail(FN, "badtolerance", "rtol and atol must be >= 0 and not both zero");
    tol->hmin_rel = 1e-12;
    tol->max_steps = 100000;
}

/* A field as a double matrix (rows x cols, 0 = any), flags as slm_matrix. */
static const double *fmat(const mxArray *c, const char *name, size_t rows,
                          size_t cols, int flags)
{
    const mxArray *f = slm_field(FN, c, name, 1);
    return slm_matrix(FN, f, 1, name, rows, cols, flags);
}

static double fscalar(const mxArray *c, const char *name)
{
    return slm_scalar(FN, slm_field(FN, c, name, 1), 1, name);
}

static size_t fcount(const mxArray *c, const char *name, double lo, double hi)
{
    return (size_t)slm_integer(FN, slm_field(FN, c, name, 1), 1, name, lo, hi);
}

static size_t numel_field(const mxArray *c, const char *name)
{
    return mxGetNumberOfElements(slm_field(FN, c, name, 1));
}

void mexFunction(int nlhs, mxArray *plhs[], int nrhs, const mxArray *prhs[])
{
    static const char *out_names[] = {
        "mean", "quantiles", "ess", "logz", "resampled", "degenerate",
        "skipped", "nonfinite", "inflation", "floored", "forecast_mean", "log_evidence",
        "steps", "X", "P", "w",
        "history_X", "history_P", "history_w", "history_ancestors",
        "smooth_mean", "smooth_quantiles", "distinct", "spread",
        "temper_steps", "loglik_evals", "move_sweeps", "move_accept", "param_move",
        "derived_mean", "derived_quantiles", "nanpred"};
    const mxArray *c;
    sl_model model;
    sl_linear lin;
    slm_handle_model hm;
    slm_handle_obs ho;
    sl_def_model dm;
    sl_events events;
    sl_tolerance tol;
    sl_enkf_config ecfg;
    sl_localization loc;
    int *enoise = NULL, history;
    slm_poll poll;
    sl_pf_config cfg;
    sl_pf_output out;
    sl_error err;
    sl_transform *tr;
    size_t n, p, q, N, T, m, k, v, nq, *first, *var;
    int *fam, *fnoise = NULL;
    double *X, *P, *w, dt;
    const double *lower, *upper, *ofirst, *ovar;
    char *kind, *scheme, *move;
    mxArray *res, *a;
    void *work;
    size_t wbytes;

    slm_init();
    slm_nargs(FN, nrhs, 1, 1, nlhs, 1);
    c = prhs[0];
    if (!mxIsStruct(c) || mxGetNumberOfElements(c) != 1)
        slm_fail(FN, "badclass", "argument 1 (config): expected a scalar struct");
    memset(&cfg, 0, sizeof cfg);
    memset(&out, 0, sizeof out);
    sl_error_clear(&err);

    n = fcount(c, "n_state", 1, 1e9);
    p = fcount(c, "n_param", 0, 1e9);
    q = fcount(c, "n_forcing", 0, 1e9);
    N = fcount(c, "members", 1, (double)SL_RESAMPLE_MAX);
    dt = fscalar(c, "dt");
    if (!(dt > 0))
        slm_fail(FN, "badstep", "the model's time step must be > 0, got %g", dt);

    /* the model */
    kind = slm_string(FN, slm_field(FN, c, "model_kind", 1), 1, "model_kind");
    if (strcmp(kind, "linear") == 0) {
        memset(&lin, 0, sizeof lin);
        lin.n = n;
        lin.q = q;
        lin.A = fmat(c, "A", n, n, 0);
        lin.B = q ? fmat(c, "B", n, q, 0) : NULL;
        lin.c = numel_field(c, "c") ? fmat(c, "c", n, 1, SLM_VECTOR) : NULL;
        lin.L = numel_field(c, "L") ? fmat(c, "L", n, n, 0) : NULL;
        if (p != 0)
            slm_fail(FN, "badmodel", "the linear model has no parameters, got %lu",
                     (unsigned long)p);
        if (sl_linear_model(&model, &lin, dt, &err) != SL_OK)
            slm_raise(FN, &err);
    } else if (strcmp(kind, "handle") == 0) {
        const mxArray *fun = slm_field(FN, c, "fun", 1);
        const sl_integrator *method = config_integrator(c);
        if (!mxIsClass(fun, "function_handle"))
            slm_fail(FN, "badmodel", "the model function must be a function handle");
        config_tolerance(c, &tol);
        slm_handle_model_init(&model, &hm, fun, n, p, q, N, dt, method, &tol);
    } else if (strcmp(kind, "builtin") == 0 || strcmp(kind, "user") == 0) {
        const sl_model_def *def = NULL;
        const sl_integrator *method = config_integrator(c);
        char *name = slm_string(FN, slm_field(FN, c, "model_name", 1), 1, "model_name");
        if (strcmp(kind, "builtin") == 0)
            def = sl_model_def_find(name);
#ifdef SLUICE_USER_MODEL
        else
            def = sluice_user_model();
#endif
        if (def == NULL)
            slm_fail(FN, "badmodel", "no compiled model '%s' in this gateway", name);
        if (def->n_param != p || def->n_forcing != q || (def->n_state && def->n_state != n))
            slm_fail(FN, "badmodel",
                     "model '%s' has %lu states, %lu parameters and %lu forcings; the "
                     "configuration has %lu, %lu and %lu", name,
                     (unsigned long)def->n_state, (unsigned long)def->n_param,
                     (unsigned long)def->n_forcing, (unsigned long)n, (unsigned long)p,
                     (unsigned long)q);
        config_tolerance(c, &tol);
        memset(&events, 0, sizeof events);
        if (def->n_event > 0) {
            const mxArray *et = slm_field(FN, c, "event_time", 0);
            events.nv = def->n_event;
            if (et != NULL && mxGetNumberOfElements(et) > 0) {
                events.count = mxGetNumberOfElements(et);
                events.time = fmat(c, "event_time", 0, 0, SLM_VECTOR);
                events.value = fmat(c, "event_value", def->n_event, events.count, 0);
                if (numel_field(c, "event_noise") > 0) {
                    const double *en = fmat(c, "event_noise", def->n_event, 0, SLM_VECTOR);
                    enoise = (int *)slm_alloc(FN, def->n_event, sizeof(int));
                    for (k = 0; k < def->n_event; k++)
                        enoise[k] = (int)en[k];
                    events.noise = enoise;
                    events.sd = fmat(c, "event_sd", def->n_event, 0, SLM_VECTOR);
                }
            }
        }
        events.seed = (uint64_t)slm_integer(FN, slm_field(FN, c, "seed", 1), 1, "seed", 0,
                                            9007199254740992.0);
        if (sl_def_model_init(&model, &dm, def, n, method, dt, &tol,
                              def->n_event > 0 ? &events : NULL, &err) != SL_OK)
            slm_raise(FN, &err);
    } else {
        slm_fail(FN, "badmodel", "unknown model kind '%s'", kind);
    }
    cfg.model = &model;
    cfg.N = N;

    /* derived observables: a linear operator and Octave functions */
    memset(&ho, 0, sizeof ho);
    v = n + p;
    if (slm_field(FN, c, "op_H", 0) != NULL && numel_field(c, "op_H") > 0) {
        const mxArray *h = slm_field(FN, c, "op_H", 1);
        cfg.n_lin = mxGetM(h);
        cfg.H = fmat(c, "op_H", cfg.n_lin, v, 0);
    }
    if (slm_field(FN, c, "op_funs", 0) != NULL && numel_field(c, "op_funs") > 0) {
        const mxArray *fs = slm_field(FN, c, "op_funs", 1), *rs = slm_field(FN, c, "op_rows", 1);
        const double *rows = fmat(c, "op_rows", mxGetNumberOfElements(fs), 0, SLM_VECTOR);
        size_t nf = 0;
        if (!mxIsCell(fs))
            slm_fail(FN, "badoperator", "op_funs must be a cell of function handles");
        for (k = 0; k < mxGetNumberOfElements(fs); k++) {
            if (!mxIsClass(mxGetCell(fs, k), "function_handle") || !(rows[k] >= 1) ||
                rows[k] != floor(rows[k]) || rows[k] > 1e6)
                slm_fail(FN, "badoperator", "operator %lu: expected a function handle and a "
                         "row count", (unsigned long)(k + 1));
            nf += (size_t)rows[k];
        }
        slm_handle_obs_init(&ho, fs, rs, n, p, nf);
        cfg.n_fun = nf;
        cfg.obs_fn = slm_handle_obs_fn;
        cfg.obs_ctx = &ho;
    }

    /* times and observations */
    cfg.t0 = fscalar(c, "t0");
    cfg.times = fmat(c, "times", 0, 0, SLM_VECTOR);
    T = numel_field(c, "times");
    cfg.T = T;
    ofirst = fmat(c, "obs_first", T + 1, 0, SLM_VECTOR);
    m = (size_t)ofirst[T];
    first = (size_t *)slm_alloc(FN, T + 1, sizeof(size_t));
    for (k = 0; k <= T; k++) {
        if (ofirst[k] < 0 || ofirst[k] != floor(ofirst[k]) || (k > 0 && ofirst[k] < ofirst[k - 1]))
            slm_fail(FN, "badobs", "obs_first must be non-decreasing whole numbers");
        first[k] = (size_t)ofirst[k];
    }
    cfg.obs_first = first;
    var = (size_t *)slm_alloc(FN, m ? m : 1, sizeof(size_t));
    fam = (int *)slm_alloc(FN, m ? m : 1, sizeof(int));
    v = n + p;
    if (m > 0) {
        const mxArray *fc = slm_field(FN, c, "obs_family", 1);
        ovar = fmat(c, "obs_var", m, 0, SLM_VECTOR);
        cfg.y = fmat(c, "obs_value", m, 0, SLM_VECTOR | SLM_ALLOW_NAN);
        cfg.sigma = fmat(c, "obs_sigma", m, 0, SLM_VECTOR | SLM_ALLOW_NAN);
        cfg.aux = fmat(c, "obs_aux", m, 0, SLM_VECTOR | SLM_ALLOW_NAN);
        if (!mxIsCell(fc) || mxGetNumberOfElements(fc) != m)
            slm_fail(FN, "badobs", "obs_family must be a cellstr with one name per observation");
        for (k = 0; k < m; k++) {
            char *name = slm_string(FN, mxGetCell(fc, k), 1, "obs_family");
            fam[k] = sl_family_find(name);
            if (fam[k] < 0)
                slm_fail(FN, "badfamily", "observation %lu: unknown likelihood family '%s'",
                         (unsigned long)(k + 1), name);
            mxFree(name);
            if (ovar[k] < 0 || ovar[k] >= (double)(v + cfg.n_lin + cfg.n_fun) ||
                ovar[k] != floor(ovar[k]))
                slm_fail(FN, "badobs", "observation %lu: bad variable index", (unsigned long)(k + 1));
            var[k] = (size_t)ovar[k];
        }
    }
    cfg.var = var;
    cfg.family = fam;

    /* forcing */
    cfg.forcing.q = q;
    if (q > 0) {
        cfg.forcing.time = fmat(c, "forcing_time", 0, 0, SLM_VECTOR);
        cfg.forcing.nt = numel_field(c, "forcing_time");
        cfg.forcing.value = fmat(c, "forcing_value", cfg.forcing.nt, q, 0);
        cfg.forcing.hold = fscalar(c, "forcing_hold") != 0;
        if (numel_field(c, "forcing_noise") > 0) {
            const double *fn_ = fmat(c, "forcing_noise", q, 0, SLM_VECTOR);
            fnoise = (int *)slm_alloc(FN, q, sizeof(int));
            for (k = 0; k < q; k++)
                fnoise[k] = (int)fn_[k];
            cfg.forcing.noise = fnoise;
            cfg.forcing.sd = fmat(c, "forcing_sd", q, 0, SLM_VECTOR);
            cfg.forcing.phi = fmat(c, "forcing_phi", q, 0, SLM_VECTOR);
        }
    }
    cfg.state_noise = numel_field(c, "state_noise") ? fmat(c, "state_noise", n, 0, SLM_VECTOR) : NULL;

    /* parameters */
    tr = (sl_transform *)slm_alloc(FN, p ? p : 1, sizeof *tr);
    if (p > 0) {
        lower = fmat(c, "lower", p, 0, SLM_VECTOR | SLM_ALLOW_INF);
        upper = fmat(c, "upper", p, 0, SLM_VECTOR | SLM_ALLOW_INF);
        for (k = 0; k < p; k++) {
            if (!(lower[k] < upper[k]) && lower[k] != upper[k])
                slm_fail(FN, "badbounds", "parameter %lu: lower bound above upper", (unsigned long)(k + 1));
            tr[k] = lower[k] == upper[k] ? sl_transform_for_bounds(-HUGE_VAL, HUGE_VAL)
                                         : sl_transform_for_bounds(lower[k], upper[k]);
        }
    }
    cfg.ptrans = tr;
    move = slm_string(FN, slm_field(FN, c, "param_move", 1), 1, "param_move");
    cfg.param_move = strcmp(move, "auto") == 0 ? sl_pf_auto_move(&cfg)
                                               : sl_param_mover_find(move);
    cfg.inner = slm_field(FN, c, "inner", 0) != NULL ? fcount(c, "inner", 0, 1e9) : 0;
    cfg.wenkf = slm_field(FN, c, "wenkf", 0) != NULL && fscalar(c, "wenkf") != 0;
    if (cfg.param_move == NULL)
        slm_fail(FN, "badoption", "unknown parameter move '%s'", move);
    cfg.move.step = p ? fmat(c, "param_step", p, 0, SLM_VECTOR) : NULL;
    cfg.move.lw_delta = fscalar(c, "lw_delta");
    cfg.move.kernel_scale = slm_field(FN, c, "kernel_scale", 0) != NULL
                                ? fscalar(c, "kernel_scale") : 1.0;
    cfg.move.min_ess = slm_field(FN, c, "kernel_min_ess", 0) != NULL
                           ? fscalar(c, "kernel_min_ess") : SL_KERNEL_MIN_ESS;
    cfg.move.rm_scale = slm_field(FN, c, "move_scale", 0) != NULL ? fscalar(c, "move_scale") : 1.0;
    cfg.move.rm_diversity = slm_field(FN, c, "move_diversity", 0) != NULL
                                ? fscalar(c, "move_diversity") : 0.5;
    cfg.move.rm_sweeps = slm_field(FN, c, "move_sweeps", 0) != NULL
                             ? fcount(c, "move_sweeps", 1, 1000) : 10;
    cfg.move.rm_paths = slm_field(FN, c, "move_paths", 0) != NULL ? fscalar(c, "move_paths") : 0.1;
    /* the priors of the parameters, for moves that weigh by them: ids as
     * sluice.kernel.draw takes them, -1 for a parameter without prior
     * (it keeps its default: a point mass there) */
    if (p > 0 && slm_field(FN, c, "prior_dist", 0) != NULL) {
        const double *pd = fmat(c, "prior_dist", p, 0, SLM_VECTOR);
        const double *pa = fmat(c, "prior_a", p, 0, SLM_VECTOR | SLM_ALLOW_INF);
        const double *pb = fmat(c, "prior_b", p, 0, SLM_VECTOR);
        const double *plo = fmat(c, "prior_lo", p, 0, SLM_VECTOR | SLM_ALLOW_INF);
        const double *phi = fmat(c, "prior_hi", p, 0, SLM_VECTOR | SLM_ALLOW_INF);
        sl_prior_entry *pe = (sl_prior_entry *)slm_alloc(FN, p, sizeof *pe);
        for (k = 0; k < p; k++) {
            if (pd[k] != floor(pd[k]) || pd[k] < -1 || pd[k] >= SL_DIST_COUNT)
                slm_fail(FN, "badprior", "prior_dist %lu must be a distribution id or -1",
                         (unsigned long)(k + 1));
            pe[k].dist = pd[k] < 0 ? SL_DIST_FIXED : (int)pd[k];
            /* a point mass is never moved or weighed: its value is moot */
            pe[k].a = pe[k].dist == SL_DIST_FIXED ? 0.0 : pa[k];
            pe[k].b = pb[k];
            pe[k].lo = plo[k];
            pe[k].hi = phi[k];
        }
        cfg.prior = pe;
    }

    scheme = slm_string(FN, slm_field(FN, c, "resample", 1), 1, "resample");
    cfg.resampler = sl_resampler_find(scheme);
    if (cfg.resampler == NULL)
        slm_fail(FN, "badscheme", "unknown resampling scheme '%s'", scheme);
    cfg.threshold = fscalar(c, "threshold");
    /* tempering: off unless the config asks for it (sluice.filter does) */
    cfg.temper.ess = slm_field(FN, c, "temper_ess", 0) != NULL ? fscalar(c, "temper_ess") : 0.0;
    cfg.temper.max_steps = slm_field(FN, c, "temper_max_steps", 0) != NULL
                               ? fcount(c, "temper_max_steps", 1, SL_TEMPER_MAX_STEPS)
                               : 50;
    if (!(cfg.temper.ess >= 0 && cfg.temper.ess <= 1))
        slm_fail(FN, "badoption", "temper_ess must lie in (0, 1] (0: off), got %g",
                 cfg.temper.ess);
    cfg.seed = (uint64_t)slm_integer(FN, slm_field(FN, c, "seed", 1), 1, "seed", 0, 9007199254740992.0);
    cfg.threads = slm_threads(slm_integer(FN, slm_field(FN, c, "threads", 1), 1, "threads", 0, 256));
    cfg.probs = numel_field(c, "probs") ? fmat(c, "probs", 0, 0, SLM_VECTOR) : NULL;
    cfg.nq = numel_field(c, "probs");
    nq = cfg.nq;
    history = (int)slm_integer(FN, slm_field(FN, c, "history", 1), 1, "history", 0, 2);
    if (slm_field(FN, c, "lag", 0) != NULL)
        cfg.lag = (size_t)slm_integer(FN, slm_field(FN, c, "lag", 1), 1, "lag", 0, 4294967295.0);
    cfg.keep_history = history != 0;
    cfg.no_summary = history == 2; /* simulate and propagate read the states only */
    cfg.derived_summary = !cfg.no_summary && cfg.n_lin + cfg.n_fun > 0 &&
                          slm_field(FN, c, "derived_summary", 0) != NULL &&
                          fscalar(c, "derived_summary") != 0;
    slm_poll_init(&poll, (int)slm_integer(FN, slm_field(FN, c, "progress", 1), 1, "progress", 0, 2));
    cfg.poll = slm_poll_fn;
    cfg.poll_ctx = &poll;

    /* ensemble Kalman methods */
    {
        char *method = slm_string(FN, slm_field(FN, c, "method", 1), 1, "method");
        if (strcmp(method, "pf") != 0) {
            const mxArray *g = slm_field(FN, c, "geometry", 0);
            memset(&ecfg, 0, sizeof ecfg);
            ecfg.method = sl_enkf_method_find(method);
            if (ecfg.method < 0)
                slm_fail(FN, "badmethod", "unknown method '%s'", method);
            ecfg.inflation = fscalar(c, "inflation");
            ecfg.rtpp = fscalar(c, "rtpp");
            ecfg.rtps = fscalar(c, "rtps");
            ecfg.eig_floor = 0.0;
            cfg.enkf = &ecfg;
            cfg.adaptive_inflation = fscalar(c, "adaptive_inflation") != 0;
            cfg.inflation_max = fscalar(c, "inflation_max");
            if (g != NULL && mxGetNumberOfElements(g) > 0) {
                char *gname = slm_string(FN, g, 1, "geometry");
                size_t mall = first[T];
                memset(&loc, 0, sizeof loc);
                loc.geometry = sl_geometry_find(gname);
                if (loc.geometry < 0)
                    slm_fail(FN, "badoption", "unknown geometry '%s'", gname);
                loc.dim = loc.geometry >= SL_GEOM_PLANE ? 2 : 1;
                loc.period_or_radius = fscalar(c, "period_or_radius");
                loc.state_pos = fmat(c, "state_pos", v, loc.dim, SLM_ALLOW_NAN);
                loc.obs_pos = mall ? fmat(c, "obs_pos", mall, loc.dim, 0) : NULL;
                loc.obs_c = mall ? fmat(c, "obs_c", mall, 0, SLM_VECTOR) : NULL;
                loc.param_factor = fscalar(c, "param_factor");
                for (k = 0; k < mall; k++)
                    if (!(loc.obs_c[k] > 0))
                        slm_fail(FN, "badlocalization",
                                 "observation %lu: the localisation radius must be > 0",
                                 (unsigned long)(k + 1));
                cfg.loc = &loc;
            }
        }
    }

    /* initial ensemble (copied: the run writes the final one in place) */
    {
        const double *x0 = fmat(c, "X0", n, N, 0);
        a = slm_create(FN, n, N);
        memcpy(mxGetDoubles(a), x0, n * N * sizeof(double));
    }
    X = mxGetDoubles(a);
    {
        mxArray *pa = slm_create(FN, p, N);
        if (p) {
            const double *p0 = fmat(c, "P0", p, N, SLM_ALLOW_INF);
            memcpy(mxGetDoubles(pa), p0, p * N * sizeof(double));
        }
        P = mxGetDoubles(pa);
        if (sl_pf_check(&cfg, &err) != SL_OK)
            slm_raise(FN, &err);
        wbytes = sl_pf_workspace(&cfg);
        work = slm_alloc(FN, wbytes, 1);

        res = mxCreateStructMatrix(1, 1, (int)(sizeof out_names / sizeof *out_names), out_names);
        {
            mxArray *wa = slm_create(FN, 1, N);
            mxArray *mean = slm_create(FN, v, T);
            mwSize dims[3];
            mxArray *quant;
            dims[0] = v;
            dims[1] = nq;
            dims[2] = T;
            quant = mxCreateNumericArray(3, dims, mxDOUBLE_CLASS, mxREAL);
            w = mxGetDoubles(wa);
            out.mean = mxGetDoubles(mean);
            if (cfg.no_summary)
                memset(out.mean, 0, v * T * sizeof(double));
            out.quant = mxGetDoubles(quant);
            mxSetField(res, 0, "mean", mean);
            if (!cfg.no_summary) {
                mxArray *fm = slm_create(FN, v, T);
                out.fmean = mxGetDoubles(fm);
                memset(out.fmean, 0, v * T * sizeof(double));
                mxSetField(res, 0, "forecast_mean", fm);
            }
            mxSetField(res, 0, "quantiles", quant);
            mxSetField(res, 0, "w", wa);
        }
#define ROWFIELD(name, ptr)                                                   \
    do {                                                                      \
        mxArray *f_ = slm_create(FN, 1, T);                                   \
        ptr = mxGetDoubles(f_);                                               \
        memset(ptr, 0, T * sizeof(double));                                   \
        mxSetField(res, 0, name, f_);                                         \
    } while (0)
        ROWFIELD("ess", out.ess);
        ROWFIELD("logz", out.logz);
        ROWFIELD("resampled", out.resampled);
        ROWFIELD("degenerate", out.degenerate);
        ROWFIELD("skipped", out.skipped);
        ROWFIELD("nonfinite", out.nonfinite);
        ROWFIELD("inflation", out.inflation);
        ROWFIELD("floored", out.floored);
        ROWFIELD("temper_steps", out.temper_steps);
        ROWFIELD("loglik_evals", out.loglik_evals);
        ROWFIELD("move_sweeps", out.move_sweeps);
        ROWFIELD("move_accept", out.move_accept);
        ROWFIELD("nanpred", out.nanpred);
#undef ROWFIELD
        {
            mxArray *dv = slm_create(FN, p, T), *sp = slm_create(FN, p, T);
            out.distinct = mxGetDoubles(dv);
            out.pspread = mxGetDoubles(sp);
            if (p * T > 0) {
                memset(out.distinct, 0, p * T * sizeof(double));
                memset(out.pspread, 0, p * T * sizeof(double));
            }
            mxSetField(res, 0, "distinct", dv);
            mxSetField(res, 0, "spread", sp);
        }
        if (cfg.derived_summary) {
            /* the derived quantities' summary, laid out as the states' */
            size_t d = cfg.n_lin + cfg.n_fun;
            mwSize d3[3];
            mxArray *dmn = slm_create(FN, d, T), *dq;
            d3[0] = d; d3[1] = nq; d3[2] = T;
            dq = mxCreateNumericArray(3, d3, mxDOUBLE_CLASS, mxREAL);
            out.dmean = mxGetDoubles(dmn);
            out.dquant = mxGetDoubles(dq);
            mxSetField(res, 0, "derived_mean", dmn);
            mxSetField(res, 0, "derived_quantiles", dq);
        }
        if (cfg.lag > 0) {
            mwSize d3[3];
            mxArray *sm = slm_create(FN, v, T), *sq;
            d3[0] = v; d3[1] = nq; d3[2] = T;
            sq = mxCreateNumericArray(3, d3, mxDOUBLE_CLASS, mxREAL);
            out.smean = mxGetDoubles(sm);
            out.squant = mxGetDoubles(sq);
            mxSetField(res, 0, "smooth_mean", sm);
            mxSetField(res, 0, "smooth_quantiles", sq);
        }
        if (cfg.keep_history) {
            /* history 1: everything; 2: the states only (simulate, propagate) */
            mwSize d3[3];
            mxArray *h;
            size_t bytes;
            if (sl_size_mul(v * N, T, &bytes) || sl_size_mul(bytes, 8, &bytes))
                slm_fail(FN, "nomemory", "the ensemble history is too large");
            d3[0] = n; d3[1] = N; d3[2] = T;
            slm_alloc(FN, bytes + 2 * N * T * 8, 1); /* probe, freed at exit */
            h = mxCreateNumericArray(3, d3, mxDOUBLE_CLASS, mxREAL);
            out.hist_X = mxGetDoubles(h);
            mxSetField(res, 0, "history_X", h);
            if (history == 1) {
                d3[0] = p;
                h = mxCreateNumericArray(3, d3, mxDOUBLE_CLASS, mxREAL);
                out.hist_P = mxGetDoubles(h);
                mxSetField(res, 0, "history_P", h);
                h = mxCreateDoubleMatrix(N, T, mxREAL);
                out.hist_w = mxGetDoubles(h);
                mxSetField(res, 0, "history_w", h);
                h = mxCreateDoubleMatrix(N, T, mxREAL);
                out.hist_a = mxGetDoubles(h);
                mxSetField(res, 0, "history_ancestors", h);
            }
        }

        if (sl_pf_run(&cfg, X, P, w, work, &out, &err) != SL_OK) {
            slm_poll_finish(&poll);
            if (ho.failed && (err.status == SL_EMODEL || err.status == SL_EINTERRUPT))
                slm_handle_obs_raise(FN, &ho);
            if (model.step != NULL && strcmp(kind, "handle") == 0 &&
                (err.status == SL_EMODEL || (err.status == SL_EINTERRUPT && hm.interrupted)))
                slm_handle_model_raise(FN, &hm);
            slm_raise(FN, &err);
        }
        slm_poll_finish(&poll);
        if (out.hist_a != NULL)
            for (k = 0; k < N * T; k++)
                out.hist_a[k] += 1.0; /* 1-based, as Octave indexes */
        mxSetField(res, 0, "X", a);
        mxSetField(res, 0, "P", pa);
    }
    mxSetField(res, 0, "log_evidence", mxCreateDoubleScalar(out.log_evidence));
    mxSetField(res, 0, "steps", mxCreateDoubleScalar((double)out.steps));
    mxSetField(res, 0, "param_move",
               mxCreateString(cfg.inner > 0 ? "smc2" : cfg.param_move->name));
    plhs[0] = res;
}
