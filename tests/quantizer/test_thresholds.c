/* test_thresholds.c — where the rate does not pin the thresholds down:
 * the reproducible placement of redundant and flat thresholds (tidy.c,
 * docs/methods.md §4), exact zeros instead of rounding noise, and the cap
 * of a count quantizer at the counts that carry probability. */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <cmocka.h>

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "quantcap.h"
#include "quantizer/quantizer.h"

#define TEST_RNG_SEED 0x2545F4914F6CDD1Dull /* random cases below */
#include "test_helpers.h"

#define TOL_SYMMETRY 1e-12   /* mirrored thresholds of a symmetric design */
#define TOL_REPRO 1e-6       /* same design from two fine grids, in units of σ:
                                the ends of a flat interval are resolved where
                                rounding of the rate (1e-16) meets the budget */
#define MIN_GAP_SIGMAS 0.5   /* no two thresholds closer than this (units of σ) */
#define TOL_RATE_BITS 1e-13  /* rounding of a finite sum of a few dozen terms */
#define EPS_NATS 1e-10       /* budget given to qc_tidy_thresholds below */
#define TOL_SATURATED 1e-9  /* bits: a saturated rate equals the unquantized one */

static qc_model *gauss(double sigma)
{
    qc_model *m;
    assert_int_equal(qc_model_alloc(&qc_model_gauss, &sigma, &m), QC_OK);
    return m;
}

static void design(const qc_model *m, const double *levels, size_t n, size_t cells,
                   qc_quantizer_kind kind, size_t fine, qc_design_result *res)
{
    qc_design_request req;
    qc_design_request_default(&req);
    req.channel.model = m;
    req.channel.levels = levels;
    req.channel.nlevels = n;
    req.quantizer.cells = cells;
    req.quantizer.kind = kind;
    req.numerics.fine_cells = fine;
    req.numerics.skip_snr_penalty = 1;
    assert_int_equal(qc_design(&req, res), QC_OK);
}

/* MI (nats) of thresholds t for levels with the uniform law. */
static double mi_of(const qc_model *m, const double *levels, size_t n, const double *t,
                    size_t nt)
{
    double *law = malloc(n * sizeof *law), v;
    for (size_t i = 0; i < n; i++)
        law[i] = 1.0 / (double)n;
    qc_cell_mi *w;
    assert_int_equal(qc_cell_mi_alloc(m, levels, law, n, nt, &w), QC_OK);
    assert_int_equal(qc_cell_mi_eval(w, t, &v, NULL), QC_OK);
    qc_cell_mi_free(w);
    free(law);
    return v;
}

/* Binary ±1 at 30 dB with 8 cells: the rate is 1 bit for any threshold
 * between the levels, so six of seven thresholds are redundant. They
 * used to sit wherever the refinement stopped (pairs 6e-4 apart, the
 * placement changing with the fine grid); now they split the two level
 * halves at the medians: symmetric, spread, the same from any grid. */
static void test_saturated_binary_reproducible(void **state)
{
    (void)state;
    const double sigma = 1.0 / sqrt(1000.0);
    qc_model *m = gauss(sigma);
    const double levels[] = {-1.0, 1.0};
    qc_design_result a, b;
    design(m, levels, 2, 8, QC_QUANTIZER_OPTIMAL, 64, &a);
    design(m, levels, 2, 8, QC_QUANTIZER_OPTIMAL, 4096, &b);
    assert_int_equal(a.nthresholds, 7);
    for (size_t j = 0; j < 7; j++) {
        assert_true(fabs(a.thresholds[j] - b.thresholds[j]) <= TOL_REPRO * sigma);
        assert_true(fabs(a.thresholds[j] + a.thresholds[6 - j]) <= TOL_SYMMETRY);
        if (j > 0)
            assert_true(a.thresholds[j] - a.thresholds[j - 1] >= MIN_GAP_SIGMAS * sigma);
    }
    assert_true(a.thresholds[3] == 0.0); /* exactly, not 1e-16 */
    /* the outer ones at the levels' medians, i.e. the levels themselves */
    assert_true(fabs(a.thresholds[1] + 1.0) <= TOL_SYMMETRY);
    assert_true(fabs(a.rate_bits - 1.0) <= TOL_RATE_BITS);
    qc_design_result_clear(&a);
    qc_design_result_clear(&b);
    qc_model_free(m);
}

/* Binary ±1 at 30 and 40 dB with one threshold (1 bit): the rate is 1
 * bit for any threshold between about ±0.7, and the one threshold sits in
 * the middle of that interval, at 0 exactly, however the grid and Newton
 * left it (before, −0.58 and −0.87: a symbol error rate of 6·10⁻⁴¹
 * where 0 gives 9·10⁻²²⁰), from any grid. */
static void test_saturated_binary_one_threshold(void **state)
{
    (void)state;
    const double levels[] = {-1.0, 1.0};
    for (int k = 0; k < 2; k++) {
        const double sigma = k ? 0.01 : 1.0 / sqrt(1000.0);
        qc_model *m = gauss(sigma);
        qc_design_result a, b;
        design(m, levels, 2, 2, QC_QUANTIZER_OPTIMAL, 0, &a);
        design(m, levels, 2, 2, QC_QUANTIZER_OPTIMAL, 4096, &b);
        assert_int_equal(a.nthresholds, 1);
        assert_true(a.thresholds[0] == 0.0 && b.thresholds[0] == 0.0);
        assert_true(a.rate_bits == 1.0);
        qc_design_result_clear(&a);
        qc_design_result_clear(&b);
        qc_model_free(m);
    }
}

/* PAM-4 at 40 dB, 8 cells: the three essential thresholds sit in the
 * middle of their flat intervals (the midpoints −2, 0, 2) and the four
 * spare ones on the levels' medians. */
static void test_saturated_pam4_canonical(void **state)
{
    (void)state;
    qc_model *m = gauss(0.01);
    const double levels[] = {-3.0, -1.0, 1.0, 3.0};
    qc_design_result r;
    design(m, levels, 4, 8, QC_QUANTIZER_OPTIMAL, 0, &r);
    for (size_t j = 0; j < 7; j++)
        assert_true(fabs(r.thresholds[j] - ((double)j - 3.0)) <= TOL_REPRO * 0.01);
    assert_true(r.thresholds[3] == 0.0);
    qc_design_result_clear(&r);
    qc_model_free(m);
}

/* The property: placing equally good thresholds never costs more than the
 * budget, on the bunched thresholds an earlier design produced and on
 * random thresholds and level sets; the result is strictly increasing. */
static void test_tidy_keeps_rate(void **state)
{
    (void)state;
    const double sigma = 1.0 / sqrt(1000.0);
    qc_model *m = gauss(sigma);
    const double levels[] = {-1.0, 1.0};
    /* the thresholds the optimal strategy returned before this rule */
    double t[] = {-1.0523836578253838, -1.023008109823108, -1.019368890941137,
                  -1.0187932054122089, -0.601199124412717,  0.8808888051549888,
                  1.160892160646679};
    double i0 = mi_of(m, levels, 2, t, 7);
    double law[] = {0.5, 0.5};
    assert_int_equal(qc_tidy_thresholds(m, levels, law, 2, 7, EPS_NATS, t), QC_OK);
    double i1 = mi_of(m, levels, 2, t, 7);
    assert_true(i1 >= i0 - EPS_NATS);
    assert_true(fabs(t[3]) < TOL_SYMMETRY && t[0] > -1.1 && t[6] < 1.1);
    qc_model_free(m);

    for (int trial = 0; trial < 20; trial++) {
        double s = 0.02 + 0.5 * uniform01();
        qc_model *g = gauss(s);
        size_t n = 2 + (size_t)(uniform01() * 3.0), nt = 3 + (size_t)(uniform01() * 6.0);
        double lv[5], r[5], u[9], v[9];
        for (size_t i = 0; i < n; i++) {
            lv[i] = (double)i + 0.3 * uniform01();
            r[i] = 1.0 / (double)n;
        }
        for (size_t j = 0; j < nt; j++)
            u[j] = -1.0 + ((double)n + 1.0) * uniform01();
        for (size_t j = 1; j < nt; j++) /* sort */
            for (size_t k = j; k > 0 && u[k] < u[k - 1]; k--) {
                double x = u[k];
                u[k] = u[k - 1];
                u[k - 1] = x;
            }
        memcpy(v, u, sizeof u);
        double a = mi_of(g, lv, n, u, nt);
        assert_int_equal(qc_tidy_thresholds(g, lv, r, n, nt, EPS_NATS, v), QC_OK);
        double b = mi_of(g, lv, n, v, nt);
        assert_true(b >= a - EPS_NATS);
        for (size_t j = 1; j < nt; j++)
            assert_true(v[j] > v[j - 1]);
        qc_model_free(g);
    }
}

/* Where every threshold matters the design is left as it is: four
 * levels with 8 cells at a moderate SNR. */
static void test_tidy_leaves_sharp_design(void **state)
{
    (void)state;
    qc_model *m = gauss(0.4);
    const double levels[] = {-3.0, -1.0, 1.0, 3.0};
    const double law[] = {0.25, 0.25, 0.25, 0.25};
    qc_design_result r;
    design(m, levels, 4, 8, QC_QUANTIZER_OPTIMAL, 0, &r);
    double t[7];
    memcpy(t, r.thresholds, sizeof t);
    assert_int_equal(qc_tidy_thresholds(m, levels, law, 4, 7, EPS_NATS, t), QC_OK);
    assert_memory_equal(t, r.thresholds, sizeof t);
    qc_design_result_clear(&r);
    qc_model_free(m);
}

/* Rounding noise of a design prints as 1e-16 unless snapped: Lloyd–Max
 * and the optimal strategy on symmetric level sets put the middle
 * threshold at exactly 0. */
static void test_exact_zero(void **state)
{
    (void)state;
    qc_model *m = gauss(1.0 / sqrt(1000.0));
    const double pam2[] = {-1.0, 1.0};
    const double pam8[] = {-7.0, -5.0, -3.0, -1.0, 1.0, 3.0, 5.0, 7.0};
    qc_design_result r;
    design(m, pam2, 2, 8, QC_QUANTIZER_LLOYD_MAX, 0, &r);
    assert_true(r.thresholds[3] == 0.0);
    qc_design_result_clear(&r);
    design(m, pam8, 8, 8, QC_QUANTIZER_OPTIMAL, 0, &r);
    assert_true(r.thresholds[3] == 0.0);
    qc_design_result_clear(&r);
    qc_model_free(m);
}

/* Mirror-image thresholds of a mirror-image level set, equal up to the
 * design's rounding, are made exactly so (PAM-4 at 12 dB through 8 cells
 * printed its middle threshold as 4.8e-14 and ±0.439438604007620 /
 * ±0.439438604007725); all of them or none, and only where the levels'
 * output means mirror each other with equal variances. */
static void test_mirror_thresholds(void **state)
{
    (void)state;
    const double pam4[] = {-3.0, -1.0, 1.0, 3.0}, upam4[] = {0.0, 1.0, 2.0, 3.0};
    qc_model *m = gauss(0.5);
    double t[] = {-2.0 - 1e-12, 3e-13, 2.0 + 5e-13};
    qc_snap_thresholds(m, pam4, 4, 3, t);
    assert_true(t[1] == 0.0 && t[0] == -t[2]);
    assert_true(fabs(t[2] - (2.0 + 7.5e-13)) < 1e-15);
    double far[] = {-2.0, 0.1, 2.0 + 1e-12}; /* the middle is not a mirror image */
    qc_snap_thresholds(m, pam4, 4, 3, far);
    assert_true(far[1] == 0.1 && far[2] == 2.0 + 1e-12);
    double even[] = {-1.0 - 2e-12, 1.0 + 1e-12};
    qc_snap_thresholds(m, pam4, 4, 2, even);
    assert_true(even[0] == -even[1] && fabs(even[1] - (1.0 + 1.5e-12)) < 1e-15);
    double u[] = {0.5 + 1e-13, 1.5 - 2e-13, 2.5}; /* centre 1.5 */
    qc_snap_thresholds(m, upam4, 4, 3, u);
    assert_true(u[1] == 1.5 && u[0] + u[2] == 3.0);
    /* signal-dependent noise: the variances differ, nothing is mirrored */
    const double sd[3] = {0.2, 0.05, 0.0};
    qc_model *msd;
    assert_int_equal(qc_model_alloc(&qc_model_gauss_sd, sd, &msd), QC_OK);
    double v[] = {0.5 + 1e-13, 1.5 - 2e-13, 2.5};
    qc_snap_thresholds(msd, upam4, 4, 3, v);
    assert_true(v[0] == 0.5 + 1e-13 && v[1] == 1.5 - 2e-13);
    qc_model_free(msd);
    /* the design itself */
    qc_model *m12 = gauss(sqrt(5.0 / pow(10.0, 1.2)));
    qc_design_result r;
    design(m12, pam4, 4, 8, QC_QUANTIZER_OPTIMAL, 0, &r);
    assert_true(r.thresholds[3] == 0.0);
    for (size_t j = 0; j < 3; j++)
        assert_true(r.thresholds[j] == -r.thresholds[6 - j]);
    qc_design_result_clear(&r);
    qc_model_free(m12);
    qc_model_free(m);
}

/* The uniform quantizer at a saturated rate: the full-scale range is the
 * middle of the interval of equally good ranges, the same from 30 and
 * 60 dB within the budget's width, not the narrowest or widest one the
 * search happened to stop at (±0.013 at 40 dB before). */
static void test_uniform_saturated_range(void **state)
{
    (void)state;
    const double levels[] = {-1.0, 1.0};
    qc_model *m = gauss(1e-3);
    qc_design_result r;
    design(m, levels, 2, 8, QC_QUANTIZER_UNIFORM, 0, &r);
    /* 8 cells of width 2h/8 on [−h, h]: flat for h ∈ (0, ≈ 8/7·(1 − 6.4σ)) */
    assert_true(r.thresholds[3] == 0.0);
    assert_true(r.thresholds[6] > 0.3 && r.thresholds[6] < 0.45);
    qc_design_result_clear(&r);
    qc_model_free(m);
}

/* poisson, signal 1, OOK with 2^16 cells: counts above 18 carry less than
 * 1e-17 (P(Y ≥ 19 | λ = 1) = 3.18e-18, scipy.stats.poisson.sf(18, 1)),
 * so the quantizer has 19 cells, thresholds 1 … 18, and the rate of ideal
 * photon-number resolution. The same for the capacity objective and under
 * an average-level constraint. */
static void test_poisson_cap(void **state)
{
    (void)state;
    double params[] = {1.0, 0.0};
    qc_model *m;
    assert_int_equal(qc_model_alloc(&qc_model_poisson, params, &m), QC_OK);
    const double levels[] = {0.0, 1.0};
    for (int objective = 0; objective < 3; objective++) {
        qc_design_request req;
        qc_design_request_default(&req);
        req.channel.model = m;
        req.channel.levels = levels;
        req.channel.nlevels = 2;
        req.quantizer.cells = (size_t)1 << 16;
        req.numerics.skip_snr_penalty = 1;
        qc_constraints con;
        qc_constraints_none(&con);
        if (objective >= 1)
            req.input.objective = QC_OBJECTIVE_CAPACITY;
        if (objective == 2) {
            con.mean = 0.3;
            req.input.constraints = &con;
        }
        qc_design_result r;
        assert_int_equal(qc_design(&req, &r), QC_OK);
        assert_int_equal(r.cells, (size_t)1 << 16);
        assert_int_equal(r.cells_used, 19);
        assert_int_equal(r.nthresholds, 18);
        for (size_t j = 0; j < 18; j++)
            assert_true(r.thresholds[j] == (double)(j + 1));
        assert_true(fabs(r.unquantized_bits - r.rate_bits) <= TOL_SATURATED);
        qc_design_result_clear(&r);
    }
    qc_model_free(m);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_saturated_binary_reproducible),
        cmocka_unit_test(test_saturated_binary_one_threshold),
        cmocka_unit_test(test_saturated_pam4_canonical),
        cmocka_unit_test(test_tidy_keeps_rate),
        cmocka_unit_test(test_tidy_leaves_sharp_design),
        cmocka_unit_test(test_exact_zero),
        cmocka_unit_test(test_mirror_thresholds),
        cmocka_unit_test(test_uniform_saturated_range),
        cmocka_unit_test(test_poisson_cap),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
