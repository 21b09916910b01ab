/* test_pf.c - the particle-filter cycle driven from plain C with the
 * built-in linear model: a Kalman-filter worked example, bit-identical runs
 * across thread counts, every reason of sl_pf_check, degenerate cycles,
 * resampling and ancestry, and absurd workspace sizes. */
#include "check.h"
#include "sluice/integrate.h"
#include "sluice/loglik.h"
#include "sluice/pf.h"
#include "sluice/rng.h"

#include <float.h>
#include <math.h>
#include <stdint.h>
#include <stdlib.h>
#include <gsl/gsl_cdf.h>

#include "../../src/pf_internal.h"

#define TWO_PI 6.283185307179586476925287

/* ---------------------------------------------------------- run buffers */

/* Every array of a run, allocated by the test; calloc so that entries a run
 * does not write compare equal between runs. */
typedef struct {
    sl_pf_output out;
    double *X, *P, *w;
    void *work;
    size_t n, N, T;
} run_buf;

static void run_free(run_buf *r)
{
    ck_free(r->out.mean);
    ck_free(r->out.quant);
    ck_free(r->out.ess);
    ck_free(r->out.logz);
    ck_free(r->out.resampled);
    ck_free(r->out.degenerate);
    ck_free(r->out.skipped);
    ck_free(r->out.nonfinite);
    ck_free(r->out.temper_steps);
    ck_free(r->out.loglik_evals);
    ck_free(r->out.fmean);
    ck_free(r->out.hist_X);
    ck_free(r->out.hist_P);
    ck_free(r->out.hist_w);
    ck_free(r->out.hist_a);
    ck_free(r->X);
    ck_free(r->P);
    ck_free(r->w);
    ck_free(r->work);
    memset(r, 0, sizeof *r);
}

static void *zalloc(size_t count, size_t size)
{
    return ck_calloc(count ? count : 1, size);
}

/* The outputs every run records, zeroed: v x T means, v x nq x T
 * quantiles, and the per-cycle ESS, log-evidence increments, resampling,
 * degeneracy, skipped and non-finite counts (run_free gives them back). */
static void alloc_outputs(run_buf *r, size_t v, size_t nq, size_t T)
{
    r->out.mean = zalloc(v * T, sizeof(double));
    r->out.quant = zalloc(v * nq * T, sizeof(double));
    r->out.ess = zalloc(T, sizeof(double));
    r->out.logz = zalloc(T, sizeof(double));
    r->out.resampled = zalloc(T, sizeof(double));
    r->out.degenerate = zalloc(T, sizeof(double));
    r->out.skipped = zalloc(T, sizeof(double));
    r->out.nonfinite = zalloc(T, sizeof(double));
}

/* Allocate the outputs for cfg (the model has no parameters), copy the
 * initial states X0 (n x N) in and run. */
static sl_status run(const sl_pf_config *cfg, const double *X0, run_buf *r,
                     sl_error *err)
{
    const size_t n = cfg->model->n_state, N = cfg->N, T = cfg->T;
    const size_t v = n, nq = cfg->nq;
    size_t bytes = sl_pf_workspace(cfg);
    memset(r, 0, sizeof *r);
    r->n = n;
    r->N = N;
    r->T = T;
    alloc_outputs(r, v, nq, T);
    r->out.temper_steps = zalloc(T, sizeof(double));
    r->out.loglik_evals = zalloc(T, sizeof(double));
    r->out.fmean = zalloc(v * T, sizeof(double));
    if (cfg->keep_history) {
        r->out.hist_X = zalloc(n * N * T, sizeof(double));
        r->out.hist_w = zalloc(N * T, sizeof(double));
        r->out.hist_a = zalloc(N * T, sizeof(double));
    }
    r->X = zalloc(n * N, sizeof(double));
    r->P = zalloc(1, sizeof(double));
    r->w = zalloc(N, sizeof(double));
    r->work = bytes ? ck_malloc(bytes) : NULL;
    if (!r->out.mean || !r->out.quant || !r->out.ess || !r->out.logz ||
        !r->out.resampled || !r->out.degenerate || !r->out.skipped ||
        !r->out.nonfinite || !r->out.temper_steps || !r->out.loglik_evals || !r->out.fmean || !r->X || !r->P || !r->w || !r->work ||
        (cfg->keep_history &&
         (!r->out.hist_X || !r->out.hist_w || !r->out.hist_a)))
        return sl_fail(err, SL_ENOMEM, "nomemory", "test buffers");
    memcpy(r->X, X0, n * N * sizeof(double));
    return sl_pf_run(cfg, r->X, r->P, r->w, r->work, &r->out, err);
}

/* Observations of one run, rows grouped by cycle. */
typedef struct {
    size_t first[16];
    double y[16], sigma[16], aux[16];
    int family[16];
    size_t var[16];
} obs_table;

/* A configuration with every field set to a valid default. */
static void base_config(sl_pf_config *c, const sl_model *md, size_t N,
                        size_t T, const double *times, const obs_table *o)
{
    memset(c, 0, sizeof *c);
    c->model = md;
    c->N = N;
    c->t0 = 0.0;
    c->T = T;
    c->times = times;
    c->obs_first = o->first;
    c->y = o->y;
    c->sigma = o->sigma;
    c->aux = o->aux;
    c->family = o->family;
    c->var = o->var;
    c->forcing.q = md->n_forcing;
    c->param_move = &sl_param_move_fixed;
    c->move.lw_delta = 0.98;
    c->move.kernel_scale = 1.0;
    c->move.min_ess = SL_KERNEL_MIN_ESS;
    c->resampler = &sl_resampler_systematic;
    c->threshold = 0.5;
    c->seed = 42;
    c->threads = 1;
}

/* One Gaussian observation of state 0 per cycle. */
static void one_obs_per_cycle(obs_table *o, size_t T, const double *y,
                              double sigma)
{
    size_t k;
    memset(o, 0, sizeof *o);
    for (k = 0; k < T; k++) {
        o->first[k] = k;
        o->y[k] = y[k];
        o->sigma[k] = sigma;
        o->family[k] = SL_FAMILY_GAUSSIAN;
        o->var[k] = 0;
    }
    o->first[T] = T;
}

/* ------------------------------------------------ the worked example */

/* Random walk x_k = x_{k-1} + e_k, Q = R = 1, x0 ~ N(0, 1), y = (1, 2, 0)
 * at times 1, 2, 3 (MODELS.md section 4, hand-computed from the Kalman
 * filter equations): filtered means 2/3, 3/2, 4/7 and log-likelihood
 * -(3/2) log(2 pi) - (1/2) log 21 - 13/14. */
static void check_worked_example(void)
{
    enum { N = 200000, T = 3 };
    const double yv[T] = {1.0, 2.0, 0.0}, times[T] = {1.0, 2.0, 3.0};
    const double hand_mean[T] = {2.0 / 3.0, 1.5, 4.0 / 7.0};
    const double hand_logz = -1.5 * log(TWO_PI) - 0.5 * log(21.0) - 13.0 / 14.0;
    const double probs[3] = {0.1, 0.5, 0.9};
    double A = 1.0, L = 1.0, m = 0.0, Pv = 1.0, ll = 0.0, kf_mean[T], kf_var[T];
    double *X0 = ck_malloc(N * sizeof *X0);
    sl_linear lin = {1, 0, &A, NULL, NULL, &L};
    sl_model md;
    sl_pf_config cfg;
    obs_table o;
    sl_error err;
    run_buf r;
    sl_status st;
    size_t j, k;

    /* The Kalman recursion (Kalman 1960) recomputed here agrees with the
     * hand values; it also gives the posterior variances for the quantile
     * checks below. */
    for (k = 0; k < T; k++) {
        double Pp = Pv + 1.0, S = Pp + 1.0, K = Pp / S, e = yv[k] - m;
        ll += -0.5 * log(TWO_PI * S) - 0.5 * e * e / S;
        m += K * e;
        Pv = (1.0 - K) * Pp;
        kf_mean[k] = m;
        kf_var[k] = Pv;
        CHECK_CLOSE(m, hand_mean[k], 1e-14, "Kalman mean against the hand value");
    }
    CHECK_CLOSE(ll, hand_logz, 1e-13, "Kalman log-likelihood against the hand value");

    CHECK(sl_linear_model(&md, &lin, 1.0, &err) == SL_OK, "linear model: %s",
          err.message);
    one_obs_per_cycle(&o, T, yv, 1.0);
    base_config(&cfg, &md, N, T, times, &o);
    cfg.nq = 3;
    cfg.probs = probs;
    cfg.seed = 20250101u;
    for (j = 0; j < N; j++) {
        sl_stream s;
        sl_stream_init(&s, cfg.seed, (uint32_t)j, 0, SL_PURPOSE_PRIOR);
        X0[j] = sl_stream_normal(&s);
    }
    st = run(&cfg, X0, &r, &err);
    CHECK(st == SL_OK, "worked example run: %s", st ? err.message : "");
    if (st == SL_OK) {
        /* Tolerance: the ESS after weighting is 0.36 N to 0.65 N here, so
         * the standard error of a filtered mean, about sqrt(P_k / ESS), is
         * at most sqrt(0.625 / 7.1e4) = 3.0e-3; 0.012 is four of those.
         * Measured over 50 seeds: rms error 1.6e-3 to 2.2e-3 per cycle,
         * largest 6.0e-3. */
        for (k = 0; k < T; k++) {
            CHECK_CLOSE(r.out.mean[k], hand_mean[k], 0.012, "filtered mean");
            CHECK(r.out.degenerate[k] == 0 && r.out.ess[k] > 0.2 * N &&
                  r.out.ess[k] <= N, "cycle %lu: ess %g, degenerate %g",
                  (unsigned long)k, r.out.ess[k], r.out.degenerate[k]);
        }
        /* Weighted quantiles of the Gaussian posterior N(m_k, P_k) (GSL's
         * gsl_cdf_ugaussian_Pinv); the standard error of a sample quantile
         * is sqrt(p(1-p)/ESS)/f(q) <= 5.1e-3 for these levels (common
         * practice): tolerance 0.03. */
        for (k = 0; k < T; k++)
            for (j = 0; j < 3; j++)
                CHECK_CLOSE(r.out.quant[j + 3 * k],
                            kf_mean[k] + sqrt(kf_var[k]) *
                                gsl_cdf_ugaussian_Pinv(probs[j]),
                            0.03, "filtered quantile");
        /* The evidence estimate is unbiased with a relative variance of
         * order 1/N per cycle: its log had an rms error of 3.3e-3 over 50
         * seeds, so 0.05 is fifteen of those. */
        CHECK_CLOSE(r.out.log_evidence, hand_logz, 0.05, "log-evidence");
        CHECK_CLOSE(r.out.logz[0] + r.out.logz[1] + r.out.logz[2],
                    r.out.log_evidence, 1e-12, "log-evidence is the sum of logz");
        CHECK(r.out.steps == 3, "steps %lu, expected 3", (unsigned long)r.out.steps);
        for (k = 0; k < T; k++)
            CHECK(r.out.temper_steps[k] == 1 && r.out.loglik_evals[k] == N,
                  "untempered cycle %lu: %g steps, %g evaluations", (unsigned long)k,
                  r.out.temper_steps[k], r.out.loglik_evals[k]);
    }
    run_free(&r);
    /* With tempering at a target of 0.9 N (above every cycle's ESS here)
     * the likelihood enters in steps; the evidence is the product over
     * steps of the mean incremental weights and must still be the
     * Kalman value, within the same tolerances (the extra resamplings
     * add Monte Carlo error of the same order). */
    cfg.temper.ess = 0.9;
    cfg.temper.max_steps = 50;
    st = run(&cfg, X0, &r, &err);
    CHECK(st == SL_OK, "tempered worked example: %s", st ? err.message : "");
    if (st == SL_OK) {
        double logz = 0.0;
        for (k = 0; k < T; k++) {
            CHECK(r.out.temper_steps[k] >= 2 && r.out.temper_steps[k] <= 50,
                  "cycle %lu tempered: %g steps", (unsigned long)k, r.out.temper_steps[k]);
            CHECK(r.out.loglik_evals[k] == N, "no parameter: one likelihood pass, got %g",
                  r.out.loglik_evals[k]);
            CHECK(r.out.resampled[k] == 1, "tempering resamples");
            CHECK_CLOSE(r.out.mean[k], hand_mean[k], 0.012, "tempered filtered mean");
            logz += r.out.logz[k];
        }
        CHECK_CLOSE(r.out.log_evidence, hand_logz, 0.05, "tempered log-evidence");
        CHECK_CLOSE(logz, r.out.log_evidence, 1e-12, "tempered log-evidence is the sum of logz");
    }
    run_free(&r);
    cfg.temper.max_steps = 1; /* a cap of one step: no tempering */
    st = run(&cfg, X0, &r, &err);
    CHECK(st == SL_OK && r.out.temper_steps[0] == 1 && r.out.temper_steps[2] == 1,
          "max_steps 1 is no tempering");
    run_free(&r);
    ck_free(X0);
}

/* ------------------------------------------------------- determinism */

/* A two-state linear model with one forcing series (perturbed,
 * multiplicative AR(1)), model noise, extra state noise, a Student-t and a
 * missing observation, resampling at ESS < 0.7 N and history: every path of
 * the cycle that may run in parallel. */
static const double A2[4] = {0.9, -0.2, 0.1, 0.95}, B2[2] = {0.5, 0.1},
                    c2[2] = {0.05, -0.02}, L2[4] = {0.3, 0.1, 0.0, 0.2};
static const sl_linear lin2 = {2, 1, A2, B2, c2, L2};

static void forcing_series(double *ft, double *fv, size_t nt)
{
    size_t i;
    for (i = 0; i < nt; i++) {
        ft[i] = 0.5 * (double)i;
        fv[i] = 1.0 + 0.5 * sin(0.7 * (double)i);
    }
}

static void two_state_obs(obs_table *o)
{
    memset(o, 0, sizeof *o);
    /* cycle 1: x1; cycle 2: x2 (Student t, 4 dof) and x1 missing; cycle 3:
     * none; cycle 4: x1 and x2; cycle 5: x2 */
    o->first[0] = 0;
    o->first[1] = 1;
    o->first[2] = 3;
    o->first[3] = 3;
    o->first[4] = 5;
    o->first[5] = 6;
    o->y[0] = 0.8;  o->var[0] = 0; o->family[0] = SL_FAMILY_GAUSSIAN;
    o->y[1] = -0.3; o->var[1] = 1; o->family[1] = SL_FAMILY_STUDENT_T; o->aux[1] = 4;
    o->y[2] = NAN;  o->var[2] = 0; o->family[2] = SL_FAMILY_GAUSSIAN;
    o->y[3] = 1.1;  o->var[3] = 0; o->family[3] = SL_FAMILY_GAUSSIAN;
    o->y[4] = 0.2;  o->var[4] = 1; o->family[4] = SL_FAMILY_GAUSSIAN;
    o->y[5] = 0.4;  o->var[5] = 1; o->family[5] = SL_FAMILY_GAUSSIAN;
    o->sigma[0] = 0.3;
    o->sigma[1] = 0.25;
    o->sigma[2] = 0.3;
    o->sigma[3] = 0.2;
    o->sigma[4] = 0.2;
    o->sigma[5] = 0.15;
}

static int same(const void *a, const void *b, size_t bytes)
{
    return memcmp(a, b, bytes) == 0;
}

/* Bit-identical outputs of two runs of the same configuration. */
static int identical(const run_buf *a, const run_buf *b, size_t nq)
{
    const size_t n = a->n, N = a->N, T = a->T, d = sizeof(double);
    return same(a->out.mean, b->out.mean, n * T * d) &&
           same(a->out.fmean, b->out.fmean, n * T * d) &&
           same(a->out.quant, b->out.quant, n * nq * T * d) &&
           same(a->out.ess, b->out.ess, T * d) &&
           same(a->out.logz, b->out.logz, T * d) &&
           same(a->out.resampled, b->out.resampled, T * d) &&
           same(a->out.skipped, b->out.skipped, T * d) &&
           same(a->out.temper_steps, b->out.temper_steps, T * d) &&
           same(a->out.loglik_evals, b->out.loglik_evals, T * d) &&
           same(a->out.hist_X, b->out.hist_X, n * N * T * d) &&
           same(a->out.hist_w, b->out.hist_w, N * T * d) &&
           same(a->out.hist_a, b->out.hist_a, N * T * d) &&
           same(a->X, b->X, n * N * d) && same(a->w, b->w, N * d) &&
           same(&a->out.log_evidence, &b->out.log_evidence, d) &&
           a->out.steps == b->out.steps;
}

/* ------------------------------------------------- forcing noise draws */

/* The perturbed forcing of member j at step s is u0 + sd z with z the
 * normals of stream (seed, j, s, SL_PURPOSE_FORCING), one per noisy
 * forcing in order (additive noise, phi = 0). A linear model x = 0 x + I u
 * makes each member's state its forcing after every step, so the history
 * shows the draws: checked against the stream itself (the documented
 * keying of sl_forcing) for four noisy forcings and an unperturbed one
 * between them, and for five noisy ones, 150 members, 1 and 2 threads. */
static void check_forcing_draws(void)
{
    enum { N = 150, T = 3, Q = 5 };
    static double Az[Q * Q], Bi[Q * Q], X0[Q * N];
    const double times[T] = {1.0, 2.0, 3.0}, ft[1] = {0.0};
    double fv[Q], fsd[Q], fphi[Q];
    int noise[Q], thr, pass;
    size_t i, j, k, bad;
    obs_table o;
    memset(&o, 0, sizeof o);
    for (k = 0; k < T; k++) {
        o.first[k] = k;
        o.y[k] = 1.0;
        o.sigma[k] = 1e3;
        o.family[k] = SL_FAMILY_GAUSSIAN;
    }
    o.first[T] = T;
    for (i = 0; i < Q * Q; i++)
        Bi[i] = i % (Q + 1) == 0 ? 1.0 : 0.0; /* the identity */
    for (i = 0; i < Q; i++) {
        fv[i] = 1.0 + (double)i;
        fsd[i] = 0.1 * (double)(i + 1);
        fphi[i] = 0.0;
    }
    /* pass 0: the third forcing unperturbed (it draws nothing, so the
     * fourth takes the third normal); pass 1: all five noisy */
    for (pass = 0; pass < 2; pass++)
        for (thr = 1; thr <= 2; thr++) {
            const sl_linear lin = {Q, Q, Az, Bi, NULL, NULL};
            sl_model md;
            sl_pf_config cfg;
            sl_error err;
            run_buf r;
            for (i = 0; i < Q; i++)
                noise[i] = pass == 0 && i == 2 ? SL_FORCING_EXACT : SL_FORCING_ADDITIVE;
            CHECK(sl_linear_model(&md, &lin, 1.0, &err) == SL_OK, "model: %s", err.message);
            base_config(&cfg, &md, N, T, times, &o);
            cfg.forcing.nt = 1;
            cfg.forcing.time = ft;
            cfg.forcing.value = fv;
            cfg.forcing.hold = 1;
            cfg.forcing.noise = noise;
            cfg.forcing.sd = fsd;
            cfg.forcing.phi = fphi;
            cfg.threshold = 0.0; /* never resample: the history is the forecast */
            cfg.keep_history = 1;
            cfg.threads = thr;
            cfg.seed = 1234;
            if (run(&cfg, X0, &r, &err) != SL_OK) {
                CHECK(0, "forcing draws run: %s", err.message);
                run_free(&r);
                continue;
            }
            bad = 0;
            for (k = 0; k < T; k++)
                for (j = 0; j < N; j++) {
                    sl_stream st;
                    sl_stream_init(&st, 1234, (uint32_t)j, (uint32_t)k, SL_PURPOSE_FORCING);
                    for (i = 0; i < Q; i++) {
                        const double want = noise[i] == SL_FORCING_EXACT
                                                ? fv[i]
                                                : fv[i] + fsd[i] * sl_stream_normal(&st);
                        bad += r.out.hist_X[i + j * Q + k * Q * N] != want;
                    }
                }
            CHECK(bad == 0,
                  "forcing draws (%s), %d thread(s): %lu values differ from the streams'",
                  pass == 0 ? "one unperturbed" : "all perturbed", thr, (unsigned long)bad);
            run_free(&r);
        }
}

/* ----------------------------------------------------------- checkpoints */

/* The snapshot a checkpoint callback took (its copies), and the cycle at
 * which to take it. */
typedef struct {
    size_t at, calls;
    sl_pf_snapshot snap;
    size_t N, bytes;
    int fail;
} snap_keep;

static sl_status keep_snapshot(void *ctx, const sl_pf_snapshot *sn, sl_error *err)
{
    snap_keep *k = (snap_keep *)ctx;
    k->calls++;
    if (k->fail)
        return sl_fail(err, SL_EINVAL, "full", "the disk is full");
    if (sn->head.next != k->at)
        return SL_OK;
    k->snap.head = sn->head;
    k->bytes = (size_t)sn->head.work_bytes;
    k->snap.w = ck_malloc(k->N * sizeof(double));
    k->snap.work = ck_malloc(k->bytes);
    if (k->snap.w == NULL || k->snap.work == NULL)
        return sl_fail(err, SL_ENOMEM, "nomemory", "test snapshot");
    memcpy(k->snap.w, sn->w, k->N * sizeof(double));
    memcpy(k->snap.work, sn->work, k->bytes);
    return SL_OK;
}

/* A run resumed from the snapshot of its cycle 2 ends bit-identical to
 * the run never stopped, with forcing and state noise and resampling;
 * the snapshot's checks refuse a damaged or foreign one; a failing
 * callback ends the run with its error. */
static void check_snapshot(void)
{
    enum { N = 301, T = 5, NT = 20 };
    const double times[T] = {1.0, 2.5, 3.0, 4.5, 6.0};
    const double probs[2] = {0.1, 0.9};
    const double snoise[2] = {0.05, 0.02};
    const int noise[1] = {SL_FORCING_ADDITIVE};
    const double fsd[1] = {0.3}, fphi[1] = {0.5};
    double ft[NT], fv[NT], X0[2 * N];
    sl_model md;
    sl_pf_config cfg;
    obs_table o;
    sl_error err;
    run_buf ref, res;
    snap_keep keep;
    sl_status st;
    size_t j, k;

    CHECK(sl_linear_model(&md, &lin2, 0.5, &err) == SL_OK, "model: %s", err.message);
    forcing_series(ft, fv, NT);
    two_state_obs(&o);
    base_config(&cfg, &md, N, T, times, &o);
    cfg.forcing.nt = NT;
    cfg.forcing.time = ft;
    cfg.forcing.value = fv;
    cfg.forcing.noise = noise;
    cfg.forcing.sd = fsd;
    cfg.forcing.phi = fphi;
    cfg.state_noise = snoise;
    cfg.threshold = 0.9;
    cfg.nq = 2;
    cfg.probs = probs;
    cfg.keep_history = 1;
    for (j = 0; j < 2 * N; j++)
        X0[j] = 0.3 * (double)(j % 7) - 0.9;
    memset(&keep, 0, sizeof keep);
    keep.at = 2;
    keep.N = N;
    cfg.checkpoint = keep_snapshot;
    cfg.checkpoint_ctx = &keep;
    cfg.checkpoint_every = 2;
    st = run(&cfg, X0, &ref, &err);
    CHECK(st == SL_OK, "checkpointed run: %s", err.message);
    /* cycles 2 and 4, and the last */
    CHECK(keep.calls == 3, "checkpoint calls: %lu, expected 3", (unsigned long)keep.calls);
    CHECK(keep.snap.work != NULL, "no snapshot at cycle 2");
    if (st == SL_OK && keep.snap.work != NULL) {
        double nres = 0;
        for (k = 2; k < T; k++)
            nres += ref.out.resampled[k];
        CHECK(nres >= 1, "the resumed cycles must resample");
        cfg.checkpoint = NULL;
        cfg.resume = &keep.snap;
        st = run(&cfg, X0, &res, &err);
        CHECK(st == SL_OK, "resumed run: %s", err.message);
        if (st == SL_OK) {
            /* the outputs of cycles 0 and 1 are the caller's to restore */
            for (k = 0; k < 2; k++) {
                memcpy(res.out.mean + 2 * k, ref.out.mean + 2 * k, 2 * sizeof(double));
                memcpy(res.out.fmean + 2 * k, ref.out.fmean + 2 * k, 2 * sizeof(double));
                memcpy(res.out.quant + 4 * k, ref.out.quant + 4 * k, 4 * sizeof(double));
                res.out.ess[k] = ref.out.ess[k];
                res.out.logz[k] = ref.out.logz[k];
                res.out.resampled[k] = ref.out.resampled[k];
                res.out.skipped[k] = ref.out.skipped[k];
                res.out.temper_steps[k] = ref.out.temper_steps[k];
                res.out.loglik_evals[k] = ref.out.loglik_evals[k];
                memcpy(res.out.hist_X + 2 * N * k, ref.out.hist_X + 2 * N * k,
                       2 * N * sizeof(double));
                memcpy(res.out.hist_w + N * k, ref.out.hist_w + N * k, N * sizeof(double));
                memcpy(res.out.hist_a + N * k, ref.out.hist_a + N * k, N * sizeof(double));
            }
            CHECK(identical(&ref, &res, 2), "resumed run differs from the unbroken one");
        }
        run_free(&res);
        /* damaged or foreign snapshots */
        keep.snap.head.magic ^= 1;
        CHECK(sl_pf_snapshot_check(&cfg, &keep.snap, &err) == SL_EINVAL &&
                  strcmp(err.reason, "badsnapshot") == 0, "bad magic accepted");
        keep.snap.head.magic ^= 1;
        keep.snap.head.next = T + 1;
        CHECK(sl_pf_snapshot_check(&cfg, &keep.snap, &err) == SL_EINVAL, "next > T accepted");
        keep.snap.head.next = 2;
        keep.snap.head.cur = 2;
        CHECK(sl_pf_snapshot_check(&cfg, &keep.snap, &err) == SL_EINVAL, "cur 2 accepted");
        keep.snap.head.cur = 0;
        CHECK(sl_pf_snapshot_check(&cfg, &keep.snap, &err) == SL_OK, "a good snapshot: %s",
              err.message);
        cfg.N = N - 1;
        CHECK(sl_pf_snapshot_check(&cfg, &keep.snap, &err) == SL_EINVAL,
              "a snapshot of another ensemble size accepted");
        cfg.N = N;
        cfg.resume = NULL;
    }
    run_free(&ref);
    ck_free(keep.snap.w);
    ck_free(keep.snap.work);
    /* a callback that fails ends the run; no interval is refused */
    cfg.checkpoint = keep_snapshot;
    keep.fail = 1;
    st = run(&cfg, X0, &res, &err);
    CHECK(st == SL_EINVAL && strcmp(err.reason, "full") == 0, "failing checkpoint: %d", st);
    run_free(&res);
    cfg.checkpoint_every = 0;
    CHECK(sl_pf_check(&cfg, &err) == SL_EINVAL && strcmp(err.reason, "badconfig") == 0,
          "checkpoint_every 0 accepted");
    /* the fingerprint: FNV-1a of "a" (the published test vector) */
    CHECK(sl_fnv1a(SL_FNV_START, "a", 1) == 0xaf63dc4c8601ec8cULL, "FNV-1a of 'a'");
}

/* ------------------------------------- the forecast's parallel region */

/* A map of two states with one forcing, ten steps of 0.1 between
 * observations, safe on member blocks: it fails (SL_EMODEL) for the
 * members and global steps listed in its context, the first listed
 * member of a block in member order, as a one-thread run meets them. */
typedef struct {
    size_t nfail;
    size_t member[4];
    uint32_t step[4];
    int unsafe; /* 1: the model says it is not safe on member blocks */
} ticker_ctx;

static sl_status ticker_step(const sl_model *md, double t, double t_end, size_t first,
                             size_t count, double *X, const double *P, const double *U,
                             uint64_t seed, uint32_t step, double *work, sl_error *err)
{
    const ticker_ctx *c = (const ticker_ctx *)md->ctx;
    size_t i, f;
    (void)P;
    (void)seed;
    (void)work;
    for (i = 0; i < count; i++) {
        double *x = X + 2 * i;
        for (f = 0; f < c->nfail; f++)
            if (c->member[f] == first + i && c->step[f] == step)
                return sl_fail(err, SL_EMODEL, "stepfailed", "member %lu failed at step %lu",
                               (unsigned long)(first + i), (unsigned long)step);
        x[0] = 0.9 * x[0] + 0.1 * U[i] + 0.01 * (t_end - t) * (double)((first + i) % 7);
        x[1] = x[1] + 0.1 * sin(x[0]);
    }
    return SL_OK;
}

typedef struct {
    size_t calls, stop_at;
    double last;
    int backwards;
} poll_log;

static int region_poll(void *ctx, double fraction)
{
    poll_log *pl = (poll_log *)ctx;
    pl->calls++;
    if (fraction < pl->last || fraction < 0.0 || fraction > 1.0)
        pl->backwards = 1;
    pl->last = fraction;
    return pl->stop_at > 0 && pl->calls >= pl->stop_at;
}

/* One run of the ticker, N <= TICKER_NMAX members, on `threads` threads
 * (paced: the pace may choose fewer): status, error, final states, means
 * and log-evidence increments of the observed cycles, log-evidence. With
 * `fine` every model step is a cycle of its own (observed at the same
 * times as the plain run, unobserved between), so each forecast is one
 * step of every member in turn: the reference order of the steps. */
#define TICKER_NMAX 9001
typedef struct {
    sl_status st;
    sl_error err;
    double X[2 * TICKER_NMAX], mean[2 * 3], logz[3], evidence;
} ticker_result;

static void ticker_run(const ticker_ctx *tc, size_t N, int fine, int threads, int paced,
                       poll_log *pl, ticker_result *res)
{
    enum { T = 3, STEPS = 10, TF = T * STEPS };
    static const double times[T] = {1.0, 2.0, 3.0}, yv[T] = {0.4, 0.2, 0.5};
    static const double ftime[4] = {0.0, 1.0, 2.0, 3.0}, fval[4] = {1.0, 0.5, -0.5, 0.2};
    static const int noise[1] = {SL_FORCING_ADDITIVE};
    static const double sd[1] = {0.2}, phi[1] = {0.5};
    sl_model md;
    sl_pf_config cfg;
    obs_table o;
    run_buf r;
    ticker_ctx ctx = *tc;
    double *X0 = ck_malloc(2 * N * sizeof *X0), tf[TF], yf[T], sf[T], af[T];
    size_t j, k, l, ff[TF + 1], vf[T];
    int famf[T];
    memset(&md, 0, sizeof md);
    md.name = "ticker";
    md.n_state = 2;
    md.n_forcing = 1;
    md.dt = 0.1;
    md.discrete = 1;
    md.thread_safe = !ctx.unsafe;
    md.step = ticker_step;
    md.ctx = &ctx;
    one_obs_per_cycle(&o, T, yv, 0.3);
    base_config(&cfg, &md, N, T, times, &o);
    if (fine) {
        /* the step ends of the plain run's intervals, t0 + (l + 1) h, the
         * last on the observation time; an observation ends each interval */
        for (k = 0; k < T; k++) {
            const double t0 = k == 0 ? 0.0 : times[k - 1];
            for (l = 0; l < STEPS; l++) {
                tf[k * STEPS + l] = l + 1 == STEPS ? times[k] : t0 + (double)(l + 1) * 0.1;
            }
            yf[k] = yv[k];
            sf[k] = 0.3;
            af[k] = 0.0;
            famf[k] = SL_FAMILY_GAUSSIAN;
            vf[k] = 0;
        }
        for (k = 0; k < TF; k++) /* cycle k's rows start at the count before it */
            ff[k] = k < STEPS ? 0 : ff[k - 1] + (k % STEPS == 0 ? 1 : 0);
        ff[TF] = T;
        cfg.T = TF;
        cfg.times = tf;
        cfg.obs_first = ff;
        cfg.y = yf;
        cfg.sigma = sf;
        cfg.aux = af;
        cfg.family = famf;
        cfg.var = vf;
    }
    cfg.forcing.nt = 4;
    cfg.forcing.time = ftime;
    cfg.forcing.value = fval;
    cfg.forcing.noise = noise;
    cfg.forcing.sd = sd;
    cfg.forcing.phi = phi;
    cfg.threads = threads;
    cfg.threads_paced = paced;
    if (pl != NULL) {
        cfg.poll = region_poll;
        cfg.poll_ctx = pl;
    }
    for (j = 0; j < 2 * N; j++)
        X0[j] = 0.05 * (double)(j % 13) - 0.3;
    sl_error_clear(&res->err);
    res->st = run(&cfg, X0, &r, &res->err);
    memcpy(res->X, r.X, 2 * N * sizeof(double));
    for (k = 0; k < T; k++) {
        const size_t c = fine ? k * STEPS + STEPS - 1 : k;
        memcpy(res->mean + 2 * k, r.out.mean + 2 * c, 2 * sizeof(double));
        res->logz[k] = r.out.logz[c];
    }
    res->evidence = r.out.log_evidence;
    run_free(&r);
    ck_free(X0);
}

/* The forecast runs each interval in one parallel region, members in
 * chunks through all its steps: the same bits as one thread for any
 * count, and the same failure (the earliest step's, the lowest member's
 * at that step, as the one-thread order meets them); a poll's stop ends
 * it, and the fractions it is told never go back. */
static void check_forecast_region(void)
{
    static const ticker_ctx cases[] = {
        {0, {0}, {0}, 0},
        {2, {150, 20}, {13, 17}, 0},   /* the earlier step wins, whatever the member */
        {2, {180, 40}, {5, 5}, 0},     /* one step: the lower member */
        {1, {199}, {0}, 0},            /* the last chunk, the first step */
        {3, {7, 9, 120}, {29, 28, 28}, 0}, /* the last cycle */
    };
    static const char *want[] = {NULL, "member 150 failed at step 13",
                                 "member 40 failed at step 5", "member 199 failed at step 0",
                                 "member 9 failed at step 28"};
    size_t c;
    int thr;
    ticker_result *one = ck_malloc(sizeof *one), *many = ck_malloc(sizeof *many);
    for (c = 0; c < sizeof cases / sizeof *cases; c++) {
        ticker_run(&cases[c], 200, 0, 1, 0, NULL, one);
        if (want[c] == NULL)
            CHECK(one->st == SL_OK, "ticker case %lu: %d %s", (unsigned long)c, (int)one->st,
                  one->err.message);
        else
            CHECK(one->st == SL_EMODEL && strcmp(one->err.reason, "stepfailed") == 0 &&
                      strcmp(one->err.message, want[c]) == 0,
                  "ticker case %lu, 1 thread: %d %s", (unsigned long)c, (int)one->st,
                  one->err.message);
        for (thr = 2; thr <= 5; thr++) {
            const int paced = thr == 5;
            ticker_run(&cases[c], 200, 0, paced ? 2 : thr, paced, NULL, many);
            CHECK(many->st == one->st && strcmp(many->err.reason, one->err.reason) == 0 &&
                      strcmp(many->err.message, one->err.message) == 0,
                  "ticker case %lu, %d threads%s: %d '%s' against '%s'", (unsigned long)c,
                  paced ? 2 : thr, paced ? " paced" : "", (int)many->st, many->err.message,
                  one->err.message);
            if (one->st == SL_OK)
                CHECK(memcmp(many->X, one->X, 2 * 200 * sizeof(double)) == 0 &&
                          memcmp(many->mean, one->mean, sizeof one->mean) == 0 &&
                          memcmp(many->logz, one->logz, sizeof one->logz) == 0 &&
                          memcmp(&many->evidence, &one->evidence, sizeof one->evidence) == 0,
                      "ticker case %lu, %d threads%s: the same bits", (unsigned long)c,
                      paced ? 2 : thr, paced ? " paced" : "");
        }
    }
    /* the poll: never backwards, and its stop ends the run on 1 and 3
     * threads */
    for (thr = 1; thr <= 3; thr += 2) {
        poll_log pl = {0, 0, 0.0, 0};
        ticker_run(&cases[0], 200, 0, thr, 0, &pl, many);
        CHECK(many->st == SL_OK && pl.calls >= 3 && !pl.backwards && pl.last <= 1.0,
              "%d threads: %lu polls, last %g, backwards %d", thr, (unsigned long)pl.calls,
              pl.last, pl.backwards);
        pl.calls = 0;
        pl.last = 0.0;
        pl.stop_at = 4;
        ticker_run(&cases[0], 200, 0, thr, 0, &pl, many);
        CHECK(many->st == SL_EINTERRUPT && strcmp(many->err.reason, "interrupted") == 0,
              "%d threads: a poll's stop: %d %s", thr, (int)many->st, many->err.reason);
    }
    ck_free(one);
    ck_free(many);
}

/* An ensemble too large for a core's cache from one step to the next
 * (9001 members of 4 doubles: more than the 256 KiB of a chunk) goes
 * through an interval of several steps chunk by chunk on one thread too.
 * Its bits, and its failures, are those of the order that steps every
 * member in turn: the same run with a cycle at every step. The poll is
 * called at every step of each chunk, more often than once a step, which
 * shows the chunked order was taken. */
static void check_forecast_chunks(void)
{
    enum { N = TICKER_NMAX };
    static const ticker_ctx cases[] = {
        {0, {0}, {0}, 0},
        {2, {8500, 20}, {13, 17}, 0},   /* the earlier step wins, in a later chunk */
        {2, {5000, 30}, {5, 5}, 0},     /* one step: the lower member */
        {2, {9000, 3}, {29, 29}, 0},    /* the last step, first and last chunks */
    };
    static const char *want[] = {NULL, "member 8500 failed at step 13",
                                 "member 30 failed at step 5", "member 3 failed at step 29"};
    ticker_result *ref = ck_malloc(sizeof *ref), *got = ck_malloc(sizeof *got);
    size_t c;
    int thr;
    for (c = 0; c < sizeof cases / sizeof *cases; c++) {
        ticker_run(&cases[c], N, 1, 1, 0, NULL, ref);
        if (want[c] == NULL)
            CHECK(ref->st == SL_OK, "chunks case %lu: %d %s", (unsigned long)c, (int)ref->st,
                  ref->err.message);
        else
            CHECK(ref->st == SL_EMODEL && strcmp(ref->err.message, want[c]) == 0,
                  "chunks case %lu, step by step: %d %s", (unsigned long)c, (int)ref->st,
                  ref->err.message);
        for (thr = 1; thr <= 2; thr++) {
            ticker_run(&cases[c], N, 0, thr, 0, NULL, got);
            CHECK(got->st == ref->st && strcmp(got->err.reason, ref->err.reason) == 0 &&
                      strcmp(got->err.message, ref->err.message) == 0,
                  "chunks case %lu, %d thread(s): %d '%s' against '%s'", (unsigned long)c,
                  thr, (int)got->st, got->err.message, ref->err.message);
            if (ref->st == SL_OK)
                CHECK(memcmp(got->X, ref->X, 2 * N * sizeof(double)) == 0 &&
                          memcmp(got->mean, ref->mean, sizeof ref->mean) == 0 &&
                          memcmp(got->logz, ref->logz, sizeof ref->logz) == 0 &&
                          memcmp(&got->evidence, &ref->evidence, sizeof ref->evidence) == 0,
                      "chunks case %lu, %d thread(s): the bits of the step-by-step order",
                      (unsigned long)c, thr);
        }
    }
    {
        poll_log pl = {0, 0, 0.0, 0};
        ticker_run(&cases[0], N, 0, 1, 0, &pl, got);
        CHECK(got->st == SL_OK && pl.calls > 30 && !pl.backwards && pl.last <= 1.0,
              "one thread in chunks: %lu polls (more than the 30 steps), last %g, "
              "backwards %d", (unsigned long)pl.calls, pl.last, pl.backwards);
        pl.calls = 0;
        pl.last = 0.0;
        pl.stop_at = 4;
        ticker_run(&cases[0], N, 0, 1, 0, &pl, got);
        CHECK(got->st == SL_EINTERRUPT && strcmp(got->err.reason, "interrupted") == 0,
              "one thread in chunks: a poll's stop: %d %s", (int)got->st, got->err.reason);
    }
    {
        /* a model not safe on member blocks (an Octave function: a call
         * costs as much for a chunk as for the ensemble) steps the whole
         * ensemble at a time, a poll a step, to the same bits */
        static const ticker_ctx unsafe = {0, {0}, {0}, 1};
        poll_log pl = {0, 0, 0.0, 0};
        ticker_run(&cases[0], N, 1, 1, 0, NULL, ref);
        ticker_run(&unsafe, N, 0, 1, 0, &pl, got);
        CHECK(got->st == SL_OK && pl.calls == 30 &&
                  memcmp(got->X, ref->X, 2 * N * sizeof(double)) == 0,
              "a model not safe on blocks: %d, %lu polls (one a step)", (int)got->st,
              (unsigned long)pl.calls);
    }
    ck_free(ref);
    ck_free(got);
}

/* N is odd, not a multiple of 3, and large enough that the run goes
 * parallel (small ensembles are run on one thread whatever is asked) and
 * that its means and forecast means sum five blocks of members
 * (sl_mean_block), which the threads share. */
static void check_determinism(void)
{
    enum { N = 20001, T = 5, NT = 20 };
    const double times[T] = {1.0, 2.5, 3.0, 4.5, 6.0};
    const double probs[3] = {0.9, 0.1, 0.5};
    const double snoise[2] = {0.05, 0.02};
    const int noise[1] = {SL_FORCING_MULTIPLICATIVE};
    const double fsd[1] = {0.2}, fphi[1] = {0.6};
    double ft[NT], fv[NT], *X0 = ck_malloc(2 * N * sizeof *X0);
    sl_model md;
    sl_pf_config cfg;
    obs_table o;
    sl_error err;
    run_buf r1, r2, r3, again, other;
    sl_status s1, s2, s3, s4, s5;
    size_t j;
    double nres = 0;

    CHECK(sl_linear_model(&md, &lin2, 0.5, &err) == SL_OK, "model: %s", err.message);
    forcing_series(ft, fv, NT);
    two_state_obs(&o);
    base_config(&cfg, &md, N, T, times, &o);
    cfg.forcing.nt = NT;
    cfg.forcing.time = ft;
    cfg.forcing.value = fv;
    cfg.forcing.noise = noise;
    cfg.forcing.sd = fsd;
    cfg.forcing.phi = fphi;
    cfg.state_noise = snoise;
    cfg.threshold = 0.7;
    cfg.nq = 3;
    cfg.probs = probs;
    cfg.keep_history = 1;
    cfg.seed = 777;
    for (j = 0; j < 2 * N; j++) {
        sl_stream s;
        sl_stream_init(&s, 5u, (uint32_t)(j / 2), 0, SL_PURPOSE_PRIOR);
        if (j % 2)
            (void)sl_stream_normal(&s);
        X0[j] = 0.5 * sl_stream_normal(&s);
    }
    cfg.threads = 1;
    s1 = run(&cfg, X0, &r1, &err);
    cfg.threads = 2;
    s2 = run(&cfg, X0, &r2, &err);
    cfg.threads = 3;
    s3 = run(&cfg, X0, &r3, &err);
    cfg.threads = 1;
    s4 = run(&cfg, X0, &again, &err);
    cfg.seed = 778;
    s5 = run(&cfg, X0, &other, &err);
    CHECK(s1 == SL_OK && s2 == SL_OK && s3 == SL_OK && s4 == SL_OK && s5 == SL_OK,
          "determinism runs: %d %d %d %d %d (%s)", s1, s2, s3, s4, s5, err.message);
    if (s1 == SL_OK && s2 == SL_OK && s3 == SL_OK && s4 == SL_OK && s5 == SL_OK) {
        for (j = 0; j < T; j++)
            nres += r1.out.resampled[j];
        /* the run must exercise what it is meant to */
        CHECK(nres >= 1 && nres < T, "resampled at %g of %d cycles", nres, T);
        CHECK(r1.out.skipped[1] == 1, "missing value skipped: %g", r1.out.skipped[1]);
        CHECK(r1.out.logz[2] == 0, "no observations: logz %g", r1.out.logz[2]);
        CHECK(r1.out.steps == 12, "steps %lu, expected 12", (unsigned long)r1.out.steps);
        CHECK(identical(&r1, &r2, 3), "threads 1 and 2 differ");
        CHECK(identical(&r1, &r3, 3), "threads 1 and 3 differ");
        CHECK(identical(&r1, &again, 3), "the same seed twice differs");
        CHECK(!same(r1.X, other.X, 2 * N * sizeof(double)) &&
              r1.out.log_evidence != other.out.log_evidence,
              "a different seed gives the same run");
    }
    run_free(&r1);
    run_free(&r2);
    run_free(&r3);
    /* the same with tempering (a target above the ESS of every cycle with
     * observations, so each takes several steps and resamples between
     * them): still identical across thread counts */
    cfg.seed = 777;
    cfg.temper.ess = 0.95;
    cfg.temper.max_steps = 50;
    cfg.threads = 1;
    s1 = run(&cfg, X0, &r1, &err);
    cfg.threads = 2;
    s2 = run(&cfg, X0, &r2, &err);
    cfg.threads = 3;
    s3 = run(&cfg, X0, &r3, &err);
    CHECK(s1 == SL_OK && s2 == SL_OK && s3 == SL_OK, "tempered determinism runs: %s",
          err.message);
    if (s1 == SL_OK && s2 == SL_OK && s3 == SL_OK) {
        double most = 0;
        for (j = 0; j < T; j++)
            most = r1.out.temper_steps[j] > most ? r1.out.temper_steps[j] : most;
        CHECK(most >= 2, "a cycle was tempered: most steps %g", most);
        CHECK(r1.out.temper_steps[2] == 0, "no observation: no step");
        CHECK(identical(&r1, &r2, 3), "tempered: threads 1 and 2 differ");
        CHECK(identical(&r1, &r3, 3), "tempered: threads 1 and 3 differ");
    }
    run_free(&r1);
    run_free(&r2);
    run_free(&r3);
    run_free(&again);
    run_free(&other);
    ck_free(X0);
}

/* ------------------------------------------------------------ checks */

static void expect_fail(const sl_pf_config *c, sl_status status,
                        const char *reason, const char *what)
{
    sl_error err;
    sl_status st;
    sl_error_clear(&err);
    st = sl_pf_check(c, &err);
    CHECK(st == status && strcmp(err.reason, reason) == 0 && err.message[0] != 0,
          "%s: expected %s/%s, got %s/%s (%s)", what, sl_status_name(status),
          reason, sl_status_name(st), err.reason, err.message);
}

static void expect_ok(const sl_pf_config *c, const char *what)
{
    sl_error err;
    sl_status st;
    sl_error_clear(&err);
    st = sl_pf_check(c, &err);
    CHECK(st == SL_OK, "%s: %s (%s)", what, err.reason, err.message);
}

static void check_errors(void)
{
    enum { T = 3, NT = 20 };
    const double yv[T] = {1.0, 2.0, 0.0}, times[T] = {1.0, 2.0, 3.0};
    double A = 1.0, L = 1.0, t[T], pr[2], sn[1], ft[NT], fv[NT], x0[4] = {0};
    double wout[4] = {-1, -1, -1, -1};
    size_t ofirst[T + 1];
    sl_linear lin = {1, 0, &A, NULL, NULL, &L};
    sl_model md, md2;
    sl_pf_config base, c, f;
    obs_table o, o2, ob;
    sl_error err;
    sl_pf_output out;
    int noise[1];
    double fsd[1], fphi[1];
    sl_transform ptr;
    sl_prior_entry pe;

    sl_linear_model(&md, &lin, 1.0, &err);
    one_obs_per_cycle(&o, T, yv, 1.0);
    base_config(&base, &md, 100, T, times, &o);
    expect_ok(&base, "the base configuration");

    /* badconfig */
    c = base; c.model = NULL; expect_fail(&c, SL_EINVAL, "badconfig", "no model");
    c = base; c.N = 0; expect_fail(&c, SL_EINVAL, "badconfig", "N = 0");
    c = base; c.N = SL_RESAMPLE_MAX + 1; expect_fail(&c, SL_EINVAL, "badconfig", "N above the ancestor range");
    c = base; c.N = SIZE_MAX; expect_fail(&c, SL_EINVAL, "badconfig", "N = SIZE_MAX");
    c = base; c.threads = 0; expect_fail(&c, SL_EINVAL, "badconfig", "threads = 0");
    c = base; c.threads = -2; expect_fail(&c, SL_EINVAL, "badconfig", "threads = -2");
    c = base; c.threads = 100000; expect_fail(&c, SL_EINVAL, "badconfig", "threads = 1e5");
    c = base; c.threshold = 1.5; expect_fail(&c, SL_EINVAL, "badconfig", "threshold 1.5");
    c = base; c.threshold = -0.1; expect_fail(&c, SL_EINVAL, "badconfig", "threshold -0.1");
    c = base; c.threshold = NAN; expect_fail(&c, SL_EINVAL, "badconfig", "threshold NaN");
    c = base; c.threshold = 1.0; expect_ok(&c, "threshold 1");
    c = base; c.threshold = 0.0; expect_ok(&c, "threshold 0");
    pr[0] = 0.5; pr[1] = 1.5;
    c = base; c.nq = 2; c.probs = pr; expect_fail(&c, SL_EINVAL, "badconfig", "quantile level 1.5");
    pr[1] = -1e-9; expect_fail(&c, SL_EINVAL, "badconfig", "quantile level -1e-9");
    pr[1] = NAN; expect_fail(&c, SL_EINVAL, "badconfig", "quantile level NaN");
    pr[0] = 0.0; pr[1] = 1.0; expect_ok(&c, "quantile levels 0 and 1");
    c = base; c.param_move = &sl_param_move_liu_west;
    c.move.lw_delta = 0.0; expect_fail(&c, SL_EINVAL, "badconfig", "Liu-West delta 0");
    c.move.lw_delta = 1.01; expect_fail(&c, SL_EINVAL, "badconfig", "Liu-West delta 1.01");
    c.move.lw_delta = NAN; expect_fail(&c, SL_EINVAL, "badconfig", "Liu-West delta NaN");
    c.move.lw_delta = -0.5; expect_fail(&c, SL_EINVAL, "badconfig", "Liu-West delta -0.5");
    c.move.lw_delta = 1.0; expect_ok(&c, "Liu-West delta 1");
    CHECK(sl_param_mover_find("jump") == NULL && sl_param_mover_find(NULL) == NULL,
          "an unknown parameter move is not found");
    c = base; c.resampler = NULL; expect_fail(&c, SL_EINVAL, "badconfig", "no resampler");
    sn[0] = -0.1;
    c = base; c.state_noise = sn; expect_fail(&c, SL_EINVAL, "badconfig", "state noise -0.1");
    sn[0] = HUGE_VAL; expect_fail(&c, SL_EINVAL, "badconfig", "state noise Inf");

    /* badstep: the time step of the model the run drives (a model written
     * in Octave comes with the settings' dt unchecked otherwise) */
    md2 = md;
    c = base; c.model = &md2;
    md2.dt = 0.0; expect_fail(&c, SL_EINVAL, "badstep", "dt 0");
    md2.dt = -1.0; expect_fail(&c, SL_EINVAL, "badstep", "dt -1");
    md2.dt = NAN; expect_fail(&c, SL_EINVAL, "badstep", "dt NaN");
    md2.dt = HUGE_VAL; expect_fail(&c, SL_EINVAL, "badstep", "dt Inf");
    md2.dt = 1.0; expect_ok(&c, "dt 1");

    /* badprior: every prior given names a distribution of the core's
     * table, whether or not the move weighs by it */
    md2 = md;
    md2.n_param = 1;
    c = base; c.model = &md2; c.ptrans = &ptr; c.prior = &pe;
    ptr = sl_transform_for_bounds(-HUGE_VAL, HUGE_VAL);
    memset(&pe, 0, sizeof pe);
    pe.dist = SL_DIST_NORMAL; pe.a = 0.0; pe.b = 1.0;
    expect_ok(&c, "a normal prior");
    pe.dist = SL_DIST_FIXED; expect_ok(&c, "a fixed prior");
    pe.dist = SL_DIST_COUNT; expect_fail(&c, SL_EINVAL, "badprior", "distribution id past the table");
    pe.dist = -1; expect_fail(&c, SL_EINVAL, "badprior", "distribution id -1");
    pe.dist = 1000000; expect_fail(&c, SL_EINVAL, "badprior", "distribution id 1e6");

    /* badtimes */
    c = base; c.t0 = NAN; expect_fail(&c, SL_EINVAL, "badtimes", "t0 NaN");
    c = base; c.T = 0; expect_fail(&c, SL_EINVAL, "badtimes", "no cycles");
    c = base; c.times = NULL; expect_fail(&c, SL_EINVAL, "badtimes", "no times");
    memcpy(t, times, sizeof t);
    c = base; c.times = t;
    t[1] = 1.0; expect_fail(&c, SL_EINVAL, "badtimes", "repeated time");
    t[1] = 0.0; expect_fail(&c, SL_EINVAL, "badtimes", "decreasing time");
    t[1] = NAN; expect_fail(&c, SL_EINVAL, "badtimes", "NaN time");
    t[1] = HUGE_VAL; expect_fail(&c, SL_EINVAL, "badtimes", "infinite time");
    t[1] = 2.0;
    c.t0 = 1.5; expect_fail(&c, SL_EINVAL, "badtimes", "a time before t0");
    c.t0 = 1.0; expect_ok(&c, "first cycle at t0");

    /* toomanysteps: the run's steps counted before any work
     * (sl_run_steps); base has N = 100 members of 1 state, dt = 1 */
    memcpy(t, times, sizeof t);
    c = base; c.times = t;
    t[2] = 4294967295.0; expect_ok(&c, "2^32 - 1 steps in all");
    t[2] = 4294967296.0; expect_fail(&c, SL_EINVAL, "toomanysteps", "2^32 steps in all");
    t[2] = 9007199254740994.0; expect_fail(&c, SL_EINVAL, "toomanysteps", "2^53 + 2 steps");
    t[2] = 1e300; expect_fail(&c, SL_EINVAL, "toomanysteps", "1e300 steps");
    c.N = 1000000; t[2] = 1e9; expect_ok(&c, "1e15 member-state-steps");
    t[2] = 1e9 + 1.0; expect_fail(&c, SL_EINVAL, "toomanysteps", "1e15 + 1e6 member-state-steps");
    memcpy(t, times, sizeof t);

    /* offgrid: the linear model is a discrete map with dt = 1 */
    c = base; c.times = t;
    t[0] = 1.5; expect_fail(&c, SL_EINVAL, "offgrid", "1.5 steps");
    t[0] = 1.0; t[2] = 3.25; expect_fail(&c, SL_EINVAL, "offgrid", "a quarter step");
    t[2] = 5.0; expect_ok(&c, "two steps in one cycle");
    c.t0 = -0.5; t[0] = 0.5; t[1] = 2.5; t[2] = 3.5; expect_ok(&c, "an offset grid");

    /* badobs */
    ob = o;
    c = base; c.obs_first = ob.first; c.var = ob.var;
    ob.var[1] = 1; expect_fail(&c, SL_EINVAL, "badobs", "observed quantity 2 of 1");
    ob.var[1] = SIZE_MAX; expect_fail(&c, SL_EINVAL, "badobs", "observed quantity SIZE_MAX");
    ob.var[1] = 0;
    memcpy(ofirst, o.first, sizeof ofirst);
    c.obs_first = ofirst;
    ofirst[0] = 1; expect_fail(&c, SL_EINVAL, "badobs", "groups not starting at 0");
    ofirst[0] = 0; ofirst[1] = 2; ofirst[2] = 1; expect_fail(&c, SL_EINVAL, "badobs", "groups out of order");

    /* the reasons of sl_loglik_check */
    o2 = o;
    c = base; c.y = o2.y; c.sigma = o2.sigma; c.aux = o2.aux; c.family = o2.family;
    o2.sigma[2] = 0.0; expect_fail(&c, SL_EINVAL, "badsigma", "sigma 0");
    o2.sigma[2] = -1.0; expect_fail(&c, SL_EINVAL, "badsigma", "sigma -1");
    o2.sigma[2] = NAN; expect_fail(&c, SL_EINVAL, "badsigma", "sigma NaN");
    o2.sigma[2] = 1.0;
    o2.family[0] = 42; expect_fail(&c, SL_EINVAL, "badfamily", "family 42");
    o2.family[0] = SL_FAMILY_STUDENT_T; o2.aux[0] = 0.0;
    expect_fail(&c, SL_EINVAL, "badaux", "Student t with 0 dof");
    o2.family[0] = SL_FAMILY_GAUSSIAN;
    o2.y[1] = -HUGE_VAL; expect_fail(&c, SL_EINVAL, "badvalue", "y = -Inf");
    o2.y[1] = NAN; expect_ok(&c, "a missing value");

    /* badforcing / forcingrange, with the one-forcing model */
    sl_linear_model(&md2, &lin2, 0.5, &err);
    forcing_series(ft, fv, NT);
    base_config(&f, &md2, 100, T, times, &o);
    f.forcing.nt = NT;
    f.forcing.time = ft;
    f.forcing.value = fv;
    expect_ok(&f, "the forcing configuration");
    c = f; c.forcing.q = 0; expect_fail(&c, SL_EINVAL, "badforcing", "no forcing for q = 1");
    c = f; c.forcing.q = 2; expect_fail(&c, SL_EINVAL, "badforcing", "two series for q = 1");
    c = f; c.forcing.nt = 0; expect_fail(&c, SL_EINVAL, "badforcing", "empty forcing");
    c = f; c.forcing.time = NULL; expect_fail(&c, SL_EINVAL, "badforcing", "no forcing times");
    ft[3] = ft[2]; expect_fail(&f, SL_EINVAL, "badforcing", "repeated forcing time");
    ft[3] = 1.5;
    fv[4] = NAN; expect_fail(&f, SL_EINVAL, "badforcing", "NaN forcing value");
    fv[4] = 1.0;
    ft[0] = 0.25; expect_fail(&f, SL_EINVAL, "forcingrange", "forcing starts after t0");
    ft[0] = 0.0;
    /* the last step starts at 3 - dt = 2.5: a series ending at 2 is short */
    c = f; c.forcing.nt = 5; expect_fail(&c, SL_EINVAL, "forcingrange", "forcing ends too early");
    c.forcing.nt = 6; expect_ok(&c, "forcing ending at the last step's start");
    c.forcing.nt = 5; c.forcing.hold = 1; expect_ok(&c, "a short series held");
    c = f; c.forcing.noise = noise; c.forcing.sd = fsd; c.forcing.phi = fphi;
    noise[0] = 3; fsd[0] = 0.1; fphi[0] = 0.5;
    expect_fail(&c, SL_EINVAL, "badforcing", "perturbation kind 3");
    noise[0] = SL_FORCING_ADDITIVE; fsd[0] = -0.1;
    expect_fail(&c, SL_EINVAL, "badforcing", "perturbation sd -0.1");
    fsd[0] = 0.1; fphi[0] = 1.0;
    expect_fail(&c, SL_EINVAL, "badforcing", "AR(1) coefficient 1");
    fphi[0] = 0.0; expect_ok(&c, "white-noise perturbation");

    /* sl_pf_run checks first and touches nothing when the check fails */
    c = base; c.N = 4; c.threads = 0;
    memset(&out, 0, sizeof out);
    sl_error_clear(&err);
    CHECK(sl_pf_run(&c, x0, NULL, wout, NULL, &out, &err) == SL_EINVAL &&
          strcmp(err.reason, "badconfig") == 0 && wout[0] == -1 && wout[3] == -1,
          "run with a bad configuration: %s, w[0] = %g", err.reason, wout[0]);
}

/* ------------------------------------------------------- degeneracy */

/* Every member negative: a log-normal observation (log y ~ N(log h, s^2),
 * h <= 0 impossible) rules them all out at cycle 2. The run records the
 * cycle as degenerate with logz = -Inf and ESS 0, keeps the previous
 * weights, and goes on to cycle 3. */
static void check_degenerate(void)
{
    enum { N = 500, T = 3 };
    const double times[T] = {1.0, 2.0, 3.0}, yv[T] = {-5.5, 1.0, -6.0};
    double A = 1.0, X0[N], s0 = 0, s1 = 0, s2 = 0, dw = 0;
    sl_linear lin = {1, 0, &A, NULL, NULL, NULL};
    sl_model md;
    sl_pf_config cfg;
    obs_table o;
    sl_error err;
    run_buf r;
    sl_status st;
    size_t j, nonfinite = 0;

    sl_linear_model(&md, &lin, 1.0, &err);
    one_obs_per_cycle(&o, T, yv, 1.0);
    o.family[1] = SL_FAMILY_LOGNORMAL;
    o.sigma[1] = 0.5;
    base_config(&cfg, &md, N, T, times, &o);
    cfg.threshold = 0.0; /* never resample: the kept weights stay visible */
    cfg.keep_history = 1;
    for (j = 0; j < N; j++) {
        sl_stream s;
        sl_stream_init(&s, 3u, (uint32_t)j, 0, SL_PURPOSE_PRIOR);
        X0[j] = -5.0 - fabs(sl_stream_normal(&s));
    }
    st = run(&cfg, X0, &r, &err);
    CHECK(st == SL_OK, "degenerate run: %s", st ? err.message : "");
    if (st == SL_OK) {
        CHECK(r.out.degenerate[0] == 0 && r.out.degenerate[1] == 1 &&
              r.out.degenerate[2] == 0, "degenerate flags %g %g %g",
              r.out.degenerate[0], r.out.degenerate[1], r.out.degenerate[2]);
        CHECK(isfinite(r.out.logz[0]) && r.out.logz[1] == -HUGE_VAL &&
              isfinite(r.out.logz[2]), "logz %g %g %g", r.out.logz[0],
              r.out.logz[1], r.out.logz[2]);
        CHECK(r.out.log_evidence == -HUGE_VAL, "log-evidence %g", r.out.log_evidence);
        for (j = 0; j < N; j++) {
            const double *h = r.out.hist_w;
            nonfinite += !isfinite(h[j]) || !isfinite(h[N + j]) ||
                         !isfinite(h[2 * N + j]) || !isfinite(r.w[j]);
            s0 += h[j];
            s1 += h[N + j];
            s2 += r.w[j];
            if (fabs(h[N + j] - h[j]) > dw)
                dw = fabs(h[N + j] - h[j]);
        }
        CHECK(nonfinite == 0, "%lu non-finite weights", (unsigned long)nonfinite);
        CHECK_CLOSE(s0, 1.0, 1e-12, "weights after cycle 1 sum to 1");
        CHECK_CLOSE(s1, 1.0, 1e-12, "weights after the degenerate cycle sum to 1");
        CHECK_CLOSE(s2, 1.0, 1e-12, "final weights sum to 1");
        CHECK(dw <= 1e-15, "the degenerate cycle changed the weights by %g", dw);
        /* no member explains the data: the ESS of the cycle's weights is
         * 0, not that of the weights kept to go on with */
        CHECK(isfinite(r.out.mean[1]) && r.out.ess[1] == 0.0 &&
              r.out.ess[0] > 0 && r.out.ess[2] > 0,
              "degenerate cycle: mean %g, ess %g %g %g", r.out.mean[1],
              r.out.ess[0], r.out.ess[1], r.out.ess[2]);
        CHECK(r.out.steps == 3, "steps %lu", (unsigned long)r.out.steps);
    }
    run_free(&r);
}

/* ------------------------------------------------------- resampling */

/* No model noise (A = 1, L = 0): states move only by resampling, so the
 * states recorded at cycle k+1 are those of cycle k taken at the recorded
 * ancestors. */
static void check_resampling(void)
{
    enum { N = 1000, T = 4 };
    const double times[T] = {1.0, 2.0, 3.0, 4.0}, yv[T] = {0.3, -0.2, 0.5, 0.1};
    double A = 1.0, X0[N];
    sl_linear lin = {1, 0, &A, NULL, NULL, NULL};
    sl_model md;
    sl_pf_config cfg;
    obs_table o;
    sl_error err;
    run_buf r, id;
    sl_status st, st2;
    size_t j, k;

    sl_linear_model(&md, &lin, 1.0, &err);
    one_obs_per_cycle(&o, T, yv, 0.5);
    base_config(&cfg, &md, N, T, times, &o);
    cfg.keep_history = 1;
    for (j = 0; j < N; j++) {
        sl_stream s;
        sl_stream_init(&s, 11u, (uint32_t)j, 0, SL_PURPOSE_PRIOR);
        X0[j] = sl_stream_normal(&s);
    }

    cfg.threshold = 1.0; /* resample whenever the weights are uneven */
    st = run(&cfg, X0, &r, &err);
    CHECK(st == SL_OK, "resampling run: %s", st ? err.message : "");
    if (st == SL_OK) {
        size_t bad_a = 0, bad_x = 0, bad_w = 0, bad_count = 0;
        unsigned cnt[N];
        for (k = 0; k < T; k++) {
            const double *a = r.out.hist_a + k * N, *hw = r.out.hist_w + k * N;
            const double *hx = r.out.hist_X + k * N;
            const double *next = k + 1 < T ? r.out.hist_X + (k + 1) * N : r.X;
            double sum = 0;
            CHECK(r.out.resampled[k] == 1, "cycle %lu not resampled (ess %g)",
                  (unsigned long)k, r.out.ess[k]);
            memset(cnt, 0, sizeof cnt);
            for (j = 0; j < N; j++) {
                size_t aj = (size_t)a[j];
                sum += hw[j];
                if (!(a[j] >= 0 && a[j] < N && a[j] == (double)aj)) {
                    bad_a++;
                    continue;
                }
                cnt[aj]++;
                bad_x += next[j] != hx[aj];
            }
            CHECK_CLOSE(sum, 1.0, 1e-12, "recorded weights sum to 1");
            /* systematic resampling gives member i floor(N w_i) or
             * ceil(N w_i) offspring (common practice) */
            for (j = 0; j < N; j++) {
                double e = (double)N * hw[j];
                bad_count += cnt[j] < floor(e - 1e-9) || cnt[j] > ceil(e + 1e-9);
            }
        }
        for (j = 0; j < N; j++)
            bad_w += r.w[j] != 1.0 / (double)N;
        CHECK(bad_a == 0, "%lu ancestors are not indices 0..N-1", (unsigned long)bad_a);
        CHECK(bad_x == 0, "%lu members are not copies of their recorded ancestor",
              (unsigned long)bad_x);
        CHECK(bad_count == 0, "%lu offspring counts outside floor/ceil of N w",
              (unsigned long)bad_count);
        CHECK(bad_w == 0, "%lu final weights differ from 1/N", (unsigned long)bad_w);
    }

    cfg.threshold = 0.0; /* never resample: identity ancestry */
    st2 = run(&cfg, X0, &id, &err);
    CHECK(st2 == SL_OK, "run without resampling: %s", st2 ? err.message : "");
    if (st2 == SL_OK) {
        size_t bad_a = 0, bad_x = 0, uneven = 0;
        for (k = 0; k < T; k++) {
            CHECK(id.out.resampled[k] == 0, "cycle %lu resampled", (unsigned long)k);
            for (j = 0; j < N; j++) {
                bad_a += id.out.hist_a[k * N + j] != (double)j;
                bad_x += id.out.hist_X[k * N + j] != X0[j];
            }
        }
        for (j = 0; j < N; j++)
            uneven += id.w[j] != 1.0 / (double)N;
        CHECK(bad_a == 0, "%lu ancestors differ from the identity", (unsigned long)bad_a);
        CHECK(bad_x == 0, "%lu states moved without resampling", (unsigned long)bad_x);
        CHECK(uneven > N / 2, "weights were reset without resampling");
        CHECK(same(id.w, id.out.hist_w + (T - 1) * N, N * sizeof(double)),
              "final weights differ from the last recorded weights");
    }
    if (st == SL_OK && st2 == SL_OK)
        CHECK(r.out.ess[0] == id.out.ess[0] && r.out.logz[0] == id.out.logz[0],
              "the first cycle depends on the threshold");
    run_free(&r);
    run_free(&id);
}

/* ------------------------------------------------ absurd workspaces */

static void check_workspace(void)
{
    enum { T = 3 };
    const double yv[T] = {1.0, 2.0, 0.0}, times[T] = {1.0, 2.0, 3.0};
    double A = 1.0;
    sl_linear lin = {1, 0, &A, NULL, NULL, NULL}, huge = lin;
    sl_model md, mh;
    sl_pf_config c;
    obs_table o;
    sl_error err;
    size_t big_first[2] = {0, (size_t)1 << 50};
    size_t ws;

    sl_linear_model(&md, &lin, 1.0, &err);
    one_obs_per_cycle(&o, T, yv, 1.0);
    base_config(&c, &md, 100, T, times, &o);
    ws = sl_pf_workspace(&c);
    CHECK(ws >= 2 * 100 * sizeof(double), "workspace of a small run: %lu", (unsigned long)ws);

    /* N near SIZE_MAX: no size, and the check says badconfig */
    c.N = SIZE_MAX;
    CHECK(sl_pf_workspace(&c) == 0, "workspace for N = SIZE_MAX: %lu",
          (unsigned long)sl_pf_workspace(&c));
    expect_fail(&c, SL_EINVAL, "badconfig", "N = SIZE_MAX");
    c.N = SIZE_MAX / 2 + 3;
    CHECK(sl_pf_workspace(&c) == 0, "workspace for N = SIZE_MAX/2");
    c.N = SIZE_MAX / 8;
    CHECK(sl_pf_workspace(&c) == 0, "workspace for N = SIZE_MAX/8");

    /* 2^40 states (A is never read: nothing runs) with a million members:
     * n N doubles overflow. The largest valid N with 2^24 states too. */
    huge.n = (size_t)1 << 40;
    sl_linear_model(&mh, &huge, 1.0, &err);
    c.model = &mh;
    c.N = 1000000;
    CHECK(sl_pf_workspace(&c) == 0, "workspace for 2^40 states x 1e6 members: %lu",
          (unsigned long)sl_pf_workspace(&c));
    expect_fail(&c, SL_ENOMEM, "nomemory", "2^40 states x 1e6 members");
    huge.n = (size_t)1 << 24;
    sl_linear_model(&mh, &huge, 1.0, &err);
    c.N = SL_RESAMPLE_MAX;
    CHECK(sl_pf_workspace(&c) == 0, "workspace for 2^24 states x 2^32 members");
    expect_fail(&c, SL_ENOMEM, "nomemory", "2^24 states x 2^32 members");
    huge.n = SIZE_MAX / 2 + 1; /* the model's 2n doubles of scratch wrap */
    sl_linear_model(&mh, &huge, 1.0, &err);
    c.N = 1;
    CHECK(sl_pf_workspace(&c) == 0, "workspace for SIZE_MAX/2 states");

    /* huge but representable: reported in full, not wrapped */
    huge.n = (size_t)1 << 20;
    sl_linear_model(&mh, &huge, 1.0, &err);
    c.N = (size_t)1 << 20;
    ws = sl_pf_workspace(&c);
    CHECK(ws >= ((size_t)1 << 44), "workspace for 2^20 x 2^20 states: %lu bytes",
          (unsigned long)ws);

    /* 2^50 observations at one cycle with a million members */
    c.model = &md;
    c.T = 1;
    c.obs_first = big_first;
    c.N = 1000000;
    CHECK(sl_pf_workspace(&c) == 0, "workspace for 2^50 observations");
}

/* ------------------------------------------------ observation operators */

typedef struct {
    double scale;
    int calls, fail_at;
} scale_ctx;

/* Y = scale * x for the one state: the callback form of the operator. */
static sl_status scale_obs(void *ctx, double t, size_t N, const double *X,
                           const double *P, double *Y, sl_error *err)
{
    scale_ctx *c = (scale_ctx *)ctx;
    size_t j;
    (void)P;
    c->calls++;
    if (c->fail_at > 0 && c->calls == c->fail_at)
        return sl_fail(err, SL_EMODEL, "operatorfailed", "failed at t = %g", t);
    for (j = 0; j < N; j++)
        Y[j] = c->scale * X[j];
    return SL_OK;
}

/* Observing y of the state x directly, 2y through the linear row H = 2
 * with sigma 2, or 2y through a callback that returns 2x gives the same
 * weights and means: the likelihoods differ by the constant factor 1/2
 * per observation (the change of variables y' = 2y), so the log-evidence
 * differs by exactly -T log 2 (common practice). */
static void check_operators(void)
{
    enum { N = 5000, T = 3 };
    const double yv[T] = {1.0, 2.0, 0.0}, y2[T] = {2.0, 4.0, 0.0};
    const double times[T] = {1.0, 2.0, 3.0};
    double A = 1.0, L = 1.0, H = 2.0;
    double *X0 = ck_malloc(N * sizeof *X0);
    sl_linear lin = {1, 0, &A, NULL, NULL, &L};
    sl_model md;
    sl_pf_config cfg;
    obs_table o, o2, o3;
    scale_ctx sc = {2.0, 0, 0};
    sl_error err;
    run_buf r1, r2, r3;
    sl_status st;
    size_t j, k;

    sl_linear_model(&md, &lin, 1.0, &err);
    for (j = 0; j < N; j++) {
        sl_stream s;
        sl_stream_init(&s, 7, (uint32_t)j, 0, SL_PURPOSE_PRIOR);
        X0[j] = sl_stream_normal(&s);
    }
    one_obs_per_cycle(&o, T, yv, 1.0);
    base_config(&cfg, &md, N, T, times, &o);
    st = run(&cfg, X0, &r1, &err);
    CHECK(st == SL_OK, "direct observation: %s", st ? err.message : "");

    one_obs_per_cycle(&o2, T, y2, 2.0);
    for (k = 0; k < T; k++)
        o2.var[k] = 1; /* the first derived row: H */
    base_config(&cfg, &md, N, T, times, &o2);
    cfg.n_lin = 1;
    cfg.H = &H;
    st = run(&cfg, X0, &r2, &err);
    CHECK(st == SL_OK, "linear operator: %s", st ? err.message : "");

    one_obs_per_cycle(&o3, T, y2, 2.0);
    for (k = 0; k < T; k++)
        o3.var[k] = 1; /* no linear rows: the first callback row */
    base_config(&cfg, &md, N, T, times, &o3);
    cfg.n_fun = 1;
    cfg.obs_fn = scale_obs;
    cfg.obs_ctx = &sc;
    st = run(&cfg, X0, &r3, &err);
    CHECK(st == SL_OK, "operator callback: %s", st ? err.message : "");
    CHECK(sc.calls == T, "the callback ran %d times, expected once per cycle", sc.calls);
    for (k = 0; k < T; k++) {
        CHECK_CLOSE(r2.out.mean[k], r1.out.mean[k], 1e-12, "mean through H");
        CHECK_CLOSE(r3.out.mean[k], r1.out.mean[k], 1e-12, "mean through the callback");
        CHECK_CLOSE(r2.out.ess[k], r1.out.ess[k], 1e-8, "ess through H");
    }
    CHECK_CLOSE(r2.out.log_evidence, r1.out.log_evidence - T * log(2.0), 1e-12,
                "log-evidence through H: the Jacobian of y' = 2y");
    CHECK_CLOSE(r3.out.log_evidence, r2.out.log_evidence, 1e-12,
                "log-evidence through the callback");
    run_free(&r3);

    /* a failing callback ends the run with its status */
    sc.calls = 0;
    sc.fail_at = 2;
    st = run(&cfg, X0, &r3, &err);
    CHECK(st == SL_EMODEL && strcmp(err.reason, "operatorfailed") == 0,
          "a failing operator stops the run: status %d", (int)st);
    run_free(&r3);

    /* rows beyond the operators, a missing matrix or function: errors */
    cfg.obs_fn = NULL;
    CHECK(sl_pf_check(&cfg, &err) == SL_EINVAL && strcmp(err.reason, "badoperator") == 0,
          "a callback row without a function");
    cfg.n_fun = 0;
    CHECK(sl_pf_check(&cfg, &err) == SL_EINVAL && strcmp(err.reason, "badobs") == 0,
          "a derived row beyond the operators");
    cfg.n_lin = 1;
    cfg.H = NULL;
    CHECK(sl_pf_check(&cfg, &err) == SL_EINVAL && strcmp(err.reason, "badoperator") == 0,
          "a linear row without a matrix");
    H = NAN;
    cfg.H = &H;
    CHECK(sl_pf_check(&cfg, &err) == SL_EINVAL && strcmp(err.reason, "badoperator") == 0,
          "a non-finite operator entry");
    run_free(&r1);
    run_free(&r2);
    ck_free(X0);
}

/* The summary of the derived quantities (derived_summary): a linear row
 * 2x and a callback row 3x of the one state. Scaling by a positive factor
 * keeps the order of the members, so the weighted mean and every weighted
 * quantile of the derived rows are the state's times the factor (common
 * practice); the callback runs once per cycle for the summary (no
 * observation needs it); a failing callback ends the run; a run without
 * the outputs is refused. */
static void check_derived_summary(void)
{
    enum { N = 2000, T = 3, NQ = 3 };
    const double y2[T] = {2.0, 4.0, 0.0}, times[T] = {1.0, 2.0, 3.0};
    const double probs[NQ] = {0.05, 0.5, 0.95};
    double A = 1.0, L = 1.0, H = 2.0;
    double *X0 = ck_malloc(N * sizeof *X0);
    double dmean[2 * T], dquant[2 * NQ * T];
    sl_linear lin = {1, 0, &A, NULL, NULL, &L};
    sl_model md;
    sl_pf_config cfg;
    obs_table o;
    scale_ctx sc = {3.0, 0, 0};
    sl_error err;
    run_buf r;
    sl_status st;
    size_t j, k, q;

    sl_linear_model(&md, &lin, 1.0, &err);
    for (j = 0; j < N; j++) {
        sl_stream s;
        sl_stream_init(&s, 8, (uint32_t)j, 0, SL_PURPOSE_PRIOR);
        X0[j] = sl_stream_normal(&s);
    }
    one_obs_per_cycle(&o, T, y2, 2.0);
    for (k = 0; k < T; k++)
        o.var[k] = 1; /* observed through H */
    base_config(&cfg, &md, N, T, times, &o);
    cfg.n_lin = 1;
    cfg.H = &H;
    cfg.n_fun = 1;
    cfg.obs_fn = scale_obs;
    cfg.obs_ctx = &sc;
    cfg.nq = NQ;
    cfg.probs = probs;
    cfg.derived_summary = 1;
    /* the outputs are missing until run() is given them: refused */
    st = run(&cfg, X0, &r, &err);
    CHECK(st == SL_EINVAL && strcmp(err.reason, "badconfig") == 0,
          "derived_summary without dmean: status %d", (int)st);
    run_free(&r);

    {
        /* run() allocates the standard outputs; add the derived ones */
        size_t bytes = sl_pf_workspace(&cfg);
        memset(&r, 0, sizeof r);
        alloc_outputs(&r, 1, NQ, T);
        r.out.dmean = dmean;
        r.out.dquant = dquant;
        r.X = zalloc(N, sizeof(double));
        r.P = zalloc(1, sizeof(double));
        r.w = zalloc(N, sizeof(double));
        r.work = ck_malloc(bytes);
        memcpy(r.X, X0, N * sizeof(double));
        st = sl_pf_run(&cfg, r.X, r.P, r.w, r.work, &r.out, &err);
        CHECK(st == SL_OK, "derived summary run: %s", st ? err.message : "");
        CHECK(sc.calls == T, "the callback ran %d times for the summary, expected %d",
              sc.calls, (int)T);
        for (k = 0; k < T; k++) {
            CHECK_CLOSE(dmean[0 + 2 * k], 2.0 * r.out.mean[k], 1e-12, "mean of 2x");
            CHECK_CLOSE(dmean[1 + 2 * k], 3.0 * r.out.mean[k], 1e-12, "mean of 3x");
            for (q = 0; q < NQ; q++) {
                CHECK(dquant[0 + 2 * q + 2 * NQ * k] == 2.0 * r.out.quant[q + NQ * k],
                      "quantile %lu of 2x at cycle %lu", (unsigned long)q, (unsigned long)k);
                CHECK(dquant[1 + 2 * q + 2 * NQ * k] == 3.0 * r.out.quant[q + NQ * k],
                      "quantile %lu of 3x at cycle %lu", (unsigned long)q, (unsigned long)k);
            }
        }
        /* a callback failing in the summary ends the run with its status */
        sc.calls = 0;
        sc.fail_at = 2;
        memcpy(r.X, X0, N * sizeof(double));
        st = sl_pf_run(&cfg, r.X, r.P, r.w, r.work, &r.out, &err);
        CHECK(st == SL_EMODEL && strcmp(err.reason, "operatorfailed") == 0,
              "a failing operator in the summary stops the run: status %d", (int)st);
        r.out.dmean = r.out.dquant = NULL;
        run_free(&r);
    }
    ck_free(X0);
}

/* Fixed-lag smoothing over the whole run of the worked example: the
 * smoothed means of the Rauch-Tung-Striebel smoother (Rauch, Tung &
 * Striebel 1965), hand-computed: 6/7, 8/7, 4/7; a lag of 1 gives the
 * smoother of the data up to the next cycle (cycle 1: the RTS mean of
 * y = (1, 2), 2/3 + (2/5)(3/2 - 2/3) = 1, hand-computed); the window
 * leaves the filter as it was. */
static void check_lag(void)
{
    enum { N = 40000, T = 3 };
    const double yv[T] = {1.0, 2.0, 0.0}, times[T] = {1.0, 2.0, 3.0};
    const double rts[T] = {6.0 / 7.0, 8.0 / 7.0, 4.0 / 7.0};
    double A = 1.0, L = 1.0, *X0 = ck_malloc(N * sizeof *X0);
    double sm[T], sq[3 * T];
    const double probs[3] = {0.05, 0.5, 0.95};
    sl_linear lin = {1, 0, &A, NULL, NULL, &L};
    sl_model md;
    sl_pf_config cfg;
    obs_table o;
    sl_error err;
    run_buf r0, r1;
    sl_status st;
    size_t j, k, lag;

    sl_linear_model(&md, &lin, 1.0, &err);
    for (j = 0; j < N; j++) {
        sl_stream s;
        sl_stream_init(&s, 3, (uint32_t)j, 0, SL_PURPOSE_PRIOR);
        X0[j] = sl_stream_normal(&s);
    }
    one_obs_per_cycle(&o, T, yv, 1.0);
    base_config(&cfg, &md, N, T, times, &o);
    cfg.nq = 3;
    cfg.probs = probs;
    st = run(&cfg, X0, &r0, &err);
    CHECK(st == SL_OK, "run without a window: %s", st ? err.message : "");
    for (lag = 1; lag <= 5; lag += 2) {
        sl_pf_output keep;
        cfg.lag = lag;
        memset(&r1, 0, sizeof r1);
        /* run() fills the outputs; give it the smoothed arrays too */
        {
            size_t bytes = sl_pf_workspace(&cfg);
            memset(&keep, 0, sizeof keep);
            keep.mean = ck_calloc(3, sizeof(double));
            keep.quant = ck_calloc(9, sizeof(double));
            keep.ess = ck_calloc(T, sizeof(double));
            keep.logz = ck_calloc(T, sizeof(double));
            keep.resampled = ck_calloc(T, sizeof(double));
            keep.degenerate = ck_calloc(T, sizeof(double));
            keep.skipped = ck_calloc(T, sizeof(double));
            keep.nonfinite = ck_calloc(T, sizeof(double));
            keep.smean = sm;
            keep.squant = sq;
            r1.X = ck_malloc(N * sizeof(double));
            r1.P = ck_calloc(1, sizeof(double));
            r1.w = ck_malloc(N * sizeof(double));
            r1.work = ck_malloc(bytes);
            memcpy(r1.X, X0, N * sizeof(double));
            st = sl_pf_run(&cfg, r1.X, r1.P, r1.w, r1.work, &keep, &err);
        }
        CHECK(st == SL_OK, "run with lag %lu: %s", (unsigned long)lag, st ? err.message : "");
        if (st == SL_OK) {
            for (k = 0; k < T; k++)
                CHECK(keep.mean[k] == r0.out.mean[k], "lag %lu: the filter is unchanged",
                      (unsigned long)lag);
            /* Monte Carlo error of a traced mean with N = 4e4: < 0.01 */
            if (lag >= T) {
                for (k = 0; k < T; k++)
                    CHECK_CLOSE(sm[k], rts[k], 0.03, "smoothed mean, full lag");
            } else {
                CHECK_CLOSE(sm[0], 1.0, 0.03, "smoothed mean, lag 1, cycle 1");
            }
            CHECK_CLOSE(sm[T - 1], r0.out.mean[T - 1], 1e-12,
                        "the last cycle's smoothed mean is the filtered one");
            CHECK(sq[0] < sm[0] && sm[0] < sq[2], "smoothed quantiles bracket the mean");
        }
        ck_free(keep.mean); ck_free(keep.quant); ck_free(keep.ess); ck_free(keep.logz);
        ck_free(keep.resampled); ck_free(keep.degenerate); ck_free(keep.skipped);
        ck_free(keep.nonfinite);
        ck_free(r1.X); ck_free(r1.P); ck_free(r1.w); ck_free(r1.work);
    }
    /* a lag without the smoothed outputs is refused */
    cfg.lag = 2;
    st = run(&cfg, X0, &r1, &err);
    CHECK(st == SL_EINVAL && strcmp(err.reason, "badconfig") == 0,
          "a lag without smean: status %d", (int)st);
    run_free(&r1);
    cfg.lag = 0;
    run_free(&r0);
    ck_free(X0);
}

/* The distinct ancestors of the smoothed times (out->sanc): N = 8
 * members at 0, 1, ..., 7 that never move (x_k = x_(k-1), no noise)
 * and y = 3 with sigma 1e-3 at every cycle. At cycle 1 every other
 * member's likelihood underflows to 0 (exp(-5e5)), so all the weight is
 * on member 3 and the resampling copies it N times: cycle 1 is smoothed
 * from exactly 1 ancestor. Then every member is at 3, the weights are
 * equal and nothing is resampled again: the later cycles keep N. With
 * the threshold 0 (never resample) every count is N (hand-derived from
 * the window's definition). */
static void check_lag_ancestors(void)
{
    enum { N = 8, T = 3 };
    const double yv[T] = {3.0, 3.0, 3.0}, times[T] = {1.0, 2.0, 3.0};
    double A = 1.0, L = 0.0, X0[N], sm[T], sq[T], anc[T];
    const double probs[1] = {0.5};
    sl_linear lin = {1, 0, &A, NULL, NULL, &L};
    sl_model md;
    sl_pf_config cfg;
    obs_table o;
    sl_error err;
    size_t j, k, lag, never;

    sl_linear_model(&md, &lin, 1.0, &err);
    for (j = 0; j < N; j++)
        X0[j] = (double)j;
    one_obs_per_cycle(&o, T, yv, 1e-3);
    base_config(&cfg, &md, N, T, times, &o);
    cfg.nq = 1;
    cfg.probs = probs;
    for (never = 0; never < 2; never++)
        for (lag = 1; lag <= 2; lag++) {
            run_buf r;
            sl_status st;
            double X[N], P[1], w[N];
            void *work;
            cfg.lag = lag;
            cfg.threshold = never ? 0.0 : 0.5;
            memset(&r, 0, sizeof r);
            alloc_outputs(&r, 1, 1, T);
            r.out.smean = sm;
            r.out.squant = sq;
            r.out.sanc = anc;
            for (k = 0; k < T; k++)
                anc[k] = -1.0;
            work = ck_malloc(sl_pf_workspace(&cfg));
            memcpy(X, X0, sizeof X);
            st = sl_pf_run(&cfg, X, P, w, work, &r.out, &err);
            CHECK(st == SL_OK, "ancestors, lag %lu: %s", (unsigned long)lag,
                  st ? err.message : "");
            if (st == SL_OK) {
                CHECK(r.out.resampled[0] == (never ? 0.0 : 1.0) && r.out.resampled[1] == 0.0 &&
                      r.out.resampled[2] == 0.0, "ancestors, lag %lu: resampled %g %g %g",
                      (unsigned long)lag, r.out.resampled[0], r.out.resampled[1],
                      r.out.resampled[2]);
                CHECK(anc[0] == (never ? (double)N : 1.0) && anc[1] == (double)N &&
                          anc[2] == (double)N,
                      "ancestors, lag %lu, threshold %g: %g %g %g", (unsigned long)lag,
                      cfg.threshold, anc[0], anc[1], anc[2]);
                CHECK(sm[0] == 3.0, "ancestors: cycle 1 smoothed from member 3: %g", sm[0]);
            }
            run_free(&r);
            ck_free(work);
        }
}

/* The worked example above (x_k = x_(k-1) + N(0, 1), y = 1, 2, 0 with
 * unit error, x_0 ~ N(0, 1); hand values from the Kalman filter) by SMC2
 * with 200 groups of 100 members (no parameters: independent filters
 * weighted by their evidence) and by the weighted ensemble Kalman filter
 * (the model's step without noise, the noise as state noise). Tolerances
 * as in check_worked_example (a few Monte Carlo errors). */
static void check_smc2_wenkf(void)
{
    enum { N = 20000, T = 3 };
    const double yv[T] = {1.0, 2.0, 0.0}, times[T] = {1.0, 2.0, 3.0};
    const double hand_mean[T] = {2.0 / 3.0, 1.5, 4.0 / 7.0};
    const double hand_logz = -1.5 * log(TWO_PI) - 0.5 * log(21.0) - 13.0 / 14.0;
    const double one = 1.0;
    double A = 1.0, L = 1.0, *X0 = ck_malloc(N * sizeof *X0);
    sl_linear lin = {1, 0, &A, NULL, NULL, &L}, det = {1, 0, &A, NULL, NULL, NULL};
    sl_model md, mdet;
    sl_pf_config cfg;
    obs_table o;
    sl_error err;
    run_buf r;
    sl_status st;
    size_t j, k;
    CHECK(X0 != NULL, "memory");
    if (X0 == NULL)
        return;
    CHECK(sl_linear_model(&md, &lin, 1.0, &err) == SL_OK, "linear model");
    CHECK(sl_linear_model(&mdet, &det, 1.0, &err) == SL_OK, "deterministic linear model");
    one_obs_per_cycle(&o, T, yv, 1.0);
    for (j = 0; j < N; j++) {
        sl_stream s;
        sl_stream_init(&s, 7, (uint32_t)j, 0, SL_PURPOSE_PRIOR);
        X0[j] = sl_stream_normal(&s);
    }
    base_config(&cfg, &md, N, T, times, &o);
    cfg.inner = 100;
    cfg.move.rm_scale = 1.0;
    cfg.move.rm_diversity = 0.5;
    cfg.move.rm_sweeps = 3;
    st = run(&cfg, X0, &r, &err);
    CHECK(st == SL_OK, "SMC2 run: %s", st ? err.message : "");
    if (st == SL_OK) {
        for (k = 0; k < T; k++)
            CHECK_CLOSE(r.out.mean[k], hand_mean[k], 0.012, "SMC2 filtered mean");
        CHECK_CLOSE(r.out.log_evidence, hand_logz, 0.05, "SMC2 log-evidence");
    }
    run_free(&r);
    cfg.inner = 300; /* 20000 members are not whole groups of 300 */
    CHECK(sl_pf_check(&cfg, &err) == SL_EINVAL && strcmp(err.reason, "badconfig") == 0,
          "SMC2 groups must divide the members");
    base_config(&cfg, &mdet, N, T, times, &o);
    cfg.wenkf = 1;
    CHECK(sl_pf_check(&cfg, &err) == SL_EINVAL, "the weighted EnKF needs state noise");
    cfg.state_noise = &one;
    st = run(&cfg, X0, &r, &err);
    CHECK(st == SL_OK, "weighted EnKF run: %s", st ? err.message : "");
    if (st == SL_OK) {
        for (k = 0; k < T; k++)
            CHECK_CLOSE(r.out.mean[k], hand_mean[k], 0.012, "weighted EnKF filtered mean");
        CHECK_CLOSE(r.out.log_evidence, hand_logz, 0.05, "weighted EnKF log-evidence");
        /* near the optimal proposal: most members stay effective */
        CHECK(r.out.ess[0] > 0.6 * N, "weighted EnKF ESS %g", r.out.ess[0]);
    }
    run_free(&r);
    ck_free(X0);
}

/* A GR4J run of the tests below: at most GR4J_TMAX cycles; flows (Q)
 * observed with lognormal errors in the rows of `first`; rain and
 * evaporation held between daily forcing times and perturbed; the
 * parameters' transforms and prior; and the outputs it records. */
#define GR4J_TMAX 120
typedef struct {
    double times[GR4J_TMAX], Ft[GR4J_TMAX], Fv[2 * GR4J_TMAX], y[GR4J_TMAX], sg[GR4J_TMAX],
        aux[GR4J_TMAX], fsd[2], fphi[2];
    size_t first[GR4J_TMAX + 1], var[GR4J_TMAX];
    int fam[GR4J_TMAX], noise[2];
    sl_prior_entry prior[4];
    sl_transform tr[4];
    double mean[(63 + 4) * GR4J_TMAX], ess[GR4J_TMAX], logz[GR4J_TMAX], res[GR4J_TMAX],
        deg[GR4J_TMAX], skip[GR4J_TMAX], nonf[GR4J_TMAX], sw[GR4J_TMAX], acc[GR4J_TMAX];
} gr4j_case;

/* g's prior at the model's defaults, fixed, with its transforms; rows of
 * Q, lognormal, sd 0.3 */
static void gr4j_case_init(gr4j_case *g, const sl_model_def *d)
{
    size_t k;
    memset(g, 0, sizeof *g);
    for (k = 0; k < 4; k++) {
        g->prior[k].dist = SL_DIST_FIXED;
        g->prior[k].a = d->p_default[k];
        g->tr[k] = sl_transform_for_bounds(d->p_lower[k], d->p_upper[k]);
    }
    for (k = 0; k < GR4J_TMAX; k++) {
        g->var[k] = 62; /* Q */
        g->sg[k] = 0.3;
        g->fam[k] = SL_FAMILY_LOGNORMAL;
    }
    g->noise[0] = g->noise[1] = SL_FORCING_MULTIPLICATIVE;
}

/* The settings and outputs of g's run of N members over T cycles, nt
 * forcing times (the rest is the caller's) */
static void gr4j_case_config(gr4j_case *g, const sl_model *md, size_t N, size_t T, size_t nt,
                             sl_pf_config *cfg, sl_pf_output *out)
{
    memset(cfg, 0, sizeof *cfg);
    cfg->model = md;
    cfg->N = N;
    cfg->t0 = 0.0;
    cfg->T = T;
    cfg->times = g->times;
    cfg->obs_first = g->first;
    cfg->y = g->y;
    cfg->sigma = g->sg;
    cfg->aux = g->aux;
    cfg->family = g->fam;
    cfg->var = g->var;
    cfg->forcing.q = 2;
    cfg->forcing.nt = nt;
    cfg->forcing.time = g->Ft;
    cfg->forcing.value = g->Fv;
    cfg->forcing.hold = 1;
    cfg->forcing.noise = g->noise;
    cfg->forcing.sd = g->fsd;
    cfg->forcing.phi = g->fphi;
    cfg->ptrans = g->tr;
    cfg->prior = g->prior;
    cfg->resampler = &sl_resampler_systematic;
    cfg->threads = 1;
    memset(out, 0, sizeof *out);
    out->mean = g->mean;
    out->ess = g->ess;
    out->logz = g->logz;
    out->resampled = g->res;
    out->degenerate = g->deg;
    out->skipped = g->skip;
    out->nonfinite = g->nonf;
    out->move_sweeps = g->sw;
    out->move_accept = g->acc;
}

/* GR4J (a forced span: each block of members makes its unit-hydrograph
 * ordinates once for an interval's days) with perturbed rain and
 * evaporation, X1 and X4 drawn for each member, flows observed every
 * 40th day (an interval is three calls of the span, of at most 55 steps
 * each, over five blocks of members): without resampling, the bits of the same run with a cycle
 * every day (one step of every member at a time; resampling draws by
 * cycle number, so only a run that never resamples keeps them); with
 * resample_move re-running the paths (members under their ancestors'
 * indices), the bits of the same run without the span (the model's step,
 * ordinates made every day); on 1 and 2 threads. */
typedef struct {
    sl_status st;
    double X[63 * 300], P[4 * 300], evidence;
} gr4j_span_result;

static void gr4j_span_run(int fine, int threads, int rm, int nospan, gr4j_span_result *res)
{
    enum { N = 300, NS = 63, DAYS = 120, EVERY = 40, TC = DAYS / EVERY };
    const sl_model_def *d = sl_model_def_find("gr4j");
    gr4j_case *g = ck_malloc(sizeof *g);
    double w[N];
    size_t j, k, T = fine ? DAYS : TC;
    sl_model md;
    sl_def_model dm;
    sl_pf_config cfg;
    sl_pf_output out;
    sl_error err;
    void *work;
    res->st = g != NULL ? sl_def_model_init(&md, &dm, d, 0, NULL, 0, NULL, NULL, &err)
                        : SL_ENOMEM;
    if (res->st != SL_OK || md.span_forced == NULL) {
        ck_free(g);
        return;
    }
    if (nospan)
        md.span_forced = NULL; /* the step path: ordinates made every day */
    gr4j_case_init(g, d);
    for (k = 0; k < DAYS; k++) {
        sl_stream s;
        sl_stream_init(&s, 4, 0, (uint32_t)k, SL_PURPOSE_USER);
        g->Ft[k] = (double)k;
        g->Fv[k] = sl_stream_uniform(&s) < 0.4 ? -6.0 * log(sl_stream_uniform(&s)) : 0.0;
        g->Fv[DAYS + k] = 2.5;
    }
    for (k = 0; k < TC; k++)
        g->y[k] = 0.8 + 0.1 * (double)k;
    /* cycle k ends on day (k + 1) EVERY, or, fine, day k + 1; its rows
     * start at the count of observed cycles before it */
    for (k = 0; k < T; k++) {
        g->times[k] = fine ? (double)(k + 1) : (double)((k + 1) * EVERY);
        g->first[k] = fine ? k / EVERY : k;
    }
    g->first[T] = TC;
    g->fsd[0] = 0.3;
    g->fsd[1] = 0.1;
    g->fphi[0] = 0.4;
    g->prior[0].dist = SL_DIST_LOGNORMAL;
    g->prior[0].a = log(300.0);
    g->prior[0].b = 0.3;
    g->prior[3].dist = SL_DIST_UNIFORM;
    g->prior[3].a = 0.5;
    g->prior[3].b = 4.0;
    gr4j_case_config(g, &md, N, T, DAYS, &cfg, &out);
    cfg.param_move = rm ? &sl_param_move_resample_move : &sl_param_move_fixed;
    cfg.move.rm_scale = 1.0;
    cfg.move.rm_paths = 0.1;
    cfg.move.rm_diversity = 0.5;
    cfg.move.rm_sweeps = 3;
    cfg.threshold = rm ? 0.9 : 0.0;
    cfg.seed = 29;
    cfg.threads = threads;
    for (j = 0; j < N; j++) {
        sl_stream s;
        memcpy(res->X + j * NS, d->x0, NS * sizeof(double));
        sl_stream_init(&s, 6, (uint32_t)j, 0, SL_PURPOSE_PRIOR);
        for (k = 0; k < 4; k++)
            res->P[k + 4 * j] = d->p_default[k];
        res->P[0 + 4 * j] = exp(log(300.0) + 0.3 * sl_stream_normal(&s));
        res->P[3 + 4 * j] = 0.5 + 3.5 * sl_stream_uniform(&s);
    }
    work = ck_malloc(sl_pf_workspace(&cfg));
    res->st = work != NULL ? sl_pf_run(&cfg, res->X, res->P, w, work, &out, &err) : SL_ENOMEM;
    res->evidence = out.log_evidence;
    ck_free(work);
    ck_free(g);
}

static void check_gr4j_span(void)
{
    gr4j_span_result *ref = ck_malloc(sizeof *ref), *got = ck_malloc(sizeof *got);
    int rm, thr;
    for (rm = 0; rm <= 1; rm++) {
        /* the reference: a cycle a day without resampling, else no span */
        gr4j_span_run(!rm, 1, rm, rm, ref);
        CHECK(ref->st == SL_OK, "gr4j reference, move %d: %d", rm, (int)ref->st);
        for (thr = 1; thr <= 2; thr++) {
            gr4j_span_run(0, thr, rm, 0, got);
            CHECK(got->st == SL_OK && memcmp(got->X, ref->X, sizeof ref->X) == 0 &&
                      memcmp(got->P, ref->P, sizeof ref->P) == 0 &&
                      memcmp(&got->evidence, &ref->evidence, sizeof ref->evidence) == 0,
                  "gr4j, a cycle every 40 days (forced span), move %d, %d thread(s): the bits of %s "
                  "(status %d, log-evidence %.17g against %.17g)", rm, thr,
                  rm ? "the step path" : "a cycle a day", (int)got->st, got->evidence,
                  ref->evidence);
        }
    }
    ck_free(ref);
    ck_free(got);
}

/* resample_move on the built-in GR4J (63 states, 4 parameters) with
 * perturbed rain and evaporation: a proposal of scale 1e-9 is accepted
 * at nearly every member, since each re-run reproduces the member's path
 * (its forcing draws come from its ancestors' streams) to rounding; a
 * normal scale rejects many. Also run under AddressSanitizer. */
static void check_resample_move(void)
{
    enum { N = 200, T = 40, NS = 63 };
    const sl_model_def *d = sl_model_def_find("gr4j");
    gr4j_case *g = ck_malloc(sizeof *g);
    sl_model md;
    sl_def_model dm;
    sl_pf_config cfg;
    sl_pf_output out;
    sl_error err;
    double *P = ck_malloc(4 * N * sizeof *P), *w = ck_malloc(N * sizeof *w), *X = ck_malloc(NS * N * sizeof *X);
    void *work;
    size_t j, k, i, moved;
    double amin;
    int scale;
    CHECK(d != NULL && g != NULL && P != NULL && w != NULL && X != NULL, "gr4j and memory");
    if (d == NULL || g == NULL || P == NULL || w == NULL || X == NULL) {
        ck_free(g);
        ck_free(P);
        ck_free(w);
        ck_free(X);
        return;
    }
    CHECK(sl_def_model_init(&md, &dm, d, 0, NULL, 0, NULL, NULL, &err) == SL_OK, "gr4j model");
    gr4j_case_init(g, d);
    for (k = 0; k < T; k++) {
        sl_stream s;
        sl_stream_init(&s, 3, 0, (uint32_t)k, SL_PURPOSE_USER);
        g->Ft[k] = (double)k;
        g->times[k] = (double)(k + 1);
        g->Fv[k] = sl_stream_uniform(&s) < 0.4 ? -6.0 * log(sl_stream_uniform(&s)) : 0.0;
        g->Fv[T + k] = 2.0;
        g->first[k] = k;
        g->y[k] = 0.5 + 0.02 * (double)k;
    }
    g->first[T] = T;
    g->fsd[0] = 0.2;
    g->fsd[1] = 0.1;
    g->fphi[0] = 0.3;
    g->prior[0].dist = SL_DIST_LOGNORMAL;
    g->prior[0].a = log(300.0);
    g->prior[0].b = 0.3;
    g->prior[2].dist = SL_DIST_LOGNORMAL;
    g->prior[2].a = log(80.0);
    g->prior[2].b = 0.3;
    /* 0: still proposals re-run through the recorded parents' streams;
     * 1: the same through the stored draws (path moves of step 1e-9);
     * 2: real proposals of parameters and paths */
    for (scale = 0; scale < 3; scale++) {
        gr4j_case_config(g, &md, N, T, T, &cfg, &out);
        cfg.param_move = &sl_param_move_resample_move;
        cfg.move.rm_scale = scale < 2 ? 1e-9 : 1.0;
        cfg.move.rm_paths = scale == 0 ? 0.0 : (scale == 1 ? 1e-9 : 0.1);
        cfg.move.rm_diversity = 0.5;
        cfg.move.rm_sweeps = 5;
        cfg.threshold = 0.5;
        cfg.seed = 11;
        for (j = 0; j < N; j++) {
            sl_stream s;
            memcpy(X + j * NS, d->x0, NS * sizeof(double));
            sl_stream_init(&s, 5, (uint32_t)j, 0, SL_PURPOSE_PRIOR);
            for (i = 0; i < 4; i++)
                P[i + 4 * j] = d->p_default[i];
            P[0 + 4 * j] = exp(log(300.0) + 0.3 * sl_stream_normal(&s));
            P[2 + 4 * j] = exp(log(80.0) + 0.3 * sl_stream_normal(&s));
        }
        work = ck_malloc(sl_pf_workspace(&cfg));
        CHECK(work != NULL && sl_pf_run(&cfg, X, P, w, work, &out, &err) == SL_OK,
              "resample_move run: %s", err.message);
        ck_free(work);
        moved = 0;
        amin = 1.0;
        for (k = 0; k < T; k++)
            if (g->sw[k] > 0) {
                moved++;
                /* the path step adapts toward 23% acceptance and soon
                 * stops being still: pass 1 checks its first moves */
                if (g->acc[k] < amin && (scale != 1 || moved <= 2))
                    amin = g->acc[k];
            } else {
                CHECK(isnan(g->acc[k]), "no move, no acceptance rate");
            }
        CHECK(moved >= 2, "resample_move acted in %lu cycles", (unsigned long)moved);
        if (scale < 2)
            CHECK(amin > 0.99, "a still proposal is accepted (smallest rate %g, pass %d)",
                  amin, scale);
        else
            CHECK(amin < 0.9, "a real proposal is sometimes rejected (smallest rate %g)", amin);
    }
    ck_free(g);
    ck_free(P);
    ck_free(w);
    ck_free(X);
}

/* ------------------------------------------------------ the linear model */

/* The built-in linear model's step, vectorised over members, against
 * x <- c + A x + B u + L e written here member by member from its
 * definition (model.h), each member's noise e drawn from its own stream:
 * the same bits, for 150 members (two full noise blocks and part of one)
 * of a 5-state model with 2 forcings and a full lower-triangular L, and
 * for the 2-state model of the other checks, first member 37. */
static void check_linear_block(void)
{
    enum { M = 150, n5 = 5, q5 = 2 };
    static double A5[n5 * n5], B5[n5 * q5], c5[n5], L5[n5 * n5];
    const sl_linear lin5 = {n5, q5, A5, B5, c5, L5};
    const sl_linear *lins[2] = {&lin5, &lin2};
    size_t m, i, j, k;
    sl_stream s;
    sl_stream_init(&s, 4, 0, 0, SL_PURPOSE_USER);
    for (i = 0; i < n5 * n5; i++)
        A5[i] = 0.3 * sl_stream_normal(&s);
    for (i = 0; i < n5 * q5; i++)
        B5[i] = sl_stream_normal(&s);
    for (i = 0; i < n5; i++) {
        c5[i] = sl_stream_normal(&s);
        for (k = 0; k < n5; k++)
            L5[i + k * n5] = k <= i ? 0.5 * sl_stream_normal(&s) : 0.0;
    }
    for (m = 0; m < 2; m++) {
        const sl_linear *lin = lins[m];
        const size_t n = lin->n, q = lin->q, f0 = m == 0 ? 0 : 37;
        double *X = ck_malloc(n * M * sizeof(double)), *R = ck_malloc(n * M * sizeof(double));
        double *U = ck_malloc(q * M * sizeof(double)), *work, e[5], x[5];
        sl_model md;
        sl_error err;
        int same_all = 1;
        CHECK(sl_linear_model(&md, lin, 1.0, &err) == SL_OK, "linear model: %s", err.message);
        work = ck_malloc(md.work * sizeof(double));
        for (j = 0; j < n * M; j++)
            X[j] = R[j] = 2.0 * sl_stream_normal(&s);
        for (j = 0; j < q * M; j++)
            U[j] = sl_stream_normal(&s);
        CHECK(md.step(&md, 3.0, 4.0, f0, M, X, NULL, U, 91u, 3u, work, &err) == SL_OK,
              "linear step");
        for (j = 0; j < M; j++) {
            sl_normals_members(91u, (uint32_t)(f0 + j), 1, 3u, SL_PURPOSE_MODEL_NOISE, n, e, n);
            for (i = 0; i < n; i++)
                x[i] = R[j * n + i];
            for (i = 0; i < n; i++) {
                double acc = lin->c != NULL ? lin->c[i] : 0.0;
                for (k = 0; k < n; k++)
                    acc += lin->A[i + k * n] * x[k];
                for (k = 0; k < q; k++)
                    acc += lin->B[i + k * n] * U[j * q + k];
                for (k = 0; k <= i; k++)
                    acc += lin->L[i + k * n] * e[k];
                R[j * n + i] = acc;
            }
        }
        for (j = 0; j < n * M; j++)
            if (memcmp(X + j, R + j, sizeof(double)) != 0)
                same_all = 0;
        CHECK(same_all, "linear step of %lu states, %d members: the member-by-member bits",
              (unsigned long)n, M);
        ck_free(X);
        ck_free(R);
        ck_free(U);
        ck_free(work);
    }
}

/* ------------------------------------------------------------ spans */

/* The flood model's span, counted (the check below must see it used) */
static sl_span_fn span_inner;
static size_t span_calls;
static sl_status counting_span(const sl_model *model, double t0, double h, double t_end,
                               size_t nsteps, size_t l0, size_t l1, size_t first,
                               size_t count, double *X, const double *P, uint64_t seed,
                               uint32_t s0, double *work, size_t *failed, sl_error *err)
{
#pragma omp atomic update
    span_calls++;
    return span_inner(model, t0, h, t_end, nsteps, l0, l1, first, count, X, P, seed, s0, work,
                      failed, err);
}

static int stop_at_once(void *ctx, double fraction)
{
    (void)fraction;
    ++*(size_t *)ctx;
    return 1;
}

/* One run of cfg with model md on `threads` threads from X0, P0 into X,
 * P, w, recording the means, ESS and log-evidence increments */
static sl_status span_run(sl_pf_config *cfg, const sl_model *md, int threads,
                          const double *X0, const double *P0, double *X, double *P, double *w,
                          double *mean, double *ess, double *logz, sl_error *err)
{
    const size_t N = cfg->N, T = cfg->T;
    double *flags = ck_malloc(4 * T * sizeof(double));
    sl_pf_output out;
    void *work;
    sl_status st;
    memcpy(X, X0, md->n_state * N * sizeof(double));
    memcpy(P, P0, md->n_param * N * sizeof(double));
    memset(&out, 0, sizeof out);
    out.mean = mean;
    out.ess = ess;
    out.logz = logz;
    out.resampled = flags;
    out.degenerate = flags + T;
    out.skipped = flags + 2 * T;
    out.nonfinite = flags + 3 * T;
    cfg->model = md;
    cfg->threads = threads;
    work = ck_malloc(sl_pf_workspace(cfg));
    st = sl_pf_run(cfg, X, P, w, work, &out, err);
    ck_free(work);
    ck_free(flags);
    return st;
}

/* A model with a span (the flood model under RK4, which keeps its blocks
 * in its own layout through the steps of an interval) gives the run of the
 * same model stepped one step a call, bit for bit, on 1 and 2 threads,
 * with 20000 members (the sequential path takes them in 5 chunks of at
 * most 4096 and each interval of 50 steps in spans of 42 and 8), a
 * parameter estimated with the kernel
 * move, and flood events whose levels are perturbed per member (common
 * practice: a fast path checked against its plain version). A poll that
 * stops the run is honoured between spans. */
static void check_span(void)
{
    enum { N = 20000, T = 3, NS = 6, NP = 10 };
    const sl_model_def *d = sl_model_def_find("flood");
    const double times[T] = {1.0, 2.0, 3.0}, ev_t[4] = {0.35, 1.0, 1.5, 2.7},
                 ev_v[4] = {2.0, 0.5, 3.0, 1.2}, ev_sd[1] = {0.3};
    const int ev_noise[1] = {SL_FORCING_MULTIPLICATIVE};
    const double y[T] = {0.011, 0.0125, 0.013};
    const size_t first[T + 1] = {0, 1, 2, 3}, var[T] = {0, 0, 0};
    const double sg[T] = {0.1, 0.1, 0.1}, aux[T] = {0, 0, 0};
    const int fam[T] = {SL_FAMILY_LOGNORMAL, SL_FAMILY_LOGNORMAL, SL_FAMILY_LOGNORMAL};
    sl_prior_entry prior[NP];
    sl_transform tr[NP];
    sl_events ev;
    sl_model md, plain, counted;
    sl_def_model dm;
    sl_pf_config cfg;
    sl_error err;
    double *X0 = ck_malloc(NS * N * sizeof(double)), *P0 = ck_malloc(NP * N * sizeof(double));
    double *X[4], *P[4], *w[4], mean[4][(NS + NP) * T], ess[4][T], logz[4][T];
    const sl_model *models[4];
    size_t i, j, r, polls = 0;
    sl_status st;
    CHECK(d != NULL, "flood model");
    if (d == NULL || X0 == NULL || P0 == NULL)
        return;
    ev.count = 4;
    ev.nv = 1;
    ev.time = ev_t;
    ev.value = ev_v;
    ev.noise = ev_noise;
    ev.sd = ev_sd;
    ev.seed = 5;
    CHECK(sl_def_model_init(&md, &dm, d, 0, sl_integrator_find("rk4"), 0.02, NULL, &ev,
                            &err) == SL_OK,
          "flood model under rk4: %s", err.message);
    CHECK(md.span != NULL && md.member_draws, "the flood model under rk4 has a span");
    if (md.span == NULL)
        return;
    plain = md;
    plain.span = NULL;
    counted = md;
    span_inner = md.span;
    counted.span = counting_span;
    for (i = 0; i < NP; i++) {
        prior[i].dist = SL_DIST_FIXED;
        prior[i].a = d->p_default[i];
        tr[i] = sl_transform_for_bounds(d->p_lower[i], d->p_upper[i]);
    }
    prior[9].dist = SL_DIST_LOGNORMAL; /* muS */
    prior[9].a = log(0.215);
    prior[9].b = 0.5;
    for (j = 0; j < N; j++) {
        sl_stream s;
        sl_stream_init(&s, 8, (uint32_t)j, 0, SL_PURPOSE_PRIOR);
        for (i = 0; i < NS; i++)
            X0[i + j * NS] = d->x0[i];
        X0[0 + j * NS] = 0.01 * exp(0.2 * sl_stream_normal(&s));
        for (i = 0; i < NP; i++)
            P0[i + j * NP] = d->p_default[i];
        P0[9 + j * NP] = exp(log(0.215) + 0.5 * sl_stream_normal(&s));
    }
    memset(&cfg, 0, sizeof cfg);
    cfg.N = N;
    cfg.T = T;
    cfg.times = times;
    cfg.obs_first = first;
    cfg.y = y;
    cfg.sigma = sg;
    cfg.aux = aux;
    cfg.family = fam;
    cfg.var = var;
    cfg.ptrans = tr;
    cfg.prior = prior;
    cfg.param_move = &sl_param_move_kernel;
    cfg.move.kernel_scale = 1.0;
    cfg.move.min_ess = SL_KERNEL_MIN_ESS;
    cfg.resampler = &sl_resampler_systematic;
    cfg.threshold = 0.5;
    cfg.seed = 21;
    /* 0: span, 1 thread; 1: stepped, 1 thread; 2: span, 2 threads;
     * 3: stepped, 2 threads */
    /* zeroed: rows a run does not summarise compare equal */
    memset(mean, 0, sizeof mean);
    models[0] = &counted;
    models[1] = &plain;
    models[2] = &counted;
    models[3] = &plain;
    for (r = 0; r < 4; r++) {
        size_t calls0 = span_calls;
        X[r] = ck_malloc(NS * N * sizeof(double));
        P[r] = ck_malloc(NP * N * sizeof(double));
        w[r] = ck_malloc(N * sizeof(double));
        st = span_run(&cfg, models[r], r < 2 ? 1 : 2, X0, P0, X[r], P[r], w[r], mean[r], ess[r],
                      logz[r], &err);
        CHECK(st == SL_OK, "flood run %lu: %s", (unsigned long)r, err.message);
        if (r == 0)
            CHECK(span_calls - calls0 == T * 5 * 2,
                  "1 thread: each interval in 2 spans for each of 5 chunks (%lu calls)",
                  (unsigned long)(span_calls - calls0));
        if (r == 1 || r == 3)
            CHECK(span_calls == calls0, "the stepped model takes no span");
        if (r == 2)
            CHECK(span_calls > calls0, "2 threads: spans taken (%lu calls)",
                  (unsigned long)(span_calls - calls0));
    }
    for (r = 1; r < 4; r++)
        CHECK(same(X[r], X[0], NS * N * sizeof(double)) &&
                  same(P[r], P[0], NP * N * sizeof(double)) &&
                  same(w[r], w[0], N * sizeof(double)) &&
                  same(mean[r], mean[0], sizeof mean[0]) && same(ess[r], ess[0], sizeof ess[0]) &&
                  same(logz[r], logz[0], sizeof logz[0]),
              "flood run %lu (%s, %d thread(s)) gives the bits of the 1-thread span run",
              (unsigned long)r, r % 2 ? "stepped" : "span", r < 2 ? 1 : 2);
    CHECK(ess[0][0] > 10 && ess[0][0] < N, "the observations weigh the members (ESS %g)",
          ess[0][0]);

    /* a poll that stops: honoured after the first span */
    {
        size_t calls0 = span_calls;
        cfg.poll = stop_at_once;
        cfg.poll_ctx = &polls;
        st = span_run(&cfg, &counted, 1, X0, P0, X[0], P[0], w[0], mean[0], ess[0], logz[0],
                      &err);
        CHECK(st == SL_EINTERRUPT && polls == 1 && span_calls - calls0 == 1,
              "a stopping poll ends the run after one span (status %d, %lu polls, %lu spans)",
              (int)st, (unsigned long)polls, (unsigned long)(span_calls - calls0));
    }
    for (r = 0; r < 4; r++) {
        ck_free(X[r]);
        ck_free(P[r]);
        ck_free(w[r]);
    }
    ck_free(X0);
    ck_free(P0);
}

/* ------------------------------------------------------------ coupling */

/* One cycle of a run of cfg from X0 (n x N, no parameters) into X, with
 * the components' records in cess and clogz (n_comp entries). */
static sl_status run_once(const sl_pf_config *cfg, const double *X0, double *X,
                          double *cess, double *clogz, sl_error *err)
{
    const size_t n = cfg->model->n_state, N = cfg->N;
    double mean[2], ess, logz, rs, dg, sk, nf, infl, fl, P = 0, *w = zalloc(N, sizeof(double));
    sl_pf_output out;
    void *work = ck_malloc(sl_pf_workspace(cfg));
    sl_status st;
    memset(&out, 0, sizeof out);
    out.mean = mean;
    out.ess = &ess;
    out.logz = &logz;
    out.resampled = &rs;
    out.degenerate = &dg;
    out.skipped = &sk;
    out.nonfinite = &nf;
    out.inflation = &infl;
    out.floored = &fl;
    out.comp_ess = cess;
    out.comp_logz = clogz;
    memcpy(X, X0, n * N * sizeof(double));
    st = work != NULL && w != NULL ? sl_pf_run(cfg, X, &P, w, work, &out, err)
                                   : sl_fail(err, SL_ENOMEM, "nomemory", "test buffers");
    ck_free(work);
    ck_free(w);
    return st;
}

/* Weak coupling: every reason of its check, the analysis it runs, and a
 * cycle that observes component 0 only leaves component 1's rows exactly
 * as forecast (the run whose observation is missing), for the particle
 * filter and the ETKF, while component 0's rows move. */
static void check_coupling(void)
{
    enum { N = 300, T = 1 };
    const double A[4] = {0.8, -0.2, 0.3, 0.7}, L[4] = {0.5, 0.1, 0.0, 0.4};
    const double times[T] = {1.0};
    const sl_linear lin = {2, 0, A, NULL, NULL, L};
    const int comp[2] = {0, 1}, bad_comp[2] = {0, 2}, obs_comp[1] = {0}, bad_obs[1] = {-1};
    double *X0 = ck_malloc(2 * N * sizeof(double)), *Xa = ck_malloc(2 * N * sizeof(double)),
           *Xf = ck_malloc(2 * N * sizeof(double)), cess[2], clogz[2], yv = 0.9, ynan = NAN;
    sl_model md;
    sl_pf_config cfg, c;
    sl_enkf_config ec;
    obs_table o, om;
    sl_error err;
    size_t j, pass;
    CHECK(sl_linear_model(&md, &lin, 1.0, &err) == SL_OK, "linear model: %s", err.message);
    one_obs_per_cycle(&o, T, &yv, 0.3);
    one_obs_per_cycle(&om, T, &ynan, 0.3);
    base_config(&cfg, &md, N, T, times, &o);
    cfg.weak = 1;
    cfg.n_comp = 2;
    cfg.comp = comp;
    cfg.obs_comp = obs_comp;
    expect_ok(&cfg, "weak coupling");
    CHECK(sl_pf_analysis_of(&cfg) == &sl_analysis_pf_weak, "a weak particle filter runs pf_weak");
    CHECK(sl_pf_auto_move(&cfg) == &sl_param_move_random_walk,
          "the weak particle filter's default move is the random walk");
    c = cfg;
    c.comp = NULL;
    expect_fail(&c, SL_EINVAL, "badcoupling", "weak coupling without components");
    c = cfg;
    c.comp = bad_comp;
    expect_fail(&c, SL_EINVAL, "badcoupling", "a component out of range");
    c = cfg;
    c.obs_comp = bad_obs;
    expect_fail(&c, SL_EINVAL, "badcoupling", "an observation's component out of range");
    c = cfg;
    c.temper.ess = 0.5;
    c.temper.max_steps = 10;
    expect_fail(&c, SL_EINVAL, "badcoupling", "the weak particle filter with tempering");
    c = cfg;
    c.param_move = &sl_param_move_kernel;
    expect_fail(&c, SL_EINVAL, "badcoupling", "the weak particle filter with the kernel move");
    {
        /* a lag for all, or one per component within the window */
        const size_t lags[2] = {0, 1}, too_long[2] = {2, 1};
        c = cfg;
        c.lag = 1;
        expect_ok(&c, "the weak particle filter with a lag");
        c.comp_lag = lags;
        expect_ok(&c, "the weak particle filter with a lag per component");
        c.comp_lag = too_long;
        expect_fail(&c, SL_EINVAL, "badcoupling", "a component's lag beyond the window's");
    }
    {
        const size_t lags[2] = {0, 1};
        sl_enkf_config e1;
        memset(&e1, 0, sizeof e1);
        e1.method = SL_ENKF_ETKF;
        e1.inflation = 1.0;
        e1.threads = 1;
        c = cfg;
        c.enkf = &e1;
        c.lag = 1;
        expect_ok(&c, "the weak ETKF with a lag");
        c.comp_lag = lags;
        expect_fail(&c, SL_EINVAL, "badcoupling", "the weak ETKF with a lag per component");
    }
    c = cfg;
    c.wenkf = 1;
    expect_fail(&c, SL_EINVAL, "badcoupling", "the weighted ensemble Kalman filter, weak");
    memset(&ec, 0, sizeof ec);
    ec.method = SL_ENKF_ETKF;
    ec.inflation = 1.0;
    ec.threads = 1;
    c = cfg;
    c.enkf = &ec;
    c.adaptive_inflation = 1;
    c.inflation_max = 2.0;
    expect_fail(&c, SL_EINVAL, "badcoupling", "weak coupling with adaptive inflation");

    for (j = 0; j < N; j++) {
        sl_stream sm;
        sl_stream_init(&sm, 7, (uint32_t)j, 0, SL_PURPOSE_PRIOR);
        X0[2 * j] = sl_stream_normal(&sm);
        X0[2 * j + 1] = 1.0 + sl_stream_normal(&sm);
    }
    for (pass = 0; pass < 2; pass++) {
        const char *what = pass == 0 ? "pf" : "etkf";
        int moved = 0, kept = 1;
        c = cfg;
        c.enkf = pass == 1 ? &ec : NULL;
        CHECK(run_once(&c, X0, Xa, cess, clogz, &err) == SL_OK, "%s, weak: %s", what,
              err.message);
        c.y = om.y;
        CHECK(run_once(&c, X0, Xf, cess + 0, clogz + 0, &err) == SL_OK, "%s, forecast: %s",
              what, err.message);
        c.y = o.y;
        CHECK(run_once(&c, X0, Xa, cess, clogz, &err) == SL_OK, "%s, weak again: %s", what,
              err.message);
        for (j = 0; j < N; j++) {
            kept = kept && memcmp(Xa + 2 * j + 1, Xf + 2 * j + 1, sizeof(double)) == 0;
            moved = moved || Xa[2 * j] != Xf[2 * j];
        }
        CHECK(kept, "%s, weak: the unobserved component is the forecast, bit for bit", what);
        CHECK(moved, "%s, weak: the observed component moves", what);
        if (pass == 0) {
            CHECK(cess[0] > 1 && cess[0] <= N, "pf, weak: ESS of component 0 is %g", cess[0]);
            CHECK(isnan(cess[1]) && clogz[1] == 0.0,
                  "pf, weak: component 1 has no observation (ESS %g, log-evidence %g)", cess[1],
                  clogz[1]);
            CHECK(isfinite(clogz[0]) && clogz[0] < 0, "pf, weak: log-evidence %g", clogz[0]);
        }
    }
    ck_free(X0);
    ck_free(Xa);
    ck_free(Xf);
}

/* ------------------------------------------------------ summary rows */

/* The records a run with summary rows makes: means, quantiles, forecast
 * means and smoothed summaries (lag 2) of a two-state run with forcing. */
typedef struct {
    double mean[2 * 5], quant[2 * 3 * 5], fmean[2 * 5], smean[2 * 5], squant[2 * 3 * 5];
    double ess[5], logz[5], resampled[5], degenerate[5], skipped[5], nonfinite[5];
    double X[2 * 300], w[300], P[1];
} rows_run;

static sl_status run_rows(sl_pf_config *cfg, const double *X0, rows_run *r, sl_error *err)
{
    sl_pf_output out;
    void *work = ck_malloc(sl_pf_workspace(cfg));
    sl_status st;
    memset(&out, 0, sizeof out);
    out.mean = r->mean;
    out.quant = r->quant;
    out.fmean = r->fmean;
    out.smean = r->smean;
    out.squant = r->squant;
    out.ess = r->ess;
    out.logz = r->logz;
    out.resampled = r->resampled;
    out.degenerate = r->degenerate;
    out.skipped = r->skipped;
    out.nonfinite = r->nonfinite;
    memcpy(r->X, X0, sizeof r->X);
    st = sl_pf_run(cfg, r->X, r->P, r->w, work, &out, err);
    ck_free(work);
    return st;
}

/* The rows a run summarises: a summarised row's records are bit for bit
 * those of the run that summarises every row, the others are NaN, and
 * the ensemble is untouched; the row list is checked. */
static void check_summary_rows(void)
{
    enum { N = 300, T = 5, NT = 20 };
    const double times[T] = {1.0, 2.5, 3.0, 4.5, 6.0};
    const double probs[3] = {0.05, 0.5, 0.95};
    const size_t only1[1] = {1}, both[2] = {0, 1}, down[2] = {1, 0}, twice[2] = {0, 0},
                 past[1] = {2};
    double ft[NT], fv[NT], X0[2 * N];
    sl_model md;
    sl_pf_config cfg, c;
    obs_table o;
    sl_error err;
    static rows_run all, one, listed;
    sl_status s1, s2, s3;
    size_t j, k, l;
    int ok = 1, blank = 1;

    CHECK(sl_linear_model(&md, &lin2, 0.5, &err) == SL_OK, "model: %s", err.message);
    forcing_series(ft, fv, NT);
    two_state_obs(&o);
    base_config(&cfg, &md, N, T, times, &o);
    cfg.forcing.nt = NT;
    cfg.forcing.time = ft;
    cfg.forcing.value = fv;
    cfg.nq = 3;
    cfg.probs = probs;
    cfg.lag = 2;
    for (j = 0; j < 2 * N; j++) {
        sl_stream s;
        sl_stream_init(&s, 9u, (uint32_t)j, 0, SL_PURPOSE_PRIOR);
        X0[j] = 0.5 * sl_stream_normal(&s);
    }
    s1 = run_rows(&cfg, X0, &all, &err);
    c = cfg;
    c.summary_rows = only1;
    c.n_summary_rows = 1;
    s2 = run_rows(&c, X0, &one, &err);
    c.summary_rows = both;
    c.n_summary_rows = 2;
    s3 = run_rows(&c, X0, &listed, &err);
    CHECK(s1 == SL_OK && s2 == SL_OK && s3 == SL_OK, "summary-row runs: %s", err.message);
    if (s1 == SL_OK && s2 == SL_OK && s3 == SL_OK) {
        CHECK(same(&all, &listed, sizeof all), "every row listed: the run without a list");
        CHECK(same(all.X, one.X, sizeof all.X) && same(all.w, one.w, sizeof all.w) &&
              same(all.ess, one.ess, sizeof all.ess) && same(all.logz, one.logz, sizeof all.logz),
              "the ensemble does not depend on the rows summarised");
        for (k = 0; k < T; k++) {
            ok = ok && same(&all.mean[1 + 2 * k], &one.mean[1 + 2 * k], sizeof(double)) &&
                 same(&all.fmean[1 + 2 * k], &one.fmean[1 + 2 * k], sizeof(double)) &&
                 same(&all.smean[1 + 2 * k], &one.smean[1 + 2 * k], sizeof(double));
            blank = blank && isnan(one.mean[2 * k]) && isnan(one.fmean[2 * k]) &&
                    isnan(one.smean[2 * k]) && !isnan(all.mean[2 * k]);
            for (l = 0; l < 3; l++) {
                size_t at = 2 * l + 6 * k;
                ok = ok && same(&all.quant[at + 1], &one.quant[at + 1], sizeof(double)) &&
                     same(&all.squant[at + 1], &one.squant[at + 1], sizeof(double));
                blank = blank && isnan(one.quant[at]) && isnan(one.squant[at]);
            }
        }
        CHECK(ok, "a summarised row: bit for bit the run that summarises all");
        CHECK(blank, "a row not summarised: NaN in every record");
    }
    c = cfg;
    c.n_summary_rows = 2;
    c.summary_rows = down;
    expect_fail(&c, SL_EINVAL, "badconfig", "summary rows decreasing");
    c.summary_rows = twice;
    expect_fail(&c, SL_EINVAL, "badconfig", "a summary row twice");
    c.n_summary_rows = 1;
    c.summary_rows = past;
    expect_fail(&c, SL_EINVAL, "badconfig", "a summary row past the last");
    c.n_summary_rows = 0;
    expect_ok(&c, "no row summarised");
}

/* ------------------------------------------------- members' health */

/* sl_pfi_has_nonfinite against isfinite (C11 7.12.3.2) value by value: every
 * column length 0..19 (two blocks of eight, pairs and a last single
 * value), each of Inf, -Inf and NaN at every place, among
 * finite values at the extremes (DBL_MAX, -DBL_MAX, the smallest subnormal,
 * -0). */
static void check_nonfinite(void)
{
    const double fin[] = {1.5, DBL_MAX, -DBL_MAX, 4.9406564584124654e-324, -0.0,
                          -3.25, 0.0};
    const double bad[] = {HUGE_VAL, -HUGE_VAL, NAN};
    double x[19];
    size_t n, i, pos, b, nbad = 0;
    for (n = 0; n <= 19; n++) {
        for (i = 0; i < n; i++)
            x[i] = fin[(i + n) % 7];
        CHECK(sl_pfi_has_nonfinite(x, n) == 0, "finite column of %lu flagged",
              (unsigned long)n);
        for (pos = 0; pos < n; pos++)
            for (b = 0; b < 3; b++) {
                double keep = x[pos];
                int ref = 0;
                x[pos] = bad[b];
                for (i = 0; i < n; i++)
                    ref |= !isfinite(x[i]);
                if (sl_pfi_has_nonfinite(x, n) != ref)
                    nbad++;
                x[pos] = keep;
            }
    }
    CHECK(nbad == 0, "%lu columns with a non-finite value judged wrongly",
          (unsigned long)nbad);
}

/* The diversity record against its definitions written out directly:
 * distinct ids among the members of positive weight, counted by a search
 * of the earlier members (common practice), and the weighted standard
 * deviation sqrt(sum w (z - m)^2 / sum w), m = sum w z / sum w (handbook
 * formula, common practice), with long double sums. 3 parameters and
 * 11; ids with many repeats, zero weights. */
static void check_diversity(void)
{
    enum { N = 200 };
    const size_t ps[2] = {3, 11};
    size_t c;
    for (c = 0; c < 2; c++) {
        const size_t p = ps[c];
        sl_model md;
        sl_pf_config cfg;
        pf_buffers b;
        sl_pf_output out;
        uint32_t *id = ck_malloc(p * N * sizeof(uint32_t));
        double *Z = ck_malloc(p * N * sizeof(double)), w[N];
        double *distinct = ck_malloc(2 * p * sizeof(double));
        double *spread = ck_malloc(2 * p * sizeof(double));
        unsigned char *mark = ck_malloc(N);
        size_t i, j, l, bad_count = 0;
        double worst = 0.0;
        sl_stream s;
        if (id == NULL || Z == NULL || distinct == NULL || spread == NULL || mark == NULL) {
            CHECK(0, "memory");
            return;
        }
        memset(&md, 0, sizeof md);
        memset(&cfg, 0, sizeof cfg);
        memset(&b, 0, sizeof b);
        memset(&out, 0, sizeof out);
        md.n_param = p;
        cfg.model = &md;
        cfg.N = N;
        b.mark = mark;
        out.distinct = distinct;
        out.pspread = spread;
        sl_stream_init(&s, 77u, (uint32_t)c, 0u, SL_PURPOSE_USER);
        for (j = 0; j < N; j++) {
            w[j] = j % 7 == 3 ? 0.0 : sl_stream_uniform(&s);
            for (i = 0; i < p; i++) {
                /* parameter i repeats its values in runs of i + 1 */
                id[i + j * p] = (uint32_t)(j - j % (i + 1));
                Z[i + j * p] = sin(0.37 * (double)id[i + j * p]) + (double)i;
            }
        }
        sl_pfi_record_diversity(&cfg, &b, id, Z, w, &out, 1);
        for (i = 0; i < p; i++) {
            size_t count = 0;
            long double W = 0, m = 0, v = 0, sd;
            for (j = 0; j < N; j++) {
                int seen = 0;
                if (!(w[j] > 0))
                    continue;
                for (l = 0; l < j && !seen; l++)
                    seen = w[l] > 0 && id[i + l * p] == id[i + j * p];
                count += !seen;
                W += w[j];
                m += (long double)w[j] * Z[i + j * p];
            }
            m /= W;
            for (j = 0; j < N; j++)
                if (w[j] > 0)
                    v += (long double)w[j] * (Z[i + j * p] - m) * (Z[i + j * p] - m);
            sd = sqrtl(v / W);
            bad_count += distinct[i + p] != (double)count;
            if (fabs((double)((spread[i + p] - sd) / sd)) > worst)
                worst = fabs((double)((spread[i + p] - sd) / sd));
        }
        CHECK(bad_count == 0, "%lu parameters: distinct values counted wrongly for %lu",
              (unsigned long)p, (unsigned long)bad_count);
        CHECK(worst < 1e-13, "%lu parameters: weighted sd within 1e-13 of the formula (%.3g)",
              (unsigned long)p, worst);
        ck_free(id);
        ck_free(Z);
        ck_free(distinct);
        ck_free(spread);
        ck_free(mark);
    }
}

int main(void)
{
    check_nonfinite();
    check_diversity();
    check_resample_move();
    check_forcing_draws();
    check_span();
    check_linear_block();
    check_smc2_wenkf();
    check_worked_example();
    if (check_light_())
        printf("SKIP check_determinism: SL_CHECK_LIGHT (14 s of thread-count runs; "
               "make check and check-asan run it)\n");
    else
        check_determinism();
    check_forecast_region();
    check_forecast_chunks();
    check_gr4j_span();
    check_snapshot();
    check_errors();
    check_degenerate();
    check_resampling();
    check_workspace();
    check_operators();
    check_derived_summary();
    check_lag();
    check_lag_ancestors();
    check_coupling();
    check_summary_rows();
    CHECK_DONE("test_pf");
}
