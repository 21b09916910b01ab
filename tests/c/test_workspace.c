/* test_workspace.c - the layout helper of src/workspace.h (alignment,
 * order, the size query against the layout in memory, overflow), the
 * parts of a run's workspace (sl_pf_workspace_parts: they sum to
 * sl_pf_workspace for every analysis and option combination), and the
 * workspace sizes the size queries report (sl_enkf_workspace,
 * sl_pf_workspace, sl_smooth_workspace, and through them the LETKF's) for
 * a fixed set of configurations. The expected
 * numbers were recorded from the build before the layouts were written
 * with one shared helper: the layouts (alignment, order) must not have
 * moved. They hold for this ABI (x86-64 Linux: 8-byte size_t and
 * pointers, the structs of the core as they are); a layout changed on
 * purpose updates its line here (a failure prints the new size). */
#include "check.h"
#include "sluice/enkf.h"
#include "sluice/param_move.h"
#include "sluice/pf.h"
#include "sluice/resample.h"
#include "sluice/smooth.h"
#include "sluice/stats.h"

#include <stdint.h>

#include "../../src/workspace.h"

/* ------------------------------------------------------------------ the helper */

static void test_helper(void)
{
    /* buffers of 24, 0, 65, 1 and 8 x 3 bytes: each starts at the next
     * multiple of 64 (hand-computed offsets 0, 64, 64, 192, 256) */
    static const size_t count[5] = {3, 0, 65, 1, 3}, size[5] = {8, 8, 1, 1, 8};
    static const size_t at[5] = {0, 64, 64, 192, 256};
    static unsigned char spare[SL_WS_ALIGN];
    unsigned char *mem;
    size_t off = 0, k, end;
    void *p, *q;
    for (k = 0; k < 5; k++)
        CHECK(sl_ws_take(NULL, &off, count[k], size[k]) == NULL, "measuring gives no buffer");
    end = off;
    CHECK(end == 256 + 24, "end of the layout %lu, expected 280", (unsigned long)end);
    CHECK(sl_ws_size(end) == end, "size of a layout");
    mem = ck_aligned_alloc(SL_WS_ALIGN, 320);
    CHECK(mem != NULL, "memory");
    if (mem != NULL) {
        off = 0;
        for (k = 0; k < 5; k++) {
            p = sl_ws_take(mem, &off, count[k], size[k]);
            CHECK(p == mem + at[k], "buffer %lu at %ld, expected %lu", (unsigned long)k,
                  (long)((unsigned char *)p - mem), (unsigned long)at[k]);
        }
        CHECK(off == end, "the layout in memory ends where the query did");
        /* the byte form: the buffer into *out, the new end returned */
        off = 5;
        CHECK(sl_ws_carve(mem, &off, 10, &q) == 74 && q == mem + 64, "carve after 5 bytes");
        CHECK(sl_ws_carve(mem, &off, 1, NULL) == 129, "carve without a pointer");
        CHECK(sl_ws_carve(NULL, &off, 0, &q) == 192 && q == NULL, "carve while measuring");
        ck_free(mem);
    }
    /* overflow of the product, then every later call keeps it */
    off = 0;
    CHECK(sl_ws_take(NULL, &off, SIZE_MAX / 2, 4) == NULL && off == SL_WS_OVERFLOW,
          "an overflowing product");
    p = sl_ws_take(spare, &off, 1, 1);
    CHECK(p == NULL && off == SL_WS_OVERFLOW, "an overflow stays");
    CHECK(sl_ws_carve(NULL, &off, 1, NULL) == SL_WS_OVERFLOW && sl_ws_size(off) == 0,
          "the size of an overflowed layout is 0");
    /* the end stays 2 SL_WS_ALIGN below SIZE_MAX: the limits either side */
    off = SIZE_MAX - 2 * SL_WS_ALIGN - 10;
    sl_ws_take(NULL, &off, 10, 1);
    CHECK(off != SL_WS_OVERFLOW && off > SIZE_MAX - 2 * SL_WS_ALIGN, "the last end allowed");
    off = SIZE_MAX - 2 * SL_WS_ALIGN - 10;
    sl_ws_take(NULL, &off, 11, 1);
    CHECK(off == SL_WS_OVERFLOW, "one byte more overflows");
    off = 0;
    sl_ws_take(NULL, &off, SIZE_MAX - SL_WS_ALIGN, 1);
    CHECK(off == SL_WS_OVERFLOW, "a buffer of nearly SIZE_MAX bytes");
}

/* ------------------------------------------------------- the ensemble Kalman analyses */

static size_t enkf_size(int method, int form, int threads, int with_loc, size_t n,
                        size_t N, size_t m, int r_full)
{
    sl_enkf_config c;
    sl_localization loc;
    memset(&c, 0, sizeof c);
    memset(&loc, 0, sizeof loc);
    loc.geometry = SL_GEOM_LINE;
    loc.dim = 1;
    c.method = method;
    c.inflation = 1.0;
    c.threads = threads;
    c.etkf_form = form;
    c.loc = with_loc ? &loc : NULL;
    return sl_enkf_workspace(&c, n, N, m, r_full);
}

static const size_t enkf_dims[][3] = {
    {1, 2, 1}, {40, 20, 40}, {40, 50, 12}, {300, 64, 1000}, {7, 3, 100}, {1000, 30, 29}};
#define N_DIMS (sizeof enkf_dims / sizeof *enkf_dims)

/* Sizes in the order of the loops of test_enkf_sizes. */
static const size_t enkf_expected[] = {
    584, 584, 1328, 1392, 1808, 1872,
    1328, 1392, 4728, 4728, 4728, 4728,
    7104, 7104, 10944, 10944, 47680, 47680,
    35648, 46016, 33216, 46016, 70784, 83584,
    70208, 70208, 70208, 70208, 96192, 96192,
    141760, 141760, 32704, 32704, 41152, 42304,
    90752, 91904, 41152, 42304, 68000, 68000,
    68000, 68000, 187968, 187968, 443712, 443712,
    9603328, 9603328, 685312, 8685312, 685312, 8685312,
    19731872, 27731872, 819008, 819008, 819008, 819008,
    1669056, 1669056, 2079680, 2079680, 94304, 94304,
    8296, 88296, 8296, 88296, 234544, 314544,
    18808, 18808, 18808, 18808, 27072, 27072,
    31680, 31680, 54528, 54528, 536704, 543488,
    57024, 63808, 536704, 543488, 111096, 111096,
    111096, 111096, 440000, 440000, 536000, 536000,
};

static void test_enkf_sizes(void)
{
    size_t k = 0, d, count = sizeof enkf_expected / sizeof *enkf_expected;
    int method, form, threads, r_full;
    for (d = 0; d < N_DIMS; d++) {
        const size_t n = enkf_dims[d][0], N = enkf_dims[d][1], m = enkf_dims[d][2];
        for (method = 0; method < SL_ENKF_COUNT; method++)
            for (form = 0; form <= (method == SL_ENKF_ETKF ? 2 : 0); form++)
                for (threads = 1; threads <= (method == SL_ENKF_LETKF ? 3 : 1); threads += 2)
                    for (r_full = 0; r_full <= 1; r_full++) {
                        size_t got = enkf_size(method, form, threads,
                                               method == SL_ENKF_LETKF, n, N, m, r_full);
                        CHECK(k < count && got == enkf_expected[k],
                              "enkf case %lu (method %d form %d threads %d r_full %d, "
                              "n %lu N %lu m %lu): %lu bytes",
                              (unsigned long)k, method, form, threads, r_full,
                              (unsigned long)n, (unsigned long)N, (unsigned long)m,
                              (unsigned long)got);
                        k++;
                    }
    }
    CHECK(k == count, "%lu enkf cases, %lu expected sizes", (unsigned long)k,
          (unsigned long)count);
}

/* ----------------------------------------------------------- the particle-filter cycle */

#define T_MAX 6

typedef struct {
    sl_model md;
    sl_pf_config cfg;
    sl_enkf_config ec;
    sl_localization loc;
    double times[T_MAX], sd[3], noise_sd[4];
    int noise[3];
    size_t first[T_MAX + 1];
} pf_case;

/* A configuration that sl_pf_workspace can size: n states, p parameters,
 * q forcings, N members, T cycles with m observations each. */
static void pf_base(pf_case *c, size_t n, size_t p, size_t q, size_t N, size_t T,
                    size_t m)
{
    size_t k;
    memset(c, 0, sizeof *c);
    c->md.name = "sizes";
    c->md.n_state = n;
    c->md.n_param = p;
    c->md.n_forcing = q;
    c->md.dt = 0.25;
    c->md.work = 11;
    for (k = 0; k < T; k++) {
        c->times[k] = (double)(k + 1);
        c->first[k] = k * m;
    }
    c->first[T] = T * m;
    c->cfg.model = &c->md;
    c->cfg.N = N;
    c->cfg.T = T;
    c->cfg.times = c->times;
    c->cfg.obs_first = c->first;
    c->cfg.forcing.q = q;
    c->cfg.param_move = &sl_param_move_fixed;
    c->cfg.resampler = &sl_resampler_systematic;
    c->cfg.threshold = 0.5;
    c->cfg.threads = 1;
}

/* Case `which` of the fixed set into c. */
static void pf_setup(pf_case *c_, int which)
{
#define c (*c_)
    switch (which) {
    case 0: /* the plain particle filter */
        pf_base(&c, 3, 0, 0, 100, 5, 2);
        break;
    case 1: /* parameters, forcings, an operator function, residual resampling, threads */
        pf_base(&c, 4, 2, 2, 257, 6, 3);
        c.cfg.resampler = &sl_resampler_residual;
        c.cfg.threads = 3;
        c.cfg.n_fun = 3;
        c.cfg.obs_fn = (sl_obs_fn)(uintptr_t)1; /* only tested for NULL */
        break;
    case 2: /* resample_move over deterministic paths */
        pf_base(&c, 2, 2, 1, 200, 6, 1);
        c.cfg.param_move = &sl_param_move_resample_move;
        c.cfg.move.rm_paths = 1;
        break;
    case 3: /* resample_move over paths with state and forcing noise */
        pf_base(&c, 3, 1, 2, 150, 5, 2);
        c.cfg.param_move = &sl_param_move_resample_move;
        c.cfg.move.rm_paths = 1;
        c.noise[0] = SL_FORCING_ADDITIVE;
        c.noise[1] = SL_FORCING_EXACT;
        c.sd[0] = 0.3;
        c.cfg.forcing.noise = c.noise;
        c.cfg.forcing.sd = c.sd;
        c.noise_sd[1] = 0.2;
        c.cfg.state_noise = c.noise_sd;
        break;
    case 4: /* SMC2 */
        pf_base(&c, 2, 1, 0, 120, 4, 1);
        c.cfg.inner = 10;
        c.cfg.param_move = &sl_param_move_resample_move;
        break;
    case 5: /* the weighted ensemble Kalman filter */
        pf_base(&c, 4, 0, 0, 90, 5, 3);
        c.cfg.wenkf = 1;
        break;
    case 6: /* a fixed-lag window */
        pf_base(&c, 3, 1, 0, 80, 6, 2);
        c.cfg.lag = 3;
        c.cfg.param_move = &sl_param_move_kernel;
        break;
    case 7: /* the ETKF with a full window (lag > T) */
        pf_base(&c, 3, 1, 0, 40, 5, 2);
        c.ec.method = SL_ENKF_ETKF;
        c.ec.inflation = 1.0;
        c.ec.threads = 1;
        c.cfg.enkf = &c.ec;
        c.cfg.lag = 9;
        break;
    default: /* the LETKF on a plane, two threads */
        pf_base(&c, 5, 1, 0, 30, 4, 3);
        c.ec.method = SL_ENKF_LETKF;
        c.ec.inflation = 1.0;
        c.ec.threads = 1;
        c.loc.geometry = SL_GEOM_PLANE;
        c.loc.dim = 2;
        c.cfg.enkf = &c.ec;
        c.cfg.loc = &c.loc;
        c.cfg.threads = 2;
        break;
    }
#undef c
}

static size_t pf_size(int which)
{
    pf_case c;
    pf_setup(&c, which);
    return sl_pf_workspace(&c.cfg);
}

static const size_t pf_expected[] = {
    35020, 177636, 108428, 178956, 61388, 44364,
    48588, 57996, 156248,
};

static void test_pf_sizes(void)
{
    size_t k, count = sizeof pf_expected / sizeof *pf_expected;
    for (k = 0; k < 9; k++) {
        size_t got = pf_size((int)k);
        CHECK(k < count && got == pf_expected[k], "pf case %lu: %lu bytes", (unsigned long)k,
              (unsigned long)got);
    }
    CHECK(count == 9, "9 pf cases, %lu expected sizes", (unsigned long)count);
}

/* ------------------------------------------------------ the parts of a run's workspace */

/* The parts of c: each named, with an option, and summing to
 * sl_pf_workspace exactly; the parts' bytes in got. */
static size_t parts_of(const pf_case *c, size_t got[SL_PF_NPARTS], const char *what)
{
    sl_pf_part part[SL_PF_NPARTS];
    size_t total = sl_pf_workspace_parts(&c->cfg, part), sum = 0, k, j;
    CHECK(total == sl_pf_workspace(&c->cfg), "%s: parts_of total %lu, workspace %lu", what,
          (unsigned long)total, (unsigned long)sl_pf_workspace(&c->cfg));
    for (k = 0; k < SL_PF_NPARTS; k++) {
        got[k] = part[k].bytes;
        sum += part[k].bytes;
        CHECK(part[k].name != NULL && part[k].option[0] != NULL, "%s: part %lu named", what,
              (unsigned long)k);
        for (j = 0; j < k && part[k].name != NULL; j++)
            CHECK(part[j].name == NULL || strcmp(part[j].name, part[k].name) != 0,
                  "%s: parts %lu and %lu share a name", what, (unsigned long)j,
                  (unsigned long)k);
    }
    CHECK(total > 0 && sum == total, "%s: the parts sum to %lu, the workspace is %lu", what,
          (unsigned long)sum, (unsigned long)total);
    return total;
}

static void test_pf_parts_fixed(void)
{
    size_t got[SL_PF_NPARTS], k;
    sl_pf_part part[SL_PF_NPARTS];
    pf_case c;
    char what[32];
    for (k = 0; k < 9; k++) {
        pf_setup(&c, (int)k);
        snprintf(what, sizeof what, "pf case %lu", (unsigned long)k);
        CHECK(parts_of(&c, got, what) == pf_expected[k], "%s: the sizes stay", what);
    }
    /* case 6: the window holds lag + 1 slots of (n + p) x N doubles and
     * N 4-byte ancestor indices (4 x 80 x 8 + 80 x 4 = 2880, a multiple
     * of 64 here), a summary buffer of (n + p) x N doubles (2560) and
     * lag + 1 slot pointers in one cache line; nothing else is the lag's
     * (the particle filter has no analysis workspace). Cases 6 and 7
     * grew by these indices: 4 slots x 320 bytes = 1280 (case 6), and 6
     * slots of 1280 + 160 bytes rounded up to 1472, 6 x 192 = 1152
     * (case 7) */
    pf_setup(&c, 6);
    parts_of(&c, got, "lag parts");
    CHECK(got[SL_PF_PART_LAG] == 64 + (3 + 1) * (4 * 80 * 8 + 80 * 4) + 4 * 80 * 8,
          "lag part %lu, expected %d", (unsigned long)got[SL_PF_PART_LAG],
          64 + 4 * 2880 + 2560);
    CHECK(got[SL_PF_PART_ANALYSIS] == 0 && got[SL_PF_PART_PATHS] == 0 &&
          got[SL_PF_PART_TEMPER] == 0, "the plain filter has no analysis, paths, tempering");
    /* case 2: resample_move keeps the ancestors and paths of every cycle,
     * 2 T x N 4-byte indices, besides its re-run ensemble */
    pf_setup(&c, 2);
    parts_of(&c, got, "resample_move parts");
    CHECK(got[SL_PF_PART_MOVES] >= 2 * 6 * 200 * 4 + 2 * 2 * 200 * 8,
          "resample_move part %lu", (unsigned long)got[SL_PF_PART_MOVES]);
    CHECK(got[SL_PF_PART_PATHS] == 0, "deterministic paths keep no draws");
    /* case 3: the draws of random paths, 3 buffers of zlen x N doubles:
     * 20 steps of dt 0.25 to t = 5 with one noisy forcing and 5 cycles
     * with one noisy state, zlen = 20 + 5 = 25, and two index lists */
    pf_setup(&c, 3);
    parts_of(&c, got, "path parts");
    CHECK(got[SL_PF_PART_PATHS] >= 3 * 25 * 150 * 8 + (2 + 4) * 8 &&
          got[SL_PF_PART_PATHS] <= 3 * 25 * 150 * 8 + (2 + 4) * 8 + 6 * 64,
          "path part %lu, expected 90048 to 90432", (unsigned long)got[SL_PF_PART_PATHS]);
    /* case 4: SMC2's groups and re-run filters; the ensemble names the
     * inner members */
    pf_setup(&c, 4);
    parts_of(&c, got, "smc2 parts");
    sl_pf_workspace_parts(&c.cfg, part);
    CHECK(got[SL_PF_PART_MOVES] >= 120 * 8 * (2 * 2 + 3 * 1) && part[SL_PF_PART_ENSEMBLE].option[1] != NULL &&
          strcmp(part[SL_PF_PART_ENSEMBLE].option[1], "inner_members") == 0,
          "smc2 part %lu and its options", (unsigned long)got[SL_PF_PART_MOVES]);
    /* case 1: three threads of model work (11 doubles), quantile scratch
     * and an error record each */
    pf_setup(&c, 1);
    parts_of(&c, got, "thread parts");
    CHECK(got[SL_PF_PART_THREADS] >= 3 * (11 + sl_quantile_workspace(257)) * 8 +
                                         3 * sizeof(sl_error),
          "thread part %lu", (unsigned long)got[SL_PF_PART_THREADS]);
    CHECK(got[SL_PF_PART_DERIVED] >= 3 * 257 * 8, "an operator function's values");
    /* the ETKF with as many observations as members at a cycle works with
     * two N x N matrices (8 N^2 bytes each, common practice) */
    pf_setup(&c, 7);
    c.cfg.lag = 0;
    c.first[1] = 40;
    c.first[2] = c.first[3] = c.first[4] = c.first[5] = 40;
    parts_of(&c, got, "etkf parts");
    CHECK(got[SL_PF_PART_ANALYSIS] >= 2 * 8 * 40 * 40, "etkf analysis part %lu",
          (unsigned long)got[SL_PF_PART_ANALYSIS]);
    CHECK(got[SL_PF_PART_PREDICTED] >= 40 * 40 * 8, "predicted observations of one cycle");
}

/* Every analysis of the table with and without a window, on one and
 * three threads, with each move, tempering and SMC2 where the analysis
 * weighs, forcing and state noise, derived quantities: the parts always
 * sum to the workspace, and each option only grows its own parts. */
static void test_pf_parts_all(void)
{
    static const sl_param_mover *const moves[] = {
        &sl_param_move_fixed, &sl_param_move_kernel, &sl_param_move_resample_move};
    size_t got[SL_PF_NPARTS], base[4][2][SL_PF_NPARTS], k, cases = 0;
    const sl_analysis *an;
    char what[96];
    for (k = 0; (an = sl_analysis_at(k)) != NULL; k++) {
        int lag, thr, mv, tmp, noise;
        const int weighs = (an->flags & SL_ANALYSIS_WEIGHTS) != 0;
        for (lag = 0; lag <= 1; lag++)
            for (thr = 0; thr <= 1; thr++)
                for (mv = 0; mv < 4; mv++)
                    for (tmp = 0; tmp <= 1; tmp++)
                        for (noise = 0; noise <= 1; noise++) {
                            pf_case c;
                            if (!weighs && (mv == 3 || tmp))
                                continue;
                            pf_base(&c, 3, 2, 2, 64, 5, 3);
                            c.cfg.analysis = an;
                            c.loc.geometry = SL_GEOM_PLANE;
                            c.loc.dim = 2;
                            c.cfg.loc = &c.loc;
                            c.cfg.lag = lag ? 2 : 0;
                            c.cfg.threads = thr ? 3 : 1;
                            c.cfg.param_move = moves[mv < 3 ? mv : 2];
                            c.cfg.move.rm_paths = 0.1;
                            c.cfg.inner = mv == 3 ? 8 : 0;
                            c.cfg.temper.ess = tmp ? 0.5 : 0.0;
                            c.cfg.temper.max_steps = 10;
                            c.cfg.n_fun = 2;
                            c.cfg.obs_fn = (sl_obs_fn)(uintptr_t)1;
                            c.cfg.derived_summary = 1;
                            if (noise) {
                                c.noise[0] = SL_FORCING_MULTIPLICATIVE;
                                c.sd[0] = 0.2;
                                c.cfg.forcing.noise = c.noise;
                                c.cfg.forcing.sd = c.sd;
                                c.noise_sd[0] = c.noise_sd[2] = 0.1;
                                c.cfg.state_noise = c.noise_sd;
                            }
                            snprintf(what, sizeof what,
                                     "%s lag %d threads %d move %d temper %d noise %d",
                                     an->name, c.cfg.lag ? 2 : 0, c.cfg.threads, mv, tmp,
                                     noise);
                            parts_of(&c, got, what);
                            cases++;
                            if (!lag && !thr && !tmp) {
                                memcpy(base[mv][noise], got, sizeof base[mv][noise]);
                                /* the same without the window, one thread,
                                 * no tempering: what the options add */
                                continue;
                            }
                            {
                                const size_t *b0 = base[mv][noise];
                                const size_t a0 = b0[SL_PF_PART_ANALYSIS],
                                             a1 = got[SL_PF_PART_ANALYSIS];
                                CHECK(tmp || got[SL_PF_PART_ENSEMBLE] == b0[SL_PF_PART_ENSEMBLE],
                                      "%s: the ensemble does not change", what);
                                CHECK((got[SL_PF_PART_LAG] > 0) == (lag != 0),
                                      "%s: a window only with lag", what);
                                CHECK(!thr || got[SL_PF_PART_THREADS] > b0[SL_PF_PART_THREADS],
                                      "%s: threads add scratch", what);
                                CHECK(!tmp || got[SL_PF_PART_TEMPER] >= 64 * 16,
                                      "%s: tempering's buffers", what);
                                /* the one-thread, windowless analysis, up
                                 * to the alignment before it */
                                CHECK(a1 + 64 > a0 && a0 + 64 > a1,
                                      "%s: the analysis part %lu, without the options %lu",
                                      what, (unsigned long)a1, (unsigned long)a0);
                            }
                        }
    }
    CHECK(cases >= 7 * 8 * 2, "%lu combinations", (unsigned long)cases);
}

/* ------------------------------------------------------------------ the smoothers */

static size_t smooth_size(const sl_smoother *type, size_t n, size_t p, size_t N, size_t T,
                          size_t M, unsigned tries, int threads)
{
    static const double dummy[1] = {0.0}, probs[3] = {0.05, 0.5, 0.95};
    static const uint32_t anc[1] = {0};
    sl_smooth_config c;
    sl_error err;
    size_t bytes = 0;
    memset(&c, 0, sizeof c);
    c.n = n;
    c.p = p;
    c.N = N;
    c.T = T;
    c.X = dummy;
    c.P = p > 0 ? dummy : NULL;
    c.w = dummy;
    c.nq = 3;
    c.probs = probs;
    c.threads = threads;
    c.ancestors = anc;
    c.M = M;
    c.F = dummy;
    c.L = dummy;
    c.tries = tries;
    sl_error_clear(&err);
    if (sl_smooth_workspace(type, &c, &bytes, &err) != SL_OK)
        return 0;
    return bytes;
}

static const size_t smooth_expected[] = {
    60568, 313616, 35648, 72224, 324304, 97280,
    23392, 16712,
};

static void test_smooth_sizes(void)
{
    size_t got[8], k, count = sizeof smooth_expected / sizeof *smooth_expected;
    got[0] = smooth_size(&sl_smoother_genealogy, 1, 0, 500, 3, 0, 0, 1);
    got[1] = smooth_size(&sl_smoother_genealogy, 4, 2, 1000, 50, 0, 0, 3);
    got[2] = smooth_size(&sl_smoother_genealogy, 2, 1, 7, 200, 0, 0, 2);
    got[3] = smooth_size(&sl_smoother_ffbsi, 1, 0, 400, 3, 50, 0, 1);
    got[4] = smooth_size(&sl_smoother_ffbsi, 3, 1, 301, 20, 77, 5, 2);
    got[5] = smooth_size(&sl_smoother_ffbsi, 2, 0, 9, 40, 1000, 3, 4);
    got[6] = smooth_size(&sl_smoother_ffbsi, 5, 2, 64, 1, 10, 0, 1);
    got[7] = smooth_size(&sl_smoother_genealogy, 1, 0, 1, 1, 0, 0, 1);
    for (k = 0; k < 8; k++)
        CHECK(k < count && got[k] == smooth_expected[k], "smooth case %lu: %lu bytes",
              (unsigned long)k, (unsigned long)got[k]);
    CHECK(count == 8, "8 smooth cases, %lu expected sizes", (unsigned long)count);
}

int main(void)
{
    test_helper();
    test_enkf_sizes();
    test_pf_sizes();
    test_pf_parts_fixed();
    test_pf_parts_all();
    test_smooth_sizes();
    CHECK_DONE("test_workspace");
}
