/* gmi.c — the bit-metric generalized mutual information of bit-
 * interleaved coded modulation on a discrete channel (Caire, Taricco,
 * Biglieri, IEEE Trans. IT 44(3), 1998; shown to be the GMI of the
 * bit-metric decoder by Martinez, Guillén i Fàbregas, Caire, Willems,
 * IEEE Trans. IT 55(6), 2009): GMI = Σ_b I(B_b; Y) for independent
 * uniform bits. For a general law the bit-metric decoding rate
 * [H(X) − Σ_b H(B_b|Y)]⁺ (Böcherer, "Achievable rates for shaped
 * bit-metric decoding", arXiv 1410.8075, ISIT 2014) is used: it equals
 * the sum above when the bits are independent and never exceeds I(X;Y),
 * since Σ_b H(B_b|Y) ≥ H(X|Y). */
#include "core/internal.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#define MAX_LABEL_BITS 30
#define LAW_TOL 1e-9

static int by_size(const void *a, const void *b)
{
    size_t x = *(const size_t *)a, y = *(const size_t *)b;
    return (x > y) - (x < y);
}

/* Labels fit in nbits and are distinct among inputs with r(x) > 0; the
 * law sums to 1. */
qc_status qc_check_labels(const double *input, size_t nx, const size_t *labels,
                              unsigned nbits)
{
    if (nbits < 1 || nbits > MAX_LABEL_BITS)
        return qc_fail(QC_EINVAL, "label bits must be from 1 to %d (got %u)",
                       MAX_LABEL_BITS, nbits);
    double s = 0.0;
    size_t *used = qc_malloc_array(nx, sizeof *used), nu = 0;
    if (!used)
        return qc_fail(QC_ENOMEM, "out of memory");
    qc_status st = QC_OK;
    for (size_t x = 0; x < nx && st == QC_OK; x++) {
        if (!(input[x] >= 0.0) || !isfinite(input[x]))
            st = qc_fail(QC_EINVAL, "input probability %zu is %g, expected >= 0", x + 1,
                         input[x]);
        else if (labels[x] >> nbits)
            st = qc_fail(QC_EINVAL, "label %zu (%zu) does not fit in %u bits", x + 1,
                         labels[x], nbits);
        s += input[x];
        if (input[x] > 0.0)
            used[nu++] = labels[x];
    }
    if (st == QC_OK && fabs(s - 1.0) > LAW_TOL)
        st = qc_fail(QC_EINVAL, "input probabilities sum to %.17g, expected 1", s);
    if (st == QC_OK) {
        qsort(used, nu, sizeof *used, by_size);
        for (size_t k = 1; k < nu; k++)
            if (used[k] == used[k - 1]) {
                st = qc_fail(QC_EINVAL, "label %zu is given to two inputs in use",
                             used[k]);
                break;
            }
    }
    free(used);
    return st;
}

double qc_log1p_ratio(double a, double b)
{
    const double r = a / b;
    return isfinite(r) ? log1p(r) : log(a) - log(b);
}

/* Σ_v p_v log(1 + p_v̄/p_v) for the joint masses of the two bit values at
 * one output: that output's share of H(B|Y), accurate when one value
 * dominates. */
double qc_bit_term(double p0, double p1)
{
    double h = 0.0;
    if (p0 > 0.0)
        h += p0 * qc_log1p_ratio(p1, p0);
    if (p1 > 0.0)
        h += p1 * qc_log1p_ratio(p0, p1);
    return h;
}

#define GMI_BLOCK 64 /* outputs whose bit masses are gathered in one pass */

/* The terms H(B_b|Y = y) of the outputs y0 .. y0 + ny − 1 into
 * terms[(y − y0)·nbits + b]; joint: scratch of ny × 2·nbits. The rows are
 * read in the order they are stored, and every output's masses add the
 * inputs in order. */
static void bit_terms(const qc_dmc *dmc, const double *input, const size_t *labels,
                      unsigned nbits, size_t y0, size_t ny, double *joint, double *terms)
{
    const size_t per_y = 2 * (size_t)nbits; /* joint masses of one output */
    memset(joint, 0, ny * per_y * sizeof *joint);
    for (size_t x = 0; x < dmc->nx; x++) {
        const double *row = dmc->p + x * dmc->ny + y0;
        for (size_t y = 0; y < ny; y++) {
            double p = input[x] * row[y];
            if (!(p > 0.0))
                continue;
            for (unsigned b = 0; b < nbits; b++)
                joint[y * per_y + 2 * b + ((labels[x] >> b) & 1)] += p;
        }
    }
    for (size_t y = 0; y < ny; y++)
        for (unsigned b = 0; b < nbits; b++)
            terms[y * nbits + b] =
                qc_bit_term(joint[y * per_y + 2 * b], joint[y * per_y + 2 * b + 1]);
}

/* Outputs in the block that starts at y0. */
static size_t block_outputs(const qc_dmc *dmc, size_t y0)
{
    return dmc->ny - y0 < GMI_BLOCK ? dmc->ny - y0 : GMI_BLOCK;
}

qc_status qc_gmi(const qc_dmc *dmc, const double *input, const size_t *labels,
                 unsigned nbits, double *gmi_nats)
{
    qc_status st = qc_check_labels(input, dmc->nx, labels, nbits);
    if (st != QC_OK)
        return st;
    const size_t blocks = (dmc->ny + GMI_BLOCK - 1) / GMI_BLOCK;
    const int threads = qc_parallel_worth(dmc->nx * dmc->ny);
    /* the terms of every output (blocks of outputs shared among OpenMP
     * threads for a large channel, each with its own masses), then their
     * sum in the order of the outputs and bits, in this thread */
    double *terms = qc_malloc_array(dmc->ny * (size_t)nbits, sizeof *terms);
    const size_t block_joint = GMI_BLOCK * 2 * (size_t)nbits; /* one block's masses */
    double *joint = qc_malloc_array((threads ? blocks : 1) * block_joint, sizeof *joint);
    if (!terms || !joint) {
        free(terms);
        free(joint);
        return qc_fail(QC_ENOMEM, "out of memory");
    }
    if (threads) {
#pragma omp parallel for schedule(dynamic)
        for (size_t k = 0; k < blocks; k++) {
            const size_t y0 = k * GMI_BLOCK;
            bit_terms(dmc, input, labels, nbits, y0, block_outputs(dmc, y0),
                      joint + k * block_joint, terms + y0 * nbits);
        }
    } else {
        for (size_t y0 = 0; y0 < dmc->ny; y0 += GMI_BLOCK)
            bit_terms(dmc, input, labels, nbits, y0, block_outputs(dmc, y0), joint,
                      terms + y0 * nbits);
    }
    double hx = qc_entropy(input, dmc->nx), hb = 0.0;
    for (size_t i = 0; i < dmc->ny * (size_t)nbits; i++)
        hb += terms[i];
    free(terms);
    free(joint);
    double g = hx - hb;
    *gmi_nats = g > 0.0 ? g : 0.0;
    return QC_OK;
}

/* ---- unquantized output ------------------------------------------- */
