/* shaping.c — probabilistic shaping of PAM and square QAM: the
 * Maxwell–Boltzmann laws p(x) ∝ exp(−ν·x²) on the levels of one real
 * dimension (for square QAM the same law on each quadrature, whose
 * product is ∝ exp(−ν·|x|²)), the laws that maximize entropy for a given
 * average power (Kschischang and Pasupathy, "Optimal nonuniform
 * signaling for Gaussian channels", IEEE Trans. IT 39(3), 1993), as used
 * by probabilistic amplitude shaping (Böcherer, Steiner, Schulte, IEEE
 * Trans. Commun. 63(12), 2015); on intensity levels the law ∝ exp(−ν·x)
 * of most entropy at a given average optical power E[x] (Cover and
 * Thomas, Elements of Information Theory, 2nd ed., 2006, sec. 12.1),
 * the same law of the amplitudes √x (qc_shaping_amplitudes). Here: the spec grammar (none, mb:NU,
 * entropy:H, best), the law, its entropy and power, and ν for a target
 * entropy by GSL's Brent root finder (Brent, Algorithms for Minimization
 * without Derivatives, 1973, ch. 4). The search for the best ν with the
 * quantizer in place is a design (src/design/shaping.c). */
#include "alphabet/alphabet.h"
#include "core/parse.h"

#include <gsl/gsl_errno.h>
#include <gsl/gsl_roots.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

/* Relative accuracy of ν from a target entropy, and the iterations
 * allowed to reach it. */
#define NU_REL_TOL 1e-13
#define NU_MAX_ITER 200
/* Doublings of the upper end of the bracket at most (ν grows by 2^this). */
#define NU_MAX_DOUBLINGS 400
/* A target entropy this close (relative) to log2 M is ν = 0. */
#define H_TOP_TOL 1e-12

qc_status qc_shaping_parse(const char *spec, qc_shaping *out)
{
    static const char expected[] = "expected none, mb:NU (NU >= 0), entropy:H (H > 0 bits per "
                                   "symbol) or best";
    if (!spec)
        return qc_fail(QC_EINVAL, "no shaping given (%s)", expected);
    if (strcmp(spec, "none") == 0) {
        *out = (qc_shaping){QC_SHAPING_NONE, 0.0, 0};
        return QC_OK;
    }
    if (strcmp(spec, "best") == 0) {
        *out = (qc_shaping){QC_SHAPING_BEST, 0.0, 0};
        return QC_OK;
    }
    qc_shaping s = {0};
    const char *arg;
    if (strncmp(spec, "mb:", 3) == 0) {
        s.kind = QC_SHAPING_NU;
        arg = spec + 3;
    } else if (strncmp(spec, "entropy:", 8) == 0) {
        s.kind = QC_SHAPING_ENTROPY;
        arg = spec + 8;
    } else {
        return qc_fail(QC_EINVAL, "'%s' is not known (%s)", spec, expected);
    }
    if (qc_parse_double(arg, &s.value) != QC_OK || !isfinite(s.value))
        return qc_fail(QC_EINVAL, "'%s': '%s' is not a finite number (%s)", spec, arg,
                       expected);
    if (s.kind == QC_SHAPING_NU && !(s.value >= 0.0))
        return qc_fail(QC_EINVAL, "'%s': NU must be >= 0 (NU = 0 is the uniform law; a "
                                  "negative NU favours the outer levels and is no "
                                  "Maxwell-Boltzmann law)",
                       spec);
    if (s.kind == QC_SHAPING_ENTROPY && !(s.value > 0.0))
        return qc_fail(QC_EINVAL, "'%s': the entropy H must be > 0 bits per symbol",
                       spec);
    if (s.value == 0.0)
        s.value = 0.0; /* -0 reads as 0 */
    *out = s;
    return QC_OK;
}

void qc_shaping_format(const qc_shaping *s, char *buf, size_t cap)
{
    if (!buf || cap == 0)
        return;
    if (!s) {
        snprintf(buf, cap, "none");
        return;
    }
    /* the shortest of %.15g, %.16g, %.17g that reads back exactly */
    char num[40];
    for (int digits = 15; digits <= 17; digits++) {
        snprintf(num, sizeof num, "%.*g", digits, s->value);
        if (strtod(num, NULL) == s->value)
            break;
    }
    switch (s->kind) {
    case QC_SHAPING_NU: snprintf(buf, cap, "mb:%s", num); break;
    case QC_SHAPING_ENTROPY: snprintf(buf, cap, "entropy:%s", num); break;
    case QC_SHAPING_BEST: snprintf(buf, cap, "best"); break;
    default: snprintf(buf, cap, "none"); break;
    }
}

qc_status qc_shaping_amplitudes(const double *levels, size_t n, int intensity, double *out)
{
    if (!levels || !out || n == 0)
        return qc_fail(QC_EINVAL, "shaping: no levels given");
    for (size_t i = 0; i < n; i++) {
        if (!isfinite(levels[i]) || (intensity && !(levels[i] >= 0.0)))
            return qc_fail(QC_EINVAL, "shaping: level %zu (%g) is not %s", i + 1, levels[i],
                           intensity ? "an intensity >= 0" : "a finite number");
        out[i] = intensity ? sqrt(levels[i]) : levels[i];
    }
    return QC_OK;
}

static qc_status check_levels(const double *levels, size_t n)
{
    if (!levels || n == 0)
        return qc_fail(QC_EINVAL, "shaping: no levels given");
    for (size_t i = 0; i < n; i++)
        if (!isfinite(levels[i]))
            return qc_fail(QC_EINVAL, "shaping: level %zu is not a finite number", i + 1);
    return QC_OK;
}

static double least_square(const double *levels, size_t n)
{
    double m = INFINITY;
    for (size_t i = 0; i < n; i++)
        m = fmin(m, levels[i] * levels[i]);
    return m;
}

/* Weights exp(−ν(x² − min x²)) (the largest is 1, so nothing overflows),
 * their sum, and the entropy (nats) and E[x²] of one dimension. */
static void mb_stats(const double *levels, size_t n, double nu, double *law, double *h_nats,
                     double *power)
{
    const double m = least_square(levels, n);
    double z = 0.0, e = 0.0;
    for (size_t i = 0; i < n; i++)
        z += exp(-nu * (levels[i] * levels[i] - m));
    for (size_t i = 0; i < n; i++) {
        double d = levels[i] * levels[i] - m;
        double p = exp(-nu * d) / z;
        if (law)
            law[i] = p;
        e += p * d;
    }
    /* H = log Z + ν·E[x² − m]: no 0·log 0 to guard, exact at ν = 0 */
    if (h_nats)
        *h_nats = log(z) + nu * e;
    if (power)
        *power = e + m;
}

qc_status qc_mb_law(const double *levels, size_t n, double nu, double *law)
{
    qc_status st = check_levels(levels, n);
    if (st != QC_OK)
        return st;
    if (!(nu >= 0.0) || !isfinite(nu))
        return qc_fail(QC_EINVAL, "shaping: nu must be a finite number >= 0 (got %g)", nu);
    mb_stats(levels, n, nu, law, NULL, NULL);
    return QC_OK;
}

static int bad_args(const double *levels, size_t n, double nu)
{
    if (!levels || n == 0 || !(nu >= 0.0) || !isfinite(nu))
        return 1;
    for (size_t i = 0; i < n; i++)
        if (!isfinite(levels[i]))
            return 1;
    return 0;
}

static double dims_of(unsigned dimensions) { return dimensions == 2 ? 2.0 : 1.0; }

double qc_mb_entropy_bits(const double *levels, size_t n, unsigned dimensions, double nu)
{
    if (bad_args(levels, n, nu))
        return NAN;
    double h;
    mb_stats(levels, n, nu, NULL, &h, NULL);
    return dims_of(dimensions) * h * QC_LOG2E;
}

double qc_mb_power(const double *levels, size_t n, unsigned dimensions, double nu)
{
    if (bad_args(levels, n, nu))
        return NAN;
    double e2;
    mb_stats(levels, n, nu, NULL, NULL, &e2);
    return dims_of(dimensions) * e2;
}

qc_status qc_mb_entropy_range(const double *levels, size_t n, unsigned dimensions,
                              double *hmin, double *hmax)
{
    qc_status st = check_levels(levels, n);
    if (st != QC_OK)
        return st;
    const double m = least_square(levels, n);
    size_t k = 0;
    for (size_t i = 0; i < n; i++)
        k += levels[i] * levels[i] == m;
    *hmin = dims_of(dimensions) * log2((double)k);
    *hmax = dims_of(dimensions) * log2((double)n);
    return QC_OK;
}

typedef struct {
    const double *levels;
    size_t n;
    double target_nats; /* per dimension */
} entropy_gap;

static double gap(double nu, void *ctx)
{
    const entropy_gap *g = ctx;
    double h;
    mb_stats(g->levels, g->n, nu, NULL, &h, NULL);
    return h - g->target_nats;
}

qc_status qc_mb_nu_for_entropy(const double *levels, size_t n, unsigned dimensions,
                               double h_bits, double *nu)
{
    double hmin, hmax;
    qc_status st = qc_mb_entropy_range(levels, n, dimensions, &hmin, &hmax);
    if (st != QC_OK)
        return st;
    /* the top first: when every level has the same energy the family is
     * the uniform law alone (hmin = hmax) */
    if (isfinite(h_bits) && fabs(h_bits - hmax) <= H_TOP_TOL * hmax) {
        *nu = 0.0;
        return QC_OK;
    }
    if (!isfinite(h_bits) || !(h_bits > hmin) || h_bits > hmax)
        return qc_fail(QC_EINVAL,
                       "shaping: entropy %.17g bits is outside (%g, %g], the entropies of the "
                       "Maxwell-Boltzmann laws on these %zu levels%s (from the least-energy "
                       "levels alone to the uniform law, log2 M)",
                       h_bits, hmin, hmax, n, dimensions == 2 ? " per quadrature, per complex "
                                                                "symbol"
                                                              : "");
    entropy_gap g = {levels, n, h_bits / dims_of(dimensions) / QC_LOG2E};
    /* bracket: H(0) > target; double the upper end until H falls below */
    const double m = least_square(levels, n);
    double spread = 0.0;
    for (size_t i = 0; i < n; i++)
        spread = fmax(spread, levels[i] * levels[i] - m);
    double lo = 0.0, hi = 1.0 / spread;
    size_t k = 0;
    while (gap(hi, &g) > 0.0 && k++ < NU_MAX_DOUBLINGS) {
        lo = hi;
        hi *= 2.0;
    }
    if (gap(hi, &g) > 0.0)
        return qc_fail(QC_ENOCONV, "shaping: no nu found for entropy %.17g bits (the target "
                                   "lies too close to the least entropy %g)",
                       h_bits, hmin);
    qc_gsl_init();
    gsl_root_fsolver *sv = gsl_root_fsolver_alloc(gsl_root_fsolver_brent);
    if (!sv)
        return qc_fail(QC_ENOMEM, "out of memory");
    gsl_function fn = {gap, &g};
    int rc = gsl_root_fsolver_set(sv, &fn, lo, hi);
    for (size_t it = 0; rc == GSL_SUCCESS && it < NU_MAX_ITER; it++) {
        if ((rc = gsl_root_fsolver_iterate(sv)) != GSL_SUCCESS)
            break;
        rc = gsl_root_test_interval(gsl_root_fsolver_x_lower(sv), gsl_root_fsolver_x_upper(sv),
                                    0.0, NU_REL_TOL);
        if (rc == GSL_SUCCESS)
            break;
        rc = rc == GSL_CONTINUE ? GSL_SUCCESS : rc;
        if (it + 1 == NU_MAX_ITER)
            rc = GSL_EMAXITER;
    }
    double root = gsl_root_fsolver_root(sv);
    gsl_root_fsolver_free(sv);
    if (rc != GSL_SUCCESS)
        return qc_fail(QC_ENOCONV, "shaping: the root finder for nu at entropy %.17g bits "
                                   "stopped: %s",
                       h_bits, gsl_strerror(rc));
    *nu = root;
    return QC_OK;
}
