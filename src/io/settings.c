/* settings.c — the key = value vocabulary of a design, shared by the
 * `design` command's flags and by scenario files: each key's value is
 * checked when it is set, and the whole set is turned into a model and a
 * design request by qc_settings_build. */
#include "core/internal.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

typedef enum { K_TEXT, K_NUMBER, K_LIST, K_WHOLE, K_CHOICE } key_kind;

typedef struct {
    qc_setting_info info;
    key_kind kind;
    size_t lo, hi;        /* K_WHOLE range                        */
    const char *choices;  /* K_CHOICE: comma-separated             */
} key_spec;

static const key_spec keys[] = {
    {{"model", "NAME", "noise model (see 'quantcap models')"}, K_TEXT, 0, 0, NULL},
    {{"levels", "L1,...,Ln", "transmitted levels (model units)"}, K_LIST, 0, 0, NULL},
    {{"probabilities", "P1,...,Pn", "input law for the mi objective (default uniform)"},
     K_LIST, 0, 0, NULL},
    {{"snr-db", "X", "set sigma from the SNR E[x^2]/sigma^2 in dB (model gauss)"},
     K_NUMBER, 0, 0, NULL},
    {{"bits", "B", "ADC resolution: 2^B cells (1..16)"}, K_WHOLE, 1, QC_MAX_BITS, NULL},
    {{"cells", "K", "number of quantizer cells (2..65536)"}, K_WHOLE, 2,
     (size_t)1 << QC_MAX_BITS, NULL},
    {{"objective", "mi|capacity", "rate to maximize (default mi)"}, K_CHOICE, 0, 0,
     "mi,capacity"},
    {{"quantizer", "NAME",
      "threshold strategy: optimal, uniform, lloyd-max, fixed (default optimal)"},
     K_CHOICE, 0, 0, "optimal,uniform,lloyd-max,fixed"},
    {{"thresholds", "T1,...,Tk", "evaluate these thresholds (quantizer fixed)"}, K_LIST, 0,
     0, NULL},
    {{"tol", "T", "certification tolerance in bits (default 1e-9)"}, K_NUMBER, 0, 0, NULL},
};

#define NKEYS (sizeof keys / sizeof keys[0])
#define MAX_ENTRIES 64
#define VALUE_MAX 65536

struct qc_settings {
    size_t n;
    char *key[MAX_ENTRIES];
    char *value[MAX_ENTRIES];
    /* parsed lists, owned, refreshed by qc_settings_build */
    double *levels, *probabilities, *thresholds;
};

const qc_setting_info *qc_setting_keys(size_t *n)
{
    static qc_setting_info infos[NKEYS];
    for (size_t i = 0; i < NKEYS; i++)
        infos[i] = keys[i].info;
    *n = NKEYS;
    return infos;
}

static const key_spec *find_key(const char *key)
{
    for (size_t i = 0; i < NKEYS; i++)
        if (strcmp(keys[i].info.key, key) == 0)
            return &keys[i];
    return NULL;
}

static int is_model_param(const char *key)
{
    const qc_model_type *const *types = qc_model_types();
    for (size_t t = 0; types[t]; t++)
        if (qc_model_param_index(types[t], key) >= 0)
            return 1;
    return 0;
}

int qc_setting_known(const char *key) { return key && (find_key(key) || is_model_param(key)); }

static size_t edit_distance(const char *s, const char *t)
{
    size_t m = strlen(s), n = strlen(t);
    if (m > 63 || n > 63)
        return 99;
    size_t d[64][64];
    for (size_t i = 0; i <= m; i++)
        d[i][0] = i;
    for (size_t j = 0; j <= n; j++)
        d[0][j] = j;
    for (size_t i = 1; i <= m; i++)
        for (size_t j = 1; j <= n; j++) {
            size_t best = d[i - 1][j - 1] + (s[i - 1] != t[j - 1]);
            if (d[i - 1][j] + 1 < best)
                best = d[i - 1][j] + 1;
            if (d[i][j - 1] + 1 < best)
                best = d[i][j - 1] + 1;
            d[i][j] = best;
        }
    return d[m][n];
}

const char *qc_setting_suggest(const char *key)
{
    const char *best = NULL;
    size_t bd = 4; /* suggest only close names */
    for (size_t i = 0; i < NKEYS; i++) {
        size_t d = edit_distance(key, keys[i].info.key);
        if (d < bd) {
            bd = d;
            best = keys[i].info.key;
        }
    }
    const qc_model_type *const *types = qc_model_types();
    for (size_t t = 0; types[t]; t++)
        for (size_t i = 0; i < types[t]->nparams; i++) {
            size_t d = edit_distance(key, types[t]->params[i].name);
            if (d < bd) {
                bd = d;
                best = types[t]->params[i].name;
            }
        }
    return best;
}

qc_status qc_settings_alloc(qc_settings **out)
{
    *out = calloc(1, sizeof **out);
    return *out ? QC_OK : qc_fail(QC_ENOMEM, "out of memory");
}

static void free_lists(qc_settings *s)
{
    free(s->levels);
    free(s->probabilities);
    free(s->thresholds);
    s->levels = s->probabilities = s->thresholds = NULL;
}

void qc_settings_free(qc_settings *s)
{
    if (!s)
        return;
    for (size_t i = 0; i < s->n; i++) {
        free(s->key[i]);
        free(s->value[i]);
    }
    free_lists(s);
    free(s);
}

qc_status qc_settings_copy(const qc_settings *s, qc_settings **out)
{
    qc_status st = qc_settings_alloc(out);
    for (size_t i = 0; st == QC_OK && i < s->n; i++)
        st = qc_settings_set(*out, s->key[i], s->value[i]);
    if (st != QC_OK) {
        qc_settings_free(*out);
        *out = NULL;
    }
    return st;
}

/* Check a value against its key's kind; the message describes the value. */
static qc_status check_value(const char *key, const char *value)
{
    const key_spec *k = find_key(key);
    double d;
    size_t z, n;
    double *list;
    qc_status st;
    if (!k) /* a model parameter: a finite number */
        return qc_parse_double(value, &d);
    switch (k->kind) {
    case K_TEXT:
        if (value[0] == '\0')
            return qc_fail(QC_EINVAL, "empty value");
        if (strcmp(key, "model") == 0 && !qc_model_type_find(value)) {
            char known[512] = "";
            const qc_model_type *const *types = qc_model_types();
            for (size_t t = 0; types[t]; t++) {
                strncat(known, t ? ", " : "", sizeof known - strlen(known) - 1);
                strncat(known, types[t]->name, sizeof known - strlen(known) - 1);
            }
            return qc_fail(QC_EINVAL, "unknown model '%s' (known: %s)", value, known);
        }
        return QC_OK;
    case K_NUMBER:
        st = qc_parse_double(value, &d);
        if (st == QC_OK && strcmp(key, "tol") == 0 && !(d > 0.0))
            return qc_fail(QC_EINVAL, "tolerance must be > 0 (got %g)", d);
        return st;
    case K_WHOLE:
        return qc_parse_size(value, k->lo, k->hi, &z);
    case K_LIST:
        st = qc_parse_list(value, &list, &n);
        free(list);
        return st;
    case K_CHOICE: {
        size_t len = strlen(value);
        for (const char *c = k->choices; *c;) {
            const char *comma = strchr(c, ',');
            size_t cl = comma ? (size_t)(comma - c) : strlen(c);
            if (cl == len && strncmp(c, value, len) == 0)
                return QC_OK;
            c += cl + (comma != NULL);
        }
        return qc_fail(QC_EINVAL, "unknown value '%s' (expected one of: %s)", value, k->choices);
    }
    }
    return QC_OK;
}

qc_status qc_settings_set(qc_settings *s, const char *key, const char *value)
{
    if (!key || !value)
        return qc_fail(QC_EINVAL, "missing key or value");
    if (!qc_setting_known(key)) {
        const char *near = qc_setting_suggest(key);
        if (near)
            return qc_fail(QC_EINVAL, "unknown key '%s' (did you mean '%s'?)", key, near);
        return qc_fail(QC_EINVAL, "unknown key '%s'", key);
    }
    if (strlen(value) > VALUE_MAX)
        return qc_fail(QC_EINVAL, "value longer than %d characters", VALUE_MAX);
    qc_status st = check_value(key, value);
    if (st != QC_OK)
        return st;
    char *v = strdup(value);
    if (!v)
        return qc_fail(QC_ENOMEM, "out of memory");
    for (size_t i = 0; i < s->n; i++)
        if (strcmp(s->key[i], key) == 0) {
            free(s->value[i]);
            s->value[i] = v;
            return QC_OK;
        }
    if (s->n == MAX_ENTRIES) {
        free(v);
        return qc_fail(QC_EINVAL, "too many settings (at most %d)", MAX_ENTRIES);
    }
    char *k = strdup(key);
    if (!k) {
        free(v);
        return qc_fail(QC_ENOMEM, "out of memory");
    }
    s->key[s->n] = k;
    s->value[s->n] = v;
    s->n++;
    return QC_OK;
}

const char *qc_settings_get(const qc_settings *s, const char *key)
{
    for (size_t i = 0; i < s->n; i++)
        if (strcmp(s->key[i], key) == 0)
            return s->value[i];
    return NULL;
}

/* Noise from an SNR in dB for the Gaussian model: σ² = E[x²] / snr with
 * E[x²] under the given law (uniform when none). */
static qc_status sigma_from_snr(const qc_settings *s, const double *levels, size_t nl,
                                const double *probs, double *sigma)
{
    double snr_db;
    qc_status st = qc_parse_double(qc_settings_get(s, "snr-db"), &snr_db);
    if (st != QC_OK)
        return qc_fail(st, "snr-db: %s", qc_last_error());
    double e2 = 0.0;
    for (size_t i = 0; i < nl; i++)
        e2 += (probs ? probs[i] : 1.0 / (double)nl) * levels[i] * levels[i];
    if (!(e2 > 0.0))
        return qc_fail(QC_EINVAL, "snr-db: the levels have zero energy E[x^2], so no SNR "
                                  "can be set");
    *sigma = sqrt(e2 / pow(10.0, snr_db / 10.0));
    if (!(*sigma > 0.0) || !isfinite(*sigma))
        return qc_fail(QC_EINVAL, "snr-db: %g dB gives sigma = %g, outside what doubles hold",
                       snr_db, *sigma);
    return QC_OK;
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

qc_status qc_settings_build(qc_settings *s, qc_model **model, qc_design_request *req)
{
    *model = NULL;
    qc_design_request_default(req);
    free_lists(s);
    const char *name = qc_settings_get(s, "model");
    if (!name)
        return qc_fail(QC_EINVAL, "no model given (key 'model'; see 'quantcap models')");
    const qc_model_type *type = qc_model_type_find(name);
    if (!type)
        return qc_fail(QC_EINVAL, "model: unknown model '%s'", name);

    double params[QC_MODEL_MAX_PARAMS];
    for (size_t i = 0; i < QC_MODEL_MAX_PARAMS; i++)
        params[i] = NAN;
    for (size_t i = 0; i < s->n; i++) {
        if (find_key(s->key[i]))
            continue;
        int idx = qc_model_param_index(type, s->key[i]);
        if (idx < 0)
            return qc_fail(QC_EINVAL, "'%s' is not a parameter of model '%s' (see "
                                      "'quantcap models %s')",
                           s->key[i], type->name, type->name);
        qc_status st = qc_parse_double(s->value[i], &params[idx]);
        if (st != QC_OK)
            return qc_fail(st, "%s: %s", s->key[i], qc_last_error());
    }

    size_t nl, np, nt;
    qc_status st;
    if ((st = parse_list_key(s, "levels", &s->levels, &nl)) != QC_OK ||
        (st = parse_list_key(s, "probabilities", &s->probabilities, &np)) != QC_OK ||
        (st = parse_list_key(s, "thresholds", &s->thresholds, &nt)) != QC_OK)
        return st;
    if (!s->levels)
        return qc_fail(QC_EINVAL, "no levels given (key 'levels')");
    if (s->probabilities && np != nl)
        return qc_fail(QC_EINVAL, "probabilities: %zu values for %zu levels", np, nl);

    const char *bits = qc_settings_get(s, "bits"), *cells = qc_settings_get(s, "cells");
    if (!bits == !cells)
        return qc_fail(QC_EINVAL, "give exactly one of 'bits' and 'cells'");
    size_t z;
    if (bits) {
        if ((st = qc_parse_size(bits, 1, QC_MAX_BITS, &z)) != QC_OK)
            return qc_fail(st, "bits: %s", qc_last_error());
        req->cells = (size_t)1 << z;
    } else {
        if ((st = qc_parse_size(cells, 2, (size_t)1 << QC_MAX_BITS, &z)) != QC_OK)
            return qc_fail(st, "cells: %s", qc_last_error());
        req->cells = z;
    }

    const char *v;
    if ((v = qc_settings_get(s, "objective")) && (st = qc_objective_parse(v, &req->objective)))
        return qc_fail(st, "objective: %s", qc_last_error());
    if (s->probabilities && req->objective == QC_OBJECTIVE_CAPACITY)
        return qc_fail(QC_EINVAL, "probabilities: the capacity objective optimizes the "
                                  "input law; use objective mi to rate a given law");
    if ((v = qc_settings_get(s, "quantizer")) && (st = qc_quantizer_parse(v, &req->quantizer)))
        return qc_fail(st, "quantizer: %s", qc_last_error());
    if (s->thresholds) {
        if (v && req->quantizer != QC_QUANTIZER_FIXED)
            return qc_fail(QC_EINVAL, "thresholds: given thresholds are evaluated as they "
                                      "are; they cannot be combined with quantizer %s",
                           v);
        req->quantizer = QC_QUANTIZER_FIXED;
        if (nt + 1 != req->cells)
            return qc_fail(QC_EINVAL, "thresholds: %zu thresholds make %zu cells, but %zu "
                                      "cells were asked for",
                           nt, nt + 1, req->cells);
    } else if (req->quantizer == QC_QUANTIZER_FIXED) {
        return qc_fail(QC_EINVAL, "quantizer fixed needs 'thresholds'");
    }
    if ((v = qc_settings_get(s, "tol")) && (st = qc_parse_double(v, &req->tol_bits)) != QC_OK)
        return qc_fail(st, "tol: %s", qc_last_error());

    if (qc_settings_get(s, "snr-db")) {
        int si = qc_model_param_index(type, "sigma");
        if (strcmp(type->name, "gauss") != 0 || si < 0)
            return qc_fail(QC_EINVAL, "snr-db applies to model 'gauss' only; give the "
                                      "parameters of model '%s' instead",
                           type->name);
        if (!isnan(params[si]))
            return qc_fail(QC_EINVAL, "give 'sigma' or 'snr-db', not both");
        if ((st = sigma_from_snr(s, s->levels, nl, s->probabilities, &params[si])) != QC_OK)
            return st;
    }
    if ((st = qc_model_alloc(type, params, model)) != QC_OK)
        return st;
    req->model = *model;
    req->levels = s->levels;
    req->nlevels = nl;
    req->probabilities = s->probabilities;
    req->thresholds = s->thresholds;
    req->nthresholds = s->thresholds ? nt : 0;
    return QC_OK;
}
