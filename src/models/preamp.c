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
 * d_a = t^a e^{−t}/Γ(a+1) (DLMF 8.8.5), from one incomplete-gamma
 * evaluation each (the Poisson-weighted series of Ding, Appl. Statist.
 * 41(2), 1992, summed from its stable end). P, Q, w_j and d_a come from
 * incgamma.c (series / Legendre's continued fraction with Loader's
 * saddle-point prefactor), which stays accurate up to a ~ 1e6 and beyond,
 * where GSL's incomplete gamma does not converge. Truncation: terms beyond
 * the Poisson window [j_lo, j_hi] (each outer Poisson tail ≤ 1e-17 by the
 * Chernoff bound) change the sum by a relative 1e-17 at most (the omitted
 * factor P or Q is bounded by the kept one), and the open end of the sum
 * is cut once a geometric bound on the rest is below 1e-16 of the sum:
 * relative truncation error ≤ 2e-16 in both tails; the rounding error
 * (measured against scipy.stats.ncx2) is ≤ 3e-10 relative up to
 * m = x = 1e6, ~1e-13 for x ≤ 1e3. The density: Bessel form for m < 51,
 * else the gamma mixture summed from its largest term (below). */
#include "core/internal.h"
#include "models/model_internal.h"
#include "models/incgamma.h"

#include <math.h>

#include <gsl/gsl_errno.h>
#include <gsl/gsl_sf_bessel.h>

enum { P_MODES };

static const qc_param_spec preamp_params[] = {
    {"modes", "", "noise modes m = optical bandwidth x slot time x polarizations",
     NAN, 1.0, 1e6, 0, 0},
};

#define WINDOW_TAIL 1e-17 /* Poisson mass outside the window, each side */
#define REST_TOL 1e-16    /* open end: rest ≤ REST_TOL · sum            */

static double gamma_inc(double a, double z, int upper)
{
    return qc_gamma_inc(a, z, upper);
}

/* The Poisson(x) window [jlo, jhi] with P(J < jlo) ≤ WINDOW_TAIL and
 * P(J > jhi) ≤ WINDOW_TAIL, from the Chernoff bounds
 * P(J ≥ x(1+u)) ≤ e^{−x h(u)}, P(J ≤ x(1−u)) ≤ e^{−x h(−u)},
 * h(u) = (1+u) ln(1+u) − u (e.g. Mitzenmacher & Upfal, Probability and
 * Computing, 2005, thm 4.4/4.5 in their Poisson form): x h(u) = ln(1/tail)
 * solved for u by bisection (h is increasing in |u|). The bound is loose
 * by about a factor √x, so the window is a little wider than needed. */
static double chernoff_h(double u) { return (1.0 + u) * log1p(u) - u; }

static void window(double x, double *jlo, double *jhi)
{
    const double need = -log(WINDOW_TAIL);
    double a = 0.0, b = 1.0;
    while (x * chernoff_h(b) < need)
        b *= 2.0;
    for (int i = 0; i < 100 && b - a > 1e-12 * b; i++) {
        double c = 0.5 * (a + b);
        if (x * chernoff_h(c) < need)
            a = c;
        else
            b = c;
    }
    *jhi = ceil(x * (1.0 + b));
    if (x < need) { /* x h(−1) = x: P(J = 0) = e^{−x} is above the tail */
        *jlo = 0.0;
        return;
    }
    a = 0.0;
    b = 1.0;
    for (int i = 0; i < 100 && b - a > 1e-15; i++) {
        double c = 0.5 * (a + b);
        if (x * chernoff_h(-c) < need)
            a = c;
        else
            b = c;
    }
    *jlo = floor(x * (1.0 - b));
}

/* ln w_j = ln(x^j e^{−x}/j!) */
static double log_weight(double j, double x) { return qc_log_poisson_term(j, x); }

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

/* Chernoff bound on ln P(Y ≤ t) (t < m + x) or ln P(Y ≥ t) (t > m + x)
 * from the moment generating function E e^{θY} = (1−θ)^{−m} e^{xθ/(1−θ)}
 * at its optimal θ = 1 − 1/v, x v² + m v = t:
 *   ln P ≤ −t(1 − 1/v) + m ln v + x(v − 1).
 * Below UNDERFLOW_LOG the tail is 0 in doubles, and it is returned at once
 * (the sums would otherwise walk the whole Poisson range in log mode). */
#define UNDERFLOW_LOG -750.0

static double tail_log_bound(double mm, double x, double t)
{
    double v = 2.0 * t / (mm + sqrt(mm * mm + 4.0 * x * t));
    return -t * (1.0 - 1.0 / v) + mm * log(v) + x * (v - 1.0);
}

/* w_j and d_a are stepped by their ratios and recomputed in Loader's form
 * every REANCHOR steps, so their rounding error stays near REANCHOR·ε
 * instead of growing over a window of up to ~2e4 terms (x = 1e6). */
#define REANCHOR 32.0

/* P(Y < t): downward from j_hi, where P(m + j, t) is smallest. */
static double preamp_below(const qc_model *m, double x, double t)
{
    double mm = m->params[P_MODES];
    if (!(t > 0.0))
        return 0.0;
    if (x == 0.0)
        return gamma_inc(mm, t, 0);
    if (t < mm + x && tail_log_bound(mm, x, t) < UNDERFLOW_LOG)
        return 0.0;
    double jlo, jhi;
    window(x, &jlo, &jhi);
    (void)jlo;
    double p = gamma_inc(mm + jhi, t, 0);
    double p0 = gamma_inc(mm, t, 0); /* bounds every P(m + j, t) */
    if (isnan(p) || isnan(p0))
        return NAN;
    stepper w, d; /* w_j and d_{m+j−1} */
    stepper_init(&w, log_weight(jhi, x));
    stepper_init(&d, qc_log_poisson_term(mm + jhi - 1.0, t));
    double sum = 0.0;
    for (double j = jhi;; j -= 1.0) {
        if (fmod(jhi - j, REANCHOR) == 0.0 && j != jhi) {
            stepper_init(&w, log_weight(j, x));
            stepper_init(&d, qc_log_poisson_term(mm + j - 1.0, t));
        }
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
    if (t > mm + x && tail_log_bound(mm, x, t) < UNDERFLOW_LOG)
        return 0.0;
    double jlo, jhi;
    window(x, &jlo, &jhi);
    (void)jhi;
    double q = gamma_inc(mm + jlo, t, 1);
    if (isnan(q))
        return NAN;
    stepper w, d; /* w_j and d_{m+j} */
    stepper_init(&w, log_weight(jlo, x));
    stepper_init(&d, qc_log_poisson_term(mm + jlo, t));
    double sum = 0.0;
    for (double j = jlo;; j += 1.0) {
        if (fmod(j - jlo, REANCHOR) == 0.0 && j != jlo) {
            stepper_init(&w, log_weight(j, x));
            stepper_init(&d, qc_log_poisson_term(mm + j, t));
        }
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

/* f(y) = Σ_j w_j g_{m+j}(y), g_a(y) = y^{a−1} e^{−y}/Γ(a): positive terms
 * t_j = d_j(x)·d_{m+j−1}(y) (d_a(t) = t^a e^{−t}/Γ(a+1)) whose ratio
 * t_{j+1}/t_j = xy/((j+1)(m+j)) falls with j. Summed outward from the
 * largest term j* (the root of (j+1)(m+j) = xy), each side until a
 * geometric bound on the rest is below DENS_TOL of the sum; the largest
 * term in Loader's form, so nothing under- or overflows before the end. */
#define DENS_TOL 1e-17

static double density_series(double mm, double x, double y)
{
    double xy = x * y;
    double root = 2.0 * (xy - mm) / ((mm + 1.0) + sqrt((mm - 1.0) * (mm - 1.0) + 4.0 * xy));
    double js = root > 0.0 ? floor(root) : 0.0;
    double lpeak = qc_log_poisson_term(js, x) + qc_log_poisson_term(mm + js - 1.0, y);
    if (isnan(lpeak))
        return NAN;
    double sum = 1.0, term = 1.0;
    for (double j = js;; j += 1.0) { /* upward: t_{j+1} = t_j · r_j */
        double r = xy / ((j + 1.0) * (mm + j));
        term *= r;
        sum += term;
        double rn = xy / ((j + 2.0) * (mm + j + 1.0));
        if (rn < 1.0 && term * rn <= DENS_TOL * sum * (1.0 - rn))
            break;
    }
    term = 1.0;
    for (double j = js; j > 0.0; j -= 1.0) { /* downward: t_{j−1} = t_j · q_j */
        double q = j * (mm + j - 1.0) / xy;
        term *= q;
        sum += term;
        double qn = (j - 1.0) * (mm + j - 2.0) / xy;
        if (qn < 1.0 && term * qn <= DENS_TOL * sum * (1.0 - qn))
            break;
    }
    return exp(lpeak + log(sum));
}

/* Small m: the Bessel form
 * f(y) = e^{−(√y−√x)²} (y/x)^{(m−1)/2} e^{−2√(xy)} I_{m−1}(2√(xy))
 * in logarithms, with GSL's exponentially scaled I_ν (ν < BESSEL_MAX_NU,
 * where GSL uses its series, Steed's continued fraction or the large-z
 * expansion); where that scaled value leaves the normal range, and for
 * every larger m, the series above. */
#define BESSEL_MAX_NU 50.0

static double preamp_density(const qc_model *m, double x, double y)
{
    double mm = m->params[P_MODES];
    if (!(y > 0.0))
        return (y == 0.0 && mm == 1.0) ? exp(-x) : 0.0;
    if (x == 0.0)
        return exp(qc_log_poisson_term(mm - 1.0, y));
    if (mm - 1.0 < BESSEL_MAX_NU) {
        gsl_sf_result r;
        double z = 2.0 * sqrt(x * y);
        /* GSL 2.7's Inu_scaled returns NaN with GSL_SUCCESS for order 0 and
         * z ≥ ~1000 (x·y ≥ 250000 with one mode); I0_scaled is exact there. */
        int rc = mm == 1.0 ? gsl_sf_bessel_I0_scaled_e(z, &r)
                           : gsl_sf_bessel_Inu_scaled_e(mm - 1.0, z, &r);
        if (rc == GSL_SUCCESS && r.val >= 1e-290 && isfinite(r.val)) {
            double d = sqrt(y) - sqrt(x);
            return exp(-d * d + 0.5 * (mm - 1.0) * log(y / x) + log(r.val));
        }
    }
    return density_series(mm, x, y);
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

static const char *const preamp_keys[] = {QC_KEYS_OPTICAL_POWER, QC_KEYS_PREAMP, NULL};

const qc_model_type qc_model_preamp = {
    .name = "preamp",
    .summary = "optically pre-amplified detection Y = ncx2(2 modes, 2x)/2, "
               "in ASE energy per mode",
    .output = QC_OUTPUT_REAL,
    .properties = QC_MODEL_INTENSITY,
    .nparams = 1,
    .params = preamp_params,
    .below = preamp_below,
    .above = preamp_above,
    .density = preamp_density,
    .support = preamp_support,
    .check_level = preamp_check_level,
    .moments = preamp_moments,
    .keys = preamp_keys,
    .frontend = QC_FRONTEND_PREAMP,
    .level_unit = "ASE energies per mode",
    .output_unit = "ASE energies per mode",
};
