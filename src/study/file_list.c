/* file_list.c — a growing list of malloc'd strings: the files a sweep
 * writes and the notes about figures it left out. */
#include "study/file_list.h"

#include <stdlib.h>
#include <string.h>

qc_status qc_file_list_add(char ***files, size_t *nfiles, const char *path)
{
    char **grown = realloc(*files, (*nfiles + 1) * sizeof *grown);
    if (!grown)
        return qc_fail(QC_ENOMEM, "out of memory");
    *files = grown;
    if (!(grown[*nfiles] = strdup(path)))
        return qc_fail(QC_ENOMEM, "out of memory");
    (*nfiles)++;
    return QC_OK;
}
