/* pf_pace.c - how many threads a run's next cycle uses, by timing its
 * cycles.
 *
 * A run that may use several threads does not know beforehand whether
 * they pay: that depends on the work of a member (a daily map or decades
 * of a stiff model), on the number of members, and on what else the
 * machine is running (a thread that shares its core with another busy
 * process holds up every join of the others). The pace times a round of
 * cycles, PACE_RUN on one thread then PACE_RUN on all (the first of each
 * run not counted: it pays for the change, data in the other cores'
 * caches and threads to wake), and keeps the faster until the next round.
 * - More threads are kept only when they take at most PACE_GAIN of one
 *   thread's time per unit of work, so noise alone does not keep a run
 *   on the slower choice. A cycle on more threads that takes over
 *   PACE_ABORT times one thread's time per unit ends the round at once.
 * - A round does not try more threads when its cycles on one thread are
 *   shorter than PACE_TINY seconds (starting and joining threads would
 *   cost more than the cycle), nor, while the run keeps one thread, when
 *   the machine has no core free for them (other threads ready to run,
 *   as the system tells where it does): a thread woken then waits for a
 *   core, and one such cycle can cost tens of milliseconds.
 * - The next round comes after PACE_WAIT_FIRST cycles, then twice as
 *   many each time the choice holds (at most PACE_WAIT_MOST), back to
 *   PACE_WAIT_FIRST when it changes; and not before the run has spent
 *   1 / PACE_SHARE times what the round's slower cycles lost (at most
 *   PACE_WAIT_LONGEST seconds), so that the trials cost about PACE_SHARE
 *   of the run. A cycle over PACE_ABORT times the kept choice's pace per
 *   unit (the machine's load changed) brings the next round at once.
 * The thread count changes no result: every loop gives the same bits for
 * any number of threads. */
#include <stdio.h>
#include <time.h>
#include <unistd.h>

#include "pf_internal.h"

#define PACE_RUN 3
#define PACE_ROUND (2 * PACE_RUN)
#define PACE_TINY 20e-6
#define PACE_GAIN 0.9
#define PACE_ABORT 2.0
#define PACE_WAIT_FIRST 8
#define PACE_WAIT_MOST 128
#define PACE_SHARE 0.02
#define PACE_WAIT_LONGEST 10.0

/* Threads ready to run on the machine besides the caller's, from the
 * running count of /proc/loadavg; -1 where the system does not say */
int sl_pfi_others_running(void)
{
    FILE *f = fopen("/proc/loadavg", "r");
    double a, b, c;
    int run = 0, all = 0, got;
    if (f == NULL)
        return -1;
    got = fscanf(f, "%lf %lf %lf %d/%d", &a, &b, &c, &run, &all);
    fclose(f);
    return got == 5 && run >= 1 ? run - 1 : -1;
}

/* Cores this process may run on */
static int cores_online(void)
{
    long c = sysconf(_SC_NPROCESSORS_ONLN);
    return c >= 1 && c < 1 << 20 ? (int)c : 1;
}

double sl_pfi_seconds(void)
{
    struct timespec ts;
    if (clock_gettime(CLOCK_MONOTONIC, &ts) != 0)
        return 0.0;
    return (double)ts.tv_sec + 1e-9 * (double)ts.tv_nsec;
}

int sl_pfi_unpaced_threads(const sl_pf_config *cfg, size_t members)
{
    if (cfg->threads_paced && members < SL_PFI_PAR_MIN_MEMBERS)
        return 1;
    return cfg->threads;
}

void sl_pfi_pace_init(sl_pfi_pace *g, int most)
{
    g->most = most > 1 ? most : 1;
    g->chosen = 1;
    g->cur = 1;
    g->round = 0;
    g->wait = PACE_WAIT_FIRST;
    g->left = 0;
    g->solo = 0;
    g->since = 0.0;
    g->wait_s = 0.0;
    g->pace = 0.0;
    g->others = sl_pfi_others_running;
    g->cores = cores_online();
}

int sl_pfi_pace_next(sl_pfi_pace *g)
{
    if (g->most <= 1)
        return g->cur = 1;
    if (g->round == 0 && g->left == 0 && g->since >= g->wait_s) {
        int k;
        g->round = PACE_ROUND;
        g->solo = 0;
        g->free_seen = 0;
        for (k = 0; k < 2; k++) {
            g->sec[k] = g->units[k] = 0.0;
            g->spent[k] = g->spent_units[k] = 0.0;
        }
    }
    if (g->round > 0)
        /* PACE_RUN cycles on one thread, then PACE_RUN on all; the first
         * cycle of each run is not counted: it pays for the change (data
         * in the other cores' caches, threads to wake) */
        g->cur = (g->round > PACE_RUN || g->solo) ? 1 : g->most;
    else
        g->cur = g->chosen;
    return g->cur;
}

/* the end of a round: the choice, and when the next round comes */
static void settle(sl_pfi_pace *g)
{
    const int was = g->chosen;
    int other;
    double lost;
    g->round = 0;
    g->chosen = !g->solo && g->units[0] > 0.0 && g->units[1] > 0.0 &&
                        g->sec[1] / g->units[1] <= PACE_GAIN * (g->sec[0] / g->units[0])
                    ? g->most
                    : 1;
    if (g->chosen == was) {
        g->wait *= 2;
        if (g->wait > PACE_WAIT_MOST)
            g->wait = PACE_WAIT_MOST;
    } else {
        g->wait = PACE_WAIT_FIRST;
    }
    g->left = g->wait;
    /* what the cycles of the other choice cost beyond the chosen one's pace */
    other = g->chosen > 1 ? 0 : 1;
    g->pace = g->units[1 - other] > 0.0 ? g->sec[1 - other] / g->units[1 - other] : 0.0;
    lost = g->units[1 - other] > 0.0
               ? g->spent[other] - g->spent_units[other] * (g->sec[1 - other] / g->units[1 - other])
               : 0.0;
    g->wait_s = lost > 0.0 ? lost / PACE_SHARE : 0.0;
    if (g->wait_s > PACE_WAIT_LONGEST)
        g->wait_s = PACE_WAIT_LONGEST;
    g->since = 0.0;
}

void sl_pfi_pace_record(sl_pfi_pace *g, double seconds, double units)
{
    double per;
    int slot;
    if (g->most <= 1)
        return;
    if (g->round == 0) {
        if (g->left > 0)
            g->left--;
        g->since += seconds;
        /* a cycle far slower than the round found (the machine's load
         * changed): a round at once */
        if (units > 0.0 && g->pace > 0.0 && seconds / units > PACE_ABORT * g->pace) {
            g->left = 0;
            g->since = g->wait_s;
        }
        return;
    }
    if (units <= 0.0)
        units = 1.0;
    per = seconds / units;
    slot = g->cur > 1;
    g->spent[slot] += seconds;
    g->spent_units[slot] += units;
    if (g->round % PACE_RUN != 0) {
        g->sec[slot] += seconds;
        g->units[slot] += units;
        if (slot == 0 && seconds < PACE_TINY)
            g->solo = 1;
        /* a run on one thread since the last round: is a core free for
         * the others? (after cycles on more threads, ours may still be
         * spinning and count as ready, so the timing alone decides) */
        if (slot == 0 && g->chosen == 1 && g->others != NULL) {
            int o = g->others();
            if (o >= 0 && o <= g->cores - (g->most < g->cores ? g->most : g->cores))
                g->free_seen = 1;
            else if (o >= 0 && !g->free_seen && g->round == PACE_RUN + 1)
                g->solo = 1;
        }
    }
    if (--g->round == 0 ||
        (slot == 1 && g->units[0] > 0.0 && per > PACE_ABORT * g->sec[0] / g->units[0]))
        settle(g);
}
