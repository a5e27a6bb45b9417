/* atomic_file.c — the one writer of output files: write under a temporary
 * name in the same folder, sync, then rename(2) into place, which POSIX
 * makes atomic within a file system, so a reader sees the old file or the
 * complete new one and an interrupted run leaves no partial file. The
 * temporary file is created with open(O_CREAT | O_EXCL, 0666), so the
 * process umask applies as for any new file without being read or
 * changed (changing it would race with other threads of an embedding
 * program). */
#include "core/internal.h"
#include "quantcap/atomic_file.h"

#include <errno.h>
#include <fcntl.h>
#include <stdatomic.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#define TEMP_TRIES 100

struct qc_atomic_file {
    char *path;
    char *tmp;
    FILE *f;  /* NULL once handed over by name */
    int error; /* a write error seen while the stream was open */
};

static atomic_uint temp_counter;

qc_status qc_atomic_file_open(const char *path, qc_atomic_file **out)
{
    *out = NULL;
    if (!path || !*path)
        return qc_fail(QC_EINVAL, "no output file name given");
    struct stat sb;
    if (stat(path, &sb) == 0 && S_ISDIR(sb.st_mode))
        return qc_fail(QC_EIO, "'%s' is a directory, expected a file name", path);
    qc_atomic_file *f = calloc(1, sizeof *f);
    size_t cap = strlen(path) + 48;
    if (f) {
        f->path = strdup(path);
        f->tmp = malloc(cap);
    }
    if (!f || !f->path || !f->tmp) {
        if (f) {
            free(f->path);
            free(f->tmp);
        }
        free(f);
        return qc_fail(QC_ENOMEM, "out of memory opening '%s'", path);
    }
    int fd = -1, err = 0;
    for (int i = 0; i < TEMP_TRIES && fd < 0; i++) {
        snprintf(f->tmp, cap, "%s.tmp.%ld.%u", path, (long)getpid(),
                 atomic_fetch_add(&temp_counter, 1u));
        fd = open(f->tmp, O_CREAT | O_EXCL | O_WRONLY | O_CLOEXEC, 0666);
        err = errno;
        if (fd < 0 && err != EEXIST)
            break;
    }
    if (fd >= 0 && !(f->f = fdopen(fd, "w"))) {
        err = errno;
        close(fd);
        unlink(f->tmp);
        fd = -1;
    }
    if (fd < 0) {
        qc_status st = qc_fail(QC_EIO, "cannot create '%s': %s", path, strerror(err));
        free(f->path);
        free(f->tmp);
        free(f);
        return st;
    }
    *out = f;
    return QC_OK;
}

FILE *qc_atomic_file_stream(qc_atomic_file *f) { return f ? f->f : NULL; }

const char *qc_atomic_file_path(const qc_atomic_file *f) { return f ? f->path : NULL; }

const char *qc_atomic_file_temp_path(qc_atomic_file *f)
{
    if (!f)
        return NULL;
    if (f->f) {
        if (ferror(f->f) || fclose(f->f) != 0)
            f->error = 1;
        f->f = NULL;
    }
    return f->tmp;
}

static void release(qc_atomic_file *f)
{
    free(f->path);
    free(f->tmp);
    free(f);
}

qc_status qc_atomic_file_commit(qc_atomic_file *f)
{
    if (!f)
        return qc_fail(QC_EINVAL, "no output file to finish");
    int err = 0;
    if (f->f) {
        if (fflush(f->f) != 0 || ferror(f->f))
            err = errno ? errno : EIO;
        else if (fsync(fileno(f->f)) != 0 && errno != EINVAL && errno != EROFS)
            err = errno;
        if (fclose(f->f) != 0 && !err)
            err = errno ? errno : EIO;
        f->f = NULL;
    } else {
        /* written by name: sync it through a fresh descriptor */
        int fd = open(f->tmp, O_RDONLY | O_CLOEXEC);
        if (fd < 0)
            err = errno;
        else {
            if (fsync(fd) != 0 && errno != EINVAL && errno != EROFS)
                err = errno;
            close(fd);
        }
    }
    if (f->error && !err)
        err = EIO;
    if (!err && rename(f->tmp, f->path) != 0)
        err = errno;
    qc_status st = QC_OK;
    if (err) {
        unlink(f->tmp);
        st = qc_fail(QC_EIO, "cannot write '%s': %s", f->path, strerror(err));
    }
    release(f);
    return st;
}

void qc_atomic_file_discard(qc_atomic_file *f)
{
    if (!f)
        return;
    if (f->f)
        fclose(f->f);
    unlink(f->tmp);
    release(f);
}

qc_status qc_write_file_atomic(const char *path, const char *text, size_t len)
{
    qc_atomic_file *f;
    qc_status st = qc_atomic_file_open(path, &f);
    if (st != QC_OK)
        return st;
    if (len > 0 && fwrite(text, 1, len, f->f) != len) {
        int err = errno;
        qc_atomic_file_discard(f);
        return qc_fail(QC_EIO, "cannot write '%s': %s", path, strerror(err));
    }
    return qc_atomic_file_commit(f);
}
