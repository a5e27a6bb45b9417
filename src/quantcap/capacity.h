/* quantcap/capacity.h — the capacity engine: Blahut–Arimoto with
 * certified bounds, average costs. Part of the public interface of
 * libquantcap (include <quantcap.h> for all of it). SPDX-License-
 * Identifier: GPL-3.0-or-later */
#ifndef QUANTCAP_CAPACITY_H
#define QUANTCAP_CAPACITY_H

#include <stddef.h>

#include "quantcap/dmc.h"

#ifdef __cplusplus
extern "C" {
#endif

typedef enum {
    QC_BA_PLAIN = 0,       /* Blahut 1972 / Arimoto 1972 as published      */
    QC_BA_ACCELERATED = 1, /* natural-gradient step, adaptive step size    */
} qc_ba_method;

typedef struct {
    double tol_bits;       /* stop when upper − lower ≤ tol (default 1e-9) */
    size_t max_iterations; /* QC_ENOCONV past this (default 1000000)       */
    qc_ba_method method;   /* default QC_BA_ACCELERATED                    */
    const double *initial; /* starting input law (length nx), NULL: uniform */
    const double *costs;   /* per-input cost (length nx), NULL: none        */
    double budget;         /* average cost allowed, used when costs != NULL */
    int prune;             /* set aside inputs that certifiably carry no mass
                              at the optimum, and with one cost solve on a
                              small active set priced over all inputs
                              (32 inputs and more; default 1; the bounds
                              always cover every input; docs/methods.md) */
} qc_ba_options;

/* Fill opt with the defaults noted above (no start law, no costs).
 * Overwrites every field; never fails. */
QC_API void qc_ba_options_default(qc_ba_options *opt);

typedef struct {
    double capacity_bits;    /* certified lower bound: I(r) at the final r */
    double upper_bound_bits; /* certified upper bound on capacity          */
    double gap_bits;         /* upper − lower at stop                      */
    size_t iterations;       /* BA iterations (summed over multiplier search),
                                with the Newton steps of an active-set solve */
    int cost_active;         /* 1 if the budget constraint binds           */
    double cost;             /* average cost Σ r(x)c(x) (0 without costs)  */
    double multiplier;       /* Lagrange multiplier s, nats per unit cost  */
} qc_capacity_result;

/* Scratch memory for channels up to nx × ny, reusable across runs. */
typedef struct qc_ba_workspace qc_ba_workspace;
/* QC_EINVAL when nx or ny is 0 or above QC_DMC_MAX_DIM, QC_ENOMEM; on
 * failure *out is NULL. */
QC_API qc_status qc_ba_workspace_alloc(size_t nx, size_t ny, qc_ba_workspace **out);
/* Release a workspace; NULL does nothing. */
QC_API void qc_ba_workspace_free(qc_ba_workspace *ws);

/* Capacity (or capacity–cost) of `dmc`. `ws` may be NULL (allocated
 * internally). `input_out` (length nx, may be NULL) receives the final
 * input law. QC_ENOCONV when the iteration limit is hit; the result then
 * still holds the bounds reached (and input_out the law reached).
 * QC_EINFEASIBLE when the budget is below the cheapest input's cost;
 * QC_EINVAL naming the bad row, option or cost; QC_ENUMERIC; QC_ENOMEM.
 * On any other failure input_out is unchanged and the result holds no
 * bound to use (its fields are unspecified). The channel is never
 * modified.
 * Details: rows are used renormalized to sum to exactly 1; capacity_bits
 * is I(X;Y) of the returned law (which meets the budget); the upper
 * bound is max_x D(P(·|x) ‖ q) − s·(c_x − budget) at some output law q
 * and s ≥ 0; max_iterations caps the total over the multiplier search;
 * multiplier is the s that certifies the final upper bound (the slope
 * of C(budget), 0 when the budget does not bind). */
QC_API qc_status qc_capacity(const qc_dmc *dmc, const qc_ba_options *opt,
                      qc_ba_workspace *ws, qc_capacity_result *res,
                      double *input_out);

/* Capacity under up to two average costs, Σ r(x)c_k(x) ≤ budget_k, by the
 * engine (qc_capacity) with a single combined cost (1−w)c_1 + w·c_2 and a
 * bisection on w (docs/alphabets.md). Every combined run certifies
 * C ≤ max_x[D_x − s_1 c_1(x) − s_2 c_2(x)] + s_1 β_1 + s_2 β_2; the
 * result holds the smallest such bound and the rate of a law meeting both
 * budgets. */
typedef struct {
    const double *costs; /* per input (length nx)                         */
    double budget;
} qc_cost;

typedef struct {
    double capacity_bits;    /* I(r) of the returned law, which meets every
                                budget                                    */
    double upper_bound_bits; /* certified upper bound                       */
    double gap_bits;
    size_t iterations;       /* engine iterations, all runs                */
    size_t engine_runs;
    double cost[2];          /* Σ r c_k at the returned law                 */
    double multiplier[2];    /* s_k of the bound above (nats per unit cost) */
} qc_costs_result;

/* `opt` gives tolerance, method, iteration limit and start (its costs are
 * ignored; NULL: defaults); ncosts 0, 1 or 2. QC_EINFEASIBLE naming the
 * cost (1 or 2) when no law meets the budgets; QC_ENOCONV when the gap
 * stays above the tolerance (the result then holds the bounds reached,
 * input_out the law). QC_EINVAL naming the bad cost, budget or row,
 * QC_ENOMEM, or what the engine returns; on those failures input_out is
 * unchanged and the result's fields are unspecified. */
QC_API qc_status qc_capacity_costs(const qc_dmc *dmc, const qc_ba_options *opt,
                            const qc_cost *costs, size_t ncosts,
                            qc_ba_workspace *ws, qc_costs_result *res,
                            double *input_out);

/* Relative slack allowed when a law's average cost is compared with its
 * budget (the engine meets budgets up to rounding). */
#define QC_BUDGET_SLACK 1e-9

/* Is there a law with Σ r a ≤ 0 and Σ r b ≤ 0 over n points? Some point
 * or some mixture of two meets both (Carathéodory's theorem in the
 * plane): on success *wi, *wj and *lambda give the law λ·δ_i + (1−λ)·δ_j
 * (i = j for a single point). Returns 0 when no law does (the outputs
 * are then unchanged); never fails otherwise. */
QC_API int qc_two_cost_witness(const double *a, const double *b, size_t n, size_t *wi, size_t *wj,
                        double *lambda);


/* ---- pulse-position modulation (ppm.c) ------------------------------ */

/* The certified rate of M-ary PPM through a per-slot quantizer. */
typedef struct {
    double rate_bits;        /* certified lower bound, bit per symbol     */
    double upper_bound_bits; /* certified upper bound (≤ log2 M)          */
    size_t evaluations;      /* integrand evaluations spent               */
} qc_ppm_bounds;

/* Capacity of M-ary PPM (M = slots ≥ 2) with the soft receiver, which
 * sees the cell of every slot: p_off and p_on are the K = cells
 * probabilities of an empty and of the pulsed slot (each summing to 1
 * within 1e-6; used renormalized). The uniform law is capacity-achieving
 * by the symmetry of the slots; the rate is log M − E[log(1 + S/ℓ)]
 * (ℓ the pulsed slot's likelihood ratio, S the sum of the M − 1 others),
 * written as one integral over Laplace transforms and bracketed by the
 * midpoint and trapezoid rules of its convex integrand until the bracket
 * is at most tol_bits (> 0) wide (docs/methods.md). QC_EINVAL naming the
 * row, cell, M or tolerance; QC_ENOCONV when the bracket cannot be
 * closed (out then holds the bracket reached); QC_ENUMERIC, QC_ENOMEM
 * (out's rates NaN). Reads only its inputs. */
QC_API qc_status qc_ppm_soft_rate(const double *p_off, const double *p_on, size_t cells,
                                  size_t slots, double tol_bits, qc_ppm_bounds *out);

/* The hard receiver of M-ary PPM: each slot fires or not (one threshold),
 * the symbol is decided when exactly one slot fires and erased when none
 * or several do. */
typedef struct {
    double rate_bits; /* capacity per symbol (uniform law), closed form  */
    double correct;   /* P(only the pulsed slot fires)                  */
    double wrong;     /* P(exactly one slot fires, not the pulsed one)   */
    double erasure;   /* P(none or several fire)                        */
} qc_ppm_hard;

/* From fire_on = P(fire | pulse) and fire_off = P(fire | empty), both in
 * [0, 1], and M = slots ≥ 2. QC_EINVAL naming the value at fault (out's
 * fields NaN). */
QC_API qc_status qc_ppm_hard_rate(double fire_on, double fire_off, size_t slots,
                                  qc_ppm_hard *out);

#ifdef __cplusplus
}
#endif

#endif /* QUANTCAP_CAPACITY_H */
