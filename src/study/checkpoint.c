/* checkpoint.c — a sweep's finished points, one JSON object per line,
 * appended as each point completes (and synced to the disk at least once
 * a second), so that a sweep killed at any moment can be resumed without
 * losing or repeating a point. The first line names the scenario (its hash) and the grid size;
 * a last line cut short by the kill is recognised (no newline, or not
 * JSON) and dropped. */
#include "study/checkpoint.h"

#include "core/internal.h"
#include "quantcap/atomic_file.h"

#include <errno.h>
#include <fcntl.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <time.h>
#include <unistd.h>

#define FORMAT_NAME "quantcap-checkpoint"
#define FORMAT_VERSION 2 /* 2: points counted from 1 */
#define DUMP_FLAGS (JSON_COMPACT | JSON_REAL_PRECISION(17) | JSON_PRESERVE_ORDER)

static qc_status write_all(qc_checkpoint *cp, const char *text, size_t n)
{
    while (n > 0) {
        ssize_t w = write(cp->fd, text, n);
        if (w < 0) {
            if (errno == EINTR)
                continue;
            return qc_fail(QC_EIO, "%s: cannot write: %s", cp->path, strerror(errno));
        }
        text += w;
        n -= (size_t)w;
    }
    return QC_OK;
}

static double now_seconds(void)
{
    struct timespec t;
    clock_gettime(CLOCK_MONOTONIC, &t);
    return (double)t.tv_sec + 1e-9 * (double)t.tv_nsec;
}

static qc_status sync_file(qc_checkpoint *cp)
{
    cp->last_sync = now_seconds();
    if (fsync(cp->fd) != 0 && errno != EINVAL && errno != EROFS)
        return qc_fail(QC_EIO, "%s: cannot sync to disk: %s", cp->path, strerror(errno));
    return QC_OK;
}

/* Write a JSON object as one line; sync when the last sync is old. */
static qc_status append_json(qc_checkpoint *cp, json_t *obj)
{
    char *text = json_dumps(obj, DUMP_FLAGS);
    if (!text)
        return qc_fail(QC_ENOMEM, "out of memory writing %s", cp->path);
    size_t n = strlen(text);
    char *line = realloc(text, n + 2);
    if (!line) {
        free(text);
        return qc_fail(QC_ENOMEM, "out of memory writing %s", cp->path);
    }
    line[n] = '\n';
    line[n + 1] = '\0';
    qc_status st = write_all(cp, line, n + 1); /* one write: a line, whole or torn */
    free(line);
    if (st == QC_OK && now_seconds() - cp->last_sync >= QC_CHECKPOINT_SYNC_INTERVAL)
        st = sync_file(cp);
    return st;
}

static json_t *header(const char *hash, size_t npoints)
{
    return json_pack("{s:s, s:i, s:s, s:I}", "format", FORMAT_NAME, "version", FORMAT_VERSION,
                     "scenario", hash, "points", (json_int_t)npoints);
}

static qc_status open_fd(qc_checkpoint *cp, const char *path, int flags)
{
    cp->fd = -1;
    cp->last_sync = 0.0;
    cp->path = strdup(path);
    if (!cp->path)
        return qc_fail(QC_ENOMEM, "out of memory");
    cp->fd = open(path, flags | O_WRONLY | O_CLOEXEC, 0644);
    if (cp->fd < 0) {
        qc_status st = qc_fail(QC_EIO, "%s: cannot open for writing: %s", path, strerror(errno));
        free(cp->path);
        cp->path = NULL;
        return st;
    }
    return QC_OK;
}

qc_status qc_checkpoint_create(qc_checkpoint *cp, const char *path, const char *hash,
                               size_t npoints)
{
    qc_status st = open_fd(cp, path, O_CREAT | O_TRUNC | O_APPEND);
    if (st != QC_OK)
        return st;
    json_t *h = header(hash, npoints);
    st = h ? append_json(cp, h) : qc_fail(QC_ENOMEM, "out of memory");
    json_decref(h);
    if (st == QC_OK)
        st = sync_file(cp);
    if (st != QC_OK)
        qc_checkpoint_close(cp);
    return st;
}

qc_status qc_checkpoint_parse_line(const char *line, size_t len, size_t npoints,
                                   json_t **record, size_t *point)
{
    *record = NULL;
    json_error_t err;
    json_t *o = json_loadb(line, len, 0, &err);
    if (!o)
        return qc_fail(QC_EFORMAT, "not JSON (%s)", err.text);
    json_t *p = json_object_get(o, "point");
    json_t *status = json_object_get(o, "status");
    if (!json_is_object(o) || !json_is_integer(p) || !json_is_string(status) ||
        json_integer_value(p) < 1 || (size_t)json_integer_value(p) > npoints) {
        json_decref(o);
        return qc_fail(QC_EFORMAT, "not the record of a point of this sweep");
    }
    *point = (size_t)json_integer_value(p) - 1; /* records count points from 1 */
    *record = o;
    return QC_OK;
}

/* Read the whole file; *text is NUL-terminated (free it). */
static qc_status slurp(const char *path, char **text, size_t *len, int *missing)
{
    *text = NULL;
    *len = 0;
    *missing = 0;
    FILE *f = fopen(path, "rb");
    if (!f) {
        if (errno == ENOENT) {
            *missing = 1;
            return QC_OK;
        }
        return qc_fail(QC_EIO, "%s: cannot open: %s", path, strerror(errno));
    }
    size_t cap = 1 << 16, n = 0;
    char *buf = malloc(cap);
    while (buf) {
        n += fread(buf + n, 1, cap - n - 1, f);
        if (n < cap - 1)
            break;
        char *grown = realloc(buf, 2 * cap);
        if (!grown) {
            free(buf);
            buf = NULL;
            break;
        }
        buf = grown;
        cap *= 2;
    }
    int bad = ferror(f);
    fclose(f);
    if (!buf)
        return qc_fail(QC_ENOMEM, "out of memory reading %s", path);
    if (bad) {
        free(buf);
        return qc_fail(QC_EIO, "%s: cannot read", path);
    }
    buf[n] = '\0';
    *text = buf;
    *len = n;
    return QC_OK;
}

qc_status qc_checkpoint_resume(qc_checkpoint *cp, const char *path, const char *hash,
                               size_t npoints, json_t **records, size_t *nfound)
{
    *nfound = 0;
    char *text;
    size_t len;
    int missing;
    qc_status st = slurp(path, &text, &len, &missing);
    if (st != QC_OK)
        return st;
    const char *nl = missing ? NULL : memchr(text, '\n', len);
    if (!nl) { /* nothing, or a header cut short: start over */
        free(text);
        return qc_checkpoint_create(cp, path, hash, npoints);
    }
    json_error_t err;
    json_t *h = json_loadb(text, (size_t)(nl - text), 0, &err);
    json_t *want = header(hash, npoints);
    int same = h && want && json_equal(h, want);
    json_decref(h);
    json_decref(want);
    if (!same) {
        free(text);
        return qc_fail(QC_EFORMAT,
                       "%s:1: this checkpoint belongs to another scenario or grid (expected "
                       "scenario %s with %zu points); run without --resume to start over",
                       path, hash, npoints);
    }
    size_t good_end = (size_t)(nl - text) + 1; /* bytes of whole lines so far */
    int line_no = 1;
    while (good_end < len) {
        const char *start = text + good_end;
        const char *end = memchr(start, '\n', len - good_end);
        line_no++;
        size_t point;
        json_t *rec = NULL;
        size_t n = end ? (size_t)(end - start) : len - good_end;
        qc_status pst = qc_checkpoint_parse_line(start, n, npoints, &rec, &point);
        if (!end) { /* the last line lacks its newline: cut short by a kill */
            json_decref(rec);
            break;
        }
        if (pst != QC_OK) {
            /* a damaged line is tolerated only at the very end */
            if (end + 1 == text + len) {
                json_decref(rec);
                break;
            }
            char msg[512];
            snprintf(msg, sizeof msg, "%s", qc_last_error());
            free(text);
            for (size_t i = 0; i < npoints; i++) {
                json_decref(records[i]);
                records[i] = NULL;
            }
            *nfound = 0;
            return qc_fail(QC_EFORMAT, "%s:%d: %s; remove the file (or run without --resume) "
                                       "to start over",
                           path, line_no, msg);
        }
        if (!records[point]) {
            records[point] = rec;
            (*nfound)++;
        } else {
            json_decref(rec); /* a repeat keeps the first */
        }
        good_end = (size_t)(end - text) + 1;
    }
    free(text);
    if ((st = open_fd(cp, path, O_APPEND)) != QC_OK)
        goto fail;
    if (good_end < len && ftruncate(cp->fd, (off_t)good_end) != 0) {
        st = qc_fail(QC_EIO, "%s: cannot cut the torn last line: %s", path, strerror(errno));
        qc_checkpoint_close(cp);
        goto fail;
    }
    return sync_file(cp);
fail:
    for (size_t i = 0; i < npoints; i++) {
        json_decref(records[i]);
        records[i] = NULL;
    }
    *nfound = 0;
    return st;
}

qc_status qc_checkpoint_append(qc_checkpoint *cp, json_t *record)
{
    return append_json(cp, record);
}

void qc_checkpoint_close(qc_checkpoint *cp)
{
    if (cp->fd >= 0) {
        fsync(cp->fd);
        close(cp->fd);
    }
    cp->fd = -1;
    free(cp->path);
    cp->path = NULL;
}

qc_status qc_checkpoint_rewrite(const char *path, const char *hash, size_t npoints,
                                json_t *const *records)
{
    json_t *h = header(hash, npoints);
    char *text = h ? json_dumps(h, DUMP_FLAGS) : NULL;
    json_decref(h);
    size_t len = text ? strlen(text) : 0, cap = len + 1;
    for (size_t i = 0; text && i < npoints; i++) {
        char *line = records[i] ? json_dumps(records[i], DUMP_FLAGS) : NULL;
        if (!line) {
            free(text);
            text = NULL;
            break;
        }
        size_t n = strlen(line);
        if (len + n + 2 > cap) {
            size_t grown = 2 * cap > len + n + 2 ? 2 * cap : len + n + 2;
            char *t = realloc(text, grown);
            if (!t) {
                free(line);
                free(text);
                text = NULL;
                break;
            }
            text = t;
            cap = grown;
        }
        text[len++] = '\n';
        memcpy(text + len, line, n);
        len += n;
        free(line);
    }
    if (!text)
        return qc_fail(QC_ENOMEM, "out of memory rewriting %s", path);
    text[len++] = '\n';
    qc_status st = qc_write_file_atomic(path, text, len);
    free(text);
    return st;
}
