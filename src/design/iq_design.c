/* iq_design.c — design of the cells of a two-dimensional receiver: the
 * thresholds of the I/Q pair (one set for both axes or one per axis) and
 * the amplitude and phase boundaries of the polar quantizer, maximizing
 * the MI or the BICM GMI of the exact transition matrix by the
 * Nelder–Mead simplex (Nelder & Mead, Computer J. 1965; GSL nmsimplex2).
 * The boundaries are written as a first value and positive gaps
 * (exponentials), so that every step of the search is a valid quantizer.
 * Both objectives are at most H(X) (the MI of a noiseless channel; the
 * GMI is H(X) less the bits' conditional entropies), so the search ends
 * once it comes within QC_IQ_CEILING_GAP_BITS of it: at high SNR the
 * uniform cells are often there already, and the simplex would only
 * wander on the plateau up to its evaluation cap. */
#include "design/design_internal.h"
#include "quantcap/info.h"
#include "quantcap/iq.h"

#include <gsl/gsl_multimin.h>
#include <gsl/gsl_math.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

#define DEFAULT_EVALS 4000
#define SIMPLEX_STEP 0.3 /* first simplex size in the log-gap parametrization */
#define SIMPLEX_TOL 1e-3 /* stop when the simplex is this small */
#define BAD_POINT 1e6    /* the objective where a channel cannot be built */

void qc_iq_design_result_free(qc_iq_design_result *res)
{
    if (!res)
        return;
    free(res->ti), free(res->tq), free(res->radii), free(res->phases);
    memset(res, 0, sizeof *res);
}

typedef struct {
    const qc_plane *c;
    const qc_iq_noise *noise;
    const qc_iq_design_request *req;
    qc_iq_design_result *res;
    double scale; /* spread of the constellation */
    size_t evals;
    double best;
    double *best_z;
    size_t nz;
} design_ctx;

static double objective_of(const design_ctx *d, const qc_iq_cells *cells, qc_status *st)
{
    qc_dmc *ch = NULL;
    *st = qc_iq_channel(d->c, d->noise, cells, &ch, NULL);
    if (*st != QC_OK)
        return NAN;
    qc_iq_rates r;
    *st = qc_iq_rates_compute(d->c, ch, 0, 0.0, &r);
    qc_dmc_free(ch);
    if (*st != QC_OK)
        return NAN;
    return d->req->objective == QC_OBJECTIVE_GMI ? r.gmi_bits : r.mi_bits;
}

/* Boundaries from the parameters z (into the result's arrays). */
static void unpack(const design_ctx *d, const double *z)
{
    const qc_iq_design_request *q = d->req;
    qc_iq_design_result *r = d->res;
    size_t k = 0;
    if (q->kind == QC_IQ_PRODUCT) {
        size_t ni = q->cells_i - 1, nq = q->cells_q - 1;
        for (size_t j = 0; j < ni; j++, k++)
            r->ti[j] = j == 0 ? d->scale * z[k] : r->ti[j - 1] + d->scale * exp(z[k]);
        if (!q->separate)
            memcpy(r->tq, r->ti, nq * sizeof *r->tq);
        else
            for (size_t j = 0; j < nq; j++, k++)
                r->tq[j] = j == 0 ? d->scale * z[k] : r->tq[j - 1] + d->scale * exp(z[k]);
        return;
    }
    size_t na = q->amplitude_cells - 1, np = q->phase_cells;
    for (size_t j = 0; j < na; j++, k++)
        r->radii[j] = (j == 0 ? 0.0 : r->radii[j - 1]) + d->scale * exp(z[k]);
    double offset = z[k++];
    double w[QC_IQ_MAX_CELLS], sum = 0.0;
    for (size_t p = 0; p < np; p++) {
        w[p] = (p == 0 || q->fixed_phases) ? 1.0 : exp(z[k++]);
        sum += w[p];
    }
    double acc = offset;
    for (size_t p = 0; p < np; p++) {
        r->phases[p] = acc;
        acc += 2.0 * M_PI * w[p] / sum;
    }
}

static double nm_f(const gsl_vector *v, void *vctx)
{
    design_ctx *d = vctx;
    double z[2 * QC_IQ_MAX_CELLS];
    for (size_t i = 0; i < d->nz; i++)
        z[i] = gsl_vector_get(v, i);
    unpack(d, z);
    qc_status st;
    double f = objective_of(d, &d->res->cells, &st);
    d->evals++;
    if (st != QC_OK || !isfinite(f))
        return BAD_POINT;
    if (f > d->best) {
        d->best = f;
        memcpy(d->best_z, z, d->nz * sizeof *z);
    }
    return -f;
}

static qc_status check_request(const qc_iq_design_request *q)
{
    if (q->objective != QC_OBJECTIVE_MI && q->objective != QC_OBJECTIVE_GMI)
        return qc_fail(QC_EINVAL, "iq design: the objective must be mi or gmi");
    if (q->kind == QC_IQ_PRODUCT) {
        if (q->cells_i < 2 || q->cells_q < 2 || q->cells_i * q->cells_q > QC_IQ_MAX_CELLS)
            return qc_fail(QC_EINVAL, "iq design: %zu x %zu cells (expected at least 2 per "
                           "axis, at most %d in all)", q->cells_i, q->cells_q,
                           QC_IQ_MAX_CELLS);
        if (!q->separate && q->cells_i != q->cells_q)
            return qc_fail(QC_EINVAL, "iq design: shared thresholds need the same cells on "
                           "both axes (%zu and %zu)", q->cells_i, q->cells_q);
    } else if (q->kind == QC_IQ_POLAR) {
        if (q->amplitude_cells < 1 || q->phase_cells < 1 ||
            q->amplitude_cells * q->phase_cells < 2 ||
            q->amplitude_cells * q->phase_cells > QC_IQ_MAX_CELLS)
            return qc_fail(QC_EINVAL, "iq design: %zu amplitude x %zu phase cells (expected "
                           "at least 2 cells, at most %d)", q->amplitude_cells,
                           q->phase_cells, QC_IQ_MAX_CELLS);
    } else {
        return qc_fail(QC_EINVAL, "iq design: unknown receiver kind %d", (int)q->kind);
    }
    return QC_OK;
}

/* The uniform start's parameters into z (*nz of them). */
static void uniform_start(const qc_plane *c, const qc_iq_design_request *q, double *scale,
                          double *z, size_t *nz)
{
    double lo_x = INFINITY, hi_x = -INFINITY, lo_y = INFINITY, hi_y = -INFINITY, rmax = 0.0;
    for (size_t i = 0; i < c->size; i++) {
        lo_x = fmin(lo_x, c->x[i]), hi_x = fmax(hi_x, c->x[i]);
        lo_y = fmin(lo_y, c->y[i]), hi_y = fmax(hi_y, c->y[i]);
        rmax = fmax(rmax, hypot(c->x[i], c->y[i]));
    }
    *scale = rmax > 0.0 ? rmax : 1.0;
    size_t k = 0;
    if (q->kind == QC_IQ_PRODUCT) {
        for (int axis = 0; axis < (q->separate ? 2 : 1); axis++) {
            double lo = axis ? lo_y : lo_x, hi = axis ? hi_y : hi_x;
            if (!q->separate)
                lo = fmin(lo_x, lo_y), hi = fmax(hi_x, hi_y);
            size_t kc = axis ? q->cells_q : q->cells_i;
            double span = hi - lo > 0.0 ? hi - lo : *scale;
            double delta = span / (2.0 * (double)(kc - 1));
            double step = (span + 2.0 * delta) / (double)kc;
            z[k++] = (lo - delta + step) / *scale;
            for (size_t j = 1; j + 1 < kc; j++)
                z[k++] = log(step / *scale);
        }
        *nz = k;
        return;
    }
    /* amplitude: midpoints of the distinct radii when there are A of them,
     * else equal rings up to just beyond the largest radius */
    size_t a = q->amplitude_cells;
    double rad[QC_IQ_MAX_CELLS];
    size_t nr = 0;
    for (size_t i = 0; i < c->size && nr <= a; i++) {
        double r = hypot(c->x[i], c->y[i]);
        size_t j = 0;
        while (j < nr && fabs(rad[j] - r) > 1e-9 * *scale)
            j++;
        if (j == nr)
            rad[nr++] = r;
    }
    double bound[QC_IQ_MAX_CELLS];
    if (nr == a && a > 1) {
        for (size_t i = 1; i < nr; i++) /* sort */
            for (size_t j = i; j > 0 && rad[j] < rad[j - 1]; j--) {
                double t = rad[j];
                rad[j] = rad[j - 1];
                rad[j - 1] = t;
            }
        for (size_t j = 0; j + 1 < a; j++)
            bound[j] = 0.5 * (rad[j] + rad[j + 1]);
    } else {
        for (size_t j = 0; j + 1 < a; j++)
            bound[j] = *scale * (1.0 + 0.5 / (double)a) * (double)(j + 1) / (double)a;
    }
    for (size_t j = 0; j + 1 < a; j++)
        z[k++] = log((bound[j] - (j ? bound[j - 1] : 0.0)) / *scale);
    z[k++] = -M_PI / (double)q->phase_cells; /* sector 0 centred on angle 0 */
    if (!q->fixed_phases)
        for (size_t p = 1; p < q->phase_cells; p++)
            z[k++] = 0.0;
    *nz = k;
}

static qc_status alloc_result(const qc_iq_design_request *q, qc_iq_design_result *res)
{
    memset(res, 0, sizeof *res);
    res->cells.kind = q->kind;
    if (q->kind == QC_IQ_PRODUCT) {
        res->ti = qc_malloc_array(q->cells_i, sizeof *res->ti);
        res->tq = qc_malloc_array(q->cells_q, sizeof *res->tq);
        res->cells.ti = res->ti;
        res->cells.nti = q->cells_i - 1;
        res->cells.tq = res->tq;
        res->cells.ntq = q->cells_q - 1;
        if (!res->ti || !res->tq)
            goto oom;
    } else {
        res->radii = qc_malloc_array(q->amplitude_cells, sizeof *res->radii);
        res->phases = qc_malloc_array(q->phase_cells, sizeof *res->phases);
        res->cells.radii = res->radii;
        res->cells.nradii = q->amplitude_cells - 1;
        res->cells.phases = res->phases;
        res->cells.nphases = q->phase_cells;
        if (!res->radii || !res->phases)
            goto oom;
    }
    return QC_OK;
oom:
    qc_iq_design_result_free(res);
    return qc_fail(QC_ENOMEM, "out of memory");
}

static qc_status run(const qc_plane *c, const qc_iq_noise *noise,
                     const qc_iq_design_request *q, qc_iq_design_result *res, int search)
{
    qc_status st = check_request(q);
    if (st != QC_OK)
        return st;
    if (q->objective == QC_OBJECTIVE_GMI && !c->labels)
        return qc_fail(QC_EINVAL, "iq design: the gmi objective needs labels");
    if ((st = alloc_result(q, res)) != QC_OK)
        return st;
    double z[2 * QC_IQ_MAX_CELLS], best_z[2 * QC_IQ_MAX_CELLS];
    design_ctx d = {c, noise, q, res, 1.0, 0, -INFINITY, best_z, 0};
    uniform_start(c, q, &d.scale, z, &d.nz);
    unpack(&d, z);
    double f0 = objective_of(&d, &res->cells, &st);
    if (st != QC_OK) {
        qc_iq_design_result_free(res);
        return st;
    }
    const double ceiling = qc_entropy(c->prob, c->size) / M_LN2;
    res->start_bits = res->objective_bits = f0;
    res->evaluations = 1;
    res->converged = 1;
    if (!search || d.nz == 0)
        return QC_OK;
    res->at_ceiling = f0 >= ceiling - QC_IQ_CEILING_GAP_BITS;
    if (res->at_ceiling)
        return QC_OK;
    d.best = f0;
    memcpy(best_z, z, d.nz * sizeof *z);
    size_t max_evals = q->max_evaluations ? q->max_evaluations : DEFAULT_EVALS;
    gsl_multimin_fminimizer *m =
        gsl_multimin_fminimizer_alloc(gsl_multimin_fminimizer_nmsimplex2, d.nz);
    gsl_vector *x = gsl_vector_alloc(d.nz), *step = gsl_vector_alloc(d.nz);
    if (!m || !x || !step) {
        if (m)
            gsl_multimin_fminimizer_free(m);
        if (x)
            gsl_vector_free(x);
        if (step)
            gsl_vector_free(step);
        qc_iq_design_result_free(res);
        return qc_fail(QC_ENOMEM, "out of memory");
    }
    for (size_t i = 0; i < d.nz; i++) {
        gsl_vector_set(x, i, z[i]);
        gsl_vector_set(step, i, SIMPLEX_STEP);
    }
    gsl_multimin_function fn = {nm_f, d.nz, &d};
    gsl_multimin_fminimizer_set(m, &fn, x, step);
    int settled = 0;
    while (d.evals < max_evals && !settled && d.best < ceiling - QC_IQ_CEILING_GAP_BITS) {
        if (gsl_multimin_fminimizer_iterate(m) != GSL_SUCCESS)
            break; /* no further progress is possible: settled where it stands */
        settled = gsl_multimin_test_size(gsl_multimin_fminimizer_size(m), SIMPLEX_TOL) ==
                  GSL_SUCCESS;
    }
    res->at_ceiling = d.best >= ceiling - QC_IQ_CEILING_GAP_BITS;
    res->converged = settled || res->at_ceiling || d.evals < max_evals;
    gsl_multimin_fminimizer_free(m);
    gsl_vector_free(x);
    gsl_vector_free(step);
    unpack(&d, best_z);
    res->objective_bits = d.best;
    res->evaluations = d.evals + 1;
    return QC_OK;
}

qc_status qc_iq_design(const qc_plane *c, const qc_iq_noise *noise,
                       const qc_iq_design_request *req, qc_iq_design_result *res)
{
    return run(c, noise, req, res, 1);
}

qc_status qc_iq_uniform(const qc_plane *c, const qc_iq_noise *noise,
                        const qc_iq_design_request *req, qc_iq_design_result *res)
{
    return run(c, noise, req, res, 0);
}
