/* river_town.c - a river and its town as one coupled model: the GR4J
 * rainfall-runoff model (gr4j.c) makes the river's daily flow, and the
 * year's largest flow, read through a rating curve, is the flood that the
 * human-flood model (flood.c) of the town beside it meets.
 *
 * The two components are not copied: every day calls GR4J's own map, the
 * flood component is integrated with its own right-hand side and its own
 * default integrator, and a flood is its own jump, each on its part of
 * the state vector.
 *
 * Time is in days; one step of the map is one day.
 * - GR4J advances one day on the forcings P and E (mm/d).
 * - Qmax <- max(Qmax, Q): the running maximum of the daily flow in the
 *   current year (mm/d).
 * - The flood component advances over the same day with its own
 *   integrator (Dormand-Prince 5(4), rtol 1e-6, atol 1e-9: the engine's
 *   defaults). Its rates are per year: rhoE, sigmaP, kappaT and muS (the
 *   only parameters that carry time) are divided by year_length before its
 *   right-hand side sees them, which is exactly the flood model with time
 *   in days.
 * - day <- day + 1; when day >= year_length the year ends with this day:
 *   level = a (Qmax - Q0)^b if Qmax > Q0, else 0. A level > 0 is a flood
 *   of high-water level W = level (the flood component's jump, at the end
 *   of the day); a level of 0 is no flood at all (the jump is not applied).
 *   Then Qmax = 0 and day = 0. Years therefore end every year_length days
 *   from the start of the run (with day = 0 there; x0 may start mid-year),
 *   and a year_length that is not a whole number acts as its ceiling.
 * - Given events W (the run's 'events') are floods as well, applied like
 *   those of the flood model alone; a daily map applies them at the end of
 *   the day that holds them. With a = 0 the river makes no floods, and the
 *   two components run side by side as they do alone.
 *
 * State (72 values): GR4J's 63 (S, R, uh1_1..uh1_20, uh2_1..uh2_40, Q), the
 * flood component's 6 (G, D, H, M, F and R_levee, the flood model's R,
 * renamed because GR4J has an R), then Qmax (mm/d), level (the latest
 * year's high-water level, 0 before the first year end) and day (days of
 * the current year gone). Parameters (18): X1..X4, the flood model's ten,
 * a, b, Q0 and year_length (days). */
#include <math.h>
#include <stddef.h>
#include <string.h>

#include "models.h"
#include "sluice/integrate.h"

enum {
    NG = 63,             /* GR4J's states */
    NF = 6,              /* the flood component's states */
    IG = 0,              /* GR4J's part */
    IQ = IG + NG - 1,    /* GR4J's Q */
    IFL = IG + NG,       /* the flood component's part */
    IQMAX = IFL + NF,
    ILEVEL = IQMAX + 1,
    IDAY = ILEVEL + 1,
    NSTATE = IDAY + 1
};

enum {
    PG = 0,          /* X1..X4 */
    PF = 4,          /* xiH alphaH rhoE gammaE lambdaP sigmaP epsT kappaT alphaS muS */
    PA = PF + 10,
    PB = PA + 1,
    PQ0 = PB + 1,
    PYEAR = PQ0 + 1,
    NPARAM = PYEAR + 1
};

/* the flood model's parameters that are rates per unit of its time */
enum { F_RHOE = 2, F_SIGMAP = 5, F_KAPPAT = 7, F_MUS = 9 };

/* the engine's default tolerances (sl_def_model_init with tol = NULL) */
static const sl_tolerance flood_tol = {1e-6, 1e-9, 1e-12, 100000};

/* Scratch for the flood component's integrator: at most 9 stages (the
 * Dormand-Prince method) of its 6 states. */
#define FLOOD_WORK (9 * NF)

/* The flood component's parameters as its own model sees them in days. */
static void flood_params_in_days(const double *p, double *pf)
{
    const double L = p[PYEAR];
    memcpy(pf, p + PF, 10 * sizeof(double));
    pf[F_RHOE] = pf[F_RHOE] / L;
    pf[F_SIGMAP] = pf[F_SIGMAP] / L;
    pf[F_KAPPAT] = pf[F_KAPPAT] / L;
    pf[F_MUS] = pf[F_MUS] / L;
}

/* The flood component's right-hand side for one member (P: its parameters
 * in days). */
static sl_status flood_block_rhs(void *ctx, double t, size_t first,
                                 size_t count, const double *X,
                                 const double *P, const double *U,
                                 double *dX, sl_error *err)
{
    (void)ctx;
    (void)first;
    (void)count;
    (void)err;
    sl_model_flood.rhs(&sl_model_flood, NF, t, X, P, U, dX);
    return SL_OK;
}

/* The high-water level of a year whose largest daily flow is qmax: the
 * rating curve a (qmax - Q0)^b above Q0, 0 (no flood) at or below it, and
 * 0 as well where parameters outside their bounds (a < 0) would make it
 * negative. A NaN flow or parameter gives NaN. */
static double rating_level(double qmax, const double *p)
{
    double h;
    if (isnan(qmax) || isnan(p[PQ0]))
        return (double)NAN;
    if (!(qmax > p[PQ0]))
        return 0.0;
    h = p[PA] * pow(qmax - p[PQ0], p[PB]);
    return h < 0.0 ? 0.0 : h;
}

static void river_town_map(const sl_model_def *def, size_t n, double t,
                           double dt, double *x, const double *p,
                           const double *u)
{
    double pf[10], work[FLOOD_WORK];
    const sl_integrator *method = sl_integrator_find(sl_model_flood.integrator);
    sl_error err;
    size_t i;
    (void)def;
    (void)n;

    /* the river: one day of GR4J, and the year's largest flow so far */
    sl_model_gr4j.map(&sl_model_gr4j, NG, t, dt, x + IG, p + PG, u);
    if (!(x[IQ] <= x[IQMAX]) && !isnan(x[IQMAX]))
        x[IQMAX] = x[IQ]; /* a NaN flow or maximum stays NaN */

    /* the town over the same day, in days */
    flood_params_in_days(p, pf);
    if (method != NULL && dt > 0)
        (void)sl_integrate_block(method, flood_block_rhs, NULL, NF, 0, 1, t, dt,
                                 x + IFL, pf, u, &flood_tol, work, NULL, &err);

    /* the end of a year: its largest flow becomes the year's flood */
    x[IDAY] = x[IDAY] + 1.0;
    if (x[IDAY] >= p[PYEAR]) {
        const double level = rating_level(x[IQMAX], p);
        x[ILEVEL] = level;
        if (isnan(level)) {
            /* a broken river breaks the town: the member stays visible */
            for (i = 0; i < NF; i++)
                x[IFL + i] = (double)NAN;
        } else if (level > 0) {
            sl_model_flood.jump(&sl_model_flood, NF, t + dt, x + IFL, pf, &level);
        }
        x[IQMAX] = 0.0;
        x[IDAY] = 0.0;
    }
}

/* A given flood event: the flood component's own jump. */
static void river_town_jump(const sl_model_def *def, size_t n, double t,
                            double *x, const double *p, const double *ev)
{
    double pf[10];
    (void)def;
    (void)n;
    flood_params_in_days(p, pf);
    sl_model_flood.jump(&sl_model_flood, NF, t, x + IFL, pf, ev);
}

/* ------------------------------------------------------ the definition */

static const char *const rt_states[NSTATE] = {
    SL_GR4J_STATE_NAMES,
    "G", "D", "H", "M", "F", "R_levee",
    "Qmax", "level", "day"};
static const char *const rt_params[NPARAM] = {
    "X1", "X2", "X3", "X4",
    "xiH", "alphaH", "rhoE", "gammaE", "lambdaP", "sigmaP", "epsT", "kappaT",
    "alphaS", "muS",
    "a", "b", "Q0", "year_length"};
static const char *const rt_forcings[] = {"P", "E"};
static const char *const rt_events[] = {"W"};

/* The components' defaults, bounds and internal flags, repeated (a static
 * table cannot read another definition's); the unit tests check that they
 * equal those of gr4j.c and flood.c. */
#define GR4J_X1 320.10730922522407
#define GR4J_X2 2.4208432970477163
#define GR4J_X3 69.627618031872942
#define GR4J_X4 1.3891344662544509

/* GR4J's stores 60% and 70% full, queues empty; the flood model's
 * G = 0.01, D = 1; no flow seen yet, no level, the first day of a year */
static const double rt_x0[NSTATE] = {
    [IG] = 0.6 * GR4J_X1, [IG + 1] = 0.7 * GR4J_X3,
    [IFL] = 0.01, [IFL + 1] = 1.0};

/* The rating curve's defaults: a year whose largest flow is 5 mm/d
 * (about three times the mean flow of a temperate catchment) reaches the
 * bank; 25 mm/d gives a level of about 2.4, in the range of the flood
 * model's usual levels (mean 1, at most about 4.6). b in [0.1, 3] keeps
 * the curve a power law of sensible shape; a = 0 is a river that never
 * floods the town. Years of 365 days. */
static const double rt_p[NPARAM] = {
    GR4J_X1, GR4J_X2, GR4J_X3, GR4J_X4,
    0.5, 10.0, 1.0, 0.005, 1.0, 0.1, 1.1, 0.1, 0.5, 0.215,
    0.4, 0.6, 5.0, 365.0};
static const double rt_lo[NPARAM] = {
    0.0, -HUGE_VAL, 0.0, 0.5,
    0, 0, 0, 0, 0, 0, 0, 0, 0, 0,
    0.0, 0.1, 0.0, 1.0};
static const double rt_hi[NPARAM] = {
    HUGE_VAL, HUGE_VAL, HUGE_VAL, 20.0,
    HUGE_VAL, HUGE_VAL, HUGE_VAL, HUGE_VAL, HUGE_VAL,
    HUGE_VAL, HUGE_VAL, HUGE_VAL, 1.0, HUGE_VAL,
    HUGE_VAL, 3.0, HUGE_VAL, HUGE_VAL};

/* GR4J's unit-hydrograph queues and the day counter are internal */
static const unsigned char rt_internal[NSTATE] = {
    0, 0, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1,
    1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1,
    1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 0,
    0, 0, 0, 0, 0, 0,
    0, 0, 1};

const sl_model_def sl_model_river_town = {
    "river_town",
    "A river and its town: GR4J daily flow (forcings P, E in mm/d); each year's "
    "largest flow through the rating curve a (Qmax - Q0)^b is a flood of the "
    "human-flood model, whose rates are per year of year_length days",
    NSTATE, NSTATE, NPARAM, 2, 1,
    rt_states, rt_params, rt_forcings, rt_events,
    rt_x0, rt_p, rt_lo, rt_hi,
    1.0, "discrete",
    NULL, river_town_map, river_town_jump, NULL, NULL, rt_internal, NULL, 0, NULL, NULL};
