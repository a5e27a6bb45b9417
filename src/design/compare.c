/* compare.c — every threshold strategy on the same channel, side by
 * side (`design --compare`): uniform, Lloyd–Max, optimal, and fixed when
 * the request has thresholds, each a complete qc_design. */
#include "design/design_internal.h"

#include <stdio.h>
#include <stdlib.h>
#include <string.h>

void qc_design_comparison_clear(qc_design_comparison *cmp)
{
    if (!cmp)
        return;
    for (size_t i = 0; i < QC_COMPARE_MAX; i++) {
        qc_design_result_clear(&cmp->result[i]);
        free(cmp->message[i]);
    }
    memset(cmp, 0, sizeof *cmp);
}

qc_status qc_design_compare(const qc_design_request *req, qc_design_comparison *cmp)
{
    memset(cmp, 0, sizeof *cmp);
    size_t K;
    int with_fixed = req && req->quantizer.thresholds != NULL;
    qc_status st = qc_design_check_request(req, with_fixed, &K);
    if (st != QC_OK)
        return st;
    if (req->memory.ntaps > 0)
        return qc_fail(QC_EINVAL, "compare: the comparison rates memoryless channels; design a "
                                  "channel with memory (taps, response) one quantizer at a time");
    static const qc_quantizer_kind order[] = {
        QC_QUANTIZER_UNIFORM, QC_QUANTIZER_LLOYD_MAX, QC_QUANTIZER_OPTIMAL,
        QC_QUANTIZER_FIXED, QC_QUANTIZER_CONVERTER};
    qc_status first = QC_OK;
    const char *first_msg = "";
    for (size_t i = 0; i < sizeof order / sizeof order[0]; i++) {
        if (order[i] == QC_QUANTIZER_FIXED && !with_fixed)
            continue;
        if (order[i] == QC_QUANTIZER_CONVERTER && !req->quantizer.converter)
            continue;
        qc_design_request one = *req;
        one.quantizer.kind = order[i];
        one.quantizer.cells = K;
        size_t k = cmp->count++;
        cmp->kind[k] = order[i];
        cmp->status[k] = qc_design(&one, &cmp->result[k]);
        if (cmp->status[k] != QC_OK) {
            cmp->message[k] = strdup(qc_last_error());
            if (!cmp->message[k]) {
                qc_design_comparison_clear(cmp);
                return qc_fail(QC_ENOMEM, "out of memory");
            }
            if (first == QC_OK) {
                first = cmp->status[k];
                first_msg = cmp->message[k];
            }
        }
    }
    if (first != QC_OK)
        return qc_fail(first, "%s", first_msg);
    return QC_OK;
}
