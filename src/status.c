/* status.c - the one place every core failure is recorded. */
#include "sluice/status.h"

#include <stdarg.h>
#include <stdint.h>
#include <stdio.h>
#include <string.h>

void sl_error_clear(sl_error *err)
{
    if (err == NULL)
        return;
    err->status = SL_OK;
    err->reason[0] = '\0';
    err->message[0] = '\0';
}

sl_status sl_fail(sl_error *err, sl_status status, const char *reason,
                  const char *fmt, ...)
{
    if (err != NULL) {
        va_list ap;
        err->status = status;
        snprintf(err->reason, sizeof err->reason, "%s",
                 reason != NULL ? reason : "failed");
        va_start(ap, fmt);
        vsnprintf(err->message, sizeof err->message, fmt, ap);
        va_end(ap);
    }
    return status;
}

const char *sl_status_name(sl_status status)
{
    switch (status) {
    case SL_OK: return "ok";
    case SL_EINVAL: return "invalid argument";
    case SL_ENOMEM: return "out of memory";
    case SL_EDEGENERATE: return "degenerate weights";
    case SL_ENUMERIC: return "numerical failure";
    case SL_EMODEL: return "model failure";
    case SL_EINTERRUPT: return "interrupted";
    }
    return "unknown status";
}

int sl_size_mul(size_t a, size_t b, size_t *out)
{
    if (a != 0 && b > SIZE_MAX / a)
        return 1;
    *out = a * b;
    return 0;
}
