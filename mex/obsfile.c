/* obsfile.c - gateway: [tab, nmissing, codes, info] =
 * sluice.kernel.obsfile('read', file [, origin, unit_days, datenums, sort]),
 * sluice.kernel.obsfile('write', file, tab),
 * [tab, info] = sluice.kernel.obsfile('series', file, origin, unit_days,
 * datenums, sort, fill): a wide series table (fill 'error', 'interpolate'
 * or 'zero'); tab has time (m x 1), values (m x q), names and units (1 x q
 * cellstr),
 * sluice.kernel.obsfile('write_series', file, time, values, names, units,
 * origin, unit_days): origin '' writes the times as numbers,
 * [dn, text] = sluice.kernel.obsfile('date', x): x one ISO 8601 text or an
 * array of datenums; dn its datenums, text the canonical ISO 8601 text (a
 * string for a text, a cellstr the shape of x for datenums). */
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

/* A logical or real double scalar as 0 / 1. */
static int flag_arg(const char *fn, const mxArray *a, int pos, const char *name)
{
    char got[96];
    if ((mxIsLogical(a) || (mxIsDouble(a) && !mxIsComplex(a) && !mxIsSparse(a))) &&
        mxGetNumberOfElements(a) == 1) {
        double v = mxIsLogical(a) ? (double)mxGetLogicals(a)[0] : slm_doubles(a)[0];
        if (v == 0 || v == 1)
            return v == 1;
    }
    slm_describe(a, got, sizeof got);
    slm_fail(fn, "badoption", "argument %d (%s): expected true or false, got %s", pos,
             name, got);
}

/* The reader's options from arguments 3-6: origin ([] / ISO text / datenum),
 * unit_days, datenums, sort. */
static void read_options(const char *fn, const mxArray *const a[4], sl_obs_read_opts *o)
{
    sl_error err;
    char got[96];
    sl_obs_read_opts_init(o);
    if (mxIsChar(a[0]) && mxGetNumberOfElements(a[0]) > 0) {
        char *s = slm_string(fn, a[0], 3, "origin");
        if (sl_date_parse(s, strlen(s), &o->origin, &err) != SL_OK)
            slm_fail(fn, "badorigin", "option 'origin': '%s' is not a date: %s", s,
                     err.message);
        o->has_origin = 1;
        mxFree(s);
    } else if (mxIsDouble(a[0]) && !mxIsComplex(a[0]) && !mxIsSparse(a[0]) &&
               mxGetNumberOfElements(a[0]) == 1) {
        if (sl_date_from_datenum(slm_doubles(a[0])[0], &o->origin, &err) != SL_OK)
            slm_fail(fn, "badorigin", "option 'origin': %s", err.message);
        o->has_origin = 1;
    } else if (!(mxIsDouble(a[0]) && mxGetNumberOfElements(a[0]) == 0)) {
        slm_describe(a[0], got, sizeof got);
        slm_fail(fn, "badorigin",
                 "option 'origin': expected a date such as '2001-01-01' or a datenum, got %s",
                 got);
    }
    o->unit_days = slm_scalar(fn, a[1], 4, "unit_days");
    if (!(o->unit_days > 0))
        slm_fail(fn, "badoption", "argument 4 (unit_days): expected a positive number, got %g",
                 o->unit_days);
    o->datenums = flag_arg(fn, a[2], 5, "datenums");
    o->sort_rows = flag_arg(fn, a[3], 6, "sort");
}

static const char *const time_forms[3] = {"numbers", "dates", "datenums"};

/* info: separator, time_form, time_origin, origin_datenum, units,
 * unsorted, unsorted_line. */
static mxArray *read_info(const sl_obs_read_opts *o, const sl_obs_size *sz,
                          const sl_obs_table *tab)
{
    static const char *fields[7] = {"separator",  "time_form", "time_origin",
                                    "origin_datenum", "units", "unsorted",
                                    "unsorted_line"};
    char sep[3] = {sz->sep, '\0', '\0'}, origin[64] = "";
    int dated = sz->time_form != SL_OBS_TIME_NUMBERS && o->has_origin;
    mxArray *info = mxCreateStructMatrix(1, 1, 7, fields), *units;
    size_t j, nu = 0;
    const char **unames;
    if (dated)
        sl_date_format(o->origin, origin, sizeof origin);
    mxSetFieldByNumber(info, 0, 0, mxCreateString(sep));
    mxSetFieldByNumber(info, 0, 1, mxCreateString(time_forms[sz->time_form]));
    mxSetFieldByNumber(info, 0, 2, mxCreateString(origin));
    mxSetFieldByNumber(info, 0, 3, mxCreateDoubleScalar(
                                       dated ? sl_date_to_datenum(o->origin) : mxGetNaN()));
    unames = slm_alloc("read_obs", sz->cols + 1, sizeof *unames);
    for (j = 0; j < sz->cols; j++)
        if (tab->units[tab->unit_at[j]] != '\0')
            unames[nu++] = tab->names + tab->name_at[j];
    units = mxCreateStructMatrix(1, 1, (int)nu, unames);
    for (j = 0, nu = 0; j < sz->cols; j++)
        if (tab->units[tab->unit_at[j]] != '\0')
            mxSetFieldByNumber(units, 0, (int)nu++, mxCreateString(tab->units + tab->unit_at[j]));
    mxSetFieldByNumber(info, 0, 4, units);
    mxSetFieldByNumber(info, 0, 5, mxCreateDoubleScalar((double)sz->unsorted));
    mxSetFieldByNumber(info, 0, 6, mxCreateDoubleScalar((double)sz->unsorted_line));
    return info;
}

/* The whole of file, in mxMalloc'd memory; its length in *len. */
static char *read_whole(const char *fn, const char *file, size_t *len)
{
    FILE *fp;
    long flen;
    size_t got;
    char *buf;
    fp = fopen(file, "rb");
    if (fp == NULL)
        slm_fail(fn, "nofile", "cannot open %s: %s", file, strerror(errno));
    if (fseek(fp, 0, SEEK_END) != 0 || (flen = ftell(fp)) < 0 ||
        fseek(fp, 0, SEEK_SET) != 0) {
        int e = errno;
        fclose(fp);
        slm_fail(fn, "nofile", "cannot read %s: %s", file, strerror(e));
    }
    *len = (size_t)flen;
    {
        /* probe the allocation before it can raise with the file open */
        void *probe = malloc(*len ? *len : 1);
        if (probe == NULL) {
            fclose(fp);
            slm_fail(fn, "nomemory", "cannot hold %s (%.3g bytes) in memory",
                     file, (double)*len);
        }
        free(probe);
    }
    buf = mxMalloc(*len ? *len : 1);
    got = *len ? fread(buf, 1, *len, fp) : 0;
    if (got != *len || ferror(fp)) {
        int e = errno;
        fclose(fp);
        slm_fail(fn, "nofile", "cannot read %s: %s", file,
                 e ? strerror(e) : "short read");
    }
    fclose(fp);
    return buf;
}

/* tab = obsfile('read', file [, origin, unit_days, datenums, sort]);
 * [tab, nmissing, codes, info] = ...: with codes asked for, a text column
 * of tab holds its distinct texts and codes.(name) the 1-based index of
 * each row's text among them (tab.(name)(codes.(name)) is the column). */
static void do_read(int nlhs, mxArray *plhs[], int nrhs, const mxArray *prhs[])
{
    static const char *FN = "read_obs";
    char *file = slm_string(FN, prhs[1], 2, "filename");
    size_t len, j, i;
    char *buf;
    sl_obs_read_opts opts;
    sl_obs_size sz;
    sl_obs_table tab;
    sl_error err;
    const char **names;
    mxArray *out, *codes = NULL;
    int want_codes = nlhs > 2;

    if (nrhs == 6)
        read_options(FN, prhs + 2, &opts);
    else
        sl_obs_read_opts_init(&opts);

    buf = read_whole(FN, file, &len);

    if (sl_obsfile_measure_with(buf, len, &opts, &sz, &err) != SL_OK)
        raise_in(FN, file, &err);
    memset(&tab, 0, sizeof tab);
    tab.names = slm_alloc(FN, sz.name_bytes, 1);
    tab.name_at = slm_alloc(FN, sz.cols, sizeof(size_t));
    tab.is_text = slm_alloc(FN, sz.cols, sizeof(int));
    tab.slot = slm_alloc(FN, sz.cols, sizeof(size_t));
    tab.units = slm_alloc(FN, sz.unit_bytes, 1);
    tab.unit_at = slm_alloc(FN, sz.cols, sizeof(size_t));
    {
        size_t nn, nt;
        if (sl_size_mul(sz.rows, sz.nnum, &nn) || sl_size_mul(sz.rows, sz.ntext, &nt))
            slm_fail(FN, "nomemory", "the table of %s is too large", file);
        tab.num = slm_alloc(FN, nn, sizeof(double));
        tab.text_at = slm_alloc(FN, nt, sizeof(size_t));
        if (want_codes) {
            tab.text_code = slm_alloc(FN, nt, sizeof(size_t));
            tab.ncodes = slm_alloc(FN, sz.ntext, sizeof(size_t));
        }
    }
    tab.text = slm_alloc(FN, sz.text_bytes, 1);
    tab.work = slm_alloc(FN, sz.work_bytes, 1);
    if (sl_obsfile_parse_with(buf, len, &opts, &sz, &tab, &err) != SL_OK)
        raise_in(FN, file, &err);
    mxFree(buf);

    names = slm_alloc(FN, sz.cols, sizeof *names);
    for (j = 0; j < sz.cols; j++)
        names[j] = tab.names + tab.name_at[j];
    out = mxCreateStructMatrix(1, 1, (int)sz.cols, names);
    if (want_codes) {
        size_t nt = 0;
        const char **tnames = slm_alloc(FN, sz.ntext + 1, sizeof *tnames);
        for (j = 0; j < sz.cols; j++)
            if (tab.is_text[j])
                tnames[nt++] = names[j];
        codes = mxCreateStructMatrix(1, 1, (int)nt, tnames);
    }
    for (j = 0; j < sz.cols; j++) {
        size_t k = tab.slot[j];
        mxArray *c;
        if (tab.is_text[j] && want_codes) {
            const size_t *code = tab.text_code + k * sz.rows;
            mxArray *idx = slm_create(FN, sz.rows, 1);
            double *d = mxGetDoubles(idx);
            c = mxCreateCellMatrix(tab.ncodes[k], 1);
            for (i = 0; i < sz.rows; i++) {
                d[i] = (double)code[i] + 1;
                if (mxGetCell(c, code[i]) == NULL)
                    mxSetCell(c, code[i],
                              mxCreateString(tab.text + tab.text_at[i + k * sz.rows]));
            }
            mxSetField(codes, 0, names[j], idx);
        } else if (tab.is_text[j]) {
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
    if (nlhs > 2)
        plhs[2] = codes;
    if (nlhs > 3)
        plhs[3] = read_info(&opts, &sz, &tab);
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
        if (is_text_name(name) || mxIsCell(v)) {
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

/* A cellstr of n strings s[k] (NUL-terminated, at base + at[k]). */
static mxArray *cellstr_row(const char *base, const size_t *at, size_t n)
{
    mxArray *c = mxCreateCellMatrix(1, n);
    size_t k;
    for (k = 0; k < n; k++)
        mxSetCell(c, k, mxCreateString(base + at[k]));
    return c;
}

/* [tab, info] = obsfile('series', file, origin, unit_days, datenums, sort, fill) */
static void do_series(int nlhs, mxArray *plhs[], const mxArray *prhs[])
{
    static const char *FN = "read_forcing";
    static const char *tfields[4] = {"time", "values", "names", "units"};
    static const char *ifields[8] = {"separator", "time_form", "time_origin",
                                     "origin_datenum", "unsorted", "unsorted_line",
                                     "nmissing", "filled"};
    char *file = slm_string(FN, prhs[1], 2, "filename");
    char *fill, sep[3] = {'\0', '\0', '\0'}, origin[64] = "";
    size_t len, nv, k;
    char *buf;
    sl_obs_read_opts ro;
    sl_series_read_opts so;
    sl_series_size sz;
    sl_series_table tab;
    sl_error err;
    mxArray *out, *t, *v, *info, *filled;
    int dated;

    read_options(FN, prhs + 2, &ro);
    sl_series_read_opts_init(&so);
    so.sort_rows = ro.sort_rows;
    so.datenums = ro.datenums;
    so.has_origin = ro.has_origin;
    so.origin = ro.origin;
    so.unit_days = ro.unit_days;
    fill = slm_string(FN, prhs[6], 7, "fill");
    if (strcmp(fill, "error") == 0)
        so.fill = SL_FILL_NONE;
    else if (strcmp(fill, "interpolate") == 0)
        so.fill = SL_FILL_INTERPOLATE;
    else if (strcmp(fill, "zero") == 0)
        so.fill = SL_FILL_ZERO;
    else
        slm_fail(FN, "badoption",
                 "argument 7 (fill): expected 'error', 'interpolate' or 'zero', got '%s'",
                 fill);

    buf = read_whole(FN, file, &len);
    if (sl_obsfile_measure_series(buf, len, &so, &sz, &err) != SL_OK)
        raise_in(FN, file, &err);
    memset(&tab, 0, sizeof tab);
    if (sl_size_mul(sz.rows, sz.cols, &nv))
        slm_fail(FN, "nomemory", "the table of %s is too large", file);
    tab.names = slm_alloc(FN, sz.name_bytes, 1);
    tab.name_at = slm_alloc(FN, sz.cols, sizeof(size_t));
    tab.units = slm_alloc(FN, sz.unit_bytes, 1);
    tab.unit_at = slm_alloc(FN, sz.cols, sizeof(size_t));
    tab.filled = slm_alloc(FN, sz.cols, sizeof(size_t));
    tab.work = slm_alloc(FN, sz.work_bytes, 1);
    t = slm_create(FN, sz.rows, 1);
    v = slm_create(FN, sz.rows, sz.cols);
    tab.time = mxGetDoubles(t);
    tab.values = mxGetDoubles(v);
    if (sl_obsfile_parse_series(buf, len, &so, &sz, &tab, &err) != SL_OK)
        raise_in(FN, file, &err);
    mxFree(buf);

    out = mxCreateStructMatrix(1, 1, 4, tfields);
    mxSetFieldByNumber(out, 0, 0, t);
    mxSetFieldByNumber(out, 0, 1, v);
    mxSetFieldByNumber(out, 0, 2, cellstr_row(tab.names, tab.name_at, sz.cols));
    mxSetFieldByNumber(out, 0, 3, cellstr_row(tab.units, tab.unit_at, sz.cols));
    plhs[0] = out;
    if (nlhs < 2)
        return;
    dated = sz.time_form != SL_OBS_TIME_NUMBERS && so.has_origin;
    if (dated)
        sl_date_format(so.origin, origin, sizeof origin);
    sep[0] = sz.sep;
    info = mxCreateStructMatrix(1, 1, 8, ifields);
    mxSetFieldByNumber(info, 0, 0, mxCreateString(sep));
    mxSetFieldByNumber(info, 0, 1, mxCreateString(time_forms[sz.time_form]));
    mxSetFieldByNumber(info, 0, 2, mxCreateString(origin));
    mxSetFieldByNumber(info, 0, 3, mxCreateDoubleScalar(
                                       dated ? sl_date_to_datenum(so.origin) : mxGetNaN()));
    mxSetFieldByNumber(info, 0, 4, mxCreateDoubleScalar((double)sz.unsorted));
    mxSetFieldByNumber(info, 0, 5, mxCreateDoubleScalar((double)sz.unsorted_line));
    mxSetFieldByNumber(info, 0, 6, mxCreateDoubleScalar((double)sz.nmissing));
    filled = slm_create(FN, 1, sz.cols);
    for (k = 0; k < sz.cols; k++)
        mxGetDoubles(filled)[k] = (double)tab.filled[k];
    mxSetFieldByNumber(info, 0, 7, filled);
    plhs[1] = info;
}

/* The k-th string of a cellstr argument (a 1-row char array or ''). */
static const char *cell_text(const char *fn, const mxArray *c, size_t k, int pos,
                             const char *what)
{
    const mxArray *e = mxGetCell(c, k);
    char *s;
    if (e == NULL || !mxIsChar(e) || mxGetM(e) > 1 || mxGetNumberOfDimensions(e) > 2)
        slm_fail(fn, "badforcing", "argument %d (%s), entry %lu: expected a character string",
                 pos, what, (unsigned long)(k + 1));
    if (mxGetNumberOfElements(e) == 0)
        return "";
    s = slm_string_copy(e);
    if (s == NULL || strlen(s) != mxGetNumberOfElements(e))
        slm_fail(fn, "badforcing", "argument %d (%s), entry %lu: could not read the text",
                 pos, what, (unsigned long)(k + 1));
    return s;
}

/* obsfile('write_series', file, time, values, names, units, origin, unit_days) */
static void do_write_series(const mxArray *prhs[])
{
    static const char *FN = "write_forcing";
    char *file = slm_string(FN, prhs[1], 2, "filename");
    char got[96];
    sl_series_data d;
    sl_error err;
    size_t need = 0, k;
    const char **names, **units;
    char *buf;
    FILE *fp;
    memset(&d, 0, sizeof d);
    d.time = slm_matrix(FN, prhs[2], 3, "time", 0, 0, SLM_VECTOR | SLM_ALLOW_EMPTY |
                                                          SLM_ALLOW_NAN | SLM_ALLOW_INF);
    d.rows = mxGetNumberOfElements(prhs[2]);
    d.values = slm_matrix(FN, prhs[3], 4, "values", d.rows, 0,
                          SLM_ALLOW_EMPTY | SLM_ALLOW_NAN | SLM_ALLOW_INF);
    d.cols = mxGetN(prhs[3]);
    if (mxGetM(prhs[3]) != d.rows || mxGetNumberOfDimensions(prhs[3]) > 2) {
        slm_describe(prhs[3], got, sizeof got);
        slm_fail(FN, "badforcing", "argument 4 (values): expected %lu rows, got %s",
                 (unsigned long)d.rows, got);
    }
    for (k = 4; k <= 5; k++)
        if (!mxIsCell(prhs[k]) || mxGetNumberOfElements(prhs[k]) != d.cols) {
            slm_describe(prhs[k], got, sizeof got);
            slm_fail(FN, "badforcing", "argument %d (%s): expected a cellstr of %lu, got %s",
                     (int)k + 1, k == 4 ? "names" : "units", (unsigned long)d.cols, got);
        }
    names = slm_alloc(FN, d.cols, sizeof *names);
    units = slm_alloc(FN, d.cols, sizeof *units);
    for (k = 0; k < d.cols; k++) {
        names[k] = cell_text(FN, prhs[4], k, 5, "names");
        units[k] = cell_text(FN, prhs[5], k, 6, "units");
    }
    d.names = names;
    d.units = units;
    if (mxIsChar(prhs[6]) && mxGetNumberOfElements(prhs[6]) > 0) {
        char *o = slm_string(FN, prhs[6], 7, "origin");
        if (sl_date_parse(o, strlen(o), &d.origin, &err) != SL_OK)
            slm_fail(FN, "badorigin", "the forcing's time_origin '%s' is not a date: %s", o,
                     err.message);
        d.dated = 1;
        d.unit_days = slm_scalar(FN, prhs[7], 8, "unit_days");
        if (!(d.unit_days > 0))
            slm_fail(FN, "badoption", "argument 8 (unit_days): expected a positive number, got %g",
                     d.unit_days);
    } else if (!mxIsChar(prhs[6]) && !(mxIsDouble(prhs[6]) && mxIsEmpty(prhs[6]))) {
        slm_describe(prhs[6], got, sizeof got);
        slm_fail(FN, "badorigin", "argument 7 (origin): expected ISO 8601 text or '', got %s",
                 got);
    }
    if (sl_obsfile_format_series(&d, NULL, 0, &need, &err) != SL_OK)
        raise_in(FN, file, &err);
    buf = slm_alloc(FN, need, 1);
    if (sl_obsfile_format_series(&d, buf, need, &need, &err) != SL_OK)
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

/* [dn, text] = obsfile('date', x) */
static void do_date(int nlhs, mxArray *plhs[], const mxArray *x)
{
    static const char *FN = "date";
    sl_error err;
    sl_utc t;
    char buf[48], got[96];
    if (mxIsChar(x)) {
        char *s = slm_string(FN, x, 2, "date");
        if (sl_date_parse(s, strlen(s), &t, &err) != SL_OK)
            slm_fail(FN, "baddate", "'%s' is not a date: %s", s, err.message);
        mxFree(s);
        sl_date_format(t, buf, sizeof buf);
        plhs[0] = mxCreateDoubleScalar(sl_date_to_datenum(t));
        if (nlhs > 1)
            plhs[1] = mxCreateString(buf);
    } else if (mxIsDouble(x) && !mxIsComplex(x) && !mxIsSparse(x)) {
        const size_t m = mxGetNumberOfElements(x);
        const double *d = slm_doubles(x);
        mxArray *c = mxCreateCellArray(mxGetNumberOfDimensions(x), mxGetDimensions(x));
        size_t i;
        for (i = 0; i < m; i++) {
            if (sl_date_from_datenum(d[i], &t, &err) != SL_OK) {
                mxDestroyArray(c);
                slm_fail(FN, "baddate", "element %lu: %s", (unsigned long)(i + 1), err.message);
            }
            sl_date_format(t, buf, sizeof buf);
            mxSetCell(c, i, mxCreateString(buf));
        }
        plhs[0] = mxDuplicateArray(x);
        if (nlhs > 1)
            plhs[1] = c;
        else
            mxDestroyArray(c);
    } else {
        slm_describe(x, got, sizeof got);
        slm_fail(FN, "baddate", "expected a date such as '2001-01-01' or datenums, got %s", got);
    }
}

void mexFunction(int nlhs, mxArray *plhs[], int nrhs, const mxArray *prhs[])
{
    static const char *FN = "obsfile";
    char *mode;
    slm_init();
    slm_nargs(FN, nrhs, 2, 8, nlhs, 4);
    mode = slm_string(FN, prhs[0], 1, "mode");
    if (strcmp(mode, "read") == 0) {
        if (nrhs != 2 && nrhs != 6)
            slm_fail("read_obs", "nargin", "expected 2 or 6 input arguments, got %d", nrhs);
        do_read(nlhs, plhs, nrhs, prhs);
    } else if (strcmp(mode, "write") == 0) {
        if (nrhs != 3)
            slm_fail("write_obs", "nargin", "expected 3 input arguments, got %d", nrhs);
        if (nlhs > 0)
            slm_fail("write_obs", "nargout", "no output arguments, asked for %d", nlhs);
        do_write(nlhs, prhs[1], prhs[2]);
    } else if (strcmp(mode, "series") == 0) {
        if (nrhs != 7)
            slm_fail("read_forcing", "nargin", "expected 7 input arguments, got %d", nrhs);
        if (nlhs > 2)
            slm_fail("read_forcing", "nargout", "at most 2 output arguments, asked for %d",
                     nlhs);
        do_series(nlhs, plhs, prhs);
    } else if (strcmp(mode, "write_series") == 0) {
        if (nrhs != 8)
            slm_fail("write_forcing", "nargin", "expected 8 input arguments, got %d", nrhs);
        if (nlhs > 0)
            slm_fail("write_forcing", "nargout", "no output arguments, asked for %d", nlhs);
        do_write_series(prhs);
    } else if (strcmp(mode, "date") == 0) {
        if (nrhs != 2)
            slm_fail("date", "nargin", "expected 2 input arguments, got %d", nrhs);
        do_date(nlhs, plhs, prhs[1]);
    } else {
        slm_fail(FN, "badmode",
                 "argument 1 (mode): expected 'read', 'write', 'series', 'write_series' "
                 "or 'date', got '%s'",
                 mode);
    }
}
