/* test_ppm.c — the rates of pulse-position modulation (src/capacity/
 * ppm.c): the noiseless photon-counting closed form at M up to 2^20, the
 * hard receiver's closed form in its limits, the width of the certified
 * bracket, and the errors on bad input. The full symbol channel is
 * enumerated against these rates in check_ppm.py (scipy/numpy). */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <cmocka.h>

#include "test_helpers.h"

#include <math.h>

#include "quantcap.h"

#define TOL_BRACKET 1e-10 /* bits: the width asked of the bracket          */
#define TOL_ROUND 1e-12   /* bits: rounding allowed around the bracket     */
#define TOL_HARD 1e-13    /* bits: the hard closed form in its limits      */

static qc_ppm_bounds soft(const double *off, const double *on, size_t k, size_t m, double tol)
{
    qc_ppm_bounds b;
    qc_status st = qc_ppm_soft_rate(off, on, k, m, tol, &b);
    if (st != QC_OK)
        fail_msg("qc_ppm_soft_rate: %s", qc_last_error());
    return b;
}

/* Noiseless photon counting (no background, no dark counts): an empty
 * slot never counts, so a symbol whose pulsed slot counts at least one
 * photon is identified exactly, and one whose pulsed slot counts none
 * (probability e^{−n_s}, Poisson) looks like M empty slots and leaves
 * all M positions equally likely. The channel is an M-ary erasure
 * channel with erasure probability e^{−n_s}, whose capacity is
 * (1 − e^{−n_s})·log2 M, achieved by the uniform law (from memory; the
 * erasure channel's capacity is Cover & Thomas, Elements of Information
 * Theory, 2nd ed., §7.1.5). Any quantizer that separates count 0 from
 * the rest (one threshold at 1 photon) keeps all of it. */
static void test_noiseless_erasure(void **state)
{
    (void)state;
    const size_t ms[] = {2, 3, 16, 256, 4096, (size_t)1 << 20};
    for (size_t i = 0; i < sizeof ms / sizeof *ms; i++)
        for (double ns = 0.01; ns < 30.0; ns *= 3.1) {
            double off[2] = {1.0, 0.0}, on[2] = {exp(-ns), -expm1(-ns)};
            qc_ppm_bounds b = soft(off, on, 2, ms[i], TOL_BRACKET);
            double want = -expm1(-ns) * log2((double)ms[i]);
            assert_true(b.upper_bound_bits - b.rate_bits <= TOL_BRACKET);
            assert_true(b.rate_bits <= want + TOL_ROUND);
            assert_true(b.upper_bound_bits >= want - TOL_ROUND);
            /* the hard receiver loses nothing here: nothing fires falsely */
            qc_ppm_hard h;
            assert_int_equal(qc_ppm_hard_rate(-expm1(-ns), 0.0, ms[i], &h), QC_OK);
            assert_near(h.rate_bits, want, TOL_HARD * log2((double)ms[i]) + TOL_HARD);
            assert_near(h.erasure, exp(-ns), TOL_HARD);
        }
}

/* The same erasure channel seen through more cells: splitting the counts
 * ≥ 1 further cannot add anything, and a cell reached by pulses alone
 * costs nothing however many there are. */
static void test_noiseless_many_cells(void **state)
{
    (void)state;
    const double ns = 2.0;
    double off[5] = {1.0, 0.0, 0.0, 0.0, 0.0};
    double on[5] = {exp(-ns), 0.3, 0.3, 0.2, 0.0};
    on[4] = 1.0 - on[0] - on[1] - on[2] - on[3];
    qc_ppm_bounds b = soft(off, on, 5, 64, TOL_BRACKET);
    double want = -expm1(-ns) * 6.0;
    assert_true(b.rate_bits <= want + TOL_ROUND && b.upper_bound_bits >= want - TOL_ROUND);
}

/* Limits of the rate: identical rows carry nothing; rows that never meet
 * carry log2 M exactly; the bracket stays within [0, log2 M]. */
static void test_limits(void **state)
{
    (void)state;
    double same[3] = {0.2, 0.5, 0.3};
    qc_ppm_bounds b = soft(same, same, 3, 256, TOL_BRACKET);
    assert_true(b.rate_bits >= 0.0 && b.rate_bits <= TOL_BRACKET);
    double off[2] = {1.0, 0.0}, on[2] = {0.0, 1.0};
    b = soft(off, on, 2, 256, TOL_BRACKET);
    assert_near(b.rate_bits, 8.0, 0.0);
    assert_near(b.upper_bound_bits, 8.0, 0.0);
    /* background: strictly between, and the bracket as wide as asked */
    double off2[3] = {0.9, 0.09, 0.01}, on2[3] = {0.05, 0.15, 0.8};
    for (double tol = 1e-4; tol >= 1e-12; tol *= 0.01) {
        b = soft(off2, on2, 3, 1024, tol);
        assert_true(b.rate_bits > 0.0 && b.upper_bound_bits < 10.0);
        assert_true(b.upper_bound_bits - b.rate_bits <= tol);
    }
}

/* Hard receiver: M-ary symmetric channel with erasures. a = 1, b = 0 is
 * noiseless (log2 M); a = b carries nothing; M = 2 with a = 1 − b = 1 − p
 * and no erasure of a single firing slot reduces to P_c = (1 − p)²,
 * P_w = p² (direct count of the 4 firing patterns). */
static void test_hard(void **state)
{
    (void)state;
    qc_ppm_hard h;
    assert_int_equal(qc_ppm_hard_rate(1.0, 0.0, 1024, &h), QC_OK);
    assert_near(h.rate_bits, 10.0, TOL_HARD);
    assert_int_equal(qc_ppm_hard_rate(0.4, 0.4, 16, &h), QC_OK);
    assert_near(h.rate_bits, 0.0, TOL_HARD);
    const double p = 0.1;
    assert_int_equal(qc_ppm_hard_rate(1.0 - p, p, 2, &h), QC_OK);
    double pc = (1 - p) * (1 - p), pw = p * p, s = pc + pw;
    double want = pc * log2(2 * pc / s) + pw * log2(2 * pw / s);
    assert_near(h.rate_bits, want, TOL_HARD);
    assert_near(h.erasure, 2 * p * (1 - p), TOL_HARD);
    /* every empty slot fires: underflow is not an infinite rate */
    assert_int_equal(qc_ppm_hard_rate(1.0, 1.0 - 1e-6, 4096, &h), QC_OK);
    assert_true(isfinite(h.rate_bits) && h.rate_bits >= 0.0);
}

/* Rows with subnormal or nearly empty cells: ratios beyond doubles are
 * cells only a pulse reaches, and every bracket stays finite, inside
 * [0, log2 M] and as narrow as asked. The second case is computable by
 * hand: the pulse always lands in cell 2, each empty slot there with
 * probability 1/2, so the loss is E[log2(1 + B)], B ~ Binomial(M − 1,
 * 1/2); for M = 2 that is (1/2)·log2 2 = 1/2 bit and the rate 1/2 bit. */
static void test_extreme_rows(void **state)
{
    (void)state;
    const double rows[][4] = {
        {1e-320, 1.0, 1e-200, 1.0},
        {0.5, 0.5, 1e-300, 1.0},
        {1e-310, 1.0, 0.5, 0.5},
        {0.999999, 1e-6, 0.5, 0.5},
    };
    for (size_t i = 0; i < sizeof rows / sizeof *rows; i++)
        for (size_t m = 2; m <= ((size_t)1 << 16); m *= 16) {
            qc_ppm_bounds b = soft(rows[i], rows[i] + 2, 2, m, TOL_BRACKET);
            assert_true(isfinite(b.rate_bits) && isfinite(b.upper_bound_bits));
            assert_true(b.rate_bits >= 0.0 && b.upper_bound_bits <= log2((double)m));
            assert_true(b.upper_bound_bits - b.rate_bits <= TOL_BRACKET);
        }
    qc_ppm_bounds b = soft(rows[1], rows[1] + 2, 2, 2, TOL_BRACKET);
    assert_true(b.rate_bits <= 0.5 + TOL_ROUND && b.upper_bound_bits >= 0.5 - TOL_ROUND);
}

static void test_bad_input(void **state)
{
    (void)state;
    double off[2] = {0.5, 0.5}, on[2] = {0.1, 0.9}, neg[2] = {-0.1, 1.1},
           short_row[2] = {0.5, 0.4};
    qc_ppm_bounds b;
    assert_int_equal(qc_ppm_soft_rate(off, on, 2, 1, 1e-9, &b), QC_EINVAL);
    assert_message("at least 2 slots");
    assert_int_equal(qc_ppm_soft_rate(off, neg, 2, 4, 1e-9, &b), QC_EINVAL);
    assert_message("pulsed-slot cell 1");
    assert_int_equal(qc_ppm_soft_rate(short_row, on, 2, 4, 1e-9, &b), QC_EINVAL);
    assert_message("empty-slot row sums to");
    assert_int_equal(qc_ppm_soft_rate(off, on, 2, 4, 0.0, &b), QC_EINVAL);
    assert_message("tolerance");
    assert_true(isnan(b.rate_bits));
    qc_ppm_hard h;
    assert_int_equal(qc_ppm_hard_rate(1.5, 0.0, 4, &h), QC_EINVAL);
    assert_message("[0, 1]");
    assert_int_equal(qc_ppm_hard_rate(0.5, 0.0, 0, &h), QC_EINVAL);
    assert_message("at least 2 slots");
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_noiseless_erasure), cmocka_unit_test(test_noiseless_many_cells),
        cmocka_unit_test(test_limits),            cmocka_unit_test(test_hard),
        cmocka_unit_test(test_extreme_rows),      cmocka_unit_test(test_bad_input),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
