/* cell_mi.c — mutual information I(X;Y_q) of a threshold quantizer as a
 * function of its thresholds, with the analytic gradient
 *   ∂I/∂t_j = Σ_x r(x) f(t_j|x) [log(P(j|x)/q(j)) − log(P(j+1|x)/q(j+1))],
 * which follows from ∂P(j|x)/∂t_j = f(t_j|x) = −∂P(j+1|x)/∂t_j and
 * ∂I/∂P(c|x) = r(x) log(P(c|x)/q(c)) (Cover & Thomas, Elements of
 * Information Theory, §2.4; the two "+1" terms cancel). Used by the
 * uniform search, the continuous refinement and Lloyd–Max reporting.
 * A clipping workspace (w->clip) takes each level's tails as 0 and 1
 * beyond its support and visits only the band of cells the support
 * reaches (in the rows, the output law and the sums), and at a threshold
 * only the levels whose support reaches it (qc_cell_mi_reach), so that a
 * wide alphabet costs its levels' reach, not levels × cells. The
 * workspace also keeps each level's mean and variance when the law given
 * it is Gaussian (for the density's exact slope, refine.c), and tells
 * whether the channel at given thresholds is its own mirror image (for
 * the threshold moves, relocate.c). */
#include "quantizer/quantizer.h"

#include <float.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

/* Each level's mean and 1/variance when the law given it is Gaussian
 * with the model's moments; left NULL for other models, or when a
 * level's variance is not positive and finite. */
static qc_status gaussian_moments(qc_cell_mi *w)
{
    const qc_model_type *ty = qc_model_get_type(w->model);
    if (!(ty->properties & QC_MODEL_GAUSSIAN_LAW) || !ty->moments)
        return QC_OK;
    double *mean = qc_malloc_array(2 * w->nlevels, sizeof *mean);
    if (!mean)
        return qc_fail(QC_ENOMEM, "out of memory");
    double *inv_var = mean + w->nlevels;
    for (size_t x = 0; x < w->nlevels; x++) {
        double var;
        if (ty->moments(w->model, w->levels[x], &mean[x], &var) != QC_OK ||
            !isfinite(mean[x]) || !(var > 0.0) || !isfinite(1.0 / var)) {
            free(mean);
            return QC_OK;
        }
        inv_var[x] = 1.0 / var;
    }
    w->mean = mean;
    w->inv_var = inv_var;
    return QC_OK;
}

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
    w->written = qc_calloc(2 * nlevels, sizeof *w->written); /* the channel is all 0 */
    if (!w->lo || !w->hi || !w->q || !w->log_q || !w->lr || !w->sup_lo || !w->sup_hi ||
        !w->band || !w->written) {
        qc_cell_mi_free(w);
        return qc_fail(QC_ENOMEM, "out of memory");
    }
    for (size_t x = 0; x < nlevels; x++)
        qc_model_get_type(model)->support(model, levels[x], &w->sup_lo[x], &w->sup_hi[x]);
    w->supports_ordered = qc_supports_ordered(w->sup_lo, w->sup_hi, nlevels);
    if ((st = gaussian_moments(w)) != QC_OK) {
        qc_cell_mi_free(w);
        return st;
    }
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
    free(w->mean); /* one block with inv_var */
    free(w->band);
    free(w->written);
    free(w);
}

void qc_cell_mi_reach(const qc_cell_mi *w, double y, size_t *x0, size_t *x1)
{
    if (w->clip && w->supports_ordered) {
        qc_supports_holding(w->sup_lo, w->sup_hi, w->nlevels, y, 0, x0, x1);
    } else {
        *x0 = 0;
        *x1 = w->nlevels;
    }
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
 * to *mi, one at a time in the order of the cells (in a local sum, which
 * the compiler need not store after each term). */
static void add_row_share(const qc_cell_mi *w, size_t x, double *mi)
{
    const size_t k = w->nt + 1;
    const double *row = w->channel->p + x * k, *lr = w->lr + x * k;
    const double r = w->input[x];
    double sum = *mi;
    for (size_t c = w->band[2 * x]; c <= w->band[2 * x + 1]; c++)
        if (row[c] > 0.0)
            sum += r * row[c] * lr[c];
    *mi = sum;
}

/* q(c) = Σ_x r(x) P(c|x) for the cells c0 .. c1 − 1, each row's terms
 * over its band only: beyond it P is 0, and adding r·0 would leave q as
 * it is, so q is that of qc_output_law to the bit. */
static void output_law_columns(qc_cell_mi *w, size_t c0, size_t c1)
{
    const size_t k = w->nt + 1;
    for (size_t c = c0; c < c1; c++)
        w->q[c] = 0.0;
    for (size_t x = 0; x < w->nlevels; x++) {
        if (w->input[x] <= 0.0)
            continue;
        const double *row = w->channel->p + x * k;
        size_t b0 = w->band[2 * x] > c0 ? w->band[2 * x] : c0;
        size_t b1 = w->band[2 * x + 1] + 1 < c1 ? w->band[2 * x + 1] + 1 : c1;
        for (size_t c = b0; c < b1; c++)
            w->q[c] += w->input[x] * row[c];
    }
}

#define OUTPUT_LAW_BLOCK 256 /* cells of the output law per thread's task */

/* The output law of the last evaluated channel into w->q; a large channel
 * in blocks of cells shared among OpenMP threads, each cell's sum in the
 * order of the levels. */
static void output_law(qc_cell_mi *w)
{
    const size_t k = w->nt + 1;
    if (qc_parallel_worth(w->nlevels * k)) {
        const size_t blocks = (k + OUTPUT_LAW_BLOCK - 1) / OUTPUT_LAW_BLOCK;
#pragma omp parallel for schedule(static)
        for (size_t b = 0; b < blocks; b++) {
            size_t c1 = (b + 1) * OUTPUT_LAW_BLOCK;
            output_law_columns(w, b * OUTPUT_LAW_BLOCK, c1 < k ? c1 : k);
        }
    } else {
        output_law_columns(w, 0, k);
    }
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
                                w->hi, w->written, w->channel);
    if (st != QC_OK)
        return st;
    output_law(w);
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
        size_t x0, x1; /* the others are not inside at t_j */
        qc_cell_mi_reach(w, t[j], &x0, &x1);
        for (size_t x = x0; x < x1; x++) {
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

qc_status qc_cell_mi_clipped_objective(void *ctx, const double *t, size_t nt, double *value)
{
    qc_cell_mi *w = ctx;
    const int clip = w->clip;
    w->clip = 1;
    qc_status st = qc_cell_mi_objective(w, t, nt, value);
    w->clip = clip;
    return st;
}

#define MIRROR_AT 1e-6     /* × the spacing: thresholds this near their mirror image */
#define MIRROR_P 1e-5      /* relative: probabilities this near their mirror image */
#define MIRROR_FLOOR 1e-15 /* absolute, for probabilities of the far tails */

/* Whether a and b are each other's mirror image: the same to MIRROR_P,
 * with the levels (n of them) and the cells (K) in reverse order. */
static int near_mirror(const double *a, const double *b, size_t n, size_t K)
{
    for (size_t x = 0; x < n; x++)
        for (size_t k = 0; k < K; k++) {
            double u = a[x * K + k], v = b[(n - 1 - x) * K + K - 1 - k];
            if (!(fabs(u - v) <= MIRROR_P * (u + v) + MIRROR_FLOOR))
                return 0;
        }
    return 1;
}

int qc_cell_mi_mirrored(const qc_cell_mi *w, const double *t)
{
    const size_t nt = w->nt;
    const double mid2 = nt ? t[0] + t[nt - 1] : 0.0;
    for (size_t j = 0; j < nt; j++) {
        double gap = fmin(j > 0 ? t[j] - t[j - 1] : INFINITY,
                          j + 1 < nt ? t[j + 1] - t[j] : INFINITY);
        if (!(fabs(t[j] + t[nt - 1 - j] - mid2) <= MIRROR_AT * gap))
            return 0;
    }
    return near_mirror(w->input, w->input, 1, w->nlevels) &&
           near_mirror(w->channel->p, w->channel->p, w->nlevels, nt + 1);
}

qc_status qc_cell_mi_model_mirrored(qc_cell_mi *w, const double *t, double mid2, int *mirrored)
{
    const size_t nx = w->nlevels, nt = w->nt, K = nt + 1;
    *mirrored = 0;
    if (!near_mirror(w->input, w->input, 1, nx) ||
        (w->inv_var && !near_mirror(w->inv_var, w->inv_var, 1, nx)))
        return QC_OK;
    double *held = qc_malloc_array(nx * K + nt, sizeof *held);
    if (!held)
        return qc_fail(QC_ENOMEM, "out of memory");
    double *tm = held + nx * K, mi;
    memcpy(held, w->channel->p, nx * K * sizeof *held);
    for (size_t j = 0; j < nt; j++)
        tm[j] = mid2 - t[nt - 1 - j];
    int ordered = 1;
    for (size_t j = 1; j < nt; j++)
        ordered &= tm[j] > tm[j - 1];
    qc_status st = QC_OK;
    if (ordered && (st = qc_cell_mi_eval(w, tm, &mi, NULL)) == QC_OK) {
        *mirrored = near_mirror(held, w->channel->p, nx, K);
        st = qc_cell_mi_eval(w, t, &mi, NULL);
    }
    free(held);
    return st;
}
