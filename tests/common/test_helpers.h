/* test_helpers.h — what the test programs share: comparisons of doubles
 * and of error messages, a repeatable random generator, random laws and
 * channel matrices, the photon-counting channels and their closed-form
 * capacities, and a JSON array writer for the dump programs of the scipy
 * cross-checks.
 *
 * Header only. The cmocka parts (assertions, helpers that assert) are
 * defined when cmocka.h was included first; the JSON part when jansson.h
 * was. A file that wants its own random sequence defines TEST_RNG_SEED
 * before including this header. */
#ifndef QC_TEST_HELPERS_H
#define QC_TEST_HELPERS_H

#include <math.h>
#include <stddef.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

#include "quantcap.h"

/* ---- repeatable random numbers ----------------------------------------
 * 64-bit linear congruential generator with the MMIX multiplier and
 * increment (D. E. Knuth, The Art of Computer Programming, vol. 2, 3rd ed.,
 * 1997, §3.3.4); the top 53 bits give a double strictly inside (0, 1), so
 * that log(u) is finite. */
#ifndef TEST_RNG_SEED
#define TEST_RNG_SEED 0x5eed0fca9ac17ULL
#endif

static uint64_t test_rng_state = TEST_RNG_SEED;

static inline double uniform01(void)
{
    test_rng_state = test_rng_state * 6364136223846793005ULL + 1442695040888963407ULL;
    return ((double)(test_rng_state >> 11) + 0.5) / 9007199254740992.0;
}

/* uniform on {0, ..., n−1}, n ≥ 1 */
static inline size_t uniform_index(size_t n)
{
    return (size_t)(uniform01() * (double)n) % n;
}

/* uniform on {lo, ..., hi}, lo ≤ hi */
static inline size_t uniform_between(size_t lo, size_t hi)
{
    return lo + uniform_index(hi - lo + 1);
}

/* A random probability law on n points: independent exponential weights
 * (a flat Dirichlet law), each set to 0 with probability zero_fraction;
 * if all are 0 one random point gets all the mass. */
static inline void random_law(double *p, size_t n, double zero_fraction)
{
    double s = 0.0;
    for (size_t i = 0; i < n; i++) {
        p[i] = uniform01() < zero_fraction ? 0.0 : -log(uniform01());
        s += p[i];
    }
    if (s == 0.0) {
        p[uniform_index(n)] = 1.0;
        s = 1.0;
    }
    for (size_t i = 0; i < n; i++)
        p[i] /= s;
}

/* ---- Wyner's and the Z-channel's capacities ----------------------------
 * Wyner, "Capacity and error exponent for the direct detection photon
 * channel", IEEE Trans. IT 34(6), 1988: with φ(u) = u ln u and q the
 * fraction of time "on", the rate per unit time (per unit A) is
 *   c(q) = q φ(1+s) + (1−q) φ(s) − φ(q+s),
 * maximized at q* + s = (1+s)^{1+s}/(e s^s) (setting c'(q) = 0:
 * φ(1+s) − φ(s) = 1 + ln(q+s)), and limited to q ≤ σ by an average
 * constraint. s → 0 gives q* = 1/e and c = 1/e (Kabanov 1978). In nats. */
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

/* On-off keying in a slot of length d with peak rate A and dark rate
 * s·A: levels 0 and 1 of `poisson` with signal A·d and background s·A·d,
 * ideal count output (thresholds 1..ncounts−1, last cell "≥ ncounts−1").
 * NULL on failure. */
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

/* ---- cmocka assertions and helpers that assert ------------------------ */
#ifdef CMOCKA_H_

/* |a − b| ≤ tol, printing both at full precision (cmocka's
 * assert_float_equal works in float). */
#define assert_near(a, b, tol)                                                  \
    do {                                                                        \
        double a_ = (a), b_ = (b), t_ = (tol);                                  \
        if (!(fabs(a_ - b_) <= t_))                                             \
            fail_msg("%s = %.17g, expected %.17g (tolerance %g)", #a, a_, b_,   \
                     t_);                                                       \
    } while (0)

/* the library's last error message contains `needle` */
#define assert_message(needle)                                                  \
    do {                                                                        \
        if (!strstr(qc_last_error(), (needle)))                                 \
            fail_msg("message '%s' lacks '%s'", qc_last_error(), (needle));     \
    } while (0)

/* An nx × ny channel matrix with the given rows. */
static inline qc_dmc *make_dmc(size_t nx, size_t ny, const double *p)
{
    qc_dmc *d;
    assert_int_equal(qc_dmc_alloc(nx, ny, &d), QC_OK);
    memcpy(d->p, p, nx * ny * sizeof *p);
    return d;
}

/* A random nx × ny channel: each row a random_law() with about
 * zero_fraction of its entries 0. */
static inline qc_dmc *random_dmc(size_t nx, size_t ny, double zero_fraction)
{
    qc_dmc *d;
    assert_int_equal(qc_dmc_alloc(nx, ny, &d), QC_OK);
    for (size_t x = 0; x < nx; x++)
        random_law(d->p + x * ny, ny, zero_fraction);
    return d;
}

/* Gaussian noise on a level grid of n candidates on [-1, 1] (written into
 * levels), quantized by the nt thresholds t. */
static inline qc_dmc *level_grid_channel(size_t n, double sigma, const double *t, size_t nt,
                                         double *levels)
{
    double p[1] = {sigma};
    qc_model *m = NULL;
    assert_int_equal(qc_model_alloc(&qc_model_gauss, p, &m), QC_OK);
    for (size_t i = 0; i < n; i++)
        levels[i] = -1.0 + 2.0 * (double)i / (double)(n - 1);
    qc_dmc *d = NULL;
    assert_int_equal(qc_discretize(m, levels, n, t, nt, &d), QC_OK);
    qc_model_free(m);
    return d;
}

#endif /* CMOCKA_H_ */

/* ---- JSON for the dump programs --------------------------------------- */
#ifdef JANSSON_H

/* v[0..n−1] as a JSON array of reals */
static inline json_t *array_of(const double *v, size_t n)
{
    json_t *a = json_array();
    for (size_t i = 0; i < n; i++)
        json_array_append_new(a, json_real(v[i]));
    return a;
}

#endif /* JANSSON_H */

#endif
