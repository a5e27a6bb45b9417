/* sweep.h — pieces of the sweep runner shared by its files and the plots
 * (internal). A sweep's result is one JSON record per grid point:
 *   {"point": i (from 1), "status": "ok"|..., "error": null|"...", "result": {...}}
 * where "result" is the object `quantcap design --json` prints. */
#ifndef QC_SWEEP_H
#define QC_SWEEP_H

#include <stddef.h>

#include <jansson.h>

#include "core/internal.h"
#include "quantcap/study.h"

/* Short name of a status for the "status" field ("ok", "infeasible"...). */
const char *qc_sweep_status_name(qc_status st);

/* results.csv and results.json of a finished grid (records[i] for every
 * point, in grid order). */
qc_status qc_results_write_csv(const qc_scenario *sc, json_t *const *records,
                               const char *path);
qc_status qc_results_write_json(const qc_scenario *sc, json_t *const *records,
                                const char *path);

/* One grid point (index from 0) as its record, computed with the models
 * of `cache` (sweep_point.c). *status receives the design's status, its
 * message left in this thread's qc_last_error; NULL only when memory runs
 * out. */
json_t *qc_sweep_point_record(const qc_scenario *sc, qc_model_cache *cache, size_t index,
                              qc_status *status);

/* How a record travels as text (qc_sweep_worker_run): every number with
 * 17 significant digits, so that reading it back gives the same doubles
 * and the same bytes in the tables. */
#define QC_SWEEP_RECORD_FLAGS (JSON_COMPACT | JSON_REAL_PRECISION(17) | JSON_PRESERVE_ORDER)

#endif
