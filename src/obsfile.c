/* obsfile.c - the long observation table as CSV text: measure, parse, format. */
#include "sluice/obsfile.h"
#include "sluice/loglik.h"

#include <errno.h>
#include <float.h>
#include <math.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

/* More header columns than this is taken for a damaged file. */
enum { COLS_MAX = 1000, NUMBER_MAX = 127, SNIP = 40 };

/* The required text and numeric columns and the optional family. */
enum { C_TIME, C_VARIABLE, C_VALUE, C_SIGMA, C_FAMILY, C_KNOWN };
static const char *const known_names[C_KNOWN] = {"time", "variable", "value",
                                                 "sigma", "family"};

/* ---- small helpers ------------------------------------------------------ */

static int is_blank(char c) { return c == ' ' || c == '\t'; }

static int is_alpha(char c)
{
    return (c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z');
}

static int is_digit(char c) { return c >= '0' && c <= '9'; }

/* A printable excerpt of s[0..n-1] for messages (at most SNIP characters). */
static const char *snippet(const char *s, size_t n, char *out, size_t cap)
{
    size_t i, k = 0;
    for (i = 0; i < n && k + 4 < cap && i < SNIP; i++) {
        unsigned char c = (unsigned char)s[i];
        out[k++] = (c >= 32 && c != 127) ? (char)c : '?';
    }
    if (i < n && k + 4 < cap) {
        out[k++] = '.';
        out[k++] = '.';
        out[k++] = '.';
    }
    out[k] = '\0';
    return out;
}

/* The family list for messages. */
static void family_list(char *out, size_t cap)
{
    int k;
    size_t used = 0;
    out[0] = '\0';
    for (k = 0; k < SL_FAMILY_COUNT && used < cap; k++) {
        const char *sep = k == 0 ? "" : (k == SL_FAMILY_COUNT - 1 ? " or " : ", ");
        int w = snprintf(out + used, cap - used, "%s%s", sep,
                         sl_family_get(k)->name);
        if (w < 0)
            break;
        used += (size_t)w;
    }
}

/* The family id of the text s[0..n-1], or -1. */
static int family_id(const char *s, size_t n)
{
    char name[32];
    if (n >= sizeof name)
        return -1;
    memcpy(name, s, n);
    name[n] = '\0';
    return sl_family_find(name);
}

static sl_status fail_family(sl_error *err, size_t line, const char *s,
                             size_t n)
{
    char snip[64], list[160];
    family_list(list, sizeof list);
    return sl_fail(err, SL_EINVAL, "badfamily",
                   "line %zu, column family: unknown family '%s' (expected %s)",
                   line, snippet(s, n, snip, sizeof snip), list);
}

/* A column name: a letter, then letters, digits, underscores. */
static int valid_name(const char *s, size_t n)
{
    size_t i;
    if (n == 0 || n > SL_OBS_NAME_MAX || !is_alpha(s[0]))
        return 0;
    for (i = 1; i < n; i++)
        if (!is_alpha(s[i]) && !is_digit(s[i]) && s[i] != '_')
            return 0;
    return 1;
}

static int known_index(const char *s, size_t n)
{
    int k;
    for (k = 0; k < C_KNOWN; k++)
        if (strlen(known_names[k]) == n && memcmp(known_names[k], s, n) == 0)
            return k;
    return -1;
}

/* Parse a numeric field. 0: ok; 1: not a number; 2: out of range. An empty
 * field is NaN. The syntax is checked before strtod, so neither hex floats
 * nor a locale's decimal comma slip through. */
static int parse_number(const char *s, size_t n, double *out)
{
    char b[NUMBER_MAX + 1];
    const char *q;
    char *endp;
    size_t i = 0, digits = 0;
    double v;
    if (n == 0) {
        *out = NAN;
        return 0;
    }
    if (n > NUMBER_MAX)
        return 1;
    memcpy(b, s, n);
    b[n] = '\0';
    if (b[0] == '+' || b[0] == '-')
        i = 1;
    q = b + i;
    {
        /* the words NaN, Inf, Infinity in any case */
        static const char *const words[3] = {"nan", "inf", "infinity"};
        int w;
        for (w = 0; w < 3; w++) {
            size_t L = strlen(words[w]), k;
            if (n - i != L)
                continue;
            for (k = 0; k < L; k++) {
                char c = q[k];
                if (c >= 'A' && c <= 'Z')
                    c = (char)(c - 'A' + 'a');
                if (c != words[w][k])
                    break;
            }
            if (k == L) {
                if (w == 0)
                    *out = NAN;
                else
                    *out = b[0] == '-' ? -INFINITY : INFINITY;
                return 0;
            }
        }
    }
    while (i < n && is_digit(b[i])) {
        i++;
        digits++;
    }
    if (i < n && b[i] == '.') {
        i++;
        while (i < n && is_digit(b[i])) {
            i++;
            digits++;
        }
    }
    if (digits == 0)
        return 1;
    if (i < n && (b[i] == 'e' || b[i] == 'E')) {
        size_t ed = 0;
        i++;
        if (i < n && (b[i] == '+' || b[i] == '-'))
            i++;
        while (i < n && is_digit(b[i])) {
            i++;
            ed++;
        }
        if (ed == 0)
            return 1;
    }
    if (i != n)
        return 1;
    errno = 0;
    v = strtod(b, &endp);
    if (endp != b + n)
        return 1;
    /* underflow to a subnormal or zero is a correct rounding: keep it */
    if (errno == ERANGE && isinf(v))
        return 2;
    *out = v;
    return 0;
}

/* The checks of one complete row (shared by the reader and the writer). */
static sl_status check_row(size_t line, double t, int have_prev, double prev,
                           double value, double sigma, int fam, sl_error *err)
{
    if (!isfinite(t))
        return sl_fail(err, SL_EINVAL, "badtime",
                       "line %zu, column time: the time must be finite, got %g",
                       line, t);
    if (have_prev && t < prev)
        return sl_fail(err, SL_EINVAL, "badorder",
                       "line %zu, column time: time %.17g comes before the "
                       "previous row's %.17g (rows must be in time order)",
                       line, t, prev);
    if (isinf(value))
        return sl_fail(err, SL_EINVAL, "badnumber",
                       "line %zu, column value: the value is infinite "
                       "(NaN or an empty field marks a missing value)",
                       line);
    /* a subnormal sigma (below DBL_MIN, IEEE 754 binary64) makes the
       log-likelihood NaN or -Inf: refused like 0 */
    if (sl_family_get(fam)->uses_sigma && !(isfinite(sigma) && sigma >= DBL_MIN))
        return sl_fail(err, SL_EINVAL, "badsigma",
                       "line %zu, column sigma: sigma must be finite and at "
                       "least 2.2250738585072014e-308 (the smallest normal "
                       "double) for a %s observation, got %g",
                       line, sl_family_get(fam)->name, sigma);
    return SL_OK;
}

/* ---- the lexer ------------------------------------------------------------ */

typedef struct {
    const char *p, *end;
    size_t line;
} lexer;

/* One field: the text s[0..n-1] as it stands in the buffer (quoted fields
 * still hold their "" pairs, `quoted` says so); `last` is 1 when the field
 * ends its record. */
typedef struct {
    const char *s;
    size_t n;
    int quoted;
    int last;
    size_t line;
} field;

/* The length of a field's text once "" pairs are undone. */
static size_t field_len(const field *f)
{
    size_t i, n = 0;
    if (!f->quoted)
        return f->n;
    for (i = 0; i < f->n; i++, n++)
        if (f->s[i] == '"')
            i++;
    return n;
}

static void field_copy(const field *f, char *out)
{
    size_t i, n = 0;
    for (i = 0; i < f->n; i++) {
        out[n++] = f->s[i];
        if (f->quoted && f->s[i] == '"')
            i++;
    }
    out[n] = '\0';
}

/* Step over a line end at lx->p (LF, CRLF or a lone CR); 1 if there was one. */
static int eat_eol(lexer *lx)
{
    if (lx->p < lx->end && *lx->p == '\r') {
        lx->p++;
        if (lx->p < lx->end && *lx->p == '\n')
            lx->p++;
        lx->line++;
        return 1;
    }
    if (lx->p < lx->end && *lx->p == '\n') {
        lx->p++;
        lx->line++;
        return 1;
    }
    return 0;
}

/* Skip lines that hold only blanks; 1 if a record follows, 0 at the end. */
static int skip_blank_lines(lexer *lx)
{
    for (;;) {
        const char *q = lx->p;
        while (q < lx->end && is_blank(*q))
            q++;
        if (q == lx->end) {
            lx->p = q;
            return 0;
        }
        if (*q != '\r' && *q != '\n')
            return 1;
        lx->p = q;
        eat_eol(lx);
    }
}

struct header_s;
static const char *colref(const struct header_s *h, size_t j, char *out,
                          size_t cap);

/* Lex one field of column j (0-based); h (NULL while the header itself is
 * read) names the column in messages. */
static sl_status lex_field(lexer *lx, field *f, const struct header_s *h,
                           size_t j, sl_error *err)
{
    char col[80];
    while (lx->p < lx->end && is_blank(*lx->p))
        lx->p++;
    f->line = lx->line;
    f->quoted = 0;
    if (lx->p < lx->end && *lx->p == '"') {
        const char *q = ++lx->p;
        f->quoted = 1;
        for (;;) {
            if (q == lx->end)
                return sl_fail(err, SL_EINVAL, "badfield",
                               "line %zu, column %s: the quoted field is never closed",
                               f->line, colref(h, j, col, sizeof col));
            if (*q == '"') {
                if (q + 1 < lx->end && q[1] == '"') {
                    q += 2;
                    continue;
                }
                break;
            }
            if (*q == '\0')
                return sl_fail(err, SL_EINVAL, "badfield",
                               "line %zu, column %s: the field holds a NUL byte",
                               lx->line, colref(h, j, col, sizeof col));
            if (*q == '\n' || (*q == '\r' && !(q + 1 < lx->end && q[1] == '\n')))
                lx->line++;
            q++;
        }
        f->s = lx->p;
        f->n = (size_t)(q - lx->p);
        lx->p = q + 1;
        while (lx->p < lx->end && is_blank(*lx->p))
            lx->p++;
        if (lx->p < lx->end && *lx->p != ',' && *lx->p != '\r' && *lx->p != '\n')
            return sl_fail(err, SL_EINVAL, "badfield",
                           "line %zu, column %s: unexpected text after the closing quote",
                           lx->line, colref(h, j, col, sizeof col));
    } else {
        const char *q = lx->p;
        while (q < lx->end && *q != ',' && *q != '\r' && *q != '\n') {
            if (*q == '"')
                return sl_fail(err, SL_EINVAL, "badfield",
                               "line %zu, column %s: a quote inside an unquoted "
                               "field (quote the whole field and double the quote)",
                               f->line, colref(h, j, col, sizeof col));
            if (*q == '\0')
                return sl_fail(err, SL_EINVAL, "badfield",
                               "line %zu, column %s: the field holds a NUL byte",
                               f->line, colref(h, j, col, sizeof col));
            q++;
        }
        f->s = lx->p;
        f->n = (size_t)(q - lx->p);
        while (f->n > 0 && is_blank(f->s[f->n - 1]))
            f->n--;
        lx->p = q;
    }
    if (lx->p < lx->end && *lx->p == ',') {
        lx->p++;
        f->last = 0;
    } else {
        eat_eol(lx);
        f->last = 1;
    }
    return SL_OK;
}

/* ---- the reader ------------------------------------------------------------ */

typedef struct header_s {
    const char *hdr;   /* start of the header record */
    const char *end;
    size_t hdr_line;
    size_t cols;
    size_t idx[C_KNOWN]; /* column of each known name, SIZE_MAX if absent */
} header;

/* The name of header column j (0-based) into out, for messages. */
static const char *column_name(const header *h, size_t j, char *out, size_t cap)
{
    lexer lx;
    field f;
    size_t k;
    f.s = "";
    f.n = 0;
    if (j >= h->cols) {
        snprintf(out, cap, "%zu (the header has %zu columns)", j + 1, h->cols);
        return out;
    }
    lx.p = h->hdr;
    lx.end = h->end;
    lx.line = h->hdr_line;
    for (k = 0; k <= j; k++)
        if (lex_field(&lx, &f, NULL, k, NULL) != SL_OK)
            break;
    snippet(f.s, f.n, out, cap);
    return out;
}

static const char *colref(const header *h, size_t j, char *out, size_t cap)
{
    if (h == NULL) {
        snprintf(out, cap, "%zu", j + 1);
        return out;
    }
    return column_name(h, j, out, cap);
}

/* Lex and check the header; with tab given, store the names. */
static sl_status read_header(lexer *lx, header *h, sl_obs_size *sz,
                             sl_obs_table *tab, sl_error *err)
{
    field f;
    size_t j = 0, k, name_off = 0, ntext = 0, nnum = 0;
    sl_status st;
    char snip[64];
    for (k = 0; k < C_KNOWN; k++)
        h->idx[k] = SIZE_MAX;
    if (!skip_blank_lines(lx))
        return sl_fail(err, SL_EINVAL, "badheader",
                       "line %zu: no header row (expected the columns time, "
                       "variable, value, sigma)",
                       lx->line);
    h->hdr = lx->p;
    h->end = lx->end;
    h->hdr_line = lx->line;
    do {
        int kn;
        if (j >= COLS_MAX)
            return sl_fail(err, SL_EINVAL, "badheader",
                           "line %zu: more than %d columns", h->hdr_line,
                           (int)COLS_MAX);
        st = lex_field(lx, &f, NULL, j, err);
        if (st != SL_OK)
            return st;
        if (!valid_name(f.s, f.n) || (f.quoted && memchr(f.s, '"', f.n)))
            return sl_fail(err, SL_EINVAL, "badheader",
                           "line %zu, column %zu: '%s' is not a column name (a "
                           "letter, then letters, digits or _, at most %d characters)",
                           f.line, j + 1, snippet(f.s, f.n, snip, sizeof snip),
                           (int)SL_OBS_NAME_MAX);
        {
            /* the earlier names are valid, so they hold no "" pairs */
            lexer again;
            field g;
            again.p = h->hdr;
            again.end = h->end;
            again.line = h->hdr_line;
            for (k = 0; k < j; k++) {
                lex_field(&again, &g, NULL, k, NULL);
                if (g.n == f.n && memcmp(g.s, f.s, f.n) == 0)
                    return sl_fail(err, SL_EINVAL, "badheader",
                                   "line %zu, column %s: the name appears "
                                   "twice (columns %zu and %zu)",
                                   f.line, snippet(f.s, f.n, snip, sizeof snip),
                                   k + 1, j + 1);
            }
        }
        kn = known_index(f.s, f.n);
        if (kn >= 0)
            h->idx[kn] = j;
        if (tab != NULL) {
            if (name_off + f.n + 1 > sz->name_bytes)
                return sl_fail(err, SL_EINVAL, "badsize",
                               "the buffers do not match the measured table");
            memcpy(tab->names + name_off, f.s, f.n);
            tab->names[name_off + f.n] = '\0';
            tab->name_at[j] = name_off;
            tab->is_text[j] = kn == C_VARIABLE || kn == C_FAMILY;
            tab->slot[j] = tab->is_text[j] ? ntext : nnum;
        }
        if (kn == C_VARIABLE || kn == C_FAMILY)
            ntext++;
        else
            nnum++;
        name_off += f.n + 1;
        j++;
    } while (!f.last);
    h->cols = j;
    for (k = 0; k < C_FAMILY; k++)
        if (h->idx[k] == SIZE_MAX)
            return sl_fail(err, SL_EINVAL, "badheader",
                           "line %zu, column %s: the header has no such column "
                           "(time, variable, value and sigma are required)",
                           h->hdr_line, known_names[k]);
    if (tab == NULL) {
        sz->cols = j;
        sz->ntext = ntext;
        sz->nnum = nnum;
        sz->name_bytes = name_off;
    } else if (sz->cols != j || sz->ntext != ntext || sz->nnum != nnum) {
        return sl_fail(err, SL_EINVAL, "badsize",
                       "the buffers do not match the measured table");
    }
    return SL_OK;
}

/* The one pass of measure (tab NULL) and parse (tab given). */
static sl_status run(const char *buf, size_t len, sl_obs_size *sz,
                     sl_obs_table *tab, sl_error *err)
{
    lexer lx;
    header h;
    sl_status st;
    size_t rows = 0, text_off = 0, nmissing = 0;
    double prev = 0;
    char col[80], snip[64];
    lx.p = buf;
    lx.end = buf + len;
    lx.line = 1;
    if (len >= 3 && (unsigned char)buf[0] == 0xEF &&
        (unsigned char)buf[1] == 0xBB && (unsigned char)buf[2] == 0xBF)
        lx.p += 3;
    st = read_header(&lx, &h, sz, tab, err);
    if (st != SL_OK)
        return st;
    while (skip_blank_lines(&lx)) {
        size_t j = 0, line = lx.line;
        double t = NAN, value = NAN, sigma = NAN;
        int fam = SL_FAMILY_GAUSSIAN;
        field f;
        if (tab != NULL && rows >= sz->rows)
            return sl_fail(err, SL_EINVAL, "badsize",
                           "the buffers do not match the measured table");
        do {
            int is_text;
            if (j >= h.cols)
                return sl_fail(err, SL_EINVAL, "badfield",
                               "line %zu, column %zu: more fields than the "
                               "header's %zu columns",
                               lx.line, j + 1, h.cols);
            st = lex_field(&lx, &f, &h, j, err);
            if (st != SL_OK)
                return st;
            is_text = j == h.idx[C_VARIABLE] || j == h.idx[C_FAMILY];
            if (is_text) {
                size_t n = field_len(&f);
                if (j == h.idx[C_FAMILY]) {
                    char name[32];
                    if (n >= sizeof name)
                        return fail_family(err, f.line, f.s, f.n);
                    field_copy(&f, name);
                    fam = family_id(name, n);
                    if (fam < 0)
                        return fail_family(err, f.line, name, n);
                }
                if (tab != NULL) {
                    size_t k = tab->slot[j];
                    if (text_off + n + 1 > sz->text_bytes)
                        return sl_fail(err, SL_EINVAL, "badsize",
                                       "the buffers do not match the measured table");
                    field_copy(&f, tab->text + text_off);
                    tab->text_at[rows + k * sz->rows] = text_off;
                }
                text_off += n + 1;
            } else {
                char num[NUMBER_MAX + 1];
                double v;
                size_t n = field_len(&f);
                int rc;
                if (n > NUMBER_MAX) {
                    rc = 1;
                } else {
                    field_copy(&f, num);
                    rc = parse_number(num, n, &v);
                }
                if (rc != 0)
                    return sl_fail(err, SL_EINVAL, "badnumber",
                                   "line %zu, column %s: '%s' is %s", f.line,
                                   column_name(&h, j, col, sizeof col), snippet(f.s, f.n, snip, sizeof snip),
                                   rc == 1 ? "not a number"
                                           : "out of the range of doubles");
                if (j == h.idx[C_TIME])
                    t = v;
                else if (j == h.idx[C_VALUE])
                    value = v;
                else if (j == h.idx[C_SIGMA])
                    sigma = v;
                if (tab != NULL)
                    tab->num[rows + tab->slot[j] * sz->rows] = v;
            }
            j++;
        } while (!f.last);
        if (j < h.cols)
            return sl_fail(err, SL_EINVAL, "badfield",
                           "line %zu, column %s: the row has %zu fields, the "
                           "header %zu",
                           line, column_name(&h, j, col, sizeof col), j, h.cols);
        st = check_row(line, t, rows > 0, prev, value, sigma, fam, err);
        if (st != SL_OK)
            return st;
        prev = t;
        if (isnan(value))
            nmissing++;
        rows++;
    }
    if (tab == NULL) {
        sz->rows = rows;
        sz->text_bytes = text_off;
        sz->nmissing = nmissing;
    } else if (rows != sz->rows) {
        return sl_fail(err, SL_EINVAL, "badsize",
                       "the buffers do not match the measured table");
    }
    return SL_OK;
}

sl_status sl_obsfile_measure(const char *buf, size_t len, sl_obs_size *size,
                             sl_error *err)
{
    sl_obs_size sz;
    sl_status st;
    sl_error_clear(err);
    if ((buf == NULL && len > 0) || size == NULL)
        return sl_fail(err, SL_EINVAL, "badarg",
                       "sl_obsfile_measure: NULL buffer or size record");
    memset(&sz, 0, sizeof sz);
    st = run(buf != NULL ? buf : "", len, &sz, NULL, err);
    if (st == SL_OK)
        *size = sz;
    return st;
}

sl_status sl_obsfile_parse(const char *buf, size_t len,
                           const sl_obs_size *size, sl_obs_table *tab,
                           sl_error *err)
{
    sl_obs_size sz;
    sl_error_clear(err);
    if ((buf == NULL && len > 0) || size == NULL || tab == NULL ||
        tab->names == NULL || tab->name_at == NULL || tab->is_text == NULL ||
        tab->slot == NULL || (size->rows > 0 && size->nnum > 0 && tab->num == NULL) ||
        (size->text_bytes > 0 && tab->text == NULL) ||
        (size->rows > 0 && size->ntext > 0 && tab->text_at == NULL))
        return sl_fail(err, SL_EINVAL, "badarg",
                       "sl_obsfile_parse: NULL buffer or table");
    sz = *size;
    return run(buf != NULL ? buf : "", len, &sz, tab, err);
}

/* ---- the writer ------------------------------------------------------------ */

typedef struct {
    char *buf;
    size_t cap, n;
    int overflow;
} sink;

static void put(sink *o, const char *s, size_t n)
{
    if (n > SIZE_MAX - o->n) {
        o->overflow = 2;
        return;
    }
    if (o->buf != NULL) {
        if (o->n + n <= o->cap)
            memcpy(o->buf + o->n, s, n);
        else
            o->overflow = 1;
    }
    o->n += n;
}

static void put_number(sink *o, double v)
{
    char b[40];
    int w;
    if (isnan(v))
        w = snprintf(b, sizeof b, "NaN");
    else if (isinf(v))
        w = snprintf(b, sizeof b, v > 0 ? "Inf" : "-Inf");
    else
        w = snprintf(b, sizeof b, "%.17g", v);
    put(o, b, (size_t)w);
}

static void put_text(sink *o, const char *s)
{
    size_t n = strlen(s), i;
    int quote = n > 0 && (is_blank(s[0]) || is_blank(s[n - 1]));
    for (i = 0; i < n && !quote; i++)
        if (s[i] == ',' || s[i] == '"' || s[i] == '\r' || s[i] == '\n')
            quote = 1;
    if (!quote) {
        put(o, s, n);
        return;
    }
    put(o, "\"", 1);
    for (i = 0; i < n; i++) {
        put(o, s + i, 1);
        if (s[i] == '"')
            put(o, "\"", 1);
    }
    put(o, "\"", 1);
}

sl_status sl_obsfile_format(size_t rows, size_t cols,
                            const sl_obs_column *col, char *buf, size_t cap,
                            size_t *need, sl_error *err)
{
    size_t idx[C_KNOWN], i, j, k;
    sink o;
    double prev = 0;
    sl_error_clear(err);
    if (need == NULL || (cols > 0 && col == NULL))
        return sl_fail(err, SL_EINVAL, "badarg",
                       "sl_obsfile_format: NULL column list or need");
    for (k = 0; k < C_KNOWN; k++)
        idx[k] = SIZE_MAX;
    for (j = 0; j < cols; j++) {
        const char *name = col[j].name;
        size_t n = name != NULL ? strlen(name) : 0;
        int kn, want_text;
        char snip[64];
        if (!valid_name(name != NULL ? name : "", n))
            return sl_fail(err, SL_EINVAL, "badheader",
                           "line 1, column %zu: '%s' is not a column name (a "
                           "letter, then letters, digits or _, at most %d characters)",
                           j + 1, snippet(name != NULL ? name : "", n, snip, sizeof snip),
                           (int)SL_OBS_NAME_MAX);
        for (k = 0; k < j; k++)
            if (strcmp(col[k].name, name) == 0)
                return sl_fail(err, SL_EINVAL, "badheader",
                               "line 1, column %s: the name appears twice "
                               "(columns %zu and %zu)",
                               name, k + 1, j + 1);
        kn = known_index(name, n);
        if (kn >= 0)
            idx[kn] = j;
        want_text = kn == C_VARIABLE || kn == C_FAMILY;
        if ((col[j].num != NULL) == (col[j].text != NULL) ||
            (want_text && col[j].text == NULL) ||
            (!want_text && col[j].num == NULL))
            return sl_fail(err, SL_EINVAL, "badfield",
                           "line 1, column %s: expected a %s column", name,
                           want_text ? "text" : "numeric");
        if (want_text && rows > 0)
            for (i = 0; i < rows; i++)
                if (col[j].text[i] == NULL)
                    return sl_fail(err, SL_EINVAL, "badfield",
                                   "line %zu, column %s: no text given",
                                   i + 2, name);
    }
    for (k = 0; k < C_FAMILY; k++)
        if (idx[k] == SIZE_MAX)
            return sl_fail(err, SL_EINVAL, "badheader",
                           "line 1, column %s: the table has no such column "
                           "(time, variable, value and sigma are required)",
                           known_names[k]);
    for (i = 0; i < rows; i++) {
        int fam = SL_FAMILY_GAUSSIAN;
        sl_status st;
        if (idx[C_FAMILY] != SIZE_MAX) {
            const char *s = col[idx[C_FAMILY]].text[i];
            fam = sl_family_find(s);
            if (fam < 0)
                return fail_family(err, i + 2, s, strlen(s));
        }
        st = check_row(i + 2, col[idx[C_TIME]].num[i], i > 0, prev,
                       col[idx[C_VALUE]].num[i], col[idx[C_SIGMA]].num[i], fam,
                       err);
        if (st != SL_OK)
            return st;
        prev = col[idx[C_TIME]].num[i];
    }
    o.buf = buf;
    o.cap = cap;
    o.n = 0;
    o.overflow = 0;
    for (j = 0; j < cols; j++) {
        if (j > 0)
            put(&o, ",", 1);
        put(&o, col[j].name, strlen(col[j].name));
    }
    put(&o, "\n", 1);
    for (i = 0; i < rows; i++) {
        for (j = 0; j < cols; j++) {
            if (j > 0)
                put(&o, ",", 1);
            if (col[j].text != NULL)
                put_text(&o, col[j].text[i]);
            else
                put_number(&o, col[j].num[i]);
        }
        put(&o, "\n", 1);
    }
    if (o.overflow == 2)
        return sl_fail(err, SL_ENOMEM, "nomemory",
                       "the CSV text would exceed the address space");
    *need = o.n;
    if (o.overflow)
        return sl_fail(err, SL_EINVAL, "bufsize",
                       "the buffer holds %zu bytes, the text needs %zu", cap,
                       o.n);
    return SL_OK;
}
