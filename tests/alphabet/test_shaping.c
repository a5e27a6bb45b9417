/* test_shaping.c — the Maxwell–Boltzmann laws of src/alphabet/shaping.c
 * and the shaped designs of src/design/shaping.c through the library:
 * the spec grammar, the law, its entropy and power in closed form, the
 * entropy range and its inversion, ν = 0 as the uniform law, equal power,
 * and the contracts on failure. Values against numpy are in
 * tests/cli/check_shaping_cli.py. */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <cmocka.h>

#include "test_helpers.h"

#include <math.h>
#include <string.h>

#include "quantcap.h"

#define TOL_TIGHT 1e-12 /* rounding of a closed form                     */
#define TOL_NU 1e-12    /* relative: ν back from its own entropy          */

static const double pam4[] = {-3.0, -1.0, 1.0, 3.0};

static void test_spec_grammar(void **state)
{
    (void)state;
    qc_shaping s = {QC_SHAPING_BEST, 7.0, 0};
    assert_int_equal(qc_shaping_parse("mb:0.25", &s), QC_OK);
    assert_int_equal(s.kind, QC_SHAPING_NU);
    assert_true(s.value == 0.25);
    assert_int_equal(qc_shaping_parse("entropy:1.5", &s), QC_OK);
    assert_int_equal(s.kind, QC_SHAPING_ENTROPY);
    assert_int_equal(qc_shaping_parse("best", &s), QC_OK);
    assert_int_equal(s.kind, QC_SHAPING_BEST);
    assert_int_equal(qc_shaping_parse("none", &s), QC_OK);
    assert_int_equal(s.kind, QC_SHAPING_NONE);
    char buf[64];
    s = (qc_shaping){QC_SHAPING_NU, 0.125, 0};
    qc_shaping_format(&s, buf, sizeof buf);
    assert_string_equal(buf, "mb:0.125");
    /* failures leave *out unchanged and name the spec */
    qc_shaping keep = {QC_SHAPING_ENTROPY, 2.0, 0};
    s = keep;
    assert_int_equal(qc_shaping_parse("mb:-1", &s), QC_EINVAL);
    assert_message("NU must be >= 0");
    assert_int_equal(qc_shaping_parse("entropy:-2", &s), QC_EINVAL);
    assert_message("must be > 0");
    assert_int_equal(qc_shaping_parse("mb:nan", &s), QC_EINVAL);
    assert_int_equal(qc_shaping_parse("gauss", &s), QC_EINVAL);
    assert_message("'gauss' is not known");
    assert_int_equal(qc_shaping_parse(NULL, &s), QC_EINVAL);
    assert_true(s.kind == keep.kind && s.value == keep.value);
}

/* p ∝ exp(−ν x²) on pam:4: two probabilities a (outer) and b (inner),
 * a/b = exp(−8ν), 2a + 2b = 1; H = −2a log2 a − 2b log2 b; E[x²] =
 * 2a·9 + 2b·1 (the law in closed form). */
static void test_law_closed_form(void **state)
{
    (void)state;
    const double nu = 0.1;
    const double r = exp(-8.0 * nu), b = 0.5 / (1.0 + r), a = r * b;
    double law[4];
    assert_int_equal(qc_mb_law(pam4, 4, nu, law), QC_OK);
    assert_near(law[0], a, TOL_TIGHT);
    assert_near(law[1], b, TOL_TIGHT);
    assert_near(law[2], b, TOL_TIGHT);
    assert_near(law[3], a, TOL_TIGHT);
    double h = -2.0 * a * log2(a) - 2.0 * b * log2(b);
    assert_near(qc_mb_entropy_bits(pam4, 4, 1, nu), h, TOL_TIGHT);
    assert_near(qc_mb_entropy_bits(pam4, 4, 2, nu), 2.0 * h, TOL_TIGHT); /* QAM: per symbol */
    assert_near(qc_mb_power(pam4, 4, 1, nu), 18.0 * a + 2.0 * b, TOL_TIGHT);
    assert_near(qc_mb_power(pam4, 4, 2, nu), 2.0 * (18.0 * a + 2.0 * b), TOL_TIGHT);
    /* ν = 0 is the uniform law: entropy log2 M, power the mean of x² */
    assert_int_equal(qc_mb_law(pam4, 4, 0.0, law), QC_OK);
    for (int i = 0; i < 4; i++)
        assert_true(law[i] == 0.25);
    assert_near(qc_mb_entropy_bits(pam4, 4, 1, 0.0), 2.0, TOL_TIGHT);
    assert_near(qc_mb_power(pam4, 4, 1, 0.0), 5.0, TOL_TIGHT);
    /* a huge ν: all mass on ±1, no overflow, no NaN */
    assert_int_equal(qc_mb_law(pam4, 4, 1e6, law), QC_OK);
    assert_true(law[0] == 0.0 && law[1] == 0.5);
    assert_near(qc_mb_entropy_bits(pam4, 4, 1, 1e6), 1.0, TOL_TIGHT);
    /* bad arguments: law unchanged, NaN from the figures */
    law[0] = 42.0;
    assert_int_equal(qc_mb_law(pam4, 4, -0.5, law), QC_EINVAL);
    assert_message("nu must be a finite number >= 0");
    assert_true(law[0] == 42.0);
    assert_true(isnan(qc_mb_entropy_bits(pam4, 4, 1, NAN)));
    assert_true(isnan(qc_mb_power(NULL, 4, 1, 0.1)));
}

static void test_entropy_inversion(void **state)
{
    (void)state;
    double hmin, hmax;
    assert_int_equal(qc_mb_entropy_range(pam4, 4, 2, &hmin, &hmax), QC_OK);
    assert_true(hmin == 2.0 && hmax == 4.0); /* qam:16: ±1 per quadrature */
    const double pam5[] = {-2.0, -1.0, 0.0, 1.0, 2.0};
    assert_int_equal(qc_mb_entropy_range(pam5, 5, 1, &hmin, &hmax), QC_OK);
    assert_true(hmin == 0.0); /* odd M: the zero level alone */
    /* the entropy falls strictly with ν, and inverts back to ν */
    double last = INFINITY;
    for (double nu = 0.01; nu < 3.0; nu *= 1.7) {
        double h = qc_mb_entropy_bits(pam5, 5, 1, nu), back = -1.0;
        assert_true(h < last);
        last = h;
        assert_int_equal(qc_mb_nu_for_entropy(pam5, 5, 1, h, &back), QC_OK);
        assert_near(back / nu, 1.0, TOL_NU);
    }
    double nu = -1.0;
    assert_int_equal(qc_mb_nu_for_entropy(pam4, 4, 1, 2.0, &nu), QC_OK);
    assert_true(nu == 0.0); /* log2 M: the uniform law */
    nu = 7.0;
    assert_int_equal(qc_mb_nu_for_entropy(pam4, 4, 1, 2.5, &nu), QC_EINVAL);
    assert_message("outside (1, 2]");
    assert_int_equal(qc_mb_nu_for_entropy(pam4, 4, 1, 1.0, &nu), QC_EINVAL);
    assert_true(nu == 7.0);
}

/* A shaped design through the library: the levels scaled to the uniform
 * power, the law echoed, and ν = 0 the unshaped design bit for bit. */
static void test_shaped_design(void **state)
{
    (void)state;
    qc_model *m;
    double sigma = 1.2;
    assert_int_equal(qc_model_alloc(&qc_model_gauss, &sigma, &m), QC_OK);
    qc_design_request req;
    qc_design_request_default(&req);
    req.channel.model = m;
    req.channel.levels = pam4;
    req.channel.nlevels = 4;
    req.quantizer.cells = 8;
    qc_design_result u, z, s;
    assert_int_equal(qc_design(&req, &u), QC_OK);
    assert_true(isnan(u.shaping_gain_db) && !u.shaping_given);
    qc_shaping sh = {QC_SHAPING_NU, 0.0, 0};
    req.input.shaping = &sh;
    assert_int_equal(qc_design(&req, &z), QC_OK);
    assert_true(z.rate_bits == u.rate_bits && z.shaping_gain_db == 0.0);
    assert_true(memcmp(z.thresholds, u.thresholds, u.nthresholds * sizeof *u.thresholds) == 0);
    sh.value = 0.08;
    assert_int_equal(qc_design(&req, &s), QC_OK);
    assert_near(s.average_power, 5.0, TOL_TIGHT); /* the uniform law's E[x²] */
    assert_near(s.levels[3] / 3.0, s.shaping_scale, TOL_TIGHT);
    assert_near(s.entropy_bits, qc_mb_entropy_bits(pam4, 4, 1, 0.08), TOL_TIGHT);
    assert_true(s.rate_bits <= s.entropy_bits);
    assert_true(isfinite(s.shaping_gain_db));
    /* bad requests leave the result empty */
    const double law[] = {0.25, 0.25, 0.25, 0.25};
    req.input.probabilities = law;
    qc_design_result bad;
    assert_int_equal(qc_design(&req, &bad), QC_EINVAL);
    assert_message("not both");
    assert_true(bad.channel == NULL && bad.input == NULL);
    req.input.probabilities = NULL;
    req.input.objective = QC_OBJECTIVE_CAPACITY;
    assert_int_equal(qc_design(&req, &bad), QC_EINVAL);
    assert_message("capacity objective");
    qc_design_result_clear(&u);
    qc_design_result_clear(&z);
    qc_design_result_clear(&s);
    qc_model_free(m);
}

/* Intensity levels: the amplitudes √x, the law ∝ exp(−ν·x) at the uniform
 * law's E[x] (Cover and Thomas, 2nd ed., sec. 12.1: the law of most
 * entropy at a given mean on x ≥ 0), refusals that say why. */
static void test_intensity_shaping(void **state)
{
    (void)state;
    const double x[] = {0.0, 0.25, 1.0, 2.25};
    double amp[4], law[4];
    assert_int_equal(qc_shaping_amplitudes(x, 4, 1, amp), QC_OK);
    assert_true(amp[0] == 0.0 && amp[1] == 0.5 && amp[2] == 1.0 && amp[3] == 1.5);
    assert_int_equal(qc_mb_law(amp, 4, 0.7, law), QC_OK);
    double z = 0.0;
    for (int i = 0; i < 4; i++)
        z += exp(-0.7 * x[i]);
    for (int i = 0; i < 4; i++)
        assert_near(law[i], exp(-0.7 * x[i]) / z, TOL_TIGHT); /* closed form */
    const double neg[] = {0.0, -0.5};
    assert_int_equal(qc_shaping_amplitudes(neg, 2, 1, amp), QC_EINVAL);
    assert_message("level 2 (-0.5) is not an intensity >= 0");

    /* a design on the signal-dependent Gaussian model */
    qc_model *m;
    const double p[] = {0.05, 0.01, 0.0};
    assert_int_equal(qc_model_alloc(&qc_model_gauss_sd, p, &m), QC_OK);
    qc_design_request req;
    qc_design_request_default(&req);
    req.channel.model = m;
    req.channel.levels = x;
    req.channel.nlevels = 4;
    req.quantizer.cells = 8;
    qc_shaping sh = {QC_SHAPING_NU, 0.7, 1};
    req.input.shaping = &sh;
    qc_design_result s, bad;
    assert_int_equal(qc_design(&req, &s), QC_OK);
    double mean = 0.0, umean = (0.0 + 0.25 + 1.0 + 2.25) / 4.0;
    for (int i = 0; i < 4; i++)
        mean += s.input[i] * s.levels[i];
    assert_near(mean, umean, TOL_TIGHT); /* the average optical power kept */
    double e = 0.0;
    for (int i = 0; i < 4; i++)
        e += law[i] * x[i];
    assert_near(s.shaping_scale, umean / e, TOL_TIGHT);
    assert_true(s.shaping.intensity == 1 && isfinite(s.shaping_gain_db));
    qc_design_result_clear(&s);
    /* an intensity model with the law of x² */
    sh.intensity = 0;
    assert_int_equal(qc_design(&req, &bad), QC_EINVAL);
    assert_message("takes optical intensities; its shaped law is exp(-nu x)");
    /* pulse position: the law over positions is uniform by symmetry */
    sh.intensity = 1;
    const double slot[] = {0.0, 1.0};
    req.channel.levels = slot;
    req.channel.nlevels = 2;
    req.channel.ppm_slots = 16;
    assert_int_equal(qc_design(&req, &bad), QC_EINVAL);
    assert_message("probability 1/M");
    qc_model_free(m);
}

/* A strongly shaped law puts probabilities near the bottom of the doubles
 * on the outer levels; an output reached only through such a level has
 * r(x)·P(y|x) below every double. Its term of the information density's
 * moments is then 0, not a failure (it was "not finite" before). */
static void test_dispersion_with_underflowing_output(void **state)
{
    (void)state;
    qc_dmc *d;
    assert_int_equal(qc_dmc_alloc(2, 2, &d), QC_OK);
    d->p[0] = 1.0;
    d->p[1] = 0.0;
    d->p[2] = 1.0 - 1e-100;
    d->p[3] = 1e-100;
    const double law[] = {1.0 - 1e-300, 1e-300}; /* q(y = 1) = 1e-400: 0 */
    double mi = NAN, v = NAN;
    assert_int_equal(qc_dispersion(d, law, &mi, &v), QC_OK);
    assert_true(isfinite(mi) && isfinite(v));
    assert_true(mi >= 0.0 && mi < TOL_TIGHT && v >= 0.0 && v < TOL_TIGHT);
    qc_dmc_free(d);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_spec_grammar),
        cmocka_unit_test(test_law_closed_form),
        cmocka_unit_test(test_entropy_inversion),
        cmocka_unit_test(test_shaped_design),
        cmocka_unit_test(test_intensity_shaping),
        cmocka_unit_test(test_dispersion_with_underflowing_output),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
