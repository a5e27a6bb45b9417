/* plane_read.c — the constellation file: one point a line, "x y",
 * "x y p" or "x y p LABEL" (p '-' for no law, LABEL a bit string), '#'
 * comments; every message names the file and line. */
#include "alphabet/alphabet.h"
#include "quantcap/plane.h"
#include "core/parse.h"

#include <errno.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#define MAX_FIELDS 4
#define MAX_LINE 1024

typedef struct {
    double *x, *y, *p;
    size_t *lab;
    size_t n, cap;
} points;

static void points_free(points *s)
{
    free(s->x), free(s->y), free(s->p), free(s->lab);
}

static int grow(points *s)
{
    if (s->n < s->cap)
        return 1;
    size_t cap = s->cap ? 2 * s->cap : 64;
    double *x = realloc(s->x, cap * sizeof *x);
    if (x) s->x = x;
    double *y = realloc(s->y, cap * sizeof *y);
    if (y) s->y = y;
    double *p = realloc(s->p, cap * sizeof *p);
    if (p) s->p = p;
    size_t *l = realloc(s->lab, cap * sizeof *l);
    if (l) s->lab = l;
    if (!x || !y || !p || !l)
        return 0;
    s->cap = cap;
    return 1;
}

qc_status qc_plane_parse_text(const char *text, size_t len, const char *name,
                              qc_plane **out)
{
    *out = NULL;
    points s = {0};
    size_t columns = 0, nbits = 0, line_no = 0, first_line = 0;
    int with_prob = -1;
    qc_status st = QC_OK;
    const char *p = text, *end = text + len;
    while (p < end && st == QC_OK) {
        const char *eol = memchr(p, '\n', (size_t)(end - p));
        if (!eol)
            eol = end;
        line_no++;
        size_t ll = (size_t)(eol - p);
        char line[MAX_LINE];
        if (ll >= sizeof line) {
            st = qc_fail(QC_EFORMAT, "%s:%zu: line longer than %d characters", name, line_no,
                         MAX_LINE - 1);
            break;
        }
        memcpy(line, p, ll);
        line[ll] = '\0';
        p = eol < end ? eol + 1 : end;
        if (memchr(line, '\0', ll)) {
            st = qc_fail(QC_EFORMAT, "%s:%zu: a NUL byte in the line", name, line_no);
            break;
        }
        char *hash = strchr(line, '#');
        if (hash)
            *hash = '\0';
        char *f[MAX_FIELDS + 1];
        size_t nf = 0;
        for (char *tok = strtok(line, " \t\r,"); tok; tok = strtok(NULL, " \t\r,")) {
            if (nf == MAX_FIELDS) {
                st = qc_fail(QC_EFORMAT, "%s:%zu: more than %d columns (expected x y "
                             "[probability] [label])", name, line_no, MAX_FIELDS);
                break;
            }
            f[nf++] = tok;
        }
        if (st != QC_OK || nf == 0)
            continue;
        if (nf < 2) {
            st = qc_fail(QC_EFORMAT, "%s:%zu: one column (expected x y [probability] "
                         "[label])", name, line_no);
            break;
        }
        if (columns == 0) {
            columns = nf;
            first_line = line_no;
        } else if (nf != columns) {
            st = qc_fail(QC_EFORMAT, "%s:%zu: %zu columns where line %zu has %zu; every "
                         "point gives the same columns", name, line_no, nf, first_line,
                         columns);
            break;
        }
        if (!grow(&s)) {
            st = qc_fail(QC_ENOMEM, "out of memory");
            break;
        }
        if (s.n == QC_PLANE_MAX) {
            st = qc_fail(QC_EINVAL, "%s:%zu: more than %d points", name, line_no,
                         QC_PLANE_MAX);
            break;
        }
        double v[3] = {0.0, 0.0, 1.0};
        for (size_t k = 0; k < nf && k < 3 && st == QC_OK; k++) {
            if (k == 2 && strcmp(f[2], "-") == 0) {
                if (with_prob == 1)
                    st = qc_fail(QC_EFORMAT, "%s:%zu: '-' for the probability where earlier "
                                 "points give one", name, line_no);
                with_prob = 0;
                continue;
            }
            if (qc_parse_double(f[k], &v[k]) != QC_OK)
                st = qc_fail(QC_EFORMAT, "%s:%zu: %s '%s' is not a number", name, line_no,
                             k == 0 ? "x" : k == 1 ? "y" : "probability", f[k]);
            else if (k == 2) {
                if (with_prob == 0)
                    st = qc_fail(QC_EFORMAT, "%s:%zu: a probability where earlier points "
                                 "give '-'", name, line_no);
                with_prob = 1;
            }
        }
        if (st != QC_OK)
            break;
        size_t lab = 0;
        if (nf == 4) {
            size_t bl = strlen(f[3]);
            if (bl == 0 || bl > 20 || strspn(f[3], "01") != bl) {
                st = qc_fail(QC_EFORMAT, "%s:%zu: label '%s' is not a string of 1 to 20 "
                             "bits (0s and 1s)", name, line_no, f[3]);
                break;
            }
            if (nbits == 0)
                nbits = bl;
            else if (bl != nbits) {
                st = qc_fail(QC_EFORMAT, "%s:%zu: label '%s' has %zu bits where line %zu's "
                             "has %zu; labels must have one length", name, line_no, f[3],
                             bl, first_line, nbits);
                break;
            }
            lab = strtoul(f[3], NULL, 2);
            for (size_t j = 0; j < s.n; j++)
                if (s.lab[j] == lab) {
                    st = qc_fail(QC_EINVAL, "%s:%zu: label '%s' is repeated (point %zu has "
                                 "it); labels must be distinct", name, line_no, f[3], j + 1);
                    break;
                }
            if (st != QC_OK)
                break;
        }
        s.x[s.n] = v[0];
        s.y[s.n] = v[1];
        s.p[s.n] = v[2];
        s.lab[s.n] = lab;
        s.n++;
    }
    if (st == QC_OK && s.n == 0)
        st = qc_fail(QC_EFORMAT, "%s: no points (expected lines 'x y [probability] "
                     "[label]')", name);
    if (st == QC_OK && s.n < 2)
        st = qc_fail(QC_EINVAL, "%s: one point; a constellation needs at least 2", name);
    if (st == QC_OK) {
        st = qc_plane_from_points(s.x, s.y, s.n, with_prob == 1 ? s.p : NULL,
                                  columns == 4 ? s.lab : NULL, (unsigned)nbits, out);
        if (st == QC_EINVAL) {
            char msg[512];
            snprintf(msg, sizeof msg, "%s", qc_last_error());
            const char *tail = strncmp(msg, "constellation: ", 15) == 0 ? msg + 15 : msg;
            st = qc_fail(QC_EINVAL, "%s: %s", name, tail);
        }
    }
    points_free(&s);
    return st;
}

qc_status qc_plane_read(const char *path, qc_plane **out)
{
    *out = NULL;
    FILE *f = fopen(path, "rb");
    if (!f)
        return qc_fail(QC_EIO, "cannot open constellation file '%s': %s", path,
                       strerror(errno));
    size_t cap = 4096, n = 0;
    char *buf = malloc(cap);
    qc_status st = QC_OK;
    for (;;) {
        if (!buf) {
            st = qc_fail(QC_ENOMEM, "out of memory");
            break;
        }
        size_t got = fread(buf + n, 1, cap - n, f);
        n += got;
        if (got == 0) {
            if (ferror(f))
                st = qc_fail(QC_EIO, "cannot read constellation file '%s' (a directory?)",
                             path);
            break;
        }
        if (n == cap) {
            if (cap >= ((size_t)64 << 20)) {
                st = qc_fail(QC_EFORMAT, "%s: larger than 64 MiB", path);
                break;
            }
            char *b = realloc(buf, 2 * cap);
            if (!b) {
                st = qc_fail(QC_ENOMEM, "out of memory");
                break;
            }
            buf = b;
            cap *= 2;
        }
    }
    fclose(f);
    if (st == QC_OK)
        st = qc_plane_parse_text(buf, n, path, out);
    free(buf);
    return st;
}
