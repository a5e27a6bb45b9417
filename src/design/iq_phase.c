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
 * when 1024 nodes do not settle it, by the trapezoidal rule on the circle
 * φ ∈ [−π, π): f is 2π-periodic in the rotation, so ∫ f p over the line
 * is ∫ f p_w over the circle with p_w the error's law wrapped onto it
 * (the Tikhonov law is already; the Gaussian one is Σ_k N(φ + 2πk)), and
 * for a smooth periodic integrand the rule's error falls geometrically
 * with the nodes (Trefethen & Weideman, "The exponentially convergent
 * trapezoidal rule", SIAM Review 56(3), 2014). Doubling the nodes reuses
 * every node before; nodes where p_w is below e^{−72} of its peak (the
 * Gaussian's mass beyond 12 standard deviations) add nothing and are not
 * evaluated. Either refinement stops when no component changes by more
 * than QC_IQ_QUAD_TOL. */
#include "design/design_internal.h"
#include "quantcap/iq.h"

#include <gsl/gsl_integration.h>
#include <gsl/gsl_math.h>
#include <gsl/gsl_sf_bessel.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

#define CIRCLE_MIN_LOG2 5   /* trapezoidal rule: at least 2^5 nodes          */
#define CIRCLE_MAX_LOG2 21  /* at most 2^21 nodes on the circle              */
#define NODES_PER_WIDTH 4.0 /* nodes per characteristic width at the start   */
#define PN_WINDOW_SD 12.0   /* nodes below e^{−72} of the peak density skipped
                               (a Gaussian 12 standard deviations out)       */
#define GH_FIRST 16         /* Gaussian phase error: first Gauss–Hermite rule */
#define GH_LEVELS 7         /* rules of 16, 32, …, 1024 nodes, then the circle */
#define GH_MAX_SPREAD 6.0   /* Gauss–Hermite tried while sd·|x|/σ ≤ 6 (the
                               error's spread in the noise's angular widths;
                               1024 nodes settle it up to about 6)          */
#define TK_MIN_KAPPA 20.0   /* Tikhonov by Gauss–Hermite from κ = 20 (sd ≤
                               12.8°; e^{−2κ} = 4e-18 at ±π)                */

struct qc_phase_average {
    const qc_iq_noise *noise;
    double kappa, vm_norm; /* Tikhonov: κ and 1/(2π I0(κ) e^{−κ})           */
    double log_ratio;      /* Tikhonov: log C of the density ratio          */
    int wraps;             /* Gaussian: copies 2πk on either side that count */
    gsl_integration_fixed_workspace *rules[GH_LEVELS]; /* 16·2^l nodes     */
    double *acc, *prev, *val, *sum;
    size_t nvec, cap;
};

void qc_phase_average_free(qc_phase_average *a)
{
    if (!a)
        return;
    for (int l = 0; l < GH_LEVELS; l++)
        if (a->rules[l])
            gsl_integration_fixed_free(a->rules[l]);
    free(a->acc), free(a->prev), free(a->val), free(a->sum);
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
    a->acc = qc_malloc_array(nvec, sizeof *a->acc);
    a->prev = qc_malloc_array(nvec, sizeof *a->prev);
    a->val = qc_malloc_array(nvec, sizeof *a->val);
    a->sum = qc_malloc_array(nvec, sizeof *a->sum);
    if (!a->acc || !a->prev || !a->val || !a->sum) {
        qc_phase_average_free(a);
        return qc_fail(QC_ENOMEM, "out of memory");
    }
    const double s = noise->phase_sd;
    a->wraps = (int)ceil(PN_WINDOW_SD * s / (2.0 * M_PI));
    if (noise->phase_law == QC_PHASE_TIKHONOV && s > 0.0) {
        a->kappa = 1.0 / (s * s);
        a->vm_norm = 1.0 / (2.0 * M_PI * gsl_sf_bessel_I0_scaled(a->kappa));
        a->log_ratio = log(a->vm_norm * s * sqrt(2.0 * M_PI));
    }
    *out = a;
    return QC_OK;
}

/* The error's law wrapped onto the circle at φ ∈ [−π, π]. */
static double density(const qc_phase_average *a, double phi)
{
    const double s = a->noise->phase_sd;
    if (a->noise->phase_law == QC_PHASE_TIKHONOV) {
        /* cos φ − 1 = −2 sin²(φ/2), without cancellation at large κ */
        const double h = sin(0.5 * phi);
        return a->vm_norm * exp(-2.0 * a->kappa * h * h);
    }
    double p = 0.0; /* the copies within 12 s count, from the farthest */
    for (int k = a->wraps; k >= 1; k--) {
        const double u = (phi + 2.0 * M_PI * k) / s, v = (phi - 2.0 * M_PI * k) / s;
        p += exp(-0.5 * u * u) + exp(-0.5 * v * v);
    }
    p += exp(-0.5 * (phi / s) * (phi / s));
    return p / (s * sqrt(2.0 * M_PI));
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

/* ∫ f·p over the circle into out (added), by the trapezoidal rule on
 * 2^l nodes φ_j = −π + 2πj/2^l, the nodes doubled until settled, each
 * doubling adding the new midpoints to the sum of the nodes before. Starts with
 * about NODES_PER_WIDTH nodes per `width` (the integrand's narrowest
 * feature). */
static qc_status circle_run(qc_phase_average *a, qc_phase_fn f, void *ctx, double width,
                            double *out, double *err)
{
    int l = CIRCLE_MIN_LOG2;
    while (l < CIRCLE_MAX_LOG2 - 1 &&
           (double)((size_t)1 << l) < NODES_PER_WIDTH * 2.0 * M_PI / width)
        l++;
    const double floor = density(a, 0.0) * exp(-0.5 * PN_WINDOW_SD * PN_WINDOW_SD);
    memset(a->sum, 0, a->nvec * sizeof *a->sum);
    size_t n = 0; /* nodes summed so far (0: no estimate yet in prev) */
    for (; l <= CIRCLE_MAX_LOG2; l++) {
        const size_t N = (size_t)1 << l;
        /* the nodes not yet summed: every node first, then the odd ones */
        for (size_t j = n ? 1 : 0; j < N; j += n ? 2 : 1) {
            const double phi = -M_PI + 2.0 * M_PI * (double)j / (double)N;
            const double p = density(a, phi);
            if (!(p >= floor))
                continue;
            f(phi, p, ctx, a->val);
            for (size_t c = 0; c < a->nvec; c++)
                a->sum[c] += a->val[c];
        }
        for (size_t c = 0; c < a->nvec; c++)
            a->acc[c] = a->sum[c] * (2.0 * M_PI / (double)N);
        if (n && settled(a, out, err))
            return QC_OK;
        n = N;
        memcpy(a->prev, a->acc, a->nvec * sizeof *a->acc);
    }
    return qc_fail(QC_ENOCONV, "iq channel: the phase-error average did not settle within %g "
                   "with %d nodes", QC_IQ_QUAD_TOL, 1 << CIRCLE_MAX_LOG2);
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
 * the noise's angular width σ/|x|: then circle_run, which is also used
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
    return circle_run(a, f, ctx, fmax(width, 1e-6), out, err);
}
