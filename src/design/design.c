/* design.c — qc_design, the single entry point of threshold design:
 * checks the request, runs the chosen strategy (uniform with optimized
 * range, fixed thresholds, Lloyd–Max, MI-optimal DP + refinement; for the
 * capacity objective the joint design of joint.c), and fills the result
 * with the rate, its certified upper bound, the unquantized reference for
 * the same levels and law and the loss (the limits on the rates and the
 * SNR penalty follow in rate_limits.c). Also the names
 * of objectives and quantizers, and qc_design_compare. */
#include "design/design_internal.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#define DEFAULT_TOL_BITS 1e-9
#define LAW_TOL 1e-9

static const char *const objective_names[QC_OBJECTIVE_COUNT] = {
    [QC_OBJECTIVE_MI] = "mi",
    [QC_OBJECTIVE_CAPACITY] = "capacity",
    [QC_OBJECTIVE_GMI] = "gmi",
};

const char *qc_objective_name(qc_objective objective)
{
    return (unsigned)objective < QC_OBJECTIVE_COUNT ? objective_names[objective]
                                                    : NULL;
}

qc_status qc_objective_parse(const char *name, qc_objective *out)
{
    for (int i = 0; name && i < QC_OBJECTIVE_COUNT; i++)
        if (strcmp(name, objective_names[i]) == 0) {
            *out = (qc_objective)i;
            return QC_OK;
        }
    return qc_fail(QC_EINVAL, "unknown objective '%s' (choose mi, capacity or gmi)",
                   name ? name : "");
}

qc_status qc_cells_from_bits(int bits, size_t *cells)
{
    if (bits < 1 || bits > QC_MAX_BITS)
        return qc_fail(QC_EINVAL, "bits must be between 1 and %d (got %d)",
                       QC_MAX_BITS, bits);
    *cells = (size_t)1 << bits;
    return QC_OK;
}

void qc_design_request_default(qc_design_request *req)
{
    memset(req, 0, sizeof *req);
    req->objective = QC_OBJECTIVE_MI;
    req->quantizer = QC_QUANTIZER_OPTIMAL;
    req->tol_bits = DEFAULT_TOL_BITS;
}

void qc_design_result_clear(qc_design_result *res)
{
    if (!res)
        return;
    free(res->reconstruction);
    free(res->thresholds);
    free(res->levels);
    free(res->input);
    qc_dmc_free(res->channel);
    memset(res, 0, sizeof *res);
}

/* ---- request checks ------------------------------------------------- */

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
static qc_status check_request(const qc_design_request *req, int fixed,
                               size_t *cells)
{
    if (!req)
        return qc_fail(QC_EINVAL, "no design request given");
    if (!req->model)
        return qc_fail(QC_EINVAL, "design: no noise model given");
    if (!req->levels || req->nlevels == 0)
        return qc_fail(QC_EINVAL, "design: no input levels given");
    qc_status st = qc_model_check_levels(req->model, req->levels, req->nlevels);
    if (st != QC_OK)
        return st;
    if ((unsigned)req->objective >= QC_OBJECTIVE_COUNT)
        return qc_fail(QC_EINVAL, "design: unknown objective %d", (int)req->objective);
    if ((unsigned)req->quantizer >= QC_QUANTIZER_COUNT)
        return qc_fail(QC_EINVAL, "design: unknown quantizer %d", (int)req->quantizer);
    size_t K = req->cells;
    if (K == 0 && fixed && req->thresholds)
        K = req->nthresholds + 1;
    if (K < 2 || K > ((size_t)1 << QC_MAX_BITS))
        return qc_fail(QC_EINVAL,
                       "cells must be between 2 and %zu (1 to %d bits), got %zu",
                       (size_t)1 << QC_MAX_BITS, QC_MAX_BITS, K);
    if (req->probabilities) {
        st = check_law(req->probabilities, req->nlevels);
        if (st != QC_OK)
            return st;
    }
    if (!(req->tol_bits >= 0.0) || !isfinite(req->tol_bits))
        return qc_fail(QC_EINVAL, "tolerance must be >= 0 bits (got %g)", req->tol_bits);
    if (req->fine_cells != 0 && req->fine_cells < K)
        return qc_fail(QC_EINVAL,
                       "fine grid of %zu cells is smaller than the %zu quantizer "
                       "cells",
                       req->fine_cells, K);
    if (req->fine_cells > QC_DMC_MAX_DIM)
        return qc_fail(QC_EINVAL, "fine grid of %zu cells exceeds the limit of %zu",
                       req->fine_cells, (size_t)QC_DMC_MAX_DIM);
    if (req->costs) {
        for (size_t i = 0; i < req->nlevels; i++)
            if (!isfinite(req->costs[i]))
                return qc_fail(QC_EINVAL, "cost %zu is not a finite number", i + 1);
        if (!isfinite(req->budget))
            return qc_fail(QC_EINVAL, "cost budget is not a finite number");
        if (req->objective != QC_OBJECTIVE_CAPACITY)
            return qc_fail(QC_EINVAL,
                           "a cost constraint needs the capacity objective (the MI "
                           "objective uses the given input law)");
    }
    if (fixed) {
        if (!req->thresholds)
            return qc_fail(QC_EINVAL, "the fixed quantizer needs thresholds");
        if (req->nthresholds != K - 1)
            return qc_fail(QC_EINVAL,
                           "%zu cells need %zu thresholds, got %zu", K, K - 1,
                           req->nthresholds);
        st = qc_thresholds_check(req->model, req->thresholds, req->nthresholds);
        if (st != QC_OK)
            return st;
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
    const qc_threshold_strategy *s = qc_strategy_of(req->quantizer);
    qc_strategy_plan *plan;
    qc_status st = qc_strategy_plan_alloc(req->model, res->levels, res->nlevels, nt,
                                          req->thresholds, req->fine_cells, NULL, &plan);
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
    res->fine_cells = qc_strategy_plan_fine_cells(plan);
    qc_strategy_plan_free(plan);
    if (st != QC_OK)
        return st;
    /* a reproducible placement among equally good thresholds (tidy.c) */
    if (req->quantizer == QC_QUANTIZER_OPTIMAL &&
        (st = qc_tidy_thresholds(req->model, res->levels, res->input, res->nlevels, nt,
                                 QC_TIDY_NATS(res->tol_bits),
                                 res->thresholds)) != QC_OK)
        return st;
    if (req->quantizer != QC_QUANTIZER_FIXED)
        qc_snap_thresholds(req->model, res->levels, res->nlevels, nt, res->thresholds);
    st = qc_discretize(req->model, res->levels, res->nlevels, res->thresholds, nt,
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

/* The alphabet stages (src/alphabet/input_design.c) run around the
 * threshold design below. */
qc_status qc_design(const qc_design_request *req, qc_design_result *res)
{
    return qc_input_design(req, res);
}

qc_status qc_design_thresholds(const qc_design_request *req, const qc_cost *costs,
                               size_t ncosts, qc_design_result *res)
{
    qc_gsl_init();
    memset(res, 0, sizeof *res);
    size_t K;
    qc_status st = check_request(req, req && req->quantizer == QC_QUANTIZER_FIXED, &K);
    if (st != QC_OK)
        return st;
    const size_t n = req->nlevels;
    qc_design_result r = {0};
    r.objective = req->objective;
    r.quantizer = req->quantizer;
    r.cells = K;
    /* count outputs: no more cells than counts that carry probability */
    r.cells_used = req->quantizer == QC_QUANTIZER_FIXED
                       ? K
                       : qc_cells_usable(req->model, req->levels, n, K);
    r.nthresholds = r.cells_used - 1;
    r.nlevels = n;
    r.tol_bits = req->tol_bits > 0.0 ? req->tol_bits : DEFAULT_TOL_BITS;
    r.mse = NAN;
    r.snr_db = NAN;
    r.snr_penalty_db = NAN;
    r.thresholds = qc_malloc_array(r.nthresholds, sizeof *r.thresholds);
    r.levels = qc_malloc_array(n, sizeof *r.levels);
    r.input = qc_malloc_array(n, sizeof *r.input);
    if (!r.thresholds || !r.levels || !r.input) {
        st = qc_fail(QC_ENOMEM, "out of memory");
        goto fail;
    }
    memcpy(r.levels, req->levels, n * sizeof *r.levels);
    for (size_t i = 0; i < n; i++)
        r.input[i] = req->probabilities ? req->probabilities[i] : 1.0 / (double)n;

    if (req->objective == QC_OBJECTIVE_MI) {
        st = design_mi(req, &r);
    } else {
        /* the request's own per-level cost, or the constraints' costs */
        qc_cost own = {req->costs, req->budget};
        if (req->costs) {
            costs = &own;
            ncosts = 1;
        }
        st = qc_design_alternation(req, costs, ncosts, &r);
    }
    if (st != QC_OK)
        goto fail;

    /* The unquantized reference for the same levels and final law. */
    double unq, unq_err;
    st = qc_unquantized_mi_detail(req->model, r.levels, r.input, n, &unq, &unq_err,
                                  &r.noiseless_limit);
    if (st != QC_OK)
        goto fail;
    r.unquantized_bits = unq * QC_LOG2E;
    r.unquantized_err_bits = unq_err * QC_LOG2E;
    r.loss_bits = r.unquantized_bits - r.rate_bits;
    r.snr_db = qc_model_snr_db(req->model, r.levels, r.input, n);
    /* the SNR penalty: qc_design_settle, once the rates are final */
    r.snr_penalty_note = QC_PENALTY_SKIPPED;
    *res = r;
    return QC_OK;
fail:
    qc_design_result_clear(&r);
    return st;
}

/* ---- all strategies on one channel ---------------------------------- */

void qc_design_comparison_clear(qc_design_comparison *cmp)
{
    if (!cmp)
        return;
    for (size_t i = 0; i < QC_COMPARE_MAX; i++)
        qc_design_result_clear(&cmp->result[i]);
    memset(cmp, 0, sizeof *cmp);
}

void qc_design_progress(const qc_design_request *req, size_t done, size_t total)
{
    if (req && req->progress && total > 0)
        req->progress(req->progress_user, done < total ? done : total, total);
}

static const char *unit_or_empty(const char *u) { return u ? u : ""; }

const char *qc_design_level_unit(const qc_design_request *req)
{
    if (!req)
        return "";
    if (req->level_unit)
        return req->level_unit;
    return req->model ? unit_or_empty(req->model->type->level_unit) : "";
}

const char *qc_design_output_unit(const qc_design_request *req)
{
    if (!req)
        return "";
    if (req->output_unit)
        return req->output_unit;
    return req->model ? unit_or_empty(req->model->type->output_unit) : "";
}

const char *qc_design_snr_definition(const qc_design_request *req)
{
    if (!req || !req->model || !req->model->type->snr)
        return NULL;
    if (req->dimensions == 2 && req->model->type == &qc_model_gauss)
        return "Es/N0 = E|x|^2/(2 sigma^2) (symbol energy over the noise density; sigma^2 "
               "per quadrature)";
    return req->model->type->snr_definition;
}

qc_status qc_design_compare(const qc_design_request *req, qc_design_comparison *cmp)
{
    memset(cmp, 0, sizeof *cmp);
    size_t K;
    int with_fixed = req && req->thresholds != NULL;
    qc_status st = check_request(req, with_fixed, &K);
    if (st != QC_OK)
        return st;
    static const qc_quantizer_kind order[] = {
        QC_QUANTIZER_UNIFORM, QC_QUANTIZER_LLOYD_MAX, QC_QUANTIZER_OPTIMAL,
        QC_QUANTIZER_FIXED};
    qc_status first = QC_OK;
    char first_msg[sizeof cmp->message[0]] = "";
    for (size_t i = 0; i < sizeof order / sizeof order[0]; i++) {
        if (order[i] == QC_QUANTIZER_FIXED && !with_fixed)
            continue;
        qc_design_request one = *req;
        one.quantizer = order[i];
        one.cells = K;
        size_t k = cmp->count++;
        cmp->kind[k] = order[i];
        cmp->status[k] = qc_design(&one, &cmp->result[k]);
        if (cmp->status[k] != QC_OK) {
            snprintf(cmp->message[k], sizeof cmp->message[k], "%s", qc_last_error());
            if (first == QC_OK) {
                first = cmp->status[k];
                snprintf(first_msg, sizeof first_msg, "%s", cmp->message[k]);
            }
        }
    }
    if (first != QC_OK)
        return qc_fail(first, "%s", first_msg);
    return QC_OK;
}
