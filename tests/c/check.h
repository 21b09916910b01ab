/* check.h - the tiny harness of the C unit tests: each CHECK counts once. */
#ifndef SLUICE_CHECK_H
#define SLUICE_CHECK_H

#include <math.h>
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

/* Print the closing line and return the process exit code. */
static int check_report_(const char *name)
{
    printf("%s: %d passed, %d failed\n", name, check_passed_, check_failed_);
    return check_failed_ ? 1 : 0;
}
#define CHECK_DONE(name) return check_report_(name)

#endif
