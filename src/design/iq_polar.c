/* iq_polar.c — the probabilities of polar cells (amplitude rings × phase
 * sectors) of one constellation point in circular Gaussian noise, with or
 * without a residual phase error, by a Fourier series in the angle.
 *
 * Let z = x + n, x = s·e^{jθx}, and G_a(t) the density of arg z − θx = t
 * restricted to ring a (the integral along the ray at angle θx + t over
 * r0 ≤ r < r1, closed form: the Rice law of the amplitude, Rice, Bell
 * Syst. Tech. J. 23, 1944). G_a is even, periodic and analytic, so its
 * Fourier coefficients γ_k = (1/2π)∫ G_a(t) cos(kt) dt, computed by the
 * trapezoid rule on N equispaced angles (one real FFT, FFTW: Frigo &
 * Johnson, Proc. IEEE 93(2), 2005), converge exponentially in N
 * (Trefethen & Weideman, "The exponentially convergent trapezoidal
 * rule", SIAM Review 56(3), 2014). The received angle is θx + t + φ, φ
 * the phase error, whose characteristic function c_k = E[e^{jkφ}] is
 * e^{−k²s²/2} for the wrapped Gaussian law and I_k(κ)/I_0(κ) for the
 * Tikhonov (von Mises) law (Mardia & Jupp, Directional Statistics, 2000,
 * §3.5; c_k = 1 without phase error). A sector [α, β) then has, by
 * Parseval's identity with the sector's own Fourier series,
 *   P(a, [α, β)) = γ_0 (β − α)
 *                  + 2 Σ_{k≥1} γ_k c_k [sin(k(β − θx)) − sin(k(α − θx))]/k,
 * the sector integrals in closed form (the sum stops below the Nyquist
 * term k = N/2, and where c_k falls below CK_NEGLIGIBLE). N starts at the
 * power of two above 5π·s/σ (2.5 angles per width σ/s of G, at least 32)
 * and doubles, the samples of N kept, until a bound on how much any cell
 * moved (from the change of the coefficients) is at most QC_IQ_QUAD_TOL;
 * that bound is reported.
 *
 * The series fails where the point is far from the origin against σ
 * (s/σ of a few hundred: Es/N0 from about 40 dB for 16-QAM): the samples
 * of G are exact only to about ε·(s/σ)² relative (the exponent −(s² −
 * m²)/2σ² is a difference of two numbers near s²/2σ²), which leaves a
 * noise on the coefficients that no number of angles removes, and the
 * angles needed grow as s/σ anyway. Without a phase error a point whose
 * first N would be 2^DIRECT_FROM_LOG2 or more (s/σ above about 33, where
 * direct quadrature is already the cheaper: 8 × 32 cells, 0.9 ms a row
 * against the series' 1.3 ms at s/σ = 40 and 23 ms at 120), or that the
 * series does not settle within 2^DIRECT_LOG2 angles, gets its cells
 * directly,
 *   P(a, [α, β)) = ∫_{α−θx}^{β−θx} G_a(t) dt,
 * G_a in the same closed form written without the cancellation
 * (−[h² + (r − m)²]/2σ², h = s·sin t, the Gaussian tails taken on the
 * side where they do not cancel), by adaptive Gauss–Kronrod quadrature
 * (GSL qagp, QUADPACK: Piessens et al., 1983) with break points at the
 * peak t = 0 (mod 2π) and at ±PEAK_WIDTHS·σ/s around it, each cell to
 * an absolute error of DIRECT_TOL. This is the angular integral of the
 * bivariate normal density over a sector of an annulus (Rice's
 * offset-Gaussian law of the amplitude and angle; a ring alone is a
 * difference of Marcum Q functions, Marcum, IRE Trans. IT-6, 1960; the
 * sector form as in Simon & Alouini, Digital Communication over Fading
 * Channels, 2nd ed. 2005, §4.2 (section from memory)), and its cost does
 * not grow with s/σ. A cell whose mass is bounded below DIRECT_NEGLIGIBLE
 * by its distance d from the point (P(|n| ≥ d) = e^{−d²/2σ²}) is 0.
 * With a phase error the series is kept (its terms end where the
 * phase error's c_k does, about 12/sd).
 * The same coefficients give the density along a sector start α across
 * ring a, G_a convolved with the phase error at α − θx:
 *   γ_0 + 2 Σ_k γ_k c_k cos(k(α − θx)),
 * the rate at which the sectors beside it trade mass (qc_polar_rays, for
 * the gradient of iq_gradient.c). */
#include "design/design_internal.h"
#include "models/convolve.h"
#include "quantcap/iq.h"

#include <complex.h>
#include <gsl/gsl_cdf.h>
#include <gsl/gsl_errno.h>
#include <gsl/gsl_integration.h>
#include <gsl/gsl_math.h>
#include <gsl/gsl_sf_bessel.h>
#include <math.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

#define MIN_LOG2 5           /* at least 2^5 angles                          */
#define MAX_LOG2 22          /* at most 2^22 angles (then QC_ENOCONV)         */
#define ANGLES_PER_WIDTH 2.5 /* first N: angles per width σ/s of G           */
#define VM_CUT_SQRT 10.0     /* Tikhonov: c_k kept for k < 10√κ + 30, where   */
#define VM_CUT_ADD 30.0      /* I_k/I_0 < e^{−50} (the rest taken as 0)       */
#define CK_MAX (((size_t)1 << (MAX_LOG2 - 1)) + 1) /* the most c_k a series uses */
#define CK_NEGLIGIBLE 1e-30  /* c_k below: the series stops (γ_k ≤ 1/2π)      */
#define RESEED_STEPS 64      /* sin(k·a) recomputed directly every 64 steps   */
#define DIRECT_FROM_LOG2 10  /* no phase error: a point whose series would
                                start at 2^10 angles or more (s/σ > 32.6)
                                has its cells by direct quadrature           */
#define DIRECT_LOG2 12       /* no phase error: the series up to 2^12
                                angles, then direct quadrature              */
#define DIRECT_TOL 1e-15     /* direct quadrature: absolute error per cell    */
#define DIRECT_LIMIT 200     /* its subintervals (GSL workspace size)         */
#define PEAK_WIDTHS 8.0      /* break points at ±8 σ/s around the peak        */
#define DIRECT_NEGLIGIBLE 1e-18 /* a cell whose mass is bounded below this
                                by its distance from the point is 0       */

struct qc_polar_series {
    const qc_iq_noise *noise;
    double *ck;                  /* c_k, k = 0 .. nck − 1                     */
    size_t nck;
    size_t kcut;                 /* c_k < CK_NEGLIGIBLE from here on (≤ nck)  */
    qc_conv *fft[MAX_LOG2 + 1];  /* real FFT of 2^l points, made when needed  */
    double *g;                   /* G_a at the angles 2πn/N, n = 0..N/2       */
    double *full;                /* one ring's N samples (the circle)         */
    double complex *spec;        /* its spectrum                              */
    double *gamma;               /* γ_{a,k}, k = 0..N/2                       */
    double *gprev;               /* the same at N/2 angles                    */
    double *e;                   /* c_k sin(k(α_p − θx))/k, k = 1..N/2 − 1    */
    double *edge;                /* per radius: E, Φ and 1 − Φ (3 (A + 1))    */
    size_t cap;                  /* N the buffers hold                        */
    size_t sectors;              /* sectors the buffers hold                  */
    gsl_integration_workspace *quad; /* direct quadrature (made when needed)  */
    qc_polar_series *next;       /* the next thread's workspace, if any        */
};

void qc_polar_series_free(qc_polar_series *w)
{
    if (!w)
        return;
    qc_polar_series_free(w->next);
    for (size_t l = 0; l <= MAX_LOG2; l++)
        qc_conv_free(w->fft[l]);
    free(w->ck);
    free(w->g);
    free(w->full);
    free(w->spec);
    free(w->gamma);
    free(w->gprev);
    free(w->e);
    free(w->edge);
    if (w->quad)
        gsl_integration_workspace_free(w->quad);
    free(w);
}

qc_status qc_polar_series_alloc(const qc_iq_noise *noise, qc_polar_series **out)
{
    *out = NULL;
    qc_polar_series *w = calloc(1, sizeof *w);
    if (!w)
        return qc_fail(QC_ENOMEM, "out of memory");
    w->noise = noise;
    *out = w;
    return QC_OK;
}

qc_status qc_polar_series_lanes(qc_polar_series *w, size_t n)
{
    for (size_t i = 1; i < n; i++, w = w->next)
        if (!w->next && qc_polar_series_alloc(w->noise, &w->next) != QC_OK)
            return QC_ENOMEM;
    return QC_OK;
}

qc_polar_series *qc_polar_series_lane(qc_polar_series *w, size_t i)
{
    for (; i > 0; i--)
        w = w->next;
    return w;
}

/* c_k for k < n (the phase error's characteristic function), and kcut.
 * The Tikhonov law's come from a downward recurrence (GSL) started at the
 * cut, or with `whole` 0 at n if that is below it. A series for rows
 * takes them whole, once for all k below the cut, so that a row does not
 * depend on how far its workspace had grown on the rows before (nor on
 * which thread's workspace it is); the gradient's law (qc_polar_phase_law,
 * one call in one thread) need not pay for that where the cut is far
 * beyond the n it uses (a small error: κ = 1/sd²). */
static qc_status phase_coefficients(qc_polar_series *w, size_t n, int whole)
{
    if (n <= w->nck)
        return QC_OK;
    const double s = w->noise->phase_sd;
    const int tikhonov = s > 0.0 && w->noise->phase_law == QC_PHASE_TIKHONOV;
    const double kappa = tikhonov ? 1.0 / (s * s) : 0.0;
    const double cut = ceil(VM_CUT_SQRT * sqrt(kappa) + VM_CUT_ADD);
    const size_t m = !whole && cut > (double)n ? n : cut < (double)CK_MAX ? (size_t)cut : CK_MAX;
    if (tikhonov && n < m)
        n = m;
    double *ck = realloc(w->ck, n * sizeof *ck);
    if (!ck)
        return qc_fail(QC_ENOMEM, "out of memory");
    w->ck = ck;
    for (size_t k = 0; k < n; k++)
        ck[k] = s > 0.0 ? 0.0 : 1.0;
    if (tikhonov) {
        double *in = qc_malloc_array(m, sizeof *in);
        if (!in)
            return qc_fail(QC_ENOMEM, "out of memory");
        qc_gsl_init();
        int gs = gsl_sf_bessel_In_scaled_array(0, (int)m - 1, kappa, in);
        if (gs != GSL_SUCCESS || !(in[0] > 0.0)) {
            free(in);
            return qc_fail(QC_ENUMERIC, "phase-noise-deg: the Tikhonov law's Fourier "
                           "coefficients at %g degrees rms failed (%s)",
                           s * 180.0 / M_PI, gsl_strerror(gs));
        }
        for (size_t k = 0; k < m; k++)
            ck[k] = in[k] / in[0];
        free(in);
    } else if (s > 0.0) {
        for (size_t k = 0; k < n; k++)
            ck[k] = exp(-0.5 * (double)k * (double)k * s * s);
    }
    w->nck = n;
    w->kcut = n;
    for (size_t k = 0; k < n; k++)
        if (ck[k] < CK_NEGLIGIBLE) {
            w->kcut = k;
            break;
        }
    return QC_OK;
}

/* *buf resized to n × size bytes, its content kept; 0 on failure (then
 * *buf is unchanged). */
static int grow(void *buf, size_t n, size_t size)
{
    void **b = buf;
    void *p = size != 0 && n > SIZE_MAX / size ? NULL : realloc(*b, n * size);
    if (p)
        *b = p;
    return p != NULL;
}

/* Buffers for N angles, `rings` rings and `sectors` sectors, their
 * content kept. */
static qc_status reserve(qc_polar_series *w, size_t N, size_t rings, size_t sectors)
{
    if (N <= w->cap && sectors <= w->sectors)
        return QC_OK;
    size_t n = N > w->cap ? N : w->cap, c = sectors > w->sectors ? sectors : w->sectors;
    size_t half = n / 2 + 1;
    if (!grow(&w->g, rings * half, sizeof *w->g) || !grow(&w->full, n, sizeof *w->full) ||
        !grow(&w->spec, half, sizeof *w->spec) ||
        !grow(&w->gamma, rings * half, sizeof *w->gamma) ||
        !grow(&w->gprev, rings * half, sizeof *w->gprev) ||
        !grow(&w->e, c * half, sizeof *w->e) ||
        !grow(&w->edge, 3 * (rings + 1), sizeof *w->edge))
        return qc_fail(QC_ENOMEM, "out of memory for the polar cells' series of %zu angles",
                       n);
    w->cap = n;
    w->sectors = c;
    return QC_OK;
}

/* G_a at the angles 2πn/N for n = from, from + step, … ≤ N/2, into
 * g[a·(N/2 + 1) + n]. Along the ray at angle θx + t the density of x + n
 * is r·e^{−(r² − 2r·m + s²)/2σ²}/(2πσ²), m = s·cos t, whose integral over
 * [r0, r1) is
 *   [E(r0) − E(r1)]/2π + m/(σ√(2π))·e^{−(s² − m²)/2σ²}·[Φ(u1) − Φ(u0)],
 * E(r) = e^{−(r² − 2r·m + s²)/2σ²}, u = (r − m)/σ; neighbouring rings
 * share a radius, so E and the Gaussian tails are computed once per
 * radius (one CDF call each: the tail that is the smaller one, the other
 * as its complement, which is then at least ½ and exact to rounding). */
static void sample_rings(qc_polar_series *w, const qc_iq_cells *q, double s, double sigma,
                         size_t N, size_t from, size_t step)
{
    const size_t rings = q->nradii + 1, half = N / 2 + 1;
    const double s2 = 2.0 * sigma * sigma, e_origin = exp(-s * s / s2);
    double *E = w->edge, *below = E + rings + 1, *above = below + rings + 1;
    for (size_t n = from; n < half; n += step) {
        const double m = s * cos(2.0 * M_PI * (double)n / (double)N);
        for (size_t b = 0; b <= rings; b++) {
            double r = b == 0 ? 0.0 : b < rings ? q->radii[b - 1] : INFINITY;
            double u = (r - m) / sigma;
            E[b] = b == 0 ? e_origin : b < rings ? exp(-(r * r - 2.0 * r * m + s * s) / s2) : 0.0;
            if (u > 0.0) {
                above[b] = gsl_cdf_ugaussian_Q(u);
                below[b] = 1.0 - above[b];
            } else {
                below[b] = gsl_cdf_ugaussian_P(u);
                above[b] = 1.0 - below[b];
            }
        }
        const double radial =
            m != 0.0 ? m / (sigma * sqrt(2.0 * M_PI)) * exp(-(s * s - m * m) / s2) : 0.0;
        for (size_t a = 0; a < rings; a++) {
            /* Φ(u1) − Φ(u0) in the tail where it does not cancel */
            double r0 = a == 0 ? 0.0 : q->radii[a - 1];
            double d = r0 - m > 0.0 ? above[a] - above[a + 1] : below[a + 1] - below[a];
            w->g[a * half + n] = (E[a] - E[a + 1]) / (2.0 * M_PI) + radial * d;
        }
    }
}

/* γ_{a,k}, k = 0..N/2, into w->gamma (index a·(N/2 + 1) + k): the
 * trapezoid rule over the circle, G_a mirrored (even). */
static qc_status coefficients(qc_polar_series *w, size_t rings, size_t N, int log2n)
{
    const size_t half = N / 2 + 1;
    qc_status st;
    if (!w->fft[log2n] && (st = qc_conv_alloc(N, &w->fft[log2n])) != QC_OK)
        return st;
    if ((st = phase_coefficients(w, half, 1)) != QC_OK)
        return st;
    for (size_t a = 0; a < rings; a++) {
        const double *g = w->g + a * half;
        for (size_t n = 0; n < N; n++)
            w->full[n] = g[n < half ? n : N - n];
        qc_conv_forward(w->fft[log2n], w->full, N, w->spec);
        for (size_t k = 0; k < half; k++)
            w->gamma[a * half + k] = creal(w->spec[k]) / (double)N;
    }
    return QC_OK;
}

/* Terms of the series at N angles: k = 1 .. terms(N) − 1 (below the
 * Nyquist term k = N/2, and not beyond the last c_k above CK_NEGLIGIBLE). */
static size_t terms(const qc_polar_series *w, size_t N)
{
    return N / 2 < w->kcut ? N / 2 : w->kcut;
}

/* A bound on how much any cell moved from the series at N/2 angles
 * (coefficients in w->gprev) to that at N (w->gamma): with
 * |sin − sin| ≤ 2 and a sector at most 2π wide,
 *   |ΔP| ≤ 2π|Δγ_0| + 4 Σ_k |Δγ_k| c_k/k   (γ_k = 0 where N/2 had none). */
static double change_bound(const qc_polar_series *w, size_t rings, size_t sectors, size_t N)
{
    const size_t half = N / 2 + 1, half0 = N / 4 + 1;
    const size_t k0 = terms(w, N / 2), k1 = terms(w, N);
    double worst = 0.0;
    for (size_t a = 0; a < rings; a++) {
        const double *g = w->gamma + a * half, *g0 = w->gprev + a * half0;
        double b = 2.0 * M_PI * fabs(g[0] - g0[0]);
        for (size_t k = 1; sectors > 1 && k < k1; k++)
            b += 4.0 * fabs(g[k] - (k < k0 ? g0[k] : 0.0)) * w->ck[k] / (double)k;
        worst = fmax(worst, b);
    }
    return worst;
}

/* e[k] = c_k sin(k·a0)/k (cosine = 0: a sector boundary's share of the
 * cells) or c_k cos(k·a0) (cosine = 1: the density along it), k = 1 ..
 * top − 1; sin and cos of k·a0 by turning e^{jka0} one step of a0 at a
 * time, started afresh every RESEED_STEPS steps (rounding grows by about
 * an ulp per step). */
static void boundary_terms(const qc_polar_series *w, double a0, size_t top, int cosine,
                           double *e)
{
    double ca = cos(a0), sa = sin(a0), cs = 1.0, sn = 0.0;
    for (size_t k = 1; k < top; k++) {
        if (k % RESEED_STEPS == 0) {
            cs = cos((double)k * a0);
            sn = sin((double)k * a0);
        } else {
            double c1 = cs * ca - sn * sa;
            sn = sn * ca + cs * sa;
            cs = c1;
        }
        e[k] = cosine ? w->ck[k] * cs : w->ck[k] * sn / (double)k;
    }
}

/* Cell probabilities of the series at N angles into row (index a·P + p),
 * from w->gamma, with e_p(k) = c_k sin(k(α_p − θx))/k once per boundary. */
static void series_cells(qc_polar_series *w, const qc_iq_cells *q, double theta, size_t N,
                         double *row)
{
    const size_t rings = q->nradii + 1, sectors = q->nphases, half = N / 2 + 1;
    if (sectors == 1) {
        for (size_t a = 0; a < rings; a++)
            row[a] = 2.0 * M_PI * w->gamma[a * half];
        return;
    }
    const size_t top = terms(w, N);
    for (size_t p = 0; p < sectors; p++)
        boundary_terms(w, q->phases[p] - theta, top, 0, w->e + p * half);
    for (size_t a = 0; a < rings; a++) {
        const double *gm = w->gamma + a * half;
        double sum_lo = 0.0; /* Σ γ_k e_0(k), the first sector's start */
        for (size_t k = 1; k < top; k++)
            sum_lo += gm[k] * w->e[k];
        const double first = sum_lo;
        for (size_t p = 0; p < sectors; p++) {
            double lo = q->phases[p];
            double hi = p + 1 < sectors ? q->phases[p + 1] : q->phases[0] + 2.0 * M_PI;
            double sum_hi = first; /* the last sector ends where the first starts */
            if (p + 1 < sectors) {
                const double *e = w->e + (p + 1) * half;
                sum_hi = 0.0;
                for (size_t k = 1; k < top; k++)
                    sum_hi += gm[k] * e[k];
            }
            row[a * sectors + p] = gm[0] * (hi - lo) + 2.0 * (sum_hi - sum_lo);
            sum_lo = sum_hi;
        }
    }
}

/* ---- direct quadrature (no phase error, the point far from the origin) */

typedef struct {
    double s, sigma, r0, r1; /* the point's amplitude, the noise, the ring */
} ring_ctx;

/* G_a(t): the ring's radial integral along the ray at angle θx + t,
 *   e^{−h²/2σ²}·{[e^{−u0²/2} − e^{−u1²/2}]/2π + m/(σ√(2π))·[Φ(u1) − Φ(u0)]},
 * m = s·cos t, h = s·sin t, u = (r − m)/σ (u1 = ∞ for the outer ring). */
static double ring_density(double t, void *vctx)
{
    const ring_ctx *c = vctx;
    const double m = c->s * cos(t), h = c->s * sin(t) / c->sigma;
    const double u0 = (c->r0 - m) / c->sigma, u1 = (c->r1 - m) / c->sigma;
    const double e1 = isinf(u1) ? 0.0 : exp(-0.5 * u1 * u1);
    double d; /* Φ(u1) − Φ(u0), from the tails where it does not cancel */
    if (u0 > 0.0)
        d = gsl_cdf_ugaussian_Q(u0) - gsl_cdf_ugaussian_Q(u1);
    else if (u1 < 0.0)
        d = gsl_cdf_ugaussian_P(u1) - gsl_cdf_ugaussian_P(u0);
    else
        d = 1.0 - gsl_cdf_ugaussian_P(u0) - gsl_cdf_ugaussian_Q(u1);
    return exp(-0.5 * h * h) *
           ((exp(-0.5 * u0 * u0) - e1) / (2.0 * M_PI) + m / (c->sigma * sqrt(2.0 * M_PI)) * d);
}

/* ∫ G_a over [lo, hi) (hi − lo ≤ 2π), break points at the peaks t = 0 and
 * 2π and at ±PEAK_WIDTHS·σ/s around them, where inside. */
size_t qc_polar_peak_breaks(double lo, double hi, double width, double *pts)
{
    size_t n = 0;
    pts[n++] = lo;
    for (int turn = 0; turn <= 1; turn++) {
        const double peak = 2.0 * M_PI * turn;
        const double cand[3] = {peak - width, peak, peak + width};
        for (int j = 0; j < 3; j++)
            if (cand[j] > pts[n - 1] && cand[j] < hi)
                pts[n++] = cand[j];
    }
    pts[n++] = hi;
    return n;
}

void qc_polar_sector(const qc_iq_cells *q, size_t p, double theta, double *lo, double *width)
{
    const size_t sectors = q->nphases;
    *lo = q->phases[p] - theta;
    *lo -= 2.0 * M_PI * floor((*lo + M_PI) / (2.0 * M_PI));
    *width = sectors == 1 ? 2.0 * M_PI
             : (p + 1 < sectors ? q->phases[p + 1] : q->phases[0] + 2.0 * M_PI) - q->phases[p];
}

static qc_status direct_cell(qc_polar_series *w, ring_ctx *c, double lo, double hi,
                             double *p, double *err)
{
    double pts[8];
    const size_t n = qc_polar_peak_breaks(lo, hi, PEAK_WIDTHS * c->sigma / c->s, pts);
    gsl_function f = {ring_density, c};
    double abserr = 0.0;
    int gs = gsl_integration_qagp(&f, pts, n, DIRECT_TOL, 0.0, DIRECT_LIMIT, w->quad, p,
                                  &abserr);
    if (gs != GSL_SUCCESS && !(gs == GSL_EROUND && abserr <= QC_IQ_QUAD_TOL))
        return qc_fail(QC_ENOCONV, "iq channel: the polar cell of radii %g to %g, angles %g "
                       "to %g rad from the point did not settle within %g (%s, error %g)",
                       c->r0, c->r1, lo, hi, DIRECT_TOL, gsl_strerror(gs), abserr);
    *err = fmax(*err, abserr);
    return QC_OK;
}

/* A bound on the mass of the ring's cell [lo, hi) (angles from the point,
 * hi − lo ≤ 2π): the noise must reach at least distance d, the larger of
 * the radial gap and s·|sin t| at the angle t nearest 0 (mod 2π), or s
 * beyond ±π/2 (|y − x|² = (r − s cos t)² + s² sin² t), and for circular
 * Gaussian noise P(|n| ≥ d) = e^{−d²/2σ²}. */
static double cell_mass_bound(const ring_ctx *c, double lo, double hi)
{
    const double radial = c->s < c->r0 ? c->r0 - c->s : c->s > c->r1 ? c->s - c->r1 : 0.0;
    double angular = 0.0;
    if (floor(lo / (2.0 * M_PI)) == floor(hi / (2.0 * M_PI)) && lo != 0.0) {
        /* no multiple of 2π inside: the nearest one to either end */
        const double dlo = fabs(lo - 2.0 * M_PI * round(lo / (2.0 * M_PI)));
        const double dhi = fabs(hi - 2.0 * M_PI * round(hi / (2.0 * M_PI)));
        const double t = fmin(dlo, dhi);
        angular = t >= 0.5 * M_PI ? c->s : c->s * sin(t);
    }
    const double d = fmax(radial, angular) / c->sigma;
    return exp(-0.5 * d * d);
}

double qc_polar_ray_mass(double s, double sigma, double r0, double r1, double t)
{
    ring_ctx c = {s, sigma, r0, r1};
    return ring_density(t, &c);
}

/* Row of the point at amplitude s > 0, angle theta, by direct quadrature;
 * cells the point's noise cannot reach above DIRECT_NEGLIGIBLE are 0. */
static qc_status direct_row(qc_polar_series *w, const qc_iq_cells *q, double s, double theta,
                            double sigma, double *row, double *err)
{
    if (!w->quad && !(w->quad = gsl_integration_workspace_alloc(DIRECT_LIMIT)))
        return qc_fail(QC_ENOMEM, "out of memory");
    const size_t rings = q->nradii + 1, sectors = q->nphases;
    for (size_t a = 0; a < rings; a++) {
        ring_ctx c = {s, sigma, a == 0 ? 0.0 : q->radii[a - 1],
                      a + 1 < rings ? q->radii[a] : INFINITY};
        for (size_t p = 0; p < sectors; p++) {
            double lo, width;
            qc_polar_sector(q, p, theta, &lo, &width);
            const double bound = cell_mass_bound(&c, lo, lo + width);
            if (bound <= DIRECT_NEGLIGIBLE) {
                row[a * sectors + p] = 0.0;
                *err = fmax(*err, bound);
                continue;
            }
            qc_status st = direct_cell(w, &c, lo, lo + width, &row[a * sectors + p], err);
            if (st != QC_OK)
                return st;
        }
    }
    return QC_OK;
}

/* The series of the point at amplitude s settled: its coefficients at *N
 * angles in w->gamma and *err raised to the last doubling's change; or,
 * without a phase error, *direct set where direct quadrature is the
 * cheaper or the series does not settle within 2^DIRECT_LOG2 angles. */
static qc_status settle(qc_polar_series *w, const qc_iq_cells *q, double s, double sigma,
                        size_t *Nout, int *direct, double *err)
{
    const size_t rings = q->nradii + 1;
    int l = MIN_LOG2;
    double want = ANGLES_PER_WIDTH * 2.0 * M_PI * s / sigma;
    while (l < MAX_LOG2 - 1 && (double)((size_t)1 << l) < want)
        l++;
    /* without a phase error: direct quadrature where it is the cheaper,
     * else the series up to 2^DIRECT_LOG2 angles */
    const int may_direct = w->noise->phase_sd == 0.0 && s > 0.0;
    const int last = may_direct ? DIRECT_LOG2 : MAX_LOG2;
    *direct = may_direct && l >= DIRECT_FROM_LOG2;
    if (*direct)
        return QC_OK;
    size_t N = (size_t)1 << l;
    qc_status st = reserve(w, N, rings, q->nphases);
    if (st != QC_OK)
        return st;
    sample_rings(w, q, s, sigma, N, 0, 1);
    if ((st = coefficients(w, rings, N, l)) != QC_OK)
        return st;
    for (; l < last; l++) {
        /* 2N angles: the N samples kept at the even places (moved from the
         * top down, so that none is overwritten before it is read) */
        size_t N2 = 2 * N, half = N / 2 + 1, half2 = N + 1;
        if ((st = reserve(w, N2, rings, q->nphases)) != QC_OK)
            return st;
        memcpy(w->gprev, w->gamma, rings * half * sizeof *w->gamma);
        for (size_t a = rings; a-- > 0;)
            for (size_t n = half; n-- > 0;)
                w->g[a * half2 + 2 * n] = w->g[a * half + n];
        sample_rings(w, q, s, sigma, N2, 1, 2);
        N = N2;
        if ((st = coefficients(w, rings, N, l + 1)) != QC_OK)
            return st;
        double d = change_bound(w, rings, q->nphases, N);
        if (d <= QC_IQ_QUAD_TOL) {
            *Nout = N;
            *err = fmax(*err, d);
            return QC_OK;
        }
    }
    *direct = may_direct;
    if (may_direct)
        return QC_OK;
    return qc_fail(QC_ENOCONV, "iq channel: the polar cells' Fourier series did not settle "
                   "within %g with %d angles", QC_IQ_QUAD_TOL, 1 << MAX_LOG2);
}

/* The densities along the sector starts from the series at N angles (in
 * w->gamma): G_a convolved with the phase error at α_p − θx,
 * γ_0 + 2 Σ_k γ_k c_k cos(k(α_p − θx)). */
static void series_rays(qc_polar_series *w, const qc_iq_cells *q, double theta, size_t N,
                        double *rays)
{
    const size_t rings = q->nradii + 1, sectors = q->nphases, half = N / 2 + 1;
    const size_t top = terms(w, N);
    double *e = w->e; /* c_k cos(k(α_p − θx)) for one sector at a time */
    for (size_t p = 0; p < sectors; p++) {
        boundary_terms(w, q->phases[p] - theta, top, 1, e);
        for (size_t a = 0; a < rings; a++) {
            const double *gm = w->gamma + a * half;
            double sum = 0.0;
            for (size_t k = 1; k < top; k++)
                sum += gm[k] * e[k];
            rays[a * sectors + p] = gm[0] + 2.0 * sum;
        }
    }
}

/* The densities along the sector starts once settle has run: from the
 * series, or (direct) each ring's closed form. */
static void rays_settled(qc_polar_series *w, const qc_iq_cells *q, double s, double theta,
                         double sigma, size_t N, int direct, double *rays)
{
    const size_t rings = q->nradii + 1, sectors = q->nphases;
    if (!direct) {
        series_rays(w, q, theta, N, rays);
        return;
    }
    for (size_t a = 0; a < rings; a++)
        for (size_t p = 0; p < sectors; p++) {
            double lo, width;
            qc_polar_sector(q, p, theta, &lo, &width);
            rays[a * sectors + p] =
                qc_polar_ray_mass(s, sigma, a == 0 ? 0.0 : q->radii[a - 1],
                                  a + 1 < rings ? q->radii[a] : INFINITY, lo);
        }
}

qc_status qc_polar_row(qc_polar_series *w, const qc_iq_cells *q, double x, double y,
                       double sigma, double *row, double *err, double *rays)
{
    const double s = hypot(x, y), theta = atan2(y, x);
    size_t N = 0;
    int direct = 0;
    qc_status st = settle(w, q, s, sigma, &N, &direct, err);
    if (st != QC_OK)
        return st;
    if (direct)
        st = direct_row(w, q, s, theta, sigma, row, err);
    else
        series_cells(w, q, theta, N, row);
    if (st == QC_OK && rays)
        rays_settled(w, q, s, theta, sigma, N, direct, rays);
    return st;
}

qc_status qc_polar_rays(qc_polar_series *w, const qc_iq_cells *q, double x, double y,
                        double sigma, double *rays)
{
    const double s = hypot(x, y), theta = atan2(y, x);
    size_t N = 0;
    int direct = 0;
    double err = 0.0;
    qc_status st = settle(w, q, s, sigma, &N, &direct, &err);
    if (st == QC_OK)
        rays_settled(w, q, s, theta, sigma, N, direct, rays);
    return st;
}

qc_status qc_polar_phase_law(qc_polar_series *w, size_t n, const double **ck, size_t *kcut)
{
    qc_status st = phase_coefficients(w, n, 0);
    if (st != QC_OK)
        return st;
    *ck = w->ck;
    *kcut = w->kcut < n ? w->kcut : n;
    return QC_OK;
}
