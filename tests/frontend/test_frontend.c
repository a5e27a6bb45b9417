/* test_frontend.c — physical receiver → model parameters. Expected
 * values are computed here from the textbook formulas with the physical
 * constants written out (SI 2019 exact values, CODATA 2018: q =
 * 1.602176634e-19 C, k_B = 1.380649e-23 J/K, h = 6.62607015e-34 J·s,
 * c = 299792458 m/s). */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <cmocka.h>

#include <math.h>
#include <string.h>

#include "quantcap.h"
#include "test_helpers.h"

#define Q_E 1.602176634e-19
#define K_B 1.380649e-23
#define H_P 6.62607015e-34
#define C_0 299792458.0

#define TOL_TIGHT 1e-12  /* relative, same formula and constants        */
#define TOL_CODATA 2e-6  /* relative: GSL 2.7 carries CODATA 2006 values,
                            k_B 1.0e-6 from the 2019 exact value        */
#define TOL_STEP 1e-9  /* relative: equal level steps, differences of powers */

static void rel(double got, double want, double tol)
{
    if (!(fabs(got - want) <= tol * fabs(want)))
        fail_msg("got %.17g, want %.17g", got, want);
}

static void expect(qc_status st, const char *needle)
{
    assert_int_equal(st, QC_EINVAL);
    assert_message(needle);
}

static qc_receiver apd_rx(void)
{
    qc_receiver rx;
    qc_receiver_default(&rx);
    rx.responsivity = 0.8;
    rx.bandwidth = 10e9;
    rx.load_resistance = 50.0;
    rx.temperature = 300.0;
    rx.dark_current = 5e-9;
    rx.gain = 10.0;
    rx.ionization_ratio = 0.5;
    return rx;
}

static void test_osnr(void **state)
{
    (void)state;
    double snr;
    /* SNR = OSNR·2·B_ref/(p·R_s) (Essiambre et al., J. Lightw. Technol.
     * 28(4), 2010): 20 dB, 32 GBd, 2 pol → 100·25e9/64e9 = 39.0625 */
    assert_int_equal(qc_osnr_to_snr(20.0, NAN, 32e9, 2, &snr), QC_OK);
    rel(snr, 39.0625, TOL_TIGHT);
    assert_int_equal(qc_osnr_to_snr(20.0, 0.0, 32e9, 1, &snr), QC_OK);
    rel(snr, 78.125, TOL_TIGHT);
    assert_int_equal(qc_osnr_to_snr(13.0, 25e9, 10e9, 2, &snr), QC_OK);
    rel(snr, pow(10.0, 1.3) * 2.5, TOL_TIGHT);
    expect(qc_osnr_to_snr(NAN, 0, 32e9, 2, &snr), "'osnr'");
    expect(qc_osnr_to_snr(INFINITY, 0, 32e9, 2, &snr), "'osnr'");
    expect(qc_osnr_to_snr(20, 0, 0.0, 2, &snr), "'symbol_rate'");
    expect(qc_osnr_to_snr(20, 0, -1.0, 2, &snr), "'symbol_rate'");
    expect(qc_osnr_to_snr(20, 0, NAN, 2, &snr), "'symbol_rate'");
    expect(qc_osnr_to_snr(20, INFINITY, 32e9, 2, &snr), "'ref_bandwidth'");
    expect(qc_osnr_to_snr(20, 0, 32e9, 3, &snr), "'polarizations'");
    expect(qc_osnr_to_snr(20, 0, 32e9, 0, &snr), "'polarizations'");
}

static void test_noise(void **state)
{
    (void)state;
    qc_receiver rx = apd_rx();
    double F;
    /* F = kM + (1 − k)(2 − 1/M) (McIntyre 1966) */
    assert_int_equal(qc_excess_noise_factor(10.0, 0.5, &F), QC_OK);
    rel(F, 5.95, TOL_TIGHT);
    assert_int_equal(qc_excess_noise_factor(1.0, 0.7, &F), QC_OK);
    rel(F, 1.0, TOL_TIGHT);
    double shot, thermal, p = 1e-5;
    assert_int_equal(qc_receiver_noise(&rx, p, &shot, &thermal), QC_OK);
    /* shot 2q(RP + I_d)M²F·B, thermal 4kTB/R_L (Agrawal, Fiber-Optic
     * Communication Systems, sec. 4.4) */
    rel(shot, 2 * Q_E * (0.8 * p + 5e-9) * 100.0 * 5.95 * 10e9, TOL_CODATA);
    rel(thermal, 4 * K_B * 300.0 * 10e9 / 50.0, TOL_CODATA);
    rx.thermal_density = 10.0; /* pA/√Hz → (1e-11 A)²/Hz · B */
    assert_int_equal(qc_receiver_noise(&rx, p, NULL, &thermal), QC_OK);
    rel(thermal, 1e-22 * 10e9, TOL_TIGHT);
}

static void test_levels_and_models(void **state)
{
    (void)state;
    double pw[4];
    /* average −3 dBm, extinction 10: P0 + P1 = 2·P_avg, P1 = 10·P0 */
    assert_int_equal(qc_intensity_levels(-3.0, 10.0, 4, pw), QC_OK);
    double avg = 1e-3 * pow(10.0, -0.3);
    rel(pw[0], 2 * avg / 11, TOL_TIGHT);
    rel(pw[3], 20 * avg / 11, TOL_TIGHT);
    rel(pw[1] - pw[0], pw[3] - pw[2], TOL_STEP);
    rel(0.25 * (pw[0] + pw[1] + pw[2] + pw[3]), avg, TOL_TIGHT);
    assert_int_equal(qc_intensity_levels(-3.0, INFINITY, 2, pw), QC_OK);
    assert_true(pw[0] == 0.0);
    rel(pw[1], 2 * avg, TOL_TIGHT);

    qc_receiver rx = apd_rx();
    double params[QC_MODEL_MAX_PARAMS], levels[4];
    assert_int_equal(qc_intensity_levels(-20.0, 8.0, 4, pw), QC_OK);
    assert_int_equal(qc_frontend_gauss_sd(&rx, pw, 4, params, levels), QC_OK);
    double F = 5.95, B = 10e9;
    rel(params[0], sqrt(4 * K_B * 300 * B / 50 + 2 * Q_E * 5e-9 * 100 * F * B),
        TOL_CODATA);
    rel(params[1], 2 * Q_E * 10 * F * B, TOL_CODATA);
    assert_true(params[2] == 0.0);
    rel(levels[3], 10 * 0.8 * pw[3], TOL_TIGHT);
    /* variance at level i = shot + thermal at that power */
    double shot, thermal;
    qc_receiver_noise(&rx, pw[2], &shot, &thermal);
    rel(params[0] * params[0] + params[1] * levels[2], shot + thermal, TOL_TIGHT);
    qc_model *m;
    assert_int_equal(qc_model_alloc(&qc_model_gauss_sd, params, &m), QC_OK);
    assert_int_equal(qc_model_check_levels(m, levels, 4), QC_OK);
    qc_model_free(m);

    assert_int_equal(qc_frontend_gauss(&rx, pw, 4, params, levels), QC_OK);
    double pm = 0.25 * (pw[0] + pw[1] + pw[2] + pw[3]);
    qc_receiver_noise(&rx, pm, &shot, &thermal);
    rel(params[0], sqrt(shot + thermal), TOL_TIGHT);

    /* apd over a 100 ps slot: primaries R·P·T/q, thermal charge
     * i_n²·T/2 (integrate-and-dump, noise bandwidth 1/(2T), common practice) */
    double T = 100e-12;
    assert_int_equal(qc_frontend_apd(&rx, T, pw, 4, params, levels), QC_OK);
    rel(params[0], 0.8 * pw[3] * T / Q_E, TOL_CODATA);
    rel(params[1], 5e-9 * T / Q_E, TOL_CODATA);
    assert_true(params[2] == 10.0 && params[3] == 0.5);
    rel(params[4], sqrt(4 * K_B * 300 / 50 * T / 2) / Q_E, TOL_CODATA);
    rel(levels[0], 1.0 / 8.0, TOL_TIGHT);
    assert_true(levels[3] == 1.0);
    assert_int_equal(qc_model_alloc(&qc_model_apd_gauss, params, &m), QC_OK);
    qc_model_free(m);

    /* photons per slot n = ηPT/(hc/λ): 1 nW, 1 ns, 1550 nm, η = 0.8 */
    double n;
    assert_int_equal(qc_photons_per_slot(1e-9, 1e-9, 1550e-9, 0.8, &n), QC_OK);
    rel(n, 0.8 * 1e-18 / (H_P * C_0 / 1550e-9), TOL_CODATA);
    assert_int_equal(qc_frontend_poisson(pw, 4, 1e-9, 1550e-9, 0.8, 1e3, params, levels),
                     QC_OK);
    rel(params[0], 0.8 * pw[3] * 1e-9 / (H_P * C_0 / 1550e-9), TOL_CODATA);
    rel(params[1], 1e-6, TOL_TIGHT);
    assert_int_equal(qc_model_alloc(&qc_model_poisson, params, &m), QC_OK);
    qc_model_free(m);
}

static void test_bad_inputs(void **state)
{
    (void)state;
    double pw[2] = {1e-6, 2e-6}, params[QC_MODEL_MAX_PARAMS], levels[2], F, v;
    struct {
        size_t offset;
        double value;
        const char *name;
    } bad[] = {
        {offsetof(qc_receiver, responsivity), NAN, "'responsivity' is required"},
        {offsetof(qc_receiver, responsivity), 0.0, "'responsivity' must be > 0"},
        {offsetof(qc_receiver, responsivity), -1.0, "'responsivity'"},
        {offsetof(qc_receiver, responsivity), INFINITY, "'responsivity'"},
        {offsetof(qc_receiver, bandwidth), NAN, "'bandwidth' is required"},
        {offsetof(qc_receiver, bandwidth), 0.0, "'bandwidth'"},
        {offsetof(qc_receiver, dark_current), -1e-9, "'dark_current' must be >= 0"},
        {offsetof(qc_receiver, dark_current), NAN, "'dark_current'"},
        {offsetof(qc_receiver, gain), 0.5, "'apd-gain' must be >= 1"},
        {offsetof(qc_receiver, gain), NAN, "'apd-gain'"},
        {offsetof(qc_receiver, ionization_ratio), 1.5, "'apd-k'"},
        {offsetof(qc_receiver, ionization_ratio), -0.1, "'apd-k'"},
        {offsetof(qc_receiver, ionization_ratio), NAN, "'apd-k'"},
        {offsetof(qc_receiver, load_resistance), 0.0, "'load_resistance'"},
        {offsetof(qc_receiver, load_resistance), NAN, "give 'thermal_density'"},
        {offsetof(qc_receiver, temperature), -1.0, "'temperature'"},
        {offsetof(qc_receiver, thermal_density), -1.0, "'thermal_density'"},
    };
    for (size_t i = 0; i < sizeof bad / sizeof *bad; i++) {
        qc_receiver rx = apd_rx();
        *(double *)((char *)&rx + bad[i].offset) = bad[i].value;
        expect(qc_frontend_gauss_sd(&rx, pw, 2, params, levels), bad[i].name);
        expect(qc_receiver_noise(&rx, 1e-6, &v, &v), bad[i].name);
        if (bad[i].offset != offsetof(qc_receiver, bandwidth))
            expect(qc_frontend_apd(&rx, 1e-9, pw, 2, params, levels), bad[i].name);
    }
    qc_receiver rx = apd_rx();
    expect(qc_receiver_noise(NULL, 1e-6, &v, &v), "no receiver");
    expect(qc_receiver_noise(&rx, -1e-6, &v, &v), "'power'");
    expect(qc_excess_noise_factor(0.99, 0.1, &F), "'apd-gain'");
    expect(qc_excess_noise_factor(INFINITY, 0.1, &F), "'apd-gain'");
    expect(qc_intensity_levels(NAN, 10, 2, pw), "'power'");
    expect(qc_intensity_levels(0, 1.0, 2, pw), "'extinction_ratio'");
    expect(qc_intensity_levels(0, 0.5, 2, pw), "'extinction_ratio'");
    expect(qc_intensity_levels(0, NAN, 2, pw), "'extinction_ratio'");
    expect(qc_intensity_levels(0, 10, 1, pw), "'levels'");
    expect(qc_frontend_apd(&rx, 0.0, pw, 2, params, levels), "'slot_time'");
    expect(qc_frontend_apd(&rx, NAN, pw, 2, params, levels), "'slot_time'");
    double negative[2] = {1e-6, -1e-6}, zero[2] = {0.0, 0.0};
    expect(qc_frontend_gauss(&rx, negative, 2, params, levels), "power level 2");
    expect(qc_frontend_apd(&rx, 1e-9, zero, 2, params, levels), "all power levels");
    double n;
    expect(qc_photons_per_slot(-1.0, 1e-9, 1.55e-6, 0.8, &n), "'power'");
    expect(qc_photons_per_slot(1e-9, 0.0, 1.55e-6, 0.8, &n), "'slot_time'");
    expect(qc_photons_per_slot(1e-9, 1e-9, -1.0, 0.8, &n), "'wavelength'");
    expect(qc_photons_per_slot(1e-9, 1e-9, 1.55e-6, 0.0, &n), "'efficiency'");
    expect(qc_photons_per_slot(1e-9, 1e-9, 1.55e-6, 1.5, &n), "'efficiency'");
    expect(qc_frontend_poisson(pw, 2, 1e-9, 1.55e-6, 0.8, -1.0, params, levels),
           "'dark_count_rate'");
    expect(qc_frontend_poisson(pw, 0, 1e-9, 1.55e-6, 0.8, 0.0, params, levels),
           "no optical power");
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_osnr),
        cmocka_unit_test(test_noise),
        cmocka_unit_test(test_levels_and_models),
        cmocka_unit_test(test_bad_inputs),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
