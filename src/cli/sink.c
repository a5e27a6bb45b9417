/* sink.c — where command output goes: standard output, or a file that
 * appears only when complete (written under a temporary name in the same
 * folder, flushed, then renamed into place). */
#include "cli.h"

#include <errno.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

int cli_sink_open(cli_sink *s, const char *path)
{
    memset(s, 0, sizeof *s);
    if (!path) {
        s->f = stdout;
        return CLI_OK;
    }
    struct stat sb;
    if (stat(path, &sb) == 0 && S_ISDIR(sb.st_mode))
        return cli_usage_error("--output: '%s' is a directory, expected a file name", path);
    size_t len = strlen(path);
    s->path = strdup(path);
    s->tmp = malloc(len + 16);
    if (!s->path || !s->tmp) {
        free(s->path);
        free(s->tmp);
        return cli_usage_error("--output: out of memory");
    }
    snprintf(s->tmp, len + 16, "%s.tmp.XXXXXX", path);
    int fd = mkstemp(s->tmp);
    if (fd < 0) {
        int e = errno;
        free(s->path);
        free(s->tmp);
        memset(s, 0, sizeof *s);
        return cli_usage_error("--output: cannot create '%s': %s", path, strerror(e));
    }
    s->f = fdopen(fd, "w");
    if (!s->f) {
        close(fd);
        unlink(s->tmp);
        free(s->path);
        free(s->tmp);
        memset(s, 0, sizeof *s);
        return cli_usage_error("--output: cannot open '%s'", path);
    }
    return CLI_OK;
}

int cli_sink_close(cli_sink *s, int ok)
{
    int rc = CLI_OK;
    if (!s->path) {
        if (fflush(stdout) != 0)
            rc = cli_usage_error("cannot write to standard output: %s", strerror(errno));
        return rc;
    }
    int werr = ferror(s->f);
    if (fclose(s->f) != 0 || werr) {
        if (ok)
            rc = cli_usage_error("--output: cannot write '%s'", s->path);
        ok = 0;
    }
    if (ok && rename(s->tmp, s->path) != 0) {
        rc = cli_usage_error("--output: cannot rename into '%s': %s", s->path,
                             strerror(errno));
        ok = 0;
    }
    if (!ok)
        unlink(s->tmp);
    free(s->path);
    free(s->tmp);
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
