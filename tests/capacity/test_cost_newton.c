/* test_cost_newton.c — capacity under a power budget on a fine level
 * grid by the active-set solve (src/capacity/cost_newton.c): its
 * certified interval overlaps the one of the engine without candidate
 * elimination (the multiplier search on all inputs), its upper bound is
 * at least the mutual information of that engine's law computed
 * independently, its law meets the budget and has at most K + 1 mass
 * points for K output cells (a basic feasible point of the optimal
 * laws' polytope: J. Nocedal and S. J. Wright, Numerical Optimization,
 * Springer 2006, ch. 13; J. Singh, O. Dabeer and U. Madhow, IEEE Trans.
 * Commun. 57(12), 2009), and it gets there in a few hundred steps; and
 * the curvature matrix of its Newton steps, formed four entries at a time
 * (src/capacity/curvature.c), has the bits of the pair-by-pair sums. */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <cmocka.h>

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "quantcap.h"
#include "capacity/engine.h"

#include "test_helpers.h"

#define TOL_BITS 1e-9   /* engine tolerance: certified gap at stop        */
#define TOL_ROUND 1e-12 /* rounding in certified values and in I, bits    */
#define TOL_COST 1e-12  /* budget met up to rounding (relative)           */
#define MAX_STEPS 400   /* the solve's step cap (cost_newton.c): one step
                         * is one pass over the matrix; the multiplier
                         * search spends 10^5 to 10^6 iterations here     */

/* Capacity under the power cost x² with `budget`; `initial` may be NULL. */
static void solve(const qc_dmc *d, const double *cost, double budget, int prune,
                  const double *initial, qc_capacity_result *res, double *law)
{
    qc_ba_options opt;
    qc_ba_options_default(&opt);
    opt.tol_bits = TOL_BITS;
    opt.prune = prune;
    opt.costs = cost;
    opt.budget = budget;
    opt.initial = initial;
    assert_int_equal(qc_capacity(d, &opt, NULL, res, law), QC_OK);
}

/* One grid: the new path (prune on) against the plain multiplier search
 * (prune off), started from `initial` (NULL: uniform). */
static void check(size_t n, double sigma, const double *t, size_t nt, double budget,
                  const double *initial)
{
    double *levels = malloc(n * sizeof *levels), *cost = malloc(n * sizeof *cost);
    double *law = malloc(n * sizeof *law), *ref_law = malloc(n * sizeof *ref_law);
    assert_non_null(levels);
    assert_non_null(cost);
    assert_non_null(law);
    assert_non_null(ref_law);
    qc_dmc *d = level_grid_channel(n, sigma, t, nt, levels);
    for (size_t x = 0; x < n; x++)
        cost[x] = levels[x] * levels[x];
    qc_capacity_result a, b;
    solve(d, cost, budget, 1, initial, &a, law);
    solve(d, cost, budget, 0, NULL, &b, ref_law);
    /* both certified to the tolerance, and the intervals overlap */
    if (!(a.gap_bits <= TOL_BITS && b.gap_bits <= TOL_BITS &&
          a.capacity_bits <= b.upper_bound_bits + TOL_ROUND &&
          b.capacity_bits <= a.upper_bound_bits + TOL_ROUND))
        fail_msg("n %zu sigma %g budget %g: active set [%.15f, %.15f], search [%.15f, "
                 "%.15f]",
                 n, sigma, budget, a.capacity_bits, a.upper_bound_bits, b.capacity_bits,
                 b.upper_bound_bits);
    /* the upper bound is at least I of the other engine's law, computed
     * here from the matrix (qc_mutual_information), not by the engine */
    double ref_mi;
    assert_int_equal(qc_mutual_information(d, ref_law, &ref_mi), QC_OK);
    assert_true(a.upper_bound_bits >= ref_mi * QC_LOG2E - TOL_ROUND);
    /* and the reported rate is I of the reported law */
    double mi;
    assert_int_equal(qc_mutual_information(d, law, &mi), QC_OK);
    assert_near(a.capacity_bits, mi * QC_LOG2E, TOL_ROUND);
    /* the law meets the budget; few mass points; few steps */
    double spent = 0.0, total = 0.0;
    size_t support = 0;
    for (size_t x = 0; x < n; x++) {
        spent += law[x] * cost[x];
        total += law[x];
        support += law[x] > 0.0;
    }
    assert_near(total, 1.0, 1e-12);
    assert_true(spent <= budget * (1.0 + TOL_COST));
    if (a.cost_active) {
        assert_true(support <= nt + 2); /* K + 1 with K = nt + 1 cells */
        assert_true(a.multiplier > 0.0);
    }
    assert_int_equal(a.cost_active, b.cost_active);
    assert_true(a.iterations <= MAX_STEPS);
    qc_dmc_free(d);
    free(levels);
    free(cost);
    free(law);
    free(ref_law);
}

static const double T4[3] = {-0.6, 0.0, 0.6};
static const double T8[7] = {-0.75, -0.5, -0.25, 0.0, 0.25, 0.5, 0.75};

/* The design's problem: 2 bits, power 0.5, 128 and 300 candidates. */
static void test_two_bits(void **state)
{
    (void)state;
    check(128, 0.5, T4, 3, 0.5, NULL);
    check(300, 0.5, T4, 3, 0.5, NULL);
    check(300, 0.2236, T4, 3, 0.5, NULL);
    check(300, 0.5, T4, 3, 0.1, NULL);
}

/* 3 bits, low noise: more mass points, more outputs. */
static void test_three_bits(void **state)
{
    (void)state;
    check(256, 0.15, T8, 7, 0.4, NULL);
    check(256, 0.3, T8, 7, 0.25, NULL);
}

/* A misleading warm start: all the mass on the middle inputs, which
 * the optimum does not use; pricing over every candidate must find the
 * optimal ones (a solve that only polished its starting set would
 * report a certificate below the capacity). */
static void test_misleading_start(void **state)
{
    (void)state;
    const size_t n = 200;
    double *start = malloc(n * sizeof *start);
    assert_non_null(start);
    for (size_t x = 0; x < n; x++)
        start[x] = x >= 95 && x < 105 ? 0.1 * (1.0 - 1e-6) : 1e-6 / 190.0;
    check(n, 0.5, T4, 3, 0.5, start);
    check(n, 0.15, T8, 7, 0.4, start);
    free(start);
}

/* A budget above the unconstrained optimum's cost: the constraint does
 * not bind, and both paths say so. */
static void test_inactive(void **state)
{
    (void)state;
    check(200, 0.5, T4, 3, 0.99, NULL);
}

/* The curvature matrix of the Newton steps, four entries at a time
 * (curvature.c), has the bits of the pair-by-pair sums on a set of 37
 * rows taken out of order (the last block of four has one entry), at a
 * law on part of the inputs; and on a banded channel where an output
 * inside the set's span has no mass, it falls back to the pair-by-pair
 * sums and says when a pair meets that output. */
static void curvature_bits(const qc_dmc *d, const double *law, const size_t *set, size_t k,
                           int want_bad)
{
    qc_ba_workspace *ws = NULL;
    assert_int_equal(qc_ba_workspace_alloc(d->nx, d->ny, &ws), QC_OK);
    ba_prepare(ws, d);
    memcpy(ws->r, law, d->nx * sizeof *law);
    ba_tilt none = {NULL, 0.0, 0.0};
    ba_outcome o = {.upper = INFINITY};
    ba_evaluate(ws, &none, &o);
    gsl_matrix *a = gsl_matrix_alloc(k, k);
    assert_non_null(a);
    double *cols = NULL;
    size_t cols_len = 0;
    int bad = 0, bad_pairs = 0;
    ba_curvature_matrix(ws, set, k, &cols, &cols_len, a, &bad);
    for (size_t i = 0; i < k; i++)
        for (size_t j = 0; j <= i; j++) {
            int b = 0;
            double v = ba_curvature(ws, set[i], set[j], &b), got = gsl_matrix_get(a, i, j);
            bad_pairs |= b;
            if (memcmp(&v, &got, sizeof v) != 0)
                fail_msg("entry (%zu, %zu): %.17g, one pair at a time %.17g", i, j, got, v);
        }
    assert_int_equal(bad, want_bad);
    assert_int_equal(bad_pairs, want_bad);
    free(cols);
    gsl_matrix_free(a);
    qc_ba_workspace_free(ws);
}

static void test_curvature_four_at_a_time(void **state)
{
    (void)state;
    enum { N = 300, K = 37 };
    double *levels = malloc(N * sizeof *levels), *law = malloc(N * sizeof *law);
    assert_non_null(levels);
    assert_non_null(law);
    qc_dmc *d = level_grid_channel(N, 0.15, T8, 7, levels);
    size_t set[K];
    double total = 0.0;
    for (size_t x = 0; x < N; x++)
        total += law[x] = x % 3 == 0 ? 1.0 + (double)(x % 11) : 0.0;
    for (size_t x = 0; x < N; x++)
        law[x] /= total;
    for (size_t i = 0; i < K; i++)
        set[i] = (7 * i * i + 3 * i) % N; /* out of order, some without mass */
    curvature_bits(d, law, set, K, 0);
    qc_dmc_free(d);

    /* banded: input x reaches outputs x .. x + 2 of 12; only inputs 0
     * and 9 are sent, so outputs 3 .. 8 have no mass */
    qc_dmc *b = NULL;
    assert_int_equal(qc_dmc_alloc(10, 12, &b), QC_OK);
    for (size_t x = 0; x < 10; x++)
        for (size_t y = x; y < x + 3; y++)
            b->p[x * 12 + y] = (double)(1 + y - x) / 6.0;
    double blaw[10] = {0.5, 0, 0, 0, 0, 0, 0, 0, 0, 0.5};
    size_t apart[2] = {9, 0};    /* their pairs meet only outputs with mass */
    size_t meets[3] = {0, 9, 4}; /* input 4 reaches outputs without mass */
    curvature_bits(b, blaw, apart, 2, 0);
    curvature_bits(b, blaw, meets, 3, 1);
    qc_dmc_free(b);
    free(levels);
    free(law);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_two_bits),
        cmocka_unit_test(test_three_bits),
        cmocka_unit_test(test_misleading_start),
        cmocka_unit_test(test_inactive),
        cmocka_unit_test(test_curvature_four_at_a_time),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
