/* cmd_capacity.c — `quantcap capacity FILE`: the certified capacity (or
 * capacity–cost) of a channel matrix read from a text file. */
#include "cli.h"

#include <math.h>
#include <stdlib.h>

static const cli_opt options[] = {
    {"costs", "C1,...,Cn", "cost of each input (row), for a capacity-cost run"},
    {"budget", "B", "largest average cost allowed (with --costs)"},
    {"tol", "T", "stop when upper - lower bound <= T bits (default 1e-9)"},
    {"max-iterations", "N", "iteration limit (default 1000000)"},
    {"plain", NULL, "plain Blahut-Arimoto instead of the accelerated variant"},
    {"json", NULL, "machine-readable JSON output"},
    {"output", "FILE", "write the result to FILE (complete or not at all)"},
    {NULL, NULL, NULL},
};

static void help(const cli_args *a)
{
    printf("usage: quantcap capacity FILE [--costs C1,...,Cn --budget B] [--tol T]\n"
           "                         [--plain] [--json] [--output FILE]\n\n"
           "Capacity of the discrete memoryless channel whose transition matrix is\n"
           "in FILE (one row per input, entries P(y|x) separated by spaces or\n"
           "commas, '#' comments). The result is certified: Blahut-Arimoto stops\n"
           "when its upper bound max_x D(P(.|x)||q) is within the tolerance of the\n"
           "achieved rate.\n\noptions:\n");
    cli_print_options(a, stdout);
}

static void print_table(FILE *f, const char *path, const qc_dmc *d,
                        const qc_capacity_result *r, const double *input, double tol,
                        int with_cost, int plain)
{
    const char *unit = cli_rate_unit(1);
    fprintf(f, "channel      %s (%zu %s x %zu %s)\n", path, d->nx,
            cli_plural(d->nx, "input", "inputs"), d->ny, cli_plural(d->ny, "output", "outputs"));
    fprintf(f, "capacity     %.10f %s\n", r->capacity_bits, unit);
    fprintf(f, "certified    upper bound %.10f %s, gap %.3g %s (tolerance %.3g %s)\n",
            r->upper_bound_bits, unit, r->gap_bits, unit, tol, unit);
    fprintf(f, "method       %s Blahut-Arimoto, %zu %s\n", plain ? "plain" : "accelerated",
            r->iterations, cli_plural(r->iterations, "iteration", "iterations"));
    /* the multiplier is the slope dC/dB of the capacity-cost curve: in
     * the rate's unit per unit cost (the engine works in nats) */
    if (with_cost)
        fprintf(f, "cost         %.10g cost units (%s), multiplier %.6g %s per cost unit\n",
                r->cost, r->cost_active ? "budget binds" : "budget not binding",
                r->multiplier / log(2.0), unit);
    fprintf(f, "\n  input   probability\n");
    for (size_t x = 0; x < d->nx; x++)
        fprintf(f, "  %5zu   %.10f\n", x + 1, input[x]);
}

int cmd_capacity(int argc, char **argv)
{
    cli_args a;
    cli_args_init(&a, "capacity", options);
    int rc = cli_parse(&a, argc, argv, 1);
    if (rc == CLI_HELP) {
        help(&a);
        return CLI_OK;
    }
    if (rc)
        return rc;
    if (a.npositional != 1)
        return cli_usage_error("capacity: expected one matrix FILE (see 'quantcap capacity --help')");

    qc_ba_options opt;
    qc_ba_options_default(&opt);
    const char *v;
    if ((v = cli_get(&a, "tol")) && (rc = cli_double("tol", v, &opt.tol_bits)))
        return rc;
    if (cli_has(&a, "tol") && !(opt.tol_bits > 0.0))
        return cli_usage_error("--tol: must be > 0 (got %g)", opt.tol_bits);
    if ((v = cli_get(&a, "max-iterations")) &&
        (rc = cli_size("max-iterations", v, 1, (size_t)1 << 40, &opt.max_iterations)))
        return rc;
    if (cli_has(&a, "plain"))
        opt.method = QC_BA_PLAIN;
    if (cli_has(&a, "costs") != cli_has(&a, "budget"))
        return cli_usage_error("capacity: --costs and --budget go together");

    qc_dmc *d = NULL;
    double *costs = NULL, *input = NULL;
    cli_sink sink = {0};
    qc_status st = qc_dmc_read(a.positional[0], &d);
    if (st != QC_OK)
        return cli_lib_error(st);
    if (cli_has(&a, "costs")) {
        size_t n;
        if ((rc = cli_double_list("costs", cli_get(&a, "costs"), &costs, &n)))
            goto done;
        if (n != d->nx) {
            rc = cli_usage_error("--costs: %zu values given, the matrix in %s has %zu rows",
                                 n, a.positional[0], d->nx);
            goto done;
        }
        if ((rc = cli_double("budget", cli_get(&a, "budget"), &opt.budget)))
            goto done;
        opt.costs = costs;
    }
    input = malloc(d->nx * sizeof *input);
    if (!input) {
        rc = cli_usage_error("out of memory");
        goto done;
    }
    qc_capacity_result res;
    st = qc_capacity(d, &opt, NULL, &res, input);
    if (st != QC_OK) {
        rc = cli_lib_error(st);
        goto done;
    }
    if ((rc = cli_sink_open(&sink, cli_get(&a, "output"))))
        goto done;
    if (cli_has(&a, "json")) {
        json_t *o = json_object();
        json_object_set_new(o, "file", json_string(a.positional[0]));
        json_object_set_new(o, "inputs", json_integer((json_int_t)d->nx));
        json_object_set_new(o, "outputs", json_integer((json_int_t)d->ny));
        json_object_set_new(o, "capacity_bits", cli_json_real(res.capacity_bits));
        json_object_set_new(o, "upper_bound_bits", cli_json_real(res.upper_bound_bits));
        json_object_set_new(o, "gap_bits", cli_json_real(res.gap_bits));
        json_object_set_new(o, "tolerance_bits", cli_json_real(opt.tol_bits));
        json_object_set_new(o, "method", json_string(opt.method == QC_BA_PLAIN ? "plain" : "accelerated"));
        json_object_set_new(o, "iterations", json_integer((json_int_t)res.iterations));
        json_object_set_new(o, "input_distribution", cli_json_array(input, d->nx));
        if (costs) {
            json_object_set_new(o, "budget", cli_json_real(opt.budget));
            json_object_set_new(o, "cost", cli_json_real(res.cost));
            json_object_set_new(o, "multiplier", cli_json_real(res.multiplier));
            json_object_set_new(o, "budget_binds", json_boolean(res.cost_active));
        }
        rc = cli_json_print(&sink, o);
    } else {
        print_table(sink.f, a.positional[0], d, &res, input, opt.tol_bits, costs != NULL,
                    opt.method == QC_BA_PLAIN);
    }
done:
    rc = cli_sink_finish(&sink, rc);
    qc_dmc_free(d);
    free(costs);
    free(input);
    return rc;
}
