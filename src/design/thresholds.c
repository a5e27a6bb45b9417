/* thresholds.c — qc_design_thresholds: the threshold design of a request
 * for a law (design.c; a real converter's in converter.c) with the
 * unquantized reference for the same levels and final law (the adaptive
 * quadrature of src/quantizer/discretize.c), the loss and the SNR. */
#include "design/design_internal.h"

#include <math.h>
#include <string.h>

qc_status qc_design_thresholds(const qc_design_request *req, const qc_cost *costs,
                               size_t ncosts, qc_design_result *res)
{
    if (req && req->quantizer.kind == QC_QUANTIZER_CONVERTER)
        return qc_design_converter(req, costs, ncosts, res);
    qc_status st = qc_design_thresholds_only(req, costs, ncosts, res);
    if (st != QC_OK)
        return st;
    /* The unquantized reference for the same levels and final law. */
    qc_design_result r = *res;
    double unq, unq_err;
    st = qc_unquantized_mi_memo(req->numerics.unquantized_memo, req->channel.model, r.levels,
                                r.input, r.nlevels, &unq, &unq_err, &r.noiseless_limit);
    if (st != QC_OK) {
        qc_design_result_clear(res);
        return st;
    }
    r.unquantized_bits = unq * QC_LOG2E;
    r.unquantized_err_bits = unq_err * QC_LOG2E;
    r.loss_bits = r.unquantized_bits - r.rate_bits;
    r.snr_db = qc_model_snr_db(req->channel.model, r.levels, r.input, r.nlevels);
    *res = r;
    return QC_OK;
}
