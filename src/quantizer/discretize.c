/* discretize.c — from a noise model, input levels and thresholds to the
 * transition matrix of the quantized channel, and the mutual information
 * of the unquantized channel (adaptive Gauss–Kronrod quadrature, GSL
 * QAGS) that every quantized rate is compared with. A level whose output
 * support meets no other level's is perfectly distinguishable: its term
 * of I(X;Y) = Σ p_i D(f_i ‖ Σ p_j f_j) is −log p_i, summed exactly; a
 * level whose output is narrower than the resolution of doubles is taken
 * in the noiseless limit (a point mass, distinguishable from every other
 * level), which is flagged. */
#include "quantizer/quantizer.h"

#include <math.h>
#include <stdlib.h>

#include <gsl/gsl_errno.h>
#include <gsl/gsl_integration.h>

qc_status qc_thresholds_check(const qc_model *model, const double *t, size_t n)
{
    for (size_t j = 0; j < n; j++) {
        if (!isfinite(t[j]))
            return qc_fail(QC_EINVAL, "threshold %zu is not a finite number", j + 1);
        if (model && qc_model_get_type(model)->output == QC_OUTPUT_COUNTS) {
            if (t[j] != floor(t[j]))
                return qc_fail(QC_EINVAL,
                               "threshold %zu (%g) must be a whole photon count "
                               "for model '%s'",
                               j + 1, t[j], qc_model_get_type(model)->name);
            if (t[j] < 1.0)
                return qc_fail(QC_EINVAL,
                               "threshold %zu (%g) must be >= 1: counts below 0 "
                               "do not occur",
                               j + 1, t[j]);
        }
        if (j > 0 && !(t[j] > t[j - 1]))
            return qc_fail(QC_EINVAL,
                           "thresholds must be strictly increasing: threshold %zu "
                           "(%.17g) is not above threshold %zu (%.17g)",
                           j + 1, t[j], j, t[j - 1]);
    }
    return QC_OK;
}

/* One row: cell probabilities of level x. `lo`, `hi` are scratch of
 * length n (P(Y < t_j), P(Y ≥ t_j)). */
static qc_status discretize_row(const qc_model *m, double x, const double *t,
                                size_t n, double *lo, double *hi, double *row)
{
    const qc_model_type *type = qc_model_get_type(m);
    for (size_t j = 0; j < n; j++) {
        if (type->tails) {
            type->tails(m, x, t[j], &lo[j], &hi[j]);
        } else {
            lo[j] = type->below(m, x, t[j]);
            hi[j] = type->above(m, x, t[j]);
        }
        if (!isfinite(lo[j]) || !isfinite(hi[j]) || lo[j] < 0.0 || hi[j] < 0.0)
            return qc_fail(QC_ENUMERIC,
                           "model '%s' returned an invalid tail probability at "
                           "level %g, threshold %g",
                           qc_model_get_type(m)->name, x, t[j]);
    }
    for (size_t c = 0; c <= n; c++) {
        double p;
        if (n == 0)
            p = 1.0;
        else if (c == 0)
            p = lo[0];
        else if (c == n)
            p = hi[n - 1];
        else if (hi[c - 1] < lo[c])
            p = hi[c - 1] - hi[c]; /* upper side: both tails small, no cancellation */
        else
            p = lo[c] - lo[c - 1];
        if (p < 0.0) {
            if (p < -1e-12)
                return qc_fail(QC_ENUMERIC,
                               "model '%s' is not monotone at level %g "
                               "(cell %zu has probability %g)",
                               qc_model_get_type(m)->name, x, c + 1, p);
            p = 0.0;
        }
        row[c] = p;
    }
    double s = 0.0;
    for (size_t c = 0; c <= n; c++)
        s += row[c];
    if (!(fabs(s - 1.0) <= QC_DMC_ROW_TOL))
        return qc_fail(QC_ENUMERIC,
                       "model '%s': cell probabilities of level %g sum to %.17g",
                       qc_model_get_type(m)->name, x, s);
    for (size_t c = 0; c <= n; c++)
        row[c] /= s;
    return QC_OK;
}

qc_status qc_discretize_into(const qc_model *model, const double *levels,
                             size_t nlevels, const double *t, size_t n,
                             double *lo, double *hi, qc_dmc *d)
{
    qc_status st = QC_OK;
    for (size_t x = 0; x < nlevels && st == QC_OK; x++)
        st = discretize_row(model, levels[x], t, n, lo, hi, d->p + x * d->ny);
    return st;
}

qc_status qc_discretize(const qc_model *model, const double *levels,
                        size_t nlevels, const double *t, size_t n, qc_dmc **out)
{
    *out = NULL;
    qc_status st = qc_model_check_levels(model, levels, nlevels);
    if (st != QC_OK)
        return st;
    st = qc_thresholds_check(model, t, n);
    if (st != QC_OK)
        return st;
    qc_dmc *d;
    st = qc_dmc_alloc(nlevels, n + 1, &d);
    if (st != QC_OK)
        return st;
    double *lo = qc_malloc_array(n + 1, sizeof *lo);
    double *hi = qc_malloc_array(n + 1, sizeof *hi);
    if (!lo || !hi) {
        st = qc_fail(QC_ENOMEM, "out of memory");
        goto fail;
    }
    st = qc_discretize_into(model, levels, nlevels, t, n, lo, hi, d);
    if (st != QC_OK)
        goto fail;
    free(lo);
    free(hi);
    *out = d;
    return QC_OK;
fail:
    free(lo);
    free(hi);
    qc_dmc_free(d);
    return st;
}

/* ---- unquantized reference ---------------------------------------- */

typedef struct {
    const qc_model *m;
    const double *levels, *input;
    size_t n;
    double x;              /* the level being integrated */
    const double *lo, *hi; /* each level's support (model->type->support) */
    const size_t *order;   /* levels by increasing lo (ties: by index) */
    const double *lo_sorted; /* lo[order[k]]                           */
    double width;          /* largest hi − lo                          */
} mi_ctx;

/* First k with lo_sorted[k] ≥ v (n when none). */
static size_t first_at_or_above(const double *sorted, size_t n, double v)
{
    size_t a = 0, b = n;
    while (a < b) {
        size_t mid = a + (b - a) / 2;
        if (sorted[mid] < v)
            a = mid + 1;
        else
            b = mid;
    }
    return a;
}

/* Whether level i's continuous output is narrower than the resolution of
 * doubles (its support rounds to a point); counts are never such. */
static int point_mass(const mi_ctx *c, size_t i)
{
    return qc_model_get_type(c->m)->output == QC_OUTPUT_REAL && !(c->hi[i] > c->lo[i]);
}

/* f(y|x) log(f(y|x) / Σ r f(y|x')). Levels whose support (all but ~1e-15
 * of their mass) does not hold y are left out of the mixture: their
 * density there is negligible. A support holding y starts in
 * [y − width, y], so with the levels sorted by the start of their support
 * a large alphabet costs O(log levels + overlapping levels) per point
 * instead of O(levels). */
static double mi_term(const mi_ctx *c, double y)
{
    double f = qc_model_get_type(c->m)->density(c->m, c->x, y);
    if (!(f > 0.0))
        return 0.0;
    double mix = 0.0;
    for (size_t k = first_at_or_above(c->lo_sorted, c->n, y - c->width);
         k < c->n && c->lo_sorted[k] <= y; k++) {
        size_t i = c->order[k];
        if (c->input[i] > 0.0 && y <= c->hi[i] && !point_mass(c, i))
            mix += c->input[i] * qc_model_get_type(c->m)->density(c->m, c->levels[i], y);
    }
    if (!(mix > 0.0))
        return 0.0;
    return f * log(f / mix);
}

/* Probability of the point mass at level i's output: the levels whose
 * output rounds to that same point (repeated levels share it). */
static double point_share(const mi_ctx *c, size_t i)
{
    double m = 0.0;
    for (size_t k = first_at_or_above(c->lo_sorted, c->n, c->lo[i]);
         k < c->n && c->lo_sorted[k] <= c->lo[i]; k++) {
        size_t j = c->order[k];
        if (point_mass(c, j) && c->hi[j] == c->hi[i] && c->input[j] > 0.0)
            m += c->input[j];
    }
    return m;
}

/* Whether level i's support meets the support of another level of
 * positive probability. */
static int overlaps_other(const mi_ctx *c, size_t i)
{
    const double lo = c->lo[i], hi = c->hi[i];
    for (size_t k = first_at_or_above(c->lo_sorted, c->n, lo - c->width);
         k < c->n && c->lo_sorted[k] <= hi; k++) {
        size_t j = c->order[k];
        if (j != i && c->input[j] > 0.0 && c->hi[j] >= lo)
            return 1;
    }
    return 0;
}

static double mi_integrand(double y, void *p) { return mi_term(p, y); }

#define UNQ_EPSABS 1e-13
#define UNQ_EPSREL 1e-11
#define UNQ_LIMIT 2000
#define SUPPORT_TAIL 1e-15 /* mass a support may leave out, error of −log p_i */

qc_status qc_unquantized_mi(const qc_model *model, const double *levels,
                            const double *input, size_t nlevels, double *mi_nats,
                            double *abserr_nats)
{
    return qc_unquantized_mi_detail(model, levels, input, nlevels, mi_nats, abserr_nats,
                                    NULL);
}

qc_status qc_unquantized_mi_detail(const qc_model *model, const double *levels,
                                   const double *input, size_t nlevels, double *mi_nats,
                                   double *abserr_nats, int *noiseless)
{
    qc_gsl_init();
    if (noiseless)
        *noiseless = 0;
    qc_status st = qc_model_check_levels(model, levels, nlevels);
    if (st != QC_OK)
        return st;
    double *sup = qc_malloc_array(3 * nlevels, sizeof *sup);
    size_t *order = qc_malloc_array(nlevels, sizeof *order);
    if (!sup || !order) {
        free(sup);
        free(order);
        return qc_fail(QC_ENOMEM, "out of memory");
    }
    double width = 0.0;
    for (size_t i = 0; i < nlevels; i++) {
        qc_model_get_type(model)->support(model, levels[i], &sup[i], &sup[nlevels + i]);
        width = fmax(width, sup[nlevels + i] - sup[i]);
    }
    st = qc_sort_order(sup, nlevels, order); /* by where each support starts */
    if (st != QC_OK) {
        free(sup);
        free(order);
        return st;
    }
    for (size_t k = 0; k < nlevels; k++)
        sup[2 * nlevels + k] = sup[order[k]];
    mi_ctx c = {model, levels, input, nlevels, 0.0, sup, sup + nlevels,
                order, sup + 2 * nlevels, width};
    double total = 0.0, err = 0.0;
    gsl_integration_workspace *w = NULL;
    if (qc_model_get_type(model)->output == QC_OUTPUT_REAL) {
        w = gsl_integration_workspace_alloc(UNQ_LIMIT);
        if (!w) {
            free(sup);
            free(order);
            return qc_fail(QC_ENOMEM, "out of memory");
        }
    }
    for (size_t i = 0; i < nlevels; i++) {
        if (input[i] <= 0.0)
            continue;
        c.x = levels[i];
        double lo = sup[i], hi = sup[nlevels + i], val = 0.0, e = 0.0;
        if (point_mass(&c, i)) {
            /* x ± the spread rounds to x: the noiseless limit, a point
             * mass that only repeats of the level share (a continuous
             * output puts no mass on it), so D(f_i ‖ mixture) = −log of
             * the point's probability. */
            val = -log(point_share(&c, i));
            if (noiseless)
                *noiseless = 1;
        } else if (!overlaps_other(&c, i)) {
            val = -log(input[i]); /* perfectly distinguishable */
            e = SUPPORT_TAIL / input[i];
        } else if (qc_model_get_type(model)->output == QC_OUTPUT_COUNTS) {
            double a = fmax(0.0, floor(lo)), b = ceil(hi);
            if (b - a > 1e8) {
                st = qc_fail(QC_ENUMERIC, "count range %g..%g too wide to sum", a, b);
                break;
            }
            for (double y = a; y <= b; y += 1.0)
                val += mi_term(&c, y);
            e = 1e-15 * (b - a + 1.0);
        } else {
            gsl_function fn = {mi_integrand, &c};
            int rc = gsl_integration_qags(&fn, lo, hi, UNQ_EPSABS, UNQ_EPSREL,
                                          UNQ_LIMIT, w, &val, &e);
            if (rc != GSL_SUCCESS && rc != GSL_EROUND) {
                st = qc_fail(QC_ENUMERIC,
                             "quadrature of the unquantized rate failed at level "
                             "%g: %s",
                             levels[i], gsl_strerror(rc));
                break;
            }
        }
        total += input[i] * val;
        err += input[i] * e;
    }
    gsl_integration_workspace_free(w);
    free(sup);
    free(order);
    if (st != QC_OK)
        return st;
    if (!isfinite(total))
        return qc_fail(QC_ENUMERIC, "unquantized rate is not finite");
    *mi_nats = total > 0.0 ? total : 0.0;
    if (abserr_nats)
        *abserr_nats = err;
    return QC_OK;
}
