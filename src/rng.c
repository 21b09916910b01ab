/* rng.c - Philox streams, uniforms and ziggurat normals. */
#include "sluice/rng.h"

#include <math.h>
#include <string.h>
#include <Random123/philox.h>

#include "clones.h"
#include "ziggurat_tables.h"

void sl_stream_init(sl_stream *s, uint64_t seed, uint32_t member,
                    uint32_t cycle, uint32_t purpose)
{
    s->key[0] = (uint32_t)(seed & 0xffffffffu);
    s->key[1] = (uint32_t)(seed >> 32);
    s->ctr[0] = 0;
    s->ctr[1] = member;
    s->ctr[2] = cycle;
    s->ctr[3] = purpose;
    s->pos = 4;
}

static void refill(sl_stream *s)
{
    philox4x32_ctr_t c = {{s->ctr[0], s->ctr[1], s->ctr[2], s->ctr[3]}};
    philox4x32_key_t k = {{s->key[0], s->key[1]}};
    philox4x32_ctr_t r = philox4x32(c, k);
    s->buf[0] = r.v[0];
    s->buf[1] = r.v[1];
    s->buf[2] = r.v[2];
    s->buf[3] = r.v[3];
    s->ctr[0]++;
    s->pos = 0;
}

static inline uint64_t next_u64(sl_stream *s)
{
    uint64_t lo, hi;
    if (s->pos > 2)
        refill(s);
    lo = s->buf[s->pos];
    hi = s->buf[s->pos + 1];
    s->pos += 2;
    return lo | (hi << 32);
}

uint64_t sl_stream_u64(sl_stream *s)
{
    return next_u64(s);
}

/* x with its sign bit flipped when bit 8 of u is set: -x without a branch
 * (the sign is a coin toss, which a branch predictor cannot learn) */
static inline double signed_by(double x, uint64_t u)
{
    uint64_t b;
    memcpy(&b, &x, sizeof b);
    b ^= (u & 256u) << 55;
    memcpy(&x, &b, sizeof b);
    return x;
}

/* k < 2^63 converts as a signed integer: one instruction, where an
 * unsigned 64-bit conversion takes a branch on x86-64 without AVX-512 */
static inline double to_double(uint64_t k)
{
    return (double)(int64_t)k;
}

double sl_u01(uint64_t bits)
{
    /* 52 bits: k + 1/2 is exact below 2^52, so the value never rounds to 1 */
    return (to_double(bits >> 12) + 0.5) * 0x1.0p-52;
}

double sl_stream_uniform(sl_stream *s)
{
    return sl_u01(next_u64(s));
}

double sl_stream_normal(sl_stream *s)
{
    for (;;) {
        uint64_t u = next_u64(s);
        unsigned i = (unsigned)(u & 255u);
        double x = (to_double(u >> 11) * 0x1.0p-53) * sl_zig_x[i];
        if (x < sl_zig_x[i + 1])
            return signed_by(x, u);
        if (i == 0) {
            /* tail beyond r (Marsaglia 1964) */
            double a, b;
            do {
                a = -log(sl_stream_uniform(s)) / sl_zig_r;
                b = -log(sl_stream_uniform(s));
            } while (b + b < a * a);
            return signed_by(sl_zig_r + a, u);
        }
        if (sl_zig_f[i] + sl_stream_uniform(s) * (sl_zig_f[i + 1] - sl_zig_f[i])
            < exp(-0.5 * x * x))
            return signed_by(x, u);
    }
}

void sl_stream_uniforms(sl_stream *s, size_t n, double *out)
{
    size_t i;
    for (i = 0; i < n; i++)
        out[i] = sl_stream_uniform(s);
}

void sl_stream_normals(sl_stream *s, size_t n, double *out)
{
    size_t i;
    for (i = 0; i < n; i++)
        out[i] = sl_stream_normal(s);
}

/* Members handled side by side, and the Philox blocks prefetched for each
 * (4 blocks: 8 normals' worth of 64-bit words before the stream refills
 * itself). */
#define LANES 16
#define PREFETCH 4

/* Philox4x32-10 on LANES counters at once, laid out lane by lane so the
 * rounds vectorise; the same rounds as Random123's philox4x32 (checked
 * against it in the unit tests). */
SL_CLONES
static void philox_lanes(uint32_t k0, uint32_t k1, uint32_t *c0, uint32_t *c1,
                         uint32_t *c2, uint32_t *c3)
{
    int r;
    size_t l;
    for (r = 0; r < 10; r++) {
        for (l = 0; l < LANES; l++) {
            uint64_t p0 = (uint64_t)0xD2511F53u * c0[l];
            uint64_t p1 = (uint64_t)0xCD9E8D57u * c2[l];
            uint32_t n0 = (uint32_t)(p1 >> 32) ^ c1[l] ^ k0;
            uint32_t n2 = (uint32_t)(p0 >> 32) ^ c3[l] ^ k1;
            c1[l] = (uint32_t)p1;
            c3[l] = (uint32_t)p0;
            c0[l] = n0;
            c2[l] = n2;
        }
        k0 += 0x9E3779B9u;
        k1 += 0xBB67AE85u;
    }
}

void sl_normals_members(uint64_t seed, uint32_t first, size_t count,
                        uint32_t cycle, uint32_t purpose, size_t k,
                        double *out, size_t ldo)
{
    const uint32_t k0 = (uint32_t)(seed & 0xffffffffu), k1 = (uint32_t)(seed >> 32);
    uint32_t words[PREFETCH][LANES][4];
    size_t j0, nb = (k + 1) / 2;
    if (nb > PREFETCH)
        nb = PREFETCH;
    for (j0 = 0; j0 < count; j0 += LANES) {
        size_t L = count - j0 < LANES ? count - j0 : LANES, l, b, i;
        for (b = 0; b < nb; b++) {
            uint32_t c0[LANES], c1[LANES], c2[LANES], c3[LANES];
            for (l = 0; l < LANES; l++) {
                c0[l] = (uint32_t)b;
                c1[l] = first + (uint32_t)(j0 + l);
                c2[l] = cycle;
                c3[l] = purpose;
            }
            philox_lanes(k0, k1, c0, c1, c2, c3);
            for (l = 0; l < L; l++) {
                words[b][l][0] = c0[l];
                words[b][l][1] = c1[l];
                words[b][l][2] = c2[l];
                words[b][l][3] = c3[l];
            }
        }
        for (l = 0; l < L; l++) {
            double *o = out + (j0 + l) * ldo;
            size_t w = 0; /* next 64-bit word among the prefetched ones */
            for (i = 0; i < k && w < 2 * nb; i++, w++) {
                /* the ziggurat's fast path, straight from the words */
                const uint32_t *blk = words[w / 2][l];
                uint64_t u = (uint64_t)blk[2 * (w % 2)] | ((uint64_t)blk[2 * (w % 2) + 1] << 32);
                unsigned zi = (unsigned)(u & 255u);
                double x = (to_double(u >> 11) * 0x1.0p-53) * sl_zig_x[zi];
                if (!(x < sl_zig_x[zi + 1]))
                    break; /* the slow path: let the stream take over */
                o[i] = signed_by(x, u);
            }
            if (i < k) {
                /* continue as the stream would, from the word that failed
                 * the fast test (or from the first word not prefetched) */
                sl_stream s;
                sl_stream_init(&s, seed, first + (uint32_t)(j0 + l), cycle, purpose);
                if (w < 2 * nb) {
                    size_t bb = w / 2;
                    s.buf[0] = words[bb][l][0];
                    s.buf[1] = words[bb][l][1];
                    s.buf[2] = words[bb][l][2];
                    s.buf[3] = words[bb][l][3];
                    s.ctr[0] = (uint32_t)(bb + 1);
                    s.pos = (unsigned)(2 * (w % 2));
                } else {
                    s.ctr[0] = (uint32_t)nb;
                }
                for (; i < k; i++)
                    o[i] = sl_stream_normal(&s);
            }
        }
    }
}
