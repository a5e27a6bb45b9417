/* test_ppm_design.c — qc_design with pulse-position modulation
 * (src/design/ppm_design.c): the noiseless erasure limit through the
 * whole design, the order of the rates (hard ≤ soft ≤ unquantized ≤
 * log2 M), the refinement of the thresholds for the symbol rate, M =
 * 4096, and the requests it refuses. */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <cmocka.h>

#include "test_helpers.h"

#include <math.h>

#include "quantcap.h"

#define TOL_RATE 1e-9   /* bits: the design's certified tolerance          */
#define TOL_ORDER 2e-9  /* bits: two brackets compared                    */

static qc_model *poisson(double ns, double nb)
{
    double p[2] = {ns, nb};
    qc_model *m = NULL;
    if (qc_model_alloc(&qc_model_poisson, p, &m) != QC_OK)
        fail_msg("poisson: %s", qc_last_error());
    return m;
}

static const double slot_levels[2] = {0.0, 1.0};

static void request(qc_design_request *req, const qc_model *m, size_t slots, size_t cells)
{
    qc_design_request_default(req);
    req->channel.model = m;
    req->channel.levels = slot_levels;
    req->channel.nlevels = 2;
    req->channel.ppm_slots = slots;
    req->quantizer.cells = cells;
}

/* Without background PPM is an M-ary erasure channel of capacity
 * (1 − e^{−n_s})·log2 M (from memory; derived in tests/capacity/
 * test_ppm.c); every receiver here reaches it: the quantized soft one,
 * the hard one (threshold 1 photon) and the unquantized reference. */
static void test_noiseless(void **state)
{
    (void)state;
    const double ns = 3.0;
    qc_model *m = poisson(ns, 0.0);
    qc_design_request req;
    request(&req, m, 256, 2);
    qc_design_result r;
    assert_int_equal(qc_design(&req, &r), QC_OK);
    double want = -expm1(-ns) * 8.0;
    assert_true(r.rate_bits <= want + TOL_RATE && r.upper_bound_bits >= want - TOL_RATE);
    assert_near(r.hard_rate_bits, want, 1e-12);
    assert_near(r.hard_threshold, 1.0, 0.0);
    assert_near(r.unquantized_bits, want, TOL_ORDER);
    assert_near(r.rate_per_slot_bits, r.rate_bits / 256.0, 1e-15);
    /* one pulse of n_s photons per symbol */
    assert_near(r.photons_per_symbol, ns, 1e-12);
    assert_near(r.bits_per_photon, r.rate_bits / ns, 1e-12);
    assert_int_equal(r.ppm_slots, 256);
    qc_design_result_clear(&r);
    qc_model_free(m);
}

/* With background: hard ≤ soft (1 bit: the soft receiver sees the same
 * firing pattern the hard one erases, at a threshold chosen for it) ≤
 * unquantized ≤ log2 M, and more bits never lose rate. */
static void test_order(void **state)
{
    (void)state;
    qc_model *m = poisson(6.0, 0.3);
    double prev = 0.0;
    for (size_t cells = 2; cells <= 16; cells *= 2) {
        qc_design_request req;
        request(&req, m, 64, cells);
        qc_design_result r;
        assert_int_equal(qc_design(&req, &r), QC_OK);
        assert_true(r.upper_bound_bits - r.rate_bits <= TOL_RATE);
        if (cells == 2)
            assert_true(r.hard_rate_bits <= r.upper_bound_bits + TOL_ORDER);
        assert_true(r.rate_bits <= r.unquantized_bits + TOL_ORDER);
        assert_true(r.unquantized_bits <= 6.0);
        assert_true(r.rate_bits >= prev - TOL_ORDER);
        prev = r.rate_bits;
        qc_design_result_clear(&r);
    }
    qc_model_free(m);
}

/* The optimal strategy refines the per-slot thresholds for the symbol
 * rate: never below the same thresholds evaluated as given. */
static void test_refinement(void **state)
{
    (void)state;
    qc_model *m = poisson(4.0, 0.5);
    qc_design_request req;
    request(&req, m, 32, 4);
    qc_design_result opt, fixed;
    assert_int_equal(qc_design(&req, &opt), QC_OK);
    /* the per-slot MI design alone, as fixed thresholds */
    qc_design_request slot = req;
    double law[2] = {31.0 / 32.0, 1.0 / 32.0};
    slot.channel.ppm_slots = 0;
    slot.input.probabilities = law;
    qc_design_result per_slot;
    assert_int_equal(qc_design(&slot, &per_slot), QC_OK);
    req.quantizer.kind = QC_QUANTIZER_FIXED;
    req.quantizer.thresholds = per_slot.thresholds;
    req.quantizer.nthresholds = per_slot.nthresholds;
    req.quantizer.cells = per_slot.nthresholds + 1;
    assert_int_equal(qc_design(&req, &fixed), QC_OK);
    assert_true(opt.rate_bits >= fixed.rate_bits - TOL_ORDER);
    qc_design_result_clear(&opt);
    qc_design_result_clear(&fixed);
    qc_design_result_clear(&per_slot);
    qc_model_free(m);
}

/* M = 4096 with background and 4 bits runs (the cost of the rate does
 * not grow with M; timing lives in tests/bench). */
static void test_large_m(void **state)
{
    (void)state;
    qc_model *m = poisson(30.0, 0.2);
    qc_design_request req;
    request(&req, m, 4096, 16);
    qc_design_result r;
    assert_int_equal(qc_design(&req, &r), QC_OK);
    assert_true(r.rate_bits > 11.0 && r.upper_bound_bits <= 12.0);
    assert_true(r.hard_rate_bits > 0.0 && r.hard_rate_bits <= r.unquantized_bits);
    qc_design_result_clear(&r);
    qc_model_free(m);
}

static void test_refused(void **state)
{
    (void)state;
    qc_design_result r;
    qc_design_request req;
    double sigma = 1.0;
    qc_model *g = NULL;
    assert_int_equal(qc_model_alloc(&qc_model_gauss, &sigma, &g), QC_OK);
    request(&req, g, 16, 4);
    assert_int_equal(qc_design(&req, &r), QC_EINVAL);
    assert_message("intensity model");
    qc_model_free(g);
    qc_model *m = poisson(4.0, 0.1);
    request(&req, m, 1, 4);
    assert_int_equal(qc_design(&req, &r), QC_EINVAL);
    assert_message("M must be from 2");
    request(&req, m, 16, 4);
    req.input.objective = QC_OBJECTIVE_GMI;
    assert_int_equal(qc_design(&req, &r), QC_EINVAL);
    assert_message("gmi");
    request(&req, m, 16, 4);
    double law[2] = {0.5, 0.5};
    req.input.probabilities = law;
    assert_int_equal(qc_design(&req, &r), QC_EINVAL);
    assert_message("uniform");
    request(&req, m, 16, 4);
    double three[3] = {0.0, 0.5, 1.0};
    req.channel.levels = three;
    req.channel.nlevels = 3;
    assert_int_equal(qc_design(&req, &r), QC_EINVAL);
    assert_message("2 levels per slot");
    request(&req, m, 16, 4);
    double down[2] = {1.0, 0.0};
    req.channel.levels = down;
    assert_int_equal(qc_design(&req, &r), QC_EINVAL);
    assert_message("must exceed the empty level");
    qc_model_free(m);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_noiseless), cmocka_unit_test(test_order),
        cmocka_unit_test(test_refinement), cmocka_unit_test(test_large_m),
        cmocka_unit_test(test_refused),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
