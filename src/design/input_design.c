/* input_design.c — what qc_design adds around the threshold design for
 * alphabets and inputs: input constraints (peak on the levels; average
 * power and average level as costs of the law, one or two at once, in the
 * alternation of thresholds and law of alternation.c), square QAM as two
 * quadratures sharing the thresholds, the BICM GMI
 * objective (Caire, Taricco, Biglieri, IEEE Trans. IT 44(3), 1998), level
 * optimization, and the rates practitioners quote: dispersion and the
 * normal approximation (Polyanskiy, Poor, Verdú, IEEE Trans. IT 56(5),
 * 2010) and the shaping gap to ½·log2(1 + snr). */
#include "design/design_internal.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#ifdef _OPENMP
#include <omp.h>
#endif

#define DEFAULT_LEVEL_STARTS 3
#define MAX_LEVEL_STARTS 64

typedef struct {
    const qc_design_request *req;
    unsigned dims;
    const double *law;   /* the law tied to the (sorted) levels; NULL: uniform */
    int searching;       /* inside the level search: skip reporting work */
    size_t evals, evals_total; /* level search progress: designs run, budget */
    int level;           /* OpenMP nesting level of the caller            */
} design_ctx;

/* The request with the alphabet fields cleared, for the threshold design. */
static qc_design_request plain_request(const qc_design_request *req)
{
    qc_design_request sub = *req;
    sub.channel.dimensions = 0;
    sub.input.constraints = NULL;
    sub.input.optimize_levels = 0;
    sub.input.level_starts = 0;
    sub.numerics.blocklength = 0;
    sub.numerics.error_rate = 0.0;
    if (sub.input.objective == QC_OBJECTIVE_GMI)
        sub.input.objective = QC_OBJECTIVE_MI;
    return sub;
}

/* Check the alphabet fields of a request; the message names the field. */
qc_status qc_design_check_alphabet(const qc_design_request *req, unsigned *dims)
{
    if (req->channel.dimensions > 2)
        return qc_fail(QC_EINVAL, "dimensions must be 1 (real) or 2 (QAM), got %u",
                       req->channel.dimensions);
    *dims = req->channel.dimensions == 2 ? 2 : 1;
    qc_status st = qc_constraints_validate(req->input.constraints, *dims);
    if (st != QC_OK)
        return st;
    if (req->input.costs && qc_constraints_any(req->input.constraints))
        return qc_fail(QC_EINVAL, "give per-level costs or input constraints (peak-limit, "
                                  "power-limit, mean-limit), not both");
    const double eps = req->numerics.error_rate;
    if (req->numerics.blocklength > 0 && !(eps > 0.0 && eps < 1.0))
        return qc_fail(QC_EINVAL, "error-rate must lie strictly between 0 and 1 with a "
                                  "blocklength (got %g)",
                       req->numerics.error_rate);
    if (req->numerics.blocklength == 0 && req->numerics.error_rate != 0.0)
        return qc_fail(QC_EINVAL, "error-rate needs a blocklength");
    if (req->input.objective == QC_OBJECTIVE_GMI && !qc_is_power_of_two(req->channel.nlevels))
        return qc_fail(QC_EINVAL,
                       "objective gmi: Gray labels need a power of 2 levels%s (got %zu)",
                       *dims == 2 ? " per quadrature" : "", req->channel.nlevels);
    if (*dims == 2 && !qc_is_power_of_two(req->channel.nlevels))
        return qc_fail(QC_EINVAL,
                       "QAM: the levels per quadrature must be a power of 2 (got %zu)",
                       req->channel.nlevels);
    if (req->input.optimize_levels && req->quantizer.kind == QC_QUANTIZER_FIXED)
        return qc_fail(QC_EINVAL, "optimize-levels re-designs the thresholds at each step; "
                                  "it cannot use the fixed quantizer");
    if (req->input.optimize_levels && req->channel.nlevels < 2)
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
        st = qc_unquantized_gmi(c->req->channel.model, r->levels, r->input, r->nlevels, labels,
                                nbits, &ug, &uerr);
    free(labels);
    if (st != QC_OK)
        return st;
    r->unquantized_bits = ug * QC_LOG2E;
    r->unquantized_err_bits = uerr * QC_LOG2E;
    r->loss_bits = r->unquantized_bits - r->rate_bits;
    r->snr_penalty_db = NAN;
    return QC_OK;
}

/* One complete design at levels x (c->req->channel.nlevels of them). */
static qc_status design_at(void *ctx, const double *x, qc_design_result *res)
{
    const design_ctx *c = ctx;
    const qc_design_request *req = c->req;
    qc_design_request sub = plain_request(req);
    sub.channel.levels = x;
    sub.input.probabilities = c->law;
    if (c->searching) {
        sub.numerics.skip_snr_penalty = 1;
        /* the search reports its designs, not the stages inside each */
        sub.numerics.progress = NULL;
        /* the search may run two designs at once (its first two starts
         * in a team of threads): count both, report from the caller */
        design_ctx *mc = ctx;
        size_t done;
#pragma omp atomic capture
        done = ++mc->evals;
#ifdef _OPENMP
        int caller = omp_get_level() == c->level || omp_get_thread_num() == 0;
#else
        int caller = 1;
#endif
        if (caller)
            qc_design_progress(req, done, c->evals_total + 1);
    } else if (c->evals_total) {
        sub.numerics.progress = NULL; /* the final design after a search: one unit */
    }
    memset(res, 0, sizeof *res);
    qc_status st;
    if (req->input.objective == QC_OBJECTIVE_CAPACITY) {
        /* average constraints become costs of the law in the one
         * alternation of thresholds and law; a peak only trims levels */
        const size_t n = req->channel.nlevels;
        double *per_level = qc_malloc_array(2 * n, sizeof *per_level); /* this design's own */
        if (!per_level)
            return qc_fail(QC_ENOMEM, "out of memory");
        qc_cost costs[2];
        size_t k = qc_constraint_costs(req->input.constraints, x, n, c->dims, per_level,
                                       per_level + n, costs);
        st = k > 0 ? qc_constraints_check(req->input.constraints, x, n, c->dims) : QC_OK;
        if (st == QC_OK)
            st = qc_design_thresholds(&sub, costs, k, res);
        free(per_level);
        return st;
    }
    if ((st = qc_constraints_check_law(req->input.constraints, x, c->law, req->channel.nlevels,
                                       c->dims)) != QC_OK)
        return st;
    if ((st = qc_design_thresholds(&sub, NULL, 0, res)) != QC_OK)
        return st;
    if (req->input.objective == QC_OBJECTIVE_GMI && (st = gmi_objective(c, res)) != QC_OK) {
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
    r->mi_bits = mi * QC_LOG2E;
    r->gmi_bits = g * QC_LOG2E;
    r->label_bits = nbits;
    r->dispersion_bits2 = d * v * QC_LOG2E * QC_LOG2E;
    /* rates held to their limits, loss and SNR penalty: per dimension */
    if ((st = qc_design_settle(req, r)) != QC_OK)
        return st;
    r->mi_bits *= d;
    r->gmi_bits *= d;
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
    r->blocklength = req->numerics.blocklength;
    r->error_rate = req->numerics.blocklength ? req->numerics.error_rate : NAN;
    r->rate_at_blocklength_bits = NAN;
    if (req->numerics.blocklength &&
        (st = qc_normal_approximation(r->rate_bits, r->dispersion_bits2, req->numerics.blocklength,
                                      req->numerics.error_rate, &r->rate_at_blocklength_bits)) != QC_OK)
        return st;
    r->rate_at_blocklength_note = NULL;
    if (req->numerics.blocklength) {
        /* No code of N messages over M input symbols decodes with error
         * probability ε unless N(1 − ε) ≤ M^n, so R ≤ log2 M + log2(1/(1 − ε))/n
         * (M the symbols sent with positive probability, per dimension); and
         * no rate is below 0. The approximation's log2(n)/(2n) term holds
         * for channels of positive dispersion and large n (Polyanskiy, Poor
         * and Verdú 2010, §IV); outside these bounds it does not hold. */
        size_t sent = 0;
        for (size_t i = 0; i < r->nlevels; i++)
            sent += r->input[i] > 0.0;
        const double nd = (double)req->numerics.blocklength;
        const double most = d * log2((double)(sent > 0 ? sent : 1)) -
                            log2(1.0 - req->numerics.error_rate) / nd;
        if (r->rate_at_blocklength_bits > most) {
            r->rate_at_blocklength_bits = most;
            r->rate_at_blocklength_note =
                "the normal approximation exceeds log2 M + log2(1/(1 - e))/n, which no code "
                "beats: it does not hold at this blocklength; that bound is given";
        } else if (r->rate_at_blocklength_bits < 0.0) {
            r->rate_at_blocklength_bits = 0.0;
            r->rate_at_blocklength_note =
                "the normal approximation is below 0: it does not hold at this blocklength "
                "and error probability; 0 is given";
        }
    }
    const unsigned props = qc_model_get_type(req->channel.model)->properties;
    /* the gap to the Shannon curve means nothing at the noiseless limit */
    r->shaping_gap_db = (props & QC_MODEL_ADDITIVE_GAUSSIAN) && !r->noiseless_limit
                            ? qc_shaping_gap_db(r->snr_db, r->rate_bits / d)
                            : NAN;
    return qc_design_figures(req, r);
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
    if (!req->channel.levels || req->channel.nlevels == 0)
        return qc_fail(QC_EINVAL, "design: no input levels given");
    unsigned dims = 1;
    qc_status st = qc_design_check_alphabet(req, &dims);
    if (st != QC_OK)
        return st;
    const size_t n = req->channel.nlevels;
    design_ctx c = {.req = req, .dims = dims};
    double *x = qc_malloc_array(n, sizeof *x), *law = NULL;
    level_law *pairs = NULL;
    qc_level_set set = {0};
    if (!x) {
        st = qc_fail(QC_ENOMEM, "out of memory");
        goto done;
    }
    memcpy(x, req->channel.levels, n * sizeof *x);
    c.law = req->input.probabilities;
    size_t evaluations = 0;
    if (req->input.optimize_levels) {
        /* the law follows its level through the sort */
        pairs = qc_malloc_array(n, sizeof *pairs);
        law = qc_malloc_array(n, sizeof *law);
        if (!pairs || !law) {
            st = qc_fail(QC_ENOMEM, "out of memory");
            goto done;
        }
        for (size_t i = 0; i < n; i++)
            pairs[i] = (level_law){x[i], req->input.probabilities ? req->input.probabilities[i]
                                                            : 1.0 / (double)n};
        qsort(pairs, n, sizeof *pairs, by_level);
        for (size_t i = 0; i < n; i++) {
            x[i] = pairs[i].value;
            law[i] = pairs[i].prob;
        }
        if (req->input.probabilities)
            c.law = law;
        int designs_law = req->input.objective == QC_OBJECTIVE_CAPACITY;
        if ((st = qc_level_set_init(&set, req->input.constraints, designs_law ? NULL : law, x, n,
                                    dims)) != QC_OK)
            goto done;
        if (!set.bounded && designs_law) {
            /* the budgets constrain the designed law, which can send a
             * far level with little mass: only the peak bounds a level */
            st = qc_fail(QC_EINVAL, "optimize-levels with the capacity objective needs the "
                                    "levels bounded by 'peak-limit' (the power and mean "
                                    "limits constrain the designed law, not the levels)");
            goto done;
        }
        if (!set.bounded) {
            st = qc_fail(QC_EINVAL, "optimize-levels needs the levels bounded: give 'peak-limit' "
                                    "or 'power-limit' (or 'mean-limit' for intensity levels)");
            goto done;
        }
        size_t starts = req->input.level_starts ? req->input.level_starts : DEFAULT_LEVEL_STARTS;
        if (starts > MAX_LEVEL_STARTS)
            starts = MAX_LEVEL_STARTS;
        c.evals_total = starts * qc_level_search_budget(n);
        double best;
        c.searching = 1;
#ifdef _OPENMP
        c.level = omp_get_level();
#endif
        st = qc_level_search(&set, x, starts, qc_model_thread_safe(req->channel.model),
                             design_at, &c, x, &best, &evaluations);
        c.searching = 0;
        if (st != QC_OK)
            goto done;
    } else {
        if ((st = qc_constraints_check(req->input.constraints, x, n, dims)) != QC_OK)
            goto done;
    }
    if ((st = design_at(&c, x, res)) != QC_OK)
        goto done;
    if ((st = finish(&c, res)) != QC_OK) {
        qc_design_result_clear(res);
        goto done;
    }
    res->levels_optimized = req->input.optimize_levels != 0;
    res->level_evaluations = evaluations;
    if (c.evals_total)
        qc_design_progress(req, c.evals_total + 1, c.evals_total + 1);
done:
    qc_level_set_clear(&set);
    free(x);
    free(law);
    free(pairs);
    return st;
}
