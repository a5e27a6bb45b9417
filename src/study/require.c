/* require.c (study) — the inverse question on a set of design settings:
 * the quantity solved for is one settings key (snr-db, osnr-db,
 * received-dbm, a model parameter, a front-end key), and each value tried
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
    "full-scale", "seed", "draws", "transitions", "converter-gain", "converter-offset",
    "channels", "taps", "response", "symbols", "rate-ci", "shaping", "detection", "constellation", "iq-quantizer",
    "amplitude-cells", "phase-cells", "phase-noise-law", NULL,
};

const char *qc_setting_db_unit(const char *key)
{
    size_t n = key ? strlen(key) : 0;
    if (n > 4 && strcmp(key + n - 4, "-dbm") == 0)
        return " dBm";
    if (n > 3 && strcmp(key + n - 3, "-db") == 0)
        return " dB";
    return NULL;
}

int qc_setting_in_db(const char *key) { return qc_setting_db_unit(key) != NULL; }

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
                                      "snr-db, osnr-db, received-dbm or a numeric model or "
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
    /* an amplified fibre link: the penalty in reach (10 log10 of the ratio) */
    if (qc_settings_get(s, "span-km") && (qc_settings_get(s, "spans") ||
                                          qc_settings_get(s, "length-km")))
        return qc_settings_get(s, "spans") ? "spans" : "length-km";
    /* an unamplified intensity link: the launch power sets the received
     * power dB for dB, so its penalty is the receiver's power penalty */
    if (!qc_settings_get(s, "span-km") && qc_settings_get(s, "launch-dbm"))
        return "launch-dbm";
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

#define PHASE_NOISE_LO_DEG 0.1 /* default search of phase-noise-deg (log scale) */
#define PHASE_NOISE_HI_DEG 30.0
#define DB_HALF_RANGE 30.0  /* dB either side of an operating value      */
#define LINEAR_DECADES 3.0  /* decades either side of an operating value */

#define MAX_REACH_SPANS 1000.0 /* longest amplified link searched, in spans */
#define LAUNCH_BELOW_DB 30.0    /* launch powers searched below the optimum  */

#define MIN_LINK_KM 0.01 /* shortest intensity link searched: 10 m */

/* An unamplified intensity link (launch-dbm given): length-km from 10 m
 * up to the length whose losses reach QC_LINK_MAX_LOSS_DB. */
static qc_status intensity_range(const qc_settings *s, const char *key, double *lo,
                                 double *hi, int *done)
{
    static const char *const others[] = {"connector-loss-db", "splice-loss-db", "penalty-db",
                                         NULL};
    if (strcmp(key, "length-km") != 0 || !qc_settings_get(s, "launch-dbm"))
        return QC_OK;
    double alpha = 0.2, fixed = 0.0, v;
    qc_status st;
    if (qc_settings_get(s, "loss-db-km") &&
        (st = qc_parse_double(qc_settings_get(s, "loss-db-km"), &alpha)) != QC_OK)
        return qc_fail(st, "loss-db-km: %s", qc_last_error());
    for (size_t i = 0; others[i]; i++)
        if (qc_settings_get(s, others[i])) {
            if ((st = qc_parse_double(qc_settings_get(s, others[i]), &v)) != QC_OK)
                return qc_fail(st, "%s: %s", others[i], qc_last_error());
            fixed += v;
        }
    double longest = (QC_LINK_MAX_LOSS_DB - fixed) / alpha * (1.0 - 1e-9);
    if (!(alpha > 0.0) || !(longest > MIN_LINK_KM))
        return qc_fail(QC_EINVAL, "give the search range of length-km (no fibre length "
                                  "below the %g dB loss limit to search)",
                       QC_LINK_MAX_LOSS_DB);
    *lo = MIN_LINK_KM;
    *hi = longest;
    *done = 1;
    return QC_OK;
}

#define RANGE_FACTOR 30.0    /* range-km searched either way of its value:
                                ±29.5 dB of received power              */
#define FAR_FIELD_FACTOR 2.0 /* shortest range searched: twice the range
                                where the range equation delivers all    */

/* A free-space link: range-km from twice the far-field boundary
 * π·D_t·D_r/(4λ) (or the operating value / 30, if longer) up to the
 * operating value × 30 (or 10^6 boundaries). */
static qc_status free_space_range(const qc_settings *s, double *lo, double *hi, int *done)
{
    static const char *const keys[] = {"tx-aperture-m", "rx-aperture-m", "wavelength-nm"};
    double v[3];
    for (size_t i = 0; i < 3; i++) {
        const char *t = qc_settings_get(s, keys[i]);
        if (!t)
            return QC_OK; /* the build names what is missing */
        qc_status st = qc_parse_double(t, &v[i]);
        if (st != QC_OK)
            return qc_fail(st, "%s: %s", keys[i], qc_last_error());
    }
    double boundary_km = 3.14159265358979323846 * v[0] * v[1] / (4.0 * v[2] * 1e-9) * 1e-3;
    double op = NAN;
    const char *t = qc_settings_get(s, "range-km");
    if (t && qc_parse_double(t, &op) != QC_OK)
        op = NAN;
    *lo = FAR_FIELD_FACTOR * boundary_km;
    *hi = boundary_km * 1e6;
    if (isfinite(op) && op > 0.0) {
        *lo = fmax(*lo, op / RANGE_FACTOR);
        *hi = op * RANGE_FACTOR;
    }
    if (!(*hi > *lo))
        return qc_fail(QC_EINVAL, "give the search range of range-km (the operating range is "
                                  "too close to the near field)");
    *done = 1;
    return QC_OK;
}

/* The amplified fibre link's default ranges: the launch power from 30 dB
 * below the optimum up to it (above it the SNR falls again), the spans
 * from 1 to 1000, the length from one span to 1000. *done 0: not a key
 * of the fibre link. */
static qc_status fibre_range(const qc_settings *s, const char *key, double *lo, double *hi,
                             int *done)
{
    *done = 0;
    if (strcmp(key, "range-km") == 0)
        return free_space_range(s, lo, hi, done);
    if (!qc_settings_get(s, "span-km"))
        return intensity_range(s, key, lo, hi, done);
    double span;
    qc_status st = qc_parse_double(qc_settings_get(s, "span-km"), &span);
    if (st != QC_OK)
        return qc_fail(st, "span-km: %s", qc_last_error());
    if (strcmp(key, "spans") == 0 || strcmp(key, "length-km") == 0) {
        double unit = strcmp(key, "spans") == 0 ? 1.0 : span;
        *lo = unit;
        *hi = unit * MAX_REACH_SPANS;
        *done = 1;
        return QC_OK;
    }
    if (strcmp(key, "launch-dbm") != 0)
        return QC_OK;
    qc_settings *copy = NULL;
    qc_model *m = NULL;
    qc_design_request req;
    st = qc_settings_copy(s, &copy);
    if (st == QC_OK)
        st = qc_settings_build(copy, &m, &req);
    if (st == QC_OK && !isfinite(copy->fibre.optimum_launch_dbm))
        st = qc_fail(QC_EINVAL, "give the search range of launch-dbm (a linear link has no "
                                "optimum launch power to search below)");
    if (st == QC_OK) {
        *hi = copy->fibre.optimum_launch_dbm;
        *lo = *hi - LAUNCH_BELOW_DB;
        *done = 1;
    }
    qc_model_free(m);
    qc_settings_free(copy);
    return st;
}

qc_status qc_settings_require_range(const qc_settings *s, const char *key, double *lo,
                                    double *hi)
{
    *lo = *hi = NAN;
    int done;
    qc_status fst = fibre_range(s, key, lo, hi, &done);
    if (fst != QC_OK || done)
        return fst;
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
    } else if (strcmp(key, "received-dbm") == 0 || strcmp(key, "peak-dbm") == 0) {
        *lo = -60.0;
        *hi = 20.0;
    } else if (strcmp(key, "phase-noise-deg") == 0) {
        *lo = PHASE_NOISE_LO_DEG; /* the tolerance of a 2-D receiver */
        *hi = PHASE_NOISE_HI_DEG;
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

/* qc_settings_require, or with penalty_only set (qc_require_request) for
 * the penalty at a FEC target alone. */
static qc_status settings_require(const qc_settings *s, const char *key,
                                  const qc_target *target, double lo, double hi,
                                  const char *unit, int penalty_only, qc_require_result *res)
{
    memset(res, 0, sizeof *res);
    res->required = res->unquantized_required = res->penalty_db = NAN;
    res->best_value = res->best_figure = NAN;
    qc_status st = qc_setting_check_solvable(key);
    if (st != QC_OK)
        return st;
    qc_settings *base = NULL; /* without the key's alternatives (osnr-db for snr-db) */
    if ((st = qc_settings_copy(s, &base)) != QC_OK)
        return st;
    qc_settings_drop_alternatives(base, key);
    builder b = {.base = base, .key = key};
    qc_require_request rq = {.target = *target, .build = build_at, .ctx = &b, .lo = lo,
                             .hi = hi, .linear = !qc_setting_in_db(key), .name = key,
                             .unit = unit, .penalty_only = penalty_only};
    st = qc_require(&rq, res);
    builder_clear(&b);
    qc_settings_free(base);
    return st;
}

qc_status qc_settings_require(const qc_settings *s, const char *key, const qc_target *target,
                              double lo, double hi, const char *unit, qc_require_result *res)
{
    return settings_require(s, key, target, lo, hi, unit, 0, res);
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
    const char *unit = qc_setting_db_unit(out->key);
    double lo, hi;
    qc_require_result r;
    qc_status st = qc_settings_require_range(s, out->key, &lo, &hi);
    if (st == QC_OK)
        st = settings_require(s, out->key, &t, lo, hi, unit, 1, &r);
    if (st == QC_ENOMEM)
        return st;
    if (st != QC_OK)
        snprintf(out->note, sizeof out->note, "%s", qc_last_error());
    else if (r.unquantized_note)
        snprintf(out->note, sizeof out->note, "%s", r.unquantized_note);
    else if (!isfinite(r.penalty_db))
        snprintf(out->note, sizeof out->note,
                 "the unquantized receiver meets the target over the whole search range "
                 "of %s, %g%s to %g%s",
                 out->key, lo, unit ? unit : "", hi, unit ? unit : "");
    else
        out->db = r.penalty_db;
    return QC_OK;
}
