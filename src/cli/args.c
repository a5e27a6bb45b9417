/* args.c — option parsing and strict number parsing for the command line.
 * Options are "--name VALUE", "--name=VALUE" or plain "--name"; a repeated
 * or unknown option is an error that names it (with the closest valid
 * name suggested). */
#include "cli.h"
#include "core/parse.h" /* the one number grammar, shared with the library */

#include <stdarg.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>

int cli_usage_error(const char *fmt, ...)
{
    char text[1024], shown[1024];
    va_list ap;
    va_start(ap, fmt);
    vsnprintf(text, sizeof text, fmt, ap);
    va_end(ap);
    /* arguments may carry any bytes: show them escaped (qc_quote) */
    fprintf(stderr, "quantcap: error: %s\n",
            qc_quote(text, strlen(text), sizeof shown, shown, sizeof shown));
    return CLI_USAGE;
}

int cli_lib_error(qc_status st)
{
    const char *detail = qc_last_error();
    fprintf(stderr, "quantcap: error: %s\n", detail[0] ? detail : qc_strerror(st));
    return qc_status_is_input_error(st) ? CLI_USAGE : CLI_NUMERIC;
}

void cli_args_init(cli_args *a, const char *command, const cli_opt *table)
{
    memset(a, 0, sizeof *a);
    a->command = command;
    for (size_t i = 0; table && table[i].name; i++)
        cli_args_add(a, &table[i]);
}

void cli_args_add(cli_args *a, const cli_opt *opt)
{
    for (size_t i = 0; i < a->nopts; i++)
        if (strcmp(a->opts[i]->name, opt->name) == 0)
            return;
    if (a->nopts < CLI_MAX_OPTS)
        a->opts[a->nopts++] = opt;
}

static int find_opt(const cli_args *a, const char *name, size_t len)
{
    for (size_t i = 0; i < a->nopts; i++)
        if (strlen(a->opts[i]->name) == len && strncmp(a->opts[i]->name, name, len) == 0)
            return (int)i;
    return -1;
}

/* Option names given up for clearer ones (besides the renamed settings
 * keys, qc_setting_renamed): the old name gets a hint to the new one. */
static const char *renamed_option(const char *name)
{
    static const char *const renamed[][2] = {{"out", "output-dir"}};
    for (size_t i = 0; i < sizeof renamed / sizeof renamed[0]; i++)
        if (strcmp(renamed[i][0], name) == 0)
            return renamed[i][1];
    return qc_setting_renamed(name);
}

static int unknown_option(const cli_args *a, const char *name)
{
    const char *now = renamed_option(name);
    if (now && find_opt(a, now, strlen(now)) >= 0)
        return cli_usage_error("%s: unknown option '--%s' (renamed: did you mean '--%s'?)",
                               a->command, name, now);
    size_t best = 99, bi = 0;
    for (size_t i = 0; i < a->nopts; i++) {
        size_t d = qc_edit_distance(name, a->opts[i]->name);
        if (d < best) {
            best = d;
            bi = i;
        }
    }
    /* a suggestion must share most of the name ('--bits' is not '--b') */
    if (best <= 3 && 3 * best <= strlen(name) + 2)
        return cli_usage_error("%s: unknown option '--%s' (did you mean '--%s'?)",
                               a->command, name, a->opts[bi]->name);
    return cli_usage_error("%s: unknown option '--%s' (see 'quantcap %s --help')",
                           a->command, name, a->command);
}

/* An --output that names a file read as input (a FILE option such as
 * --table, or a positional file) would replace that file with the report:
 * refused before anything is read or written. */
static int output_not_input(const cli_args *a)
{
    int ko = find_opt(a, "output", 6);
    struct stat so, si;
    if (ko < 0 || !a->values[ko] || stat(a->values[ko], &so) != 0)
        return CLI_OK; /* no output, or a new file */
    for (size_t k = 0; k < a->nopts + a->npositional; k++) {
        const char *in = k < a->nopts ? a->values[k] : a->positional[k - a->nopts];
        if (!in || (int)k == ko ||
            (k < a->nopts && (!a->opts[k]->metavar || strcmp(a->opts[k]->metavar, "FILE") != 0)))
            continue;
        if (stat(in, &si) == 0 && si.st_dev == so.st_dev && si.st_ino == so.st_ino)
            return cli_usage_error("%s: --output %s is the file read as %s%s: choose another "
                                   "name (it would be overwritten)",
                                   a->command, a->values[ko], k < a->nopts ? "--" : "input",
                                   k < a->nopts ? a->opts[k]->name : "");
    }
    return CLI_OK;
}

/* Whether `arg` is one of the command's options (--name or --name=v):
 * then it cannot be the value of the option before it, which was left
 * without one. A value of the form --x that is no option stays a value. */
static int is_option(const cli_args *a, const char *arg)
{
    if (strncmp(arg, "--", 2) != 0 || arg[2] == '\0')
        return 0;
    const char *eq = strchr(arg + 2, '=');
    return find_opt(a, arg + 2, eq ? (size_t)(eq - arg - 2) : strlen(arg + 2)) >= 0 ||
           strcmp(arg, "--help") == 0;
}

int cli_parse(cli_args *a, int argc, char **argv, size_t max_positional)
{
    for (int i = 0; i < argc; i++) {
        const char *arg = argv[i];
        if (strcmp(arg, "--help") == 0 || strcmp(arg, "-h") == 0)
            return CLI_HELP;
        if (strncmp(arg, "--", 2) != 0 || arg[2] == '\0') {
            if (a->npositional >= max_positional || a->npositional >= CLI_MAX_POSITIONAL)
                return cli_usage_error("%s: unexpected argument '%s'", a->command, arg);
            a->positional[a->npositional++] = arg;
            continue;
        }
        const char *name = arg + 2;
        const char *eq = strchr(name, '=');
        size_t len = eq ? (size_t)(eq - name) : strlen(name);
        int k = find_opt(a, name, len);
        if (k < 0) {
            char buf[64];
            snprintf(buf, sizeof buf, "%.*s", (int)(len < 60 ? len : 60), name);
            return unknown_option(a, buf);
        }
        if (a->values[k])
            return cli_usage_error("%s: option '--%s' given more than once", a->command,
                                   a->opts[k]->name);
        if (a->opts[k]->metavar) {
            if (eq)
                a->values[k] = eq + 1;
            else if (i + 1 < argc && is_option(a, argv[i + 1]))
                return cli_usage_error("%s: option '--%s' needs a value (%s) before %s",
                                       a->command, a->opts[k]->name, a->opts[k]->metavar,
                                       argv[i + 1]);
            else if (i + 1 < argc)
                a->values[k] = argv[++i];
            else
                return cli_usage_error("%s: option '--%s' needs a value (%s)", a->command,
                                       a->opts[k]->name, a->opts[k]->metavar);
        } else {
            if (eq)
                return cli_usage_error("%s: option '--%s' takes no value", a->command,
                                       a->opts[k]->name);
            a->values[k] = "";
        }
    }
    return output_not_input(a);
}

const char *cli_get(const cli_args *a, const char *name)
{
    int k = find_opt(a, name, strlen(name));
    return k < 0 ? NULL : a->values[k];
}

int cli_has(const cli_args *a, const char *name) { return cli_get(a, name) != NULL; }

void cli_print_options(const cli_args *a, FILE *out)
{
    for (size_t i = 0; i < a->nopts; i++) {
        char head[80];
        if (a->opts[i]->metavar)
            snprintf(head, sizeof head, "--%s %s", a->opts[i]->name, a->opts[i]->metavar);
        else
            snprintf(head, sizeof head, "--%s", a->opts[i]->name);
        fprintf(out, "  %-26s %s\n", head, a->opts[i]->help);
    }
    fprintf(out, "  %-26s %s\n", "--help", "show this help");
}

int cli_double(const char *flag, const char *text, double *out)
{
    if (qc_parse_double(text, out) != QC_OK)
        return cli_usage_error("--%s: %s", flag, qc_last_error());
    return CLI_OK;
}

int cli_size(const char *flag, const char *text, size_t lo, size_t hi, size_t *out)
{
    if (qc_parse_size(text, lo, hi, out) != QC_OK)
        return cli_usage_error("--%s: %s", flag, qc_last_error());
    return CLI_OK;
}

int cli_double_list(const char *flag, const char *text, double **out, size_t *n)
{
    if (qc_parse_list(text, out, n) != QC_OK)
        return cli_usage_error("--%s: %s", flag, qc_last_error());
    return CLI_OK;
}

unsigned cli_bits_of_cells(size_t cells)
{
    unsigned b = 0;
    while (((size_t)1 << b) < cells && b < 63)
        b++;
    return ((size_t)1 << b) == cells ? b : 0;
}
