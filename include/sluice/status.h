/* status.h - status codes and the caller-owned error record of libsluice. */
#ifndef SLUICE_STATUS_H
#define SLUICE_STATUS_H

#include <stddef.h>

#ifdef __cplusplus
extern "C" {
#endif

/* Every public function of the core returns one of these. */
typedef enum {
    SL_OK = 0,
    SL_EINVAL,      /* an argument is out of its domain (size, value, name) */
    SL_ENOMEM,      /* an allocation failed or a size would overflow */
    SL_EDEGENERATE, /* all weights zero / every log-likelihood -Inf */
    SL_ENUMERIC,    /* numerical failure: non-finite result, not positive definite */
    SL_EMODEL,      /* the model (or a user callback) reported a failure */
    SL_EINTERRUPT   /* the caller asked the run to stop */
} sl_status;

/* Filled by the one function every failure goes through (sl_fail).
 * `reason` is a short lower-case token without spaces; gateways turn it
 * into the identifier sluice:<function>:<reason>. */
typedef struct {
    sl_status status;
    char reason[40];
    char message[480];
} sl_error;

/* Clear an error record (status SL_OK, empty strings). NULL is allowed. */
void sl_error_clear(sl_error *err);

/* Record a failure and return `status`. The single breakpoint for every
 * error raised by the core. `err` may be NULL. */
sl_status sl_fail(sl_error *err, sl_status status, const char *reason,
                  const char *fmt, ...)
#if defined(__GNUC__)
    __attribute__((format(printf, 4, 5)))
#endif
    ;

/* A fixed English name for a status code ("ok", "invalid argument", ...). */
const char *sl_status_name(sl_status status);

/* Multiply a*b into *out; returns 0 on success and 1 if the product would
 * overflow size_t (so callers can turn absurd sizes into SL_ENOMEM). */
int sl_size_mul(size_t a, size_t b, size_t *out);

#ifdef __cplusplus
}
#endif
#endif
