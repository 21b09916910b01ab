/* pf_run.c - gateway: sluice.kernel.pf_run(cfg) runs the particle filter.
 * cfg is the settings struct sluice.internal.model_config builds and its
 * caller completes (DEVELOPERS.md, "A run's settings"); the result is a
 * struct of the recorded arrays, or with the settings field result the
 * result as sluice.filter returns it. Errors are sluice:<cfg.caller>:<reason>.
 *
 * Each section of the settings has its own decoder, which checks class
 * and size and points the core's configuration at the data; the core
 * checks the values (sl_pf_check). mexFunction only calls them in order. */
#include <limits.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "mexrun.h"
#include "mexutil.h"
#include "sluice/compose.h"
#include "sluice/enkf.h"
#include "sluice/integrate.h"
#include "sluice/loglik.h"
#include "sluice/model.h"
#include "sluice/pf.h"
#include "sluice/prior.h"
#include "sluice/resample.h"

/* The largest index a decoder converts: 2^53, below which every whole
 * double is exact and fits a size_t. */
#define INDEX_MAX 9007199254740992.0

/* Everything the decoders fill, on mexFunction's stack for one call (the
 * core's configuration points into it). */
typedef struct {
    const mxArray *c;   /* the settings struct */
    const char *fn;     /* the caller, for sluice:<fn>:<reason> */
    size_t n, p, q, N, T, v;
    double dt;
    char *kind;         /* model kind */
    int history;        /* 0 none, 1 everything, 2 states only */
    sl_model model;
    sl_linear lin;
    slm_handle_model hm;
    slm_handle_obs ho;
    sl_def_model dm;
    sl_compose *cmp;    /* a composed model (kind "composed") */
    sl_events events;
    sl_tolerance tol;
    sl_enkf_config ecfg;
    sl_localization loc;
    slm_poll poll;
    sl_pf_config cfg;
    /* checkpoints: the file, its temporary name, the fingerprint of the
     * settings, the outputs recorded so far, the snapshot resumed */
    char *ck_file, *ck_tmp;
    uint64_t ck_key;
    mxArray *ck_res;
    sl_pf_snapshot ck_snap;
    /* the layout of sluice.filter's result (settings field result), or
     * NULL: the recorded arrays as they are */
    const mxArray *result;
} run_settings;

/* ------------------------------------------------------- field readers */

static const mxArray *field(const run_settings *s, const char *name)
{
    return slm_field(s->fn, s->c, name, 1);
}

/* A field as a double matrix (rows x cols, 0 = any), flags as slm_matrix. */
static const double *fmat(const run_settings *s, const char *name, size_t rows,
                          size_t cols, int flags)
{
    return slm_matrix(s->fn, field(s, name), 1, name, rows, cols, flags);
}

/* An optional matrix: NULL when the field is empty. */
static const double *fmat_or_null(const run_settings *s, const char *name,
                                  size_t rows, size_t cols, int flags)
{
    return mxGetNumberOfElements(field(s, name)) ? fmat(s, name, rows, cols, flags) : NULL;
}

static double fscalar(const run_settings *s, const char *name)
{
    return slm_scalar(s->fn, field(s, name), 1, name);
}

static double fwhole(const run_settings *s, const char *name, double lo, double hi)
{
    return slm_integer(s->fn, field(s, name), 1, name, lo, hi);
}

static char *fstring(const run_settings *s, const char *name)
{
    return slm_string(s->fn, field(s, name), 1, name);
}

static size_t fnumel(const run_settings *s, const char *name)
{
    return mxGetNumberOfElements(field(s, name));
}

/* A vector of whole-number codes as ints (count entries). */
static int *fcodes(const run_settings *s, const char *name, size_t count)
{
    const double *x = fmat(s, name, count, 0, SLM_VECTOR);
    int *k = (int *)slm_alloc(s->fn, count, sizeof(int));
    size_t i;
    for (i = 0; i < count; i++)
        k[i] = (int)x[i];
    return k;
}

/* ------------------------------------------------------------- the model */

static void decode_sizes(run_settings *s)
{
    s->n = (size_t)fwhole(s, "n_state", 1, 1e9);
    s->p = (size_t)fwhole(s, "n_param", 0, 1e9);
    s->q = (size_t)fwhole(s, "n_forcing", 0, 1e9);
    s->N = (size_t)fwhole(s, "members", 1, (double)SL_RESAMPLE_MAX);
    s->v = s->n + s->p;
    s->dt = fscalar(s, "dt"); /* its value: the model's init and sl_pf_check */
    s->cfg.N = s->N;
    s->cfg.model = &s->model;
}

/* The integrator the settings name ("": the model's default). */
static const sl_integrator *decode_integrator(const run_settings *s)
{
    const sl_integrator *m;
    char *name;
    if (fnumel(s, "integrator") == 0)
        return NULL;
    name = fstring(s, "integrator");
    m = sl_integrator_find(name);
    if (m == NULL)
        slm_fail(s->fn, "badintegrator",
                 "unknown integrator '%s' (euler, rk4, dopri5 or discrete)", name);
    return m;
}

static void decode_tolerance(run_settings *s)
{
    sl_tolerance *tol = &s->tol;
    memset(tol, 0, sizeof *tol);
    tol->rtol = fscalar(s, "rtol");
    tol->atol = fscalar(s, "atol");
    tol->hmin_rel = 1e-12;
    tol->max_steps = 100000;
}

static void decode_linear(run_settings *s)
{
    sl_error err;
    sl_error_clear(&err);
    memset(&s->lin, 0, sizeof s->lin);
    s->lin.n = s->n;
    s->lin.q = s->q;
    s->lin.A = fmat(s, "A", s->n, s->n, 0);
    s->lin.B = s->q ? fmat(s, "B", s->n, s->q, 0) : NULL;
    s->lin.c = fmat_or_null(s, "c", s->n, 1, SLM_VECTOR);
    s->lin.L = fmat_or_null(s, "L", s->n, s->n, 0);
    if (s->p != 0)
        slm_fail(s->fn, "badmodel", "the linear model has no parameters, got %lu",
                 (unsigned long)s->p);
    if (sl_linear_model(&s->model, &s->lin, s->dt, &err) != SL_OK)
        slm_raise(s->fn, &err);
}

static void decode_handle(run_settings *s)
{
    const mxArray *fun = field(s, "fun");
    const sl_integrator *method = decode_integrator(s);
    sl_error err;
    sl_error_clear(&err);
    if (!mxIsClass(fun, "function_handle"))
        slm_fail(s->fn, "badmodel", "the model function must be a function handle");
    decode_tolerance(s);
    /* the core's rule for tolerances (a compiled model's init applies it) */
    if (sl_tolerance_check(&s->tol, &err) != SL_OK)
        slm_raise(s->fn, &err);
    slm_handle_model_init(&s->model, &s->hm, fun, s->n, s->p, s->q, s->N, s->dt,
                          method, &s->tol);
}

/* The events of a compiled model (none: an empty event_time). */
static void decode_events(run_settings *s, const sl_model_def *def)
{
    size_t ne = def->n_event;
    memset(&s->events, 0, sizeof s->events);
    s->events.nv = ne;
    s->events.seed = (uint64_t)fwhole(s, "seed", 0, 9007199254740992.0);
    if (ne == 0 || fnumel(s, "event_time") == 0)
        return;
    s->events.count = fnumel(s, "event_time");
    s->events.time = fmat(s, "event_time", 0, 0, SLM_VECTOR);
    s->events.value = fmat(s, "event_value", ne, s->events.count, 0);
    if (fnumel(s, "event_noise") > 0) {
        s->events.noise = fcodes(s, "event_noise", ne);
        s->events.sd = fmat(s, "event_sd", ne, 0, SLM_VECTOR);
    }
}

/* A model compiled into the core (builtin) or into this gateway (user). */
static void decode_compiled(run_settings *s)
{
    const sl_model_def *def = NULL;
    const sl_integrator *method = decode_integrator(s);
    char *name = fstring(s, "model_name");
    sl_error err;
    sl_error_clear(&err);
    if (strcmp(s->kind, "builtin") == 0)
        def = sl_model_def_find(name);
#ifdef SLUICE_USER_MODEL
    else
        def = sluice_user_model();
#endif
    if (def == NULL)
        slm_fail(s->fn, "badmodel", "no compiled model '%s' in this gateway", name);
    if (def->n_param != s->p || def->n_forcing != s->q || (def->n_state && def->n_state != s->n))
        slm_fail(s->fn, "badmodel",
                 "model '%s' has %lu states, %lu parameters and %lu forcings; the "
                 "configuration has %lu, %lu and %lu", name,
                 (unsigned long)def->n_state, (unsigned long)def->n_param,
                 (unsigned long)def->n_forcing, (unsigned long)s->n, (unsigned long)s->p,
                 (unsigned long)s->q);
    decode_tolerance(s);
    decode_events(s, def);
    if (sl_def_model_init(&s->model, &s->dm, def, s->n, method, s->dt, &s->tol,
                          def->n_event > 0 ? &s->events : NULL, &err) != SL_OK)
        slm_raise(s->fn, &err);
}

/* A component's definition: built into the core, or the user's model
 * compiled into this gateway. */
static const sl_model_def *compiled_def(const run_settings *s, const char *kind,
                                        const char *name)
{
    const sl_model_def *def = NULL;
    if (strcmp(kind, "builtin") == 0)
        def = sl_model_def_find(name);
#ifdef SLUICE_USER_MODEL
    else if (strcmp(kind, "user") == 0)
        def = sluice_user_model();
#endif
    if (def == NULL || strcmp(def->name, name) != 0)
        slm_fail(s->fn, "badmodel", "no compiled model '%s' in this gateway", name);
    return def;
}

/* A composed model (sluice.compose): its components and links, from the
 * settings' field parts; the core checks how they fit (sl_compose_init). */
static void decode_composed(run_settings *s)
{
    const mxArray *pa = field(s, "parts");
    const mxArray *kinds, *names, *integ, *fmaps;
    const double *nst, *dt, *rtol, *atol, *scale, *lk;
    sl_compose *c;
    size_t np, nl, i, l, f;
    sl_error err;
    sl_error_clear(&err);
    if (!mxIsStruct(pa) || mxGetNumberOfElements(pa) != 1)
        slm_fail(s->fn, "badmodel", "a composed model needs the struct of its parts");
    kinds = slm_field(s->fn, pa, "kind", 1);
    names = slm_field(s->fn, pa, "name", 1);
    integ = slm_field(s->fn, pa, "integrator", 1);
    fmaps = slm_field(s->fn, pa, "forcing", 1);
    np = mxGetNumberOfElements(names);
    if (!mxIsCell(kinds) || !mxIsCell(names) || !mxIsCell(integ) || !mxIsCell(fmaps) ||
        np < 1 || np > SL_COMPOSE_PARTS || mxGetNumberOfElements(kinds) != np ||
        mxGetNumberOfElements(integ) != np || mxGetNumberOfElements(fmaps) != np)
        slm_fail(s->fn, "badmodel", "a composed model has 1 to %d components, each with a "
                 "kind, a name, an integrator and a forcing map", SL_COMPOSE_PARTS);
    nst = slm_matrix(s->fn, slm_field(s->fn, pa, "n", 1), 1, "parts.n", np, 0, SLM_VECTOR);
    dt = slm_matrix(s->fn, slm_field(s->fn, pa, "dt", 1), 1, "parts.dt", np, 0, SLM_VECTOR);
    rtol = slm_matrix(s->fn, slm_field(s->fn, pa, "rtol", 1), 1, "parts.rtol", np, 0, SLM_VECTOR);
    atol = slm_matrix(s->fn, slm_field(s->fn, pa, "atol", 1), 1, "parts.atol", np, 0, SLM_VECTOR);
    scale = slm_matrix(s->fn, slm_field(s->fn, pa, "scale", 1), 1, "parts.scale", np, 0,
                       SLM_VECTOR);
    nl = mxGetN(slm_field(s->fn, pa, "links", 1));
    if (nl > SL_COMPOSE_LINKS)
        slm_fail(s->fn, "badmodel", "a composed model has at most %d links", SL_COMPOSE_LINKS);
    lk = nl ? slm_matrix(s->fn, slm_field(s->fn, pa, "links", 1), 1, "parts.links", 8, nl, 0)
            : NULL;
    c = (sl_compose *)slm_alloc(s->fn, 1, sizeof *c);
    memset(c, 0, sizeof *c);
    s->cmp = c;
    c->n_parts = np;
    c->n_links = nl;
    c->n_forcing = s->q;
    for (i = 0; i < np; i++) {
        sl_compose_part *pt = &c->part[i];
        char *kind = slm_string(s->fn, mxGetCell(kinds, i), 1, "parts.kind");
        char *name = slm_string(s->fn, mxGetCell(names, i), 1, "parts.name");
        const mxArray *fm = mxGetCell(fmaps, i);
        size_t *map;
        pt->def = compiled_def(s, kind, name);
        if (mxGetNumberOfElements(mxGetCell(integ, i)) > 0) {
            char *in = slm_string(s->fn, mxGetCell(integ, i), 1, "parts.integrator");
            pt->method = sl_integrator_find(in);
            if (pt->method == NULL)
                slm_fail(s->fn, "badintegrator",
                         "unknown integrator '%s' (euler, rk4, dopri5 or discrete)", in);
        }
        if (!(nst[i] >= 1 && nst[i] <= 1e9) || nst[i] != floor(nst[i]))
            slm_fail(s->fn, "badmodel", "component %lu: its state count must be a whole "
                     "number >= 1", (unsigned long)(i + 1));
        pt->n = (size_t)nst[i];
        pt->dt = dt[i];
        pt->scale = scale[i];
        pt->tol.rtol = rtol[i];
        pt->tol.atol = atol[i];
        pt->tol.hmin_rel = 1e-12;
        pt->tol.max_steps = 100000;
        if (mxGetNumberOfElements(fm) != pt->def->n_forcing)
            slm_fail(s->fn, "badmodel", "component '%s': its forcing map needs %lu entries",
                     name, (unsigned long)pt->def->n_forcing);
        map = (size_t *)slm_alloc(s->fn, pt->def->n_forcing + 1, sizeof(size_t));
        if (pt->def->n_forcing) {
            const double *fv = slm_matrix(s->fn, fm, 1, "parts.forcing",
                                          pt->def->n_forcing, 0, SLM_VECTOR);
            for (f = 0; f < pt->def->n_forcing; f++) {
                if (fv[f] != floor(fv[f]) || !(fv[f] > -(double)SL_COMPOSE_LINKS - 1) ||
                    !(fv[f] < 1e9))
                    slm_fail(s->fn, "badmodel", "component '%s': bad forcing map entry %g",
                             name, fv[f]);
                map[f] = fv[f] < 0 ? SL_COMPOSE_FROM_LINK + (size_t)(-fv[f] - 1)
                                   : (size_t)fv[f];
            }
        }
        pt->forcing = map;
    }
    for (l = 0; l < nl; l++) {
        const double *v = lk + 8 * l;
        sl_compose_link *k = &c->link[l];
        for (f = 0; f < 8; f++)
            if (f != 6 && (!(v[f] >= 0 && v[f] <= 1e9) || v[f] != floor(v[f])))
                slm_fail(s->fn, "badmodel", "link %lu: entry %lu must be a whole number >= 0",
                         (unsigned long)(l + 1), (unsigned long)(f + 1));
        k->from = (size_t)v[0];
        k->from_state = (size_t)v[1];
        k->to = (size_t)v[2];
        k->to_index = (size_t)v[3];
        k->to_event = v[4] != 0;
        k->reduce = (int)v[5];
        k->every = v[6];
        k->rating = v[7] != 0;
    }
    if (sl_compose_init(&s->model, c, &err) != SL_OK)
        slm_raise(s->fn, &err);
    if (s->model.n_state != s->n || s->model.n_param != s->p || s->model.dt != s->dt)
        slm_fail(s->fn, "badmodel",
                 "the composed model has %lu states, %lu parameters and step %g; the "
                 "configuration has %lu, %lu and %g",
                 (unsigned long)s->model.n_state, (unsigned long)s->model.n_param,
                 s->model.dt, (unsigned long)s->n, (unsigned long)s->p, s->dt);
}

static void decode_model(run_settings *s)
{
    s->kind = fstring(s, "model_kind");
    if (strcmp(s->kind, "linear") == 0)
        decode_linear(s);
    else if (strcmp(s->kind, "handle") == 0)
        decode_handle(s);
    else if (strcmp(s->kind, "builtin") == 0 || strcmp(s->kind, "user") == 0)
        decode_compiled(s);
    else if (strcmp(s->kind, "composed") == 0)
        decode_composed(s);
    else
        slm_fail(s->fn, "badmodel", "unknown model kind '%s'", s->kind);
}

/* Derived observables: a linear operator and Octave functions. */
static void decode_operators(run_settings *s)
{
    sl_pf_config *cfg = &s->cfg;
    const mxArray *fs = field(s, "op_funs");
    size_t k, nf = 0;
    const double *rows;
    memset(&s->ho, 0, sizeof s->ho);
    if (fnumel(s, "op_H") > 0) {
        cfg->n_lin = mxGetM(field(s, "op_H"));
        cfg->H = fmat(s, "op_H", cfg->n_lin, s->v, 0);
    }
    if (mxGetNumberOfElements(fs) == 0)
        return;
    rows = fmat(s, "op_rows", mxGetNumberOfElements(fs), 0, SLM_VECTOR);
    if (!mxIsCell(fs))
        slm_fail(s->fn, "badoperator", "op_funs must be a cell of function handles");
    for (k = 0; k < mxGetNumberOfElements(fs); k++) {
        if (!mxIsClass(mxGetCell(fs, k), "function_handle") || !(rows[k] >= 1) ||
            rows[k] != floor(rows[k]) || rows[k] > 1e6)
            slm_fail(s->fn, "badoperator", "operator %lu: expected a function handle and a "
                     "row count", (unsigned long)(k + 1));
        nf += (size_t)rows[k];
    }
    slm_handle_obs_init(&s->ho, s->fn, fs, field(s, "op_rows"), s->n, s->p, nf);
    cfg->n_fun = nf;
    cfg->obs_fn = slm_handle_obs_fn;
    cfg->obs_ctx = &s->ho;
}

/* --------------------------------------------- times and observations */

static void decode_times(run_settings *s)
{
    const double *ofirst;
    size_t *first, k, T;
    s->cfg.t0 = fscalar(s, "t0");
    s->cfg.times = fmat(s, "times", 0, 0, SLM_VECTOR);
    T = s->T = s->cfg.T = fnumel(s, "times");
    ofirst = fmat(s, "obs_first", T + 1, 0, SLM_VECTOR);
    first = (size_t *)slm_alloc(s->fn, T + 1, sizeof(size_t));
    /* whole numbers a size_t holds; their order is sl_pf_check's */
    for (k = 0; k <= T; k++) {
        if (!(ofirst[k] >= 0 && ofirst[k] <= INDEX_MAX) || ofirst[k] != floor(ofirst[k]))
            slm_fail(s->fn, "badobs", "obs_first %lu must be a whole number from 0 to %.17g",
                     (unsigned long)(k + 1), INDEX_MAX);
        first[k] = (size_t)ofirst[k];
    }
    s->cfg.obs_first = first;
}

static void decode_observations(run_settings *s)
{
    sl_pf_config *cfg = &s->cfg;
    size_t m = cfg->obs_first[s->T], k;
    size_t *var = (size_t *)slm_alloc(s->fn, m ? m : 1, sizeof(size_t));
    int *fam = (int *)slm_alloc(s->fn, m ? m : 1, sizeof(int));
    cfg->var = var;
    cfg->family = fam;
    if (m > 0) {
        const mxArray *fc = field(s, "obs_family");
        const double *ovar = fmat(s, "obs_var", m, 0, SLM_VECTOR);
        cfg->y = fmat(s, "obs_value", m, 0, SLM_VECTOR | SLM_ALLOW_NAN);
        cfg->sigma = fmat(s, "obs_sigma", m, 0, SLM_VECTOR | SLM_ALLOW_NAN);
        cfg->aux = fmat(s, "obs_aux", m, 0, SLM_VECTOR | SLM_ALLOW_NAN);
        if (!mxIsCell(fc) || mxGetNumberOfElements(fc) != m)
            slm_fail(s->fn, "badobs", "obs_family must be a cellstr with one name per observation");
        const mxArray *prev = NULL;
        for (k = 0; k < m; k++) {
            const mxArray *c = mxGetCell(fc, k);
            /* a row of the same text as the row before (the usual case:
             * one family for long runs of rows) takes its family without
             * converting the text again */
            if (prev != NULL && c != NULL && mxIsChar(c) && mxGetM(c) == mxGetM(prev) &&
                mxGetN(c) == mxGetN(prev) &&
                memcmp(mxGetChars(c), mxGetChars(prev),
                       mxGetNumberOfElements(c) * sizeof(mxChar)) == 0) {
                fam[k] = fam[k - 1];
            } else {
                char *name = slm_string(s->fn, c, 1, "obs_family");
                fam[k] = sl_family_find(name);
                if (fam[k] < 0)
                    slm_fail(s->fn, "badfamily",
                             "observation %lu: unknown likelihood family '%s'",
                             (unsigned long)(k + 1), name);
                mxFree(name);
                prev = c;
            }
            /* an index a size_t holds; its range is sl_pf_check's */
            if (!(ovar[k] >= 0 && ovar[k] <= INDEX_MAX) || ovar[k] != floor(ovar[k]))
                slm_fail(s->fn, "badobs", "observation %lu: the variable index must be a "
                         "whole number >= 0", (unsigned long)(k + 1));
            var[k] = (size_t)ovar[k];
        }
    }
}

/* ------------------------------------------------------------ forcing */

static void decode_forcing(run_settings *s)
{
    sl_forcing *f = &s->cfg.forcing;
    f->q = s->q;
    if (s->q > 0) {
        f->time = fmat(s, "forcing_time", 0, 0, SLM_VECTOR);
        f->nt = fnumel(s, "forcing_time");
        f->value = fmat(s, "forcing_value", f->nt, s->q, 0);
        f->hold = fscalar(s, "forcing_hold") != 0;
        if (fnumel(s, "forcing_noise") > 0) {
            f->noise = fcodes(s, "forcing_noise", s->q);
            f->sd = fmat(s, "forcing_sd", s->q, 0, SLM_VECTOR);
            f->phi = fmat(s, "forcing_phi", s->q, 0, SLM_VECTOR);
        }
    }
    s->cfg.state_noise = fmat_or_null(s, "state_noise", s->n, 0, SLM_VECTOR);
}

/* ------------------------------------------------ parameters and moves */

/* The transforms of the bounds: the core makes them and checks the
 * bounds (sl_transform_from_bounds, reason badbounds). */
static void decode_bounds(run_settings *s)
{
    size_t p = s->p;
    sl_transform *tr = (sl_transform *)slm_alloc(s->fn, p ? p : 1, sizeof *tr);
    if (p > 0) {
        const double *lower = fmat(s, "lower", p, 0, SLM_VECTOR | SLM_ALLOW_INF);
        const double *upper = fmat(s, "upper", p, 0, SLM_VECTOR | SLM_ALLOW_INF);
        sl_error err;
        sl_error_clear(&err);
        if (sl_transform_from_bounds(p, lower, upper, tr, &err) != SL_OK)
            slm_raise(s->fn, &err);
    }
    s->cfg.ptrans = tr;
}

/* The move and its settings; "auto" asks the core (after the model and
 * the forcing are decoded: its choice depends on them). */
static void decode_moves(run_settings *s)
{
    sl_pf_config *cfg = &s->cfg;
    char *move = fstring(s, "param_move"), *method = fstring(s, "method");
    /* the weakly coupled particle filter (settings with comp) gets the
     * default sl_pf_auto_move gives it, before its settings are decoded */
    const int weak_pf = slm_field(s->fn, s->c, "comp", 0) != NULL &&
                        strcmp(method, "pf") == 0 && fscalar(s, "wenkf") == 0;
    cfg->param_move = strcmp(move, "auto") != 0 ? sl_param_mover_find(move)
                      : weak_pf                 ? &sl_param_move_random_walk
                                                : sl_pf_auto_move(cfg);
    cfg->inner = (size_t)fwhole(s, "inner", 0, 1e9);
    cfg->wenkf = fscalar(s, "wenkf") != 0;
    if (cfg->param_move == NULL)
        slm_fail(s->fn, "badoption", "unknown parameter move '%s'", move);
    cfg->move.step = s->p ? fmat(s, "param_step", s->p, 0, SLM_VECTOR) : NULL;
    cfg->move.lw_delta = fscalar(s, "lw_delta");
    cfg->move.kernel_scale = fscalar(s, "kernel_scale");
    cfg->move.min_ess = SL_KERNEL_MIN_ESS;
    cfg->move.rm_scale = fscalar(s, "move_scale");
    cfg->move.rm_diversity = fscalar(s, "move_diversity");
    cfg->move.rm_sweeps = (size_t)fwhole(s, "move_sweeps", 1, 1000);
    cfg->move.rm_paths = fscalar(s, "move_paths");
}

/* The priors of the parameters, for moves that weigh by them: ids as
 * sluice.kernel.draw takes them, -1 for a parameter without prior (it
 * keeps its default: a point mass there). Absent: no move needs them. */
static void decode_priors(run_settings *s)
{
    size_t p = s->p, k;
    const double *pd, *pa, *pb, *plo, *phi;
    sl_prior_entry *pe;
    if (p == 0 || slm_field(s->fn, s->c, "prior_dist", 0) == NULL)
        return;
    pd = fmat(s, "prior_dist", p, 0, SLM_VECTOR);
    pa = fmat(s, "prior_a", p, 0, SLM_VECTOR | SLM_ALLOW_INF);
    pb = fmat(s, "prior_b", p, 0, SLM_VECTOR);
    plo = fmat(s, "prior_lo", p, 0, SLM_VECTOR | SLM_ALLOW_INF);
    phi = fmat(s, "prior_hi", p, 0, SLM_VECTOR | SLM_ALLOW_INF);
    pe = (sl_prior_entry *)slm_alloc(s->fn, p, sizeof *pe);
    for (k = 0; k < p; k++) {
        /* a whole number an int holds; whether the id is known: sl_pf_check */
        if (pd[k] != floor(pd[k]) || !(pd[k] >= -1 && pd[k] <= INT_MAX))
            slm_fail(s->fn, "badprior", "prior_dist %lu must be a whole number: a "
                     "distribution id or -1", (unsigned long)(k + 1));
        pe[k].dist = pd[k] < 0 ? SL_DIST_FIXED : (int)pd[k];
        /* a point mass is never moved or weighed: its value is moot */
        pe[k].a = pe[k].dist == SL_DIST_FIXED ? 0.0 : pa[k];
        pe[k].b = pb[k];
        pe[k].lo = plo[k];
        pe[k].hi = phi[k];
    }
    s->cfg.prior = pe;
}

/* ----------------------------------- the cycle: resampling, tempering */

static void decode_cycle(run_settings *s)
{
    sl_pf_config *cfg = &s->cfg;
    char *scheme = fstring(s, "resample");
    cfg->resampler = sl_resampler_find(scheme);
    if (cfg->resampler == NULL)
        slm_fail(s->fn, "badscheme", "unknown resampling scheme '%s'", scheme);
    cfg->threshold = fscalar(s, "threshold");
    cfg->temper.ess = fscalar(s, "temper_ess");
    cfg->temper.max_steps = (size_t)fwhole(s, "temper_max_steps", 1, SL_TEMPER_MAX_STEPS);
    cfg->seed = (uint64_t)fwhole(s, "seed", 0, 9007199254740992.0);
    {
        /* 0: every thread OpenMP offers, the run timing its cycles to
         * use one where more would be slower */
        const double thr = fwhole(s, "threads", 0, 256);
        cfg->threads = slm_threads(thr);
        cfg->threads_paced = thr == 0;
    }
}

/* ------------------------------------------- analysis: ensemble Kalman */

static void decode_localization(run_settings *s)
{
    sl_localization *loc = &s->loc;
    size_t mall = s->cfg.obs_first[s->T];
    char *gname;
    if (fnumel(s, "geometry") == 0)
        return;
    gname = fstring(s, "geometry");
    memset(loc, 0, sizeof *loc);
    loc->geometry = sl_geometry_find(gname);
    if (loc->geometry < 0)
        slm_fail(s->fn, "badoption", "unknown geometry '%s'", gname);
    loc->dim = loc->geometry >= SL_GEOM_PLANE ? 2 : 1;
    loc->period_or_radius = fscalar(s, "period_or_radius");
    loc->state_pos = fmat(s, "state_pos", s->v, loc->dim, SLM_ALLOW_NAN);
    loc->obs_pos = mall ? fmat(s, "obs_pos", mall, loc->dim, 0) : NULL;
    loc->obs_c = mall ? fmat(s, "obs_c", mall, 0, SLM_VECTOR) : NULL;
    loc->param_factor = fscalar(s, "param_factor");
    s->cfg.loc = loc; /* its values: sl_localization_check in the analysis */
}

static void decode_analysis(run_settings *s)
{
    sl_enkf_config *e = &s->ecfg;
    char *method = fstring(s, "method");
    if (strcmp(method, "pf") == 0)
        return;
    memset(e, 0, sizeof *e);
    e->method = sl_enkf_method_find(method);
    if (e->method < 0)
        slm_fail(s->fn, "badmethod", "unknown method '%s'", method);
    e->inflation = fscalar(s, "inflation");
    e->rtpp = fscalar(s, "rtpp");
    e->rtps = fscalar(s, "rtps");
    e->eig_floor = 0.0;
    s->cfg.enkf = e;
    s->cfg.adaptive_inflation = fscalar(s, "adaptive_inflation") != 0;
    s->cfg.inflation_max = fscalar(s, "inflation_max");
    decode_localization(s);
}

/* Weak coupling (the settings hold comp only then): the component of
 * every state and parameter row and of every observation row, 0-based. */
static int *decode_components(run_settings *s, const char *name, size_t rows, size_t nc)
{
    int *c = (int *)slm_alloc(s->fn, rows ? rows : 1, sizeof(int));
    const double *x = rows ? fmat(s, name, rows, 0, SLM_VECTOR) : NULL;
    size_t k;
    for (k = 0; k < rows; k++) {
        if (!(x[k] >= 0 && x[k] < (double)nc) || x[k] != floor(x[k]))
            slm_fail(s->fn, "badcoupling", "%s %lu must be a whole number from 0 to %lu",
                     name, (unsigned long)(k + 1), (unsigned long)(nc - 1));
        c[k] = (int)x[k];
    }
    return c;
}

static void decode_coupling(run_settings *s)
{
    sl_pf_config *cfg = &s->cfg;
    if (slm_field(s->fn, s->c, "comp", 0) == NULL)
        return;
    cfg->weak = 1;
    cfg->n_comp = (size_t)fwhole(s, "n_comp", 1, 1e6);
    cfg->comp = decode_components(s, "comp", s->v, cfg->n_comp);
    cfg->obs_comp = decode_components(s, "obs_comp", cfg->obs_first[s->T], cfg->n_comp);
    if (slm_field(s->fn, s->c, "comp_lag", 0) != NULL) {
        /* each component's lag (the core checks them against lag) */
        const double *x = fmat(s, "comp_lag", cfg->n_comp, 1, SLM_VECTOR);
        size_t *L = (size_t *)slm_alloc(s->fn, cfg->n_comp, sizeof(size_t));
        size_t k;
        for (k = 0; k < cfg->n_comp; k++) {
            if (!(x[k] >= 0 && x[k] <= 4294967295.0) || x[k] != floor(x[k]))
                slm_fail(s->fn, "badcoupling", "comp_lag %lu must be a whole number >= 0",
                         (unsigned long)(k + 1));
            L[k] = (size_t)x[k];
        }
        cfg->comp_lag = L;
    }
}

/* ------------------------------------ what is recorded, and smoothing */

static void decode_recording(run_settings *s)
{
    sl_pf_config *cfg = &s->cfg;
    cfg->probs = fmat_or_null(s, "probs", 0, 0, SLM_VECTOR);
    cfg->nq = fnumel(s, "probs");
    s->history = (int)fwhole(s, "history", 0, 2);
    cfg->keep_history = s->history != 0;
    cfg->no_summary = s->history == 2; /* simulate and propagate read the states only */
    cfg->derived_summary = fscalar(s, "derived_summary") != 0 && !cfg->no_summary &&
                           cfg->n_lin + cfg->n_fun > 0;
    cfg->lag = (size_t)fwhole(s, "lag", 0, 4294967295.0);
    if (slm_field(s->fn, s->c, "summary_rows", 0) != NULL) {
        /* the rows summarised, 1-based and increasing (the core checks) */
        size_t k, ns = fnumel(s, "summary_rows");
        const double *x = ns ? fmat(s, "summary_rows", ns, 0, SLM_VECTOR) : NULL;
        size_t *rows = (size_t *)slm_alloc(s->fn, ns ? ns : 1, sizeof(size_t));
        for (k = 0; k < ns; k++) {
            if (!(x[k] >= 1 && x[k] <= (double)s->v) || x[k] != floor(x[k]))
                slm_fail(s->fn, "badoption", "summary row %lu must be a whole number "
                         "from 1 to %lu", (unsigned long)(k + 1), (unsigned long)s->v);
            rows[k] = (size_t)x[k] - 1;
        }
        cfg->summary_rows = rows;
        cfg->n_summary_rows = ns;
    }
    slm_poll_init(&s->poll, (int)fwhole(s, "progress", 0, 2));
    cfg->poll = slm_poll_fn;
    cfg->poll_ctx = &s->poll;
}

/* -------------------------------------------------------- checkpoints */

/* A checkpoint file: a magic text, the format's version, the fingerprint
 * of the run's settings, the threads of the run, the size of the core's
 * header and the header, then every double output recorded so far (in
 * the order of out_names: a count, the values; the weights w among them),
 * the workspace, and the FNV-1a checksum of all that. Written whole to
 * file.tmp<pid> and renamed over the file. */
static const char ck_magic[8] = {'S', 'L', 'F', 'C', 'K', 'P', 'T', '1'};
/* 2: the output smooth_distinct among out_names, the window's
 * ancestor indices in the workspace; 3: the outputs comp_smooth_distinct
 * (per-component lags) and pit */
#define CK_VERSION 3u

/* Settings that do not change what a run computes: not in the fingerprint. */
static int ck_ignored(const char *name)
{
    return strcmp(name, "checkpoint") == 0 || strcmp(name, "checkpoint_every") == 0 ||
           strcmp(name, "progress") == 0 || strcmp(name, "threads") == 0 ||
           strcmp(name, "result") == 0;
}

/* The FNV-1a hash of a value: its class, size and data, struct fields
 * by name, cells element by element. A function handle counts by its
 * class only: the text of the .m layer (checkpoint_key) stands for it. */
static uint64_t ck_hash(uint64_t h, const mxArray *a, int top)
{
    const mwSize *d = mxGetDimensions(a);
    size_t nd = mxGetNumberOfDimensions(a), ne = mxGetNumberOfElements(a), k, e;
    uint64_t u = (uint64_t)mxGetClassID(a);
    h = sl_fnv1a(h, &u, sizeof u);
    for (k = 0; k < nd; k++) {
        u = (uint64_t)d[k];
        h = sl_fnv1a(h, &u, sizeof u);
    }
    if (mxIsStruct(a)) {
        int f, nf = mxGetNumberOfFields(a);
        for (e = 0; e < ne; e++)
            for (f = 0; f < nf; f++) {
                const char *name = mxGetFieldNameByNumber(a, f);
                const mxArray *v = mxGetFieldByNumber(a, (mwIndex)e, f);
                if (top && ck_ignored(name))
                    continue;
                h = sl_fnv1a(h, name, strlen(name) + 1);
                if (v != NULL)
                    h = ck_hash(h, v, 0);
            }
    } else if (mxIsCell(a)) {
        for (e = 0; e < ne; e++) {
            const mxArray *v = mxGetCell(a, (mwIndex)e);
            if (v != NULL)
                h = ck_hash(h, v, 0);
        }
    } else if ((mxIsNumeric(a) || mxIsChar(a) || mxIsLogical(a)) && ne > 0) {
        h = sl_fnv1a(h, mxGetData(a), ne * mxGetElementSize(a));
    }
    return h;
}

/* The double outputs a checkpoint holds, in order: field k of res, or
 * NULL when the run does not record it. */
static mxArray *ck_output(const mxArray *res, int k)
{
    mxArray *a = mxGetFieldByNumber(res, 0, k);
    return a != NULL && mxIsDouble(a) ? a : NULL;
}

static int ck_put(FILE *f, uint64_t *h, const void *p, size_t n)
{
    *h = sl_fnv1a(*h, p, n);
    return n == 0 || fwrite(p, 1, n, f) == n;
}

static int ck_get(FILE *f, uint64_t *h, void *p, size_t n)
{
    if (n > 0 && fread(p, 1, n, f) != n)
        return 0;
    *h = sl_fnv1a(*h, p, n);
    return 1;
}

/* The core's checkpoint callback: the snapshot and the outputs so far,
 * written whole to the temporary file, synced, renamed over the file. */
static sl_status ck_write(void *ctx, const sl_pf_snapshot *sn, sl_error *err)
{
    run_settings *s = (run_settings *)ctx;
    FILE *f = fopen(s->ck_tmp, "wb");
    uint64_t h = SL_FNV_START, u;
    int ok, k, nf;
    if (f == NULL)
        return sl_fail(err, SL_EINVAL, "badcheckpoint", "checkpoint %s: cannot be written",
                       s->ck_file);
    ok = ck_put(f, &h, ck_magic, sizeof ck_magic);
    u = CK_VERSION;
    ok = ok && ck_put(f, &h, &u, sizeof u);
    ok = ok && ck_put(f, &h, &s->ck_key, sizeof s->ck_key);
    u = (uint64_t)s->cfg.threads;
    ok = ok && ck_put(f, &h, &u, sizeof u);
    u = sizeof sn->head;
    ok = ok && ck_put(f, &h, &u, sizeof u);
    ok = ok && ck_put(f, &h, &sn->head, sizeof sn->head);
    nf = mxGetNumberOfFields(s->ck_res);
    for (k = 0; k < nf && ok; k++) {
        mxArray *a = ck_output(s->ck_res, k);
        u = a != NULL ? (uint64_t)mxGetNumberOfElements(a) : 0;
        ok = ck_put(f, &h, &u, sizeof u) && (u == 0 || ck_put(f, &h, mxGetDoubles(a), u * 8));
    }
    ok = ok && ck_put(f, &h, sn->work, (size_t)sn->head.work_bytes);
    u = h;
    ok = ok && fwrite(&u, 1, sizeof u, f) == sizeof u;
    ok = slm_file_sync(f) == 0 && ok;
    ok = fclose(f) == 0 && ok;
    if (!ok || slm_file_replace(s->ck_tmp, s->ck_file) != 0) {
        remove(s->ck_tmp);
        return sl_fail(err, SL_EINVAL, "badcheckpoint",
                       "checkpoint %s: cannot be written (disk full?)", s->ck_file);
    }
    return SL_OK;
}

/* Read the checkpoint into the outputs and the workspace and set the run
 * to resume from it; refuse a file that is not whole, of another format,
 * or of a run with other settings. */
static void ck_read(run_settings *s, FILE *f)
{
    const char *fn = s->fn, *file = s->ck_file;
    sl_pf_snapshot *sn = &s->ck_snap;
    uint64_t h = SL_FNV_START, u, sum;
    char magic[sizeof ck_magic];
    sl_error err;
    int k, nf, ok;
    sl_error_clear(&err);
#define CK_BAD(...)                                          \
    do {                                                     \
        fclose(f);                                           \
        slm_fail(fn, "badcheckpoint", __VA_ARGS__);          \
    } while (0)
    if (!ck_get(f, &h, magic, sizeof magic) || memcmp(magic, ck_magic, sizeof magic) != 0)
        CK_BAD("checkpoint %s: not a sluice.filter checkpoint; give another file", file);
    if (!ck_get(f, &h, &u, sizeof u) || u != CK_VERSION)
        CK_BAD("checkpoint %s: written in another format (version %lu; this build "
               "reads %u); delete it to start again", file, (unsigned long)u, CK_VERSION);
    if (!ck_get(f, &h, &u, sizeof u) || u != s->ck_key)
        CK_BAD("checkpoint %s: written by a run with other settings (model, "
               "observations or options); give another file, or delete it to start "
               "again", file);
    if (!ck_get(f, &h, &u, sizeof u) || u != (uint64_t)s->cfg.threads)
        CK_BAD("checkpoint %s: written by a run with %lu threads; resume it with "
               "'threads', %lu", file, (unsigned long)u, (unsigned long)u);
    if (!ck_get(f, &h, &u, sizeof u) || u != sizeof sn->head ||
        !ck_get(f, &h, &sn->head, sizeof sn->head))
        CK_BAD("checkpoint %s: damaged (its header)", file);
    /* the run starts before it restores: the snapshot needs its own
     * memory (the sizes are checked first) */
    sn->w = (double *)s;
    sn->work = s;
    if (sl_pf_snapshot_check(&s->cfg, sn, &err) != SL_OK)
        CK_BAD("checkpoint %s: %s", file, err.message);
    sn->work = slm_alloc(fn, (size_t)sn->head.work_bytes, 1);
    sn->w = (double *)slm_alloc(fn, s->N, sizeof(double));
    nf = mxGetNumberOfFields(s->ck_res);
    for (k = 0, ok = 1; k < nf && ok; k++) {
        mxArray *a = ck_output(s->ck_res, k);
        ok = ck_get(f, &h, &u, sizeof u) &&
             u == (a != NULL ? (uint64_t)mxGetNumberOfElements(a) : 0) &&
             (u == 0 || ck_get(f, &h, mxGetDoubles(a), (size_t)u * 8));
    }
    ok = ok && ck_get(f, &h, sn->work, (size_t)sn->head.work_bytes);
    if (!ok || fread(&sum, 1, sizeof sum, f) != sizeof sum || sum != h ||
        fread(&u, 1, 1, f) != 0)
        CK_BAD("checkpoint %s: damaged (its outputs or workspace do not match its "
               "checksum); delete it to start again", file);
#undef CK_BAD
    fclose(f);
    memcpy(sn->w, mxGetDoubles(mxGetField(s->ck_res, 0, "w")), s->N * sizeof(double));
    s->cfg.resume = sn;
}

/* The checkpoint settings; the fingerprint of all the others. Refuses
 * up front a file that could not be written. */
static void decode_checkpoint(run_settings *s)
{
    size_t len;
    FILE *f;
    if (fnumel(s, "checkpoint") == 0)
        return;
    (void)field(s, "checkpoint_key"); /* required: the fingerprint needs it */
    s->ck_file = fstring(s, "checkpoint");
    s->cfg.checkpoint_every = (size_t)fwhole(s, "checkpoint_every", 1, 1e15);
    len = strlen(s->ck_file) + 32;
    s->ck_tmp = (char *)slm_alloc(s->fn, len, 1);
    snprintf(s->ck_tmp, len, "%s.tmp%ld", s->ck_file, slm_pid());
    f = fopen(s->ck_tmp, "wb");
    if (f == NULL)
        slm_fail(s->fn, "badcheckpoint", "checkpoint %s: cannot be written there", s->ck_file);
    fclose(f);
    remove(s->ck_tmp);
    s->ck_key = ck_hash(SL_FNV_START, s->c, 1);
    s->cfg.checkpoint = ck_write;
    s->cfg.checkpoint_ctx = s;
}

/* ------------------------------------------------------------ outputs */

/* A new v x nq x T array (the layout of the quantiles). */
static mxArray *cube(size_t rows, size_t mid, size_t T)
{
    mwSize d[3];
    d[0] = rows;
    d[1] = mid;
    d[2] = T;
    return mxCreateNumericArray(3, d, mxDOUBLE_CLASS, mxREAL);
}

/* A zeroed rows x cols result set as field `name`; its data. */
static double *zeroed(const run_settings *s, mxArray *res, const char *name,
                      size_t rows, size_t cols)
{
    mxArray *a = slm_create(s->fn, rows, cols);
    double *x = mxGetDoubles(a);
    if (rows * cols > 0)
        memset(x, 0, rows * cols * sizeof(double));
    mxSetField(res, 0, name, a);
    return x;
}

/* The summaries every run records. */
static void create_summaries(const run_settings *s, mxArray *res, sl_pf_output *out)
{
    size_t v = s->v, T = s->T, p = s->p;
    mxArray *mean = slm_create(s->fn, v, T), *quant = cube(v, s->cfg.nq, T);
    out->mean = mxGetDoubles(mean);
    if (s->cfg.no_summary)
        memset(out->mean, 0, v * T * sizeof(double));
    out->quant = mxGetDoubles(quant);
    mxSetField(res, 0, "mean", mean);
    if (!s->cfg.no_summary)
        out->fmean = zeroed(s, res, "forecast_mean", v, T);
    mxSetField(res, 0, "quantiles", quant);
    out->ess = zeroed(s, res, "ess", 1, T);
    out->logz = zeroed(s, res, "logz", 1, T);
    out->resampled = zeroed(s, res, "resampled", 1, T);
    out->degenerate = zeroed(s, res, "degenerate", 1, T);
    out->skipped = zeroed(s, res, "skipped", 1, T);
    out->nonfinite = zeroed(s, res, "nonfinite", 1, T);
    out->inflation = zeroed(s, res, "inflation", 1, T);
    out->floored = zeroed(s, res, "floored", 1, T);
    out->temper_steps = zeroed(s, res, "temper_steps", 1, T);
    out->loglik_evals = zeroed(s, res, "loglik_evals", 1, T);
    out->move_sweeps = zeroed(s, res, "move_sweeps", 1, T);
    out->move_accept = zeroed(s, res, "move_accept", 1, T);
    out->nanpred = zeroed(s, res, "nanpred", 1, T);
    out->distinct = zeroed(s, res, "distinct", p, T);
    out->pspread = zeroed(s, res, "spread", p, T);
    {
        /* the forecast PIT of every observation row: NaN where the
         * run's analysis does not write it */
        size_t k, m = s->cfg.obs_first[T];
        out->pit = zeroed(s, res, "pit", m, 1);
        for (k = 0; k < m; k++)
            out->pit[k] = (double)NAN;
    }
}

/* The summaries a run records on request: derived quantities, smoothing. */
static void create_optional(const run_settings *s, mxArray *res, sl_pf_output *out)
{
    size_t T = s->T, nq = s->cfg.nq;
    if (s->cfg.derived_summary) {
        /* the derived quantities' summary, laid out as the states' */
        size_t d = s->cfg.n_lin + s->cfg.n_fun;
        mxArray *dmn = slm_create(s->fn, d, T), *dq = cube(d, nq, T);
        out->dmean = mxGetDoubles(dmn);
        out->dquant = mxGetDoubles(dq);
        mxSetField(res, 0, "derived_mean", dmn);
        mxSetField(res, 0, "derived_quantiles", dq);
    }
    if (s->cfg.weak) {
        out->comp_ess = zeroed(s, res, "comp_ess", s->cfg.n_comp, T);
        out->comp_logz = zeroed(s, res, "comp_logz", s->cfg.n_comp, T);
    }
    if (s->cfg.lag > 0) {
        mxArray *sm = slm_create(s->fn, s->v, T), *sq = cube(s->v, nq, T);
        out->smean = mxGetDoubles(sm);
        out->squant = mxGetDoubles(sq);
        mxSetField(res, 0, "smooth_mean", sm);
        mxSetField(res, 0, "smooth_quantiles", sq);
        out->sanc = zeroed(s, res, "smooth_distinct", 1, T);
        if (s->cfg.weak)
            out->comp_sanc = zeroed(s, res, "comp_smooth_distinct", s->cfg.n_comp, T);
    }
}

/* history 1: everything; 2: the states only (simulate, propagate). */
static void create_history(const run_settings *s, mxArray *res, sl_pf_output *out)
{
    size_t N = s->N, T = s->T, bytes;
    mxArray *h;
    if (!s->cfg.keep_history)
        return;
    if (sl_size_mul(s->v * N, T, &bytes) || sl_size_mul(bytes, 8, &bytes))
        slm_fail(s->fn, "nomemory", "the ensemble history is too large");
    /* a probe, so that a size the machine refuses is sluice's error (the
     * run's memory check has passed; it is given back at once) */
    mxFree(slm_alloc(s->fn, bytes + 2 * N * T * 8, 1));
    h = cube(s->n, N, T);
    out->hist_X = mxGetDoubles(h);
    mxSetField(res, 0, "history_X", h);
    if (s->history != 1)
        return;
    h = cube(s->p, N, T);
    out->hist_P = mxGetDoubles(h);
    mxSetField(res, 0, "history_P", h);
    h = mxCreateDoubleMatrix(N, T, mxREAL);
    out->hist_w = mxGetDoubles(h);
    mxSetField(res, 0, "history_w", h);
    h = mxCreateDoubleMatrix(N, T, mxREAL);
    out->hist_a = mxGetDoubles(h);
    mxSetField(res, 0, "history_ancestors", h);
}

/* A copy of the initial ensemble field `name` (rows x N; the run writes
 * the final one in place). */
static mxArray *initial(const run_settings *s, const char *name, size_t rows, int flags)
{
    mxArray *a = slm_create(s->fn, rows, s->N);
    if (rows) {
        const double *x0 = fmat(s, name, rows, s->N, flags);
        memcpy(mxGetDoubles(a), x0, rows * s->N * sizeof(double));
    }
    return a;
}

/* ------------------------------------------------- sluice.filter's result */

/* The settings field result, when present, asks for the result as
 * sluice.filter returns it instead of the recorded arrays: a struct of
 * head (the fields the settings alone decide, in the result's order; its
 * seed is the run's), derived_names (the derived quantities' names) and
 * lag (the option lag as given). The gateway only lays it out: arrays
 * move from the recorded ones, or have their rows copied; the fields
 * skipped_total and options come empty (sluice.filter fills them). */
static void decode_result(run_settings *s)
{
    const mxArray *r = slm_field(s->fn, s->c, "result", 0);
    if (r == NULL)
        return;
    if (!mxIsStruct(r) || mxGetNumberOfElements(r) != 1 ||
        !mxIsStruct(slm_field(s->fn, r, "head", 1)) ||
        mxGetNumberOfElements(slm_field(s->fn, r, "head", 1)) != 1 ||
        !mxIsDouble(slm_field(s->fn, r, "lag", 1)) ||
        slm_field(s->fn, r, "derived_names", 1) == NULL)
        slm_fail(s->fn, "badsettings", "result: expected a struct of head, derived_names and lag");
    s->result = r;
}

/* Field `name` of the recorded arrays, taken out of them (an empty
 * double when the run did not record it). */
static mxArray *take(mxArray *raw, const char *name)
{
    mxArray *a = mxGetField(raw, 0, name);
    if (a == NULL)
        return mxCreateDoubleMatrix(0, 0, mxREAL);
    mxSetField(raw, 0, name, NULL);
    return a;
}

/* Rows r0 .. r1-1 of the recorded array `name` (rows x the rest, of any
 * number of dimensions), copied to an array of the same other dims. */
static mxArray *rows_of(const run_settings *s, const mxArray *raw, const char *name,
                        size_t r0, size_t r1)
{
    const mxArray *a = mxGetField(raw, 0, name);
    mwSize d[8];
    size_t nd, k, rows, cols, m = r1 - r0;
    const double *x;
    double *y;
    mxArray *b;
    if (a == NULL || mxGetNumberOfDimensions(a) > 8)
        slm_fail(s->fn, "badsettings", "the run did not record %s", name);
    nd = mxGetNumberOfDimensions(a);
    memcpy(d, mxGetDimensions(a), nd * sizeof *d);
    rows = d[0];
    cols = rows ? mxGetNumberOfElements(a) / rows : 0;
    d[0] = m;
    b = mxCreateNumericArray(nd, d, mxDOUBLE_CLASS, mxREAL);
    x = mxGetDoubles(a);
    y = mxGetDoubles(b);
    for (k = 0; k < cols && m > 0; k++)
        memcpy(y + k * m, x + k * rows + r0, m * sizeof(double));
    return b;
}

/* A recorded 0/1 series as logicals. */
static mxArray *as_logical(mxArray *raw, const char *name)
{
    mxArray *a = take(raw, name), *b;
    const double *x = mxGetDoubles(a);
    mxLogical *l;
    size_t k, ne = mxGetNumberOfElements(a);
    b = mxCreateLogicalArray(mxGetNumberOfDimensions(a), mxGetDimensions(a));
    l = mxGetLogicals(b);
    for (k = 0; k < ne; k++)
        l[k] = x[k] != 0.0;
    mxDestroyArray(a);
    return b;
}

/* A 1 x 1 struct of nf fields. */
static mxArray *record(int nf, const char **names, mxArray **values)
{
    mxArray *st = mxCreateStructMatrix(1, 1, nf, names);
    int k;
    for (k = 0; k < nf; k++)
        mxSetFieldByNumber(st, 0, k, values[k]);
    return st;
}

/* A states-and-parameters pair of a summary: {states, params} of the
 * recorded mean and quantiles (mean_name, quant_name). */
static void split_summary(const run_settings *s, const mxArray *raw, const char *mean_name,
                          const char *quant_name, mxArray *st[2], mxArray *pa[2])
{
    st[0] = rows_of(s, raw, mean_name, 0, s->n);
    st[1] = rows_of(s, raw, quant_name, 0, s->n);
    pa[0] = rows_of(s, raw, mean_name, s->n, s->v);
    pa[1] = rows_of(s, raw, quant_name, s->n, s->v);
}

#define RESULT_MAX 64

/* sluice.filter's result from the recorded arrays raw (destroyed). */
static mxArray *filter_result(const run_settings *s, mxArray *raw)
{
    static const char *mq[] = {"mean", "quantiles"};
    static const char *pq[] = {"mean", "quantiles", "distinct", "spread"};
    static const char *fc[] = {"mean", "params"};
    static const char *dv[] = {"names", "mean", "quantiles"};
    static const char *fin[] = {"X", "P", "w"};
    static const char *sm[] = {"method", "lag", "states", "params", "distinct"};
    static const char *hi[] = {"X", "P", "w", "ancestors"};
    const mxArray *head = mxGetField(s->result, 0, "head");
    const mxArray *lag = mxGetField(s->result, 0, "lag");
    const char *names[RESULT_MAX];
    mxArray *vals[RESULT_MAX], *st[2], *pa[4], *v[5], *res;
    char *method = fstring(s, "method");
    const int pf = strcmp(method, "pf") == 0, wenkf = fscalar(s, "wenkf") != 0;
    int k, nf = 0, nh = mxGetNumberOfFields(head), smoothed = 0;
    size_t j;
    const double *lv = mxGetDoubles(lag);
    for (j = 0; j < mxGetNumberOfElements(lag); j++)
        smoothed = smoothed || lv[j] > 0;
    if (nh > RESULT_MAX - 32)
        slm_fail(s->fn, "badsettings", "result.head: too many fields");
#define PUT(name, value)       \
    do {                       \
        names[nf] = (name);    \
        vals[nf++] = (value);  \
    } while (0)
    for (k = 0; k < nh; k++) {
        const char *name = mxGetFieldNameByNumber(head, k);
        PUT(name, mxDuplicateArray(strcmp(name, "seed") == 0 ? field(s, "seed")
                                                              : mxGetFieldByNumber(head, 0, k)));
    }
    split_summary(s, raw, "mean", "quantiles", st, pa);
    PUT("states", record(2, mq, st));
    pa[2] = take(raw, "distinct");
    pa[3] = take(raw, "spread");
    PUT("params", record(4, pq, pa));
    v[0] = rows_of(s, raw, "forecast_mean", 0, s->n);
    v[1] = rows_of(s, raw, "forecast_mean", s->n, s->v);
    PUT("forecast", record(2, fc, v));
    if (fscalar(s, "derived_summary") != 0) {
        v[0] = mxDuplicateArray(mxGetField(s->result, 0, "derived_names"));
        v[1] = take(raw, "derived_mean");
        v[2] = take(raw, "derived_quantiles");
        PUT("derived", record(3, dv, v));
    }
    PUT("ess", take(raw, "ess"));
    PUT("resampled", as_logical(raw, "resampled"));
    PUT("degenerate", as_logical(raw, "degenerate"));
    PUT("log_evidence", take(raw, "log_evidence"));
    PUT("log_evidence_steps", take(raw, "logz"));
    PUT("skipped", take(raw, "skipped"));
    PUT("skipped_total", mxCreateDoubleMatrix(0, 0, mxREAL));
    PUT("nonfinite", take(raw, "nonfinite"));
    PUT("model_steps", take(raw, "steps"));
    PUT("ranks", take(raw, "ranks"));
    if (pf) {
        PUT("temper_steps", take(raw, "temper_steps"));
        PUT("loglik_evals", take(raw, "loglik_evals"));
        PUT("param_move", take(raw, "param_move"));
        PUT("move_sweeps", take(raw, "move_sweeps"));
        PUT("move_accept", take(raw, "move_accept"));
    }
    if (pf && !wenkf)
        PUT("nanpredicted", take(raw, "nanpred"));
    PUT("pit", take(raw, "pit"));
    if (!pf) {
        PUT("inflation", take(raw, "inflation"));
        PUT("floored", take(raw, "floored"));
    }
    v[0] = take(raw, "X");
    v[1] = take(raw, "P");
    v[2] = take(raw, "w");
    PUT("final", record(3, fin, v));
    if (smoothed) {
        split_summary(s, raw, "smooth_mean", "smooth_quantiles", st, pa);
        v[0] = mxCreateString(pf ? "fixed_lag" : "enks");
        v[1] = mxDuplicateArray(lag);
        v[2] = record(2, mq, st);
        v[3] = record(2, mq, pa);
        v[4] = take(raw, "smooth_distinct");
        PUT("smoothed", record(5, sm, v));
    }
    if (s->history == 1) {
        v[0] = take(raw, "history_X");
        v[1] = take(raw, "history_P");
        v[2] = take(raw, "history_w");
        v[3] = take(raw, "history_ancestors");
        PUT("history", record(4, hi, v));
    }
    PUT("options", mxCreateDoubleMatrix(0, 0, mxREAL));
#undef PUT
    res = record(nf, names, vals);
    mxDestroyArray(raw);
    mxFree(method);
    return res;
}

/* Rows of the initial ensemble a plan fills from its prior entries:
 * plan.<rows_name> (1-based rows of a rows x N array) paired with
 * plan.<entries_name> (1-based entries of the k drawn). */
static void scatter_draws(const run_settings *s, const mxArray *plan, const char *rows_name,
                          const char *entries_name, size_t rows, size_t k, const double *D,
                          double *X)
{
    const mxArray *ra = slm_field(s->fn, plan, rows_name, 1);
    size_t m = mxGetNumberOfElements(ra), i, j;
    const double *r = m ? slm_matrix(s->fn, ra, 1, rows_name, 0, 0, SLM_VECTOR) : NULL;
    const double *e = m ? slm_matrix(s->fn, slm_field(s->fn, plan, entries_name, 1), 1,
                                     entries_name, m, 0, SLM_VECTOR)
                        : NULL;
    for (i = 0; i < m; i++) {
        size_t ri, ei;
        if (!(r[i] >= 1 && r[i] <= (double)rows) || r[i] != floor(r[i]) ||
            !(e[i] >= 1 && e[i] <= (double)k) || e[i] != floor(e[i]))
            slm_fail(s->fn, "badsettings", "draw.%s / draw.%s %lu: no such row or entry",
                     rows_name, entries_name, (unsigned long)(i + 1));
        ri = (size_t)r[i] - 1;
        ei = (size_t)e[i] - 1;
        for (j = 0; j < s->N; j++)
            X[ri + j * rows] = D[ei + j * k];
    }
}

/* A column repeated N times as a rows x N array (rows: the plan's
 * column `name`). */
static mxArray *columns(const run_settings *s, const mxArray *plan, const char *name,
                        size_t rows)
{
    mxArray *a = slm_create(s->fn, rows, s->N);
    double *x = mxGetDoubles(a);
    size_t j;
    if (rows) {
        const double *v = slm_matrix(s->fn, slm_field(s->fn, plan, name, 1), 1, name, rows,
                                     0, SLM_VECTOR | SLM_ALLOW_NAN | SLM_ALLOW_INF);
        for (j = 0; j < s->N; j++)
            memcpy(x + j * rows, v, rows * sizeof(double));
    }
    return a;
}

/* The initial ensemble: copies of the settings' X0 and P0 (settings
 * field draw absent or empty), or with the field draw (a prepared run
 * of sluice.filter run with another seed) the members of the seed drawn
 * here from the prior plan, the same numbers in the same order as
 * sluice.kernel.draw gives them (and then checked as X0 and P0 are):
 * plan.x0 and plan.def fill every member, then the prior entries (ids,
 * a, b, lo, hi) are drawn and their rows set. */
static void initial_members(const run_settings *s, mxArray **xa, mxArray **pa)
{
    const mxArray *plan = slm_field(s->fn, s->c, "draw", 0);
    const mxArray *args[5];
    const sl_prior_entry *prior;
    size_t k;
    double *D;
    sl_error err;
    if (plan == NULL || mxIsEmpty(plan)) {
        *xa = initial(s, "X0", s->n, 0);
        *pa = initial(s, "P0", s->p, SLM_ALLOW_INF);
        return;
    }
    if (!mxIsStruct(plan) || mxGetNumberOfElements(plan) != 1)
        slm_fail(s->fn, "badsettings", "draw: expected the prior plan of a prepared run");
    *xa = columns(s, plan, "x0", s->n);
    *pa = columns(s, plan, "def", s->p);
    args[0] = slm_field(s->fn, plan, "ids", 1);
    args[1] = slm_field(s->fn, plan, "a", 1);
    args[2] = slm_field(s->fn, plan, "b", 1);
    args[3] = slm_field(s->fn, plan, "lo", 1);
    args[4] = slm_field(s->fn, plan, "hi", 1);
    if (mxGetNumberOfElements(args[0]) > 0) {
        prior = slm_prior(s->fn, args, 1, &k);
        D = (double *)slm_alloc(s->fn, k * s->N, sizeof(double));
        sl_error_clear(&err);
        if (sl_prior_draw(k, prior, s->N, s->cfg.seed, 0, D, &err) != SL_OK)
            slm_raise(s->fn, &err);
        scatter_draws(s, plan, "state_rows", "state_entries", s->n, k, D, mxGetDoubles(*xa));
        scatter_draws(s, plan, "param_rows", "param_entries", s->p, k, D, mxGetDoubles(*pa));
        mxFree(D);
    }
    /* the checks a given X0 and P0 get */
    slm_matrix(s->fn, *xa, 1, "X0", s->n, s->N, 0);
    if (s->p)
        slm_matrix(s->fn, *pa, 1, "P0", s->p, s->N, SLM_ALLOW_INF);
}

/* ------------------------------------------------------- memory check */

/* Runs below this many bytes are not checked (memory () costs a few ms a
 * call); the test hook SLUICE_MEMORY_AVAILABLE checks every run. */
#define CHECK_FROM 1073741824.0

/* The parts of a run's memory: the core's workspace parts, then what the
 * gateway allocates besides (its outputs and copies). */
enum {
    OUT_FINAL = SL_PF_NPARTS, /* the final weights */
    OUT_RECORDS,              /* the summaries of every cycle */
    OUT_SMOOTHED,             /* the smoothed summaries */
    OUT_HISTORY,              /* the ensemble history */
    OUT_CALLS,                /* the arguments of a model or operator function */
    OUT_CHECKPOINT,           /* a resumed checkpoint's workspace */
    NPARTS
};

/* Everything the run will hold, by part (bytes as doubles: exact to
 * 2^53); the workspace's parts exactly as the core lays them out. */
static double memory_parts(const run_settings *s, sl_pf_part part[NPARTS])
{
    const sl_pf_config *cfg = &s->cfg;
    const double N = (double)s->N, T = (double)s->T, v = (double)s->v, n = (double)s->n,
                 p = (double)s->p, q = (double)s->q, nq = (double)cfg->nq, d8 = 8.0;
    const double d = (double)(cfg->n_lin + cfg->n_fun);
    double total = 0.0, model_args = 0.0, op_args = 0.0;
    size_t k;
    memset(part, 0, NPARTS * sizeof *part);
    sl_pf_workspace_parts(cfg, part);
    /* the final states and parameters are made before the check (as
     * copies of the initial ones), the weights after it */
    part[OUT_FINAL].name = "final weights";
    part[OUT_FINAL].option[0] = "members";
    part[OUT_FINAL].bytes = (size_t)(d8 * N);
    /* mean, quantiles, forecast means, 13 series of T, 2 of p x T, the
     * PIT of every observation row; the derived quantities' summary,
     * laid out as the states' */
    part[OUT_RECORDS].name = "summaries of every cycle";
    part[OUT_RECORDS].option[0] = "quantiles";
    part[OUT_RECORDS].option[1] = "times";
    part[OUT_RECORDS].bytes = (size_t)(d8 * T * (v * (nq + (cfg->no_summary ? 1 : 2)) + 13 + 2 * p) +
                                         d8 * (double)cfg->obs_first[s->T]);
    if (cfg->derived_summary)
        part[SL_PF_PART_DERIVED].bytes += (size_t)(d8 * T * d * (nq + 1));
    part[OUT_SMOOTHED].name = "smoothed summaries";
    part[OUT_SMOOTHED].option[0] = "lag";
    /* their means, quantiles and distinct ancestors */
    part[OUT_SMOOTHED].bytes = cfg->lag > 0 ? (size_t)(d8 * T * (v * (nq + 1) + 1)) : 0;
    /* and, weakly coupled, each component's distinct ancestors */
    if (cfg->lag > 0 && cfg->weak)
        part[OUT_SMOOTHED].bytes += (size_t)(d8 * T * (double)cfg->n_comp);
    part[OUT_HISTORY].name = "history";
    part[OUT_HISTORY].option[0] = "history";
    if (cfg->keep_history)
        part[OUT_HISTORY].bytes = (size_t)(d8 * N * T * (s->history == 1 ? v + 2 : n));
    /* a model or operator function gets copies of the ensemble and
     * returns its result; one call at a time */
    if (strcmp(s->kind, "handle") == 0)
        model_args = d8 * N * (2 * n + p + q);
    if (cfg->obs_fn != NULL)
        op_args = d8 * N * (n + p + (double)cfg->n_fun);
    part[OUT_CALLS].name = "arguments of the model or operator functions";
    part[OUT_CALLS].option[0] = "members";
    part[OUT_CALLS].bytes = (size_t)(model_args > op_args ? model_args : op_args);
    part[OUT_CHECKPOINT].name = "checkpoint's copy of the workspace";
    part[OUT_CHECKPOINT].option[0] = "checkpoint";
    if (s->ck_file != NULL) {
        FILE *f = fopen(s->ck_file, "rb");
        if (f != NULL) {
            fclose(f);
            part[OUT_CHECKPOINT].bytes = sl_pf_workspace(cfg) + s->N * sizeof(double);
        }
    }
    for (k = 0; k < NPARTS; k++)
        total += (double)part[k].bytes;
    return total;
}

/* Refuse a run the machine cannot hold, before anything large is made:
 * sluice.internal.ensure_memory raises sluice:<fn>:nomemory naming the
 * largest part and its options, and the next largest when it holds a
 * quarter of the need or more (the LETKF's analysis and its copies per
 * thread, say). */
static void check_memory(const run_settings *s)
{
    sl_pf_part part[NPARTS];
    const char *hook = getenv("SLUICE_MEMORY_AVAILABLE");
    double total = memory_parts(s, part);
    size_t k, j, top[2] = {0, 0}, ntop, nopt;
    const sl_analysis *an = sl_pf_analysis_of(&s->cfg);
    mxArray *in[6];
    char what[200];
    if (total < CHECK_FROM && (hook == NULL || hook[0] == '\0'))
        return;
    for (k = 1; k < NPARTS; k++)
        if (part[k].bytes > part[top[0]].bytes)
            top[0] = k;
    top[1] = top[0] == 0 ? 1 : 0;
    for (k = 0; k < NPARTS; k++)
        if (k != top[0] && part[k].bytes > part[top[1]].bytes)
            top[1] = k;
    ntop = 4.0 * (double)part[top[1]].bytes >= total ? 2 : 1;
    if (s->cfg.inner > 0)
        snprintf(what, sizeof what, "a run of %lu x %lu members with 'param_move' 'smc2'",
                 (unsigned long)(s->N / s->cfg.inner), (unsigned long)s->cfg.inner);
    else
        snprintf(what, sizeof what, "a run of %lu members with 'method' '%s'",
                 (unsigned long)s->N, an != NULL && an->name != NULL ? an->name : "?");
    in[0] = mxCreateDoubleScalar(total);
    in[1] = mxCreateString(s->fn);
    in[2] = mxCreateString(what);
    in[3] = mxCreateDoubleMatrix(1, ntop, mxREAL);
    in[4] = mxCreateCellMatrix(1, ntop);
    in[5] = mxCreateCellMatrix(1, ntop);
    for (j = 0; j < ntop; j++) {
        const sl_pf_part *pt = &part[top[j]];
        mxArray *opts;
        nopt = pt->option[1] != NULL ? 2 : 1;
        opts = mxCreateCellMatrix(1, nopt);
        for (k = 0; k < nopt; k++)
            mxSetCell(opts, k, mxCreateString(pt->option[k]));
        mxGetDoubles(in[3])[j] = (double)pt->bytes;
        mxSetCell(in[4], j, mxCreateString(pt->name));
        mxSetCell(in[5], j, opts);
    }
    /* its error (the refusal) goes through to the caller: nothing but
     * the gateway's own mxMalloc'd memory is held yet */
    mexCallMATLAB(0, NULL, 6, in, "sluice.internal.ensure_memory");
    for (k = 0; k < 6; k++)
        mxDestroyArray(in[k]);
}

/* A run split across the ranks of an mpirun job (settings field ranks:
 * 1, it must be; 2, when the core can split it; absent or 0, not): the
 * collectives come from the MPI gateway sluice.kernel.mpi, which must be
 * loaded and started. Returns the mode, rk filled when not 0. */
typedef int (*ranks_provider)(sl_pf_ranks *rk);

static int decode_ranks(const run_settings *s, sl_pf_ranks *rk)
{
    const mxArray *a = slm_field(s->fn, s->c, "ranks", 0);
    slm_function f;
    ranks_provider get;
    double mode;
    if (a == NULL)
        return 0;
    if (!((mxIsLogical(a) || mxIsDouble(a)) && mxGetNumberOfElements(a) == 1))
        slm_fail(s->fn, "badsettings", "ranks: expected 0, 1 or 2");
    mode = mxGetScalar(a);
    if (mode != 1 && mode != 2)
        return 0;
    f = slm_symbol("sluice_mpi_pf_ranks");
    get = (ranks_provider)f;
    if (f == NULL || !get(rk))
        slm_fail(s->fn, "mpiunavailable",
                 "a run split across ranks needs MPI started by the gateway "
                 "sluice.kernel.mpi ('init'), under mpirun (build it with \"make MPI=1\")");
    return (int)mode;
}

/* Raise a failed run's error: the user's own function's first. */
static void raise_run(run_settings *s, const sl_error *err)
{
    slm_poll_finish(&s->poll);
    if (strcmp(err->reason, "rankfailed") == 0)
        slm_raise(s->fn, err); /* another rank's failure: its own error is there */
    if (strcmp(err->reason, "rankleft") == 0 || strcmp(err->reason, "mpifailed") == 0)
        slm_raise("mpi", err); /* the job's, as the MPI gateway raises them */
    if (s->ho.failed && (err->status == SL_EMODEL || err->status == SL_EINTERRUPT))
        slm_handle_obs_raise(s->fn, &s->ho);
    if (s->model.step != NULL && strcmp(s->kind, "handle") == 0 &&
        (err->status == SL_EMODEL || (err->status == SL_EINTERRUPT && s->hm.interrupted)))
        slm_handle_model_raise(s->fn, &s->hm);
    slm_raise(s->fn, err);
}

void mexFunction(int nlhs, mxArray *plhs[], int nrhs, const mxArray *prhs[])
{
    static const char *out_names[] = {
        "mean", "quantiles", "ess", "logz", "resampled", "degenerate",
        "skipped", "nonfinite", "inflation", "floored", "forecast_mean", "log_evidence",
        "steps", "X", "P", "w",
        "history_X", "history_P", "history_w", "history_ancestors",
        "smooth_mean", "smooth_quantiles", "smooth_distinct", "distinct", "spread",
        "temper_steps", "loglik_evals", "move_sweeps", "move_accept", "param_move",
        "derived_mean", "derived_quantiles", "nanpred", "comp_ess", "comp_logz",
        "comp_smooth_distinct", "pit", "ranks"};
    run_settings s;
    sl_pf_output out;
    sl_pf_ranks rk;
    sl_error err;
    mxArray *res, *xa, *pa, *wa;
    void *work;
    size_t k, bytes;
    int ranks;
    sl_status st;

    slm_init();
    slm_nargs("pf_run", nrhs, 1, 1, nlhs, 1);
    memset(&s, 0, sizeof s);
    memset(&out, 0, sizeof out);
    sl_error_clear(&err);
    s.c = prhs[0];
    s.fn = slm_caller("pf_run", s.c);

    decode_sizes(&s);
    decode_model(&s);
    decode_operators(&s);
    decode_times(&s);
    decode_observations(&s);
    decode_forcing(&s);
    decode_bounds(&s);
    decode_moves(&s);
    decode_priors(&s);
    decode_cycle(&s);
    decode_recording(&s);
    decode_analysis(&s);
    decode_coupling(&s);
    decode_checkpoint(&s);
    ranks = decode_ranks(&s, &rk);
    decode_result(&s);

    initial_members(&s, &xa, &pa);
    if (ranks == 2 && sl_pf_ranks_check(&s.cfg, rk.size, &err) != SL_OK &&
        (strcmp(err.reason, "ranksunsupported") == 0 || strcmp(err.reason, "ranksempty") == 0))
        ranks = 0; /* a run the core cannot split: each rank runs it whole */
    if ((ranks ? sl_pf_ranks_check(&s.cfg, rk.size, &err) : sl_pf_check(&s.cfg, &err)) != SL_OK)
        slm_raise(s.fn, &err);
    if (ranks && s.cfg.loc != NULL) {
        /* the most rows at one place: what a rank of a split LETKF holds
         * is sized from it */
        const size_t bw = sl_enkf_letkf_rows_work(s.v);
        if (bw == 0)
            slm_fail(s.fn, "toolarge", "the run's workspace size overflows");
        s.loc.group_max = sl_enkf_group_max(&s.loc, s.v, slm_alloc(s.fn, bw, 1));
    }
    if (!ranks)
        check_memory(&s);
    bytes = ranks ? sl_pf_ranks_workspace(&s.cfg, &rk) : sl_pf_workspace(&s.cfg);
    if (ranks && bytes == 0)
        slm_fail(s.fn, "toolarge", "the run's workspace size overflows");
    work = slm_alloc(s.fn, bytes, 1);

    res = mxCreateStructMatrix(1, 1, (int)(sizeof out_names / sizeof *out_names), out_names);
    wa = slm_create(s.fn, 1, s.N);
    mxSetField(res, 0, "w", wa);
    create_summaries(&s, res, &out);
    create_optional(&s, res, &out);
    create_history(&s, res, &out);
    if (s.ck_file != NULL) {
        FILE *f = fopen(s.ck_file, "rb");
        s.ck_res = res;
        if (f != NULL)
            ck_read(&s, f); /* resume from it */
    }

    st = ranks ? sl_pf_run_ranks(&s.cfg, &rk, mxGetDoubles(xa), mxGetDoubles(pa),
                                 mxGetDoubles(wa), work, &out, &err)
               : sl_pf_run(&s.cfg, mxGetDoubles(xa), mxGetDoubles(pa), mxGetDoubles(wa), work,
                           &out, &err);
    if (st != SL_OK)
        raise_run(&s, &err);
    slm_poll_finish(&s.poll);
    if (out.hist_a != NULL)
        for (k = 0; k < s.N * s.T; k++)
            out.hist_a[k] += 1.0; /* 1-based, as Octave indexes */
    mxSetField(res, 0, "X", xa);
    mxSetField(res, 0, "P", pa);
    mxSetField(res, 0, "log_evidence", mxCreateDoubleScalar(out.log_evidence));
    mxSetField(res, 0, "steps", mxCreateDoubleScalar((double)out.steps));
    mxSetField(res, 0, "ranks", mxCreateDoubleScalar(ranks ? (double)rk.size : 1.0));
    mxSetField(res, 0, "param_move",
               mxCreateString(s.cfg.inner > 0 ? "smc2" : s.cfg.param_move->name));
    if (s.result != NULL) {
        mxFree(work); /* before the result's copies are made */
        res = filter_result(&s, res);
    }
    plhs[0] = res;
}
