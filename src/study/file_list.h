/* file_list.h — a growing list of malloc'd strings (internal): the files a
 * sweep writes and the notes about figures left out, shared by the sweep
 * runner, the manifest and the plots. */
#ifndef QC_FILE_LIST_H
#define QC_FILE_LIST_H

#include <stddef.h>

#include "core/internal.h"

/* Append a malloc'd copy of `path` to a file list. On QC_ENOMEM the list
 * is unchanged (still owned by the caller). */
qc_status qc_file_list_add(char ***files, size_t *nfiles, const char *path);

#endif
