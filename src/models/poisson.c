/* poisson.c — ideal photon counting: Y ~ Poisson(λ), λ = n_s·x + n_b,
 * with n_s the mean signal photons (photoelectrons) of level 1 and n_b
 * the background and dark counts per slot. Thresholds are whole counts;
 * P(Y ≤ t−1) = Q(t, λ) and P(Y ≥ t) = P(t, λ) are the regularized
 * incomplete gamma functions (Abramowitz & Stegun 6.5.13), each computed
 * directly in its own tail:
 *  - t < 1000: GSL's gsl_sf_gamma_inc_Q_e / _P_e (series and continued
 *    fraction), relative error ≤ 5e-15·(1 + d), d = t − λ − t·ln(λ/t)
 *    the exponent of the tail, against the pmf summed in 50-digit decimal
 *    arithmetic;
 *  - t ≥ 1000: Temme's uniform asymptotic expansion (N. M. Temme, SIAM
 *    J. Math. Anal. 10(4), 1979; incgamma.c), relative error
 *    ≤ 1e-15·(1 + d), at a cost independent of t. GSL is not used there:
 *    its continued fraction for λ within √t below t stops at a wrong value
 *    (P(Y < 667449 | λ = 666667) = 0.83474 for 0.83076), its series and
 *    its large-λ form stop converging a few standard deviations out
 *    (an error from 1e6 on), and its own uniform expansion keeps two
 *    terms. */
#include "core/internal.h"
#include "models/incgamma.h"
#include "models/model_internal.h"

#include <math.h>

#ifndef M_PI
#define M_PI 3.14159265358979323846
#endif

#include <gsl/gsl_errno.h>
#include <gsl/gsl_sf_gamma.h>

enum { P_SIGNAL, P_BACKGROUND };

static const qc_param_spec poisson_params[] = {
    {"signal", "photons", "mean detected photons per slot at level 1", NAN, 0.0,
     INFINITY, 1, 0},
    {"background", "photons", "mean background + dark counts per slot", 0.0, 0.0,
     INFINITY, 0, 0},
};

static double rate(const qc_model *m, double x)
{
    return m->params[P_SIGNAL] * x + m->params[P_BACKGROUND];
}

/* Regularized incomplete gamma, lower (upper = 0) or upper (upper = 1);
 * an underflow is a true 0, any other GSL error gives NaN, which the
 * discretizer reports. */
static double gamma_inc(double a, double z, int upper)
{
    if (a >= QC_GAMMA_UNIFORM_MIN_A)
        return qc_gamma_inc_uniform(a, z, upper);
    gsl_sf_result r;
    int rc = upper ? gsl_sf_gamma_inc_Q_e(a, z, &r) : gsl_sf_gamma_inc_P_e(a, z, &r);
    if (rc == GSL_EUNDRFLW)
        return 0.0;
    if (rc != GSL_SUCCESS)
        return NAN;
    return r.val;
}

/* P(Y ≤ t − 1) for whole t. */
static double poisson_below(const qc_model *m, double x, double t)
{
    double lambda = rate(m, x);
    if (t < 1.0)
        return 0.0;
    if (lambda == 0.0)
        return 1.0;
    return gamma_inc(t, lambda, 1);
}

/* P(Y ≥ t) for whole t. */
static double poisson_above(const qc_model *m, double x, double t)
{
    double lambda = rate(m, x);
    if (t < 1.0)
        return 1.0;
    if (lambda == 0.0)
        return 0.0;
    return gamma_inc(t, lambda, 0);
}

/* Probability mass at whole y ≥ 0 (0 elsewhere), by the saddle-point
 * form e^{−stirlerr(y) − bd0(y, λ)}/√(2πy) of Loader ("Fast and accurate
 * computation of binomial probabilities", 2000), which keeps full
 * relative accuracy for large λ where y ln λ − λ − ln y! cancels. */
static double poisson_density(const qc_model *m, double x, double y)
{
    double lambda = rate(m, x);
    if (!(y >= 0.0) || y != floor(y))
        return 0.0;
    if (lambda == 0.0)
        return y == 0.0 ? 1.0 : 0.0;
    if (y == 0.0)
        return exp(-lambda);
    return exp(qc_loader_exponent(y, lambda)) / sqrt(2.0 * M_PI * y);
}

#define TAIL_MASS 1e-17 /* mass left out on each side by the support */

/* Counts [lo, hi] holding all but 2·TAIL_MASS of the mass, by bisection on
 * the tail probabilities (both monotone in the count). */
static void poisson_support(const qc_model *m, double x, double *lo, double *hi)
{
    double lambda = rate(m, x);
    /* upper end: smallest h with P(Y ≥ h + 1) ≤ TAIL_MASS */
    double a = floor(lambda), b = ceil(lambda + 20.0 * sqrt(lambda) + 60.0);
    while (poisson_above(m, x, b + 1.0) > TAIL_MASS)
        b *= 2.0;
    while (b - a > 1.0) {
        double c = floor(0.5 * (a + b));
        if (poisson_above(m, x, c + 1.0) > TAIL_MASS)
            a = c;
        else
            b = c;
    }
    *hi = b;
    /* lower end: largest l with P(Y ≤ l − 1) ≤ TAIL_MASS */
    a = 0.0; /* P(Y < 0) = 0: always good */
    b = floor(lambda);
    if (poisson_below(m, x, b) <= TAIL_MASS) {
        *lo = b;
        return;
    }
    while (b - a > 1.0) {
        double c = floor(0.5 * (a + b));
        if (poisson_below(m, x, c) <= TAIL_MASS)
            a = c;
        else
            b = c;
    }
    *lo = a;
}

static qc_status poisson_check_level(const qc_model *m, double x)
{
    (void)m;
    if (!(x >= 0.0))
        return qc_fail(QC_EINVAL, "model 'poisson' takes intensity levels >= 0");
    return QC_OK;
}

static qc_status poisson_moments(const qc_model *m, double x, double *mean,
                                 double *var)
{
    *mean = *var = rate(m, x);
    return QC_OK;
}

/* responsivity gives the quantum efficiency at the wavelength */
static const char *const poisson_keys[] = {
    QC_KEYS_OPTICAL_POWER, "slot-time", "wavelength-nm", "efficiency", "responsivity",
    "dark-count-rate", QC_KEYS_FREE_SPACE, NULL,
};
/* detected signal photons: the Poisson mean without the background */
static double poisson_photons(const qc_model *m, double x) { return m->params[P_SIGNAL] * x; }

const qc_model_type qc_model_poisson = {
    .name = "poisson",
    .summary = "photon counting Y ~ Poisson(signal x + background), integer thresholds",
    .output = QC_OUTPUT_COUNTS,
    .properties = QC_MODEL_INTENSITY,
    .nparams = 2,
    .params = poisson_params,
    .below = poisson_below,
    .above = poisson_above,
    .density = poisson_density,
    .support = poisson_support,
    .check_level = poisson_check_level,
    .moments = poisson_moments,
    .keys = poisson_keys,
    .frontend = QC_FRONTEND_PHOTONS,
    .level_unit = "relative intensity",
    .output_unit = "photons",
    .photons = poisson_photons,
};
