/* engine.h — internals shared by the files of the capacity engine:
 * the workspace layout, the per-channel preparation and one
 * Blahut–Arimoto run for a fixed cost multiplier s. Not installed. */
#ifndef QC_CAPACITY_ENGINE_H
#define QC_CAPACITY_ENGINE_H

#include "core/internal.h"
#include "quantcap/capacity.h"

#include <gsl/gsl_matrix.h>

struct qc_ba_workspace {
    size_t nx_max, ny_max;
    /* per-channel preparation (ba_prepare) */
    size_t nx, ny;
    const double *p;     /* the caller's matrix, not owned              */
    double *inv_sum;     /* nx: 1 / row sum (rows renormalized exactly) */
    double *neg_entropy; /* nx: Σ_y P log P of the renormalized row     */
    size_t *lo, *hi;     /* nx: columns [lo, hi) hold the row's nonzeros */
    /* iteration state */
    double *r;           /* nx: current input law                       */
    double *d;           /* nx: D_x = D(P(·|x) ‖ rP) at r               */
    double *a;           /* nx: score D_x − s·(c_x − budget) at r       */
    double *t;           /* nx: log-weight of the proposed next law     */
    double *r_best;      /* nx: law with the best lower bound so far    */
    double *a_best;      /* nx: its scores                              */
    double *r_prev;      /* nx: last accepted iterate (accelerated)     */
    double *a_prev;      /* nx: its scores                              */
    double *boost;       /* nx: step multiplier of inputs in the tail   */
    double *trend;       /* nx: sign of their last score deviation      */
    double *r_lo, *r_hi; /* nx: laws at the ends of the multiplier bracket */
    double *q;           /* ny: output law rP                           */
    double *logq;        /* ny: log q, floored where q underflows       */
    double *coef;        /* nx: r(x) / row sum: weights of the law sweep */
    double *dsum;        /* nx: Σ_y P(y|x) log q(y) from the law sweep  */
    size_t *rows;        /* nx: the rows a sweep visits                 */
    /* candidate elimination (prune.c), allocated on first use */
    struct qc_ba_workspace *sub; /* the reduced channel's workspace     */
    double *sub_p;       /* the surviving rows, copied                  */
    double *sub_costs;   /* their costs                                 */
    size_t *keep;        /* nx: the surviving inputs, ascending         */
    size_t sub_rows;     /* rows the reduced buffers hold               */
    int resume;          /* ba_run keeps boost and trend from the last run */
};

/* Outcome of one run at a fixed multiplier s (all in nats). The run
 * leaves its final law in ws->r and the divergences at it in ws->d. */
typedef struct {
    double mi;         /* I(r) at the final law, computed afresh          */
    double cost;       /* Σ r c at the final law (0 without costs)        */
    double lower;      /* best certified lower bound on max_r of the tilted
                        * objective I(r) − s·(Σ r c − budget)            */
    double upper;      /* best certified upper bound on the same          */
    size_t iterations; /* iterations spent by this run                    */
    int converged;     /* upper − lower ≤ tolerance                       */
    int failed;        /* a bound or the law became non-finite            */
} ba_outcome;

/* Record the channel in the workspace: row sums, row entropies, the
 * span of nonzero entries of each row. The matrix must already have
 * passed qc_dmc_check and fit the workspace. */
void ba_prepare(qc_ba_workspace *ws, const qc_dmc *dmc);

/* Cost tilt of the scores: a_x = D_x − s·(c_x − budget). With
 * costs == NULL there is no tilt (a = D). Shifting by s·budget leaves
 * the iteration unchanged and makes max_x a_x directly the certified
 * upper bound on the capacity at that budget (Blahut 1972). */
typedef struct {
    const double *costs;
    double s;
    double budget;
} ba_tilt;

/* Run Blahut–Arimoto (method as given) for the tilted objective
 * I(r) − s·(Σ r c − budget), starting from the law in ws->r
 * (non-negative, sums to 1; the published method wants it strictly
 * positive). Stops when the certified gap is ≤ tol_nats or after
 * max_iterations iterations (converged = 0). Never fails; a non-finite
 * bound ends the run with failed = 1. */
void ba_run(qc_ba_workspace *ws, const ba_tilt *tilt, double tol_nats,
            qc_ba_method method, size_t max_iterations, ba_outcome *out);

/* The same contract as ba_run, with candidate elimination (prune.c)
 * when prune is nonzero and the channel has enough inputs: inputs that
 * certifiably carry no mass at the optimum are set aside, the rest is
 * solved as a smaller channel, and every bound that is reported is
 * checked over all inputs. */
void ba_solve(qc_ba_workspace *ws, const ba_tilt *tilt, double tol_nats,
              qc_ba_method method, size_t max_iterations, int prune,
              ba_outcome *out);

/* The certified elimination test of prune.c alone, at the law whose
 * output law and scores ba_evaluate (or the end of ba_run) left in ws,
 * with a certified lower bound `lower` on the tilted optimum: the
 * inputs that may carry mass at an optimum go to ws->keep (ascending);
 * returns their number, 0 when the list cannot be allocated. */
size_t ba_survivors(qc_ba_workspace *ws, double lower);

/* out[x] = Σ_y P(y|x)·v(y) over all rows (one pass over the matrix,
 * each row's span only); v must be finite on every span. */
void ba_row_sums(const qc_ba_workspace *ws, const double *v, double *out);

/* Recompute ws->q = rP, ws->d, ws->a and the outcome's mi and cost for
 * the law in ws->r (one pass to form q, one for D); out->upper becomes
 * the smaller of its value and max_x a_x. */
void ba_evaluate(qc_ba_workspace *ws, const ba_tilt *tilt, ba_outcome *out);

/* The law sweep (kernels.c), one pass over the matrix: ws->q =
 * Σ_x coef[x]·P(·|x) over the rows listed in rows[0..nrows), ws->logq =
 * log q (log_floor where q = 0), and ws->dsum[x] = Σ_y P(y|x) log q(y)
 * for every x. Only each row's span [lo, hi) is read. */
void ba_sweep_law(qc_ba_workspace *ws, const size_t *rows, size_t nrows,
                  const double *coef, double log_floor);

/* Inputs below this count: plain runs, no candidate elimination and no
 * active-set solve (prune.c, cost.c). */
#define BA_PRUNE_MIN_INPUTS 32

/* Upper bound min_{s ≥ 0} max_x [d_x − s·(c_x − β)] (dual_bound.c) from the
 * divergences d at some output law; *s_best receives the minimizing s. */
double ba_dual_bound(const double *d, const double *c, double beta, size_t nx,
                     double *s_best);

/* What the active-set solve (cost_newton.c) found, in nats. */
typedef struct {
    double mi;         /* I(r) at its law (a lower bound)                  */
    double upper;      /* the certified upper bound over every input        */
    double cost;       /* Σ r c at its law                                  */
    double multiplier; /* the s of the upper bound (0 when not active)      */
    int active;        /* the budget binds                                  */
    size_t steps;      /* Newton steps taken                                */
} ba_newton_result;

/* Capacity under the one cost c with budget β (cheapest: an input of
 * least cost, below β) by Newton steps on a small active set, every
 * candidate priced (cost_newton.c). Starts from the law in ws->r (a warm
 * start: its clearly supported inputs) on a prepared workspace, at most
 * max_steps steps (out->steps says how many were taken). Returns
 * 1 with the law in ws->r when the certified gap over all inputs is
 * within a small fraction of tol_nats and the law meets the budget (up
 * to rounding); 0 otherwise (ws->r is then scratch). */
int ba_cost_newton(qc_ba_workspace *ws, const double *c, double beta, size_t cheapest,
                   double tol_nats, size_t max_steps, ba_newton_result *out);

/* Capacity without a cost by the same active-set steps (cost_newton.c),
 * from the law in ws->r (a warm start, or a flat one) on a prepared
 * workspace: 1 with the law in ws->r when max_x D(P(·|x) ‖ q) − I(r) is
 * within a small fraction of tol_nats; 0 otherwise (ws->r is then
 * scratch). */
int ba_newton_free(qc_ba_workspace *ws, double tol_nats, size_t max_steps,
                   ba_newton_result *out);

/* Σ_y P(y|x)·P(y|z)/q(y) over the renormalized rows x and z at the law
 * whose output law ws->q holds (curvature.c); 0 with *bad set when an
 * output both reach has q = 0. */
double ba_curvature(const qc_ba_workspace *ws, size_t x, size_t z, int *bad);

/* The lower triangle (j ≤ i) of a (at least k × k) with
 * ba_curvature(ws, set[i], set[j]), to the same bits, four entries at a
 * time; *cols (*cols_len doubles, grown as needed, the caller frees it)
 * is scratch. *bad as for ba_curvature. */
void ba_curvature_matrix(const qc_ba_workspace *ws, const size_t *set, size_t k,
                         double **cols, size_t *cols_len, gsl_matrix *a, int *bad);

/* Capacity–cost search (cost.c): the caller has validated the options,
 * prepared the workspace and put the starting law in ws->r. Fills res
 * and leaves the final law in ws->r. */
qc_status ba_capacity_cost(qc_ba_workspace *ws, const qc_ba_options *opt,
                           qc_capacity_result *res);

#endif
