/* mexutil.h - argument checks and error raising shared by every gateway. */
#ifndef SLUICE_MEXUTIL_H
#define SLUICE_MEXUTIL_H

#include <stddef.h>
#include <stdint.h>
#include <stdio.h>

#include "mex.h"
#include "sluice/prior.h"
#include "sluice/status.h"

/* Flags for slm_matrix. */
enum {
    SLM_ALLOW_EMPTY = 1,  /* 0-element input accepted                  */
    SLM_ALLOW_NAN = 2,    /* NaN entries accepted                      */
    SLM_ALLOW_INF = 4,    /* +-Inf entries accepted                    */
    SLM_VECTOR = 8        /* any 1 x n or n x 1 shape                  */
};

/* The data of a real double array passed in (use this, never mxGetDoubles,
 * on arrays that come from Octave: a range would abort Octave). */
const double *slm_doubles(const mxArray *a);

/* Turn GSL's aborting error handler off. Every gateway calls it first. */
void slm_init(void);

/* Raise sluice:<fn>:<reason> with a printf-style message. Never returns. */
void slm_fail(const char *fn, const char *reason, const char *fmt, ...)
#if defined(__GNUC__)
    __attribute__((format(printf, 3, 4), noreturn))
#endif
    ;

/* Raise the core's error record as sluice:<fn>:<err->reason>. */
void slm_raise(const char *fn, const sl_error *err)
#if defined(__GNUC__)
    __attribute__((noreturn))
#endif
    ;

/* The name of the public function a settings struct was built for (its
 * field 'caller', set by the one builder of a run's settings): the <fn>
 * of every error the gateway raises, so that a workflow's errors carry
 * its own identifier. `gateway` names the errors of a settings struct
 * without a usable caller (sluice:<gateway>:badclass / badcaller): a
 * lowercase name of letters, digits and '_', 1 to 40 characters. */
const char *slm_caller(const char *gateway, const mxArray *settings);

/* Check nrhs/nlhs; raises sluice:<fn>:nargin / nargout. */
void slm_nargs(const char *fn, int nrhs, int min_in, int max_in, int nlhs,
               int max_out);

/* Describe an array's size and class, e.g. "3x2 single", "1x1 complex double". */
void slm_describe(const mxArray *a, char *buf, size_t len);

/* Check that `a` is a real, full double matrix with `rows` rows and `cols`
 * columns (0 = any) and finite entries (unless flags allow NaN / Inf). With
 * SLM_VECTOR, `rows` is the required length (0 = any) and any vector
 * orientation is accepted. `pos` is the 1-based argument position, `name`
 * its name; messages read "argument 2 (weights): expected ..., got ...".
 * Reasons: "badclass", "badsize", "empty", "nonfinite". */
const double *slm_matrix(const char *fn, const mxArray *a, int pos,
                         const char *name, size_t rows, size_t cols,
                         int flags);

/* A real finite double scalar. */
double slm_scalar(const char *fn, const mxArray *a, int pos, const char *name);

/* A whole number in [lo, hi] given as a real double scalar. */
double slm_integer(const char *fn, const mxArray *a, int pos,
                   const char *name, double lo, double hi);

/* A character row vector, returned as an mxMalloc'd C string: freed when
 * the gateway returns or an error unwinds (or earlier with mxFree). */
char *slm_string(const char *fn, const mxArray *a, int pos, const char *name);

/* The text of a char array as an mxMalloc'd C string like slm_string's,
 * or NULL when it cannot be read. Use it, never mxArrayToString directly:
 * Octave does not free what that returns. */
char *slm_string_copy(const mxArray *a);

/* A field of a scalar struct, or NULL when absent (required = 0) / raise
 * sluice:<fn>:missingfield (required = 1). */
const mxArray *slm_field(const char *fn, const mxArray *s, const char *field,
                         int required);

/* mxMalloc count*size bytes, raising sluice:<fn>:nomemory (not an Octave
 * crash or a bare Octave error) if the size overflows or cannot be had. */
void *slm_alloc(const char *fn, size_t count, size_t size);

/* An uninitialised rows x cols double matrix, with the same size checks. */
mxArray *slm_create(const char *fn, size_t rows, size_t cols);

/* The p entries of a prior as slm_prior reads them, unchecked: only the
 * ids are whole numbers (any may be out of range). */
sl_prior_entry *slm_prior_entries(const char *fn, const mxArray *const *args, int pos,
                                  size_t *p);

/* The p entries of a prior given as five vectors, args[0..4] = argument
 * positions pos .. pos+4: dist_ids (the core's distribution ids, whole
 * numbers), a, b, lo, hi (each of length p, any values: the core checks
 * them). Every entry passes sl_prior_check (reasons "baddist",
 * "badprior"); *p receives their number. mxMalloc'd, freed with the call. */
sl_prior_entry *slm_prior(const char *fn, const mxArray *const *args, int pos,
                          size_t *p);

/* Platform services (mex/mexplatform.c, the one file with platform code):
 * a monotonic clock in seconds, and whether standard output is a terminal. */
double slm_monotonic_seconds(void);
int slm_stdout_is_terminal(void);
/* The process id; flush a file's data to the disk (0: done); replace
 * file `to` by `from` at once (0: done), so a reader never sees a part. */
long slm_pid(void);
int slm_file_sync(FILE *f);
int slm_file_replace(const char *from, const char *to);
/* Let the processor go for about s seconds (nothing where it cannot). */
void slm_sleep_seconds(double s);

/* 1 when a Ctrl-C is pending in Octave, which it then takes over (the
 * interpreter will not act on it): the caller stops its run and raises
 * sluice:<fn>:interrupted. Always 0 where the pending interrupt cannot be
 * read (then Ctrl-C reaches the run only as the host's own interrupt). */
int slm_take_interrupt(void);

/* The function a gateway loaded in this process exports under `name`
 * (Octave loads gateways with their symbols global), or NULL when none
 * does or the platform cannot look it up. */
typedef void (*slm_function)(void);
slm_function slm_symbol(const char *name);

/* Numbers of threads to use: `requested` if > 0, else omp_get_max_threads(). */
int slm_threads(double requested);

#endif
