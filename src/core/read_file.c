/* read_file.c — a whole input file into memory, for the parsers that work
 * on a buffer (matrices, density tables, converter transition levels). */
#include "core/internal.h"

#include <errno.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

qc_status qc_read_file(const char *path, size_t max_bytes, const char *max_text, char **buf,
                       size_t *len)
{
    *buf = NULL;
    *len = 0;
    FILE *fp = fopen(path, "rb");
    if (!fp)
        return qc_fail(QC_EIO, "%s: cannot open: %s", path, strerror(errno));
    char *b = NULL;
    size_t n = 0, cap = 0;
    qc_status st = QC_OK;
    for (;;) {
        if (n == cap) {
            if (cap >= max_bytes) {
                st = qc_fail(QC_EFORMAT, "%s: file larger than %s", path, max_text);
                break;
            }
            cap = cap ? 2 * cap : 65536;
            char *nb = realloc(b, cap);
            if (!nb) {
                st = qc_fail(QC_ENOMEM, "%s: out of memory", path);
                break;
            }
            b = nb;
        }
        size_t got = fread(b + n, 1, cap - n, fp);
        n += got;
        if (got == 0) {
            if (ferror(fp))
                st = qc_fail(QC_EIO, "%s: cannot read: %s", path, strerror(errno));
            break;
        }
    }
    fclose(fp);
    if (st != QC_OK) {
        free(b);
        return st;
    }
    *buf = b;
    *len = n;
    return QC_OK;
}
