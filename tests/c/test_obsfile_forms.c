/* test_obsfile_forms.c - observation files as spreadsheets leave them:
 * separator detection, dates and day numbers on the model's time axis,
 * comments, headers with units, NA, extra text columns, sorting, and the
 * refusals with their line and column. */
#include "check.h"
#include "obsfile_parsed.h"
#include "sluice/obsfile.h"
#include "sluice/rng.h"

#include <stdlib.h>
#include <string.h>

/* Measure, allocate everything (units, text codes, workspace), parse. */
static sl_status parse_with(const char *text, const sl_obs_read_opts *o, parsed *p)
{
    size_t len = strlen(text);
    memset(p, 0, sizeof *p);
    p->st = sl_obsfile_measure_with(text, len, o, &p->sz, &p->err);
    if (p->st != SL_OK)
        return p->st;
    p->t.names = ck_malloc(p->sz.name_bytes + 1);
    p->t.name_at = ck_malloc((p->sz.cols + 1) * sizeof(size_t));
    p->t.is_text = ck_malloc((p->sz.cols + 1) * sizeof(int));
    p->t.slot = ck_malloc((p->sz.cols + 1) * sizeof(size_t));
    p->t.num = ck_malloc((p->sz.rows * p->sz.nnum + 1) * sizeof(double));
    p->t.text = ck_malloc(p->sz.text_bytes + 1);
    p->t.text_at = ck_malloc((p->sz.rows * p->sz.ntext + 1) * sizeof(size_t));
    p->t.units = ck_malloc(p->sz.unit_bytes + 1);
    p->t.unit_at = ck_malloc((p->sz.cols + 1) * sizeof(size_t));
    p->t.text_code = ck_malloc((p->sz.rows * p->sz.ntext + 1) * sizeof(size_t));
    p->t.ncodes = ck_malloc((p->sz.ntext + 1) * sizeof(size_t));
    p->t.work = ck_malloc(p->sz.work_bytes + 1);
    p->st = sl_obsfile_parse_with(text, len, o, &p->sz, &p->t, &p->err);
    return p->st;
}

static sl_status parse_default(const char *text, parsed *p)
{
    sl_obs_read_opts o;
    sl_obs_read_opts_init(&o);
    return parse_with(text, &o, p);
}

static const char *unit_of(const parsed *p, const char *name)
{
    long j = column(p, name);
    return j < 0 ? "(no such column)" : p->t.units + p->t.unit_at[j];
}

/* Two parses hold the same table: the same names in the same order, kinds,
 * numbers (NaN = NaN) and texts. */
static int same_table(const parsed *a, const parsed *b)
{
    size_t j, i;
    if (a->sz.rows != b->sz.rows || a->sz.cols != b->sz.cols)
        return 0;
    for (j = 0; j < a->sz.cols; j++) {
        const char *name = a->t.names + a->t.name_at[j];
        if (strcmp(name, b->t.names + b->t.name_at[j]) != 0 ||
            a->t.is_text[j] != b->t.is_text[j])
            return 0;
        for (i = 0; i < a->sz.rows; i++) {
            if (a->t.is_text[j]) {
                if (strcmp(text_at(a, name, i), text_at(b, name, i)) != 0)
                    return 0;
            } else {
                double x = num_at(a, name, i), y = num_at(b, name, i);
                if (!(x == y || (isnan(x) && isnan(y))))
                    return 0;
            }
        }
    }
    return 1;
}

static void expect_error_with(const char *text, const sl_obs_read_opts *o,
                              const char *reason, const char *where)
{
    parsed p;
    parse_with(text, o, &p);
    CHECK(p.st != SL_OK && strcmp(p.err.reason, reason) == 0,
          "expected %s for [%s], got status %d reason %s (%s)", reason, text,
          (int)p.st, p.err.reason, p.err.message);
    CHECK(strstr(p.err.message, where) != NULL,
          "message for [%s] should hold '%s': %s", text, where, p.err.message);
    release(&p);
}

static void expect_error(const char *text, const char *reason, const char *where)
{
    sl_obs_read_opts o;
    sl_obs_read_opts_init(&o);
    expect_error_with(text, &o, reason, where);
}

int main(void)
{
    parsed plain, p;
    sl_obs_read_opts o;
    size_t k;

    /* separator detection: the first of , ; tab that the header holds
       outside quotes and brackets (the reader's own rule) */
    CHECK(sl_obsfile_separator("time,variable,value,sigma\n", 26) == ',', "comma");
    CHECK(sl_obsfile_separator("time;variable;value;sigma\n0;h;1,5;0,1\n", 38) == ';',
          "semicolon");
    CHECK(sl_obsfile_separator("time\tvariable\tvalue\tsigma\r\n", 27) == '\t', "tab");
    CHECK(sl_obsfile_separator("time, \tvariable,\tvalue\n", 23) == ',', "tab as padding");
    {
        const char *t = "\xEF\xBB\xBF# made by hand, 2024\n\n  % a note; more\n"
                        "time;value [m3/s, daily];\"vari,able\";sigma\n";
        CHECK(sl_obsfile_separator(t, strlen(t)) == ';',
              "BOM, comments before the header, commas in brackets and quotes");
    }
    CHECK(sl_obsfile_separator("time\n", 5) == ',', "one column: comma");
    CHECK(sl_obsfile_separator("", 0) == ',' && sl_obsfile_separator(NULL, 0) == ',',
          "empty text");
    CHECK(sl_obsfile_separator("# only a comment\n", 17) == ',', "no header");

    /* the plain file every edit below must give back */
    sl_obs_read_opts_init(&o);
    parse_with("time,variable,value,sigma\n0,h,1.5,0.1\n1,h,,0.1\n2,q,NaN,0.2\n", &o, &plain);
    CHECK(plain.st == SL_OK && plain.sz.rows == 3 && plain.sz.nmissing == 2,
          "plain: %s", plain.err.message);
    CHECK(plain.sz.time_form == SL_OBS_TIME_NUMBERS && plain.sz.sep == ',' &&
              plain.sz.unsorted == 0, "plain form");
    {
        static const char *const variants[] = {
            /* a comment line, and one before the header */
            "# gauge 7\ntime,variable,value,sigma\n0,h,1.5,0.1\n# checked\n1,h,,0.1\n2,q,NaN,0.2\n",
            /* names capitalised, with units */
            "Time,VARIABLE,Value [m],Sigma (m)\n0,h,1.5,0.1\n1,h,,0.1\n2,q,NaN,0.2\n",
            /* NA and #N/A for missing values */
            "time,variable,value,sigma\n0,h,1.5,0.1\n1,h,NA,0.1\n2,q,#N/A,0.2\n",
            /* trailing empty columns, a line of separators */
            "time,variable,value,sigma,,\n0,h,1.5,0.1,,\n1,h,,0.1,,\n,,,,,\n2,q,NaN,0.2,,\n",
            /* rows ending short of the empty columns, fields past the header */
            "time,variable,value,sigma,\n0,h,1.5,0.1\n1,h,,0.1,,,\n2,q,NaN,0.2,\n",
            /* semicolons with decimal commas, CRLF */
            "time;variable;value;sigma\r\n0;h;1,5;0,1\r\n1;h;;0,1\r\n2;q;NaN;0,2\r\n",
            /* tabs, a BOM, blanks around fields */
            "\xEF\xBB\xBFtime\tvariable\tvalue\tsigma\n0\t h \t1.5\t0.1\n1\th\t\t0.1\n2\tq\tNaN\t0.2\n",
            /* unsorted rows */
            "time,variable,value,sigma\n1,h,,0.1\n0,h,1.5,0.1\n2,q,NaN,0.2\n",
            /* a lone CR as the line end */
            "time,variable,value,sigma\r0,h,1.5,0.1\r1,h,,0.1\r2,q,NaN,0.2\r",
        };
        for (k = 0; k < sizeof variants / sizeof *variants; k++) {
            parse_with(variants[k], &o, &p);
            CHECK(p.st == SL_OK, "variant %zu: %s", k, p.err.message);
            CHECK(p.st == SL_OK && same_table(&plain, &p), "variant %zu: another table", k);
            release(&p);
        }
    }
    /* blank sigma on a missing row: the same table but for that sigma */
    parse_with("time,variable,value,sigma\n0,h,1.5,0.1\n1,h,n/a,\n2,q,NaN,0.2\n", &o, &p);
    CHECK(p.st == SL_OK && isnan(num_at(&p, "sigma", 1)) && p.sz.nmissing == 2,
          "blank sigma on a missing row: %s", p.err.message);
    if (p.st == SL_OK) {
        p.t.num[1 + p.t.slot[column(&p, "sigma")] * 3] = 0.1;
        CHECK(same_table(&plain, &p), "blank sigma: another table");
    }
    release(&p);
    release(&plain);

    /* units, kept per column, lower-case names */
    parse_default("Time [d],Variable,Value [m3/s],sigma ( m3/s ),Site\n0,q,3,1,Vell bridge\n", &p);
    CHECK(p.st == SL_OK, "units: %s", p.err.message);
    CHECK(strcmp(unit_of(&p, "value"), "m3/s") == 0 && strcmp(unit_of(&p, "time"), "d") == 0 &&
              strcmp(unit_of(&p, "sigma"), " m3/s ") == 0 && strcmp(unit_of(&p, "variable"), "") == 0,
          "units read");
    CHECK(strcmp(text_at(&p, "site", 0), "Vell bridge") == 0, "an extra text column");
    release(&p);

    /* extra columns: text when any field is not a number, else numeric;
       text codes shared by equal texts */
    parse_default("time,variable,value,sigma,site,depth,note\n"
                  "0,h,1,1,A,2.5,\n1,q,2,1,B,NA,ok\n2,h,3,1,7,,\n3,h,4,1,A,1,ok\n", &p);
    CHECK(p.st == SL_OK && p.sz.ntext == 3 && p.sz.nnum == 4, "extra kinds: %s (%zu text)",
          p.err.message, p.sz.ntext);
    CHECK(strcmp(text_at(&p, "site", 2), "7") == 0 && strcmp(text_at(&p, "note", 0), "") == 0,
          "numbers in a text column kept as written");
    CHECK(num_at(&p, "depth", 0) == 2.5 && isnan(num_at(&p, "depth", 1)), "numeric extra");
    if (p.st == SL_OK) {
        size_t s = p.t.slot[column(&p, "site")], v = p.t.slot[column(&p, "variable")];
        const size_t *c = p.t.text_code;
        CHECK(c[0 + s * 4] == 0 && c[1 + s * 4] == 1 && c[2 + s * 4] == 2 && c[3 + s * 4] == 0 &&
                  p.t.ncodes[s] == 3, "site codes");
        CHECK(c[0 + v * 4] == 0 && c[1 + v * 4] == 1 && c[2 + v * 4] == 0 && p.t.ncodes[v] == 2,
              "variable codes");
    }
    release(&p);
    /* the strict form keeps refusing text in other columns */
    expect_error_with("time,variable,value,sigma,w\n0,x,1,1,bank\n", NULL, "badnumber",
                      "line 2, column w");

    /* many different texts: codes past the table stay right */
    {
        enum { R = 6000 };
        char *t = ck_malloc(R * 40 + 64), *q = t;
        size_t bad = 0, i;
        q += sprintf(q, "time,variable,value,sigma\n");
        for (i = 0; i < R; i++)
            q += sprintf(q, "%zu,v%zu,1,1\n", i, (i * 7919) % 5000);
        parse_default(t, &p);
        CHECK(p.st == SL_OK && p.sz.rows == R, "many texts: %s", p.err.message);
        for (i = 0; p.st == SL_OK && i < R; i++) {
            char want[32];
            size_t j;
            sprintf(want, "v%zu", (i * 7919) % 5000);
            if (strcmp(text_at(&p, "variable", i), want) != 0)
                bad++;
            /* equal codes mean equal texts */
            for (j = i + 1; j < R && j < i + 50; j++)
                if (p.t.text_code[i] == p.t.text_code[j] &&
                    strcmp(text_at(&p, "variable", i), text_at(&p, "variable", j)) != 0)
                    bad++;
        }
        CHECK(bad == 0, "many texts: %zu wrong", bad);
        release(&p);
        ck_free(t);
    }

    /* dates on the model's axis: days since the origin, or years of 365.25
       days; offsets to UTC; checked by hand (2000 is a leap year) */
    sl_obs_read_opts_init(&o);
    o.has_origin = 1;
    CHECK(sl_date_parse("2000-01-01", 10, &o.origin, NULL) == SL_OK, "origin");
    parse_with("time,variable,value,sigma\n"
               "2000-01-01,h,1,1\n2000-02-29,h,1,1\n2000-03-01T12:00,h,1,1\n"
               "2001-01-01T00:30+01:00,h,1,1\n2001-01-01,h,1,1\n",
               &o, &p);
    CHECK(p.st == SL_OK && p.sz.time_form == SL_OBS_TIME_DATES, "dates: %s", p.err.message);
    CHECK(num_at(&p, "time", 0) == 0 && num_at(&p, "time", 1) == 59 &&
              num_at(&p, "time", 2) == 60.5 && num_at(&p, "time", 3) == 366 - 1.0 / 48 &&
              num_at(&p, "time", 4) == 366,
          "days: %g %g %g %.17g %g", num_at(&p, "time", 0), num_at(&p, "time", 1),
          num_at(&p, "time", 2), num_at(&p, "time", 3), num_at(&p, "time", 4));
    release(&p);
    o.unit_days = 365.25;
    parse_with("time,variable,value,sigma\n2004-01-01,h,1,1\n", &o, &p);
    CHECK(p.st == SL_OK && num_at(&p, "time", 0) == 1461 / 365.25, "years: %s", p.err.message);
    release(&p);
    /* Octave datenums in the time column: datenum(2000,1,1) = 730486 */
    o.unit_days = 1;
    o.datenums = 1;
    parse_with("time,variable,value,sigma\n730486,h,1,1\n730545.25,h,1,1\n", &o, &p);
    CHECK(p.st == SL_OK && p.sz.time_form == SL_OBS_TIME_DATENUMS &&
              num_at(&p, "time", 0) == 0 && num_at(&p, "time", 1) == 59.25,
          "datenums: %s", p.err.message);
    release(&p);
    o.datenums = 0;

    /* sorting: stable by time, counted, the first line named */
    parse_default("time,variable,value,sigma,k\n2,a,1,1,1\n1,b,1,1,2\n2,c,1,1,3\n"
                  "0,d,1,1,4\n1,e,1,1,5\n",
                  &p);
    CHECK(p.st == SL_OK && p.sz.unsorted == 2 && p.sz.unsorted_line == 3,
          "unsorted %zu at %zu: %s", p.sz.unsorted, p.sz.unsorted_line, p.err.message);
    CHECK(num_at(&p, "k", 0) == 4 && num_at(&p, "k", 1) == 2 && num_at(&p, "k", 2) == 5 &&
              num_at(&p, "k", 3) == 1 && num_at(&p, "k", 4) == 3 &&
              strcmp(text_at(&p, "variable", 1), "b") == 0 &&
              strcmp(text_at(&p, "variable", 4), "c") == 0,
          "stable order");
    CHECK(p.t.text_code[0] == 3 && p.t.text_code[3] == 0, "codes travel with their rows");
    release(&p);
    {
        enum { R = 3001 };
        char *t = ck_malloc(R * 32 + 64), *q = t;
        size_t i, bad = 0;
        q += sprintf(q, "time,variable,value,sigma,k\n");
        for (i = 0; i < R; i++)
            q += sprintf(q, "%zu,x,1,1,%zu\n", (i * 37) % 101, i);
        parse_default(t, &p);
        CHECK(p.st == SL_OK, "long sort: %s", p.err.message);
        for (i = 1; p.st == SL_OK && i < R; i++) {
            double a = num_at(&p, "time", i - 1), b = num_at(&p, "time", i);
            if (b < a || (a == b && num_at(&p, "k", i) < num_at(&p, "k", i - 1)))
                bad++;
        }
        CHECK(bad == 0, "long sort: %zu rows out of place", bad);
        release(&p);
        ck_free(t);
    }

    /* refusals, each with its line and column */
    expect_error("time,variable,value,sigma\n2001-01-01,h,1,1\n", "noorigin",
                 "line 2, column time");
    o.has_origin = 1;
    expect_error_with("time,variable,value,sigma\n2001-01-01,h,1,1\n2001-02-29,h,1,1\n", &o,
                      "baddate", "line 3, column time: '2001-02-29' is not a date: February 2001");
    expect_error_with("time,variable,value,sigma\n2001-01-01,h,1,1\n# x\n5,h,1,1\n", &o,
                      "badtime", "line 4, column time: '5' is a number, but line 2 holds a date");
    expect_error_with("time,variable,value,sigma\n5,h,1,1\n2001-01-01,h,1,1\n", &o, "badtime",
                      "line 3, column time: '2001-01-01' is a date, but line 2 holds a number");
    expect_error_with("time,variable,value,sigma\n01/02/2001,h,1,1\n", &o, "badnumber",
                      "line 2, column time: '01/02/2001' is not a number or a date");
    expect_error_with("time,variable,value,sigma\n2001-01-01,h,1,1\n,h,1,1\n", &o, "badtime",
                      "line 3, column time: the time is missing");
    o.datenums = 1;
    expect_error_with("time,variable,value,sigma\n0.5,h,1,1\n", &o, "baddate",
                      "line 2, column time: the day number 0.5");
    o.datenums = 0;
    expect_error("time,variable,value,sigma,\n0,h,1,1,x\n", "badfield",
                 "line 2, column 5: 'x' stands in a column without a name");
    expect_error("time,variable,value,sigma\n0,h,1,1,,7\n", "badfield", "line 2, column 6");
    expect_error("time,variable,value [m,sigma\n", "badheader", "line 1, column 3");
    expect_error("time,variable,value [m] s,sigma\n", "badheader", "line 1, column 3");
    expect_error("time,variable,[m],sigma,value\n", "badheader",
                 "line 1, column 3: the unit '[m]' has no column name");
    expect_error("Time,variable,value,sigma,TIME\n", "badheader", "line 1, column TIME");
    expect_error("time,variable,value,sigma\n0,h,1,\n", "badsigma", "line 2, column sigma");
    expect_error("time;variable;value;sigma\n0;h;1,2,3;1\n", "badnumber", "line 2, column value");
    expect_error("time,variable,value,sigma\n0,h,\"1,5\",1\n", "badnumber", "line 2, column value");
    expect_error("time,variable,value,sigma,n\n0,h,1,1,many\n", "badnumber", "line 2, column n");
    expect_error("\xFF\xFEt\0i\0", "badencoding", "line 1: the file is UTF-16");
    expect_error("# nothing here\n\n", "badheader", "line 3: no header row");
    {
        sl_obs_read_opts strict;
        sl_obs_read_opts_init(&strict);
        strict.sort_rows = 0;
        expect_error_with("time,variable,value,sigma\n1,x,1,1\n0,x,1,1\n", &strict, "badorder",
                          "line 3, column time");
        strict.unit_days = 0;
        expect_error_with("time,variable,value,sigma\n", &strict, "badarg", "time unit");
    }
    /* the writer: another text column is written and read back as text;
       names differing only in case and text in numeric columns refused */
    {
        double tm[3] = {0, 1, 2}, val[3] = {1, NAN, 2}, sg[3] = {0.1, NAN, 0.2};
        const char *var[3] = {"h", "h", "q"}, *site[3] = {"Vell bridge", "weir, upper", ""};
        sl_obs_column c[5];
        char out[512];
        size_t need = 0;
        sl_error err;
        c[0].name = "time"; c[0].num = tm; c[0].text = NULL;
        c[1].name = "variable"; c[1].num = NULL; c[1].text = var;
        c[2].name = "value"; c[2].num = val; c[2].text = NULL;
        c[3].name = "sigma"; c[3].num = sg; c[3].text = NULL;
        c[4].name = "site"; c[4].num = NULL; c[4].text = site;
        CHECK(sl_obsfile_format(3, 5, c, out, sizeof out - 1, &need, &err) == SL_OK,
              "write a text column: %s", err.message);
        out[need] = '\0';
        parse_default(out, &p);
        CHECK(p.st == SL_OK && strcmp(text_at(&p, "site", 1), "weir, upper") == 0 &&
                  strcmp(text_at(&p, "site", 2), "") == 0 && isnan(num_at(&p, "sigma", 1)),
              "read the text column back: %s", p.err.message);
        release(&p);
        c[4].name = "dof";
        CHECK(sl_obsfile_format(3, 5, c, NULL, 0, &need, &err) != SL_OK &&
                  strcmp(err.reason, "badfield") == 0, "text in dof refused");
        c[4].name = "Value";
        CHECK(sl_obsfile_format(3, 5, c, NULL, 0, &need, &err) != SL_OK &&
                  strcmp(err.reason, "badheader") == 0 &&
                  strstr(err.message, "line 1, column Value: the name appears twice") != NULL,
              "names equal but for case refused: %s", err.message);
    }

    /* random damage to a file using every form at once (common practice
       of fuzzing a parser; run under ASan by make check-asan): each result
       is a table or an error with a reason and a line */
    {
        static const char base[] =
            "\xEF\xBB\xBF# Lowmarsh\r\nSite;Sigma (m3/s);Value [m3/s];Variable;TIME;;\r\n"
            "Vell bridge;0,2;2,5;q;2001-01-03;;\r\n\"a;\"\"b\";0,1;1,5;h;2001-01-01T01:00+01:00;;\r\n"
            "Mill weir;;NA;h;2001-01-02 12:30:15.5Z;;\r\n;;;;;;\r\n% end\r\n";
        static const char alphabet[] = ",;\t\"\r\n #%[]()-:+TZ0123456789.eNA/\xEF\xBB\xBF";
        enum { TRIALS = 20000 };
        char m[sizeof base + 64];
        size_t len = sizeof base - 1, i, nok = 0, nerr = 0, bad = 0;
        sl_stream s;
        sl_obs_read_opts fo;
        sl_obs_read_opts_init(&fo);
        fo.has_origin = 1;
        sl_date_parse("2001-01-01", 10, &fo.origin, NULL);
        sl_stream_init(&s, 20240612u, 0, 0, SL_PURPOSE_USER);
        parse_with(base, &fo, &p);
        CHECK(p.st == SL_OK && p.sz.rows == 3, "fuzz base: %s", p.err.message);
        release(&p);
        for (i = 0; i < TRIALS; i++) {
            size_t n = len, e, edits = 1 + sl_stream_u64(&s) % 4;
            memcpy(m, base, len);
            for (e = 0; e < edits; e++) {
                uint64_t r = sl_stream_u64(&s);
                size_t at = n ? (size_t)(r % n) : 0;
                char c = (r >> 40) & 1 ? alphabet[(r >> 20) % (sizeof alphabet - 1)]
                                       : (char)(r >> 48);
                switch ((r >> 32) % 3) {
                case 0:
                    if (n)
                        m[at] = c;
                    break;
                case 1:
                    if (n) {
                        memmove(m + at, m + at + 1, n - at - 1);
                        n--;
                    }
                    break;
                default:
                    if (n < sizeof m - 1) {
                        memmove(m + at + 1, m + at, n - at);
                        m[at] = c;
                        n++;
                    }
                }
            }
            m[n] = '\0';
            fo.datenums = (int)(i % 5 == 0);
            /* a NUL inside ends the text here: strlen decides the length */
            parse_with(m, &fo, &p);
            if (p.st == SL_OK) {
                nok++;
            } else {
                nerr++;
                if (p.err.reason[0] == '\0' || strstr(p.err.message, "line ") == NULL)
                    bad++;
            }
            release(&p);
        }
        CHECK(bad == 0, "damaged forms: %zu errors without reason or line", bad);
        CHECK(nok > 0 && nerr > 0, "damaged forms: %zu ok, %zu errors", nok, nerr);
        printf("damaged forms: %d trials, %zu parsed, %zu refused\n", (int)TRIALS, nok, nerr);
    }
    CHECK_DONE("test_obsfile_forms");
}
