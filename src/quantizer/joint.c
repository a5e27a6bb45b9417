/* joint.c — placeholder until the capacity engine is merged. */
#include "quantizer/quantizer.h"

qc_status qc_design_capacity(const qc_design_request *req, qc_design_result *res)
{
    (void)req;
    (void)res;
    return qc_fail(QC_EINVAL, "the capacity objective is not available yet");
}
