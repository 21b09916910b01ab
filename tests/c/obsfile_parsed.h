/* obsfile_parsed.h - a parsed observation table as the observation-file
 * tests hold it: the sizes, the table, the status and the error of one
 * parse; release() gives back every buffer the parse took (those a parse
 * did not take are NULL, which ck_free ignores), and the look-ups by
 * column name. Included by the tests after check.h. */
#ifndef SLUICE_TEST_OBSFILE_PARSED_H
#define SLUICE_TEST_OBSFILE_PARSED_H

#include "check.h"
#include "sluice/obsfile.h"

#include <string.h>

typedef struct {
    sl_obs_size sz;
    sl_obs_table t;
    sl_status st;
    sl_error err;
} parsed;

static void release(parsed *p)
{
    ck_free(p->t.names);
    ck_free(p->t.name_at);
    ck_free(p->t.is_text);
    ck_free(p->t.slot);
    ck_free(p->t.num);
    ck_free(p->t.text);
    ck_free(p->t.text_at);
    ck_free(p->t.units);
    ck_free(p->t.unit_at);
    ck_free(p->t.text_code);
    ck_free(p->t.ncodes);
    ck_free(p->t.work);
    memset(&p->t, 0, sizeof p->t);
}

/* The column called `name`, or -1. */
static long column(const parsed *p, const char *name)
{
    size_t j;
    for (j = 0; j < p->sz.cols; j++)
        if (strcmp(p->t.names + p->t.name_at[j], name) == 0)
            return (long)j;
    return -1;
}

/* Row i of a numeric column (-999 when there is no such column). */
static double num_at(const parsed *p, const char *name, size_t i)
{
    long j = column(p, name);
    if (j < 0 || p->t.is_text[j])
        return -999;
    return p->t.num[i + p->t.slot[j] * p->sz.rows];
}

/* Row i of a text column (a marker text when there is no such column). */
static const char *text_at(const parsed *p, const char *name, size_t i)
{
    long j = column(p, name);
    if (j < 0 || !p->t.is_text[j])
        return "(no such text column)";
    return p->t.text + p->t.text_at[i + p->t.slot[j] * p->sz.rows];
}

#endif
