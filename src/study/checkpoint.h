/* checkpoint.h — the append-only record of a sweep's finished points
 * (internal to the sweep runner; the format is in docs/formats.md). */
#ifndef QC_CHECKPOINT_H
#define QC_CHECKPOINT_H

#include <stddef.h>

#include <jansson.h>

#include "core/internal.h"
#include "quantcap/study.h"

#define QC_CHECKPOINT_NAME "checkpoint.jsonl"

/* Lines reach the kernel with one write() each, so a killed process never
 * loses a finished point; they are synced to the disk at most this often
 * (seconds) and on close, so a power cut loses at most that much work. */
#define QC_CHECKPOINT_SYNC_INTERVAL 1.0

typedef struct {
    int fd;
    char *path;
    double last_sync; /* monotonic seconds */
} qc_checkpoint;

/* Start a new checkpoint at `path` for a scenario (its hash and size):
 * any previous file is replaced. */
qc_status qc_checkpoint_create(qc_checkpoint *cp, const char *path, const char *hash,
                               size_t npoints);

/* Open an existing checkpoint to continue it. Its finished points are
 * stored into records[point] (new references; records has npoints slots,
 * all NULL on entry) and counted in *nfound. A torn last line (a write cut
 * short) is dropped and the file truncated after the last whole line. A
 * missing or empty file starts a new checkpoint. A checkpoint of another
 * scenario, or a damaged line before the last, is QC_EFORMAT naming the
 * file and line. */
qc_status qc_checkpoint_resume(qc_checkpoint *cp, const char *path, const char *hash,
                               size_t npoints, json_t **records, size_t *nfound);

/* Append one finished point (a JSON object with a "point" member) as one
 * line with one write(); sync to the disk when the last sync is older than
 * QC_CHECKPOINT_SYNC_INTERVAL. Not thread-safe: callers serialize. */
qc_status qc_checkpoint_append(qc_checkpoint *cp, json_t *record);

/* A finished sweep's checkpoint in its final form: the header, then every
 * point's record in grid order (records[i] for all npoints, none NULL),
 * written under a temporary name and renamed over `path`. The bytes then
 * depend neither on the order points finished in nor on how many threads
 * or processes computed them. QC_ENOMEM, QC_EIO naming the file. */
qc_status qc_checkpoint_rewrite(const char *path, const char *hash, size_t npoints,
                                json_t *const *records);

/* Sync what was written and close; safe on a closed checkpoint. */
void qc_checkpoint_close(qc_checkpoint *cp);

/* Parse one checkpoint line into a point record; *point receives its
 * index (from 0; the record counts points from 1). QC_EFORMAT if it is
 * not the record of one of the npoints points. */
qc_status qc_checkpoint_parse_line(const char *line, size_t len, size_t npoints,
                                   json_t **record, size_t *point);

#endif
