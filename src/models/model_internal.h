/* model_internal.h — the layout of a model instance, private to the model
 * stage (src/models). Everything else holds a qc_model only through the
 * accessors of quantcap/model.h (qc_model_get_type, qc_model_param,
 * qc_model_params), so an instance exists only as qc_model_alloc and
 * qc_model_table_load built it: parameters checked against their ranges,
 * state initialised. SPDX-License-Identifier: GPL-3.0-or-later */
#ifndef QC_MODELS_MODEL_INTERNAL_H
#define QC_MODELS_MODEL_INTERNAL_H

#include "quantcap/model.h"

/* A model instance. Models with a state (apd caches per-level grids,
 * table holds its data) are used by one thread at a time: a sweep
 * creates one instance per thread. */
struct qc_model {
    const qc_model_type *type;
    double params[QC_MODEL_MAX_PARAMS];
    void *state;
};

#endif /* QC_MODELS_MODEL_INTERNAL_H */
