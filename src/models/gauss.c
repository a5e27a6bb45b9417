/* gauss.c — additive white Gaussian noise: y = x + n, n ~ N(0, σ²).
 * Thermal noise of a coherent receiver or ASE-limited field detection
 * after the usual Gaussian approximation. Tails use the complementary
 * error function (GSL gsl_cdf_gaussian_P/Q), so cells 80 dB into the
 * tail keep their relative accuracy. */
#include "core/internal.h"
#include "models/model_internal.h"

#include <math.h>

#include <gsl/gsl_cdf.h>
#include <gsl/gsl_randist.h>

enum { P_SIGMA };

static const qc_param_spec gauss_params[] = {
    {"sigma", "level units", "noise standard deviation, in the units of the levels",
     NAN, 0.0, INFINITY, 1, 0},
};

static double gauss_below(const qc_model *m, double x, double t)
{
    return gsl_cdf_gaussian_P(t - x, m->params[P_SIGMA]);
}

static double gauss_above(const qc_model *m, double x, double t)
{
    return gsl_cdf_gaussian_Q(t - x, m->params[P_SIGMA]);
}

/* Both tails from one evaluation of GSL's normal law beyond one standard
 * deviation, bit for bit those of gauss_below and gauss_above
 * (qc_normal_tails). */
static void gauss_tails(const qc_model *m, double x, double t, double *below, double *above)
{
    /* u as gsl_cdf_gaussian_P/Q form it */
    qc_normal_tails((t - x) / m->params[P_SIGMA], below, above);
}

static double gauss_density(const qc_model *m, double x, double y)
{
    return gsl_ran_gaussian_pdf(y - x, m->params[P_SIGMA]);
}

static void gauss_support(const qc_model *m, double x, double *lo, double *hi)
{
    /* Q(8.3) ≈ 5e-17: beyond ±8.3σ each tail is below 1e-16. */
    double s = m->params[P_SIGMA];
    *lo = x - 8.3 * s;
    *hi = x + 8.3 * s;
}

static qc_status gauss_moments(const qc_model *m, double x, double *mean,
                               double *var)
{
    *mean = x;
    *var = m->params[P_SIGMA] * m->params[P_SIGMA];
    return QC_OK;
}

/* SNR = E[x²]/σ² under the input law (signal power over noise power). */
static double gauss_snr(const qc_model *m, const double *levels,
                        const double *input, size_t n)
{
    double power = 0.0;
    for (size_t i = 0; i < n; i++)
        power += input[i] * levels[i] * levels[i];
    double s = m->params[P_SIGMA];
    return power / (s * s);
}

/* SNR × gain: σ → σ/√gain. */
static qc_status gauss_scale_snr(const qc_model *m, double gain, double *out)
{
    double s = m->params[P_SIGMA] / sqrt(gain);
    if (!(s > 0.0) || !isfinite(s))
        return qc_fail(QC_EINVAL,
                       "model 'gauss': scaling the SNR by %g makes 'sigma' %g", gain,
                       s);
    out[P_SIGMA] = s;
    return QC_OK;
}

static const char *const gauss_keys[] = {
    "snr-db", "osnr-db", "ref-bandwidth",
    QC_KEYS_OPTICAL_POWER, QC_KEYS_PHOTODETECTOR, "bandwidth", "rin-db-hz", QC_KEYS_FIBRE_LINK, NULL,
};

const qc_model_type qc_model_gauss = {
    .name = "gauss",
    .summary = "additive Gaussian noise y = x + n, n ~ N(0, sigma^2) (thermal/ASE)",
    .output = QC_OUTPUT_REAL,
    .properties = QC_MODEL_ADDITIVE_GAUSSIAN | QC_MODEL_GAUSSIAN_LAW,
    .nparams = 1,
    .params = gauss_params,
    .below = gauss_below,
    .above = gauss_above,
    .tails = gauss_tails,
    .density = gauss_density,
    .support = gauss_support,
    .moments = gauss_moments,
    .snr = gauss_snr,
    .scale_snr = gauss_scale_snr,
    .keys = gauss_keys,
    .frontend = QC_FRONTEND_GAUSS,
    .snr_definition = "E[x^2]/sigma^2 (signal power, mean included, over noise variance)",
    .level_unit = "level units",
    .output_unit = "level units",
};
