/* pf.c - the particle-filter cycle: forecast, weight, resample, record. */
#include "sluice/pf.h"

#include <math.h>
#include <string.h>
#ifdef __SSE2__
#include <emmintrin.h>
#endif
#ifdef _OPENMP
#include <omp.h>
#endif

#include "sluice/enkf.h"
#include "sluice/integrate.h"
#include "sluice/loglik.h"
#include "sluice/rng.h"
#include "sluice/stats.h"
#include "sluice/temper.h"
#include "sluice/weights.h"

#define MAX_THREADS 256

#include "pf_internal.h"
#include "workspace.h"

/* Share the `bytes` an analysis's workspace of aw bytes took (its
 * alignment included) among the parts: what it needs on one thread
 * without a window is the analysis's, what more it needs on the run's
 * threads the threads', what more for the window's rows the lag's. The
 * sizes of the entries never shrink as the threads or the rows grow;
 * should one, the difference stays with the analysis (the parts still
 * sum to `bytes`). */
static void split_analysis(const sl_pf_config *cfg, const sl_analysis *an, size_t m_max,
                           size_t aw, size_t bytes, size_t *part)
{
    sl_pf_config one = *cfg;
    size_t a1, at, thr, lag;
    one.threads = 1;
    a1 = an->workspace(an, &one, m_max, 0);
    at = an->workspace(an, cfg, m_max, 0);
    if (a1 == 0 || a1 > aw)
        a1 = aw;
    if (at == 0 || at > aw || at < a1)
        at = a1;
    thr = at - a1;
    lag = aw - at;
    part[SL_PF_PART_ANALYSIS] += bytes - thr - lag;
    part[SL_PF_PART_THREADS] += thr;
    part[SL_PF_PART_LAG] += lag;
}

/* Lay the buffers out in `base` (NULL: only measure). Returns the bytes
 * needed, or 0 if a size overflows. With `part` (SL_PF_NPARTS entries,
 * zeroed by the caller) every byte of the layout, alignment included,
 * is also added to the part it belongs to (sl_pf_workspace_parts), so
 * the parts sum to the bytes returned. */
static size_t layout(const sl_pf_config *cfg, unsigned char *base,
                     pf_buffers *b, size_t *part)
{
    const sl_model *md = cfg->model;
    const size_t N = cfg->N, n = md->n_state, p = md->n_param,
                 q = md->n_forcing;
    size_t off = 0, k, m_max = 0, nthr = (size_t)cfg->threads, tmp, mark = 0;
    size_t rws = sl_resample_workspace(cfg->resampler, N, N);
    /* every product below is checked once against this bound */
    const size_t big = (size_t)1 << 58;
    const sl_analysis *an = sl_pf_analysis_of(cfg);
    int weighs;
/* the bytes laid out since the last PART go to part id */
#define PART(id)                         \
    do {                                 \
        if (part != NULL)                \
            part[id] += off - mark;      \
        mark = off;                      \
    } while (0)
    if (an == NULL || an->update == NULL)
        return 0;
    weighs = (an->flags & SL_ANALYSIS_WEIGHTS) != 0;
    b->an = an;
    for (k = 0; k < cfg->T; k++) {
        size_t m = cfg->obs_first[k + 1] - cfg->obs_first[k];
        if (m > m_max)
            m_max = m;
    }
    if (N > big / 8 || n > big / N / 8 || p > big / N / 8 ||
        q > big / N / 8 || m_max > big / N / 8 || cfg->n_fun > big / N / 8 || nthr > MAX_THREADS ||
        md->work > big / 8 / MAX_THREADS || rws > big / 8)
        return 0;
    b->m_max = m_max;
    b->mwork_per = md->work;
    b->qwork_per = sl_quantile_workspace(N);
    if (b->qwork_per > big / 8 / MAX_THREADS)
        return 0;
    for (k = 0; k < 2; k++) {
        sl_ws_carve(base, &off, n * N * 8, (void **)&b->X[k]);
        sl_ws_carve(base, &off, p * N * 8, (void **)&b->Z[k]);
        sl_ws_carve(base, &off, p * N * 8, (void **)&b->P[k]);
        sl_ws_carve(base, &off, q * N * 8, (void **)&b->E[k]);
        sl_ws_carve(base, &off, N, (void **)&b->dead[k]);
    }
    sl_ws_carve(base, &off, q * N * 8, (void **)&b->U);
    PART(SL_PF_PART_ENSEMBLE);
    sl_ws_carve(base, &off, m_max * N * 8, (void **)&b->Yhat);
    PART(SL_PF_PART_PREDICTED);
    sl_ws_carve(base, &off, cfg->obs_fn != NULL ? cfg->n_fun * N * 8 : 0, (void **)&b->Yfun);
    if (cfg->n_lin > big / N / 8 - cfg->n_fun)
        return 0;
    sl_ws_carve(base, &off, cfg->derived_summary ? (cfg->n_lin + cfg->n_fun) * N * 8 : 0,
                (void **)&b->Yd);
    PART(SL_PF_PART_DERIVED);
    sl_ws_carve(base, &off, N * 8, (void **)&b->ll);
    sl_ws_carve(base, &off, N * 8, (void **)&b->logw);
    sl_ws_carve(base, &off, N * 8, (void **)&b->lw);
    sl_ws_carve(base, &off, rws * 8, (void **)&b->rwork);
    PART(SL_PF_PART_ENSEMBLE);
    sl_ws_carve(base, &off, nthr * b->mwork_per * 8, (void **)&b->mwork);
    sl_ws_carve(base, &off, nthr * b->qwork_per * 8, (void **)&b->qwork);
    sl_ws_carve(base, &off, nthr * q * 8, (void **)&b->u0);
    PART(SL_PF_PART_THREADS);
    if (sl_param_move_workspace(p) == 0)
        return 0;
    sl_ws_carve(base, &off, sl_param_move_workspace(p) * 8, (void **)&b->mv);
    PART(SL_PF_PART_MOVES);
    sl_ws_carve(base, &off, p * N * 4, (void **)&b->vid[0]);
    sl_ws_carve(base, &off, p * N * 4, (void **)&b->vid[1]);
    sl_ws_carve(base, &off, N, (void **)&b->mark);
    sl_ws_carve(base, &off, N * 4, (void **)&b->anc);
    PART(SL_PF_PART_ENSEMBLE);
    /* the tempering steps' ancestors and gathered log-likelihoods (the
     * latter also serve resample_move): members' buffers without it */
    sl_ws_carve(base, &off, N * 4, (void **)&b->tanc);
    sl_ws_carve(base, &off, N * 4, (void **)&b->tanc2);
    sl_ws_carve(base, &off, N * 8, (void **)&b->llx);
    PART(cfg->temper.ess > 0 && weighs ? SL_PF_PART_TEMPER : SL_PF_PART_ENSEMBLE);
    b->replay = weighs && !(an->flags & SL_ANALYSIS_MOVES) && cfg->inner == 0 && p > 0 &&
                cfg->param_move != NULL && cfg->param_move->replay;
    b->pcn = b->replay && cfg->move.rm_paths > 0 && !md->member_draws &&
             sl_pf_paths_random(cfg);
    b->zq = b->zs = b->zsteps = b->zlen = 0;
    if (b->pcn) {
        size_t i;
        double t = cfg->t0;
        for (i = 0; i < q; i++)
            b->zq += cfg->forcing.noise != NULL && cfg->forcing.noise[i] != SL_FORCING_EXACT;
        for (i = 0; i < n; i++)
            b->zs += cfg->state_noise != NULL && cfg->state_noise[i] > 0;
        for (k = 0; k < cfg->T; k++) {
            double tk = cfg->times[k];
            double h;
            b->zsteps += sl_pfi_nsteps(md, t, tk, &h);
            t = tk;
        }
        if (b->zsteps > big / 8 / (b->zq + 1) || cfg->T > big / 8 / (b->zs + 1))
            return 0;
        b->zlen = b->zsteps * b->zq + cfg->T * b->zs;
        if (b->zlen > big / 8 / N)
            return 0;
        sl_ws_carve(base, &off, b->zlen * N * 8, (void **)&b->zp);
        sl_ws_carve(base, &off, b->zlen * N * 8, (void **)&b->zp2);
        sl_ws_carve(base, &off, b->zlen * N * 8, (void **)&b->rzp);
        sl_ws_carve(base, &off, (q + 1) * sizeof(size_t), (void **)&b->fslot);
        sl_ws_carve(base, &off, (n + 1) * sizeof(size_t), (void **)&b->sslot);
        PART(SL_PF_PART_PATHS);
    }
    b->smc2 = weighs && cfg->inner > 0;
    if (b->replay || b->smc2) {
        if (cfg->T > big / 8 / N)
            return 0;
        if (b->replay) {
            sl_ws_carve(base, &off, cfg->T * N * 4, (void **)&b->lin);
            sl_ws_carve(base, &off, cfg->T * N * 4, (void **)&b->path);
        } else {
            sl_ws_carve(base, &off, n * N * 8, (void **)&b->RX2);
            sl_ws_carve(base, &off, p * N * 8, (void **)&b->RZ2);
            sl_ws_carve(base, &off, p * N * 8, (void **)&b->RP2);
            sl_ws_carve(base, &off, q * N * 8, (void **)&b->RE2);
            sl_ws_carve(base, &off, N * 8, (void **)&b->rlw);
            sl_ws_carve(base, &off, p * N * 8, (void **)&b->ZG);
            sl_ws_carve(base, &off, p * N * 8, (void **)&b->ZG2);
            sl_ws_carve(base, &off, N, (void **)&b->rdead2);
        }
        sl_ws_carve(base, &off, N * 4, (void **)&b->idmap);
        sl_ws_carve(base, &off, n * N * 8, (void **)&b->X0);
        sl_ws_carve(base, &off, n * N * 8, (void **)&b->RX);
        sl_ws_carve(base, &off, p * N * 8, (void **)&b->RZ);
        sl_ws_carve(base, &off, p * N * 8, (void **)&b->RP);
        sl_ws_carve(base, &off, q * N * 8, (void **)&b->RE);
        sl_ws_carve(base, &off, q * N * 8, (void **)&b->RU);
        sl_ws_carve(base, &off, N * 8, (void **)&b->cll);
        sl_ws_carve(base, &off, N * 8, (void **)&b->llk);
        sl_ws_carve(base, &off, N * 8, (void **)&b->rll);
        sl_ws_carve(base, &off, N * 8, (void **)&b->rllk);
        sl_ws_carve(base, &off, N * 8, (void **)&b->lp);
        sl_ws_carve(base, &off, N * 8, (void **)&b->rlp);
        sl_ws_carve(base, &off, N * 8, (void **)&b->ru);
        sl_ws_carve(base, &off, N * 8, (void **)&b->tmp);
        sl_ws_carve(base, &off, N, (void **)&b->rdead);
        sl_ws_carve(base, &off, N, (void **)&b->acc);
        sl_ws_carve(base, &off, p, (void **)&b->est);
        sl_ws_carve(base, &off, sl_param_move_workspace(p) * 8, (void **)&b->mvlast);
        PART(SL_PF_PART_MOVES);
    }
    /* the forecast before the state noise, for an analysis that needs it */
    sl_ws_carve(base, &off, an->flags & SL_ANALYSIS_NOISE_FREE ? n * N * 8 : 0,
                (void **)&b->wk_m);
    PART(SL_PF_PART_ANALYSIS);
    b->nwin = cfg->lag < cfg->T ? cfg->lag : cfg->T;
    b->wids = an == &sl_analysis_pf_weak && cfg->n_comp > 0 ? cfg->n_comp : 0;
    if (b->nwin > 0) {
        /* a slot: the members' states and parameters (v x N doubles),
         * then the index each column had when its cycle was stored (N
         * uint32, resampled with the columns: their ancestors there; the
         * weakly coupled particle filter: a row of ids per component) */
        const size_t nid = b->wids > 0 ? b->wids : 1;
        if (nid > big / 8 / N || b->nwin > big / 8 / N / (n + p + nid))
            return 0;
        sl_ws_carve(base, &off, (b->nwin + 1) * sizeof(double *), (void **)&b->win);
        for (k = 0; k <= b->nwin; k++)
            sl_ws_carve(base, &off, (n + p) * N * 8 + nid * N * 4,
                        base != NULL ? (void **)&b->win[k] : NULL);
        if (base != NULL)
            b->wspare = b->win[b->nwin];
        b->wstride = ((n + p) * N * 8 + nid * N * 4 + SL_WS_ALIGN - 1) / SL_WS_ALIGN * SL_WS_ALIGN;
        b->wslot0 = base != NULL ? b->win[0] : NULL;
        sl_ws_carve(base, &off, (n + p) * N * 8, (void **)&b->wtmp);
        PART(SL_PF_PART_LAG);
    }
    /* the analysis's own buffers */
    b->awork = NULL;
    if (an->workspace != NULL) {
        size_t aw = an->workspace(an, cfg, m_max, b->nwin);
        if (aw == 0)
            return 0;
        sl_ws_carve(base, &off, aw, &b->awork);
        if (part != NULL)
            split_analysis(cfg, an, m_max, aw, off - mark, part);
        mark = off;
    }
    tmp = sl_ws_carve(base, &off, nthr * sizeof(sl_error), (void **)&b->terr);
    PART(SL_PF_PART_THREADS);
    if (cfg->ranks != NULL) {
        const size_t P = cfg->ranks->size > 0 ? (size_t)cfg->ranks->size : 1;
        const size_t nsq = sl_pfi_summary_count(cfg) * cfg->nq;
        sl_ws_carve(base, &off, P * sizeof(size_t), (void **)&b->rk_counts);
        sl_ws_carve(base, &off, P * 8, (void **)&b->rk_stats);
        sl_ws_carve(base, &off, nsq * sizeof(double), (void **)&b->rk_qsend);
        tmp = sl_ws_carve(base, &off, nsq * sizeof(double), (void **)&b->rk_qrecv);
        PART(SL_PF_PART_ENSEMBLE);
    }
#undef PART
    b->bytes = sl_ws_size(tmp);
    return b->bytes;
}

int sl_pf_paths_random(const sl_pf_config *cfg)
{
    const sl_forcing *f = &cfg->forcing;
    size_t i;
    if (cfg->model != NULL && cfg->model->member_draws)
        return 1;
    if (f->noise != NULL)
        for (i = 0; i < f->q; i++)
            if (f->noise[i] != SL_FORCING_EXACT && f->sd != NULL && f->sd[i] > 0)
                return 1;
    if (cfg->state_noise != NULL && cfg->model != NULL)
        for (i = 0; i < cfg->model->n_state; i++)
            if (cfg->state_noise[i] > 0)
                return 1;
    return 0;
}

const sl_param_mover *sl_pf_auto_move(const sl_pf_config *cfg)
{
    /* the weakly coupled particle filter resamples its components apart:
     * no move at resampling can follow it */
    if (sl_pf_analysis_of(cfg) == &sl_analysis_pf_weak)
        return &sl_param_move_random_walk;
    return sl_pf_paths_random(cfg) ? &sl_param_move_kernel : &sl_param_move_resample_move;
}

size_t sl_pfi_layout(const sl_pf_config *cfg, unsigned char *base, pf_buffers *b)
{
    return layout(cfg, base, b, NULL);
}

size_t sl_pf_workspace(const sl_pf_config *cfg)
{
    pf_buffers b;
    return layout(cfg, NULL, &b, NULL);
}

size_t sl_pf_workspace_parts(const sl_pf_config *cfg, sl_pf_part part[SL_PF_NPARTS])
{
    static const char *const names[SL_PF_NPARTS] = {
        "ensemble", "predicted observations", "derived quantities", "analysis",
        "lag window", "parameter moves", "path draws", "tempering", "thread scratch"};
    const int smc2 = cfg->inner > 0;
    const char *const options[SL_PF_NPARTS][2] = {
        {"members", smc2 ? "inner_members" : NULL},
        {"members", NULL},
        {"operators", "derived_summary"},
        {"method", "members"},
        {"lag", NULL},
        {"param_move", smc2 ? "inner_members" : NULL},
        {"move_paths", "param_move"},
        {"temper_ess", NULL},
        {"threads", NULL}};
    size_t bytes[SL_PF_NPARTS], total, k;
    pf_buffers b;
    memset(bytes, 0, sizeof bytes);
    total = layout(cfg, NULL, &b, bytes);
    for (k = 0; k < SL_PF_NPARTS; k++) {
        part[k].name = names[k];
        part[k].option[0] = options[k][0];
        part[k].option[1] = options[k][1];
        part[k].bytes = total != 0 ? bytes[k] : 0;
    }
    return total;
}

/* ---------------------------------------------------------------- checks */

/* A weakly coupled run: every row and observation in a component, and
 * an analysis that knows how to keep the components apart. */
static sl_status check_coupling(const sl_pf_config *cfg, const sl_analysis *an,
                                sl_error *err)
{
    const size_t v = cfg->model->n_state + cfg->model->n_param, m = cfg->obs_first[cfg->T];
    size_t k;
    if (cfg->n_comp < 1 || cfg->comp == NULL || (m > 0 && cfg->obs_comp == NULL))
        return sl_fail(err, SL_EINVAL, "badcoupling",
                       "weak coupling needs the components of the states, parameters and "
                       "observations");
    for (k = 0; k < v; k++)
        if (cfg->comp[k] < 0 || (size_t)cfg->comp[k] >= cfg->n_comp)
            return sl_fail(err, SL_EINVAL, "badcoupling",
                           "row %lu of the states and parameters has component %d; "
                           "expected 0 to %lu", (unsigned long)(k + 1), cfg->comp[k],
                           (unsigned long)(cfg->n_comp - 1));
    for (k = 0; k < m; k++)
        if (cfg->obs_comp[k] < 0 || (size_t)cfg->obs_comp[k] >= cfg->n_comp)
            return sl_fail(err, SL_EINVAL, "badcoupling",
                           "observation %lu has component %d; expected 0 to %lu",
                           (unsigned long)(k + 1), cfg->obs_comp[k],
                           (unsigned long)(cfg->n_comp - 1));
    if (an == &sl_analysis_wenkf)
        return sl_fail(err, SL_EINVAL, "badcoupling",
                       "the weighted ensemble Kalman filter runs strongly coupled only");
    if (an != &sl_analysis_pf_weak && an != &sl_analysis_enkf && an != &sl_analysis_etkf &&
        an != &sl_analysis_ensrf && an != &sl_analysis_eakf && an != &sl_analysis_letkf)
        return sl_fail(err, SL_EINVAL, "badcoupling",
                       "the analysis '%s' runs strongly coupled only", an->name);
    if (an != &sl_analysis_pf_weak && cfg->adaptive_inflation)
        return sl_fail(err, SL_EINVAL, "badcoupling",
                       "weak coupling takes a fixed inflation, not an adaptive one");
    if (an != &sl_analysis_pf_weak && cfg->comp_lag != NULL)
        return sl_fail(err, SL_EINVAL, "badcoupling",
                       "a lag per component needs the particle filter (the ensemble Kalman "
                       "smoother updates the whole window at once)");
    return SL_OK;
}

sl_status sl_pf_check(const sl_pf_config *cfg, sl_error *err)
{
    const sl_model *md = cfg->model;
    const sl_analysis *an = sl_pf_analysis_of(cfg);
    size_t k, n, p, v, m;
    int weighs;
    if (md == NULL || md->step == NULL)
        return sl_fail(err, SL_EINVAL, "badconfig", "no model to run");
    if (an == NULL)
        return sl_fail(err, SL_EINVAL, "badconfig", "unknown ensemble Kalman method %d",
                       cfg->enkf->method);
    if (an->update == NULL)
        return sl_fail(err, SL_EINVAL, "badconfig", "the analysis '%s' has no update",
                       an->name != NULL ? an->name : "");
    if (cfg->analysis != NULL && cfg->wenkf && an != &sl_analysis_wenkf)
        return sl_fail(err, SL_EINVAL, "badconfig",
                       "the analysis '%s' was asked for together with the weighted "
                       "ensemble Kalman filter", an->name != NULL ? an->name : "");
    weighs = (an->flags & SL_ANALYSIS_WEIGHTS) != 0;
    n = md->n_state;
    p = md->n_param;
    v = n + p;
    if (cfg->N < 1 || cfg->N > SL_RESAMPLE_MAX)
        return sl_fail(err, SL_EINVAL, "badconfig",
                       "the number of members must be 1 to %lu, got %lu",
                       (unsigned long)SL_RESAMPLE_MAX, (unsigned long)cfg->N);
    if (n < 1)
        return sl_fail(err, SL_EINVAL, "badconfig", "the model has no states");
    if (!(md->dt > 0) || !isfinite(md->dt))
        return sl_fail(err, SL_EINVAL, "badstep",
                       "the model's time step must be finite and > 0, got %g", md->dt);
    if (cfg->threads < 1 || cfg->threads > MAX_THREADS)
        return sl_fail(err, SL_EINVAL, "badconfig",
                       "threads must be 1 to %d, got %d", MAX_THREADS,
                       cfg->threads);
    if (!isfinite(cfg->t0))
        return sl_fail(err, SL_EINVAL, "badtimes", "the start time is not finite");
    if (cfg->T < 1 || cfg->times == NULL || cfg->obs_first == NULL)
        return sl_fail(err, SL_EINVAL, "badtimes", "the run has no cycle times");
    for (k = 0; k < cfg->T; k++) {
        double t = cfg->times[k], prev = k ? cfg->times[k - 1] : cfg->t0;
        if (!isfinite(t))
            return sl_fail(err, SL_EINVAL, "badtimes",
                           "cycle time %lu is not finite", (unsigned long)(k + 1));
        if (t < cfg->t0)
            return sl_fail(err, SL_EINVAL, "badtimes",
                           "cycle time %lu (%g) lies before the start time %g",
                           (unsigned long)(k + 1), t, cfg->t0);
        if (k > 0 && !(t > prev))
            return sl_fail(err, SL_EINVAL, "badtimes",
                           "cycle times must increase: time %lu (%g) follows %g",
                           (unsigned long)(k + 1), t, prev);
        if (md->discrete) {
            double steps = (t - prev) / md->dt;
            if (fabs(steps - floor(steps + 0.5)) > 1e-9 * (1.0 + steps))
                return sl_fail(err, SL_EINVAL, "offgrid",
                               "time %g is not a whole number of model steps "
                               "(dt = %g) after %g", t, md->dt, prev);
        }
        if (cfg->obs_first[k + 1] < cfg->obs_first[k])
            return sl_fail(err, SL_EINVAL, "badobs",
                           "observation groups out of order at cycle %lu",
                           (unsigned long)(k + 1));
    }
    if (cfg->obs_first[0] != 0)
        return sl_fail(err, SL_EINVAL, "badobs", "observation groups must start at 0");
    m = cfg->obs_first[cfg->T];
    if (cfg->n_lin > 0 && cfg->H == NULL)
        return sl_fail(err, SL_EINVAL, "badoperator", "the linear operator has no matrix");
    for (k = 0; k < cfg->n_lin * v; k++)
        if (!isfinite(cfg->H[k]))
            return sl_fail(err, SL_EINVAL, "badoperator",
                           "the linear operator has a non-finite entry (row %lu, column %lu)",
                           (unsigned long)(k % cfg->n_lin + 1),
                           (unsigned long)(k / cfg->n_lin + 1));
    if (cfg->n_fun > 0 && cfg->obs_fn == NULL)
        return sl_fail(err, SL_EINVAL, "badoperator", "the observation operator has no function");
    for (k = 0; k < m; k++)
        if (cfg->var[k] >= v + cfg->n_lin + cfg->n_fun)
            return sl_fail(err, SL_EINVAL, "badobs",
                           "observation %lu refers to quantity %lu; the model and its "
                           "operators have %lu",
                           (unsigned long)(k + 1), (unsigned long)(cfg->var[k] + 1),
                           (unsigned long)(v + cfg->n_lin + cfg->n_fun));
    if (m > 0) {
        sl_status st = sl_loglik_check(m, cfg->y, cfg->sigma, cfg->aux,
                                       cfg->family, err);
        if (st != SL_OK)
            return st;
    }
    if (cfg->forcing.q != md->n_forcing)
        return sl_fail(err, SL_EINVAL, "badforcing",
                       "the model takes %lu forcing series, got %lu",
                       (unsigned long)md->n_forcing, (unsigned long)cfg->forcing.q);
    if (md->n_forcing > 0) {
        const sl_forcing *f = &cfg->forcing;
        double last_start = cfg->times[cfg->T - 1] - md->dt;
        if (f->nt < 1 || f->time == NULL || f->value == NULL)
            return sl_fail(err, SL_EINVAL, "badforcing", "the forcing series are empty");
        for (k = 0; k < f->nt; k++) {
            if (!isfinite(f->time[k]) || (k > 0 && !(f->time[k] > f->time[k - 1])))
                return sl_fail(err, SL_EINVAL, "badforcing",
                               "forcing times must be finite and increasing (point %lu)",
                               (unsigned long)(k + 1));
        }
        for (k = 0; k < f->nt * f->q; k++)
            if (!isfinite(f->value[k]))
                return sl_fail(err, SL_EINVAL, "badforcing",
                               "forcing value %lu of series %lu is not finite",
                               (unsigned long)(k % f->nt + 1),
                               (unsigned long)(k / f->nt + 1));
        if (f->time[0] > cfg->t0)
            return sl_fail(err, SL_EINVAL, "forcingrange",
                           "the forcing starts at %g, after the start of the run (%g)",
                           f->time[0], cfg->t0);
        if (!f->hold && f->time[f->nt - 1] < last_start)
            return sl_fail(err, SL_EINVAL, "forcingrange",
                           "the forcing ends at %g, before the run's last step (%g)",
                           f->time[f->nt - 1], last_start);
        if (f->noise != NULL)
            for (k = 0; k < f->q; k++) {
                if (sl_forcing_noise_get(f->noise[k]) == NULL)
                    return sl_fail(err, SL_EINVAL, "badforcing",
                                   "unknown perturbation kind for forcing %lu",
                                   (unsigned long)(k + 1));
                if (f->noise[k] != SL_FORCING_EXACT &&
                    (!(f->sd[k] >= 0) || !isfinite(f->sd[k]) ||
                     !(f->phi[k] >= 0) || !(f->phi[k] < 1)))
                    return sl_fail(err, SL_EINVAL, "badforcing",
                                   "forcing %lu: perturbation sd must be >= 0 and "
                                   "AR(1) coefficient in [0, 1)", (unsigned long)(k + 1));
            }
    }
    if (cfg->state_noise != NULL)
        for (k = 0; k < n; k++)
            if (!(cfg->state_noise[k] >= 0) || !isfinite(cfg->state_noise[k]))
                return sl_fail(err, SL_EINVAL, "badconfig",
                               "state noise %lu must be finite and >= 0",
                               (unsigned long)(k + 1));
    if (p > 0 && cfg->ptrans == NULL)
        return sl_fail(err, SL_EINVAL, "badconfig", "parameter transforms missing");
    if (cfg->prior != NULL)
        for (k = 0; k < p; k++)
            if (sl_dist_get(cfg->prior[k].dist) == NULL)
                return sl_fail(err, SL_EINVAL, "badprior",
                               "parameter %lu: unknown prior distribution id %d "
                               "(expected 0 to %d)",
                               (unsigned long)(k + 1), cfg->prior[k].dist, SL_DIST_COUNT - 1);
    if (cfg->param_move != NULL) {
        sl_status st = cfg->param_move->check(&cfg->move, p, err);
        if (st != SL_OK)
            return st;
        if (cfg->param_move->replay && weighs && p > 0) {
            if (cfg->prior == NULL)
                return sl_fail(err, SL_EINVAL, "badconfig",
                               "the move '%s' needs the parameters' priors",
                               cfg->param_move->name);
            for (k = 0; k < p; k++) {
                st = sl_prior_check(&cfg->prior[k], k + 1, err);
                if (st != SL_OK)
                    return st;
            }
            if (cfg->lag > 0)
                return sl_fail(err, SL_EINVAL, "badconfig",
                               "the move '%s' re-runs whole paths and does not "
                               "carry a fixed-lag window: run it without a lag, "
                               "or smooth with the kernel move", cfg->param_move->name);
        }
    }
    if (cfg->resampler == NULL)
        return sl_fail(err, SL_EINVAL, "badconfig", "no resampling scheme");
    if (cfg->weak) {
        sl_status st = check_coupling(cfg, an, err);
        if (st != SL_OK)
            return st;
    }
    if (an->check != NULL) {
        sl_status st = an->check(an, cfg, err);
        if (st != SL_OK)
            return st;
    }
    /* re-running a path would not repeat the moves of the analysis */
    if (weighs && (an->flags & SL_ANALYSIS_MOVES) && p > 0 && cfg->param_move != NULL &&
        cfg->param_move->replay)
        return sl_fail(err, SL_EINVAL, "badconfig",
                       "the analysis '%s' moves members: the move '%s', which re-runs "
                       "paths, cannot follow it", an->name, cfg->param_move->name);
    if (cfg->inner > 0) {
        sl_param_move_opts mo = cfg->move;
        sl_status st;
        if (cfg->N % cfg->inner != 0)
            return sl_fail(err, SL_EINVAL, "badconfig",
                           "SMC2: the %lu members must be a whole number of groups of %lu",
                           (unsigned long)cfg->N, (unsigned long)cfg->inner);
        if (an != &sl_analysis_pf || cfg->lag > 0 || cfg->temper.ess > 0 ||
            cfg->keep_history)
            return sl_fail(err, SL_EINVAL, "badconfig",
                           "SMC2 runs without an ensemble Kalman method (or another "
                           "analysis than the particle filter's), a lag, "
                           "tempering or a kept history");
        if (p > 0 && cfg->prior == NULL)
            return sl_fail(err, SL_EINVAL, "badconfig", "SMC2 needs the parameters' priors");
        for (k = 0; k < p; k++)
            if ((st = sl_prior_check(&cfg->prior[k], k + 1, err)) != SL_OK)
                return st;
        if ((st = sl_param_move_resample_move.check(&mo, p, err)) != SL_OK)
            return st;
    }
    {
        sl_status st = sl_temper_check(&cfg->temper, err);
        if (st != SL_OK)
            return st;
    }
    if (!(cfg->threshold >= 0 && cfg->threshold <= 1))
        return sl_fail(err, SL_EINVAL, "badconfig",
                       "the resampling threshold must lie in [0, 1], got %g",
                       cfg->threshold);
    if (cfg->summary_rows != NULL)
        for (k = 0; k < cfg->n_summary_rows; k++) {
            size_t r = cfg->summary_rows[k];
            if (r >= n + p || (k > 0 && r <= cfg->summary_rows[k - 1]))
                return sl_fail(err, SL_EINVAL, "badconfig",
                               "summary row %lu must be a row from 0 to %lu after "
                               "the one before it, got %lu",
                               (unsigned long)(k + 1), (unsigned long)(n + p - 1),
                               (unsigned long)r);
        }
    for (k = 0; k < cfg->nq; k++)
        if (!(cfg->probs[k] >= 0 && cfg->probs[k] <= 1))
            return sl_fail(err, SL_EINVAL, "badconfig",
                           "quantile level %lu must lie in [0, 1], got %g",
                           (unsigned long)(k + 1), cfg->probs[k]);
    if (cfg->checkpoint != NULL && cfg->checkpoint_every < 1)
        return sl_fail(err, SL_EINVAL, "badconfig",
                       "checkpoints need a number of cycles >= 1 between them");
    if (sl_pf_workspace(cfg) == 0)
        return sl_fail(err, SL_ENOMEM, "nomemory",
                       "the run's workspace size overflows");
    /* the run's length, refused before any work when it cannot be counted
     * or could not end (sl_run_steps); after the sizes, so that a run too
     * large for any memory says so */
    return sl_run_steps(cfg->t0, cfg->times, cfg->T, md->dt, md->discrete, cfg->N, n,
                        NULL, err);
}

/* ----------------------------------------------------------- checkpoints */

uint64_t sl_fnv1a(uint64_t h, const void *data, size_t n)
{
    /* Fowler-Noll-Vo FNV-1a, 64 bits: xor a byte, multiply by the prime */
    const unsigned char *c = (const unsigned char *)data;
    size_t i;
    for (i = 0; i < n; i++) {
        h ^= c[i];
        h *= 0x100000001b3ULL;
    }
    return h;
}

sl_status sl_pf_snapshot_check(const sl_pf_config *cfg, const sl_pf_snapshot *snap,
                               sl_error *err)
{
    const sl_pf_snapshot_head *h = &snap->head;
    pf_buffers b;
    size_t bytes = layout(cfg, NULL, &b, NULL);
    if (h->magic != SL_PF_SNAPSHOT_MAGIC)
        return sl_fail(err, SL_EINVAL, "badsnapshot", "not a snapshot of a filter run");
    if (h->version != SL_PF_SNAPSHOT_VERSION)
        return sl_fail(err, SL_EINVAL, "badsnapshot",
                       "a snapshot of version %lu; this build reads version %u",
                       (unsigned long)h->version, SL_PF_SNAPSHOT_VERSION);
    if (h->N != cfg->N || h->T != cfg->T || h->work_bytes != bytes)
        return sl_fail(err, SL_EINVAL, "badsnapshot",
                       "a snapshot of a run of another size (%lu members, %lu cycles, "
                       "%lu bytes of workspace; this run has %lu, %lu and %lu)",
                       (unsigned long)h->N, (unsigned long)h->T,
                       (unsigned long)h->work_bytes, (unsigned long)cfg->N,
                       (unsigned long)cfg->T, (unsigned long)bytes);
    if (h->next < 1 || h->next > cfg->T || h->cur > 1 || h->s > UINT32_MAX ||
        h->s_now > UINT32_MAX || h->swapped >= (1u << 13) || h->wspare > b.nwin ||
        (cfg->forcing.nt > 0 && h->fidx >= cfg->forcing.nt) || snap->w == NULL ||
        snap->work == NULL)
        return sl_fail(err, SL_EINVAL, "badsnapshot", "the snapshot's header is damaged");
    return SL_OK;
}

sl_status sl_pfi_snap_restore(const sl_pf_config *cfg, pf_buffers *b, void *work, double *w,
                              sl_error *err)
{
    const sl_pf_snapshot *sn = cfg->resume;
    const sl_pf_snapshot_head *h = &sn->head;
    size_t k;
    sl_status st = sl_pf_snapshot_check(cfg, sn, err);
    if (st != SL_OK)
        return st;
    memcpy(work, sn->work, b->bytes);
    memcpy(w, sn->w, cfg->N * sizeof(double));
    b->rm_adapt = h->rm_adapt;
    b->pcn_beta = h->pcn_beta;
    b->s_now = (uint32_t)h->s_now;
    SL_PFI_ORDER(double, b->ll, b->llx, h->swapped & 1);
    SL_PFI_ORDER(uint32_t, b->tanc, b->tanc2, (h->swapped >> 1) & 1);
    SL_PFI_ORDER(double, b->zp, b->zp2, (h->swapped >> 2) & 1);
    if (b->nwin > 0) {
        /* the window's slot numbers back to addresses */
        for (k = 0; k < b->nwin; k++) {
            uintptr_t slot = (uintptr_t)b->win[k];
            if (slot > b->nwin || slot == h->wspare)
                return sl_fail(err, SL_EINVAL, "badsnapshot",
                               "the snapshot's window is damaged");
            b->win[k] = b->wslot0 + slot * (b->wstride / 8);
        }
        b->wspare = b->wslot0 + h->wspare * (b->wstride / 8);
    }
    return SL_OK;
}

sl_status sl_pfi_snap_call(const sl_pf_config *cfg, pf_buffers *b, void *work, double *w,
                           sl_pf_snapshot *sn, sl_error *err)
{
    sl_pf_snapshot_head *h = &sn->head;
    sl_status st;
    size_t k;
    h->magic = SL_PF_SNAPSHOT_MAGIC;
    h->version = SL_PF_SNAPSHOT_VERSION;
    h->work_bytes = b->bytes;
    h->N = cfg->N;
    h->T = cfg->T;
    h->s_now = b->s_now;
    h->rm_adapt = b->rm_adapt;
    h->pcn_beta = b->pcn_beta;
    h->swapped |= SL_PFI_AFTER(b->ll, b->llx) | SL_PFI_AFTER(b->tanc, b->tanc2) << 1 |
                  SL_PFI_AFTER(b->zp, b->zp2) << 2;
    h->wspare = 0;
    if (b->nwin > 0) {
        /* addresses in the workspace as slot numbers, for the call only */
        h->wspare = (uint64_t)((size_t)(b->wspare - b->wslot0) * 8 / b->wstride);
        for (k = 0; k < b->nwin; k++)
            b->win[k] = (double *)(uintptr_t)((size_t)(b->win[k] - b->wslot0) * 8 / b->wstride);
    }
    sn->w = w;
    sn->work = work;
    st = cfg->checkpoint(cfg->checkpoint_ctx, sn, err);
    if (b->nwin > 0)
        for (k = 0; k < b->nwin; k++)
            b->win[k] = b->wslot0 + (uintptr_t)b->win[k] * (b->wstride / 8);
    return st;
}

/* ------------------------------------------------------------ the cycle */

/* The forcing's values at t, before any noise, into u0; k tracks the
 * forcing interval (the last record at or before t) and is returned. */
static size_t forcing_base(const sl_forcing *f, double t, size_t k, double *u0)
{
    size_t i;
    while (k + 1 < f->nt && f->time[k + 1] <= t)
        k++;
    for (i = 0; i < f->q; i++) {
        const double *col = f->value + i * f->nt;
        if (f->hold || k + 1 >= f->nt || t <= f->time[k]) {
            u0[i] = col[k];
        } else {
            double a = (t - f->time[k]) / (f->time[k + 1] - f->time[k]);
            u0[i] = col[k] + a * (col[k + 1] - col[k]);
        }
    }
    return k;
}

/* The forcing of member j at step s: its value U (q x N) from the base
 * values u0, advancing its AR(1) perturbation E by one step. Member j
 * draws from the stream of index ids[j] (b->m0 + j when ids is NULL). */
static void forcing_member(const sl_pf_config *cfg, const pf_buffers *b, double *E,
                           double *U, const double *u0, uint32_t s, size_t j,
                           const uint32_t *ids, uint64_t seed, double *zst, int zread)
{
    const sl_forcing *f = &cfg->forcing;
    const size_t q = f->q;
    double *e = E + j * q, *u = U + j * q;
    sl_stream st;
    size_t i;
    if (f->noise == NULL) {
        memcpy(u, u0, q * sizeof(double));
        return;
    }
    sl_stream_init(&st, seed, ids != NULL ? ids[j] : (uint32_t)(b->m0 + j), s,
                   SL_PURPOSE_FORCING);
    for (i = 0; i < q; i++) {
        const sl_forcing_noise_type *kind = sl_forcing_noise_get(f->noise[i]);
        double sd = f->sd[i], phi = f->phi[i], z;
        if (!kind->draws) {
            u[i] = u0[i];
            continue;
        }
        if (zst != NULL && zread) {
            z = zst[j * b->zlen + (size_t)s * b->zq + b->fslot[i]];
        } else {
            z = sl_stream_normal(&st);
            if (zst != NULL)
                zst[j * b->zlen + (size_t)s * b->zq + b->fslot[i]] = z;
        }
        e[i] = (s == 0) ? sd * z : phi * e[i] + sqrt(1.0 - phi * phi) * sd * z;
        u[i] = kind->apply(u0[i], e[i], sd);
    }
}

/* The forcing of every member at step s, from the values at t (*idx
 * tracks the forcing interval) */
static void eval_forcing(const sl_pf_config *cfg, pf_buffers *b, double *E, double *U,
                         double t, uint32_t s, size_t *idx, const uint32_t *ids,
                         uint64_t seed, double *zst, int zread)
{
    const size_t N = cfg->N;
    size_t j;
    *idx = forcing_base(&cfg->forcing, t, *idx, b->u0);
    for (j = 0; j < N; j++)
        forcing_member(cfg, b, E, U, b->u0, s, j, ids, seed, zst, zread);
}

/* One model step of members j0..j1-1 under stream counter s: the block
 * in one call, or, with ids (re-run paths) and a model that draws by
 * member index, each member j alone under index ids[j] (the first
 * failure ends it) */
static sl_status step_members(const sl_pf_config *cfg, const pf_buffers *b, double *X,
                              const double *P, const double *U, size_t j0, size_t j1,
                              double t, double t_end, uint32_t s, const uint32_t *ids,
                              uint64_t seed, double *mwork, sl_error *err)
{
    const sl_model *md = cfg->model;
    const size_t n = md->n_state, p = md->n_param, q = md->n_forcing;
    size_t j;
    sl_status st = SL_OK;
    if (ids == NULL || !md->member_draws)
        return md->step(md, t, t_end, b->m0 + j0, j1 - j0, X + j0 * n, P + j0 * p, U + j0 * q,
                        seed, s, mwork, err);
    for (j = j0; j < j1 && st == SL_OK; j++)
        st = md->step(md, t, t_end, ids[j], 1, X + j * n, P + j * p, U + j * q, seed, s, mwork,
                      err);
    return st;
}

/* Model steps from t to tk, and their length *h: whole steps of dt for a
 * map, else equal steps that land exactly on tk. Every pass over the
 * record (the run, resample-move's re-runs, SMC2's filters) counts its
 * steps here, so their step indices (the streams' counters) agree. */
size_t sl_pfi_nsteps(const sl_model *md, double t, double tk, double *h)
{
    double c;
    size_t nsteps;
    /* sl_pf_check has refused a run whose spans it cannot count */
    (void)sl_span_steps(t, tk, md->dt, md->discrete, &c, NULL);
    nsteps = c <= SL_RUN_STEPS_MAX ? (size_t)c : 0;
    if (md->discrete)
        *h = md->dt;
    else
        *h = nsteps ? (tk - t) / (double)nsteps : 0.0;
    return nsteps;
}

/* The failure of a run whose poll asked it to stop during cycle `at` */
static sl_status interrupted(const sl_pf_config *cfg, size_t at, sl_error *err)
{
    return sl_fail(err, SL_EINTERRUPT, "interrupted",
                   "the run was interrupted at cycle %lu of %lu", (unsigned long)(at + 1),
                   (unsigned long)cfg->T);
}

/* Steps per call of the model's span (its forced span when it has
 * forcing) for `count` members: about SPAN_WORK member-states of work a
 * call, so a run polls every few milliseconds; 0 when the model has no
 * such span or must step member by member (re-run paths whose draws
 * follow member indices).
 * The sequential forecast gives a call at most SPAN_CHUNK members, so
 * that even at N = 1e5 a call takes its members through many steps (at
 * one step a call the blocks are transposed every step). */
#define SPAN_WORK ((size_t)1 << 20)
#define SPAN_CHUNK ((size_t)4096)
static size_t span_steps(const sl_pf_config *cfg, size_t count, const uint32_t *ids)
{
    const sl_model *md = cfg->model;
    size_t w = count * md->n_state, k;
    if ((md->n_forcing > 0 ? md->span_forced == NULL : md->span == NULL) ||
        (ids != NULL && md->member_draws))
        return 0;
    k = w > 0 ? SPAN_WORK / w : 1;
    return k > 0 ? k : 1;
}

/* The interval on nthr threads in one parallel region. The members go in
 * contiguous chunks, about REGION_CHUNKS a thread: thread t first takes
 * chunk t, the rest are dealt as threads come free; one thread takes its
 * chunk through every step of the interval.
 * Each member meets the same forcing and step calls as in the
 * step-by-step order, so its states are the same bits for any number of
 * threads. A failure is the one that order reports: of the earliest
 * failing step, the lowest chunk's (a chunk stops at a step later than
 * the earliest failure seen). Thread 0, the caller's own, polls: at
 * every step of its chunks, at least one chunk an interval.
 * Returns the failing step in *fail (nsteps if none). */
#define REGION_CHUNKS 8
#define REGION_MIN_CHUNK 8
/* A chunk's states, parameters, forcings and their perturbations should
 * stay in a core's own cache through the interval's steps: at most about
 * REGION_CHUNK_BYTES of them, in whole model blocks. */
#define REGION_CHUNK_BYTES ((size_t)256 * 1024)
static size_t region_chunk_cap(const sl_model *md)
{
    const size_t row = (md->n_state + md->n_param + 2 * md->n_forcing) * sizeof(double);
    return REGION_CHUNK_BYTES / (row > 0 ? row : 1);
}
static size_t region_chunk(const sl_model *md, size_t N, int nthr)
{
    /* one thread has no load to balance: chunks as large as the cache
     * allows */
    const size_t nper = nthr > 1 ? (size_t)nthr * REGION_CHUNKS : 1;
    size_t cs = (N + nper - 1) / nper, cap = region_chunk_cap(md);
    cap = cap / SL_MODEL_BLOCK * SL_MODEL_BLOCK;
    if (cap < SL_MODEL_BLOCK)
        cap = SL_MODEL_BLOCK;
    if (cs > cap)
        cs = cap;
    return cs < REGION_MIN_CHUNK ? REGION_MIN_CHUNK : cs;
}
/* What the forcing of a chunk's forced span needs: the forcing of
 * member j0 + i at step l of the interval, as the step-by-step order
 * makes it. The forcing interval is tracked from step to step as that
 * order tracks it: from fk0 (an interval at or before that of the span's
 * first step) when a block starts again, else from the previous step's
 * fk (last_l: the previous step, SIZE_MAX before the first). */
typedef struct {
    const sl_pf_config *cfg;
    const pf_buffers *b;
    double *E, *U, *u0, *zst, t0, h;
    size_t j0, fk0, fk, last_l;
    uint32_t s0;
    const uint32_t *ids;
    uint64_t seed;
    int zread;
} chunk_forcing;

static void chunk_forcing_fill(void *ctx, size_t l, size_t i0, size_t count)
{
    chunk_forcing *f = (chunk_forcing *)ctx;
    size_t j;
    if (f->last_l == SIZE_MAX || l <= f->last_l)
        f->fk = f->fk0;
    f->last_l = l;
    f->fk = forcing_base(&f->cfg->forcing, f->t0 + (double)l * f->h, f->fk, f->u0);
    for (j = f->j0 + i0; j < f->j0 + i0 + count; j++)
        forcing_member(f->cfg, f->b, f->E, f->U, f->u0, f->s0 + (uint32_t)l, j, f->ids,
                       f->seed, f->zst, f->zread);
}

static sl_status forecast_region(const sl_pf_config *cfg, pf_buffers *b, double *X,
                                 const double *P, double *E, double *U, double t0,
                                 double tk, double h, size_t nsteps, size_t at, uint32_t s0,
                                 size_t fidx0, const uint32_t *ids, uint64_t seed,
                                 double *zst, int zread, int through, int nthr,
                                 size_t *fail, sl_error *err)
{
    const size_t N = cfg->N, q = cfg->model->n_forcing;
    const sl_model *md = cfg->model;
    size_t cs = region_chunk(md, N, nthr), nch, first = nsteps, fstep[MAX_THREADS], per,
           fchunk[MAX_THREADS], finished = 0, next = (size_t)nthr;
    int stop = 0, k, best = -1;
    nch = (N + cs - 1) / cs;
    per = span_steps(cfg, cs, ids);
    for (k = 0; k < nthr; k++) {
        fstep[k] = nsteps;
        fchunk[k] = 0;
    }
#pragma omp parallel num_threads(nthr)
    {
        int tid = 0;
        size_t c;
        double shown = 0.0, *u0;
        sl_error e;
#ifdef _OPENMP
        tid = omp_get_thread_num();
#endif
        u0 = b->u0 + (size_t)tid * q;
        sl_error_clear(&e);
        /* thread t's first chunk is chunk t, so thread 0, which polls,
         * always takes one through every step; the others are dealt as
         * threads come free */
        for (c = (size_t)tid; c < nch;) {
            const size_t j0 = c * cs, j1 = N - j0 > cs ? j0 + cs : N;
            size_t l, l1, fk = fidx0, j, seen;
            int halt;
            for (l = 0; l < nsteps; l = l1) {
                const double ts = t0 + (double)l * h;
                const double te = l + 1 == nsteps ? tk : t0 + (double)(l + 1) * h;
                const uint32_t sl = s0 + (uint32_t)l;
                double *mw = b->mwork + (size_t)tid * b->mwork_per;
                sl_status st;
#pragma omp atomic read
                seen = first;
#pragma omp atomic read
                halt = stop;
                if (l > seen || halt)
                    break;
                if (per > 0) {
                    /* several steps in one call */
                    size_t fl = nsteps;
                    l1 = nsteps - l < per ? nsteps : l + per;
                    if (q > 0) {
                        chunk_forcing cf = {cfg, b, E, U, u0, zst, t0, h, j0, fk, fk,
                                            SIZE_MAX, s0, ids, seed, zread};
                        st = md->span_forced(md, t0, h, tk, nsteps, l, l1, b->m0 + j0,
                                             j1 - j0, X + j0 * md->n_state,
                                             P + j0 * md->n_param, U + j0 * q,
                                             chunk_forcing_fill, &cf, seed, s0, mw,
                                             &fl, &e);
                        fk = cf.fk; /* the interval of step l1 - 1 */
                    } else {
                        st = md->span(md, t0, h, tk, nsteps, l, l1, b->m0 + j0, j1 - j0,
                                      X + j0 * md->n_state, P + j0 * md->n_param, seed, s0,
                                      mw, &fl, &e);
                    }
                    if (st != SL_OK)
                        l = fl < l1 ? fl : l1 - 1;
                } else {
                    l1 = l + 1;
                    if (q > 0) {
                        fk = forcing_base(&cfg->forcing, ts, fk, u0);
                        for (j = j0; j < j1; j++)
                            forcing_member(cfg, b, E, U, u0, sl, j, ids, seed, zst, zread);
                    }
                    st = step_members(cfg, b, X, P, U, j0, j1, ts, te, sl, ids, seed, mw, &e);
                }
                if (st != SL_OK) {
                    if (l < fstep[tid] || (l == fstep[tid] && c < fchunk[tid])) {
                        fstep[tid] = l;
                        fchunk[tid] = c;
                        b->terr[tid] = e;
                    }
#pragma omp critical(sl_pfi_region_fail)
                    if (l < first) {
#pragma omp atomic write
                        first = l;
                    }
                    break;
                }
                if (tid == 0 && cfg->poll != NULL) {
                    size_t fin;
                    double done = (double)at;
#pragma omp atomic read
                    fin = finished;
                    if (through) {
                        double f = ((double)fin + (double)l1 / (double)nsteps) / (double)nch;
                        shown = f > shown ? (f < 1.0 ? f : 1.0) : shown;
                        done += shown;
                    }
                    if (cfg->poll(cfg->poll_ctx, done / (double)cfg->T)) {
#pragma omp atomic write
                        stop = 1;
                        break;
                    }
                }
            }
#pragma omp atomic update
            finished++;
#pragma omp atomic capture
            c = next++;
        }
    }
    for (k = 0; k < nthr; k++)
        if (fstep[k] < nsteps &&
            (best < 0 || fstep[k] < fstep[best] ||
             (fstep[k] == fstep[best] && fchunk[k] < fchunk[best])))
            best = k;
    *fail = best >= 0 ? fstep[best] : nsteps;
    if (best >= 0) {
        if (err != NULL)
            *err = b->terr[best];
        return b->terr[best].status != SL_OK ? b->terr[best].status : SL_EMODEL;
    }
    if (stop)
        return interrupted(cfg, at, err);
    return SL_OK;
}

/* Whether one thread should take the members chunk by chunk through an
 * interval of several steps (forecast_region's order) rather than every
 * member through each step in turn: when the model is compiled (safe on
 * member blocks: a call of an Octave function costs the same for a chunk
 * as for the ensemble) and either has a forced span (made for that
 * order: a block makes its constants once for the steps) or has no span
 * and an ensemble that would not stay in a core's cache from one step
 * to the next. The order does not change a member's bits. */
static int one_thread_chunks(const sl_pf_config *cfg, size_t nsteps, const uint32_t *ids)
{
    const sl_model *md = cfg->model;
    if (nsteps < 2 || !md->thread_safe)
        return 0;
    if (md->n_forcing > 0 && span_steps(cfg, 1, ids) > 0)
        return 1; /* a forced span: only the region calls it */
    return span_steps(cfg, cfg->N < SPAN_CHUNK ? cfg->N : SPAN_CHUNK, ids) == 0 &&
           cfg->N > region_chunk_cap(md);
}

/* Advance every member (X, P, forcing perturbations E, forcing values U)
 * from *t to the time of cycle k: forcing, then a model step, for each
 * step; *s counts steps (a failing step counted too), *fidx tracks the
 * forcing interval. ids (re-run paths: member j runs under stream index
 * ids[j]), seed, and the path's stored normals zst (read when zread, else
 * written) shape the draws. Between steps the run's poll may stop it; it
 * is told the fraction of the run done at cycle `at` (through its steps
 * when `through` is set, else at / T), and an interruption names cycle
 * `at`. A model that may step member blocks in parallel runs the whole
 * interval in one parallel region when b->nt > 1. */
sl_status sl_pfi_forecast(const sl_pf_config *cfg, pf_buffers *b, double *X,
                          const double *P, double *E, double *U, double *t, size_t k,
                          size_t at, uint32_t *s, size_t *fidx, const uint32_t *ids,
                          uint64_t seed, double *zst, int zread, int through,
                          sl_error *err)
{
    const sl_model *md = cfg->model;
    const double tk = cfg->times[k];
    double h;
    const size_t nsteps = sl_pfi_nsteps(md, *t, tk, &h), N = cfg->N;
    int nthr = md->thread_safe ? b->nt : 1;
    size_t l, per;
    sl_status st;
    if (nthr > 1 && (size_t)nthr > N)
        nthr = (int)N;
    if ((nthr > 1 && nsteps > 0) || one_thread_chunks(cfg, nsteps, ids)) {
        st = forecast_region(cfg, b, X, P, E, U, *t, tk, h, nsteps, at, *s, *fidx, ids, seed,
                             zst, zread, through, nthr, &l, err);
        if (md->n_forcing > 0)
            *fidx = forcing_base(&cfg->forcing, *t + (double)(l < nsteps ? l : nsteps - 1) * h,
                                 *fidx, b->u0);
        *s += (uint32_t)(l < nsteps ? l + 1 : nsteps);
        if (st != SL_OK)
            return st;
        *t = tk;
        return SL_OK;
    }
    if (md->n_forcing == 0 && (per = span_steps(cfg, N < SPAN_CHUNK ? N : SPAN_CHUNK, ids)) > 0) {
        /* several steps in one call (no forcing), members in chunks of
         * SPAN_CHUNK so that a call takes each block through many steps
         * at any N; the counter of step l is s0 + l */
        const uint32_t s0 = *s;
        const size_t cs = N < SPAN_CHUNK ? N : SPAN_CHUNK, nch = (N + cs - 1) / cs;
        const size_t n = md->n_state, p = md->n_param;
        size_t c, l1;
        for (c = 0; c < nch; c++) {
            const size_t j0 = c * cs, j1 = N - j0 > cs ? j0 + cs : N;
            for (l = 0; l < nsteps; l = l1) {
                size_t fl = nsteps;
                double done = (double)at;
                l1 = nsteps - l < per ? nsteps : l + per;
                if (through)
                    done += ((double)c + (double)l1 / (double)nsteps) / (double)nch;
                st = md->span(md, *t, h, tk, nsteps, l, l1, b->m0 + j0, j1 - j0, X + j0 * n,
                              P + j0 * p, seed, s0, b->mwork, &fl, err);
                if (st != SL_OK) {
                    *s = s0 + (uint32_t)(fl < l1 ? fl + 1 : l1);
                    return st;
                }
                if (cfg->poll != NULL && cfg->poll(cfg->poll_ctx, done / (double)cfg->T))
                    return interrupted(cfg, at, err);
            }
        }
        *s = s0 + (uint32_t)nsteps;
        *t = tk;
        return SL_OK;
    }
    for (l = 0; l < nsteps; l++) {
        /* the end of step l is exactly the start of step l + 1 */
        double ts = *t + (double)l * h;
        double te = l + 1 == nsteps ? tk : *t + (double)(l + 1) * h;
        double done = through ? (double)at + (double)(l + 1) / (double)nsteps : (double)at;
        if (md->n_forcing > 0)
            eval_forcing(cfg, b, E, U, ts, *s, fidx, ids, seed, zst, zread);
        st = step_members(cfg, b, X, P, U, 0, N, ts, te, *s, ids, seed, b->mwork, err);
        (*s)++;
        if (st != SL_OK)
            return st;
        if (cfg->poll != NULL && cfg->poll(cfg->poll_ctx, done / (double)cfg->T))
            return interrupted(cfg, at, err);
    }
    *t = tk;
    return SL_OK;
}


/* Move the parameters (transformed Z, natural P) of every member with the
 * run's parameter move fitted to the weights w; draws of member j come
 * from its stream (seed, j, cycle, SL_PURPOSE_PARAM_MOVE). */
static void move_params(const sl_pf_config *cfg, pf_buffers *b, double *Z,
                        double *P, const double *w, uint32_t cycle)
{
    const sl_param_mover *mv = cfg->param_move;
    const size_t N = cfg->N, p = cfg->model->n_param;
    size_t i, j;
    if (p == 0 || mv == NULL || mv->member == NULL)
        return;
    if (mv->prepare != NULL)
        mv->prepare(&cfg->move, p, N, Z, w, b->mv, NULL);
#pragma omp parallel for num_threads(b->nt) schedule(static) private(i)
    for (j = 0; j < N; j++) {
        sl_stream st;
        double *z = Z + j * p;
        sl_stream_init(&st, cfg->seed, (uint32_t)j, cycle, SL_PURPOSE_PARAM_MOVE);
        mv->member(&cfg->move, p, b->mv, z, &st);
        for (i = 0; i < p; i++)
            P[i + j * p] = sl_transform_inverse(&cfg->ptrans[i], z[i]);
    }
}

/* Value ids: members whose parameter i has the same id hold the same
 * value (copies made by resampling). A parameter that a move or an
 * analysis changed gets fresh ids (the member indices). */
void sl_pfi_refresh_ids(size_t p, size_t N, const double *Zold, const double *Znew,
                        uint32_t *id)
{
    size_t i, j;
    for (i = 0; i < p; i++) {
        int changed = 0;
        for (j = 0; j < N && !changed; j++)
            changed = Znew[i + j * p] != Zold[i + j * p];
        if (changed)
            for (j = 0; j < N; j++)
                id[i + j * p] = (uint32_t)j;
    }
}

/* Distinct values of each parameter among the members of positive weight
 * (by their ids), and each parameter's weighted standard deviation in
 * the transformed space, into column k of the outputs. */
void sl_pfi_record_diversity(const sl_pf_config *cfg, pf_buffers *b, const uint32_t *id,
                             const double *Z, const double *w, sl_pf_output *out,
                             size_t k)
{
    const size_t N = cfg->N, p = cfg->model->n_param;
    size_t i, j;
    for (i = 0; i < p; i++) {
        if (out->distinct != NULL) {
            size_t count = 0;
            memset(b->mark, 0, N);
            for (j = 0; j < N; j++)
                if (w[j] > 0 && !b->mark[id[i + j * p]]) {
                    b->mark[id[i + j * p]] = 1;
                    count++;
                }
            out->distinct[i + k * p] = (double)count;
        }
        if (out->pspread != NULL) {
            double m = 0.0, v = 0.0, W = 0.0;
            for (j = 0; j < N; j++)
                if (w[j] > 0) {
                    W += w[j];
                    m += w[j] * Z[i + j * p];
                }
            m = W > 0 ? m / W : 0.0;
            for (j = 0; j < N; j++)
                if (w[j] > 0)
                    v += w[j] * (Z[i + j * p] - m) * (Z[i + j * p] - m);
            out->pspread[i + k * p] = W > 0 ? sqrt(v / W) : (double)NAN;
        }
    }
}

/* 1 when a row of r0..r0+m-1 observes a quantity of the operator
 * function. */
static int uses_fun(const sl_pf_config *cfg, size_t r0, size_t m)
{
    const size_t from = cfg->model->n_state + cfg->model->n_param + cfg->n_lin;
    size_t i;
    for (i = 0; i < m; i++)
        if (cfg->var[r0 + i] >= from)
            return 1;
    return 0;
}

/* Predicted observations of cycle k rows r0..r0+m-1 at time t into Yhat
 * (m x N): states and parameters directly, linear rows by H, the rest
 * from the operator function (called once, only when a row needs it). */
sl_status sl_pfi_predict_obs(const sl_pf_config *cfg, pf_buffers *b, size_t r0,
                             size_t m, double t, const double *X, const double *P,
                             sl_error *err)
{
    const size_t N = cfg->N, n = cfg->model->n_state, p = cfg->model->n_param;
    const size_t v = n + p, nl = cfg->n_lin;
    size_t i, j;
    if (uses_fun(cfg, r0, m)) {
        sl_status st = cfg->obs_fn(cfg->obs_ctx, t, N, X, P, b->Yfun, err);
        if (st != SL_OK)
            return st;
    }
#pragma omp parallel for num_threads(b->nt) schedule(static) private(i)
    for (j = 0; j < N; j++)
        for (i = 0; i < m; i++) {
            size_t r = cfg->var[r0 + i];
            double y;
            if (r < n) {
                y = X[r + j * n];
            } else if (r < v) {
                y = P[(r - n) + j * p];
            } else if (r < v + nl) {
                const double *h = cfg->H + (r - v);
                size_t l;
                y = 0.0;
                for (l = 0; l < n; l++)
                    y += h[l * nl] * X[l + j * n];
                for (l = 0; l < p; l++)
                    y += h[(n + l) * nl] * P[l + j * p];
            } else {
                y = b->Yfun[(r - v - nl) + j * cfg->n_fun];
            }
            b->Yhat[i + j * m] = y;
        }
    return SL_OK;
}

/* The forecast PIT of cycle rows r0..r0+m-1 (out->pit, when recorded)
 * from their predictions in Yhat and the weights w the forecast carries:
 * the members every row reads chosen once (two passes over the weights),
 * then each row a serial pass over at most SL_PIT_MAX_MEMBERS of them by
 * one thread (bit-identical for any thread count). */
void sl_pfi_record_pit(const sl_pf_config *cfg, const pf_buffers *b, size_t r0, size_t m,
                       const double *w, const unsigned char *dead, sl_pf_output *out)
{
    size_t i, count, js[SL_PIT_MAX_MEMBERS + 1];
    double fs[SL_PIT_MAX_MEMBERS + 1];
    if (out->pit == NULL || m == 0)
        return;
    count = sl_loglik_pit_members(cfg->N, w, dead, js, fs);
    /* the rows passed sl_pf_check: it cannot fail */
#pragma omp parallel for num_threads(b->nt) schedule(static)
    for (i = 0; i < m; i++)
        (void)sl_loglik_pit_listed(1, cfg->y + r0 + i, b->Yhat + i, m, cfg->sigma + r0 + i,
                                   cfg->aux + r0 + i, cfg->family + r0 + i, count, js, fs,
                                   out->pit + r0 + i, NULL);
}

void sl_pfi_loglik_into(const sl_pf_config *cfg, pf_buffers *b, size_t r0,
                        size_t m, double *ll, size_t *nskipped)
{
    const size_t N = cfg->N;
    int nthr = b->nt, t;
    size_t skipped = 0;
    if ((size_t)nthr > N)
        nthr = (int)N;
#pragma omp parallel for num_threads(nthr) schedule(static)
    for (t = 0; t < nthr; t++) {
        size_t j0 = N * (size_t)t / (size_t)nthr, j1 = N * (size_t)(t + 1) / (size_t)nthr;
        size_t sk = 0;
        if (j1 > j0)
            sl_loglik_ensemble(m, j1 - j0, cfg->y + r0, b->Yhat + j0 * m, m,
                               cfg->sigma + r0, cfg->aux + r0,
                               cfg->family + r0, 0, ll + j0, &sk, NULL);
        if (t == 0)
            skipped = sk;
    }
    *nskipped = skipped;
}

void sl_pfi_loglik_all(const sl_pf_config *cfg, pf_buffers *b, size_t r0,
                       size_t m, size_t *nskipped)
{
    sl_pfi_loglik_into(cfg, b, r0, m, b->ll, nskipped);
}

size_t sl_pfi_summary_count(const sl_pf_config *cfg)
{
    return cfg->summary_rows != NULL ? cfg->n_summary_rows
                                     : cfg->model->n_state + cfg->model->n_param;
}

size_t sl_pfi_summary_row(const sl_pf_config *cfg, size_t i)
{
    return cfg->summary_rows != NULL ? cfg->summary_rows[i] : i;
}

void sl_pfi_summary_blank(const sl_pf_config *cfg, double *mean, double *q,
                          size_t qinc, size_t nq)
{
    const size_t v = cfg->model->n_state + cfg->model->n_param;
    size_t r, i = 0, l;
    if (cfg->summary_rows == NULL)
        return;
    for (r = 0; r < v; r++) {
        if (i < cfg->n_summary_rows && cfg->summary_rows[i] == r) {
            i++;
            continue;
        }
        mean[r] = NAN;
        if (q != NULL)
            for (l = 0; l < nq; l++)
                q[r + l * qinc] = NAN;
    }
}

/* The first of ns rows that rank r of P summarises (r = P: ns). */
static size_t rows_first(size_t ns, int P, int r)
{
    return (size_t)(((uint64_t)ns * (uint64_t)r) / (uint64_t)P);
}

sl_status sl_pfi_summarise(const sl_pf_config *cfg, pf_buffers *b, const double *X,
                           const double *P, const double *w, sl_pf_output *out,
                           size_t k, sl_error *err)
{
    const size_t N = cfg->N, n = cfg->model->n_state, p = cfg->model->n_param;
    const size_t v = n + p, nq = cfg->nq, ns = sl_pfi_summary_count(cfg);
    const size_t *rows = cfg->summary_rows;
    const sl_pf_ranks *rk = cfg->ranks;
    /* the quantiles shared out across the ranks: a gather a cycle, worth
     * it when the rows' work is large */
    const int split = rk != NULL && rk->size > 1 && nq > 0 &&
                      (double)ns * (double)N >= SL_PFI_SPLIT_QUANTILES;
    size_t nx = 0, r0 = 0, r1 = ns, i, l, at;
    double *qk = out->quant + k * v * nq;
    long r;
    sl_status st;
    int q;
    sl_pfi_summary_blank(cfg, out->mean + k * v, out->quant + k * v * nq, v, nq);
    /* the means member by member (the states' rows come first), then the
     * quantiles row by row */
    while (nx < ns && sl_pfi_summary_row(cfg, nx) < n)
        nx++;
    sl_weighted_means(N, X, n, nx, rows, 0, w, out->mean + k * v, b->nt);
    sl_weighted_means(N, P, p, ns - nx, rows != NULL ? rows + nx : NULL, n, w,
                      out->mean + k * v + n, b->nt);
    if (nq == 0)
        return SL_OK;
    if (split) {
        r0 = rows_first(ns, rk->size, rk->rank);
        r1 = rows_first(ns, rk->size, rk->rank + 1);
    }
#pragma omp parallel for num_threads(b->nt) schedule(dynamic, 1)
    for (r = (long)r0; r < (long)r1; r++) {
        int tid = 0;
        size_t row = sl_pfi_summary_row(cfg, (size_t)r);
        const double *x = row < n ? X + row : P + (row - n);
#ifdef _OPENMP
        tid = omp_get_thread_num();
#endif
        sl_weighted_summary(N, x, row < n ? n : p, w, nq, cfg->probs, NULL, qk + row, v,
                            b->qwork + (size_t)tid * b->qwork_per);
    }
    if (!split)
        return SL_OK;
    /* this rank's rows' quantiles, then every rank's */
    for (i = r0; i < r1; i++)
        for (l = 0; l < nq; l++)
            b->rk_qsend[(i - r0) * nq + l] = qk[sl_pfi_summary_row(cfg, i) + l * v];
    for (q = 0; q < rk->size; q++)
        b->rk_counts[q] =
            (rows_first(ns, rk->size, q + 1) - rows_first(ns, rk->size, q)) * nq * sizeof(double);
    if ((st = rk->allgather(rk->ctx, b->rk_qsend, b->rk_qrecv, b->rk_counts, err)) != SL_OK)
        return st;
    for (i = 0, at = 0; i < ns; i++, at += nq)
        for (l = 0; l < nq; l++)
            qk[sl_pfi_summary_row(cfg, i) + l * v] = b->rk_qrecv[at + l];
    return SL_OK;
}

/* The summary of the derived quantities at the end of cycle k (time t),
 * when the run records it: every member's values (linear rows by H, the
 * others by one call of the operator function) into Yd (d x N), then the
 * weighted mean and quantiles of each row. With reuse set, Yfun already
 * holds the operator function's values of these X and P at t (the
 * cycle's analysis called it) and it is not called again. */
sl_status sl_pfi_summarise_derived(const sl_pf_config *cfg, pf_buffers *b, double t,
                                   const double *X, const double *P, const double *w,
                                   int reuse, sl_pf_output *out, size_t k, sl_error *err)
{
    const size_t N = cfg->N, n = cfg->model->n_state, p = cfg->model->n_param;
    const size_t nl = cfg->n_lin, nf = cfg->n_fun, d = nl + nf, nq = cfg->nq;
    long r;
    size_t j;
    if (!cfg->derived_summary || d == 0)
        return SL_OK;
    if (nf > 0 && !reuse) {
        sl_status st = cfg->obs_fn(cfg->obs_ctx, t, N, X, P, b->Yfun, err);
        if (st != SL_OK)
            return st;
    }
#pragma omp parallel for num_threads(b->nt) schedule(static)
    for (j = 0; j < N; j++) {
        size_t i, l;
        for (i = 0; i < nl; i++) {
            const double *h = cfg->H + i;
            double y = 0.0;
            for (l = 0; l < n; l++)
                y += h[l * nl] * X[l + j * n];
            for (l = 0; l < p; l++)
                y += h[(n + l) * nl] * P[l + j * p];
            b->Yd[i + j * d] = y;
        }
        for (i = 0; i < nf; i++)
            b->Yd[nl + i + j * d] = b->Yfun[i + j * nf];
    }
#pragma omp parallel for num_threads(b->nt) schedule(dynamic, 1)
    for (r = 0; r < (long)d; r++) {
        int tid = 0;
        size_t row = (size_t)r, i, bad = 0;
        double *mean = out->dmean + row + k * d, *q = out->dquant + row + k * d * nq;
#ifdef _OPENMP
        tid = omp_get_thread_num();
#endif
        for (i = 0; i < N && !bad; i++)
            bad = w[i] > 0 && isnan(b->Yd[row + i * d]);
        if (bad) {
            *mean = NAN;
            for (i = 0; i < nq; i++)
                q[i * d] = NAN;
            continue;
        }
        sl_weighted_summary(N, b->Yd + row, d, w, nq, cfg->probs, mean, q, d,
                            b->qwork + (size_t)tid * b->qwork_per);
    }
    return SL_OK;
}

/* Copy member columns by ancestor: dst(:, j) = src(:, anc[j]). */
void sl_pfi_gather_cols(size_t rows, size_t N, const double *src, double *dst,
                        const uint32_t *anc, int threads)
{
    size_t j;
    if (rows == 0)
        return;
#pragma omp parallel for num_threads(threads) schedule(static)
    for (j = 0; j < N; j++)
        memcpy(dst + j * rows, src + (size_t)anc[j] * rows, rows * sizeof(double));
}

/* The optional additive state noise of cycle k; member j draws from the
 * stream of index ids[j] (j when ids is NULL). */
void sl_pfi_add_state_noise(const sl_pf_config *cfg, pf_buffers *b, double *X,
                            size_t k, const uint32_t *ids, uint64_t seed, double *zst,
                            int zread)
{
    const size_t N = cfg->N, n = cfg->model->n_state;
    size_t i, j;
    if (cfg->state_noise == NULL)
        return;
#pragma omp parallel for num_threads(b->nt) schedule(static) private(i)
    for (j = 0; j < N; j++) {
        sl_stream sn;
        sl_stream_init(&sn, seed, ids != NULL ? ids[j] : (uint32_t)(b->m0 + j), (uint32_t)k,
                       SL_PURPOSE_STATE_NOISE);
        for (i = 0; i < n; i++)
            if (cfg->state_noise[i] > 0) {
                double z;
                size_t at = zst != NULL
                                ? j * b->zlen + b->zsteps * b->zq + k * b->zs + b->sslot[i]
                                : 0;
                if (zst != NULL && zread) {
                    z = zst[at];
                } else {
                    z = sl_stream_normal(&sn);
                    if (zst != NULL)
                        zst[at] = z;
                }
                X[i + j * n] += cfg->state_noise[i] * z;
            }
    }
}

/* members from which the reweighting's loops are shared among threads */
#define REWEIGHT_THREADS_FROM 8192

sl_status sl_pfi_reweight(size_t N, const unsigned char *dead, double *ll, size_t nobs,
                          double rest, double *lw, double *logw, double *w, double *logz,
                          int *degenerate, int nt, sl_error *err)
{
    sl_weight_summary ws;
    sl_error werr;
    sl_status st;
    double wsum = 0.0;
    size_t j;
    long jj;
    if (N < REWEIGHT_THREADS_FROM)
        nt = 1;
    /* (one thread: no parallel region, whose start costs more than a
     * small ensemble's loop) */
    if (nt > 1) {
#pragma omp parallel for num_threads(nt) schedule(static)
        for (jj = 0; jj < (long)N; jj++)
            logw[jj] = dead[jj] ? -HUGE_VAL : (nobs > 0 ? lw[jj] + rest * ll[jj] : lw[jj]);
    } else {
        for (j = 0; j < N; j++)
            logw[j] = dead[j] ? -HUGE_VAL : (nobs > 0 ? lw[j] + rest * ll[j] : lw[j]);
    }
    st = sl_weights_normalize_threads(N, logw, ll, &ws, nt, &werr);
    if (st == SL_OK) {
        if (nt > 1) {
#pragma omp parallel for num_threads(nt) schedule(static)
            for (jj = 0; jj < (long)N; jj++) {
                w[jj] = ll[jj];
                lw[jj] = logw[jj] - ws.log_sum;
            }
        } else {
            memcpy(w, ll, N * sizeof(double));
            for (j = 0; j < N; j++)
                lw[j] = logw[j] - ws.log_sum;
        }
        *logz = ws.log_sum;
        return SL_OK;
    }
    if (st != SL_EDEGENERATE) {
        if (err != NULL)
            *err = werr;
        return st;
    }
    /* no member explains the data: keep the weights of the living
     * members, record the cycle, evidence -Inf */
    *degenerate = 1;
    *logz = -HUGE_VAL;
    for (j = 0; j < N; j++) {
        if (dead[j])
            w[j] = 0.0;
        wsum += w[j];
    }
    for (j = 0; j < N; j++) {
        if (wsum > 0)
            w[j] /= wsum;
        lw[j] = w[j] > 0 ? log(w[j]) : -HUGE_VAL;
    }
    return SL_OK;
}

/* pcn: the members' stored draws follow them through resampling (the
 * filled part only: forcing draws of steps < s, state noise of cycles
 * <= k) */
static void gather_draws(pf_buffers *b, size_t N, const uint32_t *anc, uint32_t s, size_t k)
{
    const size_t nf = (size_t)s * b->zq, ns = (k + 1) * b->zs,
                 off = b->zsteps * b->zq;
    size_t j;
    double *t;
    if (!b->pcn)
        return;
#pragma omp parallel for num_threads(b->nt) schedule(static)
    for (j = 0; j < N; j++) {
        const double *src = b->zp + (size_t)anc[j] * b->zlen;
        double *dst = b->zp2 + j * b->zlen;
        memcpy(dst, src, nf * sizeof(double));
        memcpy(dst + off, src + off, ns * sizeof(double));
    }
    t = b->zp;
    b->zp = b->zp2;
    b->zp2 = t;
}

/* x - x is +0 for a finite x and NaN for an infinite or NaN one, and a sum
 * with a NaN term is NaN: independent sums over the column, without a
 * branch per value, say whether any value is not finite. Every sum is +0
 * or NaN, so their order does not matter: eight lanes in four registers,
 * then pairs, so that a long column (GR4J's 63 states) is not bound by
 * the additions' latency nor left to a scalar tail. */
int sl_pfi_has_nonfinite(const double *x, size_t n)
{
    double s = 0.0;
    size_t i = 0;
#ifdef __SSE2__
    {
        __m128d a0 = _mm_setzero_pd(), a1 = a0, a2 = a0, a3 = a0, v;
        for (; i + 8 <= n; i += 8) {
            v = _mm_loadu_pd(x + i);
            a0 = _mm_add_pd(a0, _mm_sub_pd(v, v));
            v = _mm_loadu_pd(x + i + 2);
            a1 = _mm_add_pd(a1, _mm_sub_pd(v, v));
            v = _mm_loadu_pd(x + i + 4);
            a2 = _mm_add_pd(a2, _mm_sub_pd(v, v));
            v = _mm_loadu_pd(x + i + 6);
            a3 = _mm_add_pd(a3, _mm_sub_pd(v, v));
        }
        for (; i + 2 <= n; i += 2) {
            v = _mm_loadu_pd(x + i);
            a1 = _mm_add_pd(a1, _mm_sub_pd(v, v));
        }
        a0 = _mm_add_pd(_mm_add_pd(a0, a1), _mm_add_pd(a2, a3));
        s = _mm_cvtsd_f64(a0) + _mm_cvtsd_f64(_mm_unpackhi_pd(a0, a0));
    }
#endif
    for (; i < n; i++)
        s += x[i] - x[i];
    return !(s == 0.0);
}

/* The forecast means' kernel, shared with the split run (pf_internal.h):
 * block k's plain sums, member order (a summing block of sl_mean_block). */
static double live_block_weight(size_t N, const unsigned char *dead, const double *w,
                                size_t blk, size_t k)
{
    const size_t jb = k * blk + blk < N ? k * blk + blk : N;
    double s = 0.0;
    size_t j;
    for (j = k * blk; j < jb; j++)
        if (!dead[j] && w[j] > 0)
            s += w[j];
    return s;
}

static void live_block_means(size_t N, const unsigned char *dead, const double *w,
                             size_t blk, size_t k, size_t nb, const double *const *src,
                             const size_t *ld, double *out)
{
    const size_t jb = k * blk + blk < N ? k * blk + blk : N;
    double s[SL_PFI_FMEAN_BLOCK];
    size_t i, j;
    for (i = 0; i < nb; i++)
        s[i] = 0.0;
    for (j = k * blk; j < jb; j++) {
        if (dead[j] || !(w[j] > 0))
            continue;
        i = 0;
#ifdef __SSE2__
        {
            /* two rows in the lanes of one register: each lane the
             * scalar product and sum of its row, the same bits */
            const __m128d wj = _mm_set1_pd(w[j]);
            for (; i + 1 < nb; i += 2) {
                __m128d v = _mm_loadh_pd(_mm_load_sd(src[i] + j * ld[i]),
                                         src[i + 1] + j * ld[i + 1]);
                _mm_storeu_pd(s + i, _mm_add_pd(_mm_loadu_pd(s + i), _mm_mul_pd(wj, v)));
            }
        }
#endif
        for (; i < nb; i++)
            s[i] += w[j] * src[i][j * ld[i]];
    }
    memcpy(out, s, nb * sizeof *s);
}

double sl_pfi_live_weight(size_t N, const unsigned char *dead, const double *w, int threads)
{
    const size_t blk = sl_mean_block(N), nblk = (N + blk - 1) / blk;
    double part[SL_MEAN_BLOCKS_MAX], W = 0.0;
    long k;
    if (threads > 1 && nblk > 1) {
#pragma omp parallel for num_threads(threads) schedule(static)
        for (k = 0; k < (long)nblk; k++)
            part[k] = live_block_weight(N, dead, w, blk, (size_t)k);
    } else {
        for (k = 0; k < (long)nblk; k++)
            part[k] = live_block_weight(N, dead, w, blk, (size_t)k);
    }
    for (k = 0; k < (long)nblk; k++)
        W += part[k];
    return W;
}

void sl_pfi_live_means(size_t N, const unsigned char *dead, const double *w, double W,
                       size_t nb, const double *const *src, const size_t *ld, double *m,
                       int threads)
{
    const size_t blk = sl_mean_block(N), nblk = (N + blk - 1) / blk;
    double part[SL_MEAN_BLOCKS_MAX][SL_PFI_FMEAN_BLOCK];
    size_t i;
    long k;
    if (threads > 1 && nblk > 1) {
#pragma omp parallel for num_threads(threads) schedule(static)
        for (k = 0; k < (long)nblk; k++)
            live_block_means(N, dead, w, blk, (size_t)k, nb, src, ld, part[k]);
    } else {
        for (k = 0; k < (long)nblk; k++)
            live_block_means(N, dead, w, blk, (size_t)k, nb, src, ld, part[k]);
    }
    for (i = 0; i < nb; i++) {
        double t = 0.0;
        for (k = 0; k < (long)nblk; k++)
            t += part[k][i];
        m[i] = W > 0 ? t / W : (double)NAN;
    }
}

/* Weighted means of the living members before the update: the forecast.
 * Each summarised row's sum runs in member order; up to
 * SL_PFI_FMEAN_BLOCK rows are summed together in one pass over the
 * members (sl_pfi_live_means), with where the row lives looked up once
 * per pass. */
static void forecast_mean(const sl_pf_config *cfg, const unsigned char *dead,
                          const double *X, const double *P, const double *w,
                          double *out, int nt)
{
    const size_t N = cfg->N, n = cfg->model->n_state;
    const size_t p = cfg->model->n_param, ns = sl_pfi_summary_count(cfg);
    const double W = sl_pfi_live_weight(N, dead, w, nt);
    size_t i, i0;
    sl_pfi_summary_blank(cfg, out, NULL, 0, 0);
    for (i0 = 0; i0 < ns; i0 += SL_PFI_FMEAN_BLOCK) {
        const size_t nb = ns - i0 < SL_PFI_FMEAN_BLOCK ? ns - i0 : SL_PFI_FMEAN_BLOCK;
        const double *src[SL_PFI_FMEAN_BLOCK];
        size_t ld[SL_PFI_FMEAN_BLOCK], r[SL_PFI_FMEAN_BLOCK];
        double m[SL_PFI_FMEAN_BLOCK];
        for (i = 0; i < nb; i++) {
            r[i] = sl_pfi_summary_row(cfg, i0 + i);
            src[i] = r[i] < n ? X + r[i] : P + (r[i] - n);
            ld[i] = r[i] < n ? n : p;
        }
        sl_pfi_live_means(N, dead, w, W, nb, src, ld, m, nt);
        for (i = 0; i < nb; i++)
            out[r[i]] = m[i];
    }
}

/* ------------------------------------------------------ the analyses */

static size_t count_nan_predictions(const sl_pf_config *cfg, const pf_buffers *b, size_t r0,
                                    size_t m, const unsigned char *dead);

static sl_status pf_check(const sl_analysis *self, const sl_pf_config *cfg, sl_error *err)
{
    if (cfg->analysis != NULL && cfg->enkf != NULL)
        return sl_fail(err, SL_EINVAL, "badconfig",
                       "the analysis '%s' takes no ensemble Kalman settings", self->name);
    return SL_OK;
}

/* The particle filter's analysis: each member's log-likelihood. */
static sl_status pf_cycle(sl_analysis_cycle *c, sl_error *err)
{
    const sl_pf_config *cfg = c->cfg;
    sl_status st;
    if (c->m == 0)
        return SL_OK;
    if ((st = sl_pfi_predict_obs(cfg, c->run, c->r0, c->m, c->t, c->X, c->P, err)) != SL_OK)
        return st;
    /* the weighting leaves the members as they are: the operator
     * function's values of every member at t are those the cycle's
     * summary asks for */
    c->run->yfun_kept = uses_fun(cfg, c->r0, c->m);
    sl_pfi_record_pit(cfg, c->run, c->r0, c->m, c->w, c->dead, c->out);
    if (c->out->nanpred != NULL)
        c->out->nanpred[c->k] =
            (double)count_nan_predictions(cfg, c->run, c->r0, c->m, c->dead);
    sl_pfi_loglik_all(cfg, c->run, c->r0, c->m, &c->skipped);
    c->evals = cfg->N;
    c->nobs = c->m - c->skipped;
    return SL_OK;
}

const sl_analysis sl_analysis_pf = {
    "pf", SL_ANALYSIS_WEIGHTS, NULL, pf_check, NULL, NULL, pf_cycle,
};

/* The table: the particle filters first, then the ensemble Kalman
 * analyses in the order of sl_enkf_method. */
static const sl_analysis *const analyses[] = {
    &sl_analysis_pf,   &sl_analysis_wenkf, &sl_analysis_enkf, &sl_analysis_etkf,
    &sl_analysis_ensrf, &sl_analysis_eakf, &sl_analysis_letkf,
};

const sl_analysis *sl_analysis_at(size_t k)
{
    return k < sizeof analyses / sizeof *analyses ? analyses[k] : NULL;
}

const sl_analysis *sl_analysis_find(const char *name)
{
    size_t k;
    if (name == NULL)
        return NULL;
    for (k = 0; k < sizeof analyses / sizeof *analyses; k++)
        if (strcmp(analyses[k]->name, name) == 0)
            return analyses[k];
    return NULL;
}

const sl_analysis *sl_pf_analysis_of(const sl_pf_config *cfg)
{
    if (cfg->weak && !cfg->wenkf && cfg->enkf == NULL &&
        (cfg->analysis == NULL || cfg->analysis == &sl_analysis_pf))
        return &sl_analysis_pf_weak;
    if (cfg->analysis != NULL)
        return cfg->analysis;
    if (cfg->wenkf)
        return &sl_analysis_wenkf;
    if (cfg->enkf != NULL)
        return sl_pfi_kalman_of(cfg->enkf->method);
    return &sl_analysis_pf;
}

/* The ancestor indices of a window slot: N uint32 after its v x N
 * doubles (the weakly coupled particle filter: a row of N per component,
 * component c's at c * N). */
static uint32_t *window_ids(const sl_pf_config *cfg, double *slot)
{
    return (uint32_t *)(slot + (cfg->model->n_state + cfg->model->n_param) * cfg->N);
}

/* The members of a cycle that N ids descend from, counted. */
static size_t window_distinct(pf_buffers *b, size_t N, const uint32_t *ids)
{
    size_t j, distinct = 0;
    memset(b->mark, 0, N);
    for (j = 0; j < N; j++)
        if (!b->mark[ids[j]]) {
            b->mark[ids[j]] = 1;
            distinct++;
        }
    return distinct;
}

/* The lag of component cp (the weakly coupled particle filter), within
 * the window. */
static size_t window_lag(const sl_pf_config *cfg, const pf_buffers *b, size_t cp)
{
    size_t L = cfg->comp_lag != NULL ? cfg->comp_lag[cp] : b->nwin;
    return L < b->nwin ? L : b->nwin;
}

/* Record the smoothed summary of cycle s from its window slot with the
 * current weights (parameters back in natural units first), and how many
 * distinct members of cycle s the current members descend from. cp < 0:
 * every row, the slot's columns being the members'; cp >= 0 (the weakly
 * coupled particle filter): the rows of component cp, member j's column
 * the one its ids name. */
static void window_emit(const sl_pf_config *cfg, pf_buffers *b, size_t s,
                        const double *w, sl_pf_output *out, long cp)
{
    const size_t N = cfg->N, n = cfg->model->n_state, p = cfg->model->n_param;
    const size_t v = n + p, nq = cfg->nq;
    const double *slot = b->win[s % b->nwin];
    const uint32_t *ids = window_ids(cfg, b->win[s % b->nwin]) + (cp >= 0 ? (size_t)cp * N : 0);
    size_t i, j;
    long r;
    if (cp < 0) {
        if (out->sanc != NULL)
            out->sanc[s] = (double)window_distinct(b, N, ids);
        memcpy(b->wtmp, slot, v * N * sizeof(double));
        for (j = 0; j < N; j++)
            for (i = 0; i < p; i++)
                b->wtmp[n + i + j * v] = sl_transform_inverse(&cfg->ptrans[i], slot[n + i + j * v]);
        sl_pfi_summary_blank(cfg, out->smean + s * v, out->squant + s * v * nq, v, nq);
    } else {
        const double d = (double)window_distinct(b, N, ids);
        if (out->comp_sanc != NULL)
            out->comp_sanc[(size_t)cp + s * cfg->n_comp] = d;
        /* the fewest of the components (window_store set it above N) */
        if (out->sanc != NULL && d < out->sanc[s])
            out->sanc[s] = d;
    }
#pragma omp parallel for num_threads(b->nt) schedule(dynamic, 1)
    for (r = 0; r < (long)sl_pfi_summary_count(cfg); r++) {
        int tid = 0;
        size_t row = sl_pfi_summary_row(cfg, (size_t)r), jj;
#ifdef _OPENMP
        tid = omp_get_thread_num();
#endif
        if (cp >= 0) {
            /* the component's row, member by member from the columns its
             * ids name (parameters back in natural units) */
            if (cfg->comp[row] != (int)cp)
                continue;
            for (jj = 0; jj < N; jj++) {
                const double x = slot[row + (size_t)ids[jj] * v];
                b->wtmp[row + jj * v] =
                    row < n ? x : sl_transform_inverse(&cfg->ptrans[row - n], x);
            }
        }
        sl_weighted_summary(N, b->wtmp + row, v, w, nq, cfg->probs,
                            out->smean + row + s * v,
                            out->squant + row + s * v * nq, v,
                            b->qwork + (size_t)tid * b->qwork_per);
    }
}

/* Store cycle k's ensemble (states, transformed parameters) in its slot. */
static void window_store(const sl_pf_config *cfg, pf_buffers *b, size_t k,
                         const double *X, const double *Z, sl_pf_output *out)
{
    const size_t N = cfg->N, n = cfg->model->n_state, p = cfg->model->n_param;
    const size_t nid = b->wids > 0 ? b->wids : 1;
    double *slot = b->win[k % b->nwin];
    uint32_t *ids = window_ids(cfg, slot);
    size_t j, c;
    for (j = 0; j < N; j++) {
        memcpy(slot + j * (n + p), X + j * n, n * sizeof(double));
        if (p > 0)
            memcpy(slot + j * (n + p) + n, Z + j * p, p * sizeof(double));
        for (c = 0; c < nid; c++)
            ids[j + c * N] = (uint32_t)j;
    }
    if (b->wids > 0) {
        /* the smoothed summary's rows of a component not yet recorded
         * stay NaN; the fewest ancestors start above any count */
        sl_pfi_summary_blank(cfg, out->smean + k * (n + p), out->squant + k * (n + p) * cfg->nq,
                             n + p, cfg->nq);
        if (out->sanc != NULL)
            out->sanc[k] = (double)N + 1.0;
    }
}

/* Resample the window with the members: slot by slot into the spare,
 * the slots of cycles k, k-1, ... (filled of them). The weakly coupled
 * particle filter's slots keep their columns: every component's ids are
 * resampled. */
static void window_gather(const sl_pf_config *cfg, pf_buffers *b, size_t k,
                          size_t filled)
{
    const size_t N = cfg->N, v = cfg->model->n_state + cfg->model->n_param;
    size_t s;
    for (s = 0; s < filled; s++) {
        size_t at = (k - s) % b->nwin, j, c;
        const uint32_t *ids = window_ids(cfg, b->win[at]);
        uint32_t *to = window_ids(cfg, b->wspare);
        double *t;
        if (b->wids > 0) {
            for (c = 0; c < b->wids; c++) {
                uint32_t *row = window_ids(cfg, b->win[at]) + c * N;
                for (j = 0; j < N; j++)
                    to[j] = row[b->anc[j]];
                memcpy(row, to, N * sizeof(uint32_t));
            }
            continue;
        }
        sl_pfi_gather_cols(v, N, b->win[at], b->wspare, b->anc, b->nt);
        for (j = 0; j < N; j++)
            to[j] = ids[b->anc[j]];
        t = b->win[at];
        b->win[at] = b->wspare;
        b->wspare = t;
    }
}

void sl_pfi_window_follow(const sl_pf_config *cfg, pf_buffers *b, size_t k, size_t filled,
                          size_t cp, const uint32_t *anc)
{
    const size_t N = cfg->N;
    const size_t L = window_lag(cfg, b, cp);
    uint32_t *to = window_ids(cfg, b->wspare);
    size_t s, j;
    if (b->nwin == 0 || b->wids == 0)
        return;
    if (filled > L)
        filled = L;
    for (s = 1; s <= filled; s++) {
        uint32_t *row = window_ids(cfg, b->win[(k - s) % b->nwin]) + cp * N;
        for (j = 0; j < N; j++)
            to[j] = row[anc[j]];
        memcpy(row, to, N * sizeof(uint32_t));
    }
}

/* ------------------------------------------------------ resample-move */

/* Re-run every member's path from t0 to cycle k with the proposed
 * parameters RP: member j follows the path that ends at the forecast
 * index anc_k[j] of cycle k, back through the recorded ancestors, and
 * draws its forcing perturbations, state noise and model noise from the
 * streams of the indices along that path, as its ancestors did. Into RX
 * (states at cycle k), rdead, rll (the log-likelihood of cycles before
 * k) and rllk (that of cycle k, 0 with no observation). */
static sl_status replay(const sl_pf_config *cfg, pf_buffers *b, size_t k,
                        const uint32_t *anc_k, size_t *evals, sl_error *err)
{
    const sl_model *md = cfg->model;
    const size_t N = cfg->N, n = md->n_state, q = md->n_forcing;
    size_t c, j, fidx = 0;
    uint32_t s = 0;
    double t = cfg->t0;
    sl_status st;
    memcpy(b->path + k * N, anc_k, N * sizeof(uint32_t));
    for (c = k; c-- > 0;)
        for (j = 0; j < N; j++)
            b->path[c * N + j] = b->lin[c * N + b->path[(c + 1) * N + j]];
    for (j = 0; j < N; j++) {
        memcpy(b->RX + j * n, b->X0 + (size_t)b->path[j] * n, n * sizeof(double));
        b->rdead[j] = (unsigned char)sl_pfi_has_nonfinite(b->RX + j * n, n);
        b->rll[j] = 0.0;
        b->rllk[j] = 0.0;
    }
    if (q > 0)
        memset(b->RE, 0, q * N * sizeof(double));
    for (c = 0; c <= k; c++) {
        const double tc = cfg->times[c];
        const size_t r0 = cfg->obs_first[c], m = cfg->obs_first[c + 1] - r0;
        const uint32_t *ids = b->path + c * N;
        size_t skipped;
        if ((st = sl_pfi_forecast(cfg, b, b->RX, b->RP, b->RE, b->RU, &t, c, k, &s, &fidx, ids,
                                  cfg->seed, b->pcn ? b->rzp : NULL, 1, 0, err)) != SL_OK)
            return st;
        sl_pfi_add_state_noise(cfg, b, b->RX, c, ids, cfg->seed, b->pcn ? b->rzp : NULL, 1);
        for (j = 0; j < N; j++)
            if (!b->rdead[j] && sl_pfi_has_nonfinite(b->RX + j * n, n))
                b->rdead[j] = 1;
        if (m == 0)
            continue;
        if ((st = sl_pfi_predict_obs(cfg, b, r0, m, tc, b->RX, b->RP, err)) != SL_OK)
            return st;
        sl_pfi_loglik_into(cfg, b, r0, m, b->tmp, &skipped);
        *evals += N;
        for (j = 0; j < N; j++) {
            double v = b->rdead[j] || isnan(b->tmp[j]) ? -HUGE_VAL : b->tmp[j];
            if (c < k)
                b->rll[j] += v;
            else
                b->rllk[j] = v;
        }
    }
    return SL_OK;
}

/* log prior density of member j's transformed parameters z (the
 * estimated ones), with the transforms' Jacobians */
double sl_pfi_log_prior_z(const sl_pf_config *cfg, const unsigned char *est,
                          const double *z)
{
    const size_t p = cfg->model->n_param;
    double lp = 0.0;
    size_t i;
    for (i = 0; i < p; i++)
        if (est[i]) {
            const double x = sl_transform_inverse(&cfg->ptrans[i], z[i]);
            lp += sl_prior_logpdf(&cfg->prior[i], x) +
                  sl_transform_logjac(&cfg->ptrans[i], z[i]);
        }
    return isnan(lp) ? -HUGE_VAL : lp;
}

/* The fewest distinct values (by id: p x count) among the estimated
 * parameters of `count` members or groups, as a fraction of count. */
double sl_pfi_diversity(const sl_pf_config *cfg, pf_buffers *b, const uint32_t *id,
                        size_t count)
{
    const size_t p = cfg->model->n_param;
    size_t i, j, fewest = count;
    for (i = 0; i < p; i++) {
        size_t distinct = 0;
        if (!b->est[i])
            continue;
        memset(b->mark, 0, count);
        for (j = 0; j < count; j++)
            if (!b->mark[id[i + j * p]]) {
                b->mark[id[i + j * p]] = 1;
                distinct++;
            }
        if (distinct < fewest)
            fewest = distinct;
    }
    return (double)fewest / (double)count;
}

/* Fit resample_move's proposal (o: its settings at the current scale) to
 * the transformed parameters Z of `count` members or groups into b->mv.
 * When an estimated parameter has no spread left (a very sharp
 * likelihood collapsed it to one value) the ensemble cannot propose a
 * move: the proposal fitted last (at the start: to the prior draws) does,
 * at the current scale. */
void sl_pfi_fit_proposal(const sl_pf_config *cfg, pf_buffers *b,
                         const sl_param_move_opts *o, const double *Z, size_t count)
{
    const sl_param_mover *mv = &sl_param_move_resample_move;
    const size_t p = cfg->model->n_param, ws = sl_param_move_workspace(p);
    sl_param_move_info info;
    size_t i, nest = 0;
    for (i = 0; i < p; i++)
        nest += b->est[i];
    mv->prepare(o, p, count, Z, NULL, b->mv, &info);
    if (info.dim >= nest) {
        memcpy(b->mvlast, b->mv, ws * sizeof(double));
    } else {
        memcpy(b->mv, b->mvlast, ws * sizeof(double));
        sl_param_move_rescale(mv, o, p, b->mv);
    }
}

/* After a sweep: members or groups with acc[j] set hold new parameter
 * values and get fresh ids, the others keep theirs, renumbered so that
 * ids stay below count (id: p x count; b->idmap is scratch). */
void sl_pfi_renumber_ids(const sl_pf_config *cfg, pf_buffers *b, const unsigned char *acc,
                         uint32_t *id, size_t count)
{
    const size_t p = cfg->model->n_param;
    size_t i, j;
    for (i = 0; i < p; i++) {
        uint32_t next = 0;
        if (!b->est[i])
            continue;
        memset(b->idmap, 0xff, count * sizeof(uint32_t));
        for (j = 0; j < count; j++) {
            uint32_t old = id[i + j * p];
            if (acc[j]) {
                id[i + j * p] = next++;
            } else {
                if (b->idmap[old] == UINT32_MAX)
                    b->idmap[old] = next++;
                id[i + j * p] = b->idmap[old];
            }
        }
    }
}

/* Scale adaptation toward an acceptance rate of 0.234 (Roberts, Gelman &
 * Gilks 1997): *scale times exp(rate - 0.234), kept within [lo, hi]. */
void sl_pfi_adapt_scale(double *scale, size_t accepted, size_t proposed, double lo,
                        double hi)
{
    if (proposed == 0)
        return;
    *scale *= exp((double)accepted / (double)proposed - 0.234);
    if (*scale < lo)
        *scale = lo;
    if (*scale > hi)
        *scale = hi;
}

/* resample_move on the current (just resampled, equally weighted)
 * ensemble of cycle k at tempering exponent phi: cll holds the members'
 * log-likelihoods of the cycles before k, llk that of cycle k, anc_k the
 * forecast indices of their parents at cycle k; tstep is the tempering
 * step (0 at the end of the cycle). */
static sl_status replay_move(const sl_pf_config *cfg, pf_buffers *b, size_t k,
                             int cur, double phi, const uint32_t *anc_k,
                             double *llk, size_t tstep, size_t *evals,
                             sl_error *err)
{
    const sl_param_mover *mv = cfg->param_move;
    const size_t N = cfg->N, n = cfg->model->n_state, p = cfg->model->n_param,
                 q = cfg->model->n_forcing;
    const double target = 0.5 * (1.0 + cfg->move.rm_diversity);
    double *X = b->X[cur], *Z = b->Z[cur], *P = b->P[cur];
    unsigned char *dead = b->dead[cur];
    uint32_t *vid = b->vid[cur];
    sl_param_move_opts o = cfg->move;
    size_t w, i, j;
    int zdone = 0;
    sl_status st;
    if (sl_pfi_diversity(cfg, b, vid, N) >= cfg->move.rm_diversity)
        return SL_OK;
    for (j = 0; j < N; j++)
        b->lp[j] = sl_pfi_log_prior_z(cfg, b->est, Z + j * p);
    for (w = 0; w < cfg->move.rm_sweeps; w++) {
        size_t live = 0, acc = 0;
        const uint32_t purpose = (uint32_t)SL_PURPOSE_REPLAY_MOVE +
                                 ((uint32_t)tstep << 12) + (uint32_t)w;
        /* with stored draws every other sweep moves the paths' draws
         * instead of the parameters */
        const int zsweep = b->pcn && (w % 2 == 1);
        const size_t nf = (size_t)b->s_now * b->zq, ns = (k + 1) * b->zs,
                     zoff = b->zsteps * b->zq;
        const double beta = b->pcn_beta, rho = sqrt(1.0 - b->pcn_beta * b->pcn_beta);
        o.rm_scale = cfg->move.rm_scale * b->rm_adapt;
        sl_pfi_fit_proposal(cfg, b, &o, Z, N);
#pragma omp parallel for num_threads(b->nt) schedule(static) private(i)
        for (j = 0; j < N; j++) {
            sl_stream sm;
            double *z = b->RZ + j * p;
            sl_stream_init(&sm, cfg->seed, (uint32_t)j, (uint32_t)k, purpose);
            memcpy(z, Z + j * p, p * sizeof(double));
            if (b->pcn) {
                const double *zs = b->zp + j * b->zlen;
                double *zr = b->rzp + j * b->zlen;
                size_t l;
                memcpy(zr, zs, nf * sizeof(double));
                memcpy(zr + zoff, zs + zoff, ns * sizeof(double));
                if (zsweep) {
                    /* preconditioned Crank-Nicolson (Cotter, Roberts,
                     * Stuart & White 2013): z' = rho z + beta xi leaves
                     * the draws' N(0, I) prior invariant, so the
                     * acceptance ratio is the likelihood ratio alone */
                    for (l = 0; l < nf; l++)
                        zr[l] = rho * zr[l] + beta * sl_stream_normal(&sm);
                    for (l = 0; l < ns; l++)
                        zr[zoff + l] = rho * zr[zoff + l] + beta * sl_stream_normal(&sm);
                }
            }
            if (!zsweep)
                mv->member(&o, p, b->mv, z, &sm);
            b->ru[j] = sl_stream_uniform(&sm);
            for (i = 0; i < p; i++)
                b->RP[i + j * p] = sl_transform_inverse(&cfg->ptrans[i], z[i]);
            b->rlp[j] = sl_pfi_log_prior_z(cfg, b->est, z);
        }
        if ((st = replay(cfg, b, k, anc_k, evals, err)) != SL_OK)
            return st;
        for (j = 0; j < N; j++) {
            double now, prop;
            b->acc[j] = 0;
            if (dead[j])
                continue;
            live++;
            now = b->lp[j] + b->cll[j] + phi * llk[j];
            prop = b->rlp[j] + b->rll[j] + phi * b->rllk[j];
            if (b->rdead[j] || !(prop > -HUGE_VAL) || isnan(prop))
                continue;
            if (!(now > -HUGE_VAL) || log(b->ru[j]) < prop - now) {
                if (b->pcn) {
                    memcpy(b->zp + j * b->zlen, b->rzp + j * b->zlen, nf * sizeof(double));
                    memcpy(b->zp + j * b->zlen + zoff, b->rzp + j * b->zlen + zoff,
                           ns * sizeof(double));
                }
                if (q > 0)
                    memcpy(b->E[cur] + j * q, b->RE + j * q, q * sizeof(double));
                memcpy(X + j * n, b->RX + j * n, n * sizeof(double));
                memcpy(Z + j * p, b->RZ + j * p, p * sizeof(double));
                memcpy(P + j * p, b->RP + j * p, p * sizeof(double));
                b->cll[j] = b->rll[j];
                llk[j] = b->rllk[j];
                b->lp[j] = b->rlp[j];
                b->acc[j] = 1;
                acc++;
            }
        }
        if (!zsweep)
            sl_pfi_renumber_ids(cfg, b, b->acc, vid, N);
        b->rm_sweeps++;
        b->rm_proposed += live;
        b->rm_accepted += acc;
        /* scale adaptation toward an acceptance rate of 0.234 (Roberts,
         * Gelman & Gilks 1997), kept within 1e-3 .. 1e3 of the start */
        if (zsweep)
            sl_pfi_adapt_scale(&b->pcn_beta, acc, live, 1e-4, 1.0);
        else
            sl_pfi_adapt_scale(&b->rm_adapt, acc, live, 1e-3, 1e3);
        zdone |= zsweep;
        if ((!b->pcn || zdone) && sl_pfi_diversity(cfg, b, vid, N) >= target)
            break;
    }
    return SL_OK;
}

/* Whether the observed rows r0 .. r0+m-1 depend on the parameters (a
 * parameter observed, a linear row with a parameter column, an operator
 * function, which sees them): then a parameter move changes their
 * likelihood. */
static int obs_need_params(const sl_pf_config *cfg, size_t r0, size_t m)
{
    const size_t n = cfg->model->n_state, p = cfg->model->n_param;
    const size_t v = n + p, nl = cfg->n_lin;
    size_t i, l;
    for (i = 0; i < m && p > 0; i++) {
        size_t r = cfg->var[r0 + i];
        if (isnan(cfg->y[r0 + i]))
            continue;
        if ((r >= n && r < v) || r >= v + nl)
            return 1;
        if (r >= v)
            for (l = 0; l < p; l++)
                if (cfg->H[(r - v) + (n + l) * nl] != 0)
                    return 1;
    }
    return 0;
}

/* Adaptive tempering of cycle k (Jasra et al. 2011; Beskos et al. 2016):
 * while the rest of the likelihood b->ll would bring the conditional ESS
 * below the target, take the step that brings it to the target, resample
 * (ensemble *cur -> 1 - *cur, with everything that travels with the
 * members) and move the parameters. On return the weights w / b->lw and
 * b->ll belong to ensemble *cur; *phi is the exponent taken (the caller
 * applies the rest), *logz the log-evidence of the steps taken, *steps
 * their number; *evals grows by N per likelihood pass. b->tanc composes
 * the steps' ancestors (member j of the result descends from forecast
 * member tanc[j]). */
static sl_status temper_cycle(const sl_pf_config *cfg, pf_buffers *b, size_t k,
                              size_t r0, size_t m, double tk, int *cur, double *w,
                              double *phi, double *logz, size_t *steps,
                              size_t *evals, sl_error *err)
{
    const size_t N = cfg->N, n = cfg->model->n_state, p = cfg->model->n_param,
                 q = cfg->model->n_forcing;
    const sl_param_mover *mv = cfg->param_move;
    const int moving = p > 0 && mv != NULL && mv->when == SL_MOVE_AT_RESAMPLE &&
                       mv->member != NULL && !b->replay;
    const int relik = moving && obs_need_params(cfg, r0, m);
    size_t i, j;
    *phi = 0.0;
    *logz = 0.0;
    *steps = 0;
    for (;;) {
        const int c = *cur, nx = 1 - c;
        const double rest = 1.0 - *phi;
        double delta, wsum;
        sl_weight_summary ws;
        sl_stream rs;
        sl_status st;
        uint32_t *t;
        for (j = 0; j < N; j++)
            if (b->dead[c][j])
                b->lw[j] = -HUGE_VAL; /* the dead carry no weight */
        if (*steps + 1 >= cfg->temper.max_steps ||
            sl_temper_cess(N, b->lw, b->ll, rest) >= cfg->temper.ess)
            return SL_OK;
        delta = sl_temper_next(N, b->lw, b->ll, rest, cfg->temper.ess);
        if (!(delta < rest))
            return SL_OK;
        for (j = 0; j < N; j++)
            b->logw[j] = b->dead[c][j] ? -HUGE_VAL : b->lw[j] + delta * b->ll[j];
        if ((st = sl_weights_normalize(N, b->logw, w, &ws, err)) != SL_OK)
            return st;
        *logz += ws.log_sum;
        *phi += delta;
        (*steps)++;
        /* the move is fitted to the tempered weights before resampling */
        if (moving && mv->prepare != NULL)
            mv->prepare(&cfg->move, p, N, b->Z[c], w, b->mv, NULL);
        if ((st = sl_weights_check(N, w, &wsum, err)) != SL_OK)
            return st;
        sl_stream_init(&rs, cfg->seed, (uint32_t)*steps, (uint32_t)k,
                       SL_PURPOSE_TEMPER_RESAMPLE);
        cfg->resampler->run(N, w, wsum, N, &rs, b->rwork, b->anc);
        sl_pfi_gather_cols(n, N, b->X[c], b->X[nx], b->anc, b->nt);
        sl_pfi_gather_cols(p, N, b->P[c], b->P[nx], b->anc, b->nt);
        sl_pfi_gather_cols(p, N, b->Z[c], b->Z[nx], b->anc, b->nt);
        sl_pfi_gather_cols(q, N, b->E[c], b->E[nx], b->anc, b->nt);
        gather_draws(b, N, b->anc, b->s_now, k);
        sl_pfi_gather_cols(1, N, b->ll, b->llx, b->anc, b->nt);
        if (b->replay) {
            sl_pfi_gather_cols(1, N, b->cll, b->tmp, b->anc, b->nt);
            memcpy(b->cll, b->tmp, N * sizeof(double));
        }
        for (j = 0; j < N; j++) {
            if (p > 0)
                memcpy(b->vid[nx] + j * p, b->vid[c] + (size_t)b->anc[j] * p,
                       p * sizeof(uint32_t));
            b->dead[nx][j] = b->dead[c][b->anc[j]];
            b->tanc2[j] = *steps == 1 ? b->anc[j] : b->tanc[b->anc[j]];
            w[j] = 1.0 / (double)N;
            b->lw[j] = -log((double)N);
        }
        t = b->tanc;
        b->tanc = b->tanc2;
        b->tanc2 = t;
        {
            double *l = b->ll;
            b->ll = b->llx;
            b->llx = l;
        }
        if (b->nwin > 0 && k > 0)
            window_gather(cfg, b, k - 1, k < b->nwin ? k : b->nwin);
        *cur = nx;
        if (b->replay &&
            (st = replay_move(cfg, b, k, nx, *phi, b->tanc, b->ll, *steps, evals, err)) != SL_OK)
            return st;
        if (moving) {
            double *Zn = b->Z[nx], *Pn = b->P[nx];
            const uint32_t purpose = (uint32_t)SL_PURPOSE_TEMPER_MOVE + (uint32_t)*steps;
            memcpy(b->Z[c], Zn, p * N * sizeof(double)); /* Z[c] is free now */
#pragma omp parallel for num_threads(b->nt) schedule(static) private(i)
            for (j = 0; j < N; j++) {
                sl_stream sm;
                sl_stream_init(&sm, cfg->seed, (uint32_t)j, (uint32_t)k, purpose);
                mv->member(&cfg->move, p, b->mv, Zn + j * p, &sm);
                for (i = 0; i < p; i++)
                    Pn[i + j * p] = sl_transform_inverse(&cfg->ptrans[i], Zn[i + j * p]);
            }
            sl_pfi_refresh_ids(p, N, b->Z[c], Zn, b->vid[nx]);
        }
        if (relik) {
            size_t skipped;
            if ((st = sl_pfi_predict_obs(cfg, b, r0, m, tk, b->X[nx], b->P[nx], err)) != SL_OK)
                return st;
            sl_pfi_loglik_all(cfg, b, r0, m, &skipped);
            *evals += N;
        }
    }
}

/* Living members (a finite state) with a NaN among their predicted
 * observations of cycle rows r0..r0+m-1 whose value is not missing: an
 * operator that failed for them, so their likelihood is zero. */
static size_t count_nan_predictions(const sl_pf_config *cfg, const pf_buffers *b, size_t r0,
                                    size_t m, const unsigned char *dead)
{
    size_t i, count = 0;
    long j;
    int all = 1;
    for (i = 0; i < m; i++)
        all = all && !isnan(cfg->y[r0 + i]);
    if (all) {
        /* every row has a value (the common case): x != x over the
         * member's rows, no branch per row */
#pragma omp parallel for num_threads(b->nt) schedule(static) private(i) reduction(+ : count)
        for (j = 0; j < (long)cfg->N; j++) {
            const double *yh = b->Yhat + (size_t)j * m;
            int nan = 0;
            if (dead[j])
                continue;
            for (i = 0; i < m; i++)
                nan |= yh[i] != yh[i];
            count += (size_t)nan;
        }
        return count;
    }
#pragma omp parallel for num_threads(b->nt) schedule(static) private(i) reduction(+ : count)
    for (j = 0; j < (long)cfg->N; j++) {
        if (dead[j])
            continue;
        for (i = 0; i < m; i++)
            if (!isnan(cfg->y[r0 + i]) && isnan(b->Yhat[i + (size_t)j * m])) {
                count++;
                break;
            }
    }
    return count;
}

sl_status sl_pf_run(const sl_pf_config *cfg, double *X, double *P, double *w,
                    void *work, sl_pf_output *out, sl_error *err)
{
    const sl_model *md;
    size_t N, n, p, q, i, j, k, k0 = 0, fidx = 0, ndead;
    pf_buffers b;
    const sl_analysis *an;
    int cur = 0, moving, weighs, paced;
    uint32_t s = 0;
    double t, tprev = 0.0, units = 0.0;
    sl_pfi_pace pace;
    sl_status st = sl_pf_check(cfg, err);
    if (st != SL_OK)
        return st;
    md = cfg->model;
    N = cfg->N;
    n = md->n_state;
    p = md->n_param;
    q = md->n_forcing;
    memset(&b, 0, sizeof b);
    layout(cfg, (unsigned char *)work, &b, NULL);
    an = b.an;
    weighs = (an->flags & SL_ANALYSIS_WEIGHTS) != 0;
    b.nt = sl_pfi_unpaced_threads(cfg, N);
    if (cfg->derived_summary && cfg->n_lin + cfg->n_fun > 0 &&
        (out->dmean == NULL || (cfg->nq > 0 && out->dquant == NULL)))
        return sl_fail(err, SL_EINVAL, "badconfig",
                       "a run that summarises derived quantities needs the outputs dmean and dquant");
    if (b.nwin > 0 && (out->smean == NULL || (cfg->nq > 0 && out->squant == NULL)))
        return sl_fail(err, SL_EINVAL, "badconfig",
                       "a run with a lag needs the outputs smean and squant");
    if (b.smc2)
        return sl_pfi_smc2_run(cfg, &b, work, X, P, w, out, err);

    memcpy(b.X[0], X, n * N * sizeof(double));
    memcpy(b.P[0], P, p * N * sizeof(double));
    moving = cfg->param_move != NULL && cfg->param_move->when != SL_MOVE_NEVER;
    for (j = 0; j < N; j++)
        for (i = 0; i < p; i++) {
            double x = P[i + j * p];
            b.Z[0][i + j * p] = sl_transform_forward(&cfg->ptrans[i], x);
            /* a fixed parameter may sit at an infinite bound (a levee cost
             * of Inf: no levees ever); a moving one needs a finite z */
            if (isnan(x) || (moving && !isfinite(b.Z[0][i + j * p])))
                return sl_fail(err, SL_EINVAL, "badparams",
                               "parameter %lu of member %lu (%g) lies outside its bounds",
                               (unsigned long)(i + 1), (unsigned long)(j + 1), x);
        }
    for (j = 0; j < N; j++) {
        b.dead[0][j] = (unsigned char)sl_pfi_has_nonfinite(X + j * n, n);
        w[j] = 1.0 / (double)N;
        b.lw[j] = -log((double)N);
    }
    /* value ids: a parameter with one value in every member has one id */
    for (i = 0; i < p; i++) {
        int same = 1;
        for (j = 1; j < N && same; j++)
            same = b.Z[0][i + j * p] == b.Z[0][i];
        for (j = 0; j < N; j++)
            b.vid[0][i + j * p] = same ? 0u : (uint32_t)j;
    }
    if (q > 0)
        memset(b.E[0], 0, q * N * sizeof(double));
    if (b.pcn) {
        size_t a = 0;
        for (i = 0; i < q; i++)
            b.fslot[i] = cfg->forcing.noise != NULL && cfg->forcing.noise[i] != SL_FORCING_EXACT
                             ? a++ : 0;
        a = 0;
        for (i = 0; i < n; i++)
            b.sslot[i] = cfg->state_noise != NULL && cfg->state_noise[i] > 0 ? a++ : 0;
        b.pcn_beta = cfg->move.rm_paths;
    }
    if (b.replay) {
        memcpy(b.X0, X, n * N * sizeof(double));
        for (i = 0; i < p; i++)
            b.est[i] = (unsigned char)(N > 1 && b.vid[0][i + p] != 0);
        for (j = 0; j < N; j++)
            b.cll[j] = 0.0;
        b.rm_adapt = 1.0;
        cfg->param_move->prepare(&cfg->move, p, N, b.Z[0], NULL, b.mvlast, NULL);
    }
    out->log_evidence = 0.0;
    out->steps = 0;
    if (an->start != NULL)
        an->start(an, cfg, b.awork, &b);
    t = cfg->t0;
    if (cfg->resume != NULL) {
        /* a checkpoint: the workspace, weights and loop values it holds */
        const sl_pf_snapshot_head *h = &cfg->resume->head;
        if ((st = sl_pfi_snap_restore(cfg, &b, work, w, err)) != SL_OK)
            return st;
        k0 = (size_t)h->next;
        cur = (int)h->cur;
        s = (uint32_t)h->s;
        fidx = (size_t)h->fidx;
        t = h->t;
        b.infl = h->infl;
        out->log_evidence = h->log_evidence;
        out->steps = (size_t)h->steps;
    }

    /* a run split across ranks keeps one count on every rank */
    paced = cfg->threads_paced && cfg->ranks == NULL;
    if (paced)
        sl_pfi_pace_init(&pace, cfg->threads);
    for (k = k0; k < cfg->T; k++) {
        const double tk = cfg->times[k];
        const size_t r0 = cfg->obs_first[k], m = cfg->obs_first[k + 1] - r0;
        double *Xc = b.X[cur], *Pc = b.P[cur], *Zc = b.Z[cur];
        size_t nskipped = 0, nobs, tsteps = 0, evals = 0;
        double ess, wsum, tphi = 0.0, tlogz = 0.0;
        int reweight = 0, resampled = 0, degenerate = 0;

        if (paced) {
            /* the last cycle's time, from its start to this one's */
            const double now = sl_pfi_seconds();
            double hk;
            if (k > k0)
                sl_pfi_pace_record(&pace, now - tprev, units);
            b.nt = sl_pfi_pace_next(&pace);
            tprev = now;
            units = (double)N * (double)(sl_pfi_nsteps(md, t, tk, &hk) + 1);
        }

        b.rm_sweeps = b.rm_proposed = b.rm_accepted = 0;
        b.yfun_kept = 0;

        if (k > 0 && p > 0 && moving && cfg->param_move->when == SL_MOVE_EACH_CYCLE) {
            memcpy(b.Z[1 - cur], Zc, p * N * sizeof(double));
            move_params(cfg, &b, Zc, Pc, w, (uint32_t)k);
            sl_pfi_refresh_ids(p, N, b.Z[1 - cur], Zc, b.vid[cur]);
        }

        /* forecast */
        {
            const uint32_t s0 = s;
            if (cfg->ranks != NULL && !b.pcn)
                st = sl_pfi_forecast_split(cfg, &b, cur, &t, k, &s, &fidx, err);
            else
                st = sl_pfi_forecast(cfg, &b, Xc, Pc, b.E[cur], b.U, &t, k, k, &s, &fidx, NULL,
                                     cfg->seed, b.pcn ? b.zp : NULL, 0, 1, err);
            out->steps += s - s0;
            if (st != SL_OK)
                return st;
        }

        /* optional additive state noise, then the health of every member */
        if (an->flags & SL_ANALYSIS_NOISE_FREE)
            memcpy(b.wk_m, Xc, n * N * sizeof(double));
        sl_pfi_add_state_noise(cfg, &b, Xc, k, NULL, cfg->seed, b.pcn ? b.zp : NULL, 0);
        ndead = 0;
        {
            /* per member, and counts: the same for any number of threads */
            unsigned char *dc = b.dead[cur];
            int rw = 0;
#pragma omp parallel for num_threads(b.nt) schedule(static) reduction(+ : ndead) reduction(| : rw)
            for (j = 0; j < N; j++) {
                if (!dc[j] && sl_pfi_has_nonfinite(Xc + j * n, n))
                    dc[j] = 1;
                if (dc[j]) {
                    ndead++;
                    if (w[j] > 0)
                        rw = 1;
                }
            }
            reweight |= rw;
        }

        if (out->fmean != NULL)
            forecast_mean(cfg, b.dead[cur], Xc, Pc, w, out->fmean + k * (n + p), b.nt);
        /* the cycle's analysis, through its table entry: it weighs the
         * members (b.ll, nobs) or leaves the weights it wants in w */
        {
            sl_analysis_cycle ac;
            memset(&ac, 0, sizeof ac);
            ac.self = an;
            ac.cfg = cfg;
            ac.k = k;
            ac.t = tk;
            ac.r0 = r0;
            ac.m = m;
            ac.X = Xc;
            ac.Z = Zc;
            ac.P = Pc;
            ac.w = w;
            ac.dead = b.dead[cur];
            ac.ndead = ndead;
            ac.Xf = an->flags & SL_ANALYSIS_NOISE_FREE ? b.wk_m : NULL;
            ac.work = b.awork;
            ac.nwin = b.nwin ? (k < b.nwin ? k : b.nwin) : 0;
            ac.out = out;
            ac.run = &b;
            ac.ll = b.ll;
            if ((st = an->update(&ac, err)) != SL_OK)
                return st;
            nskipped = ac.skipped;
            evals += ac.evals;
            if (ac.degenerate)
                degenerate = 1;
            nobs = weighs ? ac.nobs : 0;
        }
        if (!weighs) {
            out->logz[k] = NAN;
            out->log_evidence = NAN;
            reweight = 0;
        }
        if (nobs > 0) {
            reweight = 1;
            if (cfg->temper.ess > 0) {
                b.s_now = s;
                st = temper_cycle(cfg, &b, k, r0, m, tk, &cur, w, &tphi, &tlogz, &tsteps,
                                  &evals, err);
                b.yfun_kept = 0;
                if (st != SL_OK)
                    return st;
                Xc = b.X[cur];
                Pc = b.P[cur];
                Zc = b.Z[cur];
            }
        }
        if (b.replay)
            /* the cycle's log-likelihood of each member, before the
             * weighting reuses b.ll */
            for (j = 0; j < N; j++)
                b.llk[j] = b.dead[cur][j] ? -HUGE_VAL
                                          : (nobs > 0 && !isnan(b.ll[j]) ? b.ll[j]
                                                                         : (nobs > 0 ? -HUGE_VAL : 0.0));
        if (out->temper_steps != NULL)
            out->temper_steps[k] = nobs > 0 ? (double)(tsteps + 1) : 0.0;
        if (out->loglik_evals != NULL)
            out->loglik_evals[k] = (double)evals;
        if (weighs)
            out->logz[k] = 0.0;
        if (reweight) {
            int dg = 0;
            double lz;
            /* the exponent tempering left (1 without tempering) */
            st = sl_pfi_reweight(N, b.dead[cur], b.ll, nobs, 1.0 - tphi, b.lw, b.logw, w, &lz,
                                 &dg, b.nt, err);
            if (st != SL_OK)
                return st;
            if (dg)
                degenerate = 1;
            out->logz[k] = dg ? -HUGE_VAL : lz + tlogz;
            out->log_evidence += out->logz[k];
        }
        st = SL_OK;
        wsum = 0.0;
        ess = 0.0;
        for (j = 0; j < N; j++) {
            wsum += w[j];
            ess += w[j] * w[j];
        }
        ess = ess > 0 ? 1.0 / ess : 0.0;

        /* record */
        if (!cfg->no_summary) {
            if ((st = sl_pfi_summarise(cfg, &b, Xc, Pc, w, out, k, err)) != SL_OK)
                return st;
            st = sl_pfi_summarise_derived(cfg, &b, tk, Xc, Pc, w, b.yfun_kept, out, k, err);
            if (st != SL_OK)
                return st;
        }
        /* a particle-filter cycle where no member explains the data has
         * no effective members: its weights are all zero, and the weights
         * kept to go on with must not show it as a healthy ensemble */
        out->ess[k] = weighs && degenerate ? 0.0 : ess;
        out->skipped[k] = (double)nskipped;
        out->nonfinite[k] = (double)ndead;
        out->degenerate[k] = degenerate;
        if (cfg->keep_history) {
            if (out->hist_X != NULL)
                memcpy(out->hist_X + k * n * N, Xc, n * N * sizeof(double));
            if (out->hist_P != NULL && p > 0)
                memcpy(out->hist_P + k * p * N, Pc, p * N * sizeof(double));
            if (out->hist_w != NULL)
                memcpy(out->hist_w + k * N, w, N * sizeof(double));
        }

        /* fixed-lag smoothing: the oldest cycle of the window has now seen
         * the observations up to this one; this cycle takes its slot; at
         * the end every cycle still in the window is recorded */
        if (b.nwin > 0 && b.wids == 0) {
            if (k >= b.nwin)
                window_emit(cfg, &b, k - b.nwin, w, out, -1);
            window_store(cfg, &b, k, Xc, Zc, out);
            if (k + 1 == cfg->T) {
                size_t s0 = k + 1 >= b.nwin ? k + 1 - b.nwin : 0, s1;
                for (s1 = s0; s1 <= k; s1++)
                    window_emit(cfg, &b, s1, w, out, -1);
            }
        } else if (b.nwin > 0) {
            /* the weakly coupled particle filter: component c's rows of
             * cycle k - L_c, L_c its lag; those of the window's oldest
             * cycle before this cycle takes its slot */
            size_t c, L;
            for (c = 0; c < b.wids; c++)
                if ((L = window_lag(cfg, &b, c)) == b.nwin && k >= L)
                    window_emit(cfg, &b, k - L, w, out, (long)c);
            window_store(cfg, &b, k, Xc, Zc, out);
            for (c = 0; c < b.wids; c++) {
                size_t s0 = 0, s1;
                L = window_lag(cfg, &b, c);
                if (L < b.nwin && k >= L)
                    window_emit(cfg, &b, k - L, w, out, (long)c);
                if (k + 1 == cfg->T) {
                    s0 = k + 1 >= L ? k + 1 - L : 0;
                    for (s1 = s0; s1 <= k; s1++)
                        if (!(L < b.nwin && s1 + L == k))
                            window_emit(cfg, &b, s1, w, out, (long)c);
                }
            }
        }

        /* resample (ensemble Kalman: only to replace dead members) */
        if (wsum > 0 && (!weighs ? ndead > 0 : ess < cfg->threshold * (double)N)) {
            int nx = 1 - cur;
            /* the kernel move is fitted to the weighted ensemble before
             * it is resampled */
            int kmove = p > 0 && moving && weighs && !b.replay &&
                        cfg->param_move->when == SL_MOVE_AT_RESAMPLE;
            if (kmove && cfg->param_move->prepare != NULL)
                cfg->param_move->prepare(&cfg->move, p, N, Zc, w, b.mv, NULL);
            st = sl_resample(cfg->resampler, N, w, N, cfg->seed, (uint32_t)k,
                             b.rwork, b.anc, err);
            if (st != SL_OK)
                return st;
            sl_pfi_gather_cols(n, N, Xc, b.X[nx], b.anc, b.nt);
            sl_pfi_gather_cols(p, N, Pc, b.P[nx], b.anc, b.nt);
            sl_pfi_gather_cols(p, N, Zc, b.Z[nx], b.anc, b.nt);
            if (p > 0) {
                long jj;
#pragma omp parallel for num_threads(b.nt) schedule(static)
                for (jj = 0; jj < (long)N; jj++)
                    memcpy(b.vid[nx] + (size_t)jj * p, b.vid[cur] + (size_t)b.anc[jj] * p,
                           p * sizeof(uint32_t));
            }
            if (kmove) {
                const sl_param_mover *mv = cfg->param_move;
                double *Zn = b.Z[nx], *Pn = b.P[nx];
                memcpy(Zc, Zn, p * N * sizeof(double)); /* Zc is free now */
#pragma omp parallel for num_threads(b.nt) schedule(static) private(i)
                for (j = 0; j < N; j++) {
                    sl_stream sm;
                    sl_stream_init(&sm, cfg->seed, (uint32_t)j, (uint32_t)k,
                                   SL_PURPOSE_PARAM_MOVE);
                    mv->member(&cfg->move, p, b.mv, Zn + j * p, &sm);
                    for (i = 0; i < p; i++)
                        Pn[i + j * p] = sl_transform_inverse(&cfg->ptrans[i], Zn[i + j * p]);
                }
                sl_pfi_refresh_ids(p, N, Zc, Zn, b.vid[nx]);
            }
            sl_pfi_gather_cols(q, N, b.E[cur], b.E[nx], b.anc, b.nt);
            gather_draws(&b, N, b.anc, s, k);
            if (b.nwin > 0)
                window_gather(cfg, &b, k, k + 1 < b.nwin ? k + 1 : b.nwin);
            {
                const double w1 = 1.0 / (double)N, lw1 = -log((double)N);
                long jj;
#pragma omp parallel for num_threads(b.nt) schedule(static)
                for (jj = 0; jj < (long)N; jj++) {
                    b.dead[nx][jj] = b.dead[cur][b.anc[jj]];
                    w[jj] = w1;
                    b.lw[jj] = lw1;
                }
            }
            cur = nx;
            resampled = 1;
            if (b.replay) {
                uint32_t *lk = b.lin + k * N;
                sl_pfi_gather_cols(1, N, b.cll, b.tmp, b.anc, b.nt);
                memcpy(b.cll, b.tmp, N * sizeof(double));
                sl_pfi_gather_cols(1, N, b.llk, b.tmp, b.anc, b.nt);
                memcpy(b.llk, b.tmp, N * sizeof(double));
                for (j = 0; j < N; j++)
                    lk[j] = tsteps > 0 ? b.tanc[b.anc[j]] : b.anc[j];
                b.s_now = s;
                st = replay_move(cfg, &b, k, cur, 1.0, lk, b.llk, 0, &evals, err);
                if (st != SL_OK)
                    return st;
                if (out->loglik_evals != NULL)
                    out->loglik_evals[k] = (double)evals;
            }
        } else if (b.replay) {
            for (j = 0; j < N; j++)
                b.lin[k * N + j] = tsteps > 0 ? b.tanc[j] : (uint32_t)j;
        }
        if (b.replay)
            for (j = 0; j < N; j++)
                b.cll[j] += b.llk[j];
        if (out->move_sweeps != NULL)
            out->move_sweeps[k] = (double)b.rm_sweeps;
        if (out->move_accept != NULL)
            out->move_accept[k] = b.rm_proposed > 0
                                      ? (double)b.rm_accepted / (double)b.rm_proposed
                                      : (double)NAN;
        out->resampled[k] = resampled || tsteps > 0;
        if (p > 0)
            sl_pfi_record_diversity(cfg, &b, b.vid[cur], b.Z[cur], w, out, k);
        if (cfg->keep_history && out->hist_a != NULL) {
            for (j = 0; j < N; j++)
                out->hist_a[k * N + j] = resampled ? (double)b.anc[j] : (double)j;
            /* the members recorded at cycle k descend, through the
             * tempering steps, from forecast members tanc[j], whose parents
             * at cycle k - 1 the previous row names */
            if (tsteps > 0 && k > 0) {
                double *prev = out->hist_a + (k - 1) * N;
                for (j = 0; j < N; j++)
                    b.llx[j] = prev[b.tanc[j]];
                memcpy(prev, b.llx, N * sizeof(double));
            }
        }
        if (cfg->checkpoint != NULL &&
            ((k + 1) % cfg->checkpoint_every == 0 || k + 1 == cfg->T)) {
            sl_pf_snapshot sn;
            memset(&sn, 0, sizeof sn);
            sn.head.next = k + 1;
            sn.head.cur = (uint64_t)cur;
            sn.head.s = s;
            sn.head.fidx = fidx;
            sn.head.t = t;
            sn.head.infl = b.infl;
            sn.head.log_evidence = out->log_evidence;
            sn.head.steps = out->steps;
            if ((st = sl_pfi_snap_call(cfg, &b, work, w, &sn, err)) != SL_OK)
                return st;
        }
    }
    memcpy(X, b.X[cur], n * N * sizeof(double));
    memcpy(P, b.P[cur], p * N * sizeof(double));
    return SL_OK;
}
