/* fine_grid.c — the fine discretization of the receiver output that the
 * MI-optimal quantizer search (dp_optimal.c) groups into K cells.
 *
 * Continuous outputs: N cells whose boundaries are the quantiles of
 * G = ½·(mixture law of Y under the input law) + ½·(uniform law on the
 * union of the level supports). The mixture half puts cells where the
 * probability is; the uniform half keeps cells in the low-density valleys
 * between levels, where MI-optimal thresholds sit at high SNR. The
 * boundaries need only be well spread, not exact quantiles (the DP picks
 * among them and the refinement moves off them): G is tabulated on 2N + 1
 * points and inverted by linear interpolation.
 * This is the grid of a caller-chosen size (`fine-cells`); the automatic
 * grid for continuous outputs is scale_grid.c's (qc_coarse_grid_build).
 * Count outputs: one cell per count of the support (exact: the DP then
 * searches every integer threshold), or rounded quantiles of G when the
 * support is too wide.
 *
 * Also the high-resolution ("companding") start for continuous outputs.
 * Merging the outputs of a narrow cell of width Δ around y loses
 *   f(y)·Δ³·J(y)/24 nats,  J(y) = Var over P(x|y) of ∂/∂y log f(y|x)
 * (second-order expansion of the divergence between the posterior at y
 * and its cell average), so the loss ≈ ∫ f·J·Δ²/24 dy is smallest, for a
 * given number of cells, with thresholds of density ∝ (f·J)^{1/3} — the
 * same variational step as Bennett's companding rule for squared error
 * (Bennett, Bell Syst. Tech. J. 27, 1948; Panter & Dite, Proc. IRE 39,
 * 1951). */
#include "quantizer/quantizer.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#define FINE_WORK_LIMIT ((size_t)1 << 22) /* K·N of the automatic grid */
#define FINE_MIN 4096
#define FINE_PER_CELL 16
#define COUNT_GRID_MIN 65536 /* every count is a cell up to this many */
#define TABLE_PER_CELL 2     /* tabulation points of G per fine cell */
#define SUPPORT_PER_SCALE 16.6 /* support width per standard deviation
                                  (the ±8.3σ of gauss.c) */

size_t qc_fine_cells_default(size_t cells)
{
    size_t n = FINE_PER_CELL * cells;
    if (n < FINE_MIN)
        n = FINE_MIN;
    if (cells * n > FINE_WORK_LIMIT) {
        n = FINE_WORK_LIMIT / cells;
        if (n < cells)
            n = cells;
    }
    return n;
}

double qc_noise_scale(const qc_model *model, const double *levels, const double *input,
                      size_t nlevels)
{
    const qc_model_type *ty = qc_model_get_type(model);
    double s = INFINITY;
    for (size_t i = 0; i < nlevels; i++) {
        if (!(input[i] > 0.0))
            continue;
        double mean, var, sd = NAN;
        if (ty->moments && ty->moments(model, levels[i], &mean, &var) == QC_OK)
            sd = sqrt(var);
        if (!(sd > 0.0) || !isfinite(sd)) {
            double lo, hi;
            ty->support(model, levels[i], &lo, &hi);
            sd = (hi - lo) / SUPPORT_PER_SCALE;
        }
        if (sd > 0.0 && isfinite(sd) && sd < s)
            s = sd;
    }
    if (!isfinite(s)) { /* every level narrower than doubles resolve */
        double lo, hi;
        qc_levels_support(model, levels, nlevels, &lo, &hi);
        s = (hi - lo) / SUPPORT_PER_SCALE;
        if (!(s > 0.0) || !isfinite(s))
            s = 1.0;
    }
    return s;
}

void qc_levels_support(const qc_model *model, const double *levels,
                       size_t nlevels, double *lo, double *hi)
{
    *lo = INFINITY;
    *hi = -INFINITY;
    for (size_t i = 0; i < nlevels; i++) {
        double a, b;
        qc_model_get_type(model)->support(model, levels[i], &a, &b);
        if (a < *lo)
            *lo = a;
        if (b > *hi)
            *hi = b;
    }
}

typedef struct {
    const qc_model *m;
    const double *levels, *input;
    size_t nlevels;
    double lo, hi;
    double target; /* count_quantiles */
} blend;

/* G(y) = ½ Σ r(x) P(Y < y | x) + ½ (y − lo)/(hi − lo). */
static double blend_cdf(const blend *b, double y)
{
    double f = 0.0;
    for (size_t i = 0; i < b->nlevels; i++)
        if (b->input[i] > 0.0)
            f += b->input[i] * qc_model_get_type(b->m)->below(b->m, b->levels[i], y);
    return 0.5 * f + 0.5 * (y - b->lo) / (b->hi - b->lo);
}

qc_status qc_blend_quantiles(const qc_model *model, const double *levels,
                             const double *input, size_t nlevels, size_t n,
                             double *out)
{
    blend b = {model, levels, input, nlevels, 0.0, 0.0, 0.0};
    qc_levels_support(model, levels, nlevels, &b.lo, &b.hi);
    if (!(b.hi > b.lo) || !isfinite(b.lo) || !isfinite(b.hi))
        return qc_fail(QC_ENUMERIC, "model '%s' gives an empty output support",
                       qc_model_get_type(model)->name);
    const size_t m = TABLE_PER_CELL * n + 1;
    const double step = (b.hi - b.lo) / (double)(m - 1);
    double *table = qc_malloc_array(m, sizeof *table);
    if (!table)
        return qc_fail(QC_ENOMEM, "out of memory for a fine grid of %zu cells", n);
    for (size_t k = 0; k < m; k++) {
        table[k] = blend_cdf(&b, b.lo + step * (double)k);
        if (!isfinite(table[k]) || (k > 0 && !(table[k] > table[k - 1]))) {
            free(table);
            return qc_fail(QC_ENUMERIC,
                           "fine grid: the CDF of model '%s' is not increasing "
                           "near %g",
                           qc_model_get_type(model)->name, b.lo + step * (double)k);
        }
    }
    /* G rises by at least step/(2(hi − lo)) per table step, so linear
     * interpolation gives strictly increasing boundaries. */
    size_t k = 0;
    for (size_t i = 1; i < n; i++) {
        double target = table[0] + (table[m - 1] - table[0]) * (double)i / (double)n;
        while (k + 2 < m && table[k + 1] < target)
            k++;
        double u = (target - table[k]) / (table[k + 1] - table[k]);
        out[i - 1] = b.lo + step * ((double)k + fmin(1.0, fmax(0.0, u)));
        if (i > 1 && !(out[i - 1] > out[i - 2])) {
            free(table);
            return qc_fail(QC_ENUMERIC, "fine grid: boundaries %zu and %zu coincide",
                           i - 1, i);
        }
    }
    free(table);
    return QC_OK;
}

/* Count outputs with a support too wide for one cell per count: integer
 * boundaries at the rounded-up quantiles of G (binary search per target);
 * a target that an earlier boundary already passed (a count holding more
 * than 1/n of G) takes the next free count. Returns the number of
 * boundaries in *nb. */
qc_status qc_count_quantiles(const qc_model *model, const double *levels,
                             const double *input, size_t nlevels, double top,
                             size_t n, size_t cells, double *out, size_t *nb)
{
    blend b = {model, levels, input, nlevels, 0.0, top, 0.0};
    size_t k = 0;
    double prev = 0.0;
    for (size_t i = 1; i < n; i++) {
        b.target = (double)i / (double)n;
        /* smallest integer y in (prev, top] with G(y) ≥ target */
        double a = prev, c = top; /* G(a) < target or a = prev; G(c) ≥ target */
        while (c - a > 1.0) {
            double mid = floor(0.5 * (a + c));
            if (blend_cdf(&b, mid) >= b.target)
                c = mid;
            else
                a = mid;
        }
        if (c > prev) {
            out[k++] = c;
            prev = c;
        }
    }
    if (k + 1 < cells && top >= (double)n) {
        /* Too many repeats: fall back to evenly spaced counts. */
        k = n - 1;
        for (size_t i = 0; i < k; i++)
            out[i] = 1.0 + floor((double)i * (top - 1.0) / (double)k);
    }
    *nb = k;
    return QC_OK;
}

qc_status qc_fine_grid_from_bounds(const qc_model *model, const double *levels,
                                   size_t nlevels, double *bounds, size_t nb, int clip,
                                   qc_fine_grid *g)
{
    g->n = nb + 1;
    g->bounds = bounds;
    qc_status st = qc_dmc_alloc(nlevels, g->n, &g->p);
    if (st != QC_OK)
        goto fail;
    double *lo = qc_malloc_array(g->n, sizeof *lo);
    double *hi = qc_malloc_array(g->n, sizeof *hi);
    if (!lo || !hi)
        st = qc_fail(QC_ENOMEM, "out of memory");
    else
        st = (clip ? qc_discretize_clipped : qc_discretize_into)(model, levels, nlevels,
                                                                bounds, nb, lo, hi, g->p);
    free(lo);
    free(hi);
    if (st != QC_OK)
        goto fail;
    return QC_OK;
fail:
    free(bounds);
    qc_dmc_free(g->p);
    memset(g, 0, sizeof *g);
    return st;
}

qc_status qc_fine_grid_build(const qc_model *model, const double *levels,
                             const double *input, size_t nlevels, size_t n,
                             size_t cells, qc_fine_grid *g)
{
    memset(g, 0, sizeof *g);
    if (n < cells || cells < 2)
        return qc_fail(QC_EINVAL,
                       "fine grid of %zu cells is smaller than the %zu quantizer "
                       "cells",
                       n, cells);
    qc_status st = QC_OK;
    size_t nb = 0;
    double *bounds = NULL;
    if (qc_model_get_type(model)->output == QC_OUTPUT_COUNTS) {
        double lo, hi;
        qc_levels_support(model, levels, nlevels, &lo, &hi);
        double top = ceil(hi);
        if (top < (double)(cells - 1))
            top = (double)(cells - 1);
        if (top < 1.0)
            top = 1.0;
        if (!(top < 9e15))
            return qc_fail(QC_EINVAL, "count support up to %g is too wide", hi);
        size_t room = n > COUNT_GRID_MIN ? n : COUNT_GRID_MIN;
        if (top + 1.0 <= (double)room) {
            nb = (size_t)top;
            bounds = qc_malloc_array(nb, sizeof *bounds);
            if (!bounds)
                return qc_fail(QC_ENOMEM, "out of memory");
            for (size_t i = 0; i < nb; i++)
                bounds[i] = (double)(i + 1);
            g->exact = 1;
        } else {
            bounds = qc_malloc_array(n, sizeof *bounds);
            if (!bounds)
                return qc_fail(QC_ENOMEM, "out of memory");
            st = qc_count_quantiles(model, levels, input, nlevels, top, n, cells,
                                    bounds, &nb);
        }
    } else {
        nb = n - 1;
        bounds = qc_malloc_array(nb ? nb : 1, sizeof *bounds);
        if (!bounds)
            return qc_fail(QC_ENOMEM, "out of memory");
        st = qc_blend_quantiles(model, levels, input, nlevels, n, bounds);
    }
    if (st != QC_OK) {
        free(bounds);
        return st;
    }
    return qc_fine_grid_from_bounds(model, levels, nlevels, bounds, nb, 0, g);
}

void qc_fine_grid_clear(qc_fine_grid *g)
{
    if (!g)
        return;
    free(g->bounds);
    qc_dmc_free(g->p);
    memset(g, 0, sizeof *g);
}

/* ---- high-resolution (companding) thresholds ------------------------- */

#define COMPAND_PER_CELL 16
#define COMPAND_MIN 4096
#define COMPAND_MAX ((size_t)1 << 20)
#define COMPAND_FLOOR 1e-3 /* share of a uniform density mixed in */

/* Score ∂/∂y log f(y|x) by a central difference; NAN where f vanishes. */
static double score(const qc_model *m, double x, double y, double d)
{
    double a = qc_model_get_type(m)->density(m, x, y + d), b = qc_model_get_type(m)->density(m, x, y - d);
    if (!(a > 0.0) || !(b > 0.0))
        return NAN;
    return (log(a) - log(b)) / (2.0 * d);
}

/* The companding density's value λ(y) = (f(y)·J(y))^(1/3) at one point:
 * f the mixture density, J the variance of the score over the posterior
 * P(x|y). A level adds only within its support (s0, s1) (beyond it, less
 * than ~1e-15 of its mass: the discretizer's convention); ordered
 * supports: only the run of levels whose support holds y is visited.
 * dens: scratch of nlevels; d: the score's difference step. */
static double mixture_point(const qc_model *model, const double *levels,
                            const double *input, size_t nlevels, const double *s0,
                            const double *s1, int ordered, double y, double d,
                            double *dens)
{
    double f = 0.0, sbar = 0.0, j2 = 0.0;
    size_t x0 = 0, x1 = nlevels;
    if (ordered)
        qc_supports_holding(s0, s1, nlevels, y, 1, &x0, &x1);
    for (size_t x = x0; x < x1; x++) {
        dens[x] = 0.0;
        if (input[x] > 0.0 && y >= s0[x] && y <= s1[x]) {
            dens[x] = qc_model_get_type(model)->density(model, levels[x], y);
            f += input[x] * dens[x];
        }
    }
    if (f > 0.0 && isfinite(f)) {
        double s1sum = 0.0, s2 = 0.0, wsum = 0.0;
        for (size_t x = x0; x < x1; x++) {
            if (!(dens[x] > 0.0))
                continue;
            double p = input[x] * dens[x] / f;
            double s = p > 0.0 ? score(model, levels[x], y, d) : NAN;
            if (!isfinite(s))
                continue;
            wsum += p;
            s1sum += p * s;
            s2 += p * s * s;
        }
        if (wsum > 0.0) {
            sbar = s1sum / wsum;
            j2 = fmax(0.0, s2 / wsum - sbar * sbar);
        }
    }
    return cbrt(f * j2);
}

typedef struct {
    const qc_model *model;
    const double *levels, *input;
    size_t nlevels;
    const double *s0, *s1;
    int ordered;
    double lo, step, d;
    double *lam;
} mixture_ctx;

/* qc_row_fn: λ at grid point i, with the densities in the scratch. */
static int mixture_row(size_t i, double *dens, void *p)
{
    const mixture_ctx *c = p;
    c->lam[i] = mixture_point(c->model, c->levels, c->input, c->nlevels, c->s0, c->s1,
                              c->ordered, c->lo + c->step * (double)i, c->d, dens);
    return 0;
}

qc_status qc_companding_thresholds(const qc_model *model, const double *levels,
                                   const double *input, size_t nlevels, size_t nt,
                                   double *out)
{
    double lo, hi;
    qc_levels_support(model, levels, nlevels, &lo, &hi);
    if (!(hi > lo) || !isfinite(lo) || !isfinite(hi))
        return qc_fail(QC_ENUMERIC, "model '%s' gives an empty output support",
                       qc_model_get_type(model)->name);
    size_t m = COMPAND_PER_CELL * (nt + 1);
    m = m < COMPAND_MIN ? COMPAND_MIN : m > COMPAND_MAX ? COMPAND_MAX : m;
    const double step = (hi - lo) / (double)(m - 1), d = 1e-3 * step;
    double *lam = qc_malloc_array(m, sizeof *lam);
    double *cum = qc_malloc_array(m, sizeof *cum);
    /* per level: its support (s0, s1) */
    double *s0 = qc_malloc_array(2 * nlevels, sizeof *s0);
    if (!lam || !cum || !s0) {
        free(lam);
        free(cum);
        free(s0);
        return qc_fail(QC_ENOMEM, "out of memory");
    }
    double *s1 = s0 + nlevels;
    for (size_t x = 0; x < nlevels; x++)
        qc_model_get_type(model)->support(model, levels[x], &s0[x], &s1[x]);
    const int ordered = qc_supports_ordered(s0, s1, nlevels);
    mixture_ctx mc = {model, levels, input, nlevels, s0, s1, ordered, lo, step, d, lam};
    qc_status st = QC_OK;
    if (qc_parallel_worth(m * nlevels) && qc_model_thread_safe(model)) {
        /* the points of a large mixture in OpenMP threads, each with its
         * own densities; every point is computed as in the serial loop */
        st = qc_parallel_rows(m, nlevels, mixture_row, &mc, NULL);
    } else {
        double *dens = qc_malloc_array(nlevels, sizeof *dens);
        if (!dens)
            st = qc_fail(QC_ENOMEM, "out of memory");
        for (size_t i = 0; i < m && dens; i++)
            mixture_row(i, dens, &mc);
        free(dens);
    }
    if (st != QC_OK) {
        free(lam);
        free(cum);
        free(s0);
        return st;
    }
    st = qc_density_quantiles(lam, cum, m, lo, step, nt, "companding", out);
    free(lam);
    free(cum);
    free(s0);
    return st;
}

qc_status qc_density_quantiles(double *lam, double *cum, size_t m, double lo, double step,
                               size_t nt, const char *who, double *out)
{
    double total = 0.0;
    for (size_t i = 0; i < m; i++) {
        if (!(isfinite(lam[i]) && lam[i] > 0.0))
            lam[i] = 0.0;
        total += lam[i];
    }
    /* mix in a little of the uniform density so that Λ is strictly
     * increasing, then invert the trapezoid cumulative by interpolation */
    double floor_ = COMPAND_FLOOR * (total > 0.0 ? total / (double)m : 1.0);
    cum[0] = 0.0;
    for (size_t i = 1; i < m; i++)
        cum[i] = cum[i - 1] + 0.5 * step * (lam[i - 1] + lam[i] + 2.0 * floor_);
    size_t k = 0;
    for (size_t j = 1; j <= nt; j++) {
        double target = cum[m - 1] * (double)j / (double)(nt + 1);
        while (k + 2 < m && cum[k + 1] < target)
            k++;
        double u = (target - cum[k]) / (cum[k + 1] - cum[k]);
        out[j - 1] = lo + step * ((double)k + fmin(1.0, fmax(0.0, u)));
        if (j > 1 && !(out[j - 1] > out[j - 2]))
            return qc_fail(QC_ENUMERIC,
                           "%s: start thresholds %zu and %zu coincide (%zu cells on a grid "
                           "of %zu)",
                           who, j - 1, j, nt + 1, m);
    }
    return QC_OK;
}
