/* settings_plane.c — settings of a two-dimensional constellation through
 * a coherent receiver: the constellation (alphabet qam:M, psk:M, apsk:...,
 * hex:M, or a point file), its labels (given, Gray, else searched by
 * binary switching: Schreckenbach, Görtz, Hagenauer, Bauch, GLOBECOM
 * 2003), the noise per quadrature from Es/N0, the residual phase error,
 * and the receiver: the I/Q pair (iq-quantizer product, bits or cells per
 * axis) or the polar quantizer (amplitude-cells × phase-cells, or bits).
 * One reader of these keys for `design`, `require`, `sweep` and `iq`: it
 * fills a design request with channel.iq (src/design/iq_entry.c). */
#include "study/settings_internal.h"

#include "quantcap/iq.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#define PI 3.14159265358979323846

/* Keys that make settings two-dimensional (with a 2-D alphabet). */
static const char *const plane_keys[] = {"constellation", "iq-quantizer", "amplitude-cells",
                                         "phase-cells", "phase-noise-deg", "phase-noise-law",
                                         NULL};

/* Named constellations that exist only in the plane. */
static const char *const plane_alphabets[] = {"apsk:", "hex:", "psk:", NULL};

/* Keys a two-dimensional design takes besides the model's parameters. */
static const char *const plane_takes[] = {
    "model", "alphabet", "constellation", "snr-db", "bits", "cells", "objective", "quantizer",
    "thresholds", "tol", "iq-quantizer", "amplitude-cells", "phase-cells", "phase-noise-deg",
    "phase-noise-law", "symbol-rate", "polarizations", "fec", NULL,
};

static int prefixed(const char *v, const char *const *prefixes)
{
    for (size_t i = 0; v && prefixes[i]; i++)
        if (strncmp(v, prefixes[i], strlen(prefixes[i])) == 0)
            return 1;
    return 0;
}

static int listed(const char *key, const char *const *keys)
{
    for (size_t i = 0; keys[i]; i++)
        if (strcmp(keys[i], key) == 0)
            return 1;
    return 0;
}

const char *qc_settings_plane_reason(const qc_settings *s)
{
    const char *a = qc_settings_get(s, "alphabet");
    if (prefixed(a, plane_alphabets))
        return "alphabet";
    for (size_t i = 0; plane_keys[i]; i++)
        if (qc_settings_get(s, plane_keys[i]))
            return plane_keys[i];
    return NULL;
}

static qc_status whole(const qc_settings *s, const char *key, size_t lo, size_t hi, size_t *out)
{
    const char *v = qc_settings_get(s, key);
    *out = 0;
    if (!v)
        return QC_OK;
    qc_status st = qc_parse_size(v, lo, hi, out);
    return st == QC_OK ? st : qc_fail(st, "%s: %s", key, qc_last_error());
}

/* Every key given must be one a 2-D design takes (or a model parameter). */
static qc_status check_keys(const qc_settings *s, const qc_model_type *type, const char *why)
{
    for (size_t i = 0; i < s->n; i++) {
        const char *k = s->key[i];
        if (listed(k, plane_takes) || qc_model_param_index(type, k) >= 0)
            continue;
        return qc_fail(QC_EINVAL, "'%s' does not apply to a two-dimensional constellation "
                                  "(made so by '%s'); it takes: snr-db or sigma, bits or "
                                  "cells, iq-quantizer, amplitude-cells, phase-cells, "
                                  "phase-noise-deg, phase-noise-law, objective, quantizer, "
                                  "thresholds, tol, symbol-rate, polarizations, fec",
                       k, why);
    }
    return QC_OK;
}

/* The constellation: a 2-D alphabet or a point file. */
static qc_status plane_of(qc_settings *s, const char *why)
{
    const char *a = qc_settings_get(s, "alphabet"), *f = qc_settings_get(s, "constellation");
    qc_status st;
    if (a && f)
        return qc_fail(QC_EINVAL, "give 'alphabet' or 'constellation' (a file of points), "
                                  "not both");
    if (!a && !f)
        return qc_fail(QC_EINVAL, "'%s' needs a two-dimensional constellation: alphabet "
                                  "qam:M, psk:M, apsk:R1/N1,... or hex:M, or constellation FILE",
                       why);
    if (a && strncmp(a, "qam:", 4) != 0 && !prefixed(a, plane_alphabets) &&
        strcmp(why, "alphabet") == 0)
        return qc_fail(QC_EINVAL, "alphabet %s is one-dimensional: give a constellation in "
                                  "the plane (qam:M, psk:M, apsk:R1/N1,..., hex:M or "
                                  "constellation FILE)",
                       a);
    if (a && strncmp(a, "qam:", 4) != 0 && !prefixed(a, plane_alphabets))
        return qc_fail(QC_EINVAL, "'%s' applies to a two-dimensional constellation; alphabet "
                                  "%s is one-dimensional (give qam:M, psk:M, apsk:R1/N1,..., "
                                  "hex:M or constellation FILE)",
                       why, a);
    if (qc_settings_get(s, "levels") || qc_settings_get(s, "level-grid"))
        return qc_fail(QC_EINVAL, "'%s' makes the constellation two-dimensional; 'levels' and "
                                  "'level-grid' are one-dimensional",
                       why);
    st = a ? qc_plane_parse(a, &s->plane) : qc_plane_read(f, &s->plane);
    if (st != QC_OK)
        return qc_fail(st, "%s: %s", a ? "alphabet" : "constellation", qc_last_error());
    if (!(qc_plane_energy(s->plane) > 0.0))
        return qc_fail(QC_EINVAL, "%s: the constellation has zero energy (every point at 0)",
                       a ? "alphabet" : "constellation");
    return QC_OK;
}

/* σ per quadrature from snr-db (Es/N0 = E|x|²/(2σ²)) or the model's sigma. */
static qc_status sigma_of(const qc_settings *s, const qc_model_type *type, double *params)
{
    int si = qc_model_param_index(type, "sigma");
    const char *snr = qc_settings_get(s, "snr-db");
    if (snr && !isnan(params[si]))
        return qc_fail(QC_EINVAL, "give 'sigma' or 'snr-db', not both");
    if (!snr && isnan(params[si]))
        return qc_fail(QC_EINVAL, "give 'snr-db' (Es/N0 = E|x|^2/(2 sigma^2)) or 'sigma' (per "
                                  "quadrature)");
    if (!snr)
        return QC_OK;
    double db;
    qc_status st = qc_settings_number(s, "snr-db", NAN, &db);
    if (st != QC_OK)
        return st;
    double sigma = sqrt(qc_plane_energy(s->plane) / (2.0 * pow(10.0, db / 10.0)));
    if (!(sigma > 0.0) || !isfinite(sigma))
        return qc_fail(QC_EINVAL, "snr-db: %g dB leaves no usable noise level", db);
    params[si] = sigma;
    return QC_OK;
}

/* The receiver's cells: the I/Q pair (bits or cells per axis, or given
 * thresholds) or the polar quantizer (amplitude-cells × phase-cells, or
 * bits: the I/Q pair's 2B output bits, B − 1 for the amplitude and B + 1
 * for the phase). */
static qc_status receiver_of(qc_settings *s, qc_design_request *req)
{
    const char *v = qc_settings_get(s, "iq-quantizer");
    qc_status st;
    s->iq.kind = QC_IQ_PRODUCT;
    if (v && (st = qc_iq_kind_parse(v, &s->iq.kind)) != QC_OK)
        return qc_fail(st, "iq-quantizer: %s", qc_last_error());
    size_t bits = 0, cells = 0, na = 0, np = 0;
    if ((st = whole(s, "bits", 1, 6, &bits)) != QC_OK ||
        (st = whole(s, "cells", 2, 64, &cells)) != QC_OK ||
        (st = whole(s, "amplitude-cells", 1, 256, &na)) != QC_OK ||
        (st = whole(s, "phase-cells", 1, 1024, &np)) != QC_OK)
        return st;
    if (bits && cells)
        return qc_fail(QC_EINVAL, "give one of 'bits' and 'cells', not both");
    const char *t = qc_settings_get(s, "thresholds");
    if (s->iq.kind == QC_IQ_PRODUCT) {
        if (na || np)
            return qc_fail(QC_EINVAL, "'%s' applies to the polar receiver (iq-quantizer "
                                      "polar); the I/Q pair takes 'bits' or 'cells' per axis",
                           na ? "amplitude-cells" : "phase-cells");
        if (t) {
            size_t n;
            if ((st = qc_parse_list(t, &s->thresholds, &n)) != QC_OK)
                return qc_fail(st, "thresholds: %s", qc_last_error());
            if (bits || cells)
                return qc_fail(QC_EINVAL, "thresholds set the cells (%zu per axis); leave out "
                                          "'bits' and 'cells'",
                               n + 1);
            req->quantizer.thresholds = s->thresholds;
            req->quantizer.nthresholds = n;
            req->quantizer.cells = n + 1;
            return QC_OK;
        }
        if (!bits && !cells)
            return qc_fail(QC_EINVAL, "the I/Q pair (iq-quantizer product) needs 'bits' or "
                                      "'cells' per axis (or 'thresholds')");
        req->quantizer.cells = bits ? (size_t)1 << bits : cells;
        return QC_OK;
    }
    if (t)
        return qc_fail(QC_EINVAL, "thresholds: given thresholds are those of the I/Q pair "
                                  "(iq-quantizer product)");
    if (cells)
        return qc_fail(QC_EINVAL, "'cells' counts the I/Q pair's cells per axis; the polar "
                                  "receiver takes 'amplitude-cells' and 'phase-cells' (or "
                                  "'bits')");
    if (bits && (na || np))
        return qc_fail(QC_EINVAL, "give 'bits' or 'amplitude-cells' and 'phase-cells' for "
                                  "the polar receiver, not both");
    if (bits) {
        na = (size_t)1 << (bits - 1);
        np = (size_t)1 << (bits + 1);
    }
    if (!na || !np)
        return qc_fail(QC_EINVAL, "the polar receiver (iq-quantizer polar) needs "
                                  "'amplitude-cells' and 'phase-cells' (or 'bits')");
    if (na * np < 2)
        return qc_fail(QC_EINVAL, "the polar receiver needs at least 2 cells (got 1 x 1)");
    if (na * np > QC_IQ_MAX_CELLS)
        return qc_fail(QC_EINVAL, "the polar receiver has at most %d cells (got %zu x %zu)",
                       QC_IQ_MAX_CELLS, na, np);
    s->iq.amplitude_cells = na;
    s->iq.phase_cells = np;
    req->quantizer.cells = na * np;
    return QC_OK;
}

static qc_status phase_noise_of(qc_settings *s)
{
    double deg;
    qc_status st = qc_settings_number(s, "phase-noise-deg", 0.0, &deg);
    if (st != QC_OK)
        return st;
    const char *law = qc_settings_get(s, "phase-noise-law");
    s->iq.phase_law = QC_PHASE_GAUSS;
    if (law && !(deg > 0.0))
        return qc_fail(QC_EINVAL, "'phase-noise-law' goes with 'phase-noise-deg' above 0");
    if (law && (st = qc_phase_law_parse(law, &s->iq.phase_law)) != QC_OK)
        return qc_fail(st, "phase-noise-law: %s", qc_last_error());
    s->iq.phase_sd = deg * PI / 180.0;
    return QC_OK;
}

/* Labels: given or Gray, else searched (fixed seed: the same labels on
 * every run) when the constellation is small enough. */
static qc_status labels_of(qc_settings *s, double sigma)
{
    s->iq.labelling = s->plane->labelling;
    if (s->plane->labels || s->plane->size < 2 || s->plane->size > QC_SETTINGS_MAX_SEARCH_LABELS)
        return QC_OK;
    qc_status st = qc_plane_search_labels(s->plane, sigma, QC_SETTINGS_LABEL_RESTARTS,
                                          QC_SETTINGS_LABEL_SEED, NULL);
    s->iq.labelling = s->plane->labelling;
    return st;
}

qc_status qc_settings_plane_build(qc_settings *s, const qc_model_type *type, const char *why,
                                  qc_model_cache *cache, const qc_model **model,
                                  qc_design_request *req)
{
    *model = NULL;
    int si = qc_model_param_index(type, "sigma");
    if (si < 0 || !(type->properties & QC_MODEL_ADDITIVE_GAUSSIAN) ||
        (type->properties & QC_MODEL_INTENSITY))
        return qc_fail(QC_EINVAL, "'%s' makes the constellation two-dimensional, which goes "
                                  "through circular Gaussian noise: give model gauss (model "
                                  "'%s' has no 'sigma' per quadrature)",
                       why, type->name);
    qc_status st = check_keys(s, type, why);
    if (st != QC_OK)
        return st;
    double params[QC_MODEL_MAX_PARAMS];
    for (size_t i = 0; i < QC_MODEL_MAX_PARAMS; i++)
        params[i] = NAN;
    for (size_t i = 0; i < s->n; i++) {
        int idx = qc_model_param_index(type, s->key[i]);
        if (idx >= 0 && (st = qc_settings_number(s, s->key[i], NAN, &params[idx])) != QC_OK)
            return st;
    }
    memset(&s->iq, 0, sizeof s->iq);
    const char *v;
    if ((st = plane_of(s, why)) != QC_OK || (st = sigma_of(s, type, params)) != QC_OK ||
        (st = phase_noise_of(s)) != QC_OK || (st = receiver_of(s, req)) != QC_OK ||
        (st = labels_of(s, params[si])) != QC_OK)
        return st;
    s->iq.plane = s->plane;
    if ((v = qc_settings_get(s, "objective")) &&
        (st = qc_objective_parse(v, &req->input.objective)) != QC_OK)
        return qc_fail(st, "objective: %s", qc_last_error());
    if (req->input.objective == QC_OBJECTIVE_GMI && !s->plane->labels)
        return qc_fail(QC_EINVAL, "objective gmi: the constellation has no labels (more than "
                                  "%d points: none are searched)",
                       QC_SETTINGS_MAX_SEARCH_LABELS);
    if ((v = qc_settings_get(s, "quantizer")) &&
        (st = qc_quantizer_parse(v, &req->quantizer.kind)) != QC_OK)
        return qc_fail(st, "quantizer: %s", qc_last_error());
    if (s->thresholds) {
        if (v && req->quantizer.kind != QC_QUANTIZER_FIXED)
            return qc_fail(QC_EINVAL, "thresholds: given thresholds are evaluated as they are; "
                                      "they cannot be combined with quantizer %s",
                           v);
        req->quantizer.kind = QC_QUANTIZER_FIXED;
    } else if (req->quantizer.kind == QC_QUANTIZER_FIXED) {
        return qc_fail(QC_EINVAL, "quantizer fixed needs 'thresholds'");
    }
    if (req->quantizer.kind != QC_QUANTIZER_OPTIMAL &&
        req->quantizer.kind != QC_QUANTIZER_UNIFORM && req->quantizer.kind != QC_QUANTIZER_FIXED)
        return qc_fail(QC_EINVAL, "quantizer %s: a two-dimensional receiver takes optimal "
                                  "(cells designed for the objective), uniform (the uniform "
                                  "cells) or fixed (thresholds of the I/Q pair)",
                       qc_quantizer_name(req->quantizer.kind));
    double tol = NAN, rs = NAN, pol = NAN;
    if ((st = qc_settings_number(s, "tol", NAN, &tol)) != QC_OK ||
        (st = qc_settings_number(s, "symbol-rate", NAN, &rs)) != QC_OK ||
        (st = qc_settings_number(s, "polarizations", NAN, &pol)) != QC_OK)
        return st;
    if (!isnan(tol))
        req->numerics.tol_bits = tol;
    req->channel.symbol_rate = isnan(rs) ? 0.0 : rs;
    req->channel.polarizations = isnan(pol) ? 0 : (unsigned)pol;
    if ((v = qc_settings_get(s, "fec"))) {
        if ((st = qc_fec_parse(v, &s->fec)) != QC_OK)
            return qc_fail(st, "%s", qc_last_error());
        req->input.fec = &s->fec;
    }
    if ((st = qc_settings_model_get(cache, type, params, NULL, model)) != QC_OK)
        return st;
    req->channel.model = *model;
    req->channel.dimensions = 2;
    req->channel.iq = &s->iq;
    return QC_OK;
}

qc_status qc_settings_plane_channel(qc_settings *s, int search_labels, const qc_plane **plane,
                                    qc_iq_noise *noise, double *snr_db)
{
    *plane = NULL;
    qc_settings_free_lists(s);
    memset(&s->iq, 0, sizeof s->iq);
    const char *why = qc_settings_plane_reason(s);
    double sigma = NAN, db = NAN;
    qc_status st = plane_of(s, why ? why : "alphabet");
    if (st != QC_OK)
        return st;
    if (qc_settings_get(s, "snr-db") && qc_settings_get(s, "sigma"))
        return qc_fail(QC_EINVAL, "give 'sigma' or 'snr-db', not both");
    if ((st = qc_settings_number(s, "snr-db", NAN, &db)) != QC_OK ||
        (st = qc_settings_number(s, "sigma", NAN, &sigma)) != QC_OK)
        return st;
    const double es = qc_plane_energy(s->plane);
    if (!isnan(db)) {
        sigma = sqrt(es / (2.0 * pow(10.0, db / 10.0)));
        if (!(sigma > 0.0) || !isfinite(sigma))
            return qc_fail(QC_EINVAL, "snr-db: %g dB leaves no usable noise level", db);
    } else if (isnan(sigma)) {
        return qc_fail(QC_EINVAL, "give 'snr-db' (Es/N0 = E|x|^2/(2 sigma^2)) or 'sigma' (per "
                                  "quadrature)");
    } else if (!(sigma > 0.0)) {
        return qc_fail(QC_EINVAL, "sigma: must be > 0 (got %g)", sigma);
    } else {
        db = 10.0 * log10(es / (2.0 * sigma * sigma));
    }
    if ((st = phase_noise_of(s)) != QC_OK)
        return st;
    if (search_labels && s->plane->labels && s->plane->size <= QC_SETTINGS_MAX_SEARCH_LABELS &&
        (st = qc_plane_search_labels(s->plane, sigma, QC_SETTINGS_LABEL_RESTARTS,
                                     QC_SETTINGS_LABEL_SEED, NULL)) != QC_OK)
        return st;
    if ((st = labels_of(s, sigma)) != QC_OK)
        return st;
    *noise = (qc_iq_noise){sigma, s->iq.phase_sd, s->iq.phase_law};
    *snr_db = db;
    *plane = s->plane;
    return QC_OK;
}
