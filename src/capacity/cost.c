/* cost.c — capacity under an average input cost, C(β) = max I(r) over
 * laws with Σ r c ≤ β, by a Lagrange multiplier on the cost (R. E.
 * Blahut, "Computation of channel capacity and rate-distortion
 * functions", IEEE Trans. IT 18(4), 1972).
 *
 * For s ≥ 0 the cost-tilted Blahut–Arimoto iteration (scores
 * D_x − s·c_x) converges to a law r_s maximizing I(r) − s·Σ r c; its
 * average cost is non-increasing in s. The multiplier meeting the
 * budget is found by bracketing and GSL's Brent solver on
 * s ↦ Σ r_s c − β. If that function jumps across β (C(β) has a linear
 * piece), the laws at the two ends of the final bracket are mixed so
 * that the cost is exactly β; I is concave, so the mixture keeps the
 * rate.
 *
 * Certificate: for any s ≥ 0 and any output law q = rP,
 *     C(β) ≤ max_x [D(P(·|x) ‖ q) − s·c_x] + s·β,
 * so every tilted run yields an upper bound, and at the final law the
 * tightest s is found exactly (a convex piecewise-linear function of
 * s). The lower bound is I(r) at the final law, which meets the
 * budget.
 *
 * With 32 inputs or more (and elimination on), the active-set solve of
 * cost_newton.c runs first; the same certificate is then formed from
 * its law, and the search here runs only when that solve does not
 * certify. */
#include "capacity/engine.h"

#include <math.h>
#include <string.h>

#include <gsl/gsl_errno.h>
#include <gsl/gsl_roots.h>

/* The search has two phases. A coarse one (runs stopped at a gap of
 * COARSE_TOL nats) locates the multiplier until the cost is within
 * COARSE_RTOL·β of the budget; a fine one (runs at half the caller's
 * tolerance, warm-started from the coarse laws) brackets it again from
 * FINE_STEP relative steps and ends when a law is within SEARCH_RTOL·β
 * of the budget or the bracket is S_RTOL wide. The final mix then puts
 * the cost at β up to rounding. */
#define COARSE_TOL 1e-6
#define COARSE_RTOL 1e-4
#define COARSE_S_RTOL 1e-6
#define FINE_STEP 1e-6
#define SEARCH_RTOL 1e-10
#define S_RTOL 1e-10
#define MAX_SEARCH_STEPS 200
#define MAX_BRACKET_STEPS 60
/* Weight of the uniform law mixed into a warm start, so that every
 * run starts strictly positive as the method requires, without undoing
 * the convergence of the law it starts from. */
#define WARM_UNIFORM 1e-9
/* Tilt that drives inputs costing more than the budget below e^-800
 * when the budget equals the cheapest cost. */
#define EXCLUDE_NATS 800.0

typedef struct {
    qc_ba_workspace *ws;
    const qc_ba_options *opt;
    double tol;          /* tolerance of the runs in this phase, nats  */
    double target;       /* |Σ r c − β| that ends the phase            */
    double s_rtol;       /* relative bracket width that ends the phase */
    size_t used;         /* iterations spent so far                    */
    double bound;        /* best certified upper bound on C(β), nats   */
    /* bracket: s_lo has cost above β (law ws->r_lo), s_hi at or below
     * β (law ws->r_hi) */
    double s_lo, cost_lo, s_hi, cost_hi;
    int have_lo, have_hi;
    double last_s, last_cost; /* most recent run                        */
    qc_status status;    /* first failure of a run                     */
} search;

/* Warm start: the law stored at the bracket end nearest to s, mixed
 * with a little of the uniform law. */
static void warm_start(search *se, double s)
{
    qc_ba_workspace *ws = se->ws;
    const double *from = ws->r_lo;
    if (se->have_hi && (!se->have_lo || fabs(s - se->s_hi) < fabs(s - se->s_lo)))
        from = ws->r_hi;
    double u = 1.0 / (double)ws->nx;
    for (size_t x = 0; x < ws->nx; x++)
        ws->r[x] = (1.0 - WARM_UNIFORM) * from[x] + WARM_UNIFORM * u;
}

/* One tilted run at multiplier s from the current ws->r; records the
 * bound and the bracket. Returns Σ r c − β, or NAN after a failure
 * (then se->status is set). */
static double run_at(search *se, double s)
{
    qc_ba_workspace *ws = se->ws;
    const qc_ba_options *opt = se->opt;
    if (se->status != QC_OK)
        return NAN;
    if (se->used >= opt->max_iterations) {
        se->status = QC_ENOCONV;
        return NAN;
    }
    ba_tilt tilt = {opt->costs, s, opt->budget};
    ba_outcome o;
    ba_solve(ws, &tilt, se->tol, opt->method, opt->max_iterations - se->used, opt->prune,
             &o);
    se->used += o.iterations;
    if (o.failed) {
        se->status = qc_fail(QC_ENUMERIC,
                             "capacity-cost: non-finite bound at multiplier %.17g", s);
        return NAN;
    }
    if (o.upper < se->bound)
        se->bound = o.upper;
    double f = o.cost - opt->budget;
    if (f > 0.0) {
        if (!se->have_lo || s >= se->s_lo) {
            se->s_lo = s;
            se->cost_lo = o.cost;
            se->have_lo = 1;
            memcpy(ws->r_lo, ws->r, ws->nx * sizeof *ws->r);
        }
    } else if (!se->have_hi || s <= se->s_hi) {
        se->s_hi = s;
        se->cost_hi = o.cost;
        se->have_hi = 1;
        memcpy(ws->r_hi, ws->r, ws->nx * sizeof *ws->r);
    }
    se->last_s = s;
    se->last_cost = o.cost;
    if (!o.converged)
        se->status = QC_ENOCONV;
    return f;
}

/* GSL callback: the bracket ends are already known; other points run. */
static double excess_cost(double s, void *p)
{
    search *se = p;
    if (se->have_lo && s == se->s_lo)
        return se->cost_lo - se->opt->budget;
    if (se->have_hi && s == se->s_hi)
        return se->cost_hi - se->opt->budget;
    warm_start(se, s);
    return run_at(se, s);
}

/* Brent's method on the bracket [s_lo, s_hi] until a law meets the
 * budget to se->target or the bracket is se->s_rtol wide. */
static qc_status refine_multiplier(search *se)
{
    gsl_root_fsolver *solver = gsl_root_fsolver_alloc(gsl_root_fsolver_brent);
    if (!solver)
        return qc_fail(QC_ENOMEM, "capacity-cost: cannot allocate the root solver");
    gsl_function fn = {excess_cost, se};
    qc_status st = QC_OK;
    int rc = gsl_root_fsolver_set(solver, &fn, se->s_lo, se->s_hi);
    for (int i = 0; rc == GSL_SUCCESS && i < MAX_SEARCH_STEPS; i++) {
        if (fabs(se->last_cost - se->opt->budget) <= se->target ||
            se->s_hi - se->s_lo <= se->s_rtol * se->s_hi)
            break;
        rc = gsl_root_fsolver_iterate(solver);
        if (se->status != QC_OK)
            break;
    }
    if (se->status == QC_OK && rc != GSL_SUCCESS)
        st = qc_fail(QC_ENUMERIC, "capacity-cost: multiplier search failed: %s",
                     gsl_strerror(rc));
    gsl_root_fsolver_free(solver);
    return st;
}

/* One phase of the multiplier search: run at s (law already in ws->r),
 * then step away from s by relative offsets d0, 4·d0, 16·d0, ... in the
 * direction of the budget until the cost crosses it, then Brent.
 * Steps up stop growing at s_max, past which only rounding can keep the
 * cost above β. */
static qc_status locate(search *se, double s, double d0, double s_max)
{
    const double beta = se->opt->budget;
    const double s0 = s;
    double f = run_at(se, s0), d = d0;
    int up = f > 0.0;
    for (int k = 0; k < MAX_BRACKET_STEPS && se->status == QC_OK; k++) {
        if (fabs(f) <= se->target || (up ? f <= 0.0 : f > 0.0))
            break;
        double next = up ? s0 * (1.0 + d) : s0 / (1.0 + d);
        if (up && next > s_max)
            next = s >= s_max ? 2.0 * s : s_max;
        s = next;
        d *= 4.0;
        warm_start(se, s);
        f = run_at(se, s);
    }
    if (se->status != QC_OK || fabs(f) <= se->target)
        return QC_OK;
    if (!se->have_hi)
        return qc_fail(QC_ENUMERIC,
                       "capacity-cost: no multiplier up to %.3g brings the cost "
                       "down to the budget %.17g",
                       s, beta);
    if (!se->have_lo)
        return QC_OK;
    return refine_multiplier(se);
}

/* The final law: the last run's if its cost is within se->target of
 * β, else the mixture of the two bracket ends with cost exactly β.
 * Returns the multiplier it belongs to. */
static double final_law(search *se)
{
    qc_ba_workspace *ws = se->ws;
    const double beta = se->opt->budget;
    if (se->have_hi && se->last_s == se->s_hi &&
        fabs(se->cost_hi - beta) <= se->target) {
        memcpy(ws->r, ws->r_hi, ws->nx * sizeof *ws->r);
        return se->s_hi;
    }
    if (se->have_lo && se->last_s == se->s_lo &&
        fabs(se->cost_lo - beta) <= se->target) {
        /* a hair above β: enforce_budget moves the excess */
        memcpy(ws->r, ws->r_lo, ws->nx * sizeof *ws->r);
        return se->s_lo;
    }
    if (!se->have_lo || !se->have_hi) {
        /* one side only (the search stopped early): its law, which
         * enforce_budget brings within the budget if needed */
        memcpy(ws->r, se->have_hi ? ws->r_hi : ws->r_lo, ws->nx * sizeof *ws->r);
        return se->have_hi ? se->s_hi : se->s_lo;
    }
    double theta = (beta - se->cost_hi) / (se->cost_lo - se->cost_hi);
    theta = fmin(1.0, fmax(0.0, theta));
    for (size_t x = 0; x < ws->nx; x++)
        ws->r[x] = theta * ws->r_lo[x] + (1.0 - theta) * ws->r_hi[x];
    return theta * se->s_lo + (1.0 - theta) * se->s_hi;
}

/* If rounding left Σ r c above β, move the excess onto the cheapest
 * input: r ← (1 − η) r + η·e_cheapest with Σ r c = β afterwards. */
static void enforce_budget(qc_ba_workspace *ws, const double *c, double beta,
                           size_t cheapest, double cost)
{
    if (cost <= beta)
        return;
    double eta = (cost - beta) / (cost - c[cheapest]);
    for (size_t x = 0; x < ws->nx; x++)
        ws->r[x] *= 1.0 - eta;
    ws->r[cheapest] += eta;
}

static void fill_result(qc_capacity_result *res, double mi, double upper,
                        size_t iterations, int active, double cost, double s)
{
    upper = fmax(upper, mi);
    res->capacity_bits = mi * QC_LOG2E;
    res->upper_bound_bits = upper * QC_LOG2E;
    res->gap_bits = res->upper_bound_bits - res->capacity_bits;
    res->iterations = iterations;
    res->cost_active = active;
    res->cost = cost;
    res->multiplier = s;
}

/* The final law in ws->r with the budget active: exact I, cost within
 * the budget, the tightest multiplier over every input; `bound` is an
 * upper bound found on the way, `status` QC_ENOCONV when the search
 * stopped at the iteration limit. */
static qc_status certify(qc_ba_workspace *ws, const qc_ba_options *opt, size_t cheapest,
                         double s_final, double bound, size_t used, qc_status status,
                         qc_capacity_result *res)
{
    const double *c = opt->costs, beta = opt->budget;
    ba_tilt final_tilt = {c, s_final, beta};
    ba_outcome o = {.upper = INFINITY};
    ba_evaluate(ws, &final_tilt, &o);
    if (o.cost > beta) {
        enforce_budget(ws, c, beta, cheapest, o.cost);
        ba_evaluate(ws, &final_tilt, &o);
    }
    double s_dual;
    double upper = fmin(bound, ba_dual_bound(ws->d, c, beta, ws->nx, &s_dual));
    /* Report the multiplier that certifies the bound at the final law:
     * it is the slope of C(β) to the accuracy of that law, while the
     * search's s is only known to the resolution of the cost. */
    fill_result(res, o.mi, upper, used, 1, o.cost, s_dual);
    if (status == QC_ENOCONV)
        return qc_fail(QC_ENOCONV,
                       "capacity-cost: iteration limit %zu reached with bounds "
                       "%.12g <= C <= %.12g bits at cost %.12g (budget %.12g)",
                       opt->max_iterations, res->capacity_bits,
                       res->upper_bound_bits, res->cost, beta);
    if (res->gap_bits > opt->tol_bits)
        return qc_fail(QC_ENOCONV,
                       "capacity-cost: certified gap %.3g bits above the "
                       "tolerance %.3g (bounds %.12g <= C <= %.12g)",
                       res->gap_bits, opt->tol_bits, res->capacity_bits,
                       res->upper_bound_bits);
    return QC_OK;
}

qc_status ba_capacity_cost(qc_ba_workspace *ws, const qc_ba_options *opt,
                           qc_capacity_result *res)
{
    const size_t nx = ws->nx;
    const double *c = opt->costs, beta = opt->budget;
    size_t cheapest = 0;
    for (size_t x = 1; x < nx; x++)
        if (c[x] < c[cheapest])
            cheapest = x;
    const double cmin = c[cheapest];
    if (beta < cmin)
        return qc_fail(QC_EINFEASIBLE,
                       "budget %.17g is below the cheapest input's cost %.17g "
                       "(input %zu)",
                       beta, cmin, cheapest + 1);

    const double tol = opt->tol_bits / QC_LOG2E;
    size_t newton_steps = 0;
    if (opt->prune && nx >= BA_PRUNE_MIN_INPUTS && beta > cmin) {
        /* Many candidates: the active-set solve (cost_newton.c) first;
         * if it does not certify, the search below runs from the same
         * start as if it had not been tried. */
        memcpy(ws->r_hi, ws->r, nx * sizeof *ws->r);
        ba_newton_result nr;
        if (ba_cost_newton(ws, c, beta, cheapest, tol, opt->max_iterations, &nr)) {
            /* the certificate is formed afresh from the law's scores over
             * every input; nothing the solve computed is taken on trust */
            if (nr.active)
                return certify(ws, opt, cheapest, nr.multiplier, INFINITY, nr.steps, QC_OK,
                               res);
            ba_tilt free_tilt = {c, 0.0, beta};
            ba_outcome fo = {.upper = INFINITY};
            ba_evaluate(ws, &free_tilt, &fo);
            if (!fo.failed && fo.cost <= beta && fo.upper - fo.mi <= tol) {
                fill_result(res, fo.mi, fo.upper, nr.steps, 0, fo.cost, 0.0);
                return QC_OK;
            }
        }
        newton_steps = nr.steps;
        memcpy(ws->r, ws->r_hi, nx * sizeof *ws->r);
    }
    search se = {.ws = ws, .opt = opt, .tol = 0.5 * tol, .bound = INFINITY,
                 .target = SEARCH_RTOL * beta, .s_rtol = S_RTOL, .status = QC_OK};

    /* Unconstrained capacity first: if its law meets the budget, the
     * constraint is inactive. */
    ba_tilt free_tilt = {c, 0.0, beta};
    ba_outcome o;
    ba_solve(ws, &free_tilt, tol, opt->method, opt->max_iterations - newton_steps, opt->prune,
             &o);
    se.used = o.iterations + newton_steps;
    if (o.failed)
        return qc_fail(QC_ENUMERIC, "Blahut-Arimoto produced a non-finite bound");
    se.bound = o.upper;
    if (o.cost <= beta || o.upper <= tol) {
        /* Inactive, or the channel carries nothing (then the cheapest
         * input alone is as good as any law). */
        if (o.cost > beta) {
            memset(ws->r, 0, nx * sizeof *ws->r);
            ws->r[cheapest] = 1.0;
            ba_evaluate(ws, &free_tilt, &o);
        }
        fill_result(res, o.mi, se.bound, se.used, 0, o.cost, 0.0);
        if (!o.converged)
            return qc_fail(QC_ENOCONV,
                           "Blahut-Arimoto stopped at the iteration limit %zu "
                           "with bounds %.12g <= C <= %.12g bits",
                           opt->max_iterations, res->capacity_bits,
                           res->upper_bound_bits);
        return QC_OK;
    }
    se.s_lo = 0.0;
    se.cost_lo = o.cost;
    se.have_lo = 1;
    memcpy(ws->r_lo, ws->r, nx * sizeof *ws->r);

    qc_status st = QC_OK;
    double s_final = 0.0;
    if (!o.converged) {
        se.status = QC_ENOCONV; /* no iterations left for the search */
    } else if (beta == cmin) {
        /* Only the cheapest inputs are allowed: tilt the others out. */
        double gap = INFINITY;
        for (size_t x = 0; x < nx; x++)
            if (c[x] > beta)
                gap = fmin(gap, c[x] - beta);
        double s_big = fmin(EXCLUDE_NATS / gap, 1e300);
        for (size_t x = 0; x < nx; x++)
            ws->r[x] = 1.0 / (double)nx;
        run_at(&se, s_big); /* leaves its law in ws->r */
        s_final = s_big;
    } else {
        /* C(β) is concave with C(c_min) ≥ 0, so the multiplier (its
         * slope at β) is at most s_max = C/(β − c_min). First guess: the
         * slope of the chord from (c_min, 0) to the unconstrained
         * optimum. */
        double s_max = fmin(o.upper / (beta - cmin), 1e300);
        double s = fmin(o.upper / (o.cost - cmin), s_max);
        const double fine_tol = se.tol;
        if (fine_tol < COARSE_TOL) {
            se.tol = COARSE_TOL;
            se.target = COARSE_RTOL * beta;
            se.s_rtol = COARSE_S_RTOL;
            st = locate(&se, s, 3.0, s_max);
            s = se.last_s;
            /* the fine phase starts from the coarse law nearest s */
            warm_start(&se, s);
            se.have_lo = se.have_hi = 0;
        } else {
            warm_start(&se, s);
        }
        se.tol = fine_tol;
        se.target = SEARCH_RTOL * beta;
        se.s_rtol = S_RTOL;
        if (st == QC_OK && se.status == QC_OK)
            st = locate(&se, s, fine_tol < COARSE_TOL ? FINE_STEP : 3.0, s_max);
        if (st == QC_OK && (se.have_hi || se.have_lo))
            s_final = final_law(&se);
    }
    if (st != QC_OK)
        return st;
    if (se.status == QC_ENUMERIC)
        return se.status;

    return certify(ws, opt, cheapest, s_final, se.bound, se.used, se.status, res);
}
