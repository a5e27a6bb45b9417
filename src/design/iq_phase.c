/* iq_phase.c — averages over a residual phase error φ (Gaussian, or
 * Tikhonov as left by a first-order phase-locked loop: Viterbi,
 * Principles of Coherent Communication, 1966) of a vector-valued function
 * of the rotation, ∫ f(φ) p(φ) dφ: the I/Q pair's cell probabilities of a
 * rotated point (iq_channel.c) and their derivatives in the thresholds
 * (iq_gradient.c). An error that spans at most GH_MAX_SPREAD angular
 * widths σ/|x| of the noise is integrated by Gauss–Hermite rules of
 * doubling size (GSL gsl_integration_fixed; Golub & Welsch, Math. Comp.
 * 23, 1969): a Gaussian error directly, a Tikhonov error with κ = 1/sd²
 * of at least TK_MIN_KAPPA through the Gaussian of the same sd, its
 * density ratio
 *   p(φ)/N(φ; 0, sd²) = C·e^{κ(φ²/2 − 2 sin²(φ/2))},
 *   C = sd·√(2π)/(2π·I_0(κ)e^{−κ}) (→ 1 as κ grows),
 * a smooth weight about 1 near 0 (the exponent is κφ⁴/24 to leading
 * order), taken as 0 beyond ±π, where the law holds below e^{−2κ} of its
 * peak (importance weighting; Davis & Rabinowitz, Methods of Numerical
 * Integration, 2nd ed. 1984, §2.9 (section from memory)). Otherwise, or
 * when 1024 nodes do not settle it, by
 * composite Gauss–Legendre quadrature (GSL glfixed) refined by panel
 * doubling over ±PN_WINDOW_SD standard deviations (at most ±π for the
 * Tikhonov law). Either refinement stops when no component changes by
 * more than QC_IQ_QUAD_TOL. */
#include "design/design_internal.h"
#include "quantcap/iq.h"

#include <gsl/gsl_integration.h>
#include <gsl/gsl_math.h>
#include <gsl/gsl_sf_bessel.h>
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
#define TK_MIN_KAPPA 20.0   /* Tikhonov by Gauss–Hermite from κ = 20 (sd ≤
                               12.8°; e^{−2κ} = 4e-18 at ±π)                */

struct qc_phase_average {
    const qc_iq_noise *noise;
    double kappa, vm_norm; /* Tikhonov: κ and 1/(2π I0(κ) e^{−κ})           */
    double log_ratio;      /* Tikhonov: log C of the density ratio          */
    double window;         /* integrate φ over [−window, window]            */
    gsl_integration_glfixed_table *gl;
    gsl_integration_fixed_workspace *rules[GH_LEVELS]; /* 16·2^l nodes     */
    double *acc, *prev, *val;
    size_t nvec, cap;
};

void qc_phase_average_free(qc_phase_average *a)
{
    if (!a)
        return;
    if (a->gl)
        gsl_integration_glfixed_table_free(a->gl);
    for (int l = 0; l < GH_LEVELS; l++)
        if (a->rules[l])
            gsl_integration_fixed_free(a->rules[l]);
    free(a->acc), free(a->prev), free(a->val);
    free(a);
}

qc_status qc_phase_average_alloc(const qc_iq_noise *noise, size_t nvec, qc_phase_average **out)
{
    *out = NULL;
    qc_phase_average *a = calloc(1, sizeof *a);
    if (!a)
        return qc_fail(QC_ENOMEM, "out of memory");
    a->noise = noise;
    a->cap = nvec;
    a->gl = gsl_integration_glfixed_table_alloc(GL_NODES);
    a->acc = qc_malloc_array(nvec, sizeof *a->acc);
    a->prev = qc_malloc_array(nvec, sizeof *a->prev);
    a->val = qc_malloc_array(nvec, sizeof *a->val);
    if (!a->gl || !a->acc || !a->prev || !a->val) {
        qc_phase_average_free(a);
        return qc_fail(QC_ENOMEM, "out of memory");
    }
    const double s = noise->phase_sd;
    a->window = fmin(M_PI, PN_WINDOW_SD * s);
    if (noise->phase_law == QC_PHASE_GAUSS && s * PN_WINDOW_SD > M_PI)
        a->window = PN_WINDOW_SD * s; /* unwrapped Gaussian on the real line */
    if (noise->phase_law == QC_PHASE_TIKHONOV && s > 0.0) {
        a->kappa = 1.0 / (s * s);
        a->vm_norm = 1.0 / (2.0 * M_PI * gsl_sf_bessel_I0_scaled(a->kappa));
        a->log_ratio = log(a->vm_norm * s * sqrt(2.0 * M_PI));
    }
    *out = a;
    return QC_OK;
}

static double density(const qc_phase_average *a, double phi)
{
    const double s = a->noise->phase_sd;
    if (a->noise->phase_law == QC_PHASE_TIKHONOV) {
        /* cos φ − 1 = −2 sin²(φ/2), without cancellation at large κ */
        const double h = sin(0.5 * phi);
        return a->vm_norm * exp(-2.0 * a->kappa * h * h);
    }
    return exp(-0.5 * (phi / s) * (phi / s)) / (s * sqrt(2.0 * M_PI));
}

/* Whether the last refinement (acc against prev) moved no component by
 * more than QC_IQ_QUAD_TOL; then acc is added to out and *err raised to
 * that change. */
static int settled(const qc_phase_average *a, double *out, double *err)
{
    double d = 0.0;
    for (size_t c = 0; c < a->nvec; c++) {
        const double change = fabs(a->acc[c] - a->prev[c]);
        if (isnan(change))
            return 0; /* never settled: the caller refines or gives up */
        d = fmax(d, change);
    }
    if (!(d <= QC_IQ_QUAD_TOL))
        return 0;
    for (size_t c = 0; c < a->nvec; c++)
        out[c] += a->acc[c];
    *err = fmax(*err, d);
    return 1;
}

/* ∫_lo^hi f·p over the components into out (added), by composite
 * Gauss–Legendre panels, doubled until settled. Starts at
 * max(2^MIN_LEVEL, (hi − lo)/width·PEAK_PANELS) panels. */
static qc_status panels_run(qc_phase_average *a, qc_phase_fn f, void *ctx, double lo,
                            double hi, double width, double *out, double *err)
{
    if (!(hi > lo))
        return QC_OK;
    size_t panels = (size_t)1 << MIN_LEVEL;
    double want = (hi - lo) / width * PEAK_PANELS;
    while ((double)panels < want && panels < ((size_t)1 << (MAX_LEVEL - 2)))
        panels *= 2;
    int have_prev = 0;
    for (; panels <= ((size_t)1 << MAX_LEVEL); panels *= 2) {
        memset(a->acc, 0, a->nvec * sizeof *a->acc);
        double h = (hi - lo) / (double)panels;
        for (size_t p = 0; p < panels; p++) {
            double pa = lo + h * (double)p, pb = pa + h;
            for (size_t k = 0; k < GL_NODES; k++) {
                double xk, wk;
                gsl_integration_glfixed_point(pa, pb, k, &xk, &wk, a->gl);
                f(xk, density(a, xk), ctx, a->val);
                for (size_t c = 0; c < a->nvec; c++)
                    a->acc[c] += wk * a->val[c];
            }
        }
        if (have_prev && settled(a, out, err))
            return QC_OK;
        memcpy(a->prev, a->acc, a->nvec * sizeof *a->acc);
        have_prev = 1;
    }
    return qc_fail(QC_ENOCONV, "iq channel: the quadrature did not settle within %g with "
                   "%d panels", QC_IQ_QUAD_TOL, 1 << MAX_LEVEL);
}

/* The Tikhonov law's weight at the Gauss–Hermite node φ of (scaled) rule
 * weight w > 0, |φ| ≤ π: w times the density ratio, formed in logarithms,
 * since at the outer nodes of large rules w underflows while the ratio
 * alone would overflow (their product is about p(φ)·dφ). */
static double tikhonov_node_weight(const qc_phase_average *a, double phi, double w)
{
    const double h = sin(0.5 * phi);
    return exp(log(w) + a->log_ratio + a->kappa * (0.5 * phi * phi - 2.0 * h * h));
}

/* ∫ f(φ) p(φ) dφ into out (added), by Gauss–Hermite rules of 16, 32, …
 * nodes for N(φ; 0, sd²) (p/N the nodes' weight) until settled; 0 (out
 * untouched) when 1024 nodes do not settle it (a phase error wide against
 * the noise's angular width σ/|x|: then panels_run, which is also used
 * beyond GH_MAX_SPREAD such widths). The nodes needed grow about as
 * 32·(sd·|x|/σ)². */
static int hermite_run(qc_phase_average *a, qc_phase_fn f, void *ctx, double *out,
                       double *err)
{
    const double sd = a->noise->phase_sd;
    const int tikhonov = a->noise->phase_law == QC_PHASE_TIKHONOV;
    for (int l = 0; l < GH_LEVELS; l++) {
        size_t n = (size_t)GH_FIRST << l;
        if (!a->rules[l] && !(a->rules[l] = gsl_integration_fixed_alloc(
                                  gsl_integration_fixed_hermite, n, 0.0, 1.0, 0.0, 0.0)))
            return 0;
        const double *t = gsl_integration_fixed_nodes(a->rules[l]);
        const double *w = gsl_integration_fixed_weights(a->rules[l]);
        memset(a->acc, 0, a->nvec * sizeof *a->acc);
        for (size_t i = 0; i < n; i++) { /* φ = √2·sd·t, weight w/√π */
            const double wi = w[i] / M_SQRTPI, phi = M_SQRT2 * sd * t[i];
            if (!tikhonov) {
                f(phi, 1.0, ctx, a->val);
                for (size_t c = 0; c < a->nvec; c++)
                    a->acc[c] += wi * a->val[c];
            } else if (wi > 0.0 && fabs(phi) <= M_PI) { /* else it adds 0 */
                f(phi, tikhonov_node_weight(a, phi, wi), ctx, a->val);
                for (size_t c = 0; c < a->nvec; c++)
                    a->acc[c] += a->val[c];
            }
        }
        if (l > 0 && settled(a, out, err))
            return 1;
        memcpy(a->prev, a->acc, a->nvec * sizeof *a->acc);
    }
    return 0;
}

qc_status qc_phase_average_run(qc_phase_average *a, double s, double sigma, size_t nvec,
                               qc_phase_fn f, void *ctx, double *out, double *err)
{
    if (nvec > a->cap)
        return qc_fail(QC_EINVAL, "iq channel: %zu values to average (room for %zu)", nvec,
                       a->cap);
    a->nvec = nvec;
    const qc_iq_noise *noise = a->noise;
    const double width = fmin(noise->phase_sd, s > 0.0 ? sigma / s : 1.0);
    const int hermite = noise->phase_law == QC_PHASE_GAUSS ||
                        (noise->phase_law == QC_PHASE_TIKHONOV && a->kappa >= TK_MIN_KAPPA);
    if (hermite && noise->phase_sd * s <= GH_MAX_SPREAD * sigma &&
        hermite_run(a, f, ctx, out, err))
        return QC_OK;
    qc_status st = panels_run(a, f, ctx, -a->window, 0.0, fmax(width, 1e-6), out, err);
    if (st == QC_OK)
        st = panels_run(a, f, ctx, 0.0, a->window, fmax(width, 1e-6), out, err);
    return st;
}
