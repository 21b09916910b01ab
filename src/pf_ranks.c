/* pf_ranks.c - the particle filter with its members split across the
 * ranks of a distributed job (sl_pf_run_ranks). The core knows nothing of
 * how the ranks talk: the caller's sl_pf_ranks carries two collectives.
 *
 * Rank r holds members [o_r, o_(r+1)), o_r = floor(r N / P), and does
 * everything that costs per member and per model step on them alone: the
 * forecast (every random stream keyed by the global member index, as in
 * sl_pf_run), the state noise, the predicted observations and each
 * member's log-likelihood, the parameter move. What every rank keeps of
 * all N members is small and per member, not per state: the log-weights
 * and weights, health flags, ancestors, transformed parameters and their
 * value ids, and the summarised rows of the cycle. On those every rank
 * runs the very code of the single-process run (normalisation, ESS,
 * evidence, the resampler, the move's fit, means, quantiles, diversity),
 * in the same order over the members: so the result is the single
 * process's bit for bit, for any number of ranks. Resampling moves a
 * member's columns (state, parameters, forcing perturbations, ids, health)
 * only when its ancestor lives on another rank; each rank sends a column
 * once to each rank that needs it, in chunks of a bounded size. The
 * ensemble Kalman analyses run the same way: every rank sets the
 * analysis up from all members' predicted observations, then analyses
 * its own rows of every living member (kalman_cycle_ranks). */
#include <math.h>
#include <stdint.h>
#include <string.h>

#include "sluice/loglik.h"
#include "sluice/param_move.h"
#include "sluice/pf.h"
#include "sluice/resample.h"
#include "sluice/rng.h"
#include "sluice/stats.h"
#include "sluice/prior.h"
#include "sluice/weights.h"
#include "enkf_internal.h"
#include "pf_internal.h"
#include "workspace.h"

#ifdef _OPENMP
#include <omp.h>
#endif

/* Bytes a rank sends (and receives) per round of the exchange at most. */
#define EXCHANGE_CHUNK ((size_t)8 << 20)

/* Per-rank counts of the cycle's local work, gathered from every rank
 * (ST_FAILED first: the flag any_rank_failed sets). */
enum { ST_FAILED, ST_DEAD, ST_NANPRED, ST_SKIPPED, ST_N };

/* The first member of rank r of P (o_P = N). */
static size_t first_of(size_t N, int P, int r)
{
    return (size_t)(((uint64_t)N * (uint64_t)r) / (uint64_t)P);
}

/* The rank that holds global member a. */
static int owner_of(size_t N, int P, size_t a)
{
    int r = (int)(((uint64_t)a * (uint64_t)P) / (uint64_t)N);
    while (r + 1 < P && first_of(N, P, r + 1) <= a)
        r++;
    while (r > 0 && first_of(N, P, r) > a)
        r--;
    return r;
}

typedef struct {
    pf_buffers b;          /* the local members' buffers (N = n_r) */
    size_t N, nr, m0;      /* members in all, here, the first one here */
    size_t ns, rec;        /* summarised rows; bytes of one member's columns */
    size_t rows;           /* summarised rows a rank summarises, at most */
    double *V;             /* this rank's summarised rows of every member */
    double *Vl;            /* ns x nr the summarised rows of this rank's
                            * members, in blocks by the rank they go to */
    double *resl, *res;    /* this rank's rows' summaries; every rank's */
    double *gll, *glw, *glogw, *gZ, *gYhat, *qwork, *rwork, *flags;
    uint32_t *gvid, *ganc, *stamp, *holder, *src, *rfrom, *rdest;
    unsigned char *gdead, *gmark;
    double *stats;         /* ST_N x P */
    unsigned char *sbuf, *rbuf;
    size_t chunk;          /* records per round */
    size_t *counts;        /* 5 x P scratch for the collectives */
    pf_buffers g;          /* a view of the global arrays for the shared
                            * helpers (mark) */
    /* an ensemble Kalman analysis split by members (kalman_cycle) */
    int kalman;            /* 1: the run's analysis is one */
    sl_enkf_config kset;   /* its settings */
    double *Aloc;          /* this rank's rows of every living member (in
                            * V's room) */
    double *tbuf;          /* (n + p) x nr: this rank's members' rows in
                            * the order they travel (in Vl's room) */
    size_t *klo, *khi, *klive; /* P each: every rank's rows in the cycle's
                                * analysis, and its living members */
    size_t *korder;        /* the LETKF: the rows in the order of their
                            * positions; rank r's are korder[klo[r] ..
                            * khi[r]) (NULL: the rows klo[r] .. khi[r]) */
    size_t krows;          /* the most rows a rank's analysis may hold */
} ranks_buffers;

/* The settings a split ensemble Kalman analysis is sized with: the
 * run's, on P ranks (er: no collectives), each rank with its own rows. */
static void sizing_config(const sl_pf_config *cfg, const ranks_buffers *rb, int P,
                          sl_enkf_config *ec, sl_enkf_ranks *er)
{
    *ec = rb->kset;
    memset(er, 0, sizeof *er);
    er->size = P;
    ec->ranks = er;
    ec->rows_local = 1;
    ec->loc = cfg->loc;
    ec->threads = cfg->threads;
}

static size_t ranks_layout(const sl_pf_config *cfg, const sl_pf_config *lc, int P,
                           size_t chunk_bytes, unsigned char *base, ranks_buffers *rb)
{
    const sl_model *md = cfg->model;
    const size_t N = cfg->N, n = md->n_state, p = md->n_param, q = md->n_forcing;
    const size_t ns = sl_pfi_summary_count(cfg), nthr = (size_t)cfg->threads;
    size_t off, k, m_max = 0, rec, krows = 0;
    sl_pf_config ll = *lc;
    /* an ensemble Kalman run lays its analysis's buffers out below, for
     * all members: the local run gets none (the particle filter's) */
    if (rb->kalman) {
        ll.analysis = &sl_analysis_pf;
        ll.enkf = NULL;
    }
    off = sl_pfi_layout(&ll, base, &rb->b);
    if (off == 0)
        return 0;
    for (k = 0; k < cfg->T; k++)
        if (cfg->obs_first[k + 1] - cfg->obs_first[k] > m_max)
            m_max = cfg->obs_first[k + 1] - cfg->obs_first[k];
    rb->ns = ns;
    /* a member's columns: X, P, Z, E as doubles, then the ids, then the
     * health flag, padded to doubles */
    rec = 8 * (n + 2 * p + q) + 4 * p + 1;
    rec = (rec + 7) / 8 * 8;
    rb->rec = rec;
    if (chunk_bytes == 0)
        chunk_bytes = EXCHANGE_CHUNK;
    rb->chunk = chunk_bytes / rec > 0 ? chunk_bytes / rec : 1;
    if (rb->chunk > N)
        rb->chunk = N;
    sl_ws_take(base, &off, 0, 1);
    rb->rows = (ns + (size_t)P - 1) / (size_t)P;
    if (rb->kalman) {
        /* the rows a rank analyses (V and Vl serve it, free then) */
        sl_enkf_config ec;
        sl_enkf_ranks er;
        sizing_config(cfg, rb, P, &ec, &er);
        if ((krows = sl_enkf_local_rows_max(&ec, n + p, N, m_max ? m_max : 1)) == 0)
            return 0;
        rb->krows = krows;
    }
    rb->V = sl_ws_take(base, &off, (rb->rows > krows ? rb->rows : krows) * N, 8);
    rb->Vl = sl_ws_take(base, &off, (rb->kalman && ns < n + p ? n + p : ns) * lc->N, 8);
    rb->res = sl_ws_take(base, &off, ns * (2 + cfg->nq) + 1, 8);
    rb->resl = sl_ws_take(base, &off, rb->rows * (2 + cfg->nq) + 1, 8);
    rb->gll = sl_ws_take(base, &off, N, 8);
    rb->glw = sl_ws_take(base, &off, N, 8);
    rb->glogw = sl_ws_take(base, &off, N, 8);
    rb->gZ = sl_ws_take(base, &off, p * N, 8);
    rb->rwork = sl_ws_take(base, &off, sl_resample_workspace(cfg->resampler, N, N), 8);
    rb->flags = sl_ws_take(base, &off, p * ((size_t)P + 1) + 1, 8);
    rb->gYhat = sl_ws_take(base, &off, m_max * N, 8);
    rb->qwork = sl_ws_take(base, &off, nthr * sl_quantile_workspace(N), 8);
    rb->gvid = sl_ws_take(base, &off, p * N, 4);
    rb->ganc = sl_ws_take(base, &off, N, 4);
    rb->stamp = sl_ws_take(base, &off, N, 4);
    rb->src = sl_ws_take(base, &off, lc->N, 4);
    rb->holder = sl_ws_take(base, &off, N, 4);
    rb->gdead = sl_ws_take(base, &off, N, 1);
    rb->gmark = sl_ws_take(base, &off, N, 1);
    rb->stats = sl_ws_take(base, &off, (size_t)ST_N * (size_t)P, 8);
    rb->sbuf = sl_ws_take(base, &off, rb->chunk, rec);
    rb->rbuf = sl_ws_take(base, &off, rb->chunk, rec);
    rb->rfrom = sl_ws_take(base, &off, rb->chunk, 4);
    rb->rdest = sl_ws_take(base, &off, rb->chunk, 4);
    rb->counts = sl_ws_take(base, &off, 5 * (size_t)P + 4, sizeof(size_t));
    if (rb->kalman) {
        /* the analysis's buffers for all N members (sl_pfi_kalman_setup)
         * in the local run's buffers, this rank's rows and what travels */
        const size_t v = n + p, dim = cfg->loc != NULL ? cfg->loc->dim : 0;
        sl_enkf_config ec;
        sl_enkf_ranks er;
        size_t ew;
        sizing_config(cfg, rb, P, &ec, &er);
        ew = sl_enkf_workspace(&ec, v, N, m_max ? m_max : 1, 0);
        if (ew == 0 || dim > 2)
            return 0;
        rb->b.Hc = sl_ws_take(base, &off, m_max * N, 8);
        rb->b.yc = sl_ws_take(base, &off, m_max, 8);
        rb->b.rc = sl_ws_take(base, &off, m_max, 8);
        rb->b.opos = sl_ws_take(base, &off, m_max * dim, 8);
        rb->b.oc = sl_ws_take(base, &off, m_max, 8);
        rb->b.live = sl_ws_take(base, &off, N, sizeof(size_t));
        rb->b.ework = sl_ws_take(base, &off, (ew + 7) / 8, 8); /* ew bytes */
        rb->Aloc = rb->V;
        rb->tbuf = rb->Vl;
        rb->klo = sl_ws_take(base, &off, 3 * (size_t)P, sizeof(size_t));
        rb->khi = rb->klo + P;
        rb->klive = rb->khi + P;
        rb->korder = NULL;
        if (rb->kset.method == SL_ENKF_LETKF) {
            /* its rows in order and their groups, worked out once */
            const size_t ow = sl_letkf_order_work(v);
            size_t *gstart, ngroup, G0, G1;
            void *sw;
            int r;
            if (ow == 0 || cfg->loc == NULL)
                return 0;
            rb->korder = sl_ws_take(base, &off, v, sizeof(size_t));
            gstart = sl_ws_take(base, &off, v + 1, sizeof(size_t));
            sw = sl_ws_take(base, &off, ow, 1);
            if (base != NULL && off != SL_WS_OVERFLOW) {
                ngroup = sl_letkf_order(cfg->loc, v, rb->korder, gstart, sw);
                for (r = 0; r < P; r++) {
                    sl_letkf_local_groups(gstart, ngroup, v, P, r, &G0, &G1);
                    rb->klo[r] = gstart[G0];
                    rb->khi[r] = gstart[G1];
                }
            }
        }
    }
    return sl_ws_size(off);
}

/* The local configuration: this rank's members only. */
static void local_config(const sl_pf_config *cfg, int rank, int P, sl_pf_config *lc)
{
    *lc = *cfg;
    lc->N = first_of(cfg->N, P, rank + 1) - first_of(cfg->N, P, rank);
}

/* Whether the run's analysis is an ensemble Kalman one that a split by
 * members supports: strong coupling. */
static int kalman_by_members(const sl_pf_config *cfg)
{
    return sl_pfi_kalman_settings(cfg, NULL) && !cfg->weak;
}

/* What keeps a run from being split by members (NULL: nothing): such a
 * run splits its forecasts only (cfg->ranks in sl_pf_run). */
static const char *members_unsplit(const sl_pf_config *cfg)
{
    if (sl_pf_analysis_of(cfg) != &sl_analysis_pf && !kalman_by_members(cfg))
        return "an analysis other than the particle filter's or an ensemble Kalman one";
    if (cfg->inner > 0)
        return "SMC2";
    if (cfg->lag > 0)
        return "a fixed lag";
    if (cfg->temper.ess > 0)
        return "tempering";
    if (cfg->model->n_param > 0 && cfg->param_move != NULL &&
        (cfg->param_move->replay || cfg->param_move->when == SL_MOVE_EACH_CYCLE))
        return "this parameter move";
    if (cfg->keep_history)
        return "the members' history";
    if (cfg->derived_summary && cfg->n_lin + cfg->n_fun > 0)
        return "summaries of derived quantities";
    return NULL;
}

int sl_pf_ranks_by_members(const sl_pf_config *cfg)
{
    return members_unsplit(cfg) == NULL;
}

sl_status sl_pf_ranks_check(const sl_pf_config *cfg, int P, sl_error *err)
{
    sl_status st = sl_pf_check(cfg, err);
    if (st != SL_OK)
        return st;
    if (P < 1)
        return sl_fail(err, SL_EINVAL, "badranks", "a distributed run needs >= 1 rank, got %d", P);
    if (cfg->N < (size_t)P)
        return sl_fail(err, SL_EINVAL, "ranksempty",
                       "%lu members cannot be split across %d ranks: every rank needs at "
                       "least one member (use at least as many members as ranks, or "
                       "fewer ranks)",
                       (unsigned long)cfg->N, P);
    if (cfg->checkpoint != NULL || cfg->resume != NULL || cfg->inner > 0)
        return sl_fail(err, SL_EINVAL, "ranksunsupported",
                       "a run split across ranks does not support %s; run it on one "
                       "process (option 'mpi', false)",
                       cfg->inner > 0 ? "SMC2 ('param_move' 'smc2')" : "checkpoints ('checkpoint')");
    if (cfg->ranks != NULL)
        return sl_fail(err, SL_EINVAL, "badranks", "the configuration names ranks already");
    return SL_OK;
}

size_t sl_pf_ranks_workspace(const sl_pf_config *cfg, const sl_pf_ranks *rk)
{
    const int rank = rk != NULL ? rk->rank : -1, P = rk != NULL ? rk->size : 0;
    sl_pf_config lc;
    ranks_buffers rb;
    if (P < 1 || rank < 0 || rank >= P || cfg->N < (size_t)P)
        return 0;
    if (!sl_pf_ranks_by_members(cfg)) {
        lc = *cfg;
        lc.ranks = rk;
        return sl_pf_workspace(&lc);
    }
    local_config(cfg, rank, P, &lc);
    memset(&rb, 0, sizeof rb);
    rb.kalman = sl_pfi_kalman_settings(cfg, &rb.kset);
    return ranks_layout(cfg, &lc, P, rk->chunk_bytes, NULL, &rb);
}

/* Gather every rank's `each` bytes per member (this rank's nr members at
 * src) into dst (N members, rank after rank). */
static sl_status gather_members(const sl_pf_ranks *rk, ranks_buffers *rb, const void *src,
                                void *dst, size_t each, sl_error *err)
{
    int r;
    for (r = 0; r < rk->size; r++)
        rb->counts[r] = (first_of(rb->N, rk->size, r + 1) - first_of(rb->N, rk->size, r)) * each;
    return rk->allgather(rk->ctx, src, dst, rb->counts, err);
}

/* The summarised rows are dealt across the ranks: rank r summarises rows
 * floor(r ns / P) .. floor((r + 1) ns / P) - 1 over all members, so the
 * per-cycle summaries cost each rank 1/P of the one-process work, and
 * each rank receives only its rows of the other ranks' members. Every
 * row is summarised by the code and in the member order of the one
 * process run: the same bits. */
static size_t row_first(size_t ns, int P, int r)
{
    return (size_t)(((uint64_t)ns * (uint64_t)r) / (uint64_t)P);
}

/* Send each rank its rows of this rank's members; V: this rank's rows
 * (nrw of them) of every member, member by member. */
static sl_status deal_summary_rows(const sl_pf_config *cfg, const sl_pf_ranks *rk,
                                   ranks_buffers *rb, const double *X, const double *P,
                                   sl_error *err)
{
    const size_t n = cfg->model->n_state, p = cfg->model->n_param, ns = rb->ns;
    const int R = rk->size;
    size_t *sc = rb->counts, *rc = rb->counts + R;
    size_t i, j, at = 0;
    int r;
    const size_t mine = row_first(ns, R, rk->rank + 1) - row_first(ns, R, rk->rank);
    for (r = 0; r < R; r++) {
        const size_t i0 = row_first(ns, R, r), i1 = row_first(ns, R, r + 1);
        for (j = 0; j < rb->nr; j++)
            for (i = i0; i < i1; i++) {
                const size_t row = sl_pfi_summary_row(cfg, i);
                rb->Vl[at++] = row < n ? X[row + j * n] : P[(row - n) + j * p];
            }
        sc[r] = (i1 - i0) * rb->nr * sizeof(double);
        rc[r] = mine * (first_of(rb->N, R, r + 1) - first_of(rb->N, R, r)) * sizeof(double);
    }
    return rk->exchange(rk->ctx, rb->Vl, sc, rb->V, rc, err);
}

/* This rank's rows' forecast means from V (sl_pfi_live_means, as the
 * one process run) into fm. */
static void forecast_means(ranks_buffers *rb, size_t nrw, int nt, const double *w,
                           double *fm)
{
    const double W = sl_pfi_live_weight(rb->N, rb->gdead, w, nt);
    const double *src[SL_PFI_FMEAN_BLOCK];
    size_t ld[SL_PFI_FMEAN_BLOCK], i, i0;
    for (i0 = 0; i0 < nrw; i0 += SL_PFI_FMEAN_BLOCK) {
        const size_t nb = nrw - i0 < SL_PFI_FMEAN_BLOCK ? nrw - i0 : SL_PFI_FMEAN_BLOCK;
        for (i = 0; i < nb; i++) {
            src[i] = rb->V + i0 + i;
            ld[i] = nrw;
        }
        sl_pfi_live_means(rb->N, rb->gdead, w, W, nb, src, ld, fm + i0, nt);
    }
}

/* This rank's rows' means and quantiles from V (as sl_pfi_summarise)
 * into mq: nrw means, then the nq quantiles of each row. */
static void summarise_rows(const sl_pf_config *cfg, ranks_buffers *rb, size_t nrw, int nt,
                           const double *w, double *mq)
{
    const size_t N = rb->N, nq = cfg->nq, qper = sl_quantile_workspace(N);
    long r;
    sl_weighted_means(N, rb->V, nrw, nrw, NULL, 0, w, mq, nt);
    if (nq == 0)
        return;
#pragma omp parallel for num_threads(nt) schedule(dynamic, 1)
    for (r = 0; r < (long)nrw; r++) {
        int tid = 0;
#ifdef _OPENMP
        tid = omp_get_thread_num();
#endif
        sl_weighted_summary(N, rb->V + r, nrw, w, nq, cfg->probs, NULL, mq + nrw + (size_t)r,
                            nrw, rb->qwork + (size_t)tid * qper);
    }
}

/* Every rank's rows' summaries (resl here: fm when fmean, then mq when
 * summarise) gathered and put in the outputs of cycle k. */
static sl_status share_summaries(const sl_pf_config *cfg, const sl_pf_ranks *rk,
                                 ranks_buffers *rb, int fmean, int summ, sl_pf_output *out,
                                 size_t k, sl_error *err)
{
    const size_t ns = rb->ns, nq = cfg->nq, v = cfg->model->n_state + cfg->model->n_param;
    const size_t per = (size_t)(fmean != 0) + (summ ? 1 + nq : 0);
    const int R = rk->size;
    size_t i, l, at = 0;
    int r;
    sl_status st;
    for (r = 0; r < R; r++)
        rb->counts[r] = (row_first(ns, R, r + 1) - row_first(ns, R, r)) * per * sizeof(double);
    if ((st = rk->allgather(rk->ctx, rb->resl, rb->res, rb->counts, err)) != SL_OK)
        return st;
    if (fmean)
        sl_pfi_summary_blank(cfg, out->fmean + k * v, NULL, 0, 0);
    if (summ)
        sl_pfi_summary_blank(cfg, out->mean + k * v, out->quant + k * v * nq, v, nq);
    for (r = 0; r < R; r++) {
        const size_t i0 = row_first(ns, R, r), nrw = row_first(ns, R, r + 1) - i0;
        const double *x = rb->res + at;
        if (fmean) {
            for (i = 0; i < nrw; i++)
                out->fmean[sl_pfi_summary_row(cfg, i0 + i) + k * v] = x[i];
            x += nrw;
        }
        if (summ) {
            for (i = 0; i < nrw; i++) {
                const size_t row = sl_pfi_summary_row(cfg, i0 + i);
                out->mean[row + k * v] = x[i];
                for (l = 0; l < nq; l++)
                    out->quant[row + l * v + k * v * nq] = x[nrw + i + l * nrw];
            }
        }
        at += nrw * per;
    }
    return SL_OK;
}

/* Gather the transformed parameters and their ids of every member. */
static sl_status gather_params(const sl_pf_config *cfg, const sl_pf_ranks *rk,
                               ranks_buffers *rb, const double *Z, const uint32_t *vid,
                               sl_error *err)
{
    const size_t p = cfg->model->n_param;
    sl_status st;
    if (p == 0)
        return SL_OK;
    if ((st = gather_members(rk, rb, Z, rb->gZ, p * sizeof(double), err)) != SL_OK)
        return st;
    return gather_members(rk, rb, vid, rb->gvid, p * sizeof(uint32_t), err);
}

/* Pack member j's columns into a record. */
static void pack(const sl_pf_config *cfg, const pf_buffers *b, int cur, size_t j,
                 unsigned char *to)
{
    const size_t n = cfg->model->n_state, p = cfg->model->n_param,
                 q = cfg->model->n_forcing;
    memcpy(to, b->X[cur] + j * n, n * 8);
    to += n * 8;
    memcpy(to, b->P[cur] + j * p, p * 8);
    to += p * 8;
    memcpy(to, b->Z[cur] + j * p, p * 8);
    to += p * 8;
    memcpy(to, b->E[cur] + j * q, q * 8);
    to += q * 8;
    memcpy(to, b->vid[cur] + j * p, p * 4);
    to += p * 4;
    *to = b->dead[cur][j];
}

static void unpack(const sl_pf_config *cfg, pf_buffers *b, int nx, size_t j,
                   const unsigned char *from)
{
    const size_t n = cfg->model->n_state, p = cfg->model->n_param,
                 q = cfg->model->n_forcing;
    memcpy(b->X[nx] + j * n, from, n * 8);
    from += n * 8;
    memcpy(b->P[nx] + j * p, from, p * 8);
    from += p * 8;
    memcpy(b->Z[nx] + j * p, from, p * 8);
    from += p * 8;
    memcpy(b->E[nx] + j * q, from, q * 8);
    from += q * 8;
    memcpy(b->vid[nx] + j * p, from, p * 4);
    from += p * 4;
    b->dead[nx][j] = *from;
}

/* Copy local member i (buffers cur) to local member j (buffers nx). */
static void copy_member(const sl_pf_config *cfg, pf_buffers *b, int cur, size_t i, int nx,
                        size_t j)
{
    const size_t n = cfg->model->n_state, p = cfg->model->n_param,
                 q = cfg->model->n_forcing;
    memcpy(b->X[nx] + j * n, b->X[cur] + i * n, n * 8);
    memcpy(b->P[nx] + j * p, b->P[cur] + i * p, p * 8);
    memcpy(b->Z[nx] + j * p, b->Z[cur] + i * p, p * 8);
    memcpy(b->E[nx] + j * q, b->E[cur] + i * q, q * 8);
    memcpy(b->vid[nx] + j * p, b->vid[cur] + i * p, p * 4);
    b->dead[nx][j] = b->dead[cur][i];
}

/* The resampled ensemble of this rank (buffers nx) from the ancestors
 * ganc of every member: local ancestors copied, the others received.
 *
 * Every rank knows ganc, so every rank walks the same list of transfers:
 * members g = 0 .. N-1 in order (so receivers in rank order), a transfer
 * (a to the rank of g) wherever ancestor a = ganc[g] lives on another
 * rank and has not yet gone to that rank (stamp[a] = that rank). The list
 * is cut into rounds, in order, so that no rank sends or receives more
 * than `chunk` records in a round; every rank cuts it alike, so every
 * rank calls the exchange the same number of times. A rank packs what it
 * sends in list order (that is, by receiver) and notes where what it
 * receives goes: the member of its own that first descends from it; the
 * members after it with the same ancestor copy that one. */
static sl_status exchange(const sl_pf_config *lc, const sl_pf_ranks *rk, ranks_buffers *rb,
                          int cur, int nx, sl_error *err)
{
    const int P = rk->size, me = rk->rank;
    const size_t N = rb->N, chunk = rb->chunk, rec = rb->rec;
    pf_buffers *b = &rb->b;
    size_t *nsend = rb->counts, *nrecv = nsend + P, *sc = nrecv + P, *rc = sc + P,
           *at = rc + P;
    size_t g, j, nout = 0, nin = 0, pending = 0;
    /* the end of rank r's members, and the members [slo, shi) of the
     * last ancestor's rank s: resampled ancestors mostly come in order,
     * so neither needs a division per member */
    size_t rend = first_of(N, P, 1), slo = 0, shi = 0;
    uint32_t *stamp = rb->stamp;
    int r = 0, s = 0;
    sl_status st;
    for (s = 0; s < P; s++)
        nsend[s] = nrecv[s] = sc[s] = rc[s] = 0;
    s = 0;
    for (g = 0; g < N; g++)
        stamp[g] = UINT32_MAX;
    for (g = 0; g <= N; g++) {
        size_t a = 0;
        int close = g == N;
        if (g < N) {
            a = rb->ganc[g];
            while (rend <= g)
                rend = first_of(N, P, ++r + 1);
            if (!(a >= slo && a < shi)) {
                s = owner_of(N, P, a);
                slo = first_of(N, P, s);
                shi = first_of(N, P, s + 1);
            }
            if (s == r) {
                if (r == me) /* a local ancestor */
                    copy_member(lc, b, cur, a - rb->m0, nx, g - rb->m0);
                if (r == me)
                    rb->src[g - rb->m0] = UINT32_MAX;
                continue;
            }
            if (stamp[a] == (uint32_t)r) {
                /* gone to this rank already: a later member copies it */
                if (r == me)
                    rb->src[g - rb->m0] = rb->holder[a];
                continue;
            }
            close = nsend[s] + 1 > chunk || nrecv[r] + 1 > chunk;
        }
        if (close && pending > 0) {
            /* the round: send, receive, place */
            size_t i;
            int u;
            if ((st = rk->exchange(rk->ctx, rb->sbuf, sc, rb->rbuf, rc, err)) != SL_OK)
                return st;
            for (u = 0, i = 0; u < P; u++) {
                at[u] = i;
                i += rc[u] / rec;
            }
            for (i = 0; i < nin; i++) {
                u = (int)rb->rfrom[i];
                unpack(lc, b, nx, rb->rdest[i], rb->rbuf + at[u]++ * rec);
            }
            for (u = 0; u < P; u++)
                nsend[u] = nrecv[u] = sc[u] = rc[u] = 0;
            nout = nin = pending = 0;
        }
        if (g == N)
            break;
        stamp[a] = (uint32_t)r;
        nsend[s]++;
        nrecv[r]++;
        pending++;
        if (s == me) {
            pack(lc, b, cur, a - rb->m0, rb->sbuf + nout++ * rec);
            sc[r] += rec;
        }
        if (r == me) {
            rb->holder[a] = (uint32_t)(g - rb->m0);
            rb->src[g - rb->m0] = (uint32_t)(g - rb->m0);
            rb->rfrom[nin] = (uint32_t)s;
            rb->rdest[nin++] = (uint32_t)(g - rb->m0);
            rc[s] += rec;
        }
    }
    /* the later members of this rank that share a received ancestor */
    for (j = 0; j < rb->nr; j++)
        if (rb->src[j] != UINT32_MAX && rb->src[j] != (uint32_t)j)
            copy_member(lc, b, nx, rb->src[j], nx, j);
    return SL_OK;
}

/* Every rank learns whether any failed: each rank's row of `each`
 * doubles, the first of them its failure flag (set here from lst),
 * gathered into all (each x P; counts: P of scratch). Fails on every
 * rank when any rank failed: the failing ranks with their own error
 * (lerr), the others naming the lowest failing rank. */
static sl_status any_rank_failed(const sl_pf_ranks *rk, sl_status lst, const sl_error *lerr,
                                 double *row, size_t each, double *all, size_t *counts,
                                 sl_error *err)
{
    const int P = rk->size;
    sl_error gerr;
    sl_status st;
    int r, first = -1;
    row[0] = lst != SL_OK;
    for (r = 0; r < P; r++)
        counts[r] = each * sizeof(double);
    sl_error_clear(&gerr);
    if ((st = rk->allgather(rk->ctx, row, all, counts, &gerr)) != SL_OK) {
        if (err != NULL)
            *err = lst != SL_OK ? *lerr : gerr;
        return lst != SL_OK ? lst : st;
    }
    for (r = 0; r < P && first < 0; r++)
        if (all[(size_t)r * each] != 0)
            first = r;
    if (lst != SL_OK) {
        if (err != NULL)
            *err = *lerr;
        return lst;
    }
    if (first >= 0)
        return sl_fail(err, SL_EMODEL, "rankfailed",
                       "rank %d of %d stopped the run (its own error says why)", first, P);
    return SL_OK;
}

/* The cycle's local work gathered (any_rank_failed: lst this rank's
 * status, lerr its error); the counts summed. */
static sl_status gather_stats(const sl_pf_ranks *rk, ranks_buffers *rb, sl_status lst,
                              const sl_error *lerr, const double *mine, double *sum,
                              sl_error *err)
{
    double row[ST_N];
    int r, i;
    sl_status st;
    memcpy(row, mine, sizeof row);
    if ((st = any_rank_failed(rk, lst, lerr, row, ST_N, rb->stats, rb->counts, err)) != SL_OK)
        return st;
    for (i = 0; i < ST_N; i++)
        sum[i] = 0.0;
    for (r = 0; r < rk->size; r++)
        for (i = 0; i < ST_N; i++)
            sum[i] += rb->stats[(size_t)r * ST_N + (size_t)i];
    return SL_OK;
}

/* A parameter that changed on any rank gets fresh ids on every rank:
 * sl_pfi_refresh_ids over all members, Zold and Znew this rank's
 * transformed parameters before and after, vid its ids. */
static sl_status refresh_ids_ranks(const sl_pf_config *cfg, const sl_pf_ranks *rk,
                                   ranks_buffers *rb, const double *Zold, const double *Znew,
                                   uint32_t *vid, sl_error *err)
{
    const size_t p = cfg->model->n_param, nr = rb->nr;
    const int R = rk->size;
    size_t i, j;
    sl_status st;
    for (i = 0; i < p; i++) {
        double changed = 0.0;
        for (j = 0; j < nr && changed == 0.0; j++)
            changed = Znew[i + j * p] != Zold[i + j * p];
        rb->flags[i] = changed;
    }
    for (j = 0; j < (size_t)R; j++)
        rb->counts[j] = p * sizeof(double);
    if ((st = rk->allgather(rk->ctx, rb->flags, rb->flags + p, rb->counts, err)) != SL_OK)
        return st;
    for (i = 0; i < p; i++) {
        int any = 0, r;
        for (r = 0; r < R; r++)
            any |= rb->flags[p + (size_t)r * p + i] != 0.0;
        if (any)
            for (j = 0; j < nr; j++)
                vid[i + j * p] = (uint32_t)(rb->m0 + j);
    }
    return SL_OK;
}

/* Rows lo .. hi-1 of the states (0 .. n-1) and transformed parameters
 * (n .. n+p-1) of local member j, from (put 0) or into (put 1) to; with
 * an order, the rows order[lo] .. order[hi-1]. */
static void member_rows(size_t n, size_t p, double *X, double *Z, size_t j, const size_t *order,
                        size_t lo, size_t hi, double *to, int put)
{
    const size_t xe = hi < n ? hi : n, zs = lo > n ? lo : n;
    size_t i, at = 0;
    if (order != NULL) {
        for (at = 0; at < hi - lo; at++) {
            const size_t r = order[lo + at];
            double *v = r < n ? X + r + j * n : Z + (r - n) + j * p;
            if (put)
                *v = to[at];
            else
                to[at] = *v;
        }
        return;
    }
    for (i = lo; i < xe; i++, at++) {
        if (put)
            X[i + j * n] = to[at];
        else
            to[at] = X[i + j * n];
    }
    for (i = zs; i < hi; i++, at++) {
        if (put)
            Z[(i - n) + j * p] = to[at];
        else
            to[at] = Z[(i - n) + j * p];
    }
}

/* The ensemble Kalman analysis of cycle k split by members (as
 * kalman_cycle and enkf_update in pf_kalman.c, with strong coupling and
 * no window). Every rank sets the analysis up alike from every member's
 * predicted observations; the analysis's rows are dealt out
 * (sl_enkf_local_rows; the LETKF's, whole grid points, fixed in
 * ranks_layout), and each rank receives its rows of every living
 * member, analyses them (rows_local) and sends each member's rows back
 * to the member's rank: its states, transformed and natural parameters
 * and their ids are then those of one process. Rows that make one block
 * are analysed whole on every rank (an allgather, no way back). */
static sl_status kalman_cycle_ranks(const sl_pf_config *cfg, const sl_pf_ranks *rk,
                                    ranks_buffers *rb, size_t k, size_t r0, size_t m, int cur,
                                    sl_pf_output *out, int *degenerate, size_t *nskipped,
                                    sl_error *err)
{
    pf_buffers *b = &rb->b;
    const size_t N = rb->N, nr = rb->nr, m0 = rb->m0, n = cfg->model->n_state,
                 p = cfg->model->n_param;
    const int R = rk->size, me = rk->rank;
    double *Xc = b->X[cur], *Zc = b->Z[cur], *Pc = b->P[cur];
    size_t *sc = rb->counts, *rc = sc + R;
    size_t va, ld, j, i, at, before = 0, nl;
    sl_pfi_kalman ks;
    sl_enkf_ranks er;
    int r, split = 0;
    sl_status st;
    if (m > 0 &&
        (st = gather_members(rk, rb, b->Yhat, rb->gYhat, m * sizeof(double), err)) != SL_OK)
        return st;
    if (!sl_pfi_kalman_setup(cfg, &rb->kset, b, k, r0, m, rb->gdead, rb->gYhat, &b->infl, 0,
                             out, degenerate, nskipped, -1, &ks))
        return SL_OK;
    memset(&er, 0, sizeof er);
    er.ctx = rk->ctx;
    er.rank = me;
    er.size = R;
    er.allgather = rk->allgather;
    ks.ecfg.ranks = &er;
    ks.ecfg.rows_local = 1;
    va = ks.va;
    for (r = 0; r < R; r++) {
        const size_t a = first_of(N, R, r), e = first_of(N, R, r + 1);
        size_t c = 0;
        /* the LETKF's are fixed (ranks_layout), the others' follow the
         * cycle's sizes */
        if (rb->korder == NULL &&
            !sl_enkf_local_rows(&ks.ecfg, va, ks.L, ks.mk, r, &rb->klo[r], &rb->khi[r]))
            return sl_fail(err, SL_EINVAL, "badconfig", "no rows for rank %d's analysis", r);
        split |= rb->khi[r] - rb->klo[r] != va;
        for (j = a; j < e; j++)
            c += !rb->gdead[j];
        rb->klive[r] = c;
        if (r < me)
            before += c;
    }
    nl = rb->klive[me];
    ld = rb->khi[me] - rb->klo[me];
    ks.ecfg.rows_here = ld;

    /* this rank's rows of every living member */
    at = 0;
    for (r = 0; r < R && (r == 0 || split); r++) {
        const size_t lo = split ? rb->klo[r] : 0, hi = split ? rb->khi[r] : va;
        for (j = 0; j < nr; j++)
            if (!rb->gdead[m0 + j]) {
                member_rows(n, p, Xc, Zc, j, split ? rb->korder : NULL, lo, hi, rb->tbuf + at,
                            0);
                at += hi - lo;
            }
    }
    for (r = 0; r < R; r++) {
        sc[r] = split ? (rb->khi[r] - rb->klo[r]) * nl * sizeof(double) : 0;
        rc[r] = ld * rb->klive[r] * sizeof(double);
    }
    st = split ? rk->exchange(rk->ctx, rb->tbuf, sc, rb->Aloc, rc, err)
               : rk->allgather(rk->ctx, rb->tbuf, rb->Aloc, rc, err);
    if (st != SL_OK)
        return st;

    if ((st = sl_pfi_kalman_analyse(cfg, b, &ks, rb->Aloc, 0, out, k, -1, err)) != SL_OK)
        return st;

    /* each member's rows back to its rank */
    if (p > 0)
        memcpy(b->Z[1 - cur], Zc, p * nr * sizeof(double));
    if (split) {
        for (r = 0; r < R; r++) {
            sc[r] = ld * rb->klive[r] * sizeof(double);
            rc[r] = (rb->khi[r] - rb->klo[r]) * nl * sizeof(double);
        }
        if ((st = rk->exchange(rk->ctx, rb->Aloc, sc, rb->tbuf, rc, err)) != SL_OK)
            return st;
    }
    at = 0;
    for (r = 0; r < R && (r == 0 || split); r++) {
        const size_t lo = split ? rb->klo[r] : 0, hi = split ? rb->khi[r] : va;
        double *from = split ? rb->tbuf : rb->Aloc + before * va;
        for (j = 0; j < nr; j++)
            if (!rb->gdead[m0 + j]) {
                member_rows(n, p, Xc, Zc, j, split ? rb->korder : NULL, lo, hi, from + at,
                            1);
                at += hi - lo;
            }
    }
    for (j = 0; j < nr; j++)
        if (!rb->gdead[m0 + j])
            for (i = 0; i < p; i++)
                Pc[i + j * p] = sl_transform_inverse(&cfg->ptrans[i], Zc[i + j * p]);
    if (p == 0)
        return SL_OK;
    if ((st = refresh_ids_ranks(cfg, rk, rb, b->Z[1 - cur], Zc, b->vid[cur], err)) != SL_OK)
        return st;
    /* every member's, for the diversity and a resampling's move */
    return gather_params(cfg, rk, rb, Zc, b->vid[cur], err);
}

sl_status sl_pf_run_ranks(const sl_pf_config *cfg, const sl_pf_ranks *rk, double *X,
                          double *P, double *w, void *work, sl_pf_output *out,
                          sl_error *err)
{
    const sl_model *md = cfg->model;
    const int R = rk != NULL ? rk->size : 0;
    const size_t N = cfg->N, n = md->n_state, p = md->n_param, q = md->n_forcing;
    const int kalman = sl_pfi_kalman_settings(cfg, NULL) != 0;
    /* the ensemble Kalman methods resample only to replace the dead, and
     * move no parameters then */
    const int moving = p > 0 && !kalman && cfg->param_move != NULL &&
                       cfg->param_move->when == SL_MOVE_AT_RESAMPLE;
    sl_pf_config lc;
    ranks_buffers rb;
    pf_buffers *b = &rb.b;
    size_t i, j, k, fidx = 0, nr, m0, nrw;
    int cur = 0;
    uint32_t s = 0;
    double t, sum[ST_N];
    sl_status st;
    if (rk == NULL || rk->allgather == NULL || rk->exchange == NULL || rk->rank < 0 ||
        rk->rank >= rk->size)
        return sl_fail(err, SL_EINVAL, "badranks", "a distributed run needs its ranks' collectives");
    if ((st = sl_pf_ranks_check(cfg, R, err)) != SL_OK)
        return st;
    if (!sl_pf_ranks_by_members(cfg)) {
        /* the forecasts split, the rest whole on every rank */
        lc = *cfg;
        lc.ranks = rk;
        return sl_pf_run(&lc, X, P, w, work, out, err);
    }
    local_config(cfg, rk->rank, R, &lc);
    memset(&rb, 0, sizeof rb);
    rb.kalman = sl_pfi_kalman_settings(cfg, &rb.kset);
    if (ranks_layout(cfg, &lc, R, rk->chunk_bytes, (unsigned char *)work, &rb) == 0)
        return sl_fail(err, SL_ENOMEM, "toolarge", "the run's workspace size overflows");
    nr = lc.N;
    m0 = first_of(N, R, rk->rank);
    rb.N = N;
    rb.nr = nr;
    rb.m0 = m0;
    b->m0 = m0;
    b->nt = sl_pfi_unpaced_threads(cfg, nr);
    rb.g.mark = rb.gmark;
    /* a split LETKF: every rank's rows fit the room group_max gave */
    for (j = 0; rb.korder != NULL && j < (size_t)R; j++)
        if (rb.khi[j] - rb.klo[j] > rb.krows)
            return sl_fail(err, SL_EINVAL, "badlocalization",
                           "a place holds more rows than the localisation's group_max (%lu) "
                           "says",
                           (unsigned long)cfg->loc->group_max);
    /* the inflation in force, as the analysis's start sets it */
    b->infl = rb.kset.inflation;
    if (kalman && cfg->adaptive_inflation && b->infl > cfg->inflation_max)
        b->infl = cfg->inflation_max;
    nrw = row_first(rb.ns, R, rk->rank + 1) - row_first(rb.ns, R, rk->rank);

    /* the whole initial ensemble is on every rank: the parameters'
     * transforms, ids and health of all members are computed alike */
    for (j = 0; j < N; j++)
        for (i = 0; i < p; i++) {
            double x = P[i + j * p];
            rb.gZ[i + j * p] = sl_transform_forward(&cfg->ptrans[i], x);
            if (isnan(x) || (moving && !isfinite(rb.gZ[i + j * p])))
                return sl_fail(err, SL_EINVAL, "badparams",
                               "parameter %lu of member %lu (%g) lies outside its bounds",
                               (unsigned long)(i + 1), (unsigned long)(j + 1), x);
        }
    for (i = 0; i < p; i++) {
        int same = 1;
        for (j = 1; j < N && same; j++)
            same = rb.gZ[i + j * p] == rb.gZ[i];
        for (j = 0; j < N; j++)
            rb.gvid[i + j * p] = same ? 0u : (uint32_t)j;
    }
    for (j = 0; j < N; j++) {
        rb.gdead[j] = (unsigned char)sl_pfi_has_nonfinite(X + j * n, n);
        w[j] = 1.0 / (double)N;
        rb.glw[j] = -log((double)N);
    }
    memcpy(b->X[0], X + m0 * n, n * nr * sizeof(double));
    memcpy(b->P[0], P + m0 * p, p * nr * sizeof(double));
    memcpy(b->Z[0], rb.gZ + m0 * p, p * nr * sizeof(double));
    memcpy(b->vid[0], rb.gvid + m0 * p, p * nr * sizeof(uint32_t));
    memcpy(b->dead[0], rb.gdead + m0, nr);
    if (q > 0)
        memset(b->E[0], 0, q * nr * sizeof(double));
    out->log_evidence = 0.0;
    out->steps = 0;
    t = cfg->t0;

    for (k = 0; k < cfg->T; k++) {
        const double tk = cfg->times[k];
        const size_t r0 = cfg->obs_first[k], m = cfg->obs_first[k + 1] - r0;
        double *Xc = b->X[cur], *Pc = b->P[cur];
        double mine[ST_N], ess = 0.0, wsum = 0.0;
        size_t ndead = 0, nskipped = 0, nobs = 0;
        int reweight = 0, degenerate = 0, resampled = 0;
        sl_error lerr;
        sl_status lst;
        memset(mine, 0, sizeof mine);
        sl_error_clear(&lerr);

        /* this rank's members: forecast, state noise, health, likelihood */
        {
            const uint32_t s0 = s;
            lst = sl_pfi_forecast(&lc, b, Xc, Pc, b->E[cur], b->U, &t, k, k, &s, &fidx, NULL,
                                  cfg->seed, NULL, 0, 1, &lerr);
            out->steps += s - s0;
        }
        if (lst == SL_OK) {
            sl_pfi_add_state_noise(&lc, b, Xc, k, NULL, cfg->seed, NULL, 0);
            for (j = 0; j < nr; j++) {
                if (!b->dead[cur][j] && sl_pfi_has_nonfinite(Xc + j * n, n))
                    b->dead[cur][j] = 1;
                mine[ST_DEAD] += b->dead[cur][j];
            }
            if (m > 0)
                lst = sl_pfi_predict_obs(&lc, b, r0, m, tk, Xc, Pc, &lerr);
        }
        if (lst == SL_OK && m > 0 && !kalman) {
            for (j = 0; j < nr; j++) {
                if (b->dead[cur][j])
                    continue;
                for (i = 0; i < m; i++)
                    if (!isnan(cfg->y[r0 + i]) && isnan(b->Yhat[i + j * m])) {
                        mine[ST_NANPRED]++;
                        break;
                    }
            }
            sl_pfi_loglik_all(&lc, b, r0, m, &nskipped);
            mine[ST_SKIPPED] = (double)nskipped;
        }
        if ((st = gather_stats(rk, &rb, lst, &lerr, mine, sum, err)) != SL_OK)
            return st;
        ndead = (size_t)sum[ST_DEAD];
        /* skipped rows are the missing values: the same on every rank */
        nskipped = (size_t)(sum[ST_SKIPPED] / (double)R);
        if ((st = gather_members(rk, &rb, b->dead[cur], rb.gdead, 1, err)) != SL_OK)
            return st;
        for (j = 0; j < N; j++)
            if (rb.gdead[j] && w[j] > 0)
                reweight = 1;
        if ((!kalman && !cfg->no_summary) || out->fmean != NULL)
            if ((st = deal_summary_rows(cfg, rk, &rb, Xc, Pc, err)) != SL_OK)
                return st;
        if (out->fmean != NULL)
            forecast_means(&rb, nrw, b->nt, w, rb.resl);
        if (kalman) {
            /* the analysis moves the members; the living get equal
             * weights, the dead none (resampling replaces them) */
            if ((st = kalman_cycle_ranks(cfg, rk, &rb, k, r0, m, cur, out, &degenerate,
                                         &nskipped, err)) != SL_OK)
                return st;
            for (j = 0; j < N; j++)
                w[j] = rb.gdead[j] || ndead == N ? 0.0 : 1.0 / (double)(N - ndead);
            if (!cfg->no_summary)
                if ((st = deal_summary_rows(cfg, rk, &rb, Xc, Pc, err)) != SL_OK)
                    return st;
        } else if (m > 0) {
            if (out->pit != NULL) {
                if ((st = gather_members(rk, &rb, b->Yhat, rb.gYhat, m * sizeof(double),
                                         err)) != SL_OK)
                    return st;
                /* all rows at once: the members they read chosen once */
                (void)sl_loglik_pit(m, N, cfg->y + r0, rb.gYhat, m, cfg->sigma + r0,
                                    cfg->aux + r0, cfg->family + r0, w, rb.gdead, out->pit + r0,
                                    NULL);
            }
            if (out->nanpred != NULL)
                out->nanpred[k] = sum[ST_NANPRED];
            if ((st = gather_members(rk, &rb, b->ll, rb.gll, sizeof(double), err)) != SL_OK)
                return st;
            nobs = m - nskipped;
        }
        if (out->temper_steps != NULL)
            out->temper_steps[k] = nobs > 0 ? 1.0 : 0.0;
        if (out->loglik_evals != NULL)
            out->loglik_evals[k] = m > 0 && !kalman ? (double)N : 0.0;
        out->logz[k] = kalman ? (double)NAN : 0.0;
        if (kalman)
            out->log_evidence = NAN;
        if (nobs > 0)
            reweight = 1;

        /* the weights: every rank the same, as sl_pf_run */
        if (reweight && !kalman) {
            double lz;
            if ((st = sl_pfi_reweight(N, rb.gdead, rb.gll, nobs, 1.0, rb.glw, rb.glogw, w, &lz,
                                      &degenerate, b->nt, err)) != SL_OK)
                return st;
            out->logz[k] = degenerate ? -HUGE_VAL : lz;
            out->log_evidence += out->logz[k];
        }
        wsum = 0.0;
        ess = 0.0;
        for (j = 0; j < N; j++) {
            wsum += w[j];
            ess += w[j] * w[j];
        }
        ess = ess > 0 ? 1.0 / ess : 0.0;
        if (!cfg->no_summary)
            summarise_rows(cfg, &rb, nrw, b->nt, w, rb.resl + (out->fmean != NULL ? nrw : 0));
        if (!cfg->no_summary || out->fmean != NULL)
            if ((st = share_summaries(cfg, rk, &rb, out->fmean != NULL, !cfg->no_summary, out, k,
                                      err)) != SL_OK)
                return st;
        out->ess[k] = degenerate && !kalman ? 0.0 : ess;
        out->skipped[k] = (double)nskipped;
        out->nonfinite[k] = (double)ndead;
        out->degenerate[k] = degenerate;

        if (wsum > 0 && (kalman ? ndead > 0 : ess < cfg->threshold * (double)N)) {
            const int nx = 1 - cur;
            if (moving && cfg->param_move->prepare != NULL)
                cfg->param_move->prepare(&cfg->move, p, N, rb.gZ, w, b->mv, NULL);
            if ((st = sl_resample(cfg->resampler, N, w, N, cfg->seed, (uint32_t)k, rb.rwork,
                                  rb.ganc, err)) != SL_OK)
                return st;
            if ((st = exchange(&lc, rk, &rb, cur, nx, err)) != SL_OK)
                return st;
            if (moving) {
                const sl_param_mover *mv = cfg->param_move;
                double *Zn = b->Z[nx], *Pn = b->P[nx];
                memcpy(b->Z[cur], Zn, p * nr * sizeof(double)); /* free now */
#pragma omp parallel for num_threads(b->nt) schedule(static) private(i)
                for (j = 0; j < nr; j++) {
                    sl_stream sm;
                    sl_stream_init(&sm, cfg->seed, (uint32_t)(m0 + j), (uint32_t)k,
                                   SL_PURPOSE_PARAM_MOVE);
                    mv->member(&cfg->move, p, b->mv, Zn + j * p, &sm);
                    for (i = 0; i < p; i++)
                        Pn[i + j * p] = sl_transform_inverse(&cfg->ptrans[i], Zn[i + j * p]);
                }
                if ((st = refresh_ids_ranks(cfg, rk, &rb, b->Z[cur], Zn, b->vid[nx], err)) !=
                    SL_OK)
                    return st;
            }
            for (j = 0; j < N; j++) {
                w[j] = 1.0 / (double)N;
                rb.glw[j] = -log((double)N);
            }
            cur = nx;
            resampled = 1;
            if ((st = gather_params(cfg, rk, &rb, b->Z[cur], b->vid[cur], err)) != SL_OK)
                return st;
        }
        if (out->move_sweeps != NULL)
            out->move_sweeps[k] = 0.0;
        if (out->move_accept != NULL)
            out->move_accept[k] = (double)NAN;
        out->resampled[k] = resampled;
        if (p > 0)
            sl_pfi_record_diversity(cfg, &rb.g, rb.gvid, rb.gZ, w, out, k);
    }
    /* the final ensemble on every rank */
    if ((st = gather_members(rk, &rb, b->X[cur], X, n * sizeof(double), err)) != SL_OK)
        return st;
    if (p > 0 && (st = gather_members(rk, &rb, b->P[cur], P, p * sizeof(double), err)) != SL_OK)
        return st;
    return SL_OK;
}

sl_status sl_pfi_forecast_split(const sl_pf_config *cfg, pf_buffers *b, int cur, double *t,
                                size_t k, uint32_t *s, size_t *fidx, sl_error *err)
{
    const sl_pf_ranks *rk = cfg->ranks;
    const int P = rk->size;
    const size_t N = cfg->N, n = cfg->model->n_state, p = cfg->model->n_param,
                 q = cfg->model->n_forcing;
    const size_t m0 = first_of(N, P, rk->rank), nr = first_of(N, P, rk->rank + 1) - m0;
    const int nt = b->nt;
    sl_pf_config lc = *cfg;
    sl_error lerr;
    sl_status lst, st;
    double failed;
    int r;
    lc.N = nr;
    lc.ranks = NULL;
    sl_error_clear(&lerr);
    b->m0 = m0;
    b->nt = sl_pfi_unpaced_threads(cfg, nr);
    lst = sl_pfi_forecast(&lc, b, b->X[cur] + m0 * n, b->P[cur] + m0 * p, b->E[cur] + m0 * q,
                          b->U + m0 * q, t, k, k, s, fidx, NULL, cfg->seed, NULL, 0, 1, &lerr);
    b->m0 = 0;
    b->nt = nt;
    if ((st = any_rank_failed(rk, lst, &lerr, &failed, 1, b->rk_stats, b->rk_counts, err)) !=
        SL_OK)
        return st;
    /* the forecasts of every rank, through the spare buffers */
    for (r = 0; r < P; r++)
        b->rk_counts[r] = (first_of(N, P, r + 1) - first_of(N, P, r)) * n * sizeof(double);
    memcpy(b->X[1 - cur], b->X[cur] + m0 * n, nr * n * sizeof(double));
    if ((st = rk->allgather(rk->ctx, b->X[1 - cur], b->X[cur], b->rk_counts, err)) != SL_OK)
        return st;
    if (q > 0) {
        for (r = 0; r < P; r++)
            b->rk_counts[r] = (first_of(N, P, r + 1) - first_of(N, P, r)) * q * sizeof(double);
        memcpy(b->E[1 - cur], b->E[cur] + m0 * q, nr * q * sizeof(double));
        if ((st = rk->allgather(rk->ctx, b->E[1 - cur], b->E[cur], b->rk_counts, err)) != SL_OK)
            return st;
    }
    return SL_OK;
}
