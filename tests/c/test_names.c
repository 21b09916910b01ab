/* test_names.c - the core's name tables, which sluice.kernel.core_names
 * lists for the Octave layer: each enumerates its entries in order, ends
 * (NULL) right after the last, has no name twice, and its find gives back
 * the entry a name came from. The names themselves are the project's own
 * (as its documentation lists them). */
#include "check.h"
#include "sluice/enkf.h"
#include "sluice/integrate.h"
#include "sluice/localize.h"
#include "sluice/loglik.h"
#include "sluice/param_move.h"
#include "sluice/pf.h"
#include "sluice/prior.h"
#include "sluice/resample.h"
#include "sluice/smooth.h"

/* names[0 .. count-1] as the table lists them, none twice */
static void check_list(const char *what, const char *const *got, size_t count,
                       const char *const *expected, size_t nexpected)
{
    size_t k, j;
    CHECK(count == nexpected, "%s: %lu names, expected %lu", what, (unsigned long)count,
          (unsigned long)nexpected);
    for (k = 0; k < count && k < nexpected; k++)
        CHECK(got[k] != NULL && strcmp(got[k], expected[k]) == 0, "%s %lu: '%s', expected '%s'",
              what, (unsigned long)k, got[k] != NULL ? got[k] : "(null)", expected[k]);
    for (k = 0; k < count; k++)
        for (j = k + 1; j < count; j++)
            CHECK(strcmp(got[k], got[j]) != 0, "%s: '%s' twice", what, got[k]);
}

#define COUNT(a) (sizeof (a) / sizeof *(a))

int main(void)
{
    const char *got[16];
    size_t k;
    {
        static const char *const want[] = {"euler", "rk4", "dopri5", "discrete"};
        for (k = 0; k < 16 && sl_integrator_at(k) != NULL; k++) {
            got[k] = sl_integrator_at(k)->name;
            CHECK(sl_integrator_find(got[k]) == sl_integrator_at(k), "integrator '%s' found",
                  got[k]);
        }
        check_list("integrators", got, k, want, COUNT(want));
        CHECK(sl_integrator_at(k) == NULL && sl_integrator_at(SIZE_MAX) == NULL,
              "no integrator past the end");
    }
    {
        static const char *const want[] = {"systematic", "stratified", "residual",
                                           "multinomial"};
        for (k = 0; k < 16 && sl_resampler_at(k) != NULL; k++) {
            got[k] = sl_resampler_at(k)->name;
            CHECK(sl_resampler_find(got[k]) == sl_resampler_at(k), "scheme '%s' found", got[k]);
        }
        check_list("resamplers", got, k, want, COUNT(want));
        CHECK(sl_resampler_at(k) == NULL, "no scheme past the end");
    }
    {
        static const char *const want[] = {"genealogy", "ffbsi"};
        for (k = 0; k < 16 && sl_smoother_at(k) != NULL; k++) {
            got[k] = sl_smoother_at(k)->name;
            CHECK(sl_smoother_find(got[k]) == sl_smoother_at(k), "smoother '%s' found", got[k]);
        }
        check_list("smoothers", got, k, want, COUNT(want));
        CHECK(sl_smoother_at(k) == NULL, "no smoother past the end");
    }
    {
        static const char *const want[] = {"kernel", "fixed", "random_walk", "liu_west",
                                           "resample_move"};
        for (k = 0; k < 16 && sl_param_mover_at(k) != NULL; k++) {
            got[k] = sl_param_mover_at(k)->name;
            CHECK(sl_param_mover_find(got[k]) == sl_param_mover_at(k), "move '%s' found",
                  got[k]);
        }
        check_list("moves", got, k, want, COUNT(want));
    }
    {
        static const char *const want[] = {"enkf", "etkf", "ensrf", "eakf", "letkf"};
        for (k = 0; k < SL_ENKF_COUNT; k++) {
            got[k] = sl_enkf_method_name((int)k);
            CHECK(got[k] != NULL && sl_enkf_method_find(got[k]) == (int)k, "method %lu found",
                  (unsigned long)k);
        }
        check_list("methods", got, k, want, COUNT(want));
        CHECK(sl_enkf_method_name(SL_ENKF_COUNT) == NULL && sl_enkf_method_name(-1) == NULL,
              "no method name out of range");
    }
    {
        static const char *const want[] = {"uniform", "normal", "lognormal", "truncnormal",
                                           "fixed"};
        static const char *const forms[] = {"[lo hi]", "[mean sd]", "[meanlog sdlog]",
                                            "[mean sd lo hi]", "[value]"};
        static const int nargs[] = {2, 2, 2, 4, 1};
        for (k = 0; k < SL_DIST_COUNT; k++) {
            const sl_dist_type *d = sl_dist_get((int)k);
            got[k] = d != NULL ? d->name : NULL;
            CHECK(got[k] != NULL && sl_dist_find(got[k]) == (int)k, "distribution %lu found",
                  (unsigned long)k);
            CHECK(d != NULL && k < COUNT(forms) && strcmp(d->form, forms[k]) == 0,
                  "form of distribution %lu", (unsigned long)k);
            CHECK(d != NULL && k < COUNT(nargs) && d->nargs == nargs[k],
                  "numbers of distribution %lu", (unsigned long)k);
        }
        check_list("distributions", got, k, want, COUNT(want));
        CHECK(sl_dist_get(SL_DIST_COUNT) == NULL && sl_dist_get(-1) == NULL &&
                  sl_dist_find("Normal") == -1 && sl_dist_find(NULL) == -1,
              "nothing out of range");
    }
    {
        static const char *const want[] = {"gaussian", "lognormal", "student_t", "poisson",
                                           "binomial", "censored"};
        for (k = 0; k < SL_FAMILY_COUNT; k++) {
            got[k] = sl_family_get((int)k)->name;
            CHECK(sl_family_find(got[k]) == (int)k, "family '%s' found", got[k]);
        }
        check_list("families", got, k, want, COUNT(want));
    }
    {
        static const char *const want[] = {"line", "ring", "plane", "sphere"};
        static const size_t dims[] = {1, 1, 2, 2};
        for (k = 0; k < SL_GEOM_COUNT; k++) {
            const sl_geometry_type *g = sl_geometry_get((int)k);
            got[k] = sl_geometry_name((int)k);
            CHECK(g != NULL && g->name == got[k] && g->dim == dims[k] &&
                      sl_geometry_find(got[k]) == (int)k,
                  "geometry '%s': %lu coordinates, found by name", got[k],
                  g != NULL ? (unsigned long)g->dim : 0ul);
        }
        check_list("geometries", got, k, want, COUNT(want));
        CHECK(sl_geometry_get(SL_GEOM_COUNT) == NULL && sl_geometry_get(-1) == NULL &&
                  sl_geometry_find("torus") == -1 && sl_geometry_find(NULL) == -1,
              "nothing out of range");
    }
    {
        /* the perturbation kinds by id (sl_forcing_noise), as the Octave
         * layer spells them */
        static const char *const want[] = {"none", "additive", "multiplicative"};
        static const int ids[] = {SL_FORCING_EXACT, SL_FORCING_ADDITIVE,
                                  SL_FORCING_MULTIPLICATIVE};
        for (k = 0; k < 16 && sl_forcing_noise_get((int)k) != NULL; k++) {
            got[k] = sl_forcing_noise_get((int)k)->name;
            CHECK(sl_forcing_noise_find(got[k]) == (int)k, "kind '%s' found", got[k]);
        }
        check_list("perturbation kinds", got, k, want, COUNT(want));
        for (k = 0; k < COUNT(ids); k++)
            CHECK(sl_forcing_noise_find(want[k]) == ids[k], "'%s' has id %d", want[k], ids[k]);
        CHECK(sl_forcing_noise_get(-1) == NULL && sl_forcing_noise_find("lognormal") == -1,
              "nothing out of range");
        /* the perturbed values: u + e; u exp(e - sd^2/2), whose mean over
         * e ~ N(0, sd^2) is u (the log-normal mean exp(mu + sd^2/2),
         * common practice); 'none' leaves u as given */
        CHECK(sl_forcing_noise_get(SL_FORCING_EXACT)->draws == 0 &&
                  sl_forcing_noise_get(SL_FORCING_EXACT)->apply(2.385, 0.7, 0.3) == 2.385,
              "none: as given");
        CHECK(sl_forcing_noise_get(SL_FORCING_ADDITIVE)->apply(2.385, 0.7, 0.3) == 2.385 + 0.7,
              "additive");
        CHECK_REL(sl_forcing_noise_get(SL_FORCING_MULTIPLICATIVE)->apply(2.385, 0.7, 0.3),
                  2.385 * exp(0.7 - 0.045), 1e-15, "multiplicative");
    }
    {
        /* the analyses a filter cycle can run: the particle filters, then
         * the ensemble Kalman methods by id */
        static const char *const want[] = {"pf", "wenkf", "enkf", "etkf", "ensrf", "eakf",
                                           "letkf"};
        for (k = 0; k < 16 && sl_analysis_at(k) != NULL; k++) {
            got[k] = sl_analysis_at(k)->name;
            CHECK(sl_analysis_find(got[k]) == sl_analysis_at(k), "analysis '%s' found",
                  got[k]);
        }
        check_list("analyses", got, k, want, COUNT(want));
    }
    CHECK_DONE("test_names");
}
