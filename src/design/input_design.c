/* input_design.c — what qc_design adds around the threshold design for
 * alphabets and inputs: input constraints (peak on the levels; average
 * power and average level as costs of qc_capacity_costs, one or two at
 * once, inside an alternation with the thresholds), square QAM as two quadratures sharing the thresholds, the BICM GMI
 * objective (Caire, Taricco, Biglieri, IEEE Trans. IT 44(3), 1998), level
 * optimization, and the rates practitioners quote: dispersion and the
 * normal approximation (Polyanskiy, Poor, Verdú, IEEE Trans. IT 56(5),
 * 2010) and the shaping gap to ½·log2(1 + snr). */
#include "design/design_internal.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#define DEFAULT_LEVEL_STARTS 3
#define MAX_LEVEL_STARTS 64
#define CONSTRAINED_ALTERNATIONS 30
#define DEFAULT_TOL_BITS 1e-9
#define ENGINE_MAX_ITERATIONS 1000000

typedef struct {
    const qc_design_request *req;
    unsigned dims;
    const double *law;   /* the law tied to the (sorted) levels; NULL: uniform */
    int searching;       /* inside the level search: skip reporting work */
    double *power_cost, *mean_cost; /* nlevels each */
} design_ctx;

/* The request with the alphabet fields cleared, for the threshold design. */
static qc_design_request plain_request(const qc_design_request *req)
{
    qc_design_request sub = *req;
    sub.dimensions = 0;
    sub.constraints = NULL;
    sub.optimize_levels = 0;
    sub.level_starts = 0;
    sub.blocklength = 0;
    sub.error_rate = 0.0;
    if (sub.objective == QC_OBJECTIVE_GMI)
        sub.objective = QC_OBJECTIVE_MI;
    return sub;
}

/* Check the alphabet fields of a request; the message names the field. */
static qc_status check_alphabet_request(const qc_design_request *req, unsigned *dims)
{
    if (req->dimensions > 2)
        return qc_fail(QC_EINVAL, "dimensions must be 1 (real) or 2 (QAM), got %u",
                       req->dimensions);
    *dims = req->dimensions == 2 ? 2 : 1;
    qc_status st = qc_constraints_validate(req->constraints, *dims);
    if (st != QC_OK)
        return st;
    if (req->costs && qc_constraints_any(req->constraints))
        return qc_fail(QC_EINVAL, "give per-level costs or input constraints (peak, power, "
                                  "mean), not both");
    if (req->blocklength > 0 && !(req->error_rate > 0.0 && req->error_rate < 1.0))
        return qc_fail(QC_EINVAL, "error-rate must lie strictly between 0 and 1 with a "
                                  "blocklength (got %g)",
                       req->error_rate);
    if (req->blocklength == 0 && req->error_rate != 0.0)
        return qc_fail(QC_EINVAL, "error-rate needs a blocklength");
    if (req->objective == QC_OBJECTIVE_GMI && !qc_is_power_of_two(req->nlevels))
        return qc_fail(QC_EINVAL,
                       "objective gmi: Gray labels need a power of 2 levels%s (got %zu)",
                       *dims == 2 ? " per quadrature" : "", req->nlevels);
    if (*dims == 2 && !qc_is_power_of_two(req->nlevels))
        return qc_fail(QC_EINVAL,
                       "QAM: the levels per quadrature must be a power of 2 (got %zu)",
                       req->nlevels);
    if (req->optimize_levels && req->quantizer == QC_QUANTIZER_FIXED)
        return qc_fail(QC_EINVAL, "optimize-levels re-designs the thresholds at each step; "
                                  "it cannot use the fixed quantizer");
    if (req->optimize_levels && req->nlevels < 2)
        return qc_fail(QC_EINVAL, "optimize-levels needs at least 2 levels");
    return QC_OK;
}

/* GMI of the design's channel and law with Gray labels (nats); NaN
 * when the number of levels is not a power of 2. */
static qc_status design_gmi(const qc_design_result *r, double *gmi, unsigned *nbits)
{
    *gmi = NAN;
    *nbits = 0;
    if (!qc_is_power_of_two(r->nlevels))
        return QC_OK;
    size_t *labels = qc_malloc_array(r->nlevels, sizeof *labels);
    if (!labels)
        return qc_fail(QC_ENOMEM, "out of memory");
    qc_status st = qc_gray_labels(r->levels, r->nlevels, labels, nbits);
    if (st == QC_OK)
        st = qc_gmi(r->channel, r->input, labels, *nbits, gmi);
    free(labels);
    return st;
}

/* The GMI objective on a finished MI design: rate, bound and the
 * unquantized reference become GMIs; the SNR penalty (an MI notion here)
 * is left undefined. */
static qc_status gmi_objective(const design_ctx *c, qc_design_result *r)
{
    double g;
    unsigned nbits;
    qc_status st = design_gmi(r, &g, &nbits);
    if (st != QC_OK)
        return st;
    r->objective = QC_OBJECTIVE_GMI;
    r->rate_bits = g * QC_LOG2E;
    r->upper_bound_bits = r->rate_bits;
    if (c->searching)
        return QC_OK;
    size_t *labels = qc_malloc_array(r->nlevels, sizeof *labels);
    if (!labels)
        return qc_fail(QC_ENOMEM, "out of memory");
    double ug, uerr;
    st = qc_gray_labels(r->levels, r->nlevels, labels, &nbits);
    if (st == QC_OK)
        st = qc_unquantized_gmi(c->req->model, r->levels, r->input, r->nlevels, labels, nbits,
                                &ug, &uerr);
    free(labels);
    if (st != QC_OK)
        return st;
    r->unquantized_bits = ug * QC_LOG2E;
    r->unquantized_err_bits = uerr * QC_LOG2E;
    r->loss_bits = r->unquantized_bits - r->rate_bits;
    r->snr_penalty_db = NAN;
    return QC_OK;
}

/* State of the alternation for constrained capacity. */
typedef struct {
    const qc_design_request *sub;
    const qc_cost *costs;
    size_t ncosts, n, nt;
    qc_ba_options opt;
    double *law, *t;            /* current law and thresholds            */
    double best, best_upper;    /* bits: best certified lower bound, its
                                   channel's upper bound                 */
    double *best_law, *best_t;
    size_t iterations, alternations, fine;
} alternation;

/* Thresholds of strategy `kind` designed for the MI of law a->law. */
static qc_status thresholds_for(alternation *a, qc_quantizer_kind kind)
{
    if (kind == QC_QUANTIZER_FIXED) {
        memcpy(a->t, a->sub->thresholds, a->nt * sizeof *a->t);
        return QC_OK;
    }
    qc_design_request inner = *a->sub;
    inner.objective = QC_OBJECTIVE_MI;
    inner.quantizer = kind;
    inner.costs = NULL;
    inner.skip_snr_penalty = 1;
    inner.probabilities = a->law;
    qc_design_result d;
    qc_status st = qc_design_thresholds(&inner, &d);
    if (st == QC_OK) {
        memcpy(a->t, d.thresholds, a->nt * sizeof *a->t);
        if (d.fine_cells)
            a->fine = d.fine_cells;
    }
    qc_design_result_clear(&d);
    return st;
}

/* From the thresholds in a->t: constrained capacity of the channel, then
 * thresholds of the request's strategy for that law, until the capacity
 * moves by no more than the tolerance. */
static qc_status alternate(alternation *a)
{
    const qc_quantizer_kind kind = a->sub->quantizer;
    qc_dmc *ch = NULL;
    qc_status st = QC_OK;
    double prev = -INFINITY;
    for (size_t k = 0; k < CONSTRAINED_ALTERNATIONS; k++) {
        if (k > 0 && (st = thresholds_for(a, kind)) != QC_OK)
            break;
        qc_dmc_free(ch);
        ch = NULL;
        if ((st = qc_discretize(a->sub->model, a->sub->levels, a->n, a->t, a->nt, &ch)) !=
            QC_OK)
            break;
        qc_costs_result cr;
        a->opt.initial = a->law;
        st = qc_capacity_costs(ch, &a->opt, a->costs, a->ncosts, NULL, &cr, a->law);
        a->iterations += cr.iterations;
        a->alternations++;
        if (st != QC_OK && st != QC_ENOCONV)
            break;
        st = QC_OK; /* QC_ENOCONV still leaves valid bounds; the final bound shows the gap */
        if (cr.capacity_bits > a->best) {
            a->best = cr.capacity_bits;
            a->best_upper = cr.upper_bound_bits;
            memcpy(a->best_law, a->law, a->n * sizeof *a->law);
            memcpy(a->best_t, a->t, a->nt * sizeof *a->t);
        }
        if (kind == QC_QUANTIZER_FIXED || fabs(cr.capacity_bits - prev) <= a->opt.tol_bits)
            break;
        prev = cr.capacity_bits;
    }
    qc_dmc_free(ch);
    return st;
}

/* Capacity under `ncosts` ≥ 1 average constraints (without any, the
 * joint design of src/quantizer/joint.c is used): alternate the law (the constrained capacity of the
 * current channel, qc_capacity_costs) and the thresholds (the strategy's
 * design for that law) as joint.c does; every step of the optimal
 * strategy keeps or raises the rate, C(t') ≥ I(r, t') ≥ I(r, t) = C(t).
 * The optimal strategy starts from the uniform, Lloyd–Max and DP
 * thresholds for the starting law and keeps the best. The reported rate
 * and bound are those of the final channel. */
static qc_status constrained_capacity(const design_ctx *c, const qc_design_request *sub,
                                      const qc_cost *costs, size_t ncosts,
                                      qc_design_result *res)
{
    const size_t n = sub->nlevels;
    const qc_quantizer_kind kind = sub->quantizer;
    alternation a = {.sub = sub, .costs = costs, .ncosts = ncosts, .n = n,
                     .nt = sub->cells ? sub->cells - 1 : sub->nthresholds,
                     .best = -INFINITY, .best_upper = INFINITY};
    /* the engine's documented defaults, with the request's tolerance */
    a.opt = (qc_ba_options){.tol_bits = sub->tol_bits > 0.0 ? sub->tol_bits : DEFAULT_TOL_BITS,
                            .max_iterations = ENGINE_MAX_ITERATIONS,
                            .method = QC_BA_ACCELERATED};
    a.law = qc_malloc_array(n, sizeof *a.law);
    a.best_law = qc_malloc_array(n, sizeof *a.best_law);
    a.t = qc_malloc_array(a.nt, sizeof *a.t);
    a.best_t = qc_malloc_array(a.nt, sizeof *a.best_t);
    qc_status st = QC_OK;
    if (!a.law || !a.best_law || !a.t || !a.best_t) {
        st = qc_fail(QC_ENOMEM, "out of memory");
        goto done;
    }
    static const qc_quantizer_kind optimal_starts[] = {
        QC_QUANTIZER_UNIFORM, QC_QUANTIZER_LLOYD_MAX, QC_QUANTIZER_OPTIMAL};
    size_t nstarts = kind == QC_QUANTIZER_OPTIMAL ? 3 : 1;
    for (size_t s = 0; s < nstarts && st == QC_OK; s++) {
        for (size_t i = 0; i < n; i++)
            a.law[i] = sub->probabilities ? sub->probabilities[i] : 1.0 / (double)n;
        st = thresholds_for(&a, kind == QC_QUANTIZER_OPTIMAL ? optimal_starts[s] : kind);
        if (st == QC_OK)
            st = alternate(&a);
    }
    if (st != QC_OK)
        goto done;
    /* the final channel, its rate for the best law and the references */
    qc_design_request fin = *sub;
    fin.objective = QC_OBJECTIVE_MI;
    fin.quantizer = QC_QUANTIZER_FIXED;
    fin.costs = NULL;
    fin.thresholds = a.best_t;
    fin.nthresholds = a.nt;
    fin.probabilities = a.best_law;
    fin.skip_snr_penalty = sub->skip_snr_penalty || c->searching;
    if ((st = qc_design_thresholds(&fin, res)) != QC_OK)
        goto done;
    res->objective = QC_OBJECTIVE_CAPACITY;
    res->quantizer = kind;
    res->upper_bound_bits = fmax(a.best_upper, res->rate_bits);
    res->iterations = a.iterations;
    res->design_iterations = kind == QC_QUANTIZER_FIXED ? 0 : a.alternations;
    res->fine_cells = kind == QC_QUANTIZER_OPTIMAL ? a.fine : 0;
done:
    free(a.law);
    free(a.best_law);
    free(a.t);
    free(a.best_t);
    return st;
}

/* One complete design at levels x (c->req->nlevels of them). */
static qc_status design_at(void *ctx, const double *x, qc_design_result *res)
{
    const design_ctx *c = ctx;
    const qc_design_request *req = c->req;
    qc_design_request sub = plain_request(req);
    sub.levels = x;
    sub.probabilities = c->law;
    if (c->searching)
        sub.skip_snr_penalty = 1;
    memset(res, 0, sizeof *res);
    qc_status st;
    if (req->objective == QC_OBJECTIVE_CAPACITY) {
        qc_cost costs[2];
        size_t k = qc_constraint_costs(req->constraints, x, req->nlevels, c->dims,
                                       c->power_cost, c->mean_cost, costs);
        if (k > 0 && (st = qc_constraints_check(req->constraints, x, req->nlevels,
                                                c->dims)) != QC_OK)
            return st;
        /* average constraints: qc_capacity_costs inside the alternation;
         * none (a peak only trims the levels): the joint design */
        if (k > 0)
            return constrained_capacity(c, &sub, costs, k, res);
        return qc_design_thresholds(&sub, res);
    }
    if ((st = qc_constraints_check_law(req->constraints, x, c->law, req->nlevels,
                                       c->dims)) != QC_OK)
        return st;
    if ((st = qc_design_thresholds(&sub, res)) != QC_OK)
        return st;
    if (req->objective == QC_OBJECTIVE_GMI && (st = gmi_objective(c, res)) != QC_OK) {
        qc_design_result_clear(res);
        return st;
    }
    return QC_OK;
}

/* Dispersion, GMI, averages, QAM scaling, blocklength rate, shaping gap. */
static qc_status finish(const design_ctx *c, qc_design_result *r)
{
    const qc_design_request *req = c->req;
    const double d = (double)c->dims;
    double mi, v, g;
    unsigned nbits;
    qc_status st = qc_dispersion(r->channel, r->input, &mi, &v);
    if (st == QC_OK)
        st = design_gmi(r, &g, &nbits);
    if (st != QC_OK)
        return st;
    r->dimensions = c->dims;
    r->mi_bits = d * mi * QC_LOG2E;
    r->gmi_bits = d * g * QC_LOG2E;
    r->label_bits = nbits;
    r->dispersion_bits2 = d * v * QC_LOG2E * QC_LOG2E;
    double e1 = 0.0, e2 = 0.0;
    for (size_t i = 0; i < r->nlevels; i++) {
        e1 += r->input[i] * r->levels[i];
        e2 += r->input[i] * r->levels[i] * r->levels[i];
    }
    r->average_level = e1;
    r->average_power = d * e2;
    if (c->dims == 2) {
        /* product law on a product channel: every rate doubles exactly */
        r->rate_bits *= 2.0;
        r->upper_bound_bits *= 2.0;
        r->unquantized_bits *= 2.0;
        r->unquantized_err_bits *= 2.0;
        r->loss_bits *= 2.0;
    }
    r->blocklength = req->blocklength;
    r->error_rate = req->blocklength ? req->error_rate : NAN;
    r->rate_at_blocklength_bits = NAN;
    if (req->blocklength &&
        (st = qc_normal_approximation(r->rate_bits, r->dispersion_bits2, req->blocklength,
                                      req->error_rate, &r->rate_at_blocklength_bits)) != QC_OK)
        return st;
    r->shaping_gap_db = req->model->type == &qc_model_gauss
                            ? qc_shaping_gap_db(r->snr_db, r->rate_bits / d)
                            : NAN;
    return QC_OK;
}

typedef struct {
    double value;
    double prob;
} level_law;

static int by_level(const void *a, const void *b)
{
    double x = ((const level_law *)a)->value, y = ((const level_law *)b)->value;
    return (x > y) - (x < y);
}

qc_status qc_input_design(const qc_design_request *req, qc_design_result *res)
{
    memset(res, 0, sizeof *res);
    if (!req)
        return qc_fail(QC_EINVAL, "no design request given");
    if (!req->levels || req->nlevels == 0)
        return qc_fail(QC_EINVAL, "design: no input levels given");
    unsigned dims = 1;
    qc_status st = check_alphabet_request(req, &dims);
    if (st != QC_OK)
        return st;
    const size_t n = req->nlevels;
    design_ctx c = {.req = req, .dims = dims};
    double *x = qc_malloc_array(n, sizeof *x), *law = NULL;
    level_law *pairs = NULL;
    qc_level_set set = {0};
    c.power_cost = qc_malloc_array(n, sizeof *c.power_cost);
    c.mean_cost = qc_malloc_array(n, sizeof *c.mean_cost);
    if (!x || !c.power_cost || !c.mean_cost) {
        st = qc_fail(QC_ENOMEM, "out of memory");
        goto done;
    }
    memcpy(x, req->levels, n * sizeof *x);
    c.law = req->probabilities;
    size_t evaluations = 0;
    if (req->optimize_levels) {
        /* the law follows its level through the sort */
        pairs = qc_malloc_array(n, sizeof *pairs);
        law = qc_malloc_array(n, sizeof *law);
        if (!pairs || !law) {
            st = qc_fail(QC_ENOMEM, "out of memory");
            goto done;
        }
        for (size_t i = 0; i < n; i++)
            pairs[i] = (level_law){x[i], req->probabilities ? req->probabilities[i]
                                                            : 1.0 / (double)n};
        qsort(pairs, n, sizeof *pairs, by_level);
        for (size_t i = 0; i < n; i++) {
            x[i] = pairs[i].value;
            law[i] = pairs[i].prob;
        }
        if (req->probabilities)
            c.law = law;
        int designs_law = req->objective == QC_OBJECTIVE_CAPACITY;
        if ((st = qc_level_set_init(&set, req->constraints, designs_law ? NULL : law, x, n,
                                    dims)) != QC_OK)
            goto done;
        if (!set.bounded) {
            st = qc_fail(QC_EINVAL, "optimize-levels needs the levels bounded: give 'peak' "
                                    "or 'power' (or 'mean' for intensity levels)");
            goto done;
        }
        size_t starts = req->level_starts ? req->level_starts : DEFAULT_LEVEL_STARTS;
        if (starts > MAX_LEVEL_STARTS)
            starts = MAX_LEVEL_STARTS;
        double best;
        c.searching = 1;
        st = qc_level_search(&set, x, starts, design_at, &c, x, &best, &evaluations);
        c.searching = 0;
        if (st != QC_OK)
            goto done;
    } else {
        if ((st = qc_constraints_check(req->constraints, x, n, dims)) != QC_OK)
            goto done;
    }
    if ((st = design_at(&c, x, res)) != QC_OK)
        goto done;
    if ((st = finish(&c, res)) != QC_OK) {
        qc_design_result_clear(res);
        goto done;
    }
    res->levels_optimized = req->optimize_levels != 0;
    res->level_evaluations = evaluations;
done:
    qc_level_set_clear(&set);
    free(x);
    free(law);
    free(pairs);
    free(c.power_cost);
    free(c.mean_cost);
    return st;
}
