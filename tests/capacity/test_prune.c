/* test_prune.c — candidate elimination in the capacity engine
 * (src/capacity/prune.c): runs with and without it give the same
 * capacity within the certified gap, and the certified test never sets
 * aside an input that carries mass at the optimum. */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <cmocka.h>

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "capacity/engine.h"
#include "quantcap.h"

#define TEST_RNG_SEED 0x9a7e5eedULL /* random channels below */
#include "test_helpers.h"

#define TOL_BITS 1e-9      /* engine tolerance: certified gap at stop    */
#define TOL_ROUND 1e-12    /* rounding in certified values, bits         */
#define TOL_OPT_NATS 1e-13 /* gap of the reference optimum, nats         */
#define SUPPORT_MASS 1e-3  /* an input this heavy at the optimum is in its
                            * support: a non-support input keeps at most
                            * (gap)/(score deficit) of mass, far below */

/* Capacity (with the power cost x² and `budget` when budget > 0) with
 * elimination on or off. */
static void run(const qc_dmc *d, const double *levels, double budget, int prune,
                double tol_bits, qc_capacity_result *res, double *law)
{
    double *cost = malloc(d->nx * sizeof *cost);
    assert_non_null(cost);
    for (size_t x = 0; x < d->nx; x++)
        cost[x] = levels ? levels[x] * levels[x] : 0.0;
    qc_ba_options opt;
    qc_ba_options_default(&opt);
    opt.tol_bits = tol_bits;
    opt.prune = prune;
    if (budget > 0.0) {
        opt.costs = cost;
        opt.budget = budget;
    }
    assert_int_equal(qc_capacity(d, &opt, NULL, res, law), QC_OK);
    free(cost);
}

/* Both runs certify their bounds to the tolerance, and the two certified
 * intervals overlap: the same capacity. */
static void expect_same(const qc_capacity_result *a, const qc_capacity_result *b,
                        double tol_bits, const char *what)
{
    if (!(a->gap_bits <= tol_bits && b->gap_bits <= tol_bits &&
          a->capacity_bits <= b->upper_bound_bits + TOL_ROUND &&
          b->capacity_bits <= a->upper_bound_bits + TOL_ROUND))
        fail_msg("%s: pruned [%.15f, %.15f], unpruned [%.15f, %.15f]", what,
                 a->capacity_bits, a->upper_bound_bits, b->capacity_bits,
                 b->upper_bound_bits);
}

/* A 2-bit quantizer after Gaussian noise, 256 candidates, power budget
 * 0.5 (the level-grid capacity problem of `design --level-grid`). */
static void test_same_with_power_cost(void **state)
{
    (void)state;
    const size_t n = 256;
    const double t[3] = {-0.6, 0.0, 0.6};
    double *levels = malloc(n * sizeof *levels), *law = malloc(n * sizeof *law);
    assert_non_null(levels);
    assert_non_null(law);
    qc_dmc *d = level_grid_channel(n, 0.5, t, 3, levels);
    qc_capacity_result a, b;
    run(d, levels, 0.5, 1, 1e-8, &a, law);
    /* the pruned law is exactly 0 off a handful of inputs */
    size_t support = 0;
    for (size_t x = 0; x < n; x++)
        support += law[x] > 0.0;
    assert_true(support < n / 4);
    run(d, levels, 0.5, 0, 1e-8, &b, NULL);
    expect_same(&a, &b, 1e-8, "256 candidates, power 0.5");
    qc_dmc_free(d);
    free(levels);
    free(law);
}

/* No cost, 8 cells, 400 candidates at low noise: many mass points. */
static void test_same_unconstrained(void **state)
{
    (void)state;
    const size_t n = 400;
    const double t[7] = {-0.75, -0.5, -0.25, 0.0, 0.25, 0.5, 0.75};
    double *levels = malloc(n * sizeof *levels);
    assert_non_null(levels);
    qc_dmc *d = level_grid_channel(n, 0.15, t, 7, levels);
    qc_capacity_result a, b;
    run(d, NULL, 0.0, 1, TOL_BITS, &a, NULL);
    run(d, NULL, 0.0, 0, TOL_BITS, &b, NULL);
    expect_same(&a, &b, TOL_BITS, "400 candidates, 8 cells, no cost");
    qc_dmc_free(d);
    free(levels);
}

/* Random channels with 64 inputs and 12 outputs, some of them sparse
 * rows: nothing special about Gaussian grids. */
static void test_same_random(void **state)
{
    (void)state;
    const size_t nx = 64, ny = 12;
    for (int trial = 0; trial < 4; trial++) {
        qc_dmc *d = NULL;
        assert_int_equal(qc_dmc_alloc(nx, ny, &d), QC_OK);
        for (size_t x = 0; x < nx; x++) {
            double s = 0.0;
            for (size_t y = 0; y < ny; y++) {
                double u = uniform01();
                d->p[x * ny + y] = u < 0.3 ? 0.0 : u * u * u;
                s += d->p[x * ny + y];
            }
            if (s == 0.0)
                d->p[x * ny] = s = 1.0;
            for (size_t y = 0; y < ny; y++)
                d->p[x * ny + y] /= s;
        }
        qc_capacity_result a, b;
        run(d, NULL, 0.0, 1, TOL_BITS, &a, NULL);
        run(d, NULL, 0.0, 0, TOL_BITS, &b, NULL);
        expect_same(&a, &b, TOL_BITS, "random 64 x 12");
        qc_dmc_free(d);
    }
}

/* The certified test at iterates of a run, against the optimum of the
 * tilted problem at a fixed multiplier s: every input holding mass at
 * the optimum survives, and late in the run most inputs are set aside
 * (so the check is not vacuous). */
static void check_support_kept(double sigma, const double *t, size_t nt, double s)
{
    const size_t n = 300;
    double *levels = malloc(n * sizeof *levels), *cost = malloc(n * sizeof *cost);
    double *opt_law = malloc(n * sizeof *opt_law);
    assert_non_null(levels);
    assert_non_null(cost);
    assert_non_null(opt_law);
    qc_dmc *d = level_grid_channel(n, sigma, t, nt, levels);
    for (size_t x = 0; x < n; x++)
        cost[x] = levels[x] * levels[x];
    qc_ba_workspace *ws = NULL;
    assert_int_equal(qc_ba_workspace_alloc(n, d->ny, &ws), QC_OK);
    ba_prepare(ws, d);
    ba_tilt tilt = {s > 0.0 ? cost : NULL, s, 0.5};
    ba_outcome o;
    for (size_t x = 0; x < n; x++)
        ws->r[x] = 1.0 / (double)n;
    ba_run(ws, &tilt, TOL_OPT_NATS, QC_BA_ACCELERATED, 5000000, &o);
    assert_true(o.converged);
    memcpy(opt_law, ws->r, n * sizeof *opt_law);
    size_t last_kept = n;
    for (size_t k = 1; k <= 16384; k *= 4) {
        for (size_t x = 0; x < n; x++)
            ws->r[x] = 1.0 / (double)n;
        ba_run(ws, &tilt, TOL_OPT_NATS, QC_BA_ACCELERATED, k, &o);
        size_t kept = ba_survivors(ws, o.lower);
        assert_true(kept > 0);
        size_t j = 0;
        for (size_t x = 0; x < n; x++) {
            while (j < kept && ws->keep[j] < x)
                j++;
            int survives = j < kept && ws->keep[j] == x;
            if (opt_law[x] > SUPPORT_MASS && !survives)
                fail_msg("sigma %g, s %g, after %zu iterations: input %zu (level %g, "
                         "mass %g at the optimum) set aside",
                         sigma, s, k, x, levels[x], opt_law[x]);
        }
        last_kept = kept;
    }
    assert_true(last_kept < n / 2);
    qc_ba_workspace_free(ws);
    qc_dmc_free(d);
    free(levels);
    free(cost);
    free(opt_law);
}

static void test_support_kept(void **state)
{
    (void)state;
    const double t4[3] = {-0.6, 0.0, 0.6};
    const double t8[7] = {-0.75, -0.5, -0.25, 0.0, 0.25, 0.5, 0.75};
    check_support_kept(0.5, t4, 3, 0.0);
    check_support_kept(0.5, t4, 3, 0.54);
    check_support_kept(0.2, t8, 7, 0.3);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_same_with_power_cost),
        cmocka_unit_test(test_same_unconstrained),
        cmocka_unit_test(test_same_random),
        cmocka_unit_test(test_support_kept),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
