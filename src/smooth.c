/* smooth.c - particle smoothers on a filter's history: the genealogy of
 * the final particles and forward filtering, backward simulation. */
#include "sluice/smooth.h"

#include <math.h>
#include <string.h>
#include "sluice/rng.h"
#include "sluice/stats.h"
#include "clones.h"
#include "workspace.h"
#ifdef _OPENMP
#include <omp.h>
#endif

/* cycles summarised between two polls, per thread */
#define SUMMARY_BLOCK 8
#define NONE UINT32_MAX
/* Backward weights summed in blocks of this many particles. */
#define SUMBLOCK 8
/* Below this total (relative to the largest filter weight) the exact draw
 * is redone with the largest backward weight taken out first. */
#define TINY_TOTAL 1e-200

enum { KIND_GENEALOGY, KIND_FFBSI };

/* Where the regions of the workspace lie (NULL pointers in a size query). */
typedef struct {
    int nt;           /* threads */
    /* summaries, per thread: the particles of one cycle that paths pass
     * through, in the order the paths first reach them */
    uint32_t *pos;    /* nt x N: a particle's place in that list, or NONE */
    uint32_t *list;   /* nt x N: the particles */
    double *W;        /* nt x N: their summed path weights */
    double *vals;     /* nt x N: one state or parameter of each */
    double *qwork;    /* nt x qper */
    size_t qper;
    size_t *bad;      /* T: 1 + a particle of positive weight with a
                       * non-finite value, 0 when none */
    /* backward simulation, for every cycle s < T - 1 */
    double *G;        /* (N x n) x (T - 1): L_s^{-1} F_s(i), one column of
                       * N per state */
    double *logw;     /* N x (T - 1) logs of the filter weights (-Inf: no
                       * density) */
    double *top;      /* T - 1: the largest of them */
    double *cw;       /* N x T running sums of the weights (N x 1, the
                       * last cycle's, without rejection proposals) */
    double *lw;       /* nt x N backward weights */
    double *bs;       /* nt x nb their block sums */
    size_t nb;
    double *z;        /* nt x n */
    double *cnt;      /* M x 2: evaluations and fallbacks of each trajectory */
} smooth_ws;

/* The threads of a run: at most its items (particles, cycles, and for
 * backward simulation trajectories), one while its work is small and the
 * count is the caller's most (threads_auto). */
static int threads_of(const sl_smooth_config *cfg, int kind)
{
    size_t items = cfg->N > cfg->T ? cfg->N : cfg->T;
    int nt = cfg->threads;
    if (kind == KIND_FFBSI && cfg->M > items)
        items = cfg->M;
    if (nt < 1)
        nt = 1;
    if ((size_t)nt > items)
        nt = (int)(items > 0 ? items : 1);
    if (cfg->threads_auto && nt > 1) {
        const double units = (double)cfg->N * (double)cfg->T;
        const double ns = kind == KIND_FFBSI ? 3.0 * units * (double)cfg->M * (double)cfg->n
                                             : 15.0 * units * (double)(cfg->n + cfg->p);
        if (ns < SL_SMOOTH_THREAD_WORK)
            nt = 1;
    }
    return nt;
}

/* Lay out (base != NULL) or size (base == NULL) the workspace; returns 1
 * when the size overflows. */
static int layout(const sl_smooth_config *cfg, int kind, void *base,
                  smooth_ws *ws, size_t *bytes)
{
    const size_t N = cfg->N, n = cfg->n;
    unsigned char *at = base;
    size_t off = 0, nt, cnt;
    memset(ws, 0, sizeof *ws);
    ws->nt = threads_of(cfg, kind);
    nt = (size_t)ws->nt;
    ws->qper = sl_quantile_workspace(N);
    if (ws->qper < N) /* 8 N + constant overflowed */
        return 1;
    if (sl_size_mul(nt, N, &cnt))
        return 1;
    ws->pos = sl_ws_take(at, &off, cnt, sizeof(uint32_t));
    ws->list = sl_ws_take(at, &off, cnt, sizeof(uint32_t));
    ws->W = sl_ws_take(at, &off, cnt, sizeof(double));
    ws->vals = sl_ws_take(at, &off, cnt, sizeof(double));
    if (sl_size_mul(nt, ws->qper, &cnt))
        return 1;
    ws->qwork = sl_ws_take(at, &off, cnt, sizeof(double));
    ws->bad = sl_ws_take(at, &off, cfg->T, sizeof(size_t));
    if (kind == KIND_FFBSI) {
        const size_t T1 = cfg->T - 1;
        if (sl_size_mul(n, N, &cnt) || sl_size_mul(cnt, T1, &cnt))
            return 1;
        ws->G = sl_ws_take(at, &off, cnt, sizeof(double));
        if (sl_size_mul(N, T1, &cnt))
            return 1;
        ws->logw = sl_ws_take(at, &off, cnt, sizeof(double));
        ws->top = sl_ws_take(at, &off, T1, sizeof(double));
        if (sl_size_mul(N, cfg->tries > 0 ? cfg->T : 1, &cnt))
            return 1;
        ws->cw = sl_ws_take(at, &off, cnt, sizeof(double));
        if (sl_size_mul(nt, N, &cnt))
            return 1;
        ws->lw = sl_ws_take(at, &off, cnt, sizeof(double));
        ws->nb = (N + SUMBLOCK - 1) / SUMBLOCK;
        if (sl_size_mul(nt, ws->nb, &cnt))
            return 1;
        ws->bs = sl_ws_take(at, &off, cnt, sizeof(double));
        if (sl_size_mul(nt, n, &cnt))
            return 1;
        ws->z = sl_ws_take(at, &off, cnt, sizeof(double));
        if (sl_size_mul(cfg->M, 2, &cnt))
            return 1;
        ws->cnt = sl_ws_take(at, &off, cnt, sizeof(double));
    }
    if (off == SL_WS_OVERFLOW)
        return 1;
    *bytes = off;
    return 0;
}

/* Sizes, pointers and levels (everything that needs no pass over the data). */
static sl_status check_shape(const sl_smooth_config *cfg, int kind, sl_error *err)
{
    size_t l, cells;
    if (cfg == NULL)
        return sl_fail(err, SL_EINVAL, "badconfig", "no configuration given");
    if (cfg->n == 0 || cfg->N == 0 || cfg->T == 0)
        return sl_fail(err, SL_EINVAL, "badsize",
                       "states, particles and cycles must all be >= 1, got n = %lu, N = %lu, T = %lu",
                       (unsigned long)cfg->n, (unsigned long)cfg->N, (unsigned long)cfg->T);
    if (cfg->N > SL_SMOOTH_MAX || cfg->T > SL_SMOOTH_MAX)
        return sl_fail(err, SL_EINVAL, "badsize",
                       "at most %lu particles and cycles, got N = %lu, T = %lu",
                       (unsigned long)SL_SMOOTH_MAX, (unsigned long)cfg->N,
                       (unsigned long)cfg->T);
    if (sl_size_mul(cfg->n + cfg->p, cfg->N, &cells) || sl_size_mul(cells, cfg->T, &cells))
        return sl_fail(err, SL_ENOMEM, "nomemory", "the history's size overflows");
    if (cfg->X == NULL || cfg->w == NULL || (cfg->p > 0 && cfg->P == NULL) ||
        (cfg->nq > 0 && cfg->probs == NULL))
        return sl_fail(err, SL_EINVAL, "badconfig", "a required array is missing");
    if (cfg->threads < 1)
        return sl_fail(err, SL_EINVAL, "badconfig", "threads must be >= 1, got %d",
                       cfg->threads);
    for (l = 0; l < cfg->nq; l++)
        if (!(cfg->probs[l] >= 0 && cfg->probs[l] <= 1))
            return sl_fail(err, SL_EINVAL, "badprobs",
                           "quantile level %lu (%g) must lie in [0, 1]",
                           (unsigned long)(l + 1), cfg->probs[l]);
    if (kind == KIND_GENEALOGY) {
        if (cfg->T > 1 && cfg->ancestors == NULL)
            return sl_fail(err, SL_EINVAL, "badconfig", "the genealogy needs the ancestors");
    } else {
        if (cfg->M == 0 || cfg->M > SL_SMOOTH_MAX)
            return sl_fail(err, SL_EINVAL, "badsize",
                           "the number of trajectories must lie in 1 .. %lu, got %lu",
                           (unsigned long)SL_SMOOTH_MAX, (unsigned long)cfg->M);
        if (cfg->T > 1 && (cfg->F == NULL || cfg->L == NULL))
            return sl_fail(err, SL_EINVAL, "badconfig",
                           "backward simulation needs the transition means and factors");
    }
    return SL_OK;
}

sl_status sl_smooth_workspace(const sl_smoother *type, const sl_smooth_config *cfg,
                              size_t *bytes, sl_error *err)
{
    if (type == NULL || type->workspace == NULL)
        return sl_fail(err, SL_EINVAL, "badconfig", "no smoother given");
    return type->workspace(cfg, bytes, err);
}

static sl_status workspace_of(const sl_smooth_config *cfg, int kind, size_t *bytes,
                              sl_error *err)
{
    smooth_ws ws;
    sl_status st;
    *bytes = 0;
    st = check_shape(cfg, kind, err);
    if (st != SL_OK)
        return st;
    if (layout(cfg, kind, NULL, &ws, bytes)) {
        *bytes = 0;
        return sl_fail(err, SL_ENOMEM, "nomemory",
                       "the workspace for N = %lu particles overflows", (unsigned long)cfg->N);
    }
    return SL_OK;
}

static sl_status genealogy_workspace(const sl_smooth_config *cfg, size_t *bytes,
                                     sl_error *err)
{
    return workspace_of(cfg, KIND_GENEALOGY, bytes, err);
}

static sl_status ffbsi_workspace(const sl_smooth_config *cfg, size_t *bytes,
                                 sl_error *err)
{
    return workspace_of(cfg, KIND_FFBSI, bytes, err);
}

/* The weights of cycle s: finite, >= 0, positive sum. */
static sl_status check_weights(const sl_smooth_config *cfg, size_t s, sl_error *err)
{
    const double *w = cfg->w + s * cfg->N;
    double sum = 0.0;
    size_t i;
    for (i = 0; i < cfg->N; i++) {
        if (!(w[i] >= 0) || !isfinite(w[i]))
            return sl_fail(err, SL_EINVAL, "badweight",
                           "weight of particle %lu at cycle %lu is %g; expected finite values >= 0",
                           (unsigned long)(i + 1), (unsigned long)(s + 1), w[i]);
        sum += w[i];
    }
    if (!(sum > 0))
        return sl_fail(err, SL_EINVAL, "zeroweights",
                       "every weight at cycle %lu is zero", (unsigned long)(s + 1));
    return SL_OK;
}

static int poll_stop(const sl_smooth_config *cfg, double fraction)
{
    return cfg->poll != NULL && cfg->poll(cfg->poll_ctx, fraction);
}

static sl_status interrupted(sl_error *err)
{
    return sl_fail(err, SL_EINTERRUPT, "interrupted", "the smoother was interrupted");
}

static int tid_of(void)
{
#ifdef _OPENMP
    return omp_get_thread_num();
#else
    return 0;
#endif
}

static int column_finite(const double *x, size_t n)
{
    size_t i;
    for (i = 0; i < n; i++)
        if (!isfinite(x[i]))
            return 0;
    return 1;
}

/* The summaries of cycle s from K trajectories through index (K x T)
 * with weights v (NULL: equal): only the particles the paths pass through
 * are summarised (the others have weight zero). */
static void summarise_cycle(const sl_smooth_config *cfg, const smooth_ws *ws, size_t K,
                            const uint32_t *index, const double *v, size_t s,
                            sl_smooth_output *out)
{
    const size_t N = cfg->N, n = cfg->n, p = cfg->p, nq = cfg->nq;
    const size_t off = (size_t)tid_of() * N;
    uint32_t *pos = ws->pos + off, *list = ws->list + off;
    double *W = ws->W + off, *vals = ws->vals + off;
    double *qw = ws->qwork + (size_t)tid_of() * ws->qper;
    const uint32_t *ix = index + s * K;
    const double *X = cfg->X + s * n * N;
    const double *P = p > 0 ? cfg->P + s * p * N : NULL;
    size_t k, c, r, cnt = 0;
    for (k = 0; k < K; k++) {
        const uint32_t a = ix[k];
        if (pos[a] == NONE) {
            pos[a] = (uint32_t)cnt;
            list[cnt] = a;
            W[cnt] = 0.0;
            cnt++;
        }
        W[pos[a]] += v != NULL ? v[k] : 1.0;
    }
    for (c = 0; c < cnt; c++)
        pos[list[c]] = NONE;
    out->distinct[s] = (double)cnt;
    ws->bad[s] = 0;
    for (c = 0; c < cnt; c++)
        if (W[c] > 0 && (!column_finite(X + (size_t)list[c] * n, n) ||
                         (p > 0 && !column_finite(P + (size_t)list[c] * p, p)))) {
            ws->bad[s] = (size_t)list[c] + 1;
            return;
        }
    for (r = 0; r < n; r++) {
        for (c = 0; c < cnt; c++)
            vals[c] = X[(size_t)list[c] * n + r];
        sl_weighted_summary(cnt, vals, 1, W, nq, cfg->probs, out->mean + r + s * n,
                            out->quant + r + s * n * nq, n, qw);
    }
    if (p > 0 && out->pmean != NULL)
        for (r = 0; r < p; r++) {
            for (c = 0; c < cnt; c++)
                vals[c] = P[(size_t)list[c] * p + r];
            sl_weighted_summary(cnt, vals, 1, W, nq, cfg->probs, out->pmean + r + s * p,
                                out->pquant + r + s * p * nq, p, qw);
        }
}

/* Summaries of every cycle, parallel over cycles, polling between blocks;
 * the poll reports fraction f0 + (1 - f0) * done. */
static sl_status summarise(const sl_smooth_config *cfg, const smooth_ws *ws, size_t K,
                           const uint32_t *index, const double *v, double f0,
                           sl_smooth_output *out, sl_error *err)
{
    const size_t T = cfg->T, block = (size_t)ws->nt * SUMMARY_BLOCK;
    size_t s0, i;
    for (i = 0; i < (size_t)ws->nt * cfg->N; i++)
        ws->pos[i] = NONE;
    for (s0 = 0; s0 < T; s0 += block) {
        size_t s1 = s0 + block < T ? s0 + block : T;
        long long s;
#pragma omp parallel for num_threads(ws->nt) schedule(static)
        for (s = (long long)s0; s < (long long)s1; s++)
            summarise_cycle(cfg, ws, K, index, v, (size_t)s, out);
        if (poll_stop(cfg, f0 + (1 - f0) * (double)s1 / (double)T))
            return interrupted(err);
    }
    for (i = 0; i < T; i++)
        if (ws->bad[i] != 0) {
            size_t a = ws->bad[i] - 1;
            return sl_fail(err, SL_ENUMERIC, "badstate",
                           "particle %lu at cycle %lu carries smoothed weight but its state or "
                           "parameters are not finite",
                           (unsigned long)(a + 1), (unsigned long)(i + 1));
        }
    return SL_OK;
}

static sl_status run_genealogy(const sl_smooth_config *cfg, void *work,
                               sl_smooth_output *out, sl_error *err)
{
    const size_t N = cfg->N, T = cfg->T;
    smooth_ws ws;
    size_t bytes, j, s;
    sl_status st = check_shape(cfg, KIND_GENEALOGY, err);
    if (st != SL_OK)
        return st;
    if (out == NULL || out->mean == NULL || out->quant == NULL || out->index == NULL ||
        out->distinct == NULL || (cfg->p > 0 && out->pmean != NULL && out->pquant == NULL) ||
        work == NULL)
        return sl_fail(err, SL_EINVAL, "badconfig", "a required output array is missing");
    st = check_weights(cfg, T - 1, err);
    if (st != SL_OK)
        return st;
    for (s = 0; s + 1 < T; s++)
        for (j = 0; j < N; j++)
            if (cfg->ancestors[j + s * N] >= N)
                return sl_fail(err, SL_EINVAL, "badancestor",
                               "ancestor %lu of cycle %lu is %lu; expected 1 .. %lu",
                               (unsigned long)(j + 1), (unsigned long)(s + 1),
                               (unsigned long)cfg->ancestors[j + s * N] + 1,
                               (unsigned long)N);
    layout(cfg, KIND_GENEALOGY, work, &ws, &bytes);
    out->evaluations = 0.0;
    out->fallbacks = 0.0;

    /* each final particle, traced back through the ancestors: each thread
     * follows its own final particles cycle by cycle (one column of
     * ancestors at a time stays in cache), with no waiting between cycles */
#pragma omp parallel num_threads(ws.nt)
    {
        const size_t t = (size_t)tid_of(), nth = (size_t)ws.nt;
        const size_t j0 = N * t / nth, j1 = N * (t + 1) / nth;
        size_t jt, st_;
        uint32_t *last = out->index + (T - 1) * N;
        for (jt = j0; jt < j1; jt++)
            last[jt] = (uint32_t)jt;
        for (st_ = T - 1; st_ > 0; st_--) {
            const uint32_t *a = cfg->ancestors + (st_ - 1) * N, *from = out->index + st_ * N;
            uint32_t *to = out->index + (st_ - 1) * N;
            for (jt = j0; jt < j1; jt++)
                to[jt] = a[from[jt]];
        }
    }
    if (poll_stop(cfg, 0.2))
        return interrupted(err);
    return summarise(cfg, &ws, N, out->index, cfg->w + (T - 1) * N, 0.2, out, err);
}

/* Smallest i with c[i] > u among running sums c (nondecreasing, c[N-1] >
 * 0), stepping back over trailing zero increments when rounding left u at
 * the total. */
static size_t search(const double *c, size_t N, double u)
{
    size_t lo = 0, hi = N - 1;
    while (lo < hi) {
        size_t mid = lo + (hi - lo) / 2;
        if (c[mid] > u)
            hi = mid;
        else
            lo = mid + 1;
    }
    while (lo > 0 && !(c[lo] > c[lo - 1]))
        lo--;
    return lo;
}

/* y = L^{-1} x (forward substitution; L lower, n x n column-major), x
 * read and y written with strides. */
static void lower_solve(size_t n, const double *L, const double *x, size_t xinc,
                        double *y, size_t yinc)
{
    size_t k, l;
    for (k = 0; k < n; k++) {
        double acc = x[k * xinc];
        for (l = 0; l < k; l++)
            acc -= L[k + l * n] * y[l * yinc];
        y[k * yinc] = acc / L[k + k * n];
    }
}

static sl_status check_factor(const sl_smooth_config *cfg, size_t s, sl_error *err)
{
    const size_t n = cfg->n;
    const double *L = cfg->L + s * n * n;
    size_t k, l;
    for (k = 0; k < n; k++) {
        if (!(L[k + k * n] > 0) || !isfinite(L[k + k * n]))
            return sl_fail(err, SL_EINVAL, "badfactor",
                           "the transition factor of cycle %lu has diagonal entry %lu = %g; "
                           "expected finite values > 0", (unsigned long)(s + 1),
                           (unsigned long)(k + 1), L[k + k * n]);
        for (l = 0; l < k; l++)
            if (!isfinite(L[k + l * n]))
                return sl_fail(err, SL_EINVAL, "badfactor",
                               "the transition factor of cycle %lu is not finite",
                               (unsigned long)(s + 1));
    }
    return SL_OK;
}

/* Running sums of the weights of cycle s into c. */
static void running_weights(const sl_smooth_config *cfg, size_t s, double *c)
{
    const double *w = cfg->w + s * cfg->N;
    double acc = 0.0;
    size_t i;
    for (i = 0; i < cfg->N; i++) {
        acc += w[i];
        c[i] = acc;
    }
}

/* The exponentials of the backward weights, written so that the loop
 * vectorises: GCC keeps a select inside a loop scalar unless it may assume
 * that floating-point exceptions do not trap (they never do here; values,
 * NaN and Inf are unchanged by the option). */
#if defined(__GNUC__) && !defined(__clang__)
#pragma GCC push_options
#pragma GCC optimize("no-trapping-math")
#endif

/* exp(a) for a <= 0 (and -Inf), 0 below -708 (where exp leaves the
 * normal range; the callers need no subnormals, and producing them costs
 * a slow microcode path on common processors): a = k ln2 + r with
 * |r| <= ln2/2 (the two-part ln2 of fdlibm keeps k ln2 exact), exp(r) by
 * its Taylor polynomial of degree 12 (truncation below 2e-16 relative)
 * evaluated by Estrin's scheme, 2^k put into the exponent bits. */
static inline double exp_nonpos(double a)
{
    const double shift = 0x1.8p52, invln2 = 0x1.71547652b82fep0;
    const double ln2hi = 6.93147180369123816490e-01, ln2lo = 1.90821492927058770002e-10;
    double x = a < -708.0 ? -708.0 : a, t, k, r, p, scale;
    uint64_t bits;
    t = x * invln2 + shift; /* round(x / ln2) in the low bits of t */
    k = t - shift;
    r = (x - k * ln2hi) - k * ln2lo;
    {
        /* Estrin's scheme: the same polynomial with a short dependency chain */
        const double r2 = r * r, r4 = r2 * r2, r8 = r4 * r4;
        const double q0 = 1.0 + r, q1 = 0.5 + r * (1.0 / 6.0);
        const double q2 = 1.0 / 24.0 + r * (1.0 / 120.0);
        const double q3 = 1.0 / 720.0 + r * (1.0 / 5040.0);
        const double q4 = 1.0 / 40320.0 + r * (1.0 / 362880.0);
        const double q5 = 1.0 / 3628800.0 + r * (1.0 / 39916800.0), q6 = 1.0 / 479001600.0;
        const double s0 = q0 + q1 * r2, s1 = q2 + q3 * r2, s2 = q4 + q5 * r2;
        p = (s0 + s1 * r4) + (s2 + q6 * r4) * r8;
    }
    memcpy(&bits, &t, sizeof bits);
    bits = (bits + 1023u) << 52; /* the low bits of t hold k: exponent k + 1023 */
    memcpy(&scale, &bits, sizeof scale);
    return a < -708.0 ? 0.0 : p * scale;
}

/* The loop below is also compiled for AVX2 (clones.h). */

/* e[i] = w_i exp(-d_i^2 / 2) / w_max for the N particles of a cycle, with
 * d_i^2 = |z - G(i, :)|^2, logw[i] = log w_i and top = log w_max. */
SL_CLONES
static void backward_weights(size_t N, size_t n, const double *restrict G,
                             const double *restrict z, const double *restrict logw,
                             double top, double *restrict e)
{
    size_t i, k;
    for (i = 0; i < N; i++)
        e[i] = 0.0;
    for (k = 0; k < n; k++) {
        const double zk = z[k], *g = G + k * N;
#pragma omp simd
        for (i = 0; i < N; i++) {
            double d = zk - g[i];
            e[i] += d * d;
        }
    }
#pragma omp simd
    for (i = 0; i < N; i++)
        e[i] = exp_nonpos(logw[i] - top - 0.5 * e[i]);
}

#if defined(__GNUC__) && !defined(__clang__)
#pragma GCC pop_options
#endif

/* What the backward draws of one cycle s read. */
typedef struct {
    const double *G;    /* N x n: L_s^{-1} F_s(i), one column per state */
    const double *logw; /* N */
    const double *cw;   /* N running sums of the filter weights, or NULL */
    double top;         /* max logw */
} cycle_view;

/* The exact draw when every backward weight is tiny next to the largest
 * filter weight: log-weights, their maximum out, running sums. */
static uint32_t draw_rescaled(const sl_smooth_config *cfg, const cycle_view *cv,
                              const double *z, double *lw, sl_stream *st)
{
    const size_t N = cfg->N, n = cfg->n;
    const double *G = cv->G, *logw = cv->logw;
    double mx = -HUGE_VAL, acc = 0.0;
    size_t i, k;
    for (i = 0; i < N; i++) {
        double d2 = 0.0, a;
        for (k = 0; k < n; k++) {
            double e = z[k] - G[i + k * N];
            d2 += e * e;
        }
        a = logw[i] - 0.5 * d2;
        lw[i] = a;
        mx = a > mx ? a : mx;
    }
    if (!(mx > -HUGE_VAL))
        return NONE;
    for (i = 0; i < N; i++) {
        acc += exp(lw[i] - mx);
        lw[i] = acc;
    }
    return (uint32_t)search(lw, N, sl_stream_uniform(st) * acc);
}

/* The backward draw of one trajectory at cycle s: the particle chosen
 * given z = L_s^{-1} x_{s+1}, or NONE when every backward weight is zero.
 * e (N) and bs (N / SUMBLOCK rounded up) are the thread's buffers; cnt[0]
 * counts density evaluations, cnt[1] fallbacks. */
static uint32_t backward_draw(const sl_smooth_config *cfg, const cycle_view *cv,
                              const double *z, double *e, double *bs, sl_stream *st,
                              double *cnt)
{
    const size_t N = cfg->N, n = cfg->n, nb = (N + SUMBLOCK - 1) / SUMBLOCK;
    const double *G = cv->G, *logw = cv->logw, top = cv->top;
    double total = 0.0, acc = 0.0, u;
    size_t i, k, b, r;
    if (cfg->tries > 0) {
        const double cwsum = cv->cw[N - 1];
        for (r = 0; r < cfg->tries; r++) {
            double d2 = 0.0, a;
            i = search(cv->cw, N, sl_stream_uniform(st) * cwsum);
            a = sl_stream_uniform(st);
            cnt[0] += 1.0;
            if (logw[i] == -HUGE_VAL)
                continue;
            for (k = 0; k < n; k++) {
                double d = z[k] - G[i + k * N];
                d2 += d * d;
            }
            /* accept with probability density / bound = exp(-d^2 / 2) */
            if (log(a) < -0.5 * d2)
                return (uint32_t)i;
        }
        cnt[1] += 1.0;
    }
    cnt[0] += (double)N;
    /* w_i exp(-d_i^2 / 2) / max_j w_j, every one <= 1 */
    backward_weights(N, n, G, z, logw, top, e);
    for (b = 0; b < nb; b++) {
        size_t i1 = (b + 1) * SUMBLOCK < N ? (b + 1) * SUMBLOCK : N;
        double sb = 0.0;
        for (i = b * SUMBLOCK; i < i1; i++)
            sb += e[i];
        bs[b] = sb;
    }
    for (b = 0; b < nb; b++)
        total += bs[b];
    if (!(total > TINY_TOTAL))
        return draw_rescaled(cfg, cv, z, e, st);
    u = sl_stream_uniform(st) * total;
    for (b = 0; b < nb; b++) {
        if (acc + bs[b] > u)
            break;
        acc += bs[b];
    }
    if (b == nb) /* rounding left u at the total: the last block with weight */
        for (b = nb; b-- > 0 && !(bs[b] > 0);)
            ;
    {
        size_t i0 = b * SUMBLOCK, i1 = i0 + SUMBLOCK < N ? i0 + SUMBLOCK : N, last = i0;
        for (i = i0; i < i1; i++) {
            if (e[i] > 0)
                last = i;
            acc += e[i];
            if (acc > u && e[i] > 0)
                return (uint32_t)i;
        }
        return (uint32_t)last;
    }
}

/* Trajectories handled between two polls, per thread. */
#define PATH_BLOCK 32

/* The transformed means and log-weights of every cycle s < T - 1. */
static void prepare_cycles(const sl_smooth_config *cfg, const smooth_ws *ws)
{
    const size_t N = cfg->N, n = cfg->n, T1 = cfg->T - 1;
    long long si;
#pragma omp parallel for num_threads(ws->nt) schedule(static)
    for (si = 0; si < (long long)(N * T1); si++) {
        const size_t a = (size_t)si % N, s = (size_t)si / N;
        const double *f = cfg->F + (a + s * N) * n, wa = cfg->w[a + s * N];
        double *g = ws->G + s * n * N + a;
        size_t k;
        int ok = wa > 0 && column_finite(f, n);
        if (ok) {
            lower_solve(n, cfg->L + s * n * n, f, 1, g, N);
            for (k = 0; k < n; k++)
                ok = ok && isfinite(g[k * N]);
        }
        if (ok) {
            ws->logw[a + s * N] = log(wa);
        } else {
            /* zero density: a finite placeholder keeps the sums clean */
            for (k = 0; k < n; k++)
                g[k * N] = 0.0;
            ws->logw[a + s * N] = -HUGE_VAL;
        }
    }
}

/* Trajectories m0 .. m1-1 backwards from the last cycle; a trajectory
 * with no candidate at some cycle gets NONE from there back. */
static void run_paths(const sl_smooth_config *cfg, const smooth_ws *ws, size_t m0,
                      size_t m1, uint32_t *index)
{
    const size_t N = cfg->N, T = cfg->T, n = cfg->n, M = cfg->M;
    const int tid = tid_of();
    double *z = ws->z + (size_t)tid * n, *e = ws->lw + (size_t)tid * N;
    double *bs = ws->bs + (size_t)tid * ws->nb;
    const double *cwT = ws->cw + (cfg->tries > 0 ? (T - 1) * N : 0);
    size_t m, s;
    for (m = m0; m < m1; m++) {
        sl_stream sm;
        sl_stream_init(&sm, cfg->seed, (uint32_t)m, (uint32_t)(T - 1), SL_PURPOSE_SMOOTH);
        index[m + (T - 1) * M] = (uint32_t)search(cwT, N, sl_stream_uniform(&sm) * cwT[N - 1]);
    }
    for (s = T - 1; s-- > 0;) {
        cycle_view cv;
        cv.G = ws->G + s * n * N;
        cv.logw = ws->logw + s * N;
        cv.cw = cfg->tries > 0 ? ws->cw + s * N : NULL;
        cv.top = ws->top[s];
        for (m = m0; m < m1; m++) {
            const uint32_t next = index[m + (s + 1) * M];
            sl_stream sm;
            if (next == NONE) {
                index[m + s * M] = NONE;
                continue;
            }
            sl_stream_init(&sm, cfg->seed, (uint32_t)m, (uint32_t)s, SL_PURPOSE_SMOOTH);
            lower_solve(n, cfg->L + s * n * n, cfg->X + ((size_t)next + (s + 1) * N) * n, 1,
                        z, 1);
            index[m + s * M] = backward_draw(cfg, &cv, z, e, bs, &sm, ws->cnt + 2 * m);
        }
    }
}

static sl_status run_ffbsi(const sl_smooth_config *cfg, void *work,
                           sl_smooth_output *out, sl_error *err)
{
    const size_t N = cfg->N, T = cfg->T, n = cfg->n, M = cfg->M;
    smooth_ws ws;
    size_t bytes, s, i, m0, block;
    sl_status st = check_shape(cfg, KIND_FFBSI, err);
    if (st != SL_OK)
        return st;
    if (out == NULL || out->mean == NULL || out->quant == NULL || out->index == NULL ||
        out->distinct == NULL || (cfg->p > 0 && out->pmean != NULL && out->pquant == NULL) ||
        work == NULL)
        return sl_fail(err, SL_EINVAL, "badconfig", "a required output array is missing");
    for (s = 0; s < T; s++) {
        st = check_weights(cfg, s, err);
        if (st != SL_OK)
            return st;
        if (s + 1 < T && (st = check_factor(cfg, s, err)) != SL_OK)
            return st;
        for (i = 0; i < N; i++)
            if (cfg->w[i + s * N] > 0 && !column_finite(cfg->X + (i + s * N) * n, n))
                return sl_fail(err, SL_ENUMERIC, "badstate",
                               "particle %lu at cycle %lu has positive weight but a "
                               "non-finite state", (unsigned long)(i + 1),
                               (unsigned long)(s + 1));
    }
    layout(cfg, KIND_FFBSI, work, &ws, &bytes);
    for (i = 0; i < 2 * M; i++)
        ws.cnt[i] = 0.0;

    /* everything the draws share, for all cycles at once: the paths then
     * run to the first cycle without waiting for each other */
    prepare_cycles(cfg, &ws);
    for (s = 0; s + 1 < T; s++) {
        double top = -HUGE_VAL;
        const double *lw = ws.logw + s * N;
        for (i = 0; i < N; i++)
            top = lw[i] > top ? lw[i] : top;
        /* with no candidate at all (top -Inf) every draw reports it */
        ws.top[s] = top > -HUGE_VAL ? top : 0.0;
    }
    if (cfg->tries > 0)
        for (s = 0; s < T; s++)
            running_weights(cfg, s, ws.cw + s * N);
    else
        running_weights(cfg, T - 1, ws.cw);
    if (poll_stop(cfg, 0.05))
        return interrupted(err);

    block = (size_t)ws.nt * PATH_BLOCK;
    for (m0 = 0; m0 < M; m0 += block) {
        const size_t m1 = m0 + block < M ? m0 + block : M, cnt = m1 - m0;
#pragma omp parallel num_threads(ws.nt)
        {
            const size_t t = (size_t)tid_of(), nth = (size_t)ws.nt;
            run_paths(cfg, &ws, m0 + cnt * t / nth, m0 + cnt * (t + 1) / nth, out->index);
        }
        if (poll_stop(cfg, 0.05 + 0.85 * (double)m1 / (double)M))
            return interrupted(err);
    }
    for (i = 0; i < M; i++)
        if (out->index[i] == NONE) {
            /* the cycle where the path stopped: the last one marked */
            for (s = T - 1; s-- > 0;)
                if (out->index[i + s * M] == NONE && out->index[i + (s + 1) * M] != NONE)
                    break;
            return sl_fail(err, SL_EDEGENERATE, "nocandidate",
                           "trajectory %lu: no particle at cycle %lu can reach its state at "
                           "cycle %lu (every backward weight is zero)",
                           (unsigned long)(i + 1), (unsigned long)(s + 1),
                           (unsigned long)(s + 2));
        }
    out->evaluations = 0.0;
    out->fallbacks = 0.0;
    for (i = 0; i < M; i++) {
        out->evaluations += ws.cnt[2 * i];
        out->fallbacks += ws.cnt[2 * i + 1];
    }
    if (out->traj != NULL) {
        long long ss;
#pragma omp parallel for num_threads(ws.nt) schedule(static) private(i)
        for (ss = 0; ss < (long long)T; ss++)
            for (i = 0; i < M; i++)
                memcpy(out->traj + (i + (size_t)ss * M) * n,
                       cfg->X + ((size_t)out->index[i + (size_t)ss * M] + (size_t)ss * N) * n,
                       n * sizeof(double));
    }
    return summarise(cfg, &ws, M, out->index, NULL, 0.9, out, err);
}

const sl_smoother sl_smoother_genealogy = {"genealogy", genealogy_workspace, run_genealogy};
const sl_smoother sl_smoother_ffbsi = {"ffbsi", ffbsi_workspace, run_ffbsi};

static const sl_smoother *const all_smoothers[] = {&sl_smoother_genealogy,
                                                   &sl_smoother_ffbsi};

int sl_smooth_thread_count(const sl_smoother *type, const sl_smooth_config *cfg)
{
    return threads_of(cfg, type == &sl_smoother_ffbsi ? KIND_FFBSI : KIND_GENEALOGY);
}

const sl_smoother *sl_smoother_find(const char *name)
{
    size_t k;
    if (name == NULL)
        return NULL;
    for (k = 0; k < sizeof all_smoothers / sizeof *all_smoothers; k++)
        if (strcmp(all_smoothers[k]->name, name) == 0)
            return all_smoothers[k];
    return NULL;
}

const sl_smoother *sl_smoother_at(size_t k)
{
    return k < sizeof all_smoothers / sizeof *all_smoothers ? all_smoothers[k] : NULL;
}

sl_status sl_smooth_run(const sl_smoother *type, const sl_smooth_config *cfg, void *work,
                        sl_smooth_output *out, sl_error *err)
{
    if (type == NULL || type->run == NULL)
        return sl_fail(err, SL_EINVAL, "badconfig", "no smoother given");
    return type->run(cfg, work, out, err);
}
