/* localize.c - Gaspari-Cohn correlation and the distances of localisation. */
#include <math.h>

#include "sluice/enkf.h"

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
        double L = period_or_radius, d = fmod(fabs(a[0] - b[0]), L);
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
