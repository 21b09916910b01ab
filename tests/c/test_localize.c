/* test_localize.c - the Gaspari-Cohn correlation and the distances of
 * localisation on the line, ring, plane and sphere; the geometries' names
 * and the check of a localisation, fault by fault. */
#include "check.h"
#include "sluice/localize.h"

static const double PI = 3.14159265358979323846;

/* Gaspari & Cohn (1999) eq. 4.10 written out term by term, as the
 * reference for the library's nested evaluation. */
static double gc_formula(double z)
{
    if (z <= 1)
        return -0.25 * pow(z, 5) + 0.5 * pow(z, 4) + 0.625 * pow(z, 3) -
               5.0 / 3.0 * z * z + 1.0;
    if (z < 2)
        return pow(z, 5) / 12.0 - 0.5 * pow(z, 4) + 0.625 * pow(z, 3) +
               5.0 / 3.0 * z * z - 5.0 * z + 4.0 - 2.0 / (3.0 * z);
    return 0.0;
}

/* Great-circle distance by the spherical law of cosines (any handbook of
 * spherical trigonometry), lon/lat in degrees. */
static double law_of_cosines(double R, double lon1, double lat1, double lon2,
                             double lat2)
{
    const double r = PI / 180.0;
    double c = sin(lat1 * r) * sin(lat2 * r) +
               cos(lat1 * r) * cos(lat2 * r) * cos((lon2 - lon1) * r);
    if (c > 1)
        c = 1;
    if (c < -1)
        c = -1;
    return R * acos(c);
}

/* One fault of a valid localisation (2 states, 3 observations on a
 * sphere): reason "badlocalization" and a message holding `words`. */
static void expect_bad(const sl_localization *L, size_t n, size_t m, const char *words,
                       const char *what)
{
    sl_error err;
    sl_status st;
    sl_error_clear(&err);
    st = sl_localization_check(L, n, m, &err);
    CHECK(st == SL_EINVAL && strcmp(err.reason, "badlocalization") == 0,
          "%s: status %d reason '%s'", what, (int)st, err.reason);
    CHECK(strstr(err.message, words) != NULL, "%s: message '%s' lacks '%s'", what,
          err.message, words);
}

static void test_check(void)
{
    /* columns: longitudes, then latitudes; state row 2 has no position */
    double spos[4] = {10.0, NAN, 45.0, 0.0}, opos[6] = {0.0, 5.0, 8.0, 44.0, 46.0, -3.0};
    double oc[3] = {100.0, 250.0, 80.0};
    sl_localization L, B;
    sl_error err;
    memset(&L, 0, sizeof L);
    L.geometry = SL_GEOM_SPHERE;
    L.period_or_radius = 6371.0;
    L.dim = 2;
    L.state_pos = spos;
    L.obs_pos = opos;
    L.obs_c = oc;
    L.param_factor = 0.5;
    sl_error_clear(&err);
    CHECK(sl_localization_check(&L, 2, 3, &err) == SL_OK, "a valid localisation: %s",
          err.message);
    /* a line, one coordinate, the first state row at NaN: valid */
    B = L;
    B.geometry = SL_GEOM_LINE;
    B.dim = 1;
    B.state_pos = spos + 1;
    CHECK(sl_localization_check(&B, 1, 3, &err) == SL_OK, "a row without position");
    expect_bad(NULL, 2, 3, "no localisation", "none given");
    B = L;
    B.geometry = 4;
    expect_bad(&B, 2, 3, "unknown geometry 4", "unknown geometry");
    B.geometry = -1;
    expect_bad(&B, 2, 3, "unknown geometry -1", "negative geometry");
    B = L;
    B.dim = 1;
    expect_bad(&B, 2, 3, "positions on a sphere have 2 coordinate(s), got 1", "dimension");
    B = L;
    B.period_or_radius = INFINITY;
    expect_bad(&B, 2, 3, "the radius of the sphere", "infinite radius");
    B.geometry = SL_GEOM_RING;
    B.dim = 1;
    B.period_or_radius = 0;
    expect_bad(&B, 2, 3, "the period of the ring", "zero period");
    B = L;
    B.obs_c = NULL;
    expect_bad(&B, 2, 3, "are required", "no half-widths");
    B = L;
    B.param_factor = 1.5;
    expect_bad(&B, 2, 3, "(0, 1], got 1.5", "param_factor 1.5");
    B.param_factor = NAN;
    expect_bad(&B, 2, 3, "(0, 1]", "param_factor NaN");
    oc[1] = 0;
    expect_bad(&L, 2, 3, "observation 2: the half-width", "half-width 0");
    oc[1] = 250.0;
    opos[5] = NAN;
    expect_bad(&L, 2, 3, "observation 3: position coordinate 2 is not finite", "obs NaN");
    opos[5] = -90.5;
    expect_bad(&L, 2, 3, "observation 3: latitude -90.5 outside [-90, 90]", "obs latitude");
    opos[5] = -3.0;
    spos[2] = INFINITY;
    expect_bad(&L, 2, 3, "state row 1: position coordinate 2 is not finite", "state Inf");
    spos[2] = 91.0;
    expect_bad(&L, 2, 3, "state row 1: latitude 91 outside [-90, 90]", "state latitude");
    spos[2] = 45.0;
    /* the second coordinate of a row without position is not read */
    spos[3] = NAN;
    CHECK(sl_localization_check(&L, 2, 3, &err) == SL_OK, "NaN row, any latitude");
    /* m = 0: nothing of the observations is read */
    CHECK(sl_localization_check(&L, 2, 0, &err) == SL_OK, "no observations");
}

static void test_names(void)
{
    static const char *const names[] = {"line", "ring", "plane", "sphere"};
    int k;
    CHECK(SL_GEOM_COUNT == 4, "four geometries");
    for (k = 0; k < SL_GEOM_COUNT; k++) {
        CHECK(sl_geometry_name(k) != NULL && strcmp(sl_geometry_name(k), names[k]) == 0,
              "name of geometry %d", k);
        CHECK(sl_geometry_find(names[k]) == k, "geometry '%s' found", names[k]);
    }
    CHECK(sl_geometry_name(-1) == NULL && sl_geometry_name(SL_GEOM_COUNT) == NULL,
          "no name out of range");
    CHECK(sl_geometry_find("torus") == -1 && sl_geometry_find(NULL) == -1 &&
              sl_geometry_find("Line") == -1,
          "unknown names");
}

int main(void)
{
    test_check();
    test_names();
    const double c = 2.385;
    size_t k, neg = 0, off = 0;
    double worst = 0.0;

    /* Values of Gaspari & Cohn (1999) eq. 4.10 (MODELS.md section 5):
     * C(0) = 1, C(c) = 5/24, C(c/2) = 263/384, 0 from 2c on. */
    CHECK(sl_gaspari_cohn(0.0, c) == 1.0, "C(0) = %.17g", sl_gaspari_cohn(0.0, c));
    CHECK_CLOSE(sl_gaspari_cohn(c, c), 5.0 / 24.0, 1e-15, "C(c) = 5/24");
    CHECK_CLOSE(sl_gaspari_cohn(0.5 * c, c), 263.0 / 384.0, 1e-15, "C(c/2) = 263/384");
    CHECK(sl_gaspari_cohn(2.0 * c, c) == 0.0, "C(2c) = %g", sl_gaspari_cohn(2.0 * c, c));
    CHECK(sl_gaspari_cohn(2.5 * c, c) == 0.0, "C(2.5c) = %g", sl_gaspari_cohn(2.5 * c, c));
    CHECK(sl_gaspari_cohn(1e6 * c, c) == 0.0, "C(1e6 c)");
    CHECK(sl_gaspari_cohn(INFINITY, c) == 0.0, "C(Inf)");
    /* the half-widths scale: C(d; c) depends on d / c only */
    CHECK_CLOSE(sl_gaspari_cohn(1.3 * 7.0, 7.0), sl_gaspari_cohn(1.3 * 0.25, 0.25), 1e-15,
                "C depends on d / c");

    /* Term-by-term formula on a grid of z in [0, 3] */
    for (k = 0; k <= 3000; k++) {
        double z = (double)k / 1000.0, e = fabs(sl_gaspari_cohn(z * c, c) - gc_formula(z));
        if (e > worst)
            worst = e;
    }
    CHECK(worst < 1e-13, "largest deviation from eq. 4.10 on [0, 3]: %g", worst);

    /* Continuity: left and right limits agree at z = 1 and z = 2 */
    {
        const double h = 1e-14;
        double l1 = sl_gaspari_cohn(c * (1 - h), c), r1 = sl_gaspari_cohn(c * (1 + h), c);
        double l2 = sl_gaspari_cohn(c * (2 - h), c), r2 = sl_gaspari_cohn(c * (2 + h), c);
        CHECK_CLOSE(l1, r1, 1e-12, "continuity at z = 1");
        CHECK_CLOSE(l1, 5.0 / 24.0, 1e-12, "limit at z = 1");
        CHECK_CLOSE(l2, r2, 1e-12, "continuity at z = 2");
        CHECK(r2 == 0.0, "right of z = 2: %g", r2);
    }

    /* Symmetry in d, and values in [0, 1] on a fine grid (also near z = 2,
     * where the terms of the outer branch cancel) */
    for (k = 0; k <= 300000; k++) {
        double z = (double)k / 100000.0, d = z * c;
        double g = sl_gaspari_cohn(d, c);
        off += g != sl_gaspari_cohn(-d, c);
        neg += !(g >= 0.0 && g <= 1.0);
    }
    for (k = 1; k <= 100000; k++) {
        double g = sl_gaspari_cohn(2.0 - (double)k * 1e-11, 1.0);
        neg += !(g >= 0.0 && g <= 1.0);
    }
    CHECK(off == 0, "%lu values not symmetric in d", (unsigned long)off);
    CHECK(neg == 0, "%lu values outside [0, 1]", (unsigned long)neg);
    /* non-increasing in |d| (the correlation falls with distance) */
    {
        size_t up = 0;
        double prev = 1.0;
        for (k = 0; k <= 20000; k++) {
            double g = sl_gaspari_cohn((double)k / 10000.0 * c, c);
            up += g > prev;
            prev = g;
        }
        CHECK(up == 0, "%lu increases with distance", (unsigned long)up);
    }
    /* invalid half-widths and distances give NaN */
    CHECK(isnan(sl_gaspari_cohn(1.0, 0.0)), "c = 0 -> NaN");
    CHECK(isnan(sl_gaspari_cohn(1.0, -2.0)), "c < 0 -> NaN");
    CHECK(isnan(sl_gaspari_cohn(NAN, 1.0)), "d = NaN -> NaN");

    /* Line: |a - b| */
    {
        double a = 3.25, b = -1.5;
        CHECK(sl_distance(SL_GEOM_LINE, 0.0, &a, &b) == 4.75, "line distance");
        CHECK(sl_distance(SL_GEOM_LINE, 0.0, &b, &a) == 4.75, "line distance symmetric");
    }
    /* Ring of period 40: the shorter way round */
    {
        double p1 = 1, p39 = 39, p0 = 0, p20 = 20, p41 = 41, m1 = -1, p10 = 10,
               p35 = 35.5;
        CHECK_CLOSE(sl_distance(SL_GEOM_RING, 40, &p1, &p39), 2.0, 1e-14, "ring 1 to 39");
        CHECK_CLOSE(sl_distance(SL_GEOM_RING, 40, &p39, &p1), 2.0, 1e-14, "ring 39 to 1");
        CHECK_CLOSE(sl_distance(SL_GEOM_RING, 40, &p0, &p20), 20.0, 1e-14, "ring half way");
        CHECK_CLOSE(sl_distance(SL_GEOM_RING, 40, &p1, &p41), 0.0, 1e-14, "ring 1 to 41");
        CHECK_CLOSE(sl_distance(SL_GEOM_RING, 40, &m1, &p1), 2.0, 1e-14, "ring -1 to 1");
        CHECK_CLOSE(sl_distance(SL_GEOM_RING, 40, &p10, &p35), 14.5, 1e-14, "ring 10 to 35.5");
        CHECK_CLOSE(sl_distance(SL_GEOM_RING, 40, &p1, &p20), 19.0, 1e-14, "ring 1 to 20");
    }
    /* Plane: Euclidean (3-4-5 triangle) */
    {
        double a[2] = {1.0, -2.0}, b[2] = {4.0, 2.0};
        CHECK_CLOSE(sl_distance(SL_GEOM_PLANE, 0.0, a, b), 5.0, 1e-15, "plane 3-4-5");
        CHECK_CLOSE(sl_distance(SL_GEOM_PLANE, 0.0, b, a), 5.0, 1e-15, "plane symmetric");
    }
    /* Sphere: great circles */
    {
        const double R = 6371.0;
        double eq0[2] = {0, 0}, eq90[2] = {90, 0}, eq180[2] = {180, 0};
        double np[2] = {0, 90}, sp[2] = {0, -90}, npx[2] = {123, 90};
        /* two capitals (lon, lat in degrees) and two far-apart cities
         * (coordinates from memory; any points serve, the reference is the
         * law of cosines) */
        double lon_lat[4][2] = {{-0.1278, 51.5074}, {2.3522, 48.8566},
                                {-74.0060, 40.7128}, {151.2093, -33.8688}};
        double a1[2] = {10.0, 89.0}, a2[2] = {190.0, 89.0};
        CHECK_CLOSE(sl_distance(SL_GEOM_SPHERE, R, eq0, eq90), 0.5 * PI * R, 1e-9,
                    "a quarter of the equator");
        CHECK_CLOSE(sl_distance(SL_GEOM_SPHERE, R, eq0, eq180), PI * R, 1e-9,
                    "half the equator");
        CHECK_CLOSE(sl_distance(SL_GEOM_SPHERE, R, np, sp), PI * R, 1e-9, "pole to pole");
        CHECK_CLOSE(sl_distance(SL_GEOM_SPHERE, R, np, npx), 0.0, 1e-9,
                    "the pole at any longitude");
        CHECK_CLOSE(sl_distance(SL_GEOM_SPHERE, 1.0, eq0, np), 0.5 * PI, 1e-15,
                    "equator to pole, unit sphere");
        /* across the pole: 2 degrees of arc */
        CHECK_CLOSE(sl_distance(SL_GEOM_SPHERE, R, a1, a2), 2.0 * PI / 180.0 * R, 1e-6,
                    "across the pole");
        CHECK_REL(sl_distance(SL_GEOM_SPHERE, R, lon_lat[0], lon_lat[1]),
                  law_of_cosines(R, lon_lat[0][0], lon_lat[0][1], lon_lat[1][0], lon_lat[1][1]),
                  1e-10, "two capitals, against the law of cosines");
        CHECK_REL(sl_distance(SL_GEOM_SPHERE, R, lon_lat[2], lon_lat[3]),
                  law_of_cosines(R, lon_lat[2][0], lon_lat[2][1], lon_lat[3][0], lon_lat[3][1]),
                  1e-12, "two far cities, against the law of cosines");
        CHECK(sl_distance(SL_GEOM_SPHERE, R, lon_lat[2], lon_lat[3]) ==
                  sl_distance(SL_GEOM_SPHERE, R, lon_lat[3], lon_lat[2]),
              "sphere distance symmetric");
        /* same meridian: R times the latitude difference in radians */
        {
            double p[2] = {-20.0, 10.0}, q[2] = {-20.0, 47.5};
            CHECK_CLOSE(sl_distance(SL_GEOM_SPHERE, R, p, q), 37.5 * PI / 180.0 * R, 1e-9,
                        "along a meridian");
        }
    }
    /* an unknown geometry gives NaN */
    {
        double a = 0, b = 1;
        CHECK(isnan(sl_distance(99, 1.0, &a, &b)), "unknown geometry -> NaN");
    }
    CHECK_DONE("test_localize");
}
