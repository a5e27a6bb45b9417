/* quantcap/frontend.h — physical receiver front end: photocurrent, shot,
 * thermal and APD noise, OSNR, photons per slot (SI units). Part of the
 * public interface of libquantcap (include <quantcap.h> for all of it).
 * SPDX-License-Identifier: GPL-3.0-or-later */
#ifndef QUANTCAP_FRONTEND_H
#define QUANTCAP_FRONTEND_H

#include <stddef.h>

#include "quantcap/model.h"

#ifdef __cplusplus
extern "C" {
#endif

/* Receiver of intensity-modulated light: PIN (gain 1) or APD. */
typedef struct {
    double responsivity;     /* R, A/W (> 0), required                     */
    double bandwidth;        /* electrical noise bandwidth B, Hz (> 0)     */
    double thermal_density;  /* input-referred noise current, pA/√Hz (≥ 0);
                                NaN: 4kT/R_L from the next two fields      */
    double load_resistance;  /* R_L, ohm (> 0), used if thermal_density NaN */
    double temperature;      /* T, kelvin (> 0), default 290                */
    double dark_current;     /* primary dark current I_d, A (≥ 0), default 0 */
    double gain;             /* APD mean gain M (≥ 1), default 1 (PIN)     */
    double ionization_ratio; /* k in [0, 1], default 0                     */
} qc_receiver;

/* Defaults: responsivity, bandwidth, thermal_density, load_resistance
 * NaN (to be given), temperature 290 K, no dark current, gain 1, k 0.
 * Overwrites every field; never fails. */
QC_API void qc_receiver_default(qc_receiver *rx);

/* Excess noise factor F = kM + (1 − k)(2 − 1/M) (McIntyre 1966).
 * QC_EINVAL naming 'apd-gain' (M < 1 or not finite) or 'apd-k' (outside
 * [0, 1]); on failure *factor is unchanged. */
QC_API qc_status qc_excess_noise_factor(double gain, double k, double *factor);

/* Noise variances in A² over the receiver bandwidth at optical power
 * `power_w` (W): shot = 2q(R·P + I_d)M²F·B, thermal = i_n²·B with
 * i_n² = thermal_density² or 4kT/R_L. Either output may be NULL.
 * QC_EINVAL naming the receiver field or the power that is missing or
 * out of range; on failure both outputs are unchanged. */
QC_API qc_status qc_receiver_noise(const qc_receiver *rx, double power_w,
                            double *shot_var, double *thermal_var);

/* dBm → W. QC_EINVAL when not finite; on failure *watt is unchanged. */
QC_API qc_status qc_dbm_to_watt(double dbm, double *watt);

/* Optical powers (W) of `nlevels` ≥ 2 equally spaced intensity levels
 * from P0 to P1 with average (P0 + P1)/2 = 10^(dBm/10) mW and
 * extinction ratio P1/P0 = `extinction_ratio` (linear, > 1, may be +inf),
 * written into power_w. QC_EINVAL naming the power, the number of levels
 * or the extinction ratio; on failure power_w is unchanged. */
QC_API qc_status qc_intensity_levels(double power_dbm, double extinction_ratio,
                              size_t nlevels, double *power_w);

/* Parameters (in the order of the model type's params, array of
 * QC_MODEL_MAX_PARAMS) and levels for the Gaussian models. Levels are the
 * mean output currents M·R·P_i (A).
 *  gauss-sd: sigma0² = i_n²B + 2q·I_d·M²F·B, a = 2q·M·F·B, b = 0.
 *  gauss:    sigma² = thermal + shot at the mean power of the levels.
 * QC_EINVAL naming the receiver field or the power level at fault; on
 * failure params and levels are unchanged. Unused entries of params are
 * NaN (the model's default). */
QC_API qc_status qc_frontend_gauss_sd(const qc_receiver *rx, const double *power_w,
                               size_t nlevels, double *params, double *levels);
QC_API qc_status qc_frontend_gauss(const qc_receiver *rx, const double *power_w,
                            size_t nlevels, double *params, double *levels);

/* Parameters of `apd` (and `apd-gauss`) for an integrate-and-dump
 * receiver over a slot of `slot_time` s (noise bandwidth 1/(2T); the
 * receiver's `bandwidth` is not used): signal = R·P_max·T/q primaries,
 * background = I_d·T/q, sigma-th = i_n·sqrt(T/2)/q electrons; levels
 * P_i/P_max. QC_EINVAL naming the receiver field, the slot time or the
 * power level at fault (all powers 0 W included); on failure params and
 * levels are unchanged. */
QC_API qc_status qc_frontend_apd(const qc_receiver *rx, double slot_time,
                          const double *power_w, size_t nlevels,
                          double *params, double *levels);

/* Mean detected photons in a slot: n = η·P·T/(h·c/λ). QC_EINVAL naming
 * the argument out of range (power < 0, slot time or wavelength not > 0,
 * efficiency outside (0, 1]); on failure *photons is unchanged. */
QC_API qc_status qc_photons_per_slot(double power_w, double slot_time,
                              double wavelength, double efficiency,
                              double *photons);

/* Quantum efficiency η = R·h·c/(q·λ) of a photodiode of responsivity R
 * (A/W) at wavelength λ (m); QC_EINVAL when an argument is not a positive
 * finite number or η would exceed 1; on failure *efficiency is
 * unchanged. */
QC_API qc_status qc_responsivity_to_efficiency(double responsivity, double wavelength,
                                        double *efficiency);

/* Parameters of `poisson`: signal = photons per slot at max(P_i),
 * background = dark_count_rate·T; levels P_i/P_max. QC_EINVAL naming the
 * argument or power level at fault (all powers 0 W included); on failure
 * params and levels are unchanged. */
QC_API qc_status qc_frontend_poisson(const double *power_w, size_t nlevels,
                              double slot_time, double wavelength,
                              double efficiency, double dark_count_rate,
                              double *params, double *levels);

#define QC_OSNR_REF_BANDWIDTH 12.5e9 /* Hz: 0.1 nm at 1550 nm */

/* Electrical SNR from OSNR: SNR = OSNR·2·B_ref/(p·R_s) (Essiambre et al.,
 * J. Lightw. Technol. 28(4), 2010). ref_bandwidth ≤ 0 or NaN: 12.5 GHz.
 * polarizations 1 or 2. QC_EINVAL naming 'osnr', the symbol rate or
 * 'polarizations'; on failure *snr is unchanged. */
QC_API qc_status qc_osnr_to_snr(double osnr_db, double ref_bandwidth,
                         double symbol_rate, int polarizations,
                         double *snr);

#ifdef __cplusplus
}
#endif

#endif /* QUANTCAP_FRONTEND_H */
