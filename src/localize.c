/* localize.c - Gaspari-Cohn correlation, the distances of localisation and
 * the check of a localisation. */
#include "sluice/localize.h"

#include <math.h>
#include <string.h>

/* ------------------------------------------------------ the geometries */

static double line_distance(double scale, const double *a, const double *b)
{
    (void)scale;
    return fabs(a[0] - b[0]);
}

static double ring_distance(double L, const double *a, const double *b)
{
    /* positions far apart whose difference overflows: reduced onto the
     * ring first (fmod is exact) */
    double diff = a[0] - b[0], d;
    if (!isfinite(diff))
        diff = fmod(a[0], L) - fmod(b[0], L);
    d = fmod(fabs(diff), L);
    return d > 0.5 * L ? L - d : d;
}

static double plane_distance(double scale, const double *a, const double *b)
{
    (void)scale;
    return hypot(a[0] - b[0], a[1] - b[1]);
}

static double sphere_distance(double radius, const double *a, const double *b)
{
    /* haversine formula, coordinates (lon, lat) in degrees */
    const double r = 0.017453292519943295; /* pi / 180 */
    double dlat = (b[1] - a[1]) * r, dlon = (b[0] - a[0]) * r;
    double s1 = sin(0.5 * dlat), s2 = sin(0.5 * dlon);
    double h = s1 * s1 + cos(a[1] * r) * cos(b[1] * r) * s2 * s2;
    if (h > 1.0)
        h = 1.0;
    return 2.0 * radius * asin(sqrt(h));
}

static double first_key(double scale, const double *pos)
{
    (void)scale;
    return pos[0];
}

/* the position on the ring, in [0, period) */
static double ring_key(double period, const double *pos)
{
    double r = fmod(pos[0], period);
    if (r < 0)
        r += period;
    return r < period ? r : 0.0;
}

static double latitude_key(double radius, const double *pos)
{
    (void)radius;
    return pos[1];
}

static double same_reach(double scale, double d)
{
    (void)scale;
    return d;
}

/* within half a period the window wraps once at most */
static double ring_reach(double period, double d)
{
    return 2.0 * d >= period ? HUGE_VAL : d;
}

/* the latitude difference in degrees is at most distance / radius * 180 / pi */
static double sphere_reach(double radius, double d)
{
    double deg = d / radius * (180.0 / 3.14159265358979323846);
    return deg >= 180.0 ? HUGE_VAL : deg;
}

static const sl_geometry_type geometries[SL_GEOM_COUNT] = {
    {"line", 1, NULL, 0, {"coordinate", NULL}, {-HUGE_VAL, 0}, {HUGE_VAL, 0},
     line_distance, first_key, same_reach},
    {"ring", 1, "period", 1, {"coordinate", NULL}, {-HUGE_VAL, 0}, {HUGE_VAL, 0},
     ring_distance, ring_key, ring_reach},
    {"plane", 2, NULL, 0, {"x", "y"}, {-HUGE_VAL, -HUGE_VAL}, {HUGE_VAL, HUGE_VAL},
     plane_distance, first_key, same_reach},
    {"sphere", 2, "radius", 0, {"longitude", "latitude"}, {-HUGE_VAL, -90.0},
     {HUGE_VAL, 90.0}, sphere_distance, latitude_key, sphere_reach},
};

const sl_geometry_type *sl_geometry_get(int geometry)
{
    return geometry >= 0 && geometry < SL_GEOM_COUNT ? &geometries[geometry] : NULL;
}

const char *sl_geometry_name(int geometry)
{
    const sl_geometry_type *g = sl_geometry_get(geometry);
    return g != NULL ? g->name : NULL;
}

int sl_geometry_find(const char *name)
{
    int k;
    if (name == NULL)
        return -1;
    for (k = 0; k < SL_GEOM_COUNT; k++)
        if (strcmp(name, geometries[k].name) == 0)
            return k;
    return -1;
}

double sl_gaspari_cohn(double d, double c)
{
    /* Gaspari & Cohn (1999), Q. J. R. Meteorol. Soc. 125, eq. 4.10 */
    double z = fabs(d) / c;
    if (!(c > 0) || isnan(d))
        return NAN;
    if (z <= 1.0)
        return (((-0.25 * z + 0.5) * z + 0.625) * z - 5.0 / 3.0) * z * z + 1.0;
    if (z < 2.0) {
        /* eq. 4.10's polynomial (z^5/12 - z^4/2 + 5z^3/8 + 5z^2/3 - 5z + 4
         * - 2/(3z)) factored as (2 - z)^4 (2z^2 + 4z - 1) / (24 z): the same
         * function, without the cancellation that leaves rounding noise
         * (even negative values) near z = 2 */
        double u = 2.0 - z, u2 = u * u;
        return u2 * u2 * ((2.0 * z + 4.0) * z - 1.0) / (24.0 * z);
    }
    return 0.0;
}

double sl_distance(int geometry, double period_or_radius, const double *a,
                   const double *b)
{
    const sl_geometry_type *g = sl_geometry_get(geometry);
    return g != NULL ? g->distance(period_or_radius, a, b) : (double)NAN;
}

/* The first coordinate of a position (row i of an r x dim array) outside
 * its geometry's range, as 1, 2; 0 if none. */
static size_t out_of_range(const sl_geometry_type *g, const double *pos, size_t i, size_t r)
{
    size_t d;
    for (d = 0; d < g->dim; d++) {
        double x = pos[i + d * r];
        if (x < g->lo[d] || x > g->hi[d])
            return d + 1;
    }
    return 0;
}

sl_status sl_localization_check(const sl_localization *L, size_t n, size_t m,
                                sl_error *err)
{
    const sl_geometry_type *g;
    size_t i, k, d, bad;
    if (L == NULL)
        return sl_fail(err, SL_EINVAL, "badlocalization",
                       "no localisation given (the positions of the states and "
                       "observations and the half-widths)");
    if ((g = sl_geometry_get(L->geometry)) == NULL)
        return sl_fail(err, SL_EINVAL, "badlocalization", "unknown geometry %d",
                       L->geometry);
    if (L->dim != g->dim)
        return sl_fail(err, SL_EINVAL, "badlocalization",
                       "positions on a %s have %d coordinate(s), got %lu", g->name,
                       (int)g->dim, (unsigned long)L->dim);
    if (g->scale != NULL && !(L->period_or_radius > 0 && L->period_or_radius < HUGE_VAL))
        return sl_fail(err, SL_EINVAL, "badlocalization",
                       "the %s of the %s must be a finite number > 0, got %g", g->scale,
                       g->name, L->period_or_radius);
    if (L->state_pos == NULL || L->obs_pos == NULL || L->obs_c == NULL)
        return sl_fail(err, SL_EINVAL, "badlocalization",
                       "the positions of the states and observations and the "
                       "half-widths are required");
    if (!(L->param_factor > 0 && L->param_factor <= 1))
        return sl_fail(err, SL_EINVAL, "badlocalization",
                       "the weight on rows without a position must lie in (0, 1], got %g",
                       L->param_factor);
    for (k = 0; k < m; k++) {
        if (!(L->obs_c[k] > 0 && L->obs_c[k] < HUGE_VAL))
            return sl_fail(err, SL_EINVAL, "badlocalization",
                           "observation %lu: the half-width must be a finite number > 0, got %g",
                           (unsigned long)(k + 1), L->obs_c[k]);
        for (d = 0; d < L->dim; d++)
            if (!isfinite(L->obs_pos[k + d * m]))
                return sl_fail(err, SL_EINVAL, "badlocalization",
                               "observation %lu: position coordinate %lu is not finite",
                               (unsigned long)(k + 1), (unsigned long)(d + 1));
        if ((bad = out_of_range(g, L->obs_pos, k, m)) != 0)
            return sl_fail(err, SL_EINVAL, "badlocalization",
                           "observation %lu: %s %g outside [%g, %g]", (unsigned long)(k + 1),
                           g->coord[bad - 1], L->obs_pos[k + (bad - 1) * m],
                           g->lo[bad - 1], g->hi[bad - 1]);
    }
    for (i = 0; i < n; i++) {
        if (isnan(L->state_pos[i]))
            continue; /* not localised */
        for (d = 0; d < L->dim; d++)
            if (!isfinite(L->state_pos[i + d * n]))
                return sl_fail(err, SL_EINVAL, "badlocalization",
                               "state row %lu: position coordinate %lu is not finite "
                               "(NaN in the first coordinate marks a row without position)",
                               (unsigned long)(i + 1), (unsigned long)(d + 1));
        if ((bad = out_of_range(g, L->state_pos, i, n)) != 0)
            return sl_fail(err, SL_EINVAL, "badlocalization",
                           "state row %lu: %s %g outside [%g, %g]", (unsigned long)(i + 1),
                           g->coord[bad - 1], L->state_pos[i + (bad - 1) * n],
                           g->lo[bad - 1], g->hi[bad - 1]);
    }
    return SL_OK;
}
