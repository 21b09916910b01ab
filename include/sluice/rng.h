/* rng.h - counter-based random streams keyed by (seed, member, cycle, purpose). */
#ifndef SLUICE_RNG_H
#define SLUICE_RNG_H

#include <stddef.h>
#include <stdint.h>

#ifdef __cplusplus
extern "C" {
#endif

/* What a draw is for. Each purpose is its own family of streams, so adding
 * draws of one kind never shifts the draws of another. */
enum {
    SL_PURPOSE_PRIOR = 1,       /* initial parameter / state draws */
    SL_PURPOSE_MODEL_NOISE = 2, /* noise that is part of the model (linear q) */
    SL_PURPOSE_FORCING = 3,     /* perturbation of forcing series */
    SL_PURPOSE_STATE_NOISE = 4, /* optional additive state perturbation */
    SL_PURPOSE_PARAM_MOVE = 5,  /* random walk / kernel jitter of parameters */
    SL_PURPOSE_RESAMPLE = 6,    /* the resampling uniforms of one cycle */
    SL_PURPOSE_OBS = 7,         /* synthetic observations of a twin run */
    SL_PURPOSE_ANALYSIS = 8,    /* perturbed observations of a stochastic EnKF */
    SL_PURPOSE_EVENT = 9,       /* perturbation of event values (flood levels) */
    SL_PURPOSE_SMOOTH = 10,     /* backward-simulation draws of a smoother */
    SL_PURPOSE_TEMPER_RESAMPLE = 11, /* resampling at tempering step s of a
                                      * cycle: stream (seed, s, cycle, 11) */
    SL_PURPOSE_INNER_RESAMPLE = 12, /* SMC2: resampling within group g at
                                     * cycle c: stream (seed, g, c, 12) */
    SL_PURPOSE_OUTER_RESAMPLE = 13, /* SMC2: resampling of the groups */
    SL_PURPOSE_RERUN_START = 14,    /* SMC2: a proposal filter's start */
    SL_PURPOSE_USER = 64,       /* first value left to callers */
    /* the parameter move after tempering step s (1, 2, ...) of a cycle
     * draws from (seed, member, cycle, SL_PURPOSE_TEMPER_MOVE + s) */
    SL_PURPOSE_TEMPER_MOVE = 0x40000000,
    /* the Metropolis-Hastings proposals of resample_move: sweep w after
     * tempering step s (0: at the end of the cycle) draws from (seed,
     * member, cycle, SL_PURPOSE_REPLAY_MOVE + (s << 12) + w) */
    SL_PURPOSE_REPLAY_MOVE = 0x20000000
};

/* A stream: Philox4x32-10 (Salmon et al. 2011, Random123) with key = seed
 * and counter = (block, member, cycle, purpose). The stream is a value:
 * copying it forks it. Streams never share state, so any number of threads
 * may each use their own. */
typedef struct {
    uint32_t key[2];
    uint32_t ctr[4];
    uint32_t buf[4];
    unsigned pos; /* next unused word of buf; 4 = empty */
} sl_stream;

void sl_stream_init(sl_stream *s, uint64_t seed, uint32_t member,
                    uint32_t cycle, uint32_t purpose);

/* 64 random bits. */
uint64_t sl_stream_u64(sl_stream *s);

/* Uniform on the open interval (0, 1), 52-bit resolution. */
double sl_stream_uniform(sl_stream *s);

/* The uniform that 64 random bits map to: (floor(bits / 2^12) + 1/2) / 2^52,
 * so 0 < value < 1 for every input (the top 52 bits are used). */
double sl_u01(uint64_t bits);

/* Standard normal by the 256-layer ziggurat (Marsaglia & Tsang 2000), with
 * the layer, sign and magnitude taken from independent bits. */
double sl_stream_normal(sl_stream *s);

/* The first k normals of the streams (seed, m, cycle, purpose) of members
 * m = first .. first+count-1: out[i + j*ldo] is the i-th draw of member
 * first+j, bit-identical to drawing them one by one with sl_stream_normal
 * from a freshly initialised stream. The Philox blocks of several members
 * are computed side by side, which the compiler can vectorise. */
void sl_normals_members(uint64_t seed, uint32_t first, size_t count,
                        uint32_t cycle, uint32_t purpose, size_t k,
                        double *out, size_t ldo);

/* Fill out[0..n-1] with uniforms / normals from one stream. */
void sl_stream_uniforms(sl_stream *s, size_t n, double *out);
void sl_stream_normals(sl_stream *s, size_t n, double *out);

#ifdef __cplusplus
}
#endif
#endif
