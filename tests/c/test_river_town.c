/* test_river_town.c - the coupled model river_town: its definition against
 * the two components' own, the coupling switched off (a = 0) against GR4J
 * and the flood model run alone (bit for bit), the authors' GR4J
 * spreadsheet case inside the coupled model, and the annual maximum, the
 * rating curve and the flood at a year end against hand calculations.
 *
 * GR4J: Perrin, Michel & Andreassian (2003), the authors' spreadsheet
 * (MODELS.md 2). Flood model: Di Baldassarre et al. (2013), form of
 * Viglione et al. (2014), secondary source (MODELS.md 1, eqs. 4-6). The
 * rating curve h = a (Q - Q0)^b: common practice. */
#include "check.h"
#include "gr4j_reference.h"
#include "sluice/integrate.h"
#include "sluice/model.h"
#include "sluice/rng.h"
#include "../../src/models/models.h"

#include <stdint.h>
#include <stdlib.h>

enum { NG = 63, NF = 6, NS = 72, NP = 18, IQ = 62, IFL = 63, IQMAX = 69, ILEVEL = 70, IDAY = 71 };
enum { PA = 14, PB = 15, PQ0 = 16, PYEAR = 17 };
/* the flood model's parameters that are rates per year */
static const int flood_rates[4] = {2, 5, 7, 9};

#define NDAYS 730

/* ---------------------------------------------------------------- helpers */


/* Invented daily forcing of a fictional catchment: rain on about 45% of
 * days, exponential amounts of mean 8 mm; a seasonal evapotranspiration. */
static void invent_forcing(double *P, double *E, size_t days)
{
    sl_stream s;
    size_t t;
    sl_stream_init(&s, 7u, 0u, 0u, 0u);
    for (t = 0; t < days; t++) {
        double u = sl_stream_uniform(&s), v = sl_stream_uniform(&s);
        P[t] = v < 0.45 ? -8.0 * log(1.0 - u) : 0.0;
        E[t] = 2.0 + 1.5 * sin(6.283185307179586 * (double)t / 365.0);
    }
}

/* The flood model's parameters as the coupled model passes them: its rates
 * divided by the year length. */
static void flood_in_days(const double *p, double *pf)
{
    int k;
    memcpy(pf, p + 4, 10 * sizeof(double));
    for (k = 0; k < 4; k++)
        pf[flood_rates[k]] = pf[flood_rates[k]] / p[PYEAR];
}

static int same_bits(const double *a, const double *b, size_t n)
{
    return memcmp(a, b, n * sizeof(double)) == 0;
}

/* ------------------------------------------------------------- the tests */

static void test_definition(void)
{
    const sl_model_def *d = &sl_model_river_town, *g = &sl_model_gr4j, *f = &sl_model_flood;
    size_t k;
    int ok = 1;
    CHECK(sl_model_def_find("river_town") == d, "registry entry river_town");
    CHECK(d->n_state == NS && d->n_min == NS && d->n_param == NP && d->n_forcing == 2 &&
              d->n_event == 1,
          "sizes");
    CHECK(d->map != NULL && d->rhs == NULL && d->jump != NULL, "a daily map with a jump");
    CHECK(d->dt == 1.0 && strcmp(d->integrator, "discrete") == 0, "dt 1, discrete");
    /* the components' names, defaults, bounds and internal flags, as their
     * own definitions give them */
    for (k = 0; k < NG; k++) {
        ok = ok && strcmp(d->state_names[k], g->state_names[k]) == 0;
        ok = ok && d->x0[k] == g->x0[k];
        ok = ok && d->state_internal[k] == g->state_internal[k];
    }
    for (k = 0; k < NF; k++) {
        ok = ok && (k == 5 || strcmp(d->state_names[IFL + k], f->state_names[k]) == 0);
        ok = ok && d->x0[IFL + k] == f->x0[k];
        ok = ok && d->state_internal[IFL + k] == 0;
    }
    CHECK(ok, "states of the components");
    CHECK(strcmp(d->state_names[IFL + 5], "R_levee") == 0, "the flood model's R renamed");
    ok = 1;
    for (k = 0; k < 4; k++)
        ok = ok && strcmp(d->param_names[k], g->param_names[k]) == 0 &&
             d->p_default[k] == g->p_default[k] && d->p_lower[k] == g->p_lower[k] &&
             d->p_upper[k] == g->p_upper[k];
    for (k = 0; k < 10; k++)
        ok = ok && strcmp(d->param_names[4 + k], f->param_names[k]) == 0 &&
             d->p_default[4 + k] == f->p_default[k] && d->p_lower[4 + k] == f->p_lower[k] &&
             d->p_upper[4 + k] == f->p_upper[k];
    CHECK(ok, "parameters of the components");
    CHECK(strcmp(d->param_names[PA], "a") == 0 && strcmp(d->param_names[PB], "b") == 0 &&
              strcmp(d->param_names[PQ0], "Q0") == 0 &&
              strcmp(d->param_names[PYEAR], "year_length") == 0,
          "coupling parameters");
    CHECK(d->p_default[PA] == 0.4 && d->p_default[PB] == 0.6 && d->p_default[PQ0] == 5.0 &&
              d->p_default[PYEAR] == 365.0,
          "coupling defaults");
    CHECK(d->p_lower[PA] == 0 && d->p_lower[PB] == 0.1 && d->p_upper[PB] == 3.0 &&
              d->p_lower[PQ0] == 0 && d->p_lower[PYEAR] == 1.0,
          "coupling bounds");
    CHECK(d->x0[IQMAX] == 0 && d->x0[ILEVEL] == 0 && d->x0[IDAY] == 0 &&
              d->state_internal[IQMAX] == 0 && d->state_internal[ILEVEL] == 0 &&
              d->state_internal[IDAY] == 1,
          "coupling states");
    CHECK(strcmp(d->forcing_names[0], "P") == 0 && strcmp(d->forcing_names[1], "E") == 0 &&
              strcmp(d->event_names[0], "W") == 0,
          "forcings and events");
    /* every name differs (the runs refuse duplicates) */
    ok = 1;
    for (k = 0; k < NS; k++) {
        size_t j;
        for (j = k + 1; j < NS; j++)
            ok = ok && strcmp(d->state_names[k], d->state_names[j]) != 0;
        for (j = 0; j < NP; j++)
            ok = ok && strcmp(d->state_names[k], d->param_names[j]) != 0;
    }
    CHECK(ok, "state names differ from each other and from the parameters");
}

/* The coupling off (a = 0) through the engine, three members with their
 * own parameters, given floods at whole days: the GR4J part equals GR4J
 * alone, the town equals the flood model alone (rates per day), bit for
 * bit, on every day. */
static void test_uncoupled(void)
{
    enum { N = 3, DAYS = 3 * 365 };
    static double P[DAYS], E[DAYS];
    static const double ev_t[] = {100.0, 400.0, 401.0, 900.0};
    static const double ev_w[] = {1.2, 3.1, 0.4, 2.2};
    double X[N * NS], Xg[N * NG], Xf[N * NF], Pc[N * NP], Pg[N * 4], Pf[N * 10];
    double U[N * 2];
    double *wk = NULL, *wkg = NULL, *wkf = NULL;
    sl_model mc, mg, mf;
    sl_def_model dc, dg, df;
    sl_events ev;
    sl_error err;
    size_t t, j;
    int ok, same_g = 1, same_f = 1, zero_level = 1;
    invent_forcing(P, E, DAYS);
    memset(&ev, 0, sizeof ev);
    ev.count = 4;
    ev.nv = 1;
    ev.time = ev_t;
    ev.value = ev_w;
    ok = sl_def_model_init(&mc, &dc, &sl_model_river_town, 0, NULL, 0, NULL, &ev, &err) == SL_OK &&
         sl_def_model_init(&mg, &dg, &sl_model_gr4j, 0, NULL, 0, NULL, NULL, &err) == SL_OK &&
         sl_def_model_init(&mf, &df, &sl_model_flood, 0, NULL, 1.0, NULL, &ev, &err) == SL_OK;
    CHECK(ok, "engine models: %s", err.message);
    if (!ok)
        return;
    wk = ck_malloc(mc.work * sizeof *wk);
    wkg = ck_malloc(mg.work * sizeof *wkg);
    wkf = ck_malloc(mf.work * sizeof *wkf);
    CHECK(wk && wkg && wkf, "work");
    for (j = 0; j < N; j++) {
        double *p = Pc + j * NP;
        memcpy(X + j * NS, sl_model_river_town.x0, NS * sizeof(double));
        memcpy(p, sl_model_river_town.p_default, NP * sizeof(double));
        /* members differ: production store, memory loss, and year length */
        p[0] = 250.0 + 50.0 * (double)j;
        p[4 + 9] = 0.1 + 0.1 * (double)j;
        p[PYEAR] = 365.0 - 5.0 * (double)j;
        p[PA] = 0.0;
        memcpy(Xg + j * NG, sl_model_gr4j.x0, NG * sizeof(double));
        memcpy(Pg + j * 4, p, 4 * sizeof(double));
        memcpy(Xf + j * NF, sl_model_flood.x0, NF * sizeof(double));
        flood_in_days(p, Pf + j * 10);
    }
    for (t = 0; t < DAYS && wk && wkg && wkf; t++) {
        for (j = 0; j < N; j++) {
            U[2 * j] = P[t];
            U[2 * j + 1] = E[t];
        }
        ok = ok && mc.step(&mc, (double)t, (double)(t + 1), 0, N, X, Pc, U, 1u, (uint32_t)t, wk,
                           &err) == SL_OK;
        ok = ok && mg.step(&mg, (double)t, (double)(t + 1), 0, N, Xg, Pg, U, 1u, (uint32_t)t,
                           wkg, &err) == SL_OK;
        ok = ok && mf.step(&mf, (double)t, (double)(t + 1), 0, N, Xf, Pf, U, 1u, (uint32_t)t,
                           wkf, &err) == SL_OK;
        for (j = 0; j < N; j++) {
            same_g = same_g && same_bits(X + j * NS, Xg + j * NG, NG);
            same_f = same_f && same_bits(X + j * NS + IFL, Xf + j * NF, NF);
            zero_level = zero_level && X[j * NS + ILEVEL] == 0.0;
        }
    }
    CHECK(ok, "steps return SL_OK");
    CHECK(same_g, "a = 0: the GR4J part is GR4J alone, bit for bit, every day");
    CHECK(same_f, "a = 0: the town is the flood model alone (rates / year_length), bit for bit");
    CHECK(zero_level, "a = 0: no level");
    /* the given floods did something: the first damaged the town */
    CHECK(Xf[4] > 0 && isfinite(Xf[0]), "the given floods act (F = %g)", Xf[4]);
    ck_free(wk);
    ck_free(wkg);
    ck_free(wkf);
}

/* The spreadsheet case inside the coupled model: the flow of every day as
 * GR4J alone gives it (MODELS.md 2), and the first year end's level from
 * that year's largest flow by the rating curve. */
static void test_reference(void)
{
    static double P[NDAYS + 1], E[NDAYS + 1], qobs[NDAYS + 1], qsim[NDAYS + 1];
    const sl_model_def *d = &sl_model_river_town;
    double x[NS], u[2], q[NDAYS], maxdev = 0, mean = 0, sse = 0, sst = 0, nse, qmax1 = 0;
    double level1 = -1, want;
    size_t rows, t;
    FILE *f = open_reference();
    if (f == NULL) {
        printf("SKIP river_town reference case: ../shared/reference/%s not found\n", ref_name);
        return;
    }
    rows = read_reference(f, P, E, qobs, qsim, NDAYS + 1);
    fclose(f);
    CHECK(rows == NDAYS, "reference rows: %lu", (unsigned long)rows);
    if (rows != NDAYS)
        return;
    memcpy(x, d->x0, sizeof x);
    for (t = 0; t < NDAYS; t++) {
        u[0] = P[t];
        u[1] = E[t];
        d->map(d, NS, (double)t, 1.0, x, d->p_default, u);
        q[t] = x[IQ];
        if (fabs(q[t] - qsim[t]) > maxdev)
            maxdev = fabs(q[t] - qsim[t]);
        if (t < 365 && q[t] > qmax1)
            qmax1 = q[t];
        if (t == 364)
            level1 = x[ILEVEL];
    }
    /* the spreadsheet's simulated flow, every day, to 1e-9 mm/d, as GR4J
     * alone (test_gr4j.c) */
    CHECK(maxdev <= 1e-9, "largest deviation from the spreadsheet: %.3g mm/d", maxdev);
    CHECK_CLOSE(q[0], 4.1007378585214731, 1e-13, "first-day Q");
    for (t = 365; t < NDAYS; t++)
        mean += qobs[t];
    mean /= (double)(NDAYS - 365);
    for (t = 365; t < NDAYS; t++) {
        sse += (qobs[t] - q[t]) * (qobs[t] - q[t]);
        sst += (qobs[t] - mean) * (qobs[t] - mean);
    }
    nse = 1.0 - sse / sst; /* textbook Nash-Sutcliffe efficiency */
    CHECK_CLOSE(nse, 0.91903003, 1e-8, "NSE days 366-730");
    /* the first year (days 1-365) ends after the map of t = 364: its level
     * is 0.4 (max Q - 5)^0.6 with the defaults (rating curve, by hand) */
    want = 0.4 * pow(qmax1 - 5.0, 0.6);
    CHECK(qmax1 > 5.0, "the first year's largest flow exceeds Q0: %g", qmax1);
    CHECK_REL(level1, want, 1e-15, "first year end's level");
    CHECK(x[IQMAX] == 0 && x[IDAY] == 0, "second year end at day 730: Qmax and day start again");
    printf("river_town reference case: max |Q - spreadsheet| = %.3g mm/d, NSE = %.10f, "
           "first year's max Q = %.6f mm/d, level = %.6f\n",
           maxdev, nse, qmax1, level1);
}

/* One day by hand: stores and queues empty and no rain or evaporation make
 * Q = 0 (every flux of MODELS.md 2 vanishes); the town's rates 0 keep it
 * still over the day. Then only the coupling acts. */
static void hand_member(double *x, double *p)
{
    memset(x, 0, NS * sizeof(double));
    memcpy(p, sl_model_river_town.p_default, NP * sizeof(double));
    p[4 + 2] = p[4 + 5] = p[4 + 7] = p[4 + 9] = 0.0; /* rhoE sigmaP kappaT muS */
    p[PA] = 0.5;
    p[PB] = 2.0;
    p[PQ0] = 1.0;
    p[PYEAR] = 3.0;
    x[IFL + 0] = 2.5; /* G */
    x[IFL + 1] = 0.8; /* D */
    x[IFL + 2] = 0.3; /* H */
    x[IFL + 3] = 0.1; /* M */
    x[IFL + 4] = 0.25; /* F of an earlier flood */
    x[IFL + 5] = 0.125; /* R of an earlier flood */
}

static void test_hand(void)
{
    const sl_model_def *d = &sl_model_river_town;
    const double u0[2] = {0.0, 0.0};
    double x[NS], p[NP], x1[NS];
    double G = 2.5, D = 0.8, H = 0.3, M = 0.1, W, lev, F, Rs, cost;
    size_t k;

    /* a day inside the year: Q = 0, Qmax kept, day counted, town still */
    hand_member(x, p);
    x[IQMAX] = 4.0;
    x[IDAY] = 0.0;
    memcpy(x1, x, sizeof x);
    d->map(d, NS, 10.0, 1.0, x, p, u0);
    CHECK(x[IQ] == 0.0, "no water, no flow: %g", x[IQ]);
    CHECK(x[IQMAX] == 4.0 && x[IDAY] == 1.0 && x[ILEVEL] == 0.0, "inside the year");
    CHECK(same_bits(x + IFL, x1 + IFL, NF), "zero rates: the town is still over the day");

    /* the last day of the year (day 2 -> 3 = year_length): the level
     * a (Qmax - Q0)^b = 0.5 (4 - 1)^2 = 4.5 is a flood; eqs. 4-6 by hand:
     * level with levees W + xiH H = 4.65 > H, F = 1 - exp(-4.65 / (10 D)),
     * R* = 1.1 (4.65 - 0.3) = 4.785, cost 0.005 R* sqrt(G), worth it and
     * affordable, so G - F G - cost, H + R*, M + 0.5 F */
    x[IDAY] = 2.0;
    d->map(d, NS, 11.0, 1.0, x, p, u0);
    W = 4.5;
    lev = W + 0.5 * H;
    F = 1.0 - exp(-lev / (10.0 * D));
    Rs = 1.1 * (lev - H);
    cost = 0.005 * Rs * sqrt(G);
    CHECK(F * G > cost && G - F * G > cost, "the hand case raises a levee");
    CHECK(x[ILEVEL] == 4.5, "level 0.5 (4 - 1)^2 = 4.5: %.17g", x[ILEVEL]);
    CHECK(x[IQMAX] == 0.0 && x[IDAY] == 0.0, "a new year: Qmax and day from 0");
    CHECK_REL(x[IFL + 0], G - F * G - cost, 1e-14, "G after the flood");
    CHECK(x[IFL + 1] == D, "D unchanged by a flood");
    CHECK_REL(x[IFL + 2], H + Rs, 1e-14, "H after the flood");
    CHECK_REL(x[IFL + 3], M + 0.5 * F, 1e-14, "M after the flood");
    CHECK_REL(x[IFL + 4], F, 1e-14, "F of the flood");
    CHECK_REL(x[IFL + 5], Rs, 1e-14, "R of the flood");

    /* a year whose largest flow is below Q0, and one exactly at Q0: level
     * 0 and no flood at all (F and R of the earlier flood stay) */
    for (k = 0; k < 2; k++) {
        hand_member(x, p);
        x[IQMAX] = k == 0 ? 0.75 : 1.0;
        x[IDAY] = 2.0;
        memcpy(x1, x, sizeof x);
        d->map(d, NS, 11.0, 1.0, x, p, u0);
        CHECK(x[ILEVEL] == 0.0 && x[IQMAX] == 0.0 && x[IDAY] == 0.0,
              "Qmax %s Q0: level 0, a new year", k == 0 ? "below" : "at");
        CHECK(same_bits(x + IFL, x1 + IFL, NF), "Qmax %s Q0: no flood", k == 0 ? "below" : "at");
    }

    /* the running maximum: a day of rain on part-full stores, then nine
     * dry days; Qmax is the largest Q so far on every day (by hand) and
     * outlasts the flow's fall */
    hand_member(x, p);
    x[0] = 100.0; /* S */
    x[1] = 30.0;  /* R */
    p[PYEAR] = 365.0;
    {
        const double u1[2] = {40.0, 1.0};
        double run = 0.0;
        int ok = 1;
        for (k = 0; k < 10; k++) {
            d->map(d, NS, (double)k, 1.0, x, p, k == 0 ? u1 : u0);
            if (x[IQ] > run)
                run = x[IQ];
            ok = ok && x[IQMAX] == run;
        }
        CHECK(ok && run > 0, "Qmax = the running maximum of Q");
        CHECK(x[IQ] < x[IQMAX], "the maximum outlasts the flow's fall: Q %g, Qmax %g", x[IQ],
              x[IQMAX]);
    }

    /* a year length that is not whole acts as its ceiling (3 days for 2.5) */
    hand_member(x, p);
    p[PYEAR] = 2.5;
    for (k = 0; k < 3; k++)
        d->map(d, NS, (double)k, 1.0, x, p, u0);
    CHECK(x[IDAY] == 0.0, "2.5-day years end after 3 days");

    /* parameters outside their bounds never crash: a < 0 gives level 0; a
     * NaN flow maximum makes the town NaN (a broken member stays visible) */
    hand_member(x, p);
    p[PA] = -1.0;
    x[IQMAX] = 4.0;
    x[IDAY] = 2.0;
    d->map(d, NS, 11.0, 1.0, x, p, u0);
    CHECK(x[ILEVEL] == 0.0 && x[IFL + 4] == 0.25, "a < 0: no flood");
    hand_member(x, p);
    x[IQMAX] = (double)NAN;
    x[IDAY] = 2.0;
    d->map(d, NS, 11.0, 1.0, x, p, u0);
    CHECK(isnan(x[ILEVEL]) && isnan(x[IFL]) && isnan(x[IFL + 5]), "NaN Qmax: NaN town");

    /* a given flood through the coupled model's jump is the flood model's
     * jump on the town's part */
    hand_member(x, p);
    memcpy(x1, x, sizeof x);
    W = 1.7;
    d->jump(d, NS, 5.0, x, p, &W);
    {
        double pf[10], xf[NF];
        flood_in_days(p, pf);
        memcpy(xf, x1 + IFL, sizeof xf);
        sl_model_flood.jump(&sl_model_flood, NF, 5.0, xf, pf, &W);
        CHECK(same_bits(x + IFL, xf, NF), "given flood = the flood model's jump");
        CHECK(same_bits(x, x1, IFL) && same_bits(x + IQMAX, x1 + IQMAX, 3),
              "a given flood leaves the river alone");
    }
}

int main(void)
{
    test_definition();
    test_uncoupled();
    test_reference();
    test_hand();
    CHECK_DONE("test_river_town");
}
