/* joint.c — the capacity objective: thresholds and input law together.
 *
 * For fixed thresholds the capacity (or capacity–cost) of the quantized
 * channel comes from the engine (qc_capacity: Blahut 1972, Arimoto 1972,
 * with certified bounds). For designed thresholds, alternate
 *   r ← the engine's capacity-achieving law of the current channel,
 *   t ← the strategy's thresholds for the law r,
 * until the capacity changes by no more than the tolerance (block
 * coordinate ascent; for the optimal and uniform strategies each step
 * cannot lower the rate, since C(t') ≥ I(r, t') ≥ I(r, t) = C(t)). The
 * optimal strategy runs this from three starts — the uniform quantizer,
 * Lloyd–Max, and the DP design for the starting law — and keeps the best.
 * Lloyd–Max does not maximize I, so its alternation keeps the best channel
 * seen. The reported rate and upper bound are the engine's certified
 * bounds for the final channel; the joint optimum itself is not
 * certified (the problem is not concave in the thresholds). */
#include "design/design_internal.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#define JOINT_MAX_ALTERNATIONS 50
#define JOINT_STARTS 3
#define WARM_BLEND 1e-6 /* uniform weight added to a warm start holding zeros */

typedef struct {
    const qc_design_request *req;
    const double *levels;
    size_t nlevels, nt;
    qc_dmc *channel;         /* nlevels × K scratch */
    double *lo, *hi;         /* discretizer scratch */
    qc_ba_workspace *ws;
    qc_ba_options opt;
    double *law;             /* the last capacity-achieving law (warm start) */
    size_t engine_iterations;
    qc_fine_grid grid;       /* optimal: built once, for the uniform law */
} joint;

/* The engine starts from a strictly positive law, but the last optimal law
 * may hold exact zeros (entries that underflowed in Blahut–Arimoto). Such
 * a law is blended with WARM_BLEND of the uniform law before it is used
 * as the next warm start; a positive law is used as it is. */
static void warm_start_positive(double *law, size_t n)
{
    int zero = 0;
    for (size_t x = 0; x < n; x++)
        zero |= !(law[x] > 0.0);
    if (!zero)
        return;
    for (size_t x = 0; x < n; x++)
        law[x] = (1.0 - WARM_BLEND) * fmax(law[x], 0.0) + WARM_BLEND / (double)n;
}

/* Capacity of thresholds t (nats; the engine's lower bound), leaving the
 * optimal law in j->law.
 * QC_ENOCONV from the engine still gives a valid lower bound and is
 * accepted here; the final evaluation reports it. */
static qc_status capacity_of(joint *j, const double *t, double *value)
{
    qc_status st = qc_discretize_into(j->req->model, j->levels, j->nlevels, t, j->nt,
                                      j->lo, j->hi, j->channel);
    if (st != QC_OK)
        return st;
    qc_capacity_result cr;
    warm_start_positive(j->law, j->nlevels);
    j->opt.initial = j->law;
    st = qc_capacity(j->channel, &j->opt, j->ws, &cr, j->law);
    j->engine_iterations += cr.iterations;
    if (st != QC_OK && st != QC_ENOCONV)
        return st;
    *value = cr.capacity_bits / QC_LOG2E;
    return QC_OK;
}

static qc_status mi_objective(void *ctx, const double *t, size_t nt, double *value)
{
    (void)nt;
    return qc_cell_mi_eval(ctx, t, value, NULL);
}

/* The strategy's thresholds for the law `r` (MI objective). Lloyd–Max
 * starts from the thresholds in t when `warm` is set. */
static qc_status thresholds_for(joint *j, qc_quantizer_kind kind, const double *r,
                                int warm, double *t, size_t *iterations)
{
    const qc_design_request *req = j->req;
    size_t it = 0;
    qc_status st;
    if (kind == QC_QUANTIZER_OPTIMAL) {
        st = qc_optimal_thresholds(req->model, j->levels, r, j->nlevels, j->nt,
                                   &j->grid, t, NULL, &it);
    } else if (kind == QC_QUANTIZER_LLOYD_MAX) {
        double *recon = qc_malloc_array(j->nt + 1, sizeof *recon);
        if (!recon)
            return qc_fail(QC_ENOMEM, "out of memory");
        st = qc_lloyd_max(req->model, j->levels, r, j->nlevels, j->nt, warm, t, recon,
                          NULL, &it);
        free(recon);
    } else {
        qc_cell_mi *w;
        st = qc_cell_mi_alloc(req->model, j->levels, r, j->nlevels, j->nt, &w);
        if (st == QC_OK)
            st = qc_uniform_search(req->model, j->levels, j->nlevels, j->nt,
                                   mi_objective, w, t, NULL, &it);
        qc_cell_mi_free(w);
    }
    if (iterations)
        *iterations += it;
    return st;
}

/* Alternate law and thresholds from the thresholds in t; on return t
 * holds the best thresholds met and *best their capacity (nats). */
static qc_status alternate(joint *j, qc_quantizer_kind kind, double *t, double *best,
                           size_t *alternations)
{
    const size_t nt = j->nt;
    const double tol = j->opt.tol_bits / QC_LOG2E;
    double *cand = qc_malloc_array(nt, sizeof *cand);
    double *r = qc_malloc_array(j->nlevels, sizeof *r);
    if (!cand || !r) {
        free(cand);
        free(r);
        return qc_fail(QC_ENOMEM, "out of memory");
    }
    double c;
    qc_status st = capacity_of(j, t, &c);
    *best = c;
    for (size_t a = 0; st == QC_OK && a < JOINT_MAX_ALTERNATIONS; a++) {
        (*alternations)++;
        memcpy(r, j->law, j->nlevels * sizeof *r);
        memcpy(cand, t, nt * sizeof *cand); /* Lloyd–Max warm start */
        st = thresholds_for(j, kind, r, 1, cand, NULL);
        if (st != QC_OK)
            break;
        double cn;
        st = capacity_of(j, cand, &cn);
        if (st != QC_OK)
            break;
        double gain = cn - c;
        if (cn > *best) {
            *best = cn;
            memcpy(t, cand, nt * sizeof *t);
        }
        c = cn;
        if (fabs(gain) <= tol)
            break;
    }
    free(cand);
    free(r);
    return st;
}

qc_status qc_design_capacity(const qc_design_request *req, qc_design_result *res)
{
    const size_t nt = res->nthresholds, nx = res->nlevels;
    joint j = {.req = req, .levels = res->levels, .nlevels = nx, .nt = nt};
    double *start = NULL, *t = NULL, *t_law_uniform = NULL;
    qc_ba_options_default(&j.opt);
    j.opt.tol_bits = res->tol_bits;
    j.opt.costs = req->costs;
    j.opt.budget = req->budget;
    qc_status st = qc_dmc_alloc(nx, nt + 1, &j.channel);
    if (st != QC_OK)
        return st;
    st = qc_ba_workspace_alloc(nx, nt + 1, &j.ws);
    if (st != QC_OK)
        goto done;
    j.lo = qc_malloc_array(nt, sizeof *j.lo);
    j.hi = qc_malloc_array(nt, sizeof *j.hi);
    j.law = qc_malloc_array(nx, sizeof *j.law);
    start = qc_malloc_array(nx, sizeof *start);
    t = qc_malloc_array(nt, sizeof *t);
    t_law_uniform = qc_malloc_array(nx, sizeof *t_law_uniform);
    if (!j.lo || !j.hi || !j.law || !start || !t || !t_law_uniform) {
        st = qc_fail(QC_ENOMEM, "out of memory");
        goto done;
    }
    memcpy(start, res->input, nx * sizeof *start); /* request law or uniform */
    memcpy(j.law, start, nx * sizeof *j.law);

    switch (req->quantizer) {
    case QC_QUANTIZER_FIXED:
        memcpy(res->thresholds, req->thresholds, nt * sizeof *t);
        break;
    case QC_QUANTIZER_UNIFORM:
    case QC_QUANTIZER_LLOYD_MAX: {
        double c;
        st = thresholds_for(&j, req->quantizer, start, 0, res->thresholds, NULL);
        if (st == QC_OK)
            st = alternate(&j, req->quantizer, res->thresholds, &c,
                           &res->design_iterations);
        break;
    }
    case QC_QUANTIZER_OPTIMAL: {
        static const qc_quantizer_kind starts[JOINT_STARTS] = {
            QC_QUANTIZER_UNIFORM, QC_QUANTIZER_LLOYD_MAX, QC_QUANTIZER_OPTIMAL};
        double best = -INFINITY;
        /* One fine grid for every law the alternation visits: built for
         * the uniform law, so that every level has cells around it. */
        for (size_t i = 0; i < nx; i++)
            t_law_uniform[i] = 1.0 / (double)nx;
        size_t n = req->fine_cells ? req->fine_cells : qc_fine_cells_default(nt + 1);
        st = qc_fine_grid_build(req->model, res->levels, t_law_uniform, nx, n, nt + 1,
                                &j.grid);
        if (st != QC_OK)
            break;
        res->fine_cells = j.grid.n;
        for (size_t s = 0; s < JOINT_STARTS && st == QC_OK; s++) {
            double c;
            memcpy(j.law, start, nx * sizeof *j.law);
            st = thresholds_for(&j, starts[s], start, 0, t, NULL);
            if (st == QC_OK)
                st = alternate(&j, QC_QUANTIZER_OPTIMAL, t, &c, &res->design_iterations);
            if (st == QC_OK && c > best) {
                best = c;
                memcpy(res->thresholds, t, nt * sizeof *t);
            }
        }
        break;
    }
    default:
        st = qc_fail(QC_EINVAL, "design: unknown quantizer %d", (int)req->quantizer);
    }
    if (st != QC_OK)
        goto done;

    /* The final channel and its certified bounds. */
    st = qc_discretize(req->model, res->levels, nx, res->thresholds, nt, &res->channel);
    if (st != QC_OK)
        goto done;
    qc_capacity_result cr;
    warm_start_positive(j.law, nx);
    j.opt.initial = j.law;
    st = qc_capacity(res->channel, &j.opt, j.ws, &cr, res->input);
    j.engine_iterations += cr.iterations;
    if (st != QC_OK)
        goto done;
    res->rate_bits = cr.capacity_bits;
    res->upper_bound_bits = cr.upper_bound_bits;
    res->iterations = j.engine_iterations;
done:
    qc_dmc_free(j.channel);
    qc_ba_workspace_free(j.ws);
    free(j.lo);
    free(j.hi);
    free(j.law);
    free(start);
    free(t);
    free(t_law_uniform);
    qc_fine_grid_clear(&j.grid);
    return st;
}
