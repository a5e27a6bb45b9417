/* test_capacity.c — the Blahut–Arimoto capacity engine: closed forms,
 * properties on random channels, the accelerated variant, capacity
 * under an input cost, and the error paths. */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <cmocka.h>

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include <gsl/gsl_errno.h>
#include <gsl/gsl_min.h>

#include "quantcap.h"

#define TEST_RNG_SEED 0x5eed0fca9ac17ULL /* random channels and laws below */
#include "test_helpers.h"

#define TOL_BITS 1e-9   /* engine tolerance: certified gap at stop        */
#define TOL_ROUND 1e-12 /* rounding in certified values, bits            */
#define TOL_MI 1e-12    /* I(r) recomputed by qc_mutual_information, bits */
#define COST_RTOL 1e-9  /* budget met to this relative accuracy           */
#define TOL_SLOPE 1e-6  /* multiplier vs the derivative of C(β), relative */
#define TOL_ULP 1e-15    /* one rounding of a number of order 1 */
#define TOL_ARGMAX 1e-5  /* the optimal law at a flat maximum, against GSL */
#define COST_ATOL 1e-12 /* cost recomputed from the law, times (1 + budget) */
#define TOL_DOMINATED 1e-6 /* probability left on a dominated input */

/* ---- helpers ------------------------------------------------------ */

static double h2_bits(double p)
{
    return p <= 0.0 || p >= 1.0 ? 0.0 : -p * log2(p) - (1.0 - p) * log2(1.0 - p);
}

static qc_status capacity(const qc_dmc *d, qc_ba_method method,
                          qc_ba_workspace *ws, qc_capacity_result *res,
                          double *input)
{
    qc_ba_options opt;
    qc_ba_options_default(&opt);
    opt.method = method;
    return qc_capacity(d, &opt, ws, res, input);
}

/* The result certifies `want`: lower ≤ want ≤ upper, gap ≤ tolerance. */
static void expect_capacity(const qc_capacity_result *res, double want,
                            const char *what)
{
    if (!(res->capacity_bits <= want + TOL_ROUND &&
          res->upper_bound_bits >= want - TOL_ROUND &&
          want - res->capacity_bits <= TOL_BITS + TOL_ROUND &&
          res->gap_bits <= TOL_BITS &&
          res->upper_bound_bits - res->capacity_bits <= TOL_BITS))
        fail_msg("%s: C = %.15f, certified [%.15f, %.15f] gap %.3g", what, want,
                 res->capacity_bits, res->upper_bound_bits, res->gap_bits);
}

/* Both methods from a fresh internal workspace, against a closed form. */
static void check_closed_form(size_t nx, size_t ny, const double *p,
                              double want, const char *what)
{
    qc_dmc *d = make_dmc(nx, ny, p);
    for (int m = 0; m < 2; m++) {
        qc_capacity_result res;
        double *in = malloc(nx * sizeof *in);
        assert_int_equal(capacity(d, m ? QC_BA_ACCELERATED : QC_BA_PLAIN, NULL,
                                  &res, in), QC_OK);
        expect_capacity(&res, want, what);
        /* the reported capacity is I(r) of the returned law */
        double mi;
        assert_int_equal(qc_mutual_information(d, in, &mi), QC_OK);
        if (!(fabs(mi * QC_LOG2E - res.capacity_bits) <= TOL_MI))
            fail_msg("%s: I(r) = %.15f but capacity_bits = %.15f", what,
                     mi * QC_LOG2E, res.capacity_bits);
        free(in);
    }
    qc_dmc_free(d);
}

/* ---- closed forms ------------------------------------------------- */

static void test_bsc(void **state)
{
    (void)state;
    const double ps[] = {0.0, 0.01, 0.11, 0.3, 0.5, 0.9};
    for (size_t i = 0; i < sizeof ps / sizeof ps[0]; i++) {
        double e = ps[i];
        const double p[4] = {1.0 - e, e, e, 1.0 - e};
        /* C = 1 − h2(p) (Cover & Thomas, Elements of Information Theory,
         * 2nd ed., §7.1.4) */
        check_closed_form(2, 2, p, 1.0 - h2_bits(e), "BSC");
    }
}

static void test_bec(void **state)
{
    (void)state;
    const double es[] = {0.0, 0.25, 0.5, 0.9, 1.0};
    for (size_t i = 0; i < sizeof es / sizeof es[0]; i++) {
        double e = es[i];
        /* e = 1 leaves the outer two columns all zero */
        const double p[6] = {1.0 - e, e, 0.0, 0.0, e, 1.0 - e};
        /* C = 1 − e (Cover & Thomas, §7.1.5) */
        check_closed_form(2, 3, p, 1.0 - e, "BEC");
    }
}

static void test_z_channel(void **state)
{
    (void)state;
    /* 0 is always received as 0; 1 turns into 0 with probability p.
     * C = log2(1 + (1 − p)·p^(p/(1 − p))): set dI/dr = 0 for
     * I(r) = h2(r(1 − p)) − r·h2(p) (L. G. Tallini, S. Al-Bassam, B. Bose,
     * "On the capacity and codes for the Z-channel", Proc. IEEE ISIT 2002,
     * p. 422); p = 1/2 gives log2(5/4) = 0.321928... */
    const double ps[] = {0.5, 0.1, 0.01, 0.9, 0.999};
    for (size_t i = 0; i < sizeof ps / sizeof ps[0]; i++) {
        double e = ps[i];
        const double p[4] = {1.0, 0.0, e, 1.0 - e};
        check_closed_form(2, 2, p, log2(1.0 + (1.0 - e) * pow(e, e / (1.0 - e))),
                          "Z channel");
    }
    const double p[4] = {1.0, 0.0, 0.5, 0.5};
    check_closed_form(2, 2, p, log2(1.25), "Z channel, p = 1/2");
}

static void test_symmetric(void **state)
{
    (void)state;
    /* rows are permutations of each other and so are the columns:
     * C = log2|Y| − H(row) (Cover & Thomas, Thm 7.2.1) */
    const double p[9] = {0.6, 0.3, 0.1, 0.1, 0.6, 0.3, 0.3, 0.1, 0.6};
    double h = -(0.6 * log2(0.6) + 0.3 * log2(0.3) + 0.1 * log2(0.1));
    check_closed_form(3, 3, p, log2(3.0) - h, "symmetric 3x3");
}

static void test_noisy_typewriter(void **state)
{
    (void)state;
    enum { N = 26 };
    double p[N * N] = {0};
    for (int x = 0; x < N; x++) {
        p[x * N + x] = 0.5;
        p[x * N + (x + 1) % N] = 0.5;
    }
    /* C = log2 13 (Cover & Thomas, §7.1.3) */
    check_closed_form(N, N, p, log2(13.0), "noisy typewriter");
}

static void test_degenerate_shapes(void **state)
{
    (void)state;
    /* one input, one output, identical rows: nothing gets through */
    const double one_row[4] = {0.1, 0.2, 0.3, 0.4};
    check_closed_form(1, 4, one_row, 0.0, "1 x 4");
    const double one_col[3] = {1.0, 1.0, 1.0};
    check_closed_form(3, 1, one_col, 0.0, "3 x 1");
    const double same[6] = {0.2, 0.0, 0.8, 0.2, 0.0, 0.8};
    check_closed_form(2, 3, same, 0.0, "identical rows");
    /* the identity on 5 letters: log2 5 (noiseless channel, Cover &
     * Thomas §7.1.1) */
    double id[25] = {0};
    for (int i = 0; i < 5; i++)
        id[i * 5 + i] = 1.0;
    check_closed_form(5, 5, id, log2(5.0), "identity 5");
}

/* ---- properties on random channels -------------------------------- */

#define RAND_MAX_X 12
#define RAND_MAX_Y 16

static qc_dmc *random_channel(size_t nx, size_t ny)
{
    qc_dmc *d;
    assert_int_equal(qc_dmc_alloc(nx, ny, &d), QC_OK);
    double zeros = uniform01() * 0.6;
    for (size_t x = 0; x < nx; x++)
        random_law(d->p + x * ny, ny, zeros);
    if (ny > 1 && uniform01() < 0.5) {
        /* empty one column: move its mass to a neighbour */
        size_t y0 = uniform_index(ny), y1 = (y0 + 1) % ny;
        for (size_t x = 0; x < nx; x++) {
            d->p[x * ny + y1] += d->p[x * ny + y0];
            d->p[x * ny + y0] = 0.0;
        }
    }
    return d;
}

static qc_dmc *permuted(const qc_dmc *d, const size_t *px, const size_t *py)
{
    qc_dmc *e;
    assert_int_equal(qc_dmc_alloc(d->nx, d->ny, &e), QC_OK);
    for (size_t x = 0; x < d->nx; x++)
        for (size_t y = 0; y < d->ny; y++)
            e->p[px[x] * d->ny + py[y]] = d->p[x * d->ny + y];
    return e;
}

static void shuffle(size_t *v, size_t n)
{
    for (size_t i = 0; i < n; i++)
        v[i] = i;
    for (size_t i = n; i > 1; i--) {
        size_t j = uniform_index(i), t = v[i - 1];
        v[i - 1] = v[j];
        v[j] = t;
    }
}

static void test_random_properties(void **state)
{
    (void)state;
    static const size_t shapes[][2] = {{1, 1}, {1, 7}, {9, 1}, {2, 2}, {12, 3},
                                       {3, 16}, {12, 16}, {6, 6}};
    qc_ba_workspace *ws;
    assert_int_equal(qc_ba_workspace_alloc(RAND_MAX_X, RAND_MAX_Y, &ws), QC_OK);
    for (int t = 0; t < 120; t++) {
        size_t nx, ny;
        if (t < 8) {
            nx = shapes[t][0];
            ny = shapes[t][1];
        } else {
            nx = 1 + uniform_index(RAND_MAX_X);
            ny = 1 + uniform_index(RAND_MAX_Y);
        }
        qc_dmc *d = random_channel(nx, ny);
        qc_capacity_result plain, accel;
        double r[RAND_MAX_X], law[RAND_MAX_X], mi;
        assert_int_equal(capacity(d, QC_BA_PLAIN, ws, &plain, NULL), QC_OK);
        assert_int_equal(capacity(d, QC_BA_ACCELERATED, ws, &accel, law), QC_OK);
        /* certificate at stop */
        assert_true(accel.gap_bits <= TOL_BITS && plain.gap_bits <= TOL_BITS);
        assert_true(accel.capacity_bits <= accel.upper_bound_bits);
        /* both are within the tolerance below the same C */
        assert_true(fabs(plain.capacity_bits - accel.capacity_bits) <= TOL_BITS + TOL_ROUND);
        assert_true(accel.capacity_bits <= plain.upper_bound_bits + TOL_ROUND);
        assert_true(plain.capacity_bits <= accel.upper_bound_bits + TOL_ROUND);
        /* the reported value is achieved by the returned law */
        assert_int_equal(qc_mutual_information(d, law, &mi), QC_OK);
        assert_true(fabs(mi * QC_LOG2E - accel.capacity_bits) <= TOL_MI);
        /* C ≤ log2 min(|X|, |Y|) (Cover & Thomas, §7.1, property 2–3
         * of capacity) */
        double cmax = log2((double)(nx < ny ? nx : ny));
        assert_true(accel.capacity_bits <= cmax + TOL_ROUND);
        /* no input law exceeds the upper bound (definition of C) */
        for (int k = 0; k < 10; k++) {
            random_law(r, nx, 0.3);
            assert_int_equal(qc_mutual_information(d, r, &mi), QC_OK);
            assert_true(mi * QC_LOG2E <= accel.upper_bound_bits + TOL_ROUND);
            assert_true(mi * QC_LOG2E <= accel.capacity_bits + TOL_BITS + TOL_ROUND);
        }
        /* relabelling inputs and outputs changes nothing */
        size_t px[RAND_MAX_X], py[RAND_MAX_Y];
        shuffle(px, nx);
        shuffle(py, ny);
        qc_dmc *e = permuted(d, px, py);
        qc_capacity_result perm;
        assert_int_equal(capacity(e, QC_BA_ACCELERATED, ws, &perm, NULL), QC_OK);
        assert_true(fabs(perm.capacity_bits - accel.capacity_bits) <= TOL_BITS + TOL_ROUND);
        qc_dmc_free(e);
        /* merging two outputs is a processing of Y: C cannot grow (data
         * processing inequality, Cover & Thomas Thm 2.8.1) */
        if (ny > 1) {
            size_t y0 = uniform_index(ny), y1 = (y0 + 1 + uniform_index(ny - 1)) % ny;
            qc_dmc *m;
            assert_int_equal(qc_dmc_alloc(nx, ny - 1, &m), QC_OK);
            for (size_t x = 0; x < nx; x++) {
                size_t k = 0;
                for (size_t y = 0; y < ny; y++)
                    if (y != y1)
                        m->p[x * (ny - 1) + k++] = d->p[x * ny + y] +
                                                   (y == y0 ? d->p[x * ny + y1] : 0.0);
            }
            qc_capacity_result merged;
            assert_int_equal(capacity(m, QC_BA_ACCELERATED, ws, &merged, NULL), QC_OK);
            assert_true(merged.capacity_bits <= accel.upper_bound_bits + TOL_ROUND);
            qc_dmc_free(m);
        }
        qc_dmc_free(d);
    }
    qc_ba_workspace_free(ws);
}

static void test_initial_law(void **state)
{
    (void)state;
    const double p[9] = {0.7, 0.2, 0.1, 0.0, 0.5, 0.5, 0.3, 0.0, 0.7};
    qc_dmc *d = make_dmc(3, 3, p);
    qc_ba_options opt;
    qc_ba_options_default(&opt);
    qc_capacity_result a, b;
    assert_int_equal(qc_capacity(d, &opt, NULL, &a, NULL), QC_OK);
    const double start[3] = {0.8, 0.15, 0.05};
    opt.initial = start;
    for (int m = 0; m < 2; m++) {
        opt.method = m ? QC_BA_ACCELERATED : QC_BA_PLAIN;
        assert_int_equal(qc_capacity(d, &opt, NULL, &b, NULL), QC_OK);
        assert_true(fabs(a.capacity_bits - b.capacity_bits) <= TOL_BITS + TOL_ROUND);
    }
    qc_dmc_free(d);
}

/* ---- the accelerated variant -------------------------------------- */

/* 41 levels equally spaced in [−1.5, 1.5], σ = 1 Gaussian noise, 2048
 * uniform cells over [−9.5, 9.5]: neighbouring rows are nearly equal,
 * which slows plain BA down. */
static qc_dmc *near_degenerate_channel(void)
{
    enum { LEVELS = 41, CELLS = 2048 };
    const double sigma = 1.0;
    qc_model *model;
    assert_int_equal(qc_model_alloc(&qc_model_gauss, &sigma, &model), QC_OK);
    double levels[LEVELS], thresholds[CELLS - 1];
    for (int i = 0; i < LEVELS; i++)
        levels[i] = -1.5 + 3.0 * i / (LEVELS - 1.0);
    for (int j = 1; j < CELLS; j++)
        thresholds[j - 1] = -9.5 + 19.0 * j / (double)CELLS;
    qc_dmc *d;
    assert_int_equal(qc_discretize(model, levels, LEVELS, thresholds, CELLS - 1, &d),
                     QC_OK);
    qc_model_free(model);
    return d;
}

/* Blahut–Arimoto alone: without the candidate elimination and the
 * active-set solve that many inputs otherwise get. */
static qc_status ba_only(const qc_dmc *d, qc_ba_method method, qc_capacity_result *res,
                         double *input)
{
    qc_ba_options opt;
    qc_ba_options_default(&opt);
    opt.method = method;
    opt.prune = 0;
    return qc_capacity(d, &opt, NULL, res, input);
}

static void test_accelerated_iterations(void **state)
{
    (void)state;
    qc_dmc *d = near_degenerate_channel();
    qc_capacity_result plain, accel;
    assert_int_equal(ba_only(d, QC_BA_PLAIN, &plain, NULL), QC_OK);
    assert_int_equal(ba_only(d, QC_BA_ACCELERATED, &accel, NULL), QC_OK);
    /* the design target: at most a quarter of plain BA's iterations */
    if (!(4 * accel.iterations <= plain.iterations))
        fail_msg("accelerated %zu iterations, plain %zu", accel.iterations,
                 plain.iterations);
    assert_true(fabs(plain.capacity_bits - accel.capacity_bits) <= TOL_BITS + TOL_ROUND);
    assert_true(accel.capacity_bits <= plain.upper_bound_bits + TOL_ROUND);
    qc_dmc_free(d);
}

/* Many inputs without a cost: the active-set solve (cost_newton.c)
 * certifies the same capacity as Blahut–Arimoto alone, with a law of at
 * most ny + 1 mass points whose MI is the capacity reported, in far
 * fewer steps — also on a channel whose rows reach few outputs each (a
 * flat start then holds one input, and the others come in by mixing). */
static void test_active_set_without_cost(void **state)
{
    (void)state;
    for (int c = 0; c < 2; c++) {
        qc_dmc *d;
        if (c == 0) {
            d = near_degenerate_channel();
        } else {
            enum { NX = 512, NT = 15 };
            double sigma = 0.02, lv[NX], t[NT];
            qc_model *m;
            assert_int_equal(qc_model_alloc(&qc_model_gauss, &sigma, &m), QC_OK);
            for (int x = 0; x < NX; x++)
                lv[x] = -1.0 + 2.0 * x / (NX - 1.0);
            for (int j = 0; j < NT; j++)
                t[j] = -1.0 + 2.0 * (j + 1) / (NT + 1.0);
            assert_int_equal(qc_discretize(m, lv, NX, t, NT, &d), QC_OK);
            qc_model_free(m);
        }
        qc_capacity_result ba, fast;
        double *law = malloc(d->nx * sizeof *law);
        assert_non_null(law);
        assert_int_equal(ba_only(d, QC_BA_ACCELERATED, &ba, NULL), QC_OK);
        assert_int_equal(capacity(d, QC_BA_ACCELERATED, NULL, &fast, law), QC_OK);
        assert_true(fast.capacity_bits <= ba.upper_bound_bits + TOL_ROUND);
        assert_true(ba.capacity_bits <= fast.upper_bound_bits + TOL_ROUND);
        assert_true(fast.gap_bits <= TOL_BITS);
        double mi;
        assert_int_equal(qc_mutual_information(d, law, &mi), QC_OK);
        assert_true(fabs(mi * QC_LOG2E - fast.capacity_bits) <= TOL_MI);
        size_t support = 0;
        for (size_t x = 0; x < d->nx; x++)
            support += law[x] > 0.0;
        assert_true(support <= d->ny + 1);
        if (!(4 * fast.iterations <= ba.iterations))
            fail_msg("active set %zu steps, Blahut-Arimoto %zu iterations", fast.iterations,
                     ba.iterations);
        free(law);
        qc_dmc_free(d);
    }
}

/* ---- capacity under an input cost ---------------------------------- */

/* Binary asymmetric channel: 0 → (0.9, 0.1), 1 → (0.2, 0.8); costs 0
 * and 1, so the average cost is r = P(X = 1). */
#define BA_E0 0.1
#define BA_E1 0.2
static const double binary_asym[4] = {1.0 - BA_E0, BA_E0, BA_E1, 1.0 - BA_E1};
static const double binary_costs[2] = {0.0, 1.0};

/* I(r) in nats for P(X = 1) = r: h(q1) − (1 − r)h(e0) − r·h(e1) with
 * q1 = P(Y = 1) (Cover & Thomas, Thm 2.4.1: I = H(Y) − H(Y|X)). */
static double binary_asym_mi(double r)
{
    double q1 = (1.0 - r) * BA_E0 + r * (1.0 - BA_E1);
    return (h2_bits(q1) - (1.0 - r) * h2_bits(BA_E0) - r * h2_bits(BA_E1)) / QC_LOG2E;
}

/* dI/dr in nats: (1 − e1 − e0)·log((1 − q1)/q1) − h(e1) + h(e0). */
static double binary_asym_slope(double r)
{
    double q1 = (1.0 - r) * BA_E0 + r * (1.0 - BA_E1);
    return (1.0 - BA_E1 - BA_E0) * log((1.0 - q1) / q1) +
           (h2_bits(BA_E0) - h2_bits(BA_E1)) / QC_LOG2E;
}

static double neg_mi(double r, void *unused)
{
    (void)unused;
    return -binary_asym_mi(r);
}

/* Unconstrained optimum r* by GSL's Brent minimizer (an independent
 * 1-D maximization of the closed form). */
static double binary_asym_optimum(void)
{
    gsl_set_error_handler_off();
    gsl_min_fminimizer *m = gsl_min_fminimizer_alloc(gsl_min_fminimizer_brent);
    assert_non_null(m);
    gsl_function f = {neg_mi, NULL};
    assert_int_equal(gsl_min_fminimizer_set(m, &f, 0.5, 1e-6, 1.0 - 1e-6), GSL_SUCCESS);
    for (int i = 0; i < 200; i++) {
        assert_int_equal(gsl_min_fminimizer_iterate(m), GSL_SUCCESS);
        if (gsl_min_test_interval(gsl_min_fminimizer_x_lower(m),
                                  gsl_min_fminimizer_x_upper(m), 1e-12, 0.0) == GSL_SUCCESS)
            break;
    }
    double r = gsl_min_fminimizer_x_minimum(m);
    gsl_min_fminimizer_free(m);
    return r;
}

static void test_cost_binary_closed_form(void **state)
{
    (void)state;
    qc_dmc *d = make_dmc(2, 2, binary_asym);
    double r_star = binary_asym_optimum();
    const double budgets[] = {1e-6, 0.05, 0.2, 0.35};
    for (int m = 0; m < 2; m++) {
        for (size_t i = 0; i < sizeof budgets / sizeof budgets[0]; i++) {
            double beta = budgets[i];
            /* I is concave in r and r* > β, so C(β) = I(β): the
             * constraint holds with equality (Blahut 1972, capacity–cost) */
            assert_true(beta < r_star);
            qc_ba_options opt;
            qc_ba_options_default(&opt);
            opt.method = m ? QC_BA_ACCELERATED : QC_BA_PLAIN;
            opt.costs = binary_costs;
            opt.budget = beta;
            qc_capacity_result res;
            double law[2];
            assert_int_equal(qc_capacity(d, &opt, NULL, &res, law), QC_OK);
            expect_capacity(&res, binary_asym_mi(beta) * QC_LOG2E, "C(beta)");
            assert_int_equal(res.cost_active, 1);
            assert_true(res.cost <= beta * (1.0 + COST_RTOL));
            assert_true(fabs(res.cost - beta) <= COST_RTOL * beta);
            assert_true(fabs(law[1] - res.cost) <= TOL_ULP);
            /* the multiplier is the slope of C(β) (Blahut 1972) */
            double slope = binary_asym_slope(beta);
            if (!(fabs(res.multiplier - slope) <= TOL_SLOPE * slope))
                fail_msg("multiplier %.12g, slope %.12g", res.multiplier, slope);
        }
    }
    qc_dmc_free(d);
}

static void test_cost_bec(void **state)
{
    (void)state;
    /* BEC with erasure e: I = (1 − e)·H(X) (Cover & Thomas, §7.1.5), so
     * with costs 0 and 1, C(β) = (1 − e)·h2(β) for β ≤ 1/2 and the
     * multiplier is (1 − e)·ln((1 − β)/β) nats. At e = 1/4, β = 0.2 the
     * chord slope C/(1/2) used as the first guess is that multiplier
     * up to 3e-4, so the search ends at its first step. */
    const double e = 0.25;
    const double p[6] = {1.0 - e, e, 0.0, 0.0, e, 1.0 - e};
    const double costs[2] = {0.0, 1.0};
    qc_dmc *d = make_dmc(2, 3, p);
    const double budgets[] = {0.2, 0.05, 0.45};
    for (size_t k = 0; k < sizeof budgets / sizeof budgets[0]; k++) {
        double beta = budgets[k];
        qc_ba_options opt;
        qc_ba_options_default(&opt);
        opt.costs = costs;
        opt.budget = beta;
        qc_capacity_result res;
        assert_int_equal(qc_capacity(d, &opt, NULL, &res, NULL), QC_OK);
        expect_capacity(&res, (1.0 - e) * h2_bits(beta), "BEC with cost");
        assert_true(res.cost <= beta * (1.0 + COST_RTOL));
        assert_true(fabs(res.cost - beta) <= COST_RTOL * beta);
        double slope = (1.0 - e) * log((1.0 - beta) / beta);
        assert_true(fabs(res.multiplier - slope) <= TOL_SLOPE * slope);
    }
    qc_dmc_free(d);
}

static void test_cost_inactive(void **state)
{
    (void)state;
    qc_dmc *d = make_dmc(2, 2, binary_asym);
    double r_star = binary_asym_optimum();
    qc_ba_options opt;
    qc_ba_options_default(&opt);
    opt.costs = binary_costs;
    opt.budget = r_star + 0.01;
    qc_capacity_result res, free_res;
    assert_int_equal(qc_capacity(d, &opt, NULL, &res, NULL), QC_OK);
    assert_int_equal(res.cost_active, 0);
    assert_true(res.multiplier == 0.0);
    /* unconstrained optimum from the closed form and GSL's minimizer */
    expect_capacity(&res, binary_asym_mi(r_star) * QC_LOG2E, "inactive budget");
    assert_true(fabs(res.cost - r_star) <= TOL_ARGMAX);
    opt.costs = NULL;
    assert_int_equal(qc_capacity(d, &opt, NULL, &free_res, NULL), QC_OK);
    assert_true(fabs(free_res.capacity_bits - res.capacity_bits) <= TOL_BITS);
    qc_dmc_free(d);
}

static void test_cost_dominated_input(void **state)
{
    (void)state;
    /* a third input with the same row as input 1 but twice the cost
     * can never help: the answer is that of the binary channel */
    const double p[6] = {1.0 - BA_E0, BA_E0, BA_E1, 1.0 - BA_E1, BA_E1, 1.0 - BA_E1};
    const double costs[3] = {0.0, 1.0, 2.0};
    qc_dmc *d = make_dmc(3, 2, p);
    qc_ba_options opt;
    qc_ba_options_default(&opt);
    opt.costs = costs;
    opt.budget = 0.2;
    qc_capacity_result res;
    double law[3];
    assert_int_equal(qc_capacity(d, &opt, NULL, &res, law), QC_OK);
    expect_capacity(&res, binary_asym_mi(0.2) * QC_LOG2E, "dominated input");
    assert_true(law[2] < TOL_DOMINATED);
    qc_dmc_free(d);
}

static void test_cost_cheapest_only(void **state)
{
    (void)state;
    /* budget = cheapest cost: only the two free inputs may be used, so
     * C(β) is the capacity of their 2 x 3 sub-channel */
    const double p[9] = {0.7, 0.2, 0.1, 0.1, 0.3, 0.6, 0.0, 0.0, 1.0};
    const double costs[3] = {0.5, 0.5, 3.0};
    qc_dmc *d = make_dmc(3, 3, p), *sub = make_dmc(2, 3, p);
    qc_capacity_result res, subres;
    double law[3];
    assert_int_equal(capacity(sub, QC_BA_ACCELERATED, NULL, &subres, NULL), QC_OK);
    qc_ba_options opt;
    qc_ba_options_default(&opt);
    opt.costs = costs;
    opt.budget = 0.5;
    assert_int_equal(qc_capacity(d, &opt, NULL, &res, law), QC_OK);
    assert_int_equal(res.cost_active, 1);
    assert_true(res.cost <= 0.5 * (1.0 + COST_RTOL));
    assert_true(law[2] <= 1e-300);
    assert_true(fabs(res.capacity_bits - subres.capacity_bits) <= TOL_BITS + TOL_ROUND);
    assert_true(res.capacity_bits <= subres.upper_bound_bits + TOL_ROUND);
    assert_true(res.gap_bits <= TOL_BITS);
    qc_dmc_free(d);
    qc_dmc_free(sub);
}

static void test_cost_linear_piece(void **state)
{
    (void)state;
    /* Rows A = (1, 0), B = (0, 1), N = (1/2, 1/2) with costs 0, 1, 0.1.
     * Using A and N only gives f1(β) = h2(5β) − 10β bits, using A and B
     * only f2(β) = h2(β). Their common tangent touches f1 at u/5 and f2
     * at u with slope 5·L(u) − 10 = L(u), L(x) = log2((1 − x)/x), i.e.
     * L(u) = 2.5, u = 1/(1 + 2^2.5); between the touching points C(β)
     * is that line, h2(u) − 2.5·(u − β), reached only by time sharing
     * (hand derivation from Blahut 1972's concave C(β); a grid search
     * over the simplex with numpy agreed to 1e-8 bit). The tilted
     * problem at the multiplier has a whole segment of optima, so this
     * exercises the mixing of the two bracket ends. */
    const double p[6] = {1.0, 0.0, 0.0, 1.0, 0.5, 0.5};
    const double costs[3] = {0.0, 1.0, 0.1};
    const double u = 1.0 / (1.0 + pow(2.0, 2.5));
    qc_dmc *d = make_dmc(3, 2, p);
    const double budgets[3] = {0.05, 0.075, 0.1};
    for (int k = 0; k < 3; k++) {
        double beta = budgets[k];
        assert_true(beta > u / 5.0 && beta < u);
        qc_ba_options opt;
        qc_ba_options_default(&opt);
        opt.costs = costs;
        opt.budget = beta;
        qc_capacity_result res;
        assert_int_equal(qc_capacity(d, &opt, NULL, &res, NULL), QC_OK);
        expect_capacity(&res, h2_bits(u) - 2.5 * (u - beta), "linear piece");
        assert_true(fabs(res.cost - beta) <= COST_RTOL * beta);
        /* the slope is 2.5 bits per unit cost on the whole piece */
        assert_true(fabs(res.multiplier * QC_LOG2E - 2.5) <= TOL_SLOPE * 2.5);
    }
    qc_dmc_free(d);
}

static void test_cost_random_properties(void **state)
{
    (void)state;
    enum { NX = 6, NY = 7 };
    qc_ba_workspace *ws;
    assert_int_equal(qc_ba_workspace_alloc(NX, NY, &ws), QC_OK);
    for (int t = 0; t < 12; t++) {
        qc_dmc *d = random_channel(NX, NY);
        double costs[NX];
        for (int x = 0; x < NX; x++)
            costs[x] = 3.0 * uniform01();
        size_t cheapest = 0;
        for (size_t x = 1; x < NX; x++)
            if (costs[x] < costs[cheapest])
                cheapest = x;
        qc_ba_options opt;
        qc_ba_options_default(&opt);
        qc_capacity_result free_res;
        double law[NX], r[NX], mi;
        assert_int_equal(qc_capacity(d, &opt, ws, &free_res, law), QC_OK);
        double free_cost = 0.0;
        for (int x = 0; x < NX; x++)
            free_cost += law[x] * costs[x];
        opt.costs = costs;
        double c_prev = -1.0, c_at[3] = {0};
        for (int k = 0; k < 3; k++) {
            /* budgets strictly between the cheapest cost and the cost of
             * the unconstrained optimum */
            double frac = (k + 1) / 4.0;
            double beta = costs[cheapest] + frac * (free_cost - costs[cheapest]);
            opt.budget = beta;
            qc_capacity_result res;
            qc_status st = qc_capacity(d, &opt, ws, &res, law);
            if (st != QC_OK)
                fail_msg("channel %d budget %g: %s", t, beta, qc_last_error());
            assert_true(res.gap_bits <= TOL_BITS);
            assert_true(res.cost <= beta * (1.0 + COST_RTOL));
            double cost = 0.0;
            for (int x = 0; x < NX; x++)
                cost += law[x] * costs[x];
            assert_true(fabs(cost - res.cost) <= COST_ATOL * (1.0 + beta));
            assert_int_equal(qc_mutual_information(d, law, &mi), QC_OK);
            assert_true(fabs(mi * QC_LOG2E - res.capacity_bits) <= TOL_MI);
            assert_true(res.capacity_bits <= free_res.upper_bound_bits + TOL_ROUND);
            /* random laws that meet the budget stay below the bound */
            for (int j = 0; j < 20; j++) {
                random_law(r, NX, 0.3);
                double c = 0.0;
                for (int x = 0; x < NX; x++)
                    c += r[x] * costs[x];
                if (c > beta) {
                    double eta = (c - beta) / (c - costs[cheapest]);
                    for (int x = 0; x < NX; x++)
                        r[x] *= 1.0 - eta;
                    r[cheapest] += eta;
                }
                assert_int_equal(qc_mutual_information(d, r, &mi), QC_OK);
                assert_true(mi * QC_LOG2E <= res.upper_bound_bits + TOL_ROUND);
            }
            /* C(β) is non-decreasing (Blahut 1972) */
            assert_true(res.capacity_bits >= c_prev - TOL_BITS);
            c_prev = res.capacity_bits;
            c_at[k] = res.capacity_bits;
        }
        /* and concave: equally spaced budgets (Blahut 1972) */
        assert_true(c_at[1] >= 0.5 * (c_at[0] + c_at[2]) - 2 * TOL_BITS);
        qc_dmc_free(d);
    }
    qc_ba_workspace_free(ws);
}

static void test_cost_infeasible(void **state)
{
    (void)state;
    qc_dmc *d = make_dmc(2, 2, binary_asym);
    const double costs[2] = {1.25, 2.0};
    qc_ba_options opt;
    qc_ba_options_default(&opt);
    opt.costs = costs;
    opt.budget = 0.5;
    qc_capacity_result res;
    assert_int_equal(qc_capacity(d, &opt, NULL, &res, NULL), QC_EINFEASIBLE);
    assert_non_null(strstr(qc_last_error(), "budget 0.5"));
    assert_non_null(strstr(qc_last_error(), "cheapest input's cost 1.25 (input 1)"));
    qc_dmc_free(d);
}

/* ---- error paths --------------------------------------------------- */

static void expect_error(qc_status got, qc_status want, const char *needle)
{
    assert_int_equal(got, want);
    assert_message(needle);
}

static void test_bad_channel(void **state)
{
    (void)state;
    const double p[4] = {0.5, 0.4, 0.5, 0.5};
    qc_dmc *d = make_dmc(2, 2, p);
    qc_capacity_result res;
    expect_error(capacity(d, QC_BA_ACCELERATED, NULL, &res, NULL), QC_EINVAL,
                 "row 1 sums to 0.9");
    d->p[1] = 0.5;
    d->p[2] = NAN;
    expect_error(capacity(d, QC_BA_ACCELERATED, NULL, &res, NULL), QC_EINVAL,
                 "row 2, column 1: entry is not finite");
    qc_dmc_free(d);
}

static void test_bad_options(void **state)
{
    (void)state;
    qc_dmc *d = make_dmc(2, 2, binary_asym);
    qc_ba_options opt;
    qc_capacity_result res;
    const double zero_entry[2] = {1.0, 0.0}, negative[2] = {1.5, -0.5},
                 short_sum[2] = {0.5, 0.25}, nan_entry[2] = {NAN, 0.5};
    struct {
        const double *initial;
        const char *needle;
    } bad_initial[] = {
        {zero_entry, "initial input law: entry 2 is 0"},
        {negative, "initial input law: entry 2 is -0.5"},
        {short_sum, "initial input law sums to 0.75"},
        {nan_entry, "initial input law: entry 1 is nan"},
    };
    for (size_t i = 0; i < sizeof bad_initial / sizeof bad_initial[0]; i++) {
        qc_ba_options_default(&opt);
        opt.initial = bad_initial[i].initial;
        expect_error(qc_capacity(d, &opt, NULL, &res, NULL), QC_EINVAL,
                     bad_initial[i].needle);
    }
    const double neg_cost[2] = {0.0, -1.0}, nan_cost[2] = {NAN, 1.0};
    qc_ba_options_default(&opt);
    opt.costs = neg_cost;
    opt.budget = 1.0;
    expect_error(qc_capacity(d, &opt, NULL, &res, NULL), QC_EINVAL,
                 "cost of input 2 is -1");
    opt.costs = nan_cost;
    expect_error(qc_capacity(d, &opt, NULL, &res, NULL), QC_EINVAL,
                 "cost of input 1 is nan");
    opt.costs = binary_costs;
    opt.budget = NAN;
    expect_error(qc_capacity(d, &opt, NULL, &res, NULL), QC_EINVAL,
                 "'budget' must be finite");
    qc_ba_options_default(&opt);
    opt.tol_bits = 0.0;
    expect_error(qc_capacity(d, &opt, NULL, &res, NULL), QC_EINVAL, "'tol_bits'");
    qc_ba_options_default(&opt);
    opt.max_iterations = 0;
    expect_error(qc_capacity(d, &opt, NULL, &res, NULL), QC_EINVAL,
                 "'max_iterations' must be >= 1");
    qc_ba_options_default(&opt);
    opt.method = (qc_ba_method)7;
    expect_error(qc_capacity(d, &opt, NULL, &res, NULL), QC_EINVAL, "'method' 7");
    qc_dmc_free(d);
}

static void test_iteration_limit(void **state)
{
    (void)state;
    qc_dmc *d = near_degenerate_channel();
    for (int m = 0; m < 2; m++) {
        qc_ba_options opt;
        qc_ba_options_default(&opt);
        opt.method = m ? QC_BA_ACCELERATED : QC_BA_PLAIN;
        opt.max_iterations = 3;
        opt.prune = 0; /* Blahut–Arimoto's own iterations */
        qc_capacity_result res;
        double law[41];
        expect_error(qc_capacity(d, &opt, NULL, &res, law), QC_ENOCONV,
                     "iteration limit 3 with bounds");
        /* the bounds reached are still reported and certified */
        assert_int_equal(res.iterations, 3);
        assert_true(res.capacity_bits > 0.0);
        assert_true(res.upper_bound_bits > res.capacity_bits + TOL_BITS);
        assert_true(fabs(res.gap_bits - (res.upper_bound_bits - res.capacity_bits)) <= TOL_ULP);
        double mi;
        assert_int_equal(qc_mutual_information(d, law, &mi), QC_OK);
        assert_true(fabs(mi * QC_LOG2E - res.capacity_bits) <= TOL_MI);
    }
    qc_dmc_free(d);
}

static void test_cost_iteration_limit(void **state)
{
    (void)state;
    qc_dmc *d = near_degenerate_channel();
    double costs[41];
    for (int x = 0; x < 41; x++) {
        double level = -1.5 + 3.0 * x / 40.0;
        costs[x] = level * level; /* electrical power of the level */
    }
    qc_ba_options opt;
    qc_ba_options_default(&opt);
    opt.costs = costs;
    opt.budget = 0.5;
    qc_capacity_result res;
    double law[41];
    /* the multiplier search (prune = 0), then the active-set solve that
     * 41 candidates get by default, whose Newton steps count against the
     * same limit (a handful of steps solves this channel) */
    static const struct {
        int prune;
        size_t limit;
        const char *message;
    } cases[] = {{0, 30, "iteration limit 30"}, {1, 3, "iteration limit 3"}};
    for (size_t k = 0; k < sizeof cases / sizeof cases[0]; k++) {
        opt.prune = cases[k].prune;
        opt.max_iterations = cases[k].limit;
        expect_error(qc_capacity(d, &opt, NULL, &res, law), QC_ENOCONV, cases[k].message);
        assert_true(res.iterations <= cases[k].limit);
        assert_true(res.capacity_bits > 0.0 && res.capacity_bits <= res.upper_bound_bits);
        /* the law returned still meets the budget */
        double cost = 0.0;
        for (int x = 0; x < 41; x++)
            cost += law[x] * costs[x];
        assert_true(cost <= 0.5 * (1.0 + COST_RTOL));
    }
    qc_dmc_free(d);
}

static void test_workspace(void **state)
{
    (void)state;
    qc_ba_workspace *ws;
    expect_error(qc_ba_workspace_alloc(0, 3, &ws), QC_EINVAL, "workspace size 0 x 3");
    assert_null(ws);
    qc_ba_workspace_free(NULL);
    assert_int_equal(qc_ba_workspace_alloc(2, 2, &ws), QC_OK);
    const double p[9] = {1, 0, 0, 0, 1, 0, 0, 0, 1};
    qc_dmc *d = make_dmc(3, 3, p);
    qc_capacity_result res;
    expect_error(capacity(d, QC_BA_ACCELERATED, ws, &res, NULL), QC_EINVAL,
                 "workspace for 2 x 2 is too small for a 3 x 3 channel");
    qc_dmc_free(d);
    /* reuse across channels of different sizes within the capacity */
    d = make_dmc(2, 2, binary_asym);
    assert_int_equal(capacity(d, QC_BA_PLAIN, ws, &res, NULL), QC_OK);
    qc_dmc_free(d);
    const double one[2] = {0.25, 0.75};
    d = make_dmc(1, 2, one);
    assert_int_equal(capacity(d, QC_BA_PLAIN, ws, &res, NULL), QC_OK);
    assert_true(res.capacity_bits == 0.0);
    qc_dmc_free(d);
    qc_ba_workspace_free(ws);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_bsc),
        cmocka_unit_test(test_bec),
        cmocka_unit_test(test_z_channel),
        cmocka_unit_test(test_symmetric),
        cmocka_unit_test(test_noisy_typewriter),
        cmocka_unit_test(test_degenerate_shapes),
        cmocka_unit_test(test_random_properties),
        cmocka_unit_test(test_initial_law),
        cmocka_unit_test(test_accelerated_iterations),
        cmocka_unit_test(test_active_set_without_cost),
        cmocka_unit_test(test_cost_binary_closed_form),
        cmocka_unit_test(test_cost_bec),
        cmocka_unit_test(test_cost_inactive),
        cmocka_unit_test(test_cost_dominated_input),
        cmocka_unit_test(test_cost_cheapest_only),
        cmocka_unit_test(test_cost_linear_piece),
        cmocka_unit_test(test_cost_random_properties),
        cmocka_unit_test(test_cost_infeasible),
        cmocka_unit_test(test_bad_channel),
        cmocka_unit_test(test_bad_options),
        cmocka_unit_test(test_iteration_limit),
        cmocka_unit_test(test_cost_iteration_limit),
        cmocka_unit_test(test_workspace),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
