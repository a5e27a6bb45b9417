/* hard_decision.c — hard-decision error rates of a quantized channel:
 * each output cell decides the input with the largest joint probability
 * r(x)·P(y|x) (the maximum a posteriori rule on the input law; any
 * digital-communications textbook, e.g. Proakis, Digital Communications,
 * ch. 4), the symbol error rate of that rule and the bit error rate
 * through the inputs' bit labels. The error sums run over the wrong
 * decisions only, so small error rates keep their relative accuracy
 * (no 1 − P(correct)). Inputs whose joint probabilities in a cell lie
 * within TIE_REL of the largest, relatively, are tied: symmetric
 * receivers make exact ties (a cell midway between two points, a cell
 * holding several levels' whole mass), which rounding would break one
 * way or the other, and the bit error rate depends on the way. The
 * figures split ties evenly (MAP deciding among the tied inputs at
 * random), and qc_map_decisions names the lowest tied input. For square
 * QAM the channel is one quadrature:
 * P_s = 1 − (1 − P)² = P·(2 − P), BER per bit unchanged (Gray labels per
 * quadrature; Cho and Yoon, IEEE Trans. Commun. 50(7), 2002). */
#include "core/internal.h"
#include "quantcap/figures.h"

#include <math.h>
#include <stdlib.h>

#define TIE_REL 1e-14 /* joint probabilities this close to the largest tie */

/* top[y] = max_x r(x)·P(y|x), by rows. */
static void cell_tops(const qc_dmc *dmc, const double *input, double *top)
{
    for (size_t y = 0; y < dmc->ny; y++)
        top[y] = 0.0;
    for (size_t x = 0; x < dmc->nx; x++) {
        const double *row = dmc->p + x * dmc->ny;
        for (size_t y = 0; y < dmc->ny; y++)
            top[y] = fmax(top[y], input[x] * row[y]);
    }
}

/* Whether input x is among the MAP decisions of cell y (an empty cell
 * decides its first input). */
static int tied(const qc_dmc *dmc, const double *input, const double *top, size_t x,
                size_t y)
{
    if (!(top[y] > 0.0))
        return x == 0;
    return input[x] * dmc->p[x * dmc->ny + y] >= top[y] * (1.0 - TIE_REL);
}

qc_status qc_map_decisions(const qc_dmc *dmc, const double *input, size_t *decision)
{
    if (!dmc || !input || !decision)
        return qc_fail(QC_EINVAL, "hard decision: no channel, law or output array given");
    double *top = qc_malloc_array(dmc->ny, sizeof *top);
    if (!top)
        return qc_fail(QC_ENOMEM, "out of memory");
    cell_tops(dmc, input, top);
    for (size_t y = 0; y < dmc->ny; y++)
        decision[y] = dmc->nx;
    for (size_t x = 0; x < dmc->nx; x++)
        for (size_t y = 0; y < dmc->ny; y++)
            if (decision[y] == dmc->nx && tied(dmc, input, top, x, y))
                decision[y] = x;
    free(top);
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
    /* per cell the tied decisions (first[y] .. first[y + 1] in list),
     * each taken with probability 1/ties */
    const size_t nx = dmc->nx, ny = dmc->ny;
    double *top = qc_malloc_array(ny, sizeof *top);
    size_t *first = qc_calloc(ny + 1, sizeof *first), *list = NULL;
    size_t *at = qc_malloc_array(ny, sizeof *at); /* next free place of cell y */
    if (!top || !first || !at) {
        free(top), free(first), free(at);
        return qc_fail(QC_ENOMEM, "out of memory");
    }
    cell_tops(dmc, input, top);
    for (size_t x = 0; x < nx; x++)
        for (size_t y = 0; y < ny; y++)
            first[y + 1] += (size_t)tied(dmc, input, top, x, y);
    for (size_t y = 0; y < ny; y++)
        first[y + 1] += first[y];
    if (!(list = qc_malloc_array(first[ny], sizeof *list))) {
        free(top), free(first), free(at);
        return qc_fail(QC_ENOMEM, "out of memory");
    }
    for (size_t y = 0; y < ny; y++)
        at[y] = first[y];
    for (size_t x = 0; x < nx; x++) /* by rows: each cell's list increasing */
        for (size_t y = 0; y < ny; y++)
            if (tied(dmc, input, top, x, y))
                list[at[y]++] = x;
    double ser = 0.0, bit_errors = 0.0;
    for (size_t x = 0; x < nx; x++) {
        const double *row = dmc->p + x * ny;
        for (size_t y = 0; y < ny; y++) {
            double p = input[x] * row[y];
            if (!(p > 0.0))
                continue;
            const size_t *d = list + first[y], ties = first[y + 1] - first[y];
            double wrong = 0.0, bits = 0.0;
            for (size_t k = 0; k < ties; k++)
                if (d[k] != x) {
                    wrong += 1.0;
                    if (labels)
                        bits += popcount(labels[x] ^ labels[d[k]]);
                }
            ser += p * wrong / (double)ties;
            bit_errors += p * bits / (double)ties;
        }
    }
    free(top), free(first), free(at), free(list);
    out->symbol_error_rate = dimensions == 2 ? ser * (2.0 - ser) : ser;
    if (labels) {
        out->pre_fec_ber = bit_errors / (double)nbits;
        out->q_factor_db = qc_q_factor_db(out->pre_fec_ber);
    }
    return QC_OK;
}
