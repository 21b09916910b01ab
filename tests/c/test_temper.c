/* test_temper.c - adaptive tempering: conditional ESS, bisection, checks. */
#include <stdlib.h>

#include "check.h"
#include "sluice/rng.h"
#include "sluice/temper.h"
#include "sluice/weights.h"

#define N 5000

static double lw[N], ll[N], lw2[N], wn[N];

/* ESS of the weights W_j exp(delta ll_j), normalised (Kong 1992:
 * 1 / sum w^2), over N. */
static double ess_after(const double *l, const double *x, double delta)
{
    sl_weight_summary ws;
    size_t j;
    for (j = 0; j < N; j++)
        lw2[j] = l[j] + delta * x[j];
    sl_weights_normalize(N, lw2, wn, &ws, NULL);
    return ws.ess / N;
}

static void test_cess(void)
{
    sl_stream s;
    size_t j;
    double c, d, target;
    sl_stream_init(&s, 7u, 0, 0, SL_PURPOSE_USER);
    for (j = 0; j < N; j++) {
        double z = sl_stream_normal(&s);
        lw[j] = -log((double)N);
        ll[j] = -0.5 * z * z / 0.01 - 3.7; /* a sharp Gaussian likelihood */
    }
    CHECK(sl_temper_cess(N, lw, ll, 0.0) == 1.0, "cess at delta 0 is 1");
    /* with equal weights the conditional ESS is the ESS of the updated
     * weights (Zhou, Johansen & Aston 2016, their definition) */
    c = sl_temper_cess(N, lw, ll, 1.0);
    CHECK_CLOSE(c, ess_after(lw, ll, 1.0), 1e-12, "cess = ess with equal weights");
    CHECK(c < 0.5, "the likelihood is sharp: cess %g", c);
    /* an additive constant in ll changes nothing */
    for (j = 0; j < N; j++)
        lw2[j] = ll[j] - 500.0;
    CHECK_CLOSE(sl_temper_cess(N, lw, lw2, 0.3), sl_temper_cess(N, lw, ll, 0.3), 1e-12,
                "invariant to a constant");
    /* bisection reaches the target */
    for (target = 0.2; target < 0.95; target += 0.25) {
        d = sl_temper_next(N, lw, ll, 1.0, target);
        CHECK(d > 0 && d < 1, "step %g in (0, 1)", d);
        CHECK_CLOSE(sl_temper_cess(N, lw, ll, d), target, 1e-9, "cess at the step");
    }
    /* a flat enough rest is taken whole */
    CHECK(sl_temper_next(N, lw, ll, 1e-6, 0.5) == 1e-6, "small rest taken whole");
    /* unequal weights: with W_j proportional to exp(lw_j) the conditional
     * ESS is (sum W v)^2 / sum W v^2 (the formula, computed directly) */
    {
        double s1 = 0, s2 = 0, sw = 0;
        for (j = 0; j < N; j++) {
            lw[j] = -log((double)N) + 0.3 * sin((double)j);
            sw += exp(lw[j]);
        }
        for (j = 0; j < N; j++) {
            double W = exp(lw[j]) / sw, v = exp(0.05 * (ll[j] + 3.7));
            lw[j] -= log(sw);
            s1 += W * v;
            s2 += W * v * v;
        }
        CHECK_CLOSE(sl_temper_cess(N, lw, ll, 0.05), s1 * s1 / s2, 1e-10,
                    "cess with unequal weights");
    }
    /* members without weight or without likelihood do not count */
    for (j = 0; j < N; j++) {
        lw[j] = j < 10 ? -log(10.0) : -HUGE_VAL;
        ll[j] = j == 3 ? -HUGE_VAL : (j == 4 ? (double)NAN : 0.0);
    }
    CHECK_CLOSE(sl_temper_cess(N, lw, ll, 1.0), 0.8, 1e-12, "8 of 10 members left");
    for (j = 0; j < N; j++)
        ll[j] = -HUGE_VAL;
    CHECK(sl_temper_cess(N, lw, ll, 1.0) == 0.0, "no member left");
}

static void test_check(void)
{
    sl_temper_opts o;
    sl_error err;
    const double bad[] = {-0.1, 1.5, NAN, HUGE_VAL};
    size_t i;
    o.ess = 0.5;
    o.max_steps = 50;
    CHECK(sl_temper_check(&o, &err) == SL_OK, "0.5, 50 steps");
    o.ess = 0.0;
    CHECK(sl_temper_check(&o, &err) == SL_OK, "0 is off");
    o.ess = 1.0;
    CHECK(sl_temper_check(&o, &err) == SL_OK, "1 is allowed");
    for (i = 0; i < 4; i++) {
        o.ess = bad[i];
        CHECK(sl_temper_check(&o, &err) == SL_EINVAL && strcmp(err.reason, "badconfig") == 0,
              "target %g refused", bad[i]);
    }
    o.ess = 0.5;
    o.max_steps = 0;
    CHECK(sl_temper_check(&o, &err) == SL_EINVAL, "0 steps refused");
    o.max_steps = SL_TEMPER_MAX_STEPS + 1;
    CHECK(sl_temper_check(&o, &err) == SL_EINVAL, "too many steps refused");
}

int main(void)
{
    test_cess();
    test_check();
    CHECK_DONE("test_temper");
}
