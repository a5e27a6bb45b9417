/* test_isi.c — channels with memory: the taps of the named responses
 * against their closed forms, the trellis size limit, the same result for
 * any thread count, reproducibility by seed, a rate inside a one-thread
 * parallel region (a sweep's point) that starts no threads, figures run
 * alone and kept sequences replayed to the bit, and the error paths. The
 * rates themselves are checked against numpy/scipy in check_isi.py. */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <cmocka.h>

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>
#ifdef _OPENMP
#include <omp.h>
#endif

#include <gsl/gsl_cdf.h>

#include "quantcap.h"

#define TEST_RNG_SEED 0x15171a11ULL
#include "test_helpers.h"

#define TOL_TAP 2e-3     /* FFT-grid taps vs closed form (64 points/symbol) */
#define TOL_SAME 1e-12   /* two routes to the same first-order response     */
#define TOL_SUM 1e-12    /* taps scaled to sum 1                            */
#define TOL_SYMBOLWISE 1e-9 /* one tap: the same channel matrix, another sum */
#define PI_VALUE 3.14159265358979323846

static qc_model *gauss(double sigma)
{
    qc_model *m = NULL;
    assert_int_equal(qc_model_alloc(&qc_model_gauss, &sigma, &m), QC_OK);
    return m;
}

/* A design request on the channel with memory: levels lev[nlev] in m's
 * noise through taps[ntaps], `cells` cells of strategy `kind`, `symbols`
 * simulated from `seed`. */
static qc_design_request memory_request(qc_model *m, const double *lev, size_t nlev,
                                        qc_quantizer_kind kind, size_t cells,
                                        const double *taps, size_t ntaps, size_t symbols,
                                        uint64_t seed)
{
    qc_design_request req;
    qc_design_request_default(&req);
    req.channel.model = m;
    req.channel.levels = lev;
    req.channel.nlevels = nlev;
    req.quantizer.kind = kind;
    req.quantizer.cells = cells;
    req.memory.taps = taps;
    req.memory.ntaps = ntaps;
    req.memory.symbols = symbols;
    req.memory.seed = seed;
    return req;
}

/* Gaussian low-pass: the filtered rectangle is Φ(t/σ) − Φ((t − 1)/σ) with
 * σ = √(ln 2)/(2π·B) symbols (|H(B)|² = ½), sampled at its peak t = ½ + k
 * (closed form; the taps are these samples over their sum). */
static void test_gauss_response(void **state)
{
    (void)state;
    double taps[QC_ISI_MAX_TAPS];
    size_t n;
    const double B = 0.5;
    assert_int_equal(qc_isi_response_taps("gauss:0.5", NAN, NAN, taps, &n), QC_OK);
    assert_true(n % 2 == 1); /* symmetric about the peak */
    const double s = sqrt(log(2.0)) / (2.0 * PI_VALUE * B);
    double ref[QC_ISI_MAX_TAPS], sum = 0.0;
    const long half = (long)n / 2;
    for (long k = -half; k <= half; k++) {
        ref[k + half] = gsl_cdf_gaussian_P(k + 0.5, s) - gsl_cdf_gaussian_P(k - 0.5, s);
        sum += ref[k + half];
    }
    double tsum = 0.0;
    for (size_t i = 0; i < n; i++) {
        assert_near(taps[i], ref[i] / sum, TOL_TAP);
        tsum += taps[i];
    }
    assert_near(tsum, 1.0, TOL_SUM);
}

/* First order: Bessel–Thomson of order 1 is θ_1(s) = 1 + s, the RC
 * response itself (Thomson, Proc. IEE 96, 1949), so both specs give the
 * same taps; and the RC pulse decays geometrically after its peak, by
 * exp(−2π·B) per symbol (τ = 1/(2π·B) symbols). */
static void test_first_order_responses(void **state)
{
    (void)state;
    double rc[QC_ISI_MAX_TAPS], be[QC_ISI_MAX_TAPS];
    size_t nr, nb;
    assert_int_equal(qc_isi_response_taps("rc:0.4", NAN, NAN, rc, &nr), QC_OK);
    assert_int_equal(qc_isi_response_taps("bessel:1:0.4", NAN, NAN, be, &nb), QC_OK);
    assert_int_equal(nr, nb);
    for (size_t i = 0; i < nr; i++)
        assert_near(rc[i], be[i], TOL_SAME);
    size_t peak = 0;
    for (size_t i = 1; i < nr; i++)
        if (rc[i] > rc[peak])
            peak = i;
    for (size_t i = peak + 1; i + 1 < nr; i++)
        assert_near(rc[i + 1] / rc[i], exp(-2.0 * PI_VALUE * 0.4), 10 * TOL_TAP);
}

/* Wider bandwidth, fewer taps; an all-pass amount of dispersion at 0
 * ps/nm is one tap. */
static void test_response_shapes(void **state)
{
    (void)state;
    double t[QC_ISI_MAX_TAPS];
    size_t n1, n2, n3;
    assert_int_equal(qc_isi_response_taps("bessel:4:0.35", NAN, NAN, t, &n1), QC_OK);
    assert_int_equal(qc_isi_response_taps("bessel:4:0.7", NAN, NAN, t, &n2), QC_OK);
    assert_true(n1 >= n2);
    assert_int_equal(qc_isi_response_taps("dispersion:0", 56e9, 1550, t, &n3), QC_OK);
    assert_int_equal(n3, 1);
    assert_near(t[0], 1.0, TOL_SUM);
    assert_int_equal(qc_isi_response_taps("dispersion:300", 28e9, 1550, t, &n3), QC_OK);
    assert_true(n3 > 1);
}

static void test_response_errors(void **state)
{
    (void)state;
    double t[QC_ISI_MAX_TAPS];
    size_t n;
    assert_int_equal(qc_isi_response_taps("gauss:0", NAN, NAN, t, &n), QC_EINVAL);
    assert_message("must be > 0");
    assert_int_equal(qc_isi_response_taps("rc:-0.5", NAN, NAN, t, &n), QC_EINVAL);
    assert_message("bandwidth fraction");
    assert_int_equal(qc_isi_response_taps("bessel:0:0.5", NAN, NAN, t, &n), QC_EINVAL);
    assert_message("Bessel order");
    assert_int_equal(qc_isi_response_taps("sinc:0.5", NAN, NAN, t, &n), QC_EINVAL);
    assert_message("unknown response 'sinc'");
    assert_int_equal(qc_isi_response_taps("dispersion:100", NAN, 1550, t, &n), QC_EINVAL);
    assert_message("symbol-rate");
    assert_int_equal(qc_isi_response_taps("gauss:0.05", NAN, NAN, t, &n), QC_EINVAL);
    assert_message("at most 11 taps");
}

static void test_taps_and_states(void **state)
{
    (void)state;
    const double zero[3] = {0, 0, 0}, bad[2] = {1, NAN};
    assert_int_equal(qc_isi_taps_check(zero, 3), QC_EINVAL);
    assert_message("all 3 taps are zero");
    assert_int_equal(qc_isi_taps_check(bad, 2), QC_EINVAL);
    assert_message("tap 2 (h1)");
    assert_int_equal(qc_isi_states(4, 6), 1024);
    assert_int_equal(qc_isi_states(4, 7), 0);
    assert_int_equal(qc_isi_states(2, 11), 1024);
    assert_int_equal(qc_isi_states(3, 1), 1);

    qc_model *m = gauss(0.5);
    const double lev[4] = {-3, -1, 1, 3}, taps[7] = {1, .5, .4, .3, .2, .1, .05}, thr[1] = {0};
    qc_isi_request req = {.model = m, .levels = lev, .nlevels = 4, .taps = taps, .ntaps = 7,
                          .thresholds = thr, .nthresholds = 1, .symbols = 10000, .seed = 1};
    qc_isi_result r;
    assert_int_equal(qc_isi_rate(&req, &r), QC_EINVAL);
    assert_message("at most 1024 states");
    req.ntaps = 2;
    req.symbols = 100;
    assert_int_equal(qc_isi_rate(&req, &r), QC_EINVAL);
    assert_message("symbols: 100");
    qc_model_free(m);

    /* a model that is not Gaussian given its level */
    double pp[2] = {5.0, 0.1};
    qc_model *p = NULL;
    assert_int_equal(qc_model_alloc(&qc_model_poisson, pp, &p), QC_OK);
    req.model = p;
    req.symbols = 10000;
    const double ilev[2] = {0, 1};
    req.levels = ilev;
    req.nlevels = 2;
    assert_int_equal(qc_isi_rate(&req, &r), QC_EINVAL);
    assert_message("not Gaussian");
    qc_model_free(p);

    /* a noiseless output an intensity model refuses (negative) */
    double sd[3] = {0.1, 0.0, 0.0};
    assert_int_equal(qc_model_alloc(&qc_model_gauss_sd, sd, &p), QC_OK);
    const double neg[2] = {1.0, -1.0};
    req.model = p;
    req.taps = neg;
    assert_int_equal(qc_isi_rate(&req, &r), QC_EINVAL);
    assert_message("noiseless output -1");
    qc_model_free(p);
}

/* Threads of this process (the "Threads:" line of /proc/self/status,
 * Linux); 0 when it cannot be read. */
static int threads_now(void)
{
    FILE *f = fopen("/proc/self/status", "r");
    char line[256];
    int n = 0;
    while (f && fgets(line, sizeof line, f))
        if (sscanf(line, "Threads: %d", &n) == 1)
            break;
    if (f)
        fclose(f);
    return n;
}

static double cpu_seconds(clockid_t clock)
{
    struct timespec t;
    clock_gettime(clock, &t);
    return (double)t.tv_sec + 1e-9 * (double)t.tv_nsec;
}

/* A sweep runs each point in a thread of its own parallel region, one
 * thread with --jobs 1. That region is inactive, so an unguarded parallel
 * loop inside the point would start a nested team (whose threads end with
 * it) and use the cores that --jobs 1 leaves alone. The rate computed
 * there runs in its thread alone: the process spends no CPU time beyond
 * that thread's (a nested team would take about half of the batches);
 * outside any region its batches may run in threads, with the same bits.
 * Runs first, while the process has a single thread and no idle team
 * that could spin. */
static void test_rate_in_a_sweep_point_keeps_its_thread(void **state)
{
    (void)state;
#ifndef _OPENMP
    skip();
#else
    if (threads_now() != 1) {
        print_message("the process already runs %d threads: skipped\n", threads_now());
        skip();
    }
    omp_set_num_threads(2);
    qc_model *m = gauss(0.6);
    const double lev[4] = {-3, -1, 1, 3}, taps[2] = {0.8, 0.3}, thr[3] = {-2, 0, 2};
    qc_isi_request req = {.model = m, .levels = lev, .nlevels = 4, .taps = taps, .ntaps = 2,
                          .thresholds = thr, .nthresholds = 3, .symbols = 40000, .seed = 7,
                          .unquantized = 1};
    qc_isi_result in_point, alone;
    qc_status st = QC_EINVAL;
    double own = 0.0, all = 0.0;
#pragma omp parallel num_threads(1)
    { /* both clocks read at the same two points, inside the region */
        double p0 = cpu_seconds(CLOCK_PROCESS_CPUTIME_ID);
        double t0 = cpu_seconds(CLOCK_THREAD_CPUTIME_ID);
        st = qc_isi_rate(&req, &in_point);
        own = cpu_seconds(CLOCK_THREAD_CPUTIME_ID) - t0;
        all = cpu_seconds(CLOCK_PROCESS_CPUTIME_ID) - p0;
    }
    assert_int_equal(st, QC_OK);
    assert_true(own > 0.0);
    if (all - own > 0.25 * own)
        fail_msg("a rate inside a one-thread region took %g s of CPU, its thread %g s", all, own);
    assert_int_equal(qc_isi_rate(&req, &alone), QC_OK);
    assert_memory_equal(&in_point, &alone, sizeof alone);
    qc_model_free(m);
#endif
}

/* The same seed gives the same bits for 1 and 2 threads (independent
 * batches, each seeded from the seed and its index); another seed differs. */
static void test_threads_and_seeds(void **state)
{
    (void)state;
    qc_model *m = gauss(0.6);
    const double lev[4] = {-3, -1, 1, 3}, taps[3] = {0.7, 0.4, -0.1}, thr[3] = {-2, 0, 2};
    qc_isi_request req = {.model = m, .levels = lev, .nlevels = 4, .taps = taps, .ntaps = 3,
                          .thresholds = thr, .nthresholds = 3, .symbols = 20000, .seed = 42,
                          .unquantized = 1};
    qc_isi_result a, b, c;
#ifdef _OPENMP
    omp_set_num_threads(1);
#endif
    assert_int_equal(qc_isi_rate(&req, &a), QC_OK);
#ifdef _OPENMP
    omp_set_num_threads(2);
#endif
    assert_int_equal(qc_isi_rate(&req, &b), QC_OK);
    assert_memory_equal(&a, &b, sizeof a);
    req.seed = 43;
    assert_int_equal(qc_isi_rate(&req, &c), QC_OK);
    assert_true(c.rate_bits != a.rate_bits);
    assert_int_equal(a.states, 16);
    assert_int_equal(a.symbols, 20000);
    assert_true(a.rate_ci_bits > 0 && a.unquantized_ci_bits > 0);
    double sw;
    assert_int_equal(qc_isi_symbolwise_rate(&req, &sw), QC_OK);
    assert_near(sw, a.symbolwise_bits, 0.0);
    qc_model_free(m);
}

/* qc_design with one tap: the simulated rate covers the exact memoryless
 * rate of the same design within its interval (the memoryless rate is an
 * exact finite sum, Cover & Thomas eq. 2.28), the symbol-by-symbol rate
 * equals it, and the optimal strategy keeps its thresholds. With two taps
 * and a uniform ADC: the full scale is searched, the rates are ordered
 * (symbol by symbol ≤ sequence detector ≤ no ADC, within the intervals)
 * and the report owns copies of the taps. */
static void test_design_with_memory(void **state)
{
    (void)state;
    qc_model *m = gauss(0.5);
    const double lev[4] = {-3, -1, 1, 3}, one[1] = {1.0}, two[2] = {1.0, 0.45};
    qc_design_request req =
        memory_request(m, lev, 4, QC_QUANTIZER_OPTIMAL, 8, one, 1, 100000, 3);
    qc_design_result r;
    assert_int_equal(qc_design(&req, &r), QC_OK);
    assert_int_equal(r.states, 1);
    assert_true(fabs(r.information_rate_bits - r.rate_bits) <= r.information_rate_ci_bits);
    assert_near(r.symbolwise_rate_bits, r.rate_bits, TOL_SYMBOLWISE);
    assert_true(r.full_scale_factor == 1.0 && r.memory_evaluations == 0);
    assert_memory_equal(r.memory_thresholds, r.thresholds, r.nthresholds * sizeof(double));
    qc_design_result_clear(&r);

    req.memory.taps = two;
    req.memory.ntaps = 2;
    req.quantizer.kind = QC_QUANTIZER_UNIFORM;
    assert_int_equal(qc_design(&req, &r), QC_OK);
    assert_int_equal(r.states, 4);
    assert_int_equal(r.ntaps, 2);
    assert_true(r.taps != two && r.taps[1] == 0.45);
    assert_true(r.memory_evaluations > 10);
    assert_true(r.full_scale_factor > 0.0 && !r.full_scale_at_bound);
    assert_true(r.symbolwise_rate_bits <= r.information_rate_bits + r.information_rate_ci_bits);
    assert_true(r.information_rate_bits <=
                r.unquantized_information_rate_bits + r.information_rate_ci_bits +
                    r.unquantized_information_rate_ci_bits);
    assert_true(r.information_rate_bits < 2.0);
    qc_design_result_clear(&r);

    /* memory with QAM is refused before any design unless coherent */
    req.channel.dimensions = 2;
    assert_int_equal(qc_design(&req, &r), QC_EINVAL);
    assert_message("QAM on a channel with memory needs coherent detection");
    qc_model_free(m);
}


/* The trade's figures on a channel with memory: the BCJR detector's BER,
 * GMI and NGMI with their intervals, the exact symbol-by-symbol ones, the
 * figure a target reads, and the FEC outcome of the detector. */
static void test_design_memory_figures(void **state)
{
    (void)state;
    qc_model *m = gauss(0.5);
    const double lev[4] = {-3, -1, 1, 3}, lev3[3] = {-2, 0, 2}, two[2] = {1.0, 0.45};
    qc_fec kp4;
    assert_int_equal(qc_fec_parse("kp4", &kp4), QC_OK);
    qc_design_request req =
        memory_request(m, lev, 4, QC_QUANTIZER_UNIFORM, 8, two, 2, 20000, 5);
    req.input.fec = &kp4;
    qc_design_result r;
    assert_int_equal(qc_design(&req, &r), QC_OK);
    assert_true(r.bcjr_pre_fec_ber > 0.0 && r.bcjr_pre_fec_ber < 0.5);
    assert_true(r.bcjr_pre_fec_ber_ci > 0.0 && r.bcjr_gmi_ci_bits > 0.0);
    assert_true(r.bcjr_ngmi > 0.0 && r.bcjr_ngmi <= 1.0);
    /* NGMI = 1 − (H − GMI)/m is affine in the GMI (Cho, Schmalen, Winzer,
     * ECOC 2017): its interval is the GMI's over m = 2 */
    assert_near(r.bcjr_ngmi, 1.0 - (2.0 - r.bcjr_gmi_bits) / 2.0, TOL_SUM);
    assert_near(r.bcjr_ngmi_ci, r.bcjr_gmi_ci_bits / 2.0, TOL_SUM);
    /* the detector on the trellis beats the symbol-by-symbol receiver */
    assert_true(r.bcjr_pre_fec_ber < r.symbolwise_pre_fec_ber);
    assert_true(r.bcjr_ngmi > r.symbolwise_ngmi);
    assert_true(r.unquantized_bcjr_pre_fec_ber <= r.bcjr_pre_fec_ber + r.bcjr_pre_fec_ber_ci +
                                                      r.unquantized_bcjr_pre_fec_ber_ci);
    assert_true(r.bcjr_gmi_bits <= r.information_rate_bits + r.information_rate_ci_bits +
                                       r.bcjr_gmi_ci_bits);
    assert_true(qc_design_figure(&r, QC_TARGET_BER) == r.bcjr_pre_fec_ber);
    assert_true(qc_design_figure(&r, QC_TARGET_NGMI) == r.bcjr_ngmi);
    assert_true(qc_design_figure(&r, QC_TARGET_GMI) == r.bcjr_gmi_bits);
    assert_true(qc_design_figure(&r, QC_TARGET_RATE) == r.information_rate_bits);
    /* the code is judged on the detector's BER */
    assert_int_equal(r.fec_given, 1);
    assert_int_equal(r.fec_closes, r.bcjr_pre_fec_ber <= kp4.threshold);
    assert_near(r.fec_margin, qc_q_factor_db(r.bcjr_pre_fec_ber) - qc_q_factor_db(kp4.threshold),
                1e-9);
    qc_design_result_clear(&r);

    /* three levels: no Gray labels, no bit figures */
    req.channel.levels = lev3;
    req.channel.nlevels = 3;
    req.input.fec = NULL;
    assert_int_equal(qc_design(&req, &r), QC_OK);
    assert_true(isnan(r.bcjr_pre_fec_ber) && isnan(r.bcjr_ngmi) && isnan(r.symbolwise_ngmi));
    assert_true(isnan(qc_design_figure(&r, QC_TARGET_BER)));
    qc_design_result_clear(&r);
    qc_model_free(m);
}

/* A converter on a channel with memory: its transition levels referred to
 * the receiver output through its gain and offset, its own noise added.
 * One tap with a given gain and offset: the symbol-by-symbol rate is the
 * memoryless converter design's exact rate (Cover & Thomas eq. 2.28 on
 * the same channel). AGC: the rule on the output of the channel with
 * memory, var = E[x²]·Σh² + σ² (independent symbols). Best gain: the
 * search (common random numbers) never ends below its start. */
static void test_converter_on_memory(void **state)
{
    (void)state;
    qc_model *m = gauss(0.4);
    const double lev[4] = {-3, -1, 1, 3}, one[1] = {1.0}, two[2] = {0.8, 0.5};
    qc_converter c;
    qc_converter_default(&c, -4.0, 4.0);
    c.enob = 2.5;
    c.gain = 0.9;
    c.offset = 0.1;
    qc_design_request req =
        memory_request(m, lev, 4, QC_QUANTIZER_CONVERTER, 8, one, 1, 20000, 9);
    req.quantizer.converter = &c;
    qc_design_result r;
    assert_int_equal(qc_design(&req, &r), QC_OK);
    assert_near(r.symbolwise_rate_bits, r.rate_bits, TOL_SYMBOLWISE);
    assert_true(fabs(r.information_rate_bits - r.rate_bits) <= r.information_rate_ci_bits);
    assert_true(r.memory_gain == 0.9 && r.memory_offset == 0.1 && r.full_scale_factor == 1.0);
    for (size_t j = 0; j < r.nthresholds; j++)
        assert_near(r.memory_thresholds[j], (r.thresholds[j] - 0.1) / 0.9, 1e-12);
    qc_design_result_clear(&r);

    /* AGC on the channel with memory: gain = half full scale / (K·rms) */
    req.memory.taps = two;
    req.memory.ntaps = 2;
    c.gain_mode = QC_GAIN_AGC;
    c.agc_k = 2.0;
    c.offset = NAN;
    assert_int_equal(qc_design(&req, &r), QC_OK);
    const double var_x = 5.0; /* E[x²] of {±1, ±3}, mean 0 */
    const double rms = sqrt(var_x * (0.8 * 0.8 + 0.5 * 0.5) + 0.4 * 0.4);
    assert_near(r.memory_gain, 4.0 / (2.0 * rms), 1e-12);
    assert_near(r.memory_offset, 0.0, 1e-12);
    qc_design_result_clear(&r);

    /* the best gain: searched, never below the memoryless-optimal start */
    c.gain_mode = QC_GAIN_BEST;
    c.offset = 0.0;
    assert_int_equal(qc_design(&req, &r), QC_OK);
    assert_true(r.memory_evaluations >= 20);
    qc_model *noisy = NULL;
    assert_int_equal(qc_model_add_noise(m, r.converter_noise_rms / r.gain, &noisy), QC_OK);
    double t0[7];
    for (size_t j = 0; j < 7; j++)
        t0[j] = (r.thresholds[j] - r.offset) / r.gain;
    qc_isi_request isi = {.model = noisy, .levels = lev, .nlevels = 4, .taps = two, .ntaps = 2,
                          .thresholds = t0, .nthresholds = 7, .symbols = 20000, .seed = 9};
    qc_isi_result start;
    assert_int_equal(qc_isi_rate(&isi, &start), QC_OK);
    assert_true(r.information_rate_bits >= start.rate_bits);
    assert_near(r.full_scale_factor, r.gain / r.memory_gain, 1e-12);
    qc_model_free(noisy);
    qc_design_result_clear(&r);
    qc_model_free(m);
}

/* The uniform ADC's full scale on a channel with memory follows the span
 * of its noiseless outputs. Unipolar PAM-4 (0, 1/3, 2/3, 1) through taps
 * 0.75, 0.5, 0.25 has outputs 0 to 1.5 in steps of 1/12, 8 σ apart at
 * σ = 0.005: without an ADC the BCJR detector makes no error. A 6-bit
 * full scale kept within twice the memoryless one (which spans about 0
 * to 1) about its centre reaches only to 1.2, so four outputs (1.25 to
 * 1.5) share the top cell, which the trellis cannot untangle: the BER
 * floors near 4e-4 (3.9e-4 on this test's 20 000 symbols, 5.3e-4 on
 * 200 000) and the rate falls short of 2 bits by 2e-3. Carried
 * over to the span, the search leaves at most three outputs in each
 * outer cell, which the trellis resolves. On a coherent link the span of
 * the in-phase outputs is mapped the same way: taps 1, 0.8, 0.6 (2.4
 * times the levels' span) take a factor above 2, and PAM-2 through taps
 * 1, 5, 5, 5 at 2 bits reaches its 1 bit (a search from the memoryless
 * full scale settles at 0.76 bit, in a local maximum below 1). And where
 * the best full
 * scale lies outside the grid [α0/2, 2·α0], the search widens: PAM-2
 * through six equal taps (outputs −6 to 6, α0 = 6) at 2 bits and σ = 0.1
 * is best below α0/2 = 3, and the widened search ends there, not at the
 * grid's end. */
static void test_full_scale_follows_the_span(void **state)
{
    (void)state;
    qc_model *m = gauss(0.005);
    const double lev[4] = {0.0, 1.0 / 3.0, 2.0 / 3.0, 1.0}, taps[3] = {0.75, 0.5, 0.25};
    qc_design_request req =
        memory_request(m, lev, 4, QC_QUANTIZER_UNIFORM, 64, taps, 3, 20000, 5);
    qc_design_result r;
    assert_int_equal(qc_design(&req, &r), QC_OK);
    assert_true(r.unquantized_bcjr_pre_fec_ber < 1e-12);
    assert_true(r.bcjr_pre_fec_ber < 1e-12);
    assert_true(r.information_rate_bits > 2.0 - 1e-6);
    assert_false(r.full_scale_at_bound);
    qc_design_result_clear(&r);
    qc_model_free(m);

    m = gauss(0.27);
    const double pam[4] = {-3, -1, 1, 3}, wide[3] = {1.0, 0.8, 0.6};
    req = memory_request(m, pam, 4, QC_QUANTIZER_UNIFORM, 32, wide, 3, 20000, 5);
    req.memory.coherent = 1;
    assert_int_equal(qc_design(&req, &r), QC_OK);
    assert_true(r.full_scale_factor > 2.0);
    assert_false(r.full_scale_at_bound);
    qc_design_result_clear(&r);
    qc_model_free(m);

    m = gauss(0.0316);
    const double two_levels[2] = {-1, 1}, strong[4] = {1, 5, 5, 5};
    req = memory_request(m, two_levels, 2, QC_QUANTIZER_UNIFORM, 4, strong, 4, 20000, 5);
    req.memory.coherent = 1;
    assert_int_equal(qc_design(&req, &r), QC_OK);
    assert_true(r.information_rate_bits > 1.0 - 1e-3);
    assert_false(r.full_scale_at_bound);
    qc_design_result_clear(&r);
    qc_model_free(m);

    m = gauss(0.1);
    const double six[6] = {1, 1, 1, 1, 1, 1};
    req = memory_request(m, two_levels, 2, QC_QUANTIZER_UNIFORM, 4, six, 6, 20000, 5);
    assert_int_equal(qc_design(&req, &r), QC_OK);
    assert_true(r.full_scale_factor < 3.0);
    assert_true(r.memory_evaluations > 24); /* 11 + 12 + 1, and the widening */
    assert_false(r.full_scale_at_bound);
    qc_design_result_clear(&r);
    qc_model_free(m);
}

/* A batch of an odd number of steps (warm-up 100 + 1001 counted symbols)
 * leaves the forward messages in the second half of their swap pair; the
 * batch's arrays must still be freed from the start of their allocation
 * (a free of the swapped pointer aborts or is reported by the sanitizers). */
static void test_odd_step_count(void **state)
{
    (void)state;
    qc_model *m = gauss(0.6);
    const double lev[2] = {-1, 1}, taps[2] = {1.0, 0.5}, thr[1] = {0.0};
    qc_isi_request req = {.model = m, .levels = lev, .nlevels = 2, .taps = taps, .ntaps = 2,
                          .thresholds = thr, .nthresholds = 1, .symbols = 20 * 1001,
                          .seed = 5, .unquantized = 1};
    qc_isi_result r;
    assert_int_equal(qc_isi_rate(&req, &r), QC_OK);
    assert_int_equal(r.symbols, 20 * 1001);
    assert_true(r.rate_bits > 0.0 && r.rate_bits <= 1.0);
    qc_model_free(m);
}

/* An interval target: the final rates are simulated again on more symbols
 * until the quantized rate's 95 % half-width is within it (batch means
 * narrow as 1/sqrt(n)); an unreachable target is refused naming it. */
static void test_rate_ci_target(void **state)
{
    (void)state;
    qc_model *m = gauss(0.5);
    const double lev[4] = {-3, -1, 1, 3}, two[2] = {1.0, 0.45};
    qc_design_request req =
        memory_request(m, lev, 4, QC_QUANTIZER_UNIFORM, 8, two, 2, 20000, 3);
    qc_design_result a, b;
    assert_int_equal(qc_design(&req, &a), QC_OK);
    assert_int_equal(a.memory_symbols, 20000);
    req.memory.rate_ci_bits = 0.4 * a.information_rate_ci_bits;
    assert_int_equal(qc_design(&req, &b), QC_OK);
    assert_true(b.information_rate_ci_bits <= req.memory.rate_ci_bits);
    assert_true(b.memory_symbols > 20000 * 5); /* (1/0.4)^2 = 6.25 times */
    assert_true(b.memory_rate_ci_target == req.memory.rate_ci_bits);
    /* the two estimates agree within their intervals */
    assert_true(fabs(a.information_rate_bits - b.information_rate_bits) <=
                a.information_rate_ci_bits + b.information_rate_ci_bits);
    qc_design_result_clear(&a);
    qc_design_result_clear(&b);
    req.memory.rate_ci_bits = 1e-9;
    assert_int_equal(qc_design(&req, &b), QC_EINVAL);
    assert_message("rate-ci: the rate's interval is");
    req.memory.rate_ci_bits = -1.0;
    assert_int_equal(qc_design(&req, &b), QC_EINVAL);
    assert_message("rate-ci: expected a half-width > 0");
    qc_model_free(m);
}

/* The figures a run leaves out of its mask are NaN, and those it keeps are
 * bit for bit those of a run of them all: one sequence is drawn whatever
 * is computed on it. On the simulator (real, with labels and the
 * continuous-output references; coherent), and through qc_design, where
 * a search asks for the detector's figures alone, also with a converter's
 * noise (whose continuous-output reference is a second run) and with an
 * interval target (which reads the quantized rate, so keeps it). */
static void test_figures_run_alone(void **state)
{
    (void)state;
    qc_model *m = gauss(0.6);
    const double lev[4] = {-3, -1, 1, 3}, taps[3] = {0.7, 0.4, -0.1}, thr[3] = {-2, 0, 2};
    const double im[3] = {0.0, 0.3, 0.1};
    const size_t gray[4] = {0, 1, 3, 2};
    qc_isi_request req = {.model = m, .levels = lev, .nlevels = 4, .taps = taps, .ntaps = 3,
                          .thresholds = thr, .nthresholds = 3, .symbols = 20000, .seed = 7,
                          .unquantized = 1, .labels = gray, .label_bits = 2};
    qc_isi_result all, one;
    assert_int_equal(qc_isi_rate(&req, &all), QC_OK);
    assert_true(all.rate_bits > 0.0 && all.unquantized_bits > 0.0);
    assert_true(all.bcjr_ber > 0.0 && all.unquantized_bcjr_ber > 0.0);
    req.figures = QC_ISI_FIG_RATE;
    assert_int_equal(qc_isi_rate(&req, &one), QC_OK);
    assert_true(one.rate_bits == all.rate_bits && one.rate_ci_bits == all.rate_ci_bits);
    assert_true(isnan(one.unquantized_bits) && isnan(one.bcjr_ber) &&
                isnan(one.unquantized_bcjr_ber));
    assert_true(one.symbolwise_ber == all.symbolwise_ber); /* exact, always */
    req.figures = QC_ISI_FIG_UNQUANTIZED_RATE;
    assert_int_equal(qc_isi_rate(&req, &one), QC_OK);
    assert_true(one.unquantized_bits == all.unquantized_bits && isnan(one.rate_bits));
    assert_true(isnan(one.bcjr_gmi_bits) && isnan(one.unquantized_bcjr_gmi_bits));
    req.figures = QC_ISI_FIG_DETECTOR;
    assert_int_equal(qc_isi_rate(&req, &one), QC_OK);
    assert_true(one.bcjr_ber == all.bcjr_ber && one.bcjr_ber_ci == all.bcjr_ber_ci);
    assert_true(one.bcjr_gmi_bits == all.bcjr_gmi_bits &&
                one.bcjr_ber_counted == all.bcjr_ber_counted);
    assert_true(isnan(one.rate_bits) && isnan(one.unquantized_bcjr_ber));
    req.figures = QC_ISI_FIG_UNQUANTIZED_DETECTOR;
    assert_int_equal(qc_isi_rate(&req, &one), QC_OK);
    assert_true(one.unquantized_bcjr_ber == all.unquantized_bcjr_ber &&
                one.unquantized_bcjr_gmi_bits == all.unquantized_bcjr_gmi_bits);
    assert_true(isnan(one.bcjr_ber) && isnan(one.unquantized_bits));
    /* a figure the request does not allow stays out whatever the mask */
    req.unquantized = 0;
    req.figures = QC_ISI_FIG_UNQUANTIZED_RATE | QC_ISI_FIG_DETECTOR;
    assert_int_equal(qc_isi_rate(&req, &one), QC_OK);
    assert_true(isnan(one.unquantized_bits) && one.bcjr_ber == all.bcjr_ber);

    /* coherent: I and Q drawn alike whatever is computed */
    qc_isi_request co = {.model = m, .levels = lev, .nlevels = 4, .taps = taps, .ntaps = 3,
                         .thresholds = thr, .nthresholds = 3, .symbols = 20000, .seed = 7,
                         .unquantized = 1, .taps_imag = im, .mode = QC_ISI_COHERENT_PAM};
    assert_int_equal(qc_isi_rate(&co, &all), QC_OK);
    co.figures = QC_ISI_FIG_UNQUANTIZED_RATE;
    assert_int_equal(qc_isi_rate(&co, &one), QC_OK);
    assert_true(one.unquantized_bits == all.unquantized_bits && isnan(one.rate_bits));
    co.figures = QC_ISI_FIG_RATE;
    assert_int_equal(qc_isi_rate(&co, &one), QC_OK);
    assert_true(one.rate_bits == all.rate_bits && isnan(one.unquantized_bits));

    /* a design that asks for the detector alone */
    const double two[2] = {1.0, 0.45};
    qc_design_request dr = memory_request(m, lev, 4, QC_QUANTIZER_UNIFORM, 8, two, 2, 20000, 5);
    qc_design_result a, b;
    assert_int_equal(qc_design(&dr, &a), QC_OK);
    dr.memory.figures = QC_ISI_FIG_DETECTOR;
    assert_int_equal(qc_design(&dr, &b), QC_OK);
    assert_true(b.bcjr_pre_fec_ber == a.bcjr_pre_fec_ber && b.bcjr_ngmi == a.bcjr_ngmi);
    assert_true(b.full_scale_factor == a.full_scale_factor);
    assert_true(isnan(b.information_rate_bits) && isnan(b.unquantized_bcjr_pre_fec_ber));
    assert_true(isnan(qc_design_figure(&b, QC_TARGET_RATE)));
    qc_design_result_clear(&b);
    /* an interval target reads the quantized rate: it is kept */
    dr.memory.rate_ci_bits = 2.0 * a.information_rate_ci_bits;
    assert_int_equal(qc_design(&dr, &b), QC_OK);
    assert_true(b.information_rate_bits == a.information_rate_bits);
    assert_true(b.bcjr_pre_fec_ber == a.bcjr_pre_fec_ber);
    qc_design_result_clear(&a);
    qc_design_result_clear(&b);

    /* a converter's noise: its continuous-output reference, a second run */
    qc_converter c;
    qc_converter_default(&c, -4.0, 4.0);
    c.enob = 2.5; /* below the 3 bits: noise of its own */
    c.gain = 0.9;
    c.offset = 0.0;
    dr = memory_request(m, lev, 4, QC_QUANTIZER_CONVERTER, 8, two, 2, 20000, 5);
    dr.quantizer.converter = &c;
    assert_int_equal(qc_design(&dr, &a), QC_OK);
    assert_true(a.converter_noise_rms > 0.0 && a.unquantized_bcjr_pre_fec_ber > 0.0);
    dr.memory.figures = QC_ISI_FIG_UNQUANTIZED_DETECTOR;
    assert_int_equal(qc_design(&dr, &b), QC_OK);
    assert_true(b.unquantized_bcjr_pre_fec_ber == a.unquantized_bcjr_pre_fec_ber);
    assert_true(isnan(b.unquantized_information_rate_bits) && isnan(b.bcjr_pre_fec_ber));
    qc_design_result_clear(&b);
    dr.memory.figures = QC_ISI_FIG_DETECTOR;
    assert_int_equal(qc_design(&dr, &b), QC_OK);
    assert_true(b.bcjr_pre_fec_ber == a.bcjr_pre_fec_ber);
    assert_true(isnan(b.unquantized_bcjr_pre_fec_ber));
    qc_design_result_clear(&a);
    qc_design_result_clear(&b);
    qc_model_free(m);
}

/* A kept sequence: the first run records the draws and the others replay
 * them, and every result is bit for bit that of a run that draws its own
 * (the same seed): with other thresholds and another noise scale (what a
 * search changes), with the detector's tail after a record without it,
 * with another seed, and on a coherent channel. */
static void test_kept_sequence(void **state)
{
    (void)state;
    qc_model *m = gauss(0.6), *m2 = gauss(0.8);
    const double lev[4] = {-3, -1, 1, 3}, taps[3] = {0.7, 0.4, -0.1};
    const double thr[3] = {-2, 0, 2}, thr2[3] = {-2.5, 0.1, 2.5}, im[3] = {0.0, 0.3, 0.1};
    const size_t gray[4] = {0, 1, 3, 2};
    qc_isi_draws *kept = NULL;
    assert_int_equal(qc_isi_draws_alloc(&kept), QC_OK);
    qc_isi_request req = {.model = m, .levels = lev, .nlevels = 4, .taps = taps, .ntaps = 3,
                          .thresholds = thr, .nthresholds = 3, .symbols = 20000, .seed = 7};
    qc_isi_result fresh, again;
    /* each case: drawn afresh, then through the kept sequence */
#define SAME_WITH_KEPT()                                                                   \
    do {                                                                                   \
        req.draws = NULL;                                                                  \
        assert_int_equal(qc_isi_rate(&req, &fresh), QC_OK);                                \
        req.draws = kept;                                                                  \
        assert_int_equal(qc_isi_rate(&req, &again), QC_OK);                                \
        assert_memory_equal(&fresh, &again, sizeof fresh);                                 \
    } while (0)
    SAME_WITH_KEPT(); /* records */
    SAME_WITH_KEPT(); /* replays */
    req.thresholds = thr2;
    SAME_WITH_KEPT();
    req.model = m2;
    req.unquantized = 1;
    SAME_WITH_KEPT();
    req.labels = gray; /* the detector's tail: recorded anew, then replayed */
    req.label_bits = 2;
    SAME_WITH_KEPT();
    req.labels = NULL;
    SAME_WITH_KEPT(); /* a record with the tail serves a run without it */
    req.seed = 8;
    SAME_WITH_KEPT();
    req.taps_imag = im;
    req.mode = QC_ISI_COHERENT_PAM;
    SAME_WITH_KEPT();
    req.model = m;
    SAME_WITH_KEPT();
    req.symbols = 24000;
    SAME_WITH_KEPT();
#undef SAME_WITH_KEPT
    qc_isi_draws_free(kept);
    qc_isi_draws_free(NULL);
    qc_model_free(m);
    qc_model_free(m2);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_rate_in_a_sweep_point_keeps_its_thread),
        cmocka_unit_test(test_gauss_response),
        cmocka_unit_test(test_first_order_responses),
        cmocka_unit_test(test_response_shapes),
        cmocka_unit_test(test_response_errors),
        cmocka_unit_test(test_taps_and_states),
        cmocka_unit_test(test_threads_and_seeds),
        cmocka_unit_test(test_design_with_memory),
        cmocka_unit_test(test_full_scale_follows_the_span),
        cmocka_unit_test(test_design_memory_figures),
        cmocka_unit_test(test_converter_on_memory),
        cmocka_unit_test(test_odd_step_count),
        cmocka_unit_test(test_rate_ci_target),
        cmocka_unit_test(test_figures_run_alone),
        cmocka_unit_test(test_kept_sequence),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
