/* pf_kalman.c - the ensemble Kalman analyses of the filter cycle: the
 * entries enkf, etkf, ensrf, eakf and letkf of the analysis table, which
 * run sl_enkf_analysis on the living members' states and transformed
 * parameters (and the fixed-lag window below them). */
#include <math.h>
#include <string.h>

#include "pf_internal.h"
#include "workspace.h"
#include "sluice/enkf.h"
#include "sluice/loglik.h"
#include "sluice/prior.h"

/* Multiplicative inflation of the live members' rows r0 .. r0+rows-1 of
 * an ld x L block about their mean. */
static void inflate_rows(double *M, size_t ld, size_t r0, size_t rows,
                         size_t L, double lambda)
{
    size_t i, jj;
    for (i = r0; i < r0 + rows; i++) {
        double mean = 0.0;
        for (jj = 0; jj < L; jj++)
            mean += M[i + jj * ld];
        mean /= (double)L;
        for (jj = 0; jj < L; jj++)
            M[i + jj * ld] = mean + lambda * (M[i + jj * ld] - mean);
    }
}

/* The ranks of a run split across processes, for its analyses (NULL: one
 * process). */
static const sl_enkf_ranks *analysis_ranks(const sl_pf_config *cfg, sl_enkf_ranks *er)
{
    if (cfg->ranks == NULL)
        return NULL;
    er->ctx = cfg->ranks->ctx;
    er->rank = cfg->ranks->rank;
    er->size = cfg->ranks->size;
    er->allgather = cfg->ranks->allgather;
    return er;
}

/* Whether row i (of the n + p states and parameters) or observation row
 * r takes part in the analysis of component part (-1: the whole state,
 * strong coupling). */
static int row_in(const sl_pf_config *cfg, int part, size_t i)
{
    return part < 0 || cfg->comp[i] == part;
}

static int obs_in(const sl_pf_config *cfg, int part, size_t r)
{
    return part < 0 || cfg->obs_comp[r] == part;
}

/* The first part of the ensemble Kalman analysis of cycle k (live
 * members only, observed rows only; with part >= 0, weak coupling, only
 * the observations of component part): the inflation in force recorded,
 * the living members listed (b->live, ks->L), the observed rows compacted
 * (b->yc, b->rc, b->Hc from the predicted observations Yhat, m x N, and
 * their positions), the adaptive inflation updated and the settings of
 * the analysis made (ks->ecfg, its localisation ks->lc; the caller sets
 * its ranks). Returns 0 when the cycle has no analysis: no observation,
 * or fewer than 2 living members (*degenerate). */
int sl_pfi_kalman_setup(const sl_pf_config *cfg, const sl_enkf_config *settings, pf_buffers *b,
                        size_t k, size_t r0, size_t m, const unsigned char *dead,
                        const double *Yhat, double *infl, size_t nw, sl_pf_output *out,
                        int *degenerate, size_t *nskipped, int part, sl_pfi_kalman *ks)
{
    const size_t N = cfg->N, n = cfg->model->n_state, p = cfg->model->n_param;
    const size_t v = n + p, dim = cfg->loc != NULL ? cfg->loc->dim : 0;
    const size_t va = v * (nw + 1); /* rows of the augmented ensemble */
    size_t L = 0, mk = 0, mt, i, j, jj, d, s;
    /* the inflation in force, recorded also for cycles with no analysis */
    if (out->inflation != NULL)
        out->inflation[k] = cfg->adaptive_inflation ? *infl : settings->inflation;
    for (j = 0; j < N; j++)
        if (!dead[j])
            b->live[L++] = j;
    *nskipped = 0;
    for (i = 0; i < m; i++)
        if (obs_in(cfg, part, r0 + i)) {
            mk += !isnan(cfg->y[r0 + i]);
            *nskipped += isnan(cfg->y[r0 + i]);
        }
    if (mk == 0)
        return 0;
    if (L < 2) {
        *degenerate = 1;
        return 0;
    }
    ks->L = L;
    ks->va = va;
    ks->ecfg = *settings;
    /* compact the observed rows (mt of them: the leading dimension) */
    mt = mk;
    for (i = 0, mk = 0; i < m; i++) {
        size_t row = r0 + i;
        if (isnan(cfg->y[row]) || !obs_in(cfg, part, row))
            continue;
        b->yc[mk] = cfg->y[row];
        b->rc[mk] = cfg->sigma[row] * cfg->sigma[row];
        for (jj = 0; jj < L; jj++)
            b->Hc[mk + jj * mt] = Yhat[i + b->live[jj] * m];
        if (cfg->loc != NULL) {
            size_t mall = cfg->obs_first[cfg->T];
            for (d = 0; d < dim; d++)
                b->opos[mk + d * mt] = cfg->loc->obs_pos[row + d * mall];
            b->oc[mk] = cfg->loc->obs_c[row];
        }
        mk++;
    }
    ks->mk = mk;
    if (cfg->adaptive_inflation) {
        /* variance inflation from the innovations: E[d'd] = lambda tr(HBH') + tr R */
        double d2 = 0.0, trR = 0.0, trB = 0.0, est;
        for (i = 0; i < mk; i++) {
            double mean = 0.0, var = 0.0;
            for (jj = 0; jj < L; jj++)
                mean += b->Hc[i + jj * mk];
            mean /= (double)L;
            for (jj = 0; jj < L; jj++) {
                double e = b->Hc[i + jj * mk] - mean;
                var += e * e;
            }
            trB += var / (double)(L - 1);
            d2 += (b->yc[i] - mean) * (b->yc[i] - mean);
            trR += b->rc[i];
        }
        est = trB > 0 ? sqrt(fmax((d2 - trR) / trB, 0.0)) : 1.0;
        if (!(est >= 1.0))
            est = 1.0;
        if (est > cfg->inflation_max)
            est = cfg->inflation_max;
        *infl = 0.9 * *infl + 0.1 * est;
        if (*infl > cfg->inflation_max)
            *infl = cfg->inflation_max;
        ks->ecfg.inflation = *infl;
    }
    ks->ecfg.seed = cfg->seed;
    if (part >= 0) {
        /* the perturbed observations of each component: a stream of its own */
        const uint64_t c = (uint64_t)part;
        ks->ecfg.seed = sl_fnv1a(cfg->seed, &c, sizeof c);
    }
    ks->ecfg.cycle = (uint32_t)k;
    /* a paced run: the cycle's count */
    ks->ecfg.threads = cfg->threads_paced ? b->nt : cfg->threads;
    ks->ecfg.ranks = NULL;
    /* the run's poll also between the parts of a long analysis */
    ks->ecfg.poll = cfg->poll;
    ks->ecfg.poll_ctx = cfg->poll_ctx;
    ks->ecfg.poll_fraction = (double)k / (double)cfg->T;
    if (cfg->loc != NULL) {
        ks->lc = *cfg->loc;
        ks->lc.obs_pos = b->opos;
        ks->lc.obs_c = b->oc;
        if (nw > 0) {
            /* a row of the window sits where the state it copies sits */
            for (d = 0; d < dim; d++)
                for (s = 0; s <= nw; s++)
                    memcpy(b->spos + d * va + s * v, cfg->loc->state_pos + d * v,
                           v * sizeof(double));
            ks->lc.state_pos = b->spos;
        }
        ks->ecfg.loc = &ks->lc;
    } else {
        ks->ecfg.loc = NULL;
    }
    return 1;
}

/* The analysis of the ensemble A (ks->va rows, ks->L members; with
 * rows_local and ranks, a rank's rows of it) set up by sl_pfi_kalman_setup,
 * with nw window cycles below the current rows (inflated here, not in
 * the analysis: the window's past is not inflated again); then the
 * inflation used and the eigenvalues floored recorded. */
sl_status sl_pfi_kalman_analyse(const sl_pf_config *cfg, pf_buffers *b, sl_pfi_kalman *ks,
                                double *A, size_t nw, sl_pf_output *out, size_t k, int part,
                                sl_error *err)
{
    const size_t v = cfg->model->n_state + cfg->model->n_param;
    const double used = ks->ecfg.inflation;
    sl_enkf_info info;
    sl_status st;
    if (nw > 0 && used != 1.0) {
        inflate_rows(A, ks->va, 0, v, ks->L, used);
        inflate_rows(b->Hc, ks->mk, 0, ks->mk, ks->L, used);
    }
    if (nw > 0)
        ks->ecfg.inflation = 1.0;
    memset(&info, 0, sizeof info);
    st = sl_enkf_analysis(&ks->ecfg, ks->va, ks->L, A, ks->mk, b->Hc, b->yc, b->rc, 0,
                          b->ework, &info, err);
    ks->ecfg.inflation = used;
    if (st == SL_EINTERRUPT)
        return sl_fail(err, SL_EINTERRUPT, "interrupted",
                       "the run was interrupted at cycle %lu of %lu, in its analysis",
                       (unsigned long)(k + 1), (unsigned long)cfg->T);
    if (st != SL_OK)
        return st;
    if (out->inflation != NULL)
        out->inflation[k] = ks->ecfg.inflation;
    if (out->floored != NULL)
        out->floored[k] = (part >= 0 ? out->floored[k] : 0.0) + (double)info.floored;
    return SL_OK;
}

/* The ensemble Kalman analysis of cycle k: live members only, observed
 * rows only, states and transformed parameters together. With part >= 0
 * (weak coupling) only the observations of component part are used and
 * only its rows are written back. */
static sl_status enkf_update(const sl_pf_config *cfg, const sl_enkf_config *settings,
                             pf_buffers *b, size_t k,
                             size_t r0, size_t m, const unsigned char *dead,
                             double *X, double *Z, double *P, double *infl,
                             size_t nw, sl_pf_output *out, int *degenerate,
                             size_t *nskipped, int part, sl_error *err)
{
    const size_t N = cfg->N, n = cfg->model->n_state, p = cfg->model->n_param;
    const size_t v = n + p;
    size_t L, va, i, jj, s;
    sl_pfi_kalman ks;
    sl_enkf_ranks er;
    sl_status st;
    (void)N;
    if (!sl_pfi_kalman_setup(cfg, settings, b, k, r0, m, dead, b->Yhat, infl, nw, out,
                             degenerate, nskipped, part, &ks))
        return SL_OK;
    ks.ecfg.ranks = analysis_ranks(cfg, &er);
    L = ks.L;
    va = ks.va;
    for (jj = 0; jj < L; jj++) {
        memcpy(b->A + jj * va, X + b->live[jj] * n, n * sizeof(double));
        if (p > 0)
            memcpy(b->A + jj * va + n, Z + b->live[jj] * p, p * sizeof(double));
        /* the window: cycles k-1, k-2, ..., k-nw below the current rows */
        for (s = 1; s <= nw; s++)
            memcpy(b->A + jj * va + s * v, b->win[(k - s) % b->nwin] + b->live[jj] * v,
                   v * sizeof(double));
    }
    if ((st = sl_pfi_kalman_analyse(cfg, b, &ks, b->A, nw, out, k, part, err)) != SL_OK)
        return st;
    for (jj = 0; jj < L && part < 0; jj++) {
        size_t jm = b->live[jj];
        memcpy(X + jm * n, b->A + jj * va, n * sizeof(double));
        for (i = 0; i < p; i++) {
            Z[i + jm * p] = b->A[jj * va + n + i];
            P[i + jm * p] = sl_transform_inverse(&cfg->ptrans[i], Z[i + jm * p]);
        }
        for (s = 1; s <= nw; s++)
            memcpy(b->win[(k - s) % b->nwin] + jm * v, b->A + jj * va + s * v,
                   v * sizeof(double));
    }
    /* weak coupling: the component's own rows (and their window copies) only */
    for (jj = 0; jj < L && part >= 0; jj++) {
        size_t jm = b->live[jj];
        for (i = 0; i < n; i++)
            if (row_in(cfg, part, i))
                X[i + jm * n] = b->A[jj * va + i];
        for (i = 0; i < p; i++)
            if (row_in(cfg, part, n + i)) {
                Z[i + jm * p] = b->A[jj * va + n + i];
                P[i + jm * p] = sl_transform_inverse(&cfg->ptrans[i], Z[i + jm * p]);
            }
        for (s = 1; s <= nw; s++)
            for (i = 0; i < v; i++)
                if (row_in(cfg, part, i))
                    b->win[(k - s) % b->nwin][i + jm * v] = b->A[jj * va + s * v + i];
    }
    return SL_OK;
}

/* The method of an ensemble Kalman entry. */
static int kalman_method(const sl_analysis *self)
{
    return *(const int *)self->data;
}

/* The settings an ensemble Kalman entry runs with: the run's (enkf) with
 * the entry's method, or none (no inflation or relaxation). */
static void kalman_settings(const sl_analysis *self, const sl_pf_config *cfg,
                            sl_enkf_config *ec)
{
    if (cfg->enkf != NULL) {
        *ec = *cfg->enkf;
    } else {
        memset(ec, 0, sizeof *ec);
        ec->inflation = 1.0;
        ec->threads = 1;
    }
    ec->method = kalman_method(self);
}

static sl_status kalman_check(const sl_analysis *self, const sl_pf_config *cfg,
                              sl_error *err)
{
    const int method = kalman_method(self);
    const size_t m = cfg->obs_first[cfg->T];
    size_t k;
    if (cfg->enkf != NULL && cfg->enkf->method != method)
        return sl_fail(err, SL_EINVAL, "badconfig",
                       "the analysis '%s' was given the settings of another method (%d)",
                       self->name, cfg->enkf->method);
    if (cfg->N < 2)
        return sl_fail(err, SL_EINVAL, "badconfig",
                       "the ensemble Kalman methods need at least 2 members");
    for (k = 0; k < m; k++)
        if (cfg->family[k] != SL_FAMILY_GAUSSIAN)
            return sl_fail(err, SL_EINVAL, "badfamily",
                           "observation %lu: the ensemble Kalman methods take Gaussian "
                           "observations only; use the particle filter for other families",
                           (unsigned long)(k + 1));
    if (method == SL_ENKF_LETKF && cfg->loc == NULL)
        return sl_fail(err, SL_EINVAL, "badlocalization",
                       "the LETKF needs positions of the states and observations");
    if (cfg->adaptive_inflation && !(cfg->inflation_max >= 1))
        return sl_fail(err, SL_EINVAL, "badconfig",
                       "the largest adaptive inflation must be >= 1");
    return SL_OK;
}

/* The buffers of an ensemble Kalman analysis in base (NULL: only
 * measure), sized for the configuration the cycle runs (enkf_update):
 * the augmented ensemble, compacted observations, their positions, the
 * living members, the method's workspace. The end, or 0 on overflow. */
static size_t kalman_layout(const sl_analysis *self, const sl_pf_config *cfg,
                            size_t m_max, size_t nwin, unsigned char *base,
                            pf_buffers *b)
{
    const size_t N = cfg->N, n = cfg->model->n_state, p = cfg->model->n_param;
    size_t dim = cfg->loc != NULL ? cfg->loc->dim : 0, ew, off = 0, end;
    sl_enkf_config ec;
    sl_enkf_ranks er;
    kalman_settings(self, cfg, &ec);
    ec.threads = cfg->threads;
    ec.loc = cfg->loc;
    ec.ranks = analysis_ranks(cfg, &er);
    ew = sl_enkf_workspace(&ec, (n + p) * (nwin + 1), N, m_max ? m_max : 1, 0);
    if (ew == 0 || dim > 2)
        return 0;
    sl_ws_carve(base, &off, (n + p) * (nwin + 1) * N * 8, (void **)&b->A);
    sl_ws_carve(base, &off, (n + p) * (nwin + 1) * dim * 8, (void **)&b->spos);
    sl_ws_carve(base, &off, m_max * N * 8, (void **)&b->Hc);
    sl_ws_carve(base, &off, m_max * 8, (void **)&b->yc);
    sl_ws_carve(base, &off, m_max * 8, (void **)&b->rc);
    sl_ws_carve(base, &off, m_max * dim * 8, (void **)&b->opos);
    sl_ws_carve(base, &off, m_max * 8, (void **)&b->oc);
    sl_ws_carve(base, &off, N * sizeof(size_t), (void **)&b->live);
    end = sl_ws_carve(base, &off, ew, &b->ework);
    return sl_ws_size(end);
}

static size_t kalman_workspace(const sl_analysis *self, const sl_pf_config *cfg,
                               size_t m_max, size_t nwin)
{
    pf_buffers b;
    return kalman_layout(self, cfg, m_max, nwin, NULL, &b);
}

static void kalman_start(const sl_analysis *self, const sl_pf_config *cfg, void *work,
                         pf_buffers *run)
{
    sl_enkf_config ec;
    kalman_layout(self, cfg, run->m_max, run->nwin, (unsigned char *)work, run);
    kalman_settings(self, cfg, &ec);
    run->infl = ec.inflation;
    if (cfg->adaptive_inflation && run->infl > cfg->inflation_max)
        run->infl = cfg->inflation_max; /* adaptive inflation stays at most the maximum */
}

/* The ensemble Kalman analysis of a cycle: the analysis moves the
 * members; the living ones get equal weights (the dead are replaced by
 * resampling). With no observation it records the inflation in force. */
static sl_status kalman_cycle(sl_analysis_cycle *c, sl_error *err)
{
    const sl_pf_config *cfg = c->cfg;
    pf_buffers *b = c->run;
    const size_t N = cfg->N, p = cfg->model->n_param, nlive = N - c->ndead;
    /* the ping-pong half that holds c->Z, and the other one (free now) */
    const int cur = c->Z == b->Z[1];
    sl_enkf_config ec;
    sl_status st;
    size_t j;
    kalman_settings(c->self, cfg, &ec);
    if (c->m > 0 &&
        (st = sl_pfi_predict_obs(cfg, b, c->r0, c->m, c->t, c->X, c->P, err)) != SL_OK)
        return st;
    if (p > 0)
        memcpy(b->Z[1 - cur], c->Z, p * N * sizeof(double));
    if (!cfg->weak) {
        st = enkf_update(cfg, &ec, b, c->k, c->r0, c->m, c->dead, c->X, c->Z, c->P, &b->infl,
                         c->nwin, c->out, &c->degenerate, &c->skipped, -1, err);
        if (st != SL_OK)
            return st;
    } else {
        /* weak coupling: each component analysed by its own observations,
         * one after the other; a row's update reads only that row and the
         * predicted observations (computed above from the forecast), so
         * the order of the components does not matter */
        size_t cp, sk;
        if (c->out->floored != NULL)
            c->out->floored[c->k] = 0.0;
        for (cp = 0; cp < cfg->n_comp; cp++) {
            st = enkf_update(cfg, &ec, b, c->k, c->r0, c->m, c->dead, c->X, c->Z, c->P,
                             &b->infl, c->nwin, c->out, &c->degenerate, &sk, (int)cp, err);
            if (st != SL_OK)
                return st;
            c->skipped += sk;
        }
    }
    sl_pfi_refresh_ids(p, N, b->Z[1 - cur], c->Z, b->vid[cur]);
    for (j = 0; j < N; j++)
        c->w[j] = c->dead[j] || nlive == 0 ? 0.0 : 1.0 / (double)nlive;
    return SL_OK;
}

static const int method_enkf = SL_ENKF_STOCHASTIC, method_etkf = SL_ENKF_ETKF,
                 method_ensrf = SL_ENKF_ENSRF, method_eakf = SL_ENKF_EAKF,
                 method_letkf = SL_ENKF_LETKF;

#define KALMAN_ENTRY(var, name)                                                         \
    const sl_analysis sl_analysis_##var = {                                             \
        name, SL_ANALYSIS_MOVES, &method_##var, kalman_check, kalman_workspace,         \
        kalman_start, kalman_cycle,                                                     \
    }
KALMAN_ENTRY(enkf, "enkf");
KALMAN_ENTRY(etkf, "etkf");
KALMAN_ENTRY(ensrf, "ensrf");
KALMAN_ENTRY(eakf, "eakf");
KALMAN_ENTRY(letkf, "letkf");

int sl_pfi_kalman_settings(const sl_pf_config *cfg, sl_enkf_config *ec)
{
    const sl_analysis *an = sl_pf_analysis_of(cfg);
    if (an == NULL || an->update != kalman_cycle)
        return 0;
    if (ec != NULL)
        kalman_settings(an, cfg, ec);
    return 1;
}

/* The entry of the table for an ensemble Kalman method, NULL if none. */
const sl_analysis *sl_pfi_kalman_of(int method)
{
    static const sl_analysis *const entries[] = {
        &sl_analysis_enkf, &sl_analysis_etkf, &sl_analysis_ensrf, &sl_analysis_eakf,
        &sl_analysis_letkf,
    };
    size_t k;
    for (k = 0; k < sizeof entries / sizeof *entries; k++)
        if (kalman_method(entries[k]) == method)
            return entries[k];
    return NULL;
}
