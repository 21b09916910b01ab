/* models.h - the built-in model definitions (internal to the core). */
#ifndef SLUICE_MODELS_H
#define SLUICE_MODELS_H

#include "sluice/model.h"

extern const sl_model_def sl_model_lorenz63;
extern const sl_model_def sl_model_lorenz96;
extern const sl_model_def sl_model_flood;
extern const sl_model_def sl_model_gr4j;
extern const sl_model_def sl_model_river_town;

#endif
