/* pf.h - the particle-filter cycle: forecast, weight, resample, record. */
#ifndef SLUICE_PF_H
#define SLUICE_PF_H

#include <stddef.h>
#include <stdint.h>
#include "sluice/enkf.h"
#include "sluice/model.h"
#include "sluice/param_move.h"
#include "sluice/prior.h"
#include "sluice/resample.h"
#include "sluice/status.h"
#include "sluice/temper.h"

#ifdef __cplusplus
extern "C" {
#endif

/* How a member's copy of a forcing series is perturbed. */
typedef enum {
    SL_FORCING_EXACT = 0,      /* every member sees the series as given */
    SL_FORCING_ADDITIVE,       /* u + e */
    SL_FORCING_MULTIPLICATIVE  /* u * exp(e - sd^2/2): log-normal, mean-preserving */
} sl_forcing_noise;

/* A kind of perturbation as a type object: its name as the Octave layer
 * spells it ("none", "additive", "multiplicative", at the index of its
 * sl_forcing_noise id), whether it draws (0: the value as given), and
 * the perturbed value of u for the member's perturbation e of standard
 * deviation sd. */
typedef struct {
    const char *name;
    int draws;
    double (*apply)(double u, double e, double sd);
} sl_forcing_noise_type;

/* The kind of this id (sl_forcing_noise), or NULL. */
const sl_forcing_noise_type *sl_forcing_noise_get(int kind);

/* The id of the kind with this name, or -1. */
int sl_forcing_noise_find(const char *name);

/* q forcing series on their own time axis, and their perturbation. The
 * perturbation e of member j follows an AR(1) in model steps s:
 *   e_0 = sd * z_0,  e_s = phi e_{s-1} + sqrt(1 - phi^2) sd z_s,
 * z from stream (seed, j, s, SL_PURPOSE_FORCING); phi = 0 is white noise.
 * e travels with its member when the ensemble is resampled. */
typedef struct {
    size_t q;            /* number of series (= the model's n_forcing) */
    size_t nt;           /* points on the forcing time axis */
    const double *time;  /* nt increasing times */
    const double *value; /* nt x q, column-major */
    int hold;            /* 0: linear interpolation, 1: hold the last value */
    const int *noise;    /* q sl_forcing_noise kinds, or NULL for exact */
    const double *sd;    /* q standard deviations (with noise) */
    const double *phi;   /* q AR(1) coefficients in [0, 1) (with noise) */
} sl_forcing;

typedef int (*sl_poll_fn)(void *ctx, double fraction);

/* The analysis of a cycle, as a type object (defined below). */
typedef struct sl_analysis sl_analysis;

/* A run between two cycles, as a checkpoint holds it. The run's whole
 * state is its workspace (work_bytes bytes, sl_pf_workspace), the
 * weights w (N) and the loop-carried values of the header; the random
 * streams are counter-based (keyed by seed, member, cycle and purpose),
 * so no generator state is kept. The workspace holds no address: the
 * window slots of a lag are stored there as slot numbers while a
 * snapshot is taken, and which buffer of each swapped pair is in use is
 * a bit of `swapped`. A snapshot is for the same build on the same kind
 * of machine (sizes and byte order as written). */
#define SL_PF_SNAPSHOT_MAGIC 0x31504b4350534c53ULL /* "SLSPCKP1" */
#define SL_PF_SNAPSHOT_VERSION 1u

typedef struct {
    uint64_t magic, version;
    uint64_t work_bytes, N, T;
    uint64_t next;          /* the cycle the run goes on with (T: done) */
    uint64_t cur;           /* which ensemble of the ping-pong pair holds it */
    uint64_t s;             /* model steps taken (the streams' step counter) */
    uint64_t fidx;          /* the forcing interval */
    uint64_t steps;         /* out->steps */
    uint64_t s_now;
    uint64_t swapped;       /* a bit per swapped pair of buffers */
    uint64_t wspare;        /* the window's spare slot */
    double t, infl, log_evidence, rm_adapt, pcn_beta;
} sl_pf_snapshot_head;

typedef struct {
    sl_pf_snapshot_head head;
    double *w;              /* N weights */
    void *work;             /* head.work_bytes bytes: the run's workspace */
} sl_pf_snapshot;

/* Called at the end of every `checkpoint_every`-th cycle and of the last
 * one, from one thread outside any parallel region, with the run's
 * snapshot (valid during the call only); a non-OK status ends the run. */
typedef sl_status (*sl_pf_checkpoint_fn)(void *ctx, const sl_pf_snapshot *snap,
                                         sl_error *err);

/* An observation operator computed outside the core (an Octave function,
 * say): the n_fun derived quantities of every member at time t into Y
 * (n_fun x N, column-major) from the states X (n x N) and the parameters
 * P (p x N, natural units). Called from one thread, outside any parallel
 * region, once per cycle whose observations need it; a non-OK status
 * ends the run. */
typedef sl_status (*sl_obs_fn)(void *ctx, double t, size_t N, const double *X,
                               const double *P, double *Y, sl_error *err);

/* The ranks of a distributed run (defined below). */
struct sl_pf_ranks_s;

typedef struct {
    const sl_model *model;
    size_t N;               /* members */
    double t0;              /* start time of the run */
    size_t T;               /* cycles */
    const double *times;    /* T cycle times, increasing, >= t0 */
    /* observations, grouped by cycle: rows obs_first[k] .. obs_first[k+1]-1
     * belong to cycle k (obs_first has T + 1 entries). var[i] indexes the
     * observed quantity: 0 .. n-1 a state, n .. n+p-1 a parameter. */
    const size_t *obs_first;
    const double *y, *sigma, *aux;
    const int *family;
    const size_t *var;
    /* derived observables: H (n_lin x (n + p), column-major) maps a
     * member's states and natural-unit parameters to n_lin values; obs_fn
     * (with obs_ctx) computes n_fun more */
    size_t n_lin;
    const double *H;
    size_t n_fun;
    sl_obs_fn obs_fn;
    void *obs_ctx;
    /* 1: record the summary of the n_lin + n_fun derived quantities at the
     * end of every cycle (out->dmean, out->dquant), as the states': the
     * linear rows by H, the others by one call of obs_fn per cycle on the
     * ensemble the cycle ends with. A row where a member of positive
     * weight has a NaN value gets a NaN mean and NaN quantiles. */
    int derived_summary;
    sl_forcing forcing;
    const double *state_noise;   /* n standard deviations, or NULL */
    const sl_transform *ptrans;  /* p transforms of the parameters */
    /* how parameters move, in the transformed space (param_move.h; NULL:
     * fixed) and the moves' settings (random-walk steps, Liu-West
     * discount, kernel bandwidth scale and smallest ESS). The kernel move
     * acts when the particle filter resamples; the ensemble Kalman
     * methods move parameters by their analysis and ignore it. */
    const sl_param_mover *param_move;
    sl_param_move_opts move;
    /* The parameters' priors (p entries, natural units), which a move
     * with replay (resample_move) weighs its proposals by; may be NULL
     * for the other moves. With resample_move, after the ensemble is
     * resampled (at the end of a cycle, or after a tempering step) and
     * when an estimated parameter has fewer than move.rm_diversity * N
     * distinct values, every living member j proposes z' = z + s L xi
     * (stream (seed, j, cycle, SL_PURPOSE_REPLAY_MOVE + (step << 12) +
     * sweep), step 0 at the end of the cycle, s the tempering step) and
     * its whole path is re-run from t0 with z': the same initial state,
     * forcing perturbations, state noise and model draws as its
     * ancestors had (their streams are keyed by the ancestors' indices,
     * which the run keeps: T x N indices). The proposal is accepted with
     * probability min(1, prior(z') L(z') / prior(z) L(z)) (densities in
     * the transformed space), L the likelihood of the observations up to
     * the cycle (the current one at the tempering exponent): a
     * Metropolis-Hastings step that leaves the joint posterior of the
     * parameters and the paths invariant (resample-move, Gilks &
     * Berzuini 2001). Sweeps repeat, with the scale s adapted toward an
     * acceptance rate of 0.234, until every estimated parameter has at
     * least (1 + rm_diversity) / 2 * N distinct values or rm_sweeps
     * sweeps are done. */
    const sl_prior_entry *prior;
    /* SMC2 (Chopin, Jacob & Papaspiliopoulos 2013; inner = 0: off): the N
     * members form G = N / inner groups of `inner` members (N a multiple
     * of inner); the members of group g share the parameters of its first
     * member and run as that parameter vector's particle filter (inner
     * resampling within the group when its ESS < threshold * inner,
     * stream (seed, g, cycle, SL_PURPOSE_INNER_RESAMPLE)). Each group is
     * weighted by its filter's likelihood increment; when the ESS of the
     * group weights falls below threshold * G the groups are resampled
     * and each gets a particle-marginal Metropolis-Hastings move (Andrieu,
     * Doucet & Holenstein 2010): a proposal z' as resample_move's, a new
     * particle filter of `inner` members run with z' from t0 (initial
     * states drawn from the run's initial ensemble, all streams from a
     * seed of the move's own), accepted with probability min(1, prior(z')
     * L^(z') / (prior(z) L^(z))), L^ the filters' likelihood estimates;
     * sweeps as resample_move's (move.rm_*), over groups. Exact for the
     * parameters' posterior for any inner >= 1 as the number of groups
     * grows. Needs prior; no lag, tempering or ensemble Kalman method. The
     * member weights are the group weight times the weight within the
     * group. */
    size_t inner;
    /* The weighted ensemble Kalman filter (Papadakis, Memin, Cuzol &
     * Gengembre 2010; 0: off): the particle filter whose members, at a
     * cycle with observations, move by a perturbed-observation ensemble
     * Kalman update of their states (the gain from the weighted forecast
     * ensemble, the perturbations from stream (seed, j, cycle,
     * SL_PURPOSE_ANALYSIS)) and are weighted by likelihood x transition
     * density / proposal density, so that the weights correct the
     * update: exact as N grows, whatever the gain. The transition over a
     * cycle is the deterministic forecast plus the state noise, which
     * must be > 0 on every state; observations Gaussian, of states,
     * parameters or linear operators. Parameters are not updated by the
     * analysis (param_move moves them at resampling). */
    int wenkf;
    const sl_resampler *resampler;
    double threshold;            /* resample when ESS < threshold * N */
    /* Adaptive likelihood tempering of the particle filter (temper.h;
     * temper.ess = 0: off). When a cycle's likelihood would bring the
     * conditional ESS below temper.ess * N, the likelihood enters in
     * steps L^(phi_s - phi_(s-1)), 0 = phi_0 < ... < phi_K = 1, each
     * chosen by bisection so its conditional ESS is the target; after
     * every step but the last the ensemble is resampled (streams
     * (seed, s, cycle, SL_PURPOSE_TEMPER_RESAMPLE)) and, with a move that
     * acts at resampling, the parameters are moved (streams (seed, j,
     * cycle, SL_PURPOSE_TEMPER_MOVE + s)); the likelihood is evaluated
     * again only when the cycle's observations depend on the parameters
     * (a parameter observed, a linear row with parameter columns, an
     * operator function). The log-evidence increment is the sum over
     * steps of the log mean incremental weights. The ensemble Kalman
     * methods ignore it. */
    sl_temper_opts temper;
    uint64_t seed;
    int threads;                 /* >= 1: the most threads the run uses */
    int threads_paced;           /* 1: the run times its cycles and uses one
                                  * thread where threads would be slower;
                                  * 0: always `threads` */
    size_t nq;                   /* quantile levels to record */
    const double *probs;
    int keep_history;
    int no_summary;              /* 1: do not record means and quantiles
                                  * (a plain ensemble run: simulate, propagate) */
    /* The rows of states and parameters (0 .. n + p - 1, strictly
     * increasing) whose summaries the run records: means and quantiles
     * (mean, quant), forecast means (fmean) and smoothed summaries
     * (smean, squant). The other rows are NaN there; every row is still
     * forecast, analysed, resampled and moved. summary_rows NULL: every
     * row (n_summary_rows is then ignored). */
    const size_t *summary_rows;
    size_t n_summary_rows;
    sl_poll_fn poll;             /* called between steps; non-zero stops */
    void *poll_ctx;
    /* Ensemble Kalman methods: with enkf != NULL the analysis of
     * sl_enkf_analysis replaces weighting and resampling. States and
     * transformed parameters are updated together (state augmentation);
     * observations must be Gaussian. loc (may be NULL, needed for LETKF)
     * gives state_pos for the n + p rows (parameter rows NaN: not
     * localised) and obs_pos / obs_c for every observation row of the run
     * (obs_first[T] rows). adaptive_inflation: the multiplicative
     * inflation is re-estimated each cycle from the innovations,
     * lambda = (d'd - tr R) / tr(HBH'), kept within [1, inflation_max] and
     * smoothed with weight 0.1 (common practice), starting from
     * enkf->inflation. */
    const sl_enkf_config *enkf;
    const sl_localization *loc;
    int adaptive_inflation;
    double inflation_max;
    /* The analysis every cycle runs (an entry of the analysis table, or
     * an entry of the caller's own); NULL: the one enkf and wenkf name
     * (sl_pf_analysis_of). With an ensemble Kalman entry, enkf (may be
     * NULL: no inflation or relaxation) gives its settings, and its
     * method, if given, must be the entry's. */
    const sl_analysis *analysis;
    /* Fixed-lag smoothing (lag >= 1; 0: off). The run keeps the ensembles
     * of the last lag cycles (states and transformed parameters, member by
     * member: lag x (n + p) x N doubles) and records, for every cycle s,
     * the summary of the ensemble given the observations up to cycle
     * s + lag (or the last one). The particle filter resamples that
     * window with its members (each member carries its recent past: the
     * genealogy over the window) and weighs it with the current weights;
     * the ensemble Kalman methods update the window by the same analysis
     * (the window's rows augment the state; localised like the states
     * they copy; prior inflation is applied to the current ensemble only,
     * relaxation to every row): the fixed-lag ensemble Kalman smoother.
     * lag >= T is the full smoother. */
    size_t lag;
    /* Checkpoints (checkpoint NULL: none): the snapshot of the run after
     * every checkpoint_every-th cycle (>= 1) and after the last. With
     * resume (a snapshot taken by a run of this same configuration; its
     * w and work must not be the run's own, which the run sets up
     * before it restores)
     * the run restores it and goes on with cycle head.next: the outputs
     * of the cycles before are the caller's to restore. The result is
     * bit-identical to a run that was never stopped. */
    sl_pf_checkpoint_fn checkpoint;
    void *checkpoint_ctx;
    size_t checkpoint_every;
    const sl_pf_snapshot *resume;
    /* Coupling of a model made of components (weak = 0: strong, every
     * observation analyses the whole state: the particle filter's joint
     * weights, the ensemble Kalman methods' full covariances). With
     * weak = 1 the n + p rows of states and parameters belong to the
     * n_comp components comp[i] (0 .. n_comp - 1) and every observation
     * row of the run (obs_first[T] of them) to the component obs_comp[r],
     * and each component is analysed by its own observations only:
     * - the ensemble Kalman methods run their analysis once per component
     *   that has observations in the cycle, with those observations, and
     *   keep the result on that component's rows only (each method's
     *   update of a row depends on that row and the predicted
     *   observations alone, so this is the analysis whose gain is zero
     *   between components); the stochastic EnKF's perturbations of
     *   component c come from stream (sl_fnv1a(seed, c), j, cycle,
     *   SL_PURPOSE_ANALYSIS). Not with adaptive inflation.
     * - the particle filter (its own analysis, "pf_weak") weighs every
     *   component by the likelihood of its own observations and resamples
     *   its rows (states, parameters) with those weights, independently
     *   (streams (sl_fnv1a(seed, c), 0, cycle, SL_PURPOSE_RESAMPLE)), at
     *   every cycle where it has observations; the members are the
     *   recombined blocks, equally weighted. Forcing perturbations stay
     *   with their member (white noise only: phi = 0). Not with SMC2,
     *   tempering or a move at resampling (kernel, resample_move). With
     *   a lag, each component's rows of the window follow that
     *   component's own ancestry (its resampling indices; a joint
     *   resampling, which replaces members whose state is not finite,
     *   moves every component), and component c's rows of cycle s are
     *   recorded given the observations up to cycle s + comp_lag[c]
     *   (comp_lag NULL: lag for every component; each <= lag, the
     *   window's length; the particle filter only). */
    int weak;
    size_t n_comp;
    const int *comp;
    const int *obs_comp;
    const size_t *comp_lag;
    /* A run split across ranks that sl_pf_run_ranks cannot split by
     * members (NULL: one process): set by sl_pf_run_ranks, every rank
     * forecasts its own members [floor(r N / P), floor((r + 1) N / P))
     * at each cycle (the model steps, the forcing perturbations; streams
     * by the global member index), the forecasts are gathered, and the
     * rest of the run (analysis, resampling, moves, summaries) runs whole,
     * alike, on every rank. */
    const struct sl_pf_ranks_s *ranks;
} sl_pf_config;

/* What a run records; the caller allocates every array (sizes with
 * v = n + p). With keep_history, each history array that is not NULL is
 * written (NULL ones are skipped). */
typedef struct {
    double *mean;        /* v x T weighted means (states, then parameters) */
    double *quant;       /* v x nq x T weighted quantiles */
    double *ess;         /* T: ESS after weighting, before resampling */
    double *logz;        /* T: log-evidence increments (NaN for the
                          * ensemble Kalman methods) */
    double *resampled;   /* T: 1 if the cycle resampled */
    double *degenerate;  /* T: 1 if every member had zero likelihood */
    double *skipped;     /* T: observations skipped as missing */
    double *nonfinite;   /* T: members whose state was not finite */
    double *fmean;       /* v x T forecast means (before the update, with
                          * the weights the forecast carries), or NULL */
    double *inflation;   /* T: inflation used (ensemble Kalman), or NULL */
    double *floored;     /* T: eigenvalues floored (ensemble Kalman), or NULL */
    double *distinct;    /* p x T: distinct values of each parameter among
                          * the members at the end of the cycle (after
                          * resampling and any move), or NULL */
    double *pspread;     /* p x T: weighted standard deviation of each
                          * parameter in its transformed space at the end
                          * of the cycle, or NULL */
    double *hist_X;      /* n x N x T states after the forecast */
    double *hist_P;      /* p x N x T parameters */
    double *hist_w;      /* N x T weights after the update */
    double *hist_a;      /* N x T ancestors (0-based) chosen at the cycle */
    double *smean;       /* v x T smoothed means (with lag >= 1) */
    double *squant;      /* v x nq x T smoothed quantiles (with lag >= 1) */
    double *sanc;        /* T: the distinct members of cycle s that the
                          * members of the cycle whose weights smoothed it
                          * descend from (lag >= 1; the window's ancestors
                          * at its oldest slot), or NULL */
    double *temper_steps; /* T: likelihood steps of the cycle (1 untempered,
                           * 0 with no observation), or NULL */
    double *loglik_evals; /* T: member likelihood evaluations of the cycle
                           * (N per pass over the ensemble, and N per
                           * cycle re-run by resample_move), or NULL */
    double *move_sweeps;  /* T: resample_move sweeps in the cycle, or NULL */
    double *move_accept;  /* T: fraction of its proposals accepted (NaN
                           * when it did not act), or NULL */
    double *nanpred;     /* T: living members (finite state) whose predicted
                          * observation (an operator's value) was NaN where
                          * the observation was not missing, so their
                          * likelihood was zero (particle filter), or NULL */
    double *dmean;       /* d x T weighted means of the d = n_lin + n_fun
                          * derived quantities (with derived_summary) */
    double *dquant;      /* d x nq x T their weighted quantiles */
    double *comp_ess;    /* n_comp x T: the ESS of each component's weights
                          * (weak particle filter; NaN where the component
                          * has no observation), or NULL */
    double *comp_logz;   /* n_comp x T: each component's log-evidence
                          * increment (weak particle filter; 0 where it has
                          * no observation, -Inf where no member explains
                          * them), or NULL */
    double *pit;         /* obs_first[T]: the forecast probability integral
                          * transform of every observation row (where the
                          * value fell in the forecast's predictive
                          * distribution, sl_loglik_pit, with the weights
                          * the forecast carries), written by the particle
                          * filter's analyses (strong and weak coupling) for
                          * the rows that are not missing; others left as
                          * they are; or NULL */
    double *comp_sanc;   /* n_comp x T: sanc of each component's rows (weak
                          * particle filter with a lag: the distinct
                          * members of cycle s its rows descend from at
                          * its own lag; sanc is then the fewest of
                          * them), or NULL */
    double log_evidence; /* sum of logz */
    size_t steps;        /* model steps taken */
} sl_pf_output;

/* What an analysis does, in its flags:
 * SL_ANALYSIS_WEIGHTS  weighs the members: the update leaves every
 *     member's log-likelihood increment in ll and the count of the
 *     observations it used in nobs; the run multiplies the weights by
 *     them, records the log-evidence, resamples when the ESS falls below
 *     threshold * N and tempers when asked. Without it the update leaves
 *     the weights it wants in w (the ensemble Kalman methods: equal on
 *     the living members), the log-evidence is NaN and the run resamples
 *     only to replace members whose state is not finite.
 * SL_ANALYSIS_MOVES    moves the members (their states, and parameters
 *     if it says so by changing Z and P); a move that re-runs paths
 *     cannot follow it.
 * SL_ANALYSIS_NOISE_FREE  needs the forecast before the state noise:
 *     the run keeps it in Xf. */
#define SL_ANALYSIS_WEIGHTS 1u
#define SL_ANALYSIS_MOVES 2u
#define SL_ANALYSIS_NOISE_FREE 4u

/* The run's internals (the analyses of the core reach their buffers
 * through them; an analysis of the caller's own ignores them). */
struct sl_pfi_buffers;

/* One cycle as its analysis sees it. The run fills the inputs; the
 * update fills the results it has (they start at 0). */
typedef struct {
    const sl_analysis *self;  /* the entry */
    const sl_pf_config *cfg;
    size_t k;                 /* cycle (0-based) */
    double t;                 /* its time */
    size_t r0, m;             /* its observation rows r0 .. r0 + m - 1 */
    double *X;                /* n x N states after forecast and state noise */
    double *Z;                /* p x N parameters, transformed */
    double *P;                /* p x N parameters, natural units */
    double *w;                /* N weights the forecast carries */
    const unsigned char *dead;/* N flags: 1 for a state that is not finite */
    size_t ndead;             /* how many */
    const double *Xf;         /* n x N forecast before the state noise
                               * (SL_ANALYSIS_NOISE_FREE), else NULL */
    void *work;               /* the entry's workspace, NULL without one */
    size_t nwin;              /* past cycles in the fixed-lag window */
    sl_pf_output *out;        /* the run's records (cycle k is this one) */
    struct sl_pfi_buffers *run;
    /* results */
    double *ll;               /* N log-likelihood increments (weighing) */
    size_t nobs;              /* observations the weights used (weighing) */
    size_t skipped;           /* observations skipped as missing */
    size_t evals;             /* member likelihood evaluations */
    int degenerate;           /* 1: the analysis could not be done (too
                               * few living members) */
} sl_analysis_cycle;

/* An analysis as a type object: a name, flags, data of its own (the
 * ensemble Kalman entries: their sl_enkf_method), and its functions,
 * each given the entry itself. check (may be NULL) refuses a configuration the analysis
 * cannot run, from sl_pf_check; workspace (NULL: none) gives the bytes it
 * needs for a run whose cycles have at most m_max observations and whose
 * fixed-lag window holds nwin cycles (0 if a size overflows); start (may
 * be NULL) prepares the workspace at the start of a run; update runs the
 * analysis of one cycle (also of a cycle without observations, m = 0). */
struct sl_analysis {
    const char *name;
    unsigned flags;
    const void *data;
    sl_status (*check)(const sl_analysis *self, const sl_pf_config *cfg, sl_error *err);
    size_t (*workspace)(const sl_analysis *self, const sl_pf_config *cfg, size_t m_max,
                        size_t nwin);
    void (*start)(const sl_analysis *self, const sl_pf_config *cfg, void *work,
                  struct sl_pfi_buffers *run);
    sl_status (*update)(sl_analysis_cycle *c, sl_error *err);
};

/* The analyses of the core: "pf" (weighing by the likelihood: the
 * particle filter), "wenkf" (the weighted ensemble Kalman filter), and
 * the ensemble Kalman analyses of sl_enkf_analysis, "enkf", "etkf",
 * "ensrf", "eakf", "letkf" (in the order of sl_enkf_method). */
extern const sl_analysis sl_analysis_pf;
extern const sl_analysis sl_analysis_wenkf;
extern const sl_analysis sl_analysis_enkf;
extern const sl_analysis sl_analysis_etkf;
extern const sl_analysis sl_analysis_ensrf;
extern const sl_analysis sl_analysis_eakf;
extern const sl_analysis sl_analysis_letkf;
/* The weakly coupled particle filter (sl_pf_config weak): not in the
 * table; a weak run of the particle filter runs it. */
extern const sl_analysis sl_analysis_pf_weak;

/* The analysis with this name, or NULL. */
const sl_analysis *sl_analysis_find(const char *name);

/* The k-th analysis of the table (k = 0, 1, ...), NULL past the end. */
const sl_analysis *sl_analysis_at(size_t k);

/* The analysis a configuration runs: cfg->analysis if set, else the
 * weighted ensemble Kalman filter with wenkf, the method of enkf when it
 * is not NULL, the particle filter otherwise (its weakly coupled entry
 * with weak, also when cfg->analysis is the particle filter's). */
const sl_analysis *sl_pf_analysis_of(const sl_pf_config *cfg);

/* Check a configuration; reasons "badconfig", "badtimes", "offgrid",
 * "badforcing", "forcingrange", "badobs" and those of sl_loglik_check. */
sl_status sl_pf_check(const sl_pf_config *cfg, sl_error *err);

/* 1 if a member's path holds random draws besides its initial state:
 * perturbed forcing (a series with noise and sd > 0), state noise > 0,
 * or a model that draws by member index (model noise, perturbed
 * events); 0 if the path is a deterministic function of the initial
 * state and the parameters. */
int sl_pf_paths_random(const sl_pf_config *cfg);

/* The parameter move a run gets by default: resample_move when the
 * paths are deterministic given the initial states and the parameters
 * (there its Metropolis-Hastings moves sample the exact posterior), the
 * kernel move otherwise (re-running a random path conditions the
 * parameters on the few paths that survive resampling, which narrows
 * their bands). */
const sl_param_mover *sl_pf_auto_move(const sl_pf_config *cfg);

/* Bytes of workspace sl_pf_run needs, or 0 if a size overflows. */
size_t sl_pf_workspace(const sl_pf_config *cfg);

/* The parts of a run's workspace, by what they hold; each names the
 * options of sluice.filter that drive its size (the Octave layer's
 * names), so that a run too large for the machine can say what to
 * change:
 *   ENSEMBLE   the members' states, parameters, forcing values and
 *              perturbations (two copies each, for resampling), weights,
 *              likelihoods, value ids, ancestors, resampling scratch
 *              ('members'; with SMC2 members x 'inner_members')
 *   PREDICTED  the predicted observations of the cycle with the most
 *              observations, m_max x N ('members')
 *   DERIVED    the operator functions' values and the derived summary's
 *              ('operators', 'derived_summary')
 *   ANALYSIS   the analysis's own buffers for the current ensemble on one
 *              thread: the N x N or m x m matrices of the ensemble
 *              Kalman methods, the weighted filter's gain ('method',
 *              'members')
 *   LAG        the fixed-lag window (lag + 2 slots of (n + p) x N) and the
 *              rows it adds to an ensemble Kalman analysis ('lag')
 *   MOVES      resample_move's record of ancestors (2 T x N) and re-run
 *              ensemble, SMC2's groups, the moves' covariance
 *              ('param_move'; with SMC2 'inner_members')
 *   PATHS      resample_move's standard normal draws of random paths, 3 x
 *              (steps x noisy forcings + T x noisy states) x N
 *              ('move_paths', 'param_move')
 *   TEMPER     the tempering steps' ancestors and log-likelihoods
 *              ('temper_ess'; without tempering they count as ENSEMBLE)
 *   THREADS    per-thread scratch: the model's work, the quantiles', the
 *              LETKF's local analyses beyond one thread ('threads') */
enum {
    SL_PF_PART_ENSEMBLE = 0,
    SL_PF_PART_PREDICTED,
    SL_PF_PART_DERIVED,
    SL_PF_PART_ANALYSIS,
    SL_PF_PART_LAG,
    SL_PF_PART_MOVES,
    SL_PF_PART_PATHS,
    SL_PF_PART_TEMPER,
    SL_PF_PART_THREADS,
    SL_PF_NPARTS
};

typedef struct {
    const char *name;       /* "ensemble", "analysis", "lag window" ... */
    const char *option[2];  /* the options driving it (option[1] may be NULL) */
    size_t bytes;
} sl_pf_part;

/* Fill part[0 .. SL_PF_NPARTS-1], in the order of the ids above; every
 * byte of the workspace (alignment included) is in exactly one part, so
 * the bytes sum to sl_pf_workspace(cfg), which is returned (0, with
 * every part 0, if a size overflows). */
size_t sl_pf_workspace_parts(const sl_pf_config *cfg, sl_pf_part part[SL_PF_NPARTS]);

/* Check that snap is a snapshot of a run of cfg (magic, version, sizes,
 * the cycle, the slot numbers it holds); reason "badsnapshot". */
sl_status sl_pf_snapshot_check(const sl_pf_config *cfg, const sl_pf_snapshot *snap,
                               sl_error *err);

/* The 64-bit FNV-1a hash of n bytes, continuing from h (start from
 * SL_FNV_START): a fingerprint of a run's inputs, a checksum of a file. */
#define SL_FNV_START 0xcbf29ce484222325ULL
uint64_t sl_fnv1a(uint64_t h, const void *data, size_t n);

/* Run the filter. X (n x N) holds the initial states and receives the final
 * ones; P (p x N, natural units) the initial and final parameters; w (N)
 * receives the final weights. `work` holds sl_pf_workspace(cfg) bytes,
 * aligned for doubles. A failing model step (SL_EMODEL), a poll that asks to
 * stop (SL_EINTERRUPT) or bad input end the run with the outputs of the
 * cycles done so far. */
sl_status sl_pf_run(const sl_pf_config *cfg, double *X, double *P, double *w,
                    void *work, sl_pf_output *out, sl_error *err);

/* The ranks of a run split across processes (a distributed job): this
 * rank's number and their count, and two collectives the caller provides
 * (the core knows nothing of how they travel). Each returns SL_OK, or a
 * failure in err (a rank that left, a transport error); every rank calls
 * them in the same order.
 *   allgather: every rank r contributes counts[r] bytes (this rank's from
 *     send); recv receives all of them, rank after rank.
 *   exchange: this rank sends scounts[r] bytes to every rank r (send holds
 *     them rank after rank) and receives rcounts[r] bytes from every rank
 *     r into recv, rank after rank (its own counts, when not 0, are a
 *     copy to itself).
 * chunk_bytes bounds what a rank sends (and receives) in one exchange:
 * resampling moves members in as many rounds as it needs (0: 8 MiB). */
typedef struct sl_pf_ranks_s {
    void *ctx;
    int rank, size;
    size_t chunk_bytes;
    sl_status (*allgather)(void *ctx, const void *send, void *recv, const size_t *counts,
                           sl_error *err);
    sl_status (*exchange)(void *ctx, const void *send, const size_t *scounts, void *recv,
                          const size_t *rcounts, sl_error *err);
} sl_pf_ranks;

/* sl_pf_check, and whether the run can be split across P ranks: at
 * least one member a rank ("ranksempty"), no checkpoint and no SMC2
 * ("ranksunsupported"). */
sl_status sl_pf_ranks_check(const sl_pf_config *cfg, int P, sl_error *err);

/* 1 when sl_pf_run_ranks splits the run by members (the particle filter
 * or an ensemble Kalman analysis -- stochastic EnKF, ETKF, EnSRF, EAKF,
 * LETKF -- strong coupling, with a parameter move of none or at
 * resampling (kernel), no lag, tempering, SMC2, history or derived
 * summaries); 0 when it splits the forecasts only (cfg->ranks). A split
 * LETKF sizes what a rank holds from cfg->loc->group_max (n rows when
 * 0). */
int sl_pf_ranks_by_members(const sl_pf_config *cfg);

/* Bytes of workspace sl_pf_run_ranks needs on rank rk->rank of rk->size
 * (0 if a size overflows or the split is impossible). */
size_t sl_pf_ranks_workspace(const sl_pf_config *cfg, const sl_pf_ranks *rk);

/* sl_pf_run split across the ranks of rk. By members
 * (sl_pf_ranks_by_members): rank r runs members floor(r N / P) ..
 * floor((r + 1) N / P) - 1 (their forecasts, likelihoods and moves,
 * every random stream keyed by the global member index) and keeps, of all
 * N members, only what is per member and small (weights, health,
 * ancestors, transformed parameters and their ids, the summarised rows of
 * the cycle; an ensemble Kalman analysis's predicted observations and,
 * for the analysis, its own rows of every living member). Otherwise the
 * forecasts only (cfg->ranks). Every rank
 * passes the same configuration and the whole initial ensemble X
 * (n x N), P (p x N); every rank ends with the whole final ensemble in X
 * and P, the weights in w and the same outputs, each bit for bit those of
 * sl_pf_run, for any number of ranks. A failure on one rank (a model
 * step, an operator function) fails the run on every rank: there with
 * its own error, elsewhere with reason "rankfailed" naming the lowest
 * failing rank. */
sl_status sl_pf_run_ranks(const sl_pf_config *cfg, const sl_pf_ranks *rk, double *X,
                          double *P, double *w, void *work, sl_pf_output *out,
                          sl_error *err);

#ifdef __cplusplus
}
#endif
#endif
