/* line_localization.h - the localisation the tests build most: positions
 * along a line, rows at spos, observations at opos with Gaspari-Cohn
 * half-widths oc, rows without a place (NaN) weighted by param_factor. */
#ifndef SLUICE_TEST_LINE_LOCALIZATION_H
#define SLUICE_TEST_LINE_LOCALIZATION_H

#include <string.h>

#include "sluice/localize.h"

static inline void line_localization(sl_localization *loc, const double *spos,
                                     const double *opos, const double *oc,
                                     double param_factor)
{
    memset(loc, 0, sizeof *loc);
    loc->geometry = SL_GEOM_LINE;
    loc->dim = 1;
    loc->state_pos = spos;
    loc->obs_pos = opos;
    loc->obs_c = oc;
    loc->param_factor = param_factor;
}

#endif
