/* test_pace.c - the pace of a run: how many threads its cycles use.
 *
 * The pace is fed cycle times from a model of the machine instead of a
 * clock, so each case is exact and repeatable: a cycle of u units of
 * work takes u * c1 seconds on one thread and u * cm on all, with c1 and
 * cm set by the case. The property checked is the one a user is promised
 * (common practice for adaptive thread counts): the run's total time is
 * within a few per cent of the faster fixed choice, so a run with
 * threads is never much slower than one thread, and takes the gain where
 * there is one. */
#include "check.h"

#include "../../src/pf_internal.h"

static int fake_others = 0;
static int others_calls = 0;
static int others(void)
{
    others_calls++;
    return fake_others;
}

/* seconds a unit on one thread and on most, per cycle k */
typedef struct {
    double c1, cm;
    size_t switch_at; /* from this cycle on, c1b and cmb */
    double c1b, cmb;
} machine;

static double cost(const machine *m, size_t k, int threads)
{
    int late = k >= m->switch_at;
    if (threads > 1)
        return late ? m->cmb : m->cm;
    return late ? m->c1b : m->c1;
}

/* cycles 0..T-1 of u units each: the total time, the cycles on more
 * than one thread (from cycle `from` on) in *multi */
static double drive(sl_pfi_pace *g, const machine *m, size_t T, double u, size_t from,
                    size_t *multi)
{
    size_t k, odd = 0;
    double total = 0.0;
    *multi = 0;
    for (k = 0; k < T; k++) {
        const int nt = sl_pfi_pace_next(g);
        const double sec = u * cost(m, k, nt);
        odd += nt != 1 && nt != g->most;
        if (nt > 1 && k >= from)
            (*multi)++;
        total += sec;
        sl_pfi_pace_record(g, sec, u);
    }
    CHECK(odd == 0, "%lu cycles on neither 1 nor %d threads", (unsigned long)odd, g->most);
    return total;
}

static void start(sl_pfi_pace *g, int most, int cores)
{
    sl_pfi_pace_init(g, most);
    g->others = others;
    g->cores = cores;
    fake_others = 0;
    others_calls = 0;
}

static void test_one_thread(void)
{
    sl_pfi_pace g;
    machine m = {1e-6, 1e-7, (size_t)-1, 0, 0};
    size_t multi;
    start(&g, 1, 2);
    drive(&g, &m, 500, 1000.0, 0, &multi);
    CHECK(multi == 0, "a run of one thread uses one: %lu cycles on more", (unsigned long)multi);
    CHECK(others_calls == 0, "and never asks for the load (%d)", others_calls);
}

/* threads twice as fast: they are kept, and the run costs at most a few
 * per cent more than on threads throughout */
static void test_threads_pay(void)
{
    sl_pfi_pace g;
    machine m = {1e-6, 0.5e-6, (size_t)-1, 0, 0};
    size_t multi, T = 3000;
    double total;
    start(&g, 2, 2);
    total = drive(&g, &m, T, 1000.0, 0, &multi);
    CHECK(multi >= T * 95 / 100, "threads that pay are used: %lu of %lu cycles",
          (unsigned long)multi, (unsigned long)T);
    CHECK(total <= 1.03 * (double)T * 1000.0 * m.cm, "%.4f s against %.4f s on threads", total,
          (double)T * 1000.0 * m.cm);
    /* four threads on eight cores: the same */
    start(&g, 4, 8);
    total = drive(&g, &m, T, 1000.0, 0, &multi);
    CHECK(multi >= T * 95 / 100, "4 of 8 cores: %lu of %lu cycles on threads",
          (unsigned long)multi, (unsigned long)T);
}

/* threads slower, a little or much: one thread is kept, and the trials
 * cost at most a few per cent of the run */
static void test_threads_slower(void)
{
    const double ratio[] = {1.0, 1.2, 1.5, 3.0, 40.0};
    size_t r;
    for (r = 0; r < sizeof ratio / sizeof *ratio; r++) {
        sl_pfi_pace g;
        machine m = {1e-6, 1e-6, (size_t)-1, 0, 0};
        size_t multi, T = 4000;
        double total, serial;
        m.cm = ratio[r] * m.c1;
        start(&g, 2, 2);
        total = drive(&g, &m, T, 1000.0, 0, &multi);
        serial = (double)T * 1000.0 * m.c1;
        CHECK(total <= 1.03 * serial, "threads %.1fx slower: %.4f s against %.4f s on one",
              ratio[r], total, serial);
        CHECK(multi <= T / 10, "threads %.1fx slower: %lu of %lu cycles on threads", ratio[r],
              (unsigned long)multi, (unsigned long)T);
    }
}

/* cycles too short to share: threads never tried */
static void test_tiny(void)
{
    sl_pfi_pace g;
    machine m = {1e-8, 0.5e-8, (size_t)-1, 0, 0};
    size_t multi;
    start(&g, 2, 2);
    drive(&g, &m, 2000, 1000.0, 0, &multi); /* 10 us a cycle on one thread */
    CHECK(multi == 0, "10 us cycles: %lu on threads", (unsigned long)multi);
}

/* no core free: threads never tried while one thread runs, however much
 * they would pay on a quiet machine */
static void test_crowded(void)
{
    sl_pfi_pace g;
    machine m = {1e-6, 0.5e-6, (size_t)-1, 0, 0};
    size_t multi;
    start(&g, 2, 2);
    fake_others = 1;
    drive(&g, &m, 2000, 1000.0, 0, &multi);
    CHECK(multi == 0, "a busy machine: %lu cycles on threads", (unsigned long)multi);
    CHECK(others_calls > 0, "the load was read");
    /* unknown load: the timing decides */
    start(&g, 2, 2);
    fake_others = -1;
    drive(&g, &m, 2000, 1000.0, 0, &multi);
    CHECK(multi >= 1900, "load unknown, threads pay: %lu of 2000 on threads",
          (unsigned long)multi);
    /* a core free again: threads are taken up */
    start(&g, 2, 2);
    fake_others = 1;
    drive(&g, &m, 1000, 1000.0, 0, &multi);
    fake_others = 0;
    drive(&g, &m, 2000, 1000.0, 0, &multi);
    CHECK(multi >= 1800, "the machine freed: %lu of 2000 on threads", (unsigned long)multi);
}

/* the machine changes under a run: quiet (threads pay), then loaded
 * (threads 20 times slower): the run leaves threads within a few cycles
 * and loses little; and the other way round */
static void test_load_changes(void)
{
    sl_pfi_pace g;
    machine m = {1e-6, 0.5e-6, 3000, 1e-6, 20e-6};
    size_t multi, T = 6000;
    double total, best;
    start(&g, 2, 2);
    total = drive(&g, &m, T, 1000.0, 3000, &multi);
    best = 3000.0 * 1000.0 * (m.cm + m.c1b);
    /* the cycle that found the load, then a trial now and then */
    CHECK(multi <= 10, "after the load came: %lu cycles on threads", (unsigned long)multi);
    CHECK(total <= 1.05 * best, "quiet then loaded: %.4f s against %.4f s", total, best);
    /* loaded (threads slower), then quiet (threads pay) */
    m.c1 = 1e-6;
    m.cm = 1.5e-6;
    m.c1b = 1e-6;
    m.cmb = 0.5e-6;
    start(&g, 2, 2);
    total = drive(&g, &m, T, 1000.0, 3000, &multi);
    best = 3000.0 * 1000.0 * (m.c1 + m.cmb);
    CHECK(multi >= 2700, "after the load went: %lu of 3000 cycles on threads",
          (unsigned long)multi);
    CHECK(total <= 1.05 * best, "loaded then quiet: %.4f s against %.4f s", total, best);
}

/* the clock and the machine's load as the run reads them */
static void test_readings(void)
{
    double a = sl_pfi_seconds(), b = sl_pfi_seconds();
    int o = sl_pfi_others_running();
    CHECK(a > 0.0 && b >= a, "a monotonic clock: %.9f then %.9f", a, b);
    CHECK(o >= -1, "others running: %d", o);
}

int main(void)
{
    test_one_thread();
    test_threads_pay();
    test_threads_slower();
    test_tiny();
    test_crowded();
    test_load_changes();
    test_readings();
    CHECK_DONE("test_pace");
}
