/* alternation.c — the capacity objective: thresholds and input law
 * together, with none, one or two average costs on the law (the request's
 * per-level cost, or the power and mean constraints).
 *
 * For fixed thresholds the capacity (or capacity–cost) of the quantized
 * channel comes from the engine (qc_capacity_costs: Blahut 1972, Arimoto
 * 1972, with certified bounds). For designed thresholds, alternate
 *   r ← the engine's capacity-achieving law of the current channel,
 *   t ← the strategy's thresholds for the law r,
 * until the capacity changes by no more than the tolerance (block
 * coordinate ascent; for strategies that maximize I(r, t) over their
 * family — optimal, uniform — a step cannot lower the rate, since
 * C(t') ≥ I(r, t') ≥ I(r, t) = C(t)). The optimal strategy runs this from
 * three starts — the uniform quantizer, Lloyd–Max, and the DP design for
 * the starting law — and keeps the best. Lloyd–Max does not maximize I,
 * so every alternation keeps the best channel seen. The reported rate and
 * upper bound are the engine's certified bounds for the final channel;
 * the joint optimum itself is not certified (the problem is not concave
 * in the thresholds). Each start has its own strategy plan (with the
 * optimal strategy's fine grid, built for the uniform law so that every
 * level has cells around it), channel and engine workspace, which serve
 * every step of its alternation. The starts share nothing else, so they
 * run in OpenMP threads when the design is not already inside a parallel
 * region (a sweep's points are) and the model is thread-safe; the best is
 * taken in the order of the starts, so the result is the same bits as
 * running them one after another. */
#include "design/design_internal.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#ifdef _OPENMP
#include <omp.h>
#endif

#define MAX_ALTERNATIONS 50
#define MAX_STARTS 3

/* Progress of every start, in units of alternation rounds. */
typedef struct {
    const qc_design_request *req;
    size_t done[MAX_STARTS]; /* per start                                 */
    size_t work;             /* units in all                              */
    int threads;             /* the starts run in a team of threads        */
} progress;

typedef struct {
    progress *progress;
    size_t stage;            /* which start                               */
    const qc_model *model;
    const double *levels;
    size_t n, nt;
    const qc_threshold_strategy *strategy;
    qc_strategy_plan *plan;
    const qc_cost *costs;
    size_t ncosts;
    qc_ba_options opt;
    qc_dmc *channel;         /* n × K, the channel of the last thresholds   */
    double *lo, *hi;         /* discretizer scratch                         */
    qc_ba_workspace *ws;
    double *law;             /* the last capacity-achieving law (warm start) */
    double best, best_upper; /* nats: best certified lower bound, its upper */
    double *best_t, *best_law;
    size_t engine_iterations, steps;
    qc_convergence convergence; /* Lloyd–Max: worst over its designs        */
    double residual;            /* Lloyd–Max: largest residual seen         */
    double *t, *cand;           /* the thresholds, a candidate              */
} alternation;

/* Start a's alternation has done `units` rounds. The sum over the starts
 * is reported, never decreasing, and only from the calling thread (the
 * team's first, when the starts run in threads), as the request's
 * progress callback promises. */
static void report(alternation *a, size_t units)
{
    progress *p = a->progress;
#ifdef _OPENMP
    int caller = !p->threads || omp_get_thread_num() == 0;
#else
    int caller = 1;
#endif
#pragma omp critical(qc_alternation_progress)
    {
        p->done[a->stage] = units;
        size_t sum = 0;
        for (size_t s = 0; s < MAX_STARTS; s++)
            sum += p->done[s];
        if (caller)
            qc_design_progress(p->req, sum, p->work);
    }
}

/* The request's strategy designs for `law`; Lloyd–Max's convergence is
 * kept (a design stopped by its round cap marks the whole alternation). */
static qc_status strategy_step(alternation *a, const qc_threshold_strategy *s,
                               const double *law, int warm, double *t)
{
    qc_strategy_stats stats = {0};
    qc_status st = qc_strategy_design(s, a->plan, law, warm, t, &stats);
    if (st == QC_OK && s == a->strategy && stats.convergence != QC_CONVERGENCE_NONE) {
        if (a->convergence != QC_NOT_CONVERGED)
            a->convergence = stats.convergence;
        if (!(a->residual >= stats.residual))
            a->residual = stats.residual;
    }
    return st;
}

/* Capacity (nats, the engine's certified lower bound) of thresholds t,
 * starting the engine from the last law and leaving its law in a->law.
 * QC_ENOCONV still gives valid bounds and is accepted here; the final
 * evaluation reports it. Keeps the best thresholds, law and bounds. */
static qc_status law_step(alternation *a, const double *t, double *value)
{
    qc_status st = qc_discretize_into(a->model, a->levels, a->n, t, a->nt, a->lo, a->hi,
                                      a->channel);
    if (st != QC_OK)
        return st;
    qc_costs_result cr;
    a->opt.initial = a->law;
    st = qc_capacity_costs(a->channel, &a->opt, a->costs, a->ncosts, a->ws, &cr, a->law);
    a->engine_iterations += cr.iterations;
    a->steps++;
    if (st != QC_OK && st != QC_ENOCONV)
        return st;
    *value = cr.capacity_bits / QC_LOG2E;
    if (*value > a->best) {
        a->best = *value;
        a->best_upper = cr.upper_bound_bits / QC_LOG2E;
        memcpy(a->best_t, t, a->nt * sizeof *t);
        memcpy(a->best_law, a->law, a->n * sizeof *a->law);
    }
    return QC_OK;
}

/* Alternate law and thresholds from the thresholds in t (scratch `cand`). */
static qc_status alternate(alternation *a, double *t, double *cand)
{
    double c;
    qc_status st = law_step(a, t, &c);
    for (size_t k = 0; st == QC_OK && !a->strategy->given && k < MAX_ALTERNATIONS; k++) {
        report(a, k + 1);
        memcpy(cand, t, a->nt * sizeof *cand); /* a warm start where one is used */
        st = strategy_step(a, a->strategy, a->law, 1, cand);
        double cn;
        if (st == QC_OK)
            st = law_step(a, cand, &cn);
        if (st != QC_OK)
            break;
        memcpy(t, cand, a->nt * sizeof *t);
        double gain = cn - c;
        c = cn;
        if (fabs(gain) <= a->opt.tol_bits / QC_LOG2E)
            break;
    }
    return st;
}

/* A start's own channel, workspace, scratch and strategy plan (with the
 * fine grid built for `uniform`). */
static qc_status start_alloc(alternation *a, const qc_design_request *req,
                             const double *uniform)
{
    const size_t n = a->n, nt = a->nt;
    qc_status st = qc_dmc_alloc(n, nt + 1, &a->channel);
    if (st == QC_OK)
        st = qc_ba_workspace_alloc(n, nt + 1, &a->ws);
    if (st != QC_OK)
        return st;
    a->lo = qc_malloc_array(nt, sizeof *a->lo);
    a->hi = qc_malloc_array(nt, sizeof *a->hi);
    a->law = qc_malloc_array(n, sizeof *a->law);
    a->best_law = qc_malloc_array(n, sizeof *a->best_law);
    a->best_t = qc_malloc_array(nt, sizeof *a->best_t);
    a->t = qc_malloc_array(nt, sizeof *a->t);
    a->cand = qc_malloc_array(nt, sizeof *a->cand);
    if (!a->lo || !a->hi || !a->law || !a->best_law || !a->best_t || !a->t || !a->cand)
        return qc_fail(QC_ENOMEM, "out of memory");
    return qc_strategy_plan_alloc(a->model, a->levels, n, nt, req->quantizer.thresholds,
                                  req->numerics.fine_cells, uniform, &a->plan);
}

static void start_free(alternation *a)
{
    qc_strategy_plan_free(a->plan);
    qc_dmc_free(a->channel);
    qc_ba_workspace_free(a->ws);
    free(a->lo);
    free(a->hi);
    free(a->law);
    free(a->best_law);
    free(a->best_t);
    free(a->t);
    free(a->cand);
}

/* The starts: each one's state, first strategy and the starting law. */
typedef struct {
    alternation *run;
    const qc_threshold_strategy *const *first;
    const double *law;
} starts_ctx;

/* Start s: its first strategy designs for the starting law, then the
 * alternation from there. */
static qc_status run_start(size_t s, void *ctx)
{
    const starts_ctx *c = ctx;
    alternation *a = &c->run[s];
    memcpy(a->law, c->law, a->n * sizeof *a->law);
    qc_status st = strategy_step(a, c->first[s], c->law, 0, a->t);
    if (st == QC_OK)
        st = alternate(a, a->t, a->cand);
    report(a, MAX_ALTERNATIONS);
    return st;
}

/* Start b's outcome into a, which holds the starts before it: the first
 * best channel in their order wins, as in one run after another. (Only
 * the request's own strategy marks convergence, and the optimal strategy,
 * the one with several starts, marks none; they are merged all the same.) */
static void merge_start(alternation *a, const alternation *b)
{
    if (b->best > a->best) {
        a->best = b->best;
        a->best_upper = b->best_upper;
        memcpy(a->best_t, b->best_t, a->nt * sizeof *a->best_t);
        memcpy(a->best_law, b->best_law, a->n * sizeof *a->best_law);
    }
    a->engine_iterations += b->engine_iterations;
    a->steps += b->steps;
    if (b->convergence != QC_CONVERGENCE_NONE && a->convergence != QC_NOT_CONVERGED)
        a->convergence = b->convergence;
    if (!isnan(b->residual) && !(a->residual >= b->residual))
        a->residual = b->residual;
}

qc_status qc_design_alternation(const qc_design_request *req, const qc_cost *costs,
                                size_t ncosts, qc_design_result *res)
{
    const size_t n = res->nlevels, nt = res->nthresholds;
    progress prog = {.req = req};
    alternation run[MAX_STARTS];
    run[0] = (alternation){.progress = &prog, .model = req->channel.model,
                           .levels = res->levels, .n = n, .nt = nt,
                           .strategy = qc_strategy_of(req->quantizer.kind), .costs = costs,
                           .ncosts = ncosts, .best = -INFINITY, .best_upper = INFINITY,
                           .residual = NAN};
    alternation *a = &run[0]; /* the first start; it takes the others' results */
    qc_ba_options_default(&a->opt);
    a->opt.tol_bits = res->tol_bits;

    /* the optimal strategy starts from three designs for the starting law */
    static const qc_threshold_strategy *const optimal_starts[MAX_STARTS] = {
        &qc_strategy_uniform, &qc_strategy_lloyd_max, &qc_strategy_optimal};
    const qc_threshold_strategy *const *starts = &a->strategy;
    size_t nstarts = 1;
    if (a->strategy == &qc_strategy_optimal) {
        starts = optimal_starts;
        nstarts = MAX_STARTS;
    }
    for (size_t s = 1; s < nstarts; s++) {
        run[s] = run[0];
        run[s].stage = s;
    }
    size_t ready = 0; /* starts with something to free */
    double *start = qc_malloc_array(n, sizeof *start);
    double *uniform = qc_malloc_array(n, sizeof *uniform);
    qc_status st = start && uniform ? QC_OK : qc_fail(QC_ENOMEM, "out of memory");
    if (st != QC_OK)
        goto done;
    memcpy(start, res->input, n * sizeof *start); /* the request's law or uniform */
    for (size_t i = 0; i < n; i++)
        uniform[i] = 1.0 / (double)n;
    for (size_t s = 0; s < nstarts && st == QC_OK; s++) {
        st = start_alloc(&run[s], req, uniform);
        ready = s + 1;
    }
    if (st != QC_OK)
        goto done;
    prog.work = nstarts * MAX_ALTERNATIONS + 1;

    prog.threads = nstarts > 1 && qc_parallel_can_fork() && qc_model_thread_safe(a->model);
    starts_ctx sc = {.run = run, .first = starts, .law = start};
    st = qc_parallel_starts(nstarts, prog.threads, run_start, &sc);
    /* every start done (the calling thread may have run none of them) */
    qc_design_progress(req, nstarts * MAX_ALTERNATIONS, prog.work);
    if (st != QC_OK)
        goto done;
    for (size_t s = 1; s < nstarts; s++)
        merge_start(a, &run[s]);
    double *t = a->t;

    /* The best channel and its certified bounds, the engine started from
     * the best law. */
    memcpy(res->thresholds, a->best_t, nt * sizeof *res->thresholds);
    st = qc_discretize(req->channel.model, res->levels, n, res->thresholds, nt, &res->channel);
    if (st != QC_OK)
        goto done;
    qc_costs_result cr;
    a->opt.initial = a->best_law;
    st = qc_capacity_costs(res->channel, &a->opt, costs, ncosts, a->ws, &cr, res->input);
    a->engine_iterations += cr.iterations;
    if (st != QC_OK)
        goto done;
    if (!a->strategy->given) {
        /* A reproducible placement among equally good thresholds (tidy.c)
         * for the capacity-achieving law r*: C(t') ≥ I(r*, t') ≥ C(t) − ε. */
        memcpy(t, res->thresholds, nt * sizeof *t);
        if (a->strategy == &qc_strategy_optimal &&
            (st = qc_tidy_thresholds(req->channel.model, res->levels, res->input, n, nt,
                                     QC_TIDY_NATS(res->tol_bits), t)) != QC_OK)
            goto done;
        qc_snap_thresholds(req->channel.model, res->levels, n, nt, t);
        if (memcmp(t, res->thresholds, nt * sizeof *t) != 0) {
            memcpy(res->thresholds, t, nt * sizeof *t);
            qc_dmc_free(res->channel);
            res->channel = NULL;
            if ((st = qc_discretize(req->channel.model, res->levels, n, res->thresholds, nt,
                                    &res->channel)) != QC_OK)
                goto done;
            memcpy(a->law, res->input, n * sizeof *a->law);
            a->opt.initial = a->law;
            st = qc_capacity_costs(res->channel, &a->opt, costs, ncosts, a->ws, &cr, res->input);
            a->engine_iterations += cr.iterations;
            if (st != QC_OK)
                goto done;
        }
    }
    res->rate_bits = cr.capacity_bits;
    res->upper_bound_bits = cr.upper_bound_bits;
    res->iterations = a->engine_iterations;
    res->design_iterations = a->strategy->given ? 0 : a->steps;
    res->design_convergence = a->convergence;
    res->design_residual = a->convergence != QC_CONVERGENCE_NONE ? a->residual : NAN;
    res->fine_cells = qc_strategy_plan_fine_cells(a->plan);
    qc_design_progress(req, prog.work, prog.work);
done:
    for (size_t s = 0; s < ready; s++)
        start_free(&run[s]);
    free(start);
    free(uniform);
    return st;
}
