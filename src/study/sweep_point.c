/* sweep_point.c — one grid point of a sweep as its JSON record: exactly
 * what `quantcap design --json` computes with the point's settings (and,
 * with a [require] section, the value the point needs to meet the
 * target), wrapped as {"point", "status", "error", "result"}. Used by the
 * sweep's own threads (sweep.c) and by the workers of a sweep spread over
 * processes (sweep_worker.c), so both compute the same bytes. */
#include "study/sweep.h"

#include "core/internal.h"
#include "core/parse.h"
#include "study/report.h"
#include "study/scenario.h"

#include <math.h>
#include <stdio.h>
#include <string.h>

/* [require]: the value the point's settings need to meet the target, as
 * `quantcap require` finds it, added to the point's report; a target the
 * point cannot meet is recorded in `require_error`, not a failure of the
 * point. */
static void add_require(const qc_scenario *sc, const qc_settings *s, json_t *result)
{
    const sc_require *r = &sc->require;
    const char *key = r->solve_for;
    double lo = r->lo, hi = r->hi, op = NAN;
    qc_require_result res;
    memset(&res, 0, sizeof res);
    res.required = res.unquantized_required = res.penalty_db = NAN;
    qc_status st = r->range_given ? QC_OK : qc_settings_require_range(s, key, &lo, &hi);
    const char *unit = qc_setting_db_unit(key);
    if (st == QC_OK)
        st = qc_settings_require(s, key, &r->target, lo, hi, unit, &res);
    const char *v = qc_settings_get(s, key);
    if (v && qc_parse_double(v, &op) != QC_OK)
        op = NAN;
    json_t *t = json_object();
    json_object_set_new(t, "kind", json_string(qc_target_name(r->target.kind)));
    json_object_set_new(t, "value", qc_report_real(r->target.value));
    json_object_set_new(t, "fec", r->target.from_fec ? json_string(r->target.fec.name)
                                                     : json_null());
    json_object_set_new(result, "solve_for", json_string(key));
    json_object_set_new(result, "target", t);
    json_object_set_new(result, "required", qc_report_real(res.required));
    json_object_set_new(result, "unquantized_required", qc_report_real(res.unquantized_required));
    json_object_set_new(result, "penalty_db", qc_report_real(res.penalty_db));
    json_object_set_new(result, "margin_db",
                        qc_report_real(st == QC_OK ? qc_require_margin_db(
                                                         &res, !qc_setting_in_db(key), op)
                                                   : NAN));
    json_object_set_new(result, "require_error",
                        st == QC_OK ? json_null() : json_string(qc_last_error()));
}

const char *qc_sweep_status_name(qc_status st)
{
    switch (st) {
    case QC_OK: return "ok";
    case QC_EINVAL: return "invalid";
    case QC_EFORMAT: return "format";
    case QC_EIO: return "io";
    case QC_EINFEASIBLE: return "infeasible";
    case QC_ENOMEM: return "no-memory";
    case QC_ENOCONV: return "no-convergence";
    case QC_ENUMERIC: return "numeric";
    case QC_STATUS_COUNT: break;
    }
    return "unknown";
}

/* A point with a FEC code and no [require]: the penalty at the code's
 * threshold, as `quantcap design --fec` reports it. */
static qc_status add_fec_penalty(const qc_settings *s, const qc_fec *fec, json_t *result)
{
    qc_fec_penalty p;
    qc_status st = qc_settings_fec_penalty(s, fec, &p);
    if (st != QC_OK)
        return st;
    json_object_set_new(result, "penalty_solve_for", p.key ? json_string(p.key) : json_null());
    json_object_set_new(result, "penalty_db", qc_report_real(p.db));
    json_object_set_new(result, "penalty_note",
                        isfinite(p.db) ? json_null() : json_string(p.note));
    return QC_OK;
}

/* One grid point, as `quantcap design --json` computes it. The record is
 * NULL only when memory runs out; *status receives the design's status
 * (its message stays in this thread's qc_last_error). */
json_t *qc_sweep_point_record(const qc_scenario *sc, qc_model_cache *cache, size_t index,
                         qc_status *status)
{
    qc_settings *s = NULL;
    const qc_model *m = NULL;
    qc_design_request req;
    qc_design_result res;
    memset(&res, 0, sizeof res);
    json_t *result = NULL;
    qc_status st = qc_scenario_point_settings(sc, index, &s);
    if (st == QC_OK)
        st = qc_settings_build_cached(s, cache, &m, &req);
    if (st == QC_OK)
        st = qc_design(&req, &res);
    if (st == QC_OK && !(result = qc_report_design(&req, &res)))
        st = qc_fail(QC_ENOMEM, "out of memory building the report");
    if (st == QC_OK && sc->require.on)
        add_require(sc, s, result);
    else if (st == QC_OK && res.fec_given)
        st = add_fec_penalty(s, &res.fec, result);
    json_t *rec = json_object();
    if (rec) {
        json_object_set_new(rec, "point", json_integer((json_int_t)index + 1)); /* from 1 */
        json_object_set_new(rec, "status", json_string(qc_sweep_status_name(st)));
        json_object_set_new(rec, "error", st == QC_OK ? json_null()
                                                       : json_string(qc_last_error()[0]
                                                                         ? qc_last_error()
                                                                         : qc_strerror(st)));
        json_object_set_new(rec, "result", result ? result : json_null());
    } else {
        json_decref(result);
    }
    qc_design_result_clear(&res);
    qc_model_cache_release(cache, m);
    qc_settings_free(s);
    *status = st;
    return rec;
}
