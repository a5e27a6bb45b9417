/* report.h — building the JSON description of a design (internal: the
 * sweep runner and qc_design_report_json share it). */
#ifndef QC_REPORT_H
#define QC_REPORT_H

#include <jansson.h>

#include "core/internal.h"
#include "quantcap/study.h"

/* New reference to an object with every field of the design, or NULL on
 * allocation failure. */
json_t *qc_report_design(const qc_design_request *req, const qc_design_result *res);
json_t *qc_report_real(double v);
json_t *qc_report_array(const double *v, size_t n);

#endif
