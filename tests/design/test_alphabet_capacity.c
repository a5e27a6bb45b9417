/* test_alphabet_capacity.c — the alphabet module with the capacity
 * engine: capacity under two average costs against a brute-force search,
 * the discrete optimal inputs that appear on level grids (amplitude
 * constraint, power constraint, photon counting with a peak), GMI ≤ MI ≤
 * capacity, designs under power and mean together, and level search with
 * the capacity objective. Built once the engine is part of the library. */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <cmocka.h>

#include "test_helpers.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "quantcap.h"

#define TOL_TIGHT 1e-12   /* rounding                                   */
#define TOL_ENGINE 1e-8   /* bits: engine tolerance plus margin         */
#define TOL_BRUTE 1e-4    /* bits: simplex grid search resolution       */
#define TOL_SHANNON 0.01  /* bits: fine grid + fine quantizer vs AWGN   */
#define MASS_POINT 1e-6   /* probability of a reported mass point       */
#define CLUSTER_MASS 1e-4 /* mass counted in a cluster at tolerance 1e-6 */
#define TOL_LAW 1e-4           /* probability: a mass of an optimized input law */
#define TOL_LEVEL_SEARCH 1e-3  /* level units: a level the search pins at the peak */
#define TOL_LEVEL_FLAT 0.1     /* level units: a level in a flat direction */

static qc_model *gauss(double sigma)
{
    qc_model *m;
    assert_int_equal(qc_model_alloc(&qc_model_gauss, &sigma, &m), QC_OK);
    return m;
}

static void request(qc_design_request *r, const qc_model *m, const double *levels, size_t n,
                    size_t cells)
{
    qc_design_request_default(r);
    r->channel.model = m;
    r->channel.levels = levels;
    r->channel.nlevels = n;
    r->quantizer.cells = cells;
    r->input.objective = QC_OBJECTIVE_CAPACITY;
    r->numerics.skip_snr_penalty = 1;
}

/* n equally spaced values on [lo, hi]. */
static void linspace(double lo, double hi, size_t n, double *out)
{
    for (size_t i = 0; i < n; i++)
        out[i] = lo + (hi - lo) * (double)i / (double)(n - 1);
}

/* Groups of adjacent levels carrying probability > least. */
static size_t clusters(const double *p, size_t n, double least)
{
    size_t c = 0;
    for (size_t i = 0; i < n; i++)
        if (p[i] > least && (i == 0 || !(p[i - 1] > least)))
            c++;
    return c;
}

static double mass_within(const double *levels, const double *p, size_t n, double lo, double hi)
{
    double s = 0.0;
    for (size_t i = 0; i < n; i++)
        if (levels[i] >= lo && levels[i] <= hi)
            s += p[i];
    return s;
}

/* ---- capacity under two costs ----------------------------------------- */

static void test_two_costs_brute_force(void **state)
{
    (void)state;
    /* a 3-input, 4-output channel; costs c1 = x², c2 = x for levels
     * {0, 1, 2} (power and mean of an intensity alphabet) */
    const double p[12] = {0.70, 0.20, 0.07, 0.03, 0.10, 0.50, 0.30, 0.10,
                          0.02, 0.08, 0.30, 0.60};
    qc_dmc *d;
    assert_int_equal(qc_dmc_alloc(3, 4, &d), QC_OK);
    memcpy(d->p, p, sizeof p);
    const double c1[3] = {0, 1, 4}, c2[3] = {0, 1, 2};
    const double budgets[][2] = {{1.2, 0.7}, {2.0, 0.9}, {0.8, 1.0}, {3.0, 0.5}, {9.0, 9.0}};
    qc_ba_options opt;
    qc_ba_options_default(&opt);
    opt.tol_bits = 1e-10;
    for (size_t k = 0; k < sizeof budgets / sizeof budgets[0]; k++) {
        qc_cost costs[2] = {{c1, budgets[k][0]}, {c2, budgets[k][1]}};
        qc_costs_result res;
        double law[3];
        qc_status st_ = qc_capacity_costs(d, &opt, costs, 2, NULL, &res, law);
        if (st_ != QC_OK)
            fail_msg("budgets %zu: %s", k, qc_last_error());
        /* brute force over the simplex on a 1/1000 grid (independent of
         * the engine: the definition of the constrained capacity) */
        double best = 0.0;
        const int G = 1000;
        for (int a = 0; a <= G; a++)
            for (int b = 0; a + b <= G; b++) {
                double r[3] = {a / (double)G, b / (double)G, (G - a - b) / (double)G};
                double e1 = 0, e2 = 0;
                for (int x = 0; x < 3; x++) {
                    e1 += r[x] * c1[x];
                    e2 += r[x] * c2[x];
                }
                if (e1 > budgets[k][0] || e2 > budgets[k][1])
                    continue;
                double mi;
                assert_int_equal(qc_mutual_information(d, r, &mi), QC_OK);
                best = fmax(best, mi * QC_LOG2E);
            }
        assert_true(res.capacity_bits >= best - TOL_TIGHT);
        assert_true(res.capacity_bits <= best + TOL_BRUTE);
        assert_true(res.upper_bound_bits >= res.capacity_bits);
        assert_true(res.upper_bound_bits - res.capacity_bits <= 1e-10 + TOL_TIGHT);
        /* the returned law meets both budgets and has the reported rate */
        double e1 = 0, e2 = 0, mi;
        for (int x = 0; x < 3; x++) {
            e1 += law[x] * c1[x];
            e2 += law[x] * c2[x];
        }
        assert_true(e1 <= budgets[k][0] * (1 + 1e-9) && e2 <= budgets[k][1] * (1 + 1e-9));
        assert_near(res.cost[0], e1, TOL_TIGHT);
        assert_int_equal(qc_mutual_information(d, law, &mi), QC_OK);
        assert_near(mi * QC_LOG2E, res.capacity_bits, TOL_TIGHT);
        /* the bound with the reported multipliers holds for the output law
         * of any law: C ≤ max_x[D_x − s1c1 − s2c2] + s1β1 + s2β2 (Lagrange
         * duality; Boyd & Vandenberghe, Convex Optimization, §5.2) */
        assert_true(res.multiplier[0] >= 0.0 && res.multiplier[1] >= 0.0);
        double q[4];
        qc_output_law(d, law, q);
        double mx = -INFINITY;
        for (int x = 0; x < 3; x++)
            mx = fmax(mx, qc_divergence(d->p + 4 * x, q, 4) - res.multiplier[0] * c1[x] -
                              res.multiplier[1] * c2[x]);
        double dual = (mx + res.multiplier[0] * budgets[k][0] +
                       res.multiplier[1] * budgets[k][1]) * QC_LOG2E;
        assert_true(dual >= best - TOL_TIGHT);
    }
    /* one cost: the engine's own answer */
    qc_cost one = {c1, 1.0};
    qc_costs_result res;
    assert_int_equal(qc_capacity_costs(d, &opt, &one, 1, NULL, &res, NULL), QC_OK);
    opt.costs = c1;
    opt.budget = 1.0;
    qc_capacity_result cr;
    assert_int_equal(qc_capacity(d, &opt, NULL, &cr, NULL), QC_OK);
    assert_near(res.capacity_bits, cr.capacity_bits, TOL_ENGINE);
    opt.costs = NULL;
    /* infeasible budgets name the cost */
    qc_cost bad[2] = {{c1, -1.0}, {c2, 1.0}};
    assert_int_equal(qc_capacity_costs(d, &opt, bad, 2, NULL, &res, NULL), QC_EINFEASIBLE);
    assert_non_null(strstr(qc_last_error(), "cost 1"));
    /* opposed costs: c3 ≤ 1.2 needs P(x=1) ≥ 0.4, c4 ≤ 1.2 needs
     * P(x=1) ≤ 0.6; with budgets 0.1 no law meets both */
    const double c3[3] = {2, 0, 2}, c4[3] = {0, 2, 0};
    qc_cost clash[2] = {{c3, 1.2}, {c4, 1.2}};
    double law[3];
    assert_int_equal(qc_capacity_costs(d, &opt, clash, 2, NULL, &res, law), QC_OK);
    assert_true(law[1] >= 0.4 - 1e-9 && law[1] <= 0.6 + 1e-9);
    assert_true(res.upper_bound_bits - res.capacity_bits <= 1e-10 + TOL_TIGHT);
    qc_cost none_ok[2] = {{c3, 0.1}, {c4, 0.1}};
    assert_int_equal(qc_capacity_costs(d, &opt, none_ok, 2, NULL, &res, NULL),
                     QC_EINFEASIBLE);
    qc_dmc_free(d);
}

/* ---- discrete optimal inputs on level grids ---------------------------- */

/* Fine uniform quantizer of 2^10 cells over [−R, R]. */
enum { FINE_T = 1023 };
static double fine_t[FINE_T];
static void fine_thresholds(double range)
{
    for (size_t j = 0; j < FINE_T; j++)
        fine_t[j] = -range + 2.0 * range * (double)(j + 1) / (FINE_T + 1);
}

static void test_amplitude_constraint(void **state)
{
    (void)state;
    /* σ = 1, |x| ≤ A (Smith, Information and Control 18, 1971; Sharma &
     * Shamai, ISITA 2008): equiprobable ±A up to A ≈ 1.67, then a third
     * mass point at 0 */
    qc_model *m = gauss(1.0);
    const double amps[2] = {1.2, 2.2};
    fine_thresholds(9.0);
    for (int k = 0; k < 2; k++) {
        double A = amps[k];
        enum { N = 45 };
        double grid[N];
        linspace(-A, A, N, grid); /* contains 0 */
        qc_constraints c;
        qc_constraints_none(&c);
        c.peak = A;
        qc_design_request r;
        request(&r, m, grid, N, FINE_T + 1);
        r.quantizer.kind = QC_QUANTIZER_FIXED;
        r.quantizer.thresholds = fine_t;
        r.quantizer.nthresholds = FINE_T;
        r.input.constraints = &c;
        r.numerics.tol_bits = 1e-10;
        qc_design_result res;
        assert_int_equal(qc_design(&r, &res), QC_OK);
        assert_true(res.upper_bound_bits - res.rate_bits <= 1e-10 + TOL_TIGHT);
        double ends = res.input[0] + res.input[N - 1];
        double centre = mass_within(grid, res.input, N, -0.25, 0.25);
        if (k == 0) {
            assert_near(res.input[0], 0.5, TOL_LAW);
            assert_near(res.input[N - 1], 0.5, TOL_LAW);
            assert_int_equal(clusters(res.input, N, MASS_POINT), 2);
            /* the rate is the binary-input one: ±A equiprobable through
             * the same quantizer */
            const double bin[2] = {-A, A};
            qc_design_request rb = r;
            rb.input.objective = QC_OBJECTIVE_MI;
            rb.channel.levels = bin;
            rb.channel.nlevels = 2;
            rb.input.constraints = NULL;
            qc_design_result b;
            assert_int_equal(qc_design(&rb, &b), QC_OK);
            assert_near(res.rate_bits, b.rate_bits, TOL_ENGINE);
            qc_design_result_clear(&b);
        } else {
            assert_true(res.input[0] > 0.2 && res.input[N - 1] > 0.2);
            assert_true(centre > 0.1); /* the third point at 0 */
            assert_near(ends + centre, 1.0, TOL_LAW);
            assert_int_equal(clusters(res.input, N, MASS_POINT), 3);
        }
        qc_design_result_clear(&res);
    }
    qc_model_free(m);
}

static void test_power_constraint(void **state)
{
    (void)state;
    /* a fine grid with E[x²] ≤ P and a fine quantizer approach the AWGN
     * capacity ½·log2(1 + P/σ²) at 5 dB (C. E. Shannon, "A mathematical
     * theory of communication", Bell Syst. Tech. J. 27, 1948) */
    qc_model *m = gauss(1.0);
    double P = pow(10.0, 0.5);
    enum { N = 81 };
    double grid[N];
    linspace(-6.0, 6.0, N, grid);
    fine_thresholds(10.0);
    qc_constraints c;
    qc_constraints_none(&c);
    c.power = P;
    qc_design_request r;
    request(&r, m, grid, N, FINE_T + 1);
    r.quantizer.kind = QC_QUANTIZER_FIXED;
    r.quantizer.thresholds = fine_t;
    r.quantizer.nthresholds = FINE_T;
    r.input.constraints = &c;
    r.numerics.tol_bits = 1e-5;
    qc_design_result res;
    assert_int_equal(qc_design(&r, &res), QC_OK);
    double shannon = 0.5 * log2(1.0 + P);
    assert_true(res.rate_bits >= shannon - TOL_SHANNON);
    assert_true(res.upper_bound_bits <= shannon + 1e-9); /* nothing beats it */
    assert_true(res.average_power <= P * (1.0 + 1e-9));
    qc_design_result_clear(&res);

    /* a K-cell quantizer: the optimal input has at most K + 1 mass points
     * (Singh, Dabeer, Madhow, IEEE Trans. Commun. 57(12), 2009), here
     * clusters of adjacent grid levels */
    double grid2[61];
    linspace(-4.0, 4.0, 61, grid2);
    for (size_t K = 2; K <= 4; K *= 2) {
        request(&r, m, grid2, 61, K);
        r.input.constraints = &c;
        r.numerics.tol_bits = 1e-6; /* the law's stray mass stays below 1e-4 */
        r.numerics.fine_cells = 1024;
        assert_int_equal(qc_design(&r, &res), QC_OK);
        size_t cl = clusters(res.input, 61, CLUSTER_MASS);
        assert_true(cl >= 2 && cl <= K + 1);
        assert_true(res.average_power <= P * (1.0 + 1e-9));
        qc_design_result_clear(&res);
    }
    qc_model_free(m);
}

static void test_photon_counting_peak(void **state)
{
    (void)state;
    /* discrete-time Poisson channel, no background, peak A photons:
     * the optimal input is discrete (Shamai, IEE Proc. 1990); 0 and A are
     * mass points (Cao, Hranilovic, Chen, IEEE Trans. Commun. 2014); for a
     * small peak it is binary {0, A} (same sources; the threshold peak is
     * above 1 photon, from memory) */
    const double amps[2] = {1.0, 10.0};
    for (int k = 0; k < 2; k++) {
        double A = amps[k], params[2] = {1.0, 0.0}; /* signal, background */
        qc_model *m;
        assert_int_equal(qc_model_alloc(&qc_model_poisson, params, &m), QC_OK);
        enum { N = 41 };
        double grid[N];
        linspace(0.0, A, N, grid);
        /* one cell per count up to 4A + 20: no quantization loss to speak of */
        size_t K = (size_t)(4.0 * A) + 21;
        double *t = malloc((K - 1) * sizeof *t);
        for (size_t j = 0; j + 1 < K; j++)
            t[j] = (double)(j + 1);
        qc_constraints c;
        qc_constraints_none(&c);
        c.peak = A;
        c.intensity = 1;
        qc_design_request r;
        request(&r, m, grid, N, K);
        r.quantizer.kind = QC_QUANTIZER_FIXED;
        r.quantizer.thresholds = t;
        r.quantizer.nthresholds = K - 1;
        r.input.constraints = &c;
        r.numerics.tol_bits = 1e-10;
        qc_design_result res;
        assert_int_equal(qc_design(&r, &res), QC_OK);
        assert_true(res.input[0] > 0.05 && res.input[N - 1] > 0.05);
        if (k == 0)
            assert_int_equal(clusters(res.input, N, MASS_POINT), 2);
        else
            assert_true(clusters(res.input, N, MASS_POINT) >= 3);
        assert_true(res.rate_bits <= res.upper_bound_bits);
        qc_design_result_clear(&res);
        free(t);
        qc_model_free(m);
    }
}

/* ---- orderings -------------------------------------------------------- */

static void test_gmi_mi_capacity(void **state)
{
    (void)state;
    const double pam[4] = {-3, -1, 1, 3};
    const double sig[] = {0.3, 0.7, 1.5};
    qc_ba_options opt;
    qc_ba_options_default(&opt);
    opt.tol_bits = 1e-10;
    for (size_t s = 0; s < 3; s++) {
        qc_model *m = gauss(sig[s]);
        for (size_t bits = 1; bits <= 4; bits++) {
            for (int obj = 0; obj < QC_OBJECTIVE_COUNT; obj++) {
                for (int q = 0; q < QC_QUANTIZER_COUNT; q++) {
                    if (q == QC_QUANTIZER_FIXED || q == QC_QUANTIZER_CONVERTER)
                        continue; /* given thresholds; the converter: test_converter.c */
                    qc_design_request r;
                    request(&r, m, pam, 4, (size_t)1 << bits);
                    r.input.objective = (qc_objective)obj;
                    r.quantizer.kind = (qc_quantizer_kind)q;
                    qc_design_result res;
                    assert_int_equal(qc_design(&r, &res), QC_OK);
                    qc_capacity_result cr;
                    assert_int_equal(qc_capacity(res.channel, &opt, NULL, &cr, NULL), QC_OK);
                    /* GMI ≤ MI (G. Caire, G. Taricco, E. Biglieri,
                     * "Bit-interleaved coded modulation", IEEE Trans. Inf.
                     * Theory 44(3), 1998) ≤ capacity of the same channel
                     * (capacity is the largest MI) */
                    assert_true(res.gmi_bits <= res.mi_bits + TOL_TIGHT);
                    assert_true(res.mi_bits <= cr.upper_bound_bits + TOL_TIGHT);
                    assert_true(res.rate_bits <= cr.upper_bound_bits + TOL_ENGINE);
                    qc_design_result_clear(&res);
                }
            }
        }
        qc_model_free(m);
    }
}

/* ---- power and mean together ----------------------------------------- */

static void test_power_and_mean_design(void **state)
{
    (void)state;
    /* intensity levels 0…2 with signal-dependent noise (invented
     * example); power 0.8 and mean 0.55 both bind */
    double params[3] = {0.2, 0.05, 0.0}; /* sigma0, a, b */
    qc_model *m;
    assert_int_equal(qc_model_alloc(&qc_model_gauss_sd, params, &m), QC_OK);
    enum { N = 21 };
    double grid[N];
    linspace(0.0, 2.0, N, grid);
    qc_constraints both, power_only, mean_only;
    qc_constraints_none(&both);
    both.power = 0.8;
    both.mean = 0.55;
    both.intensity = 1;
    power_only = both;
    power_only.mean = NAN;
    mean_only = both;
    mean_only.power = NAN;
    qc_design_request r;
    request(&r, m, grid, N, 8);
    r.numerics.fine_cells = 512;
    r.numerics.tol_bits = 1e-7;
    qc_design_result b, p, mn;
    r.input.constraints = &both;
    assert_int_equal(qc_design(&r, &b), QC_OK);
    r.input.constraints = &power_only;
    assert_int_equal(qc_design(&r, &p), QC_OK);
    r.input.constraints = &mean_only;
    assert_int_equal(qc_design(&r, &mn), QC_OK);
    assert_true(b.average_power <= 0.8 * (1 + 1e-9));
    assert_true(b.average_level <= 0.55 * (1 + 1e-9));
    assert_true(b.rate_bits <= b.upper_bound_bits);
    assert_true(b.upper_bound_bits - b.rate_bits <= r.numerics.tol_bits + TOL_TIGHT);
    /* each single-constraint optimum violates the other constraint */
    assert_true(p.average_level > 0.55 && mn.average_power > 0.8);
    /* a smaller feasible set never raises the capacity of the same
     * channel: the two-constraint law rated on each single-constraint
     * design's channel stays below that design's certified bound */
    assert_true(b.rate_bits <= p.upper_bound_bits + 1e-6);
    assert_true(b.rate_bits <= mn.upper_bound_bits + 1e-6);
    qc_design_result_clear(&b);
    qc_design_result_clear(&p);
    qc_design_result_clear(&mn);
    qc_model_free(m);
}

/* ---- level search with the capacity objective ------------------------- */

static void test_optimize_levels_capacity(void **state)
{
    (void)state;
    /* three levels in |x| ≤ 1, σ = 0.25, 2-bit quantizer: all three
     * carry mass, and the search must do at least as well as the start
     * and as the symmetric placement −1, 0, 1 */
    qc_model *m = gauss(0.25);
    const double start[3] = {-1.0, 0.3, 1.0}, sym[3] = {-1.0, 0.0, 1.0};
    qc_constraints c;
    qc_constraints_none(&c);
    c.peak = 1.0;
    qc_design_request r;
    request(&r, m, start, 3, 4);
    r.input.constraints = &c;
    r.numerics.fine_cells = 256;
    r.numerics.tol_bits = 1e-8;
    qc_design_result base, symmetric, opt;
    assert_int_equal(qc_design(&r, &base), QC_OK);
    r.channel.levels = sym;
    assert_int_equal(qc_design(&r, &symmetric), QC_OK);
    r.channel.levels = start;
    r.input.optimize_levels = 1;
    r.input.level_starts = 1;
    assert_int_equal(qc_design(&r, &opt), QC_OK);
    assert_true(opt.levels_optimized);
    assert_true(opt.rate_bits >= base.rate_bits - 1e-8);
    assert_true(opt.rate_bits >= symmetric.rate_bits - 1e-6);
    for (size_t i = 0; i < 3; i++)
        assert_true(fabs(opt.levels[i]) <= 1.0 + TOL_TIGHT);
    /* the outer levels stay at the peak, the middle one near 0 (the rate
     * grows with the spread; symmetric channel) */
    assert_near(opt.levels[0], -1.0, TOL_LEVEL_SEARCH);
    assert_near(opt.levels[2], 1.0, TOL_LEVEL_SEARCH);
    assert_near(opt.levels[1], 0.0, TOL_LEVEL_FLAT);
    qc_design_result_clear(&base);
    qc_design_result_clear(&symmetric);
    qc_design_result_clear(&opt);
    qc_model_free(m);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_two_costs_brute_force),
        cmocka_unit_test(test_amplitude_constraint),
        cmocka_unit_test(test_power_constraint),
        cmocka_unit_test(test_photon_counting_peak),
        cmocka_unit_test(test_gmi_mi_capacity),
        cmocka_unit_test(test_power_and_mean_design),
        cmocka_unit_test(test_optimize_levels_capacity),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
