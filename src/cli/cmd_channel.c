/* cmd_channel.c — `quantcap channel`: the transition matrix P(cell|level)
 * that a noise model, a set of input levels and thresholds produce. */
#include "cli.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

static const cli_opt options[] = {
    {"levels", "L1,...,Ln", "transmitted levels (model units)"},
    {"thresholds", "T1,...,Tk", "sorted decision thresholds (k+1 cells)"},
    {"table", "FILE", "measured densities, for --model table (levels default to the table's)"},
    {"json", NULL, "JSON output (key 'matrix': array of rows)"},
    {"csv", NULL, "CSV output with a header row"},
    {"output", "FILE", "write the result to FILE (complete or not at all)"},
    {NULL, NULL, NULL},
};

static void help(const cli_args *a)
{
    printf("usage: quantcap channel --model NAME [model parameters] --levels L1,...,Ln\n"
           "                        --thresholds T1,...,Tk [--json | --csv] [--output FILE]\n\n"
           "Transition matrix of the quantized channel: row i holds the probability\n"
           "of each of the k+1 cells when level Li is sent. Cell j is the output\n"
           "interval [T(j-1), Tj); the first and last cells are open-ended.\n\n"
           "options:\n");
    cli_print_options(a, stdout);
}

static void print_cell_header(FILE *f, const double *t, size_t k, size_t j)
{
    if (j == 0)
        fprintf(f, "y<%.6g", t[0]);
    else if (j == k)
        fprintf(f, "y>=%.6g", t[k - 1]);
    else
        fprintf(f, "[%.6g,%.6g)", t[j - 1], t[j]);
}

int cmd_channel(int argc, char **argv)
{
    cli_args a;
    cli_args_init(&a, "channel", options);
    cli_add_model_options(&a);
    int rc = cli_parse(&a, argc, argv, 0);
    if (rc == CLI_HELP) {
        help(&a);
        return CLI_OK;
    }
    if (rc)
        return rc;
    if (cli_has(&a, "json") && cli_has(&a, "csv"))
        return cli_usage_error("channel: --json and --csv exclude each other");
    const qc_model_type *type;
    double params[QC_MODEL_MAX_PARAMS];
    if ((rc = cli_model_type(&a, &type)) || (rc = cli_model_params(&a, type, params)))
        return rc;
    int is_table = (type->properties & QC_MODEL_FROM_FILE) != 0;
    if (is_table != cli_has(&a, "table"))
        return cli_usage_error(is_table ? "channel: --model table needs --table FILE"
                                        : "channel: --table goes with --model table only");
    if (!cli_has(&a, "levels") && !is_table)
        return cli_usage_error("channel: --levels is required");
    if (!cli_has(&a, "thresholds"))
        return cli_usage_error("channel: --thresholds is required");

    double *levels = NULL, *t = NULL;
    size_t nl = 0, nt = 0;
    qc_model *m = NULL;
    qc_dmc *d = NULL;
    cli_sink sink = {0};
    if ((cli_has(&a, "levels") &&
         (rc = cli_double_list("levels", cli_get(&a, "levels"), &levels, &nl))) ||
        (rc = cli_double_list("thresholds", cli_get(&a, "thresholds"), &t, &nt)))
        goto done;
    if (is_table) {
        qc_status ts = qc_model_table_load(cli_get(&a, "table"), &m);
        if (ts != QC_OK) {
            rc = cli_lib_error(ts);
            goto done;
        }
        if (!levels) {
            const double *tl;
            qc_model_table_levels(m, &tl, &nl);
            levels = malloc(nl * sizeof *levels);
            if (!levels) {
                rc = cli_usage_error("out of memory");
                goto done;
            }
            memcpy(levels, tl, nl * sizeof *tl);
        }
    } else if ((rc = cli_build_model(type, params, &m))) {
        goto done;
    }
    qc_status st = qc_discretize(m, levels, nl, t, nt, &d);
    if (st != QC_OK) {
        rc = cli_lib_error(st);
        goto done;
    }
    if ((rc = cli_sink_open(&sink, cli_get(&a, "output"))))
        goto done;
    if (cli_has(&a, "json")) {
        json_t *o = json_object();
        json_object_set_new(o, "model", json_string(type->name));
        json_t *pj = json_object();
        for (size_t i = 0; i < type->nparams; i++)
            json_object_set_new(pj, type->params[i].name, cli_json_real(qc_model_param(m, i)));
        json_object_set_new(o, "parameters", pj);
        json_object_set_new(o, "level_unit", json_string(type->level_unit ? type->level_unit : ""));
        json_object_set_new(o, "output_unit",
                            json_string(type->output_unit ? type->output_unit : ""));
        json_object_set_new(o, "levels", cli_json_array(levels, nl));
        json_object_set_new(o, "thresholds", cli_json_array(t, nt));
        json_t *rows = json_array();
        for (size_t x = 0; x < d->nx; x++)
            json_array_append_new(rows, cli_json_array(d->p + x * d->ny, d->ny));
        json_object_set_new(o, "matrix", rows);
        rc = cli_json_print(&sink, o);
    } else if (cli_has(&a, "csv")) {
        fprintf(sink.f, "level");
        for (size_t j = 0; j < d->ny; j++)
            fprintf(sink.f, ",cell%zu", j + 1);
        fputc('\n', sink.f);
        for (size_t x = 0; x < d->nx; x++) {
            fprintf(sink.f, "%.17g", levels[x]);
            for (size_t j = 0; j < d->ny; j++)
                fprintf(sink.f, ",%.17g", d->p[x * d->ny + j]);
            fputc('\n', sink.f);
        }
    } else {
        const char *lu = type->level_unit ? type->level_unit : "";
        const char *ou = type->output_unit ? type->output_unit : "";
        char ub[96];
        fprintf(sink.f, "model %s:", type->name);
        if (is_table)
            fprintf(sink.f, " densities from %s", cli_get(&a, "table"));
        for (size_t i = 0; i < type->nparams; i++)
            fprintf(sink.f, "%s %s = %g%s", i ? "," : "", type->params[i].name, qc_model_param(m, i),
                    cli_unit_suffix(cli_param_unit(type, i, lu), ub, sizeof ub));
        fprintf(sink.f, "\nP(cell | level): %zu %s x %zu %s\n", nl,
                cli_plural(nl, "level", "levels"), nt + 1, cli_plural(nt + 1, "cell", "cells"));
        fprintf(sink.f, "levels in %s; cells of the output y in %s\n\n%12s", lu, ou, "level");
        for (size_t j = 0; j < d->ny; j++) {
            char head[64];
            FILE *mf = fmemopen(head, sizeof head, "w");
            if (mf) {
                print_cell_header(mf, t, nt, j);
                fclose(mf);
            } else {
                snprintf(head, sizeof head, "cell%zu", j + 1);
            }
            fprintf(sink.f, " %14s", nt ? head : "all y");
        }
        fputc('\n', sink.f);
        for (size_t x = 0; x < d->nx; x++) {
            fprintf(sink.f, "%12.6g", levels[x]);
            for (size_t j = 0; j < d->ny; j++)
                fprintf(sink.f, " %14.8g", d->p[x * d->ny + j]);
            fputc('\n', sink.f);
        }
    }
done:
    rc = cli_sink_finish(&sink, rc);
    qc_model_free(m);
    qc_dmc_free(d);
    free(levels);
    free(t);
    return rc;
}
