/* localize.h - localisation of the ensemble Kalman analyses: geometries
 * and their distances, the Gaspari-Cohn correlation, and the positions and
 * half-widths of a localisation with their one check. */
#ifndef SLUICE_LOCALIZE_H
#define SLUICE_LOCALIZE_H

#include <stddef.h>
#include "sluice/status.h"

#ifdef __cplusplus
extern "C" {
#endif

/* Geometry of positions, for the distances of localisation. */
typedef enum {
    SL_GEOM_LINE = 0, /* 1-D: |a - b| */
    SL_GEOM_RING,     /* 1-D periodic with the given period */
    SL_GEOM_PLANE,    /* 2-D Euclidean */
    SL_GEOM_SPHERE,   /* lon/lat in degrees; great-circle distance on a
                       * sphere of the given radius (haversine) */
    SL_GEOM_COUNT
} sl_geometry;

/* A geometry as a type object: its name, the number of coordinates of a
 * position, what the localisation's period_or_radius means for it (NULL:
 * nothing), the names and ranges of the coordinates, and its functions:
 * distance between positions a and b (`scale` is period_or_radius); key,
 * the coordinate that bounds the distance, by which the LETKF sorts
 * observations (|key(a) - key(b)| <= reach(scale, d) whenever the
 * distance is at most d, or the key is periodic with period `scale`
 * when key_periodic); reach returns HUGE_VAL when no window of keys
 * bounds d. The entry of id k is at index k of the table. */
typedef struct {
    const char *name;
    size_t dim;
    const char *scale;
    int key_periodic;
    const char *coord[2];      /* names of the coordinates */
    double lo[2], hi[2];       /* their ranges (-HUGE_VAL, HUGE_VAL: any) */
    double (*distance)(double scale, const double *a, const double *b);
    double (*key)(double scale, const double *pos);
    double (*reach)(double scale, double d);
} sl_geometry_type;

/* The geometry of id k (sl_geometry), or NULL. */
const sl_geometry_type *sl_geometry_get(int geometry);

/* The name of a geometry ("line", "ring", "plane", "sphere"), or NULL. */
const char *sl_geometry_name(int geometry);

/* The geometry with this name, or -1. */
int sl_geometry_find(const char *name);

/* Gaspari & Cohn (1999) eq. 4.10 for z = |d| / c: 1 at 0, 0 from z = 2. */
double sl_gaspari_cohn(double d, double c);

/* Distance between positions a and b (1 or 2 coordinates each). */
double sl_distance(int geometry, double period_or_radius, const double *a,
                   const double *b);

/* Positions for localisation. A state row whose first coordinate is NaN
 * (a parameter of state augmentation, say) is not localised: every
 * observation acts on it with the weight param_factor, in (0, 1]. */
typedef struct {
    int geometry;
    double period_or_radius; /* ring period / sphere radius */
    size_t dim;              /* 1 (line, ring) or 2 (plane, sphere) */
    const double *state_pos; /* n x dim, column-major (row i: state i) */
    const double *obs_pos;   /* m x dim */
    const double *obs_c;     /* m Gaspari-Cohn half-widths c (> 0) */
    double param_factor;     /* weight of every observation on rows that
                              * are not localised (1 = full) */
    size_t group_max;        /* the most state rows at one place (rows
                              * without a position are one place), or 0
                              * when not known: what a rank of a
                              * distributed LETKF with rows_local may
                              * hold is sized from it (n when 0) */
} sl_localization;

/* Check a localisation for n state rows and m observations (used by every
 * analysis that takes one): a known geometry with its number of
 * coordinates, a ring's period or a sphere's radius finite and > 0, the
 * arrays present, param_factor in (0, 1], every observation's half-width
 * finite and > 0 and its position finite, every state row's position
 * finite unless its first coordinate is NaN (not localised), latitudes
 * within [-90, 90] on a sphere. loc NULL fails too. Reason
 * "badlocalization"; the first fault found is named. */
sl_status sl_localization_check(const sl_localization *loc, size_t n, size_t m,
                                sl_error *err);

#ifdef __cplusplus
}
#endif
#endif
