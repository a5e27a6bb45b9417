/* capacity.c — the public entry point of the capacity engine: options,
 * argument checks, workspace handling, and the unconstrained capacity
 * by Blahut–Arimoto (Blahut, IEEE Trans. IT 18(4), 1972; Arimoto,
 * IEEE Trans. IT 18(1), 1972) with the certified gap as stopping rule.
 * The capacity–cost problem is delegated to cost.c. */
#include "capacity/engine.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

/* Largest |Σ r − 1| accepted for a caller's initial law. */
#define INITIAL_SUM_TOL 1e-9

void qc_ba_options_default(qc_ba_options *opt)
{
    opt->tol_bits = 1e-9;
    opt->max_iterations = 1000000;
    opt->method = QC_BA_ACCELERATED;
    opt->initial = NULL;
    opt->costs = NULL;
    opt->budget = 0.0;
    opt->prune = 1;
}

static qc_status check_options(const qc_ba_options *opt, size_t nx)
{
    if (!(opt->tol_bits > 0.0) || !isfinite(opt->tol_bits))
        return qc_fail(QC_EINVAL, "'tol_bits' must be a finite number > 0 (got %g)",
                       opt->tol_bits);
    if (opt->max_iterations == 0)
        return qc_fail(QC_EINVAL, "'max_iterations' must be >= 1 (got 0)");
    if (opt->method != QC_BA_PLAIN && opt->method != QC_BA_ACCELERATED)
        return qc_fail(QC_EINVAL, "'method' %d is not a known Blahut-Arimoto variant",
                       (int)opt->method);
    if (opt->initial) {
        double sum = 0.0;
        for (size_t x = 0; x < nx; x++) {
            double v = opt->initial[x];
            if (!isfinite(v) || v < 0.0)
                return qc_fail(QC_EINVAL,
                               "initial input law: entry %zu is %g, expected a "
                               "probability",
                               x + 1, v);
            if (v == 0.0)
                return qc_fail(QC_EINVAL,
                               "initial input law: entry %zu is 0; Blahut-Arimoto "
                               "needs a strictly positive start",
                               x + 1);
            sum += v;
        }
        if (fabs(sum - 1.0) > INITIAL_SUM_TOL)
            return qc_fail(QC_EINVAL,
                           "initial input law sums to %.17g over its %zu entries, "
                           "expected 1 within %g",
                           sum, nx, INITIAL_SUM_TOL);
    }
    if (opt->costs) {
        for (size_t x = 0; x < nx; x++)
            if (!isfinite(opt->costs[x]) || opt->costs[x] < 0.0)
                return qc_fail(QC_EINVAL,
                               "cost of input %zu is %g, expected a finite number "
                               ">= 0",
                               x + 1, opt->costs[x]);
        if (!isfinite(opt->budget))
            return qc_fail(QC_EINVAL, "'budget' must be finite (got %g)", opt->budget);
    }
    return QC_OK;
}

/* Starting law: the caller's (renormalized) or uniform. */
static void start_law(const qc_ba_options *opt, size_t nx, double *r)
{
    if (opt->initial) {
        double sum = 0.0;
        for (size_t x = 0; x < nx; x++)
            sum += opt->initial[x];
        for (size_t x = 0; x < nx; x++)
            r[x] = opt->initial[x] / sum;
    } else {
        for (size_t x = 0; x < nx; x++)
            r[x] = 1.0 / (double)nx;
    }
}

static qc_status unconstrained(qc_ba_workspace *ws, const qc_ba_options *opt,
                               qc_capacity_result *res)
{
    double tol = opt->tol_bits / QC_LOG2E;
    ba_tilt none = {NULL, 0.0, 0.0};
    ba_outcome o;
    size_t newton_steps = 0;
    int solved = 0;
    if (opt->prune && ws->nx >= BA_PRUNE_MIN_INPUTS) {
        /* Many candidates: the active-set solve (cost_newton.c) first.
         * Its law is rated afresh here, with the upper bound max_x D_x
         * over every input; if that does not certify, Blahut–Arimoto runs
         * from the same start as if it had not been tried. */
        memcpy(ws->r_hi, ws->r, ws->nx * sizeof *ws->r);
        ba_newton_result nr;
        if (ba_newton_free(ws, tol, opt->max_iterations, &nr)) {
            o = (ba_outcome){.upper = INFINITY};
            ba_evaluate(ws, &none, &o);
            solved = o.converged = !o.failed && o.upper - o.mi <= tol;
        }
        newton_steps = nr.steps;
        if (!solved)
            memcpy(ws->r, ws->r_hi, ws->nx * sizeof *ws->r);
    }
    if (solved)
        o.iterations = 0; /* the Newton steps below are all it took */
    else
        ba_solve(ws, &none, tol, opt->method,
                 opt->max_iterations > newton_steps ? opt->max_iterations - newton_steps : 1,
                 opt->prune, &o);
    o.iterations += newton_steps;
    double upper = fmax(o.upper, o.mi);
    res->capacity_bits = o.mi * QC_LOG2E;
    res->upper_bound_bits = upper * QC_LOG2E;
    res->gap_bits = res->upper_bound_bits - res->capacity_bits;
    res->iterations = o.iterations;
    if (o.failed)
        return qc_fail(QC_ENUMERIC,
                       "Blahut-Arimoto produced a non-finite bound after %zu "
                       "iterations",
                       o.iterations);
    if (!o.converged)
        return qc_fail(QC_ENOCONV,
                       "Blahut-Arimoto stopped at the iteration limit %zu with "
                       "bounds %.12g <= C <= %.12g bits (gap %.3g, tolerance %.3g)",
                       opt->max_iterations, res->capacity_bits,
                       res->upper_bound_bits, res->gap_bits, opt->tol_bits);
    return QC_OK;
}

qc_status qc_capacity(const qc_dmc *dmc, const qc_ba_options *opt,
                      qc_ba_workspace *ws, qc_capacity_result *res,
                      double *input_out)
{
    qc_gsl_init();
    if (!res)
        return qc_fail(QC_EINVAL, "no result struct given");
    memset(res, 0, sizeof *res);
    qc_status st = qc_dmc_check(dmc);
    if (st != QC_OK)
        return st;
    qc_ba_options defaults;
    if (!opt) {
        qc_ba_options_default(&defaults);
        opt = &defaults;
    }
    st = check_options(opt, dmc->nx);
    if (st != QC_OK)
        return st;
    qc_ba_workspace *own = NULL;
    if (!ws) {
        st = qc_ba_workspace_alloc(dmc->nx, dmc->ny, &own);
        if (st != QC_OK)
            return st;
        ws = own;
    } else if (ws->nx_max < dmc->nx || ws->ny_max < dmc->ny) {
        return qc_fail(QC_EINVAL,
                       "workspace for %zu x %zu is too small for a %zu x %zu "
                       "channel",
                       ws->nx_max, ws->ny_max, dmc->nx, dmc->ny);
    }
    ba_prepare(ws, dmc);
    start_law(opt, dmc->nx, ws->r);
    if (opt->costs)
        st = ba_capacity_cost(ws, opt, res);
    else
        st = unconstrained(ws, opt, res);
    if (input_out && (st == QC_OK || st == QC_ENOCONV))
        memcpy(input_out, ws->r, dmc->nx * sizeof *input_out);
    qc_ba_workspace_free(own);
    return st;
}
