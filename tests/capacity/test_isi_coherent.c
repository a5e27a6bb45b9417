/* test_isi_coherent.c — coherent channels with memory: complex taps on
 * QAM or on PAM carried by the in-phase quadrature, circular complex
 * Gaussian noise and the product quantizer. One tap reproduces the exact
 * memoryless QAM rate; real taps on QAM are two independent real
 * channels; the fibre's all-pass dispersion response has unit energy and
 * symmetric taps; the orderings of the rates; the tap-list grammar and
 * the error paths. The taps of the dispersion response are checked
 * against numpy's FFT and scipy's Fresnel integrals in
 * check_isi_coherent.py. */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <cmocka.h>

#include <math.h>
#include <stdlib.h>
#include <string.h>
#ifdef _OPENMP
#include <omp.h>
#endif

#include "quantcap.h"

#define TEST_RNG_SEED 0x0c0be2e7ULL
#include "test_helpers.h"

#define TOL_EXACT 1e-9   /* two exact routes to the same rate              */
#define TOL_ENERGY 1e-9  /* Parseval on the FFT grid: kept + truncated = 1 */
#define TOL_SYM 1e-12    /* h_k = h_{−k} of an even transfer function       */
#define TOL_PARSE 0.0    /* the tap grammar parses decimal numbers exactly  */
#define CI_FACTOR 1.0    /* an estimate within its own 95 % half-width      */

static qc_model *gauss(double sigma)
{
    qc_model *m = NULL;
    assert_int_equal(qc_model_alloc(&qc_model_gauss, &sigma, &m), QC_OK);
    return m;
}

/* The exact memoryless rate of square QAM through the product quantizer:
 * I and Q are independent channels with the same levels and thresholds,
 * so the rate per complex symbol is twice one quadrature's mutual
 * information (Cover & Thomas, Elements of Information Theory, eq. 2.28,
 * and the chain rule for independent pairs). */
static double qam_product_rate(const qc_model *m, const double *lev, size_t n,
                               const double *thr, size_t nt)
{
    qc_dmc *d = NULL;
    double mi = NAN, *law = malloc(n * sizeof *law);
    assert_non_null(law);
    for (size_t i = 0; i < n; i++)
        law[i] = 1.0 / (double)n;
    assert_int_equal(qc_discretize(m, lev, n, thr, nt, &d), QC_OK);
    assert_int_equal(qc_mutual_information(d, law, &mi), QC_OK);
    qc_dmc_free(d);
    free(law);
    return 2.0 * mi / log(2.0);
}

/* One tap (L = 0): the trellis has one state and the simulated rate must
 * cover the exact memoryless QAM rate; the symbol-by-symbol rate is that
 * rate exactly. A tap of j (a quarter turn) maps the square QAM onto
 * itself and swaps I and Q, so the rates stay the same. */
static void test_one_tap_qam(void **state)
{
    (void)state;
    qc_model *m = gauss(0.45);
    const double lev[4] = {-3, -1, 1, 3}, thr[7] = {-3, -2, -1, 0, 1, 2, 3};
    const double exact = qam_product_rate(m, lev, 4, thr, 7);
    const double one[1] = {1.0}, zero[1] = {0.0};
    qc_isi_request req = {.model = m, .levels = lev, .nlevels = 4, .taps = one, .ntaps = 1,
                          .thresholds = thr, .nthresholds = 7, .symbols = 40000, .seed = 11,
                          .unquantized = 1, .taps_imag = zero, .mode = QC_ISI_COHERENT_QAM};
    qc_isi_result r;
    assert_int_equal(qc_isi_rate(&req, &r), QC_OK);
    assert_int_equal(r.states, 1);
    assert_near(r.symbolwise_bits, exact, TOL_EXACT);
    assert_true(fabs(r.rate_bits - exact) <= CI_FACTOR * r.rate_ci_bits);
    assert_true(r.rate_bits <= r.unquantized_bits + r.rate_ci_bits + r.unquantized_ci_bits);
    assert_true(r.unquantized_bits <= 4.0 + r.unquantized_ci_bits); /* log2 16 */

    const double quarter_re[1] = {0.0}, quarter_im[1] = {1.0};
    req.taps = quarter_re;
    req.taps_imag = quarter_im;
    qc_isi_result q;
    assert_int_equal(qc_isi_rate(&req, &q), QC_OK);
    assert_near(q.symbolwise_bits, exact, TOL_EXACT);
    assert_true(fabs(q.rate_bits - exact) <= CI_FACTOR * q.rate_ci_bits);
    qc_model_free(m);
}

/* Real taps on QAM: I sees only the I symbols and Q only the Q symbols,
 * each through the same real ISI channel, with independent noise; the
 * pair is two independent real channels, so every rate is twice the real
 * channel's: exactly for the symbol-by-symbol rate (the joint cell's law
 * is the product of the two quadratures'), within the intervals for the
 * simulated ones. PAM on the in-phase quadrature with real taps leaves Q
 * pure noise: the rates are the real channel's. */
static void test_real_taps_split(void **state)
{
    (void)state;
    qc_model *m = gauss(0.4);
    const double lev[2] = {-1, 1}, thr[3] = {-1, 0, 1};
    const double taps[2] = {1.0, 0.6}, zero[2] = {0.0, 0.0};
    qc_isi_request real = {.model = m, .levels = lev, .nlevels = 2, .taps = taps, .ntaps = 2,
                           .thresholds = thr, .nthresholds = 3, .symbols = 40000, .seed = 5,
                           .unquantized = 1};
    qc_isi_request qam = real;
    qam.mode = QC_ISI_COHERENT_QAM;
    qam.taps_imag = zero;
    qam.seed = 6;
    qc_isi_result rr, rq;
    assert_int_equal(qc_isi_rate(&real, &rr), QC_OK);
    assert_int_equal(qc_isi_rate(&qam, &rq), QC_OK);
    assert_int_equal(rq.states, 4); /* QPSK, L = 1 */
    assert_near(rq.symbolwise_bits, 2.0 * rr.symbolwise_bits, TOL_EXACT);
    assert_true(fabs(rq.rate_bits - 2.0 * rr.rate_bits) <=
                rq.rate_ci_bits + 2.0 * rr.rate_ci_bits);
    assert_true(fabs(rq.unquantized_bits - 2.0 * rr.unquantized_bits) <=
                rq.unquantized_ci_bits + 2.0 * rr.unquantized_ci_bits);

    qc_isi_request pam = real;
    pam.mode = QC_ISI_COHERENT_PAM;
    pam.taps_imag = zero;
    qc_isi_result rp;
    assert_int_equal(qc_isi_rate(&pam, &rp), QC_OK);
    assert_int_equal(rp.states, 2);
    assert_near(rp.symbolwise_bits, rr.symbolwise_bits, TOL_EXACT);
    assert_true(fabs(rp.rate_bits - rr.rate_bits) <= rp.rate_ci_bits + rr.rate_ci_bits);
    qc_model_free(m);
}

/* Complex taps couple the quadratures: the orderings every rate obeys
 * (data processing: quantized ≤ unquantized; the sequence detector is at
 * least the symbol-by-symbol receiver; at most log2 of the symbols), and
 * the sequence detector recovers what the symbol-by-symbol receiver
 * loses to the interference. Same bits for the same seed on 1 and on 2
 * threads. */
static void test_complex_orderings(void **state)
{
    (void)state;
    qc_model *m = gauss(0.35);
    const double lev[2] = {-1, 1}, thr[5] = {-1.5, -0.75, 0, 0.75, 1.5};
    const double re[3] = {0.9, 0.2, -0.1}, im[3] = {0.1, -0.3, 0.15};
    qc_isi_request req = {.model = m, .levels = lev, .nlevels = 2, .taps = re, .ntaps = 3,
                          .thresholds = thr, .nthresholds = 5, .symbols = 20000, .seed = 9,
                          .unquantized = 1, .taps_imag = im, .mode = QC_ISI_COHERENT_QAM};
    qc_isi_result r, again;
    assert_int_equal(qc_isi_rate(&req, &r), QC_OK);
    assert_int_equal(r.states, 16);
    assert_true(r.rate_bits <= r.unquantized_bits + r.rate_ci_bits + r.unquantized_ci_bits);
    assert_true(r.symbolwise_bits <= r.rate_bits + r.rate_ci_bits);
    assert_true(r.unquantized_bits <= 2.0 + r.unquantized_ci_bits);
    assert_true(r.rate_bits > r.symbolwise_bits + 0.05);
#ifdef _OPENMP
    omp_set_num_threads(1); /* the batches are independent: any thread count */
#endif
    assert_int_equal(qc_isi_rate(&req, &again), QC_OK);
#ifdef _OPENMP
    omp_set_num_threads(2);
#endif
    assert_memory_equal(&again, &r, sizeof r);

    /* PAM on the in-phase quadrature through the same taps */
    req.mode = QC_ISI_COHERENT_PAM;
    assert_int_equal(qc_isi_rate(&req, &r), QC_OK);
    assert_int_equal(r.states, 4);
    assert_true(r.rate_bits <= r.unquantized_bits + r.rate_ci_bits + r.unquantized_ci_bits);
    assert_true(r.symbolwise_bits <= r.rate_bits + r.rate_ci_bits);
    assert_true(r.unquantized_bits <= 1.0 + r.unquantized_ci_bits);
    qc_model_free(m);
}

/* The fibre's all-pass sampled through the Nyquist pulse: Σ|h_k|² over
 * all k is 1 (Parseval), so the kept taps and the truncated energy add to
 * 1; H(f) is even in f, so h_{−k} = h_k; no dispersion is one tap of 1;
 * the opposite sign of dispersion gives the complex conjugate taps. */
static void test_dispersion_response(void **state)
{
    (void)state;
    double re[QC_ISI_MAX_TAPS], im[QC_ISI_MAX_TAPS], re2[QC_ISI_MAX_TAPS],
        im2[QC_ISI_MAX_TAPS], trunc, trunc2;
    size_t n, n2;
    assert_int_equal(qc_isi_coherent_response_taps("dispersion:100", 32e9, 1550.0, 11, re, im,
                                                   &n, &trunc),
                     QC_OK);
    assert_true(n % 2 == 1 && n >= 3);
    double e = 0.0;
    for (size_t i = 0; i < n; i++) {
        e += re[i] * re[i] + im[i] * im[i];
        assert_near(re[i], re[n - 1 - i], TOL_SYM);
        assert_near(im[i], im[n - 1 - i], TOL_SYM);
    }
    assert_true(trunc >= 0.0 && trunc < 0.01);
    assert_near(e + trunc, 1.0, TOL_ENERGY);

    assert_int_equal(qc_isi_coherent_response_taps("dispersion:-100", 32e9, 1550.0, 11, re2,
                                                   im2, &n2, &trunc2),
                     QC_OK);
    assert_int_equal(n2, n);
    for (size_t i = 0; i < n; i++) {
        assert_near(re2[i], re[i], TOL_SYM);
        assert_near(im2[i], -im[i], TOL_SYM);
    }

    assert_int_equal(qc_isi_coherent_response_taps("dispersion:0", 32e9, 1550.0, 11, re, im,
                                                   &n, &trunc),
                     QC_OK);
    assert_int_equal(n, 1);
    assert_near(re[0], 1.0, TOL_ENERGY);
    assert_near(im[0], 0.0, TOL_ENERGY);

    /* truncated to 3 taps: the energy outside is reported, and it adds up */
    assert_int_equal(qc_isi_coherent_response_taps("dispersion:400", 32e9, 1550.0, 3, re, im,
                                                   &n, &trunc),
                     QC_OK);
    assert_int_equal(n, 3);
    e = 0.0;
    for (size_t i = 0; i < n; i++)
        e += re[i] * re[i] + im[i] * im[i];
    assert_true(trunc > 0.05);
    assert_near(e + trunc, 1.0, TOL_ENERGY);

    /* the other responses are real, with no truncated energy */
    assert_int_equal(qc_isi_coherent_response_taps("gauss:0.5", NAN, NAN, 11, re, im, &n,
                                                   &trunc),
                     QC_OK);
    assert_true(isnan(trunc));
    for (size_t i = 0; i < n; i++)
        assert_true(im[i] == 0.0);

    assert_int_equal(qc_isi_coherent_response_taps("dispersion:100:0.5", 32e9, 1550.0, 11,
                                                   re, im, &n, &trunc),
                     QC_EINVAL);
    assert_message("no receiver bandwidth");
    assert_int_equal(qc_isi_coherent_response_taps("dispersion:100", NAN, 1550.0, 11, re, im,
                                                   &n, &trunc),
                     QC_EINVAL);
    assert_message("needs the symbol rate");
    assert_int_equal(qc_isi_coherent_response_taps("dispersion:x", 32e9, 1550.0, 11, re, im,
                                                   &n, &trunc),
                     QC_EINVAL);
    assert_message("dispersion (ps/nm) must be a number");
}

/* The tap grammar: real numbers and a+bj, a-bj, bj as Python writes them. */
static void test_taps_parse(void **state)
{
    (void)state;
    double re[QC_ISI_MAX_TAPS], im[QC_ISI_MAX_TAPS];
    size_t n;
    int cplx;
    assert_int_equal(qc_isi_taps_parse("0.9+0.1j, 0.2-0.3j,-0.05j,1e-2-2.5e-3j,0.5", re, im,
                                       &n, &cplx),
                     QC_OK);
    assert_int_equal(n, 5);
    assert_true(cplx);
    const double want_re[5] = {0.9, 0.2, 0.0, 1e-2, 0.5};
    const double want_im[5] = {0.1, -0.3, -0.05, -2.5e-3, 0.0};
    for (size_t i = 0; i < 5; i++) {
        assert_near(re[i], want_re[i], TOL_PARSE);
        assert_near(im[i], want_im[i], TOL_PARSE);
    }
    assert_int_equal(qc_isi_taps_parse("1,0.5", re, im, &n, &cplx), QC_OK);
    assert_false(cplx);
    assert_int_equal(qc_isi_taps_parse("1,0.3j+1", re, im, &n, &cplx), QC_EINVAL);
    assert_message("tap 2");
    assert_int_equal(qc_isi_taps_parse("1,,2", re, im, &n, &cplx), QC_EINVAL);
    assert_message("tap 2 is empty");
    assert_int_equal(qc_isi_taps_parse("1,x+2j", re, im, &n, &cplx), QC_EINVAL);
    assert_message("the real part must be a number");
    assert_int_equal(qc_isi_taps_parse("1,1,1,1,1,1,1,1,1,1,1,1j", re, im, &n, &cplx),
                     QC_EINVAL);
    assert_message("12 taps given; at most 11");

    const double zr[2] = {0, 0}, zi[2] = {0, 0}, ni[2] = {0, NAN};
    assert_int_equal(qc_isi_complex_taps_check(zr, zi, 2), QC_EINVAL);
    assert_message("all 2 taps are zero");
    assert_int_equal(qc_isi_complex_taps_check(zr, ni, 2), QC_EINVAL);
    assert_message("tap 2 (h1) must be a finite complex number");
}

/* Bad requests: complex taps on one real output, coherent detection with
 * an intensity model, a trellis beyond the limit (named), too many joint
 * cells for the symbol-by-symbol rate. */
static void test_coherent_errors(void **state)
{
    (void)state;
    qc_model *m = gauss(0.5);
    const double lev[4] = {-3, -1, 1, 3}, thr[1] = {0};
    const double re[3] = {1, 0.5, 0.2}, im[3] = {0, 0.3, 0};
    qc_isi_request req = {.model = m, .levels = lev, .nlevels = 4, .taps = re, .ntaps = 2,
                          .thresholds = thr, .nthresholds = 1, .symbols = 10000, .seed = 1,
                          .taps_imag = im};
    qc_isi_result r;
    assert_int_equal(qc_isi_rate(&req, &r), QC_EINVAL);
    assert_message("complex taps need a coherent receiver");

    req.mode = QC_ISI_COHERENT_QAM; /* 16-QAM */
    req.ntaps = 3;
    assert_int_equal(qc_isi_rate(&req, &r), QC_OK);
    assert_int_equal(r.states, 256);
    const double re4[4] = {1, 0.5, 0.2, 0.1}, im4[4] = {0, 0.3, 0, 0};
    req.taps = re4;
    req.taps_imag = im4;
    req.ntaps = 4;
    assert_int_equal(qc_isi_rate(&req, &r), QC_EINVAL);
    assert_message("at most 1024 states are supported (QPSK with 6 taps, 16-QAM with 3");

    double sd[3] = {0.1, 0.0, 0.0};
    qc_model *p = NULL;
    assert_int_equal(qc_model_alloc(&qc_model_gauss_sd, sd, &p), QC_OK);
    const double ilev[2] = {0, 1};
    req.model = p;
    req.levels = ilev;
    req.nlevels = 2;
    req.ntaps = 2;
    req.mode = QC_ISI_COHERENT_PAM;
    assert_int_equal(qc_isi_rate(&req, &r), QC_EINVAL);
    assert_message("'gauss-sd' is an intensity model");
    qc_model_free(p);

    /* 16-QAM through 2^11 cells per quadrature: 16 × 2^22 joint cells */
    const size_t nt = 2047;
    double *many = malloc(nt * sizeof *many);
    assert_non_null(many);
    for (size_t j = 0; j < nt; j++)
        many[j] = -4.0 + 8.0 * (double)(j + 1) / (double)(nt + 1);
    req.model = m;
    req.levels = lev;
    req.nlevels = 4;
    req.mode = QC_ISI_COHERENT_QAM;
    req.thresholds = many;
    req.nthresholds = nt;
    assert_int_equal(qc_isi_rate(&req, &r), QC_EINVAL);
    assert_message("2048 x 2048 cells (I x Q)");
    free(many);
    qc_model_free(m);
}

/* The design with a coherent memory channel: QAM with one tap of 1
 * through fixed thresholds is the memoryless QAM design, whose rate
 * (rate_bits, per complex symbol) the simulated rate must cover within its
 * interval, and the symbol-by-symbol rate equals exactly; the report
 * echoes the imaginary parts. Without coherent detection QAM is refused. */
static void test_design_coherent(void **state)
{
    (void)state;
    qc_model *m = gauss(0.45);
    const double lev[4] = {-3, -1, 1, 3}, thr[3] = {-2, 0, 2};
    const double one[1] = {1.0}, zero[1] = {0.0};
    qc_design_request req;
    qc_design_request_default(&req);
    req.channel.model = m;
    req.channel.levels = lev;
    req.channel.nlevels = 4;
    req.channel.dimensions = 2;
    req.quantizer.kind = QC_QUANTIZER_FIXED;
    req.quantizer.thresholds = thr;
    req.quantizer.nthresholds = 3;
    req.quantizer.cells = 4;
    req.memory.taps = one;
    req.memory.taps_imag = zero;
    req.memory.ntaps = 1;
    req.memory.symbols = 40000;
    req.memory.seed = 4;
    req.memory.coherent = 1;
    qc_design_result r;
    assert_int_equal(qc_design(&req, &r), QC_OK);
    assert_int_equal(r.states, 1);
    assert_true(r.coherent && r.taps_imag && r.taps_imag[0] == 0.0);
    assert_true(isnan(r.truncated_energy));
    assert_near(r.symbolwise_rate_bits, r.rate_bits, TOL_EXACT);
    assert_true(fabs(r.information_rate_bits - r.rate_bits) <= CI_FACTOR * r.information_rate_ci_bits);
    qc_design_result_clear(&r);

    req.memory.coherent = 0;
    assert_int_equal(qc_design(&req, &r), QC_EINVAL);
    assert_message("needs coherent detection");
    qc_model_free(m);
}

/* A converter on a coherent channel with memory: a given gain and offset
 * act on I and Q alike (memory thresholds (T - offset)/gain, the same
 * sequence as the product quantizer with those thresholds plus the
 * converter's noise); the best gain never rates below its start on the
 * same seeded sequence (common random numbers); the AGC rule is refused. */
static void test_converter_coherent(void **state)
{
    (void)state;
    qc_model *m = gauss(0.45);
    const double lev[4] = {-3, -1, 1, 3}, re[2] = {1.0, 0.0}, im[2] = {0.0, 0.3};
    qc_converter c;
    qc_converter_default(&c, -4.0, 4.0);
    c.enob = 2.5;
    c.gain = 0.9;
    c.offset = 0.1;
    qc_design_request req;
    qc_design_request_default(&req);
    req.channel.model = m;
    req.channel.levels = lev;
    req.channel.nlevels = 4;
    req.channel.dimensions = 2;
    req.quantizer.cells = 8;
    req.quantizer.kind = QC_QUANTIZER_CONVERTER;
    req.quantizer.converter = &c;
    req.memory.taps = re;
    req.memory.taps_imag = im;
    req.memory.ntaps = 2;
    req.memory.symbols = 20000;
    req.memory.seed = 6;
    req.memory.coherent = 1;
    qc_design_result r;
    assert_int_equal(qc_design(&req, &r), QC_OK);
    assert_true(r.coherent && r.memory_gain == 0.9 && r.memory_offset == 0.1);
    for (size_t j = 0; j < r.nthresholds; j++)
        assert_near(r.memory_thresholds[j], (r.thresholds[j] - 0.1) / 0.9, 1e-12);
    /* the converter's noise costs rate against the same thresholds without it */
    qc_isi_request isi = {.model = m, .levels = lev, .nlevels = 4, .taps = re, .taps_imag = im,
                          .ntaps = 2, .thresholds = r.memory_thresholds,
                          .nthresholds = r.nthresholds, .symbols = 20000, .seed = 6,
                          .mode = QC_ISI_COHERENT_QAM};
    qc_isi_result clean;
    assert_int_equal(qc_isi_rate(&isi, &clean), QC_OK);
    assert_true(r.information_rate_bits < clean.rate_bits);
    const double fixed_rate = r.information_rate_bits;
    qc_design_result_clear(&r);

    c.gain_mode = QC_GAIN_BEST;
    assert_int_equal(qc_design(&req, &r), QC_OK);
    assert_true(r.memory_evaluations >= 10);
    assert_true(r.information_rate_bits >= fixed_rate - r.information_rate_ci_bits);
    assert_true(r.information_rate_bits <= 4.0);
    qc_design_result_clear(&r);

    c.gain_mode = QC_GAIN_AGC;
    c.agc_k = 2.0;
    assert_int_equal(qc_design(&req, &r), QC_EINVAL);
    assert_message("the AGC rule is applied to a real output with memory");
    qc_model_free(m);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_one_tap_qam),
        cmocka_unit_test(test_real_taps_split),
        cmocka_unit_test(test_complex_orderings),
        cmocka_unit_test(test_dispersion_response),
        cmocka_unit_test(test_taps_parse),
        cmocka_unit_test(test_coherent_errors),
        cmocka_unit_test(test_design_coherent),
        cmocka_unit_test(test_converter_coherent),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
