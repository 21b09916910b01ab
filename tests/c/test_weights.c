/* test_weights.c - log-domain normalisation, ESS, entropy, weight checks and
 * every error reason of the weights module. */
#include "check.h"
#include "sluice/weights.h"

#include <stdlib.h>

/* The reference values below come from the definitions, evaluated directly:
 *   w_j = exp(l_j) / sum_k exp(l_k),  ESS = 1 / sum w_j^2 (Kong, Liu &
 *   Wong 1994),  entropy = -sum w_j log w_j,  log_mean = log(mean exp(l)),
 * and the log-sum-exp identity log sum e^{a_j} = m + log sum e^{a_j - m}
 * (any m; handbook identity). */

static void direct(size_t N, const double *l, double *w, double *ess,
                   double *ent, double *log_sum)
{
    double s = 0, s2 = 0, e = 0;
    size_t j;
    for (j = 0; j < N; j++)
        s += exp(l[j]);
    for (j = 0; j < N; j++) {
        w[j] = exp(l[j]) / s;
        s2 += w[j] * w[j];
        if (w[j] > 0)
            e -= w[j] * log(w[j]);
    }
    *ess = 1 / s2;
    *ent = e;
    *log_sum = log(s);
}

int main(void)
{
    enum { NMAX = 1000 };
    static double l[NMAX], w[NMAX], r[NMAX];
    sl_weight_summary sum;
    sl_error err;
    sl_status st;
    size_t j, N;
    double ess, ent, ls, tot;

    /* Uniform weights: ESS = N, entropy = log N (definitions above). */
    N = NMAX;
    for (j = 0; j < N; j++)
        l[j] = 2.385;
    st = sl_weights_normalize(N, l, w, &sum, &err);
    CHECK(st == SL_OK, "uniform: status %d", (int)st);
    for (j = 0; j < N && w[j] == 1.0 / N; j++)
        ;
    CHECK(j == N, "uniform: w[%zu] = %.17g", j, j < N ? w[j] : 0.0);
    CHECK_REL(sum.ess, (double)N, 1e-14, "ESS of uniform weights = N");
    CHECK_REL(sum.entropy, log((double)N), 1e-14, "entropy of uniform = log N");
    CHECK_REL(sum.log_mean, 2.385, 1e-14, "log_mean of uniform");
    CHECK_REL(sum.log_sum, 2.385 + log((double)N), 1e-14, "log_sum of uniform");
    CHECK(sum.n_zero == 0, "uniform: n_zero %zu", sum.n_zero);
    CHECK_REL(sl_weights_ess(N, w), (double)N, 1e-12, "sl_weights_ess uniform");

    /* Known answer: w = (0.1, 0.2, 0.3, 0.4) from its logs. ESS = 1/0.3,
     * entropy -sum w log w, log_mean = log(1/4) (definitions). */
    {
        const double p[4] = {0.1, 0.2, 0.3, 0.4};
        double e = 0;
        for (j = 0; j < 4; j++) {
            l[j] = log(p[j]);
            e -= p[j] * log(p[j]);
        }
        st = sl_weights_normalize(4, l, w, &sum, &err);
        CHECK(st == SL_OK, "0.1..0.4: status %d", (int)st);
        for (j = 0; j < 4; j++)
            CHECK_CLOSE(w[j], p[j], 1e-15, "0.1..0.4 weight");
        CHECK_REL(sum.ess, 1 / 0.3, 1e-14, "0.1..0.4 ESS = 1/0.3");
        CHECK_REL(sum.entropy, e, 1e-14, "0.1..0.4 entropy");
        CHECK_REL(sum.log_mean, log(0.25), 1e-14, "0.1..0.4 log_mean");
        CHECK_CLOSE(sum.log_sum, 0.0, 1e-15, "0.1..0.4 log_sum");
    }

    /* Irregular log-weights against the direct formulas (no underflow at
     * this scale), with a NULL summary accepted. */
    N = 257;
    for (j = 0; j < N; j++)
        l[j] = 3.0 * sin(0.7 * (double)j + 0.3) - 0.01 * (double)j;
    direct(N, l, r, &ess, &ent, &ls);
    st = sl_weights_normalize(N, l, w, &sum, &err);
    CHECK(st == SL_OK, "irregular: status %d", (int)st);
    for (j = 0, tot = 0; j < N; j++) {
        CHECK_CLOSE(w[j], r[j], 1e-15, "irregular weight");
        tot += w[j];
    }
    CHECK_CLOSE(tot, 1.0, 1e-13, "irregular weights sum to one");
    CHECK_REL(sum.ess, ess, 1e-13, "irregular ESS");
    CHECK_REL(sl_weights_ess(N, w), ess, 1e-13, "irregular sl_weights_ess");
    CHECK_REL(sum.entropy, ent, 1e-13, "irregular entropy");
    CHECK_REL(sum.log_sum, ls, 1e-13, "irregular log_sum");
    CHECK_REL(sum.log_mean, ls - log((double)N), 1e-13, "irregular log_mean");
    CHECK(sl_weights_normalize(N, l, w, NULL, &err) == SL_OK, "NULL summary");

    /* Log-weights around -1e5 (exp underflows to 0): the same weights as
     * their offsets from -1e5, and log_sum = -1e5 + log sum exp(offsets)
     * by the log-sum-exp identity. */
    for (j = 0; j < N; j++) {
        l[j] -= 1e5;
        r[j] = l[j] + 1e5; /* the offset actually stored (exact) */
    }
    direct(N, r, r, &ess, &ent, &ls);
    st = sl_weights_normalize(N, l, w, &sum, &err);
    CHECK(st == SL_OK, "-1e5: status %d", (int)st);
    for (j = 0; j < N; j++)
        CHECK_CLOSE(w[j], r[j], 1e-14, "-1e5 weight");
    CHECK_REL(sum.ess, ess, 1e-11, "-1e5 ESS");
    CHECK_REL(sum.entropy, ent, 1e-11, "-1e5 entropy");
    CHECK_REL(sum.log_sum, -1e5 + ls, 1e-14, "-1e5 log_sum");
    CHECK(isfinite(sum.log_mean), "-1e5 log_mean finite");

    /* Spread of 1e5 between members: the small ones are exactly 0 after
     * rounding, the result is a one-hot vector, ESS 1, entropy 0. */
    l[0] = -3e5;
    l[1] = -2e5;
    l[2] = -1e5;
    st = sl_weights_normalize(3, l, w, &sum, &err);
    CHECK(st == SL_OK && w[0] == 0 && w[1] == 0 && w[2] == 1,
          "one-hot from spread log-weights: %g %g %g", w[0], w[1], w[2]);
    CHECK(sum.ess == 1 && sum.entropy == 0, "one-hot ESS %g entropy %g",
          sum.ess, sum.entropy);
    CHECK_REL(sum.log_sum, -1e5, 1e-15, "one-hot log_sum");
    CHECK(sum.n_zero == 0, "underflow is not counted as -Inf");

    /* -Inf entries: weight 0 (0 log 0 = 0 in the entropy), counted. */
    {
        const double lv[6] = {-INFINITY, 0.5, -INFINITY, -1.25, 2.0, -INFINITY};
        double rw[6];
        double q[3] = {0.5, -1.25, 2.0};
        direct(3, q, q, &ess, &ent, &ls);
        rw[0] = rw[2] = rw[5] = 0;
        rw[1] = q[0];
        rw[3] = q[1];
        rw[4] = q[2];
        st = sl_weights_normalize(6, lv, w, &sum, &err);
        CHECK(st == SL_OK, "-Inf entries: status %d", (int)st);
        for (j = 0; j < 6; j++)
            CHECK_CLOSE(w[j], rw[j], 1e-15, "-Inf entries weight");
        CHECK(sum.n_zero == 3, "n_zero = %zu, expected 3", sum.n_zero);
        CHECK_REL(sum.ess, ess, 1e-14, "-Inf entries ESS");
        CHECK_REL(sum.entropy, ent, 1e-14, "-Inf entries entropy");
        CHECK_REL(sum.log_sum, ls, 1e-14, "-Inf entries log_sum");
        CHECK_REL(sum.log_mean, ls - log(6.0), 1e-14, "-Inf entries log_mean");
    }

    /* Large log-weights (1e300): no overflow. */
    l[0] = 1e300;
    l[1] = 1e300;
    st = sl_weights_normalize(2, l, w, &sum, &err);
    CHECK(st == SL_OK && w[0] == 0.5 && w[1] == 0.5, "1e300: %g %g", w[0], w[1]);
    CHECK_REL(sum.log_sum, 1e300, 1e-15, "1e300 log_sum");

    /* w may alias logw. */
    N = 257;
    for (j = 0; j < N; j++) {
        l[j] = -50.0 + 4.0 * cos(1.3 * (double)j);
        r[j] = l[j];
    }
    sl_weights_normalize(N, r, w, &sum, &err);
    st = sl_weights_normalize(N, l, l, NULL, &err);
    CHECK(st == SL_OK, "aliased: status %d", (int)st);
    for (j = 0; j < N && l[j] == w[j]; j++)
        ;
    CHECK(j == N, "aliased result differs at %zu", j);

    /* Error reasons of sl_weights_normalize. */
    {
        double bad[5] = {0.1, -2.0, NAN, 1.0, 0.0};
        sl_error_clear(&err);
        st = sl_weights_normalize(5, bad, w, &sum, &err);
        CHECK(st == SL_EINVAL && strcmp(err.reason, "badlogw") == 0 &&
                  strstr(err.message, "3 of 5") != NULL &&
                  strstr(err.message, "NaN") != NULL,
              "NaN log-weight: %d %s: %s", (int)st, err.reason, err.message);
        bad[2] = 0.0;
        bad[4] = INFINITY;
        st = sl_weights_normalize(5, bad, w, &sum, &err);
        CHECK(st == SL_EINVAL && strcmp(err.reason, "badlogw") == 0 &&
                  strstr(err.message, "5 of 5") != NULL &&
                  strstr(err.message, "+Inf") != NULL,
              "+Inf log-weight: %d %s: %s", (int)st, err.reason, err.message);
        for (j = 0; j < 5; j++)
            bad[j] = -INFINITY;
        st = sl_weights_normalize(5, bad, w, &sum, &err);
        CHECK(st == SL_EDEGENERATE && strcmp(err.reason, "degenerate") == 0,
              "all -Inf: %d %s: %s", (int)st, err.reason, err.message);
        st = sl_weights_normalize(0, bad, w, &sum, &err);
        CHECK(st == SL_EINVAL && strcmp(err.reason, "badsize") == 0,
              "N = 0: %d %s", (int)st, err.reason);
        /* a NULL error record is allowed */
        CHECK(sl_weights_normalize(5, bad, w, NULL, NULL) == SL_EDEGENERATE,
              "NULL error record");
    }

    /* sl_weights_check: sum, and its reasons. */
    {
        double v[4] = {0.25, 0.0, 2.385, 1.0}, s = -1;
        st = sl_weights_check(4, v, &s, &err);
        CHECK(st == SL_OK && s == 0.25 + 0.0 + 2.385 + 1.0, "check sum %g", s);
        v[1] = -1e-300;
        st = sl_weights_check(4, v, &s, &err);
        CHECK(st == SL_EINVAL && strcmp(err.reason, "badweight") == 0 &&
                  strstr(err.message, "2 of 4") != NULL &&
                  strstr(err.message, "negative") != NULL,
              "negative weight: %s: %s", err.reason, err.message);
        v[1] = NAN;
        st = sl_weights_check(4, v, &s, &err);
        CHECK(st == SL_EINVAL && strcmp(err.reason, "badweight") == 0 &&
                  strstr(err.message, "NaN") != NULL,
              "NaN weight: %s: %s", err.reason, err.message);
        v[1] = INFINITY;
        st = sl_weights_check(4, v, &s, &err);
        CHECK(st == SL_EINVAL && strcmp(err.reason, "badweight") == 0 &&
                  strstr(err.message, "infinite") != NULL,
              "Inf weight: %s: %s", err.reason, err.message);
        v[0] = v[1] = v[2] = v[3] = 1.5e308;
        st = sl_weights_check(4, v, &s, &err);
        CHECK(st == SL_EINVAL && strcmp(err.reason, "badweight") == 0,
              "overflowing sum: %s: %s", err.reason, err.message);
        v[0] = v[1] = v[2] = v[3] = 0;
        st = sl_weights_check(4, v, &s, &err);
        CHECK(st == SL_EDEGENERATE && strcmp(err.reason, "zeroweights") == 0,
              "zero weights: %s: %s", err.reason, err.message);
        st = sl_weights_check(0, v, &s, &err);
        CHECK(st == SL_EDEGENERATE && strcmp(err.reason, "zeroweights") == 0,
              "no weights: %s", err.reason);
        v[2] = 4.9e-324; /* the smallest positive double still counts */
        CHECK(sl_weights_check(4, v, NULL, &err) == SL_OK, "denormal weight");
    }

    /* sl_weights_check on long vectors, which it tests a block at a time
     * on the weights' bits: the sum is the plain running sum, bit for bit;
     * -0 and the largest double pass; a bad weight is found and named
     * wherever it lies (first and last of a block, the vector's last,
     * after a block with -0 in it), NaN, Inf and negative alike. */
    {
        enum { LONG = 1537 };
        static double v[LONG];
        static const size_t at[] = {0, 511, 512, 1023, 1024, 1500, LONG - 1};
        static const double bad[] = {NAN, -INFINITY, INFINITY, -1e-310, -2.0};
        double s = 0, ref = 0;
        char where[32];
        size_t i, a, q;
        for (i = 0; i < LONG; i++) {
            v[i] = 1.0 / (double)(1 + i % 97) + (i % 5 == 0 ? 1e-17 : 0.0);
            ref += v[i];
        }
        CHECK(sl_weights_check(LONG, v, &s, &err) == SL_OK && s == ref,
              "long: sum %.17g, running sum %.17g", s, ref);
        v[600] = -0.0;
        v[3] = 1.7976931348623157e308;
        CHECK(sl_weights_check(LONG, v, NULL, &err) == SL_OK, "-0 and the largest double: %s",
              err.message);
        v[3] = 1.0;
        for (a = 0; a < sizeof at / sizeof *at; a++)
            for (q = 0; q < sizeof bad / sizeof *bad; q++) {
                const double keep = v[at[a]];
                v[at[a]] = bad[q];
                snprintf(where, sizeof where, "%lu of %d", (unsigned long)(at[a] + 1), LONG);
                st = sl_weights_check(LONG, v, &s, &err);
                CHECK(st == SL_EINVAL && strcmp(err.reason, "badweight") == 0 &&
                          strstr(err.message, where) != NULL,
                      "weight %s set to %g: %s: %s", where, bad[q], err.reason, err.message);
                v[at[a]] = keep;
            }
    }

    /* sl_weights_normalize_threads on a long vector (several chunks of
     * 4096): on 2 and 3 threads the weights and the summary have the bits
     * of one thread, and of sl_weights_normalize; -Inf entries and terms
     * that underflow to 0 among them; the first NaN or +Inf is named
     * wherever it lies, also with a later one in an earlier chunk's
     * shadow; all -Inf is degenerate; w aliasing logw works. */
    {
        enum { LONG = 3 * 4096 + 77 };
        static double lv[LONG], w1[LONG], w2[LONG];
        static const size_t at[] = {0, 4095, 4096, 9000, LONG - 1};
        sl_weight_summary s1, s2;
        char where[40];
        size_t i, a;
        int thr, same_bits = 1;
        for (i = 0; i < LONG; i++)
            lv[i] = i % 11 == 4 ? -(double)INFINITY
                                : (i % 97 == 5 ? -900.0 : -3.0 + 2.5 * sin(0.37 * (double)i));
        CHECK(sl_weights_normalize(LONG, lv, w1, &s1, &err) == SL_OK, "long: %s", err.message);
        for (thr = 1; thr <= 3; thr++) {
            memset(w2, 0, sizeof w2);
            st = sl_weights_normalize_threads(LONG, lv, w2, &s2, thr, &err);
            same_bits = same_bits && st == SL_OK && memcmp(w1, w2, sizeof w1) == 0 &&
                        memcmp(&s1, &s2, sizeof s1) == 0;
        }
        CHECK(same_bits, "threaded normalisation: not the bits of one thread");
        CHECK(s1.n_zero == (LONG + 6) / 11 && w1[5] == 0.0 && w1[4] == 0.0,
              "long: n_zero %zu, w[5] %g (underflow), w[4] %g (-Inf)", s1.n_zero, w1[5],
              w1[4]);
        memcpy(w2, lv, sizeof w2);
        CHECK(sl_weights_normalize_threads(LONG, w2, w2, NULL, 2, &err) == SL_OK &&
                  memcmp(w1, w2, sizeof w1) == 0,
              "threaded normalisation with w aliasing logw differs");
        for (a = 0; a < sizeof at / sizeof *at; a++)
            for (thr = 1; thr <= 2; thr++) {
                const double keep = lv[at[a]], keep2 = lv[LONG - 2];
                const size_t first = at[a] < LONG - 2 ? at[a] : LONG - 2;
                const int is_nan = first == LONG - 2 || a % 2;
                lv[LONG - 2] = NAN; /* a later bad value, in another chunk */
                lv[at[a]] = a % 2 ? (double)NAN : (double)INFINITY;
                snprintf(where, sizeof where, "%lu of %d is %s", (unsigned long)(first + 1),
                         LONG, is_nan ? "NaN" : "+Inf");
                st = sl_weights_normalize_threads(LONG, lv, w2, NULL, thr, &err);
                CHECK(st == SL_EINVAL && strcmp(err.reason, "badlogw") == 0 &&
                          strstr(err.message, where) != NULL,
                      "%d threads, log-weight %s: %s: %s", thr, where, err.reason,
                      err.message);
                lv[at[a]] = keep;
                lv[LONG - 2] = keep2;
            }
        for (i = 0; i < LONG; i++)
            w2[i] = -(double)INFINITY;
        st = sl_weights_normalize_threads(LONG, w2, w1, NULL, 2, &err);
        CHECK(st == SL_EDEGENERATE && strcmp(err.reason, "degenerate") == 0,
              "threaded, all -Inf: %d %s", (int)st, err.reason);
    }

    /* ESS of a one-hot vector is 1; of (1/2, 1/2) is 2. */
    {
        const double a[3] = {0, 1, 0}, b[2] = {0.5, 0.5};
        CHECK(sl_weights_ess(3, a) == 1, "one-hot ESS");
        CHECK(sl_weights_ess(2, b) == 2, "two-equal ESS");
    }
    CHECK_DONE("test_weights");
}
