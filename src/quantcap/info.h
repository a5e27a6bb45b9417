/* quantcap/info.h — information measures of a channel and a law: entropy,
 * divergence, mutual information, bit-wise GMI, dispersion. Part of the
 * public interface of libquantcap (include <quantcap.h> for all of it).
 * SPDX-License-Identifier: GPL-3.0-or-later */
#ifndef QUANTCAP_INFO_H
#define QUANTCAP_INFO_H

#include <stddef.h>

#include "quantcap/dmc.h"

#ifdef __cplusplus
extern "C" {
#endif

#define QC_LOG2E 1.44269504088896340736 /* bits per nat */

/* Entropy −Σ p log p in nats, with 0·log 0 = 0. No checks: p is taken
 * as a law (entries ≥ 0); never fails. */
QC_API double qc_entropy(const double *p, size_t n);

/* Binary entropy h(p) in nats (0 at p = 0 and 1). Never fails. */
QC_API double qc_binary_entropy(double p);

/* Divergence Σ p log(p/q) in nats; +inf when some p > 0 meets q = 0.
 * No checks; never fails. */
QC_API double qc_divergence(const double *p, const double *q, size_t n);

/* Output law q = r·P, written into q (length ny). No checks; never
 * fails. */
QC_API void qc_output_law(const qc_dmc *dmc, const double *input, double *q);

/* I(X;Y) in nats for input law `input` (length nx, sums to 1). QC_EINVAL
 * naming the entry when the law has a negative or non-finite entry or
 * does not sum to 1, QC_ENOMEM; on failure *mi_nats is unchanged. */
QC_API qc_status qc_mutual_information(const qc_dmc *dmc, const double *input,
                                double *mi_nats);

/* Bit-metric (BICM) generalized mutual information in nats, Caire,
 * Taricco, Biglieri, IEEE Trans. IT 44(3), 1998:
 *   GMI = [H(X) − Σ_b H(B_b | Y)]⁺,
 * which is Σ_b I(B_b; Y) when the bits are independent (e.g. a uniform
 * law), and never exceeds I(X;Y). labels[x] < 2^nbits gives the bits of
 * input x (bit b = (labels[x] >> b) & 1), distinct for inputs in use.
 * QC_EINVAL naming the label or law entry at fault, QC_ENOMEM; on
 * failure *gmi_nats is unchanged. */
QC_API qc_status qc_gmi(const qc_dmc *dmc, const double *input, const size_t *labels,
                 unsigned nbits, double *gmi_nats);

/* Channel dispersion: I(X;Y) and the variance V of the information
 * density i(x;y) = log P(y|x)/P(y) under the law (Polyanskiy, Poor, Verdú,
 * IEEE Trans. IT 56(5), 2010), in nats and nats². Either output may be
 * NULL. QC_EINVAL when the channel or law is missing or the law is not
 * a law (naming the entry), QC_ENOMEM; on failure both outputs are
 * unchanged. */
QC_API qc_status qc_dispersion(const qc_dmc *dmc, const double *input, double *mi_nats,
                        double *v_nats2);

/* Normal approximation (same paper): rate − √(V/n)·Q⁻¹(ε) + log2(n)/(2n)
 * in bits, with V in bits². QC_EINVAL naming n or ε when n = 0 or ε is
 * not in (0, 1), or when the rate or V is not finite (V < 0); on failure
 * *rate_out_bits is unchanged. */
QC_API qc_status qc_normal_approximation(double rate_bits, double v_bits2, size_t n,
                                  double epsilon, double *rate_out_bits);

/* SNR (dB) minus the SNR at which ½·log2(1 + snr) equals rate_bits (per
 * real dimension); NaN when rate_bits ≤ 0 or snr_db is not finite.
 * Never fails otherwise. */
QC_API double qc_shaping_gap_db(double snr_db, double rate_bits);

#ifdef __cplusplus
}
#endif

#endif /* QUANTCAP_INFO_H */
