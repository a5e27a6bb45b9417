/* settings_build.c — from settings to a model and a design request: the
 * levels (a list, a named alphabet, or a measured table), the model
 * parameters (given directly, from an SNR or OSNR, or from a physical
 * receiver through the front end), the quantizer and the objective. */
#include "io/settings_internal.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#define MAX_ALPHABET 4096

/* Keys of the physical intensity receiver and of photon counting. */
static const char *const frontend_keys[] = {
    "power-dbm", "extinction-db", "responsivity", "bandwidth", "thermal-density",
    "load-resistance", "temperature", "dark-current", "apd-gain", "apd-k", "slot-time",
    "wavelength-nm", "efficiency", "dark-count-rate", NULL,
};

static const char *first_frontend_key(const qc_settings *s)
{
    for (size_t i = 0; frontend_keys[i]; i++)
        if (qc_settings_get(s, frontend_keys[i]))
            return frontend_keys[i];
    return NULL;
}

/* Number under `key`, or `fallback` when absent. Values were checked by
 * qc_settings_set; parse errors here still name the key. */
static qc_status number(const qc_settings *s, const char *key, double fallback, double *out)
{
    const char *v = qc_settings_get(s, key);
    *out = fallback;
    if (!v)
        return QC_OK;
    qc_status st = qc_parse_double(v, out);
    return st == QC_OK ? st : qc_fail(st, "%s: %s", key, qc_last_error());
}

static qc_status required(const qc_settings *s, const char *key, const char *why, double *out)
{
    if (!qc_settings_get(s, key))
        return qc_fail(QC_EINVAL, "'%s' is required %s", key, why);
    return number(s, key, NAN, out);
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

/* "pam:M" → odd integers −(M−1)…M−1; "upam:M" → 0, 1/(M−1), …, 1.
 * *intensity is set for upam. */
static qc_status alphabet_levels(const char *spec, double **out, size_t *n, int *intensity)
{
    const char *colon = strchr(spec, ':');
    size_t m = 0;
    if (!colon)
        return qc_fail(QC_EINVAL, "alphabet: '%s' is not of the form pam:M or upam:M", spec);
    size_t kind_len = (size_t)(colon - spec);
    int bipolar = kind_len == 3 && strncmp(spec, "pam", 3) == 0;
    int unipolar = kind_len == 4 && strncmp(spec, "upam", 4) == 0;
    if (!bipolar && !unipolar)
        return qc_fail(QC_EINVAL, "alphabet: unknown kind '%.*s' (known: pam, upam)",
                       (int)(kind_len < 32 ? kind_len : 32), spec);
    if (qc_parse_size(colon + 1, 2, MAX_ALPHABET, &m) != QC_OK)
        return qc_fail(QC_EINVAL, "alphabet: size in '%s': %s", spec, qc_last_error());
    double *v = qc_malloc_array(m, sizeof *v);
    if (!v)
        return qc_fail(QC_ENOMEM, "out of memory");
    for (size_t i = 0; i < m; i++)
        v[i] = bipolar ? 2.0 * (double)i - (double)(m - 1) : (double)i / (double)(m - 1);
    *out = v;
    *n = m;
    *intensity = unipolar;
    return QC_OK;
}

/* The physical receiver of the settings; absent keys keep the defaults. */
static qc_status receiver_of(const qc_settings *s, qc_receiver *rx)
{
    qc_receiver_default(rx);
    double pa_per_rthz = NAN;
    qc_status st;
    if ((st = number(s, "responsivity", rx->responsivity, &rx->responsivity)) != QC_OK ||
        (st = number(s, "bandwidth", rx->bandwidth, &rx->bandwidth)) != QC_OK ||
        (st = number(s, "thermal-density", NAN, &pa_per_rthz)) != QC_OK ||
        (st = number(s, "load-resistance", rx->load_resistance, &rx->load_resistance)) != QC_OK ||
        (st = number(s, "temperature", rx->temperature, &rx->temperature)) != QC_OK ||
        (st = number(s, "dark-current", rx->dark_current, &rx->dark_current)) != QC_OK ||
        (st = number(s, "apd-gain", rx->gain, &rx->gain)) != QC_OK ||
        (st = number(s, "apd-k", rx->ionization_ratio, &rx->ionization_ratio)) != QC_OK)
        return st;
    rx->thermal_density = pa_per_rthz; /* the front end takes pA/√Hz */
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

/* Physical route: optical powers of an intensity alphabet → parameters
 * and levels of the chosen model. Replaces s->levels. */
static qc_status physical_route(qc_settings *s, const qc_model_type *type, int intensity,
                                size_t nl, double *params)
{
    if (!intensity)
        return qc_fail(QC_EINVAL, "the physical receiver ('%s') needs an intensity alphabet: "
                                  "alphabet = upam:M",
                       first_frontend_key(s));
    double dbm, ext_db, slot;
    qc_status st;
    if ((st = required(s, "power-dbm", "for the physical receiver", &dbm)) != QC_OK ||
        (st = number(s, "extinction-db", INFINITY, &ext_db)) != QC_OK)
        return st;
    double *power = qc_malloc_array(nl, sizeof *power);
    if (!power)
        return qc_fail(QC_ENOMEM, "out of memory");
    double ratio = isinf(ext_db) ? INFINITY : pow(10.0, ext_db / 10.0);
    st = qc_intensity_levels(dbm, ratio, nl, power);
    qc_receiver rx;
    if (st == QC_OK && strcmp(type->name, "poisson") == 0) {
        double lambda_nm, eta, dark;
        if ((st = required(s, "slot-time", "for photon counting (s)", &slot)) == QC_OK &&
            (st = required(s, "wavelength-nm", "for photon counting", &lambda_nm)) == QC_OK &&
            (st = number(s, "efficiency", 1.0, &eta)) == QC_OK &&
            (st = number(s, "dark-count-rate", 0.0, &dark)) == QC_OK)
            st = qc_frontend_poisson(power, nl, slot, lambda_nm * 1e-9, eta, dark, params,
                                     s->levels);
    } else if (st == QC_OK && (strcmp(type->name, "apd") == 0 ||
                               strcmp(type->name, "apd-gauss") == 0)) {
        if ((st = receiver_of(s, &rx)) == QC_OK &&
            (st = required(s, "slot-time", "for the APD slot model (s)", &slot)) == QC_OK)
            st = qc_frontend_apd(&rx, slot, power, nl, params, s->levels);
    } else if (st == QC_OK && strcmp(type->name, "gauss-sd") == 0) {
        if ((st = receiver_of(s, &rx)) == QC_OK && isnan(rx.bandwidth))
            st = qc_fail(QC_EINVAL, "'bandwidth' (Hz) is required for the physical receiver");
        if (st == QC_OK)
            st = qc_frontend_gauss_sd(&rx, power, nl, params, s->levels);
    } else if (st == QC_OK && strcmp(type->name, "gauss") == 0) {
        if ((st = receiver_of(s, &rx)) == QC_OK && isnan(rx.bandwidth))
            st = qc_fail(QC_EINVAL, "'bandwidth' (Hz) is required for the physical receiver");
        if (st == QC_OK)
            st = qc_frontend_gauss(&rx, power, nl, params, s->levels);
    } else if (st == QC_OK) {
        st = qc_fail(QC_EINVAL, "model '%s' has no physical front end (use gauss, gauss-sd, "
                                "apd, apd-gauss or poisson, or give its parameters)",
                     type->name);
    }
    free(power);
    return st;
}

/* σ of the Gaussian model from a linear SNR = E[x²]/σ² under the law. */
static qc_status sigma_from_snr(const char *key, double snr, const double *levels, size_t nl,
                                const double *probs, double *sigma)
{
    double e2 = 0.0;
    for (size_t i = 0; i < nl; i++)
        e2 += (probs ? probs[i] : 1.0 / (double)nl) * levels[i] * levels[i];
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

/* snr-db or osnr-db (with symbol-rate) → σ of model gauss. */
static qc_status snr_route(const qc_settings *s, const qc_model_type *type, size_t nl,
                           double *params)
{
    const char *key = qc_settings_get(s, "snr-db") ? "snr-db" : "osnr-db";
    if (qc_settings_get(s, "snr-db") && qc_settings_get(s, "osnr-db"))
        return qc_fail(QC_EINVAL, "give 'snr-db' or 'osnr-db', not both");
    int si = qc_model_param_index(type, "sigma");
    if (strcmp(type->name, "gauss") != 0 || si < 0)
        return qc_fail(QC_EINVAL, "%s applies to model 'gauss' only; give the parameters of "
                                  "model '%s' instead",
                       key, type->name);
    if (!isnan(params[si]))
        return qc_fail(QC_EINVAL, "give 'sigma' or '%s', not both", key);
    double db, snr;
    qc_status st = number(s, key, NAN, &db);
    if (st != QC_OK)
        return st;
    if (strcmp(key, "snr-db") == 0) {
        snr = pow(10.0, db / 10.0);
    } else {
        double rs, bref, pol = 2.0;
        if ((st = required(s, "symbol-rate", "with 'osnr-db' (baud)", &rs)) != QC_OK ||
            (st = number(s, "ref-bandwidth", QC_OSNR_REF_BANDWIDTH, &bref)) != QC_OK ||
            (st = number(s, "polarizations", 2.0, &pol)) != QC_OK)
            return st;
        if ((st = qc_osnr_to_snr(db, bref, rs, (int)pol, &snr)) != QC_OK)
            return qc_fail(st, "osnr-db: %s", qc_last_error());
    }
    return sigma_from_snr(key, snr, s->levels, nl, s->probabilities, &params[si]);
}

qc_status qc_settings_build(qc_settings *s, qc_model **model, qc_design_request *req)
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
    int is_table = strcmp(type->name, "table") == 0;

    /* model parameters given directly */
    double params[QC_MODEL_MAX_PARAMS];
    int nparams_given = 0;
    for (size_t i = 0; i < QC_MODEL_MAX_PARAMS; i++)
        params[i] = NAN;
    for (size_t i = 0; i < s->n; i++) {
        if (qc_setting_is_design_key(s->key[i]))
            continue;
        int idx = qc_model_param_index(type, s->key[i]);
        if (idx < 0)
            return qc_fail(QC_EINVAL, "'%s' is not a parameter of model '%s' (see "
                                      "'quantcap models %s')",
                           s->key[i], type->name, type->name);
        qc_status st = qc_parse_double(s->value[i], &params[idx]);
        if (st != QC_OK)
            return qc_fail(st, "%s: %s", s->key[i], qc_last_error());
        nparams_given++;
    }
    if (is_table != (qc_settings_get(s, "table") != NULL))
        return qc_fail(QC_EINVAL, is_table ? "model table needs 'table' (the file of measured "
                                             "densities)"
                                           : "'table' goes with model table only");

    /* levels: a list, a named alphabet, or the table's own */
    size_t nl = 0, np, nt;
    int intensity = 0;
    qc_status st;
    const char *alphabet = qc_settings_get(s, "alphabet");
    if (alphabet && qc_settings_get(s, "levels"))
        return qc_fail(QC_EINVAL, "give 'levels' or 'alphabet', not both");
    if (alphabet)
        st = alphabet_levels(alphabet, &s->levels, &nl, &intensity);
    else
        st = parse_list_key(s, "levels", &s->levels, &nl);
    if (st == QC_OK)
        st = parse_list_key(s, "probabilities", &s->probabilities, &np);
    if (st == QC_OK)
        st = parse_list_key(s, "thresholds", &s->thresholds, &nt);
    if (st != QC_OK)
        return st;

    if (is_table) {
        if ((st = qc_model_table_load(qc_settings_get(s, "table"), model)) != QC_OK)
            return st;
        if (!s->levels) {
            const double *tl;
            if ((st = qc_model_table_levels(*model, &tl, &nl)) != QC_OK)
                goto fail;
            if (!(s->levels = qc_malloc_array(nl, sizeof *s->levels))) {
                st = qc_fail(QC_ENOMEM, "out of memory");
                goto fail;
            }
            memcpy(s->levels, tl, nl * sizeof *tl);
        }
    }
    if (!s->levels)
        return qc_fail(QC_EINVAL, "no levels given (key 'levels' or 'alphabet')");
    if (s->probabilities && np != nl) {
        st = qc_fail(QC_EINVAL, "probabilities: %zu values for %zu levels", np, nl);
        goto fail;
    }

    /* resolution and strategy */
    const char *bits = qc_settings_get(s, "bits"), *cells = qc_settings_get(s, "cells");
    size_t z;
    const char *v;
    if (!bits == !cells) {
        st = qc_fail(QC_EINVAL, "give exactly one of 'bits' and 'cells'");
        goto fail;
    }
    if (bits ? (st = qc_parse_size(bits, 1, QC_MAX_BITS, &z)) != QC_OK
             : (st = qc_parse_size(cells, 2, (size_t)1 << QC_MAX_BITS, &z)) != QC_OK) {
        st = qc_fail(st, "%s: %s", bits ? "bits" : "cells", qc_last_error());
        goto fail;
    }
    req->cells = bits ? (size_t)1 << z : z;
    if ((v = qc_settings_get(s, "objective")) &&
        (st = qc_objective_parse(v, &req->objective)) != QC_OK) {
        st = qc_fail(st, "objective: %s", qc_last_error());
        goto fail;
    }
    if ((v = qc_settings_get(s, "quantizer")) &&
        (st = qc_quantizer_parse(v, &req->quantizer)) != QC_OK) {
        st = qc_fail(st, "quantizer: %s", qc_last_error());
        goto fail;
    }
    if (s->thresholds) {
        if (v && req->quantizer != QC_QUANTIZER_FIXED) {
            st = qc_fail(QC_EINVAL, "thresholds: given thresholds are evaluated as they are; "
                                    "they cannot be combined with quantizer %s",
                         v);
            goto fail;
        }
        req->quantizer = QC_QUANTIZER_FIXED;
        req->nthresholds = nt;
        if (nt + 1 != req->cells) {
            st = qc_fail(QC_EINVAL, "thresholds: %zu thresholds make %zu cells, but %zu cells "
                                    "were asked for",
                         nt, nt + 1, req->cells);
            goto fail;
        }
    } else if (req->quantizer == QC_QUANTIZER_FIXED) {
        st = qc_fail(QC_EINVAL, "quantizer fixed needs 'thresholds'");
        goto fail;
    }
    if ((v = qc_settings_get(s, "fine-cells"))) {
        if ((st = qc_parse_size(v, 2, (size_t)1 << 22, &req->fine_cells)) != QC_OK) {
            st = qc_fail(st, "fine-cells: %s", qc_last_error());
            goto fail;
        }
        if (req->fine_cells < req->cells) {
            st = qc_fail(QC_EINVAL, "fine-cells: the fine grid (%zu cells) must have at least "
                                    "as many cells as the quantizer (%zu)",
                         req->fine_cells, req->cells);
            goto fail;
        }
    }
    if ((v = qc_settings_get(s, "tol")) && (st = qc_parse_double(v, &req->tol_bits)) != QC_OK) {
        st = qc_fail(st, "tol: %s", qc_last_error());
        goto fail;
    }

    /* model parameters: physical receiver, SNR/OSNR, or as given */
    if (!is_table) {
        const char *fk = first_frontend_key(s);
        int snr_keys = qc_settings_get(s, "snr-db") || qc_settings_get(s, "osnr-db");
        if (fk && snr_keys)
            return qc_fail(QC_EINVAL, "give the physical receiver ('%s') or an SNR, not both",
                           fk);
        if (fk && nparams_given)
            return qc_fail(QC_EINVAL, "give the physical receiver ('%s') or the parameters of "
                                      "model '%s', not both",
                           fk, type->name);
        if (fk)
            st = physical_route(s, type, intensity, nl, params);
        else if (snr_keys)
            st = snr_route(s, type, nl, params);
        if (st == QC_OK)
            st = qc_model_alloc(type, params, model);
        if (st != QC_OK)
            return st;
    }
    req->model = *model;
    req->levels = s->levels;
    req->nlevels = nl;
    req->probabilities = s->probabilities;
    req->thresholds = s->thresholds;
    return QC_OK;
fail:
    qc_model_free(*model);
    *model = NULL;
    return st;
}
