/* settings_converter.c — the keys of a real converter (full-scale, enob or
 * sinad-db, jitter-s and signal-freq, dnl-lsb, inl-lsb, seed, draws,
 * transitions, converter-gain, converter-offset) into the settings'
 * qc_converter (quantcap/quantizer.h; IEEE Std 1241 terms), to which the
 * request points. */
#include "study/settings_internal.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

static const char *const converter_keys[] = {
    "full-scale", "enob", "sinad-db", "jitter-s", "signal-freq", "dnl-lsb", "inl-lsb",
    "draws", "transitions", "converter-gain", "converter-offset", NULL,
};

static qc_status num(const qc_settings *s, const char *key, double *out)
{
    const char *v = qc_settings_get(s, key);
    if (!v)
        return QC_OK;
    qc_status st = qc_parse_double(v, out);
    return st == QC_OK ? st : qc_fail(st, "%s: %s", key, qc_last_error());
}

static qc_status gain_of(const char *v, qc_converter *c)
{
    if (strcmp(v, "best") == 0) {
        c->gain_mode = QC_GAIN_BEST;
        return QC_OK;
    }
    if (strncmp(v, "agc:", 4) == 0) {
        c->gain_mode = QC_GAIN_AGC;
        if (qc_parse_double(v + 4, &c->agc_k) != QC_OK || !(c->agc_k > 0.0))
            return qc_fail(QC_EINVAL, "converter-gain: in '%s', K must be a number > 0", v);
        return QC_OK;
    }
    c->gain_mode = QC_GAIN_FIXED;
    if (qc_parse_double(v, &c->gain) != QC_OK || !(c->gain > 0.0))
        return qc_fail(QC_EINVAL, "converter-gain: '%s' is not a number > 0, 'best' or "
                                  "'agc:K'",
                       v);
    return QC_OK;
}

qc_status qc_settings_converter(qc_settings *s, qc_design_request *req)
{
    const char *first = NULL;
    for (size_t i = 0; converter_keys[i] && !first; i++)
        if (qc_settings_get(s, converter_keys[i]))
            first = converter_keys[i];
    const char *q = qc_settings_get(s, "quantizer");
    if (!first) {
        if (req->quantizer.kind == QC_QUANTIZER_CONVERTER)
            return qc_fail(QC_EINVAL, "quantizer converter needs 'full-scale' (LO,HI)");
        return QC_OK;
    }
    if (q && req->quantizer.kind != QC_QUANTIZER_CONVERTER)
        return qc_fail(QC_EINVAL, "'%s' describes a converter: it goes with quantizer "
                                  "converter, not %s",
                       first, q);
    if (s->thresholds)
        return qc_fail(QC_EINVAL, "'%s' describes a converter: give its 'transitions' file "
                                  "instead of 'thresholds'",
                       first);
    qc_converter *c = &s->converter;
    const char *fs = qc_settings_get(s, "full-scale");
    if (!fs)
        return qc_fail(QC_EINVAL, "'%s' needs the converter's 'full-scale' (LO,HI)", first);
    double *range = NULL;
    size_t n = 0;
    qc_status st = qc_parse_list(fs, &range, &n);
    if (st != QC_OK)
        return qc_fail(st, "full-scale: %s", qc_last_error());
    if (n != 2) {
        free(range);
        return qc_fail(QC_EINVAL, "full-scale: expected two numbers LO,HI (got %zu)", n);
    }
    qc_converter_default(c, range[0], range[1]);
    free(range);
    double seed = NAN, draws = NAN, sinad = NAN;
    if ((st = num(s, "enob", &c->enob)) != QC_OK || (st = num(s, "sinad-db", &sinad)) != QC_OK ||
        (st = num(s, "jitter-s", &c->jitter_s)) != QC_OK ||
        (st = num(s, "signal-freq", &c->signal_freq)) != QC_OK ||
        (st = num(s, "dnl-lsb", &c->dnl_lsb)) != QC_OK ||
        (st = num(s, "inl-lsb", &c->inl_lsb)) != QC_OK || (st = num(s, "seed", &seed)) != QC_OK ||
        (st = num(s, "draws", &draws)) != QC_OK)
        return st;
    if (!isnan(sinad)) {
        if (!isnan(c->enob))
            return qc_fail(QC_EINVAL, "give 'enob' or 'sinad-db', not both (one sets the other)");
        c->enob = qc_sinad_db_to_enob(sinad);
        if (!(c->enob > 0.0))
            return qc_fail(QC_EINVAL, "sinad-db: %g dB is %g effective bits (must be > 0)", sinad,
                           c->enob);
    }
    if (qc_settings_get(s, "signal-freq") && !qc_settings_get(s, "jitter-s"))
        return qc_fail(QC_EINVAL, "'signal-freq' goes with 'jitter-s' (it rates the jitter)");
    if (!isnan(seed))
        c->seed = (unsigned long)seed;
    if (!isnan(draws))
        c->draws = (size_t)draws;
    /* 'seed' also seeds the simulation of a channel with memory */
    const int memory = qc_settings_get(s, "taps") || qc_settings_get(s, "response");
    if (((qc_settings_get(s, "seed") && !memory) || qc_settings_get(s, "draws")) &&
        c->dnl_lsb == 0.0 && c->inl_lsb == 0.0)
        return qc_fail(QC_EINVAL, "'%s' goes with 'dnl-lsb' or 'inl-lsb' (the random "
                                  "transition-level errors it draws)",
                       qc_settings_get(s, "draws") ? "draws" : "seed");
    const char *v;
    if ((v = qc_settings_get(s, "converter-gain")) && (st = gain_of(v, c)) != QC_OK)
        return st;
    if ((v = qc_settings_get(s, "converter-offset"))) {
        if (strcmp(v, "best") == 0)
            c->offset_best = 1;
        else if (qc_parse_double(v, &c->offset) != QC_OK)
            return qc_fail(QC_EINVAL, "converter-offset: '%s' is not a number or 'best'", v);
    } else if (c->gain_mode == QC_GAIN_AGC) {
        c->offset = NAN; /* the AGC centres the mean */
    } else if (c->gain_mode == QC_GAIN_BEST) {
        c->offset_best = 1; /* best gain: best offset too unless one is given */
    }
    if ((v = qc_settings_get(s, "transitions"))) {
        if ((st = qc_converter_transitions_load(v, &s->transitions, &s->ntransitions)) != QC_OK)
            return st;
        c->transitions = s->transitions;
        c->ntransitions = s->ntransitions;
    }
    req->quantizer.kind = QC_QUANTIZER_CONVERTER;
    req->quantizer.converter = c;
    /* the checks that need the nominal bits (ENOB, level count) */
    size_t K = req->quantizer.cells;
    unsigned bits = 0;
    while (((size_t)1 << bits) < K)
        bits++;
    if (((size_t)1 << bits) != K)
        return qc_fail(QC_EINVAL, "quantizer converter: %zu cells is not 2^N codes (give "
                                  "'bits')",
                       K);
    return qc_converter_check(c, bits);
}
