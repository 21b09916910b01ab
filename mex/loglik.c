/* loglik.c - gateway: log-likelihoods, quantiles and draws of the families.
 *   [ll, nskipped] = sluice.kernel.loglik (family, y, Yhat, sigma, aux)
 *   q = sluice.kernel.loglik ('quantile', family, u, h, sigma, aux)
 *   y = sluice.kernel.loglik ('sample', family, z, u, h, sigma, aux)
 * family: a name (every row) or a cell of m names; y, u, z: m-vectors
 * (for the ll form Yhat is m x N); h, sigma, aux: scalars or m-vectors. The
 * outputs of 'quantile' and 'sample' are m x 1 (sl_family_quantiles,
 * sl_family_samples). */
#include "mexutil.h"
#include "sluice/loglik.h"

#include <stdio.h>
#include <string.h>

static const char FN[] = "loglik";

/* "gaussian, lognormal, ..." for the messages. */
static void family_list(char *buf, size_t len)
{
    size_t used = 0;
    int k;
    buf[0] = '\0';
    for (k = 0; k < SL_FAMILY_COUNT && used < len; k++)
        used += (size_t)snprintf(buf + used, len - used, k ? ", %s" : "%s",
                                 sl_family_get(k)->name);
}

/* The id of a family name, or raise badfamily naming it. `where` is "" or
 * "element 3: ". */
static int family_id(const mxArray *a, int pos, const char *where)
{
    char list[160];
    char *name = slm_string(FN, a, pos, "family");
    int id = sl_family_find(name);
    if (id < 0) {
        family_list(list, sizeof list);
        slm_fail(FN, "badfamily",
                 "argument %d (family): %sunknown family '%s'; expected one of %s",
                 pos, where, name, list);
    }
    mxFree(name);
    return id;
}

static int is_string(const mxArray *a)
{
    return a != NULL && mxIsChar(a) && mxGetNumberOfDimensions(a) == 2 &&
           (mxGetM(a) == 1 || mxGetNumberOfElements(a) == 0);
}

/* Argument 1: the class only (its length is checked once m is known). */
static void check_family_class(const mxArray *a, int pos)
{
    char got[96];
    if (is_string(a) || mxIsCell(a))
        return;
    slm_describe(a, got, sizeof got);
    slm_fail(FN, "badclass",
             "argument %d (family): expected a family name or a cell array of names, got %s",
             pos, got);
}

/* One id per row from a name (all rows) or a cell array of m names. */
static void read_families(const mxArray *a, int pos, size_t m, int *fam)
{
    char got[96], where[48];
    size_t i;
    if (!mxIsCell(a)) {
        const int id = family_id(a, pos, "");
        for (i = 0; i < m; i++)
            fam[i] = id;
        return;
    }
    if (mxGetNumberOfDimensions(a) > 2 || (mxGetM(a) != 1 && mxGetN(a) != 1) ||
        mxGetNumberOfElements(a) != m) {
        slm_describe(a, got, sizeof got);
        slm_fail(FN, "badsize",
                 "argument %d (family): expected a family name or a cell array of %lu names, got %s",
                 pos, (unsigned long)m, got);
    }
    for (i = 0; i < m; i++) {
        const mxArray *c = mxGetCell(a, (mwIndex)i);
        snprintf(where, sizeof where, "element %lu: ", (unsigned long)(i + 1));
        if (!is_string(c)) {
            if (c == NULL)
                snprintf(got, sizeof got, "0x0 double");
            else
                slm_describe(c, got, sizeof got);
            slm_fail(FN, "badclass",
                     "argument %d (family): %sexpected a family name, got %s",
                     pos, where, got);
        }
        fam[i] = family_id(c, pos, where);
    }
}

/* A scalar or an m-vector, expanded to m values; NaN / Inf pass through
 * (the core checks the rows that use them). */
static double *read_per_row(const mxArray *a, int pos, const char *name,
                            size_t m)
{
    char got[96];
    const double *x = slm_matrix(FN, a, pos, name, 0, 0,
                                 SLM_VECTOR | SLM_ALLOW_NAN | SLM_ALLOW_INF);
    const size_t n = mxGetNumberOfElements(a);
    double *out;
    size_t i;
    if (n != 1 && n != m) {
        slm_describe(a, got, sizeof got);
        slm_fail(FN, "badsize",
                 "argument %d (%s): expected a scalar or a vector of length %lu, got %s",
                 pos, name, (unsigned long)m, got);
    }
    out = slm_alloc(FN, m, sizeof *out);
    for (i = 0; i < m; i++)
        out[i] = x[n == 1 ? 0 : i];
    return out;
}

/* 'quantile' (draw = 0) or 'sample' (draw = 1): the arguments after the
 * mode are family, [z,] u, h, sigma, aux. */
static void quantiles(int draw, int nlhs, mxArray *plhs[], int nrhs,
                      const mxArray *prhs[])
{
    const int pu = draw ? 4 : 3; /* argument positions, 1-based */
    const double *z = NULL, *u;
    double *h, *sigma, *aux;
    int *fam;
    size_t m;
    sl_error err;

    slm_nargs(FN, nrhs, pu + 3, pu + 3, nlhs, 1);
    check_family_class(prhs[1], 2);
    u = slm_matrix(FN, prhs[pu - 1], pu, "u", 0, 0,
                   SLM_VECTOR | SLM_ALLOW_NAN | SLM_ALLOW_INF);
    m = mxGetNumberOfElements(prhs[pu - 1]);
    if (draw)
        z = slm_matrix(FN, prhs[2], 3, "z", m, 0,
                       SLM_VECTOR | SLM_ALLOW_NAN | SLM_ALLOW_INF);
    h = read_per_row(prhs[pu], pu + 1, "h", m);
    sigma = read_per_row(prhs[pu + 1], pu + 2, "sigma", m);
    aux = read_per_row(prhs[pu + 2], pu + 3, "aux", m);
    fam = slm_alloc(FN, m, sizeof *fam);
    read_families(prhs[1], 2, m, fam);

    sl_error_clear(&err);
    plhs[0] = slm_create(FN, m, 1);
    if ((draw ? sl_family_samples(m, fam, z, u, h, sigma, aux,
                                  mxGetDoubles(plhs[0]), &err)
              : sl_family_quantiles(m, fam, u, h, sigma, aux,
                                    mxGetDoubles(plhs[0]), &err)) != SL_OK)
        slm_raise(FN, &err);
    mxFree(fam);
    mxFree(aux);
    mxFree(sigma);
    mxFree(h);
}

void mexFunction(int nlhs, mxArray *plhs[], int nrhs, const mxArray *prhs[])
{
    const double *y, *Yhat;
    double *sigma, *aux;
    int *fam;
    size_t m, N, nskipped = 0;
    sl_error err;

    slm_init();
    if (nrhs > 0 && is_string(prhs[0]) && mxGetNumberOfElements(prhs[0]) > 0) {
        char *mode = slm_string(FN, prhs[0], 1, "family");
        const int q = strcmp(mode, "quantile") == 0, d = strcmp(mode, "sample") == 0;
        mxFree(mode);
        if (q || d) {
            quantiles(d, nlhs, plhs, nrhs, prhs);
            return;
        }
    }
    slm_nargs(FN, nrhs, 5, 5, nlhs, 2);
    check_family_class(prhs[0], 1);
    y = slm_matrix(FN, prhs[1], 2, "y", 0, 0,
                   SLM_VECTOR | SLM_ALLOW_NAN | SLM_ALLOW_INF);
    m = mxGetNumberOfElements(prhs[1]);
    Yhat = slm_matrix(FN, prhs[2], 3, "Yhat", m, 0,
                      SLM_ALLOW_NAN | SLM_ALLOW_INF);
    N = mxGetN(prhs[2]);
    sigma = read_per_row(prhs[3], 4, "sigma", m);
    aux = read_per_row(prhs[4], 5, "aux", m);
    fam = slm_alloc(FN, m, sizeof *fam);
    read_families(prhs[0], 1, m, fam);

    sl_error_clear(&err);
    if (sl_loglik_check(m, y, sigma, aux, fam, &err) != SL_OK)
        slm_raise(FN, &err);
    plhs[0] = slm_create(FN, 1, N);
    if (sl_loglik_ensemble(m, N, y, Yhat, m, sigma, aux, fam, 0,
                           mxGetDoubles(plhs[0]), &nskipped, &err) != SL_OK)
        slm_raise(FN, &err);
    if (nlhs > 1)
        plhs[1] = mxCreateDoubleScalar((double)nskipped);
    mxFree(fam);
    mxFree(aux);
    mxFree(sigma);
}
