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
    if (z < 2.0)
        return ((((z / 12.0 - 0.5) * z + 0.625) * z + 5.0 / 3.0) * z - 5.0) * z + 4.0 -
               2.0 / (3.0 * z);
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
