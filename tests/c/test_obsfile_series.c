/* test_obsfile_series.c - wide series (forcing) files: the forms a
 * spreadsheet leaves read to the plain file's table, dates, sorting,
 * filled gaps against hand-computed lines, every refusal with its line and
 * column, and the writer read back to the bit. */
#include "check.h"
#include "sluice/obsfile.h"

#include <stdint.h>
#include <stdlib.h>
#include <string.h>

typedef struct {
    sl_series_size sz;
    sl_series_table t;
    sl_status st;
    sl_error err;
} parsed;

static void release(parsed *p)
{
    ck_free(p->t.names);
    ck_free(p->t.name_at);
    ck_free(p->t.units);
    ck_free(p->t.unit_at);
    ck_free(p->t.time);
    ck_free(p->t.values);
    ck_free(p->t.filled);
    ck_free(p->t.work);
    memset(&p->t, 0, sizeof p->t);
}

/* Measure, allocate, parse. */
static sl_status parse_with(const char *text, size_t len, const sl_series_read_opts *o,
                            parsed *p)
{
    memset(p, 0, sizeof *p);
    p->st = sl_obsfile_measure_series(text, len, o, &p->sz, &p->err);
    if (p->st != SL_OK)
        return p->st;
    p->t.names = ck_malloc(p->sz.name_bytes + 1);
    p->t.name_at = ck_malloc((p->sz.cols + 1) * sizeof(size_t));
    p->t.units = ck_malloc(p->sz.unit_bytes + 1);
    p->t.unit_at = ck_malloc((p->sz.cols + 1) * sizeof(size_t));
    p->t.time = ck_malloc((p->sz.rows + 1) * sizeof(double));
    p->t.values = ck_malloc((p->sz.rows * p->sz.cols + 1) * sizeof(double));
    p->t.filled = ck_malloc((p->sz.cols + 1) * sizeof(size_t));
    p->t.work = ck_malloc(p->sz.work_bytes + 1);
    p->st = sl_obsfile_parse_series(text, len, o, &p->sz, &p->t, &p->err);
    return p->st;
}

static sl_status parse_text(const char *text, const sl_series_read_opts *o, parsed *p)
{
    return parse_with(text, strlen(text), o, p);
}

static sl_series_read_opts defaults(void)
{
    sl_series_read_opts o;
    sl_series_read_opts_init(&o);
    return o;
}

static const char *name_of(const parsed *p, size_t k)
{
    return p->t.names + p->t.name_at[k];
}

/* Two parses hold the same table, bit for bit. */
static int same_table(const parsed *a, const parsed *b)
{
    size_t k;
    if (a->st != SL_OK || b->st != SL_OK || a->sz.rows != b->sz.rows ||
        a->sz.cols != b->sz.cols)
        return 0;
    for (k = 0; k < a->sz.cols; k++)
        if (strcmp(name_of(a, k), name_of(b, k)) != 0)
            return 0;
    return memcmp(a->t.time, b->t.time, a->sz.rows * sizeof(double)) == 0 &&
           memcmp(a->t.values, b->t.values, a->sz.rows * a->sz.cols * sizeof(double)) == 0;
}

static void expect_error(const char *text, const sl_series_read_opts *o, const char *reason,
                         const char *where)
{
    parsed p;
    parse_text(text, o, &p);
    CHECK(p.st != SL_OK && strcmp(p.err.reason, reason) == 0,
          "expected %s for [%s], got status %d reason %s (%s)", reason, text, (int)p.st,
          p.err.reason, p.err.message);
    CHECK(strncmp(p.err.message, where, strlen(where)) == 0,
          "message for [%s] should start '%s': %s", text, where, p.err.message);
    release(&p);
}

static void forms(void)
{
    static const char *const plain_text = "time,p,e\n0,1.5,0.2\n1,0,0.3\n2,12.25,0.4\n";
    /* each form a spreadsheet or a hand leaves */
    static const char *const variants[] = {
        "# Lowmarsh gauge (invented)\ntime,p,e\n0,1.5,0.2\n% checked\n1,0,0.3\n2,12.25,0.4\n",
        "TIME,P [mm/d],E (mm/d)\n0,1.5,0.2\n1,0,0.3\n2,12.25,0.4\n",
        "time,p,e,,\n0,1.5,0.2,,\n1,0,0.3,,\n2,12.25,0.4,,\n,,,,\n",
        "time;p;e\n0;1,5;0,2\n1;0;0,3\n2;12,25;0,4\n",
        "time\tp\te\n0\t1.5\t0.2\n1\t0\t0.3\n2\t12.25\t0.4\n",
        "time , \"p\",e\n 0 ,\"1.5\", 0.2\n1,0,0.3\n2,12.25,0.4",
        "\xEF\xBB\xBFtime,p,e\r\n0,1.5,0.2\r\n1,0,0.3\r\n2,12.25,0.4\r\n",
        "time,p,e\r0,1.5,0.2\r1,0,0.3\r2,12.25,0.4\r",
        "time,p,e\n2,12.25,0.4\n0,1.5,0.2\n1,0,0.3\n",
    };
    sl_series_read_opts o = defaults();
    parsed plain, p;
    size_t k;
    parse_text(plain_text, &o, &plain);
    CHECK(plain.st == SL_OK && plain.sz.rows == 3 && plain.sz.cols == 2 &&
              strcmp(name_of(&plain, 0), "p") == 0 && strcmp(name_of(&plain, 1), "e") == 0,
          "the plain file: %s", plain.err.message);
    CHECK(plain.t.values[2] == 12.25 && plain.t.values[3] == 0.2 && plain.t.time[2] == 2,
          "column-major values");
    CHECK(plain.sz.time_form == SL_OBS_TIME_NUMBERS && plain.sz.sep == ',' &&
              plain.sz.nmissing == 0 && plain.sz.unsorted == 0,
          "the plain file's size record");
    for (k = 0; k < sizeof variants / sizeof variants[0]; k++) {
        parse_text(variants[k], &o, &p);
        CHECK(same_table(&plain, &p), "variant %zu reads as the plain file (%s)", k,
              p.err.message);
        release(&p);
    }
    parse_text(variants[1], &o, &p);
    CHECK(strcmp(p.t.units + p.t.unit_at[0], "mm/d") == 0 &&
              strcmp(p.t.units + p.t.unit_at[1], "mm/d") == 0,
          "units");
    release(&p);
    parse_text(variants[8], &o, &p);
    CHECK(p.sz.unsorted == 1 && p.sz.unsorted_line == 3, "unsorted rows counted: %zu line %zu",
          p.sz.unsorted, p.sz.unsorted_line);
    release(&p);

    /* dates and day numbers on the calendar of 2001-01-01; the time column
       may be called date and stand anywhere */
    o.has_origin = 1;
    CHECK(sl_date_parse("2001-01-01", 10, &o.origin, NULL) == SL_OK, "origin");
    parse_text("p,Date,e\n1.5,2001-01-01,0.2\n0,2001-01-02T01:00+01:00,0.3\n"
               "12.25,2001-01-02 19:00-05:00,0.4\n",
               &o, &p);
    CHECK(same_table(&plain, &p) && p.sz.time_form == SL_OBS_TIME_DATES, "dates: %s",
          p.err.message);
    release(&p);
    o.datenums = 1;
    /* Octave's datenum (2001, 1, 1) is 730852 */
    parse_text("time,p,e\n730852,1.5,0.2\n730853,0,0.3\n730854,12.25,0.4\n", &o, &p);
    CHECK(same_table(&plain, &p) && p.sz.time_form == SL_OBS_TIME_DATENUMS, "datenums: %s",
          p.err.message);
    release(&p);
    release(&plain);
}

static void gaps(void)
{
    sl_series_read_opts o = defaults();
    parsed p;
    /* interpolation in time: t_air 4 at 0, 10 at 2, 2 at 7 -> 5.5 at 0.5
       and 8.4 at 3; pet 1 at 0, 2 at 7 -> 1 + t/7 */
    const char *text = "time,t_air,pet\n0,4,1\n0.5,NA,\n2,10,#N/A\n3,,N/A\n7,2,2\n";
    o.fill = SL_FILL_INTERPOLATE;
    parse_text(text, &o, &p);
    CHECK(p.st == SL_OK && p.sz.nmissing == 5 && p.t.filled[0] == 2 && p.t.filled[1] == 3,
          "gaps counted: %s", p.err.message);
    CHECK_CLOSE(p.t.values[1], 5.5, 1e-15, "t_air at 0.5");
    CHECK_CLOSE(p.t.values[3], 8.4, 1e-14, "t_air at 3");
    CHECK_CLOSE(p.t.values[5 + 1], 1 + 0.5 / 7, 1e-15, "pet at 0.5");
    CHECK_CLOSE(p.t.values[5 + 2], 1 + 2.0 / 7, 1e-15, "pet at 2");
    CHECK_CLOSE(p.t.values[5 + 3], 1 + 3.0 / 7, 1e-15, "pet at 3");
    CHECK(p.t.values[0] == 4 && p.t.values[2] == 10 && p.t.values[4] == 2, "values kept");
    release(&p);
    o.fill = SL_FILL_ZERO;
    parse_text(text, &o, &p);
    CHECK(p.st == SL_OK && p.t.values[1] == 0 && p.t.values[3] == 0 && p.t.values[6] == 0 &&
              p.t.values[7] == 0 && p.t.values[8] == 0 && p.t.values[9] == 2,
          "zero fill");
    release(&p);
    /* after sorting: neighbours in time */
    o.fill = SL_FILL_INTERPOLATE;
    parse_text("time,q\n4,8\n0,0\n1,NA\n", &o, &p);
    CHECK(p.st == SL_OK && p.t.values[1] == 2 && p.t.time[1] == 1, "gap between sorted rows");
    release(&p);
    expect_error("time,p\n0,NA\n1,2\n", &o, "missing",
                 "line 2, column p: the value is missing and no earlier time has one");
    expect_error("time,p\n0,1\n1,2\n# end\n2,\n", &o, "missing",
                 "line 5, column p: the value is missing and no later time has one");
    expect_error("time,p\n1,NA\n0,2\n", &o, "missing",
                 "line 2, column p: the value is missing and no later time has one");
}

static void refusals(void)
{
    sl_series_read_opts o = defaults(), dated = defaults(), nosort = defaults();
    dated.has_origin = 1;
    sl_date_parse("2001-01-01", 10, &dated.origin, NULL);
    nosort.sort_rows = 0;
    expect_error("time,p,e\n0,1,1\n1,NA,1\n", &o, "missing",
                 "line 3, column p: the value is missing ('NA')");
    expect_error("time,p,e\n0,1,1\n1,2,\n", &o, "missing",
                 "line 3, column e: the value is missing (an empty field)");
    expect_error("time,Rain\n0,1\n1,dry\n", &o, "badnumber",
                 "line 3, column Rain: 'dry' is not a number");
    expect_error("time,p\n0,inf\n", &o, "badnumber", "line 2, column p: the value is infinite");
    expect_error("time,p\n0,1\n0,2\n", &o, "duptime",
                 "line 3, column time: the same time as line 2");
    expect_error("Date,p\n2001-01-02T01:00+01:00,1\n2001-01-01,1\n2001-01-02,2\n", &dated,
                 "duptime", "line 4, column Date: the same time as line 2");
    expect_error("time,p\n3,1\n1,1\n2,1\n1,1\n3,1\n", &o, "duptime",
                 "line 5, column time: the same time as line 3");
    expect_error("time,p\n1,1\n0,1\n", &nosort, "badorder", "line 3, column time: time 0");
    expect_error("time,p\n0,1\n,1\n", &o, "badtime", "line 3, column time: the time is missing");
    expect_error("date,p\n2001-01-01,1\n", &o, "noorigin", "line 2, column date: the times");
    expect_error("date,p\n2001-02-29,1\n", &dated, "baddate",
                 "line 2, column date: '2001-02-29' is not a date: February 2001");
    expect_error("date,p\n2001-01-01,1\n3,1\n", &dated, "badtime",
                 "line 3, column date: '3' is a number, but line 2 holds a date");
    expect_error("p,e\n1,2\n", &o, "badheader", "line 1: no time column");
    expect_error("time,p,date\n", &o, "badheader",
                 "line 1, column date: a second time column (column 1 is one)");
    expect_error("time,,\n0,,\n", &o, "badheader", "line 1: no series besides the time column");
    expect_error("time,p,P\n", &o, "badheader", "line 1, column P: the name appears twice");
    expect_error("time,rain gauge\n", &o, "badheader", "line 1, column 2: 'rain gauge'");
    expect_error("# nothing\n", &o, "badheader", "line 2: no header row (expected a time or date");
    expect_error("time,p\n\n# none\n", &o, "empty", "line 4: no rows after the header (line 1)");
    expect_error("time,p\n0,1,2\n", &o, "badfield", "line 2, column 3: more fields");
    expect_error("time,p,\n0,1,x\n", &o, "badfield", "line 2, column 3: 'x' stands in a column");
    expect_error("time,p,e\n0,1\n", &o, "badfield", "line 2, column e: the row has 2 fields");
    expect_error("\xFF\xFEt\0", &o, "badencoding", "line 1: the file is UTF-16");
    /* the observation table's names mean nothing here: value is a series */
    {
        parsed p;
        parse_text("time,value,sigma\n0,1,2\n", &o, &p);
        CHECK(p.st == SL_OK && p.sz.cols == 2 && strcmp(name_of(&p, 0), "value") == 0,
              "value and sigma are series here: %s", p.err.message);
        release(&p);
    }
    /* and a series file is not an observation table */
    {
        sl_obs_size sz;
        sl_error err;
        const char *t = "date,p\n0,1\n";
        CHECK(sl_obsfile_measure(t, strlen(t), &sz, &err) != SL_OK &&
                  strcmp(err.reason, "badheader") == 0,
              "a series file read as observations");
    }
    /* arguments */
    {
        sl_series_size sz;
        sl_series_table tab;
        sl_error err;
        sl_series_read_opts bad = defaults();
        bad.unit_days = 0;
        memset(&tab, 0, sizeof tab);
        CHECK(sl_obsfile_measure_series(NULL, 3, NULL, &sz, &err) == SL_EINVAL, "NULL text");
        CHECK(sl_obsfile_measure_series("time,p\n0,1\n", 11, &bad, &sz, &err) == SL_EINVAL &&
                  strcmp(err.reason, "badarg") == 0,
              "bad unit");
        bad = defaults();
        bad.fill = 7;
        CHECK(sl_obsfile_measure_series("time,p\n0,1\n", 11, &bad, &sz, &err) == SL_EINVAL,
              "bad fill");
        CHECK(sl_obsfile_measure_series("time,p\n0,1\n", 11, NULL, &sz, &err) == SL_OK,
              "default options");
        CHECK(sl_obsfile_parse_series("time,p\n0,1\n", 11, NULL, &sz, &tab, &err) == SL_EINVAL,
              "NULL buffers");
    }
}

/* Format d, parse the text with o, compare. */
static void round_trip(const sl_series_data *d, const sl_series_read_opts *o, const char *what)
{
    size_t need = 0, k;
    char *buf;
    parsed p;
    sl_error err;
    int ok;
    CHECK(sl_obsfile_format_series(d, NULL, 0, &need, &err) == SL_OK, "%s: measure: %s", what,
          err.message);
    buf = ck_malloc(need + 1);
    CHECK(sl_obsfile_format_series(d, buf, need - 1, &need, &err) == SL_EINVAL &&
              strcmp(err.reason, "bufsize") == 0,
          "%s: a short buffer", what);
    CHECK(sl_obsfile_format_series(d, buf, need, &need, &err) == SL_OK, "%s: format", what);
    parse_with(buf, need, o, &p);
    ok = p.st == SL_OK && p.sz.rows == d->rows && p.sz.cols == d->cols &&
         memcmp(p.t.time, d->time, d->rows * sizeof(double)) == 0;
    for (k = 0; ok && k < d->cols; k++)
        ok = strcmp(name_of(&p, k), d->names[k]) == 0 &&
             strcmp(p.t.units + p.t.unit_at[k], d->units[k]) == 0;
    for (k = 0; ok && k < d->rows * d->cols; k++)
        ok = memcmp(&p.t.values[k], &d->values[k], sizeof(double)) == 0 ||
             (isnan(d->values[k]) && p.t.values[k] == 0);
    CHECK(ok, "%s: read back to the bit (%s)", what, p.err.message);
    release(&p);
    ck_free(buf);
}

static void writer(void)
{
    enum { M = 500 };
    static double time[M], values[2 * M], sec[M];
    const char *names[2] = {"inflow", "t_air"}, *units[2] = {"m3/s", ""};
    sl_series_data d;
    sl_series_read_opts o = defaults();
    sl_error err;
    size_t i, need;
    uint64_t x = 2463534242ull;
    double h = 0;
    char buf[256];
    for (i = 0; i < M; i++) {
        x ^= x << 13;
        x ^= x >> 7;
        x ^= x << 17;
        h += 1 + (double)(x % 97);
        sec[i] = h * 3600;
        time[i] = sec[i] / 86400; /* whole hours, in days, as the reader makes them */
        values[i] = (double)(x % 100000) / 7;
        values[M + i] = -(double)(x % 1000) * 1e-3 - 1e-300;
    }
    values[17] = NAN;
    memset(&d, 0, sizeof d);
    d.rows = M;
    d.cols = 2;
    d.time = time;
    d.values = values;
    d.names = names;
    d.units = units;
    o.fill = SL_FILL_ZERO;
    round_trip(&d, &o, "numbers");
    d.dated = 1;
    sl_date_parse("1999-12-31T06:00Z", 17, &d.origin, NULL);
    d.unit_days = 1;
    o.has_origin = 1;
    o.origin = d.origin;
    round_trip(&d, &o, "dates in days");
    for (i = 0; i < M; i++)
        time[i] = sec[i] / (86400 * 365.25);
    d.unit_days = 365.25;
    o.unit_days = 365.25;
    round_trip(&d, &o, "dates in years");

    /* the text: dates at midnight as dates, else date-times in UTC */
    {
        const double t3[3] = {0, 1.25, 40}, v3[3] = {1, 2.5, -0.125};
        const char *n1[1] = {"p"};
        sl_series_data e;
        memset(&e, 0, sizeof e);
        e.rows = 3;
        e.cols = 1;
        e.time = t3;
        e.values = v3;
        e.names = n1;
        e.dated = 1;
        e.unit_days = 1;
        sl_date_parse("2000-02-28", 10, &e.origin, NULL);
        CHECK(sl_obsfile_format_series(&e, buf, sizeof buf, &need, &err) == SL_OK &&
                  need == strlen("time,p\n2000-02-28,1\n2000-02-29T06:00:00Z,2.5\n"
                                 "2000-04-08,-0.125\n") &&
                  memcmp(buf, "time,p\n2000-02-28,1\n2000-02-29T06:00:00Z,2.5\n2000-04-08,-0.125\n",
                         need) == 0,
              "dated text: %.*s", (int)need, buf);
    }
    /* refusals, with the line the row would have */
    {
        double t2[2] = {0, 1}, v2[2] = {1, 2};
        const char *n1[1] = {"p"}, *u1[1] = {""};
        sl_series_data e;
        memset(&e, 0, sizeof e);
        e.rows = 2;
        e.cols = 1;
        e.time = t2;
        e.values = v2;
        e.names = n1;
        e.units = u1;
        n1[0] = "Date";
        CHECK(sl_obsfile_format_series(&e, NULL, 0, &need, &err) != SL_OK &&
                  strcmp(err.reason, "badheader") == 0, "a series named date");
        n1[0] = "9p";
        CHECK(sl_obsfile_format_series(&e, NULL, 0, &need, &err) != SL_OK &&
                  strstr(err.message, "line 1, column 2") != NULL, "a bad name");
        n1[0] = "p";
        u1[0] = "mm,d";
        CHECK(sl_obsfile_format_series(&e, NULL, 0, &need, &err) != SL_OK &&
                  strcmp(err.reason, "badheader") == 0, "a comma in a unit");
        u1[0] = "";
        t2[1] = 0;
        CHECK(sl_obsfile_format_series(&e, NULL, 0, &need, &err) != SL_OK &&
                  strcmp(err.reason, "duptime") == 0 &&
                  strncmp(err.message, "line 3, column time", 19) == 0, "equal times");
        t2[1] = -1;
        CHECK(sl_obsfile_format_series(&e, NULL, 0, &need, &err) != SL_OK &&
                  strcmp(err.reason, "badorder") == 0, "decreasing times");
        t2[1] = NAN;
        CHECK(sl_obsfile_format_series(&e, NULL, 0, &need, &err) != SL_OK &&
                  strcmp(err.reason, "badtime") == 0, "a NaN time");
        t2[1] = 1;
        v2[1] = -INFINITY;
        CHECK(sl_obsfile_format_series(&e, NULL, 0, &need, &err) != SL_OK &&
                  strcmp(err.reason, "badnumber") == 0 &&
                  strncmp(err.message, "line 3, column p", 16) == 0, "an infinite value");
        v2[1] = 2;
        t2[1] = 4e6;
        e.dated = 1;
        e.unit_days = 1;
        CHECK(sl_obsfile_format_series(&e, NULL, 0, &need, &err) != SL_OK &&
                  strcmp(err.reason, "baddate") == 0 &&
                  strncmp(err.message, "line 3, column time", 19) == 0, "past the year 9999");
    }
}

int main(void)
{
    forms();
    gaps();
    refusals();
    writer();
    CHECK_DONE("test_obsfile_series");
}
