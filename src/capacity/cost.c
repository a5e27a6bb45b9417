/* cost.c — placeholder while the capacity–cost search is written. */
#include "capacity/engine.h"

qc_status ba_capacity_cost(qc_ba_workspace *ws, const qc_ba_options *opt,
                           qc_capacity_result *res)
{
    (void)ws;
    (void)opt;
    (void)res;
    return qc_fail(QC_EINVAL, "input costs are not supported yet");
}
