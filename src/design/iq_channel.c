/* iq_channel.c — the exact transition matrix of a coherent receiver for
 * a two-dimensional constellation in circular Gaussian noise, with an
 * optional residual phase error (Gaussian, or Tikhonov as left by a
 * first-order phase-locked loop: Viterbi, Principles of Coherent
 * Communication, 1966).
 * I/Q pair: the noise is independent across the quadratures, so each
 * rectangular cell's probability is the product of two differences of
 * the Gaussian CDF. Phase noise: y = x·e^{jφ} + n has the law of
 * (x + n)·e^{jφ} (n is circular), so an I/Q cell's probability
 * integrates the rotated point's product probability against p(φ)
 * (iq_phase.c).
 * Polar cells, with or without phase noise: a Fourier series in the
 * angle; without phase noise, far from the origin against σ, the angular
 * integral of the ring's radial law by adaptive quadrature (iq_polar.c). */
#include "design/design_internal.h"
#include "quantcap/iq.h"

#include <gsl/gsl_math.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

const char *qc_iq_kind_name(qc_iq_kind k)
{
    return k == QC_IQ_PRODUCT ? "product" : k == QC_IQ_POLAR ? "polar" : NULL;
}

const char *qc_phase_law_name(qc_phase_law l)
{
    return l == QC_PHASE_GAUSS ? "gauss" : l == QC_PHASE_TIKHONOV ? "tikhonov" : NULL;
}

qc_status qc_iq_kind_parse(const char *name, qc_iq_kind *out)
{
    if (name && strcmp(name, "product") == 0)
        *out = QC_IQ_PRODUCT;
    else if (name && strcmp(name, "polar") == 0)
        *out = QC_IQ_POLAR;
    else
        return qc_fail(QC_EINVAL, "iq-quantizer: unknown receiver '%s' (expected product "
                       "or polar)", name ? name : "");
    return QC_OK;
}

qc_status qc_phase_law_parse(const char *name, qc_phase_law *out)
{
    if (name && strcmp(name, "gauss") == 0)
        *out = QC_PHASE_GAUSS;
    else if (name && strcmp(name, "tikhonov") == 0)
        *out = QC_PHASE_TIKHONOV;
    else
        return qc_fail(QC_EINVAL, "phase-noise-law: unknown law '%s' (expected gauss or "
                       "tikhonov)", name ? name : "");
    return QC_OK;
}

size_t qc_iq_cell_count(const qc_iq_cells *q)
{
    if (!q)
        return 0;
    if (q->kind == QC_IQ_PRODUCT)
        return (q->nti + 1) * (q->ntq + 1);
    if (q->kind == QC_IQ_POLAR)
        return (q->nradii + 1) * q->nphases;
    return 0;
}

static qc_status check_increasing(const char *what, const double *t, size_t n, int positive)
{
    for (size_t k = 0; k < n; k++) {
        if (!isfinite(t[k]) || (positive && !(t[k] > 0.0)))
            return qc_fail(QC_EINVAL, "%s: value %zu is %g (expected a finite number%s)",
                           what, k + 1, t[k], positive ? " > 0" : "");
        if (k > 0 && !(t[k] > t[k - 1]))
            return qc_fail(QC_EINVAL, "%s: values must increase strictly (%zu: %g after %g)",
                           what, k + 1, t[k], t[k - 1]);
    }
    return QC_OK;
}

static qc_status check_cells(const qc_iq_cells *q)
{
    qc_status st;
    if (q->kind == QC_IQ_PRODUCT) {
        if ((st = check_increasing("in-phase thresholds", q->ti, q->nti, 0)) != QC_OK ||
            (st = check_increasing("quadrature thresholds", q->tq, q->ntq, 0)) != QC_OK)
            return st;
    } else if (q->kind == QC_IQ_POLAR) {
        if ((st = check_increasing("amplitude thresholds", q->radii, q->nradii, 1)) != QC_OK)
            return st;
        if (q->nphases < 1)
            return qc_fail(QC_EINVAL, "phase-cells: at least 1 sector is needed");
        if ((st = check_increasing("phase thresholds", q->phases, q->nphases, 0)) != QC_OK)
            return st;
        if (q->nphases > 1 && !(q->phases[q->nphases - 1] < q->phases[0] + 2.0 * M_PI))
            return qc_fail(QC_EINVAL, "phase thresholds: they must span less than one turn "
                           "(%g to %g rad)", q->phases[0], q->phases[q->nphases - 1]);
    } else {
        return qc_fail(QC_EINVAL, "iq-quantizer: unknown receiver kind %d", (int)q->kind);
    }
    size_t k = qc_iq_cell_count(q);
    if (k < 2 || k > QC_IQ_MAX_CELLS)
        return qc_fail(QC_EINVAL, "iq-quantizer: %zu output cells (expected 2 to %d)", k,
                       QC_IQ_MAX_CELLS);
    return QC_OK;
}

/* Per-axis cell probabilities of coordinate v (design_internal.h): the
 * cell [a, b) in noise units has Φ(b) − Φ(a), the difference taken in the
 * tail where it does not cancel (Q(a) − Q(b) when a > 0); both tails of
 * each threshold come from one call where that is exact
 * (qc_normal_tails), and serve the cells on either side of it. */
void qc_iq_axis_probs(double v, double sigma, const double *t, size_t nt, double *out)
{
    double a = -INFINITY, below_a = 0.0, above_a = 1.0;
    for (size_t k = 0; k <= nt; k++) {
        double b = INFINITY, below_b = 1.0, above_b = 0.0;
        if (k < nt) {
            b = (t[k] - v) / sigma;
            qc_normal_tails(b, &below_b, &above_b);
        }
        out[k] = a > 0.0 ? above_a - above_b : below_b - below_a;
        a = b;
        below_a = below_b;
        above_a = above_b;
    }
}

/* Add w × the product-cell probabilities of point (x, y) to row. */
static void product_row(double x, double y, double sigma, const qc_iq_cells *q, double w,
                        double *pi, double *pq, double *row)
{
    qc_iq_axis_probs(x, sigma, q->ti, q->nti, pi);
    qc_iq_axis_probs(y, sigma, q->tq, q->ntq, pq);
    size_t kq = q->ntq + 1;
    for (size_t i = 0; i <= q->nti; i++)
        for (size_t k = 0; k < kq; k++)
            row[i * kq + k] += w * pi[i] * pq[k];
}

/* ---- I/Q cells with phase noise -------------------------------------- */

typedef struct {
    const qc_iq_cells *q;
    double x, y, sigma;
    double *pi, *pq;
} product_ctx;

/* The point rotated by φ: its product-cell probabilities times `weight`
 * into out (the integrand of qc_phase_average_run). */
static void rotated_row(double phi, double weight, void *vctx, double *out)
{
    const product_ctx *c = vctx;
    size_t k = qc_iq_cell_count(c->q);
    memset(out, 0, k * sizeof *out);
    double cs = cos(phi), sn = sin(phi);
    product_row(c->x * cs - c->y * sn, c->x * sn + c->y * cs, c->sigma, c->q, weight, c->pi,
                c->pq, out);
}

/* A computed row: rounding's tiny negatives cleared and the row scaled
 * to sum 1; refused if the sum is off by more than the quadrature allows
 * (row i of the matrix, for the message). */
static qc_status finish_row(double *row, size_t k, size_t i)
{
    /* rounding can leave a sum 1 ± 1e-15 and tiny negatives */
    double sum = 0.0;
    for (size_t y = 0; y < k; y++) {
        row[y] = fmax(row[y], 0.0);
        sum += row[y];
    }
    if (fabs(sum - 1.0) > 1e3 * QC_IQ_QUAD_TOL * (double)k)
        return qc_fail(QC_ENUMERIC, "iq channel: the cells of point %zu sum to %.15g", i + 1,
                       sum);
    for (size_t y = 0; y < k; y++)
        row[y] /= sum;
    return QC_OK;
}

/* What one thread needs to compute rows: the receiver, its scratch, and a
 * phase average or a lane of the polar series. */
typedef struct {
    const qc_plane *c;
    const qc_iq_noise *noise;
    const qc_iq_cells *q;
    double *rays;
    int polar, phased;
    qc_polar_series *lane;
    qc_phase_average *pa;
    double *pi;
    double err; /* the largest error bound of its rows */
} row_ws;

static qc_status row_ws_init(row_ws *w, qc_polar_series *ps, size_t thread)
{
    const qc_iq_cells *q = w->q;
    w->lane = w->polar ? qc_polar_series_lane(ps, thread) : NULL;
    w->pa = NULL;
    w->pi = NULL;
    w->err = 0.0;
    qc_status st = w->phased ? qc_phase_average_alloc(w->noise, qc_iq_cell_count(q), &w->pa)
                             : QC_OK;
    if (st == QC_OK && !w->polar && !(w->pi = qc_malloc_array(q->nti + q->ntq + 2, sizeof *w->pi)))
        st = qc_fail(QC_ENOMEM, "out of memory");
    return st;
}

static void row_ws_free(row_ws *w)
{
    free(w->pi);
    qc_phase_average_free(w->pa);
}

/* Row i into d, normalized. */
static qc_status one_row(row_ws *w, size_t i, qc_dmc *d)
{
    const qc_plane *c = w->c;
    const qc_iq_cells *q = w->q;
    const size_t k = d->ny;
    const double sigma = w->noise->sigma;
    double *row = d->p + i * k;
    qc_status st = QC_OK;
    memset(row, 0, k * sizeof *row);
    if (w->polar) {
        st = qc_polar_row(w->lane, q, c->x[i], c->y[i], sigma, row, &w->err,
                          w->rays ? w->rays + i * k : NULL);
    } else if (!w->phased) {
        product_row(c->x[i], c->y[i], sigma, q, 1.0, w->pi, w->pi + q->nti + 1, row);
    } else {
        product_ctx pc = {q, c->x[i], c->y[i], sigma, w->pi, w->pi + q->nti + 1};
        st = qc_phase_average_run(w->pa, hypot(c->x[i], c->y[i]), sigma, k, rotated_row, &pc,
                                  row, &w->err);
    }
    return st == QC_OK ? finish_row(row, k, i) : st;
}

/* Every row of the matrix d — the I/Q pair's (each row averaged over a
 * phase error if there is one, iq_phase.c), or polar cells' (a series per
 * row, iq_polar.c; rays as qc_iq_channel_rays says) — with *err raised to
 * the largest error bound of a row. The rows are spread over OpenMP
 * threads when the matrix is worth it (its entries, 48 times over where a
 * row takes at least 48 rotations or 32 angles), each thread with its own
 * workspace: scratch and a phase average made here, or lane t of the
 * polar series ps (kept by the caller). A row depends on nothing but its
 * point, so the matrix is the same to the bit on any number of threads. A
 * failure is that of the first failing row, as one thread would report
 * it. */
static qc_status all_rows(const qc_plane *c, const qc_iq_noise *noise, const qc_iq_cells *q,
                          qc_polar_series *ps, double *rays, qc_dmc *d, double *err)
{
    const size_t n = c->size;
    const int polar = q->kind == QC_IQ_POLAR, phased = !polar && noise->phase_sd > 0.0;
    const size_t team = qc_parallel_team((polar || phased ? 48 : 1) * n * d->ny);
    const row_ws proto = {.c = c, .noise = noise, .q = q, .rays = rays, .polar = polar,
                          .phased = phased};
    if (team <= 1) { /* in this thread, without a parallel region's cost */
        row_ws w = proto;
        qc_status st = row_ws_init(&w, ps, 0);
        for (size_t i = 0; st == QC_OK && i < n; i++)
            st = one_row(&w, i, d);
        row_ws_free(&w);
        *err = fmax(*err, w.err);
        return st;
    }
    if (polar && qc_polar_series_lanes(ps, team) != QC_OK)
        return QC_ENOMEM;
    qc_parallel_failure failed;
    qc_parallel_failure_init(&failed, n);
    double worst = 0.0;
#ifdef _OPENMP
#pragma omp parallel num_threads(team) reduction(max : worst)
#endif
    {
        row_ws w = proto;
        const qc_status ready = row_ws_init(&w, ps, qc_parallel_thread());
#ifdef _OPENMP
#pragma omp for schedule(dynamic)
#endif
        for (size_t i = 0; i < n; i++) {
            const qc_status r = ready == QC_OK ? one_row(&w, i, d) : ready;
            if (r != QC_OK)
                qc_parallel_failure_note(&failed, i, r);
        }
        worst = fmax(worst, w.err);
        row_ws_free(&w);
    }
    const qc_status st = qc_parallel_failure_status(&failed);
    if (st == QC_OK)
        *err = fmax(*err, worst);
    return st;
}

/* ---- the matrix ------------------------------------------------------ */

qc_status qc_iq_channel(const qc_plane *c, const qc_iq_noise *noise, const qc_iq_cells *q,
                        qc_dmc **out, double *quad_err)
{
    return qc_iq_channel_rays(c, noise, q, out, quad_err, NULL, NULL);
}

qc_status qc_iq_channel_rays(const qc_plane *c, const qc_iq_noise *noise,
                             const qc_iq_cells *q, qc_dmc **out, double *quad_err,
                             double *rays, qc_polar_series *series)
{
    *out = NULL;
    qc_gsl_init(); /* GSL reports errors by status, never aborts */
    if (!c || !noise || !q)
        return qc_fail(QC_EINVAL, "iq channel: missing constellation, noise or cells");
    if (!(noise->sigma > 0.0) || !isfinite(noise->sigma))
        return qc_fail(QC_EINVAL, "iq channel: sigma must be a number > 0 (got %g)",
                       noise->sigma);
    if (!(noise->phase_sd >= 0.0) || !(noise->phase_sd <= 2.0 * M_PI))
        return qc_fail(QC_EINVAL, "phase-noise-deg: must be from 0 to 360 degrees (got %g)",
                       noise->phase_sd * 180.0 / M_PI);
    qc_status st = check_cells(q);
    if (st != QC_OK)
        return st;
    size_t k = qc_iq_cell_count(q);
    qc_dmc *d = NULL;
    if ((st = qc_dmc_alloc(c->size, k, &d)) != QC_OK)
        return st;
    qc_polar_series *ps = series, *own = NULL; /* the caller's, or one for this matrix */
    if (q->kind == QC_IQ_POLAR && !ps) {
        if ((st = qc_polar_series_alloc(noise, &own)) != QC_OK) {
            qc_dmc_free(d);
            return st;
        }
        ps = own;
    }
    double err = 0.0;
    st = all_rows(c, noise, q, ps, rays, d, &err);
    qc_polar_series_free(own);
    if (st != QC_OK) {
        qc_dmc_free(d);
        return st;
    }
    if (quad_err)
        *quad_err = err;
    *out = d;
    return QC_OK;
}
