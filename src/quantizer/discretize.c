/* discretize.c — from a noise model, input levels and thresholds to the
 * transition matrix of the quantized channel (the unquantized channel's
 * rate is in unquantized_mi.c). */
#include "quantizer/quantizer.h"

#include <math.h>
#include <stdlib.h>


qc_status qc_thresholds_check(const qc_model *model, const double *t, size_t n)
{
    for (size_t j = 0; j < n; j++) {
        if (!isfinite(t[j]))
            return qc_fail(QC_EINVAL, "threshold %zu is not a finite number", j + 1);
        if (model && qc_model_get_type(model)->output == QC_OUTPUT_COUNTS) {
            if (t[j] != floor(t[j]))
                return qc_fail(QC_EINVAL,
                               "threshold %zu (%g) must be a whole photon count "
                               "for model '%s'",
                               j + 1, t[j], qc_model_get_type(model)->name);
            if (t[j] < 1.0)
                return qc_fail(QC_EINVAL,
                               "threshold %zu (%g) must be >= 1: counts below 0 "
                               "do not occur",
                               j + 1, t[j]);
        }
        if (j > 0 && !(t[j] > t[j - 1]))
            return qc_fail(QC_EINVAL,
                           "thresholds must be strictly increasing: threshold %zu "
                           "(%.17g) is not above threshold %zu (%.17g)",
                           j + 1, t[j], j, t[j - 1]);
    }
    return QC_OK;
}

void qc_tails_at(const qc_model *model, double x, double y, double *lo, double *hi)
{
    const qc_model_type *type = qc_model_get_type(model);
    if (type->tails) {
        type->tails(model, x, y, lo, hi);
    } else {
        *lo = type->below(model, x, y);
        *hi = type->above(model, x, y);
    }
}

size_t qc_count_below(const double *t, size_t n, double y, int strict)
{
    size_t lo = 0, hi = n;
    while (lo < hi) {
        size_t mid = lo + (hi - lo) / 2;
        if (strict ? t[mid] < y : t[mid] <= y)
            lo = mid + 1;
        else
            hi = mid;
    }
    return lo;
}

int qc_supports_ordered(const double *lo, const double *hi, size_t n)
{
    for (size_t x = 1; x < n; x++)
        if (!(lo[x] >= lo[x - 1] && hi[x] >= hi[x - 1]))
            return 0;
    return 1;
}

void qc_supports_holding(const double *lo, const double *hi, size_t n, double y, int closed,
                         size_t *a, size_t *b)
{
    /* the first level whose support ends above y (at or above: closed) */
    size_t l = 0, h = n;
    while (l < h) {
        size_t mid = l + (h - l) / 2;
        if (closed ? hi[mid] >= y : hi[mid] > y)
            h = mid;
        else
            l = mid + 1;
    }
    *a = l;
    /* then the first whose support starts above y (at or above: open) */
    h = n;
    while (l < h) {
        size_t mid = l + (h - l) / 2;
        if (closed ? lo[mid] <= y : lo[mid] < y)
            l = mid + 1;
        else
            h = mid;
    }
    *b = l;
}

/* Sets row[c] = 0 for the cells c of [w[0], w[1]) outside [keep0, keep1)
 * and then w = [keep0, keep1): `w` holds the cells of a row that may be
 * nonzero, so that a row whose band moves clears only what it leaves. */
static void clear_outside(double *row, size_t *w, size_t keep0, size_t keep1)
{
    for (size_t c = w[0]; c < w[1] && c < keep0; c++)
        row[c] = 0.0;
    for (size_t c = w[0] > keep1 ? w[0] : keep1; c < w[1]; c++)
        row[c] = 0.0;
    w[0] = keep0;
    w[1] = keep1;
}

/* One row: cell probabilities of level x. `lo`, `hi` are scratch of
 * length n (P(Y < t_j), P(Y ≥ t_j)). clip: thresholds outside the
 * level's support (the model's interval holding all but ~1e-15 of the
 * mass) get the tails 0 and 1 without a model call; the thresholds must
 * then be increasing, and only the band of cells the support reaches is
 * visited (the others are exactly 0: between two tails of 0 and 1, or of
 * 1 and 0). written: NULL (every cell outside the band is set to 0), or
 * the row's cells [written[0], written[1]) that may be nonzero, all
 * others being 0 already: only those outside the band are cleared, and
 * written becomes the band. */
static qc_status discretize_row(const qc_model *m, double x, const double *t,
                                size_t n, int clip, double *lo, double *hi, double *row,
                                size_t *written)
{
    const qc_model_type *type = qc_model_get_type(m);
    /* thresholds j0 .. j1 − 1 lie inside the support; cells j0 .. j1 */
    size_t j0 = 0, j1 = n;
    if (clip && n > 0) {
        double s0, s1;
        type->support(m, x, &s0, &s1);
        j0 = qc_count_below(t, n, s0, 0);
        j1 = j0 + qc_count_below(t + j0, n - j0, s1, 1);
        if (j0 > 0) {
            lo[j0 - 1] = 0.0;
            hi[j0 - 1] = 1.0;
        }
        if (j1 < n) {
            lo[j1] = 1.0;
            hi[j1] = 0.0;
        }
    }
    for (size_t j = j0; j < j1; j++) {
        qc_tails_at(m, x, t[j], &lo[j], &hi[j]);
        if (!isfinite(lo[j]) || !isfinite(hi[j]) || lo[j] < 0.0 || hi[j] < 0.0)
            return qc_fail(QC_ENUMERIC,
                           "model '%s' returned an invalid tail probability at "
                           "level %g, threshold %g",
                           qc_model_get_type(m)->name, x, t[j]);
    }
    size_t whole[2] = {0, n + 1}; /* no extent known: the whole row */
    clear_outside(row, written ? written : whole, j0, j1 + 1);
    double s = 0.0;
    for (size_t c = j0; c <= j1; c++) {
        double p;
        if (n == 0)
            p = 1.0;
        else if (c == 0)
            p = lo[0];
        else if (c == n)
            p = hi[n - 1];
        else
            p = qc_cell_between(lo[c - 1], hi[c - 1], lo[c], hi[c]);
        if (p < 0.0) {
            if (p < -1e-12)
                return qc_fail(QC_ENUMERIC,
                               "model '%s' is not monotone at level %g "
                               "(cell %zu has probability %g)",
                               qc_model_get_type(m)->name, x, c + 1, p);
            p = 0.0;
        }
        row[c] = p;
        s += p;
    }
    if (!(fabs(s - 1.0) <= QC_DMC_ROW_TOL))
        return qc_fail(QC_ENUMERIC,
                       "model '%s': cell probabilities of level %g sum to %.17g",
                       qc_model_get_type(m)->name, x, s);
    for (size_t c = j0; c <= j1; c++)
        row[c] /= s;
    return QC_OK;
}

/* Row x of d: the level's cell probabilities, or zeros when `sent` is
 * given and sends it with no probability (written: as discretize_row,
 * two entries per row). */
static qc_status row_at(const qc_model *m, const double *levels, const double *sent,
                        size_t x, const double *t, size_t n, int clip, double *lo,
                        double *hi, size_t *written, qc_dmc *d)
{
    double *row = d->p + x * d->ny;
    size_t *w = written ? written + 2 * x : NULL;
    if (sent && !(sent[x] > 0.0)) {
        size_t whole[2] = {0, n + 1}; /* no extent known: the whole row */
        clear_outside(row, w ? w : whole, 0, 0);
        return QC_OK;
    }
    return discretize_row(m, levels[x], t, n, clip, lo, hi, row, w);
}

typedef struct {
    const qc_model *model;
    const double *levels, *sent, *t;
    size_t n;
    int clip;
    size_t *written;
    qc_dmc *d;
} rows_ctx;

/* qc_row_fn: row x of the channel, with lo and hi in the scratch. */
static int row_of(size_t x, double *scratch, void *p)
{
    const rows_ctx *c = p;
    return row_at(c->model, c->levels, c->sent, x, c->t, c->n, c->clip, scratch,
                  scratch + c->n, c->written, c->d) != QC_OK;
}

/* Rows of a large channel are shared among OpenMP threads (for a model
 * that several threads may evaluate at once), each with its own scratch;
 * a row is computed exactly as in the serial loop. After a failure the
 * first failing row is run again in the calling thread, so that its
 * message is this thread's and the same as a serial run's. */
static qc_status discretize_rows(const qc_model *model, const double *levels,
                                 size_t nlevels, const double *sent, const double *t,
                                 size_t n, int clip, double *lo, double *hi,
                                 size_t *written, qc_dmc *d)
{
    if (nlevels > 1 && qc_parallel_worth(nlevels * (n + 1)) &&
        qc_model_thread_safe(model)) {
        rows_ctx c = {model, levels, sent, t, n, clip, written, d};
        size_t failed;
        if (qc_parallel_rows(nlevels, 2 * n, row_of, &c, &failed) != QC_OK)
            return qc_fail(QC_ENOMEM, "out of memory for the rows of a %zu x %zu channel",
                           nlevels, n + 1);
        if (failed < nlevels)
            return row_at(model, levels, sent, failed, t, n, clip, lo, hi, written, d);
        return QC_OK;
    }
    qc_status st = QC_OK;
    for (size_t x = 0; x < nlevels && st == QC_OK; x++)
        st = row_at(model, levels, sent, x, t, n, clip, lo, hi, written, d);
    return st;
}

qc_status qc_discretize_into(const qc_model *model, const double *levels,
                             size_t nlevels, const double *t, size_t n,
                             double *lo, double *hi, qc_dmc *d)
{
    return discretize_rows(model, levels, nlevels, NULL, t, n, 0, lo, hi, NULL, d);
}

qc_status qc_discretize_clipped(const qc_model *model, const double *levels,
                                size_t nlevels, const double *t, size_t n,
                                double *lo, double *hi, qc_dmc *d)
{
    return discretize_rows(model, levels, nlevels, NULL, t, n, 1, lo, hi, NULL, d);
}

qc_status qc_discretize_sent(const qc_model *model, const double *levels,
                             const double *input, size_t nlevels, const double *t,
                             size_t n, int clip, double *lo, double *hi, size_t *written,
                             qc_dmc *d)
{
    return discretize_rows(model, levels, nlevels, input, t, n, clip, lo, hi, written, d);
}

qc_status qc_discretize(const qc_model *model, const double *levels,
                        size_t nlevels, const double *t, size_t n, qc_dmc **out)
{
    *out = NULL;
    qc_status st = qc_model_check_levels(model, levels, nlevels);
    if (st != QC_OK)
        return st;
    st = qc_thresholds_check(model, t, n);
    if (st != QC_OK)
        return st;
    qc_dmc *d;
    st = qc_dmc_alloc(nlevels, n + 1, &d);
    if (st != QC_OK)
        return st;
    double *lo = qc_malloc_array(n + 1, sizeof *lo);
    double *hi = qc_malloc_array(n + 1, sizeof *hi);
    if (!lo || !hi) {
        st = qc_fail(QC_ENOMEM, "out of memory");
        goto fail;
    }
    st = qc_discretize_into(model, levels, nlevels, t, n, lo, hi, d);
    if (st != QC_OK)
        goto fail;
    free(lo);
    free(hi);
    *out = d;
    return QC_OK;
fail:
    free(lo);
    free(hi);
    qc_dmc_free(d);
    return st;
}
