/* test_table.c — the `table` model: reading the documented format
 * (docs/formats.md), errors naming file and line, the piecewise-linear
 * density, its CDF from both sides, exact moments, level matching. */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <cmocka.h>

#include "test_helpers.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "quantcap.h"

#define TOL_TIGHT 1e-14 /* exact arithmetic on a few segments */
#define TOL_ULP 1e-15      /* one rounding of a number of order 1 */
#define TOL_SMALL_P 1e-18  /* probabilities of order 1e-7 in one segment */
#define TOL_MOMENT 1e-6    /* moments of a law centred at 1e9 (rounding 1e9·ε) */

static qc_status parse(const char *text, qc_model **m)
{
    return qc_model_table_parse(text, strlen(text), "t.txt", m);
}

/* Triangle density on [0, 2] (peak 1 at y = 1) for level 0 and a
 * ramp-then-flat density on [0, 2] for level 5 (written unnormalized). */
static const char *triangle = "# two levels\n"
                              "levels 0, 5\n"
                              "0 0 0\n"
                              "1 1 3   # peak\n"
                              "\n"
                              "2 0 3\n";

static void test_parse_and_cdf(void **state)
{
    (void)state;
    qc_model *m;
    assert_int_equal(parse(triangle, &m), QC_OK);
    const double *lv;
    size_t nl;
    assert_int_equal(qc_model_table_levels(m, &lv, &nl), QC_OK);
    assert_int_equal(nl, 2);
    assert_true(lv[0] == 0.0 && lv[1] == 5.0);
    /* triangle: F(t) = t²/2 on [0, 1], 1 − (2 − t)²/2 on [1, 2] */
    const qc_model_type *T = qc_model_get_type(m);
    assert_near(T->below(m, 0.0, 0.5), 0.125, TOL_TIGHT);
    assert_near(T->above(m, 0.0, 1.5), 0.125, TOL_TIGHT);
    assert_near(T->above(m, 0.0, 1.999), 0.0000005, TOL_SMALL_P);
    assert_near(T->below(m, 0.0, 0.001), 0.0000005, TOL_SMALL_P);
    assert_true(T->below(m, 0.0, -1.0) == 0.0 && T->above(m, 0.0, -1.0) == 1.0);
    assert_true(T->below(m, 0.0, 2.0) == 1.0 && T->above(m, 0.0, 2.0) == 0.0);
    assert_near(T->density(m, 0.0, 0.25), 0.25, TOL_TIGHT);
    /* level 5: ramp on [0, 1], flat on [1, 2], normalized */
    /* ramp area 1.5 of a total 4.5 */
    assert_near(T->below(m, 5.0, 1.0), 1.0 / 3.0, TOL_TIGHT);
    double mean, var;
    assert_int_equal(qc_model_moments(m, 0.0, &mean, &var), QC_OK);
    /* triangle on [0, 2]: mean 1, variance (a²+b²+c²−ab−ac−bc)/18 = 1/6
     * (triangular distribution, e.g. Evans, Hastings, Peacock,
     * Statistical Distributions, ch. 40) */
    assert_near(mean, 1.0, TOL_TIGHT);
    assert_near(var, 1.0 / 6.0, TOL_TIGHT);
    double lo, hi;
    T->support(m, 0.0, &lo, &hi);
    assert_true(lo == 0.0 && hi == 2.0);
    /* levels must be the table's */
    double ok[] = {0.0, 5.0}, bad[] = {0.0, 2.5};
    assert_int_equal(qc_model_check_levels(m, ok, 2), QC_OK);
    assert_int_equal(qc_model_check_levels(m, bad, 2), QC_EINVAL);
    if (!strstr(qc_last_error(), "2.5 is not one of the table's levels (0, 5)"))
        fail_msg("%s", qc_last_error());
    qc_dmc *d;
    double t[] = {0.5, 1.5};
    assert_int_equal(qc_discretize(m, ok, 2, t, 2, &d), QC_OK);
    assert_near(d->p[1], 0.75, TOL_TIGHT);
    qc_dmc_free(d);
    qc_model_free(m);
}

/* A segment spanning 113 orders of magnitude: interpolating the density
 * near its far end must not round below zero, and the two tails must stay
 * probabilities that add to 1 (the triangle's exact areas are known). */
static void test_wide_segment(void **state)
{
    (void)state;
    qc_model *m;
    assert_int_equal(parse("levels 5\n-1e113 211\n1 0\n", &m), QC_OK);
    double lo, hi;
    qc_model_get_type(m)->support(m, 5.0, &lo, &hi);
    const double ts[] = {-1e113, -5e112, -1e104, 0.0, 0.5, 1.0};
    for (size_t i = 0; i < sizeof ts / sizeof ts[0]; i++) {
        double b = qc_model_get_type(m)->below(m, 5.0, ts[i]), a = qc_model_get_type(m)->above(m, 5.0, ts[i]);
        double f = qc_model_get_type(m)->density(m, 5.0, ts[i]);
        assert_true(b >= 0.0 && a >= 0.0 && f >= 0.0);
        assert_near(a + b, 1.0, TOL_ULP);
    }
    /* Triangle on [lo, hi] with its peak at lo: P(Y < mid) = 3/4. */
    assert_near(qc_model_get_type(m)->below(m, 5.0, lo + 0.5 * (hi - lo)), 0.75, TOL_ULP);
    qc_model_free(m);
}

/* Values at the ends of the double range describe the same shapes as
 * ordinary ones: a subnormal peak (its area underflows to a few
 * subnormals) and peaks near DBL_MAX (their area overflows) still give a
 * density with unit area. Exact values: a triangle of base 1.4 peaks at
 * 1/0.7; a trapezoid 1, 1, 0 on 0, 1, 2 has area 1.5. */
static void test_extreme_values(void **state)
{
    (void)state;
    qc_model *m;
    assert_int_equal(parse("levels 4\n-.4 1e-323\n1 0\n", &m), QC_OK);
    assert_near(qc_model_get_type(m)->density(m, 4.0, -0.4), 1.0 / 0.7, TOL_TIGHT);
    assert_near(qc_model_get_type(m)->below(m, 4.0, 0.3) + qc_model_get_type(m)->above(m, 4.0, 0.3), 1.0, TOL_ULP);
    assert_near(qc_model_get_type(m)->below(m, 4.0, 0.3), 0.75, TOL_TIGHT); /* 1 − (0.7/1.4)² */
    qc_model_free(m);
    assert_int_equal(parse("levels 0\n0 1e308\n1 1e308\n2 0\n", &m), QC_OK);
    assert_near(qc_model_get_type(m)->density(m, 0.0, 0.5), 1.0 / 1.5, TOL_ULP);
    assert_near(qc_model_get_type(m)->above(m, 0.0, 1.0), 0.5 / 1.5, TOL_ULP);
    qc_model_free(m);
}

/* Moments of a narrow density far from 0: a symmetric triangle of half
 * width 1 centred at 1e9 has variance 1/6 (one pass, E[Y²] − E[Y]²,
 * would cancel 18 digits). Outputs near 1e200 overflow the variance:
 * an error, not a silent 0. */
static void test_moments_far_from_zero(void **state)
{
    (void)state;
    qc_model *m;
    assert_int_equal(parse("levels 0\n999999999 0\n1000000000 1\n1000000001 0\n", &m),
                     QC_OK);
    double mean, var;
    assert_int_equal(qc_model_moments(m, 0.0, &mean, &var), QC_OK);
    assert_near(mean, 1e9, TOL_MOMENT);
    assert_near(var, 1.0 / 6.0, TOL_MOMENT);
    qc_model_free(m);
    assert_int_equal(parse("levels 0\n1e200 1\n2e200 1\n", &m), QC_OK);
    assert_int_equal(qc_model_moments(m, 0.0, &mean, &var), QC_ENUMERIC);
    assert_non_null(strstr(qc_last_error(), "variance of level 0 overflows"));
    qc_model_free(m);
}

static void expect_error(const char *text, qc_status want, const char *needle)
{
    qc_model *m = (qc_model *)0x1;
    assert_int_equal(parse(text, &m), want);
    assert_null(m);
    assert_message(needle);
}

static void test_errors(void **state)
{
    (void)state;
    expect_error("", QC_EFORMAT, "t.txt: empty table");
    expect_error("# nothing\n\n", QC_EFORMAT, "empty table");
    expect_error("0 1 2\n", QC_EFORMAT, "t.txt:1: expected the header 'levels");
    expect_error("levels\n0 1\n", QC_EFORMAT, "t.txt:1: the 'levels' header lists no");
    expect_error("levels 0 abc\n", QC_EFORMAT, "t.txt:1: field 3 'abc' is not a number");
    expect_error("levels 0 0\n", QC_EFORMAT, "t.txt:1: level 0 is listed twice");
    expect_error("levels 0 1\n0 1 1\n1 1\n", QC_EFORMAT,
                 "t.txt:3: row has 2 fields, expected 3");
    expect_error("levels 0 1\n0 1 1\n1 1 1 1\n", QC_EFORMAT, "row has 4 fields");
    expect_error("levels 0 1\n0 1 x1\n", QC_EFORMAT, "t.txt:2: field 3 'x1' is not");
    expect_error("levels 0 1\n0 1 nan\n", QC_EFORMAT, "t.txt:2: field 3 'nan' is not a finite");
    expect_error("levels 0 1\n0 1 1e999\n", QC_EFORMAT, "not a finite number");
    expect_error("levels 0 1\n0 1 -0.5\n", QC_EFORMAT,
                 "t.txt:2: negative density -0.5 for level 1");
    expect_error("levels 0 1\n0 1 1\n0 1 1\n", QC_EFORMAT,
                 "t.txt:3: y = 0 is not above the previous row's y = 0");
    expect_error("levels 0 1\n1 1 1\n0.5 1 1\n", QC_EFORMAT, "t.txt:3: y = 0.5");
    expect_error("levels 0 1\n0 1 1\n", QC_EFORMAT, "needs at least 2 data rows");
    expect_error("levels 0 1\n0 1 0\n1 1 0\n", QC_EFORMAT,
                 "the density of level 1 integrates to 0");
    /* an area of one subnormal: 1/area overflows, so it cannot be a density */
    expect_error("levels 5\n0 1\n1e-323 0\n", QC_EFORMAT,
                 "the density of level 5 integrates to only 4.94066e-324, too little");
    expect_error("levels 0 1\n0,,1 1\n", QC_EFORMAT, "t.txt:2: empty field");
    expect_error("levels 0 1\n0 1 1,\n", QC_EFORMAT, "t.txt:2: trailing ','");
    expect_error("levels 0 1\n0 1 1\nwhat 1 1\n", QC_EFORMAT,
                 "t.txt:3: field 1 'what' is not a number");
    expect_error("levels 0\n0 1\n1 1\nlevels 2\n", QC_EFORMAT, "t.txt:4: field 1 'levels'");
}

static void test_files(void **state)
{
    (void)state;
    qc_model *m = (qc_model *)0x1;
    assert_int_equal(qc_model_table_load("/nonexistent/dir/t.txt", &m), QC_EIO);
    assert_null(m);
    if (!strstr(qc_last_error(), "/nonexistent/dir/t.txt: cannot open"))
        fail_msg("%s", qc_last_error());
    assert_int_equal(qc_model_table_load("/", &m), QC_EIO);
    /* the shipped demo file */
    const char *dir = getenv("QC_TEST_DATA");
    assert_non_null(dir);
    char path[1024];
    snprintf(path, sizeof path, "%s/../data/table_demo.txt", dir);
    assert_int_equal(qc_model_table_load(path, &m), QC_OK);
    const double *lv;
    size_t nl;
    qc_model_table_levels(m, &lv, &nl);
    assert_int_equal(nl, 4);
    double t[15];
    for (int j = 0; j < 15; j++)
        t[j] = -35.0 + 14.0 * j;
    qc_dmc *d;
    assert_int_equal(qc_discretize(m, lv, nl, t, 15, &d), QC_OK);
    assert_int_equal(qc_dmc_check(d), QC_OK);
    double mi, u[] = {0.25, 0.25, 0.25, 0.25}, umi;
    assert_int_equal(qc_mutual_information(d, u, &mi), QC_OK);
    assert_int_equal(qc_unquantized_mi(m, lv, u, nl, &umi, NULL), QC_OK);
    /* data processing (Cover & Thomas, sec. 2.8): quantizing loses */
    assert_true(mi > 0.5 && mi <= umi + 1e-9 && umi < log(4.0));
    qc_dmc_free(d);
    qc_model_free(m);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_parse_and_cdf),
        cmocka_unit_test(test_wide_segment),
        cmocka_unit_test(test_extreme_values),
        cmocka_unit_test(test_moments_far_from_zero),
        cmocka_unit_test(test_errors),
        cmocka_unit_test(test_files),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
