/* report.c — the JSON description of one design: the same object for
 * `quantcap design --json` and for each point of a sweep, so that the two
 * can be compared field by field. */
#include "io/report.h"

#include "core/internal.h"

#include <math.h>
#include <stdlib.h>

/* qc_objective_name and qc_quantizer_name live with the design
 * (src/quantizer/design.c). */

json_t *qc_report_real(double v) { return isfinite(v) ? json_real(v) : json_null(); }

json_t *qc_report_array(const double *v, size_t n)
{
    json_t *a = json_array();
    for (size_t i = 0; a && i < n; i++)
        json_array_append_new(a, qc_report_real(v[i]));
    return a;
}

static unsigned bits_of(size_t cells)
{
    unsigned b = 0;
    while (((size_t)1 << b) < cells && b < 63)
        b++;
    return ((size_t)1 << b) == cells ? b : 0;
}

json_t *qc_report_design(const qc_design_request *req, const qc_design_result *res)
{
    const qc_model *m = req->model;
    json_t *o = json_object();
    if (!o)
        return NULL;
    json_object_set_new(o, "model", json_string(m->type->name));
    json_t *pj = json_object();
    for (size_t i = 0; i < m->type->nparams; i++)
        json_object_set_new(pj, m->type->params[i].name, qc_report_real(m->params[i]));
    json_object_set_new(o, "parameters", pj);
    json_object_set_new(o, "objective", json_string(qc_objective_name(req->objective)));
    json_object_set_new(o, "quantizer", json_string(qc_quantizer_name(req->quantizer)));
    json_object_set_new(o, "cells", json_integer((json_int_t)req->cells));
    unsigned bits = bits_of(req->cells);
    json_object_set_new(o, "bits", bits ? json_integer(bits) : json_null());
    json_object_set_new(o, "rate_bits", qc_report_real(res->rate_bits));
    json_object_set_new(o, "upper_bound_bits", qc_report_real(res->upper_bound_bits));
    json_object_set_new(o, "tolerance_bits", qc_report_real(res->tol_bits));
    json_object_set_new(o, "unquantized_bits", qc_report_real(res->unquantized_bits));
    json_object_set_new(o, "unquantized_error_bits", qc_report_real(res->unquantized_err_bits));
    json_object_set_new(o, "loss_bits", qc_report_real(res->loss_bits));
    json_object_set_new(o, "iterations", json_integer((json_int_t)res->iterations));
    json_object_set_new(o, "design_iterations",
                        json_integer((json_int_t)res->design_iterations));
    json_object_set_new(o, "fine_cells", json_integer((json_int_t)res->fine_cells));
    json_object_set_new(o, "snr_db", qc_report_real(res->snr_db));
    json_object_set_new(o, "snr_penalty_db", qc_report_real(res->snr_penalty_db));
    json_object_set_new(o, "mse", qc_report_real(res->mse));
    json_object_set_new(o, "thresholds", qc_report_array(res->thresholds, res->nthresholds));
    json_object_set_new(o, "levels", qc_report_array(res->levels, res->nlevels));
    json_object_set_new(o, "input_distribution", qc_report_array(res->input, res->nlevels));
    if (res->reconstruction)
        json_object_set_new(o, "reconstruction",
                            qc_report_array(res->reconstruction, res->nthresholds + 1));
    return o;
}

qc_status qc_design_report_json(const qc_design_request *req, const qc_design_result *res,
                                char **text)
{
    *text = NULL;
    json_t *o = qc_report_design(req, res);
    if (!o)
        return qc_fail(QC_ENOMEM, "out of memory building the JSON report");
    *text = json_dumps(o, JSON_INDENT(2) | JSON_REAL_PRECISION(17) | JSON_PRESERVE_ORDER);
    json_decref(o);
    return *text ? QC_OK : qc_fail(QC_ENOMEM, "out of memory writing the JSON report");
}
