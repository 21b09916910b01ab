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

#endif
