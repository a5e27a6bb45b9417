/* cmd_models.c — `quantcap models`: the noise models with their
 * parameters and units. */
#include "cli.h"

#include <math.h>
#include <string.h>

static const cli_opt options[] = {
    {"json", NULL, "JSON output"},
    {NULL, NULL, NULL},
};

/* The settings keys beyond the parameters that the model takes; every
 * other model-specific key is refused with it. */
static void print_keys(const qc_model_type *type)
{
    if (!type->keys || !type->keys[0]) {
        printf("other keys: none (no physical front end, no SNR); keys of other models\n"
               "  are refused with this one\n");
        return;
    }
    printf("other keys that apply (keys of other models are refused):\n ");
    size_t col = 1;
    for (size_t i = 0; type->keys[i]; i++) {
        size_t w = strlen(type->keys[i]) + 3;
        if (col + w > 78) {
            printf("\n ");
            col = 1;
        }
        printf(" --%s", type->keys[i]);
        col += w;
    }
    printf("\n");
}

int cmd_models(int argc, char **argv)
{
    cli_args a;
    cli_args_init(&a, "models", options);
    int rc = cli_parse(&a, argc, argv, 1);
    if (rc == CLI_HELP) {
        printf("usage: quantcap models [NAME] [--json]\n\n"
               "Lists the noise models, one line each; with NAME, that model's\n"
               "parameters, units, defaults and allowed ranges, and the other keys\n"
               "(physical front end, SNR, data file) that apply to it.\n\noptions:\n");
        cli_print_options(&a, stdout);
        return CLI_OK;
    }
    if (rc)
        return rc;
    const qc_model_type *const *types = qc_model_types();
    const char *only = a.npositional ? a.positional[0] : NULL;
    if (only && !qc_model_type_find(only))
        return cli_usage_error("models: unknown model '%s'", only);
    if (cli_has(&a, "json")) {
        json_t *arr = json_array();
        for (size_t t = 0; types[t]; t++) {
            if (only && strcmp(only, types[t]->name) != 0)
                continue;
            json_t *o = json_object();
            json_object_set_new(o, "name", json_string(types[t]->name));
            json_object_set_new(o, "summary", json_string(types[t]->summary));
            json_object_set_new(o, "output", json_string(types[t]->output == QC_OUTPUT_COUNTS ? "counts" : "real"));
            json_object_set_new(o, "level_unit",
                                json_string(types[t]->level_unit ? types[t]->level_unit : ""));
            json_object_set_new(o, "output_unit",
                                json_string(types[t]->output_unit ? types[t]->output_unit : ""));
            json_object_set_new(o, "snr_definition", types[t]->snr_definition
                                                         ? json_string(types[t]->snr_definition)
                                                         : json_null());
            json_t *ps = json_array();
            for (size_t i = 0; i < types[t]->nparams; i++) {
                const qc_param_spec *p = &types[t]->params[i];
                json_t *pj = json_object();
                json_object_set_new(pj, "name", json_string(p->name));
                json_object_set_new(pj, "unit", json_string(p->unit));
                json_object_set_new(pj, "help", json_string(p->help));
                json_object_set_new(pj, "default", cli_json_real(p->default_value));
                json_object_set_new(pj, "min", cli_json_real(p->min));
                json_object_set_new(pj, "max", cli_json_real(p->max));
                json_object_set_new(pj, "min_exclusive", json_boolean(p->min_exclusive));
                json_object_set_new(pj, "max_exclusive", json_boolean(p->max_exclusive));
                json_array_append_new(ps, pj);
            }
            json_object_set_new(o, "parameters", ps);
            json_t *ks = json_array();
            for (size_t i = 0; types[t]->keys && types[t]->keys[i]; i++)
                json_array_append_new(ks, json_string(types[t]->keys[i]));
            json_object_set_new(o, "keys", ks);
            json_array_append_new(arr, o);
        }
        cli_sink s;
        cli_sink_open(&s, NULL);
        rc = cli_json_print(&s, arr);
        int rc2 = cli_sink_close(&s, rc == CLI_OK);
        return rc ? rc : rc2;
    }
    for (size_t t = 0; types[t]; t++) {
        if (only && strcmp(only, types[t]->name) != 0)
            continue;
        printf("%-10s %s\n", types[t]->name, types[t]->summary);
        if (!only)
            continue;
        const char *lu = types[t]->level_unit ? types[t]->level_unit : "";
        const char *ou = types[t]->output_unit ? types[t]->output_unit : "";
        printf("\nlevels: %s\noutput: %s, in %s\n", lu,
               types[t]->output == QC_OUTPUT_COUNTS ? "integer photon counts" : "real", ou);
        if (types[t]->snr_definition)
            printf("SNR: %s\n", types[t]->snr_definition);
        printf("parameters:%s\n", types[t]->nparams ? "" : " none (made from a table file)");
        for (size_t i = 0; i < types[t]->nparams; i++) {
            const qc_param_spec *p = &types[t]->params[i];
            char range[96];
            snprintf(range, sizeof range, "%s %g%s", p->min_exclusive ? ">" : ">=", p->min,
                     !isfinite(p->max) ? "" : p->max_exclusive ? ", < " : ", <= ");
            if (isfinite(p->max)) {
                size_t l = strlen(range);
                snprintf(range + l, sizeof range - l, "%g", p->max);
            }
            printf("  --%-16s %s%s%s%s; %s", p->name, p->help, p->unit[0] ? " [" : "", p->unit,
                   p->unit[0] ? "]" : "", range);
            if (isnan(p->default_value))
                printf("; required\n");
            else
                printf("; default %g\n", p->default_value);
        }
        print_keys(types[t]);
    }
    return CLI_OK;
}
