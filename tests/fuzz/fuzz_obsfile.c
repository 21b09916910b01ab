/* fuzz_obsfile.c - libFuzzer harness of the CSV readers of the core: the
 * long observation table (sl_obsfile_measure_with / _parse_with, and the
 * strict sl_obsfile_measure / _parse) and the wide series table
 * (sl_obsfile_measure_series / _parse_series).
 *
 * Input: one byte of options, then the text. The option byte:
 *   bit 0    0: observation table, 1: series table
 *   bit 1    sort_rows
 *   bit 2    table: skip_empty;   series: fill bit 0
 *   bit 3    table: text_columns; series: fill bit 1 (fill = bits 2-3,
 *            0 none, 1 interpolate, 2 zero, 3 interpolate)
 *   bit 4    datenums
 *   bit 5    has_origin (2000-01-01T00:00Z)
 *   bit 6    table: text codes asked for; series: unit_days 1/24 (hours)
 *   bit 7    table: the strict form (opts NULL: bits 1-5 unused)
 * Every buffer is allocated at exactly the size the measure reported, so
 * AddressSanitizer sees a byte written or read past it; the text itself is
 * a copy of exactly the input's length (no NUL after it).
 *
 * Besides memory errors, the harness aborts when a parse that succeeded
 * breaks what obsfile.h promises: offsets inside their buffers, strings
 * terminated inside them, codes below their counts, times finite and in
 * order, series values finite; and when the writer's text of a parsed
 * table does not read back to the same numbers, bit for bit. */
#include <math.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "sluice/obsfile.h"

#define REQUIRE(cond)                                                         \
    do {                                                                      \
        if (!(cond)) {                                                        \
            fprintf(stderr, "fuzz_obsfile: %s:%d: broken: %s\n", __FILE__,    \
                    __LINE__, #cond);                                         \
            abort();                                                          \
        }                                                                     \
    } while (0)

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size);

/* count * each bytes, exactly (malloc(0) under AddressSanitizer gives a
 * pointer that any access reports); NULL when the product overflows. */
static void *alloc_exact(size_t count, size_t each)
{
    size_t bytes;
    void *p;
    if (sl_size_mul(count, each, &bytes))
        return NULL;
    p = malloc(bytes);
    REQUIRE(p != NULL || bytes == 0);
    return p;
}

/* s is a string that ends before buf + cap. */
static int string_inside(const char *buf, size_t cap, size_t at)
{
    return at < cap && memchr(buf + at, '\0', cap - at) != NULL;
}

static int same_bits(double a, double b)
{
    return memcmp(&a, &b, sizeof a) == 0;
}

/* The writer's text of a parsed series table reads back to the same table. */
static void series_round_trip(const sl_series_size *sz, const sl_series_table *t)
{
    sl_series_data d;
    const char **names = alloc_exact(sz->cols, sizeof *names);
    const char **units = alloc_exact(sz->cols, sizeof *units);
    char *text;
    size_t need = 0, k, i;
    sl_error err;
    sl_series_read_opts o;
    sl_series_size sz2;
    sl_series_table t2;

    for (k = 0; k < sz->cols; k++) {
        names[k] = t->names + t->name_at[k];
        units[k] = t->units + t->unit_at[k];
    }
    memset(&d, 0, sizeof d);
    d.rows = sz->rows;
    d.cols = sz->cols;
    d.time = t->time;
    d.values = t->values;
    d.names = names;
    d.units = units;
    d.unit_days = 1;
    if (sl_obsfile_format_series(&d, NULL, 0, &need, &err) != SL_OK) {
        /* units the reader keeps but the writer cannot write unquoted */
        REQUIRE(strcmp(err.reason, "badheader") == 0);
        free(names);
        free(units);
        return;
    }
    text = alloc_exact(need, 1);
    REQUIRE(sl_obsfile_format_series(&d, text, need, &need, &err) == SL_OK);

    sl_series_read_opts_init(&o);
    o.sort_rows = 0;
    memset(&t2, 0, sizeof t2);
    REQUIRE(sl_obsfile_measure_series(text, need, &o, &sz2, &err) == SL_OK);
    REQUIRE(sz2.rows == sz->rows && sz2.cols == sz->cols && sz2.nmissing == 0);
    t2.names = alloc_exact(sz2.name_bytes, 1);
    t2.name_at = alloc_exact(sz2.cols, sizeof(size_t));
    t2.units = alloc_exact(sz2.unit_bytes, 1);
    t2.unit_at = alloc_exact(sz2.cols, sizeof(size_t));
    t2.time = alloc_exact(sz2.rows, sizeof(double));
    t2.values = alloc_exact(sz2.rows * sz2.cols, sizeof(double));
    t2.work = alloc_exact(sz2.work_bytes, 1);
    REQUIRE(sl_obsfile_parse_series(text, need, &o, &sz2, &t2, &err) == SL_OK);
    for (k = 0; k < sz->cols; k++) {
        REQUIRE(strcmp(t2.names + t2.name_at[k], names[k]) == 0);
        REQUIRE(strcmp(t2.units + t2.unit_at[k], units[k]) == 0);
    }
    for (i = 0; i < sz->rows; i++)
        REQUIRE(same_bits(t2.time[i], t->time[i]));
    for (i = 0; i < sz->rows * sz->cols; i++)
        REQUIRE(same_bits(t2.values[i], t->values[i]));

    free(t2.names);
    free(t2.name_at);
    free(t2.units);
    free(t2.unit_at);
    free(t2.time);
    free(t2.values);
    free(t2.work);
    free(text);
    free(names);
    free(units);
}

static void fuzz_series(unsigned flags, const char *buf, size_t len)
{
    sl_series_read_opts o;
    sl_series_size sz;
    sl_series_table t;
    sl_error err;
    size_t nv, k, i, filled = 0;
    static const int fills[4] = {SL_FILL_NONE, SL_FILL_INTERPOLATE, SL_FILL_ZERO,
                                 SL_FILL_INTERPOLATE};

    sl_series_read_opts_init(&o);
    o.sort_rows = (flags >> 1) & 1;
    o.fill = fills[(flags >> 2) & 3];
    o.datenums = (flags >> 4) & 1;
    o.has_origin = (flags >> 5) & 1;
    o.origin.sec = 946684800; /* 2000-01-01T00:00Z */
    o.origin.frac = 0;
    o.unit_days = (flags & 0x40) ? 1.0 / 24 : 1.0;

    if (sl_obsfile_measure_series(buf, len, &o, &sz, &err) != SL_OK) {
        REQUIRE(err.status != SL_OK && err.reason[0] != '\0');
        return;
    }
    REQUIRE(sz.rows >= 1 && sz.cols >= 1);
    REQUIRE(sz.sep == ',' || sz.sep == ';' || sz.sep == '\t');
    REQUIRE(!sl_size_mul(sz.rows, sz.cols, &nv));
    memset(&t, 0, sizeof t);
    t.names = alloc_exact(sz.name_bytes, 1);
    t.name_at = alloc_exact(sz.cols, sizeof(size_t));
    t.units = alloc_exact(sz.unit_bytes, 1);
    t.unit_at = alloc_exact(sz.cols, sizeof(size_t));
    t.time = alloc_exact(sz.rows, sizeof(double));
    t.values = alloc_exact(nv, sizeof(double));
    t.filled = alloc_exact(sz.cols, sizeof(size_t));
    t.work = alloc_exact(sz.work_bytes, 1);
    if (sl_obsfile_parse_series(buf, len, &o, &sz, &t, &err) == SL_OK) {
        for (k = 0; k < sz.cols; k++) {
            REQUIRE(string_inside(t.names, sz.name_bytes, t.name_at[k]));
            REQUIRE(string_inside(t.units, sz.unit_bytes, t.unit_at[k]));
            REQUIRE(t.filled[k] <= sz.rows);
            filled += t.filled[k];
        }
        REQUIRE(filled == sz.nmissing);
        for (i = 0; i < sz.rows; i++) {
            REQUIRE(isfinite(t.time[i]));
            REQUIRE(i == 0 || t.time[i] > t.time[i - 1]);
        }
        for (i = 0; i < nv; i++)
            REQUIRE(isfinite(t.values[i]));
        series_round_trip(&sz, &t);
    } else {
        REQUIRE(err.status != SL_OK && err.reason[0] != '\0');
    }
    free(t.names);
    free(t.name_at);
    free(t.units);
    free(t.unit_at);
    free(t.time);
    free(t.values);
    free(t.filled);
    free(t.work);
}

/* The writer's text of a parsed observation table reads back to the same
 * numbers and texts. */
static void table_round_trip(const sl_obs_size *sz, const sl_obs_table *t)
{
    sl_obs_column *col = alloc_exact(sz->cols, sizeof *col);
    const char **cells = alloc_exact(sz->rows * sz->ntext, sizeof *cells);
    char *text;
    size_t need = 0, j, i;
    sl_error err;
    sl_obs_read_opts o;
    sl_obs_size sz2;
    sl_obs_table t2;

    for (i = 0; i < sz->rows * sz->ntext; i++)
        cells[i] = t->text + t->text_at[i];
    for (j = 0; j < sz->cols; j++) {
        col[j].name = t->names + t->name_at[j];
        col[j].num = t->is_text[j] ? NULL : t->num + t->slot[j] * sz->rows;
        col[j].text = t->is_text[j] ? cells + t->slot[j] * sz->rows : NULL;
    }
    REQUIRE(sl_obsfile_format(sz->rows, sz->cols, col, NULL, 0, &need, &err) == SL_OK);
    text = alloc_exact(need, 1);
    REQUIRE(sl_obsfile_format(sz->rows, sz->cols, col, text, need, &need, &err) == SL_OK);

    sl_obs_read_opts_init(&o);
    o.sort_rows = 0;
    o.skip_empty = 0;
    memset(&t2, 0, sizeof t2);
    REQUIRE(sl_obsfile_measure_with(text, need, &o, &sz2, &err) == SL_OK);
    REQUIRE(sz2.rows == sz->rows && sz2.cols == sz->cols && sz2.ntext == sz->ntext);
    t2.names = alloc_exact(sz2.name_bytes, 1);
    t2.name_at = alloc_exact(sz2.cols, sizeof(size_t));
    t2.is_text = alloc_exact(sz2.cols, sizeof(int));
    t2.slot = alloc_exact(sz2.cols, sizeof(size_t));
    t2.num = alloc_exact(sz2.rows * sz2.nnum, sizeof(double));
    t2.text = alloc_exact(sz2.text_bytes, 1);
    t2.text_at = alloc_exact(sz2.rows * sz2.ntext, sizeof(size_t));
    t2.work = alloc_exact(sz2.work_bytes, 1);
    REQUIRE(sl_obsfile_parse_with(text, need, &o, &sz2, &t2, &err) == SL_OK);
    for (j = 0; j < sz->cols; j++) {
        REQUIRE(strcmp(t2.names + t2.name_at[j], col[j].name) == 0);
        REQUIRE(t2.is_text[j] == t->is_text[j]);
        for (i = 0; i < sz->rows; i++) {
            if (t->is_text[j])
                REQUIRE(strcmp(t2.text + t2.text_at[i + t2.slot[j] * sz->rows],
                               col[j].text[i]) == 0);
            else
                REQUIRE(same_bits(t2.num[i + t2.slot[j] * sz->rows], col[j].num[i]));
        }
    }
    free(t2.names);
    free(t2.name_at);
    free(t2.is_text);
    free(t2.slot);
    free(t2.num);
    free(t2.text);
    free(t2.text_at);
    free(t2.work);
    free(text);
    free(cells);
    free(col);
}

static void fuzz_table(unsigned flags, const char *buf, size_t len)
{
    sl_obs_read_opts o, *op = NULL;
    sl_obs_size sz;
    sl_obs_table t;
    sl_error err;
    size_t nn, nt, j, i, k, ntext = 0, nnum = 0;
    int strict = (flags & 0x80) != 0, codes = (flags & 0x40) != 0;
    sl_status st;

    if (!strict) {
        sl_obs_read_opts_init(&o);
        o.sort_rows = (flags >> 1) & 1;
        o.skip_empty = (flags >> 2) & 1;
        o.text_columns = (flags >> 3) & 1;
        o.datenums = (flags >> 4) & 1;
        o.has_origin = (flags >> 5) & 1;
        o.origin.sec = 946684800; /* 2000-01-01T00:00Z */
        o.origin.frac = 0;
        o.unit_days = 1;
        op = &o;
    }
    st = strict ? sl_obsfile_measure(buf, len, &sz, &err)
                : sl_obsfile_measure_with(buf, len, op, &sz, &err);
    if (st != SL_OK) {
        REQUIRE(err.status != SL_OK && err.reason[0] != '\0');
        return;
    }
    REQUIRE(sz.cols >= 4 && sz.cols <= SL_OBS_COLS_MAX && sz.ntext + sz.nnum == sz.cols);
    REQUIRE(sz.nmissing <= sz.rows && sz.unsorted < sz.rows + (sz.rows == 0));
    REQUIRE(!sl_size_mul(sz.rows, sz.nnum, &nn) && !sl_size_mul(sz.rows, sz.ntext, &nt));
    memset(&t, 0, sizeof t);
    t.names = alloc_exact(sz.name_bytes, 1);
    t.name_at = alloc_exact(sz.cols, sizeof(size_t));
    t.is_text = alloc_exact(sz.cols, sizeof(int));
    t.slot = alloc_exact(sz.cols, sizeof(size_t));
    t.num = alloc_exact(nn, sizeof(double));
    t.text = alloc_exact(sz.text_bytes, 1);
    t.text_at = alloc_exact(nt, sizeof(size_t));
    t.units = alloc_exact(sz.unit_bytes, 1);
    t.unit_at = alloc_exact(sz.cols, sizeof(size_t));
    if (codes) {
        t.text_code = alloc_exact(nt, sizeof(size_t));
        t.ncodes = alloc_exact(sz.ntext, sizeof(size_t));
    }
    if (codes || (!strict && o.sort_rows))
        t.work = alloc_exact(sz.work_bytes, 1);
    st = strict ? sl_obsfile_parse(buf, len, &sz, &t, &err)
                : sl_obsfile_parse_with(buf, len, op, &sz, &t, &err);
    if (st == SL_OK) {
        for (j = 0; j < sz.cols; j++) {
            REQUIRE(string_inside(t.names, sz.name_bytes, t.name_at[j]));
            REQUIRE(string_inside(t.units, sz.unit_bytes, t.unit_at[j]));
            REQUIRE(t.is_text[j] == 0 || t.is_text[j] == 1);
            if (t.is_text[j])
                REQUIRE(t.slot[j] == ntext++);
            else
                REQUIRE(t.slot[j] == nnum++);
        }
        REQUIRE(ntext == sz.ntext && nnum == sz.nnum);
        for (i = 0; i < nt; i++)
            REQUIRE(string_inside(t.text, sz.text_bytes, t.text_at[i]));
        if (codes)
            for (k = 0; k < sz.ntext; k++) {
                REQUIRE(t.ncodes[k] <= sz.rows);
                for (i = 0; i < sz.rows; i++)
                    REQUIRE(t.text_code[i + k * sz.rows] < t.ncodes[k]);
            }
        for (j = 0; j < sz.cols; j++)
            if (strcmp(t.names + t.name_at[j], "time") == 0) {
                const double *time = t.num + t.slot[j] * sz.rows;
                REQUIRE(!t.is_text[j]);
                for (i = 0; i < sz.rows; i++) {
                    REQUIRE(isfinite(time[i]));
                    REQUIRE(i == 0 || time[i] >= time[i - 1]);
                }
            }
        /* a text cell holding a NUL byte is cut short as a C string */
        if (memchr(buf, '\0', len) == NULL)
            table_round_trip(&sz, &t);
    } else {
        REQUIRE(err.status != SL_OK && err.reason[0] != '\0');
    }
    free(t.names);
    free(t.name_at);
    free(t.is_text);
    free(t.slot);
    free(t.num);
    free(t.text);
    free(t.text_at);
    free(t.units);
    free(t.unit_at);
    free(t.text_code);
    free(t.ncodes);
    free(t.work);
}

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    unsigned flags;
    char *buf;
    if (size < 1)
        return 0;
    flags = data[0];
    /* an exact copy: a read past the text is a read past this block */
    buf = alloc_exact(size - 1, 1);
    if (size > 1)
        memcpy(buf, data + 1, size - 1);
    if (flags & 1)
        fuzz_series(flags, buf, size - 1);
    else
        fuzz_table(flags, buf, size - 1);
    free(buf);
    return 0;
}
