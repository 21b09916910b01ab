/* test_prior_extreme.c - truncated-normal priors at the edges of double
 * precision: a standard deviation far above the width of the bounds,
 * bounds far out in a tail, bounds one rounding step apart. Their
 * log-densities must stay finite and right (each case was first found by
 * the fuzzing harness tests/fuzz/fuzz_checks.c as a +Inf log-density). */
#include "check.h"
#include "sluice/prior.h"

#include <math.h>

static double tn_logpdf(double mu, double sd, double lo, double hi, double x)
{
    sl_prior_entry e;
    e.dist = SL_DIST_TRUNCNORMAL;
    e.a = mu;
    e.b = sd;
    e.lo = lo;
    e.hi = hi;
    return sl_prior_logpdf(&e, x);
}

int main(void)
{
    sl_prior_entry e = {SL_DIST_TRUNCNORMAL, 0.0, 1e17, -18.0, 9.0};
    sl_error err;
    double x[3] = {-18.0, 0.0, 9.0}, L[3];
    int k;

    /* every case is a valid entry */
    CHECK(sl_prior_check(&e, 1, &err) == SL_OK, "sd 1e17 accepted");

    /* sd far above the width: the density is flat, 1/27 on [-18, 9].
     * Reference: log(phi(z)/sd / (Phi(beta) - Phi(alpha))) with the mass
     * from erf at 60 digits (mpmath); -log 27 = -3.295836866004329 */
    CHECK_CLOSE(tn_logpdf(0, 1e17, -18, 9, 0), -3.2958368660043290742, 1e-12,
                "truncnormal sd 1e17 on [-18, 9]");
    CHECK_CLOSE(tn_logpdf(0, 1.9682131827353522e+243, -18, 9, 0),
                -3.2958368660043290742, 1e-12, "truncnormal sd 2e243 on [-18, 9]");
    CHECK_CLOSE(tn_logpdf(5, 1e300, -1e-300, 1e-300, 0), -log(2e-300), 1e-9,
                "truncnormal sd 1e300 on [-1e-300, 1e-300]");
    /* the width a single subnormal step: the uniform limit -log(width) */
    CHECK_CLOSE(tn_logpdf(0, 1, 0, 4.9406564584124654e-324, 0),
                -log(4.9406564584124654e-324), 1e-9, "truncnormal on [0, 5e-324]");

    /* bounds 40 and 41 standard deviations out, where Phi's tails underflow:
     * reference from erfc at 60 digits (mpmath), the same on both sides */
    CHECK_CLOSE(tn_logpdf(0, 1, 40, 41, 40.5), -16.435496519450884573, 1e-9,
                "truncnormal on [40, 41]");
    CHECK_CLOSE(tn_logpdf(0, 1, -41, -40, -40.5), -16.435496519450884573, 1e-9,
                "truncnormal on [-41, -40]");
    CHECK_CLOSE(tn_logpdf(0, 1, 1e3, HUGE_VAL, 1e3 + 1e-3),
                tn_logpdf(0, 1, -HUGE_VAL, -1e3, -1e3 - 1e-3), 1e-12,
                "truncnormal 1000 sd out, both sides alike");
    CHECK(isfinite(tn_logpdf(0, 1, 1e3, HUGE_VAL, 1e3)), "truncnormal 1000 sd out finite");

    /* bounds one rounding step apart, 3 sd out: reference from erfc at 60
     * digits (mpmath) */
    CHECK_CLOSE(tn_logpdf(0, 3, 9, 9.000000000000002, 9), 33.964211847437321050, 1e-9,
                "truncnormal on [9, 9 + ulp]");

    /* the points form gives the same numbers */
    CHECK(sl_prior_logpdf_points(1, &e, 3, x, L, &err) == SL_OK, "points");
    for (k = 0; k < 3; k++)
        CHECK_CLOSE(L[k], -3.2958368660043290742, 1e-12, "points, sd 1e17");

    /* bounds 4e45 standard deviations below the mean: the truncated
     * normal is the exponential distribution from the upper bound down,
     * rate a / sd, a = (mean - hi) / sd, to a relative error of 1/a^2
     * (asymptotic Mills ratio, Abramowitz & Stegun 26.2.12); mean
     * 2.0272186628441575e47, sd 50, [-1, 0]: log(a / sd) at the bound,
     * log(a / sd) - (a / sd) * 1 at the lower one */
    {
        double rate = 2.0272186628441575e+47 / 50 / 50;
        CHECK_REL(tn_logpdf(2.0272186628441575e+47, 50, -1, 0, 0), log(rate), 1e-12,
                  "truncnormal 4e45 sd below the mean, at the upper bound");
        CHECK_REL(tn_logpdf(2.0272186628441575e+47, 50, -1, 0, -1), log(rate) - rate, 1e-12,
                  "truncnormal 4e45 sd below the mean, at the lower bound");
        CHECK_REL(tn_logpdf(-2.0272186628441575e+47, 50, 0, 1, 0), log(rate), 1e-12,
                  "truncnormal 4e45 sd above the mean, at the lower bound");
    }
    /* bounds 1e308 standard deviations out, where (lo - mean) / sd itself
     * overflows: the rate 2e308 in logs, log(2e308) = 709.89 */
    CHECK_REL(tn_logpdf(-1e308, 1, 1e308, HUGE_VAL, 1e308), log(2.0) + log(1e308), 1e-12,
              "truncnormal 2e308 sd out, at the bound");
    CHECK(tn_logpdf(-1e308, 1, 1e308, HUGE_VAL, 2e307 + 1e308) == -HUGE_VAL,
          "truncnormal 2e308 sd out, off the bound: -Inf");

    /* draws from sd 1e17 on [-18, 9] spread over the interval: the
     * uniform distribution's mean -4.5 and standard deviation 27 /
     * sqrt(12) = 7.794 (handbook formulas), within 5 standard errors; no
     * two draws alike (they all fell on the mean 0 before) */
    {
        enum { N = 4000 };
        static double P[N];
        double s1 = 0, s2 = 0, mean, sd;
        size_t j, same = 0;
        CHECK(sl_prior_draw(1, &e, N, 99u, 0u, P, &err) == SL_OK, "draws: %s", err.message);
        for (j = 0; j < N; j++) {
            s1 += P[j];
            s2 += P[j] * P[j];
            same += j > 0 && P[j] == P[j - 1];
        }
        mean = s1 / N;
        sd = sqrt(s2 / N - mean * mean);
        CHECK_CLOSE(mean, -4.5, 5 * 7.794 / sqrt((double)N), "mean of flat draws");
        CHECK_CLOSE(sd, 27 / sqrt(12.0), 5 * 7.794 / sqrt(2.0 * N), "sd of flat draws");
        CHECK(same == 0, "%lu repeated draws", (unsigned long)same);
    }

    /* the ordinary cases keep their values: N(0, 1) on [-1, 2] at 0,
     * log(phi(0) / (Phi(2) - Phi(-1))) with Phi(2) = 0.97724986805182079,
     * Phi(-1) = 0.15865525393145705 (standard normal table, 17 digits) */
    CHECK_CLOSE(tn_logpdf(0, 1, -1, 2, 0),
                -0.91893853320467274178 - log(0.97724986805182079 - 0.15865525393145705),
                1e-13, "truncnormal on [-1, 2]");
    CHECK_DONE("test_prior_extreme");
}
