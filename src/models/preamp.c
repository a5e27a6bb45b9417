/* preamp.c — optically pre-amplified direct detection. With m modes
 * (optical bandwidth × slot time × polarizations) and the output measured
 * in units of the ASE energy per mode, the detected energy given a
 * signal energy x (same units) is Y = ½·χ'²(2m, 2x): a noncentral
 * chi-square with 2m degrees of freedom and noncentrality 2x (Marcuse,
 * J. Lightw. Technol. 8(12), 1990; Humblet & Azizoglu, J. Lightw.
 * Technol. 9(11), 1991). Mean m + x, variance m + 2x.
 *
 * Y is a Poisson(x) mixture of Gamma(m + j, 1) laws, so
 *   P(Y < t) = Σ_j w_j P(m+j, t),  P(Y ≥ t) = Σ_j w_j Q(m+j, t),
 * w_j = e^{−x} x^j / j!, P/Q the regularized incomplete gamma functions.
 * Both are sums of positive terms computed by the stable direction of
 * the recurrences P(a, t) = P(a+1, t) + d_a and Q(a+1, t) = Q(a, t) + d_a,
 * d_a = t^a e^{−t}/Γ(a+1) (DLMF 8.8.5), from one GSL evaluation each
 * (the Poisson-weighted series of Ding, Appl. Statist. 41(2), 1992,
 * summed from its stable end). Truncation: terms beyond the Poisson
 * window [j_lo, j_hi] (each outer Poisson tail ≤ 1e-17) change the sum by
 * a relative 1e-17 at most (the omitted factor P or Q is bounded by the
 * kept one), and the open end of the sum is cut once a geometric bound on
 * the rest is below 1e-16 of the sum: relative truncation error ≤ 2e-16
 * in both tails. */
#include "core/internal.h"
#include "quantcap/model.h"

#include <math.h>
#include <stdlib.h>

#include <gsl/gsl_errno.h>
#include <gsl/gsl_sf_bessel.h>
#include <gsl/gsl_sf_gamma.h>

enum { P_MODES };

static const qc_param_spec preamp_params[] = {
    {"modes", "", "noise modes m = optical bandwidth x slot time x polarizations",
     NAN, 1.0, 1e6, 0},
};

#define WINDOW_TAIL 1e-17 /* Poisson mass outside the window, each side */
#define REST_TOL 1e-16    /* open end: rest ≤ REST_TOL · sum            */

typedef struct {
    double x;        /* level whose window is cached (NaN: none) */
    double jlo, jhi; /* Poisson window of that level             */
} preamp_state;

static qc_status preamp_init(const double *params, void **state)
{
    (void)params;
    preamp_state *s = malloc(sizeof *s);
    if (!s)
        return qc_fail(QC_ENOMEM, "out of memory");
    s->x = NAN;
    *state = s;
    return QC_OK;
}

static void preamp_destroy(void *state) { free(state); }

/* Regularized incomplete gamma P (upper = 0) or Q (upper = 1); an
 * underflow is a true 0, another GSL error NaN. */
static double gamma_inc(double a, double z, int upper)
{
    gsl_sf_result r;
    int rc = upper ? gsl_sf_gamma_inc_Q_e(a, z, &r) : gsl_sf_gamma_inc_P_e(a, z, &r);
    if (rc == GSL_EUNDRFLW)
        return 0.0;
    if (rc != GSL_SUCCESS)
        return NAN;
    return r.val;
}

/* The Poisson(x) window: P(J < jlo) ≤ WINDOW_TAIL, P(J > jhi) ≤ WINDOW_TAIL,
 * found by bisection on P(J ≥ j) = P(j, x) and P(J < j) = Q(j, x). */
static void window(const qc_model *m, double x, double *jlo, double *jhi)
{
    preamp_state *s = m->state;
    if (s->x == x) {
        *jlo = s->jlo;
        *jhi = s->jhi;
        return;
    }
    double a = floor(x), b = ceil(x + 20.0 * sqrt(x) + 60.0);
    while (gamma_inc(b + 1.0, x, 0) > WINDOW_TAIL)
        b *= 2.0;
    while (b - a > 1.0) { /* P(J > b) small, P(J > a) maybe not */
        double c = floor(0.5 * (a + b));
        if (gamma_inc(c + 1.0, x, 0) > WINDOW_TAIL)
            a = c;
        else
            b = c;
    }
    *jhi = b;
    a = 0.0;
    b = floor(x);
    if (b >= 1.0 && gamma_inc(b, x, 1) > WINDOW_TAIL) {
        while (b - a > 1.0) { /* P(J < a) small, P(J < b) not */
            double c = floor(0.5 * (a + b));
            if (gamma_inc(c, x, 1) <= WINDOW_TAIL)
                a = c;
            else
                b = c;
        }
        b = a;
    }
    *jlo = b;
    s->x = x;
    s->jlo = *jlo;
    s->jhi = *jhi;
}

static double lgam(double a) { return gsl_sf_lngamma(a); }

static double log_weight(double j, double x)
{
    return j * log(x) - x - lgam(j + 1.0);
}

/* d_a = t^a e^{−t}/Γ(a+1), stepped by its ratio. It is kept as a log
 * while it would underflow, and as a plain number once above 1e-300
 * (after that it only underflows when it truly is negligible). */
typedef struct {
    double v;  /* value (linear mode)   */
    double lv; /* log value (log mode)  */
    int linear;
} stepper;

static void stepper_init(stepper *d, double logv)
{
    d->linear = logv > -690.0;
    d->lv = logv;
    d->v = d->linear ? exp(logv) : 0.0;
}

/* multiply by r > 0 */
static void stepper_mul(stepper *d, double r)
{
    if (d->linear) {
        d->v *= r;
        return;
    }
    d->lv += log(r);
    if (d->lv > -690.0) {
        d->linear = 1;
        d->v = exp(d->lv);
    }
}

static double stepper_value(const stepper *d) { return d->linear ? d->v : 0.0; }

/* P(Y < t): downward from j_hi, where P(m + j, t) is smallest. */
static double preamp_below(const qc_model *m, double x, double t)
{
    double mm = m->params[P_MODES];
    if (!(t > 0.0))
        return 0.0;
    if (x == 0.0)
        return gamma_inc(mm, t, 0);
    double jlo, jhi;
    window(m, x, &jlo, &jhi);
    (void)jlo;
    double p = gamma_inc(mm + jhi, t, 0);
    double p0 = gamma_inc(mm, t, 0); /* bounds every P(m + j, t) */
    if (isnan(p) || isnan(p0))
        return NAN;
    double lt = log(t);
    stepper w, d; /* w_j and d_{m+j−1} */
    stepper_init(&w, log_weight(jhi, x));
    stepper_init(&d, (mm + jhi - 1.0) * lt - t - lgam(mm + jhi));
    double sum = 0.0;
    for (double j = jhi;; j -= 1.0) {
        sum += stepper_value(&w) * p;
        if (j == 0.0)
            break;
        p += stepper_value(&d);      /* P(m+j−1, t) = P(m+j, t) + d_{m+j−1} */
        stepper_mul(&d, (mm + j - 1.0) / t); /* d_{m+j−2} = d_{m+j−1}(m+j−1)/t */
        stepper_mul(&w, j / x);      /* w_{j−1} = w_j · j / x */
        double jm = j - 1.0;
        if (jm < x) { /* rest Σ_{i≤jm} w_i P ≤ p0 · w_jm / (1 − jm/x) */
            double rest = p0 * stepper_value(&w) / (1.0 - jm / x);
            if (rest <= REST_TOL * sum && (w.linear || sum > 0.0))
                break;
        }
    }
    return sum < 1.0 ? sum : 1.0;
}

/* P(Y ≥ t): upward from j_lo, where Q(m + j, t) is smallest. */
static double preamp_above(const qc_model *m, double x, double t)
{
    double mm = m->params[P_MODES];
    if (!(t > 0.0))
        return 1.0;
    if (x == 0.0)
        return gamma_inc(mm, t, 1);
    double jlo, jhi;
    window(m, x, &jlo, &jhi);
    (void)jhi;
    double q = gamma_inc(mm + jlo, t, 1);
    if (isnan(q))
        return NAN;
    double lt = log(t);
    stepper w, d; /* w_j and d_{m+j} */
    stepper_init(&w, log_weight(jlo, x));
    stepper_init(&d, (mm + jlo) * lt - t - lgam(mm + jlo + 1.0));
    double sum = 0.0;
    for (double j = jlo;; j += 1.0) {
        sum += stepper_value(&w) * q;
        q += stepper_value(&d); /* Q(m+j+1, t) = Q(m+j, t) + d_{m+j} */
        if (q > 1.0)
            q = 1.0;
        stepper_mul(&d, t / (mm + j + 1.0)); /* d_{m+j+1} */
        stepper_mul(&w, x / (j + 1.0));      /* w_{j+1} = w_j · x / (j+1) */
        double jn = j + 1.0;
        if (jn + 1.0 > x) { /* rest Σ_{i≥jn} w_i ≤ w_jn / (1 − x/(jn+1)) */
            double rest = stepper_value(&w) / (1.0 - x / (jn + 1.0));
            if (rest <= REST_TOL * sum && w.linear)
                break;
            if (!w.linear && jn > x) /* weights below 1e-300 and falling */
                break;
        }
    }
    return sum < 1.0 ? sum : 1.0;
}

/* f(y) = e^{−(√y−√x)²} (y/x)^{(m−1)/2} e^{−2√(xy)} I_{m−1}(2√(xy)). */
static double preamp_density(const qc_model *m, double x, double y)
{
    double mm = m->params[P_MODES];
    if (!(y > 0.0))
        return (y == 0.0 && mm == 1.0) ? exp(-x) : 0.0;
    if (x == 0.0)
        return exp((mm - 1.0) * log(y) - y - lgam(mm));
    gsl_sf_result r;
    double z = 2.0 * sqrt(x * y);
    /* GSL 2.7's Inu_scaled returns NaN with GSL_SUCCESS for order 0 and
     * z ≥ ~1000 (x·y ≥ 250000 with one mode); I0_scaled is exact there. */
    int rc = mm == 1.0 ? gsl_sf_bessel_I0_scaled_e(z, &r)
                       : gsl_sf_bessel_Inu_scaled_e(mm - 1.0, z, &r);
    if (rc == GSL_EUNDRFLW)
        return 0.0;
    if (rc != GSL_SUCCESS)
        return NAN;
    double d = sqrt(y) - sqrt(x);
    return exp(-d * d + 0.5 * (mm - 1.0) * log(y / x)) * r.val;
}

#define SUPPORT_TAIL 1e-17

static void preamp_support(const qc_model *m, double x, double *lo, double *hi)
{
    double mm = m->params[P_MODES];
    double mean = mm + x, sd = sqrt(mm + 2.0 * x);
    double a = mean, b = mean + 10.0 * sd + 40.0;
    while (preamp_above(m, x, b) > SUPPORT_TAIL)
        b *= 2.0;
    for (int i = 0; i < 50; i++) {
        double c = 0.5 * (a + b);
        if (preamp_above(m, x, c) > SUPPORT_TAIL)
            a = c;
        else
            b = c;
    }
    *hi = b;
    a = 0.0;
    b = mean;
    for (int i = 0; i < 50; i++) {
        double c = 0.5 * (a + b);
        if (preamp_below(m, x, c) <= SUPPORT_TAIL)
            a = c;
        else
            b = c;
    }
    *lo = a;
}

static qc_status preamp_check_level(const qc_model *m, double x)
{
    (void)m;
    if (!(x >= 0.0))
        return qc_fail(QC_EINVAL, "model 'preamp' takes signal energies >= 0");
    return QC_OK;
}

static qc_status preamp_moments(const qc_model *m, double x, double *mean,
                                double *var)
{
    double mm = m->params[P_MODES];
    *mean = mm + x;
    *var = mm + 2.0 * x;
    return QC_OK;
}

const qc_model_type qc_model_preamp = {
    .name = "preamp",
    .summary = "optically pre-amplified detection Y = ncx2(2 modes, 2x)/2, "
               "in ASE energy per mode",
    .output = QC_OUTPUT_REAL,
    .properties = QC_MODEL_INTENSITY,
    .nparams = 1,
    .params = preamp_params,
    .init = preamp_init,
    .destroy = preamp_destroy,
    .below = preamp_below,
    .above = preamp_above,
    .density = preamp_density,
    .support = preamp_support,
    .check_level = preamp_check_level,
    .moments = preamp_moments,
};
