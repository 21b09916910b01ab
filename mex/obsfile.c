/* obsfile.c - gateway: tab = sluice.kernel.obsfile('read', file),
 * [tab, nmissing] = ..., sluice.kernel.obsfile('write', file, tab). */
#include "mexutil.h"
#include "sluice/obsfile.h"

#include <errno.h>
#include <stdlib.h>
#include <stdio.h>
#include <string.h>

/* Raise the core's error with the file name in front. */
static void raise_in(const char *fn, const char *file, const sl_error *err)
{
    slm_fail(fn, err->reason[0] ? err->reason : "failed", "%s %s", file,
             err->message[0] ? err->message : sl_status_name(err->status));
}

static void do_read(int nlhs, mxArray *plhs[], const mxArray *arg)
{
    static const char *FN = "read_obs";
    char *file = slm_string(FN, arg, 2, "filename");
    FILE *fp;
    long flen;
    size_t len, got, j, i;
    char *buf;
    sl_obs_size sz;
    sl_obs_table tab;
    sl_error err;
    const char **names;
    mxArray *out;

    fp = fopen(file, "rb");
    if (fp == NULL)
        slm_fail(FN, "nofile", "cannot open %s: %s", file, strerror(errno));
    if (fseek(fp, 0, SEEK_END) != 0 || (flen = ftell(fp)) < 0 ||
        fseek(fp, 0, SEEK_SET) != 0) {
        int e = errno;
        fclose(fp);
        slm_fail(FN, "nofile", "cannot read %s: %s", file, strerror(e));
    }
    len = (size_t)flen;
    {
        /* probe the allocation before it can raise with the file open */
        void *probe = malloc(len ? len : 1);
        if (probe == NULL) {
            fclose(fp);
            slm_fail(FN, "nomemory", "cannot hold %s (%.3g bytes) in memory",
                     file, (double)len);
        }
        free(probe);
    }
    buf = mxMalloc(len ? len : 1);
    got = len ? fread(buf, 1, len, fp) : 0;
    if (got != len || ferror(fp)) {
        int e = errno;
        fclose(fp);
        slm_fail(FN, "nofile", "cannot read %s: %s", file,
                 e ? strerror(e) : "short read");
    }
    fclose(fp);

    if (sl_obsfile_measure(buf, len, &sz, &err) != SL_OK)
        raise_in(FN, file, &err);
    tab.names = slm_alloc(FN, sz.name_bytes, 1);
    tab.name_at = slm_alloc(FN, sz.cols, sizeof(size_t));
    tab.is_text = slm_alloc(FN, sz.cols, sizeof(int));
    tab.slot = slm_alloc(FN, sz.cols, sizeof(size_t));
    {
        size_t nn, nt;
        if (sl_size_mul(sz.rows, sz.nnum, &nn) || sl_size_mul(sz.rows, sz.ntext, &nt))
            slm_fail(FN, "nomemory", "the table of %s is too large", file);
        tab.num = slm_alloc(FN, nn, sizeof(double));
        tab.text_at = slm_alloc(FN, nt, sizeof(size_t));
    }
    tab.text = slm_alloc(FN, sz.text_bytes, 1);
    if (sl_obsfile_parse(buf, len, &sz, &tab, &err) != SL_OK)
        raise_in(FN, file, &err);
    mxFree(buf);

    names = slm_alloc(FN, sz.cols, sizeof *names);
    for (j = 0; j < sz.cols; j++)
        names[j] = tab.names + tab.name_at[j];
    out = mxCreateStructMatrix(1, 1, (int)sz.cols, names);
    for (j = 0; j < sz.cols; j++) {
        size_t k = tab.slot[j];
        mxArray *c;
        if (tab.is_text[j]) {
            c = mxCreateCellMatrix(sz.rows, 1);
            for (i = 0; i < sz.rows; i++)
                mxSetCell(c, i, mxCreateString(tab.text + tab.text_at[i + k * sz.rows]));
        } else {
            c = slm_create(FN, sz.rows, 1);
            if (sz.rows > 0)
                memcpy(mxGetDoubles(c), tab.num + k * sz.rows, sz.rows * sizeof(double));
        }
        mxSetFieldByNumber(out, 0, (int)j, c);
    }
    plhs[0] = out;
    if (nlhs > 1)
        plhs[1] = mxCreateDoubleScalar((double)sz.nmissing);
}

static int is_text_name(const char *name)
{
    return strcmp(name, "variable") == 0 || strcmp(name, "family") == 0;
}

static void do_write(int nlhs, const mxArray *farg, const mxArray *t)
{
    static const char *FN = "write_obs";
    char *file = slm_string(FN, farg, 2, "filename");
    char got[96];
    int nf, j;
    size_t m = 0, i, need = 0;
    sl_obs_column *cols;
    sl_error err;
    char *buf;
    FILE *fp;
    const mxArray *tm;

    (void)nlhs;
    if (!mxIsStruct(t) || mxGetNumberOfElements(t) != 1) {
        slm_describe(t, got, sizeof got);
        slm_fail(FN, "badobs",
                 "argument 3 (tab): expected a scalar struct of columns, got %s", got);
    }
    nf = mxGetNumberOfFields(t);
    tm = mxGetField(t, 0, "time");
    if (tm != NULL)
        m = mxGetNumberOfElements(tm);
    else if (nf > 0)
        m = mxGetNumberOfElements(mxGetFieldByNumber(t, 0, 0));
    cols = slm_alloc(FN, (size_t)nf, sizeof *cols);
    for (j = 0; j < nf; j++) {
        const char *name = mxGetFieldNameByNumber(t, j);
        const mxArray *v = mxGetFieldByNumber(t, 0, j);
        int vec;
        slm_describe(v, got, sizeof got);
        vec = mxGetNumberOfElements(v) == m && mxGetNumberOfDimensions(v) == 2 &&
              (m == 0 || mxGetM(v) == 1 || mxGetN(v) == 1);
        cols[j].name = name;
        cols[j].num = NULL;
        cols[j].text = NULL;
        if (is_text_name(name)) {
            const char **s;
            if (!mxIsCell(v) || !vec)
                slm_fail(FN, "badobs",
                         "argument 3 (tab): column '%s' must be a cellstr with one "
                         "entry per row (%lu), got %s",
                         name, (unsigned long)m, got);
            s = slm_alloc(FN, m, sizeof *s);
            for (i = 0; i < m; i++) {
                const mxArray *c = mxGetCell(v, i);
                size_t n, k;
                const mxChar *ch;
                if (c == NULL || !mxIsChar(c) || (mxGetM(c) > 1) ||
                    mxGetNumberOfDimensions(c) > 2)
                    slm_fail(FN, "badobs",
                             "argument 3 (tab): column '%s', row %lu: expected a "
                             "character string",
                             name, (unsigned long)(i + 1));
                n = mxGetNumberOfElements(c);
                ch = mxGetChars(c);
                for (k = 0; k < n; k++)
                    if (ch[k] == 0)
                        slm_fail(FN, "badobs",
                                 "argument 3 (tab): column '%s', row %lu: the text "
                                 "holds a NUL character",
                                 name, (unsigned long)(i + 1));
                s[i] = n ? slm_string_copy(c) : "";
                if (s[i] == NULL)
                    slm_fail(FN, "badobs",
                             "argument 3 (tab): column '%s', row %lu: could not read the text",
                             name, (unsigned long)(i + 1));
            }
            cols[j].text = s;
        } else {
            if (!mxIsDouble(v) || mxIsComplex(v) || mxIsSparse(v) || !vec)
                slm_fail(FN, "badobs",
                         "argument 3 (tab): column '%s' must be a real double vector "
                         "with one entry per row (%lu), got %s",
                         name, (unsigned long)m, got);
            cols[j].num = m ? slm_doubles(v) : NULL;
            if (m == 0)
                cols[j].num = (const double *)cols; /* any non-NULL: no rows read */
        }
    }
    if (sl_obsfile_format(m, (size_t)nf, cols, NULL, 0, &need, &err) != SL_OK)
        raise_in(FN, file, &err);
    buf = slm_alloc(FN, need, 1);
    if (sl_obsfile_format(m, (size_t)nf, cols, buf, need, &need, &err) != SL_OK)
        raise_in(FN, file, &err);
    fp = fopen(file, "wb");
    if (fp == NULL)
        slm_fail(FN, "nofile", "cannot open %s for writing: %s", file, strerror(errno));
    if (fwrite(buf, 1, need, fp) != need) {
        int e = errno;
        fclose(fp);
        slm_fail(FN, "writefail", "cannot write %s: %s", file, strerror(e));
    }
    if (fclose(fp) != 0)
        slm_fail(FN, "writefail", "cannot write %s: %s", file, strerror(errno));
}

void mexFunction(int nlhs, mxArray *plhs[], int nrhs, const mxArray *prhs[])
{
    static const char *FN = "obsfile";
    char *mode;
    slm_init();
    slm_nargs(FN, nrhs, 2, 3, nlhs, 2);
    mode = slm_string(FN, prhs[0], 1, "mode");
    if (strcmp(mode, "read") == 0) {
        if (nrhs != 2)
            slm_fail("read_obs", "nargin", "expected 2 input arguments, got %d", nrhs);
        do_read(nlhs, plhs, prhs[1]);
    } else if (strcmp(mode, "write") == 0) {
        if (nrhs != 3)
            slm_fail("write_obs", "nargin", "expected 3 input arguments, got %d", nrhs);
        if (nlhs > 0)
            slm_fail("write_obs", "nargout", "no output arguments, asked for %d", nlhs);
        do_write(nlhs, prhs[1], prhs[2]);
    } else {
        slm_fail(FN, "badmode", "argument 1 (mode): expected 'read' or 'write', got '%s'",
                 mode);
    }
}
