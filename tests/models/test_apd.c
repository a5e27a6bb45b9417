/* test_apd.c — the exact APD model: McIntyre's gain law, the FFT
 * compound law with thermal noise (normalization, mean, variance against
 * the closed forms), agreement with the Gaussian approximation at large
 * counts and visible disagreement at small counts, lattice vs smooth
 * regimes, plan reuse across levels, high counts (closed-form variance
 * and an Edgeworth series from the exact cumulants). The CDF against an
 * independent numpy/scipy computation is in tests/models/check_models.py,
 * more high-count cases in tests/models/check_apd_highcount.py. */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <cmocka.h>

#include "test_helpers.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "models/apd_gain.h"
#include "quantcap.h"

#define TOL_SUM 1e-12  /* normalization of a computed law              */
#define TOL_MOM 1e-9   /* relative: moments of the computed law         */
#define TOL_CDF 1e-9   /* two regimes of the same law                   */
#define TOL_MEAN_LOW 1e-7  /* relative: mean of the computed law at a low count */

static qc_model *make(const qc_model_type *t, const double *p)
{
    qc_model *m = NULL;
    if (qc_model_alloc(t, p, &m) != QC_OK)
        fail_msg("%s: %s", t->name, qc_last_error());
    return m;
}

/* McIntyre 1972: sums to 1, mean M, variance M²(F − 1) with
 * F = kM + (1 − k)(2 − 1/M) (McIntyre, IEEE Trans. Electron Devices
 * 13(1), 1966). */
static void test_gain_law(void **state)
{
    (void)state;
    const double cases[][2] = {{1.0, 0.0}, {2.0, 0.0}, {10.0, 0.3}, {20.0, 0.7},
                               {5.0, 0.02}, {50.0, 0.5}, {3.0, 0.95}};
    for (size_t c = 0; c < sizeof cases / sizeof *cases; c++) {
        double m = cases[c][0], k = cases[c][1];
        double *g;
        size_t n;
        assert_int_equal(qc_apd_gain_pmf(m, k, 1u << 26, &g, &n), QC_OK);
        double s0 = 0, s1 = 0, s2 = 0;
        for (size_t i = 0; i < n; i++) {
            assert_true(g[i] >= 0.0);
            s0 += g[i];
            s1 += (double)i * g[i];
            s2 += (double)i * (double)i * g[i];
        }
        double F = k * m + (1 - k) * (2 - 1 / m);
        assert_true(g[0] == 0.0);
        assert_near(s0, 1.0, TOL_SUM);
        assert_near(s1 / m, 1.0, TOL_MOM);
        assert_near((s2 - s1 * s1) / fmax(m * m * (F - 1), 1e-300),
                            m == 1.0 ? 0.0 : 1.0, 1e-7);
        free(g);
    }
    double *g;
    size_t n;
    assert_int_equal(qc_apd_gain_pmf(10.0, 1.0, 1000, &g, &n), QC_EINVAL);
    assert_int_equal(qc_apd_gain_pmf(0.5, 0.0, 1000, &g, &n), QC_EINVAL);
    assert_int_equal(qc_apd_gain_pmf(100.0, 0.9, 1000, &g, &n), QC_ENOMEM);
}

/* Mass, mean and variance of the computed law from a fine discretization:
 * cells of width w over the support, midpoint moments corrected by
 * Sheppard's w²/12 (Sheppard, Proc. London Math. Soc. 29, 1898). */
static void law_moments(const qc_model *m, double x, double w, double *mass,
                        double *mean, double *var)
{
    double lo, hi;
    qc_model_get_type(m)->support(m, x, &lo, &hi);
    size_t n = (size_t)ceil((hi - lo) / w);
    double s0 = 0, s1 = 0, s2 = 0;
    double prev = qc_model_get_type(m)->below(m, x, lo);
    for (size_t i = 1; i <= n; i++) {
        double t = lo + (double)i * w;
        double cur = qc_model_get_type(m)->below(m, x, t);
        double p = cur - prev, y = t - 0.5 * w;
        s0 += p;
        s1 += p * y;
        s2 += p * y * y;
        prev = cur;
    }
    *mass = s0 + qc_model_get_type(m)->below(m, x, lo) + qc_model_get_type(m)->above(m, x, lo + (double)n * w);
    *mean = s1 / s0;
    *var = s2 / s0 - *mean * *mean - w * w / 12.0;
}

static void check_law(const double *p, double x, double w, double tol_var)
{
    qc_model *m = make(&qc_model_apd, p);
    double mass, mean, var, cmean, cvar;
    law_moments(m, x, w, &mass, &mean, &var);
    /* closed forms: mean Mλ, variance M²Fλ + σ_th² */
    assert_int_equal(qc_model_moments(m, x, &cmean, &cvar), QC_OK);
    assert_near(mass, 1.0, TOL_SUM * 100);
    assert_near(mean / cmean, 1.0, TOL_MEAN_LOW);
    assert_near(var / cvar, 1.0, tol_var);
    qc_model_free(m);
}

static void test_law_moments(void **state)
{
    (void)state;
    /* smooth regime (σ_th ≥ 8 electrons) */
    double a[QC_MODEL_MAX_PARAMS] = {20.0, 0.5, 10.0, 0.3, 40.0};
    check_law(a, 1.0, 2.0, 1e-6);
    check_law(a, 0.0, 2.0, 1e-6);
    /* lattice regime (σ_th < 8): direct sums over the electron lattice */
    double b[QC_MODEL_MAX_PARAMS] = {3.0, 0.0, 8.0, 0.1, 2.0};
    check_law(b, 1.0, 0.25, 1e-6);
    /* M = 1: Poisson electrons plus thermal noise */
    double c[QC_MODEL_MAX_PARAMS] = {30.0, 0.0, 1.0, 0.0, 1.5};
    check_law(c, 1.0, 0.25, 1e-6);
}

/* The lattice sums and the smooth interpolation are two evaluations of
 * the same law at σ_th just below and at 8h: forcing both on one law
 * is not possible, so compare at σ = 8 (smooth) with σ = 7.999 (lattice). */
static void test_regimes_agree(void **state)
{
    (void)state;
    double ps[QC_MODEL_MAX_PARAMS] = {6.0, 0.2, 12.0, 0.4, 8.0};
    double pl[QC_MODEL_MAX_PARAMS] = {6.0, 0.2, 12.0, 0.4, 7.99999999};
    qc_model *s = make(&qc_model_apd, ps), *l = make(&qc_model_apd, pl);
    for (double t = -40.0; t < 600.0; t += 3.7) {
        double bs = qc_model_get_type(s)->below(s, 1.0, t), bl = qc_model_get_type(l)->below(l, 1.0, t);
        double as = qc_model_get_type(s)->above(s, 1.0, t), al = qc_model_get_type(l)->above(l, 1.0, t);
        assert_near(bs, bl, TOL_CDF);
        assert_near(as, al, TOL_CDF);
        double ds = qc_model_get_type(s)->density(s, 1.0, t), dl = qc_model_get_type(l)->density(l, 1.0, t);
        assert_near(ds, dl, 1e-7 * fmax(dl, 1e-6));
    }
    qc_model_free(s);
    qc_model_free(l);
}

/* Kolmogorov distance between apd and apd-gauss on a grid of t. */
static double cdf_distance(const double *p, double x)
{
    qc_model *e = make(&qc_model_apd, p), *g = make(&qc_model_apd_gauss, p);
    double mean, var, d = 0.0;
    qc_model_moments(g, x, &mean, &var);
    double sd = sqrt(var);
    for (double t = mean - 6 * sd; t <= mean + 6 * sd; t += sd / 50)
        d = fmax(d, fabs(qc_model_get_type(e)->below(e, x, t) - qc_model_get_type(g)->below(g, x, t)));
    qc_model_free(e);
    qc_model_free(g);
    return d;
}

/* Large counts: the central limit theorem makes the Gaussian
 * approximation close; small counts: the skewed McIntyre law and the
 * atom of "no primary" make it visibly wrong (docs/models.md). The
 * distance shrinks like the skewness/√λ (Berry–Esseen). */
static void test_gauss_approximation(void **state)
{
    (void)state;
    double big[QC_MODEL_MAX_PARAMS] = {2000.0, 0.0, 10.0, 0.02, 200.0};
    double small[QC_MODEL_MAX_PARAMS] = {3.0, 0.0, 10.0, 0.02, 20.0};
    double d_big = cdf_distance(big, 1.0), d_small = cdf_distance(small, 1.0);
    assert_true(d_big < 0.005);  /* measured 0.0030 */
    assert_true(d_small > 0.03); /* measured 0.041 */
    assert_true(d_small > 10 * d_big);
}

/* 16 levels: the FFT plans (one per grid length) are made a few times,
 * the per-level law 16 times; a second pass reuses the cache. */
static void test_plan_reuse(void **state)
{
    (void)state;
    double p[QC_MODEL_MAX_PARAMS] = {50.0, 1.0, 10.0, 0.3, 30.0};
    qc_model *m = make(&qc_model_apd, p);
    double levels[16], t[63];
    for (int i = 0; i < 16; i++)
        levels[i] = i / 15.0;
    for (int j = 0; j < 63; j++)
        t[j] = -100.0 + 20.0 * j;
    qc_dmc *d;
    assert_int_equal(qc_discretize(m, levels, 16, t, 63, &d), QC_OK);
    qc_dmc_free(d);
    qc_apd_stats st;
    assert_int_equal(qc_apd_get_stats(m, &st), QC_OK);
    assert_int_equal(st.levels, 16);
    assert_true(st.plans >= 1 && st.plans <= 4);
    assert_int_equal(qc_discretize(m, levels, 16, t, 63, &d), QC_OK);
    qc_dmc_free(d);
    assert_int_equal(qc_apd_get_stats(m, &st), QC_OK);
    assert_int_equal(st.levels, 16);
    qc_model_free(m);
    assert_int_equal(qc_apd_get_stats(NULL, &st), QC_EINVAL);
}

/* A level's law is a function of the parameters and the level alone:
 * computed in a fresh instance, or after other levels (above and below it,
 * sharing its FFT grid and the direct sums of φ_G − 1 from 1e4 primaries
 * on), it is the same to the bit. A sweep lends one instance to many
 * points in an order set by the threads, so its results rest on this. */
static void test_history_free(void **state)
{
    (void)state;
    double p[QC_MODEL_MAX_PARAMS] = {1e5, 0.0, 10.0, 0.3, 30.0};
    const double x = 0.2, others[] = {0.23, 0.17}; /* 2e4 primaries, ±15% */
    qc_model *fresh = make(&qc_model_apd, p), *used = make(&qc_model_apd, p);
    double mean, var;
    assert_int_equal(qc_model_moments(fresh, x, &mean, &var), QC_OK);
    for (size_t i = 0; i < 2; i++)
        (void)qc_model_get_type(used)->below(used, others[i], mean);
    for (int j = -12; j <= 12; j++) {
        double t = mean + j * sqrt(var) / 2.0;
        double a = qc_model_get_type(fresh)->below(fresh, x, t), b = qc_model_get_type(used)->below(used, x, t);
        double qa = qc_model_get_type(fresh)->above(fresh, x, t), qb = qc_model_get_type(used)->above(used, x, t);
        assert_memory_equal(&a, &b, sizeof a);
        assert_memory_equal(&qa, &qb, sizeof qa);
    }
    qc_model_free(fresh);
    qc_model_free(used);
}

/* Unquantized MI through the density: finite, below log 2 for 2 levels. */
static void test_unquantized(void **state)
{
    (void)state;
    double p[QC_MODEL_MAX_PARAMS] = {5.0, 0.1, 10.0, 0.3, 10.0};
    qc_model *m = make(&qc_model_apd, p);
    double levels[] = {0.0, 1.0}, input[] = {0.5, 0.5}, mi, err;
    assert_int_equal(qc_unquantized_mi(m, levels, input, 2, &mi, &err), QC_OK);
    assert_true(mi > 0.3 && mi < log(2.0));
    /* a 1-bit quantizer loses information (data processing inequality,
     * Cover & Thomas, Elements of Information Theory, sec. 2.8) */
    double t[] = {25.0};
    qc_dmc *d;
    assert_int_equal(qc_discretize(m, levels, 2, t, 1, &d), QC_OK);
    double mq;
    assert_int_equal(qc_mutual_information(d, input, &mq), QC_OK);
    assert_true(mq < mi);
    qc_dmc_free(d);
    qc_model_free(m);
}

/* ---- high counts: grid step h > 1 ----------------------------------- */

#define TOL_VAR_HIGH 1e-6 /* relative variance error past 2^21 electrons   */
#define TOL_EDGEWORTH 1e-11 /* CDF vs the Edgeworth series below: the first
                             * omitted order (λ^{−5/2}) is 1.1e-13 at
                             * λ = 1.03e5 and smaller beyond, as computed
                             * by tests/models/check_apd_highcount.py; the
                             * model itself measured 2.8e-13, 4e-13 and
                             * 2.8e-12 at λ = 1.03e5, 2.3e5, 1e7          */

/* Probabilists' Hermite polynomial He_n(x) by its three-term recurrence. */
static double hermite_he(int n, double x)
{
    double h0 = 1.0, h1 = x;
    if (n == 0)
        return h0;
    for (int j = 1; j < n; j++) {
        double h2 = x * h1 - j * h0;
        h0 = h1;
        h1 = h2;
    }
    return h1;
}

/* P(Y < t) by the Edgeworth series through the terms of order λ^{−2}
 * (standardized cumulants l_r = κ_r/κ_2^{r/2}):
 *   F = Φ − φ [l3/6 He2
 *              + l4/24 He3 + l3²/72 He5
 *              + l5/120 He4 + l3 l4/144 He6 + l3³/1296 He8
 *              + l6/720 He5 + (l3 l5/720 + l4²/1152) He7
 *              + l3² l4/1728 He9 + l3⁴/31104 He11]
 * (S. I. Blinnikov and R. Moessner, "Expansions for nearly Gaussian
 * distributions," Astron. Astrophys. Suppl. Ser. 130, 193–205, 1998). The
 * cumulants of Y = Σ_{i≤N} G_i + T, N ~ Poisson(λ), are those of a
 * compound Poisson law, κ_r = λ E[G^r], plus σ_th² in κ_2 (W. Feller, An
 * Introduction to Probability Theory and Its Applications, vol. 1, 3rd
 * ed., Wiley 1968, ch. XII (from memory)); E[G^r] from McIntyre's law,
 * whose mean and variance test_gain_law checks against the closed forms. */
static double edgeworth_below(const double *kappa, double t)
{
    double sd = sqrt(kappa[2]), x = (t - kappa[1]) / sd;
    double l3 = kappa[3] / pow(sd, 3), l4 = kappa[4] / pow(sd, 4),
           l5 = kappa[5] / pow(sd, 5), l6 = kappa[6] / pow(sd, 6);
    double series = l3 / 6 * hermite_he(2, x) + l4 / 24 * hermite_he(3, x) +
                    l3 * l3 / 72 * hermite_he(5, x) + l5 / 120 * hermite_he(4, x) +
                    l3 * l4 / 144 * hermite_he(6, x) +
                    l3 * l3 * l3 / 1296 * hermite_he(8, x) +
                    l6 / 720 * hermite_he(5, x) +
                    (l3 * l5 / 720 + l4 * l4 / 1152) * hermite_he(7, x) +
                    l3 * l3 * l4 / 1728 * hermite_he(9, x) +
                    l3 * l3 * l3 * l3 / 31104 * hermite_he(11, x);
    double phi = exp(-0.5 * x * x) / 2.5066282746310002; /* √(2π) */
    return 0.5 * erfc(-x / sqrt(2.0)) - phi * series;
}

/* High counts: 1.03e5 and 2.3e5 primaries (where a gain law split between
 * the points of a coarser grid added 2.2e-4 and 1.1e-3 to the variance)
 * and 1e7 (grid step 2 even on a grid placed over the law). The computed
 * law must keep the closed-form variance M²Fλ + σ_th² (McIntyre 1966)
 * and match the Edgeworth series built from the exact cumulants. */
static void test_high_counts(void **state)
{
    (void)state;
    const double lambdas[] = {1.03e5, 2.3e5, 1e7};
    const double gain = 31.7, k = 0.013, sigma = 270.0;
    double *g;
    size_t n;
    assert_int_equal(qc_apd_gain_pmf(gain, k, 1u << 26, &g, &n), QC_OK);
    double mom[7] = {0};
    for (size_t i = 1; i < n; i++)
        for (int r = 0; r < 7; r++)
            mom[r] += g[i] * pow((double)i, r);
    free(g);
    for (size_t c = 0; c < sizeof lambdas / sizeof *lambdas; c++) {
        double p[QC_MODEL_MAX_PARAMS] = {lambdas[c], 0.0, gain, k, sigma};
        qc_model *m = make(&qc_model_apd, p);
        double mass, mean, var, cmean, cvar;
        law_moments(m, 1.0, lambdas[c] > 1e6 ? 512.0 : 64.0, &mass, &mean, &var);
        assert_int_equal(qc_model_moments(m, 1.0, &cmean, &cvar), QC_OK);
        assert_near(mass, 1.0, TOL_SUM * 100);
        assert_near(mean / cmean, 1.0, TOL_MOM);
        assert_near(var / cvar, 1.0, TOL_VAR_HIGH);
        double kappa[7];
        for (int r = 1; r < 7; r++)
            kappa[r] = lambdas[c] * mom[r] / mom[0];
        kappa[2] += sigma * sigma;
        double sd = sqrt(kappa[2]);
        for (double q = -6.0; q <= 6.0; q += 0.37) {
            double t = kappa[1] + q * sd, want = edgeworth_below(kappa, t);
            assert_near(qc_model_get_type(m)->below(m, 1.0, t), want, TOL_EDGEWORTH);
            assert_near(qc_model_get_type(m)->above(m, 1.0, t), 1.0 - want, TOL_EDGEWORTH);
        }
        qc_model_free(m);
    }
}

/* ---- high gains: the grid follows the output's spread ---------------- */

/* McIntyre's moments, computed here independently of the library:
 * mean M·λ, variance M²F·λ + σ_th², F = kM + (1 − k)(2 − 1/M). */
static void mcintyre_moments(const double *p, double x, double *mean, double *var)
{
    double lam = p[0] * x + p[1], M = p[2], k = p[3];
    double F = k * M + (1.0 - k) * (2.0 - 1.0 / M);
    *mean = M * lam;
    *var = M * M * F * lam + p[4] * p[4];
}

#define TOL_MOM_HIGH 1e-4 /* relative: moments from CDF differences on 2000
                           * cells of the support; the "no primary" atom
                           * (e^{−5} of the mass, σ_th wide) is placed to a
                           * cell's width, 3e-6 of the mean */

/* Two levels, 5 primaries at level 1, σ_th = 10 electrons, gains 1e4 to
 * 1e5: the law is computed on a grid spread over M·λ plus the McIntyre
 * tail, and the level of no signal (λ = 0) stays as narrow as the thermal
 * noise (a support of ~0.06 of the gain law's length made the quadrature
 * of the unquantized rate step over it: 0.497 bit for 0.971). Every
 * quantizer loses information (data processing inequality). */
static void test_high_gain(void **state)
{
    (void)state;
    const double gains[] = {1e4, 5e4, 1e5};
    for (size_t i = 0; i < sizeof gains / sizeof gains[0]; i++) {
        double p[QC_MODEL_MAX_PARAMS] = {5.0, 0.0, gains[i], 0.0, 10.0};
        qc_model *m = make(&qc_model_apd, p);
        double levels[] = {0.0, 1.0}, input[] = {0.5, 0.5}, mi, err;
        assert_int_equal(qc_unquantized_mi(m, levels, input, 2, &mi, &err), QC_OK);
        double t[] = {-20.0, 30.0, 5.0 * gains[i]}, mq;
        qc_dmc *d;
        assert_int_equal(qc_discretize(m, levels, 2, t, 3, &d), QC_OK);
        assert_int_equal(qc_mutual_information(d, input, &mq), QC_OK);
        qc_dmc_free(d);
        assert_true(mq <= mi + err);
        /* no primary (e^{−5}) is the only confusion: I ≈ 1 − e^{−5}/2 bit
         * to within a few 1e-3 bit */
        assert_true(mi / log(2.0) > 0.96 && mi / log(2.0) < 0.975);
        double mean, var, cmean, cvar, mass;
        mcintyre_moments(p, 1.0, &cmean, &cvar);
        law_moments(m, 1.0, sqrt(cvar) / 200.0, &mass, &mean, &var);
        assert_near(mass, 1.0, 1e-9);
        assert_near(mean / cmean, 1.0, TOL_MOM_HIGH);
        assert_near(var / cvar, 1.0, TOL_MOM_HIGH);
        mcintyre_moments(p, 0.0, &cmean, &cvar);
        law_moments(m, 0.0, 0.05, &mass, &mean, &var);
        assert_near(mean, 0.0, 1e-6);
        assert_near(var / cvar, 1.0, 1e-6);
        qc_model_free(m);
    }
}

/* Many primaries and a thermal noise of 1e4 electrons at gain 1e5: the
 * skewness of the law, 2/√(2λ) ≈ 0.045 at λ = 1000 (k = 0), is small,
 * and the Gaussian approximation's unquantized rate is within 0.01 bit of
 * the exact one (measured 0.578240 and 0.578181 bit). */
#define TOL_GAUSS_MI 0.01
static void test_high_gain_gauss(void **state)
{
    (void)state;
    double p[QC_MODEL_MAX_PARAMS] = {1000.0, 0.0, 1e5, 0.0, 1e4};
    qc_model *e = make(&qc_model_apd, p), *g = make(&qc_model_apd_gauss, p);
    double levels[] = {0.9, 1.0}, input[] = {0.5, 0.5}, me, mg, err;
    assert_int_equal(qc_unquantized_mi(e, levels, input, 2, &me, &err), QC_OK);
    assert_int_equal(qc_unquantized_mi(g, levels, input, 2, &mg, &err), QC_OK);
    print_message("exact %.6f, Gaussian %.6f bit\n", me / log(2.0), mg / log(2.0));
    assert_true(me > 0.05 && me < log(2.0));
    assert_near(me / log(2.0), mg / log(2.0), TOL_GAUSS_MI);
    qc_model_free(e);
    qc_model_free(g);
}

/* Gains past the exact model's limit are refused when the model is made
 * (no run past the memory of the gain law), and a level whose spread the
 * grid cannot resolve within σ_th when it is checked, naming apd-gain. */
static void test_high_gain_refused(void **state)
{
    (void)state;
    double p[QC_MODEL_MAX_PARAMS] = {5.0, 0.0, 1e6, 0.0, 10.0};
    qc_model *m = NULL;
    assert_int_equal(qc_model_alloc(&qc_model_apd, p, &m), QC_EINVAL);
    assert_non_null(strstr(qc_last_error(), "apd-gain"));
    double q[QC_MODEL_MAX_PARAMS] = {5.0, 0.0, 1e5, 0.02, 10.0};
    assert_int_equal(qc_model_alloc(&qc_model_apd, q, &m), QC_EINVAL);
    assert_non_null(strstr(qc_last_error(), "apd-gain"));
    double r[QC_MODEL_MAX_PARAMS] = {50.0, 0.0, 1e5, 0.0, 5.0}; /* step 16 */
    m = make(&qc_model_apd, r);
    double x = 1.0;
    assert_int_equal(qc_model_check_levels(m, &x, 1), QC_EINVAL);
    assert_non_null(strstr(qc_last_error(), "apd-gain"));
    qc_model_free(m);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_gain_law),
        cmocka_unit_test(test_law_moments),
        cmocka_unit_test(test_regimes_agree),
        cmocka_unit_test(test_gauss_approximation),
        cmocka_unit_test(test_plan_reuse),
        cmocka_unit_test(test_history_free),
        cmocka_unit_test(test_unquantized),
        cmocka_unit_test(test_high_counts),
        cmocka_unit_test(test_high_gain),
        cmocka_unit_test(test_high_gain_gauss),
        cmocka_unit_test(test_high_gain_refused),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
