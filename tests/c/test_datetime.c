/* test_datetime.c - ISO 8601 dates: hand-computed days across leap years,
 * offsets to UTC, Octave day numbers, every refusal, and format/parse. */
#include "check.h"
#include "sluice/datetime.h"

#include <stdint.h>
#include <string.h>

static sl_utc parse_ok(const char *s)
{
    sl_utc t = {0, 0};
    sl_error err;
    sl_status st = sl_date_parse(s, strlen(s), &t, &err);
    CHECK(st == SL_OK, "'%s' should parse: %s", s, err.message);
    return t;
}

static void parse_bad(const char *s, const char *what)
{
    sl_utc t;
    sl_error err;
    sl_status st = sl_date_parse(s, strlen(s), &t, &err);
    CHECK(st != SL_OK && strcmp(err.reason, "baddate") == 0 &&
              strstr(err.message, what) != NULL,
          "'%s' should be refused with '%s', got %d %s", s, what, (int)st,
          err.message);
}

int main(void)
{
    sl_utc a, b;
    char buf[64];
    int64_t day;
    size_t bad = 0;

    /* leap years (ISO 8601, the Gregorian rule): 2000 is one, 1900 and
       2100 are not; 2004 is, 2001 is not */
    CHECK(sl_date_leap(2000) && !sl_date_leap(1900) && !sl_date_leap(2100) &&
              sl_date_leap(2004) && !sl_date_leap(2001) && sl_date_leap(0),
          "leap years");

    /* days since 1970-01-01, computed by hand: 30 years with 7 leap days to
       2000 (1972 ... 1996); 70 years with 17 leap days back to 1900 */
    CHECK(sl_date_days(1970, 1, 1) == 0 && sl_date_days(1970, 1, 2) == 1, "epoch");
    CHECK(sl_date_days(2000, 1, 1) == 30 * 365 + 7, "2000-01-01: %lld",
          (long long)sl_date_days(2000, 1, 1));
    CHECK(sl_date_days(1900, 1, 1) == -(70 * 365 + 17), "1900-01-01: %lld",
          (long long)sl_date_days(1900, 1, 1));
    CHECK(sl_date_days(2001, 1, 1) - sl_date_days(2000, 1, 1) == 366, "2000 has 366 days");
    CHECK(sl_date_days(1901, 1, 1) - sl_date_days(1900, 1, 1) == 365, "1900 has 365 days");
    CHECK(sl_date_days(2101, 1, 1) - sl_date_days(2100, 1, 1) == 365, "2100 has 365 days");
    CHECK(sl_date_days(2000, 3, 1) - sl_date_days(2000, 2, 28) == 2, "2000-02-29 exists");
    CHECK(sl_date_days(1900, 3, 1) - sl_date_days(1900, 2, 28) == 1, "1900-02-29 does not");
    CHECK(sl_date_days(2100, 3, 1) - sl_date_days(2100, 2, 28) == 1, "2100-02-29 does not");
    /* 400 Gregorian years hold 146097 days */
    CHECK(sl_date_days(2400, 1, 1) - sl_date_days(2000, 1, 1) == 146097, "400 years");

    /* Octave's datenum: datenum(2000,1,1) = 730486, datenum(0,1,1) = 1
       (Octave's documentation of datenum), 2000-02-29 = 730486 + 31 + 28 */
    a = parse_ok("2000-01-01");
    CHECK(sl_date_to_datenum(a) == 730486, "datenum 2000-01-01: %.17g", sl_date_to_datenum(a));
    a = parse_ok("0000-01-01");
    CHECK(sl_date_to_datenum(a) == 1, "datenum 0000-01-01: %.17g", sl_date_to_datenum(a));
    a = parse_ok("2000-02-29");
    CHECK(sl_date_to_datenum(a) == 730486 + 31 + 28, "datenum 2000-02-29");
    a = parse_ok("2000-02-29T18:00");
    CHECK(sl_date_to_datenum(a) == 730486 + 31 + 28 + 0.75, "datenum with 18:00");
    CHECK(sl_date_from_datenum(730545.75, &b, NULL) == SL_OK && b.sec == a.sec &&
              b.frac == 0, "from datenum");
    CHECK(sl_date_from_datenum(0.5, &b, NULL) != SL_OK &&
              sl_date_from_datenum(3652426, &b, NULL) != SL_OK &&
              sl_date_from_datenum(NAN, &b, NULL) != SL_OK, "datenum out of range");

    /* offsets (ISO 8601: local time = UTC + offset) */
    a = parse_ok("2001-01-01T00:30+01:00");
    b = parse_ok("2000-12-31T23:30Z");
    CHECK(a.sec == b.sec && a.frac == b.frac, "offset +01:00 to UTC");
    CHECK(parse_ok("2001-01-01T00:30+0100").sec == b.sec, "offset +0100");
    CHECK(parse_ok("2001-01-01T00:30+01").sec == b.sec, "offset +01");
    CHECK(parse_ok("2000-12-31T18:00-05:30").sec == parse_ok("2000-12-31T23:30:00z").sec,
          "offset -05:30");
    CHECK(parse_ok("2000-12-31 23:30").sec == b.sec && parse_ok("2000-12-31t23:30").sec == b.sec,
          "space or t for T; no zone is UTC");
    /* a leap day reached through an offset */
    CHECK(parse_ok("2000-03-01T01:00+02:00").sec == parse_ok("2000-02-29T23:00Z").sec,
          "offset across 2000-02-29");
    CHECK(parse_ok("1900-03-01T01:00+02:00").sec == parse_ok("1900-02-28T23:00Z").sec,
          "offset across 1900-02-28 (no 29th)");
    /* 24:00 ends the day */
    CHECK(parse_ok("2100-02-28T24:00").sec == parse_ok("2100-03-01").sec, "24:00");
    /* seconds and their fraction */
    a = parse_ok("2001-05-06T07:08:09.25");
    CHECK(a.sec == sl_date_days(2001, 5, 6) * 86400 + 7 * 3600 + 8 * 60 + 9 && a.frac == 0.25,
          "seconds %lld frac %.17g", (long long)a.sec, a.frac);

    /* elapsed time in days and in years of 365.25 days */
    a = parse_ok("2001-01-02");
    b = parse_ok("2001-01-01");
    CHECK(sl_date_elapsed(a, b, 1) == 1, "one day");
    CHECK(sl_date_elapsed(parse_ok("2001-01-01T12:00"), b, 1) == 0.5, "half a day");
    CHECK(sl_date_elapsed(b, a, 1) == -1, "before the origin");
    CHECK(sl_date_elapsed(parse_ok("2005-01-01"), b, 365.25) == 1461.0 / 365.25, "years");

    /* refusals, each saying what is wrong */
    parse_bad("2001-02-29", "February 2001 has 28 days");
    parse_bad("1900-02-29", "February 1900 has 28 days");
    parse_bad("2100-02-29", "February 2100 has 28 days");
    parse_bad("2001-04-31", "April 2001 has 30 days");
    parse_bad("2001-13-01", "month 13");
    parse_bad("2001-00-10", "month 00");
    parse_bad("2001-01-00", "has 31 days, not 0");
    parse_bad("2001-01-01T25:00", "past 24:00");
    parse_bad("2001-01-01T24:30", "past 24:00");
    parse_bad("2001-01-01T12:60", "minute 60");
    parse_bad("2001-01-01T12:00:60", "leap seconds");
    parse_bad("2001-01-01T12:00+24:00", "offset");
    parse_bad("2001-1-1", "expected YYYY-MM-DD");
    parse_bad("2001-01-01Z", "expected");
    parse_bad("2001-01-01T12", "expected");
    parse_bad("2001-01-01T12:00+01:", "expected");
    parse_bad("2001-01-01T12:00:00.", "expected");
    parse_bad("2001-01-01T12:00 Z", "expected");
    parse_bad("2001-01-01x", "expected");
    parse_bad("20010101", "expected");
    parse_bad("", "expected");

    /* what the reader takes for a date */
    CHECK(sl_date_like("2001-01-01", 10) && sl_date_like("2001-1", 6) &&
              !sl_date_like("2001", 4) && !sl_date_like("-2001-01", 8) &&
              !sl_date_like("1e-5", 4) && !sl_date_like("01/02/2001", 10) &&
              !sl_date_like("2001-x", 6),
          "date-like text");

    /* every day of the years 0000 to 9999: written, read back, the same
     * (light: every 37th day, which still meets every day of the month and
     * many 29 Februaries) */
    for (day = sl_date_days(0, 1, 1); day <= sl_date_days(9999, 12, 31);
         day += check_light_() ? 37 : 1) {
        sl_utc t, u;
        size_t n;
        t.sec = day * 86400 + (day % 7 == 0 ? 0 : (day % 86400 + 86400) % 86400);
        t.frac = day % 5 == 0 ? 0.5 : 0;
        n = sl_date_format(t, buf, sizeof buf);
        if (sl_date_parse(buf, n, &u, NULL) != SL_OK || u.sec != t.sec || u.frac != t.frac)
            bad++;
    }
    CHECK(bad == 0, "format then parse: %zu days differ", bad);
    sl_date_format(parse_ok("1999-12-31T23:59:59.9999996"), buf, sizeof buf);
    CHECK(strcmp(buf, "2000-01-01") == 0, "microsecond rounding carries: %s", buf);
    sl_date_format(parse_ok("2000-02-29T06:00+06:00"), buf, sizeof buf);
    CHECK(strcmp(buf, "2000-02-29") == 0, "midnight written as a date: %s", buf);
    sl_date_format(parse_ok("2000-02-29T06:30:15+00:00"), buf, sizeof buf);
    CHECK(strcmp(buf, "2000-02-29T06:30:15Z") == 0, "date-time written in UTC: %s", buf);

    /* sl_date_after undoes sl_date_elapsed: instants on whole seconds over
     * 0000-9999 against origins on whole and half seconds, in days and in
     * years of 365.25 days, come back exactly (light: fewer) */
    {
        const double units[2] = {1, 365.25};
        const int64_t lo = sl_date_days(0, 1, 1) * 86400, hi = sl_date_days(9999, 12, 31) * 86400;
        size_t i, n = check_light_() ? 2000 : 200000, off = 0;
        uint64_t x = 88172645463325252ull; /* xorshift64 (Marsaglia 2003) */
        sl_utc o1 = parse_ok("1950-01-01"), o2 = parse_ok("2001-07-01T12:00:00.5");
        for (i = 0; i < n; i++) {
            sl_utc t, u, o = i % 2 ? o1 : o2;
            double unit = units[(i / 2) % 2];
            x ^= x << 13;
            x ^= x >> 7;
            x ^= x << 17;
            t.sec = lo + (int64_t)(x % (uint64_t)(hi - lo));
            t.frac = 0;
            if (sl_date_after(o, sl_date_elapsed(t, o, unit), unit, &u, NULL) != SL_OK ||
                u.sec != t.sec || u.frac != 0)
                off++;
        }
        CHECK(off == 0, "after(elapsed(t)) != t for %zu of %zu instants", off, n);
    }
    /* hand-computed: 1.25 days after 2000-02-28 is 2000-02-29T06:00Z; half
       a Julian year (182.625 days) after 2001-01-01 is 2001-07-02T15:00Z */
    a = parse_ok("2000-02-28");
    CHECK(sl_date_after(a, 1.25, 1, &b, NULL) == SL_OK &&
              b.sec == parse_ok("2000-02-29T06:00Z").sec && b.frac == 0,
          "1.25 days after 2000-02-28");
    a = parse_ok("2001-01-01");
    CHECK(sl_date_after(a, 0.5, 365.25, &b, NULL) == SL_OK &&
              b.sec == parse_ok("2001-07-02T15:00Z").sec, "half a year after 2001-01-01");
    CHECK(sl_date_after(a, -1.0 / 86400 / 4, 1, &b, NULL) == SL_OK &&
              b.sec == a.sec - 1 && b.frac == 0.75, "a quarter second before");
    {
        sl_error err;
        CHECK(sl_date_after(a, 1e9, 1, &b, &err) != SL_OK && strcmp(err.reason, "baddate") == 0,
              "a time past 9999 is refused");
        CHECK(sl_date_after(a, -800000, 1, &b, &err) != SL_OK && strcmp(err.reason, "baddate") == 0,
              "a time before 0000 is refused");
        CHECK(sl_date_after(a, NAN, 1, &b, &err) != SL_OK && strcmp(err.reason, "baddate") == 0,
              "NaN is refused");
    }
    CHECK_DONE("test_datetime");
}
