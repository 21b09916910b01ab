/* test_smooth.c - particle smoothers: a genealogy traced by hand, backward
 * draws against the Gaussian densities of GSL, determinism across thread
 * counts and every error path. */
#include "check.h"
#include "sluice/rng.h"
#include "sluice/smooth.h"

#include <stdint.h>
#include <stdlib.h>
#include <gsl/gsl_math.h>
#include <gsl/gsl_randist.h>

static void *ws_for(const sl_smoother *type, const sl_smooth_config *cfg)
{
    size_t bytes = 0;
    sl_error err;
    sl_error_clear(&err);
    /* a failing query leaves no workspace: the run reports the reason */
    if (sl_smooth_workspace(type, cfg, &bytes, &err) != SL_OK)
        return NULL;
    return ck_malloc(bytes ? bytes : 1);
}

/* Run a smoother with its own workspace; returns the status. */
static sl_status run(const sl_smoother *type, const sl_smooth_config *cfg,
                     sl_smooth_output *out, sl_error *err)
{
    void *work = ws_for(type, cfg);
    sl_status st;
    sl_error_clear(err);
    st = sl_smooth_run(type, cfg, work, out, err);
    ck_free(work);
    return st;
}

static int stop_now(void *ctx, double fraction)
{
    (void)fraction;
    return ++*(int *)ctx >= 1;
}

/* A genealogy of N = 4 particles over T = 3 cycles, traced by hand. */
static void test_genealogy_by_hand(void)
{
    enum { N = 4, T = 3 };
    /* cycle 0: the population the forecast to cycle 1 starts from is
     * particles (2, 2, 0, 3); cycle 1: (1, 1, 3, 0); cycle 2 unused */
    const uint32_t anc[N * T] = {2, 2, 0, 3, 1, 1, 3, 0, 0, 1, 2, 3};
    /* traced by hand: final j -> (cycle 0, cycle 1, cycle 2)
     * 0 -> (2, 1, 0), 1 -> (2, 1, 1), 2 -> (3, 3, 2), 3 -> (2, 0, 3) */
    const uint32_t want[N * T] = {2, 2, 3, 2, 1, 1, 3, 0, 0, 1, 2, 3};
    double X[N * T], P[N * T], w[N * T], mean[T], quant[2 * T], pmean[T],
        pquant[2 * T], distinct[T];
    const double probs[2] = {0.5, 0.8};
    uint32_t index[N * T];
    sl_smooth_config cfg;
    sl_smooth_output out;
    sl_error err;
    size_t i, s;
    for (s = 0; s < T; s++)
        for (i = 0; i < N; i++) {
            X[i + s * N] = 10.0 * (double)s + (double)i;
            P[i + s * N] = 100.0 + 10.0 * (double)s + (double)i;
            w[i + s * N] = 0.25;
        }
    /* final weights 0.1 .. 0.4, given unnormalised */
    for (i = 0; i < N; i++)
        w[i + 2 * N] = (double)(i + 1);
    memset(&cfg, 0, sizeof cfg);
    cfg.n = 1;
    cfg.p = 1;
    cfg.N = N;
    cfg.T = T;
    cfg.X = X;
    cfg.P = P;
    cfg.w = w;
    cfg.nq = 2;
    cfg.probs = probs;
    cfg.threads = 2;
    cfg.ancestors = anc;
    memset(&out, 0, sizeof out);
    out.mean = mean;
    out.quant = quant;
    out.pmean = pmean;
    out.pquant = pquant;
    out.index = index;
    out.distinct = distinct;
    CHECK(run(&sl_smoother_genealogy, &cfg, &out, &err) == SL_OK, "genealogy: %s",
          err.message);
    CHECK(memcmp(index, want, sizeof want) == 0, "traced indices differ from the hand trace");
    /* distinct ancestors by hand: {2, 3}, {0, 1, 3}, all four */
    CHECK_CLOSE(distinct[0], 2, 0, "distinct at cycle 1");
    CHECK_CLOSE(distinct[1], 3, 0, "distinct at cycle 2");
    CHECK_CLOSE(distinct[2], 4, 0, "distinct at cycle 3");
    /* means by hand: 0.1*2 + 0.2*2 + 0.3*3 + 0.4*2 = 2.3,
     * 0.1*11 + 0.2*11 + 0.3*13 + 0.4*10 = 11.2, 20 + 0.2 + 0.6 + 1.2 = 22 */
    CHECK_CLOSE(mean[0], 2.3, 1e-14, "smoothed mean, cycle 1");
    CHECK_CLOSE(mean[1], 11.2, 1e-14, "smoothed mean, cycle 2");
    CHECK_CLOSE(mean[2], 22.0, 1e-14, "smoothed mean, cycle 3");
    CHECK_CLOSE(pmean[0], 102.3, 1e-12, "smoothed parameter mean, cycle 1");
    /* cycle 1: mass 0.7 on 2 and 0.3 on 3: median 2, 0.8-quantile 3;
     * cycle 2: 0.4 on 10, 0.3 on 11, 0.3 on 13: median 11, 0.8 -> 13 */
    CHECK_CLOSE(quant[0], 2, 0, "median, cycle 1");
    CHECK_CLOSE(quant[1], 3, 0, "0.8-quantile, cycle 1");
    CHECK_CLOSE(quant[2], 11, 0, "median, cycle 2");
    CHECK_CLOSE(quant[3], 13, 0, "0.8-quantile, cycle 2");
    CHECK_CLOSE(pquant[0], 102, 0, "parameter median, cycle 1");

    /* a particle of zero final weight may be non-finite; one of positive
     * weight may not */
    w[0 + 2 * N] = 0;
    X[0 + 2 * N] = NAN;
    CHECK(run(&sl_smoother_genealogy, &cfg, &out, &err) == SL_OK, "NaN at zero weight: %s",
          err.message);
    w[0 + 2 * N] = 1;
    CHECK(run(&sl_smoother_genealogy, &cfg, &out, &err) == SL_ENUMERIC &&
              strcmp(err.reason, "badstate") == 0, "NaN at positive weight: %s", err.reason);
    X[0 + 2 * N] = 20;

    /* errors */
    {
        uint32_t bad[N * T];
        memcpy(bad, anc, sizeof bad);
        bad[5] = N;
        cfg.ancestors = bad;
        CHECK(run(&sl_smoother_genealogy, &cfg, &out, &err) == SL_EINVAL &&
                  strcmp(err.reason, "badancestor") == 0, "ancestor out of range: %s",
              err.reason);
        cfg.ancestors = anc;
    }
    {
        double keep = w[1 + 2 * N];
        w[1 + 2 * N] = -1;
        CHECK(run(&sl_smoother_genealogy, &cfg, &out, &err) == SL_EINVAL &&
                  strcmp(err.reason, "badweight") == 0, "negative weight: %s", err.reason);
        w[1 + 2 * N] = keep;
    }
    {
        double keep[N];
        memcpy(keep, w + 2 * N, sizeof keep);
        memset(w + 2 * N, 0, sizeof keep);
        CHECK(run(&sl_smoother_genealogy, &cfg, &out, &err) == SL_EINVAL &&
                  strcmp(err.reason, "zeroweights") == 0, "zero weights: %s", err.reason);
        memcpy(w + 2 * N, keep, sizeof keep);
    }
    {
        const double badp[2] = {0.5, 1.5};
        cfg.probs = badp;
        CHECK(run(&sl_smoother_genealogy, &cfg, &out, &err) == SL_EINVAL &&
                  strcmp(err.reason, "badprobs") == 0, "bad level: %s", err.reason);
        cfg.probs = probs;
    }
    {
        int calls = 0;
        cfg.poll = stop_now;
        cfg.poll_ctx = &calls;
        CHECK(run(&sl_smoother_genealogy, &cfg, &out, &err) == SL_EINTERRUPT &&
                  strcmp(err.reason, "interrupted") == 0, "interrupt: %s", err.reason);
        cfg.poll = NULL;
    }
    {
        size_t bytes = 1;
        sl_smooth_config big = cfg;
        big.N = SL_SMOOTH_MAX;
        big.T = SL_SMOOTH_MAX;
        sl_error_clear(&err);
        CHECK(sl_smooth_workspace(&sl_smoother_genealogy, &big, &bytes, &err) == SL_ENOMEM &&
                  bytes == 0, "absurd size: %s", err.reason);
        big.N = 0;
        CHECK(sl_smooth_workspace(&sl_smoother_genealogy, &big, &bytes, &err) == SL_EINVAL &&
                  strcmp(err.reason, "badsize") == 0, "no particles: %s", err.reason);
    }
    CHECK(sl_smoother_find("genealogy") == &sl_smoother_genealogy, "find genealogy");
    CHECK(sl_smoother_find("ffbsi") == &sl_smoother_ffbsi, "find ffbsi");
    CHECK(sl_smoother_find("bogus") == NULL && sl_smoother_find(NULL) == NULL, "find bogus");

    /* no resampling anywhere: every particle is its own ancestor */
    {
        const uint32_t ident[N * T] = {0, 1, 2, 3, 0, 1, 2, 3, 0, 1, 2, 3};
        cfg.ancestors = ident;
        CHECK(run(&sl_smoother_genealogy, &cfg, &out, &err) == SL_OK, "identity: %s",
              err.message);
        CHECK(memcmp(index, ident, sizeof ident) == 0 && distinct[0] == N,
              "identity genealogy");
    }
}

/* Backward simulation with one cycle back: the frequencies of the draws
 * against w_i N(x; F_i, Sigma) / sum, the density from GSL. */
static void test_ffbsi_probabilities(unsigned tries)
{
    enum { N = 3, T = 2, M = 200000 };
    static uint32_t index[M * T];
    double X[N * T], w[N * T], F[N], L[1] = {1.0}, mean[T], quant[T], distinct[T];
    const double probs[1] = {0.5};
    double p[N], sum = 0.0;
    size_t cnt[N] = {0, 0, 0}, i, m, last_ok = 0;
    sl_smooth_config cfg;
    sl_smooth_output out;
    sl_error err;
    for (i = 0; i < N; i++) {
        X[i] = (double)i - 0.7;       /* particles at cycle 0 */
        F[i] = 0.9 * X[i] + 0.2;      /* their transition means */
        X[i + N] = 5.0 + (double)i;   /* cycle 1 */
    }
    X[1 + N] = 0.35; /* the only particle with final weight */
    w[0] = 0.2; w[1] = 0.3; w[2] = 0.5;
    w[N] = 0; w[1 + N] = 1; w[2 + N] = 0;
    for (i = 0; i < N; i++) {
        /* Godsill, Doucet & West (2004): backward weight w_i p(x' | x_i) */
        p[i] = w[i] * gsl_ran_gaussian_pdf(X[1 + N] - F[i], 1.0);
        sum += p[i];
    }
    memset(&cfg, 0, sizeof cfg);
    cfg.n = 1;
    cfg.N = N;
    cfg.T = T;
    cfg.X = X;
    cfg.w = w;
    cfg.nq = 1;
    cfg.probs = probs;
    cfg.threads = 2;
    cfg.M = M;
    cfg.F = F;
    cfg.L = L;
    cfg.seed = 99;
    cfg.tries = tries;
    memset(&out, 0, sizeof out);
    out.mean = mean;
    out.quant = quant;
    out.index = index;
    out.distinct = distinct;
    CHECK(run(&sl_smoother_ffbsi, &cfg, &out, &err) == SL_OK, "ffbsi: %s", err.message);
    for (m = 0; m < M; m++) {
        last_ok += index[m + M] == 1;
        if (index[m] < N)
            cnt[index[m]]++;
    }
    CHECK(last_ok == M, "the final draw picks the only weighted particle");
    for (i = 0; i < N; i++) {
        double pi = p[i] / sum, f = (double)cnt[i] / M, se = sqrt(pi * (1 - pi) / M);
        /* 5 standard errors of a binomial frequency */
        CHECK(fabs(f - pi) < 5 * se, "tries %u: frequency of particle %lu %.5f vs %.5f (se %.5f)",
              tries, (unsigned long)i, f, pi, se);
    }
    if (tries == 0)
        CHECK_CLOSE(out.evaluations, (double)N * M, 0, "exact sum: N M evaluations");
    else
        CHECK(out.evaluations < (double)N * M && out.fallbacks < M,
              "rejection: %g evaluations, %g fallbacks", out.evaluations, out.fallbacks);
    /* the smoothed mean at cycle 0 is the mean of the draws */
    {
        double mm = 0;
        for (i = 0; i < N; i++)
            mm += X[i] * (double)cnt[i] / M;
        CHECK_CLOSE(mean[0], mm, 1e-12, "smoothed mean = mean of the trajectories");
    }
}

/* Every particle far from the final state (backward weights below
 * 1e-300 of the largest filter weight): the draw is redone in log space,
 * with the same probabilities as w_i N(x; F_i, 1) normalised; the
 * reference takes the logs of GSL's densities' ratios by hand. */
static void test_ffbsi_far(void)
{
    enum { N = 3, T = 2, M = 100000 };
    static uint32_t index[M * T];
    double X[N * T], w[N * T], F[N], L[1] = {1.0}, mean[T], quant[T], distinct[T];
    const double probs[1] = {0.5};
    double lp[N], p[N], mx = -HUGE_VAL, sum = 0, xs = 40.0;
    size_t cnt[N] = {0, 0, 0}, i, m;
    sl_smooth_config cfg;
    sl_smooth_output out;
    sl_error err;
    for (i = 0; i < N; i++) {
        X[i] = (double)i;
        F[i] = 0.02 * (double)i; /* 0, 0.02, 0.04: all about 40 sd away */
        X[i + N] = xs;
        w[i] = 0.2 + 0.3 * (double)i;
        w[i + N] = 1;
        /* log of w_i N(xs; F_i, 1): log w_i - (xs - F_i)^2 / 2 - log sqrt(2 pi) */
        lp[i] = log(w[i]) - 0.5 * (xs - F[i]) * (xs - F[i]);
        if (lp[i] > mx)
            mx = lp[i];
    }
    /* the reference density itself: GSL's at a nearby point, shifted */
    CHECK_REL(log(gsl_ran_gaussian_pdf(3.0, 1.0)), -4.5 - 0.5 * log(2 * M_PI), 1e-14,
              "log density by hand vs GSL");
    for (i = 0; i < N; i++)
        sum += p[i] = exp(lp[i] - mx);
    memset(&cfg, 0, sizeof cfg);
    cfg.n = 1;
    cfg.N = N;
    cfg.T = T;
    cfg.X = X;
    cfg.w = w;
    cfg.nq = 1;
    cfg.probs = probs;
    cfg.threads = 2;
    cfg.M = M;
    cfg.F = F;
    cfg.L = L;
    cfg.seed = 17;
    memset(&out, 0, sizeof out);
    out.mean = mean;
    out.quant = quant;
    out.index = index;
    out.distinct = distinct;
    CHECK(run(&sl_smoother_ffbsi, &cfg, &out, &err) == SL_OK, "far: %s", err.message);
    for (m = 0; m < M; m++)
        if (index[m] < N)
            cnt[index[m]]++;
    for (i = 0; i < N; i++) {
        double pi = p[i] / sum, f = (double)cnt[i] / M, se = sqrt(pi * (1 - pi) / M);
        CHECK(fabs(f - pi) < 5 * se + 1e-12, "far: frequency of particle %lu %.5f vs %.5f",
              (unsigned long)i, f, pi);
    }
}

/* Two states with a full covariance: the backward probabilities against
 * GSL's bivariate Gaussian density. */
static void test_ffbsi_full_covariance(void)
{
    enum { N = 4, T = 2, M = 200000 };
    static uint32_t index[M * T];
    /* Sigma = [1 0.8; 0.8 1] = L L' with L = [1 0; 0.8 0.6] */
    const double L[4] = {1.0, 0.8, 0.0, 0.6};
    const double Fm[2 * N] = {0.1, 0.2, 0.9, -0.4, -0.6, 0.5, 0.3, 0.8};
    double X[2 * N * T], w[N * T], mean[2 * T], quant[2 * T], distinct[T];
    const double probs[1] = {0.5};
    double p[N], sum = 0, xs = 0.4, ys = 0.6;
    size_t cnt[N] = {0, 0, 0, 0}, i, m;
    sl_smooth_config cfg;
    sl_smooth_output out;
    sl_error err;
    for (i = 0; i < 2 * N * T; i++)
        X[i] = (double)i;
    X[0 + 2 * N] = xs;
    X[1 + 2 * N] = ys;
    for (i = 0; i < N; i++) {
        w[i] = 0.1 * (double)(i + 1);
        w[i + N] = i == 0 ? 1.0 : 0.0;
        p[i] = w[i] * gsl_ran_bivariate_gaussian_pdf(xs - Fm[2 * i], ys - Fm[2 * i + 1],
                                                     1.0, 1.0, 0.8);
        sum += p[i];
    }
    memset(&cfg, 0, sizeof cfg);
    cfg.n = 2;
    cfg.N = N;
    cfg.T = T;
    cfg.X = X;
    cfg.w = w;
    cfg.nq = 1;
    cfg.probs = probs;
    cfg.threads = 2;
    cfg.M = M;
    cfg.F = Fm;
    cfg.L = L;
    cfg.seed = 7;
    memset(&out, 0, sizeof out);
    out.mean = mean;
    out.quant = quant;
    out.index = index;
    out.distinct = distinct;
    CHECK(run(&sl_smoother_ffbsi, &cfg, &out, &err) == SL_OK, "ffbsi 2-D: %s", err.message);
    for (m = 0; m < M; m++)
        if (index[m] < N)
            cnt[index[m]]++;
    for (i = 0; i < N; i++) {
        double pi = p[i] / sum, f = (double)cnt[i] / M, se = sqrt(pi * (1 - pi) / M);
        CHECK(fabs(f - pi) < 5 * se, "2-D: frequency of particle %lu %.5f vs %.5f (se %.5f)",
              (unsigned long)i, f, pi, se);
    }
}

/* A near-degenerate density: only one particle of positive weight can
 * reach the final state, and every draw picks it. */
static void test_ffbsi_degenerate(void)
{
    enum { N = 5, T = 2, M = 64 };
    uint32_t index[M * T];
    double X[N * T], w[N * T], F[N], L[1] = {1e-3}, mean[T], quant[T], distinct[T],
        traj[M * T];
    const double probs[1] = {0.5};
    sl_smooth_config cfg;
    sl_smooth_output out;
    sl_error err;
    size_t i, m;
    unsigned tries;
    for (i = 0; i < N; i++) {
        X[i] = (double)i;
        F[i] = (double)i;
        w[i] = 0.2;
        X[i + N] = 10.0 + (double)i;
        w[i + N] = 0;
    }
    X[2 + N] = 3.0; /* the final state: reachable from particle 3 only */
    w[2 + N] = 1;
    /* particle 4 would be closer, but has zero weight at cycle 0 */
    F[4] = 3.0;
    w[4] = 0;
    memset(&cfg, 0, sizeof cfg);
    cfg.n = 1;
    cfg.N = N;
    cfg.T = T;
    cfg.X = X;
    cfg.w = w;
    cfg.nq = 1;
    cfg.probs = probs;
    cfg.threads = 1;
    cfg.M = M;
    cfg.F = F;
    cfg.L = L;
    cfg.seed = 3;
    F[3] = 3.0 + 2e-4; /* 0.2 sd away */
    memset(&out, 0, sizeof out);
    out.mean = mean;
    out.quant = quant;
    out.index = index;
    out.distinct = distinct;
    out.traj = traj;
    for (tries = 0; tries <= 4; tries += 4) {
        size_t good = 0;
        cfg.tries = tries;
        CHECK(run(&sl_smoother_ffbsi, &cfg, &out, &err) == SL_OK, "degenerate: %s",
              err.message);
        for (m = 0; m < M; m++)
            good += index[m] == 3 && index[m + M] == 2 && traj[m] == 3.0 && traj[m + M] == 3.0;
        CHECK(good == M, "tries %u: %lu of %d trajectories through particle 4 then 3",
              tries, (unsigned long)good, M);
        CHECK_CLOSE(mean[0], 3.0, 0, "mean at cycle 1");
        CHECK_CLOSE(distinct[0], 1, 0, "one distinct particle");
    }
    /* no particle of positive weight has a finite transition: nocandidate */
    for (i = 0; i < N; i++)
        if (w[i] > 0)
            F[i] = NAN;
    cfg.tries = 0;
    CHECK(run(&sl_smoother_ffbsi, &cfg, &out, &err) == SL_EDEGENERATE &&
              strcmp(err.reason, "nocandidate") == 0, "no candidate: %s", err.reason);
    cfg.tries = 3;
    CHECK(run(&sl_smoother_ffbsi, &cfg, &out, &err) == SL_EDEGENERATE &&
              strcmp(err.reason, "nocandidate") == 0, "no candidate with rejection: %s",
          err.reason);
    for (i = 0; i < N; i++)
        F[i] = (double)i;
    L[0] = 0;
    CHECK(run(&sl_smoother_ffbsi, &cfg, &out, &err) == SL_EINVAL &&
              strcmp(err.reason, "badfactor") == 0, "zero factor: %s", err.reason);
    L[0] = 1;
    X[1] = INFINITY;
    CHECK(run(&sl_smoother_ffbsi, &cfg, &out, &err) == SL_ENUMERIC &&
              strcmp(err.reason, "badstate") == 0, "infinite state at positive weight: %s",
          err.reason);
    X[1] = 1;
    {
        int calls = 0;
        cfg.poll = stop_now;
        cfg.poll_ctx = &calls;
        CHECK(run(&sl_smoother_ffbsi, &cfg, &out, &err) == SL_EINTERRUPT &&
                  strcmp(err.reason, "interrupted") == 0, "ffbsi interrupt: %s", err.reason);
        cfg.poll = NULL;
    }
    {
        /* a single cycle: draws from the filter weights, no transition */
        sl_smooth_config one = cfg;
        one.T = 1;
        one.X = X + N;
        one.w = w + N;
        one.F = NULL;
        one.L = NULL;
        CHECK(run(&sl_smoother_ffbsi, &one, &out, &err) == SL_OK && index[0] == 2 &&
                  mean[0] == 3.0 && out.evaluations == 0, "one cycle: %s", err.message);
    }
    cfg.M = 0;
    CHECK(run(&sl_smoother_ffbsi, &cfg, &out, &err) == SL_EINVAL &&
              strcmp(err.reason, "badsize") == 0, "no trajectories: %s", err.reason);
    cfg.M = M;
    cfg.F = NULL;
    CHECK(run(&sl_smoother_ffbsi, &cfg, &out, &err) == SL_EINVAL &&
              strcmp(err.reason, "badconfig") == 0, "no transition means: %s", err.reason);
}

/* The same results with 1, 2 and 3 threads. */
static void test_threads(void)
{
    enum { n = 2, p = 1, N = 500, T = 20, M = 300, NQ = 3 };
    static double X[n * N * T], P[p * N * T], w[N * T], F[n * N * (T - 1)],
        L[n * n * (T - 1)];
    static uint32_t anc[N * T];
    static uint32_t idx[3][N * T];
    static double mean[3][n * T], quant[3][n * NQ * T], pmean[3][p * T],
        pquant[3][p * NQ * T], distinct[3][T], traj[3][n * M * T];
    const double probs[NQ] = {0.05, 0.5, 0.95};
    sl_stream rs;
    sl_smooth_config cfg;
    sl_smooth_output out;
    sl_error err;
    size_t i, s;
    int method, t, tries;
    sl_stream_init(&rs, 42, 0, 0, SL_PURPOSE_USER);
    for (i = 0; i < n * N * T; i++)
        X[i] = sl_stream_normal(&rs);
    for (i = 0; i < p * N * T; i++)
        P[i] = 2.0 + sl_stream_normal(&rs);
    for (i = 0; i < N * T; i++) {
        w[i] = sl_stream_uniform(&rs);
        anc[i] = (uint32_t)(sl_stream_u64(&rs) % N);
    }
    for (s = 0; s + 1 < T; s++) {
        for (i = 0; i < n * N; i++)
            F[i + s * n * N] = 0.8 * X[i + s * n * N];
        L[s * 4 + 0] = 0.7;
        L[s * 4 + 1] = 0.2;
        L[s * 4 + 2] = 0.0;
        L[s * 4 + 3] = 0.5;
    }
    memset(&cfg, 0, sizeof cfg);
    cfg.n = n;
    cfg.p = p;
    cfg.N = N;
    cfg.T = T;
    cfg.X = X;
    cfg.P = P;
    cfg.w = w;
    cfg.nq = NQ;
    cfg.probs = probs;
    cfg.ancestors = anc;
    cfg.M = M;
    cfg.F = F;
    cfg.L = L;
    cfg.seed = 123456789;
    for (method = 0; method < 2; method++)
        for (tries = 0; tries <= (method ? 3 : 0); tries += 3) {
            const sl_smoother *type = method ? &sl_smoother_ffbsi : &sl_smoother_genealogy;
            size_t K = method ? M : N;
            cfg.tries = (unsigned)tries;
            for (t = 0; t < 3; t++) {
                cfg.threads = t + 1;
                memset(&out, 0, sizeof out);
                out.mean = mean[t];
                out.quant = quant[t];
                out.pmean = pmean[t];
                out.pquant = pquant[t];
                out.index = idx[t];
                out.distinct = distinct[t];
                out.traj = method ? traj[t] : NULL;
                CHECK(run(type, &cfg, &out, &err) == SL_OK, "%s, %d threads: %s", type->name,
                      t + 1, err.message);
            }
            for (t = 1; t < 3; t++) {
                CHECK(memcmp(idx[0], idx[t], K * T * sizeof(uint32_t)) == 0 &&
                          memcmp(mean[0], mean[t], sizeof mean[0]) == 0 &&
                          memcmp(quant[0], quant[t], sizeof quant[0]) == 0 &&
                          memcmp(pmean[0], pmean[t], sizeof pmean[0]) == 0 &&
                          memcmp(pquant[0], pquant[t], sizeof pquant[0]) == 0 &&
                          memcmp(distinct[0], distinct[t], sizeof distinct[0]) == 0,
                      "%s (tries %d): 1 and %d threads differ", type->name, tries, t + 1);
                if (method)
                    CHECK(memcmp(traj[0], traj[t], sizeof traj[0]) == 0,
                          "trajectories: 1 and %d threads differ", t + 1);
            }
            /* genealogy from random ancestors collapses going back */
            if (!method)
                CHECK(distinct[0][0] < distinct[0][T - 1] && distinct[0][T - 1] == N,
                      "distinct ancestors %g at the first cycle, %g at the last",
                      distinct[0][0], distinct[0][T - 1]);
        }
}

/* The default thread count (threads_auto): one thread while the
 * estimated work (15 ns per member, cycle and row for the genealogy,
 * 3 ns per member, trajectory, cycle and state for backward simulation)
 * is below SL_SMOOTH_THREAD_WORK, the most given above it; without
 * threads_auto the count as given, never more than the items. The rule
 * is the one smooth.h states; its edges are checked on both sides. */
static void test_thread_count(void)
{
    sl_smooth_config cfg;
    memset(&cfg, 0, sizeof cfg);
    cfg.n = 1;
    cfg.p = 1;
    cfg.N = 1000;
    cfg.T = 333;       /* 15 x 1000 x 333 x 2 = 9.99e6 < 1e7 */
    cfg.M = 100;
    cfg.threads = 4;
    cfg.threads_auto = 1;
    CHECK(sl_smooth_thread_count(&sl_smoother_genealogy, &cfg) == 1,
          "genealogy, 9.99e6 ns of work: %d threads", sl_smooth_thread_count(&sl_smoother_genealogy, &cfg));
    cfg.T = 334;       /* 1.002e7 */
    CHECK(sl_smooth_thread_count(&sl_smoother_genealogy, &cfg) == 4,
          "genealogy, 1.002e7 ns of work: %d threads", sl_smooth_thread_count(&sl_smoother_genealogy, &cfg));
    cfg.T = 33;        /* ffbsi: 3 x 1000 x 100 x 33 x 1 = 9.9e6 */
    CHECK(sl_smooth_thread_count(&sl_smoother_ffbsi, &cfg) == 1,
          "ffbsi, 9.9e6 ns of work: %d threads", sl_smooth_thread_count(&sl_smoother_ffbsi, &cfg));
    cfg.T = 34;        /* 1.02e7 */
    CHECK(sl_smooth_thread_count(&sl_smoother_ffbsi, &cfg) == 4,
          "ffbsi, 1.02e7 ns of work: %d threads", sl_smooth_thread_count(&sl_smoother_ffbsi, &cfg));
    cfg.threads_auto = 0;
    cfg.T = 2;
    CHECK(sl_smooth_thread_count(&sl_smoother_genealogy, &cfg) == 4,
          "threads given: %d", sl_smooth_thread_count(&sl_smoother_genealogy, &cfg));
    cfg.N = 3;
    CHECK(sl_smooth_thread_count(&sl_smoother_genealogy, &cfg) == 3,
          "threads given, 3 particles and 2 cycles: %d",
          sl_smooth_thread_count(&sl_smoother_genealogy, &cfg));
}

int main(void)
{
    test_genealogy_by_hand();
    test_ffbsi_probabilities(0);
    test_ffbsi_probabilities(5);
    test_ffbsi_far();
    test_ffbsi_full_covariance();
    test_ffbsi_degenerate();
    test_threads();
    test_thread_count();
    CHECK_DONE("test_smooth");
}
