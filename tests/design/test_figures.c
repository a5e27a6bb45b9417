/* test_figures.c — the figures practitioners quote: MAP hard-decision
 * symbol and bit error rates after the quantizer, Q-factor, NGMI, rates
 * in Gb/s and bit/s/Hz, photon efficiency, and FEC codes (the table, user
 * codes, closing, margin, net rate). */
#include <stdarg.h>
#include <stddef.h>
#include <setjmp.h>
#include <cmocka.h>

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include <gsl/gsl_cdf.h>

#include "quantcap.h"
#include "test_helpers.h"

#define REL_TOL 1e-9   /* relative, error rates from exact finite sums      */
#define EXACT_TOL 1e-12 /* bookkeeping identities                           */

static double q(double x) { return gsl_cdf_ugaussian_Q(x); }

static void assert_rel(double got, double want, double tol)
{
    if (!(fabs(got - want) <= tol * fabs(want)))
        fail_msg("got %.17g, expected %.17g (relative tolerance %g)", got, want, tol);
}

/* A design of gauss(sigma) with fixed thresholds; dims 2 for QAM. */
static void fixed_design(double sigma, const double *levels, size_t n, const double *t,
                         size_t nt, unsigned dims, const qc_fec *fec, double baud,
                         qc_design_result *res)
{
    double p[QC_MODEL_MAX_PARAMS] = {sigma};
    qc_model *m;
    assert_int_equal(qc_model_alloc(&qc_model_gauss, p, &m), QC_OK);
    qc_design_request r;
    qc_design_request_default(&r);
    r.channel.model = m;
    r.channel.levels = levels;
    r.channel.nlevels = n;
    r.quantizer.kind = QC_QUANTIZER_FIXED;
    r.quantizer.thresholds = t;
    r.quantizer.nthresholds = nt;
    r.quantizer.cells = nt + 1;
    r.channel.dimensions = dims;
    r.numerics.skip_snr_penalty = 1;
    r.input.fec = fec;
    r.channel.symbol_rate = baud;
    assert_int_equal(qc_design(&r, res), QC_OK);
    qc_model_free(m);
}

/* BPSK ±1 with the sign quantizer: BER = SER = Q(√snr), snr = A²/σ² (any
 * digital-communications textbook, e.g. Proakis, Digital Communications,
 * ch. 4). Finer cells with a threshold at 0 decide the same. */
static void test_bpsk_hard_decision(void **state)
{
    (void)state;
    const double levels[2] = {-1.0, 1.0}, sign[1] = {0.0};
    const double fine[7] = {-1.5, -1.0, -0.5, 0.0, 0.5, 1.0, 1.5};
    for (double snr_db = 0.0; snr_db <= 12.0; snr_db += 3.0) {
        double snr = pow(10.0, snr_db / 10.0), sigma = 1.0 / sqrt(snr);
        qc_design_result r;
        fixed_design(sigma, levels, 2, sign, 1, 1, NULL, 0.0, &r);
        assert_rel(r.pre_fec_ber, q(sqrt(snr)), REL_TOL);
        assert_rel(r.symbol_error_rate, q(sqrt(snr)), REL_TOL);
        qc_design_result_clear(&r);
        fixed_design(sigma, levels, 2, fine, 7, 1, NULL, 0.0, &r);
        assert_rel(r.pre_fec_ber, q(sqrt(snr)), REL_TOL);
        qc_design_result_clear(&r);
    }
}

/* Gray 4-PAM (±1, ±3, thresholds at the midpoints) and Gray 16-QAM (the
 * same per quadrature): BER = (1/4)[3Q(d) + 2Q(3d) − Q(5d)] with d = 1/σ
 * (half the spacing over σ); K. Cho and D. Yoon, "On the general BER
 * expression of one- and two-dimensional amplitude modulations", IEEE
 * Trans. Commun. 50(7), 2002. SER of 4-PAM: (3/2)Q(d); of the square
 * 16-QAM: 1 − (1 − P_PAM)². An 8-cell quantizer with the midpoints among
 * its thresholds decides each cell for the same symbol. */
static void test_gray_pam_qam(void **state)
{
    (void)state;
    const double levels[4] = {-3.0, -1.0, 1.0, 3.0}, mid[3] = {-2.0, 0.0, 2.0};
    const double eight[7] = {-3.0, -2.0, -1.0, 0.0, 1.0, 2.0, 3.0};
    const double sigmas[3] = {0.35, 0.6, 1.0};
    for (int i = 0; i < 3; i++) {
        double d = 1.0 / sigmas[i];
        double ber = 0.25 * (3.0 * q(d) + 2.0 * q(3.0 * d) - q(5.0 * d));
        double ser_pam = 1.5 * q(d);
        qc_design_result r;
        fixed_design(sigmas[i], levels, 4, mid, 3, 1, NULL, 0.0, &r);
        assert_rel(r.pre_fec_ber, ber, REL_TOL);
        assert_rel(r.symbol_error_rate, ser_pam, REL_TOL);
        qc_design_result_clear(&r);
        fixed_design(sigmas[i], levels, 4, eight, 7, 1, NULL, 0.0, &r);
        assert_rel(r.pre_fec_ber, ber, REL_TOL);
        qc_design_result_clear(&r);
        fixed_design(sigmas[i], levels, 4, mid, 3, 2, NULL, 0.0, &r);
        assert_rel(r.pre_fec_ber, ber, REL_TOL);
        assert_rel(r.symbol_error_rate, 1.0 - (1.0 - ser_pam) * (1.0 - ser_pam), REL_TOL);
        qc_design_result_clear(&r);
    }
}

/* MAP on the law, not nearest level: with P(x0) = 0.9 both cells of this
 * channel have more joint mass from x0 (0.72 vs 0.03, 0.18 vs 0.07), so
 * both decide x0 and the symbol error rate is P(x1) = 0.1. */
static void test_map_uses_the_law(void **state)
{
    (void)state;
    qc_dmc *c;
    assert_int_equal(qc_dmc_alloc(2, 2, &c), QC_OK);
    const double p[4] = {0.8, 0.2, 0.3, 0.7}; /* P(y|x) */
    memcpy(c->p, p, sizeof p);
    const double law[2] = {0.9, 0.1};
    size_t dec[2];
    assert_int_equal(qc_map_decisions(c, law, dec), QC_OK);
    assert_int_equal(dec[0], 0); /* 0.72 vs 0.03 */
    assert_int_equal(dec[1], 0); /* 0.18 vs 0.07 */
    qc_hard_figures h;
    const size_t labels[2] = {0, 1};
    assert_int_equal(qc_hard_decision(c, law, labels, 1, 1, &h), QC_OK);
    assert_near(h.symbol_error_rate, 0.1, EXACT_TOL);
    assert_near(h.pre_fec_ber, 0.1, EXACT_TOL);
    qc_dmc_free(c);
}

/* A cell midway between two inputs ties them. Three equally likely
 * inputs with 2-bit labels 00, 01, 10 and cells {0}, {1}, middle, {2};
 * the middle cell has joint mass 0.1 from inputs 0 and 2 and 0.02 from
 * input 1. Deciding 0 there costs 0.1 + 0.02 in symbol errors and
 * 0.1·1 + 0.02·1 bits, deciding 2 the same symbol errors and 0.1·1 +
 * 0.02·2 bits: BER 0.06 or 0.07. Split evenly: P_s = 0.12, BER = 0.065
 * (by hand), whichever of the two is larger by 1e-15 (rounding); a clear
 * difference (0.0999 against 0.1) decides for the larger: P_s = 0.1199,
 * BER = 0.1199/2. */
static void test_map_ties_split_evenly(void **state)
{
    (void)state;
    const size_t labels[3] = {0, 1, 2};
    const double law[3] = {1.0 / 3.0, 1.0 / 3.0, 1.0 / 3.0};
    const double nudge[4] = {0.0, 1e-15, -1e-15, -0.001};
    for (int k = 0; k < 4; k++) {
        qc_dmc *c;
        assert_int_equal(qc_dmc_alloc(3, 4, &c), QC_OK);
        const double m0 = 0.3, m1 = 0.06, m2 = 0.3 * (1.0 + nudge[k]); /* P(middle | x) */
        const double p[12] = {1.0 - m0, 0.0, m0, 0.0, /* cells: {0}, {1}, middle, {2} */
                              0.0, 1.0 - m1, m1, 0.0,
                              0.0, 0.0, m2, 1.0 - m2};
        memcpy(c->p, p, sizeof p);
        size_t dec[4];
        assert_int_equal(qc_map_decisions(c, law, dec), QC_OK);
        assert_int_equal(dec[2], 0); /* the lowest tied input, or the larger */
        qc_hard_figures h;
        assert_int_equal(qc_hard_decision(c, law, labels, 2, 1, &h), QC_OK);
        double ser = k < 3 ? 0.12 : 0.02 + 0.0999, ber = k < 3 ? 0.065 : ser / 2.0;
        assert_near(h.symbol_error_rate, ser, 1e-15);
        assert_near(h.pre_fec_ber, ber, 1e-15);
        qc_dmc_free(c);
    }
}

/* Q = √2·erfc⁻¹(2·BER) = Q⁻¹(BER), quoted as 20·log10 Q (common
 * practice); Q⁻¹(1e-3) = 3.0902 (from memory; standard normal tables). */
#define QINV_TABLE_TOL 5e-5
static void test_q_factor(void **state)
{
    (void)state;
    for (double x = 0.5; x <= 7.0; x += 0.5)
        assert_near(qc_q_factor_db(q(x)), 20.0 * log10(x), 1e-9);
    assert_near(pow(10.0, qc_q_factor_db(1e-3) / 20.0), 3.0902, QINV_TABLE_TOL);
    assert_true(isnan(qc_q_factor_db(0.0)));
    assert_true(isnan(qc_q_factor_db(0.5)));
    assert_true(isnan(qc_q_factor_db(NAN)));
}

/* NGMI = 1 − (H(X) − GMI)/m (Cho, Schmalen, Winzer, ECOC 2017) is GMI/m
 * for a uniform law (H(X) = m); the design reports it for QAM per
 * complex symbol (m = 4 for 16-QAM). */
static void test_ngmi(void **state)
{
    (void)state;
    assert_near(qc_ngmi(1.5, 2.0, 2.0), 0.75, EXACT_TOL);
    assert_near(qc_ngmi(1.5, 1.8, 2.0), 0.85, EXACT_TOL);
    assert_true(isnan(qc_ngmi(1.0, 2.0, 0.0)));
    const double levels[4] = {-3.0, -1.0, 1.0, 3.0}, mid[3] = {-2.0, 0.0, 2.0};
    for (unsigned dims = 1; dims <= 2; dims++) {
        qc_design_result r;
        fixed_design(0.6, levels, 4, mid, 3, dims, NULL, 0.0, &r);
        assert_near(r.entropy_bits, 2.0 * dims, EXACT_TOL);
        assert_near(r.ngmi, r.gmi_bits / (2.0 * dims), EXACT_TOL);
        qc_design_result_clear(&r);
    }
}

/* Rates in Gb/s and bit/s/Hz; net rate after a FEC: R_c·m per
 * polarization for a uniform law, 0 when the link does not close. */
static void test_rates_and_fec(void **state)
{
    (void)state;
    assert_near(qc_rate_gbps(2.0, 50e9, 2), 200.0, EXACT_TOL);
    assert_near(qc_spectral_efficiency(1.5, 2), 3.0, EXACT_TOL);
    assert_true(isnan(qc_rate_gbps(2.0, 0.0, 1)));
    qc_fec kp4;
    assert_int_equal(qc_fec_parse("kp4", &kp4), QC_OK);
    assert_int_equal(kp4.kind, QC_FEC_HARD);
    assert_near(kp4.threshold, 2.4e-4, EXACT_TOL);
    const double levels[4] = {-3.0, -1.0, 1.0, 3.0}, mid[3] = {-2.0, 0.0, 2.0};
    /* σ = 0.25: BER ~ 1e-5, closes; σ = 0.6: BER ~ 0.03, does not */
    qc_design_result r;
    fixed_design(0.25, levels, 4, mid, 3, 2, &kp4, 32e9, &r);
    assert_int_equal(r.polarizations, 2);
    assert_near(r.rate_gbps, r.rate_bits * 32e9 * 2 * 1e-9, 1e-9);
    assert_near(r.spectral_efficiency, 2.0 * r.rate_bits, EXACT_TOL);
    assert_true(r.fec_closes);
    double net_bits = 2.0 * 4.0 / (1.0 + kp4.overhead); /* pol × m × R_c */
    assert_near(r.net_bits, net_bits, 1e-12);
    assert_near(r.net_rate_gbps, net_bits * 32.0, 1e-9);
    assert_near(r.fec_margin, r.q_factor_db - qc_q_factor_db(2.4e-4), 1e-12);
    assert_true(r.fec_margin > 0.0);
    qc_design_result_clear(&r);
    fixed_design(0.6, levels, 4, mid, 3, 2, &kp4, 32e9, &r);
    assert_false(r.fec_closes);
    assert_near(r.net_rate_gbps, 0.0, 0.0);
    assert_true(r.fec_margin < 0.0);
    qc_design_result_clear(&r);
    /* a soft code on the NGMI; the shaped-law bookkeeping H − (1 − R_c)m */
    qc_fec soft;
    assert_int_equal(qc_fec_parse("rate=0.8,ngmi=0.8", &soft), QC_OK);
    assert_near(soft.overhead, 0.25, EXACT_TOL);
    qc_fec_outcome o;
    assert_int_equal(qc_fec_evaluate(&soft, NAN, 0.9, 1.8, 2.0, &o), QC_OK);
    assert_true(o.closes);
    assert_near(o.margin, 0.1, EXACT_TOL);
    assert_near(o.net_bits, 1.8 - 0.2 * 2.0, EXACT_TOL);
    assert_int_equal(qc_fec_evaluate(&soft, NAN, NAN, 1.8, 2.0, &o), QC_EINVAL);
}

/* The FEC table format and user codes: errors name the line or key. */
static void test_fec_parsing(void **state)
{
    (void)state;
    size_t n;
    const qc_fec *t = qc_fec_table(&n);
    assert_true(n >= 4);
    for (size_t i = 0; i < n; i++)
        assert_true(t[i].threshold > 0.0);
    qc_fec f;
    assert_int_equal(qc_fec_parse("no-such-code", &f), QC_EINVAL);
    assert_non_null(strstr(qc_last_error(), "kp4"));
    assert_int_equal(qc_fec_parse("overhead=7,ber=3.8e-3", &f), QC_OK);
    assert_near(f.overhead, 0.07, EXACT_TOL);
    assert_int_equal(qc_fec_parse("overhead=7,ber=3.8e-3,ngmi=0.8", &f), QC_EINVAL);
    assert_int_equal(qc_fec_parse("overhead=7,rate=0.9,ber=1e-3", &f), QC_EINVAL);
    assert_int_equal(qc_fec_parse("overhead=7,ber=0.7", &f), QC_EINVAL);
    const char bad[] = "# c\nok\t7\tber\t1e-3\tnote\nbad\t7\tsoft\t0.8\tnote\n";
    qc_fec *tab;
    assert_int_equal(qc_fec_table_parse(bad, sizeof bad - 1, "t.tsv", &tab, &n), QC_EFORMAT);
    assert_non_null(strstr(qc_last_error(), "t.tsv:3"));
}

/* Photon efficiency: poisson upam:4 (levels 0, 1/3, 2/3, 1), signal 6:
 * 3 detected photons per symbol on average, background excluded. */
static void test_photons(void **state)
{
    (void)state;
    double p[QC_MODEL_MAX_PARAMS] = {6.0, 0.5};
    qc_model *m;
    assert_int_equal(qc_model_alloc(&qc_model_poisson, p, &m), QC_OK);
    const double levels[4] = {0.0, 1.0 / 3.0, 2.0 / 3.0, 1.0};
    assert_near(qc_model_mean_photons(m, levels, NULL, 4), 3.0, EXACT_TOL);
    qc_design_request r;
    qc_design_request_default(&r);
    r.channel.model = m;
    r.channel.levels = levels;
    r.channel.nlevels = 4;
    r.quantizer.cells = 8;
    r.numerics.skip_snr_penalty = 1;
    qc_design_result res;
    assert_int_equal(qc_design(&r, &res), QC_OK);
    assert_near(res.photons_per_symbol, 3.0, EXACT_TOL);
    assert_near(res.bits_per_photon, res.rate_bits / 3.0, EXACT_TOL);
    assert_near(res.photons_per_bit * res.bits_per_photon, 1.0, EXACT_TOL);
    qc_design_result_clear(&res);
    qc_model_free(m);
    p[0] = 1.0;
    assert_int_equal(qc_model_alloc(&qc_model_gauss, p, &m), QC_OK);
    assert_true(isnan(qc_model_mean_photons(m, levels, NULL, 4)));
    qc_model_free(m);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_bpsk_hard_decision), cmocka_unit_test(test_gray_pam_qam),
        cmocka_unit_test(test_map_uses_the_law),   cmocka_unit_test(test_q_factor),
        cmocka_unit_test(test_map_ties_split_evenly),
        cmocka_unit_test(test_ngmi),               cmocka_unit_test(test_rates_and_fec),
        cmocka_unit_test(test_fec_parsing),        cmocka_unit_test(test_photons),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
