/* test_converter.c — the converter quantizer: an ideal converter against
 * the fixed uniform quantizer of the same full scale, the ENOB ↔ SINAD
 * relation and the jitter-limited SNR (IEEE Std 1241's full-scale sine
 * equivalences), the added noise for Gaussian, count and other laws
 * (against direct quadrature), monotonicity in ENOB and jitter, the best
 * gain against fixed ones, DNL/INL draws, measured transition levels, and
 * the bad inputs. */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <cmocka.h>

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include <gsl/gsl_cdf.h>
#include <gsl/gsl_integration.h>
#include <gsl/gsl_math.h>
#include <gsl/gsl_randist.h>

#include "quantcap.h"
#include "test_helpers.h"

/* dB: the rounded 6.02·ENOB + 1.76 against the exact 20·log10(2)·ENOB +
 * 10·log10(1.5): 6.0206 − 6.02 per bit and 1.7609 − 1.76 */
#define TOL_SINAD_DB(e) (0.0007 * (e) + 0.001)
#define TOL_REL 1e-12       /* relative: closed forms recomputed */
#define TOL_ORDER 1e-12     /* bits: slack in "never worse" comparisons */
#define TOL_CONV 2e-6       /* probability: FFT grid convolution against quadrature */
#define TOL_EXACT 1e-14     /* probability: exact sums recomputed */

static const double pam4[4] = {-3.0, -1.0, 1.0, 3.0};

static qc_model *gauss(double sigma)
{
    qc_model *m;
    assert_int_equal(qc_model_alloc(&qc_model_gauss, &sigma, &m), QC_OK);
    return m;
}

static void request(qc_design_request *r, const qc_model *m, const double *levels, size_t n,
                    unsigned bits, const qc_converter *c)
{
    qc_design_request_default(r);
    r->channel.model = m;
    r->channel.levels = levels;
    r->channel.nlevels = n;
    r->quantizer.cells = (size_t)1 << bits;
    r->quantizer.kind = QC_QUANTIZER_CONVERTER;
    r->quantizer.converter = c;
    r->numerics.skip_snr_penalty = 1;
}

static double rate_of(const qc_design_request *r)
{
    qc_design_result res;
    assert_int_equal(qc_design(r, &res), QC_OK);
    double v = res.rate_bits;
    qc_design_result_clear(&res);
    return v;
}

/* An ideal converter with matched gain and offset is the fixed uniform
 * quantizer of the same full scale: the same thresholds, the same matrix,
 * the same rate to the last bit. */
static void test_ideal_equals_fixed_uniform(void **state)
{
    (void)state;
    qc_model *m = gauss(0.4);
    for (unsigned bits = 1; bits <= 6; bits++) {
        qc_converter c;
        qc_converter_default(&c, -3.5, 3.5);
        qc_design_request r;
        request(&r, m, pam4, 4, bits, &c);
        qc_design_result a, b;
        assert_int_equal(qc_design(&r, &a), QC_OK);
        size_t nt = ((size_t)1 << bits) - 1;
        double *t = malloc(nt * sizeof *t);
        for (size_t k = 0; k < nt; k++)
            t[k] = -3.5 + 7.0 * (double)(k + 1) / (double)(nt + 1);
        r.quantizer.kind = QC_QUANTIZER_FIXED;
        r.quantizer.thresholds = t;
        r.quantizer.nthresholds = nt;
        assert_int_equal(qc_design(&r, &b), QC_OK);
        assert_true(a.rate_bits == b.rate_bits);
        assert_true(a.unquantized_bits == b.unquantized_bits);
        for (size_t k = 0; k < nt; k++)
            assert_true(a.thresholds[k] == t[k]);
        for (size_t i = 0; i < a.channel->nx * a.channel->ny; i++)
            assert_true(a.channel->p[i] == b.channel->p[i]);
        assert_int_equal(a.quantizer, QC_QUANTIZER_CONVERTER);
        assert_true(a.converter && a.enob == (double)bits && a.gain == 1.0 && a.offset == 0.0);
        assert_true(a.converter_noise_rms == 0.0);
        qc_design_result_clear(&a);
        qc_design_result_clear(&b);
        free(t);
    }
    qc_model_free(m);
}

/* IEEE Std 1241: SINAD = 6.02·ENOB + 1.76 dB for a full-scale sine; the
 * ideal quantization noise is Δ²/12 (common practice). */
static void test_enob_sinad_relation(void **state)
{
    (void)state;
    for (double e = 1.0; e <= 16.0; e += 0.5) {
        assert_near(qc_enob_to_sinad_db(e), 6.02 * e + 1.76, TOL_SINAD_DB(e));
        assert_near(qc_sinad_db_to_enob(qc_enob_to_sinad_db(e)), e, TOL_REL * e);
    }
    const unsigned N = 8;
    const double lo = -0.5, hi = 1.5, A = 0.5 * (hi - lo), delta = (hi - lo) / 256.0;
    qc_converter c;
    qc_converter_default(&c, lo, hi);
    assert_true(qc_converter_noise_var(&c, N) == 0.0); /* ENOB = N: ideal */
    c.enob = 8.0;
    assert_true(qc_converter_noise_var(&c, N) == 0.0);
    for (double e = 2.0; e < 8.0; e += 0.75) {
        c.enob = e;
        /* total noise and distortion of a full-scale sine at this SINAD,
         * less the ideal quantization noise Δ²/12 */
        double p_nad = 0.5 * A * A / pow(10.0, (6.0206 * e + 1.7609) / 10.0);
        assert_near(qc_converter_noise_var(&c, N), p_nad - delta * delta / 12.0,
                    1e-4 * p_nad);
    }
}

/* Jitter σ_t on a full-scale sine of frequency f: SNR = −20·log10(2π f
 * σ_t) (common practice). */
static void test_jitter_snr(void **state)
{
    (void)state;
    qc_converter c;
    qc_converter_default(&c, -1.0, 1.0);
    const double f[] = {1e6, 1e8, 2.5e9}, s[] = {1e-13, 1e-12, 5e-12};
    for (size_t i = 0; i < 3; i++) {
        c.jitter_s = s[i];
        c.signal_freq = f[i];
        double snr_db = 10.0 * log10(0.5 / qc_converter_noise_var(&c, 10));
        assert_near(snr_db, -20.0 * log10(2.0 * M_PI * f[i] * s[i]), 1e-9);
    }
}

/* The added noise: Gaussian laws exactly (variances add), counts by the
 * exact sum, other laws by the FFT grid against direct quadrature of
 * ∫ f(y|x) Φ((t − y)/σ) dy (GSL QAGS). */
typedef struct {
    const qc_model *m;
    double x, t, sigma;
} conv_point;

static double integrand(double y, void *p)
{
    const conv_point *c = p;
    const qc_model_type *ty = qc_model_get_type(c->m);
    return ty->density(c->m, c->x, y) * gsl_cdf_gaussian_P(c->t - y, c->sigma);
}

static void test_added_noise_laws(void **state)
{
    (void)state;
    /* Gaussian: N(x, σ² + s²) */
    qc_model *g = gauss(0.3), *n;
    assert_int_equal(qc_model_add_noise(g, 0.4, &n), QC_OK);
    const qc_model_type *nt = qc_model_get_type(n);
    for (double t = -2.0; t <= 2.0; t += 0.25)
        assert_near(nt->below(n, 0.5, t), gsl_cdf_gaussian_P(t - 0.5, 0.5), TOL_EXACT);
    qc_model_free(n);
    qc_model_free(g);

    /* counts: Σ_k Poisson(k; λ) Φ((t − k)/σ) */
    double pp[2] = {6.0, 0.5};
    qc_model *p;
    assert_int_equal(qc_model_alloc(&qc_model_poisson, pp, &p), QC_OK);
    assert_int_equal(qc_model_add_noise(p, 0.7, &n), QC_OK);
    nt = qc_model_get_type(n);
    for (double t = 0.5; t < 15.0; t += 1.3) {
        double ref = 0.0;
        for (unsigned k = 0; k < 200; k++)
            ref += gsl_ran_poisson_pdf(k, 6.5) * gsl_cdf_gaussian_P(t - k, 0.7);
        assert_near(nt->below(n, 1.0, t), ref, TOL_EXACT);
        assert_near(nt->above(n, 1.0, t), 1.0 - ref, 1e-12);
    }
    qc_model_free(n);
    qc_model_free(p);

    /* optically pre-amplified detection: the FFT grid */
    double pa[1] = {2.0};
    qc_model *a;
    assert_int_equal(qc_model_alloc(&qc_model_preamp, pa, &a), QC_OK);
    assert_int_equal(qc_model_add_noise(a, 1.5, &n), QC_OK);
    nt = qc_model_get_type(n);
    gsl_integration_workspace *w = gsl_integration_workspace_alloc(1000);
    for (double t = -2.0; t < 40.0; t += 3.7) {
        conv_point c = {a, 10.0, t, 1.5};
        gsl_function F = {integrand, &c};
        double ref, err;
        assert_int_equal(gsl_integration_qagiu(&F, 0.0, 1e-13, 1e-11, 1000, w, &ref, &err), 0);
        assert_near(nt->below(n, 10.0, t), ref, TOL_CONV);
        assert_near(nt->above(n, 10.0, t), 1.0 - ref, TOL_CONV);
    }
    gsl_integration_workspace_free(w);
    qc_model_free(n);
    qc_model_free(a);
}

/* Less ENOB or more jitter never raises the rate (data processing: the
 * converter adds independent noise before the same cells). */
static void test_monotone_in_enob_and_jitter(void **state)
{
    (void)state;
    qc_model *m = gauss(0.25);
    qc_converter c;
    qc_converter_default(&c, -4.0, 4.0);
    qc_design_request r;
    request(&r, m, pam4, 4, 6, &c);
    double prev = rate_of(&r);
    for (double e = 5.75; e >= 1.0; e -= 0.25) {
        c.enob = e;
        double v = rate_of(&r);
        assert_true(v <= prev + TOL_ORDER);
        prev = v;
    }
    c.enob = NAN;
    assert_true(prev < rate_of(&r) - 0.1); /* 1 effective bit of 6 costs */
    c.signal_freq = 1e9;
    prev = rate_of(&r);
    const double no_jitter = prev;
    for (double j = 1e-13; j <= 1e-10; j *= 2.0) {
        c.jitter_s = j;
        double v = rate_of(&r);
        assert_true(v <= prev + TOL_ORDER);
        prev = v;
    }
    /* 82 ps at 1 GHz: a full-scale sine's SNR −20·log10(0.51) ≈ 5.8 dB */
    assert_true(prev < no_jitter - 0.3);
    qc_model_free(m);
}

/* The best gain and offset are never worse than given ones; the AGC rule
 * is a given gain too. */
static void test_best_gain_never_worse(void **state)
{
    (void)state;
    qc_model *m = gauss(0.3);
    qc_converter c;
    qc_converter_default(&c, -1.0, 1.0);
    c.enob = 4.5;
    qc_design_request r;
    request(&r, m, pam4, 4, 5, &c);
    c.gain_mode = QC_GAIN_BEST;
    c.offset_best = 1;
    double best = rate_of(&r);
    c.gain_mode = QC_GAIN_FIXED;
    c.offset_best = 0;
    const double gains[] = {0.1, 0.2, 0.25, 0.3, 0.5, 1.0};
    for (size_t i = 0; i < 6; i++) {
        c.gain = gains[i];
        c.offset = 0.0;
        assert_true(rate_of(&r) <= best + TOL_ORDER);
        c.offset = 0.1;
        assert_true(rate_of(&r) <= best + TOL_ORDER);
    }
    c.gain_mode = QC_GAIN_AGC;
    c.offset = NAN;
    for (double k = 1.0; k <= 5.0; k += 0.5) {
        c.agc_k = k;
        assert_true(rate_of(&r) <= best + TOL_ORDER);
    }
    /* best gain with the offset held at 0 */
    c.gain_mode = QC_GAIN_BEST;
    c.offset = 0.0;
    double best0 = rate_of(&r);
    assert_true(best0 <= best + 1e-6);
    c.gain_mode = QC_GAIN_FIXED;
    for (size_t i = 0; i < 6; i++) {
        c.gain = gains[i];
        assert_true(rate_of(&r) <= best0 + TOL_ORDER);
    }
    /* a given gain with the best offset: that gain, and an offset no worse
     * than the given ones at it (a gain left unset here once crashed) */
    for (size_t i = 0; i < 6; i++) {
        c.gain = gains[i];
        c.offset_best = 0;
        c.offset = 0.0;
        const double at0 = rate_of(&r);
        c.offset = 0.1;
        const double at1 = rate_of(&r);
        c.offset_best = 1;
        c.offset = NAN;
        qc_design_result res;
        assert_int_equal(qc_design(&r, &res), QC_OK);
        assert_true(res.gain == gains[i] && isfinite(res.offset));
        assert_true(res.rate_bits >= fmax(at0, at1) - TOL_ORDER);
        assert_true(res.rate_bits <= best + TOL_ORDER);
        qc_design_result_clear(&res);
    }
    qc_model_free(m);
}

/* DNL/INL draws: reproducible for a seed, different across draws, widths
 * within the peak DNL, INL bow within its peak; the rate's spread. */
static void test_dnl_inl_draws(void **state)
{
    (void)state;
    qc_converter c;
    qc_converter_default(&c, 0.0, 64.0); /* Δ = 1 at 6 bits */
    c.dnl_lsb = 0.4;
    double T1[63], T2[63], T3[63];
    assert_int_equal(qc_converter_transitions(&c, 6, 0, T1), QC_OK);
    assert_int_equal(qc_converter_transitions(&c, 6, 0, T2), QC_OK);
    assert_int_equal(qc_converter_transitions(&c, 6, 1, T3), QC_OK);
    assert_memory_equal(T1, T2, sizeof T1);
    assert_true(memcmp(T1, T3, sizeof T1) != 0);
    assert_true(T1[0] == 1.0);
    for (size_t k = 1; k < 63; k++) {
        double dnl = (T1[k] - T1[k - 1]) - 1.0;
        assert_true(fabs(dnl) <= 0.4);
    }
    c.dnl_lsb = 0.0;
    c.inl_lsb = 0.75;
    assert_int_equal(qc_converter_transitions(&c, 6, 3, T1), QC_OK);
    double peak = 0.0;
    for (size_t k = 0; k < 63; k++)
        peak = fmax(peak, fabs(T1[k] - (double)(k + 1)));
    assert_near(peak, 0.75, 1e-12);

    qc_model *m = gauss(6.0);
    const double lv[4] = {8.0, 24.0, 40.0, 56.0};
    c.dnl_lsb = 0.5;
    c.inl_lsb = 1.0;
    c.draws = 12;
    qc_design_request r;
    request(&r, m, lv, 4, 6, &c);
    qc_design_result res;
    assert_int_equal(qc_design(&r, &res), QC_OK);
    assert_int_equal(res.draws, 12);
    assert_true(res.draws_sd_bits > 0.0 && isfinite(res.draws_ci95_bits));
    assert_true(res.draws_mean_bits > 0.0 && res.draws_mean_bits <= 2.0);
    /* t(0.975, 11) = 2.201 (Student t table, from memory) */
    assert_near(res.draws_ci95_bits, 2.201 * res.draws_sd_bits / sqrt(12.0),
                1e-3 * res.draws_sd_bits);
    qc_design_result_clear(&res);
    qc_model_free(m);
}

/* Measured transition levels of an ideal converter reproduce it; a file
 * out of order is refused naming its line. */
static void test_transition_file(void **state)
{
    (void)state;
    char text[4096] = "# transition levels, 3 bits\n";
    for (int k = 1; k < 8; k++) {
        char line[64];
        snprintf(line, sizeof line, "%.17g\n", -2.0 + 4.0 * k / 8.0);
        strcat(text, line);
    }
    double *T;
    size_t n;
    assert_int_equal(qc_converter_transitions_parse(text, strlen(text), "ideal.txt", &T, &n),
                     QC_OK);
    assert_int_equal(n, 7);
    qc_model *m = gauss(0.5);
    qc_converter c;
    qc_converter_default(&c, -2.0, 2.0);
    qc_design_request r;
    request(&r, m, pam4, 4, 3, &c);
    double ideal = rate_of(&r);
    c.transitions = T;
    c.ntransitions = n;
    assert_true(rate_of(&r) == ideal);
    /* one level short */
    c.ntransitions = 6;
    qc_design_result res;
    assert_int_equal(qc_design(&r, &res), QC_EINVAL);
    assert_message("6 levels for a 3-bit converter");
    free(T);
    qc_model_free(m);

    const char *bad = "0.1\n0.2\n\n0.15\n0.3\n";
    assert_int_equal(qc_converter_transitions_parse(bad, strlen(bad), "hist.txt", &T, &n),
                     QC_EFORMAT);
    assert_message("hist.txt:4:");
    assert_null(T);
    const char *equal = "0.1\n0.2\n0.2\n";
    assert_int_equal(qc_converter_transitions_parse(equal, strlen(equal), "h.txt", &T, &n),
                     QC_EFORMAT);
    assert_message("h.txt:3:");
    const char *word = "0.1\nzero\n";
    assert_int_equal(qc_converter_transitions_parse(word, strlen(word), "w.txt", &T, &n),
                     QC_EFORMAT);
    assert_message("w.txt:2: 'zero' is not a number");
}

/* Converter noise for a count law and an FFT-grid law: the design runs
 * and rates below the ideal converter. */
static void test_other_laws(void **state)
{
    (void)state;
    double pp[2] = {20.0, 1.0};
    qc_model *p;
    assert_int_equal(qc_model_alloc(&qc_model_poisson, pp, &p), QC_OK);
    const double lv[2] = {0.0, 1.0};
    qc_converter c;
    qc_converter_default(&c, -0.5, 31.5);
    qc_design_request r;
    request(&r, p, lv, 2, 5, &c);
    double ideal = rate_of(&r);
    c.enob = 3.0;
    double noisy = rate_of(&r);
    assert_true(noisy < ideal && noisy > 0.5);
    qc_model_free(p);
}

static void test_bad_converters(void **state)
{
    (void)state;
    qc_converter c;
    qc_converter_default(&c, 1.0, 1.0);
    assert_int_equal(qc_converter_check(&c, 8), QC_EINVAL);
    assert_message("zero width");
    qc_converter_default(&c, 0.0, 1.0);
    c.enob = 8.5; /* valid, but out of reach of 8 bits: a sweep records it */
    assert_int_equal(qc_converter_check(&c, 8), QC_EINFEASIBLE);
    assert_message("enob: 8.5 effective bits of a 8-bit converter");
    c.enob = -1.0;
    assert_int_equal(qc_converter_check(&c, 8), QC_EINVAL);
    assert_message("enob: -1 effective bits");
    c.enob = NAN;
    c.jitter_s = -1e-12;
    assert_int_equal(qc_converter_check(&c, 8), QC_EINVAL);
    assert_message("jitter-s");
    c.jitter_s = 1e-12;
    assert_int_equal(qc_converter_check(&c, 8), QC_EINVAL);
    assert_message("needs signal-freq");
    c.jitter_s = 0.0;
    c.dnl_lsb = 1.0;
    assert_int_equal(qc_converter_check(&c, 8), QC_EINVAL);
    assert_message("missing code");
    c.dnl_lsb = 0.0;
    c.gain = 0.0;
    assert_int_equal(qc_converter_check(&c, 8), QC_EINVAL);
    assert_message("converter-gain");
    /* cells that are not 2^N codes */
    qc_model *m = gauss(1.0);
    qc_converter_default(&c, -1.0, 1.0);
    qc_design_request r;
    request(&r, m, pam4, 4, 3, &c);
    r.quantizer.cells = 6;
    qc_design_result res;
    assert_int_equal(qc_design(&r, &res), QC_EINVAL);
    assert_message("not 2^N codes");
    r.quantizer.cells = 8;
    r.quantizer.converter = NULL;
    assert_int_equal(qc_design(&r, &res), QC_EINVAL);
    qc_model_free(m);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_ideal_equals_fixed_uniform),
        cmocka_unit_test(test_enob_sinad_relation),
        cmocka_unit_test(test_jitter_snr),
        cmocka_unit_test(test_added_noise_laws),
        cmocka_unit_test(test_monotone_in_enob_and_jitter),
        cmocka_unit_test(test_best_gain_never_worse),
        cmocka_unit_test(test_dnl_inl_draws),
        cmocka_unit_test(test_transition_file),
        cmocka_unit_test(test_other_laws),
        cmocka_unit_test(test_bad_converters),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
