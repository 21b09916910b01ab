/* test_param_move.c - the parameter moves: table, settings, kernel move. */
#include <stdlib.h>

#include "check.h"
#include "sluice/param_move.h"
#include "sluice/resample.h"
#include "sluice/rng.h"

#define NMAX 40000

static double Z[2 * NMAX], Zr[2 * NMAX], w[NMAX], rwork[4 * NMAX];
static uint32_t anc[NMAX];

static void test_table(void)
{
    const char *names[] = {"kernel", "fixed", "random_walk", "liu_west", "resample_move"};
    size_t i;
    for (i = 0; i < 5; i++) {
        const sl_param_mover *m = sl_param_mover_find(names[i]);
        CHECK(m != NULL && strcmp(m->name, names[i]) == 0, "find %s", names[i]);
        CHECK(sl_param_mover_at(i) == m, "the table holds %s at %lu", names[i],
              (unsigned long)i);
    }
    CHECK(sl_param_mover_at(5) == NULL, "the table has five moves");
    CHECK(sl_param_move_resample_move.replay && !sl_param_move_kernel.replay,
          "only resample_move re-runs paths");
    CHECK(sl_param_mover_find("jump") == NULL, "unknown name");
    CHECK(sl_param_mover_find(NULL) == NULL, "NULL name");
    CHECK(sl_param_mover_find("Kernel") == NULL, "names are case-sensitive");
    CHECK(sl_param_move_kernel.when == SL_MOVE_AT_RESAMPLE, "the kernel acts at resampling");
    CHECK(sl_param_move_liu_west.when == SL_MOVE_EACH_CYCLE, "Liu-West acts every cycle");
    CHECK(sl_param_move_fixed.when == SL_MOVE_NEVER, "fixed never moves");
}

static void test_check(void)
{
    sl_param_move_opts o;
    sl_error err;
    double step[2] = {0.1, -1.0};
    double bad[] = {0.0, -1.0, NAN, HUGE_VAL};
    size_t i;
    memset(&o, 0, sizeof o);
    o.kernel_scale = 1.0;
    o.min_ess = SL_KERNEL_MIN_ESS;
    o.lw_delta = 0.98;
    CHECK(sl_param_move_kernel.check(&o, 2, &err) == SL_OK, "kernel, scale 1");
    for (i = 0; i < 4; i++) {
        o.kernel_scale = bad[i];
        CHECK(sl_param_move_kernel.check(&o, 2, &err) == SL_EINVAL &&
                  strcmp(err.reason, "badconfig") == 0,
              "kernel scale %g is refused", bad[i]);
    }
    o.kernel_scale = 1.0;
    o.min_ess = -1.0;
    CHECK(sl_param_move_kernel.check(&o, 2, &err) == SL_EINVAL, "negative smallest ESS");
    o.min_ess = NAN;
    CHECK(sl_param_move_kernel.check(&o, 2, &err) == SL_EINVAL, "NaN smallest ESS");
    o.step = step;
    CHECK(sl_param_move_random_walk.check(&o, 1, &err) == SL_OK, "step 0.1");
    CHECK(sl_param_move_random_walk.check(&o, 2, &err) == SL_EINVAL, "step -1");
    o.step = NULL;
    CHECK(sl_param_move_random_walk.check(&o, 2, &err) == SL_EINVAL, "no steps");
    CHECK(sl_param_move_fixed.check(&o, 2, &err) == SL_OK, "fixed takes anything");
}

static void test_bandwidth(void)
{
    /* Musso, Oudjane & Le Gland (2001): h = A N^(-1/(d+4)), A =
     * (4/(d+2))^(1/(d+4)). For d = 1 A = (4/3)^(1/5) = 1.0592, the
     * constant of Silverman's normal reference rule h = 1.06 sigma n^(-1/5)
     * (Silverman 1986, eq. 3.28). */
    CHECK_CLOSE(sl_kernel_bandwidth(1, 1), 1.0592238410488122, 1e-15, "A for d = 1");
    CHECK_CLOSE(sl_kernel_bandwidth(1000, 1), 1.0592238410488122 * pow(1000.0, -0.2), 1e-15,
                "h for d = 1, N = 1000");
    /* d = 2: A = 1, h = N^(-1/6) */
    CHECK_CLOSE(sl_kernel_bandwidth(64, 2), 0.5, 1e-15, "h for d = 2, N = 64");
    CHECK_CLOSE(sl_kernel_bandwidth(1000, 4), pow(4.0 / 6.0, 0.125) * pow(1000.0, -0.125),
                1e-15, "h for d = 4, N = 1000");
}

/* A weighted ensemble of N members in p = 2 (parameter 1 fixed when
 * fixed1): z0 ~ N(0.7, 1), weights of an N(1.2, 0.6^2) likelihood. */
static void make_ensemble(size_t N, int fixed1)
{
    sl_stream s;
    double sum = 0.0;
    size_t j;
    sl_stream_init(&s, 2385, 0, 0, SL_PURPOSE_USER);
    for (j = 0; j < N; j++) {
        double z0 = 0.7 + sl_stream_normal(&s), e = (z0 - 1.2) / 0.6;
        Z[2 * j] = z0;
        Z[2 * j + 1] = fixed1 ? -1.37 : 0.5 * z0 + 0.3 * sl_stream_normal(&s);
        w[j] = exp(-0.5 * e * e);
        sum += w[j];
    }
    for (j = 0; j < N; j++)
        w[j] /= sum;
}

static void moments(size_t N, const double *z, const double *wt, double *m, double *V)
{
    size_t j;
    double W = 0.0;
    m[0] = m[1] = V[0] = V[1] = V[2] = 0.0;
    for (j = 0; j < N; j++) {
        double wj = wt != NULL ? wt[j] : 1.0;
        W += wj;
        m[0] += wj * z[2 * j];
        m[1] += wj * z[2 * j + 1];
    }
    m[0] /= W;
    m[1] /= W;
    for (j = 0; j < N; j++) {
        double wj = wt != NULL ? wt[j] : 1.0, a = z[2 * j] - m[0], b = z[2 * j + 1] - m[1];
        V[0] += wj * a * a;
        V[1] += wj * a * b;
        V[2] += wj * b * b;
    }
    V[0] /= W;
    V[1] /= W;
    V[2] /= W;
}

/* resample (systematic), then move every member with the kernel */
static void resample_move(size_t N, const sl_param_move_opts *o, double *ws,
                          sl_param_move_info *info)
{
    size_t j;
    sl_error err;
    sl_param_move_kernel.prepare(o, 2, N, Z, w, ws, info);
    sl_resample(&sl_resampler_systematic, N, w, N, 7, 3, rwork, anc, &err);
    for (j = 0; j < N; j++) {
        sl_stream s;
        Zr[2 * j] = Z[2 * anc[j]];
        Zr[2 * j + 1] = Z[2 * anc[j] + 1];
        sl_stream_init(&s, 7, (uint32_t)j, 3, SL_PURPOSE_PARAM_MOVE);
        sl_param_move_kernel.member(o, 2, ws, Zr + 2 * j, &s);
    }
}

static void test_kernel_moments(void)
{
    /* Liu & West (2001): with a = sqrt(1 - h^2) the shrunk, jittered
     * ensemble has the weighted mean m and covariance V (a^2 V + h^2 V).
     * Monte Carlo check with N = 40000: standard errors of the means about
     * sqrt(V / N) = 0.004, of the variances about V sqrt(2 / N) = 0.005. */
    const size_t N = NMAX;
    sl_param_move_opts o;
    sl_param_move_info info;
    double ws[16], m0[2], V0[3], m1[2], V1[3];
    memset(&o, 0, sizeof o);
    o.kernel_scale = 1.0;
    o.min_ess = SL_KERNEL_MIN_ESS;
    make_ensemble(N, 0);
    moments(N, Z, w, m0, V0);
    resample_move(N, &o, ws, &info);
    moments(N, Zr, NULL, m1, V1);
    CHECK(info.dim == 2 && !info.unweighted, "kernel in 2 dimensions, weighted");
    CHECK_CLOSE(info.h, sl_kernel_bandwidth(N, 2), 1e-15, "bandwidth");
    CHECK_CLOSE(info.a * info.a + info.h * info.h, 1.0, 1e-14, "a^2 + h^2 = 1");
    CHECK_CLOSE(m1[0], m0[0], 0.02, "mean of parameter 1 kept");
    CHECK_CLOSE(m1[1], m0[1], 0.02, "mean of parameter 2 kept");
    CHECK_CLOSE(V1[0], V0[0], 0.03, "variance of parameter 1 kept");
    CHECK_CLOSE(V1[1], V0[1], 0.03, "covariance kept");
    CHECK_CLOSE(V1[2], V0[2], 0.03, "variance of parameter 2 kept");
    /* a scale of 3 makes h > 1: capped at 1 (a = 0, fresh draws from
     * N(m, V)), still the same moments */
    o.kernel_scale = 30.0;
    resample_move(N, &o, ws, &info);
    moments(N, Zr, NULL, m1, V1);
    CHECK(info.h == 1.0 && info.a == 0.0, "h capped at 1");
    CHECK_CLOSE(V1[0], V0[0], 0.03, "variance kept with h = 1");
}

static void test_kernel_fixed_param(void)
{
    /* a parameter with one value in every member stays exactly put, and
     * the kernel is one-dimensional */
    const size_t N = 1000;
    sl_param_move_opts o;
    sl_param_move_info info;
    double ws[16];
    size_t j;
    int same = 1;
    memset(&o, 0, sizeof o);
    o.kernel_scale = 1.0;
    o.min_ess = SL_KERNEL_MIN_ESS;
    make_ensemble(N, 1);
    resample_move(N, &o, ws, &info);
    for (j = 0; j < N; j++)
        same = same && Zr[2 * j + 1] == -1.37;
    CHECK(same, "a parameter without spread is not moved");
    CHECK(info.dim == 1, "kernel dimension 1");
    CHECK_CLOSE(info.h, sl_kernel_bandwidth(N, 1), 1e-15, "one-dimensional bandwidth");
}

static void test_kernel_degenerate(void)
{
    /* all the weight on one member (ESS = 1): the weighted covariance is
     * zero and a kernel fitted to it would put every member on that one
     * value for good; below the smallest ESS the unweighted spread of
     * the members is used, so the resampled members keep spread of the
     * order h times the members' spread (here h ~ 0.32, sd ~ 1) */
    const size_t N = 1000;
    sl_param_move_opts o;
    sl_param_move_info info;
    double ws[16], m1[2], V1[3];
    size_t j;
    memset(&o, 0, sizeof o);
    o.kernel_scale = 1.0;
    make_ensemble(N, 0);
    for (j = 0; j < N; j++)
        w[j] = j == 17 ? 1.0 : 0.0;
    o.min_ess = 0.0; /* guard off */
    resample_move(N, &o, ws, &info);
    moments(N, Zr, NULL, m1, V1);
    CHECK(info.ess == 1.0 && !info.unweighted, "ESS 1, weighted covariance");
    CHECK(V1[0] < 1e-24 && V1[2] < 1e-24, "without the guard the ensemble collapses (%g)",
          V1[0]);
    o.min_ess = SL_KERNEL_MIN_ESS; /* guard on */
    resample_move(N, &o, ws, &info);
    moments(N, Zr, NULL, m1, V1);
    CHECK(info.unweighted, "below the smallest ESS the covariance is unweighted");
    CHECK(sqrt(V1[0]) > 0.2 && sqrt(V1[0]) < 0.5, "spread kept: sd %g", sqrt(V1[0]));
    CHECK_CLOSE(m1[0], Z[2 * 17], 0.05, "centred on the one member with weight");
}

/* The proposal of resample_move: z' - z ~ N(0, s^2 V), s = rm_scale
 * 2.38 / sqrt(d) (Roberts & Rosenthal 2001), V the members' covariance.
 * Monte Carlo check over N = 40000 proposals from one z (standard errors
 * of the variances about s^2 V sqrt(2 / N) = 0.007 s^2 V). */
static void test_rm_proposal(void)
{
    const size_t N = NMAX;
    sl_param_move_opts o;
    sl_param_move_info info;
    sl_error err;
    double ws[16], m0[2], V0[3], m1[2], V1[3], s2;
    const double bad_div[] = {0.0, -0.5, 1.5, NAN}, bad_scale[] = {0.0, -1.0, HUGE_VAL, NAN};
    size_t j;
    memset(&o, 0, sizeof o);
    o.rm_scale = 1.0;
    o.rm_diversity = 0.5;
    o.rm_sweeps = 10;
    CHECK(sl_param_move_resample_move.check(&o, 2, &err) == SL_OK, "default settings");
    for (j = 0; j < 4; j++) {
        o.rm_diversity = bad_div[j];
        CHECK(sl_param_move_resample_move.check(&o, 2, &err) == SL_EINVAL &&
                  strcmp(err.reason, "badconfig") == 0, "diversity %g refused", bad_div[j]);
        o.rm_diversity = 0.5;
        o.rm_scale = bad_scale[j];
        CHECK(sl_param_move_resample_move.check(&o, 2, &err) == SL_EINVAL,
              "scale %g refused", bad_scale[j]);
        o.rm_scale = 1.0;
    }
    o.rm_sweeps = 0;
    CHECK(sl_param_move_resample_move.check(&o, 2, &err) == SL_EINVAL, "no sweeps refused");
    o.rm_sweeps = 10;
    make_ensemble(N, 0);
    moments(N, Z, NULL, m0, V0);
    o.rm_scale = 0.5;
    sl_param_move_resample_move.prepare(&o, 2, N, Z, NULL, ws, &info);
    s2 = 0.25 * 2.38 * 2.38 / 2.0;
    CHECK(info.dim == 2, "two parameters with spread");
    CHECK_CLOSE(info.h, 0.5 * 2.38 / sqrt(2.0), 1e-15, "scale");
    for (j = 0; j < N; j++) {
        sl_stream s;
        Zr[2 * j] = 0.3;
        Zr[2 * j + 1] = -0.2;
        sl_stream_init(&s, 11, (uint32_t)j, 1, SL_PURPOSE_PARAM_MOVE);
        sl_param_move_resample_move.member(&o, 2, ws, Zr + 2 * j, &s);
    }
    moments(N, Zr, NULL, m1, V1);
    CHECK_CLOSE(m1[0], 0.3, 0.03, "proposals centred on z (1)");
    CHECK_CLOSE(m1[1], -0.2, 0.03, "proposals centred on z (2)");
    CHECK_CLOSE(V1[0] / (s2 * V0[0]), 1.0, 0.04, "proposal variance 1");
    CHECK_CLOSE(V1[1] / (s2 * V0[1]), 1.0, 0.06, "proposal covariance");
    CHECK_CLOSE(V1[2] / (s2 * V0[2]), 1.0, 0.04, "proposal variance 2");
    /* rescaling a prepared workspace sets the scale for the new setting */
    o.rm_scale = 2.0;
    sl_param_move_rescale(&sl_param_move_resample_move, &o, 2, ws);
    for (j = 0; j < N; j++) {
        sl_stream s;
        Zr[2 * j] = 0.0;
        Zr[2 * j + 1] = 0.0;
        sl_stream_init(&s, 12, (uint32_t)j, 1, SL_PURPOSE_PARAM_MOVE);
        sl_param_move_resample_move.member(&o, 2, ws, Zr + 2 * j, &s);
    }
    moments(N, Zr, NULL, m1, V1);
    CHECK_CLOSE(V1[0] / (16.0 * s2 * V0[0]), 1.0, 0.04, "rescaled proposal variance");
    /* a parameter without spread is never proposed a move */
    make_ensemble(N, 1);
    o.rm_scale = 1.0;
    sl_param_move_resample_move.prepare(&o, 2, N, Z, NULL, ws, &info);
    CHECK(info.dim == 1, "one parameter with spread");
    for (j = 0; j < 100; j++) {
        sl_stream s;
        double z[2] = {0.1, -1.37};
        sl_stream_init(&s, 13, (uint32_t)j, 1, SL_PURPOSE_PARAM_MOVE);
        sl_param_move_resample_move.member(&o, 2, ws, z, &s);
        CHECK(z[1] == -1.37, "the fixed parameter stays put");
    }
}

int main(void)
{
    test_table();
    test_check();
    test_bandwidth();
    test_kernel_moments();
    test_kernel_fixed_param();
    test_kernel_degenerate();
    test_rm_proposal();
    CHECK_DONE("test_param_move");
}
