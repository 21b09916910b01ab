/* test_untouched.c - an entry point that refuses its arguments (a status
 * other than SL_OK from an argument check) leaves every output buffer as it
 * was: each output is filled with a byte pattern before the call and
 * compared byte for byte after it. Covers sl_pf_run with bad
 * configurations, sl_enkf_analysis with bad sizes and a bad configuration,
 * sl_resample with bad weights and sizes, and the observation-file reader
 * (sl_obsfile_measure / sl_obsfile_parse_with) with bad files. */
#include "check.h"
#include "sluice/enkf.h"
#include "sluice/model.h"
#include "sluice/obsfile.h"
#include "sluice/pf.h"
#include "sluice/resample.h"

#include <stdint.h>
#include <stdlib.h>
#include <string.h>

/* An output under test: the buffer the call gets and a copy of what it held
 * before the call. */
typedef struct {
    const char *name;
    void *buf;
    unsigned char *before;
    size_t bytes;
} out_buf;

enum { MAX_OUTS = 24 };
typedef struct {
    out_buf o[MAX_OUTS];
    size_t count;
} out_set;

/* Take `bytes` bytes (at least one) filled with a pattern that differs
 * from byte to byte and from output to output, and remember them. */
static void *take(out_set *s, const char *name, size_t bytes)
{
    out_buf *b = &s->o[s->count];
    size_t i;
    if (s->count == MAX_OUTS) {
        printf("FAIL test_untouched: more than %d outputs\n", MAX_OUTS);
        exit(1);
    }
    b->name = name;
    b->bytes = bytes ? bytes : 1;
    b->buf = ck_malloc(b->bytes);
    b->before = ck_malloc(b->bytes);
    for (i = 0; i < b->bytes; i++)
        ((unsigned char *)b->buf)[i] = (unsigned char)(0xA5u ^ (i * 31u) ^ (s->count * 7u));
    memcpy(b->before, b->buf, b->bytes);
    s->count++;
    return b->buf;
}

/* Every output bit-unchanged since take; each is then put back as it was,
 * so one finding does not carry over to the next case. */
static void expect_untouched(const out_set *s, const char *what)
{
    size_t k;
    for (k = 0; k < s->count; k++) {
        CHECK(memcmp(s->o[k].buf, s->o[k].before, s->o[k].bytes) == 0,
              "%s: output %s changed by a refused call", what, s->o[k].name);
        memcpy(s->o[k].buf, s->o[k].before, s->o[k].bytes);
    }
}

static void release(out_set *s)
{
    size_t k;
    for (k = 0; k < s->count; k++) {
        ck_free(s->o[k].buf);
        ck_free(s->o[k].before);
    }
    s->count = 0;
}

static void expect_refused(sl_status st, const sl_error *err, const char *reason,
                           const char *what)
{
    CHECK(st != SL_OK && strcmp(err->reason, reason) == 0,
          "%s: expected reason %s, got %s/%s (%s)", what, reason, sl_status_name(st),
          err->reason, err->message);
}

/* ------------------------------------------------------------ sl_pf_run */

static void check_pf(void)
{
    enum { T = 3, N = 50 };
    static const double times[T] = {1.0, 2.0, 3.0};
    static const size_t first[T + 1] = {0, 1, 2, 3};
    static const double y[T] = {1.0, 2.0, 0.5}, sigma[T] = {1.0, 1.0, 1.0}, aux[T] = {0, 0, 0};
    static const int family[T] = {0, 0, 0};
    static const size_t var[T] = {0, 0, 0};
    double A = 0.9, L = 1.0, pr[1] = {1.5};
    sl_linear lin = {1, 0, &A, NULL, NULL, &L};
    sl_model md;
    sl_pf_config base, c;
    sl_pf_output out;
    sl_error err;
    out_set s;
    double *X, *P, *w;
    void *work;
    size_t bytes;
    const size_t n = 1;
    struct {
        const char *what;
        int field;
    } bad[] = {{"threshold 1.5", 0}, {"threads 0", 1}, {"no resampler", 2},
               {"quantile level 1.5", 3}, {"no model", 4}};
    size_t b;

    sl_error_clear(&err);
    CHECK(sl_linear_model(&md, &lin, 1.0, &err) == SL_OK, "linear model: %s", err.message);
    memset(&base, 0, sizeof base);
    base.model = &md;
    base.N = N;
    base.T = T;
    base.times = times;
    base.obs_first = first;
    base.y = y;
    base.sigma = sigma;
    base.aux = aux;
    base.family = family;
    base.var = var;
    base.param_move = &sl_param_move_fixed;
    base.move.lw_delta = 0.98;
    base.move.kernel_scale = 1.0;
    base.move.min_ess = SL_KERNEL_MIN_ESS;
    base.resampler = &sl_resampler_systematic;
    base.threshold = 0.5;
    base.seed = 7;
    base.threads = 1;
    base.keep_history = 1;
    sl_error_clear(&err);
    CHECK(sl_pf_check(&base, &err) == SL_OK, "the base configuration: %s", err.message);
    bytes = sl_pf_workspace(&base);

    memset(&s, 0, sizeof s);
    memset(&out, 0, sizeof out);
    X = take(&s, "X", n * N * sizeof(double));
    P = take(&s, "P", sizeof(double));
    w = take(&s, "w", N * sizeof(double));
    work = take(&s, "work", bytes);
    out.mean = take(&s, "mean", n * T * sizeof(double));
    out.quant = take(&s, "quant", n * T * sizeof(double));
    out.ess = take(&s, "ess", T * sizeof(double));
    out.logz = take(&s, "logz", T * sizeof(double));
    out.resampled = take(&s, "resampled", T * sizeof(double));
    out.degenerate = take(&s, "degenerate", T * sizeof(double));
    out.skipped = take(&s, "skipped", T * sizeof(double));
    out.nonfinite = take(&s, "nonfinite", T * sizeof(double));
    out.temper_steps = take(&s, "temper_steps", T * sizeof(double));
    out.loglik_evals = take(&s, "loglik_evals", T * sizeof(double));
    out.hist_X = take(&s, "hist_X", n * N * T * sizeof(double));
    out.hist_w = take(&s, "hist_w", N * T * sizeof(double));
    out.hist_a = take(&s, "hist_a", N * T * sizeof(double));

    for (b = 0; b < sizeof bad / sizeof bad[0]; b++) {
        sl_status st;
        c = base;
        switch (bad[b].field) {
        case 0: c.threshold = 1.5; break;
        case 1: c.threads = 0; break;
        case 2: c.resampler = NULL; break;
        case 3: c.nq = 1; c.probs = pr; break;
        default: c.model = NULL; break;
        }
        sl_error_clear(&err);
        st = sl_pf_run(&c, X, P, w, work, &out, &err);
        expect_refused(st, &err, "badconfig", bad[b].what);
        expect_untouched(&s, bad[b].what);
    }
    /* and the same buffers do take a run with the good configuration
     * (so the sizes above are the real ones) */
    {
        size_t j;
        for (j = 0; j < N; j++)
            X[j] = 0.01 * (double)j;
        sl_error_clear(&err);
        CHECK(sl_pf_run(&base, X, P, w, work, &out, &err) == SL_OK, "good run: %s",
              err.message);
    }
    release(&s);
}

/* ---------------------------------------------------- sl_enkf_analysis */

static void check_enkf(void)
{
    enum { n = 3, N = 8, m = 2 };
    sl_enkf_config cfg;
    sl_enkf_info *info;
    sl_error err;
    out_set s;
    double HX[m * N], y[m] = {0.5, -0.5}, R[m] = {1.0, 1.0}, *X;
    void *work;
    size_t bytes, k;
    sl_status st;

    memset(&cfg, 0, sizeof cfg);
    cfg.method = SL_ENKF_ETKF;
    cfg.inflation = 1.0;
    cfg.seed = 3;
    cfg.threads = 1;
    for (k = 0; k < m * N; k++)
        HX[k] = 0.1 * (double)k - 0.7;
    bytes = sl_enkf_workspace(&cfg, n, N, m, 0);
    CHECK(bytes > 0, "workspace query");

    memset(&s, 0, sizeof s);
    X = take(&s, "X", n * N * sizeof(double));
    work = take(&s, "work", bytes);
    info = take(&s, "info", sizeof *info);

    sl_error_clear(&err);
    st = sl_enkf_analysis(&cfg, n, 1, X, m, HX, y, R, 0, work, info, &err);
    expect_refused(st, &err, "badsize", "N = 1");
    expect_untouched(&s, "enkf N = 1");
    sl_error_clear(&err);
    st = sl_enkf_analysis(&cfg, n, N, X, 0, HX, y, R, 0, work, info, &err);
    expect_refused(st, &err, "badsize", "m = 0");
    expect_untouched(&s, "enkf m = 0");
    cfg.inflation = 0.5;
    sl_error_clear(&err);
    st = sl_enkf_analysis(&cfg, n, N, X, m, HX, y, R, 0, work, info, &err);
    expect_refused(st, &err, "badconfig", "inflation 0.5");
    expect_untouched(&s, "enkf inflation 0.5");
    cfg.inflation = 1.0;
    cfg.threads = 0;
    sl_error_clear(&err);
    st = sl_enkf_analysis(&cfg, n, N, X, m, HX, y, R, 0, work, info, &err);
    expect_refused(st, &err, "badconfig", "threads 0");
    expect_untouched(&s, "enkf threads 0");
    cfg.threads = 1;
    /* the good call does write X (the buffers are the right ones) */
    for (k = 0; k < n * N; k++)
        X[k] = 0.05 * (double)k;
    sl_error_clear(&err);
    st = sl_enkf_analysis(&cfg, n, N, X, m, HX, y, R, 0, work, info, &err);
    CHECK(st == SL_OK, "good analysis: %s", err.message);
    release(&s);
}

/* --------------------------------------------------------- sl_resample */

static void check_resample(void)
{
    enum { N = 6, M = 6 };
    const sl_resampler *schemes[] = {&sl_resampler_systematic, &sl_resampler_stratified,
                                     &sl_resampler_residual, &sl_resampler_multinomial};
    double w[N] = {0.1, 0.2, 0.3, 0.1, 0.2, 0.1};
    size_t k;
    for (k = 0; k < sizeof schemes / sizeof schemes[0]; k++) {
        out_set s;
        sl_error err;
        double *work;
        uint32_t *anc;
        sl_status st;
        double keep;
        memset(&s, 0, sizeof s);
        work = take(&s, "work", sl_resample_workspace(schemes[k], N, M) * sizeof(double));
        anc = take(&s, "anc", M * sizeof(uint32_t));
        keep = w[2];
        w[2] = NAN;
        sl_error_clear(&err);
        st = sl_resample(schemes[k], N, w, M, 1, 0, work, anc, &err);
        expect_refused(st, &err, "badweight", "a NaN weight");
        expect_untouched(&s, "resample, a NaN weight");
        w[2] = -0.3;
        sl_error_clear(&err);
        st = sl_resample(schemes[k], N, w, M, 1, 0, work, anc, &err);
        expect_refused(st, &err, "badweight", "a negative weight");
        expect_untouched(&s, "resample, a negative weight");
        w[2] = keep;
        {
            const double zero[N] = {0, 0, 0, 0, 0, 0};
            sl_error_clear(&err);
            st = sl_resample(schemes[k], N, zero, M, 1, 0, work, anc, &err);
            expect_refused(st, &err, "zeroweights", "all weights zero");
            expect_untouched(&s, "resample, all weights zero");
        }
        sl_error_clear(&err);
        st = sl_resample(schemes[k], N, w, 0, 1, 0, work, anc, &err);
        expect_refused(st, &err, "badsize", "M = 0");
        expect_untouched(&s, "resample, M = 0");
        sl_error_clear(&err);
        st = sl_resample(schemes[k], N, w, M, 1, 0, work, anc, &err);
        CHECK(st == SL_OK, "%s: good weights: %s", schemes[k]->name, err.message);
        release(&s);
    }
}

/* ------------------------------------------------ the observation file */

static void check_obsfile(void)
{
    static const char *const bad[] = {
        "time,variable,value\n0,x,1\n",                        /* no sigma column */
        "time,variable,value,sigma\n0,x,1,1\n1,x,oops,1\n",    /* a bad number */
        "time,variable,value,sigma\n0,x,1,1\n1,x,2\n",         /* a short row */
        "time,variable,value,sigma\n2,x,1,1\n1,x,2,1\n",       /* out of order (strict) */
        "time,variable,value,sigma\n0,x,1,-1\n",               /* a negative sigma */
        "time,variable,value,sigma\n0,\"x,1,1\n",              /* an open quote */
    };
    /* a good file of the same shape, whose measured sizes serve the parse
     * of each bad one: the parse must refuse it before writing */
    static const char good[] = "time,variable,value,sigma\n0,x,1,1\n1,x,2,1\n";
    sl_obs_size sz, *szp;
    sl_obs_table tab;
    sl_error err;
    out_set s;
    size_t k;
    sl_status st;

    sl_error_clear(&err);
    CHECK(sl_obsfile_measure(good, strlen(good), &sz, &err) == SL_OK, "good file: %s",
          err.message);
    memset(&s, 0, sizeof s);
    memset(&tab, 0, sizeof tab);
    szp = take(&s, "size", sizeof *szp);
    tab.names = take(&s, "names", sz.name_bytes);
    tab.name_at = take(&s, "name_at", sz.cols * sizeof(size_t));
    tab.is_text = take(&s, "is_text", sz.cols * sizeof(int));
    tab.slot = take(&s, "slot", sz.cols * sizeof(size_t));
    tab.num = take(&s, "num", sz.rows * sz.nnum * sizeof(double));
    tab.text = take(&s, "text", sz.text_bytes);
    tab.text_at = take(&s, "text_at", sz.rows * sz.ntext * sizeof(size_t));
    for (k = 0; k < sizeof bad / sizeof bad[0]; k++) {
        char what[64];
        snprintf(what, sizeof what, "bad file %lu", (unsigned long)k + 1);
        sl_error_clear(&err);
        st = sl_obsfile_measure(bad[k], strlen(bad[k]), szp, &err);
        CHECK(st != SL_OK && err.reason[0] != '\0', "%s: measured without error", what);
        expect_untouched(&s, what);
        sl_error_clear(&err);
        st = sl_obsfile_parse_with(bad[k], strlen(bad[k]), NULL, &sz, &tab, &err);
        CHECK(st != SL_OK && err.reason[0] != '\0', "%s: parsed without error", what);
        snprintf(what, sizeof what, "parse of bad file %lu", (unsigned long)k + 1);
        expect_untouched(&s, what);
    }
    sl_error_clear(&err);
    CHECK(sl_obsfile_parse_with(good, strlen(good), NULL, &sz, &tab, &err) == SL_OK,
          "good file parsed into the same buffers: %s", err.message);
    release(&s);
}

int main(void)
{
    check_pf();
    check_enkf();
    check_resample();
    check_obsfile();
    CHECK_DONE("test_untouched");
}
