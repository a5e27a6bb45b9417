/* gauss_sd.c — signal-dependent Gaussian noise for intensity levels:
 * y = x + n, n ~ N(0, sigma0² + a·x + b·x²), x ≥ 0. The Gaussian
 * approximation of a PIN or APD receiver: thermal and dark-current noise
 * in sigma0², signal shot noise 2q·M·F·B·x in a·x, and a term quadratic in
 * the signal (e.g. relative intensity noise) in b·x² (Agrawal,
 * Fiber-Optic Communication Systems, ch. 4). Tails use GSL's
 * gsl_cdf_gaussian_P/Q, accurate far into both tails. */
#include "core/internal.h"
#include "models/model_internal.h"

#include <math.h>

#include <gsl/gsl_cdf.h>
#include <gsl/gsl_randist.h>

enum { P_SIGMA0, P_A, P_B };

static const qc_param_spec gauss_sd_params[] = {
    {"sigma0", "level units", "noise standard deviation at x = 0, in the units of the levels",
     NAN, 0.0, INFINITY, 1, 0},
    {"a", "level units", "variance per unit level (signal shot noise)", 0.0, 0.0, INFINITY, 0, 0},
    {"b", "", "variance per unit level squared (e.g. RIN)", 0.0, 0.0, INFINITY, 0, 0},
};

/* Standard deviation at level x ≥ 0: the root of the sum of squares of
 * σ0, √(a·x) and √b·x, scaled by the largest of them so that a nearly
 * noiseless model (σ0² below the smallest double) keeps its σ instead of
 * rounding it to 0. */
static double sd_at(const qc_model *m, double x)
{
    const double *p = m->params;
    const double s[3] = {p[P_SIGMA0], sqrt(p[P_A]) * sqrt(x), sqrt(p[P_B]) * x};
    const double u = fmax(s[0], fmax(s[1], s[2]));
    if (!(u > 0.0) || !isfinite(u))
        return u;
    const double r0 = s[0] / u, r1 = s[1] / u, r2 = s[2] / u;
    return u * sqrt(r0 * r0 + r1 * r1 + r2 * r2);
}

static double gauss_sd_below(const qc_model *m, double x, double t)
{
    return gsl_cdf_gaussian_P(t - x, sd_at(m, x));
}

static double gauss_sd_above(const qc_model *m, double x, double t)
{
    return gsl_cdf_gaussian_Q(t - x, sd_at(m, x));
}

/* Both tails at once with one σ and, beyond one σ, one call of GSL's
 * normal law, bit for bit the values of gauss_sd_below and
 * gauss_sd_above (the same split as gauss.c's tails). */
static void gauss_sd_tails(const qc_model *m, double x, double t, double *below,
                           double *above)
{
    qc_normal_tails((t - x) / sd_at(m, x), below, above);
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

/* SNR of an intensity alphabet as intensity-modulation practice reads it:
 * the electrical power of the modulation, Var[x] = E[(x − E[x])²] (the
 * mean photocurrent, which carries no information, left out), over the
 * average noise variance E[σ²(x)] under the law (common practice). For
 * equiprobable OOK with equal noise on both levels this is Q², the Q
 * factor Q = (I1 − I0)/(σ1 + σ0) of Personick, Bell Syst. Tech. J. 52(6),
 * 1973, and Agrawal, Fiber-Optic Communication Systems, Wiley, sec. 4.5
 * (from memory). The variance is taken about the mean in a second pass. */
static double gauss_sd_snr(const qc_model *m, const double *levels, const double *input,
                           size_t n)
{
    double mean = 0.0, noise = 0.0;
    for (size_t i = 0; i < n; i++) {
        double s = sd_at(m, levels[i]);
        mean += input[i] * levels[i];
        noise += input[i] * s * s;
    }
    double var = 0.0;
    for (size_t i = 0; i < n; i++)
        var += input[i] * (levels[i] - mean) * (levels[i] - mean);
    return var / noise;
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

static const char *const gauss_sd_keys[] = {
    QC_KEYS_OPTICAL_POWER, QC_KEYS_PHOTODETECTOR, "bandwidth", "rin-db-hz", NULL,
};

const qc_model_type qc_model_gauss_sd = {
    .name = "gauss-sd",
    .summary = "signal-dependent Gaussian y = x + n, var = sigma0^2 + a x + b x^2 "
               "(PIN/APD, Gaussian approx.)",
    .output = QC_OUTPUT_REAL,
    .properties = QC_MODEL_INTENSITY | QC_MODEL_GAUSSIAN_LAW,
    .nparams = 3,
    .params = gauss_sd_params,
    .below = gauss_sd_below,
    .above = gauss_sd_above,
    .tails = gauss_sd_tails,
    .density = gauss_sd_density,
    .support = gauss_sd_support,
    .check_level = gauss_sd_check_level,
    .moments = gauss_sd_moments,
    .snr = gauss_sd_snr,
    .scale_snr = gauss_sd_scale_snr,
    .keys = gauss_sd_keys,
    .frontend = QC_FRONTEND_GAUSS_SD,
    .snr_definition = "Var[x]/E[sigma^2(x)] (modulation power, mean removed, over average "
                      "noise variance; OOK with equal noise: Q^2)",
    .level_unit = "level units",
    .output_unit = "level units",
};
