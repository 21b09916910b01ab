/* localize.c - Gaspari-Cohn correlation, the distances of localisation and
 * the check of a localisation. */
#include "sluice/localize.h"

#include <math.h>
#include <string.h>

static const char *const geometry_names[SL_GEOM_COUNT] = {"line", "ring", "plane",
                                                          "sphere"};

const char *sl_geometry_name(int geometry)
{
    return geometry >= 0 && geometry < SL_GEOM_COUNT ? geometry_names[geometry] : NULL;
}

int sl_geometry_find(const char *name)
{
    int k;
    if (name == NULL)
        return -1;
    for (k = 0; k < SL_GEOM_COUNT; k++)
        if (strcmp(name, geometry_names[k]) == 0)
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
    switch (geometry) {
    case SL_GEOM_LINE:
        return fabs(a[0] - b[0]);
    case SL_GEOM_RING: {
        /* positions far apart whose difference overflows: reduced onto
         * the ring first (fmod is exact) */
        double L = period_or_radius, diff = a[0] - b[0], d;
        if (!isfinite(diff))
            diff = fmod(a[0], L) - fmod(b[0], L);
        d = fmod(fabs(diff), L);
        return d > 0.5 * L ? L - d : d;
    }
    case SL_GEOM_PLANE:
        return hypot(a[0] - b[0], a[1] - b[1]);
    case SL_GEOM_SPHERE: {
        /* haversine formula, coordinates (lon, lat) in degrees */
        const double r = 0.017453292519943295; /* pi / 180 */
        double dlat = (b[1] - a[1]) * r, dlon = (b[0] - a[0]) * r;
        double s1 = sin(0.5 * dlat), s2 = sin(0.5 * dlon);
        double h = s1 * s1 + cos(a[1] * r) * cos(b[1] * r) * s2 * s2;
        if (h > 1.0)
            h = 1.0;
        return 2.0 * period_or_radius * asin(sqrt(h));
    }
    default:
        return NAN;
    }
}

sl_status sl_localization_check(const sl_localization *L, size_t n, size_t m,
                                sl_error *err)
{
    size_t i, k, d;
    if (L == NULL)
        return sl_fail(err, SL_EINVAL, "badlocalization",
                       "no localisation given (the positions of the states and "
                       "observations and the half-widths)");
    if (L->geometry < SL_GEOM_LINE || L->geometry > SL_GEOM_SPHERE)
        return sl_fail(err, SL_EINVAL, "badlocalization", "unknown geometry %d",
                       L->geometry);
    if (L->dim != (L->geometry >= SL_GEOM_PLANE ? 2u : 1u))
        return sl_fail(err, SL_EINVAL, "badlocalization",
                       "positions on a %s have %d coordinate(s), got %lu",
                       geometry_names[L->geometry], L->geometry >= SL_GEOM_PLANE ? 2 : 1,
                       (unsigned long)L->dim);
    if ((L->geometry == SL_GEOM_RING || L->geometry == SL_GEOM_SPHERE) &&
        !(L->period_or_radius > 0 && L->period_or_radius < HUGE_VAL))
        return sl_fail(err, SL_EINVAL, "badlocalization",
                       "the %s of the %s must be a finite number > 0, got %g",
                       L->geometry == SL_GEOM_RING ? "period" : "radius",
                       geometry_names[L->geometry], L->period_or_radius);
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
        if (L->geometry == SL_GEOM_SPHERE && fabs(L->obs_pos[k + m]) > 90)
            return sl_fail(err, SL_EINVAL, "badlocalization",
                           "observation %lu: latitude %g outside [-90, 90]",
                           (unsigned long)(k + 1), L->obs_pos[k + m]);
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
        if (L->geometry == SL_GEOM_SPHERE && fabs(L->state_pos[i + n]) > 90)
            return sl_fail(err, SL_EINVAL, "badlocalization",
                           "state row %lu: latitude %g outside [-90, 90]",
                           (unsigned long)(i + 1), L->state_pos[i + n]);
    }
    return SL_OK;
}
