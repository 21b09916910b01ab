/* enkf_internal.h - what the analysis modules share inside the core. */
#ifndef SLUICE_ENKF_INTERNAL_H
#define SLUICE_ENKF_INTERNAL_H

#include "sluice/enkf.h"

/* The LETKF (src/letkf.c): local ETKF analyses at every state row, each
 * with the observations within reach (Gaspari-Cohn weight > 0) and
 * R-localisation (R_ii / weight), in parallel over rows (cfg->threads),
 * bit-identical for any number of threads. X, HX, y as sl_enkf_analysis;
 * rdiag the m error variances. Inflation and relaxation are done by the
 * caller (src/enkf.c) before and after. */
size_t sl_letkf_workspace(const sl_enkf_config *cfg, size_t n, size_t N,
                          size_t m);
sl_status sl_letkf_run(const sl_enkf_config *cfg, size_t n, size_t N,
                       double *X, size_t m, const double *HX,
                       const double *y, const double *rdiag, void *work,
                       sl_enkf_info *info, sl_error *err);

/* The LETKF's rows in the order of their positions (order, n row
 * indices) and where each group of rows at one place starts (gstart,
 * ngroup + 1 entries, the last n), with sl_letkf_order_work(n) bytes of
 * work; returns ngroup. Rows without a position make one group. */
size_t sl_letkf_order_work(size_t n);
size_t sl_letkf_order(const sl_localization *loc, size_t n, size_t *order, size_t *gstart,
                      void *work);
/* With rows_local, rank r of P analyses groups [*G0, *G1): those that
 * start at or after row floor(r n / P) of the sorted order and before
 * row floor((r + 1) n / P). It holds at most ceil(n / P) + g - 1 rows,
 * g the most rows of a group (sl_letkf_group_max). */
void sl_letkf_local_groups(const size_t *gstart, size_t ngroup, size_t n, int P, int r,
                           size_t *G0, size_t *G1);
size_t sl_letkf_group_max(const size_t *gstart, size_t ngroup);

/* The threads the LETKF analyses `groups` grid points of N members on:
 * cfg->threads, at most one a point, and one when cfg->threads_auto is
 * set and the work (groups N^3) is below SL_LETKF_THREAD_WORK. */
size_t sl_letkf_threads(const sl_enkf_config *cfg, size_t groups, size_t N);

/* A distributed analysis (sl_enkf_config.ranks): every rank's part of
 * the gather starts with SL_ENKFI_HEAD doubles (a code, then what the
 * method tallies) before its rows. */
#define SL_ENKFI_HEAD 6
enum { SL_ENKFI_OK = 0, SL_ENKFI_NONFINITE = 1, SL_ENKFI_OTHER = 2 };

/* 1 when cfg shares its rows out across more than one rank. */
int sl_enkfi_split(const sl_enkf_config *cfg);

/* The first of count things (blocks of rows, grid points) that rank r of
 * P works out: floor(r count / P) (r = P: count). */
size_t sl_enkfi_first(size_t count, int P, int r);

/* The gather's buffers for a split analysis of n rows and N members on P
 * ranks, carved at *off from base (NULL: only measure): the own part
 * (SL_ENKFI_HEAD + n N doubles), every rank's (P SL_ENKFI_HEAD + n N) and
 * P byte counts. Returns 0 if a size overflows. */
int sl_enkfi_share_layout(unsigned char *base, size_t *off, int P, size_t n, size_t N,
                          double **send, double **recv, size_t **counts);

/* The gather itself: rank r contributes SL_ENKFI_HEAD + vals(r) doubles,
 * vals(r) = (rows of rank r) N, the rows of rank r being given in
 * counts[r] on entry (the counts become bytes). */
sl_status sl_enkfi_gather(const sl_enkf_ranks *rk, size_t N, const double *send, double *recv,
                          size_t *counts, sl_error *err);

/* After the gather: the lowest rank whose head has code `code`, or -1;
 * the offset (in doubles) of every rank's part follows from counts. */
int sl_enkfi_first_with(const sl_enkf_ranks *rk, const double *recv, const size_t *counts,
                        int code);

/* The failure of another rank, for the ranks that did not fail. */
sl_status sl_enkfi_rank_failed(const sl_enkf_ranks *rk, int rank, sl_error *err);

#endif
