/* alphabet.h — internal interfaces of the alphabet and input-design
 * module (src/alphabet): constraint helpers, the level projection used by
 * level optimization, and the design stages that qc_design runs around
 * the threshold design. Not installed. */
#ifndef QC_ALPHABET_H
#define QC_ALPHABET_H

#include "core/internal.h"

/* Relative slack allowed when a law's average cost is compared with its
 * budget (the engine meets budgets up to rounding). */
#define QC_BUDGET_SLACK 1e-9

/* ---- alphabet.c ------------------------------------------------------ */

/* n ≥ 2 and a power of 2. */
int qc_is_power_of_two(size_t n);
/* x in [−peak, peak] ([0, peak] for intensity), up to rounding. */
int qc_within_peak(double x, double peak, int intensity);

/* ---- constraints.c --------------------------------------------------- */

/* Any constraint set (c may be NULL)? */
int qc_constraints_any(const qc_constraints *c);
/* Values in their domains (peak, power > 0; mean finite; no mean with
 * QAM); the message names the key. c may be NULL. */
qc_status qc_constraints_validate(const qc_constraints *c, unsigned dimensions);
/* Does the law (NULL: uniform) meet the average constraints? */
qc_status qc_constraints_check_law(const qc_constraints *c, const double *levels,
                                   const double *law, size_t nlevels,
                                   unsigned dimensions);
/* Per-level costs of the average constraints (power first, then mean)
 * into the caller's arrays (nlevels each) and the qc_cost list; returns
 * how many (0, 1 or 2). QAM: the per-quadrature power budget is half the
 * symbol's. */
size_t qc_constraint_costs(const qc_constraints *c, const double *levels,
                           size_t nlevels, unsigned dimensions, double *power_cost,
                           double *mean_cost, qc_cost costs[2]);

/* Is there a law with Σ r a ≤ 0 and Σ r b ≤ 0 over n points? Some point
 * or some mixture of two meets both (Carathéodory's theorem in the
 * plane): on success *wi, *wj and *lambda give the law λ·δ_i + (1−λ)·δ_j
 * (i = j for a single point). */
int qc_two_cost_witness(const double *a, const double *b, size_t n, size_t *wi, size_t *wj,
                        double *lambda);

/* The set of allowed level vectors during level optimization: every
 * level in [lo, hi]; with a law, also E[x²] ≤ power and E[x] ≤ mean.
 * Convex, so the radial map toward a strictly feasible centre keeps a
 * vector inside and its order intact. */
typedef struct {
    size_t n;
    double lo, hi;
    const double *law; /* NULL: only the box (the law is designed)     */
    double power, mean; /* NaN: absent (power per real dimension)      */
    int bounded;        /* the set is bounded                         */
    double *centre;     /* owned, sorted, strictly feasible            */
} qc_level_set;

/* Build the set for `n` levels with law `law` (NULL for the capacity
 * objective) from the constraints; `pattern` (n values) shapes the
 * centre. QC_EINFEASIBLE when no level vector meets the constraints. */
qc_status qc_level_set_init(qc_level_set *s, const qc_constraints *c, const double *law,
                            const double *pattern, size_t n, unsigned dimensions);
void qc_level_set_clear(qc_level_set *s);
/* Sort x and pull it toward the centre until it is feasible. */
void qc_level_set_project(const qc_level_set *s, double *x);

/* ---- input_design.c -------------------------------------------------- */

/* qc_design: the alphabet stages (constraints, QAM, GMI, level search,
 * dispersion and blocklength rates) around qc_design_thresholds. */
qc_status qc_input_design(const qc_design_request *req, qc_design_result *res);

/* ---- level_search.c -------------------------------------------------- */

/* Evaluate the objective at the levels x (n of them): a complete design
 * into *res (the caller clears it). */
typedef qc_status (*qc_level_design)(void *ctx, const double *x, qc_design_result *res);

/* Nelder–Mead (GSL nmsimplex2) over the level vector projected into `set`,
 * from `starts` starting points: the given levels, equally spaced levels
 * filling the set, and perturbations of the best found (fixed seed).
 * best_out receives the best levels (sorted), *rate_bits their objective,
 * *evaluations the designs run. */
qc_status qc_level_search(const qc_level_set *set, const double *start, size_t starts,
                          qc_level_design design, void *ctx, double *best_out,
                          double *rate_bits, size_t *evaluations);
/* Most designs one start of that search runs for n levels. */
size_t qc_level_search_budget(size_t n);

#endif
