/* plot_records.c — the numbers the plots read out of a sweep's records
 * (one JSON object per point, sweep.h). The keys of a point's result are
 * the design report's own (report.h), so a key renamed in the report is
 * renamed here too. */
#include "study/plot.h"

#include "study/report.h"

#include <math.h>
#include <string.h>

const char *plot_record_status(json_t *rec)
{
    return json_string_value(json_object_get(rec, "status"));
}

double plot_record_number(json_t *rec, const char *key)
{
    const char *status = plot_record_status(rec);
    if (!status || strcmp(status, "ok") != 0)
        return NAN;
    json_t *v = json_object_get(json_object_get(rec, "result"), key);
    return json_is_number(v) ? json_number_value(v) : NAN;
}

const char *plot_rate_name(const plot_ctx *ctx)
{
    size_t n = qc_scenario_npoints(ctx->sc), rated = 0, gmi = 0;
    for (size_t i = 0; i < n; i++) { /* failed points have no objective */
        const char *o =
            json_string_value(json_object_get(json_object_get(ctx->records[i], "result"),
                                              "objective"));
        rated += o != NULL;
        gmi += o && strcmp(o, "gmi") == 0;
    }
    return rated > 0 && gmi == rated ? "GMI" : "information rate";
}

int plot_record_qam(json_t *rec)
{
    json_t *d = json_object_get(json_object_get(rec, "result"), QC_REPORT_DIMENSIONS);
    return json_is_integer(d) && json_integer_value(d) == 2;
}

qc_status plot_record_array(plot_ctx *ctx, json_t *rec, const char *key, double **out, size_t *n)
{
    json_t *a = json_object_get(json_object_get(rec, "result"), key);
    *n = json_array_size(a);
    *out = plot_alloc(ctx, (*n ? *n : 1) * sizeof **out);
    if (!*out)
        return QC_ENOMEM;
    for (size_t i = 0; i < *n; i++)
        (*out)[i] = json_number_value(json_array_get(a, i));
    return QC_OK;
}
