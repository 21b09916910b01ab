/* obsfile.h - the long observation table as CSV text: measure, parse, format. */
#ifndef SLUICE_OBSFILE_H
#define SLUICE_OBSFILE_H

#include <stddef.h>
#include "sluice/status.h"

#ifdef __cplusplus
extern "C" {
#endif

/* The CSV text of an observation table:
 *   - an optional UTF-8 byte order mark, then a header row naming the
 *     columns; lines end in LF or CRLF; blank lines (empty or only spaces
 *     and tabs) are skipped everywhere; line numbers count physical lines,
 *     the header being line 1 when the file starts with it;
 *   - fields separated by commas; spaces and tabs around a field are
 *     dropped; a field may be quoted with double quotes ("" inside stands
 *     for one quote; commas and line breaks inside quotes are kept);
 *   - required columns time, variable, value, sigma (any order, names
 *     case-sensitive); optional family, n, dof, limit and any other
 *     numeric column; a name is a letter followed by letters, digits or
 *     underscores, at most SL_OBS_NAME_MAX characters, each name once;
 *   - variable and family are text, every other column numeric: a decimal
 *     number ([+-]digits[.digits][e[+-]digits]), NaN / Inf / Infinity in
 *     any case with an optional sign, or an empty field (= NaN);
 *   - value NaN (empty, NaN) is a missing observation (counted); value
 *     +-Inf is an error; time must be finite and non-decreasing; sigma must
 *     be finite and > 0 except on poisson and binomial rows (where it may be
 *     empty); family (default gaussian) is one of the names known to
 *     sl_family_find.
 * Failures name the line and the column: "line 4, column sigma: ...", with
 * the reasons "badheader", "badnumber", "badfield", "badsigma", "badtime",
 * "badorder", "badfamily". */

enum { SL_OBS_NAME_MAX = 63 };

/* What a table needs, from sl_obsfile_measure. */
typedef struct {
    size_t rows;       /* data rows */
    size_t cols;       /* columns of the header */
    size_t ntext;      /* text columns (variable, and family if present) */
    size_t nnum;       /* numeric columns (cols - ntext) */
    size_t name_bytes; /* bytes of the column names, each NUL-terminated */
    size_t text_bytes; /* bytes of the text cells, each NUL-terminated */
    size_t nmissing;   /* rows whose value is NaN */
} sl_obs_size;

/* Caller-owned buffers that sl_obsfile_parse fills. Column j of the header
 * has its name at names + name_at[j]; is_text[j] says whether it is text;
 * slot[j] is its index among the numeric (or the text) columns. Numeric
 * column k, row i is num[i + k*rows]; text column k, row i is the string at
 * text + text_at[i + k*rows]. */
typedef struct {
    char *names;     /* name_bytes */
    size_t *name_at; /* cols */
    int *is_text;    /* cols */
    size_t *slot;    /* cols */
    double *num;     /* rows * nnum */
    char *text;      /* text_bytes */
    size_t *text_at; /* rows * ntext */
} sl_obs_table;

/* Check the CSV text buf[0..len-1] completely and report the sizes a parse
 * needs. Does not allocate. */
sl_status sl_obsfile_measure(const char *buf, size_t len, sl_obs_size *size,
                             sl_error *err);

/* Parse buf into tab, whose buffers have the sizes sl_obsfile_measure
 * reported for the same text (size is that report). */
sl_status sl_obsfile_parse(const char *buf, size_t len,
                           const sl_obs_size *size, sl_obs_table *tab,
                           sl_error *err);

/* One column of a table to format: exactly one of num / text is non-NULL. */
typedef struct {
    const char *name;
    const double *num;        /* rows numbers */
    const char *const *text;  /* rows NUL-terminated strings */
} sl_obs_column;

/* Format a table of `rows` rows and `cols` columns as CSV text (header, then
 * one LF-terminated line per row; numbers as %.17g, so reading the text back
 * gives the same doubles to the bit; NaN as NaN, infinities as Inf / -Inf;
 * text quoted when it holds a comma, quote, line break, or leading or
 * trailing blank). The table must pass the same checks as a parsed one
 * (the required columns with the right kinds, valid distinct names, times,
 * sigmas and families); failures name the line the row would have.
 * *need receives the number of bytes of the text (no NUL is added). With
 * buf NULL only *need is computed; otherwise cap must be >= the need
 * ("bufsize" otherwise). Does not allocate. */
sl_status sl_obsfile_format(size_t rows, size_t cols,
                            const sl_obs_column *col, char *buf, size_t cap,
                            size_t *need, sl_error *err);

#ifdef __cplusplus
}
#endif
#endif
