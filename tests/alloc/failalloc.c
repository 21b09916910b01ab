/* failalloc.c - a counting, failing allocator for the C unit tests
 * (make check-alloc).
 *
 * Linked into a test binary with
 *   -Wl,--wrap=malloc,--wrap=calloc,--wrap=realloc,--wrap=free,
 *        --wrap=aligned_alloc,--wrap=posix_memalign
 * it stands between the allocator and every call the linker resolves at
 * that link: the test's own code and the statically linked core
 * (libsluice.a). Calls made inside shared libraries (GSL, OpenBLAS,
 * libgomp, libc's own stdio) are not wrapped: they are neither counted nor
 * failed.
 *
 * Environment:
 *   SL_FAIL_ALLOC=k        the k-th allocation (counting from 1) returns
 *                          NULL; 0 or unset: none fails
 *   SL_FAIL_ALLOC_MODE=once   only the k-th fails (the default)
 *   SL_FAIL_ALLOC_MODE=after  the k-th and every later one fail
 *   SL_FAIL_ALLOC=each     every k in one run: at each allocation the
 *                          process forks; the child fails that allocation
 *                          (and, with mode after, every later one) with its
 *                          output sent to /dev/null and at most
 *                          FA_CHILD_SECONDS to end, the parent waits for it
 *                          and carries on as a clean run. The child's exit
 *                          is its verdict: 77 (the harness stopped at the
 *                          failure, nothing leaked) or 0 (passed) are
 *                          good, anything else (a signal, 98 for a leak, 1
 *                          for a failed check) is printed as
 *                          "failalloc: each: allocation k: ..." and makes
 *                          the parent end with status 97.
 *
 * A forked child has only the thread that forked. That is enough here:
 * the tests allocate outside OpenMP regions and the core never allocates,
 * so a child runs no parallel region before it ends at its failed
 * allocation; one that did would hang (libgomp's pool is not in the
 * child), which the time limit turns into a bad verdict (signal 14).
 *
 * At exit (a normal return from main or exit(), not a signal) it prints
 * one line on stderr (in mode each, first "failalloc: each: C children, S
 * stopped, P passed, B bad"),
 *   failalloc: A allocations, F failed (first at k), L after it, B live blocks
 * where L counts the allocations attempted after the first failure (0 means
 * the process stopped at the failure, so "once" and "after" coincide) and
 * B the blocks it handed out and never saw freed. B > 0 is a leak: the
 * process then ends with status 98 whatever main returned.
 */
#include <errno.h>
#include <fcntl.h>
#include <pthread.h>
#include <signal.h>
#include <sys/types.h>
#include <sys/wait.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

void *__real_malloc(size_t n);
void *__real_calloc(size_t count, size_t size);
void *__real_realloc(void *p, size_t n);
void __real_free(void *p);
void *__real_aligned_alloc(size_t align, size_t n);
int __real_posix_memalign(void **out, size_t align, size_t n);

void *__wrap_malloc(size_t n);
void *__wrap_calloc(size_t count, size_t size);
void *__wrap_realloc(void *p, size_t n);
void __wrap_free(void *p);
void *__wrap_aligned_alloc(size_t align, size_t n);
int __wrap_posix_memalign(void **out, size_t align, size_t n);

#define FA_LEAK_STATUS 98
#define FA_EACH_STATUS 97
#define FA_CHILD_SECONDS 120

static unsigned long fa_fail_at = 0; /* 0: never */
static int fa_after = 0;             /* fail every allocation after fa_fail_at too */
static unsigned long fa_count = 0, fa_failed = 0, fa_later = 0;
static int fa_ready = 0;
static int fa_each = 0, fa_child = 0; /* mode each; this process is a child */
static unsigned long fa_kids = 0, fa_kids_stopped = 0, fa_kids_passed = 0, fa_kids_bad = 0;

/* The live blocks: an open-addressing set of pointers (linear probing,
 * backward-shift deletion), its memory from the real allocator. */
static pthread_mutex_t fa_lock = PTHREAD_MUTEX_INITIALIZER;
static uintptr_t *fa_set = NULL;
static size_t fa_cap = 0, fa_live = 0;

static size_t fa_slot(uintptr_t p, size_t cap)
{
    uint64_t h = (uint64_t)p * 0x9E3779B97F4A7C15ull;
    return (size_t)(h >> 17) & (cap - 1);
}

/* (with fa_lock held) */
static void fa_insert(uintptr_t p)
{
    size_t i;
    if (2 * (fa_live + 1) > fa_cap) {
        size_t ncap = fa_cap ? 2 * fa_cap : 4096, k;
        uintptr_t *nset = __real_calloc(ncap, sizeof *nset);
        if (nset == NULL) {
            static const char msg[] = "failalloc: out of memory for the block table\n";
            (void)!write(2, msg, sizeof msg - 1);
            _exit(FA_LEAK_STATUS);
        }
        for (k = 0; k < fa_cap; k++)
            if (fa_set[k] != 0) {
                i = fa_slot(fa_set[k], ncap);
                while (nset[i] != 0)
                    i = (i + 1) & (ncap - 1);
                nset[i] = fa_set[k];
            }
        __real_free(fa_set);
        fa_set = nset;
        fa_cap = ncap;
    }
    i = fa_slot(p, fa_cap);
    while (fa_set[i] != 0)
        i = (i + 1) & (fa_cap - 1);
    fa_set[i] = p;
    fa_live++;
}

/* 1 when p was in the set (and is now removed). (with fa_lock held) */
static int fa_remove(uintptr_t p)
{
    size_t i, j, h;
    if (fa_cap == 0)
        return 0;
    i = fa_slot(p, fa_cap);
    while (fa_set[i] != 0 && fa_set[i] != p)
        i = (i + 1) & (fa_cap - 1);
    if (fa_set[i] == 0)
        return 0;
    /* backward shift: move later members of the run into the hole */
    j = i;
    for (;;) {
        j = (j + 1) & (fa_cap - 1);
        if (fa_set[j] == 0)
            break;
        h = fa_slot(fa_set[j], fa_cap);
        /* fa_set[j] may move to i when its home h is not in (i, j] */
        if ((i < j) ? (h <= i || h > j) : (h <= i && h > j)) {
            fa_set[i] = fa_set[j];
            i = j;
        }
    }
    fa_set[i] = 0;
    fa_live--;
    return 1;
}

static void fa_init(void)
{
    const char *e = getenv("SL_FAIL_ALLOC"), *m = getenv("SL_FAIL_ALLOC_MODE");
    if (e != NULL && strcmp(e, "each") == 0) {
        fa_each = 1;
    } else if (e != NULL && e[0] != '\0') {
        char *end;
        unsigned long k = strtoul(e, &end, 10);
        if (*end != '\0') {
            fprintf(stderr, "failalloc: SL_FAIL_ALLOC=%s is not a count\n", e);
            _exit(2);
        }
        fa_fail_at = k;
    }
    if (m != NULL && m[0] != '\0') {
        if (strcmp(m, "after") == 0)
            fa_after = 1;
        else if (strcmp(m, "once") != 0) {
            fprintf(stderr, "failalloc: SL_FAIL_ALLOC_MODE=%s is neither once nor after\n", m);
            _exit(2);
        }
    }
    fa_ready = 1;
}

/* Count one allocation; 1 when it is to fail. (with fa_lock held) */
static int fa_next(unsigned long *kout)
{
    unsigned long k;
    if (!fa_ready)
        fa_init();
    k = ++fa_count;
    *kout = k;
    if (fa_failed > 0)
        fa_later++;
    if (fa_fail_at != 0 && (k == fa_fail_at || (fa_after && k > fa_fail_at))) {
        fa_failed++;
        return 1;
    }
    return 0;
}

/* Mode each: fork; the child fails allocation k (returns 1), the parent
 * waits for it, records its verdict and returns 0. */
static int fa_fork(unsigned long k)
{
    pid_t pid;
    int status, fd;
    fflush(NULL);
    pid = fork();
    if (pid == 0) {
        fa_child = 1;
        fa_fail_at = k;
        fa_failed = 1;
        fa_later = 0;
        fd = open("/dev/null", O_WRONLY);
        if (fd >= 0) {
            dup2(fd, 1);
            dup2(fd, 2);
            close(fd);
        }
        alarm(FA_CHILD_SECONDS);
        return 1;
    }
    fa_kids++;
    if (pid < 0) {
        fprintf(stderr, "failalloc: each: allocation %lu: fork failed\n", k);
        fa_kids_bad++;
        return 0;
    }
    while (waitpid(pid, &status, 0) < 0)
        if (errno != EINTR) {
            status = -1;
            break;
        }
    if (status != -1 && WIFEXITED(status) && WEXITSTATUS(status) == 77)
        fa_kids_stopped++;
    else if (status != -1 && WIFEXITED(status) && WEXITSTATUS(status) == 0)
        fa_kids_passed++;
    else {
        fa_kids_bad++;
        if (status != -1 && WIFSIGNALED(status))
            fprintf(stderr, "failalloc: each: allocation %lu: signal %d%s\n", k,
                    WTERMSIG(status), WTERMSIG(status) == SIGALRM ? " (time limit)" : "");
        else if (status != -1 && WIFEXITED(status) && WEXITSTATUS(status) == FA_LEAK_STATUS)
            fprintf(stderr, "failalloc: each: allocation %lu: leak\n", k);
        else if (status != -1 && WIFEXITED(status))
            fprintf(stderr, "failalloc: each: allocation %lu: exit %d\n", k, WEXITSTATUS(status));
        else
            fprintf(stderr, "failalloc: each: allocation %lu: lost\n", k);
    }
    return 0;
}

/* 1 when the allocation about to be made is to fail. */
static int fa_should_fail(void)
{
    unsigned long k;
    int fail;
    pthread_mutex_lock(&fa_lock);
    fail = fa_next(&k);
    pthread_mutex_unlock(&fa_lock);
    if (!fail && fa_each && !fa_child)
        fail = fa_fork(k);
    return fail;
}

/* A block the wrapped allocator got (NULL: failed, injected or not):
 * tracked as live, or ENOMEM. */
static void *fa_took(void *p)
{
    if (p == NULL) {
        errno = ENOMEM;
        return NULL;
    }
    pthread_mutex_lock(&fa_lock);
    fa_insert((uintptr_t)p);
    pthread_mutex_unlock(&fa_lock);
    return p;
}

void *__wrap_malloc(size_t n)
{
    return fa_took(fa_should_fail() ? NULL : __real_malloc(n));
}

void *__wrap_calloc(size_t count, size_t size)
{
    return fa_took(fa_should_fail() ? NULL : __real_calloc(count, size));
}

void *__wrap_aligned_alloc(size_t align, size_t n)
{
    return fa_took(fa_should_fail() ? NULL : __real_aligned_alloc(align, n));
}

int __wrap_posix_memalign(void **out, size_t align, size_t n)
{
    int rc = ENOMEM;
    if (!fa_should_fail()) {
        rc = __real_posix_memalign(out, align, n);
        pthread_mutex_lock(&fa_lock);
        if (rc == 0)
            fa_insert((uintptr_t)*out);
        pthread_mutex_unlock(&fa_lock);
    }
    return rc;
}

/* realloc is an allocation (it may move the block); a failed one leaves
 * the old block in place, as the C standard says. realloc(p, 0) is not
 * counted: it is a free. */
void *__wrap_realloc(void *p, size_t n)
{
    void *q = NULL;
    if (p == NULL)
        return __wrap_malloc(n);
    if (n == 0) {
        __wrap_free(p);
        return NULL;
    }
    if (!fa_should_fail()) {
        q = __real_realloc(p, n);
        pthread_mutex_lock(&fa_lock);
        if (q != NULL) {
            fa_remove((uintptr_t)p);
            fa_insert((uintptr_t)q);
        }
        pthread_mutex_unlock(&fa_lock);
    }
    if (q == NULL)
        errno = ENOMEM;
    return q;
}

/* A block this shim did not hand out (one a shared library allocated) is
 * passed on without being counted. */
void __wrap_free(void *p)
{
    if (p == NULL)
        return;
    pthread_mutex_lock(&fa_lock);
    fa_remove((uintptr_t)p);
    pthread_mutex_unlock(&fa_lock);
    __real_free(p);
}

__attribute__((constructor)) static void fa_start(void)
{
    pthread_mutex_lock(&fa_lock);
    if (!fa_ready)
        fa_init();
    pthread_mutex_unlock(&fa_lock);
}

/* The report; runs after main's return or exit(), before stdio's final
 * flush, so the test's own output is flushed first. */
__attribute__((destructor)) static void fa_report(void)
{
    unsigned long live;
    pthread_mutex_lock(&fa_lock);
    live = (unsigned long)fa_live;
    fflush(stdout);
    if (fa_each && !fa_child)
        fprintf(stderr, "failalloc: each: %lu children, %lu stopped, %lu passed, %lu bad\n",
                fa_kids, fa_kids_stopped, fa_kids_passed, fa_kids_bad);
    if (fa_failed > 0)
        fprintf(stderr,
                "failalloc: %lu allocations, %lu failed (first at %lu), %lu after it, "
                "%lu live blocks\n",
                fa_count, fa_failed, fa_fail_at, fa_later, live);
    else
        fprintf(stderr, "failalloc: %lu allocations, 0 failed, %lu live blocks\n", fa_count,
                live);
    pthread_mutex_unlock(&fa_lock);
    if (live > 0) {
        fprintf(stderr, "failalloc: LEAK of %lu blocks\n", live);
        fflush(NULL);
        _exit(FA_LEAK_STATUS);
    }
    if (fa_each && !fa_child && fa_kids_bad > 0) {
        fflush(NULL);
        _exit(FA_EACH_STATUS);
    }
}
