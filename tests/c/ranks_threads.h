/* ranks_threads.h - the ranks of a distributed run played by threads of
 * one process, with the collectives in shared memory: every rank's
 * contribution is posted, a barrier, every rank copies what it receives,
 * a barrier. The sizes every rank passes are checked against what the
 * sender posted, and a mismatch recorded. */
#ifndef SLUICE_TEST_RANKS_THREADS_H
#define SLUICE_TEST_RANKS_THREADS_H

#include "sluice/status.h"

#include <pthread.h>
#include <string.h>

#define MAX_RANKS 8

typedef struct {
    int P;
    pthread_barrier_t bar;
    const void *send[MAX_RANKS];
    const size_t *counts[MAX_RANKS];
    int mismatch;
} shared_comm;

typedef struct {
    shared_comm *sh;
    int rank;
    size_t gathers, exchanged; /* calls, and bytes this rank received */
} rank_comm;

static inline sl_status fake_allgather(void *ctx, const void *send, void *recv, const size_t *counts,
                                sl_error *err)
{
    rank_comm *c = ctx;
    shared_comm *sh = c->sh;
    size_t at = 0;
    int r;
    (void)err;
    sh->send[c->rank] = send;
    sh->counts[c->rank] = counts;
    pthread_barrier_wait(&sh->bar);
    for (r = 0; r < sh->P; r++) {
        /* every rank must agree on every contribution's size */
        if (sh->counts[r][r] != counts[r])
            sh->mismatch = 1;
        memcpy((unsigned char *)recv + at, sh->send[r], counts[r]);
        at += counts[r];
    }
    c->gathers++;
    pthread_barrier_wait(&sh->bar);
    return SL_OK;
}

static inline sl_status fake_exchange(void *ctx, const void *send, const size_t *scounts, void *recv,
                               const size_t *rcounts, sl_error *err)
{
    rank_comm *c = ctx;
    shared_comm *sh = c->sh;
    size_t at = 0;
    int r, q;
    (void)err;
    sh->send[c->rank] = send;
    sh->counts[c->rank] = scounts;
    pthread_barrier_wait(&sh->bar);
    for (r = 0; r < sh->P; r++) {
        size_t from = 0;
        /* what rank r sends to this one starts after what it sends to
         * the ranks before this one */
        for (q = 0; q < c->rank; q++)
            from += sh->counts[r][q];
        if (sh->counts[r][c->rank] != rcounts[r])
            sh->mismatch = 1;
        else
            memcpy((unsigned char *)recv + at, (const unsigned char *)sh->send[r] + from,
                   rcounts[r]);
        at += rcounts[r];
        if (r != c->rank)
            c->exchanged += rcounts[r];
    }
    pthread_barrier_wait(&sh->bar);
    return SL_OK;
}

/* A fresh shared state for P ranks. */
static inline void ranks_open(shared_comm *sh, int P)
{
    memset(sh, 0, sizeof *sh);
    sh->P = P;
    pthread_barrier_init(&sh->bar, NULL, (unsigned)P);
}

/* Play the P ranks of sh: fn on each rank's job (jobs, `size` bytes
 * apart) in its own thread, all joined, and the state closed. 1 if
 * every thread started (else none is joined: the test stops there). */
static inline int ranks_play(shared_comm *sh, void *(*fn)(void *), void *jobs, size_t size)
{
    pthread_t th[MAX_RANKS];
    int r, ok = 1;
    for (r = 0; r < sh->P; r++)
        if (pthread_create(&th[r], NULL, fn, (unsigned char *)jobs + (size_t)r * size) != 0)
            ok = 0;
    for (r = 0; r < sh->P && ok; r++)
        pthread_join(th[r], NULL);
    if (ok)
        pthread_barrier_destroy(&sh->bar);
    return ok;
}

#endif
