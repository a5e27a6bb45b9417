/* photon_common.h — shared by the photon-counting capacity tests: the
 * on-off slot channel of the `poisson` model and Wyner's capacity of the
 * continuous-time Poisson channel. */
#ifndef QC_TEST_PHOTON_COMMON_H
#define QC_TEST_PHOTON_COMMON_H

#include <math.h>

#include "quantcap.h"

/* On-off keying in a slot of length d with peak rate A and dark rate
 * s·A: levels 0 and 1 of `poisson` with signal A·d and background s·A·d,
 * ideal count output (thresholds 1..ncounts−1, last cell "≥ ncounts−1"). */
static inline qc_dmc *ook_slot_channel(double ad, double s, size_t ncounts)
{
    double p[QC_MODEL_MAX_PARAMS] = {ad, s * ad};
    qc_model *m;
    if (qc_model_alloc(&qc_model_poisson, p, &m) != QC_OK)
        return NULL;
    double levels[] = {0.0, 1.0}, t[64];
    for (size_t j = 0; j + 1 < ncounts && j < 64; j++)
        t[j] = (double)(j + 1);
    qc_dmc *d = NULL;
    qc_status st = qc_discretize(m, levels, 2, t, ncounts - 1, &d);
    qc_model_free(m);
    return st == QC_OK ? d : NULL;
}

/* Wyner, IEEE Trans. IT 34(6), 1988: with φ(u) = u ln u and q the
 * fraction of time "on", the rate per unit time (per unit A) is
 *   c(q) = q φ(1+s) + (1−q) φ(s) − φ(q+s),
 * maximized at q* + s = (1+s)^{1+s}/(e s^s) (setting c'(q) = 0:
 * φ(1+s) − φ(s) = 1 + ln(q+s)), and limited to q ≤ σ by an average
 * constraint. s → 0 gives q* = 1/e and c = 1/e (Kabanov 1978). */
static inline double wyner_capacity(double s, double sigma)
{
    double phi1 = (1 + s) * log(1 + s), phis = s > 0 ? s * log(s) : 0.0;
    double q = exp(phi1 - phis - 1.0) - s;
    if (q > sigma)
        q = sigma;
    return q * phi1 + (1 - q) * phis - (q + s) * log(q + s);
}

/* Z-channel capacity, 1 → 0 with probability p: log(1 + (1−p) p^{p/(1−p)}),
 * in nats (L. G. Tallini, S. Al-Bassam, B. Bose, "On the capacity and
 * codes for the Z-channel", Proc. IEEE Int. Symp. Information Theory
 * (ISIT), Lausanne, 2002, p. 422, where it is given in bits). */
static inline double z_capacity(double p)
{
    return log1p((1 - p) * pow(p, p / (1 - p)));
}

#endif
