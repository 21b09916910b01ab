/* test_distance_extreme.c - localisation distances between positions at
 * the ends of the doubles (first found by the fuzzing harness
 * tests/fuzz/fuzz_checks.c: a ring distance of NaN for positions whose
 * difference overflows, which passed sl_localization_check). */
#include "check.h"
#include "sluice/localize.h"

#include <float.h>
#include <math.h>

int main(void)
{
    double a[2] = {DBL_MAX, 0}, b[2] = {-DBL_MAX, 0};
    sl_localization L = {SL_GEOM_RING, 3.0, 1, a, b, NULL, 1.0, 0};
    double c = 1.0;
    sl_error err;

    L.obs_c = &c;
    CHECK(sl_localization_check(&L, 1, 1, &err) == SL_OK, "the positions are valid");

    /* (DBL_MAX - (-DBL_MAX)) mod L, folded to [0, L/2]: DBL_MAX =
     * 2^1024 - 2^971, so the remainders are exact integer arithmetic:
     * L = 2: 0; L = 3: 1; L = 7: 3; L = 10: 4 */
    CHECK(sl_distance(SL_GEOM_RING, 2.0, a, b) == 0.0, "ring 2: %g",
          sl_distance(SL_GEOM_RING, 2.0, a, b));
    CHECK(sl_distance(SL_GEOM_RING, 3.0, a, b) == 1.0, "ring 3: %g",
          sl_distance(SL_GEOM_RING, 3.0, a, b));
    CHECK(sl_distance(SL_GEOM_RING, 7.0, a, b) == 3.0, "ring 7: %g",
          sl_distance(SL_GEOM_RING, 7.0, a, b));
    CHECK(sl_distance(SL_GEOM_RING, 10.0, b, a) == 4.0, "ring 10: %g",
          sl_distance(SL_GEOM_RING, 10.0, b, a));
    /* a weight, not NaN: Gaspari & Cohn (1999) eq. 4.10 at z = 1,
     * -1/4 + 1/2 + 5/8 - 5/3 + 1 = 5/24 */
    CHECK_CLOSE(sl_gaspari_cohn(sl_distance(SL_GEOM_RING, 3.0, a, b), 1.0), 5.0 / 24,
                1e-15, "Gaspari-Cohn weight at ring distance 1, c = 1");

    /* the line and the plane: an overflowing difference is an infinite
     * distance, weight 0 */
    CHECK(sl_distance(SL_GEOM_LINE, 0, a, b) == HUGE_VAL, "line");
    CHECK(sl_distance(SL_GEOM_PLANE, 0, a, b) == HUGE_VAL, "plane");
    CHECK(sl_gaspari_cohn(HUGE_VAL, 1.0) == 0.0, "weight 0 at infinite distance");

    /* ordinary positions keep their distances: 0.5 and 9.5 on a ring of
     * 10 are 1 apart */
    a[0] = 0.5;
    b[0] = 9.5;
    CHECK(sl_distance(SL_GEOM_RING, 10.0, a, b) == 1.0, "ring ordinary");
    CHECK_DONE("test_distance_extreme");
}
