/* core_names.c - gateway: sluice.kernel.core_names () lists the names the
 * core knows, each in the order of the core's table: a struct of 1 x k
 * cellstr fields integrators, resamplers, families (by id), distributions
 * (by id, with distribution_forms and distribution_args, 1 x k doubles),
 * analyses (every analysis a filter cycle can run), methods (the ensemble
 * Kalman analyses, by id), moves (the parameter moves), smoothers,
 * geometries (by id, with geometry_dims, 1 x k doubles: coordinates of a
 * position) and forcing_noises (the perturbation kinds, by id). The .m
 * layer checks names against these lists rather than keeping copies. */
#include <stddef.h>

#include "mexutil.h"
#include "sluice/enkf.h"
#include "sluice/integrate.h"
#include "sluice/localize.h"
#include "sluice/loglik.h"
#include "sluice/param_move.h"
#include "sluice/pf.h"
#include "sluice/prior.h"
#include "sluice/resample.h"
#include "sluice/smooth.h"

static const char *FN = "core_names";

/* The names of one list: name(k) for k = 0, 1, ... until it gives NULL. */
static mxArray *list(const char *(*name)(size_t k))
{
    size_t count = 0, k;
    mxArray *c;
    while (name(count) != NULL)
        count++;
    c = mxCreateCellMatrix(1, count);
    for (k = 0; k < count; k++)
        mxSetCell(c, k, mxCreateString(name(k)));
    return c;
}

static const char *integrator(size_t k)
{
    const sl_integrator *t = sl_integrator_at(k);
    return t != NULL ? t->name : NULL;
}

static const char *resampler(size_t k)
{
    const sl_resampler *t = sl_resampler_at(k);
    return t != NULL ? t->name : NULL;
}

static const char *family(size_t k)
{
    const sl_family *t = k < SL_FAMILY_COUNT ? sl_family_get((int)k) : NULL;
    return t != NULL ? t->name : NULL;
}

static const char *distribution(size_t k)
{
    const sl_dist_type *t = k < SL_DIST_COUNT ? sl_dist_get((int)k) : NULL;
    return t != NULL ? t->name : NULL;
}

static const char *distribution_form(size_t k)
{
    const sl_dist_type *t = k < SL_DIST_COUNT ? sl_dist_get((int)k) : NULL;
    return t != NULL ? t->form : NULL;
}

static const char *analysis(size_t k)
{
    const sl_analysis *t = sl_analysis_at(k);
    return t != NULL ? t->name : NULL;
}

static const char *method(size_t k)
{
    return k < SL_ENKF_COUNT ? sl_enkf_method_name((int)k) : NULL;
}

static const char *move(size_t k)
{
    const sl_param_mover *t = sl_param_mover_at(k);
    return t != NULL ? t->name : NULL;
}

static const char *smoother(size_t k)
{
    const sl_smoother *t = sl_smoother_at(k);
    return t != NULL ? t->name : NULL;
}

static const char *geometry(size_t k)
{
    const sl_geometry_type *t = k < SL_GEOM_COUNT ? sl_geometry_get((int)k) : NULL;
    return t != NULL ? t->name : NULL;
}

static const char *forcing_noise(size_t k)
{
    const sl_forcing_noise_type *t = k < 64 ? sl_forcing_noise_get((int)k) : NULL;
    return t != NULL ? t->name : NULL;
}

void mexFunction(int nlhs, mxArray *plhs[], int nrhs, const mxArray *prhs[])
{
    static const char *fields[] = {"integrators", "resamplers", "families",
                                   "distributions", "distribution_forms",
                                   "distribution_args", "analyses", "methods",
                                   "moves", "smoothers", "geometries",
                                   "geometry_dims", "forcing_noises"};
    mxArray *s, *nargs, *dims;
    size_t k;
    (void)prhs;
    slm_init();
    slm_nargs(FN, nrhs, 0, 0, nlhs, 1);
    s = mxCreateStructMatrix(1, 1, (int)(sizeof fields / sizeof *fields), fields);
    mxSetField(s, 0, "integrators", list(integrator));
    mxSetField(s, 0, "resamplers", list(resampler));
    mxSetField(s, 0, "families", list(family));
    mxSetField(s, 0, "distributions", list(distribution));
    mxSetField(s, 0, "distribution_forms", list(distribution_form));
    nargs = mxCreateDoubleMatrix(1, SL_DIST_COUNT, mxREAL);
    for (k = 0; k < SL_DIST_COUNT; k++)
        mxGetDoubles(nargs)[k] = (double)sl_dist_get((int)k)->nargs;
    mxSetField(s, 0, "distribution_args", nargs);
    mxSetField(s, 0, "analyses", list(analysis));
    mxSetField(s, 0, "methods", list(method));
    mxSetField(s, 0, "moves", list(move));
    mxSetField(s, 0, "smoothers", list(smoother));
    mxSetField(s, 0, "geometries", list(geometry));
    dims = mxCreateDoubleMatrix(1, SL_GEOM_COUNT, mxREAL);
    for (k = 0; k < SL_GEOM_COUNT; k++)
        mxGetDoubles(dims)[k] = (double)sl_geometry_get((int)k)->dim;
    mxSetField(s, 0, "geometry_dims", dims);
    mxSetField(s, 0, "forcing_noises", list(forcing_noise));
    plhs[0] = s;
}
