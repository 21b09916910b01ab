/* gr4j_soa.c - the GR4J daily map over an ensemble in structure-of-arrays
 * layout, one core: the baseline bench_gr4j_soa.m holds sluice's GR4J
 * against. Every variable is an array over members; each member's
 * unit-hydrograph ordinates are computed once for the run; the two queues
 * are ring buffers of slot-major arrays (slot k of every member next to
 * each other), so a day moves no water, it moves the ring's head. The
 * equations are evaluated with the operations, in the order, of
 * src/models/gr4j.c (compiled without contraction into fused multiply-adds,
 * like that file), so the final states must equal sluice's bit for bit.
 *
 * Usage: gr4j_soa IN OUT REPS
 *   IN   doubles: N, days, P (4 x N), X0 (63 x N), rain (days), PET (days)
 *   OUT  doubles: the states after `days` days (63 x N, sluice's layout),
 *        then the best time of REPS runs in seconds (a run: the ordinates,
 *        then the days). */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>

#define NH1 20
#define NH2 40
#define NS 63

static double now(void)
{
    struct timespec ts;
    clock_gettime(CLOCK_MONOTONIC, &ts);
    return (double)ts.tv_sec + 1e-9 * (double)ts.tv_nsec;
}

static double pos(double x)
{
    return x < 0.0 ? 0.0 : x;
}

static double pow25(double u)
{
    return u * u * sqrt(u);
}

/* the S-curve differences at whole days of one member, zero-padded to
 * NH1 / NH2 slots (see ordinates() in src/models/gr4j.c) */
static void ordinates(double x4, const double *k25, double *o1, double *o2)
{
    const double c = x4 > 0.0 ? 1.0 / (x4 * x4 * sqrt(x4)) : x4;
    double sh[NH2 + 1], v;
    size_t k, m, a, b;
    m = !(x4 < NH1) ? NH1 - 1 : x4 > 0.0 ? (size_t)ceil(x4) - 1 : 0;
    sh[0] = 0.0;
    for (k = 1; k <= m; k++) {
        v = k25[k] * c;
        sh[k] = v > 1.0 ? 1.0 : v;
    }
    sh[m + 1] = 1.0;
    for (k = 0; k < NH1; k++)
        o1[k] = k <= m ? sh[k + 1] - sh[k] : 0.0;
    a = !(x4 < NH2 - 1) ? NH2 - 1 : x4 > 0.0 ? (size_t)x4 : 0;
    b = !(x4 < 0.5 * NH2) ? NH2 - 1 : x4 > 0.0 ? (size_t)ceil(2.0 * x4) - 1 : 0;
    for (k = 1; k <= a; k++) {
        v = k25[k] * c;
        sh[k] = 0.5 * (v > 1.0 ? 1.0 : v);
    }
    for (; k <= b; k++)
        sh[k] = 1.0 - 0.5 * pow25(2.0 - (double)k / x4);
    sh[b + 1] = 1.0;
    for (k = 0; k < NH2; k++)
        o2[k] = k <= b ? sh[k + 1] - sh[k] : 0.0;
}

typedef struct {
    size_t N;
    size_t h1, h2;     /* the rings' heads after a run */
    double *s, *r, *q, *x1, *x2, *x3, *x4, *pr;
    double *o1, *o2;   /* slot-major: o1[k * N + j] */
    double *u1, *u2;   /* ring buffers, slot-major */
} soa;

static void run(soa *m, const double *P, const double *X0, const double *rain,
                const double *pet, size_t days, const double *k25)
{
    const size_t N = m->N;
    size_t j, k, d, h1 = 0, h2 = 0, n1 = 0, n2 = 0;
    double o1[NH1], o2[NH2];
    for (j = 0; j < N; j++) {
        m->x1[j] = P[4 * j];
        m->x2[j] = P[4 * j + 1];
        m->x3[j] = P[4 * j + 2];
        m->x4[j] = P[4 * j + 3];
        m->s[j] = X0[NS * j];
        m->r[j] = X0[NS * j + 1];
        m->q[j] = X0[NS * j + 62];
        ordinates(m->x4[j], k25, o1, o2);
        for (k = 0; k < NH1; k++) {
            m->o1[k * N + j] = o1[k];
            m->u1[k * N + j] = X0[NS * j + 2 + k];
            if (o1[k] != 0.0 && k + 1 > n1)
                n1 = k + 1;
        }
        for (k = 0; k < NH2; k++) {
            m->o2[k * N + j] = o2[k];
            m->u2[k * N + j] = X0[NS * j + 22 + k];
            if (o2[k] != 0.0 && k + 1 > n2)
                n2 = k + 1;
        }
    }
    for (d = 0; d < days; d++) {
        const double p = rain[d], e = pet[d];
        double *rel1, *rel2;
        for (j = 0; j < N; j++) {
            const double x1 = m->x1[j], dd = p - e;
            double pn = pos(dd), en = dd < 0.0 ? -dd : 0.0, th, tp, te, sr, ps,
                   es, s = m->s[j], q, q2, perc;
            th = tanh((pn + en) / x1);
            tp = en > 0.0 ? 0.0 : th;
            te = pn > 0.0 ? 0.0 : th;
            sr = s / x1;
            ps = x1 * (1.0 - sr * sr) * tp / (1.0 + sr * tp);
            es = s * (2.0 - sr) * te / (1.0 + (1.0 - sr) * te);
            s = s + ps - es;
            q = (4.0 / 9.0) * (s / x1);
            q2 = q * q;
            perc = s * (1.0 - 1.0 / sqrt(sqrt(1.0 + q2 * q2)));
            m->s[j] = s - perc;
            m->pr[j] = perc + pn - ps;
        }
        /* the queues: the head moves on, the slot that falls off the end
         * is emptied, the day's water spreads over the leading slots */
        memset(m->u1 + h1 * N, 0, N * sizeof(double));
        memset(m->u2 + h2 * N, 0, N * sizeof(double));
        h1 = (h1 + 1) % NH1;
        h2 = (h2 + 1) % NH2;
        for (k = 0; k < n1; k++) {
            double *u = m->u1 + ((h1 + k) % NH1) * N;
            const double *o = m->o1 + k * N;
            for (j = 0; j < N; j++)
                u[j] = u[j] + o[j] * (0.9 * m->pr[j]);
        }
        for (k = 0; k < n2; k++) {
            double *u = m->u2 + ((h2 + k) % NH2) * N;
            const double *o = m->o2 + k * N;
            for (j = 0; j < N; j++)
                u[j] = u[j] + o[j] * (0.1 * m->pr[j]);
        }
        rel1 = m->u1 + h1 * N;
        rel2 = m->u2 + h2 * N;
        for (j = 0; j < N; j++) {
            const double x3 = m->x3[j];
            double r = m->r[j], rr = r / x3, f, rr2, qr;
            f = m->x2[j] * (rr * rr * rr * sqrt(rr));
            r = pos(r + rel1[j] + f);
            rr = r / x3;
            rr2 = rr * rr;
            qr = r * (1.0 - 1.0 / sqrt(sqrt(1.0 + rr2 * rr2)));
            m->r[j] = r - qr;
            m->q[j] = qr + pos(rel2[j] + f);
        }
    }
    m->h1 = h1;
    m->h2 = h2;
}

int main(int argc, char **argv)
{
    FILE *fi, *fo;
    double hdr[2], k25[NH2 + 1], best = HUGE_VAL, *buf, *P, *X0, *rain, *pet,
           *X;
    size_t N, days, len, j, k, rep, reps, h1, h2;
    soa m;
    if (argc != 4) {
        fprintf(stderr, "usage: gr4j_soa IN OUT REPS\n");
        return 2;
    }
    reps = (size_t)atoi(argv[3]);
    fi = fopen(argv[1], "rb");
    if (fi == NULL || fread(hdr, sizeof(double), 2, fi) != 2)
        return 1;
    N = (size_t)hdr[0];
    days = (size_t)hdr[1];
    len = 4 * N + NS * N + 2 * days;
    buf = malloc(len * sizeof(double));
    X = malloc(NS * N * sizeof(double));
    m.N = N;
    m.h1 = m.h2 = 0;
    m.s = malloc(8 * N * sizeof(double));
    m.o1 = malloc(2 * (NH1 + NH2) * N * sizeof(double));
    if (buf == NULL || X == NULL || m.s == NULL || m.o1 == NULL ||
        fread(buf, sizeof(double), len, fi) != len)
        return 1;
    fclose(fi);
    P = buf;
    X0 = P + 4 * N;
    rain = X0 + NS * N;
    pet = rain + days;
    m.r = m.s + N; m.q = m.r + N; m.x1 = m.q + N; m.x2 = m.x1 + N;
    m.x3 = m.x2 + N; m.x4 = m.x3 + N; m.pr = m.x4 + N;
    m.o2 = m.o1 + NH1 * N; m.u1 = m.o2 + NH2 * N; m.u2 = m.u1 + NH1 * N;
    for (k = 0; k <= NH2; k++)
        k25[k] = pow((double)k, 2.5);
    for (rep = 0; rep < reps; rep++) {
        double t0 = now(), t;
        run(&m, P, X0, rain, pet, days, k25);
        t = now() - t0;
        if (t < best)
            best = t;
    }
    h1 = m.h1;
    h2 = m.h2;
    for (j = 0; j < N; j++) {
        double *x = X + NS * j;
        x[0] = m.s[j];
        x[1] = m.r[j];
        for (k = 0; k < NH1; k++)
            x[2 + k] = m.u1[((h1 + k) % NH1) * N + j];
        for (k = 0; k < NH2; k++)
            x[22 + k] = m.u2[((h2 + k) % NH2) * N + j];
        x[62] = m.q[j];
    }
    fo = fopen(argv[2], "wb");
    if (fo == NULL || fwrite(X, sizeof(double), NS * N, fo) != NS * N ||
        fwrite(&best, sizeof(double), 1, fo) != 1)
        return 1;
    fclose(fo);
    free(buf);
    free(X);
    free(m.s);
    free(m.o1);
    return 0;
}
