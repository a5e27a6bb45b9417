/* settings_build.c — from settings to a model and a design request: the
 * levels (a list, a named alphabet, a level grid, or a measured table;
 * src/alphabet), the input constraints, the model
 * parameters (given directly, from an SNR or OSNR, or from a physical
 * receiver through the front end), the quantizer and the objective. */
#include "study/settings_internal.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

/* Keys of the physical intensity receiver and of photon counting. */
static const char *const frontend_keys[] = {
    "received-dbm", "extinction-db", "responsivity", "bandwidth", "thermal-density",
    "load-resistance", "temperature", "dark-current", "apd-gain", "apd-k", "slot-time",
    "wavelength-nm", "efficiency", "dark-count-rate", "peak-dbm", "rin-db-hz",
    "optical-bandwidth", "ase-polarizations", "range-km", NULL,
};

/* Keys of the unamplified intensity link in front of the receiver. */
static const char *const intensity_link_keys[] = {
    "launch-dbm", "length-km", "loss-db-km", "connector-loss-db", "splice-loss-db",
    "penalty-db", NULL,
};

static const char *first_intensity_link_key(const qc_settings *s)
{
    for (size_t i = 0; intensity_link_keys[i]; i++)
        if (qc_settings_get(s, intensity_link_keys[i]))
            return intensity_link_keys[i];
    return NULL;
}

static int is_frontend_key(const char *key)
{
    for (size_t i = 0; frontend_keys[i]; i++)
        if (strcmp(frontend_keys[i], key) == 0)
            return 1;
    return 0;
}

/* The first front-end key given that is not also a parameter of the
 * model (apd-gain and apd-k are parameters of the APD models: alone they
 * set the parameters, with a received power they describe the receiver). */
static const char *first_frontend_key(const qc_settings *s, const qc_model_type *type)
{
    for (size_t i = 0; frontend_keys[i]; i++)
        if (qc_settings_get(s, frontend_keys[i]) &&
            qc_model_param_index(type, frontend_keys[i]) < 0)
            return frontend_keys[i];
    return NULL;
}

/* Does the model type list `key` among the settings keys it takes? */
static int declares(const qc_model_type *type, const char *key)
{
    for (size_t i = 0; type->keys && type->keys[i]; i++)
        if (strcmp(type->keys[i], key) == 0)
            return 1;
    return 0;
}

/* Every model-specific key given (one that some model type lists) must be
 * listed by the chosen type or be one of its parameters. */
static qc_status check_keys_apply(const qc_settings *s, const qc_model_type *type)
{
    const qc_model_type *const *types = qc_model_types();
    for (size_t i = 0; i < s->n; i++) {
        const char *key = s->key[i];
        if (declares(type, key) || qc_model_param_index(type, key) >= 0)
            continue;
        for (size_t t = 0; types[t]; t++) {
            if (!declares(types[t], key))
                continue;
            char takes[512] = "";
            for (size_t j = 0; type->keys && type->keys[j]; j++) {
                strncat(takes, j ? ", " : "", sizeof takes - strlen(takes) - 1);
                strncat(takes, type->keys[j], sizeof takes - strlen(takes) - 1);
            }
            return qc_fail(QC_EINVAL, "'%s' does not apply to model '%s' (%s%s; see "
                                      "'quantcap models %s')",
                           key, type->name,
                           takes[0] ? "besides its parameters it takes: "
                                    : "it takes its parameters only",
                           takes, type->name);
        }
    }
    return QC_OK;
}

static qc_status required(const qc_settings *s, const char *key, const char *why, double *out)
{
    if (!qc_settings_get(s, key))
        return qc_fail(QC_EINVAL, "'%s' is required %s", key, why);
    return qc_settings_number(s, key, NAN, out);
}

static qc_status parse_list_key(const qc_settings *s, const char *key, double **out, size_t *n)
{
    const char *v = qc_settings_get(s, key);
    *out = NULL;
    *n = 0;
    if (!v)
        return QC_OK;
    qc_status st = qc_parse_list(v, out, n);
    return st == QC_OK ? st : qc_fail(st, "%s: %s", key, qc_last_error());
}

/* The physical receiver of the settings; absent keys keep the defaults. */
static qc_status receiver_of(const qc_settings *s, qc_receiver *rx)
{
    qc_receiver_default(rx);
    double pa_per_rthz = NAN;
    qc_status st;
    if ((st = qc_settings_number(s, "responsivity", rx->responsivity, &rx->responsivity)) != QC_OK ||
        (st = qc_settings_number(s, "bandwidth", rx->bandwidth, &rx->bandwidth)) != QC_OK ||
        (st = qc_settings_number(s, "thermal-density", NAN, &pa_per_rthz)) != QC_OK ||
        (st = qc_settings_number(s, "load-resistance", rx->load_resistance, &rx->load_resistance)) != QC_OK ||
        (st = qc_settings_number(s, "temperature", rx->temperature, &rx->temperature)) != QC_OK ||
        (st = qc_settings_number(s, "dark-current", rx->dark_current, &rx->dark_current)) != QC_OK ||
        (st = qc_settings_number(s, "apd-gain", rx->gain, &rx->gain)) != QC_OK ||
        (st = qc_settings_number(s, "apd-k", rx->ionization_ratio, &rx->ionization_ratio)) != QC_OK)
        return st;
    rx->thermal_density = pa_per_rthz; /* the front end takes pA/√Hz */
    double rin_db = -INFINITY;
    if ((st = qc_settings_number(s, "rin-db-hz", rin_db, &rin_db)) != QC_OK)
        return st;
    rx->rin = pow(10.0, rin_db / 10.0); /* 0 without RIN */
    if (isnan(rx->responsivity))
        return qc_fail(QC_EINVAL, "'responsivity' (A/W) is required for the physical receiver");
    if (isnan(rx->thermal_density) && isnan(rx->load_resistance))
        return qc_fail(QC_EINVAL, "thermal noise: give 'thermal-density' (pA/sqrt(Hz)) or "
                                  "'load-resistance' (ohm, with 'temperature')");
    if (!isnan(rx->thermal_density) && qc_settings_get(s, "load-resistance"))
        return qc_fail(QC_EINVAL, "thermal noise: give 'thermal-density' or "
                                  "'load-resistance', not both");
    return QC_OK;
}

/* Quantum efficiency of photon counting: 'efficiency', or the one a
 * 'responsivity' (A/W) means at the wavelength, or 1. */
static qc_status efficiency_of(const qc_settings *s, double lambda_nm, double *eta)
{
    if (!qc_settings_get(s, "responsivity"))
        return qc_settings_number(s, "efficiency", 1.0, eta);
    if (qc_settings_get(s, "efficiency"))
        return qc_fail(QC_EINVAL, "give 'efficiency' or 'responsivity' (which sets the "
                                  "efficiency at the wavelength), not both");
    double r;
    qc_status st = qc_settings_number(s, "responsivity", NAN, &r);
    return st == QC_OK ? qc_responsivity_to_efficiency(r, lambda_nm * 1e-9, eta) : st;
}

/* Background photons per second η·P_b/(hν) added to the count rate. */
static qc_status background_photons(double power_w, double lambda_nm, double eta,
                                    double *rate)
{
    if (!(power_w > 0.0))
        return QC_OK;
    double n;
    qc_status st = qc_photons_per_slot(power_w, 1.0, lambda_nm * 1e-9, eta, &n);
    if (st == QC_OK)
        *rate += n;
    return st;
}

/* Physical route: optical powers of an intensity alphabet → parameters
 * and levels of the chosen model. Replaces s->levels. */
static qc_status physical_route(qc_settings *s, const qc_model_type *type, int intensity,
                                size_t nl, size_t ppm, double *params)
{
    if (!intensity)
        return qc_fail(QC_EINVAL, "the physical receiver ('%s') needs an intensity alphabet: "
                                  "alphabet = upam:M",
                       first_frontend_key(s, type));
    double dbm, ext_db, slot;
    qc_status st;
    int peak_given = qc_settings_get(s, "peak-dbm") != NULL;
    const char *lk = first_intensity_link_key(s);
    if (peak_given && qc_settings_get(s, "received-dbm"))
        return qc_fail(QC_EINVAL, "give 'received-dbm' (average) or 'peak-dbm' (top level), "
                                  "not both");
    if (lk && (peak_given || qc_settings_get(s, "received-dbm")))
        return qc_fail(QC_EINVAL, "give the link ('%s') or the received power ('%s'), not "
                                  "both: the link sets the received power",
                       lk, peak_given ? "peak-dbm" : "received-dbm");
    const int free_space = qc_settings_get(s, "range-km") != NULL;
    double background_w = 0.0;
    if (free_space) {
        static const char *const fibre_only[] = {"length-km", "loss-db-km", "connector-loss-db",
                                                 "splice-loss-db", "penalty-db", NULL};
        for (size_t i = 0; fibre_only[i]; i++)
            if (qc_settings_get(s, fibre_only[i]))
                return qc_fail(QC_EINVAL, "'%s' belongs to a fibre link; the free-space link "
                                          "('range-km') counts its losses in "
                                          "'pointing-loss-db' and 'atmosphere-loss-db'",
                               fibre_only[i]);
        qc_free_space_link fl;
        qc_free_space_result fr;
        qc_free_space_link_default(&fl);
        if ((st = required(s, "launch-dbm", "for the free-space link (the transmit power)",
                           &fl.transmit_dbm)) != QC_OK ||
            (st = qc_settings_number(s, "range-km", NAN, &fl.range_km)) != QC_OK ||
            (st = required(s, "wavelength-nm", "for the free-space link", &fl.wavelength_nm)) !=
                QC_OK ||
            (st = required(s, "tx-aperture-m", "for the free-space link", &fl.tx_aperture_m)) !=
                QC_OK ||
            (st = required(s, "rx-aperture-m", "for the free-space link", &fl.rx_aperture_m)) !=
                QC_OK ||
            (st = qc_settings_number(s, "pointing-loss-db", 0.0, &fl.pointing_loss_db)) != QC_OK ||
            (st = qc_settings_number(s, "atmosphere-loss-db", 0.0, &fl.atmosphere_loss_db)) != QC_OK ||
            (st = qc_settings_number(s, "background-radiance", 0.0, &fl.background_radiance)) != QC_OK ||
            (st = qc_settings_number(s, "field-of-view-mrad", NAN, &fl.field_of_view_mrad)) != QC_OK ||
            (st = qc_settings_number(s, "filter-nm", NAN, &fl.filter_nm)) != QC_OK ||
            (st = qc_free_space_link_eval(&fl, &fr)) != QC_OK)
            return st;
        dbm = fr.received_dbm;
        background_w = fr.background_w;
        s->ilink.received_dbm = dbm;
        s->ilink.loss_db = fr.loss_db;
    } else if (lk) {
        qc_intensity_link il;
        qc_intensity_link_default(&il);
        double loss;
        if ((st = required(s, "launch-dbm", "for the fibre link (average launch power)",
                           &il.launch_dbm)) != QC_OK ||
            (st = qc_settings_number(s, "length-km", il.length_km, &il.length_km)) != QC_OK ||
            (st = qc_settings_number(s, "loss-db-km", il.loss_db_km, &il.loss_db_km)) != QC_OK ||
            (st = qc_settings_number(s, "connector-loss-db", 0.0, &il.connector_loss_db)) != QC_OK ||
            (st = qc_settings_number(s, "splice-loss-db", 0.0, &il.splice_loss_db)) != QC_OK ||
            (st = qc_settings_number(s, "penalty-db", 0.0, &il.penalty_db)) != QC_OK ||
            (st = qc_intensity_link_received(&il, &dbm, &loss)) != QC_OK)
            return st;
        s->ilink.received_dbm = dbm;
        s->ilink.loss_db = loss;
    } else if ((st = peak_given ? qc_settings_number(s, "peak-dbm", NAN, &dbm)
                                : required(s, "received-dbm",
                                           "(or 'peak-dbm') for the physical receiver",
                                           &dbm)) != QC_OK) {
        return st;
    }
    if ((st = qc_settings_number(s, "extinction-db", INFINITY, &ext_db)) != QC_OK)
        return st;
    double *power = qc_malloc_array(nl, sizeof *power);
    if (!power)
        return qc_fail(QC_ENOMEM, "out of memory");
    double ratio = isinf(ext_db) ? INFINITY : pow(10.0, ext_db / 10.0);
    if (ppm) {
        /* pulse position: received-dbm is the average over the symbol,
         * peak-dbm the pulsed slot's power */
        double w;
        if ((st = qc_dbm_to_watt(dbm, &w)) == QC_OK) {
            if (peak_given) {
                power[1] = w;
                power[0] = isinf(ratio) ? 0.0 : w / ratio;
                if (!(ratio > 1.0))
                    st = qc_fail(QC_EINVAL, "extinction-db must be above 0 dB (got %g)", ext_db);
            } else {
                st = qc_ppm_slot_powers(w, ratio, ppm, power);
            }
        }
    } else {
        /* the average (P0 + P1)/2 of a top level P1 = peak: P1(1 + 1/ratio)/2 */
        if (peak_given)
            dbm += 10.0 * log10(0.5 * (1.0 + 1.0 / ratio));
        st = qc_intensity_levels(dbm, ratio, nl, power);
    }
    qc_receiver rx;
    if (st == QC_OK && type->frontend == QC_FRONTEND_PHOTONS) {
        double lambda_nm, eta, dark;
        if ((st = required(s, "slot-time", "for photon counting (s)", &slot)) == QC_OK &&
            (st = required(s, "wavelength-nm", "for photon counting", &lambda_nm)) == QC_OK &&
            (st = efficiency_of(s, lambda_nm, &eta)) == QC_OK &&
            (st = qc_settings_number(s, "dark-count-rate", 0.0, &dark)) == QC_OK &&
            (st = background_photons(background_w, lambda_nm, eta, &dark)) == QC_OK)
            st = qc_frontend_poisson(power, nl, slot, lambda_nm * 1e-9, eta, dark, params,
                                     s->levels);
    } else if (st == QC_OK && type->frontend == QC_FRONTEND_PREAMP) {
        double lambda_nm, gain, nf, bo, pol;
        if ((st = required(s, "slot-time", "for the pre-amplified receiver (s)", &slot)) ==
                QC_OK &&
            (st = qc_settings_number(s, "wavelength-nm", 1550.0, &lambda_nm)) == QC_OK &&
            (st = required(s, "gain-db", "for the pre-amplified receiver", &gain)) == QC_OK &&
            (st = required(s, "nf-db", "for the pre-amplified receiver", &nf)) == QC_OK &&
            (st = required(s, "optical-bandwidth", "for the pre-amplified receiver (Hz)",
                           &bo)) == QC_OK &&
            (st = qc_settings_number(s, "ase-polarizations", 2.0, &pol)) == QC_OK)
            st = qc_frontend_preamp(power, nl, slot, lambda_nm * 1e-9, gain, nf, bo, (int)pol,
                                    params, s->levels);
    } else if (st == QC_OK && type->frontend == QC_FRONTEND_APD) {
        if ((st = receiver_of(s, &rx)) == QC_OK &&
            (st = required(s, "slot-time", "for the APD slot model (s)", &slot)) == QC_OK) {
            rx.dark_current += rx.responsivity * background_w; /* background photocurrent */
            st = qc_frontend_apd(&rx, slot, power, nl, params, s->levels);
        }
    } else if (st == QC_OK && (type->frontend == QC_FRONTEND_GAUSS_SD ||
                               type->frontend == QC_FRONTEND_GAUSS)) {
        if ((st = receiver_of(s, &rx)) == QC_OK && isnan(rx.bandwidth))
            st = qc_fail(QC_EINVAL, "'bandwidth' (Hz) is required for the physical receiver");
        if (st == QC_OK)
            st = type->frontend == QC_FRONTEND_GAUSS
                     ? qc_frontend_gauss(&rx, power, nl, params, s->levels)
                     : qc_frontend_gauss_sd(&rx, power, nl, params, s->levels);
    } else if (st == QC_OK) {
        st = qc_fail(QC_EINVAL, "model '%s' has no physical front end; give its parameters",
                     type->name);
    }
    free(power);
    return st;
}

/* σ of the Gaussian model from a linear SNR = E[x²]/σ² per real dimension
 * (for QAM the per-quadrature levels give Es/N0 = E|x|²/(2σ²) the same
 * way). With a power budget, E[x²] is the budget per real dimension;
 * otherwise it is taken under the law (given, else uniform). */
static qc_status sigma_from_snr(const char *key, double snr, const double *levels, size_t nl,
                                const double *probs, double budget_per_dim, double *sigma)
{
    double e2 = 0.0;
    for (size_t i = 0; i < nl; i++)
        e2 += (probs ? probs[i] : 1.0 / (double)nl) * levels[i] * levels[i];
    if (!isnan(budget_per_dim))
        e2 = budget_per_dim;
    if (!(e2 > 0.0))
        return qc_fail(QC_EINVAL, "%s: the levels have zero energy E[x^2], so no SNR can "
                                  "be set",
                       key);
    *sigma = sqrt(e2 / snr);
    if (!(*sigma > 0.0) || !isfinite(*sigma))
        return qc_fail(QC_EINVAL, "%s: gives sigma = %g, outside what doubles hold", key,
                       *sigma);
    return QC_OK;
}

/* Keys that describe the amplified fibre link (its marker is span-km). */
static const char *const fibre_keys[] = {
    "spans", "span-km", "nf-db", "gain-db", "chromatic-dispersion", "gamma", "channels",
    "channel-spacing-ghz", "coherence", "transceiver-snr-db", NULL,
};

/* The first key of the amplified fibre link given, or NULL. */
static const char *first_fibre_key(const qc_settings *s)
{
    for (size_t i = 0; fibre_keys[i]; i++)
        if (qc_settings_get(s, fibre_keys[i]))
            return fibre_keys[i];
    return NULL;
}

/* The amplified fibre link of the settings → its SNR (s->fibre) → σ of
 * model gauss, as snr-db would set it. */
static qc_status fibre_route(qc_settings *s, const qc_model_type *type, size_t nl,
                             unsigned dims, double *params)
{
    int si = qc_model_param_index(type, "sigma");
    if (si < 0)
        return qc_fail(QC_EINVAL, "the amplified fibre link sets 'sigma', which model '%s' "
                                  "does not have",
                       type->name);
    if (!isnan(params[si]))
        return qc_fail(QC_EINVAL, "give 'sigma' or the amplified fibre link, not both");
    if (!qc_settings_get(s, "span-km"))
        return qc_fail(QC_EINVAL, "'%s' describes an amplified fibre link, which needs "
                                  "'span-km' (the length of one span)",
                       first_fibre_key(s));
    qc_fibre_link l;
    qc_fibre_link_default(&l);
    double pol = 2.0, spans = NAN, length = NAN, channels = 1.0;
    qc_status st;
    if ((st = qc_settings_number(s, "span-km", l.span_km, &l.span_km)) != QC_OK ||
        (st = qc_settings_number(s, "spans", NAN, &spans)) != QC_OK ||
        (st = qc_settings_number(s, "length-km", NAN, &length)) != QC_OK ||
        (st = qc_settings_number(s, "loss-db-km", l.loss_db_km, &l.loss_db_km)) != QC_OK ||
        (st = required(s, "nf-db", "for the amplified fibre link (amplifier noise figure)",
                       &l.nf_db)) != QC_OK ||
        (st = qc_settings_number(s, "gain-db", l.gain_db, &l.gain_db)) != QC_OK ||
        (st = qc_settings_number(s, "launch-dbm", l.launch_dbm, &l.launch_dbm)) != QC_OK ||
        (st = qc_settings_number(s, "wavelength-nm", l.wavelength_nm, &l.wavelength_nm)) != QC_OK ||
        (st = required(s, "symbol-rate", "for the amplified fibre link (baud)",
                       &l.symbol_rate)) != QC_OK ||
        (st = qc_settings_number(s, "polarizations", pol, &pol)) != QC_OK ||
        (st = qc_settings_number(s, "chromatic-dispersion", l.dispersion, &l.dispersion)) != QC_OK ||
        (st = qc_settings_number(s, "gamma", l.gamma, &l.gamma)) != QC_OK ||
        (st = qc_settings_number(s, "channels", channels, &channels)) != QC_OK ||
        (st = qc_settings_number(s, "channel-spacing-ghz", l.spacing_ghz, &l.spacing_ghz)) != QC_OK ||
        (st = qc_settings_number(s, "coherence", l.coherence, &l.coherence)) != QC_OK ||
        (st = qc_settings_number(s, "transceiver-snr-db", l.transceiver_snr_db,
                     &l.transceiver_snr_db)) != QC_OK)
        return st;
    if (!isnan(spans) && !isnan(length))
        return qc_fail(QC_EINVAL, "give 'spans' or 'length-km' (= spans x span-km), not both");
    if (isnan(spans) && isnan(length))
        return qc_fail(QC_EINVAL, "the amplified fibre link needs 'spans' or 'length-km' "
                                  "(= spans x span-km)");
    l.spans = isnan(spans) ? length / l.span_km : spans;
    if (!isnan(length) && !(l.spans >= 1.0 - 1e-12))
        return qc_fail(QC_EINVAL, "'length-km' %g is shorter than one span of %g km", length,
                       l.span_km);
    l.spans = fmax(l.spans, 1.0);
    l.channels = channels;
    l.polarizations = (int)pol;
    if ((st = qc_fibre_link_eval(&l, &s->fibre)) != QC_OK)
        return st;
    double budget = s->constraints.power / (double)dims; /* NaN without a budget */
    return sigma_from_snr("the link's SNR", pow(10.0, s->fibre.snr_eff_db / 10.0), s->levels,
                          nl, s->probabilities, budget, &params[si]);
}

/* snr-db or osnr-db (with symbol-rate) → σ of model gauss. */
static qc_status snr_route(const qc_settings *s, const qc_model_type *type, size_t nl,
                           unsigned dims, double *params)
{
    const char *key = qc_settings_get(s, "snr-db") ? "snr-db" : "osnr-db";
    if (qc_settings_get(s, "snr-db") && qc_settings_get(s, "osnr-db"))
        return qc_fail(QC_EINVAL, "give 'snr-db' or 'osnr-db', not both");
    int si = qc_model_param_index(type, "sigma");
    if (si < 0)
        return qc_fail(QC_EINVAL, "%s sets 'sigma', which model '%s' does not have",
                       key, type->name);
    if (!isnan(params[si]))
        return qc_fail(QC_EINVAL, "give 'sigma' or '%s', not both", key);
    double db, snr;
    qc_status st = qc_settings_number(s, key, NAN, &db);
    if (st != QC_OK)
        return st;
    if (strcmp(key, "snr-db") == 0) {
        snr = pow(10.0, db / 10.0);
    } else {
        double rs, bref, pol = 2.0;
        if ((st = required(s, "symbol-rate", "with 'osnr-db' (baud)", &rs)) != QC_OK ||
            (st = qc_settings_number(s, "ref-bandwidth", QC_OSNR_REF_BANDWIDTH, &bref)) != QC_OK ||
            (st = qc_settings_number(s, "polarizations", 2.0, &pol)) != QC_OK)
            return st;
        if ((st = qc_osnr_to_snr(db, bref, rs, (int)pol, &snr)) != QC_OK)
            return qc_fail(st, "osnr-db: %s", qc_last_error());
    }
    double budget = s->constraints.power / (double)dims; /* NaN without a budget */
    return sigma_from_snr(key, snr, s->levels, nl, s->probabilities, budget, &params[si]);
}

/* The alphabet named by 'levels', 'alphabet' or 'level-grid' (at most
 * one); *out stays NULL when none is given. */
static qc_status alphabet_of(const qc_settings *s, qc_alphabet **out)
{
    *out = NULL;
    const char *alphabet = qc_settings_get(s, "alphabet");
    const char *grid = qc_settings_get(s, "level-grid");
    const char *levels = qc_settings_get(s, "levels");
    if ((alphabet != NULL) + (grid != NULL) + (levels != NULL) > 1)
        return qc_fail(QC_EINVAL, "give one of 'levels', 'alphabet' and 'level-grid'");
    if (alphabet)
        return qc_alphabet_parse(alphabet, out);
    double *v;
    size_t n;
    qc_status st = parse_list_key(s, grid ? "level-grid" : "levels", &v, &n);
    if (st != QC_OK || !v)
        return st;
    if (levels) {
        st = qc_alphabet_from_levels(v, n, out);
    } else if (n != 3) {
        st = qc_fail(QC_EINVAL, "level-grid: expected LO,HI,N (3 values, got %zu)", n);
    } else if (!(v[2] == floor(v[2])) || v[2] < 0.0 || v[2] > 1e9) {
        st = qc_fail(QC_EINVAL, "level-grid: N must be a whole number (got %g)", v[2]);
    } else {
        st = qc_alphabet_grid(v[0], v[1], (size_t)v[2], out);
    }
    free(v);
    return st;
}

/* Does the model type take intensities (levels ≥ 0)? Declared by the
 * type; measured tables say nothing general. */
static int intensity_type(const qc_model_type *type)
{
    return (type->properties & QC_MODEL_INTENSITY) != 0;
}

/* 'peak-limit', 'power-limit', 'mean-limit' into s->constraints; *optimize from
 * 'optimize-levels'. */
static qc_status constraints_of(qc_settings *s, const qc_model_type *type,
                                const qc_alphabet *alpha, int *optimize)
{
    qc_constraints_none(&s->constraints);
    qc_constraints *c = &s->constraints;
    qc_status st;
    if ((st = qc_settings_number(s, "peak-limit", NAN, &c->peak)) != QC_OK ||
        (st = qc_settings_number(s, "power-limit", NAN, &c->power)) != QC_OK ||
        (st = qc_settings_number(s, "mean-limit", NAN, &c->mean)) != QC_OK)
        return st;
    c->intensity = alpha->intensity || intensity_type(type);
    const char *v = qc_settings_get(s, "optimize-levels");
    *optimize = v && strcmp(v, "true") == 0;
    return qc_constraints_validate(c, alpha->dimensions);
}

/* 'shaping' into s->shaping and the request: the levels must be those of
 * pam, qam, upam or a list, without a law of their own; intensity levels
 * (upam, or a model of intensities) take the law ∝ exp(−ν·x) at the same
 * average optical power, the others ∝ exp(−ν·x²) at the same E[x²]. */
static qc_status shaping_of(qc_settings *s, qc_design_request *req)
{
    const char *v = qc_settings_get(s, "shaping");
    if (!v)
        return QC_OK;
    qc_status st = qc_shaping_parse(v, &s->shaping);
    if (st != QC_OK)
        return st;
    const char *alphabet = qc_settings_get(s, "alphabet");
    if (alphabet && strncmp(alphabet, "ppm:", 4) == 0)
        return qc_fail(QC_EINVAL, "shaping: pulse-position modulation sends each of its M "
                                  "positions with probability 1/M (its rate rests on that "
                                  "symmetry); shaping is for alphabet pam:M, qam:M or upam:M, "
                                  "or 'levels'");
    if (alphabet && strncmp(alphabet, "pam:", 4) != 0 && strncmp(alphabet, "qam:", 4) != 0 &&
        strncmp(alphabet, "upam:", 5) != 0)
        return qc_fail(QC_EINVAL, "shaping: a Maxwell-Boltzmann law is defined on alphabet "
                                  "pam:M, qam:M or upam:M, or 'levels' (got alphabet %s)",
                       alphabet);
    if (qc_settings_get(s, "level-grid"))
        return qc_fail(QC_EINVAL, "shaping: a level-grid is the support of a law designed "
                                  "freely; give alphabet pam:M, qam:M or upam:M (or 'levels')");
    s->shaping.intensity = s->constraints.intensity;
    if (qc_settings_get(s, "probabilities"))
        return qc_fail(QC_EINVAL, "shaping: give 'probabilities' or 'shaping', not both "
                                  "(the shaping sets the law)");
    if (s->shaping.kind == QC_SHAPING_ENTROPY) {
        /* the entropy range of this alphabet, named now with the key */
        double nu, *amp = qc_malloc_array(req->channel.nlevels, sizeof *amp);
        if (!amp)
            return qc_fail(QC_ENOMEM, "out of memory");
        st = qc_shaping_amplitudes(req->channel.levels, req->channel.nlevels,
                                   s->shaping.intensity, amp);
        if (st == QC_OK)
            st = qc_mb_nu_for_entropy(amp, req->channel.nlevels, req->channel.dimensions,
                                      s->shaping.value, &nu);
        free(amp);
        if (st != QC_OK)
            return st;
    }
    req->input.shaping = &s->shaping;
    return QC_OK;
}

/* The alphabet and input-design fields of the request. */
static qc_status design_options(qc_settings *s, unsigned dims, int optimize,
                                qc_design_request *req)
{
    qc_status st;
    double starts = NAN, n = NAN, eps = NAN;
    req->channel.dimensions = dims;
    if (!isnan(s->constraints.peak) || !isnan(s->constraints.power) ||
        !isnan(s->constraints.mean))
        req->input.constraints = &s->constraints;
    req->input.optimize_levels = optimize;
    if ((st = qc_settings_number(s, "level-starts", NAN, &starts)) != QC_OK ||
        (st = qc_settings_number(s, "blocklength", NAN, &n)) != QC_OK ||
        (st = qc_settings_number(s, "error-rate", NAN, &eps)) != QC_OK)
        return st;
    if (!isnan(starts) && !optimize)
        return qc_fail(QC_EINVAL, "'level-starts' goes with 'optimize-levels'");
    req->input.level_starts = isnan(starts) ? 0 : (size_t)starts;
    if (isnan(n) != isnan(eps))
        return qc_fail(QC_EINVAL, "give 'blocklength' and 'error-rate' together (the normal "
                                  "approximation needs both)");
    if (!isnan(n)) {
        req->numerics.blocklength = (size_t)n;
        req->numerics.error_rate = eps;
    }
    /* figures in the trade's units (src/design/figures.c) */
    double rs = NAN, pol = NAN;
    if ((st = qc_settings_number(s, "symbol-rate", NAN, &rs)) != QC_OK ||
        (st = qc_settings_number(s, "polarizations", NAN, &pol)) != QC_OK)
        return st;
    req->channel.symbol_rate = isnan(rs) ? 0.0 : rs;
    /* the OSNR route's default (2) holds for the rates too */
    req->channel.polarizations = !isnan(pol)                     ? (unsigned)pol
                         : qc_settings_get(s, "osnr-db") ? 2
                         : qc_settings_get(s, "span-km") ? 2 /* the fibre link's default */
                                                         : 0;
    if ((st = shaping_of(s, req)) != QC_OK)
        return st;
    const char *fec = qc_settings_get(s, "fec");
    if (fec) {
        if ((st = qc_fec_parse(fec, &s->fec)) != QC_OK)
            return qc_fail(st, "%s", qc_last_error());
        req->input.fec = &s->fec;
    }
    return QC_OK;
}

/* The wavelength a dispersion response is taken at, nm (C band). */
#define RESPONSE_WAVELENGTH_NM 1550.0

/* The channel with memory: taps given, or from a response; the receiver
 * (detection): coherent for QAM and complex taps unless said otherwise,
 * else one real output (intensity). */
static qc_status memory_of(qc_settings *s, qc_design_request *req)
{
    const char *taps = qc_settings_get(s, "taps"), *resp = qc_settings_get(s, "response");
    const char *det = qc_settings_get(s, "detection");
    qc_status st;
    if (!taps && !resp) {
        if (qc_settings_get(s, "symbols"))
            return qc_fail(QC_EINVAL, "'symbols' goes with 'taps' or 'response' (a channel "
                                      "with memory)");
        if (qc_settings_get(s, "rate-ci"))
            return qc_fail(QC_EINVAL, "'rate-ci' goes with 'taps' or 'response' (a channel "
                                      "with memory)");
        if (det)
            return qc_fail(QC_EINVAL, "'detection' goes with 'taps' or 'response' (a channel "
                                      "with memory)");
        if (qc_settings_get(s, "seed") && req->quantizer.kind != QC_QUANTIZER_CONVERTER)
            return qc_fail(QC_EINVAL, "'seed' goes with 'taps' or 'response' (a channel with "
                                      "memory) or with a converter's 'dnl-lsb' or 'inl-lsb'");
        return QC_OK;
    }
    if (taps && resp)
        return qc_fail(QC_EINVAL, "give 'taps' or 'response', not both");
    const int qam = req->channel.dimensions == 2;
    if (det && strcmp(det, "intensity") == 0 && qam)
        return qc_fail(QC_EINVAL, "detection: QAM is received coherently; 'detection "
                                  "intensity' takes real (pam, upam) alphabets");
    size_t n = 0;
    int cplx = 0;
    double truncated = NAN;
    if (taps && !strchr(taps, 'j')) { /* real taps: the number-list grammar */
        double *t = NULL;
        if ((st = qc_parse_list(taps, &t, &n)) != QC_OK)
            return qc_fail(st, "taps: %s", qc_last_error());
        if (n > QC_ISI_MAX_TAPS) {
            free(t);
            return qc_fail(QC_EINVAL, "taps: %zu taps given; at most %zu are supported", n,
                           QC_ISI_MAX_TAPS);
        }
        memcpy(s->taps, t, n * sizeof *t);
        free(t);
        for (size_t i = 0; i < n; i++)
            s->taps_imag[i] = 0.0;
    } else if (taps) {
        if ((st = qc_isi_taps_parse(taps, s->taps, s->taps_imag, &n, &cplx)) != QC_OK)
            return st;
        if (cplx && det && strcmp(det, "intensity") == 0)
            return qc_fail(QC_EINVAL, "taps: complex taps (a+bj) need coherent detection; "
                                      "'detection intensity' takes real taps");
    }
    const int coherent = det ? strcmp(det, "coherent") == 0 : (qam || cplx);
    if (!taps) {
        double rs = NAN;
        if ((st = qc_settings_number(s, "symbol-rate", NAN, &rs)) != QC_OK)
            return st;
        if (coherent) {
            /* the most taps the trellis takes for this alphabet */
            const size_t M = qc_isi_alphabet_size(qam ? QC_ISI_COHERENT_QAM : QC_ISI_COHERENT_PAM,
                                                  req->channel.nlevels);
            size_t max_taps = 1;
            while (M > 0 && max_taps < QC_ISI_MAX_TAPS && qc_isi_states(M, max_taps + 1) > 0)
                max_taps++;
            if ((st = qc_isi_coherent_response_taps(resp, rs, RESPONSE_WAVELENGTH_NM, max_taps,
                                                     s->taps, s->taps_imag, &n, &truncated)) !=
                QC_OK)
                return st;
        } else if ((st = qc_isi_response_taps(resp, rs, RESPONSE_WAVELENGTH_NM, s->taps, &n)) !=
                   QC_OK) {
            return st;
        }
    }
    double symbols = NAN, seed = NAN, rate_ci = NAN;
    if ((st = qc_settings_number(s, "symbols", NAN, &symbols)) != QC_OK ||
        (st = qc_settings_number(s, "seed", NAN, &seed)) != QC_OK ||
        (st = qc_settings_number(s, "rate-ci", NAN, &rate_ci)) != QC_OK)
        return st;
    req->memory.rate_ci_bits = isnan(rate_ci) ? 0.0 : rate_ci;
    req->memory.taps = s->taps;
    req->memory.ntaps = n;
    req->memory.symbols = isnan(symbols) ? 0 : (size_t)symbols;
    req->memory.seed = isnan(seed) ? 1 : (uint64_t)seed;
    req->memory.coherent = coherent;
    req->memory.taps_imag = coherent ? s->taps_imag : NULL;
    req->memory.truncated_energy = truncated;
    return qc_isi_complex_taps_check(s->taps, coherent ? s->taps_imag : NULL, n);
}

/* qc_settings_build and qc_settings_build_cached: the model comes from
 * `cache` when there is one. */
static qc_status build(qc_settings *s, qc_model_cache *cache, const qc_model **model,
                       qc_design_request *req)
{
    *model = NULL;
    qc_design_request_default(req);
    qc_settings_free_lists(s);
    const char *name = qc_settings_get(s, "model");
    if (!name)
        return qc_fail(QC_EINVAL, "no model given (key 'model'; see 'quantcap models')");
    const qc_model_type *type = qc_model_type_find(name);
    if (!type)
        return qc_fail(QC_EINVAL, "model: unknown model '%s'", name);
    int is_table = (type->properties & QC_MODEL_FROM_FILE) != 0;
    qc_status st = check_keys_apply(s, type);
    if (st != QC_OK)
        return st;
    const char *why2d = qc_settings_plane_reason(s);
    if (why2d) { /* a two-dimensional constellation (settings_plane.c) */
        st = qc_settings_plane_build(s, type, why2d, cache, model, req);
        if (st != QC_OK) {
            qc_settings_model_put(cache, *model);
            *model = NULL;
        }
        return st;
    }
    const char *fk = first_frontend_key(s, type);
    /* symbol-rate and polarizations also give the rates in Gb/s of every
     * model; the reference bandwidth only converts an OSNR */
    if (qc_settings_get(s, "ref-bandwidth") && !qc_settings_get(s, "osnr-db"))
        return qc_fail(QC_EINVAL, "'ref-bandwidth' goes with 'osnr-db' (it converts the OSNR "
                                  "to an SNR)");

    /* model parameters given directly */
    double params[QC_MODEL_MAX_PARAMS];
    int nparams_given = 0;
    for (size_t i = 0; i < QC_MODEL_MAX_PARAMS; i++)
        params[i] = NAN;
    for (size_t i = 0; i < s->n; i++) {
        int idx = qc_model_param_index(type, s->key[i]);
        /* a design key is a parameter only when the model has it and no
         * physical receiver is described */
        if (qc_setting_is_design_key(s->key[i]) && (idx < 0 || (fk && is_frontend_key(s->key[i]))))
            continue;
        if (idx < 0)
            return qc_fail(QC_EINVAL, "'%s' is not a parameter of model '%s' (see "
                                      "'quantcap models %s')",
                           s->key[i], type->name, type->name);
        st = qc_parse_double(s->value[i], &params[idx]);
        if (st != QC_OK)
            return qc_fail(st, "%s: %s", s->key[i], qc_last_error());
        nparams_given++;
    }
    if (is_table != (qc_settings_get(s, "table") != NULL))
        return qc_fail(QC_EINVAL, is_table ? "model table needs 'table' (the file of measured "
                                             "densities)"
                                           : "'table' goes with model table only");

    /* levels: a list, a named alphabet, a level grid, or the table's own */
    size_t nl = 0, np, nt;
    qc_alphabet *alpha = NULL;
    if ((st = alphabet_of(s, &alpha)) != QC_OK)
        return st;
    if ((st = parse_list_key(s, "probabilities", &s->probabilities, &np)) != QC_OK ||
        (st = parse_list_key(s, "thresholds", &s->thresholds, &nt)) != QC_OK) {
        qc_alphabet_free(alpha);
        return st;
    }
    if (is_table) {
        if ((st = qc_settings_model_get(cache, type, NULL, qc_settings_get(s, "table"),
                                        model)) != QC_OK) {
            qc_alphabet_free(alpha);
            return st;
        }
        if (!alpha) {
            const double *tl;
            if ((st = qc_model_table_levels(*model, &tl, &nl)) != QC_OK ||
                (st = qc_alphabet_from_levels(tl, nl, &alpha)) != QC_OK)
                goto fail;
        }
    }
    if (!alpha)
        return qc_fail(QC_EINVAL, "no levels given (key 'levels', 'alphabet' or 'level-grid')");
    /* input constraints; a peak trims a level grid */
    int optimize = 0;
    if ((st = constraints_of(s, type, alpha, &optimize)) != QC_OK)
        goto fail;
    if (!(optimize && alpha->kind != QC_ALPHABET_GRID) &&
        (st = qc_alphabet_apply_peak(alpha, s->constraints.peak, s->constraints.intensity)) !=
            QC_OK)
        goto fail;
    nl = alpha->nlevels;
    const size_t ppm = alpha->kind == QC_ALPHABET_PPM ? alpha->size : 0;
    const unsigned dims = alpha->dimensions;
    const int intensity = alpha->intensity;
    if (!(s->levels = qc_malloc_array(nl, sizeof *s->levels))) {
        st = qc_fail(QC_ENOMEM, "out of memory");
        goto fail;
    }
    memcpy(s->levels, alpha->levels, nl * sizeof *s->levels);
    qc_alphabet_free(alpha);
    alpha = NULL;
    if (s->probabilities && np != nl) {
        st = qc_fail(QC_EINVAL, "probabilities: %zu values for %zu levels", np, nl);
        goto fail;
    }

    /* resolution and strategy */
    const char *bits = qc_settings_get(s, "bits"), *cells = qc_settings_get(s, "cells");
    size_t z;
    const char *v;
    if (bits && cells) {
        st = qc_fail(QC_EINVAL, "give one of 'bits' and 'cells', not both");
        goto fail;
    }
    if (!bits && !cells && !s->thresholds) {
        st = qc_fail(QC_EINVAL, "give 'bits' or 'cells' (or 'thresholds', which set the cells)");
        goto fail;
    }
    if (bits ? (st = qc_parse_size(bits, 1, QC_MAX_BITS, &z)) != QC_OK
             : cells ? (st = qc_parse_size(cells, 2, (size_t)1 << QC_MAX_BITS, &z)) != QC_OK
                     : 0) {
        st = qc_fail(st, "%s: %s", bits ? "bits" : "cells", qc_last_error());
        goto fail;
    }
    /* given thresholds set the count: K - 1 thresholds make K cells */
    req->quantizer.cells = bits ? (size_t)1 << z : cells ? z : nt + 1;
    if ((v = qc_settings_get(s, "objective")) &&
        (st = qc_objective_parse(v, &req->input.objective)) != QC_OK) {
        st = qc_fail(st, "objective: %s", qc_last_error());
        goto fail;
    }
    if ((v = qc_settings_get(s, "quantizer")) &&
        (st = qc_quantizer_parse(v, &req->quantizer.kind)) != QC_OK) {
        st = qc_fail(st, "quantizer: %s", qc_last_error());
        goto fail;
    }
    if (s->thresholds) {
        if (v && req->quantizer.kind != QC_QUANTIZER_FIXED) {
            st = qc_fail(QC_EINVAL, "thresholds: given thresholds are evaluated as they are; "
                                    "they cannot be combined with quantizer %s",
                         v);
            goto fail;
        }
        req->quantizer.kind = QC_QUANTIZER_FIXED;
        req->quantizer.nthresholds = nt;
        if (nt + 1 != req->quantizer.cells) {
            st = bits ? qc_fail(QC_EINVAL, "thresholds and bits disagree: %zu thresholds make "
                                           "%zu cells, but bits = %s means %zu cells (give "
                                           "the thresholds alone)",
                                nt, nt + 1, bits, req->quantizer.cells)
                      : qc_fail(QC_EINVAL, "thresholds and cells disagree: %zu thresholds "
                                           "make %zu cells, but cells = %s (give the "
                                           "thresholds alone)",
                                nt, nt + 1, cells);
            goto fail;
        }
    } else if (req->quantizer.kind == QC_QUANTIZER_FIXED) {
        st = qc_fail(QC_EINVAL, "quantizer fixed needs 'thresholds'");
        goto fail;
    }
    if ((v = qc_settings_get(s, "keep-decisions")) && strcmp(v, "true") == 0) {
        if (req->quantizer.kind != QC_QUANTIZER_OPTIMAL) {
            st = qc_fail(QC_EINVAL, "keep-decisions: applies to the optimal quantizer only "
                                    "(the quantizer is %s)",
                         qc_quantizer_name(req->quantizer.kind));
            goto fail;
        }
        req->quantizer.keep_decisions = 1;
    }
    if ((st = qc_settings_converter(s, req)) != QC_OK)
        goto fail;
    if ((v = qc_settings_get(s, "fine-cells"))) {
        if ((st = qc_parse_size(v, 2, (size_t)1 << 22, &req->numerics.fine_cells)) != QC_OK) {
            st = qc_fail(st, "fine-cells: %s", qc_last_error());
            goto fail;
        }
        if (req->numerics.fine_cells < req->quantizer.cells) {
            st = qc_fail(QC_EINVAL, "fine-cells: the fine grid (%zu cells) must have at least "
                                    "as many cells as the quantizer (%zu)",
                         req->numerics.fine_cells, req->quantizer.cells);
            goto fail;
        }
    }
    if ((v = qc_settings_get(s, "tol")) && (st = qc_parse_double(v, &req->numerics.tol_bits)) != QC_OK) {
        st = qc_fail(st, "tol: %s", qc_last_error());
        goto fail;
    }

    /* model parameters: physical receiver, SNR/OSNR, or as given */
    if (!is_table) {
        int snr_keys = qc_settings_get(s, "snr-db") || qc_settings_get(s, "osnr-db");
        /* the pre-amplifier's gain and noise figure are not a fibre link */
        const char *lk = type->frontend == QC_FRONTEND_PREAMP ? NULL : first_fibre_key(s);
        if (lk && fk && strcmp(fk, "wavelength-nm") == 0)
            fk = NULL; /* the link's wavelength */
        if (!lk && type->frontend == QC_FRONTEND_GAUSS && qc_settings_get(s, "wavelength-nm"))
            return qc_fail(QC_EINVAL, "'wavelength-nm' does not apply to model '%s' without "
                                      "the amplified fibre link ('span-km', 'spans', "
                                      "'nf-db', ...)",
                           type->name);
        if (lk && (fk || snr_keys))
            return qc_fail(QC_EINVAL, "give the amplified fibre link ('%s') or %s%s%s, not both",
                           lk, fk ? "the physical receiver ('" : "an SNR", fk ? fk : "",
                           fk ? "')" : "");
        if (lk && nparams_given)
            return qc_fail(QC_EINVAL, "give the amplified fibre link ('%s') or the parameters "
                                      "of model '%s', not both",
                           lk, type->name);
        const char *ik = first_intensity_link_key(s);
        if (lk && ik && (strcmp(ik, "connector-loss-db") == 0 ||
                         strcmp(ik, "splice-loss-db") == 0 || strcmp(ik, "penalty-db") == 0))
            return qc_fail(QC_EINVAL, "'%s' belongs to the unamplified intensity link; the "
                                      "amplified fibre link ('%s') counts its losses in "
                                      "the span loss",
                           ik, lk);
        if (!lk && ik && !fk)
            fk = ik; /* the intensity link feeds the physical receiver */
        if (fk && snr_keys)
            return qc_fail(QC_EINVAL, "give the physical receiver ('%s') or an SNR, not both",
                           fk);
        if (fk && nparams_given)
            return qc_fail(QC_EINVAL, "give the physical receiver ('%s') or the parameters of "
                                      "model '%s', not both",
                           fk, type->name);
        if (fk) {
            st = physical_route(s, type, intensity, nl, ppm, params);
            if (st == QC_OK && (first_intensity_link_key(s) || qc_settings_get(s, "range-km")))
                req->channel.intensity_link = &s->ilink;
            /* the Gaussian models' levels are then photocurrents */
            if (strcmp(type->name, "gauss") == 0 || strcmp(type->name, "gauss-sd") == 0)
                req->channel.level_unit = req->channel.output_unit = "A";
        }
        else if (lk) {
            st = fibre_route(s, type, nl, dims, params);
            if (st == QC_OK)
                req->channel.fibre_link = &s->fibre;
        } else if (snr_keys)
            st = snr_route(s, type, nl, dims, params);
        if (st == QC_OK)
            st = qc_settings_model_get(cache, type, params, NULL, model);
        if (st != QC_OK)
            return st;
    }
    req->channel.model = *model;
    req->channel.levels = s->levels;
    req->channel.nlevels = nl;
    req->channel.ppm_slots = ppm;
    req->input.probabilities = s->probabilities;
    req->quantizer.thresholds = s->thresholds;
    if ((st = design_options(s, dims, optimize, req)) != QC_OK ||
        (st = memory_of(s, req)) != QC_OK)
        goto fail;
    req->numerics.unquantized_memo = qc_model_cache_memo(cache);
    return QC_OK;
fail:
    qc_alphabet_free(alpha);
    qc_settings_model_put(cache, *model);
    *model = NULL;
    return st;
}

qc_status qc_settings_build(qc_settings *s, qc_model **model, qc_design_request *req)
{
    const qc_model *m = NULL;
    qc_status st = build(s, NULL, &m, req);
    *model = (qc_model *)m; /* a new instance, the caller's */
    return st;
}

qc_status qc_settings_build_cached(qc_settings *s, qc_model_cache *cache,
                                   const qc_model **model, qc_design_request *req)
{
    *model = NULL;
    if (!cache)
        return qc_fail(QC_EINVAL, "no model cache given");
    return build(s, cache, model, req);
}
