/* param_move.h - moves of a parameter ensemble that keep its diversity. */
#ifndef SLUICE_PARAM_MOVE_H
#define SLUICE_PARAM_MOVE_H

#include <stddef.h>
#include "sluice/rng.h"
#include "sluice/status.h"

#ifdef __cplusplus
extern "C" {
#endif

/* Below this weighted ESS the kernel move takes its bandwidth covariance
 * from the members' unweighted spread instead of the weighted one. A
 * weighted variance from E effective members has a relative standard
 * error of about sqrt(2 / (E - 1)) (chi-square with E - 1 degrees of
 * freedom): near 50% at E = 10, and it tends to zero as E tends to 1,
 * which would shrink the kernel to nothing after one sharp likelihood. */
#define SL_KERNEL_MIN_ESS 10.0

/* When a move acts. */
typedef enum {
    SL_MOVE_NEVER = 0,      /* parameters keep the values they were drawn with */
    SL_MOVE_EACH_CYCLE,     /* before every cycle but the first */
    SL_MOVE_AT_RESAMPLE     /* right after the ensemble is resampled */
} sl_move_when;

/* Settings of the moves (each move reads only its own). */
typedef struct {
    const double *step;  /* p random-walk standard deviations (random_walk) */
    double lw_delta;     /* discount factor in (0, 1] (liu_west) */
    double kernel_scale; /* bandwidth multiplier > 0 (kernel) */
    double min_ess;      /* weighted ESS below which the kernel's
                          * covariance is the unweighted one (kernel);
                          * 0 turns the guard off */
    double rm_scale;     /* proposal scale in units of 2.38 / sqrt(d)
                          * (resample_move), > 0 */
    double rm_diversity; /* resample_move acts when the estimated parameter
                          * with the fewest distinct values has fewer than
                          * rm_diversity * N of them, in (0, 1] */
    size_t rm_sweeps;    /* most Metropolis-Hastings sweeps per move, >= 1 */
    double rm_paths;     /* resample_move on paths with noise: the starting
                          * step beta in [0, 1] of the moves of the paths'
                          * draws (0: the paths' draws are not moved) */
} sl_param_move_opts;

/* What a move's preparation found (for diagnostics and tests). */
typedef struct {
    double a, h;      /* shrinkage toward the mean and kernel bandwidth */
    double ess;       /* weighted ESS of the ensemble it was fitted to */
    size_t dim;       /* parameters with spread (the kernel's dimension) */
    int unweighted;   /* 1: the covariance came from the unweighted spread */
} sl_param_move_info;

/* A parameter move as a type object. All of it works in the transformed
 * space Z (p x N, column-major, a member per column).
 *  check   - the settings are valid for p parameters (reason "badconfig")
 *  prepare - fit the move to the ensemble Z with weights w (normalised,
 *            >= 0) into ws (sl_param_move_workspace(p) doubles); NULL if
 *            the move needs nothing from the ensemble
 *  member  - move one member's z (p values) with draws from its own stream
 *            only (so a run does not depend on the number of threads) */
typedef struct {
    const char *name;
    int when;          /* sl_move_when */
    int needs_spread;  /* moves only parameters that differ between members */
    int replay;        /* 1: member() only proposes; the filter accepts or
                        * rejects each proposal by Metropolis-Hastings on
                        * the member's whole path, re-run from the start */
    sl_status (*check)(const sl_param_move_opts *o, size_t p, sl_error *err);
    void (*prepare)(const sl_param_move_opts *o, size_t p, size_t N,
                    const double *Z, const double *w, double *ws,
                    sl_param_move_info *info);
    void (*member)(const sl_param_move_opts *o, size_t p, const double *ws,
                   double *z, sl_stream *s);
} sl_param_mover;

/* The moves: "fixed", "random_walk", "liu_west" (Liu & West 2001, before
 * every cycle), "kernel" (regularised particle filter, Musso, Oudjane &
 * Le Gland 2001, with Liu-West shrinkage, at resampling), "resample_move"
 * (Gilks & Berzuini 2001: after resampling, Metropolis-Hastings steps
 * that leave the joint posterior of parameters and paths invariant; the
 * proposal z' = z + s L xi, L L' the members' covariance, s = rm_scale
 * 2.38 / sqrt(d), Roberts & Rosenthal 2001). */
extern const sl_param_mover sl_param_move_fixed;
extern const sl_param_mover sl_param_move_random_walk;
extern const sl_param_mover sl_param_move_liu_west;
extern const sl_param_mover sl_param_move_kernel;
extern const sl_param_mover sl_param_move_resample_move;

/* The move of this name, or NULL. */
const sl_param_mover *sl_param_mover_find(const char *name);

/* The i-th move of the table (i = 0, 1, ...), NULL past the end. */
const sl_param_mover *sl_param_mover_at(size_t i);

/* Set the proposal scale of a prepared resample_move workspace ws to
 * o->rm_scale 2.38 / sqrt(d) (nothing for the other moves). */
void sl_param_move_rescale(const sl_param_mover *mv, const sl_param_move_opts *o,
                           size_t p, double *ws);

/* Doubles of workspace prepare needs for p parameters (0 if it overflows). */
size_t sl_param_move_workspace(size_t p);

/* The kernel bandwidth of Musso, Oudjane & Le Gland (2001) for N members
 * in d dimensions: h = A N^(-1/(d+4)), A = (4/(d+2))^(1/(d+4)) (the
 * optimal Gaussian kernel for a Gaussian density). */
double sl_kernel_bandwidth(size_t N, size_t d);

#ifdef __cplusplus
}
#endif
#endif
