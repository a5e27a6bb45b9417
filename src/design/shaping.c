/* shaping.c — designs with a probabilistically shaped input: a
 * Maxwell–Boltzmann law p(x) ∝ exp(−ν·x²) on the levels (per quadrature
 * for square QAM; src/alphabet/shaping.c), chosen by ν, by its entropy,
 * or as the ν that maximizes the design's objective (MI or BICM GMI) with
 * the quantizer re-designed for each law. The shaped law is compared
 * with the uniform one at the same average power: the levels are scaled
 * by √(E_unif[x²]/E_ν[x²]), as probabilistic amplitude shaping scales its
 * constellation (Böcherer, Steiner, Schulte, IEEE Trans. Commun. 63(12),
 * 2015). The search is a scan of the entropy followed by GSL's Brent
 * minimizer (Brent, Algorithms for Minimization without Derivatives,
 * 1973, ch. 5). The shaping gain is the SNR the uniform law needs for the
 * shaped design's rate, with the same quantizer strategy and cells, minus
 * the operating SNR (GSL Brent root finding on the uniform design's rate
 * against the SNR); at high SNR it stays below the ultimate 1.53 dB = 10·
 * log10(πe/6) (Forney and Wei, IEEE JSAC 7(6), 1989).
 *
 * Intensity levels (upam, or any levels of a model of optical
 * intensities: gauss-sd, apd-gauss, apd, poisson, preamp) take the law
 * p(x) ∝ exp(−ν·x) of most entropy at a given average optical power E[x]
 * (Cover and Thomas, Elements of Information Theory, 2nd ed., 2006, sec.
 * 12.1), the levels are scaled by E_unif[x]/E_ν[x] so that the average
 * optical power stays that of the uniform law, and the shaping gain is
 * the average optical power (dB, 10·log10) the uniform law needs more
 * for the same rate, the model's noise parameters held (the noise of a
 * signal-dependent model follows the scaled levels). For a continuous
 * input at high SNR on additive Gaussian noise this tends to 10·log10(e/2)
 * = 1.33 dB: the exponential law of mean μ and the uniform law on
 * [0, eμ] have the same differential entropy log(eμ) (Cover and Thomas,
 * sec. 8.1), and the latter's mean is eμ/2. A measured model (table) is
 * refused: its densities exist at its own levels only. */
#include "design/design_internal.h"

#include <gsl/gsl_errno.h>
#include <gsl/gsl_min.h>
#include <gsl/gsl_roots.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

/* Entropies tried by the scan of `best`, evenly spaced above hmin up to
 * hmax (the uniform law). */
#define SCAN_POINTS 8
/* Brent minimizer on the entropy: absolute tolerance (bits) and
 * iterations at most. */
#define BEST_H_TOL 1e-3
#define BEST_MAX_ITER 40
/* Shaping gain: the SNR offsets (dB) tried to bracket the crossing, and
 * the accuracy of the root. */
#define GAIN_MAX_DB 32.0
#define GAIN_TOL_DB 1e-6
#define GAIN_MAX_ITER 100

typedef struct {
    const qc_design_request *req;
    unsigned dims;
    int intensity;          /* law ∝ exp(−ν·x) at the same E[x]             */
    double *law, *scaled;   /* n each */
    double *amp;            /* the amplitudes of the law (qc_shaping_amplitudes) */
    double uniform_power;   /* E[x²] of one dimension under the uniform law
                               (intensity: E[x], the average optical power) */
    size_t evals, evals_total;
    qc_status st;           /* first failure inside a GSL callback         */
} shaping_ctx;

static qc_status check_request(const qc_design_request *req)
{
    const qc_shaping *sh = req->input.shaping;
    const qc_model_type *type = qc_model_get_type(req->channel.model);
    if ((unsigned)sh->kind >= QC_SHAPING_COUNT)
        return qc_fail(QC_EINVAL, "shaping: unknown kind %d", (int)sh->kind);
    if (type->properties & QC_MODEL_FROM_FILE)
        return qc_fail(QC_EINVAL, "shaping: model '%s' holds measured densities at its own "
                                  "levels only, and a shaped law keeps the uniform law's "
                                  "average power by scaling the levels: measure at the scaled "
                                  "levels, or give the law as probabilities",
                       type->name);
    if ((type->properties & QC_MODEL_INTENSITY) && !sh->intensity)
        return qc_fail(QC_EINVAL, "shaping: model '%s' takes optical intensities; its shaped "
                                  "law is exp(-nu x) at the same average optical power "
                                  "(shaping.intensity = 1)",
                       type->name);
    if (req->input.objective == QC_OBJECTIVE_CAPACITY)
        return qc_fail(QC_EINVAL, "shaping: the capacity objective optimizes the law freely; "
                                  "use objective mi or gmi with a shaped law");
    if (req->input.probabilities)
        return qc_fail(QC_EINVAL, "shaping: give an input law (probabilities) or a shaping, "
                                  "not both");
    if (req->input.optimize_levels)
        return qc_fail(QC_EINVAL, "shaping: the levels are those of the alphabet, scaled to "
                                  "keep the power; it does not combine with optimize-levels");
    if (req->input.costs || qc_constraints_any(req->input.constraints))
        return qc_fail(QC_EINVAL, "shaping: the shaped law keeps the uniform law's average "
                                  "power; it does not combine with costs or input "
                                  "constraints (peak-limit, power-limit, mean-limit)");
    if (sh->kind == QC_SHAPING_NU && !(sh->value >= 0.0 && isfinite(sh->value)))
        return qc_fail(QC_EINVAL, "shaping: nu must be a finite number >= 0 (got %g)",
                       sh->value);
    return QC_OK;
}

/* The law of ν into c->law and the levels scaled to the uniform power
 * into c->scaled; *scale receives the factor. */
static qc_status law_of(shaping_ctx *c, double nu, double *scale)
{
    const size_t n = c->req->channel.nlevels;
    const double *x = c->req->channel.levels;
    qc_status st = qc_mb_law(c->amp, n, nu, c->law);
    if (st != QC_OK)
        return st;
    double e2 = 0.0;
    for (size_t i = 0; i < n; i++)
        e2 += c->law[i] * (c->intensity ? x[i] : x[i] * x[i]);
    double a = c->intensity ? c->uniform_power / e2 : sqrt(c->uniform_power / e2);
    if (!(a > 0.0) || !isfinite(a))
        return qc_fail(QC_EINVAL, "shaping: the law of nu = %g has average power %g; the levels "
                                  "cannot be scaled to the uniform law's power %g",
                       nu, e2, c->uniform_power);
    for (size_t i = 0; i < n; i++)
        c->scaled[i] = a * x[i];
    *scale = a;
    return QC_OK;
}

/* One design with law c->law on levels `levels`; `searching` skips what
 * a search does not need (SNR penalty, FEC, progress). */
static qc_status design_with(shaping_ctx *c, const double *levels, const double *law,
                             int searching, qc_design_result *res)
{
    qc_design_request sub = *c->req;
    sub.input.shaping = NULL;
    sub.channel.levels = levels;
    sub.input.probabilities = law;
    if (searching) {
        sub.numerics.skip_snr_penalty = 1;
        sub.input.fec = NULL;
        sub.numerics.progress = NULL;
        if (c->evals_total)
            qc_design_progress(c->req, ++c->evals, c->evals_total + 1);
    } else if (c->evals_total) {
        sub.numerics.progress = NULL;
    }
    return qc_input_design(&sub, res);
}

/* ---- best: the ν that maximizes the objective ------------------------- */

/* Minus the objective's rate at entropy h (bits per symbol). */
static double minus_rate(double h, void *ctx)
{
    shaping_ctx *c = ctx;
    if (c->st != QC_OK)
        return NAN;
    double nu, a;
    qc_design_result r;
    qc_status st = qc_mb_nu_for_entropy(c->amp, c->req->channel.nlevels, c->dims, h, &nu);
    if (st == QC_OK)
        st = law_of(c, nu, &a);
    if (st == QC_OK)
        st = design_with(c, c->scaled, c->law, 1, &r);
    if (st != QC_OK) {
        c->st = st;
        return NAN;
    }
    double f = -r.rate_bits;
    qc_design_result_clear(&r);
    return f;
}

/* The entropy of the best law: a scan, then Brent's minimizer around the
 * best point of the scan. The best law's rate is at least the uniform
 * law's R_u and at most its entropy, so its entropy is at least R_u: the
 * scan covers [max(hmin, R_u), hmax] (and avoids laws so peaked that the
 * levels are scaled far into the noise's tails). */
static qc_status best_entropy(shaping_ctx *c, double hmin, double hmax, double *h_best)
{
    double h[SCAN_POINTS + 1], f[SCAN_POINTS + 1];
    f[SCAN_POINTS] = minus_rate(hmax, c);
    if (c->st != QC_OK)
        return c->st;
    h[SCAN_POINTS] = hmax;
    const double low = fmax(hmin, -f[SCAN_POINTS]);
    if (!(low < hmax)) { /* the uniform law is at its entropy already */
        *h_best = hmax;
        return QC_OK;
    }
    hmin = low;
    size_t k = SCAN_POINTS;
    for (size_t i = 1; i < SCAN_POINTS; i++) {
        h[i] = hmin + (hmax - hmin) * (double)i / SCAN_POINTS;
        f[i] = minus_rate(h[i], c);
        if (c->st != QC_OK)
            return c->st;
    }
    for (size_t i = SCAN_POINTS; i-- > 1;) /* the first of equals: the most shaped */
        if (f[i] <= f[k])
            k = i;
    double lo, mid, hi, flo, fmid, fhi;
    if (k == SCAN_POINTS) {
        /* the uniform end: look just inside it, the optimum may sit there */
        lo = h[k - 1];
        flo = f[k - 1];
        hi = h[k];
        fhi = f[k];
        mid = hi - (hi - lo) / 8.0;
        fmid = minus_rate(mid, c);
        if (c->st != QC_OK)
            return c->st;
        if (!(fmid < fhi)) {
            *h_best = hmax;
            return QC_OK;
        }
    } else if (k == 1) {
        /* the least-entropy end of the scan: bracket below it */
        lo = hmin + (h[1] - hmin) / 64.0;
        mid = h[1];
        fmid = f[1];
        hi = h[2];
        fhi = f[2];
        flo = minus_rate(lo, c);
        if (c->st != QC_OK)
            return c->st;
        if (!(fmid < flo)) {
            *h_best = lo;
            return QC_OK;
        }
    } else {
        lo = h[k - 1];
        flo = f[k - 1];
        mid = h[k];
        fmid = f[k];
        hi = h[k + 1];
        fhi = f[k + 1];
    }
    if (!(fmid < flo && fmid < fhi)) { /* a tie with a neighbour: no bracket */
        *h_best = mid;
        return QC_OK;
    }
    gsl_min_fminimizer *m = gsl_min_fminimizer_alloc(gsl_min_fminimizer_brent);
    if (!m)
        return qc_fail(QC_ENOMEM, "out of memory");
    gsl_function fn = {minus_rate, c};
    int rc = gsl_min_fminimizer_set_with_values(m, &fn, mid, fmid, lo, flo, hi, fhi);
    for (size_t it = 0; rc == GSL_SUCCESS && c->st == QC_OK && it < BEST_MAX_ITER; it++) {
        if ((rc = gsl_min_fminimizer_iterate(m)) != GSL_SUCCESS)
            break;
        rc = gsl_min_test_interval(gsl_min_fminimizer_x_lower(m),
                                   gsl_min_fminimizer_x_upper(m), BEST_H_TOL, 0.0);
        if (rc == GSL_SUCCESS)
            break;
        rc = rc == GSL_CONTINUE ? GSL_SUCCESS : rc;
    }
    double x = gsl_min_fminimizer_x_minimum(m);
    gsl_min_fminimizer_free(m);
    if (c->st != QC_OK)
        return c->st;
    if (rc != GSL_SUCCESS)
        return qc_fail(QC_ENUMERIC, "shaping best: the search over the entropy stopped: %s",
                       gsl_strerror(rc));
    *h_best = x;
    return QC_OK;
}

/* ---- the shaping gain ------------------------------------------------- */

typedef struct {
    shaping_ctx *c;
    double *levels;     /* the given levels scaled to the SNR offset      */
    double target;      /* the shaped design's rate                       */
} gain_ctx;

/* The uniform design's rate at an SNR offset t dB, minus the target. */
static double uniform_gap(double t, void *ctx)
{
    gain_ctx *g = ctx;
    shaping_ctx *c = g->c;
    if (c->st != QC_OK)
        return NAN;
    const size_t n = c->req->channel.nlevels;
    /* t in dB of power: E[x²] grows as a², the optical power E[x] as a */
    const double a = pow(10.0, t / (c->intensity ? 10.0 : 20.0));
    for (size_t i = 0; i < n; i++)
        g->levels[i] = a * c->req->channel.levels[i];
    qc_design_result r;
    qc_status st = design_with(c, g->levels, NULL, 1, &r);
    if (st != QC_OK) {
        c->st = st;
        return NAN;
    }
    double f = r.rate_bits - g->target;
    qc_design_result_clear(&r);
    return f;
}

/* Uniform rate at the operating SNR and the shaping gain of a finished
 * shaped design. */
static qc_status shaping_gain(shaping_ctx *c, qc_design_result *res)
{
    const size_t n = c->req->channel.nlevels;
    gain_ctx g = {c, qc_malloc_array(n, sizeof *g.levels), res->rate_bits};
    if (!g.levels)
        return qc_fail(QC_ENOMEM, "out of memory");
    double f0 = uniform_gap(0.0, &g);
    qc_status st = c->st;
    if (st != QC_OK)
        goto done;
    res->uniform_rate_bits = f0 + g.target;
    if (f0 == 0.0) {
        res->shaping_gain_db = 0.0;
        goto done;
    }
    /* bracket the crossing: step away from 0 dB on the side where the
     * uniform law's rate moves toward the target. A uniform design that
     * fails away from the operating point (a channel beyond what doubles
     * resolve) leaves the gain undefined, not the design failed. */
    const double dir = f0 < 0.0 ? 1.0 : -1.0;
    double a = 0.0, fa = f0, b = NAN, fb = NAN;
    for (double step = 1.0; step <= GAIN_MAX_DB; step *= 2.0) {
        double t = dir * step, ft = uniform_gap(t, &g);
        if (c->st != QC_OK)
            goto undefined;
        if ((ft > 0.0) != (fa > 0.0) || ft == 0.0) {
            b = t;
            fb = ft;
            break;
        }
        a = t;
        fa = ft;
    }
    if (isnan(b)) /* not reached within ±GAIN_MAX_DB: NaN */
        goto done;
    if (fb == 0.0) {
        res->shaping_gain_db = b;
        goto done;
    }
    gsl_root_fsolver *sv = gsl_root_fsolver_alloc(gsl_root_fsolver_brent);
    if (!sv) {
        st = qc_fail(QC_ENOMEM, "out of memory");
        goto done;
    }
    gsl_function fn = {uniform_gap, &g};
    int rc = gsl_root_fsolver_set(sv, &fn, fmin(a, b), fmax(a, b));
    for (size_t it = 0; rc == GSL_SUCCESS && c->st == QC_OK && it < GAIN_MAX_ITER; it++) {
        if ((rc = gsl_root_fsolver_iterate(sv)) != GSL_SUCCESS)
            break;
        rc = gsl_root_test_interval(gsl_root_fsolver_x_lower(sv), gsl_root_fsolver_x_upper(sv),
                                    GAIN_TOL_DB, 0.0);
        if (rc == GSL_SUCCESS)
            break;
        rc = rc == GSL_CONTINUE ? GSL_SUCCESS : rc;
    }
    double root = gsl_root_fsolver_root(sv);
    gsl_root_fsolver_free(sv);
    if (c->st != QC_OK || rc != GSL_SUCCESS)
        goto undefined;
    res->shaping_gain_db = root;
done:
    free(g.levels);
    return st;
undefined:
    c->st = QC_OK;
    free(g.levels);
    return QC_OK;
}

/* ---- the entry point ---------------------------------------------------- */

qc_status qc_shaped_design(const qc_design_request *req, qc_design_result *res)
{
    memset(res, 0, sizeof *res);
    qc_gsl_init();
    size_t K;
    qc_status st = qc_design_check_request(req, req && req->quantizer.kind == QC_QUANTIZER_FIXED,
                                           &K);
    if (st != QC_OK)
        return st;
    if ((st = check_request(req)) != QC_OK)
        return st;
    const qc_shaping sh = *req->input.shaping;
    const size_t n = req->channel.nlevels;
    shaping_ctx c = {.req = req, .dims = req->channel.dimensions == 2 ? 2 : 1,
                     .intensity = sh.intensity != 0};
    c.law = qc_malloc_array(n, sizeof *c.law);
    c.scaled = qc_malloc_array(n, sizeof *c.scaled);
    c.amp = qc_malloc_array(n, sizeof *c.amp);
    if (!c.law || !c.scaled || !c.amp) {
        st = qc_fail(QC_ENOMEM, "out of memory");
        goto done;
    }
    if ((st = qc_shaping_amplitudes(req->channel.levels, n, c.intensity, c.amp)) != QC_OK)
        goto done;
    for (size_t i = 0; i < n; i++) {
        /* as law_of sums the power, so that ν = 0 scales the levels by 1 exactly */
        const double x = req->channel.levels[i];
        c.uniform_power += (1.0 / (double)n) * (c.intensity ? x : x * x);
    }
    if (!(c.uniform_power > 0.0)) {
        st = qc_fail(QC_EINVAL, "shaping: every level is 0: no average power to keep");
        goto done;
    }
    double nu = 0.0, scale = 1.0, hmin, hmax;
    if ((st = qc_mb_entropy_range(c.amp, n, c.dims, &hmin, &hmax)) != QC_OK)
        goto done;
    if (sh.kind == QC_SHAPING_NU) {
        nu = sh.value;
    } else if (sh.kind == QC_SHAPING_ENTROPY) {
        st = qc_mb_nu_for_entropy(c.amp, n, c.dims, sh.value, &nu);
    } else if (sh.kind == QC_SHAPING_BEST && hmax > hmin) {
        double h = hmax;
        c.evals_total = SCAN_POINTS + BEST_MAX_ITER + 4;
        if ((st = best_entropy(&c, hmin, hmax, &h)) == QC_OK)
            st = qc_mb_nu_for_entropy(c.amp, n, c.dims, h, &nu);
    }
    if (st != QC_OK || (st = law_of(&c, nu, &scale)) != QC_OK ||
        (st = design_with(&c, c.scaled, c.law, 0, res)) != QC_OK)
        goto done;
    const size_t search_evals = c.evals;
    res->shaping_given = 1;
    res->shaping = sh;
    res->shaping_nu = nu;
    res->shaping_scale = scale;
    res->shaping_evaluations = search_evals;
    res->uniform_rate_bits = res->shaping_gain_db = NAN;
    if (sh.kind == QC_SHAPING_NONE) {
        res->uniform_rate_bits = res->rate_bits;
        res->shaping_gain_db = 0.0;
    } else if (!req->numerics.skip_snr_penalty && (st = shaping_gain(&c, res)) != QC_OK) {
        qc_design_result_clear(res);
        goto done;
    }
    if (c.evals_total)
        qc_design_progress(req, c.evals_total + 1, c.evals_total + 1);
done:
    free(c.law);
    free(c.scaled);
    free(c.amp);
    return st;
}
