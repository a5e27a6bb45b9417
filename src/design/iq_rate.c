/* iq_rate.c — rates of a two-dimensional quantized channel: I(X;Y) under
 * the constellation's law, the capacity of the transition matrix by the
 * certified Blahut–Arimoto engine (Blahut 1972, Arimoto 1972), the BICM
 * GMI of the labels (Caire, Taricco, Biglieri, IEEE Trans. IT 1998), and
 * the unquantized MI of the constellation in circular Gaussian noise by a
 * product Gauss–Hermite rule (Abramowitz & Stegun 25.4.46; GSL
 * gsl_integration_fixed), or, for a constellation that factors over its
 * axes (iq_axes.c), as the sum of the two axes' one-dimensional MIs by
 * adaptive quadrature (qc_unquantized_mi). */
#include "design/design_internal.h"
#include "quantcap/iq.h"
#include "quantcap/info.h"
#include "quantcap/capacity.h"
#include "quantcap/figures.h"

#include <gsl/gsl_integration.h>
#include <gsl/gsl_math.h>
#include <math.h>
#include <stdlib.h>

#define EXP_ZERO (-746.0) /* exp(x) is exactly 0 in double below about −745.13 */

#define GH_FIRST 24       /* nodes per axis of the first rule                 */
#define GH_MAX 384        /* most nodes per axis                              */
#define GH_SETTLED 1e-9   /* stop doubling when the MI changes less (bits)    */
#define GH_WORK 4e8       /* most kernel evaluations M^2 n^2 of one rule      */

qc_status qc_iq_rates_compute(const qc_plane *c, const qc_dmc *ch, int want_capacity,
                              double tol_bits, qc_iq_rates *r)
{
    if (!c || !ch || ch->nx != c->size)
        return qc_fail(QC_EINVAL, "iq rates: the matrix does not match the constellation");
    r->gmi_bits = r->ngmi = r->capacity_bits = r->capacity_upper_bits = NAN;
    r->capacity_iterations = 0;
    double nats;
    qc_status st = qc_mutual_information(ch, c->prob, &nats);
    if (st != QC_OK)
        return st;
    r->mi_bits = nats / M_LN2;
    r->entropy_bits = qc_entropy(c->prob, c->size) / M_LN2;
    if (c->labels) {
        if ((st = qc_gmi(ch, c->prob, c->labels, c->nbits, &nats)) != QC_OK)
            return st;
        r->gmi_bits = nats / M_LN2;
        r->ngmi = qc_ngmi(r->gmi_bits, r->entropy_bits, (double)c->nbits);
    }
    if (want_capacity) {
        qc_ba_options opt;
        qc_ba_options_default(&opt);
        if (tol_bits > 0.0)
            opt.tol_bits = tol_bits;
        qc_capacity_result cr;
        if ((st = qc_capacity(ch, &opt, NULL, &cr, NULL)) != QC_OK)
            return st;
        r->capacity_bits = cr.capacity_bits;
        r->capacity_upper_bits = cr.upper_bound_bits;
        r->capacity_iterations = cr.iterations;
    }
    return QC_OK;
}

/* Point i's share of −I times π: E[log2 Σ_j p_j f(y|x_j)/f(y|x_i)] over
 * y given x_i, by the product Gauss–Hermite rule of n × n nodes u and
 * weights wt (whose product sums to π). */
static double gh_point(const qc_plane *c, double sigma, size_t n, const double *u,
                       const double *wt, size_t i)
{
    const double s2 = 2.0 * sigma * sigma;
    double acc = 0.0;
    for (size_t a = 0; a < n; a++)
        for (size_t b = 0; b < n; b++) {
            double yx = c->x[i] + M_SQRT2 * sigma * u[a];
            double yy = c->y[i] + M_SQRT2 * sigma * u[b];
            double di = (yx - c->x[i]) * (yx - c->x[i]) + (yy - c->y[i]) * (yy - c->y[i]);
            double w = wt[a] * wt[b];
            if (w == 0.0)
                continue;
            /* log Σ_j p_j exp(e_j), shifted by the largest e_j; a term
             * whose exponent is below EXP_ZERO adds exactly 0 (exp
             * underflows), so it is not computed */
            double top = 0.0, sum = 0.0;
            for (size_t j = 0; j < c->size; j++) {
                double dx = yx - c->x[j], dy = yy - c->y[j];
                if (c->prob[j] > 0.0)
                    top = fmax(top, -(dx * dx + dy * dy - di) / s2);
            }
            for (size_t j = 0; j < c->size; j++) {
                double dx = yx - c->x[j], dy = yy - c->y[j];
                const double e = -(dx * dx + dy * dy - di) / s2 - top;
                if (e >= EXP_ZERO)
                    sum += c->prob[j] * exp(e);
            }
            acc += w * (log2(sum) + top / M_LN2);
        }
    return acc;
}

/* The unquantized MI by the product Gauss–Hermite rule of n × n nodes.
 * The points' integrals run in OpenMP threads when the work is worth it
 * (points² × nodes² terms), and are added in point order here, so the
 * result is the same to the bit on any number of threads. */
static qc_status gh_mi(const qc_plane *c, double sigma, size_t n, double *mi)
{
    gsl_integration_fixed_workspace *w =
        gsl_integration_fixed_alloc(gsl_integration_fixed_hermite, n, 0.0, 1.0, 0.0, 0.0);
    double *acc = qc_malloc_array(c->size, sizeof *acc);
    if (!w || !acc) {
        if (w)
            gsl_integration_fixed_free(w);
        free(acc);
        return qc_fail(QC_ENOMEM, "out of memory");
    }
    const double *u = gsl_integration_fixed_nodes(w), *wt = gsl_integration_fixed_weights(w);
    const size_t team = qc_parallel_team(c->size * c->size * n * n);
    (void)team; /* unused without OpenMP */
#ifdef _OPENMP
#pragma omp parallel for num_threads(team) if (team > 1) schedule(dynamic)
#endif
    for (size_t i = 0; i < c->size; i++)
        acc[i] = c->prob[i] == 0.0 ? 0.0 : gh_point(c, sigma, n, u, wt, i);
    double total = 0.0;
    for (size_t i = 0; i < c->size; i++)
        if (c->prob[i] != 0.0)
            total += c->prob[i] * acc[i] / M_PI;
    gsl_integration_fixed_free(w);
    free(acc);
    *mi = -total;
    return QC_OK;
}

/* The unquantized MI of a constellation that factors over its axes: the
 * sum of the axes' MIs in Gaussian noise of the given sigma, in bits, and
 * the sum of their error estimates. */
static qc_status axes_mi(const qc_iq_axes *ax, double sigma, double *mi_bits, double *err_bits)
{
    qc_model *m = NULL;
    double ix = NAN, iy = NAN, ex = NAN, ey = NAN;
    qc_status st = qc_model_alloc(&qc_model_gauss, &sigma, &m);
    if (st == QC_OK)
        st = qc_unquantized_mi(m, ax->x, ax->px, ax->nx, &ix, &ex);
    if (st == QC_OK)
        st = qc_unquantized_mi(m, ax->y, ax->py, ax->ny, &iy, &ey);
    qc_model_free(m);
    if (st == QC_OK) {
        *mi_bits = (ix + iy) / M_LN2;
        if (err_bits)
            *err_bits = (ex + ey) / M_LN2;
    }
    return st;
}

qc_status qc_iq_unquantized_mi(const qc_plane *c, double sigma, size_t nodes, double *mi_bits,
                               double *err_bits, size_t *nodes_used)
{
    if (!(sigma > 0.0) || !isfinite(sigma))
        return qc_fail(QC_EINVAL, "unquantized MI: sigma must be a number > 0 (got %g)",
                       sigma);
    if (nodes != 0 && (nodes < 4 || nodes > 400))
        return qc_fail(QC_EINVAL, "unquantized MI: %zu nodes (expected 4 to 400)", nodes);
    if (nodes == 0) { /* axis by axis where the constellation factors */
        qc_iq_axes ax;
        const int product = qc_iq_plane_axes(c, &ax);
        qc_status st = product < 0 ? qc_fail(QC_ENOMEM, "out of memory")
                       : product   ? axes_mi(&ax, sigma, mi_bits, err_bits)
                                   : QC_OK;
        qc_iq_axes_free(&ax);
        if (product != 0) {
            if (st == QC_OK && nodes_used)
                *nodes_used = 0;
            return st;
        }
    }
    double m2 = (double)c->size * (double)c->size, prev = NAN, cur = NAN;
    size_t n = nodes ? nodes / 2 : GH_FIRST;
    qc_status st = gh_mi(c, sigma, n, &prev);
    /* double the rule until it settles or the work budget is spent */
    for (;;) {
        size_t next = 2 * n;
        if (nodes == 0 && m2 * (double)next * (double)next > GH_WORK && n > GH_FIRST / 2)
            break;
        if (st != QC_OK || (st = gh_mi(c, sigma, next, &cur)) != QC_OK)
            return st;
        double change = fabs(cur - prev);
        n = next;
        prev = cur;
        if (err_bits)
            *err_bits = change;
        if (nodes != 0 || change <= GH_SETTLED || n >= GH_MAX)
            break;
    }
    if (nodes_used)
        *nodes_used = n;
    *mi_bits = cur;
    return QC_OK;
}
