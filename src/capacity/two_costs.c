/* capacity_costs.c — capacity of a discrete memoryless channel under up
 * to two average costs, on top of the engine's single-cost capacity
 * (Blahut, IEEE Trans. IT 18(4), 1972: capacity–cost through a Lagrange
 * multiplier s, with the certified bound C(β) ≤ max_x[D_x − s·c(x)] + s·β).
 *
 * Two constraints Σ r c_1 ≤ β_1, Σ r c_2 ≤ β_2 are replaced by the single
 * combined one Σ r c_w ≤ β_w, c_w = (1−w)c_1 + w·c_2, β_w = (1−w)β_1 +
 * w·β_2, w ∈ [0, 1]. Every law meeting both meets the combination, so
 * each engine run at any w certifies an upper bound on the two-cost
 * capacity, and its multiplier s gives the pair s_1 = (1−w)s, s_2 = w·s
 * of the Lagrange dual C ≤ max_x[D_x − s_1 c_1(x) − s_2 c_2(x)] + s_1 β_1 +
 * s_2 β_2 (Boyd & Vandenberghe, Convex Optimization, 2004, §5.2). If the
 * run with c_1 alone (w = 0) already meets β_2, or the run with c_2 alone
 * meets β_1, that run is the answer. Otherwise both constraints bind and
 * w is found by bisection on the sign of the excess (E c_2 − β_2) −
 * (E c_1 − β_1) of the combined optimum: where it vanishes, the optimum
 * of the relaxation meets both budgets. The lower bound is the rate of a
 * law meeting both budgets: a combined optimum that does, or the best
 * feasible mixture of the laws at the two ends of the bracket (the rate
 * is concave along the segment; GSL's Brent minimizer finds its best
 * point). */
#include "capacity/engine.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include <gsl/gsl_errno.h>
#include <gsl/gsl_min.h>

#define BISECTION_STEPS 60
#define START_BLEND 1e-3 /* weight of the uniform law in the starting law */
#define MIX_SAMPLES 9
#define MIX_TOL 1e-10
#define MIX_MAX_ITER 100

typedef struct {
    const qc_dmc *dmc;
    const double *a, *b; /* the two laws mixed: λ·a + (1 − λ)·b */
    double *mix;         /* scratch law */
    qc_status st;
} mixture;

/* −I(λ·a + (1−λ)·b) in nats, for GSL's minimizer. */
static double neg_mi(double lambda, void *p)
{
    mixture *m = p;
    for (size_t x = 0; x < m->dmc->nx; x++)
        m->mix[x] = fmax(0.0, lambda * m->a[x] + (1.0 - lambda) * m->b[x]);
    double s = 0.0;
    for (size_t x = 0; x < m->dmc->nx; x++)
        s += m->mix[x];
    for (size_t x = 0; x < m->dmc->nx; x++)
        m->mix[x] /= s;
    double mi = 0.0;
    qc_status st = qc_mutual_information(m->dmc, m->mix, &mi);
    if (st != QC_OK && m->st == QC_OK)
        m->st = st;
    return -mi;
}

/* Σ r c − β for one cost. */
static double excess(const double *r, const qc_cost *c, size_t n)
{
    double e = 0.0;
    for (size_t x = 0; x < n; x++)
        e += r[x] * c->costs[x];
    return e - c->budget;
}

static double slack(const qc_cost *c) { return QC_BUDGET_SLACK * fmax(1.0, fabs(c->budget)); }

static int meets(const double *r, const qc_cost *c, size_t n)
{
    return excess(r, c, n) <= slack(c);
}

/* Best law meeting both budgets on the segment between a and b; *best
 * (nats) and `out` are updated when it beats *best. */
static qc_status best_mixture(const qc_dmc *dmc, const qc_cost *costs, const double *a,
                              const double *b, double *scratch, double *best, double *out)
{
    const size_t n = dmc->nx;
    /* feasible λ: both excesses are linear in λ */
    double lo = 0.0, hi = 1.0;
    for (int k = 0; k < 2; k++) {
        double ea = excess(a, &costs[k], n), eb = excess(b, &costs[k], n);
        double sl = slack(&costs[k]);
        /* λ ea + (1−λ) eb ≤ 0 */
        if (ea == eb) {
            if (ea > sl)
                return QC_OK;
            continue;
        }
        double root = -eb / (ea - eb); /* on the budget itself, not its slack */
        if (ea > eb)
            hi = fmin(hi, root);
        else
            lo = fmax(lo, root);
    }
    if (!(lo <= hi))
        return QC_OK;
    mixture m = {dmc, a, b, scratch, QC_OK};
    double f[MIX_SAMPLES], lam[MIX_SAMPLES];
    size_t k_best = 0;
    for (size_t k = 0; k < MIX_SAMPLES; k++) {
        lam[k] = lo + (hi - lo) * (double)k / (MIX_SAMPLES - 1);
        f[k] = neg_mi(lam[k], &m);
        if (f[k] < f[k_best])
            k_best = k;
    }
    if (m.st != QC_OK)
        return m.st;
    double lambda = lam[k_best], value = f[k_best];
    if (k_best > 0 && k_best + 1 < MIX_SAMPLES && f[k_best] < f[k_best - 1] &&
        f[k_best] < f[k_best + 1]) {
        gsl_min_fminimizer *g = gsl_min_fminimizer_alloc(gsl_min_fminimizer_brent);
        if (!g)
            return qc_fail(QC_ENOMEM, "out of memory");
        gsl_function fn = {neg_mi, &m};
        int rc = gsl_min_fminimizer_set_with_values(g, &fn, lam[k_best], f[k_best],
                                                    lam[k_best - 1], f[k_best - 1],
                                                    lam[k_best + 1], f[k_best + 1]);
        for (int it = 0; rc == GSL_SUCCESS && it < MIX_MAX_ITER; it++) {
            rc = gsl_min_fminimizer_iterate(g);
            if (rc != GSL_SUCCESS)
                break;
            double l = gsl_min_fminimizer_x_lower(g), u = gsl_min_fminimizer_x_upper(g);
            if (gsl_min_test_interval(l, u, MIX_TOL, 0.0) == GSL_SUCCESS)
                break;
        }
        if (rc == GSL_SUCCESS && gsl_min_fminimizer_f_minimum(g) < value) {
            lambda = gsl_min_fminimizer_x_minimum(g);
            value = gsl_min_fminimizer_f_minimum(g);
        }
        gsl_min_fminimizer_free(g);
        if (m.st != QC_OK)
            return m.st;
    }
    /* recompute at the chosen λ: the scratch holds the last evaluation */
    value = neg_mi(lambda, &m);
    if (m.st != QC_OK)
        return m.st;
    if (meets(scratch, &costs[0], n) && meets(scratch, &costs[1], n) && -value > *best) {
        *best = -value;
        memcpy(out, scratch, n * sizeof *out);
    }
    return QC_OK;
}

typedef struct {
    const qc_dmc *dmc;
    const qc_ba_options *base;
    qc_ba_workspace *ws;
    qc_costs_result *res;
    double upper;         /* nats: best certified upper bound */
    double *combined;     /* nx: the combined cost */
} runner;

/* One engine run with the cost w0·c_1 + w1·c_2 (the costs present) and
 * budget w0·β_1 + w1·β_2, or without cost when ncosts is 0; the law goes
 * to `law`, the certified bound and its multipliers into r. */
static qc_status run(runner *r, const qc_cost *costs, size_t ncosts, double w0, double w1,
                     double *law)
{
    const size_t n = r->dmc->nx;
    qc_ba_options opt = *r->base;
    opt.costs = NULL;
    if (ncosts > 0) {
        /* the engine takes costs ≥ 0: shift the cost and the budget by the
         * smallest cost (Σ r = 1 leaves the constraint unchanged) */
        double least = INFINITY;
        for (size_t x = 0; x < n; x++) {
            r->combined[x] = w0 * costs[0].costs[x] + (ncosts > 1 ? w1 * costs[1].costs[x] : 0.0);
            least = fmin(least, r->combined[x]);
        }
        for (size_t x = 0; x < n; x++)
            r->combined[x] = fmax(r->combined[x] - least, 0.0);
        opt.costs = r->combined;
        opt.budget = w0 * costs[0].budget + (ncosts > 1 ? w1 * costs[1].budget : 0.0) - least;
    }
    qc_capacity_result cr;
    memset(&cr, 0, sizeof cr);
    qc_status st = qc_capacity(r->dmc, &opt, r->ws, &cr, law);
    r->res->iterations += cr.iterations;
    r->res->engine_runs++;
    if (st != QC_OK && st != QC_ENOCONV)
        return st;
    double u = cr.upper_bound_bits / QC_LOG2E;
    if (u < r->upper) {
        r->upper = u;
        double s = ncosts > 0 && cr.cost_active ? cr.multiplier : 0.0;
        r->res->multiplier[0] = w0 * s;
        r->res->multiplier[1] = w1 * s;
    }
    return st;
}

qc_status qc_capacity_costs(const qc_dmc *dmc, const qc_ba_options *opt_in,
                            const qc_cost *costs, size_t ncosts, qc_ba_workspace *ws,
                            qc_costs_result *res, double *input_out)
{
    qc_gsl_init();
    memset(res, 0, sizeof *res);
    if (!dmc)
        return qc_fail(QC_EINVAL, "no channel given");
    if (ncosts > 2)
        return qc_fail(QC_EINVAL, "at most 2 average costs are supported (got %zu)", ncosts);
    qc_status st = qc_dmc_check(dmc);
    if (st != QC_OK)
        return st;
    const size_t n = dmc->nx;
    for (size_t k = 0; k < ncosts; k++) {
        if (!costs[k].costs)
            return qc_fail(QC_EINVAL, "cost %zu: no per-input costs given", k + 1);
        if (!isfinite(costs[k].budget))
            return qc_fail(QC_EINVAL, "cost %zu: budget %g is not finite", k + 1,
                           costs[k].budget);
        double least = INFINITY;
        for (size_t x = 0; x < n; x++) {
            if (!isfinite(costs[k].costs[x]))
                return qc_fail(QC_EINVAL, "cost %zu: value for input %zu is not finite",
                               k + 1, x + 1);
            least = fmin(least, costs[k].costs[x]);
        }
        if (least > costs[k].budget + slack(&costs[k]))
            return qc_fail(QC_EINFEASIBLE,
                           "cost %zu: budget %g is below the cheapest input's cost %g", k + 1,
                           costs[k].budget, least);
    }
    qc_ba_options base;
    if (opt_in)
        base = *opt_in;
    else
        qc_ba_options_default(&base);
    base.costs = NULL;
    /* the engine starts from a strictly positive law: blend a given start
     * (often the previous optimum, with zeros) with the uniform law */
    double *start = qc_malloc_array(n, sizeof *start);
    if (!start)
        return qc_fail(QC_ENOMEM, "out of memory");
    for (size_t x = 0; x < n; x++)
        start[x] = (base.initial ? (1.0 - START_BLEND) * base.initial[x] : 0.0) +
                   (base.initial ? START_BLEND : 1.0) / (double)n;
    base.initial = start;
    const double tol = (base.tol_bits > 0.0 ? base.tol_bits : 1e-9) / QC_LOG2E;

    qc_ba_workspace *own = NULL; /* one workspace for every run */
    if (!ws) {
        if ((st = qc_ba_workspace_alloc(n, dmc->ny, &own)) != QC_OK) {
            free(start);
            return st;
        }
        ws = own;
    }
    double *law = qc_malloc_array(n, sizeof *law), *lo = qc_malloc_array(n, sizeof *lo);
    double *hi = qc_malloc_array(n, sizeof *hi), *best_law = qc_malloc_array(n, sizeof *hi);
    double *scratch = qc_malloc_array(n, sizeof *scratch);
    double *ea = qc_malloc_array(n, sizeof *ea), *eb = qc_malloc_array(n, sizeof *eb);
    runner r = {dmc, &base, ws, res, INFINITY, qc_malloc_array(n, sizeof(double))};
    if (!law || !lo || !hi || !best_law || !scratch || !ea || !eb || !r.combined) {
        st = qc_fail(QC_ENOMEM, "out of memory");
        goto done;
    }
    double best = -INFINITY; /* nats: rate of the best law meeting every budget */
    int converged = 1;

    if (ncosts < 2) {
        st = run(&r, costs, ncosts, 1.0, 0.0, law);
        if (st != QC_OK && st != QC_ENOCONV)
            goto done;
        converged = st == QC_OK;
        memcpy(best_law, law, n * sizeof *law);
        st = qc_mutual_information(dmc, best_law, &best);
        goto report;
    }
    /* a witness law meeting both budgets, so a lower bound always exists */
    for (size_t x = 0; x < n; x++) {
        ea[x] = costs[0].costs[x] - costs[0].budget;
        eb[x] = costs[1].costs[x] - costs[1].budget;
    }
    size_t wi, wj;
    double lambda;
    if (!qc_two_cost_witness(ea, eb, n, &wi, &wj, &lambda)) {
        st = qc_fail(QC_EINFEASIBLE, "costs 1 and 2: no input law meets both budgets (%g, %g)",
                     costs[0].budget, costs[1].budget);
        goto done;
    }
    for (size_t x = 0; x < n; x++)
        best_law[x] = 0.0;
    best_law[wi] += lambda;
    best_law[wj] += 1.0 - lambda;
    if ((st = qc_mutual_information(dmc, best_law, &best)) != QC_OK)
        goto done;

    /* each constraint alone */
    for (int k = 0; k < 2; k++) {
        double *end = k == 0 ? lo : hi;
        st = run(&r, costs, 2, k == 0 ? 1.0 : 0.0, k == 0 ? 0.0 : 1.0, end);
        if (st != QC_OK && st != QC_ENOCONV)
            goto done;
        converged &= st == QC_OK;
        if (meets(end, &costs[1 - k], n)) {
            double mi;
            if ((st = qc_mutual_information(dmc, end, &mi)) != QC_OK)
                goto done;
            if (mi > best) {
                best = mi;
                memcpy(best_law, end, n * sizeof *end);
            }
            /* the single-constraint optimum is feasible: it is the answer */
            goto report_one;
        }
    }
    /* both bind: bisection on w */
    double w_lo = 0.0, w_hi = 1.0;
    st = best_mixture(dmc, costs, lo, hi, scratch, &best, best_law);
    for (int step = 0; st == QC_OK && step < BISECTION_STEPS && r.upper - best > tol; step++) {
        double w = 0.5 * (w_lo + w_hi);
        memcpy(law, lo, n * sizeof *law);
        st = run(&r, costs, 2, 1.0 - w, w, law);
        if (st != QC_OK && st != QC_ENOCONV)
            goto done;
        st = QC_OK;
        double d1 = excess(law, &costs[0], n), d2 = excess(law, &costs[1], n);
        if (d1 <= slack(&costs[0]) && d2 <= slack(&costs[1])) {
            double mi;
            if ((st = qc_mutual_information(dmc, law, &mi)) != QC_OK)
                goto done;
            if (mi > best) {
                best = mi;
                memcpy(best_law, law, n * sizeof *law);
            }
        }
        if (d2 - d1 > 0.0) {
            w_lo = w;
            memcpy(lo, law, n * sizeof *law);
        } else {
            w_hi = w;
            memcpy(hi, law, n * sizeof *law);
        }
        st = best_mixture(dmc, costs, lo, hi, scratch, &best, best_law);
    }
    if (st != QC_OK)
        goto done;
    converged = r.upper - best <= tol;
    goto report;
report_one:
    converged = converged && r.upper - best <= tol;
report:
    if (st != QC_OK)
        goto done;
    res->capacity_bits = best * QC_LOG2E;
    res->upper_bound_bits = fmax(r.upper, best) * QC_LOG2E;
    res->gap_bits = res->upper_bound_bits - res->capacity_bits;
    for (size_t k = 0; k < ncosts; k++)
        res->cost[k] = excess(best_law, &costs[k], n) + costs[k].budget;
    if (input_out)
        memcpy(input_out, best_law, n * sizeof *best_law);
    if (!converged)
        st = qc_fail(QC_ENOCONV,
                     "two-cost capacity: gap %.3g bit above the tolerance %.3g bit after %d "
                     "bisection steps",
                     res->gap_bits, tol * QC_LOG2E, BISECTION_STEPS);
done:
    qc_ba_workspace_free(own);
    free(start);
    free(law);
    free(lo);
    free(hi);
    free(best_law);
    free(scratch);
    free(ea);
    free(eb);
    free(r.combined);
    return st;
}

int qc_two_cost_witness(const double *a, const double *b, size_t n, size_t *wi, size_t *wj,
                        double *lambda)
{
    for (size_t i = 0; i < n; i++)
        if (a[i] <= 0.0 && b[i] <= 0.0) {
            *wi = *wj = i;
            *lambda = 1.0;
            return 1;
        }
    for (size_t i = 0; i < n; i++) {
        if (!(a[i] <= 0.0)) /* i meets a, misses b */
            continue;
        for (size_t j = 0; j < n; j++) {
            if (!(b[j] <= 0.0)) /* j meets b, misses a */
                continue;
            /* λ a_i + (1−λ) a_j ≤ 0 ⇔ λ ≥ a_j/(a_j − a_i);
             * λ b_i + (1−λ) b_j ≤ 0 ⇔ λ ≤ −b_j/(b_i − b_j) */
            double lo = a[j] / (a[j] - a[i]), hi = -b[j] / (b[i] - b[j]);
            if (lo <= hi) {
                *wi = i;
                *wj = j;
                *lambda = 0.5 * (lo + hi);
                return 1;
            }
        }
    }
    return 0;
}
