/* smooth.h - particle smoothers run on the history of a particle-filter
 * run: the genealogy of the final particles and backward simulation. */
#ifndef SLUICE_SMOOTH_H
#define SLUICE_SMOOTH_H

#include <stddef.h>
#include <stdint.h>
#include "sluice/status.h"

#ifdef __cplusplus
extern "C" {
#endif

/* Largest number of particles or trajectories (indices are 32-bit). */
#define SL_SMOOTH_MAX ((size_t)0xfffffffeu)

/* What the smoothers read. Arrays are column-major; cycle s runs from 0
 * to T - 1. */
typedef struct {
    size_t n, p, N, T;
    const double *X;   /* n x N x T particles of each cycle (after the
                        * forecast, before resampling); members of zero
                        * weight may be non-finite */
    const double *P;   /* p x N x T their parameters (NULL when p = 0) */
    const double *w;   /* N x T filter weights after the update of each
                        * cycle: finite, >= 0, positive sum (need not be
                        * normalised) */
    size_t nq;         /* quantile levels of the summaries */
    const double *probs;
    int threads;       /* >= 1 */
    /* threads is the most to use: one thread while the smoother's work
     * is below SL_SMOOTH_THREAD_WORK (sl_smooth_thread_count); 0: use
     * threads as given */
    int threads_auto;
    /* genealogy: ancestors[j + s N] (0-based) is the particle of cycle s
     * that column j of the population the forecast to cycle s + 1 starts
     * from copies (column T - 1 is not read) */
    const uint32_t *ancestors;
    /* backward simulation: M trajectories; the transition from particle i
     * of cycle s to cycle s + 1 (s < T - 1) is Gaussian with mean
     * F[(i + s N) n + 0 .. n - 1] and covariance L_s L_s', L_s the lower
     * triangle of L + s n n (n x n, positive diagonal; the upper triangle
     * is not read). F may be non-finite for members of zero weight. */
    size_t M;
    const double *F;   /* n x N x (T - 1) */
    const double *L;   /* n x n x (T - 1) */
    uint64_t seed;     /* keys the streams (seed, trajectory, cycle,
                        * SL_PURPOSE_SMOOTH) */
    unsigned tries;    /* 0: every backward draw sums the N densities;
                        * k > 0: up to k proposals from the filter weights
                        * accepted with probability exp(-d^2/2) (the
                        * density over its bound), then the exact sum */
    /* called between cycles from one thread with the fraction done;
     * non-zero stops the run (reason "interrupted"); may be NULL */
    int (*poll)(void *ctx, double fraction);
    void *poll_ctx;
} sl_smooth_config;

/* What the smoothers write; the caller allocates every array. The
 * smoothed distribution at cycle s is carried by the particles of cycle s
 * with weights W_s(i) = sum of the weights of the trajectories through
 * particle i (genealogy: the N final particles with the final weights;
 * backward simulation: the M trajectories with weight 1/M each). */
typedef struct {
    double *mean;        /* n x T smoothed means of the states */
    double *quant;       /* n x nq x T their quantiles */
    double *pmean;       /* p x T parameters (may be NULL when p = 0) */
    double *pquant;      /* p x nq x T */
    uint32_t *index;     /* K x T, 0-based: the particle of cycle s on
                          * trajectory k (K = N genealogy, M backward) */
    double *traj;        /* backward simulation: n x M x T states of the
                          * trajectories, or NULL */
    double *distinct;    /* T: distinct particles on the K trajectories */
    double evaluations;  /* transition densities evaluated */
    double fallbacks;    /* backward draws that fell back to the exact sum
                          * after `tries` rejected proposals */
} sl_smooth_output;

/* A smoother as a type object. */
typedef struct {
    const char *name; /* "genealogy", "ffbsi" */
    /* bytes of workspace for this configuration (0 and SL_ENOMEM when the
     * size overflows) */
    sl_status (*workspace)(const sl_smooth_config *cfg, size_t *bytes,
                           sl_error *err);
    sl_status (*run)(const sl_smooth_config *cfg, void *work,
                     sl_smooth_output *out, sl_error *err);
} sl_smoother;

/* The genealogy of the final particles: index(j, s) is the ancestor at
 * cycle s of final particle j, traced back through the ancestors. Needs
 * ancestors; ignores M, F, L, seed, tries. Cost O(N T) plus the
 * summaries. */
extern const sl_smoother sl_smoother_genealogy;

/* Forward filtering, backward simulation: each trajectory starts from a
 * final particle drawn with the final weights; at cycle s, with the
 * trajectory at x at cycle s + 1, particle i is chosen with probability
 * proportional to w_s(i) N(x; F_s(i), L_s L_s'). Needs M, F, L, seed.
 * Exact cost O(N M n) per cycle. The quantities the draws share are
 * computed for every cycle first (the workspace holds about
 * n N T + 2 N T doubles), so the paths then run to the first cycle
 * without waiting for each other. */
extern const sl_smoother sl_smoother_ffbsi;

/* The estimated one-core work, in nanoseconds of this machine's class,
 * below which a smoother given threads_auto keeps one thread: a thread
 * that slept while the caller's Octave code ran can take milliseconds to
 * start (measured here: 1-11 ms after 50 ms idle on 2 shared cores). The
 * work is 15 ns per member, cycle and summarised row for the genealogy
 * and 3 ns per member, trajectory, cycle and state for backward
 * simulation (its exact sum), as timed on one core here. */
#define SL_SMOOTH_THREAD_WORK 1e7

/* The threads a run of the smoother with cfg uses (never more than its
 * particles, trajectories or cycles). */
int sl_smooth_thread_count(const sl_smoother *type, const sl_smooth_config *cfg);

/* The smoother with this name, or NULL. */
const sl_smoother *sl_smoother_find(const char *name);

/* The k-th smoother of the table (k = 0, 1, ...), NULL past the end. */
const sl_smoother *sl_smoother_at(size_t k);

/* Check cfg for the smoother and report the bytes of workspace it needs.
 * Reasons "badsize", "badweight", "zeroweights", "badprobs", "badconfig",
 * and "nomemory" (the size overflows). */
sl_status sl_smooth_workspace(const sl_smoother *type,
                              const sl_smooth_config *cfg, size_t *bytes,
                              sl_error *err);

/* Run the smoother; `work` holds the bytes sl_smooth_workspace reported
 * (aligned for doubles). Further reasons: "badancestor", "badfactor"
 * (a non-finite or non-positive-diagonal L_s), "badstate" (a particle of
 * positive weight with a non-finite state or parameter), "nocandidate"
 * (every backward weight of a draw is zero), "interrupted". The results
 * are bit-identical for any number of threads. */
sl_status sl_smooth_run(const sl_smoother *type, const sl_smooth_config *cfg,
                        void *work, sl_smooth_output *out, sl_error *err);

#ifdef __cplusplus
}
#endif
#endif
