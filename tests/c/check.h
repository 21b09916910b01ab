/* check.h - the tiny harness of the C unit tests: each CHECK counts once. */
#ifndef SLUICE_CHECK_H
#define SLUICE_CHECK_H

#include <math.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

static int check_passed_ = 0, check_failed_ = 0;

#define CHECK(cond, ...)                                                      \
    do {                                                                      \
        if (cond) {                                                           \
            check_passed_++;                                                  \
        } else {                                                              \
            check_failed_++;                                                  \
            printf("FAIL %s:%d: ", __FILE__, __LINE__);                       \
            printf(__VA_ARGS__);                                              \
            printf("\n");                                                     \
        }                                                                     \
    } while (0)

/* |a - b| <= tol, both finite (or both the same infinity). */
#define CHECK_CLOSE(a, b, tol, what)                                          \
    do {                                                                      \
        double ca_ = (a), cb_ = (b);                                          \
        int ok_ = (ca_ == cb_) || fabs(ca_ - cb_) <= (tol);                   \
        CHECK(ok_, "%s: %.17g vs %.17g (tol %.3g)", (what), ca_, cb_,         \
              (double)(tol));                                                 \
    } while (0)

/* Relative closeness |a - b| <= tol * max(1, |b|). */
#define CHECK_REL(a, b, tol, what)                                            \
    do {                                                                      \
        double ra_ = (a), rb_ = (b);                                          \
        double sc_ = fabs(rb_) > 1 ? fabs(rb_) : 1;                           \
        int ok_ = (ra_ == rb_) || fabs(ra_ - rb_) <= (tol) * sc_;             \
        CHECK(ok_, "%s: %.17g vs %.17g (rel tol %.3g)", (what), ra_, rb_,     \
              (double)(tol));                                                 \
    } while (0)

/* 1 when the environment sets SL_CHECK_LIGHT (make check-valgrind, where
 * every instruction costs about 50 times more): a test then runs its
 * longest loops over fewer cases, or skips them with a SKIP line. */
static inline int check_light_(void)
{
    const char *e = getenv("SL_CHECK_LIGHT");
    return e != NULL && e[0] != '\0' && strcmp(e, "0") != 0;
}

/* Checked allocation. A test takes its buffers with ck_malloc, ck_calloc
 * and ck_aligned_alloc and gives them back with ck_free (never mix them
 * with the C library's malloc and free). The harness keeps every block on a
 * list, so when an allocation fails (make check-alloc fails them on
 * purpose) it frees all the blocks the test still holds, prints
 * "SKIP file:line: allocation failed" and ends the process with status
 * CHECK_NOMEM_STATUS (1 when a check had failed before): a test never
 * goes on with a NULL buffer, and never hands one to the core. Each block carries a header of
 * CHECK_BLOCK_HEAD_ bytes (ck_aligned_alloc: max(alignment, that)) in
 * front of what the test sees; the list is guarded for the tests that
 * allocate inside an OpenMP region. */
#define CHECK_NOMEM_STATUS 77
#define CHECK_BLOCK_HEAD_ 32

typedef struct check_block_ {
    struct check_block_ *prev, *next;
    void *raw; /* what the allocator returned */
} check_block_;

static check_block_ check_blocks_ = {&check_blocks_, &check_blocks_, NULL};

static inline void *check_hold_(void *raw, size_t head)
{
    check_block_ *b;
    if (raw == NULL)
        return NULL;
    b = (check_block_ *)(void *)((unsigned char *)raw + head - sizeof *b);
    b->raw = raw;
#pragma omp critical(check_blocks_)
    {
        b->prev = check_blocks_.prev;
        b->next = &check_blocks_;
        check_blocks_.prev->next = b;
        check_blocks_.prev = b;
    }
    return (unsigned char *)raw + head;
}

static inline void ck_free(void *p)
{
    check_block_ *b;
    void *raw;
    if (p == NULL)
        return;
    b = (check_block_ *)(void *)((unsigned char *)p - sizeof *b);
#pragma omp critical(check_blocks_)
    {
        b->prev->next = b->next;
        b->next->prev = b->prev;
    }
    raw = b->raw;
    free(raw);
}

/* The failure: give back every block, say where, end the process. */
static inline void check_nomem_(const char *file, int line)
{
    check_block_ *b, *next;
#pragma omp critical(check_blocks_)
    {
        for (b = check_blocks_.next; b != &check_blocks_; b = next) {
            next = b->next;
            free(b->raw);
        }
        check_blocks_.next = check_blocks_.prev = &check_blocks_;
    }
    printf("SKIP %s:%d: allocation failed; the test stops here\n", file, line);
    printf("%d passed, %d failed before it\n", check_passed_, check_failed_);
    exit(check_failed_ ? 1 : CHECK_NOMEM_STATUS);
}

static inline void *check_malloc_(size_t n, const char *file, int line)
{
    void *p = NULL;
    if (n <= SIZE_MAX - CHECK_BLOCK_HEAD_)
        p = check_hold_(malloc(CHECK_BLOCK_HEAD_ + n), CHECK_BLOCK_HEAD_);
    if (p == NULL)
        check_nomem_(file, line);
    return p;
}

static inline void *check_calloc_(size_t count, size_t size, const char *file, int line)
{
    void *p;
    if (size != 0 && count > (SIZE_MAX - CHECK_BLOCK_HEAD_) / size)
        check_nomem_(file, line);
    p = check_malloc_(count * size, file, line);
    memset(p, 0, count * size);
    return p;
}

/* align: a power of two; the block starts at a multiple of it. */
static inline void *check_aligned_alloc_(size_t align, size_t n, const char *file, int line)
{
    size_t head = align > CHECK_BLOCK_HEAD_ ? align : CHECK_BLOCK_HEAD_, total;
    void *p = NULL;
    if (n <= SIZE_MAX - 2 * head) {
        total = (head + n + head - 1) / head * head;
        p = check_hold_(aligned_alloc(head, total), head);
    }
    if (p == NULL)
        check_nomem_(file, line);
    return p;
}

#define ck_malloc(n) check_malloc_((n), __FILE__, __LINE__)
#define ck_calloc(count, size) check_calloc_((count), (size), __FILE__, __LINE__)
#define ck_aligned_alloc(align, n) check_aligned_alloc_((align), (n), __FILE__, __LINE__)

/* Print the closing line and return the process exit code. */
static int check_report_(const char *name)
{
    printf("%s: %d passed, %d failed\n", name, check_passed_, check_failed_);
    return check_failed_ ? 1 : 0;
}
#define CHECK_DONE(name) return check_report_(name)

#endif
