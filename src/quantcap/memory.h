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

/* The largest trellis: M^L states (M symbols, L = taps − 1), 4^5: QPSK
 * with 6 taps, 16-QAM with 3, 64-QAM with 2. */
#define QC_ISI_MAX_STATES ((size_t)1024)
/* The most taps a channel may have (L ≤ 10: binary inputs, 2^10 states). */
#define QC_ISI_MAX_TAPS ((size_t)11)
/* Coherent symbol-by-symbol rate: its channel matrix has M × K² entries
 * (K cells per quadrature), at most this many (e.g. 16-QAM with 10 bits). */
#define QC_ISI_MAX_JOINT_CELLS ((size_t)1 << 24)
/* Batches of the batch-means interval, and the fewest symbols per batch. */
#define QC_ISI_BATCHES ((size_t)20)
#define QC_ISI_MIN_BATCH ((size_t)200)

/* Check taps h_0..h_L: 1 ≤ n ≤ QC_ISI_MAX_TAPS, all finite, not all
 * zero. QC_EINVAL naming the tap (1-based) or the count. Reads only. */
QC_API qc_status qc_isi_taps_check(const double *taps, size_t ntaps);

/* The same for complex taps h_i = re[i] + j·im[i] (im NULL: real): all
 * parts finite, not all zero. Reads only. */
QC_API qc_status qc_isi_complex_taps_check(const double *re, const double *im, size_t ntaps);

/* Parse a tap list "h0,h1,...", each tap a real number ("0.9", "-1e-2")
 * or a complex one written a+bj, a-bj or bj ("0.9+0.1j", "-0.3j", as
 * Python writes complex numbers). Writes at most QC_ISI_MAX_TAPS real parts into
 * re and imaginary parts into im, their count into *ntaps and into
 * *is_complex whether any imaginary part is written (even 0j). QC_EINVAL
 * naming the tap (1-based) and its text, or the count. On failure the
 * outputs are unspecified. */
QC_API qc_status qc_isi_taps_parse(const char *text, double *re, double *im, size_t *ntaps,
                                   int *is_complex);

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

/* The taps of a named response for a coherent receiver (field-linear):
 *   dispersion:D   D ps/nm of accumulated chromatic dispersion: the fibre's
 *                  all-pass H(f) = exp(j·β2·ω²·L/2) = exp(−j·π·λ²·D·f²/c)
 *                  between a transmitter and a matched receiver whose
 *                  overall pulse is the ideal Nyquist (sinc, zero
 *                  roll-off) pulse, sampled at the symbol instants:
 *                  h_k = ∫_{−1/2}^{1/2} H(f·Rs)·e^{j2πfk} df, k = −m..m,
 *                  taps h_{−m}..h_m in that order (Σ_all |h_k|² = 1);
 *                  needs symbol_rate (baud) and wavelength_nm
 *   gauss:B, bessel:N:B, rc:B  as qc_isi_response_taps (real taps)
 * The dispersion taps are not rescaled: samples whose magnitude is below
 * QC_ISI_TAP_FLOOR of the largest are dropped in symmetric pairs from
 * both ends, and if more than max_taps remain (max_taps ≥ 1, at most
 * QC_ISI_MAX_TAPS: the caller's limit from the trellis size) the
 * centred window of the largest odd count ≤ max_taps is kept;
 * *truncated_energy is the energy of the response outside the kept taps,
 * 1 − Σ_kept |h_k|² (NaN for the real responses). QC_EINVAL naming the
 * part of the spec at fault. On failure the outputs are unspecified. */
QC_API qc_status qc_isi_coherent_response_taps(const char *spec, double symbol_rate,
                                               double wavelength_nm, size_t max_taps,
                                               double *re, double *im, size_t *ntaps,
                                               double *truncated_energy);

/* Number of states of the trellis, M^(ntaps−1); 0 when above
 * QC_ISI_MAX_STATES (or the power overflows). */
QC_API size_t qc_isi_states(size_t nlevels, size_t ntaps);

/* Does the model suit a memory channel: its output given a level is
 * Gaussian with the mean and variance of its moments hook
 * (QC_MODEL_GAUSSIAN_LAW)? QC_EINVAL naming the model otherwise. */
QC_API qc_status qc_isi_model_check(const qc_model *model);

/* What the receiver samples (qc_isi_request.mode). */
typedef enum {
    QC_ISI_REAL = 0,      /* one real output: real levels, real taps (an
                             intensity link, or one quadrature alone)      */
    QC_ISI_COHERENT_PAM,  /* coherent: the real levels on the in-phase
                             quadrature, complex taps, circular complex
                             noise; I and Q each quantized                 */
    QC_ISI_COHERENT_QAM   /* coherent: square QAM, the levels on each
                             quadrature (M² symbols); I and Q quantized    */
} qc_isi_mode;

/* Symbols of the trellis's alphabet: nlevels, or nlevels² for QAM; 0 when
 * that overflows. */
QC_API size_t qc_isi_alphabet_size(qc_isi_mode mode, size_t nlevels);

/* A simulated sequence kept for reuse by requests that differ only in
 * the thresholds, the model or the figures asked for (a search on common
 * random numbers): the first run with it records the draws, the others
 * replay them and give the same bits without the generator's cost. A
 * request with another seed, law, tap count, symbol count or kind of
 * output records anew. Not for two runs at once. */
typedef struct qc_isi_draws qc_isi_draws;
QC_API qc_status qc_isi_draws_alloc(qc_isi_draws **out);
QC_API void qc_isi_draws_free(qc_isi_draws *draws);

typedef struct {
    const qc_model *model;   /* law of the output given the noiseless output
                                (coherent: of each quadrature, a model
                                without QC_MODEL_INTENSITY)                  */
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
    const double *taps_imag; /* imaginary parts of the taps (NULL: real);
                                only with a coherent mode                   */
    qc_isi_mode mode;        /* QC_ISI_REAL (0) unless coherent              */
    const size_t *labels;    /* bit labels of the levels (label_bits bits,
                                distinct; Gray for the trade's figures;
                                ignored by coherent modes):
                                the detectors' BER and GMI below. NULL:
                                rates only                                 */
    unsigned label_bits;
    qc_isi_draws *draws;     /* NULL, or a sequence kept for reuse (above) */
    unsigned figures;        /* which simulated figures to run: QC_ISI_FIG_*
                                bits; 0: every one the fields above allow.
                                One the request allows but the mask leaves
                                out is NaN; the others are bit for bit those
                                of a run of them all (one sequence drawn)   */
} qc_isi_request;

/* The simulated figures of a qc_isi_request, for its mask `figures`. */
#define QC_ISI_FIG_RATE 1u                 /* quantized information rate    */
#define QC_ISI_FIG_UNQUANTIZED_RATE 2u     /* continuous-output rate        */
#define QC_ISI_FIG_DETECTOR 4u             /* BCJR BER and GMI, quantized    */
#define QC_ISI_FIG_UNQUANTIZED_DETECTOR 8u /* the same on continuous outputs */

typedef struct {
    double rate_bits;        /* information rate, quantized output           */
    double rate_ci_bits;     /* half-width of its 95 % interval              */
    double unquantized_bits; /* the same with continuous output (NaN: not run)*/
    double unquantized_ci_bits;
    double symbolwise_bits;  /* exact rate, ISI treated as noise, quantized,
                                main cursor (coherent: I and Q jointly)    */
    size_t states;           /* M^L (QAM: M is the number of symbols, M²)    */
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

/* The information rates of the request (bit/symbol; coherent: per complex
 * symbol, the product quantizer's thresholds on I and on Q). The simulation runs
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
