/* mpi.c - gateway sluice.kernel.mpi: the processes of a job started by
 * mpirun, and the few collectives sluice's distributed runs use. Built
 * only by `make MPI=1` (Open MPI's compile and link flags); the core
 * knows nothing of MPI.
 *
 *   [rank, size] = sluice.kernel.mpi ('init')    start MPI (once; again: no-op)
 *   tf   = sluice.kernel.mpi ('initialized')
 *   y    = sluice.kernel.mpi ('allreduce', x, op)  x double, op 'sum'|'min'|'max'
 *   b    = sluice.kernel.mpi ('bcast', bytes, root)  uint8 of any length
 *   c    = sluice.kernel.mpi ('gather', bytes, root) root: 1 x size cell, others {}
 *          sluice.kernel.mpi ('barrier')
 *   s    = sluice.kernel.mpi ('stats')  [seconds bytes calls] of the particle
 *          filter's collectives on this rank since the last 'stats' (waiting
 *          included; bytes received), then zeroed
 *
 * Never a hang when a rank leaves: every rank, when its Octave exits,
 * sends "leaving" to every other rank (on a control communicator of its
 * own) before waiting for all of them at the exit. A rank waiting in one
 * of the collectives above polls for that message and, when a rank left
 * before joining, raises sluice:mpi:rankleft naming it; then that rank
 * exits too. MPI is finalised once every rank has reached the exit; if a
 * rank left a collective unfinished, the lowest such rank alone ends
 * the job there instead (its partners are gone). A rank killed outright
 * (signal, out of memory) is mpirun's to notice: it ends the whole job. */
#include "../mexutil.h"
#include "sluice/pf.h"

#include <mpi.h>
#include <stdio.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

#define TAG_LEAVING 7301

static const char fn[] = "mpi";
static int started = 0;      /* MPI_Init_thread called by this gateway */
static int world_rank = 0;
static int world_size = 1;
static MPI_Comm work = MPI_COMM_NULL;   /* the collectives */
static MPI_Comm ctl = MPI_COMM_NULL;    /* "leaving" messages, the exit */
static int heard_leaving = 0;           /* leaving messages received */
static int dangling = 0;                /* a collective left unfinished */
static int leaving_note = 0;            /* what a leaving message carries */
static int left_rank = -1;              /* the first rank heard leaving */
/* the core's collectives since the last 'stats': seconds inside them
 * (waiting included), bytes this rank received, calls */
static double core_seconds = 0.0, core_bytes = 0.0, core_calls = 0.0;

/* The memory a posted collective reads and writes. A collective cannot be
 * cancelled: when a rank leaves during one, its request stays posted and
 * the library may still read or write these buffers afterwards (whenever
 * this rank drives MPI's progress, as at its exit). An error raised from a
 * gateway frees what mxMalloc gave and pops the stack, so the buffers come
 * from malloc: freed once the collective has completed, kept for good (in
 * `kept`) when it never will. */
typedef union block {
    union block *next;
    long double align;
} block;
static block *live = NULL;   /* the buffers of the collective under way */
static block *kept = NULL;   /* those of collectives left unfinished */

static void coll_done(void)
{
    while (live != NULL) {
        block *next = live->next;
        free(live);
        live = next;
    }
}

static void coll_keep(void)
{
    while (live != NULL) {
        block *next = live->next;
        live->next = kept;
        kept = live;
        live = next;
    }
}

/* n bytes for the collective under way (at least one) */
static void *coll_alloc(size_t n)
{
    block *b = NULL;
    if (n <= (size_t)-1 - sizeof(block))
        b = (block *)malloc(sizeof(block) + (n > 0 ? n : 1));
    if (b == NULL) {
        coll_done();
        slm_fail(fn, "nomemory", "rank %d of %d: cannot allocate %.0f bytes for a collective",
                 world_rank, world_size, (double)n);
    }
    b->next = live;
    live = b;
    return b + 1;
}

static void fail_mpi(int rc, const char *what)
{
    char msg[MPI_MAX_ERROR_STRING];
    int len = 0;
    if (MPI_Error_string(rc, msg, &len) != MPI_SUCCESS)
        snprintf(msg, sizeof msg, "error code %d", rc);
    slm_fail(fn, "failed", "rank %d of %d: %s: %s", world_rank, world_size, what, msg);
}

/* Wait for req, watching for a rank that left. Returns 0 when done; else
 * the MPI error code or -1 (a rank left: left_rank). Either way the
 * request stays posted, so its buffers are kept for good (coll_keep). */
static int wait_req(MPI_Request *req)
{
    long spins = 0;
    for (;;) {
        int done = 0, flag = 0, rc;
        MPI_Status st;
        rc = MPI_Test(req, &done, MPI_STATUS_IGNORE);
        if (rc != MPI_SUCCESS) {
            dangling = 1;
            coll_keep();
            return rc;
        }
        if (done)
            return 0;
        rc = MPI_Iprobe(MPI_ANY_SOURCE, TAG_LEAVING, ctl, &flag, &st);
        if (rc == MPI_SUCCESS && flag) {
            int note = 0;
            MPI_Recv(&note, 1, MPI_INT, st.MPI_SOURCE, TAG_LEAVING, ctl, MPI_STATUS_IGNORE);
            heard_leaving++;
            dangling = 1;
            left_rank = st.MPI_SOURCE;
            coll_keep();
            return -1;
        }
        /* spin briefly, then yield the core: ranks may share cores */
        if (++spins > 2000)
            slm_sleep_seconds(spins > 20000 ? 2e-3 : 1e-4);
    }
}

static const char left_text[] =
    "rank %d of %d: rank %d left (its Octave ended: finished, or stopped by an "
    "error shown in its own output) while this rank waited for it in %s";

/* Wait for req, watching for a rank that left: then sluice:mpi:rankleft. */
static void wait_watch(MPI_Request *req, const char *what)
{
    int rc = wait_req(req);
    if (rc == -1)
        slm_fail(fn, "rankleft", left_text, world_rank, world_size, left_rank, what);
    if (rc != 0)
        fail_mpi(rc, what);
}

/* ---------------------------------------- the core's collectives */

/* The core's collectives report instead of raising (the core returns
 * through its own frames): sluice:<fn>:rankleft or :mpifailed. */
static sl_status wait_status(MPI_Request *req, const char *what, sl_error *err)
{
    int rc = wait_req(req);
    char msg[MPI_MAX_ERROR_STRING];
    int len = 0;
    if (rc == 0)
        return SL_OK;
    if (rc == -1)
        return sl_fail(err, SL_EMODEL, "rankleft", left_text, world_rank, world_size, left_rank,
                       what);
    if (MPI_Error_string(rc, msg, &len) != MPI_SUCCESS)
        snprintf(msg, sizeof msg, "error code %d", rc);
    return sl_fail(err, SL_EMODEL, "mpifailed", "rank %d of %d: %s: %s", world_rank,
                   world_size, what, msg);
}

/* Byte counts as MPI's int counts of a unit of 8, 4, 2 or 1 bytes (the
 * largest that divides every count), so that up to 16 GiB go in one
 * call; n counts from `counts`, displacements rank after rank. */
static sl_status unit_counts(const size_t *a, const size_t *b, int n, MPI_Datatype *type,
                             int *ca, int *da, int *cb, int *db, sl_error *err)
{
    size_t unit = 8, ta = 0, tb = 0;
    int i;
    for (i = 0; i < n; i++)
        while (unit > 1 && (a[i] % unit != 0 || (b != NULL && b[i] % unit != 0)))
            unit /= 2;
    for (i = 0; i < n; i++) {
        if (ta / unit > (size_t)INT32_MAX - a[i] / unit ||
            (b != NULL && tb / unit > (size_t)INT32_MAX - b[i] / unit))
            return sl_fail(err, SL_ENOMEM, "toolarge",
                           "rank %d of %d: a message of more than 2^31 - 1 units of %lu bytes "
                           "(use more ranks, or fewer members)",
                           world_rank, world_size, (unsigned long)unit);
        ca[i] = (int)(a[i] / unit);
        da[i] = (int)(ta / unit);
        ta += a[i];
        if (b != NULL) {
            cb[i] = (int)(b[i] / unit);
            db[i] = (int)(tb / unit);
            tb += b[i];
        }
    }
    *type = unit == 8   ? MPI_UINT64_T
            : unit == 4 ? MPI_UINT32_T
            : unit == 2 ? MPI_UINT16_T
                        : MPI_UINT8_T;
    return SL_OK;
}

/* The core's buffers belong to the run's workspace, which Octave frees
 * when the run fails: the collectives go through buffers of their own
 * (coll_try), kept for good if a partner leaves mid-way. */
static void *coll_try(size_t n)
{
    block *b = NULL;
    if (n <= (size_t)-1 - sizeof(block))
        b = (block *)malloc(sizeof(block) + (n > 0 ? n : 1));
    if (b == NULL)
        return NULL;
    b->next = live;
    live = b;
    return b + 1;
}

static size_t sum_counts(const size_t *c, int n)
{
    size_t t = 0;
    int i;
    for (i = 0; i < n; i++)
        t += c[i];
    return t;
}

/* A core collective under way: which, when it began, its buffers of its
 * own (coll_try: c the unit counts and displacements, of the send and,
 * for the exchange, of the receive; sb the send, stotal bytes; rb the
 * receive, rtotal bytes) and the unit of its counts. */
enum { CORE_ALLGATHER, CORE_EXCHANGE };
typedef struct {
    int kind;
    double t0;
    int *c;
    unsigned char *sb, *rb;
    size_t stotal, rtotal;
    MPI_Datatype type;
} core_call;

/* Its start and buffers taken (stotal and rtotal bytes); :nomemory when
 * they cannot be had. */
static sl_status core_begin(core_call *cc, int kind, size_t stotal, size_t rtotal,
                            sl_error *err)
{
    const int n = world_size;
    cc->kind = kind;
    cc->t0 = slm_monotonic_seconds();
    cc->stotal = stotal;
    cc->rtotal = rtotal;
    cc->c = (int *)coll_try((kind == CORE_EXCHANGE ? 4 : 2) * sizeof(int) * (size_t)n);
    cc->sb = (unsigned char *)coll_try(stotal);
    cc->rb = (unsigned char *)coll_try(rtotal);
    if (cc->c == NULL || cc->sb == NULL || cc->rb == NULL) {
        coll_done();
        return sl_fail(err, SL_ENOMEM, "nomemory", "rank %d of %d: cannot allocate %.0f bytes "
                       "for a collective", world_rank, n,
                       (double)(kind == CORE_EXCHANGE ? stotal + rtotal : rtotal));
    }
    return SL_OK;
}

/* The tail both share (st: whether the counts fit): the send staged, the
 * collective posted and polled, the result copied out to recv, the
 * buffers freed and the call timed. */
static sl_status core_end(core_call *cc, sl_status st, const void *send, void *recv,
                          sl_error *err)
{
    static const char *const name[] = {"allgather", "exchange"};
    static const char *const what[] = {"a particle filter's allgather",
                                       "a particle filter's exchange of members"};
    const int n = world_size, *c = cc->c;
    MPI_Request req;
    int rc;
    if (st == SL_OK) {
        memcpy(cc->sb, send, cc->stotal);
        rc = cc->kind == CORE_ALLGATHER
                 ? MPI_Iallgatherv(cc->sb, c[world_rank], cc->type, cc->rb, c, c + n, cc->type,
                                   work, &req)
                 : MPI_Ialltoallv(cc->sb, c, c + n, cc->type, cc->rb, c + 2 * n, c + 3 * n,
                                  cc->type, work, &req);
        st = rc != MPI_SUCCESS
                 ? sl_fail(err, SL_EMODEL, "mpifailed", "rank %d of %d: %s failed "
                           "(error code %d)", world_rank, n, name[cc->kind], rc)
                 : wait_status(&req, what[cc->kind], err);
        if (st == SL_OK)
            memcpy(recv, cc->rb, cc->rtotal);
    }
    coll_done(); /* nothing, if the collective was left unfinished */
    core_seconds += slm_monotonic_seconds() - cc->t0;
    core_calls += 1.0;
    return st;
}

static sl_status core_allgather(void *ctx, const void *send, void *recv, const size_t *counts,
                                sl_error *err)
{
    const int n = world_size;
    core_call cc;
    sl_status st;
    int i;
    (void)ctx;
    if ((st = core_begin(&cc, CORE_ALLGATHER, counts[world_rank], sum_counts(counts, n),
                         err)) != SL_OK)
        return st;
    st = unit_counts(counts, NULL, n, &cc.type, cc.c, cc.c + n, NULL, NULL, err);
    if (st == SL_OK)
        for (i = 0; i < n; i++)
            core_bytes += i == world_rank ? 0.0 : (double)counts[i];
    return core_end(&cc, st, send, recv, err);
}

static sl_status core_exchange(void *ctx, const void *send, const size_t *scounts, void *recv,
                               const size_t *rcounts, sl_error *err)
{
    const int n = world_size;
    core_call cc;
    sl_status st;
    (void)ctx;
    if ((st = core_begin(&cc, CORE_EXCHANGE, sum_counts(scounts, n), sum_counts(rcounts, n),
                         err)) != SL_OK)
        return st;
    st = unit_counts(scounts, rcounts, n, &cc.type, cc.c, cc.c + n, cc.c + 2 * n, cc.c + 3 * n,
                     err);
    if (st == SL_OK)
        core_bytes += (double)cc.rtotal;
    return core_end(&cc, st, send, recv, err);
}

/* For the particle filter's gateway, which finds it by name (this
 * gateway's symbols are global once Octave has loaded it): this job's
 * ranks and collectives. 0 when MPI is not started or a rank has left. */
int sluice_mpi_pf_ranks(sl_pf_ranks *rk);
int sluice_mpi_pf_ranks(sl_pf_ranks *rk)
{
    if (!started || left_rank >= 0 || rk == NULL)
        return 0;
    memset(rk, 0, sizeof *rk);
    rk->rank = world_rank;
    rk->size = world_size;
    rk->allgather = core_allgather;
    rk->exchange = core_exchange;
    return 1;
}

/* At Octave's exit. Every rank says it is leaving, then all of them agree
 * (an allreduce on the exit communicator, which also waits for every rank
 * to get there) on the lowest rank that left a collective unfinished, if
 * any. None: MPI is finalised. Else that one rank ends the job -- its
 * partners are gone, so MPI cannot be finalised -- by leaving the process
 * at once with status 1 (mpirun then ends every rank and the job fails);
 * the others wait for mpirun to end them. Not MPI_Abort: Open MPI 4.1's
 * mpirun garbles the message it sends ("ORTE_ERROR_LOG ... show_help.c",
 * in 4 of 10 jobs of 4 ranks) and now and then crashes on it. A rank
 * still here a minute later leaves the same way. */
static void at_exit(void)
{
    int fin = 0, i, n, rc, mine, first = 0;
    double t0;
    MPI_Request agree;
    MPI_Request *sends;
    if (!started || MPI_Finalized(&fin) != MPI_SUCCESS || fin)
        return;
    n = world_size;
    sends = (MPI_Request *)calloc((size_t)(n > 0 ? n : 1), sizeof(MPI_Request));
    if (sends == NULL) {
        fflush(NULL);
        _Exit(1);
    }
    for (i = 0; i < n; i++) {
        sends[i] = MPI_REQUEST_NULL;
        if (i != world_rank)
            MPI_Isend(&leaving_note, 1, MPI_INT, i, TAG_LEAVING, ctl, &sends[i]);
    }
    mine = dangling ? world_rank : n;
    rc = MPI_Iallreduce(&mine, &first, 1, MPI_INT, MPI_MIN, ctl, &agree);
    while (rc == MPI_SUCCESS) {
        int done = 0;
        rc = MPI_Test(&agree, &done, MPI_STATUS_IGNORE);
        if (done)
            break;
        slm_sleep_seconds(1e-3);
    }
    if (rc != MPI_SUCCESS)
        first = world_rank;
    /* every rank has sent its leaving messages: take the ones not yet
     * heard, so none is left unmatched */
    for (; heard_leaving < n - 1 && rc == MPI_SUCCESS; heard_leaving++) {
        int note = 0;
        MPI_Recv(&note, 1, MPI_INT, MPI_ANY_SOURCE, TAG_LEAVING, ctl, MPI_STATUS_IGNORE);
    }
    if (rc == MPI_SUCCESS)
        MPI_Waitall(n, sends, MPI_STATUSES_IGNORE);
    free(sends);
    if (first == world_rank) {
        fprintf(stderr, "sluice: rank %d of %d ends the job: a collective was left unfinished "
                        "when another rank left\n", world_rank, world_size);
        fflush(NULL);
        _Exit(1);
    }
    if (first < n) {
        /* rank `first` ends the job: mpirun ends this process */
        fflush(NULL);
        t0 = slm_monotonic_seconds();
        while (slm_monotonic_seconds() - t0 < 60)
            slm_sleep_seconds(0.05);
        _Exit(1);
    }
    MPI_Comm_free(&work);
    MPI_Comm_free(&ctl);
    MPI_Finalize();
}

static void need_started(void)
{
    if (!started)
        slm_fail(fn, "notstarted", "MPI is not started: call sluice.kernel.mpi ('init') first");
    /* a rank has left: no collective can complete any more */
    if (left_rank >= 0)
        slm_fail(fn, "rankleft", "rank %d of %d: rank %d has left the job; no further "
                                 "collective can complete", world_rank, world_size, left_rank);
}

static int root_arg(const mxArray *a, int pos)
{
    double r;
    if (!(mxIsDouble(a) && !mxIsComplex(a) && mxGetNumberOfElements(a) == 1))
        slm_fail(fn, "badarg", "argument %d (root): expected a rank (a whole number)", pos);
    r = mxGetScalar(a);
    if (!(r >= 0 && r < (double)world_size && r == (double)(int)r))
        slm_fail(fn, "badarg", "argument %d (root): expected a rank from 0 to %d, got %g", pos,
                 world_size - 1, r);
    return (int)r;
}

static const mxArray *bytes_arg(const mxArray *a, int pos)
{
    if (!mxIsUint8(a) || mxIsComplex(a))
        slm_fail(fn, "badarg", "argument %d (bytes): expected a uint8 array", pos);
    if (mxGetNumberOfElements(a) > (size_t)INT32_MAX)
        slm_fail(fn, "badarg", "argument %d (bytes): more than 2^31-1 bytes", pos);
    return a;
}

static void cmd_init(int nlhs, mxArray *plhs[])
{
    int inited = 0, provided = 0, rc;
    if (!started) {
        MPI_Initialized(&inited);
        if (inited)
            slm_fail(fn, "failed", "MPI was started by something else in this Octave");
        rc = MPI_Init_thread(NULL, NULL, MPI_THREAD_FUNNELED, &provided);
        if (rc != MPI_SUCCESS)
            slm_fail(fn, "failed", "MPI_Init_thread failed (error code %d)", rc);
        MPI_Comm_set_errhandler(MPI_COMM_WORLD, MPI_ERRORS_RETURN);
        MPI_Comm_rank(MPI_COMM_WORLD, &world_rank);
        MPI_Comm_size(MPI_COMM_WORLD, &world_size);
        MPI_Comm_dup(MPI_COMM_WORLD, &work);
        MPI_Comm_dup(MPI_COMM_WORLD, &ctl);
        MPI_Comm_set_errhandler(work, MPI_ERRORS_RETURN);
        MPI_Comm_set_errhandler(ctl, MPI_ERRORS_RETURN);
        leaving_note = world_rank;
        started = 1;
        /* stay loaded (clear all would finalise MPI early) and finalise
         * when Octave exits */
        mexLock();
        mexAtExit(at_exit);
    }
    plhs[0] = mxCreateDoubleScalar((double)world_rank);
    if (nlhs > 1)
        plhs[1] = mxCreateDoubleScalar((double)world_size);
}

static void cmd_allreduce(int nrhs, const mxArray *prhs[], mxArray *plhs[])
{
    char op[8];
    MPI_Op mop;
    MPI_Request req;
    size_t n;
    double *x, *r;
    mxArray *y;
    int rc;
    if (nrhs != 3)
        slm_fail(fn, "badarg", "allreduce takes x and op");
    if (!(mxIsDouble(prhs[1]) && !mxIsComplex(prhs[1]) && !mxIsSparse(prhs[1])))
        slm_fail(fn, "badarg", "argument 2 (x): expected a real double array");
    if (!mxIsChar(prhs[2]) || mxGetString(prhs[2], op, sizeof op) != 0)
        slm_fail(fn, "badarg", "argument 3 (op): expected 'sum', 'min' or 'max'");
    if (strcmp(op, "sum") == 0)
        mop = MPI_SUM;
    else if (strcmp(op, "min") == 0)
        mop = MPI_MIN;
    else if (strcmp(op, "max") == 0)
        mop = MPI_MAX;
    else
        slm_fail(fn, "badarg", "argument 3 (op): expected 'sum', 'min' or 'max', got '%s'", op);
    n = mxGetNumberOfElements(prhs[1]);
    if (n > (size_t)INT32_MAX)
        slm_fail(fn, "badarg", "argument 2 (x): more than 2^31-1 elements");
    x = (double *)coll_alloc(n * sizeof(double));
    r = (double *)coll_alloc(n * sizeof(double));
    if (n > 0)
        memcpy(x, mxGetDoubles(prhs[1]), n * sizeof(double));
    rc = MPI_Iallreduce(x, r, (int)n, MPI_DOUBLE, mop, work, &req);
    if (rc != MPI_SUCCESS) {
        coll_done();
        fail_mpi(rc, "allreduce");
    }
    wait_watch(&req, "allreduce");
    y = mxCreateNumericArray(mxGetNumberOfDimensions(prhs[1]), mxGetDimensions(prhs[1]),
                             mxDOUBLE_CLASS, mxREAL);
    if (n > 0)
        memcpy(mxGetDoubles(y), r, n * sizeof(double));
    coll_done();
    plhs[0] = y;
}

static void cmd_bcast(int nrhs, const mxArray *prhs[], mxArray *plhs[])
{
    int root, rc;
    double *len;
    size_t nb;
    uint8_t *data = NULL;
    MPI_Request req;
    mxArray *b;
    if (nrhs != 3)
        slm_fail(fn, "badarg", "bcast takes bytes and root");
    bytes_arg(prhs[1], 2);
    root = root_arg(prhs[2], 3);
    len = (double *)coll_alloc(sizeof(double));
    *len = (double)mxGetNumberOfElements(prhs[1]);
    rc = MPI_Ibcast(len, 1, MPI_DOUBLE, root, work, &req);
    if (rc != MPI_SUCCESS) {
        coll_done();
        fail_mpi(rc, "bcast");
    }
    wait_watch(&req, "bcast");
    nb = (size_t)*len;
    if (nb > 0) {
        data = (uint8_t *)coll_alloc(nb);
        if (world_rank == root)
            memcpy(data, mxGetUint8s(prhs[1]), nb);
        rc = MPI_Ibcast(data, (int)nb, MPI_UINT8_T, root, work, &req);
        if (rc != MPI_SUCCESS) {
            coll_done();
            fail_mpi(rc, "bcast");
        }
        wait_watch(&req, "bcast");
    }
    b = mxCreateNumericMatrix(nb, 1, mxUINT8_CLASS, mxREAL);
    if (nb > 0)
        memcpy(mxGetUint8s(b), data, nb);
    coll_done();
    plhs[0] = b;
}

static void cmd_gather(int nrhs, const mxArray *prhs[], mxArray *plhs[])
{
    int root, rc, i, n = world_size;
    int *mine, *lens = NULL, *offs = NULL;
    uint8_t *send, *all = NULL;
    long total = 0;
    MPI_Request req;
    mxArray *c;
    if (nrhs != 3)
        slm_fail(fn, "badarg", "gather takes bytes and root");
    bytes_arg(prhs[1], 2);
    root = root_arg(prhs[2], 3);
    mine = (int *)coll_alloc(sizeof(int));
    *mine = (int)mxGetNumberOfElements(prhs[1]);
    if (world_rank == root) {
        lens = (int *)coll_alloc(sizeof(int) * (size_t)n);
        offs = (int *)coll_alloc(sizeof(int) * (size_t)n);
    }
    rc = MPI_Igather(mine, 1, MPI_INT, lens, 1, MPI_INT, root, work, &req);
    if (rc != MPI_SUCCESS) {
        coll_done();
        fail_mpi(rc, "gather");
    }
    wait_watch(&req, "gather");
    if (world_rank == root) {
        for (i = 0; i < n; i++) {
            offs[i] = (int)total;
            total += lens[i];
        }
        if (total > (long)INT32_MAX) {
            coll_done();
            slm_fail(fn, "badarg", "gather: more than 2^31-1 bytes in all");
        }
        all = (uint8_t *)coll_alloc((size_t)total);
    }
    send = (uint8_t *)coll_alloc((size_t)*mine);
    if (*mine > 0)
        memcpy(send, mxGetUint8s(prhs[1]), (size_t)*mine);
    rc = MPI_Igatherv(send, *mine, MPI_UINT8_T, all, lens, offs, MPI_UINT8_T, root, work, &req);
    if (rc != MPI_SUCCESS) {
        coll_done();
        fail_mpi(rc, "gather");
    }
    wait_watch(&req, "gather");
    if (world_rank == root) {
        c = mxCreateCellMatrix(1, (size_t)n);
        for (i = 0; i < n; i++) {
            mxArray *b = mxCreateNumericMatrix((size_t)lens[i], 1, mxUINT8_CLASS, mxREAL);
            if (lens[i] > 0)
                memcpy(mxGetUint8s(b), all + offs[i], (size_t)lens[i]);
            mxSetCell(c, (size_t)i, b);
        }
    } else {
        c = mxCreateCellMatrix(0, 0);
    }
    coll_done();
    plhs[0] = c;
}

static void cmd_barrier(void)
{
    MPI_Request req;
    int rc = MPI_Ibarrier(work, &req);
    if (rc != MPI_SUCCESS)
        fail_mpi(rc, "barrier");
    wait_watch(&req, "barrier");
}

void mexFunction(int nlhs, mxArray *plhs[], int nrhs, const mxArray *prhs[])
{
    char cmd[16];
    slm_init();
    if (nrhs < 1 || !mxIsChar(prhs[0]) || mxGetString(prhs[0], cmd, sizeof cmd) != 0)
        slm_fail(fn, "badarg", "argument 1: expected a command: init, initialized, allreduce, "
                               "bcast, gather, barrier or stats");
    if (nlhs > 2)
        slm_fail(fn, "badarg", "at most two outputs");
    if (strcmp(cmd, "initialized") == 0) {
        plhs[0] = mxCreateLogicalScalar(started ? 1 : 0);
        return;
    }
    if (strcmp(cmd, "init") == 0) {
        cmd_init(nlhs, plhs);
        return;
    }
    if (strcmp(cmd, "stats") == 0) {
        plhs[0] = mxCreateDoubleMatrix(1, 3, mxREAL);
        mxGetDoubles(plhs[0])[0] = core_seconds;
        mxGetDoubles(plhs[0])[1] = core_bytes;
        mxGetDoubles(plhs[0])[2] = core_calls;
        core_seconds = core_bytes = core_calls = 0.0;
        return;
    }
    if (strcmp(cmd, "allreduce") != 0 && strcmp(cmd, "bcast") != 0
        && strcmp(cmd, "gather") != 0 && strcmp(cmd, "barrier") != 0)
        slm_fail(fn, "badarg", "argument 1: unknown command '%s' (known: init, initialized, "
                               "allreduce, bcast, gather, barrier, stats)", cmd);
    need_started();
    /* buffers left by an error raised after their collective completed
     * (an Octave allocation failing): no request uses them */
    coll_done();
    if (strcmp(cmd, "allreduce") == 0)
        cmd_allreduce(nrhs, prhs, plhs);
    else if (strcmp(cmd, "bcast") == 0)
        cmd_bcast(nrhs, prhs, plhs);
    else if (strcmp(cmd, "gather") == 0)
        cmd_gather(nrhs, prhs, plhs);
    else
        cmd_barrier();
}
