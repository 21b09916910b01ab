/* resample.c - systematic, stratified, residual and multinomial resampling. */
#include "sluice/resample.h"

#include <math.h>
#include <string.h>

#include "sluice/weights.h"

/* Every scheme maps sorted positions 0 < p_0 <= p_1 <= ... < wsum onto the
 * running sum c_i = w_0 + ... + w_i: position p goes to the first member i
 * with p < c_i. A member with w_i = 0 has c_i = c_{i-1}, so no position can
 * reach it. Rounding may leave the last positions at or above the final
 * running sum; those go to the last member of positive weight. */

/* The last member of positive weight (there is one: wsum > 0). */
static uint32_t last_positive(size_t N, const double *w)
{
    size_t i = N;
    while (i > 1 && !(w[i - 1] > 0))
        i--;
    return (uint32_t)(i - 1);
}

/* Positions left over by rounding, k..M-1, go to the last positive member. */
static void fill_tail(size_t N, const double *w, size_t k, size_t M,
                      uint32_t *anc)
{
    if (k < M) {
        uint32_t last = last_positive(N, w);
        for (; k < M; k++)
            anc[k] = last;
    }
}

/* Ancestors of the sorted positions pos[0..M-1] (merge with the running
 * sum), written to anc[0..M-1]. */
static void merge_sorted(size_t N, const double *w, double sc, size_t M,
                         const double *pos, uint32_t *anc)
{
    double c = 0;
    size_t i, k = 0;
    for (i = 0; i < N && k < M; i++) {
        c += w[i] * sc;
        while (k < M && pos[k] < c)
            anc[k++] = (uint32_t)i;
    }
    fill_tail(N, w, k, M, anc);
}

/* The schemes work with the weights times a power of two `sc`: 1 for sums
 * in [2^-500, 2^500] (nothing changes, as scaling by a power of two is
 * exact), otherwise chosen so that wsum * sc lies in [2^-75, 1). Then
 * M / wsum and wsum / M can neither overflow nor fall into the subnormal
 * range, where the positions would lose their precision. */
static double weight_scale(double wsum)
{
    int e;
    if (wsum >= 0x1p-500 && wsum <= 0x1p500)
        return 1;
    (void)frexp(wsum, &e); /* wsum = f 2^e, f in [1/2, 1) */
    return ldexp(1.0, -e > 1000 ? 1000 : -e);
}

static size_t no_workspace(size_t N, size_t M)
{
    (void)N;
    (void)M;
    return 0;
}

static size_t m_doubles(size_t N, size_t M)
{
    (void)N;
    return M;
}

/* Systematic: one uniform u, positions p_k = (k + u) * wsum / M. One pass
 * over the weights; the positions are scaled by wsum rather than the
 * weights normalised, so the loop holds no division. Every member gets
 * floor(M w_i / wsum) or ceil(M w_i / wsum) offspring.
 *
 * The result is that of testing every position against the running sum c:
 * positions k .. K-1 go to member i, where K = #{k : p_k < c}. Testing
 * position by position costs a mispredicted branch about once per member,
 * so the main loop computes K directly: K = ceil(c M / wsum - u) =
 * floor(e) for e = c M / wsum - u + 1. Rounding moves e and the positions
 * by at most 6 * 2^-53 * (M + 1) < 3e-6 position units for M below 2^32,
 * so floor(e) is exact unless e lies within 1e-5 of a whole number; only
 * then (rarely, so the branch is predicted) are the neighbouring positions
 * compared with c. Member i is then written to the next four slots
 * unconditionally before advancing to K; only members with more than four
 * offspring loop. The last slots are finished by the plain loop. */
static void run_systematic(size_t N, const double *w, double wsum, size_t M,
                           sl_stream *s, double *work, uint32_t *anc)
{
    const double sc = weight_scale(wsum), ws = wsum * sc;
    const double u = sl_stream_uniform(s), step = ws / (double)M;
    const double per = (double)M / ws;
    double c = 0, pos;
    size_t i = 0, k = 0;
    (void)work;

    if (M >= 4) {
        const int64_t Mi = (int64_t)M;
        const size_t kmax = M - 4;
        for (; i < N && k <= kmax; i++) {
            double e, f;
            int64_t K;
            size_t j;
            uint32_t m = (uint32_t)i;
            c += w[i] * sc;
            e = c * per - u + 1.0; /* > 0: c >= 0 and u < 1 */
            K = (int64_t)e;
            f = e - (double)K;
            if (fabs(f - 0.5) > 0.5 - 1e-5) {
                while (K < Mi && ((double)K + u) * step < c)
                    K++;
                while (K > 0 && ((double)(K - 1) + u) * step >= c)
                    K--;
            }
            if (K > Mi)
                K = Mi;
            if (K < (int64_t)k)
                K = (int64_t)k;
            anc[k] = m;
            anc[k + 1] = m;
            anc[k + 2] = m;
            anc[k + 3] = m;
            for (j = k + 4; j < (size_t)K; j++)
                anc[j] = m;
            k = (size_t)K;
        }
        if (k == M)
            return;
    }
    /* the plain loop resumes at member i (not yet added to c) */
    pos = ((double)k + u) * step;
    for (; i < N; i++) {
        c += w[i] * sc;
        while (pos < c) {
            anc[k] = (uint32_t)i;
            if (++k == M)
                return;
            pos = ((double)k + u) * step;
        }
    }
    fill_tail(N, w, k, M, anc);
}

/* Stratified: one uniform per stratum, positions (k + u_k) * wsum / M. */
static void run_stratified(size_t N, const double *w, double wsum, size_t M,
                           sl_stream *s, double *work, uint32_t *anc)
{
    const double sc = weight_scale(wsum), step = wsum * sc / (double)M;
    double c = 0, pos = sl_stream_uniform(s) * step;
    size_t i, k = 0;
    (void)work;
    for (i = 0; i < N; i++) {
        c += w[i] * sc;
        while (pos < c) {
            anc[k] = (uint32_t)i;
            if (++k == M)
                return;
            pos = ((double)k + sl_stream_uniform(s)) * step;
        }
    }
    fill_tail(N, w, k, M, anc);
}

/* M sorted uniforms times `scale`, into pos[0..M-1]: the partial sums of
 * M + 1 standard exponentials divided by their total are distributed as
 * the order statistics of M uniforms (exponential spacings), so no sort
 * is needed and the multinomial scheme costs O(N + M). */
static void sorted_positions(sl_stream *s, size_t M, double scale,
                             double *pos)
{
    double t = 0;
    size_t k;
    for (k = 0; k < M; k++) {
        t -= log(sl_stream_uniform(s));
        pos[k] = t;
    }
    t -= log(sl_stream_uniform(s));
    scale /= t;
    for (k = 0; k < M; k++)
        pos[k] *= scale;
}

/* Multinomial: M independent draws from the weights, returned sorted. */
static void run_multinomial(size_t N, const double *w, double wsum, size_t M,
                            sl_stream *s, double *work, uint32_t *anc)
{
    const double sc = weight_scale(wsum);
    sorted_positions(s, M, wsum * sc, work);
    merge_sorted(N, w, sc, M, work, anc);
}

/* M w_i / wsum = x split into copies n and residual r = x - n >= 0. A value
 * within about four units in the last place below a whole number is taken
 * as that number, so equal weights give exactly one copy each rather than
 * none and a residual of 1 - 1e-16. */
static double split_copies(double x, double *r)
{
    double n = floor(x + x * 0x1p-50), d = x - n;
    *r = d > 0 ? d : 0;
    return n;
}

/* Residual: member i first gets n_i = floor(M w_i / wsum) copies (written
 * in order to the front of anc); the R = M - sum n_i draws left are
 * multinomial on the residual weights M w_i / wsum - n_i (the classic
 * residual scheme), written sorted after the copies. The residual weights
 * are recomputed by the same expression rather than stored. */
static void run_residual(size_t N, const double *w, double wsum, size_t M,
                         sl_stream *s, double *work, uint32_t *anc)
{
    const double sc = weight_scale(wsum), scale = (double)M / (wsum * sc);
    double rsum = 0, c = 0, r;
    size_t i, k = 0, R, j;

    for (i = 0; i < N; i++) {
        size_t copies = (size_t)split_copies(w[i] * sc * scale, &r);
        if (copies > M - k) /* rounding can only overshoot at the end */
            copies = M - k;
        for (j = 0; j < copies; j++)
            anc[k++] = (uint32_t)i;
        rsum += r;
    }
    R = M - k;
    if (R == 0)
        return;
    if (!(rsum > 0)) { /* rounding left draws but no residual mass */
        fill_tail(N, w, k, M, anc);
        return;
    }
    sorted_positions(s, R, rsum, work);
    j = 0;
    for (i = 0; i < N && j < R; i++) {
        split_copies(w[i] * sc * scale, &r);
        c += r;
        while (j < R && work[j] < c)
            anc[k + j++] = (uint32_t)i;
    }
    /* leftovers by rounding go to the last member with residual mass */
    if (j < R) {
        uint32_t last = 0;
        for (i = N; i > 0; i--) {
            split_copies(w[i - 1] * sc * scale, &r);
            if (r > 0) {
                last = (uint32_t)(i - 1);
                break;
            }
        }
        for (; j < R; j++)
            anc[k + j] = last;
    }
}

const sl_resampler sl_resampler_systematic = {
    "systematic", no_workspace, run_systematic};
const sl_resampler sl_resampler_stratified = {
    "stratified", no_workspace, run_stratified};
const sl_resampler sl_resampler_residual = {
    "residual", m_doubles, run_residual};
const sl_resampler sl_resampler_multinomial = {
    "multinomial", m_doubles, run_multinomial};

static const sl_resampler *const all_schemes[] = {
    &sl_resampler_systematic, &sl_resampler_stratified,
    &sl_resampler_residual, &sl_resampler_multinomial};

const sl_resampler *sl_resampler_find(const char *name)
{
    size_t k;
    if (name == NULL)
        return NULL;
    for (k = 0; k < sizeof all_schemes / sizeof all_schemes[0]; k++)
        if (strcmp(name, all_schemes[k]->name) == 0)
            return all_schemes[k];
    return NULL;
}

const sl_resampler *sl_resampler_at(size_t k)
{
    return k < sizeof all_schemes / sizeof all_schemes[0] ? all_schemes[k] : NULL;
}

size_t sl_resample_workspace(const sl_resampler *scheme, size_t N, size_t M)
{
    return scheme != NULL ? scheme->workspace(N, M) : 0;
}

sl_status sl_resample(const sl_resampler *scheme, size_t N, const double *w,
                      size_t M, uint64_t seed, uint32_t cycle, double *work,
                      uint32_t *anc, sl_error *err)
{
    double wsum;
    sl_stream s;
    sl_status st;

    if (scheme == NULL)
        return sl_fail(err, SL_EINVAL, "badscheme", "no resampling scheme given");
    if (N == 0 || N > SL_RESAMPLE_MAX)
        return sl_fail(err, SL_EINVAL, "badsize",
                       "%zu weights: expected 1 to %zu", N,
                       (size_t)SL_RESAMPLE_MAX);
    if (M == 0 || M > SL_RESAMPLE_MAX)
        return sl_fail(err, SL_EINVAL, "badsize",
                       "%zu ancestors asked for: expected 1 to %zu", M,
                       (size_t)SL_RESAMPLE_MAX);
    st = sl_weights_check(N, w, &wsum, err);
    if (st != SL_OK)
        return st;
    sl_stream_init(&s, seed, 0, cycle, SL_PURPOSE_RESAMPLE);
    scheme->run(N, w, wsum, M, &s, work, anc);
    return SL_OK;
}
