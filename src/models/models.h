/* models.h - the built-in model definitions (internal to the core). */
#ifndef SLUICE_MODELS_H
#define SLUICE_MODELS_H

#include "sluice/model.h"

extern const sl_model_def sl_model_lorenz63;
extern const sl_model_def sl_model_lorenz96;
extern const sl_model_def sl_model_flood;
extern const sl_model_def sl_model_gr4j;
extern const sl_model_def sl_model_river_town;

/* GR4J's state names in its order (production and routing stores, the
 * two unit-hydrograph queues, the flow), for every model that carries
 * GR4J's state as its first rows. */
#define SL_GR4J_STATE_NAMES                                                   \
    "S", "R",                                                                 \
    "uh1_1", "uh1_2", "uh1_3", "uh1_4", "uh1_5", "uh1_6", "uh1_7",            \
    "uh1_8", "uh1_9", "uh1_10", "uh1_11", "uh1_12", "uh1_13", "uh1_14",       \
    "uh1_15", "uh1_16", "uh1_17", "uh1_18", "uh1_19", "uh1_20",               \
    "uh2_1", "uh2_2", "uh2_3", "uh2_4", "uh2_5", "uh2_6", "uh2_7",            \
    "uh2_8", "uh2_9", "uh2_10", "uh2_11", "uh2_12", "uh2_13", "uh2_14",       \
    "uh2_15", "uh2_16", "uh2_17", "uh2_18", "uh2_19", "uh2_20",               \
    "uh2_21", "uh2_22", "uh2_23", "uh2_24", "uh2_25", "uh2_26", "uh2_27",     \
    "uh2_28", "uh2_29", "uh2_30", "uh2_31", "uh2_32", "uh2_33", "uh2_34",     \
    "uh2_35", "uh2_36", "uh2_37", "uh2_38", "uh2_39", "uh2_40",               \
    "Q"

#endif
