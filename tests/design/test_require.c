/* test_require.c — the inverse question (qc_require): the value of the
 * SNR a target needs with a quantizer and without, the penalty between
 * them, the margin of an operating point, and the refusals (a target out
 * of reach, a figure that is not monotone). The builder here turns an SNR
 * in dB (A²/σ² per real dimension, E[x²] of the uniform law) into model
 * gauss, as `--snr-db` does. */
#include <stdarg.h>
#include <stddef.h>
#include <setjmp.h>
#include <cmocka.h>

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include <gsl/gsl_cdf.h>

#include "quantcap.h"
#include "quantizer/quantizer.h" /* the scan the crossings are checked against */
#include "test_helpers.h"

#define ROOT_TOL_DB 1e-4     /* the solver stops at 1e-6 dB; designs add noise */
#define TABLE_TOL_DB 2e-4    /* 3.0902 is given to 5 digits                     */
#define PUBLISHED_TOL_DB 5e-4 /* 0.187 dB is given to 3 decimals                */
#define FINE_PENALTY_DB 0.01  /* an 8-bit optimal quantizer on PAM-4            */
#define EXACT_MARGIN 1e-12    /* margin bookkeeping                             */

typedef struct {
    const double *levels;
    size_t n;
    size_t cells;
    qc_quantizer_kind quantizer;
    const double *thresholds;
    qc_model *model;
} snr_builder;

/* *model (freed first) made model gauss of noise sigma, and req the
 * default request on it. */
static qc_status gauss_request(double sigma, qc_model **model, qc_design_request *req)
{
    double p[QC_MODEL_MAX_PARAMS] = {sigma};
    qc_model_free(*model);
    *model = NULL;
    qc_status st = qc_model_alloc(&qc_model_gauss, p, model);
    if (st != QC_OK)
        return st;
    qc_design_request_default(req);
    req->channel.model = *model;
    return QC_OK;
}

static qc_status build(void *ctx, double snr_db, const qc_model **model,
                       qc_design_request *req)
{
    snr_builder *b = ctx;
    double e2 = 0.0;
    for (size_t i = 0; i < b->n; i++)
        e2 += b->levels[i] * b->levels[i] / (double)b->n;
    qc_status st = gauss_request(sqrt(e2 / pow(10.0, snr_db / 10.0)), &b->model, req);
    if (st != QC_OK)
        return st;
    req->channel.levels = b->levels;
    req->channel.nlevels = b->n;
    req->quantizer.cells = b->cells;
    req->quantizer.kind = b->quantizer;
    if (b->thresholds) {
        req->quantizer.thresholds = b->thresholds;
        req->quantizer.nthresholds = b->cells - 1;
    }
    *model = b->model;
    return QC_OK;
}

static qc_status require_snr(snr_builder *b, const char *target, double lo, double hi,
                             qc_require_result *res)
{
    qc_require_request rq = {.build = build, .ctx = b, .lo = lo, .hi = hi, .name = "snr-db",
                             .unit = " dB"};
    assert_int_equal(qc_target_parse(target, &rq.target), QC_OK);
    qc_status st = qc_require(&rq, res);
    qc_model_free(b->model);
    b->model = NULL;
    return st;
}

/* The figure of the design at the required SNR, as the search rates it
 * (the MAP decision boundaries kept for a BER target). */
static double figure_at(snr_builder *b, double snr_db, qc_target_kind kind)
{
    qc_design_request req;
    const qc_model *m;
    assert_int_equal(build(b, snr_db, &m, &req), QC_OK);
    req.quantizer.keep_decisions = kind == QC_TARGET_BER;
    qc_design_result r;
    assert_int_equal(qc_design(&req, &r), QC_OK);
    double f = qc_design_figure(&r, kind);
    qc_design_result_clear(&r);
    qc_model_free(b->model);
    b->model = NULL;
    return f;
}

/* BPSK with the sign quantizer at BER 1e-3: Q(√snr) = 1e-3, so snr =
 * Q⁻¹(1e-3)² with Q⁻¹(1e-3) = 3.0902 (from memory; standard normal
 * tables), 9.80 dB (any digital-communications textbook, e.g. Proakis).
 * The sign is the MAP decision, so the unquantized receiver needs the same
 * and the penalty is zero. */
static void test_bpsk_ber(void **state)
{
    (void)state;
    const double levels[2] = {-1.0, 1.0}, sign[1] = {0.0};
    snr_builder b = {levels, 2, 2, QC_QUANTIZER_FIXED, sign, NULL};
    qc_require_result r;
    assert_int_equal(require_snr(&b, "ber=1e-3", -10.0, 30.0, &r), QC_OK);
    assert_near(r.required, 20.0 * log10(3.0902), TABLE_TOL_DB);
    assert_near(r.required, 20.0 * log10(gsl_cdf_ugaussian_Qinv(1e-3)), ROOT_TOL_DB);
    assert_near(r.unquantized_required, r.required, ROOT_TOL_DB);
    assert_near(r.penalty_db, 0.0, ROOT_TOL_DB);
    assert_true(r.increasing);
    /* margin of an operating point 2 dB above: +2 dB; 1 dB below: −1 dB */
    assert_near(qc_require_margin_db(&r, 0, r.required + 2.0), 2.0, EXACT_MARGIN);
    assert_near(qc_require_margin_db(&r, 0, r.required - 1.0), -1.0, EXACT_MARGIN);
    /* beyond the range searched (-10 to 30 dB) the figure was not checked
     * to be monotone: no margin, at either side; its ends are inside */
    assert_true(isnan(qc_require_margin_db(&r, 0, 30.5)));
    assert_true(isnan(qc_require_margin_db(&r, 0, -10.5)));
    assert_near(qc_require_margin_db(&r, 0, 30.0), 30.0 - r.required, EXACT_MARGIN);
}

/* The unquantized binary-input AWGN channel carries 0.5 bit at Eb/N0 =
 * 0.187 dB (S.-Y. Chung, G. D. Forney, T. J. Richardson, R. Urbanke, "On
 * the design of low-density parity-check codes within 0.0045 dB of the
 * Shannon limit", IEEE Commun. Lett. 5(2), 2001). With snr = A²/σ² and
 * N0 = 2σ², Es/N0 = snr/2 and at rate ½ Eb/N0 = (Es/N0)/R = snr: the
 * same 0.187 dB (Es/N0 is −2.82 dB there). */
static void test_biawgn_half_rate(void **state)
{
    (void)state;
    const double levels[2] = {-1.0, 1.0};
    snr_builder b = {levels, 2, 256, QC_QUANTIZER_OPTIMAL, NULL, NULL};
    qc_require_result r;
    assert_int_equal(require_snr(&b, "rate=0.5", -10.0, 10.0, &r), QC_OK);
    assert_near(r.unquantized_required, 0.187, PUBLISHED_TOL_DB);
    assert_near(r.penalty_db, 0.0, FINE_PENALTY_DB);
}

/* PAM-4 at 1.5 bit/symbol: the penalty at the target is zero for a fine
 * quantizer, positive and decreasing in the bits. */
static void test_penalty_in_bits(void **state)
{
    (void)state;
    const double levels[4] = {-3.0, -1.0, 1.0, 3.0};
    double last = INFINITY, unq = NAN;
    for (unsigned bits = 2; bits <= 8; bits++) {
        snr_builder b = {levels, 4, (size_t)1 << bits, QC_QUANTIZER_OPTIMAL, NULL, NULL};
        qc_require_result r;
        assert_int_equal(require_snr(&b, "rate=1.5", -10.0, 30.0, &r), QC_OK);
        /* the required value meets the target, not merely comes near */
        assert_true(figure_at(&b, r.required, QC_TARGET_RATE) >= 1.5);
        if (bits == 2)
            unq = r.unquantized_required;
        assert_near(r.unquantized_required, unq, ROOT_TOL_DB); /* one reference */
        assert_true(r.penalty_db > -ROOT_TOL_DB);
        assert_true(r.penalty_db < last + ROOT_TOL_DB);
        last = r.penalty_db;
        if (bits == 8)
            assert_near(r.penalty_db, 0.0, FINE_PENALTY_DB);
    }
    assert_true(last < FINE_PENALTY_DB);
}

/* A 1-bit ADC never carries 1.5 bit per PAM-4 symbol: at most 1 bit
 * (two cells). The target is out of reach, with the best value kept. */
static void test_unreachable(void **state)
{
    (void)state;
    const double levels[4] = {-3.0, -1.0, 1.0, 3.0};
    snr_builder b = {levels, 4, 2, QC_QUANTIZER_OPTIMAL, NULL, NULL};
    qc_require_result r;
    assert_int_equal(require_snr(&b, "rate=1.5", -10.0, 40.0, &r), QC_EINFEASIBLE);
    assert_near(r.best_figure, 1.0, 1e-6);
    assert_non_null(strstr(qc_last_error(), "not reached"));
    /* met over the whole range */
    snr_builder b4 = {levels, 4, 16, QC_QUANTIZER_OPTIMAL, NULL, NULL};
    assert_int_equal(require_snr(&b4, "rate=0.1", 10.0, 40.0, &r), QC_EINFEASIBLE);
    assert_non_null(strstr(qc_last_error(), "met over the whole range"));
}

/* A threshold at 1.5 with levels ±1: the rate first grows with the noise
 * (it carries the low level across) and then falls, so it crosses a
 * small target twice: no unique root. */
static void test_not_monotone(void **state)
{
    (void)state;
    const double levels[2] = {-1.0, 1.0}, t[1] = {1.5};
    snr_builder b = {levels, 2, 2, QC_QUANTIZER_FIXED, t, NULL};
    qc_require_result r;
    assert_int_equal(require_snr(&b, "rate=0.1", -30.0, 30.0, &r), QC_EINVAL);
    assert_non_null(strstr(qc_last_error(), "not monotone"));
}

/* PAM-4 at the KP4 threshold (pre-FEC BER 2.4e-4): a hard-decision
 * receiver needs only cells whose thresholds hold the MAP decision
 * boundaries, so with the optimal quantizer (which keeps them for a BER
 * target) the penalty is 0 from 2 bits on, and never rises with the
 * bits. The required SNR: Gray PAM-4 BER = (3/4)·Q(√(snr/5)) to within
 * the neighbours' term (levels ±1, ±3, E[x²] = 5; Cho and Yoon, IEEE
 * Trans. Commun. 50(7), 2002), solved with GSL's Q⁻¹. */
static void test_ber_penalty_in_bits(void **state)
{
    (void)state;
    const double levels[4] = {-3.0, -1.0, 1.0, 3.0};
    double last = INFINITY;
    const double approx = 10.0 * log10(5.0 * pow(gsl_cdf_ugaussian_Qinv(2.4e-4 / 0.75), 2));
    for (unsigned bits = 2; bits <= 6; bits++) {
        snr_builder b = {levels, 4, (size_t)1 << bits, QC_QUANTIZER_OPTIMAL, NULL, NULL};
        qc_require_result r;
        assert_int_equal(require_snr(&b, "fec=kp4", 0.0, 30.0, &r), QC_OK);
        /* the code closes at the required value: BER at most its threshold */
        assert_true(figure_at(&b, r.required, QC_TARGET_BER) <= 2.4e-4);
        assert_near(r.unquantized_required, approx, 0.01);
        assert_near(r.penalty_db, 0.0, ROOT_TOL_DB);
        assert_true(r.penalty_db <= last + ROOT_TOL_DB);
        last = r.penalty_db;
    }
}

/* The MAP boundary between neighbouring Gaussian levels a < b of equal
 * variance σ² and laws p_a, p_b lies at (a + b)/2 + σ² ln(p_a/p_b)/(b − a)
 * (the likelihood-ratio test; e.g. Proakis, Digital Communications,
 * §4.1, from memory). */
static void test_map_boundaries_gauss(void **state)
{
    (void)state;
    const double sigma = 0.7, levels[4] = {-3.0, -1.0, 1.0, 3.0};
    const double law[4] = {0.1, 0.4, 0.3, 0.2};
    double p[QC_MODEL_MAX_PARAMS] = {sigma};
    qc_model *m;
    assert_int_equal(qc_model_alloc(&qc_model_gauss, p, &m), QC_OK);
    double *b = NULL;
    size_t nb = 0;
    assert_int_equal(qc_map_boundaries(m, levels, law, 4, &b, &nb), QC_OK);
    assert_int_equal(nb, 3);
    for (size_t i = 0; i < 3; i++) {
        double lo = levels[i], hi = levels[i + 1];
        double want = 0.5 * (lo + hi) + sigma * sigma * log(law[i] / law[i + 1]) / (hi - lo);
        assert_near(b[i], want, 1e-12);
    }
    free(b);
    /* equiprobable: exactly between the levels */
    const double uni[4] = {0.25, 0.25, 0.25, 0.25};
    assert_int_equal(qc_map_boundaries(m, levels, uni, 4, &b, &nb), QC_OK);
    assert_int_equal(nb, 3);
    assert_near(b[0], -2.0, 1e-12);
    assert_near(b[1], 0.0, 1e-12);
    assert_near(b[2], 2.0, 1e-12);
    /* the thresholds nearest to them are moved, in order, the others kept */
    double t[7] = {-2.2, -1.9, -1.8, -0.1, 0.12, 1.9, 2.15};
    assert_int_equal(qc_keep_boundaries(m, b, nb, t, 7), 3);
    const double want[7] = {-2.2, -2.0, -1.8, 0.0, 0.12, 2.0, 2.15};
    for (size_t j = 0; j < 7; j++)
        assert_near(t[j], want[j], 0.0);
    /* fewer thresholds than boundaries: nothing moves */
    double t2[2] = {-1.0, 1.0};
    assert_int_equal(qc_keep_boundaries(m, b, nb, t2, 2), 0);
    assert_near(t2[0], -1.0, 0.0);
    /* a free threshold that a move passes goes between its neighbours */
    double t3[3] = {-0.3, -0.2, 3.0};
    assert_int_equal(qc_keep_boundaries(m, b, 1, t3, 3), 1);
    assert_true(t3[0] < t3[1] && t3[1] < t3[2]);
    free(b);
    qc_model_free(m);
}

/* Boundaries of a Gaussian-law model from the crossings of the scores
 * against the scan of the support (the same Brent search refines both):
 * equal counts, positions within ENVELOPE_TOL of the noise scale. */
#define ENVELOPE_TOL 1e-12
static void check_envelope(const qc_model *m, const double *levels, const double *law, size_t n,
                           double scale, size_t want)
{
    double *b = NULL, *s = NULL;
    size_t nb = 0, ns = 0;
    assert_int_equal(qc_map_boundaries(m, levels, law, n, &b, &nb), QC_OK);
    assert_int_equal(qc_map_boundaries_scanned(m, levels, law, n, &s, &ns), QC_OK);
    assert_int_equal(nb, want);
    assert_int_equal(ns, want);
    for (size_t i = 0; i < nb; i++)
        assert_near(b[i], s[i], ENVELOPE_TOL * scale);
    free(b);
    free(s);
}

static qc_model *model_named(const qc_model_type *type, const char *const *names,
                             const double *values, size_t count)
{
    double p[QC_MODEL_MAX_PARAMS];
    for (size_t i = 0; i < QC_MODEL_MAX_PARAMS; i++)
        p[i] = NAN;
    for (size_t i = 0; i < count; i++) {
        int k = qc_model_param_index(type, names[i]);
        assert_true(k >= 0);
        p[k] = values[i];
    }
    qc_model *m;
    assert_int_equal(qc_model_alloc(type, p, &m), QC_OK);
    return m;
}

/* Unequal variances cross twice: signal-dependent noise (unipolar PAM-8,
 * σ from 0.02 to 0.053; and at σ 0.05 to 0.5 with an uneven law, where
 * the loudest level wins again below the quiet ones' tails) and the
 * APD's Gaussian approximation; and a middle level whose small law
 * leaves it a region narrower than the noise scale. */
static void test_map_boundaries_envelope(void **state)
{
    (void)state;
    const double u8[8] = {0.0, 1.0 / 7, 2.0 / 7, 3.0 / 7, 4.0 / 7, 5.0 / 7, 6.0 / 7, 1.0};
    const double uniform8[8] = {0.125, 0.125, 0.125, 0.125, 0.125, 0.125, 0.125, 0.125};
    const double skew8[8] = {0.3, 0.05, 0.05, 0.1, 0.1, 0.1, 0.1, 0.2};
    qc_model *m = model_named(&qc_model_gauss_sd, (const char *const[]){"sigma0", "a"},
                              (const double[]){0.02, 0.0024}, 2);
    check_envelope(m, u8, uniform8, 8, 0.02, 7);
    qc_model_free(m);
    /* low SNR and an uneven law: the loud level's wide density wins
     * below the quiet ones' tails too (σ 0.05 against 0.5) */
    m = model_named(&qc_model_gauss_sd, (const char *const[]){"sigma0", "a"},
                    (const double[]){0.05, 0.25}, 2);
    const double two[2] = {0.0, 1.0}, law2[2] = {0.9, 0.1};
    double *b = NULL;
    size_t nb = 0;
    assert_int_equal(qc_map_boundaries(m, two, law2, 2, &b, &nb), QC_OK);
    free(b);
    check_envelope(m, two, law2, 2, 0.05, nb);
    assert_int_equal(nb, 2);
    check_envelope(m, u8, skew8, 8, 0.05, 6);
    qc_model_free(m);
    m = model_named(&qc_model_apd_gauss,
                    (const char *const[]){"signal", "apd-gain", "apd-k", "sigma-th"},
                    (const double[]){200.0, 10.0, 0.2, 300.0}, 4);
    check_envelope(m, u8, uniform8, 8, 300.0, 7);
    qc_model_free(m);
    /* PAM-3, σ = 1, outer laws equal: the middle level wins on
     * |y| < ½ − ln(p₀/p₁) (s₁ − s₀ = ln(p₁/p₀) + y + ½ there, from the
     * scores above): 0.1 σ wide at ln(p₀/p₁) = 0.45, none at 0.6 (one
     * boundary, at 0), and 4·10⁻⁴ σ at 0.4998, below the scan's spacing
     * of 1.1·10⁻³ σ over the 18 σ of the supports, where the crossings
     * still find it at its exact ends */
    const double pam3[3] = {-1.0, 0.0, 1.0};
    m = model_named(&qc_model_gauss, (const char *const[]){"sigma"}, (const double[]){1.0}, 1);
    const double ratio[3] = {0.45, 0.6, 0.4998};
    for (int k = 0; k < 3; k++) {
        const double p0 = 1.0 / (2.0 + exp(-ratio[k])), p1 = p0 * exp(-ratio[k]);
        const double law3[3] = {p0, p1, p0}, half = 0.5 - ratio[k];
        if (k < 2) {
            check_envelope(m, pam3, law3, 3, 1.0, k == 0 ? 2 : 1);
            continue;
        }
        assert_int_equal(qc_map_boundaries(m, pam3, law3, 3, &b, &nb), QC_OK);
        assert_int_equal(nb, 2);
        assert_near(b[0], -half, ENVELOPE_TOL);
        assert_near(b[1], half, ENVELOPE_TOL);
        free(b);
    }
    qc_model_free(m);
}

/* Photon counts, Poisson without background (n = 0 for level 0, n = 2
 * for level 1, equiprobable): the MAP decision is level 0 at count 0
 * only (e^{−2}·2^k/k! > 0 = P(k|0) for k ≥ 1), so the one boundary is
 * the count 1. With signal 4 and background 1 the decision changes where
 * 5^k e^{−5} first beats e^{−1}: k·ln 5 > 4, k ≥ 3 (direct arithmetic). */
static void test_map_boundaries_counts(void **state)
{
    (void)state;
    const double levels[2] = {0.0, 1.0}, law[2] = {0.5, 0.5};
    double *b = NULL;
    size_t nb = 0;
    double p0[QC_MODEL_MAX_PARAMS] = {2.0, 0.0};
    qc_model *m;
    assert_int_equal(qc_model_alloc(&qc_model_poisson, p0, &m), QC_OK);
    assert_int_equal(qc_map_boundaries(m, levels, law, 2, &b, &nb), QC_OK);
    assert_int_equal(nb, 1);
    assert_near(b[0], 1.0, 0.0);
    free(b);
    qc_model_free(m);
    double p1[QC_MODEL_MAX_PARAMS] = {4.0, 1.0};
    assert_int_equal(qc_model_alloc(&qc_model_poisson, p1, &m), QC_OK);
    assert_int_equal(qc_map_boundaries(m, levels, law, 2, &b, &nb), QC_OK);
    assert_int_equal(nb, 1);
    assert_near(b[0], 3.0, 0.0);
    free(b);
    qc_model_free(m);
}

static void test_target_parse(void **state)
{
    (void)state;
    qc_target t;
    assert_int_equal(qc_target_parse("fec=kp4", &t), QC_OK);
    assert_int_equal(t.kind, QC_TARGET_BER);
    assert_near(t.value, 2.4e-4, 1e-18);
    assert_int_equal(qc_target_parse("ngmi=0.8", &t), QC_OK);
    assert_int_equal(t.kind, QC_TARGET_NGMI);
    assert_int_equal(qc_target_parse("ber=0.6", &t), QC_EINVAL);
    assert_int_equal(qc_target_parse("fec=nope", &t), QC_EINVAL);
    assert_int_equal(qc_target_parse("snr=3", &t), QC_EINVAL);
    assert_int_equal(qc_target_parse("ber=1e-3,ngmi=0.8", &t), QC_EINVAL);
}

/* The same question on settings, as `quantcap require` asks it: the key
 * solved for is replaced in a copy of the settings at each step. */
static void test_settings_require(void **state)
{
    (void)state;
    qc_settings *s;
    assert_int_equal(qc_settings_alloc(&s), QC_OK);
    const char *kv[][2] = {{"model", "gauss"}, {"levels", "-1,1"}, {"cells", "2"},
                           {"thresholds", "0"}, {"snr-db", "12"}};
    for (size_t i = 0; i < 5; i++)
        assert_int_equal(qc_settings_set(s, kv[i][0], kv[i][1]), QC_OK);
    qc_target t;
    assert_int_equal(qc_target_parse("ber=1e-3", &t), QC_OK);
    qc_require_result r;
    assert_int_equal(qc_settings_require(s, "snr-db", &t, -10.0, 30.0, " dB", &r), QC_OK);
    assert_near(r.required, 20.0 * log10(gsl_cdf_ugaussian_Qinv(1e-3)), ROOT_TOL_DB);
    assert_near(qc_require_margin_db(&r, 0, 12.0), 12.0 - r.required, EXACT_MARGIN);
    assert_true(qc_setting_in_db("snr-db") && qc_setting_in_db("power-dbm"));
    assert_false(qc_setting_in_db("signal"));
    assert_int_equal(qc_setting_check_solvable("bits"), QC_EINVAL);
    assert_int_equal(qc_setting_check_solvable("sigma"), QC_OK);
    assert_int_equal(qc_settings_require(s, "cells", &t, 2.0, 8.0, NULL, &r), QC_EINVAL);
    /* the settings given are unchanged */
    assert_string_equal(qc_settings_get(s, "snr-db"), "12");
    qc_settings_free(s);
}

/* A 16-QAM I/Q pair of 4 x 4 uniform cells at an Es/N0 in dB; counts its
 * builds. */
typedef struct {
    qc_plane *plane;
    qc_design_iq iq;
    qc_model *model;
    size_t builds;
} plane_builder;

static qc_status build_plane(void *ctx, double snr_db, const qc_model **model,
                             qc_design_request *req)
{
    plane_builder *b = ctx;
    b->builds++;
    const double e2 = qc_plane_energy(b->plane);
    qc_status st = gauss_request(sqrt(e2 / (2.0 * pow(10.0, snr_db / 10.0))), &b->model, req);
    if (st != QC_OK)
        return st;
    req->channel.iq = &b->iq;
    req->quantizer.cells = 4;
    req->quantizer.kind = QC_QUANTIZER_UNIFORM;
    *model = b->model;
    return QC_OK;
}

/* A 2-D receiver has an unquantized reference for the MI alone, so a
 * penalty at a BER target is undefined: asked for the penalty only, the
 * search does not run at all (one build to learn that), while the full
 * question still finds the required SNR. */
static void test_penalty_only_without_reference(void **state)
{
    (void)state;
    plane_builder b = {0};
    assert_int_equal(qc_plane_parse("qam:16", &b.plane), QC_OK);
    b.iq = (qc_design_iq){.plane = b.plane, .kind = QC_IQ_PRODUCT};
    qc_require_request rq = {.build = build_plane, .ctx = &b, .lo = 5.0, .hi = 25.0,
                             .name = "snr-db", .unit = " dB", .penalty_only = 1};
    assert_int_equal(qc_target_parse("ber=1e-3", &rq.target), QC_OK);
    qc_require_result r;
    assert_int_equal(qc_require(&rq, &r), QC_OK);
    assert_non_null(r.unquantized_note);
    assert_true(isnan(r.required) && isnan(r.penalty_db));
    assert_int_equal(r.designs, 0);
    assert_int_equal(b.builds, 1);
    rq.penalty_only = 0;
    b.builds = 0;
    assert_int_equal(qc_require(&rq, &r), QC_OK);
    assert_non_null(r.unquantized_note);
    assert_true(r.required > 5.0 && r.required < 25.0 && isnan(r.penalty_db));
    assert_true(r.designs > 3 && b.builds > 3);
    qc_model_free(b.model);
    qc_plane_free(b.plane);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_bpsk_ber),      cmocka_unit_test(test_biawgn_half_rate),
        cmocka_unit_test(test_penalty_in_bits), cmocka_unit_test(test_unreachable),
        cmocka_unit_test(test_not_monotone),  cmocka_unit_test(test_target_parse),
        cmocka_unit_test(test_settings_require), cmocka_unit_test(test_ber_penalty_in_bits),
        cmocka_unit_test(test_map_boundaries_gauss), cmocka_unit_test(test_map_boundaries_counts),
        cmocka_unit_test(test_map_boundaries_envelope),
        cmocka_unit_test(test_penalty_only_without_reference),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
