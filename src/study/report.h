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

/* Keys of a design report that the plots read back out of a sweep's
 * records. The writer (report.c) and the plots (plot_records.c) both take
 * them from here, so a key renamed in the report is renamed for the plots
 * too; QC_REPORT_PLOTTED_KEYS lists them for the test that checks a
 * report holds every one. */
#define QC_REPORT_DIMENSIONS "dimensions"
#define QC_REPORT_RATE "rate_bits"
#define QC_REPORT_UNQUANTIZED "unquantized_bits"
#define QC_REPORT_LOSS "loss_bits"
#define QC_REPORT_SNR_PENALTY "snr_penalty_db"
#define QC_REPORT_THRESHOLDS "thresholds"
#define QC_REPORT_LEVELS "levels"
/* read by the photon-efficiency figure (plot_photon.c); all but the
 * first two are in the reports of pulse-position designs only */
#define QC_REPORT_PHOTONS "photons_per_symbol"
#define QC_REPORT_BITS_PER_PHOTON "bits_per_photon"
#define QC_REPORT_PPM_SLOTS "ppm_slots"
#define QC_REPORT_RATE_PER_SLOT "rate_per_slot_bits"
#define QC_REPORT_HARD_RATE_PER_SLOT "hard_rate_per_slot_bits"
#define QC_REPORT_HARD_BITS_PER_PHOTON "hard_bits_per_photon"
#define QC_REPORT_PLOTTED_KEYS                                                             \
    {                                                                                      \
        QC_REPORT_DIMENSIONS, QC_REPORT_RATE, QC_REPORT_UNQUANTIZED, QC_REPORT_LOSS,       \
            QC_REPORT_SNR_PENALTY, QC_REPORT_THRESHOLDS, QC_REPORT_LEVELS, NULL            \
    }

#endif
