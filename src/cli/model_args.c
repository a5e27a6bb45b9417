/* model_args.c — the command-line side of noise models: "--model NAME"
 * plus one "--PARAM VALUE" flag per model parameter, taken from the model
 * tables so that a new model needs no command-line code. */
#include "cli.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

static cli_opt param_opts[CLI_MAX_OPTS];
static char param_help[CLI_MAX_OPTS][160];
static size_t nparam_opts;

static const cli_opt model_opt = {"model", "NAME", "noise model (see 'quantcap models')"};

void cli_add_model_options(cli_args *a)
{
    cli_args_add(a, &model_opt);
    if (nparam_opts == 0) {
        const qc_model_type *const *types = qc_model_types();
        for (size_t t = 0; types[t]; t++)
            for (size_t i = 0; i < types[t]->nparams; i++) {
                const qc_param_spec *p = &types[t]->params[i];
                size_t k;
                for (k = 0; k < nparam_opts; k++)
                    if (strcmp(param_opts[k].name, p->name) == 0)
                        break;
                if (k < nparam_opts || nparam_opts >= CLI_MAX_OPTS)
                    continue;
                snprintf(param_help[k], sizeof param_help[k], "model parameter: %s%s%s%s",
                         p->help, p->unit[0] ? " [" : "", p->unit, p->unit[0] ? "]" : "");
                param_opts[k] = (cli_opt){p->name, "X", param_help[k]};
                nparam_opts++;
            }
    }
    for (size_t k = 0; k < nparam_opts; k++)
        cli_args_add(a, &param_opts[k]);
}

/* Is `name` a parameter flag of any model? */
static int is_model_param(const char *name)
{
    for (size_t k = 0; k < nparam_opts; k++)
        if (strcmp(param_opts[k].name, name) == 0)
            return 1;
    return 0;
}

int cli_model_type(const cli_args *a, const qc_model_type **type)
{
    const char *name = cli_get(a, "model");
    if (!name)
        return cli_usage_error("%s: --model is required (see 'quantcap models')", a->command);
    *type = qc_model_type_find(name);
    if (!*type) {
        char list[512] = "";
        const qc_model_type *const *types = qc_model_types();
        for (size_t t = 0; types[t]; t++) {
            strncat(list, t ? ", " : "", sizeof list - strlen(list) - 1);
            strncat(list, types[t]->name, sizeof list - strlen(list) - 1);
        }
        return cli_usage_error("--model: unknown model '%s' (known: %s)", name, list);
    }
    return CLI_OK;
}

int cli_model_params(const cli_args *a, const qc_model_type *type, double *params)
{
    for (size_t i = 0; i < QC_MODEL_MAX_PARAMS; i++)
        params[i] = NAN;
    for (size_t k = 0; k < a->nopts; k++) {
        const char *name = a->opts[k]->name;
        if (!a->values[k] || !is_model_param(name))
            continue;
        int idx = qc_model_param_index(type, name);
        if (idx < 0)
            return cli_usage_error("--%s is not a parameter of model '%s' "
                                   "(see 'quantcap models')",
                                   name, type->name);
        int rc = cli_double(name, a->values[k], &params[idx]);
        if (rc)
            return rc;
    }
    return CLI_OK;
}

int cli_build_model(const qc_model_type *type, const double *params, qc_model **out)
{
    qc_status st = qc_model_alloc(type, params, out);
    if (st != QC_OK) {
        /* Name the flag: the library names the parameter. */
        return cli_lib_error(st);
    }
    return CLI_OK;
}

/* The design keys become flags; the table lives as long as the program. */
#define MAX_DESIGN_KEYS 256 /* design keys taken as flags (all of them: the
                               table has fewer) */
static cli_opt key_options[MAX_DESIGN_KEYS];

void cli_add_design_options(cli_args *a)
{
    size_t n;
    const qc_setting_info *info = qc_setting_keys(&n);
    for (size_t i = 0; i < n && i < MAX_DESIGN_KEYS; i++) {
        key_options[i] = (cli_opt){info[i].key, info[i].metavar, info[i].help};
        cli_args_add(a, &key_options[i]);
    }
    cli_add_model_options(a);
}
