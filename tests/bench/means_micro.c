/* means_micro.c - sl_weighted_means (the weighted means of the filters'
 * summarised rows, one pass over the members for every 64 rows) against
 * the previous version (tests/c/stats_reference.h through quantiles_ref.c)
 * on the same ensembles, on one thread: the ratio new/old of thread CPU
 * time per call (best of 5 interleaved rounds) and whether every mean
 * agrees bit for bit (up to 4096 members, one summing block; above, the
 * largest relative difference, the sums being taken in blocks). One line per case. Built and run by bench_quantiles.m; arguments:
 * none. */
#include "sluice/stats.h"

#include <math.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>

static double cpu_now(void)
{
    struct timespec t;
    clock_gettime(CLOCK_THREAD_CPUTIME_ID, &t);
    return (double)t.tv_sec + 1e-9 * (double)t.tv_nsec;
}

static uint64_t state = 0x2545f4914f6cdd1du;

static double uniform(void)
{
    state ^= state << 13;
    state ^= state >> 7;
    state ^= state << 17;
    return (double)(state >> 11) * 0x1p-53;
}

static double normal(void)
{
    double u = uniform();
    return sqrt(-2.0 * log(u > 0 ? u : 0x1p-60)) * cos(6.283185307179586 * uniform());
}

/* the reference, compiled on its own like the library (quantiles_ref.c) */
void reference_means(size_t N, const double *x, size_t ld, size_t m, const size_t *rows,
                     size_t base, const double *w, double *mean);

/* ld x N, members in runs of 1..4 copies (as after resampling), a third
 * of the rows 0 for most members (as empty unit-hydrograph slots);
 * weights uniform, a tenth of them 0 */
static void fill(size_t ld, size_t N, double *X, double *w)
{
    size_t j, r;
    for (j = 0; j < N; j++)
        w[j] = uniform() < 0.1 ? 0.0 : uniform();
    for (j = 0; j < N;) {
        size_t run = 1 + (size_t)(4.0 * uniform());
        for (r = 0; r < ld; r++)
            X[r + j * ld] = r % 3 == 1 && uniform() < 0.8 ? 0.0 : 100.0 + normal();
        for (j++; --run > 0 && j < N; j++)
            for (r = 0; r < ld; r++)
                X[r + j * ld] = X[r + (j - 1) * ld];
    }
}

/* rows: m of the ld rows (every row, or rows 0, 1 and ld - 1) */
static void one_case(size_t N, size_t ld, int all, int calls, const char *what)
{
    double *X = malloc(ld * N * sizeof *X), *w = malloc(N * sizeof *w);
    double *mo = malloc(ld * sizeof *mo), *mn = malloc(ld * sizeof *mn);
    size_t *rows = malloc(ld * sizeof *rows), m = 0, r;
    double best[2] = {HUGE_VAL, HUGE_VAL};
    int round, v, c;
    if (!X || !w || !mo || !mn || !rows) {
        printf("   N = %lu: out of memory\n", (unsigned long)N);
        goto done;
    }
    fill(ld, N, X, w);
    for (r = 0; r < ld; r++) {
        if (all || r < 2 || r + 1 == ld)
            rows[m++] = r;
        mo[r] = mn[r] = 0.0;
    }
    for (round = 0; round < 5; round++)
        for (v = 0; v < 2; v++) {
            double t0 = cpu_now(), t;
            for (c = 0; c < calls; c++) {
                if (v == 0)
                    reference_means(N, X, ld, m, rows, 0, w, mo);
                else
                    sl_weighted_means(N, X, ld, m, rows, 0, w, mn, 1);
            }
            t = (cpu_now() - t0) / (double)calls;
            if (t < best[v])
                best[v] = t;
        }
    if (N <= sl_mean_block(N)) {
        printf("   N = %-6lu %2lu of %2lu rows (%s): new/old per call %.2f (old %.1f us); "
               "means equal bit for bit: %s\n",
               (unsigned long)N, (unsigned long)m, (unsigned long)ld, what, best[1] / best[0],
               1e6 * best[0], memcmp(mo, mn, ld * sizeof *mo) == 0 ? "yes" : "NO");
    } else {
        /* several summing blocks: another order of the same sums */
        double rel = 0.0;
        for (r = 0; r < ld; r++) {
            double d = fabs(mn[r] - mo[r]) / fabs(mo[r]);
            rel = d > rel ? d : rel;
        }
        printf("   N = %-6lu %2lu of %2lu rows (%s): new/old per call %.2f (old %.1f us); "
               "%lu summing blocks, largest relative difference %.1e\n",
               (unsigned long)N, (unsigned long)m, (unsigned long)ld, what, best[1] / best[0],
               1e6 * best[0], (unsigned long)((N + sl_mean_block(N) - 1) / sl_mean_block(N)),
               rel);
    }
done:
    free(X);
    free(w);
    free(mo);
    free(mn);
    free(rows);
}

int main(void)
{
    one_case(1000, 63, 1, 400, "GR4J states, 'summarize' 'all'");
    one_case(1000, 63, 0, 2000, "GR4J visible states");
    one_case(1000, 4, 1, 2000, "GR4J parameters");
    one_case(5000, 63, 1, 80, "63 states");
    one_case(100000, 4, 1, 4, "4 states");
    return 0;
}
