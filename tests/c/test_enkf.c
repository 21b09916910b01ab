/* test_enkf.c - the ensemble Kalman analyses against the Kalman filter's
 * textbook update, the square-root properties of the ETKF, the Monte Carlo
 * rate of the stochastic EnKF, inflation, relaxation, localisation, the
 * eigenvalue floor, the innovation statistic, and every error reason. */
#include "check.h"
#include "line_localization.h"
#include "sluice/enkf.h"
#include "sluice/rng.h"

#include <float.h>
#include <stdint.h>
#include <stdlib.h>
#include <gsl/gsl_errno.h>
#include <gsl/gsl_linalg.h>
#include <gsl/gsl_matrix.h>

static const char *const MNAME[] = {"enkf", "etkf", "ensrf", "eakf", "letkf"};

/* ------------------------------------------------------------ helpers */

static double *dalloc(size_t k)
{
    double *p = ck_calloc(k ? k : 1, sizeof(double));
    if (p == NULL)
        abort();
    return p;
}

static double *dup(const double *a, size_t k)
{
    double *p = dalloc(k);
    memcpy(p, a, k * sizeof(double));
    return p;
}

static sl_enkf_config config(int method)
{
    sl_enkf_config c;
    memset(&c, 0, sizeof c);
    c.method = method;
    c.inflation = 1.0;
    c.seed = 20240611u;
    c.cycle = 3;
    c.threads = 1;
    return c;
}

/* One analysis with a workspace of exactly the size the module asks for. */
static sl_status analyse(const sl_enkf_config *cfg, size_t n, size_t N,
                         double *X, size_t m, const double *HX,
                         const double *y, const double *R, int r_full,
                         sl_enkf_info *info, sl_error *err)
{
    size_t bytes = sl_enkf_workspace(cfg, n, N, m, r_full);
    void *work = ck_malloc(bytes ? bytes : 1);
    sl_status st;
    sl_error_clear(err);
    st = sl_enkf_analysis(cfg, n, N, X, m, HX, y, R, r_full, work, info, err);
    ck_free(work);
    return st;
}

/* A test problem: ensemble X (n x N) with correlated rows and unequal
 * means, a linear observation operator H (m x n), HX = H X, observations
 * y and error variances rd; Rfull an AR(1)-correlated covariance with the
 * same variances (symmetric positive definite). */
typedef struct {
    size_t n, N, m;
    double *X, *H, *HX, *y, *rd, *Rfull, *Rdiag;
} problem;

static void set_obs(problem *p)
{
    size_t i, j, k;
    for (j = 0; j < p->N; j++)
        for (k = 0; k < p->m; k++) {
            double s = 0.0;
            for (i = 0; i < p->n; i++)
                s += p->H[k + i * p->m] * p->X[i + j * p->n];
            p->HX[k + j * p->m] = s;
        }
}

static void make_problem(problem *p, size_t n, size_t N, size_t m, uint64_t seed)
{
    sl_stream s;
    size_t i, j, k, l;
    p->n = n;
    p->N = N;
    p->m = m;
    p->X = dalloc(n * N);
    p->H = dalloc(m * n);
    p->HX = dalloc(m * N);
    p->y = dalloc(m);
    p->rd = dalloc(m);
    p->Rfull = dalloc(m * m);
    p->Rdiag = dalloc(m * m);
    sl_stream_init(&s, seed, 0, 0, SL_PURPOSE_USER);
    for (j = 0; j < N; j++) {
        double prev = 0.0;
        for (i = 0; i < n; i++) {
            double z = sl_stream_normal(&s);
            prev = 0.6 * prev + (1.0 + 0.25 * (double)i) * z;
            p->X[i + j * n] = 1.7 * (double)i - 0.4 + prev;
        }
    }
    for (i = 0; i < n; i++)
        for (k = 0; k < m; k++)
            p->H[k + i * m] = 0.8 * sl_stream_normal(&s) + (i == k % n ? 1.0 : 0.0);
    set_obs(p);
    for (k = 0; k < m; k++) {
        double mean = 0.0;
        for (j = 0; j < N; j++)
            mean += p->HX[k + j * m];
        p->y[k] = mean / (double)N + 0.9 * sl_stream_normal(&s);
        p->rd[k] = 0.3 + 0.45 * (double)k + sl_stream_uniform(&s);
    }
    for (k = 0; k < m; k++)
        for (l = 0; l < m; l++) {
            double d = k > l ? (double)(k - l) : (double)(l - k);
            p->Rfull[k + l * m] = sqrt(p->rd[k] * p->rd[l]) * pow(0.45, d);
            p->Rdiag[k + l * m] = k == l ? p->rd[k] : 0.0;
        }
}

static void free_problem(problem *p)
{
    ck_free(p->X);
    ck_free(p->H);
    ck_free(p->HX);
    ck_free(p->y);
    ck_free(p->rd);
    ck_free(p->Rfull);
    ck_free(p->Rdiag);
}

/* Ensemble mean (n) and covariance (n x n, divisor N - 1). */
static void ens_stats(size_t n, size_t N, const double *X, double *mean, double *P)
{
    size_t i, l, j;
    for (i = 0; i < n; i++) {
        mean[i] = 0.0;
        for (j = 0; j < N; j++)
            mean[i] += X[i + j * n];
        mean[i] /= (double)N;
    }
    for (i = 0; i < n; i++)
        for (l = 0; l < n; l++) {
            double s = 0.0;
            for (j = 0; j < N; j++)
                s += (X[i + j * n] - mean[i]) * (X[l + j * n] - mean[l]);
            P[i + l * n] = s / (double)(N - 1);
        }
}

/* The Kalman filter's analysis (Kalman 1960; the textbook update):
 * S = H P H^T + R, K = P H^T S^{-1}, xa = x + K (y - H x),
 * Pa = (I - K H) P, and d^T S^{-1} d, solved by GSL's Cholesky routines.
 * Matrices column-major; K (n x m) returned if not NULL. */
static void kalman(size_t n, size_t m, const double *x, const double *P,
                   const double *H, const double *y, const double *R,
                   double *xa, double *Pa, double *K, double *dof)
{
    gsl_matrix *S = gsl_matrix_alloc(m, m);
    gsl_vector *b = gsl_vector_alloc(m), *z = gsl_vector_alloc(m);
    double *HP = dalloc(m * n), *Kl = dalloc(n * m), *d = dalloc(m);
    size_t i, k, l, q;
    for (k = 0; k < m; k++)
        for (i = 0; i < n; i++) {
            double s = 0.0;
            for (q = 0; q < n; q++)
                s += H[k + q * m] * P[q + i * n];
            HP[k + i * m] = s;
        }
    for (k = 0; k < m; k++)
        for (l = 0; l < m; l++) {
            double s = R[k + l * m];
            for (q = 0; q < n; q++)
                s += HP[k + q * m] * H[l + q * m];
            gsl_matrix_set(S, k, l, s);
        }
    gsl_linalg_cholesky_decomp1(S);
    for (i = 0; i < n; i++) { /* K^T = S^{-1} H P, column i of H P */
        for (k = 0; k < m; k++)
            gsl_vector_set(b, k, HP[k + i * m]);
        gsl_linalg_cholesky_solve(S, b, z);
        for (k = 0; k < m; k++)
            Kl[i + k * n] = gsl_vector_get(z, k);
    }
    for (k = 0; k < m; k++) {
        double s = y[k];
        for (q = 0; q < n; q++)
            s -= H[k + q * m] * x[q];
        d[k] = s;
        gsl_vector_set(b, k, s);
    }
    gsl_linalg_cholesky_solve(S, b, z);
    *dof = 0.0;
    for (k = 0; k < m; k++)
        *dof += d[k] * gsl_vector_get(z, k);
    for (i = 0; i < n; i++) {
        xa[i] = x[i];
        for (k = 0; k < m; k++)
            xa[i] += Kl[i + k * n] * d[k];
    }
    for (i = 0; i < n; i++)
        for (l = 0; l < n; l++) {
            double s = P[i + l * n];
            for (k = 0; k < m; k++)
                s -= Kl[i + k * n] * HP[k + l * m];
            Pa[i + l * n] = s;
        }
    if (K != NULL)
        memcpy(K, Kl, n * m * sizeof(double));
    gsl_matrix_free(S);
    gsl_vector_free(b);
    gsl_vector_free(z);
    ck_free(HP);
    ck_free(Kl);
    ck_free(d);
}

static double max_abs_diff(const double *a, const double *b, size_t k)
{
    double e = 0.0;
    size_t i;
    for (i = 0; i < k; i++)
        if (fabs(a[i] - b[i]) > e)
            e = fabs(a[i] - b[i]);
    return e;
}

/* Gaspari & Cohn (1999), Q. J. R. Meteorol. Soc. 125, eq. 4.10, written
 * out here independently of the module's own. */
static double gc(double d, double c)
{
    double z = fabs(d) / c;
    if (z <= 1)
        return -0.25 * pow(z, 5) + 0.5 * pow(z, 4) + 0.625 * pow(z, 3) -
               5.0 / 3.0 * z * z + 1.0;
    if (z < 2)
        return pow(z, 5) / 12.0 - 0.5 * pow(z, 4) + 0.625 * pow(z, 3) +
               5.0 / 3.0 * z * z - 5.0 * z + 4.0 - 2.0 / (3.0 * z);
    return 0.0;
}

/* Analysis of one method on problem p with R diagonal (r_full 0) or the
 * given full R; X copied, result in Xa. */
static sl_status analyse_problem(const sl_enkf_config *cfg, const problem *p,
                                 const double *Rfull, double *Xa,
                                 sl_enkf_info *info, sl_error *err)
{
    memcpy(Xa, p->X, p->n * p->N * sizeof(double));
    if (Rfull != NULL)
        return analyse(cfg, p->n, p->N, Xa, p->m, p->HX, p->y, Rfull, 1, info, err);
    return analyse(cfg, p->n, p->N, Xa, p->m, p->HX, p->y, p->rd, 0, info, err);
}

/* ------------------------------------------------- Kalman equivalence */

/* With a linear H (HX = H X) the deterministic square-root filters give
 * the Kalman analysis of the ensemble's own mean and covariance exactly
 * (Tippett et al. 2003; Whitaker & Hamill 2002 for the serial filter
 * with uncorrelated errors; Hunt et al. 2007 for the ETKF). */
static void test_kalman_equivalence(void)
{
    static const int methods[] = {SL_ENKF_ETKF, SL_ENKF_ENSRF, SL_ENKF_EAKF};
    double emax[3][2] = {{0}}, dmax[3][2] = {{0}};
    size_t n, m, q;
    int full;
    for (n = 3; n <= 6; n++)
        for (m = 1; m <= 4; m++) {
            problem p;
            const size_t N = n + 3 + m;
            double *xm = dalloc(n), *P = dalloc(n * n), *xa = dalloc(n),
                   *Pa = dalloc(n * n), *am = dalloc(n), *aP = dalloc(n * n),
                   *Xa = dalloc(n * N), dof;
            make_problem(&p, n, N, m, 1000 + 10 * n + m);
            ens_stats(n, N, p.X, xm, P);
            for (full = 0; full < 2; full++) {
                kalman(n, m, xm, P, p.H, p.y, full ? p.Rfull : p.Rdiag, xa, Pa, NULL, &dof);
                for (q = 0; q < 3; q++) {
                    sl_enkf_config cfg = config(methods[q]);
                    sl_enkf_info info;
                    sl_error err;
                    sl_status st;
                    double e;
                    if (full && methods[q] != SL_ENKF_ETKF)
                        continue;
                    st = analyse_problem(&cfg, &p, full ? p.Rfull : NULL, Xa, &info, &err);
                    CHECK(st == SL_OK, "%s n=%lu m=%lu: %s", MNAME[methods[q]],
                          (unsigned long)n, (unsigned long)m, err.message);
                    ens_stats(n, N, Xa, am, aP);
                    e = max_abs_diff(am, xa, n);
                    if (max_abs_diff(aP, Pa, n * n) > e)
                        e = max_abs_diff(aP, Pa, n * n);
                    if (e > emax[q][full])
                        emax[q][full] = e;
                    e = fabs(info.innov_dof - dof) / dof;
                    if (e > dmax[q][full])
                        dmax[q][full] = e;
                    CHECK(info.floored == 0, "no eigenvalue floored on a sound problem");
                }
            }
            ck_free(xm);
            ck_free(P);
            ck_free(xa);
            ck_free(Pa);
            ck_free(am);
            ck_free(aP);
            ck_free(Xa);
            free_problem(&p);
        }
    for (q = 0; q < 3; q++)
        for (full = 0; full < 2; full++) {
            if (full && q > 0)
                continue;
            printf("  %-5s %s R: mean/cov vs Kalman max err %.2e, innov_dof rel err %.2e\n",
                   MNAME[methods[q]], full ? "full" : "diag", emax[q][full], dmax[q][full]);
            CHECK(emax[q][full] <= 1e-10, "%s vs Kalman: %g", MNAME[methods[q]], emax[q][full]);
            CHECK(dmax[q][full] <= 1e-10, "%s innov_dof vs d'S^-1 d: %g", MNAME[methods[q]],
                  dmax[q][full]);
        }
}

/* ------------------------------------------------- ETKF square root */

/* The symmetric square root (Hunt et al. 2007; Wang et al.
 * 2004): Xa' = X' W with W symmetric and W 1 = 1, so the analysis
 * perturbations are centred on the Kalman mean. With n = N and X = I + a
 * constant per row, X' = I - 11^T/N and Xa - mean(Xa) + 11^T/N = W. */
static void test_etkf_symmetric(void)
{
    const size_t N = 7, n = 7, m = 3;
    problem p;
    double *Xa = dalloc(n * N), *xm = dalloc(n), *P = dalloc(n * n),
           *xa = dalloc(n), *Pa = dalloc(n * n), *W = dalloc(N * N), dof;
    double sym = 0.0, rowsum = 0.0, centred = 0.0;
    sl_enkf_config cfg = config(SL_ENKF_ETKF);
    sl_enkf_info info;
    sl_error err;
    size_t i, j;
    make_problem(&p, n, N, m, 77);
    for (j = 0; j < N; j++)
        for (i = 0; i < n; i++)
            p.X[i + j * n] = (i == j ? 1.0 : 0.0) + 0.3 * (double)i - 1.0;
    set_obs(&p);
    ens_stats(n, N, p.X, xm, P);
    kalman(n, m, xm, P, p.H, p.y, p.Rfull, xa, Pa, NULL, &dof);
    CHECK(analyse_problem(&cfg, &p, p.Rfull, Xa, &info, &err) == SL_OK, "%s", err.message);
    for (i = 0; i < n; i++) {
        double s = 0.0;
        for (j = 0; j < N; j++)
            s += Xa[i + j * n] - xa[i];
        if (fabs(s) > centred)
            centred = fabs(s);
    }
    for (j = 0; j < N; j++)
        for (i = 0; i < n; i++) {
            double mean = 0.0;
            size_t q;
            for (q = 0; q < N; q++)
                mean += Xa[i + q * n];
            W[i + j * N] = Xa[i + j * n] - mean / (double)N + 1.0 / (double)N;
        }
    for (i = 0; i < N; i++) {
        double s = 0.0;
        for (j = 0; j < N; j++) {
            s += W[i + j * N];
            if (fabs(W[i + j * N] - W[j + i * N]) > sym)
                sym = fabs(W[i + j * N] - W[j + i * N]);
        }
        if (fabs(s - 1.0) > rowsum)
            rowsum = fabs(s - 1.0);
    }
    printf("  etkf: perturbations about the Kalman mean sum to %.1e; |W - W^T| %.1e; |W1 - 1| %.1e\n",
           centred, sym, rowsum);
    CHECK(centred <= 1e-12, "ETKF perturbations not centred: %g", centred);
    CHECK(sym <= 1e-12, "ETKF transform not symmetric: %g", sym);
    CHECK(rowsum <= 1e-12, "ETKF transform does not keep the mean: %g", rowsum);
    ck_free(Xa);
    ck_free(xm);
    ck_free(P);
    ck_free(xa);
    ck_free(Pa);
    ck_free(W);
    free_problem(&p);
}

/* ------------------------------------------------- ETKF: two forms */

/* The ETKF's transform worked out in ensemble space (N x N) and in
 * observation space (m x m) is the same matrix: (I + S^T S / (N - 1))^{-1/2}
 * and [(N - 1) I + S^T S]^{-1} S^T = S^T [(N - 1) I + S S^T]^{-1} share
 * their eigenvectors through the SVD of S (matrix identities, Golub & Van
 * Loan, Matrix Computations, 4th ed., sec. 2.4 and 8.6). Both forms on the
 * same inputs (random high-entropy ensembles, diagonal and correlated R,
 * with inflation and relaxation, m = 1 to m > N) must agree to rounding,
 * in the analysis, the innovation statistic and the floored count. With
 * HX = H X, S has rank at most min(n, N - 1): n < m < N gives a
 * rank-deficient S (zero eigenvalues of S S^T: {3, 20, 8}, {4, 150, 70},
 * and {6, 9, 8} with m = N - 1). From order 64 with m at least the order
 * the eigenproblem goes to dsyevr, the other form's to dsyev: {80, 150, 70}
 * and {4, 150, 70} (m x m by dsyevr, N x N by dsyev), {80, 100, 99}
 * (m = N - 1, likewise) and {80, 70, 100} (both by dsyevr). */
static void test_etkf_forms(void)
{
    static const size_t shape[][3] = {
        {5, 12, 1}, {4, 30, 3}, {70, 40, 7}, {6, 9, 8}, {3, 2, 1}, {9, 200, 1},
        {3, 6, 6}, {3, 5, 9}, {3, 20, 8}, {4, 150, 70}, {80, 150, 70}, {80, 100, 99},
        {80, 70, 100}};
    double emax = 0.0, dmax = 0.0;
    size_t t;
    int variant;
    for (t = 0; t < sizeof shape / sizeof shape[0]; t++)
        for (variant = 0; variant < 4; variant++) {
            const size_t n = shape[t][0], N = shape[t][1], m = shape[t][2];
            const int full = variant & 1, relaxed = variant >= 2;
            problem p;
            double *Xa = dalloc(n * N), *Xb = dalloc(n * N), scale = 0.0, e, kappa, dd;
            sl_enkf_config ce = config(SL_ENKF_ETKF), co = config(SL_ENKF_ETKF);
            sl_enkf_info ie, io;
            sl_error err;
            size_t i, j, k;
            make_problem(&p, n, N, m, 4100 + 17 * t + (size_t)variant);
            /* rounding: both forms are backward stable, so they differ by
             * a few eps times the condition number of I + S^T S / (N - 1),
             * at most kappa = 1 + tr(S^T S) / (N - 1) (with the variances
             * of R: a scale for the correlated R too), and the innovation
             * statistic by as much of kappa d~^T d~ (Golub & Van Loan,
             * sec. 2.7 and 8.1: perturbation of linear systems and of
             * symmetric eigenproblems) */
            kappa = 0.0;
            dd = 0.0;
            for (k = 0; k < m; k++) {
                double mu = 0.0;
                for (j = 0; j < N; j++)
                    mu += p.HX[k + j * m];
                mu /= (double)N;
                for (j = 0; j < N; j++)
                    kappa += (p.HX[k + j * m] - mu) * (p.HX[k + j * m] - mu) / p.rd[k];
                dd += (p.y[k] - mu) * (p.y[k] - mu) / p.rd[k];
            }
            kappa = 1.0 + kappa / (double)(N - 1);
            ce.etkf_form = SL_ETKF_ENSEMBLE;
            co.etkf_form = SL_ETKF_OBSERVATION;
            if (relaxed) {
                ce.inflation = co.inflation = 1.0735;
                ce.rtps = co.rtps = 0.385;
                ce.rtpp = co.rtpp = 0.215;
            }
            CHECK(analyse_problem(&ce, &p, full ? p.Rfull : NULL, Xa, &ie, &err) == SL_OK,
                  "ensemble form: %s", err.message);
            CHECK(analyse_problem(&co, &p, full ? p.Rfull : NULL, Xb, &io, &err) == SL_OK,
                  "observation form: %s", err.message);
            for (i = 0; i < n * N; i++)
                if (fabs(Xa[i]) > scale)
                    scale = fabs(Xa[i]);
            e = max_abs_diff(Xa, Xb, n * N) / scale;
            if (e / kappa > emax)
                emax = e / kappa;
            CHECK(e <= 8 * DBL_EPSILON * kappa, "n=%lu N=%lu m=%lu variant %d: forms differ by %g",
                  (unsigned long)n, (unsigned long)N, (unsigned long)m, variant, e);
            e = fabs(ie.innov_dof - io.innov_dof) / (kappa * dd);
            if (e > dmax)
                dmax = e;
            CHECK(e <= 8 * DBL_EPSILON, "innov_dof %.17g vs %.17g", ie.innov_dof, io.innov_dof);
            CHECK(ie.floored == 0 && io.floored == 0, "floored %lu / %lu on a sound problem",
                  (unsigned long)ie.floored, (unsigned long)io.floored);
            /* the automatic choice is one of the two, bit for bit */
            co.etkf_form = SL_ETKF_AUTO;
            CHECK(analyse_problem(&co, &p, full ? p.Rfull : NULL, Xa, &io, &err) == SL_OK,
                  "automatic form: %s", err.message);
            if (m < N)
                CHECK(memcmp(Xa, Xb, n * N * sizeof(double)) == 0,
                      "automatic choice with m < N is not the observation form");
            /* a floor of 0.99 of the largest eigenvalue: the same floored
             * eigenvalues in both forms, and the same analysis */
            ce.eig_floor = co.eig_floor = 0.99;
            co.etkf_form = SL_ETKF_OBSERVATION;
            CHECK(analyse_problem(&ce, &p, full ? p.Rfull : NULL, Xa, &ie, &err) == SL_OK,
                  "%s", err.message);
            CHECK(analyse_problem(&co, &p, full ? p.Rfull : NULL, Xb, &io, &err) == SL_OK,
                  "%s", err.message);
            CHECK(ie.floored == io.floored && ie.floored > 0,
                  "floor 0.99: %lu floored in ensemble space, %lu in observation space",
                  (unsigned long)ie.floored, (unsigned long)io.floored);
            e = max_abs_diff(Xa, Xb, n * N) / scale;
            if (e / kappa > emax)
                emax = e / kappa;
            CHECK(e <= 8 * DBL_EPSILON * kappa, "floor 0.99, n=%lu N=%lu m=%lu: forms differ by %g",
                  (unsigned long)n, (unsigned long)N, (unsigned long)m, e);
            ck_free(Xa);
            ck_free(Xb);
            free_problem(&p);
        }
    printf("  etkf ensemble vs observation space: max diff %.1f eps kappa, innov_dof %.1f "
           "eps kappa d'd\n", emax / DBL_EPSILON, dmax / DBL_EPSILON);
}

/* The observation-space form needs nothing N x N: its workspace grows
 * linearly in N (here N = 1e5 members and 2 observations take well under
 * 100 doubles a member, where one N x N matrix would be 1e10 doubles),
 * and an analysis of 20000 members is still the Kalman analysis of the
 * ensemble's own mean and covariance (Kalman 1960, as above). */
static void test_etkf_large(void)
{
    const size_t n = 3, N = 20000, m = 2;
    problem p;
    double xm[3], P[9], xa[3], Pa[9], am[3], aP[9], dof, e;
    double *Xa = dalloc(n * N);
    sl_enkf_config cfg = config(SL_ENKF_ETKF);
    sl_enkf_info info;
    sl_error err;
    size_t bytes = sl_enkf_workspace(&cfg, n, 100000, m, 0);
    printf("  etkf N=1e5, m=2: workspace %.1f doubles a member\n",
           (double)bytes / 8.0 / 1e5);
    CHECK(bytes > 0 && bytes < (size_t)8 * 100 * 100000, "workspace %lu bytes",
          (unsigned long)bytes);
    make_problem(&p, n, N, m, 9090);
    ens_stats(n, N, p.X, xm, P);
    kalman(n, m, xm, P, p.H, p.y, p.Rdiag, xa, Pa, NULL, &dof);
    CHECK(analyse_problem(&cfg, &p, NULL, Xa, &info, &err) == SL_OK, "%s", err.message);
    ens_stats(n, N, Xa, am, aP);
    e = max_abs_diff(am, xa, n);
    if (max_abs_diff(aP, Pa, n * n) > e)
        e = max_abs_diff(aP, Pa, n * n);
    printf("  etkf N=20000, m=2 vs Kalman: %.1e\n", e);
    CHECK(e <= 1e-10, "N=20000 vs Kalman: %g", e);
    CHECK(fabs(info.innov_dof - dof) <= 1e-10 * dof, "innov_dof %g vs %g", info.innov_dof, dof);
    ck_free(Xa);
    free_problem(&p);
    /* several blocks of rows: the transform depends on HX alone (Hunt et
     * al. 2007), so rows analysed 50 at a time (one block each) are the
     * rows of the whole analysis (blocks of 64), to rounding */
    {
        const size_t n2 = 150, N2 = 20000, m2 = 3, part = 50;
        double *Xb = dalloc(part * N2), e2 = 0.0, scale = 0.0;
        size_t i, j, i0;
        make_problem(&p, n2, N2, m2, 9191);
        Xa = dalloc(n2 * N2);
        cfg.inflation = 1.0735;
        cfg.rtps = 0.385;
        CHECK(analyse_problem(&cfg, &p, NULL, Xa, &info, &err) == SL_OK, "%s", err.message);
        for (i0 = 0; i0 < n2; i0 += part) {
            for (j = 0; j < N2; j++)
                for (i = 0; i < part; i++)
                    Xb[i + j * part] = p.X[i0 + i + j * n2];
            CHECK(analyse(&cfg, part, N2, Xb, m2, p.HX, p.y, p.rd, 0, &info, &err) == SL_OK,
                  "%s", err.message);
            for (j = 0; j < N2; j++)
                for (i = 0; i < part; i++) {
                    double a = Xa[i0 + i + j * n2];
                    if (fabs(a - Xb[i + j * part]) > e2)
                        e2 = fabs(a - Xb[i + j * part]);
                    if (fabs(a) > scale)
                        scale = fabs(a);
                }
        }
        printf("  etkf N=20000, n=150 in blocks vs 50 rows at a time: %.1e\n", e2 / scale);
        CHECK(e2 <= 1e-13 * scale, "blocks of rows differ by %g", e2);
        ck_free(Xa);
        ck_free(Xb);
        free_problem(&p);
    }
}

/* ------------------------------------------------- stochastic EnKF */

/* Member j's perturbed observations come from stream (seed, j, cycle,
 * SL_PURPOSE_ANALYSIS): replaying those normals, each member must be
 * x_j + K (y + L eps_j - H x_j) with the ensemble's Kalman gain and the
 * Cholesky factor L of R (Burgers et al. 1998). */
static void test_stochastic_replay(void)
{
    const size_t n = 4, N = 12, m = 3;
    problem p;
    double *xm = dalloc(n), *P = dalloc(n * n), *xa = dalloc(n), *Pa = dalloc(n * n),
           *K = dalloc(n * m), *E = dalloc(m * N), *Xa = dalloc(n * N),
           *Xb = dalloc(n * N), dof, emax = 0.0;
    sl_enkf_config cfg = config(SL_ENKF_STOCHASTIC);
    sl_enkf_info info;
    sl_error err;
    size_t i, j, k, l;
    int full;
    make_problem(&p, n, N, m, 4242);
    ens_stats(n, N, p.X, xm, P);
    for (full = 0; full < 2; full++) {
        const double *R = full ? p.Rfull : p.Rdiag;
        double Lc[16] = {0};
        /* Cholesky factor of R by the textbook recurrence */
        for (k = 0; k < m; k++)
            for (l = 0; l <= k; l++) {
                double s = R[k + l * m];
                size_t q;
                for (q = 0; q < l; q++)
                    s -= Lc[k + q * m] * Lc[l + q * m];
                Lc[k + l * m] = k == l ? sqrt(s) : s / Lc[l + l * m];
            }
        kalman(n, m, xm, P, p.H, p.y, R, xa, Pa, K, &dof);
        sl_normals_members(cfg.seed, 0, N, cfg.cycle, SL_PURPOSE_ANALYSIS, m, E, m);
        CHECK(analyse_problem(&cfg, &p, full ? p.Rfull : NULL, Xa, &info, &err) == SL_OK,
              "%s", err.message);
        for (j = 0; j < N; j++) {
            double innov[4];
            for (k = 0; k < m; k++) {
                double s = p.y[k] - p.HX[k + j * m];
                for (l = 0; l <= k; l++)
                    s += Lc[k + l * m] * E[l + j * m];
                innov[k] = s;
            }
            for (i = 0; i < n; i++) {
                double x = p.X[i + j * n];
                for (k = 0; k < m; k++)
                    x += K[i + k * n] * innov[k];
                if (fabs(x - Xa[i + j * n]) > emax)
                    emax = fabs(x - Xa[i + j * n]);
            }
        }
        CHECK(fabs(info.innov_dof - dof) <= 1e-10 * dof, "enkf innov_dof %g vs %g",
              info.innov_dof, dof);
    }
    printf("  enkf: members vs x_j + K(y + L eps_j - Hx_j), max err %.2e\n", emax);
    CHECK(emax <= 1e-10, "stochastic EnKF replay: %g", emax);

    /* same seed and cycle: bit-identical, whatever the threads; another
     * cycle or seed: other perturbations */
    analyse_problem(&cfg, &p, NULL, Xa, &info, &err);
    cfg.threads = 4;
    analyse_problem(&cfg, &p, NULL, Xb, &info, &err);
    CHECK(memcmp(Xa, Xb, n * N * sizeof(double)) == 0, "stochastic EnKF not reproducible");
    cfg.cycle++;
    analyse_problem(&cfg, &p, NULL, Xb, &info, &err);
    CHECK(memcmp(Xa, Xb, n * N * sizeof(double)) != 0, "the cycle changes the perturbations");
    cfg.cycle--;
    cfg.seed++;
    analyse_problem(&cfg, &p, NULL, Xb, &info, &err);
    CHECK(memcmp(Xa, Xb, n * N * sizeof(double)) != 0, "the seed changes the perturbations");
    ck_free(xm);
    ck_free(P);
    ck_free(xa);
    ck_free(Pa);
    ck_free(K);
    ck_free(E);
    ck_free(Xa);
    ck_free(Xb);
    free_problem(&p);
}

/* The analysis mean of the perturbed-observation EnKF differs from the
 * Kalman mean of the same ensemble by K L mean(eps), whose mean square is
 * tr(K R K^T) / N: the Monte Carlo rate (Burgers et al. 1998). Root mean
 * square over replicates for N = 1e3, 1e4, 1e5, relative to that rate. */
static void test_stochastic_rate(void)
{
    enum { REP = 16 };
    const size_t n = 3, m = 2, Ns[3] = {1000, 10000, 100000};
    double rms[3];
    size_t t;
    for (t = 0; t < 3; t++) {
        const size_t N = Ns[t];
        double se = 0.0, expect = 0.0;
        int r;
        for (r = 0; r < REP; r++) {
            problem p;
            double xm[3], P[9], xa[3], Pa[9], K[6], am[3], aP[9], dof, tr = 0.0;
            double *Xa = dalloc(n * N);
            sl_enkf_config cfg = config(SL_ENKF_STOCHASTIC);
            sl_enkf_info info;
            sl_error err;
            size_t i, k, l;
            make_problem(&p, n, N, m, 9000 + 100 * t + (uint64_t)r);
            cfg.cycle = (uint32_t)r;
            ens_stats(n, N, p.X, xm, P);
            kalman(n, m, xm, P, p.H, p.y, p.Rdiag, xa, Pa, K, &dof);
            CHECK(analyse_problem(&cfg, &p, NULL, Xa, &info, &err) == SL_OK, "%s", err.message);
            ens_stats(n, N, Xa, am, aP);
            for (i = 0; i < n; i++) {
                se += (am[i] - xa[i]) * (am[i] - xa[i]);
                for (k = 0; k < m; k++)
                    tr += K[i + k * n] * K[i + k * n] * p.rd[k];
            }
            expect += tr / (double)N;
            if (t == 2 && r == 0) {
                /* and the spread: (I - KH) P up to sampling error */
                double e = 0.0, sc = 0.0;
                for (l = 0; l < n * n; l++) {
                    e += (aP[l] - Pa[l]) * (aP[l] - Pa[l]);
                    sc += Pa[l] * Pa[l];
                }
                printf("  enkf N=1e5: |cov - (I-KH)P| / |(I-KH)P| = %.2e\n", sqrt(e / sc));
                CHECK(sqrt(e / sc) < 0.03, "stochastic EnKF covariance %g", sqrt(e / sc));
            }
            ck_free(Xa);
            free_problem(&p);
        }
        rms[t] = sqrt(se / REP);
        printf("  enkf N=%-6lu: rms mean error %.3e = %.2f x sqrt(tr(KRK')/N)\n",
               (unsigned long)N, rms[t], rms[t] / sqrt(expect / REP));
        CHECK(rms[t] / sqrt(expect / REP) > 0.6 && rms[t] / sqrt(expect / REP) < 1.5,
              "N = %lu: error %g not at the Monte Carlo rate %g", (unsigned long)N, rms[t],
              sqrt(expect / REP));
    }
    CHECK(rms[0] / rms[2] > 5 && rms[0] / rms[2] < 20,
          "error ratio N=1e3 / N=1e5 = %g, expected about 10", rms[0] / rms[2]);
}

/* ----------------------------------------- inflation and relaxation */

/* Prior inflation: the analysis of X with inflation 1.1 is the analysis of
 * the ensemble mean + 1.1 (X - mean) (and its predicted observations)
 * without inflation; with an uninformative observation the spread comes
 * out scaled by exactly 1.1. */
static void test_inflation(int method)
{
    const size_t n = 5, N = 9, m = 3;
    problem p, q;
    double *Xa = dalloc(n * N), *Xb = dalloc(n * N), *xm = dalloc(n), *P = dalloc(n * n),
           *am = dalloc(n), *aP = dalloc(n * n), huge[3] = {1e30, 1e30, 1e30}, e, ratio = 0;
    sl_enkf_config cfg = config(method);
    sl_localization loc;
    double spos[5], opos[3], oc[3];
    sl_enkf_info info;
    sl_error err;
    size_t i, j;
    make_problem(&p, n, N, m, 555);
    make_problem(&q, n, N, m, 555);
    if (method == SL_ENKF_LETKF) {
        for (i = 0; i < n; i++)
            spos[i] = (double)i;
        for (i = 0; i < m; i++) {
            opos[i] = 1.5 * (double)i;
            oc[i] = 1e9;
        }
        memset(&loc, 0, sizeof loc);
        loc.geometry = SL_GEOM_LINE;
        loc.dim = 1;
        loc.state_pos = spos;
        loc.obs_pos = opos;
        loc.obs_c = oc;
        loc.param_factor = 1.0;
        cfg.loc = &loc;
    }
    ens_stats(n, N, p.X, xm, P);
    for (j = 0; j < N; j++)
        for (i = 0; i < n; i++)
            q.X[i + j * n] = xm[i] + 1.1 * (p.X[i + j * n] - xm[i]);
    set_obs(&q);
    cfg.inflation = 1.1;
    CHECK(analyse_problem(&cfg, &p, NULL, Xa, &info, &err) == SL_OK, "%s", err.message);
    cfg.inflation = 1.0;
    CHECK(analyse_problem(&cfg, &q, NULL, Xb, &info, &err) == SL_OK, "%s", err.message);
    e = max_abs_diff(Xa, Xb, n * N);
    CHECK(e <= 1e-12, "%s: inflation 1.1 vs inflated prior: %g", MNAME[method], e);
    /* uninformative observations: spread x 1.1 */
    cfg.inflation = 1.1;
    memcpy(Xa, p.X, n * N * sizeof(double));
    CHECK(analyse(&cfg, n, N, Xa, m, p.HX, p.y, huge, 0, &info, &err) == SL_OK, "%s",
          err.message);
    ens_stats(n, N, Xa, am, aP);
    for (i = 0; i < n; i++) {
        double r = sqrt(aP[i + i * n] / P[i + i * n]);
        if (fabs(r - 1.1) > ratio)
            ratio = fabs(r - 1.1);
        CHECK(fabs(am[i] - xm[i]) <= 1e-12, "mean moved by %g", am[i] - xm[i]);
    }
    printf("  %-5s inflation 1.1: vs inflated prior %.1e, |spread ratio - 1.1| %.1e\n",
           MNAME[method], e, ratio);
    CHECK(ratio <= 1e-12, "%s: spread ratio off 1.1 by %g", MNAME[method], ratio);
    ck_free(Xa);
    ck_free(Xb);
    ck_free(xm);
    ck_free(P);
    ck_free(am);
    ck_free(aP);
    free_problem(&p);
    free_problem(&q);
}

/* RTPP (Zhang et al. 2004): a = 1 gives the prior perturbations (after
 * inflation) about the analysis mean, a = 0.3 the mix 0.7 Xa' + 0.3 Xf'.
 * RTPS (Whitaker & Hamill 2012): a = 1 gives the prior spread (after
 * inflation) with the analysis perturbations' shape, a = 0.4 the factor
 * 1 + 0.4 (sf - sa) / sa. */
static void test_relaxation(int method)
{
    const size_t n = 4, N = 8, m = 2;
    const double infl = 1.1, as[2] = {1.0, 0.3}, bs[2] = {1.0, 0.4};
    problem p;
    double *X0 = dalloc(n * N), *Xr = dalloc(n * N), *xf = dalloc(n), *xa = dalloc(n);
    double e1 = 0.0, e2 = 0.0;
    sl_enkf_config cfg = config(method);
    sl_localization loc;
    double spos[4] = {0, 1, 2, 3}, opos[2] = {0.5, 2.5}, oc[2] = {1e9, 1e9};
    sl_enkf_info info;
    sl_error err;
    size_t i, j, t;
    make_problem(&p, n, N, m, 31337);
    if (method == SL_ENKF_LETKF) {
        memset(&loc, 0, sizeof loc);
        loc.geometry = SL_GEOM_LINE;
        loc.dim = 1;
        loc.state_pos = spos;
        loc.obs_pos = opos;
        loc.obs_c = oc;
        loc.param_factor = 1.0;
        cfg.loc = &loc;
    }
    cfg.inflation = infl;
    analyse_problem(&cfg, &p, NULL, X0, &info, &err);
    for (t = 0; t < 2; t++) {
        /* RTPP */
        cfg.rtpp = as[t];
        cfg.rtps = 0;
        CHECK(analyse_problem(&cfg, &p, NULL, Xr, &info, &err) == SL_OK, "%s", err.message);
        for (i = 0; i < n; i++) {
            xf[i] = xa[i] = 0;
            for (j = 0; j < N; j++) {
                xf[i] += p.X[i + j * n] / (double)N;
                xa[i] += X0[i + j * n] / (double)N;
            }
            for (j = 0; j < N; j++) {
                double fp = infl * (p.X[i + j * n] - xf[i]), ap = X0[i + j * n] - xa[i];
                double want = xa[i] + (1 - as[t]) * ap + as[t] * fp;
                if (fabs(Xr[i + j * n] - want) > e1)
                    e1 = fabs(Xr[i + j * n] - want);
            }
        }
        /* RTPS */
        cfg.rtpp = 0;
        cfg.rtps = bs[t];
        CHECK(analyse_problem(&cfg, &p, NULL, Xr, &info, &err) == SL_OK, "%s", err.message);
        for (i = 0; i < n; i++) {
            double sf = 0, sa = 0, f;
            for (j = 0; j < N; j++) {
                double fp = infl * (p.X[i + j * n] - xf[i]), ap = X0[i + j * n] - xa[i];
                sf += fp * fp;
                sa += ap * ap;
            }
            sf = sqrt(sf / (double)(N - 1));
            sa = sqrt(sa / (double)(N - 1));
            f = 1 + bs[t] * (sf - sa) / sa;
            for (j = 0; j < N; j++) {
                double want = xa[i] + f * (X0[i + j * n] - xa[i]);
                if (fabs(Xr[i + j * n] - want) > e2)
                    e2 = fabs(Xr[i + j * n] - want);
            }
            if (t == 0) {
                double s = 0, mu = 0;
                for (j = 0; j < N; j++)
                    mu += Xr[i + j * n] / (double)N;
                for (j = 0; j < N; j++)
                    s += (Xr[i + j * n] - mu) * (Xr[i + j * n] - mu);
                CHECK(fabs(sqrt(s / (double)(N - 1)) - sf) <= 1e-12 * sf,
                      "%s RTPS 1: spread %g, prior %g", MNAME[method],
                      sqrt(s / (double)(N - 1)), sf);
            }
        }
    }
    printf("  %-5s RTPP (a = 1, 0.3) max err %.1e, RTPS (a = 1, 0.4) max err %.1e\n",
           MNAME[method], e1, e2);
    CHECK(e1 <= 1e-12, "%s RTPP: %g", MNAME[method], e1);
    CHECK(e2 <= 1e-12, "%s RTPS: %g", MNAME[method], e2);
    ck_free(X0);
    ck_free(Xr);
    ck_free(xf);
    ck_free(xa);
    free_problem(&p);
}

/* ---------------------------------------------------- localisation */

/* The serial square-root filter as usually written (Whitaker & Hamill
 * 2002): for each observation in turn, every state row and
 * every remaining predicted observation is updated, the covariance with
 * the observation weighted by Gaspari-Cohn (state i: distance to the
 * observation; observation l: distance between the two; half-width of the
 * observation assimilated; rows with NaN position: weight pf). */
static void serial_reference(size_t n, size_t N, double *X, size_t m,
                             const double *HX, const double *y, const double *rd,
                             const double *spos, const double *opos,
                             const double *oc, double pf)
{
    const size_t v = n + m;
    double *Z = dalloc(v * N), *yk = dalloc(N);
    size_t i, j, k;
    for (j = 0; j < N; j++) {
        memcpy(Z + j * v, X + j * n, n * sizeof(double));
        memcpy(Z + j * v + n, HX + j * m, m * sizeof(double));
    }
    for (k = 0; k < m; k++) {
        double ym = 0, s = 0, d, alpha;
        for (j = 0; j < N; j++)
            ym += Z[n + k + j * v] / (double)N;
        for (j = 0; j < N; j++) {
            yk[j] = Z[n + k + j * v] - ym;
            s += yk[j] * yk[j] / (double)(N - 1);
        }
        d = y[k] - ym;
        alpha = 1.0 / (1.0 + sqrt(rd[k] / (s + rd[k])));
        for (i = 0; i < v; i++) {
            double zm = 0, cov = 0, rho, K;
            if (i >= n && i - n <= k)
                continue;
            if (i < n)
                rho = isnan(spos[i]) ? pf : gc(spos[i] - opos[k], oc[k]);
            else
                rho = gc(opos[i - n] - opos[k], oc[k]);
            for (j = 0; j < N; j++)
                zm += Z[i + j * v] / (double)N;
            for (j = 0; j < N; j++)
                cov += (Z[i + j * v] - zm) * yk[j] / (double)(N - 1);
            K = rho * cov / (s + rd[k]);
            for (j = 0; j < N; j++)
                Z[i + j * v] = zm + K * d + (Z[i + j * v] - zm) - alpha * K * yk[j];
        }
    }
    for (j = 0; j < N; j++)
        memcpy(X + j * n, Z + j * v, n * sizeof(double));
    ck_free(Z);
    ck_free(yk);
}

static void test_localization(void)
{
    enum { n = 7, N = 10, m = 4 };
    static const int methods[] = {SL_ENKF_STOCHASTIC, SL_ENKF_ENSRF, SL_ENKF_EAKF};
    problem p;
    double spos[n] = {0, 1, 2, 3, 4, NAN, 6}, opos[m] = {0.4, 1.9, 3.2, 5.5};
    double big[m], oc[m] = {1.1, 1.6, 2.1, 1.3}, tiny[m];
    double *Xa = dalloc(n * N), *Xb = dalloc(n * N), *Xr = dalloc(n * N);
    sl_localization loc;
    sl_enkf_info info;
    sl_error err;
    size_t q, i, j, k;
    make_problem(&p, n, N, m, 2718);
    for (k = 0; k < m; k++) {
        big[k] = 1e9;
        tiny[k] = 0.05;
    }
    for (q = 0; q < 3; q++) {
        sl_enkf_config cfg = config(methods[q]);
        double e;
        int same = 1;
        /* a huge half-width (weights 1, the row without position at full
         * weight) is no localisation */
        CHECK(analyse_problem(&cfg, &p, NULL, Xa, &info, &err) == SL_OK, "%s", err.message);
        line_localization(&loc, spos, opos, big, 1.0);
        cfg.loc = &loc;
        CHECK(analyse_problem(&cfg, &p, NULL, Xb, &info, &err) == SL_OK, "%s", err.message);
        e = max_abs_diff(Xa, Xb, n * N);
        printf("  %-5s localisation with c = 1e9 vs none: %.1e\n", MNAME[methods[q]], e);
        CHECK(e <= 1e-12, "%s huge radius: %g", MNAME[methods[q]], e);
        /* a tiny one (c = 0.05: reach 0.1) leaves the rows no observation
         * reaches exactly as they were; row 0 moved to 0.38, 0.02 from
         * observation 1, and the row without position (weight 0.5) move */
        line_localization(&loc, spos, opos, tiny, 0.5);
        spos[0] = 0.38; /* within reach of observation 1 */
        CHECK(analyse_problem(&cfg, &p, NULL, Xb, &info, &err) == SL_OK, "%s", err.message);
        for (i = 0; i < n; i++) {
            int unchanged = 1;
            for (j = 0; j < N; j++)
                if (Xb[i + j * n] != p.X[i + j * n])
                    unchanged = 0;
            if (i == 0 || i == 5)
                CHECK(!unchanged, "%s: row %lu should move", MNAME[methods[q]], (unsigned long)i);
            else if (!unchanged)
                same = 0;
        }
        spos[0] = 0.0;
        CHECK(same, "%s: rows out of reach moved", MNAME[methods[q]]);
        /* the row without position at weight 0.5 under one observation:
         * its increment is half the unlocalised one (Schur product of
         * the gain; exact for a single observation) */
        {
            problem o;
            double Xn[n * N], Xl[n * N], emax = 0.0;
            make_problem(&o, n, N, 1, 99);
            cfg.loc = NULL;
            analyse_problem(&cfg, &o, NULL, Xn, &info, &err);
            line_localization(&loc, spos, opos, oc, 0.5);
            cfg.loc = &loc;
            analyse_problem(&cfg, &o, NULL, Xl, &info, &err);
            for (j = 0; j < N; j++) {
                double dn = Xn[5 + j * n] - o.X[5 + j * n], dl = Xl[5 + j * n] - o.X[5 + j * n];
                if (fabs(dl - 0.5 * dn) > emax)
                    emax = fabs(dl - 0.5 * dn);
            }
            CHECK(emax <= 1e-12, "%s: param_factor 0.5 increment off by %g", MNAME[methods[q]],
                  emax);
            free_problem(&o);
        }
        /* localised serial filters against the textbook sweep */
        if (methods[q] != SL_ENKF_STOCHASTIC) {
            line_localization(&loc, spos, opos, oc, 0.7);
            cfg.loc = &loc;
            CHECK(analyse_problem(&cfg, &p, NULL, Xb, &info, &err) == SL_OK, "%s", err.message);
            memcpy(Xr, p.X, n * N * sizeof(double));
            serial_reference(n, N, Xr, m, p.HX, p.y, p.rd, spos, opos, oc, 0.7);
            e = max_abs_diff(Xb, Xr, n * N);
            printf("  %-5s localised vs the observation-by-observation sweep: %.1e\n",
                   MNAME[methods[q]], e);
            CHECK(e <= 1e-12, "%s localised serial: %g", MNAME[methods[q]], e);
        }
    }
    /* localised stochastic EnKF against its formula, replayed noise:
     * K = (rho_xo o P H^T)(rho_oo o H P H^T + R)^{-1}, the weights between
     * observations with the mean of the two half-widths (the module's
     * documented rule) */
    {
        sl_enkf_config cfg = config(SL_ENKF_STOCHASTIC);
        double xm[n], P[n * n], HP[m * n], E[m * N], emax = 0.0;
        gsl_matrix *S = gsl_matrix_alloc(m, m);
        gsl_vector *b = gsl_vector_alloc(m), *z = gsl_vector_alloc(m);
        size_t l, t;
        line_localization(&loc, spos, opos, oc, 0.6);
        cfg.loc = &loc;
        CHECK(analyse_problem(&cfg, &p, NULL, Xb, &info, &err) == SL_OK, "%s", err.message);
        ens_stats(n, N, p.X, xm, P);
        for (k = 0; k < m; k++)
            for (i = 0; i < n; i++) {
                double s = 0;
                for (t = 0; t < n; t++)
                    s += p.H[k + t * m] * P[t + i * n];
                HP[k + i * m] = s;
            }
        for (k = 0; k < m; k++)
            for (l = 0; l < m; l++) {
                double s = k == l ? p.rd[k] : 0.0, hph = 0.0;
                for (t = 0; t < n; t++)
                    hph += HP[k + t * m] * p.H[l + t * m];
                s += hph * (k == l ? 1.0 : gc(opos[k] - opos[l], 0.5 * (oc[k] + oc[l])));
                gsl_matrix_set(S, k, l, s);
            }
        gsl_linalg_cholesky_decomp1(S);
        sl_normals_members(cfg.seed, 0, N, cfg.cycle, SL_PURPOSE_ANALYSIS, m, E, m);
        for (j = 0; j < N; j++) {
            for (k = 0; k < m; k++)
                gsl_vector_set(b, k, p.y[k] + sqrt(p.rd[k]) * E[k + j * m] - p.HX[k + j * m]);
            gsl_linalg_cholesky_solve(S, b, z);
            for (i = 0; i < n; i++) {
                double x = p.X[i + j * n];
                for (k = 0; k < m; k++) {
                    double rho = isnan(spos[i]) ? 0.6 : gc(spos[i] - opos[k], oc[k]);
                    x += rho * HP[k + i * m] * gsl_vector_get(z, k);
                }
                if (fabs(x - Xb[i + j * n]) > emax)
                    emax = fabs(x - Xb[i + j * n]);
            }
        }
        printf("  enkf  localised vs (rho o PH')(rho o HPH' + R)^-1, replayed noise: %.1e\n", emax);
        CHECK(emax <= 1e-10, "localised stochastic EnKF: %g", emax);
        gsl_matrix_free(S);
        gsl_vector_free(b);
        gsl_vector_free(z);
    }
    ck_free(Xa);
    ck_free(Xb);
    ck_free(Xr);
    free_problem(&p);
}

/* The innovation statistic when the serial filters are localised, both
 * ways it is computed (m <= N: m x m system; m > N: ensemble space), and
 * through the LETKF, against d^T (HPH^T + R)^{-1} d. */
static void test_innov_dof(void)
{
    static const size_t Ms[2] = {3, 9};
    static const int methods[] = {SL_ENKF_ENSRF, SL_ENKF_LETKF};
    size_t t, q, i, k;
    for (t = 0; t < 2; t++) {
        const size_t n = 4, N = 6, m = Ms[t];
        problem p;
        double xm[4], P[16], xa[4], Pa[16], dof, spos[4], opos[9], oc[9];
        double *Xa = dalloc(n * N);
        sl_localization loc;
        make_problem(&p, n, N, m, 60 + t);
        for (i = 0; i < n; i++)
            spos[i] = (double)i;
        for (k = 0; k < m; k++) {
            opos[k] = 0.5 * (double)k;
            oc[k] = 2.0;
        }
        line_localization(&loc, spos, opos, oc, 1.0);
        ens_stats(n, N, p.X, xm, P);
        kalman(n, m, xm, P, p.H, p.y, p.Rdiag, xa, Pa, NULL, &dof);
        for (q = 0; q < 2; q++) {
            sl_enkf_config cfg = config(methods[q]);
            sl_enkf_info info;
            sl_error err;
            cfg.loc = &loc;
            CHECK(analyse_problem(&cfg, &p, NULL, Xa, &info, &err) == SL_OK, "%s", err.message);
            CHECK(fabs(info.innov_dof - dof) <= 1e-10 * dof, "%s m=%lu: innov_dof %.17g vs %.17g",
                  MNAME[methods[q]], (unsigned long)m, info.innov_dof, dof);
        }
        ck_free(Xa);
        free_problem(&p);
    }
}

/* ------------------------------------------------- LETKF through here */

/* With every observation in reach at weight 1 (a huge half-width) the
 * local analyses are the global ETKF at every row (Hunt et al. 2007). */
static void test_letkf_dispatch(void)
{
    const size_t n = 5, N = 8, m = 3;
    problem p;
    double spos[5] = {0, 1, 2, 3, 4}, opos[3] = {0.5, 2, 3.5}, oc[3] = {1e9, 1e9, 1e9};
    double *Xa = dalloc(n * N), *Xb = dalloc(n * N), e;
    sl_localization loc;
    sl_enkf_config ce = config(SL_ENKF_ETKF), cl = config(SL_ENKF_LETKF);
    sl_enkf_info ie, il;
    sl_error err;
    make_problem(&p, n, N, m, 808);
    line_localization(&loc, spos, opos, oc, 1.0);
    cl.loc = &loc;
    ce.inflation = cl.inflation = 1.05;
    ce.rtps = cl.rtps = 0.5;
    CHECK(analyse_problem(&ce, &p, NULL, Xa, &ie, &err) == SL_OK, "%s", err.message);
    CHECK(analyse_problem(&cl, &p, NULL, Xb, &il, &err) == SL_OK, "%s", err.message);
    e = max_abs_diff(Xa, Xb, n * N);
    printf("  letkf (c = 1e9) vs etkf, with inflation and RTPS: %.1e\n", e);
    CHECK(e <= 1e-10, "LETKF with everything in reach vs ETKF: %g", e);
    CHECK(fabs(ie.innov_dof - il.innov_dof) <= 1e-10 * ie.innov_dof, "innov_dof %g vs %g",
          ie.innov_dof, il.innov_dof);
    ck_free(Xa);
    ck_free(Xb);
    free_problem(&p);
}

/* ------------------------------------------------- ill-conditioning */

/* Duplicated members and observations 1e14 times more precise than the
 * spread: the eigenvalues of (N - 1) I + S^T S lie 1e28 apart, beyond what
 * dsyev resolves; the floor catches them, counts them, and the analysis
 * stays finite and centred. A floor of 0.5 floors a sound problem too. */
static void test_floor(void)
{
    const size_t n = 3, N = 8, m = 2;
    problem p;
    double *Xa = dalloc(n * N), tiny[2] = {1e-28, 1e-28};
    sl_enkf_config cfg = config(SL_ENKF_ETKF);
    sl_enkf_info info;
    sl_error err;
    size_t i, j;
    make_problem(&p, n, N, m, 123);
    for (j = N / 2; j < N; j++)
        memcpy(p.X + j * n, p.X + (j - N / 2) * n, n * sizeof(double));
    set_obs(&p);
    memcpy(Xa, p.X, n * N * sizeof(double));
    CHECK(analyse(&cfg, n, N, Xa, m, p.HX, p.y, tiny, 0, &info, &err) == SL_OK, "%s",
          err.message);
    printf("  etkf duplicated members, r = 1e-28: %lu eigenvalues floored\n",
           (unsigned long)info.floored);
    CHECK(info.floored > 0, "nothing floored");
    for (i = 0; i < n * N; i++)
        if (!isfinite(Xa[i]))
            break;
    CHECK(i == n * N, "non-finite analysis after flooring");
    CHECK(isfinite(info.innov_dof), "innov_dof %g", info.innov_dof);
    cfg.eig_floor = 0.5;
    CHECK(analyse_problem(&cfg, &p, NULL, Xa, &info, &err) == SL_OK, "%s", err.message);
    CHECK(info.floored > 0, "floor 0.5: nothing floored");
    for (i = 0; i < n * N; i++)
        if (!isfinite(Xa[i]))
            break;
    CHECK(i == n * N, "non-finite analysis with floor 0.5");
    ck_free(Xa);
    free_problem(&p);
}

/* ------------------------------------------------- threads */

static void test_threads(void)
{
    const size_t n = 70, N = 12, m = 5; /* more rows than one block */
    problem p;
    double *Xa = dalloc(n * N), *Xb = dalloc(n * N), spos[70], opos[5], oc[5];
    sl_localization loc;
    size_t i;
    int method;
    make_problem(&p, n, N, m, 4711);
    for (i = 0; i < n; i++)
        spos[i] = (double)i;
    for (i = 0; i < m; i++) {
        opos[i] = 14.0 * (double)i + 3;
        oc[i] = 10.0;
    }
    line_localization(&loc, spos, opos, oc, 1.0);
    for (method = 0; method < SL_ENKF_COUNT; method++) {
        sl_enkf_config cfg = config(method);
        sl_enkf_info info;
        sl_error err;
        if (method != SL_ENKF_ETKF)
            cfg.loc = &loc;
        cfg.inflation = 1.07;
        cfg.rtpp = 0.2;
        CHECK(analyse_problem(&cfg, &p, NULL, Xa, &info, &err) == SL_OK, "%s %s",
              MNAME[method], err.message);
        cfg.threads = 3;
        CHECK(analyse_problem(&cfg, &p, NULL, Xb, &info, &err) == SL_OK, "%s %s",
              MNAME[method], err.message);
        CHECK(memcmp(Xa, Xb, n * N * sizeof(double)) == 0, "%s depends on the threads",
              MNAME[method]);
    }
    ck_free(Xa);
    ck_free(Xb);
    free_problem(&p);
}


/* ------------------------------------------------------------- polls */

/* What the analysis did between the calls of its poll: the rows of X it
 * had changed by each call, so the work between two calls is counted in
 * rows (not timed). */
typedef struct {
    const double *X, *X0;
    size_t n, N;
    size_t calls, stop_at;       /* stop_at: answer 1 at that call (0: never) */
    size_t changed;              /* rows changed at the last call */
    size_t most_between;         /* most rows changed between two calls */
    size_t before_change;        /* calls made before any row changed */
    double fraction;
} poll_log;

static size_t rows_changed(const poll_log *q)
{
    size_t i, j, c = 0;
    for (i = 0; i < q->n; i++)
        for (j = 0; j < q->N; j++)
            if (q->X[i + j * q->n] != q->X0[i + j * q->n]) {
                c++;
                break;
            }
    return c;
}

static void log_rows(poll_log *q)
{
    size_t c = rows_changed(q);
    if (c - q->changed > q->most_between)
        q->most_between = c - q->changed;
    q->changed = c;
}

static int log_poll(void *ctx, double fraction)
{
    poll_log *q = (poll_log *)ctx;
    log_rows(q);
    if (q->changed == 0)
        q->before_change++;
    q->calls++;
    q->fraction = fraction;
    return q->stop_at != 0 && q->calls == q->stop_at;
}

/* Every global method polls before each block of BLOCK_ROWS (64) rows,
 * the ETKF also before its eigen-decomposition; a poll changes nothing
 * in the result, and a poll that answers 1 stops the analysis with
 * SL_EINTERRUPT. */
static void test_poll(void)
{
    const size_t n = 300, N = 8, m = 12;
    static const struct { int method, form; const char *name; size_t most, before; } cases[] = {
        {SL_ENKF_ETKF, SL_ETKF_ENSEMBLE, "etkf, ensemble space", 64, 2},
        {SL_ENKF_ETKF, SL_ETKF_OBSERVATION, "etkf, observation space", 300, 2},
        {SL_ENKF_STOCHASTIC, 0, "enkf", 64, 1},
        {SL_ENKF_ENSRF, 0, "ensrf", 64, 1},
        {SL_ENKF_EAKF, 0, "eakf", 64, 1},
    };
    problem p;
    double *Xa = dalloc(n * N), *Xb = dalloc(n * N);
    size_t q;
    sl_error err;
    make_problem(&p, n, N, m, 4711);
    for (q = 0; q < sizeof cases / sizeof *cases; q++) {
        sl_enkf_config cfg = config(cases[q].method);
        poll_log lg;
        sl_status st;
        cfg.etkf_form = cases[q].form;
        CHECK(analyse_problem(&cfg, &p, NULL, Xa, NULL, &err) == SL_OK, "%s: %s",
              cases[q].name, err.message);
        memset(&lg, 0, sizeof lg);
        lg.X = Xb;
        lg.X0 = p.X;
        lg.n = n;
        lg.N = N;
        cfg.poll = log_poll;
        cfg.poll_ctx = &lg;
        cfg.poll_fraction = 0.375;
        st = analyse_problem(&cfg, &p, NULL, Xb, NULL, &err);
        log_rows(&lg);
        CHECK(st == SL_OK, "%s with a poll: %s", cases[q].name, err.message);
        CHECK(memcmp(Xa, Xb, n * N * sizeof(double)) == 0,
              "%s: the poll changed the analysis", cases[q].name);
        CHECK(lg.changed == n, "%s: %lu of %lu rows changed", cases[q].name,
              (unsigned long)lg.changed, (unsigned long)n);
        CHECK(lg.most_between <= cases[q].most, "%s: %lu rows between two polls",
              cases[q].name, (unsigned long)lg.most_between);
        CHECK(lg.before_change >= cases[q].before, "%s: %lu polls before the first row",
              cases[q].name, (unsigned long)lg.before_change);
        CHECK(lg.fraction == 0.375, "%s: the poll was told %g", cases[q].name, lg.fraction);
        printf("  poll, %s: %lu calls, at most %lu rows between two\n", cases[q].name,
               (unsigned long)lg.calls, (unsigned long)lg.most_between);
        /* stopped at its second call */
        memset(&lg, 0, sizeof lg);
        lg.X = Xb;
        lg.X0 = p.X;
        lg.n = n;
        lg.N = N;
        lg.stop_at = 2;
        st = analyse_problem(&cfg, &p, NULL, Xb, NULL, &err);
        CHECK(st == SL_EINTERRUPT && strcmp(err.reason, "interrupted") == 0,
              "%s stopped by its poll: status %d, reason %s", cases[q].name, (int)st, err.reason);
        CHECK(lg.calls == 2, "%s: %lu polls after the stop", cases[q].name, (unsigned long)lg.calls);
    }
    /* the LETKF through the same entry (its batches: test_letkf.c) */
    {
        double *spos = dalloc(n), opos[12], oc[12];
        sl_localization loc;
        sl_enkf_config cfg = config(SL_ENKF_LETKF);
        poll_log lg;
        size_t i, k;
        for (i = 0; i < n; i++)
            spos[i] = (double)i;
        for (k = 0; k < m; k++) {
            opos[k] = 25.0 * (double)k;
            oc[k] = 10.0;
        }
        line_localization(&loc, spos, opos, oc, 1.0);
        cfg.loc = &loc;
        memset(&lg, 0, sizeof lg);
        lg.X = Xb;
        lg.X0 = p.X;
        lg.n = n;
        lg.N = N;
        lg.stop_at = 1;
        cfg.poll = log_poll;
        cfg.poll_ctx = &lg;
        CHECK(analyse_problem(&cfg, &p, NULL, Xb, NULL, &err) == SL_EINTERRUPT &&
                  strcmp(err.reason, "interrupted") == 0,
              "letkf stopped by its poll: %s", err.reason);
        CHECK(memcmp(Xb, p.X, n * N * sizeof(double)) == 0,
              "a stopped LETKF analysis left the ensemble changed");
        ck_free(spos);
    }
    ck_free(Xa);
    ck_free(Xb);
    free_problem(&p);
}

/* ------------------------------------------------- errors */

static void expect_fail(const sl_enkf_config *cfg, const double *X,
                        const double *HX, const double *y, const double *R, int r_full,
                        size_t n, size_t N, size_t m, sl_status status,
                        const char *reason, const char *what)
{
    double *Xc = dalloc(n * N > 0 ? n * N : 1);
    sl_enkf_info info;
    sl_error err;
    sl_status st;
    if (X != NULL)
        memcpy(Xc, X, n * N * sizeof(double));
    st = analyse(cfg, n, N, X != NULL ? Xc : NULL, m, HX, y, R, r_full, &info, &err);
    CHECK(st == status && strcmp(err.reason, reason) == 0,
          "%s: got status %d reason '%s' (%s), expected %d '%s'", what, (int)st, err.reason,
          err.message, (int)status, reason);
    CHECK(err.message[0] != '\0', "%s: no message", what);
    if (X != NULL)
        CHECK(memcmp(Xc, X, n * N * sizeof(double)) == 0, "%s: X changed", what);
    ck_free(Xc);
}

static void test_errors(void)
{
    const size_t n = 3, N = 6, m = 2;
    problem p;
    double spos[3] = {0, 1, 2}, opos[2] = {0, 2}, oc[2] = {1, 1};
    double *bad = NULL, Rf[4], Rb[4];
    sl_localization loc, lb;
    sl_enkf_config cfg;
    sl_error err;
    size_t q;
    make_problem(&p, n, N, m, 5);
    line_localization(&loc, spos, opos, oc, 1.0);

    CHECK(sl_enkf_method_find("enkf") == SL_ENKF_STOCHASTIC &&
              sl_enkf_method_find("etkf") == SL_ENKF_ETKF &&
              sl_enkf_method_find("ensrf") == SL_ENKF_ENSRF &&
              sl_enkf_method_find("eakf") == SL_ENKF_EAKF &&
              sl_enkf_method_find("letkf") == SL_ENKF_LETKF,
          "method names");
    CHECK(sl_enkf_method_find("ETKF") == -1 && sl_enkf_method_find("") == -1 &&
              sl_enkf_method_find(NULL) == -1,
          "unknown method names");

    /* badconfig */
    cfg = config(SL_ENKF_ETKF);
    sl_error_clear(&err);
    CHECK(sl_enkf_analysis(NULL, n, N, p.X, m, p.HX, p.y, p.rd, 0, &err, NULL, &err) ==
                  SL_EINVAL && strcmp(err.reason, "badconfig") == 0,
          "NULL configuration");
    cfg.method = 7;
    expect_fail(&cfg, p.X, p.HX, p.y, p.rd, 0, n, N, m, SL_EINVAL, "badconfig", "method 7");
    cfg = config(SL_ENKF_ETKF);
    cfg.inflation = 0.9;
    expect_fail(&cfg, p.X, p.HX, p.y, p.rd, 0, n, N, m, SL_EINVAL, "badconfig", "inflation 0.9");
    cfg.inflation = NAN;
    expect_fail(&cfg, p.X, p.HX, p.y, p.rd, 0, n, N, m, SL_EINVAL, "badconfig", "inflation NaN");
    cfg.inflation = HUGE_VAL;
    expect_fail(&cfg, p.X, p.HX, p.y, p.rd, 0, n, N, m, SL_EINVAL, "badconfig", "inflation Inf");
    cfg = config(SL_ENKF_ETKF);
    cfg.rtpp = 1.5;
    expect_fail(&cfg, p.X, p.HX, p.y, p.rd, 0, n, N, m, SL_EINVAL, "badconfig", "rtpp 1.5");
    cfg = config(SL_ENKF_ETKF);
    cfg.rtps = -0.1;
    expect_fail(&cfg, p.X, p.HX, p.y, p.rd, 0, n, N, m, SL_EINVAL, "badconfig", "rtps -0.1");
    cfg = config(SL_ENKF_ETKF);
    cfg.threads = 0;
    expect_fail(&cfg, p.X, p.HX, p.y, p.rd, 0, n, N, m, SL_EINVAL, "badconfig", "threads 0");
    cfg = config(SL_ENKF_ETKF);
    cfg.eig_floor = 1.0;
    expect_fail(&cfg, p.X, p.HX, p.y, p.rd, 0, n, N, m, SL_EINVAL, "badconfig", "floor 1");
    cfg.eig_floor = -1e-3;
    expect_fail(&cfg, p.X, p.HX, p.y, p.rd, 0, n, N, m, SL_EINVAL, "badconfig", "floor < 0");
    cfg = config(SL_ENKF_ETKF);
    expect_fail(&cfg, p.X, p.HX, p.y, p.rd, 2, n, N, m, SL_EINVAL, "badconfig", "r_full 2");
    expect_fail(&cfg, p.X, p.HX, NULL, p.rd, 0, n, N, m, SL_EINVAL, "badconfig", "y NULL");
    sl_error_clear(&err);
    CHECK(sl_enkf_analysis(&cfg, n, N, p.X, m, p.HX, p.y, p.rd, 0, NULL, NULL, &err) ==
                  SL_EINVAL && strcmp(err.reason, "badconfig") == 0,
          "NULL workspace");

    /* badsize */
    expect_fail(&cfg, p.X, p.HX, p.y, p.rd, 0, n, 1, m, SL_EINVAL, "badsize", "one member");
    expect_fail(&cfg, p.X, p.HX, p.y, p.rd, 0, n, N, 0, SL_EINVAL, "badsize", "no observation");
    expect_fail(&cfg, p.X, p.HX, p.y, p.rd, 0, 0, N, m, SL_EINVAL, "badsize", "no state row");

    /* nonfinite */
    bad = dup(p.X, n * N);
    bad[7] = NAN;
    expect_fail(&cfg, bad, p.HX, p.y, p.rd, 0, n, N, m, SL_EINVAL, "nonfinite", "X NaN");
    ck_free(bad);
    bad = dup(p.HX, m * N);
    bad[3] = -HUGE_VAL;
    expect_fail(&cfg, p.X, bad, p.y, p.rd, 0, n, N, m, SL_EINVAL, "nonfinite", "HX -Inf");
    ck_free(bad);
    bad = dup(p.y, m);
    bad[1] = NAN;
    expect_fail(&cfg, p.X, p.HX, bad, p.rd, 0, n, N, m, SL_EINVAL, "nonfinite", "y NaN");
    ck_free(bad);
    bad = dup(p.rd, m);
    bad[0] = HUGE_VAL;
    expect_fail(&cfg, p.X, p.HX, p.y, bad, 0, n, N, m, SL_EINVAL, "nonfinite", "R Inf");
    ck_free(bad);

    /* notpd: a variance <= 0, a full R not positive definite, not
     * symmetric */
    bad = dup(p.rd, m);
    bad[1] = 0.0;
    for (q = 0; q < SL_ENKF_COUNT; q++) {
        cfg = config((int)q);
        if (q == SL_ENKF_LETKF)
            cfg.loc = &loc;
        expect_fail(&cfg, p.X, p.HX, p.y, bad, 0, n, N, m, SL_ENUMERIC, "notpd",
                    "zero variance");
    }
    ck_free(bad);
    Rf[0] = 1.0;
    Rf[1] = Rf[2] = 2.0;
    Rf[3] = 1.0; /* eigenvalues 3 and -1 */
    cfg = config(SL_ENKF_ETKF);
    expect_fail(&cfg, p.X, p.HX, p.y, Rf, 1, n, N, m, SL_ENUMERIC, "notpd", "indefinite R");
    cfg = config(SL_ENKF_STOCHASTIC);
    expect_fail(&cfg, p.X, p.HX, p.y, Rf, 1, n, N, m, SL_ENUMERIC, "notpd", "indefinite R");
    Rb[0] = 1.0;
    Rb[1] = 0.2;
    Rb[2] = 0.3;
    Rb[3] = 1.0;
    expect_fail(&cfg, p.X, p.HX, p.y, Rb, 1, n, N, m, SL_ENUMERIC, "notpd", "asymmetric R");

    /* nondiagonal: the serial methods and the LETKF; a full R that is
     * diagonal is accepted */
    Rb[2] = 0.2;
    for (q = SL_ENKF_ENSRF; q <= SL_ENKF_LETKF; q++) {
        sl_enkf_info info;
        double Rd[4] = {p.rd[0], 0, 0, p.rd[1]}, *Xa = dalloc(n * N), *Xb = dalloc(n * N);
        cfg = config((int)q);
        if (q == SL_ENKF_LETKF)
            cfg.loc = &loc;
        expect_fail(&cfg, p.X, p.HX, p.y, Rb, 1, n, N, m, SL_EINVAL, "nondiagonal",
                    MNAME[q]);
        memcpy(Xa, p.X, n * N * sizeof(double));
        memcpy(Xb, p.X, n * N * sizeof(double));
        CHECK(analyse(&cfg, n, N, Xa, m, p.HX, p.y, Rd, 1, &info, &err) == SL_OK &&
                  analyse(&cfg, n, N, Xb, m, p.HX, p.y, p.rd, 0, &info, &err) == SL_OK &&
                  memcmp(Xa, Xb, n * N * sizeof(double)) == 0,
              "%s: a diagonal full R is the same as the variances", MNAME[q]);
        ck_free(Xa);
        ck_free(Xb);
    }

    /* nonfinite analysis: an ensemble near the largest double overflows
     * the covariances; reported before X is touched */
    {
        double *Xh = dup(p.X, n * N), *Hh = dalloc(m * N), y0[2] = {0, 0}, r1[2] = {1, 1};
        size_t j;
        for (j = 0; j < n * N; j++)
            Xh[j] *= 1e200;
        for (j = 0; j < N; j++) {
            Hh[0 + j * m] = Xh[0 + j * n];
            Hh[1 + j * m] = Xh[1 + j * n];
        }
        for (q = 0; q < SL_ENKF_COUNT; q++) {
            cfg = config((int)q);
            if (q == SL_ENKF_LETKF)
                cfg.loc = &loc;
            expect_fail(&cfg, Xh, Hh, y0, r1, 0, n, N, m, SL_ENUMERIC, "nonfinite", MNAME[q]);
        }
        ck_free(Xh);
        ck_free(Hh);
    }

    /* badlocalization */
    cfg = config(SL_ENKF_LETKF);
    expect_fail(&cfg, p.X, p.HX, p.y, p.rd, 0, n, N, m, SL_EINVAL, "badlocalization",
                "LETKF without positions");
    cfg = config(SL_ENKF_ETKF);
    cfg.loc = &loc;
    expect_fail(&cfg, p.X, p.HX, p.y, p.rd, 0, n, N, m, SL_EINVAL, "badlocalization",
                "ETKF with localisation");
    for (q = 0; q < 9; q++) {
        double c2[2] = {1, 1}, o2[2] = {0, 2}, s3[3] = {0, 1, 2};
        lb = loc;
        lb.obs_c = c2;
        lb.obs_pos = o2;
        lb.state_pos = s3;
        switch (q) {
        case 0: lb.geometry = 9; break;
        case 1: lb.dim = 2; break;
        case 2: lb.geometry = SL_GEOM_RING; lb.period_or_radius = 0; break;
        case 3: c2[1] = 0; break;
        case 4: c2[0] = NAN; break;
        case 5: o2[1] = HUGE_VAL; break;
        case 6: s3[2] = HUGE_VAL; break;
        case 7: lb.param_factor = 0; break;
        default: lb.obs_pos = NULL; break;
        }
        cfg = config(q % 2 ? SL_ENKF_ENSRF : SL_ENKF_STOCHASTIC);
        cfg.loc = &lb;
        expect_fail(&cfg, p.X, p.HX, p.y, p.rd, 0, n, N, m, SL_EINVAL, "badlocalization",
                    "bad localisation");
    }

    /* workspace sizes: overflow gives 0; never shrinking as sizes grow */
    cfg = config(SL_ENKF_ETKF);
    CHECK(sl_enkf_workspace(NULL, n, N, m, 0) == 0, "workspace of no configuration");
    CHECK(sl_enkf_workspace(&cfg, n, SIZE_MAX / 4, m, 0) == 0, "absurd members");
    cfg = config(SL_ENKF_STOCHASTIC);
    CHECK(sl_enkf_workspace(&cfg, n, N, (size_t)1 << 31, 0) == 0, "absurd observations");
    for (q = 0; q < SL_ENKF_COUNT; q++) {
        size_t a, b2, c, d;
        cfg = config((int)q);
        a = sl_enkf_workspace(&cfg, 50, 40, 30, 0);
        b2 = sl_enkf_workspace(&cfg, 51, 40, 30, 0);
        c = sl_enkf_workspace(&cfg, 50, 41, 30, 0);
        d = sl_enkf_workspace(&cfg, 50, 40, 31, 0);
        CHECK(a > 0 && a <= b2 && a <= c && a <= d, "%s workspace not monotone", MNAME[q]);
        cfg.loc = &loc;
        cfg.rtps = 0.5;
        CHECK(sl_enkf_workspace(&cfg, 50, 40, 30, 0) == a,
              "%s workspace depends on localisation or relaxation", MNAME[q]);
    }
    /* the ETKF switches form at m = N: still never shrinking, in every
     * direction, over a grid across the switch (small and large blocks) */
    for (q = 0; q < 3; q++) {
        size_t nn, NN, mm, shrinks = 0;
        cfg = config(SL_ENKF_ETKF);
        cfg.etkf_form = (int)q;
        for (nn = 1; nn <= 70; nn += 23)
            for (NN = 2; NN <= 40; NN++)
                for (mm = 1; mm <= 45; mm++) {
                    size_t a = sl_enkf_workspace(&cfg, nn, NN, mm, 0);
                    if (a == 0 || a > sl_enkf_workspace(&cfg, nn + 1, NN, mm, 0) ||
                        a > sl_enkf_workspace(&cfg, nn, NN + 1, mm, 0) ||
                        a > sl_enkf_workspace(&cfg, nn, NN, mm + 1, 0) ||
                        a > sl_enkf_workspace(&cfg, nn, NN, mm, 1))
                        shrinks++;
                }
        /* and where the observation form's row blocks stop shrinking
         * with N (about 2^20 doubles a block, at least 64 rows) */
        for (nn = 60; nn <= 5000; nn = nn < 70 ? nn + 1 : nn * 3)
            for (NN = 16360; NN <= 16400; NN++)
                for (mm = 1; mm <= 40; mm += 13) {
                    size_t a = sl_enkf_workspace(&cfg, nn, NN, mm, 0);
                    if (a == 0 || a > sl_enkf_workspace(&cfg, nn + 1, NN, mm, 0) ||
                        a > sl_enkf_workspace(&cfg, nn, NN + 1, mm, 0) ||
                        a > sl_enkf_workspace(&cfg, nn, NN, mm + 1, 0))
                        shrinks++;
                }
        CHECK(shrinks == 0, "etkf form %lu: workspace shrinks at %lu points", (unsigned long)q,
              (unsigned long)shrinks);
    }
    cfg = config(SL_ENKF_ETKF);
    cfg.etkf_form = 3;
    CHECK(sl_enkf_workspace(&cfg, n, N, m, 0) == 0, "workspace of an unknown form");
    expect_fail(&cfg, p.X, p.HX, p.y, p.rd, 0, n, N, m, SL_EINVAL, "badconfig",
                "unknown ETKF form");
    free_problem(&p);
}

int main(void)
{
    int method;
    gsl_set_error_handler_off();
    test_kalman_equivalence();
    test_etkf_symmetric();
    test_etkf_forms();
    test_etkf_large();
    test_stochastic_replay();
    test_stochastic_rate();
    for (method = 0; method < SL_ENKF_COUNT; method++) {
        test_inflation(method);
        test_relaxation(method);
    }
    test_localization();
    test_innov_dof();
    test_letkf_dispatch();
    test_floor();
    test_threads();
    test_poll();
    test_errors();
    CHECK_DONE("test_enkf");
}
