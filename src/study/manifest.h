/* manifest.h — the list of files a sweep wrote into its output folder
 * (internal to the sweep runner; manifest.c). */
#ifndef QC_MANIFEST_H
#define QC_MANIFEST_H

#include <stddef.h>

#include "core/internal.h"

/* Name of the list of files a sweep wrote, kept in its output folder. */
#define QC_MANIFEST_NAME "manifest.txt"

/* Record `files` (paths in `dir`) in dir/manifest.txt. When `prune`, first
 * remove the files the previous manifest lists that `files` does not (the
 * stale output of an earlier run; nothing else is touched), appending
 * their paths to *removed; otherwise the previous list is kept in the new
 * one. */
qc_status qc_manifest_update(const char *dir, char *const *files, size_t nfiles, int prune,
                             char ***removed, size_t *nremoved);

#endif
