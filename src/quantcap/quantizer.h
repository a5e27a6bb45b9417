/* quantcap/quantizer.h — the discretizer (model + levels + thresholds ->
 * transition matrix), the unquantized reference and the quantizer
 * building blocks. Part of the public interface of libquantcap (include
 * <quantcap.h> for all of it). SPDX-License-Identifier: GPL-3.0-or-later
 * */
#ifndef QUANTCAP_QUANTIZER_H
#define QUANTCAP_QUANTIZER_H

#include <stddef.h>

#include "quantcap/model.h"
#include "quantcap/dmc.h"

#ifdef __cplusplus
extern "C" {
#endif

/* Check thresholds: finite, strictly increasing (and integers for
 * count outputs). The message names the offending threshold (1-based). */
QC_API qc_status qc_thresholds_check(const qc_model *model, const double *thresholds,
                              size_t nthresholds);

/* Transition matrix of levels → (nthresholds + 1) cells. Each cell
 * probability is a difference taken on the tail side where it does not
 * cancel, so cells far in a tail stay accurate; entries are never
 * negative or NaN, and each row is renormalized only if it is within
 * QC_DMC_ROW_TOL of 1 (otherwise QC_ENUMERIC). */
QC_API qc_status qc_discretize(const qc_model *model, const double *levels,
                        size_t nlevels, const double *thresholds,
                        size_t nthresholds, qc_dmc **out);

/* Mutual information with the unquantized output (continuous density or
 * ideal count resolution) for the given levels and input law, in nats.
 * Adaptive quadrature (GSL QAGS/QAGI) per level; the absolute error
 * estimate is returned in *abserr_nats (may be NULL). */
QC_API qc_status qc_unquantized_mi(const qc_model *model, const double *levels,
                            const double *input, size_t nlevels,
                            double *mi_nats, double *abserr_nats);

/* The same with the unquantized output (adaptive quadrature, GSL QAGS, or
 * a sum over counts), as qc_unquantized_mi. */
QC_API qc_status qc_unquantized_gmi(const qc_model *model, const double *levels,
                             const double *input, size_t nlevels,
                             const size_t *labels, unsigned nbits,
                             double *gmi_nats, double *abserr_nats);

typedef enum {
    QC_QUANTIZER_UNIFORM = 0, /* uniform cells, full-scale range optimized  */
    QC_QUANTIZER_FIXED,       /* thresholds given by the caller, evaluated  */
    QC_QUANTIZER_LLOYD_MAX,   /* minimum mean-square error (Lloyd, Max)     */
    QC_QUANTIZER_OPTIMAL,     /* MI-optimal: DP on a fine grid + refinement */
    QC_QUANTIZER_COUNT
} qc_quantizer_kind;

#define QC_MAX_BITS 16

/* cells = 2^bits for 1 ≤ bits ≤ QC_MAX_BITS, else QC_EINVAL. */
QC_API qc_status qc_cells_from_bits(int bits, size_t *cells);

/* ---- building blocks of the designs -------------------------------- */

/* How qc_dp_quantize searches. */
typedef enum {
    QC_DP_FAST = 0,  /* SMAWK per layer: O(K·N·nx) cell evaluations        */
    QC_DP_PLAIN = 1, /* every split point: O(K·N²·nx)                       */
} qc_dp_method;

/* Merge the ny outputs of `fine`, in their given order, into `cells`
 * contiguous groups maximizing I(X;Y_q) under `input` (dynamic
 * programming: Kurkoski & Yagi, IEEE Trans. IT 60(8), 2014; He, Cai, Song,
 * Mei, IEEE Trans. IT 2021). cuts_out receives cells + 1 indices
 * 0 = c_0 < c_1 < … < c_K = ny; group k holds outputs c_k … c_{k+1} − 1.
 * QC_DP_PLAIN is exact for every channel; QC_DP_FAST is exact when the
 * cell function meets the quadrangle inequality (e.g. binary input with
 * outputs sorted by likelihood ratio, and the ordered outputs of
 * monotone-likelihood-ratio models such as Gaussian or Poisson noise).
 * For binary input sorted by likelihood ratio the result is optimal among
 * all quantizers. mi_nats (may be NULL) receives the merged MI.
 * QC_EINVAL when cells < 1 or cells > ny, or the law is not a law. */
QC_API qc_status qc_dp_quantize(const qc_dmc *fine, const double *input,
                         size_t cells, qc_dp_method method, size_t *cuts_out,
                         double *mi_nats);

#ifdef __cplusplus
}
#endif

#endif /* QUANTCAP_QUANTIZER_H */
