/* optimal.c — the MI-optimal quantizer for a given input law, found
 * coarse to fine:
 *  1. dynamic programming over contiguous groupings of the cells of a
 *     grid (fine_grid.c; dp_optimal.c: Kurkoski & Yagi, IEEE Trans. IT
 *     60(8), 2014; He, Cai, Song, Mei, IEEE Trans. IT 67(6), 2021) — for
 *     continuous outputs a coarse grid sized by the resolution and the
 *     noise scale (qc_coarse_cells) unless the caller chose its size;
 *  2. continuous outputs: a second dynamic programme over a narrow window
 *     around each threshold, the coarse boundaries on either side cut
 *     into steps of about 1/16 of the noise scale (window_dp.c); every
 *     window holds its coarse threshold, so the rate cannot drop;
 *  3. continuous outputs: damped Newton steps on the exact gradient and
 *     curvature (refine.c), which never lower the rate either. When the
 *     grid leaves the DP little choice (fewer than 2K cells) the
 *     high-resolution companding rule (fine_grid.c) is a second start.
 * Count outputs whose whole support fits the grid are exact after step 1
 * (every integer threshold is a candidate); wider ones are refined by an
 * integer search. */
#include "quantizer/quantizer.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#define WINDOW_STEPS_PER_SCALE 16.0 /* window steps per noise scale */
#define WINDOW_SPLIT_MIN 2
#define WINDOW_SPLIT_MAX 8
#define COMPANDING_BELOW 2 /* grid cells per quantizer cell below which the
                              companding rule is tried as a start */

/* Step 2: the windows around the coarse thresholds t (grid boundaries
 * g->bounds[cuts[j] − 1]); t is replaced by the window optimum. */
static qc_status window_stage(const qc_model *model, const double *levels,
                              const double *input, size_t nlevels, size_t nt,
                              const qc_fine_grid *g, const size_t *cuts, double scale,
                              double *t)
{
    double *left = qc_malloc_array(3 * nt, sizeof *left);
    if (!left)
        return qc_fail(QC_ENOMEM, "out of memory");
    double *mid = left + nt, *right = left + 2 * nt;
    double lo, hi, widest = 0.0;
    qc_levels_support(model, levels, nlevels, &lo, &hi);
    const size_t nb = g->n - 1;
    for (size_t j = 0; j < nt; j++) {
        size_t i = cuts[j + 1] - 1; /* t_j = bounds[i] */
        mid[j] = g->bounds[i];
        left[j] = i > 0 ? g->bounds[i - 1] : fmin(lo, mid[j] - scale);
        right[j] = i + 1 < nb ? g->bounds[i + 1] : fmax(hi, mid[j] + scale);
        widest = fmax(widest, fmax(mid[j] - left[j], right[j] - mid[j]));
    }
    double want = ceil(widest * WINDOW_STEPS_PER_SCALE / scale);
    size_t split = !(want > WINDOW_SPLIT_MIN) ? WINDOW_SPLIT_MIN
                   : want > WINDOW_SPLIT_MAX  ? WINDOW_SPLIT_MAX
                                              : (size_t)want;
    qc_status st = qc_window_dp(model, levels, input, nlevels, nt, left, mid, right, split,
                                t, NULL);
    free(left);
    return st;
}

qc_status qc_optimal_thresholds(const qc_model *model, const double *levels,
                                const double *input, size_t nlevels, size_t nt,
                                const qc_fine_grid *g, double *t_out,
                                double *mi_nats, size_t *iterations)
{
    const size_t K = nt + 1;
    const int real = qc_model_get_type(model)->output == QC_OUTPUT_REAL;
    qc_cell_mi *w = NULL;
    size_t *cuts = NULL;
    double *comp = NULL;
    qc_status st = QC_OK;
    if (iterations)
        *iterations = 0;
    cuts = qc_malloc_array(K + 1, sizeof *cuts);
    if (!cuts) {
        st = qc_fail(QC_ENOMEM, "out of memory");
        goto done;
    }
    double dp_mi;
    st = qc_dp_quantize(g->p, input, K, QC_DP_FAST, cuts, &dp_mi);
    if (st != QC_OK)
        goto done;
    for (size_t j = 1; j < K; j++)
        t_out[j - 1] = g->bounds[cuts[j] - 1];
    st = qc_cell_mi_alloc(model, levels, input, nlevels, nt, &w);
    if (st != QC_OK)
        goto done;
    double mi, scale = 1.0;
    if (real) {
        scale = qc_noise_scale(model, levels, input, nlevels);
        st = window_stage(model, levels, input, nlevels, nt, g, cuts, scale, t_out);
        if (st != QC_OK)
            goto done;
    }
    if (real && g->n < COMPANDING_BELOW * K) {
        /* Second start: the high-resolution rule, which matters when the
         * grid is too coarse for the DP to choose much (N close to K). A
         * failure here only loses the second start. */
        comp = qc_malloc_array(nt, sizeof *comp);
        if (!comp) {
            st = qc_fail(QC_ENOMEM, "out of memory");
            goto done;
        }
        double mc, mw;
        if ((st = qc_cell_mi_eval(w, t_out, &mw, NULL)) != QC_OK)
            goto done;
        if (qc_companding_thresholds(model, levels, input, nlevels, nt, comp) ==
                QC_OK &&
            qc_cell_mi_eval(w, comp, &mc, NULL) == QC_OK && mc > mw)
            memcpy(t_out, comp, nt * sizeof *t_out);
    }
    if (real) {
        st = qc_refine_continuous(w, scale, t_out, &mi, iterations);
        if (st == QC_OK)
            st = qc_relocate_thresholds(w, scale, t_out, &mi, iterations);
    }
    else if (!g->exact)
        st = qc_refine_counts(w, t_out, &mi, iterations);
    else
        st = qc_cell_mi_eval(w, t_out, &mi, NULL);
    if (st == QC_OK && mi_nats)
        *mi_nats = mi;
done:
    qc_cell_mi_free(w);
    free(cuts);
    free(comp);
    return st;
}
