/* apd.c — avalanche photodiode receiver, exact law. In a slot the
 * detector emits N ~ Poisson(λ) primary electrons, λ = signal·x +
 * background; each is multiplied independently by the McIntyre gain G
 * (apd_gain.c), and Gaussian thermal noise of σ_th electrons is added:
 *   Y = Σ_{i≤N} G_i + T,   φ_Y(ω) = exp(λ(φ_G(ω) − 1)) · exp(−σ_th²ω²/2).
 * The compound Poisson law of Z = Σ G_i is computed from its
 * characteristic function on an FFT grid (the DFT method for compound
 * distributions: Panjer & Willmot, Insurance Risk Models, 1992;
 * Embrechts & Frei, Math. Meth. Oper. Res. 69, 2009), the grid placed
 * over the law between a lower and an upper Chernoff bound, so that the
 * mass wrapped around is below 1e-18 on each side.
 * The thermal noise
 * is then added exactly:
 *  - lattice regime (σ_th < 8h, h the grid step): P(Y < t) =
 *    Σ_j p_j Φ((t − jh)/σ_th) summed directly, cut by a bound on the rest;
 *  - smooth regime (σ_th ≥ 8h): the cell masses P((i−1)h ≤ Y < ih), the
 *    density and its derivative on the grid are linear convolutions of p
 *    with sampled Gaussian kernels (same FFT); the CDF between grid points
 *    is a quintic Hermite interpolant of log F (resp. log Q), which is
 *    exact for a Gaussian tail and kept inside the bracketing grid values.
 * FFT plans (FFTW), gain and kernel spectra are made once per grid
 * length and reused for every level; each level's grid values are cached
 * in the instance, keyed by the level value (one thread at a time: a
 * sweep lends each instance to one point at a time, src/study/
 * model_cache.c, and reuses it for later points). A level's law depends on
 * the parameters and the level alone, never on which levels the instance
 * computed before, so a sweep's results do not depend on how its points
 * were spread over threads and instances. Grid step h = 1 electron unless
 * the law needs more than 2^21 points: then h doubles, and the grid holds
 * the exact φ_G at its frequencies 2πk/(len·h) (polyphase FFTs, or the
 * chirp z-transform for long steps), so that the law keeps the exact
 * cumulants (a gain law split between grid points would add λh²E[f(1−f)]
 * to the variance, f the fractional part of G/h). From 1e4 primaries on,
 * the bins that matter take φ_G − 1 from direct sums (refine_bins).
 * Mean M·λ and variance M²Fλ + σ_th², F = kM + (1 − k)(2 − 1/M) the
 * excess noise factor (McIntyre, IEEE Trans. Electron Devices 13(1),
 * 164–168, 1966; Personick, Bell Syst. Tech. J. 50(1), 167–189, 1971, for
 * this receiver model). The grid is sized by the law's own spread (the
 * Chernoff bounds, from a table of E e^{±θG} made once per instance), so
 * a level without primaries keeps a grid as narrow as the thermal noise.
 * Limits, refused up front with QC_EINVAL: a gain law longer than
 * MAX_GAIN_LEN points (apd-gain above about 1.6e5 at k = 0; the parameter
 * is capped at APD_EXACT_MAX_GAIN), and a level whose span needs a grid
 * step above 1 and 2σ_th (apd_check_level), where the lattice ripple is no
 * longer negligible; memory and time are thus bounded whatever the gain.
 * Accuracy (docs/models.md, against an Edgeworth series): absolute 3e-13
 * at 1e5 primaries, 3e-12 at 1e7, 3.5e-11 at 6e9 with σ_th ≥ h; in the
 * lattice regime with σ_th < h a ripple of relative size
 * ~exp(−2π²σ_th²/h²). Tails below ~1e-13 are not resolved. */
#include "core/internal.h"
#include "models/model_internal.h"
#include "models/apd_gain.h"
#include "models/convolve.h"

#include <complex.h>
#include <math.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>

#define SQRT_2PI 2.5066282746310002 /* √(2π) */
#define M_PI_VALUE 3.14159265358979323846

#include <gsl/gsl_cdf.h>

#define MAX_GRID ((size_t)1 << 21) /* longest transform                  */
#define MAX_GAIN_LEN ((size_t)1 << 23) /* longest gain law (64 MiB)       */
#define MAX_STEP_RATIO 2.0         /* grid step h ≤ 2σ_th (lattice ripple) */
#define MIN_GRID ((size_t)64)
#define SMOOTH_RATIO 8.0           /* σ_th ≥ 8h: interpolate grid values  */
#define KERNEL_SD 9.5              /* kernel half-width in σ_th           */
#define REST_TOL 1e-17             /* direct sums: rest ≤ REST_TOL · sum  */
#define POLYPHASE_MAX 16.0         /* grid steps up to this: polyphase FFTs */
#define NGRIDS 6
#define NSLOTS 32
#define NTHETA 60                  /* θ values of the Chernoff bounds      */
#define CACHE_BYTES ((size_t)512 << 20)

typedef struct {
    double h;      /* grid step, electrons (0: unused entry) */
    size_t len;    /* transform length                       */
    int smooth;
    qc_conv *conv;
    double complex *gspec;   /* spectrum of the gain law on this grid */
    double complex *gm1;     /* φ_G − 1 summed directly, where exact[i] */
    unsigned char *exact;
    double complex *kspec[3]; /* cell-mass, density, slope kernels     */
    double complex *work;
    double *real;
    unsigned long stamp;
} grid;

typedef struct {
    double x; /* level (NaN: empty slot) */
    double h;
    int smooth;
    long n;  /* lattice: p[0..n) on z = jh; smooth: n grid values */
    long w;  /* smooth: array index a ↔ y = (a − w)·h            */
    double z0;   /* the grid starts at z0 = b0·h (electrons); the
                  * arrays below are in coordinates relative to z0     */
    double ztop; /* largest z kept, relative to z0                    */
    double *p, *cl, *cr; /* lattice: pmf, Σ_{i≤j}, Σ_{i≥j}         */
    double *F, *Q, *f, *df; /* smooth: P(Y<y), P(Y≥y), f, f'       */
    size_t bytes;
    unsigned long stamp;
} level;

typedef struct {
    double params[APD_NPARAMS];
    double *gain;
    size_t gain_len;
    grid grids[NGRIDS];
    level slots[NSLOTS];
    unsigned long clock;
    size_t bytes;
    double mgf_up[NTHETA], mgf_dn[NTHETA]; /* E e^{±θ_k G} */
    qc_apd_stats stats;
} apd_state;

static double now(void)
{
    struct timespec ts;
    clock_gettime(CLOCK_MONOTONIC, &ts);
    return (double)ts.tv_sec + 1e-9 * (double)ts.tv_nsec;
}

static void grid_clear(grid *g)
{
    qc_conv_free(g->conv);
    free(g->gspec);
    free(g->gm1);
    free(g->exact);
    for (int k = 0; k < 3; k++)
        free(g->kspec[k]);
    free(g->work);
    free(g->real);
    memset(g, 0, sizeof *g);
}

static void level_clear(apd_state *s, level *lv)
{
    free(lv->p);
    free(lv->cl);
    free(lv->cr);
    free(lv->F);
    free(lv->Q);
    free(lv->f);
    free(lv->df);
    s->bytes -= lv->bytes;
    memset(lv, 0, sizeof *lv);
    lv->x = NAN;
}

static void apd_destroy(void *state)
{
    apd_state *s = state;
    if (!s)
        return;
    for (int i = 0; i < NGRIDS; i++)
        grid_clear(&s->grids[i]);
    for (int i = 0; i < NSLOTS; i++)
        level_clear(s, &s->slots[i]);
    free(s->gain);
    free(s);
}

static void mgf_table(apd_state *s);

static qc_status apd_init(const double *params, void **state)
{
    apd_state *s = calloc(1, sizeof *s);
    if (!s)
        return qc_fail(QC_ENOMEM, "out of memory");
    memcpy(s->params, params, sizeof s->params);
    for (int i = 0; i < NSLOTS; i++)
        s->slots[i].x = NAN;
    qc_status st = qc_apd_gain_pmf(params[APD_GAIN], params[APD_K], MAX_GAIN_LEN,
                                   &s->gain, &s->gain_len);
    if (st == QC_ENOMEM && s->gain == NULL && params[APD_GAIN] > 1.0) {
        apd_destroy(s);
        return qc_fail(QC_EINVAL,
                       "apd-gain %g with apd-k %g: the McIntyre gain law needs more than "
                       "%zu points, the limit of the exact 'apd' model (apd-gain up to "
                       "%g at apd-k 0, less for k > 0); use 'apd-gauss'",
                       params[APD_GAIN], params[APD_K], MAX_GAIN_LEN, APD_EXACT_MAX_GAIN);
    }
    if (st != QC_OK) {
        apd_destroy(s);
        return st;
    }
    mgf_table(s);
    *state = s;
    return QC_OK;
}

/* Φ(b) − Φ(a) for a ≤ b, on the side where it does not cancel. */
static double gauss_mass(double a, double b)
{
    if (a >= 0.0)
        return gsl_cdf_ugaussian_Q(a) - gsl_cdf_ugaussian_Q(b);
    return gsl_cdf_ugaussian_P(b) - gsl_cdf_ugaussian_P(a);
}

static long kernel_halfwidth(double sigma, double h)
{
    return (long)ceil(KERNEL_SD * sigma / h) + 1;
}

/* The grid (h, len): plans, gain spectrum and, if smooth, kernel spectra;
 * made on first use, least recently used entry replaced. */
static qc_status get_grid(apd_state *s, double h, size_t len, int smooth,
                          grid **out)
{
    grid *g = NULL;
    for (int i = 0; i < NGRIDS; i++)
        if (s->grids[i].h == h && s->grids[i].len == len) {
            g = &s->grids[i];
            g->stamp = ++s->clock;
            *out = g;
            return QC_OK;
        }
    g = &s->grids[0];
    for (int i = 1; i < NGRIDS; i++)
        if (s->grids[i].stamp < g->stamp)
            g = &s->grids[i];
    grid_clear(g);
    double t0 = now();
    size_t ns = len / 2 + 1;
    qc_status st = qc_conv_alloc(len, &g->conv);
    if (st != QC_OK)
        return st;
    g->gspec = qc_malloc_array(ns, sizeof *g->gspec);
    g->work = qc_malloc_array(ns, sizeof *g->work);
    g->real = qc_calloc(len, sizeof *g->real);
    if (!g->gspec || !g->work || !g->real)
        goto nomem;
    if (h == 1.0) { /* gain law on the electron grid: its DFT */
        for (size_t n = 1; n < s->gain_len; n++)
            g->real[n % len] += s->gain[n];
        qc_conv_forward(g->conv, g->real, len, g->gspec);
    } else if (h <= POLYPHASE_MAX) {
        /* step h: the exact φ_G at the grid's frequencies 2πk/(len·h),
         * k ≤ len/2, i.e. the first len/2 + 1 bins of a length len·h DFT
         * of the gain law; split n = hq + r (polyphase): h real FFTs of
         * length len of the subsequences g_{hq+r} (folded modulo len,
         * which leaves their bins unchanged), combined with the twiddle
         * factors e^{−2πi rk/(len·h)} */
        size_t hh = (size_t)h, period = len * hh;
        memset(g->gspec, 0, ns * sizeof *g->gspec);
        for (size_t r = 0; r < hh; r++) {
            memset(g->real, 0, len * sizeof *g->real);
            for (size_t n = r; n < s->gain_len; n += hh)
                g->real[(n / hh) % len] += s->gain[n];
            qc_conv_forward(g->conv, g->real, len, g->work);
            for (size_t k = 0; k < ns; k++) {
                double a = 2.0 * M_PI_VALUE *
                           ((double)((r * k) % period) / (double)period);
                g->gspec[k] += (cos(a) - I * sin(a)) * g->work[k];
            }
        }
    } else {
        /* longer steps: the same bins by the chirp z-transform (three
         * FFTs whatever h; its larger rounding is replaced by direct sums
         * in the bins that matter, refine_bins) */
        size_t period = len * (size_t)h, nx = s->gain_len;
        const double *src = s->gain;
        double *fold = NULL;
        if (nx > period) {
            fold = qc_calloc(period, sizeof *fold);
            if (!fold)
                goto nomem;
            for (size_t n = 1; n < nx; n++)
                fold[n % period] += s->gain[n];
            src = fold;
            nx = period;
        }
        qc_status cst = qc_conv_chirp(src, nx, period, ns, g->gspec);
        free(fold);
        if (cst != QC_OK) {
            grid_clear(g);
            return cst;
        }
    }
    if (smooth) {
        double sigma = s->params[APD_SIGMA_TH];
        long w = kernel_halfwidth(sigma, h);
        for (int k = 0; k < 3; k++) {
            g->kspec[k] = qc_malloc_array(ns, sizeof *g->kspec[k]);
            if (!g->kspec[k])
                goto nomem;
            memset(g->real, 0, len * sizeof *g->real);
            for (long m = -w; m <= w; m++) {
                double u = (double)m * h / sigma, v;
                if (k == 0) /* P((m−1)h ≤ T < mh) */
                    v = gauss_mass(u - h / sigma, u);
                else if (k == 1) /* density φ(u)/σ */
                    v = exp(-0.5 * u * u) / (sigma * SQRT_2PI);
                else /* its slope −u φ(u)/σ² */
                    v = -u * exp(-0.5 * u * u) / (sigma * sigma * SQRT_2PI);
                g->real[(size_t)((m % (long)len + (long)len) % (long)len)] = v;
            }
            qc_conv_forward(g->conv, g->real, len, g->kspec[k]);
        }
    }
    g->h = h;
    g->len = len;
    g->smooth = smooth;
    g->stamp = ++s->clock;
    s->stats.plans++;
    s->stats.plan_seconds += now() - t0;
    *out = g;
    return QC_OK;
nomem:
    grid_clear(g);
    return qc_fail(QC_ENOMEM, "out of memory for an FFT grid of %zu points", len);
}

static size_t next_pow2(size_t n)
{
    size_t m = MIN_GRID;
    while (m < n)
        m *= 2;
    return m;
}

/* Bins where λ(1 − Re φ_G) ≤ REFINE_EXP (|φ_Z| ≥ e^{−60}) take φ_G − 1
 * from a direct sum Σ_n g_n (e^{−iωn} − 1), each term to full relative
 * accuracy: from the FFT, φ_G − 1 carries an absolute rounding error
 * ~1e-17 that λ multiplies (CDF errors ~1e-12 at 1e5 primaries, growing
 * with λ). The other bins have |φ_Z| < e^{−60}: their errors do not
 * matter. Below REFINE_MIN_LAMBDA primaries the FFT values are kept (the
 * error is ~λ·1e-17 there, and the band to refine is most of the grid);
 * skipped too when it would cost more than REFINE_BUDGET terms. */
#define REFINE_EXP 60.0
#define REFINE_MIN_LAMBDA 1e4
#define REFINE_BUDGET 1e7

/* Does lambda take φ_G − 1 from direct sums in bin i? */
static int in_band(const grid *g, double lambda, size_t i)
{
    return lambda * (1.0 - creal(g->gspec[i])) <= REFINE_EXP;
}

/* Fills the direct sums of lambda's bins not yet summed (an earlier level
 * may have summed some); 1 when lambda takes them, 0 when it keeps the
 * FFT values. The choice and the values depend on lambda and the grid
 * alone, never on the levels computed before. */
static int refine_bins(const apd_state *s, grid *g, double lambda)
{
    size_t ns = g->len / 2 + 1, band = 0;
    if (lambda < REFINE_MIN_LAMBDA)
        return 0;
    for (size_t i = 1; i < ns; i++)
        if (in_band(g, lambda, i))
            band++;
    if (band == 0 || (double)band * (double)s->gain_len > REFINE_BUDGET)
        return 0;
    if (!g->exact) {
        g->gm1 = qc_malloc_array(ns, sizeof *g->gm1);
        g->exact = qc_calloc(ns, 1);
        if (!g->gm1 || !g->exact) { /* keep the FFT values */
            free(g->gm1);
            free(g->exact);
            g->gm1 = NULL;
            g->exact = NULL;
            return 0;
        }
        g->gm1[0] = 0.0;
        g->exact[0] = 1;
    }
    uint64_t period = (uint64_t)g->len * (uint64_t)g->h;
    for (size_t i = 1; i < ns; i++) {
        if (g->exact[i] || !in_band(g, lambda, i))
            continue;
        double re = 0.0, im = 0.0;
        for (size_t n = 1; n < s->gain_len; n++) {
            /* ωn = 2π (i·n mod period)/period, reduced in integers */
            double a = 2.0 * M_PI_VALUE *
                       ((double)(((uint64_t)i * n) % period) / (double)period);
            double sh = sin(0.5 * a);
            re -= 2.0 * s->gain[n] * sh * sh;
            im -= s->gain[n] * sin(a);
        }
        g->gm1[i] = re + I * im;
        g->exact[i] = 1;
    }
    return 1;
}

/* Spectrum of the compound Poisson law, exp(λ(φ_G − 1)), into g->work. */
static void compound_spectrum(const apd_state *s, grid *g, double lambda)
{
    int refined = refine_bins(s, g, lambda);
    size_t ns = g->len / 2 + 1;
    for (size_t i = 0; i < ns; i++) {
        double complex d = refined && in_band(g, lambda, i) ? g->gm1[i] : g->gspec[i] - 1.0;
        g->work[i] = cexp(lambda * d);
    }
}

/* Compound Poisson law on grid g: circular result in g->real. */
static void compound(const apd_state *s, grid *g, double lambda)
{
    compound_spectrum(s, g, lambda);
    qc_conv_inverse(g->conv, g->work, g->real);
}

/* Chernoff bounds (Chernoff, Ann. Math. Stat. 23(4), 1952) for the
 * compound Poisson Z, over a geometric grid of θ > 0:
 *   ln P(Z ≥ z) ≤ −θz + λ(E e^{θG} − 1),  ln P(Z ≤ z) ≤ θz + λ(E e^{−θG} − 1).
 * The moment generating function of G at the NTHETA values ±θ_k depends
 * on the gain law alone: it is summed once per instance (mgf_table), in
 * one pass over the law with e^{±θ_k n} advanced by multiplication and
 * taken afresh from exp() every MGF_ANCHOR terms, so that a level's bounds
 * cost O(NTHETA) whatever the gain (summing the law for every θ of every
 * level took 80% of a design at gain 1e5, and ran past a minute at 1e6). */
#define ZTAIL 1e-18
#define MGF_ANCHOR 1024

static double theta_k(const apd_state *s, int k)
{
    return 700.0 / (double)s->gain_len * pow(0.7, (double)k);
}

static void mgf_table(apd_state *s)
{
    double up[NTHETA], dn[NTHETA], wu[NTHETA], wd[NTHETA];
    double su[NTHETA] = {0}, sd[NTHETA] = {0};
    for (int k = 0; k < NTHETA; k++) {
        wu[k] = exp(theta_k(s, k));
        wd[k] = exp(-theta_k(s, k));
    }
    for (size_t n0 = 1; n0 < s->gain_len; n0 += MGF_ANCHOR) {
        size_t n1 = n0 + MGF_ANCHOR < s->gain_len ? n0 + MGF_ANCHOR : s->gain_len;
        for (int k = 0; k < NTHETA; k++) {
            up[k] = exp(theta_k(s, k) * (double)n0);
            dn[k] = exp(-theta_k(s, k) * (double)n0);
        }
        for (size_t n = n0; n < n1; n++) {
            double gn = s->gain[n];
            for (int k = 0; k < NTHETA; k++) {
                su[k] += gn * up[k];
                sd[k] += gn * dn[k];
                up[k] *= wu[k];
                dn[k] *= wd[k];
            }
        }
    }
    for (int k = 0; k < NTHETA; k++) {
        s->mgf_up[k] = su[k];
        s->mgf_dn[k] = sd[k];
    }
}

/* A count z with P(Z ≥ z) ≤ ZTAIL; 0 when P(Z > 0) = 1 − e^{−λ} is
 * already below ZTAIL (no primary: Z = 0, and the grid stays as narrow as
 * the thermal noise instead of spanning a multiple of the gain). */
static double count_bound(const apd_state *s, double lambda)
{
    if (-expm1(-lambda) <= ZTAIL)
        return 0.0;
    double best = INFINITY;
    for (int k = 0; k < NTHETA; k++) {
        double z = (lambda * (s->mgf_up[k] - 1.0) - log(ZTAIL)) / theta_k(s, k);
        if (z < best)
            best = z;
    }
    return best;
}

/* A count z with P(Z ≤ z) ≤ ZTAIL (0 if none is found), by the same
 * bound on the other side. Grid values below it carry only FFT rounding
 * noise, whose positive part would otherwise add up over the long empty
 * stretch left of the law (about 1e-11 at 6e4 primaries); they are set to
 * zero. */
static double count_bound_low(const apd_state *s, double lambda)
{
    double best = 0.0;
    for (int k = 0; k < NTHETA; k++) {
        double z = (log(ZTAIL) - lambda * (s->mgf_dn[k] - 1.0)) / theta_k(s, k);
        if (z > best)
            best = z;
    }
    return best;
}

/* The grid z = (b0 + j)h, j < nz, over [zlo, zhi]: step h = 1 electron,
 * doubled until the law and the kernel margins fit MAX_GRID points. */
static double grid_step(double sigma, double zlo, double zhi, long *nz, long *w,
                        long *b0, int *smooth)
{
    double h = 1.0;
    for (;;) {
        *smooth = sigma >= SMOOTH_RATIO * h;
        *w = *smooth ? kernel_halfwidth(sigma, h) : 0;
        *b0 = (long)floor(zlo / h);
        *nz = (long)ceil(zhi / h) + 1 - *b0;
        if ((size_t)*nz + 2 * (size_t)*w <= MAX_GRID)
            return h;
        h *= 2.0;
    }
}

/* A level is refused up front when its law spans so many electrons that
 * the grid step h > 1 exceeds 2σ_th: the thermal noise no longer smooths
 * the lattice (a density ripple of relative size exp(−2π²σ_th²/h²): 7e-3
 * at h = 2σ_th, CDF error 8.8e-9; 15% at h = 3.2σ_th), and the density the
 * unquantized rate integrates would be wrong. On step 1 the grid is the
 * electron lattice itself: exact for any σ_th. */
static qc_status apd_check_level(const qc_model *m, double x)
{
    qc_status st = qc_apd_check_level(m, x);
    if (st != QC_OK)
        return st;
    const apd_state *s = m->state;
    double sigma = m->params[APD_SIGMA_TH], lambda = qc_apd_rate(m->params, x);
    double zhi = count_bound(s, lambda), zlo = count_bound_low(s, lambda);
    long nz, w, b0;
    int smooth;
    double h = grid_step(sigma, zlo, zhi, &nz, &w, &b0, &smooth);
    if (h > 1.0 && h > MAX_STEP_RATIO * sigma)
        return qc_fail(QC_EINVAL,
                       "apd-gain %g: level %g (%g primaries) spans %.3g electrons, which "
                       "an FFT grid of %zu points resolves only in steps of %g electrons, "
                       "coarser than 2 x sigma-th %g; the exact 'apd' model needs a "
                       "level's spread (apd-gain x primaries x a few) below about %.3g x "
                       "sigma-th electrons: lower apd-gain or use 'apd-gauss'",
                       m->params[APD_GAIN], x, lambda, zhi - zlo, MAX_GRID, h, sigma,
                       2.0 * (double)MAX_GRID);
    return QC_OK;
}

static qc_status fill_level(apd_state *s, double x, level *lv)
{
    const double *p = s->params;
    double sigma = p[APD_SIGMA_TH];
    double lambda = qc_apd_rate(p, x);
    double zhi = count_bound(s, lambda), zlo = count_bound_low(s, lambda);
    grid *g = NULL;
    long nz = 0, w = 0, b0 = 0;
    int smooth = 0;
    double h = grid_step(sigma, zlo, zhi, &nz, &w, &b0, &smooth);
    qc_status st = get_grid(s, h, next_pow2((size_t)(nz + 2 * w)), smooth, &g);
    if (st != QC_OK)
        return st;
    if (!smooth)
        compound(s, g, lambda);
    lv->h = h;
    lv->smooth = smooth;
    lv->z0 = (double)b0 * h;
    lv->ztop = (double)(nz - 1) * h;
    size_t len = g->len;
    double zlo_rel = zlo - lv->z0; /* in [0, h) */
    if (!smooth) {
        lv->n = nz;
        lv->p = qc_malloc_array((size_t)nz, sizeof *lv->p);
        lv->cl = qc_malloc_array((size_t)nz, sizeof *lv->cl);
        lv->cr = qc_malloc_array((size_t)nz, sizeof *lv->cr);
        if (!lv->p || !lv->cl || !lv->cr)
            return qc_fail(QC_ENOMEM, "out of memory");
        double total = 0.0;
        for (long j = 0; j < nz; j++) {
            double v = g->real[(size_t)(b0 + j) % len];
            lv->p[j] = v > 0.0 ? v : 0.0;
            total += lv->p[j];
        }
        if (h == 1.0 && b0 == 0) { /* no primary: exactly e^{−λ} */
            total += exp(-lambda) - lv->p[0];
            lv->p[0] = exp(-lambda);
        }
        for (long j = 0; j < nz && (double)j * h < zlo_rel; j++) {
            total -= lv->p[j];
            lv->p[j] = 0.0;
        }
        double acc = 0.0;
        for (long j = 0; j < nz; j++) {
            lv->p[j] /= total;
            acc += lv->p[j];
            lv->cl[j] = acc;
        }
        acc = 0.0;
        for (long j = nz - 1; j >= 0; j--) {
            acc += lv->p[j];
            lv->cr[j] = acc;
        }
        lv->bytes = 3 * (size_t)nz * sizeof(double);
        return QC_OK;
    }
    /* smooth: convolve the compound law with the three kernels */
    long n = nz + 2 * w;
    lv->n = n;
    lv->w = w;
    double **dst[3] = {&lv->F, &lv->f, &lv->df};
    for (int k = 0; k < 3; k++) {
        *dst[k] = qc_malloc_array((size_t)n, sizeof(double));
        if (!*dst[k])
            return qc_fail(QC_ENOMEM, "out of memory");
    }
    lv->Q = qc_malloc_array((size_t)n, sizeof *lv->Q);
    if (!lv->Q)
        return qc_fail(QC_ENOMEM, "out of memory");
    size_t ns = len / 2 + 1;
    compound_spectrum(s, g, lambda);
    double complex *pz = qc_malloc_array(ns, sizeof *pz);
    if (!pz)
        return qc_fail(QC_ENOMEM, "out of memory");
    memcpy(pz, g->work, ns * sizeof *pz);
    for (int k = 0; k < 3; k++) {
        for (size_t i = 0; i < ns; i++)
            g->work[i] = pz[i] * g->kspec[k][i];
        qc_conv_inverse(g->conv, g->work, g->real);
        double *d = *dst[k];
        for (long a = 0; a < n; a++) {
            long i = b0 + a - w; /* grid index; y = i·h */
            d[a] = g->real[(size_t)((i % (long)len + (long)len) % (long)len)];
        }
    }
    free(pz);
    /* cell masses → F (from the left) and Q (from the right) */
    double *c = lv->F, total = 0.0;
    double ycut = zlo_rel - KERNEL_SD * sigma; /* relative to z0 */
    for (long a = 0; a < n && (double)(a - w) * h < ycut; a++)
        c[a] = lv->f[a] = lv->df[a] = 0.0;
    for (long a = 0; a < n; a++) {
        if (c[a] < 0.0)
            c[a] = 0.0;
        total += c[a];
        if (lv->f[a] < 0.0)
            lv->f[a] = 0.0;
    }
    double acc = 0.0;
    for (long a = n - 1; a >= 0; a--) {
        lv->Q[a] = acc / total; /* mass of cells a+1.. : y ≥ y_a */
        acc += c[a];
    }
    acc = 0.0;
    for (long a = 0; a < n; a++) {
        acc += c[a];
        c[a] = acc / total; /* mass of cells ..a: y < y_a */
    }
    for (long a = 0; a < n; a++) {
        lv->f[a] /= total;
        lv->df[a] /= total;
    }
    lv->bytes = 4 * (size_t)n * sizeof(double);
    return QC_OK;
}

/* The cached law of level x, computed on first use (NULL on failure). */
static level *get_level(const qc_model *m, double x)
{
    apd_state *s = m->state;
    level *lv = NULL;
    for (int i = 0; i < NSLOTS; i++)
        if (s->slots[i].x == x) {
            s->slots[i].stamp = ++s->clock;
            return &s->slots[i];
        }
    for (int i = 0; i < NSLOTS && !lv; i++)
        if (isnan(s->slots[i].x))
            lv = &s->slots[i];
    if (!lv) {
        lv = &s->slots[0];
        for (int i = 1; i < NSLOTS; i++)
            if (s->slots[i].stamp < lv->stamp)
                lv = &s->slots[i];
        level_clear(s, lv);
    }
    double t0 = now(), plan0 = s->stats.plan_seconds;
    qc_status st = fill_level(s, x, lv);
    if (st != QC_OK) {
        level_clear(s, lv);
        return NULL;
    }
    lv->x = x;
    lv->stamp = ++s->clock;
    s->bytes += lv->bytes;
    /* keep the cache within its budget, oldest first */
    while (s->bytes > CACHE_BYTES) {
        level *old = NULL;
        for (int i = 0; i < NSLOTS; i++)
            if (&s->slots[i] != lv && !isnan(s->slots[i].x) &&
                (!old || s->slots[i].stamp < old->stamp))
                old = &s->slots[i];
        if (!old)
            break;
        level_clear(s, old);
    }
    s->stats.levels++;
    s->stats.level_seconds += now() - t0 - (s->stats.plan_seconds - plan0);
    return lv;
}

/* ---- lattice regime: direct sums ------------------------------------ */

/* Σ_j p_j Φ((t − jh)/σ) (upper = 0) or Σ_j p_j Q((t − jh)/σ) (upper = 1). */
static double lattice_cdf(const level *lv, double sigma, double t, int upper)
{
    double h = lv->h;
    long n = lv->n;
    double ja = floor((t - KERNEL_SD * sigma) / h); /* Φ ≈ 1 for j ≤ ja */
    double jb = ceil((t + KERNEL_SD * sigma) / h);  /* Φ ≈ 0 for j ≥ jb */
    double sum = 0.0;
    if (!upper) {
        long j0 = 0;
        if (ja >= 0.0) {
            j0 = ja >= (double)(n - 1) ? n - 1 : (long)ja;
            sum = lv->cl[j0];
            j0++;
        }
        for (long j = j0; j < n; j++) {
            double phi = gsl_cdf_gaussian_P(t - (double)j * h, sigma);
            sum += lv->p[j] * phi;
            if ((double)j >= jb - 1.0 &&
                (j + 1 >= n || phi * lv->cr[j + 1] <= REST_TOL * sum))
                break;
        }
        return sum < 1.0 ? sum : 1.0;
    }
    long j0 = n - 1;
    if (jb <= (double)(n - 1)) {
        j0 = jb <= 0.0 ? 0 : (long)jb;
        sum = lv->cr[j0];
        j0--;
    }
    for (long j = j0; j >= 0; j--) {
        double q = gsl_cdf_gaussian_Q(t - (double)j * h, sigma);
        sum += lv->p[j] * q;
        if ((double)j <= ja + 1.0 &&
            (j == 0 || q * lv->cl[j - 1] <= REST_TOL * sum))
            break;
    }
    return sum < 1.0 ? sum : 1.0;
}

static double lattice_density(const level *lv, double sigma, double y)
{
    double h = lv->h;
    long n = lv->n;
    long jc = (long)fmin(fmax(round(y / h), 0.0), (double)(n - 1));
    double sum = 0.0;
    for (long j = jc; j < n; j++) { /* rightwards */
        double u = (y - (double)j * h) / sigma;
        double phi = exp(-0.5 * u * u);
        sum += lv->p[j] * phi;
        if (u < -KERNEL_SD && (j + 1 >= n || phi * lv->cr[j + 1] <= REST_TOL * sum))
            break;
    }
    for (long j = jc - 1; j >= 0; j--) { /* leftwards */
        double u = (y - (double)j * h) / sigma;
        double phi = exp(-0.5 * u * u);
        sum += lv->p[j] * phi;
        if (u > KERNEL_SD && (j == 0 || phi * lv->cl[j - 1] <= REST_TOL * sum))
            break;
    }
    return sum / (sigma * SQRT_2PI);
}

/* ---- smooth regime: interpolation of grid values --------------------- */

/* Quintic Hermite interpolant on [0, 1] from values, first and second
 * derivatives at both ends. */
static double hermite5(double s, double v0, double d0, double a0, double v1,
                       double d1, double a1)
{
    double s2 = s * s, s3 = s2 * s, s4 = s3 * s, s5 = s4 * s;
    double h0 = 1.0 - 10.0 * s3 + 15.0 * s4 - 6.0 * s5;
    double h1 = s - 6.0 * s3 + 8.0 * s4 - 3.0 * s5;
    double h2 = 0.5 * s2 - 1.5 * s3 + 1.5 * s4 - 0.5 * s5;
    double h3 = 0.5 * s3 - s4 + 0.5 * s5;
    double h4 = -4.0 * s3 + 7.0 * s4 - 3.0 * s5;
    double h5 = 10.0 * s3 - 15.0 * s4 + 6.0 * s5;
    return h0 * v0 + h1 * d0 + h2 * a0 + h3 * a1 + h4 * d1 + h5 * v1;
}

#define LOG_FLOOR 1e-290

/* P(Y < t) (upper = 0) or P(Y ≥ t) (upper = 1) from the grid. */
static double smooth_cdf(const level *lv, double sigma, double t, int upper)
{
    double h = lv->h;
    double u = t / h + (double)lv->w;
    const double *V = upper ? lv->Q : lv->F;
    double sign = upper ? -1.0 : 1.0;
    if (u <= 0.0) { /* left of the grid: Gaussian tail of the first point */
        double y0 = -(double)lv->w * h;
        double r = gsl_cdf_gaussian_P(t, sigma) / gsl_cdf_gaussian_P(y0, sigma);
        double lo = lv->F[0] * (r < 1.0 ? r : 1.0);
        return upper ? 1.0 - lo : lo;
    }
    if (u >= (double)(lv->n - 1)) { /* right of the grid: Q below 1e-17 */
        double yn = (double)(lv->n - 1 - lv->w) * h;
        double r = gsl_cdf_gaussian_Q(t - lv->ztop, sigma) /
                   gsl_cdf_gaussian_Q(yn - lv->ztop, sigma);
        double hi = lv->Q[lv->n - 1] * (r < 1.0 ? r : 1.0);
        return upper ? hi : 1.0 - hi;
    }
    long a = (long)floor(u);
    double s = u - (double)a;
    double v0 = V[a], v1 = V[a + 1];
    double lo = v0 < v1 ? v0 : v1, hi = v0 < v1 ? v1 : v0;
    double r;
    if (lo > LOG_FLOOR) {
        /* log V: (log V)' = ±f/V, (log V)'' = ±f'/V − (f/V)², per unit a */
        double g0 = sign * lv->f[a] * h / v0, g1 = sign * lv->f[a + 1] * h / v1;
        double c0 = sign * lv->df[a] * h * h / v0 - g0 * g0;
        double c1 = sign * lv->df[a + 1] * h * h / v1 - g1 * g1;
        r = exp(hermite5(s, log(v0), g0, c0, log(v1), g1, c1));
    } else {
        r = v0 + s * (v1 - v0);
    }
    if (!(r >= lo))
        r = lo;
    if (r > hi)
        r = hi;
    return r;
}

static double smooth_density(const level *lv, double y)
{
    double u = y / lv->h + (double)lv->w;
    if (u <= 0.0 || u >= (double)(lv->n - 1))
        return 0.0;
    long a = (long)floor(u);
    double s = u - (double)a, h = lv->h;
    double s2 = s * s, s3 = s2 * s;
    double b0 = 2 * s3 - 3 * s2 + 1, b1 = s3 - 2 * s2 + s, b2 = -2 * s3 + 3 * s2,
           b3 = s3 - s2;
    double f0 = lv->f[a], f1 = lv->f[a + 1];
    if (f0 > LOG_FLOOR && f1 > LOG_FLOOR) /* cubic Hermite of log f */
        return exp(b0 * log(f0) + b1 * h * lv->df[a] / f0 + b2 * log(f1) +
                   b3 * h * lv->df[a + 1] / f1);
    double v = b0 * f0 + b1 * h * lv->df[a] + b2 * f1 + b3 * h * lv->df[a + 1];
    return v > 0.0 ? v : 0.0;
}

/* ---- the model table ------------------------------------------------- */

static double apd_cdf(const qc_model *m, double x, double t, int upper)
{
    level *lv = get_level(m, x);
    if (!lv)
        return NAN;
    double sigma = m->params[APD_SIGMA_TH];
    t -= lv->z0;
    return lv->smooth ? smooth_cdf(lv, sigma, t, upper)
                      : lattice_cdf(lv, sigma, t, upper);
}

static double apd_below(const qc_model *m, double x, double t)
{
    return apd_cdf(m, x, t, 0);
}

static double apd_above(const qc_model *m, double x, double t)
{
    return apd_cdf(m, x, t, 1);
}

static double apd_density(const qc_model *m, double x, double y)
{
    level *lv = get_level(m, x);
    if (!lv)
        return NAN;
    y -= lv->z0;
    return lv->smooth ? smooth_density(lv, y)
                      : lattice_density(lv, m->params[APD_SIGMA_TH], y);
}

static void apd_support(const qc_model *m, double x, double *lo, double *hi)
{
    double sigma = m->params[APD_SIGMA_TH];
    level *lv = get_level(m, x);
    /* Z ≥ z0 but for < 1e-18; Q(8.3) ≈ 5e-17 */
    *lo = (lv ? lv->z0 : 0.0) - 8.3 * sigma;
    *hi = (lv ? lv->z0 + lv->ztop : 0.0) + 8.3 * sigma;
}

static qc_status apd_moments(const qc_model *m, double x, double *mean,
                             double *var)
{
    const double *p = m->params;
    double lambda = qc_apd_rate(p, x), g = p[APD_GAIN];
    *mean = g * lambda;
    *var = g * g * qc_apd_excess(g, p[APD_K]) * lambda +
           p[APD_SIGMA_TH] * p[APD_SIGMA_TH];
    return QC_OK;
}

qc_status qc_apd_get_stats(const qc_model *m, qc_apd_stats *stats)
{
    if (!m || m->type != &qc_model_apd)
        return qc_fail(QC_EINVAL, "not an 'apd' model");
    *stats = ((const apd_state *)m->state)->stats;
    return QC_OK;
}

const qc_model_type qc_model_apd = {
    .name = "apd",
    .summary = "APD receiver: Poisson primaries x McIntyre gain + thermal noise, "
               "exact law by FFT, in electrons",
    .output = QC_OUTPUT_REAL,
    .properties = QC_MODEL_INTENSITY,
    .nparams = APD_NPARAMS,
    .params = qc_apd_exact_params,
    .init = apd_init,
    .destroy = apd_destroy,
    .below = apd_below,
    .above = apd_above,
    .density = apd_density,
    .support = apd_support,
    .check_level = apd_check_level,
    .moments = apd_moments,
    .keys = qc_apd_keys,
    .frontend = QC_FRONTEND_APD,
    .level_unit = "relative intensity",
    .output_unit = "electrons",
    .photons = qc_apd_photons,
};
