/* quantiles_micro.c - sl_weighted_summary per call against the previous
 * implementation (tests/c/stats_reference.h through quantiles_ref.c), both
 * on the same rows: the
 * ratio new/old of thread CPU time per call (best of 5 interleaved rounds),
 * and whether every level agrees bit for bit. One line per case.
 * Built and run by bench_quantiles.m; arguments: none. */
#include "sluice/stats.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include <stdint.h>
#include <stdio.h>
#include <time.h>

static double cpu_now(void)
{
    struct timespec t;
    clock_gettime(CLOCK_THREAD_CPUTIME_ID, &t);
    return (double)t.tv_sec + 1e-9 * (double)t.tv_nsec;
}

static uint64_t state = 0x9e3779b97f4a7c15u;

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
size_t reference_size(size_t N);
void reference_summary(size_t N, const double *x, size_t inc, const double *w, size_t nq,
                       const double *probs, double *mean, double *q, size_t qinc,
                       double *work);

/* rows x N ensemble (a member per column; rows of N when contiguous),
 * weights of one kind:
 * 0 all 1/N, 1 uniform, 2 all 1/N with members in runs of 1..4 copies
 * (as after resampling) */
static void fill(size_t rows, size_t N, int kind, double *X, double *w)
{
    size_t j, r;
    for (j = 0; j < N; j++)
        w[j] = kind == 1 ? uniform() : 1.0 / (double)N;
    for (j = 0; j < N;) {
        size_t run = kind == 2 ? 1 + (size_t)(4.0 * uniform()) : 1;
        for (r = 0; r < rows; r++)
            X[r + j * rows] = normal();
        for (j++; --run > 0 && j < N; j++)
            for (r = 0; r < rows; r++)
                X[r + j * rows] = X[r + (j - 1) * rows];
    }
}

static void one_case(size_t N, size_t rows, int kind, int calls, int contiguous)
{
    static const double probs[3] = {0.05, 0.5, 0.95};
    static const char *const kname[3] = {"weights 1/N", "uniform weights", "1/N, runs of copies"};
    const size_t nr = 8, inc = contiguous ? 1 : rows, step = contiguous ? N : 1;
    double *X = malloc(rows * N * sizeof *X), *w = malloc(N * sizeof *w);
    double *wo = malloc(reference_size(N) * sizeof *wo);
    double *wn = malloc(sl_quantile_workspace(N) * sizeof *wn);
    double qo[24], qn[24], best[2] = {HUGE_VAL, HUGE_VAL};
    size_t r;
    int round, v, c;
    if (!X || !w || !wo || !wn) {
        printf("   N = %lu: out of memory\n", (unsigned long)N);
        goto done;
    }
    fill(rows, N, kind, X, w);
    for (round = 0; round < 5; round++)
        for (v = 0; v < 2; v++) {
            double t0 = cpu_now(), t;
            for (c = 0; c < calls; c++) {
                for (r = 0; r < nr; r++) {
                    if (v == 0)
                        reference_summary(N, X + r * step, inc, w, 3, probs, NULL,
                                          qo + 3 * r, 1, wo);
                    else
                        sl_weighted_summary(N, X + r * step, inc, w, 3, probs, NULL, qn + 3 * r,
                                            1, wn);
                }
            }
            t = (cpu_now() - t0) / (double)calls / (double)nr;
            if (t < best[v])
                best[v] = t;
        }
    printf("   N = %-6lu stride %-2lu %-20s: new/old per call %.2f; levels equal bit "
           "for bit: %s\n", (unsigned long)N, (unsigned long)inc, kname[kind],
           best[1] / best[0], memcmp(qo, qn, 3 * nr * sizeof *qo) == 0 ? "yes" : "NO");
done:
    free(X);
    free(w);
    free(wo);
    free(wn);
}

int main(void)
{
    int kind;
    for (kind = 0; kind < 3; kind++) {
        one_case(1000, 8, kind, 400, 1);
        one_case(1000, 63, kind, 400, 0);
        one_case(100000, 8, kind, 4, 1);
    }
    return 0;
}
