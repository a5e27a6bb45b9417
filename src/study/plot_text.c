/* plot_text.c — the words of the plots: what a design key is called and
 * its unit ("received power (dBm)", "3-bit quantizer"), the unit of the
 * rates and of the receiver output, figure file names made of the values
 * they are drawn at, and the notes about figures left out. */
#include "study/plot.h"

#include "study/file_list.h"

#include <stdio.h>
#include <string.h>

/* The words and unit of a design key (a model parameter's unit is taken
 * from `model` first, then from any model that has the name). */
static void key_words(const char *key, const char *model, char *words, size_t wcap,
                      const char **unit)
{
    static const char *const known[][3] = {
        {"snr-db", "SNR", "dB"},
        {"osnr-db", "OSNR", "dB"},
        {"received-dbm", "received power", "dBm"},
        {"peak-dbm", "peak received power", "dBm"},
        {"extinction-db", "extinction ratio", "dB"},
        {"apd-gain", "APD gain", ""},
        {"apd-k", "ionization ratio k", ""},
        {"photons", "mean photons per slot", ""},
        {"length-km", "link length", "km"},
        {"span-km", "span length", "km"},
        {"spans", "amplified spans", ""},
        {"launch-dbm", "launch power per channel", "dBm"},
        {"quantizer", "quantizer", ""},
        {"objective", "objective", ""},
        {"enob", "converter ENOB", "bits"},
        {"sinad-db", "converter SINAD", "dB"},
        {"jitter-s", "aperture jitter", "s rms"},
        {"converter-gain", "converter gain", ""},
        {"dnl-lsb", "peak DNL", "LSB"},
        {"inl-lsb", "peak INL", "LSB"},
        {"phase-noise-deg", "residual phase error", "deg rms"},
        {"amplitude-cells", "amplitude rings", ""},
        {"phase-cells", "phase sectors", ""},
        {"iq-quantizer", "receiver", ""},
    };
    *unit = "";
    for (size_t i = 0; i < sizeof known / sizeof known[0]; i++)
        if (strcmp(key, known[i][0]) == 0) {
            snprintf(words, wcap, "%s", known[i][1]);
            *unit = known[i][2];
            return;
        }
    snprintf(words, wcap, "%s", key);
    for (char *c = words; *c; c++)
        if (*c == '-')
            *c = ' ';
    const qc_model_type *own = qc_model_type_find(model);
    int k = own ? qc_model_param_index(own, key) : -1;
    if (k >= 0) {
        *unit = own->params[k].unit;
        return;
    }
    const qc_model_type *const *types = qc_model_types();
    for (size_t t = 0; types[t]; t++) {
        k = qc_model_param_index(types[t], key);
        if (k >= 0 && types[t]->params[k].unit[0]) {
            *unit = types[t]->params[k].unit;
            return;
        }
    }
    size_t n = strlen(key);
    if (n > 4 && strcmp(key + n - 4, "-dbm") == 0) {
        words[n - 4] = '\0';
        *unit = "dBm";
    } else if (n > 3 && strcmp(key + n - 3, "-db") == 0) {
        words[n - 3] = '\0';
        *unit = "dB";
    }
}

/* A value as printed in words: a leading minus sign as U+2212. */
static void value_text(const char *v, char *out, size_t cap)
{
    if (v[0] == '-')
        snprintf(out, cap, "\xe2\x88\x92%s", v + 1);
    else
        snprintf(out, cap, "%s", v);
}

/* The model of the first alphabet (NULL when it is a sweep axis). */
static const char *scenario_model(const qc_scenario *sc)
{
    return qc_settings_get(sc->alphabets[0].settings, "model");
}

static int model_counts(const char *model)
{
    const qc_model_type *t = qc_model_type_find(model);
    return t && t->output == QC_OUTPUT_COUNTS;
}

/* "received power −24 dBm", "3-bit quantizer", "optimal quantizer". */
void plot_axis_value_words(const qc_scenario *sc, size_t k, size_t v, char *out, size_t cap)
{
    const sc_axis *a = &sc->axes[k];
    char words[96], val[96];
    const char *unit;
    value_text(a->values[v], val, sizeof val);
    if (strcmp(a->key, "bits") == 0) {
        const char *q = qc_settings_get(sc->alphabets[0].settings, "quantizer");
        snprintf(out, cap, "%s-bit %s", val,
                 q && strcmp(q, "converter") == 0 ? "converter" : "quantizer");
        return;
    }
    if (strcmp(a->key, "cells") == 0) {
        snprintf(out, cap, "%s cells", val);
        return;
    }
    if (!a->number) {
        if (strcmp(a->key, "quantizer") == 0)
            snprintf(out, cap, "%s quantizer", val);
        else if (strcmp(a->key, "iq-quantizer") == 0)
            snprintf(out, cap, "%s", strcmp(val, "polar") == 0 ? "polar quantizer"
                                                               : "I/Q pair (product)");
        else {
            key_words(a->key, scenario_model(sc), words, sizeof words, &unit);
            snprintf(out, cap, "%s %s", words, val);
        }
        return;
    }
    key_words(a->key, scenario_model(sc), words, sizeof words, &unit);
    /* one photon, one electron: a plural unit word loses its s after 1 */
    size_t ul = strlen(unit);
    int singular = strcmp(val, "1") == 0 && ul > 2 && unit[ul - 1] == 's' && !strchr(unit, ' ');
    snprintf(out, cap, "%s %s%s%.*s", words, val, unit[0] ? " " : "",
             (int)(singular ? ul - 1 : ul), unit);
}

/* Axis label of a design key: "received power (dBm)". The bits and cells
 * axes are named after what they count for the model: an ADC (uniform
 * quantizer of a continuous output), a quantizer, or the cells of a
 * photon counter's counts. */
void plot_key_label(const qc_scenario *sc, const char *key, char *buf, size_t cap)
{
    const char *model = scenario_model(sc);
    int counts = model_counts(model);
    const char *q = qc_settings_get(sc->alphabets[0].settings, "quantizer");
    int uniform = q && strcmp(q, "uniform") == 0;
    for (size_t k = 0; k < sc->naxes; k++)
        if (strcmp(sc->axes[k].key, "quantizer") == 0)
            uniform = 0;
    const int converter = q && strcmp(q, "converter") == 0;
    if (strcmp(key, "bits") == 0) {
        snprintf(buf, cap, "%s", converter ? "converter nominal resolution (bits)"
                                 : counts  ? "count quantizer (bits; 2^bits count cells)"
                                 : uniform ? "ADC resolution (bits)"
                                           : "quantizer resolution (bits)");
        return;
    }
    if (strcmp(key, "cells") == 0) {
        snprintf(buf, cap, "%s", counts ? "count cells (quantizer cells)" : "quantizer cells");
        return;
    }
    char words[96];
    const char *unit;
    key_words(key, model, words, sizeof words, &unit);
    snprintf(buf, cap, "%s%s%s%s", words, unit[0] ? " (" : "", unit, unit[0] ? ")" : "");
}

int plot_alphabet_qam(const qc_scenario *sc, size_t a)
{
    /* QAM and the constellations of the plane: rates per complex symbol */
    const qc_settings *set = sc->alphabets[a].settings;
    const char *s = qc_settings_get(set, "alphabet");
    return (s && (strncmp(s, "qam", 3) == 0 || strncmp(s, "psk:", 4) == 0 ||
                  strncmp(s, "apsk:", 5) == 0 || strncmp(s, "hex:", 4) == 0)) ||
           qc_settings_get(set, "constellation") != NULL;
}

/* Unit of the rates of alphabets `a0` … `a1 − 1`. */
const char *plot_rate_unit(const qc_scenario *sc, size_t a0, size_t a1)
{
    size_t nq = 0;
    for (size_t a = a0; a < a1; a++)
        nq += (size_t)plot_alphabet_qam(sc, a);
    return nq == 0 ? "bit/symbol" : nq == a1 - a0 ? "bit/complex symbol"
                                              : "bit/symbol; QAM: bit/complex symbol";
}

/* Unit of a model's output y for the plots: electrons for the APD
 * models, photons for the counter, amperes for a Gaussian model given by
 * a physical front end (received power), else the units of its levels. */
const char *plot_output_unit(const qc_model_type *type, const qc_settings *s)
{
    if (strcmp(type->name, "apd") == 0 || strcmp(type->name, "apd-gauss") == 0)
        return "electrons";
    if (strcmp(type->name, "poisson") == 0)
        return "photons";
    if (strcmp(type->name, "preamp") == 0)
        return "ASE energy per mode";
    if (strcmp(type->name, "table") == 0)
        return "units of the table";
    if (qc_settings_get(s, "received-dbm") || qc_settings_get(s, "peak-dbm"))
        return "A";
    return "normalized units";
}

/* "_key-value" for file names: a negative value is written "minus…" so
 * that no name holds a double hyphen. */
void plot_file_part(char *file, size_t fcap, const char *key, const char *value)
{
    size_t fl = strlen(file);
    if (value[0] == '-')
        snprintf(file + fl, fcap - fl, "_%s-minus%s", key, value + 1);
    else
        snprintf(file + fl, fcap - fl, "_%s-%s", key, value);
}

void plot_safe_name(char *s)
{
    for (; *s; s++)
        if (!((*s >= 'a' && *s <= 'z') || (*s >= 'A' && *s <= 'Z') || (*s >= '0' && *s <= '9') ||
              *s == '-' || *s == '_' || *s == '.' || *s == '+'))
            *s = '_';
}

void plot_append(char *buf, size_t cap, const char *sep, const char *text)
{
    if (!text[0])
        return;
    size_t l = strlen(buf);
    snprintf(buf + l, cap - l, "%s%s", l ? sep : "", text);
}

qc_status plot_note(plot_ctx *ctx, const char *fmt, const char *a, const char *b)
{
    char text[4600];
    snprintf(text, sizeof text, fmt, a, b);
    return qc_file_list_add(ctx->notes, ctx->nnotes, text);
}
