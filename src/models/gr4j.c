/* gr4j.c - the GR4J daily rainfall-runoff model: a production store, a
 * routing store and two unit hydrographs, four parameters.
 *
 * Perrin, Michel & Andreassian (2003), J. Hydrol. 279, 275-289; equations
 * as in the model authors' reference spreadsheet.
 *
 * State (63 values, in this order):
 *   S                 production store (mm)
 *   R                 routing store (mm)
 *   uh1_1 .. uh1_20   queue of the unit hydrograph UH1 (mm)
 *   uh2_1 .. uh2_40   queue of the unit hydrograph UH2 (mm)
 *   Q                 flow of the latest day (mm/d)
 * The queues hold water already split (0.9 Pr into UH1, 0.1 Pr into UH2).
 * After a day, slot 1 of each queue is what that hydrograph released on the
 * day just simulated (it was routed: like Q it is read, not carried on) and
 * slot k > 1 is what it will release k - 1 days later. Twenty and forty
 * slots hold the longest hydrographs the bounds allow (X4 = 20 days).
 * Parameters: X1 production store capacity (mm), X2 groundwater exchange
 * (mm/d), X3 routing store capacity (mm), X4 time base of UH1 (d).
 * Forcings: P rainfall (mm/d), E potential evapotranspiration (mm/d).
 * One step of the map is one day, whatever dt it is called with.
 *
 * The per-member map and the block path share every arithmetic helper and
 * evaluate each quantity with the same operations in the same order, so a
 * member's result does not depend on how members are grouped into blocks.
 * For that a*b + c must round twice in vectorised and scalar code alike:
 * contraction into fused multiply-adds is turned off for this file (gcc
 * contracts by default in its GNU C modes when the target has FMA). */
#include <math.h>
#include <stddef.h>
#include <string.h>

#include "models.h"

#if defined(__clang__)
#pragma STDC FP_CONTRACT OFF
#elif defined(__GNUC__)
#pragma GCC optimize("fp-contract=off")
#endif

#define NH1 20 /* slots of UH1: its time base X4 is at most 20 days */
#define NH2 40 /* slots of UH2: time base 2 X4 */

enum {
    IS = 0,
    IR = 1,
    IUH1 = 2,
    IUH2 = IUH1 + NH1,
    IQ = IUH2 + NH2,
    NSTATE = IQ + 1
};

/* The reference parameter set of the authors' spreadsheet. */
#define REF_X1 320.10730922522407
#define REF_X2 2.4208432970477163
#define REF_X3 69.627618031872942
#define REF_X4 1.3891344662544509

/* ------------------------------------------------- shared arithmetic */

/* u^2.5 for u >= 0 */
static inline double pow25(double u)
{
    return u * u * sqrt(u);
}

/* k^2.5 for k = 0 .. 40, correctly rounded: with c = X4^(-2.5) the S-curve
 * term (k/X4)^2.5 is k25[k] c, one square root per member instead of one
 * per day of the hydrograph. */
static const double k25[NH2 + 1] = {
    0.0, 1.0, 5.656854249492381, 15.588457268119896, 32.0, 55.90169943749474,
    88.18163074019441, 129.64181424216494, 181.01933598375618, 243.0,
    316.22776601683796, 401.31159963300337, 498.8306325798367,
    609.3381655534142, 733.3648478076925, 871.4212528966688, 1024.0,
    1191.577525803504, 1374.6155826266483, 1573.562518618183,
    1788.8543819998317, 2020.9158814755253, 2270.16122775454,
    2536.9948758324285, 2821.812183686221, 3125.0, 3446.9371911887224,
    3787.995116153135, 4148.538055749278, 4528.923602800118,
    4929.503017546495, 5350.621552679651, 5792.618751480198,
    6255.828722079913, 6740.580390441168, 7247.1977342970295, 7776.0,
    8327.301903978263, 8901.413820287202, 9498.641955563964,
    10119.288512538815};

/* (k/X4)^2.5 = k^2.5 c for k <= X4, kept <= 1 against rounding so that
 * the S-curves never fall (NaN passes). */
static inline double scurve(size_t k, double c)
{
    double v = k25[k] * c;
    return v > 1.0 ? 1.0 : v;
}

/* Ordinates of UH1 (NH1 slots) and UH2 (NH2 slots): differences of the
 * S-curves at whole days t = k, with SH(0) = 0 and
 *   SH1(t) = (t/X4)^2.5 for t < X4, else 1;
 *   SH2(t) = (t/X4)^2.5 / 2 for t <= X4, 1 - (2 - t/X4)^2.5 / 2 for
 *            X4 < t < 2 X4, else 1.
 * The comparisons are written so that a NaN X4 gives NaN ordinates (a broken
 * member stays visible) and X4 <= 0 routes everything on the first day. The
 * last slot takes what is left, so a hydrograph sums to one even for X4
 * beyond its upper bound (within the bounds SH is already 1 there). Once SH
 * reaches 1 the remaining ordinates are 0 (= 1 - 1) and are not stored:
 * *n1 and *n2 say how many leading ordinates were written. */
static void ordinates(double x4, double *o1, size_t *n1, double *o2,
                      size_t *n2)
{
    /* c = X4^(-2.5); for X4 <= 0 it is never used, for a NaN X4 it is NaN */
    const double c = x4 > 0.0 ? 1.0 / (x4 * x4 * sqrt(x4)) : x4;
    /* each ordinate is SH(k+1) - SH(k) as the S-curve values are made,
     * the previous one kept in a register: storing the values and reading
     * them back in pairs stalled on every pair (a store cannot forward to
     * a wider load) */
    double sh, prev;
    size_t k, m, a, b;

    /* UH1: SH1(k) < 1 for k = 1 .. m (k < X4), then 1 at k = m + 1 */
    if (!(x4 < NH1))
        m = NH1 - 1; /* also NaN */
    else if (x4 > 0.0)
        m = (size_t)ceil(x4) - 1;
    else
        m = 0;
    prev = 0.0;
    for (k = 1; k <= m; k++) {
        sh = scurve(k, c);
        o1[k - 1] = sh - prev;
        prev = sh;
    }
    o1[m] = 1.0 - prev;
    *n1 = m + 1;

    /* UH2: rising half for k = 1 .. a (k <= X4), falling half for
     * k = a+1 .. b (X4 < k < 2 X4), then 1 at k = b + 1 */
    if (!(x4 < NH2 - 1))
        a = NH2 - 1; /* also NaN */
    else if (x4 > 0.0)
        a = (size_t)x4;
    else
        a = 0;
    if (!(x4 < 0.5 * NH2))
        b = NH2 - 1;
    else if (x4 > 0.0)
        b = (size_t)ceil(2.0 * x4) - 1;
    else
        b = 0;
    prev = 0.0;
    for (k = 1; k <= a; k++) {
        sh = 0.5 * scurve(k, c);
        o2[k - 1] = sh - prev;
        prev = sh;
    }
    for (; k <= b; k++) { /* here 0 < 2 - k/X4 < 1 */
        sh = 1.0 - 0.5 * pow25(2.0 - (double)k / x4);
        o2[k - 1] = sh - prev;
        prev = sh;
    }
    o2[b] = 1.0 - prev;
    *n2 = b + 1;
}

/* One day of the queues of one member (x is its state) takes two parts.
 * First every slot moves down by one: slot k gets what slot k+1 held. UH1
 * and UH2 lie next to each other in the state (and a block's members next
 * to each other), so one block move serves them all; it also carries values
 * across the boundaries, into uh1_20 and uh2_40, which the second part sets.
 * The second part empties the last slots and spreads the day's water over
 * the first n1 / n2 slots by the ordinates, so that in all
 * uh_k <- uh_{k+1} + o_k Pr9 (UH1) and uh_k <- uh_{k+1} + o_k Pr1 (UH2);
 * where an ordinate is 0 the slot just moves on. */
static inline void queues_move(double *x)
{
    memmove(x + IUH1, x + IUH1 + 1, (NH1 + NH2 - 1) * sizeof(double));
}

static inline void queues_fill(double *x, const double *o1, size_t n1,
                               const double *o2, size_t n2, double pr9,
                               double pr1)
{
    double *uh1 = x + IUH1, *uh2 = x + IUH2;
    size_t k;
    uh1[NH1 - 1] = 0.0;
    uh2[NH2 - 1] = 0.0;
    for (k = 0; k < n1; k++)
        uh1[k] = uh1[k] + o1[k] * pr9;
    for (k = 0; k < n2; k++)
        uh2[k] = uh2[k] + o2[k] * pr1;
}

/* max(x, 0) that keeps NaN */
static inline double pos(double x)
{
    return x < 0.0 ? 0.0 : x;
}

/* Net rainfall Pn = max(P - E, 0) and net evaporation capacity
 * En = max(E - P, 0) (E - P = -(P - E) exactly). One of them is zero, so
 * one tanh serves both: *arg = (Pn + En) / X1. */
static inline void interception(double p, double e, double x1, double *pn,
                                double *en, double *arg)
{
    double d = p - e;
    *pn = pos(d);
    *en = d < 0.0 ? -d : 0.0;
    *arg = (*pn + *en) / x1;
}

/* tanh(Pn/X1) and tanh(En/X1) from th = tanh((Pn + En)/X1): tanh(0) = 0. */
static inline double tanh_pn(double th, double en)
{
    return en > 0.0 ? 0.0 : th;
}

static inline double tanh_en(double th, double pn)
{
    return pn > 0.0 ? 0.0 : th;
}

/* Rain into and evaporation from the production store; returns
 * 1 + (4/9 S/X1)^4 of the updated store (for the percolation). */
static inline double production(double x1, double tp, double te, double *s,
                                double *ps)
{
    double sr = *s / x1, q, q2, es;
    *ps = x1 * (1.0 - sr * sr) * tp / (1.0 + sr * tp);
    es = *s * (2.0 - sr) * te / (1.0 + (1.0 - sr) * te);
    *s = *s + *ps - es;
    q = (4.0 / 9.0) * (*s / x1);
    q2 = q * q;
    return 1.0 + q2 * q2;
}

/* y^(1/4) = sqrt(sqrt(y)): percolation and outflow take the fraction
 * 1 - y^(-1/4) = 1 - 1/root4(y) of their store */
static inline double root4(double y)
{
    return sqrt(sqrt(y));
}

/* Percolation S (1 - (1 + (4/9 S/X1)^4)^(-1/4)) leaves the store; returns
 * the water to route, Pr = Perc + Pn - Ps. */
static inline double percolation(double rt, double pn, double ps, double *s)
{
    double perc = *s * (1.0 - 1.0 / rt);
    *s = *s - perc;
    return perc + pn - ps;
}

/* The exchange F = X2 (R/X3)^3.5 = X2 (R/X3)^3 sqrt(R/X3), from rr = R/X3
 * and sq = sqrt(rr) */
static inline double exchange(double x2, double rr, double sq)
{
    return x2 * (rr * rr * rr * sq);
}

/* The routing store takes Q9 and the exchange F; returns
 * 1 + (R/X3)^4 of the filled store. */
static inline double routing_in(double x3, double q9, double f, double *r)
{
    double rr, rr2;
    *r = pos(*r + q9 + f);
    rr = *r / x3;
    rr2 = rr * rr;
    return 1.0 + rr2 * rr2;
}

/* Outflow Qr = R (1 - (1 + (R/X3)^4)^(-1/4)) leaves the routing store;
 * returns Q = Qr + max(0, Q1 + F). */
static inline double routing_out(double rt, double q1, double f, double *r)
{
    double qr = *r * (1.0 - 1.0 / rt);
    *r = *r - qr;
    return qr + pos(q1 + f);
}

/* ---------------------------------------------------- one member */

static void gr4j_map(const sl_model_def *def, size_t n, double t, double dt,
                     double *x, const double *p, const double *u)
{
    double o1[NH1], o2[NH2];
    double pn, en, arg, th, ps, pr, rr, f;
    double s = x[IS], r = x[IR];
    size_t n1, n2;
    (void)def;
    (void)n;
    (void)t;
    (void)dt;

    /* the ordinates first, well before the queues read them (as in the
     * block path) */
    ordinates(p[3], o1, &n1, o2, &n2);

    /* production store */
    interception(u[0], u[1], p[0], &pn, &en, &arg);
    th = tanh(arg);
    arg = production(p[0], tanh_pn(th, en), tanh_en(th, pn), &s, &ps);
    pr = percolation(root4(arg), pn, ps, &s);

    /* unit hydrographs: 0.9 Pr through UH1, 0.1 Pr through UH2 */
    queues_move(x);
    queues_fill(x, o1, n1, o2, n2, 0.9 * pr, 0.1 * pr);

    /* exchange from R before this day's inflow, then the routing store */
    rr = r / p[2];
    f = exchange(p[1], rr, sqrt(rr));
    arg = routing_in(p[2], x[IUH1], f, &r);
    x[IQ] = routing_out(root4(arg), x[IUH2], f, &r);
    x[IS] = s;
    x[IR] = r;
}

/* ------------------------------------------------------ the block path
 * Members go through in chunks of CHUNK. The stores, parameters, forcings
 * and intermediate fluxes of a chunk are laid out variable-major in `work`
 * (a[j] is variable a of the chunk's member j), and every loop over j has
 * the constant trip count CHUNK, so gcc vectorises the loops free of
 * library calls at -O2; tanh and sqrt stay the scalar calls of the
 * per-member map. The queues are already contiguous within the members'
 * columns and stay there: one block move shifts the whole chunk's queues,
 * then each member gets a few multiply-adds, with one set of ordinates for
 * a run of members that share X4, or with the members' constants (their
 * ordinates made once for a run of steps, the engine's forced span). A
 * short last chunk is padded with copies
 * of its last member, which are computed and not written back. */

#define CHUNK 16
#define CHUNK_VARS 20 /* arrays of CHUNK doubles in the layout below */

static size_t gr4j_block_work(size_t n, size_t count)
{
    (void)n;
    (void)count;
    return CHUNK * CHUNK_VARS;
}

/* A member's constants (NCONST values): n1, n2, then the ordinates of
 * UH1 (NH1 slots) and UH2 (NH2 slots), the first n1 / n2 written */
#define NCONST (2 + NH1 + NH2)

static void gr4j_constants(const sl_model_def *def, const double *p, double *c)
{
    size_t n1, n2;
    (void)def;
    ordinates(p[3], c + 2, &n1, c + 2 + NH1, &n2);
    c[0] = (double)n1;
    c[1] = (double)n2;
}

/* The block path; C holds the members' constants, or is NULL for the
 * block to make its ordinates itself */
static void gr4j_block_with(size_t n, size_t count, double *X, const double *P,
                            const double *C, const double *U, double *work)
{
    /* stores; parameters; forcings; fluxes and intermediate terms */
    double *s = work, *r = s + CHUNK, *q = r + CHUNK;
    double *x1 = q + CHUNK, *x2 = x1 + CHUNK, *x3 = x2 + CHUNK,
           *x4 = x3 + CHUNK;
    double *pp = x4 + CHUNK, *ee = pp + CHUNK;
    double *pn = ee + CHUNK, *en = pn + CHUNK, *a = en + CHUNK,
           *th = a + CHUNK, *ps = th + CHUNK, *pr = ps + CHUNK,
           *q9 = pr + CHUNK, *q1 = q9 + CHUNK, *f = q1 + CHUNK,
           *rr = f + CHUNK, *sq = rr + CHUNK;
    /* the members' ordinates: member j uses po1[j] (n1[j] of them) and
     * po2[j] (n2[j]), its constants, or the set it made, or that of the
     * member before it with the same X4 */
    double o1[CHUNK][NH1], o2[CHUNK][NH2];
    const double *po1[CHUNK], *po2[CHUNK];
    size_t b0, j, n1[CHUNK], n2[CHUNK];
    for (b0 = 0; b0 < count; b0 += CHUNK) {
        const size_t m = count - b0 < CHUNK ? count - b0 : CHUNK;

        /* gather the stores, parameters and forcings */
        for (j = 0; j < CHUNK; j++) {
            const size_t jj = b0 + (j < m ? j : m - 1);
            const double *xj = X + jj * n, *pj = P + jj * 4, *uj = U + jj * 2;
            s[j] = xj[IS];
            r[j] = xj[IR];
            x1[j] = pj[0];
            x2[j] = pj[1];
            x3[j] = pj[2];
            x4[j] = pj[3];
            pp[j] = uj[0];
            ee[j] = uj[1];
        }

        /* the ordinates, well before the queues read them: a load wider
         * than the stores that just wrote its values stalls */
        if (C != NULL) {
            for (j = 0; j < m; j++) {
                const double *cj = C + (b0 + j) * NCONST;
                n1[j] = (size_t)cj[0];
                n2[j] = (size_t)cj[1];
                po1[j] = cj + 2;
                po2[j] = cj + 2 + NH1;
            }
        } else {
            for (j = 0; j < m; j++) {
                if (j > 0 && x4[j] == x4[j - 1]) {
                    n1[j] = n1[j - 1];
                    n2[j] = n2[j - 1];
                    po1[j] = po1[j - 1];
                    po2[j] = po2[j - 1];
                } else {
                    ordinates(x4[j], o1[j], &n1[j], o2[j], &n2[j]);
                    po1[j] = o1[j];
                    po2[j] = o2[j];
                }
            }
        }

        /* production store */
        for (j = 0; j < CHUNK; j++)
            interception(pp[j], ee[j], x1[j], &pn[j], &en[j], &a[j]);
        for (j = 0; j < CHUNK; j++)
            th[j] = tanh(a[j]);
        for (j = 0; j < CHUNK; j++)
            a[j] = production(x1[j], tanh_pn(th[j], en[j]), tanh_en(th[j], pn[j]),
                              &s[j], &ps[j]);
        for (j = 0; j < CHUNK; j++)
            a[j] = root4(a[j]);
        for (j = 0; j < CHUNK; j++)
            pr[j] = percolation(a[j], pn[j], ps[j], &s[j]);

        /* unit hydrographs, in each member's column. The chunk's states are
         * contiguous (n = NSTATE), so one move shifts every queue of the
         * chunk; it also shifts S, R and Q of the members, which were read
         * above and are all written below. */
        memmove(X + b0 * n + IUH1, X + b0 * n + IUH1 + 1,
                ((m - 1) * n + NH1 + NH2 - 1) * sizeof(double));
        for (j = 0; j < m; j++) {
            double *xj = X + (b0 + j) * n;
            queues_fill(xj, po1[j], n1[j], po2[j], n2[j], 0.9 * pr[j], 0.1 * pr[j]);
            q9[j] = xj[IUH1];
            q1[j] = xj[IUH2];
        }
        for (; j < CHUNK; j++) {
            q9[j] = q9[m - 1];
            q1[j] = q1[m - 1];
        }

        /* exchange and routing store */
        for (j = 0; j < CHUNK; j++)
            rr[j] = r[j] / x3[j];
        for (j = 0; j < CHUNK; j++)
            sq[j] = sqrt(rr[j]);
        for (j = 0; j < CHUNK; j++) {
            f[j] = exchange(x2[j], rr[j], sq[j]);
            a[j] = routing_in(x3[j], q9[j], f[j], &r[j]);
        }
        for (j = 0; j < CHUNK; j++)
            a[j] = root4(a[j]);
        for (j = 0; j < CHUNK; j++)
            q[j] = routing_out(a[j], q1[j], f[j], &r[j]);

        /* write back the chunk's real members */
        for (j = 0; j < m; j++) {
            double *xj = X + (b0 + j) * n;
            xj[IS] = s[j];
            xj[IR] = r[j];
            xj[IQ] = q[j];
        }
    }
}

static void gr4j_block(const sl_model_def *def, size_t n, size_t count,
                       double t, double dt, double *X, const double *P,
                       const double *U, double *work)
{
    (void)def;
    (void)t;
    (void)dt;
    gr4j_block_with(n, count, X, P, NULL, U, work);
}

static void gr4j_const_block(const sl_model_def *def, size_t n, size_t count,
                             double t, double dt, double *X, const double *P,
                             const double *C, const double *U, double *work)
{
    (void)def;
    (void)t;
    (void)dt;
    gr4j_block_with(n, count, X, P, C, U, work);
}

/* ------------------------------------------------------ the definition */

static const char *const gr4j_states[NSTATE] = {SL_GR4J_STATE_NAMES};
static const char *const gr4j_params[] = {"X1", "X2", "X3", "X4"};
static const char *const gr4j_forcings[] = {"P", "E"};
/* stores 60% and 70% full, queues empty */
static const double gr4j_x0[NSTATE] = {[IS] = 0.6 * REF_X1, [IR] = 0.7 * REF_X3};
static const double gr4j_p[] = {REF_X1, REF_X2, REF_X3, REF_X4};
/* the unit-hydrograph queues are internal: S, R and Q are the model's face */
static const unsigned char gr4j_internal[NSTATE] = {
    0, 0, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1,
    1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1,
    1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 0};
static const double gr4j_lo[] = {0.0, -HUGE_VAL, 0.0, 0.5};
static const double gr4j_hi[] = {HUGE_VAL, HUGE_VAL, HUGE_VAL, 20.0};

const sl_model_def sl_model_gr4j = {
    "gr4j",
    "GR4J daily rainfall-runoff model (Perrin, Michel & Andreassian 2003): "
    "production and routing stores, two unit hydrographs; forcings P, E in mm/d",
    NSTATE, NSTATE, 4, 2, 0,
    gr4j_states, gr4j_params, gr4j_forcings, NULL,
    gr4j_x0, gr4j_p, gr4j_lo, gr4j_hi,
    1.0, "discrete",
    NULL, gr4j_map, NULL, gr4j_block, gr4j_block_work, gr4j_internal, NULL,
    NCONST, gr4j_constants, gr4j_const_block};
