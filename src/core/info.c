/* info.c — entropy, divergence and mutual information of discrete laws,
 * in natural logarithms, with 0·log 0 = 0 (Cover & Thomas, ch. 2). */
#include "core/internal.h"

#include <math.h>
#include <stdlib.h>

double qc_entropy(const double *p, size_t n)
{
    double h = 0.0;
    for (size_t i = 0; i < n; i++)
        if (p[i] > 0.0)
            h -= p[i] * log(p[i]);
    return h;
}

double qc_binary_entropy(double p)
{
    double h = 0.0;
    if (p > 0.0 && p < 1.0)
        h = -p * log(p) - (1.0 - p) * log1p(-p);
    return h;
}

double qc_divergence(const double *p, const double *q, size_t n)
{
    double d = 0.0;
    for (size_t i = 0; i < n; i++) {
        if (p[i] <= 0.0)
            continue;
        if (q[i] <= 0.0)
            return INFINITY;
        d += p[i] * log(p[i] / q[i]);
    }
    return d;
}

void qc_output_law(const qc_dmc *dmc, const double *input, double *q)
{
    for (size_t y = 0; y < dmc->ny; y++)
        q[y] = 0.0;
    for (size_t x = 0; x < dmc->nx; x++) {
        if (input[x] <= 0.0)
            continue;
        const double *row = dmc->p + x * dmc->ny;
        for (size_t y = 0; y < dmc->ny; y++)
            q[y] += input[x] * row[y];
    }
}

qc_status qc_mutual_information(const qc_dmc *dmc, const double *input,
                                double *mi_nats)
{
    double s = 0.0;
    for (size_t x = 0; x < dmc->nx; x++) {
        if (!(input[x] >= 0.0) || !isfinite(input[x]))
            return qc_fail(QC_EINVAL, "input probability %zu is %g, expected >= 0",
                           x + 1, input[x]);
        s += input[x];
    }
    if (fabs(s - 1.0) > 1e-9)
        return qc_fail(QC_EINVAL, "input probabilities sum to %.17g, expected 1", s);
    double *q = qc_malloc_array(dmc->ny, sizeof *q);
    if (!q)
        return qc_fail(QC_ENOMEM, "out of memory");
    qc_output_law(dmc, input, q);
    /* A term whose every product input[x']·P(y|x') underflowed has q(y) = 0
     * while P(y|x) > 0 (a subnormal cell far out in a tail); its share of
     * the MI, input[x]·P(y|x)·log(P(y|x)/q(y)), is below the underflowed
     * input[x]·P(y|x) times log(1/input[x]) < 745, so it is left out
     * rather than read as an infinite divergence. */
    double mi = 0.0;
    for (size_t x = 0; x < dmc->nx; x++) {
        if (!(input[x] > 0.0))
            continue;
        const double *row = dmc->p + x * dmc->ny;
        double d = 0.0;
        for (size_t y = 0; y < dmc->ny; y++)
            if (row[y] > 0.0 && q[y] > 0.0)
                d += row[y] * log(row[y] / q[y]);
        mi += input[x] * d;
    }
    free(q);
    *mi_nats = mi > 0.0 ? mi : 0.0;
    return QC_OK;
}
