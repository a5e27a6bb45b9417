/* sweep_worker.c — the points of a sweep computed away from the process
 * that writes its checkpoint and tables: a worker holds the scenario's
 * shared models (model_cache.c) and turns a point index into the text of
 * its record, which the writing process reads back and checkpoints
 * (qc_sweep_run with an executor, sweep.c). The text carries every number
 * with 17 significant digits, enough to give back the same double (IEEE
 * 754-2008, 5.12.2), so a point's bytes in the tables do not depend on
 * where it ran. */
#include "study/sweep.h"

#include "core/internal.h"

#include <stdlib.h>

struct qc_sweep_worker {
    const qc_scenario *sc;
    qc_model_cache *cache;
};

qc_status qc_sweep_worker_alloc(const qc_scenario *sc, qc_sweep_worker **out)
{
    *out = NULL;
    if (!sc)
        return qc_fail(QC_EINVAL, "no scenario for the sweep worker");
    qc_gsl_init();
    qc_sweep_worker *w = calloc(1, sizeof *w);
    if (!w)
        return qc_fail(QC_ENOMEM, "out of memory");
    qc_status st = qc_model_cache_alloc(&w->cache);
    if (st != QC_OK) {
        free(w);
        return st;
    }
    w->sc = sc;
    json_t *seed = json_object(); /* set jansson's hash seed before threads start */
    json_decref(seed);
    *out = w;
    return QC_OK;
}

qc_status qc_sweep_worker_run(qc_sweep_worker *w, size_t index, char **record)
{
    *record = NULL;
    if (!w)
        return qc_fail(QC_EINVAL, "no sweep worker");
    if (index >= qc_scenario_npoints(w->sc))
        return qc_fail(QC_EINVAL, "point %zu is outside the grid of %zu points", index + 1,
                       qc_scenario_npoints(w->sc));
    qc_status pst;
    json_t *rec = qc_sweep_point_record(w->sc, w->cache, index, &pst);
    if (!rec)
        return qc_fail(QC_ENOMEM, "out of memory at point %zu", index + 1);
    *record = json_dumps(rec, QC_SWEEP_RECORD_FLAGS);
    json_decref(rec);
    return *record ? QC_OK : qc_fail(QC_ENOMEM, "out of memory at point %zu", index + 1);
}

void qc_sweep_worker_free(qc_sweep_worker *w)
{
    if (!w)
        return;
    qc_model_cache_free(w->cache);
    free(w);
}
