/* pf_smc2.c - SMC2: a particle filter per parameter vector, moved by
 * particle-marginal Metropolis-Hastings (used by sl_pf_run). */
#include <math.h>
#include <string.h>

#include "pf_internal.h"
#include "sluice/loglik.h"
#include "sluice/param_move.h"
#include "sluice/prior.h"
#include "sluice/resample.h"
#include "sluice/rng.h"
#include "sluice/weights.h"

/* ------------------------------------------------------------------ SMC2 */

/* A grouped ensemble of SMC2 (Chopin, Jacob & Papaspiliopoulos 2013): G
 * groups of M = cfg->inner members; the members of a group share one
 * parameter vector and form that vector's particle filter. */
typedef struct {
    double *X, *Z, *P, *E, *X2, *Z2, *P2, *E2;
    unsigned char *dead, *dead2;
    double *lw;   /* N: inner log-weights, normalised within each group */
    double *logz; /* G: each group's log-likelihood estimate so far */
    double *incr; /* G: its increment at the current cycle */
} smc2_sys;

/* A seed of its own for the particle filters that a move at cycle k,
 * tempering step 0, sweep w runs (splitmix64's finaliser, Steele, Lea &
 * Flood 2014, on the run's seed and the move's place). */
static uint64_t smc2_seed(uint64_t seed, size_t k, size_t w)
{
    uint64_t z = seed + 0x9E3779B97F4A7C15ULL * (1 + (uint64_t)k * 1024 + (uint64_t)w);
    z = (z ^ (z >> 30)) * 0xBF58476D1CE4E5B9ULL;
    z = (z ^ (z >> 27)) * 0x94D049BB133111EBULL;
    return z ^ (z >> 31);
}

static void smc2_swap(double **a, double **b)
{
    double *t = *a;
    *a = *b;
    *b = t;
}

/* Which buffer of each pair a system uses (5 bits), and back. */
static uint64_t smc2_bits(const smc2_sys *a)
{
    return SL_PFI_AFTER(a->X, a->X2) | SL_PFI_AFTER(a->Z, a->Z2) << 1 |
           SL_PFI_AFTER(a->P, a->P2) << 2 | SL_PFI_AFTER(a->E, a->E2) << 3 |
           SL_PFI_AFTER(a->dead, a->dead2) << 4;
}

static void smc2_order(smc2_sys *a, uint64_t bits)
{
    SL_PFI_ORDER(double, a->X, a->X2, bits & 1);
    SL_PFI_ORDER(double, a->Z, a->Z2, (bits >> 1) & 1);
    SL_PFI_ORDER(double, a->P, a->P2, (bits >> 2) & 1);
    SL_PFI_ORDER(double, a->E, a->E2, (bits >> 3) & 1);
    SL_PFI_ORDER(unsigned char, a->dead, a->dead2, (bits >> 4) & 1);
}

/* Advance every group's particle filter through cycle c: forecast,
 * weights, the group's log-likelihood increment into incr (added to
 * logz), and resampling within each group whose ESS fell below the
 * threshold (stream (seed, g, c, SL_PURPOSE_INNER_RESAMPLE)). */
static sl_status smc2_cycle(const sl_pf_config *cfg, pf_buffers *b, smc2_sys *sy,
                            size_t c, uint64_t seed, size_t *fidx, uint32_t *s,
                            double *t, size_t *evals, sl_error *err)
{
    const sl_model *md = cfg->model;
    const size_t N = cfg->N, M = cfg->inner, G = N / M, n = md->n_state,
                 p = md->n_param, q = md->n_forcing;
    const double tc = cfg->times[c];
    const size_t r0 = cfg->obs_first[c], m = cfg->obs_first[c + 1] - r0;
    size_t j, g, skipped;
    sl_status st;
    if ((st = sl_pfi_forecast(cfg, b, sy->X, sy->P, sy->E, b->U, t, c, c, s, fidx, NULL, seed,
                              NULL, 0, 0, err)) != SL_OK)
        return st;
    sl_pfi_add_state_noise(cfg, b, sy->X, c, NULL, seed, NULL, 0);
    for (j = 0; j < N; j++)
        if (!sy->dead[j] && sl_pfi_has_nonfinite(sy->X + j * n, n))
            sy->dead[j] = 1;
    for (g = 0; g < G; g++)
        sy->incr[g] = 0.0;
    if (m > 0) {
        if ((st = sl_pfi_predict_obs(cfg, b, r0, m, tc, sy->X, sy->P, err)) != SL_OK)
            return st;
        sl_pfi_loglik_into(cfg, b, r0, m, b->tmp, &skipped);
        *evals += N;
        if (skipped < m)
            for (g = 0; g < G; g++) {
                double mx = -HUGE_VAL, sum = 0.0, lse;
                for (j = g * M; j < (g + 1) * M; j++) {
                    double a = sy->dead[j] || isnan(b->tmp[j]) ? -HUGE_VAL
                                                               : sy->lw[j] + b->tmp[j];
                    b->tmp[j] = a;
                    if (a > mx)
                        mx = a;
                }
                if (!(mx > -HUGE_VAL)) {
                    /* no member of the group explains the data: its
                     * estimate is 0, and its weights stay as they were */
                    sy->incr[g] = -HUGE_VAL;
                    sy->logz[g] = -HUGE_VAL;
                    continue;
                }
                for (j = g * M; j < (g + 1) * M; j++)
                    sum += exp(b->tmp[j] - mx);
                lse = mx + log(sum);
                sy->incr[g] = lse;
                sy->logz[g] += lse;
                for (j = g * M; j < (g + 1) * M; j++)
                    sy->lw[j] = b->tmp[j] - lse;
            }
    }
    /* resampling within the groups whose ESS fell below the threshold */
    {
        int any = 0;
        for (g = 0; g < G; g++) {
            double e = 0.0, wsum = 0.0;
            uint32_t *anc = b->anc + g * M;
            for (j = g * M; j < (g + 1) * M; j++) {
                double wj = exp(sy->lw[j]);
                b->ll[j] = wj;
                e += wj * wj;
                wsum += wj;
            }
            if (wsum > 0 && 1.0 / e * (wsum * wsum) < cfg->threshold * (double)M) {
                sl_stream rs;
                size_t i;
                sl_stream_init(&rs, seed, (uint32_t)g, (uint32_t)c, SL_PURPOSE_INNER_RESAMPLE);
                cfg->resampler->run(M, b->ll + g * M, wsum, M, &rs, b->rwork, anc);
                for (i = 0; i < M; i++) {
                    anc[i] += (uint32_t)(g * M);
                    sy->lw[g * M + i] = -log((double)M);
                }
                any = 1;
            } else {
                for (j = 0; j < M; j++)
                    anc[j] = (uint32_t)(g * M + j);
            }
        }
        if (any) {
            sl_pfi_gather_cols(n, N, sy->X, sy->X2, b->anc, b->nt);
            sl_pfi_gather_cols(p, N, sy->Z, sy->Z2, b->anc, b->nt);
            sl_pfi_gather_cols(p, N, sy->P, sy->P2, b->anc, b->nt);
            sl_pfi_gather_cols(q, N, sy->E, sy->E2, b->anc, b->nt);
            for (j = 0; j < N; j++)
                sy->dead2[j] = sy->dead[b->anc[j]];
            smc2_swap(&sy->X, &sy->X2);
            smc2_swap(&sy->Z, &sy->Z2);
            smc2_swap(&sy->P, &sy->P2);
            smc2_swap(&sy->E, &sy->E2);
            {
                unsigned char *d = sy->dead;
                sy->dead = sy->dead2;
                sy->dead2 = d;
            }
        }
    }
    return SL_OK;
}

/* Copy group gs of system a into group gd of system d. */
static void smc2_copy_group(const sl_pf_config *cfg, const smc2_sys *a, size_t gs,
                            smc2_sys *d, size_t gd)
{
    const size_t M = cfg->inner, n = cfg->model->n_state, p = cfg->model->n_param,
                 q = cfg->model->n_forcing;
    memcpy(d->X + gd * M * n, a->X + gs * M * n, M * n * sizeof(double));
    memcpy(d->Z + gd * M * p, a->Z + gs * M * p, M * p * sizeof(double));
    memcpy(d->P + gd * M * p, a->P + gs * M * p, M * p * sizeof(double));
    memcpy(d->E + gd * M * q, a->E + gs * M * q, M * q * sizeof(double));
    memcpy(d->dead + gd * M, a->dead + gs * M, M);
    memcpy(d->lw + gd * M, a->lw + gs * M, M * sizeof(double));
    d->logz[gd] = a->logz[gs];
}

/* The PMMH move of every group after the groups were resampled at cycle
 * k: each proposes z' = z + s L xi (stream (seed, g, k,
 * SL_PURPOSE_REPLAY_MOVE + w)), runs a particle filter of M members with
 * z' from t0 through cycle k (a seed of its own; initial states drawn
 * from the run's initial ensemble, stream (seed', j, 0,
 * SL_PURPOSE_RERUN_START)), and takes that filter in place of its own
 * with probability min(1, prior(z') L^(z') / (prior(z) L^(z))). */
static sl_status smc2_move(const sl_pf_config *cfg, pf_buffers *b, smc2_sys *sy,
                           smc2_sys *pr, size_t k, uint32_t *gid, size_t *evals,
                           sl_error *err)
{
    const sl_param_mover *mv = &sl_param_move_resample_move;
    const size_t N = cfg->N, M = cfg->inner, G = N / M, n = cfg->model->n_state,
                 p = cfg->model->n_param, q = cfg->model->n_forcing;
    const double target = 0.5 * (1.0 + cfg->move.rm_diversity);
    sl_param_move_opts o = cfg->move;
    size_t w, g, i, j, nest = 0;
    sl_status st;
    for (i = 0; i < p; i++)
        nest += b->est[i];
    if (nest == 0)
        return SL_OK;
    for (g = 0; g < G; g++) {
        memcpy(b->ZG + g * p, sy->Z + g * M * p, p * sizeof(double));
        b->lp[g] = sl_pfi_log_prior_z(cfg, b->est, b->ZG + g * p);
    }
    for (w = 0; w < cfg->move.rm_sweeps; w++) {
        const uint64_t seed2 = smc2_seed(cfg->seed, k, w);
        size_t live = 0, acc = 0, fidx = 0, c;
        uint32_t s = 0;
        double t = cfg->t0;
        o.rm_scale = cfg->move.rm_scale * b->rm_adapt;
        sl_pfi_fit_proposal(cfg, b, &o, b->ZG, G);
        for (g = 0; g < G; g++) {
            sl_stream sm;
            double *z = b->ZG2 + g * p;
            sl_stream_init(&sm, cfg->seed, (uint32_t)g, (uint32_t)k,
                           (uint32_t)SL_PURPOSE_REPLAY_MOVE + (uint32_t)w);
            memcpy(z, b->ZG + g * p, p * sizeof(double));
            mv->member(&o, p, b->mv, z, &sm);
            b->ru[g] = sl_stream_uniform(&sm);
            b->rlp[g] = sl_pfi_log_prior_z(cfg, b->est, z);
        }
        /* the proposals' particle filters, all groups at once */
        for (j = 0; j < N; j++) {
            sl_stream s0;
            size_t src;
            const double *z = b->ZG2 + (j / M) * p;
            sl_stream_init(&s0, seed2, (uint32_t)j, 0, SL_PURPOSE_RERUN_START);
            src = (size_t)(sl_stream_uniform(&s0) * (double)N);
            if (src >= N)
                src = N - 1;
            memcpy(pr->X + j * n, b->X0 + src * n, n * sizeof(double));
            pr->dead[j] = (unsigned char)sl_pfi_has_nonfinite(pr->X + j * n, n);
            memcpy(pr->Z + j * p, z, p * sizeof(double));
            for (i = 0; i < p; i++)
                pr->P[i + j * p] = sl_transform_inverse(&cfg->ptrans[i], z[i]);
            pr->lw[j] = -log((double)M);
        }
        if (q > 0)
            memset(pr->E, 0, q * N * sizeof(double));
        for (g = 0; g < G; g++)
            pr->logz[g] = 0.0;
        for (c = 0; c <= k; c++)
            if ((st = smc2_cycle(cfg, b, pr, c, seed2, &fidx, &s, &t, evals, err)) != SL_OK)
                return st;
        for (g = 0; g < G; g++) {
            double now = b->lp[g] + sy->logz[g], prop = b->rlp[g] + pr->logz[g];
            b->acc[g] = 0;
            live++;
            if (!(prop > -HUGE_VAL) || isnan(prop))
                continue;
            if (!(now > -HUGE_VAL) || log(b->ru[g]) < prop - now) {
                smc2_copy_group(cfg, pr, g, sy, g);
                memcpy(b->ZG + g * p, b->ZG2 + g * p, p * sizeof(double));
                b->lp[g] = b->rlp[g];
                b->acc[g] = 1;
                acc++;
            }
        }
        /* fresh ids for the accepted groups */
        sl_pfi_renumber_ids(cfg, b, b->acc, gid, G);
        b->rm_sweeps++;
        b->rm_proposed += live;
        b->rm_accepted += acc;
        sl_pfi_adapt_scale(&b->rm_adapt, acc, live, 1e-3, 1e3);
        if (sl_pfi_diversity(cfg, b, gid, G) >= target)
            break;
    }
    return SL_OK;
}

/* The SMC2 run: the groups' filters advance together; each group weighs
 * by its filter's likelihood increment; when the ESS of the group
 * weights falls below threshold * G the groups are resampled (stream
 * (seed, 0, k, SL_PURPOSE_OUTER_RESAMPLE)) and moved by smc2_move. */
sl_status sl_pfi_smc2_run(const sl_pf_config *cfg, pf_buffers *b, void *work, double *X,
                          double *P, double *w, sl_pf_output *out, sl_error *err)
{
    const sl_model *md = cfg->model;
    const size_t N = cfg->N, M = cfg->inner, G = N / M, n = md->n_state,
                 p = md->n_param, q = md->n_forcing;
    smc2_sys sy, pr;
    double *olw = b->logw, *W = b->llx, t = cfg->t0;
    uint32_t *gid = b->vid[1], s = 0;
    size_t k, k0 = 0, j, g, i, fidx = 0;
    sl_status st;

    memset(&sy, 0, sizeof sy);
    sy.X = b->X[0]; sy.Z = b->Z[0]; sy.P = b->P[0]; sy.E = b->E[0];
    sy.X2 = b->X[1]; sy.Z2 = b->Z[1]; sy.P2 = b->P[1]; sy.E2 = b->E[1];
    sy.dead = b->dead[0]; sy.dead2 = b->dead[1];
    sy.lw = b->lw; sy.logz = b->cll; sy.incr = b->rll;
    pr.X = b->RX; pr.Z = b->RZ; pr.P = b->RP; pr.E = b->RE;
    pr.X2 = b->RX2; pr.Z2 = b->RZ2; pr.P2 = b->RP2; pr.E2 = b->RE2;
    pr.dead = b->rdead; pr.dead2 = b->rdead2;
    pr.lw = b->rlw; pr.logz = b->llk; pr.incr = b->rllk;

    memcpy(b->X0, X, n * N * sizeof(double));
    /* every member of a group takes its group's first parameter vector */
    for (j = 0; j < N; j++) {
        const size_t g0 = (j / M) * M;
        memcpy(sy.X + j * n, X + j * n, n * sizeof(double));
        for (i = 0; i < p; i++) {
            sy.P[i + j * p] = P[i + g0 * p];
            sy.Z[i + j * p] = sl_transform_forward(&cfg->ptrans[i], P[i + g0 * p]);
        }
        sy.dead[j] = (unsigned char)sl_pfi_has_nonfinite(X + j * n, n);
        sy.lw[j] = -log((double)M);
    }
    if (q > 0)
        memset(sy.E, 0, q * N * sizeof(double));
    for (i = 0; i < p; i++) {
        int same = 1;
        for (g = 1; g < G && same; g++)
            same = sy.Z[i + g * M * p] == sy.Z[i];
        b->est[i] = (unsigned char)(!same);
        for (g = 0; g < G; g++)
            gid[i + g * p] = same ? 0u : (uint32_t)g;
        for (g = 0; g < G; g++)
            if (!isfinite(sy.Z[i + g * M * p]) && !same)
                return sl_fail(err, SL_EINVAL, "badparams",
                               "parameter %lu of group %lu (%g) lies outside its bounds",
                               (unsigned long)(i + 1), (unsigned long)(g + 1),
                               P[i + g * M * p]);
    }
    for (g = 0; g < G; g++) {
        sy.logz[g] = 0.0;
        olw[g] = -log((double)G);
    }
    b->rm_adapt = 1.0;
    for (g = 0; g < G; g++)
        memcpy(b->ZG + g * p, sy.Z + g * M * p, p * sizeof(double));
    sl_param_move_resample_move.prepare(&cfg->move, p, G, b->ZG, NULL, b->mvlast, NULL);
    out->log_evidence = 0.0;
    out->steps = 0;
    if (cfg->resume != NULL) {
        /* a checkpoint: the workspace, weights, loop values and which
         * buffer of each pair the two systems use */
        const sl_pf_snapshot_head *h = &cfg->resume->head;
        if ((st = sl_pfi_snap_restore(cfg, b, work, w, err)) != SL_OK)
            return st;
        smc2_order(&sy, h->swapped >> 3);
        smc2_order(&pr, h->swapped >> 8);
        k0 = (size_t)h->next;
        s = (uint32_t)h->s;
        fidx = (size_t)h->fidx;
        t = h->t;
        out->log_evidence = h->log_evidence;
        out->steps = (size_t)h->steps;
    }

    for (k = k0; k < cfg->T; k++) {
        size_t evals = 0, m = cfg->obs_first[k + 1] - cfg->obs_first[k], nobs = 0, ndead = 0;
        double mx = -HUGE_VAL, sum = 0.0, lse, e2 = 0.0, ess, ogess;
        int resampled = 0;
        uint32_t s0 = s;
        b->rm_sweeps = b->rm_proposed = b->rm_accepted = 0;
        if ((st = smc2_cycle(cfg, b, &sy, k, cfg->seed, &fidx, &s, &t, &evals, err)) != SL_OK)
            return st;
        out->steps += s - s0;
        for (i = 0; i < m; i++)
            nobs += !isnan(cfg->y[cfg->obs_first[k] + i]);
        /* group weights: the previous ones times the increments */
        for (g = 0; g < G; g++) {
            double a = olw[g] + sy.incr[g];
            if (a > mx)
                mx = a;
        }
        if (!(mx > -HUGE_VAL)) {
            out->degenerate[k] = 1;
            out->logz[k] = -HUGE_VAL;
            out->log_evidence = -HUGE_VAL;
        } else {
            for (g = 0; g < G; g++)
                sum += exp(olw[g] + sy.incr[g] - mx);
            lse = mx + log(sum);
            for (g = 0; g < G; g++)
                olw[g] = olw[g] + sy.incr[g] - lse;
            out->degenerate[k] = 0;
            out->logz[k] = lse; /* olw was normalised: log sum W_g exp(incr_g) */
            out->log_evidence += lse;
        }
        for (g = 0; g < G; g++) {
            W[g] = exp(olw[g]);
            e2 += W[g] * W[g];
        }
        ogess = e2 > 0 ? 1.0 / e2 : 0.0;
        /* member weights W_g w_gi, for the record */
        for (j = 0; j < N; j++) {
            w[j] = W[j / M] * exp(sy.lw[j]);
            ndead += sy.dead[j];
        }
        e2 = 0.0;
        for (j = 0; j < N; j++)
            e2 += w[j] * w[j];
        ess = e2 > 0 ? 1.0 / e2 : 0.0;
        for (j = 0; j < N; j++)
            for (i = 0; i < p; i++)
                b->vid[0][i + j * p] = gid[i + (j / M) * p];
        if (!cfg->no_summary) {
            sl_status sst;
            sst = sl_pfi_summarise(cfg, b, sy.X, sy.P, w, out, k, err);
            if (sst != SL_OK)
                return sst;
            sst = sl_pfi_summarise_derived(cfg, b, cfg->times[k], sy.X, sy.P, w, 0, out, k, err);
            if (sst != SL_OK)
                return sst;
        }
        out->ess[k] = ess;
        out->skipped[k] = (double)(m - nobs);
        out->nonfinite[k] = (double)ndead;
        if (out->fmean != NULL)
            /* SMC2 does not record the forecast (its cycle weighs as it
             * goes): NaN, not a mean it did not compute */
            for (i = 0; i < n + p; i++)
                out->fmean[i + k * (n + p)] = NAN;
        /* resample the groups and move them */
        if (ogess < cfg->threshold * (double)G && mx > -HUGE_VAL) {
            sl_stream rs;
            double wsum = 0.0;
            for (g = 0; g < G; g++)
                wsum += W[g];
            sl_stream_init(&rs, cfg->seed, 0, (uint32_t)k, SL_PURPOSE_OUTER_RESAMPLE);
            cfg->resampler->run(G, W, wsum, G, &rs, b->rwork, b->anc);
            /* gather whole groups into the proposal system, then back */
            for (g = 0; g < G; g++)
                smc2_copy_group(cfg, &sy, b->anc[g], &pr, g);
            for (g = 0; g < G; g++) {
                smc2_copy_group(cfg, &pr, g, &sy, g);
                for (i = 0; i < p; i++)
                    b->vid[0][i + g * p] = gid[i + (size_t)b->anc[g] * p];
            }
            memcpy(gid, b->vid[0], G * p * sizeof(uint32_t));
            for (g = 0; g < G; g++)
                olw[g] = -log((double)G);
            resampled = 1;
            if ((st = smc2_move(cfg, b, &sy, &pr, k, gid, &evals, err)) != SL_OK)
                return st;
            for (j = 0; j < N; j++)
                w[j] = exp(sy.lw[j]) / (double)G;
            for (j = 0; j < N; j++)
                for (i = 0; i < p; i++)
                    b->vid[0][i + j * p] = gid[i + (j / M) * p];
        }
        out->resampled[k] = resampled;
        if (p > 0)
            sl_pfi_record_diversity(cfg, b, b->vid[0], sy.Z, w, out, k);
        if (out->temper_steps != NULL)
            out->temper_steps[k] = nobs > 0 ? 1.0 : 0.0;
        if (out->loglik_evals != NULL)
            out->loglik_evals[k] = (double)evals;
        if (out->move_sweeps != NULL)
            out->move_sweeps[k] = (double)b->rm_sweeps;
        if (out->move_accept != NULL)
            out->move_accept[k] = b->rm_proposed > 0
                                      ? (double)b->rm_accepted / (double)b->rm_proposed
                                      : (double)NAN;
        if (cfg->checkpoint != NULL &&
            ((k + 1) % cfg->checkpoint_every == 0 || k + 1 == cfg->T)) {
            sl_pf_snapshot sn;
            memset(&sn, 0, sizeof sn);
            sn.head.next = k + 1;
            sn.head.s = s;
            sn.head.fidx = fidx;
            sn.head.t = t;
            sn.head.log_evidence = out->log_evidence;
            sn.head.steps = out->steps;
            sn.head.swapped = smc2_bits(&sy) << 3 | smc2_bits(&pr) << 8;
            if ((st = sl_pfi_snap_call(cfg, b, work, w, &sn, err)) != SL_OK)
                return st;
        }
    }
    memcpy(X, sy.X, n * N * sizeof(double));
    memcpy(P, sy.P, p * N * sizeof(double));
    return SL_OK;
}
