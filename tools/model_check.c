/* model_check.c - the check of a user's model definition. make compiles
 * it to $(BUILD)/model_check.o (the package: sdk/build/model_check.o);
 * sluice.build_model links that object with the user's compiled file and
 * the library, and runs the program before the gateways are built, so a
 * definition that cannot be read, or functions that crash, never reach
 * Octave. It reads the definition sluice_user_model() returns, prints
 * one "problem: ..." line for each thing wrong with it, then calls each
 * of its functions once at the default parameters (a line "calling ..."
 * before each call says which one ran last if the program dies).
 * Exit 0: usable; 2: the problems printed; anything else: the model
 * crashed. */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include "sluice/model.h"

static int problems = 0;
static const double guard = -7.25e300;

static void check_names(const char *const *list, size_t count, const char *what)
{
    size_t k;
    if (count == 0)
        return;
    if (list == NULL) {
        printf("problem: %s is NULL but %lu name(s) are declared\n", what, (unsigned long)count);
        problems++;
        return;
    }
    for (k = 0; k < count; k++)
        if (list[k] == NULL || list[k][0] == 0) {
            printf("problem: %s: name %lu is missing\n", what, (unsigned long)(k + 1));
            problems++;
        }
}

/* The first i < n where a[i * stride] and b[i] differ in their bits
 * (any NaN equal to any NaN), or n */
static size_t disagreement(const double *a, size_t stride, const double *b, size_t n)
{
    size_t i;
    for (i = 0; i < n; i++) {
        double x = a[i * stride], y = b[i];
        if (!(isnan(x) && isnan(y)) && memcmp(&x, &y, sizeof x) != 0)
            return i;
    }
    return n;
}

static double *buffer(size_t count, const double *init)
{
    double *v = calloc(count + 8, sizeof(double));
    size_t k;
    if (v == NULL) {
        printf("problem: out of memory\n");
        exit(2);
    }
    for (k = 0; k < count; k++)
        v[k] = init != NULL ? init[k] : 0.0;
    for (k = count; k < count + 8; k++)
        v[k] = guard;
    return v;
}

static void stage(const char *what)
{
    printf("calling %s\n", what);
    fflush(stdout);
}

static void guarded(const double *v, size_t count, const char *who, const char *what)
{
    size_t k;
    for (k = count; k < count + 8; k++)
        if (v[k] != guard) {
            printf("problem: %s writes past the %lu entries of %s\n", who, (unsigned long)count, what);
            problems++;
            return;
        }
}

int main(void)
{
    const sl_model_def *d = sluice_user_model();
    const char *in;
    size_t n, k, np, nq, ne;
    double *x, *dx, *p, *u, *ev;
    if (d == NULL) {
        printf("problem: sluice_user_model() returned NULL\n");
        return 2;
    }
    if (d->name == NULL || d->name[0] == 0) {
        printf("problem: the definition has no name\n");
        problems++;
    }
    np = d->n_param;
    nq = d->n_forcing;
    ne = d->n_event;
    if (d->n_state > 1000000 || d->n_min > 1000000 || np > 100000 || nq > 100000 || ne > 100000) {
        printf("problem: implausible sizes (n_state %lu, n_min %lu, n_param %lu, n_forcing %lu, n_event %lu)\n",
               (unsigned long)d->n_state, (unsigned long)d->n_min, (unsigned long)np,
               (unsigned long)nq, (unsigned long)ne);
        return 2;
    }
    n = d->n_state > 0 ? d->n_state : (d->n_min > 1 ? d->n_min : 1);
    if (d->n_state > 0 && d->n_min > d->n_state) {
        printf("problem: n_min (%lu) exceeds n_state (%lu)\n", (unsigned long)d->n_min, (unsigned long)d->n_state);
        problems++;
    }
    if (d->state_names != NULL)
        check_names(d->state_names, d->n_state, "state_names");
    check_names(d->param_names, np, "param_names");
    check_names(d->forcing_names, nq, "forcing_names");
    check_names(d->event_names, ne, "event_names");
    if (d->rhs_block != NULL && d->rhs == NULL) {
        printf("problem: a block right-hand side (rhs_block) is given without the right-hand "
               "side (rhs) it must agree with (the adaptive integrator uses rhs)\n");
        problems++;
    }
    if ((d->n_const > 0) != (d->constants != NULL) ||
        (d->constants != NULL) != (d->map_const_block != NULL)) {
        printf("problem: n_const, constants and map_const_block go together: a member's "
               "constants are made by constants and used by map_const_block (got n_const "
               "%lu, constants %s, map_const_block %s)\n",
               (unsigned long)d->n_const, d->constants != NULL ? "given" : "NULL",
               d->map_const_block != NULL ? "given" : "NULL");
        problems++;
    } else if (d->map_const_block != NULL && d->map == NULL) {
        printf("problem: a step map given the members' constants (map_const_block) is given "
               "without the step map (map) it must agree with\n");
        problems++;
    }
    if (d->rhs == NULL && d->map == NULL && d->map_block == NULL) {
        printf("problem: neither a right-hand side (rhs) nor a step map (map) is given\n");
        problems++;
    }
    if (ne > 0 && d->jump == NULL) {
        printf("problem: n_event is %lu but no event map (jump) is given\n", (unsigned long)ne);
        problems++;
    }
    if (!(d->dt > 0) || !isfinite(d->dt)) {
        printf("problem: the time step dt must be finite and > 0, got %g\n", d->dt);
        problems++;
    }
    in = d->integrator;
    if (in != NULL && in[0] != 0) {
        if (strcmp(in, "euler") && strcmp(in, "rk4") && strcmp(in, "dopri5") && strcmp(in, "discrete")) {
            printf("problem: unknown integrator \"%s\" (euler, rk4, dopri5 or discrete)\n", in);
            problems++;
        } else if (strcmp(in, "discrete") == 0 && d->map == NULL && d->map_block == NULL) {
            printf("problem: the integrator \"discrete\" needs a step map (map)\n");
            problems++;
        } else if (strcmp(in, "discrete") != 0 && d->rhs == NULL) {
            printf("problem: the integrator \"%s\" needs a right-hand side (rhs)\n", in);
            problems++;
        }
    }
    if (d->p_lower != NULL && d->p_upper != NULL)
        for (k = 0; k < np; k++)
            if (!(d->p_lower[k] <= d->p_upper[k])) {
                printf("problem: parameter %lu: lower bound %g is not <= upper bound %g\n",
                       (unsigned long)(k + 1), d->p_lower[k], d->p_upper[k]);
                problems++;
            }
    if (problems)
        return 2;

    /* one call of each function at the defaults, zero forcing and events */
    x = buffer(n, d->n_state > 0 ? d->x0 : NULL);
    dx = buffer(n, NULL);
    p = buffer(np, NULL);
    u = buffer(nq, NULL);
    ev = buffer(ne, NULL);
    for (k = 0; k < np; k++) {
        double lo = d->p_lower != NULL ? d->p_lower[k] : -HUGE_VAL;
        double hi = d->p_upper != NULL ? d->p_upper[k] : HUGE_VAL;
        if (d->p_default != NULL && isfinite(d->p_default[k]))
            p[k] = d->p_default[k];
        else if (isfinite(lo) && isfinite(hi))
            p[k] = 0.5 * (lo + hi);
        else if (isfinite(lo))
            p[k] = lo + 1.0;
        else if (isfinite(hi))
            p[k] = hi - 1.0;
        else
            p[k] = 1.0;
    }
    if (d->rhs != NULL) {
        stage("the right-hand side (rhs)");
        d->rhs(d, n, 0.0, x, p, u, dx);
        guarded(dx, n, "the right-hand side (rhs)", "dxdt");
    }
    if (d->map != NULL) {
        stage("the step map (map)");
        d->map(d, n, 0.0, d->dt, x, p, u);
        guarded(x, n, "the step map (map)", "x");
    }
    if (d->map_block != NULL) {
        size_t count = 3, w = d->block_work != NULL ? d->block_work(n, count) : 0;
        double *X = buffer(n * count, NULL), *P = buffer(np * count, NULL);
        double *U = buffer(nq * count, NULL), *W = buffer(w, NULL);
        for (k = 0; k < np * count; k++)
            P[k] = p[k % np];
        for (k = 0; k < n * count; k++)
            X[k] = x[k % n];
        stage("the block step map (map_block)");
        d->map_block(d, n, count, 0.0, d->dt, X, P, U, W);
        guarded(X, n * count, "the block step map (map_block)", "X");
        guarded(W, w, "the block step map (map_block)", "its work space (block_work)");
    }
    if (d->rhs_block != NULL && d->rhs != NULL) {
        /* three members with states of their own, against rhs member by
         * member: the same bits (any NaN equal to any NaN) */
        const size_t count = 3;
        double *X = buffer(n * count, NULL), *P = buffer(np * count, NULL);
        double *U = buffer(nq * count, NULL), *D = buffer(n * count, NULL);
        double *xm = buffer(n, NULL), *pm = buffer(np, NULL), *um = buffer(nq, NULL);
        double *dm = buffer(n, NULL);
        size_t j, i, bad = 0;
        for (j = 0; j < count; j++) {
            for (i = 0; i < n; i++)
                X[i * count + j] = x[i] * (1.0 + 0.125 * (double)j) + 0.0625 * (double)j;
            for (i = 0; i < np; i++)
                P[i * count + j] = p[i];
            for (i = 0; i < nq; i++)
                U[i * count + j] = 0.5 * (double)j;
        }
        stage("the block right-hand side (rhs_block)");
        d->rhs_block(d, n, count, 0.0, X, P, U, D);
        guarded(D, n * count, "the block right-hand side (rhs_block)", "dX");
        for (j = 0; j < count && !bad; j++) {
            for (i = 0; i < n; i++)
                xm[i] = X[i * count + j];
            for (i = 0; i < np; i++)
                pm[i] = P[i * count + j];
            for (i = 0; i < nq; i++)
                um[i] = U[i * count + j];
            stage("the right-hand side (rhs)");
            d->rhs(d, n, 0.0, xm, pm, um, dm);
            i = disagreement(D + j, count, dm, n);
            if (i < n) {
                printf("problem: the block right-hand side (rhs_block) gives %.17g for "
                       "state %lu of member %lu where the right-hand side (rhs) gives "
                       "%.17g: they must agree to the last bit (rhs_block reads state i "
                       "of member j at X[i * count + j])\n",
                       D[i * count + j], (unsigned long)(i + 1), (unsigned long)(j + 1), dm[i]);
                problems++;
                bad = 1;
            }
        }
        free(X);
        free(P);
        free(U);
        free(D);
        free(xm);
        free(pm);
        free(um);
        free(dm);
    }
    if (d->map_const_block != NULL && d->constants != NULL && d->n_const > 0 &&
        d->map != NULL) {
        /* three members with states and parameters of their own, one step
         * given their constants, against map member by member: the same
         * bits (any NaN equal to any NaN) */
        const size_t count = 3, nc = d->n_const;
        size_t w = d->block_work != NULL ? d->block_work(n, count) : 0, j, i, bad = 0;
        double *X = buffer(n * count, NULL), *P = buffer(np * count, NULL);
        double *U = buffer(nq * count, NULL), *C = buffer(nc * count, NULL);
        double *W = buffer(w, NULL), *xm = buffer(n, NULL);
        for (j = 0; j < count; j++) {
            for (i = 0; i < n; i++)
                X[j * n + i] = x[i] * (1.0 + 0.125 * (double)j) + 0.0625 * (double)j;
            for (i = 0; i < np; i++)
                P[j * np + i] = p[i] * (1.0 + 0.0625 * (double)j);
            for (i = 0; i < nq; i++)
                U[j * nq + i] = 0.5 * (double)j;
            stage("the members' constants (constants)");
            d->constants(d, P + j * np, C + j * nc);
        }
        guarded(C, nc * count, "the members' constants (constants)", "c");
        stage("the step map given the constants (map_const_block)");
        d->map_const_block(d, n, count, 0.0, d->dt, X, P, C, U, W);
        guarded(X, n * count, "the step map given the constants (map_const_block)", "X");
        for (j = 0; j < count && !bad; j++) {
            for (i = 0; i < n; i++)
                xm[i] = x[i] * (1.0 + 0.125 * (double)j) + 0.0625 * (double)j;
            stage("the step map (map)");
            d->map(d, n, 0.0, d->dt, xm, P + j * np, U + j * nq);
            i = disagreement(X + j * n, 1, xm, n);
            if (i < n) {
                printf("problem: the step map given the constants (map_const_block) "
                       "gives %.17g for state %lu of member %lu where the step map (map) "
                       "gives %.17g: they must agree to the last bit\n",
                       X[j * n + i], (unsigned long)(i + 1), (unsigned long)(j + 1), xm[i]);
                problems++;
                bad = 1;
            }
        }
        free(X);
        free(P);
        free(U);
        free(C);
        free(W);
        free(xm);
    }
    if (d->jump != NULL && ne > 0) {
        stage("the event map (jump)");
        d->jump(d, n, 0.0, x, p, ev);
        guarded(x, n, "the event map (jump)", "x");
    }
    printf("ok\n");
    return problems ? 2 : 0;
}
