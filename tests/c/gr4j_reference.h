/* gr4j_reference.h - the GR4J reference case (the authors' spreadsheet,
 * MODELS.md 2) as the C tests read it: its parameters, the file and its
 * columns. Included by the tests that check GR4J against it. */
#ifndef SLUICE_TEST_GR4J_REFERENCE_H
#define SLUICE_TEST_GR4J_REFERENCE_H

#include <stdio.h>
#include <stdlib.h>
#include <string.h>

/* The reference parameters of the authors' spreadsheet (MODELS.md 2). */
static const double ref_p[4] = {320.10730922522407, 2.4208432970477163,
                                69.627618031872942, 1.3891344662544509};

static const char *const ref_name = "gr4j_reference_case.csv";

static FILE *open_reference(void)
{
    char path[4096];
    const char *dir = getenv("SLUICE_REFERENCE_DIR");
    FILE *f;
    if (dir != NULL && *dir != '\0') {
        snprintf(path, sizeof path, "%s/%s", dir, ref_name);
        if ((f = fopen(path, "r")) != NULL)
            return f;
    }
    snprintf(path, sizeof path, "../shared/reference/%s", ref_name);
    if ((f = fopen(path, "r")) != NULL)
        return f;
    snprintf(path, sizeof path, "/work/shared/reference/%s", ref_name);
    return fopen(path, "r");
}

/* Columns date, P, E, Qobs m3/s, Qobs mm/d, Qsim mm/d; returns the rows. */
static size_t read_reference(FILE *f, double *P, double *E, double *qobs,
                             double *qsim, size_t cap)
{
    char line[512];
    size_t rows = 0;
    if (fgets(line, sizeof line, f) == NULL) /* header */
        return 0;
    while (rows < cap && fgets(line, sizeof line, f) != NULL) {
        double v[5];
        char *c = strchr(line, ','), *end;
        int k;
        if (c == NULL)
            continue;
        for (k = 0; k < 5; k++) {
            v[k] = strtod(c + 1, &end);
            if (end == c + 1)
                return 0;
            c = end;
        }
        P[rows] = v[0];
        E[rows] = v[1];
        qobs[rows] = v[3];
        qsim[rows] = v[4];
        rows++;
    }
    return rows;
}

#endif
