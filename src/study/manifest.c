/* manifest.c — the list of files a sweep wrote into its output folder
 * (manifest.txt: a comment line, then one file name per line). A rerun
 * into the same folder removes the files the previous list names that it
 * does not write again, so no stale figure of an earlier grid stays beside
 * the new ones; files the list does not name are never touched. */
#include "study/manifest.h"

#include "study/file_list.h"

#include "core/internal.h"
#include "quantcap/atomic_file.h"

#include <errno.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#define MANIFEST_HEAD "# files written by the last quantcap sweep into this folder\n"

static const char *base_name(const char *path)
{
    const char *slash = strrchr(path, '/');
    return slash ? slash + 1 : path;
}

/* A name the manifest may hold: a plain file of this folder. */
static int plain_name(const char *name)
{
    return name[0] && name[0] != '#' && !strchr(name, '/') && strcmp(name, ".") != 0 &&
           strcmp(name, "..") != 0 && strcmp(name, QC_MANIFEST_NAME) != 0;
}

static int listed(char *const *files, size_t nfiles, const char *name)
{
    for (size_t i = 0; i < nfiles; i++)
        if (strcmp(base_name(files[i]), name) == 0)
            return 1;
    return 0;
}

static void list_free(char **list, size_t n)
{
    for (size_t i = 0; i < n; i++)
        free(list[i]);
    free(list);
}

/* The names of the previous manifest (none when there is none). */
static qc_status read_manifest(const char *path, char ***names, size_t *n)
{
    *names = NULL;
    *n = 0;
    FILE *f = fopen(path, "r");
    if (!f)
        return errno == ENOENT ? QC_OK
                               : qc_fail(QC_EIO, "%s: cannot read: %s", path, strerror(errno));
    char line[4400];
    qc_status st = QC_OK;
    while (st == QC_OK && fgets(line, sizeof line, f)) {
        line[strcspn(line, "\r\n")] = '\0';
        if (plain_name(line) && !listed(*names, *n, line))
            st = qc_file_list_add(names, n, line);
    }
    fclose(f);
    return st;
}

qc_status qc_manifest_update(const char *dir, char *const *files, size_t nfiles, int prune,
                             char ***removed, size_t *nremoved)
{
    char path[4400], victim[4400];
    if (snprintf(path, sizeof path, "%s/%s", dir, QC_MANIFEST_NAME) >= (int)sizeof path)
        return qc_fail(QC_EINVAL, "output path too long: %s/%s", dir, QC_MANIFEST_NAME);
    char **old;
    size_t nold;
    qc_status st = read_manifest(path, &old, &nold);
    if (st != QC_OK)
        return st;
    size_t cap = strlen(MANIFEST_HEAD) + 1;
    for (size_t i = 0; i < nfiles; i++)
        cap += strlen(base_name(files[i])) + 1;
    for (size_t i = 0; i < nold; i++)
        cap += strlen(old[i]) + 1;
    char *text = malloc(cap);
    if (!text) {
        list_free(old, nold);
        return qc_fail(QC_ENOMEM, "out of memory");
    }
    size_t len = (size_t)snprintf(text, cap, "%s", MANIFEST_HEAD);
    for (size_t i = 0; i < nfiles; i++)
        len += (size_t)snprintf(text + len, cap - len, "%s\n", base_name(files[i]));
    for (size_t i = 0; i < nold && st == QC_OK; i++) {
        if (listed(files, nfiles, old[i]))
            continue;
        if (!prune) { /* keep it listed: a later finished run removes it */
            len += (size_t)snprintf(text + len, cap - len, "%s\n", old[i]);
            continue;
        }
        snprintf(victim, sizeof victim, "%s/%s", dir, old[i]);
        struct stat sb;
        if (lstat(victim, &sb) != 0 || !S_ISREG(sb.st_mode))
            continue; /* gone already, or not a file this sweep wrote */
        if (unlink(victim) != 0)
            st = qc_fail(QC_EIO, "%s: cannot remove the stale file: %s", victim,
                         strerror(errno));
        else
            st = qc_file_list_add(removed, nremoved, victim);
    }
    if (st == QC_OK)
        st = qc_write_file_atomic(path, text, len);
    free(text);
    list_free(old, nold);
    return st;
}
