/* require.c (study) — the inverse question on a set of design settings:
 * the quantity solved for is one settings key (snr-db, osnr-db,
 * power-dbm, a model parameter, a front-end key), and each value tried
 * is the settings with that key replaced, built exactly as `quantcap
 * design` builds them; the search itself is qc_require
 * (src/design/require.c: samples, then Brent's method). */
#include "study/settings_internal.h"

#include <math.h>
#include <stdio.h>
#include <string.h>

/* Keys that are not a continuous quantity to solve for. */
static const char *const not_solvable[] = {
    "model", "levels", "probabilities", "bits", "cells", "objective", "quantizer",
    "fine-cells", "keep-decisions", "thresholds", "tol", "alphabet", "table", "level-grid",
    "optimize-levels", "level-starts", "blocklength", "error-rate", "polarizations", "fec",
    "full-scale", "seed", "draws", "transitions", "converter-gain", "converter-offset", NULL,
};

int qc_setting_in_db(const char *key)
{
    size_t n = key ? strlen(key) : 0;
    return (n > 3 && strcmp(key + n - 3, "-db") == 0) ||
           (n > 4 && strcmp(key + n - 4, "-dbm") == 0);
}

qc_status qc_setting_check_solvable(const char *key)
{
    if (!qc_setting_known(key)) {
        const char *near = qc_setting_suggest(key);
        return near ? qc_fail(QC_EINVAL, "unknown key '%s' (did you mean '%s'?)", key, near)
                    : qc_fail(QC_EINVAL, "unknown key '%s'", key ? key : "");
    }
    for (size_t i = 0; not_solvable[i]; i++)
        if (strcmp(not_solvable[i], key) == 0)
            return qc_fail(QC_EINVAL, "'%s' is not a continuous quantity to solve for (use "
                                      "snr-db, osnr-db, power-dbm or a numeric model or "
                                      "front-end key)",
                           key);
    return QC_OK;
}

qc_status qc_settings_with(const qc_settings *s, const char *key, double value,
                           qc_settings **out)
{
    char text[64];
    snprintf(text, sizeof text, "%.17g", value);
    qc_status st = qc_settings_copy(s, out);
    if (st == QC_OK && (st = qc_settings_set(*out, key, text)) != QC_OK) {
        qc_settings_free(*out);
        *out = NULL;
    }
    return st;
}

const char *qc_settings_penalty_key(const qc_settings *s, const char **why)
{
    static const char *const keys[] = {"peak-dbm", "received-dbm", "snr-db", "osnr-db",
                                       "signal", NULL};
    *why = NULL;
    const char *model = qc_settings_get(s, "model");
    if (model && strcmp(model, "table") == 0) {
        *why = "a measured table has no quantity to solve for";
        return NULL;
    }
    for (size_t i = 0; keys[i]; i++)
        if (qc_settings_get(s, keys[i]))
            return keys[i];
    if (qc_settings_get(s, "sigma"))
        *why = "the operating point is given by 'sigma', a noise level: give it as snr-db "
               "(or osnr-db) to solve for";
    else
        *why = "the model's parameters are given directly, none of them an operating key "
               "to solve for (snr-db, osnr-db, received-dbm, peak-dbm or signal, as the "
               "model takes them)";
    return NULL;
}

#define DB_HALF_RANGE 30.0  /* dB either side of an operating value      */
#define LINEAR_DECADES 3.0  /* decades either side of an operating value */

qc_status qc_settings_require_range(const qc_settings *s, const char *key, double *lo,
                                    double *hi)
{
    *lo = *hi = NAN;
    const int linear = !qc_setting_in_db(key);
    const char *v = qc_settings_get(s, key);
    double op = NAN;
    if (v && qc_parse_double(v, &op) != QC_OK)
        return qc_fail(QC_EINVAL, "%s: '%s' is not a number", key, v);
    if (!isnan(op)) {
        if (linear && !(op > 0.0))
            return qc_fail(QC_EINVAL, "give the search range of %s (its value %g cannot "
                                      "centre a log-scale search)",
                           key, op);
        *lo = linear ? op * pow(10.0, -LINEAR_DECADES) : op - DB_HALF_RANGE;
        *hi = linear ? op * pow(10.0, LINEAR_DECADES) : op + DB_HALF_RANGE;
        return QC_OK;
    }
    if (strcmp(key, "snr-db") == 0) {
        *lo = -20.0;
        *hi = 40.0;
    } else if (strcmp(key, "osnr-db") == 0) {
        *lo = 0.0;
        *hi = 50.0;
    } else if (strcmp(key, "power-dbm") == 0 || strcmp(key, "peak-dbm") == 0) {
        *lo = -60.0;
        *hi = 20.0;
    } else {
        return qc_fail(QC_EINVAL, "give the search range of %s (no operating value to search "
                                  "around)",
                       key);
    }
    return QC_OK;
}

typedef struct {
    const qc_settings *base;
    const char *key;
    qc_settings *now; /* the settings of the last build (the request points in) */
    qc_model *model;
} builder;

static void builder_clear(builder *b)
{
    qc_model_free(b->model);
    qc_settings_free(b->now);
    b->model = NULL;
    b->now = NULL;
}

static qc_status build_at(void *ctx, double value, const qc_model **model,
                          qc_design_request *req)
{
    builder *b = ctx;
    builder_clear(b);
    qc_status st = qc_settings_with(b->base, b->key, value, &b->now);
    if (st == QC_OK)
        st = qc_settings_build(b->now, &b->model, req);
    *model = b->model;
    return st;
}

qc_status qc_settings_require(const qc_settings *s, const char *key, const qc_target *target,
                              double lo, double hi, const char *unit, qc_require_result *res)
{
    memset(res, 0, sizeof *res);
    res->required = res->unquantized_required = res->penalty_db = NAN;
    res->best_value = res->best_figure = NAN;
    qc_status st = qc_setting_check_solvable(key);
    if (st != QC_OK)
        return st;
    builder b = {.base = s, .key = key};
    qc_require_request rq = {.target = *target, .build = build_at, .ctx = &b, .lo = lo,
                             .hi = hi, .linear = !qc_setting_in_db(key), .name = key,
                             .unit = unit};
    st = qc_require(&rq, res);
    builder_clear(&b);
    return st;
}

qc_status qc_settings_fec_penalty(const qc_settings *s, const qc_fec *fec, qc_fec_penalty *out)
{
    const char *why = NULL;
    out->db = NAN;
    out->note[0] = '\0';
    out->key = qc_settings_penalty_key(s, &why);
    if (!out->key) {
        snprintf(out->note, sizeof out->note, "%s", why);
        return QC_OK;
    }
    qc_target t;
    memset(&t, 0, sizeof t);
    t.fec = *fec;
    t.from_fec = 1;
    t.kind = fec->kind == QC_FEC_HARD ? QC_TARGET_BER : QC_TARGET_NGMI;
    t.value = fec->threshold;
    size_t kl = strlen(out->key);
    const char *unit = !qc_setting_in_db(out->key)                       ? NULL
                       : kl > 4 && strcmp(out->key + kl - 4, "-dbm") == 0 ? " dBm"
                                                                          : " dB";
    double lo, hi;
    qc_require_result r;
    qc_status st = qc_settings_require_range(s, out->key, &lo, &hi);
    if (st == QC_OK)
        st = qc_settings_require(s, out->key, &t, lo, hi, unit, &r);
    if (st == QC_ENOMEM)
        return st;
    if (st != QC_OK)
        snprintf(out->note, sizeof out->note, "%s", qc_last_error());
    else if (!isfinite(r.penalty_db))
        snprintf(out->note, sizeof out->note,
                 "the unquantized receiver meets the target over the whole search range "
                 "of %s, %g%s to %g%s",
                 out->key, lo, unit ? unit : "", hi, unit ? unit : "");
    else
        out->db = r.penalty_db;
    return QC_OK;
}
