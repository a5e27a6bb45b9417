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

#endif
