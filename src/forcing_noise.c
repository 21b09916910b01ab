/* forcing_noise.c - the kinds of perturbation of a forcing or event series
 * (pf.h), as a table looked up by id or name. */
#include <math.h>
#include <string.h>

#include "sluice/pf.h"

static double as_given(double u, double e, double sd)
{
    (void)e;
    (void)sd;
    return u;
}

static double additive(double u, double e, double sd)
{
    (void)sd;
    return u + e;
}

/* log-normal with the mean of u: E[exp(e - sd^2/2)] = 1 for e ~ N(0, sd^2) */
static double multiplicative(double u, double e, double sd)
{
    return u * exp(e - 0.5 * sd * sd);
}

static const sl_forcing_noise_type kinds[] = {
    {"none", 0, as_given},
    {"additive", 1, additive},
    {"multiplicative", 1, multiplicative},
};

const sl_forcing_noise_type *sl_forcing_noise_get(int kind)
{
    return kind >= 0 && (size_t)kind < sizeof kinds / sizeof *kinds ? &kinds[kind] : NULL;
}

int sl_forcing_noise_find(const char *name)
{
    size_t k;
    if (name == NULL)
        return -1;
    for (k = 0; k < sizeof kinds / sizeof *kinds; k++)
        if (strcmp(name, kinds[k].name) == 0)
            return (int)k;
    return -1;
}
