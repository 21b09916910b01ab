/* test_gr4j.c - the GR4J model: its definition, the authors' spreadsheet
 * case, the block path against the per-member map (bit for bit), the water
 * balance, and the length of the unit hydrographs. */
#include "check.h"
#include "gr4j_reference.h"
#include "sluice/integrate.h"
#include "sluice/model.h"
#include "sluice/rng.h"
#include "../../src/models/models.h"

#include <stdint.h>
#include <stdlib.h>

#define NS 63 /* S, R, uh1_1..uh1_20, uh2_1..uh2_40, Q */
#define IUH1 2
#define IUH2 22
#define IQ 62
#define NDAYS 730


/* ---------------------------------------------------------------- helpers */

static double uniform(sl_stream *s, double lo, double hi)
{
    return lo + (hi - lo) * sl_stream_uniform(s);
}

/* Water held by a member: the stores and what the hydrographs will still
 * release (slot 1 of each queue was released on the latest day). */
static double storage(const double *x)
{
    double w = x[0] + x[1];
    int k;
    for (k = 1; k < 20; k++)
        w += x[IUH1 + k];
    for (k = 1; k < 40; k++)
        w += x[IUH2 + k];
    return w;
}

/* Evaporation from the production store as MODELS.md 2 writes it:
 * Es = S (2 - S/X1) tanh(En/X1) / (1 + (1 - S/X1) tanh(En/X1)). */
static double store_evaporation(double s, double x1, double p, double e)
{
    double en = e > p ? e - p : 0.0, t = tanh(en / x1);
    return s * (2.0 - s / x1) * t / (1.0 + (1.0 - s / x1) * t);
}

/* Check the water balance of one day of one member (conservation of
 * water): the change of storage equals Pn - Es - Q plus the exchange
 * actually gained (MODELS.md 2: F is limited by R >= 0 in the routing store
 * and by Qd >= 0). */
static int balance_ok(const double *x0, const double *x1v, const double *p,
                      const double *u, double *gap)
{
    double pn = u[0] > u[1] ? u[0] - u[1] : 0.0;
    double es = store_evaporation(x0[0], p[0], u[0], u[1]);
    double f = p[1] * pow(x0[1] / p[2], 3.5);
    double q9 = x1v[IUH1], q1 = x1v[IUH2];
    double af1 = f < -(x0[1] + q9) ? -(x0[1] + q9) : f;
    double af2 = f < -q1 ? -q1 : f;
    double dw = storage(x1v) - storage(x0);
    double expect = pn - es - x1v[IQ] + af1 + af2;
    double scale = fabs(storage(x0)) + fabs(u[0]) + 1.0;
    *gap = fabs(dw - expect);
    return *gap <= 1e-12 * scale;
}

/* ------------------------------------------------------------- sections */

static void test_definition(const sl_model_def *d)
{
    int k, zero = 1;
    CHECK(strcmp(d->name, "gr4j") == 0, "name %s", d->name);
    CHECK(d->n_state == NS && d->n_min == NS, "n_state %lu", (unsigned long)d->n_state);
    CHECK(d->n_param == 4 && d->n_forcing == 2 && d->n_event == 0, "sizes");
    CHECK(strcmp(d->state_names[0], "S") == 0 && strcmp(d->state_names[1], "R") == 0 &&
              strcmp(d->state_names[2], "uh1_1") == 0 &&
              strcmp(d->state_names[21], "uh1_20") == 0 &&
              strcmp(d->state_names[22], "uh2_1") == 0 &&
              strcmp(d->state_names[61], "uh2_40") == 0 &&
              strcmp(d->state_names[62], "Q") == 0,
          "state names");
    for (k = 0; k < 20; k++) {
        char nm[16];
        snprintf(nm, sizeof nm, "uh1_%d", k + 1);
        CHECK(strcmp(d->state_names[IUH1 + k], nm) == 0, "state %d: %s", IUH1 + k,
              d->state_names[IUH1 + k]);
    }
    for (k = 0; k < 40; k++) {
        char nm[16];
        snprintf(nm, sizeof nm, "uh2_%d", k + 1);
        CHECK(strcmp(d->state_names[IUH2 + k], nm) == 0, "state %d: %s", IUH2 + k,
              d->state_names[IUH2 + k]);
    }
    CHECK(strcmp(d->param_names[0], "X1") == 0 && strcmp(d->param_names[1], "X2") == 0 &&
              strcmp(d->param_names[2], "X3") == 0 && strcmp(d->param_names[3], "X4") == 0,
          "parameter names");
    CHECK(strcmp(d->forcing_names[0], "P") == 0 && strcmp(d->forcing_names[1], "E") == 0,
          "forcing names");
    CHECK(strcmp(d->integrator, "discrete") == 0 && d->dt == 1.0, "integrator %s, dt %g",
          d->integrator, d->dt);
    CHECK(d->map != NULL && d->map_block != NULL && d->block_work != NULL && d->rhs == NULL &&
              d->jump == NULL,
          "functions");
    for (k = 0; k < 4; k++)
        CHECK(d->p_default[k] == ref_p[k], "default X%d = %.17g", k + 1, d->p_default[k]);
    CHECK(d->p_lower[0] == 0 && d->p_upper[0] == HUGE_VAL, "X1 bounds");
    CHECK(d->p_lower[1] == -HUGE_VAL && d->p_upper[1] == HUGE_VAL, "X2 bounds");
    CHECK(d->p_lower[2] == 0 && d->p_upper[2] == HUGE_VAL, "X3 bounds");
    CHECK(d->p_lower[3] == 0.5 && d->p_upper[3] == 20, "X4 bounds");
    /* the spreadsheet's start: S0 = 0.6 X1, R0 = 0.7 X3, empty queues */
    CHECK(d->x0[0] == 0.6 * ref_p[0] && d->x0[1] == 0.7 * ref_p[2], "x0 = %.17g %.17g",
          d->x0[0], d->x0[1]);
    for (k = 2; k < NS; k++)
        zero = zero && d->x0[k] == 0.0;
    CHECK(zero, "x0: queues and Q start at zero");
    CHECK(sl_model_def_find("nonesuch") == NULL, "unknown name");
    {
        const sl_model_def *found = sl_model_def_find("gr4j");
        CHECK(found == NULL || found == d, "registry entry gr4j is this definition");
    }
}

static void test_reference(const sl_model_def *d)
{
    static double P[NDAYS + 1], E[NDAYS + 1], qobs[NDAYS + 1], qsim[NDAYS + 1];
    static double Xe[3 * NS], Ue[3 * 2], Pe[3 * 4];
    double x[NS], u[2], work_q[NDAYS], maxdev = 0, maxdev_engine = 0;
    double mean = 0, sse = 0, sst = 0, nse;
    size_t rows, t, j;
    int qpos = 1, st_ok = 1, same = 1;
    sl_model model;
    sl_def_model dm;
    sl_error err;
    double *wk;
    FILE *f = open_reference();
    if (f == NULL) {
        printf("SKIP gr4j reference case: ../shared/reference/%s not found\n", ref_name);
        return;
    }
    rows = read_reference(f, P, E, qobs, qsim, NDAYS + 1);
    fclose(f);
    CHECK(rows == NDAYS, "reference rows: %lu", (unsigned long)rows);
    if (rows != NDAYS)
        return;

    /* the per-member map from the definition's x0 and defaults */
    memcpy(x, d->x0, sizeof x);
    for (t = 0; t < NDAYS; t++) {
        u[0] = P[t];
        u[1] = E[t];
        d->map(d, NS, (double)t, 1.0, x, d->p_default, u);
        work_q[t] = x[IQ];
        if (fabs(x[IQ] - qsim[t]) > maxdev)
            maxdev = fabs(x[IQ] - qsim[t]);
        qpos = qpos && x[IQ] >= 0;
    }
    /* the spreadsheet's simulated flow, every day, to 1e-9 mm/d */
    CHECK(maxdev <= 1e-9, "largest deviation from the spreadsheet: %.3g mm/d", maxdev);
    CHECK(qpos, "Q >= 0 on every day");
    /* MODELS.md 2: first day Q = 4.1007378585214731 mm/d (the csv holds 15
     * digits of it) */
    CHECK_CLOSE(work_q[0], 4.1007378585214731, 1e-13, "first-day Q");
    /* Nash-Sutcliffe efficiency on days 366-730, textbook definition
     * 1 - sum (Qobs - Qsim)^2 / sum (Qobs - mean Qobs)^2; MODELS.md 2 gives
     * 0.91903003 */
    for (t = 365; t < NDAYS; t++)
        mean += qobs[t];
    mean /= (double)(NDAYS - 365);
    for (t = 365; t < NDAYS; t++) {
        sse += (qobs[t] - work_q[t]) * (qobs[t] - work_q[t]);
        sst += (qobs[t] - mean) * (qobs[t] - mean);
    }
    nse = 1.0 - sse / sst;
    CHECK_CLOSE(nse, 0.91903003, 1e-8, "NSE days 366-730");
    printf("gr4j reference case: max |Q - spreadsheet| = %.3g mm/d, first-day Q = %.17g, "
           "NSE(366-730) = %.10f\n",
           maxdev, work_q[0], nse);

    /* the same case through the engine (block path), three members */
    st_ok = sl_def_model_init(&model, &dm, d, 0, NULL, 0, NULL, NULL, &err) == SL_OK;
    CHECK(st_ok, "engine model: %s", err.message);
    if (!st_ok)
        return;
    CHECK(model.discrete == 1 && model.dt == 1.0 && model.n_state == NS, "engine model fields");
    wk = ck_malloc(model.work * sizeof *wk);
    CHECK(wk != NULL, "work");
    if (wk == NULL)
        return;
    for (j = 0; j < 3; j++) {
        memcpy(Xe + j * NS, d->x0, NS * sizeof(double));
        memcpy(Pe + j * 4, ref_p, sizeof ref_p);
    }
    for (t = 0; t < NDAYS; t++) {
        for (j = 0; j < 3; j++) {
            Ue[2 * j] = P[t];
            Ue[2 * j + 1] = E[t];
        }
        st_ok = st_ok && model.step(&model, (double)t, (double)(t + 1), 0, 3, Xe, Pe, Ue, 1u,
                                    (uint32_t)t, wk, &err) == SL_OK;
        for (j = 0; j < 3; j++) {
            if (fabs(Xe[j * NS + IQ] - qsim[t]) > maxdev_engine)
                maxdev_engine = fabs(Xe[j * NS + IQ] - qsim[t]);
            same = same && Xe[j * NS + IQ] == work_q[t];
        }
    }
    CHECK(st_ok, "engine steps return SL_OK");
    CHECK(same, "engine (block path) == per-member map on the reference case");
    CHECK(maxdev_engine <= 1e-9, "engine: largest deviation %.3g mm/d", maxdev_engine);
    ck_free(wk);
}

/* 1000 members, random parameters and rain: the block path, in several
 * groupings and through the engine, equals the per-member map bit for bit;
 * the water balance holds every day; Q >= 0. */
/* The forcing a forced span asks for: day l of Uall, for the members
 * first + i0 .. of the span, into the span's U (U: its first member's
 * column); the days of each block must come in order, one block at a
 * time. */
typedef struct {
    const double *Uall;
    double *U;
    size_t N, first, calls;
    size_t last_i0, last_l;
    int order_ok;
} span_feed;

static void feed_block(void *ctx, size_t l, size_t i0, size_t count)
{
    span_feed *f = (span_feed *)ctx;
    if (f->calls == 0)
        f->order_ok = 1;
    else if (i0 == f->last_i0 && l != f->last_l + 1)
        f->order_ok = 0;
    f->calls++;
    f->last_i0 = i0;
    f->last_l = l;
    memcpy(f->U + 2 * i0, f->Uall + l * f->N * 2 + 2 * (f->first + i0),
           2 * count * sizeof(double));
}

/* The constants of X4 at and beyond its bounds, 0, negative, NaN and
 * infinite: the block path given them moves every member as the map does */
static void test_constants(const sl_model_def *d)
{
    static const double x4s[] = {0.5, 1.0, 1.3891344662544509, 2.5, 9.999, 10.0, 19.5, 20.0,
                                 25.0, 0.2, 0.0, -1.0, NAN, INFINITY};
    enum { M = sizeof x4s / sizeof *x4s, DAYS = 30 };
    double Xm[M * NS], Xc[M * NS], P[M * 4], U[M * 2], C[M * (2 + 20 + 40)];
    double *wk = ck_malloc(d->block_work(NS, M) * sizeof(double));
    size_t j, t, i;
    int same = 1;
    for (j = 0; j < M; j++) {
        P[4 * j] = 300.0;
        P[4 * j + 1] = 0.5;
        P[4 * j + 2] = 80.0;
        P[4 * j + 3] = x4s[j];
        for (i = 0; i < NS; i++)
            Xm[NS * j + i] = i < 2 ? 50.0 : 0.01 * (double)((i * 7 + j) % 11);
        d->constants(d, P + 4 * j, C + d->n_const * j);
    }
    memcpy(Xc, Xm, sizeof Xm);
    for (t = 0; t < DAYS; t++) {
        for (j = 0; j < M; j++) {
            U[2 * j] = t % 3 == 0 ? 0.0 : 12.0 + (double)t;
            U[2 * j + 1] = 3.0;
            d->map(d, NS, (double)t, 1.0, Xm + NS * j, P + 4 * j, U + 2 * j);
        }
        d->map_const_block(d, NS, M, (double)t, 1.0, Xc, P, C, U, wk);
        same = same && memcmp(Xm, Xc, sizeof Xm) == 0;
    }
    CHECK(same, "constants of X4 at, beyond and outside its bounds (NaN, Inf, <= 0): the "
                "block path given them == per-member map, bit for bit");
    ck_free(wk);
}

static void test_block(const sl_model_def *d)
{
    enum { N = 1000, DAYS = 400 };
    static double Xm[N * NS], Xb[N * NS], Xg[N * NS], Xe[N * NS], X0[N * NS];
    static double Xc[N * NS], Xs[N * NS], Xinit[N * NS], Cm[N * (2 + 20 + 40)];
    static double Pm[N * 4], Uall[DAYS * N * 2], Us[N * 2];
    static const size_t groups[] = {1, 3, 16, 17, 64, 5, 31, 200, 663};
    double *wk_block, *wk_group, *wk_engine, worst = 0;
    size_t j, t, g, wb;
    int same_b = 1, same_g = 1, same_e = 1, same_c = 1, bal = 1, qpos = 1, st_ok = 1;
    size_t emptied = 0;
    sl_model model;
    sl_def_model dm;
    sl_error err;
    sl_stream s;

    sl_stream_init(&s, 20240611u, 0, 0, SL_PURPOSE_USER);
    for (j = 0; j < N; j++) {
        double *p = Pm + 4 * j, *x = Xm + NS * j;
        p[0] = exp(uniform(&s, log(20.0), log(2500.0)));
        p[1] = uniform(&s, -6.0, 6.0);
        p[2] = exp(uniform(&s, log(5.0), log(600.0)));
        /* X4 over its whole range, its ends included; runs of members
         * sharing one X4 as well as all-different ones */
        if (j % 10 == 0)
            p[3] = 20.0;
        else if (j % 10 == 1)
            p[3] = 0.5;
        else if (j >= 500 && j < 700)
            p[3] = 3.0 + (double)((j - 500) / 50);
        else
            p[3] = uniform(&s, 0.5, 20.0);
        if (j % 50 == 7)
            p[1] = 0.0;
        if (j % 25 == 3) /* strong export: the routing store runs dry */
            p[1] = uniform(&s, -60.0, -20.0);
        memset(x, 0, NS * sizeof(double));
        x[0] = uniform(&s, 0.0, 1.0) * p[0];
        x[1] = uniform(&s, 0.0, 1.0) * p[2];
    }
    memcpy(Xb, Xm, sizeof Xm);
    memcpy(Xg, Xm, sizeof Xm);
    memcpy(Xe, Xm, sizeof Xm);
    memcpy(Xc, Xm, sizeof Xm);
    memcpy(Xinit, Xm, sizeof Xm);
    /* rain: dry days, ordinary days and a few storms */
    for (t = 0; t < DAYS; t++)
        for (j = 0; j < N; j++) {
            double v = sl_stream_uniform(&s), *U = Uall + t * N * 2;
            U[2 * j] = v < 0.45 ? 0.0 : (v < 0.97 ? -8.0 * log(sl_stream_uniform(&s))
                                                  : uniform(&s, 60.0, 250.0));
            U[2 * j + 1] = uniform(&s, 0.0, 7.0);
        }
    /* the members' constants, made once for all the days */
    CHECK(d->n_const == 2 + 20 + 40 && d->constants != NULL && d->map_const_block != NULL,
          "gr4j has constants: %lu", (unsigned long)d->n_const);
    for (j = 0; j < N; j++)
        d->constants(d, Pm + 4 * j, Cm + d->n_const * j);

    st_ok = sl_def_model_init(&model, &dm, d, 0, NULL, 0, NULL, NULL, &err) == SL_OK;
    CHECK(st_ok, "engine model: %s", err.message);
    if (!st_ok)
        return;
    wb = d->block_work(NS, N);
    wk_block = ck_malloc(wb * sizeof(double));
    wk_group = ck_malloc(d->block_work(NS, 663) * sizeof(double));
    wk_engine = ck_malloc(model.work * sizeof(double));
    CHECK(wk_block != NULL && wk_group != NULL && wk_engine != NULL, "work");
    if (wk_block == NULL || wk_group == NULL || wk_engine == NULL) {
        ck_free(wk_block);
        ck_free(wk_group);
        ck_free(wk_engine);
        return;
    }

    for (t = 0; t < DAYS; t++) {
        size_t first;
        const double *U = Uall + t * N * 2;
        memcpy(X0, Xm, sizeof Xm);
        for (j = 0; j < N; j++)
            d->map(d, NS, (double)t, 1.0, Xm + NS * j, Pm + 4 * j, U + 2 * j);
        d->map_block(d, NS, N, (double)t, 1.0, Xb, Pm, U, wk_block);
        for (first = 0, g = 0; first < N; g++) {
            size_t c = groups[g % (sizeof groups / sizeof *groups)];
            if (c > N - first)
                c = N - first;
            d->map_block(d, NS, c, (double)t, 1.0, Xg + NS * first, Pm + 4 * first,
                         U + 2 * first, wk_group);
            first += c;
        }
        /* the engine hands blocks of SL_MODEL_BLOCK; call it on two pieces */
        st_ok = st_ok && model.step(&model, (double)t, (double)(t + 1), 0, 389, Xe, Pm, U, 1u,
                                    (uint32_t)t, wk_engine, &err) == SL_OK;
        st_ok = st_ok && model.step(&model, (double)t, (double)(t + 1), 389, N - 389,
                                    Xe + NS * 389, Pm + 4 * 389, U + 2 * 389, 1u,
                                    (uint32_t)t, wk_engine, &err) == SL_OK;
        d->map_const_block(d, NS, N, (double)t, 1.0, Xc, Pm, Cm, U, wk_block);
        same_c = same_c && memcmp(Xm, Xc, sizeof Xm) == 0;
        same_b = same_b && memcmp(Xm, Xb, sizeof Xm) == 0;
        same_g = same_g && memcmp(Xm, Xg, sizeof Xm) == 0;
        same_e = same_e && memcmp(Xm, Xe, sizeof Xm) == 0;
        for (j = 0; j < N; j++) {
            double gap;
            const double *x = Xm + NS * j;
            if (!balance_ok(X0 + NS * j, x, Pm + 4 * j, U + 2 * j, &gap)) {
                if (bal)
                    printf("water balance, day %lu member %lu: gap %.3g\n",
                           (unsigned long)t + 1, (unsigned long)j, gap);
                bal = 0;
            }
            if (gap > worst)
                worst = gap;
            qpos = qpos && x[IQ] >= 0 && isfinite(x[IQ]) && x[0] >= 0 && x[1] >= 0;
            emptied += x[1] == 0.0;
        }
    }
    /* the engine's forced span: members 0..388 through days 0..149, then
     * 150..399; the rest in one call; each block's forcing as it asks */
    CHECK(model.span_forced != NULL, "the engine model of gr4j has a forced span");
    if (model.span_forced != NULL) {
        span_feed feed = {Uall, Us, N, 0, 0, 0, 0, 0};
        size_t fl = 0;
        memcpy(Xs, Xinit, sizeof Xs);
        feed.first = 0;
        st_ok = st_ok && model.span_forced(&model, 0.0, 1.0, (double)DAYS, DAYS, 0, 150, 0, 389,
                                           Xs, Pm, Us, feed_block, &feed, 1u, 0u, wk_engine,
                                           &fl, &err) == SL_OK;
        st_ok = st_ok && model.span_forced(&model, 0.0, 1.0, (double)DAYS, DAYS, 150, DAYS, 0,
                                           389, Xs, Pm, Us, feed_block, &feed, 1u, 0u,
                                           wk_engine, &fl, &err) == SL_OK;
        feed.first = 389;
        feed.U = Us + 2 * 389;
        st_ok = st_ok && model.span_forced(&model, 0.0, 1.0, (double)DAYS, DAYS, 0, DAYS, 389,
                                           N - 389, Xs + NS * 389, Pm + 4 * 389, Us + 2 * 389,
                                           feed_block, &feed, 1u, 0u, wk_engine, &fl,
                                           &err) == SL_OK;
        CHECK(memcmp(Xm, Xs, sizeof Xm) == 0 && feed.calls > 0 && feed.order_ok,
              "forced span (blocks of %d through the days, %lu fills) == per-member map, "
              "fills in order %d", SL_MODEL_BLOCK, (unsigned long)feed.calls, feed.order_ok);
    }
    CHECK(same_c, "block path with the constants made once == per-member map");
    CHECK(st_ok, "engine steps return SL_OK");
    CHECK(same_b, "block path (one block of 1000) == per-member map, bit for bit");
    CHECK(same_g, "block path (groups of 1, 3, 16, 17, 64, ...) == per-member map");
    CHECK(same_e, "engine (blocks of %d, two calls) == per-member map", SL_MODEL_BLOCK);
    CHECK(bal, "water balance every day, every member (worst gap %.3g mm)", worst);
    CHECK(qpos, "Q >= 0, S >= 0, R >= 0, all finite");
    CHECK(emptied > 0, "the exchange emptied a routing store (R = 0) on some days");
    ck_free(wk_block);
    ck_free(wk_group);
    ck_free(wk_engine);
}

/* A long dry spell after a wet month: the production store only falls, the
 * total storage only falls where there is no import (X2 <= 0), Q >= 0,
 * and the water balance holds. */
static void test_dry_spell(const sl_model_def *d)
{
    enum { M = 6, WET = 30, DRY = 1500 };
    static const double prm[M][4] = {
        {320.10730922522407, 2.4208432970477163, 69.627618031872942, 1.3891344662544509},
        {350.0, 0.0, 90.0, 1.7},
        {1200.0, -3.5, 40.0, 20.0},
        {80.0, -0.8, 250.0, 0.5},
        {600.0, 4.0, 15.0, 7.25},
        {45.0, 0.0, 300.0, 12.0}};
    double x[NS], x0[NS], u[2];
    size_t m, t;
    int s_falls = 1, w_falls = 1, qpos = 1, bal = 1;
    for (m = 0; m < M; m++) {
        memset(x, 0, sizeof x);
        x[0] = 0.5 * prm[m][0];
        x[1] = 0.5 * prm[m][2];
        for (t = 0; t < WET; t++) {
            u[0] = t % 3 == 0 ? 35.0 : 6.0;
            u[1] = 1.5;
            d->map(d, NS, (double)t, 1.0, x, prm[m], u);
        }
        u[0] = 0.0;
        u[1] = 4.0;
        for (t = 0; t < DRY; t++) {
            double gap;
            memcpy(x0, x, sizeof x);
            d->map(d, NS, (double)(WET + t), 1.0, x, prm[m], u);
            s_falls = s_falls && x[0] <= x0[0];
            if (prm[m][1] <= 0)
                w_falls = w_falls && storage(x) <= storage(x0);
            qpos = qpos && x[IQ] >= 0;
            bal = bal && balance_ok(x0, x, prm[m], u, &gap);
        }
        /* after 1500 dry days the stores have given most of their water */
        CHECK(x[0] < 0.25 * prm[m][0], "member %lu: S = %g after the dry spell",
              (unsigned long)m, x[0]);
    }
    CHECK(s_falls, "dry spell: S never rises");
    CHECK(w_falls, "dry spell: total storage never rises when X2 <= 0");
    CHECK(qpos, "dry spell: Q >= 0");
    CHECK(bal, "dry spell: water balance");
}

/* SH1 and SH2 of MODELS.md 2, written independently with pow */
static double ref_sh1(double t, double x4)
{
    return t <= 0 ? 0.0 : (t < x4 ? pow(t / x4, 2.5) : 1.0);
}

static double ref_sh2(double t, double x4)
{
    if (t <= 0)
        return 0.0;
    if (t <= x4)
        return 0.5 * pow(t / x4, 2.5);
    if (t < 2 * x4)
        return 1.0 - 0.5 * pow(2.0 - t / x4, 2.5);
    return 1.0;
}

/* One rainy day from empty queues: UH1 spreads 0.9 Pr over ceil(X4) days
 * and UH2 0.1 Pr over ceil(2 X4) days; X4 = 20 fills every slot. */
static void test_hydrographs(const sl_model_def *d)
{
    static const double x4s[] = {20.0, 19.5, 1.3891344662544509, 0.5, 7.0, 3.2};
    size_t i;
    int k;
    for (i = 0; i < sizeof x4s / sizeof *x4s; i++) {
        double x[NS] = {0}, p[4], u[2] = {50.0, 0.0}, s1 = 0, s2 = 0, dev = 0;
        int n1 = 0, n2 = 0, e1 = (int)ceil(x4s[i]), e2 = (int)ceil(2 * x4s[i]);
        memcpy(p, ref_p, sizeof p);
        p[3] = x4s[i];
        x[0] = 0.6 * p[0];
        x[1] = 0.7 * p[2];
        d->map(d, NS, 0.0, 1.0, x, p, u);
        for (k = 0; k < 20; k++) {
            n1 += x[IUH1 + k] > 0;
            s1 += x[IUH1 + k];
        }
        for (k = 0; k < 40; k++) {
            n2 += x[IUH2 + k] > 0;
            s2 += x[IUH2 + k];
        }
        CHECK(n1 == (e1 < 20 ? e1 : 20) && n2 == (e2 < 40 ? e2 : 40),
              "X4 = %g: %d UH1 and %d UH2 slots used, expected %d and %d", x4s[i], n1, n2,
              e1, e2);
        /* nonzero slots are the leading ones */
        for (k = 0; k < 20; k++)
            CHECK((x[IUH1 + k] > 0) == (k < e1), "X4 = %g: uh1_%d", x4s[i], k + 1);
        for (k = 0; k < 40; k++)
            CHECK((x[IUH2 + k] > 0) == (k < e2), "X4 = %g: uh2_%d", x4s[i], k + 1);
        /* the 0.9 / 0.1 split and the ordinates SH(k) - SH(k-1) */
        CHECK_REL(s1, 9.0 * s2, 1e-13, "UH1 : UH2 = 9 : 1");
        for (k = 0; k < 20; k++) {
            double o = ref_sh1(k + 1, x4s[i]) - ref_sh1(k, x4s[i]);
            if (fabs(x[IUH1 + k] / s1 - o) > dev)
                dev = fabs(x[IUH1 + k] / s1 - o);
        }
        for (k = 0; k < 40; k++) {
            double o = ref_sh2(k + 1, x4s[i]) - ref_sh2(k, x4s[i]);
            if (fabs(x[IUH2 + k] / s2 - o) > dev)
                dev = fabs(x[IUH2 + k] / s2 - o);
        }
        CHECK(dev < 1e-14, "X4 = %g: ordinates deviate by %.3g", x4s[i], dev);
    }
    /* the queue moves on by one slot a day: after a second, dry day (no
     * rain, no evaporation, a full store still percolates) slot k holds the
     * old slot k+1 plus the new day's share */
    {
        double x[NS] = {0}, y[NS], p[4], u[2] = {50.0, 0.0};
        int ok = 1;
        memcpy(p, ref_p, sizeof p);
        p[3] = 20.0;
        x[0] = 0.6 * p[0];
        x[1] = 0.7 * p[2];
        d->map(d, NS, 0.0, 1.0, x, p, u);
        memcpy(y, x, sizeof x);
        u[0] = 0.0;
        d->map(d, NS, 1.0, 1.0, x, p, u);
        for (k = 0; k < 19; k++)
            ok = ok && x[IUH1 + k] > y[IUH1 + k + 1];
        ok = ok && x[IUH1 + 19] > 0 && x[IUH1 + 19] < y[IUH1 + 19];
        CHECK(ok, "UH1 queue shifts by one slot a day");
    }
}

/* Out-of-range and broken inputs stay finite or become NaN; nothing is
 * read or written outside the member. */
static void test_edges(const sl_model_def *d)
{
    double x[NS + 2], p[4], u[2] = {12.0, 1.0};
    int k, nan_seen = 0;
    x[NS] = x[NS + 1] = 123.0;
    memcpy(x, d->x0, NS * sizeof(double));
    memcpy(p, ref_p, sizeof p);
    p[3] = 45.0; /* beyond the bound: the hydrograph is cut at its last slot */
    d->map(d, NS, 0.0, 1.0, x, p, u);
    {
        double s1 = 0, s2 = 0;
        for (k = 0; k < 20; k++)
            s1 += x[IUH1 + k];
        for (k = 0; k < 40; k++)
            s2 += x[IUH2 + k];
        CHECK(isfinite(x[IQ]) && x[IQ] >= 0 && s1 > 0 && fabs(s1 - 9 * s2) <= 1e-12 * s1,
              "X4 = 45: finite, water kept");
    }
    CHECK(x[NS] == 123.0 && x[NS + 1] == 123.0, "no write past the state");
    memcpy(x, d->x0, NS * sizeof(double));
    p[3] = (double)NAN;
    d->map(d, NS, 0.0, 1.0, x, p, u);
    for (k = 0; k < NS; k++)
        nan_seen = nan_seen || isnan(x[k]);
    CHECK(nan_seen && isnan(x[IQ]), "X4 = NaN: the member turns NaN");
    memcpy(x, d->x0, NS * sizeof(double));
    memcpy(p, ref_p, sizeof p);
    u[0] = (double)NAN;
    d->map(d, NS, 0.0, 1.0, x, p, u);
    CHECK(isnan(x[IQ]) && isnan(x[0]), "P = NaN: the member turns NaN");
}

/* Bits equal, any NaN equal to any NaN. */
static int same_or_both_nan(const double *a, const double *b, size_t n)
{
    size_t i;
    for (i = 0; i < n; i++)
        if (!(isnan(a[i]) && isnan(b[i])) && memcmp(a + i, b + i, sizeof(double)) != 0)
            return 0;
    return 1;
}

/* X4 outside its bounds, at its ends, at whole and half days, infinite
 * and NaN, mixed with ordinary members in one chunk: the block path gives
 * the per-member map's values (common practice: a vectorised path checked
 * against its scalar reference, here on the inputs whose branches differ). */
static void test_block_edges(const sl_model_def *d)
{
    static const double x4s[] = {(double)NAN, -1.0, 0.0, 0.3, 0.5, 1.0, 1.5, 2.0,
                                 3.7, 9.99, 10.0, 10.5, 19.5, 20.0, 20.5, 25.0,
                                 38.7, 39.0, 39.5, 45.0, HUGE_VAL, -HUGE_VAL, 1.7, 0.9};
    enum { M = sizeof x4s / sizeof *x4s, DAYS = 50 };
    double Xm[M * NS], Xb[M * NS], P[M * 4], U[M * 2];
    double *work = ck_malloc(d->block_work(NS, M) * sizeof(double));
    size_t j, t, bad_day = 0;
    int same = 1;
    CHECK(work != NULL, "work");
    if (work == NULL)
        return;
    for (j = 0; j < M; j++) {
        memcpy(Xm + j * NS, d->x0, NS * sizeof(double));
        memcpy(P + j * 4, d->p_default, 4 * sizeof(double));
        P[j * 4 + 3] = x4s[j];
    }
    memcpy(Xb, Xm, sizeof Xm);
    for (t = 0; t < DAYS; t++) {
        for (j = 0; j < M; j++) {
            U[2 * j] = (t + j) % 3 == 0 ? 0.0 : 4.0 + (double)((t * 7 + j) % 30);
            U[2 * j + 1] = 2.5;
            d->map(d, NS, (double)t, 1.0, Xm + j * NS, P + j * 4, U + 2 * j);
        }
        d->map_block(d, NS, M, (double)t, 1.0, Xb, P, U, work);
        if (same && !same_or_both_nan(Xm, Xb, M * NS)) {
            same = 0;
            bad_day = t;
        }
    }
    CHECK(same, "X4 at and beyond its bounds, infinite and NaN: block path == map "
                "(first difference on day %lu)", (unsigned long)bad_day);
    ck_free(work);
}

int main(void)
{
    const sl_model_def *d = &sl_model_gr4j;
    test_definition(d);
    test_reference(d);
    test_block(d);
    test_constants(d);
    test_block_edges(d);
    test_dry_spell(d);
    test_hydrographs(d);
    test_edges(d);
    CHECK_DONE("test_gr4j");
}
