/* optimal.c — the MI-optimal quantizer for a given input law: a fine
 * discretization of the output (fine_grid.c), dynamic programming over
 * contiguous groupings of its cells (dp_optimal.c; Kurkoski & Yagi, IEEE
 * Trans. IT 60(8), 2014; He, Cai, Song, Mei, IEEE Trans. IT 67(6), 2021),
 * then continuous refinement of the thresholds with the analytic gradient
 * (refine.c), started from the better of the DP result and the
 * high-resolution companding rule (fine_grid.c). For count outputs whose whole support fits the grid, the
 * DP is already exact over integer thresholds and is not refined. */
#include "quantizer/quantizer.h"

#include <stdlib.h>
#include <string.h>

qc_status qc_optimal_thresholds(const qc_model *model, const double *levels,
                                const double *input, size_t nlevels, size_t nt,
                                const qc_fine_grid *g, double *t_out,
                                double *mi_nats, size_t *iterations)
{
    const size_t K = nt + 1;
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
    if (qc_model_get_type(model)->output == QC_OUTPUT_REAL) {
        /* Second start: the high-resolution rule, which matters when the
         * grid is too coarse for the DP to choose much (N close to K). A
         * failure here only loses the second start. */
        comp = qc_malloc_array(nt, sizeof *comp);
        if (!comp) {
            st = qc_fail(QC_ENOMEM, "out of memory");
            goto done;
        }
        double mc;
        if (qc_companding_thresholds(model, levels, input, nlevels, nt, comp) ==
                QC_OK &&
            qc_cell_mi_eval(w, comp, &mc, NULL) == QC_OK && mc > dp_mi)
            memcpy(t_out, comp, nt * sizeof *t_out);
    }
    double mi;
    if (qc_model_get_type(model)->output == QC_OUTPUT_REAL)
        st = qc_refine_continuous(w, t_out, &mi, iterations);
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
