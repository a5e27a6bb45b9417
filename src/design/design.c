/* design.c — the threshold design proper: checks the request, runs the
 * request's strategy from the strategy table (uniform with optimized
 * range, fixed thresholds, Lloyd–Max, MI-optimal DP + refinement) for the
 * MI objective, or the alternation of thresholds and law (alternation.c)
 * for the capacity objective, and fills the result with the rate and its
 * certified upper bound (thresholds.c adds the unquantized reference for
 * the same levels and law and the loss; the limits on the rates and the
 * SNR penalty follow in rate_limits.c). The alphabet stages run around
 * it (input_design.c). */
#include "design/design_internal.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#define LAW_TOL 1e-9

static qc_status check_law(const double *p, size_t n)
{
    double s = 0.0;
    for (size_t i = 0; i < n; i++) {
        if (!isfinite(p[i]) || p[i] < 0.0)
            return qc_fail(QC_EINVAL,
                           "input probability %zu is %g: must be a probability >= 0",
                           i + 1, p[i]);
        s += p[i];
    }
    if (fabs(s - 1.0) > LAW_TOL)
        return qc_fail(QC_EINVAL, "input probabilities sum to %.17g, expected 1", s);
    return QC_OK;
}

/* Check a request; *cells receives K. `fixed` says whether thresholds
 * must be given and checked. */
qc_status qc_design_check_request(const qc_design_request *req, int fixed,
                               size_t *cells)
{
    if (!req)
        return qc_fail(QC_EINVAL, "no design request given");
    if (!req->channel.model)
        return qc_fail(QC_EINVAL, "design: no noise model given");
    if (!req->channel.levels || req->channel.nlevels == 0)
        return qc_fail(QC_EINVAL, "design: no input levels given");
    const qc_design_channel *ch = &req->channel;
    /* the messages name the request's field (a flag or key of that name) */
    qc_status st = qc_model_check_levels(ch->model, ch->levels, ch->nlevels);
    if (st != QC_OK)
        return qc_fail_prefixed(st, "levels");
    if ((unsigned)req->input.objective >= QC_OBJECTIVE_COUNT)
        return qc_fail(QC_EINVAL, "design: unknown objective %d", (int)req->input.objective);
    if ((unsigned)req->quantizer.kind >= QC_QUANTIZER_COUNT)
        return qc_fail(QC_EINVAL, "design: unknown quantizer %d", (int)req->quantizer.kind);
    size_t K = req->quantizer.cells;
    if (K == 0 && fixed && req->quantizer.thresholds)
        K = req->quantizer.nthresholds + 1;
    if (K < 2 || K > ((size_t)1 << QC_MAX_BITS))
        return qc_fail(QC_EINVAL,
                       "cells must be between 2 and %zu (1 to %d bits), got %zu",
                       (size_t)1 << QC_MAX_BITS, QC_MAX_BITS, K);
    if (req->input.probabilities) {
        st = check_law(req->input.probabilities, req->channel.nlevels);
        if (st != QC_OK)
            return qc_fail_prefixed(st, "probabilities");
    }
    if (!(req->numerics.tol_bits >= 0.0) || !isfinite(req->numerics.tol_bits))
        return qc_fail(QC_EINVAL, "tolerance must be >= 0 bits (got %g)", req->numerics.tol_bits);
    if (req->numerics.fine_cells != 0 && req->numerics.fine_cells < K)
        return qc_fail(QC_EINVAL,
                       "fine grid of %zu cells is smaller than the %zu quantizer "
                       "cells",
                       req->numerics.fine_cells, K);
    if (req->numerics.fine_cells > QC_DMC_MAX_DIM)
        return qc_fail(QC_EINVAL, "fine grid of %zu cells exceeds the limit of %zu",
                       req->numerics.fine_cells, (size_t)QC_DMC_MAX_DIM);
    if (req->input.costs) {
        for (size_t i = 0; i < req->channel.nlevels; i++)
            if (!isfinite(req->input.costs[i]))
                return qc_fail(QC_EINVAL, "cost %zu is not a finite number", i + 1);
        if (!isfinite(req->input.budget))
            return qc_fail(QC_EINVAL, "cost budget is not a finite number");
        if (req->input.objective != QC_OBJECTIVE_CAPACITY)
            return qc_fail(QC_EINVAL,
                           "a cost constraint needs the capacity objective (the MI "
                           "objective uses the given input law)");
    }
    if (fixed) {
        if (!req->quantizer.thresholds)
            return qc_fail(QC_EINVAL, "the fixed quantizer needs thresholds");
        if (req->quantizer.nthresholds != K - 1)
            return qc_fail(QC_EINVAL,
                           "%zu cells need %zu thresholds, got %zu", K, K - 1,
                           req->quantizer.nthresholds);
        st = qc_thresholds_check(req->channel.model, req->quantizer.thresholds,
                                 req->quantizer.nthresholds);
        if (st != QC_OK)
            return qc_fail_prefixed(st, "thresholds");
    }
    *cells = K;
    return QC_OK;
}

/* ---- the MI objective ----------------------------------------------- */

/* Thresholds (into res->thresholds) of the request's strategy for the law
 * res->input, the channel and its mutual information. */
static qc_status design_mi(const qc_design_request *req, qc_design_result *res)
{
    const size_t nt = res->nthresholds;
    const qc_threshold_strategy *s = qc_strategy_of(req->quantizer.kind);
    qc_strategy_plan *plan;
    qc_status st = qc_strategy_plan_alloc(req->channel.model, res->levels, res->nlevels, nt,
                                          req->quantizer.thresholds, req->numerics.fine_cells,
                                          NULL, &plan);
    if (st != QC_OK)
        return st;
    qc_strategy_plan_tidy(plan, QC_TIDY_NATS(res->tol_bits));
    qc_strategy_stats stats = {0};
    if (s == &qc_strategy_lloyd_max &&
        !(res->reconstruction = qc_malloc_array(nt + 1, sizeof *res->reconstruction))) {
        qc_strategy_plan_free(plan);
        return qc_fail(QC_ENOMEM, "out of memory");
    }
    stats.reconstruction = res->reconstruction;
    st = qc_strategy_design(s, plan, res->input, 0, res->thresholds, &stats);
    res->design_iterations = stats.iterations;
    res->mse = stats.mse;
    res->design_convergence = stats.convergence;
    res->design_residual = stats.residual;
    res->fine_cells = qc_strategy_plan_fine_cells(plan);
    qc_strategy_plan_free(plan);
    if (st != QC_OK)
        return st;
    /* a reproducible placement among equally good thresholds (tidy.c) */
    if (req->quantizer.kind == QC_QUANTIZER_OPTIMAL &&
        (st = qc_tidy_thresholds(req->channel.model, res->levels, res->input, res->nlevels, nt,
                                 QC_TIDY_NATS(res->tol_bits),
                                 res->thresholds)) != QC_OK)
        return st;
    if (req->quantizer.kind != QC_QUANTIZER_FIXED)
        qc_snap_thresholds(req->channel.model, res->levels, res->nlevels, nt, res->thresholds);
    const int hard_code = req->input.fec && req->input.fec->kind == QC_FEC_HARD;
    if ((req->quantizer.keep_decisions || hard_code) &&
        req->quantizer.kind == QC_QUANTIZER_OPTIMAL) {
        double *b;
        size_t nb;
        st = qc_map_boundaries(req->channel.model, res->levels, res->input, res->nlevels, &b,
                               &nb);
        if (st != QC_OK)
            return st;
        res->decisions_kept =
            qc_keep_boundaries(req->channel.model, b, nb, res->thresholds, nt);
        free(b);
    }
    st = qc_discretize(req->channel.model, res->levels, res->nlevels, res->thresholds, nt,
                       &res->channel);
    if (st != QC_OK)
        return st;
    double mi;
    st = qc_mutual_information(res->channel, res->input, &mi);
    if (st != QC_OK)
        return st;
    res->rate_bits = mi * QC_LOG2E;
    res->upper_bound_bits = res->rate_bits;
    return QC_OK;
}

qc_status qc_design_thresholds_only(const qc_design_request *req, const qc_cost *costs,
                                    size_t ncosts, qc_design_result *res)
{
    qc_gsl_init();
    memset(res, 0, sizeof *res);
    size_t K;
    qc_status st =
        qc_design_check_request(req, req && req->quantizer.kind == QC_QUANTIZER_FIXED, &K);
    if (st != QC_OK)
        return st;
    const size_t n = req->channel.nlevels;
    qc_design_result r = {0};
    r.objective = req->input.objective;
    r.quantizer = req->quantizer.kind;
    r.cells = K;
    /* count outputs: no more cells than counts that carry probability */
    r.cells_used = req->quantizer.kind == QC_QUANTIZER_FIXED
                       ? K
                       : qc_cells_usable(req->channel.model, req->channel.levels, n, K);
    r.nthresholds = r.cells_used - 1;
    r.nlevels = n;
    const double tol = req->numerics.tol_bits;
    r.tol_bits = tol > 0.0 ? tol : QC_DESIGN_DEFAULT_TOL_BITS;
    r.mse = NAN;
    r.design_residual = NAN;
    r.snr_db = NAN;
    r.snr_penalty_db = NAN;
    r.thresholds = qc_malloc_array(r.nthresholds, sizeof *r.thresholds);
    r.levels = qc_malloc_array(n, sizeof *r.levels);
    r.input = qc_malloc_array(n, sizeof *r.input);
    if (!r.thresholds || !r.levels || !r.input) {
        st = qc_fail(QC_ENOMEM, "out of memory");
        goto fail;
    }
    memcpy(r.levels, req->channel.levels, n * sizeof *r.levels);
    for (size_t i = 0; i < n; i++)
        r.input[i] = req->input.probabilities ? req->input.probabilities[i] : 1.0 / (double)n;

    if (req->input.objective == QC_OBJECTIVE_MI) {
        st = design_mi(req, &r);
    } else {
        /* the request's own per-level cost, or the constraints' costs */
        qc_cost own = {req->input.costs, req->input.budget};
        if (req->input.costs) {
            costs = &own;
            ncosts = 1;
        }
        st = qc_design_alternation(req, costs, ncosts, &r);
    }
    if (st != QC_OK)
        goto fail;
    /* the SNR penalty: qc_design_settle, once the rates are final */
    r.snr_penalty_note = QC_PENALTY_SKIPPED;
    *res = r;
    return QC_OK;
fail:
    qc_design_result_clear(&r);
    return st;
}

