/* test_enkf_ranks.c - the ensemble Kalman analyses shared out across
 * ranks (sl_enkf_config.ranks), the ranks played by threads: for every
 * method (the ETKF in both forms), with and without localisation,
 * inflation and relaxation, 1 to 7 ranks end with the analysis of one
 * process bit for bit on every rank, with the same tallies; each rank
 * works out only its share of the rows (its polls count its blocks); a
 * rank that stops fails the analysis on every rank, a row that is not
 * finite with the same error everywhere. With rows_local each rank holds
 * and ends with only its rows, those of one process bit for bit. */
#include "check.h"
#include "ranks_threads.h"
#include "sluice/enkf.h"
#include "sluice/rng.h"

#include <math.h>
#include <stdint.h>

/* ------------------------------------------------------------ problem */

typedef struct {
    size_t n, N, m;
    double *X, *HX, *y, *r, *spos, *opos, *oc;
    sl_localization loc;
} problem;

/* n rows along a line (row i at i, two rows at each place for the LETKF's
 * groups), N members from two smooth random fields plus noise, m
 * observations of evenly spaced rows, error variances 0.2 to 0.5. */
static void make_problem(problem *p, size_t n, size_t N, size_t m, uint64_t seed)
{
    sl_stream s;
    size_t i, j, k;
    p->n = n;
    p->N = N;
    p->m = m;
    p->X = ck_malloc(n * N * sizeof(double));
    p->HX = ck_malloc(m * N * sizeof(double));
    p->y = ck_malloc(m * sizeof(double));
    p->r = ck_malloc(m * sizeof(double));
    p->spos = ck_malloc(n * sizeof(double));
    p->opos = ck_malloc(m * sizeof(double));
    p->oc = ck_malloc(m * sizeof(double));
    sl_stream_init(&s, seed, 0, 0, SL_PURPOSE_USER);
    for (i = 0; i < n; i++)
        p->spos[i] = (double)(i / 2);
    for (j = 0; j < N; j++) {
        const double a = sl_stream_normal(&s), b = sl_stream_normal(&s);
        for (i = 0; i < n; i++)
            p->X[i + j * n] = 1.0 + a * sin(0.05 * (double)i) + b * cos(0.03 * (double)i) +
                              0.3 * sl_stream_normal(&s);
    }
    for (k = 0; k < m; k++) {
        const size_t row = k * n / m;
        p->opos[k] = p->spos[row];
        p->oc[k] = 6.0;
        p->r[k] = 0.2 + 0.3 * sl_stream_uniform(&s);
        for (j = 0; j < N; j++)
            p->HX[k + j * m] = p->X[row + j * n];
        p->y[k] = 1.0 + 0.8 * sl_stream_normal(&s);
    }
    memset(&p->loc, 0, sizeof p->loc);
    p->loc.geometry = SL_GEOM_LINE;
    p->loc.dim = 1;
    p->loc.state_pos = p->spos;
    p->loc.obs_pos = p->opos;
    p->loc.obs_c = p->oc;
    p->loc.param_factor = 1.0;
}

static void free_problem(problem *p)
{
    ck_free(p->X);
    ck_free(p->HX);
    ck_free(p->y);
    ck_free(p->r);
    ck_free(p->spos);
    ck_free(p->opos);
    ck_free(p->oc);
}

/* ------------------------------------------------------------- runs */

typedef struct {
    const problem *pb;
    sl_enkf_config cfg;
    rank_comm comm;
    sl_enkf_ranks rk;
    double *X;
    size_t lo, hi; /* rows_local: the rows X holds */
    size_t *rows;  /* and, for the LETKF, which (NULL: lo .. hi-1) */
    void *work;
    size_t polls;
    int stop_at; /* the poll stops the analysis at this call (0: never) */
    sl_enkf_info info;
    sl_status st;
    sl_error err;
} job;

static int count_poll(void *ctx, double fraction)
{
    job *j = ctx;
    (void)fraction;
    j->polls++;
    return j->stop_at > 0 && j->polls == (size_t)j->stop_at;
}

/* Row i of what job j's X holds, in the whole ensemble. */
static size_t job_row(const job *j, size_t i)
{
    return j->rows != NULL ? j->rows[i] : j->lo + i;
}

static void job_start(job *j, const problem *pb, const sl_enkf_config *cfg,
                      const sl_enkf_ranks *rk)
{
    size_t bytes;
    j->pb = pb;
    j->cfg = *cfg;
    j->cfg.ranks = rk;
    j->cfg.poll = count_poll;
    j->cfg.poll_ctx = j;
    j->lo = 0;
    j->hi = pb->n;
    j->rows = NULL;
    if (j->cfg.rows_local && rk != NULL && cfg->method == SL_ENKF_LETKF) {
        void *ow = ck_malloc(sl_enkf_letkf_rows_work(pb->n));
        j->rows = ck_malloc(pb->n * sizeof(size_t) + 1);
        j->hi = sl_enkf_letkf_rows(&j->cfg, pb->n, rk->rank, j->rows, ow);
        CHECK(j->hi <= pb->n, "the LETKF's rows of rank %d", rk->rank);
        j->cfg.rows_here = j->hi;
        ck_free(ow);
    } else if (j->cfg.rows_local && rk != NULL) {
        CHECK(sl_enkf_local_rows(&j->cfg, pb->n, pb->N, pb->m, rk->rank, &j->lo, &j->hi),
              "the rows of rank %d", rk->rank);
    }
    j->X = ck_malloc((j->hi - j->lo) * pb->N * sizeof(double) + 1);
    {
        /* rows lo .. hi-1 (or those listed), compactly */
        const size_t ld = j->hi - j->lo;
        size_t i, c;
        for (c = 0; c < pb->N; c++)
            for (i = 0; i < ld; i++)
                j->X[i + c * ld] = pb->X[job_row(j, i) + c * pb->n];
    }
    bytes = sl_enkf_workspace(&j->cfg, pb->n, pb->N, pb->m, 0);
    CHECK(bytes > 0, "a workspace");
    j->work = ck_malloc(bytes ? bytes : 1);
    sl_error_clear(&j->err);
}

static void job_run(job *j)
{
    j->st = sl_enkf_analysis(&j->cfg, j->pb->n, j->pb->N, j->X, j->pb->m, j->pb->HX, j->pb->y,
                             j->pb->r, 0, j->work, &j->info, &j->err);
}

static void job_free(job *j)
{
    ck_free(j->rows);
    ck_free(j->X);
    ck_free(j->work);
}

static void *rank_main(void *arg)
{
    job_run(arg);
    return NULL;
}

/* cfg on P ranks (jobs[0 .. P-1]); stop_rank stops at its poll stop_at. */
static int run_ranks(const problem *pb, const sl_enkf_config *cfg, int P, int stop_rank,
                     int stop_at, shared_comm *sh, job *jobs)
{
    int r, ok;
    ranks_open(sh, P);
    for (r = 0; r < P; r++) {
        job *j = &jobs[r];
        memset(j, 0, sizeof *j);
        j->comm.sh = sh;
        j->comm.rank = r;
        j->rk.ctx = &j->comm;
        j->rk.rank = r;
        j->rk.size = P;
        j->rk.allgather = fake_allgather;
        job_start(j, pb, cfg, &j->rk);
        j->stop_at = r == stop_rank ? stop_at : 0;
    }
    ok = ranks_play(sh, rank_main, jobs, sizeof *jobs);
    CHECK(ok, "threads started");
    CHECK(!sh->mismatch, "ranks disagreed on the sizes of the gather (%d ranks)", P);
    return ok;
}

static int same(const double *a, const double *b, size_t count)
{
    return memcmp(a, b, count * sizeof(double)) == 0;
}

static int same_info(const sl_enkf_info *a, const sl_enkf_info *b)
{
    return a->floored == b->floored && a->local_skipped == b->local_skipped &&
           (a->innov_dof == b->innov_dof || (isnan(a->innov_dof) && isnan(b->innov_dof)));
}

/* Blocks of rows the global methods work in (src/enkf.c's BLOCK_ROWS). */
#define BLOCK_ROWS 64

/* cfg on one process and on 1, 2, 3, 4 and 7 ranks: the same X on every
 * rank, bit for bit, and the same tallies. For the global methods in
 * blocks of 64 rows, a rank polls once a block it works out (when the
 * rows are shared out: two blocks at least). */
static void compare(const problem *pb, const sl_enkf_config *cfg, const char *label,
                    int check_polls)
{
    static const int ranks[] = {1, 2, 3, 4, 7};
    const size_t nN = pb->n * pb->N, nblk = (pb->n + BLOCK_ROWS - 1) / BLOCK_ROWS;
    shared_comm sh;
    job ref, jobs[MAX_RANKS];
    size_t ir;
    memset(&ref, 0, sizeof ref);
    job_start(&ref, pb, cfg, NULL);
    job_run(&ref);
    CHECK(ref.st == SL_OK, "%s: one process: %s", label, ref.err.message);
    CHECK(!same(ref.X, pb->X, nN), "%s: the analysis moved the ensemble", label);
    for (ir = 0; ir < sizeof ranks / sizeof *ranks; ir++) {
        const int P = ranks[ir];
        size_t polls = 0;
        int r;
        if (!run_ranks(pb, cfg, P, -1, 0, &sh, jobs))
            break;
        for (r = 0; r < P; r++) {
            const job *j = &jobs[r];
            CHECK(j->st == SL_OK, "%s: %d ranks, rank %d: %s", label, P, r, j->err.message);
            CHECK(j->st != SL_OK || same(j->X, ref.X, nN),
                  "%s: %d ranks, rank %d: the analysis differs from one process", label, P, r);
            CHECK(same_info(&j->info, &ref.info),
                  "%s: %d ranks, rank %d: tallies %lu %lu %g against %lu %lu %g", label, P, r,
                  (unsigned long)j->info.floored, (unsigned long)j->info.local_skipped,
                  j->info.innov_dof, (unsigned long)ref.info.floored,
                  (unsigned long)ref.info.local_skipped, ref.info.innov_dof);
            /* one gather a rank when shared out, none otherwise */
            if (check_polls && P > 1)
                CHECK(j->comm.gathers == (nblk >= 2 ? 1u : 0u),
                      "%s: %d ranks, rank %d: %lu gathers", label, P, r,
                      (unsigned long)j->comm.gathers);
            if (check_polls && P > 1 && nblk >= 2) {
                /* rank r's blocks: floor(r nblk / P) .. floor((r + 1) nblk / P) - 1 */
                const size_t mine = (size_t)(r + 1) * nblk / (size_t)P -
                                    (size_t)r * nblk / (size_t)P;
                CHECK(j->polls == mine, "%s: %d ranks, rank %d polled %lu times, owns %lu blocks",
                      label, P, r, (unsigned long)j->polls, (unsigned long)mine);
            }
            polls += j->polls;
        }
        if (check_polls && P > 1 && nblk >= 2)
            CHECK(polls == nblk, "%s: %d ranks polled %lu times in all for %lu blocks", label,
                  P, (unsigned long)polls, (unsigned long)nblk);
        for (r = 0; r < P; r++)
            job_free(&jobs[r]);
    }
    job_free(&ref);
}

/* The same with rows_local: each rank holds only its rows
 * (sl_enkf_local_rows) and ends with them as one process analyses them,
 * bit for bit, with the same tallies; the ranks' rows tile the ensemble
 * in order; when the rows are shared out the ranks gather once (the
 * heads: no rows travel), otherwise every rank holds them all and
 * gathers nothing. */
static void compare_local(const problem *pb, const sl_enkf_config *cfg0, const char *label)
{
    static const int ranks[] = {1, 2, 3, 4, 7};
    const size_t n = pb->n, N = pb->N;
    sl_enkf_config cfg = *cfg0;
    shared_comm sh;
    job ref, jobs[MAX_RANKS];
    size_t ir, *seen = ck_malloc(n * sizeof(size_t));
    cfg.rows_local = 1;
    memset(&ref, 0, sizeof ref);
    job_start(&ref, pb, &cfg, NULL);
    job_run(&ref);
    CHECK(ref.st == SL_OK, "%s: one process: %s", label, ref.err.message);
    for (ir = 0; ir < sizeof ranks / sizeof *ranks; ir++) {
        const int P = ranks[ir];
        size_t next = 0;
        int r, split;
        if (!run_ranks(pb, &cfg, P, -1, 0, &sh, jobs))
            break;
        split = P > 1 && !(jobs[0].lo == 0 && jobs[0].hi == n);
        memset(seen, 0, n * sizeof *seen);
        for (r = 0; r < P; r++) {
            const job *j = &jobs[r];
            const size_t ld = j->hi - j->lo;
            size_t i, c;
            int same_rows = 1;
            CHECK(j->st == SL_OK, "%s: %d ranks, rank %d: %s", label, P, r, j->err.message);
            for (c = 0; c < N; c++)
                for (i = 0; i < ld; i++)
                    same_rows = same_rows && memcmp(&j->X[i + c * ld],
                                                    &ref.X[job_row(j, i) + c * n],
                                                    sizeof(double)) == 0;
            CHECK(same_rows, "%s: %d ranks, rank %d: rows %lu .. %lu differ from one process",
                  label, P, r, (unsigned long)j->lo, (unsigned long)j->hi);
            CHECK(same_info(&j->info, &ref.info), "%s: %d ranks, rank %d: tallies", label, P, r);
            if (j->rows != NULL) {
                /* the LETKF: every row once over the ranks, and one
                 * gather of heads besides the agreement on the rows
                 * (and one after relaxation) */
                for (i = 0; i < ld; i++)
                    seen[j->rows[i]]++;
                next += ld;
                CHECK(j->comm.gathers ==
                          (P == 1 ? 0u : (cfg.rtpp > 0 || cfg.rtps > 0 ? 3u : 2u)),
                      "%s: %d ranks, rank %d: %lu gathers", label, P, r,
                      (unsigned long)j->comm.gathers);
            } else if (split) {
                CHECK(j->lo == next, "%s: %d ranks: rank %d starts at row %lu, not %lu", label,
                      P, r, (unsigned long)j->lo, (unsigned long)next);
                next = j->hi;
                CHECK(j->comm.gathers == 1, "%s: %d ranks, rank %d: %lu gathers", label, P, r,
                      (unsigned long)j->comm.gathers);
            } else {
                CHECK(ld == n && j->comm.gathers == 0,
                      "%s: %d ranks, rank %d: rows %lu .. %lu, %lu gathers", label, P, r,
                      (unsigned long)j->lo, (unsigned long)j->hi,
                      (unsigned long)j->comm.gathers);
            }
        }
        if (split || jobs[0].rows != NULL)
            CHECK(next == n, "%s: %d ranks: the rows end at %lu, not %lu", label, P,
                  (unsigned long)next, (unsigned long)n);
        if (jobs[0].rows != NULL && P > 1) {
            size_t i, once = 0;
            for (i = 0; i < n; i++)
                once += seen[i] == 1;
            CHECK(once == n, "%s: %d ranks: %lu of %lu rows held once", label, P,
                  (unsigned long)once, (unsigned long)n);
        }
        for (r = 0; r < P; r++)
            job_free(&jobs[r]);
    }
    job_free(&ref);
    ck_free(seen);
}

static sl_enkf_config config(int method)
{
    sl_enkf_config c;
    memset(&c, 0, sizeof c);
    c.method = method;
    c.inflation = 1.0;
    c.seed = 77;
    c.cycle = 4;
    c.threads = 1;
    return c;
}

static void check_methods(void)
{
    /* rows: one block, two, three and a bit, fewer blocks than ranks */
    static const size_t rows[] = {40, 128, 200};
    static const int methods[] = {SL_ENKF_STOCHASTIC, SL_ENKF_ETKF, SL_ENKF_ENSRF,
                                  SL_ENKF_EAKF};
    size_t in, q, v;
    for (in = 0; in < sizeof rows / sizeof *rows; in++) {
        problem pb;
        char label[96];
        make_problem(&pb, rows[in], 24, 30, 100 + in);
        for (q = 0; q < sizeof methods / sizeof *methods; q++)
            for (v = 0; v < 4; v++) {
                sl_enkf_config c = config(methods[q]);
                /* v: plain; inflation and relaxation; localisation; the
                 * ETKF's other form (observation space: m < N) */
                if (v == 1) {
                    c.inflation = 1.15;
                    c.rtpp = 0.3;
                    c.rtps = 0.2;
                }
                if (v == 2) {
                    if (methods[q] == SL_ENKF_ETKF)
                        continue;
                    c.loc = &pb.loc;
                }
                if (v == 3) {
                    if (methods[q] != SL_ENKF_ETKF)
                        continue;
                    c.etkf_form = SL_ETKF_OBSERVATION;
                }
                snprintf(label, sizeof label, "%s, n = %lu, variant %lu",
                         sl_enkf_method_name(methods[q]), (unsigned long)rows[in],
                         (unsigned long)v);
                /* the observation-space form works in blocks of its own size */
                compare(&pb, &c, label,
                        !(methods[q] == SL_ENKF_ETKF && (v == 3 || pb.m < pb.N)));
                compare_local(&pb, &c, label);
            }
        /* the ETKF in ensemble space (m >= N) */
        {
            problem pe;
            sl_enkf_config c = config(SL_ENKF_ETKF);
            make_problem(&pe, rows[in], 12, 30, 200 + in);
            c.inflation = 1.05;
            snprintf(label, sizeof label, "etkf ensemble space, n = %lu", (unsigned long)rows[in]);
            compare(&pe, &c, label, 1);
            compare_local(&pe, &c, label);
            free_problem(&pe);
        }
        /* the LETKF: grid points (two rows each) shared out */
        {
            sl_enkf_config c = config(SL_ENKF_LETKF);
            c.loc = &pb.loc;
            snprintf(label, sizeof label, "letkf, n = %lu", (unsigned long)rows[in]);
            compare(&pb, &c, label, 0);
            compare_local(&pb, &c, label);
            c.inflation = 1.1;
            c.rtps = 0.5;
            c.threads = 2;
            snprintf(label, sizeof label, "letkf, inflated, 2 threads, n = %lu",
                     (unsigned long)rows[in]);
            compare(&pb, &c, label, 0);
            /* two rows a place, and the most a place holds not given */
            pb.loc.group_max = in == 1 ? 0 : 2;
            compare_local(&pb, &c, label);
            pb.loc.group_max = 0;
        }
        free_problem(&pb);
    }
    /* the LETKF with points no observation reaches: the skipped tally is
     * summed over the ranks */
    {
        problem pb;
        sl_enkf_config c = config(SL_ENKF_LETKF);
        size_t k;
        make_problem(&pb, 300, 16, 10, 7);
        for (k = 0; k < pb.m; k++) {
            pb.opos[k] = (double)k; /* all at the start of the line */
            pb.oc[k] = 3.0;
        }
        c.loc = &pb.loc;
        compare(&pb, &c, "letkf with unobserved points", 0);
        compare_local(&pb, &c, "letkf with unobserved points");
        free_problem(&pb);
    }
}

/* A rank whose poll stops it: its own "interrupted", "rankfailed" naming
 * it on every other rank; a row that overflows on the last rank: the
 * same "nonfinite" everywhere. */
static void check_failures(void)
{
    static const int methods[] = {SL_ENKF_STOCHASTIC, SL_ENKF_ETKF, SL_ENKF_ENSRF,
                                  SL_ENKF_LETKF};
    problem pb;
    shared_comm sh;
    job jobs[MAX_RANKS];
    size_t q;
    int P, r;
    make_problem(&pb, 200, 20, 24, 11);
    for (q = 0; q < sizeof methods / sizeof *methods; q++) {
        sl_enkf_config c = config(methods[q]);
        const char *name = sl_enkf_method_name(methods[q]);
        if (methods[q] == SL_ENKF_LETKF)
            c.loc = &pb.loc;
        for (P = 2; P <= 4; P++) {
            const int stopper = P - 1;
            if (!run_ranks(&pb, &c, P, stopper, 1, &sh, jobs))
                return;
            for (r = 0; r < P; r++) {
                const job *j = &jobs[r];
                if (r == stopper)
                    CHECK(j->st == SL_EINTERRUPT && strcmp(j->err.reason, "interrupted") == 0,
                          "%s: %d ranks: the stopping rank reports %s", name, P, j->err.reason);
                else
                    CHECK(j->st != SL_OK && strcmp(j->err.reason, "rankfailed") == 0 &&
                              strstr(j->err.message, "rank") != NULL &&
                              j->err.message[5] == (char)('0' + stopper),
                          "%s: %d ranks, rank %d: %s (%s)", name, P, r, j->err.reason,
                          j->err.message);
                job_free(&jobs[r]);
            }
        }
    }
    /* rows of the last block far out of scale: their mean overflows on the
     * rank that owns them only; the transform is fine */
    {
        problem big;
        size_t i, j;
        make_problem(&big, 200, 20, 24, 12);
        for (j = 0; j < big.N; j++)
            for (i = 195; i < 200; i++)
                big.X[i + j * big.n] = (j % 2 ? 1.0 : -1.0) * 1.5e308;
        for (q = 0; q < 3; q++) {
            sl_enkf_config c = config(methods[q]);
            job ref;
            memset(&ref, 0, sizeof ref);
            job_start(&ref, &big, &c, NULL);
            job_run(&ref);
            CHECK(ref.st == SL_ENUMERIC && strcmp(ref.err.reason, "nonfinite") == 0,
                  "%s: one process with rows out of scale: %s", sl_enkf_method_name(methods[q]),
                  ref.err.reason);
            job_free(&ref);
            for (P = 2; P <= 4; P++) {
                if (!run_ranks(&big, &c, P, -1, 0, &sh, jobs))
                    return;
                for (r = 0; r < P; r++) {
                    CHECK(jobs[r].st == SL_ENUMERIC &&
                              strcmp(jobs[r].err.reason, "nonfinite") == 0,
                          "%s: %d ranks, rank %d with rows out of scale: %s",
                          sl_enkf_method_name(methods[q]), P, r, jobs[r].err.reason);
                    job_free(&jobs[r]);
                }
            }
        }
        free_problem(&big);
    }
    /* rows_local: a row that is not finite on entry, held by the last
     * rank alone: there "nonfinite" naming the row by its number in the
     * whole ensemble, "rankfailed" naming that rank everywhere else (no
     * rank hangs in the gather) */
    {
        problem bad;
        make_problem(&bad, 200, 20, 24, 13);
        bad.X[198 + 5 * bad.n] = HUGE_VAL;
        for (q = 0; q < 3; q++) {
            sl_enkf_config c = config(methods[q]);
            c.rows_local = 1;
            for (P = 2; P <= 4; P++) {
                if (!run_ranks(&bad, &c, P, -1, 0, &sh, jobs))
                    return;
                for (r = 0; r < P; r++) {
                    const job *j = &jobs[r];
                    if (r == P - 1)
                        CHECK(j->st == SL_EINVAL && strcmp(j->err.reason, "nonfinite") == 0 &&
                                  strstr(j->err.message, "X(199,6)") != NULL,
                              "%s, rows_local, %d ranks: the rank with the bad row: %s (%s)",
                              sl_enkf_method_name(methods[q]), P, j->err.reason,
                              j->err.message);
                    else
                        CHECK(j->st != SL_OK && strcmp(j->err.reason, "rankfailed") == 0 &&
                                  j->err.message[5] == (char)('0' + P - 1),
                              "%s, rows_local, %d ranks, rank %d: %s (%s)",
                              sl_enkf_method_name(methods[q]), P, r, j->err.reason,
                              j->err.message);
                    job_free(&jobs[r]);
                }
            }
            /* and a rank whose poll stops it */
            for (P = 2; P <= 3; P++) {
                if (!run_ranks(&pb, &c, P, 0, 1, &sh, jobs))
                    return;
                for (r = 0; r < P; r++) {
                    const job *j = &jobs[r];
                    CHECK(r == 0 ? j->st == SL_EINTERRUPT
                                 : (j->st != SL_OK && strcmp(j->err.reason, "rankfailed") == 0),
                          "%s, rows_local, %d ranks, rank %d stopped by rank 0: %s",
                          sl_enkf_method_name(methods[q]), P, r, j->err.reason);
                    job_free(&jobs[r]);
                }
            }
        }
        free_problem(&bad);
    }
    free_problem(&pb);
}

/* The workspace: one rank asks what one process asks; more ranks, the
 * gather's two parts of the rows besides (about 2 n N doubles). */
static void check_workspace(void)
{
    static const int methods[] = {SL_ENKF_STOCHASTIC, SL_ENKF_ETKF, SL_ENKF_ENSRF,
                                  SL_ENKF_EAKF, SL_ENKF_LETKF};
    static const size_t rows[] = {1, 64, 500};
    problem pb;
    size_t q, i;
    int P;
    make_problem(&pb, 8, 10, 5, 3);
    for (q = 0; q < sizeof methods / sizeof *methods; q++)
        for (i = 0; i < sizeof rows / sizeof *rows; i++)
            for (P = 1; P <= 7; P++) {
                sl_enkf_config c = config(methods[q]), c1;
                sl_enkf_ranks rk;
                size_t one, split, n = rows[i];
                memset(&rk, 0, sizeof rk);
                rk.size = P;
                rk.rank = P - 1;
                c.loc = &pb.loc;
                c1 = c;
                c.ranks = &rk;
                one = sl_enkf_workspace(&c1, n, 10, 5, 0);
                split = sl_enkf_workspace(&c, n, 10, 5, 0);
                CHECK(one > 0 && (P == 1 ? split == one
                                         : split >= one + 2 * n * 10 * sizeof(double)),
                      "%s, %lu rows, %d ranks: workspace %lu against %lu",
                      sl_enkf_method_name(methods[q]), (unsigned long)n, P,
                      (unsigned long)split, (unsigned long)one);
                if (methods[q] != SL_ENKF_LETKF) {
                    /* with rows_local only the heads' buffers */
                    size_t local;
                    c.rows_local = 1;
                    local = sl_enkf_workspace(&c, n, 10, 5, 0);
                    CHECK(local >= one && local <= one + (size_t)(P + 1) * 64 * sizeof(double) + 256,
                          "%s, %lu rows, %d ranks, rows_local: workspace %lu against %lu",
                          sl_enkf_method_name(methods[q]), (unsigned long)n, P,
                          (unsigned long)local, (unsigned long)one);
                }
            }
    free_problem(&pb);
}

/* The LETKF's rows are not a range (sl_enkf_local_rows has none for it);
 * with rows_local a localisation whose places hold more rows than its
 * group_max says (which sized what a rank holds) is refused on every
 * rank, none left waiting. */
static void check_local_letkf(void)
{
    problem pb;
    sl_enkf_config c = config(SL_ENKF_LETKF);
    shared_comm sh;
    job jobs[MAX_RANKS];
    size_t lo = 7, hi = 7;
    int r;
    make_problem(&pb, 20, 10, 5, 4);
    c.loc = &pb.loc;
    c.rows_local = 1;
    CHECK(sl_enkf_local_rows(&c, 20, 10, 5, 0, &lo, &hi) == 0 && lo == 7 && hi == 7,
          "the LETKF has no range of rows");
    pb.loc.group_max = 1; /* two rows a place */
    if (run_ranks(&pb, &c, 3, -1, 0, &sh, jobs))
        for (r = 0; r < 3; r++) {
            CHECK(jobs[r].st == SL_EINVAL && strcmp(jobs[r].err.reason, "badlocalization") == 0,
                  "a place with more rows than group_max, rank %d: %s", r, jobs[r].err.reason);
            job_free(&jobs[r]);
        }
    free_problem(&pb);
}

int main(void)
{
    check_local_letkf();
    check_workspace();
    check_methods();
    check_failures();
    CHECK_DONE("test_enkf_ranks");
}
