/* compose.c - several compiled models run as one (compose.h).
 *
 * Each component is an engine model of its own definition (the same
 * sl_def_model a run of it alone uses), advanced by its own step function
 * over its own clock: a component of scale s steps from (t_end - h) / s to
 * t_end / s, h its step in composed units. Its states, parameters and
 * forcings are gathered from the composed model's columns into scratch,
 * stepped, and put back, so it is integrated exactly as alone. Links then
 * read the states the components reached at t_end. */
#include <math.h>
#include <string.h>

#include "sluice/compose.h"

/* Relative slack for "a whole number of steps" (as the run's own grid
 * check in pf.c). */
#define WHOLE_SLACK 1e-9

static int whole(double r)
{
    return isfinite(r) && r >= 1 - WHOLE_SLACK &&
           fabs(r - floor(r + 0.5)) <= WHOLE_SLACK * (1.0 + r);
}

double sl_compose_rating(double x, double a, double b, double x0)
{
    double h;
    if (isnan(x) || isnan(x0))
        return (double)NAN;
    if (!(x > x0))
        return 0.0;
    h = a * pow(x - x0, b);
    return h < 0.0 ? 0.0 : h;
}

/* Does a step ending at composed step number k end a span of `ticks`
 * composed steps? */
static int ends_at(double k, double ticks)
{
    return fmod(k, ticks) == 0.0;
}

static sl_status compose_step(const sl_model *model, double t, double t_end,
                              size_t first, size_t count, double *X,
                              const double *P, const double *U, uint64_t seed,
                              uint32_t step, double *work, sl_error *err)
{
    const sl_compose *c = (const sl_compose *)model->ctx;
    const size_t n = c->n_state, p = c->n_param, q = c->n_forcing;
    const double k = floor(t_end / c->dt + 0.5);
    double *ev = work + c->scratch;
    size_t b0, i, j, l;
    for (b0 = 0; b0 < count; b0 += SL_MODEL_BLOCK) {
        const size_t cnt = count - b0 < SL_MODEL_BLOCK ? count - b0 : SL_MODEL_BLOCK;
        double *Xb = X + b0 * n;
        const double *Pb = P + b0 * p, *Ub = U + b0 * q;
        /* the components whose step ends at t_end, in order */
        for (i = 0; i < c->n_parts; i++) {
            const sl_compose_part *pt = &c->part[i];
            const size_t nc = c->pm[i].n_state, pc = c->pm[i].n_param, qc = c->pm[i].n_forcing;
            double *Xc = work, *Pc = Xc + nc * cnt, *Uc = Pc + pc * cnt, *wk = Uc + qc * cnt;
            double ts, te;
            size_t f;
            sl_status st;
            if (!ends_at(k, c->ticks[i]))
                continue;
            for (j = 0; j < cnt; j++) {
                memcpy(Xc + j * nc, Xb + j * n + c->x_off[i], nc * sizeof(double));
                if (pc)
                    memcpy(Pc + j * pc, Pb + j * p + c->p_off[i], pc * sizeof(double));
                for (f = 0; f < qc; f++) {
                    const size_t from = pt->forcing[f];
                    Uc[j * qc + f] = from >= SL_COMPOSE_FROM_LINK
                                         ? Xb[j * n + c->link_x[from - SL_COMPOSE_FROM_LINK] + 2]
                                         : Ub[j * q + from];
                }
            }
            /* its own clock; a component stepping with the composed step
             * starts where the run's step starts */
            te = t_end / pt->scale;
            ts = c->ticks[i] == 1.0 ? t / pt->scale
                                    : (t_end - c->ticks[i] * c->dt) / pt->scale;
            st = c->pm[i].step(&c->pm[i], ts, te, first + b0, cnt, Xc, Pc, Uc, seed, step,
                               wk, err);
            if (st != SL_OK)
                return st;
            for (j = 0; j < cnt; j++)
                memcpy(Xb + j * n + c->x_off[i], Xc + j * nc, nc * sizeof(double));
        }
        /* the links: sample their sources, end their periods */
        for (l = 0; l < c->n_links; l++) {
            const sl_compose_link *lk = &c->link[l];
            const sl_model_def *to = c->dm[lk->to].def;
            const size_t nt = c->pm[lk->to].n_state;
            if (!ends_at(k, c->ticks[lk->from]))
                continue;
            for (j = 0; j < cnt; j++) {
                double *xl = Xb + j * n + c->link_x[l];
                const double x = Xb[j * n + c->x_off[lk->from] + lk->from_state];
                const double *pl = Pb + j * p + c->link_p[l];
                double v;
                size_t s;
                if (xl[1] == 0.0) {
                    xl[0] = x;
                } else if (lk->reduce == SL_REDUCE_MAX) {
                    if (!(x <= xl[0]) && !isnan(xl[0]))
                        xl[0] = x; /* a NaN sample or maximum stays NaN */
                } else if (lk->reduce == SL_REDUCE_LAST) {
                    xl[0] = x;
                } else {
                    xl[0] += x;
                }
                xl[1] += 1.0;
                if (!ends_at(k, c->link_ticks[l]))
                    continue;
                v = lk->reduce == SL_REDUCE_MEAN ? xl[0] / xl[1] : xl[0];
                if (lk->rating)
                    v = sl_compose_rating(v, pl[0], pl[1], pl[2]);
                xl[0] = 0.0;
                xl[1] = 0.0;
                xl[2] = v;
                if (!lk->to_event)
                    continue;
                if (isnan(v)) {
                    /* a broken source breaks its target: the member shows */
                    for (s = 0; s < nt; s++)
                        Xb[j * n + c->x_off[lk->to] + s] = (double)NAN;
                    continue;
                }
                if (lk->rating && !(v > 0))
                    continue; /* no event */
                for (s = 0; s < to->n_event; s++)
                    ev[s] = 0.0;
                ev[lk->to_index] = v;
                to->jump(to, nt, t_end / c->part[lk->to].scale,
                         Xb + j * n + c->x_off[lk->to], Pb + j * p + c->p_off[lk->to], ev);
            }
        }
    }
    return SL_OK;
}

static sl_status check_link(const sl_compose *c, size_t l, sl_error *err)
{
    const sl_compose_link *lk = &c->link[l];
    const sl_model_def *to;
    double h_from, h_to;
    if (lk->from >= c->n_parts || lk->to >= c->n_parts)
        return sl_fail(err, SL_EINVAL, "badcompose",
                       "link %lu joins component %lu to %lu of %lu", (unsigned long)(l + 1),
                       (unsigned long)(lk->from + 1), (unsigned long)(lk->to + 1),
                       (unsigned long)c->n_parts);
    to = c->dm[lk->to].def;
    if (lk->from_state >= c->pm[lk->from].n_state)
        return sl_fail(err, SL_EINVAL, "badcompose",
                       "link %lu reads state %lu of component '%s', which has %lu",
                       (unsigned long)(l + 1), (unsigned long)(lk->from_state + 1),
                       c->dm[lk->from].def->name, (unsigned long)c->pm[lk->from].n_state);
    if (lk->to_event ? lk->to_index >= to->n_event || to->jump == NULL
                     : lk->to_index >= to->n_forcing ||
                           c->part[lk->to].forcing[lk->to_index] != SL_COMPOSE_FROM_LINK + l)
        return sl_fail(err, SL_EINVAL, "badtarget",
                       "link %lu: component '%s' has no %s %lu fed by this link",
                       (unsigned long)(l + 1), to->name, lk->to_event ? "event" : "forcing",
                       (unsigned long)(lk->to_index + 1));
    if (lk->reduce < SL_REDUCE_MAX || lk->reduce > SL_REDUCE_LAST)
        return sl_fail(err, SL_EINVAL, "badcompose", "link %lu: unknown reduction %d",
                       (unsigned long)(l + 1), lk->reduce);
    h_from = c->ticks[lk->from] * c->dt;
    h_to = c->ticks[lk->to] * c->dt;
    if (!(lk->every > 0) || !isfinite(lk->every) || !whole(lk->every / h_from) ||
        !whole(lk->every / h_to))
        return sl_fail(err, SL_EINVAL, "badperiod",
                       "link %lu: its period %g must be a whole number of the steps of its "
                       "source '%s' (%g) and of its target '%s' (%g), in composed time units",
                       (unsigned long)(l + 1), lk->every, c->dm[lk->from].def->name, h_from,
                       to->name, h_to);
    return SL_OK;
}

sl_status sl_compose_init(sl_model *model, sl_compose *c, sl_error *err)
{
    size_t i, l, f, nx = 0, np = 0, scratch = 0, nev = 0;
    int safe = 1, draws = 0;
    double dmin = HUGE_VAL, h[SL_COMPOSE_PARTS];
    sl_status st;
    if (c->n_parts < 1 || c->n_parts > SL_COMPOSE_PARTS || c->n_links > SL_COMPOSE_LINKS)
        return sl_fail(err, SL_EINVAL, "badcompose",
                       "a composed model holds 1 to %d components and at most %d links, "
                       "got %lu and %lu", SL_COMPOSE_PARTS, SL_COMPOSE_LINKS,
                       (unsigned long)c->n_parts, (unsigned long)c->n_links);
    for (i = 0; i < c->n_parts; i++) {
        sl_compose_part *pt = &c->part[i];
        if (pt->def == NULL)
            return sl_fail(err, SL_EINVAL, "badcompose", "component %lu has no definition",
                           (unsigned long)(i + 1));
        if (!(pt->scale > 0) || !isfinite(pt->scale))
            return sl_fail(err, SL_EINVAL, "badscale",
                           "component '%s': its time scale must be finite and > 0, got %g",
                           pt->def->name, pt->scale);
        st = sl_def_model_init(&c->pm[i], &c->dm[i], pt->def, pt->n, pt->method, pt->dt,
                               &pt->tol, NULL, err);
        if (st != SL_OK)
            return st;
        if (pt->def->n_forcing > 0 && pt->forcing == NULL)
            return sl_fail(err, SL_EINVAL, "badcompose",
                           "component '%s' has no forcing map", pt->def->name);
        h[i] = c->pm[i].dt * pt->scale;
        if (!(h[i] > 0) || !isfinite(h[i]))
            return sl_fail(err, SL_EINVAL, "badstep",
                           "component '%s': its step %g times its scale %g is no step",
                           pt->def->name, c->pm[i].dt, pt->scale);
        if (h[i] < dmin)
            dmin = h[i];
        c->x_off[i] = nx;
        c->p_off[i] = np;
        nx += c->pm[i].n_state;
        np += c->pm[i].n_param;
        if ((c->pm[i].n_state + c->pm[i].n_param + c->pm[i].n_forcing) * SL_MODEL_BLOCK +
                c->pm[i].work > scratch)
            scratch = (c->pm[i].n_state + c->pm[i].n_param + c->pm[i].n_forcing) *
                          SL_MODEL_BLOCK + c->pm[i].work;
        if (pt->def->n_event > nev)
            nev = pt->def->n_event;
        safe = safe && c->pm[i].thread_safe;
        draws = draws || c->pm[i].member_draws;
    }
    c->dt = dmin;
    for (i = 0; i < c->n_parts; i++) {
        const double r = h[i] / dmin;
        if (!whole(r))
            return sl_fail(err, SL_EINVAL, "badstep",
                           "component '%s' steps by %g composed time units, which is not a "
                           "whole number of the shortest component step %g",
                           c->part[i].def->name, h[i], dmin);
        c->ticks[i] = floor(r + 0.5);
    }
    for (l = 0; l < c->n_links; l++) {
        c->link_x[l] = nx;
        nx += SL_COMPOSE_LINK_STATES;
        c->link_p[l] = np;
        if (c->link[l].rating)
            np += SL_COMPOSE_RATING_PARAMS;
        if ((st = check_link(c, l, err)) != SL_OK)
            return st;
        c->link_ticks[l] = floor(c->link[l].every / dmin + 0.5);
    }
    for (i = 0; i < c->n_parts; i++)
        for (f = 0; f < c->pm[i].n_forcing; f++) {
            const size_t from = c->part[i].forcing[f];
            if (from >= SL_COMPOSE_FROM_LINK) {
                l = from - SL_COMPOSE_FROM_LINK;
                if (l >= c->n_links || c->link[l].to != i || c->link[l].to_event ||
                    c->link[l].to_index != f)
                    return sl_fail(err, SL_EINVAL, "badcompose",
                                   "forcing %lu of component '%s' names link %lu, which does "
                                   "not feed it", (unsigned long)(f + 1),
                                   c->part[i].def->name, (unsigned long)(l + 1));
            } else if (from >= c->n_forcing) {
                return sl_fail(err, SL_EINVAL, "badcompose",
                               "forcing %lu of component '%s' is the run's forcing %lu of %lu",
                               (unsigned long)(f + 1), c->part[i].def->name,
                               (unsigned long)(from + 1), (unsigned long)c->n_forcing);
            } else if (c->ticks[i] > 1.0) {
                return sl_fail(err, SL_EINVAL, "slowforcing",
                               "component '%s' steps by %g composed time units, longer than "
                               "the composed step %g, so it cannot take the run's forcing "
                               "(it would see it at a later time than its step's start): "
                               "feed it through a link or give it the composed step",
                               c->part[i].def->name, h[i], dmin);
            }
        }
    c->n_state = nx;
    c->n_param = np;
    c->scratch = scratch;
    model->name = "composed";
    model->n_state = nx;
    model->n_param = np;
    model->n_forcing = c->n_forcing;
    model->dt = dmin;
    model->discrete = 1;
    model->thread_safe = safe;
    model->member_draws = draws;
    model->work = scratch + nev + 1;
    model->step = compose_step;
    model->span = NULL;
    model->span_forced = NULL;
    model->ctx = c;
    return SL_OK;
}
