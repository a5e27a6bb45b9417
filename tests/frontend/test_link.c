/* test_link.c — the amplified coherent fibre link (src/frontend/fibre_link.c):
 * ASE power written out, the GN model's cube law and its optimum launch
 * power, the transceiver limit, spans in series, and bad links. Physical
 * constants written out (SI 2019 exact values: h = 6.62607015e-34 J·s,
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

#ifndef M_PI
#define M_PI 3.14159265358979323846
#endif

#define H_P 6.62607015e-34
#define C_0 299792458.0

#define TOL_CODATA 2e-6 /* relative: GSL carries CODATA 2006 values           */
#define TOL_DB 1e-9     /* dB: the same closed forms, rounding only            */

static void rel(double got, double want, double tol)
{
    if (!(fabs(got - want) <= tol * fabs(want)))
        fail_msg("got %.17g, want %.17g", got, want);
}

static void near(double got, double want, double tol)
{
    if (!(fabs(got - want) <= tol))
        fail_msg("got %.17g, want %.17g (tol %g)", got, want, tol);
}

static void expect(qc_status st, const char *needle)
{
    assert_int_equal(st, QC_EINVAL);
    assert_message(needle);
}

/* 20 × 80 km, NF 5 dB, 32 GBd, 5 channels at 50 GHz (invented link). */
static qc_fibre_link link20(void)
{
    qc_fibre_link l;
    qc_fibre_link_default(&l);
    l.spans = 20.0;
    l.span_km = 80.0;
    l.nf_db = 5.0;
    l.symbol_rate = 32e9;
    l.channels = 5.0;
    l.spacing_ghz = 50.0;
    return l;
}

static void test_ase(void **state)
{
    (void)state;
    double w;
    /* P_ASE = NF·G·h·ν·B (Desurvire 1994, high-gain form): NF 5 dB, G 20 dB,
     * 1550 nm, 12.5 GHz, written out */
    assert_int_equal(qc_ase_power(5.0, 20.0, 1550.0, 12.5e9, &w), QC_OK);
    rel(w, pow(10.0, 0.5) * 100.0 * H_P * C_0 / 1550e-9 * 12.5e9, TOL_CODATA);
    /* the link: N amplifiers of gain = span loss; SNR_ASE = P/(N·P_ASE(R_s)) */
    qc_fibre_link l = link20();
    l.launch_dbm = 0.0;
    l.gamma = 0.0;
    qc_fibre_link_result r;
    assert_int_equal(qc_fibre_link_eval(&l, &r), QC_OK);
    double ase = 20.0 * pow(10.0, 0.5) * pow(10.0, 1.6) * H_P * C_0 / 1550e-9 * 32e9;
    rel(r.ase_w, ase, TOL_CODATA);
    near(r.snr_ase_db, 10.0 * log10(1e-3 / ase), 1e-5);
    /* OSNR over 12.5 GHz against SNR over R_s = 32 GHz, two polarizations:
     * SNR = OSNR·12.5/32 (Essiambre et al., J. Lightw. Technol. 28(4), 2010) */
    near(r.snr_ase_db, r.osnr_db + 10.0 * log10(12.5 / 32.0), TOL_DB);
    assert_true(isinf(r.snr_nli_db));
    assert_true(isnan(r.optimum_launch_dbm));
    near(r.snr_eff_db, r.snr_ase_db, TOL_DB);
    near(r.span_loss_db, 16.0, 1e-12);
    near(r.gain_db, 16.0, 1e-12);
    /* one polarization: only the ASE in the signal's polarization, 3 dB less */
    l.polarizations = 1;
    qc_fibre_link_result r1;
    assert_int_equal(qc_fibre_link_eval(&l, &r1), QC_OK);
    near(r1.snr_ase_db, r.snr_ase_db + 10.0 * log10(2.0), TOL_DB);
}

static void test_cube_law(void **state)
{
    (void)state;
    /* P_NLI = eta·P³ (Poggiolini 2012): 3 dB more launch power, 9 dB more
     * NLI, so SNR_NLI falls by 6 dB */
    qc_fibre_link l = link20();
    qc_fibre_link_result a, b;
    l.launch_dbm = -3.0;
    assert_int_equal(qc_fibre_link_eval(&l, &a), QC_OK);
    l.launch_dbm = 0.0;
    assert_int_equal(qc_fibre_link_eval(&l, &b), QC_OK);
    near(a.snr_nli_db - b.snr_nli_db, 6.0, TOL_DB);
    rel(b.nli_w / a.nli_w, pow(10.0, 0.9), 1e-12);
    /* incoherent accumulation: twice the spans, twice the NLI and ASE */
    qc_fibre_link_result c;
    l.spans = 40.0;
    assert_int_equal(qc_fibre_link_eval(&l, &c), QC_OK);
    rel(c.nli_w / b.nli_w, 2.0, 1e-12);
    rel(c.ase_w / b.ase_w, 2.0, 1e-12);
    /* coherent accumulation N^(1+eps): 40 spans, eps 0.05 against 20 */
    qc_fibre_link_result d;
    l.coherence = 0.05;
    assert_int_equal(qc_fibre_link_eval(&l, &d), QC_OK);
    rel(d.nli_w / b.nli_w, pow(40.0, 1.05) / 20.0, 1e-12);
    /* more channels, more NLI (cross-channel interference) */
    l = link20();
    l.launch_dbm = 0.0;
    qc_fibre_link_result e;
    l.channels = 1.0;
    assert_int_equal(qc_fibre_link_eval(&l, &e), QC_OK);
    assert_true(e.nli_w < b.nli_w);
}

static void test_optimum(void **state)
{
    (void)state;
    /* At the optimum launch power P_NLI = P_ASE/2 and the SNR is 2/3 of
     * P/P_ASE, i.e. 10·log10(1.5) = 1.76 dB below it (Poggiolini 2012,
     * sec. VIII) */
    qc_fibre_link l = link20();
    qc_fibre_link_result r;
    assert_int_equal(qc_fibre_link_eval(&l, &r), QC_OK); /* launch: the optimum */
    near(r.launch_dbm, r.optimum_launch_dbm, TOL_DB);
    rel(r.nli_w, r.ase_w / 2.0, 1e-12);
    near(r.snr_ase_db - r.snr_eff_db, 10.0 * log10(1.5), TOL_DB);
    near(r.snr_eff_db, r.optimum_snr_db, TOL_DB);
    /* the optimum: 1 dB either side is worse */
    qc_fibre_link_result lo, hi;
    l.launch_dbm = r.optimum_launch_dbm - 1.0;
    assert_int_equal(qc_fibre_link_eval(&l, &lo), QC_OK);
    l.launch_dbm = r.optimum_launch_dbm + 1.0;
    assert_int_equal(qc_fibre_link_eval(&l, &hi), QC_OK);
    assert_true(lo.snr_eff_db < r.snr_eff_db && hi.snr_eff_db < r.snr_eff_db);
    near(lo.optimum_launch_dbm, r.optimum_launch_dbm, TOL_DB);
    /* P_opt = (P_ASE/(2·eta))^(1/3) written out */
    near(r.optimum_launch_dbm, 10.0 * log10(cbrt(r.ase_w / (2.0 * r.eta)) / 1e-3), TOL_DB);
    /* a transceiver limit adds its noise: 1/SNR = 1/SNR_link + 1/SNR_trx */
    qc_fibre_link_result t;
    l.launch_dbm = NAN;
    l.transceiver_snr_db = r.snr_eff_db;
    assert_int_equal(qc_fibre_link_eval(&l, &t), QC_OK);
    near(t.snr_eff_db, r.snr_eff_db - 10.0 * log10(2.0), TOL_DB);
    near(t.optimum_launch_dbm, r.optimum_launch_dbm, TOL_DB);
}

static void test_gain_drift(void **state)
{
    (void)state;
    /* a gain 0.5 dB above the span loss: the power grows 0.5 dB a span;
     * referred to the launch, the ASE of amplifier k counts g^-k and the
     * NLI of span k g^(2(k-1)), g the net gain (geometric sums written out) */
    qc_fibre_link l = link20();
    l.spans = 10.0;
    l.launch_dbm = 0.0;
    qc_fibre_link_result r0, r;
    assert_int_equal(qc_fibre_link_eval(&l, &r0), QC_OK);
    l.gain_db = 16.5;
    assert_int_equal(qc_fibre_link_eval(&l, &r), QC_OK);
    double g = pow(10.0, 0.05), sa = 0.0, sn = 0.0;
    for (int k = 1; k <= 10; k++) {
        sa += pow(g, -k);
        sn += pow(g, 2.0 * (k - 1));
    }
    double ase1 = r0.ase_w / 10.0 * pow(10.0, 0.05); /* one amplifier, 0.5 dB more gain */
    rel(r.ase_w, ase1 * sa, 1e-9);
    rel(r.nli_w, r0.nli_w / 10.0 * sn, 1e-9);
}

static void test_bad_links(void **state)
{
    (void)state;
    qc_fibre_link l = link20();
    qc_fibre_link_result r;
    l.span_km = -80.0;
    expect(qc_fibre_link_eval(&l, &r), "'span-km' must be > 0");
    l = link20();
    l.span_km = 300.0; /* 60 dB */
    expect(qc_fibre_link_eval(&l, &r), "more than the 50 dB of gain");
    l = link20();
    l.nf_db = 2.0; /* below 2 − 1/G at 16 dB gain: 2.99 dB */
    expect(qc_fibre_link_eval(&l, &r), "below the quantum limit");
    l = link20();
    l.gain_db = 20.0;
    expect(qc_fibre_link_eval(&l, &r), "contradictory amplifier settings");
    l = link20();
    l.gain_db = 16.2;
    l.coherence = 0.1;
    expect(qc_fibre_link_eval(&l, &r), "'coherence' needs identical transparent spans");
    l = link20();
    l.spacing_ghz = 25.0;
    expect(qc_fibre_link_eval(&l, &r), "the channels would overlap");
    l = link20();
    l.spacing_ghz = NAN;
    expect(qc_fibre_link_eval(&l, &r), "'channel-spacing-ghz' is required");
    l = link20();
    l.dispersion = 0.0;
    expect(qc_fibre_link_eval(&l, &r), "'dispersion' must be a finite, nonzero");
    l = link20();
    l.polarizations = 1;
    expect(qc_fibre_link_eval(&l, &r), "dual-polarization");
    l = link20();
    l.gamma = 0.0;
    expect(qc_fibre_link_eval(&l, &r), "'launch-dbm' is required for a linear link");
    l = link20();
    l.nf_db = NAN;
    expect(qc_fibre_link_eval(&l, &r), "'nf-db' is required");
    l = link20();
    l.spans = 0.5;
    expect(qc_fibre_link_eval(&l, &r), "'spans' must be >= 1");
}

static void test_intensity_link(void **state)
{
    (void)state;
    /* the power budget written out: 3 dBm − 25 km × 0.35 dB/km − 1.5 dB
     * connectors − 0.6 dB splices − 2 dB penalty = −9.85 dBm */
    qc_intensity_link l;
    qc_intensity_link_default(&l);
    l.launch_dbm = 3.0;
    l.length_km = 25.0;
    l.loss_db_km = 0.35;
    l.connector_loss_db = 1.5;
    l.splice_loss_db = 0.6;
    l.penalty_db = 2.0;
    double rx, loss;
    assert_int_equal(qc_intensity_link_received(&l, &rx, &loss), QC_OK);
    near(rx, 3.0 - 8.75 - 1.5 - 0.6 - 2.0, 1e-12);
    near(loss, 12.85, 1e-12);
    /* the default attenuation is 0.2 dB/km: 10 km, 2 dB */
    qc_intensity_link_default(&l);
    l.launch_dbm = 0.0;
    l.length_km = 10.0;
    assert_int_equal(qc_intensity_link_received(&l, &rx, &loss), QC_OK);
    near(rx, -2.0, 1e-12);
    l.length_km = -1.0;
    expect(qc_intensity_link_received(&l, &rx, &loss), "'length-km' must be >= 0");
    l.length_km = 600.0; /* 120 dB */
    expect(qc_intensity_link_received(&l, &rx, &loss),
           "more than the 100 dB any photodiode receiver is seen behind");
    l.length_km = 10.0;
    l.launch_dbm = NAN;
    expect(qc_intensity_link_received(&l, &rx, &loss), "'launch-dbm' is required");
}

static void test_rin(void **state)
{
    (void)state;
    /* RIN adds the variance RIN·I²·B of a photocurrent I (Agrawal,
     * Fiber-Optic Communication Systems, 4th ed., ch. 4): gauss-sd's
     * signal-squared coefficient b = RIN·B; gauss's σ² gains RIN·I²·B at
     * the mean current */
    qc_receiver rx;
    qc_receiver_default(&rx);
    rx.responsivity = 0.8;
    rx.bandwidth = 20e9;
    rx.thermal_density = 15.0;
    double power[2] = {1e-4, 1e-3}, p0[QC_MODEL_MAX_PARAMS], p1[QC_MODEL_MAX_PARAMS], lv[2];
    assert_int_equal(qc_frontend_gauss_sd(&rx, power, 2, p0, lv), QC_OK);
    assert_true(p0[2] == 0.0);
    rx.rin = 1e-14; /* −140 dB/Hz */
    assert_int_equal(qc_frontend_gauss_sd(&rx, power, 2, p1, lv), QC_OK);
    rel(p1[2], 1e-14 * 20e9, 1e-15);
    assert_true(p1[0] == p0[0] && p1[1] == p0[1]);
    double g0[QC_MODEL_MAX_PARAMS], g1[QC_MODEL_MAX_PARAMS];
    rx.rin = 0.0;
    assert_int_equal(qc_frontend_gauss(&rx, power, 2, g0, lv), QC_OK);
    rx.rin = 1e-14;
    assert_int_equal(qc_frontend_gauss(&rx, power, 2, g1, lv), QC_OK);
    double i = 0.8 * 5.5e-4;
    rel(g1[0] * g1[0] - g0[0] * g0[0], 1e-14 * i * i * 20e9, 1e-9);
    rx.rin = -1.0;
    expect(qc_frontend_gauss(&rx, power, 2, g1, lv), "'rin' must be >= 0");
}

static void test_preamp(void **state)
{
    (void)state;
    /* modes m = B_o·T·p; x = G·P·T/N_0 with N_0 = n_sp(G − 1)hν and
     * NF = 2n_sp(G − 1)/G + 1/G (Desurvire 1994), written out */
    double power[2] = {0.0, 2e-9}, params[QC_MODEL_MAX_PARAMS], lv[2];
    assert_int_equal(qc_frontend_preamp(power, 2, 1e-10, 1550e-9, 30.0, 4.0, 50e9, 2, params,
                                        lv),
                     QC_OK);
    rel(params[0], 10.0, 1e-15);
    double g = 1e3, nf = pow(10.0, 0.4), hnu = H_P * C_0 / 1550e-9;
    double nsp = (nf * g - 1.0) / (2.0 * (g - 1.0));
    rel(lv[1], g * 2e-9 * 1e-10 / (nsp * (g - 1.0) * hnu), TOL_CODATA);
    assert_true(lv[0] == 0.0);
    /* at the quantum limit NF = 2 − 1/G (n_sp = 1) the signal in ASE
     * energies per mode is G/(G − 1) times the photons per slot */
    double nf_db = 10.0 * log10(2.0 - 1.0 / g), photons = 2e-9 * 1e-10 / hnu;
    assert_int_equal(qc_frontend_preamp(power, 2, 1e-10, 1550e-9, 30.0, nf_db, 1e10, 1,
                                        params, lv),
                     QC_OK);
    rel(lv[1], photons * g / (g - 1.0), TOL_CODATA);
    rel(params[0], 1.0, 1e-15);
    expect(qc_frontend_preamp(power, 2, 1e-10, 1550e-9, 30.0, 2.0, 50e9, 2, params, lv),
           "below the quantum limit");
    expect(qc_frontend_preamp(power, 2, 1e-10, 1550e-9, 30.0, 4.0, 1e9, 2, params, lv),
           "model 'preamp' needs 1 to 1e6");
    expect(qc_frontend_preamp(power, 2, 1e-10, 1550e-9, -3.0, 4.0, 50e9, 2, params, lv),
           "'gain-db' of the pre-amplifier must be > 0 dB");
    expect(qc_frontend_preamp(power, 2, 1e-10, 1550e-9, 30.0, 4.0, 50e9, 3, params, lv),
           "'ase-polarizations' must be 1 or 2");
}

static void test_free_space(void **state)
{
    (void)state;
    /* range equation with diffraction-limited apertures (Friis, Proc. IRE
     * 34(5), 1946): P_r = P_t·(π·D_t·D_r/(4·λ·R))²·losses, written out */
    qc_free_space_link l;
    qc_free_space_link_default(&l);
    l.transmit_dbm = 20.0;
    l.range_km = 1000.0;
    l.wavelength_nm = 1550.0;
    l.tx_aperture_m = 0.1;
    l.rx_aperture_m = 0.3;
    l.pointing_loss_db = 3.0;
    l.atmosphere_loss_db = 2.0;
    qc_free_space_result r, r2;
    assert_int_equal(qc_free_space_link_eval(&l, &r), QC_OK);
    double c = M_PI * 0.1 * 0.3 / (4.0 * 1550e-9 * 1e6);
    near(r.geometric_loss_db, -20.0 * log10(c), 1e-9);
    near(r.received_dbm, 20.0 + 20.0 * log10(c) - 5.0, 1e-9);
    near(r.loss_db, r.geometric_loss_db + 5.0, 1e-12);
    /* far field: 6.02 dB less per doubling of the range (inverse square) */
    l.range_km = 2000.0;
    assert_int_equal(qc_free_space_link_eval(&l, &r2), QC_OK);
    near(r.received_dbm - r2.received_dbm, 20.0 * log10(2.0), 1e-9);
    assert_true(r2.background_w == 0.0);
    /* background: P_b = L·(π D_r²/4)·π(θ/2)²·Δλ written out */
    l.background_radiance = 1e-3;
    l.field_of_view_mrad = 0.2;
    l.filter_nm = 1.0;
    assert_int_equal(qc_free_space_link_eval(&l, &r2), QC_OK);
    rel(r2.background_w, 1e-3 * M_PI * 0.0225 * M_PI * 1e-8 * 1.0, 1e-12);
    l.filter_nm = NAN;
    expect(qc_free_space_link_eval(&l, &r2), "'filter-nm' is required");
    /* near field: the range equation would have more received than sent */
    qc_free_space_link_default(&l);
    l.transmit_dbm = 0.0;
    l.range_km = 0.01;
    l.wavelength_nm = 1550.0;
    l.tx_aperture_m = 0.3;
    l.rx_aperture_m = 0.3;
    expect(qc_free_space_link_eval(&l, &r), "near field");
    l.range_km = -5.0;
    expect(qc_free_space_link_eval(&l, &r), "'range-km' must be > 0");
    l.range_km = 100.0;
    l.pointing_loss_db = -1.0;
    expect(qc_free_space_link_eval(&l, &r), "'pointing-loss-db' must be >= 0");
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_ase),
        cmocka_unit_test(test_cube_law),
        cmocka_unit_test(test_optimum),
        cmocka_unit_test(test_gain_drift),
        cmocka_unit_test(test_bad_links),
        cmocka_unit_test(test_intensity_link),
        cmocka_unit_test(test_rin),
        cmocka_unit_test(test_preamp),
        cmocka_unit_test(test_free_space),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
