/* apd_gauss.c — the Gaussian approximation of an APD receiver: the output
 * in electrons per slot is N(M·λ, M²·F·λ + σ_th²), λ = signal·x +
 * background primaries, F = kM + (1−k)(2 − 1/M) (McIntyre, IEEE Trans.
 * Electron Devices 13(1), 1966; Personick, Bell Syst. Tech. J. 52(6),
 * 1973, uses this approximation for receiver design). Same parameters as
 * `apd`, for comparison with the exact law. Also holds the parameter
 * table and helpers shared with apd.c. */
#include "core/internal.h"
#include "models/model_internal.h"
#include "models/apd_gain.h"

#include <math.h>

#include <gsl/gsl_cdf.h>
#include <gsl/gsl_randist.h>

const qc_param_spec qc_apd_params[APD_NPARAMS] = {
    {"signal", "electrons", "mean primary photoelectrons per slot at level 1", NAN,
     0.0, INFINITY, 1, 0},
    {"background", "electrons", "mean primary background/dark electrons per slot",
     0.0, 0.0, INFINITY, 0, 0},
    {"apd-gain", "", "mean avalanche gain M", NAN, 1.0, 1e6, 0, 0},
    {"apd-k", "", "ionization coefficient ratio k (hole/electron)", 0.0, 0.0, 1.0, 0, 0},
    {"sigma-th", "electrons", "thermal noise standard deviation per slot", NAN, 0.0,
     INFINITY, 1, 0},
};

/* The exact law needs k < 1 (the McIntyre gain law degenerates at 1). */
const qc_param_spec qc_apd_exact_params[APD_NPARAMS] = {
    {"signal", "electrons", "mean primary photoelectrons per slot at level 1", NAN,
     0.0, INFINITY, 1, 0},
    {"background", "electrons", "mean primary background/dark electrons per slot",
     0.0, 0.0, INFINITY, 0, 0},
    {"apd-gain", "", "mean avalanche gain M", NAN, 1.0, APD_EXACT_MAX_GAIN, 0, 0},
    {"apd-k", "", "ionization coefficient ratio k (hole/electron) (k = 1: use apd-gauss)", 0.0,
     0.0, 1.0, 0, 1},
    {"sigma-th", "electrons", "thermal noise standard deviation per slot", NAN, 0.0,
     INFINITY, 1, 0},
};

/* The APD front end: apd-gain and apd-k are parameters, and with a
 * received power they describe the physical receiver. */
const char *const qc_apd_keys[] = {QC_KEYS_OPTICAL_POWER, QC_KEYS_PHOTODETECTOR, "slot-time",
                                   QC_KEYS_FREE_SPACE, "wavelength-nm", NULL};

double qc_apd_excess(double gain, double k)
{
    return k * gain + (1.0 - k) * (2.0 - 1.0 / gain);
}

double qc_apd_photons(const qc_model *m, double x) { return m->params[APD_SIGNAL] * x; }

double qc_apd_rate(const double *params, double x)
{
    return params[APD_SIGNAL] * x + params[APD_BACKGROUND];
}

qc_status qc_apd_check_level(const qc_model *m, double x)
{
    if (!(x >= 0.0))
        return qc_fail(QC_EINVAL, "model '%s' takes intensity levels >= 0",
                       m->type->name);
    return QC_OK;
}

static qc_status apdg_moments(const qc_model *m, double x, double *mean,
                              double *var)
{
    const double *p = m->params;
    double lambda = qc_apd_rate(p, x), g = p[APD_GAIN];
    *mean = g * lambda;
    *var = g * g * qc_apd_excess(g, p[APD_K]) * lambda +
           p[APD_SIGMA_TH] * p[APD_SIGMA_TH];
    return QC_OK;
}

static void mean_sd(const qc_model *m, double x, double *mu, double *sd)
{
    double v;
    apdg_moments(m, x, mu, &v);
    *sd = sqrt(v);
}

static double apdg_below(const qc_model *m, double x, double t)
{
    double mu, sd;
    mean_sd(m, x, &mu, &sd);
    return gsl_cdf_gaussian_P(t - mu, sd);
}

static double apdg_above(const qc_model *m, double x, double t)
{
    double mu, sd;
    mean_sd(m, x, &mu, &sd);
    return gsl_cdf_gaussian_Q(t - mu, sd);
}

static double apdg_density(const qc_model *m, double x, double y)
{
    double mu, sd;
    mean_sd(m, x, &mu, &sd);
    return gsl_ran_gaussian_pdf(y - mu, sd);
}

static void apdg_support(const qc_model *m, double x, double *lo, double *hi)
{
    double mu, sd;
    mean_sd(m, x, &mu, &sd);
    *lo = mu - 8.3 * sd;
    *hi = mu + 8.3 * sd;
}

const qc_model_type qc_model_apd_gauss = {
    .name = "apd-gauss",
    .summary = "APD receiver, Gaussian approximation N(M lambda, M^2 F lambda + "
               "sigma_th^2), in electrons",
    .output = QC_OUTPUT_REAL,
    .properties = QC_MODEL_INTENSITY | QC_MODEL_GAUSSIAN_LAW,
    .nparams = APD_NPARAMS,
    .params = qc_apd_params,
    .below = apdg_below,
    .above = apdg_above,
    .density = apdg_density,
    .support = apdg_support,
    .check_level = qc_apd_check_level,
    .moments = apdg_moments,
    .keys = qc_apd_keys,
    .frontend = QC_FRONTEND_APD,
    .level_unit = "relative intensity",
    .output_unit = "electrons",
    .photons = qc_apd_photons,
};
