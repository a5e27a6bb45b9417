/* frontend.c — from a physical receiver to noise-model parameters, in SI
 * units with the CODATA constants of GSL (gsl_const_mksa.h):
 *  - photocurrent I = R·P; shot noise 2q(I + I_d)M²F·B; thermal noise
 *    4kT·B/R_L or i_n²·B (Agrawal, Fiber-Optic Communication Systems,
 *    4th ed., Wiley 2010, sec. 4.4); APD excess noise
 *    F = kM + (1 − k)(2 − 1/M) (McIntyre, IEEE Trans. Electron Devices
 *    13(1), 1966);
 *  - mean photons per slot n = η·P·T/(h·c/λ); quantum efficiency from a
 *    responsivity η = R·h·c/(q·λ) (same reference, sec. 4.1);
 *  - SNR = OSNR·2·B_ref/(p·R_s) (Essiambre et al., J. Lightw. Technol.
 *    28(4), 2010);
 *  - an optical pre-amplifier: ASE energy per mode N_0 = n_sp(G − 1)hν
 *    with NF = 2n_sp(G − 1)/G + 1/G, modes m = B_o·T·p (Humblet &
 *    Azizoglu, J. Lightw. Technol. 9(11), 1991; Desurvire, Erbium-Doped
 *    Fiber Amplifiers, Wiley 1994);
 *  - transmitter relative intensity noise: variance RIN·I²·B of a
 *    photocurrent I (Agrawal, same book, ch. 4).
 * Every input is validated; messages name the parameter and its value. */
#include "core/internal.h"
#include "quantcap/frontend.h"

#include <math.h>

#include <gsl/gsl_const_mksa.h>

#define Q_E GSL_CONST_MKSA_ELECTRON_CHARGE
#define K_B GSL_CONST_MKSA_BOLTZMANN
#define H_P GSL_CONST_MKSA_PLANCKS_CONSTANT_H
#define C_0 GSL_CONST_MKSA_SPEED_OF_LIGHT

void qc_receiver_default(qc_receiver *rx)
{
    rx->responsivity = NAN;
    rx->bandwidth = NAN;
    rx->thermal_density = NAN;
    rx->load_resistance = NAN;
    rx->temperature = 290.0;
    rx->dark_current = 0.0;
    rx->gain = 1.0;
    rx->ionization_ratio = 0.0;
    rx->rin = 0.0;
}

/* value > 0 and finite (positive = 1) or ≥ 0 and finite (positive = 0) */
static qc_status need(const char *name, double v, int positive)
{
    if (isnan(v))
        return qc_fail(QC_EINVAL, "'%s' is required (got NaN)", name);
    if (!isfinite(v) || (positive ? !(v > 0.0) : !(v >= 0.0)))
        return qc_fail(QC_EINVAL, "'%s' must be %s and finite (got %g)", name,
                       positive ? "> 0" : ">= 0", v);
    return QC_OK;
}

qc_status qc_excess_noise_factor(double gain, double k, double *factor)
{
    if (!isfinite(gain) || !(gain >= 1.0))
        return qc_fail(QC_EINVAL, "'apd-gain' must be >= 1 and finite (got %g)", gain);
    if (!(k >= 0.0 && k <= 1.0))
        return qc_fail(QC_EINVAL, "'apd-k' must be in [0, 1] (got %g)",
                       k);
    *factor = k * gain + (1.0 - k) * (2.0 - 1.0 / gain);
    return QC_OK;
}

/* Checks every receiver field; returns F and the thermal current density
 * squared i_n² (A²/Hz). `need_bandwidth`: the bandwidth is used. */
static qc_status receiver_check(const qc_receiver *rx, int need_bandwidth,
                                double *factor, double *in2)
{
    if (!rx)
        return qc_fail(QC_EINVAL, "no receiver given");
    qc_status st = need("responsivity", rx->responsivity, 1);
    if (st == QC_OK && need_bandwidth)
        st = need("bandwidth", rx->bandwidth, 1);
    if (st == QC_OK)
        st = need("dark_current", rx->dark_current, 0);
    if (st == QC_OK)
        st = qc_excess_noise_factor(rx->gain, rx->ionization_ratio, factor);
    if (st == QC_OK)
        st = need("rin", rx->rin, 0);
    if (st != QC_OK)
        return st;
    if (!isnan(rx->thermal_density)) {
        st = need("thermal_density", rx->thermal_density, 0);
        if (st != QC_OK)
            return st;
        double i = rx->thermal_density * 1e-12; /* pA/√Hz → A/√Hz */
        *in2 = i * i;
        return QC_OK;
    }
    if (isnan(rx->load_resistance))
        return qc_fail(QC_EINVAL, "give 'thermal_density' (pA/sqrt(Hz)) or "
                                  "'load_resistance' (ohm) for the thermal noise");
    st = need("load_resistance", rx->load_resistance, 1);
    if (st == QC_OK)
        st = need("temperature", rx->temperature, 1);
    if (st != QC_OK)
        return st;
    *in2 = 4.0 * K_B * rx->temperature / rx->load_resistance;
    return QC_OK;
}

qc_status qc_receiver_noise(const qc_receiver *rx, double power_w,
                            double *shot_var, double *thermal_var)
{
    double F, in2;
    qc_status st = receiver_check(rx, 1, &F, &in2);
    if (st == QC_OK)
        st = need("power", power_w, 0);
    if (st != QC_OK)
        return st;
    double m = rx->gain, b = rx->bandwidth;
    double current = rx->responsivity * power_w + rx->dark_current;
    if (shot_var)
        *shot_var = 2.0 * Q_E * current * m * m * F * b;
    if (thermal_var)
        *thermal_var = in2 * b;
    return QC_OK;
}

qc_status qc_dbm_to_watt(double dbm, double *watt)
{
    if (!isfinite(dbm))
        return qc_fail(QC_EINVAL, "'power' must be a finite number of dBm (got %g)",
                       dbm);
    *watt = 1e-3 * pow(10.0, dbm / 10.0);
    return QC_OK;
}

qc_status qc_intensity_levels(double power_dbm, double extinction_ratio,
                              size_t nlevels, double *power_w)
{
    double avg;
    qc_status st = qc_dbm_to_watt(power_dbm, &avg);
    if (st != QC_OK)
        return st;
    if (nlevels < 2)
        return qc_fail(QC_EINVAL, "'levels' must be >= 2 (got %zu)", nlevels);
    if (isnan(extinction_ratio) || !(extinction_ratio > 1.0))
        return qc_fail(QC_EINVAL,
                       "'extinction_ratio' P1/P0 must be > 1 (linear; got %g)",
                       extinction_ratio);
    /* P0 + P1 = 2·avg, P1 = r·P0 */
    double p0 = isinf(extinction_ratio) ? 0.0 : 2.0 * avg / (extinction_ratio + 1.0);
    double p1 = 2.0 * avg - p0;
    for (size_t i = 0; i < nlevels; i++)
        power_w[i] = p0 + (p1 - p0) * (double)i / (double)(nlevels - 1);
    return QC_OK;
}

static qc_status check_powers(const double *power_w, size_t n, double *pmax,
                              double *pmean)
{
    if (n == 0)
        return qc_fail(QC_EINVAL, "no optical power levels given");
    *pmax = 0.0;
    *pmean = 0.0;
    for (size_t i = 0; i < n; i++) {
        if (!isfinite(power_w[i]) || !(power_w[i] >= 0.0))
            return qc_fail(QC_EINVAL, "power level %zu must be >= 0 W (got %g)", i + 1,
                           power_w[i]);
        *pmax = fmax(*pmax, power_w[i]);
        *pmean += power_w[i] / (double)n;
    }
    return QC_OK;
}

static void params_clear(double *params)
{
    for (size_t i = 0; i < QC_MODEL_MAX_PARAMS; i++)
        params[i] = NAN;
}

qc_status qc_frontend_gauss_sd(const qc_receiver *rx, const double *power_w,
                               size_t nlevels, double *params, double *levels)
{
    double F, in2, pmax, pmean;
    qc_status st = receiver_check(rx, 1, &F, &in2);
    if (st == QC_OK)
        st = check_powers(power_w, nlevels, &pmax, &pmean);
    if (st != QC_OK)
        return st;
    double m = rx->gain, b = rx->bandwidth;
    params_clear(params);
    params[0] = sqrt(in2 * b + 2.0 * Q_E * rx->dark_current * m * m * F * b);
    params[1] = 2.0 * Q_E * m * F * b; /* per ampere of mean current M·R·P */
    params[2] = rx->rin * b;           /* RIN: variance RIN·I²·B            */
    for (size_t i = 0; i < nlevels; i++)
        levels[i] = m * rx->responsivity * power_w[i];
    return QC_OK;
}

qc_status qc_frontend_gauss(const qc_receiver *rx, const double *power_w,
                            size_t nlevels, double *params, double *levels)
{
    double F, in2, pmax, pmean;
    qc_status st = receiver_check(rx, 1, &F, &in2);
    if (st == QC_OK)
        st = check_powers(power_w, nlevels, &pmax, &pmean);
    if (st != QC_OK)
        return st;
    double shot, thermal;
    st = qc_receiver_noise(rx, pmean, &shot, &thermal);
    if (st != QC_OK)
        return st;
    double mean_current = rx->gain * rx->responsivity * pmean;
    params_clear(params);
    params[0] = sqrt(shot + thermal + rx->rin * mean_current * mean_current * rx->bandwidth);
    for (size_t i = 0; i < nlevels; i++)
        levels[i] = rx->gain * rx->responsivity * power_w[i];
    return QC_OK;
}

qc_status qc_frontend_apd(const qc_receiver *rx, double slot_time,
                          const double *power_w, size_t nlevels, double *params,
                          double *levels)
{
    double F, in2, pmax, pmean;
    qc_status st = receiver_check(rx, 0, &F, &in2);
    if (st == QC_OK)
        st = need("slot_time", slot_time, 1);
    if (st == QC_OK)
        st = check_powers(power_w, nlevels, &pmax, &pmean);
    if (st != QC_OK)
        return st;
    if (!(pmax > 0.0))
        return qc_fail(QC_EINVAL, "all power levels are 0 W");
    params_clear(params);
    params[0] = rx->responsivity * pmax * slot_time / Q_E; /* signal    */
    params[1] = rx->dark_current * slot_time / Q_E;        /* background */
    params[2] = rx->gain;
    params[3] = rx->ionization_ratio;
    /* charge variance of white noise i_n² (one-sided) over T: i_n²·T/2 */
    params[4] = sqrt(in2 * slot_time / 2.0) / Q_E;
    for (size_t i = 0; i < nlevels; i++)
        levels[i] = power_w[i] / pmax;
    return QC_OK;
}

qc_status qc_photons_per_slot(double power_w, double slot_time, double wavelength,
                              double efficiency, double *photons)
{
    qc_status st = need("power", power_w, 0);
    if (st == QC_OK)
        st = need("slot_time", slot_time, 1);
    if (st == QC_OK)
        st = need("wavelength", wavelength, 1);
    if (st == QC_OK)
        st = need("efficiency", efficiency, 1);
    if (st != QC_OK)
        return st;
    if (efficiency > 1.0)
        return qc_fail(QC_EINVAL, "'efficiency' must be <= 1 (got %g)", efficiency);
    *photons = efficiency * power_w * slot_time / (H_P * C_0 / wavelength);
    return QC_OK;
}

qc_status qc_responsivity_to_efficiency(double responsivity, double wavelength,
                                        double *efficiency)
{
    qc_status st = need("responsivity", responsivity, 1);
    if (st == QC_OK)
        st = need("wavelength", wavelength, 1);
    if (st != QC_OK)
        return st;
    /* R = η·q·λ/(h·c): one electron per detected photon of energy h·c/λ */
    double eta = responsivity * H_P * C_0 / (Q_E * wavelength);
    if (!(eta <= 1.0))
        return qc_fail(QC_EINVAL, "'responsivity' %g A/W at %g nm means a quantum efficiency "
                                  "of %g, above 1 (at most %g A/W there)",
                       responsivity, wavelength * 1e9, eta, Q_E * wavelength / (H_P * C_0));
    *efficiency = eta;
    return QC_OK;
}

qc_status qc_frontend_poisson(const double *power_w, size_t nlevels,
                              double slot_time, double wavelength,
                              double efficiency, double dark_count_rate,
                              double *params, double *levels)
{
    double pmax, pmean, n;
    qc_status st = check_powers(power_w, nlevels, &pmax, &pmean);
    if (st == QC_OK)
        st = need("dark_count_rate", dark_count_rate, 0);
    if (st == QC_OK)
        st = qc_photons_per_slot(pmax, slot_time, wavelength, efficiency, &n);
    if (st != QC_OK)
        return st;
    if (!(pmax > 0.0))
        return qc_fail(QC_EINVAL, "all power levels are 0 W");
    params_clear(params);
    params[0] = n;
    params[1] = dark_count_rate * slot_time;
    for (size_t i = 0; i < nlevels; i++)
        levels[i] = power_w[i] / pmax;
    return QC_OK;
}

qc_status qc_osnr_to_snr(double osnr_db, double ref_bandwidth, double symbol_rate,
                         int polarizations, double *snr)
{
    if (!isfinite(osnr_db))
        return qc_fail(QC_EINVAL, "'osnr' must be a finite number of dB (got %g)",
                       osnr_db);
    if (isnan(ref_bandwidth) || ref_bandwidth <= 0.0)
        ref_bandwidth = QC_OSNR_REF_BANDWIDTH;
    qc_status st = need("ref_bandwidth", ref_bandwidth, 1);
    if (st == QC_OK)
        st = need("symbol_rate", symbol_rate, 1);
    if (st != QC_OK)
        return st;
    if (polarizations != 1 && polarizations != 2)
        return qc_fail(QC_EINVAL, "'polarizations' must be 1 or 2 (got %d)",
                       polarizations);
    *snr = pow(10.0, osnr_db / 10.0) * 2.0 * ref_bandwidth /
           ((double)polarizations * symbol_rate);
    return QC_OK;
}

qc_status qc_frontend_preamp(const double *power_w, size_t nlevels, double slot_time,
                             double wavelength, double gain_db, double nf_db,
                             double optical_bandwidth, int ase_polarizations, double *params,
                             double *levels)
{
    double pmax, pmean;
    qc_status st = check_powers(power_w, nlevels, &pmax, &pmean);
    if (st == QC_OK)
        st = need("slot_time", slot_time, 1);
    if (st == QC_OK)
        st = need("wavelength", wavelength, 1);
    if (st == QC_OK)
        st = need("optical-bandwidth", optical_bandwidth, 1);
    if (st != QC_OK)
        return st;
    if (!isfinite(gain_db) || !(gain_db > 0.0))
        return qc_fail(QC_EINVAL, "'gain-db' of the pre-amplifier must be > 0 dB (got %g)",
                       gain_db);
    if (!isfinite(nf_db))
        return qc_fail(QC_EINVAL, "'nf-db' must be a finite number of dB (got %g)", nf_db);
    if (ase_polarizations != 1 && ase_polarizations != 2)
        return qc_fail(QC_EINVAL, "'ase-polarizations' must be 1 or 2 (got %d)",
                       ase_polarizations);
    const double g = pow(10.0, gain_db / 10.0), nf = pow(10.0, nf_db / 10.0);
    if (nf < (2.0 - 1.0 / g) * (1.0 - 1e-12))
        return qc_fail(QC_EINVAL, "'nf-db' %g dB is below the quantum limit %.4g dB of a "
                                  "phase-insensitive amplifier of %g dB gain (NF >= 2 - 1/G)",
                       nf_db, 10.0 * log10(2.0 - 1.0 / g), gain_db);
    if (!(pmax > 0.0))
        return qc_fail(QC_EINVAL, "all power levels are 0 W");
    double modes = optical_bandwidth * slot_time * ase_polarizations;
    if (!(modes >= 1.0) || modes > 1e6)
        return qc_fail(QC_EINVAL, "optical bandwidth x slot time x polarizations = %g modes; "
                                  "model 'preamp' needs 1 to 1e6 (the filter must pass at "
                                  "least the signal's own bandwidth, about 1/T)",
                       modes);
    /* N_0 = n_sp(G − 1)hν = (NF·G − 1)hν/2 */
    const double n0 = (nf * g - 1.0) * 0.5 * H_P * C_0 / wavelength;
    params_clear(params);
    params[0] = modes;
    for (size_t i = 0; i < nlevels; i++)
        levels[i] = g * power_w[i] * slot_time / n0;
    return QC_OK;
}
