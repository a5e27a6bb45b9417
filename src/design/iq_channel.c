/* iq_channel.c — the exact transition matrix of a coherent receiver for
 * a two-dimensional constellation in circular Gaussian noise, with an
 * optional residual phase error (Gaussian, or Tikhonov as left by a
 * first-order phase-locked loop: Viterbi, Principles of Coherent
 * Communication, 1966).
 * I/Q pair: the noise is independent across the quadratures, so each
 * rectangular cell's probability is the product of two differences of
 * the Gaussian CDF. Phase noise: y = x·e^{jφ} + n has the law of
 * (x + n)·e^{jφ} (n is circular), so an I/Q cell's probability
 * integrates the rotated point's product probability against p(φ): by
 * Gauss–Hermite rules of doubling size for a Gaussian error that spans
 * at most GH_MAX_SPREAD angular widths of the noise, else by composite
 * Gauss–Legendre quadrature (GSL glfixed) refined by panel doubling.
 * Polar cells, with or without phase noise: a Fourier series in the
 * angle; without phase noise, far from the origin against σ, the angular
 * integral of the ring's radial law by adaptive quadrature (iq_polar.c). */
#include "design/design_internal.h"
#include "quantcap/iq.h"

#include <gsl/gsl_cdf.h>
#include <gsl/gsl_integration.h>
#include <gsl/gsl_sf_bessel.h>
#include <gsl/gsl_math.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

#define GL_NODES 20         /* Gauss–Legendre points per panel               */
#define MIN_LEVEL 2         /* first refinement: 2^2 panels                  */
#define MAX_LEVEL 16        /* last refinement: 2^16 panels                  */
#define PN_WINDOW_SD 12.0   /* phase-noise integrals over ±12 s (tail e^-72) */
#define PEAK_PANELS 2.0     /* panels per characteristic width at the start  */
#define GH_FIRST 16         /* Gaussian phase error: first Gauss–Hermite rule */
#define GH_LEVELS 7         /* rules of 16, 32, …, 1024 nodes, then panels   */
#define GH_MAX_SPREAD 6.0   /* Gauss–Hermite tried while sd·|x|/σ ≤ 6 (the
                               error's spread in the noise's angular widths;
                               1024 nodes settle it up to about 6)          */

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

/* Φ(b) − Φ(a) for a ≤ b, each difference taken in the tail where it does
 * not cancel. */
static double phi_diff(double a, double b)
{
    if (a > 0.0)
        return gsl_cdf_ugaussian_Q(a) - gsl_cdf_ugaussian_Q(b);
    return gsl_cdf_ugaussian_P(b) - gsl_cdf_ugaussian_P(a);
}

/* Per-axis cell probabilities of coordinate v (design_internal.h). */
void qc_iq_axis_probs(double v, double sigma, const double *t, size_t nt, double *out)
{
    double lo = -INFINITY;
    for (size_t k = 0; k <= nt; k++) {
        double hi = k < nt ? t[k] : INFINITY;
        out[k] = phi_diff((lo - v) / sigma, (hi - v) / sigma);
        lo = hi;
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

/* ---- vector quadrature: composite Gauss–Legendre, panel doubling ---- */

typedef void (*vfun)(double t, void *ctx, double *out); /* out: nvec values */

typedef struct {
    gsl_integration_glfixed_table *gl;
    double *acc, *prev, *val;
    size_t nvec;
} vquad;

/* Whether the last refinement (acc against prev) moved no component by
 * more than QC_IQ_QUAD_TOL; then acc is added to out and *err raised to
 * that change. */
static int settled(const vquad *v, double *out, double *err)
{
    double d = 0.0;
    for (size_t c = 0; c < v->nvec; c++)
        d = fmax(d, fabs(v->acc[c] - v->prev[c]));
    if (!(d <= QC_IQ_QUAD_TOL))
        return 0;
    for (size_t c = 0; c < v->nvec; c++)
        out[c] += v->acc[c];
    *err = fmax(*err, d);
    return 1;
}

/* ∫_lo^hi f over nvec components into out (added). Starts at
 * max(2^MIN_LEVEL, (hi − lo)/width·PEAK_PANELS) panels. */
static qc_status vquad_run(vquad *v, vfun f, void *ctx, double lo, double hi, double width,
                           double *out, double *err)
{
    if (!(hi > lo))
        return QC_OK;
    size_t panels = (size_t)1 << MIN_LEVEL;
    double want = (hi - lo) / width * PEAK_PANELS;
    while ((double)panels < want && panels < ((size_t)1 << (MAX_LEVEL - 2)))
        panels *= 2;
    int have_prev = 0;
    for (; panels <= ((size_t)1 << MAX_LEVEL); panels *= 2) {
        memset(v->acc, 0, v->nvec * sizeof *v->acc);
        double h = (hi - lo) / (double)panels;
        for (size_t p = 0; p < panels; p++) {
            double a = lo + h * (double)p, b = a + h;
            for (size_t k = 0; k < GL_NODES; k++) {
                double xk, wk;
                gsl_integration_glfixed_point(a, b, k, &xk, &wk, v->gl);
                f(xk, ctx, v->val);
                for (size_t c = 0; c < v->nvec; c++)
                    v->acc[c] += wk * v->val[c];
            }
        }
        if (have_prev && settled(v, out, err))
            return QC_OK;
        memcpy(v->prev, v->acc, v->nvec * sizeof *v->acc);
        have_prev = 1;
    }
    return qc_fail(QC_ENOCONV, "iq channel: the quadrature did not settle within %g with "
                   "%d panels", QC_IQ_QUAD_TOL, 1 << MAX_LEVEL);
}

/* ∫ f(φ) N(φ; 0, sd²) dφ over nvec components into out (added), by
 * Gauss–Hermite rules (GSL gsl_integration_fixed; Golub & Welsch, Math.
 * Comp. 23, 1969) of 16, 32, … nodes until no component changes by more
 * than QC_IQ_QUAD_TOL; 0 (out untouched) when 1024 nodes do not settle
 * it (a phase error wide against the noise's angular width σ/|x|: then
 * vquad_run, which is also used beyond GH_MAX_SPREAD such widths). The
 * nodes needed grow about as 32·(sd·|x|/σ)². rules[l] holds the rule of
 * 16·2^l nodes once made. */
static int gh_run(gsl_integration_fixed_workspace **rules, vquad *v, vfun f, void *ctx,
                  double sd, double *out, double *err)
{
    for (int l = 0; l < GH_LEVELS; l++) {
        size_t n = (size_t)GH_FIRST << l;
        if (!rules[l] && !(rules[l] = gsl_integration_fixed_alloc(
                               gsl_integration_fixed_hermite, n, 0.0, 1.0, 0.0, 0.0)))
            return 0;
        const double *t = gsl_integration_fixed_nodes(rules[l]);
        const double *w = gsl_integration_fixed_weights(rules[l]);
        memset(v->acc, 0, v->nvec * sizeof *v->acc);
        for (size_t i = 0; i < n; i++) { /* φ = √2·sd·t, weight w/√π */
            const double wi = w[i] / M_SQRTPI;
            f(M_SQRT2 * sd * t[i], ctx, v->val);
            for (size_t c = 0; c < v->nvec; c++)
                v->acc[c] += wi * v->val[c];
        }
        if (l > 0 && settled(v, out, err))
            return 1;
        memcpy(v->prev, v->acc, v->nvec * sizeof *v->acc);
    }
    return 0;
}

/* ---- phase noise ----------------------------------------------------- */

typedef struct {
    const qc_iq_noise *noise;
    double kappa, vm_norm; /* Tikhonov: κ and 1/(2π I0(κ) e^{−κ})           */
    double window;         /* integrate φ over [−window, window]            */
} phase_noise;

static double pn_density(const phase_noise *pn, double phi)
{
    double s = pn->noise->phase_sd;
    if (pn->noise->phase_law == QC_PHASE_TIKHONOV) {
        /* cos φ − 1 = −2 sin²(φ/2), without cancellation at large κ */
        double h = sin(0.5 * phi);
        return pn->vm_norm * exp(-2.0 * pn->kappa * h * h);
    }
    return exp(-0.5 * (phi / s) * (phi / s)) / (s * sqrt(2.0 * M_PI));
}

static void pn_init(phase_noise *pn, const qc_iq_noise *noise)
{
    memset(pn, 0, sizeof *pn);
    pn->noise = noise;
    double s = noise->phase_sd;
    pn->window = fmin(M_PI, PN_WINDOW_SD * s);
    if (noise->phase_law == QC_PHASE_GAUSS && s * PN_WINDOW_SD > M_PI)
        pn->window = PN_WINDOW_SD * s; /* unwrapped Gaussian on the real line */
    if (noise->phase_law != QC_PHASE_TIKHONOV)
        return;
    pn->kappa = 1.0 / (s * s);
    pn->vm_norm = 1.0 / (2.0 * M_PI * gsl_sf_bessel_I0_scaled(pn->kappa));
}

/* ---- I/Q cells with phase noise -------------------------------------- */

typedef struct {
    const qc_iq_cells *q;
    double x, y, sigma;
    const phase_noise *pn;
    double *pi, *pq;
} product_ctx;

/* The point rotated by φ: its product-cell probabilities times `weight`
 * into out. */
static void rotated_row(const product_ctx *c, double phi, double weight, double *out)
{
    size_t k = qc_iq_cell_count(c->q);
    memset(out, 0, k * sizeof *out);
    double cs = cos(phi), sn = sin(phi);
    product_row(c->x * cs - c->y * sn, c->x * sn + c->y * cs, c->sigma, c->q, weight, c->pi,
                c->pq, out);
}

/* The integrand over φ: the rotated point's probabilities times p(φ). */
static void product_pn(double phi, void *vctx, double *out)
{
    const product_ctx *c = vctx;
    rotated_row(c, phi, pn_density(c->pn, phi), out);
}

/* The rotated point's product-cell probabilities alone (the phase
 * error's Gaussian weight is the Gauss–Hermite rule's). */
static void product_rotated(double phi, void *vctx, double *out)
{
    rotated_row(vctx, phi, 1.0, out);
}

/* ---- the matrix ------------------------------------------------------ */

qc_status qc_iq_channel(const qc_plane *c, const qc_iq_noise *noise, const qc_iq_cells *q,
                        qc_dmc **out, double *quad_err)
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
    phase_noise pn;
    int with_pn = noise->phase_sd > 0.0;
    if (with_pn)
        pn_init(&pn, noise);
    qc_polar_series *ps = NULL;
    if (q->kind == QC_IQ_POLAR && (st = qc_polar_series_alloc(noise, &ps)) != QC_OK) {
        qc_dmc_free(d);
        return st;
    }
    size_t nmax = q->nti + q->ntq + 2 + q->nradii + 1;
    double *pi = qc_malloc_array(nmax, sizeof *pi), *pq = pi ? pi + q->nti + 1 : NULL;
    vquad v = {gsl_integration_glfixed_table_alloc(GL_NODES), qc_malloc_array(k, sizeof(double)),
               qc_malloc_array(k, sizeof(double)), qc_malloc_array(k, sizeof(double)), k};
    gsl_integration_fixed_workspace *rules[GH_LEVELS] = {0};
    double err = 0.0;
    if (!pi || !v.gl || !v.acc || !v.prev || !v.val)
        st = qc_fail(QC_ENOMEM, "out of memory");
    for (size_t i = 0; st == QC_OK && i < c->size; i++) {
        double *row = d->p + i * k;
        if (q->kind == QC_IQ_PRODUCT && !with_pn) {
            product_row(c->x[i], c->y[i], noise->sigma, q, 1.0, pi, pq, row);
        } else if (q->kind == QC_IQ_PRODUCT) {
            product_ctx pc = {q, c->x[i], c->y[i], noise->sigma, &pn, pi, pq};
            double s = hypot(c->x[i], c->y[i]);
            double width = fmin(noise->phase_sd, s > 0.0 ? noise->sigma / s : 1.0);
            v.nvec = k;
            /* a Gaussian error by Gauss–Hermite rules, else (or when
             * they do not settle) composite Gauss–Legendre panels */
            if (!(noise->phase_law == QC_PHASE_GAUSS &&
                  noise->phase_sd * s <= GH_MAX_SPREAD * noise->sigma &&
                  gh_run(rules, &v, product_rotated, &pc, noise->phase_sd, row, &err))) {
                st = vquad_run(&v, product_pn, &pc, -pn.window, 0.0, fmax(width, 1e-6), row,
                               &err);
                if (st == QC_OK)
                    st = vquad_run(&v, product_pn, &pc, 0.0, pn.window, fmax(width, 1e-6),
                                   row, &err);
            }
        } else {
            st = qc_polar_row(ps, q, c->x[i], c->y[i], noise->sigma, row, &err);
        }
        if (st == QC_OK) {
            /* rounding can leave a sum 1 ± 1e-15 and tiny negatives */
            double sum = 0.0;
            for (size_t y = 0; y < k; y++) {
                row[y] = fmax(row[y], 0.0);
                sum += row[y];
            }
            if (fabs(sum - 1.0) > 1e3 * QC_IQ_QUAD_TOL * (double)k)
                st = qc_fail(QC_ENUMERIC, "iq channel: the cells of point %zu sum to %.15g",
                             i + 1, sum);
            for (size_t y = 0; st == QC_OK && y < k; y++)
                row[y] /= sum;
        }
    }
    free(pi);
    free(v.acc), free(v.prev), free(v.val);
    if (v.gl)
        gsl_integration_glfixed_table_free(v.gl);
    qc_polar_series_free(ps);
    for (int l = 0; l < GH_LEVELS; l++)
        if (rules[l])
            gsl_integration_fixed_free(rules[l]);
    if (st != QC_OK) {
        qc_dmc_free(d);
        return st;
    }
    if (quad_err)
        *quad_err = err;
    *out = d;
    return QC_OK;
}
