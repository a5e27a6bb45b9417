/* cell_mi.c — mutual information I(X;Y_q) of a threshold quantizer as a
 * function of its thresholds, with the analytic gradient
 *   ∂I/∂t_j = Σ_x r(x) f(t_j|x) [log(P(j|x)/q(j)) − log(P(j+1|x)/q(j+1))],
 * which follows from ∂P(j|x)/∂t_j = f(t_j|x) = −∂P(j+1|x)/∂t_j and
 * ∂I/∂P(c|x) = r(x) log(P(c|x)/q(c)) (Cover & Thomas, Elements of
 * Information Theory, §2.4; the two "+1" terms cancel). Used by the
 * uniform search, the continuous refinement and Lloyd–Max reporting.
 * A clipping workspace (w->clip) takes each level's tails as 0 and 1
 * beyond its support and visits only the band of cells the support
 * reaches, so that a wide alphabet costs its levels' reach, not
 * levels × cells. */
#include "quantizer/quantizer.h"

#include <float.h>
#include <math.h>
#include <stdlib.h>

qc_status qc_cell_mi_alloc(const qc_model *model, const double *levels,
                           const double *input, size_t nlevels, size_t nt,
                           qc_cell_mi **out)
{
    *out = NULL;
    qc_cell_mi *w = calloc(1, sizeof *w);
    if (!w)
        return qc_fail(QC_ENOMEM, "out of memory");
    w->model = model;
    w->levels = levels;
    w->input = input;
    w->nlevels = nlevels;
    w->nt = nt;
    qc_status st = qc_dmc_alloc(nlevels, nt + 1, &w->channel);
    if (st != QC_OK) {
        free(w);
        return st;
    }
    w->lo = qc_malloc_array(nt + 1, sizeof *w->lo);
    w->hi = qc_malloc_array(nt + 1, sizeof *w->hi);
    w->q = qc_malloc_array(nt + 1, sizeof *w->q);
    w->log_q = qc_malloc_array(nt + 1, sizeof *w->log_q);
    w->lr = qc_malloc_array(nlevels * (nt + 1), sizeof *w->lr);
    w->sup_lo = qc_malloc_array(nlevels, sizeof *w->sup_lo);
    w->sup_hi = qc_malloc_array(nlevels, sizeof *w->sup_hi);
    w->band = qc_malloc_array(2 * nlevels, sizeof *w->band);
    if (!w->lo || !w->hi || !w->q || !w->log_q || !w->lr || !w->sup_lo || !w->sup_hi ||
        !w->band) {
        qc_cell_mi_free(w);
        return qc_fail(QC_ENOMEM, "out of memory");
    }
    for (size_t x = 0; x < nlevels; x++)
        qc_model_get_type(model)->support(model, levels[x], &w->sup_lo[x], &w->sup_hi[x]);
    *out = w;
    return QC_OK;
}

void qc_cell_mi_free(qc_cell_mi *w)
{
    if (!w)
        return;
    qc_dmc_free(w->channel);
    free(w->lo);
    free(w->hi);
    free(w->q);
    free(w->log_q);
    free(w->lr);
    free(w->sup_lo);
    free(w->sup_hi);
    free(w->band);
    free(w);
}

/* log with the zero cell mapped to the smallest normal number, so that a
 * gradient term f·(log a − log b) stays finite (f is tiny there too). */
static double safe_log(double v) { return log(v > DBL_MIN ? v : DBL_MIN); }

/* lr = log(P(c|x)/q(c)) of row x's band; log_zero = safe_log(0). */
static void row_log_ratios(qc_cell_mi *w, size_t x, double log_zero)
{
    const size_t k = w->nt + 1;
    const double *row = w->channel->p + x * k;
    double *lr = w->lr + x * k;
    for (size_t c = w->band[2 * x]; c <= w->band[2 * x + 1]; c++)
        lr[c] = (row[c] > DBL_MIN ? log(row[c]) : log_zero) - w->log_q[c];
}

/* Adds row x's terms r P log(P/q) over its band (the cells beyond are 0)
 * to *mi, one at a time in the order of the cells. */
static void add_row_share(const qc_cell_mi *w, size_t x, double *mi)
{
    const size_t k = w->nt + 1;
    const double *row = w->channel->p + x * k, *lr = w->lr + x * k;
    for (size_t c = w->band[2 * x]; c <= w->band[2 * x + 1]; c++)
        if (row[c] > 0.0)
            *mi += w->input[x] * row[c] * lr[c];
}

/* The band of cells each row's support reaches (all cells unclipped);
 * QC_EINVAL when clipped thresholds are not increasing. */
static qc_status row_bands(qc_cell_mi *w, const double *t)
{
    const size_t nt = w->nt;
    for (size_t j = 1; w->clip && j < nt; j++)
        if (!(t[j] > t[j - 1]))
            return qc_fail(QC_EINVAL, "thresholds must be increasing (threshold %zu)", j + 1);
    for (size_t x = 0; x < w->nlevels; x++) {
        size_t c0 = 0, c1 = nt;
        if (w->clip) {
            c0 = qc_count_below(t, nt, w->sup_lo[x], 0);
            c1 = c0 + qc_count_below(t + c0, nt - c0, w->sup_hi[x], 1);
        }
        w->band[2 * x] = c0;
        w->band[2 * x + 1] = c1;
    }
    return QC_OK;
}

qc_status qc_cell_mi_eval(qc_cell_mi *w, const double *t, double *mi_nats,
                          double *grad)
{
    const size_t nx = w->nlevels, k = w->nt + 1;
    qc_status st = row_bands(w, t);
    if (st == QC_OK)
        st = qc_discretize_sent(w->model, w->levels, w->input, nx, t, w->nt, w->clip, w->lo,
                                w->hi, w->channel);
    if (st != QC_OK)
        return st;
    qc_output_law(w->channel, w->input, w->q);
    for (size_t c = 0; c < k; c++) /* log q(c), once per cell */
        w->log_q[c] = safe_log(w->q[c]);
    const double log_zero = safe_log(0.0); /* the zero cell's log, once */
    double mi = 0.0;
    if (qc_parallel_worth(nx * k)) {
        /* a large channel: the log ratios row by row in threads, then
         * their sum in this thread, in the serial loop's order */
#pragma omp parallel for schedule(static)
        for (size_t x = 0; x < nx; x++)
            if (w->input[x] > 0.0)
                row_log_ratios(w, x, log_zero);
        for (size_t x = 0; x < nx; x++)
            if (w->input[x] > 0.0)
                add_row_share(w, x, &mi);
    } else {
        for (size_t x = 0; x < nx; x++)
            if (w->input[x] > 0.0) {
                row_log_ratios(w, x, log_zero);
                add_row_share(w, x, &mi);
            }
    }
    if (!isfinite(mi))
        return qc_fail(QC_ENUMERIC, "mutual information of the quantizer is not finite");
    *mi_nats = mi > 0.0 ? mi : 0.0;
    if (!grad)
        return QC_OK;
    for (size_t j = 0; j < w->nt; j++) {
        double g = 0.0;
        for (size_t x = 0; x < nx; x++) {
            if (!(w->input[x] > 0.0) || !qc_cell_mi_inside(w, x, t[j]))
                continue;
            double f = qc_model_get_type(w->model)->density(w->model, w->levels[x], t[j]);
            if (f > 0.0)
                g += w->input[x] * f * (w->lr[x * k + j] - w->lr[x * k + j + 1]);
        }
        if (!isfinite(g))
            return qc_fail(QC_ENUMERIC,
                           "gradient of the mutual information is not finite at "
                           "threshold %zu (%g)",
                           j + 1, t[j]);
        grad[j] = g;
    }
    return QC_OK;
}

qc_status qc_cell_mi_objective(void *ctx, const double *t, size_t nt, double *value)
{
    (void)nt;
    return qc_cell_mi_eval(ctx, t, value, NULL);
}
