/* enkf.h - ensemble Kalman analyses: stochastic EnKF, ETKF, serial EnSRF
 * and EAKF, LETKF; inflation (localisation: sluice/localize.h). */
#ifndef SLUICE_ENKF_H
#define SLUICE_ENKF_H

#include <stddef.h>
#include <stdint.h>
#include "sluice/localize.h"
#include "sluice/status.h"

#ifdef __cplusplus
extern "C" {
#endif

typedef enum {
    SL_ENKF_STOCHASTIC = 0, /* perturbed observations (Burgers et al. 1998) */
    SL_ENKF_ETKF,           /* symmetric square root (Bishop et al. 2001; Hunt et al. 2007) */
    SL_ENKF_ENSRF,          /* serial square root (Whitaker & Hamill 2002) */
    SL_ENKF_EAKF,           /* serial adjustment (Anderson 2001) */
    SL_ENKF_LETKF,          /* local ETKF (Hunt et al. 2007), R-localisation */
    SL_ENKF_COUNT
} sl_enkf_method;

/* The method with this name ("enkf", "etkf", "ensrf", "eakf", "letkf"),
 * or -1. */
int sl_enkf_method_find(const char *name);

/* The name of a method (sl_enkf_method), or NULL. */
const char *sl_enkf_method_name(int method);

/* Where the ETKF works out its transform. Both give the same analysis to
 * rounding; the ensemble space costs O(N^3 + m N^2) with N x N matrices,
 * the observation space O(m^3 + m^2 N) with m x m and m x N ones. */
typedef enum {
    SL_ETKF_AUTO = 0,        /* observation space when m < N, else ensemble */
    SL_ETKF_ENSEMBLE,
    SL_ETKF_OBSERVATION
} sl_etkf_form;

/* The ranks of a distributed analysis (a run split across processes):
 * this rank's number and their count, and a collective the caller
 * provides: every rank r contributes counts[r] bytes (this rank's from
 * send), and recv receives all of them, rank after rank; SL_OK, or a
 * failure in err (a rank that left, a transport error). */
typedef struct {
    void *ctx;
    int rank, size;
    sl_status (*allgather)(void *ctx, const void *send, void *recv, const size_t *counts,
                           sl_error *err);
} sl_enkf_ranks;

typedef struct {
    int method;
    double inflation;  /* multiplicative prior inflation of the perturbations
                        * (>= 1; 1 = none), applied before the analysis */
    double rtpp;       /* relaxation to prior perturbations, [0, 1] */
    double rtps;       /* relaxation to prior spread, [0, 1] */
    const sl_localization *loc; /* NULL: no localisation (not for LETKF) */
    uint64_t seed;     /* perturbed observations: stream (seed, member, */
    uint32_t cycle;    /* cycle, SL_PURPOSE_ANALYSIS) */
    int threads;       /* >= 1 */
    int threads_auto;  /* 1: threads is the most the LETKF may use, and it
                        * uses one when its local analyses are too little
                        * work to gain from more (SL_LETKF_THREAD_WORK);
                        * 0: it uses threads (at most one a grid point) */
    double eig_floor;  /* relative floor on eigenvalues of the ensemble-
                        * space matrix (0: 1e-12) */
    int etkf_form;     /* sl_etkf_form (ETKF only; 0: automatic) */
    /* Called between the parts of the analysis, from the calling thread
     * (never inside a parallel region): the ETKF before and after its
     * eigen-decomposition and before every block of rows, the other
     * global methods before every block of rows, the LETKF between
     * batches of grid points (at least one point per thread, and no more
     * than about SL_ENKF_POLL_WORK flops per thread, counting N^3 a
     * point). A non-zero return stops the analysis with SL_EINTERRUPT
     * (reason "interrupted"); X may then be partly updated. fraction is
     * poll_fraction, passed on unchanged. May be NULL. */
    int (*poll)(void *ctx, double fraction);
    void *poll_ctx;
    double poll_fraction;
    /* NULL, or one rank of a distributed analysis (size >= 1). Every rank
     * passes the same arguments and works out the parts that are cheap
     * (means, the transform, the gain) whole; the rows are shared out:
     * for the global methods, the blocks of rows each rank updates
     * (contiguous runs of them, when there are at least two blocks); for
     * the LETKF, the grid points (groups of rows at one place, in the
     * order of their positions). Each rank then gathers the others' rows,
     * so that every rank ends with the whole analysis, bit for bit the
     * analysis of one process, for any number of ranks. Every rank calls
     * the analysis, which calls allgather once (or not at all when it
     * fails before the rows). A failure in one rank's rows fails the
     * analysis on every rank: a row that is not finite, or a local
     * analysis that failed, with the same error everywhere; anything else
     * (a poll that asked to stop) with the rank's own error there and
     * reason "rankfailed" elsewhere. In a distributed analysis the poll
     * is called only between the blocks of rows (or batches of grid
     * points) a rank works out. The workspace grows by about 2 n N
     * doubles. */
    const sl_enkf_ranks *ranks;
    /* With ranks: 1 when each rank holds only the rows it updates. X
     * then holds those rows alone, compactly (leading dimension their
     * count, maybe no rows), n being still the whole ensemble's rows:
     * for the global methods rows [lo, hi) of sl_enkf_local_rows; for the
     * LETKF rows_here rows, the rows of its grid points in the order of
     * their positions (sl_letkf_local_rows). Each rank ends with its own
     * rows of the analysis, bit for bit those of one process, and no rows
     * travel: the ranks only agree (an allgather of a few doubles a rank)
     * on whether every rank's rows went well, as above. The workspace does
     * not grow with n N (the LETKF's holds a copy of the rank's rows,
     * sized from loc->group_max). 0: the whole ensemble, as above. */
    int rows_local;
    size_t rows_here;
} sl_enkf_config;

/* The LETKF's work between two polls, in flops per thread. */
#define SL_ENKF_POLL_WORK 2e8

/* The least work, counting N^3 a grid point, for which a LETKF with
 * threads_auto uses more than one thread: about 8 ms of one core (N = 20,
 * 15 observations a point: 6.5 us a point). Below it a second thread
 * gains less than it can cost to start: a thread that has slept while
 * the caller's own code ran (an Octave forecast between two analyses)
 * took 1.5-7 ms to start on a shared virtual machine here. */
#define SL_LETKF_THREAD_WORK 1e7

typedef struct {
    size_t floored;      /* eigenvalues raised to the floor */
    size_t local_skipped;/* LETKF points with no observation in reach */
    double innov_dof;    /* d^T (HBH^T + R)^{-1} d of the global problem
                          * (for adaptive inflation); NaN if not computed */
} sl_enkf_info;

/* Bytes of workspace sl_enkf_analysis needs (r_full as there), or 0 if a
 * size overflows. The size never decreases when n, N or m grow, so one
 * query for the largest problem serves every smaller one. */
size_t sl_enkf_workspace(const sl_enkf_config *cfg, size_t n, size_t N,
                         size_t m, int r_full);

/* One analysis. X (n x N, column-major, member j in column j) is the
 * forecast ensemble on entry (already augmented with any parameters) and
 * the analysis on return; HX (m x N) the predicted observations of the
 * forecast members; y (m) the observations; R their error covariance:
 * with r_full = 0, R holds the m error variances (a diagonal covariance,
 * the usual case: nothing m x m is ever formed); with r_full = 1, R is
 * the m x m covariance, symmetric positive definite (the serial methods
 * and LETKF need it diagonal: reason "nondiagonal"). The predicted observations of
 * the analysis are not returned (call the observation operator again).
 * Reasons: "badconfig", "badsize" (N < 2, m = 0), "nonfinite",
 * "notpd" (R), "nondiagonal", "badlocalization", "interrupted" (the
 * poll asked to stop). */
sl_status sl_enkf_analysis(const sl_enkf_config *cfg, size_t n, size_t N,
                           double *X, size_t m, const double *HX,
                           const double *y, const double *R, int r_full,
                           void *work, sl_enkf_info *info, sl_error *err);

/* The rows [*lo, *hi) that rank `rank` of cfg->ranks updates in an
 * analysis of n rows, N members and m observations by a global method
 * (all n rows without ranks, or when the rows make one block): the rows
 * its X holds with rows_local. 0 for the LETKF or a bad configuration. */
int sl_enkf_local_rows(const sl_enkf_config *cfg, size_t n, size_t N, size_t m, int rank,
                       size_t *lo, size_t *hi);

/* The LETKF's rows that rank `rank` of cfg->ranks holds with rows_local
 * (cfg->loc gives the positions of the n rows): their count, and into
 * rows (unless NULL) their indices in the order X holds them (grid points
 * in the order of their positions). work: sl_enkf_letkf_rows_work(n)
 * bytes. (size_t)-1 on a bad argument. Without ranks, all n rows. */
size_t sl_enkf_letkf_rows_work(size_t n);
size_t sl_enkf_letkf_rows(const sl_enkf_config *cfg, size_t n, int rank, size_t *rows,
                          void *work);

/* The most of the n rows of loc at one place (rows without a position
 * count as one place), for loc->group_max; work as above. 0 for n = 0. */
size_t sl_enkf_group_max(const sl_localization *loc, size_t n, void *work);

/* The most rows any rank of cfg->ranks holds with rows_local in such an
 * analysis with at most N living members and m observations (any
 * 2 <= L <= N, 1 <= mk <= m): what to reserve for a rank's rows. 0 for
 * the LETKF or a bad configuration. */
size_t sl_enkf_local_rows_max(const sl_enkf_config *cfg, size_t n, size_t N, size_t m);
/* (for the LETKF: at most ceil(n / P) + g - 1 rows, g = loc->group_max,
 * or n when that is 0) */

#ifdef __cplusplus
}
#endif
#endif
