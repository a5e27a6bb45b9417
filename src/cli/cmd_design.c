/* cmd_design.c — `quantcap design`: choose the thresholds of a K-cell
 * quantizer for a noise model and an alphabet, and report the rate that
 * survives the quantizer next to the unquantized rate. */
#include "cli.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

static const cli_opt output_options[] = {
    {"json", NULL, "machine-readable JSON output"},
    {"output", "FILE", "write the result to FILE (complete or not at all)"},
    {NULL, NULL, NULL},
};

/* The design keys become flags; the table lives as long as the program. */
static cli_opt key_options[64];

static void add_design_options(cli_args *a)
{
    size_t n;
    const qc_setting_info *info = qc_setting_keys(&n);
    for (size_t i = 0; i < n && i < 64; i++) {
        key_options[i] = (cli_opt){info[i].key, info[i].metavar, info[i].help};
        cli_args_add(a, &key_options[i]);
    }
    cli_add_model_options(a);
}

static void help(const cli_args *a)
{
    printf("usage: quantcap design --model NAME [model parameters | --snr-db X]\n"
           "                       --levels L1,...,Ln (--bits B | --cells K)\n"
           "                       [--objective mi|capacity] [--quantizer NAME] [--json]\n\n"
           "Places the thresholds of a K-cell quantizer after the receiver and reports\n"
           "the information rate that survives it, the unquantized rate for the same\n"
           "levels and input law, and the loss. --objective mi rates the uniform (or\n"
           "given) input law; --objective capacity also optimizes the input law with\n"
           "the Blahut-Arimoto engine and reports its certified upper bound.\n"
           "--snr-db sets sigma from E[x^2]/sigma^2 with E[x^2] taken under the input\n"
           "law being evaluated (the given law, else uniform over the levels).\n\n"
           "options:\n");
    cli_print_options(a, stdout);
}

static void design_table(FILE *f, const qc_model *m, const qc_design_request *req,
                         const qc_design_result *r, unsigned bits)
{
    const qc_model_type *type = m->type;
    fprintf(f, "model        %s:", type->name);
    for (size_t i = 0; i < type->nparams; i++)
        fprintf(f, " %s = %.6g%s%s", type->params[i].name, m->params[i],
                type->params[i].unit[0] ? " " : "", type->params[i].unit);
    fprintf(f, "\nquantizer    %s, %zu cells", qc_quantizer_name(req->quantizer), req->cells);
    if (bits)
        fprintf(f, " (%u bit%s)", bits, bits == 1 ? "" : "s");
    fprintf(f, "\nobjective    %s\n\n",
            req->objective == QC_OBJECTIVE_CAPACITY ? "capacity of the quantized channel"
                                                    : "mutual information, given input law");
    fprintf(f, "rate         %.9f bit/use", r->rate_bits);
    if (req->objective == QC_OBJECTIVE_CAPACITY)
        fprintf(f, "   certified: upper bound %.9f bit/use (Blahut-Arimoto, tol %.2g bit)\n",
                r->upper_bound_bits, r->tol_bits);
    else
        fprintf(f, "   exact finite sum over the %zu x %zu matrix\n", r->channel->nx,
                r->channel->ny);
    fprintf(f, "unquantized  %.9f bit/use   adaptive quadrature, error estimate %.1e bit\n",
            r->unquantized_bits, r->unquantized_err_bits);
    fprintf(f, "loss         %.9f bit/use\n\n", r->loss_bits);
    fprintf(f, "thresholds  ");
    for (size_t j = 0; j < r->nthresholds; j++)
        fprintf(f, "%s%.6g", j ? ", " : " ", r->thresholds[j]);
    fprintf(f, "\n\n       level   probability\n");
    for (size_t x = 0; x < r->nlevels; x++)
        fprintf(f, "  %10.6g   %.9f\n", r->levels[x], r->input[x]);
}

int cmd_design(int argc, char **argv)
{
    cli_args a;
    cli_args_init(&a, "design", output_options);
    add_design_options(&a);
    int rc = cli_parse(&a, argc, argv, 0);
    if (rc == CLI_HELP) {
        help(&a);
        return CLI_OK;
    }
    if (rc)
        return rc;

    qc_settings *set = NULL;
    qc_model *m = NULL;
    qc_design_request req;
    qc_design_result res;
    memset(&res, 0, sizeof res);
    cli_sink sink;
    int sink_open = 0;
    qc_status st = qc_settings_alloc(&set);
    if (st != QC_OK)
        return cli_lib_error(st);
    for (size_t k = 0; k < a.nopts; k++) {
        const char *key = a.opts[k]->name;
        if (!a.values[k] || !qc_setting_known(key))
            continue;
        if ((st = qc_settings_set(set, key, a.values[k])) != QC_OK) {
            rc = cli_usage_error("--%s: %s", key, qc_last_error());
            goto done;
        }
    }
    if ((st = qc_settings_build(set, &m, &req)) != QC_OK) {
        rc = cli_usage_error("design: %s", qc_last_error());
        if (!qc_status_is_input_error(st))
            rc = CLI_NUMERIC;
        goto done;
    }
    if ((st = qc_design(&req, &res)) != QC_OK) {
        rc = cli_lib_error(st);
        goto done;
    }
    unsigned bits = cli_bits_of_cells(req.cells);
    if ((rc = cli_sink_open(&sink, cli_get(&a, "output"))))
        goto done;
    sink_open = 1;
    if (cli_has(&a, "json")) {
        char *text = NULL;
        if ((st = qc_design_report_json(&req, &res, &text)) != QC_OK) {
            rc = cli_lib_error(st);
        } else {
            fputs(text, sink.f);
            fputc('\n', sink.f);
        }
        free(text);
    } else
        design_table(sink.f, m, &req, &res, bits);
done:
    if (sink_open) {
        int rc2 = cli_sink_close(&sink, rc == CLI_OK);
        if (rc == CLI_OK)
            rc = rc2;
    }
    qc_design_result_clear(&res);
    qc_model_free(m);
    qc_settings_free(set);
    return rc;
}
