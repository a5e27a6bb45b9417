/* hard_decision.c — hard-decision error rates of a quantized channel:
 * each output cell decides the input with the largest joint probability
 * r(x)·P(y|x) (the maximum a posteriori rule on the input law; any
 * digital-communications textbook, e.g. Proakis, Digital Communications,
 * ch. 4), the symbol error rate of that rule and the bit error rate
 * through the inputs' bit labels. The error sums run over the wrong
 * decisions only, so small error rates keep their relative accuracy
 * (no 1 − P(correct)). For square QAM the channel is one quadrature:
 * P_s = 1 − (1 − P)² = P·(2 − P), BER per bit unchanged (Gray labels per
 * quadrature; Cho and Yoon, IEEE Trans. Commun. 50(7), 2002). */
#include "core/internal.h"
#include "quantcap/figures.h"

#include <math.h>
#include <stdlib.h>

qc_status qc_map_decisions(const qc_dmc *dmc, const double *input, size_t *decision)
{
    if (!dmc || !input || !decision)
        return qc_fail(QC_EINVAL, "hard decision: no channel, law or output array given");
    for (size_t y = 0; y < dmc->ny; y++) {
        size_t best = 0;
        double bp = -1.0;
        for (size_t x = 0; x < dmc->nx; x++) {
            double p = input[x] * dmc->p[x * dmc->ny + y];
            if (p > bp) {
                bp = p;
                best = x;
            }
        }
        decision[y] = best;
    }
    return QC_OK;
}

static unsigned popcount(size_t v)
{
    unsigned c = 0;
    for (; v; v &= v - 1)
        c++;
    return c;
}

qc_status qc_hard_decision(const qc_dmc *dmc, const double *input, const size_t *labels,
                           unsigned nbits, unsigned dimensions, qc_hard_figures *out)
{
    out->symbol_error_rate = out->pre_fec_ber = out->q_factor_db = NAN;
    if (!dmc || !input)
        return qc_fail(QC_EINVAL, "hard decision: no channel or law given");
    if (dimensions > 2)
        return qc_fail(QC_EINVAL, "hard decision: dimensions must be 1 or 2 (got %u)",
                       dimensions);
    qc_status st;
    if (labels && (st = qc_check_labels(input, dmc->nx, labels, nbits)) != QC_OK)
        return st;
    size_t *dec = qc_malloc_array(dmc->ny, sizeof *dec);
    if (!dec)
        return qc_fail(QC_ENOMEM, "out of memory");
    if ((st = qc_map_decisions(dmc, input, dec)) != QC_OK) {
        free(dec);
        return st;
    }
    double ser = 0.0, bit_errors = 0.0;
    for (size_t x = 0; x < dmc->nx; x++) {
        if (!(input[x] > 0.0))
            continue;
        const double *row = dmc->p + x * dmc->ny;
        for (size_t y = 0; y < dmc->ny; y++) {
            if (dec[y] == x)
                continue;
            double p = input[x] * row[y];
            ser += p;
            if (labels)
                bit_errors += p * popcount(labels[x] ^ labels[dec[y]]);
        }
    }
    free(dec);
    out->symbol_error_rate = dimensions == 2 ? ser * (2.0 - ser) : ser;
    if (labels) {
        out->pre_fec_ber = bit_errors / (double)nbits;
        out->q_factor_db = qc_q_factor_db(out->pre_fec_ber);
    }
    return QC_OK;
}
