/* test_coarse_fine.c — the coarse-to-fine MI-optimal threshold search
 * (src/quantizer/optimal.c): its rate is never below the exhaustive
 * dynamic programme on a 4096-cell fine grid, on several models and
 * resolutions; the window DP (window_dp.c) equals enumeration of its
 * windows and never loses against its mid points; the Newton refinement
 * (refine.c) never lowers the rate and ends where the exact gradient
 * vanishes; more cells never lower the rate. */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <cmocka.h>

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "quantizer/quantizer.h"

#define TOL_RATE 1e-12 /* bits: rounding of two rate sums of up to 2048 terms */
#define TOL_GRAD 1e-7  /* nats per noise scale: gradient left by the Newton stop */
#define OLD_FINE 4096  /* the fixed fine grid of the exhaustive search */

typedef struct {
    const char *name;
    const qc_model_type *type;
    double params[3];
    double levels[8];
    double law[8];
    size_t nlevels;
    size_t max_bits;
} case_t;

static const case_t cases[] = {
    /* PAM-8 at about 16 dB: near-degenerate local maxima at 4 bits (1e-6 bit
     * apart), which a coarse grid alone does not resolve */
    {"pam8-16dB", &qc_model_gauss, {0.72629}, {-7, -5, -3, -1, 1, 3, 5, 7},
     {0.125, 0.125, 0.125, 0.125, 0.125, 0.125, 0.125, 0.125}, 8, 6},
    /* PAM-4, σ = 0.6, with an uneven law */
    {"pam4-uneven", &qc_model_gauss, {0.6}, {-3, -1, 1, 3},
     {0.1, 0.4, 0.3, 0.2}, 4, 6},
    /* binary input at 0 dB: the single-threshold and tail regime */
    {"bpsk-0dB", &qc_model_gauss, {1.0}, {-1, 1}, {0.5, 0.5}, 2, 5},
    /* signal-dependent noise, unipolar levels */
    {"gauss-sd", &qc_model_gauss_sd, {0.2, 0.05, 0.0}, {0, 1, 2, 3, 4, 5, 6, 7},
     {0.125, 0.125, 0.125, 0.125, 0.125, 0.125, 0.125, 0.125}, 8, 5},
};

static qc_model *model_of(const case_t *c)
{
    qc_model *m;
    assert_int_equal(qc_model_alloc(c->type, c->params, &m), QC_OK);
    return m;
}

/* Rate in bits of thresholds t. */
static double rate_bits(const qc_model *m, const case_t *c, const double *t, size_t nt)
{
    qc_cell_mi *w;
    double mi;
    assert_int_equal(qc_cell_mi_alloc(m, c->levels, c->law, c->nlevels, nt, &w), QC_OK);
    assert_int_equal(qc_cell_mi_eval(w, t, &mi, NULL), QC_OK);
    qc_cell_mi_free(w);
    return mi * QC_LOG2E;
}

/* The design as the optimal strategy runs it (automatic grid). */
static double design(const qc_model *m, const case_t *c, size_t nt, double *t)
{
    qc_fine_grid g;
    size_t n = qc_coarse_cells(m, c->levels, c->law, c->nlevels, nt + 1);
    assert_int_equal(qc_fine_grid_build(m, c->levels, c->law, c->nlevels, n, nt + 1, &g),
                     QC_OK);
    double mi;
    assert_int_equal(
        qc_optimal_thresholds(m, c->levels, c->law, c->nlevels, nt, &g, t, &mi, NULL), QC_OK);
    qc_fine_grid_clear(&g);
    return mi * QC_LOG2E;
}

/* Exhaustive DP over a 4096-cell grid, as the design did before the
 * coarse-to-fine search; returns its rate and thresholds. */
static double exhaustive(const qc_model *m, const case_t *c, size_t nt, double *t)
{
    qc_fine_grid g;
    size_t K = nt + 1, *cuts = malloc((K + 1) * sizeof *cuts);
    assert_non_null(cuts);
    assert_int_equal(
        qc_fine_grid_build(m, c->levels, c->law, c->nlevels, OLD_FINE, K, &g), QC_OK);
    assert_int_equal(qc_dp_quantize(g.p, c->law, K, QC_DP_FAST, cuts, NULL), QC_OK);
    for (size_t j = 1; j < K; j++)
        t[j - 1] = g.bounds[cuts[j] - 1];
    qc_fine_grid_clear(&g);
    free(cuts);
    return rate_bits(m, c, t, nt);
}

static void test_not_below_exhaustive_dp(void **state)
{
    (void)state;
    for (size_t k = 0; k < sizeof cases / sizeof *cases; k++) {
        const case_t *c = &cases[k];
        qc_model *m = model_of(c);
        double prev = 0.0;
        for (size_t bits = 1; bits <= c->max_bits; bits++) {
            size_t nt = ((size_t)1 << bits) - 1;
            double *t = malloc(nt * sizeof *t), *te = malloc(nt * sizeof *te);
            assert_non_null(t);
            assert_non_null(te);
            double r = design(m, c, nt, t), re = exhaustive(m, c, nt, te);
            if (r < re - TOL_RATE)
                fail_msg("%s, %zu bits: coarse to fine %.15f bit < exhaustive DP %.15f", c->name,
                         bits, r, re);
            /* the reported rate is the rate of the thresholds returned */
            assert_true(fabs(rate_bits(m, c, t, nt) - r) <= TOL_RATE);
            for (size_t j = 1; j < nt; j++)
                assert_true(t[j] > t[j - 1]);
            /* more cells never lower the optimal rate */
            assert_true(r >= prev - TOL_RATE);
            prev = r;
            free(t);
            free(te);
        }
        qc_model_free(m);
    }
}

/* The window DP against enumeration of every increasing choice. */
static void test_window_dp_equals_enumeration(void **state)
{
    (void)state;
    const case_t *c = &cases[1];
    qc_model *m = model_of(c);
    const double left[2] = {-2.5, -0.4}, mid[2] = {-1.7, 0.1}, right[2] = {-0.2, 1.3};
    const size_t split = 3, nc = 2 * split - 1;
    double t[2], v;
    assert_int_equal(qc_window_dp(m, c->levels, c->law, c->nlevels, 2, left, mid, right, split,
                                  t, &v),
                     QC_OK);
    double cand[2][5], best = -INFINITY, mid_rate = rate_bits(m, c, mid, 2);
    for (size_t j = 0; j < 2; j++)
        for (size_t u = 1; u <= split; u++) {
            cand[j][u - 1] = left[j] + (mid[j] - left[j]) * (double)u / (double)split;
            if (u < split)
                cand[j][split + u - 1] = mid[j] + (right[j] - mid[j]) * (double)u / (double)split;
        }
    for (size_t a = 0; a < nc; a++)
        for (size_t b = 0; b < nc; b++) {
            double tt[2] = {cand[0][a], cand[1][b]};
            if (!(tt[1] > tt[0]))
                continue;
            best = fmax(best, rate_bits(m, c, tt, 2));
        }
    assert_true(fabs(v * QC_LOG2E - best) <= TOL_RATE);
    assert_true(fabs(rate_bits(m, c, t, 2) - best) <= TOL_RATE);
    /* the mid points are candidates: never below them */
    assert_true(best >= mid_rate - TOL_RATE);
    /* overlapping windows still give increasing thresholds */
    const double l2[2] = {-1.0, -0.9}, m2[2] = {-0.5, -0.45}, r2[2] = {0.0, 0.2};
    assert_int_equal(qc_window_dp(m, c->levels, c->law, c->nlevels, 2, l2, m2, r2, 4, t, &v),
                     QC_OK);
    assert_true(t[1] > t[0]);
    assert_true(v * QC_LOG2E >= rate_bits(m, c, m2, 2) - TOL_RATE);
    /* a window that is not ordered is refused */
    const double bad[2] = {-0.1, 0.5};
    assert_int_equal(qc_window_dp(m, c->levels, c->law, c->nlevels, 2, bad, mid, right, 2, t,
                                  &v),
                     QC_EINVAL);
    qc_model_free(m);
}

/* Newton from a poor start: the rate rises, the exact gradient vanishes. */
static void test_newton_reaches_stationary_point(void **state)
{
    (void)state;
    for (size_t k = 0; k < sizeof cases / sizeof *cases; k++) {
        const case_t *c = &cases[k];
        qc_model *m = model_of(c);
        const size_t nt = 7;
        double t[7], g[7], mi0, mi, lo, hi;
        qc_levels_support(m, c->levels, c->nlevels, &lo, &hi);
        for (size_t j = 0; j < nt; j++) /* uniform over the middle half */
            t[j] = lo + (hi - lo) * (0.25 + 0.5 * (double)(j + 1) / (double)(nt + 1));
        double scale = qc_noise_scale(m, c->levels, c->law, c->nlevels);
        assert_true(scale > 0.0 && isfinite(scale));
        qc_cell_mi *w;
        assert_int_equal(qc_cell_mi_alloc(m, c->levels, c->law, c->nlevels, nt, &w), QC_OK);
        assert_int_equal(qc_cell_mi_eval(w, t, &mi0, NULL), QC_OK);
        size_t it = 0;
        assert_int_equal(qc_refine_continuous(w, scale, t, &mi, &it), QC_OK);
        assert_true(mi >= mi0);
        assert_true(it >= 1);
        double check;
        assert_int_equal(qc_cell_mi_eval(w, t, &check, g), QC_OK);
        assert_true(check == mi);
        for (size_t j = 0; j < nt; j++) {
            if (j > 0)
                assert_true(t[j] > t[j - 1]);
            if (fabs(g[j]) * scale > TOL_GRAD)
                fail_msg("%s: gradient %g at threshold %zu (%g)", c->name, g[j], j + 1, t[j]);
        }
        qc_cell_mi_free(w);
        qc_model_free(m);
    }
}

/* The grid sizes: at least 2K cells and 2 per noise scale of the span,
 * never above the old fixed grid; the noise scale is the smallest σ. */
static void test_grid_sizes(void **state)
{
    (void)state;
    const case_t *c = &cases[0];
    qc_model *m = model_of(c);
    double lo, hi, s = qc_noise_scale(m, c->levels, c->law, c->nlevels);
    assert_true(fabs(s - c->params[0]) <= 1e-15);
    qc_levels_support(m, c->levels, c->nlevels, &lo, &hi);
    for (size_t K = 2; K <= 4096; K *= 2) {
        size_t n = qc_coarse_cells(m, c->levels, c->law, c->nlevels, K);
        assert_true(n >= K);
        assert_true(n <= qc_fine_cells_default(K));
        if (2 * K <= qc_fine_cells_default(K))
            assert_true(n >= 2 * K && (double)n >= 2.0 * (hi - lo) / s);
    }
    qc_model_free(m);
    /* gauss-sd: σ(x)² = σ0² + a·x, smallest at x = 0 */
    m = model_of(&cases[3]);
    s = qc_noise_scale(m, cases[3].levels, cases[3].law, cases[3].nlevels);
    assert_true(fabs(s - 0.2) <= 1e-15);
    qc_model_free(m);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_not_below_exhaustive_dp),
        cmocka_unit_test(test_window_dp_equals_enumeration),
        cmocka_unit_test(test_newton_reaches_stationary_point),
        cmocka_unit_test(test_grid_sizes),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
