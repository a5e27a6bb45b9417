/* dispersion.c — the rates practitioners quote besides capacity: the
 * channel dispersion V (variance of the information density) and the
 * normal approximation of the best rate at blocklength n and block error
 * probability ε (Polyanskiy, Poor, Verdú, "Channel coding rate in the
 * finite blocklength regime", IEEE Trans. IT 56(5), 2010), and the gap in
 * dB to the Shannon curve ½·log2(1 + snr) (Shannon 1948) at equal rate. */
#include "core/internal.h"

#include <math.h>
#include <stdlib.h>

#include <gsl/gsl_cdf.h>
#include <gsl/gsl_math.h> /* M_LN2 */

#define LAW_TOL 1e-9

/* Row x's share of pass 0 (Σ_y P i, i the information density) or pass 1
 * (Σ_y P (i − mean)²), its terms added in the order of the outputs. */
static double row_share(const qc_dmc *dmc, const double *logq, size_t x, int pass,
                        double mean)
{
    const double *row = dmc->p + x * dmc->ny;
    double acc = 0.0;
    for (size_t y = 0; y < dmc->ny; y++) {
        /* 0·log 0 = 0; q(y) ≥ r(x)P(y|x), which underflows to 0 only when
         * the term r(x)·P(y|x)·i is below every double */
        if (!(row[y] > 0.0) || !(logq[y] > -INFINITY))
            continue;
        double i = log(row[y]) - logq[y];
        acc += pass == 0 ? row[y] * i : row[y] * (i - mean) * (i - mean);
    }
    return acc;
}

qc_status qc_dispersion(const qc_dmc *dmc, const double *input, double *mi_nats,
                        double *v_nats2)
{
    if (!dmc || !input)
        return qc_fail(QC_EINVAL, "dispersion: no channel or law given");
    double s = 0.0;
    for (size_t x = 0; x < dmc->nx; x++) {
        if (!(input[x] >= 0.0) || !isfinite(input[x]))
            return qc_fail(QC_EINVAL, "input probability %zu is %g, expected >= 0", x + 1,
                           input[x]);
        s += input[x];
    }
    if (fabs(s - 1.0) > LAW_TOL)
        return qc_fail(QC_EINVAL, "input probabilities sum to %.17g, expected 1", s);
    double *logq = qc_malloc_array(dmc->ny, sizeof *logq);
    double *share = qc_malloc_array(dmc->nx, sizeof *share);
    if (!logq || !share) {
        free(logq);
        free(share);
        return qc_fail(QC_ENOMEM, "out of memory");
    }
    qc_output_law(dmc, input, logq);
    for (size_t y = 0; y < dmc->ny; y++)
        logq[y] = logq[y] > 0.0 ? log(logq[y]) : -INFINITY;
    /* two passes: the mean I, then the variance about it; the rows' shares
     * (in OpenMP threads for a large channel), then their sum in the order
     * of the inputs, in this thread */
    const int threads = qc_parallel_worth(dmc->nx * dmc->ny);
    double mean = 0.0, var = 0.0;
    for (int pass = 0; pass < 2; pass++) {
        if (threads) {
#pragma omp parallel for schedule(dynamic, 16)
            for (size_t x = 0; x < dmc->nx; x++)
                share[x] = input[x] > 0.0 ? row_share(dmc, logq, x, pass, mean) : 0.0;
        } else {
            for (size_t x = 0; x < dmc->nx; x++)
                share[x] = input[x] > 0.0 ? row_share(dmc, logq, x, pass, mean) : 0.0;
        }
        for (size_t x = 0; x < dmc->nx; x++) {
            if (!(input[x] > 0.0))
                continue;
            if (pass == 0)
                mean += input[x] * share[x];
            else
                var += input[x] * share[x];
        }
    }
    free(logq);
    free(share);
    if (!isfinite(mean) || !isfinite(var))
        return qc_fail(QC_ENUMERIC, "dispersion: information density is not finite");
    if (mi_nats)
        *mi_nats = mean > 0.0 ? mean : 0.0;
    if (v_nats2)
        *v_nats2 = var > 0.0 ? var : 0.0;
    return QC_OK;
}

qc_status qc_normal_approximation(double rate_bits, double v_bits2, size_t n, double epsilon,
                                  double *rate_out_bits)
{
    if (n == 0)
        return qc_fail(QC_EINVAL, "blocklength must be a positive whole number (got 0)");
    if (!(epsilon > 0.0 && epsilon < 1.0))
        return qc_fail(QC_EINVAL, "error-rate must lie strictly between 0 and 1 (got %g)",
                       epsilon);
    if (!isfinite(rate_bits) || !(v_bits2 >= 0.0) || !isfinite(v_bits2))
        return qc_fail(QC_EINVAL, "normal approximation: rate %g or dispersion %g is not "
                                  "a finite value",
                       rate_bits, v_bits2);
    double nd = (double)n;
    *rate_out_bits = rate_bits - sqrt(v_bits2 / nd) * gsl_cdf_ugaussian_Qinv(epsilon) +
                     log2(nd) / (2.0 * nd);
    return QC_OK;
}

double qc_shaping_gap_db(double snr_db, double rate_bits)
{
    if (!isfinite(snr_db) || !(rate_bits > 0.0) || !isfinite(rate_bits))
        return NAN;
    /* ½·log2(1 + s) = R  ⇔  s = 2^(2R) − 1 */
    double needed = expm1(2.0 * rate_bits * M_LN2);
    return snr_db - 10.0 * log10(needed);
}
