/* pf_wenkf.c - the weighted ensemble Kalman filter's proposal and
 * weights (used by sl_pf_run). */
#include <math.h>
#include <string.h>

#include "pf_internal.h"
#include "workspace.h"
#include "sluice/loglik.h"
#include "sluice/param_move.h"
#include "sluice/prior.h"
#include "sluice/resample.h"
#include "sluice/rng.h"
#include "sluice/weights.h"

/* ------------------------------------------------- weighted ensemble Kalman */

/* Cholesky factor (lower, in place) of the d x d symmetric positive
 * definite A; returns 0, or 1 when a pivot is not positive. */
static int wk_chol(size_t d, double *A)
{
    size_t i, j, l;
    for (j = 0; j < d; j++) {
        double s = A[j + j * d];
        for (l = 0; l < j; l++)
            s -= A[j + l * d] * A[j + l * d];
        if (!(s > 0) || !isfinite(s))
            return 1;
        s = sqrt(s);
        A[j + j * d] = s;
        for (i = j + 1; i < d; i++) {
            double v = A[i + j * d];
            for (l = 0; l < j; l++)
                v -= A[i + l * d] * A[j + l * d];
            A[i + j * d] = v / s;
        }
        for (i = 0; i < j; i++)
            A[i + j * d] = 0.0;
    }
    return 0;
}

/* x <- L^-1 x for the lower factor L (d x d) */
static void wk_lsolve(size_t d, const double *L, double *x)
{
    size_t i, l;
    for (i = 0; i < d; i++) {
        double v = x[i];
        for (l = 0; l < i; l++)
            v -= L[i + l * d] * x[l];
        x[i] = v / L[i + i * d];
    }
}

/* The weighted ensemble Kalman filter's proposal and weights at cycle k
 * (Papadakis, Memin, Cuzol & Gengembre 2010). On entry Mx holds every
 * member's deterministic forecast m_j and X its forecast with state noise
 * x_f = m_j + eta, eta ~ N(0, Q), Q = diag(state_noise^2). With the
 * weighted ensemble's gain K = C_xh (C_hh + R)^-1, each member moves to
 * x_a = x_f + K (y + eps - H x_f), eps ~ N(0, R) from stream (seed, j,
 * k, SL_PURPOSE_ANALYSIS): a draw from q(x | m_j) = N(m_j + K (y - H
 * m_j), Sigma), Sigma = (I - K H) Q (I - K H)' + K R K'. Its incremental
 * log-weight, into b->ll, is log N(y; H x_a, R) + log N(x_a; m_j, Q) -
 * log q(x_a | m_j): the weights correct the proposal whatever the gain.
 * Observed rows only (missing ones skipped; their count into
 * *nskipped). */
static sl_status wenkf_update(const sl_pf_config *cfg, pf_buffers *b, size_t k,
                           size_t r0, size_t m, double tk, double *X, const double *P,
                           const double *w, const unsigned char *dead,
                           size_t *nskipped, sl_error *err)
{
    const size_t N = cfg->N, n = cfg->model->n_state, p = cfg->model->n_param;
    const size_t v = n + p, nl = cfg->n_lin;
    size_t mk = 0, i, j, l, r;
    double *HF = b->wk_hf, *HM = b->wk_hm, *K = b->wk_k, *S = b->wk_s,
           *Hs = b->wk_h, *Sg = b->wk_sig, *tmp = b->wk_tmp, *xb = b->wk_xb,
           *hb = b->wk_hb, *Cxh = b->wk_cxh;
    double ldQ = 0.0, ldS = 0.0, W = 0.0;
    sl_status st;
    for (i = 0; i < m; i++)
        if (!isnan(cfg->y[r0 + i]))
            b->wk_row[mk++] = i;
    *nskipped = m - mk;
    if (mk == 0) {
        for (j = 0; j < N; j++)
            b->ll[j] = 0.0;
        return SL_OK;
    }
    /* H on the states (mk x n): a state row, a linear row's state part,
     * or nothing for a row that observes a parameter */
    for (i = 0; i < mk; i++) {
        size_t vr = cfg->var[r0 + b->wk_row[i]];
        for (l = 0; l < n; l++)
            Hs[i + l * mk] = vr < n ? (double)(vr == l)
                                    : (vr >= v ? cfg->H[(vr - v) + l * nl] : 0.0);
    }
    /* predicted observations of x_f and of m */
    if ((st = sl_pfi_predict_obs(cfg, b, r0, m, tk, X, P, err)) != SL_OK)
        return st;
    for (j = 0; j < N; j++)
        for (i = 0; i < mk; i++)
            HF[i + j * mk] = b->Yhat[b->wk_row[i] + j * m];
    if ((st = sl_pfi_predict_obs(cfg, b, r0, m, tk, b->wk_m, P, err)) != SL_OK)
        return st;
    for (j = 0; j < N; j++)
        for (i = 0; i < mk; i++)
            HM[i + j * mk] = b->Yhat[b->wk_row[i] + j * m];
    /* weighted means and covariances of the forecast (living members) */
    for (l = 0; l < n; l++)
        xb[l] = 0.0;
    for (i = 0; i < mk; i++)
        hb[i] = 0.0;
    for (j = 0; j < N; j++)
        if (w[j] > 0 && !dead[j]) {
            W += w[j];
            for (l = 0; l < n; l++)
                xb[l] += w[j] * X[l + j * n];
            for (i = 0; i < mk; i++)
                hb[i] += w[j] * HF[i + j * mk];
        }
    if (!(W > 0))
        return sl_fail(err, SL_EDEGENERATE, "degenerate", "no member has weight");
    for (l = 0; l < n; l++)
        xb[l] /= W;
    for (i = 0; i < mk; i++)
        hb[i] /= W;
    memset(Cxh, 0, n * mk * sizeof(double));
    memset(S, 0, mk * mk * sizeof(double));
    for (j = 0; j < N; j++) {
        if (!(w[j] > 0) || dead[j])
            continue;
        for (i = 0; i < mk; i++) {
            double di = HF[i + j * mk] - hb[i];
            for (l = 0; l < n; l++)
                Cxh[l + i * n] += w[j] / W * (X[l + j * n] - xb[l]) * di;
            for (r = 0; r <= i; r++)
                S[i + r * mk] += w[j] / W * di * (HF[r + j * mk] - hb[r]);
        }
    }
    for (i = 0; i < mk; i++) {
        double sg = cfg->sigma[r0 + b->wk_row[i]];
        for (r = 0; r < i; r++)
            S[r + i * mk] = S[i + r * mk];
        S[i + i * mk] += sg * sg;
    }
    /* K' = S^-1 C_hx: solve with the Cholesky factor of S */
    if (wk_chol(mk, S))
        return sl_fail(err, SL_EDEGENERATE, "degenerate",
                       "the innovation covariance of cycle %lu is not positive definite",
                       (unsigned long)(k + 1));
    for (l = 0; l < n; l++) {
        for (i = 0; i < mk; i++)
            tmp[i] = Cxh[l + i * n];
        wk_lsolve(mk, S, tmp);
        /* back substitution with L' */
        for (i = mk; i-- > 0;) {
            double vv = tmp[i];
            for (r = i + 1; r < mk; r++)
                vv -= S[r + i * mk] * tmp[r];
            tmp[i] = vv / S[i + i * mk];
        }
        for (i = 0; i < mk; i++)
            K[l + i * n] = tmp[i];
    }
    /* Sigma = (I - K H) Q (I - K H)' + K R K' and its factor */
    for (l = 0; l < n; l++)
        ldQ += 2.0 * log(cfg->state_noise[l]);
    for (l = 0; l < n; l++)
        for (r = 0; r <= l; r++) {
            double s = 0.0;
            size_t c;
            for (c = 0; c < n; c++) {
                double al = (double)(l == c), ar = (double)(r == c), q2;
                for (i = 0; i < mk; i++) {
                    al -= K[l + i * n] * Hs[i + c * mk];
                    ar -= K[r + i * n] * Hs[i + c * mk];
                }
                q2 = cfg->state_noise[c] * cfg->state_noise[c];
                s += al * q2 * ar;
            }
            for (i = 0; i < mk; i++) {
                double sg = cfg->sigma[r0 + b->wk_row[i]];
                s += K[l + i * n] * sg * sg * K[r + i * n];
            }
            Sg[l + r * n] = s;
            Sg[r + l * n] = s;
        }
    if (wk_chol(n, Sg))
        return sl_fail(err, SL_EDEGENERATE, "degenerate",
                       "the proposal covariance of cycle %lu is not positive definite",
                       (unsigned long)(k + 1));
    for (l = 0; l < n; l++)
        ldS += 2.0 * log(Sg[l + l * n]);
    /* move every member and weigh it */
    for (j = 0; j < N; j++) {
        sl_stream se;
        double *x = X + j * n;
        const double *mj = b->wk_m + j * n;
        double lp = 0.0;
        sl_stream_init(&se, cfg->seed, (uint32_t)j, (uint32_t)k, SL_PURPOSE_ANALYSIS);
        for (i = 0; i < mk; i++)
            tmp[i] = cfg->y[r0 + b->wk_row[i]] +
                     cfg->sigma[r0 + b->wk_row[i]] * sl_stream_normal(&se) - HF[i + j * mk];
        for (l = 0; l < n; l++)
            for (i = 0; i < mk; i++)
                x[l] += K[l + i * n] * tmp[i];
        /* log N(x_a; m_j, Q) */
        for (l = 0; l < n; l++) {
            double d = (x[l] - mj[l]) / cfg->state_noise[l];
            lp -= 0.5 * d * d;
        }
        lp -= 0.5 * ldQ;
        /* - log q(x_a | m_j), mu_j = m_j + K (y - H m_j) */
        {
            double *d = b->wk_d, q = 0.0;
            for (l = 0; l < n; l++) {
                d[l] = x[l] - mj[l];
                for (i = 0; i < mk; i++)
                    d[l] -= K[l + i * n] * (cfg->y[r0 + b->wk_row[i]] - HM[i + j * mk]);
            }
            wk_lsolve(n, Sg, d);
            for (l = 0; l < n; l++)
                q += d[l] * d[l];
            lp += 0.5 * q + 0.5 * ldS;
        }
        b->tmp2[j] = lp;
    }
    /* + log N(y; H x_a, R): the observation likelihood of the moved
     * members, by the run's own likelihood code */
    if ((st = sl_pfi_predict_obs(cfg, b, r0, m, tk, X, P, err)) != SL_OK)
        return st;
    {
        size_t sk;
        sl_pfi_loglik_all(cfg, b, r0, m, &sk);
    }
    for (j = 0; j < N; j++)
        b->ll[j] = isnan(b->ll[j]) ? -HUGE_VAL : b->ll[j] + b->tmp2[j];
    return SL_OK;
}

/* ------------------------------------------------------ the table entry */

/* The filter's buffers (but the deterministic forecasts, which the run
 * keeps: SL_ANALYSIS_NOISE_FREE) laid out in base (NULL: only measure);
 * returns the end of the layout, or 0 if a size overflows. */
static size_t wenkf_layout(const sl_pf_config *cfg, size_t m_max, unsigned char *base,
                           pf_buffers *b)
{
    const size_t N = cfg->N, n = cfg->model->n_state, big = (size_t)1 << 58;
    size_t mm = m_max ? m_max : 1, off = 0, end;
    if (n > big / 8 / n || mm > big / 8 / mm || n > big / 8 / mm)
        return 0;
    sl_ws_carve(base, &off, mm * N * 8, (void **)&b->wk_hf);
    sl_ws_carve(base, &off, mm * N * 8, (void **)&b->wk_hm);
    sl_ws_carve(base, &off, n * mm * 8, (void **)&b->wk_k);
    sl_ws_carve(base, &off, mm * mm * 8, (void **)&b->wk_s);
    sl_ws_carve(base, &off, mm * n * 8, (void **)&b->wk_h);
    sl_ws_carve(base, &off, n * n * 8, (void **)&b->wk_sig);
    sl_ws_carve(base, &off, (mm > n ? mm : n) * 8, (void **)&b->wk_tmp);
    sl_ws_carve(base, &off, n * 8, (void **)&b->wk_xb);
    sl_ws_carve(base, &off, mm * 8, (void **)&b->wk_hb);
    sl_ws_carve(base, &off, n * mm * 8, (void **)&b->wk_cxh);
    sl_ws_carve(base, &off, n * 8, (void **)&b->wk_d);
    sl_ws_carve(base, &off, N * 8, (void **)&b->tmp2);
    end = sl_ws_carve(base, &off, mm * sizeof(size_t), (void **)&b->wk_row);
    return sl_ws_size(end);
}

static size_t wenkf_workspace(const sl_analysis *self, const sl_pf_config *cfg,
                              size_t m_max, size_t nwin)
{
    pf_buffers b;
    (void)self;
    (void)nwin;
    return wenkf_layout(cfg, m_max, NULL, &b);
}

static void wenkf_start(const sl_analysis *self, const sl_pf_config *cfg, void *work,
                        pf_buffers *run)
{
    (void)self;
    wenkf_layout(cfg, run->m_max, (unsigned char *)work, run);
}

static sl_status wenkf_check(const sl_analysis *self, const sl_pf_config *cfg,
                             sl_error *err)
{
    const size_t n = cfg->model->n_state, v = n + cfg->model->n_param;
    const size_t m = cfg->obs_first[cfg->T];
    size_t k;
    (void)self;
    if (cfg->enkf != NULL || cfg->inner > 0 || cfg->temper.ess > 0 ||
        (cfg->param_move != NULL && cfg->param_move->replay))
        return sl_fail(err, SL_EINVAL, "badconfig",
                       "the weighted ensemble Kalman filter runs without an ensemble "
                       "Kalman analysis, SMC2, tempering or a move that re-runs paths");
    if (cfg->state_noise == NULL)
        return sl_fail(err, SL_EINVAL, "badconfig",
                       "the weighted ensemble Kalman filter needs state noise > 0 on "
                       "every state (its transition density)");
    for (k = 0; k < n; k++)
        if (!(cfg->state_noise[k] > 0))
            return sl_fail(err, SL_EINVAL, "badconfig",
                           "the weighted ensemble Kalman filter needs state noise > 0 "
                           "on every state; state %lu has %g",
                           (unsigned long)(k + 1), cfg->state_noise[k]);
    for (k = 0; k < m; k++) {
        if (cfg->family[k] != SL_FAMILY_GAUSSIAN)
            return sl_fail(err, SL_EINVAL, "badfamily",
                           "observation %lu: the weighted ensemble Kalman filter takes "
                           "Gaussian observations only", (unsigned long)(k + 1));
        if (cfg->var[k] >= v + cfg->n_lin)
            return sl_fail(err, SL_EINVAL, "badoperator",
                           "observation %lu: the weighted ensemble Kalman filter takes "
                           "states, parameters and linear operators only",
                           (unsigned long)(k + 1));
    }
    return SL_OK;
}

static sl_status wenkf_cycle(sl_analysis_cycle *c, sl_error *err)
{
    sl_status st;
    if (c->m == 0)
        return SL_OK;
    st = wenkf_update(c->cfg, c->run, c->k, c->r0, c->m, c->t, c->X, c->P, c->w, c->dead,
                      &c->skipped, err);
    if (st != SL_OK)
        return st;
    c->evals = c->cfg->N;
    c->nobs = c->m - c->skipped;
    return SL_OK;
}

const sl_analysis sl_analysis_wenkf = {
    "wenkf", SL_ANALYSIS_WEIGHTS | SL_ANALYSIS_MOVES | SL_ANALYSIS_NOISE_FREE, NULL,
    wenkf_check, wenkf_workspace, wenkf_start, wenkf_cycle,
};
