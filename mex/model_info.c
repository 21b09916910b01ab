/* model_info.c - gateway: sluice.kernel.model_info(name) describes a
 * compiled model definition; with no argument, the names of all. */
#include <math.h>
#include <stdio.h>
#include <string.h>

#include "mexutil.h"
#include "sluice/model.h"

static const char *FN = "model";


/* Names of a list; a missing list (or entry) gets prefix1, prefix2, ... */
static mxArray *names(const char *const *list, size_t count, const char *prefix)
{
    mxArray *c = mxCreateCellMatrix(1, count);
    size_t k;
    char buf[64];
    for (k = 0; k < count; k++) {
        if (list != NULL && list[k] != NULL) {
            mxSetCell(c, k, mxCreateString(list[k]));
        } else {
            snprintf(buf, sizeof buf, "%s%lu", prefix, (unsigned long)(k + 1));
            mxSetCell(c, k, mxCreateString(buf));
        }
    }
    return c;
}

static mxArray *column(const double *v, size_t count, double fill)
{
    mxArray *a = mxCreateDoubleMatrix(count, 1, mxREAL);
    double *d = mxGetDoubles(a);
    size_t k;
    for (k = 0; k < count; k++)
        d[k] = v != NULL ? v[k] : fill;
    return a;
}

void mexFunction(int nlhs, mxArray *plhs[], int nrhs, const mxArray *prhs[])
{
    static const char *fields[] = {"name", "summary", "n_state", "n_min", "states",
                                   "params", "forcings", "events", "x0", "defaults",
                                   "lower", "upper", "dt", "integrator", "has_rhs",
                                   "has_map", "internal"};
    const sl_model_def *def = NULL;
    mxArray *s;
    char *name;
    slm_init();
    slm_nargs(FN, nrhs, 0, 1, nlhs, 1);
    if (nrhs == 0) {
        size_t k, count = sl_model_def_count();
        mxArray *c = mxCreateCellMatrix(1, count);
        for (k = 0; k < count; k++)
            mxSetCell(c, k, mxCreateString(sl_model_def_get(k)->name));
        plhs[0] = c;
        return;
    }
    name = slm_string(FN, prhs[0], 1, "name");
#ifdef SLUICE_USER_MODEL
    def = sluice_user_model();
    (void)name;
#else
    def = sl_model_def_find(name);
#endif
    if (def == NULL)
        slm_fail(FN, "badmodel", "unknown model '%s'", name);
    s = mxCreateStructMatrix(1, 1, (int)(sizeof fields / sizeof *fields), fields);
    mxSetField(s, 0, "name", mxCreateString(def->name));
    mxSetField(s, 0, "summary", mxCreateString(def->summary != NULL ? def->summary : ""));
    mxSetField(s, 0, "n_state", mxCreateDoubleScalar((double)def->n_state));
    mxSetField(s, 0, "n_min", mxCreateDoubleScalar((double)def->n_min));
    mxSetField(s, 0, "states", names(def->state_names, def->n_state, "x"));
    mxSetField(s, 0, "params", names(def->param_names, def->n_param, "p"));
    mxSetField(s, 0, "forcings", names(def->forcing_names, def->n_forcing, "u"));
    mxSetField(s, 0, "events", names(def->event_names, def->n_event, "e"));
    mxSetField(s, 0, "x0", column(def->x0, def->n_state, 0.0));
    mxSetField(s, 0, "defaults", column(def->p_default, def->n_param, NAN));
    mxSetField(s, 0, "lower", column(def->p_lower, def->n_param, -HUGE_VAL));
    mxSetField(s, 0, "upper", column(def->p_upper, def->n_param, HUGE_VAL));
    mxSetField(s, 0, "dt", mxCreateDoubleScalar(def->dt));
    mxSetField(s, 0, "integrator", mxCreateString(def->integrator != NULL ? def->integrator : ""));
    mxSetField(s, 0, "has_rhs", mxCreateDoubleScalar(def->rhs != NULL));
    mxSetField(s, 0, "has_map", mxCreateDoubleScalar(def->map != NULL || def->map_block != NULL));
    {
        mxArray *in = mxCreateLogicalMatrix(def->n_state, 1);
        mxLogical *f = mxGetLogicals(in);
        size_t k;
        for (k = 0; k < def->n_state; k++)
            f[k] = def->state_internal != NULL && def->state_internal[k] != 0;
        mxSetField(s, 0, "internal", in);
    }
    plhs[0] = s;
}
