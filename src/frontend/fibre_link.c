/* fibre_link.c — an amplified coherent fibre link: N spans, each made up
 * by an optical amplifier, from the launch power per channel to the SNR
 * at the coherent receiver.
 *  - ASE of one amplifier in an optical bandwidth B, both polarizations:
 *    P_ASE = NF·G·h·ν·B, the high-gain form of 2·n_sp·(G − 1)·h·ν·B
 *    (Desurvire, Erbium-Doped Fiber Amplifiers, Wiley 1994, ch. 2); the
 *    noise figure of a phase-insensitive amplifier is at least 2 − 1/G
 *    (Caves, Phys. Rev. D 26(8), 1982). The OSNR is the signal over the
 *    ASE in 0.1 nm (12.5 GHz), and the SNR follows by qc_osnr_to_snr.
 *  - Nonlinear interference by the Gaussian-noise model in closed form
 *    (Poggiolini, "The GN model of non-linear propagation in uncompensated
 *    coherent optical systems", J. Lightw. Technol. 30(24), 2012, eq. 15
 *    and its non-Nyquist form with N_ch^(2R_s/Δf)):
 *      G_NLI = (8/27)·γ²·G_ch³·L_eff²·asinh((π²/2)|β₂|L_eff,a·R_s²·
 *              N_ch^(2R_s/Δf)) / (π|β₂|L_eff,a),
 *    G_ch = P/R_s, L_eff = (1 − e^(−α L))/α, L_eff,a = 1/α (α the power
 *    attenuation in 1/m), β₂ = −D·λ²/(2πc); P_NLI = G_NLI·R_s = η₁·P³.
 *    Spans add incoherently (η = N_s·η₁), or as N_s^(1+ε)·η₁ with the
 *    coherent-accumulation exponent ε (same paper, sec. VII).
 *  - SNR = P/(P_ASE + η·P³) peaks at P_opt = (P_ASE/(2η))^(1/3), where
 *    P_NLI = P_ASE/2 and the SNR is 2/3 of P/P_ASE (same paper, sec. VIII).
 *  - A transceiver SNR limit adds its noise: 1/SNR = 1/SNR_ASE +
 *    1/SNR_NLI + 1/SNR_trx.
 * With a gain G that differs from the span loss (net gain g = G·A per
 * span, A the span's transmission) the launch power into span k is
 * P·g^(k−1); referred to the launch, the ASE sums to P_ASE,1·Σ g^(−k) and
 * the NLI to η₁·P³·Σ g^(2(k−1)) (geometric sums, k = 1 … N_s). */
#include "core/internal.h"
#include "quantcap/frontend.h"

#include <math.h>

#include <gsl/gsl_const_mksa.h>
#include <gsl/gsl_math.h>

#define H_P GSL_CONST_MKSA_PLANCKS_CONSTANT_H
#define C_0 GSL_CONST_MKSA_SPEED_OF_LIGHT

#define MAX_GAIN_DB 50.0  /* more than one optical amplifier makes up
                             (EDFA gains stay below ~45 dB; common practice) */
#define MAX_DRIFT_DB 20.0 /* channel power drift over the link allowed when
                             the gain differs from the span loss            */
#define MAX_SPANS 1e4     /* 10 000 spans: beyond any terrestrial or
                             submarine link                                 */

void qc_fibre_link_default(qc_fibre_link *l)
{
    l->spans = 1.0;
    l->span_km = NAN;
    l->loss_db_km = 0.2;   /* standard single-mode fibre at 1550 nm (common practice) */
    l->nf_db = NAN;
    l->gain_db = NAN;
    l->launch_dbm = NAN;
    l->wavelength_nm = 1550.0;
    l->symbol_rate = NAN;
    l->polarizations = 2;
    l->dispersion = 17.0;  /* standard single-mode fibre (common practice) */
    l->gamma = 1.3;        /* standard single-mode fibre (common practice) */
    l->channels = 1.0;
    l->spacing_ghz = NAN;
    l->coherence = 0.0;
    l->transceiver_snr_db = INFINITY;
}

/* v finite and > lo (open) or ≥ lo. */
static qc_status need(const char *name, double v, double lo, int open, const char *unit)
{
    if (isnan(v))
        return qc_fail(QC_EINVAL, "'%s' is required for the amplified fibre link", name);
    if (!isfinite(v) || (open ? !(v > lo) : !(v >= lo)))
        return qc_fail(QC_EINVAL, "'%s' must be %s %g%s and finite (got %g)", name,
                       open ? ">" : ">=", lo, unit, v);
    return QC_OK;
}

qc_status qc_ase_power(double nf_db, double gain_db, double wavelength_nm,
                       double bandwidth_hz, double *watt)
{
    if (!isfinite(nf_db))
        return qc_fail(QC_EINVAL, "'nf-db' must be a finite number of dB (got %g)", nf_db);
    if (!isfinite(gain_db))
        return qc_fail(QC_EINVAL, "'gain-db' must be a finite number of dB (got %g)", gain_db);
    qc_status st = need("wavelength-nm", wavelength_nm, 0.0, 1, " nm");
    if (st == QC_OK)
        st = need("bandwidth", bandwidth_hz, 0.0, 1, " Hz");
    if (st != QC_OK)
        return st;
    double hnu = H_P * C_0 / (wavelength_nm * 1e-9);
    *watt = pow(10.0, nf_db / 10.0) * pow(10.0, gain_db / 10.0) * hnu * bandwidth_hz;
    return QC_OK;
}

/* Checks of the fields the NLI closed form uses. */
static qc_status check_fibre(const qc_fibre_link *l)
{
    qc_status st;
    if ((st = need("span-km", l->span_km, 0.0, 1, " km")) != QC_OK ||
        (st = need("loss-db-km", l->loss_db_km, 0.0, 1, " dB/km")) != QC_OK ||
        (st = need("wavelength-nm", l->wavelength_nm, 0.0, 1, " nm")) != QC_OK ||
        (st = need("symbol-rate", l->symbol_rate, 0.0, 1, " baud")) != QC_OK ||
        (st = need("gamma", l->gamma, 0.0, 0, " 1/(W km)")) != QC_OK ||
        (st = need("channels", l->channels, 1.0, 0, "")) != QC_OK)
        return st;
    if (!isfinite(l->dispersion) || l->dispersion == 0.0)
        return qc_fail(QC_EINVAL, "'dispersion' must be a finite, nonzero number of "
                                  "ps/(nm km) (got %g): the GN model holds for uncompensated, "
                                  "dispersive fibre",
                       l->dispersion);
    if (l->channels != floor(l->channels) || l->channels > 10000.0)
        return qc_fail(QC_EINVAL, "'channels' must be a whole number from 1 to 10000 (got %g)",
                       l->channels);
    if (l->channels > 1.0) {
        if (isnan(l->spacing_ghz))
            return qc_fail(QC_EINVAL, "'channel-spacing-ghz' is required with %g channels",
                           l->channels);
        if ((st = need("channel-spacing-ghz", l->spacing_ghz, 0.0, 1, " GHz")) != QC_OK)
            return st;
        /* 1e-9 relative: a spacing written as the symbol rate in GHz */
        if (l->spacing_ghz * 1e9 < l->symbol_rate * (1.0 - 1e-9))
            return qc_fail(QC_EINVAL, "'channel-spacing-ghz' %g GHz is below the symbol rate "
                                      "%g Gbaud: the channels would overlap",
                           l->spacing_ghz, l->symbol_rate * 1e-9);
    }
    return QC_OK;
}

qc_status qc_gn_eta(const qc_fibre_link *l, double *eta)
{
    if (!l)
        return qc_fail(QC_EINVAL, "no fibre link given");
    qc_status st = check_fibre(l);
    if (st != QC_OK)
        return st;
    const double lambda = l->wavelength_nm * 1e-9;
    const double alpha = l->loss_db_km * M_LN10 / 10.0 * 1e-3; /* power, 1/m */
    const double len = l->span_km * 1e3;
    const double leff = -expm1(-alpha * len) / alpha;
    const double leffa = 1.0 / alpha;
    const double beta2 = fabs(l->dispersion * 1e-6 * lambda * lambda / (2.0 * M_PI * C_0));
    const double gam = l->gamma * 1e-3; /* 1/(W m) */
    const double rs = l->symbol_rate;
    const double df = l->channels > 1.0 ? l->spacing_ghz * 1e9 : rs;
    const double arg = 0.5 * M_PI * M_PI * beta2 * leffa * rs * rs *
                       pow(l->channels, 2.0 * rs / df);
    *eta = (8.0 / 27.0) * gam * gam * leff * leff * asinh(arg) /
           (M_PI * beta2 * leffa * rs * rs);
    return QC_OK;
}

/* Σ_{k=1}^{n} r^(k−1) for real n ≥ 1 (n for r = 1). */
static double geometric(double r, double n)
{
    if (fabs(r - 1.0) < 1e-12)
        return n;
    return expm1(n * log(r)) / (r - 1.0);
}

static double to_db(double x) { return 10.0 * log10(x); }

qc_status qc_fibre_link_eval(const qc_fibre_link *l, qc_fibre_link_result *res)
{
    if (!l)
        return qc_fail(QC_EINVAL, "no fibre link given");
    qc_status st = check_fibre(l);
    if (st == QC_OK)
        st = need("spans", l->spans, 1.0, 0, "");
    if (st == QC_OK)
        st = need("nf-db", l->nf_db, -INFINITY, 1, " dB");
    if (st != QC_OK)
        return st;
    if (l->spans > MAX_SPANS)
        return qc_fail(QC_EINVAL, "'spans' %g is more than %g", l->spans, MAX_SPANS);
    if (l->polarizations != 1 && l->polarizations != 2)
        return qc_fail(QC_EINVAL, "'polarizations' must be 1 or 2 (got %d)", l->polarizations);
    if (l->polarizations == 1 && l->gamma > 0.0)
        return qc_fail(QC_EINVAL, "the GN model's closed form is for dual-polarization "
                                  "signals: with 'polarizations' 1 give 'gamma' 0 (a linear "
                                  "link)");
    if (!(l->coherence >= 0.0 && l->coherence < 1.0))
        return qc_fail(QC_EINVAL, "'coherence' (the exponent epsilon of N^(1+epsilon)) must "
                                  "be in [0, 1) (got %g)",
                       l->coherence);
    if (isnan(l->transceiver_snr_db) || l->transceiver_snr_db == -INFINITY)
        return qc_fail(QC_EINVAL, "'transceiver-snr-db' must be a number of dB (got %g)",
                       l->transceiver_snr_db);
    const double loss = l->loss_db_km * l->span_km;
    if (loss > MAX_GAIN_DB)
        return qc_fail(QC_EINVAL, "a span of %g km at %g dB/km loses %g dB, more than the "
                                  "%g dB of gain one optical amplifier makes up",
                       l->span_km, l->loss_db_km, loss, MAX_GAIN_DB);
    const double gain = isnan(l->gain_db) ? loss : l->gain_db;
    if (!isfinite(gain) || !(gain > 0.0) || gain > MAX_GAIN_DB)
        return qc_fail(QC_EINVAL, "'gain-db' must be > 0 and at most %g dB (got %g)",
                       MAX_GAIN_DB, gain);
    const double g_lin = pow(10.0, gain / 10.0);
    const double nf_min = 2.0 - 1.0 / g_lin;
    if (pow(10.0, l->nf_db / 10.0) < nf_min * (1.0 - 1e-12))
        return qc_fail(QC_EINVAL, "'nf-db' %g dB is below the quantum limit %.4g dB of a "
                                  "phase-insensitive amplifier of %g dB gain "
                                  "(NF >= 2 - 1/G)",
                       l->nf_db, to_db(nf_min), gain);
    const double drift = gain - loss; /* dB per span */
    if (fabs(drift) * (l->spans - 1.0) > MAX_DRIFT_DB)
        return qc_fail(QC_EINVAL, "'gain-db' %g dB against a span loss of %g dB changes the "
                                  "channel power by %g dB per span, %g dB over %g spans: "
                                  "contradictory amplifier settings (leave 'gain-db' out to "
                                  "make up the span loss exactly)",
                       gain, loss, drift, drift * (l->spans - 1.0), l->spans);
    if (l->coherence > 0.0 && fabs(drift) > 1e-9)
        return qc_fail(QC_EINVAL, "'coherence' needs identical transparent spans: 'gain-db' "
                                  "%g dB does not make up the span loss of %g dB",
                       gain, loss);

    /* ASE in the channel bandwidth R_s, referred to the launch */
    double ase1, eta1 = 0.0;
    if ((st = qc_ase_power(l->nf_db, gain, l->wavelength_nm, l->symbol_rate, &ase1)) != QC_OK)
        return st;
    const double g_net = pow(10.0, drift / 10.0);
    const double ase = ase1 / g_net * geometric(1.0 / g_net, l->spans);
    double eta = 0.0;
    if (l->gamma > 0.0) {
        if ((st = qc_gn_eta(l, &eta1)) != QC_OK)
            return st;
        eta = l->coherence > 0.0 ? eta1 * pow(l->spans, 1.0 + l->coherence)
                                 : eta1 * geometric(g_net * g_net, l->spans);
    }
    double p_opt = eta > 0.0 ? cbrt(ase / (2.0 * eta)) : NAN;
    double p;
    if (isnan(l->launch_dbm)) {
        if (!(eta > 0.0))
            return qc_fail(QC_EINVAL, "'launch-dbm' is required for a linear link ('gamma' "
                                      "0 has no optimum launch power)");
        p = p_opt;
    } else if (!isfinite(l->launch_dbm)) {
        return qc_fail(QC_EINVAL, "'launch-dbm' must be a finite number of dBm (got %g)",
                       l->launch_dbm);
    } else {
        p = 1e-3 * pow(10.0, l->launch_dbm / 10.0);
    }
    /* OSNR in 0.1 nm, then the SNR by the existing OSNR → SNR step */
    const double osnr = p / (ase * QC_OSNR_REF_BANDWIDTH / l->symbol_rate);
    double snr_ase;
    if ((st = qc_osnr_to_snr(to_db(osnr), QC_OSNR_REF_BANDWIDTH, l->symbol_rate,
                             l->polarizations, &snr_ase)) != QC_OK)
        return st;
    const double nli = eta * p * p * p;
    const double inv_trx = pow(10.0, -l->transceiver_snr_db / 10.0); /* 0 for +inf */
    const double inv_eff = 1.0 / snr_ase + nli / p + inv_trx;
    const double snr_eff = 1.0 / inv_eff;
    if (!(snr_eff > 0.0) || !isfinite(snr_eff) || !isfinite(osnr) || !(osnr > 0.0))
        return qc_fail(QC_EINVAL, "the link's SNR at %g dBm launch power is outside what "
                                  "doubles hold",
                       to_db(p / 1e-3));
    res->span_loss_db = loss;
    res->gain_db = gain;
    res->launch_dbm = to_db(p / 1e-3);
    /* ASE as the receiver sees it in R_s: P/SNR_ASE (one polarization's
     * share for p = 1) */
    res->ase_w = p / snr_ase;
    res->nli_w = nli;
    res->eta = eta;
    res->osnr_db = to_db(osnr);
    res->snr_ase_db = to_db(snr_ase);
    res->snr_nli_db = nli > 0.0 ? to_db(p / nli) : INFINITY;
    res->snr_trx_db = l->transceiver_snr_db;
    res->snr_eff_db = to_db(snr_eff);
    if (eta > 0.0) {
        double inv_opt = ase / p_opt + eta * p_opt * p_opt + inv_trx;
        res->optimum_launch_dbm = to_db(p_opt / 1e-3);
        res->optimum_snr_db = -to_db(inv_opt);
    } else {
        res->optimum_launch_dbm = res->optimum_snr_db = NAN;
    }
    return QC_OK;
}
