/* test_iq_mirror.c — the I/Q pair's thresholds made exactly symmetric
 * where the constellation is its own mirror image across an axis
 * (src/design/iq_mirror.c): snapped when they mirror to within 1e-9 of
 * their gap, left alone when they do not, per axis (three points on a
 * circle mirror across the in-phase axis only), for the GMI only when the
 * labels follow the mirror up to one bit flip, and shared thresholds only
 * when both axes mirror alike. */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <cmocka.h>

#include <math.h>
#include <string.h>

#include "design/design_internal.h"
#include "quantcap.h"

/* t exactly antisymmetric about 0: t_k = −t_{n−1−k}, the middle one 0. */
static void expect_symmetric(const double *t, size_t n)
{
    for (size_t k = 0; k < n; k++)
        if (t[k] != -t[n - 1 - k])
            fail_msg("threshold %zu: %.17g against %.17g", k, t[k], t[n - 1 - k]);
}

/* Thresholds about 0 of gap 1, each moved by up to off. */
static void near_symmetric(double *t, size_t n, double off)
{
    for (size_t k = 0; k < n; k++)
        t[k] = (double)k - 0.5 * (double)(n - 1) + off * sin(1.0 + 3.0 * (double)k);
}

static void test_square_qam(void **state)
{
    (void)state;
    qc_plane *c;
    assert_int_equal(qc_plane_parse("qam:16", &c), QC_OK);
    double ti[7], tq[7], keep[7];
    for (int gmi = 0; gmi <= 1; gmi++) {
        near_symmetric(ti, 7, 3e-12);
        near_symmetric(tq, 7, 3e-12);
        assert_int_equal(qc_iq_snap_mirror(c, gmi, 0, ti, 7, tq, 7), 2);
        expect_symmetric(ti, 7);
        expect_symmetric(tq, 7);
        assert_true(ti[3] == 0.0 && !signbit(ti[3]));
        /* 1e-6 of the gap off the mirror: a design that is not symmetric */
        near_symmetric(ti, 7, 1e-6);
        memcpy(keep, ti, sizeof keep);
        assert_int_equal(qc_iq_snap_mirror(c, gmi, 0, ti, 7, tq, 7), 1);
        assert_memory_equal(ti, keep, sizeof keep);
    }
    /* shared: the copy moves with the original */
    near_symmetric(ti, 7, 3e-12);
    memcpy(tq, ti, sizeof tq);
    assert_int_equal(qc_iq_snap_mirror(c, 1, 1, ti, 7, tq, 7), 2);
    expect_symmetric(ti, 7);
    assert_memory_equal(ti, tq, sizeof tq);
    /* labels that no longer follow the mirror: the GMI changes under it */
    const size_t swap = c->labels[0];
    c->labels[0] = c->labels[1];
    c->labels[1] = swap;
    near_symmetric(ti, 7, 3e-12);
    near_symmetric(tq, 7, 3e-12);
    memcpy(keep, ti, sizeof keep);
    assert_int_equal(qc_iq_snap_mirror(c, 1, 0, ti, 7, tq, 7), 0);
    assert_memory_equal(ti, keep, sizeof keep);
    assert_int_equal(qc_iq_snap_mirror(c, 0, 0, ti, 7, tq, 7), 2); /* the MI does not care */
    qc_plane_free(c);
}

static void test_one_axis(void **state)
{
    (void)state;
    /* three points at 0, 120 and 240 degrees: mirrored by y -> -y only */
    qc_plane *c;
    assert_int_equal(qc_plane_parse("apsk:1/3", &c), QC_OK);
    double ti[4], tq[4], keep[4];
    for (size_t k = 0; k < 4; k++) /* about the middle of the in-phase extremes */
        ti[k] = 0.25 + 0.3 * ((double)k - 1.5) + 1e-13 * (double)k;
    near_symmetric(tq, 4, 2e-12);
    memcpy(keep, ti, sizeof keep);
    assert_int_equal(qc_iq_snap_mirror(c, 0, 0, ti, 4, tq, 4), 1);
    assert_memory_equal(ti, keep, sizeof keep);
    expect_symmetric(tq, 4);
    /* shared thresholds: one axis mirrors, the other not, so neither moves */
    near_symmetric(ti, 4, 2e-12);
    memcpy(tq, ti, sizeof tq);
    memcpy(keep, ti, sizeof keep);
    assert_int_equal(qc_iq_snap_mirror(c, 0, 1, ti, 4, tq, 4), 0);
    assert_memory_equal(ti, keep, sizeof keep);
    qc_plane_free(c);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_square_qam),
        cmocka_unit_test(test_one_axis),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
