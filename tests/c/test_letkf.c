/* test_letkf.c - the LETKF: the global ETKF when nothing is localised, the
 * Kalman update with R / weight at each row when localised, every
 * geometry, thread counts, ill-conditioned local problems, bad input. */
#include "check.h"
#include "sluice/enkf.h"
#include "sluice/rng.h"
#include "../../src/enkf_internal.h"

#include <stdlib.h>
#include <gsl/gsl_eigen.h>
#include <gsl/gsl_linalg.h>
#include <gsl/gsl_matrix.h>

#define NMAX 600 /* rows */
#define EMAX 20  /* members */
#define MMAX 200 /* observations */

typedef struct {
    size_t n, N, m, dim;
    int geom;
    double per, pf;
    double X[NMAX * EMAX], X0[NMAX * EMAX], HX[MMAX * EMAX], y[MMAX], r[MMAX];
    double spos[NMAX * 2], opos[MMAX * 2], oc[MMAX];
    sl_localization loc;
    sl_enkf_config cfg;
} problem;

static problem P1, P2;

static double unif(sl_stream *s, double a, double b)
{
    return a + (b - a) * sl_stream_uniform(s);
}

/* Two smooth fields of position, so rows and observations are correlated
 * through the members' coefficients. */
static double field(const problem *p, const double *pos, int which)
{
    double x = pos[0], z = p->dim > 1 ? pos[1] : 0.0;
    if (p->geom == SL_GEOM_SPHERE) {
        double r = 3.14159265358979323846 / 180.0;
        return which ? cos(x * r) * cos(z * r) : sin(2 * x * r) * cos(z * r) + sin(z * r);
    }
    if (p->geom == SL_GEOM_RING) {
        double w = 2 * 3.14159265358979323846 / p->per;
        return which ? cos(w * x) : sin(2 * w * x);
    }
    return which ? cos(0.21 * x + 0.1 * z) : sin(0.13 * x - 0.17 * z);
}

static void random_position(problem *p, sl_stream *s, double *pos)
{
    switch (p->geom) {
    case SL_GEOM_LINE:
        pos[0] = unif(s, 0, 50);
        break;
    case SL_GEOM_RING:
        pos[0] = unif(s, -p->per, 2 * p->per); /* positions off the period too */
        break;
    case SL_GEOM_PLANE:
        pos[0] = unif(s, 0, 20);
        pos[1] = unif(s, -5, 15);
        break;
    default:
        pos[0] = unif(s, -180, 360);
        pos[1] = unif(s, 0, 1) < 0.2 ? unif(s, 80, 90) : unif(s, -90, 90);
    }
}

/* A random problem: rows at random places (one in five at the place of
 * the row before, some on the plane or sphere sharing only its first
 * coordinate, the last nparam rows not localised), observations at
 * random places with half-widths in [cmin, cmax]. */
static void make_problem(problem *p, int geom, size_t n, size_t N, size_t m,
                         size_t nparam, double cmin, double cmax, uint64_t seed)
{
    sl_stream s;
    size_t i, j, k;
    double a[EMAX], b[EMAX];
    memset(p, 0, sizeof *p);
    p->n = n;
    p->N = N;
    p->m = m;
    p->geom = geom;
    p->dim = geom == SL_GEOM_PLANE || geom == SL_GEOM_SPHERE ? 2 : 1;
    p->per = geom == SL_GEOM_RING ? 40.0 : (geom == SL_GEOM_SPHERE ? 10.0 : 0.0);
    p->pf = 0.7;
    sl_stream_init(&s, seed, 0, 0, SL_PURPOSE_USER);
    for (i = 0; i < n; i++) {
        double pos[2] = {0, 0};
        if (i + nparam >= n) {
            pos[0] = NAN;
        } else if (i > 0 && unif(&s, 0, 1) < 0.2) {
            pos[0] = p->spos[i - 1];
            pos[1] = p->dim > 1 ? p->spos[i - 1 + n] : 0.0;
        } else if (i > 0 && p->dim > 1 && unif(&s, 0, 1) < 0.15) {
            /* the first coordinate of the row before, another second one */
            random_position(p, &s, pos);
            pos[0] = p->spos[i - 1];
        } else {
            random_position(p, &s, pos);
        }
        p->spos[i] = pos[0];
        if (p->dim > 1)
            p->spos[i + n] = pos[1];
    }
    for (k = 0; k < m; k++) {
        double pos[2] = {0, 0};
        random_position(p, &s, pos);
        p->opos[k] = pos[0];
        if (p->dim > 1)
            p->opos[k + m] = pos[1];
        p->oc[k] = unif(&s, cmin, cmax);
        p->r[k] = unif(&s, 0.05, 0.6);
    }
    for (j = 0; j < N; j++) {
        a[j] = sl_stream_normal(&s);
        b[j] = sl_stream_normal(&s);
    }
    for (i = 0; i < n; i++) {
        double pos[2] = {p->spos[i], p->dim > 1 ? p->spos[i + n] : 0.0};
        for (j = 0; j < N; j++)
            p->X[i + j * n] = isnan(pos[0])
                                  ? 2.0 + 0.5 * a[j] - 0.2 * b[j] + 0.1 * sl_stream_normal(&s)
                                  : 1.5 + a[j] * field(p, pos, 0) + b[j] * field(p, pos, 1) +
                                        0.3 * sl_stream_normal(&s);
    }
    for (k = 0; k < m; k++) {
        double pos[2] = {p->opos[k], p->dim > 1 ? p->opos[k + m] : 0.0}, mean = 0;
        for (j = 0; j < N; j++) {
            p->HX[k + j * m] = 1.5 + a[j] * field(p, pos, 0) + b[j] * field(p, pos, 1) +
                               0.2 * sl_stream_normal(&s);
            mean += p->HX[k + j * m];
        }
        p->y[k] = mean / (double)N + 0.8 * sl_stream_normal(&s);
    }
    memcpy(p->X0, p->X, sizeof p->X);
    p->loc.geometry = geom;
    p->loc.period_or_radius = p->per;
    p->loc.dim = p->dim;
    p->loc.state_pos = p->spos;
    p->loc.obs_pos = p->opos;
    p->loc.obs_c = p->oc;
    p->loc.param_factor = p->pf;
    p->cfg.method = SL_ENKF_LETKF;
    p->cfg.inflation = 1.0;
    p->cfg.loc = &p->loc;
    p->cfg.threads = 1;
    p->cfg.eig_floor = 0.0;
}

static sl_status run(problem *p, sl_enkf_info *info, sl_error *err)
{
    size_t ws = sl_letkf_workspace(&p->cfg, p->n, p->N, p->m);
    void *work = ck_malloc(ws);
    sl_status st;
    memset(info, 0, sizeof *info);
    sl_error_clear(err);
    st = sl_letkf_run(&p->cfg, p->n, p->N, p->X, p->m, p->HX, p->y, p->r, work, info, err);
    ck_free(work);
    return st;
}

/* The localisation weight of observation k on row i, by brute force. */
static double weight(const problem *p, size_t i, size_t k)
{
    double a[2], b[2];
    if (isnan(p->spos[i]))
        return p->pf;
    a[0] = p->spos[i];
    a[1] = p->dim > 1 ? p->spos[i + p->n] : 0.0;
    b[0] = p->opos[k];
    b[1] = p->dim > 1 ? p->opos[k + p->m] : 0.0;
    return sl_gaspari_cohn(sl_distance(p->geom, p->per, a, b), p->oc[k]);
}

/* The Kalman update of row i with the observations of weight g > 0 and
 * error variances r / g (the covariance form of the analysis, e.g.
 * Jazwinski 1970; with sample covariances of the forecast ensemble):
 * mean xbar + P_iS (P_SS + R_S / g)^{-1} d_S, variance
 * P_ii - P_iS (P_SS + R_S / g)^{-1} P_Si. Returns the number used. */
static size_t kalman_row(const problem *p, size_t i, double *mean, double *var)
{
    const size_t n = p->n, N = p->N, m = p->m;
    size_t S[MMAX], ns = 0, a, c, j, k;
    double xp[EMAX], yb[MMAX][EMAX], g[MMAX], xbar = 0, pii = 0;
    for (j = 0; j < N; j++)
        xbar += p->X0[i + j * n];
    xbar /= (double)N;
    for (j = 0; j < N; j++) {
        xp[j] = p->X0[i + j * n] - xbar;
        pii += xp[j] * xp[j] / (double)(N - 1);
    }
    for (k = 0; k < m; k++) {
        double w = weight(p, i, k);
        if (w > 0) {
            g[ns] = w;
            S[ns++] = k;
        }
    }
    *mean = xbar;
    *var = pii;
    if (ns == 0)
        return 0;
    {
        gsl_matrix *M = gsl_matrix_alloc(ns, ns);
        gsl_vector *v = gsl_vector_alloc(ns), *d = gsl_vector_alloc(ns),
                   *z = gsl_vector_alloc(ns);
        for (a = 0; a < ns; a++) {
            double mu = 0;
            k = S[a];
            for (j = 0; j < N; j++)
                mu += p->HX[k + j * m];
            mu /= (double)N;
            for (j = 0; j < N; j++)
                yb[a][j] = p->HX[k + j * m] - mu;
            gsl_vector_set(d, a, p->y[k] - mu);
        }
        for (a = 0; a < ns; a++) {
            double s = 0;
            for (j = 0; j < N; j++)
                s += xp[j] * yb[a][j];
            gsl_vector_set(v, a, s / (double)(N - 1));
            for (c = 0; c < ns; c++) {
                double t = 0;
                for (j = 0; j < N; j++)
                    t += yb[a][j] * yb[c][j];
                gsl_matrix_set(M, a, c, t / (double)(N - 1) + (a == c ? p->r[S[a]] / g[a] : 0));
            }
        }
        gsl_linalg_cholesky_decomp1(M);
        gsl_linalg_cholesky_solve(M, d, z);
        for (a = 0; a < ns; a++)
            *mean += gsl_vector_get(v, a) * gsl_vector_get(z, a);
        gsl_linalg_cholesky_solve(M, v, z);
        for (a = 0; a < ns; a++)
            *var -= gsl_vector_get(v, a) * gsl_vector_get(z, a);
        gsl_matrix_free(M);
        gsl_vector_free(v);
        gsl_vector_free(d);
        gsl_vector_free(z);
    }
    return ns;
}

static void row_moments(const problem *p, size_t i, double *mean, double *var)
{
    size_t j;
    double s = 0, v = 0;
    for (j = 0; j < p->N; j++)
        s += p->X[i + j * p->n];
    s /= (double)p->N;
    for (j = 0; j < p->N; j++)
        v += (p->X[i + j * p->n] - s) * (p->X[i + j * p->n] - s);
    *mean = s;
    *var = v / (double)(p->N - 1);
}

/* Every row against the Kalman update with R / weight (the member mean
 * equal to the Kalman mean also says the perturbations X'W are centred);
 * rows out of reach unchanged bit for bit and counted. */
static void check_against_kalman(problem *p, const char *what)
{
    sl_enkf_info info;
    sl_error err;
    size_t i, j, skipped = 0, bad_mean = 0, bad_var = 0, bad_same = 0, used_total = 0;
    double worst_m = 0, worst_v = 0;
    sl_status st = run(p, &info, &err);
    CHECK(st == SL_OK, "%s: status %d (%s)", what, (int)st, err.message);
    for (i = 0; i < p->n; i++) {
        double rm, rv, am, av;
        size_t used = kalman_row(p, i, &rm, &rv);
        used_total += used;
        if (used == 0) {
            skipped++;
            for (j = 0; j < p->N; j++)
                bad_same += p->X[i + j * p->n] != p->X0[i + j * p->n];
            continue;
        }
        row_moments(p, i, &am, &av);
        if (fabs(am - rm) > worst_m)
            worst_m = fabs(am - rm);
        if (fabs(av - rv) > worst_v)
            worst_v = fabs(av - rv);
        bad_mean += !(fabs(am - rm) <= 1e-10 * (1 + fabs(rm)));
        bad_var += !(fabs(av - rv) <= 1e-10 * (1 + fabs(rv)));
    }
    CHECK(bad_mean == 0, "%s: %lu row means differ from the Kalman update (worst %g)", what,
          (unsigned long)bad_mean, worst_m);
    CHECK(bad_var == 0, "%s: %lu row variances differ from the Kalman update (worst %g)",
          what, (unsigned long)bad_var, worst_v);
    CHECK(bad_same == 0, "%s: %lu values changed in rows out of reach", what,
          (unsigned long)bad_same);
    CHECK(info.local_skipped == skipped, "%s: local_skipped %lu, expected %lu", what,
          (unsigned long)info.local_skipped, (unsigned long)skipped);
    /* the problem is a real test: some rows localised, some out of reach
     * or at least some with fewer than every observation */
    CHECK(used_total < p->n * p->m && used_total > 0, "%s: degenerate test problem", what);
    CHECK(info.floored == 0, "%s: %lu eigenvalues floored", what, (unsigned long)info.floored);
}

/* The global ETKF from its formulas: mean by the Kalman gain in state
 * space, xbar + X' Yb' (Yb Yb' + (N-1) R)^{-1} d, perturbations by the
 * symmetric square root X' [I + Yb' R^{-1} Yb / (N-1)]^{-1/2} (Bishop et
 * al. 2001; Hunt et al. 2007), with GSL's Cholesky and eigen solvers. */
static void global_etkf(const problem *p, double *Xa)
{
    const size_t n = p->n, N = p->N, m = p->m;
    size_t i, j, k, l, e;
    double xbar[NMAX], yb[MMAX * EMAX], d[MMAX], z[MMAX];
    gsl_matrix *M = gsl_matrix_alloc(m, m), *G = gsl_matrix_alloc(N, N),
               *Q = gsl_matrix_alloc(N, N), *Ts = gsl_matrix_alloc(N, N);
    gsl_vector *dv = gsl_vector_alloc(m), *zv = gsl_vector_alloc(m), *lam = gsl_vector_alloc(N);
    gsl_eigen_symmv_workspace *ew = gsl_eigen_symmv_alloc(N);
    for (k = 0; k < m; k++) {
        double mu = 0;
        for (j = 0; j < N; j++)
            mu += p->HX[k + j * m];
        mu /= (double)N;
        for (j = 0; j < N; j++)
            yb[k + j * m] = p->HX[k + j * m] - mu;
        d[k] = p->y[k] - mu;
        gsl_vector_set(dv, k, d[k]);
    }
    for (k = 0; k < m; k++)
        for (l = 0; l < m; l++) {
            double s = 0;
            for (j = 0; j < N; j++)
                s += yb[k + j * m] * yb[l + j * m];
            gsl_matrix_set(M, k, l, s + (k == l ? (double)(N - 1) * p->r[k] : 0));
        }
    gsl_linalg_cholesky_decomp1(M);
    gsl_linalg_cholesky_solve(M, dv, zv);
    for (k = 0; k < m; k++)
        z[k] = gsl_vector_get(zv, k);
    for (i = 0; i < N; i++)
        for (j = 0; j < N; j++) {
            double s = 0;
            for (k = 0; k < m; k++)
                s += yb[k + i * m] * yb[k + j * m] / p->r[k];
            gsl_matrix_set(G, i, j, (i == j) + s / (double)(N - 1));
        }
    gsl_eigen_symmv(G, lam, Q, ew);
    for (i = 0; i < N; i++)
        for (j = 0; j < N; j++) {
            double s = 0;
            for (e = 0; e < N; e++)
                s += gsl_matrix_get(Q, i, e) * gsl_matrix_get(Q, j, e) /
                     sqrt(gsl_vector_get(lam, e));
            gsl_matrix_set(Ts, i, j, s);
        }
    for (i = 0; i < n; i++) {
        double xp[EMAX], inc = 0;
        xbar[i] = 0;
        for (j = 0; j < N; j++)
            xbar[i] += p->X0[i + j * n];
        xbar[i] /= (double)N;
        for (j = 0; j < N; j++)
            xp[j] = p->X0[i + j * n] - xbar[i];
        for (k = 0; k < m; k++) {
            double s = 0;
            for (j = 0; j < N; j++)
                s += xp[j] * yb[k + j * m];
            inc += s * z[k];
        }
        for (j = 0; j < N; j++) {
            double s = 0;
            for (l = 0; l < N; l++)
                s += xp[l] * gsl_matrix_get(Ts, l, j);
            Xa[i + j * n] = xbar[i] + inc + s;
        }
    }
    gsl_matrix_free(M);
    gsl_matrix_free(G);
    gsl_matrix_free(Q);
    gsl_matrix_free(Ts);
    gsl_vector_free(dv);
    gsl_vector_free(zv);
    gsl_vector_free(lam);
    gsl_eigen_symmv_free(ew);
}

/* The ensemble-space analysis of Hunt et al. (2007) with a relative floor
 * on the eigenvalues of G = (N-1) I + Yb' R^{-1} Yb: lam -> max(lam,
 * floor * max lam), Pa~ = Q diag(1 / lam) Q', w = Pa~ Yb' R^{-1} d,
 * W = Q diag(sqrt((N-1) / lam)) Q', Xa = xbar + X' (w 1' + W), with GSL's
 * eigen solver. Returns the number of eigenvalues floored. */
static size_t global_floored(const problem *p, double floor, double *Xa)
{
    const size_t n = p->n, N = p->N, m = p->m;
    size_t i, j, k, e, nfl = 0;
    double yb[MMAX * EMAX], d[MMAX], cd[EMAX], w[EMAX], lam[EMAX], lmax;
    gsl_matrix *G = gsl_matrix_alloc(N, N), *Q = gsl_matrix_alloc(N, N);
    gsl_vector *lv = gsl_vector_alloc(N);
    gsl_eigen_symmv_workspace *ew = gsl_eigen_symmv_alloc(N);
    for (k = 0; k < m; k++) {
        double mu = 0;
        for (j = 0; j < N; j++)
            mu += p->HX[k + j * m];
        mu /= (double)N;
        for (j = 0; j < N; j++)
            yb[k + j * m] = p->HX[k + j * m] - mu;
        d[k] = p->y[k] - mu;
    }
    for (i = 0; i < N; i++) {
        cd[i] = 0;
        for (k = 0; k < m; k++)
            cd[i] += yb[k + i * m] * d[k] / p->r[k];
        for (j = 0; j < N; j++) {
            double s = 0;
            for (k = 0; k < m; k++)
                s += yb[k + i * m] * yb[k + j * m] / p->r[k];
            gsl_matrix_set(G, i, j, (i == j) * (double)(N - 1) + s);
        }
    }
    gsl_eigen_symmv(G, lv, Q, ew);
    lmax = gsl_vector_max(lv);
    for (e = 0; e < N; e++) {
        lam[e] = gsl_vector_get(lv, e);
        if (lam[e] < floor * lmax) {
            lam[e] = floor * lmax;
            nfl++;
        }
    }
    for (i = 0; i < N; i++) {
        w[i] = 0;
        for (e = 0; e < N; e++) {
            double qc = 0;
            for (j = 0; j < N; j++)
                qc += gsl_matrix_get(Q, j, e) * cd[j];
            w[i] += gsl_matrix_get(Q, i, e) * qc / lam[e];
        }
    }
    for (i = 0; i < n; i++) {
        double xbar = 0, xp[EMAX];
        for (j = 0; j < N; j++)
            xbar += p->X0[i + j * n] / (double)N;
        for (j = 0; j < N; j++)
            xp[j] = p->X0[i + j * n] - xbar;
        for (j = 0; j < N; j++) {
            double s = 0;
            size_t a;
            for (a = 0; a < N; a++) {
                double Waj = 0;
                for (e = 0; e < N; e++)
                    Waj += gsl_matrix_get(Q, a, e) * gsl_matrix_get(Q, j, e) *
                           sqrt((double)(N - 1) / lam[e]);
                s += xp[a] * (w[a] + Waj);
            }
            Xa[i + j * n] = xbar + s;
        }
    }
    gsl_matrix_free(G);
    gsl_matrix_free(Q);
    gsl_vector_free(lv);
    gsl_eigen_symmv_free(ew);
    return nfl;
}

static void test_global(int geom, size_t N, const char *what)
{
    static double Xa[NMAX * EMAX];
    problem *p = &P1;
    sl_enkf_info info;
    sl_error err;
    size_t i, k;
    double worst = 0;
    sl_status st;
    /* half-widths so large that every Gaspari-Cohn weight rounds to 1 */
    make_problem(p, geom, 40, N, 13, 3, 1e12, 1e12, 11 + N);
    p->loc.param_factor = p->pf = 1.0;
    for (i = 0; i < p->n; i++)
        for (k = 0; k < p->m; k++)
            if (weight(p, i, k) != 1.0)
                worst = 1;
    CHECK(worst == 0, "%s: a weight is not 1", what);
    global_etkf(p, Xa);
    st = run(p, &info, &err);
    CHECK(st == SL_OK, "%s: status %d (%s)", what, (int)st, err.message);
    worst = 0;
    for (i = 0; i < p->n * p->N; i++)
        if (fabs(p->X[i] - Xa[i]) > worst)
            worst = fabs(p->X[i] - Xa[i]);
    CHECK(worst <= 1e-10, "%s: LETKF differs from the global ETKF by %g", what, worst);
    CHECK(info.local_skipped == 0 && info.floored == 0, "%s: skipped %lu floored %lu", what,
          (unsigned long)info.local_skipped, (unsigned long)info.floored);
}

/* One observation on a line: beyond 2c nothing moves; inside, the update
 * is the scalar Kalman update with error variance r / g, so it falls off
 * with the Gaspari-Cohn weight g. Every row has the same perturbations,
 * so the increments themselves must fall with distance. */
static void test_one_observation(void)
{
    problem *p = &P1;
    sl_enkf_info info;
    sl_error err;
    size_t i, j, q, moved_out = 0, skipped = 0, bad = 0, rising = 0, inside = 0;
    double prev = INFINITY, pyy = 0, pxy = 0, pxx = 0, ybar = 0, abar = 0;
    double a[EMAX], yb[EMAX];
    const double x0 = 10.3, c = 4.0, dy = 1.7;
    sl_status st;
    make_problem(p, SL_GEOM_LINE, 50, 10, 1, 0, c, c, 21);
    p->opos[0] = x0;
    for (j = 0; j < p->N; j++) {
        a[j] = sin(1.7 * (double)j + 0.4) + 0.1 * (double)(j * j % 7);
        abar += a[j] / (double)p->N;
    }
    for (i = 0; i < p->n; i++) {
        p->spos[i] = (double)i;
        for (j = 0; j < p->N; j++)
            p->X0[i + j * p->n] = p->X[i + j * p->n] = 0.1 * (double)i + a[j];
    }
    for (j = 0; j < p->N; j++)
        ybar += (p->HX[j] = a[j] + 0.05 * (double)(j % 3)) / (double)p->N;
    for (j = 0; j < p->N; j++) {
        yb[j] = p->HX[j] - ybar;
        pyy += yb[j] * yb[j] / (double)(p->N - 1);
        pxy += (a[j] - abar) * yb[j] / (double)(p->N - 1);
        pxx += (a[j] - abar) * (a[j] - abar) / (double)(p->N - 1);
    }
    p->y[0] = ybar + dy;
    p->r[0] = 0.3;
    st = run(p, &info, &err);
    CHECK(st == SL_OK, "one observation: status %d (%s)", (int)st, err.message);
    for (i = 0; i < p->n; i++) {
        double dist = fabs((double)i - x0), g = sl_gaspari_cohn(dist, c), am, av;
        if (dist >= 2 * c) {
            skipped++;
            for (j = 0; j < p->N; j++)
                moved_out += p->X[i + j * p->n] != p->X0[i + j * p->n];
            continue;
        }
        inside++;
        row_moments(p, i, &am, &av);
        /* scalar Kalman update with error variance r / g (R-localisation,
         * Hunt et al. 2007) */
        bad += !(fabs(am - (0.1 * (double)i + abar) - pxy * dy / (pyy + p->r[0] / g)) <= 1e-12);
        bad += !(fabs(av - (pxx - pxy * pxy / (pyy + p->r[0] / g))) <= 1e-12);
    }
    /* rows in order of distance 0.3, 0.7, 1.3, 1.7, ...: 10, 11, 9, 12, 8 ... */
    for (q = 0; q < 16; q++) {
        size_t r = q % 2 == 0 ? 10 - q / 2 : 11 + q / 2;
        double am, av, inc;
        row_moments(p, r, &am, &av);
        inc = am - (0.1 * (double)r + abar);
        rising += !(fabs(inc) < prev);
        prev = fabs(inc);
    }
    CHECK(pxy * dy != 0 && bad == 0,
          "one observation: %lu moments differ from the scalar Kalman update",
          (unsigned long)bad);
    CHECK(rising == 0, "one observation: the increment grows with distance %lu times",
          (unsigned long)rising);
    CHECK(moved_out == 0, "one observation: %lu values beyond 2c changed",
          (unsigned long)moved_out);
    CHECK(info.local_skipped == skipped && skipped == 50 - 16,
          "one observation: local_skipped %lu, expected %lu", (unsigned long)info.local_skipped,
          (unsigned long)skipped);
    CHECK(inside == 16, "one observation: %lu rows in reach", (unsigned long)inside);
}

/* The same analysis bit for bit with 1, 2 and 3 threads (the project's
 * rule of determinism; each row's analysis depends on nothing another
 * thread does): a ring with rows sharing places and rows not localised. */
static void test_threads(void)
{
    static double X1[NMAX * EMAX];
    problem *p = &P2;
    sl_enkf_info i1, i2;
    sl_error err;
    int t;
    sl_status st;
    make_problem(p, SL_GEOM_RING, 600, 14, 150, 6, 1.0, 3.5, 31);
    st = run(p, &i1, &err);
    CHECK(st == SL_OK, "threads 1: %s", err.message);
    memcpy(X1, p->X, sizeof X1);
    CHECK(memcmp(X1, p->X0, p->n * p->N * sizeof(double)) != 0 && i1.local_skipped < p->n,
          "threads: the analysis changed nothing");
    for (t = 1; t <= 3; t++) {
        memcpy(p->X, p->X0, sizeof p->X);
        p->cfg.threads = t;
        st = run(p, &i2, &err);
        CHECK(st == SL_OK, "threads %d: %s", t, err.message);
        CHECK(memcmp(X1, p->X, p->n * p->N * sizeof(double)) == 0,
              "threads %d: analysis not bit-identical to 1 thread", t);
        CHECK(i1.floored == i2.floored && i1.local_skipped == i2.local_skipped,
              "threads %d: counts differ", t);
    }
    /* the automatic count: all threads for a large analysis, one for a
     * small one, the same bits either way */
    p->cfg.threads_auto = 1;
    for (t = 2; t <= 3; t++) {
        memcpy(p->X, p->X0, sizeof p->X);
        p->cfg.threads = t;
        st = run(p, &i2, &err);
        CHECK(st == SL_OK && memcmp(X1, p->X, p->n * p->N * sizeof(double)) == 0,
              "threads %d, automatic: analysis not bit-identical to 1 thread", t);
    }
    p->cfg.threads = 1;
    p->cfg.threads_auto = 0;
}

/* The threads the LETKF takes (sl_letkf_threads): the count asked for,
 * at most one a grid point; automatic, one below SL_LETKF_THREAD_WORK
 * (groups N^3) and the count from there on. */
static void test_thread_count(void)
{
    sl_enkf_config c;
    memset(&c, 0, sizeof c);
    c.threads = 4;
    CHECK(sl_letkf_threads(&c, 400, 20) == 4, "4 threads asked, 400 points: %lu",
          (unsigned long)sl_letkf_threads(&c, 400, 20));
    CHECK(sl_letkf_threads(&c, 3, 20) == 3, "4 threads asked, 3 points: %lu",
          (unsigned long)sl_letkf_threads(&c, 3, 20));
    CHECK(sl_letkf_threads(&c, 0, 20) == 1, "no points: one thread");
    c.threads_auto = 1;
    /* 400 points of 20 members: 3.2e6 < 1e7; 4000: 3.2e7 */
    CHECK(sl_letkf_threads(&c, 400, 20) == 1, "automatic, 400 points of 20 members: %lu",
          (unsigned long)sl_letkf_threads(&c, 400, 20));
    CHECK(sl_letkf_threads(&c, 4000, 20) == 4, "automatic, 4000 points of 20 members: %lu",
          (unsigned long)sl_letkf_threads(&c, 4000, 20));
    /* the edge: 1250 points of 20 members is 1e7 exactly */
    CHECK(sl_letkf_threads(&c, 1249, 20) == 1 && sl_letkf_threads(&c, 1250, 20) == 4,
          "automatic, at the edge: %lu and %lu", (unsigned long)sl_letkf_threads(&c, 1249, 20),
          (unsigned long)sl_letkf_threads(&c, 1250, 20));
    /* few points of many members are work enough */
    CHECK(sl_letkf_threads(&c, 2, 400) == 2, "automatic, 2 points of 400 members: %lu",
          (unsigned long)sl_letkf_threads(&c, 2, 400));
}

/* Duplicated members (a rank-deficient ensemble) with very precise
 * observations: eigenvalues of the ensemble-space matrix spread over more
 * than 1e12, so the floor acts; the output stays finite and no variance
 * grows. */
static void test_ill_conditioned(void)
{
    problem *p = &P1;
    sl_enkf_info info;
    sl_error err;
    size_t i, j, k, bad = 0, grown = 0;
    sl_status st;
    make_problem(p, SL_GEOM_RING, 40, 10, 12, 2, 2.0, 4.0, 41);
    for (i = 0; i < p->n; i++)
        for (j = 5; j < 10; j++)
            p->X[i + j * p->n] = p->X0[i + j * p->n] = p->X0[i + (j - 5) * p->n];
    for (k = 0; k < p->m; k++) {
        for (j = 5; j < 10; j++)
            p->HX[k + j * p->m] = p->HX[k + (j - 5) * p->m];
        p->r[k] = 1e-14;
    }
    st = run(p, &info, &err);
    CHECK(st == SL_OK, "ill-conditioned: status %d (%s)", (int)st, err.message);
    CHECK(info.floored > 0, "ill-conditioned: nothing floored");
    for (i = 0; i < p->n * p->N; i++)
        bad += !isfinite(p->X[i]);
    for (i = 0; i < p->n; i++) {
        double s = 0, v = 0, am, av;
        for (j = 0; j < p->N; j++)
            s += p->X0[i + j * p->n];
        s /= (double)p->N;
        for (j = 0; j < p->N; j++)
            v += (p->X0[i + j * p->n] - s) * (p->X0[i + j * p->n] - s);
        row_moments(p, i, &am, &av);
        grown += av > v / (double)(p->N - 1) * (1 + 1e-9);
    }
    CHECK(bad == 0, "ill-conditioned: %lu non-finite values", (unsigned long)bad);
    CHECK(grown == 0, "ill-conditioned: %lu variances grew", (unsigned long)grown);

    /* the same with every weight 1: the floored ensemble-space analysis of
     * GSL's eigen-decomposition (the solutions agree to the accuracy such a
     * spread of eigenvalues allows) */
    {
        static double Xa[NMAX * EMAX];
        size_t nfl;
        double worst = 0, scale = 0;
        make_problem(p, SL_GEOM_RING, 40, 10, 12, 2, 1e12, 1e12, 42);
        p->loc.param_factor = p->pf = 1.0;
        for (i = 0; i < p->n; i++)
            for (j = 5; j < 10; j++)
                p->X[i + j * p->n] = p->X0[i + j * p->n] = p->X0[i + (j - 5) * p->n];
        for (k = 0; k < p->m; k++) {
            for (j = 5; j < 10; j++)
                p->HX[k + j * p->m] = p->HX[k + (j - 5) * p->m];
            p->r[k] = 1e-14;
        }
        nfl = global_floored(p, 1e-12, Xa);
        st = run(p, &info, &err);
        for (i = 0; i < p->n * p->N; i++) {
            if (fabs(p->X[i] - Xa[i]) > worst)
                worst = fabs(p->X[i] - Xa[i]);
            if (fabs(Xa[i]) > scale)
                scale = fabs(Xa[i]);
        }
        CHECK(st == SL_OK && nfl > 0 && info.floored == nfl * p->n,
              "ill-conditioned, global: status %d, floored %lu, expected %lu", (int)st,
              (unsigned long)info.floored, (unsigned long)(nfl * p->n));
        CHECK(worst <= 1e-10 * scale, "ill-conditioned, global: differs by %g", worst);
    }

    /* a floor set by the caller acts on an ordinary problem too: with every
     * weight 1 the result is the floored ensemble-space analysis */
    {
        static double Xa[NMAX * EMAX];
        size_t nfl;
        double worst = 0;
        make_problem(p, SL_GEOM_LINE, 30, 8, 10, 2, 1e12, 1e12, 43);
        p->loc.param_factor = p->pf = 1.0;
        p->cfg.eig_floor = 0.5;
        nfl = global_floored(p, 0.5, Xa);
        st = run(p, &info, &err);
        for (i = 0; i < p->n * p->N; i++)
            if (fabs(p->X[i] - Xa[i]) > worst)
                worst = fabs(p->X[i] - Xa[i]);
        CHECK(st == SL_OK && nfl > 0 && info.floored == nfl * p->n,
              "floor 0.5: status %d, floored %lu, expected %lu", (int)st,
              (unsigned long)info.floored, (unsigned long)(nfl * p->n));
        CHECK(worst <= 1e-10, "floor 0.5: differs from the floored analysis by %g", worst);
    }
}

/* Row i of the ensemble-space analysis of Hunt et al. (2007) with R / g
 * localisation and the relative floor on the eigenvalues of the N x N
 * matrix G = (N-1) I + Yb' (R / g)^{-1} Yb (as global_floored, with GSL's
 * eigen solver): the reference for both of the LETKF's forms (the N x N
 * one and the one through the local observations' own eigenproblem).
 * Stores the row's members in xa; returns the number of observations in
 * reach and adds the eigenvalues floored to *nfl. */
static size_t local_floored(const problem *p, size_t i, double floor, double *xa, size_t *nfl)
{
    const size_t n = p->n, N = p->N, m = p->m;
    size_t j, k, e, a, used = 0;
    double cd[EMAX], w[EMAX], lam[EMAX], yb[EMAX], xp[EMAX], lmax, xbar = 0;
    gsl_matrix *G = gsl_matrix_alloc(N, N), *Q = gsl_matrix_alloc(N, N);
    gsl_vector *lv = gsl_vector_alloc(N);
    gsl_eigen_symmv_workspace *ew = gsl_eigen_symmv_alloc(N);
    gsl_matrix_set_identity(G);
    gsl_matrix_scale(G, (double)(N - 1));
    for (j = 0; j < N; j++)
        cd[j] = 0;
    for (k = 0; k < m; k++) {
        double g = weight(p, i, k), mu = 0;
        if (!(g > 0))
            continue;
        used++;
        for (j = 0; j < N; j++)
            mu += p->HX[k + j * m];
        mu /= (double)N;
        for (j = 0; j < N; j++)
            yb[j] = p->HX[k + j * m] - mu;
        for (j = 0; j < N; j++) {
            cd[j] += g / p->r[k] * yb[j] * (p->y[k] - mu);
            for (a = 0; a < N; a++)
                gsl_matrix_set(G, j, a, gsl_matrix_get(G, j, a) + g / p->r[k] * yb[j] * yb[a]);
        }
    }
    gsl_eigen_symmv(G, lv, Q, ew);
    lmax = gsl_vector_max(lv);
    for (e = 0; e < N; e++) {
        lam[e] = gsl_vector_get(lv, e);
        if (lam[e] < floor * lmax) {
            lam[e] = floor * lmax;
            (*nfl)++;
        }
    }
    for (j = 0; j < N; j++) {
        w[j] = 0;
        for (e = 0; e < N; e++) {
            double qc = 0;
            for (a = 0; a < N; a++)
                qc += gsl_matrix_get(Q, a, e) * cd[a];
            w[j] += gsl_matrix_get(Q, j, e) * qc / lam[e];
        }
    }
    for (j = 0; j < N; j++)
        xbar += p->X0[i + j * n] / (double)N;
    for (j = 0; j < N; j++)
        xp[j] = p->X0[i + j * n] - xbar;
    for (j = 0; j < N; j++) {
        double s = 0;
        for (a = 0; a < N; a++) {
            double Waj = 0;
            for (e = 0; e < N; e++)
                Waj += gsl_matrix_get(Q, a, e) * gsl_matrix_get(Q, j, e) *
                       sqrt((double)(N - 1) / lam[e]);
            s += xp[a] * (w[a] + Waj);
        }
        xa[j] = used > 0 ? xbar + s : p->X0[i + j * n];
    }
    gsl_matrix_free(G);
    gsl_matrix_free(Q);
    gsl_vector_free(lv);
    gsl_eigen_symmv_free(ew);
    return used;
}

/* Every row against local_floored, to 1e-12 of the largest member value;
 * returns the rows with fewer, as many and more observations in reach
 * than members in cnt[0..2] (an analysis with fewer works through the
 * observations' own eigenproblem unless the floor could act). */
static void check_forms(problem *p, double floor, const char *what, size_t cnt[3])
{
    sl_enkf_info info;
    sl_error err;
    size_t i, j, nfl = 0;
    double worst = 0, scale = 0, xa[EMAX];
    sl_status st;
    memcpy(p->X, p->X0, sizeof p->X);
    p->cfg.eig_floor = floor;
    st = run(p, &info, &err);
    CHECK(st == SL_OK, "%s: status %d (%s)", what, (int)st, err.message);
    cnt[0] = cnt[1] = cnt[2] = 0;
    for (i = 0; i < p->n; i++) {
        size_t used = local_floored(p, i, floor > 0 ? floor : 1e-12, xa, &nfl);
        cnt[used < p->N ? 0 : (used == p->N ? 1 : 2)] += used > 0;
        for (j = 0; j < p->N; j++) {
            if (fabs(p->X[i + j * p->n] - xa[j]) > worst)
                worst = fabs(p->X[i + j * p->n] - xa[j]);
            if (fabs(xa[j]) > scale)
                scale = fabs(xa[j]);
        }
    }
    CHECK(worst <= 1e-12 * scale, "%s: differs from the ensemble-space analysis by %g (scale %g)",
          what, worst, scale);
    CHECK(info.floored == nfl, "%s: floored %lu, expected %lu", what,
          (unsigned long)info.floored, (unsigned long)nfl);
    p->cfg.eig_floor = 0;
}

/* The two forms of the local analysis against one reference: a ring of
 * 40 rows at whole positions and 40 observations half-way between, so a
 * half-width c puts 4 (c = 1), 10 (c = 2.5) or 16 (c = 4) observations in
 * reach of every row, against N = 10 members; then random half-widths
 * (every count mixed), and floors that act or not. */
static void test_forms(void)
{
    static const double cs[3] = {1.0, 2.5, 4.0};
    static const char *names[3] = {"4 obs < N", "10 obs = N", "16 obs > N"};
    problem *p = &P1;
    size_t q, i, cnt[3];
    for (q = 0; q < 3; q++) {
        make_problem(p, SL_GEOM_RING, 40, 10, 40, 0, 1.0, 1.0, 300 + q);
        for (i = 0; i < 40; i++) {
            p->spos[i] = (double)i;
            p->opos[i] = (double)i + 0.5;
            p->oc[i] = cs[q];
        }
        check_forms(p, 0, names[q], cnt);
        CHECK(cnt[q] == 40, "%s: %lu %lu %lu rows with fewer, as many, more obs than members",
              names[q], (unsigned long)cnt[0], (unsigned long)cnt[1], (unsigned long)cnt[2]);
    }
    /* rows in groups of 6 at one place (4 observations each): a group
     * with rows enough forms its transform once, single rows apply it
     * factor by factor */
    make_problem(p, SL_GEOM_RING, 48, 10, 40, 0, 1.0, 1.0, 305);
    for (i = 0; i < 48; i++)
        p->spos[i] = (double)(i / 6) * 5.0;
    for (i = 0; i < 40; i++) {
        p->opos[i] = (double)i + 0.5;
        p->oc[i] = 1.0;
    }
    check_forms(p, 0, "groups of 6 rows", cnt);
    CHECK(cnt[0] == 48, "groups of 6 rows: %lu %lu %lu rows", (unsigned long)cnt[0],
          (unsigned long)cnt[1], (unsigned long)cnt[2]);
    /* random places and half-widths, rows sharing places, rows not
     * localised (all 60 observations: more than N) */
    make_problem(p, SL_GEOM_RING, 200, 12, 60, 3, 0.5, 5.0, 310);
    check_forms(p, 0, "mixed counts", cnt);
    CHECK(cnt[0] > 0 && cnt[1] > 0 && cnt[2] > 0, "mixed counts: %lu %lu %lu rows",
          (unsigned long)cnt[0], (unsigned long)cnt[1], (unsigned long)cnt[2]);
    /* a floor that acts on few observations (the N x N form then) and
     * one that does not (the observations' form stays) */
    {
        size_t nfl = 0;
        double xa[EMAX];
        make_problem(p, SL_GEOM_RING, 40, 10, 40, 0, 1.0, 1.0, 320);
        for (i = 0; i < 40; i++) {
            p->spos[i] = (double)i;
            p->opos[i] = (double)i + 0.5;
        }
        for (i = 0; i < 40; i++)
            local_floored(p, i, 0.3, xa, &nfl);
        CHECK(nfl > 0, "floor 0.3: the reference floors nothing");
        check_forms(p, 0.3, "4 obs, floor 0.3", cnt);
        nfl = 0;
        for (i = 0; i < 40; i++)
            local_floored(p, i, 0.001, xa, &nfl);
        CHECK(nfl == 0, "floor 0.001: the reference floors %lu", (unsigned long)nfl);
        check_forms(p, 0.001, "4 obs, floor 0.001", cnt);
    }
}

/* Rows with nothing in reach: observations at one end of a line. */
static void test_out_of_reach(void)
{
    problem *p = &P1;
    size_t k;
    make_problem(p, SL_GEOM_LINE, 60, 6, 5, 2, 1.0, 2.0, 51);
    for (k = 0; k < p->m; k++)
        p->opos[k] = 3.0 * (double)k;
    check_against_kalman(p, "observations at one end");
}

static void expect_error(problem *p, sl_status want, const char *reason, const char *what)
{
    sl_enkf_info info;
    sl_error err;
    sl_status st = run(p, &info, &err);
    CHECK(st == want && strcmp(err.reason, reason) == 0, "%s: status %d reason '%s' (%s)", what,
          (int)st, err.reason, err.message);
    CHECK(memcmp(p->X, p->X0, p->n * p->N * sizeof(double)) == 0, "%s: X changed", what);
    CHECK(err.message[0] != '\0', "%s: no message", what);
}

static void test_errors(void)
{
    problem *p = &P1;
    sl_enkf_info info;
    sl_error err;
    sl_status st;
    size_t k;

    make_problem(p, SL_GEOM_PLANE, 20, 5, 6, 1, 2.0, 4.0, 61);
    p->cfg.loc = NULL;
    expect_error(p, SL_EINVAL, "badlocalization", "no localisation");
    p->cfg.loc = &p->loc;
    p->cfg.threads = 0;
    expect_error(p, SL_EINVAL, "badconfig", "threads 0");
    p->cfg.threads = 1;
    p->cfg.eig_floor = -1;
    expect_error(p, SL_EINVAL, "badconfig", "negative floor");
    p->cfg.eig_floor = 0;
    p->loc.dim = 1;
    expect_error(p, SL_EINVAL, "badlocalization", "plane with 1 coordinate");
    p->loc.dim = 2;
    p->loc.geometry = 7;
    expect_error(p, SL_EINVAL, "badlocalization", "unknown geometry");
    p->loc.geometry = SL_GEOM_PLANE;
    p->loc.param_factor = 0;
    expect_error(p, SL_EINVAL, "badlocalization", "param_factor 0");
    p->loc.param_factor = 0.7;
    p->oc[2] = 0;
    expect_error(p, SL_EINVAL, "badlocalization", "half-width 0");
    p->oc[2] = 3;
    p->opos[3 + p->m] = NAN;
    expect_error(p, SL_EINVAL, "badlocalization", "observation position NaN");
    p->opos[3 + p->m] = 1;
    p->spos[4 + p->n] = INFINITY;
    expect_error(p, SL_EINVAL, "badlocalization", "state position Inf");
    p->spos[4 + p->n] = 1;
    {
        problem *q = &P2;
        make_problem(q, SL_GEOM_SPHERE, 20, 5, 6, 1, 2.0, 4.0, 62);
        q->opos[2 + q->m] = 90.5;
        expect_error(q, SL_EINVAL, "badlocalization", "latitude beyond the pole");
    }
    p->r[1] = 0;
    expect_error(p, SL_EINVAL, "notpd", "zero error variance");
    p->r[1] = 0.3;
    p->HX[7] = NAN;
    expect_error(p, SL_EINVAL, "nonfinite", "NaN prediction");
    p->HX[7] = 1;
    p->y[2] = INFINITY;
    expect_error(p, SL_EINVAL, "nonfinite", "Inf observation");
    p->y[2] = 1;
    p->X[5] = p->X0[5] = NAN;
    expect_error(p, SL_EINVAL, "nonfinite", "NaN state");
    p->X[5] = p->X0[5] = 1;
    /* spreads and error variances that would overflow the local matrices */
    for (k = 0; k < p->m * p->N; k++)
        p->HX[k] *= 1e160;
    expect_error(p, SL_ENUMERIC, "nonfinite", "overflowing local problem");
    for (k = 0; k < p->m * p->N; k++)
        p->HX[k] /= 1e160;
    p->N = 1;
    expect_error(p, SL_EINVAL, "badsize", "one member");
    p->N = 5;
    p->m = 0;
    expect_error(p, SL_EINVAL, "badsize", "no observations");
    p->m = 6;
    st = run(p, &info, &err);
    CHECK(st == SL_OK, "restored problem runs: %s", err.message);
    /* n = 0: nothing to do */
    p->n = 0;
    st = run(p, &info, &err);
    CHECK(st == SL_OK && info.local_skipped == 0, "no rows: status %d", (int)st);

    /* workspace: absurd sizes give 0, more threads more bytes */
    {
        sl_enkf_config c = p->cfg;
        size_t w1, w3;
        CHECK(sl_letkf_workspace(&c, (size_t)1 << 62, 10, 10) == 0, "huge n");
        CHECK(sl_letkf_workspace(&c, 10, (size_t)1 << 40, 10) == 0, "huge N");
        CHECK(sl_letkf_workspace(&c, 10, 10, (size_t)1 << 62) == 0, "huge m");
        w1 = sl_letkf_workspace(&c, 100, 20, 50);
        c.threads = 3;
        w3 = sl_letkf_workspace(&c, 100, 20, 50);
        CHECK(w1 > 0 && w3 > w1, "workspace 1 thread %lu, 3 threads %lu", (unsigned long)w1,
              (unsigned long)w3);
    }
}

/* ------------------------------------------------------------- polls */

typedef struct {
    const double *X, *X0;
    size_t n, N, calls, changed, most_between;
} batch_log;

static void count_rows(batch_log *q)
{
    size_t i, j, c = 0;
    for (i = 0; i < q->n; i++)
        for (j = 0; j < q->N; j++)
            if (q->X[i + j * q->n] != q->X0[i + j * q->n]) {
                c++;
                break;
            }
    if (c - q->changed > q->most_between)
        q->most_between = c - q->changed;
    q->changed = c;
}

static int batch_poll(void *ctx, double fraction)
{
    batch_log *q = (batch_log *)ctx;
    (void)fraction;
    count_rows(q);
    q->calls++;
    return 0;
}

/* The local analyses go in batches with the poll between them: with N
 * members a point counts N^3 flops, a batch is SL_ENKF_POLL_WORK flops a
 * thread (at least 4 points a thread while a point costs under a quarter
 * of that), so the rows analysed between two polls are counted, not
 * timed. 200 rows at distinct places, 120 members: 115 points a thread. */
static void test_poll_batches(void)
{
    const size_t n = 200, N = 120, m = 40;
    const double per = floor(SL_ENKF_POLL_WORK / ((double)N * N * N));
    double *X = ck_malloc(n * N * sizeof(double)), *X0 = ck_malloc(n * N * sizeof(double));
    double *HX = ck_malloc(m * N * sizeof(double)), y[40], r[40], spos[200], opos[40], oc[40];
    sl_localization loc;
    sl_enkf_config cfg;
    sl_enkf_info info;
    sl_error err;
    sl_stream s;
    size_t i, j, k, ws;
    int t;
    void *work;
    if (check_light_()) {
        printf("SKIP test_letkf: the batches of 120-member analyses under the memory checker\n");
        ck_free(X);
        ck_free(X0);
        ck_free(HX);
        return;
    }
    sl_stream_init(&s, 31, 0, 0, SL_PURPOSE_USER);
    for (i = 0; i < n; i++)
        spos[i] = 0.25 * (double)i;
    for (k = 0; k < m; k++) {
        opos[k] = 1.25 * (double)k;
        oc[k] = 2.0;
        r[k] = 0.5;
    }
    for (j = 0; j < N; j++) {
        double a = sl_stream_normal(&s), b = sl_stream_normal(&s);
        for (i = 0; i < n; i++)
            X0[i + j * n] = a * sin(0.1 * spos[i]) + b * cos(0.07 * spos[i]) +
                            0.3 * sl_stream_normal(&s);
        for (k = 0; k < m; k++)
            HX[k + j * m] = a * sin(0.1 * opos[k]) + b * cos(0.07 * opos[k]);
    }
    for (k = 0; k < m; k++)
        y[k] = 0.4 * sl_stream_normal(&s);
    memset(&loc, 0, sizeof loc);
    loc.geometry = SL_GEOM_LINE;
    loc.dim = 1;
    loc.state_pos = spos;
    loc.obs_pos = opos;
    loc.obs_c = oc;
    loc.param_factor = 1.0;
    for (t = 1; t <= 2; t++) {
        batch_log lg;
        const size_t batch = (size_t)per * (size_t)t;
        memset(&cfg, 0, sizeof cfg);
        cfg.method = SL_ENKF_LETKF;
        cfg.inflation = 1.0;
        cfg.loc = &loc;
        cfg.threads = t;
        memset(&lg, 0, sizeof lg);
        lg.X = X;
        lg.X0 = X0;
        lg.n = n;
        lg.N = N;
        cfg.poll = batch_poll;
        cfg.poll_ctx = &lg;
        memcpy(X, X0, n * N * sizeof(double));
        ws = sl_letkf_workspace(&cfg, n, N, m);
        work = ck_malloc(ws);
        sl_error_clear(&err);
        CHECK(sl_letkf_run(&cfg, n, N, X, m, HX, y, r, work, &info, &err) == SL_OK, "%s",
              err.message);
        ck_free(work);
        count_rows(&lg);
        CHECK(lg.calls == (n + batch - 1) / batch, "%d thread(s): %lu polls for batches of %lu",
              t, (unsigned long)lg.calls, (unsigned long)batch);
        CHECK(lg.most_between <= batch, "%d thread(s): %lu rows between two polls", t,
              (unsigned long)lg.most_between);
        CHECK(lg.changed + info.local_skipped == n, "%d thread(s): %lu rows analysed", t,
              (unsigned long)lg.changed);
        printf("  letkf batches, %d thread(s): %lu polls, at most %lu rows between two\n", t,
               (unsigned long)lg.calls, (unsigned long)lg.most_between);
    }
    ck_free(X);
    ck_free(X0);
    ck_free(HX);
}

int main(void)
{
    static const int geoms[4] = {SL_GEOM_LINE, SL_GEOM_RING, SL_GEOM_PLANE, SL_GEOM_SPHERE};
    static const char *names[4] = {"line", "ring", "plane", "sphere"};
    int q;

    for (q = 0; q < 4; q++)
        test_global(geoms[q], 9, names[q]);
    /* the smallest ensembles (no Householder step, one step) and the
     * largest of the test */
    test_global(SL_GEOM_LINE, 2, "line, 2 members");
    test_global(SL_GEOM_LINE, 3, "line, 3 members");
    test_global(SL_GEOM_PLANE, EMAX, "plane, 20 members");
    /* localised problems in every geometry (ring half-widths up to a
     * quarter of the period, so windows wrap around) */
    for (q = 0; q < 4; q++) {
        problem *p = &P2;
        make_problem(p, geoms[q], 300, 12, 120, 4, 0.6, q == 3 ? 2.5 : 4.0,
                     (uint64_t)(100 + q));
        check_against_kalman(p, names[q]);
        /* with several threads too */
        memcpy(p->X, p->X0, sizeof p->X);
        p->cfg.threads = 3;
        check_against_kalman(p, names[q]);
    }
    /* ring windows larger than the period: every observation scanned */
    {
        problem *p = &P2;
        make_problem(p, SL_GEOM_RING, 100, 8, 30, 0, 9.0, 12.0, 200);
        check_against_kalman(p, "ring, wide windows");
    }
    test_one_observation();
    test_threads();
    test_thread_count();
    test_ill_conditioned();
    test_forms();
    test_out_of_reach();
    test_errors();
    test_poll_batches();
    CHECK_DONE("test_letkf");
}
