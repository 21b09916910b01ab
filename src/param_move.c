/* param_move.c - moves of a parameter ensemble as a table of type objects. */
#include "sluice/param_move.h"

#include <math.h>
#include <string.h>

/* Workspace of prepare (doubles): mean (p), spread flags (p), covariance
 * (p x p), its Cholesky factor (p x p), then a and h. */
#define WS_MEAN(ws, p) (ws)
#define WS_FLAG(ws, p) ((ws) + (p))
#define WS_COV(ws, p) ((ws) + 2 * (p))
#define WS_CHOL(ws, p) ((ws) + 2 * (p) + (p) * (p))
#define WS_A(ws, p) ((ws)[2 * (p) + 2 * (p) * (p)])
#define WS_H(ws, p) ((ws)[2 * (p) + 2 * (p) * (p) + 1])

size_t sl_param_move_workspace(size_t p)
{
    if (p > ((size_t)1 << 28))
        return 0;
    return 2 * p + 2 * p * p + 2;
}

double sl_kernel_bandwidth(size_t N, size_t d)
{
    double e = 1.0 / ((double)d + 4.0);
    double A = pow(4.0 / ((double)d + 2.0), e);
    return A * pow((double)(N > 0 ? N : 1), -e);
}

/* Cholesky factor L (lower, p x p) of a positive semi-definite A; pivots
 * below a relative floor give a zero column (a parameter without spread). */
static void chol_psd(size_t p, const double *A, double *L)
{
    size_t i, j, k;
    double tr = 0;
    for (i = 0; i < p; i++)
        tr += A[i + i * p];
    for (i = 0; i < p * p; i++)
        L[i] = 0.0;
    for (j = 0; j < p; j++) {
        double d = A[j + j * p];
        for (k = 0; k < j; k++)
            d -= L[j + k * p] * L[j + k * p];
        if (!(d > 1e-13 * tr))
            continue;
        d = sqrt(d);
        L[j + j * p] = d;
        for (i = j + 1; i < p; i++) {
            double s = A[i + j * p];
            for (k = 0; k < j; k++)
                s -= L[i + k * p] * L[j + k * p];
            L[i + j * p] = s / d;
        }
    }
}

/* Weighted (w != NULL: members with w > 0) or unweighted mean and
 * covariance (divisor: the sum of the weights, or N) of Z into m and V. */
static void mean_cov(size_t p, size_t N, const double *Z, const double *w,
                     double *m, double *V)
{
    size_t i, j, l;
    for (i = 0; i < p; i++)
        m[i] = 0.0;
    for (i = 0; i < p * p; i++)
        V[i] = 0.0;
    for (j = 0; j < N; j++) {
        double wj = w != NULL ? w[j] : 1.0 / (double)N;
        if (wj > 0)
            for (i = 0; i < p; i++)
                m[i] += wj * Z[i + j * p];
    }
    for (j = 0; j < N; j++) {
        double wj = w != NULL ? w[j] : 1.0 / (double)N;
        if (wj > 0)
            for (i = 0; i < p; i++) {
                double di = Z[i + j * p] - m[i];
                for (l = 0; l <= i; l++)
                    V[i + l * p] += wj * di * (Z[l + j * p] - m[l]);
            }
    }
    for (i = 0; i < p; i++)
        for (l = 0; l < i; l++)
            V[l + i * p] = V[i + l * p];
}

/* Mean of the members with w > 0, normalised by the sum of their weights
 * (the first member's values when no weight is positive). */
static void weighted_mean(size_t p, size_t N, const double *Z, const double *w,
                          double *m)
{
    double W = 0.0;
    size_t i, j;
    for (i = 0; i < p; i++)
        m[i] = 0.0;
    for (j = 0; j < N; j++)
        if (w[j] > 0) {
            W += w[j];
            for (i = 0; i < p; i++)
                m[i] += w[j] * Z[i + j * p];
        }
    for (i = 0; i < p; i++)
        m[i] = W > 0 ? m[i] / W : Z[i];
}

/* Flag (1) the parameters that differ between the N members of Z,
 * whatever their weights: a parameter the prior fixed has one value
 * everywhere and is never moved. Returns how many are flagged. */
static size_t spread_flags(size_t p, size_t N, const double *Z, double *flag)
{
    size_t i, j, d = 0;
    for (i = 0; i < p; i++) {
        double z0 = Z[i], spread = 0.0;
        for (j = 1; j < N && spread == 0.0; j++)
            if (Z[i + j * p] != z0)
                spread = 1.0;
        flag[i] = spread;
        d += spread != 0;
    }
    return d;
}

/* The Cholesky factor of the workspace's covariance into its slot, with
 * the rows and columns of unflagged parameters zeroed first. */
static void factor_flagged(size_t p, double *ws)
{
    double *V = WS_COV(ws, p);
    const double *flag = WS_FLAG(ws, p);
    size_t i, l;
    for (i = 0; i < p; i++)
        if (flag[i] == 0)
            for (l = 0; l < p; l++)
                V[i + l * p] = V[l + i * p] = 0.0;
    chol_psd(p, V, WS_CHOL(ws, p));
}

/* z += h L xi with xi standard normals drawn in blocks of 64 (on the stack
 * for any p); only flagged rows move when flag != NULL. */
static void add_jitter(size_t p, const double *L, double h, const double *flag,
                       double *z, sl_stream *s)
{
    double xi[64];
    size_t i0, i, l;
    for (i0 = 0; i0 < p; i0 += 64) {
        size_t nb = p - i0 < 64 ? p - i0 : 64;
        for (l = 0; l < nb; l++)
            xi[l] = sl_stream_normal(s);
        for (l = 0; l < nb; l++)
            for (i = i0 + l; i < p; i++)
                if (flag == NULL || flag[i] != 0)
                    z[i] += h * L[i + (i0 + l) * p] * xi[l];
    }
}

/* One member's kernel step: z = a z + (1 - a) m + h L xi, where the
 * shrinkage leaves a parameter without spread where it is and only rows
 * flagged in jflag (all rows when NULL) receive the jitter. */
static void shrink_jitter(size_t p, const double *ws, const double *jflag, double *z,
                          sl_stream *s)
{
    const double *m = WS_MEAN(ws, p), *flag = WS_FLAG(ws, p);
    const double a = WS_A(ws, p);
    size_t i;
    for (i = 0; i < p; i++)
        if (flag[i] != 0)
            z[i] = a * z[i] + (1.0 - a) * m[i];
    add_jitter(p, WS_CHOL(ws, p), WS_H(ws, p), jflag, z, s);
}

/* ------------------------------------------------------------- fixed */

static sl_status fixed_check(const sl_param_move_opts *o, size_t p, sl_error *err)
{
    (void)o;
    (void)p;
    (void)err;
    return SL_OK;
}

const sl_param_mover sl_param_move_fixed = {"fixed", SL_MOVE_NEVER, 0, 0, fixed_check,
                                            NULL, NULL};

/* ------------------------------------------------------- random walk */

static sl_status rw_check(const sl_param_move_opts *o, size_t p, sl_error *err)
{
    size_t k;
    if (p > 0 && o->step == NULL)
        return sl_fail(err, SL_EINVAL, "badconfig", "random-walk steps missing");
    for (k = 0; k < p; k++)
        if (!(o->step[k] >= 0) || !isfinite(o->step[k]))
            return sl_fail(err, SL_EINVAL, "badconfig",
                           "random-walk step %lu must be finite and >= 0",
                           (unsigned long)(k + 1));
    return SL_OK;
}

static void rw_member(const sl_param_move_opts *o, size_t p, const double *ws,
                      double *z, sl_stream *s)
{
    size_t i;
    (void)ws;
    for (i = 0; i < p; i++)
        z[i] += o->step[i] * sl_stream_normal(s);
}

const sl_param_mover sl_param_move_random_walk = {"random_walk", SL_MOVE_EACH_CYCLE, 0, 0,
                                                  rw_check, NULL, rw_member};

/* ---------------------------------------------------------- Liu-West */

static sl_status lw_check(const sl_param_move_opts *o, size_t p, sl_error *err)
{
    (void)p;
    if (!(o->lw_delta > 0 && o->lw_delta <= 1))
        return sl_fail(err, SL_EINVAL, "badconfig",
                       "the Liu-West discount must lie in (0, 1], got %g", o->lw_delta);
    return SL_OK;
}

/* Liu & West (2001): a = (3 delta - 1) / (2 delta), h^2 = 1 - a^2, the
 * weighted covariance of the members with w > 0. */
static void lw_prepare(const sl_param_move_opts *o, size_t p, size_t N,
                       const double *Z, const double *w, double *ws,
                       sl_param_move_info *info)
{
    double *m = WS_MEAN(ws, p), *flag = WS_FLAG(ws, p);
    double dl = o->lw_delta, a = (3.0 * dl - 1.0) / (2.0 * dl), e = 0.0;
    size_t i, j, d = 0;
    mean_cov(p, N, Z, w, m, WS_COV(ws, p));
    chol_psd(p, WS_COV(ws, p), WS_CHOL(ws, p));
    /* which parameters have any spread at all (the same value in every
     * member: held fixed, exactly, rather than moved by rounding) */
    for (i = 0; i < p; i++) {
        double z0 = Z[i], spread = 0.0;
        for (j = 0; j < N && spread == 0.0; j++)
            if (w[j] > 0 && Z[i + j * p] != z0)
                spread = 1.0;
        flag[i] = spread;
        d += spread != 0;
    }
    WS_A(ws, p) = a;
    WS_H(ws, p) = sqrt(1.0 - a * a);
    for (j = 0; j < N; j++)
        e += w[j] * w[j];
    if (info != NULL) {
        info->a = a;
        info->h = WS_H(ws, p);
        info->ess = e > 0 ? 1.0 / e : 0.0;
        info->dim = d;
        info->unweighted = 0;
    }
}

static void lw_member(const sl_param_move_opts *o, size_t p, const double *ws,
                      double *z, sl_stream *s)
{
    (void)o;
    shrink_jitter(p, ws, NULL, z, s);
}

const sl_param_mover sl_param_move_liu_west = {"liu_west", SL_MOVE_EACH_CYCLE, 1, 0, lw_check,
                                               lw_prepare, lw_member};

/* ------------------------------------------------------------ kernel */

static sl_status kernel_check(const sl_param_move_opts *o, size_t p, sl_error *err)
{
    (void)p;
    if (!(o->kernel_scale > 0) || !isfinite(o->kernel_scale))
        return sl_fail(err, SL_EINVAL, "badconfig",
                       "the kernel bandwidth scale must be finite and > 0, got %g",
                       o->kernel_scale);
    if (!(o->min_ess >= 0) || !isfinite(o->min_ess))
        return sl_fail(err, SL_EINVAL, "badconfig",
                       "the kernel's smallest ESS must be finite and >= 0, got %g",
                       o->min_ess);
    return SL_OK;
}

/* The regularised particle filter's move (Musso, Oudjane & Le Gland
 * 2001), fitted to the weighted ensemble before it is resampled: the
 * optimal Gaussian-kernel bandwidth h for the d parameters with spread
 * (times kernel_scale, at most 1), and Liu & West (2001) shrinkage
 * a = sqrt(1 - h^2) toward the weighted mean, so that a resampled member
 * a z + (1 - a) m + h L xi (L L' = V) keeps the mean m and covariance V. */
static void kernel_prepare(const sl_param_move_opts *o, size_t p, size_t N,
                           const double *Z, const double *w, double *ws,
                           sl_param_move_info *info)
{
    double *m = WS_MEAN(ws, p), *flag = WS_FLAG(ws, p), *V = WS_COV(ws, p);
    double e = 0.0, h, ess;
    size_t j, d;
    int unweighted;
    for (j = 0; j < N; j++)
        e += w[j] * w[j];
    ess = e > 0 ? 1.0 / e : 0.0;
    d = spread_flags(p, N, Z, flag);
    unweighted = ess < o->min_ess;
    if (unweighted) {
        /* the weighted spread of a few effective members says little:
         * take the covariance of the members as they were before this
         * weighting, about their own mean; the shrinkage still goes
         * toward the weighted mean */
        mean_cov(p, N, Z, NULL, m, V);
        weighted_mean(p, N, Z, w, m);
    } else {
        mean_cov(p, N, Z, w, m, V);
    }
    factor_flagged(p, ws);
    h = d > 0 ? o->kernel_scale * sl_kernel_bandwidth(N, d) : 0.0;
    if (h > 1.0)
        h = 1.0;
    WS_H(ws, p) = h;
    WS_A(ws, p) = sqrt(1.0 - h * h);
    if (info != NULL) {
        info->a = WS_A(ws, p);
        info->h = h;
        info->ess = ess;
        info->dim = d;
        info->unweighted = unweighted;
    }
}

static void kernel_member(const sl_param_move_opts *o, size_t p, const double *ws,
                          double *z, sl_stream *s)
{
    (void)o;
    if (WS_H(ws, p) > 0)
        shrink_jitter(p, ws, WS_FLAG(ws, p), z, s);
}

const sl_param_mover sl_param_move_kernel = {"kernel", SL_MOVE_AT_RESAMPLE, 1, 0,
                                             kernel_check, kernel_prepare, kernel_member};

/* ----------------------------------------------------- resample_move */

static sl_status rm_check(const sl_param_move_opts *o, size_t p, sl_error *err)
{
    (void)p;
    if (!(o->rm_scale > 0) || !isfinite(o->rm_scale))
        return sl_fail(err, SL_EINVAL, "badconfig",
                       "the proposal scale of resample_move must be finite and > 0, got %g",
                       o->rm_scale);
    if (!(o->rm_diversity > 0 && o->rm_diversity <= 1))
        return sl_fail(err, SL_EINVAL, "badconfig",
                       "the diversity that starts resample_move must lie in (0, 1], got %g",
                       o->rm_diversity);
    if (!(o->rm_paths >= 0 && o->rm_paths <= 1))
        return sl_fail(err, SL_EINVAL, "badconfig",
                       "the path step of resample_move must lie in [0, 1], got %g",
                       o->rm_paths);
    if (o->rm_sweeps < 1 || o->rm_sweeps > 1000)
        return sl_fail(err, SL_EINVAL, "badconfig",
                       "resample_move's sweeps per move must be 1 to 1000, got %lu",
                       (unsigned long)o->rm_sweeps);
    return SL_OK;
}

/* The random-walk proposal fitted to the ensemble (w: its weights): the
 * Cholesky factor of its covariance over the parameters with spread, and
 * the scale rm_scale 2.38 / sqrt(d) (Roberts & Rosenthal 2001), kept in
 * the bandwidth slot. */
static void rm_prepare(const sl_param_move_opts *o, size_t p, size_t N,
                       const double *Z, const double *w, double *ws,
                       sl_param_move_info *info)
{
    const size_t d = spread_flags(p, N, Z, WS_FLAG(ws, p));
    mean_cov(p, N, Z, w, WS_MEAN(ws, p), WS_COV(ws, p));
    factor_flagged(p, ws);
    WS_H(ws, p) = d > 0 ? o->rm_scale * 2.38 / sqrt((double)d) : 0.0;
    WS_A(ws, p) = 1.0;
    if (info != NULL) {
        info->a = 1.0;
        info->h = WS_H(ws, p);
        info->ess = 0.0;
        info->dim = d;
        info->unweighted = w == NULL;
    }
}

static void rm_member(const sl_param_move_opts *o, size_t p, const double *ws,
                      double *z, sl_stream *s)
{
    (void)o;
    if (WS_H(ws, p) > 0)
        add_jitter(p, WS_CHOL(ws, p), WS_H(ws, p), WS_FLAG(ws, p), z, s);
}

void sl_param_move_rescale(const sl_param_mover *mv, const sl_param_move_opts *o,
                           size_t p, double *ws)
{
    size_t i, d = 0;
    if (mv != &sl_param_move_resample_move)
        return;
    for (i = 0; i < p; i++)
        d += WS_FLAG(ws, p)[i] != 0;
    WS_H(ws, p) = d > 0 ? o->rm_scale * 2.38 / sqrt((double)d) : 0.0;
}

const sl_param_mover sl_param_move_resample_move = {
    "resample_move", SL_MOVE_AT_RESAMPLE, 1, 1, rm_check, rm_prepare, rm_member};

/* ------------------------------------------------------------- table */

static const sl_param_mover *const movers[] = {
    &sl_param_move_kernel, &sl_param_move_fixed, &sl_param_move_random_walk,
    &sl_param_move_liu_west, &sl_param_move_resample_move};

const sl_param_mover *sl_param_mover_at(size_t i)
{
    return i < sizeof movers / sizeof *movers ? movers[i] : NULL;
}

const sl_param_mover *sl_param_mover_find(const char *name)
{
    size_t i;
    if (name == NULL)
        return NULL;
    for (i = 0; i < sizeof movers / sizeof *movers; i++)
        if (strcmp(name, movers[i]->name) == 0)
            return movers[i];
    return NULL;
}
