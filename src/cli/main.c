/* main.c — the quantcap command line: dispatches to one subcommand and is
 * the one place that turns outcomes into exit codes (0 success, 1
 * numerical failure, 2 usage or input error). */
#include "cli.h"

#include <string.h>

typedef struct {
    const char *name;
    int (*run)(int argc, char **argv);
    const char *summary;
} command;

static const command commands[] = {
    {"capacity", cmd_capacity, "capacity of a channel matrix read from a file"},
    {"channel", cmd_channel, "transition matrix of a model, levels and thresholds"},
    {"design", cmd_design, "design a quantizer and report the rate it keeps"},
    {"iq", cmd_iq, "a 2-D constellation through an I/Q or polar quantizer"},
    {"models", cmd_models, "list the noise models and their parameters"},
    {"require", cmd_require, "the SNR, OSNR, power or photons a target needs, and the penalty"},
    {"sweep", cmd_sweep, "run a scenario file's grid of designs: table, JSON, plots"},
};

static void usage(FILE *out)
{
    fprintf(out,
            "usage: quantcap COMMAND [OPTIONS]\n\n"
            "Information rates of quantized optical receivers.\n\ncommands:\n");
    for (size_t i = 0; i < sizeof commands / sizeof commands[0]; i++)
        fprintf(out, "  %-10s %s\n", commands[i].name, commands[i].summary);
    fprintf(out, "\n'quantcap help COMMAND' (or 'quantcap COMMAND --help') describes a "
                 "command's options.\n");
}

int main(int argc, char **argv)
{
    if (argc < 2) {
        usage(stderr);
        return CLI_USAGE;
    }
    if (strcmp(argv[1], "help") == 0 && argc > 2) {
        /* "help COMMAND" is "COMMAND --help" */
        if (argc > 3)
            return cli_usage_error("help: expected one COMMAND (got %d arguments)", argc - 2);
        char help_flag[] = "--help";
        char *help_argv[] = {help_flag, NULL};
        for (size_t i = 0; i < sizeof commands / sizeof commands[0]; i++)
            if (strcmp(argv[2], commands[i].name) == 0)
                return commands[i].run(1, help_argv);
        return cli_usage_error("help: unknown command '%s' (see 'quantcap --help')", argv[2]);
    }
    if (strcmp(argv[1], "--help") == 0 || strcmp(argv[1], "-h") == 0 ||
        strcmp(argv[1], "help") == 0) {
        usage(stdout);
        return CLI_OK;
    }
    if (strcmp(argv[1], "--version") == 0) {
        printf("quantcap %s\n", qc_version());
        return CLI_OK;
    }
    for (size_t i = 0; i < sizeof commands / sizeof commands[0]; i++)
        if (strcmp(argv[1], commands[i].name) == 0)
            return commands[i].run(argc - 2, argv + 2);
    return cli_usage_error("unknown command '%s' (see 'quantcap --help')", argv[1]);
}
