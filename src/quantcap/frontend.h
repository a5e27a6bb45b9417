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
    double rin;              /* transmitter relative intensity noise, 1/Hz
                                (linear, ≥ 0), default 0: adds the
                                variance RIN·I²·B of a photocurrent I      */
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
 *  gauss-sd: sigma0² = i_n²B + 2q·I_d·M²F·B, a = 2q·M·F·B, b = RIN·B.
 *  gauss:    sigma² = thermal + shot + RIN·I²·B at the mean power of the
 *            levels (I = M·R·P_mean).
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

/* Parameters of `preamp` for an optical amplifier (gain G, noise figure
 * NF, both dB) followed by an optical filter of bandwidth B_o (Hz) and
 * integrate-and-dump direct detection over a slot T (s): modes
 * m = B_o·T·p (p = ase_polarizations, 1 behind a polarizer, else 2), and
 * levels x_i = G·P_i·T / N_0 in units of the ASE energy per mode
 * N_0 = n_sp·(G − 1)·h·ν, n_sp = (NF·G − 1)/(2(G − 1)). QC_EINVAL naming
 * the argument (a noise figure below 2 − 1/G, fewer than 1 mode, ...);
 * on failure params and levels are unchanged. */
QC_API qc_status qc_frontend_preamp(const double *power_w, size_t nlevels, double slot_time,
                                    double wavelength, double gain_db, double nf_db,
                                    double optical_bandwidth, int ase_polarizations,
                                    double *params, double *levels);

#define QC_OSNR_REF_BANDWIDTH 12.5e9 /* Hz: 0.1 nm at 1550 nm */

/* Electrical SNR from OSNR: SNR = OSNR·2·B_ref/(p·R_s) (Essiambre et al.,
 * J. Lightw. Technol. 28(4), 2010). ref_bandwidth ≤ 0 or NaN: 12.5 GHz.
 * polarizations 1 or 2. QC_EINVAL naming 'osnr', the symbol rate or
 * 'polarizations'; on failure *snr is unchanged. */
QC_API qc_status qc_osnr_to_snr(double osnr_db, double ref_bandwidth,
                         double symbol_rate, int polarizations,
                         double *snr);

/* ---- unamplified intensity links (src/frontend/intensity_link.c) ---- */

/* Launch power, fibre and the losses of a point-to-point intensity link. */
typedef struct {
    double launch_dbm;        /* average launch power, dBm (required)      */
    double length_km;         /* fibre length, km (≥ 0), default 0         */
    double loss_db_km;        /* fibre attenuation, dB/km (≥ 0), default 0.2 */
    double connector_loss_db; /* all connectors together, dB (≥ 0), default 0 */
    double splice_loss_db;    /* all splices together, dB (≥ 0), default 0 */
    double penalty_db;        /* power penalty budget (dispersion, ageing,
                                 margin), dB (≥ 0), default 0             */
} qc_intensity_link;

/* What the intensity link delivers, for reports. */
typedef struct {
    double received_dbm;      /* average received power, dBm               */
    double loss_db;           /* all losses and penalties together, dB     */
} qc_intensity_link_result;

#define QC_LINK_MAX_LOSS_DB 100.0 /* largest loss accepted for a link */

/* Defaults as listed above (launch_dbm NaN). Never fails. */
QC_API void qc_intensity_link_default(qc_intensity_link *link);

/* Average received power = launch − α·L − connectors − splices − penalty
 * (dBm), and the total of those losses (dB). QC_EINVAL naming the field
 * out of range, or a total loss above QC_LINK_MAX_LOSS_DB; on failure
 * both outputs are unchanged. */
QC_API qc_status qc_intensity_link_received(const qc_intensity_link *link,
                                            double *received_dbm, double *loss_db);

/* ---- free-space links (src/frontend/free_space.c) ------------------ */

typedef struct {
    double transmit_dbm;        /* transmit power, dBm (key launch-dbm)    */
    double range_km;            /* R, km (> 0)                              */
    double wavelength_nm;       /* λ, nm (> 0)                              */
    double tx_aperture_m;       /* D_t, m (> 0)                             */
    double rx_aperture_m;       /* D_r, m (> 0)                             */
    double pointing_loss_db;    /* ≥ 0, default 0                           */
    double atmosphere_loss_db;  /* ≥ 0, default 0                           */
    double background_radiance; /* L_λ, W/(m²·sr·nm) (≥ 0), default 0      */
    double field_of_view_mrad;  /* full angle θ, mrad (with a radiance)     */
    double filter_nm;           /* optical filter Δλ, nm (with a radiance)  */
} qc_free_space_link;

typedef struct {
    double geometric_loss_db;   /* −20·log10(π·D_t·D_r/(4·λ·R))             */
    double loss_db;             /* geometric + pointing + atmosphere        */
    double received_dbm;        /* transmit power − loss                    */
    double background_w;        /* background power collected, W           */
} qc_free_space_result;

/* Defaults: pointing and atmosphere 0 dB, no background; the rest NaN
 * (to be given). Never fails. */
QC_API void qc_free_space_link_default(qc_free_space_link *link);

/* The range equation in the far field (docs/models.md, "Free-space
 * link"). QC_EINVAL naming the field, or a range in the near field (the
 * receive aperture would collect more than is sent); on failure *res is
 * unchanged. */
QC_API qc_status qc_free_space_link_eval(const qc_free_space_link *link,
                                         qc_free_space_result *res);

/* ---- amplified coherent fibre links (src/frontend/fibre_link.c) ----- */

/* A chain of `spans` fibre spans, each followed by an optical amplifier,
 * carrying `channels` WDM channels of `symbol_rate` baud spaced by
 * `spacing_ghz`; the channel of interest is the centre one. */
typedef struct {
    double spans;         /* N_s ≥ 1 (fractional: the continuous
                             interpolation require searches on)          */
    double span_km;       /* span length, km (> 0), required             */
    double loss_db_km;    /* fibre attenuation, dB/km (> 0), default 0.2 */
    double nf_db;         /* amplifier noise figure, dB, required        */
    double gain_db;       /* amplifier gain, dB; NaN: the span loss      */
    double launch_dbm;    /* launch power per channel, dBm; NaN: the
                             optimum launch power                        */
    double wavelength_nm; /* default 1550                                */
    double symbol_rate;   /* R_s, baud (> 0), required                   */
    int polarizations;    /* 1 or 2, default 2                            */
    double dispersion;    /* D, ps/(nm·km), default 17 (≠ 0)              */
    double gamma;         /* nonlinear coefficient, 1/(W·km), default 1.3;
                             0: a linear link (no NLI)                   */
    double channels;      /* whole number ≥ 1, default 1                  */
    double spacing_ghz;   /* channel spacing, GHz (≥ R_s/1e9); required
                             with more than one channel                  */
    double coherence;     /* ε in N_s^(1+ε), [0, 1), default 0           */
    double transceiver_snr_db; /* transceiver SNR limit, dB; +inf: none   */
} qc_fibre_link;

/* What the link gives the receiver: every power per channel, in the
 * channel's bandwidth R_s (both polarizations for p = 2). */
typedef struct {
    double span_loss_db;       /* fibre loss of one span                   */
    double gain_db;            /* amplifier gain used                      */
    double launch_dbm;         /* launch power per channel used            */
    double ase_w;              /* accumulated ASE power in R_s at the
                                  receiver, referred to the launch power  */
    double nli_w;              /* accumulated NLI power, same reference    */
    double eta;                /* P_NLI = eta·P³ (1/W²)                    */
    double osnr_db;            /* signal over ASE in 0.1 nm (12.5 GHz)     */
    double snr_ase_db;         /* from the OSNR (qc_osnr_to_snr)           */
    double snr_nli_db;         /* P/P_NLI; +inf for a linear link          */
    double snr_trx_db;         /* the transceiver limit (+inf: none)       */
    double snr_eff_db;         /* 1/(1/SNR_ASE + 1/SNR_NLI + 1/SNR_trx)    */
    double optimum_launch_dbm; /* where SNR_eff peaks; NaN: no NLI        */
    double optimum_snr_db;     /* SNR_eff there; NaN: no NLI               */
} qc_fibre_link_result;

/* Defaults as listed above (spans 1; span_km, nf_db, symbol_rate NaN:
 * to be given). Overwrites every field; never fails. */
QC_API void qc_fibre_link_default(qc_fibre_link *link);

/* ASE power of one amplifier in an optical bandwidth B, both
 * polarizations: P = NF·G·h·ν·B (high-gain form; Desurvire, Erbium-Doped
 * Fiber Amplifiers, Wiley 1994). QC_EINVAL naming the argument; on
 * failure *watt is unchanged. */
QC_API qc_status qc_ase_power(double nf_db, double gain_db, double wavelength_nm,
                              double bandwidth_hz, double *watt);

/* NLI coefficient of one span for the centre channel by the closed form
 * of the GN model (Poggiolini, J. Lightw. Technol. 30(24), 2012):
 * P_NLI = eta·P³, P the launch power per channel, the NLI power spectral
 * density at the channel centre times R_s. Dual polarization. Uses
 * span_km, loss_db_km, dispersion, gamma, wavelength_nm, symbol_rate,
 * channels, spacing_ghz. QC_EINVAL naming the field; on failure *eta is
 * unchanged. */
QC_API qc_status qc_gn_eta(const qc_fibre_link *link, double *eta);

/* The link's OSNR, SNRs and optimum launch power (docs/models.md,
 * "Amplified fibre link"). QC_EINVAL naming the field out of range or the
 * contradiction (gain below the loss with coherent accumulation, a noise
 * figure below the quantum limit 2 − 1/G, ...); on failure *res is
 * unchanged. */
QC_API qc_status qc_fibre_link_eval(const qc_fibre_link *link, qc_fibre_link_result *res);

#ifdef __cplusplus
}
#endif

#endif /* QUANTCAP_FRONTEND_H */
