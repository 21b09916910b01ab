/* enkf.c - ensemble Kalman analyses: stochastic EnKF, ETKF, serial EnSRF
 * and EAKF, with prior inflation before and relaxation after each of them
 * (the LETKF itself lives in letkf.c). */
#include "sluice/enkf.h"

#include <limits.h>
#include <math.h>
#include <string.h>

#include "enkf_internal.h"
#include "workspace.h"
#include "sluice/rng.h"

/* BLAS and LAPACK through their Fortran interface; the trailing size_t
 * arguments are the hidden lengths of the character arguments. */
extern void dgemm_(const char *ta, const char *tb, const int *m, const int *n,
                   const int *k, const double *alpha, const double *a,
                   const int *lda, const double *b, const int *ldb,
                   const double *beta, double *c, const int *ldc, size_t,
                   size_t);
extern void dgemv_(const char *t, const int *m, const int *n,
                   const double *alpha, const double *a, const int *lda,
                   const double *x, const int *incx, const double *beta,
                   double *y, const int *incy, size_t);
extern void dger_(const int *m, const int *n, const double *alpha,
                  const double *x, const int *incx, const double *y,
                  const int *incy, double *a, const int *lda);
extern void dsyrk_(const char *uplo, const char *t, const int *n, const int *k,
                   const double *alpha, const double *a, const int *lda,
                   const double *beta, double *c, const int *ldc, size_t,
                   size_t);
extern void dtrsm_(const char *side, const char *uplo, const char *t,
                   const char *diag, const int *m, const int *n,
                   const double *alpha, const double *a, const int *lda,
                   double *b, const int *ldb, size_t, size_t, size_t, size_t);
extern void dtrmm_(const char *side, const char *uplo, const char *t,
                   const char *diag, const int *m, const int *n,
                   const double *alpha, const double *a, const int *lda,
                   double *b, const int *ldb, size_t, size_t, size_t, size_t);
extern void dpotrf_(const char *uplo, const int *n, double *a, const int *lda,
                    int *info, size_t);
extern void dpotrs_(const char *uplo, const int *n, const int *nrhs,
                    const double *a, const int *lda, double *b, const int *ldb,
                    int *info, size_t);
extern void dsyev_(const char *jobz, const char *uplo, const int *n, double *a,
                   const int *lda, double *w, double *work, const int *lwork,
                   int *info, size_t, size_t);
extern void dsyevr_(const char *jobz, const char *range, const char *uplo,
                    const int *n, double *a, const int *lda, const double *vl,
                    const double *vu, const int *il, const int *iu,
                    const double *abstol, int *found, double *w, double *z,
                    const int *ldz, int *isuppz, double *work, const int *lwork,
                    int *iwork, const int *liwork, int *info, size_t, size_t,
                    size_t);

#define BLOCK_ROWS 64        /* state rows per pass of the row loops */
#define CHUNK 256            /* observations / members per packed slice */
#define LWORK_PER_MEMBER 66  /* dsyev's optimal work, (block 64 + 2) N */
/* dsyevr (relatively robust representations) for a symmetric eigenproblem
 * of order k >= MRRR_MIN with at least k observations: its optimal work,
 * (block 64 + 6) k doubles, then 2 k + 10 k ints (isuppz, iwork) in 6 k
 * doubles. Its speed against dsyev's on (N - 1) I + S^T S and S S^T with
 * m = 2N and N = 4m (Debian's OpenBLAS LAPACK, one session): 0.8 at
 * k = 10, 0.9 at 20-32, 1.1 at 64, 1.2-1.6 at 100, 1.3-1.9 at 150,
 * 1.9-2.7 at 300, 5.4 at 500; but 0.44-0.84 on (N - 1) I + S^T S with
 * m = 5 and N = 500-2000, whose eigenvalues cluster at N - 1 (which dsyev
 * deflates at once). */
#define MRRR_MIN 64
#define MRRR_WORK 70
#define MRRR_PER_ORDER (MRRR_WORK + 6)
#define DEFAULT_FLOOR 1e-12

static const int I1 = 1;
static const double D0 = 0.0, D1 = 1.0, DM1 = -1.0;

/* ------------------------------------------------------------ workspace */

/* Every buffer of one analysis, carved from the caller's workspace. */
typedef struct {
    double *ybar, *dv, *rd, *aux; /* m each */
    double *yp;    /* predicted-observation perturbations after inflation:
                    * m x N, or N x m (one column per observation) for the
                    * serial methods */
    double *sq;    /* m x m: Cholesky factor of R, innovation covariance */
    double *D;     /* m x N: perturbed innovations, then S^{-1} of them */
    double *A, *T; /* N x N: eigenvectors, transform */
    double *lam, *tv, *wv, *ev; /* N, N, N, lwork */
    double *blk, *blk2; /* BLOCK_ROWS x N */
    double *G;     /* BLOCK_ROWS x m */
    double *stat;  /* 5 BLOCK_ROWS */
    double *coef;  /* 3 m */
    double *xw, *hw, *xbar, *rowf; /* LETKF: n x N, m x N, n, N */
    double *dofw;  /* the innovation statistic's scratch */
    void *lw;      /* LETKF's own workspace */
    double *ssend, *srecv; /* a distributed analysis: the gather's parts */
    size_t *scount;        /* and its P counts */
    double *agree;         /* the LETKF with rows_local: P flags */
    size_t lo, hi;         /* the rows this rank updates */
    size_t xoff, ld;       /* X holds row xoff at its start, with leading
                            * dimension ld (0 and n; with rows_local, lo
                            * and hi - lo) */
    int in_rows;           /* 1: the analysis reached its rows */
    size_t b;
    int lwork;
    int mrrr;      /* 1: the eigenproblem goes to dsyevr (see MRRR_MIN) */
} buffers;

static size_t mul(size_t a, size_t b, int *bad)
{
    size_t r = 0;
    if (sl_size_mul(a, b, &r))
        *bad = 1;
    return r;
}

/* Doubles of scratch for the innovation statistic (see innov_dof_diag):
 * the k x k matrix of the smaller space, k = min(m, N), a packed slice of
 * k x CHUNK, and vectors. */
static size_t dof_doubles(size_t N, size_t m, int *bad)
{
    size_t k = m < N ? m : N, s = mul(k + CHUNK, k, bad), t = mul(2, m + N, bad);
    if (s > SIZE_MAX - t - CHUNK)
        *bad = 1;
    return s + t + CHUNK;
}

/* Rows per block of the ETKF's observation-space form, for kb doubles a
 * row: at least BLOCK_ROWS and about OBS_BLOCK doubles a block, so that
 * the few long products there are not cut into many short BLAS calls
 * (each of which the threaded BLAS splits and joins again). */
#define OBS_BLOCK ((size_t)1 << 20)
static size_t obs_block(size_t n, size_t kb)
{
    size_t b = (OBS_BLOCK + kb - 1) / kb;
    if (b < BLOCK_ROWS)
        b = BLOCK_ROWS;
    return n < b ? n : b;
}

/* Whether the ETKF works in observation space (see sl_etkf_form). */
static int etkf_obs_form(const sl_enkf_config *cfg, size_t N, size_t m)
{
    if (cfg->etkf_form == SL_ETKF_OBSERVATION)
        return 1;
    if (cfg->etkf_form == SL_ETKF_ENSEMBLE)
        return 0;
    return m < N;
}

/* What every method's layout below is given: where the layout stands
 * (base NULL: only measuring), the sizes, the rows per block b and the
 * products m N and b N, and a flag for a product that overflowed
 * (sl_ws_take marks its own overflow in off). */
typedef struct {
    unsigned char *base;
    size_t off, n, N, m, b, mN, bN;
    int r_full, obs_form, bad;
} carving;

/* An analysis method as a type object: its name, whether it takes a
 * correlated R (a full covariance that is not diagonal), what it does
 * with a localisation (0 takes none, 1 may take one, 2 needs one),
 * whether it has the ETKF's two forms (sl_etkf_form), the layout of its
 * own buffers, and the analysis. Indexed by sl_enkf_method. */
typedef struct {
    const char *name;
    int correlated_r;
    int localization;
    int two_forms;
    void (*layout)(carving *c, const sl_enkf_config *cfg, buffers *w);
    sl_status (*run)(const sl_enkf_config *cfg, size_t n, size_t N, double *X, size_t m,
                     const double *HX, const double *y, const double *R, int rdiag,
                     buffers *w, double *dof, size_t *floored, size_t *skipped,
                     sl_error *err);
} method_type;

static void layout_stochastic(carving *c, const sl_enkf_config *cfg, buffers *w)
{
    (void)cfg;
    w->yp = sl_ws_take(c->base, &c->off, c->mN, sizeof(double));
    w->sq = sl_ws_take(c->base, &c->off, mul(c->m, c->m, &c->bad), sizeof(double));
    w->D = sl_ws_take(c->base, &c->off, c->mN, sizeof(double));
    w->blk = sl_ws_take(c->base, &c->off, c->bN, sizeof(double));
    w->G = sl_ws_take(c->base, &c->off, mul(c->b, c->m, &c->bad), sizeof(double));
}

/* The eigensolver's work for a problem of order k with m observations:
 * dsyevr's (and its ints) from MRRR_MIN on when m >= k (the eigenvalues
 * then spread), else dsyev's. From order MRRR_MIN on the larger of the
 * two is reserved either way, so that the size never decreases when N
 * grows past m. */
static void eig_work(carving *c, buffers *w, size_t k, size_t m)
{
    size_t d;
    if (k < 1)
        k = 1;
    if (k > INT_MAX / MRRR_PER_ORDER) {
        c->bad = 1;
        return;
    }
    w->mrrr = k >= MRRR_MIN && m >= k;
    w->lwork = (int)((w->mrrr ? MRRR_WORK : LWORK_PER_MEMBER) * k);
    d = (k >= MRRR_MIN ? MRRR_PER_ORDER : LWORK_PER_MEMBER) * k;
    w->ev = sl_ws_take(c->base, &c->off, d, sizeof(double));
}

static void layout_etkf(carving *c, const sl_enkf_config *cfg, buffers *w)
{
    const size_t n = c->n, N = c->N, m = c->m;
    (void)cfg;
    w->yp = sl_ws_take(c->base, &c->off, c->mN, sizeof(double));
    w->sq = sl_ws_take(c->base, &c->off, c->r_full ? mul(m, m, &c->bad) : 0, sizeof(double));
    if (c->obs_form) {
        /* m x m eigenvectors, the (m + 1) x N rows of the transform and
         * the mean's weights, m eigenvalues, N weights, m scratch; the
         * row blocks (see obs_block) in blk */
        size_t kb = N + m + 3, bo = obs_block(n, kb), region, tn;
        eig_work(c, w, m, m);
        /* T also takes dsyevr's eigenvectors (m x m) before the transform */
        tn = mul(m + 1, N, &c->bad);
        if (w->mrrr && tn < mul(m, m, &c->bad))
            tn = mul(m, m, &c->bad);
        w->A = sl_ws_take(c->base, &c->off, mul(m, m, &c->bad), sizeof(double));
        w->T = sl_ws_take(c->base, &c->off, tn, sizeof(double));
        w->lam = sl_ws_take(c->base, &c->off, m, sizeof(double));
        w->tv = sl_ws_take(c->base, &c->off, N, sizeof(double));
        w->wv = sl_ws_take(c->base, &c->off, m, sizeof(double));
        /* bo kb doubles at most: min(n, max(BLOCK_ROWS, OBS_BLOCK / kb
         * rounded up)) kb <= min(n kb, max(BLOCK_ROWS kb, OBS_BLOCK +
         * kb)), which never decreases when n, N or m grow */
        region = mul(BLOCK_ROWS, kb, &c->bad);
        if (region < OBS_BLOCK + kb)
            region = OBS_BLOCK + kb;
        if (region > mul(n, kb, &c->bad))
            region = mul(n, kb, &c->bad);
        w->blk = sl_ws_take(c->base, &c->off, region, sizeof(double));
        w->b = bo;
    } else {
        w->A = sl_ws_take(c->base, &c->off, mul(N, N, &c->bad), sizeof(double));
        w->T = sl_ws_take(c->base, &c->off, mul(N, N, &c->bad), sizeof(double));
        w->lam = sl_ws_take(c->base, &c->off, N, sizeof(double));
        w->tv = sl_ws_take(c->base, &c->off, N, sizeof(double));
        w->wv = sl_ws_take(c->base, &c->off, N, sizeof(double));
        eig_work(c, w, N, m);
        w->blk = sl_ws_take(c->base, &c->off, c->bN, sizeof(double));
    }
}

static void layout_serial(carving *c, const sl_enkf_config *cfg, buffers *w)
{
    (void)cfg;
    w->yp = sl_ws_take(c->base, &c->off, c->mN, sizeof(double));
    w->coef = sl_ws_take(c->base, &c->off, mul(3, c->m, &c->bad), sizeof(double));
    w->blk = sl_ws_take(c->base, &c->off, c->bN, sizeof(double));
    w->blk2 = sl_ws_take(c->base, &c->off, c->bN, sizeof(double));
    w->dofw = sl_ws_take(c->base, &c->off, dof_doubles(c->N, c->m, &c->bad), sizeof(double));
}

static void layout_letkf(carving *c, const sl_enkf_config *cfg, buffers *w)
{
    size_t lb = sl_letkf_workspace(cfg, c->n, c->N, c->m);
    /* with rows of its own, a rank's copy holds those rows alone */
    const size_t rows = sl_enkfi_split(cfg) && cfg->rows_local
                            ? sl_enkf_local_rows_max(cfg, c->n, c->N, c->m > 0 ? c->m : 1)
                            : c->n;
    if (lb == 0)
        c->bad = 1;
    w->xw = sl_ws_take(c->base, &c->off, mul(rows, c->N, &c->bad), sizeof(double));
    w->hw = sl_ws_take(c->base, &c->off, c->mN, sizeof(double));
    w->xbar = sl_ws_take(c->base, &c->off, rows, sizeof(double));
    w->rowf = sl_ws_take(c->base, &c->off, c->N, sizeof(double));
    w->dofw = sl_ws_take(c->base, &c->off, dof_doubles(c->N, c->m, &c->bad), sizeof(double));
    w->lw = sl_ws_take(c->base, &c->off, lb, 1);
    if (sl_enkfi_split(cfg) && cfg->rows_local) {
        /* the ranks' agreement after relaxation */
        w->agree = sl_ws_take(c->base, &c->off, (size_t)cfg->ranks->size, sizeof(double));
        w->scount = sl_ws_take(c->base, &c->off, (size_t)cfg->ranks->size, sizeof(size_t));
    }
}

static const method_type *method_get(int method);

/* Lay the buffers out in base (NULL: only measure); the bytes needed, or 0
 * if a size overflows. obs_form: the ETKF's observation-space form. The
 * sizes depend on the method, n, N, m, r_full and the ETKF's form only
 * (not on localisation, inflation or relaxation) and never decrease when
 * n, N or m grow. */
static size_t layout(const sl_enkf_config *cfg, size_t n, size_t N, size_t m,
                     int r_full, int obs_form, unsigned char *base, buffers *w)
{
    const method_type *mt = method_get(cfg->method);
    carving c;
    memset(w, 0, sizeof *w);
    if (mt == NULL || n > INT_MAX || N > INT_MAX / LWORK_PER_MEMBER || m > INT_MAX)
        return 0;
    memset(&c, 0, sizeof c);
    c.base = base;
    c.n = n;
    c.N = N;
    c.m = m;
    c.b = n < BLOCK_ROWS ? n : BLOCK_ROWS;
    c.r_full = r_full;
    c.obs_form = obs_form;
    w->b = c.b;
    c.mN = mul(m, N, &c.bad);
    c.bN = mul(c.b, N, &c.bad);
    w->ybar = sl_ws_take(base, &c.off, m, sizeof(double));
    w->dv = sl_ws_take(base, &c.off, m, sizeof(double));
    w->rd = sl_ws_take(base, &c.off, m, sizeof(double));
    w->aux = sl_ws_take(base, &c.off, m, sizeof(double));
    w->stat = sl_ws_take(base, &c.off, 5 * c.b, sizeof(double));
    mt->layout(&c, cfg, w);
    /* the LETKF shares its rows out in its own workspace */
    if (sl_enkfi_split(cfg) && cfg->method != SL_ENKF_LETKF &&
        !sl_enkfi_share_layout(base, &c.off, cfg->ranks->size, cfg->rows_local ? 0 : n, N,
                               &w->ssend, &w->srecv, &w->scount))
        return 0;
    if (c.bad || c.off == SL_WS_OVERFLOW)
        return 0;
    return c.off > SL_WS_ALIGN ? c.off : SL_WS_ALIGN;
}

/* The bytes to ask for: the layout of the form the analysis will use;
 * for the ETKF's automatic choice, at least the layouts of the other form
 * at the switch (m = N - 1 and N = m), so that the size still never
 * decreases when m grows past N - 1 or N past m. One query for the
 * largest problem then serves every smaller analysis. */
static size_t workspace_bytes(const sl_enkf_config *cfg, size_t n, size_t N,
                              size_t m, int r_full)
{
    buffers w;
    size_t a, b;
    if (!method_get(cfg->method)->two_forms || cfg->etkf_form != SL_ETKF_AUTO)
        return layout(cfg, n, N, m, r_full, etkf_obs_form(cfg, N, m), NULL, &w);
    if (m < N) {
        a = layout(cfg, n, N, m, r_full, 1, NULL, &w);
        b = layout(cfg, n, m, m, r_full, 0, NULL, &w);
    } else {
        a = layout(cfg, n, N, m, r_full, 0, NULL, &w);
        b = N > 0 ? layout(cfg, n, N, N - 1, r_full, 1, NULL, &w) : a;
    }
    if (a == 0 || b == 0)
        return 0;
    return a > b ? a : b;
}

size_t sl_enkf_workspace(const sl_enkf_config *cfg, size_t n, size_t N,
                         size_t m, int r_full)
{
    if (cfg == NULL || method_get(cfg->method) == NULL ||
        cfg->etkf_form < SL_ETKF_AUTO || cfg->etkf_form > SL_ETKF_OBSERVATION)
        return 0;
    return workspace_bytes(cfg, n, N, m, r_full != 0);
}

/* ------------------------------------------------------------- checks */

static sl_status check_config(const sl_enkf_config *cfg, int r_full,
                              sl_error *err)
{
    if (cfg == NULL)
        return sl_fail(err, SL_EINVAL, "badconfig", "no configuration given");
    if (method_get(cfg->method) == NULL)
        return sl_fail(err, SL_EINVAL, "badconfig", "unknown method %d",
                       cfg->method);
    if (r_full != 0 && r_full != 1)
        return sl_fail(err, SL_EINVAL, "badconfig",
                       "r_full must be 0 (variances) or 1 (covariance), got %d",
                       r_full);
    if (!(cfg->inflation >= 1 && cfg->inflation < HUGE_VAL))
        return sl_fail(err, SL_EINVAL, "badconfig",
                       "the inflation must be a finite number >= 1, got %g",
                       cfg->inflation);
    if (!(cfg->rtpp >= 0 && cfg->rtpp <= 1))
        return sl_fail(err, SL_EINVAL, "badconfig",
                       "the relaxation to prior perturbations must lie in [0, 1], got %g",
                       cfg->rtpp);
    if (!(cfg->rtps >= 0 && cfg->rtps <= 1))
        return sl_fail(err, SL_EINVAL, "badconfig",
                       "the relaxation to prior spread must lie in [0, 1], got %g",
                       cfg->rtps);
    if (cfg->threads < 1)
        return sl_fail(err, SL_EINVAL, "badconfig",
                       "the number of threads must be >= 1, got %d", cfg->threads);
    if (cfg->etkf_form < SL_ETKF_AUTO || cfg->etkf_form > SL_ETKF_OBSERVATION)
        return sl_fail(err, SL_EINVAL, "badconfig",
                       "unknown form of the ETKF %d (0 automatic, 1 ensemble space, "
                       "2 observation space)", cfg->etkf_form);
    if (!(cfg->eig_floor >= 0 && cfg->eig_floor < 1))
        return sl_fail(err, SL_EINVAL, "badconfig",
                       "the eigenvalue floor must lie in [0, 1), got %g",
                       cfg->eig_floor);
    return SL_OK;
}

/* The method's needs (the LETKF needs positions, the ETKF takes none),
 * then the localisation itself (sl_localization_check). */
static sl_status check_localization(const sl_enkf_config *cfg, size_t n,
                                    size_t m, sl_error *err)
{
    const method_type *mt = method_get(cfg->method);
    if (cfg->loc == NULL) {
        if (mt->localization == 2)
            return sl_fail(err, SL_EINVAL, "badlocalization",
                           "the LETKF needs the positions of the states and observations");
        return SL_OK;
    }
    if (mt->localization == 0)
        return sl_fail(err, SL_EINVAL, "badlocalization",
                       "the ETKF is a global analysis and takes no localisation "
                       "(use the LETKF, or a serial or stochastic method)");
    return sl_localization_check(cfg->loc, n, m, err);
}

/* Index of the first non-finite entry of a[0..len-1], or len. */
static size_t first_nonfinite(const double *a, size_t len)
{
    size_t i;
    for (i = 0; i < len; i++)
        if (!isfinite(a[i]))
            return i;
    return len;
}

/* Whether the lower triangle of the k x k matrix A has a non-finite entry
 * (dsyrk leaves the other one unset). */
static int lower_nonfinite(const double *A, size_t k)
{
    size_t i, j;
    for (j = 0; j < k; j++)
        for (i = j; i < k; i++)
            if (!isfinite(A[i + j * k]))
                return 1;
    return 0;
}

/* X holds rows row0 .. row0+n-1 of the ensemble (all of them but on a
 * rank of a distributed analysis with rows_local). */
static sl_status check_finite(size_t n, size_t row0, size_t N, const double *X, size_t m,
                              const double *HX, const double *y,
                              const double *R, int r_full, sl_error *err)
{
    size_t at, len;
    if ((at = first_nonfinite(X, n * N)) < n * N)
        return sl_fail(err, SL_EINVAL, "nonfinite",
                       "X(%lu,%lu) is not finite", (unsigned long)(row0 + at % n + 1),
                       (unsigned long)(at / n + 1));
    if ((at = first_nonfinite(HX, m * N)) < m * N)
        return sl_fail(err, SL_EINVAL, "nonfinite",
                       "HX(%lu,%lu) is not finite", (unsigned long)(at % m + 1),
                       (unsigned long)(at / m + 1));
    if ((at = first_nonfinite(y, m)) < m)
        return sl_fail(err, SL_EINVAL, "nonfinite",
                       "observation %lu is not finite (remove missing values first)",
                       (unsigned long)(at + 1));
    len = r_full ? m * m : m;
    if ((at = first_nonfinite(R, len)) < len) {
        if (r_full)
            return sl_fail(err, SL_EINVAL, "nonfinite", "R(%lu,%lu) is not finite",
                           (unsigned long)(at % m + 1), (unsigned long)(at / m + 1));
        return sl_fail(err, SL_EINVAL, "nonfinite",
                       "error variance %lu is not finite", (unsigned long)(at + 1));
    }
    return SL_OK;
}

/* R: symmetric positive definite. On return *diag says whether it is
 * diagonal, with the variances in w->rd; otherwise w->sq holds its lower
 * Cholesky factor (LAPACK dpotrf). */
static sl_status check_R(const method_type *mt, size_t m, const double *R, int r_full,
                         buffers *w, int *diag, sl_error *err)
{
    size_t k, l;
    int im = (int)m, info = 0;
    *diag = 1;
    if (!r_full) {
        for (k = 0; k < m; k++) {
            if (!(R[k] > 0))
                return sl_fail(err, SL_ENUMERIC, "notpd",
                               "error variance %lu must be > 0, got %g",
                               (unsigned long)(k + 1), R[k]);
            w->rd[k] = R[k];
        }
        return SL_OK;
    }
    for (l = 0; l < m && *diag; l++)
        for (k = 0; k < m; k++)
            if (k != l && R[k + l * m] != 0) {
                *diag = 0;
                break;
            }
    if (!*diag && !mt->correlated_r)
        return sl_fail(err, SL_EINVAL, "nondiagonal",
                       "the %s needs uncorrelated observation errors (a diagonal R)",
                       mt->name);
    for (k = 0; k < m; k++) {
        double r = R[k + k * m];
        if (!(r > 0))
            return sl_fail(err, SL_ENUMERIC, "notpd",
                           "R is not positive definite: R(%lu,%lu) = %g",
                           (unsigned long)(k + 1), (unsigned long)(k + 1), r);
        w->rd[k] = r;
    }
    if (*diag)
        return SL_OK;
    for (l = 0; l < m; l++)
        for (k = l + 1; k < m; k++) {
            double a = R[k + l * m], b = R[l + k * m];
            if (fabs(a - b) > 1e-12 * sqrt(R[k + k * m] * R[l + l * m]))
                return sl_fail(err, SL_ENUMERIC, "notpd",
                               "R is not symmetric: R(%lu,%lu) = %.17g but R(%lu,%lu) = %.17g",
                               (unsigned long)(k + 1), (unsigned long)(l + 1), a,
                               (unsigned long)(l + 1), (unsigned long)(k + 1), b);
        }
    for (l = 0; l < m; l++)
        for (k = l; k < m; k++)
            w->sq[k + l * m] = R[k + l * m];
    dpotrf_("L", &im, w->sq, &im, &info, 1);
    if (info != 0)
        return sl_fail(err, SL_ENUMERIC, "notpd",
                       "R is not positive definite (the Cholesky factorisation "
                       "fails at row %d)", info);
    return SL_OK;
}

/* ---------------------------------------------------- shared pieces */

/* Means ybar of the rows of HX (m x N) and the perturbations after
 * inflation, infl (HX - ybar), into yp: m x N, or N x m if transposed. */
static void obs_perturbations(size_t m, size_t N, const double *HX, double infl,
                              double *ybar, double *yp, int transposed)
{
    size_t k, j;
    for (k = 0; k < m; k++)
        ybar[k] = 0.0;
    for (j = 0; j < N; j++)
        for (k = 0; k < m; k++)
            ybar[k] += HX[k + j * m];
    for (k = 0; k < m; k++)
        ybar[k] /= (double)N;
    if (transposed) {
        for (k = 0; k < m; k++)
            for (j = 0; j < N; j++)
                yp[j + k * N] = infl * (HX[k + j * m] - ybar[k]);
    } else {
        for (j = 0; j < N; j++)
            for (k = 0; k < m; k++)
                yp[k + j * m] = infl * (HX[k + j * m] - ybar[k]);
    }
}

/* Rows i0 .. i0+nb-1 of X: their means into xbar and their perturbations
 * after inflation, infl (X - xbar), into B (element (ii, j) at
 * B[ii * rs + j * cs]). */
static void block_prior(size_t n, size_t N, const double *X, size_t i0,
                        size_t nb, double infl, double *xbar, double *B,
                        size_t rs, size_t cs)
{
    size_t ii, j;
    for (ii = 0; ii < nb; ii++)
        xbar[ii] = 0.0;
    for (j = 0; j < N; j++)
        for (ii = 0; ii < nb; ii++)
            xbar[ii] += X[i0 + ii + j * n];
    for (ii = 0; ii < nb; ii++)
        xbar[ii] /= (double)N;
    for (j = 0; j < N; j++)
        for (ii = 0; ii < nb; ii++)
            B[ii * rs + j * cs] = infl * (X[i0 + ii + j * n] - xbar[ii]);
}

/* Relaxation of one analysed row xa (member j at xa[j * as]) toward the
 * prior perturbations xf (at xf[j * fs]), which are those after inflation:
 * first RTPP (Zhang et al. 2004), xa' <- (1 - a) xa' + a xf', then RTPS
 * (Whitaker & Hamill 2012), xa' <- xa' (1 + a (sf - sa) / sa), with the
 * spreads sf, sa of the row; perturbations are about the analysis mean,
 * which neither changes. RTPS leaves a row without analysis spread as it
 * is (it has no perturbations to scale). */
static void relax_row(const sl_enkf_config *cfg, size_t N, double *xa,
                      size_t as, const double *xf, size_t fs)
{
    size_t j;
    double mean = 0.0;
    for (j = 0; j < N; j++)
        mean += xa[j * as];
    mean /= (double)N;
    if (cfg->rtpp > 0) {
        const double a = cfg->rtpp;
        double fmean = 0.0;
        for (j = 0; j < N; j++)
            fmean += xf[j * fs];
        fmean /= (double)N;
        for (j = 0; j < N; j++)
            xa[j * as] = mean + (1.0 - a) * (xa[j * as] - mean) + a * (xf[j * fs] - fmean);
    }
    if (cfg->rtps > 0) {
        double sa = 0.0, sf = 0.0, fmean = 0.0, f;
        for (j = 0; j < N; j++)
            fmean += xf[j * fs];
        fmean /= (double)N;
        for (j = 0; j < N; j++) {
            double ea = xa[j * as] - mean, ef = xf[j * fs] - fmean;
            sa += ea * ea;
            sf += ef * ef;
        }
        if (sa > 0) {
            sa = sqrt(sa);
            f = 1.0 + cfg->rtps * (sqrt(sf) - sa) / sa;
            for (j = 0; j < N; j++)
                xa[j * as] = mean + f * (xa[j * as] - mean);
        }
    }
}

/* Gaspari-Cohn weight of observation k on state row i (rows whose first
 * coordinate is NaN: the fixed weight param_factor). */
static double state_weight(const sl_localization *L, size_t n, size_t i,
                           size_t m, size_t k)
{
    double a[2], b[2];
    size_t d;
    if (isnan(L->state_pos[i]))
        return L->param_factor;
    for (d = 0; d < L->dim; d++) {
        a[d] = L->state_pos[i + d * n];
        b[d] = L->obs_pos[k + d * m];
    }
    return sl_gaspari_cohn(sl_distance(L->geometry, L->period_or_radius, a, b),
                           L->obs_c[k]);
}

/* Gaspari-Cohn weight between observations k and l with half-width c. */
static double obs_weight(const sl_localization *L, size_t m, size_t k,
                         size_t l, double c)
{
    double a[2], b[2];
    size_t d;
    for (d = 0; d < L->dim; d++) {
        a[d] = L->obs_pos[k + d * m];
        b[d] = L->obs_pos[l + d * m];
    }
    return sl_gaspari_cohn(sl_distance(L->geometry, L->period_or_radius, a, b), c);
}

/* Stop the row loops on the first non-finite analysed value. */
static int rows_finite(size_t n, size_t N, const double *X, size_t i0,
                       size_t nb)
{
    size_t ii, j;
    for (j = 0; j < N; j++)
        for (ii = 0; ii < nb; ii++)
            if (!isfinite(X[i0 + ii + j * n]))
                return 0;
    return 1;
}

static sl_status fail_nonfinite(sl_error *err)
{
    return sl_fail(err, SL_ENUMERIC, "nonfinite",
                   "the analysis is not finite (the ensemble or the observations "
                   "are too far out of scale)");
}

/* The caller's poll (sl_enkf_config.poll) before a block of rows; a
 * non-zero answer stops the analysis. */
static sl_status poll_rows(const sl_enkf_config *cfg, sl_error *err)
{
    if (cfg->poll != NULL && cfg->poll(cfg->poll_ctx, cfg->poll_fraction))
        return sl_fail(err, SL_EINTERRUPT, "interrupted", "the analysis was interrupted");
    return SL_OK;
}

/* The same between the other parts of the analysis, which a distributed
 * analysis works out alike on every rank: there no rank may stop alone,
 * so only the polls before blocks of rows count. */
static sl_status poll_stop(const sl_enkf_config *cfg, sl_error *err)
{
    return sl_enkfi_split(cfg) ? SL_OK : poll_rows(cfg, err);
}

/* ------------------------------------------------ distributed analyses */

int sl_enkfi_split(const sl_enkf_config *cfg)
{
    return cfg->ranks != NULL && cfg->ranks->size > 1;
}

size_t sl_enkfi_first(size_t count, int P, int r)
{
    /* count r / P without overflow: count = a P + c */
    const size_t a = count / (size_t)P, c = count % (size_t)P;
    return a * (size_t)r + c * (size_t)r / (size_t)P;
}

int sl_enkfi_share_layout(unsigned char *base, size_t *off, int P, size_t n, size_t N,
                          double **send, double **recv, size_t **counts)
{
    size_t nN = 0, head = (size_t)P * SL_ENKFI_HEAD;
    if (P < 1 || sl_size_mul(n, N, &nN) || nN > SIZE_MAX / 16 - head)
        return 0;
    *send = sl_ws_take(base, off, SL_ENKFI_HEAD + nN, sizeof(double));
    *recv = sl_ws_take(base, off, head + nN, sizeof(double));
    *counts = sl_ws_take(base, off, (size_t)P, sizeof(size_t));
    return *off != SL_WS_OVERFLOW;
}

sl_status sl_enkfi_gather(const sl_enkf_ranks *rk, size_t N, const double *send, double *recv,
                          size_t *counts, sl_error *err)
{
    int r;
    for (r = 0; r < rk->size; r++)
        counts[r] = (SL_ENKFI_HEAD + counts[r] * N) * sizeof(double);
    return rk->allgather(rk->ctx, send, recv, counts, err);
}

int sl_enkfi_first_with(const sl_enkf_ranks *rk, const double *recv, const size_t *counts,
                        int code)
{
    size_t at = 0;
    int r;
    for (r = 0; r < rk->size; r++) {
        if (recv[at] == (double)code)
            return r;
        at += counts[r] / sizeof(double);
    }
    return -1;
}

sl_status sl_enkfi_rank_failed(const sl_enkf_ranks *rk, int rank, sl_error *err)
{
    return sl_fail(err, SL_EMODEL, "rankfailed",
                   "rank %d of %d stopped the analysis (its own error says why)", rank,
                   rk->size);
}

/* The rows [lo, hi) that rank r of P updates: whole blocks of b rows,
 * dealt in contiguous runs. */
static void rows_of(size_t n, size_t b, int P, int r, size_t *lo, size_t *hi)
{
    const size_t nblk = (n + b - 1) / b;
    const size_t q0 = sl_enkfi_first(nblk, P, r), q1 = sl_enkfi_first(nblk, P, r + 1);
    *lo = q0 * b < n ? q0 * b : n;
    *hi = q1 * b < n ? q1 * b : n;
}

/* Whether a global analysis shares its blocks of b rows out: ranks, and
 * two blocks at least (one block is cheaper done alike everywhere than
 * sent). */
static int rows_split(const sl_enkf_config *cfg, size_t n, size_t b)
{
    return sl_enkfi_split(cfg) && n > b;
}

/* Where a global analysis reaches its row loop: the rows this rank
 * updates, blocks of w->b. */
static void rows_begin(const sl_enkf_config *cfg, size_t n, buffers *w)
{
    w->in_rows = 1;
    w->lo = 0;
    w->hi = n;
    if (rows_split(cfg, n, w->b))
        rows_of(n, w->b, cfg->ranks->size, cfg->ranks->rank, &w->lo, &w->hi);
}

/* After the row loop of a split global analysis: every rank's rows
 * gathered into X on every rank, or the first failure. st (with err):
 * how this rank's rows went. With rows_local the ranks only agree on
 * that: nothing but the heads travels and X is left as it is. */
static sl_status share_rows(const sl_enkf_config *cfg, size_t n, size_t N, double *X,
                            buffers *w, sl_status st, sl_error *err)
{
    const sl_enkf_ranks *rk = cfg->ranks;
    const int local = cfg->rows_local;
    const int P = rk->size;
    double *send = w->ssend, *recv = w->srecv;
    size_t lo, hi, i, j, at = 0, rows;
    sl_error gerr;
    sl_status gst;
    int r, other;
    memset(send, 0, SL_ENKFI_HEAD * sizeof(double));
    send[0] = st == SL_OK ? SL_ENKFI_OK
                          : (st == SL_ENUMERIC ? SL_ENKFI_NONFINITE : SL_ENKFI_OTHER);
    rows = local ? 0 : w->hi - w->lo;
    for (j = 0; j < N; j++)
        for (i = 0; i < rows; i++)
            send[SL_ENKFI_HEAD + i + j * rows] = X[w->lo + i + j * n];
    for (r = 0; r < P; r++) {
        rows_of(n, w->b, P, r, &lo, &hi);
        w->scount[r] = local ? 0 : hi - lo;
    }
    sl_error_clear(&gerr);
    gst = sl_enkfi_gather(rk, N, send, recv, w->scount, &gerr);
    if (st != SL_OK)
        return st;
    if (gst != SL_OK) {
        if (err != NULL)
            *err = gerr;
        return gst;
    }
    if ((other = sl_enkfi_first_with(rk, recv, w->scount, SL_ENKFI_OTHER)) >= 0)
        return sl_enkfi_rank_failed(rk, other, err);
    if (sl_enkfi_first_with(rk, recv, w->scount, SL_ENKFI_NONFINITE) >= 0)
        return fail_nonfinite(err);
    for (r = 0; r < P && !local; r++) {
        const double *part = recv + at + SL_ENKFI_HEAD;
        rows_of(n, w->b, P, r, &lo, &hi);
        rows = hi - lo;
        if (r != rk->rank)
            for (j = 0; j < N; j++)
                for (i = 0; i < rows; i++)
                    X[lo + i + j * n] = part[i + j * rows];
        at += w->scount[r] / sizeof(double);
    }
    return SL_OK;
}

/* The same after `add` flops more of a long serial loop: it polls once
 * the flops since the last poll pass SL_ENKF_POLL_WORK. */
static sl_status poll_budget(const sl_enkf_config *cfg, double *since, double add,
                             sl_error *err)
{
    *since += add;
    if (*since < SL_ENKF_POLL_WORK)
        return SL_OK;
    *since = 0.0;
    return poll_stop(cfg, err);
}

/* ------------------------------------------------- innovation statistic */

/* d^T (HBH^T + R)^{-1} d for a diagonal R (variances rd), d = y - ybar and
 * HBH^T = Y'Y'^T / (N - 1) with the perturbations after inflation
 * Y' = infl (HX - ybar). Worked in the smaller space: for m <= N through the
 * Cholesky factor of the m x m matrix; otherwise in ensemble space by the
 * Sherman-Morrison-Woodbury identity (HBH^T + R)^{-1} d = R^{-1}(d - Y't),
 * t = [(N - 1) I + Y'^T R^{-1} Y']^{-1} Y'^T R^{-1} d, with Y' packed and
 * scaled by R^{-1/2} in slices of CHUNK observations. NaN if a
 * factorisation fails. */
static double innov_dof_diag(size_t N, size_t m, const double *HX,
                             const double *ybar, double infl, const double *rd,
                             const double *y, double *wk)
{
    size_t k, j, c0, cn;
    int info = 0, ic;
    double dof = 0.0;
    if (m <= N) {
        double *S = wk, *buf = S + m * m, *z = buf + m * CHUNK;
        const int im = (int)m;
        const double alpha = 1.0 / (double)(N - 1);
        for (c0 = 0; c0 < N; c0 += cn) {
            cn = N - c0 < CHUNK ? N - c0 : CHUNK;
            ic = (int)cn;
            for (j = 0; j < cn; j++)
                for (k = 0; k < m; k++)
                    buf[k + j * m] = infl * (HX[k + (c0 + j) * m] - ybar[k]);
            dsyrk_("L", "N", &im, &ic, &alpha, buf, &im, c0 == 0 ? &D0 : &D1, S,
                   &im, 1, 1);
        }
        for (k = 0; k < m; k++) {
            S[k + k * m] += rd[k];
            z[k] = y[k] - ybar[k];
        }
        dpotrf_("L", &im, S, &im, &info, 1);
        if (info != 0)
            return NAN;
        dpotrs_("L", &im, &I1, S, &im, z, &im, &info, 1);
        for (k = 0; k < m; k++)
            dof += (y[k] - ybar[k]) * z[k];
    } else {
        double *A = wk, *buf = A + N * N, *c = buf + N * CHUNK, *dt = c + N,
               *r = dt + m;
        const int iN = (int)N;
        for (k = 0; k < m; k++)
            dt[k] = (y[k] - ybar[k]) / sqrt(rd[k]);
        for (int pass = 0; pass < 2; pass++) {
            for (c0 = 0; c0 < m; c0 += cn) {
                cn = m - c0 < CHUNK ? m - c0 : CHUNK;
                ic = (int)cn;
                for (k = 0; k < cn; k++) {
                    const double s = infl / sqrt(rd[c0 + k]);
                    for (j = 0; j < N; j++)
                        buf[j + k * N] = s * (HX[c0 + k + j * m] - ybar[c0 + k]);
                }
                if (pass == 0) {
                    const double *beta = c0 == 0 ? &D0 : &D1;
                    dsyrk_("L", "N", &iN, &ic, &D1, buf, &iN, beta, A, &iN, 1, 1);
                    dgemv_("N", &iN, &ic, &D1, buf, &iN, dt + c0, &I1, beta, c, &I1, 1);
                } else {
                    memcpy(r, dt + c0, cn * sizeof(double));
                    dgemv_("T", &iN, &ic, &DM1, buf, &iN, c, &I1, &D1, r, &I1, 1);
                    for (k = 0; k < cn; k++)
                        dof += dt[c0 + k] * r[k];
                }
            }
            if (pass == 0) {
                for (j = 0; j < N; j++)
                    A[j + j * N] += (double)(N - 1);
                dpotrf_("L", &iN, A, &iN, &info, 1);
                if (info != 0)
                    return NAN;
                dpotrs_("L", &iN, &I1, A, &iN, c, &iN, &info, 1);
            }
        }
    }
    return dof;
}

/* ---------------------------------------------------------------- ETKF */

/* Eigenvalues (ascending, in lam) and eigenvectors (over A) of the
 * symmetric k x k matrix in A's lower triangle: dsyev, or dsyevr (see
 * MRRR_MIN) with the eigenvectors in Z (k x k scratch) copied over A.
 * The LAPACK info (0: done); *name the routine's name. */
static int sym_eigen(int k, double *A, double *Z, double *lam, buffers *w,
                     const char **name)
{
    int info = 0;
    if (w->mrrr) {
        const int liwork = 10 * k, il = 0, iu = 0;
        const double vl = 0.0, vu = 0.0, abstol = 0.0;
        int *isuppz = (int *)(void *)(w->ev + w->lwork), *iwork = isuppz + 2 * k, found = 0;
        *name = "dsyevr";
        dsyevr_("V", "A", "L", &k, A, &k, &vl, &vu, &il, &iu, &abstol, &found, lam, Z, &k,
                isuppz, w->ev, &w->lwork, iwork, &liwork, &info, 1, 1, 1);
        if (info == 0)
            memcpy(A, Z, (size_t)k * (size_t)k * sizeof(double));
        return info;
    }
    *name = "dsyev";
    dsyev_("V", "L", &k, A, &k, lam, w->ev, &w->lwork, &info, 1, 1);
    return info;
}

/* The ETKF of run_etkf worked out in observation space, for m < N: with
 * the whitened S (m x N) and d already in w->yp and w->dv, and the
 * eigen-decomposition S S^T = U diag(lam) U^T (sym_eigen, m x m; lam >= 0 after
 * rounding is clipped), the ensemble-space matrix (N - 1) I + S^T S has the
 * eigenvalues L_k = N - 1 + lam_k on the directions v_k = S^T u_k /
 * sqrt(lam_k) and N - 1 on the N - m others (floored as there). Then
 *  w = [(N - 1) I + S^T S]^{-1} S^T d = S^T q, q = U diag(1/L) U^T d
 *    (push-through identity S^T (c I + S S^T)^{-1} = (c I + S^T S)^{-1} S^T);
 *  W = c0 I + sum_k (g_k - c0) v_k v_k^T = c0 I - V^T V,
 *    g_k = sqrt((N - 1) / L_k), c0 = the g of the others,
 *    V = diag(sqrt(phi_k)) U^T S (m x N), phi_k = (c0 - g_k) / lam_k >= 0,
 *    which for c0 = 1 is 1 / (L_k + sqrt((N - 1) L_k)), free of cancellation
 *    and finite at lam_k = 0 (the v_k of a zero lam_k never enters);
 *  Xa = xbar + X'(w 1^T + W) = xbar + X' w + c0 X' - (X' V^T) V,
 * by blocks of rows (obs_block), two dgemm of b x N x (m + 1) each. Nothing
 * N x N is formed: O(m^3 + m^2 N + n N m) in all. */
static sl_status etkf_obs_space(const sl_enkf_config *cfg, size_t n, size_t N,
                                double *X, size_t m, buffers *w, double *dof,
                                size_t *floored, sl_error *err)
{
    const int iN = (int)N, im = (int)m;
    const double infl = cfg->inflation, nm1 = (double)(N - 1);
    const double frel = cfg->eig_floor > 0 ? cfg->eig_floor : DEFAULT_FLOOR;
    const size_t m1 = m + 1;
    const int im1 = (int)m1;
    double *S = w->yp, *d = w->dv, *U = w->A, *V = w->T, *lam = w->lam;
    double *wm = w->tv, *u = w->wv;
    double *B = w->blk, *G = B + w->b * N, *xbar = G + w->b * m1;
    double lmax, fl, Lo, c0, acc = 0.0;
    size_t i, j, k, i0;
    int info = 0;
    const char *solver = "dsyev";

    sl_status st;

    dsyrk_("L", "N", &im, &iN, &D1, S, &im, &D0, U, &im, 1, 1);
    if (lower_nonfinite(U, m) || first_nonfinite(d, m) < m)
        return fail_nonfinite(err);
    if ((st = poll_stop(cfg, err)) != SL_OK)
        return st;
    if ((info = sym_eigen(im, U, V, lam, w, &solver)) != 0)
        return sl_fail(err, SL_ENUMERIC, "noconvergence",
                       "the eigen-decomposition of the observation-space matrix failed "
                       "(LAPACK %s info %d)", solver, info);
    for (k = 0; k < m; k++)
        if (!(lam[k] > 0))
            lam[k] = 0.0; /* rounding below zero (NaN is caught next) */
    lmax = nm1 + lam[m - 1];
    if (!(lmax > 0 && lmax < HUGE_VAL))
        return fail_nonfinite(err);
    fl = frel * lmax;
    /* the eigenvalue N - 1 outside the span of S^T (N - m times in
     * ensemble space; with m >= N, where this form may be asked for, the
     * m - N smallest lam are no eigenvalues there and are not counted) */
    Lo = nm1;
    if (!(Lo >= fl)) {
        Lo = fl;
        *floored += N > m ? N - m : 0;
    }
    c0 = sqrt(nm1 / Lo);
    /* q = U diag(1/L) U^T d into u, then w = S^T q */
    dgemv_("T", &im, &im, &D1, U, &im, d, &I1, &D0, u, &I1, 1);
    for (k = 0; k < m; k++) {
        double L = nm1 + lam[k];
        if (!(L >= fl)) {
            L = fl;
            if (k + N >= m)
                (*floored)++;
        }
        u[k] /= L;
        /* from here lam[k] holds sqrt(phi_k) */
        if (Lo == nm1)
            lam[k] = sqrt(1.0 / (L + sqrt(nm1 * L)));
        else
            lam[k] = lam[k] > 0 ? sqrt((c0 - sqrt(nm1 / L)) / lam[k]) : 0.0;
    }
    memcpy(w->aux, u, m * sizeof(double));
    dgemv_("N", &im, &im, &D1, U, &im, w->aux, &I1, &D0, u, &I1, 1);
    dgemv_("T", &im, &iN, &D1, S, &im, u, &I1, &D0, wm, &I1, 1);
    /* d^T (HBH^T + R)^{-1} d = d~^T (d~ - S w), as in ensemble space */
    memcpy(w->aux, d, m * sizeof(double));
    dgemv_("N", &im, &iN, &DM1, S, &im, wm, &I1, &D1, w->aux, &I1, 1);
    for (k = 0; k < m; k++)
        acc += d[k] * w->aux[k];
    *dof = acc;
    /* V = diag(sqrt(phi)) U^T S in rows 0 .. m-1 of the (m + 1) x N
     * matrix, w^T in row m: one product per block gives X'V^T and X'w */
    dgemm_("T", "N", &im, &iN, &im, &D1, U, &im, S, &im, &D0, V, &im1, 1, 1);
    for (j = 0; j < N; j++) {
        for (k = 0; k < m; k++)
            V[k + j * m1] *= lam[k];
        V[m + j * m1] = wm[j];
    }
    if (first_nonfinite(V, m1 * N) < m1 * N)
        return fail_nonfinite(err);
    rows_begin(cfg, n, w);
    for (i0 = w->lo; i0 < w->hi; i0 += w->b) {
        const size_t nb = n - i0 < w->b ? n - i0 : w->b;
        const int ib = (int)nb, ild = (int)w->ld;
        double *Xr = X + (i0 - w->xoff); /* row i0, leading dimension w->ld */
        const double *xw = G + m * nb; /* X'w, the mean's increment */
        if ((st = poll_rows(cfg, err)) != SL_OK)
            return st;
        block_prior(w->ld, N, Xr, 0, nb, infl, xbar, B, 1, nb);
        dgemm_("N", "T", &ib, &im1, &iN, &D1, B, &ib, V, &im1, &D0, G, &ib, 1, 1);
        for (j = 0; j < N; j++)
            for (i = 0; i < nb; i++)
                Xr[i + j * w->ld] = c0 * B[i + j * nb];
        dgemm_("N", "N", &ib, &iN, &im, &DM1, G, &ib, V, &im1, &D1, Xr, &ild, 1, 1);
        for (j = 0; j < N; j++)
            for (i = 0; i < nb; i++)
                Xr[i + j * w->ld] += xbar[i] + xw[i];
        if (cfg->rtpp > 0 || cfg->rtps > 0)
            for (i = 0; i < nb; i++)
                relax_row(cfg, N, Xr + i, w->ld, B + i, nb);
        if (!rows_finite(w->ld, N, Xr, 0, nb))
            return fail_nonfinite(err);
    }
    return SL_OK;
}

/* The symmetric square-root ETKF (Hunt et al. 2007): with the
 * whitened perturbations S = R^{-1/2} HX' (rows scaled by 1/sqrt(r) for a
 * diagonal R, else L^{-1} HX' with R = L L^T) and d = R^{-1/2}(y - Hxbar),
 * Pa~ = [(N - 1) I + S^T S]^{-1} = Q diag(1/lam) Q^T (sym_eigen; eigenvalues
 * under eig_floor * max raised to it and counted), w = Pa~ S^T d,
 * W = [(N - 1) Pa~]^{1/2} = Q diag(sqrt((N - 1)/lam)) Q^T, exactly
 * symmetric (a dsyrk of Q diag(((N - 1)/lam)^{1/4}) mirrored), and
 * Xa = xbar + X' (w 1^T + W), done by blocks of rows; nothing n x n or
 * m x m is formed for a diagonal R. With fewer observations than members
 * (or when asked, cfg->etkf_form) the same analysis is worked out in
 * observation space instead (etkf_obs_space), with nothing N x N. */
static sl_status run_etkf(const sl_enkf_config *cfg, size_t n, size_t N,
                          double *X, size_t m, const double *HX,
                          const double *y, int rdiag, buffers *w, double *dof,
                          size_t *floored, sl_error *err)
{
    const int iN = (int)N, im = (int)m;
    const double infl = cfg->inflation;
    const double frel = cfg->eig_floor > 0 ? cfg->eig_floor : DEFAULT_FLOOR;
    double *yp = w->yp, *d = w->dv, *A = w->A, *T = w->T, *lam = w->lam;
    double *c = w->tv, *u = w->wv, *xbar = w->stat, *B = w->blk;
    double lmax, fl, acc = 0.0;
    size_t i, j, k, i0;
    int info = 0;
    const char *solver = "dsyev";
    sl_status st;

    obs_perturbations(m, N, HX, infl, w->ybar, yp, 0);
    for (k = 0; k < m; k++)
        d[k] = y[k] - w->ybar[k];
    if (rdiag) {
        for (k = 0; k < m; k++) {
            w->aux[k] = 1.0 / sqrt(w->rd[k]);
            d[k] *= w->aux[k];
        }
        for (j = 0; j < N; j++)
            for (k = 0; k < m; k++)
                yp[k + j * m] *= w->aux[k];
    } else {
        dtrsm_("L", "L", "N", "N", &im, &iN, &D1, w->sq, &im, yp, &im, 1, 1, 1, 1);
        dtrsm_("L", "L", "N", "N", &im, &I1, &D1, w->sq, &im, d, &im, 1, 1, 1, 1);
    }
    if (etkf_obs_form(cfg, N, m))
        return etkf_obs_space(cfg, n, N, X, m, w, dof, floored, err);
    dsyrk_("L", "T", &iN, &im, &D1, yp, &im, &D0, A, &iN, 1, 1);
    for (j = 0; j < N; j++)
        A[j + j * N] += (double)(N - 1);
    dgemv_("T", &im, &iN, &D1, yp, &im, d, &I1, &D0, c, &I1, 1);
    if (lower_nonfinite(A, N) || first_nonfinite(c, N) < N)
        return fail_nonfinite(err);
    if ((st = poll_stop(cfg, err)) != SL_OK)
        return st;
    if ((info = sym_eigen(iN, A, T, lam, w, &solver)) != 0)
        return sl_fail(err, SL_ENUMERIC, "noconvergence",
                       "the eigen-decomposition of the ensemble-space matrix failed "
                       "(LAPACK %s info %d)", solver, info);
    lmax = lam[N - 1];
    if (!(lmax > 0 && lmax < HUGE_VAL))
        return fail_nonfinite(err);
    fl = frel * lmax;
    for (i = 0; i < N; i++)
        if (!(lam[i] >= fl)) {
            lam[i] = fl;
            (*floored)++;
        }
    /* w = Q diag(1/lam) Q^T c, into c */
    dgemv_("T", &iN, &iN, &D1, A, &iN, c, &I1, &D0, u, &I1, 1);
    for (i = 0; i < N; i++)
        u[i] /= lam[i];
    dgemv_("N", &iN, &iN, &D1, A, &iN, u, &I1, &D0, c, &I1, 1);
    /* d^T (HBH^T + R)^{-1} d = d~^T (d~ - S w), the same identity */
    memcpy(w->aux, d, m * sizeof(double));
    dgemv_("N", &im, &iN, &DM1, yp, &im, c, &I1, &D1, w->aux, &I1, 1);
    for (k = 0; k < m; k++)
        acc += d[k] * w->aux[k];
    *dof = acc;
    for (i = 0; i < N; i++) {
        const double s = sqrt(sqrt((double)(N - 1) / lam[i]));
        for (j = 0; j < N; j++)
            A[j + i * N] *= s;
    }
    dsyrk_("L", "N", &iN, &iN, &D1, A, &iN, &D0, T, &iN, 1, 1);
    for (j = 0; j < N; j++)
        for (i = j + 1; i < N; i++)
            T[j + i * N] = T[i + j * N];
    for (j = 0; j < N; j++)
        for (i = 0; i < N; i++)
            T[i + j * N] += c[i];
    if (first_nonfinite(T, N * N) < N * N)
        return fail_nonfinite(err);
    rows_begin(cfg, n, w);
    for (i0 = w->lo; i0 < w->hi; i0 += w->b) {
        const size_t nb = n - i0 < w->b ? n - i0 : w->b;
        const int ib = (int)nb, ild = (int)w->ld;
        double *Xr = X + (i0 - w->xoff); /* row i0, leading dimension w->ld */
        if ((st = poll_rows(cfg, err)) != SL_OK)
            return st;
        block_prior(w->ld, N, Xr, 0, nb, infl, xbar, B, 1, nb);
        dgemm_("N", "N", &ib, &iN, &iN, &D1, B, &ib, T, &iN, &D0, Xr, &ild, 1, 1);
        for (j = 0; j < N; j++)
            for (i = 0; i < nb; i++)
                Xr[i + j * w->ld] += xbar[i];
        if (cfg->rtpp > 0 || cfg->rtps > 0)
            for (i = 0; i < nb; i++)
                relax_row(cfg, N, Xr + i, w->ld, B + i, nb);
        if (!rows_finite(w->ld, N, Xr, 0, nb))
            return fail_nonfinite(err);
    }
    return SL_OK;
}

/* ---------------------------------------------------- stochastic EnKF */

/* Perturbed observations (Burgers et al. 1998): member j sees
 * y_j = y + R^{1/2} eps_j with eps_j the first m normals of stream
 * (seed, j, cycle, SL_PURPOSE_ANALYSIS) and R^{1/2} the Cholesky factor;
 * Xa = Xf + K (Y - HXf) with K = P^f H^T (H P^f H^T + R)^{-1} from the
 * ensemble, P^f H^T = X'(HX')^T/(N - 1), HP^fH^T = HX'(HX')^T/(N - 1).
 * With localisation both are Schur products with Gaspari-Cohn weights:
 * state row i / observation k with half-width c_k (rows without position:
 * param_factor), observations k / l with the mean of their half-widths
 * (this module's rule; with one half-width for all it is the usual one). The m x m
 * system is solved once for all members (dpotrf / dpotrs), then every
 * block of rows costs two dgemm. */
static sl_status run_stochastic(const sl_enkf_config *cfg, size_t n, size_t N,
                                double *X, size_t m, const double *HX,
                                const double *y, const double *R, int rdiag,
                                buffers *w, double *dof, sl_error *err)
{
    const int iN = (int)N, im = (int)m;
    const double infl = cfg->inflation, scale = 1.0 / (double)(N - 1);
    const sl_localization *L = cfg->loc;
    double *yp = w->yp, *S = w->sq, *D = w->D, *B = w->blk, *G = w->G;
    double *xbar = w->stat, *touched = w->stat + w->b, acc = 0.0;
    size_t i, j, k, l, i0;
    int info = 0, pass;

    obs_perturbations(m, N, HX, infl, w->ybar, yp, 0);
    for (k = 0; k < m; k++)
        w->dv[k] = y[k] - w->ybar[k];
    sl_normals_members(cfg->seed, 0, N, cfg->cycle, SL_PURPOSE_ANALYSIS, m, D, m);
    if (rdiag) {
        for (k = 0; k < m; k++)
            w->aux[k] = sqrt(w->rd[k]);
        for (j = 0; j < N; j++)
            for (k = 0; k < m; k++)
                D[k + j * m] *= w->aux[k];
    } else {
        dtrmm_("L", "L", "N", "N", &im, &iN, &D1, S, &im, D, &im, 1, 1, 1, 1);
    }
    for (j = 0; j < N; j++)
        for (k = 0; k < m; k++)
            D[k + j * m] += w->dv[k] - yp[k + j * m];
    /* pass 0: the global innovation covariance (its statistic, and the
     * gain without localisation); pass 1: the localised one */
    for (pass = 0; pass < (L != NULL ? 2 : 1); pass++) {
        dsyrk_("L", "N", &im, &iN, &scale, yp, &im, &D0, S, &im, 1, 1);
        if (pass == 0 && lower_nonfinite(S, m))
            return fail_nonfinite(err);
        if (pass == 1)
            for (l = 0; l < m; l++)
                for (k = l + 1; k < m; k++)
                    S[k + l * m] *= obs_weight(L, m, k, l, 0.5 * (L->obs_c[k] + L->obs_c[l]));
        for (l = 0; l < m; l++) {
            if (rdiag)
                S[l + l * m] += w->rd[l];
            else
                for (k = l; k < m; k++)
                    S[k + l * m] += R[k + l * m];
        }
        dpotrf_("L", &im, S, &im, &info, 1);
        if (info != 0) {
            if (pass == 0 && L != NULL) {
                *dof = NAN;
                continue;
            }
            return sl_fail(err, SL_ENUMERIC, "notpd",
                           "the %sinnovation covariance HBH^T + R is not positive definite",
                           pass == 1 ? "localised " : "");
        }
        if (pass == 0) {
            memcpy(w->aux, w->dv, m * sizeof(double));
            dpotrs_("L", &im, &I1, S, &im, w->aux, &im, &info, 1);
            for (k = 0; k < m; k++)
                acc += w->dv[k] * w->aux[k];
            *dof = acc;
        }
    }
    dpotrs_("L", &im, &iN, S, &im, D, &im, &info, 1);
    if (first_nonfinite(D, m * N) < m * N)
        return fail_nonfinite(err);
    rows_begin(cfg, n, w);
    for (i0 = w->lo; i0 < w->hi; i0 += w->b) {
        const size_t nb = n - i0 < w->b ? n - i0 : w->b;
        const int ib = (int)nb, ild = (int)w->ld;
        double *Xr = X + (i0 - w->xoff); /* row i0, leading dimension w->ld */
        sl_status st = poll_rows(cfg, err);
        if (st != SL_OK)
            return st;
        block_prior(w->ld, N, Xr, 0, nb, infl, xbar, B, 1, nb);
        dgemm_("N", "T", &ib, &im, &iN, &scale, B, &ib, yp, &im, &D0, G, &ib, 1, 1);
        for (i = 0; i < nb; i++)
            touched[i] = 1.0;
        if (L != NULL) {
            for (i = 0; i < nb; i++) {
                touched[i] = 0.0;
                for (k = 0; k < m; k++) {
                    const double r = state_weight(L, n, i0 + i, m, k);
                    G[i + k * nb] *= r;
                    if (r > 0)
                        touched[i] = 1.0;
                }
            }
        }
        if (infl != 1.0)
            for (j = 0; j < N; j++)
                for (i = 0; i < nb; i++)
                    Xr[i + j * w->ld] = xbar[i] + B[i + j * nb];
        dgemm_("N", "N", &ib, &iN, &im, &D1, G, &ib, D, &im, &D1, Xr, &ild, 1, 1);
        if (cfg->rtpp > 0 || cfg->rtps > 0)
            for (i = 0; i < nb; i++)
                if (touched[i] > 0)
                    relax_row(cfg, N, Xr + i, w->ld, B + i, nb);
        if (!rows_finite(w->ld, N, Xr, 0, nb))
            return fail_nonfinite(err);
    }
    return SL_OK;
}

/* ------------------------------------------------------ serial filters */

static double dot(const double *a, const double *b, size_t N)
{
    size_t j;
    double s = 0.0;
    for (j = 0; j < N; j++)
        s += a[j] * b[j];
    return s;
}

/* The serial filters, one observation at a time (R diagonal). For
 * observation k with predicted perturbations y'_k (after the observations
 * before it), variance s = y'_k . y'_k / (N - 1), innovation
 * d = y_k - ybar_k and error variance r:
 *  EnSRF (Whitaker & Hamill 2002): K = rho cov(x, y_k) / (s + r),
 *    mean += K d, x' -= alpha K y'_k with alpha = 1 / (1 + sqrt(r / (s + r)));
 *  EAKF (Anderson 2001): the observation's members are adjusted first,
 *    posterior variance s_a = (1/s + 1/r)^{-1}, mean shift
 *    delta = s_a (ybar / s + y / r) - ybar (evaluated as s d / (s + r)),
 *    spread shrunk by beta = sqrt(s_a / s): increments
 *    dy_j = delta + (beta - 1) y'_kj, with beta - 1 evaluated as
 *    -(s / (s + r)) / (1 + beta); each state member then moves by the
 *    regression b dy_j, b = rho cov(x, y_k) / s (nothing moves if s = 0),
 *    applied as its mean part b delta and perturbation part
 *    b (beta - 1) y'_k.
 * Both are kept as (g, h, 1/s): mean += b g, x' += b h y'_k with b the
 * weighted covariance (EnSRF) or regression coefficient (EAKF). The
 * remaining predicted observations are updated alike, with weights
 * between observations of half-width c_k. A state row's updates depend
 * only on the row itself and on the observation quantities, so the
 * observations are run first through the predicted observations alone
 * (each y'_k stays as it was when k was assimilated), then every block of
 * rows takes its m updates in turn (a dgemv and a rank-1 dger each): the
 * arithmetic of sweeping the whole state once per observation, in a
 * single pass over X. */
static sl_status run_serial(const sl_enkf_config *cfg, size_t n, size_t N,
                            double *X, size_t m, const double *HX,
                            const double *y, buffers *w, double *dof,
                            sl_error *err)
{
    const int eakf = cfg->method == SL_ENKF_EAKF, iN = (int)N;
    const double infl = cfg->inflation, scale = 1.0 / (double)(N - 1);
    const sl_localization *L = cfg->loc;
    double *yt = w->yp, *ybar = w->ybar, *rd = w->rd, *v = w->aux, *u = w->dv;
    double *g = w->coef, *h = w->coef + m, *inv_s = w->coef + 2 * m;
    double *xbar = w->stat, *flag = xbar + w->b, *rho = flag + w->b,
           *bv = rho + w->b, *bu = bv + w->b, acc = 0.0, since = 0.0;
    size_t i, j, k, l, i0;
    sl_status st;

    obs_perturbations(m, N, HX, infl, ybar, yt, 1);
    if (L != NULL)
        *dof = innov_dof_diag(N, m, HX, ybar, infl, rd, y, w->dofw);
    for (k = 0; k < m; k++) {
        const double *yk = yt + k * N;
        const double s = dot(yk, yk, N) * scale, d = y[k] - ybar[k];
        const double sr = s + rd[k], beta = sqrt(rd[k] / sr);
        const size_t rest = m - k - 1;
        const int ir = (int)rest;
        acc += d * d / sr;
        if (!eakf) {
            g[k] = d / sr;
            h[k] = -1.0 / (sr * (1.0 + beta));
            inv_s[k] = 1.0;
        } else if (s > 0) {
            g[k] = s * d / sr;
            h[k] = -(s / sr) / (1.0 + beta);
            inv_s[k] = 1.0 / s;
        } else {
            g[k] = h[k] = inv_s[k] = 0.0;
        }
        if (!(isfinite(s) && isfinite(g[k]) && isfinite(h[k]) && isfinite(inv_s[k])))
            return fail_nonfinite(err);
        if ((st = poll_budget(cfg, &since, 4.0 * (double)N * (double)(rest + 1), err)) != SL_OK)
            return st;
        if (inv_s[k] == 0 || rest == 0)
            continue;
        /* the remaining predicted observations, columns k+1 .. m-1 */
        dgemv_("T", &iN, &ir, &scale, yt + (k + 1) * N, &iN, yk, &I1, &D0, v, &I1, 1);
        for (l = 0; l < rest; l++) {
            const double r = L != NULL ? obs_weight(L, m, k + 1 + l, k, L->obs_c[k]) : 1.0;
            const double b = r * v[l] * inv_s[k];
            ybar[k + 1 + l] += b * g[k];
            u[l] = b * h[k];
        }
        dger_(&iN, &ir, &D1, yk, &I1, u, &I1, yt + (k + 1) * N, &iN);
    }
    if (L == NULL)
        *dof = acc;
    if (first_nonfinite(ybar, m) < m || first_nonfinite(yt, m * N) < m * N)
        return fail_nonfinite(err);
    rows_begin(cfg, n, w);
    for (i0 = w->lo; i0 < w->hi; i0 += w->b) {
        const size_t nb = n - i0 < w->b ? n - i0 : w->b;
        const int ib = (int)nb;
        double *Xr = X + (i0 - w->xoff); /* row i0, leading dimension w->ld */
        double *B = w->blk, *C = w->blk2;
        if ((st = poll_rows(cfg, err)) != SL_OK)
            return st;
        /* prior perturbations: row i0 + i in column i of B (N x nb) */
        block_prior(w->ld, N, Xr, 0, nb, infl, xbar, B, N, 1);
        memcpy(C, B, nb * N * sizeof(double));
        for (i = 0; i < nb; i++)
            flag[i] = 0.0;
        for (k = 0; k < m; k++) {
            const double *yk = yt + k * N;
            int any = 0;
            if (inv_s[k] == 0)
                continue;
            for (i = 0; i < nb; i++) {
                rho[i] = L != NULL ? state_weight(L, n, i0 + i, m, k) : 1.0;
                any |= rho[i] > 0;
            }
            if (!any)
                continue;
            dgemv_("T", &iN, &ib, &scale, C, &iN, yk, &I1, &D0, bv, &I1, 1);
            for (i = 0; i < nb; i++) {
                const double b = rho[i] * bv[i] * inv_s[k];
                xbar[i] += b * g[k];
                bu[i] = b * h[k];
                if (rho[i] > 0)
                    flag[i] = 1.0;
            }
            dger_(&iN, &ib, &D1, yk, &I1, bu, &I1, C, &iN);
        }
        for (i = 0; i < nb; i++) {
            double *xa = C + i * N;
            for (j = 0; j < N; j++)
                xa[j] += xbar[i];
            if (flag[i] > 0 && (cfg->rtpp > 0 || cfg->rtps > 0))
                relax_row(cfg, N, xa, 1, B + i * N, 1);
        }
        /* rows no observation reaches keep their (inflated) prior: with
         * no inflation, exactly the values they came with */
        for (j = 0; j < N; j++)
            for (i = 0; i < nb; i++)
                if (flag[i] > 0 || infl != 1.0)
                    Xr[i + j * w->ld] = C[i * N + j];
        if (!rows_finite(w->ld, N, Xr, 0, nb))
            return fail_nonfinite(err);
    }
    return SL_OK;
}

/* --------------------------------------------------------------- LETKF */

/* Inflation into a copy of the ensemble, the local analyses of letkf.c on
 * the copy, relaxation toward the prior perturbations after inflation;
 * X is written only once everything succeeded. */
static sl_status run_letkf(const sl_enkf_config *cfg, size_t n, size_t N,
                           double *X, size_t m, const double *HX,
                           const double *y, buffers *w, double *dof,
                           size_t *floored, size_t *skipped, sl_error *err)
{
    const double infl = cfg->inflation;
    const double *hx = HX;
    /* the rows X holds: all n, or this rank's alone (rows_local), which
     * fit the room the workspace keeps unless the localisation's
     * group_max or rows_here is wrong: then nothing is copied, and
     * sl_letkf_run refuses the call on every rank */
    const int local = sl_enkfi_split(cfg) && cfg->rows_local;
    const size_t nx = local ? cfg->rows_here : n;
    const int fits = !local || nx <= sl_enkf_local_rows_max(cfg, n, N, m);
    double *xw = w->xw, *xbar = w->xbar;
    sl_enkf_info li;
    sl_status st;
    size_t i, j, k;

    for (i = 0; i < nx && fits; i++)
        xbar[i] = 0.0;
    for (j = 0; j < N && fits; j++)
        for (i = 0; i < nx; i++)
            xbar[i] += X[i + j * nx];
    for (i = 0; i < nx && fits; i++)
        xbar[i] /= (double)N;
    if (!fits) {
        /* refused below */
    } else if (infl == 1.0) {
        memcpy(xw, X, nx * N * sizeof(double));
    } else {
        for (j = 0; j < N; j++)
            for (i = 0; i < nx; i++)
                xw[i + j * nx] = xbar[i] + infl * (X[i + j * nx] - xbar[i]);
    }
    obs_perturbations(m, N, HX, infl, w->ybar, w->hw, 0);
    if (infl != 1.0) {
        for (j = 0; j < N; j++)
            for (k = 0; k < m; k++)
                w->hw[k + j * m] += w->ybar[k];
        hx = w->hw;
    }
    *dof = innov_dof_diag(N, m, HX, w->ybar, infl, w->rd, y, w->dofw);
    li.floored = 0;
    li.local_skipped = 0;
    li.innov_dof = NAN;
    st = sl_letkf_run(cfg, n, N, xw, m, hx, y, w->rd, w->lw, &li, err);
    if (st != SL_OK)
        return st;
    *floored = li.floored;
    *skipped = li.local_skipped;
    if (cfg->rtpp > 0 || cfg->rtps > 0)
        for (i = 0; i < nx; i++) {
            for (j = 0; j < N; j++)
                w->rowf[j] = infl * (X[i + j * nx] - xbar[i]);
            relax_row(cfg, N, xw + i, nx, w->rowf, 1);
        }
    st = first_nonfinite(xw, nx * N) < nx * N ? fail_nonfinite(err) : SL_OK;
    if (sl_enkfi_split(cfg) && cfg->rows_local && (cfg->rtpp > 0 || cfg->rtps > 0)) {
        /* every rank's rows relaxed: the ranks agree (a rank's rows alone
         * could fail here; the local analyses' rows were checked) */
        const sl_enkf_ranks *rk = cfg->ranks;
        double flag = st != SL_OK;
        sl_status gst;
        int r;
        for (r = 0; r < rk->size; r++)
            w->scount[r] = sizeof flag;
        if ((gst = rk->allgather(rk->ctx, &flag, w->agree, w->scount, err)) != SL_OK)
            return gst;
        for (r = 0; r < rk->size && st == SL_OK; r++)
            if (w->agree[r] != 0)
                st = fail_nonfinite(err);
    }
    if (st != SL_OK)
        return st;
    memcpy(X, xw, nx * N * sizeof(double));
    return SL_OK;
}

/* ------------------------------------------------------------ the methods */

static sl_status go_stochastic(const sl_enkf_config *cfg, size_t n, size_t N, double *X,
                               size_t m, const double *HX, const double *y, const double *R,
                               int rdiag, buffers *w, double *dof, size_t *floored,
                               size_t *skipped, sl_error *err)
{
    (void)floored;
    (void)skipped;
    return run_stochastic(cfg, n, N, X, m, HX, y, R, rdiag, w, dof, err);
}

static sl_status go_etkf(const sl_enkf_config *cfg, size_t n, size_t N, double *X, size_t m,
                         const double *HX, const double *y, const double *R, int rdiag,
                         buffers *w, double *dof, size_t *floored, size_t *skipped,
                         sl_error *err)
{
    (void)R;
    (void)skipped;
    return run_etkf(cfg, n, N, X, m, HX, y, rdiag, w, dof, floored, err);
}

static sl_status go_serial(const sl_enkf_config *cfg, size_t n, size_t N, double *X,
                           size_t m, const double *HX, const double *y, const double *R,
                           int rdiag, buffers *w, double *dof, size_t *floored,
                           size_t *skipped, sl_error *err)
{
    (void)R;
    (void)rdiag;
    (void)floored;
    (void)skipped;
    return run_serial(cfg, n, N, X, m, HX, y, w, dof, err);
}

static sl_status go_letkf(const sl_enkf_config *cfg, size_t n, size_t N, double *X, size_t m,
                          const double *HX, const double *y, const double *R, int rdiag,
                          buffers *w, double *dof, size_t *floored, size_t *skipped,
                          sl_error *err)
{
    (void)R;
    (void)rdiag;
    return run_letkf(cfg, n, N, X, m, HX, y, w, dof, floored, skipped, err);
}

/* The methods, at the index of their sl_enkf_method id. */
static const method_type methods[SL_ENKF_COUNT] = {
    {"enkf", 1, 1, 0, layout_stochastic, go_stochastic},
    {"etkf", 1, 0, 1, layout_etkf, go_etkf},
    {"ensrf", 0, 1, 0, layout_serial, go_serial},
    {"eakf", 0, 1, 0, layout_serial, go_serial},
    {"letkf", 0, 2, 0, layout_letkf, go_letkf},
};

static const method_type *method_get(int method)
{
    return method >= 0 && method < SL_ENKF_COUNT ? &methods[method] : NULL;
}

int sl_enkf_method_find(const char *name)
{
    int k;
    if (name == NULL)
        return -1;
    for (k = 0; k < SL_ENKF_COUNT; k++)
        if (strcmp(name, methods[k].name) == 0)
            return k;
    return -1;
}

const char *sl_enkf_method_name(int method)
{
    const method_type *mt = method_get(method);
    return mt != NULL ? mt->name : NULL;
}

/* ------------------------------------------------------------ the entry */

size_t sl_enkf_local_rows_max(const sl_enkf_config *cfg, size_t n, size_t N, size_t m)
{
    const int P = cfg != NULL && cfg->ranks != NULL && cfg->ranks->size > 1 ? cfg->ranks->size
                                                                              : 1;
    size_t most = 0, kb, last = 0, b, lo, hi;
    int r, obs;
    if (cfg == NULL || method_get(cfg->method) == NULL || N < 2 || m < 1 || n < 1)
        return 0;
    if (cfg->method == SL_ENKF_LETKF) {
        /* whole groups from row floor(r n / P) of the sorted order on
         * (sl_letkf_local_groups) */
        const size_t g = cfg->loc != NULL && cfg->loc->group_max > 0 ? cfg->loc->group_max : n;
        const size_t per = n / (size_t)P + (n % (size_t)P != 0);
        return per > n - g + 1 ? n : per + g - 1;
    }
    /* the blocks: BLOCK_ROWS (at most n), and for the ETKF's observation
     * space those of every size it can take (see obs_block), kb running
     * over L + mk + 3 for 2 <= L <= N living members and 1 <= mk <= m */
    obs = cfg->method == SL_ENKF_ETKF && cfg->etkf_form != SL_ETKF_ENSEMBLE;
    for (kb = 0; kb == 0 || (obs && kb <= N + m + 3); kb = kb == 0 ? 6 : kb + 1) {
        b = kb == 0 ? (n < BLOCK_ROWS ? n : BLOCK_ROWS) : obs_block(n, kb);
        if (b == last)
            continue;
        last = b;
        if (!(P > 1 && n > b)) {
            most = n;
            break;
        }
        for (r = 0; r < P; r++) {
            rows_of(n, b, P, r, &lo, &hi);
            if (hi - lo > most)
                most = hi - lo;
        }
    }
    return most;
}

int sl_enkf_local_rows(const sl_enkf_config *cfg, size_t n, size_t N, size_t m, int rank,
                       size_t *lo, size_t *hi)
{
    buffers w;
    if (cfg == NULL || method_get(cfg->method) == NULL || cfg->method == SL_ENKF_LETKF ||
        cfg->etkf_form < SL_ETKF_AUTO || cfg->etkf_form > SL_ETKF_OBSERVATION ||
        layout(cfg, n, N, m, 0, etkf_obs_form(cfg, N, m), NULL, &w) == 0)
        return 0;
    *lo = 0;
    *hi = n;
    if (rows_split(cfg, n, w.b)) {
        if (rank < 0 || rank >= cfg->ranks->size)
            return 0;
        rows_of(n, w.b, cfg->ranks->size, rank, lo, hi);
    }
    return 1;
}

sl_status sl_enkf_analysis(const sl_enkf_config *cfg, size_t n, size_t N,
                           double *X, size_t m, const double *HX,
                           const double *y, const double *R, int r_full,
                           void *work, sl_enkf_info *info, sl_error *err)
{
    buffers w;
    sl_status st;
    double dof = NAN;
    size_t floored = 0, skipped = 0;
    int rdiag = 1, lsplit;

    if ((st = check_config(cfg, r_full, err)) != SL_OK)
        return st;
    if (X == NULL || HX == NULL || y == NULL || R == NULL || work == NULL)
        return sl_fail(err, SL_EINVAL, "badconfig",
                       "the ensemble, predicted observations, observations, R "
                       "and the workspace are required");
    if (N < 2)
        return sl_fail(err, SL_EINVAL, "badsize",
                       "the analysis needs at least 2 members, got %lu", (unsigned long)N);
    if (m == 0)
        return sl_fail(err, SL_EINVAL, "badsize", "no observations to assimilate");
    if (n == 0)
        return sl_fail(err, SL_EINVAL, "badsize", "the ensemble has no state rows");
    if (n > INT_MAX || N > INT_MAX / LWORK_PER_MEMBER || m > INT_MAX)
        return sl_fail(err, SL_EINVAL, "badsize",
                       "%lu rows, %lu members, %lu observations: too large for LAPACK",
                       (unsigned long)n, (unsigned long)N, (unsigned long)m);
    if ((st = check_localization(cfg, n, m, err)) != SL_OK)
        return st;
    if (layout(cfg, n, N, m, r_full, etkf_obs_form(cfg, N, m), work, &w) == 0)
        return sl_fail(err, SL_ENOMEM, "nomemory", "the analysis workspace size overflows");
    /* where X's rows are: all of them, or this rank's alone (rows_local;
     * the LETKF checks its own rows as its ranks agree, sl_letkf_run) */
    lsplit = cfg->rows_local && cfg->method != SL_ENKF_LETKF && rows_split(cfg, n, w.b);
    w.xoff = 0;
    w.ld = n;
    if (lsplit) {
        rows_of(n, w.b, cfg->ranks->size, cfg->ranks->rank, &w.xoff, &w.ld);
        w.ld -= w.xoff;
    }
    if (cfg->rows_local && cfg->method == SL_ENKF_LETKF && sl_enkfi_split(cfg))
        w.ld = 0;
    st = check_finite(w.ld, w.xoff, N, X, m, HX, y, R, r_full, err);
    if (st == SL_OK)
        st = check_R(method_get(cfg->method), m, R, r_full, &w, &rdiag, err);
    /* a rank that holds its own rows alone may fail where the others do
     * not: it still joins them below */
    if (st != SL_OK && !lsplit)
        return st;
    if (st == SL_OK) {
        /* the arguments passed: only now is any output written (a refused
         * call leaves X, work and info as they were) */
        if (info != NULL) {
            info->floored = 0;
            info->local_skipped = 0;
            info->innov_dof = NAN;
        }
        st = method_get(cfg->method)->run(cfg, n, N, X, m, HX, y, R, rdiag, &w, &dof,
                                           &floored, &skipped, err);
    }
    /* every rank reaches the rows, or none does (what comes before is
     * worked out alike everywhere); with rows of its own, every rank
     * joins the others whatever happened */
    if (lsplit || (w.in_rows && rows_split(cfg, n, w.b)))
        st = share_rows(cfg, n, N, X, &w, st, err);
    if (st == SL_OK && info != NULL) {
        info->floored = floored;
        info->local_skipped = skipped;
        info->innov_dof = dof;
    }
    return st;
}
