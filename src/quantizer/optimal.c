/* optimal.c — the MI-optimal quantizer for a given input law: a fine
 * discretization of the output (fine_grid.c), dynamic programming over
 * contiguous groupings of its cells (dp_optimal.c; Kurkoski & Yagi, IEEE
 * Trans. IT 60(8), 2014; He, Cai, Song, Mei, IEEE Trans. IT 67(6), 2021),
 * then continuous refinement of the thresholds with the analytic gradient
 * (refine.c). For count outputs whose whole support fits the grid, the
 * DP is already exact over integer thresholds and is not refined. */
#include "quantizer/quantizer.h"

#include <stdlib.h>

qc_status qc_optimal_thresholds(const qc_model *model, const double *levels,
                                const double *input, size_t nlevels, size_t nt,
                                size_t fine_cells, double *t_out,
                                double *mi_nats, size_t *fine_used,
                                size_t *iterations)
{
    const size_t K = nt + 1;
    size_t n = fine_cells ? fine_cells : qc_fine_cells_default(K);
    qc_fine_grid g;
    qc_cell_mi *w = NULL;
    size_t *cuts = NULL;
    if (iterations)
        *iterations = 0;
    qc_status st = qc_fine_grid_build(model, levels, input, nlevels, n, K, &g);
    if (st != QC_OK)
        return st;
    cuts = qc_malloc_array(K + 1, sizeof *cuts);
    if (!cuts) {
        st = qc_fail(QC_ENOMEM, "out of memory");
        goto done;
    }
    double dp_mi;
    st = qc_dp_quantize(g.p, input, K, QC_DP_FAST, cuts, &dp_mi);
    if (st != QC_OK)
        goto done;
    for (size_t j = 1; j < K; j++)
        t_out[j - 1] = g.bounds[cuts[j] - 1];
    st = qc_cell_mi_alloc(model, levels, input, nlevels, nt, &w);
    if (st != QC_OK)
        goto done;
    double mi;
    if (model->type->output == QC_OUTPUT_REAL)
        st = qc_refine_continuous(w, t_out, &mi, iterations);
    else if (!g.exact)
        st = qc_refine_counts(w, t_out, &mi, iterations);
    else
        st = qc_cell_mi_eval(w, t_out, &mi, NULL);
    if (st == QC_OK && mi_nats)
        *mi_nats = mi;
    if (fine_used)
        *fine_used = g.n;
done:
    qc_cell_mi_free(w);
    free(cuts);
    qc_fine_grid_clear(&g);
    return st;
}
