/* stats.c - weighted ensemble summaries: means and exact quantiles. */
#include "sluice/stats.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>
#ifdef __SSE2__
#include <emmintrin.h>
#endif

#define NBUCKET 1024
#define SMALL 48 /* candidate sets this small are finished by sorting */
#define MAXLEVELS 64 /* levels handled per pass; more are done in groups */

/* candidates are (value, weight) pairs stored interleaved */
typedef struct {
    double v, w;
} pair;

size_t sl_quantile_workspace(size_t N)
{
    /* four pair regions of N pairs (all members, the gathered candidates,
     * and two for refining) plus the bucket sums */
    return 8 * N + 2 * NBUCKET;
}

#define MEAN_BLOCK_MIN 4096 /* members of a summing block, at least */

size_t sl_mean_block(size_t N)
{
    size_t b = (N + SL_MEAN_BLOCKS_MAX - 1) / SL_MEAN_BLOCKS_MAX;
    b = (b + 63) / 64 * 64;
    return b > MEAN_BLOCK_MIN ? b : MEAN_BLOCK_MIN;
}

/* One step of Neumaier's compensated sum: a added to the sum *s, the
 * error of that addition to *e. */
static inline void neumaier_add(double *s, double *e, double a)
{
    const double t = *s + a;
    *e += fabs(*s) >= fabs(a) ? (*s - t) + a : (a - t) + *s;
    *s = t;
}

/* The blocks' compensated sums (s[b], e[b]) combined in block order:
 * each block's sum added compensated, its error added to the error. One
 * block gives s[0] + e[0] (s[0] is never -0: a sum that starts at +0
 * stays off -0). */
static double combine_blocks(size_t nblk, const double *s, size_t sinc, const double *e,
                             size_t einc)
{
    double S = 0.0, E = 0.0;
    size_t b;
    for (b = 0; b < nblk; b++) {
        neumaier_add(&S, &E, s[b * sinc]);
        E += e[b * einc];
    }
    return S + E;
}

/* Stable sorts by value (ties, -0 and +0 among them, keep their order):
 * insertion for short runs, merging (through tmp, room for n pairs) for
 * longer ones. The order is that of any stable sort with the comparison
 * (x > y) - (x < y). */
#define RUN 16

static void insertion_sort(size_t n, pair *c)
{
    size_t i, j;
    for (i = 1; i < n; i++) {
        pair t = c[i];
        for (j = i; j > 0 && t.v < c[j - 1].v; j--)
            c[j] = c[j - 1];
        c[j] = t;
    }
}

static void stable_sort(size_t n, pair *c, pair *tmp)
{
    size_t i, width;
    pair *src = c, *dst = tmp;
    for (i = 0; i < n; i += RUN)
        insertion_sort(n - i < RUN ? n - i : RUN, c + i);
    for (width = RUN; width < n; width *= 2) {
        for (i = 0; i < n; i += 2 * width) {
            size_t a = i, am = i + width < n ? i + width : n;
            size_t b = am, bm = am + width < n ? am + width : n, o = i;
            while (a < am && b < bm)
                dst[o++] = src[b].v < src[a].v ? src[b++] : src[a++];
            while (a < am)
                dst[o++] = src[a++];
            while (b < bm)
                dst[o++] = src[b++];
        }
        {
            pair *t = src;
            src = dst;
            dst = t;
        }
    }
    if (src != c)
        memcpy(c, src, n * sizeof *c);
}

static size_t bucket_of(double v, double lo, double scale)
{
    size_t k = (size_t)((v - lo) * scale);
    return k < NBUCKET ? k : NBUCKET - 1;
}

/* Bucket b where the cumulative weight (starting at *acc, summed bucket by
 * bucket in order) first reaches target; *acc becomes the weight below
 * that bucket. An empty bucket adds nothing: the first bucket whose sum
 * reaches target is non-empty unless it is bucket 0 (target <= *acc). */
static size_t find_bucket(const double *bw, double *acc, double target)
{
    size_t b, last;
    double a = *acc;
    for (b = 0; b < NBUCKET; b++) {
        double t = a + bw[b];
        if (t >= target)
            break;
        a = t;
    }
    for (; b < NBUCKET; b++) {
        if (bw[b] > 0) {
            *acc = a;
            return b;
        }
        a += bw[b];
    }
    /* rounding kept the sum under target: the last non-empty bucket */
    for (last = NBUCKET - 1; last > 0 && !(bw[last] > 0); last--)
        ;
    *acc = a - bw[last];
    return last;
}

/* The value at the first of the sorted candidates c (n of them, sorted by
 * value) whose cumulative weight from below reaches target; the last one
 * when rounding keeps every sum under it. */
static double scan_sorted(size_t n, const pair *c, double below, double target)
{
    size_t i;
    for (i = 0; i < n; i++) {
        below += c[i].w;
        if (below >= target)
            return c[i].v;
    }
    return c[n - 1].v;
}

/* Smallest candidate value whose cumulative weight reaches target, among n
 * candidates c (values in [lo, hi]) with weight `below` under them. Works
 * in c and spare (each room for n pairs); bw holds NBUCKET doubles. */
static double select_in(size_t n, pair *c, pair *spare, double lo, double hi,
                        double below, double target, double *bw)
{
    for (;;) {
        size_t i, b, m = 0;
        double scale, nlo = HUGE_VAL, nhi = -HUGE_VAL;
        if (!(hi > lo))
            return c[0].v; /* every candidate has the same value (the
                            * first one's sign when they are zeros) */
        if (n <= SMALL) {
            insertion_sort(n, c);
            return scan_sorted(n, c, below, target);
        }
        scale = (double)NBUCKET / (hi - lo);
        memset(bw, 0, NBUCKET * sizeof *bw);
        for (i = 0; i < n; i++)
            bw[bucket_of(c[i].v, lo, scale)] += c[i].w;
        b = find_bucket(bw, &below, target);
        for (i = 0; i < n; i++)
            if (bucket_of(c[i].v, lo, scale) == b) {
                spare[m] = c[i];
                if (c[i].v < nlo) nlo = c[i].v;
                if (c[i].v > nhi) nhi = c[i].v;
                m++;
            }
        if (2 * m > n) {
            /* values bunched (for instance exponentially spread): one
             * bucket pass gains little, so sort what is left */
            stable_sort(m, spare, c);
            return scan_sorted(m, spare, below, target);
        }
        {
            pair *t = c;
            c = spare;
            spare = t;
        }
        n = m;
        lo = nlo;
        hi = nhi;
    }
}

/* sum of scale * w_i * (v_i - ref), compensated (Neumaier's sum, the
 * Kahan-Babuska variant: the error stays near one rounding whatever the
 * number of members), in member order */
static double compensated_dot(size_t n, const pair *c, double ref,
                              double scale)
{
    double s = 0.0, e = 0.0;
    size_t i;
    for (i = 0; i < n; i++)
        neumaier_add(&s, &e, (scale * c[i].w) * (c[i].v - ref));
    return s + e;
}

/* The same sums by the summing blocks of sl_mean_block: block b's
 * members are c[seg[b]] .. c[seg[b + 1] - 1]. */
static double blocked_sum_w(size_t nblk, const size_t *seg, const pair *c)
{
    double s[SL_MEAN_BLOCKS_MAX], e[SL_MEAN_BLOCKS_MAX];
    size_t b, i;
    for (b = 0; b < nblk; b++) {
        s[b] = e[b] = 0.0;
        for (i = seg[b]; i < seg[b + 1]; i++)
            neumaier_add(&s[b], &e[b], c[i].w);
    }
    return combine_blocks(nblk, s, 1, e, 1);
}

static double blocked_dot(size_t nblk, const size_t *seg, const pair *c, double ref)
{
    double s[SL_MEAN_BLOCKS_MAX], e[SL_MEAN_BLOCKS_MAX];
    size_t b, i;
    for (b = 0; b < nblk; b++) {
        s[b] = e[b] = 0.0;
        for (i = seg[b]; i < seg[b + 1]; i++)
            neumaier_add(&s[b], &e[b], (1.0 * c[i].w) * (c[i].v - ref));
    }
    return combine_blocks(nblk, s, 1, e, 1);
}

/* The buckets' weights (summed in member order), the total weight (in
 * member order) and, for every bucket, the list of its members: head[b]
 * is 1 + its last member, next[i] 1 + the member before i in the same
 * bucket (0 ends a list). */
static double bucket_lists(size_t n, const pair *all, double lo, double scale,
                           double *bw, size_t *head, size_t *next)
{
    double total = 0.0;
    size_t i;
    memset(bw, 0, NBUCKET * sizeof *bw);
    memset(head, 0, NBUCKET * sizeof *head);
    for (i = 0; i < n; i++) {
        size_t b = bucket_of(all[i].v, lo, scale);
        bw[b] += all[i].w;
        total += all[i].w;
        next[i] = head[b];
        head[b] = i + 1;
    }
    return total;
}

void sl_weighted_summary(size_t N, const double *x, size_t inc,
                         const double *w, size_t nq,
                         const double *probs, double *mean, double *q,
                         size_t qinc, double *work)
{
    pair *all = (pair *)(void *)work;
    pair *r1 = all + N, *r2 = r1 + N, *r3 = r2 + N;
    double *bw = work + 8 * N, *bw2 = bw + NBUCKET;
    /* the members' bucket lists: in r3, which only the refining uses */
    size_t *next = (size_t *)(void *)r3;
    /* per bucket: its list, which target (1-based) it is, and the weight
     * of the buckets up to and including it (find_bucket's running sum:
     * the same additions in the same order); per target (at most one per
     * level): where its candidates start, their range; per level: its
     * bucket and the weight below */
    size_t head[NBUCKET], start_of[MAXLEVELS], count_of[MAXLEVELS], lv_bucket[MAXLEVELS];
    size_t swept = 0, top = NBUCKET;
    unsigned char slot[NBUCKET];
    double upto[NBUCKET];
    double tlo[MAXLEVELS], thi[MAXLEVELS], lv_below[MAXLEVELS];
    /* Wrun: the plain running sum in member order, the same arithmetic as
     * the cumulative sums of the selection, so that level 1 reaches the
     * largest value */
    double W, Wrun = 0.0, lo, hi, scale, tmax, a;
    double lo0 = HUGE_VAL, hi0 = -HUGE_VAL, lo1 = HUGE_VAL, hi1 = -HUGE_VAL;
    /* where each summing block's members start in all (seg[bk]: n) */
    const size_t blk = sl_mean_block(N);
    size_t seg[SL_MEAN_BLOCKS_MAX + 1], next_seg = 0, bk;
    size_t j, n = 0, k, k0, i;
    int full = 0;
    /* the members of positive weight, and their range (in two lanes: the
     * sign of a zero bound is never used) */
    for (j = 0, bk = 0; j + 1 < N; j += 2) {
        double v = x[j * inc], wj = w[j], u = x[(j + 1) * inc], wu = w[j + 1];
        if (j == next_seg) {
            /* the first of summing block bk (blocks are of even size) */
            seg[bk++] = n;
            next_seg += blk;
        }
        if (wj > 0) {
            all[n].v = v;
            all[n].w = wj;
            n++;
            lo0 = v < lo0 ? v : lo0;
            hi0 = v > hi0 ? v : hi0;
        }
        if (wu > 0) {
            all[n].v = u;
            all[n].w = wu;
            n++;
            lo1 = u < lo1 ? u : lo1;
            hi1 = u > hi1 ? u : hi1;
        }
    }
    if (j == next_seg && j < N)
        seg[bk++] = n;
    if (j < N && w[j] > 0) {
        double v = x[j * inc];
        all[n].v = v;
        all[n].w = w[j];
        n++;
        lo0 = v < lo0 ? v : lo0;
        hi0 = v > hi0 ? v : hi0;
    }
    seg[bk] = n;
    lo = lo1 < lo0 ? lo1 : lo0;
    hi = hi1 > hi0 ? hi1 : hi0;
    if (n == 0) {
        if (mean != NULL)
            *mean = NAN;
        for (k = 0; k < nq; k++)
            q[k * qinc] = NAN;
        return;
    }
    if (mean == NULL) {
        /* the caller's (sl_weighted_means) */
    } else if (isfinite(hi - lo)) {
        W = blocked_sum_w(bk, seg, all);
        /* deviations from one member: exact for a constant ensemble */
        double ref = all[0].v;
        *mean = ref + blocked_dot(bk, seg, all, ref) / W;
    } else {
        /* a range wider than the largest double: weights first, so no
         * partial sum can overflow (in member order, one block) */
        W = blocked_sum_w(bk, seg, all);
        *mean = compensated_dot(n, all, 0.0, 1.0 / W);
    }
    if (nq == 0)
        return;
    if (!(hi > lo)) {
        /* one value (the first member's sign when they are zeros) */
        for (k = 0; k < nq; k++)
            q[k * qinc] = all[0].v;
        return;
    }
    if (!isfinite(hi - lo)) {
        /* a range too wide for buckets: sort everything once; the
         * cumulative weights in sorted order (the same for every level)
         * are non-decreasing, so each level's first reaching index is
         * found by bisection */
        double *cum = (double *)(void *)r2, acc = 0.0;
        for (i = 0; i < n; i++)
            Wrun += all[i].w;
        stable_sort(n, all, r1);
        for (i = 0; i < n; i++) {
            acc += all[i].w;
            cum[i] = acc;
        }
        for (k = 0; k < nq; k++) {
            double target = probs[k] * Wrun;
            size_t l = 0, h = n;
            while (l < h) {
                size_t mid = l + (h - l) / 2;
                if (cum[mid] >= target)
                    h = mid;
                else
                    l = mid + 1;
            }
            q[k * qinc] = all[l < n ? l : n - 1].v;
        }
        return;
    }
    /* one histogram of all members serves every level; each target
     * bucket's members are then read from its list, into their own
     * stretch of r1 */
    scale = (double)NBUCKET / (hi - lo);
    Wrun = bucket_lists(n, all, lo, scale, bw, head, next);
    /* the running sum over the buckets, as far as the largest target
     * needs (all of it when a level is NaN or rounding keeps a sum under
     * its target): upto[b] is non-decreasing, so each level's first
     * bucket reaching its target is found by bisection */
    tmax = 0.0;
    for (k = 0; k < nq; k++) {
        double t = probs[k] * Wrun;
        if (isnan(t))
            tmax = HUGE_VAL, full = 1;
        else if (t > tmax)
            tmax = t;
    }
    a = 0.0;
    for (swept = 0; swept < NBUCKET; swept++) {
        a += bw[swept];
        upto[swept] = a;
        if (a >= tmax && bw[swept] > 0 && !full) {
            swept++;
            break;
        }
    }
    memset(slot, 0, sizeof slot);
    for (k0 = 0; k0 < nq; k0 += MAXLEVELS) {
        size_t off = 0, nt = 0, k1 = nq - k0 < MAXLEVELS ? nq : k0 + MAXLEVELS;
        if (k0 > 0) {
            /* r3 served the previous levels' refining: the lists again */
            memset(slot, 0, sizeof slot);
            bucket_lists(n, all, lo, scale, bw2, head, next);
        }
        for (k = k0; k < k1; k++) {
            double target = probs[k] * Wrun;
            size_t l = 0, h = swept, b;
            while (l < h) {
                size_t mid = l + (h - l) / 2;
                if (upto[mid] >= target)
                    h = mid;
                else
                    l = mid + 1;
            }
            /* the first non-empty bucket from there on (an empty bucket
             * reaches target only when it is bucket 0) */
            for (b = l; b < swept && !(bw[b] > 0); b++)
                ;
            if (b < swept) {
                lv_below[k - k0] = b > 0 ? upto[b - 1] : 0.0;
            } else {
                /* rounding kept the sum under target (the sweep went
                 * through every bucket): the last non-empty bucket */
                if (top == NBUCKET)
                    for (top = NBUCKET - 1; top > 0 && !(bw[top] > 0); top--)
                        ;
                b = top;
                lv_below[k - k0] = upto[NBUCKET - 1] - bw[b];
            }
            lv_bucket[k - k0] = b;
            if (slot[b] == 0) {
                /* its members, last first from the list, then turned
                 * round into member order */
                size_t e = head[b], s0, s1;
                double tl = HUGE_VAL, th = -HUGE_VAL;
                slot[b] = (unsigned char)++nt; /* 1-based: 0 marks a bucket no level needs */
                start_of[nt - 1] = off;
                while (e != 0) {
                    double v = all[e - 1].v;
                    r1[off++] = all[e - 1];
                    tl = v < tl ? v : tl;
                    th = v > th ? v : th;
                    e = next[e - 1];
                }
                count_of[nt - 1] = off - start_of[nt - 1];
                for (s0 = start_of[nt - 1], s1 = off; s1 - s0 > 1; s0++, s1--) {
                    pair t = r1[s0];
                    r1[s0] = r1[s1 - 1];
                    r1[s1 - 1] = t;
                }
                tlo[nt - 1] = tl;
                thi[nt - 1] = th;
            }
        }
        for (k = k0; k < k1; k++) {
            size_t t = (size_t)slot[lv_bucket[k - k0]] - 1, m = count_of[t];
            /* refine a copy: two levels may share a bucket */
            memcpy(r2, r1 + start_of[t], m * sizeof *r2);
            q[k * qinc] = select_in(m, r2, r3, tlo[t], thi[t], lv_below[k - k0],
                                    probs[k] * Wrun, bw2);
        }
    }
}

#define MEANBLOCK 64 /* rows summed together in one pass over the members */

/* One member's step of the compensated sums of a block's rows: for row
 * b, with v its value and a = (1.0 * wj) * (v - ref[b]), t = s[b] + a,
 * the error of that addition into e[b] (Neumaier), s[b] = t, and the
 * row's range. Two rows at a time in SSE2 lanes where the target has
 * them: each lane does the scalar operations of its row, in the same
 * order, so the bits are the same. */
static void means_step(size_t nb, const double *col, const size_t *r, double wj,
                       const double *ref, double *s, double *e, double *lo, double *hi)
{
    size_t b = 0;
#ifdef __SSE2__
    const __m128d w2 = _mm_set1_pd(1.0 * wj), sign = _mm_set1_pd(-0.0);
    for (; b + 1 < nb; b += 2) {
        __m128d v = _mm_loadh_pd(_mm_load_sd(col + r[b]), col + r[b + 1]);
        __m128d sb = _mm_loadu_pd(s + b);
        __m128d a = _mm_mul_pd(w2, _mm_sub_pd(v, _mm_loadu_pd(ref + b)));
        __m128d t = _mm_add_pd(sb, a);
        /* fabs(s) >= fabs(a): false for a NaN, as in C */
        __m128d ge = _mm_cmpge_pd(_mm_andnot_pd(sign, sb), _mm_andnot_pd(sign, a));
        __m128d x1 = _mm_add_pd(_mm_sub_pd(sb, t), a), x2 = _mm_add_pd(_mm_sub_pd(a, t), sb);
        /* min(v, lo) is v < lo ? v : lo; max(v, hi) is v > hi ? v : hi */
        _mm_storeu_pd(lo + b, _mm_min_pd(v, _mm_loadu_pd(lo + b)));
        _mm_storeu_pd(hi + b, _mm_max_pd(v, _mm_loadu_pd(hi + b)));
        _mm_storeu_pd(e + b, _mm_add_pd(_mm_loadu_pd(e + b),
                                        _mm_or_pd(_mm_and_pd(ge, x1), _mm_andnot_pd(ge, x2))));
        _mm_storeu_pd(s + b, t);
    }
#endif
    for (; b < nb; b++) {
        double v = col[r[b]], a = (1.0 * wj) * (v - ref[b]), t = s[b] + a;
        if (v < lo[b]) lo[b] = v;
        if (v > hi[b]) hi[b] = v;
        e[b] += fabs(s[b]) >= fabs(a) ? (s[b] - t) + a : (a - t) + s[b];
        s[b] = t;
    }
}

/* The end of summing block k (blocks of blk members, N in all). */
static size_t block_end(size_t N, size_t blk, size_t k)
{
    return k * blk + blk < N ? k * blk + blk : N;
}

/* The compensated total weight (*sw + *ew) of the members of positive
 * weight of the summing block from ja (blk members at most), and the
 * first of them (*first; N: none). */
static void block_weight(size_t N, const double *w, size_t ja, size_t blk, double *sw,
                         double *ew, size_t *first)
{
    const size_t jb = block_end(N, blk, ja / blk);
    double s = 0.0, e = 0.0;
    size_t j, f = N;
    for (j = ja; j < jb; j++) {
        if (!(w[j] > 0))
            continue;
        if (f == N)
            f = j;
        neumaier_add(&s, &e, w[j]);
    }
    *sw = s;
    *ew = e;
    *first = f;
}

/* One summing block's sums of nb rows over members j0 .. jb - 1 (those
 * of positive weight), in local arrays (which the compiler keeps apart
 * from x), then out. */
static void block_sums(size_t nb, const double *x, size_t ld, const size_t *r,
                       const double *w, const double *ref, size_t j0, size_t jb,
                       double *s_out, double *e_out, double *lo_out, double *hi_out)
{
    double s[MEANBLOCK], e[MEANBLOCK], lo[MEANBLOCK], hi[MEANBLOCK];
    size_t j, b;
    for (b = 0; b < nb; b++) {
        s[b] = e[b] = 0.0;
        lo[b] = HUGE_VAL;
        hi[b] = -HUGE_VAL;
    }
    for (j = j0; j < jb; j++)
        if (w[j] > 0)
            means_step(nb, x + j * ld, r, w[j], ref, s, e, lo, hi);
    memcpy(s_out, s, nb * sizeof *s);
    memcpy(e_out, e, nb * sizeof *e);
    memcpy(lo_out, lo, nb * sizeof *lo);
    memcpy(hi_out, hi, nb * sizeof *hi);
}

void sl_weighted_means(size_t N, const double *x, size_t ld, size_t m,
                       const size_t *rows, size_t base, const double *w,
                       double *mean, int threads)
{
    const size_t blk = sl_mean_block(N), nblk = (N + blk - 1) / blk;
    const int nt = threads > 1 && nblk > 1 ? threads : 1;
    /* per summing block: its total weight (compensated: bW + bWe) and its
     * first member of positive weight (N: none); per block and
     * row: the compensated sums and the range */
    double bW[SL_MEAN_BLOCKS_MAX], bWe[SL_MEAN_BLOCKS_MAX], W;
    double s[SL_MEAN_BLOCKS_MAX][MEANBLOCK], e[SL_MEAN_BLOCKS_MAX][MEANBLOCK];
    double lo[SL_MEAN_BLOCKS_MAX][MEANBLOCK], hi[SL_MEAN_BLOCKS_MAX][MEANBLOCK];
    size_t bj0[SL_MEAN_BLOCKS_MAX];
    size_t j, j0 = N, i0, b;
    long k;
    if (m == 0)
        return;
    /* the total weight: the members of positive weight, block by block
     * (one thread: no parallel region, whose start costs more than a
     * small block's sums) */
    if (nt > 1) {
#pragma omp parallel for num_threads(nt) schedule(static)
        for (k = 0; k < (long)nblk; k++)
            block_weight(N, w, (size_t)k * blk, blk, &bW[k], &bWe[k], &bj0[k]);
    } else {
        for (k = 0; k < (long)nblk; k++)
            block_weight(N, w, (size_t)k * blk, blk, &bW[k], &bWe[k], &bj0[k]);
    }
    W = combine_blocks(nblk, bW, 1, bWe, 1);
    for (b = 0; b < nblk && j0 == N; b++)
        j0 = bj0[b];
    for (i0 = 0; i0 < m; i0 += MEANBLOCK) {
        size_t nb = m - i0 < MEANBLOCK ? m - i0 : MEANBLOCK, r[MEANBLOCK];
        double ref[MEANBLOCK];
        for (b = 0; b < nb; b++)
            r[b] = rows != NULL ? rows[i0 + b] - base : i0 + b;
        if (j0 == N) {
            for (b = 0; b < nb; b++)
                mean[r[b]] = NAN;
            continue;
        }
        for (b = 0; b < nb; b++)
            /* deviations from the first member of positive weight */
            ref[b] = x[r[b] + j0 * ld];
        if (nt > 1) {
#pragma omp parallel for num_threads(nt) schedule(static)
            for (k = 0; k < (long)nblk; k++)
                block_sums(nb, x, ld, r, w, ref, bj0[k], block_end(N, blk, (size_t)k), s[k],
                           e[k], lo[k], hi[k]);
        } else {
            for (k = 0; k < (long)nblk; k++)
                block_sums(nb, x, ld, r, w, ref, bj0[k], block_end(N, blk, (size_t)k), s[k],
                           e[k], lo[k], hi[k]);
        }
        for (b = 0; b < nb; b++) {
            double l = HUGE_VAL, h = -HUGE_VAL;
            for (k = 0; k < (long)nblk; k++) {
                l = lo[k][b] < l ? lo[k][b] : l;
                h = hi[k][b] > h ? hi[k][b] : h;
            }
            if (isfinite(h - l)) {
                mean[r[b]] = ref[b] + combine_blocks(nblk, &s[0][b], MEANBLOCK, &e[0][b],
                                                     MEANBLOCK) / W;
            } else {
                /* a range wider than the largest double: weights first,
                 * in member order (as sl_weighted_summary) */
                double sc = 1.0 / W, ss = 0.0, ee = 0.0;
                for (j = j0; j < N; j++)
                    if (w[j] > 0)
                        neumaier_add(&ss, &ee, (sc * w[j]) * (x[r[b] + j * ld] - 0.0));
                mean[r[b]] = ss + ee;
            }
        }
    }
}
