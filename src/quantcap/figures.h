/* quantcap/figures.h — the figures the trade quotes for a quantized
 * channel: hard-decision symbol and bit error rates (MAP decision per
 * output cell), Q-factor, NGMI, rates in Gb/s and bit/s/Hz, and forward
 * error correction (FEC) codes described by overhead and threshold. Part
 * of the public interface of libquantcap (include <quantcap.h> for all of
 * it). SPDX-License-Identifier: GPL-3.0-or-later */
#ifndef QUANTCAP_FIGURES_H
#define QUANTCAP_FIGURES_H

#include <stddef.h>

#include "quantcap/dmc.h"

#ifdef __cplusplus
extern "C" {
#endif

/* ---- hard decisions ------------------------------------------------- */

/* MAP decision of each output cell on the input law: decision[y] =
 * argmax_x r(x)·P(y|x). Joint probabilities within 1e-14 of the largest,
 * relatively, are ties (symmetric receivers make exact ones, which
 * rounding would break either way); ties and empty cells: the lowest x. */
QC_API qc_status qc_map_decisions(const qc_dmc *dmc, const double *input,
                                  size_t *decision);

typedef struct {
    double symbol_error_rate; /* P(x̂ ≠ x) per symbol (QAM: per complex
                                 symbol, 1 − (1 − P_quadrature)²)         */
    double pre_fec_ber;       /* bit error rate through the labels, per
                                 bit; NaN without labels                  */
    double q_factor_db;       /* 20·log10(√2·erfc⁻¹(2·BER)); NaN when the
                                 BER is NaN, 0 or ≥ ½                     */
} qc_hard_figures;

/* Hard-decision figures of the channel `dmc` with law `input` under MAP
 * decisions, ties (as in qc_map_decisions) split evenly: each tied input
 * is decided with equal probability. labels[x] < 2^nbits are the bits of
 * input x (NULL: no BER).
 * dimensions 2: the channel is one quadrature of a square QAM whose two
 * quadratures are independent and alike (Gray labels per quadrature), so
 * the BER per bit is the quadrature's and the symbol error rate is
 * 1 − (1 − P)². */
QC_API qc_status qc_hard_decision(const qc_dmc *dmc, const double *input,
                                  const size_t *labels, unsigned nbits,
                                  unsigned dimensions, qc_hard_figures *out);

/* Q-factor in dB of a bit error rate: 20·log10 Q with Q = √2·erfc⁻¹(2·BER)
 * = Q⁻¹(BER) (common practice). NaN unless 0 < BER < ½. */
QC_API double qc_q_factor_db(double ber);

/* Normalized GMI, 1 − (H(X) − GMI)/m, m bits per symbol (Cho, Schmalen,
 * Winzer, ECOC 2017). NaN unless m > 0 and both rates are finite. */
QC_API double qc_ngmi(double gmi_bits, double entropy_bits, double m_bits);

/* ---- rates in the trade's units ------------------------------------- */

/* bits per symbol (per polarization) × symbol rate (baud) ×
 * polarizations, in Gb/s; NaN unless the symbol rate is > 0. */
QC_API double qc_rate_gbps(double bits_per_symbol, double symbol_rate,
                           unsigned polarizations);

/* Spectral efficiency at the symbol rate (occupied bandwidth = symbol
 * rate): bits per symbol × polarizations, bit/s/Hz. */
QC_API double qc_spectral_efficiency(double bits_per_symbol, unsigned polarizations);

/* ---- forward error correction ---------------------------------------- */

typedef enum {
    QC_FEC_HARD = 0, /* threshold on the pre-FEC bit error rate (≤)      */
    QC_FEC_SOFT = 1, /* threshold on the NGMI (≥)                       */
} qc_fec_kind;

#define QC_FEC_NAME_MAX 32

typedef struct {
    char name[QC_FEC_NAME_MAX]; /* table name, or "user" for a spec      */
    double overhead;            /* redundancy over the payload, fraction
                                   (0.0669 for 6.69 %); code rate is
                                   1/(1 + overhead)                       */
    qc_fec_kind kind;
    double threshold;           /* pre-FEC BER (hard) or NGMI (soft)     */
} qc_fec;

/* The codes shipped in data/fec.tsv (compiled in): *n receives their
 * number. Common practice values, not standards' text. */
QC_API const qc_fec *qc_fec_table(size_t *n);

/* Parse a table in the data/fec.tsv format (docs/formats.md); errors name
 * `name`:LINE. *out is malloc'd. */
QC_API qc_status qc_fec_table_parse(const char *text, size_t len, const char *name,
                                    qc_fec **out, size_t *n);

/* A code by name from the compiled-in table, or a user code
 * "overhead=PCT,ber=X" / "overhead=PCT,ngmi=X" (or "rate=R" in place of
 * the overhead, 0 < R ≤ 1). Unknown names list the known ones. */
QC_API qc_status qc_fec_parse(const char *spec, qc_fec *out);

typedef struct {
    int closes;      /* the figure meets the threshold                    */
    double margin;   /* hard: Q-factor dB above the threshold's Q-factor;
                        soft: NGMI above the threshold; NaN if undefined  */
    double net_bits; /* net information bits per symbol after the code:
                        H(X) − (1 − R_c)·m (Böcherer, Steiner, Schulte,
                        IEEE Trans. Commun. 63(12), 2015; R_c·m for a
                        uniform law); 0 when the link does not close      */
} qc_fec_outcome;

/* Evaluate a code on a point: the BER for a hard code, the NGMI for a
 * soft one, H(X) and m in bits per symbol. QC_EINVAL naming the figure
 * when the one the code needs is undefined (NaN). */
QC_API qc_status qc_fec_evaluate(const qc_fec *fec, double pre_fec_ber, double ngmi,
                                 double entropy_bits, double m_bits,
                                 qc_fec_outcome *out);

#ifdef __cplusplus
}
#endif

#endif /* QUANTCAP_FIGURES_H */
