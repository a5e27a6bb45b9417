/* lloyd_max.c — the minimum mean-square-error quantizer of the received
 * signal Y, whose law is the mixture Σ_x r(x) f(y|x) (Lloyd, "Least
 * squares quantization in PCM", IEEE Trans. IT 28(2), 1982; Max,
 * "Quantizing for minimum distortion", IRE Trans. IT 6(1), 1960).
 * Alternate the two optimality conditions: reconstruction points are the
 * conditional means of their cells, thresholds are midpoints between
 * neighbouring reconstruction points. Cell masses come from the model's
 * tail-accurate CDFs. For models whose output given x is Gaussian
 * (QC_MODEL_GAUSSIAN_LAW) the first and second moments have closed forms
 * in the density at the cell's ends (Stein's identity, Stein, Ann. Stat.
 * 9(6), 1981: ∫_a^b (y-μ) f = σ²(f(a) - f(b)), ∫_a^b (y-μ)² f =
 * σ²(P + (a-μ) f(a) - (b-μ) f(b))); for other models adaptive
 * Gauss–Kronrod quadrature (GSL QAGS) of the mixture density about the
 * cell's middle, so that narrow cells do not cancel. Count outputs sum
 * the probability masses instead and keep integer thresholds. Reported
 * next to the MI-optimal design, not used by it. */
#include "quantizer/quantizer.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include <gsl/gsl_errno.h>
#include <gsl/gsl_integration.h>

#define LLOYD_MAX_ITER 5000
#define LLOYD_TOL 1e-12 /* largest threshold move, relative to the support */
#define QUAD_LIMIT 1000
#define QUAD_EPSREL 1e-11
#define MASS_FLOOR 1e-18 /* probability below which a cell's moments may be
                            inaccurate (models resolve ~1e-16) */

typedef struct {
    const qc_model *m;
    const double *levels, *input;
    size_t nlevels;
    double anchor;
    int power;
    qc_dmc *cells;            /* cell masses per level */
    double *lo_s, *hi_s;      /* scratch for qc_discretize_into */
    gsl_integration_workspace *w;
    double lo, hi;            /* support union */
    int gaussian;             /* closed-form moments (QC_MODEL_GAUSSIAN_LAW) */
    double *mu, *var;         /* per level: conditional mean and variance */
    double *fdens;            /* nt × nlevels: density at each threshold */
} lloyd;

static double mixture(const lloyd *L, double y)
{
    double f = 0.0;
    for (size_t i = 0; i < L->nlevels; i++)
        if (L->input[i] > 0.0)
            f += L->input[i] * qc_model_get_type(L->m)->density(L->m, L->levels[i], y);
    return f;
}

static double moment_integrand(double y, void *p)
{
    const lloyd *L = p;
    double d = y - L->anchor;
    return (L->power == 1 ? d : d * d) * mixture(L, y);
}

/* Mass, first and second moments about the anchor of cell [a, b) under
 * the mixture; *anchor is the middle of the cell clipped to the support. */
static qc_status cell_moments(lloyd *L, double a, double b, double mass,
                              double *anchor, double *m1, double *m2)
{
    double ca = fmax(a, L->lo), cb = fmin(b, L->hi);
    *m1 = *m2 = 0.0;
    if (qc_model_get_type(L->m)->output == QC_OUTPUT_COUNTS) {
        /* counts y with a ≤ y < b inside the support */
        double y0 = fmax(0.0, ceil(ca)), y1 = fmin(b - 1.0, floor(L->hi));
        L->anchor = *anchor = y1 >= y0 ? 0.5 * (y0 + y1) : (isfinite(a) ? a : b);
        double s1 = 0.0, s2 = 0.0;
        for (double y = y0; mass > 0.0 && y <= y1; y += 1.0) {
            double f = mixture(L, y), d = y - L->anchor;
            s1 += d * f;
            s2 += d * d * f;
        }
        *m1 = s1;
        *m2 = s2;
        return QC_OK;
    }
    if (!(cb > ca)) {
        *anchor = isfinite(a) ? (isfinite(b) ? 0.5 * (a + b) : a) : b;
        return QC_OK;
    }
    L->anchor = *anchor = 0.5 * (ca + cb);
    if (!(mass > 0.0))
        return QC_OK;
    gsl_function fn = {moment_integrand, L};
    double width = cb - ca, err;
    for (int p = 1; p <= 2; p++) {
        L->power = p;
        double scale = p == 1 ? width : width * width;
        double *out = p == 1 ? m1 : m2;
        /* Relative accuracy for cells with real mass; an absolute floor
         * at MASS_FLOOR, below what the models resolve, for the rest. */
        int rc = gsl_integration_qags(&fn, ca, cb, scale * (1e-14 * mass + MASS_FLOOR),
                                      QUAD_EPSREL, QUAD_LIMIT, L->w, out, &err);
        int usable = rc == GSL_SUCCESS || rc == GSL_EROUND ||
                     ((rc == GSL_EMAXITER || rc == GSL_ESING || rc == GSL_EDIVERGE) &&
                      isfinite(*out) && err <= scale * (1e-8 * mass + 100 * MASS_FLOOR));
        if (!usable)
            return qc_fail(QC_ENUMERIC,
                           "Lloyd-Max: moment %d of the cell [%g, %g) (mass %g) "
                           "failed: %s",
                           p, a, b, mass, gsl_strerror(rc));
    }
    return QC_OK;
}

/* Gaussian conditional laws: the moments about the anchor of cell c of t
 * (ends a, b) from the component masses and the densities at the ends
 * (Stein's identity), each component shifted by d = μ - anchor. */
static void gaussian_moments(const lloyd *L, const double *t, size_t nt, size_t c,
                             double *anchor, double *m1, double *m2)
{
    const size_t K = nt + 1;
    double a = c == 0 ? -INFINITY : t[c - 1], b = c == nt ? INFINITY : t[c];
    double ca = fmax(a, L->lo), cb = fmin(b, L->hi);
    *anchor = cb > ca ? 0.5 * (ca + cb)
                      : (isfinite(a) ? (isfinite(b) ? 0.5 * (a + b) : a) : b);
    double s1 = 0.0, s2 = 0.0;
    for (size_t x = 0; x < L->nlevels; x++) {
        double r = L->input[x], P = L->cells->p[x * K + c];
        if (!(r > 0.0) || !(P > 0.0))
            continue;
        double mu = L->mu[x], v = L->var[x], d = mu - *anchor;
        double fa = c == 0 ? 0.0 : L->fdens[(c - 1) * L->nlevels + x];
        double fb = c == nt ? 0.0 : L->fdens[c * L->nlevels + x];
        double ea = c == 0 ? 0.0 : (a - mu) * fa;
        double eb = c == nt ? 0.0 : (b - mu) * fb;
        double i1 = v * (fa - fb), i2 = fmax(0.0, v * (P + ea - eb));
        s1 += r * (i1 + d * P);
        s2 += r * (i2 + d * (2.0 * i1 + d * P));
    }
    *m1 = s1;
    *m2 = s2;
}

/* Reconstruction points (conditional means) of the cells of t; a cell of
 * zero mass keeps recon[c] if it is finite, else its anchor. *mse (may be
 * NULL) receives the mean-square error about those points. */
static qc_status centroids(lloyd *L, const double *t, size_t nt, double *recon,
                           double *mse)
{
    const size_t K = nt + 1;
    qc_status st = qc_discretize_into(L->m, L->levels, L->nlevels, t, nt, L->lo_s,
                                      L->hi_s, L->cells);
    if (st != QC_OK)
        return st;
    if (L->gaussian) {
        const qc_model_type *ty = qc_model_get_type(L->m);
        for (size_t j = 0; j < nt; j++)
            for (size_t x = 0; x < L->nlevels; x++)
                L->fdens[j * L->nlevels + x] =
                    L->input[x] > 0.0 ? ty->density(L->m, L->levels[x], t[j]) : 0.0;
    }
    double err = 0.0;
    for (size_t c = 0; c < K; c++) {
        double mass = 0.0;
        for (size_t x = 0; x < L->nlevels; x++)
            mass += L->input[x] * L->cells->p[x * K + c];
        double a = c == 0 ? -INFINITY : t[c - 1], b = c == nt ? INFINITY : t[c];
        double anchor, m1, m2;
        if (L->gaussian) {
            gaussian_moments(L, t, nt, c, &anchor, &m1, &m2);
        } else {
            st = cell_moments(L, a, b, mass, &anchor, &m1, &m2);
            if (st != QC_OK)
                return st;
        }
        if (mass > 0.0 && isfinite(m1)) {
            recon[c] = anchor + m1 / mass;
            err += fmax(0.0, m2 - m1 * m1 / mass);
        } else if (!isfinite(recon[c])) {
            recon[c] = anchor;
        }
    }
    if (mse)
        *mse = err;
    return QC_OK;
}

/* New thresholds from reconstruction points; returns the largest move. */
static double midpoints(const lloyd *L, const double *recon, size_t nt, double *t)
{
    const int counts = qc_model_get_type(L->m)->output == QC_OUTPUT_COUNTS;
    double move = 0.0;
    for (size_t j = 0; j < nt; j++) {
        double v = 0.5 * (recon[j] + recon[j + 1]);
        if (counts) {
            v = fmax(1.0, ceil(v));
            if (j > 0 && v <= t[j - 1])
                v = t[j - 1] + 1.0;
        } else if (j > 0 && !(v > t[j - 1])) {
            v = nextafter(t[j - 1], INFINITY);
        }
        move = fmax(move, fabs(v - t[j]));
        t[j] = v;
    }
    return move;
}

qc_status qc_lloyd_max(const qc_model *model, const double *levels,
                       const double *input, size_t nlevels, size_t nt,
                       int warm_start, double *t, double *recon, double *mse,
                       size_t *iterations)
{
    qc_gsl_init();
    const size_t K = nt + 1;
    lloyd L = {model, levels, input, nlevels, 0.0, 1, NULL, NULL, NULL, NULL, 0, 0,
               0, NULL, NULL, NULL};
    const qc_model_type *type = qc_model_get_type(model);
    qc_levels_support(model, levels, nlevels, &L.lo, &L.hi);
    qc_status st = qc_dmc_alloc(nlevels, K, &L.cells);
    if (st != QC_OK)
        return st;
    L.lo_s = qc_malloc_array(K, sizeof *L.lo_s);
    L.hi_s = qc_malloc_array(K, sizeof *L.hi_s);
    L.w = gsl_integration_workspace_alloc(QUAD_LIMIT);
    if (!L.lo_s || !L.hi_s || !L.w) {
        st = qc_fail(QC_ENOMEM, "out of memory");
        goto done;
    }
    if ((type->properties & QC_MODEL_GAUSSIAN_LAW) && type->moments &&
        type->output != QC_OUTPUT_COUNTS) {
        L.gaussian = 1;
        L.mu = qc_malloc_array(nlevels, sizeof *L.mu);
        L.var = qc_malloc_array(nlevels, sizeof *L.var);
        L.fdens = qc_malloc_array(nt > 0 ? nt * nlevels : 1, sizeof *L.fdens);
        if (!L.mu || !L.var || !L.fdens) {
            st = qc_fail(QC_ENOMEM, "out of memory");
            goto done;
        }
        for (size_t x = 0; x < nlevels; x++) {
            st = type->moments(model, levels[x], &L.mu[x], &L.var[x]);
            if (st != QC_OK)
                goto done;
        }
    }
    /* Start: K cells equal in ½·mixture + ½·uniform (fine_grid.c), so
     * that every cell starts with mass; for counts the rounded version. */
    if (warm_start) {
        /* the caller's thresholds */
    } else if (qc_model_get_type(model)->output == QC_OUTPUT_COUNTS) {
        double top = fmax(ceil(L.hi), (double)nt);
        size_t nb = 0;
        st = qc_count_quantiles(model, levels, input, nlevels, top, K, K, t, &nb);
        if (st != QC_OK)
            goto done;
        for (size_t j = nb; j < nt; j++) /* more cells than counts: empty */
            t[j] = (j > 0 ? t[j - 1] : 0.0) + 1.0;
    } else {
        st = qc_blend_quantiles(model, levels, input, nlevels, K, t);
        if (st != QC_OK)
            goto done;
    }
    for (size_t c = 0; c < K; c++)
        recon[c] = NAN;
    const double tol = LLOYD_TOL * (L.hi - L.lo);
    size_t it = 0;
    while (it < LLOYD_MAX_ITER) {
        it++;
        st = centroids(&L, t, nt, recon, NULL);
        if (st != QC_OK)
            goto done;
        double move = midpoints(&L, recon, nt, t);
        if (move <= tol)
            break;
    }
    if (iterations)
        *iterations = it;
    st = centroids(&L, t, nt, recon, mse);
done:
    qc_dmc_free(L.cells);
    free(L.lo_s);
    free(L.hi_s);
    gsl_integration_workspace_free(L.w);
    free(L.mu);
    free(L.var);
    free(L.fdens);
    return st;
}
