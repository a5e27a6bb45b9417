/* apd_gain.c — the law of the number of electrons leaving a uniformly
 * multiplying avalanche region when one electron is injected, with mean
 * gain M and ionization ratio k (McIntyre, "The distribution of gains in
 * uniformly multiplying avalanche photodiodes: theory", IEEE Trans.
 * Electron Devices 19(6), 703–713, 1972):
 *
 *   P(n) = (1−k) Γ(n/(1−k) + 1) / ( n! [1 + k(n−1)] Γ(nk/(1−k) + 1) )
 *          · [(1 + k(M−1))/M]^{(1 + k(n−1))/(1−k)}
 *          · [(1−k)(M−1)/M]^{n−1},          n = 1, 2, ...
 *
 * (form recalled from memory and verified: it sums to 1 with mean M and
 * variance M²(F − 1), F = kM + (1−k)(2 − 1/M), as tests/models/test_apd.c
 * checks). For k = 0 it is geometric, P(n) = (1/M)(1 − 1/M)^{n−1}. The
 * ratio P(n+1)/P(n) stays below its limit
 *   r = k^{−k/(1−k)} [(1 + k(M−1))/M]^{k/(1−k)} (M−1)/M,
 * so the tail after n is at most P(n)·r/(1 − r): the law is cut there. */
#include "core/internal.h"
#include "quantcap/model.h"
#include "models/apd_gain.h"

#include <math.h>
#include <stdlib.h>

#include <gsl/gsl_sf_gamma.h>

#define GAIN_TAIL 1e-17

static double log_pmf(double n, double gain, double k)
{
    if (k == 0.0)
        return -log(gain) + (n - 1.0) * log1p(-1.0 / gain);
    double u = 1.0 - k, e = (1.0 + k * (n - 1.0)) / u;
    return log(u) + gsl_sf_lngamma(n / u + 1.0) - gsl_sf_lngamma(n + 1.0) -
           log1p(k * (n - 1.0)) - gsl_sf_lngamma(n * k / u + 1.0) +
           e * log((1.0 + k * (gain - 1.0)) / gain) +
           (n - 1.0) * log(u * (gain - 1.0) / gain);
}

qc_status qc_apd_gain_pmf(double gain, double k, size_t max_len, double **g,
                          size_t *len)
{
    *g = NULL;
    *len = 0;
    if (!(gain >= 1.0) || !(k >= 0.0 && k < 1.0))
        return qc_fail(QC_EINVAL,
                       "the McIntyre gain law needs gain >= 1 and 0 <= k < 1 "
                       "(got gain %g, k %g)",
                       gain, k);
    if (gain == 1.0) { /* no multiplication */
        double *p = calloc(2, sizeof *p);
        if (!p)
            return qc_fail(QC_ENOMEM, "out of memory");
        p[1] = 1.0;
        *g = p;
        *len = 2;
        return QC_OK;
    }
    double u = 1.0 - k;
    double lr = log((gain - 1.0) / gain);
    if (k > 0.0)
        lr += -k / u * log(k) + k / u * log((1.0 + k * (gain - 1.0)) / gain);
    double r = exp(lr);
    double tail_factor = r / -expm1(lr); /* r / (1 − r) */
    size_t cap = 1024;
    double *p = malloc(cap * sizeof *p);
    if (!p)
        return qc_fail(QC_ENOMEM, "out of memory");
    p[0] = 0.0;
    size_t n = 1;
    double sum = 0.0;
    for (;; n++) {
        if (n >= max_len) {
            free(p);
            return qc_fail(QC_ENOMEM,
                           "gain law (gain %g, k %g) needs more than %zu points",
                           gain, k, max_len);
        }
        if (n >= cap) {
            double *q = realloc(p, 2 * cap * sizeof *p);
            if (!q) {
                free(p);
                return qc_fail(QC_ENOMEM, "out of memory");
            }
            p = q;
            cap *= 2;
        }
        p[n] = exp(log_pmf((double)n, gain, k));
        sum += p[n];
        if ((double)n >= gain && p[n] * tail_factor < GAIN_TAIL * sum)
            break;
    }
    for (size_t i = 1; i <= n; i++)
        p[i] /= sum;
    *g = p;
    *len = n + 1;
    return QC_OK;
}
