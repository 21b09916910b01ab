/* test_variants.c - variants that live outside the core: a resampling
 * scheme and analyses defined here as type objects of the test's own and
 * handed to the core (sl_resample, sl_pf_run through cfg->resampler and
 * cfg->analysis) without a change to the core's tables; the analysis
 * table itself (names, lookup, the entry a configuration runs) and the
 * checks a caller's entry meets. The worked example of DEVELOPERS.md
 * ("Adding a variant"). */
#include "check.h"
#include "sluice/model.h"
#include "sluice/pf.h"
#include "sluice/prior.h"
#include "sluice/resample.h"

#include <stdint.h>
#include <stdlib.h>

/* ------------------------------------------- a resampler of the test's own */

/* Systematic resampling with the fixed offset u = 1/2 (no draw): the
 * points (i + 1/2) / N, i = 0 .. N-1, each taking the first member whose
 * cumulative weight passes it. Written as the search over points, so the
 * check below can use the closed form. */
static size_t midpoint_workspace(size_t N, size_t M)
{
    (void)N;
    (void)M;
    return 0;
}

static void midpoint_run(size_t N, const double *w, double wsum, size_t M, sl_stream *s,
                         double *work, uint32_t *anc)
{
    size_t i, j = 0;
    double c = w[0];
    (void)s;
    (void)work;
    for (i = 0; i < M; i++) {
        double point = ((double)i + 0.5) / (double)M * wsum;
        while (c <= point && j + 1 < N)
            c += w[++j];
        anc[i] = (uint32_t)j;
    }
}

static const sl_resampler midpoint = {"midpoint", midpoint_workspace, midpoint_run};

/* Offspring counts of N ancestors against the closed form of systematic
 * resampling with offset u (Kitagawa 1996; Douc & Cappe 2005, eq. for
 * o_j): o_j = floor(N C_j + 1 - u) - floor(N C_(j-1) + 1 - u), C the
 * normalised cumulative weights; here u = 1/2, so the count of member j
 * is floor(N C_j + 1/2) - floor(N C_(j-1) + 1/2), and it lies in
 * {floor(N w_j), floor(N w_j) + 1} (Douc & Cappe 2005, section 3.4).
 * Returns the number of members whose count differs. */
static size_t offspring_mismatches(size_t N, const double *w, const uint32_t *anc,
                                   const char *what)
{
    size_t i, j, bad = 0;
    size_t *count = ck_calloc(N, sizeof *count);
    double wsum = 0.0, c = 0.0, prev;
    for (j = 0; j < N; j++)
        wsum += w[j];
    for (i = 0; i < N; i++)
        count[anc[i]]++;
    prev = floor(0.5);
    for (j = 0; j < N; j++) {
        double want, nw = (double)N * w[j] / wsum;
        c += w[j] / wsum;
        want = floor((double)N * c + 0.5) - prev;
        prev = floor((double)N * c + 0.5);
        if ((double)count[j] != want || (double)count[j] < floor(nw) ||
            (double)count[j] > floor(nw) + 1) {
            if (bad < 3)
                printf("  %s: member %lu has %lu offspring, the formula %g (N w = %g)\n",
                       what, (unsigned long)j, (unsigned long)count[j], want, nw);
            bad++;
        }
    }
    ck_free(count);
    return bad;
}

static void check_resampler(void)
{
    /* weights with no cumulative sum near a half-integer over N (checked
     * below), so the floor of the formula is not decided by rounding */
    enum { N = 12 };
    const double w[N] = {0.0731, 0.1977, 0.0052, 0.1418, 0.0264, 0.0889,
                         0.1506, 0.0115, 0.0973, 0.0644, 0.1035, 0.0396};
    uint32_t anc[N];
    double work[1];
    double c = 0.0, wsum = 0.0;
    sl_error err;
    size_t j;
    for (j = 0; j < N; j++)
        wsum += w[j];
    for (j = 0; j < N; j++) {
        double x;
        c += w[j];
        x = (double)N * c / wsum + 0.5;
        CHECK(fabs(x - floor(x + 0.5)) > 1e-6, "cumulative weight %lu is not near a boundary",
              (unsigned long)j);
    }
    /* through the core's entry point: its weight checks, then this run */
    CHECK(sl_resample_workspace(&midpoint, N, N) == 0, "no workspace");
    CHECK(sl_resample(&midpoint, N, w, N, 7, 0, work, anc, &err) == SL_OK,
          "sl_resample with a scheme of the test: %s", err.message);
    CHECK(offspring_mismatches(N, w, anc, "direct") == 0, "offspring counts (direct)");
    /* the core's checks still guard it */
    {
        double bad[N];
        memcpy(bad, w, sizeof bad);
        bad[3] = -0.1;
        CHECK(sl_resample(&midpoint, N, bad, N, 7, 0, work, anc, &err) != SL_OK,
              "negative weight refused");
    }
    /* not in the core's table: lookup by name does not find it */
    CHECK(sl_resampler_find("midpoint") == NULL, "the core's table is unchanged");
}

/* ------------------------------------------------------ runs of the filter */

typedef struct {
    sl_pf_output out;
    double *X, *P, *w;
    void *work;
} run_buf;

static void run_free(run_buf *r)
{
    double **f[] = {&r->out.mean, &r->out.quant, &r->out.ess, &r->out.logz,
                    &r->out.resampled, &r->out.degenerate, &r->out.skipped,
                    &r->out.nonfinite, &r->out.floored, &r->out.inflation,
                    &r->out.loglik_evals, &r->out.temper_steps, &r->out.hist_X,
                    &r->out.hist_w, &r->out.hist_a, &r->X, &r->P, &r->w};
    size_t k;
    for (k = 0; k < sizeof f / sizeof *f; k++)
        ck_free(*f[k]);
    ck_free(r->work);
    memset(r, 0, sizeof *r);
}

static double *zd(size_t count)
{
    return ck_calloc(count ? count : 1, sizeof(double));
}

/* Run cfg (a model without parameters) from X0; every output allocated,
 * zeroed, so that entries a run leaves alone compare equal. */
static sl_status run(const sl_pf_config *cfg, const double *X0, run_buf *r, sl_error *err)
{
    const size_t n = cfg->model->n_state, N = cfg->N, T = cfg->T;
    size_t bytes = sl_pf_workspace(cfg);
    memset(r, 0, sizeof *r);
    r->out.mean = zd(n * T);
    r->out.quant = zd(n * cfg->nq * T);
    r->out.ess = zd(T);
    r->out.logz = zd(T);
    r->out.resampled = zd(T);
    r->out.degenerate = zd(T);
    r->out.skipped = zd(T);
    r->out.nonfinite = zd(T);
    r->out.floored = zd(T);
    r->out.inflation = zd(T);
    r->out.loglik_evals = zd(T);
    r->out.temper_steps = zd(T);
    r->out.hist_X = zd(n * N * T);
    r->out.hist_w = zd(N * T);
    r->out.hist_a = zd(N * T);
    r->X = zd(n * N);
    r->P = zd(1);
    r->w = zd(N);
    r->work = bytes ? ck_malloc(bytes) : NULL;
    if (r->work == NULL)
        return sl_fail(err, SL_ENOMEM, "nomemory", "no workspace (%lu bytes)",
                       (unsigned long)bytes);
    memcpy(r->X, X0, n * N * sizeof(double));
    return sl_pf_run(cfg, r->X, r->P, r->w, r->work, &r->out, err);
}

/* 1 when the two runs' arrays of `count` doubles are equal bit for bit
 * (NaN equal to NaN). */
static int same(const double *a, const double *b, size_t count)
{
    return memcmp(a, b, count * sizeof(double)) == 0;
}

enum { NS = 2, NM = 64, NT = 6 };

typedef struct {
    double A[4], L[4], times[NT], X0[NS * NM], probs[3];
    double y[NT], sigma[NT], aux[NT];
    int family[NT];
    size_t first[NT + 1], none[NT + 1], var[NT];
    sl_linear lin;
    sl_model md;
} problem;

/* x_k = A x_(k-1) + L e_k, state 1 observed at every cycle (invented
 * values); the initial members spread by a fixed pattern. */
static void make_problem(problem *pb)
{
    size_t j, k;
    memset(pb, 0, sizeof *pb);
    pb->A[0] = 0.9;
    pb->A[1] = -0.1;
    pb->A[2] = 0.2;
    pb->A[3] = 0.8;
    pb->L[0] = 0.5;
    pb->L[3] = 0.3;
    pb->lin.n = NS;
    pb->lin.A = pb->A;
    pb->lin.L = pb->L;
    for (k = 0; k < NT; k++) {
        pb->times[k] = (double)(k + 1);
        pb->y[k] = 1.7 * sin(0.9 * (double)k) + 0.35;
        pb->sigma[k] = 0.45;
        pb->family[k] = 0; /* Gaussian */
        pb->first[k] = k;
    }
    pb->first[NT] = NT;
    for (j = 0; j < NM; j++) {
        pb->X0[j * NS] = sin(2.385 * (double)j);
        pb->X0[j * NS + 1] = 0.6 * cos(1.713 * (double)j);
    }
    pb->probs[0] = 0.1;
    pb->probs[1] = 0.5;
    pb->probs[2] = 0.9;
}

static void config(sl_pf_config *c, const problem *pb)
{
    memset(c, 0, sizeof *c);
    c->model = &pb->md;
    c->N = NM;
    c->T = NT;
    c->times = pb->times;
    c->obs_first = pb->first;
    c->y = pb->y;
    c->sigma = pb->sigma;
    c->aux = pb->aux;
    c->family = pb->family;
    c->var = pb->var;
    c->param_move = &sl_param_move_fixed;
    c->move.lw_delta = 0.98;
    c->move.kernel_scale = 1.0;
    c->move.min_ess = SL_KERNEL_MIN_ESS;
    c->resampler = &sl_resampler_systematic;
    c->threshold = 0.5;
    c->seed = 20261203u;
    c->threads = 1;
    c->nq = 3;
    c->probs = pb->probs;
    c->keep_history = 1;
}

/* ----------------------------------------------- analyses of the test's own */

/* The no-op analysis: it weighs (the particle filter's bookkeeping) but
 * uses no observation, so nobs stays 0 and nothing changes. */
static sl_status noop_update(sl_analysis_cycle *c, sl_error *err)
{
    (void)c;
    (void)err;
    return SL_OK;
}

static const sl_analysis noop = {"noop", SL_ANALYSIS_WEIGHTS, NULL, NULL, NULL, NULL,
                                 noop_update};

/* The "snap" analysis: moves every living member's observed state onto
 * the cycle's observation, gives the living members equal weights, and
 * counts the cycles it has seen in its workspace (set to 0 by start),
 * recording the count in out->floored. */
static size_t snap_workspace(const sl_analysis *self, const sl_pf_config *cfg, size_t m_max,
                             size_t nwin)
{
    (void)self;
    (void)cfg;
    (void)m_max;
    (void)nwin;
    return sizeof(double);
}

static void snap_start(const sl_analysis *self, const sl_pf_config *cfg, void *work,
                       struct sl_pfi_buffers *run)
{
    (void)self;
    (void)cfg;
    (void)run;
    *(double *)work = 0.0;
}

static sl_status snap_check(const sl_analysis *self, const sl_pf_config *cfg, sl_error *err)
{
    size_t k;
    for (k = 0; k < cfg->obs_first[cfg->T]; k++)
        if (cfg->var[k] >= cfg->model->n_state)
            return sl_fail(err, SL_EINVAL, "badconfig", "'%s' observes states only",
                           self->name);
    return SL_OK;
}

static sl_status snap_update(sl_analysis_cycle *c, sl_error *err)
{
    const size_t n = c->cfg->model->n_state, N = c->cfg->N;
    double *count = c->work;
    size_t i, j;
    (void)err;
    *count += 1.0;
    c->out->floored[c->k] = *count;
    for (i = 0; i < c->m; i++)
        for (j = 0; j < N; j++)
            if (!c->dead[j])
                c->X[c->cfg->var[c->r0 + i] + j * n] = c->cfg->y[c->r0 + i];
    for (j = 0; j < N; j++)
        c->w[j] = c->dead[j] ? 0.0 : 1.0 / (double)(N - c->ndead);
    return SL_OK;
}

static const sl_analysis snap = {"snap", SL_ANALYSIS_MOVES, NULL, snap_check, snap_workspace,
                                 snap_start, snap_update};

static void check_noop(void)
{
    problem pb;
    sl_pf_config c1, c2;
    run_buf r1, r2;
    sl_error err;
    sl_status s1, s2;
    make_problem(&pb);
    CHECK(sl_linear_model(&pb.md, &pb.lin, 1.0, &err) == SL_OK, "model: %s", err.message);
    /* the no-op analysis with observations ... */
    config(&c1, &pb);
    c1.analysis = &noop;
    s1 = run(&c1, pb.X0, &r1, &err);
    CHECK(s1 == SL_OK, "no-op run: %s", s1 ? err.message : "");
    /* ... against the particle filter with none */
    config(&c2, &pb);
    c2.obs_first = pb.none;
    s2 = run(&c2, pb.X0, &r2, &err);
    CHECK(s2 == SL_OK, "run without observations: %s", s2 ? err.message : "");
    if (s1 == SL_OK && s2 == SL_OK) {
        CHECK(same(r1.out.mean, r2.out.mean, NS * NT), "means");
        CHECK(same(r1.out.quant, r2.out.quant, NS * 3 * NT), "quantiles");
        CHECK(same(r1.out.ess, r2.out.ess, NT), "ESS");
        CHECK(same(r1.out.logz, r2.out.logz, NT), "log-evidence increments");
        CHECK(r1.out.log_evidence == r2.out.log_evidence && r1.out.log_evidence == 0.0,
              "log-evidence %g", r1.out.log_evidence);
        CHECK(same(r1.out.resampled, r2.out.resampled, NT), "resampling flags");
        CHECK(same(r1.out.skipped, r2.out.skipped, NT), "skipped");
        CHECK(same(r1.out.temper_steps, r2.out.temper_steps, NT), "likelihood steps");
        CHECK(same(r1.out.loglik_evals, r2.out.loglik_evals, NT), "evaluations");
        CHECK(same(r1.out.hist_X, r2.out.hist_X, NS * NM * NT), "history of states");
        CHECK(same(r1.out.hist_w, r2.out.hist_w, NM * NT), "history of weights");
        CHECK(same(r1.X, r2.X, NS * NM) && same(r1.w, r2.w, NM), "final ensemble");
        CHECK(r1.out.steps == r2.out.steps, "steps");
    }
    run_free(&r1);
    run_free(&r2);

    /* the particle filter named through cfg->analysis is the default */
    config(&c1, &pb);
    c1.analysis = &sl_analysis_pf;
    s1 = run(&c1, pb.X0, &r1, &err);
    config(&c2, &pb);
    s2 = run(&c2, pb.X0, &r2, &err);
    CHECK(s1 == SL_OK && s2 == SL_OK, "particle filter runs");
    if (s1 == SL_OK && s2 == SL_OK) {
        CHECK(same(r1.out.mean, r2.out.mean, NS * NT) && same(r1.out.logz, r2.out.logz, NT) &&
                  same(r1.out.hist_a, r2.out.hist_a, NM * NT) && same(r1.X, r2.X, NS * NM),
              "cfg->analysis = the particle filter: the same run as the default");
        /* with observations the run differs from the no-op one */
        CHECK(r1.out.log_evidence < 0 && isfinite(r1.out.log_evidence),
              "log-evidence %g", r1.out.log_evidence);
    }
    run_free(&r1);
    run_free(&r2);
}

static void check_snap(void)
{
    problem pb;
    sl_pf_config c;
    run_buf r;
    sl_error err;
    sl_status st;
    size_t j, k;
    make_problem(&pb);
    CHECK(sl_linear_model(&pb.md, &pb.lin, 1.0, &err) == SL_OK, "model: %s", err.message);
    config(&c, &pb);
    c.analysis = &snap;
    c.threshold = 1.0; /* a weighing filter would resample every cycle */
    st = run(&c, pb.X0, &r, &err);
    CHECK(st == SL_OK, "snap run: %s", st ? err.message : "");
    if (st == SL_OK) {
        for (k = 0; k < NT; k++) {
            /* every member sits on the observation: the mean is exact */
            CHECK(r.out.mean[k * NS] == pb.y[k], "cycle %lu: mean %g, observation %g",
                  (unsigned long)k, r.out.mean[k * NS], pb.y[k]);
            CHECK(r.out.floored[k] == (double)(k + 1), "cycle %lu: workspace count %g",
                  (unsigned long)k, r.out.floored[k]);
            /* an analysis that does not weigh: no evidence, no resampling */
            CHECK(isnan(r.out.logz[k]) && r.out.resampled[k] == 0.0 &&
                      r.out.ess[k] == (double)NM,
                  "cycle %lu: logz %g, resampled %g, ESS %g", (unsigned long)k, r.out.logz[k],
                  r.out.resampled[k], r.out.ess[k]);
            for (j = 0; j < NM; j++)
                if (r.out.hist_a[k * NM + j] != (double)j)
                    break;
            CHECK(j == NM, "cycle %lu: every member its own ancestor", (unsigned long)k);
        }
        CHECK(isnan(r.out.log_evidence), "no log-evidence");
    }
    run_free(&r);
    /* the entry's own check runs from sl_pf_check */
    pb.var[2] = NS; /* a parameter (there is none): the core refuses first */
    config(&c, &pb);
    c.analysis = &snap;
    CHECK(sl_pf_check(&c, &err) == SL_EINVAL, "an observation out of range refused");
}

/* The particle filter with the test's resampler: at every cycle that
 * resampled, the offspring counts of the recorded ancestors follow the
 * closed form for the recorded weights. */
static void check_resampler_in_run(void)
{
    problem pb;
    sl_pf_config c;
    run_buf r;
    sl_error err;
    sl_status st;
    size_t j, k, cycles = 0;
    make_problem(&pb);
    CHECK(sl_linear_model(&pb.md, &pb.lin, 1.0, &err) == SL_OK, "model: %s", err.message);
    config(&c, &pb);
    c.resampler = &midpoint;
    c.threshold = 1.0;
    st = run(&c, pb.X0, &r, &err);
    CHECK(st == SL_OK, "run with the test's resampler: %s", st ? err.message : "");
    if (st == SL_OK)
        for (k = 0; k < NT; k++) {
            uint32_t anc[NM];
            char what[32];
            if (r.out.resampled[k] == 0.0)
                continue;
            cycles++;
            for (j = 0; j < NM; j++)
                anc[j] = (uint32_t)r.out.hist_a[k * NM + j];
            snprintf(what, sizeof what, "cycle %lu", (unsigned long)k);
            CHECK(offspring_mismatches(NM, r.out.hist_w + k * NM, anc, what) == 0,
                  "offspring counts at cycle %lu", (unsigned long)k);
        }
    CHECK(cycles == NT, "%lu of %d cycles resampled", (unsigned long)cycles, NT);
    run_free(&r);
}

/* -------------------------------------------------------- the table itself */

static void check_table(void)
{
    static const char *const want[] = {"pf", "wenkf", "enkf", "etkf", "ensrf", "eakf", "letkf"};
    const sl_analysis *kal[] = {&sl_analysis_enkf, &sl_analysis_etkf, &sl_analysis_ensrf,
                                &sl_analysis_eakf, &sl_analysis_letkf};
    problem pb;
    sl_pf_config c;
    sl_enkf_config ec;
    sl_error err;
    size_t k;
    for (k = 0; k < 7; k++) {
        const sl_analysis *a = sl_analysis_at(k);
        CHECK(a != NULL && strcmp(a->name, want[k]) == 0 && sl_analysis_find(want[k]) == a &&
                  a->update != NULL,
              "analysis %lu is %s", (unsigned long)k, want[k]);
    }
    CHECK(sl_analysis_at(7) == NULL && sl_analysis_find("noop") == NULL &&
              sl_analysis_find(NULL) == NULL,
          "the table ends, and has no entry of the test");
    /* flags: the particle filters weigh, the Kalman analyses move */
    CHECK(sl_analysis_pf.flags == SL_ANALYSIS_WEIGHTS, "pf weighs only");
    CHECK((sl_analysis_wenkf.flags & (SL_ANALYSIS_WEIGHTS | SL_ANALYSIS_MOVES)) ==
              (SL_ANALYSIS_WEIGHTS | SL_ANALYSIS_MOVES),
          "wenkf weighs and moves");
    for (k = 0; k < 5; k++)
        CHECK(kal[k]->flags == SL_ANALYSIS_MOVES &&
                  strcmp(kal[k]->name, sl_enkf_method_name((int)k)) == 0,
              "%s moves, named as sl_enkf_method %lu", kal[k]->name, (unsigned long)k);

    /* the entry a configuration runs */
    make_problem(&pb);
    CHECK(sl_linear_model(&pb.md, &pb.lin, 1.0, &err) == SL_OK, "model: %s", err.message);
    config(&c, &pb);
    CHECK(sl_pf_analysis_of(&c) == &sl_analysis_pf, "default: pf");
    c.wenkf = 1;
    CHECK(sl_pf_analysis_of(&c) == &sl_analysis_wenkf, "wenkf");
    c.wenkf = 0;
    memset(&ec, 0, sizeof ec);
    ec.inflation = 1.0;
    ec.threads = 1;
    c.enkf = &ec;
    for (k = 0; k < 5; k++) {
        ec.method = (int)k;
        CHECK(sl_pf_analysis_of(&c) == kal[k], "method %lu", (unsigned long)k);
    }
    ec.method = 99;
    CHECK(sl_pf_analysis_of(&c) == NULL, "an unknown method has no entry");
    CHECK(sl_pf_check(&c, &err) == SL_EINVAL && strcmp(err.reason, "badconfig") == 0,
          "an unknown method refused");
    c.analysis = &noop;
    CHECK(sl_pf_analysis_of(&c) == &noop, "cfg->analysis wins");

    /* what sl_pf_check refuses of a chosen entry */
    config(&c, &pb);
    c.analysis = &sl_analysis_etkf;
    c.enkf = &ec;
    ec.method = SL_ENKF_ENSRF;
    CHECK(sl_pf_check(&c, &err) == SL_EINVAL && strcmp(err.reason, "badconfig") == 0,
          "the settings of another method refused");
    ec.method = SL_ENKF_ETKF;
    CHECK(sl_pf_check(&c, &err) == SL_OK, "the settings of its own method: %s", err.message);
    c.enkf = NULL;
    CHECK(sl_pf_check(&c, &err) == SL_OK, "a Kalman entry without settings: %s", err.message);
    c.analysis = &sl_analysis_pf;
    c.enkf = &ec;
    CHECK(sl_pf_check(&c, &err) == SL_EINVAL && strcmp(err.reason, "badconfig") == 0,
          "the particle filter with ensemble Kalman settings refused");
    c.enkf = NULL;
    c.analysis = &noop;
    c.wenkf = 1;
    CHECK(sl_pf_check(&c, &err) == SL_EINVAL && strcmp(err.reason, "badconfig") == 0,
          "an entry and the wenkf flag together refused");
    c.wenkf = 0;
    c.inner = 8;
    c.prior = NULL;
    CHECK(sl_pf_check(&c, &err) == SL_EINVAL && strcmp(err.reason, "badconfig") == 0 &&
              strstr(err.message, "SMC2") != NULL,
          "SMC2 with another analysis refused: %s", err.message);
    c.inner = 0;
    {
        /* an analysis that weighs and moves cannot be followed by a move
         * that re-runs paths (the model given a parameter for the check) */
        sl_analysis moving = noop;
        sl_model mp = pb.md;
        sl_transform tr = sl_transform_for_bounds(-HUGE_VAL, HUGE_VAL);
        sl_prior_entry pe;
        memset(&pe, 0, sizeof pe);
        pe.dist = sl_dist_find("normal");
        pe.a = 0.0;
        pe.b = 1.0;
        mp.n_param = 1;
        config(&c, &pb);
        c.model = &mp;
        c.ptrans = &tr;
        c.prior = &pe;
        c.param_move = &sl_param_move_resample_move;
        c.move.rm_scale = 1.0;
        c.move.rm_diversity = 0.5;
        c.move.rm_sweeps = 2;
        c.analysis = &noop;
        CHECK(sl_pf_check(&c, &err) == SL_OK, "resample_move after a weighing analysis: %s",
              err.message);
        moving.flags = SL_ANALYSIS_WEIGHTS | SL_ANALYSIS_MOVES;
        c.analysis = &moving;
        CHECK(sl_pf_check(&c, &err) == SL_EINVAL && strcmp(err.reason, "badconfig") == 0 &&
                  strstr(err.message, "re-runs paths") != NULL,
              "resample_move after an analysis that moves refused: %s", err.message);
        config(&c, &pb);
    }
    {
        sl_analysis broken = noop;
        broken.update = NULL;
        c.analysis = &broken;
        CHECK(sl_pf_check(&c, &err) == SL_EINVAL && strcmp(err.reason, "badconfig") == 0,
              "an entry without update refused");
        CHECK(sl_pf_workspace(&c) == 0, "and not sized");
    }
}

/* A Kalman entry chosen by cfg->analysis without settings runs as the
 * same method chosen by enkf with no inflation or relaxation. */
static void check_kalman_entry(void)
{
    problem pb;
    sl_pf_config c1, c2;
    sl_enkf_config ec;
    run_buf r1, r2;
    sl_error err;
    sl_status s1, s2;
    make_problem(&pb);
    CHECK(sl_linear_model(&pb.md, &pb.lin, 1.0, &err) == SL_OK, "model: %s", err.message);
    config(&c1, &pb);
    c1.analysis = &sl_analysis_etkf;
    s1 = run(&c1, pb.X0, &r1, &err);
    CHECK(s1 == SL_OK, "ETKF by entry: %s", s1 ? err.message : "");
    config(&c2, &pb);
    memset(&ec, 0, sizeof ec);
    ec.method = SL_ENKF_ETKF;
    ec.inflation = 1.0;
    ec.threads = 1;
    c2.enkf = &ec;
    s2 = run(&c2, pb.X0, &r2, &err);
    CHECK(s2 == SL_OK, "ETKF by method: %s", s2 ? err.message : "");
    if (s1 == SL_OK && s2 == SL_OK)
        CHECK(same(r1.out.mean, r2.out.mean, NS * NT) && same(r1.X, r2.X, NS * NM) &&
                  same(r1.out.inflation, r2.out.inflation, NT),
              "the same run");
    run_free(&r1);
    run_free(&r2);
}

int main(void)
{
    check_resampler();
    check_resampler_in_run();
    check_noop();
    check_snap();
    check_table();
    check_kalman_entry();
    CHECK_DONE("test_variants");
}
