/* sink.c — where command output goes: standard output, or a file that
 * appears only when complete (the library's atomic file writer). */
#include "cli.h"

#include <errno.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

int cli_sink_open(cli_sink *s, const char *path)
{
    memset(s, 0, sizeof *s);
    if (!path) {
        s->f = stdout;
        return CLI_OK;
    }
    if (qc_atomic_file_open(path, &s->file) != QC_OK)
        return cli_usage_error("--output: %s", qc_last_error());
    s->f = qc_atomic_file_stream(s->file);
    return CLI_OK;
}

int cli_sink_close(cli_sink *s, int ok)
{
    int rc = CLI_OK;
    if (!s->file) {
        if (fflush(stdout) != 0)
            rc = cli_usage_error("cannot write to standard output: %s", strerror(errno));
        return rc;
    }
    if (!ok)
        qc_atomic_file_discard(s->file);
    else if (qc_atomic_file_commit(s->file) != QC_OK)
        rc = cli_usage_error("--output: %s", qc_last_error());
    memset(s, 0, sizeof *s);
    return rc;
}

int cli_sink_finish(cli_sink *s, int rc)
{
    if (!s->f)
        return rc;
    int rc2 = cli_sink_close(s, rc == CLI_OK);
    return rc == CLI_OK ? rc2 : rc;
}

int cli_json_print(cli_sink *s, json_t *root)
{
    if (!root)
        return cli_usage_error("out of memory building JSON output");
    int rc = json_dumpf(root, s->f, JSON_INDENT(2) | JSON_REAL_PRECISION(17) |
                                        JSON_PRESERVE_ORDER);
    fputc('\n', s->f);
    json_decref(root);
    return rc == 0 ? CLI_OK : CLI_NUMERIC;
}

json_t *cli_json_real(double v) { return isfinite(v) ? json_real(v) : json_null(); }

json_t *cli_json_array(const double *v, size_t n)
{
    json_t *a = json_array();
    for (size_t i = 0; a && i < n; i++)
        json_array_append_new(a, cli_json_real(v[i]));
    return a;
}
