/* prune.c — candidate elimination for Blahut–Arimoto runs on many
 * inputs (a fine level grid): inputs that certifiably carry no mass at
 * the optimum are set aside, the survivors are solved as a smaller
 * channel, and the certificate is checked over every input.
 *
 * The test, for the tilted objective F(r) = I(r) − s·Σ r (c − β) at a
 * fixed s ≥ 0 with scores a_x(q) = D(P(·|x) ‖ q) − s·(c_x − β):
 *  (i)  every maximizer r* has the same output law q* (F is strictly
 *       concave in q = rP and linear in r otherwise), and a_x(q*) = F*
 *       on the support of r* (the Kuhn–Tucker conditions: R. G.
 *       Gallager, Information Theory and Reliable Communication, Wiley
 *       1968, Thm 4.5.1; with a cost, R. E. Blahut, IEEE Trans. IT
 *       18(4), 1972, Thm 9);
 *  (ii) for any output law q, Σ_x r*(x) a_x(q) = F* + D(q* ‖ q) (the
 *       compensation identity, F. Topsøe, "An information theoretical
 *       identity and a problem involving capacity", Studia Sci. Math.
 *       Hungar. 2, 1967), which is at most U(q) = max_x a_x(q); so
 *       D(q* ‖ q) ≤ G = U(q) − L for any certified lower bound L ≤ F*;
 *  (iii) merging the outputs other than y cannot raise a divergence, so
 *       d(q*(y) ‖ q(y)) ≤ G for the binary divergence d; since
 *       ∂²d(p ‖ q)/∂p² = 1/(p(1 − p)) ≥ 1/q for p ≤ q, d(p ‖ q) ≥
 *       (q − p)²/(2q), hence q*(y) ≥ q(y)·(1 − √(2G/q(y)));
 *  (iv) for x in the support of r*, a_x(q) = a_x(q*) + Σ_y P(y|x)
 *       log(q*(y)/q(y)) ≥ L + Σ_y P(y|x) log(1 − √(2G/q(y))), as long as
 *       2G < q(y) on every output x reaches.
 * An input whose score falls below that threshold is in the support of
 * no maximizer, so removing it leaves F* and the optimal laws unchanged.
 * Inputs that reach an output with q(y) ≤ 2G are always kept.
 *
 * The run: full iterations in growing chunks until the test keeps at
 * most half the inputs; then Blahut–Arimoto on the surviving rows
 * (copied into a smaller channel); then the scores of all inputs at the
 * law it returns. Their maximum is the certified upper bound (Blahut
 * 1972), over every input, pruned or not; the lower bound comes from a
 * law on the survivors, which is a law on all inputs. If the full check
 * misses the tolerance, the test runs again at the new law (it keeps
 * every input scoring above the lower bound, so the ones that broke the
 * check come back) and the reduced run resumes: column generation
 * (G. B. Dantzig and P. Wolfe, "Decomposition principle for linear
 * programs", Oper. Res. 8(1), 1960) with a certified pricing step.
 * Allocation failures only switch the elimination off. */
#include "capacity/engine.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

/* Fewer inputs than BA_PRUNE_MIN_INPUTS (engine.h): plain runs (the
 * test costs two passes). */
/* Full iterations before the first test; the chunk doubles after each
 * test that keeps too many. */
#define FIRST_CHUNK 8
/* Switch to the reduced channel when at most this fraction survives. */
#define WORTH 0.5
/* Reduced runs stop at this fraction of the caller's tolerance, so that
 * the full check (at a slightly different law) still meets it. */
#define SUB_TOL 0.5
/* Rounds of the full check before the rest runs on all inputs. */
#define MAX_ROUNDS 40
/* Of the certified survivors, the working set holds those scoring at
 * least the lower bound and those with at least this share of the most
 * probable input's mass. */
#define MASS_KEEP 1e-6
/* Scores within this (relative to 1 + |L|) of the threshold are kept:
 * the scores carry rounding of that order. */
#define ROUND_SLACK 1e-12
/* Weight of the uniform law mixed into the reduced start (the method
 * wants a strictly positive start). */
#define SUB_UNIFORM 1e-9

/* The survivor list; 0 on allocation failure. */
static int reserve_keep(qc_ba_workspace *ws)
{
    return ws->keep || (ws->keep = qc_malloc_array(ws->nx_max, sizeof *ws->keep));
}

/* Reduced buffers for n ≥ 1 rows; 0 on allocation failure. */
static int reserve(qc_ba_workspace *ws, size_t n)
{
    if (ws->sub && ws->sub_rows >= n)
        return 1;
    qc_ba_workspace_free(ws->sub);
    free(ws->sub_p);
    free(ws->sub_costs);
    ws->sub = NULL;
    ws->sub_rows = 0;
    ws->sub_p = qc_malloc_array(n * ws->ny_max, sizeof *ws->sub_p);
    ws->sub_costs = qc_malloc_array(n, sizeof *ws->sub_costs);
    if (!ws->sub_p || !ws->sub_costs || qc_ba_workspace_alloc(n, ws->ny_max, &ws->sub) != QC_OK) {
        qc_ba_workspace_free(ws->sub);
        ws->sub = NULL;
        return 0;
    }
    ws->sub_rows = n;
    return 1;
}

/* The elimination test at the law whose output law and scores ws->q and
 * ws->a hold (all inputs, as ba_evaluate leaves them), with the
 * certified lower bound L. With `working`, only the survivors that score
 * at least L or hold a share of the mass make the working set. Writes
 * them to ws->keep and returns their number. Uses ws->logq, ws->t and
 * ws->coef as scratch. */
static size_t eliminate(qc_ba_workspace *ws, double lower, int working_set)
{
    double rmax = 0.0;
    for (size_t x = 0; x < ws->nx; x++)
        rmax = fmax(rmax, ws->r[x]);
    const size_t nx = ws->nx, ny = ws->ny;
    double upper = -INFINITY;
    for (size_t x = 0; x < nx; x++)
        upper = fmax(upper, ws->a[x]);
    const double gap = fmax(upper - lower, 0.0);
    /* mass each row puts on outputs the bound (iii) cannot reach */
    for (size_t y = 0; y < ny; y++)
        ws->logq[y] = ws->q[y] > 2.0 * gap ? 0.0 : 1.0;
    ba_row_sums(ws, ws->logq, ws->coef);
    for (size_t y = 0; y < ny; y++)
        ws->logq[y] = ws->q[y] > 2.0 * gap ? log1p(-sqrt(2.0 * gap / ws->q[y])) : 0.0;
    ba_row_sums(ws, ws->logq, ws->t);
    const double slack = ROUND_SLACK * (1.0 + fabs(lower));
    size_t n = 0;
    for (size_t x = 0; x < nx; x++) {
        double threshold = lower + ws->t[x] * ws->inv_sum[x];
        int certified = ws->coef[x] > 0.0 || !(ws->a[x] < threshold - slack);
        int working = !working_set || !(ws->a[x] < lower - slack) ||
                      ws->r[x] >= MASS_KEEP * rmax;
        if (certified && working)
            ws->keep[n++] = x;
    }
    return n;
}

/* Copy the surviving rows, their costs and their share of ws->r into
 * the reduced workspace, prepared and started. */
static void build_reduced(qc_ba_workspace *ws, const ba_tilt *tilt, size_t n, ba_tilt *sub_tilt)
{
    qc_ba_workspace *sub = ws->sub;
    const size_t ny = ws->ny;
    double mass = 0.0;
    for (size_t k = 0; k < n; k++) {
        const size_t x = ws->keep[k];
        memcpy(ws->sub_p + k * ny, ws->p + x * ny, ny * sizeof *ws->sub_p);
        if (tilt->costs)
            ws->sub_costs[k] = tilt->costs[x];
        mass += ws->r[x];
    }
    qc_dmc reduced = {n, ny, ws->sub_p};
    ba_prepare(sub, &reduced);
    for (size_t k = 0; k < n; k++) {
        double share = mass > 0.0 ? ws->r[ws->keep[k]] / mass : 0.0;
        sub->r[k] = (1.0 - SUB_UNIFORM) * share + SUB_UNIFORM / (double)n;
    }
    *sub_tilt = *tilt;
    sub_tilt->costs = tilt->costs ? ws->sub_costs : NULL;
}

size_t ba_survivors(qc_ba_workspace *ws, double lower)
{
    return reserve_keep(ws) ? eliminate(ws, lower, 0) : 0;
}

void ba_solve(qc_ba_workspace *ws, const ba_tilt *tilt, double tol_nats,
              qc_ba_method method, size_t max_iterations, int prune, ba_outcome *out)
{
    if (!prune || ws->nx < BA_PRUNE_MIN_INPUTS) {
        ba_run(ws, tilt, tol_nats, method, max_iterations, out);
        return;
    }
    /* a law from an earlier reduced run is exactly 0 off its survivors:
     * make it strictly positive again, as the method wants */
    int zeros = 0;
    for (size_t x = 0; x < ws->nx && !zeros; x++)
        zeros = !(ws->r[x] > 0.0);
    if (zeros)
        for (size_t x = 0; x < ws->nx; x++)
            ws->r[x] = (1.0 - SUB_UNIFORM) * ws->r[x] + SUB_UNIFORM / (double)ws->nx;
    size_t used = 0, chunk = FIRST_CHUNK, n = ws->nx;
    double best_lower = -INFINITY, best_upper = INFINITY;
    ba_outcome o, full;
    int converged = 0;
    /* full iterations until the test pays */
    for (;;) {
        size_t budget = max_iterations - used < chunk ? max_iterations - used : chunk;
        ba_run(ws, tilt, tol_nats, method, budget, &o);
        ws->resume = 1; /* the next chunk keeps the tail inputs' step state */
        used += o.iterations;
        if (o.failed || used >= max_iterations) {
            ws->resume = 0;
            goto full_only;
        }
        if (!reserve_keep(ws)) {
            ws->resume = 0;
            goto rest_full;
        }
        n = eliminate(ws, o.lower, 1);
        ws->resume = 0;
        /* a converged run still goes through one reduced round when that
         * is small: its law is then exactly 0 off the survivors */
        if (n <= WORTH * (double)ws->nx)
            break;
        if (o.converged)
            goto full_only;
        chunk *= 2;
    }
    best_lower = o.lower;
    best_upper = o.upper;
    full = o;
    for (int round = 0; round < MAX_ROUNDS; round++) {
        if (!reserve(ws, n))
            goto rest_full;
        ba_tilt sub_tilt;
        build_reduced(ws, tilt, n, &sub_tilt);
        ba_outcome so;
        ba_run(ws->sub, &sub_tilt, SUB_TOL * tol_nats, method, max_iterations - used, &so);
        used += so.iterations;
        /* the reduced law, on all inputs */
        memset(ws->r, 0, ws->nx * sizeof *ws->r);
        for (size_t k = 0; k < n; k++)
            ws->r[ws->keep[k]] = ws->sub->r[k];
        full.upper = INFINITY;
        full.failed = 0;
        ba_evaluate(ws, tilt, &full);
        if (so.failed || full.failed) {
            *out = full;
            out->failed = 1;
            out->lower = best_lower;
            out->upper = best_upper;
            out->iterations = used;
            out->converged = 0;
            return;
        }
        /* the reduced lower bound belongs to a law on all inputs; the
         * upper bound is the maximum over all of them */
        best_lower = fmax(best_lower, so.lower);
        best_upper = fmin(best_upper, full.upper);
        if (best_upper - best_lower <= tol_nats) {
            converged = 1;
            break;
        }
        if (!so.converged || used >= max_iterations)
            break;
        n = eliminate(ws, best_lower, 1);
    }
    if (!converged && !full.failed && used < max_iterations)
        goto rest_full;
    *out = full;
    out->lower = best_lower;
    out->upper = best_upper;
    out->iterations = used;
    out->converged = converged;
    return;
rest_full:
    /* no memory for the reduced channel, or the checks kept failing:
     * the rest on all inputs from the law reached, made strictly
     * positive again */
    for (size_t x = 0; x < ws->nx; x++)
        ws->r[x] = (1.0 - SUB_UNIFORM) * ws->r[x] + SUB_UNIFORM / (double)ws->nx;
    ba_run(ws, tilt, tol_nats, method, max_iterations - used, &o);
    used += o.iterations;
    o.lower = fmax(o.lower, best_lower);
    o.upper = fmin(o.upper, best_upper);
    o.converged = !o.failed && o.upper - o.lower <= tol_nats;
full_only:
    *out = o;
    out->iterations = used;
}
