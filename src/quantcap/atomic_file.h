/* quantcap/atomic_file.h — files that appear complete or not at all: the
 * one writer behind every output file of quantcap (tables, reports,
 * plots, command output). Part of the public interface of libquantcap
 * (include <quantcap.h> for all of it).
 * SPDX-License-Identifier: GPL-3.0-or-later */
#ifndef QUANTCAP_ATOMIC_FILE_H
#define QUANTCAP_ATOMIC_FILE_H

#include <stdio.h>

#include "quantcap/status.h"

#ifdef __cplusplus
extern "C" {
#endif

/* A file being written under a temporary name beside its final path. The
 * temporary file is created with mode 0666 less the process umask, as any
 * new file (the umask is never read or changed), so the finished file has
 * the permissions a plain fopen would give it. */
typedef struct qc_atomic_file qc_atomic_file;

/* Create the temporary file for `path` (same folder, name
 * "PATH.tmp.PID.N"). QC_EIO naming the path when the folder is not
 * writable or `path` is a directory; QC_ENOMEM. On failure *out is NULL
 * and nothing is left on disk. */
QC_API qc_status qc_atomic_file_open(const char *path, qc_atomic_file **out);

/* The stream to write to (owned by the file object; do not fclose it).
 * NULL after qc_atomic_file_temp_path closed it. A write error on it
 * is reported by qc_atomic_file_commit. */
QC_API FILE *qc_atomic_file_stream(qc_atomic_file *f);

/* The temporary file's name, for writers that open files by name (PLplot):
 * the stream is closed first, and the writer must have finished with the
 * name before qc_atomic_file_commit. NULL when f is NULL; a failure to
 * close the stream is remembered and makes the commit fail. */
QC_API const char *qc_atomic_file_temp_path(qc_atomic_file *f);

/* The final path given to qc_atomic_file_open; NULL when f is NULL. */
QC_API const char *qc_atomic_file_path(const qc_atomic_file *f);

/* Flush, sync and close the temporary file and rename it to the final
 * path, replacing any file there. Frees f in every case. On failure
 * (QC_EIO naming the path: a write error seen at any point, a full disk,
 * a failed rename) the temporary file is removed and the final path is
 * left as it was. */
QC_API qc_status qc_atomic_file_commit(qc_atomic_file *f);

/* Close and remove the temporary file, leaving the final path as it was;
 * frees f. NULL does nothing. */
QC_API void qc_atomic_file_discard(qc_atomic_file *f);

/* Write `len` bytes to `path` atomically (open, write, commit). QC_EIO
 * naming the path, QC_ENOMEM; on failure the final path is left as it
 * was and no temporary file remains. */
QC_API qc_status qc_write_file_atomic(const char *path, const char *text, size_t len);

#ifdef __cplusplus
}
#endif

#endif /* QUANTCAP_ATOMIC_FILE_H */
