/* scale_grid.c — the coarse grid of the automatic MI-optimal search for
 * continuous outputs: cell boundaries at equal steps of the
 * variance-stabilizing coordinate
 *   u(y) = ∫ dy / s(y),
 * s(y) the local noise scale, so that every cell is about the same
 * fraction of the noise there (the transform that makes a location–scale
 * family's noise of constant width: Bartlett, "The use of
 * transformations", Biometrics 3(1), 1947; Anscombe, Biometrika 35,
 * 1948, for Poisson counts).
 *
 * s(y) is taken from the levels sent with positive probability: at each
 * level's mean its standard deviation (the model's moments; without them
 * the support's mid point and its width / 16.6, the ±8.3σ of gauss.c),
 * linear in y between neighbouring means, and beyond the outer means the
 * outer level's σ up to TAIL_FLAT of its σ away, then growing in
 * proportion to the distance (s = d / TAIL_FLAT), so that the far tails,
 * which hold almost no mass and no useful threshold at these sizes, take
 * few cells (the tail beyond 8.3σ takes 2 + 2·ln(8.3/2) ≈ 4.8 units
 * instead of 8.3). On a linear piece s = s_a + k·(y − μ_a) the coordinate
 * is u = ln(1 + k(y − μ_a)/s_a)/k, inverted in closed form, so the grid
 * costs no model evaluation beyond the moments. (Its channel is built by
 * qc_discretize_clipped: a level's far cells, beyond its support, are
 * exactly empty, fine_grid.c.)
 *
 * Size: N = max(COARSE_PER_CELL·K, ⌈c·U⌉) cells, U the width of the
 * output range (the union of the level supports) in u and c = min(4,
 * max(2, K/4)) cells per unit of u (per local σ), at most
 * qc_fine_cells_default(K): the noise sets N when K is small, the
 * resolution when it is large. Two cells per σ tell apart the local
 * maxima of a quantizer with fewer cells than levels (which gaps hold a
 * threshold; one cell per σ lost 0.009 bit on a 1-bit OOK case); with
 * several cells per level (5 bits, 4 to 8 levels) the grid must resolve
 * the quantizer's own cells, hence up to four. The dynamic programme
 * costs about K·(N − K + 1) cell values, each a sum over the λ levels
 * whose support reaches the cell (λ the summed support widths over the
 * output range's width); N is lowered so that K·(N − K + 1)·λ stays
 * within DP_WORK_LIMIT, down to K. That binds only for alphabets of
 * hundreds of levels at high resolution (PAM-4096 at 30 dB has λ ≈ 539:
 * at 10 bits N = 1144 instead of 2048), where the cells are far finer
 * than the noise and the companding start (optimal.c) takes over. */
#include "quantizer/quantizer.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#define COARSE_PER_CELL 2      /* grid cells per quantizer cell, at least */
#define SCALE_CELLS_MIN 2.0 /* grid cells per unit of u (per local σ) at K ≤ 8 … */
#define SCALE_CELLS_MAX 4.0 /* … and at most */
#define SCALE_CELLS_PER_K 0.25 /* … growing as K/4 in between */
#define TAIL_FLAT 2.0          /* σ beyond the outer mean with s constant */
#define SUPPORT_PER_SCALE 16.6 /* support width per σ (gauss.c's ±8.3σ) */
#define DP_WORK_LIMIT 6.7e7    /* K·(N − K + 1)·λ of the dynamic programme */

typedef struct {
    double mu, sd;
} knot;

/* The local scale: knots sorted by mean (distinct means), the support. */
typedef struct {
    size_t n;
    knot *k;
    double lo, hi;
} scale_map;

static int by_mean(const void *a, const void *b)
{
    double x = ((const knot *)a)->mu, y = ((const knot *)b)->mu;
    return (x > y) - (x < y);
}

static qc_status scale_map_build(const qc_model *model, const double *levels,
                                 const double *input, size_t nlevels, scale_map *s)
{
    const qc_model_type *ty = qc_model_get_type(model);
    memset(s, 0, sizeof *s);
    qc_levels_support(model, levels, nlevels, &s->lo, &s->hi);
    if (!(s->hi > s->lo) || !isfinite(s->lo) || !isfinite(s->hi))
        return qc_fail(QC_ENUMERIC, "model '%s' gives an empty output support", ty->name);
    s->k = qc_malloc_array(nlevels ? nlevels : 1, sizeof *s->k);
    if (!s->k)
        return qc_fail(QC_ENOMEM, "out of memory");
    size_t n = 0;
    for (size_t i = 0; i < nlevels; i++) {
        if (!(input[i] > 0.0))
            continue;
        double mean = NAN, var = NAN, a, b;
        ty->support(model, levels[i], &a, &b);
        if (!ty->moments || ty->moments(model, levels[i], &mean, &var) != QC_OK ||
            !isfinite(mean) || !(var > 0.0) || !isfinite(var)) {
            mean = 0.5 * (a + b);
            var = (b - a) / SUPPORT_PER_SCALE;
            var *= var;
        }
        double sd = sqrt(var);
        if (!(sd > 0.0) || !isfinite(sd) || !isfinite(mean))
            continue;
        s->k[n++] = (knot){fmin(fmax(mean, s->lo), s->hi), sd};
    }
    if (n == 0) /* every level narrower than doubles resolve */
        s->k[n++] = (knot){0.5 * (s->lo + s->hi), (s->hi - s->lo) / SUPPORT_PER_SCALE};
    qsort(s->k, n, sizeof *s->k, by_mean);
    size_t m = 0; /* equal means: keep the smaller σ */
    for (size_t i = 0; i < n; i++) {
        if (m > 0 && !(s->k[i].mu > s->k[m - 1].mu))
            s->k[m - 1].sd = fmin(s->k[m - 1].sd, s->k[i].sd);
        else
            s->k[m++] = s->k[i];
    }
    s->n = m;
    return QC_OK;
}

/* u over a distance d ≥ 0 into a tail whose σ at the mean is sd. */
static double tail_u(double d, double sd)
{
    double z = d / sd;
    return z <= TAIL_FLAT ? z : TAIL_FLAT * (1.0 + log(z / TAIL_FLAT));
}

static double tail_d(double u, double sd)
{
    return sd * (u <= TAIL_FLAT ? u : TAIL_FLAT * exp(u / TAIL_FLAT - 1.0));
}

/* u across the piece from knot a to knot b, over the first d of it. */
static double piece_u(const knot *a, const knot *b, double d)
{
    double k = (b->sd - a->sd) / (b->mu - a->mu), x = k * d / a->sd;
    return fabs(x) < 1e-12 ? d / a->sd : log1p(x) / k;
}

static double piece_d(const knot *a, const knot *b, double u)
{
    double k = (b->sd - a->sd) / (b->mu - a->mu), x = k * u;
    return fabs(x) < 1e-12 ? u * a->sd : a->sd * expm1(x) / k;
}

/* Width of the support in u; piece widths into w (n + 1 of them: the
 * lower tail, the n − 1 pieces between knots, the upper tail). */
static double scale_map_width(const scale_map *s, double *w)
{
    const knot *k = s->k;
    const size_t n = s->n;
    double total = 0.0;
    w[0] = tail_u(fmax(0.0, k[0].mu - s->lo), k[0].sd);
    for (size_t i = 0; i + 1 < n; i++)
        w[i + 1] = piece_u(&k[i], &k[i + 1], k[i + 1].mu - k[i].mu);
    w[n] = tail_u(fmax(0.0, s->hi - k[n - 1].mu), k[n - 1].sd);
    for (size_t i = 0; i <= n; i++)
        total += w[i];
    return total;
}

/* Grid cells per unit of u for K cells: min(4, max(2, K/4)). */
static double scale_cells(size_t cells)
{
    double c = SCALE_CELLS_PER_K * (double)cells;
    return c < SCALE_CELLS_MIN ? SCALE_CELLS_MIN : c > SCALE_CELLS_MAX ? SCALE_CELLS_MAX : c;
}

size_t qc_coarse_cells(const qc_model *model, const double *levels, const double *input,
                       size_t nlevels, size_t cells)
{
    size_t cap = qc_fine_cells_default(cells), n = COARSE_PER_CELL * cells;
    scale_map s;
    double *w = NULL, want = NAN;
    if (scale_map_build(model, levels, input, nlevels, &s) == QC_OK &&
        (w = qc_malloc_array(s.n + 1, sizeof *w)) != NULL)
        want = scale_cells(cells) * scale_map_width(&s, w);
    free(w);
    free(s.k);
    if (isfinite(want) && want > (double)n)
        n = want < (double)cap ? (size_t)ceil(want) : cap;
    if (n > cap)
        n = cap;
    /* the DP's work: levels per cell λ from the supports */
    double lo, hi, widths = 0.0;
    qc_levels_support(model, levels, nlevels, &lo, &hi);
    for (size_t x = 0; x < nlevels; x++) {
        double a, b;
        if (!(input[x] > 0.0))
            continue;
        qc_model_get_type(model)->support(model, levels[x], &a, &b);
        if (isfinite(a) && isfinite(b) && b > a)
            widths += fmin(b, hi) - fmax(a, lo);
    }
    const double lambda = hi > lo && isfinite(hi - lo) ? fmax(1.0, widths / (hi - lo)) : 1.0;
    const double room = DP_WORK_LIMIT / ((double)cells * lambda); /* N − K + 1 */
    if ((double)n > (double)cells - 1.0 + room)
        n = cells - 1 + (room >= 1.0 ? (size_t)room : 1);
    return n < cells ? cells : n;
}

qc_status qc_scale_bounds(const qc_model *model, const double *levels, const double *input,
                          size_t nlevels, size_t n, double *out)
{
    if (n < 2)
        return qc_fail(QC_EINVAL, "a coarse grid needs at least 2 cells, not %zu", n);
    scale_map s;
    qc_status st = scale_map_build(model, levels, input, nlevels, &s);
    if (st != QC_OK)
        return st;
    double *w = qc_malloc_array(s.n + 1, sizeof *w);
    if (!w) {
        free(s.k);
        return qc_fail(QC_ENOMEM, "out of memory");
    }
    const double total = scale_map_width(&s, w);
    const knot *k = s.k;
    size_t piece = 0;
    double start = 0.0; /* u at the start of the piece */
    for (size_t i = 1; i < n && st == QC_OK; i++) {
        double u = total * (double)i / (double)n, y;
        while (piece < s.n && u > start + w[piece]) {
            start += w[piece];
            piece++;
        }
        double v = u - start;
        if (piece == 0)
            y = k[0].mu - tail_d(w[0] - v, k[0].sd);
        else if (piece == s.n)
            y = k[s.n - 1].mu + tail_d(v, k[s.n - 1].sd);
        else
            y = k[piece - 1].mu + piece_d(&k[piece - 1], &k[piece], v);
        out[i - 1] = y;
        if (!isfinite(y) || (i > 1 && !(y > out[i - 2])))
            st = qc_fail(QC_ENUMERIC,
                         "coarse grid: boundaries %zu and %zu coincide (%zu cells over "
                         "[%g, %g])",
                         i - 1, i, n, s.lo, s.hi);
    }
    free(w);
    free(s.k);
    return st;
}

qc_status qc_coarse_grid_build(const qc_model *model, const double *levels,
                               const double *input, size_t nlevels, size_t cells,
                               qc_fine_grid *g)
{
    memset(g, 0, sizeof *g);
    if (qc_model_get_type(model)->output != QC_OUTPUT_REAL)
        return qc_fine_grid_build(model, levels, input, nlevels,
                                  qc_fine_cells_default(cells), cells, g);
    if (cells < 2)
        return qc_fail(QC_EINVAL, "a quantizer needs at least 2 cells, not %zu", cells);
    size_t n = qc_coarse_cells(model, levels, input, nlevels, cells);
    double *bounds = qc_malloc_array(n - 1, sizeof *bounds);
    if (!bounds)
        return qc_fail(QC_ENOMEM, "out of memory for a grid of %zu cells", n);
    qc_status st = qc_scale_bounds(model, levels, input, nlevels, n, bounds);
    if (st != QC_OK) {
        free(bounds);
        return st;
    }
    return qc_fine_grid_from_bounds(model, levels, nlevels, bounds, n - 1, 1, g);
}
