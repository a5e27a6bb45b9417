/* isi_response.c — the taps of a named channel response sampled at the
 * symbol rate. One rectangular (NRZ) symbol of duration T passes the
 * response H(f); the pulse p(t) = F⁻¹{H(f)·T·sinc(fT)·e^{−jπfT}} is
 * computed on a fine grid by an inverse FFT (GSL's radix-2 complex FFT,
 * which keeps no global planner state and so is safe in threads), sampled
 * once per symbol at the phase of the widest eye, where the largest
 * sample most exceeds the sum of the others' magnitudes (common practice:
 * the receiver's clock recovery centres the eye), trimmed of
 * samples below QC_ISI_TAP_FLOOR of the largest at both ends and scaled to
 * sum 1.
 *
 * The responses, f3 = B·(symbol rate) their 3-dB bandwidth:
 * - gauss:B, Gaussian low-pass: H(f) = exp(−ln2·f²/(2·f3²)), so |H(f3)|² = ½;
 * - rc:B, first order: H(f) = 1/(1 + j·f/f3);
 * - bessel:N:B, Bessel–Thomson of order N: H(s) = θ_N(0)/θ_N(s/ω0) with
 *   the reverse Bessel polynomial θ_N (W. E. Thomson, "Delay networks
 *   having maximally flat frequency characteristics", Proc. IEE 96, 1949),
 *   ω0 set so that |H| is −3 dB at f3 (GSL Brent root finder);
 * - dispersion:D, the small-signal intensity response of a chirp-free
 *   intensity-modulated link through D ps/nm of dispersion,
 *   H(f) = cos(π·λ²·D·f²/c) (C. Wang and K. Petermann, "Small signal
 *   analysis for dispersive optical fiber communication systems", J.
 *   Lightw. Technol. 10(1), 1992), seen through the reference receiver:
 *   a 4th-order Bessel–Thomson low-pass at 0.75 × the symbol rate
 *   (dispersion:D:B sets another B).
 *
 * For a coherent receiver (qc_isi_coherent_response_taps) the dispersion
 * response is the field's: the all-pass H(f) = exp(j·β2·ω²·L/2) of the
 * linear Schrödinger equation without loss and nonlinearity (G. P.
 * Agrawal, Nonlinear Fiber Optics, Academic Press, ch. 3), with
 * β2·L = −λ²·D·L/(2π·c), between a transmit pulse and a matched receive
 * filter whose product is the ideal Nyquist (zero roll-off) spectrum, so
 * that the noise samples stay white and the symbol-spaced taps are the
 * Fourier coefficients h_k = ∫_{−1/2}^{1/2} H(f·Rs)·e^{j2πfk} df of the
 * all-pass over one Nyquist band (Σ_k |h_k|² = 1 by Parseval). They are
 * computed by an inverse FFT of H on 2^16 points of that band. */
#include "capacity/isi.h"
#include "core/internal.h"

#include <complex.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include <gsl/gsl_errno.h>
#include <gsl/gsl_fft_complex.h>
#include <gsl/gsl_roots.h>

#define OVERSAMPLE 64       /* grid points per symbol                     */
#define SPAN 256            /* symbols on the FFT grid (periodic span)    */
#define MAX_BESSEL 10
#define LIGHT_SPEED 299792458.0
/* The receiver behind a dispersion response: 4th-order Bessel–Thomson at
 * 0.75 × the symbol rate, the reference receiver of optical link
 * standards (common practice). */
#define DISPERSION_RECEIVER_B 0.75

typedef enum { R_GAUSS, R_RC, R_BESSEL, R_DISPERSION } response_kind;

typedef struct {
    response_kind kind;
    int order;         /* Bessel order                                 */
    double w0;         /* Bessel: ω0 / (2π f3), from the 3-dB root     */
    double f3;         /* 3-dB bandwidth / symbol rate                 */
    double disp;       /* dispersion: π·λ²·D·Rs²/c (phase at f = Rs)   */
    double bessel[MAX_BESSEL + 1]; /* coefficients of θ_N              */
} response;

/* θ_N(s) = Σ_k a_k s^k, a_k = (2N − k)! / (2^{N−k} k! (N − k)!). */
static void bessel_coefficients(int n, double *a)
{
    for (int k = 0; k <= n; k++) {
        double v = 1.0;
        for (int i = n - k + 1; i <= 2 * n - k; i++)
            v *= (double)i; /* (2n−k)!/(n−k)! */
        for (int i = 2; i <= k; i++)
            v /= (double)i;
        v /= ldexp(1.0, n - k);
        a[k] = v;
    }
}

static double complex bessel_h(const response *r, double w)
{
    double complex s = I * w, p = 0.0, sk = 1.0;
    for (int k = 0; k <= r->order; k++) {
        p += r->bessel[k] * sk;
        sk *= s;
    }
    return r->bessel[0] / p;
}

static double bessel_3db(double w, void *arg)
{
    double complex h = bessel_h(arg, w);
    return creal(h) * creal(h) + cimag(h) * cimag(h) - 0.5;
}

/* H at f in units of the symbol rate. */
static double complex response_at(const response *r, double f)
{
    switch (r->kind) {
    case R_GAUSS:
        return exp(-QC_ISI_LN2 * f * f / (2.0 * r->f3 * r->f3));
    case R_RC:
        return 1.0 / (1.0 + I * f / r->f3);
    case R_BESSEL:
        return bessel_h(r, r->w0 * f / r->f3);
    case R_DISPERSION:
        return cos(r->disp * f * f) * bessel_h(r, r->w0 * f / r->f3);
    }
    return 0.0;
}

/* Coefficients of θ_N and ω0, the root of |H(jω)|² = ½ (GSL Brent). */
static qc_status bessel_setup(const char *spec, int order, response *r)
{
    r->order = order;
    bessel_coefficients(order, r->bessel);
    gsl_root_fsolver *s = gsl_root_fsolver_alloc(gsl_root_fsolver_brent);
    if (!s)
        return qc_fail(QC_ENOMEM, "out of memory");
    gsl_function F = {bessel_3db, r};
    double lo = 1e-3, hi = 1.0;
    while (bessel_3db(hi, r) > 0.0 && hi < 1e6)
        hi *= 2.0;
    int status = gsl_root_fsolver_set(s, &F, lo, hi);
    for (int it = 0; status == GSL_SUCCESS && it < 200; it++) {
        status = gsl_root_fsolver_iterate(s);
        if (status != GSL_SUCCESS)
            break;
        double a = gsl_root_fsolver_x_lower(s), b = gsl_root_fsolver_x_upper(s);
        if (gsl_root_test_interval(a, b, 0.0, 1e-14) == GSL_SUCCESS)
            break;
    }
    r->w0 = gsl_root_fsolver_root(s);
    gsl_root_fsolver_free(s);
    if (status != GSL_SUCCESS || !(r->w0 > 0.0))
        return qc_fail(QC_ENUMERIC, "response '%s': the 3-dB frequency was not found", spec);
    return QC_OK;
}

static qc_status parse_number(const char *spec, const char *part, const char *what, double *v)
{
    if (qc_parse_double(part, v) != QC_OK || !isfinite(*v))
        return qc_fail(QC_EINVAL, "response '%s': %s must be a number (got '%s')", spec, what,
                       part);
    return QC_OK;
}

static qc_status parse_bandwidth(const char *spec, const char *part, double *b)
{
    qc_status st = parse_number(spec, part, "the bandwidth fraction B", b);
    if (st != QC_OK)
        return st;
    if (!(*b > 0.0))
        return qc_fail(QC_EINVAL,
                       "response '%s': the bandwidth fraction B (3-dB bandwidth / symbol "
                       "rate) must be > 0 (got %g)",
                       spec, *b);
    if (*b > 100.0)
        return qc_fail(QC_EINVAL,
                       "response '%s': the bandwidth fraction B must be at most 100 (got %g)",
                       spec, *b);
    return QC_OK;
}

static qc_status parse_response(const char *spec, double rs, double lambda_nm, response *r)
{
    char buf[128];
    char *parts[4] = {NULL};
    size_t n = 0;
    if (strlen(spec) >= sizeof buf)
        return qc_fail(QC_EINVAL, "response '%s': too long", spec);
    strcpy(buf, spec);
    char *save = NULL;
    for (char *tok = strtok_r(buf, ":", &save); tok && n < 4; tok = strtok_r(NULL, ":", &save))
        parts[n++] = tok;
    if (n == 0)
        return qc_fail(QC_EINVAL, "response '%s': expected gauss:B, bessel:N:B, rc:B or "
                                  "dispersion:PS_NM", spec);
    memset(r, 0, sizeof *r);
    const char *kind = parts[0];
    qc_status st;
    if (!strcmp(kind, "gauss") || !strcmp(kind, "rc")) {
        if (n != 2)
            return qc_fail(QC_EINVAL, "response '%s': expected %s:B", spec, kind);
        r->kind = kind[0] == 'g' ? R_GAUSS : R_RC;
        return parse_bandwidth(spec, parts[1], &r->f3);
    }
    if (!strcmp(kind, "bessel")) {
        if (n != 3)
            return qc_fail(QC_EINVAL, "response '%s': expected bessel:N:B", spec);
        double order;
        if ((st = parse_number(spec, parts[1], "the order N", &order)) != QC_OK)
            return st;
        if (order != floor(order) || order < 1 || order > MAX_BESSEL)
            return qc_fail(QC_EINVAL,
                           "response '%s': the Bessel order N must be a whole number from 1 "
                           "to %d (got %s)",
                           spec, MAX_BESSEL, parts[1]);
        r->kind = R_BESSEL;
        if ((st = parse_bandwidth(spec, parts[2], &r->f3)) != QC_OK)
            return st;
        return bessel_setup(spec, (int)order, r);
    }
    if (!strcmp(kind, "dispersion")) {
        if (n != 2 && n != 3)
            return qc_fail(QC_EINVAL, "response '%s': expected dispersion:PS_NM or "
                                      "dispersion:PS_NM:B", spec);
        double d;
        if ((st = parse_number(spec, parts[1], "the dispersion (ps/nm)", &d)) != QC_OK)
            return st;
        r->f3 = DISPERSION_RECEIVER_B;
        if (n == 3 && (st = parse_bandwidth(spec, parts[2], &r->f3)) != QC_OK)
            return st;
        if (!(rs > 0.0) || !isfinite(rs))
            return qc_fail(QC_EINVAL,
                           "response '%s': a dispersion response needs the symbol rate "
                           "(symbol-rate, baud)",
                           spec);
        if (!(lambda_nm > 0.0) || !isfinite(lambda_nm))
            return qc_fail(QC_EINVAL,
                           "response '%s': a dispersion response needs the wavelength "
                           "(wavelength-nm)",
                           spec);
        r->kind = R_DISPERSION;
        const double lambda = lambda_nm * 1e-9, dsi = d * 1e-12 / 1e-9; /* s/m */
        r->disp = QC_ISI_PI * lambda * lambda * dsi * rs * rs / LIGHT_SPEED;
        return bessel_setup(spec, 4, r);
    }
    return qc_fail(QC_EINVAL,
                   "response '%s': unknown response '%s' (expected gauss:B, bessel:N:B, rc:B "
                   "or dispersion:PS_NM)",
                   spec, kind);
}

qc_status qc_isi_response_taps(const char *spec, double symbol_rate, double wavelength_nm,
                               double *taps_out, size_t *ntaps)
{
    qc_gsl_init();
    if (!spec || !*spec)
        return qc_fail(QC_EINVAL, "response: empty (expected gauss:B, bessel:N:B, rc:B or "
                                  "dispersion:PS_NM)");
    response r;
    qc_status st = parse_response(spec, symbol_rate, wavelength_nm, &r);
    if (st != QC_OK)
        return st;
    const size_t N = (size_t)OVERSAMPLE * SPAN;
    double *z = qc_malloc_array(2 * N, sizeof *z);
    if (!z)
        return qc_fail(QC_ENOMEM, "out of memory");
    /* Spectrum of the filtered symbol at f = k/SPAN (symbol-rate units);
     * time step 1/OVERSAMPLE symbol. */
    for (size_t k = 0; k < N; k++) {
        const long kk = k < N / 2 ? (long)k : (long)k - (long)N;
        const double f = (double)kk / SPAN;
        const double sinc = f == 0.0 ? 1.0 : sin(QC_ISI_PI * f) / (QC_ISI_PI * f);
        const double complex p = response_at(&r, f) * sinc * cexp(-I * QC_ISI_PI * f);
        z[2 * k] = creal(p);
        z[2 * k + 1] = cimag(p);
    }
    if (gsl_fft_complex_radix2_inverse(z, 1, N) != GSL_SUCCESS) {
        free(z);
        return qc_fail(QC_ENUMERIC, "response '%s': the inverse FFT failed", spec);
    }
    /* The grid is periodic over SPAN symbols: index i is time i/OVERSAMPLE
     * symbols (mod SPAN). The sampling phase is the one of the widest eye,
     * the largest sample less the sum of the others' magnitudes. */
    size_t best = 0;
    double best_open = -INFINITY;
    for (size_t j = 0; j < OVERSAMPLE; j++) {
        double big = 0.0, all = 0.0;
        for (size_t k = 0; k < SPAN; k++) {
            const double v = fabs(z[2 * (j + k * OVERSAMPLE)]);
            big = fmax(big, v);
            all += v;
        }
        if (big - (all - big) > best_open) {
            best_open = big - (all - big);
            best = j;
        }
    }
    size_t peak = best;
    for (size_t k = 0; k < SPAN; k++)
        if (fabs(z[2 * (best + k * OVERSAMPLE)]) > fabs(z[2 * peak]))
            peak = best + k * OVERSAMPLE;
    /* Samples at that phase, from SPAN/2 symbols before the largest. */
    double samples[SPAN];
    const size_t half = SPAN / 2;
    double biggest = 0.0;
    for (size_t j = 0; j < SPAN; j++) {
        size_t i = (peak + N + (j * OVERSAMPLE) - half * OVERSAMPLE) % N;
        samples[j] = z[2 * i];
        biggest = fmax(biggest, fabs(samples[j]));
    }
    free(z);
    size_t first = 0, last = SPAN - 1;
    while (first < half && fabs(samples[first]) < QC_ISI_TAP_FLOOR * biggest)
        first++;
    while (last > half && fabs(samples[last]) < QC_ISI_TAP_FLOOR * biggest)
        last--;
    const size_t n = last - first + 1;
    if (n > QC_ISI_MAX_TAPS)
        return qc_fail(QC_EINVAL,
                       "response '%s' spans %zu symbols (taps above %g of the largest); at "
                       "most %zu taps are supported: widen the bandwidth or give --taps",
                       spec, n, QC_ISI_TAP_FLOOR, QC_ISI_MAX_TAPS);
    double sum = 0.0;
    for (size_t i = 0; i < n; i++)
        sum += samples[first + i];
    if (!(fabs(sum) > 1e-6 * biggest))
        return qc_fail(QC_EINVAL,
                       "response '%s': the taps sum to about 0 (the response blocks the "
                       "mean); give --taps instead",
                       spec);
    for (size_t i = 0; i < n; i++)
        taps_out[i] = samples[first + i] / sum;
    *ntaps = n;
    return QC_OK;
}

/* ---- the coherent receiver ------------------------------------------ */

#define COHERENT_GRID 65536 /* frequency points over one Nyquist band */

qc_status qc_isi_coherent_response_taps(const char *spec, double symbol_rate,
                                        double wavelength_nm, size_t max_taps, double *re,
                                        double *im, size_t *ntaps, double *truncated_energy)
{
    qc_gsl_init();
    if (!spec || !*spec)
        return qc_fail(QC_EINVAL, "response: empty (expected gauss:B, bessel:N:B, rc:B or "
                                  "dispersion:PS_NM)");
    if (max_taps < 1 || max_taps > QC_ISI_MAX_TAPS)
        return qc_fail(QC_EINVAL, "response '%s': at most %zu taps may be asked for (got %zu)",
                       spec, QC_ISI_MAX_TAPS, max_taps);
    if (strncmp(spec, "dispersion:", 11) != 0) {
        qc_status st = qc_isi_response_taps(spec, symbol_rate, wavelength_nm, re, ntaps);
        if (st != QC_OK)
            return st;
        for (size_t i = 0; i < *ntaps; i++)
            im[i] = 0.0;
        *truncated_energy = NAN;
        return QC_OK;
    }
    const char *arg = spec + 11;
    if (strchr(arg, ':'))
        return qc_fail(QC_EINVAL,
                       "response '%s': a coherent receiver's dispersion response is "
                       "dispersion:PS_NM (the pulse is the ideal Nyquist pulse; no receiver "
                       "bandwidth B)",
                       spec);
    double d;
    qc_status st = parse_number(spec, arg, "the dispersion (ps/nm)", &d);
    if (st != QC_OK)
        return st;
    if (!(symbol_rate > 0.0) || !isfinite(symbol_rate))
        return qc_fail(QC_EINVAL,
                       "response '%s': a dispersion response needs the symbol rate "
                       "(symbol-rate, baud)",
                       spec);
    if (!(wavelength_nm > 0.0) || !isfinite(wavelength_nm))
        return qc_fail(QC_EINVAL,
                       "response '%s': a dispersion response needs the wavelength "
                       "(wavelength-nm)",
                       spec);
    const double lambda = wavelength_nm * 1e-9, dsi = d * 1e-3; /* ps/nm → s/m */
    /* phase at f = Rs: β2·(2π·Rs)²·L/2 = −π·λ²·D·L·Rs²/c */
    const double a = -QC_ISI_PI * lambda * lambda * dsi * symbol_rate * symbol_rate /
                     LIGHT_SPEED;
    const size_t N = COHERENT_GRID;
    double *z = qc_malloc_array(2 * N, sizeof *z);
    if (!z)
        return qc_fail(QC_ENOMEM, "out of memory");
    for (size_t n = 0; n < N; n++) {
        const double f = (n < N / 2 ? (double)n : (double)n - (double)N) / (double)N;
        const double ph = a * f * f;
        z[2 * n] = cos(ph);
        z[2 * n + 1] = sin(ph);
    }
    /* GSL's inverse: x_k = (1/N) Σ_n z_n e^{+2πi·nk/N} = h_k (k mod N) */
    if (gsl_fft_complex_radix2_inverse(z, 1, N) != GSL_SUCCESS) {
        free(z);
        return qc_fail(QC_ENUMERIC, "response '%s': the inverse FFT failed", spec);
    }
#define H_RE(k) z[2 * (((k) + N) % N)]
#define H_IM(k) z[2 * (((k) + N) % N) + 1]
    double total = 0.0, biggest = 0.0;
    for (size_t n = 0; n < N; n++) {
        const double m2 = z[2 * n] * z[2 * n] + z[2 * n + 1] * z[2 * n + 1];
        total += m2;
        biggest = fmax(biggest, sqrt(m2));
    }
    /* the widest pair ±m with a tap at or above the floor */
    long m = 0;
    for (long k = (long)N / 2 - 1; k > 0; k--) {
        const double mp = hypot(H_RE(k), H_IM(k)), mn = hypot(H_RE(-k), H_IM(-k));
        if (fmax(mp, mn) >= QC_ISI_TAP_FLOOR * biggest) {
            m = k;
            break;
        }
    }
    const long m_max = (long)(max_taps - 1) / 2;
    if (m > m_max)
        m = m_max;
    double kept = 0.0;
    for (long k = -m; k <= m; k++) {
        /* H is even in f, so h_{−k} = h_k: the mean of the two keeps that
         * exact through the FFT's rounding */
        re[k + m] = 0.5 * (H_RE(k) + H_RE(-k));
        im[k + m] = 0.5 * (H_IM(k) + H_IM(-k));
        kept += re[k + m] * re[k + m] + im[k + m] * im[k + m];
    }
#undef H_RE
#undef H_IM
    free(z);
    *ntaps = (size_t)(2 * m + 1);
    *truncated_energy = fmax(0.0, total - kept);
    return QC_OK;
}
