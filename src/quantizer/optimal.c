/* optimal.c — the MI-optimal quantizer for a given input law:
 *  1. dynamic programming over contiguous groupings of the cells of a
 *     grid (dp_optimal.c: Kurkoski & Yagi, IEEE Trans. IT 60(8), 2014;
 *     He, Cai, Song, Mei, IEEE Trans. IT 67(6), 2021) — for continuous
 *     outputs, unless the caller chose its size, a grid sized by the
 *     resolution and the noise scale with cells of equal width in the
 *     variance-stabilizing coordinate (scale_grid.c);
 *  2. continuous outputs: damped Newton steps on the exact gradient and
 *     curvature (refine.c), which never lower the rate, from the DP's
 *     thresholds — the DP optimum is the start, so the result is never
 *     below it;
 *  3. continuous outputs with more cells than levels sent: threshold
 *     moves between cells (relocate.c), kept only when they raise the
 *     rate. With at most one cell per level the local maxima differ in
 *     which gaps between levels hold a threshold, by far more than the
 *     grid's resolution loses, and the DP tells them apart.
 * When the grid leaves the DP little choice (fewer than 2K cells) the
 * high-resolution companding rule (fine_grid.c) is a second start, taken
 * only if its rate is higher.
 * A wide alphabet compares the two starts and takes steps 2 and 3 on the
 * rate with each level's tails clipped at its support (cell_mi.c), and
 * its result is rated exactly.
 * Count outputs whose whole support fits the grid are exact after step 1
 * (every integer threshold is a candidate); wider ones are refined by an
 * integer search. */
#include "quantizer/quantizer.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#define COMPANDING_BELOW 2 /* grid cells per quantizer cell below which the
                              companding rule is tried as a start */
/* Levels sent with positive probability. */
static size_t levels_sent(const double *input, size_t nlevels)
{
    size_t n = 0;
    for (size_t i = 0; i < nlevels; i++)
        n += input[i] > 0.0;
    return n;
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
    if (real)
        scale = qc_noise_scale(model, levels, input, nlevels);
    /* a wide alphabet: the starts are compared, and its Newton steps and
     * moves rate, with the tails clipped at the supports (cell_mi.c); the
     * result is then rated exactly */
    if (real)
        w->clip = nlevels >= QC_CLIP_MIN_LEVELS;
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
        if (st == QC_OK && K > levels_sent(input, nlevels))
            st = qc_relocate_thresholds(w, scale, t_out, &mi, iterations);
        if (st == QC_OK && w->clip) {
            w->clip = 0;
            st = qc_cell_mi_eval(w, t_out, &mi, NULL);
        }
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
