/* test_plane.c — two-dimensional constellations: the named ones (square
 * QAM, PSK, APSK, hexagonal) point by point, their Gray labels, the
 * checks on given points, and the binary switching label search. */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <cmocka.h>

#include <gsl/gsl_math.h> /* M_PI */
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "quantcap.h"

#define TOL_TIGHT 1e-12 /* rounding of coordinates built from cos/sin */

static unsigned popcount(size_t v)
{
    return (unsigned)__builtin_popcountll((unsigned long long)v);
}

/* Nearest neighbours (at the minimum distance) differ in one bit: the Gray
 * property (Gray, US patent 2,632,058, 1953). */
static void assert_gray_neighbours(const qc_plane *c, double dmin)
{
    for (size_t i = 0; i < c->size; i++)
        for (size_t j = i + 1; j < c->size; j++)
            if (hypot(c->x[i] - c->x[j], c->y[i] - c->y[j]) < dmin * (1 + 1e-9))
                assert_int_equal(popcount(c->labels[i] ^ c->labels[j]), 1);
}

static void test_qam(void **state)
{
    (void)state;
    qc_plane *c = NULL;
    assert_int_equal(qc_plane_parse("qam:64", &c), QC_OK);
    assert_int_equal(c->size, 64);
    assert_int_equal(c->nbits, 6);
    /* E|x|^2 of square M-QAM on odd integers: 2(M-1)/3 (Proakis & Salehi, 5th ed.) */
    assert_true(fabs(qc_plane_energy(c) - 2.0 * 63.0 / 3.0) < TOL_TIGHT);
    assert_gray_neighbours(c, 2.0);
    qc_plane_free(c);
}

static void test_psk_apsk(void **state)
{
    (void)state;
    qc_plane *c = NULL;
    assert_int_equal(qc_plane_parse("psk:8", &c), QC_OK);
    assert_non_null(c->labels);
    assert_gray_neighbours(c, 2.0 * sin(M_PI / 8.0));
    qc_plane_free(c);
    /* two rings of 8: Gray (ring code, then phase code) */
    assert_int_equal(qc_plane_parse("apsk:1/8,2/8/22.5", &c), QC_OK);
    assert_non_null(c->labels);
    assert_int_equal(c->nbits, 4);
    assert_true(fabs(c->x[8] - 2.0 * cos(M_PI / 8.0)) < TOL_TIGHT);
    assert_true(fabs(hypot(c->x[15], c->y[15]) - 2.0) < TOL_TIGHT);
    qc_plane_free(c);
    /* 4 + 12: no Gray code */
    assert_int_equal(qc_plane_parse("apsk:1/4,2.7/12", &c), QC_OK);
    assert_null(c->labels);
    assert_int_equal(c->size, 16);
    qc_plane_free(c);
}

static void test_hex(void **state)
{
    (void)state;
    qc_plane *c = NULL;
    /* hex:7 is the centre and its six neighbours at unit distance */
    assert_int_equal(qc_plane_parse("hex:7", &c), QC_OK);
    double mx = 0, my = 0;
    for (size_t i = 0; i < 7; i++)
        mx += c->x[i], my += c->y[i];
    assert_true(fabs(mx) < TOL_TIGHT && fabs(my) < TOL_TIGHT);
    size_t unit = 0;
    for (size_t i = 1; i < 7; i++)
        unit += fabs(hypot(c->x[i], c->y[i]) - 1.0) < TOL_TIGHT;
    assert_int_equal(unit, 6);
    assert_true(fabs(qc_plane_energy(c) - 6.0 / 7.0) < TOL_TIGHT);
    qc_plane_free(c);
}

static void test_checks(void **state)
{
    (void)state;
    qc_plane *c = NULL;
    double x[3] = {0, 1, 0}, y[3] = {0, 0, 0};
    assert_int_equal(qc_plane_from_points(x, y, 3, NULL, NULL, 0, &c), QC_EINVAL);
    assert_null(c);
    double p[2] = {0.5, 0.6};
    assert_int_equal(qc_plane_from_points(x, y, 2, p, NULL, 0, &c), QC_EINVAL);
    size_t lab[2] = {1, 1};
    assert_int_equal(qc_plane_from_points(x, y, 2, NULL, lab, 1, &c), QC_EINVAL);
    size_t big[2] = {0, 2};
    assert_int_equal(qc_plane_from_points(x, y, 2, NULL, big, 1, &c), QC_EINVAL);
    assert_int_equal(qc_plane_parse("apsk:1/4,1/8", &c), QC_EINVAL);
    assert_int_equal(qc_plane_parse("qam:32", &c), QC_EINVAL);
    const char *text = "1 1 0.5 0\n-1 1 0.5 1\n";
    assert_int_equal(qc_plane_parse_text(text, strlen(text), "t", &c), QC_OK);
    assert_int_equal(c->labels[1], 1);
    assert_true(c->prob_given);
    qc_plane_free(c);
}

static void test_label_search(void **state)
{
    (void)state;
    qc_plane *g = NULL, *s = NULL;
    assert_int_equal(qc_plane_parse("qam:16", &g), QC_OK);
    /* the same points without labels: the search from the identity and
     * random starts must find a labelling no worse than Gray's, which is
     * the known best for square QAM at high SNR (Schreckenbach et al. 2003) */
    assert_int_equal(qc_plane_from_points(g->x, g->y, 16, NULL, NULL, 0, &s), QC_OK);
    double sigma = 0.4, cost = NAN;
    assert_int_equal(qc_plane_search_labels(s, sigma, 8, 7, &cost), QC_OK);
    double gray = qc_plane_label_cost(g, sigma);
    assert_true(cost <= gray * (1 + 1e-12));
    assert_true(fabs(qc_plane_label_cost(s, sigma) - cost) < 1e-12 * gray);
    assert_gray_neighbours(s, 2.0);
    /* labels distinct */
    for (size_t i = 0; i < 16; i++)
        for (size_t j = 0; j < i; j++)
            assert_true(s->labels[i] != s->labels[j]);
    qc_plane_free(g);
    qc_plane_free(s);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_qam),         cmocka_unit_test(test_psk_apsk),
        cmocka_unit_test(test_hex),         cmocka_unit_test(test_checks),
        cmocka_unit_test(test_label_search),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
