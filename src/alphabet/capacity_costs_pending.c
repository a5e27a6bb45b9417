/* capacity_costs_pending.c — placeholder until the capacity engine is
 * merged: qc_capacity_costs (capacity_costs.c) runs the engine. */
#include "alphabet/alphabet.h"

#include <string.h>

qc_status qc_capacity_costs(const qc_dmc *dmc, const qc_ba_options *opt,
                            const qc_cost *costs, size_t ncosts, qc_ba_workspace *ws,
                            qc_costs_result *res, double *input_out)
{
    (void)dmc;
    (void)opt;
    (void)costs;
    (void)ncosts;
    (void)ws;
    (void)input_out;
    memset(res, 0, sizeof *res);
    return qc_fail(QC_EINVAL, "capacity under input costs needs the capacity engine, "
                              "which is not merged yet");
}
