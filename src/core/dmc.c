/* dmc.c — the discrete memoryless channel type: allocation, the
 * row-stochastic check, and the plain-text matrix reader. */
#include "core/internal.h"

#include <errno.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>

qc_status qc_dmc_alloc(size_t nx, size_t ny, qc_dmc **out)
{
    *out = NULL;
    if (nx == 0 || ny == 0)
        return qc_fail(QC_EINVAL, "channel size %zu x %zu: both must be >= 1",
                       nx, ny);
    if (nx > QC_DMC_MAX_DIM || ny > QC_DMC_MAX_DIM ||
        nx > QC_DMC_MAX_DIM * 16 / ny)
        return qc_fail(QC_EINVAL,
                       "channel size %zu x %zu exceeds the limit of %zu "
                       "entries per side",
                       nx, ny, (size_t)QC_DMC_MAX_DIM);
    qc_dmc *d = malloc(sizeof *d);
    double *p = qc_calloc(nx * ny, sizeof *p);
    if (!d || !p) {
        free(d);
        free(p);
        return qc_fail(QC_ENOMEM, "cannot allocate a %zu x %zu channel", nx,
                       ny);
    }
    d->nx = nx;
    d->ny = ny;
    d->p = p;
    *out = d;
    return QC_OK;
}

void qc_dmc_free(qc_dmc *dmc)
{
    if (!dmc)
        return;
    free(dmc->p);
    free(dmc);
}

qc_status qc_dmc_check(const qc_dmc *dmc)
{
    if (!dmc || !dmc->p || dmc->nx == 0 || dmc->ny == 0)
        return qc_fail(QC_EINVAL, "empty channel matrix");
    for (size_t x = 0; x < dmc->nx; x++) {
        const double *row = dmc->p + x * dmc->ny;
        double sum = 0.0;
        for (size_t y = 0; y < dmc->ny; y++) {
            if (!isfinite(row[y]))
                return qc_fail(QC_EINVAL,
                               "row %zu, column %zu: entry is not finite", x + 1,
                               y + 1);
            if (row[y] < 0.0)
                return qc_fail(QC_EINVAL,
                               "row %zu, column %zu: negative probability %.17g",
                               x + 1, y + 1, row[y]);
            sum += row[y];
        }
        if (fabs(sum - 1.0) > QC_DMC_ROW_TOL)
            return qc_fail(QC_EINVAL,
                           "row %zu sums to %.17g, expected 1 within %g", x + 1,
                           sum, QC_DMC_ROW_TOL);
    }
    return QC_OK;
}

/* Growable array of doubles for the parser. */
typedef struct {
    double *v;
    size_t n, cap;
} dvec;

static int dvec_push(dvec *a, double x)
{
    if (a->n == a->cap) {
        size_t cap = a->cap ? 2 * a->cap : 64;
        double *v = qc_malloc_array(cap, sizeof *v);
        if (!v)
            return -1;
        if (a->n)
            memcpy(v, a->v, a->n * sizeof *v);
        free(a->v);
        a->v = v;
        a->cap = cap;
    }
    a->v[a->n++] = x;
    return 0;
}

static int is_sep(char c) { return c == ' ' || c == '\t' || c == ',' || c == '\r' || c == '\v' || c == '\f'; }

qc_status qc_dmc_parse(const char *text, size_t len, const char *name,
                       qc_dmc **out)
{
    *out = NULL;
    dvec vals = {0};
    size_t ncols = 0, nrows = 0, line_no = 0, first_line = 0;
    qc_status st = QC_OK;
    char numbuf[128];
    size_t pos = 0;

    while (pos < len) {
        size_t end = pos;
        while (end < len && text[end] != '\n')
            end++;
        line_no++;
        size_t lim = pos;
        while (lim < end && text[lim] != '#')
            lim++;
        size_t cols_here = 0;
        size_t i = pos;
        int expect_value = 0; /* a comma was just seen */
        while (i < lim) {
            if (text[i] == '\0') {
                st = qc_fail(QC_EFORMAT, "%s:%zu: NUL byte in matrix text", name, line_no);
                goto fail;
            }
            if (text[i] == ',') {
                if (expect_value || cols_here == 0) {
                    st = qc_fail(QC_EFORMAT, "%s:%zu: empty field before ','", name, line_no);
                    goto fail;
                }
                expect_value = 1;
                i++;
                continue;
            }
            if (is_sep(text[i])) {
                i++;
                continue;
            }
            size_t j = i;
            while (j < lim && !is_sep(text[j]) && text[j] != ',')
                j++;
            size_t w = j - i;
            if (w >= sizeof numbuf) {
                st = qc_fail(QC_EFORMAT, "%s:%zu: field %zu is too long to be a number",
                             name, line_no, cols_here + 1);
                goto fail;
            }
            memcpy(numbuf, text + i, w);
            numbuf[w] = '\0';
            char *endp;
            char shown[4 * QC_QUOTE_CHARS + 8];
            errno = 0;
            double v = strtod(numbuf, &endp);
            if (endp == numbuf || *endp != '\0') {
                st = qc_fail(QC_EFORMAT, "%s:%zu: field %zu '%s' is not a number",
                             name, line_no, cols_here + 1, qc_quote(numbuf, w, QC_QUOTE_CHARS, shown, sizeof shown));
                goto fail;
            }
            if (!isfinite(v) || (errno == ERANGE && fabs(v) > 1.0)) {
                st = qc_fail(QC_EFORMAT, "%s:%zu: field %zu '%s' is not a finite number",
                             name, line_no, cols_here + 1, qc_quote(numbuf, w, QC_QUOTE_CHARS, shown, sizeof shown));
                goto fail;
            }
            if (v < 0.0) {
                st = qc_fail(QC_EFORMAT, "%s:%zu: field %zu is a negative probability (%s)",
                             name, line_no, cols_here + 1, qc_quote(numbuf, w, QC_QUOTE_CHARS, shown, sizeof shown));
                goto fail;
            }
            if (dvec_push(&vals, v) != 0) {
                st = qc_fail(QC_ENOMEM, "%s:%zu: out of memory", name, line_no);
                goto fail;
            }
            cols_here++;
            expect_value = 0;
            i = j;
        }
        if (expect_value) {
            st = qc_fail(QC_EFORMAT, "%s:%zu: trailing ',' without a value", name, line_no);
            goto fail;
        }
        if (cols_here > 0) {
            if (nrows == 0) {
                ncols = cols_here;
                first_line = line_no;
            } else if (cols_here != ncols) {
                st = qc_fail(QC_EFORMAT,
                             "%s:%zu: row has %zu entries, expected %zu like line %zu",
                             name, line_no, cols_here, ncols, first_line);
                goto fail;
            }
            nrows++;
            if (nrows > QC_DMC_MAX_DIM) {
                st = qc_fail(QC_EFORMAT, "%s:%zu: more than %zu rows", name, line_no,
                             (size_t)QC_DMC_MAX_DIM);
                goto fail;
            }
        }
        pos = end + 1;
    }
    if (nrows == 0) {
        st = qc_fail(QC_EFORMAT, "%s: no matrix rows found (empty file?)", name);
        goto fail;
    }
    qc_dmc *d;
    st = qc_dmc_alloc(nrows, ncols, &d);
    if (st != QC_OK) {
        st = qc_fail(st == QC_ENOMEM ? QC_ENOMEM : QC_EFORMAT, "%s: %s", name,
                     qc_last_error());
        goto fail;
    }
    memcpy(d->p, vals.v, nrows * ncols * sizeof(double));
    st = qc_dmc_check(d);
    if (st != QC_OK) {
        char msg[900];
        snprintf(msg, sizeof msg, "%s", qc_last_error());
        qc_dmc_free(d);
        st = qc_fail(QC_EFORMAT, "%s: %s", name, msg);
        goto fail;
    }
    free(vals.v);
    *out = d;
    return QC_OK;
fail:
    free(vals.v);
    return st;
}

qc_status qc_dmc_read(const char *path, qc_dmc **out)
{
    *out = NULL;
    struct stat sb;
    if (stat(path, &sb) != 0)
        return qc_fail(QC_EIO, "%s: cannot open: %s", path, strerror(errno));
    if (S_ISDIR(sb.st_mode))
        return qc_fail(QC_EIO, "%s: is a directory, expected a matrix file", path);
    char *buf;
    size_t len;
    qc_status st = qc_read_file(path, (size_t)1 << 31, "2 GiB", &buf, &len);
    if (st == QC_OK)
        st = qc_dmc_parse(buf, len, path, out);
    free(buf);
    return st;
}
