/* resample.h - resampling schemes returning ancestor indices. */
#ifndef SLUICE_RESAMPLE_H
#define SLUICE_RESAMPLE_H

#include <stddef.h>
#include <stdint.h>
#include "sluice/rng.h"
#include "sluice/status.h"

#ifdef __cplusplus
extern "C" {
#endif

/* Largest ensemble the resamplers index (ancestors are 32-bit). */
#define SL_RESAMPLE_MAX ((size_t)0xfffffffeu)

/* A resampling scheme as a type object. `run` draws M ancestors (0-based,
 * into anc) from N weights w that are finite, >= 0 and sum to `wsum` > 0
 * (they need not be normalised), using uniforms from `s` only. `work` holds
 * at least workspace(N, M) doubles. */
typedef struct {
    const char *name; /* "systematic", "stratified", "residual", "multinomial" */
    size_t (*workspace)(size_t N, size_t M);
    void (*run)(size_t N, const double *w, double wsum, size_t M,
                sl_stream *s, double *work, uint32_t *anc);
} sl_resampler;

extern const sl_resampler sl_resampler_systematic;
extern const sl_resampler sl_resampler_stratified;
extern const sl_resampler sl_resampler_residual;
extern const sl_resampler sl_resampler_multinomial;

/* The scheme with this name, or NULL. */
const sl_resampler *sl_resampler_find(const char *name);

/* The k-th scheme of the table (k = 0, 1, ...), NULL past the end. */
const sl_resampler *sl_resampler_at(size_t k);

/* Doubles of workspace that sl_resample needs for this scheme. */
size_t sl_resample_workspace(const sl_resampler *scheme, size_t N, size_t M);

/* Check the weights (sl_weights_check), then draw M ancestors with the
 * uniforms of stream (seed, member 0, cycle, SL_PURPOSE_RESAMPLE).
 * Reasons: "badsize" (N or M zero or above SL_RESAMPLE_MAX), and those of
 * sl_weights_check. `work` as given by sl_resample_workspace. */
sl_status sl_resample(const sl_resampler *scheme, size_t N, const double *w,
                      size_t M, uint64_t seed, uint32_t cycle, double *work,
                      uint32_t *anc, sl_error *err);

#ifdef __cplusplus
}
#endif
#endif
