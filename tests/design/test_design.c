/* test_design.c — qc_design and qc_design_compare: binary-input AWGN
 * closed forms, low-SNR behaviour of the 1-bit quantizer, orderings
 * between strategies and bit depths, grid independence of the optimal
 * design, photon-counting thresholds against exhaustive search, the SNR
 * penalty, and the bad-input paths. */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <cmocka.h>

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include <gsl/gsl_math.h> /* M_PI, M_SQRT2 */

#include "quantcap.h"
#include "test_helpers.h"

#define TOL_TIGHT 1e-12   /* rounding */
#define TOL_RATE 1e-10    /* bits: a designed rate against a closed form */
#define TOL_ORDER 1e-12   /* bits: slack in "never worse" comparisons */
#define TOL_GRID 1e-7     /* thresholds from different fine grids */
#define TOL_HALF 1e-3     /* bits: the rate-½ BPSK limit */
#define TOL_KL 0.005      /* relative: 2/π at −30 dB (Koch–Lapidoth) */
#define TOL_PEN_DB 0.01   /* dB */
#define TOL_THRESHOLD 1e-7   /* level units: a threshold that symmetry puts at 0 */
#define TOL_SNR_DB 1e-9      /* dB: operating SNR recomputed from the parameters */
#define TOL_QUAD_REL 1e-6    /* relative: unquantized MI by quadrature vs the design */
#define TOL_MIRROR 1e-8      /* level units: mirrored thresholds of a symmetric design */
#define TOL_ENGINE 1e-8      /* bits: a capacity design against its closed form */
#define TOL_LAW 1e-4         /* probability: a mass of an optimized input law */
#define TOL_LAW_SUM 1e-9     /* a reported input law sums to 1 */
#define TOL_MI_BITS 1e-9     /* bits: MI recomputed from the reported channel and law */
#define TOL_SHANNON 0.01     /* bits: fine grid and quantizer against AWGN capacity */
#define TOL_CELL_LIMIT 1e-9 /* bits: a rate at its limit log2(cells) */
#define TOL_QUAD_ERR 1e-9 /* bits: error estimate of an adaptive quadrature */

static qc_model *gauss(double sigma)
{
    qc_model *m;
    assert_int_equal(qc_model_alloc(&qc_model_gauss, &sigma, &m), QC_OK);
    return m;
}

static void request(qc_design_request *r, const qc_model *m, const double *levels,
                    size_t n, size_t cells, qc_quantizer_kind kind)
{
    qc_design_request_default(r);
    r->channel.model = m;
    r->channel.levels = levels;
    r->channel.nlevels = n;
    r->quantizer.cells = cells;
    r->quantizer.kind = kind;
}

static double h2(double p) { return qc_binary_entropy(p) * QC_LOG2E; }

/* ---- binary-input AWGN ------------------------------------------------ */

static void test_bpsk_one_bit_closed_form(void **state)
{
    (void)state;
    const double levels[2] = {-1.0, 1.0}, zero = 0.0;
    const double snr_db[] = {-10.0, -3.0, 0.0, 3.0, 6.0, 10.0};
    for (size_t i = 0; i < sizeof snr_db / sizeof *snr_db; i++) {
        double snr = pow(10.0, snr_db[i] / 10.0);
        qc_model *m = gauss(1.0 / sqrt(snr));
        /* hard decision: a binary symmetric channel with crossover
         * Q(√snr) = P(N(√snr, 1) < 0), so C = 1 − h2(Q(√snr)) (C. E. Shannon,
         * "A mathematical theory of communication", Bell Syst. Tech. J. 27,
         * 1948; Q via the C library's erfc) */
        double want = 1.0 - h2(0.5 * erfc(sqrt(snr) / M_SQRT2));
        for (int k = 0; k < QC_QUANTIZER_COUNT; k++) {
            qc_design_request r;
            request(&r, m, levels, 2, 2, (qc_quantizer_kind)k);
            r.quantizer.thresholds = &zero;
            r.quantizer.nthresholds = 1;
            r.numerics.skip_snr_penalty = 1;
            qc_converter conv; /* an ideal 1-bit converter: its transition at 0 */
            qc_converter_default(&conv, -1.0, 1.0);
            r.quantizer.converter = &conv;
            qc_design_result res;
            assert_int_equal(qc_design(&r, &res), QC_OK);
            assert_true(fabs(res.rate_bits - want) <= TOL_RATE);
            assert_true(fabs(res.thresholds[0]) <= TOL_THRESHOLD);
            assert_true(res.upper_bound_bits == res.rate_bits);
            assert_true(res.rate_bits <= res.unquantized_bits + TOL_ORDER);
            assert_true(fabs(res.loss_bits - (res.unquantized_bits - res.rate_bits)) <=
                        TOL_TIGHT);
            /* gauss SNR = E[x²]/σ² */
            assert_true(fabs(res.snr_db - snr_db[i]) <= TOL_SNR_DB);
            qc_design_result_clear(&res);
        }
        qc_model_free(m);
    }
}

static void test_bpsk_rate_half_limit(void **state)
{
    (void)state;
    /* Unquantized BPSK capacity is ½ bit at snr = Eb/N0 = 0.187 dB
     * (S.-Y. Chung, G. D. Forney, T. J. Richardson, R. Urbanke, "On the
     * design of low-density parity-check codes within 0.0045 dB of the
     * Shannon limit", IEEE Commun. Lett. 5(2), 2001). */
    const double levels[2] = {-1.0, 1.0};
    qc_model *m = gauss(1.0 / sqrt(pow(10.0, 0.187 / 10.0)));
    qc_design_request r;
    request(&r, m, levels, 2, 2, QC_QUANTIZER_OPTIMAL);
    r.numerics.skip_snr_penalty = 1;
    qc_design_result res;
    assert_int_equal(qc_design(&r, &res), QC_OK);
    assert_true(fabs(res.unquantized_bits - 0.5) <= TOL_HALF);
    assert_true(res.unquantized_err_bits < TOL_QUAD_ERR);
    qc_design_result_clear(&res);
    qc_model_free(m);
}

static void test_low_snr_two_over_pi(void **state)
{
    (void)state;
    /* Koch & Lapidoth, IEEE Trans. IT 59(9), 2013: at low SNR the 1-bit
     * symmetric quantizer keeps 2/π of the capacity, a 10·log10(π/2) =
     * 1.96 dB penalty. */
    const double levels[2] = {-1.0, 1.0};
    qc_model *m = gauss(1.0 / sqrt(1e-3)); /* −30 dB */
    qc_design_request r;
    request(&r, m, levels, 2, 2, QC_QUANTIZER_OPTIMAL);
    qc_design_result res;
    assert_int_equal(qc_design(&r, &res), QC_OK);
    double ratio = res.rate_bits / res.unquantized_bits;
    assert_true(fabs(ratio / (2.0 / M_PI) - 1.0) <= TOL_KL);
    assert_true(fabs(res.snr_penalty_db - 10.0 * log10(M_PI / 2.0)) <= TOL_PEN_DB);
    /* The penalty is what it says: the unquantized receiver at
     * snr − penalty reaches the quantized rate. */
    qc_model *weaker;
    assert_int_equal(qc_model_scale_snr(m, pow(10.0, -res.snr_penalty_db / 10.0),
                                        &weaker),
                     QC_OK);
    double mi;
    assert_int_equal(qc_unquantized_mi(weaker, levels, res.input, 2, &mi, NULL), QC_OK);
    assert_true(fabs(mi * QC_LOG2E - res.rate_bits) <= TOL_QUAD_REL * res.rate_bits);
    qc_model_free(weaker);
    qc_design_result_clear(&res);
    qc_model_free(m);
}

static void test_bpsk_optimal_symmetric(void **state)
{
    (void)state;
    const double levels[2] = {-1.0, 1.0};
    qc_model *m = gauss(1.0);
    double prev = 0.0;
    for (size_t bits = 1; bits <= 4; bits++) {
        size_t K = (size_t)1 << bits;
        qc_design_request r;
        request(&r, m, levels, 2, K, QC_QUANTIZER_OPTIMAL);
        r.numerics.skip_snr_penalty = 1;
        qc_design_result res;
        assert_int_equal(qc_design(&r, &res), QC_OK);
        /* symmetric channel and law: symmetric thresholds (common practice) */
        for (size_t j = 0; j < K - 1; j++)
            assert_true(fabs(res.thresholds[j] + res.thresholds[K - 2 - j]) <= TOL_MIRROR);
        assert_true(res.rate_bits > prev);
        assert_true(res.fine_cells >= K);
        prev = res.rate_bits;
        qc_design_result_clear(&res);
    }
    qc_model_free(m);
}

/* ---- orderings between strategies and bit depths ---------------------- */

static void test_orderings(void **state)
{
    (void)state;
    const double bpsk[2] = {-1.0, 1.0}, pam4[4] = {-3.0, -1.0, 1.0, 3.0};
    const double ook[3] = {0.0, 1.0, 2.5};
    const double ook_law[3] = {0.5, 0.3, 0.2};
    struct {
        const double *levels, *law;
        size_t n;
    } sets[] = {{bpsk, NULL, 2}, {pam4, NULL, 4}, {ook, ook_law, 3}};
    const double snr_db[] = {0.0, 8.0, 16.0};
    for (size_t s = 0; s < 3; s++)
        for (size_t i = 0; i < 3; i++) {
            double sigma = 1.0 / sqrt(pow(10.0, snr_db[i] / 10.0));
            qc_model *m = gauss(sigma);
            double prev = 0.0;
            for (size_t bits = 1; bits <= 4; bits++) {
                size_t K = (size_t)1 << bits;
                qc_design_request r;
                request(&r, m, sets[s].levels, sets[s].n, K, QC_QUANTIZER_OPTIMAL);
                r.input.probabilities = sets[s].law;
                r.numerics.skip_snr_penalty = 1;
                qc_design_comparison c;
                assert_int_equal(qc_design_compare(&r, &c), QC_OK);
                assert_int_equal(c.count, 3);
                const qc_design_result *opt = NULL;
                for (size_t k = 0; k < c.count; k++)
                    if (c.kind[k] == QC_QUANTIZER_OPTIMAL)
                        opt = &c.result[k];
                assert_non_null(opt);
                for (size_t k = 0; k < c.count; k++) {
                    const qc_design_result *x = &c.result[k];
                    assert_int_equal(c.status[k], QC_OK);
                    /* data processing: never above the unquantized rate */
                    assert_true(x->rate_bits <= x->unquantized_bits + TOL_ORDER);
                    /* the MI-optimal design is never worse */
                    assert_true(opt->rate_bits >= x->rate_bits - TOL_ORDER);
                }
                /* more bits never lower the optimal rate */
                assert_true(opt->rate_bits >= prev - TOL_ORDER);
                prev = opt->rate_bits;
                qc_design_comparison_clear(&c);
            }
            qc_model_free(m);
        }
}

static void test_optimal_grid_independent(void **state)
{
    (void)state;
    const double levels[4] = {-3.0, -1.0, 1.0, 3.0};
    qc_model *m = gauss(0.6);
    qc_design_result a, b;
    qc_design_request r;
    request(&r, m, levels, 4, 8, QC_QUANTIZER_OPTIMAL);
    r.numerics.skip_snr_penalty = 1;
    r.numerics.fine_cells = 64;
    assert_int_equal(qc_design(&r, &a), QC_OK);
    assert_int_equal(a.fine_cells, 64);
    r.numerics.fine_cells = 8192;
    assert_int_equal(qc_design(&r, &b), QC_OK);
    /* the refinement removes the grid: same thresholds and rate */
    for (size_t j = 0; j < 7; j++)
        assert_true(fabs(a.thresholds[j] - b.thresholds[j]) <= TOL_GRID);
    assert_true(fabs(a.rate_bits - b.rate_bits) <= TOL_ORDER);
    /* and the gradient of I vanishes there: moving any threshold by ±δ
     * loses rate */
    double t[7];
    for (size_t j = 0; j < 7; j++) {
        for (int sgn = -1; sgn <= 1; sgn += 2) {
            memcpy(t, b.thresholds, sizeof t);
            t[j] += sgn * 1e-3;
            qc_dmc *d;
            double mi;
            assert_int_equal(qc_discretize(m, levels, 4, t, 7, &d), QC_OK);
            assert_int_equal(qc_mutual_information(d, b.input, &mi), QC_OK);
            assert_true(mi * QC_LOG2E < b.rate_bits);
            qc_dmc_free(d);
        }
    }
    qc_design_result_clear(&a);
    qc_design_result_clear(&b);
    qc_model_free(m);
}

/* ---- photon counting --------------------------------------------------- */

static double count_mi(qc_model *m, const double *levels, const double *law,
                       const double *t, size_t nt)
{
    qc_dmc *d;
    double mi;
    assert_int_equal(qc_discretize(m, levels, 2, t, nt, &d), QC_OK);
    assert_int_equal(qc_mutual_information(d, law, &mi), QC_OK);
    qc_dmc_free(d);
    return mi * QC_LOG2E;
}

static void test_photon_counting_exhaustive(void **state)
{
    (void)state;
    /* OOK on the photon-counting model: level 0 gives the background
     * count only, level 1 adds the signal photons. */
    const double backgrounds[] = {0.2, 1.5};
    const double signals[] = {4.0, 12.0};
    const double law[2] = {0.6, 0.4}, levels[2] = {0.0, 1.0};
    for (size_t ib = 0; ib < 2; ib++)
        for (size_t is = 0; is < 2; is++) {
            qc_model *m;
            const double params[2] = {signals[is], backgrounds[ib]};
            assert_int_equal(qc_model_alloc(&qc_model_poisson, params, &m), QC_OK);
            const double top = 45.0; /* beyond every count that matters */
            for (size_t K = 2; K <= 4; K++) {
                qc_design_request r;
                request(&r, m, levels, 2, K, QC_QUANTIZER_OPTIMAL);
                r.input.probabilities = law;
                r.numerics.skip_snr_penalty = 1;
                qc_design_result res;
                assert_int_equal(qc_design(&r, &res), QC_OK);
                for (size_t j = 0; j < K - 1; j++)
                    assert_true(res.thresholds[j] == floor(res.thresholds[j]));
                /* exhaustive search over integer thresholds 1 ≤ t1 < … < top */
                double best = -1.0, t[3];
                for (t[0] = 1; t[0] < top; t[0]++) {
                    if (K == 2) {
                        best = fmax(best, count_mi(m, levels, law, t, 1));
                        continue;
                    }
                    for (t[1] = t[0] + 1; t[1] < top; t[1]++) {
                        if (K == 3) {
                            best = fmax(best, count_mi(m, levels, law, t, 2));
                            continue;
                        }
                        for (t[2] = t[1] + 1; t[2] < top; t[2]++)
                            best = fmax(best, count_mi(m, levels, law, t, 3));
                    }
                }
                assert_true(fabs(res.rate_bits - best) <= TOL_TIGHT);
                qc_design_result_clear(&res);
            }
            qc_model_free(m);
        }
}

/* ---- capacity objective --------------------------------------------------- */

static void test_capacity_one_bit_antipodal(void **state)
{
    (void)state;
    /* Nine levels in [−A, A] with the symmetric 1-bit quantizer: binary
     * antipodal input ±A is optimal (J. Singh, O. Dabeer, U. Madhow, "On
     * the limits of communication with low-precision analog-to-digital
     * conversion at the receiver", IEEE Trans. Commun. 57(12), 2009) and
     * the channel is then a BSC with crossover Q(A/σ): C = 1 − h2(Q(A/σ))
     * (T. M. Cover, J. A. Thomas, Elements of Information Theory, 2nd ed.,
     * Wiley, 2006, §7.1.4). */
    const double A = 1.5, zero = 0.0;
    double levels[9];
    for (size_t i = 0; i < 9; i++)
        levels[i] = -A + 2.0 * A * (double)i / 8.0;
    for (int k = 0; k < 2; k++) {
        qc_model *m = gauss(k == 0 ? 1.0 : 0.5);
        qc_design_request r;
        request(&r, m, levels, 9, 2, k == 0 ? QC_QUANTIZER_FIXED : QC_QUANTIZER_OPTIMAL);
        r.input.objective = QC_OBJECTIVE_CAPACITY;
        r.quantizer.thresholds = &zero;
        r.quantizer.nthresholds = 1;
        r.numerics.skip_snr_penalty = 1;
        qc_design_result res;
        assert_int_equal(qc_design(&r, &res), QC_OK);
        double sigma = qc_model_param(m, 0);
        double want = 1.0 - h2(0.5 * erfc(A / sigma / M_SQRT2));
        assert_true(fabs(res.rate_bits - want) <= TOL_ENGINE);
        assert_true(res.upper_bound_bits >= res.rate_bits);
        assert_true(res.upper_bound_bits - res.rate_bits <= res.tol_bits + TOL_TIGHT);
        assert_true(fabs(res.input[0] - 0.5) <= TOL_LAW && fabs(res.input[8] - 0.5) <= TOL_LAW);
        assert_true(fabs(res.thresholds[0]) <= TOL_THRESHOLD);
        assert_true(res.iterations > 0);
        assert_true(res.rate_bits <= res.unquantized_bits + TOL_ORDER);
        qc_design_result_clear(&res);
        qc_model_free(m);
    }
}

static void test_capacity_orderings(void **state)
{
    (void)state;
    /* peak-limited 5-level alphabet, capacity over the input law */
    const double levels[5] = {-2.0, -1.0, 0.0, 1.0, 2.0};
    qc_model *m = gauss(0.7);
    double prev = 0.0;
    for (size_t bits = 1; bits <= 3; bits++) {
        size_t K = (size_t)1 << bits;
        qc_design_request r;
        request(&r, m, levels, 5, K, QC_QUANTIZER_OPTIMAL);
        r.input.objective = QC_OBJECTIVE_CAPACITY;
        r.numerics.skip_snr_penalty = 1;
        qc_design_comparison c;
        assert_int_equal(qc_design_compare(&r, &c), QC_OK);
        const qc_design_result *opt = &c.result[2];
        assert_int_equal(c.kind[2], QC_QUANTIZER_OPTIMAL);
        for (size_t k = 0; k < c.count; k++) {
            const qc_design_result *x = &c.result[k];
            assert_int_equal(x->objective, QC_OBJECTIVE_CAPACITY);
            /* certified: rate ≤ upper bound ≤ rate + tolerance */
            assert_true(x->rate_bits <= x->upper_bound_bits);
            assert_true(x->upper_bound_bits - x->rate_bits <= x->tol_bits + TOL_TIGHT);
            /* the law is a law, the channel is the reported one */
            double s = 0.0, mi;
            for (size_t i = 0; i < 5; i++)
                s += x->input[i];
            assert_true(fabs(s - 1.0) <= TOL_LAW_SUM);
            assert_int_equal(qc_mutual_information(x->channel, x->input, &mi), QC_OK);
            assert_true(fabs(mi * QC_LOG2E - x->rate_bits) <= TOL_MI_BITS);
            assert_true(x->rate_bits <= x->unquantized_bits + TOL_ORDER);
            assert_true(opt->rate_bits >= x->rate_bits - x->tol_bits);
        }
        /* capacity is at least the MI of the uniform law on the same cells */
        r.input.objective = QC_OBJECTIVE_MI;
        qc_design_result mi_opt;
        assert_int_equal(qc_design(&r, &mi_opt), QC_OK);
        assert_true(opt->upper_bound_bits >= mi_opt.rate_bits - TOL_ORDER);
        assert_true(opt->rate_bits >= mi_opt.rate_bits - opt->tol_bits);
        qc_design_result_clear(&mi_opt);
        /* more bits never lower the designed capacity */
        assert_true(opt->rate_bits >= prev - opt->tol_bits);
        prev = opt->rate_bits;
        qc_design_comparison_clear(&c);
    }
    qc_model_free(m);
}

static void test_capacity_shannon_limit(void **state)
{
    (void)state;
    /* A fine Gaussian-like input grid with an average power budget and a
     * fine uniform quantizer approach the AWGN capacity ½·log2(1 + snr)
     * (C. E. Shannon, "A mathematical theory of communication", Bell Syst.
     * Tech. J. 27, 1948) within 0.01 bit. */
    const double snr_db[2] = {0.0, 10.0};
    for (size_t s = 0; s < 2; s++) {
        double P = pow(10.0, snr_db[s] / 10.0); /* σ = 1 */
        double span = 4.5 * sqrt(P);
        enum { NL = 61, NT = 1023 };
        double levels[NL], costs[NL], t[NT];
        for (size_t i = 0; i < NL; i++) {
            levels[i] = -span + 2.0 * span * (double)i / (NL - 1);
            costs[i] = levels[i] * levels[i];
        }
        double range = span + 6.0;
        for (size_t j = 0; j < NT; j++)
            t[j] = -range + 2.0 * range * (double)(j + 1) / (NT + 1);
        qc_model *m = gauss(1.0);
        qc_design_request r;
        request(&r, m, levels, NL, NT + 1, QC_QUANTIZER_FIXED);
        r.input.objective = QC_OBJECTIVE_CAPACITY;
        r.quantizer.thresholds = t;
        r.quantizer.nthresholds = NT;
        r.input.costs = costs;
        r.input.budget = P;
        r.numerics.tol_bits = 1e-4; /* ample for a 0.01-bit check; BA is slow on a
                              near-continuous input at tighter gaps */
        r.numerics.skip_snr_penalty = 1;
        qc_design_result res;
        assert_int_equal(qc_design(&r, &res), QC_OK);
        double shannon = 0.5 * log2(1.0 + P);
        assert_true(fabs(res.rate_bits - shannon) <= TOL_SHANNON);
        assert_true(res.rate_bits <= shannon + 1e-9); /* no channel beats it */
        double power = 0.0;
        for (size_t i = 0; i < NL; i++)
            power += res.input[i] * costs[i];
        assert_true(power <= P * (1.0 + 1e-6));
        qc_design_result_clear(&res);
        qc_model_free(m);
    }
}

/* ---- results and comparisons ------------------------------------------ */

static void test_result_contents(void **state)
{
    (void)state;
    const double levels[3] = {-1.0, 0.2, 1.0}, law[3] = {0.3, 0.3, 0.4};
    qc_model *m = gauss(0.4);
    qc_design_request r;
    request(&r, m, levels, 3, 4, QC_QUANTIZER_LLOYD_MAX);
    r.input.probabilities = law;
    qc_design_result res;
    assert_int_equal(qc_design(&r, &res), QC_OK);
    assert_int_equal(res.quantizer, QC_QUANTIZER_LLOYD_MAX);
    assert_int_equal(res.objective, QC_OBJECTIVE_MI);
    assert_int_equal(res.cells, 4);
    assert_int_equal(res.nthresholds, 3);
    assert_int_equal(res.nlevels, 3);
    assert_true(res.channel->nx == 3 && res.channel->ny == 4);
    assert_int_equal(qc_dmc_check(res.channel), QC_OK);
    for (size_t i = 0; i < 3; i++)
        assert_true(res.levels[i] == levels[i] && res.input[i] == law[i]);
    double mi;
    assert_int_equal(qc_mutual_information(res.channel, res.input, &mi), QC_OK);
    assert_true(fabs(mi * QC_LOG2E - res.rate_bits) <= TOL_TIGHT);
    assert_non_null(res.reconstruction);
    assert_true(isfinite(res.mse) && res.mse > 0.0);
    assert_true(res.snr_penalty_db >= 0.0);
    assert_true(res.design_iterations > 0);
    assert_int_equal(res.fine_cells, 0);
    qc_design_result_clear(&res);
    qc_design_result_clear(&res); /* idempotent */
    qc_design_result_clear(NULL);
    qc_design_comparison_clear(NULL);
    qc_model_free(m);
}

/* ---- limits on the reported rates ------------------------------------ */

/* Nearly noiseless binary input: the quadrature of the unquantized rate
 * used to give 1.000000051 bit, above log2 2 (H(X) ≤ log2 M: Cover &
 * Thomas, Elements of Information Theory, 2nd ed., 2006, Thm 2.6.4). */
static void test_rates_never_above_log2_levels(void **state)
{
    (void)state;
    const double levels[2] = {-1.0, 1.0};
    const double sigmas[] = {1e-10, 1e-6, 1e-3};
    for (size_t k = 0; k < sizeof sigmas / sizeof *sigmas; k++) {
        qc_model *m = gauss(sigmas[k]);
        qc_design_request r;
        request(&r, m, levels, 2, 2, QC_QUANTIZER_OPTIMAL);
        qc_design_result res;
        assert_int_equal(qc_design(&r, &res), QC_OK);
        assert_true(res.unquantized_bits <= 1.0);
        assert_true(res.rate_bits <= res.unquantized_bits);
        assert_true(res.loss_bits >= 0.0);
        assert_true(fabs(res.unquantized_bits - 1.0) <= TOL_TIGHT);
        qc_design_result_clear(&res);
        qc_model_free(m);
    }
}

/* 2-PAM at 17 dB, 6 bits: the quantized rate (an exact finite sum) came
 * out above the unquantized one (quadrature) by less than the latter's
 * error estimate, a negative loss. By data processing (ibid., Thm 2.8.1)
 * the quantized rate bounds the unquantized one from below: that bound is
 * reported and flagged, and the loss is 0. */
static void test_loss_never_negative(void **state)
{
    (void)state;
    const double levels[2] = {-1.0, 1.0};
    qc_model *m = gauss(1.0 / sqrt(pow(10.0, 1.7)));
    qc_design_request r;
    request(&r, m, levels, 2, 64, QC_QUANTIZER_OPTIMAL);
    qc_design_result res;
    assert_int_equal(qc_design(&r, &res), QC_OK);
    assert_true(res.loss_bits >= 0.0);
    assert_true(res.rate_bits <= res.unquantized_bits);
    /* where the finite sum came out above the quadrature, the bound is
     * what is reported, and flagged (which happens depends on the last
     * digits of the design) */
    if (res.unquantized_limited_by == QC_LIMIT_QUANTIZED_RATE)
        assert_true(res.unquantized_bits == res.rate_bits && res.loss_bits == 0.0);
    else
        assert_int_equal(res.unquantized_limited_by, QC_LIMIT_NONE);
    /* a loss within tolerance: no SNR penalty, with the reason */
    assert_true(isnan(res.snr_penalty_db));
    assert_int_not_equal(res.snr_penalty_note, QC_PENALTY_DEFINED);
    qc_design_result_clear(&res);
    qc_model_free(m);
}

/* 8-PAM at 30 dB, 3-bit uniform quantizer: the rate is within 1e-9 bit of
 * log2 8, where the unquantized rate curve is flat; the penalty used to be
 * printed as 0.4133 dB. It is undefined, saying why. */
static void test_penalty_undefined_when_saturated(void **state)
{
    (void)state;
    const double levels[8] = {-7, -5, -3, -1, 1, 3, 5, 7};
    qc_model *m = gauss(sqrt(21.0 / 1000.0)); /* E[x²] = 21 */
    qc_design_request r;
    request(&r, m, levels, 8, 8, QC_QUANTIZER_UNIFORM);
    qc_design_result res;
    assert_int_equal(qc_design(&r, &res), QC_OK);
    assert_true(fabs(res.snr_db - 30.0) <= TOL_SNR_DB);
    assert_true(3.0 - res.rate_bits <= r.numerics.tol_bits);
    assert_true(isnan(res.snr_penalty_db));
    assert_int_equal(res.snr_penalty_note, QC_PENALTY_SATURATED);
    assert_non_null(strstr(qc_penalty_note_text(res.snr_penalty_note), "saturated"));
    qc_design_result_clear(&res);
    qc_model_free(m);
}

/* σ = 1e-300: every output is narrower than the resolution of doubles.
 * The design used to fail; it reports the noiseless limit, log2 4 bit
 * with 4 cells, a finite SNR (E[x²]/σ² = 5e600: 6006.99 dB) and no
 * penalty, saying why. */
static void test_noiseless_limit(void **state)
{
    (void)state;
    const double levels[4] = {-3.0, -1.0, 1.0, 3.0};
    qc_model *m = gauss(1e-300);
    qc_design_request r;
    request(&r, m, levels, 4, 4, QC_QUANTIZER_OPTIMAL);
    qc_design_result res;
    assert_int_equal(qc_design(&r, &res), QC_OK);
    assert_true(res.noiseless_limit == 1);
    assert_true(res.unquantized_bits == 2.0);
    assert_true(fabs(res.rate_bits - 2.0) <= TOL_TIGHT && res.loss_bits >= 0.0);
    assert_true(fabs(res.snr_db - (6000.0 + 10.0 * log10(5.0))) <= TOL_SNR_DB);
    assert_true(isnan(res.snr_penalty_db));
    assert_int_equal(res.snr_penalty_note, QC_PENALTY_NOISELESS);
    qc_design_result_clear(&res);
    qc_model_free(m);
}

static void test_limit_names(void **state)
{
    (void)state;
    assert_null(qc_rate_limit_name(QC_LIMIT_NONE));
    assert_string_equal(qc_rate_limit_name(QC_LIMIT_LEVELS), "log2 levels");
    assert_string_equal(qc_rate_limit_name(QC_LIMIT_INPUT_ENTROPY), "input entropy");
    assert_string_equal(qc_rate_limit_name(QC_LIMIT_CELLS), "log2 cells");
    assert_string_equal(qc_rate_limit_name(QC_LIMIT_QUANTIZED_RATE), "quantized rate");
    assert_null(qc_rate_limit_name(QC_LIMIT_COUNT));
    assert_null(qc_penalty_note_text(QC_PENALTY_DEFINED));
    for (int k = 1; k < QC_PENALTY_COUNT; k++)
        assert_non_null(qc_penalty_note_text((qc_penalty_note)k));
    assert_null(qc_penalty_note_text(QC_PENALTY_COUNT));
}

static void test_model_without_snr(void **state)
{
    (void)state;
    /* the Gaussian model with its SNR hook removed */
    qc_model_type plain = qc_model_gauss;
    plain.snr = NULL;
    plain.scale_snr = NULL;
    const double sigma = 0.7, levels[2] = {-1.0, 1.0};
    qc_model *m;
    assert_int_equal(qc_model_alloc(&plain, &sigma, &m), QC_OK);
    qc_design_request r;
    request(&r, m, levels, 2, 4, QC_QUANTIZER_OPTIMAL);
    qc_design_result res;
    assert_int_equal(qc_design(&r, &res), QC_OK);
    assert_true(isnan(res.snr_db) && isnan(res.snr_penalty_db));
    assert_true(res.rate_bits > 0.0);
    qc_design_result_clear(&res);
    qc_model *scaled = (qc_model *)0x1;
    assert_int_equal(qc_model_scale_snr(m, 2.0, &scaled), QC_EINVAL);
    assert_null(scaled);
    assert_non_null(strstr(qc_last_error(), "defines no SNR"));
    qc_model_free(m);
    /* a gain that is not a positive number */
    m = gauss(1.0);
    assert_int_equal(qc_model_scale_snr(m, -1.0, &scaled), QC_EINVAL);
    assert_int_equal(qc_model_scale_snr(m, 4.0, &scaled), QC_OK);
    assert_true(fabs(qc_model_param(scaled, 0) - 0.5) <= TOL_TIGHT); /* σ/√4 */
    qc_model_free(scaled);
    qc_model_free(m);
}

/* The uniform range is centred on the mean outputs, which for the APD
 * models are in electrons, not in level units. Eight intensity levels
 * 0, 1/7, …, 1 at negligible noise with 4 uniform cells: thresholds in
 * the gaps 1|2, 3|4, 5|6 form a uniform grid and pair the levels up, so
 * the uniform quantizer reaches 2 bits, as the optimal one does. */
static void test_uniform_output_units(void **state)
{
    (void)state;
    /* signal, background, gain M, k, σ_th: half the level spacing is
     * 7.1e4 electrons, 12 noise deviations at the top level */
    const double params[5] = {1e5, 0.0, 10.0, 0.2, 300.0};
    qc_model *m;
    assert_int_equal(qc_model_alloc(&qc_model_apd_gauss, params, &m), QC_OK);
    double levels[8];
    for (size_t i = 0; i < 8; i++)
        levels[i] = (double)i / 7.0;
    qc_design_request r;
    request(&r, m, levels, 8, 4, QC_QUANTIZER_UNIFORM);
    qc_design_result res;
    assert_int_equal(qc_design(&r, &res), QC_OK);
    assert_true(fabs(res.rate_bits - 2.0) <= TOL_CELL_LIMIT);
    qc_design_result_clear(&res);
    qc_model_free(m);
}

static void test_compare_with_fixed(void **state)
{
    (void)state;
    const double levels[2] = {-1.0, 1.0}, t[3] = {-1.0, 0.0, 1.0};
    qc_model *m = gauss(0.8);
    qc_design_request r;
    request(&r, m, levels, 2, 4, QC_QUANTIZER_UNIFORM);
    r.quantizer.thresholds = t;
    r.quantizer.nthresholds = 3;
    r.numerics.skip_snr_penalty = 1;
    qc_design_comparison c;
    assert_int_equal(qc_design_compare(&r, &c), QC_OK);
    assert_int_equal(c.count, 4);
    assert_int_equal(c.kind[3], QC_QUANTIZER_FIXED);
    assert_memory_equal(c.result[3].thresholds, t, sizeof t);
    for (size_t k = 0; k < 3; k++)
        assert_true(c.result[2].rate_bits >= c.result[k].rate_bits - TOL_ORDER);
    assert_null(c.message[0]);
    qc_design_comparison_clear(&c);
    /* an invalid request fills nothing */
    r.quantizer.nthresholds = 2;
    assert_int_equal(qc_design_compare(&r, &c), QC_EINVAL);
    assert_int_equal(c.count, 0);
    qc_model_free(m);
}

static void test_names(void **state)
{
    (void)state;
    qc_quantizer_kind k;
    qc_objective o;
    for (int i = 0; i < QC_QUANTIZER_COUNT; i++) {
        assert_int_equal(qc_quantizer_parse(qc_quantizer_name((qc_quantizer_kind)i), &k),
                         QC_OK);
        assert_int_equal(k, i);
    }
    assert_int_equal(qc_objective_parse("capacity", &o), QC_OK);
    assert_int_equal(o, QC_OBJECTIVE_CAPACITY);
    assert_int_equal(qc_quantizer_parse("lloyd", &k), QC_EINVAL);
    assert_non_null(strstr(qc_last_error(), "unknown quantizer 'lloyd'"));
    assert_int_equal(qc_objective_parse(NULL, &o), QC_EINVAL);
    assert_null(qc_quantizer_name(QC_QUANTIZER_COUNT));
    size_t cells;
    assert_int_equal(qc_cells_from_bits(3, &cells), QC_OK);
    assert_int_equal(cells, 8);
    assert_int_equal(qc_cells_from_bits(16, &cells), QC_OK);
    assert_int_equal(cells, 65536);
}

/* ---- bad input ---------------------------------------------------------- */

static void expect_einval(const qc_design_request *r, const char *needle)
{
    qc_design_result res;
    memset(&res, 0x5a, sizeof res);
    assert_int_equal(qc_design(r, &res), QC_EINVAL);
    assert_message(needle);
    assert_null(res.thresholds); /* left empty */
    assert_null(res.channel);
    qc_design_result_clear(&res);
}

static void test_bad_input(void **state)
{
    (void)state;
    const double levels[2] = {-1.0, 1.0};
    qc_model *m = gauss(1.0);
    size_t cells;
    assert_int_equal(qc_cells_from_bits(0, &cells), QC_EINVAL);
    assert_non_null(strstr(qc_last_error(), "bits must be between 1 and 16 (got 0)"));
    assert_int_equal(qc_cells_from_bits(17, &cells), QC_EINVAL);
    assert_non_null(strstr(qc_last_error(), "(got 17)"));

    qc_design_request r;
    request(&r, m, levels, 2, 1, QC_QUANTIZER_OPTIMAL);
    expect_einval(&r, "cells must be between 2 and 65536 (1 to 16 bits), got 1");
    r.quantizer.cells = 65537;
    expect_einval(&r, "got 65537");
    r.quantizer.cells = 16;
    r.numerics.fine_cells = 8;
    expect_einval(&r, "fine grid of 8 cells is smaller than the 16 quantizer cells");
    r.numerics.fine_cells = 0;

    const double unsorted[3] = {0.5, -0.5, 1.0}, dup[3] = {-0.5, 0.0, 0.0};
    const double good[3] = {-0.5, 0.0, 0.5};
    request(&r, m, levels, 2, 4, QC_QUANTIZER_FIXED);
    expect_einval(&r, "the fixed quantizer needs thresholds");
    r.quantizer.thresholds = unsorted;
    r.quantizer.nthresholds = 3;
    expect_einval(&r, "threshold 2 (-0.5) is not above threshold 1 (0.5)");
    r.quantizer.thresholds = dup;
    expect_einval(&r, "threshold 3 (0) is not above threshold 2 (0)");
    r.quantizer.thresholds = good;
    r.quantizer.nthresholds = 2;
    expect_einval(&r, "4 cells need 3 thresholds, got 2");
    r.quantizer.nthresholds = 3;
    r.quantizer.cells = 8;
    expect_einval(&r, "8 cells need 7 thresholds, got 3");
    /* cells 0 with fixed thresholds: K = nthresholds + 1 */
    r.quantizer.cells = 0;
    qc_design_result res;
    assert_int_equal(qc_design(&r, &res), QC_OK);
    assert_int_equal(res.cells, 4);
    qc_design_result_clear(&res);

    const double bad_law[2] = {0.5, 0.6}, neg_law[2] = {1.5, -0.5};
    request(&r, m, levels, 2, 4, QC_QUANTIZER_OPTIMAL);
    r.input.probabilities = bad_law;
    expect_einval(&r, "input probabilities sum to 1.1");
    r.input.probabilities = neg_law;
    expect_einval(&r, "input probability 2 is -0.5");
    r.input.probabilities = NULL;
    const double costs[2] = {1.0, 1.0};
    r.input.costs = costs;
    r.input.budget = 1.0;
    expect_einval(&r, "a cost constraint needs the capacity objective");
    r.input.costs = NULL;
    r.numerics.tol_bits = -1.0;
    expect_einval(&r, "tolerance must be >= 0 bits");
    r.numerics.tol_bits = 0.0;
    const double nan_level[2] = {-1.0, NAN};
    r.channel.levels = nan_level;
    expect_einval(&r, "level 2 is not a finite number");
    r.channel.levels = NULL;
    expect_einval(&r, "no input levels given");
    r.channel.levels = levels;
    r.channel.model = NULL;
    expect_einval(&r, "no noise model given");
    r.channel.model = m;
    r.quantizer.kind = (qc_quantizer_kind)42;
    expect_einval(&r, "unknown quantizer 42");
    expect_einval(NULL, "no design request given");
    qc_model_free(m);
}

/* ---- progress callback ---------------------------------------------- */

typedef struct {
    size_t calls, last_done, last_total;
    int backwards, over; /* done fell within one total; done > total */
} progress_log;

static void log_progress(void *user, size_t done, size_t total)
{
    progress_log *p = user;
    if (p->calls && total == p->last_total && done < p->last_done)
        p->backwards = 1;
    if (done > total || done == 0)
        p->over = 1;
    p->calls++;
    p->last_done = done;
    p->last_total = total;
}

/* A long design reports its progress through the request's callback:
 * the capacity objective without constraints (joint design), under a
 * power constraint (constrained alternation) and a level search; the
 * count never runs backwards and ends at the total. An MI design is quick
 * and reports nothing (the documented contract). */
static void test_progress_callback(void **state)
{
    (void)state;
    double levels[9];
    for (size_t i = 0; i < 9; i++)
        levels[i] = -1.0 + 2.0 * (double)i / 8.0;
    qc_model *m = gauss(0.5);
    qc_constraints c;
    qc_constraints_none(&c);
    c.power = 0.5;
    for (int k = 0; k < 4; k++) {
        qc_design_request r;
        request(&r, m, levels, k == 3 ? 2 : 9, 4, QC_QUANTIZER_OPTIMAL);
        r.input.objective = k == 0 ? QC_OBJECTIVE_MI : QC_OBJECTIVE_CAPACITY;
        r.numerics.skip_snr_penalty = 1;
        if (k >= 2)
            r.input.constraints = &c;
        double two[2] = {-0.5, 0.5};
        if (k == 3) { /* level search for 2 levels under the power budget */
            r.channel.levels = two;
            r.input.optimize_levels = 1;
            r.input.level_starts = 1;
            r.input.objective = QC_OBJECTIVE_MI;
        }
        progress_log log = {0};
        r.numerics.progress = log_progress;
        r.numerics.progress_user = &log;
        qc_design_result res;
        assert_int_equal(qc_design(&r, &res), QC_OK);
        if (k == 0) {
            assert_int_equal(log.calls, 0);
        } else {
            assert_true(log.calls >= 2);
            assert_false(log.backwards);
            assert_false(log.over);
            assert_int_equal(log.last_done, log.last_total);
        }
        qc_design_result_clear(&res);
    }
    qc_model_free(m);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_bpsk_one_bit_closed_form),
        cmocka_unit_test(test_bpsk_rate_half_limit),
        cmocka_unit_test(test_low_snr_two_over_pi),
        cmocka_unit_test(test_bpsk_optimal_symmetric),
        cmocka_unit_test(test_orderings),
        cmocka_unit_test(test_optimal_grid_independent),
        cmocka_unit_test(test_photon_counting_exhaustive),
        cmocka_unit_test(test_capacity_one_bit_antipodal),
        cmocka_unit_test(test_capacity_orderings),
        cmocka_unit_test(test_capacity_shannon_limit),
        cmocka_unit_test(test_result_contents),
        cmocka_unit_test(test_model_without_snr),
        cmocka_unit_test(test_uniform_output_units),
        cmocka_unit_test(test_compare_with_fixed),
        cmocka_unit_test(test_names),
        cmocka_unit_test(test_rates_never_above_log2_levels),
        cmocka_unit_test(test_loss_never_negative),
        cmocka_unit_test(test_penalty_undefined_when_saturated),
        cmocka_unit_test(test_noiseless_limit),
        cmocka_unit_test(test_limit_names),
        cmocka_unit_test(test_bad_input),
        cmocka_unit_test(test_progress_callback),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
