/* registry.c - the table of built-in model definitions. */
#include <string.h>

#include "models.h"

static const sl_model_def *const builtin[] = {
    &sl_model_lorenz63,
    &sl_model_lorenz96,
    &sl_model_flood,
    &sl_model_gr4j,
    &sl_model_river_town,
};

size_t sl_model_def_count(void)
{
    return sizeof builtin / sizeof *builtin;
}

const sl_model_def *sl_model_def_get(size_t k)
{
    return k < sl_model_def_count() ? builtin[k] : NULL;
}

const sl_model_def *sl_model_def_find(const char *name)
{
    size_t k;
    if (name == NULL)
        return NULL;
    for (k = 0; k < sl_model_def_count(); k++)
        if (strcmp(builtin[k]->name, name) == 0)
            return builtin[k];
    return NULL;
}
