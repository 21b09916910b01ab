/* pf_coupled.c - the weakly coupled particle filter: every component of
 * a coupled model weighed by its own observations and resampled apart. */
#include <math.h>
#include <string.h>

#include "pf_internal.h"
#include "sluice/loglik.h"
#include "sluice/resample.h"
#include "sluice/rng.h"
#include "sluice/weights.h"

static sl_status weak_check(const sl_analysis *self, const sl_pf_config *cfg, sl_error *err)
{
    const sl_forcing *f = &cfg->forcing;
    size_t i;
    (void)self;
    if (cfg->inner > 0 || cfg->temper.ess > 0)
        return sl_fail(err, SL_EINVAL, "badcoupling",
                       "the weakly coupled particle filter runs without SMC2 or tempering");
    if (cfg->comp_lag != NULL)
        for (i = 0; i < cfg->n_comp; i++)
            if (cfg->comp_lag[i] > cfg->lag)
                return sl_fail(err, SL_EINVAL, "badcoupling",
                               "component %lu: a lag of %lu cycles, beyond the window's %lu",
                               (unsigned long)(i + 1), (unsigned long)cfg->comp_lag[i],
                               (unsigned long)cfg->lag);
    if (cfg->param_move != NULL &&
        (cfg->param_move->when == SL_MOVE_AT_RESAMPLE || cfg->param_move->replay ||
         cfg->param_move == &sl_param_move_liu_west))
        return sl_fail(err, SL_EINVAL, "badcoupling",
                       "the weakly coupled particle filter moves parameters by a random "
                       "walk or not at all, not by '%s' (it acts on the joint ensemble)",
                       cfg->param_move->name);
    if (f->noise != NULL)
        for (i = 0; i < f->q; i++)
            if (f->noise[i] != SL_FORCING_EXACT && f->phi != NULL && f->phi[i] > 0)
                return sl_fail(err, SL_EINVAL, "badcoupling",
                               "forcing %lu: the weakly coupled particle filter keeps "
                               "forcing perturbations with their member, which needs white "
                               "noise (AR(1) coefficient 0), got %g",
                               (unsigned long)(i + 1), f->phi[i]);
    return SL_OK;
}

/* The seed of component cp's own streams. */
static uint64_t comp_seed(const sl_pf_config *cfg, size_t cp)
{
    const uint64_t c = (uint64_t)cp;
    return sl_fnv1a(cfg->seed, &c, sizeof c);
}

/* Weigh component cp by its observations among rows r0 .. r0+m-1 and
 * resample its rows (from the copies Xo, Zo, Po, ido of the forecast).
 * *nobs receives the observations used, *nsk the missing ones. */
static sl_status weak_component(sl_analysis_cycle *c, size_t cp, const double *Xo,
                                const double *Zo, const double *Po, const uint32_t *ido,
                                uint32_t *id, size_t *nobs, size_t *nsk, sl_error *err)
{
    const sl_pf_config *cfg = c->cfg;
    pf_buffers *b = c->run;
    const size_t N = cfg->N, n = cfg->model->n_state, p = cfg->model->n_param;
    const size_t nc = cfg->n_comp, r0 = c->r0, m = c->m;
    double *ll = b->ll, *lw = b->logw, *wc = b->llx;
    sl_weight_summary ws;
    sl_error werr;
    size_t i, j;
    sl_status st;
    *nobs = *nsk = 0;
    for (j = 0; j < N; j++)
        ll[j] = 0.0;
    for (i = 0; i < m; i++) {
        if (cfg->obs_comp[r0 + i] != (int)cp)
            continue;
        if (isnan(cfg->y[r0 + i])) {
            (*nsk)++;
            continue;
        }
        sl_loglik_ensemble(1, N, cfg->y + r0 + i, b->Yhat + i, m, cfg->sigma + r0 + i,
                           cfg->aux + r0 + i, cfg->family + r0 + i, 1, ll, NULL, NULL);
        (*nobs)++;
    }
    if (*nobs == 0)
        return SL_OK;
    for (j = 0; j < N; j++)
        lw[j] = c->dead[j] || !(c->w[j] > 0) || isnan(ll[j]) ? -HUGE_VAL : log(c->w[j]) + ll[j];
    st = sl_weights_normalize(N, lw, wc, &ws, &werr);
    if (st == SL_EDEGENERATE) {
        /* no member explains the component's data: it is left as it was */
        c->degenerate = 1;
        if (c->out->comp_logz != NULL)
            c->out->comp_logz[cp + c->k * nc] = -HUGE_VAL;
        if (c->out->comp_ess != NULL)
            c->out->comp_ess[cp + c->k * nc] = 0.0;
        return SL_OK;
    }
    if (st != SL_OK) {
        if (err != NULL)
            *err = werr;
        return st;
    }
    if (c->out->comp_logz != NULL)
        c->out->comp_logz[cp + c->k * nc] = ws.log_sum;
    if (c->out->comp_ess != NULL)
        c->out->comp_ess[cp + c->k * nc] = ws.ess;
    st = sl_resample(cfg->resampler, N, wc, N, comp_seed(cfg, cp), (uint32_t)c->k, b->rwork,
                     b->anc, err);
    if (st != SL_OK)
        return st;
    /* the component's rows of the fixed-lag window follow its ancestry */
    sl_pfi_window_follow(cfg, b, c->k, c->nwin, cp, b->anc);
    for (j = 0; j < N; j++) {
        const size_t a = b->anc[j];
        for (i = 0; i < n; i++)
            if (cfg->comp[i] == (int)cp)
                c->X[i + j * n] = Xo[i + a * n];
        for (i = 0; i < p; i++)
            if (cfg->comp[n + i] == (int)cp) {
                c->Z[i + j * p] = Zo[i + a * p];
                c->P[i + j * p] = Po[i + a * p];
                id[i + j * p] = ido[i + a * p];
            }
    }
    return SL_OK;
}

/* The cycle: predicted observations of the forecast, then every
 * component with observations weighed and resampled; the members that
 * come out are equally weighted (a member whose state is still not
 * finite gets weight 0 and is replaced by the run). */
static sl_status weak_cycle(sl_analysis_cycle *c, sl_error *err)
{
    const sl_pf_config *cfg = c->cfg;
    pf_buffers *b = c->run;
    const size_t N = cfg->N, n = cfg->model->n_state, p = cfg->model->n_param;
    const size_t nc = cfg->n_comp;
    const int cur = c->X == b->X[1];
    const double *Xo = b->X[1 - cur], *Zo = b->Z[1 - cur], *Po = b->P[1 - cur];
    unsigned char *dead = b->dead[cur];
    size_t cp, j, i, nlive = 0, nanp = 0;
    sl_status st;
    for (cp = 0; cp < nc; cp++) {
        if (c->out->comp_ess != NULL)
            c->out->comp_ess[cp + c->k * nc] = NAN;
        if (c->out->comp_logz != NULL)
            c->out->comp_logz[cp + c->k * nc] = 0.0;
    }
    if (c->m > 0) {
        if ((st = sl_pfi_predict_obs(cfg, b, c->r0, c->m, c->t, c->X, c->P, err)) != SL_OK)
            return st;
        sl_pfi_record_pit(cfg, b, c->r0, c->m, c->w, dead, c->out);
        for (j = 0; j < N; j++) {
            if (dead[j])
                continue;
            for (i = 0; i < c->m; i++)
                if (!isnan(cfg->y[c->r0 + i]) && isnan(b->Yhat[i + j * c->m])) {
                    nanp++;
                    break;
                }
        }
        if (c->out->nanpred != NULL)
            c->out->nanpred[c->k] = (double)nanp;
        /* the forecast's copies, which every component resamples from */
        memcpy(b->X[1 - cur], c->X, n * N * sizeof(double));
        memcpy(b->Z[1 - cur], c->Z, p * N * sizeof(double));
        memcpy(b->P[1 - cur], c->P, p * N * sizeof(double));
        if (p > 0)
            memcpy(b->vid[1 - cur], b->vid[cur], p * N * sizeof(uint32_t));
        for (cp = 0; cp < nc; cp++) {
            size_t nobs, nsk;
            st = weak_component(c, cp, Xo, Zo, Po, b->vid[1 - cur], b->vid[cur], &nobs, &nsk,
                                err);
            if (st != SL_OK)
                return st;
            c->skipped += nsk;
            if (nobs > 0)
                c->evals += N;
        }
        /* a member made of living blocks lives again */
        for (j = 0; j < N; j++)
            if (dead[j] && !sl_pfi_has_nonfinite(c->X + j * n, n))
                dead[j] = 0;
    }
    for (j = 0; j < N; j++)
        nlive += !dead[j];
    for (j = 0; j < N; j++)
        c->w[j] = dead[j] || nlive == 0 ? 0.0 : 1.0 / (double)nlive;
    return SL_OK;
}

const sl_analysis sl_analysis_pf_weak = {
    "pf_weak", SL_ANALYSIS_MOVES, NULL, weak_check, NULL, NULL, weak_cycle,
};
