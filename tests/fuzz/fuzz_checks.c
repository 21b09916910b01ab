/* fuzz_checks.c - libFuzzer harness of the argument checks at the core's
 * entry points: sl_loglik_check, sl_prior_check, sl_weights_normalize,
 * sl_resample, sl_temper_check, sl_localization_check, the parameter
 * moves' checks and sl_pf_check, each fed arguments decoded from the
 * input's bytes. Sizes come from the bytes and every array is allocated
 * at exactly its size, so the pointers are valid and never NULL where the
 * interface asks for an array; numbers come from the bytes as raw doubles
 * or as one of a list of edge values (0, -0, +-1, NaN, +-Inf, the smallest
 * normal and subnormal, the largest double, ...).
 *
 * Input: the first byte picks the entry point (its value modulo 8), the
 * rest is read as the arguments (past the end every byte reads as 0).
 * Besides memory errors and undefined behaviour, the harness aborts when
 * arguments that passed a check give what the interface rules out: a
 * NaN log-likelihood, an ancestor outside the ensemble or of weight zero,
 * weights that do not sum to one, a prior draw outside its support, a
 * configuration the run's workspace cannot be measured for. */
#include <float.h>
#include <math.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "sluice/localize.h"
#include "sluice/loglik.h"
#include "sluice/param_move.h"
#include "sluice/pf.h"
#include "sluice/prior.h"
#include "sluice/resample.h"
#include "sluice/temper.h"
#include "sluice/weights.h"

#define REQUIRE(cond)                                                         \
    do {                                                                      \
        if (!(cond)) {                                                        \
            fprintf(stderr, "fuzz_checks: %s:%d: broken: %s\n", __FILE__,     \
                    __LINE__, #cond);                                         \
            abort();                                                          \
        }                                                                     \
    } while (0)

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size);

typedef struct {
    const uint8_t *p;
    size_t left;
} bytes;

static unsigned u8(bytes *b)
{
    if (b->left == 0)
        return 0;
    b->left--;
    return *b->p++;
}

static uint64_t u64(bytes *b)
{
    uint64_t v = 0;
    int k;
    for (k = 0; k < 8; k++)
        v |= (uint64_t)u8(b) << (8 * k);
    return v;
}

/* A double: one of the edge values, a small integer, or raw bits. */
static double dbl(bytes *b)
{
    static const double edge[] = {0.0, -0.0, 1.0, -1.0, 0.5, 2.0, 1e-300,
                                  DBL_MIN, 4.9406564584124654e-324, DBL_MAX,
                                  -DBL_MAX, 1e308, 1e-9, 0.999999999999,
                                  1.0000000000000002, 90.0, -90.0, 1e6};
    unsigned tag = u8(b);
    const size_t nedge = sizeof edge / sizeof edge[0];
    if (tag < nedge)
        return edge[tag];
    if (tag == 200)
        return (double)NAN;
    if (tag == 201)
        return HUGE_VAL;
    if (tag == 202)
        return -HUGE_VAL;
    if (tag < 128)
        return (double)tag - 64.0;
    {
        uint64_t v = u64(b);
        double d;
        memcpy(&d, &v, sizeof d);
        return d;
    }
}

/* A size: small mostly, at times one of the edges around a limit. */
static size_t sz(bytes *b, size_t small)
{
    unsigned t = u8(b);
    if (t == 255)
        return (size_t)u64(b);
    if (t == 254)
        return SL_RESAMPLE_MAX + (size_t)u8(b) - 1;
    return t % (small + 1);
}

static double *dvec(bytes *b, size_t n)
{
    double *v = malloc(n ? n * sizeof(double) : 1);
    size_t i;
    REQUIRE(v != NULL);
    for (i = 0; i < n; i++)
        v[i] = dbl(b);
    return v;
}

static int *ivec(bytes *b, size_t n, int lo, int span)
{
    int *v = malloc(n ? n * sizeof(int) : 1);
    size_t i;
    REQUIRE(v != NULL);
    for (i = 0; i < n; i++)
        v[i] = lo + (int)(u8(b) % (unsigned)span);
    return v;
}

/* ---- the entry points ---------------------------------------------------- */

static void fuzz_loglik(bytes *b)
{
    size_t m = sz(b, 12), N = 1 + u8(b) % 4, i, j;
    double *y, *sigma, *aux, *Yhat, ll[4];
    int *family;
    sl_error err;
    if (m > 64)
        m = 64;
    y = dvec(b, m);
    sigma = dvec(b, m);
    aux = dvec(b, m);
    family = ivec(b, m, -1, SL_FAMILY_COUNT + 2);
    Yhat = dvec(b, m * N);
    if (sl_loglik_check(m, y, sigma, aux, family, &err) == SL_OK) {
        size_t skipped = 0, missing = 0;
        REQUIRE(sl_loglik_ensemble(m, N, y, Yhat, m, sigma, aux, family, 0, ll,
                                   &skipped, &err) == SL_OK);
        for (i = 0; i < m; i++)
            missing += isnan(y[i]) != 0;
        REQUIRE(skipped == missing);
        for (j = 0; j < N; j++)
            REQUIRE(!isnan(ll[j]));
    } else {
        REQUIRE(err.reason[0] != '\0');
    }
    free(y);
    free(sigma);
    free(aux);
    free(family);
    free(Yhat);
}

static void fuzz_prior(bytes *b)
{
    size_t p = sz(b, 5), K = 1 + u8(b) % 3, N = 1 + u8(b) % 4, k, j;
    sl_prior_entry *e;
    double *X, *L, *P;
    sl_error err;
    int ok = 1;
    uint64_t seed = u64(b);
    if (p > 16)
        p = 16;
    e = malloc((p ? p : 1) * sizeof *e);
    REQUIRE(e != NULL);
    for (k = 0; k < p; k++) {
        e[k].dist = (int)(u8(b) % (SL_DIST_COUNT + 2)) - 1;
        e[k].a = dbl(b);
        e[k].b = dbl(b);
        e[k].lo = dbl(b);
        e[k].hi = dbl(b);
        if (sl_prior_check(&e[k], k + 1, &err) != SL_OK) {
            REQUIRE(err.reason[0] != '\0');
            ok = 0;
        }
    }
    X = dvec(b, p * K);
    L = malloc((p * K ? p * K : 1) * sizeof(double));
    P = malloc((p * N ? p * N : 1) * sizeof(double));
    REQUIRE(L != NULL && P != NULL);
    REQUIRE((sl_prior_logpdf_points(p, e, K, X, L, &err) == SL_OK) == ok);
    if (ok) {
        for (k = 0; k < p * K; k++) {
            const sl_prior_entry *q = &e[k % p];
            if (isnan(L[k]) || L[k] == HUGE_VAL)
                fprintf(stderr, "dist %d a %.17g b %.17g lo %.17g hi %.17g x %.17g: %g\n",
                        q->dist, q->a, q->b, q->lo, q->hi, X[k], L[k]);
            REQUIRE(!isnan(L[k]) && L[k] < HUGE_VAL);
        }
        /* numbers too extreme for double precision fail the draw itself */
        if (sl_prior_draw(p, e, N, seed, 0, P, &err) != SL_OK)
            REQUIRE(strcmp(err.reason, "baddraw") == 0);
        else
        for (j = 0; j < N; j++)
            for (k = 0; k < p; k++) {
                double lo, hi, x = P[k + j * p];
                sl_prior_support(&e[k], &lo, &hi);
                REQUIRE(!isnan(x) && x >= lo && x <= hi);
            }
    }
    free(e);
    free(X);
    free(L);
    free(P);
}

static void fuzz_weights(bytes *b)
{
    size_t N = sz(b, 16), j;
    double *logw, *w, sum = 0;
    sl_weight_summary s;
    sl_error err;
    if (N > 256)
        N = 256;
    logw = dvec(b, N);
    w = malloc((N ? N : 1) * sizeof(double));
    REQUIRE(w != NULL);
    if (sl_weights_normalize(N, logw, w, &s, &err) == SL_OK) {
        REQUIRE(N > 0);
        for (j = 0; j < N; j++) {
            REQUIRE(w[j] >= 0 && w[j] <= 1);
            sum += w[j];
        }
        REQUIRE(fabs(sum - 1) < 1e-9);
        REQUIRE(s.ess >= 1 - 1e-9 && s.ess <= (double)N * (1 + 1e-9));
        REQUIRE(s.n_zero < N);
    } else {
        REQUIRE(err.reason[0] != '\0');
    }
    free(logw);
    free(w);
}

static void fuzz_resample(bytes *b)
{
    const sl_resampler *scheme = sl_resampler_at(u8(b) % 4);
    size_t N = sz(b, 16), M = sz(b, 16), j, nw;
    uint64_t seed = u64(b);
    uint32_t cycle = (uint32_t)u64(b);
    double *w, *work;
    uint32_t *anc;
    sl_error err;
    REQUIRE(scheme != NULL);
    /* sizes past the limit are refused before any array is touched; the
     * arrays themselves are kept small */
    nw = N > 256 ? 1 : N;
    if (M > 256 && M <= SL_RESAMPLE_MAX)
        M = 256;
    if (N > 256 && N <= SL_RESAMPLE_MAX)
        N = nw = 256;
    w = dvec(b, nw);
    if (N > SL_RESAMPLE_MAX || M > SL_RESAMPLE_MAX || N == 0 || M == 0) {
        anc = malloc(sizeof *anc);
        work = malloc(sizeof *work);
        REQUIRE(sl_resample(scheme, N, w, M, seed, cycle, work, anc, &err) != SL_OK);
        REQUIRE(strcmp(err.reason, "badsize") == 0);
    } else {
        work = malloc((sl_resample_workspace(scheme, N, M) + 1) * sizeof(double));
        anc = malloc(M * sizeof *anc);
        REQUIRE(work != NULL && anc != NULL);
        if (sl_resample(scheme, N, w, M, seed, cycle, work, anc, &err) == SL_OK) {
            for (j = 0; j < M; j++)
                REQUIRE(anc[j] < N && w[anc[j]] > 0);
        } else {
            REQUIRE(err.reason[0] != '\0');
        }
    }
    free(w);
    free(work);
    free(anc);
}

static void fuzz_temper(bytes *b)
{
    sl_temper_opts o;
    sl_error err;
    o.ess = dbl(b);
    o.max_steps = sz(b, 20);
    if (sl_temper_check(&o, &err) == SL_OK)
        REQUIRE(o.ess >= 0 && o.ess <= 1 &&
                (o.ess == 0 || (o.max_steps >= 1 && o.max_steps <= SL_TEMPER_MAX_STEPS)));
    else
        REQUIRE(err.reason[0] != '\0');
}

static void fuzz_localization(bytes *b)
{
    sl_localization L;
    size_t n = sz(b, 6), m = sz(b, 6), dim, i, k;
    double *sp, *op, *oc;
    sl_error err;
    if (n > 32)
        n = 32;
    if (m > 32)
        m = 32;
    L.geometry = (int)(u8(b) % (SL_GEOM_COUNT + 2)) - 1;
    L.period_or_radius = dbl(b);
    dim = u8(b) % 4;
    L.dim = dim;
    L.param_factor = dbl(b);
    /* the positions hold n x dim and m x dim numbers */
    sp = dvec(b, n * dim);
    op = dvec(b, m * dim);
    oc = dvec(b, m);
    L.state_pos = sp;
    L.obs_pos = op;
    L.obs_c = oc;
    if (sl_localization_check(&L, n, m, &err) == SL_OK) {
        double a[2], c[2];
        for (i = 0; i < n; i++) {
            if (isnan(sp[i]))
                continue;
            for (k = 0; k < m; k++) {
                double d, g;
                size_t q;
                for (q = 0; q < dim; q++) {
                    a[q] = sp[i + q * n];
                    c[q] = op[k + q * m];
                }
                d = sl_distance(L.geometry, L.period_or_radius, a, c);
                if (isnan(d) || d < 0)
                    fprintf(stderr, "geometry %d period %.17g a %.17g %.17g b %.17g %.17g: %g\n",
                            L.geometry, L.period_or_radius, a[0], dim > 1 ? a[1] : 0.0,
                            c[0], dim > 1 ? c[1] : 0.0, d);
                REQUIRE(!isnan(d) && d >= 0);
                g = sl_gaspari_cohn(d, oc[k]);
                REQUIRE(g >= 0 && g <= 1);
            }
        }
    } else {
        REQUIRE(err.reason[0] != '\0');
    }
    free(sp);
    free(op);
    free(oc);
}

static void fuzz_move(bytes *b)
{
    const sl_param_mover *mv = sl_param_mover_at(u8(b) % 5);
    size_t p = sz(b, 6);
    sl_param_move_opts o;
    double *step;
    sl_error err;
    REQUIRE(mv != NULL);
    if (p > 32)
        p = 32;
    step = dvec(b, p);
    memset(&o, 0, sizeof o);
    o.step = step;
    o.lw_delta = dbl(b);
    o.kernel_scale = dbl(b);
    o.min_ess = dbl(b);
    o.rm_scale = dbl(b);
    o.rm_diversity = dbl(b);
    o.rm_sweeps = sz(b, 4);
    o.rm_paths = dbl(b);
    if (mv->check(&o, p, &err) != SL_OK)
        REQUIRE(err.reason[0] != '\0');
    free(step);
}

/* The model of a configuration: never stepped by the check. */
static sl_status no_step(const sl_model *model, double t, double t_end, size_t first,
                         size_t count, double *X, const double *P, const double *U,
                         uint64_t seed, uint32_t step, double *work, sl_error *err)
{
    (void)model, (void)t, (void)t_end, (void)first, (void)count, (void)X, (void)P;
    (void)U, (void)seed, (void)step, (void)work;
    return sl_fail(err, SL_EMODEL, "model", "not stepped in this harness");
}

static sl_status no_obs(void *ctx, double t, size_t N, const double *X,
                        const double *P, double *Y, sl_error *err)
{
    (void)ctx, (void)t, (void)N, (void)X, (void)P, (void)Y;
    return sl_fail(err, SL_EMODEL, "operator", "not called in this harness");
}

static void fuzz_pf(bytes *b)
{
    sl_model md;
    sl_pf_config c;
    sl_enkf_config ek;
    sl_localization loc;
    sl_error err;
    size_t T, m, k, v, nH, q, nt;
    size_t *obs_first, *var;
    double *times, *y, *sigma, *aux, *H, *ftime, *fval, *fsd, *fphi, *snoise,
        *probs, *mstep, *spos, *opos, *oc;
    int *family, *fnoise;
    sl_transform *pt;
    sl_prior_entry *prior;
    unsigned flags;

    memset(&md, 0, sizeof md);
    md.name = "fuzz";
    md.n_state = sz(b, 4);
    md.n_param = sz(b, 3);
    md.n_forcing = u8(b) % 3;
    md.dt = dbl(b);
    md.discrete = u8(b) & 1;
    md.work = sz(b, 8);
    md.step = no_step;
    if (md.n_state > 16)
        md.n_state = 16;
    if (md.n_param > 16)
        md.n_param = 16;
    v = md.n_state + md.n_param;

    memset(&c, 0, sizeof c);
    c.model = &md;
    c.N = sz(b, 64);
    c.t0 = dbl(b);
    T = 1 + u8(b) % 6;
    c.T = T;
    times = dvec(b, T);
    obs_first = malloc((T + 1) * sizeof *obs_first);
    REQUIRE(obs_first != NULL);
    for (k = 0; k <= T; k++)
        obs_first[k] = u8(b) % 12;
    m = obs_first[T];
    c.times = times;
    c.obs_first = obs_first;
    y = dvec(b, m);
    sigma = dvec(b, m);
    aux = dvec(b, m);
    family = ivec(b, m, -1, SL_FAMILY_COUNT + 2);
    var = malloc((m ? m : 1) * sizeof *var);
    REQUIRE(var != NULL);
    for (k = 0; k < m; k++)
        var[k] = u8(b) % (v + 4);
    c.y = y;
    c.sigma = sigma;
    c.aux = aux;
    c.family = family;
    c.var = var;
    c.n_lin = u8(b) % 3;
    nH = c.n_lin * v;
    H = dvec(b, nH);
    c.H = H;
    c.n_fun = u8(b) % 3;
    flags = u8(b);
    c.obs_fn = (flags & 1) ? no_obs : NULL;
    c.derived_summary = (flags >> 1) & 1;

    q = u8(b) % 3;
    nt = u8(b) % 5;
    ftime = dvec(b, nt);
    fval = dvec(b, nt * q);
    fnoise = ivec(b, q, -1, 5);
    fsd = dvec(b, q);
    fphi = dvec(b, q);
    c.forcing.q = q;
    c.forcing.nt = nt;
    c.forcing.time = ftime;
    c.forcing.value = fval;
    c.forcing.hold = (flags >> 2) & 1;
    c.forcing.noise = (flags & 8) ? fnoise : NULL;
    c.forcing.sd = fsd;
    c.forcing.phi = fphi;

    snoise = dvec(b, md.n_state);
    c.state_noise = (flags & 16) ? snoise : NULL;
    pt = malloc((md.n_param ? md.n_param : 1) * sizeof *pt);
    REQUIRE(pt != NULL);
    for (k = 0; k < md.n_param; k++) {
        double lo = dbl(b), hi = dbl(b);
        pt[k] = sl_transform_for_bounds(lo, hi);
    }
    c.ptrans = (flags & 32) ? pt : NULL;
    c.param_move = sl_param_mover_at(u8(b) % 6); /* NULL past the table */
    mstep = dvec(b, md.n_param);
    c.move.step = mstep;
    c.move.lw_delta = dbl(b);
    c.move.kernel_scale = dbl(b);
    c.move.min_ess = dbl(b);
    c.move.rm_scale = dbl(b);
    c.move.rm_diversity = dbl(b);
    c.move.rm_sweeps = sz(b, 3);
    c.move.rm_paths = dbl(b);
    prior = malloc((md.n_param ? md.n_param : 1) * sizeof *prior);
    REQUIRE(prior != NULL);
    for (k = 0; k < md.n_param; k++) {
        prior[k].dist = (int)(u8(b) % (SL_DIST_COUNT + 1)) - 1;
        prior[k].a = dbl(b);
        prior[k].b = dbl(b);
        prior[k].lo = dbl(b);
        prior[k].hi = dbl(b);
    }
    c.prior = (flags & 64) ? prior : NULL;
    c.inner = sz(b, 8);
    c.wenkf = (flags >> 7) & 1;
    flags = u8(b);
    c.resampler = sl_resampler_at(u8(b) % 5); /* NULL past the table */
    c.threshold = dbl(b);
    c.temper.ess = dbl(b);
    c.temper.max_steps = sz(b, 8);
    c.seed = u64(b);
    c.threads = (int)(u8(b) % 8) - 1;
    if (flags & 1)
        c.threads = (int)(u64(b) & 0x7fffffff);
    c.nq = u8(b) % 4;
    probs = dvec(b, c.nq);
    c.probs = probs;
    c.keep_history = (flags >> 1) & 1;
    c.no_summary = (flags >> 2) & 1;

    memset(&ek, 0, sizeof ek);
    ek.method = (int)(u8(b) % (SL_ENKF_COUNT + 1)) - 1;
    ek.inflation = dbl(b);
    ek.rtpp = dbl(b);
    ek.rtps = dbl(b);
    ek.threads = 1;
    c.enkf = (flags & 8) ? &ek : NULL;
    memset(&loc, 0, sizeof loc);
    loc.geometry = SL_GEOM_LINE;
    loc.dim = 1;
    loc.param_factor = 1;
    spos = dvec(b, v);
    opos = dvec(b, m);
    oc = dvec(b, m);
    loc.state_pos = spos;
    loc.obs_pos = opos;
    loc.obs_c = oc;
    c.loc = (flags & 16) ? &loc : NULL;
    c.adaptive_inflation = (flags >> 5) & 1;
    c.inflation_max = dbl(b);
    c.lag = sz(b, 8);

    if (sl_pf_check(&c, &err) == SL_OK) {
        size_t ws = sl_pf_workspace(&c);
        REQUIRE(ws > 0);
        (void)sl_pf_paths_random(&c);
        REQUIRE(sl_pf_auto_move(&c) != NULL);
    } else {
        REQUIRE(err.status != SL_OK && err.reason[0] != '\0');
    }
    free(times);
    free(obs_first);
    free(y);
    free(sigma);
    free(aux);
    free(family);
    free(var);
    free(H);
    free(ftime);
    free(fval);
    free(fnoise);
    free(fsd);
    free(fphi);
    free(snoise);
    free(pt);
    free(mstep);
    free(prior);
    free(probs);
    free(spos);
    free(opos);
    free(oc);
}

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    bytes b;
    if (size < 1)
        return 0;
    b.p = data + 1;
    b.left = size - 1;
    switch (data[0] % 8) {
    case 0: fuzz_loglik(&b); break;
    case 1: fuzz_prior(&b); break;
    case 2: fuzz_weights(&b); break;
    case 3: fuzz_resample(&b); break;
    case 4: fuzz_temper(&b); break;
    case 5: fuzz_localization(&b); break;
    case 6: fuzz_move(&b); break;
    default: fuzz_pf(&b); break;
    }
    return 0;
}
