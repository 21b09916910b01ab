/* rng.c - Philox streams, uniforms and ziggurat normals. */
#include "sluice/rng.h"

#include <math.h>
#include <Random123/philox.h>

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

uint64_t sl_stream_u64(sl_stream *s)
{
    uint64_t lo, hi;
    if (s->pos > 2)
        refill(s);
    lo = s->buf[s->pos];
    hi = s->buf[s->pos + 1];
    s->pos += 2;
    return lo | (hi << 32);
}

double sl_u01(uint64_t bits)
{
    /* 52 bits: k + 1/2 is exact below 2^52, so the value never rounds to 1 */
    return ((double)(bits >> 12) + 0.5) * 0x1.0p-52;
}

double sl_stream_uniform(sl_stream *s)
{
    return sl_u01(sl_stream_u64(s));
}

double sl_stream_normal(sl_stream *s)
{
    for (;;) {
        uint64_t u = sl_stream_u64(s);
        unsigned i = (unsigned)(u & 255u);
        double sign = (u & 256u) ? -1.0 : 1.0;
        double x = ((double)(u >> 11) * 0x1.0p-53) * sl_zig_x[i];
        if (x < sl_zig_x[i + 1])
            return sign * x;
        if (i == 0) {
            /* tail beyond r (Marsaglia 1964) */
            double a, b;
            do {
                a = -log(sl_stream_uniform(s)) / sl_zig_r;
                b = -log(sl_stream_uniform(s));
            } while (b + b < a * a);
            return sign * (sl_zig_r + a);
        }
        if (sl_zig_f[i] + sl_stream_uniform(s) * (sl_zig_f[i + 1] - sl_zig_f[i])
            < exp(-0.5 * x * x))
            return sign * x;
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
