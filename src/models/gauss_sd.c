/* gauss_sd.c — signal-dependent Gaussian noise for intensity levels:
 * y = x + n, n ~ N(0, sigma0² + a·x + b·x²), x ≥ 0. The Gaussian
 * approximation of a PIN or APD receiver: thermal and dark-current noise
 * in sigma0², signal shot noise 2q·M·F·B·x in a·x, and a term quadratic in
 * the signal (e.g. relative intensity noise) in b·x² (Agrawal,
 * Fiber-Optic Communication Systems, ch. 4). Tails use GSL's
 * gsl_cdf_gaussian_P/Q, accurate far into both tails. */
#include "core/internal.h"
#include "quantcap/model.h"

#include <math.h>

#include <gsl/gsl_cdf.h>
#include <gsl/gsl_randist.h>

enum { P_SIGMA0, P_A, P_B };

static const qc_param_spec gauss_sd_params[] = {
    {"sigma0", "", "noise standard deviation at x = 0, in the units of the levels",
     NAN, 0.0, INFINITY, 1},
    {"a", "", "variance per unit level (signal shot noise)", 0.0, 0.0, INFINITY, 0},
    {"b", "", "variance per unit level squared (e.g. RIN)", 0.0, 0.0, INFINITY, 0},
};

/* Standard deviation at level x ≥ 0. */
static double sd_at(const qc_model *m, double x)
{
    const double *p = m->params;
    return sqrt(p[P_SIGMA0] * p[P_SIGMA0] + p[P_A] * x + p[P_B] * x * x);
}

static double gauss_sd_below(const qc_model *m, double x, double t)
{
    return gsl_cdf_gaussian_P(t - x, sd_at(m, x));
}

static double gauss_sd_above(const qc_model *m, double x, double t)
{
    return gsl_cdf_gaussian_Q(t - x, sd_at(m, x));
}

static double gauss_sd_density(const qc_model *m, double x, double y)
{
    return gsl_ran_gaussian_pdf(y - x, sd_at(m, x));
}

static void gauss_sd_support(const qc_model *m, double x, double *lo, double *hi)
{
    /* Q(8.3) ≈ 5e-17 (as in gauss.c). */
    double s = sd_at(m, x);
    *lo = x - 8.3 * s;
    *hi = x + 8.3 * s;
}

static qc_status gauss_sd_check_level(const qc_model *m, double x)
{
    (void)m;
    if (!(x >= 0.0))
        return qc_fail(QC_EINVAL, "model 'gauss-sd' takes intensity levels >= 0");
    return QC_OK;
}

static qc_status gauss_sd_moments(const qc_model *m, double x, double *mean,
                                  double *var)
{
    double s = sd_at(m, x);
    *mean = x;
    *var = s * s;
    return QC_OK;
}

/* SNR of an intensity alphabet: E[x²] / E[σ²(x)] under the law, the
 * electrical signal power over the average noise variance. */
static double gauss_sd_snr(const qc_model *m, const double *levels, const double *input,
                           size_t n)
{
    double power = 0.0, noise = 0.0;
    for (size_t i = 0; i < n; i++) {
        double s = sd_at(m, levels[i]);
        power += input[i] * levels[i] * levels[i];
        noise += input[i] * s * s;
    }
    return power / noise;
}

/* SNR × gain: every variance term divided by gain (σ0 → σ0/√gain,
 * a → a/gain, b → b/gain), so σ²(x) scales by 1/gain at every level. */
static qc_status gauss_sd_scale_snr(const qc_model *m, double gain, double *out)
{
    const double *p = m->params;
    out[P_SIGMA0] = p[P_SIGMA0] / sqrt(gain);
    out[P_A] = p[P_A] / gain;
    out[P_B] = p[P_B] / gain;
    if (!(out[P_SIGMA0] > 0.0) || !isfinite(out[P_SIGMA0]) || !isfinite(out[P_A]) ||
        !isfinite(out[P_B]))
        return qc_fail(QC_EINVAL, "model 'gauss-sd': scaling the SNR by %g makes 'sigma0' %g",
                       gain, out[P_SIGMA0]);
    return QC_OK;
}

const qc_model_type qc_model_gauss_sd = {
    .name = "gauss-sd",
    .summary = "signal-dependent Gaussian y = x + n, var = sigma0^2 + a x + b x^2 "
               "(PIN/APD, Gaussian approx.)",
    .output = QC_OUTPUT_REAL,
    .properties = QC_MODEL_INTENSITY,
    .nparams = 3,
    .params = gauss_sd_params,
    .below = gauss_sd_below,
    .above = gauss_sd_above,
    .density = gauss_sd_density,
    .support = gauss_sd_support,
    .check_level = gauss_sd_check_level,
    .moments = gauss_sd_moments,
    .snr = gauss_sd_snr,
    .scale_snr = gauss_sd_scale_snr,
};
