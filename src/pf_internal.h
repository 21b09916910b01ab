/* pf_internal.h - what the particle-filter cycle (pf.c) shares with its
 * engines in other files: the run's buffers and the cycle's helpers. */
#ifndef SLUICE_PF_INTERNAL_H
#define SLUICE_PF_INTERNAL_H

#include <stddef.h>
#include <stdint.h>
#include "sluice/enkf.h"
#include "sluice/pf.h"

/* Every buffer of a run, carved from the caller's workspace. */
typedef struct sl_pfi_buffers {
    double *X[2], *Z[2], *P[2], *E[2]; /* ping-pong pairs for resampling */
    unsigned char *dead[2];
    double *U, *u0, *Yhat, *Yfun, *Yd, *ll, *logw, *lw, *rwork, *mwork, *qwork;
    /* ensemble Kalman analysis (laid out in awork by its table entry):
     * augmented ensemble, compacted observations and their positions,
     * live members, the method's work */
    double *A, *Hc, *yc, *rc, *opos, *oc;
    size_t *live;
    void *ework;
    double infl;                /* the inflation in force (adaptive) */
    /* the run's analysis and its workspace */
    const sl_analysis *an;
    void *awork;
    double *mv;                 /* the parameter move's workspace */
    double *mvlast;             /* resample_move: the last proposal fitted
                                 * to an ensemble where every estimated
                                 * parameter had spread */
    uint32_t *vid[2];           /* value ids of the parameters (p x N) */
    unsigned char *mark;        /* N flags for counting distinct ids */
    uint32_t *anc;
    uint32_t *tanc, *tanc2;     /* ancestors composed over tempering steps */
    double *llx;                /* gathered log-likelihoods (tempering) */
    /* fixed-lag smoothing: the window's slots (v x N each, slot of cycle
     * s at win[s % nwin]), a spare slot for resampling, a buffer for the
     * summaries, the state positions of the augmented rows */
    double **win, *wspare, *wtmp, *spos;
    size_t nwin;
    /* the weakly coupled particle filter's window: a slot's columns stay
     * where they were stored and the slot holds wids (= n_comp) rows of
     * N ids, one per component, naming the stored column each member's
     * component descends from; 0: one row of ids and the columns move
     * with the members */
    size_t wids;
    double *wslot0;  /* the first window slot; slots lie wstride bytes apart */
    size_t wstride;
    size_t bytes;    /* the workspace's size */
    sl_error *terr;
    size_t mwork_per, qwork_per, m_max;
    int nt; /* threads for per-member loops: 1 for small ensembles */
    int yfun_kept; /* Yfun holds the operator function's values of the
                    * cycle's analysed ensemble (set by the particle
                    * filter's analysis, cleared at every cycle's start
                    * and after tempering, which resamples them): the
                    * cycle's summary of derived quantities reuses them */
    size_t *rk_counts; /* a run with cfg->ranks: P counts and P doubles */
    double *rk_stats;  /* of scratch for its collectives */
    double *rk_qsend, *rk_qrecv; /* and the quantiles of the summarised
                                  * rows (ns nq doubles each) */
    size_t m0; /* the global index of member 0 (a run split across ranks:
                * the first member of this rank; else 0): the member
                * index of every random stream of the forecast */
    /* resample_move: the ancestors of every cycle (lin, T x N: the
     * forecast index at cycle c of the parent of member j after cycle
     * c), the paths being re-run (path, T x N), the initial states, the
     * re-run ensemble (states, transformed and natural parameters,
     * forcing perturbations and values, health), the members' path
     * log-likelihoods before the cycle (cll) and of the cycle (llk), the
     * re-run ones (rll, rllk), log-priors (lp, rlp), the uniforms of the
     * accept step, accept flags, id map and estimated-parameter flags */
    uint32_t *lin, *path, *idmap;
    double *X0, *RX, *RZ, *RP, *RE, *RU, *cll, *llk, *rll, *rllk, *lp, *rlp, *ru, *tmp;
    unsigned char *rdead, *acc, *est;
    double rm_adapt;
    size_t rm_sweeps, rm_proposed, rm_accepted; /* of the current cycle */
    int replay;
    /* resample_move on paths with noise (pcn): every member's standard
     * normal draws, zlen per member (forcing draws of step s, series
     * slot i at s * zq + i; state noise of cycle c, state slot l at
     * zsteps * zq + c * zs + l), a gather target and the proposals' */
    double *zp, *zp2, *rzp, pcn_beta;
    size_t zlen, zq, zs, zsteps, *fslot, *sslot;
    uint32_t s_now; /* steps taken so far (for gather_draws in tempering) */
    int pcn;
    /* SMC2: the proposal system's gather targets, inner log-weights,
     * and the groups' transformed parameters (p x G, twice) */
    double *RX2, *RZ2, *RP2, *RE2, *rlw, *ZG, *ZG2;
    unsigned char *rdead2;
    int smc2;
    /* weighted ensemble Kalman filter: deterministic forecasts (the
     * run's copy of the forecast before the state noise), predicted
     * observations of the forecasts and of the deterministic forecasts,
     * gain, innovation covariance, H on the states, proposal covariance,
     * scratch, means, cross-covariance, observed rows, log-weights */
    double *wk_m, *wk_hf, *wk_hm, *wk_k, *wk_s, *wk_h, *wk_sig, *wk_tmp, *wk_xb,
        *wk_hb, *wk_cxh, *wk_d, *tmp2;
    size_t *wk_row;
} pf_buffers;

/* A default (paced) run whose cycles are not timed (split across ranks,
 * SMC2) runs its per-member loops on one thread below this many members:
 * a parallel region then costs more than it saves, and far more on a
 * loaded machine, where a thread may wait a time slice. */
#define SL_PFI_PAR_MIN_MEMBERS 2048

/* Lay the run's buffers out in base (NULL: measure); the bytes (0 when
 * a size overflows). */
size_t sl_pfi_layout(const sl_pf_config *cfg, unsigned char *base, pf_buffers *b);

/* The forecast of cycle k of a run with cfg->ranks (pf_ranks.c): this
 * rank's members advanced, then every member's state and forcing
 * perturbations gathered into buffers cur on every rank; a failure on
 * any rank fails it on every rank. */
sl_status sl_pfi_forecast_split(const sl_pf_config *cfg, pf_buffers *b, int cur, double *t,
                                size_t k, uint32_t *s, size_t *fidx, sl_error *err);

/* The cycle's weights (the run of pf.c and the split run alike): the
 * log-weights lw + rest * ll of the living members (lw alone when nobs is
 * 0; -Inf for dead ones) normalised into w, lw set to their logs, *logz
 * the log of their sum. When no member explains the data the living
 * members keep their weights (renormalised), *logz = -Inf and
 * *degenerate = 1. ll and logw are overwritten (N each). Large
 * ensembles share the work among up to nt threads: the same bits for
 * any count. */
sl_status sl_pfi_reweight(size_t N, const unsigned char *dead, double *ll, size_t nobs,
                          double rest, double *lw, double *logw, double *w, double *logz,
                          int *degenerate, int nt, sl_error *err);

/* The pace of a run (pf_pace.c): how many threads its next cycle uses,
 * 1 or most, chosen by timing cycles. next gives the count for the next
 * cycle; record takes that cycle's seconds and its units of work (members
 * times steps, or any measure proportional to its work). */
typedef struct {
    int most;      /* the most threads the run may use */
    int chosen;    /* the count kept between rounds */
    int cur;       /* the count of the cycle being run */
    int round;     /* cycles left in the current round of trials */
    int solo;      /* this round tries no more threads (short cycles, or no
                    * core free for them) */
    double sec[2];   /* this round's counted seconds and units of work, */
    double units[2]; /* on 1 thread [0] and on most [1] */
    double spent[2]; /* the same, every cycle of the round */
    double spent_units[2];
    size_t wait;     /* cycles between rounds */
    size_t left;     /* cycles left before the next round */
    double wait_s;   /* seconds between rounds */
    double since;    /* seconds since the last round */
    double pace;     /* the kept choice's seconds per unit in the last round */
    int (*others)(void); /* threads ready to run besides ours, -1: unknown */
    int cores;       /* the machine's cores */
    int free_seen;   /* this round has seen a free core for each thread */
} sl_pfi_pace;
void sl_pfi_pace_init(sl_pfi_pace *g, int most);
/* the threads of a run's per-member loops where it is not paced: all of
 * cfg->threads, or for a paced run (whose cycles are not timed there)
 * one thread below SL_PFI_PAR_MIN_MEMBERS members */
int sl_pfi_unpaced_threads(const sl_pf_config *cfg, size_t members);
int sl_pfi_pace_next(sl_pfi_pace *g);
void sl_pfi_pace_record(sl_pfi_pace *g, double seconds, double units);
double sl_pfi_seconds(void);
int sl_pfi_others_running(void);

/* The cycle's helpers (pf.c): the state noise, predicted observations,
 * member log-likelihoods, summaries and diversity, gathering columns by
 * ancestors, a finiteness check, and the log prior of transformed
 * parameters (est flags the estimated ones). */
void sl_pfi_record_diversity(const sl_pf_config *cfg, pf_buffers *b, const uint32_t *id,
                             const double *Z, const double *w, sl_pf_output *out,
                             size_t k);
void sl_pfi_record_pit(const sl_pf_config *cfg, const pf_buffers *b, size_t r0, size_t m,
                       const double *w, const unsigned char *dead, sl_pf_output *out);
sl_status sl_pfi_predict_obs(const sl_pf_config *cfg, pf_buffers *b, size_t r0,
                             size_t m, double t, const double *X, const double *P,
                             sl_error *err);
void sl_pfi_loglik_into(const sl_pf_config *cfg, pf_buffers *b, size_t r0,
                        size_t m, double *ll, size_t *nskipped);
void sl_pfi_loglik_all(const sl_pf_config *cfg, pf_buffers *b, size_t r0,
                       size_t m, size_t *nskipped);
/* The forecast means (pf.c; pf_ranks.c on its share of the rows): the
 * total weight W of the living members of positive weight, and for nb
 * (at most SL_PFI_FMEAN_BLOCK) rows, row i's value of member j at
 * src[i][j * ld[i]], m[i] = the sum over those members of w[j] times the
 * value, over W (NaN when W is not positive). Both sums run in member
 * order inside the summing blocks of sl_mean_block (stats.h), then over
 * the blocks in order, the blocks shared among up to `threads` threads:
 * the same bits for any thread count, and whatever rows share a block of
 * rows. */
#define SL_PFI_FMEAN_BLOCK 64
double sl_pfi_live_weight(size_t N, const unsigned char *dead, const double *w, int threads);
void sl_pfi_live_means(size_t N, const unsigned char *dead, const double *w, double W,
                       size_t nb, const double *const *src, const size_t *ld, double *m,
                       int threads);
/* The rows the run summarises (cfg->summary_rows): how many, the i-th
 * (0-based), and NaN into the mean (and, with q, the nq quantiles at
 * stride qinc) of every other row of one cycle's record. */
size_t sl_pfi_summary_count(const sl_pf_config *cfg);
size_t sl_pfi_summary_row(const sl_pf_config *cfg, size_t i);
void sl_pfi_summary_blank(const sl_pf_config *cfg, double *mean, double *q,
                          size_t qinc, size_t nq);
/* The summary of cycle k: the weighted means and quantiles of the
 * summarised rows. In a run with cfg->ranks (the forecasts split) each
 * rank works out the quantiles of its share of the rows when there is
 * enough of that work (SL_PFI_SPLIT_QUANTILES), and gathers the others';
 * a failure of that gather is returned. */
#define SL_PFI_SPLIT_QUANTILES 65536
sl_status sl_pfi_summarise(const sl_pf_config *cfg, pf_buffers *b, const double *X,
                           const double *P, const double *w, sl_pf_output *out,
                           size_t k, sl_error *err);
sl_status sl_pfi_summarise_derived(const sl_pf_config *cfg, pf_buffers *b, double t,
                                   const double *X, const double *P, const double *w,
                                   int reuse, sl_pf_output *out, size_t k, sl_error *err);
/* The weakly coupled particle filter resampled component cp at cycle k
 * with ancestors anc: that component's ids in the window's slots of
 * cycles k-1, k-2, ... (filled of them, at most its lag) follow (pf.c). */
void sl_pfi_window_follow(const sl_pf_config *cfg, pf_buffers *b, size_t k, size_t filled,
                          size_t cp, const uint32_t *anc);
void sl_pfi_gather_cols(size_t rows, size_t N, const double *src, double *dst,
                        const uint32_t *anc, int threads);
void sl_pfi_add_state_noise(const sl_pf_config *cfg, pf_buffers *b, double *X,
                            size_t k, const uint32_t *ids, uint64_t seed, double *zst,
                            int zread);
int sl_pfi_has_nonfinite(const double *x, size_t n);
double sl_pfi_diversity(const sl_pf_config *cfg, pf_buffers *b, const uint32_t *id,
                        size_t count);
void sl_pfi_fit_proposal(const sl_pf_config *cfg, pf_buffers *b,
                         const sl_param_move_opts *o, const double *Z, size_t count);
void sl_pfi_renumber_ids(const sl_pf_config *cfg, pf_buffers *b, const unsigned char *acc,
                         uint32_t *id, size_t count);
void sl_pfi_adapt_scale(double *scale, size_t accepted, size_t proposed, double lo,
                        double hi);
size_t sl_pfi_nsteps(const sl_model *md, double t, double tk, double *h);
sl_status sl_pfi_forecast(const sl_pf_config *cfg, pf_buffers *b, double *X,
                          const double *P, double *E, double *U, double *t, size_t k,
                          size_t at, uint32_t *s, size_t *fidx, const uint32_t *ids,
                          uint64_t seed, double *zst, int zread, int through,
                          sl_error *err);
double sl_pfi_log_prior_z(const sl_pf_config *cfg, const unsigned char *est,
                          const double *z);
/* Value ids (p x N) after an analysis or a move changed the transformed
 * parameters from Zold to Znew: a changed parameter's ids become the
 * member indices (pf.c). */
void sl_pfi_refresh_ids(size_t p, size_t N, const double *Zold, const double *Znew,
                        uint32_t *id);
/* The ensemble Kalman analyses (pf_kalman.c): the table's entry for an
 * sl_enkf_method, NULL for none. */
const sl_analysis *sl_pfi_kalman_of(int method);
/* The settings the run's ensemble Kalman analysis (cfg's entry) runs
 * with, into ec unless NULL; 0 when cfg's analysis is not one of them. */
int sl_pfi_kalman_settings(const sl_pf_config *cfg, sl_enkf_config *ec);
/* One cycle's ensemble Kalman analysis in parts (pf_kalman.c), for the
 * run of pf.c and the split run of pf_ranks.c alike: the settings and
 * sizes sl_pfi_kalman_setup makes; sl_pfi_kalman_analyse runs it on the
 * caller's ensemble of ks->va rows and ks->L living members (see there).
 * Setup reads Yhat (m x N) and writes b->live, b->Hc, b->yc, b->rc,
 * b->opos and b->oc, which must hold N, m_max N, m_max, m_max,
 * m_max dim and m_max values. */
typedef struct {
    sl_enkf_config ecfg;
    sl_localization lc;
    size_t L, mk, va;
} sl_pfi_kalman;
int sl_pfi_kalman_setup(const sl_pf_config *cfg, const sl_enkf_config *settings, pf_buffers *b,
                        size_t k, size_t r0, size_t m, const unsigned char *dead,
                        const double *Yhat, double *infl, size_t nw, sl_pf_output *out,
                        int *degenerate, size_t *nskipped, int part, sl_pfi_kalman *ks);
sl_status sl_pfi_kalman_analyse(const sl_pf_config *cfg, pf_buffers *b, sl_pfi_kalman *ks,
                                double *A, size_t nw, sl_pf_output *out, size_t k, int part,
                                sl_error *err);
/* Checkpoints (pf.c): restore a run from cfg->resume into b, the
 * workspace `work` and the weights w (the caller takes the loop-carried
 * values from the header); take a snapshot of the run at the end of a
 * cycle (sn->head holds the caller's loop-carried values and its bits of
 * `swapped`, 3 and up) and hand it to cfg->checkpoint. Bits 0 to 2 of
 * `swapped` are the pairs ll/llx, tanc/tanc2 and zp/zp2. */
sl_status sl_pfi_snap_restore(const sl_pf_config *cfg, pf_buffers *b, void *work, double *w,
                              sl_error *err);
sl_status sl_pfi_snap_call(const sl_pf_config *cfg, pf_buffers *b, void *work, double *w,
                           sl_pf_snapshot *sn, sl_error *err);
/* 1 if buffer a lies after buffer b; put a pair back in a saved order */
#define SL_PFI_AFTER(a, b) ((uint64_t)((const unsigned char *)(a) > (const unsigned char *)(b)))
#define SL_PFI_ORDER(T, a, b, bit)                   \
    do {                                             \
        if (SL_PFI_AFTER(a, b) != (uint64_t)(bit)) { \
            T *t_ = (a);                             \
            (a) = (b);                               \
            (b) = t_;                                \
        }                                            \
    } while (0)

sl_status sl_pfi_smc2_run(const sl_pf_config *cfg, pf_buffers *b, void *work, double *X, double *P,
                          double *w, sl_pf_output *out, sl_error *err);

#endif
