/* obsfile.h - the long observation table as CSV text: measure, parse, format. */
#ifndef SLUICE_OBSFILE_H
#define SLUICE_OBSFILE_H

#include <stddef.h>
#include "sluice/datetime.h"
#include "sluice/status.h"

#ifdef __cplusplus
extern "C" {
#endif

/* The CSV text of an observation table, as people keep it:
 *   - an optional UTF-8 byte order mark (UTF-16 text is refused with a
 *     message saying to save as UTF-8); lines end in LF, CRLF or CR; blank
 *     lines and comment lines (whose first non-blank character is # or %)
 *     are skipped everywhere; line numbers count physical lines;
 *   - the first other line is the header; its fields are separated by a
 *     comma, a semicolon or a tab, whichever the header holds (outside
 *     quotes and brackets; the first of , ; tab that occurs), and the rows
 *     use the same separator (sl_obsfile_separator); spaces (and tabs,
 *     unless the tab separates) around a field are dropped; a field may be
 *     quoted with double quotes ("" inside stands for one quote; separators
 *     and line breaks inside quotes are kept);
 *   - a header field is a name, optionally followed by a unit in brackets,
 *     "value [m3/s]" or "value (m3/s)"; names are compared without regard to
 *     case and returned in lower case; a name is a letter followed by
 *     letters, digits or underscores, at most SL_OBS_NAME_MAX characters,
 *     each name once; required columns time, variable, value, sigma (any
 *     order); optional family, n, dof, limit and any other column;
 *   - variable and family are text; value, sigma, n, dof, limit numeric:
 *     a decimal number ([+-]digits[.digits][e[+-]digits]), NaN / Inf /
 *     Infinity in any case with an optional sign, NA, N/A, #N/A or an empty
 *     field (all = NaN); where the separator is ';' or a tab, a number may
 *     use a decimal comma (1,5 = 1.5; one comma and no point);
 *   - other columns are numeric, or (opts->text_columns) text when any of
 *     their fields is not a number;
 *   - the time column holds numbers (the model's time, or with
 *     opts->datenums Octave datenums) or ISO 8601 dates and date-times
 *     (sl_date_parse), all rows the same way; dates and datenums need
 *     opts->has_origin and become (t - origin) / unit_days;
 *   - value NaN is a missing observation (counted); value +-Inf is an
 *     error; time must be finite and, unless opts->sort_rows, non-decreasing
 *     (with it, rows are sorted stably by time and the size record says how
 *     many were out of order); sigma must be finite and >= DBL_MIN except on
 *     poisson and binomial rows and on rows whose value is missing (where it
 *     may be empty); family (default gaussian) is one of the names known to
 *     sl_family_find.
 * Failures name the line and the column: "line 4, column sigma: ...", with
 * the reasons "badheader", "badnumber", "badfield", "badsigma", "badtime",
 * "baddate", "noorigin", "badorder", "badfamily", "badencoding". */

enum { SL_OBS_NAME_MAX = 63, SL_OBS_COLS_MAX = 1000 };

/* How the time column of a file was written. */
enum { SL_OBS_TIME_NUMBERS = 0, SL_OBS_TIME_DATES = 1, SL_OBS_TIME_DATENUMS = 2 };

/* Options of the reader. */
typedef struct {
    int sort_rows;    /* 1: rows out of time order are sorted stably by time;
                         0: refused ("badorder") */
    int skip_empty;   /* 1: header columns without a name, fields past the
                         header and lines of separators only are ignored
                         while they hold nothing; 0: refused */
    int text_columns; /* 1: other columns holding text are text columns;
                         0: every other column must be numeric */
    int datenums;     /* 1: numbers in the time column are Octave datenums */
    int has_origin;   /* 1: origin is given */
    sl_utc origin;    /* the instant of model time 0 (dates, datenums) */
    double unit_days; /* the model's time unit in days, > 0 (1 = days) */
} sl_obs_read_opts;

/* The options of a file as a spreadsheet leaves it: sort_rows, skip_empty
 * and text_columns 1, datenums 0, no origin, unit_days 1.
 * (sl_obsfile_measure / _parse use the strict form: the first three 0.) */
void sl_obs_read_opts_init(sl_obs_read_opts *opts);

/* What a table needs, from sl_obsfile_measure. */
typedef struct {
    size_t rows;       /* data rows */
    size_t cols;       /* columns kept (the named ones of the header) */
    size_t ntext;      /* text columns (variable, family, other text) */
    size_t nnum;       /* numeric columns (cols - ntext) */
    size_t name_bytes; /* bytes of the column names, each NUL-terminated */
    size_t unit_bytes; /* bytes of the units, each NUL-terminated ("" = none) */
    size_t text_bytes; /* bytes of the text cells, each NUL-terminated (at most) */
    size_t nmissing;   /* rows whose value is NaN */
    size_t unsorted;   /* rows whose time is below the previous row's */
    size_t unsorted_line; /* the line of the first of them (0: none) */
    size_t work_bytes; /* the workspace a parse with text codes or sorting needs */
    int time_form;     /* SL_OBS_TIME_NUMBERS, _DATES or _DATENUMS */
    char sep;          /* the separator: ',', ';' or '\t' */
    /* for the parse: which header columns (by position) hold text */
    unsigned char col_text[SL_OBS_COLS_MAX];
} sl_obs_size;

/* Caller-owned buffers that sl_obsfile_parse fills. Column j (of the kept
 * columns) has its name at names + name_at[j] and its unit at units +
 * unit_at[j]; is_text[j] says whether it is text; slot[j] is its index
 * among the numeric (or the text) columns. Numeric column k, row i is
 * num[i + k*rows]; text column k, row i is the string at text +
 * text_at[i + k*rows]. Optional (NULL: not filled): units and unit_at;
 * text_code with ncodes (ntext) and work (work_bytes) -- then text column
 * k, row i also has the code text_code[i + k*rows], 0-based, such that
 * rows with the same code hold the same text, codes numbered in the order
 * the rows first use them (0, 1, ... ncodes[k]-1; equal texts share a code
 * up to 2048 different texts per column, later ones get codes of their
 * own). work is also needed when rows are to be sorted. */
typedef struct {
    char *names;     /* name_bytes */
    size_t *name_at; /* cols */
    int *is_text;    /* cols */
    size_t *slot;    /* cols */
    double *num;     /* rows * nnum */
    char *text;      /* text_bytes */
    size_t *text_at; /* rows * ntext */
    char *units;     /* unit_bytes (optional) */
    size_t *unit_at; /* cols (with units) */
    size_t *text_code; /* rows * ntext (optional) */
    size_t *ncodes;  /* ntext (with text_code) */
    void *work;      /* work_bytes (with text_code, or rows to sort) */
} sl_obs_table;

/* The separator of the CSV text buf[0..len-1] as described above: ',' when
 * the header holds none of the three. */
char sl_obsfile_separator(const char *buf, size_t len);

/* Check the CSV text buf[0..len-1] completely and report the sizes a parse
 * needs. Does not allocate. opts NULL: the strict form. */
sl_status sl_obsfile_measure_with(const char *buf, size_t len,
                                  const sl_obs_read_opts *opts,
                                  sl_obs_size *size, sl_error *err);

/* Parse buf into tab, whose buffers have the sizes sl_obsfile_measure_with
 * reported for the same text and options (size is that report). */
sl_status sl_obsfile_parse_with(const char *buf, size_t len,
                                const sl_obs_read_opts *opts,
                                const sl_obs_size *size, sl_obs_table *tab,
                                sl_error *err);

/* The same in the strict form (opts NULL). */
sl_status sl_obsfile_measure(const char *buf, size_t len, sl_obs_size *size,
                             sl_error *err);
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
 * (the required columns with the right kinds -- variable and family text;
 * time, value, sigma, n, dof, limit numeric; any other column either --,
 * valid names distinct without regard to case, times, sigmas and
 * families); failures name the line the row would have.
 * *need receives the number of bytes of the text (no NUL is added). With
 * buf NULL only *need is computed; otherwise cap must be >= the need
 * ("bufsize" otherwise). Does not allocate. */
sl_status sl_obsfile_format(size_t rows, size_t cols,
                            const sl_obs_column *col, char *buf, size_t cap,
                            size_t *need, sl_error *err);

/* ---- the wide series table (forcing files) ---------------------------------
 *
 * One row per time, one column per series: the same text forms as the
 * observation table (byte order mark, line ends, comment and blank lines,
 * separator detection, quotes, units in brackets, decimal commas after ';'
 * or a tab, NA / N/A / #N/A / empty / NaN as missing, dates, day numbers,
 * origin and unit), with these differences:
 *   - exactly one time column, named time or date (any case); every other
 *     named column is a numeric series (text is refused, "badnumber");
 *     at least one series; header columns without a name are ignored while
 *     they hold nothing;
 *   - a missing cell is refused ("missing") unless opts->fill says how to
 *     fill it: SL_FILL_ZERO writes 0; SL_FILL_INTERPOLATE interpolates
 *     linearly in time between the nearest earlier and later values of the
 *     same series (a gap at the start or the end of a series is refused,
 *     "missing"); infinite values are refused ("badnumber");
 *   - times must be finite and distinct ("duptime" names both lines);
 *     rows out of time order are sorted (opts->sort_rows) or refused
 *     ("badorder");
 *   - a file without data rows is refused ("empty").
 * Failures name the line and the column as for the observation table. */

enum { SL_FILL_NONE = 0, SL_FILL_INTERPOLATE = 1, SL_FILL_ZERO = 2 };

typedef struct {
    int sort_rows;    /* 1: rows out of time order are sorted; 0: refused */
    int fill;         /* SL_FILL_*: what a missing cell becomes */
    int datenums;     /* 1: numbers in the time column are Octave datenums */
    int has_origin;   /* 1: origin is given */
    sl_utc origin;    /* the instant of model time 0 (dates, datenums) */
    double unit_days; /* the model's time unit in days, > 0 */
} sl_series_read_opts;

/* sort_rows 1, fill SL_FILL_NONE, datenums 0, no origin, unit_days 1. */
void sl_series_read_opts_init(sl_series_read_opts *opts);

/* What a series table needs, from sl_obsfile_measure_series. */
typedef struct {
    size_t rows;          /* data rows (times) */
    size_t cols;          /* series (the time column not counted) */
    size_t name_bytes;    /* bytes of the series names, each NUL-terminated */
    size_t unit_bytes;    /* bytes of their units, each NUL-terminated */
    size_t nmissing;      /* missing cells (to be filled) */
    size_t unsorted;      /* rows whose time is below the previous row's */
    size_t unsorted_line; /* the line of the first of them (0: none) */
    size_t work_bytes;    /* the workspace of the parse */
    int time_form;        /* SL_OBS_TIME_NUMBERS, _DATES or _DATENUMS */
    char sep;             /* ',', ';' or '\t' */
} sl_series_size;

/* Caller-owned buffers of sl_obsfile_parse_series. Series k has its name
 * (lower case) at names + name_at[k], its unit ("" = none) at units +
 * unit_at[k], and its value at time[i] in values[i + k*rows]. filled
 * (optional, cols) receives the number of cells filled per series. */
typedef struct {
    char *names;     /* name_bytes */
    size_t *name_at; /* cols */
    char *units;     /* unit_bytes */
    size_t *unit_at; /* cols */
    double *time;    /* rows */
    double *values;  /* rows * cols */
    size_t *filled;  /* cols (optional) */
    void *work;      /* work_bytes */
} sl_series_table;

/* Check the text buf[0..len-1] as a series table and report the sizes a
 * parse needs (duplicate times that sorting brings together, and gaps a
 * fill cannot close, are found by the parse). Does not allocate. */
sl_status sl_obsfile_measure_series(const char *buf, size_t len,
                                    const sl_series_read_opts *opts,
                                    sl_series_size *size, sl_error *err);

/* Parse buf into tab, whose buffers have the sizes `size` reports. */
sl_status sl_obsfile_parse_series(const char *buf, size_t len,
                                  const sl_series_read_opts *opts,
                                  const sl_series_size *size,
                                  sl_series_table *tab, sl_error *err);

/* A series table to format. */
typedef struct {
    size_t rows, cols;
    const double *time;        /* rows: finite, increasing */
    const double *values;      /* rows * cols: finite or NaN (written NaN) */
    const char *const *names;  /* cols column names (not time or date) */
    const char *const *units;  /* cols units ("" = none), or NULL */
    int dated;                 /* 1: times are written as dates */
    sl_utc origin;             /* with dated: the instant of time 0 */
    double unit_days;          /* with dated: the time unit in days */
} sl_series_data;

/* Format d as CSV text: a header "time,name [unit],...", then one line per
 * row; numbers as %.17g (read back to the same bits); with d->dated the
 * times as dates (sl_date_after, sl_date_format: a time read from a date
 * to the second gives back that date, and reads back to the same bits).
 * Checks: names valid and distinct without regard to case, none time or
 * date ("badheader"); units without a comma, quote, bracket or line break
 * ("badheader"); times finite ("badtime"), increasing ("badorder",
 * "duptime"), dates within 0000-9999 ("baddate"); values not infinite
 * ("badnumber"). *need, buf and cap as for sl_obsfile_format. */
sl_status sl_obsfile_format_series(const sl_series_data *d, char *buf,
                                   size_t cap, size_t *need, sl_error *err);

#ifdef __cplusplus
}
#endif
#endif
