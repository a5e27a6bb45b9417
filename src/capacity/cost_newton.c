/* cost_newton.c — capacity under one average cost, or without one, on
 * many candidate inputs (a fine level grid, a large alphabet), solved on
 * a small active set by Newton steps and priced over every input.
 *
 * The problem max I(r) over laws r with Σ r = 1 and Σ r c = β (the
 * budget binds) has an optimal output law q* that is unique, and the
 * optimal laws are the laws r ≥ 0 with rP = q*, Σ r c = β that put mass
 * only where the tilted score D(P(·|x) ‖ q*) − s·c_x is largest
 * (Kuhn–Tucker: R. E. Blahut, IEEE Trans. IT 18(4), 1972, Thm 9). Those
 * laws form a polytope {r ≥ 0 : Ar = b} cut out by ny + 1 linear
 * equations, so one of its vertices (a basic feasible point: J. Nocedal
 * and S. J. Wright, Numerical Optimization, 2nd ed., Springer 2006,
 * ch. 13) has at most ny + 1 mass points: with K output cells, at most
 * K + 1 of the candidates carry mass (for the quantized Gaussian
 * channel: J. Singh, O. Dabeer and U. Madhow, IEEE Trans. Commun.
 * 57(12), 2009).
 *
 * The method is a primal active-set method (Nocedal and Wright, ch. 16)
 * on the concave objective: on the active set S, one Newton step of the
 * equality-constrained problem (gradient D_x, Hessian −Σ_y P(y|x)P(y|z)
 * / q(y), the constraints Σ r = 1 and Σ r c = β as a bordered system,
 * solved by GSL's LU), cut back to stay in r ≥ 0 (an input that reaches
 * 0 leaves S) and by backtracking until I rises. The Lagrange
 * multipliers of the step price every candidate outside S (one pass
 * over the matrix): when Newton has converged on S the best-scoring
 * candidate with a positive reduced score joins S — column generation
 * (G. B. Dantzig and P. Wolfe, Oper. Res. 8(1), 1960) with an exact
 * restricted problem instead of Blahut–Arimoto runs.
 *
 * Nothing here is trusted: the law found is a law on all inputs that
 * meets the budget, so I(r) is a lower bound, and the dual bound
 * min_{s ≥ 0} max_x [D(P(·|x) ‖ rP) − s·(c_x − β)] over every input,
 * which the caller forms again from the final law, is the upper bound.
 * The method reports success only when that gap is below a small
 * fraction of the tolerance; otherwise
 * the caller runs its multiplier search as if this had not been tried.
 * If the multiplier comes out negative (the budget does not bind on the
 * optimum), the cost constraint is dropped and the same steps solve the
 * unconstrained problem; its law must then meet the budget.
 *
 * Without a cost (ba_newton_free) the same steps run with the one
 * constraint Σ r = 1 from a flat start (the input of largest score) or a
 * warm one. An input that reaches an output no input of S reaches (its
 * score is infinite, its curvature undefined) or whose reduced score is
 * huge joins S by a mixing step r ← (1 − η)r + η·e_x, η = ½, ¼, … until
 * I rises (a Frank–Wolfe step: M. Frank and P. Wolfe, Naval Res. Logist.
 * Q. 3, 1956), and the upper bound is max_x D(P(·|x) ‖ rP) over every
 * input, formed again by the caller. */
#include "capacity/engine.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include <gsl/gsl_linalg.h>

/* Newton steps (each one pass over the matrix) before giving up:
 * STEPS_BASE + STEPS_PER_OUTPUT·ny (from a flat start every one of the
 * up to ny + 1 mass points has to be found and moved into place). */
#define STEPS_BASE 200
#define STEPS_PER_OUTPUT 50
/* Success: certified gap below this fraction of the tolerance. */
#define GAP_FRACTION 1e-2
/* Relative ridge on the Hessian, so that the bordered system stays
 * solvable when the active set holds more than ny + 1 inputs or two
 * nearly equal rows (the step then moves along the flat direction until
 * an input leaves the set). */
#define RIDGE 1e-12
/* An input that joins S and leaves it again without a rise of I is a
 * stall (two inputs with nearly equal rows); after this many in a row
 * the law is certified if its gap is within STALL_FRACTION of the
 * tolerance. */
#define MAX_STALLS 3
#define STALL_FRACTION 0.5
/* Rounding allowance of the rise test, relative to I. */
#define ROUND_REL 4e-16
/* Sufficient increase of the backtracking search (Armijo). */
#define ARMIJO 1e-4
#define MAX_HALVINGS 40
/* Masses below this share of the largest count as the blend of the
 * uniform law a warm start carries, not as support. */
#define SUPPORT_REL 1e-2
/* Without a cost, an input whose reduced score exceeds this (nats) joins
 * S by a mixing step rather than at zero mass. */
#define MIX_SCORE 1.0
/* Active sets larger than ny + SET_SLACK: give up. */
#define SET_SLACK 8

typedef struct {
    qc_ba_workspace *ws;
    const double *c;
    double beta;
    int with_cost;   /* the constraint Σ r c = β is imposed */
    size_t *set;     /* the active set S                    */
    size_t k, cap;   /* its size and the most it may hold   */
    char *in_set;    /* nx: membership                      */
    double *delta;   /* cap: the Newton step on S           */
    double *r_save;  /* cap: the law on S before a step     */
    gsl_matrix *kkt;
    gsl_vector *rhs, *sol;
    gsl_permutation *perm;
    double *cols;    /* scratch of ba_curvature_matrix, and its     */
    size_t cols_len; /* allocated length                           */
} active_set;

/* The cost of input x (0 without a cost). */
static double cost_of(const active_set *as, size_t x) { return as->c ? as->c[x] : 0.0; }

static void add_input(active_set *as, size_t x)
{
    as->set[as->k++] = x;
    as->in_set[x] = 1;
}

static void drop_input(active_set *as, size_t i)
{
    size_t x = as->set[i];
    as->in_set[x] = 0;
    as->ws->r[x] = 0.0;
    as->set[i] = as->set[--as->k];
}

/* The Newton step on S at the law whose scores ws->d holds: solves
 *   M Δ + ν1·1 + ν2·c = d_S,  Σ Δ = 1 − Σ r,  Σ c Δ = β − Σ r c
 * (the last row only with the cost). 0 when it cannot be formed. */
static int newton_step(active_set *as, double *nu1, double *nu2)
{
    qc_ba_workspace *ws = as->ws;
    const size_t k = as->k, m = k + (as->with_cost ? 2 : 1);
    gsl_matrix_view a = gsl_matrix_submatrix(as->kkt, 0, 0, m, m);
    gsl_vector_view b = gsl_vector_subvector(as->rhs, 0, m);
    gsl_vector_view s = gsl_vector_subvector(as->sol, 0, m);
    gsl_permutation perm = {m, as->perm->data};
    int bad = 0;
    double diag = 0.0, mass = 0.0, cost = 0.0;
    ba_curvature_matrix(ws, as->set, k, &as->cols, &as->cols_len, &a.matrix, &bad);
    for (size_t i = 0; i < k; i++) {
        for (size_t j = 0; j < i; j++)
            gsl_matrix_set(&a.matrix, j, i, gsl_matrix_get(&a.matrix, i, j));
        diag = fmax(diag, gsl_matrix_get(&a.matrix, i, i));
    }
    if (bad || !(diag > 0.0) || !isfinite(diag))
        return 0;
    for (size_t i = 0; i < k; i++) {
        size_t x = as->set[i];
        *gsl_matrix_ptr(&a.matrix, i, i) += RIDGE * diag;
        gsl_matrix_set(&a.matrix, i, k, 1.0);
        gsl_matrix_set(&a.matrix, k, i, 1.0);
        gsl_vector_set(&b.vector, i, ws->d[x]);
        mass += ws->r[x];
        if (as->with_cost) {
            gsl_matrix_set(&a.matrix, i, k + 1, as->c[x]);
            gsl_matrix_set(&a.matrix, k + 1, i, as->c[x]);
            cost += ws->r[x] * as->c[x];
        }
    }
    for (size_t i = k; i < m; i++)
        for (size_t j = k; j < m; j++)
            gsl_matrix_set(&a.matrix, i, j, 0.0);
    gsl_vector_set(&b.vector, k, 1.0 - mass);
    if (as->with_cost)
        gsl_vector_set(&b.vector, k + 1, as->beta - cost);
    int signum;
    if (gsl_linalg_LU_decomp(&a.matrix, &perm, &signum) != GSL_SUCCESS)
        return 0;
    for (size_t i = 0; i < m; i++)
        if (gsl_matrix_get(&a.matrix, i, i) == 0.0)
            return 0;
    if (gsl_linalg_LU_solve(&a.matrix, &perm, &b.vector, &s.vector) != GSL_SUCCESS)
        return 0;
    for (size_t i = 0; i < m; i++)
        if (!isfinite(gsl_vector_get(&s.vector, i)))
            return 0;
    for (size_t i = 0; i < k; i++)
        as->delta[i] = gsl_vector_get(&s.vector, i);
    *nu1 = gsl_vector_get(&s.vector, k);
    *nu2 = as->with_cost ? gsl_vector_get(&s.vector, k + 1) : 0.0;
    return 1;
}

/* The outcome of the law in ws->r, afresh. */
static void rate_law(qc_ba_workspace *ws, const ba_tilt *tilt, ba_outcome *o)
{
    o->upper = INFINITY;
    o->failed = 0;
    ba_evaluate(ws, tilt, o);
}

/* The law on S saved in r_save back in ws->r, and its outcome. */
static void restore_law(active_set *as, const ba_tilt *tilt, ba_outcome *o)
{
    for (size_t i = 0; i < as->k; i++)
        as->ws->r[as->set[i]] = as->r_save[i];
    rate_law(as->ws, tilt, o);
}

/* Move along the step, as far as r ≥ 0 allows, halving until I rises
 * by the Armijo fraction of the predicted rise; ws holds the scores of
 * the new law. 0 when no step raised I (then the old law is back). */
static int line_search(active_set *as, const ba_tilt *tilt, ba_outcome *o, double pred)
{
    qc_ba_workspace *ws = as->ws;
    double alpha = 1.0;
    size_t blocking = as->k;
    for (size_t i = 0; i < as->k; i++) {
        double r = ws->r[as->set[i]];
        as->r_save[i] = r;
        if (as->delta[i] < 0.0 && r < -alpha * as->delta[i]) {
            alpha = r / -as->delta[i];
            blocking = i;
        }
    }
    const double mi0 = o->mi;
    for (int h = 0; h <= MAX_HALVINGS; h++) {
        for (size_t i = 0; i < as->k; i++)
            ws->r[as->set[i]] = fmax(0.0, as->r_save[i] + alpha * as->delta[i]);
        if (blocking < as->k)
            ws->r[as->set[blocking]] = 0.0;
        rate_law(ws, tilt, o);
        if (!o->failed && o->mi >= mi0 + ARMIJO * alpha * pred - ROUND_REL * (1.0 + fabs(mi0))) {
            for (size_t i = as->k; i-- > 0;)
                if (!(ws->r[as->set[i]] > 0.0))
                    drop_input(as, i);
            return 1;
        }
        alpha *= 0.5;
        blocking = as->k;
    }
    restore_law(as, tilt, o);
    return 0;
}

/* The starting active set and a law on it meeting the budget exactly:
 * the clearly supported inputs of ws->r (a warm start), the cheapest
 * and the costliest input. */
static int start(active_set *as, size_t cheapest)
{
    qc_ba_workspace *ws = as->ws;
    const size_t nx = ws->nx;
    size_t costliest = 0;
    double rmax = 0.0;
    for (size_t x = 0; x < nx; x++) {
        rmax = fmax(rmax, ws->r[x]);
        if (as->c[x] > as->c[costliest])
            costliest = x;
    }
    if (!(as->c[costliest] > as->beta))
        return 0;
    double floor = SUPPORT_REL * rmax, rmin = INFINITY;
    for (size_t x = 0; x < nx; x++)
        rmin = fmin(rmin, ws->r[x]);
    if (!(rmin < floor))
        floor = INFINITY; /* a flat start (uniform) says nothing */
    for (size_t x = 0; x < nx; x++) {
        if (ws->r[x] >= floor && as->k + 2 < as->cap)
            add_input(as, x);
        else
            ws->r[x] = 0.0;
    }
    if (!as->in_set[cheapest]) {
        add_input(as, cheapest);
        ws->r[cheapest] = 0.0;
    }
    if (!as->in_set[costliest]) {
        add_input(as, costliest);
        ws->r[costliest] = 0.0;
    }
    double mass = 0.0, cost = 0.0;
    for (size_t i = 0; i < as->k; i++)
        mass += ws->r[as->set[i]];
    if (!(mass > 0.0)) {
        ws->r[cheapest] = 1.0;
        mass = 1.0;
    }
    for (size_t i = 0; i < as->k; i++) {
        ws->r[as->set[i]] /= mass;
        cost += ws->r[as->set[i]] * as->c[as->set[i]];
    }
    /* mix with the cheapest or the costliest input to meet β exactly */
    size_t to = cost > as->beta ? cheapest : costliest;
    double eta = (cost - as->beta) / (cost - as->c[to]);
    if (eta > 0.0 && eta <= 1.0) {
        for (size_t i = 0; i < as->k; i++)
            ws->r[as->set[i]] *= 1.0 - eta;
        ws->r[to] += eta;
    }
    return 1;
}

/* Without a cost: the clearly supported inputs of a warm start, else
 * (a flat start) the input of largest score at that law — column
 * generation adds the rest. */
static int start_free(active_set *as)
{
    qc_ba_workspace *ws = as->ws;
    const size_t nx = ws->nx;
    ba_tilt none = {NULL, 0.0, 0.0};
    ba_outcome o = {.upper = INFINITY};
    ba_evaluate(ws, &none, &o); /* the scores ws->d at the start */
    if (o.failed)
        return 0;
    double rmax = 0.0, rmin = INFINITY;
    size_t best = 0;
    for (size_t x = 0; x < nx; x++) {
        rmax = fmax(rmax, ws->r[x]);
        rmin = fmin(rmin, ws->r[x]);
        if (ws->d[x] > ws->d[best])
            best = x;
    }
    const double floor = rmin < SUPPORT_REL * rmax ? SUPPORT_REL * rmax : INFINITY;
    double mass = 0.0;
    for (size_t x = 0; x < nx; x++) {
        if (ws->r[x] >= floor && as->k < as->cap) {
            add_input(as, x);
            mass += ws->r[x];
        } else {
            ws->r[x] = 0.0;
        }
    }
    if (!(mass > 0.0)) {
        add_input(as, best);
        ws->r[best] = 1.0;
        mass = 1.0;
    }
    for (size_t i = 0; i < as->k; i++)
        ws->r[as->set[i]] /= mass;
    return 1;
}

static void release(active_set *as)
{
    free(as->set);
    free(as->in_set);
    free(as->delta);
    free(as->r_save);
    free(as->cols);
    gsl_matrix_free(as->kkt);
    gsl_vector_free(as->rhs);
    gsl_vector_free(as->sol);
    gsl_permutation_free(as->perm);
}

/* Whether every output that row x reaches has q > 0 (else the Newton
 * step cannot be formed with x in S: its curvature there is infinite). */
static int reaches_covered(const qc_ba_workspace *ws, size_t x)
{
    const double *px = ws->p + x * ws->ny;
    for (size_t y = ws->lo[x]; y < ws->hi[x]; y++)
        if (px[y] > 0.0 && !(ws->q[y] > 0.0))
            return 0;
    return 1;
}

/* Without a cost, an input that reaches outputs no input of S reaches
 * has an infinite slope D_x: it takes the share η of the law that
 * raises I (η = ½, ¼, …), as a Frank–Wolfe step would, so that the next
 * Newton step can be formed. 0 when no share raises I. */
static int mix_in(active_set *as, const ba_tilt *tilt, ba_outcome *o, size_t x)
{
    qc_ba_workspace *ws = as->ws;
    const double mi0 = o->mi;
    for (size_t i = 0; i < as->k; i++)
        as->r_save[i] = ws->r[as->set[i]];
    for (double eta = 0.5; eta > 1e-6; eta *= 0.5) {
        for (size_t i = 0; i < as->k; i++)
            ws->r[as->set[i]] = (1.0 - eta) * as->r_save[i];
        ws->r[x] += eta;
        rate_law(ws, tilt, o);
        if (!o->failed && o->mi > mi0)
            return 1;
    }
    restore_law(as, tilt, o);
    return 0;
}

/* Allocates the active set's arrays for ws (at most ny + SET_SLACK
 * inputs); 0 when out of memory. */
static int reserve(active_set *as)
{
    qc_ba_workspace *ws = as->ws;
    const size_t nx = ws->nx;
    as->cap = ws->ny + SET_SLACK < nx ? ws->ny + SET_SLACK : nx;
    const size_t dim = as->cap + 2;
    as->set = qc_malloc_array(as->cap, sizeof *as->set);
    as->in_set = calloc(nx, 1);
    as->delta = qc_malloc_array(as->cap, sizeof *as->delta);
    as->r_save = qc_malloc_array(as->cap, sizeof *as->r_save);
    as->kkt = gsl_matrix_alloc(dim, dim);
    as->rhs = gsl_vector_alloc(dim);
    as->sol = gsl_vector_alloc(dim);
    as->perm = gsl_permutation_alloc(dim);
    return as->set && as->in_set && as->delta && as->r_save && as->kkt && as->rhs &&
           as->sol && as->perm;
}

/* Newton steps and column generation from the law in ws->r on the
 * active set as->set (see the header); 1 with out filled when certified. */
static int solve(active_set *as, double tol_nats, size_t max_steps, ba_newton_result *out)
{
    qc_ba_workspace *ws = as->ws;
    const size_t nx = ws->nx;
    const double target = GAP_FRACTION * tol_nats, small = 0.5 * target;
    ba_tilt tilt = {as->c, 0.0, as->beta};
    ba_outcome o = {.upper = INFINITY};
    ba_evaluate(ws, &tilt, &o);
    size_t stalls = 0;
    double mi_added = -INFINITY; /* I when an input last joined S */
    const size_t cap_steps = STEPS_BASE + STEPS_PER_OUTPUT * ws->ny;
    for (size_t step = 0; step < max_steps && step < cap_steps && !o.failed; step++) {
        out->steps = step + 1;
        double nu1, nu2;
        if (!newton_step(as, &nu1, &nu2)) {
            /* without a cost, an input of S without mass that reaches an
             * output no mass reaches (the input that covered it left S)
             * has no finite curvature: it leaves S, and pricing may bring
             * it back by a mixing step */
            size_t dropped = 0;
            for (size_t i = as->k; !as->with_cost && i-- > 0;)
                if (!(ws->r[as->set[i]] > 0.0) && !reaches_covered(ws, as->set[i])) {
                    drop_input(as, i);
                    dropped++;
                }
            if (dropped > 0 && as->k > 0)
                continue;
            break;
        }
        /* the predicted rise (∂I/∂r_x = D_x − 1) and how far the scores
         * on S are from the line ν1 + ν2·c */
        double pred = 0.0, resid = 0.0;
        for (size_t i = 0; i < as->k; i++) {
            size_t x = as->set[i];
            pred += (ws->d[x] - 1.0) * as->delta[i];
            resid = fmax(resid, fabs(ws->d[x] - nu1 - nu2 * cost_of(as, x)));
        }
        if ((pred > small || resid > small) && line_search(as, &tilt, &o, pred))
            continue;
        /* converged on S: the reduced score of every input outside it */
        double best_v = 0.0;
        size_t best_x = nx;
        for (size_t x = 0; x < nx; x++) {
            double v = ws->d[x] - nu1 - nu2 * cost_of(as, x);
            if (!as->in_set[x] && v > best_v) {
                best_v = v;
                best_x = x;
            }
        }
        if (best_v > small && stalls < MAX_STALLS) {
            /* an outside input pays: it joins S (a stall when I has not
             * risen since the last one joined) */
            if (as->k >= as->cap)
                break;
            stalls = o.mi > mi_added ? 0 : stalls + 1;
            mi_added = o.mi;
            add_input(as, best_x);
            if (!as->with_cost) {
                /* an input that reaches outputs without mass, or whose
                 * score towers over the law's, comes in by mixing (Newton's
                 * curvature there is infinite or huge) */
                int covered = reaches_covered(ws, best_x);
                if ((!covered || best_v > MIX_SCORE) && !mix_in(as, &tilt, &o, best_x) &&
                    !covered)
                    break;
            }
            continue;
        }
        /* certify over every input */
        double upper, s = 0.0;
        if (as->with_cost) {
            upper = ba_dual_bound(ws->d, as->c, as->beta, nx, &s);
        } else {
            upper = -INFINITY;
            for (size_t x = 0; x < nx; x++)
                upper = fmax(upper, ws->d[x]);
        }
        double enough = stalls < MAX_STALLS ? target : STALL_FRACTION * tol_nats;
        if (upper - o.mi <= enough && (as->with_cost || o.cost <= as->beta)) {
            out->mi = o.mi;
            out->upper = upper;
            out->cost = o.cost;
            out->multiplier = s;
            out->active = as->with_cost;
            return 1;
        }
        if (!as->with_cost || !(nu2 < 0.0) || best_v > small)
            break;
        as->with_cost = 0; /* the budget does not bind */
    }
    return 0;
}

int ba_cost_newton(qc_ba_workspace *ws, const double *c, double beta, size_t cheapest,
                   double tol_nats, size_t max_steps, ba_newton_result *out)
{
    active_set as = {.ws = ws, .c = c, .beta = beta, .with_cost = 1};
    out->steps = 0;
    int ok = reserve(&as) && start(&as, cheapest) && solve(&as, tol_nats, max_steps, out);
    release(&as);
    return ok;
}

int ba_newton_free(qc_ba_workspace *ws, double tol_nats, size_t max_steps,
                   ba_newton_result *out)
{
    active_set as = {.ws = ws, .c = NULL, .beta = INFINITY, .with_cost = 0};
    out->steps = 0;
    int ok = reserve(&as) && start_free(&as) && solve(&as, tol_nats, max_steps, out);
    release(&as);
    return ok;
}
