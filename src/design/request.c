/* request.c — the values of the design stage: names of the objectives,
 * cells from bits, a request's defaults and its units, clearing a result,
 * and progress reports to the caller's callback. */
#include "design/design_internal.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

static const char *const objective_names[QC_OBJECTIVE_COUNT] = {
    [QC_OBJECTIVE_MI] = "mi",
    [QC_OBJECTIVE_CAPACITY] = "capacity",
    [QC_OBJECTIVE_GMI] = "gmi",
};

const char *qc_objective_name(qc_objective objective)
{
    return (unsigned)objective < QC_OBJECTIVE_COUNT ? objective_names[objective]
                                                    : NULL;
}

qc_status qc_objective_parse(const char *name, qc_objective *out)
{
    for (int i = 0; name && i < QC_OBJECTIVE_COUNT; i++)
        if (strcmp(name, objective_names[i]) == 0) {
            *out = (qc_objective)i;
            return QC_OK;
        }
    return qc_fail(QC_EINVAL, "unknown objective '%s' (choose mi, capacity or gmi)",
                   name ? name : "");
}

qc_status qc_cells_from_bits(int bits, size_t *cells)
{
    if (bits < 1 || bits > QC_MAX_BITS)
        return qc_fail(QC_EINVAL, "bits must be between 1 and %d (got %d)",
                       QC_MAX_BITS, bits);
    *cells = (size_t)1 << bits;
    return QC_OK;
}

void qc_design_request_default(qc_design_request *req)
{
    memset(req, 0, sizeof *req);
    req->input.objective = QC_OBJECTIVE_MI;
    req->quantizer.kind = QC_QUANTIZER_OPTIMAL;
    req->numerics.tol_bits = QC_DESIGN_DEFAULT_TOL_BITS;
    req->memory.truncated_energy = NAN;
}

void qc_design_result_clear(qc_design_result *res)
{
    if (!res)
        return;
    free(res->reconstruction);
    free(res->thresholds);
    free(res->levels);
    free(res->input);
    qc_dmc_free(res->channel);
    free(res->taps);
    free(res->taps_imag);
    free(res->memory_thresholds);
    free(res->points_xy);
    free(res->point_law);
    free(res->point_labels);
    free(res->thresholds_q);
    free(res->amplitude_thresholds);
    free(res->phase_thresholds);
    memset(res, 0, sizeof *res);
}

/* ---- request checks ------------------------------------------------- */

void qc_design_progress(const qc_design_request *req, size_t done, size_t total)
{
    if (req && req->numerics.progress && total > 0)
        req->numerics.progress(req->numerics.progress_user, done < total ? done : total, total);
}

static const char *unit_or_empty(const char *u) { return u ? u : ""; }

const char *qc_design_level_unit(const qc_design_request *req)
{
    if (!req)
        return "";
    if (req->channel.level_unit)
        return req->channel.level_unit;
    const qc_model *m = req->channel.model;
    return m ? unit_or_empty(qc_model_get_type(m)->level_unit) : "";
}

const char *qc_design_output_unit(const qc_design_request *req)
{
    if (!req)
        return "";
    if (req->channel.output_unit)
        return req->channel.output_unit;
    const qc_model *m = req->channel.model;
    return m ? unit_or_empty(qc_model_get_type(m)->output_unit) : "";
}

const char *qc_design_snr_definition(const qc_design_request *req)
{
    if (!req || !req->channel.model || !qc_model_get_type(req->channel.model)->snr)
        return NULL;
    if (req->channel.dimensions == 2 && qc_model_get_type(req->channel.model) == &qc_model_gauss)
        return "Es/N0 = E|x|^2/(2 sigma^2) (symbol energy over the noise density; sigma^2 "
               "per quadrature)";
    return qc_model_get_type(req->channel.model)->snr_definition;
}

