/* test_photon_capacity.c — the photon-counting channels of `poisson`
 * through the capacity engine (qc_capacity): Z-channel closed form and
 * Wyner's continuous-time limit, also under an average-power
 * (duty-cycle) constraint. */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <cmocka.h>

#include "test_helpers.h"

#include <math.h>

#include "quantcap.h"

#define TOL_ENGINE 1e-8 /* bits: engine tolerance plus margin     */
#define TOL_WYNER 0.01  /* relative, slot model at A·d = 0.01      */

static double capacity_nats(const qc_dmc *d, const double *costs, double budget)
{
    qc_ba_options opt;
    qc_ba_options_default(&opt);
    opt.tol_bits = 1e-10;
    opt.costs = costs;
    opt.budget = budget;
    qc_capacity_result res;
    qc_status st = qc_capacity(d, &opt, NULL, &res, NULL);
    if (st != QC_OK)
        fail_msg("qc_capacity: %s", qc_last_error());
    return res.capacity_bits / QC_LOG2E;
}

static void test_z_channel(void **state)
{
    (void)state;
    for (double ns = 0.05; ns < 10.0; ns *= 1.7) {
        qc_dmc *d = ook_slot_channel(ns, 0.0, 2);
        assert_non_null(d);
        /* Z channel, p = e^{−n_s} (Poisson: no count for a mean of n_s);
         * capacity as in test_helpers.h (Tallini, Al-Bassam, Bose, ISIT
         * 2002) */
        assert_near(capacity_nats(d, NULL, 0.0) * QC_LOG2E,
                            z_capacity(exp(-ns)) * QC_LOG2E, TOL_ENGINE);
        qc_dmc_free(d);
    }
}

static void test_wyner(void **state)
{
    (void)state;
    const double dark[] = {0.0, 0.1, 1.0};
    const double duty[] = {1.0, 0.1}; /* σ = 1: unconstrained */
    double costs[2] = {0.0, 1.0};
    for (size_t i = 0; i < 3; i++)
        for (size_t k = 0; k < 2; k++)
            for (double ad = 0.01; ad >= 0.0009; ad /= 10.0) {
                qc_dmc *d = ook_slot_channel(ad, dark[i], 8);
                double c = capacity_nats(d, duty[k] < 1.0 ? costs : NULL, duty[k]) / ad;
                /* Wyner, IEEE Trans. IT 34(6), 1988 (test_helpers.h) */
                double w = wyner_capacity(dark[i], duty[k]);
                assert_true(fabs(c / w - 1.0) < TOL_WYNER);
                qc_dmc_free(d);
            }
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_z_channel),
        cmocka_unit_test(test_wyner),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
