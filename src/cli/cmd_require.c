/* cmd_require.c — `quantcap require`: the inverse of `design`. Every
 * design option, plus a target (pre-FEC BER, NGMI, GMI, rate or a FEC
 * code) and the quantity to solve for; reports the value the chosen
 * quantizer needs, the value the unquantized receiver needs, the penalty
 * at the target and, with an operating point, the margin
 * (qc_require, src/design/require.c). */
#include "cli.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

static const cli_opt require_options[] = {
    {"target", "KIND=VALUE",
     "what to meet: ber=X, ngmi=X, gmi=X (bit/symbol), rate=X (bit/symbol), rate-per-slot=X "
     "(bit/slot, ppm:M), bits-per-photon=X (photon counting) or fec=NAME"},
    {"solve-for", "KEY", "the quantity to solve for: snr-db, osnr-db, received-dbm, a link's "
                         "length-km, spans, launch-dbm or range-km, or any numeric model or "
                         "front-end key"},
    {"range", "LO,HI", "search range of that quantity (default: around the operating value)"},
    {"json", NULL, "machine-readable JSON output"},
    {"output", "FILE", "write the result to FILE (complete or not at all)"},
    {NULL, NULL, NULL},
};

/* Units of the front-end keys (docs/models.md); model parameters carry
 * their own. */
static const char *const key_units[][2] = {
    {"responsivity", "A/W"},  {"bandwidth", "Hz"},     {"thermal-density", "pA/sqrt(Hz)"},
    {"load-resistance", "ohm"}, {"temperature", "K"},  {"dark-current", "A"},
    {"slot-time", "s"},       {"wavelength-nm", "nm"}, {"dark-count-rate", "1/s"},
    {"spans", "spans"},       {"span-km", "km"},       {"length-km", "km"},
    {"loss-db-km", "dB/km"},  {"gamma", "1/(W km)"},   {"chromatic-dispersion", "ps/(nm km)"},
    {"range-km", "km"},       {"tx-aperture-m", "m"},  {"rx-aperture-m", "m"},
    {"optical-bandwidth", "Hz"}, {"filter-nm", "nm"},  {"field-of-view-mrad", "mrad"},
    {"symbol-rate", "baud"},  {"ref-bandwidth", "Hz"}, {"phase-noise-deg", "deg rms"},
    {NULL, NULL},
};


static void help(const cli_args *a)
{
    printf("usage: quantcap require --target KIND=VALUE --solve-for KEY [--range LO,HI]\n"
           "                        [every option of 'quantcap design'] [--json] [--output FILE]\n\n"
           "The inverse question: which value of KEY (snr-db, osnr-db, received-dbm, photons\n"
           "per slot, any numeric model or front-end key) meets the target with the chosen\n"
           "quantizer, which value the unquantized receiver (same levels and law) needs,\n"
           "and the penalty between them at the target (dB; for linear quantities such as\n"
           "photons and powers 10 log10 of the ratio). When KEY is also given as an\n"
           "operating point, the margin of that point over the required value.\n\n"
           "targets: ber=X (pre-FEC BER of MAP hard decisions, Gray labels), ngmi=X,\n"
           "gmi=X and rate=X (bit/symbol; rate is the objective's rate), rate-per-slot=X\n"
           "(bit/slot of pulse-position modulation, ppm:M), bits-per-photon=X (rate per\n"
           "detected signal photon; it falls as the photons grow, so the answer is the\n"
           "most photons that still give X), fec=NAME (the threshold of a code of\n"
           "data/fec.tsv, or fec=user with --fec SPEC).\n"
           "With taps or a response (a channel with memory) the figures are simulated on\n"
           "the trellis, each with its 95 %% interval: rate is the information rate of\n"
           "the sequence detector; ber, ngmi and gmi those of the symbol-wise MAP (BCJR)\n"
           "detector; every value simulates the same seeded sequence.\n"
           "The figure is sampled at 9 points of the range to bracket its crossing of the\n"
           "target, then the crossing is found by Brent's method. A target the range does\n"
           "not reach (or meets everywhere) is an error (exit 2) naming the best value\n"
           "reached; a figure that crosses the target more than once is not monotone there\n"
           "and is an error too (narrow --range).\n"
           "Default range: the operating value +-30 dB (dB keys) or a factor 1000 either\n"
           "way; snr-db -20..40 dB, osnr-db 0..50 dB, received-dbm and peak-dbm -60..20 dBm\n"
           "without one. Solving for snr-db, osnr-db or sigma drops the other two, and for\n"
           "spans or length-km the other: they give the same quantity another way.\n"
           "Links: an amplified fibre link searches spans 1..1000 (length-km the same in\n"
           "km) and launch-dbm up to its optimum launch power; an unamplified link\n"
           "length-km from 10 m to a 100 dB loss; a free-space link range-km a factor 30\n"
           "either way, beyond the near field.\n\n"
           "options:\n");
    cli_print_options(a, stdout);
}

static const char *unit_of(const char *key, const qc_model_type *type)
{
    const char *db = qc_setting_db_unit(key);
    if (db)
        return db + 1; /* without the leading space */
    for (size_t i = 0; key_units[i][0]; i++)
        if (strcmp(key_units[i][0], key) == 0)
            return key_units[i][1];
    int idx = type ? qc_model_param_index(type, key) : -1;
    if (idx >= 0 && type->params[idx].unit[0])
        return type->params[idx].unit;
    return "(no unit)";
}

static const char *target_text(const qc_target *t, char *buf, size_t n)
{
    static const char *const what[QC_TARGET_COUNT] = {
        "pre-FEC BER <=", "NGMI >=", "GMI >=", "rate >=", "rate per slot >=", "bits per photon >="};
    static const char *const unit[QC_TARGET_COUNT] = {"", "", " bit/symbol", " bit/symbol",
                                                      " bit/slot", " bit/photon"};
    if (t->from_fec)
        snprintf(buf, n, "%s %.4g (FEC %s, %.4g %% overhead)", what[t->kind], t->value,
                 t->fec.name, 100.0 * t->fec.overhead);
    else
        snprintf(buf, n, "%s %.4g%s", what[t->kind], t->value, unit[t->kind]);
    return buf;
}

/* Target from --target and --fec; a code named twice differently, or a
 * threshold next to a code, is contradictory. */
static int target_of(const cli_args *a, qc_target *t)
{
    const char *spec = cli_get(a, "target"), *fec = cli_get(a, "fec");
    qc_status st;
    if (!spec && !fec)
        return cli_usage_error("require: --target is required (ber=X, ngmi=X, gmi=X, rate=X, "
                               "rate-per-slot=X, bits-per-photon=X or fec=NAME)");
    if (spec && fec && strcmp(spec, "fec=user") != 0) {
        char want[96];
        snprintf(want, sizeof want, "fec=%s", fec);
        if (strcmp(spec, want) != 0)
            return cli_usage_error("require: contradictory targets: --target %s and --fec %s "
                                   "set two thresholds; give one (--target fec=user uses "
                                   "the --fec code)",
                                   spec, fec);
    }
    if (spec && strcmp(spec, "fec=user") != 0) {
        if ((st = qc_target_parse(spec, t)) != QC_OK)
            return cli_usage_error("--target: %s", qc_last_error());
        return CLI_OK;
    }
    if (!fec)
        return cli_usage_error("--target fec=user needs --fec overhead=PCT,ber=X|ngmi=X");
    memset(t, 0, sizeof *t);
    if ((st = qc_fec_parse(fec, &t->fec)) != QC_OK)
        return cli_usage_error("--fec: %s", qc_last_error());
    t->from_fec = 1;
    t->kind = t->fec.kind == QC_FEC_HARD ? QC_TARGET_BER : QC_TARGET_NGMI;
    t->value = t->fec.threshold;
    return CLI_OK;
}

static int range_of(const cli_args *a, const qc_settings *set, const char *key, int linear,
                    double operating, double *lo, double *hi)
{
    const char *r = cli_get(a, "range");
    if (r) {
        double *v = NULL;
        size_t n = 0;
        int rc = cli_double_list("range", r, &v, &n);
        if (rc)
            return rc;
        if (n != 2 || !(v[0] < v[1])) {
            free(v);
            return cli_usage_error("--range: expected LO,HI with LO < HI (got '%s')", r);
        }
        *lo = v[0];
        *hi = v[1];
        free(v);
        if (linear && !(*lo > 0.0))
            return cli_usage_error("--range: %s is searched on a log scale; LO must be > 0 "
                                   "(got %g)",
                                   key, *lo);
        return CLI_OK;
    }
    (void)operating;
    if (qc_settings_require_range(set, key, lo, hi) != QC_OK)
        return cli_usage_error("--range: %s", qc_last_error());
    return CLI_OK;
}

/* A required value as printed (6 significant digits), rounded toward the
 * side that meets the target: up when the figure improves with the value,
 * down when it is a most. The nearest 6 digits can fall short: 14.24843
 * dB printed as 14.2484 would miss the target by a hair there. */
static double safe_side(double v, int up)
{
    char text[40];
    snprintf(text, sizeof text, "%.6g", v);
    double r = strtod(text, NULL);
    if (!isfinite(v) || r == v || (up ? r > v : r < v) || r == 0.0)
        return r;
    double step = pow(10.0, floor(log10(fabs(r))) - 5.0); /* one in the 6th digit */
    snprintf(text, sizeof text, "%.6g", up ? r + step : r - step);
    return strtod(text, NULL);
}

/* The design at the required value, as `design --json` reports it, made
 * as the search made its designs (a BER target keeps the MAP boundaries). */
static json_t *design_at(const qc_settings *set, const char *key, double value,
                         const qc_target *target, const qc_fec *fec)
{
    qc_settings *s = NULL;
    qc_model *m = NULL;
    qc_design_request req;
    qc_design_result res;
    memset(&res, 0, sizeof res);
    json_t *o = NULL;
    char *text = NULL;
    if (qc_settings_with(set, key, value, &s) == QC_OK && qc_settings_build(s, &m, &req) == QC_OK) {
        if (fec)
            req.input.fec = fec;
        if (target->kind == QC_TARGET_BER)
            req.quantizer.keep_decisions = 1;
        if (qc_design(&req, &res) == QC_OK && qc_design_report_json(&req, &res, &text) == QC_OK)
            o = json_loads(text, 0, NULL);
    }
    free(text);
    qc_design_result_clear(&res);
    qc_model_free(m);
    qc_settings_free(s);
    return o;
}

/* An amplified fibre link at the required value: its SNR there, and for
 * the reach the longest link of whole spans that meets the target. */
static void print_link_at(FILE *f, const qc_settings *set, const char *key,
                          const qc_require_result *res, json_t *design)
{
    json_t *eff = json_object_get(design, "snr_eff_db");
    if (!json_is_real(eff))
        return;
    fprintf(f, "link there   launch %.3f dBm (optimum %.3f dBm), OSNR %.3f dB, SNR %.3f dB\n",
            json_real_value(json_object_get(design, "launch_dbm")),
            json_real_value(json_object_get(design, "optimum_launch_dbm")),
            json_real_value(json_object_get(design, "osnr_db")), json_real_value(eff));
    double span = NAN;
    const char *sk = qc_settings_get(set, "span-km");
    if (!sk || res->increasing || cli_double("span-km", sk, &span) != CLI_OK)
        return;
    double spans = strcmp(key, "spans") == 0       ? res->required
                   : strcmp(key, "length-km") == 0 ? res->required / span
                                                   : NAN;
    /* 1e-9: a crossing on a whole number of spans counts as that number */
    if (isfinite(spans))
        fprintf(f, "reach        %.0f whole spans of %g km = %g km\n", floor(spans + 1e-9),
                span, floor(spans + 1e-9) * span);
}

int cmd_require(int argc, char **argv)
{
    cli_args a;
    cli_args_init(&a, "require", require_options);
    cli_add_design_options(&a);
    int rc = cli_parse(&a, argc, argv, 0);
    if (rc == CLI_HELP) {
        help(&a);
        return CLI_OK;
    }
    if (rc)
        return rc;

    qc_settings *set = NULL;
    cli_sink sink = {0};
    json_t *design = NULL;
    qc_target target;
    if ((rc = target_of(&a, &target)))
        return rc;
    const char *key = cli_get(&a, "solve-for");
    if (!key)
        return cli_usage_error("require: --solve-for KEY is required (snr-db, osnr-db, "
                               "received-dbm, or a numeric model or front-end key)");
    if (qc_setting_check_solvable(key) != QC_OK)
        return cli_usage_error("--solve-for: %s", qc_last_error());
    qc_status st = qc_settings_alloc(&set);
    if (st != QC_OK)
        return cli_lib_error(st);
    for (size_t k = 0; k < a.nopts; k++) {
        const char *name = a.opts[k]->name;
        if (!a.values[k] || !qc_setting_known(name))
            continue;
        const char *value = a.opts[k]->metavar ? a.values[k] : "true";
        if ((st = qc_settings_set(set, name, value)) != QC_OK) {
            rc = cli_usage_error("--%s: %s", name, qc_last_error());
            goto done;
        }
    }
    qc_settings_drop_alternatives(set, key); /* osnr-db given, snr-db solved for */
    const int linear = !qc_setting_in_db(key);
    double operating = NAN, lo = NAN, hi = NAN;
    const char *op_text = qc_settings_get(set, key);
    if (op_text && (rc = cli_double(key, op_text, &operating)))
        goto done;
    if ((rc = range_of(&a, set, key, linear, operating, &lo, &hi)))
        goto done;
    /* the operating point (or the range's low end) must build */
    const qc_model_type *type = NULL;
    {
        qc_settings *probe = NULL;
        qc_model *m = NULL;
        qc_design_request req;
        st = qc_settings_with(set, key, isnan(operating) ? lo : operating, &probe);
        if (st == QC_OK)
            st = qc_settings_build(probe, &m, &req);
        if (m)
            type = qc_model_get_type(m);
        qc_model_free(m);
        qc_settings_free(probe);
        if (st != QC_OK) {
            rc = cli_usage_error("require: %s", qc_last_error());
            goto done;
        }
    }
    const char *unit = unit_of(key, type);
    char spaced_unit[48];
    snprintf(spaced_unit, sizeof spaced_unit, "%s%s", unit[0] == '(' ? "" : " ",
             unit[0] == '(' ? "" : unit);
    qc_require_result res;
    st = qc_settings_require(set, key, &target, lo, hi, spaced_unit, &res);
    if (st != QC_OK) {
        rc = cli_lib_error(st);
        goto done;
    }
    double margin = qc_require_margin_db(&res, linear, operating);
    char margin_note[256] = "";
    if (isfinite(operating) && !isfinite(margin))
        snprintf(margin_note, sizeof margin_note,
                 "the operating point %s = %.6g%s lies outside the range searched, where "
                 "the figure was not checked to be monotone; run 'quantcap design' there",
                 key, operating, spaced_unit);
    const qc_fec *fec = target.from_fec ? &target.fec : NULL;
    design = design_at(set, key, res.required, &target, fec);
    if ((rc = cli_sink_open(&sink, cli_get(&a, "output"))))
        goto done;
    /* a penalty within the root tolerance is 0, and so is the difference */
    const double difference =
        res.penalty_db == 0.0 ? 0.0 : res.required - res.unquantized_required;
    if (cli_has(&a, "json")) {
        json_t *o = json_object(), *t = json_object();
        json_object_set_new(o, "solve_for", json_string(key));
        json_object_set_new(o, "unit", json_string(unit));
        json_object_set_new(t, "kind", json_string(qc_target_name(target.kind)));
        json_object_set_new(t, "value", cli_json_real(target.value));
        json_object_set_new(t, "fec", fec ? json_string(fec->name) : json_null());
        json_object_set_new(o, "target", t);
        double r2[2] = {lo, hi};
        json_object_set_new(o, "range", cli_json_array(r2, 2));
        json_object_set_new(o, "required", cli_json_real(res.required));
        json_object_set_new(o, "unquantized_required", cli_json_real(res.unquantized_required));
        json_object_set_new(o, "penalty_db", cli_json_real(res.penalty_db));
        json_object_set_new(o, "difference", cli_json_real(difference));
        json_object_set_new(o, "unquantized_note", res.unquantized_note
                                                       ? json_string(res.unquantized_note)
                                                       : json_null());
        json_object_set_new(o, "operating", cli_json_real(operating));
        json_object_set_new(o, "margin_db", cli_json_real(margin));
        json_object_set_new(o, "margin_note",
                            margin_note[0] ? json_string(margin_note) : json_null());
        json_object_set_new(o, "increasing", json_boolean(res.increasing));
        json_object_set_new(o, "designs", json_integer((json_int_t)res.designs));
        json_object_set_new(o, "root_tolerance_db", cli_json_real(res.root_tolerance_db));
        json_object_set_new(o, "design", design ? design : json_null());
        design = NULL;
        rc = cli_json_print(&sink, o);
    } else {
        FILE *f = sink.f;
        char tt[160];
        fprintf(f, "target       %s\n", target_text(&target, tt, sizeof tt));
        fprintf(f, "solve for    %s, range %.6g to %.6g %s (%s scale)\n", key, lo, hi, unit,
                linear ? "log" : "dB");
        /* a figure that falls as the value grows (bits per photon against
         * photons) is met up to the root: the answer is a most, not a least */
        const char *bound = res.increasing ? "" : "at most ";
        const char *rx = design ? json_string_value(json_object_get(design, "iq_quantizer"))
                                : NULL;
        fprintf(f, "required     %s%.6g %s with the %s %s\n", bound,
                safe_side(res.required, res.increasing), unit,
                design ? json_string_value(json_object_get(design, "quantizer")) : "chosen",
                !rx                          ? "quantizer"
                : strcmp(rx, "polar") == 0 ? "polar quantizer"
                                           : "I/Q pair");
        if (isfinite(res.unquantized_required)) {
            fprintf(f, "unquantized  %s%.6g %s (same levels and law, no quantizer)\n", bound,
                    safe_side(res.unquantized_required, res.increasing), unit);
            /* a penalty within the root tolerance prints as 0, not -0.0000 */
            fprintf(f, "penalty      %.4f dB at the target%s\n",
                    fabs(res.penalty_db) < 5e-5 ? 0.0 : res.penalty_db,
                    linear ? " (10 log10 of the ratio)" : "");
            if (linear)
                fprintf(f, "difference   %.6g %s (required - unquantized)\n", difference,
                        unit);
        } else if (res.unquantized_note) {
            fprintf(f, "unquantized  no reference: %s\n", res.unquantized_note);
        } else {
            fprintf(f, "unquantized  meets the target over the whole range: widen --range for "
                       "its value and the penalty\n");
        }
        if (isfinite(margin))
            fprintf(f, "margin       %.4f dB at the operating point %s = %.6g %s (%s)%s\n",
                    margin, key, operating, unit, margin >= 0.0 ? "met" : "short",
                    linear ? ", 10 log10 of the ratio" : "");
        else if (isfinite(operating))
            fprintf(f, "margin       none: %s\n", margin_note);
        if (design) {
            double ber = json_real_value(json_object_get(design, "pre_fec_ber"));
            double ngmi = json_real_value(json_object_get(design, "ngmi"));
            double rate = json_real_value(json_object_get(design, "rate_bits"));
            json_int_t dims = json_integer_value(json_object_get(design, "dimensions"));
            fprintf(f, "at required  rate %.6f %s", rate, cli_rate_unit(dims == 2 ? 2u : 1u));
            if (json_is_real(json_object_get(design, "pre_fec_ber")))
                fprintf(f, ", pre-FEC BER %.4e", ber);
            if (json_is_real(json_object_get(design, "ngmi")))
                fprintf(f, ", NGMI %.6f", ngmi);
            json_t *net = json_object_get(design, "net_rate_gbps");
            if (json_is_real(net))
                fprintf(f, ", net %.6g Gb/s", json_real_value(net));
            fputc('\n', f);
            print_link_at(f, set, key, &res, design);
            json_t *info = json_object_get(design, "information_rate_bits");
            if (json_is_real(info)) {
#define JR(k) json_real_value(json_object_get(design, k))
                fprintf(f,
                        "memory       at the required value: information rate %.6f +- %.6f "
                        "bit/symbol (sequence detector)",
                        JR("information_rate_bits"), JR("information_rate_ci_bits"));
                if (json_is_real(json_object_get(design, "bcjr_pre_fec_ber")))
                    fprintf(f,
                            "; BCJR pre-FEC BER %.4e +- %.2e, NGMI %.6f +- %.6f; "
                            "symbol-by-symbol BER %.4e (exact)",
                            JR("bcjr_pre_fec_ber"), JR("bcjr_pre_fec_ber_ci"), JR("bcjr_ngmi"),
                            JR("bcjr_ngmi_ci"), JR("symbolwise_pre_fec_ber"));
#undef JR
                fprintf(f,
                        "\n             95 %% intervals of the simulation (%lld symbols); the "
                        "required values are where the seeded estimates meet the target: "
                        "another seed moves them by about the interval's width in the "
                        "figure; the rate, BER and NGMI above are the link without "
                        "interference\n",
                        (long long)json_integer_value(json_object_get(design, "symbols")));
            }
            json_t *shaping = json_object_get(design, "shaping");
            if (json_is_string(shaping)) {
                fprintf(f, "shaping      %s: nu = %.6g, H(X) = %.6f %s", json_string_value(shaping),
                        json_real_value(json_object_get(design, "shaping_nu")),
                        json_real_value(json_object_get(design, "entropy_bits")),
                        cli_rate_unit(dims == 2 ? 2u : 1u));
                json_t *gain = json_object_get(design, "shaping_gain_db");
                const char *pw = json_string_value(json_object_get(design, "shaping_power"));
                if (json_is_real(gain))
                    fprintf(f, "; gain %.4f dB over the uniform law at that %s",
                            json_real_value(gain),
                            pw && strcmp(pw, "E[x]") == 0 ? "average optical power" : "SNR");
                fputc('\n', f);
            }
        }
        fprintf(f, "designs      %zu evaluated (monotonicity samples and Brent iterations; "
                   "roots to %.0e dB%s)\n",
                res.designs, res.root_tolerance_db,
                res.root_tolerance_db > 1e-6 ? ", as the figures are simulated" : "");
    }
done:
    json_decref(design);
    rc = cli_sink_finish(&sink, rc);
    qc_settings_free(set);
    return rc;
}
