/* letkf.c - the local ensemble transform Kalman filter: an ensemble-space
 * analysis with R-localisation at every state row (Hunt, Kostelich &
 * Szunyogh 2007). */
#include <float.h>
#include <math.h>
#include <stdint.h>
#include <string.h>
#ifdef _OPENMP
#include <omp.h>
#endif

#include "enkf_internal.h"
#include "clones.h"
#include "workspace.h"

/* The eigensolver and the analyses are also compiled for AVX2
 * (clones.h); the loops marked simd are element by element (no
 * reductions), so both variants give the same bits. */

#define MAX_THREADS 256
#define DEFAULT_FLOOR 1e-12
#define MAX_QL_ITER 60
/* up to this many members a thread analyses grid points in pairs (for
 * larger ensembles the rotations' vector work hides their latency) */
#define PAIR_MAX_N 64

/* A row or an observation with its sort keys: rows are sorted by position
 * (a, b) so that rows at the same place form one group with one local
 * analysis; observations by the coordinate whose difference bounds the
 * distance from below (key a), so the observations in reach of a point
 * lie in a contiguous range. */
typedef struct {
    double a, b;
    size_t i;
} entry;

typedef struct {
    size_t n, l, m, ii;
    int iter, inside, info; /* inside: within an iteration (ii its next rotation) */
    double g, p, sn, cs;
    double *lam, *e, *Q;
} ql_state;

/* What one thread owns: its matrices and its tallies (two of these when
 * it analyses grid points in pairs). */
typedef struct {
    double *A;    /* N x N: the ensemble-space matrix, then the transform
                   * (observation space: S S', then S' U) */
    double *Q;    /* N x N: its eigenvectors (observation space: U) */
    double *Z;    /* N x N: S' of the observation-space form, column by
                   * column (at most N - 1 columns) */
    double *lam, *e, *beta, *c, *t, *xp;
    double *kw;   /* N: weights g / r of the local observations held back */
    size_t *kidx; /* N: and their indices */
    size_t nloc;  /* local observations so far */
    int direct;   /* 1: they have gone into A (N or more of them) */
    int form;     /* the group's analysis: 0 none, 1 observation space,
                   * 2 ensemble space */
    double scale; /* of its eigenvalues (tridiag) */
    ql_state ql;  /* its QL iterations */
    size_t floored, skipped;
    size_t fail_group; /* SIZE_MAX: no failure */
    int fail_info;     /* 1 + eigenvalue that did not converge; 0: not finite */
} slice;

typedef struct {
    double *YbT;     /* N x m: column k holds the perturbations of obs k */
    double *d;       /* m innovations y - mean(HX) */
    entry *obs;      /* m observations sorted by key */
    entry *rows;     /* n rows sorted by position */
    entry *scratch;  /* max(n, m): merge buffer */
    size_t *gstart;  /* n + 1: first sorted row of each group */
    slice *sl;       /* one per thread */
    double *ssend, *srecv; /* a distributed analysis: the gather's parts */
    size_t *scount;        /* and its P counts */
} buffers;

/* Lay the buffers out in `base` (NULL: only measure). Returns the bytes
 * needed, or 0 if a size overflows. */
static size_t layout(size_t nthr, int P, size_t n, size_t N, size_t m, size_t share_rows,
                     unsigned char *base, buffers *b)
{
    /* every product below is checked once against this bound */
    const size_t big = (size_t)1 << 56;
    size_t off = 0, t, nm = n > m ? n : m;
    if (nthr < 1)
        nthr = 1;
    if (nthr > MAX_THREADS || N > ((size_t)1 << 24) || nm > big / 64 ||
        nm > big / 64 / (N > 0 ? N : 1) || N * N > big / 64 / MAX_THREADS)
        return 0;
    sl_ws_carve(base, &off, N * m * sizeof(double), (void **)&b->YbT);
    sl_ws_carve(base, &off, m * sizeof(double), (void **)&b->d);
    sl_ws_carve(base, &off, m * sizeof(entry), (void **)&b->obs);
    sl_ws_carve(base, &off, n * sizeof(entry), (void **)&b->rows);
    sl_ws_carve(base, &off, nm * sizeof(entry), (void **)&b->scratch);
    sl_ws_carve(base, &off, (n + 1) * sizeof(size_t), (void **)&b->gstart);
    if (N <= PAIR_MAX_N)
        nthr *= 2; /* two slices a thread */
    sl_ws_carve(base, &off, nthr * sizeof(slice), (void **)&b->sl);
    for (t = 0; t < nthr; t++) {
        double *p[10];
        size_t *ki, q;
        for (q = 0; q < 3; q++)
            sl_ws_carve(base, &off, N * N * sizeof(double), (void **)&p[q]);
        for (q = 3; q < 10; q++)
            sl_ws_carve(base, &off, N * sizeof(double), (void **)&p[q]);
        sl_ws_carve(base, &off, N * sizeof(size_t), (void **)&ki);
        if (base != NULL) {
            slice *s = &b->sl[t];
            s->A = p[0];
            s->Q = p[1];
            s->Z = p[2];
            s->lam = p[3];
            s->e = p[4];
            s->beta = p[5];
            s->c = p[6];
            s->t = p[7];
            s->xp = p[8];
            s->kw = p[9];
            s->kidx = ki;
        }
    }
    if (P > 1 &&
        !sl_enkfi_share_layout(base, &off, P, share_rows, N, &b->ssend, &b->srecv, &b->scount))
        return 0;
    /* a trailing cache line keeps the last slice apart from whatever
     * follows the workspace */
    return sl_ws_size(sl_ws_carve(base, &off, SL_WS_ALIGN, NULL));
}

/* The ranks a distributed analysis shares its grid points out to (1:
 * none). */
static int ranks_of(const sl_enkf_config *cfg)
{
    return cfg != NULL && sl_enkfi_split(cfg) ? cfg->ranks->size : 1;
}

/* 1 when each rank holds only its own rows (rows_local, split). */
static int local_of(const sl_enkf_config *cfg)
{
    return cfg != NULL && sl_enkfi_split(cfg) && cfg->rows_local;
}

size_t sl_letkf_threads(const sl_enkf_config *cfg, size_t groups, size_t N)
{
    const double work = (double)groups * (double)N * (double)N * (double)N;
    size_t nthr = cfg->threads > 0 ? (size_t)cfg->threads : 1;
    if (cfg->threads_auto && work < SL_LETKF_THREAD_WORK)
        nthr = 1;
    if (nthr > groups)
        nthr = groups > 0 ? groups : 1;
    return nthr;
}

size_t sl_letkf_workspace(const sl_enkf_config *cfg, size_t n, size_t N,
                          size_t m)
{
    buffers b;
    size_t nthr = cfg != NULL && cfg->threads > 0 ? (size_t)cfg->threads : 1;
    return layout(nthr, ranks_of(cfg), n, N, m, local_of(cfg) ? 0 : n, NULL, &b);
}

/* ------------------------------------------------------------ sorting */

/* Order of doubles with NaN after every number. */
static int cmp_num(double x, double y)
{
    if (isnan(x))
        return isnan(y) ? 0 : 1;
    if (isnan(y))
        return -1;
    return (x > y) - (x < y);
}

static int entry_less_eq(const entry *x, const entry *y)
{
    int c = cmp_num(x->a, y->a);
    if (c == 0)
        c = cmp_num(x->b, y->b);
    if (c == 0)
        c = (x->i > y->i) - (x->i < y->i);
    return c <= 0;
}

/* Bottom-up merge sort of e[0..len-1] with the buffer tmp (no allocation,
 * the same order on every run); an input already in order costs one pass. */
static void sort_entries(entry *e, entry *tmp, size_t len)
{
    size_t k, width;
    entry *src = e, *dst = tmp;
    for (k = 1; k < len && entry_less_eq(&e[k - 1], &e[k]); k++)
        ;
    if (k >= len)
        return;
    for (width = 1; width < len; width *= 2) {
        size_t lo;
        for (lo = 0; lo < len; lo += 2 * width) {
            size_t mid = lo + width < len ? lo + width : len;
            size_t hi = lo + 2 * width < len ? lo + 2 * width : len;
            size_t i = lo, j = mid, o = lo;
            while (i < mid && j < hi)
                dst[o++] = entry_less_eq(&src[i], &src[j]) ? src[i++] : src[j++];
            while (i < mid)
                dst[o++] = src[i++];
            while (j < hi)
                dst[o++] = src[j++];
        }
        {
            entry *sw = src;
            src = dst;
            dst = sw;
        }
    }
    if (src != e)
        memcpy(e, src, len * sizeof *e);
}

/* The n rows sorted by position into rows (scratch: n more entries),
 * and where each group of rows at one place starts (gstart, ngroup + 1
 * entries, the last n); returns ngroup. */
static size_t sort_rows(const sl_localization *loc, size_t n, entry *rows, entry *scratch,
                        size_t *gstart)
{
    size_t i, ngroup = 0;
    for (i = 0; i < n; i++) {
        double p0 = loc->state_pos[i];
        rows[i].a = p0;
        rows[i].b = isnan(p0) ? 0.0 : (loc->dim > 1 ? loc->state_pos[i + n] : 0.0);
        rows[i].i = i;
    }
    sort_entries(rows, scratch, n);
    for (i = 0; i < n; i++) {
        const entry *q = &rows[i];
        int same = 0;
        if (i > 0) {
            const entry *p = &rows[i - 1];
            same = (isnan(p->a) && isnan(q->a)) || (p->a == q->a && p->b == q->b);
        }
        if (!same)
            gstart[ngroup++] = i;
    }
    gstart[ngroup] = n;
    return ngroup;
}

size_t sl_letkf_order_work(size_t n)
{
    return n > SIZE_MAX / (2 * sizeof(entry)) ? 0 : 2 * n * sizeof(entry) + sizeof(entry);
}

size_t sl_letkf_order(const sl_localization *loc, size_t n, size_t *order, size_t *gstart,
                      void *work)
{
    entry *rows = work, *scratch = rows + n;
    size_t i, ngroup = sort_rows(loc, n, rows, scratch, gstart);
    for (i = 0; i < n; i++)
        order[i] = rows[i].i;
    return ngroup;
}

void sl_letkf_local_groups(const size_t *gstart, size_t ngroup, size_t n, int P, int r,
                           size_t *G0, size_t *G1)
{
    size_t g[2];
    int e;
    for (e = 0; e < 2; e++) {
        /* the first group that starts at or after row floor((r + e) n / P) */
        const size_t cut = sl_enkfi_first(n, P, r + e);
        size_t a = 0, z = ngroup;
        while (a < z) {
            size_t h = a + (z - a) / 2;
            if (gstart[h] < cut)
                a = h + 1;
            else
                z = h;
        }
        g[e] = a;
    }
    *G0 = g[0];
    *G1 = g[1];
}

size_t sl_enkf_letkf_rows_work(size_t n)
{
    const size_t sort = sl_letkf_order_work(n);
    if (sort == 0 || n > SIZE_MAX / 4 / sizeof(size_t) - 2)
        return 0;
    return sort + (2 * n + 2) * sizeof(size_t);
}

size_t sl_enkf_letkf_rows(const sl_enkf_config *cfg, size_t n, int rank, size_t *rows,
                          void *work)
{
    const int P = cfg != NULL && sl_enkfi_split(cfg) ? cfg->ranks->size : 1;
    size_t *order, *gstart, ngroup, G0, G1, i;
    if (cfg == NULL || cfg->loc == NULL || work == NULL || rank < 0 || rank >= P)
        return (size_t)-1;
    order = (size_t *)((unsigned char *)work + sl_letkf_order_work(n));
    gstart = order + n;
    ngroup = sl_letkf_order(cfg->loc, n, order, gstart, work);
    sl_letkf_local_groups(gstart, ngroup, n, P, rank, &G0, &G1);
    if (rows != NULL)
        for (i = gstart[G0]; i < gstart[G1]; i++)
            rows[i - gstart[G0]] = order[i];
    return gstart[G1] - gstart[G0];
}

size_t sl_enkf_group_max(const sl_localization *loc, size_t n, void *work)
{
    size_t *order, *gstart;
    if (loc == NULL || work == NULL || n == 0)
        return 0;
    order = (size_t *)((unsigned char *)work + sl_letkf_order_work(n));
    gstart = order + n;
    return sl_letkf_group_max(gstart, sl_letkf_order(loc, n, order, gstart, work));
}

size_t sl_letkf_group_max(const size_t *gstart, size_t ngroup)
{
    size_t g, most = 0;
    for (g = 0; g < ngroup; g++)
        if (gstart[g + 1] - gstart[g] > most)
            most = gstart[g + 1] - gstart[g];
    return most;
}

/* First index of the sorted obs whose key is >= lo. */
static size_t lower_bound(const entry *obs, size_t m, double lo)
{
    size_t a = 0, b = m;
    while (a < b) {
        size_t h = a + (b - a) / 2;
        if (obs[h].a < lo)
            a = h + 1;
        else
            b = h;
    }
    return a;
}

/* ------------------------------------------------------ eigensolver */

/* x'y with four partial sums, (s0 + s1) + (s2 + s3), s_k over the
 * elements k, k + 4, ... of the first multiple of four and the rest into
 * s0: the order is fixed here, so a vectorised loop (two or four lanes)
 * gives the same bits as a scalar one. */
#if defined(__GNUC__)
__attribute__((always_inline))
#endif
static inline double dot4(size_t n, const double *restrict x, const double *restrict y)
{
    double acc[4] = {0.0, 0.0, 0.0, 0.0};
    size_t i, k;
    for (i = 0; i + 4 <= n; i += 4)
#pragma omp simd
        for (k = 0; k < 4; k++)
            acc[k] += x[i + k] * y[i + k];
    for (; i < n; i++)
        acc[0] += x[i] * y[i];
    return (acc[0] + acc[1]) + (acc[2] + acc[3]);
}

/* The symmetric eigen-decomposition A = Q diag(lam) Q' (n x n, full
 * storage, column-major): Householder reduction to tridiagonal form, then
 * the implicit QL algorithm with Wilkinson's shift (Golub & Van Loan,
 * Matrix Computations, sections 5.1 and 8.3). It runs inside the calling
 * thread (no BLAS threads beneath the OpenMP ones) and gives the same
 * bits on every run. The two stages are apart so that the QL iterations
 * of two grid points can be interleaved: each Givens rotation there is a
 * chain of a square root and a division that the next one waits for,
 * and two independent chains run in the time of about one. */

/* Stage 1: A (destroyed) scaled by a power of two, reduced to the
 * tridiagonal matrix with diagonal lam and off-diagonal e (e[n - 1] = 0),
 * Q the product of the reflections; beta: n doubles of scratch. Returns
 * the scale that the eigenvalues are to be multiplied by. */
SL_CLONES
static double tridiag(size_t n, double *restrict A, double *restrict Q,
                      double *restrict lam, double *restrict e, double *restrict beta)
{
    size_t i, j, k;
    double amax = 0.0, scale = 1.0;

    /* scale by a power of two (exact) so that no square overflows */
    for (i = 0; i < n * n; i++)
        if (fabs(A[i]) > amax)
            amax = fabs(A[i]);
    if (amax > 0) {
        int ex;
        double inv;
        frexp(amax, &ex);
        scale = ldexp(1.0, ex);
        inv = ldexp(1.0, -ex);
        for (i = 0; i < n * n; i++)
            A[i] *= inv;
    }

    /* H_k = I - beta_k v v' zeroes column k below row k + 1; v is kept in
     * that column, with v_0 = 1 */
    for (k = 0; k + 2 < n; k++) {
        double *x = A + k * n + k + 1, *A22 = A + (k + 1) * n + (k + 1);
        double *p = lam; /* scratch until the diagonal is read out */
        double sigma = 0.0, x0 = x[0], mu, v0, b, pv;
        size_t L = n - k - 1;
        for (i = 1; i < L; i++)
            sigma += x[i] * x[i];
        if (sigma == 0.0) {
            beta[k] = 0.0;
            e[k] = x0;
            continue;
        }
        mu = sqrt(x0 * x0 + sigma);
        v0 = x0 <= 0 ? x0 - mu : -sigma / (x0 + mu);
        b = 2.0 * v0 * v0 / (sigma + v0 * v0);
        for (i = 1; i < L; i++)
            x[i] /= v0;
        x[0] = 1.0;
        e[k] = mu;
        beta[k] = b;
        /* A22 <- H A22 H = A22 - v w' - w v', p = b A22 v,
         * w = p - (b / 2)(p'v) v */
        for (i = 0; i < L; i++)
            p[i] = 0.0;
        for (j = 0; j < L; j++) {
            const double *col = A22 + j * n;
            double vj = x[j];
#pragma omp simd
            for (i = 0; i < L; i++)
                p[i] += col[i] * vj;
        }
        pv = 0.0;
        for (i = 0; i < L; i++) {
            p[i] *= b;
            pv += p[i] * x[i];
        }
        pv *= 0.5 * b;
        for (i = 0; i < L; i++)
            p[i] -= pv * x[i];
        for (j = 0; j < L; j++) {
            double *col = A22 + j * n, vj = x[j], wj = p[j];
#pragma omp simd
            for (i = 0; i < L; i++)
                col[i] -= x[i] * wj + p[i] * vj;
        }
    }
    for (i = 0; i < n; i++)
        lam[i] = A[i + i * n];
    if (n == 1) {
        e[0] = 0.0;
        Q[0] = 1.0;
        return scale;
    }
    e[n - 2] = A[(n - 1) + (n - 2) * n];
    e[n - 1] = 0.0;

    /* Q = H_0 H_1 ... H_{n-3}, applied from the last */
    memset(Q, 0, n * n * sizeof *Q);
    for (i = 0; i < n; i++)
        Q[i + i * n] = 1.0;
    for (k = n - 2; k-- > 0;) {
        const double *v = A + k * n + k + 1;
        size_t L = n - k - 1;
        double b = beta[k];
        if (b == 0.0)
            continue;
        for (j = k + 1; j < n; j++) {
            double *q = Q + j * n + k + 1, sd = b * dot4(L, v, q);
#pragma omp simd
            for (i = 0; i < L; i++)
                q[i] -= sd * v[i];
        }
    }

    return scale;
}

/* Stage 2: the implicit QL iterations on (lam, e), the rotations
 * accumulated into Q, one step at a time: a step finds the next block
 * (or deflates) or applies one rotation. */

static void ql_start(ql_state *q, size_t n, double *lam, double *e, double *Q)
{
    q->n = n;
    q->l = 0;
    q->m = q->ii = 0;
    q->iter = q->inside = q->info = 0;
    q->g = q->p = 0.0;
    q->sn = q->cs = 1.0;
    q->lam = lam;
    q->e = e;
    q->Q = Q;
}

/* One step; returns 0 when the iterations are over (q->info: 0, or 1 +
 * the index of an eigenvalue that did not converge). */
#if defined(__GNUC__)
__attribute__((always_inline))
#endif
static inline int ql_step(ql_state *restrict q)
{
    const size_t n = q->n, l = q->l;
    double *restrict lam = q->lam, *restrict e = q->e;
    if (!q->inside) {
        double g, r;
        size_t m;
        if (l >= n)
            return 0;
        for (m = l; m + 1 < n; m++)
            if (fabs(e[m]) <= DBL_EPSILON * (fabs(lam[m]) + fabs(lam[m + 1])))
                break;
        if (m == l) {
            q->l = l + 1;
            q->iter = 0;
            return 1;
        }
        if (++q->iter > MAX_QL_ITER) {
            q->info = (int)l + 1;
            return 0;
        }
        g = (lam[l + 1] - lam[l]) / (2.0 * e[l]);
        r = sqrt(g * g + 1.0);
        q->g = lam[m] - lam[l] + e[l] / (g + copysign(r, g));
        q->sn = q->cs = 1.0;
        q->p = 0.0;
        q->m = q->ii = m;
        q->inside = 1;
        return 1;
    } else {
        const size_t ii = --q->ii, m = q->m;
        double sn = q->sn, cs = q->cs, g = q->g, p = q->p;
        double f = sn * e[ii], bb = cs * e[ii], r;
        double *restrict z0 = q->Q + ii * n, *restrict z1 = z0 + n;
        size_t k;
        r = sqrt(f * f + g * g);
        e[ii + 1] = r;
        if (r == 0.0) {
            lam[ii + 1] -= p;
            e[m] = 0.0;
            q->inside = 0;
            return 1;
        }
        sn = f / r;
        cs = g / r;
        g = lam[ii + 1] - p;
        r = (lam[ii] - g) * sn + 2.0 * cs * bb;
        p = sn * r;
        lam[ii + 1] = g + p;
        g = cs * r - bb;
#pragma omp simd
        for (k = 0; k < n; k++) {
            double z = z1[k];
            z1[k] = sn * z0[k] + cs * z;
            z0[k] = cs * z0[k] - sn * z;
        }
        if (ii == l) {
            lam[l] -= p;
            e[l] = g;
            e[m] = 0.0;
            q->inside = 0;
            return 1;
        }
        q->sn = sn;
        q->cs = cs;
        q->g = g;
        q->p = p;
        return 1;
    }
}

/* The QL iterations of one problem, or of two (b not NULL) interleaved
 * step by step; each does exactly what it would alone. */
SL_CLONES
static void ql_run(ql_state *a, ql_state *b)
{
    /* on local copies, which the compiler can keep in registers */
    ql_state qa = *a, qb;
    int ra = 1, rb = b != NULL;
    if (b != NULL) {
        qb = *b;
        while (ra && rb) {
            ra = ql_step(&qa);
            rb = ql_step(&qb);
        }
        while (rb)
            rb = ql_step(&qb);
        *b = qb;
    }
    while (ra)
        ra = ql_step(&qa);
    *a = qa;
}

/* ---------------------------------------------------------- analysis */

typedef struct {
    size_t n, N, m;
    double *X;
    size_t xbase, xld; /* rows_local: X holds the sorted rows xbase ..
                        * xbase+xld-1 alone (leading dimension xld) */
    int local;
    const double *rdiag;
    const sl_localization *loc;
    const buffers *b;
    double floor_rel;
    double reach; /* half-width of the key window, or +Inf: scan every obs */
    const sl_geometry_type *geom;
} run_ctx;

/* Where sorted row r of the analysis lies in X, and X's leading
 * dimension. */
static inline size_t x_row(const run_ctx *cx, size_t r)
{
    return cx->local ? r - cx->xbase : cx->b->rows[r].i;
}

static inline size_t x_ld(const run_ctx *cx)
{
    return cx->local ? cx->xld : cx->n;
}

/* Add one observation with inverse error variance rinv and innovation dk
 * to the upper triangle of A and to c = C d. */
static void add_obs(size_t N, double *restrict A, double *restrict c,
                    const double *restrict yk, double rinv, double dk)
{
    size_t a, b;
    double rd = rinv * dk;
    for (b = 0; b < N; b++) {
        double s = rinv * yk[b];
        double *Ab = A + b * N;
#pragma omp simd
        for (a = 0; a <= b; a++)
            Ab[a] += s * yk[a];
        c[b] += rd * yk[b];
    }
}

/* Take local observation k with weight rinv = g / r_k: the first N - 1
 * are held back (an analysis with fewer observations than members works
 * in observation space); the N-th sends them all, in order, into A and
 * c, and every later one goes there at once. */
static void take_obs(const run_ctx *cx, slice *s, size_t k, double rinv)
{
    const size_t N = cx->N;
    const buffers *b = cx->b;
    size_t q;
    if (!s->direct && s->nloc + 1 < N) {
        s->kidx[s->nloc] = k;
        s->kw[s->nloc] = rinv;
        s->nloc++;
        return;
    }
    if (!s->direct) {
        memset(s->A, 0, N * N * sizeof *s->A);
        memset(s->c, 0, N * sizeof *s->c);
        for (q = 0; q < s->nloc; q++)
            add_obs(N, s->A, s->c, b->YbT + s->kidx[q] * N, s->kw[q], b->d[s->kidx[q]]);
        s->direct = 1;
    }
    add_obs(N, s->A, s->c, b->YbT + k * N, rinv, b->d[k]);
    s->nloc++;
}

/* Take the observations that reach pos among the sorted ones from j0 on
 * (up to the key key_hi if bounded). */
static void add_range(const run_ctx *cx, slice *s, const double *pos, size_t j0,
                      double key_hi, int bounded)
{
    const sl_localization *loc = cx->loc;
    const entry *obs = cx->b->obs;
    const size_t m = cx->m;
    size_t j;
    for (j = j0; j < m && (!bounded || obs[j].a <= key_hi); j++) {
        size_t k = obs[j].i;
        double op[2], dist, g;
        op[0] = loc->obs_pos[k];
        op[1] = loc->dim > 1 ? loc->obs_pos[k + m] : 0.0;
        dist = cx->geom->distance(loc->period_or_radius, pos, op);
        g = sl_gaspari_cohn(dist, loc->obs_c[k]);
        if (g > 0)
            take_obs(cx, s, k, g / cx->rdiag[k]);
    }
}

/* Record a failed analysis of group g (the first one counts). */
static void fail(slice *s, size_t g, int info)
{
    if (g < s->fail_group) {
        s->fail_group = g;
        s->fail_info = info;
    }
}

/* The analysis of a group in observation space, for p = s->nloc < N local
 * observations. With S = R_loc^{-1/2} Yb_loc (p x N, R_loc holding r / g),
 * d~ = R_loc^{-1/2} d and the eigen-decomposition S S' = U diag(mu) U'
 * (p x p), the singular value decomposition of S gives S'S = sum_e mu_e
 * v_e v_e' with the orthonormal v_e = S' u_e / sqrt(mu_e) (mu_e > 0), and
 * S'S vanishes on the complement of their span (Golub & Van Loan, Matrix
 * Computations, sections 2.4 and 8.6). Hence, with L_e = (N-1) + mu_e,
 *   [(N-1) I + S'S]^{-1/2} = (N-1)^{-1/2} (I - sum v_e v_e')
 *                            + sum L_e^{-1/2} v_e v_e',
 * and the symmetric square root of the ensemble-space analysis is
 *   W = (N-1)^{1/2} [(N-1) I + S'S]^{-1/2} = I + sum f_e v_e v_e',
 *   f_e = sqrt((N-1) / L_e) - 1 = -mu_e / (L_e + sqrt((N-1) L_e)),
 * (multiply by sqrt(L_e) + sqrt(N-1) above and below), so that
 *   W = I - B diag(h) B',  B = S' U (N x p),  h_e = 1 / (L_e + sqrt((N-1) L_e)):
 * no division by mu_e, and an e with mu_e = 0 adds nothing (its column
 * of B has length sqrt(mu_e)). The mean weights follow from
 * [(N-1) I + S'S]^{-1} S' = S' [(N-1) I + S S']^{-1} (the push-through
 * identity, ibid. section 2.1):
 *   w = S' U diag(1 / L) U' d~ = B diag(1 / L) U' d~.
 * Row i of the analysis is xbar_i + x'_i (W + w 1'), applied as
 * xbar_i + x'_i - ((x'_i B) diag(h)) B' + (x'_i w) without forming W.
 * The eigenvalues of (N-1) I + S'S are L_e and N - 1: the relative floor
 * of the ensemble-space form would act on none when floor * max(L) stays
 * below (N-1) / 2 (and, for floors below 1e-12, 1e-12 * max(L) too, so
 * that rounding in the N x N form cannot reach the floor either).
 * obs_prepare forms S S' and reduces it to tridiagonal form; obs_finish,
 * after the QL iterations, analyses the rows of group g and returns 0, or
 * 1 when the ensemble-space form must do it instead (the floor could act,
 * the eigensolver failed or something is not finite). */
SL_CLONES
static void obs_prepare(const run_ctx *cx, slice *s)
{
    const size_t N = cx->N, p = s->nloc;
    const buffers *b = cx->b;
    double *restrict G = s->A, *restrict U = s->Q, *restrict Z = s->Z;
    double *restrict dt = s->e;
    size_t a, e, f;

    /* S' column by column and d~ */
    for (e = 0; e < p; e++) {
        const double *yk = b->YbT + s->kidx[e] * N;
        double sw = sqrt(s->kw[e]);
        double *Ze = Z + e * N;
#pragma omp simd
        for (a = 0; a < N; a++)
            Ze[a] = sw * yk[a];
        dt[e] = sw * b->d[s->kidx[e]];
    }
    /* S S' (p x p) */
    for (f = 0; f < p; f++)
        for (e = 0; e <= f; e++)
            G[e + f * p] = G[f + e * p] = dot4(N, Z + e * N, Z + f * N);
    s->scale = tridiag(p, G, U, s->lam, s->t, s->beta);
    ql_start(&s->ql, p, s->lam, s->t, U);
}

/* The rest of obs_prepare once the QL iterations are over. */
SL_CLONES
static int obs_finish(const run_ctx *cx, slice *s, size_t g)
{
    const size_t N = cx->N, p = s->nloc;
    const buffers *b = cx->b;
    const size_t r0 = b->gstart[g], r1 = b->gstart[g + 1];
    double *restrict G = s->A, *restrict U = s->Q, *restrict Z = s->Z;
    double *restrict mu = s->lam, *restrict dt = s->e, *restrict h = s->beta;
    double *restrict w = s->c, *restrict t = s->t, *restrict xp = s->xp;
    double *X = cx->X, nm1 = (double)(N - 1), lmax, fl;
    const int formed = 2 * (r1 - r0) >= N;
    size_t a, e, f, j, r;

    if (s->ql.info != 0)
        return 1;
    for (e = 0; e < p; e++)
        mu[e] *= s->scale;
    lmax = 0.0;
    for (e = 0; e < p; e++) {
        if (!(mu[e] > -HUGE_VAL && mu[e] < HUGE_VAL))
            return 1;
        if (mu[e] > lmax)
            lmax = mu[e];
    }
    lmax += nm1;
    fl = cx->floor_rel > 1e-12 ? cx->floor_rel : 1e-12;
    if (!(fl * lmax < 0.5 * nm1))
        return 1;

    /* h, t = diag(1 / L) U' d~, then w = S' U t (U t into dt) */
    for (e = 0; e < p; e++) {
        double L = nm1 + (mu[e] > 0 ? mu[e] : 0.0);
        h[e] = 1.0 / (L + sqrt(nm1 * L));
        t[e] = dot4(p, U + e * p, dt) / L;
    }
    for (f = 0; f < p; f++)
        dt[f] = 0.0;
    for (e = 0; e < p; e++) {
        const double *Ue = U + e * p;
#pragma omp simd
        for (f = 0; f < p; f++)
            dt[f] += Ue[f] * t[e];
    }
    for (a = 0; a < N; a++)
        w[a] = 0.0;
    for (f = 0; f < p; f++) {
        const double *Zf = Z + f * N;
#pragma omp simd
        for (a = 0; a < N; a++)
            w[a] += Zf[a] * dt[f];
    }
    /* B = S' U into G (free once the eigenvectors are out) when the group
     * has rows enough to pay for it (N p^2 once against 2 p^2 a row);
     * otherwise G holds three p-vectors of each row's work */
    if (formed) {
        for (e = 0; e < p; e++) {
            const double *Ue = U + e * p;
            double *Be = G + e * N;
            for (a = 0; a < N; a++)
                Be[a] = 0.0;
            for (f = 0; f < p; f++) {
                const double *Zf = Z + f * N;
                double u = Ue[f];
#pragma omp simd
                for (a = 0; a < N; a++)
                    Be[a] += Zf[a] * u;
            }
        }
    }

    for (r = r0; r < r1; r++) {
        const size_t i = x_row(cx, r), ld = x_ld(cx);
        double xbar = 0.0, xw = 0.0;
        for (j = 0; j < N; j++)
            xbar += X[i + j * ld];
        xbar /= (double)N;
        for (j = 0; j < N; j++) {
            xp[j] = X[i + j * ld] - xbar;
            xw += xp[j] * w[j];
        }
        if (formed) {
            /* x' - ((x' B) diag(h)) B' */
            for (e = 0; e < p; e++)
                t[e] = dot4(N, xp, G + e * N) * h[e];
            for (e = 0; e < p; e++) {
                const double *Be = G + e * N;
#pragma omp simd
                for (a = 0; a < N; a++)
                    xp[a] -= t[e] * Be[a];
            }
        } else {
            /* the same as x' - S' (U (diag(h) (U' (S x')))) */
            double *v = G, *vt = G + p, *y = G + 2 * p;
            for (f = 0; f < p; f++)
                v[f] = dot4(N, xp, Z + f * N);
            for (e = 0; e < p; e++)
                vt[e] = dot4(p, U + e * p, v) * h[e];
            for (f = 0; f < p; f++)
                y[f] = 0.0;
            for (e = 0; e < p; e++) {
                const double *Ue = U + e * p;
#pragma omp simd
                for (f = 0; f < p; f++)
                    y[f] += Ue[f] * vt[e];
            }
            for (f = 0; f < p; f++) {
                const double *Zf = Z + f * N;
#pragma omp simd
                for (a = 0; a < N; a++)
                    xp[a] -= y[f] * Zf[a];
            }
        }
        for (j = 0; j < N; j++) {
            X[i + j * ld] = (xbar + xw) + xp[j];
            if (!isfinite(X[i + j * ld]))
                fail(s, g, 0);
        }
    }
    return 0;
}

/* The observations in reach of group g (rows at one place, or the rows
 * that are not localised), into s; sets s->form. */
static void gather(const run_ctx *cx, slice *s, size_t g)
{
    const size_t m = cx->m;
    const buffers *b = cx->b;
    const size_t r0 = b->gstart[g], r1 = b->gstart[g + 1];
    const entry *rep = &b->rows[r0];

    s->nloc = 0;
    s->direct = 0;
    if (isnan(rep->a)) {
        /* not localised: every observation, damped by param_factor */
        size_t k;
        for (k = 0; k < m; k++)
            take_obs(cx, s, k, cx->loc->param_factor / cx->rdiag[k]);
    } else {
        const sl_localization *loc = cx->loc;
        double pos[2], key, h = cx->reach;
        pos[0] = rep->a;
        pos[1] = rep->b;
        key = cx->geom->key(loc->period_or_radius, pos);
        if (!(h < HUGE_VAL)) {
            add_range(cx, s, pos, 0, 0.0, 0);
        } else if (cx->geom->key_periodic) {
            double L = loc->period_or_radius, x = key;
            if (x - h < 0) {
                add_range(cx, s, pos, lower_bound(b->obs, m, x - h + L), 0.0, 0);
                add_range(cx, s, pos, 0, x + h, 1);
            } else if (x + h >= L) {
                add_range(cx, s, pos, lower_bound(b->obs, m, x - h), 0.0, 0);
                add_range(cx, s, pos, 0, x + h - L, 1);
            } else {
                add_range(cx, s, pos, lower_bound(b->obs, m, x - h), x + h, 1);
            }
        } else {
            add_range(cx, s, pos, lower_bound(b->obs, m, key - h), key + h, 1);
        }
    }
    if (s->nloc == 0) {
        s->skipped += r1 - r0;
        s->form = 0;
    } else {
        s->form = s->direct ? 2 : 1;
    }
}

/* The ensemble-space form: Pa~ = [(N-1) I + C HX']^{-1} through
 * A = Q diag(lam) Q'. ens_prepare completes A (the held-back observations
 * first if they are still held back) and reduces it to tridiagonal form;
 * ens_finish, after the QL iterations, builds the transform once and
 * applies it to each row of group g. */
SL_CLONES
static void ens_prepare(const run_ctx *cx, slice *s)
{
    const size_t N = cx->N;
    const buffers *b = cx->b;
    double *A = s->A, nm1 = (double)(N - 1);
    size_t a, j;
    if (!s->direct) {
        size_t q;
        memset(A, 0, N * N * sizeof *A);
        memset(s->c, 0, N * sizeof *s->c);
        for (q = 0; q < s->nloc; q++)
            add_obs(N, A, s->c, b->YbT + s->kidx[q] * N, s->kw[q], b->d[s->kidx[q]]);
        s->direct = 1;
    }
    for (j = 0; j < N; j++) {
        A[j + j * N] += nm1;
        for (a = 0; a < j; a++)
            A[j + a * N] = A[a + j * N];
    }
    s->scale = tridiag(N, A, s->Q, s->lam, s->e, s->beta);
    ql_start(&s->ql, N, s->lam, s->e, s->Q);
}

SL_CLONES
static void ens_finish(const run_ctx *cx, slice *s, size_t g)
{
    const size_t N = cx->N;
    const buffers *b = cx->b;
    const size_t r0 = b->gstart[g], r1 = b->gstart[g + 1];
    double *A = s->A, *Q = s->Q, *lam = s->lam, *c = s->c, *t = s->t;
    double *xp = s->xp, *X = cx->X, lmax, fl, nm1 = (double)(N - 1);
    size_t a, e, j, r, nfl = 0;
    int info = s->ql.info;

    if (info == 0)
        for (e = 0; e < N; e++)
            lam[e] *= s->scale;
    lmax = 0.0;
    for (e = 0; e < N; e++) {
        if (!(lam[e] > -HUGE_VAL && lam[e] < HUGE_VAL))
            lmax = NAN;
        if (lam[e] > lmax)
            lmax = lam[e];
    }
    if (info != 0 || !(lmax > 0 && lmax < HUGE_VAL)) {
        fail(s, g, info);
        return;
    }
    fl = cx->floor_rel * lmax;
    for (e = 0; e < N; e++)
        if (lam[e] < fl) {
            lam[e] = fl;
            nfl++;
        }
    s->floored += nfl * (r1 - r0);

    /* w = Pa~ C d = Q diag(1/lam) Q' c, kept in c */
    for (e = 0; e < N; e++) {
        const double *q = Q + e * N;
        double acc = 0.0;
        for (a = 0; a < N; a++)
            acc += q[a] * c[a];
        t[e] = acc / lam[e];
    }
    memset(c, 0, N * sizeof *c);
    for (e = 0; e < N; e++) {
        const double *q = Q + e * N;
        for (a = 0; a < N; a++)
            c[a] += q[a] * t[e];
    }
    /* the transform T = w 1' + W, W = [(N-1) Pa~]^{1/2}
     * = Q diag(sqrt((N-1)/lam)) Q', in A */
    for (e = 0; e < N; e++)
        t[e] = sqrt(nm1 / lam[e]);
    for (j = 0; j < N; j++) {
        double *Tj = A + j * N;
        memcpy(Tj, c, N * sizeof *Tj);
        for (e = 0; e < N; e++) {
            const double *q = Q + e * N;
            double f = t[e] * q[j];
#pragma omp simd
            for (a = 0; a < N; a++)
                Tj[a] += f * q[a];
        }
    }

    /* row i of the analysis: xbar_i + X'_i T */
    for (r = r0; r < r1; r++) {
        const size_t i = x_row(cx, r), ld = x_ld(cx);
        double xbar = 0.0;
        for (j = 0; j < N; j++)
            xbar += X[i + j * ld];
        xbar /= (double)N;
        for (j = 0; j < N; j++)
            xp[j] = X[i + j * ld] - xbar;
        for (j = 0; j < N; j++) {
            const double *Tj = A + j * N;
            double acc = 0.0;
            for (a = 0; a < N; a++)
                acc += xp[a] * Tj[a];
            X[i + j * ld] = xbar + acc;
            if (!isfinite(X[i + j * ld]))
                fail(s, g, 0);
        }
    }
}

/* The local analyses of group g1 and, unless s2 is NULL, group g2, their
 * QL iterations interleaved; each group's arithmetic is the same whether
 * it is paired or not, and with whichever group. */
static void local_analysis(const run_ctx *cx, slice *s1, size_t g1, slice *s2, size_t g2)
{
    slice *sl[2];
    size_t gg[2], q, ns = s2 != NULL ? 2 : 1;
    ql_state *qs[2] = {NULL, NULL};
    int nq = 0;
    sl[0] = s1;
    sl[1] = s2;
    gg[0] = g1;
    gg[1] = g2;
    for (q = 0; q < ns; q++) {
        gather(cx, sl[q], gg[q]);
        if (sl[q]->form == 1)
            obs_prepare(cx, sl[q]);
        else if (sl[q]->form == 2)
            ens_prepare(cx, sl[q]);
        if (sl[q]->form != 0)
            qs[nq++] = &sl[q]->ql;
    }
    if (nq > 0)
        ql_run(qs[0], qs[1]);
    for (q = 0; q < ns; q++) {
        slice *s = sl[q];
        if (s->form == 1 && obs_finish(cx, s, gg[q]) != 0) {
            /* the ensemble-space form after all */
            s->form = 2;
            ens_prepare(cx, s);
            ql_run(&s->ql, NULL);
        }
        if (s->form == 2)
            ens_finish(cx, s, gg[q]);
    }
}

/* ---------------------------------------------------------------- run */

/* The rows of groups g0 .. g1-1, in the order of their positions. */
static size_t group_rows(const buffers *b, size_t g0, size_t g1)
{
    return b->gstart[g1] - b->gstart[g0];
}

/* After a rank's grid points (a distributed analysis): every rank's rows
 * gathered into X on every rank (with rows_local, none: each rank keeps
 * its own), the tallies summed and the first failed group (in the order
 * of positions) over all ranks; or the failure of a rank that stopped. */
static sl_status share_groups(const sl_enkf_config *cfg, buffers *b, size_t n, size_t N,
                              double *X, size_t ngroup, int stopped, size_t *floored,
                              size_t *skipped, size_t *fail_group, int *fail_info,
                              sl_error *err)
{
    const sl_enkf_ranks *rk = cfg->ranks;
    const int P = rk->size, local = cfg->rows_local;
    const size_t G0 = sl_enkfi_first(ngroup, P, rk->rank),
                 G1 = sl_enkfi_first(ngroup, P, rk->rank + 1);
    double *send = b->ssend;
    size_t i, j, at = 0, rows = local ? 0 : group_rows(b, G0, G1);
    sl_error gerr;
    sl_status st;
    int r, other;
    memset(send, 0, SL_ENKFI_HEAD * sizeof(double));
    send[0] = stopped ? SL_ENKFI_OTHER : SL_ENKFI_OK;
    send[1] = (double)*floored;
    send[2] = (double)*skipped;
    send[3] = *fail_group == SIZE_MAX ? -1.0 : (double)*fail_group;
    send[4] = (double)*fail_info;
    for (i = 0; i < rows; i++) {
        const size_t row = b->rows[b->gstart[G0] + i].i;
        for (j = 0; j < N; j++)
            send[SL_ENKFI_HEAD + i * N + j] = X[row + j * n];
    }
    for (r = 0; r < P; r++)
        b->scount[r] = local ? 0
                             : group_rows(b, sl_enkfi_first(ngroup, P, r),
                                          sl_enkfi_first(ngroup, P, r + 1));
    sl_error_clear(&gerr);
    st = sl_enkfi_gather(rk, N, send, b->srecv, b->scount, &gerr);
    if (stopped)
        return sl_fail(err, SL_EINTERRUPT, "interrupted", "the analysis was interrupted");
    if (st != SL_OK) {
        if (err != NULL)
            *err = gerr;
        return st;
    }
    if ((other = sl_enkfi_first_with(rk, b->srecv, b->scount, SL_ENKFI_OTHER)) >= 0)
        return sl_enkfi_rank_failed(rk, other, err);
    *floored = *skipped = 0;
    *fail_group = SIZE_MAX;
    *fail_info = 0;
    for (r = 0; r < P; r++) {
        const double *head = b->srecv + at, *part = head + SL_ENKFI_HEAD;
        const size_t first = b->gstart[sl_enkfi_first(ngroup, P, r)];
        const size_t nr = (b->scount[r] / sizeof(double) - SL_ENKFI_HEAD) / N;
        *floored += (size_t)head[1];
        *skipped += (size_t)head[2];
        if (head[3] >= 0 && (size_t)head[3] < *fail_group) {
            *fail_group = (size_t)head[3];
            *fail_info = (int)head[4];
        }
        if (r != rk->rank)
            for (i = 0; i < nr; i++) {
                const size_t row = b->rows[first + i].i;
                for (j = 0; j < N; j++)
                    X[row + j * n] = part[i * N + j];
            }
        at += b->scount[r] / sizeof(double);
    }
    return SL_OK;
}

/* A rank that holds its own rows alone (rows_local): the rows sorted and
 * grouped, this rank's groups G0 .. G1-1 (sl_letkf_local_groups), its
 * rows checked (finite; as many as cfg->rows_here; no group larger than
 * the localisation's group_max) and their largest magnitude; then the
 * ranks agree (one allgather of four numbers a rank): a rank whose rows
 * failed reports its own error, the others "rankfailed" naming the
 * lowest such rank, and *xmax is the largest magnitude over all rows. */
static sl_status local_rows(const sl_enkf_config *cfg, buffers *b, size_t n, size_t N,
                            const double *X, size_t *ngroup, size_t *G0, size_t *G1,
                            double *xmax, sl_error *err)
{
    const sl_enkf_ranks *rk = cfg->ranks;
    const int P = rk->size;
    const size_t gmax_allowed = cfg->loc->group_max;
    double mine[4], *all = b->srecv;
    size_t k, ld, at = SIZE_MAX;
    sl_status st;
    int r, first = -1, why = 0;
    *ngroup = sort_rows(cfg->loc, n, b->rows, b->scratch, b->gstart);
    sl_letkf_local_groups(b->gstart, *ngroup, n, P, rk->rank, G0, G1);
    ld = b->gstart[*G1] - b->gstart[*G0];
    *xmax = 0.0;
    if (ld != cfg->rows_here ||
        (gmax_allowed > 0 && sl_letkf_group_max(b->gstart, *ngroup) > gmax_allowed))
        why = 2;
    for (k = 0; k < ld * N && !why; k++) {
        if (!isfinite(X[k])) {
            at = k;
            why = 1;
        } else if (fabs(X[k]) > *xmax) {
            *xmax = fabs(X[k]);
        }
    }
    mine[0] = (double)why;
    mine[1] = *xmax;
    mine[2] = mine[3] = 0.0;
    for (r = 0; r < P; r++)
        b->scount[r] = sizeof mine;
    if ((st = rk->allgather(rk->ctx, mine, all, b->scount, err)) != SL_OK)
        return st;
    for (r = 0; r < P; r++) {
        if (all[4 * r] != 0 && first < 0)
            first = r;
        if (all[4 * r + 1] > *xmax)
            *xmax = all[4 * r + 1];
    }
    if (why == 1)
        return sl_fail(err, SL_EINVAL, "nonfinite", "state row %lu of member %lu is not finite",
                       (unsigned long)(b->rows[b->gstart[*G0] + at % ld].i + 1),
                       (unsigned long)(at / ld + 1));
    if (why == 2)
        return sl_fail(err, SL_EINVAL, "badlocalization",
                       "rank %d holds %lu rows of the analysis, not the %lu its caller gave "
                       "(or a place holds more rows than the localisation's group_max %lu)",
                       rk->rank, (unsigned long)ld, (unsigned long)cfg->rows_here,
                       (unsigned long)gmax_allowed);
    if (first >= 0)
        return sl_enkfi_rank_failed(rk, first, err);
    return SL_OK;
}

sl_status sl_letkf_run(const sl_enkf_config *cfg, size_t n, size_t N,
                       double *X, size_t m, const double *HX,
                       const double *y, const double *rdiag, void *work,
                       sl_enkf_info *info, sl_error *err)
{
    const sl_localization *loc;
    buffers b;
    run_ctx cx;
    size_t nthr, j, k, ngroup = 0, floored = 0, skipped = 0;
    const size_t spt = N <= PAIR_MAX_N ? 2 : 1; /* slices a thread */
    size_t fail_group = SIZE_MAX, G0 = 0, G1;
    int fail_info = 0, stopped = 0;
    const int split = cfg != NULL && sl_enkfi_split(cfg), local = local_of(cfg);
    double xmax = 0.0, s1 = 0.0, s2 = 0.0, cmax = 0.0, bound;
    sl_status st;

    if (cfg == NULL)
        return sl_fail(err, SL_EINVAL, "badconfig", "no configuration");
    if (cfg->threads < 1 || cfg->threads > MAX_THREADS)
        return sl_fail(err, SL_EINVAL, "badconfig", "threads must be 1 to %d, got %d",
                       MAX_THREADS, cfg->threads);
    if (!(cfg->eig_floor >= 0 && cfg->eig_floor < 1))
        return sl_fail(err, SL_EINVAL, "badconfig",
                       "the eigenvalue floor must be in [0, 1), got %g", cfg->eig_floor);
    if (N < 2 || m == 0)
        return sl_fail(err, SL_EINVAL, "badsize",
                       "the LETKF needs at least 2 members and 1 observation, got %lu and %lu",
                       (unsigned long)N, (unsigned long)m);
    nthr = (size_t)cfg->threads;
    if (layout(nthr, ranks_of(cfg), n, N, m, local ? 0 : n, NULL, &b) == 0)
        return sl_fail(err, SL_ENOMEM, "badsize", "the problem is too large");
    if (work == NULL || (n > 0 && X == NULL) || HX == NULL || y == NULL ||
        rdiag == NULL)
        return sl_fail(err, SL_EINVAL, "badconfig", "a buffer is missing");
    loc = cfg->loc;
    st = sl_localization_check(loc, n, m, err);
    if (st != SL_OK)
        return st;
    for (k = 0; k < m; k++) {
        if (!(rdiag[k] > 0 && rdiag[k] < HUGE_VAL))
            return sl_fail(err, SL_EINVAL, "notpd",
                           "the error variance of observation %lu must be positive and finite, got %g",
                           (unsigned long)(k + 1), rdiag[k]);
        if (!isfinite(y[k]))
            return sl_fail(err, SL_EINVAL, "nonfinite", "observation %lu is not finite",
                           (unsigned long)(k + 1));
    }
    for (k = 0; k < m * N; k++)
        if (!isfinite(HX[k]))
            return sl_fail(err, SL_EINVAL, "nonfinite",
                           "predicted observation %lu of member %lu is not finite",
                           (unsigned long)(k % m + 1), (unsigned long)(k / m + 1));
    for (k = 0; k < n * N && !local; k++) {
        if (!isfinite(X[k]))
            return sl_fail(err, SL_EINVAL, "nonfinite",
                           "state row %lu of member %lu is not finite",
                           (unsigned long)(k % n + 1), (unsigned long)(k / n + 1));
        if (fabs(X[k]) > xmax)
            xmax = fabs(X[k]);
    }
    layout(nthr, ranks_of(cfg), n, N, m, local ? 0 : n, (unsigned char *)work, &b);

    /* HX' (transposed, one column per observation) and the innovations,
     * once for every row */
    memset(b.d, 0, m * sizeof *b.d);
    for (j = 0; j < N; j++)
        for (k = 0; k < m; k++)
            b.d[k] += HX[k + j * m];
    for (k = 0; k < m; k++)
        b.d[k] /= (double)N;
    for (j = 0; j < N; j++)
        for (k = 0; k < m; k++)
            b.YbT[j + k * N] = HX[k + j * m] - b.d[k];
    for (k = 0; k < m; k++) {
        double ymax = 0.0;
        b.d[k] = y[k] - b.d[k];
        for (j = 0; j < N; j++)
            if (fabs(b.YbT[j + k * N]) > ymax)
                ymax = fabs(b.YbT[j + k * N]);
        s1 += ymax * ymax / rdiag[k];
        s2 += fabs(b.d[k]) * ymax / rdiag[k];
        if (loc->obs_c[k] > cmax)
            cmax = loc->obs_c[k];
    }
    /* a rank with its own rows alone: the rows grouped and checked here,
     * the largest magnitude over every rank's */
    if (local && (st = local_rows(cfg, &b, n, N, X, &ngroup, &G0, &G1, &xmax, err)) != SL_OK)
        return st;
    /* bounds of the entries of A and c and of the analysis: rejecting a
     * problem that could overflow here, before X is touched, keeps X whole
     * in all but pathological cases (those are still reported below) */
    bound = (double)N * ((double)N + s1) + s2 +
            xmax * (double)N * (2.0 + 2.0 * sqrt((double)N) * s2);
    if (!(bound < HUGE_VAL))
        return sl_fail(err, SL_ENUMERIC, "nonfinite",
                       "the local analyses would overflow (observation errors far smaller than the spread)");
    if (n == 0) {
        if (info != NULL) {
            info->floored = 0;
            info->local_skipped = 0;
        }
        return SL_OK;
    }

    /* observations sorted by the coordinate that bounds the distance */
    cx.geom = sl_geometry_get(loc->geometry);
    for (k = 0; k < m; k++) {
        double op[2];
        op[0] = loc->obs_pos[k];
        op[1] = loc->dim > 1 ? loc->obs_pos[k + m] : 0.0;
        b.obs[k].a = cx.geom->key(loc->period_or_radius, op);
        b.obs[k].b = 0.0;
        b.obs[k].i = k;
    }
    sort_entries(b.obs, b.scratch, m);
    /* half-width of the window of keys: Gaspari-Cohn vanishes from 2c; the
     * key difference is at most the distance (on the sphere the latitude
     * difference in degrees is at most distance / radius * 180 / pi) */
    cx.reach = cx.geom->reach(loc->period_or_radius, 2.0 * cmax * (1.0 + 1e-9));

    /* rows sorted by position; rows at one place share an analysis */
    if (!local) {
        ngroup = sort_rows(loc, n, b.rows, b.scratch, b.gstart);
        G1 = ngroup;
    }

    cx.n = n;
    cx.N = N;
    cx.m = m;
    cx.X = X;
    cx.local = local;
    cx.xbase = local ? b.gstart[G0] : 0;
    cx.xld = local ? b.gstart[G1] - b.gstart[G0] : n;
    cx.rdiag = rdiag;
    cx.loc = loc;
    cx.b = &b;
    cx.floor_rel = cfg->eig_floor > 0 ? cfg->eig_floor : DEFAULT_FLOOR;
    for (k = 0; k < spt * nthr; k++) {
        b.sl[k].floored = 0;
        b.sl[k].skipped = 0;
        b.sl[k].fail_group = SIZE_MAX;
        b.sl[k].fail_info = 0;
    }
    /* a distributed analysis: this rank's grid points, G0 .. G1-1 (with
     * rows of its own, those of local_rows) */
    if (split && !local) {
        G0 = sl_enkfi_first(ngroup, cfg->ranks->size, cfg->ranks->rank);
        G1 = sl_enkfi_first(ngroup, cfg->ranks->size, cfg->ranks->rank + 1);
    }
    nthr = sl_letkf_threads(cfg, G1 - G0, N);

    /* every group reads the shared buffers and writes only its own rows
     * of X, so the result is the same whichever thread (or rank) takes
     * it. The groups go in batches with the caller's poll between them
     * (outside any parallel region): a batch is about SL_ENKF_POLL_WORK
     * flops a thread, counting N^3 a group (its eigen-decomposition), and
     * at least one group a thread; groups that cost a good part of that
     * are handed out one at a time. */
    {
        const double wg = (double)N * (double)N * (double)N;
        const int dyn = wg > SL_ENKF_POLL_WORK / 4 ? 1 : 4;
        double per = floor(SL_ENKF_POLL_WORK / wg);
        size_t batch, g0;
        if (per < 1)
            per = 1;
        batch = per * (double)nthr < (double)(G1 - G0) ? (size_t)per * nthr : G1 - G0;
        if (batch < (size_t)dyn * nthr)
            batch = (size_t)dyn * nthr;
        for (g0 = G0; g0 < G1; g0 += batch) {
            const size_t g1 = G1 - g0 < batch ? G1 : g0 + batch;
            if (cfg->poll != NULL && cfg->poll(cfg->poll_ctx, cfg->poll_fraction)) {
                stopped = 1;
                break;
            }
#pragma omp parallel num_threads((int)nthr)
            {
                size_t tid = 0, g;
#ifdef _OPENMP
                tid = (size_t)omp_get_thread_num();
#endif
                if (spt == 2) {
                    size_t q;
                    /* in pairs: g0 + 2q and the group after it */
#pragma omp for schedule(dynamic, (dyn + 1) / 2)
                    for (q = 0; q < (g1 - g0 + 1) / 2; q++) {
                        g = g0 + 2 * q;
                        local_analysis(&cx, &b.sl[2 * tid], g,
                                       g + 1 < g1 ? &b.sl[2 * tid + 1] : NULL, g + 1);
                    }
                } else {
#pragma omp for schedule(dynamic, dyn)
                    for (g = g0; g < g1; g++)
                        local_analysis(&cx, &b.sl[tid], g, NULL, 0);
                }
            }
        }
    }

    for (k = 0; k < spt * nthr; k++) {
        floored += b.sl[k].floored;
        skipped += b.sl[k].skipped;
        if (b.sl[k].fail_group < fail_group) {
            fail_group = b.sl[k].fail_group;
            fail_info = b.sl[k].fail_info;
        }
    }
    if (split) {
        st = share_groups(cfg, &b, n, N, X, ngroup, stopped, &floored, &skipped, &fail_group,
                          &fail_info, err);
        if (st != SL_OK)
            return st;
    } else if (stopped) {
        return sl_fail(err, SL_EINTERRUPT, "interrupted", "the analysis was interrupted");
    }
    if (info != NULL) {
        info->floored = floored;
        info->local_skipped = skipped;
    }
    if (fail_group != SIZE_MAX) {
        size_t row = b.rows[b.gstart[fail_group]].i + 1;
        if (fail_info != 0)
            return sl_fail(err, SL_ENUMERIC, "noconvergence",
                           "the eigen-decomposition of the local analysis at state row %lu did not converge (eigenvalue %d)",
                           (unsigned long)row, fail_info);
        return sl_fail(err, SL_ENUMERIC, "nonfinite",
                       "the local analysis at state row %lu is not finite",
                       (unsigned long)row);
    }
    return SL_OK;
}
