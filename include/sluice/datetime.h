/* datetime.h - ISO 8601 dates and date-times as UTC instants, Octave day numbers. */
#ifndef SLUICE_DATETIME_H
#define SLUICE_DATETIME_H

#include <stddef.h>
#include <stdint.h>
#include "sluice/status.h"

#ifdef __cplusplus
extern "C" {
#endif

/* An instant in UTC: whole seconds since 1970-01-01T00:00:00Z and the
 * fraction of a second, in [0, 1). The calendar is the proleptic Gregorian
 * one (ISO 8601) and leap seconds are not counted: every day has 86400 s. */
typedef struct {
    int64_t sec;
    double frac;
} sl_utc;

/* Octave's day number (datenum) of 1970-01-01. */
#define SL_DATENUM_1970 719529.0

/* 1 when y is a leap year: divisible by 4, and not by 100 unless by 400. */
int sl_date_leap(int64_t y);

/* The days from 1970-01-01 to the date y-m-d (m in 1..12; d is counted on
 * from the first of the month, so d = 0 is the month's eve). */
int64_t sl_date_days(int64_t y, int m, int d);

/* Whether the text s[0..n-1] is meant as a date: four digits and a '-'
 * followed by a digit. The reader takes such a field for a date (and
 * reports what is wrong with it) rather than for a number. */
int sl_date_like(const char *s, size_t n);

/* Parse s[0..n-1] as one of
 *   YYYY-MM-DD
 *   YYYY-MM-DDThh:mm   YYYY-MM-DDThh:mm:ss   YYYY-MM-DDThh:mm:ss.fff...
 * where T may also be t or one space, optionally followed (after a time) by
 * a zone: Z (or z) or an offset +hh:mm, -hh:mm, +hhmm, +hh. A date-time
 * with an offset is converted to UTC (2001-01-01T00:30+01:00 is
 * 2000-12-31T23:30Z); one without a zone is taken as UTC. Years 0000-9999;
 * 24:00 (or 24:00:00) is the end of the day, i.e. the next day's 00:00;
 * seconds 60 (a leap second) are refused. On failure the reason is
 * "baddate" and the message says what is wrong, without the text itself
 * ("February 2001 has 28 days"). */
sl_status sl_date_parse(const char *s, size_t n, sl_utc *t, sl_error *err);

/* Octave's datenum of t (days since the year 0's eve, 0000-01-00). */
double sl_date_to_datenum(sl_utc t);

/* The instant of a datenum dn; dn must be finite and within the years
 * 0000-9999 (1 <= dn < 3652426); reason "baddate" otherwise. */
sl_status sl_date_from_datenum(double dn, sl_utc *t, sl_error *err);

/* (t - origin) in units of unit_days days: with whole seconds apart, the
 * difference is exact before the one division, so whole days apart in
 * days units give whole numbers. */
double sl_date_elapsed(sl_utc t, sl_utc origin, double unit_days);

/* The instant `elapsed` units of unit_days days after origin, the inverse
 * of sl_date_elapsed. A number of seconds within a few units in the last
 * place of a whole number is taken as that whole number, so a time that
 * sl_date_elapsed made from an instant on a whole second gives that
 * instant back exactly. Reason "baddate" when elapsed is not finite or the
 * instant falls outside the years 0000-9999. */
sl_status sl_date_after(sl_utc origin, double elapsed, double unit_days,
                        sl_utc *t, sl_error *err);

/* Write t as YYYY-MM-DD when it falls on midnight, else as
 * YYYY-MM-DDThh:mm:ssZ (with .fff... when there is a fraction of a second,
 * to the microsecond). Returns the length written (cap >= 40 always
 * suffices); the text is NUL-terminated when cap > 0. */
size_t sl_date_format(sl_utc t, char *buf, size_t cap);

#ifdef __cplusplus
}
#endif
#endif
