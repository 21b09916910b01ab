/* mexutil.c - argument checks and error raising shared by every gateway. */
#include "mexutil.h"

#include <limits.h>
#include <math.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <gsl/gsl_errno.h>
#ifdef _OPENMP
#include <omp.h>
#endif

const double *slm_doubles(const mxArray *a)
{
    /* mxGetDoubles aborts Octave 7.3 on a range (1:5) and on copies made
     * by mxDuplicateArray; mxGetData reads every real double array */
    return (const double *)mxGetData(a);
}

void slm_init(void)
{
    gsl_set_error_handler_off();
}

void slm_fail(const char *fn, const char *reason, const char *fmt, ...)
{
    char id[128], msg[1024];
    va_list ap;
    snprintf(id, sizeof id, "sluice:%s:%s", fn, reason);
    va_start(ap, fmt);
    vsnprintf(msg, sizeof msg, fmt, ap);
    va_end(ap);
    mexErrMsgIdAndTxt(id, "%s", msg);
    abort(); /* not reached: mexErrMsgIdAndTxt does not return */
}

void slm_raise(const char *fn, const sl_error *err)
{
    /* the gateways' polls stop a run only for Ctrl-C */
    if (err->status == SL_EINTERRUPT)
        slm_fail(fn, "interrupted", "%s (Ctrl-C); no result is returned",
                 err->message[0] ? err->message : "the run was interrupted");
    slm_fail(fn, err->reason[0] ? err->reason : "failed", "%s",
             err->message[0] ? err->message : sl_status_name(err->status));
}

const char *slm_caller(const char *gateway, const mxArray *settings)
{
    const mxArray *f;
    char *name;
    size_t k, len;
    if (!mxIsStruct(settings) || mxGetNumberOfElements(settings) != 1)
        slm_fail(gateway, "badclass", "argument 1 (settings): expected a scalar struct");
    f = slm_field(gateway, settings, "caller", 1);
    name = slm_string(gateway, f, 1, "caller");
    len = strlen(name);
    for (k = 0; k < len; k++)
        if (!((name[k] >= 'a' && name[k] <= 'z') || (name[k] >= '0' && name[k] <= '9') ||
              name[k] == '_'))
            break;
    if (len == 0 || len > 40 || k < len || name[0] < 'a' || name[0] > 'z')
        slm_fail(gateway, "badcaller",
                 "argument 1 (settings): caller must name a function (lowercase letters, "
                 "digits and _, at most 40), got '%.40s'", name);
    return name;
}

void slm_nargs(const char *fn, int nrhs, int min_in, int max_in, int nlhs,
               int max_out)
{
    if (nrhs < min_in || nrhs > max_in) {
        if (min_in == max_in)
            slm_fail(fn, "nargin", "expected %d input arguments, got %d",
                     min_in, nrhs);
        slm_fail(fn, "nargin", "expected %d to %d input arguments, got %d",
                 min_in, max_in, nrhs);
    }
    if (nlhs > max_out)
        slm_fail(fn, "nargout", "at most %d output arguments, asked for %d",
                 max_out, nlhs);
}

void slm_describe(const mxArray *a, char *buf, size_t len)
{
    const mwSize *d = mxGetDimensions(a);
    mwSize nd = mxGetNumberOfDimensions(a), k;
    size_t used = 0;
    buf[0] = '\0';
    for (k = 0; k < nd && used + 24 < len; k++)
        used += (size_t)snprintf(buf + used, len - used, k ? "x%lu" : "%lu",
                                 (unsigned long)d[k]);
    snprintf(buf + used, len - used, " %s%s%s",
             mxIsSparse(a) ? "sparse " : "",
             mxIsComplex(a) ? "complex " : "", mxGetClassName(a));
}

const double *slm_matrix(const char *fn, const mxArray *a, int pos,
                         const char *name, size_t rows, size_t cols,
                         int flags)
{
    char got[96], want[96];
    size_t r, c, n, i;
    const double *x;
    slm_describe(a, got, sizeof got);
    if (flags & SLM_VECTOR) {
        if (rows)
            snprintf(want, sizeof want, "a real double vector of length %lu",
                     (unsigned long)rows);
        else
            snprintf(want, sizeof want, "a real double vector");
    } else if (rows && cols) {
        snprintf(want, sizeof want, "a real double %lux%lu matrix",
                 (unsigned long)rows, (unsigned long)cols);
    } else if (rows) {
        snprintf(want, sizeof want, "a real double matrix with %lu rows",
                 (unsigned long)rows);
    } else if (cols) {
        snprintf(want, sizeof want, "a real double matrix with %lu columns",
                 (unsigned long)cols);
    } else {
        snprintf(want, sizeof want, "a real double matrix");
    }
    if (!mxIsDouble(a) || mxIsComplex(a) || mxIsSparse(a))
        slm_fail(fn, "badclass", "argument %d (%s): expected %s, got %s", pos,
                 name, want, got);
    if (mxGetNumberOfDimensions(a) > 2)
        slm_fail(fn, "badsize", "argument %d (%s): expected %s, got %s", pos,
                 name, want, got);
    r = mxGetM(a);
    c = mxGetN(a);
    n = r * c;
    if (n == 0) {
        if (!(flags & SLM_ALLOW_EMPTY))
            slm_fail(fn, "empty", "argument %d (%s): expected %s, got %s", pos,
                     name, want, got);
    } else if (flags & SLM_VECTOR) {
        if ((r != 1 && c != 1) || (rows && n != rows))
            slm_fail(fn, "badsize", "argument %d (%s): expected %s, got %s",
                     pos, name, want, got);
    } else if ((rows && r != rows) || (cols && c != cols)) {
        slm_fail(fn, "badsize", "argument %d (%s): expected %s, got %s", pos,
                 name, want, got);
    }
    x = slm_doubles(a);
    if ((flags & (SLM_ALLOW_NAN | SLM_ALLOW_INF)) != (SLM_ALLOW_NAN | SLM_ALLOW_INF)) {
        for (i = 0; i < n; i++) {
            double v = x[i];
            if (isnan(v) && !(flags & SLM_ALLOW_NAN))
                slm_fail(fn, "nonfinite",
                         "argument %d (%s): element %lu is NaN; expected finite values",
                         pos, name, (unsigned long)(i + 1));
            if (isinf(v) && !(flags & SLM_ALLOW_INF))
                slm_fail(fn, "nonfinite",
                         "argument %d (%s): element %lu is infinite; expected finite values",
                         pos, name, (unsigned long)(i + 1));
        }
    }
    return x;
}

double slm_scalar(const char *fn, const mxArray *a, int pos, const char *name)
{
    char got[96];
    slm_describe(a, got, sizeof got);
    if (!mxIsDouble(a) || mxIsComplex(a) || mxIsSparse(a))
        slm_fail(fn, "badclass",
                 "argument %d (%s): expected a real double scalar, got %s", pos,
                 name, got);
    if (mxGetNumberOfElements(a) != 1)
        slm_fail(fn, "badsize",
                 "argument %d (%s): expected a real double scalar, got %s", pos,
                 name, got);
    if (!isfinite(slm_doubles(a)[0]))
        slm_fail(fn, "nonfinite", "argument %d (%s): expected a finite value",
                 pos, name);
    return slm_doubles(a)[0];
}

double slm_integer(const char *fn, const mxArray *a, int pos,
                   const char *name, double lo, double hi)
{
    double v = slm_scalar(fn, a, pos, name);
    if (v != floor(v) || v < lo || v > hi)
        slm_fail(fn, "badvalue",
                 "argument %d (%s): expected a whole number from %.17g to %.17g, got %.17g",
                 pos, name, lo, hi, v);
    return v;
}

char *slm_string(const char *fn, const mxArray *a, int pos, const char *name)
{
    char got[96];
    char *s;
    slm_describe(a, got, sizeof got);
    if (!mxIsChar(a) || (mxGetM(a) > 1 && mxGetNumberOfElements(a) > 0))
        slm_fail(fn, "badclass",
                 "argument %d (%s): expected a character string, got %s", pos,
                 name, got);
    s = slm_string_copy(a);
    if (s == NULL)
        slm_fail(fn, "badclass", "argument %d (%s): could not read the string",
                 pos, name);
    return s;
}

char *slm_string_copy(const mxArray *a)
{
    /* Octave's mxArrayToString returns memory that is not freed when the
     * gateway returns or an error unwinds: copy it into mxMalloc'd memory
     * (freed then, or earlier by mxFree) and free the original at once */
    char *t = mxArrayToString(a), *s;
    size_t len;
    if (t == NULL)
        return NULL;
    len = strlen(t);
    s = mxMalloc(len + 1);
    if (s != NULL)
        memcpy(s, t, len + 1);
    mxFree(t);
    return s;
}

const mxArray *slm_field(const char *fn, const mxArray *s, const char *field,
                         int required)
{
    const mxArray *f;
    if (!mxIsStruct(s) || mxGetNumberOfElements(s) != 1)
        slm_fail(fn, "badclass", "expected a scalar struct with field '%s'",
                 field);
    f = mxGetField(s, 0, field);
    if (f == NULL && required)
        slm_fail(fn, "missingfield", "the struct has no field '%s'", field);
    return f;
}

void *slm_alloc(const char *fn, size_t count, size_t size)
{
    size_t bytes;
    void *probe;
    if (sl_size_mul(count, size, &bytes))
        slm_fail(fn, "nomemory", "the requested size (%lu x %lu bytes) overflows",
                 (unsigned long)count, (unsigned long)size);
    if (bytes == 0)
        bytes = 1;
    /* Octave's mxMalloc raises a bare error when memory runs out; probing
     * with malloc first lets us raise our own identifier instead. */
    probe = malloc(bytes);
    if (probe == NULL)
        slm_fail(fn, "nomemory", "cannot allocate %.3g bytes", (double)bytes);
    free(probe);
    return mxMalloc(bytes);
}

mxArray *slm_create(const char *fn, size_t rows, size_t cols)
{
    size_t n, bytes;
    void *probe;
    if (sl_size_mul(rows, cols, &n) || sl_size_mul(n, sizeof(double), &bytes))
        slm_fail(fn, "nomemory", "a %lux%lu result overflows",
                 (unsigned long)rows, (unsigned long)cols);
    probe = malloc(bytes ? bytes : 1);
    if (probe == NULL)
        slm_fail(fn, "nomemory", "cannot allocate a %lux%lu result",
                 (unsigned long)rows, (unsigned long)cols);
    free(probe);
    return mxCreateUninitNumericMatrix(rows, cols, mxDOUBLE_CLASS, mxREAL);
}

sl_prior_entry *slm_prior_entries(const char *fn, const mxArray *const *args, int pos,
                                  size_t *p)
{
    static const char *const names[5] = {"dist_ids", "a", "b", "lo", "hi"};
    const double *v[5];
    sl_prior_entry *prior;
    size_t k, n;
    int i;
    v[0] = slm_matrix(fn, args[0], pos, names[0], 0, 0, SLM_VECTOR);
    n = mxGetNumberOfElements(args[0]);
    /* the numbers of each entry are checked by the core, entry by entry */
    for (i = 1; i < 5; i++)
        v[i] = slm_matrix(fn, args[i], pos + i, names[i], n, 0,
                          SLM_VECTOR | SLM_ALLOW_NAN | SLM_ALLOW_INF);
    prior = slm_alloc(fn, n, sizeof *prior);
    for (k = 0; k < n; k++) {
        double id = v[0][k];
        if (id != floor(id) || fabs(id) > (double)INT_MAX)
            slm_fail(fn, "baddist",
                     "argument %d (dist_ids): element %lu is %.17g; expected a "
                     "whole-number distribution id from 0 to %d",
                     pos, (unsigned long)(k + 1), id, SL_DIST_COUNT - 1);
        prior[k].dist = (int)id;
        prior[k].a = v[1][k];
        prior[k].b = v[2][k];
        prior[k].lo = v[3][k];
        prior[k].hi = v[4][k];
    }
    *p = n;
    return prior;
}

sl_prior_entry *slm_prior(const char *fn, const mxArray *const *args, int pos,
                          size_t *p)
{
    sl_prior_entry *prior = slm_prior_entries(fn, args, pos, p);
    sl_error err;
    size_t k;
    sl_error_clear(&err);
    for (k = 0; k < *p; k++)
        if (sl_prior_check(&prior[k], k + 1, &err) != SL_OK)
            slm_raise(fn, &err);
    return prior;
}

int slm_threads(double requested)
{
    if (requested >= 1)
        return (int)requested;
#ifdef _OPENMP
    return omp_get_max_threads();
#else
    return 1;
#endif
}
