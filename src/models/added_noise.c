/* added_noise.c — a model's output plus independent Gaussian noise: the
 * law a converter sees when its own noise, referred to its input, adds to
 * the receiver's (quantcap/quantizer.h). The law of Y + N, N ~ N(0, σ²),
 * is the convolution of the two laws:
 *   - types with a Gaussian law given x (QC_MODEL_GAUSSIAN_LAW): exact,
 *     the variances add;
 *   - count outputs: exact, P(Y + N < t | x) = Σ_k P(k | x)·Φ((t − k)/σ)
 *     over the counts of the support;
 *   - other continuous laws: the cell masses of the law on a uniform grid
 *     of step h = σ/16 (coarser only when the grid would pass 2^18 cells)
 *     are convolved by FFTW with the masses of a Gaussian on the same grid
 *     of variance σ² − h²/12 (taking each cell's mass at its centre adds
 *     h²/12, Sheppard's correction; W. F. Sheppard, Proc. London Math.
 *     Soc. 29, 1898)
 *     (the convolution theorem with zero padding; Cooley & Tukey, Math.
 *     Comp. 19, 1965; Frigo & Johnson, Proc. IEEE 93(2), 2005), and the
 *     tails are summed from each side, so P(Y + N < t) and P(Y + N ≥ t)
 *     are each accurate down to the FFT's rounding (about 1e-16 of the
 *     largest cell), read between grid points by cubic Hermite
 *     interpolation with central-difference slopes (Catmull–Rom; E.
 *     Catmull and R. Rom, Computer Aided Geometric Design, 1974), held
 *     between its two neighbours so that it stays monotone.
 * Each level's grid is built on first use and kept (a small cache keyed by
 * the level). */
#include "models/model_internal.h"
#include "models/convolve.h"

#include "core/internal.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include <gsl/gsl_cdf.h>
#include <gsl/gsl_randist.h>

#define GRID_PER_SIGMA 16.0       /* grid steps per noise standard deviation */
#define GRID_MAX ((size_t)1 << 18) /* cells of one level's grid at most        */
#define NOISE_REACH 10.0          /* kernel and margins: ±10σ (Q(10) ≈ 8e-24) */
#define SUPPORT_REACH 8.3         /* Q(8.3) ≈ 5e-17, as the Gaussian models   */
#define CACHE 16                  /* levels whose grids are kept             */

typedef struct {
    int used;
    double x;       /* the level                                         */
    double origin;  /* lower boundary of cell 0                          */
    double h;       /* cell width                                        */
    size_t n;       /* cells; boundaries 0..n                            */
    double *below;  /* P(Y + N < boundary j), n + 1 values               */
    double *above;  /* P(Y + N ≥ boundary j), n + 1 values               */
} level_grid;

typedef struct {
    const qc_model *base;
    double sigma;
    level_grid cache[CACHE];
    size_t next;
} noise_state;

static const noise_state *state_of(const qc_model *m) { return m->state; }

static int gaussian_law(const noise_state *s)
{
    return (s->base->type->properties & QC_MODEL_GAUSSIAN_LAW) != 0;
}

static int counts(const noise_state *s) { return s->base->type->output == QC_OUTPUT_COUNTS; }

static void gaussian_of(const noise_state *s, double x, double *mu, double *sd)
{
    double v = 0.0;
    *mu = x;
    if (s->base->type->moments(s->base, x, mu, &v) != QC_OK)
        v = NAN;
    *sd = sqrt(v + s->sigma * s->sigma);
}

/* ---- the grid of one level (continuous laws other than Gaussian) ------- */

static void grid_clear(level_grid *g)
{
    free(g->below);
    free(g->above);
    memset(g, 0, sizeof *g);
}

static qc_status grid_build(const noise_state *s, double x, level_grid *g)
{
    const qc_model *b = s->base;
    double a, z;
    b->type->support(b, x, &a, &z);
    const double sigma = s->sigma;
    const double lo = a - NOISE_REACH * sigma, hi = z + NOISE_REACH * sigma;
    double h = sigma / GRID_PER_SIGMA;
    size_t n = (size_t)ceil((hi - lo) / h);
    if (n > GRID_MAX) {
        n = GRID_MAX;
        h = (hi - lo) / (double)n;
    }
    if (n < 2)
        n = 2;
    size_t D = (size_t)ceil(NOISE_REACH * sigma / h);
    if (D > n)
        D = n;
    const size_t nk = 2 * D + 1, ny = n + nk - 1;
    double *m = qc_malloc_array(n, sizeof *m), *k = qc_malloc_array(nk, sizeof *k);
    double *y = qc_malloc_array(ny, sizeof *y);
    double *below = qc_malloc_array(ny + 1, sizeof *below);
    double *above = qc_malloc_array(ny + 1, sizeof *above);
    qc_conv *conv = NULL;
    qc_status st = QC_OK;
    if (!m || !k || !y || !below || !above) {
        st = qc_fail(QC_ENOMEM, "out of memory");
        goto done;
    }
    /* cell masses of the law, each from the tail where it does not cancel */
    double prev_b = b->type->below(b, x, lo), prev_a = NAN;
    for (size_t i = 0; i < n; i++) {
        double t = lo + (double)(i + 1) * h, v;
        if (isnan(prev_a)) { /* the lower half: P(Y < t) differences */
            double cb = b->type->below(b, x, t);
            if (cb < 0.5) {
                v = cb - prev_b;
                prev_b = cb;
            } else { /* from here on the upper tail: P(Y >= t) differences */
                prev_a = b->type->above(b, x, t - h);
                double ca = b->type->above(b, x, t);
                v = prev_a - ca;
                prev_a = ca;
            }
        } else {
            double ca = b->type->above(b, x, t);
            v = prev_a - ca;
            prev_a = ca;
        }
        m[i] = v > 0.0 ? v : 0.0;
    }
    /* masses of the Gaussian on cells of width h centred on 0, ±h, …, its
     * variance less the h²/12 that the cells' centres add */
    const double sk = sqrt(fmax(sigma * sigma - h * h / 12.0, 0.25 * sigma * sigma));
    for (size_t d = 0; d < nk; d++) {
        double c = ((double)d - (double)D) * h;
        double l = c - 0.5 * h, r = c + 0.5 * h;
        k[d] = c >= 0.0 ? gsl_cdf_gaussian_Q(l, sk) - gsl_cdf_gaussian_Q(r, sk)
                        : gsl_cdf_gaussian_P(r, sk) - gsl_cdf_gaussian_P(l, sk);
    }
    size_t len = qc_conv_good_size(ny);
    if (len == 0) {
        st = qc_fail(QC_ENOMEM, "added noise: grid of %zu cells too long", ny);
        goto done;
    }
    if ((st = qc_conv_alloc(len, &conv)) != QC_OK ||
        (st = qc_conv_linear(conv, m, n, k, nk, y)) != QC_OK)
        goto done;
    /* the sum's cell j covers [lo + (j − D)h, lo + (j − D + 1)h) */
    below[0] = 0.0;
    for (size_t j = 0; j < ny; j++)
        below[j + 1] = below[j] + (y[j] > 0.0 ? y[j] : 0.0);
    above[ny] = 0.0;
    for (size_t j = ny; j-- > 0;)
        above[j] = above[j + 1] + (y[j] > 0.0 ? y[j] : 0.0);
    g->used = 1;
    g->x = x;
    g->origin = lo - (double)D * h;
    g->h = h;
    g->n = ny;
    g->below = below;
    g->above = above;
    below = above = NULL;
done:
    qc_conv_free(conv);
    free(m);
    free(k);
    free(y);
    free(below);
    free(above);
    return st;
}

/* The level's grid (built on first use); NULL when it cannot be built
 * (out of memory: the law then reads as NaN, which the discretizer
 * refuses). The cache is the instance's own: one thread at a time. */
static const level_grid *grid_of(const qc_model *m, double x)
{
    noise_state *s = m->state;
    for (size_t i = 0; i < CACHE; i++)
        if (s->cache[i].used && s->cache[i].x == x)
            return &s->cache[i];
    level_grid *g = &s->cache[s->next];
    s->next = (s->next + 1) % CACHE;
    grid_clear(g);
    return grid_build(s, x, g) == QC_OK ? g : NULL;
}

static double grid_read(const level_grid *g, const double *cdf, double t)
{
    double u = (t - g->origin) / g->h;
    if (!(u > 0.0))
        return cdf[0];
    if (u >= (double)g->n)
        return cdf[g->n];
    size_t j = (size_t)u;
    double f = u - (double)j;
    if (j == 0 || j + 2 > g->n)
        return (1.0 - f) * cdf[j] + f * cdf[j + 1];
    /* Catmull–Rom on j − 1 … j + 2 (linear interpolation would err by
     * F''h²/8, a few 1e-6 at h = σ/16) */
    const double a = cdf[j - 1], b = cdf[j], c = cdf[j + 1], d = cdf[j + 2];
    double v = b + 0.5 * f * (c - a + f * (2.0 * a - 5.0 * b + 4.0 * c - d +
                                           f * (3.0 * (b - c) + d - a)));
    const double lo = fmin(b, c), hi = fmax(b, c);
    return v < lo ? lo : v > hi ? hi : v;
}

/* ---- the law ------------------------------------------------------------ */

static double sum_counts(const noise_state *s, double x, double t, int upper)
{
    const qc_model *b = s->base;
    double a, z;
    b->type->support(b, x, &a, &z);
    double acc = 0.0;
    for (double c = ceil(a); c <= z; c += 1.0) {
        double p = b->type->density(b, x, c);
        if (p > 0.0)
            acc += p * (upper ? gsl_cdf_gaussian_Q(t - c, s->sigma)
                              : gsl_cdf_gaussian_P(t - c, s->sigma));
    }
    return acc;
}

/* The tail below t (upper = 0) or from t up (upper = 1), as the model
 * type's below and above define them. */
static double noise_tail(const qc_model *m, double x, double t, int upper)
{
    const noise_state *s = state_of(m);
    const qc_model *b = s->base;
    if (gaussian_law(s)) {
        double mu, sd;
        gaussian_of(s, x, &mu, &sd);
        return upper ? gsl_cdf_gaussian_Q(t - mu, sd) : gsl_cdf_gaussian_P(t - mu, sd);
    }
    const qc_model_type *bt = b->type;
    if (counts(s))
        return s->sigma > 0.0 ? sum_counts(s, x, t, upper)
                              : (upper ? bt->above : bt->below)(b, x, ceil(t));
    if (!(s->sigma > 0.0))
        return (upper ? bt->above : bt->below)(b, x, t);
    const level_grid *g = grid_of(m, x);
    return g ? grid_read(g, upper ? g->above : g->below, t) : NAN;
}

static double noise_below(const qc_model *m, double x, double t)
{
    return noise_tail(m, x, t, 0);
}

static double noise_above(const qc_model *m, double x, double t)
{
    return noise_tail(m, x, t, 1);
}

static double noise_density(const qc_model *m, double x, double y)
{
    const noise_state *s = state_of(m);
    const qc_model *b = s->base;
    if (gaussian_law(s)) {
        double mu, sd;
        gaussian_of(s, x, &mu, &sd);
        return gsl_ran_gaussian_pdf(y - mu, sd);
    }
    if (!(s->sigma > 0.0))
        return counts(s) ? 0.0 : b->type->density(b, x, y);
    if (counts(s)) {
        double a, z, acc = 0.0;
        b->type->support(b, x, &a, &z);
        for (double c = ceil(a); c <= z; c += 1.0)
            acc += b->type->density(b, x, c) * gsl_ran_gaussian_pdf(y - c, s->sigma);
        return acc;
    }
    const level_grid *g = grid_of(m, x);
    if (!g)
        return NAN;
    double u = (y - g->origin) / g->h;
    if (!(u >= 0.0) || u >= (double)g->n)
        return 0.0;
    size_t j = (size_t)u;
    return (g->below[j + 1] - g->below[j]) / g->h;
}

static void noise_support(const qc_model *m, double x, double *lo, double *hi)
{
    const noise_state *s = state_of(m);
    s->base->type->support(s->base, x, lo, hi);
    *lo -= SUPPORT_REACH * s->sigma;
    *hi += SUPPORT_REACH * s->sigma;
}

static qc_status noise_check_level(const qc_model *m, double x)
{
    const qc_model *b = state_of(m)->base;
    return b->type->check_level ? b->type->check_level(b, x) : QC_OK;
}

static qc_status noise_moments(const qc_model *m, double x, double *mean, double *var)
{
    const noise_state *s = state_of(m);
    double mu, v;
    qc_status st = qc_model_moments(s->base, x, &mu, &v);
    if (st != QC_OK)
        return st;
    *mean = mu;
    *var = v + s->sigma * s->sigma;
    return QC_OK;
}

static void noise_destroy(void *state)
{
    noise_state *s = state;
    if (!s)
        return;
    for (size_t i = 0; i < CACHE; i++)
        grid_clear(&s->cache[i]);
    free(s);
}

/* Not in the registry: made only by qc_model_add_noise, over a model. */
static const qc_model_type added_noise_type = {
    .name = "added-noise",
    .summary = "a model's output plus independent Gaussian noise (a converter's own noise)",
    .output = QC_OUTPUT_REAL,
    .below = noise_below,
    .above = noise_above,
    .density = noise_density,
    .support = noise_support,
    .check_level = noise_check_level,
    .moments = noise_moments,
    .destroy = noise_destroy,
};

/* The same over a Gaussian law given x: the sum is Gaussian given x too
 * (the variances add), which channels with memory need. */
static const qc_model_type added_noise_gaussian_type = {
    .name = "added-noise",
    .summary = "a model's output plus independent Gaussian noise (a converter's own noise)",
    .output = QC_OUTPUT_REAL,
    .properties = QC_MODEL_GAUSSIAN_LAW,
    .below = noise_below,
    .above = noise_above,
    .density = noise_density,
    .support = noise_support,
    .check_level = noise_check_level,
    .moments = noise_moments,
    .destroy = noise_destroy,
};

qc_status qc_model_add_noise(const qc_model *base, double sigma, qc_model **out)
{
    *out = NULL;
    qc_gsl_init();
    if (!base)
        return qc_fail(QC_EINVAL, "added noise: no model given");
    if (!(sigma >= 0.0) || !isfinite(sigma))
        return qc_fail(QC_EINVAL, "added noise: standard deviation must be a finite number "
                                  ">= 0 (got %g)",
                       sigma);
    if ((base->type->properties & QC_MODEL_GAUSSIAN_LAW) && !base->type->moments)
        return qc_fail(QC_EINVAL, "added noise: model '%s' has no moments", base->type->name);
    qc_model *m = calloc(1, sizeof *m);
    noise_state *s = calloc(1, sizeof *s);
    if (!m || !s) {
        free(m);
        free(s);
        return qc_fail(QC_ENOMEM, "out of memory");
    }
    s->base = base;
    s->sigma = sigma;
    m->type = (base->type->properties & QC_MODEL_GAUSSIAN_LAW) ? &added_noise_gaussian_type
                                                                : &added_noise_type;
    m->state = s;
    *out = m;
    return QC_OK;
}
