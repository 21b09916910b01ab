/* test_pf_ranks.c - the particle filter split across ranks
 * (sl_pf_run_ranks), with the ranks played by threads of this process and
 * collectives in shared memory: every output equals the single-process
 * run (sl_pf_run) bit for bit for 1 to 7 ranks, with an exchange of one
 * member a round as well as the default, split by members (the particle
 * filter) or by forecasts only (a lag, tempering, history, the ensemble
 * Kalman analyses); a rank whose model fails fails the run on every
 * rank; the settings it refuses, each with its reason. */
#include "check.h"
#include "line_localization.h"
#include "ranks_threads.h"
#include "sluice/integrate.h"
#include "sluice/loglik.h"
#include "sluice/pf.h"
#include "sluice/prior.h"
#include "sluice/rng.h"
#include "sluice/stats.h"

#include <math.h>
#include <pthread.h>
#include <stdint.h>
#include <string.h>

/* ------------------------------------------------------ run buffers */

typedef struct {
    sl_pf_output out;
    double *X, *P, *w;
    void *work;
    sl_status st;
    sl_error err;
} run_buf;

static void *zalloc(size_t count, size_t size)
{
    return ck_calloc(count ? count : 1, size);
}

static void run_alloc(run_buf *r, const sl_pf_config *cfg, const double *X0, const double *P0,
                      size_t work)
{
    const size_t n = cfg->model->n_state, p = cfg->model->n_param, N = cfg->N, T = cfg->T,
                 v = n + p, nq = cfg->nq, m = cfg->obs_first[T];
    memset(r, 0, sizeof *r);
    r->out.mean = zalloc(v * T, 8);
    r->out.quant = zalloc(v * nq * T, 8);
    r->out.ess = zalloc(T, 8);
    r->out.logz = zalloc(T, 8);
    r->out.resampled = zalloc(T, 8);
    r->out.degenerate = zalloc(T, 8);
    r->out.skipped = zalloc(T, 8);
    r->out.nonfinite = zalloc(T, 8);
    r->out.fmean = zalloc(v * T, 8);
    r->out.distinct = zalloc(p * T, 8);
    r->out.pspread = zalloc(p * T, 8);
    r->out.temper_steps = zalloc(T, 8);
    r->out.loglik_evals = zalloc(T, 8);
    r->out.move_sweeps = zalloc(T, 8);
    r->out.move_accept = zalloc(T, 8);
    r->out.inflation = zalloc(T, 8);
    r->out.floored = zalloc(T, 8);
    r->out.nanpred = zalloc(T, 8);
    r->out.pit = zalloc(m, 8);
    if (cfg->lag > 0) {
        r->out.smean = zalloc(v * T, 8);
        r->out.squant = zalloc(v * nq * T, 8);
        r->out.sanc = zalloc(T, 8);
    }
    r->X = zalloc(n * N, 8);
    r->P = zalloc(p * N, 8);
    r->w = zalloc(N, 8);
    r->work = zalloc(work, 1);
    memcpy(r->X, X0, n * N * 8);
    memcpy(r->P, P0, p * N * 8);
}

static void run_free(run_buf *r)
{
    double **f[] = {&r->out.mean, &r->out.quant, &r->out.ess, &r->out.logz,
                    &r->out.resampled, &r->out.degenerate, &r->out.skipped, &r->out.nonfinite,
                    &r->out.fmean, &r->out.distinct, &r->out.pspread, &r->out.temper_steps,
                    &r->out.loglik_evals, &r->out.move_sweeps, &r->out.move_accept,
                    &r->out.nanpred, &r->out.pit, &r->out.smean, &r->out.squant,
                    &r->out.sanc, &r->out.inflation, &r->out.floored, &r->X, &r->P, &r->w};
    size_t i;
    for (i = 0; i < sizeof f / sizeof *f; i++)
        ck_free(*f[i]);
    ck_free(r->work);
    memset(r, 0, sizeof *r);
}

/* cfg on one process, from X0 and P0, into r (run_alloc, then sl_pf_run;
 * the status in r->st). */
static void run_one(run_buf *r, const sl_pf_config *cfg, const double *X0, const double *P0)
{
    run_alloc(r, cfg, X0, P0, sl_pf_workspace(cfg));
    r->st = sl_pf_run(cfg, r->X, r->P, r->w, r->work, &r->out, &r->err);
}

/* bit for bit, NaN included */
static int same(const double *a, const double *b, size_t count)
{
    return count == 0 || memcmp(a, b, count * sizeof(double)) == 0;
}

static int identical(const sl_pf_config *cfg, const run_buf *a, const run_buf *b,
                     char *what)
{
    const size_t n = cfg->model->n_state, p = cfg->model->n_param, N = cfg->N, T = cfg->T,
                 v = n + p, nq = cfg->nq, m = cfg->obs_first[T];
    struct {
        const char *name;
        const double *x, *y;
        size_t count;
    } f[] = {{"mean", a->out.mean, b->out.mean, v * T},
             {"quant", a->out.quant, b->out.quant, v * nq * T},
             {"ess", a->out.ess, b->out.ess, T},
             {"logz", a->out.logz, b->out.logz, T},
             {"resampled", a->out.resampled, b->out.resampled, T},
             {"degenerate", a->out.degenerate, b->out.degenerate, T},
             {"skipped", a->out.skipped, b->out.skipped, T},
             {"nonfinite", a->out.nonfinite, b->out.nonfinite, T},
             {"fmean", a->out.fmean, b->out.fmean, v * T},
             {"distinct", a->out.distinct, b->out.distinct, p * T},
             {"pspread", a->out.pspread, b->out.pspread, p * T},
             {"temper_steps", a->out.temper_steps, b->out.temper_steps, T},
             {"loglik_evals", a->out.loglik_evals, b->out.loglik_evals, T},
             {"move_sweeps", a->out.move_sweeps, b->out.move_sweeps, T},
             {"move_accept", a->out.move_accept, b->out.move_accept, T},
             {"nanpred", a->out.nanpred, b->out.nanpred, T},
             {"pit", a->out.pit, b->out.pit, m},
             {"smean", a->out.smean, b->out.smean, cfg->lag > 0 ? v * T : 0},
             {"squant", a->out.squant, b->out.squant, cfg->lag > 0 ? v * nq * T : 0},
             {"sanc", a->out.sanc, b->out.sanc, cfg->lag > 0 ? T : 0},
             {"inflation", a->out.inflation, b->out.inflation, T},
             {"floored", a->out.floored, b->out.floored, T},
             {"X", a->X, b->X, n * N},
             {"P", a->P, b->P, p * N},
             {"w", a->w, b->w, N},
             {"log_evidence", &a->out.log_evidence, &b->out.log_evidence, 1}};
    size_t i;
    for (i = 0; i < sizeof f / sizeof *f; i++)
        if (!same(f[i].x, f[i].y, f[i].count)) {
            strcpy(what, f[i].name);
            return 0;
        }
    if (a->out.steps != b->out.steps) {
        strcpy(what, "steps");
        return 0;
    }
    return 1;
}

/* ------------------------------------------------- distributed runs */

typedef struct {
    const sl_pf_config *cfg;
    const double *X0, *P0;
    rank_comm comm;
    sl_pf_ranks rk;
    run_buf r;
} rank_job;

static void *rank_main(void *arg)
{
    rank_job *j = arg;
    j->r.st = sl_pf_run_ranks(j->cfg, &j->rk, j->r.X, j->r.P, j->r.w, j->r.work, &j->r.out,
                              &j->r.err);
    return NULL;
}

/* Run cfg on P ranks; every rank's result in jobs[0 .. P-1]. */
static int run_ranks(const sl_pf_config *cfg, int P, size_t chunk, const double *X0,
                     const double *P0, shared_comm *sh, rank_job *jobs)
{
    int r, ok;
    ranks_open(sh, P);
    for (r = 0; r < P; r++) {
        rank_job *j = &jobs[r];
        size_t bytes;
        memset(j, 0, sizeof *j);
        j->cfg = cfg;
        j->comm.sh = sh;
        j->comm.rank = r;
        j->rk.ctx = &j->comm;
        j->rk.rank = r;
        j->rk.size = P;
        j->rk.chunk_bytes = chunk;
        j->rk.allgather = fake_allgather;
        j->rk.exchange = fake_exchange;
        bytes = sl_pf_ranks_workspace(cfg, &j->rk);
        CHECK(bytes > 0, "workspace of rank %d of %d", r, P);
        run_alloc(&j->r, cfg, X0, P0, bytes);
    }
    ok = ranks_play(sh, rank_main, jobs, sizeof *jobs);
    CHECK(ok, "threads started");
    CHECK(!sh->mismatch, "ranks disagreed on the sizes of a collective (%d ranks)", P);
    return ok;
}

static void compare_ranks(const sl_pf_config *cfg, const run_buf *ref, const double *X0,
                          const double *P0, const char *label, int min_exchanged)
{
    static const int ranks[] = {1, 2, 3, 4, 7};
    static const size_t chunks[] = {0, 1};
    shared_comm sh;
    rank_job jobs[MAX_RANKS];
    size_t ir, ic;
    for (ir = 0; ir < sizeof ranks / sizeof *ranks; ir++)
        for (ic = 0; ic < 2; ic++) {
            const int P = ranks[ir];
            size_t moved = 0;
            int r;
            if (!run_ranks(cfg, P, chunks[ic], X0, P0, &sh, jobs))
                return;
            for (r = 0; r < P; r++) {
                char what[40] = "";
                CHECK(jobs[r].r.st == SL_OK, "%s: %d ranks, rank %d: %s", label, P, r,
                      jobs[r].r.err.message);
                if (jobs[r].r.st == SL_OK)
                    CHECK(identical(cfg, ref, &jobs[r].r, what),
                          "%s: %d ranks (chunk %lu), rank %d: %s differs from one process",
                          label, P, (unsigned long)chunks[ic], r, what);
                moved += jobs[r].comm.exchanged;
                run_free(&jobs[r].r);
            }
            /* the case must exercise the exchange it is meant to */
            if (P > 1 && min_exchanged)
                CHECK(moved > 0, "%s: %d ranks moved no member", label, P);
            if (P == 1)
                CHECK(moved == 0, "%s: one rank exchanged %lu bytes", label,
                      (unsigned long)moved);
        }
}

/* A configuration of the observations and defaults every case shares. */
static void base_config(sl_pf_config *c, const sl_model *md, size_t N, size_t T,
                        const double *times, const size_t *first, const double *y,
                        const double *sg, const double *aux, const int *fam,
                        const size_t *var)
{
    memset(c, 0, sizeof *c);
    c->model = md;
    c->N = N;
    c->T = T;
    c->times = times;
    c->obs_first = first;
    c->y = y;
    c->sigma = sg;
    c->aux = aux;
    c->family = fam;
    c->var = var;
    c->param_move = &sl_param_move_fixed;
    c->resampler = &sl_resampler_systematic;
    c->threshold = 0.5;
    c->threads = 1;
}

/* ----------------------------------------------------- the cases */

/* GR4J, 4 parameters (two drawn, lognormal, moved by the kernel at
 * resampling), rain and evaporation perturbed, flows observed (lognormal)
 * with gaps: a joint state-parameter run as users make them. */
static void check_gr4j(void)
{
    enum { N = 203, T = 60, NS = 63 };
    const sl_model_def *d = sl_model_def_find("gr4j");
    static double times[T], Fv[T * 2], Ft[T], y[T], sg[T], aux[T];
    static size_t first[T + 1], var[T];
    static int fam[T];
    const int noise[2] = {SL_FORCING_MULTIPLICATIVE, SL_FORCING_MULTIPLICATIVE};
    const double fsd[2] = {0.3, 0.1}, fphi[2] = {0.5, 0.0}, probs[3] = {0.05, 0.5, 0.95};
    sl_transform tr[4];
    sl_model md;
    sl_def_model dm;
    sl_pf_config cfg;
    sl_error err;
    double *X0 = ck_malloc(NS * N * 8), *P0 = ck_malloc(4 * N * 8);
    run_buf ref;
    size_t j, k, i, nres = 0;
    CHECK(d != NULL, "gr4j");
    if (d == NULL)
        return;
    CHECK(sl_def_model_init(&md, &dm, d, 0, NULL, 0, NULL, NULL, &err) == SL_OK, "gr4j model");
    for (k = 0; k < T; k++) {
        sl_stream s;
        sl_stream_init(&s, 3, 0, (uint32_t)k, SL_PURPOSE_USER);
        Ft[k] = (double)k;
        times[k] = (double)(k + 1);
        Fv[k] = sl_stream_uniform(&s) < 0.4 ? -6.0 * log(sl_stream_uniform(&s)) : 0.0;
        Fv[T + k] = 2.0;
        first[k] = k;
        var[k] = NS - 1; /* Q */
        y[k] = k % 7 == 3 ? (double)NAN : 0.5 + 0.02 * (double)k;
        sg[k] = 0.2;
        aux[k] = 0.0;
        fam[k] = SL_FAMILY_LOGNORMAL;
    }
    first[T] = T;
    for (i = 0; i < 4; i++)
        tr[i] = sl_transform_for_bounds(d->p_lower[i], d->p_upper[i]);
    for (j = 0; j < N; j++) {
        sl_stream s;
        sl_stream_init(&s, 11, (uint32_t)j, 0, SL_PURPOSE_PRIOR);
        for (i = 0; i < 4; i++)
            P0[i + j * 4] = d->p_default[i];
        P0[0 + j * 4] = exp(log(300.0) + 0.3 * sl_stream_normal(&s));
        P0[2 + j * 4] = exp(log(80.0) + 0.3 * sl_stream_normal(&s));
        for (i = 0; i < NS; i++)
            X0[i + j * NS] = d->x0 != NULL ? d->x0[i] : 0.0;
        X0[0 + j * NS] = 100.0 + 50.0 * sl_stream_uniform(&s);
        X0[1 + j * NS] = 30.0 + 20.0 * sl_stream_uniform(&s);
    }
    base_config(&cfg, &md, N, T, times, first, y, sg, aux, fam, var);
    cfg.forcing.q = 2;
    cfg.forcing.nt = T;
    cfg.forcing.time = Ft;
    cfg.forcing.value = Fv;
    cfg.forcing.hold = 1;
    cfg.forcing.noise = noise;
    cfg.forcing.sd = fsd;
    cfg.forcing.phi = fphi;
    cfg.ptrans = tr;
    cfg.param_move = &sl_param_move_kernel;
    cfg.move.lw_delta = 0.98;
    cfg.move.kernel_scale = 1.0;
    cfg.move.min_ess = SL_KERNEL_MIN_ESS;
    cfg.seed = 2026;
    cfg.nq = 3;
    cfg.probs = probs;
    run_one(&ref, &cfg, X0, P0);
    CHECK(ref.st == SL_OK, "gr4j single process: %s", ref.err.message);
    if (ref.st == SL_OK) {
        for (k = 0; k < T; k++)
            nres += ref.out.resampled[k] != 0;
        /* the run exercises resampling, the move and the gaps */
        CHECK(nres >= 5 && nres < T, "gr4j resampled at %lu of %d cycles", (unsigned long)nres,
              T);
        CHECK(ref.out.skipped[3] == 1, "gr4j: the gap skipped");
        CHECK(ref.out.distinct[0 + (T - 1) * 4] > 20, "gr4j: x1 kept its spread (%g values)",
              ref.out.distinct[0 + (T - 1) * 4]);
        compare_ranks(&cfg, &ref, X0, P0, "gr4j kernel", 1);
        /* summaries off: the rows are not gathered, the rest the same */
        cfg.no_summary = 1;
        run_free(&ref);
        run_one(&ref, &cfg, X0, P0);
        CHECK(ref.st == SL_OK, "gr4j without summaries: %s", ref.err.message);
        if (ref.st == SL_OK)
            compare_ranks(&cfg, &ref, X0, P0, "gr4j no summary", 1);
        cfg.no_summary = 0;
        /* stratified resampling and a threshold of 1 (every cycle) */
        cfg.resampler = &sl_resampler_stratified;
        cfg.threshold = 1.0;
        run_free(&ref);
        run_one(&ref, &cfg, X0, P0);
        CHECK(ref.st == SL_OK, "gr4j stratified: %s", ref.err.message);
        if (ref.st == SL_OK)
            compare_ranks(&cfg, &ref, X0, P0, "gr4j stratified", 1);
    }
    run_free(&ref);
    ck_free(X0);
    ck_free(P0);
}

/* The flood model under RK4 (a span model: each rank takes its blocks
 * through an interval's steps in one call), flood levels perturbed per
 * member (the draws keyed by the global member index), muS drawn and moved
 * by the kernel, settlement size observed yearly (lognormal): the same
 * bits on 1 to 7 ranks as in one process. */
static void check_flood_spans(void)
{
    enum { N = 203, T = 12, NS = 6, NP = 10 };
    const sl_model_def *d = sl_model_def_find("flood");
    static double times[T], y[T], sg[T], aux[T], ev_t[T], ev_v[T];
    static size_t first[T + 1], var[T];
    static int fam[T];
    const int ev_noise[1] = {SL_FORCING_MULTIPLICATIVE};
    const double ev_sd[1] = {0.3};
    sl_transform tr[NP];
    sl_events ev;
    sl_model md;
    sl_def_model dm;
    sl_pf_config cfg;
    sl_error err;
    double *X0 = ck_malloc(NS * N * 8), *P0 = ck_malloc(NP * N * 8);
    run_buf ref;
    size_t j, k, i;
    CHECK(d != NULL, "flood");
    if (d == NULL)
        return;
    for (k = 0; k < T; k++) {
        times[k] = (double)(k + 1);
        ev_t[k] = (double)k + 0.5;
        ev_v[k] = k % 3 == 1 ? 2.5 : 0.6;
        first[k] = k;
        var[k] = 0; /* G */
        y[k] = 0.01 * exp(0.05 * (double)k);
        sg[k] = 0.1;
        aux[k] = 0.0;
        fam[k] = SL_FAMILY_LOGNORMAL;
    }
    first[T] = T;
    ev.count = T;
    ev.nv = 1;
    ev.time = ev_t;
    ev.value = ev_v;
    ev.noise = ev_noise;
    ev.sd = ev_sd;
    ev.seed = 17;
    CHECK(sl_def_model_init(&md, &dm, d, 0, sl_integrator_find("rk4"), 0.05, NULL, &ev,
                            &err) == SL_OK,
          "flood model: %s", err.message);
    CHECK(md.span != NULL && md.member_draws, "the flood model has a span and draws by member");
    for (i = 0; i < NP; i++)
        tr[i] = sl_transform_for_bounds(d->p_lower[i], d->p_upper[i]);
    for (j = 0; j < N; j++) {
        sl_stream s;
        sl_stream_init(&s, 12, (uint32_t)j, 0, SL_PURPOSE_PRIOR);
        for (i = 0; i < NP; i++)
            P0[i + j * NP] = d->p_default[i];
        P0[9 + j * NP] = exp(log(0.215) + 0.5 * sl_stream_normal(&s)); /* muS */
        for (i = 0; i < NS; i++)
            X0[i + j * NS] = d->x0[i];
        X0[0 + j * NS] = 0.01 * exp(0.2 * sl_stream_normal(&s));
    }
    base_config(&cfg, &md, N, T, times, first, y, sg, aux, fam, var);
    cfg.ptrans = tr;
    cfg.param_move = &sl_param_move_kernel;
    cfg.move.kernel_scale = 1.0;
    cfg.move.min_ess = SL_KERNEL_MIN_ESS;
    cfg.seed = 99;
    run_one(&ref, &cfg, X0, P0);
    CHECK(ref.st == SL_OK, "flood single process: %s", ref.err.message);
    if (ref.st == SL_OK) {
        size_t nres = 0;
        for (k = 0; k < T; k++)
            nres += ref.out.resampled[k] != 0;
        CHECK(nres >= 1, "flood: resampled at %lu of %d cycles", (unsigned long)nres, T);
        compare_ranks(&cfg, &ref, X0, P0, "flood spans", 1);
    }
    run_free(&ref);
    ck_free(X0);
    ck_free(P0);
}

/* One observation a cycle at times 1 .. T: state 0, Gaussian with sd
 * sigma, the value at cycle k (0-based) slope k + offset. */
static void first_state_obs(size_t T, double slope, double offset, double sigma,
                            double *times, size_t *first, size_t *var, double *y, double *sg,
                            double *aux, int *fam)
{
    size_t k;
    for (k = 0; k < T; k++) {
        times[k] = 1.0 + (double)k;
        first[k] = k;
        var[k] = 0;
        y[k] = slope * (double)k + offset;
        sg[k] = sigma;
        aux[k] = 0.0;
        fam[k] = SL_FAMILY_GAUSSIAN;
    }
    first[T] = T;
}

/* A model of its own: the 2-state linear model plus model noise keyed by
 * the member index (member_draws), failing at step `fail_step` for
 * member `fail_member` when asked. */
static sl_model lin_md;
static long fail_member = -1, fail_step = -1;

static sl_status noisy_step(const sl_model *model, double t, double t_end, size_t first,
                            size_t count, double *X, const double *P, const double *U,
                            uint64_t seed, uint32_t step, double *work, sl_error *err)
{
    size_t j;
    sl_status st = lin_md.step(&lin_md, t, t_end, first, count, X, P, U, seed, step, work, err);
    (void)model;
    if (st != SL_OK)
        return st;
    for (j = 0; j < count; j++) {
        sl_stream s;
        if ((long)(first + j) == fail_member && (long)step == fail_step)
            return sl_fail(err, SL_EMODEL, "modelfailed", "member %lu failed at step %u",
                           (unsigned long)(first + j + 1), step);
        sl_stream_init(&s, seed, (uint32_t)(first + j), step, SL_PURPOSE_MODEL_NOISE);
        X[0 + j * 2] += 0.05 * sl_stream_normal(&s);
    }
    return SL_OK;
}

static void check_member_draws_and_failure(void)
{
    enum { N = 50, T = 8 };
    static const double A[4] = {0.9, -0.2, 0.1, 0.95}, B[2] = {0.5, 0.1}, c[2] = {0.0, 0.1},
                        L[4] = {0.3, 0.1, 0.0, 0.2};
    static const sl_linear lin = {2, 1, A, B, c, L};
    static double times[T], y[T], sg[T], aux[T], ft[T + 2], fv[T + 2];
    static size_t first[T + 1], var[T];
    static int fam[T];
    const double snoise[2] = {0.02, 0.01}, probs[2] = {0.25, 0.75};
    sl_model md;
    sl_pf_config cfg;
    sl_error err;
    double X0[2 * N], P0[1];
    run_buf ref;
    shared_comm sh;
    rank_job jobs[MAX_RANKS];
    size_t j, k;
    int r;
    CHECK(sl_linear_model(&lin_md, &lin, 0.5, &err) == SL_OK, "linear model: %s", err.message);
    md = lin_md;
    md.step = noisy_step;
    md.member_draws = 1;
    md.thread_safe = 1;
    for (k = 0; k < T + 2; k++) {
        ft[k] = (double)k;
        fv[k] = sin((double)k);
    }
    first_state_obs(T, 0.3, -0.5, 0.4, times, first, var, y, sg, aux, fam);
    for (j = 0; j < 2 * N; j++) {
        sl_stream s;
        sl_stream_init(&s, 9, (uint32_t)j, 0, SL_PURPOSE_PRIOR);
        X0[j] = sl_stream_normal(&s);
    }
    P0[0] = 0.0;
    base_config(&cfg, &md, N, T, times, first, y, sg, aux, fam, var);
    cfg.forcing.q = 1;
    cfg.forcing.nt = T + 2;
    cfg.forcing.time = ft;
    cfg.forcing.value = fv;
    cfg.state_noise = snoise;
    cfg.threshold = 0.8;
    cfg.seed = 5;
    cfg.nq = 2;
    cfg.probs = probs;
    run_one(&ref, &cfg, X0, P0);
    CHECK(ref.st == SL_OK, "member draws, one process: %s", ref.err.message);
    if (ref.st == SL_OK)
        compare_ranks(&cfg, &ref, X0, P0, "member draws", 1);
    run_free(&ref);
    /* runs the members cannot split: the forecasts split, the rest whole
     * on every rank, still the one-process run bit for bit; and the
     * global ensemble Kalman methods, split by members */
    {
        static const char *const names[] = {"lag", "tempering", "history", "etkf", "enkf",
                                            "wenkf"};
        size_t v;
        for (v = 0; v < sizeof names / sizeof *names; v++) {
            sl_pf_config c2 = cfg;
            if (v == 0)
                c2.lag = 3;
            else if (v == 1) {
                c2.temper.ess = 0.9;
                c2.temper.max_steps = 20;
            } else if (v == 2)
                c2.keep_history = 1;
            else if (v == 3)
                c2.analysis = &sl_analysis_etkf;
            else if (v == 4)
                c2.analysis = &sl_analysis_enkf;
            else
                c2.wenkf = 1;
            CHECK(sl_pf_ranks_by_members(&c2) == (v == 3 || v == 4), "%s: %s by members",
                  names[v], v == 3 || v == 4 ? "split" : "not split");
            run_one(&ref, &c2, X0, P0);
            CHECK(ref.st == SL_OK, "%s, one process: %s", names[v], ref.err.message);
            if (ref.st == SL_OK)
                compare_ranks(&c2, &ref, X0, P0, names[v], 0);
            run_free(&ref);
        }
    }

    /* member 37 (rank 2 of 3: members 33 .. 49) fails at step 5 */
    fail_member = 37;
    fail_step = 5;
    if (run_ranks(&cfg, 3, 0, X0, P0, &sh, jobs)) {
        for (r = 0; r < 3; r++) {
            if (r == 2)
                CHECK(jobs[r].r.st == SL_EMODEL &&
                          strcmp(jobs[r].r.err.reason, "modelfailed") == 0 &&
                          strstr(jobs[r].r.err.message, "member 38") != NULL,
                      "the failing rank keeps its own error: %d %s %s", jobs[r].r.st,
                      jobs[r].r.err.reason, jobs[r].r.err.message);
            else
                CHECK(jobs[r].r.st == SL_EMODEL &&
                          strcmp(jobs[r].r.err.reason, "rankfailed") == 0 &&
                          strstr(jobs[r].r.err.message, "rank 2 of 3") != NULL,
                      "rank %d names the failing rank: %d %s %s", r, jobs[r].r.st,
                      jobs[r].r.err.reason, jobs[r].r.err.message);
            run_free(&jobs[r].r);
        }
    }
    /* the same where only the forecasts split (the ETKF) */
    {
        sl_pf_config c2 = cfg;
        c2.analysis = &sl_analysis_etkf;
        if (run_ranks(&c2, 3, 0, X0, P0, &sh, jobs)) {
            for (r = 0; r < 3; r++) {
                const int own = r == 2;
                CHECK(jobs[r].r.st == SL_EMODEL &&
                          strcmp(jobs[r].r.err.reason, own ? "modelfailed" : "rankfailed") == 0,
                      "etkf: rank %d: %d %s %s", r, jobs[r].r.st, jobs[r].r.err.reason,
                      jobs[r].r.err.message);
                run_free(&jobs[r].r);
            }
        }
    }
    fail_member = fail_step = -1;
}

static sl_status refuse_snapshot(void *ctx, const sl_pf_snapshot *sn, sl_error *err)
{
    (void)ctx;
    (void)sn;
    return sl_fail(err, SL_EINVAL, "test", "no checkpoint is written here");
}

static void expect_refused(const sl_pf_config *cfg, int P, const char *reason,
                           const char *what)
{
    sl_error err;
    sl_status st;
    sl_error_clear(&err);
    st = sl_pf_ranks_check(cfg, P, &err);
    CHECK(st == SL_EINVAL && strcmp(err.reason, reason) == 0,
          "%s: expected %s, got %d %s (%s)", what, reason, st, err.reason, err.message);
}

static void check_refusals(void)
{
    enum { N = 6, T = 3 };
    static double times[T] = {1, 2, 3}, y[T] = {0, 1, 0}, sg[T] = {1, 1, 1}, aux[T];
    static size_t first[T + 1] = {0, 1, 2, 3}, var[T];
    static int fam[T] = {SL_FAMILY_GAUSSIAN, SL_FAMILY_GAUSSIAN, SL_FAMILY_GAUSSIAN};
    static const double A[1] = {0.9}, B[1] = {0.0}, c[1] = {0.0}, L[1] = {1.0};
    static const sl_linear lin = {1, 1, A, B, c, L};
    static const double ft[2] = {0.0, 10.0}, fv[2] = {0.0, 0.0};
    const double snoise[1] = {0.5};
    sl_model md;
    sl_pf_config cfg, c2;
    sl_error err;
    sl_pf_ranks rk;
    CHECK(sl_linear_model(&md, &lin, 1.0, &err) == SL_OK, "model");
    base_config(&cfg, &md, N, T, times, first, y, sg, aux, fam, var);
    cfg.state_noise = snoise;
    cfg.forcing.q = 1;
    cfg.forcing.nt = 2;
    cfg.forcing.time = ft;
    cfg.forcing.value = fv;
    CHECK(sl_pf_ranks_check(&cfg, 6, &err) == SL_OK, "6 members on 6 ranks: %s", err.message);
    expect_refused(&cfg, 7, "ranksempty", "6 members on 7 ranks");
    expect_refused(&cfg, 0, "badranks", "0 ranks");
    /* what cannot be split by members splits its forecasts */
    c2 = cfg;
    c2.lag = 2;
    CHECK(sl_pf_ranks_check(&c2, 2, &err) == SL_OK && !sl_pf_ranks_by_members(&c2),
          "a lag: forecasts split");
    c2 = cfg;
    c2.analysis = &sl_analysis_etkf;
    CHECK(sl_pf_ranks_check(&c2, 2, &err) == SL_OK && sl_pf_ranks_by_members(&c2),
          "the ETKF: split by members");
    c2.analysis = &sl_analysis_letkf;
    CHECK(sl_pf_ranks_by_members(&c2), "the LETKF: split by members");
    c2.weak = 1;
    CHECK(!sl_pf_ranks_by_members(&c2), "weak coupling: forecasts split");
    c2.weak = 0;
    c2.analysis = &sl_analysis_wenkf;
    CHECK(!sl_pf_ranks_by_members(&c2), "the weighted EnKF: forecasts split");
    CHECK(sl_pf_ranks_by_members(&cfg), "the particle filter: split by members");
    c2 = cfg;
    c2.checkpoint = refuse_snapshot;
    c2.checkpoint_every = 1;
    expect_refused(&c2, 2, "ranksunsupported", "a checkpoint");
    c2 = cfg;
    c2.inner = 2;
    c2.move.rm_scale = 1.0;
    c2.move.rm_diversity = 0.5;
    c2.move.rm_sweeps = 3;
    expect_refused(&c2, 2, "ranksunsupported", "SMC2");
    /* workspace: 0 for a split that cannot be */
    memset(&rk, 0, sizeof rk);
    rk.rank = 0;
    rk.size = 7;
    CHECK(sl_pf_ranks_workspace(&cfg, &rk) == 0, "workspace of 7 ranks for 6 members");
    rk.size = 2;
    rk.rank = 2;
    CHECK(sl_pf_ranks_workspace(&cfg, &rk) == 0, "workspace of rank 2 of 2");
    rk.rank = 1;
    CHECK(sl_pf_ranks_workspace(&cfg, &rk) > 0, "workspace of rank 1 of 2");
    /* a run without collectives */
    {
        double X[N] = {0}, P[1] = {0}, w[N];
        sl_pf_output out;
        memset(&out, 0, sizeof out);
        CHECK(sl_pf_run_ranks(&cfg, &rk, X, P, w, NULL, &out, &err) == SL_EINVAL &&
                  strcmp(err.reason, "badranks") == 0,
              "no collectives: %s", err.reason);
    }
}

/* nx x n initial states (column j: member j), standard normal draws of
 * member j's prior stream under seed */
static void draw_states(double *X, size_t nx, size_t n, uint64_t seed)
{
    size_t i, j;
    for (j = 0; j < n; j++) {
        sl_stream s;
        sl_stream_init(&s, seed, (uint32_t)j, 0, SL_PURPOSE_PRIOR);
        for (i = 0; i < nx; i++)
            X[i + j * nx] = sl_stream_normal(&s);
    }
}

/* A wide model (140 states, more than two blocks of the analysis's rows):
 * x_k = A x_(k-1) + L e with A neighbour-coupled along a line, every 7th
 * state observed (20 observations a cycle). The ensemble Kalman filters
 * split by members (the ETKF in ensemble space, the stochastic EnKF, the
 * EAKF, the LETKF by grid points), and with a lag window by forecasts,
 * their analyses sharing rows out across the ranks (with 480 members
 * the quantiles too); every output equals one process bit for bit. */
static void check_wide_kalman(void)
{
    enum { NX = 140, M = 20, N = 16, T = 6 };
    static double A[NX * NX], L[NX * NX], times[T], y[T * M], sg[T * M], aux[T * M];
    static double spos[NX], opos[T * M], oc[T * M], X0[NX * N], P0[1];
    static size_t first[T + 1], var[T * M];
    static int fam[T * M];
    static sl_linear lin;
    const double probs[2] = {0.1, 0.9};
    const sl_analysis *an[4] = {&sl_analysis_etkf, &sl_analysis_enkf, &sl_analysis_eakf,
                                &sl_analysis_letkf};
    const char *names[6] = {"etkf", "enkf", "eakf", "letkf", "etkf with lag 2",
                            "etkf with lag 1, 480 members (quantiles shared out)"};
    sl_localization loc;
    sl_model md;
    sl_pf_config cfg;
    sl_error err;
    size_t i, k, q;
    for (i = 0; i < NX; i++) {
        A[i + i * NX] = 0.8;
        if (i > 0)
            A[i + (i - 1) * NX] = 0.1;
        if (i + 1 < NX)
            A[i + (i + 1) * NX] = 0.1;
        L[i + i * NX] = 0.2;
        spos[i] = (double)i;
    }
    lin.n = NX;
    lin.A = A;
    lin.L = L;
    CHECK(sl_linear_model(&md, &lin, 1.0, &err) == SL_OK, "wide linear model: %s", err.message);
    for (k = 0; k < T; k++) {
        times[k] = 1.0 + (double)k;
        first[k] = k * M;
        for (q = 0; q < M; q++) {
            const size_t r = k * M + q;
            var[r] = 7 * q + 3;
            y[r] = sin(0.1 * (double)var[r] + 0.3 * (double)k);
            sg[r] = 0.5;
            aux[r] = 0.0;
            fam[r] = SL_FAMILY_GAUSSIAN;
            opos[r] = (double)var[r];
            oc[r] = 10.0;
        }
    }
    first[T] = T * M;
    draw_states(X0, NX, N, 17);
    line_localization(&loc, spos, opos, oc, 1.0);
    for (q = 0; q < 6; q++) {
        run_buf ref;
        /* 140 rows x 480 members: past SL_PFI_SPLIT_QUANTILES (65536) */
        const size_t NN = q == 5 ? 480 : N;
        double *X5 = NULL;
        if (q == 5) {
            X5 = ck_malloc(NX * NN * sizeof(double));
            draw_states(X5, NX, NN, 18);
        }
        base_config(&cfg, &md, NN, T, times, first, y, sg, aux, fam, var);
        cfg.analysis = an[q < 4 ? q : 0];
        cfg.nq = 2;
        cfg.probs = probs;
        cfg.seed = 99;
        if (q == 3)
            cfg.loc = &loc;
        if (q == 4)
            cfg.lag = 2;
        if (q == 5)
            cfg.lag = 1; /* the forecasts split: the quantiles shared out */
        CHECK(sl_pf_ranks_by_members(&cfg) == (q < 4), "%s: %s by members", names[q],
              q < 4 ? "split" : "not split");
        run_one(&ref, &cfg, q == 5 ? X5 : X0, P0);
        CHECK(ref.st == SL_OK, "%s single process: %s", names[q], ref.err.message);
        if (ref.st == SL_OK)
            compare_ranks(&cfg, &ref, q == 5 ? X5 : X0, P0, names[q], 0);
        run_free(&ref);
        ck_free(X5);
    }
}

/* The global ensemble Kalman methods split by members: Lorenz-96 with
 * 150 states and its forcing F estimated with them (151 rows, three
 * blocks of the analysis's rows), every fifth state observed with a
 * missing value in each cycle and a cycle with none; one member starts
 * not finite (dead, then replaced by resampling: members cross ranks).
 * Each method plain, with inflation and relaxation, adaptive inflation,
 * localisation (serial and stochastic), and the ETKF in observation
 * space: every output (inflation and floored eigenvalues included) is
 * one process's bit for bit on 1 to 7 ranks; with 4 ranks a rank's
 * workspace is well under one process's. */
static void check_kalman_members(void)
{
    enum { NX = 150, M = 30, N = 24, T = 5 };
    const sl_model_def *d = sl_model_def_find("lorenz96");
    static double times[T], y[T * M], sg[T * M], aux[T * M], spos[NX + 1], opos[T * M],
        oc[T * M], X0[NX * N], P0[N];
    static size_t first[T + 1], var[T * M];
    static int fam[T * M];
    static const int methods[5] = {SL_ENKF_STOCHASTIC, SL_ENKF_ETKF, SL_ENKF_ENSRF,
                                   SL_ENKF_EAKF, SL_ENKF_LETKF};
    const sl_analysis *entries[5] = {&sl_analysis_enkf, &sl_analysis_etkf, &sl_analysis_ensrf,
                                     &sl_analysis_eakf, &sl_analysis_letkf};
    const double probs[2] = {0.1, 0.9};
    sl_transform tr[1];
    sl_localization loc;
    sl_model md;
    sl_def_model dm;
    sl_pf_config cfg;
    sl_enkf_config ec;
    sl_error err;
    size_t i, j, k, q, v, r = 0;
    CHECK(d != NULL, "lorenz96");
    if (d == NULL)
        return;
    CHECK(sl_def_model_init(&md, &dm, d, NX, NULL, 0.05, NULL, NULL, &err) == SL_OK,
          "lorenz96 model: %s", err.message);
    for (k = 0; k < T; k++) {
        times[k] = 0.1 * (double)(k + 1);
        first[k] = r;
        for (q = 0; q < M && k != 2; q++, r++) {
            var[r] = 5 * q + 2;
            y[r] = q == k ? (double)NAN : 2.0 + 3.0 * sin(0.2 * (double)var[r] + (double)k);
            sg[r] = 1.0;
            aux[r] = 0.0;
            fam[r] = SL_FAMILY_GAUSSIAN;
            opos[r] = (double)var[r];
            oc[r] = 12.0;
        }
    }
    first[T] = r;
    for (i = 0; i < NX; i++)
        spos[i] = (double)i;
    spos[NX] = (double)NAN; /* F has no place */
    line_localization(&loc, spos, opos, oc, 0.5);
    tr[0] = sl_transform_for_bounds(d->p_lower[0], d->p_upper[0]);
    for (j = 0; j < N; j++) {
        sl_stream s;
        sl_stream_init(&s, 21, (uint32_t)j, 0, SL_PURPOSE_PRIOR);
        for (i = 0; i < NX; i++)
            X0[i + j * NX] = 2.0 + 3.0 * sin(0.2 * (double)i) + sl_stream_normal(&s);
        P0[j] = 8.0 + 0.5 * sl_stream_normal(&s);
    }
    X0[7 + 5 * NX] = (double)NAN; /* member 5 is dead from the start */
    for (q = 0; q < 5; q++)
        for (v = 0; v < 5; v++) {
            run_buf ref;
            char label[80];
            if (v == 3 && methods[q] == SL_ENKF_ETKF)
                continue; /* the ETKF takes no localisation */
            if (v == 4 && methods[q] != SL_ENKF_ETKF)
                continue;
            /* the LETKF always localised: with its places' most rows
             * given (1) and not (variant 2) */
            loc.group_max = methods[q] == SL_ENKF_LETKF && v != 2 ? 1 : 0;
            base_config(&cfg, &md, N, T, times, first, y, sg, aux, fam, var);
            memset(&ec, 0, sizeof ec);
            ec.method = methods[q];
            ec.inflation = v == 1 ? 1.08 : 1.0;
            ec.rtps = v == 1 ? 0.3 : 0.0;
            ec.threads = 1;
            ec.etkf_form = v == 4 ? SL_ETKF_OBSERVATION : SL_ETKF_AUTO;
            cfg.analysis = entries[q];
            cfg.enkf = &ec;
            cfg.adaptive_inflation = v == 2;
            cfg.inflation_max = 1.4;
            cfg.loc = v == 3 || methods[q] == SL_ENKF_LETKF ? &loc : NULL;
            cfg.ptrans = tr;
            cfg.nq = 2;
            cfg.probs = probs;
            cfg.seed = 31;
            snprintf(label, sizeof label, "%s split by members, variant %lu",
                     sl_enkf_method_name(methods[q]), (unsigned long)v);
            CHECK(sl_pf_ranks_by_members(&cfg), "%s: by members", label);
            run_one(&ref, &cfg, X0, P0);
            CHECK(ref.st == SL_OK, "%s, one process: %s", label, ref.err.message);
            CHECK(ref.st != SL_OK || (ref.out.resampled[0] == 1.0 && ref.out.nonfinite[0] == 1.0),
                  "%s: the dead member replaced at the first cycle", label);
            if (ref.st == SL_OK)
                compare_ranks(&cfg, &ref, X0, P0, label, 1);
            if (v == 0) {
                /* what a rank holds: its members, its rows. Of 4000
                 * states and 2000 members (the ensemble 64 MB), a rank of
                 * 4 needs under half of one process's workspace beside
                 * the model's own work; the ETKF, whose observation-space
                 * blocks of rows may grow to all rows when few members
                 * live (it keeps room for them), under three quarters */
                static double bpos[4001];
                sl_localization bloc = loc;
                sl_model big;
                sl_def_model bdm;
                sl_pf_ranks rk;
                size_t one, most = 0;
                sl_pf_config cb = cfg;
                for (i = 0; i < 4000; i++)
                    bpos[i] = (double)i;
                bpos[4000] = (double)NAN;
                bloc.state_pos = bpos;
                cb.loc = cfg.loc != NULL ? &bloc : NULL;
                CHECK(sl_def_model_init(&big, &bdm, d, 4000, NULL, 0.05, NULL, NULL, &err) ==
                          SL_OK, "lorenz96, 4000 states");
                cb.model = &big;
                cb.N = 2000;
                one = sl_pf_workspace(&cb);
                memset(&rk, 0, sizeof rk);
                rk.size = 4;
                for (rk.rank = 0; rk.rank < 4; rk.rank++) {
                    size_t w = sl_pf_ranks_workspace(&cb, &rk);
                    most = w > most ? w : most;
                }
                one -= big.work * 8;
                most -= big.work * 8;
                if (methods[q] == SL_ENKF_LETKF) {
                    /* and beside the local analyses' N x N matrices (three
                     * a thread, 96 MB here), which every rank needs */
                    one -= 3 * cb.N * cb.N * 8;
                    most -= 3 * cb.N * cb.N * 8;
                }
                CHECK(most > 0 &&
                          (double)most < (methods[q] == SL_ENKF_ETKF ? 0.75 : 0.5) * (double)one,
                      "%s: a rank of 4 takes %lu bytes, one process %lu", label,
                      (unsigned long)most, (unsigned long)one);
                printf("%s: workspace of one process %.1f MB, of a rank of 4 %.1f MB\n", label,
                       (double)one / 1e6, (double)most / 1e6);
            }
            if (methods[q] == SL_ENKF_LETKF && v == 0) {
                /* ten rows at each place, while group_max says one:
                 * refused on every rank before any member moves (on 2
                 * ranks a rank's rows overflow the room, on 3 they fit
                 * and the analysis finds the places too full) */
                static double ppos[NX + 1];
                sl_localization pl = loc;
                shared_comm sh;
                rank_job jobs[MAX_RANKS];
                int P, rr;
                for (i = 0; i <= NX; i++)
                    ppos[i] = (double)(i / 10);
                pl.state_pos = ppos;
                pl.group_max = 1;
                cfg.loc = &pl;
                for (P = 2; P <= 3; P++) {
                    if (!run_ranks(&cfg, P, 0, X0, P0, &sh, jobs))
                        break;
                    for (rr = 0; rr < P; rr++) {
                        CHECK(jobs[rr].r.st == SL_EINVAL &&
                                  strcmp(jobs[rr].r.err.reason, "badlocalization") == 0,
                              "%s: group_max too small, %d ranks, rank %d: %s", label, P, rr,
                              jobs[rr].r.err.reason);
                        run_free(&jobs[rr].r);
                    }
                }
            }
            run_free(&ref);
        }
}

/* A member-split analysis that fails in one rank's rows: an identity
 * model of 150 states whose last rows hold values out of scale (their
 * mean overflows), so only the rank that analyses them meets the
 * non-finite rows. Every rank fails with one process's error. */
static void check_kalman_members_fail(void)
{
    enum { NX = 150, M = 30, N = 12, T = 2 };
    static double A[NX * NX], times[T], y[T * M], sg[T * M], aux[T * M], X0[NX * N];
    static size_t first[T + 1], var[T * M];
    static int fam[T * M];
    static sl_linear lin;
    sl_model md;
    sl_pf_config cfg;
    sl_error err;
    shared_comm sh;
    rank_job jobs[MAX_RANKS];
    run_buf ref;
    size_t i, j, k;
    double P0[1] = {0.0};
    int P, r;
    for (i = 0; i < NX; i++)
        A[i + i * NX] = 1.0;
    lin.n = NX;
    lin.A = A;
    CHECK(sl_linear_model(&md, &lin, 1.0, &err) == SL_OK, "identity model: %s", err.message);
    for (k = 0; k < T; k++) {
        times[k] = (double)(k + 1);
        first[k] = k * M;
        for (i = 0; i < M; i++) {
            var[k * M + i] = 4 * i; /* rows 0 .. 116: the transform is fine */
            y[k * M + i] = 0.5;
            sg[k * M + i] = 1.0;
            fam[k * M + i] = SL_FAMILY_GAUSSIAN;
        }
    }
    first[T] = T * M;
    draw_states(X0, NX, N, 23);
    for (j = 0; j < N; j++)
        for (i = 145; i < NX; i++)
            X0[i + j * NX] = (j % 2 ? 1.0 : -1.0) * 1.5e308;
    base_config(&cfg, &md, N, T, times, first, y, sg, aux, fam, var);
    cfg.analysis = &sl_analysis_ensrf;
    CHECK(sl_pf_ranks_by_members(&cfg), "the EnSRF splits by members");
    run_one(&ref, &cfg, X0, P0);
    CHECK(ref.st == SL_ENUMERIC && strcmp(ref.err.reason, "nonfinite") == 0,
          "rows out of scale, one process: %s", ref.err.reason);
    for (P = 2; P <= 4; P++) {
        if (!run_ranks(&cfg, P, 0, X0, P0, &sh, jobs))
            break;
        for (r = 0; r < P; r++) {
            CHECK(jobs[r].r.st == ref.st && strcmp(jobs[r].r.err.reason, ref.err.reason) == 0 &&
                      strcmp(jobs[r].r.err.message, ref.err.message) == 0,
                  "rows out of scale, %d ranks, rank %d: %s (%s)", P, r, jobs[r].r.err.reason,
                  jobs[r].r.err.message);
            run_free(&jobs[r].r);
        }
    }
    run_free(&ref);
}

/* More members than one summing block (sl_mean_block: 9001 members are
 * three blocks): the split run's means and forecast means, summed by
 * blocks over all N members, and all else it records are the
 * one-process run's bit for bit, on 1 to 7 ranks, and the one-process
 * run's are the same on 1 and 2 threads. A linear model of two states,
 * the first observed. */
static void check_many_members(void)
{
    enum { N = 9001, T = 4 };
    static const double A[4] = {0.9, -0.2, 0.1, 0.95}, L[4] = {0.3, 0.1, 0.0, 0.2};
    static const sl_linear lin = {2, 0, A, NULL, NULL, L};
    static double times[T], y[T], sg[T], aux[T], X0[2 * N];
    static size_t first[T + 1], var[T];
    static int fam[T];
    const double probs[2] = {0.1, 0.9};
    sl_model md;
    sl_pf_config cfg;
    sl_error err;
    double P0[1] = {0.0};
    run_buf ref, two;
    char what[40] = "";
    CHECK(sl_mean_block(N) == 4096, "9001 members: blocks of %lu", (unsigned long)sl_mean_block(N));
    CHECK(sl_linear_model(&md, &lin, 1.0, &err) == SL_OK, "linear model: %s", err.message);
    first_state_obs(T, 0.4, -0.3, 0.3, times, first, var, y, sg, aux, fam);
    draw_states(X0, 2, N, 17);
    base_config(&cfg, &md, N, T, times, first, y, sg, aux, fam, var);
    cfg.threshold = 0.6;
    cfg.seed = 11;
    cfg.nq = 2;
    cfg.probs = probs;
    run_one(&ref, &cfg, X0, P0);
    CHECK(ref.st == SL_OK, "many members, one process: %s", ref.err.message);
    cfg.threads = 2;
    run_one(&two, &cfg, X0, P0);
    CHECK(two.st == SL_OK && ref.st == SL_OK && identical(&cfg, &ref, &two, what),
          "many members: 2 threads, %s differs from 1", what);
    cfg.threads = 1;
    if (ref.st == SL_OK)
        compare_ranks(&cfg, &ref, X0, P0, "many members", 0);
    run_free(&ref);
    run_free(&two);
}

int main(void)
{
    check_gr4j();
    check_flood_spans();
    check_member_draws_and_failure();
    check_wide_kalman();
    check_kalman_members();
    check_kalman_members_fail();
    check_many_members();
    check_refusals();
    CHECK_DONE("test_pf_ranks");
}
