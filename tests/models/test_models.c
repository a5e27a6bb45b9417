/* test_models.c — the model interface and the closed-form noise models
 * (gauss-sd, poisson, preamp, apd-gauss): registry, parameter checking,
 * levels, moments, tails and the discretized matrices. The scipy
 * cross-check of the CDFs at many points is tests/models/check_models.py. */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <cmocka.h>

#include "test_helpers.h"

#include <math.h>
#include <stdio.h>
#include <string.h>

#include <gsl/gsl_integration.h>

#include "quantcap.h"

#define TOL_TIGHT 1e-12 /* closed forms evaluated two ways           */
#define TOL_QUAD 1e-8   /* adaptive quadrature of a density           */
#define TOL_ROW 1e-12   /* row sums of a discretized matrix            */
#define TOL_SCIPY_REL 1e-9  /* relative: a density against scipy values */
#define TOL_MI_BITS 1e-9    /* bits: unquantized MI of two far-apart levels */

static qc_model *make(const char *name, const double *p)
{
    const qc_model_type *t = qc_model_type_find(name);
    assert_non_null(t);
    qc_model *m = NULL;
    qc_status st = qc_model_alloc(t, p, &m);
    if (st != QC_OK)
        fail_msg("%s: %s", name, qc_last_error());
    return m;
}

static void expect_message(const char *needle)
{
    assert_message(needle);
}

static void test_registry(void **state)
{
    (void)state;
    const char *names[] = {"gauss", "gauss-sd", "poisson", "apd", "apd-gauss",
                           "preamp", "table"};
    for (size_t i = 0; i < sizeof names / sizeof *names; i++) {
        const qc_model_type *t = qc_model_type_find(names[i]);
        assert_non_null(t);
        assert_string_equal(t->name, names[i]);
        assert_non_null(t->below);
        assert_non_null(t->above);
        assert_non_null(t->density);
        assert_non_null(t->support);
        assert_non_null(t->moments);
    }
    assert_null(qc_model_type_find("no-such-model"));
    assert_int_equal(qc_model_param_index(&qc_model_apd, "sigma-th"), 4);
    /* a table is made from a file, never from parameters */
    qc_model *m = (qc_model *)0x1;
    assert_int_equal(qc_model_alloc(&qc_model_table, NULL, &m), QC_EINVAL);
    assert_null(m);
    expect_message("qc_model_table_load");
}

/* The accessors of the opaque instance: its type, each parameter as
 * checked (defaults filled in), NaN past the type's parameters. */
static void test_instance_accessors(void **state)
{
    (void)state;
    double p[QC_MODEL_MAX_PARAMS] = {0.5, NAN, 0.02}; /* gauss-sd: a left at default */
    qc_model *m = make("gauss-sd", p);
    const qc_model_type *t = qc_model_get_type(m);
    assert_ptr_equal(t, &qc_model_gauss_sd);
    const double *all = qc_model_params(m);
    for (size_t i = 0; i < t->nparams; i++) {
        double want = isnan(p[i]) ? t->params[i].default_value : p[i];
        assert_true(qc_model_param(m, i) == want);
        assert_true(all[i] == want);
    }
    assert_true(isnan(qc_model_param(m, t->nparams)));
    assert_true(isnan(qc_model_param(m, (size_t)-1)));
    qc_model_free(m);
}

/* Valid parameters per model, in the order of the type's params. */
typedef struct {
    const char *name;
    double p[QC_MODEL_MAX_PARAMS];
} baseline;

static const baseline baselines[] = {
    {"gauss-sd", {1.0, 0.1, 0.01}},
    {"poisson", {5.0, 0.1}},
    {"apd", {10.0, 0.1, 10.0, 0.3, 5.0}},
    {"apd-gauss", {10.0, 0.1, 10.0, 0.3, 5.0}},
    {"preamp", {2.0}},
};

/* Every parameter: NaN where required, below its minimum, at an
 * exclusive minimum, above its maximum or at an exclusive one, infinite:
 * QC_EINVAL naming it. */
static void test_bad_parameters(void **state)
{
    (void)state;
    for (size_t b = 0; b < sizeof baselines / sizeof *baselines; b++) {
        const qc_model_type *t = qc_model_type_find(baselines[b].name);
        qc_model *m = make(baselines[b].name, baselines[b].p);
        qc_model_free(m);
        for (size_t i = 0; i < t->nparams; i++) {
            const qc_param_spec *s = &t->params[i];
            double bad[5];
            size_t nbad = 0;
            if (isnan(s->default_value))
                bad[nbad++] = NAN; /* missing */
            if (isfinite(s->min))
                bad[nbad++] = s->min_exclusive ? s->min : s->min - 1.0;
            if (isfinite(s->max))
                bad[nbad++] = s->max_exclusive ? s->max : s->max + 1.0;
            bad[nbad++] = -INFINITY;
            bad[nbad++] = INFINITY;
            for (size_t k = 0; k < nbad; k++) {
                double p[QC_MODEL_MAX_PARAMS];
                memcpy(p, baselines[b].p, sizeof p);
                p[i] = bad[k];
                m = (qc_model *)0x1;
                qc_status st = qc_model_alloc(t, p, &m);
                if (st != QC_EINVAL || m != NULL)
                    fail_msg("%s: %s = %g accepted", t->name, s->name, bad[k]);
                char quoted[64];
                snprintf(quoted, sizeof quoted, "'%s'", s->name);
                expect_message(quoted);
            }
        }
    }
    /* the exact APD law needs k < 1 (F and the McIntyre law) */
    double p[QC_MODEL_MAX_PARAMS] = {10.0, 0.0, 10.0, 1.0, 5.0};
    qc_model *m;
    assert_int_equal(qc_model_alloc(&qc_model_apd, p, &m), QC_EINVAL);
    expect_message("'apd-k'");
    m = make("apd-gauss", p); /* the Gaussian approximation takes k = 1 */
    qc_model_free(m);
}

static void test_bad_levels(void **state)
{
    (void)state;
    for (size_t b = 0; b < sizeof baselines / sizeof *baselines; b++) {
        qc_model *m = make(baselines[b].name, baselines[b].p);
        double levels[] = {0.0, 1.0, -0.5};
        assert_int_equal(qc_model_check_levels(m, levels, 3), QC_EINVAL);
        expect_message("level 3 (-0.5)");
        expect_message(baselines[b].name);
        levels[2] = NAN;
        assert_int_equal(qc_model_check_levels(m, levels, 3), QC_EINVAL);
        double mean, var;
        assert_int_equal(qc_model_moments(m, -1.0, &mean, &var), QC_EINVAL);
        qc_model_free(m);
    }
}

/* ∫ y^k f(y|x) dy over the support, k = 0, 1, 2. */
static double model_moment_k;
static const qc_model *model_moment_m;
static double model_moment_x;
static double moment_integrand(double y, void *p)
{
    (void)p;
    return pow(y, model_moment_k) *
           qc_model_get_type(model_moment_m)->density(model_moment_m, model_moment_x, y);
}

static void density_moments(const qc_model *m, double x, double mom[3])
{
    double lo, hi;
    qc_model_get_type(m)->support(m, x, &lo, &hi);
    gsl_integration_workspace *w = gsl_integration_workspace_alloc(1000);
    model_moment_m = m;
    model_moment_x = x;
    for (int k = 0; k < 3; k++) {
        double err;
        model_moment_k = k;
        gsl_function f = {moment_integrand, NULL};
        int rc = gsl_integration_qags(&f, lo, hi, 1e-14, 1e-11, 1000, w, &mom[k], &err);
        assert_true(rc == 0);
    }
    gsl_integration_workspace_free(w);
}

/* The density integrates to 1 with the hook's mean and variance, and
 * below + above = 1 at every threshold. */
static void check_density_and_moments(const char *name, const double *p,
                                      const double *levels, size_t n)
{
    qc_model *m = make(name, p);
    for (size_t i = 0; i < n; i++) {
        double mean, var, mom[3];
        assert_int_equal(qc_model_moments(m, levels[i], &mean, &var), QC_OK);
        density_moments(m, levels[i], mom);
        assert_near(mom[0], 1.0, TOL_QUAD);
        assert_near(mom[1], mean, TOL_QUAD * fmax(1.0, fabs(mean)));
        assert_near(mom[2] - mom[1] * mom[1], var, 1e-6 * var);
        for (double t = mean - 5 * sqrt(var); t < mean + 5 * sqrt(var);
             t += sqrt(var) / 3) {
            double lo = qc_model_get_type(m)->below(m, levels[i], t);
            double hi = qc_model_get_type(m)->above(m, levels[i], t);
            assert_near(lo + hi, 1.0, TOL_TIGHT);
        }
    }
    qc_model_free(m);
}

static void test_gauss_sd(void **state)
{
    (void)state;
    double p[QC_MODEL_MAX_PARAMS] = {0.5, 0.2, 0.01};
    double levels[] = {0.0, 1.0, 7.5};
    check_density_and_moments("gauss-sd", p, levels, 3);
    qc_model *m = make("gauss-sd", p);
    /* σ²(x) = σ0² + a x + b x² (the model's definition) */
    double mean, var;
    qc_model_moments(m, 4.0, &mean, &var);
    assert_near(var, 0.25 + 0.8 + 0.16, TOL_TIGHT);
    /* Q(10) = 7.6198530241605e-24 (Abramowitz & Stegun, table 26.1 gives
     * Q(10) ≈ 7.62e-24; scipy.stats.norm.sf(10) = 7.619853024160527e-24) */
    double sd = sqrt(var);
    assert_near(qc_model_get_type(m)->above(m, 4.0, 4.0 + 10 * sd) / 7.619853024160527e-24,
                        1.0, 1e-12);
    assert_near(qc_model_get_type(m)->below(m, 4.0, 4.0 - 10 * sd) / 7.619853024160527e-24,
                        1.0, 1e-12);
    qc_model_free(m);
}

/* The SNR hook of gauss-sd: Var[x]/E[σ²(x)] (the mean level left out),
 * and scaling the SNR by g divides every variance term by g (definition
 * of the hook). */
static void test_gauss_sd_snr(void **state)
{
    (void)state;
    const double params[] = {0.5, 0.2, 0.01};
    const double levels[] = {0.0, 1.0, 2.0, 3.0};
    const double law[] = {0.25, 0.25, 0.25, 0.25};
    qc_model *m, *scaled;
    assert_int_equal(qc_model_alloc(&qc_model_gauss_sd, params, &m), QC_OK);
    double noise = 0.0, power = 0.0;
    for (size_t i = 0; i < 4; i++) {
        power += 0.25 * (levels[i] - 1.5) * (levels[i] - 1.5); /* mean level 1.5 */
        noise += 0.25 * (0.25 + 0.2 * levels[i] + 0.01 * levels[i] * levels[i]);
    }
    double snr_db = qc_model_snr_db(m, levels, law, 4);
    assert_true(fabs(snr_db - 10.0 * log10(power / noise)) < TOL_TIGHT);
    assert_int_equal(qc_model_scale_snr(m, 4.0, &scaled), QC_OK);
    assert_true(fabs(qc_model_snr_db(scaled, levels, law, 4) - snr_db - 10.0 * log10(4.0)) <
                TOL_TIGHT);
    assert_true(fabs(qc_model_param(scaled, 0) - 0.25) < TOL_TIGHT);
    assert_true(fabs(qc_model_param(scaled, 1) - 0.05) < TOL_TIGHT);
    qc_model_free(scaled);
    qc_model_free(m);
}

static void test_preamp(void **state)
{
    (void)state;
    double p[QC_MODEL_MAX_PARAMS] = {3.0};
    double levels[] = {0.0, 2.0, 40.0};
    check_density_and_moments("preamp", p, levels, 3);
    /* x = 0: Y ~ Gamma(m, 1); P(Y ≥ t) = e^{−t}(1 + t + t²/2) for m = 3
     * (Erlang tail, e.g. Papoulis, Probability, Random Variables and
     * Stochastic Processes, the Erlang distribution) */
    qc_model *m = make("preamp", p);
    double t = 60.0;
    double q = exp(-t) * (1 + t + t * t / 2);
    assert_near(qc_model_get_type(m)->above(m, 0.0, t) / q, 1.0, TOL_TIGHT);
    /* m = 1, 2Y ~ ncx2(2, 2x): P(Y < t) = 1 − Q1(√(2x), √(2t)) ... checked
     * against scipy in tests/models; here: monotone in x (more signal, less
     * mass below a threshold) */
    double prev = 1.0;
    for (double x = 0.0; x < 50.0; x += 2.5) {
        double b = qc_model_get_type(m)->below(m, x, 20.0);
        assert_true(b <= prev);
        prev = b;
    }
    qc_model_free(m);
}

/* One mode at large x·y: the density goes through the order-0 scaled
 * Bessel function, for which GSL 2.7's Inu_scaled answers NaN (the
 * unquantized rate then lost a whole level). */
static void test_preamp_one_mode_far(void **state)
{
    (void)state;
    double p[QC_MODEL_MAX_PARAMS] = {1.0};
    qc_model *m = make("preamp", p);
    /* f_Y(y) = 2 · ncx2.pdf(2y, 2, 2x) (scipy.stats.ncx2, Debian python3-scipy) */
    const double xy[][3] = {{1e4, 1e4, 0.0028209655491591556},
                            {1e4, 9800.0, 0.0010325207921050628},
                            {250.0, 260.0, 0.016021062513071848},
                            {1e6, 1e6 + 500.0, 0.0002649745727088197}};
    for (size_t i = 0; i < sizeof xy / sizeof xy[0]; i++) {
        double f = qc_model_get_type(m)->density(m, xy[i][0], xy[i][1]);
        assert_true(isfinite(f));
        assert_near(f / xy[i][2], 1.0, TOL_SCIPY_REL);
    }
    /* levels 0 and 1e4 are told apart without error: 1 bit unquantized */
    double levels[] = {0.0, 1e4}, input[] = {0.5, 0.5}, mi;
    assert_int_equal(qc_unquantized_mi(m, levels, input, 2, &mi, NULL), QC_OK);
    assert_near(mi * QC_LOG2E, 1.0, TOL_MI_BITS);
    qc_model_free(m);
}

static void test_apd_gauss(void **state)
{
    (void)state;
    double p[QC_MODEL_MAX_PARAMS] = {20.0, 1.0, 10.0, 0.5, 30.0};
    double levels[] = {0.0, 0.5, 1.0};
    check_density_and_moments("apd-gauss", p, levels, 3);
    qc_model *m = make("apd-gauss", p);
    double mean, var;
    qc_model_moments(m, 1.0, &mean, &var);
    /* mean Mλ, var M²Fλ + σ², F = kM + (1−k)(2 − 1/M) (McIntyre 1966) */
    double F = 0.5 * 10 + 0.5 * (2 - 0.1);
    assert_near(mean, 10 * 21.0, TOL_TIGHT);
    assert_near(var, 100 * F * 21.0 + 900.0, TOL_TIGHT);
    qc_model_free(m);
}

static void test_poisson(void **state)
{
    (void)state;
    double p[QC_MODEL_MAX_PARAMS] = {4.0, 0.5};
    qc_model *m = make("poisson", p);
    /* P(Y ≤ t−1) + P(Y ≥ t) = 1 and the mass function sums the cell */
    for (double t = 1; t < 30; t++) {
        double lo = qc_model_get_type(m)->below(m, 1.0, t), hi = qc_model_get_type(m)->above(m, 1.0, t);
        assert_near(lo + hi, 1.0, TOL_TIGHT);
        double next = qc_model_get_type(m)->below(m, 1.0, t + 1);
        assert_near(next - lo, qc_model_get_type(m)->density(m, 1.0, t), TOL_TIGHT);
    }
    /* P(Y ≥ 1) = 1 − e^{−λ} (Poisson law) */
    assert_near(qc_model_get_type(m)->above(m, 1.0, 1.0), -expm1(-4.5), TOL_TIGHT);
    /* deep right tail: P(Y ≥ 100 | λ = 4.5) ≈ pmf(100)·(1 + λ/101 + ...),
     * the first term dominating: relative 5 % of the pmf */
    double tail = qc_model_get_type(m)->above(m, 1.0, 100.0), pmf = qc_model_get_type(m)->density(m, 1.0, 100.0);
    assert_true(tail > pmf && tail < 1.05 * pmf && tail > 0.0 && tail < 1e-90);
    /* non-integers have no mass; the support holds all but 2e-17 */
    assert_true(qc_model_get_type(m)->density(m, 1.0, 2.5) == 0.0);
    double lo, hi;
    qc_model_get_type(m)->support(m, 1.0, &lo, &hi);
    assert_true(lo == 0.0 && hi > 4.5 && hi < 60.0);
    assert_true(qc_model_get_type(m)->above(m, 1.0, hi + 1) <= 1e-17);
    qc_model_free(m);
    /* λ = 0: all mass at 0 */
    double p0[QC_MODEL_MAX_PARAMS] = {4.0, 0.0};
    m = make("poisson", p0);
    assert_true(qc_model_get_type(m)->below(m, 0.0, 1.0) == 1.0);
    assert_true(qc_model_get_type(m)->above(m, 0.0, 1.0) == 0.0);
    assert_true(qc_model_get_type(m)->density(m, 0.0, 0.0) == 1.0);
    qc_model_free(m);
}

/* Large means (thresholds from 1000 counts on: Temme's uniform expansion).
 * Reference values: scipy.stats.poisson.cdf(t - 1, lam) and
 * scipy.stats.poisson.sf(t - 1, lam), scipy 1.10.1 (Debian 12), all within
 * 4.5 standard deviations of the mean, where scipy's incomplete gamma uses
 * its own uniform asymptotic series (they agree with the pmf summed in
 * 50-digit decimal arithmetic to 3e-15). GSL's gsl_sf_gamma_inc_Q/P gave
 * 0.83474 for 0.83076 at λ = 666667, t = 667449, and fail from 1e6 on. */
static void test_poisson_large_mean(void **state)
{
    (void)state;
    static const struct {
        double lam, t, below, above; /* P(Y < t), P(Y ≥ t) */
    } ref[] = {
        {1e5, 100000, 0.4995794778896348, 0.50042052211036514},
        {1e5, 100300, 0.82822055003918948, 0.17177944996081052},
        {1e5, 99100, 0.002176405799625017, 0.99782359420037503},
        {666667, 667449, 0.83075550004530485, 0.16924449995469504},
        {666667, 666000, 0.20683585044415978, 0.79316414955584014},
        {1e6, 1000000, 0.49986701923912741, 0.50013298076087254},
        {1e6, 1002000, 0.97719586809630421, 0.022804131903695762},
        {1e6, 996000, 3.1271488429742431e-05, 0.99996872851157026},
        {1e7, 10000000, 0.49995794779127628, 0.50004205220872366},
        {1e7, 10006000, 0.9710907505411791, 0.028909249458820854},
        {1e7, 9991000, 0.0022095644651667283, 0.99779043553483326},
        {1e8, 100000000, 0.49998670192398587, 0.50001329807601413},
        {1e8, 100030000, 0.99864928934095387, 0.0013507106590461657},
        {1e8, 99960000, 3.1631110160801477e-05, 0.9999683688898392},
    };
    for (size_t i = 0; i < sizeof ref / sizeof ref[0]; i++) {
        double p[QC_MODEL_MAX_PARAMS] = {ref[i].lam, 0.0};
        qc_model *m = make("poisson", p);
        const qc_model_type *ty = qc_model_get_type(m);
        double lo = ty->below(m, 1.0, ref[i].t), hi = ty->above(m, 1.0, ref[i].t);
        if (!(fabs(lo - ref[i].below) <= 1e-13 * ref[i].below) ||
            !(fabs(hi - ref[i].above) <= 1e-13 * ref[i].above))
            fail_msg("lambda %g, t %g: P(Y < t) = %.17g (scipy %.17g), P(Y >= t) = %.17g "
                     "(scipy %.17g)", ref[i].lam, ref[i].t, lo, ref[i].below, hi,
                     ref[i].above);
        /* the pmf fills the gap between neighbouring thresholds */
        double next = ty->below(m, 1.0, ref[i].t + 1.0);
        assert_true(next > lo);
        assert_near(next - lo, ty->density(m, 1.0, ref[i].t), 1e-13);
        qc_model_free(m);
    }
}

/* 4-level intensity (0, 1/3, 2/3, 1) at 1e6 … 1e8 signal photons, an
 * optimal 8-cell count quantizer: the design succeeds with nonnegative
 * cells, rows summing to 1 and increasing thresholds, and resolves the
 * four levels (2 bits). */
static void test_poisson_large_design(void **state)
{
    (void)state;
    const double signals[] = {1e6, 3e6, 1e7, 3e7, 1e8};
    const double levels[] = {0.0, 1.0 / 3.0, 2.0 / 3.0, 1.0};
    for (size_t i = 0; i < sizeof signals / sizeof signals[0]; i++) {
        double p[QC_MODEL_MAX_PARAMS] = {signals[i], 0.0};
        qc_model *m = make("poisson", p);
        qc_design_request r;
        qc_design_request_default(&r);
        r.channel.model = m;
        r.channel.levels = levels;
        r.channel.nlevels = 4;
        r.quantizer.cells = 8;
        qc_design_result res;
        if (qc_design(&r, &res) != QC_OK)
            fail_msg("signal %g: %s", signals[i], qc_last_error());
        const qc_dmc *d = res.channel;
        for (size_t x = 0; x < d->nx; x++) {
            double sum = 0.0;
            for (size_t y = 0; y < d->ny; y++) {
                assert_true(d->p[x * d->ny + y] >= 0.0);
                sum += d->p[x * d->ny + y];
            }
            assert_near(sum, 1.0, TOL_ROW);
        }
        for (size_t k = 1; k < res.nthresholds; k++)
            assert_true(res.thresholds[k] > res.thresholds[k - 1]);
        assert_near(res.rate_bits, 2.0, 1e-9);
        qc_design_result_clear(&res);
        qc_model_free(m);
    }
}

/* OOK with ideal counting, no background, threshold 1: a Z channel with
 * crossover p = e^{−n_s}, the Poisson probability of no count for a mean
 * of n_s ('off' never counts). */
static void test_poisson_z_channel(void **state)
{
    (void)state;
    for (double ns = 0.1; ns < 8.0; ns *= 2.0) {
        double p[QC_MODEL_MAX_PARAMS] = {ns, 0.0};
        qc_model *m = make("poisson", p);
        double levels[] = {0.0, 1.0}, t[] = {1.0};
        qc_dmc *d;
        assert_int_equal(qc_discretize(m, levels, 2, t, 1, &d), QC_OK);
        assert_true(d->p[0] == 1.0 && d->p[1] == 0.0);
        assert_near(d->p[2], exp(-ns), TOL_TIGHT);
        assert_near(d->p[3], -expm1(-ns), TOL_TIGHT);
        qc_dmc_free(d);
        qc_model_free(m);
    }
}

/* Far-tail thresholds give finite, non-negative matrices whose rows sum
 * to 1 for every model (property test, fixed seed). */
static void test_far_tail_matrices(void **state)
{
    (void)state;
    unsigned seed = 12345u;
    for (size_t b = 0; b < sizeof baselines / sizeof *baselines; b++) {
        qc_model *m = make(baselines[b].name, baselines[b].p);
        int counts = qc_model_get_type(m)->output == QC_OUTPUT_COUNTS;
        double levels[] = {0.0, 0.3, 1.0, 4.0};
        double lo, hi;
        qc_model_get_type(m)->support(m, 4.0, &lo, &hi);
        size_t n = 5 + (seed = seed * 1103515245u + 12345u) % 40;
        double t[64];
        for (size_t j = 0; j < n; j++) {
            double u = (double)j / (double)(n - 1);
            t[j] = lo - 0.5 * (hi - lo) + u * 2.0 * (hi - lo);
            if (counts)
                t[j] = 1.0 + (double)j * 3.0;
        }
        qc_dmc *d;
        assert_int_equal(qc_discretize(m, levels, 4, t, n, &d), QC_OK);
        for (size_t x = 0; x < 4; x++) {
            double s = 0.0;
            for (size_t c = 0; c <= n; c++) {
                double v = d->p[x * (n + 1) + c];
                assert_true(isfinite(v) && v >= 0.0);
                s += v;
            }
            assert_near(s, 1.0, TOL_ROW);
        }
        qc_dmc_free(d);
        qc_model_free(m);
    }
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_registry),
        cmocka_unit_test(test_instance_accessors),
        cmocka_unit_test(test_bad_parameters),
        cmocka_unit_test(test_bad_levels),
        cmocka_unit_test(test_gauss_sd),
        cmocka_unit_test(test_gauss_sd_snr),
        cmocka_unit_test(test_preamp),
        cmocka_unit_test(test_preamp_one_mode_far),
        cmocka_unit_test(test_apd_gauss),
        cmocka_unit_test(test_poisson),
        cmocka_unit_test(test_poisson_z_channel),
        cmocka_unit_test(test_poisson_large_mean),
        cmocka_unit_test(test_poisson_large_design),
        cmocka_unit_test(test_far_tail_matrices),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
