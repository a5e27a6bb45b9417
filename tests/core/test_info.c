/* test_info.c — entropy, divergence, output law and mutual information
 * (src/core/info.c) against textbook identities and closed forms. */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <cmocka.h>

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "quantcap.h"

#define TEST_RNG_SEED 0x1234abcdULL /* random laws and channels below */
#include "test_helpers.h"

#define TOL_TIGHT 1e-13 /* sums of a few logs in double precision */
#define TOL_SUM 1e-12   /* identities over sums of ~100 terms */
#define TOL_ASYMPTOTIC 1e-12  /* relative: a small-argument expansion */

static void assert_close(double got, double want, double tol, const char *what)
{
    if (!(fabs(got - want) <= tol))
        fail_msg("%s: got %.17g, want %.17g (tol %g)", what, got, want, tol);
}

static void test_entropy(void **state)
{
    (void)state;
    double u[8];
    for (size_t n = 1; n <= 8; n++) {
        for (size_t i = 0; i < n; i++)
            u[i] = 1.0 / (double)n;
        /* uniform law: H = log n (Cover & Thomas, Elements of
         * Information Theory, 2nd ed., Thm 2.6.4) */
        assert_close(qc_entropy(u, n), log((double)n), TOL_TIGHT, "H(uniform)");
    }
    /* 0·log 0 = 0 (Cover & Thomas, ch. 2 convention) */
    const double half_zero[3] = {0.5, 0.0, 0.5};
    assert_close(qc_entropy(half_zero, 3), log(2.0), TOL_TIGHT, "H(1/2,0,1/2)");
    const double point[3] = {0.0, 1.0, 0.0};
    assert_true(qc_entropy(point, 3) == 0.0);
    /* H(1/2, 1/4, 1/4) = ½·1 + 2·¼·2 = 1.5 bits (hand computation) */
    const double ex[3] = {0.5, 0.25, 0.25};
    assert_close(qc_entropy(ex, 3) * QC_LOG2E, 1.5, TOL_TIGHT, "H(1/2,1/4,1/4)");
}

static void test_binary_entropy(void **state)
{
    (void)state;
    /* h(1/2) = 1 bit, h(0) = h(1) = 0: h(p) = −p·log2 p − (1−p)·log2(1−p)
     * with 0·log 0 = 0 (C. E. Shannon, "A mathematical theory of
     * communication", Bell Syst. Tech. J. 27, 1948) */
    assert_close(qc_binary_entropy(0.5) * QC_LOG2E, 1.0, TOL_TIGHT, "h(1/2)");
    assert_true(qc_binary_entropy(0.0) == 0.0);
    assert_true(qc_binary_entropy(1.0) == 0.0);
    /* agrees with the general entropy of (p, 1 − p) */
    for (int k = 1; k < 100; k++) {
        double p = k / 100.0, pq[2] = {p, 1.0 - p};
        assert_close(qc_binary_entropy(p), qc_entropy(pq, 2), TOL_TIGHT, "h(p)");
    }
    /* far tail: finite, positive, ≈ p·(log(1/p) + 1) (Taylor series of
     * −(1 − p) log(1 − p), common practice) */
    double p = 1e-300, h = qc_binary_entropy(p);
    assert_true(isfinite(h) && h > 0.0);
    assert_close(h / (p * (-log(p) + 1.0)), 1.0, TOL_ASYMPTOTIC, "h(1e-300)");
}

static void test_divergence(void **state)
{
    (void)state;
    const double p[3] = {0.2, 0.3, 0.5};
    assert_true(qc_divergence(p, p, 3) == 0.0);
    /* D((1,0) ‖ (1/2,1/2)) = 1·log(1/(1/2)) = log 2 (the definition,
     * Cover & Thomas §2.3) */
    const double a[2] = {1.0, 0.0}, b[2] = {0.5, 0.5};
    assert_close(qc_divergence(a, b, 2), log(2.0), TOL_TIGHT, "D(a||b)");
    /* p > 0 where q = 0: infinite; p = 0 where q = 0: no contribution */
    const double q0[3] = {0.5, 0.5, 0.0};
    assert_true(isinf(qc_divergence(p, q0, 3)));
    const double p0[3] = {0.5, 0.5, 0.0};
    assert_true(qc_divergence(p0, q0, 3) == 0.0);
    /* Information inequality D ≥ 0 (Cover & Thomas, Thm 2.6.3), and
     * D(p ‖ u) = log n − H(p) for the uniform u (ibid., Thm 2.6.4 proof) */
    double x[7], y[7], u[7];
    for (int t = 0; t < 200; t++) {
        random_law(x, 7, 0.3);
        random_law(y, 7, 0.0);
        assert_true(qc_divergence(x, y, 7) >= 0.0);
        for (int i = 0; i < 7; i++)
            u[i] = 1.0 / 7.0;
        assert_close(qc_divergence(x, u, 7), log(7.0) - qc_entropy(x, 7),
                     TOL_SUM, "D(p||u)");
    }
}

static qc_dmc *bsc(double e)
{
    qc_dmc *d;
    assert_int_equal(qc_dmc_alloc(2, 2, &d), QC_OK);
    d->p[0] = 1.0 - e;
    d->p[1] = e;
    d->p[2] = e;
    d->p[3] = 1.0 - e;
    return d;
}

static void test_output_law_and_mi(void **state)
{
    (void)state;
    qc_dmc *d = bsc(0.11);
    const double r[2] = {0.3, 0.7};
    double q[2], mi;
    qc_output_law(d, r, q);
    assert_close(q[0], 0.3 * 0.89 + 0.7 * 0.11, TOL_TIGHT, "q0");
    assert_close(q[1], 0.3 * 0.11 + 0.7 * 0.89, TOL_TIGHT, "q1");
    /* BSC with uniform input: I = log 2 − h(e) (Cover & Thomas, §7.1.4) */
    const double uni[2] = {0.5, 0.5};
    assert_int_equal(qc_mutual_information(d, uni, &mi), QC_OK);
    assert_close(mi, log(2.0) - qc_binary_entropy(0.11), TOL_TIGHT, "I(BSC)");
    /* a point mass carries nothing */
    const double pt[2] = {1.0, 0.0};
    assert_int_equal(qc_mutual_information(d, pt, &mi), QC_OK);
    assert_true(mi == 0.0);
    qc_dmc_free(d);
}

/* I = H(Y) − H(Y|X) (Cover & Thomas, Thm 2.4.1), 0 ≤ I ≤ min(H(X), H(Y))
 * (ibid., Thm 2.6.3 and 2.4.1), on random channels with zeros. */
static void test_mi_identities(void **state)
{
    (void)state;
    for (int t = 0; t < 60; t++) {
        size_t nx = 1 + (size_t)(uniform01() * 9), ny = 1 + (size_t)(uniform01() * 12);
        qc_dmc *d;
        assert_int_equal(qc_dmc_alloc(nx, ny, &d), QC_OK);
        for (size_t x = 0; x < nx; x++)
            random_law(d->p + x * ny, ny, 0.4);
        double r[10], q[13], mi;
        random_law(r, nx, 0.2);
        assert_int_equal(qc_mutual_information(d, r, &mi), QC_OK);
        qc_output_law(d, r, q);
        double h_cond = 0.0;
        for (size_t x = 0; x < nx; x++)
            h_cond += r[x] * qc_entropy(d->p + x * ny, ny);
        double hy = qc_entropy(q, ny), hx = qc_entropy(r, nx);
        assert_close(mi, hy - h_cond, TOL_SUM, "I = H(Y) - H(Y|X)");
        assert_true(mi >= 0.0);
        assert_true(mi <= hx + TOL_SUM && mi <= hy + TOL_SUM);
        qc_dmc_free(d);
    }
}

/* A cell far out in a tail can hold a subnormal probability whose every
 * weighted share of the output law underflows to 0: two equiprobable
 * inputs, each on its own cell, the first also with 4.9e-324 (the least
 * subnormal; 0.5 times it rounds to 0) on a third cell. The MI is that of
 * the noiseless channel, H(X) = log 2 (I = H(X) − H(X|Y) with H(X|Y) = 0
 * when the output determines the input: Cover & Thomas, Thm 2.4.1), not
 * an infinite divergence. */
static void test_mi_underflowed_output(void **state)
{
    (void)state;
    qc_dmc *d;
    assert_int_equal(qc_dmc_alloc(2, 3, &d), QC_OK);
    const double tiny = nextafter(0.0, 1.0);
    const double rows[6] = {1.0, 0.0, tiny, 0.0, 1.0, 0.0};
    memcpy(d->p, rows, sizeof rows);
    const double uni[2] = {0.5, 0.5};
    double q[3], mi;
    qc_output_law(d, uni, q);
    assert_true(q[2] == 0.0); /* the case itself: the output law underflowed */
    assert_int_equal(qc_mutual_information(d, uni, &mi), QC_OK);
    assert_close(mi, log(2.0), TOL_TIGHT, "I with an underflowed output cell");
    qc_dmc_free(d);
}

static void test_mi_errors(void **state)
{
    (void)state;
    qc_dmc *d = bsc(0.1);
    double mi;
    const double neg[2] = {1.5, -0.5};
    assert_int_equal(qc_mutual_information(d, neg, &mi), QC_EINVAL);
    assert_non_null(strstr(qc_last_error(), "input probability 2 is -0.5"));
    const double short_sum[2] = {0.5, 0.4};
    assert_int_equal(qc_mutual_information(d, short_sum, &mi), QC_EINVAL);
    assert_non_null(strstr(qc_last_error(), "sum to 0.9"));
    const double nan_in[2] = {NAN, 1.0};
    assert_int_equal(qc_mutual_information(d, nan_in, &mi), QC_EINVAL);
    assert_non_null(strstr(qc_last_error(), "input probability 1"));
    qc_dmc_free(d);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_entropy),
        cmocka_unit_test(test_binary_entropy),
        cmocka_unit_test(test_divergence),
        cmocka_unit_test(test_output_law_and_mi),
        cmocka_unit_test(test_mi_identities),
        cmocka_unit_test(test_mi_underflowed_output),
        cmocka_unit_test(test_mi_errors),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
