/* test_compose.c - a composed model (sl_compose_init) against its
 * components' own engine models stepped alone: GR4J daily and the flood
 * model yearly (its own clock, a scale of 365), joined by a link that
 * sends each year's largest flow through the rating curve
 * h = a (Q - Q0)^b (common practice) as a flood; and every refusal of
 * sl_compose_init. */
#include "check.h"
#include "sluice/compose.h"
#include "sluice/integrate.h"
#include "sluice/model.h"
#include "sluice/rng.h"
#include "../../src/models/models.h"

#include <stdint.h>
#include <stdlib.h>

enum { NG = 63, NF = 6, NS = NG + NF + 3, NP = 4 + 10 + 3, N = 3, YEARS = 2, DAYS = 365 * YEARS };

static const size_t gr4j_forcing[2] = {0, 1};

/* GR4J (days) and the flood model (years, one step a year) with the
 * link river.Q -> town.W, max over 365 days, rated. */
static void setup(sl_compose *c, double every, double town_dt)
{
    memset(c, 0, sizeof *c);
    c->n_parts = 2;
    c->n_links = 1;
    c->n_forcing = 2;
    c->part[0].def = &sl_model_gr4j;
    c->part[0].scale = 1.0;
    c->part[0].forcing = gr4j_forcing;
    c->part[0].tol.rtol = 1e-6;
    c->part[0].tol.atol = 1e-9;
    c->part[1].def = &sl_model_flood;
    c->part[1].dt = town_dt;
    c->part[1].scale = 365.0;
    c->part[1].tol.rtol = 1e-6;
    c->part[1].tol.atol = 1e-9;
    c->link[0].from = 0;
    c->link[0].from_state = NG - 1;
    c->link[0].to = 1;
    c->link[0].to_index = 0;
    c->link[0].to_event = 1;
    c->link[0].reduce = SL_REDUCE_MAX;
    c->link[0].every = every;
    c->link[0].rating = 1;
}

static void test_refusals(void)
{
    sl_compose *c = (sl_compose *)ck_malloc(sizeof *c);
    sl_model m;
    sl_error err;
    size_t fmap[2] = {0, 1};
    setup(c, 365.0, 1.0);
    CHECK(sl_compose_init(&m, c, &err) == SL_OK, "the river and its town compose");
    CHECK(m.n_state == NS && m.n_param == NP && m.dt == 1.0 && m.discrete, "sizes and step");
    setup(c, 100.0, 1.0);
    CHECK(sl_compose_init(&m, c, &err) == SL_EINVAL && strcmp(err.reason, "badperiod") == 0,
          "a period of 100 days is no whole number of town years");
    setup(c, 365.0, 0.1);
    CHECK(sl_compose_init(&m, c, &err) == SL_EINVAL && strcmp(err.reason, "badstep") == 0,
          "a town step of 36.5 days is no whole number of days");
    setup(c, 365.0, 1.0);
    c->link[0].to_index = 1;
    CHECK(sl_compose_init(&m, c, &err) == SL_EINVAL && strcmp(err.reason, "badtarget") == 0,
          "the town has one event value");
    setup(c, 365.0, 1.0);
    c->link[0].to_event = 0;
    CHECK(sl_compose_init(&m, c, &err) == SL_EINVAL && strcmp(err.reason, "badtarget") == 0,
          "the town has no forcing");
    setup(c, 365.0, 1.0);
    c->part[1].scale = -1.0;
    CHECK(sl_compose_init(&m, c, &err) == SL_EINVAL && strcmp(err.reason, "badscale") == 0,
          "a negative scale");
    setup(c, 365.0, 1.0);
    c->link[0].from_state = NG;
    CHECK(sl_compose_init(&m, c, &err) == SL_EINVAL && strcmp(err.reason, "badcompose") == 0,
          "a source state beyond GR4J's");
    setup(c, 365.0, 1.0);
    c->n_parts = SL_COMPOSE_PARTS + 1;
    CHECK(sl_compose_init(&m, c, &err) == SL_EINVAL && strcmp(err.reason, "badcompose") == 0,
          "too many components");
    /* GR4J second with a week's step (scale 7) cannot take the run's rain */
    setup(c, 365.0, 1.0);
    c->n_links = 0;
    c->part[0].def = &sl_model_flood;
    c->part[0].dt = 1.0;
    c->part[0].forcing = NULL;
    c->part[1].def = &sl_model_gr4j;
    c->part[1].dt = 1.0;
    c->part[1].scale = 7.0;
    c->part[1].forcing = fmap;
    CHECK(sl_compose_init(&m, c, &err) == SL_EINVAL && strcmp(err.reason, "slowforcing") == 0,
          "a slow component on the run's forcing");
    ck_free(c);
}

static void test_rating(void)
{
    /* a (x - x0)^b by hand: 0.4 * 4^0.6 = 0.4 * 2^1.2 */
    CHECK_CLOSE(sl_compose_rating(9.0, 0.4, 0.6, 5.0), 0.4 * pow(2.0, 1.2), 1e-15, "rating");
    CHECK(sl_compose_rating(5.0, 0.4, 0.6, 5.0) == 0.0, "at x0: no event");
    CHECK(sl_compose_rating(3.0, 0.4, 0.6, 5.0) == 0.0, "below x0: no event");
    CHECK(isnan(sl_compose_rating((double)NAN, 0.4, 0.6, 5.0)), "NaN stays NaN");
}

/* The composed model stepped day by day equals GR4J stepped alone and
 * the flood model stepped a year at a time, given the floods computed
 * here from GR4J's flows, bit for bit. */
static void test_against_alone(void)
{
    sl_compose *c = (sl_compose *)ck_malloc(sizeof *c);
    sl_model m, mg, mf;
    sl_def_model dg, df;
    sl_error err;
    sl_stream s;
    double *X = (double *)ck_malloc(N * NS * sizeof(double));
    double *Xg = (double *)ck_malloc(N * NG * sizeof(double));
    double *Xf = (double *)ck_malloc(N * NF * sizeof(double));
    double *P = (double *)ck_malloc(N * NP * sizeof(double));
    double *Pg = (double *)ck_malloc(N * 4 * sizeof(double));
    double *Pf = (double *)ck_malloc(N * 10 * sizeof(double));
    double *U = (double *)ck_malloc(N * 2 * sizeof(double));
    double *wk, *wkg, *wkf, qmax[N];
    size_t j, k, d;
    int same = 1, damaged = 0;
    setup(c, 365.0, 1.0);
    CHECK(sl_compose_init(&m, c, &err) == SL_OK, "init");
    CHECK(sl_def_model_init(&mg, &dg, &sl_model_gr4j, NG, NULL, 0, NULL, NULL, &err) == SL_OK,
          "GR4J alone");
    CHECK(sl_def_model_init(&mf, &df, &sl_model_flood, NF, NULL, 1.0, NULL, NULL, &err) == SL_OK,
          "flood alone");
    wk = (double *)ck_malloc((m.work + 1) * sizeof(double));
    wkg = (double *)ck_malloc((mg.work + 1) * sizeof(double));
    wkf = (double *)ck_malloc((mf.work + 1) * sizeof(double));
    for (j = 0; j < N; j++) {
        double *x = X + j * NS, *p = P + j * NP;
        memset(x, 0, NS * sizeof(double));
        memcpy(x, sl_model_gr4j.x0, NG * sizeof(double));
        memcpy(x + NG, sl_model_flood.x0, NF * sizeof(double));
        memcpy(p, sl_model_gr4j.p_default, 4 * sizeof(double));
        memcpy(p + 4, sl_model_flood.p_default, 10 * sizeof(double));
        p[0] = 200.0 + 60.0 * (double)j; /* members of their own X1 */
        p[14] = 0.4;
        p[15] = 0.6;
        p[16] = 2.0;
        memcpy(Xg + j * NG, x, NG * sizeof(double));
        memcpy(Xf + j * NF, x + NG, NF * sizeof(double));
        memcpy(Pg + j * 4, p, 4 * sizeof(double));
        memcpy(Pf + j * 10, p + 4, 10 * sizeof(double));
        qmax[j] = 0.0;
    }
    sl_stream_init(&s, 5u, 0u, 0u, 0u);
    for (d = 0; d < DAYS; d++) {
        const double t = (double)d, te = (double)(d + 1);
        for (j = 0; j < N; j++) {
            double u = sl_stream_uniform(&s), v = sl_stream_uniform(&s);
            U[2 * j] = v < 0.45 ? -8.0 * log(1.0 - u) : 0.0; /* invented rain */
            U[2 * j + 1] = 2.0;
        }
        CHECK(m.step(&m, t, te, 0, N, X, P, U, 1u, (uint32_t)d, wk, &err) == SL_OK, "step");
        (void)mg.step(&mg, t, te, 0, N, Xg, Pg, U, 1u, (uint32_t)d, wkg, &err);
        for (j = 0; j < N; j++)
            if (d % 365 == 0 || Xg[j * NG + NG - 1] > qmax[j])
                qmax[j] = Xg[j * NG + NG - 1]; /* the year's running maximum */
        if ((d + 1) % 365 == 0) {
            const double y = (double)((d + 1) / 365);
            (void)mf.step(&mf, y - 1.0, y, 0, N, Xf, Pf, NULL, 1u, (uint32_t)d, wkf, &err);
            for (j = 0; j < N; j++) {
                const double w = qmax[j] > 2.0 ? 0.4 * pow(qmax[j] - 2.0, 0.6) : 0.0;
                same = same && X[j * NS + NG + NF + 2] == w;
                if (w > 0) {
                    sl_model_flood.jump(&sl_model_flood, NF, y, Xf + j * NF, Pf + j * 10, &w);
                    damaged = damaged || Xf[j * NF + 4] > 0;
                }
            }
        }
        for (j = 0; j < N; j++) {
            same = same && memcmp(X + j * NS, Xg + j * NG, NG * sizeof(double)) == 0;
            same = same && memcmp(X + j * NS + NG, Xf + j * NF, NF * sizeof(double)) == 0;
        }
    }
    CHECK(same, "GR4J and the town as alone, the floods by hand, bit for bit");
    CHECK(damaged, "a flood did damage");
    for (k = 0; k < N; k++)
        CHECK(isfinite(X[k * NS + NG]), "finite town");
    ck_free(wk);
    ck_free(wkg);
    ck_free(wkf);
    ck_free(X);
    ck_free(Xg);
    ck_free(Xf);
    ck_free(P);
    ck_free(Pg);
    ck_free(Pf);
    ck_free(U);
    ck_free(c);
}

int main(void)
{
    test_refusals();
    test_rating();
    test_against_alone();
    CHECK_DONE("test_compose");
}
