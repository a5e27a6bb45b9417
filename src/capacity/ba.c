/* ba.c — the Blahut–Arimoto iteration with certified bounds.
 *
 * Method: R. E. Blahut, "Computation of channel capacity and
 * rate-distortion functions", IEEE Trans. IT 18(4), 1972; S. Arimoto,
 * "An algorithm for computing the capacity of arbitrary discrete
 * memoryless channels", IEEE Trans. IT 18(1), 1972. From a strictly
 * positive input law r the reverse channel is q(x|y) ∝ r(x)P(y|x) and
 * the next input law r'(x) ∝ Π_y q(x|y)^{P(y|x)}, which is the same as
 * r'(x) ∝ r(x)·exp(D_x) with D_x = D(P(·|x) ‖ rP) (only y with
 * P(y|x) > 0 contribute). Every iterate r yields the certified bounds
 * (Blahut 1972; Arimoto 1972)
 *     I(r) ≤ log Σ_x r(x) e^{D_x} ≤ C ≤ max_x D_x,
 * and the run stops on their gap. With a cost multiplier s the score
 * D_x is replaced by D_x − s·c_x and the same bounds hold for
 * max_r [I(r) − s·Σ r c] (Blahut 1972, capacity–cost).
 *
 * Acceleration (QC_BA_ACCELERATED), measured in tests/bench:
 *  - G. Matz and P. Duhamel, "Information geometric formulation and
 *    interpretation of accelerated Blahut-Arimoto-type algorithms",
 *    ITW 2004: the natural-gradient step
 *    log r'(x) = log r(x) + μ·(D_x − I) + const, μ = 1 being plain BA.
 *    μ grows by MU_GROW after every step that keeps improving, up to
 *    MU_MAX, and falls back to 1 (a plain step) when one does not.
 *    Alone this needs 0.37 of plain BA's iterations on the
 *    near-degenerate channel of the benchmark; the rest below brings
 *    that to about 0.06.
 *  - An extrapolation in log r on top (heavy ball, B. T. Polyak, USSR
 *    Comput. Math. Math. Phys. 4(5), 1964) with Nesterov's weights
 *    (k−1)/(k+2) (Y. Nesterov, Soviet Math. Dokl. 27, 1983) and the
 *    gradient restart of B. O'Donoghue and E. Candès, "Adaptive
 *    restart for accelerated gradient schemes", Found. Comput. Math.
 *    15(3), 2015: when the last step points downhill at the new iterate
 *    the extrapolation and μ start over. An iterate whose lower bound
 *    falls below the best one by more than rounding is discarded and
 *    replaced by a plain step from the last accepted iterate.
 *  - Inputs whose weight is tiny hardly change q, so their scores move
 *    slowly and plain steps take very long to bring a needed one back.
 *    Each such input gets its own step multiplier that doubles while
 *    the sign of its score deviation persists and resets when it flips
 *    (the rule of M. Riedmiller and H. Braun's Rprop, IEEE ICNN 1993),
 *    and no input falls below e^-FLOOR_NATS of the most probable one.
 * The bounds are computed at every iterate exactly as in plain BA, so
 * the certificate does not depend on how the iterate was produced.
 *
 * One iteration reads the matrix from memory once (kernels.c): once a
 * step has fixed the next law r', one sweep over column blocks forms
 * q = r'P on a block, its logarithm, and every row's Σ_y P(y|x) log q(y)
 * on that block while the block's rows are still in cache; the scores
 * D_x = −H(P_x) − that sum (row entropies prepared once per channel)
 * and the next step need no further pass. Only the span of columns
 * holding a row's nonzero entries is visited. */
#include "capacity/engine.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

/* log of the smallest positive double, used as log q(y) where q(y)
 * underflowed to 0. Raising q can only lower each D_x, and the raised
 * q has mass 1 + ny·4.9e-324, so both bounds stay valid. */
#define LOG_Q_FLOOR (-744.44007192138122)

/* A log-weight this far above the running shift triggers a rescale of
 * the partial sums; weights stay below e^RESCALE_AT, far from overflow. */
#define RESCALE_AT 300.0

/* Step-size control of the accelerated method. Near the optimum plain
 * BA contracts every error mode by 1 − λ with 0 ≤ λ ≤ 1; the heavy-ball
 * step stays stable for μ·λ < 2(1 + β), i.e. μ < 4 as β → 1. MU_MAX
 * keeps a margin below that. */
#define MU_GROW 1.25
#define MU_MAX 3.0

/* Accelerated steps keep every input's weight at least e^-FLOOR_NATS
 * times that of the most probable input, so that an input pushed down
 * by the extrapolation can come back if it turns out to be needed. At
 * most 2^24 inputs sit at the floor, holding mass below e^-43; their
 * effect on I is far below any tolerance, and the bounds hold for any
 * law anyway. */
#define FLOOR_NATS 60.0

/* A lower bound this far (relative to 1 + |bound|) below the best one
 * is a real drop, not rounding in the divergences. */
#define DROP_TOL 1e-12

/* Inputs below TAIL_REL times the most probable one get their own
 * growing step multiplier (up to BOOST_MAX), moving at most TAIL_STEP
 * nats per iteration. */
#define TAIL_REL 1e-8
#define BOOST_MAX 1e12
#define TAIL_STEP 1.0

qc_status qc_ba_workspace_alloc(size_t nx, size_t ny, qc_ba_workspace **out)
{
    *out = NULL;
    if (nx == 0 || ny == 0 || nx > QC_DMC_MAX_DIM || ny > QC_DMC_MAX_DIM)
        return qc_fail(QC_EINVAL,
                       "workspace size %zu x %zu: both must be in 1..%zu", nx,
                       ny, (size_t)QC_DMC_MAX_DIM);
    qc_ba_workspace *ws = calloc(1, sizeof *ws);
    if (!ws)
        goto fail;
    ws->nx_max = nx;
    ws->ny_max = ny;
    double **by_x[] = {&ws->inv_sum, &ws->neg_entropy, &ws->r,      &ws->d,
                       &ws->a,       &ws->t,           &ws->r_best, &ws->a_best,
                       &ws->r_prev,  &ws->a_prev,      &ws->r_lo,   &ws->r_hi,
                       &ws->boost,   &ws->trend,       &ws->coef,   &ws->dsum};
    for (size_t i = 0; i < sizeof by_x / sizeof by_x[0]; i++)
        if (!(*by_x[i] = qc_malloc_array(nx, sizeof(double))))
            goto fail;
    double **by_y[] = {&ws->q, &ws->logq};
    for (size_t i = 0; i < sizeof by_y / sizeof by_y[0]; i++)
        if (!(*by_y[i] = qc_malloc_array(ny, sizeof(double))))
            goto fail;
    ws->lo = qc_malloc_array(nx, sizeof *ws->lo);
    ws->hi = qc_malloc_array(nx, sizeof *ws->hi);
    ws->rows = qc_malloc_array(nx, sizeof *ws->rows);
    if (!ws->lo || !ws->hi || !ws->rows)
        goto fail;
    *out = ws;
    return QC_OK;
fail:
    qc_ba_workspace_free(ws);
    return qc_fail(QC_ENOMEM, "cannot allocate a capacity workspace for %zu x %zu",
                   nx, ny);
}

void qc_ba_workspace_free(qc_ba_workspace *ws)
{
    if (!ws)
        return;
    free(ws->inv_sum);
    free(ws->neg_entropy);
    free(ws->r);
    free(ws->d);
    free(ws->a);
    free(ws->t);
    free(ws->r_best);
    free(ws->a_best);
    free(ws->r_prev);
    free(ws->a_prev);
    free(ws->boost);
    free(ws->trend);
    free(ws->r_lo);
    free(ws->r_hi);
    free(ws->q);
    free(ws->dsum);
    free(ws->logq);
    free(ws->lo);
    free(ws->hi);
    free(ws->rows);
    free(ws->coef);
    qc_ba_workspace_free(ws->sub);
    free(ws->sub_p);
    free(ws->sub_costs);
    free(ws->keep);
    free(ws);
}

void ba_prepare(qc_ba_workspace *ws, const qc_dmc *dmc)
{
    ws->nx = dmc->nx;
    ws->ny = dmc->ny;
    ws->p = dmc->p;
    for (size_t x = 0; x < dmc->nx; x++) {
        const double *row = dmc->p + x * dmc->ny;
        size_t lo = 0, hi = dmc->ny;
        while (lo < hi && row[lo] == 0.0)
            lo++;
        while (hi > lo && row[hi - 1] == 0.0)
            hi--;
        /* the logarithms a block at a time into logq (free here) */
        double sum = 0.0, plogp = 0.0;
        for (size_t b = lo; b < hi; b += ws->ny_max) {
            size_t e = hi - b > ws->ny_max ? b + ws->ny_max : hi;
            qc_log_floored(row + b, ws->logq, e - b, 0.0);
            for (size_t y = b; y < e; y++) {
                sum += row[y];
                plogp += row[y] * ws->logq[y - b];
            }
        }
        /* qc_dmc_check guarantees sum ≥ 1 − QC_DMC_ROW_TOL, so lo < hi. */
        ws->lo[x] = lo;
        ws->hi[x] = hi;
        ws->inv_sum[x] = 1.0 / sum;
        ws->neg_entropy[x] = plogp / sum - log(sum);
    }
}

/* The sweep after a new law is chosen (weights in ws->coef, already
 * divided by the row sums): q, log q and the row sums against log q
 * for the next scores, in one pass (ba_sweep_law). */
static void law_sweep(qc_ba_workspace *ws)
{
    size_t n = 0;
    for (size_t x = 0; x < ws->nx; x++)
        if (ws->coef[x] > 0.0)
            ws->rows[n++] = x;
    ba_sweep_law(ws, ws->rows, n, ws->coef, LOG_Q_FLOOR);
}

/* q = r·P over the renormalized rows, with log q and the row sums. */
static void output_law(qc_ba_workspace *ws)
{
    for (size_t x = 0; x < ws->nx; x++)
        ws->coef[x] = ws->r[x] > 0.0 ? ws->r[x] * ws->inv_sum[x] : 0.0;
    law_sweep(ws);
}

/* How the pass forms the next iterate (see ba_pass). */
typedef struct {
    double mu;     /* step size; 0: no next iterate, scores only        */
    double beta;   /* extrapolation weight                              */
    double floor;  /* log-weight floor below the most probable input    */
    double center; /* objective at the previous iterate; NAN: no tail boost */
} step_rule;

/* The scores at the law ws->r from the row sums of its law sweep:
 * fills d and a. When rule->mu > 0 it also forms the next iterate
 *     log r'(x) = log r(x) + mu·a_x + beta·(log r(x) − log r_prev(x)) + const
 * as log-weights t (r'(x) = exp(t_x − *shift) / returned sum) and the
 * sweep weights r'(x)/rowsum(x) in ws->coef. Inputs in the tail (weight
 * below TAIL_REL of the most probable one) move instead by
 * mu·boost_x·(a_x − center), at most TAIL_STEP nats, where boost_x
 * doubles while the sign of a_x − center persists: they barely touch q,
 * so only their own score drives them, and it can be tiny. */
static double ba_pass(qc_ba_workspace *ws, const ba_tilt *tilt,
                      const step_rule *rule, double *shift)
{
    const size_t nx = ws->nx;
    const double mu = rule->mu, beta = rule->beta;
    /* ws->dsum holds Σ_y P(y|x) log q(y) from the last law sweep */
    for (size_t x = 0; x < nx; x++) {
        double d = ws->neg_entropy[x] - ws->dsum[x] * ws->inv_sum[x];
        ws->d[x] = d;
        ws->a[x] = tilt->costs ? d - tilt->s * (tilt->costs[x] - tilt->budget) : d;
    }
    *shift = 0.0;
    if (!(mu > 0.0))
        return 0.0;
    double m = -INFINITY, t_floor = -INFINITY, tail = 0.0;
    size_t first = 0;
    for (size_t x = 1; x < nx; x++)
        if (ws->r[x] > ws->r[first])
            first = x;
    if (!isnan(rule->center))
        tail = TAIL_REL * ws->r[first];
    /* the most probable input first: its log-weight anchors the floor */
    for (size_t k = 0; k < nx; k++) {
        const size_t x = k == 0 ? first : (k <= first ? k - 1 : k);
        const double a = ws->a[x];
        if (!(ws->r[x] > 0.0)) {
            ws->t[x] = -INFINITY;
            continue;
        }
        double t;
        if (ws->r[x] < tail) {
            double g = a - rule->center, sign = (g > 0.0) - (g < 0.0);
            ws->boost[x] = sign != 0.0 && sign == ws->trend[x]
                               ? fmin(2.0 * ws->boost[x], BOOST_MAX)
                               : 1.0;
            ws->trend[x] = sign;
            double move = fmax(-TAIL_STEP, fmin(TAIL_STEP, mu * ws->boost[x] * g));
            t = log(ws->r[x]) + mu * rule->center + move;
        } else {
            ws->boost[x] = 1.0;
            ws->trend[x] = 0.0;
            const double lr = log(ws->r[x]);
            t = lr + mu * a;
            if (beta > 0.0 && ws->r_prev[x] > 0.0)
                t += beta * (lr - log(ws->r_prev[x]));
        }
        if (k == 0)
            t_floor = t - rule->floor;
        else if (t < t_floor)
            t = t_floor;
        ws->t[x] = t;
        if (t > m)
            m = t;
    }
    /* the next law's weights e^{t_x − m}, normalized and divided by the
     * row sums, for take_step's sweep */
    double wsum = 0.0;
    for (size_t x = 0; x < nx; x++) {
        ws->coef[x] = ws->r[x] > 0.0 ? exp(ws->t[x] - m) : 0.0;
        wsum += ws->coef[x];
    }
    for (size_t x = 0; x < nx; x++)
        ws->coef[x] *= ws->inv_sum[x] / wsum;
    *shift = m;
    return wsum;
}

/* Certified bounds from the scores at r: lower = log Σ r e^{a},
 * upper = max a. The gap −log Σ r e^{a − max} is formed with
 * log1p/expm1 so that small gaps keep their digits. */
static void bounds(const qc_ba_workspace *ws, double *lower, double *upper)
{
    double mx = -INFINITY;
    for (size_t x = 0; x < ws->nx; x++)
        if (ws->a[x] > mx)
            mx = ws->a[x];
    double acc = 0.0;
    for (size_t x = 0; x < ws->nx; x++)
        if (ws->r[x] > 0.0)
            acc += ws->r[x] * expm1(ws->a[x] - mx);
    *upper = mx;
    *lower = mx + log1p(acc);
}

/* ws->r ← exp(t − shift) / wsum, and the law sweep for it. */
static void take_step(qc_ba_workspace *ws, double shift, double wsum)
{
    for (size_t x = 0; x < ws->nx; x++)
        ws->r[x] = exp(ws->t[x] - shift) / wsum;
    law_sweep(ws);
}

/* ws->r ← plain BA step from the law r0 with scores a0: r0·e^{a0},
 * normalized. The caller recomputes ws->q. */
static void plain_step(qc_ba_workspace *ws, const double *r0, const double *a0)
{
    double mx = -INFINITY;
    for (size_t x = 0; x < ws->nx; x++)
        if (r0[x] > 0.0 && a0[x] > mx)
            mx = a0[x];
    double z = 0.0;
    for (size_t x = 0; x < ws->nx; x++) {
        ws->r[x] = r0[x] > 0.0 ? r0[x] * exp(a0[x] - mx) : 0.0;
        z += ws->r[x];
    }
    for (size_t x = 0; x < ws->nx; x++)
        ws->r[x] /= z;
}

/* Directional derivative of the objective at the current iterate along
 * the last step, Σ_x r(x)(a_x − ā)(log r(x) − log r_prev(x)) with
 * ā = Σ r a: the gradient test of O'Donoghue and Candès. Inputs that
 * underflowed to 0 contribute nothing. */
static double ascent_along_last_step(const qc_ba_workspace *ws)
{
    double abar = 0.0, g = 0.0;
    for (size_t x = 0; x < ws->nx; x++)
        if (ws->r[x] > 0.0)
            abar += ws->r[x] * ws->a[x];
    for (size_t x = 0; x < ws->nx; x++)
        if (ws->r[x] > 0.0 && ws->r_prev[x] > 0.0)
            g += ws->r[x] * (ws->a[x] - abar) * (log(ws->r[x]) - log(ws->r_prev[x]));
    return g;
}

void ba_evaluate(qc_ba_workspace *ws, const ba_tilt *tilt, ba_outcome *out)
{
    output_law(ws);
    double shift;
    step_rule scores_only = {0.0, 0.0, INFINITY, NAN};
    ba_pass(ws, tilt, &scores_only, &shift);
    double mi = 0.0, cost = 0.0, mx = -INFINITY;
    for (size_t x = 0; x < ws->nx; x++) {
        if (ws->r[x] > 0.0) {
            mi += ws->r[x] * ws->d[x];
            if (tilt->costs)
                cost += ws->r[x] * tilt->costs[x];
        }
        if (ws->a[x] > mx)
            mx = ws->a[x];
    }
    out->mi = mi > 0.0 ? mi : 0.0;
    out->cost = cost;
    if (mx < out->upper)
        out->upper = mx;
    if (!isfinite(mi) || !isfinite(mx))
        out->failed = 1;
}

void ba_run(qc_ba_workspace *ws, const ba_tilt *tilt, double tol_nats,
            qc_ba_method method, size_t max_iterations, ba_outcome *out)
{
    const int accelerated = method == QC_BA_ACCELERATED;
    double mu = 1.0;          /* step size of the next step              */
    size_t streak = 0;        /* accelerated steps since the last restart */
    int from_plain_step = 1;  /* the current iterate came from a plain step */
    double best_lower = -INFINITY, best_upper = INFINITY;
    double center = NAN;      /* Σ r a at the previous iterate            */
    size_t it = 0;
    int converged = 0, failed = 0;

    if (max_iterations == 0) {
        out->upper = INFINITY;
        out->lower = -INFINITY;
        out->failed = 0;
        ba_evaluate(ws, tilt, out);
        out->iterations = 0;
        out->converged = 0;
        return;
    }
    for (size_t x = 0; x < ws->nx; x++) {
        if (!ws->resume) {
            ws->boost[x] = 1.0;
            ws->trend[x] = 0.0;
        }
        ws->r_best[x] = ws->r[x]; /* in case the first pass fails */
        ws->a_best[x] = 0.0;
    }
    output_law(ws);
    while (it < max_iterations) {
        double step = accelerated ? mu : 1.0;
        double beta = accelerated && streak > 0 ? (streak - 1.0) / (streak + 2.0) : 0.0;
        double shift;
        step_rule rule = {step, beta, accelerated ? FLOOR_NATS : INFINITY,
                          accelerated ? center : NAN};
        double wsum = ba_pass(ws, tilt, &rule, &shift);
        it++;
        double lower, upper;
        bounds(ws, &lower, &upper);
        if (!isfinite(lower) || !isfinite(upper) || !(wsum > 0.0)) {
            failed = 1;
            break;
        }
        if (upper < best_upper)
            best_upper = upper;
        center = 0.0;
        for (size_t x = 0; x < ws->nx; x++)
            if (ws->r[x] > 0.0)
                center += ws->r[x] * ws->a[x];
        if (lower > best_lower || it == 1) {
            best_lower = lower;
            memcpy(ws->r_best, ws->r, ws->nx * sizeof *ws->r);
            memcpy(ws->a_best, ws->a, ws->nx * sizeof *ws->a);
        }
        if (best_upper - best_lower <= tol_nats) {
            converged = 1;
            break;
        }
        if (!accelerated) {
            take_step(ws, shift, wsum);
            continue;
        }
        if (!from_plain_step &&
            lower < best_lower - DROP_TOL * (1.0 + fabs(best_lower))) {
            /* the bound fell: discard this iterate, plain step from the
             * last accepted one (plain BA never lowers the bound) */
            plain_step(ws, ws->r_prev, ws->a_prev);
            output_law(ws);
            mu = 1.0;
            streak = 0;
            from_plain_step = 1;
            continue;
        }
        int restart = streak > 0 && ascent_along_last_step(ws) < 0.0;
        memcpy(ws->r_prev, ws->r, ws->nx * sizeof *ws->r);
        memcpy(ws->a_prev, ws->a, ws->nx * sizeof *ws->a);
        if (restart) {
            /* the last step points downhill here: drop the momentum and
             * the step size, take a plain step from this iterate */
            plain_step(ws, ws->r_prev, ws->a_prev);
            output_law(ws);
            mu = 1.0;
            streak = 0;
            from_plain_step = 1;
            continue;
        }
        from_plain_step = step == 1.0 && beta == 0.0;
        mu = fmin(mu * MU_GROW, MU_MAX);
        streak++;
        take_step(ws, shift, wsum);
    }
    /* Final law: the plain step from the law with the best lower bound;
     * its objective is at least that bound (Blahut 1972). */
    plain_step(ws, ws->r_best, ws->a_best);
    out->upper = best_upper;
    out->lower = best_lower;
    out->failed = failed;
    ba_evaluate(ws, tilt, out);
    out->iterations = it;
    out->converged = converged && !out->failed;
}
