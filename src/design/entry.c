/* entry.c — qc_design, the entry point: a request goes to the
 * two-dimensional design (iq_entry.c), the
 * pulse-position design (ppm_design.c), the shaped design (shaping.c) or
 * the alphabet and input design (input_design.c), and a channel with
 * memory adds its simulated rates (memory_design.c). Each of those stands
 * on the threshold design below it and none comes back here. */
#include "design/design_internal.h"

#include <math.h>
#include <string.h>

qc_status qc_design(const qc_design_request *req, qc_design_result *res)
{
    if (req && req->channel.ppm_slots && req->input.shaping) {
        memset(res, 0, sizeof *res);
        return qc_fail(QC_EINVAL, "shaping: pulse-position modulation sends each of its M "
                                  "positions with probability 1/M (its rate rests on that "
                                  "symmetry); shaping is for pam, qam and upam levels");
    }
    if (req && req->channel.iq)
        return qc_iq_request_design(req, res); /* iq_entry.c */
    if (req && req->channel.ppm_slots)
        return qc_ppm_design(req, res);
    if (req && req->input.shaping) {
        if (req->memory.ntaps > 0) {
            memset(res, 0, sizeof *res);
            return qc_fail(QC_EINVAL, "shaping is not available on a channel with memory "
                                      "(taps or response): its rates assume the uniform law");
        }
        return qc_shaped_design(req, res); /* shaping.c */
    }
    qc_status st = req && req->memory.ntaps > 0 ? qc_memory_check(req) : QC_OK;
    if (st != QC_OK) {
        memset(res, 0, sizeof *res);
        return st;
    }
    st = qc_input_design(req, res);
    if (st == QC_OK)
        res->shaping_nu = res->shaping_scale = res->uniform_rate_bits = res->shaping_gain_db =
            NAN;
    if (st == QC_OK && req->memory.ntaps > 0 && (st = qc_memory_design(req, res)) != QC_OK)
        qc_design_result_clear(res);
    return st;
}

qc_status qc_design_precheck(const qc_design_request *req)
{
    if (!req)
        return qc_fail(QC_EINVAL, "no design request given");
    /* the pulse-position, 2-D and shaped designs check their own requests
     * when they run; here the common one-dimensional design's */
    if (req->channel.iq || req->channel.ppm_slots || req->input.shaping)
        return QC_OK;
    qc_status st = req->memory.ntaps > 0 ? qc_memory_check(req) : QC_OK;
    unsigned dims;
    size_t cells;
    if (st == QC_OK)
        st = qc_design_check_alphabet(req, &dims);
    if (st == QC_OK)
        st = qc_design_check_request(req, req->quantizer.kind == QC_QUANTIZER_FIXED, &cells);
    return st;
}
