/* strategy.c — the threshold strategies as one constant table, as the
 * noise models have theirs: uniform (full-scale range optimized for the
 * rate), fixed (thresholds given), Lloyd–Max (minimum mean-square error;
 * Lloyd 1982, Max 1960), optimal (MI-optimal: dynamic programming coarse
 * to fine, then Newton refinement and threshold moves) and converter (a real converter's
 * transition levels referred to the receiver output, converter.c). A plan holds what a strategy
 * builds once per channel and reuses for every law it is asked to design
 * for (the rate workspace of the uniform search, the fine grid of the
 * optimal one), so that alternating designs of law and thresholds do not
 * rebuild it at each step. */
#include "quantizer/quantizer.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

struct qc_strategy_plan {
    const qc_model *model;
    const double *levels;
    size_t nlevels, nt;
    const double *given;    /* fixed: the thresholds (borrowed)           */
    size_t fine_cells;      /* optimal: requested fine cells (0: default) */
    double *grid_law;       /* optimal: the law the grid is built for;
                               NULL: the law of the first design          */
    qc_fine_grid grid;      /* optimal: built on first use                */
    int have_grid;
    qc_cell_mi *rate;       /* uniform: I(X;Y_q) of thresholds            */
    double tidy_nats;       /* uniform: rate it may give up to centre its
                               range among equally good ones (0: off)     */
    double *recon;          /* Lloyd–Max: reconstruction scratch (K)      */
};

qc_status qc_strategy_plan_alloc(const qc_model *model, const double *levels,
                                 size_t nlevels, size_t nthresholds, const double *given,
                                 size_t fine_cells, const double *grid_law,
                                 qc_strategy_plan **out)
{
    *out = NULL;
    if (!model || !levels || nlevels == 0 || nthresholds == 0)
        return qc_fail(QC_EINVAL, "threshold strategy: no model, levels or thresholds");
    qc_strategy_plan *p = calloc(1, sizeof *p);
    if (!p)
        return qc_fail(QC_ENOMEM, "out of memory");
    p->model = model;
    p->levels = levels;
    p->nlevels = nlevels;
    p->nt = nthresholds;
    p->given = given;
    p->fine_cells = fine_cells;
    if (grid_law) {
        p->grid_law = qc_malloc_array(nlevels, sizeof *p->grid_law);
        if (!p->grid_law) {
            free(p);
            return qc_fail(QC_ENOMEM, "out of memory");
        }
        memcpy(p->grid_law, grid_law, nlevels * sizeof *p->grid_law);
    }
    *out = p;
    return QC_OK;
}

void qc_strategy_plan_free(qc_strategy_plan *p)
{
    if (!p)
        return;
    if (p->have_grid)
        qc_fine_grid_clear(&p->grid);
    qc_cell_mi_free(p->rate);
    free(p->grid_law);
    free(p->recon);
    free(p);
}

void qc_strategy_plan_tidy(qc_strategy_plan *p, double eps_nats)
{
    if (p)
        p->tidy_nats = eps_nats > 0.0 ? eps_nats : 0.0;
}

size_t qc_strategy_plan_fine_cells(const qc_strategy_plan *p)
{
    return p && p->have_grid ? p->grid.n : 0;
}

/* ---- fixed ------------------------------------------------------------ */

static qc_status fixed_design(qc_strategy_plan *p, const double *input, int warm, double *t,
                              qc_strategy_stats *stats)
{
    (void)input;
    (void)warm;
    (void)stats;
    if (!p->given)
        return qc_fail(QC_EINVAL, "the fixed quantizer and the converter need thresholds");
    memcpy(t, p->given, p->nt * sizeof *t);
    return QC_OK;
}

/* ---- uniform ---------------------------------------------------------- */

static qc_status uniform_design(qc_strategy_plan *p, const double *input, int warm, double *t,
                                qc_strategy_stats *stats)
{
    (void)warm;
    qc_status st;
    if (!p->rate &&
        (st = qc_cell_mi_alloc(p->model, p->levels, input, p->nlevels, p->nt, &p->rate)) !=
            QC_OK)
        return st;
    p->rate->input = input; /* the law may change between designs */
    /* the search rates continuous outputs with the tails clipped at the
     * supports (within 1e-13 bit: the budget of the choice among equally
     * good ranges that follows, on the exact rate; the design is rated
     * again exactly). Not clipped: one threshold, cheap to rate, which
     * a plan without that choice would otherwise leave where only the
     * clipping makes the rate flat, and counts, whose best integer step
     * of a saturated rate is told by the far tails alone. */
    p->rate->clip =
        qc_model_get_type(p->model)->output != QC_OUTPUT_COUNTS && p->nt >= 2;
    st = qc_uniform_search(p->model, p->levels, p->nlevels, p->nt, p->rate, t, NULL,
                           &stats->iterations);
    p->rate->clip = 0;
    /* the choice among equally good ranges, on the exact rate; a wide
     * alphabet's clipped rate tells the steps that cost too much without
     * it. One threshold is placed as the other strategies place one. */
    const qc_rate_screen screen = {qc_cell_mi_clipped_objective, p->rate, QC_CLIP_RATE_NATS};
    if (st == QC_OK && p->tidy_nats > 0.0)
        st = p->nt == 1 ? qc_tidy_thresholds(p->model, p->levels, input, p->nlevels, 1,
                                             p->tidy_nats, t)
                        : qc_uniform_tidy(p->model, p->levels, p->nlevels, p->nt,
                                          qc_cell_mi_objective, p->rate,
                                          p->nlevels >= QC_CLIP_MIN_LEVELS ? &screen : NULL,
                                          p->tidy_nats, t);
    return st;
}

/* ---- Lloyd–Max -------------------------------------------------------- */

static qc_status lloyd_max_design(qc_strategy_plan *p, const double *input, int warm,
                                  double *t, qc_strategy_stats *stats)
{
    if (!p->recon && !(p->recon = qc_malloc_array(p->nt + 1, sizeof *p->recon)))
        return qc_fail(QC_ENOMEM, "out of memory");
    qc_lloyd_report rep;
    qc_status st = qc_lloyd_max(p->model, p->levels, input, p->nlevels, p->nt, warm, 0, t,
                                p->recon, &rep);
    stats->iterations = rep.rounds;
    stats->mse = rep.mse;
    stats->convergence = rep.converged ? QC_CONVERGED : QC_NOT_CONVERGED;
    stats->residual = rep.residual;
    if (st == QC_OK && stats->reconstruction)
        memcpy(stats->reconstruction, p->recon, (p->nt + 1) * sizeof *p->recon);
    return st;
}

/* ---- optimal ---------------------------------------------------------- */

static qc_status optimal_design(qc_strategy_plan *p, const double *input, int warm,
                                double *t, qc_strategy_stats *stats)
{
    (void)warm;
    if (!p->have_grid) {
        const double *law = p->grid_law ? p->grid_law : input;
        qc_status st =
            p->fine_cells ? qc_fine_grid_build(p->model, p->levels, law, p->nlevels,
                                               p->fine_cells, p->nt + 1, &p->grid)
                          : qc_coarse_grid_build(p->model, p->levels, law, p->nlevels,
                                                 p->nt + 1, &p->grid);
        if (st != QC_OK)
            return st;
        p->have_grid = 1;
    }
    return qc_optimal_thresholds(p->model, p->levels, input, p->nlevels, p->nt, &p->grid, t,
                                 NULL, &stats->iterations);
}

/* ---- the table -------------------------------------------------------- */

const qc_threshold_strategy qc_strategy_uniform = {
    .name = "uniform",
    .summary = "uniform cells, full-scale range optimized for the rate",
    .kind = QC_QUANTIZER_UNIFORM,
    .raises_mi = 1,
    .design = uniform_design,
};

const qc_threshold_strategy qc_strategy_fixed = {
    .name = "fixed",
    .summary = "thresholds given by the caller, evaluated",
    .kind = QC_QUANTIZER_FIXED,
    .given = 1,
    .design = fixed_design,
};

const qc_threshold_strategy qc_strategy_lloyd_max = {
    .name = "lloyd-max",
    .summary = "minimum mean-square error (Lloyd, Max)",
    .kind = QC_QUANTIZER_LLOYD_MAX,
    .design = lloyd_max_design,
};

const qc_threshold_strategy qc_strategy_optimal = {
    .name = "optimal",
    .summary = "MI-optimal: dynamic programming coarse to fine, then Newton refinement",
    .kind = QC_QUANTIZER_OPTIMAL,
    .raises_mi = 1,
    .design = optimal_design,
};

const qc_threshold_strategy qc_strategy_converter = {
    .name = "converter",
    .summary = "a real converter: ENOB, full scale, gain and offset, jitter, DNL/INL",
    .kind = QC_QUANTIZER_CONVERTER,
    .given = 1,
    .design = fixed_design,
};

static const qc_threshold_strategy *const strategies[QC_QUANTIZER_COUNT] = {
    [QC_QUANTIZER_UNIFORM] = &qc_strategy_uniform,
    [QC_QUANTIZER_FIXED] = &qc_strategy_fixed,
    [QC_QUANTIZER_LLOYD_MAX] = &qc_strategy_lloyd_max,
    [QC_QUANTIZER_OPTIMAL] = &qc_strategy_optimal,
    [QC_QUANTIZER_CONVERTER] = &qc_strategy_converter,
};

const qc_threshold_strategy *qc_strategy_of(qc_quantizer_kind kind)
{
    return (unsigned)kind < QC_QUANTIZER_COUNT ? strategies[kind] : NULL;
}

const char *qc_quantizer_name(qc_quantizer_kind kind)
{
    const qc_threshold_strategy *s = qc_strategy_of(kind);
    return s ? s->name : NULL;
}

qc_status qc_quantizer_parse(const char *name, qc_quantizer_kind *out)
{
    for (int i = 0; name && i < QC_QUANTIZER_COUNT; i++)
        if (strcmp(name, strategies[i]->name) == 0) {
            *out = (qc_quantizer_kind)i;
            return QC_OK;
        }
    return qc_fail(QC_EINVAL,
                   "unknown quantizer '%s' (choose optimal, uniform, lloyd-max, "
                   "fixed or converter)",
                   name ? name : "");
}

qc_status qc_strategy_design(const qc_threshold_strategy *s, qc_strategy_plan *plan,
                             const double *input, int warm, double *t,
                             qc_strategy_stats *stats)
{
    if (!s || !plan || !input || !t)
        return qc_fail(QC_EINVAL, "threshold strategy: missing argument");
    qc_strategy_stats local = {.mse = NAN};
    if (!stats)
        stats = &local;
    stats->iterations = 0;
    stats->mse = NAN;
    stats->convergence = QC_CONVERGENCE_NONE;
    stats->residual = NAN;
    return s->design(plan, input, warm, t, stats);
}

const char *qc_convergence_name(qc_convergence c)
{
    return c == QC_CONVERGED ? "converged" : c == QC_NOT_CONVERGED ? "not converged" : NULL;
}
