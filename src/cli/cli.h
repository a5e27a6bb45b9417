/* cli.h — shared pieces of the quantcap command line: option parsing,
 * number parsing, output sinks and error reporting. The command line uses
 * only the public header quantcap.h. */
#ifndef QC_CLI_H
#define QC_CLI_H

#include <stddef.h>
#include <stdio.h>
#include <time.h>

#include <jansson.h>

#include "quantcap.h"

/* Exit codes. */
enum { CLI_OK = 0, CLI_NUMERIC = 1, CLI_USAGE = 2, CLI_HELP = 100 };

#define CLI_MAX_OPTS 256
#define CLI_MAX_POSITIONAL 4

/* One option: a flag "--name" with a value (metavar != NULL) or without. */
typedef struct {
    const char *name;
    const char *metavar;
    const char *help;
} cli_opt;

typedef struct {
    const char *command;
    const cli_opt *opts[CLI_MAX_OPTS];
    size_t nopts;
    const char *values[CLI_MAX_OPTS]; /* value, or "" for a plain flag */
    const char *positional[CLI_MAX_POSITIONAL];
    size_t npositional;
} cli_args;

/* Set up an argument set for `command` with a NULL-name-terminated table. */
void cli_args_init(cli_args *a, const char *command, const cli_opt *table);
/* Add more options (e.g. model parameters); duplicates by name skipped. */
void cli_args_add(cli_args *a, const cli_opt *opt);
/* Parse argv (after the command name). Returns CLI_OK, CLI_HELP (the
 * caller prints help) or CLI_USAGE (message already printed). */
int cli_parse(cli_args *a, int argc, char **argv, size_t max_positional);
/* Value of an option, NULL if absent ("" for a given plain flag). */
const char *cli_get(const cli_args *a, const char *name);
int cli_has(const cli_args *a, const char *name);
/* Print the option table of `a` to `out`. */
void cli_print_options(const cli_args *a, FILE *out);

/* Error reporting: print "quantcap: error: ..." and return CLI_USAGE. */
int cli_usage_error(const char *fmt, ...) __attribute__((format(printf, 1, 2)));
/* Report a library failure; returns the exit code for the status. */
int cli_lib_error(qc_status st);

/* Strict number parsing of the value of flag `flag`; 0 on success, else
 * prints an error naming the flag and returns CLI_USAGE. */
int cli_double(const char *flag, const char *text, double *out);
int cli_size(const char *flag, const char *text, size_t lo, size_t hi,
             size_t *out);
/* Comma-separated list of finite numbers; *out malloc'd. */
int cli_double_list(const char *flag, const char *text, double **out,
                    size_t *n);

/* Output sink: stdout, or a file written to a temporary name and renamed
 * into place only when everything succeeded (nothing partial is left). */
typedef struct {
    FILE *f;               /* where to write: stdout or the file's stream   */
    qc_atomic_file *file;  /* the output file being written; NULL: stdout   */
} cli_sink;
int cli_sink_open(cli_sink *s, const char *path /* NULL: stdout */);
/* Finish: ok != 0 commits (rename), else discards. Returns CLI_OK or an
 * error code. */
int cli_sink_close(cli_sink *s, int ok);
/* End of a command: close the sink if it was opened (commit when rc is
 * CLI_OK, else discard) and return rc, or the close's error. A zeroed,
 * never-opened sink is left alone. */
int cli_sink_finish(cli_sink *s, int rc);

/* Dump JSON with round-trip precision, then a newline. */
int cli_json_print(cli_sink *s, json_t *root);
/* A JSON number that is null when not finite. */
json_t *cli_json_real(double v);
json_t *cli_json_array(const double *v, size_t n);

/* Bits needed for K cells, or 0 if K is not a power of two. */
unsigned cli_bits_of_cells(size_t cells);

/* Model flags (model_args.c). */
void cli_add_model_options(cli_args *a);
/* Every design key (the settings vocabulary) and every model parameter as
 * flags: what `design` and `require` take. */
void cli_add_design_options(cli_args *a);
int cli_model_type(const cli_args *a, const qc_model_type **type);
/* Parameters given on the command line for `type` (NaN where absent);
 * a flag belonging only to other models is an error. */
int cli_model_params(const cli_args *a, const qc_model_type *type, double *params);
int cli_build_model(const qc_model_type *type, const double *params, qc_model **out);

/* Progress bar on stderr (progress.c): drawn only when stderr is a
 * terminal and quiet is 0; `unit` names the work counted ("points"). */
typedef struct {
    int tty, drawn, finished, shown;
    double delay_s; /* draw only once the run has lasted this long (0: at once) */
    const char *unit;
    struct timespec start, last;
    size_t first_done; /* done when the bar was first drawn (resumed work) */
} cli_progress;
void cli_progress_init(cli_progress *p, int quiet, const char *unit);
/* The callback for qc_sweep_options.progress and qc_design_request.progress
 * (user = the cli_progress). */
void cli_progress_report(void *user, size_t done, size_t total);
/* End the bar's line if a run stopped before its end. */
void cli_progress_end(cli_progress *p);
double cli_seconds_between(const struct timespec *a, const struct timespec *b);

/* Text output helpers (text.c). */
/* `one` when n == 1, else `many`. */
const char *cli_plural(size_t n, const char *one, const char *many);
/* Rate unit of a report: "bit/symbol", or "bit/complex symbol" for QAM. */
const char *cli_rate_unit(unsigned dimensions);

/* The rate lines of a pulse-position design (text_ppm.c). */
void cli_print_ppm_rates(FILE *f, const qc_design_request *req, const qc_design_result *r);

/* The text report of a two-dimensional design (text_iq.c); `alphabet`
 * names the constellation (NULL: from a file). */
void cli_print_iq_design(FILE *f, const qc_design_request *req, const qc_design_result *r,
                         const char *alphabet);
/* How the cells of a 2-D receiver were searched (qc_iq_design_result's
 * fields, from `iq` or `design` alike). */
typedef struct {
    const char *objective; /* "mi" or "gmi"                              */
    size_t evaluations;
    int per_axis, converged, at_ceiling, axis_start;
    double start_bits, axis_start_bits;
} cli_iq_search;
/* That search, after "receiver ...": axis by axis, or the evaluations and
 * whether the search settled or reached the ceiling H(X); the uniform
 * start, and the axis-by-axis start where there was one (text_iq.c). */
void cli_print_iq_search(FILE *f, const cli_iq_search *s, const char *unit);
/* " UNIT" with a leading space, or "" for a dimensionless quantity. */
const char *cli_unit_suffix(const char *unit, char *buf, size_t cap);
/* Unit of model parameter i printed in a report whose levels are in
 * `level_unit`: a parameter in "level units" takes the levels' unit. */
const char *cli_param_unit(const qc_model_type *type, size_t i, const char *level_unit);

/* Subcommands. */
int cmd_capacity(int argc, char **argv);
int cmd_channel(int argc, char **argv);
int cmd_design(int argc, char **argv);
int cmd_iq(int argc, char **argv);
int cmd_models(int argc, char **argv);
int cmd_require(int argc, char **argv);
int cmd_sweep(int argc, char **argv);

#endif
