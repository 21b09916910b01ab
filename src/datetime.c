/* datetime.c - ISO 8601 dates and date-times as UTC instants, Octave day numbers. */
#include "sluice/datetime.h"

#include <float.h>
#include <math.h>
#include <stdio.h>
#include <string.h>

enum { DAY_SECONDS = 86400 };

static const char *const month_names[12] = {
    "January", "February", "March",     "April",   "May",      "June",
    "July",    "August",   "September", "October", "November", "December"};

/* a / b rounded towards minus infinity (b > 0) */
static int64_t floor_div(int64_t a, int64_t b)
{
    int64_t q = a / b;
    return (a % b != 0 && a < 0) ? q - 1 : q;
}

int sl_date_leap(int64_t y)
{
    return (y % 4 == 0 && y % 100 != 0) || y % 400 == 0;
}

static int month_days(int64_t y, int m)
{
    static const int len[12] = {31, 28, 31, 30, 31, 30, 31, 31, 30, 31, 30, 31};
    return m == 2 && sl_date_leap(y) ? 29 : len[m - 1];
}

/* Days from 0000-03-01 to y-m-d. Counting years from March puts the leap
 * day at the end of a year, so the days before a month do not depend on
 * the year: (153 * k + 2) / 5 for the k-th month after March gives 0, 31,
 * 61, 92, 122, 153, 184, 214, 245, 275, 306, 337. */
static int64_t days_from_march0(int64_t y, int m, int d)
{
    int64_t yy = m <= 2 ? y - 1 : y;
    int64_t k = m <= 2 ? m + 9 : m - 3;
    return 365 * yy + floor_div(yy, 4) - floor_div(yy, 100) + floor_div(yy, 400) +
           (153 * k + 2) / 5 + d - 1;
}

int64_t sl_date_days(int64_t y, int m, int d)
{
    return days_from_march0(y, m, d) - days_from_march0(1970, 1, 1);
}

/* The civil date of the day `days` after 1970-01-01. */
static void civil_from_days(int64_t days, int64_t *y, int *m, int *d)
{
    int64_t z = days + days_from_march0(1970, 1, 1), yy, left;
    int k;
    /* the year counted from March: an estimate, then exact steps */
    yy = floor_div(z * 400, 146097);
    while (days_from_march0(yy + 1, 3, 1) <= z)
        yy++;
    while (days_from_march0(yy, 3, 1) > z)
        yy--;
    left = z - days_from_march0(yy, 3, 1);
    for (k = 11; k > 0 && (153 * k + 2) / 5 > left; k--)
        ;
    *d = (int)(left - (153 * k + 2) / 5) + 1;
    *m = k < 10 ? k + 3 : k - 9;
    *y = k < 10 ? yy : yy + 1;
}

int sl_date_like(const char *s, size_t n)
{
    return n >= 6 && s[0] >= '0' && s[0] <= '9' && s[1] >= '0' && s[1] <= '9' &&
           s[2] >= '0' && s[2] <= '9' && s[3] >= '0' && s[3] <= '9' && s[4] == '-' &&
           s[5] >= '0' && s[5] <= '9';
}

/* Exactly `width` digits at s[*i]; 1 and the number when they are there. */
static int digits(const char *s, size_t n, size_t *i, int width, int *out)
{
    int v = 0, k;
    if (*i + (size_t)width > n)
        return 0;
    for (k = 0; k < width; k++) {
        char c = s[*i + (size_t)k];
        if (c < '0' || c > '9')
            return 0;
        v = v * 10 + (c - '0');
    }
    *i += (size_t)width;
    *out = v;
    return 1;
}

static sl_status bad_form(sl_error *err)
{
    return sl_fail(err, SL_EINVAL, "baddate",
                   "expected YYYY-MM-DD, YYYY-MM-DDThh:mm or YYYY-MM-DDThh:mm:ss, "
                   "optionally followed by Z or an offset such as +01:00");
}

sl_status sl_date_parse(const char *s, size_t n, sl_utc *t, sl_error *err)
{
    size_t i = 0;
    int y, mo, d, hh = 0, mi = 0, ss = 0, oh = 0, om = 0, sign = 0;
    double frac = 0;
    int64_t sec;
    if (s == NULL || t == NULL)
        return sl_fail(err, SL_EINVAL, "badarg", "sl_date_parse: NULL text or result");
    if (!digits(s, n, &i, 4, &y) || i >= n || s[i++] != '-' ||
        !digits(s, n, &i, 2, &mo) || i >= n || s[i++] != '-' ||
        !digits(s, n, &i, 2, &d))
        return bad_form(err);
    if (mo < 1 || mo > 12)
        return sl_fail(err, SL_EINVAL, "baddate",
                       "month %02d does not exist (01 to 12)", mo);
    if (d < 1 || d > month_days(y, mo))
        return sl_fail(err, SL_EINVAL, "baddate", "%s %04d has %d days, not %d",
                       month_names[mo - 1], y, month_days(y, mo), d);
    if (i < n) {
        if (s[i] != 'T' && s[i] != 't' && s[i] != ' ')
            return bad_form(err);
        i++;
        if (!digits(s, n, &i, 2, &hh) || i >= n || s[i++] != ':' ||
            !digits(s, n, &i, 2, &mi))
            return bad_form(err);
        if (i < n && s[i] == ':') {
            i++;
            if (!digits(s, n, &i, 2, &ss))
                return bad_form(err);
            if (i < n && s[i] == '.') {
                /* up to 15 digits as one whole number and one division:
                   correctly rounded; further digits are below a double's
                   resolution of a second */
                double num = 0, scale = 1;
                size_t first = ++i;
                while (i < n && s[i] >= '0' && s[i] <= '9') {
                    if (i - first < 15) {
                        num = num * 10 + (s[i] - '0');
                        scale *= 10;
                    }
                    i++;
                }
                if (i == first)
                    return bad_form(err);
                frac = num / scale;
            }
        }
        if (hh > 24 || (hh == 24 && (mi != 0 || ss != 0 || frac != 0)))
            return sl_fail(err, SL_EINVAL, "baddate",
                           "the time of day %02d:%02d is past 24:00", hh, mi);
        if (mi > 59)
            return sl_fail(err, SL_EINVAL, "baddate", "minute %02d does not exist (00 to 59)",
                           mi);
        if (ss > 59)
            return sl_fail(err, SL_EINVAL, "baddate",
                           "second %02d does not exist (00 to 59; leap seconds are not counted)",
                           ss);
        if (i < n) {
            if (s[i] == 'Z' || s[i] == 'z') {
                i++;
            } else if (s[i] == '+' || s[i] == '-') {
                sign = s[i] == '-' ? -1 : 1;
                i++;
                if (!digits(s, n, &i, 2, &oh))
                    return bad_form(err);
                if (i < n && s[i] == ':') {
                    i++;
                    if (!digits(s, n, &i, 2, &om))
                        return bad_form(err);
                } else if (i < n && !digits(s, n, &i, 2, &om)) {
                    return bad_form(err);
                }
                if (oh > 23 || om > 59)
                    return sl_fail(err, SL_EINVAL, "baddate",
                                   "the offset %c%02d:%02d from UTC is out of range",
                                   sign < 0 ? '-' : '+', oh, om);
            }
        }
        if (i != n)
            return bad_form(err);
    }
    if (frac >= 1)
        frac = nextafter(1.0, 0.0);
    sec = sl_date_days(y, mo, d) * DAY_SECONDS + (int64_t)hh * 3600 + (int64_t)mi * 60 + ss;
    /* local time = UTC + offset */
    sec -= (int64_t)sign * ((int64_t)oh * 3600 + (int64_t)om * 60);
    t->sec = sec;
    t->frac = frac;
    return SL_OK;
}

double sl_date_to_datenum(sl_utc t)
{
    int64_t day = floor_div(t.sec, DAY_SECONDS);
    double sod = (double)(t.sec - day * DAY_SECONDS) + t.frac;
    return SL_DATENUM_1970 + (double)day + sod / DAY_SECONDS;
}

sl_status sl_date_from_datenum(double dn, sl_utc *t, sl_error *err)
{
    double day, sod, whole;
    if (t == NULL)
        return sl_fail(err, SL_EINVAL, "badarg", "sl_date_from_datenum: NULL result");
    if (!(dn >= 1 && dn < 3652426))
        return sl_fail(err, SL_EINVAL, "baddate",
                       "the day number %.17g is not a date of the years 0000 to "
                       "9999 (1 to 3652425.99...)",
                       dn);
    day = floor(dn);
    sod = (dn - day) * DAY_SECONDS;
    whole = floor(sod);
    t->sec = ((int64_t)day - (int64_t)SL_DATENUM_1970) * DAY_SECONDS + (int64_t)whole;
    t->frac = sod - whole;
    return SL_OK;
}

double sl_date_elapsed(sl_utc t, sl_utc origin, double unit_days)
{
    double s = (double)(t.sec - origin.sec) + (t.frac - origin.frac);
    return s / (DAY_SECONDS * unit_days);
}

sl_status sl_date_after(sl_utc origin, double elapsed, double unit_days,
                        sl_utc *t, sl_error *err)
{
    /* the years 0000-9999 in seconds since 1970 */
    const double lo = (double)sl_date_days(0, 1, 1) * DAY_SECONDS,
                 hi = (double)sl_date_days(10000, 1, 1) * DAY_SECONDS;
    double s, whole, frac;
    int64_t sec;
    if (t == NULL)
        return sl_fail(err, SL_EINVAL, "badarg", "sl_date_after: NULL result");
    s = elapsed * ((double)DAY_SECONDS * unit_days);
    if (!isfinite(s) || !(unit_days > 0) ||
        !((double)origin.sec + s >= lo && (double)origin.sec + s < hi))
        return sl_fail(err, SL_EINVAL, "baddate",
                       "the time %.17g is not a date of the years 0000 to 9999 "
                       "from the origin",
                       elapsed);
    /* seconds from origin.sec; sl_date_elapsed divided a number of seconds
       once, so an instant on a whole second comes back within an ulp or
       two of a whole number here: take it as whole */
    s += origin.frac;
    whole = floor(s + 0.5);
    if (fabs(s - whole) <= 8 * DBL_EPSILON * fabs(s - origin.frac)) {
        frac = 0;
    } else {
        whole = floor(s);
        frac = s - whole;
        if (frac >= 1) { /* s just below a whole number, rounded up */
            frac = 0;
            whole += 1;
        }
    }
    sec = origin.sec + (int64_t)whole;
    t->sec = sec;
    t->frac = frac;
    return SL_OK;
}

size_t sl_date_format(sl_utc t, char *buf, size_t cap)
{
    int64_t day, sod, y;
    long us = (long)floor(t.frac * 1e6 + 0.5);
    int m, d, w;
    if (us >= 1000000) {
        t.sec++;
        us -= 1000000;
    }
    day = floor_div(t.sec, DAY_SECONDS);
    sod = t.sec - day * DAY_SECONDS;
    civil_from_days(day, &y, &m, &d);
    if (sod == 0 && us == 0)
        w = snprintf(buf, cap, "%04lld-%02d-%02d", (long long)y, m, d);
    else if (us == 0)
        w = snprintf(buf, cap, "%04lld-%02d-%02dT%02d:%02d:%02dZ", (long long)y, m, d,
                     (int)(sod / 3600), (int)(sod / 60 % 60), (int)(sod % 60));
    else
        w = snprintf(buf, cap, "%04lld-%02d-%02dT%02d:%02d:%02d.%06ldZ", (long long)y, m,
                     d, (int)(sod / 3600), (int)(sod / 60 % 60), (int)(sod % 60), us);
    return w < 0 ? 0 : (size_t)w;
}
