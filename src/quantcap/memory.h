/* quantcap/memory.h — channels with memory: symbol-spaced intersymbol
 * interference y_k = Σ_i h_i·x_{k−i} + noise, its taps (given, or from a
 * named response sampled at the symbol rate), and its information rates
 * with i.i.d. inputs: the simulation-based rate with quantized and with
 * continuous output (Arnold, Loeliger, Vontobel, Kavčić, Zeng, IEEE Trans.
 * IT 52(8), 2006) and the exact rate of a symbol-by-symbol receiver that
 * treats the interference as noise. Part of the capacity stage of
 * libquantcap. SPDX-License-Identifier: GPL-3.0-or-later */
#ifndef QUANTCAP_MEMORY_H
#define QUANTCAP_MEMORY_H

#include <stddef.h>
#include <stdint.h>

#include "quantcap/model.h"
#include "quantcap/status.h"

#ifdef __cplusplus
extern "C" {
#endif

/* The largest trellis: M^L states (M levels, L = taps − 1), 4^5. */
#define QC_ISI_MAX_STATES ((size_t)1024)
/* The most taps a channel may have (L ≤ 10: binary inputs, 2^10 states). */
#define QC_ISI_MAX_TAPS ((size_t)11)
/* Batches of the batch-means interval, and the fewest symbols per batch. */
#define QC_ISI_BATCHES ((size_t)20)
#define QC_ISI_MIN_BATCH ((size_t)200)

/* Check taps h_0..h_L: 1 ≤ n ≤ QC_ISI_MAX_TAPS, all finite, not all
 * zero. QC_EINVAL naming the tap (1-based) or the count. Reads only. */
QC_API qc_status qc_isi_taps_check(const double *taps, size_t ntaps);

/* Taps of a named response sampled at the symbol rate, for the spec
 *   gauss:B        Gaussian low-pass, 3-dB bandwidth B × symbol rate
 *   bessel:N:B     N-th order Bessel–Thomson low-pass (1 ≤ N ≤ 10)
 *   rc:B           first-order (RC) low-pass
 *   dispersion:D   D ps/nm of accumulated chromatic dispersion seen by an
 *                  intensity link (small-signal power transfer
 *                  cos(π·λ²·D·f²/c)) through a 4th-order Bessel
 *                  receiver at 0.75 × the symbol rate (dispersion:D:B:
 *                  at B); needs symbol_rate (baud) and wavelength_nm
 * Each filters one rectangular (NRZ) symbol; the pulse is sampled once per
 * symbol at the phase of the widest eye (largest sample less the others'
 * magnitudes), samples below
 * QC_ISI_TAP_FLOOR of the largest are dropped from both ends, and the taps
 * are scaled to sum to 1 (a constant input passes unchanged). symbol_rate
 * and wavelength_nm are read only for dispersion (NaN otherwise). Writes
 * at most QC_ISI_MAX_TAPS taps into taps_out and their count to *ntaps;
 * QC_EINVAL naming the part of the spec at fault, or saying how many taps
 * the response needs when that is more than fit. On failure taps_out and
 * *ntaps are unspecified. */
#define QC_ISI_TAP_FLOOR 0.01
QC_API qc_status qc_isi_response_taps(const char *spec, double symbol_rate,
                                      double wavelength_nm, double *taps_out,
                                      size_t *ntaps);

/* Number of states of the trellis, M^(ntaps−1); 0 when above
 * QC_ISI_MAX_STATES (or the power overflows). */
QC_API size_t qc_isi_states(size_t nlevels, size_t ntaps);

/* Does the model suit a memory channel: its output given a level is
 * Gaussian with the mean and variance of its moments hook
 * (QC_MODEL_GAUSSIAN_LAW)? QC_EINVAL naming the model otherwise. */
QC_API qc_status qc_isi_model_check(const qc_model *model);

typedef struct {
    const qc_model *model;   /* law of the output given the noiseless output */
    const double *levels;    /* the M transmitted levels                     */
    size_t nlevels;
    const double *input;     /* i.i.d. input law (NULL: uniform)             */
    const double *taps;      /* h_0..h_L                                     */
    size_t ntaps;
    const double *thresholds; /* the ADC: nthresholds sorted thresholds      */
    size_t nthresholds;
    size_t symbols;          /* symbols counted, over all batches            */
    uint64_t seed;           /* the simulation's seed                        */
    int unquantized;         /* also the continuous-output rate (1) or not   */
    const size_t *labels;    /* bit labels of the levels (label_bits bits,
                                distinct; Gray for the trade's figures):
                                the detectors' BER and GMI below. NULL:
                                rates only                                 */
    unsigned label_bits;
} qc_isi_request;

typedef struct {
    double rate_bits;        /* information rate, quantized output           */
    double rate_ci_bits;     /* half-width of its 95 % interval              */
    double unquantized_bits; /* the same with continuous output (NaN: not run)*/
    double unquantized_ci_bits;
    double symbolwise_bits;  /* exact rate, ISI treated as noise, quantized,
                                main cursor                                */
    size_t states;           /* M^L                                          */
    /* With labels (NaN otherwise). The symbol-by-symbol receiver (the
     * channel of symbolwise_bits, MAP hard decision per cell; exact): */
    double symbolwise_ber;   /* pre-FEC BER through the labels             */
    double symbolwise_gmi_bits; /* BICM GMI with those labels              */
    /* The symbol-wise MAP detector (BCJR: Bahl, Cocke, Jelinek, Raviv,
     * IEEE Trans. IT 20(2), 1974) on the simulated batches, each figure
     * the mean of the batch estimates with its Student-t 95 % half-width:
     * the BER as the posterior-expected bit errors of its decisions, the
     * errors counted against the transmitted bits (a check on the former),
     * and the GMI H(X) − Σ_b H(B_b | Y) from its bit-wise a-posteriori
     * probabilities. The unquantized ones (continuous output) with
     * req.unquantized. */
    double bcjr_ber, bcjr_ber_ci;
    double bcjr_ber_counted, bcjr_ber_counted_ci;
    double bcjr_gmi_bits, bcjr_gmi_ci_bits;
    double unquantized_bcjr_ber, unquantized_bcjr_ber_ci;
    double unquantized_bcjr_gmi_bits, unquantized_bcjr_gmi_ci_bits;
    size_t batches;
    size_t symbols;          /* symbols counted (a multiple of batches)      */
} qc_isi_result;

/* The information rates of the request (bit/symbol). The simulation runs
 * QC_ISI_BATCHES independent batches, batch b seeded from (seed, b), each
 * a warm-up then symbols/QC_ISI_BATCHES counted symbols; the rate is the
 * mean of the batch estimates and the interval their Student-t 95 %
 * half-width. With labels, each batch also runs the MAP detector over
 * its own symbols plus a tail as long as the warm-up (drawn after the
 * counted symbols, so the rates do not change), and its BER and GMI are
 * estimated on the same sequence as the rates. Batches run in parallel with OpenMP when built with it; the
 * result does not depend on the thread count. Fails with QC_EINVAL naming
 * the culprit (taps, model, levels, law, thresholds, labels, a noiseless
 * output the model refuses, too many states, too few symbols), QC_ENUMERIC,
 * QC_ENOMEM; on failure *out is unspecified. */
QC_API qc_status qc_isi_rate(const qc_isi_request *req, qc_isi_result *out);

/* Only the exact symbol-by-symbol rate (bits) of the request: the
 * memoryless channel from the symbol at the main cursor x_{k−d} (d: the
 * largest |h_d|, the first of equals) to the quantized y_k, the other
 * symbols of the window averaged under the input law. Same failures as
 * qc_isi_rate (no simulation is run). */
QC_API qc_status qc_isi_symbolwise_rate(const qc_isi_request *req, double *bits);

#ifdef __cplusplus
}
#endif

#endif /* QUANTCAP_MEMORY_H */
