/* integrate.c - Euler, RK4, Dormand-Prince 5(4), discrete maps and events;
 * the engine model built from a model definition. */
#include "sluice/integrate.h"

#include <math.h>
#include <string.h>

#include "sluice/pf.h"
#include "sluice/rng.h"
#include "clones.h"

const sl_integrator sl_integrator_euler = {"euler", 0, 1, 1};
const sl_integrator sl_integrator_rk4 = {"rk4", 0, 4, 5};
const sl_integrator sl_integrator_dopri5 = {"dopri5", 1, 5, 9};
const sl_integrator sl_integrator_discrete = {"discrete", 0, 0, 0};

static const sl_integrator *const integrators[] = {
    &sl_integrator_euler, &sl_integrator_rk4, &sl_integrator_dopri5,
    &sl_integrator_discrete};

const sl_integrator *sl_integrator_find(const char *name)
{
    size_t k;
    if (name == NULL)
        return NULL;
    for (k = 0; k < sizeof integrators / sizeof *integrators; k++)
        if (strcmp(name, integrators[k]->name) == 0)
            return integrators[k];
    return NULL;
}

const sl_integrator *sl_integrator_at(size_t k)
{
    return k < sizeof integrators / sizeof *integrators ? integrators[k] : NULL;
}

static void axpy_to(size_t len, double *out, const double *x, double a,
                    const double *k)
{
    size_t i;
    for (i = 0; i < len; i++)
        out[i] = x[i] + a * k[i];
}

/* Dormand & Prince (1980) 5(4) coefficients: the fifth-order solution is
 * propagated, the embedded fourth-order one gives the error estimate. */
static const double c2 = 1.0 / 5, c3 = 3.0 / 10, c4 = 4.0 / 5, c5 = 8.0 / 9;
static const double a21 = 1.0 / 5;
static const double a31 = 3.0 / 40, a32 = 9.0 / 40;
static const double a41 = 44.0 / 45, a42 = -56.0 / 15, a43 = 32.0 / 9;
static const double a51 = 19372.0 / 6561, a52 = -25360.0 / 2187,
                    a53 = 64448.0 / 6561, a54 = -212.0 / 729;
static const double a61 = 9017.0 / 3168, a62 = -355.0 / 33,
                    a63 = 46732.0 / 5247, a64 = 49.0 / 176,
                    a65 = -5103.0 / 18656;
static const double b1 = 35.0 / 384, b3 = 500.0 / 1113, b4 = 125.0 / 192,
                    b5 = -2187.0 / 6784, b6 = 11.0 / 84;
static const double e1 = 71.0 / 57600, e3 = -71.0 / 16695, e4 = 71.0 / 1920,
                    e5 = -17253.0 / 339200, e6 = 22.0 / 525, e7 = -1.0 / 40;

/* The stages of one attempt of size step from tc, on len = n * count
 * values in f's layout: k[0] holds f(tc, X) on entry; k[1] .. k[6] and yn
 * (the fifth-order solution) are filled, k[6] = f(tc + step, yn). */
SL_CLONES
static sl_status dopri5_stages(sl_block_rhs_fn f, void *ctx, size_t first, size_t count,
                               size_t len, double tc, double step, const double *X,
                               const double *P, const double *U, double *const *k,
                               double *y, double *yn, sl_error *err)
{
    const double *k1 = k[0];
    double *k2 = k[1], *k3 = k[2], *k4 = k[3], *k5 = k[4], *k6 = k[5], *k7 = k[6];
    size_t i;
    sl_status st;
    for (i = 0; i < len; i++) y[i] = X[i] + step * a21 * k1[i];
    if ((st = f(ctx, tc + c2 * step, first, count, y, P, U, k2, err)) != SL_OK) return st;
    for (i = 0; i < len; i++) y[i] = X[i] + step * (a31 * k1[i] + a32 * k2[i]);
    if ((st = f(ctx, tc + c3 * step, first, count, y, P, U, k3, err)) != SL_OK) return st;
    for (i = 0; i < len; i++) y[i] = X[i] + step * (a41 * k1[i] + a42 * k2[i] + a43 * k3[i]);
    if ((st = f(ctx, tc + c4 * step, first, count, y, P, U, k4, err)) != SL_OK) return st;
    for (i = 0; i < len; i++)
        y[i] = X[i] + step * (a51 * k1[i] + a52 * k2[i] + a53 * k3[i] + a54 * k4[i]);
    if ((st = f(ctx, tc + c5 * step, first, count, y, P, U, k5, err)) != SL_OK) return st;
    for (i = 0; i < len; i++)
        y[i] = X[i] + step * (a61 * k1[i] + a62 * k2[i] + a63 * k3[i] + a64 * k4[i] +
                              a65 * k5[i]);
    if ((st = f(ctx, tc + step, first, count, y, P, U, k6, err)) != SL_OK) return st;
    for (i = 0; i < len; i++)
        yn[i] = X[i] + step * (b1 * k1[i] + b3 * k3[i] + b4 * k4[i] + b5 * k5[i] +
                               b6 * k6[i]);
    return f(ctx, tc + step, first, count, yn, P, U, k7, err);
}

/* The scaled error of one value of an attempt (its square is summed):
 * its stages k1, k3 .. k7, its value x before and y after. fmax(ax, ay)
 * is written as a select, which gcc vectorises (the same value). */
static inline double dopri5_ratio(double step, double atol, double rtol, double k1, double k3,
                                  double k4, double k5, double k6, double k7, double x,
                                  double y)
{
    const double ei = step * (e1 * k1 + e3 * k3 + e4 * k4 + e5 * k5 + e6 * k6 + e7 * k7);
    const double ax = fabs(x), ay = fabs(y);
    return ei / (atol + rtol * (ay > ax ? ay : (ax == ax ? ax : ay)));
}

/* The next step from an attempt's error norm e2 (accepted when <= 1) */
static inline double dopri5_next_step(double step, double e2)
{
    double q;
    if (e2 <= 1.0) {
        q = e2 > 0 ? 0.9 * pow(e2, -0.2) : 5.0;
        return step * (q > 5.0 ? 5.0 : (q < 0.2 ? 0.2 : q));
    }
    /* a NaN error (a stage left the model's domain) shrinks the step the
     * most */
    q = isfinite(e2) ? 0.9 * pow(e2, -0.2) : 0.2;
    return step * (q < 0.2 ? 0.2 : (q > 1.0 ? 0.9 : q));
}

/* Before an attempt from tc: the step lands on tend, stretching rather
 * than leaving a sliver (*last). 0 when the control has failed. */
static inline int dopri5_prepare(const sl_tolerance *tol, double tc, double tend, double hmin,
                                 double *step, size_t *attempts, int *last)
{
    const double rem = tend - tc;
    *last = 0;
    if (*step >= rem || rem - *step < hmin) {
        *step = rem;
        *last = 1;
    }
    return !(++*attempts > tol->max_steps || !(*step > 0) || (*step < hmin && !*last));
}

/* Adaptive steps of a block from tc to tend, steps below hmin failing,
 * with the step control's state as it stands: the next step to try, the
 * attempts made so far, and whether k[0] (work) already holds f(tc, X),
 * as after an earlier attempt. */
static sl_status dopri5_from(sl_block_rhs_fn f, void *ctx, size_t n, size_t first,
                             size_t count, double tc, double tend, double hmin, double step,
                             size_t attempts, int have_k1, double *X, const double *P,
                             const double *U, const sl_tolerance *tol, double *work,
                             size_t *nrhs, sl_error *err)
{
    const size_t len = n * count;
    double *const k[7] = {work,           work + len,     work + 2 * len, work + 3 * len,
                          work + 4 * len, work + 5 * len, work + 6 * len};
    double *y = work + 7 * len, *yn = y + len;
    size_t i;
    sl_status st;
    int last;
    while (tc < tend) {
        double e2 = 0.0;
        if (!dopri5_prepare(tol, tc, tend, hmin, &step, &attempts, &last))
            goto blown;
        if (!have_k1) {
            if ((st = f(ctx, tc, first, count, X, P, U, k[0], err)) != SL_OK)
                return st;
            if (nrhs) (*nrhs)++;
            have_k1 = 1;
        }
        if ((st = dopri5_stages(f, ctx, first, count, len, tc, step, X, P, U, k, y, yn,
                                err)) != SL_OK)
            return st;
        if (nrhs) (*nrhs) += 6;
        for (i = 0; i < len; i++) {
            double r = dopri5_ratio(step, tol->atol, tol->rtol, k[0][i], k[2][i], k[3][i],
                                    k[4][i], k[5][i], k[6][i], X[i], yn[i]);
            e2 += r * r;
        }
        e2 = sqrt(e2 / (double)len);
        if (e2 <= 1.0) {
            /* accept; the last stage is the next step's first (FSAL) */
            memcpy(X, yn, len * sizeof(double));
            memcpy(k[0], k[6], len * sizeof(double));
            tc = last ? tend : tc + step;
        }
        step = dopri5_next_step(step, e2);
    }
    return SL_OK;
blown:
    for (i = 0; i < len; i++)
        X[i] = NAN;
    return SL_OK;
}

static sl_status dopri5(sl_block_rhs_fn f, void *ctx, size_t n, size_t first,
                        size_t count, double t, double h, double *X,
                        const double *P, const double *U,
                        const sl_tolerance *tol, double *work, size_t *nrhs,
                        sl_error *err)
{
    return dopri5_from(f, ctx, n, first, count, t, t + h, tol->hmin_rel * h, h, 0, 0, X, P, U,
                       tol, work, nrhs, err);
}

SL_CLONES
sl_status sl_integrate_block(const sl_integrator *method, sl_block_rhs_fn f,
                             void *ctx, size_t n, size_t first, size_t count,
                             double t, double h, double *X, const double *P,
                             const double *U, const sl_tolerance *tol,
                             double *work, size_t *nrhs, sl_error *err)
{
    const size_t len = n * count;
    size_t i;
    sl_status st;
    if (method == &sl_integrator_dopri5)
        return dopri5(f, ctx, n, first, count, t, h, X, P, U, tol, work, nrhs, err);
    if (method == &sl_integrator_euler) {
        if ((st = f(ctx, t, first, count, X, P, U, work, err)) != SL_OK)
            return st;
        if (nrhs) (*nrhs)++;
        for (i = 0; i < len; i++)
            X[i] += h * work[i];
        return SL_OK;
    }
    if (method == &sl_integrator_rk4) {
        double *k1 = work, *k2 = k1 + len, *k3 = k2 + len, *k4 = k3 + len,
               *y = k4 + len;
        if ((st = f(ctx, t, first, count, X, P, U, k1, err)) != SL_OK) return st;
        axpy_to(len, y, X, 0.5 * h, k1);
        if ((st = f(ctx, t + 0.5 * h, first, count, y, P, U, k2, err)) != SL_OK) return st;
        axpy_to(len, y, X, 0.5 * h, k2);
        if ((st = f(ctx, t + 0.5 * h, first, count, y, P, U, k3, err)) != SL_OK) return st;
        axpy_to(len, y, X, h, k3);
        if ((st = f(ctx, t + h, first, count, y, P, U, k4, err)) != SL_OK) return st;
        if (nrhs) (*nrhs) += 4;
        for (i = 0; i < len; i++)
            X[i] += (h / 6.0) * (k1[i] + 2.0 * k2[i] + 2.0 * k3[i] + k4[i]);
        return SL_OK;
    }
    return sl_fail(err, SL_EINVAL, "badintegrator",
                   "the integrator '%s' does not integrate a right-hand side",
                   method != NULL ? method->name : "(none)");
}

void sl_event_values(const sl_events *events, size_t e, size_t member,
                     double *ev)
{
    size_t i;
    sl_stream s;
    int drawn = 0;
    for (i = 0; i < events->nv; i++) {
        double base = events->value[i + e * events->nv];
        const sl_forcing_noise_type *kind =
            sl_forcing_noise_get(events->noise != NULL ? events->noise[i] : SL_FORCING_EXACT);
        double z, sd;
        if (!kind->draws) {
            ev[i] = base;
            continue;
        }
        if (!drawn) {
            sl_stream_init(&s, events->seed, (uint32_t)member, (uint32_t)e,
                           SL_PURPOSE_EVENT);
            drawn = 1;
        }
        sd = events->sd[i];
        z = sl_stream_normal(&s);
        ev[i] = kind->apply(base, sd * z, sd);
    }
}

/* ---------------------------------------------------- the engine model */

static sl_status def_block_rhs(void *ctx, double t, size_t first,
                               size_t count, const double *X, const double *P,
                               const double *U, double *dX, sl_error *err)
{
    const sl_def_model *dm = (const sl_def_model *)ctx;
    const sl_model_def *def = dm->def;
    const size_t n = dm->n, p = def->n_param, q = def->n_forcing;
    size_t j;
    (void)first;
    (void)err;
    for (j = 0; j < count; j++)
        def->rhs(def, n, t, X + j * n, P + j * p, U + j * q, dX + j * n);
    return SL_OK;
}

/* The block rhs of a definition with rhs_block (ctx: its sl_def_model):
 * X, P and U already in the structure-of-arrays layout */
static sl_status soa_block_rhs(void *ctx, double t, size_t first, size_t count,
                               const double *X, const double *P, const double *U,
                               double *dX, sl_error *err)
{
    const sl_def_model *dm = (const sl_def_model *)ctx;
    (void)first;
    (void)err;
    dm->def->rhs_block(dm->def, dm->n, count, t, X, P, U, dX);
    return SL_OK;
}

/* rows x count (column j: member j) to count x rows, and back */
static void to_soa(size_t rows, size_t count, const double *in, double *out)
{
    size_t i, j;
    for (j = 0; j < count; j++)
        for (i = 0; i < rows; i++)
            out[i * count + j] = in[j * rows + i];
}

static void from_soa(size_t rows, size_t count, const double *in, double *out)
{
    size_t i, j;
    for (j = 0; j < count; j++)
        for (i = 0; i < rows; i++)
            out[j * rows + i] = in[i * count + j];
}

/* First event with time > t (events sorted). */
static size_t first_event_after(const sl_events *ev, double t)
{
    size_t lo = 0, hi = ev->count;
    while (lo < hi) {
        size_t mid = lo + (hi - lo) / 2;
        if (ev->time[mid] > t)
            hi = mid;
        else
            lo = mid + 1;
    }
    return lo;
}

static sl_status advance_piece(const sl_def_model *dm, double t, double h,
                               size_t first, size_t count, double *X,
                               const double *P, const double *U, double *work,
                               sl_error *err)
{
    const sl_model_def *def = dm->def;
    const size_t n = dm->n, p = def->n_param, q = def->n_forcing;
    size_t j;
    if (!(h > 0))
        return SL_OK;
    if (dm->method == &sl_integrator_discrete) {
        if (def->map_block != NULL) {
            def->map_block(def, n, count, t, h, X, P, U, work);
        } else {
            for (j = 0; j < count; j++)
                def->map(def, n, t, h, X + j * n, P + j * p, U + j * q);
        }
        return SL_OK;
    }
    if (dm->method->adaptive) {
        /* each member its own steps: one stiff member slows only itself */
        for (j = 0; j < count; j++) {
            sl_status st = sl_integrate_block(dm->method, def_block_rhs, (void *)(uintptr_t)dm,
                                              n, first + j, 1, t, h, X + j * n,
                                              P + j * p, U + j * q, &dm->tol,
                                              work, NULL, err);
            if (st != SL_OK)
                return st;
        }
        return SL_OK;
    }
    return sl_integrate_block(dm->method, def_block_rhs, (void *)(uintptr_t)dm, n,
                              first, count, t, h, X, P, U, &dm->tol, work, NULL, err);
}

/* Each member's sum of squared scaled errors of an attempt on a block of
 * g members in structure-of-arrays layout: its values in state order, as
 * dopri5 sums them for a block of one. */
SL_CLONES
static void soa_error(const sl_tolerance *tol, double step, size_t n, size_t g,
                      double *const *k, const double *restrict X, const double *restrict yn,
                      double *restrict e2)
{
    const double atol = tol->atol, rtol = tol->rtol;
    size_t i, a;
    for (a = 0; a < g; a++)
        e2[a] = 0.0;
    for (i = 0; i < n; i++) {
        const double *restrict k1 = k[0] + i * g, *restrict k3 = k[2] + i * g,
                               *restrict k4 = k[3] + i * g, *restrict k5 = k[4] + i * g,
                               *restrict k6 = k[5] + i * g, *restrict k7 = k[6] + i * g,
                               *restrict x = X + i * g, *restrict y = yn + i * g;
        for (a = 0; a < g; a++) {
            const double r = dopri5_ratio(step, atol, rtol, k1[a], k3[a], k4[a], k5[a], k6[a],
                                          k7[a], x[a], y[a]);
            e2[a] += r * r;
        }
    }
}

/* Dormand-Prince over [t, t + h] for a block of a definition with
 * rhs_block, in structure-of-arrays layout (state i of member j at
 * Xs[i * count + j]), each member under the control dopri5 gives it alone,
 * by the same operations, so its bits do not depend on the block. Every
 * member makes its first attempt from t with the whole piece as its step:
 * those attempts are made together, one block rhs call per stage time.
 * Where it is accepted the member is done (the common case when the
 * pieces are short); a member whose attempt is rejected goes on alone from
 * where that left it (its next step, attempts and first stage), through
 * rhs, since no two members' steps agree from then on. work holds
 * 9 n (count + 1) + n + n_param + n_forcing doubles. */
static sl_status soa_dopri5(const sl_def_model *dm, double t, double h, size_t first,
                            size_t count, double *Xs, const double *Ps, const double *Us,
                            double *work, sl_error *err)
{
    const sl_model_def *def = dm->def;
    const size_t n = dm->n, p = def->n_param, q = def->n_forcing, len = n * count;
    const sl_tolerance *tol = &dm->tol;
    const double tend = t + h, hmin = tol->hmin_rel * h;
    double *const k[7] = {work,           work + len,     work + 2 * len, work + 3 * len,
                          work + 4 * len, work + 5 * len, work + 6 * len};
    double *y = work + 7 * len, *yn = y + len, *x = yn + len, *pj = x + n, *uj = pj + p,
           *wk = uj + q;
    double e2[SL_MODEL_BLOCK], step = h;
    size_t attempts = 0, i, j;
    int last;
    sl_status st;
    /* the first attempt is the same for every member: the whole piece */
    if (!(t < tend))
        return SL_OK;
    if (!dopri5_prepare(tol, t, tend, hmin, &step, &attempts, &last)) {
        for (i = 0; i < len; i++)
            Xs[i] = NAN;
        return SL_OK;
    }
    if ((st = soa_block_rhs((void *)(uintptr_t)dm, t, first, count, Xs, Ps, Us, k[0], err)) !=
            SL_OK ||
        (st = dopri5_stages(soa_block_rhs, (void *)(uintptr_t)dm, first, count, len, t, step, Xs,
                            Ps, Us, k, y, yn, err)) != SL_OK)
        return st;
    soa_error(tol, step, n, count, k, Xs, yn, e2);
    for (j = 0; j < count; j++) {
        const double e = sqrt(e2[j] / (double)n);
        if (e <= 1.0) {
            /* accepted: the step was the whole piece, so the member is at
             * tend (t + step with last unset is t + h = tend as well) */
            for (i = 0; i < n; i++)
                Xs[i * count + j] = yn[i * count + j];
            continue;
        }
        /* rejected: the member tries again alone from t, f(t, x) in wk */
        for (i = 0; i < n; i++) {
            x[i] = Xs[i * count + j];
            wk[i] = k[0][i * count + j];
        }
        for (i = 0; i < p; i++)
            pj[i] = Ps[i * count + j];
        for (i = 0; i < q; i++)
            uj[i] = Us[i * count + j];
        if ((st = dopri5_from(def_block_rhs, (void *)(uintptr_t)dm, n, first + j, 1, t, tend,
                              hmin, dopri5_next_step(step, e), attempts, 1, x, pj, uj, tol, wk,
                              NULL, err)) != SL_OK)
            return st;
        for (i = 0; i < n; i++)
            Xs[i * count + j] = x[i];
    }
    return SL_OK;
}

/* The scratch of span_block: the block's states, parameters and forcings
 * in its layout, one member's states and event values, the stages */
static size_t span_work(const sl_model_def *def, const sl_integrator *method, size_t n)
{
    const size_t pq = def->n_param + def->n_forcing;
    /* the integrator's stages; soa_dopri5 adds what one member's run
     * alone needs */
    return (method->stages * n + n + pq) * SL_MODEL_BLOCK + n + def->n_event + 1 +
           (method->adaptive ? method->stages * n + n + pq : 0);
}

static sl_status soa_piece(const sl_def_model *dm, double t, double h, size_t first,
                           size_t count, double *Xs, const double *Ps, const double *Us,
                           double *wk, sl_error *err)
{
    if (!(h > 0))
        return SL_OK;
    if (dm->method->adaptive)
        return soa_dopri5(dm, t, h, first, count, Xs, Ps, Us, wk, err);
    return sl_integrate_block(dm->method, soa_block_rhs, (void *)(uintptr_t)dm, dm->n, first,
                              count, t, h, Xs, Ps, Us, &dm->tol, wk, NULL, err);
}

/* A definition with rhs_block under a fixed-step method: the block stays in
 * structure-of-arrays layout through steps l0 .. l1-1 of an interval of
 * nsteps steps (step l from t0 + l h to t0 + (l + 1) h, the last to
 * t_end), so it is transposed once, not once a step. The events of
 * (ts, te] of a step split it and are applied in time order, each member's
 * jump on a copy of its states, as def_step applies them. work holds
 * span_work doubles. */
static sl_status span_block(const sl_def_model *dm, double t0, double h, double t_end,
                            size_t nsteps, size_t l0, size_t l1, size_t first, size_t count,
                            double *X, const double *P, const double *U, double *work,
                            size_t *failed, sl_error *err)
{
    const sl_model_def *def = dm->def;
    const size_t n = dm->n, p = def->n_param, q = def->n_forcing;
    const sl_events *ev = dm->events;
    double *Xs = work, *Ps = Xs + n * count, *Us = Ps + p * count, *x = Us + q * count,
           *evv = x + n, *wk = evv + def->n_event + 1;
    size_t e, l, i, j;
    sl_status st = SL_OK;
    to_soa(n, count, X, Xs);
    to_soa(p, count, P, Ps);
    to_soa(q, count, U, Us);
    e = ev != NULL && ev->count > 0 ? first_event_after(ev, t0 + (double)l0 * h) : 0;
    for (l = l0; l < l1 && st == SL_OK; l++) {
        /* as the drivers time their step calls; the events of (ts, te] */
        const double ts = t0 + (double)l * h;
        const double te = l + 1 == nsteps ? t_end : t0 + (double)(l + 1) * h;
        double tc = ts;
        if (ev != NULL)
            for (; e < ev->count && ev->time[e] <= te; e++) {
                st = soa_piece(dm, tc, ev->time[e] - tc, first, count, Xs, Ps, Us, wk, err);
                if (st != SL_OK)
                    break;
                tc = ev->time[e];
                for (j = 0; j < count; j++) {
                    for (i = 0; i < n; i++)
                        x[i] = Xs[i * count + j];
                    sl_event_values(ev, e, first + j, evv);
                    def->jump(def, n, ev->time[e], x, P + j * p, evv);
                    for (i = 0; i < n; i++)
                        Xs[i * count + j] = x[i];
                }
            }
        if (st == SL_OK)
            st = soa_piece(dm, tc, te - tc, first, count, Xs, Ps, Us, wk, err);
        if (st != SL_OK)
            *failed = l;
    }
    from_soa(n, count, Xs, X);
    return st;
}

/* span_block on the blocks of members first .. first+count-1 */
static sl_status span_blocks(const sl_def_model *dm, double t0, double h, double t_end,
                             size_t nsteps, size_t l0, size_t l1, size_t first, size_t count,
                             double *X, const double *P, const double *U, double *work,
                             size_t *failed, sl_error *err)
{
    const size_t n = dm->n, p = dm->def->n_param, q = dm->def->n_forcing;
    size_t b0;
    for (b0 = 0; b0 < count; b0 += SL_MODEL_BLOCK) {
        size_t cnt = count - b0 < SL_MODEL_BLOCK ? count - b0 : SL_MODEL_BLOCK;
        sl_status st = span_block(dm, t0, h, t_end, nsteps, l0, l1, first + b0, cnt,
                                  X + b0 * n, P + b0 * p, U != NULL ? U + b0 * q : NULL, work,
                                  failed, err);
        if (st != SL_OK)
            return st;
    }
    return SL_OK;
}

/* The model's span (model.h); only models without forcing have one */
static sl_status def_span(const sl_model *model, double t0, double h, double t_end,
                          size_t nsteps, size_t l0, size_t l1, size_t first, size_t count,
                          double *X, const double *P, uint64_t seed, uint32_t s0,
                          double *work, size_t *failed, sl_error *err)
{
    (void)seed;
    (void)s0;
    return span_blocks((const sl_def_model *)model->ctx, t0, h, t_end, nsteps, l0, l1, first,
                       count, X, P, NULL, work, failed, err);
}

static sl_status def_step(const sl_model *model, double t, double t_end,
                          size_t first, size_t count, double *X,
                          const double *P, const double *U, uint64_t seed,
                          uint32_t step, double *work, sl_error *err)
{
    const sl_def_model *dm = (const sl_def_model *)model->ctx;
    const sl_model_def *def = dm->def;
    const size_t n = dm->n, p = def->n_param, q = def->n_forcing;
    const sl_events *ev = dm->events;
    double *evv = work, *wk = work + (def->n_event + 1);
    size_t b0;
    (void)seed;
    (void)step;
    if (def->rhs_block != NULL && dm->method != &sl_integrator_discrete) {
        size_t failed;
        return span_blocks(dm, t, t_end - t, t_end, 1, 0, 1, first, count, X, P, U, work,
                           &failed, err);
    }
    for (b0 = 0; b0 < count; b0 += SL_MODEL_BLOCK) {
        size_t cnt = count - b0 < SL_MODEL_BLOCK ? count - b0 : SL_MODEL_BLOCK;
        double *Xb = X + b0 * n;
        const double *Pb = P + b0 * p, *Ub = U + b0 * q;
        double tc = t, tend = t_end;
        size_t e = ev != NULL && ev->count > 0 ? first_event_after(ev, t) : 0, j;
        sl_status st;
        if (dm->method == &sl_integrator_discrete) {
            /* a map advances whole steps only: the events of (t, t_end]
             * follow it, in time order */
            st = advance_piece(dm, t, tend - t, first + b0, cnt, Xb, Pb, Ub, wk, err);
            if (st != SL_OK)
                return st;
            tc = tend;
        }
        if (ev != NULL)
            for (; e < ev->count && ev->time[e] <= tend; e++) {
                if (dm->method != &sl_integrator_discrete) {
                    st = advance_piece(dm, tc, ev->time[e] - tc, first + b0, cnt, Xb, Pb,
                                       Ub, wk, err);
                    if (st != SL_OK)
                        return st;
                    tc = ev->time[e];
                }
                for (j = 0; j < cnt; j++) {
                    sl_event_values(ev, e, first + b0 + j, evv);
                    def->jump(def, n, ev->time[e], Xb + j * n, Pb + j * p, evv);
                }
            }
        st = advance_piece(dm, tc, tend - tc, first + b0, cnt, Xb, Pb, Ub, wk, err);
        if (st != SL_OK)
            return st;
    }
    return SL_OK;
}

/* The model's forced span (model.h), for a discrete map with constants
 * and no events: each block of members makes its constants once, then
 * goes through steps l0 .. l1-1, its forcing filled before each step, as
 * def_step times the steps and their maps (a step of length 0 moves
 * nothing). work holds forced_span_work doubles. */
static size_t forced_span_work(const sl_model_def *def, size_t n)
{
    return def->n_const * SL_MODEL_BLOCK +
           (def->block_work != NULL ? def->block_work(n, SL_MODEL_BLOCK) : 0);
}

/* Whether a definition run by `method` has a forced span */
static int forced_span(const sl_model_def *def, const sl_integrator *method,
                       const sl_events *events)
{
    return method == &sl_integrator_discrete && def->n_forcing > 0 && def->n_const > 0 &&
           def->constants != NULL && def->map_const_block != NULL &&
           (events == NULL || events->count == 0);
}

static sl_status def_span_forced(const sl_model *model, double t0, double h, double t_end,
                                 size_t nsteps, size_t l0, size_t l1, size_t first,
                                 size_t count, double *X, const double *P, double *U,
                                 sl_forcing_fill_fn fill, void *fill_ctx, uint64_t seed,
                                 uint32_t s0, double *work, size_t *failed, sl_error *err)
{
    const sl_def_model *dm = (const sl_def_model *)model->ctx;
    const sl_model_def *def = dm->def;
    const size_t n = dm->n, p = def->n_param, q = def->n_forcing, nc = def->n_const;
    double *C = work, *wk = work + nc * SL_MODEL_BLOCK;
    size_t b0, j, l;
    (void)first;
    (void)seed;
    (void)s0;
    (void)failed;
    (void)err;
    for (b0 = 0; b0 < count; b0 += SL_MODEL_BLOCK) {
        const size_t cnt = count - b0 < SL_MODEL_BLOCK ? count - b0 : SL_MODEL_BLOCK;
        double *Xb = X + b0 * n;
        const double *Pb = P + b0 * p, *Ub = U + b0 * q;
        for (j = 0; j < cnt; j++)
            def->constants(def, Pb + j * p, C + j * nc);
        for (l = l0; l < l1; l++) {
            const double ts = t0 + (double)l * h;
            const double te = l + 1 == nsteps ? t_end : t0 + (double)(l + 1) * h;
            fill(fill_ctx, l, b0, cnt);
            if (te - ts > 0)
                def->map_const_block(def, n, cnt, ts, te - ts, Xb, Pb, C, Ub, wk);
        }
    }
    return SL_OK;
}

sl_status sl_span_steps(double t, double t_end, double dt, int discrete,
                        double *steps, sl_error *err)
{
    double x, c;
    *steps = 0.0;
    if (!isfinite(t) || !isfinite(t_end) || t_end < t)
        return sl_fail(err, SL_EINVAL, "badtimes",
                       "a span must run forward between finite times, got %g to %g",
                       t, t_end);
    if (!(dt > 0) || !isfinite(dt))
        return sl_fail(err, SL_EINVAL, "badstep",
                       "the time step must be finite and > 0, got %g", dt);
    x = (t_end - t) / dt; /* Inf when the difference or the ratio overflows */
    c = discrete ? floor(x + 0.5) : ceil(x - 1e-9);
    if (c < 0)
        c = 0.0;
    *steps = c;
    if (!(c <= SL_SPAN_STEPS_MAX))
        return sl_fail(err, SL_EINVAL, "toomanysteps",
                       "the span from t = %g to %g takes %.3g model steps of dt = %g, "
                       "more than 2^53, the most a double counts exactly: use a "
                       "larger dt or a shorter span", t, t_end, c, dt);
    return SL_OK;
}

sl_status sl_run_steps(double t0, const double *times, size_t T, double dt,
                       int discrete, size_t members, size_t states,
                       double *total, sl_error *err)
{
    const uint64_t limit = (uint64_t)SL_RUN_WORK_MAX;
    double sum = 0.0, t = t0, t_end = t0;
    uint64_t steps;
    size_t k;
    if (total != NULL)
        *total = 0.0;
    if (T > 0 && times == NULL)
        return sl_fail(err, SL_EINVAL, "badtimes", "the run has no times");
    for (k = 0; k < T; k++) {
        double c;
        sl_status st = sl_span_steps(t, times[k], dt, discrete, &c, err);
        if (st != SL_OK && c == 0.0)
            return st; /* badtimes, badstep */
        sum += c;      /* inexact once a span is beyond 2^53: only reported */
        t = t_end = times[k];
    }
    if (!(sum <= SL_RUN_STEPS_MAX)) {
        if (sum <= SL_SPAN_STEPS_MAX)
            return sl_fail(err, SL_EINVAL, "toomanysteps",
                           "the run from t = %g to %g takes %.0f model steps of dt = %g; "
                           "a run may take at most 4294967295 (2^32 - 1: a step's number "
                           "keys its random draws): use a larger dt, a shorter span or "
                           "fewer output times", t0, t_end, sum, dt);
        return sl_fail(err, SL_EINVAL, "toomanysteps",
                       "the run from t = %g to %g takes %.3g model steps of dt = %g; "
                       "a run may take at most 4294967295 (2^32 - 1: a step's number "
                       "keys its random draws): use a larger dt, a shorter span or "
                       "fewer output times", t0, t_end, sum, dt);
    }
    if (total != NULL)
        *total = sum;
    /* steps x members x states <= limit, in whole numbers: a x b <= L
     * exactly when a <= floor(L / b) */
    steps = (uint64_t)sum;
    if (steps > 0 && members > 0 && states > 0 &&
        ((uint64_t)members > limit / steps ||
         (uint64_t)states > limit / (steps * (uint64_t)members)))
        return sl_fail(err, SL_EINVAL, "toomanysteps",
                       "the run from t = %g to %g takes %.0f model steps of dt = %g for "
                       "%lu member(s) of %lu state(s), %.3g member-state-steps: more "
                       "than the 1e15 that could end within days on any machine; use a "
                       "larger dt, a shorter span, fewer output times or fewer members",
                       t0, t_end, sum, dt, (unsigned long)members, (unsigned long)states,
                       sum * (double)members * (double)states);
    return SL_OK;
}

sl_status sl_tolerance_check(const sl_tolerance *tol, sl_error *err)
{
    if (tol == NULL)
        return sl_fail(err, SL_EINVAL, "badtolerance", "no tolerances");
    if (!(tol->hmin_rel > 0 && tol->hmin_rel < 1))
        return sl_fail(err, SL_EINVAL, "badtolerance",
                       "the smallest relative step must lie in (0, 1), got %g",
                       tol->hmin_rel);
    if (tol->max_steps < 1)
        return sl_fail(err, SL_EINVAL, "badtolerance",
                       "the adaptive method needs at least 1 attempt per interval");
    if (!(tol->rtol >= 0) || !(tol->atol >= 0) || !(tol->rtol + tol->atol > 0) ||
        !isfinite(tol->rtol) || !isfinite(tol->atol))
        return sl_fail(err, SL_EINVAL, "badtolerance",
                       "tolerances must be finite, >= 0 and not both zero (rtol %g, atol %g)",
                       tol->rtol, tol->atol);
    return SL_OK;
}

sl_status sl_def_model_init(sl_model *model, sl_def_model *dm,
                            const sl_model_def *def, size_t n,
                            const sl_integrator *method, double dt,
                            const sl_tolerance *tol, const sl_events *events,
                            sl_error *err)
{
    size_t k, work;
    sl_status st;
    if (def == NULL)
        return sl_fail(err, SL_EINVAL, "badmodel", "no model definition");
    if (def->n_state > 0)
        n = def->n_state;
    if (n < 1 || n < def->n_min)
        return sl_fail(err, SL_EINVAL, "badmodel",
                       "model '%s' needs at least %lu states, got %lu", def->name,
                       (unsigned long)(def->n_min > 1 ? def->n_min : 1), (unsigned long)n);
    if (method == NULL)
        method = sl_integrator_find(def->integrator);
    if (method == NULL)
        return sl_fail(err, SL_EINVAL, "badintegrator", "no integrator for model '%s'",
                       def->name);
    if (method == &sl_integrator_discrete ? def->map == NULL && def->map_block == NULL
                                          : def->rhs == NULL)
        return sl_fail(err, SL_EINVAL, "badintegrator",
                       "model '%s' has no %s, so the integrator '%s' cannot drive it",
                       def->name, method == &sl_integrator_discrete ? "step map" : "right-hand side",
                       method->name);
    if (dt <= 0)
        dt = def->dt;
    if (!(dt > 0) || !isfinite(dt))
        return sl_fail(err, SL_EINVAL, "badstep", "the time step must be finite and > 0");
    memset(dm, 0, sizeof *dm);
    dm->def = def;
    dm->n = n;
    dm->method = method;
    if (tol != NULL) {
        dm->tol = *tol;
    } else {
        dm->tol.rtol = 1e-6;
        dm->tol.atol = 1e-9;
    }
    if (dm->tol.hmin_rel == 0)
        dm->tol.hmin_rel = 1e-12;
    if (dm->tol.max_steps == 0)
        dm->tol.max_steps = 100000;
    if ((st = sl_tolerance_check(&dm->tol, err)) != SL_OK)
        return st;
    if (def->n_event > 0 && events != NULL) {
        if (events->nv != def->n_event || def->jump == NULL)
            return sl_fail(err, SL_EINVAL, "badevents",
                           "model '%s' takes %lu values per event, got %lu", def->name,
                           (unsigned long)def->n_event, (unsigned long)events->nv);
        for (k = 0; k < events->count; k++)
            if (!isfinite(events->time[k]) || (k > 0 && !(events->time[k] > events->time[k - 1])))
                return sl_fail(err, SL_EINVAL, "badevents",
                               "event times must be finite and increasing (event %lu)",
                               (unsigned long)(k + 1));
        for (k = 0; k < events->count * events->nv; k++)
            if (!isfinite(events->value[k]))
                return sl_fail(err, SL_EINVAL, "badevents", "event value %lu is not finite",
                               (unsigned long)(k + 1));
        if (events->noise != NULL)
            for (k = 0; k < events->nv; k++) {
                int kind = events->noise[k];
                if (sl_forcing_noise_get(kind) == NULL)
                    return sl_fail(err, SL_EINVAL, "badevents",
                                   "unknown perturbation kind for event series %lu",
                                   (unsigned long)(k + 1));
                if (kind != SL_FORCING_EXACT &&
                    (events->sd == NULL || !(events->sd[k] >= 0) || !isfinite(events->sd[k])))
                    return sl_fail(err, SL_EINVAL, "badevents",
                                   "event series %lu: the perturbation sd must be finite and >= 0",
                                   (unsigned long)(k + 1));
            }
        dm->events = events;
    } else if (events != NULL && events->count > 0) {
        return sl_fail(err, SL_EINVAL, "badevents", "model '%s' takes no events", def->name);
    }
    work = method->stages * n * SL_MODEL_BLOCK + def->n_event + 1;
    if (def->block_work != NULL)
        work += def->block_work(n, SL_MODEL_BLOCK);
    if (def->rhs_block != NULL && method != &sl_integrator_discrete &&
        span_work(def, method, n) > work)
        work = span_work(def, method, n);
    if (forced_span(def, method, dm->events) && forced_span_work(def, n) > work)
        work = forced_span_work(def, n);
    model->name = def->name;
    model->n_state = n;
    model->n_param = def->n_param;
    model->n_forcing = def->n_forcing;
    model->dt = dt;
    model->discrete = method == &sl_integrator_discrete;
    model->thread_safe = 1;
    model->member_draws = 0;
    if (dm->events != NULL && dm->events->noise != NULL)
        for (k = 0; k < dm->events->nv; k++)
            if (dm->events->noise[k] != SL_FORCING_EXACT)
                model->member_draws = 1;
    model->work = work;
    model->step = def_step;
    model->span = def->rhs_block != NULL && method != &sl_integrator_discrete &&
                          def->n_forcing == 0
                      ? def_span
                      : NULL;
    model->span_forced = forced_span(def, method, dm->events) ? def_span_forced : NULL;
    model->ctx = dm;
    return SL_OK;
}
