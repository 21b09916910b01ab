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

/* s[0..n-1] equals the lower-case word w, in any case. */
static int same_word(const char *s, size_t n, const char *w)
{
    size_t k;
    if (strlen(w) != n)
        return 0;
    for (k = 0; k < n; k++) {
        char c = s[k];
        if (c >= 'A' && c <= 'Z')
            c = (char)(c - 'A' + 'a');
        if (c != w[k])
            return 0;
    }
    return 1;
}

/* The words spreadsheets and R write for a missing number. */
static int is_missing_word(const char *s, size_t n)
{
    return same_word(s, n, "na") || same_word(s, n, "n/a") || same_word(s, n, "#n/a");
}

/* Parse a numeric field. 0: ok; 1: not a number; 2: out of range. An empty
 * field, NA, N/A and #N/A are NaN. The syntax is checked before strtod, so neither hex floats
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
    if (is_missing_word(b, n)) {
        *out = NAN;
        return 0;
    }
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
    if (isnan(t))
        return sl_fail(err, SL_EINVAL, "badtime",
                       "line %zu, column time: the time is missing (every row "
                       "needs one)",
                       line);
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
       log-likelihood NaN or -Inf: refused like 0. A missing value needs
       no sigma. */
    if (sl_family_get(fam)->uses_sigma && !isnan(value) &&
        !(isfinite(sigma) && sigma >= DBL_MIN))
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
    char sep;
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

/* A blank around fields: a space, or a tab unless the tab separates. */
static int lx_blank(const lexer *lx, char c)
{
    return c == ' ' || (c == '\t' && lx->sep != '\t');
}

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

/* Skip blank lines, comment lines (first non-blank character # or %) and,
 * with seps_too, lines of separators and blanks only; 1 if a record
 * follows, 0 at the end. */
static int skip_lines(lexer *lx, int seps_too)
{
    for (;;) {
        const char *q = lx->p;
        while (q < lx->end && (*q == ' ' || *q == '\t' || (seps_too && *q == lx->sep)))
            q++;
        if (q == lx->end) {
            lx->p = q;
            return 0;
        }
        if (*q == '#' || *q == '%') {
            while (q < lx->end && *q != '\r' && *q != '\n')
                q++;
        } else if (*q != '\r' && *q != '\n') {
            return 1;
        }
        lx->p = q;
        if (!eat_eol(lx))
            return 0;
    }
}

struct reader_s;
static const char *colref(const struct reader_s *rd, size_t j, char *out,
                          size_t cap);

/* Lex one field of header column j (0-based); rd names the column in
 * messages once the header is known. */
static sl_status lex_field(lexer *lx, field *f, const struct reader_s *rd,
                           size_t j, sl_error *err)
{
    char col[80];
    const char sep = lx->sep;
    while (lx->p < lx->end && lx_blank(lx, *lx->p))
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
                               f->line, colref(rd, j, col, sizeof col));
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
                               lx->line, colref(rd, j, col, sizeof col));
            if (*q == '\n' || (*q == '\r' && !(q + 1 < lx->end && q[1] == '\n')))
                lx->line++;
            q++;
        }
        f->s = lx->p;
        f->n = (size_t)(q - lx->p);
        lx->p = q + 1;
        while (lx->p < lx->end && lx_blank(lx, *lx->p))
            lx->p++;
        if (lx->p < lx->end && *lx->p != sep && *lx->p != '\r' && *lx->p != '\n')
            return sl_fail(err, SL_EINVAL, "badfield",
                           "line %zu, column %s: unexpected text after the closing quote",
                           lx->line, colref(rd, j, col, sizeof col));
    } else {
        const char *q = lx->p;
        while (q < lx->end && *q != sep && *q != '\r' && *q != '\n') {
            if (*q == '"')
                return sl_fail(err, SL_EINVAL, "badfield",
                               "line %zu, column %s: a quote inside an unquoted "
                               "field (quote the whole field and double the quote)",
                               f->line, colref(rd, j, col, sizeof col));
            if (*q == '\0')
                return sl_fail(err, SL_EINVAL, "badfield",
                               "line %zu, column %s: the field holds a NUL byte",
                               f->line, colref(rd, j, col, sizeof col));
            q++;
        }
        f->s = lx->p;
        f->n = (size_t)(q - lx->p);
        while (f->n > 0 && lx_blank(lx, f->s[f->n - 1]))
            f->n--;
        lx->p = q;
    }
    if (lx->p < lx->end && *lx->p == sep) {
        lx->p++;
        f->last = 0;
    } else {
        eat_eol(lx);
        f->last = 1;
    }
    return SL_OK;
}

/* ---- the reader ------------------------------------------------------------ */

/* What a header column is: one of the required or family columns (C_*),
 * a numeric column the families use, another column, or one without a
 * name. */
enum { R_N = C_KNOWN, R_DOF, R_LIMIT, R_OTHER, R_UNNAMED };
static const char *const numeric_known[3] = {"n", "dof", "limit"};

/* Equal texts in lower and upper case alike. */
static int same_name(const char *a, size_t na, const char *b, size_t nb)
{
    size_t k;
    if (na != nb)
        return 0;
    for (k = 0; k < na; k++) {
        char x = a[k], y = b[k];
        if (x >= 'A' && x <= 'Z')
            x = (char)(x - 'A' + 'a');
        if (y >= 'A' && y <= 'Z')
            y = (char)(y - 'A' + 'a');
        if (x != y)
            return 0;
    }
    return 1;
}

static int role_of(const char *s, size_t n)
{
    int k;
    for (k = 0; k < C_KNOWN; k++)
        if (same_name(s, n, known_names[k], strlen(known_names[k])))
            return k;
    for (k = 0; k < 3; k++)
        if (same_name(s, n, numeric_known[k], strlen(numeric_known[k])))
            return R_N + k;
    return R_OTHER;
}

/* Equal texts share a code through a table of HASH_MAX slots per text
 * column at most, filled to half. */
enum { HASH_MAX = 4096 };

typedef struct {
    size_t off;  /* the text's offset, SIZE_MAX when the slot is free */
    size_t code;
} hash_slot;

typedef struct reader_s {
    const sl_obs_read_opts *o;
    int wide;                   /* 1: a series table (time or date, then series) */
    int decimal_comma;
    /* the header, by column position */
    size_t hdr_line;
    size_t ncols;               /* columns of the header line */
    size_t idx[C_KNOWN];        /* position of each known column, SIZE_MAX if absent */
    int header_done;
    const char *name[COLS_MAX]; /* as written, without the unit */
    size_t name_len[COLS_MAX];
    const char *unit[COLS_MAX];
    size_t unit_len[COLS_MAX];
    unsigned char role[COLS_MAX];
    size_t kept[COLS_MAX];      /* index among the kept columns */
    /* while measuring: text bytes of each other column, whatever its kind */
    size_t other_bytes[COLS_MAX];
} reader;

static const char *colref(const reader *rd, size_t j, char *out, size_t cap)
{
    if (rd == NULL || !rd->header_done || (j < rd->ncols && rd->role[j] == R_UNNAMED))
        snprintf(out, cap, "%zu", j + 1);
    else if (j >= rd->ncols)
        snprintf(out, cap, "%zu (the header has %zu columns)", j + 1, rd->ncols);
    else
        snippet(rd->name[j], rd->name_len[j], out, cap);
    return out;
}

char sl_obsfile_separator(const char *buf, size_t len)
{
    lexer lx;
    const char *q;
    size_t count[3] = {0, 0, 0};
    int quoted = 0, depth = 0;
    if (buf == NULL)
        return ',';
    lx.p = buf;
    lx.end = buf + len;
    lx.line = 1;
    lx.sep = ',';
    if (len >= 3 && (unsigned char)buf[0] == 0xEF && (unsigned char)buf[1] == 0xBB &&
        (unsigned char)buf[2] == 0xBF)
        lx.p += 3;
    if (!skip_lines(&lx, 0))
        return ',';
    for (q = lx.p; q < lx.end; q++) {
        char c = *q;
        if (c == '"') {
            quoted = !quoted;
        } else if (quoted) {
            continue;
        } else if (c == '\r' || c == '\n') {
            break;
        } else if (c == '[' || c == '(') {
            depth++;
        } else if ((c == ']' || c == ')') && depth > 0) {
            depth--;
        } else if (depth == 0) {
            count[0] += c == ',';
            count[1] += c == ';';
            count[2] += c == '\t';
        }
    }
    return count[0] ? ',' : count[1] ? ';' : count[2] ? '\t' : ',';
}

/* Split a header field into its name and an optional unit in brackets. */
static sl_status split_name(const field *f, size_t j, const char **name,
                            size_t *nlen, const char **unit, size_t *ulen,
                            sl_error *err)
{
    size_t i, k;
    char snip[64];
    const char *s = f->s;
    *unit = s + f->n;
    *ulen = 0;
    for (i = 0; i < f->n && s[i] != '[' && s[i] != '('; i++)
        ;
    *name = s;
    *nlen = i;
    while (*nlen > 0 && (s[*nlen - 1] == ' ' || s[*nlen - 1] == '\t'))
        (*nlen)--;
    if (i < f->n) {
        char close = s[i] == '[' ? ']' : ')';
        for (k = i + 1; k < f->n && s[k] != close; k++)
            ;
        if (k == f->n)
            return sl_fail(err, SL_EINVAL, "badheader",
                           "line %zu, column %zu: '%s': the unit's bracket is "
                           "never closed (write e.g. value [m3/s])",
                           f->line, j + 1, snippet(s, f->n, snip, sizeof snip));
        *unit = s + i + 1;
        *ulen = k - i - 1;
        for (k = k + 1; k < f->n; k++)
            if (s[k] != ' ' && s[k] != '\t')
                return sl_fail(err, SL_EINVAL, "badheader",
                               "line %zu, column %zu: '%s': text after the unit "
                               "(write the name, then the unit in brackets)",
                               f->line, j + 1, snippet(s, f->n, snip, sizeof snip));
    }
    return SL_OK;
}

/* Lex and check the header; with tab given, store the names and units. */
static sl_status read_header(lexer *lx, reader *rd, sl_obs_size *sz,
                             sl_obs_table *tab, sl_error *err)
{
    field f;
    size_t j = 0, k, kept = 0, name_off = 0, unit_off = 0, ntext = 0, nnum = 0;
    sl_status st;
    char snip[64];
    for (k = 0; k < C_KNOWN; k++)
        rd->idx[k] = SIZE_MAX;
    rd->header_done = 0;
    if (!skip_lines(lx, rd->o->skip_empty))
        return sl_fail(err, SL_EINVAL, "badheader",
                       "line %zu: no header row (expected %s)", lx->line,
                       rd->wide ? "a time or date column and one column per series"
                                : "the columns time, variable, value, sigma");
    rd->hdr_line = lx->line;
    do {
        const char *name, *unit;
        size_t nlen, ulen;
        int role;
        if (j >= COLS_MAX)
            return sl_fail(err, SL_EINVAL, "badheader",
                           "line %zu: more than %d columns", rd->hdr_line,
                           (int)COLS_MAX);
        st = lex_field(lx, &f, NULL, j, err);
        if (st != SL_OK)
            return st;
        if (f.quoted && memchr(f.s, '"', f.n))
            return sl_fail(err, SL_EINVAL, "badheader",
                           "line %zu, column %zu: '%s' is not a column name (a "
                           "letter, then letters, digits or _, at most %d characters)",
                           f.line, j + 1, snippet(f.s, f.n, snip, sizeof snip),
                           (int)SL_OBS_NAME_MAX);
        st = split_name(&f, j, &name, &nlen, &unit, &ulen, err);
        if (st != SL_OK)
            return st;
        if (f.n == 0 && rd->o->skip_empty) {
            role = R_UNNAMED;
        } else if (nlen == 0 && f.n > 0) {
            return sl_fail(err, SL_EINVAL, "badheader",
                           "line %zu, column %zu: the unit '%s' has no column name",
                           f.line, j + 1, snippet(f.s, f.n, snip, sizeof snip));
        } else if (!valid_name(name, nlen)) {
            return sl_fail(err, SL_EINVAL, "badheader",
                           "line %zu, column %zu: '%s' is not a column name (a "
                           "letter, then letters, digits or _, at most %d characters)",
                           f.line, j + 1, snippet(name, nlen, snip, sizeof snip),
                           (int)SL_OBS_NAME_MAX);
        } else {
            role = rd->wide ? (same_name(name, nlen, "time", 4) ||
                                       same_name(name, nlen, "date", 4)
                                   ? C_TIME
                                   : R_OTHER)
                            : role_of(name, nlen);
            for (k = 0; k < j; k++)
                if (rd->role[k] != R_UNNAMED &&
                    same_name(rd->name[k], rd->name_len[k], name, nlen))
                    return sl_fail(err, SL_EINVAL, "badheader",
                                   "line %zu, column %s: the name appears "
                                   "twice (columns %zu and %zu)",
                                   f.line, snippet(name, nlen, snip, sizeof snip),
                                   k + 1, j + 1);
            if (rd->wide && role == C_TIME && rd->idx[C_TIME] != SIZE_MAX)
                return sl_fail(err, SL_EINVAL, "badheader",
                               "line %zu, column %s: a second time column "
                               "(column %zu is one); keep one of them",
                               f.line, snippet(name, nlen, snip, sizeof snip),
                               rd->idx[C_TIME] + 1);
        }
        rd->name[j] = name;
        rd->name_len[j] = nlen;
        rd->unit[j] = unit;
        rd->unit_len[j] = ulen;
        rd->role[j] = (unsigned char)role;
        if (role < C_KNOWN)
            rd->idx[role] = j;
        if (role != R_UNNAMED && !(rd->wide && role == C_TIME)) {
            /* (a series table keeps its time column apart) */
            int text = !rd->wide && (role == C_VARIABLE || role == C_FAMILY ||
                                     (role == R_OTHER && tab != NULL && sz->col_text[j]));
            rd->kept[j] = kept;
            if (tab != NULL) {
                if (name_off + nlen + 1 > sz->name_bytes ||
                    (tab->units != NULL && unit_off + ulen + 1 > sz->unit_bytes))
                    return sl_fail(err, SL_EINVAL, "badsize",
                                   "the buffers do not match the measured table");
                for (k = 0; k < nlen; k++) {
                    char c = name[k];
                    tab->names[name_off + k] =
                        (c >= 'A' && c <= 'Z') ? (char)(c - 'A' + 'a') : c;
                }
                tab->names[name_off + nlen] = '\0';
                tab->name_at[kept] = name_off;
                if (tab->units != NULL) {
                    memcpy(tab->units + unit_off, unit, ulen);
                    tab->units[unit_off + ulen] = '\0';
                    tab->unit_at[kept] = unit_off;
                }
                if (tab->is_text != NULL)
                    tab->is_text[kept] = text;
                if (tab->slot != NULL)
                    tab->slot[kept] = text ? ntext : nnum;
                if (text)
                    ntext++;
                else
                    nnum++;
            }
            name_off += nlen + 1;
            unit_off += ulen + 1;
            kept++;
        }
        j++;
    } while (!f.last);
    rd->ncols = j;
    rd->header_done = 1;
    if (rd->wide) {
        if (rd->idx[C_TIME] == SIZE_MAX)
            return sl_fail(err, SL_EINVAL, "badheader",
                           "line %zu: no time column (name one column time or date)",
                           rd->hdr_line);
        if (kept == 0)
            return sl_fail(err, SL_EINVAL, "badheader",
                           "line %zu: no series besides the time column",
                           rd->hdr_line);
    }
    for (k = 0; k < C_FAMILY && !rd->wide; k++)
        if (rd->idx[k] == SIZE_MAX)
            return sl_fail(err, SL_EINVAL, "badheader",
                           "line %zu, column %s: the header has no such column "
                           "(time, variable, value and sigma are required)",
                           rd->hdr_line, known_names[k]);
    if (tab == NULL) {
        sz->cols = kept;
        sz->name_bytes = name_off;
        sz->unit_bytes = unit_off;
    } else if (sz->cols != kept || sz->ntext != ntext || sz->nnum != nnum) {
        return sl_fail(err, SL_EINVAL, "badsize",
                       "the buffers do not match the measured table");
    }
    return SL_OK;
}

/* A numeric field into v: 0 ok, 1 not a number, 2 out of range. A decimal
 * comma is read as a point where the comma does not separate. */
static int field_number(const reader *rd, const field *f, double *v)
{
    char num[NUMBER_MAX + 1];
    size_t n = field_len(f);
    if (n > NUMBER_MAX)
        return 1;
    field_copy(f, num);
    if (rd->decimal_comma && memchr(num, ',', n) != NULL && memchr(num, '.', n) == NULL) {
        char *c = memchr(num, ',', n);
        if (memchr(c + 1, ',', n - (size_t)(c - num) - 1) == NULL)
            *c = '.';
    }
    return parse_number(num, n, v);
}

/* The model time of a time field; *form is the form of the first row
 * (-1 before it), *form_line its line. */
static sl_status read_time(const reader *rd, const field *f, int *form,
                           size_t *form_line, double *t, sl_error *err)
{
    char snip[64];
    int this_form;
    const char *s = f->s;
    size_t n = f->n;
    sl_utc at;
    sl_error derr;
    char tcol[80];
    /* the observation table's time column is time; a series table's is
       named as its header writes it (time or date) */
    const char *tname = rd->wide ? colref(rd, rd->idx[C_TIME], tcol, sizeof tcol) : "time";
    if (f->quoted && memchr(s, '"', n) != NULL)
        return sl_fail(err, SL_EINVAL, "badnumber",
                       "line %zu, column %s: '%s' is not a number or a date",
                       f->line, tname, snippet(s, n, snip, sizeof snip));
    this_form = sl_date_like(s, n) ? SL_OBS_TIME_DATES
                : rd->o->datenums  ? SL_OBS_TIME_DATENUMS
                                   : SL_OBS_TIME_NUMBERS;
    if (*form < 0) {
        *form = this_form;
        *form_line = f->line;
    } else if (this_form != *form && n > 0) {
        return sl_fail(err, SL_EINVAL, "badtime",
                       "line %zu, column %s: '%s' is %s, but line %zu holds %s; "
                       "write every time the same way",
                       f->line, tname, snippet(s, n, snip, sizeof snip),
                       this_form == SL_OBS_TIME_DATES ? "a date" : "a number",
                       *form_line, *form == SL_OBS_TIME_DATES ? "a date" : "a number");
    }
    if (this_form == SL_OBS_TIME_NUMBERS || n == 0) {
        int rc = field_number(rd, f, t);
        if (rc != 0)
            return sl_fail(err, SL_EINVAL, "badnumber",
                           "line %zu, column %s: '%s' is %s", f->line, tname,
                           snippet(s, n, snip, sizeof snip),
                           rc == 1 ? "not a number or a date (dates are written "
                                     "YYYY-MM-DD or YYYY-MM-DDThh:mm:ss)"
                                   : "out of the range of doubles");
        return SL_OK;
    }
    if (!rd->o->has_origin)
        return sl_fail(err, SL_EINVAL, "noorigin",
                       "line %zu, column %s: the times are %s ('%s'), but no "
                       "origin (the date of model time 0) was given",
                       f->line, tname, this_form == SL_OBS_TIME_DATES ? "dates" : "day numbers",
                       snippet(s, n, snip, sizeof snip));
    if (this_form == SL_OBS_TIME_DATES) {
        if (sl_date_parse(s, n, &at, &derr) != SL_OK)
            return sl_fail(err, SL_EINVAL, "baddate",
                           "line %zu, column %s: '%s' is not a date: %s", f->line,
                           tname, snippet(s, n, snip, sizeof snip), derr.message);
    } else {
        double dn;
        int rc = field_number(rd, f, &dn);
        if (rc != 0)
            return sl_fail(err, SL_EINVAL, "badnumber",
                           "line %zu, column %s: '%s' is not a day number",
                           f->line, tname, snippet(s, n, snip, sizeof snip));
        if (isnan(dn)) {
            *t = NAN;
            return SL_OK;
        }
        if (sl_date_from_datenum(dn, &at, &derr) != SL_OK)
            return sl_fail(err, SL_EINVAL, "baddate", "line %zu, column %s: %s",
                           f->line, tname, derr.message);
    }
    *t = sl_date_elapsed(at, rd->o->origin, rd->o->unit_days);
    return SL_OK;
}

static size_t hash_slots(size_t rows)
{
    size_t hs = 16;
    while (hs < 2 * rows && hs < HASH_MAX)
        hs *= 2;
    return hs;
}

static uint64_t text_hash(const char *s)
{
    uint64_t h = 1469598103934665603ull;
    for (; *s; s++) {
        h ^= (unsigned char)*s;
        h *= 1099511628211ull;
    }
    return h;
}

/* The code of the text just copied to text + *off for text column k: an
 * earlier equal text's code (and *off rewinds onto that text), or a new
 * one. */
static size_t text_code(sl_obs_table *tab, size_t k, size_t hs, size_t *off)
{
    hash_slot *tb = (hash_slot *)tab->work + k * hs;
    const char *s = tab->text + *off;
    size_t i = (size_t)(text_hash(s) & (hs - 1)), code;
    while (tb[i].off != SIZE_MAX) {
        if (strcmp(tab->text + tb[i].off, s) == 0) {
            *off = tb[i].off;
            return tb[i].code;
        }
        i = (i + 1) & (hs - 1);
    }
    code = tab->ncodes[k]++;
    if (code < hs / 2) {
        tb[i].off = *off;
        tb[i].code = code;
    }
    return code;
}

/* perm[0..m-1]: the row indices in a stable order of key (merge sort;
 * tmp holds m indices). */
static void stable_order(const double *key, size_t m, size_t *perm, size_t *tmp)
{
    size_t width, i;
    for (i = 0; i < m; i++)
        perm[i] = i;
    for (width = 1; width < m; width *= 2) {
        for (i = 0; i < m; i += 2 * width) {
            size_t a = i, mid = i + width < m ? i + width : m,
                   end = i + 2 * width < m ? i + 2 * width : m, b = mid, o = i;
            while (a < mid && b < end)
                tmp[o++] = key[perm[b]] < key[perm[a]] ? perm[b++] : perm[a++];
            while (a < mid)
                tmp[o++] = perm[a++];
            while (b < end)
                tmp[o++] = perm[b++];
        }
        memcpy(perm, tmp, m * sizeof *perm);
    }
}

/* Sort the parsed rows stably by time. */
static void sort_rows(const sl_obs_size *sz, sl_obs_table *tab, size_t time_slot)
{
    const size_t m = sz->rows;
    size_t *perm = (size_t *)tab->work, *tmp = perm + m, i, k;
    double *dbuf = (double *)(tmp + m);
    size_t *zbuf = (size_t *)(tmp + m);
    stable_order(tab->num + time_slot * m, m, perm, tmp);
    for (k = 0; k < sz->nnum; k++) {
        double *c = tab->num + k * m;
        for (i = 0; i < m; i++)
            dbuf[i] = c[perm[i]];
        memcpy(c, dbuf, m * sizeof *c);
    }
    for (k = 0; k < sz->ntext; k++) {
        size_t *c = tab->text_at + k * m;
        for (i = 0; i < m; i++)
            zbuf[i] = c[perm[i]];
        memcpy(c, zbuf, m * sizeof *c);
        if (tab->text_code != NULL) {
            c = tab->text_code + k * m;
            for (i = 0; i < m; i++)
                zbuf[i] = c[perm[i]];
            memcpy(c, zbuf, m * sizeof *c);
        }
    }
}

/* The workspace of a parse: text codes, then (reusing it) sorting. */
static sl_status work_size(const sl_obs_read_opts *o, sl_obs_size *sz)
{
    size_t hash = 0, sort = 0, cell;
    cell = sizeof(double) > sizeof(size_t) ? sizeof(double) : sizeof(size_t);
    if (sl_size_mul(hash_slots(sz->rows), sz->ntext, &hash) ||
        sl_size_mul(hash, sizeof(hash_slot), &hash))
        return SL_ENOMEM;
    if (o->sort_rows && sz->unsorted > 0 &&
        sl_size_mul(sz->rows, 2 * sizeof(size_t) + cell, &sort))
        return SL_ENOMEM;
    sz->work_bytes = hash > sort ? hash : sort;
    return SL_OK;
}

/* Set the lexer at the start of buf: UTF-16 refused, the separator found,
 * a byte order mark skipped. */
static sl_status start(const char *buf, size_t len, lexer *lx, reader *rd,
                       sl_error *err)
{
    lx->p = buf;
    lx->end = buf + len;
    lx->line = 1;
    if (len >= 2 && (((unsigned char)buf[0] == 0xFF && (unsigned char)buf[1] == 0xFE) ||
                     ((unsigned char)buf[0] == 0xFE && (unsigned char)buf[1] == 0xFF)))
        return sl_fail(err, SL_EINVAL, "badencoding",
                       "line 1: the file is UTF-16 text; save it as UTF-8 "
                       "(\"CSV UTF-8\") or plain text");
    lx->sep = sl_obsfile_separator(buf, len);
    rd->decimal_comma = lx->sep != ',';
    if (len >= 3 && (unsigned char)buf[0] == 0xEF &&
        (unsigned char)buf[1] == 0xBB && (unsigned char)buf[2] == 0xBF)
        lx->p += 3;
    return SL_OK;
}

/* The one pass of measure (tab NULL) and parse (tab given). */
static sl_status run(const char *buf, size_t len, const sl_obs_read_opts *o,
                     sl_obs_size *sz, sl_obs_table *tab, sl_error *err)
{
    lexer lx;
    reader *rd;
    reader rd_store;
    sl_status st;
    size_t rows = 0, text_off = 0, nmissing = 0, unsorted = 0, unsorted_line = 0;
    size_t form_line = 0, hs = 0, j, k;
    int form = -1;
    double prev = 0;
    char col[80], snip[64];
    rd = &rd_store;
    rd->o = o;
    rd->wide = 0;
    st = start(buf, len, &lx, rd, err);
    if (st != SL_OK)
        return st;
    if (tab == NULL)
        memset(sz->col_text, 0, sizeof sz->col_text);
    st = read_header(&lx, rd, sz, tab, err);
    if (st != SL_OK)
        return st;
    if (tab == NULL)
        for (j = 0; j < rd->ncols; j++)
            rd->other_bytes[j] = 0;
    if (tab != NULL && tab->text_code != NULL) {
        hash_slot *tb = (hash_slot *)tab->work;
        hs = hash_slots(sz->rows);
        for (k = 0; k < hs * sz->ntext; k++)
            tb[k].off = SIZE_MAX;
        for (k = 0; k < sz->ntext; k++)
            tab->ncodes[k] = 0;
    }
    while (skip_lines(&lx, o->skip_empty)) {
        size_t line = lx.line;
        double t = NAN, value = NAN, sigma = NAN;
        int fam = SL_FAMILY_GAUSSIAN;
        field f;
        j = 0;
        if (tab != NULL && rows >= sz->rows)
            return sl_fail(err, SL_EINVAL, "badsize",
                           "the buffers do not match the measured table");
        do {
            int role, is_text;
            st = lex_field(&lx, &f, rd, j, err);
            if (st != SL_OK)
                return st;
            if (j >= rd->ncols || rd->role[j] == R_UNNAMED) {
                if (o->skip_empty && f.n == 0) {
                    j++;
                    continue;
                }
                if (j >= rd->ncols)
                    return sl_fail(err, SL_EINVAL, "badfield",
                                   "line %zu, column %zu: more fields than the "
                                   "header's %zu columns",
                                   f.line, j + 1, rd->ncols);
                return sl_fail(err, SL_EINVAL, "badfield",
                               "line %zu, column %zu: '%s' stands in a column "
                               "without a name in the header (line %zu); name "
                               "the column or empty it",
                               f.line, j + 1, snippet(f.s, f.n, snip, sizeof snip),
                               rd->hdr_line);
            }
            role = rd->role[j];
            is_text = role == C_VARIABLE || role == C_FAMILY ||
                      (role == R_OTHER && sz->col_text[j] && tab != NULL);
            if (is_text) {
                size_t n = field_len(&f);
                if (role == C_FAMILY) {
                    char name[32];
                    if (n >= sizeof name)
                        return fail_family(err, f.line, f.s, f.n);
                    field_copy(&f, name);
                    fam = family_id(name, n);
                    if (fam < 0)
                        return fail_family(err, f.line, name, n);
                }
                if (tab != NULL) {
                    size_t s = tab->slot[rd->kept[j]], at = text_off;
                    if (text_off + n + 1 > sz->text_bytes)
                        return sl_fail(err, SL_EINVAL, "badsize",
                                       "the buffers do not match the measured table");
                    field_copy(&f, tab->text + text_off);
                    if (tab->text_code != NULL)
                        tab->text_code[rows + s * sz->rows] = text_code(tab, s, hs, &at);
                    tab->text_at[rows + s * sz->rows] = at;
                    if (at == text_off)
                        text_off += n + 1;
                } else {
                    text_off += n + 1;
                }
            } else if (role == C_TIME) {
                st = read_time(rd, &f, &form, &form_line, &t, err);
                if (st != SL_OK)
                    return st;
                if (tab != NULL)
                    tab->num[rows + tab->slot[rd->kept[j]] * sz->rows] = t;
            } else {
                double v;
                int rc = field_number(rd, &f, &v);
                if (rc != 0 && role == R_OTHER && o->text_columns && tab == NULL) {
                    sz->col_text[j] = 1;
                    rc = 0;
                }
                if (rc != 0)
                    return sl_fail(err, SL_EINVAL, "badnumber",
                                   "line %zu, column %s: '%s' is %s", f.line,
                                   colref(rd, j, col, sizeof col),
                                   snippet(f.s, f.n, snip, sizeof snip),
                                   rc == 1 ? "not a number"
                                           : "out of the range of doubles");
                if (role == C_VALUE)
                    value = v;
                else if (role == C_SIGMA)
                    sigma = v;
                if (tab != NULL)
                    tab->num[rows + tab->slot[rd->kept[j]] * sz->rows] = v;
                else if (role == R_OTHER)
                    rd->other_bytes[j] += field_len(&f) + 1;
            }
            j++;
        } while (!f.last);
        if (j < rd->ncols) {
            size_t need = j;
            while (o->skip_empty && need < rd->ncols && rd->role[need] == R_UNNAMED)
                need++;
            if (need < rd->ncols)
                return sl_fail(err, SL_EINVAL, "badfield",
                               "line %zu, column %s: the row has %zu fields, the "
                               "header %zu",
                               line, colref(rd, j, col, sizeof col), j, rd->ncols);
        }
        st = check_row(line, t, rows > 0 && !o->sort_rows, prev, value, sigma, fam, err);
        if (st != SL_OK)
            return st;
        if (rows > 0 && t < prev && unsorted++ == 0)
            unsorted_line = line;
        prev = t;
        if (isnan(value))
            nmissing++;
        rows++;
    }
    if (tab == NULL) {
        size_t ntext = 0;
        for (j = 0; j < rd->ncols; j++) {
            int role = rd->role[j];
            if (role == R_UNNAMED)
                continue;
            if (role == C_VARIABLE || role == C_FAMILY || sz->col_text[j])
                ntext++;
            if (sz->col_text[j])
                text_off += rd->other_bytes[j];
        }
        sz->rows = rows;
        sz->ntext = ntext;
        sz->nnum = sz->cols - ntext;
        sz->text_bytes = text_off;
        sz->nmissing = nmissing;
        sz->unsorted = unsorted;
        sz->unsorted_line = unsorted_line;
        sz->time_form = form < 0 ? SL_OBS_TIME_NUMBERS : form;
        sz->sep = lx.sep;
        if (work_size(o, sz) != SL_OK)
            return sl_fail(err, SL_ENOMEM, "nomemory",
                           "line %zu: the table is too large to sort", lx.line);
    } else {
        if (rows != sz->rows)
            return sl_fail(err, SL_EINVAL, "badsize",
                           "the buffers do not match the measured table");
        if (o->sort_rows && sz->unsorted > 0)
            sort_rows(sz, tab, tab->slot[rd->kept[rd->idx[C_TIME]]]);
    }
    return SL_OK;
}

static const sl_obs_read_opts strict_opts = {0, 0, 0, 0, 0, {0, 0}, 1};

void sl_obs_read_opts_init(sl_obs_read_opts *opts)
{
    if (opts == NULL)
        return;
    *opts = strict_opts;
    opts->sort_rows = 1;
    opts->skip_empty = 1;
    opts->text_columns = 1;
}

static sl_status check_opts(const sl_obs_read_opts *o, sl_error *err)
{
    if (!(o->unit_days > 0 && isfinite(o->unit_days)))
        return sl_fail(err, SL_EINVAL, "badarg",
                       "the time unit must be a positive number of days, got %g",
                       o->unit_days);
    if (o->has_origin && !(o->origin.frac >= 0 && o->origin.frac < 1))
        return sl_fail(err, SL_EINVAL, "badarg",
                       "the origin's fraction of a second must lie in [0, 1)");
    return SL_OK;
}

sl_status sl_obsfile_measure_with(const char *buf, size_t len,
                                  const sl_obs_read_opts *opts,
                                  sl_obs_size *size, sl_error *err)
{
    sl_obs_size sz;
    sl_status st;
    const sl_obs_read_opts *o = opts != NULL ? opts : &strict_opts;
    sl_error_clear(err);
    if ((buf == NULL && len > 0) || size == NULL)
        return sl_fail(err, SL_EINVAL, "badarg",
                       "sl_obsfile_measure: NULL buffer or size record");
    st = check_opts(o, err);
    if (st != SL_OK)
        return st;
    memset(&sz, 0, sizeof sz);
    st = run(buf != NULL ? buf : "", len, o, &sz, NULL, err);
    if (st == SL_OK)
        *size = sz;
    return st;
}

/* 1 when two measures describe the same table (every field a parse uses). */
static int same_obs_size(const sl_obs_size *a, const sl_obs_size *b)
{
    return a->rows == b->rows && a->cols == b->cols && a->ntext == b->ntext &&
           a->nnum == b->nnum && a->name_bytes == b->name_bytes &&
           a->unit_bytes == b->unit_bytes && a->text_bytes == b->text_bytes &&
           a->nmissing == b->nmissing && a->unsorted == b->unsorted &&
           a->unsorted_line == b->unsorted_line && a->work_bytes == b->work_bytes &&
           a->time_form == b->time_form && a->sep == b->sep &&
           memcmp(a->col_text, b->col_text, sizeof a->col_text) == 0;
}

sl_status sl_obsfile_parse_with(const char *buf, size_t len,
                                const sl_obs_read_opts *opts,
                                const sl_obs_size *size, sl_obs_table *tab,
                                sl_error *err)
{
    sl_obs_size sz;
    sl_status st;
    const sl_obs_read_opts *o = opts != NULL ? opts : &strict_opts;
    sl_error_clear(err);
    if ((buf == NULL && len > 0) || size == NULL || tab == NULL ||
        tab->names == NULL || tab->name_at == NULL || tab->is_text == NULL ||
        tab->slot == NULL || (size->rows > 0 && size->nnum > 0 && tab->num == NULL) ||
        (size->text_bytes > 0 && tab->text == NULL) ||
        (size->rows > 0 && size->ntext > 0 && tab->text_at == NULL) ||
        (tab->units != NULL && tab->unit_at == NULL) ||
        (tab->text_code != NULL &&
         ((size->ntext > 0 && tab->ncodes == NULL) ||
          (size->work_bytes > 0 && tab->work == NULL))) ||
        (o->sort_rows && size->unsorted > 0 && tab->work == NULL))
        return sl_fail(err, SL_EINVAL, "badarg",
                       "sl_obsfile_parse: NULL buffer or table");
    st = check_opts(o, err);
    if (st != SL_OK)
        return st;
    /* the whole text is checked, and its sizes compared with the caller's,
     * before anything is written: a refused parse leaves tab as it was */
    memset(&sz, 0, sizeof sz);
    st = run(buf != NULL ? buf : "", len, o, &sz, NULL, err);
    if (st != SL_OK)
        return st;
    if (!same_obs_size(&sz, size))
        return sl_fail(err, SL_EINVAL, "badsize",
                       "the buffers do not match the measured table");
    sz = *size;
    return run(buf != NULL ? buf : "", len, o, &sz, tab, err);
}

sl_status sl_obsfile_measure(const char *buf, size_t len, sl_obs_size *size,
                             sl_error *err)
{
    return sl_obsfile_measure_with(buf, len, NULL, size, err);
}

sl_status sl_obsfile_parse(const char *buf, size_t len,
                           const sl_obs_size *size, sl_obs_table *tab,
                           sl_error *err)
{
    return sl_obsfile_parse_with(buf, len, NULL, size, tab, err);
}

/* ---- the series table ------------------------------------------------------- */

/* The header position of series k (for messages). */
static size_t series_column(const reader *rd, size_t k)
{
    size_t j;
    for (j = 0; j < rd->ncols; j++)
        if (rd->role[j] == R_OTHER && rd->kept[j] == k)
            return j;
    return 0;
}

/* Sort the rows of a parsed series table stably by time; work holds the
 * row lines, then room for the order. */
static void sort_series(const sl_series_size *sz, sl_series_table *tab)
{
    const size_t m = sz->rows;
    size_t *line = (size_t *)tab->work, *perm = line + m, *tmp = perm + m, i, k;
    double *dbuf = (double *)(tmp + m);
    stable_order(tab->time, m, perm, tmp);
    for (i = 0; i < m; i++)
        dbuf[i] = tab->time[perm[i]];
    memcpy(tab->time, dbuf, m * sizeof *dbuf);
    for (k = 0; k < sz->cols; k++) {
        double *c = tab->values + k * m;
        for (i = 0; i < m; i++)
            dbuf[i] = c[perm[i]];
        memcpy(c, dbuf, m * sizeof *c);
    }
    for (i = 0; i < m; i++)
        tmp[i] = line[perm[i]];
    memcpy(line, tmp, m * sizeof *line);
}

/* Fill the missing cells of series k (after sorting); line[i] is row i's
 * line. */
static sl_status fill_series(const reader *rd, const sl_series_read_opts *so,
                             const sl_series_size *sz, sl_series_table *tab,
                             size_t k, const size_t *line, sl_error *err)
{
    const size_t m = sz->rows;
    double *v = tab->values + k * m;
    const double *t = tab->time;
    size_t i, count = 0, last = SIZE_MAX;
    char col[80];
    for (i = 0; i < m; i++) {
        size_t g;
        if (!isnan(v[i])) {
            last = i;
            continue;
        }
        if (so->fill == SL_FILL_ZERO) {
            v[i] = 0;
            count++;
            continue;
        }
        /* a gap of missing cells i..g-1 between rows last and g */
        for (g = i; g < m && isnan(v[g]); g++)
            ;
        if (last == SIZE_MAX || g == m)
            return sl_fail(err, SL_EINVAL, "missing",
                           "line %zu, column %s: the value is missing and no %s "
                           "time has one (interpolation fills a gap between two "
                           "values only)",
                           line[i], colref(rd, series_column(rd, k), col, sizeof col),
                           last == SIZE_MAX ? "earlier" : "later");
        for (; i < g; i++) {
            double w = (t[i] - t[last]) / (t[g] - t[last]);
            v[i] = v[last] + w * (v[g] - v[last]);
            count++;
        }
        last = g;
        i = g;
    }
    if (tab->filled != NULL)
        tab->filled[k] = count;
    return SL_OK;
}

/* The one pass of measure (tab NULL) and parse (tab given) of a series
 * table. */
static sl_status run_series(const char *buf, size_t len, const sl_series_read_opts *so,
                            sl_series_size *sz, sl_series_table *tab, sl_error *err)
{
    sl_obs_read_opts o;
    reader rd_store, *rd = &rd_store;
    sl_obs_size osz;
    sl_obs_table otab;
    lexer lx;
    sl_status st;
    size_t rows = 0, nmissing = 0, unsorted = 0, unsorted_line = 0, form_line = 0;
    size_t prev_line = 0, j, k;
    size_t *line_of = NULL;
    int form = -1;
    double prev = 0;
    char col[80], snip[64];

    o.sort_rows = so->sort_rows;
    o.skip_empty = 1;
    o.text_columns = 0;
    o.datenums = so->datenums;
    o.has_origin = so->has_origin;
    o.origin = so->origin;
    o.unit_days = so->unit_days;
    rd->o = &o;
    rd->wide = 1;
    st = start(buf, len, &lx, rd, err);
    if (st != SL_OK)
        return st;
    memset(&osz, 0, sizeof osz);
    memset(&otab, 0, sizeof otab);
    if (tab != NULL) {
        otab.names = tab->names;
        otab.name_at = tab->name_at;
        otab.units = tab->units;
        otab.unit_at = tab->unit_at;
        osz.cols = sz->cols;
        osz.nnum = sz->cols;
        osz.name_bytes = sz->name_bytes;
        osz.unit_bytes = sz->unit_bytes;
        line_of = (size_t *)tab->work;
    }
    st = read_header(&lx, rd, &osz, tab != NULL ? &otab : NULL, err);
    if (st != SL_OK)
        return st;
    if (tab == NULL) {
        sz->cols = osz.cols;
        sz->name_bytes = osz.name_bytes;
        sz->unit_bytes = osz.unit_bytes;
    }
    while (skip_lines(&lx, 1)) {
        size_t line = lx.line;
        double t = NAN;
        field f;
        if (tab != NULL && rows >= sz->rows)
            return sl_fail(err, SL_EINVAL, "badsize",
                           "the buffers do not match the measured table");
        j = 0;
        do {
            st = lex_field(&lx, &f, rd, j, err);
            if (st != SL_OK)
                return st;
            if (j >= rd->ncols || rd->role[j] == R_UNNAMED) {
                if (f.n == 0) {
                    j++;
                    continue;
                }
                if (j >= rd->ncols)
                    return sl_fail(err, SL_EINVAL, "badfield",
                                   "line %zu, column %zu: more fields than the "
                                   "header's %zu columns",
                                   f.line, j + 1, rd->ncols);
                return sl_fail(err, SL_EINVAL, "badfield",
                               "line %zu, column %zu: '%s' stands in a column "
                               "without a name in the header (line %zu); name "
                               "the column or empty it",
                               f.line, j + 1, snippet(f.s, f.n, snip, sizeof snip),
                               rd->hdr_line);
            }
            if (rd->role[j] == C_TIME) {
                st = read_time(rd, &f, &form, &form_line, &t, err);
                if (st != SL_OK)
                    return st;
            } else {
                double v;
                int rc = field_number(rd, &f, &v);
                if (rc != 0)
                    return sl_fail(err, SL_EINVAL, "badnumber",
                                   "line %zu, column %s: '%s' is %s", f.line,
                                   colref(rd, j, col, sizeof col),
                                   snippet(f.s, f.n, snip, sizeof snip),
                                   rc == 1 ? "not a number"
                                           : "out of the range of doubles");
                if (isinf(v))
                    return sl_fail(err, SL_EINVAL, "badnumber",
                                   "line %zu, column %s: the value is infinite",
                                   f.line, colref(rd, j, col, sizeof col));
                if (isnan(v)) {
                    if (so->fill == SL_FILL_NONE) {
                        char what[80];
                        if (f.n == 0)
                            snprintf(what, sizeof what, "an empty field");
                        else
                            snprintf(what, sizeof what, "'%s'",
                                     snippet(f.s, f.n, snip, sizeof snip));
                        return sl_fail(err, SL_EINVAL, "missing",
                                       "line %zu, column %s: the value is missing (%s)",
                                       f.line, colref(rd, j, col, sizeof col), what);
                    }
                    nmissing++;
                }
                if (tab != NULL)
                    tab->values[rows + rd->kept[j] * sz->rows] = v;
            }
            j++;
        } while (!f.last);
        if (j < rd->ncols) {
            size_t need = j;
            while (need < rd->ncols && rd->role[need] == R_UNNAMED)
                need++;
            if (need < rd->ncols)
                return sl_fail(err, SL_EINVAL, "badfield",
                               "line %zu, column %s: the row has %zu fields, the "
                               "header %zu",
                               line, colref(rd, j, col, sizeof col), j, rd->ncols);
        }
        if (isnan(t))
            return sl_fail(err, SL_EINVAL, "badtime",
                           "line %zu, column %s: the time is missing (every row "
                           "needs one)",
                           line, colref(rd, rd->idx[C_TIME], col, sizeof col));
        if (!isfinite(t))
            return sl_fail(err, SL_EINVAL, "badtime",
                           "line %zu, column %s: the time must be finite, got %g",
                           line, colref(rd, rd->idx[C_TIME], col, sizeof col), t);
        if (rows > 0 && t == prev)
            return sl_fail(err, SL_EINVAL, "duptime",
                           "line %zu, column %s: the same time as line %zu "
                           "(each time may appear once)",
                           line, colref(rd, rd->idx[C_TIME], col, sizeof col), prev_line);
        if (rows > 0 && t < prev) {
            if (!so->sort_rows)
                return sl_fail(err, SL_EINVAL, "badorder",
                               "line %zu, column %s: time %.17g comes before the "
                               "previous row's %.17g (rows must be in time order)",
                               line, colref(rd, rd->idx[C_TIME], col, sizeof col),
                               t, prev);
            if (unsorted++ == 0)
                unsorted_line = line;
        }
        if (tab != NULL) {
            tab->time[rows] = t;
            line_of[rows] = line;
        }
        prev = t;
        prev_line = line;
        rows++;
    }
    if (rows == 0)
        return sl_fail(err, SL_EINVAL, "empty",
                       "line %zu: no rows after the header (line %zu)", lx.line,
                       rd->hdr_line);
    if (tab == NULL) {
        size_t lines, sort = 0;
        sz->rows = rows;
        sz->nmissing = nmissing;
        sz->unsorted = unsorted;
        sz->unsorted_line = unsorted_line;
        sz->time_form = form < 0 ? SL_OBS_TIME_NUMBERS : form;
        sz->sep = lx.sep;
        if (sl_size_mul(rows, sizeof(size_t), &lines) ||
            (unsorted > 0 && sl_size_mul(rows, 2 * sizeof(size_t) + sizeof(double), &sort)) ||
            lines > SIZE_MAX - sort)
            return sl_fail(err, SL_ENOMEM, "nomemory",
                           "line %zu: the table is too large", lx.line);
        sz->work_bytes = lines + sort;
        return SL_OK;
    }
    if (rows != sz->rows)
        return sl_fail(err, SL_EINVAL, "badsize",
                       "the buffers do not match the measured table");
    if (sz->unsorted > 0) {
        /* equal times that sorting brought together: name the pair whose
           later line comes first in the file */
        size_t at = 0, i;
        sort_series(sz, tab);
        for (i = 1; i < rows; i++)
            if (tab->time[i] == tab->time[i - 1] && (at == 0 || line_of[i] < line_of[at]))
                at = i;
        if (at > 0)
            return sl_fail(err, SL_EINVAL, "duptime",
                           "line %zu, column %s: the same time as line %zu "
                           "(each time may appear once)",
                           line_of[at], colref(rd, rd->idx[C_TIME], col, sizeof col),
                           line_of[at - 1]);
    }
    for (k = 0; k < sz->cols; k++) {
        if (tab->filled != NULL)
            tab->filled[k] = 0;
        if (sz->nmissing > 0) {
            st = fill_series(rd, so, sz, tab, k, line_of, err);
            if (st != SL_OK)
                return st;
        }
    }
    return SL_OK;
}

static const sl_series_read_opts series_defaults = {1, SL_FILL_NONE, 0, 0, {0, 0}, 1};

void sl_series_read_opts_init(sl_series_read_opts *opts)
{
    if (opts != NULL)
        *opts = series_defaults;
}

static sl_status check_series_opts(const sl_series_read_opts *o, sl_error *err)
{
    if (!(o->unit_days > 0 && isfinite(o->unit_days)))
        return sl_fail(err, SL_EINVAL, "badarg",
                       "the time unit must be a positive number of days, got %g",
                       o->unit_days);
    if (o->has_origin && !(o->origin.frac >= 0 && o->origin.frac < 1))
        return sl_fail(err, SL_EINVAL, "badarg",
                       "the origin's fraction of a second must lie in [0, 1)");
    if (o->fill != SL_FILL_NONE && o->fill != SL_FILL_INTERPOLATE && o->fill != SL_FILL_ZERO)
        return sl_fail(err, SL_EINVAL, "badarg", "unknown fill %d", o->fill);
    return SL_OK;
}

sl_status sl_obsfile_measure_series(const char *buf, size_t len,
                                    const sl_series_read_opts *opts,
                                    sl_series_size *size, sl_error *err)
{
    sl_series_size sz;
    sl_status st;
    const sl_series_read_opts *o = opts != NULL ? opts : &series_defaults;
    sl_error_clear(err);
    if ((buf == NULL && len > 0) || size == NULL)
        return sl_fail(err, SL_EINVAL, "badarg",
                       "sl_obsfile_measure_series: NULL buffer or size record");
    st = check_series_opts(o, err);
    if (st != SL_OK)
        return st;
    memset(&sz, 0, sizeof sz);
    st = run_series(buf != NULL ? buf : "", len, o, &sz, NULL, err);
    if (st == SL_OK)
        *size = sz;
    return st;
}

sl_status sl_obsfile_parse_series(const char *buf, size_t len,
                                  const sl_series_read_opts *opts,
                                  const sl_series_size *size,
                                  sl_series_table *tab, sl_error *err)
{
    sl_series_size sz;
    sl_status st;
    const sl_series_read_opts *o = opts != NULL ? opts : &series_defaults;
    sl_error_clear(err);
    if ((buf == NULL && len > 0) || size == NULL || tab == NULL ||
        tab->names == NULL || tab->name_at == NULL || tab->units == NULL ||
        tab->unit_at == NULL || tab->time == NULL || tab->values == NULL ||
        tab->work == NULL)
        return sl_fail(err, SL_EINVAL, "badarg",
                       "sl_obsfile_parse_series: NULL buffer or table");
    st = check_series_opts(o, err);
    if (st != SL_OK)
        return st;
    /* the whole text is checked, and its sizes compared with the caller's,
     * before anything is written: a refused parse leaves tab as it was */
    memset(&sz, 0, sizeof sz);
    st = run_series(buf != NULL ? buf : "", len, o, &sz, NULL, err);
    if (st != SL_OK)
        return st;
    if (sz.rows != size->rows || sz.cols != size->cols || sz.name_bytes != size->name_bytes ||
        sz.unit_bytes != size->unit_bytes || sz.nmissing != size->nmissing ||
        sz.unsorted != size->unsorted || sz.work_bytes != size->work_bytes ||
        sz.time_form != size->time_form || sz.sep != size->sep)
        return sl_fail(err, SL_EINVAL, "badsize",
                       "the buffers do not match the measured table");
    sz = *size;
    return run_series(buf != NULL ? buf : "", len, o, &sz, tab, err);
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
        int kn, want_text, want_num;
        char snip[64];
        if (!valid_name(name != NULL ? name : "", n))
            return sl_fail(err, SL_EINVAL, "badheader",
                           "line 1, column %zu: '%s' is not a column name (a "
                           "letter, then letters, digits or _, at most %d characters)",
                           j + 1, snippet(name != NULL ? name : "", n, snip, sizeof snip),
                           (int)SL_OBS_NAME_MAX);
        /* the reader compares names without regard to case */
        for (k = 0; k < j; k++)
            if (same_name(col[k].name, strlen(col[k].name), name, n))
                return sl_fail(err, SL_EINVAL, "badheader",
                               "line 1, column %s: the name appears twice "
                               "(columns %zu and %zu)",
                               name, k + 1, j + 1);
        kn = known_index(name, n);
        if (kn >= 0)
            idx[kn] = j;
        /* variable and family are text; time, value, sigma, n, dof and
           limit numbers; any other column either */
        want_text = kn == C_VARIABLE || kn == C_FAMILY;
        want_num = !want_text && role_of(name, n) != R_OTHER;
        if ((col[j].num != NULL) == (col[j].text != NULL) ||
            (want_text && col[j].text == NULL) ||
            (want_num && col[j].num == NULL))
            return sl_fail(err, SL_EINVAL, "badfield",
                           "line 1, column %s: expected a %s column", name,
                           want_text ? "text" : "numeric");
        if (col[j].text != NULL && rows > 0)
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

sl_status sl_obsfile_format_series(const sl_series_data *d, char *buf,
                                   size_t cap, size_t *need, sl_error *err)
{
    size_t i, j, k;
    sink o;
    char snip[64];
    sl_error_clear(err);
    if (need == NULL || d == NULL ||
        (d->cols > 0 && d->names == NULL) ||
        (d->rows > 0 && (d->time == NULL || (d->cols > 0 && d->values == NULL))))
        return sl_fail(err, SL_EINVAL, "badarg",
                       "sl_obsfile_format_series: NULL table or need");
    if (d->dated && !(d->unit_days > 0 && isfinite(d->unit_days) &&
                      d->origin.frac >= 0 && d->origin.frac < 1))
        return sl_fail(err, SL_EINVAL, "badarg",
                       "sl_obsfile_format_series: a bad origin or time unit");
    for (j = 0; j < d->cols; j++) {
        const char *name = d->names[j] != NULL ? d->names[j] : "";
        const char *unit = d->units != NULL && d->units[j] != NULL ? d->units[j] : "";
        size_t n = strlen(name);
        if (!valid_name(name, n))
            return sl_fail(err, SL_EINVAL, "badheader",
                           "line 1, column %zu: '%s' is not a column name (a "
                           "letter, then letters, digits or _, at most %d characters)",
                           j + 2, snippet(name, n, snip, sizeof snip),
                           (int)SL_OBS_NAME_MAX);
        if (same_name(name, n, "time", 4) || same_name(name, n, "date", 4))
            return sl_fail(err, SL_EINVAL, "badheader",
                           "line 1, column %s: a series may not be named time or "
                           "date (the time column's names)",
                           name);
        for (k = 0; k < j; k++)
            if (same_name(d->names[k], strlen(d->names[k]), name, n))
                return sl_fail(err, SL_EINVAL, "badheader",
                               "line 1, column %s: the name appears twice "
                               "(columns %zu and %zu)",
                               name, k + 2, j + 2);
        if (strpbrk(unit, ",\"[]\r\n") != NULL)
            return sl_fail(err, SL_EINVAL, "badheader",
                           "line 1, column %s: the unit '%s' holds a comma, a "
                           "quote, a bracket or a line break",
                           name, snippet(unit, strlen(unit), snip, sizeof snip));
    }
    for (i = 0; i < d->rows; i++) {
        double t = d->time[i];
        if (!isfinite(t))
            return sl_fail(err, SL_EINVAL, "badtime",
                           "line %zu, column time: the time must be finite, got %g",
                           i + 2, t);
        if (i > 0 && t == d->time[i - 1])
            return sl_fail(err, SL_EINVAL, "duptime",
                           "line %zu, column time: the same time as line %zu "
                           "(each time may appear once)",
                           i + 2, i + 1);
        if (i > 0 && t < d->time[i - 1])
            return sl_fail(err, SL_EINVAL, "badorder",
                           "line %zu, column time: time %.17g comes before the "
                           "previous row's %.17g (rows must be in time order)",
                           i + 2, t, d->time[i - 1]);
        for (j = 0; j < d->cols; j++)
            if (isinf(d->values[i + j * d->rows]))
                return sl_fail(err, SL_EINVAL, "badnumber",
                               "line %zu, column %s: the value is infinite",
                               i + 2, d->names[j]);
    }
    o.buf = buf;
    o.cap = cap;
    o.n = 0;
    o.overflow = 0;
    put(&o, "time", 4);
    for (j = 0; j < d->cols; j++) {
        const char *unit = d->units != NULL && d->units[j] != NULL ? d->units[j] : "";
        put(&o, ",", 1);
        put(&o, d->names[j], strlen(d->names[j]));
        if (unit[0] != '\0') {
            put(&o, " [", 2);
            put(&o, unit, strlen(unit));
            put(&o, "]", 1);
        }
    }
    put(&o, "\n", 1);
    for (i = 0; i < d->rows; i++) {
        if (d->dated) {
            sl_utc at;
            char date[48];
            size_t w;
            sl_error derr;
            if (sl_date_after(d->origin, d->time[i], d->unit_days, &at, &derr) != SL_OK)
                return sl_fail(err, SL_EINVAL, "baddate", "line %zu, column time: %s",
                               i + 2, derr.message);
            w = sl_date_format(at, date, sizeof date);
            put(&o, date, w);
        } else {
            put_number(&o, d->time[i]);
        }
        for (j = 0; j < d->cols; j++) {
            put(&o, ",", 1);
            put_number(&o, d->values[i + j * d->rows]);
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
