/* test_photon.c — photon counting with the `poisson` model: capacities
 * of the discretized on-off channel against closed forms. The capacity of
 * these two-input channels is found here by maximizing I(r) over the
 * input law with GSL's Brent minimizer (I is concave in r), independently
 * of the Blahut–Arimoto engine (test_photon_capacity.c does the same
 * with the engine). */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <cmocka.h>

#include "test_helpers.h"

#include <math.h>

#include <gsl/gsl_errno.h>
#include <gsl/gsl_min.h>

#include "quantcap.h"

#define TOL_CAP 1e-10  /* capacity by 1-D maximization, nats         */
#define TOL_WYNER 0.01 /* relative, slot model vs Wyner at A·d = 0.01 */
#define TOL_Z_BITS 1e-9   /* bits: Z-channel capacity by 1-D maximization */
#define TOL_ULP 1e-15     /* one rounding of a closed form of order 1 */
#define TOL_S_SMALL 1e-9  /* nats: s = 1e-12 against the s → 0 limit */

static double neg_mi(double r, void *p)
{
    const qc_dmc *d = p;
    double in[2] = {1.0 - r, r}, mi;
    if (qc_mutual_information(d, in, &mi) != QC_OK)
        return INFINITY;
    return -mi;
}

/* max over r of I(r) for a 2-input channel, nats. */
static double capacity2(const qc_dmc *d)
{
    gsl_set_error_handler_off();
    gsl_min_fminimizer *s = gsl_min_fminimizer_alloc(gsl_min_fminimizer_brent);
    gsl_function f = {neg_mi, (void *)d};
    /* a start inside the bracket lower than both ends */
    double best = 0.5, fb = neg_mi(0.5, (void *)d);
    for (double r = 0.01; r < 1.0; r += 0.01)
        if (neg_mi(r, (void *)d) < fb) {
            fb = neg_mi(r, (void *)d);
            best = r;
        }
    assert_int_equal(gsl_min_fminimizer_set(s, &f, best, 1e-9, 1.0 - 1e-9), 0);
    for (int it = 0; it < 200; it++) {
        gsl_min_fminimizer_iterate(s);
        double a = gsl_min_fminimizer_x_lower(s), b = gsl_min_fminimizer_x_upper(s);
        if (gsl_min_test_interval(a, b, 1e-12, 0.0) == GSL_SUCCESS)
            break;
    }
    double c = -gsl_min_fminimizer_f_minimum(s);
    gsl_min_fminimizer_free(s);
    return c;
}

/* OOK, no background, threshold 1: Z channel with p = e^{−n_s}. */
static void test_z_channel_capacity(void **state)
{
    (void)state;
    for (double ns = 0.05; ns < 10.0; ns *= 1.7) {
        qc_dmc *d = ook_slot_channel(ns, 0.0, 2);
        assert_non_null(d);
        assert_near(capacity2(d), z_capacity(exp(-ns)), TOL_CAP);
        qc_dmc_free(d);
    }
    /* p = 0.5 → log2(1 + ½·½) = log2(5/4) = 0.321928... bits (the Z-channel
     * capacity of test_helpers.h) */
    qc_dmc *d = ook_slot_channel(log(2.0), 0.0, 2);
    assert_near(capacity2(d) * QC_LOG2E, 0.321928094887362, TOL_Z_BITS);
    qc_dmc_free(d);
}

/* Slot capacity / d → A·c_Wyner(s) as A·d → 0, with ideal counting. */
static void test_wyner_limit(void **state)
{
    (void)state;
    const double dark[] = {0.0, 0.1, 1.0};
    for (size_t i = 0; i < 3; i++) {
        double s = dark[i], prev_err = INFINITY;
        for (double ad = 0.01; ad >= 0.0009; ad /= 10.0) {
            qc_dmc *d = ook_slot_channel(ad, s, 8);
            assert_non_null(d);
            double per_time = capacity2(d) / ad; /* per unit A·time */
            double err = fabs(per_time / wyner_capacity(s, 1.0) - 1.0);
            assert_true(err < TOL_WYNER);
            assert_true(err < prev_err); /* converges as the slot shrinks */
            prev_err = err;
            qc_dmc_free(d);
        }
    }
    /* s → 0: 1/e (Kabanov 1978; Davis 1980) */
    assert_near(wyner_capacity(0.0, 1.0), exp(-1.0), TOL_ULP);
    assert_near(wyner_capacity(1e-12, 1.0), exp(-1.0), TOL_S_SMALL);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_z_channel_capacity),
        cmocka_unit_test(test_wyner_limit),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
